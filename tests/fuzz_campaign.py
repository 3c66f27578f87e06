"""A long fuzz campaign over the checks of ``tests/test_fuzz.py`` (not collected by pytest).

Runs each class of generated input many times and prints, per class, how many inputs were tried,
how many passed (a result or a project error, in bounded time; the command line exiting 0, 1 or
2), and how many of those ended in a result rather than a refusal. A failing input is printed
with its exception and the campaign goes on, so the counts cover every input.

    PYTHONPATH=src .venv/bin/python tests/fuzz_campaign.py            # ≈ 10,500 inputs
    PYTHONPATH=src .venv/bin/python tests/fuzz_campaign.py --scale 3  # three times as many
"""

from __future__ import annotations

import argparse
import importlib.util
import sys
import tempfile
import time
import traceback
from pathlib import Path
from typing import Any

from hypothesis import HealthCheck, given, seed, settings
from hypothesis import strategies as st

_spec = importlib.util.spec_from_file_location(
    "fuzz_checks", Path(__file__).with_name("test_fuzz.py")
)
assert _spec is not None and _spec.loader is not None
fz = importlib.util.module_from_spec(_spec)
_spec.loader.exec_module(fz)

#: Inputs per class at --scale 1 (10,500 in all); the record check recomputes every fifth record.
COUNTS = {
    "equations": 4000,
    "unit strings": 3000,
    "species files": 1800,
    "records": 700,
    "widget traits": 600,
    "command lines": 400,
}


def _campaign(
    name: str, strategy: st.SearchStrategy[Any], check: Any, n: int, seed_value: int
) -> dict:
    tally = {"tried": 0, "passed": 0, "ok": 0, "failures": []}

    @seed(seed_value)
    @settings(
        max_examples=n,
        deadline=None,
        database=None,
        suppress_health_check=list(HealthCheck),
    )
    @given(strategy)
    def run(args: tuple[Any, ...]) -> None:
        tally["tried"] += 1
        try:
            outcome = check(*args)
        except BaseException as exc:
            if isinstance(exc, KeyboardInterrupt):
                raise
            tally["failures"].append((args, f"{type(exc).__name__}: {exc}"[:300]))
            if len(tally["failures"]) <= 3:
                print(f"[{name}] FAILED on {args!r:.300}", file=sys.stderr)
                traceback.print_exc(limit=4, file=sys.stderr)
            return
        tally["passed"] += 1
        tally["ok"] += outcome == "ok"

    run()
    return tally


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--scale", type=float, default=1.0)
    parser.add_argument("--seed", type=int, default=17)
    args = parser.parse_args()
    tmp = tempfile.mkdtemp(prefix="feasibly-fuzz-")
    plans = {
        "equations": (st.tuples(fz.equations), fz.check_equation),
        "unit strings": (st.tuples(fz.quantities), fz.check_quantity),
        "species files": (st.tuples(fz.species_texts, fz.species_names), fz.check_species_file),
        "records": (
            st.tuples(fz.record_edits, st.booleans(), st.integers(0, 4).map(lambda i: i == 0)),
            fz.check_record,
        ),
        "widget traits": (fz.widget_cases, fz.check_widget),
        "command lines": (st.tuples(fz.cli_argv), lambda argv: fz.check_cli(argv, tmp)),
    }
    rows = []
    total_tried = total_passed = 0
    for name, (strategy, check) in plans.items():
        n = max(1, int(COUNTS[name] * args.scale))
        t0 = time.perf_counter()
        tally = _campaign(name, strategy, check, n, args.seed)
        rows.append((name, tally, time.perf_counter() - t0))
        total_tried += tally["tried"]
        total_passed += tally["passed"]
        print(
            f"{name:14s} tried {tally['tried']:6,d}  passed {tally['passed']:6,d}  "
            f"(results {tally['ok']:,d}, refusals {tally['passed'] - tally['ok']:,d})  "
            f"failed {len(tally['failures']):,d}  [{rows[-1][2]:.0f} s]",
            flush=True,
        )
    print(f"{'all':14s} tried {total_tried:6,d}  passed {total_passed:6,d}")
    for name, tally, _ in rows:
        for case, why in tally["failures"][:5]:
            print(f"  {name}: {why} on {case!r:.200}")
    return 0 if total_tried == total_passed else 1


if __name__ == "__main__":
    sys.exit(main())

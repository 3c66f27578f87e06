"""``feasibly screen``: screen a table of reactions (CSV or Parquet) into a result table, in this
process, on a local Dask cluster (``--workers N``) or on an existing one (``--scheduler``)."""

from __future__ import annotations

import argparse
import contextlib
import sys
from collections.abc import Iterator
from pathlib import Path
from typing import Any

from ..errors import FeasiblyError, InvalidInput
from ._terminal import EXIT_OK, _library

# How long to keep trying to reach a scheduler before saying so (a busy cluster answers within
# seconds; common practice, no source).
_CONNECT_TIMEOUT = "30s"


@contextlib.contextmanager
def _client(args: argparse.Namespace) -> Iterator[Any]:
    """A Dask client for --scheduler or --workers (closed afterwards), or None."""
    if args.scheduler is None and args.workers is None:
        yield None
        return
    if args.scheduler is not None and args.workers is not None:
        raise InvalidInput(
            "--workers", "", "left out when --scheduler is given (give one of them)", args.workers
        )
    try:
        from distributed import Client, LocalCluster
    except ImportError:
        raise FeasiblyError(
            "running on a cluster needs dask.distributed: pip install 'feasibly[batch]'"
        ) from None
    if args.scheduler is not None:
        try:
            client = Client(args.scheduler, timeout=_CONNECT_TIMEOUT)
        except (OSError, TimeoutError, ValueError) as exc:
            raise FeasiblyError(
                f"cannot reach the Dask scheduler at {args.scheduler!r} ({exc}); check the "
                "address (e.g. tcp://10.0.0.5:8786) and that the scheduler is running"
            ) from None
        with client:
            yield client
        return
    if args.workers < 1:
        raise InvalidInput("--workers", "", "a whole number of at least 1", args.workers)
    # Local workers on the loopback interface only, one thread each (the kernel's own threads
    # do the rest); the scheduler's web server on a free loopback port, never a fixed one.
    with (
        LocalCluster(
            n_workers=args.workers,
            threads_per_worker=1,
            host="127.0.0.1",
            dashboard_address="127.0.0.1:0",
        ) as cluster,
        Client(cluster) as client,
    ):
        yield client


def _cmd_screen(args: argparse.Namespace) -> int:
    from ..batch import read_table, screen, write_table

    out = Path(args.out)
    if out.exists() and not args.overwrite:
        raise InvalidInput(
            "--out", "", "a file that does not exist yet (or add --overwrite)", args.out
        )
    table = read_table(args.table)
    lib = _library(args.species_file)
    with _client(args) as client:
        result = screen(
            table,
            samples=args.samples,
            seed=args.seed,
            confidence=args.confidence,
            library=lib,
            client=client,
            progress=args.progress,
        )
    write_table(result, out)
    ok = result[result["error"].isna()]
    calls = ok["call"].value_counts()
    failed = int(result["error"].notna().sum())
    print(
        f"screened {len(table)} reactions into {len(result)} rows "
        f"(seed {int(result['seed'].iloc[0]) if len(result) else args.seed}, "
        f"{args.samples:,} trials): "
        + ", ".join(
            f"{int(calls.get(v, 0))} {v}" for v in ("feasible", "not feasible", "too close to call")
        )
        + f"; written to {out}"
    )
    if failed:
        print(
            f"feasibly: {failed} row(s) could not be screened; their reason is in the error column",
            file=sys.stderr,
        )
    print(
        "Feasibility is thermodynamic only: it says nothing about rate, hazards or scale-up.",
        file=sys.stderr,
    )
    return EXIT_OK


def register(sub: Any) -> None:
    """Add the ``screen`` subcommand to the ``feasibly`` parser's subparsers."""
    s = sub.add_parser(
        "screen",
        help="screen a table of reactions (CSV or Parquet) into a result table",
        description="Screen every reaction of a table. Columns: equation (required); T, or "
        "T_low, T_high and T_points; partial_pressures; standard_pressure; threshold or "
        "required_K; feed, key, required_conversion and total_pressure for a required "
        "conversion; label and note (carried through). See the README.",
    )
    s.add_argument("table", help="the table of reactions, .csv or .parquet")
    s.add_argument("--out", required=True, metavar="RESULT", help="result table, .csv or .parquet")
    s.add_argument("--overwrite", action="store_true", help="replace an existing result file")
    s.add_argument(
        "--species-file",
        action="append",
        metavar="PATH",
        help="add your own species (JSON or TOML, schema in data/SCHEMA.md)",
    )
    g = s.add_argument_group("how sure (Monte Carlo over the data's uncertainty)")
    g.add_argument(
        "--samples",
        type=int,
        default=100_000,
        metavar="N",
        help="Monte Carlo trials per reaction (default 100000)",
    )
    g.add_argument(
        "--seed",
        type=int,
        metavar="S",
        help="seed of the draws (drawn and written into the result when not given)",
    )
    g.add_argument(
        "--confidence",
        type=float,
        default=0.95,
        help="confidence level for the call (default 0.95)",
    )
    c = s.add_argument_group("where it runs (Dask)")
    c.add_argument(
        "--scheduler",
        metavar="ADDRESS",
        help="an existing Dask scheduler, e.g. tcp://10.0.0.5:8786 (every worker needs the same "
        "feasibly installed)",
    )
    c.add_argument(
        "--workers", type=int, metavar="N", help="start a local Dask cluster of N workers"
    )
    s.add_argument(
        "--progress",
        action=argparse.BooleanOptionalAction,
        default=None,
        help="progress line on stderr (default: when stderr is a terminal)",
    )
    s.set_defaults(run=_cmd_screen)

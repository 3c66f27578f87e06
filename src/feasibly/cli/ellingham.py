"""``feasibly ellingham``: formation lines of several compounds on one scale (per mole of O2, S2,
Cl2, …), with bands when sampled, which line lies below which, and the CO/CO2 and H2/H2O ratios
each oxide's reduction needs; as a table, JSON, CSV rows or an HTML figure."""

from __future__ import annotations

import argparse
import csv
import json
from pathlib import Path
from typing import Any

from ..errors import InvalidInput
from ._terminal import EXIT_OK, _library

__all__ = ["register"]


def _cmd(args: argparse.Namespace) -> int:
    # Loaded on use, so `feasibly --version` and the other subcommands start without it.
    from ..comparison import formation_lines

    tokens = args.T_range
    if len(tokens) != 3:
        raise InvalidInput("--T-range", "", "LOW HIGH UNIT, e.g. --T-range 500 1800 K", tokens)
    lo, hi, unit = tokens
    lines = formation_lines(
        args.compounds,
        reagent=args.per,
        T_range=(f"{lo} {unit}", f"{hi} {unit}"),
        points=args.points,
        samples=args.samples,
        seed=args.seed,
        library=_library(args.species_file, args.replace_shipped),
    )
    if args.figure:
        from ..figures import formation_figure

        formation_figure(lines).write_html(args.figure, include_plotlyjs=True)
    rows = lines.table()
    if args.csv:
        with Path(args.csv).open("w", newline="", encoding="utf-8") as f:
            writer = csv.DictWriter(f, fieldnames=list(rows[0]))
            writer.writeheader()
            writer.writerows(rows)
    if args.json:
        print(json.dumps({"reagent": lines.reagent, "rows": rows}, indent=2, ensure_ascii=False))
        return EXIT_OK
    _print(lines)
    return EXIT_OK


def _print(lines: Any) -> None:
    order = lines.G.argmin(axis=0)
    print(f"Formation lines per mole of {lines.reagent} (ΔrG°, kJ/mol; lower = more stable)")
    header = ["T / K", *lines.labels, "most stable"]
    print("  ".join(f"{h:>12}" for h in header))
    for k, t in enumerate(lines.T):
        cells = [f"{t:12.0f}"]
        for i in range(len(lines.labels)):
            g = lines.G[i, k] / 1000
            if lines.bands is not None:
                half = (lines.bands[-1, i, k] - lines.bands[0, i, k]) / 2000
                cells.append(f"{g:7.1f} ±{half:4.1f}")
            else:
                cells.append(f"{g:12.1f}")
        cells.append(f"{lines.labels[order[k]]:>12}")
        print("  ".join(cells))
    for name in lines.ratios:
        print(
            f"\n{name} ratio needed to reduce each oxide (equilibrium; above it, {name[:2]} wins)"
        )
        print("  ".join(f"{h:>12}" for h in ["T / K", *lines.labels]))
        for k, t in enumerate(lines.T):
            vals = [
                f"{10 ** lines.ratios[name]['nominal'][i, k]:12.3g}"
                for i in range(len(lines.labels))
            ]
            print("  ".join([f"{t:12.0f}", *vals]))
    changes = [
        f"{lines.labels[i]}: {sp} → {after} at {t:.0f} K"
        for i, ch in enumerate(lines.phase_changes)
        for sp, t, _, after in ch
    ]
    if changes:
        print("\nPhase changes on the lines: " + "; ".join(changes))
    print(
        "\nThermodynamics only: whether a reduction runs also depends on rate, gas flow and "
        "contact, which this says nothing about."
    )


def register(sub: Any) -> None:
    """Add the ``ellingham`` subcommand to the ``feasibly`` parser's subparsers."""
    e = sub.add_parser(
        "ellingham",
        help="compare formation lines (per mole of O2, S2, Cl2 …) on one diagram",
        description="Formation lines of compounds from their elements per mole of the reagent "
        "gas, with bands when sampled, and the reductant ratios oxides need.",
    )
    e.add_argument("compounds", nargs="+", help="e.g. Cu2O Fe3O4 Cr2O3 (or full equations)")
    e.add_argument("--per", default="O2", help="reagent gas counted per mole (default O2)")
    e.add_argument("--T-range", nargs=3, dest="T_range", default=["500", "1800", "K"], metavar="T")
    e.add_argument("--points", type=int, default=14, help="temperatures (default 14)")
    e.add_argument("--samples", type=int, metavar="N", help="Monte Carlo trials for bands")
    e.add_argument("--seed", type=int, metavar="S")
    e.add_argument("--species-file", action="append", metavar="PATH")
    e.add_argument(
        "--replace-shipped",
        action="store_true",
        help="let --species-file entries replace shipped entries of the same id",
    )
    e.add_argument("--json", action="store_true", help="print the table as JSON")
    e.add_argument("--csv", metavar="PATH", help="write the table as CSV")
    e.add_argument("--figure", metavar="PATH", help="write the diagram as a self-contained HTML")
    e.set_defaults(run=_cmd)

"""``feasibly species``: search the species data library by formula, name or CAS number."""

from __future__ import annotations

import argparse
import json
from typing import Any

from ._terminal import (
    EXIT_INPUT,
    EXIT_OK,
    _library,
)


def _cmd_species(args: argparse.Namespace) -> int:
    lib = _library(args.species_file, args.replace_shipped)
    hits = lib.search(args.query, limit=args.limit)
    if args.json:
        print(
            json.dumps(
                [
                    sp.provenance()
                    | {
                        "formula": sp.formula,
                        "names": list(sp.names),
                        "cas": sp.cas,
                        "phase": sp.phase,
                    }
                    for sp in hits
                ],
                indent=2,
                ensure_ascii=False,
            )
        )
        return EXIT_OK
    if not hits:
        near = lib.suggest(args.query)
        print(
            f"No species matches {args.query!r}." + (f" Close: {', '.join(near)}." if near else "")
        )
        return EXIT_INPUT
    for sp in hits:
        name = sp.names[0] if sp.names else ""
        print(
            f"{sp.id:<26} {name[:28]:<28} CAS {sp.cas or '—':<12} "
            f"{sp.T_range[0]:g}–{sp.T_range[1]:g} K"
        )
        print(
            f"    ΔfH°(298.15) = {sp.dHf.value / 1000:.3f} ± {sp.dHf.u / 1000:.3f} kJ/mol "
            f"[{sp.dHf.source}{', u assumed' if sp.dHf.assumed else ''}]   "
            f"S°(298.15) = {sp.S298.value:.3f} ± {sp.S298.u:.3f} J/(mol·K) "
            f"[{sp.S298.source}{', u assumed' if sp.S298.assumed else ''}]"
        )
        if args.details:
            print("    " + json.dumps(sp.provenance(), ensure_ascii=False))
    return EXIT_OK


def register(sub: Any) -> None:
    """Add the ``species`` subcommand to the ``feasibly`` parser's subparsers."""
    s = sub.add_parser("species", help="search the species data library")
    s.add_argument("query", help="formula, name or CAS number")
    s.add_argument("--limit", type=int, default=12)
    s.add_argument("--details", action="store_true", help="show every value's source")
    s.add_argument("--species-file", action="append", metavar="PATH")
    s.add_argument(
        "--replace-shipped",
        action="store_true",
        help="let --species-file entries replace shipped entries of the same id",
    )
    s.add_argument("--json", action="store_true")
    s.set_defaults(run=_cmd_species)

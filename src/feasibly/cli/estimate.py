"""``feasibly estimate``: ΔfH°, S° and Cp of a gas no table has, from its SMILES (group
additivity, with calibrated standard uncertainties), or the reasons it cannot be estimated."""

from __future__ import annotations

import argparse
import json
import math
from pathlib import Path
from typing import Any

from ..errors import InvalidInput
from ..library.cp_models import R
from ._terminal import EXIT_OK


def _cmd_estimate(args: argparse.Namespace) -> int:
    from ..estimation import estimate_gas

    est = estimate_gas(args.smiles, name=args.name or "", label=args.label)
    if args.write:
        path = Path(args.write)
        if path.suffix != ".json":
            raise InvalidInput("--write", "", "a path ending in .json", args.write)
        try:
            path.write_text(json.dumps(est.document(), indent=1, ensure_ascii=False), "utf-8")
        except OSError as exc:
            raise InvalidInput(
                "--write", "", f"a file that can be written ({exc.strerror})", args.write
            ) from None
    if args.json:
        print(json.dumps(est.summary(), indent=2, ensure_ascii=False))
        return EXIT_OK
    print(f"{est.id}  from {est.smiles}  ({est.structure_class}; {est.n_groups} groups)")
    print(
        f"    ΔfH°(298.15 K) = {est.dHf / 1000:.2f} ± {est.u_dHf / 1000:.2f} kJ/mol   "
        f"S°(298.15 K) = {est.S298:.2f} ± {est.u_S298:.2f} J/(mol·K)   (± standard u)"
    )
    cps = ", ".join(f"{t:g} K {c:.1f}" for t, c in zip(est.cp_T, est.cp_values, strict=True))
    print(f"    Cp° [J/(mol·K)]: {cps}; ± {est.cp_u_rel:.1%} on the increments")
    for g in (*est.groups, *est.corrections):
        print(
            f"    {g['kind']:<10} {g['name']:<26} × {g['count']:<3g} "
            f"ΔfH° {g['dHf'] / 1000:+8.2f} kJ/mol  S° {g['S']:+7.2f} J/(mol·K)"
        )
    term = -R * math.log(est.symmetry_number)
    print(
        f"    σ = {est.symmetry_number} (−R ln σ = {term:.2f} J/(mol·K)); "
        f"unassigned stereocentres {est.unassigned_stereocentres}"
    )
    print(f"    {est.rule}")
    if args.write:
        print(f"Wrote {args.write}: use it with --species-file.")
    return EXIT_OK


def register(sub: Any) -> None:
    """Add the ``estimate`` subcommand to the ``feasibly`` parser's subparsers."""
    s = sub.add_parser(
        "estimate", help="estimate a gas no table has, from its SMILES (group additivity)"
    )
    s.add_argument("smiles", help="the structure as SMILES, e.g. 'CC(C)CC(C)=O'")
    s.add_argument("--name", help="a name for the entry")
    s.add_argument(
        "--label", default="estimated", help="form label of the entry id (default: estimated)"
    )
    s.add_argument("--write", metavar="PATH.json", help="write a species file holding the entry")
    s.add_argument("--json", action="store_true")
    s.set_defaults(run=_cmd_estimate)

"""``feasibly estimate``: ΔfH°, S° and Cp of a gas no table has, from its SMILES (group
additivity, with calibrated standard uncertainties), or, with ``--solid``, S° (fitted ionic
contributions) and Cp (Neumann–Kopp) of an inorganic salt from its formula, ΔfH° being the
user's (``--dHf``); or the reasons it cannot be estimated."""

from __future__ import annotations

import argparse
import json
import math
from collections.abc import Mapping
from pathlib import Path
from typing import Any

from ..errors import InvalidInput
from ..library.cp_models import R
from ._terminal import EXIT_OK


def _write(target: str, document: dict[str, Any]) -> None:
    path = Path(target)
    if path.suffix != ".json":
        raise InvalidInput("--write", "", "a path ending in .json", target)
    try:
        path.write_text(json.dumps(document, indent=1, ensure_ascii=False), "utf-8")
    except OSError as exc:
        raise InvalidInput(
            "--write", "", f"a file that can be written ({exc.strerror})", target
        ) from None


def _plain(value: Any) -> Any:
    """A species entry read back from a library, as plain JSON types."""
    if isinstance(value, Mapping):
        return {k: _plain(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_plain(v) for v in value]
    return value


def _cmd_solid(args: argparse.Namespace) -> int:
    from ..estimation import estimate_solid, ionic_entropy, neumann_kopp

    formula = args.smiles
    ion = ionic_entropy(formula)
    nk = neumann_kopp(formula)
    if args.write:
        if args.dHf is None or not args.source:
            raise InvalidInput(
                "--write",
                "",
                "--dHf VALUE U (kJ/mol) and --source naming where ΔfH° came from: ΔfH° of a "
                "solid is never estimated",
                args.write,
            )
        lib = estimate_solid(
            formula,
            dHf_J_per_mol=(args.dHf[0] * 1000.0, args.dHf[1] * 1000.0),
            source=args.source,
            name=args.name or "",
            label=args.label,
        )
        entry = _plain(lib[f"{formula}(cr,{args.label})"].raw)
        _write(args.write, {"schema": "feasibly-species", "schema_version": 1, "species": [entry]})
    if args.json:
        out = {
            **ion.summary(),
            "phase": "cr",
            "cp_298": {
                "method": "estimated (Neumann–Kopp)",
                "cp_J_per_mol_K": nk.cp298,
                "u_cp_J_per_mol_K": nk.u_cp298,
                "u_rel": nk.u_rel,
                "elements": [
                    {"element": el, "count": n, "entry": e, "cp_per_atom": c}
                    for el, n, e, c in nk.contributions
                ],
            },
            "dHf_298": "not estimated: give it with --dHf and --source",
        }
        print(json.dumps(out, indent=2, ensure_ascii=False))
        return EXIT_OK
    print(f"{formula}(cr)  as {ion.split.n} {ion.split.cation} + {ion.split.m} {ion.split.anion}")
    print(
        f"    S°(298.15 K) = {ion.S298:.2f} ± {ion.u_S298:.2f} J/(mol·K)   "
        f"Cp°(298.15 K) = {nk.cp298:.2f} ± {nk.u_cp298:.2f} J/(mol·K)   (± standard u)"
    )
    for ion_name, count, s, k in ion.terms:
        print(f"    ion {ion_name:<8} × {count:<3} s {s:+8.3f} J/(mol·K)   ({k} training salts)")
    print(f"    {ion.rule}")
    print("    ΔfH° is not estimated: give it with --dHf VALUE U (kJ/mol) and --source.")
    if args.write:
        print(f"Wrote {args.write}: use it with --species-file.")
    return EXIT_OK


def _cmd_estimate(args: argparse.Namespace) -> int:
    from ..estimation import estimate_gas

    if args.solid:
        return _cmd_solid(args)
    est = estimate_gas(args.smiles, name=args.name or "", label=args.label)
    if args.write:
        _write(args.write, est.document())
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
        "estimate",
        help="estimate a gas no table has, from its SMILES (group additivity), or with --solid "
        "S° and Cp of an inorganic salt from its formula",
    )
    s.add_argument(
        "smiles",
        help="the structure as SMILES, e.g. 'CC(C)CC(C)=O'; with --solid a salt's formula, "
        "e.g. BaSO4",
    )
    s.add_argument(
        "--solid",
        action="store_true",
        help="estimate an inorganic salt: S° from fitted ionic contributions, Cp by Neumann–Kopp",
    )
    s.add_argument(
        "--dHf",
        nargs=2,
        type=float,
        metavar=("VALUE", "U"),
        help="with --solid --write: ΔfH°(298.15 K) and its standard uncertainty in kJ/mol",
    )
    s.add_argument("--source", help="with --solid --write: where the ΔfH° came from")
    s.add_argument("--name", help="a name for the entry")
    s.add_argument(
        "--label", default="estimated", help="form label of the entry id (default: estimated)"
    )
    s.add_argument("--write", metavar="PATH.json", help="write a species file holding the entry")
    s.add_argument("--json", action="store_true")
    s.set_defaults(run=_cmd_estimate)

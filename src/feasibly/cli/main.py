"""The ``feasibly`` command: ``feasibly assess`` screens a reaction, ``feasibly species`` searches.

Errors print a one-paragraph message and exit non-zero; no traceback reaches the user.
"""

from __future__ import annotations

import argparse
import json
import math
import secrets
import sys
from collections.abc import Sequence
from pathlib import Path
from typing import Any

import numpy as np

from ..__about__ import __version__
from ..equilibrium.conversion import conversion_assessment, parse_feed
from ..errors import FeasiblyError, UnitError
from ..library.catalogue import Library, default_library
from ..records import record_from, write_record
from ..thermo.assessment import Assessment, assess
from ..uncertainty import UncertainAssessment, assess_uncertainty
from ..uncertainty.inputs import parse_override
from ..uncertainty.linear import window_phrase
from ..units import to_pascal
from .equilibrate import register as _register_equilibrium
from .verify import register as _register_records

__all__ = ["main"]

EXIT_OK = 0
EXIT_INPUT = 2  # the user's input or data could not be used (also argparse's own code)
EXIT_INTERNAL = 3  # a bug in feasibly: the message asks for a report


def _quantity_text(tokens: Sequence[str], what: str) -> str | tuple[list[float], str]:
    """Turn ['800', 'degC'] or ['800degC'] or ['700', '900', 'K'] into something units.py reads."""
    if len(tokens) == 1:
        return tokens[0]
    *numbers, unit = tokens
    try:
        values = [float(x) for x in numbers]
    except ValueError:
        raise UnitError(" ".join(tokens), what, "write numbers followed by one unit") from None
    return values, unit


def _pressure_pairs(items: list[list[str]] | None, what: str) -> dict[str, str]:
    out: dict[str, str] = {}
    for tokens in items or []:
        text = " ".join(tokens)
        if "=" not in text:
            raise UnitError(text, what, "write SPECIES=VALUE UNIT, e.g. CO2=0.3 bar")
        name, value = text.split("=", 1)
        out[name.strip()] = value.strip()
    return out


def _library(files: list[str] | None) -> Library:
    lib = default_library()
    for path in files or []:
        lib = lib.with_species(Library.from_file(path))
    return lib


def _fmt(x: float, digits: int = 2) -> str:
    if not math.isfinite(x):
        return "—"
    return f"{x:,.{digits}f}"


def _print_assessment(a: Assessment) -> None:
    s = a.standard
    print(f"Reaction   {a.reaction.equation(pretty=True)}")
    if a.reaction.equation() != " ".join(a.reaction.text.split()):
        print(f"           (entered as: {a.reaction.text})")
    lo, hi = a.reaction.valid_range()
    p_label = "1 bar" if s.standard_pressure == 1e5 else "1 atm"
    print(
        f"Data       feasibly library {a.library_version} (sha256 {a.library_hash[:12]}…); "
        f"valid {lo:g}–{hi:g} K; standard pressure {p_label}"
    )
    header = ["T / K", "T / °C", "ΔrH° kJ/mol", "ΔrS° J/(mol·K)", "ΔrG° kJ/mol", "log10 K"]
    if a.dG_actual is not None:
        header.append("ΔrG kJ/mol")
    header.append("ΔrG° < 0?")
    rows = []
    for i in range(s.T.size):
        row = [
            _fmt(s.T[i]),
            _fmt(s.T[i] - 273.15),
            _fmt(s.dH[i] / 1000),
            _fmt(s.dS[i]),
            _fmt(s.dG[i] / 1000),
            _fmt(s.log10_K[i], 3),
        ]
        if a.dG_actual is not None:
            row.append(_fmt(a.dG_actual[i] / 1000))
        row.append("yes" if s.dG[i] < 0 else "no")
        rows.append(row)
    widths = [max(len(h), *(len(r[j]) for r in rows)) for j, h in enumerate(header)]
    print()
    print("  ".join(h.rjust(w) for h, w in zip(header, widths, strict=True)))
    for r in rows:
        print("  ".join(c.rjust(w) for c, w in zip(r, widths, strict=True)))
    print()
    if a.crossover_K is not None:
        if a.crossover_K:
            joined = ", ".join(f"{t:.1f} K ({t - 273.15:.1f} °C)" for t in a.crossover_K)
            print(f"ΔrG° = 0 at {joined}")
        else:
            print("ΔrG° does not change sign in this range.")
        if a.crossover_298_estimate_K is not None:
            print(
                f"  (the 298.15 K shortcut ΔrH°/ΔrS° would say {a.crossover_298_estimate_K:.1f} K)"
            )
    if a.dG_actual is not None:
        given = ", ".join(f"{k} {v / 1e5:g} bar" for k, v in a.partial_pressures_Pa.items())
        print(f"ΔrG at partial pressures: {given}; ideal gases, condensed phases pure.")
        if a.assumed_standard:
            print(
                f"  At the standard pressure (no partial pressure given): "
                f"{', '.join(a.assumed_standard)}"
            )
    for term, T, before, after in a.phase_changes:
        print(f"Phase change: {term} goes from {before} to {after} at {T:.1f} K.")
    for used, T, stable in a.metastable:
        print(
            f"Note: {used} is metastable at {T:.1f} K ({stable} has lower G°); "
            "it is used because the equation names that phase."
        )
    if a.cautions:
        print()
        print("CAUTION")
        for c in a.cautions:
            print(f"  - {c.message}")
    for note in a.notes:
        print()
        print(note)


def _print_uncertainty(u: UncertainAssessment) -> None:
    print()
    basis = "ΔrG at the given partial pressures" if u.partial_pressures_Pa else "ΔrG°"
    print(
        f"How sure: {u.trials:,} trials ({u.samples.method}, seed {u.samples.seed}); "
        f"criterion {u.threshold_text} on {basis}; confidence level {u.confidence:.0%}"
    )
    if u.adaptive is not None:
        a = u.adaptive
        state = "met" if a.converged else "NOT met (trial limit reached)"
        print(
            f"  adaptive (JCGM 101 §7.9): {a.blocks} blocks of {a.block_size:,}; tolerance {state}"
        )
    header = ["T / K", "mean kJ/mol", "u kJ/mol", "95 % interval kJ/mol", "P(feasible)", "call"]
    rows = []
    for r in u.rows():
        rows.append(
            [
                _fmt(r["T_K"]),
                _fmt(r["dG_mean_J_per_mol"] / 1000),
                _fmt(r["dG_std_J_per_mol"] / 1000),
                f"[{r['dG_lo_J_per_mol'] / 1000:,.2f}, {r['dG_hi_J_per_mol'] / 1000:,.2f}]",
                f"{r['P_feasible']:.1%} ± {r['P_feasible_se']:.1%}",
                r["verdict"],
            ]
        )
    widths = [max(len(h), *(len(x[j]) for x in rows)) for j, h in enumerate(header)]
    print("  ".join(h.rjust(w) for h, w in zip(header, widths, strict=True)))
    for x in rows:
        print("  ".join(c.rjust(w) for c, w in zip(x, widths, strict=True)))
    windows = u.window()
    if windows:
        for w in windows:
            lo = "below the range" if w["lo_open"] else f"{w['T_lo_K']:.0f} K"
            hi = "above the range" if w["hi_open"] else f"{w['T_hi_K']:.0f} K"
            print(f"Feasible at {u.confidence:.0%} confidence from {lo} to {hi}.")
    else:
        print(f"Nowhere in this range is the step feasible at {u.confidence:.0%} confidence.")
    if u.crossing_range is not None:
        c = u.crossover()
        if "median_K" in c:
            print(
                f"ΔrG crosses the criterion at {c['median_K']:.0f} K (95 %: {c['lo_K']:.0f}–"
                f"{c['hi_K']:.0f} K); {c['fraction_none']:.0%} of trials do not cross in range."
            )
    t_mid = float(u.T[len(u.T) // 2])
    shares = u.sensitivity_by_species((t_mid, "K"))[:3]
    if shares:
        joined = "; ".join(f"{sid} {share:.0%}" for sid, share in shares)
        print(f"Doubt at {t_mid:.0f} K comes from: {joined} (shares of the variance of ΔrG).")


def _cmd_assess(args: argparse.Namespace) -> int:
    lib = _library(args.species_file)
    pressures = _pressure_pairs(args.p, "partial pressure")
    if args.y:
        if args.P is None:
            raise UnitError(
                " ".join(args.y[0]), "mole fraction", "give the total pressure with --P"
            )
        total = float(np.squeeze(to_pascal(_quantity_text(args.P, "pressure"))))
        for name, value in _pressure_pairs(args.y, "mole fraction").items():
            try:
                y = float(value)
            except ValueError:
                raise UnitError(value, "mole fraction", "write a number between 0 and 1") from None
            if not 0 < y <= 1:
                raise UnitError(value, "mole fraction", "must be in (0, 1]")
            pressures[name] = f"{y * total} Pa"
    elif args.P is not None and not args.feed:
        raise UnitError(
            " ".join(args.P),
            "total pressure",
            "say how it is shared: --y SPECIES=FRACTION for each gas, or give "
            "partial pressures with --p",
        )
    T = _quantity_text(args.T, "temperature") if args.T else None
    T_range = None
    if args.T_range:
        tokens = args.T_range
        if len(tokens) == 3:
            T_range = ((float(tokens[0]), tokens[2]), (float(tokens[1]), tokens[2]))
        elif len(tokens) == 2:
            T_range = (tokens[0], tokens[1])
        else:
            raise UnitError(" ".join(tokens), "temperature range", "write LOW HIGH UNIT")
    if T is None and T_range is None:
        raise UnitError(None, "temperature", "give --T VALUE UNIT or --T-range LOW HIGH UNIT")
    result = assess(
        args.equation,
        T=T,
        T_range=T_range,
        points=args.points,
        partial_pressures=pressures,
        standard_pressure=args.standard_pressure,
        library=lib,
        balance=args.balance,
    )
    if args.record and args.seed is None and (args.samples is not None or args.adaptive):
        # A record must be reproducible: draw the seed here and write it into the record.
        args.seed = secrets.randbits(32)
    uncertain = None
    if args.samples is not None or args.adaptive:
        threshold = " ".join(args.threshold) if args.threshold else "0 J/mol"
        uncertain = assess_uncertainty(
            result.reaction,
            T=T,
            T_range=T_range,
            points=args.points,
            samples=args.samples if args.samples is not None else 100_000,
            seed=args.seed,
            method=args.method,
            adaptive=args.adaptive,
            confidence=args.confidence,
            threshold=threshold,
            required_K=args.require_K,
            overrides=[parse_override(o) for o in args.override or []],
            correlations={
                (a, b): float(r) for a, b, r in (_correlation(c) for c in args.correlate or [])
            },
            partial_pressures=pressures,
            standard_pressure=args.standard_pressure,
            library=lib,
        )
    elif args.threshold or args.require_K or args.override or args.correlate:
        raise UnitError(
            None,
            "uncertainty run",
            "--threshold, --require-K, --override and --correlate need --samples N (or --adaptive)",
        )
    conversion = None
    if args.feed or args.require_conversion or args.key:
        if not (args.feed and args.require_conversion and args.key):
            raise UnitError(
                None,
                "required conversion",
                "give --feed, --require-conversion and "
                '--key together (e.g. --feed "CH4:1, H2O:2" '
                "--require-conversion 90% --key CH4)",
            )
        conversion = conversion_assessment(
            result.reaction,
            (result.standard.T, "K"),
            args.feed,
            args.key,
            args.require_conversion,
            _quantity_text(args.P, "pressure") if args.P else "1 bar",
            samples=args.samples,
            seed=args.seed,
            confidence=args.confidence,
            library=lib,
        )
    if args.record:
        conv_kwargs: dict[str, Any] = {}
        if conversion is not None:
            conv_kwargs = {
                "conversion": conversion,
                "conversion_inputs": {
                    "feed": parse_feed(args.feed),
                    "key": args.key,
                    "required": conversion["required_conversion"],
                    "P_Pa": conversion["P_Pa"],
                    "samples": args.samples,
                    "seed": args.seed,
                    "confidence": args.confidence,
                },
            }
        record = record_from(
            result,
            uncertain,
            author=args.author or "",
            reviewer=args.reviewer or "",
            rationale=args.rationale or "",
            balance=args.balance,
            required_K=args.require_K,
            **conv_kwargs,
        )
        written = write_record(
            record, args.record, Path(args.record).with_suffix(".html"), overwrite=args.overwrite
        )
        print("record written: " + ", ".join(str(p) for p in written), file=sys.stderr)
    if args.json:
        doc = result.to_dict()
        if uncertain is not None:
            extra = uncertain.to_dict()
            for row, urow in zip(doc["rows"], extra.pop("rows"), strict=True):
                row.update({k: v for k, v in urow.items() if k != "T_K"})
            doc["uncertainty"] = extra
        if conversion is not None:
            doc["conversion"] = conversion
        print(json.dumps(doc, indent=2, ensure_ascii=False))
    else:
        _print_assessment(result)
        if uncertain is not None:
            _print_uncertainty(uncertain)
        if conversion is not None:
            _print_conversion(conversion)
    return EXIT_OK


def _print_conversion(c: dict[str, Any]) -> None:
    print()
    req = c["required_conversion"]
    print(
        f"Equilibrium conversion of {c['key']} at {c['P_Pa'] / 1e5:g} bar "
        f"(required: {req:.0%}; {c['model']})"
    )
    sampled = c["trials"] > 0
    header = ["T / K", "conversion"] + (["95 % interval", "P(meets)"] if sampled else ["meets?"])
    rows = []
    for r in c["rows"]:
        row = [_fmt(r["T_K"]), f"{r['conversion']:.1%}"]
        if sampled:
            row += [
                f"[{r['conversion_lo']:.1%}, {r['conversion_hi']:.1%}]",
                f"{r['P_meets_required']:.1%} ± {r['P_meets_required_se']:.1%}",
            ]
        else:
            row.append("yes" if r["meets_required"] else "no")
        rows.append(row)
    widths = [max(len(h), *(len(x[j]) for x in rows)) for j, h in enumerate(header)]
    print("  ".join(h.rjust(w) for h, w in zip(header, widths, strict=True)))
    for x in rows:
        print("  ".join(v.rjust(w) for v, w in zip(x, widths, strict=True)))
    if c["window"]:
        spans = window_phrase(c["window"])
        where = f"at {c['confidence']:.0%} confidence" if sampled else "at the nominal data"
        print(f"The required conversion is met {where} {spans}.")
    else:
        print("The required conversion is not met anywhere in this range.")


def _correlation(tokens: list[str]) -> tuple[tuple[str, str], tuple[str, str], str]:
    if len(tokens) != 3:
        raise UnitError(" ".join(tokens), "correlation", "write ID:QUANTITY ID:QUANTITY RHO")
    keys = []
    for t in tokens[:2]:
        if ":" not in t:
            raise UnitError(t, "input name", "write ID:QUANTITY, e.g. MgO(cr):dHf")
        sid, q = t.rsplit(":", 1)
        keys.append((sid, q))
    return keys[0], keys[1], tokens[2]


def _cmd_species(args: argparse.Namespace) -> int:
    lib = _library(args.species_file)
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


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="feasibly",
        description="Thermodynamic feasibility of a reaction at your temperature and pressure.",
    )
    parser.add_argument("--version", action="version", version=f"feasibly {__version__}")
    sub = parser.add_subparsers(dest="command", required=True)

    a = sub.add_parser("assess", help="screen one reaction over temperature")
    a.add_argument("equation", help='e.g. "MgCO3 -> MgO + CO2" (phases optional: (g), (l), (s))')
    a.add_argument("--T", nargs="+", metavar="T", help="temperature(s) and unit, e.g. 800 degC")
    a.add_argument(
        "--T-range",
        nargs="+",
        metavar="T",
        dest="T_range",
        help="LOW HIGH UNIT, e.g. 300 1500 K; also searches for ΔrG° = 0",
    )
    a.add_argument("--points", type=int, default=12, help="temperatures in --T-range (default 12)")
    a.add_argument(
        "--p",
        action="append",
        nargs="+",
        metavar="SPECIES=P",
        help="partial pressure of a gas, e.g. --p CO2=0.3 bar (repeat per gas)",
    )
    a.add_argument("--P", nargs="+", metavar="P", help="total pressure for --y, e.g. 5 bar")
    a.add_argument(
        "--y",
        action="append",
        nargs="+",
        metavar="SPECIES=Y",
        help="mole fraction of a gas at total pressure --P (repeat per gas)",
    )
    a.add_argument(
        "--standard-pressure",
        default="1 bar",
        choices=["1 bar", "1 atm"],
        help="standard-state pressure of the gases (default 1 bar)",
    )
    a.add_argument(
        "--balance",
        action="store_true",
        help="find the coefficients from the species (sides as written)",
    )
    a.add_argument(
        "--species-file",
        action="append",
        metavar="PATH",
        help="add your own species (JSON or TOML, schema in data/SCHEMA.md)",
    )
    a.add_argument("--json", action="store_true", help="print JSON instead of a table")
    e = a.add_argument_group("required conversion (equilibrium of this reaction)")
    e.add_argument("--feed", help='feed amounts, e.g. "CH4:1, H2O:2, N2:0.5" (inerts allowed)')
    e.add_argument(
        "--require-conversion",
        dest="require_conversion",
        metavar="X",
        help="conversion of --key that you need, e.g. 90%% or 0.9",
    )
    e.add_argument("--key", help="the reactant whose conversion counts, e.g. CH4")
    r = a.add_argument_group("decision record")
    r.add_argument(
        "--record",
        metavar="PATH",
        help="write a reproducible record (JSON) and its report (PATH with .html)",
    )
    r.add_argument("--author", help="who made the call (goes into the record)")
    r.add_argument("--reviewer", help="who reviews it (goes into the record)")
    r.add_argument("--rationale", help="why this step, in your words (goes into the record)")
    r.add_argument("--overwrite", action="store_true", help="replace existing record files")
    g = a.add_argument_group("how sure (Monte Carlo over the data's uncertainty)")
    g.add_argument("--samples", type=int, metavar="N", help="Monte Carlo trials, e.g. 100000")
    g.add_argument("--seed", type=int, metavar="S", help="seed of the random generator")
    g.add_argument(
        "--method",
        choices=["mc", "sobol"],
        default="mc",
        help="plain Monte Carlo or scrambled Sobol (N a power of two)",
    )
    g.add_argument(
        "--adaptive",
        action="store_true",
        help="add trials until the JCGM 101 §7.9 tolerance is met",
    )
    g.add_argument(
        "--confidence",
        type=float,
        default=0.95,
        help="confidence level for the call (default 0.95)",
    )
    g.add_argument(
        "--threshold",
        nargs="+",
        metavar="G",
        help="feasible when ΔrG is below this, e.g. -10 kJ/mol (default 0)",
    )
    g.add_argument(
        "--require-K",
        type=float,
        dest="require_K",
        metavar="K",
        help="feasible when K° is at least this (instead of --threshold)",
    )
    g.add_argument(
        "--override",
        action="append",
        metavar="TEXT",
        help='your own value or uncertainty: "ID:dHf = V ± U UNIT [95%%|k=2] '
        '[uniform|triangular]; reason" (quantity dHf, S298 or cp)',
    )
    g.add_argument(
        "--correlate",
        action="append",
        nargs=3,
        metavar=("A", "B", "RHO"),
        help="correlation between two inputs, e.g. MgO(cr):dHf MgCO3(cr):dHf 0.5",
    )
    a.set_defaults(run=_cmd_assess)

    s = sub.add_parser("species", help="search the species data library")
    s.add_argument("query", help="formula, name or CAS number")
    s.add_argument("--limit", type=int, default=12)
    s.add_argument("--details", action="store_true", help="show every value's source")
    s.add_argument("--species-file", action="append", metavar="PATH")
    s.add_argument("--json", action="store_true")
    s.set_defaults(run=_cmd_species)
    _register_records(sub)
    _register_equilibrium(sub)
    return parser


def main(argv: Sequence[str] | None = None) -> int:
    """Entry point of the ``feasibly`` command; returns the exit code."""
    parser = build_parser()
    args = parser.parse_args(argv)
    try:
        return int(args.run(args))
    except FeasiblyError as exc:
        print(f"feasibly: {exc}", file=sys.stderr)
        return EXIT_INPUT
    except Exception as exc:
        print(
            f"feasibly: internal error ({type(exc).__name__}: {exc}). This is a bug in "
            "feasibly; please report it with the command you ran.",
            file=sys.stderr,
        )
        return EXIT_INTERNAL


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())

"""``feasibly assess``: screen one reaction over temperature at the user's conditions, with the
call, its uncertainty, the required conversion and a decision record when asked."""

from __future__ import annotations

import argparse
import getpass
import json
import secrets
import sys
from collections.abc import Sequence
from pathlib import Path
from typing import Any

from .._limits import MAX_POINTS
from ..conditions import GAS_MODELS, read_mole_fractions, read_pressure
from ..errors import InvalidInput, UnitError
from ..thermo import assess
from ._terminal import (
    EXIT_OK,
    _library,
    _print_assessment,
    _print_call,
    _print_conversion,
    _print_uncertainty,
)


def _quantity_text(tokens: Sequence[str], what: str) -> str | tuple[list[float], str]:
    """Turn ['800', 'degC'] or ['800degC'] or ['700', '900', 'K'] into something units.py reads."""
    if len(tokens) == 1:
        return tokens[0]
    *numbers, unit = tokens
    if len(numbers) > MAX_POINTS:
        raise UnitError(f"{len(numbers)} values", what, f"give at most {MAX_POINTS:,} values")
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


def _cmd_assess(args: argparse.Namespace) -> int:
    if args.heat_conversion and not args.heat:
        raise InvalidInput(
            "--heat-conversion", "", "used together with --heat", args.heat_conversion
        )
    if args.compare and not args.record:
        raise InvalidInput("--compare", "", "used together with --record PATH", args.compare)
    if args.sign_with and not args.record:
        raise InvalidInput("--sign-with", "", "used together with --record PATH", args.sign_with)
    if args.record is not None and not args.record.strip():
        raise InvalidInput("--record", "", "a file path such as call.json", args.record)
    lib = _library(args.species_file, args.replace_shipped)
    pressures: dict[str, Any] = dict(_pressure_pairs(args.p, "partial pressure"))
    molalities = _pressure_pairs(args.m, "molality") or None
    if args.y:
        if args.P is None:
            raise UnitError(
                " ".join(args.y[0]), "mole fraction", "give the total pressure with --P"
            )
        fractions = read_mole_fractions(
            _quantity_text(args.P, "pressure"), _pressure_pairs(args.y, "mole fraction")
        )
        total = read_pressure(_quantity_text(args.P, "pressure"))
        # 1e-9 relative: fractions typed to 9 decimals that add to 1 are the whole gas
        if args.gas_model == "peng-robinson" and sum(fractions.values()) < total * (1 - 1e-9):
            raise UnitError(
                " ".join(" ".join(t) for t in args.y),
                "set of mole fractions",
                "with --gas-model peng-robinson they must add up to 1: the fugacity "
                "coefficients depend on the whole gas mixture, and the rest of it is unknown "
                "(give every gas, or use the ideal-gas model)",
            )
        for name, p_pa in fractions.items():
            pressures[name] = (p_pa, "Pa")
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
            T_range = ((tokens[0], tokens[2]), (tokens[1], tokens[2]))
        elif len(tokens) == 2:
            T_range = (tokens[0], tokens[1])
        else:
            raise UnitError(" ".join(tokens), "temperature range", "write LOW HIGH UNIT")
    if T is None and T_range is None:
        raise InvalidInput(
            "--T",
            "",
            "given: one temperature such as --T 800 degC, or a range such as --T-range 600 1000 K",
            None,
        )
    at_conversion = None
    if args.feed and args.require_conversion and args.key and not pressures:
        # The call is on ΔrG at the composition the required conversion gives at --P.
        at_conversion = {
            "feed": args.feed,
            "key": args.key,
            "required": args.require_conversion,
            "P": _quantity_text(args.P, "pressure") if args.P else "1 bar",
        }
    result = assess(
        args.equation,
        at_conversion=at_conversion,
        T=T,
        T_range=T_range,
        points=args.points,
        partial_pressures=pressures,
        standard_pressure=args.standard_pressure,
        library=lib,
        balance=args.balance,
        molalities=molalities,
        gas_model=args.gas_model,
    )
    if result.gas_model == "ideal" and result.fugacity_term is not None:
        # Only calls at given pressures or a required conversion get here: a plain screen does
        # not load the uncertainty wing.
        from ..uncertainty import with_gas_model_warning

        with_gas_model_warning(result)
    if args.record and args.seed is None and (args.samples is not None or args.adaptive):
        # A record must be reproducible: draw the seed here and write it into the record.
        args.seed = secrets.randbits(32)
    uncertain = None
    if args.samples is not None or args.adaptive:
        # The uncertainty, equilibrium and record wings load only for the options that use them:
        # a plain screen then starts in a fraction of the time.
        from ..uncertainty import assess_uncertainty, parse_override

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
            at_conversion=result.at_conversion,
            molalities=molalities,
            gas_model=args.gas_model,
        )
    elif args.threshold or args.require_K or args.override or args.correlate:
        raise UnitError(
            None,
            "uncertainty run",
            "--threshold, --require-K, --override and --correlate need --samples N (or --adaptive)",
        )
    conversion = None
    # --feed alone is the feed of a heat balance (--heat); with a required conversion it is also
    # the feed of the conversion criterion.
    if args.require_conversion or ((args.key or args.feed) and not args.heat):
        if not (args.feed and args.require_conversion and args.key):
            raise UnitError(
                None,
                "required conversion",
                "give --feed, --require-conversion and "
                '--key together (e.g. --feed "CH4:1, H2O:2" '
                "--require-conversion 90% --key CH4)",
            )
        from ..equilibrium import conversion_assessment

        conversion = conversion_assessment(
            result.reaction,
            (result.standard.T, "K"),
            args.feed,
            args.key,
            args.require_conversion,
            _quantity_text(args.P, "pressure") if args.P else "1 bar",
            confidence=args.confidence,
            library=lib,
            # The call's own draws, overrides and correlations: one set behind every number.
            sample_set=uncertain.samples if uncertain is not None else None,
            gas_model=args.gas_model,
        )
    if args.record:
        from ..equilibrium import parse_feed
        from ..records import record_from, sign_record, write_record

        conv_kwargs: dict[str, Any] = {}
        if conversion is not None:
            conv_kwargs = {
                "conversion": conversion,
                "conversion_inputs": {
                    "feed": parse_feed(args.feed),
                    "key": args.key,
                    "required": conversion["required_conversion"],
                    "P_Pa": conversion["P_Pa"],
                    "samples": uncertain.trials if uncertain is not None else None,
                    "seed": uncertain.samples.seed if uncertain is not None else None,
                    "confidence": args.confidence,
                    "shared_draws": uncertain is not None,
                    "gas_model": conversion["gas_model"],
                },
            }
        if args.heat:
            if not args.feed:
                raise InvalidInput(
                    "--heat", "", "used with --feed (the amounts fed, e.g. CaCO3:1)", None
                )
            # The record recomputes the heat balance from these inputs and the call's draws.
            conv_kwargs["heat"] = {
                "feed": args.feed,
                "T_feed": _quantity_text(args.feed_T, "temperature") if args.feed_T else None,
                "P": _quantity_text(args.P, "pressure") if args.P else "1 bar",
                **_heat_conversion(args),
            }
        if args.compare:
            conv_kwargs["comparison"] = _comparison(args, uncertain)
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
        if args.sign_with:
            record = sign_record(record, args.sign_with, password=_passphrase(args.sign_with))
        written = write_record(
            record, args.record, Path(args.record).with_suffix(".html"), overwrite=args.overwrite
        )
        print("record written: " + ", ".join(str(p) for p in written), file=sys.stderr)
        if "signature" in record:
            print(f"signed with key {record['signature']['key_fingerprint']}", file=sys.stderr)
    if args.export:
        from ..images import export_result  # loaded only when exporting

        # Tables and figures of the standard screen, and of the Monte Carlo run when there is one.
        written_files = export_result(
            result, args.export, "standard", figures_too=not args.no_figures
        )
        if uncertain is not None:
            t_one = float(result.standard.T[0]) if result.standard.T.size == 1 else None
            written_files += export_result(
                uncertain, args.export, "monte-carlo", T_K=t_one, figures_too=not args.no_figures
            )
        print("exported: " + ", ".join(str(p) for p in written_files), file=sys.stderr)
    heat = _heat(args, result, uncertain, T) if args.heat else None
    cautions = result.cautions
    if uncertain is not None and any(c.kind == "strongly exothermic" for c in cautions):
        from ..heat import cautions_with_draws  # the adiabatic temperature's interval

        cautions = cautions_with_draws(cautions, uncertain, result.standard.T, result.standard.dH)
    if args.json:
        doc = result.to_dict()
        doc["cautions"] = [c.as_dict() for c in cautions]
        if heat is not None:
            for row, duty in zip(doc["rows"], heat["duties"], strict=True):
                row["duty_J_per_mol"] = duty.J_per_mol_reaction
                if duty.interval is not None:
                    row["duty_J_per_mol_interval_95"] = list(duty.interval)
                full = duty.to_dict()
                for key in _HEAT_JSON:
                    if key in full:
                        row[key] = full[key]
            doc["heat"] = {k: v for k, v in heat.items() if k != "duties"}
        if uncertain is not None:
            extra = uncertain.to_dict()
            for row, urow in zip(doc["rows"], extra.pop("rows"), strict=True):
                row.update({k: v for k, v in urow.items() if k != "T_K"})
            doc["uncertainty"] = extra
        if conversion is not None:
            doc["conversion"] = conversion
        print(json.dumps(doc, indent=2, ensure_ascii=False))
    else:
        _print_call(result, uncertain, conversion)
        _print_assessment(result, cautions)
        if uncertain is not None:
            _print_uncertainty(uncertain)
        if conversion is not None:
            _print_conversion(conversion)
        if heat is not None:
            _print_heat(heat)
    return EXIT_OK


#: Per-row heat figures of the JSON beside duty_J_per_mol (SI units in the names).
_HEAT_JSON = (
    "extent_mol",
    "extent_mol_interval_95",
    "duty_J_per_kg_product",
    "duty_J_per_kg_product_interval_95",
    "duty_J_per_kg_feed",
    "duty_J_per_kg_feed_interval_95",
)


def _heat(args: argparse.Namespace, result: Any, uncertain: Any, T: Any) -> dict[str, Any]:
    """Heat duty at each temperature and the adiabatic temperature, from the call's draws."""
    from ..heat import adiabatic_temperature, heat_duty

    if not args.feed:
        raise InvalidInput("--heat", "", "used with --feed (the amounts fed, e.g. CaCO3:1)", None)
    feed_T = _quantity_text(args.feed_T, "temperature") if args.feed_T else None
    conv = _heat_conversion(args)
    P = _quantity_text(args.P, "pressure") if args.P else "1 bar"
    duties = [
        heat_duty(
            result.reaction, (float(t), "K"), args.feed, T_feed=feed_T, P=P, call=uncertain, **conv
        )
        for t in result.standard.T
    ]
    t_in = feed_T if feed_T is not None else (float(result.standard.T[0]), "K")
    out: dict[str, Any] = {
        "duties": duties,
        "basis": "per mole of reaction as written; feed "
        + ("at " + " ".join(args.feed_T) if args.feed_T else "at the reaction temperature"),
        "conversion": duties[0].conversion,
        "adiabatic_T_K": None,
    }
    try:
        hot = adiabatic_temperature(result.reaction, args.feed, t_in, P=P, call=uncertain, **conv)
    except InvalidInput as exc:  # an endothermic step has no adiabatic temperature to quote
        reason = exc.expected.replace("a step that releases heat: this one", "this step")
        out["adiabatic_note"] = f"No adiabatic temperature: {reason}."
        return out
    out["adiabatic_T_K"] = hot.T_K
    out["adiabatic_T_feed_K"] = hot.T_feed_K
    out["adiabatic_note"] = hot.notes[0]
    if hot.interval is not None:
        out["adiabatic_T_K_interval_95"] = list(hot.interval)
    return out


def _comparison(args: argparse.Namespace, uncertain: Any) -> dict[str, Any]:
    """The formation-line comparison a record carries: its compounds and range, and as many
    draws as the call, from the call's seed (the lines are other reactions: their own draws)."""
    tokens = args.compare_T_range
    if len(tokens) != 3:
        raise InvalidInput(
            "--compare-T-range", "", "LOW HIGH UNIT, e.g. --compare-T-range 500 1800 K", tokens
        )
    lo, hi, unit = tokens
    return {
        "compounds": args.compare,
        "reagent": args.compare_per,
        "T_range": (f"{lo} {unit}", f"{hi} {unit}"),
        "points": args.compare_points,
        "samples": uncertain.trials if uncertain is not None else None,
        "seed": uncertain.samples.seed if uncertain is not None else None,
    }


def _heat_conversion(args: argparse.Namespace) -> dict[str, Any]:
    """The conversion of the heat balance: --heat-conversion, else the required one of --key,
    else all of --key, else all of the limiting reactant."""
    if args.heat_conversion:
        return {"conversion": args.heat_conversion, "key": args.key}
    if args.require_conversion and args.key:
        return {"conversion": args.require_conversion, "key": args.key}
    if args.key:  # all of the key reactant converted
        return {"conversion": 1.0, "key": args.key}
    return {}


def _print_heat(heat: dict[str, Any]) -> None:
    print(f"\nHeat duty ({heat['basis']}; + means heat in):")
    for d in heat["duties"]:
        band = ""
        if d.interval is not None:
            band = f"  (95 %: {d.interval[0] / 1e3:,.1f} to {d.interval[1] / 1e3:,.1f})"
        per_kg = (
            f"; {d.J_per_kg_product / 1e6:,.2f} MJ per kg {d.product}" if d.J_per_kg_product else ""
        )
        print(f"  {d.T_K:8.1f} K: {d.J_per_mol_reaction / 1e3:,.1f} kJ/mol{band}{per_kg}")
    if heat["adiabatic_T_K"] is None:
        print(heat["adiabatic_note"])
        return
    line = f"Adiabatic outlet temperature, feed at {heat['adiabatic_T_feed_K']:.1f} K: "
    line += f"{heat['adiabatic_T_K']:.0f} K"
    if "adiabatic_T_K_interval_95" in heat:
        lo, hi = heat["adiabatic_T_K_interval_95"]
        line += f" (95 %: {lo:.0f} to {hi:.0f} K)"
    print(line)
    print("  " + heat["adiabatic_note"])


def _passphrase(key_path: str) -> bytes | None:
    """The passphrase of an encrypted PEM key, asked on the terminal (never an option, so it
    stays out of the shell history); None for an unencrypted key."""
    try:
        with open(key_path, "rb") as fh:
            head = fh.read(4096)
    except OSError:
        return None  # sign_record reports the unreadable file
    if b"ENCRYPTED" not in head:
        return None
    if not sys.stdin.isatty():
        raise InvalidInput(
            "--sign-with",
            "",
            "an unencrypted key, or run on a terminal to type the key's passphrase",
            key_path,
        )
    return getpass.getpass(f"passphrase of {key_path}: ").encode("utf-8")


def _correlation(tokens: list[str]) -> tuple[tuple[str, str], tuple[str, str], str]:
    if len(tokens) != 3:
        raise UnitError(" ".join(tokens), "correlation", "write ID:QUANTITY ID:QUANTITY RHO")
    try:
        float(tokens[2])  # the kernel checks the range; here only that it is a number
    except ValueError:
        raise UnitError(tokens[2], "correlation", "RHO must be a number between −1 and 1") from None
    keys = []
    for t in tokens[:2]:
        if ":" not in t:
            raise UnitError(t, "input name", "write ID:QUANTITY, e.g. MgO(cr):dHf")
        sid, q = t.rsplit(":", 1)
        keys.append((sid, q))
    return keys[0], keys[1], tokens[2]


def register(sub: Any) -> None:
    """Add the ``assess`` subcommand to the ``feasibly`` parser's subparsers."""
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
    a.add_argument(
        "--m",
        action="append",
        nargs="+",
        metavar="SPECIES=M",
        help="molality of an aqueous species, e.g. --m Ca+2=0.01 mol/kg (repeat per species)",
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
    a.add_argument(
        "--replace-shipped",
        action="store_true",
        help="let --species-file entries replace shipped entries of the same id "
        "(refused otherwise; the output says which were replaced)",
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
    e.add_argument(
        "--gas-model",
        dest="gas_model",
        default="ideal",
        choices=list(GAS_MODELS),
        help="gases in ΔrG at --p/--y or at the required conversion, and in the equilibrium: "
        "ideal, or with Peng–Robinson fugacity coefficients (for tens of bar and more; "
        "default ideal)",
    )
    h = a.add_argument_group("heat (needs --feed)")
    h.add_argument(
        "--heat",
        action="store_true",
        help="heat duty at each temperature and the adiabatic temperature of the feed, with "
        "their 95 %% intervals when sampled (JSON: duty_J_per_mol, duty_J_per_kg_product, "
        "duty_J_per_kg_feed, extent_mol per row; heat.adiabatic_T_K)",
    )
    h.add_argument(
        "--heat-conversion",
        dest="heat_conversion",
        metavar="X",
        help="conversion of the heat balance: a fraction of --key (or of the limiting reactant), "
        "e.g. 90%%, or 'equilibrium' (each Monte Carlo draw at its own extent; default: "
        "--require-conversion, else complete)",
    )
    h.add_argument(
        "--feed-T",
        nargs="+",
        dest="feed_T",
        metavar="T",
        help="temperature the feed enters at, e.g. 25 degC (default: the reaction temperature)",
    )
    x = a.add_argument_group("exports")
    x.add_argument(
        "--export",
        metavar="DIR",
        help="write every table as CSV and the figures as PNG and SVG into DIR "
        "(figures need plotly and a local chromium)",
    )
    x.add_argument("--no-figures", action="store_true", help="with --export: tables only")
    r = a.add_argument_group("decision record")
    r.add_argument(
        "--record",
        metavar="PATH",
        help="write a reproducible record (JSON) and its report (PATH with .html)",
    )
    r.add_argument(
        "--compare",
        nargs="+",
        metavar="COMPOUND",
        help="put formation lines of these compounds (e.g. Cu2O FeO Cr2O3) compared per mole "
        "of --compare-per into the record, with bands from as many draws as the call",
    )
    r.add_argument(
        "--compare-per", dest="compare_per", default="O2", help="reagent gas (default O2)"
    )
    r.add_argument(
        "--compare-T-range",
        nargs=3,
        dest="compare_T_range",
        default=["500", "1800", "K"],
        metavar="T",
        help="range of the compared lines (default 500 1800 K)",
    )
    r.add_argument(
        "--compare-points",
        dest="compare_points",
        type=int,
        default=14,
        help="temperatures of the compared lines (default 14)",
    )
    r.add_argument("--author", help="who made the call (goes into the record)")
    r.add_argument("--reviewer", help="who reviews it (goes into the record)")
    r.add_argument("--rationale", help="why this step, in your words (goes into the record)")
    r.add_argument("--overwrite", action="store_true", help="replace existing record files")
    r.add_argument(
        "--sign-with",
        metavar="KEY.pem",
        help="sign the record with your Ed25519 private key (PEM file; only the public key "
        "goes into the record)",
    )
    g = a.add_argument_group("how sure (Monte Carlo over the data's uncertainty)")
    g.add_argument("--samples", type=int, metavar="N", help="Monte Carlo trials, e.g. 100000")
    g.add_argument("--seed", type=int, metavar="S", help="seed of the random generator")
    g.add_argument(
        "--method",
        choices=["mc", "mc-per-species", "sobol"],
        default="mc",
        help="plain Monte Carlo; the same with one stream per species input (as `feasibly "
        "screen` draws); or scrambled Sobol (N a power of two)",
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

"""``feasibly equilibrate``: equilibrium composition of a species set (registered by cli.py)."""

from __future__ import annotations

import argparse
import json
from typing import TYPE_CHECKING, Any

from ..conditions import read_temperatures
from ..errors import UnitError
from ._terminal import _library

if TYPE_CHECKING:
    from ..equilibrium import Equilibrium

__all__ = ["register"]


def _quantity(tokens: list[str], what: str) -> Any:
    if len(tokens) == 1:
        return tokens[0]
    *numbers, unit = tokens
    try:
        return [float(x) for x in numbers], unit
    except ValueError:
        raise UnitError(" ".join(tokens), what, "write numbers followed by one unit") from None


def _print(eq: Equilibrium) -> None:
    x = eq.gas_fractions
    for i in range(eq.T.size):
        print(
            f"T = {eq.T[i]:.2f} K ({eq.T[i] - 273.15:.2f} °C), P = {eq.P[i] / 1e5:g} bar"
            + (f"; {eq.trials:,} trials, seed {eq.seed}" if eq.bands is not None else "")
        )
        header = ["species", "amount / mol", "gas mole fraction"]
        if eq.bands is not None:
            header += ["95 % band (amount / mol)", "95 % band (fraction)"]
        rows = []
        for j, sid in enumerate(eq.species):
            gas = eq.phases[j] == "g"
            row = [sid, f"{eq.amounts[i, j]:.6g}", f"{x[i, j]:.6g}" if gas else "(condensed)"]
            if eq.bands is not None:
                a, y = eq.bands["amounts"], eq.bands["gas_fractions"]
                row.append(f"[{a[0, i, j]:.4g}, {a[2, i, j]:.4g}]")
                row.append(f"[{y[0, i, j]:.4g}, {y[2, i, j]:.4g}]" if gas else "")
            rows.append(row)
        widths = [max(len(h), *(len(r[k]) for r in rows)) for k, h in enumerate(header)]
        print(
            "  ".join(
                h.ljust(w) if k == 0 else h.rjust(w)
                for k, (h, w) in enumerate(zip(header, widths, strict=True))
            )
        )
        for r in rows:
            print(
                "  ".join(
                    c.ljust(w) if k == 0 else c.rjust(w)
                    for k, (c, w) in enumerate(zip(r, widths, strict=True))
                )
            )
        print()
    for caution in eq.cautions():
        print(f"Caution: {caution.message}")
    gases = (
        "Peng–Robinson gas mixture (fugacity coefficients, k_ij = 0)"
        if eq.gas_model == "peng-robinson"
        else "ideal-gas mixture"
    )
    # a gas at exactly zero amount is one the feed's elements cannot make (or one without data)
    absent = [
        sid
        for j, sid in enumerate(eq.species)
        if eq.phases[j] == "g" and bool((eq.amounts[:, j] == 0.0).all())
    ]
    if absent:
        print(
            "Exactly zero: the feed's elements cannot form "
            f"{', '.join(absent)} (or no data covers the temperature)."
        )
    print(
        f"Model: {gases} plus pure condensed phases at unit activity (standard state 1 bar). "
        "Thermodynamics only: nothing here speaks to rate, hazards or scale-up."
    )


def _run(args: argparse.Namespace) -> int:
    lib = _library(args.species_file, args.replace_shipped)
    if (args.T is None) == (args.T_range is None):
        raise UnitError(None, "temperature", "give --T VALUE UNIT or --T-range LOW HIGH UNIT")
    if args.T is not None:
        T = _quantity(args.T, "temperature")
    else:
        if len(args.T_range) != 3:
            raise UnitError(" ".join(args.T_range), "temperature range", "write LOW HIGH UNIT")
        lo, hi, unit = args.T_range
        # The one reader checks the numbers, the unit and the number of points (capped).
        temps, _ = read_temperatures(
            None, ((lo, unit), (hi, unit)), args.points, "feasibly equilibrate"
        )
        T = (temps.tolist(), "K")
    P = _quantity(args.P, "pressure")
    if args.seed is not None and args.samples is None:
        raise UnitError(args.seed, "seed", "--seed needs --samples N")
    from ..equilibrium import equilibrate  # loaded only when this command runs

    eq = equilibrate(
        args.species,
        T,
        P,
        args.feed,
        library=lib,
        samples=args.samples,
        seed=args.seed,
        gas_model=args.gas_model,
    )
    if args.json:
        print(json.dumps(eq.to_dict(), indent=2, ensure_ascii=False))
    else:
        _print(eq)
    return 0


def register(sub: Any) -> None:
    """Add the ``equilibrate`` subcommand to the ``feasibly`` parser's subparsers."""
    e = sub.add_parser(
        "equilibrate", help="equilibrium composition of a species set (Gibbs minimum)"
    )
    e.add_argument(
        "--species", required=True, help='species that may form, e.g. "CH4(g) H2O(g) CO(g) C(s)"'
    )
    e.add_argument("--feed", required=True, help='feed amounts, e.g. "CH4:1, H2O:2" (mol)')
    e.add_argument("--T", nargs="+", metavar="T", help="temperature(s) and unit, e.g. 900 K")
    e.add_argument("--T-range", nargs="+", dest="T_range", metavar="T", help="LOW HIGH UNIT")
    e.add_argument("--points", type=int, default=12, help="temperatures in --T-range (default 12)")
    e.add_argument(
        "--P", nargs="+", default=["1 bar"], metavar="P", help="total pressure, e.g. 5 bar"
    )
    e.add_argument(
        "--gas-model",
        dest="gas_model",
        default="ideal",
        choices=["ideal", "peng-robinson"],
        help="gases: ideal, or with Peng–Robinson fugacity coefficients (default ideal)",
    )
    e.add_argument("--samples", type=int, metavar="N", help="Monte Carlo trials for the bands")
    e.add_argument("--seed", type=int, metavar="S", help="seed of the random generator")
    e.add_argument("--species-file", action="append", metavar="PATH", help="add your own species")
    e.add_argument(
        "--replace-shipped",
        action="store_true",
        help="let --species-file entries replace shipped entries of the same id",
    )
    e.add_argument("--json", action="store_true", help="print JSON instead of a table")
    e.set_defaults(run=_run)

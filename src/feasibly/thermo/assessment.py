"""Reaction thermodynamics at temperature: Δr quantities, K, crossover and non-standard ΔrG.

All functions take and return SI float arrays (K, Pa, J/mol, J/(mol·K)); :func:`assess` is the
unit-aware entry point that reads user quantities through :mod:`feasibly.units`.
"""

from __future__ import annotations

import itertools
from collections.abc import Mapping
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from .. import __about__
from .._tables import TableExport
from ..conditions import (
    read_conversion,
    read_feed,
    read_gas_model,
    read_molalities,
    read_partial_pressures,
    read_standard_pressure,
    read_temperatures,
)
from ..errors import FeasiblyError, UnitError
from ..library.catalogue import Library, default_library
from ..library.cp_models import T_REF, R
from ..units import to_pascal
from .missing_phases import missing_stable_phases
from .properties import (
    _LN10,
    StandardProperties,
    crossover_temperatures,
    fugacity_term,
    quotient_at_conversion,
    reaction_quotient,
    standard_properties,
)
from .reaction import Reaction
from .safety import DEFERRAL, Caution, cautions_for

#: Said with every result that involves aqueous species.
AQUEOUS_NOTE = (
    "Aqueous species: 1 mol/kg standard state, H+ convention; Q uses molalities as activities "
    "(ideal dilute solution, activity coefficients 1), which overstates activities at ionic "
    "strengths above about 0.01 mol/kg; water is the solvent at activity 1. Temperature "
    "dependence is a constant Cp(25 degC) over 0-100 degC."
)

__all__ = [
    "NO_UNCERTAINTY",
    "Assessment",
    "assess",
    "conditions_label",
    "read_at_conversion",
]

#: Said wherever a call is shown without a Monte Carlo run behind it.
NO_UNCERTAINTY = (
    "No uncertainty analysis was made: this call uses the nominal data only and says nothing "
    "about how sure it is (run with Monte Carlo trials for that)."
)


def read_at_conversion(at_conversion: Mapping[str, Any]) -> dict[str, Any]:
    """Feed, key, required conversion and total pressure (``P`` with a unit, or ``P_Pa``)."""
    if not isinstance(at_conversion, Mapping) or not {"feed", "key", "required"} <= set(
        at_conversion
    ):
        raise UnitError(
            at_conversion,
            "required conversion",
            "give feed, key, required and the total pressure P together",
        )
    if "P_Pa" in at_conversion:
        P = float(at_conversion["P_Pa"])
    else:
        P = float(np.squeeze(to_pascal(at_conversion.get("P", "1 bar"))))
    return {
        "feed": {k: float(v) for k, v in read_feed(at_conversion["feed"]).items()},
        "key": str(at_conversion["key"]),
        "required": read_conversion(at_conversion["required"]),
        "P_Pa": P,
    }


def conditions_label(
    pressures: Mapping[str, float],
    at_conversion: Mapping[str, Any] | None,
    gas_model: str = "ideal",
) -> str:
    """The user's conditions in words, e.g. ``p(CO2) = 0.15 bar``; empty at standard state.

    >>> conditions_label({"CO2": 15000.0}, None)
    'p(CO2) = 0.15 bar'
    >>> conditions_label({"CO2": 15000.0}, None, "peng-robinson")
    'p(CO2) = 0.15 bar, Peng–Robinson gases'
    """
    if at_conversion:
        feed = ", ".join(f"{k}:{v:g}" for k, v in at_conversion["feed"].items())
        text = (
            f"{at_conversion['required']:.0%} conversion of {at_conversion['key']} "
            f"from feed {feed} at {at_conversion['P_Pa'] / 1e5:g} bar"
        )
    else:
        text = ", ".join(f"p({k}) = {v / 1e5:g} bar" for k, v in pressures.items())
    if text and gas_model == "peng-robinson":
        text += ", Peng–Robinson gases"
    return text


@dataclass
class Assessment(TableExport):
    """Everything a feasibility screen of one reaction reports (standard and actual conditions).

    Its table ``temperatures`` (one row per temperature, the keys of :meth:`to_dict`) is available
    as a DataFrame (:meth:`to_frame`) or CSV (:meth:`to_csv`, :meth:`write_tables`).
    """

    reaction: Reaction
    standard: StandardProperties
    crossover_K: list[float] | None
    crossover_298_estimate_K: float | None
    partial_pressures_Pa: dict[str, float]
    assumed_standard: list[str]
    dG_actual: np.ndarray | None
    log10_Q: float | None
    cautions: list[Caution]
    phase_changes: list[tuple[str, float, str, str]]
    metastable: list[tuple[str, float, str]]
    library_version: str
    library_hash: str
    notes: list[str] = field(default_factory=list)
    at_conversion: dict[str, Any] | None = None
    crossover_at_conditions_K: list[float] | None = None
    T_range_K: tuple[float, float] | None = None
    molalities_mol_per_kg: dict[str, float] = field(default_factory=dict)
    #: The gases in ΔrG at the user's conditions: "ideal" or "peng-robinson".
    gas_model: str = "ideal"
    #: Σ ν_i ln φ_i (Peng–Robinson) at the user's conditions per T: in ln Q when ``gas_model`` is
    #: "peng-robinson"; with ideal gases the estimate of what they leave out (None where it
    #: cannot be estimated, or at standard state).
    fugacity_term: np.ndarray | None = None

    @property
    def feasible_standard(self) -> np.ndarray:
        """True where ΔrG° < 0 (favourable at standard state, thermodynamics only)."""
        return self.standard.dG < 0

    def tables(self) -> dict[str, list[dict[str, Any]]]:
        """The result's tables by name: ``temperatures`` (one row per temperature)."""
        return {"temperatures": self.to_dict()["rows"]}

    @property
    def conditions(self) -> str:
        """The user's conditions in words; empty when the call is at standard state."""
        return conditions_label(self.partial_pressures_Pa, self.at_conversion, self.gas_model)

    @property
    def dG_call(self) -> np.ndarray:
        """The ΔrG the call is made on: at the user's conditions when given, else ΔrG°."""
        return self.dG_actual if self.dG_actual is not None else self.standard.dG

    @property
    def call_symbol(self) -> str:
        """ "ΔrG" at the user's conditions, or "ΔrG°" at standard state."""
        return "ΔrG" if self.dG_actual is not None else "ΔrG°"

    @property
    def favourable(self) -> np.ndarray:
        """True where the call's ΔrG is below zero (thermodynamics only)."""
        return self.dG_call < 0

    @property
    def crossover_call_K(self) -> list[float] | None:
        """Where the call's ΔrG changes sign (at the user's conditions when given)."""
        if self.dG_actual is not None:
            return self.crossover_at_conditions_K
        return self.crossover_K

    def window(self) -> list[tuple[float, float]] | None:
        """Temperature spans of the range where the call's ΔrG < 0, edges at its crossovers.

        None when no range was given (single temperatures have no window).
        """
        if self.T_range_K is None or self.crossover_call_K is None:
            return None
        lo, hi = self.T_range_K
        edges = [lo, *self.crossover_call_K, hi]
        T, neg = self.standard.T, self.favourable
        spans: list[tuple[float, float]] = []
        for a, b in itertools.pairwise(edges):
            inside = (T >= a) & (T <= b)
            mid = 0.5 * (a + b)
            # The sign between two crossovers is that of the grid point nearest the middle.
            sign = neg[inside][np.argmin(np.abs(T[inside] - mid))] if np.any(inside) else None
            if sign is None:
                sign = bool(neg[np.argmin(np.abs(T - mid))])
            if sign:
                if spans and spans[-1][1] == a:
                    spans[-1] = (spans[-1][0], b)
                else:
                    spans.append((a, b))
        return spans

    def to_dict(self) -> dict[str, Any]:
        """Plain data for JSON output (SI units in every key name)."""
        s = self.standard
        rows = []
        for i in range(s.T.size):
            row: dict[str, Any] = {
                "T_K": float(s.T[i]),
                "dH_J_per_mol": float(s.dH[i]),
                "dS_J_per_mol_K": float(s.dS[i]),
                "dG_J_per_mol": float(s.dG[i]),
                "dCp_J_per_mol_K": float(s.dCp[i]),
                "log10_K": float(s.log10_K[i]),
                "K": float(s.K[i]) if np.isfinite(s.K[i]) else None,
                "dS_surroundings_J_per_mol_K": float(s.dS_surroundings[i]),
                "dS_universe_J_per_mol_K": float(s.dS_universe[i]),
                "gas_change_mol": float(s.gas_change[i]),
                "phases": list(s.phases[i]),
            }
            if self.dG_actual is not None:
                dga = float(self.dG_actual[i])
                row["dG_actual_J_per_mol"] = dga if np.isfinite(dga) else None
                if self.gas_model != "ideal" and self.fugacity_term is not None:
                    row["fugacity_term_lnQ"] = float(self.fugacity_term[i])
            row["call"] = "favourable" if self.favourable[i] else "not favourable"
            rows.append(row)
        out: dict[str, Any] = {
            "equation": self.reaction.text,
            "balanced_equation": self.reaction.equation(),
            "standard_pressure_Pa": s.standard_pressure,
            "data_version": self.library_version,
            "data_sha256": self.library_hash,
            "feasibly_version": __about__.__version__,
            "rows": rows,
            "valid_range_K": list(self.reaction.valid_range()),
            "phase_changes": [
                {"term": t, "T_K": temp, "from": a, "to": b} for t, temp, a, b in self.phase_changes
            ],
            "metastable": [
                {"used": u, "T_K": temp, "stable": st} for u, temp, st in self.metastable
            ],
            "cautions": [c.as_dict() for c in self.cautions],
            "notes": list(self.notes),
            "species_as_used": [t.identity() for t in self.reaction.terms],
            "call_basis": {
                "quantity": self.call_symbol,
                "conditions": self.conditions or "standard state",
            },
        }
        window = self.window()
        if window is not None:
            out["window_K"] = [list(w) for w in window]
        if self.crossover_at_conditions_K is not None:
            out["crossover_at_conditions_K"] = list(self.crossover_at_conditions_K)
        if self.at_conversion is not None:
            out["at_conversion"] = dict(self.at_conversion)
        if self.crossover_K is not None:
            out["crossover_K"] = list(self.crossover_K)
            out["crossover_298_estimate_K"] = self.crossover_298_estimate_K
        if self.dG_actual is not None:
            out["partial_pressures_Pa"] = dict(self.partial_pressures_Pa)
            out["at_standard_pressure"] = list(self.assumed_standard)
            out["log10_Q"] = self.log10_Q
            if self.molalities_mol_per_kg:
                out["molalities_mol_per_kg"] = dict(self.molalities_mol_per_kg)
        if self.gas_model != "ideal":
            # only when not ideal, so the results of records made before the option read the same
            out["gas_model"] = self.gas_model
        return out


def assess(
    equation: str | Reaction,
    T: Any = None,
    T_range: Any = None,
    points: int = 12,
    partial_pressures: Mapping[str, Any] | None = None,
    standard_pressure: Any = "1 bar",
    library: Library | None = None,
    balance: bool = False,
    at_conversion: Mapping[str, Any] | None = None,
    molalities: Mapping[str, Any] | None = None,
    gas_model: str = "ideal",
) -> Assessment:
    """Screen one reaction: standard Δr quantities and K at ``T`` or over ``T_range``.

    ``T`` is a temperature or array of temperatures with units (``"800 degC"``,
    ``feasibly.Q_([700, 900], "K")``); ``T_range`` is ``(T_lo, T_hi)`` with units, evaluated at
    ``points`` evenly spaced temperatures and searched for crossover temperatures.
    ``partial_pressures`` maps species (as written in the equation) to pressures with units; the
    other gases are at the standard pressure and listed as such.
    ``at_conversion`` (``feed``, ``key``, ``required`` conversion, total pressure ``P``) puts the
    call on ΔrG at the composition that conversion gives: negative exactly where the equilibrium
    conversion exceeds the requirement. The call, its crossover and window are then on ΔrG at
    the user's conditions; the standard values stay beside them.
    ``molalities`` maps aqueous species to molalities with units (``{"Ca+2": "0.01 mol/kg"}``;
    ideal dilute solution, γ = 1); other aqueous species are at 1 mol/kg and listed likewise.
    ``gas_model="peng-robinson"`` puts fugacities f_i = φ_i y_i P in Q (Peng–Robinson, k_ij = 0,
    :func:`~feasibly.thermo.properties.fugacity_term`): at partial pressures every gas of the
    equation needs one. With ideal gases ``fugacity_term`` holds the estimate of what that
    leaves out (:func:`feasibly.uncertainty.gas_model_warning` compares it with the data's
    uncertainty). At standard state the gas model does not enter.

    >>> a = assess("CaCO3 -> CaO + CO2", T="900 degC")
    >>> a.reaction.equation()
    'CaCO3 -> CaO + CO2'
    >>> bool(a.standard.dG[0] < 0)
    True
    """
    library = library or default_library()
    rxn = equation if isinstance(equation, Reaction) else Reaction.parse(equation, library, balance)
    p_std = read_standard_pressure(standard_pressure)
    temps, _ = read_temperatures(T, T_range, points, "assess")
    crossover = estimate = None
    std = standard_properties(rxn, temps, p_std)
    notes: list[str] = []
    if T_range is not None:
        crossover = crossover_temperatures(rxn, float(temps[0]), float(temps[-1]), p_std)
        try:
            at_ref = standard_properties(rxn, np.array([T_REF]), p_std)
            if at_ref.dS[0] != 0:
                t_est = float(at_ref.dH[0] / at_ref.dS[0])
                estimate = t_est if t_est > 0 else None
        except FeasiblyError:
            notes.append(
                "The 298.15 K estimate ΔrH°/ΔrS° is not shown: 298.15 K is outside the "
                "data range of at least one species."
            )
    pressures = read_partial_pressures(partial_pressures)
    molal = read_molalities(molalities, "assess")
    model = read_gas_model(gas_model, "assess")
    dG_actual = log10_Q = None
    assumed: list[str] = []
    conv_in: dict[str, Any] | None = None
    if at_conversion is not None and (pressures or molal):
        raise UnitError(
            None,
            "conditions",
            "give either partial pressures and molalities or a feed with a required conversion, "
            "not both",
        )
    ln_q = None
    if pressures or molal:
        lnQ, assumed = reaction_quotient(rxn, pressures, p_std, temps, molal)

        def ln_q(t: np.ndarray) -> np.ndarray:
            return reaction_quotient(rxn, pressures, p_std, t, molal)[0]

    elif at_conversion is not None:
        conv_in = read_at_conversion(at_conversion)

        def ln_q(t: np.ndarray) -> np.ndarray:
            assert conv_in is not None
            return quotient_at_conversion(
                rxn,
                conv_in["feed"],
                conv_in["key"],
                conv_in["required"],
                conv_in["P_Pa"],
                p_std,
                t,
            )

        lnQ = ln_q(temps)
    cross_actual = None
    phi_term = None
    if ln_q is not None and any(sp.phase == "g" for sp in rxn.species_used()):
        ideal_q = ln_q

        def phi_of(t: np.ndarray) -> np.ndarray:
            return fugacity_term(rxn, t, pressures, conv_in, "assess")

        if model == "peng-robinson":
            phi_term = phi_of(temps)
            lnQ = lnQ + phi_term

            def ln_q(t: np.ndarray) -> np.ndarray:
                return ideal_q(t) + phi_of(t)

            notes.append(gas_model_note(phi_term, temps))
        else:
            try:
                phi_term = phi_of(temps)
            except FeasiblyError:
                phi_term = None  # no estimate: a gas without constants, or an open mixture
    if ln_q is not None:
        with np.errstate(invalid="ignore"):
            dG_actual = std.dG + R * temps * lnQ
        log10_Q = float(lnQ[0] / _LN10)
        if T_range is not None:
            cross_actual = crossover_temperatures(
                rxn, float(temps[0]), float(temps[-1]), p_std, ln_q
            )
    if molal or any(sp.phase == "aq" for sp in rxn.species_used()):
        notes.append(AQUEOUS_NOTE)
    lo_T, hi_T = float(temps.min()), float(temps.max())
    changes = rxn.phase_changes(lo_T, hi_T) if hi_T > lo_T else []
    meta = rxn.metastable(temps)
    notes.extend(missing_stable_phases(rxn, temps))
    cautions = cautions_for(rxn, temps, std.dH, library, pressures)
    if cautions:
        notes.append(DEFERRAL)
    return Assessment(
        rxn,
        std,
        crossover,
        estimate,
        pressures,
        assumed,
        dG_actual,
        log10_Q,
        cautions,
        changes,
        meta,
        library.version,
        library.content_hash,
        notes,
        conv_in,
        cross_actual,
        (float(temps[0]), float(temps[-1])) if T_range is not None else None,
        molal,
        model,
        phi_term,
    )


def gas_model_note(term: np.ndarray, T: np.ndarray) -> str:
    """What the Peng–Robinson correction did to ΔrG at the user's conditions, in words."""
    i = int(np.argmax(np.abs(term)))
    shift = R * T[i] * term[i]
    return (
        "Gas model: Peng–Robinson fugacity coefficients (k_ij = 0; critical constants from the "
        f"chemicals package). At {T[i]:.6g} K they move ln Q by {term[i]:+.3g} and ΔrG by "
        f"{shift / 1000:+.3g} kJ/mol against ideal gases (the largest change over the "
        "temperatures assessed)."
    )

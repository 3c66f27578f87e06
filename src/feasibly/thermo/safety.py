"""Plain-language cautions for results that could mislead someone into an unsafe step.

Thermodynamic feasibility says nothing about rate, hazard or scale-up. These cautions name the
obvious warning signs a screening result carries (a large heat release; toxic, flammable,
oxidising, explosive or self-reactive, or corrosive species; gas evolution; the energy stored in
gas under pressure) and defer to process-safety review; they are not a hazard assessment and their
absence does not mean a step is safe. Carbon deposition is found by the equilibrium wing
(:func:`feasibly.equilibrium.composition` results), which builds its caution with :class:`Caution`.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass

import numpy as np

from ..errors import OutsideDataRange
from ..library.catalogue import Library
from ..library.cp_models import R
from .reaction import Reaction

__all__ = [
    "ATMOSPHERIC_PA",
    "DEFERRAL",
    "EXOTHERM_J_PER_G",
    "PRESSURE_CAUTION_PA",
    "Caution",
    "cautions_for",
    "exotherm_caution",
    "exotherm_temperature",
    "pressure_caution",
    "stoichiometric_feed",
]

#: Specific heat release above which a reaction is called strongly exothermic, J per gram of
#: reactants. From memory: Stoessel (Thermal Safety of Chemical Processes, Wiley 2008) rates an
#: adiabatic temperature rise above 200 K as high severity; at a typical reaction-mass heat capacity
#: of about 2 J/(g·K) that is about 400 J/g.
EXOTHERM_J_PER_G = 400.0

#: Pressure (absolute, Pa) above which the gas is called pressurised: 0.5 bar gauge, the lower
#: limit of the EU Pressure Equipment Directive 2014/68/EU (from memory), over 1 atm.
PRESSURE_CAUTION_PA = 0.5e5 + 101_325.0
#: Atmospheric pressure (Pa) that a released gas expands to: the standard atmosphere.
ATMOSPHERIC_PA = 101_325.0

DEFERRAL = (
    "Thermodynamic feasibility says nothing about reaction rate, hazards or scale-up. Before any "
    "experiment or plant change, refer this step to a process-safety review and follow local "
    "codes and licensed professional practice."
)


@dataclass(frozen=True)
class Caution:
    """One caution: a short kind code, the plain-words message and what triggered it."""

    kind: str
    message: str
    basis: str

    def as_dict(self) -> dict[str, str]:
        return {"kind": self.kind, "message": self.message, "basis": self.basis}


def pressure_caution(pressures_Pa: Mapping[str, float], T_K: float) -> Caution | None:
    """The energy stored in the gas when the gases given add up to more than
    :data:`PRESSURE_CAUTION_PA`, with its numbers at ``T_K``; None below that.

    Per mole of ideal gas at pressure p and temperature T: V = RT/p and p·V = RT; expanding it
    isothermally to atmospheric pressure gives at most W = RT·ln(p/p_atm) (the defining relations
    of the ideal gas and of reversible isothermal work, IUPAC Green Book §2.11).
    """
    p = float(sum(pressures_Pa.values()))
    if p <= PRESSURE_CAUTION_PA:
        return None
    rt = R * T_K
    volume_L = 1000 * rt / p
    work = rt * np.log(p / ATMOSPHERIC_PA)
    gases = ", ".join(f"{g} {v / 1e5:.4g} bar" for g, v in sorted(pressures_Pa.items()))
    return Caution(
        "stored energy in pressurised gas",
        f"Gas under pressure stores energy: the gases given add up to {p / 1e5:.4g} bar "
        f"({gases}). At {T_K:.0f} K each mole of gas fills {volume_L:.3g} L and holds "
        f"p·V = RT = {rt / 1000:.2f} kJ; expanding to atmospheric pressure it can release up to "
        f"RT·ln(p/p_atm) = {work / 1000:.2f} kJ per mole of gas, suddenly if the vessel fails. "
        "Design, relief and containment are for a pressure-equipment assessment.",
        f"p = {p / 1e5:.4g} bar > {PRESSURE_CAUTION_PA / 1e5:.4g} bar (0.5 bar gauge); ideal gas "
        f"at {T_K:.0f} K: p·V = RT = {rt:.0f} J/mol, RT·ln(p/p_atm) = {work:.0f} J/mol — "
        "EU Pressure Equipment Directive 2014/68/EU scope (from memory); IUPAC Green Book",
    )


def cautions_for(
    rxn: Reaction,
    T: np.ndarray,
    dH: np.ndarray,
    library: Library,
    pressures_Pa: Mapping[str, float] | None = None,
) -> list[Caution]:
    """Cautions for a reaction evaluated at temperatures ``T`` with ΔrH° values ``dH`` (J/mol),
    and with the gases' partial pressures ``pressures_Pa`` when given."""
    T = np.atleast_1d(np.asarray(T, dtype=float))
    dH = np.atleast_1d(np.asarray(dH, dtype=float))
    out: list[Caution] = []
    exotherm = exotherm_caution(rxn, T, dH)
    if exotherm is not None:
        out.append(exotherm)
    dn = rxn.gas_change(T)
    if np.any(dn > 0):
        k = int(np.argmax(dn))
        out.append(
            Caution(
                "gas evolution",
                f"Gas is produced ({dn[k]:+g} mol of gas per mole of reaction at {T[k]:.0f} K). "
                "In a closed or poorly vented vessel the pressure will rise.",
                f"Δn(gas) = {dn[k]:+g}",
            )
        )
    if pressures_Pa:
        stored = pressure_caution(pressures_Pa, float(np.max(T)))
        if stored is not None:
            out.append(stored)
    seen: set[tuple[str, str]] = set()
    for sp in rxn.species_used():
        for flag in library.hazards(sp):
            key = (sp.formula, flag["flag"])
            if key in seen:
                continue
            seen.add(key)
            out.append(
                Caution(
                    flag["flag"],
                    f"{sp.formula} ({flag.get('name') or sp.formula}) is {flag['flag']}: "
                    f"{flag['basis']}.",
                    f"{flag['basis']} — {flag['source']}",
                )
            )
    return out


#: Above this the products of combustion-like steps dissociate appreciably, so a complete-
#: conversion temperature overstates what is reached (common practice, no source).
_DISSOCIATION_K = 2500.0


def stoichiometric_feed(rxn: Reaction) -> dict[str, float]:
    """The undiluted stoichiometric feed of one mole of reaction: reactant label → −ν (mol)."""
    return {t.label(): -t.nu for t in rxn.terms if t.nu < 0}


def exotherm_temperature(rxn: Reaction, T: np.ndarray, dH: np.ndarray) -> float | None:
    """The temperature of the largest heat release when it reaches :data:`EXOTHERM_J_PER_G`
    per gram of reactants (the strongly exothermic caution applies there), else None."""
    T = np.atleast_1d(np.asarray(T, dtype=float))
    dH = np.atleast_1d(np.asarray(dH, dtype=float))
    reactant_mass = sum(-t.nu * t.candidates[0].molar_mass for t in rxn.terms if t.nu < 0)
    worst = float(np.min(dH))
    if worst < 0 and reactant_mass > 0 and -worst / reactant_mass >= EXOTHERM_J_PER_G:
        return float(T[int(np.argmin(dH))])
    return None


def exotherm_caution(
    rxn: Reaction,
    T: np.ndarray,
    dH: np.ndarray,
    adiabatic: tuple[float, tuple[float, float] | None, str] | None = None,
) -> Caution | None:
    """The strongly exothermic caution, or None when the heat release stays below
    :data:`EXOTHERM_J_PER_G` per gram of reactants.

    It quotes the adiabatic temperature of the undiluted stoichiometric feed fully converted.
    ``adiabatic`` is that temperature (K), its 95 % interval from the draws of the data (or
    None) and a sentence on the interval, when the caller has the draws
    (:func:`feasibly.heat.cautions_with_draws`); without it the nominal value is computed here.
    """
    T = np.atleast_1d(np.asarray(T, dtype=float))
    dH = np.atleast_1d(np.asarray(dH, dtype=float))
    t_at = exotherm_temperature(rxn, T, dH)
    if t_at is None:
        return None
    reactant_mass = sum(-t.nu * t.candidates[0].molar_mass for t in rxn.terms if t.nu < 0)
    worst = float(np.min(dH))
    per_gram = -worst / reactant_mass
    return Caution(
        "strongly exothermic",
        f"Strongly exothermic: about {per_gram:,.0f} J released per gram of reactants "
        f"(ΔrH° = {worst / 1000:,.1f} kJ/mol at {t_at:.0f} K). "
        + _adiabatic_phrase(rxn, t_at, adiabatic)
        + " Runaway or decomposition can follow; refer the step to process-safety review.",
        f"-ΔrH°/m(reactants) = {per_gram:.0f} J/g ≥ {EXOTHERM_J_PER_G:.0f} J/g",
    )


#: Above this the products of combustion-like steps dissociate appreciably, so a complete-
#: conversion temperature overstates what is reached (common practice, no source).
_DISSOCIATION_K = 2500.0


def _adiabatic_phrase(
    rxn: Reaction, T: float, given: tuple[float, tuple[float, float] | None, str] | None = None
) -> str:
    """The adiabatic temperature of the undiluted stoichiometric mixture fed at ``T`` and fully
    converted, in words (the number a runaway approaches with no cooling and no dilution), with
    its 95 % interval when ``given`` carries one."""
    from .energy import adiabatic_temperature, reaction_streams, stream_enthalpy

    lead = f"Fed undiluted at {T:.0f} K and fully converted with no heat removed, the products"
    if given is None:
        try:
            inlet, outlet = reaction_streams(rxn, stoichiometric_feed(rxn), 1.0)
            T_ad = adiabatic_temperature(outlet, float(stream_enthalpy(inlet, T)[0]))
        except OutsideDataRange as exc:
            return f"{lead} would pass {exc.T_max:.0f} K, the upper end of their data."
        band, about = None, ""
    else:
        T_ad, band, about = given
    if band is not None:
        interval = f"95 % interval {band[0]:.0f}–{band[1]:.0f} K from the data's uncertainty"
    else:
        interval = ""
    extra = (" " + about) if about else ""
    if T_ad > _DISSOCIATION_K:
        return (
            f"{lead} would pass {_DISSOCIATION_K:.0f} K (complete conversion gives {T_ad:.0f} K"
            + (f", {interval}" if interval else "")
            + ", an overestimate: that hot, products dissociate or boil and the reaction stops "
            "short)." + extra
        )
    if interval:
        return (
            f"{lead} would reach about {T_ad:.0f} K ({interval}; a rise of {T_ad - T:.0f} K; "
            "dilution, partial conversion and heat loss lower it)." + extra
        )
    return (
        f"{lead} would reach about {T_ad:.0f} K (a rise of {T_ad - T:.0f} K; dilution, partial "
        "conversion and heat loss lower it; feasibly.heat.adiabatic_temperature gives it with "
        "its interval)." + extra
    )

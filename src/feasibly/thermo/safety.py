"""Plain-language cautions for results that could mislead someone into an unsafe step.

Thermodynamic feasibility says nothing about rate, hazard or scale-up. These cautions name the
obvious warning signs a screening result carries (a large heat release, toxic, flammable or
oxidising species, gas evolution) and defer to process-safety review; they are not a hazard
assessment and their absence does not mean a step is safe.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..errors import OutsideDataRange
from ..library.catalogue import Library
from .reaction import Reaction

__all__ = ["DEFERRAL", "EXOTHERM_J_PER_G", "Caution", "cautions_for"]

#: Specific heat release above which a reaction is called strongly exothermic, J per gram of
#: reactants. From memory: Stoessel (Thermal Safety of Chemical Processes, Wiley 2008) rates an
#: adiabatic temperature rise above 200 K as high severity; at a typical reaction-mass heat capacity
#: of about 2 J/(g·K) that is about 400 J/g.
EXOTHERM_J_PER_G = 400.0

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


def cautions_for(rxn: Reaction, T: np.ndarray, dH: np.ndarray, library: Library) -> list[Caution]:
    """Cautions for a reaction evaluated at temperatures ``T`` with ΔrH° values ``dH`` (J/mol)."""
    T = np.atleast_1d(np.asarray(T, dtype=float))
    dH = np.atleast_1d(np.asarray(dH, dtype=float))
    out: list[Caution] = []
    reactant_mass = sum(-t.nu * t.candidates[0].molar_mass for t in rxn.terms if t.nu < 0)
    worst = float(np.min(dH))
    if worst < 0 and reactant_mass > 0:
        per_gram = -worst / reactant_mass
        if per_gram >= EXOTHERM_J_PER_G:
            k = int(np.argmin(dH))
            out.append(
                Caution(
                    "strongly exothermic",
                    f"Strongly exothermic: about {per_gram:,.0f} J released per gram of reactants "
                    f"(ΔrH° = {worst / 1000:,.1f} kJ/mol at {T[k]:.0f} K). "
                    + _adiabatic_phrase(rxn, float(T[k]))
                    + " Runaway or decomposition can follow; refer the step to process-safety "
                    "review.",
                    f"-ΔrH°/m(reactants) = {per_gram:.0f} J/g ≥ {EXOTHERM_J_PER_G:.0f} J/g",
                )
            )
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


def _adiabatic_phrase(rxn: Reaction, T: float) -> str:
    """The adiabatic temperature of the undiluted stoichiometric mixture fed at ``T`` and fully
    converted, in words (the number a runaway approaches with no cooling and no dilution)."""
    from .energy import adiabatic_temperature, reaction_streams, stream_enthalpy

    feed = {t.label(): -t.nu for t in rxn.terms if t.nu < 0}
    try:
        inlet, outlet = reaction_streams(rxn, feed, 1.0)
        T_ad = adiabatic_temperature(outlet, float(stream_enthalpy(inlet, T)[0]))
    except OutsideDataRange as exc:
        return (
            f"Fed undiluted at {T:.0f} K and fully converted with no heat removed, the products "
            f"would pass {exc.T_max:.0f} K, the upper end of their data."
        )
    if T_ad > _DISSOCIATION_K:
        return (
            f"Fed undiluted at {T:.0f} K and fully converted with no heat removed, the products "
            f"would pass {_DISSOCIATION_K:.0f} K (complete conversion gives {T_ad:.0f} K, an "
            "overestimate: that hot, products dissociate or boil and the reaction stops short)."
        )
    return (
        f"Fed undiluted at {T:.0f} K and fully converted with no heat removed, the products "
        f"would reach about {T_ad:.0f} K (a rise of {T_ad - T:.0f} K; dilution, partial "
        "conversion and heat loss lower it; feasibly.heat.adiabatic_temperature gives it with "
        "its interval)."
    )

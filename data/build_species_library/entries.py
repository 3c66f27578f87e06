"""Library entries: ids, the common fields, and the value blocks a polynomial gives."""

from __future__ import annotations

from collections.abc import Iterable, Mapping, Sequence
from typing import Any

from ._kernel import T_REF
from .formulas import molar_mass
from .policies import cp_u_rel, cp_uncertainty, policy_block
from .polynomials import Coeffs, poly_298

#: One species-phase entry as written to species-library.json. Keys starting with "_" are the
#: build's own bookkeeping and are removed before writing.
Entry = dict[str, Any]

RANGE_300_NOTE = (
    "source range starts at 300 K; lower end moved to 298.15 K (1.85 K extrapolation of the "
    "first interval, coefficients unchanged): these fits were made to tables that start at "
    "298.15 K, and the 298.15 K state must be usable. Common practice, no source."
)
HYPOTHETICAL_NOTE = (
    "298.15 K lies outside T_range_K: dHf_298 and S_298 are the polynomial's "
    "extrapolated bookkeeping constants, not a state that exists"
)


def make_id(formula: str, phase: str, form: str | None) -> str:
    """``FORMULA(PHASE)`` or ``FORMULA(PHASE,FORM)``."""
    return f"{formula}({phase})" if not form else f"{formula}({phase},{form})"


def base_entry(
    formula: str,
    elements: Mapping[str, Any],
    charge: int,
    phase: str,
    form: str | None,
    names: Iterable[str] | None,
    Trange: Sequence[float],
    els: Mapping[str, Mapping[str, Any]],
) -> Entry:
    """The fields every entry has, before its values (key order is the written order)."""
    return {
        "id": make_id(formula, phase, form),
        "formula": formula,
        "elements": elements,
        "charge": charge,
        "phase": phase,
        "form": form,
        "names": list(names or []),
        "cas": None,
        "molar_mass_g_per_mol": molar_mass(elements, els),
        "T_range_K": [float(Trange[0]), float(Trange[1])],
        "reference_state_of": None,
        "hypothetical_298": not (Trange[0] <= T_REF <= Trange[1]),
        "notes": [],
    }


def poly_entry(
    e: Entry,
    source: str,
    entry_label: str,
    breaks: Sequence[float],
    coeffs: Sequence[Coeffs],
    src_range: Sequence[float] | None = None,
) -> Entry:
    """Add ΔfH°, S° (the polynomial's own 298.15 K values, policy uncertainties) and the nasa7 Cp
    or nasa9 block (by the coefficient count); ``src_range`` is the source's own range (a note
    says when it started at 300 K)."""
    h298, s298 = poly_298(breaks, coeffs)
    gas = e["phase"] == "g"
    hyp = e["hypothetical_298"]
    if gas:
        hp = "nasa-ion-dHf" if e["charge"] else "nasa-gas-dHf"
        sp = "gas-S"
    else:
        hp = "hypothetical-dHf" if hyp else "condensed-dHf"
        sp = "hypothetical-S" if hyp else "condensed-S"
    e["dHf_298"] = policy_block(h298, hp, source, entry_label)
    # condensed-S is value-dependent (u_base + u_fraction * |S|, see policies.toml).
    e["S_298"] = policy_block(s298, sp, source, entry_label, of=s298)
    cpol = "cp-gas-poly" if gas else "cp-condensed-poly"
    e["cp"] = {
        "model": "nasa9" if len(coeffs[0]) == 9 else "nasa7",
        "T_breaks_K": [float(t) for t in breaks],
        "coefficients": [[float(x) for x in c] for c in coeffs],
        "u_rel": cp_u_rel(cpol),
        "source": source,
        "entry": entry_label,
        "uncertainty": cp_uncertainty(cpol),
    }
    if (
        breaks[0] == T_REF
        and e["T_range_K"][0] == T_REF
        and src_range is not None
        and src_range[0] == 300.0
    ):
        e["notes"].append(RANGE_300_NOTE)
    if hyp:
        e["notes"].append(HYPOTHETICAL_NOTE)
    return e


def public(entries: Iterable[Entry]) -> list[Entry]:
    """Copies of the entries without the build's bookkeeping keys (those starting with "_")."""
    return [{k: v for k, v in e.items() if not k.startswith("_")} for e in entries]

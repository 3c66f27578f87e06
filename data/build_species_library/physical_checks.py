"""Physical checks of the entries, and the range cuts the build makes before them.

* S°(298.15) > 0 for a state that exists at 298.15 K; for a gas at least the translational
  (Sackur–Tetrode) entropy of its mass at 298.15 K and 1 bar;
* Cp > 0 over the range; for a gas at least 5/2 R (translation alone, ideal gas) — a polynomial
  interval where it falls below is cut off (:func:`cut_ranges`);
* continuity of G at every transition between two condensed phases of one formula;
* a solid's range ends at or below its melting or decomposition point as chemicals tabulates it
  (``Tm``) unless another condensed phase of the formula takes over there; a liquid's range ends
  at or below its critical temperature (``chemicals.critical.Tc``) where tabulated — longer
  ranges are cut to these points (:func:`cut_ranges`) and the entry says so in its notes;
* every element that has a tabulated standard state (chemicals' periodic table) and appears in a
  neutral entry has a reference state in the library.
"""

from __future__ import annotations

import math
from typing import Any

from chemicals.critical import Tc
from chemicals.elements import periodic_table
from chemicals.phase_change import Tm

from ._kernel import T_REF
from .entries import Entry
from .polynomials import R, cp_R, h_on_dhf_scale, interval, s_R

#: Tolerance of G continuity at a transition, J/mol: the polynomials are fitted to tables that
#: are continuous in G; 1 kJ/mol allows for fitting error at the interval ends (common practice,
#: no source).
G_CONTINUITY_J_PER_MOL = 1000.0
#: Relative fitting ripple allowed below the 5/2 R floor of a gas's Cp (common practice, no
#: source).
CP_FIT_TOL = 0.02
#: A solid's range may run this far past the tabulated melting point (rounding of tabulated
#: melting points and of range ends, common practice, no source).
TM_SLACK_K = 5.0
#: Planck, Boltzmann, Avogadro (exact SI values) and the atomic mass constant (CODATA 2018):
#: Sackur–Tetrode entropy at 298.15 K and 1 bar.
_H_PLANCK = 6.62607015e-34
_K_B = 1.380649e-23
_N_A = 6.02214076e23
_P_STD = 1.0e5


def sackur_tetrode(molar_mass_g: float, T: float = T_REF) -> float:
    """Translational entropy of an ideal gas of the given molar mass at T and 1 bar, J/(mol K)."""
    m = molar_mass_g * 1e-3 / _N_A
    lam = _H_PLANCK / math.sqrt(2 * math.pi * m * _K_B * T)
    return _K_B * _N_A * (math.log(_K_B * T / (_P_STD * lam**3)) + 2.5)


def _safe(f: Any, cas: str) -> float | None:
    try:
        v = f(cas)
    except Exception:  # chemicals raises for an unknown CAS: no value then
        return None
    return float(v) if v is not None and math.isfinite(float(v)) else None


def cut_ranges(entries: list[Entry]) -> list[str]:
    """Cut solid ranges at the tabulated melting point and liquid ranges at the critical
    temperature (see the module docstring); returns what was cut."""
    done = []
    by_formula: dict[str, list[Entry]] = {}
    for e in entries:
        if e["phase"] != "g":
            by_formula.setdefault(e["formula"], []).append(e)
    for e in entries:
        cut = _cp_floor_cut(e)
        if cut is not None:
            old_hi = e["T_range_K"][1]
            _truncate(e, cut)
            e["notes"].append(
                f"T_range_K cut from {old_hi:g} K to {cut:g} K: in the next interval the "
                "polynomial's Cp falls below the physical floor (5/2 R for a gas, 0 otherwise)"
            )
            done.append(f"{e['id']}: {old_hi:g} -> {cut:g} K (Cp below the physical floor)")
        if e["phase"] == "g" or not e["cas"]:
            continue
        lo, hi = e["T_range_K"]
        follows = any(
            o is not e and abs(o["T_range_K"][0] - hi) < 1e-6 for o in by_formula[e["formula"]]
        )
        limit, what = None, ""
        if e["phase"] == "cr" and not follows:
            tm = _safe(Tm, e["cas"])
            if tm is not None and hi > tm + TM_SLACK_K and tm > lo:
                limit, what = tm, "melting/decomposition point (chemicals.phase_change.Tm)"
        elif e["phase"] == "l":
            tc = _safe(Tc, e["cas"])
            if tc is not None and hi > tc and tc > lo:
                limit, what = tc, "critical temperature (chemicals.critical.Tc)"
        if limit is None:
            continue
        limit = round(limit, 3)
        _truncate(e, limit)
        e["notes"].append(
            f"T_range_K cut from {hi:g} K to {limit:g} K, the {what}: the source's range ran "
            "past it"
        )
        done.append(f"{e['id']}: {hi:g} -> {limit:g} K ({what})")
    return done


def _truncate(e: Entry, limit: float) -> None:
    """Shorten an entry's range (and its polynomial's breaks) to end at ``limit``."""
    lo = e["T_range_K"][0]
    e["T_range_K"] = [lo, limit]
    e["hypothetical_298"] = not (lo <= T_REF <= limit)
    cp = e["cp"]
    if cp["model"] in ("nasa7", "nasa9"):
        br = cp["T_breaks_K"]
        keep = [i for i in range(len(br) - 1) if br[i] < limit]
        cp["T_breaks_K"] = [br[i] for i in keep] + [limit]
        cp["coefficients"] = [cp["coefficients"][i] for i in keep]


def _cp_values(e: Entry, grid: list[float]) -> list[float]:
    cp = e["cp"]
    if cp["model"] in ("nasa7", "nasa9"):
        br, co = cp["T_breaks_K"], cp["coefficients"]
        return [R * cp_R(co[interval(br, t)], t) for t in grid]
    return [cp["cp_J_per_mol_K"]] * len(grid)


def _cp_floor(e: Entry) -> float:
    # 5/2 R: translation alone (ideal gas); 2 % below it allowed for fitting ripple of the
    # polynomials (common practice, no source).
    return 2.5 * R * (1 - CP_FIT_TOL) if e["phase"] == "g" else 0.0


def _grid(e: Entry) -> list[float]:
    lo, hi = e["T_range_K"]
    return [lo + (hi - lo) * i / 400 for i in range(401)]


def _cp_floor_cut(e: Entry) -> float | None:
    """The interval break to cut at when Cp falls below the floor in a later interval."""
    cp = e["cp"]
    if cp["model"] not in ("nasa7", "nasa9"):
        return None
    grid = _grid(e)
    low = [t for t, c in zip(grid, _cp_values(e, grid), strict=True) if c <= _cp_floor(e)]
    if not low:
        return None
    br = cp["T_breaks_K"]
    i = interval(br, low[0])
    return float(br[i]) if i > 0 else None


def physical_failures(entries: list[Entry]) -> list[str]:
    """Every physical-check failure (see the module docstring)."""
    bad = []
    for e in entries:
        s = e["S_298"]["value"]
        if not e["hypothetical_298"]:
            if s <= 0:
                bad.append(f"{e['id']}: S° = {s} ≤ 0")
            if e["phase"] == "g" and s < sackur_tetrode(e["molar_mass_g_per_mol"]) - 0.5:
                bad.append(
                    f"{e['id']}: S° = {s:.2f} below the translational entropy "
                    f"{sackur_tetrode(e['molar_mass_g_per_mol']):.2f} J/(mol K)"
                )
        worst = min(_cp_values(e, _grid(e)))
        if worst <= _cp_floor(e):
            bad.append(f"{e['id']}: Cp falls to {worst:.3f} J/(mol K) in its range")
    bad += _g_continuity(entries)
    bad += _reference_states(entries)
    return bad


def _g_on_scale(e: Entry, T: float) -> float | None:
    cp = e["cp"]
    h = h_on_dhf_scale(e, T)
    if h is None:
        return None
    br, co = cp["T_breaks_K"], cp["coefficients"]
    s = e["S_298"]["value"] + R * (
        s_R(co[interval(br, T)], T) - s_R(co[interval(br, T_REF)], T_REF)
    )
    return h - T * s


def _g_continuity(entries: list[Entry]) -> list[str]:
    bad = []
    by_formula: dict[str, list[Entry]] = {}
    for e in entries:
        if e["phase"] != "g" and not e["charge"]:
            by_formula.setdefault(e["formula"], []).append(e)
    for group in by_formula.values():
        for a in group:
            for b in group:
                t = a["T_range_K"][1]
                if a is b or abs(b["T_range_K"][0] - t) > 1e-6:
                    continue
                ga, gb = _g_on_scale(a, t), _g_on_scale(b, t)
                if ga is None or gb is None:
                    continue
                if abs(ga - gb) > G_CONTINUITY_J_PER_MOL:
                    bad.append(
                        f"{a['id']} -> {b['id']} at {t:g} K: G jumps by {gb - ga:+.0f} J/mol"
                    )
    return bad


def _reference_states(entries: list[Entry]) -> list[str]:
    have = {e["reference_state_of"] for e in entries if e["reference_state_of"]}
    used = {k for e in entries if not e["charge"] for k in e["elements"]}
    bad = []
    for el in sorted(used - have):
        if el in periodic_table and periodic_table[el].phase in ("s", "l", "g"):
            who = sorted(e["id"] for e in entries if el in e["elements"])[:5]
            bad.append(
                f"element {el}: tabulated standard state, but no reference state here "
                f"(used by {', '.join(who)})"
            )
    return bad

"""Fugacity coefficients of a gas mixture: the ideal gas, or the Peng–Robinson equation of state.

At tens of bar and more the gases of a synthesis loop (NH3, CH3OH, H2O, CO2) are far from ideal,
and the equilibrium is set by fugacities f_i = φ_i x_i P, not partial pressures. The Peng–Robinson
equation (D.-Y. Peng, D.B. Robinson, Ind. Eng. Chem. Fundam. 15 (1976) 59; κ(ω) for ω > 0.49 from
D.B. Robinson, D.-Y. Peng, GPA RR-28 (1978)) with van der Waals one-fluid mixing and no binary
interaction parameters (k_ij = 0; common practice where no fitted value is at hand, no source)
gives φ_i from each gas's critical temperature, critical pressure and acentric factor. These come
from ``critical-constants.csv``, extracted from the ``chemicals`` package with the compilation
named per value (``data/build_critical_constants.py``).

Plain SI float arrays, vectorised over states.
"""

from __future__ import annotations

import csv
import io
import math
from collections.abc import Sequence
from dataclasses import dataclass
from functools import cache

import numpy as np

from .._files import data_text
from ..conditions import GAS_MODELS, read_gas_model  # noqa: F401 (re-exported)
from ..errors import InvalidInput
from ..library.cp_models import R
from ..library.species import Species
from .reaction import Reaction

# GAS_MODELS and read_gas_model live in feasibly.conditions (the one reader of a call's
# settings) and are imported here for the callers that took them from this module.
__all__ = [
    "Critical",
    "critical_constants",
    "ln_fugacity_coefficients",
    "reaction_fugacity_term",
]

_SQRT2 = math.sqrt(2.0)


@dataclass(frozen=True)
class Critical:
    """Critical temperature (K), critical pressure (Pa), acentric factor and their sources."""

    Tc: float
    Pc: float
    omega: float
    source: str


@cache
def _table() -> dict[str, Critical]:
    rows = [line for line in data_text("critical-constants.csv").splitlines() if line[:1] != "#"]
    out = {}
    for r in csv.DictReader(io.StringIO("\n".join(rows))):
        src = f"chemicals: Tc {r['Tc_source']}, Pc {r['Pc_source']}, ω {r['omega_source']}"
        out[r["cas"]] = Critical(float(r["Tc_K"]), float(r["Pc_Pa"]), float(r["omega"]), src)
    return out


def critical_constants(species: Sequence[Species], function: str = "") -> list[Critical]:
    """Critical constants of each gas; refuses, by name, a gas that has none in the table."""
    out = []
    for sp in species:
        found = _table().get(sp.cas or "")
        if found is None:
            raise InvalidInput(
                "gas_model",
                function,
                f"'ideal' for a mixture holding {sp.id}: the shipped table has no critical "
                f"constants for it (CAS {sp.cas or 'none'}), so its Peng–Robinson fugacity "
                "coefficient cannot be computed (or leave that gas out of the feed)",
                "peng-robinson",
            )
        out.append(found)
    return out


def ln_fugacity_coefficients(
    T: np.ndarray,
    P: np.ndarray,
    x: np.ndarray,
    crit: Sequence[Critical],
    *,
    gas_only: str | None = None,
) -> np.ndarray:
    """ln φ_i of each gas in a Peng–Robinson mixture: states × gases.

    ``T`` (K) and ``P`` (Pa) have one value per state, ``x`` (states × gases) the mole fractions
    (rows are normalised here). The vapour root (the largest real Z) is taken: above the critical
    temperature of the mixture it is the only one.

    ``gas_only`` (the name of the calling function) refuses, with
    :class:`~feasibly.errors.InvalidInput`, a state whose mixture the equation puts in the liquid:
    one with a liquid-like root of lower Gibbs energy than the vapour root. (A mixture that is
    stable as one phase by that test but would split into a liquid and a vapour near its dew
    point is not detected; that needs a phase-stability analysis this module does not make.)
    """
    T = np.asarray(T, dtype=float)[:, None]
    P = np.asarray(P, dtype=float)
    x = np.asarray(x, dtype=float)
    x = x / x.sum(axis=1, keepdims=True)
    Tc = np.array([c.Tc for c in crit])
    Pc = np.array([c.Pc for c in crit])
    w = np.array([c.omega for c in crit])
    kappa = np.where(
        w <= 0.49,
        0.37464 + 1.54226 * w - 0.26992 * w**2,
        0.379642 + 1.48503 * w - 0.164423 * w**2 + 0.016666 * w**3,
    )
    alpha = (1.0 + kappa * (1.0 - np.sqrt(T / Tc))) ** 2
    a = 0.45723553 * (R * Tc) ** 2 / Pc * alpha  # states × gases
    b = 0.07779607 * R * Tc / Pc
    sa = np.sqrt(a)
    sum_xa = x * sa
    a_mix = np.sum(sum_xa, axis=1) ** 2  # k_ij = 0: a_m = (Σ x_i √a_i)²
    b_mix = x @ b
    RT = R * T[:, 0]
    A = a_mix * P / RT**2
    B = b_mix * P / RT
    Z = _vapour_root(A, B)
    if gas_only is not None:
        # d√a_i/dT of α = (1 + κ(1 − √(T/Tc)))², for the phase identification parameter
        dsa = np.sqrt(0.45723553 * (R * Tc) ** 2 / Pc) * kappa * (-0.5 / np.sqrt(T * Tc))
        da_mix = 2 * np.sqrt(a_mix) * np.sum(x * dsa, axis=1)
        pip = _phase_identification(T[:, 0], Z * RT / P, a_mix, da_mix, b_mix)
        # Kay's pseudo-critical temperature Σ x_i Tc_i (common practice, no source)
        _refuse_condensed(A, B, Z, T[:, 0], P, pip, x @ Tc, gas_only)
    # Σ_j x_j a_ij = √a_i Σ_j x_j √a_j with k_ij = 0
    sum_j = sa * np.sum(sum_xa, axis=1, keepdims=True)
    bb = b[None, :] / b_mix[:, None]
    log_term = np.log((Z + (1 + _SQRT2) * B) / (Z + (1 - _SQRT2) * B))
    return (
        bb * (Z - 1.0)[:, None]
        - np.log(Z - B)[:, None]
        - (A / (2 * _SQRT2 * B))[:, None] * (2 * sum_j / a_mix[:, None] - bb) * log_term[:, None]
    )


def _vapour_root(A: np.ndarray, B: np.ndarray) -> np.ndarray:
    """Largest real root of Z³ − (1 − B) Z² + (A − 3B² − 2B) Z − (AB − B² − B³) = 0, Z > B."""
    c2 = -(1.0 - B)
    c1 = A - 3 * B**2 - 2 * B
    c0 = -(A * B - B**2 - B**3)
    # Newton from Z = max(1, B) + 1 (above every root: the cubic rises beyond its largest root
    # and is convex there), descending monotonically onto the largest root
    Z = np.maximum(1.0, B) + 1.0
    for _ in range(200):
        f = ((Z + c2) * Z + c1) * Z + c0
        df = (3 * Z + 2 * c2) * Z + c1
        step = f / df
        Z = Z - step
        # 1e-15 relative: double precision; 200 steps are far more than the ~10 needed
        if np.all(np.abs(step) <= 1e-15 * np.abs(Z)):
            break
    # where the largest root lies left of a local minimum (a dense, liquid-like state) Newton may
    # stall on the way; those states take the largest real root of the companion matrix instead
    bad = ~((Z > B) & (((3 * Z + 2 * c2) * Z + c1) > 0) & np.isfinite(Z))
    for i in np.nonzero(bad)[0]:
        roots = np.roots([1.0, c2[i], c1[i], c0[i]])
        real = roots[np.abs(roots.imag) <= 1e-12 * np.abs(roots)].real
        real = real[real > B[i]]
        if real.size == 0:
            # the cubic is −2B² < 0 at Z = B and rises without bound, so a root above B exists;
            # only non-finite coefficients (absurd T, P or constants) leave none
            raise InvalidInput(
                "gas_model",
                "",
                "'ideal' here: the Peng–Robinson equation has no root for this state "
                f"(A = {A[i]:.6g}, B = {B[i]:.6g}); check the temperature, pressure and the "
                "critical constants",
                "peng-robinson",
            )
        Z[i] = real.max()
    return Z


def _residual_gibbs(A: np.ndarray, B: np.ndarray, Z: np.ndarray) -> np.ndarray:
    """G_res/RT of a Peng–Robinson root (Σ x_i ln φ_i of the mixture at that root)."""
    with np.errstate(invalid="ignore", divide="ignore"):
        log_term = np.log((Z + (1 + _SQRT2) * B) / (Z + (1 - _SQRT2) * B))
        return Z - 1.0 - np.log(Z - B) - A / (2 * _SQRT2 * B) * log_term


def _phase_identification(
    T: np.ndarray, V: np.ndarray, a: np.ndarray, da_dT: np.ndarray, b: np.ndarray
) -> np.ndarray:
    """Phase identification parameter Π of a Peng–Robinson fluid at molar volume V (m³/mol):
    Π = V [∂²P/∂T∂V / (∂P/∂T)_V − (∂²P/∂V²)_T / (∂P/∂V)_T]; above 1 the fluid is a liquid
    (from memory: G. Venkatarathnam, L.R. Oellrich, Fluid Phase Equilib. 301 (2011) 225)."""
    D = V * V + 2 * b * V - b * b
    dD = 2 * V + 2 * b
    vb = V - b
    dP_dV = -R * T / vb**2 + a * dD / D**2
    d2P_dV2 = 2 * R * T / vb**3 + a * (2 / D**2 - 2 * dD**2 / D**3)
    dP_dT = R / vb - da_dT / D
    d2P_dTdV = -R / vb**2 + da_dT * dD / D**2
    return V * (d2P_dTdV / dP_dT - d2P_dV2 / dP_dV)


def _refuse_condensed(
    A: np.ndarray,
    B: np.ndarray,
    Zv: np.ndarray,
    T: np.ndarray,
    P: np.ndarray,
    pip: np.ndarray,
    T_pc: np.ndarray,
    function: str,
) -> None:
    """Refuse states the equation puts in the liquid: a liquid root of lower Gibbs energy than
    the vapour root, or a single root that the phase identification parameter calls liquid
    below the mixture's pseudo-critical temperature."""
    c2 = -(1.0 - B)
    c1 = A - 3 * B**2 - 2 * B
    # the cubic divided by (Z − Zv): Z² + p Z + q
    p = c2 + Zv
    q = c1 + Zv * p
    disc = p * p - 4 * q
    ZL = 0.5 * (-p - np.sqrt(np.clip(disc, 0.0, None)))
    # a second root distinct from the vapour root (relative 1e-9: a double root at the critical
    # point is one phase), above the co-volume, and of lower G: the mixture would be a liquid
    two = (disc > 0) & (ZL > B) & (ZL < Zv * (1 - 1e-9))
    liquid = two & (_residual_gibbs(A, B, ZL) < _residual_gibbs(A, B, Zv))
    # One real root: a liquid where its phase identification parameter exceeds 1 below Kay's
    # pseudo-critical temperature. Above it Π > 1 is also found for gas-like supercritical
    # mixtures (ammonia synthesis at 450 °C and 300 atm: Π = 1.02 at Z = 1.06), which are kept.
    liquid |= ~two & (pip > 1.0) & (T < T_pc)
    if np.any(liquid):
        i = int(np.argmax(liquid))
        raise InvalidInput(
            "gas_model",
            function,
            f"'ideal', or conditions where the gases stay a gas: at {T[i]:.6g} K and "
            f"{P[i] / 1e5:.6g} bar the Peng–Robinson equation puts this mixture in the "
            "liquid (it would condense), while the equation is written for gases; lower the "
            "pressure, raise the temperature, or write the condensing species as a liquid",
            "peng-robinson",
        )


def reaction_fugacity_term(
    rxn: Reaction,
    T: np.ndarray,
    P: np.ndarray,
    amounts: np.ndarray,
    nu: np.ndarray,
    gas: np.ndarray,
    inerts: Sequence[tuple[Species, float]] = (),
    function: str = "",
) -> np.ndarray:
    """Σ_j ν_j ln φ_j per T: what Peng–Robinson adds to ln Q of a reaction's gas mixture.

    ``amounts``, ``nu`` and ``gas`` are T × terms (amounts of the form used, e.g. partial
    pressures; ν per molecule of that form; which terms are gases at each T); ``inerts`` are gases
    of the mixture outside the equation with their amounts (same basis); ``P`` is the total
    pressure per T (Pa). Refused (:class:`~feasibly.errors.InvalidInput`, naming the gas) when a
    gas has no critical constants, and where the mixture would be a liquid.
    """
    T = np.atleast_1d(np.asarray(T, dtype=float))
    P = np.broadcast_to(np.asarray(P, dtype=float), T.shape)
    plan = rxn.phase_plan(T)
    out = np.zeros(T.shape)
    # rows sharing one set of gas species (a phase change moves a term in or out of the gas)
    groups: dict[tuple[str | None, ...], list[int]] = {}
    for i in range(T.size):
        key = tuple(
            t.candidates[idx[i]].id if gas[i, j] else None
            for j, (t, idx) in enumerate(zip(rxn.terms, plan, strict=True))
        )
        groups.setdefault(key, []).append(i)
    for key, rows in groups.items():
        cols = np.array([j for j, sid in enumerate(key) if sid is not None], dtype=int)
        if cols.size == 0:
            continue
        r = np.array(rows)
        species = [rxn.terms[j].candidates[plan[j][r[0]]] for j in cols]
        species += [sp for sp, _ in inerts]
        crit = critical_constants(species, function)
        x = np.concatenate(
            [
                amounts[np.ix_(r, cols)],
                np.broadcast_to([float(n) for _, n in inerts], (r.size, len(inerts))),
            ],
            axis=1,
        )
        if not np.all(np.isfinite(x)) or np.any(x.sum(axis=1) <= 0):
            raise InvalidInput(
                "gas_model", function, "'ideal' for a state with no gas in it", "peng-robinson"
            )
        ln_phi = ln_fugacity_coefficients(T[r], P[r], x, crit, gas_only=function)
        out[r] = np.sum(nu[np.ix_(r, cols)] * ln_phi[:, : cols.size], axis=1)
    return out

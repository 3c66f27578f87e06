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
from ..errors import InvalidInput
from ..library.cp_models import R
from ..library.species import Species

__all__ = [
    "GAS_MODELS",
    "Critical",
    "critical_constants",
    "ln_fugacity_coefficients",
    "read_gas_model",
]

#: The gas models on offer: ideal gas (φ = 1) and the Peng–Robinson equation of state.
GAS_MODELS = ("ideal", "peng-robinson")
_SQRT2 = math.sqrt(2.0)


def read_gas_model(value: object, function: str) -> str:
    """``"ideal"`` or ``"peng-robinson"`` (case and the spelling "Peng-Robinson"/"PR" accepted)."""
    text = str(value).strip().lower().replace("–", "-").replace("_", "-").replace(" ", "-")
    if text in ("pr", "peng-robinson"):
        return "peng-robinson"
    if text in ("ideal", "ideal-gas"):
        return "ideal"
    raise InvalidInput("gas_model", function, "'ideal' or 'peng-robinson'", value)


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
    T: np.ndarray, P: np.ndarray, x: np.ndarray, crit: Sequence[Critical]
) -> np.ndarray:
    """ln φ_i of each gas in a Peng–Robinson mixture: states × gases.

    ``T`` (K) and ``P`` (Pa) have one value per state, ``x`` (states × gases) the mole fractions
    (rows are normalised here). The vapour root (the largest real Z) is taken: above the critical
    temperature of the mixture it is the only one.
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
        Z[i] = real[real > B[i]].max()
    return Z

"""Heat-capacity models and the enthalpy and entropy increments they imply.

Each model gives, for temperatures T in K (float arrays), Cp(T) in J/(mol·K) and the increments
``h(T) = H(T) − H(298.15 K)`` in J/mol and ``s(T) = S(T) − S(298.15 K)`` in J/(mol·K). The species'
own 298.15 K values are added elsewhere, so a Cp model never carries the enthalpy of formation.

The models are the NASA 7-coefficient polynomial (McBride, Gordon & Reno, NASA TM-4513, 1993,
in Cp/R, H/RT, S/R form), the NASA 9-coefficient polynomial (McBride, Zehe & Gordon, NASA
TP-2002-211556, eqs. 1–3), a constant heat capacity and the Maier–Kelley form
``a + bT + c/T²`` (Maier & Kelley, J. Am. Chem. Soc. 54 (1932) 3243).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from typing import Self

import numpy as np

__all__ = [
    "T_REF",
    "ConstantCp",
    "CpModel",
    "MaierKelleyCp",
    "Nasa7",
    "Nasa9",
    "R",
]

#: Molar gas constant in J/(mol·K), exact since the 2019 SI redefinition (CODATA 2018).
R = 8.314462618
#: Reference temperature of tabulated standard values, K.
T_REF = 298.15


class CpModel:
    """Interface of a heat-capacity model (all methods vectorised over T in K)."""

    def cp(self, T: np.ndarray) -> np.ndarray:  # pragma: no cover - interface
        raise NotImplementedError

    def h_inc(self, T: np.ndarray) -> np.ndarray:  # pragma: no cover - interface
        raise NotImplementedError

    def s_inc(self, T: np.ndarray) -> np.ndarray:  # pragma: no cover - interface
        raise NotImplementedError


def gibbs_basis(T: np.ndarray) -> np.ndarray:
    """The nine functions of T (9 × len(T)) that G°/RT of a NASA-7 or NASA-9 entry combines on
    each interval: T⁻², ln T / T, 1/T, ln T, 1, T, T², T³, T⁴."""
    T = np.asarray(T, dtype=float)
    inv, ln = 1.0 / T, np.log(T)
    t2 = T * T
    return np.stack([inv * inv, ln * inv, inv, ln, np.ones_like(T), T, t2, t2 * T, t2 * t2])


@dataclass(frozen=True)
class Nasa7(CpModel):
    """NASA 7-coefficient polynomial in one or more temperature intervals.

    ``breaks`` are the interval limits (ascending, n + 1 values for n intervals); ``coeffs`` has
    shape (n, 7). Each interval's a6 and a7 make H and S continuous in the source's own
    convention; increments are taken from the interval that contains each temperature, and 298.15 K
    is evaluated in the interval containing it (the first one when it lies below the range).
    """

    breaks: tuple[float, ...]
    coeffs: np.ndarray

    @classmethod
    def from_lists(cls, breaks: Sequence[float], coeffs: Sequence[Sequence[float]]) -> Self:
        a = np.array(coeffs, dtype=float)
        return cls(tuple(float(b) for b in breaks), a)

    def _interval(self, T: np.ndarray) -> np.ndarray:
        inner = np.asarray(self.breaks[1:-1])
        # A temperature exactly on a break belongs to the lower interval (NASA's convention).
        return np.searchsorted(inner, T, side="left")

    def _h_rt(self, T: np.ndarray, a: np.ndarray) -> np.ndarray:
        return (
            a[..., 0]
            + T * (a[..., 1] / 2 + T * (a[..., 2] / 3 + T * (a[..., 3] / 4 + T * a[..., 4] / 5)))
            + a[..., 5] / T
        )

    def _s_r(self, T: np.ndarray, a: np.ndarray) -> np.ndarray:
        return (
            a[..., 0] * np.log(T)
            + T * (a[..., 1] + T * (a[..., 2] / 2 + T * (a[..., 3] / 3 + T * a[..., 4] / 4)))
            + a[..., 6]
        )

    def cp(self, T: np.ndarray) -> np.ndarray:
        T = np.asarray(T, dtype=float)
        a = self.coeffs[self._interval(T)]
        return R * (a[..., 0] + T * (a[..., 1] + T * (a[..., 2] + T * (a[..., 3] + T * a[..., 4]))))

    def _ref(self) -> tuple[float, float]:
        t = np.asarray(T_REF)
        a = self.coeffs[self._interval(t)]
        return float(R * T_REF * self._h_rt(t, a)), float(R * self._s_r(t, a))

    def h_inc(self, T: np.ndarray) -> np.ndarray:
        T = np.asarray(T, dtype=float)
        a = self.coeffs[self._interval(T)]
        return R * T * self._h_rt(T, a) - self._ref()[0]

    def s_inc(self, T: np.ndarray) -> np.ndarray:
        T = np.asarray(T, dtype=float)
        a = self.coeffs[self._interval(T)]
        return R * self._s_r(T, a) - self._ref()[1]

    def absolute_298(self) -> tuple[float, float]:
        """H(298.15 K) in J/mol and S(298.15 K) in J/(mol·K) implied by the polynomial itself."""
        return self._ref()

    def interval(self, T: np.ndarray) -> np.ndarray:
        """Index of the interval each temperature falls in (NASA's convention at a break)."""
        return self._interval(np.asarray(T, dtype=float))

    def gibbs_coefficients(self, dHf: float, S298: float) -> np.ndarray:
        """G°/RT on each interval as coefficients (intervals × 9) of ``gibbs_basis(T)``, for an
        entry whose ΔfH° and S° at 298.15 K are ``dHf`` and ``S298`` (the polynomial giving the
        increments, as ``h_inc`` and ``s_inc`` do).

        From H/RT − S/R of the polynomial: a1(1 − ln T) − a2 T/2 − a3 T²/6 − a4 T³/12 − a5 T⁴/20
        + a6/T − a7, plus (ΔfH° − H_poly(298.15))/(RT) + (S_poly(298.15) − S°)/R.
        """
        h_ref, s_ref = self._ref()
        a = self.coeffs
        c = np.zeros((a.shape[0], 9))
        c[:, 2] = a[:, 5] + (dHf - h_ref) / R  # 1/T
        c[:, 3] = -a[:, 0]  # ln T
        c[:, 4] = a[:, 0] - a[:, 6] + (s_ref - S298) / R  # 1
        c[:, 5] = -a[:, 1] / 2  # T
        c[:, 6] = -a[:, 2] / 6  # T²
        c[:, 7] = -a[:, 3] / 12  # T³
        c[:, 8] = -a[:, 4] / 20  # T⁴
        return c


@dataclass(frozen=True)
class Nasa9(Nasa7):
    """NASA 9-coefficient polynomial in one or more temperature intervals.

    ``coeffs`` has shape (n, 9): a1…a7 and the integration constants b1, b2 of each interval
    (NASA TP-2002-211556, eqs. 1–3)::

        Cp/R = a1 T⁻² + a2 T⁻¹ + a3 + a4 T + a5 T² + a6 T³ + a7 T⁴
        H/RT = −a1 T⁻² + a2 ln(T)/T + a3 + a4 T/2 + a5 T²/3 + a6 T³/4 + a7 T⁴/5 + b1/T
        S/R  = −a1 T⁻²/2 − a2 T⁻¹ + a3 ln T + a4 T + a5 T²/2 + a6 T³/3 + a7 T⁴/4 + b2

    Interval rule and increments as for :class:`Nasa7` (each interval's own b1, b2).
    """

    def _h_rt(self, T: np.ndarray, a: np.ndarray) -> np.ndarray:
        return (
            -a[..., 0] / T**2
            + a[..., 1] * np.log(T) / T
            + a[..., 2]
            + T * (a[..., 3] / 2 + T * (a[..., 4] / 3 + T * (a[..., 5] / 4 + T * a[..., 6] / 5)))
            + a[..., 7] / T
        )

    def _s_r(self, T: np.ndarray, a: np.ndarray) -> np.ndarray:
        return (
            -a[..., 0] / (2 * T**2)
            - a[..., 1] / T
            + a[..., 2] * np.log(T)
            + T * (a[..., 3] + T * (a[..., 4] / 2 + T * (a[..., 5] / 3 + T * a[..., 6] / 4)))
            + a[..., 8]
        )

    def gibbs_coefficients(self, dHf: float, S298: float) -> np.ndarray:
        """As :meth:`Nasa7.gibbs_coefficients`; from the NASA-9 forms, H/RT − S/R is
        −a1 T⁻²/2 + a2 (ln T + 1)/T + a3 (1 − ln T) − a4 T/2 − a5 T²/6 − a6 T³/12 − a7 T⁴/20
        + b1/T − b2."""
        h_ref, s_ref = self._ref()
        a = self.coeffs
        c = np.zeros((a.shape[0], 9))
        c[:, 0] = -a[:, 0] / 2  # T⁻²
        c[:, 1] = a[:, 1]  # ln T / T
        c[:, 2] = a[:, 1] + a[:, 7] + (dHf - h_ref) / R  # 1/T
        c[:, 3] = -a[:, 2]  # ln T
        c[:, 4] = a[:, 2] - a[:, 8] + (s_ref - S298) / R  # 1
        c[:, 5] = -a[:, 3] / 2  # T
        c[:, 6] = -a[:, 4] / 6  # T²
        c[:, 7] = -a[:, 5] / 12  # T³
        c[:, 8] = -a[:, 6] / 20  # T⁴
        return c

    def cp(self, T: np.ndarray) -> np.ndarray:
        T = np.asarray(T, dtype=float)
        a = self.coeffs[self._interval(T)]
        return R * (
            a[..., 0] / T**2
            + a[..., 1] / T
            + a[..., 2]
            + T * (a[..., 3] + T * (a[..., 4] + T * (a[..., 5] + T * a[..., 6])))
        )


@dataclass(frozen=True)
class ConstantCp(CpModel):
    """Temperature-independent heat capacity (J/(mol·K))."""

    value: float

    def cp(self, T: np.ndarray) -> np.ndarray:
        return np.full_like(np.asarray(T, dtype=float), self.value)

    def h_inc(self, T: np.ndarray) -> np.ndarray:
        return self.value * (np.asarray(T, dtype=float) - T_REF)

    def s_inc(self, T: np.ndarray) -> np.ndarray:
        return self.value * np.log(np.asarray(T, dtype=float) / T_REF)


@dataclass(frozen=True)
class MaierKelleyCp(CpModel):
    """Cp = a + b·T + c/T² in J/(mol·K)."""

    a: float
    b: float
    c: float

    def cp(self, T: np.ndarray) -> np.ndarray:
        T = np.asarray(T, dtype=float)
        return self.a + self.b * T + self.c / T**2

    def h_inc(self, T: np.ndarray) -> np.ndarray:
        T = np.asarray(T, dtype=float)
        return self.a * (T - T_REF) + self.b / 2 * (T**2 - T_REF**2) - self.c * (1 / T - 1 / T_REF)

    def s_inc(self, T: np.ndarray) -> np.ndarray:
        T = np.asarray(T, dtype=float)
        return (
            self.a * np.log(T / T_REF)
            + self.b * (T - T_REF)
            - self.c / 2 * (1 / T**2 - 1 / T_REF**2)
        )

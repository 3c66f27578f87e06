"""Equilibrium composition and conversion, with Monte Carlo bands, and conversion as a criterion.

Two routes, both on the library's data (1 bar standard state; an ideal-gas mixture and pure
condensed phases at unit activity, which may be used up or appear):

- :func:`equilibrium_extent` — one reaction: the equilibrium extent from K°(T), the feed (inerts
  included) and the total pressure, and the conversion of a key reactant;
- :func:`equilibrate` — a species set: the composition of least Gibbs energy at T, P and the
  element totals of a feed (element-potential Newton iteration with phase addition and removal,
  :mod:`feasibly._gibbs`).

Both are vectorised over temperatures and states. :func:`conversion_bands` and
``equilibrate(..., samples=N)`` repeat them over the Monte Carlo draws of the property data
(:mod:`feasibly.uncertainty`) and give 2.5/50/97.5 % bands; :func:`conversion_window` gives the
temperatures where P(conversion ≥ required) reaches the confidence level, and
:func:`conversion_assessment` puts it together as JSON-ready rows for the assessment and record.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from .._tables import TableExport
from ..conditions import (
    read_confidence,
    read_conversion,
    read_probability,
    read_states,
    read_trials,
)
from ..errors import (
    EquilibriumNotConverged,
    InvalidInput,
    InvalidUncertainty,
    UnitError,
    UnknownSpecies,
)
from ..library.catalogue import Library, default_library
from ..library.cp_models import R
from ..thermo import standard_properties
from ..thermo.reaction import Reaction, resolve_species
from ..uncertainty.inputs import Correlations, Method, Override, build_inputs, correlation_matrix
from ..uncertainty.linear import block_rows, level_window, linear_model, uncertain_species
from ..uncertainty.sampling import SampleSet, draw_samples
from ._common import (
    _P_STD,
    BAND_PROBS,
    _fmt_state,
    _split_label,
    parse_feed,
)
from ._extent_solver import solve_extent
from .composition import Equilibrium, equilibrate

__all__ = [
    "BAND_PROBS",
    "ConversionBands",
    "Equilibrium",
    "EquilibriumNotConverged",
    "ExtentEquilibrium",
    "conversion_assessment",
    "conversion_bands",
    "conversion_window",
    "equilibrate",
    "equilibrium_extent",
    "parse_feed",
]


# --- one reaction -------------------------------------------------------------------------------
@dataclass
class ExtentEquilibrium:
    """Equilibrium of one reaction at each state: extent, amounts per term, key conversion.

    ``extent`` has the shape of the states (temperatures, or temperatures × samples);
    ``amounts`` adds a trailing axis over the reaction's terms (labels in ``terms``).
    """

    reaction: Reaction
    T: np.ndarray
    P: np.ndarray
    terms: tuple[str, ...]
    feed: dict[str, float]
    extent: np.ndarray
    amounts: np.ndarray
    key: str | None
    conversion: np.ndarray | None


def _term_index(rxn: Reaction, name: str) -> int | None:
    formula, phase, _ = _split_label(name)
    for j, t in enumerate(rxn.terms):
        if name in (t.label(), t.text, *(sp.id for sp in t.candidates)):
            return j
    hits = [j for j, t in enumerate(rxn.terms) if t.formula == formula and phase in (None, t.phase)]
    return hits[0] if len(hits) == 1 else None


def _reaction_inputs(
    rxn: Reaction, feed: Mapping[str, float], key: str | None, T: np.ndarray
) -> tuple[np.ndarray, np.ndarray, np.ndarray, float, int | None]:
    """ν, gas mask (T × terms), feed per term, inert gas amount and the key term index."""
    if any(sp.phase == "aq" for t in rxn.terms for sp in t.candidates):
        raise InvalidInput(
            "equation",
            "equilibrium conversion",
            "a reaction of gases and pure condensed phases: an aqueous solute's activity "
            "changes with its amount, which needs a solution model this calculation does not "
            "have (use assess with molalities for ΔrG at given concentrations)",
            rxn.text,
        )
    nu = np.array([t.nu for t in rxn.terms])
    n0 = np.zeros(nu.size)
    inert = 0.0
    for name, amount in feed.items():
        j = _term_index(rxn, name)
        if j is not None:
            n0[j] += float(amount)
            continue
        formula, phase, form = _split_label(name)
        _, found = resolve_species(rxn.library, formula, phase, form, name)
        if any(sp.phase == "g" for sp in found):
            inert += float(amount)  # a condensed inert does not change any activity
    k = None
    if key is not None:
        k = _term_index(rxn, key)
        if k is None or rxn.terms[k].nu > 0:
            raise UnknownSpecies(
                key,
                [t.label() for t in rxn.terms if t.nu < 0],
                detail="The key must be a reactant of the equation.",
            )
        if n0[k] <= 0:
            raise UnitError(
                key, "key reactant", "the feed holds none of it; conversion is undefined"
            )
    plan = rxn.phase_plan(T)
    for t, idx in zip(rxn.terms, plan, strict=True):
        used = t.scale_array()[idx]
        if np.any(used != 1.0):
            k = int(np.argmax(used != 1.0))
            raise UnitError(
                t.label(),
                "species of the equilibrium",
                f"at {T[k]:.0f} K the stable form of {t.label()} is "
                f"{t.candidates[idx[k]].id}, another molecule; for the equilibrium conversion "
                "write the equation with that molecule (with its phase), or a range where the "
                "element keeps its own formula",
            )
    gas = np.stack(
        [
            np.array([sp.phase == "g" for sp in t.candidates])[idx]
            for t, idx in zip(rxn.terms, plan, strict=True)
        ],
        axis=1,
    )
    return nu, gas, n0, inert, k


def _extent_states(
    nu: np.ndarray,
    gas: np.ndarray,
    n0: np.ndarray,
    inert: float,
    ln_k: np.ndarray,
    ln_p: np.ndarray,
    T: np.ndarray,
    P: np.ndarray,
) -> tuple[np.ndarray, np.ndarray]:
    """Solve states shaped like ``ln_k`` (T, or T × samples); ``gas`` and ``ln_p`` are per T."""
    shape = ln_k.shape
    per = int(np.prod(shape[1:], dtype=int)) if len(shape) > 1 else 1
    M = ln_k.size
    gas_m = np.repeat(gas, per, axis=0)
    xi, n, ok = solve_extent(
        nu,
        gas_m,
        np.broadcast_to(n0, (M, nu.size)),
        np.full(M, inert),
        ln_k.ravel(),
        np.repeat(ln_p, per),
    )
    if not np.all(ok):
        bad = np.nonzero(~ok)[0] // per
        raise EquilibriumNotConverged(
            "The equilibrium-extent iteration",
            [_fmt_state(T[i], P[i]) for i in bad],
            "This should not happen for a monotone 1-D root; please report the input.",
        )
    return xi.reshape(shape), n.reshape(*shape, nu.size)


def equilibrium_extent(
    reaction: str | Reaction,
    T: Any,
    P: Any,
    feed: str | Mapping[str, float],
    *,
    key: str | None = None,
    library: Library | None = None,
    balance: bool = False,
) -> ExtentEquilibrium:
    """Equilibrium extent of one reaction, and the conversion of ``key``, at each T.

    Gases form an ideal mixture at total pressure ``P`` with the feed's inerts (feed species not
    in the equation); condensed species are pure at unit activity and may be used up, which ends
    the reaction short of equilibrium. Phases follow the reaction's phase plan (the stable phase
    at each T unless the equation fixes it).

    >>> x = equilibrium_extent("CO + H2O -> CO2 + H2", "1000 K", "1 bar", "CO:1, H2O:1", key="CO")
    >>> round(float(x.conversion[0]), 3)
    0.545
    """
    library = library or default_library()
    rxn = reaction if isinstance(reaction, Reaction) else Reaction.parse(reaction, library, balance)
    T_K, P_Pa = read_states(T, P)
    amounts = {k: float(np.squeeze(v)) for k, v in parse_feed(feed).items()}
    nu, gas, n0, inert, k = _reaction_inputs(rxn, amounts, key, T_K)
    ln_k = -standard_properties(rxn, T_K).dG / (R * T_K)
    xi, n = _extent_states(nu, gas, n0, inert, ln_k, np.log(P_Pa / _P_STD), T_K, P_Pa)
    # from ξ, not n0 − n: keeps the relative accuracy of conversions far below 1e-16
    conv = None if k is None else -nu[k] * xi / n0[k]
    return ExtentEquilibrium(
        rxn, T_K, P_Pa, tuple(t.label() for t in rxn.terms), amounts, xi, n, key, conv
    )


@dataclass
class ConversionBands(TableExport):
    """Conversion of a key reactant at each T: nominal, Monte Carlo bands, P(≥ required).

    Its table ``conversion`` has one row per temperature (:meth:`to_frame`, :meth:`to_csv`).
    """

    T: np.ndarray
    P: np.ndarray
    nominal: np.ndarray
    lo: np.ndarray
    median: np.ndarray
    hi: np.ndarray
    required: float | None
    p_meets: np.ndarray | None
    p_meets_se: np.ndarray | None
    trials: int
    seed: int | None

    def tables(self) -> dict[str, list[dict[str, Any]]]:
        """``conversion``: T, P, the nominal conversion, its band and P(≥ required) per row."""
        rows = []
        for i in range(self.T.size):
            row: dict[str, Any] = {
                "T_K": float(self.T[i]),
                "P_Pa": float(self.P[i]),
                "conversion_nominal": float(self.nominal[i]),
                "conversion_lo": float(self.lo[i]),
                "conversion_median": float(self.median[i]),
                "conversion_hi": float(self.hi[i]),
            }
            if self.p_meets is not None and self.p_meets_se is not None:
                row["required"] = self.required
                row["P_meets"] = float(self.p_meets[i])
                row["P_meets_se"] = float(self.p_meets_se[i])
            rows.append(row)
        return {"conversion": rows}

    def window(self, confidence: float = 0.95) -> list[dict[str, Any]]:
        """Temperature intervals where P(conversion ≥ required) ≥ ``confidence``."""
        if self.p_meets is None:
            raise UnitError(None, "required conversion", "give required= to get a window")
        return conversion_window(self.T, self.p_meets, confidence)


def conversion_bands(
    reaction: str | Reaction,
    T: Any,
    P: Any,
    feed: str | Mapping[str, float],
    key: str,
    required: Any = None,
    *,
    samples: int = 10_000,
    seed: int | None = None,
    library: Library | None = None,
    overrides: Sequence[Override] = (),
    correlations: Correlations | None = None,
    balance: bool = False,
    method: Method = "mc",
    sample_set: SampleSet | None = None,
) -> ConversionBands:
    """Conversion of ``key`` over ``samples`` draws of the data: 2.5/50/97.5 % and P(≥ required).

    ΔrG°(T) is sampled through the exact linear model of :mod:`feasibly.uncertainty.linear` (shared
    draws per species-phase), and the equilibrium extent is solved for every draw at once.
    ``method`` is a sampling method of :func:`~feasibly.uncertainty.draw_samples` ("mc" or
    "mc-per-species"; Sobol points are not used for these bands).
    ``sample_set`` is the draws of the call this conversion belongs to (its overrides and
    correlations included); with it, no new draws are made and ``samples``, ``seed``,
    ``method``, ``overrides`` and ``correlations`` must be left out. The nominal conversion is
    at the library values moved by any override of a value (the centre of the draws).
    """
    library = library or default_library()
    rxn = reaction if isinstance(reaction, Reaction) else Reaction.parse(reaction, library, balance)
    nominal = equilibrium_extent(rxn, T, P, feed, key=key, library=library)
    assert nominal.conversion is not None
    T_K, P_Pa = nominal.T, nominal.P
    req = None if required is None else read_conversion(required)
    nu, gas, n0, inert, k = _reaction_inputs(rxn, nominal.feed, key, T_K)
    assert k is not None
    if sample_set is not None:
        if seed is not None or overrides or correlations:
            raise InvalidUncertainty(
                "conversion_bands: with the call's sample_set, leave out seed, overrides and "
                "correlations (they are those of the sample set)"
            )
        drawn = sample_set
        seed = drawn.seed
    else:
        inputs = build_inputs(uncertain_species(rxn), overrides)
        # The sampled states are held per temperature block; the work grows with trials × T.
        read_trials(samples, "samples", "conversion_bands", len(inputs), T_K.size)
        if method not in ("mc", "mc-per-species"):
            raise InvalidInput(
                "method", "conversion_bands", "'mc' or 'mc-per-species' (plain Monte Carlo)", method
            )
        drawn = draw_samples(
            inputs,
            samples,
            method=method,
            seed=seed,
            correlation=correlation_matrix(inputs, correlations),
        )
    model = linear_model(rxn, T_K, drawn)
    shift = np.array([inp.shift for inp in drawn.inputs])
    conv_nominal = nominal.conversion
    if np.any(shift != 0):
        # An override of a value moves the centre of the draws: the nominal moves with it.
        ln_k0 = -(model.G0 + model.aG @ shift) / (R * T_K)
        xi0, _ = _extent_states(nu, gas, n0, inert, ln_k0, np.log(P_Pa / _P_STD), T_K, P_Pa)
        conv_nominal = -nu[k] * xi0 / n0[k]
    q = np.empty((3, T_K.size))
    p = np.empty(T_K.size)
    ln_p = np.log(P_Pa / _P_STD)
    # temperature rows per block: a few MB of sampled states at a time
    step = max(1, block_rows(drawn.n * (nu.size + 4)))
    for a in range(0, T_K.size, step):
        sl = slice(a, min(a + step, T_K.size))
        ln_k = -model.values("G", drawn, sl) / (R * T_K[sl, None])
        xi, _ = _extent_states(nu, gas[sl], n0, inert, ln_k, ln_p[sl], T_K[sl], P_Pa[sl])
        x = -nu[k] * xi / n0[k]
        q[:, sl] = np.quantile(x, BAND_PROBS, axis=1)
        # 1e-12: a conversion equal to the requirement up to rounding counts as meeting it
        p[sl] = np.mean(x >= req - 1e-12, axis=1) if req is not None else np.nan
    n_tr = drawn.n
    return ConversionBands(
        T_K,
        P_Pa,
        conv_nominal,
        q[0],
        q[1],
        q[2],
        req,
        p if req is not None else None,
        np.sqrt(p * (1 - p) / n_tr) if req is not None else None,
        n_tr,
        drawn.seed,
    )


def conversion_window(
    T: np.ndarray, p_meets: np.ndarray, confidence: float = 0.95
) -> list[dict[str, Any]]:
    """Intervals of the (ascending) grid ``T`` where ``p_meets`` ≥ ``confidence``.

    Each edge is interpolated linearly where P crosses the confidence level; an edge at an end of
    the grid is marked open (the window may extend beyond it).

    >>> conversion_window(np.array([500., 600., 700.]), np.array([0.0, 0.5, 1.0]), 0.75)
    [{'T_lo_K': 650.0, 'lo_open': False, 'T_hi_K': 700.0, 'hi_open': True}]
    """
    return level_window(T, p_meets, read_probability(confidence, "confidence", "conversion_window"))


def conversion_assessment(
    reaction: str | Reaction,
    temps: Any,
    feed: str | Mapping[str, float],
    key: str,
    required: Any,
    P: Any,
    samples: int | None = None,
    seed: int | None = None,
    confidence: float = 0.95,
    library: Library | None = None,
    method: Method = "mc",
    sample_set: SampleSet | None = None,
) -> dict[str, Any]:
    """Required conversion as a feasibility criterion: JSON-ready rows per T and the window.

    Without ``samples`` or ``sample_set`` the rows give the nominal conversion and whether it
    meets the requirement (the probability fields are None) and the window is where the nominal
    value meets it. ``sample_set`` (the call's own draws, e.g. ``UncertainAssessment.samples``)
    makes the bands and P(meets) from exactly the draws, overrides and correlations of the call;
    ``samples`` alone draws a new set (a conversion call of its own).
    """
    req = read_conversion(required)
    confidence = read_confidence(confidence, "conversion_assessment")
    if sample_set is not None and samples is not None and samples != sample_set.n:
        raise InvalidUncertainty(
            f"conversion_assessment: samples={samples} differs from the {sample_set.n} trials of "
            "the call's sample set; leave samples out"
        )
    if samples is None and sample_set is None:
        x = equilibrium_extent(reaction, temps, P, feed, key=key, library=library)
        assert x.conversion is not None
        conv = x.conversion
        meets = conv >= req - 1e-12
        rows = [
            {
                "T_K": float(t),
                "conversion": float(c),
                "conversion_lo": None,
                "conversion_hi": None,
                "meets_required": bool(ok),
                "P_meets_required": None,
                "P_meets_required_se": None,
            }
            for t, c, ok in zip(x.T, conv, meets, strict=True)
        ]
        # Where the nominal conversion crosses the requirement, interpolated like a probability
        # crossing a confidence level (1e-12 keeps a 100 % requirement inside the open interval).
        window = conversion_window(x.T, conv, min(req, 1.0 - 1e-12))
        T_K, P_Pa, trials = x.T, x.P, 0
    else:
        if sample_set is not None:
            bands = conversion_bands(
                reaction, temps, P, feed, key, req, library=library, sample_set=sample_set
            )
        else:
            assert samples is not None
            bands = conversion_bands(
                reaction,
                temps,
                P,
                feed,
                key,
                req,
                samples=samples,
                seed=seed,
                library=library,
                method=method,
            )
        seed = bands.seed
        assert bands.p_meets is not None and bands.p_meets_se is not None
        rows = [
            {
                "T_K": float(bands.T[i]),
                "conversion": float(bands.nominal[i]),
                "conversion_median": float(bands.median[i]),
                "conversion_lo": float(bands.lo[i]),
                "conversion_hi": float(bands.hi[i]),
                "meets_required": bool(bands.p_meets[i] >= confidence),
                "P_meets_required": float(bands.p_meets[i]),
                "P_meets_required_se": float(bands.p_meets_se[i]),
            }
            for i in range(bands.T.size)
        ]
        window = bands.window(confidence)
        T_K, P_Pa, trials, seed = bands.T, bands.P, bands.trials, bands.seed
    return {
        "key": key,
        "required_conversion": req,
        "P_Pa": float(P_Pa[0]) if np.all(P_Pa == P_Pa[0]) else P_Pa.tolist(),
        "confidence": confidence,
        "trials": trials,
        "seed": seed,
        "shared_draws": sample_set is not None,
        "model": "ideal-gas mixture + pure condensed phases at unit activity; standard state 1 bar",
        "rows": rows,
        "window": window,
        "T_K": T_K.tolist(),
    }

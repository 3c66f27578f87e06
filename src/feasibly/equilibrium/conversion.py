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
from ..library.species import Species
from ..thermo import (
    Critical,
    critical_constants,
    ln_fugacity_coefficients,
    read_gas_model,
    standard_properties,
)
from ..thermo.energy import term_index
from ..thermo.reaction import Reaction, resolve_species
from ..uncertainty.inputs import Correlations, Method, Override, build_inputs, correlation_matrix
from ..uncertainty.linear import (
    block_rows,
    gum_uncertainty,
    level_window,
    linear_model,
    uncertain_species,
)
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
    "MODEL_TEXT",
    "ConversionBands",
    "Equilibrium",
    "EquilibriumNotConverged",
    "ExtentEquilibrium",
    "conversion_assessment",
    "conversion_bands",
    "conversion_window",
    "equilibrate",
    "equilibrium_extent",
    "extents_at",
    "non_ideality",
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
    gas_model: str = "ideal"
    #: Σ ν_j ln φ_j of the gases at the equilibrium found (0 for the ideal gas): the amount by
    #: which ln K of the partial pressures differs from ln K°, i.e. ΔrG shifts by RT times it.
    fugacity_term: np.ndarray | None = None


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
        j = term_index(rxn, name)
        if j is not None:
            n0[j] += float(amount)
            continue
        formula, phase, form = _split_label(name)
        _, found = resolve_species(rxn.library, formula, phase, form, name)
        if any(sp.phase == "g" for sp in found):
            inert += float(amount)  # a condensed inert does not change any activity
    k = None
    if key is not None:
        k = term_index(rxn, key)
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


# Fugacity iteration: ln K is corrected by Σ ν ln φ at the composition found, until the
# correction changes by less than 1e-12 (ln units, as the extent root itself); φ depends weakly on
# composition, so 5–15 rounds are typical and the limit only stops a bug.
_PHI_TOL = 1e-12
_PHI_MAX_ITER = 100
#: The model strings reported with results.
MODEL_TEXT = {
    "ideal": "ideal-gas mixture + pure condensed phases at unit activity; standard state 1 bar",
    "peng-robinson": (
        "Peng–Robinson gas mixture (fugacity coefficients, k_ij = 0) + pure condensed phases at "
        "unit activity; standard state 1 bar"
    ),
}


@dataclass
class _GasMixture:
    """What the Peng–Robinson fugacity coefficients of a reaction's gas mixture need."""

    crit: list[Critical]  # per term (a placeholder for a term that is never a gas), then inerts
    inert: np.ndarray  # inert gas amounts, in the order of crit[len(terms):]
    sources: dict[str, str]  # gas id → where its critical constants come from

    def correction(
        self, n: np.ndarray, gas: np.ndarray, T: np.ndarray, P: np.ndarray
    ) -> np.ndarray:
        """ln φ of each term (0 where it is not a gas), states × terms."""
        J = n.shape[1]
        x = np.concatenate(
            [np.where(gas, n, 0.0), np.broadcast_to(self.inert, (n.shape[0], self.inert.size))],
            axis=1,
        )
        ln_phi = ln_fugacity_coefficients(T, P, x, self.crit)
        return np.where(gas, ln_phi[:, :J], 0.0)


def _gas_mixture(rxn: Reaction, feed: Mapping[str, float]) -> _GasMixture:
    """Critical constants of the reaction's gases and of the feed's inert gases (refused by name
    when a gas has none)."""
    gases: list[Species | None] = []
    for t in rxn.terms:
        g = [sp for sp in t.candidates if sp.phase == "g"]
        gases.append(g[0] if g else None)
    inert_sp: list[Species] = []
    inert_n: list[float] = []
    for name, amount in feed.items():
        if term_index(rxn, name) is not None:
            continue
        formula, phase, form = _split_label(name)
        found = [
            sp
            for sp in resolve_species(rxn.library, formula, phase, form, name)[1]
            if sp.phase == "g"
        ]
        if found:
            inert_sp.append(found[0])
            inert_n.append(float(amount))
    known = [sp for sp in gases if sp is not None] + inert_sp
    crit_all = critical_constants(known, "equilibrium_extent")
    crit_known = iter(crit_all)
    # a term that is never a gas has mole fraction 0 in the mixture: any constants do
    placeholder = Critical(1.0, 1e5, 0.0, "unused")
    crit = [next(crit_known) if sp is not None else placeholder for sp in gases]
    crit += list(crit_known)
    sources = {sp.id: c.source for sp, c in zip(known, crit_all, strict=True)}
    return _GasMixture(crit, np.array(inert_n), sources)


def _extent_states(
    nu: np.ndarray,
    gas: np.ndarray,
    n0: np.ndarray,
    inert: float,
    ln_k: np.ndarray,
    ln_p: np.ndarray,
    T: np.ndarray,
    P: np.ndarray,
    mixture: _GasMixture | None = None,
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Solve states shaped like ``ln_k`` (T, or T × samples); ``gas`` and ``ln_p`` are per T.

    With ``mixture`` the gases follow Peng–Robinson: K = Π (φ_j x_j P/P°)^ν_j is solved as the
    ideal-gas law with ln K − Σ ν_j ln φ_j, φ at the composition found, until that settles.
    Returns the extents, the amounts and Σ ν_j ln φ_j (zeros for the ideal gas).
    """
    shape = ln_k.shape
    per = int(np.prod(shape[1:], dtype=int)) if len(shape) > 1 else 1
    M = ln_k.size
    gas_m = np.repeat(gas, per, axis=0)
    n0_m = np.broadcast_to(n0, (M, nu.size))
    inert_m = np.full(M, inert)
    ln_k_m = ln_k.ravel()
    ln_p_m = np.repeat(ln_p, per)
    shift = np.zeros(M)
    T_m, P_m = np.repeat(T, per), np.repeat(P, per)
    for _ in range(_PHI_MAX_ITER):
        xi, n, ok = solve_extent(nu, gas_m, n0_m, inert_m, ln_k_m - shift, ln_p_m)
        if not np.all(ok):
            bad = np.nonzero(~ok)[0] // per
            raise EquilibriumNotConverged(
                "The equilibrium-extent iteration",
                [_fmt_state(T[i], P[i]) for i in bad],
                "This should not happen for a monotone 1-D root; please report the input.",
            )
        if mixture is None:
            break
        new = np.sum(np.where(gas_m, nu * mixture.correction(n, gas_m, T_m, P_m), 0.0), axis=1)
        settled = np.max(np.abs(new - shift)) <= _PHI_TOL
        shift = new
        if settled:
            break
    else:
        raise EquilibriumNotConverged(
            "The fugacity-coefficient iteration",
            [_fmt_state(T[0], P[0])],
            "The Peng–Robinson fugacity coefficients did not settle; the mixture may be near "
            "condensation. Use the ideal-gas model and treat the result as indicative only.",
        )
    return xi.reshape(shape), n.reshape(*shape, nu.size), shift.reshape(shape)


def equilibrium_extent(
    reaction: str | Reaction,
    T: Any,
    P: Any,
    feed: str | Mapping[str, float],
    *,
    key: str | None = None,
    library: Library | None = None,
    balance: bool = False,
    gas_model: str = "ideal",
) -> ExtentEquilibrium:
    """Equilibrium extent of one reaction, and the conversion of ``key``, at each T.

    Gases form a mixture at total pressure ``P`` with the feed's inerts (feed species not in the
    equation): an ideal one (``gas_model="ideal"``), or one whose fugacity coefficients follow the
    Peng–Robinson equation of state (``"peng-robinson"``; critical constants from the shipped
    table, :mod:`feasibly.thermo.fugacity`). Condensed species are pure at unit activity and may
    be used up, which ends the reaction short of equilibrium. Phases follow the reaction's phase
    plan (the stable phase at each T unless the equation fixes it).

    >>> x = equilibrium_extent("CO + H2O -> CO2 + H2", "1000 K", "1 bar", "CO:1, H2O:1", key="CO")
    >>> round(float(x.conversion[0]), 3)
    0.545
    """
    library = library or default_library()
    rxn = reaction if isinstance(reaction, Reaction) else Reaction.parse(reaction, library, balance)
    T_K, P_Pa = read_states(T, P)
    amounts = {k: float(np.squeeze(v)) for k, v in parse_feed(feed).items()}
    model = read_gas_model(gas_model, "equilibrium_extent")
    nu, gas, n0, inert, k = _reaction_inputs(rxn, amounts, key, T_K)
    mixture = _gas_mixture(rxn, amounts) if model == "peng-robinson" else None
    ln_k = -standard_properties(rxn, T_K).dG / (R * T_K)
    xi, n, shift = _extent_states(
        nu, gas, n0, inert, ln_k, np.log(P_Pa / _P_STD), T_K, P_Pa, mixture
    )
    # from ξ, not n0 − n: keeps the relative accuracy of conversions far below 1e-16
    conv = None if k is None else -nu[k] * xi / n0[k]
    return ExtentEquilibrium(
        rxn, T_K, P_Pa, tuple(t.label() for t in rxn.terms), amounts, xi, n, key, conv,
        model, shift,
    )  # fmt: skip


def extents_at(
    rxn: Reaction,
    T_K: np.ndarray,
    P_Pa: float,
    feed: Mapping[str, float],
    dG: np.ndarray,
) -> np.ndarray:
    """Equilibrium extent (ideal gases at total pressure ``P_Pa``) for given ΔrG° values.

    ``dG`` (J/mol) is shaped like the states: (M,) with one temperature each in ``T_K`` (M,),
    or (T, N) with the temperatures ``T_K`` (T,) along its rows — e.g. the sampled ΔrG° of a
    call's draws, one extent per draw. The same solver as :func:`equilibrium_extent`, which
    these values reproduce for the nominal ΔrG°.
    """
    T_K = np.atleast_1d(np.asarray(T_K, dtype=float))
    dG = np.asarray(dG, dtype=float)
    nu, gas, n0, inert, _ = _reaction_inputs(rxn, feed, None, T_K)
    P = np.full(T_K.size, float(P_Pa))
    ln_k = -dG / (R * (T_K if dG.ndim == 1 else T_K[:, None]))
    xi, _, _ = _extent_states(nu, gas, n0, inert, ln_k, np.log(P / _P_STD), T_K, P)
    return xi


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
    gas_model: str = "ideal",
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
    nominal = equilibrium_extent(rxn, T, P, feed, key=key, library=library, gas_model=gas_model)
    assert nominal.conversion is not None
    mixture = _gas_mixture(rxn, nominal.feed) if nominal.gas_model == "peng-robinson" else None
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
        xi0, _, _ = _extent_states(
            nu, gas, n0, inert, ln_k0, np.log(P_Pa / _P_STD), T_K, P_Pa, mixture
        )
        conv_nominal = -nu[k] * xi0 / n0[k]
    q = np.empty((3, T_K.size))
    p = np.empty(T_K.size)
    ln_p = np.log(P_Pa / _P_STD)
    # With ideal gases each row's conversion is a non-decreasing function of ln K alone, so its
    # order statistics are those of ln K: a few extents per row give the same bands and P.
    bands = _bands_by_rank if mixture is None else _bands_full
    # temperature rows per block: a few MB of sampled states at a time (the full solve holds
    # the states of every trial; the rank route three arrays of ln K and conversions)
    step = block_rows(drawn.n * (nu.size + 4) if bands is _bands_full else drawn.n)
    for a in range(0, T_K.size, step):
        sl = slice(a, min(a + step, T_K.size))
        ln_k = -model.values("G", drawn, sl) / (R * T_K[sl, None])
        states = _States(nu, gas[sl], n0, inert, ln_p[sl], T_K[sl], P_Pa[sl], k, mixture)
        q[:, sl], p[sl] = bands(states, ln_k, req)
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


@dataclass
class _States:
    """One block of temperature rows of a conversion: what the extent solver needs per row."""

    nu: np.ndarray
    gas: np.ndarray
    n0: np.ndarray
    inert: float
    ln_p: np.ndarray
    T: np.ndarray
    P: np.ndarray
    key: int
    mixture: _GasMixture | None

    def conversion(self, ln_k: np.ndarray) -> np.ndarray:
        """Conversion of the key at each ln K (rows × any number of states per row)."""
        xi, _, _ = _extent_states(
            self.nu, self.gas, self.n0, self.inert, ln_k, self.ln_p, self.T, self.P,
            self.mixture,
        )  # fmt: skip
        return -self.nu[self.key] * xi / self.n0[self.key]


# A conversion equal to the requirement up to rounding counts as meeting it.
_MEETS_TOL = 1e-12


def _bands_full(
    states: _States, ln_k: np.ndarray, req: float | None
) -> tuple[np.ndarray, np.ndarray]:
    """Band quantiles (3 × rows) and P(conversion ≥ req) per row, from an extent per trial."""
    x = states.conversion(ln_k)
    p = np.mean(x >= req - _MEETS_TOL, axis=1) if req is not None else np.full(x.shape[0], np.nan)
    return np.quantile(x, BAND_PROBS, axis=1), p


def _bands_by_rank(
    states: _States, ln_k: np.ndarray, req: float | None
) -> tuple[np.ndarray, np.ndarray]:
    """The same numbers as :func:`_bands_full` for ideal gases, from a few extents per row.

    In a row (one T, P and feed) the extent is a non-decreasing function of ln K alone (the
    equilibrium condition g(ξ) = ln K has g non-decreasing in ξ), so the conversion of the trial
    holding the r-th smallest ln K is the r-th smallest conversion. The quantiles need the
    conversions at the ranks next to each band's position only: ln K is partitioned at those
    ranks, the extents are solved there, every other position takes the value of the nearest
    solved rank below it (which keeps the order), and ``np.quantile`` interpolates exactly as on
    the full set. P(conversion ≥ req) counts the trials whose ln K lies above the ln K at which
    the conversion equals the requirement (g at that composition); trials within a relative
    1e-7 of it, far wider than the solver's tolerance (|g − ln K| ≤ 1e-12), are solved. The
    extent of a state does not depend on the other states solved with it, so the numbers are
    those of the full solve (``tests/equilibrium/test_conversion_by_rank.py`` compares them
    bit for bit).
    """
    rows, n = ln_k.shape
    # numpy's linear quantile reads ranks floor(p(N − 1)) and the one above; one more rank each
    # side covers any rounding of its position
    base = np.floor(np.array(BAND_PROBS) * (n - 1)).astype(int)
    ranks = np.unique(np.clip(np.concatenate([base + d for d in (-1, 0, 1, 2)]), 0, n - 1))
    part = np.partition(ln_k, ranks, axis=1)
    at = states.conversion(part[:, ranks])
    below = np.maximum(np.searchsorted(ranks, np.arange(n), side="right") - 1, 0)
    q = np.quantile(at[:, below], BAND_PROBS, axis=1)
    if req is None:
        return q, np.full(rows, np.nan)
    return q, _share_meeting(states, ln_k, req - _MEETS_TOL)


def _share_meeting(states: _States, ln_k: np.ndarray, c: float) -> np.ndarray:
    """Share of each row's trials whose conversion is at least ``c``, as np.mean would give it."""
    rows, n = ln_k.shape
    nu, k = states.nu, states.key
    xi_c = c * states.n0[k] / -nu[k]
    amounts = states.n0 + nu * xi_c
    scale = max(float(np.max(states.n0)), 1.0)
    count = np.zeros(rows)
    for i in range(rows):
        gas = states.gas[i]
        if np.any(amounts < -1e-9 * scale):
            continue  # beyond what the feed allows: no trial reaches c
        if np.any(amounts <= 1e-9 * scale) or not np.any(gas):
            # at a bound or with no gas: count by the solver itself, over the sorted trials
            count[i] = _count_by_bisection(states, ln_k, c, i)
            continue
        N = float(np.sum(amounts[gas])) + states.inert
        dnu = float(np.sum(nu[gas]))
        # ln K at which the equilibrium conversion is exactly c (the solver's f = 0 there)
        ln_k_c = float(np.sum(nu[gas] * np.log(amounts[gas]))) - dnu * np.log(N)
        ln_k_c += dnu * states.ln_p[i]
        # 1e-7 relative: 1e5 times the solver's tolerance in ln K, yet rarely holds a trial
        delta = 1e-7 * max(1.0, abs(ln_k_c))
        row = ln_k[i]
        near = np.abs(row - ln_k_c) <= delta
        count[i] = np.count_nonzero(row > ln_k_c + delta)
        if np.any(near):
            one = _States(
                nu, states.gas[i : i + 1], states.n0, states.inert, states.ln_p[i : i + 1],
                states.T[i : i + 1], states.P[i : i + 1], k, None,
            )  # fmt: skip
            count[i] += np.count_nonzero(one.conversion(row[near][None, :]) >= c)
    return count / n


def _count_by_bisection(states: _States, ln_k: np.ndarray, c: float, i: int) -> int:
    """Trials of row ``i`` whose conversion is at least ``c``: bisection over the sorted ln K."""
    srt = np.sort(ln_k[i])
    one = _States(
        states.nu, states.gas[i : i + 1], states.n0, states.inert, states.ln_p[i : i + 1],
        states.T[i : i + 1], states.P[i : i + 1], states.key, None,
    )  # fmt: skip
    lo, hi = 0, srt.size  # ranks below lo fail, from hi on they meet
    while lo < hi:
        mid = (lo + hi) // 2
        if one.conversion(srt[mid : mid + 1][None, :])[0, 0] >= c:
            hi = mid
        else:
            lo = mid + 1
    return srt.size - lo


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
    gas_model: str = "ideal",
) -> dict[str, Any]:
    """Required conversion as a feasibility criterion: JSON-ready rows per T and the window.

    Without ``samples`` or ``sample_set`` the rows give the nominal conversion and whether it
    meets the requirement (the probability fields are None) and the window is where the nominal
    value meets it. ``sample_set`` (the call's own draws, e.g. ``UncertainAssessment.samples``)
    makes the bands and P(meets) from exactly the draws, overrides and correlations of the call;
    ``samples`` alone draws a new set (a conversion call of its own).
    ``gas_model``: ``"ideal"`` or ``"peng-robinson"`` (fugacity coefficients in the equilibrium).
    Either way the Peng–Robinson correction is estimated, and ``notes`` warns where it moves ln K
    by more than the data's standard uncertainty of ln K (or says what it did, when applied).
    """
    req = read_conversion(required)
    confidence = read_confidence(confidence, "conversion_assessment")
    if sample_set is not None and samples is not None and samples != sample_set.n:
        raise InvalidUncertainty(
            f"conversion_assessment: samples={samples} differs from the {sample_set.n} trials of "
            "the call's sample set; leave samples out"
        )
    model = read_gas_model(gas_model, "conversion_assessment")
    library = library or default_library()
    reaction = reaction if isinstance(reaction, Reaction) else Reaction.parse(reaction, library)
    if samples is None and sample_set is None:
        x = equilibrium_extent(reaction, temps, P, feed, key=key, library=library, gas_model=model)
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
        # the call's own draws when given, else a sampling of its own
        draws: dict[str, Any] = (
            {"sample_set": sample_set}
            if sample_set is not None
            else {"samples": samples, "seed": seed, "method": method}
        )
        assert sample_set is not None or samples is not None
        bands = conversion_bands(
            reaction, temps, P, feed, key, req, library=library, gas_model=model, **draws
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
    check = non_ideality(reaction, (T_K, "K"), (P_Pa, "Pa"), feed, key, library, model)
    for row, extra in zip(rows, check["rows"], strict=True):
        row.update(extra)
    return {
        "key": key,
        "required_conversion": req,
        "P_Pa": float(P_Pa[0]) if np.all(P_Pa == P_Pa[0]) else P_Pa.tolist(),
        "confidence": confidence,
        "trials": trials,
        "seed": seed,
        "shared_draws": sample_set is not None,
        "gas_model": model,
        "model": MODEL_TEXT[model],
        "rows": rows,
        "window": window,
        "T_K": T_K.tolist(),
        "notes": check["notes"],
    }


# Below this total pressure a missing critical constant is not worth a note: φ of common gases
# differs from 1 by well under 1 % at a few bar (common practice, no source).
_NOTE_MISSING_ABOVE_PA = 5e5


def non_ideality(
    reaction: str | Reaction,
    T: Any,
    P: Any,
    feed: str | Mapping[str, float],
    key: str,
    library: Library | None = None,
    gas_model: str = "ideal",
) -> dict[str, Any]:
    """How much non-ideal gases move the equilibrium, against the uncertainty of the data.

    Per T: the conversion of ``key`` with ideal gases and with Peng–Robinson fugacity
    coefficients, Σ ν ln φ at the Peng–Robinson equilibrium (the shift of ln K of the partial
    pressures), and u(ln K°) = u(ΔrG°)/RT from the data's standard uncertainties (GUM, first
    order, exact here since ΔrG° is linear in the inputs). ``notes`` warns when the shift exceeds
    u(ln K°) anywhere while the ideal gas is used, and states what the correction did when
    Peng–Robinson is used.
    """
    library = library or default_library()
    model = read_gas_model(gas_model, "non_ideality")
    rxn = reaction if isinstance(reaction, Reaction) else Reaction.parse(reaction, library)
    ideal = equilibrium_extent(rxn, T, P, feed, key=key, library=library)
    assert ideal.conversion is not None
    T_K, P_Pa = ideal.T, ideal.P
    empty = {
        "conversion_ideal_gas": None,
        "conversion_peng_robinson": None,
        "fugacity_term_lnK": None,
        "u_lnK": None,
    }
    try:
        pr = equilibrium_extent(
            rxn, T, P, feed, key=key, library=library, gas_model="peng-robinson"
        )
    except InvalidInput as exc:
        if model == "peng-robinson":
            raise
        notes = []
        if np.max(P_Pa) > _NOTE_MISSING_ABOVE_PA:
            notes.append(
                "How far these gases are from ideal at this pressure could not be estimated: "
                f"{exc.expected.split(': ', 1)[1].split(' (or')[0]}."
            )
        return {"rows": [dict(empty) for _ in T_K], "notes": notes}
    assert pr.conversion is not None and pr.fugacity_term is not None
    inputs = build_inputs(uncertain_species(rxn))
    # two draws: the linear model needs only the inputs' keys from a sample set
    drawn = draw_samples(inputs, 2, seed=0)
    u_in = np.array([inp.u for inp in inputs])
    cov = np.diag(u_in**2)  # the library's inputs are independent (DEVELOPERS.md)
    u_lnk = gum_uncertainty(linear_model(rxn, T_K, drawn), cov) / (R * T_K)
    term = pr.fugacity_term
    rows = [
        {
            "conversion_ideal_gas": float(ideal.conversion[i]),
            "conversion_peng_robinson": float(pr.conversion[i]),
            "fugacity_term_lnK": float(term[i]),
            "u_lnK": float(u_lnk[i]),
        }
        for i in range(T_K.size)
    ]
    ratio = np.abs(term) / np.where(u_lnk > 0, u_lnk, np.inf)
    i = int(np.argmax(ratio))
    where = f"{T_K[i]:.6g} K and {P_Pa[i] / 1e5:.6g} bar"
    moved = (
        f"the Peng–Robinson fugacity coefficients shift ln K of the partial pressures by "
        f"{term[i]:+.3g} at {where} ({ratio[i]:.2g} times the data's standard uncertainty of "
        f"ln K, {u_lnk[i]:.2g}) and move the equilibrium conversion of {key} from "
        f"{ideal.conversion[i]:.1%} (ideal gases) to {pr.conversion[i]:.1%}"
    )
    notes = []
    if model == "ideal" and ratio[i] > 1.0:
        notes.append(
            f"Non-ideal gases: {moved}. The ideal-gas result is not reliable here; use the "
            "Peng–Robinson gas model (gas_model='peng-robinson'; command line: "
            "--gas-model peng-robinson)."
        )
    elif model == "peng-robinson":
        srcs = "; ".join(f"{k} ({v})" for k, v in _gas_mixture(rxn, ideal.feed).sources.items())
        notes.append(f"Gas model: Peng–Robinson (k_ij = 0); {moved}. Critical constants: {srcs}.")
    return {"rows": rows, "notes": notes}

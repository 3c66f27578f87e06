"""Equilibrium of a species set by Gibbs-energy minimisation (public face: feasibly.equilibrium).

Reads the species list and the feed, sets up G°/RT and element totals per state, calls the
vectorised solver of :mod:`feasibly._gibbs`, and repeats it over Monte Carlo draws of the data.
"""

from __future__ import annotations

import re
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from fractions import Fraction
from typing import Any

import numpy as np

from .._tables import TableExport
from ..conditions import read_states, read_trials
from ..errors import (
    EquilibriumNotConverged,
    InvalidInput,
    OutsideDataRange,
    UnitError,
    UnknownSpecies,
)
from ..library import gibbs_rt
from ..library.catalogue import Library, default_library
from ..library.cp_models import R
from ..library.species import Species
from ..thermo import Caution, critical_constants, ln_fugacity_coefficients, read_gas_model
from ..thermo.reaction import Reaction, ReactionTerm, resolve_species
from ..uncertainty.inputs import Correlations, Override, build_inputs, correlation_matrix
from ..uncertainty.linear import block_rows, deviation_rows, uncertain_species
from ..uncertainty.sampling import draw_samples
from ._common import (
    _P_STD,
    BAND_PROBS,
    _fmt_state,
    _split_label,
    parse_feed,
)
from ._gibbs_solver import (
    GibbsBatch,
    reachable,
    reduce_elements,
    rescue,
    row_patterns,
    solve_batch,
)

__all__ = ["CARBON_FRACTION_CAUTION", "Equilibrium", "equilibrate"]

#: Share of the feed's carbon that must be solid at equilibrium for the carbon-deposition caution:
#: 1e-4, well above the solver's tolerance on a phase that is absent and well below any deposit
#: that matters in practice (0.01 % of the carbon fed).
CARBON_FRACTION_CAUTION = 1e-4


# --- species sets -------------------------------------------------------------------------------
@dataclass(frozen=True)
class _SpeciesSet:
    entries: tuple[Species, ...]
    tokens: tuple[str, ...]
    token_of: tuple[int, ...]  # entry → token index
    elements: tuple[str, ...]
    A: np.ndarray  # elements × entries

    @property
    def gas(self) -> np.ndarray:
        return np.array([sp.phase == "g" for sp in self.entries])


def _species_set(species: str | Sequence[str | Species], library: Library) -> _SpeciesSet:
    items: list[str | Species] = (
        re.findall(r"[^\s,()]+(?:\([^)]*\))?", species)
        if isinstance(species, str)
        else list(species)
    )
    if not items:
        raise UnknownSpecies("", detail="The species list is empty.")
    entries: list[Species] = []
    tokens: list[str] = []
    token_of: list[int] = []
    for item in items:
        if isinstance(item, Species):
            found: tuple[Species, ...] = (item,)
            tokens.append(item.id)
        else:
            formula, phase, form = _split_label(item)
            _, found = resolve_species(library, formula, phase, form, item)
            found = tuple(sp for sp in found if sp.phase in ("g", "l", "cr"))
            if not found:
                raise UnknownSpecies(item, detail="Only gases and pure condensed phases are used.")
            tokens.append(item)
        for sp in found:
            if sp.charge:
                raise UnknownSpecies(sp.id, detail="Equilibria here are for neutral species.")
            if any(sp is e for e in entries):
                raise UnknownSpecies(sp.id, detail="It is listed twice; list it once.")
            entries.append(sp)
            token_of.append(len(tokens) - 1)
    if not any(sp.phase == "g" for sp in entries):
        raise UnknownSpecies(
            " ".join(tokens), detail="List at least one gas; a gas phase is always present here."
        )
    elements = tuple(sorted({el for sp in entries for el in sp.elements}))
    A = np.array([[sp.elements.get(el, 0.0) for sp in entries] for el in elements], dtype=float)
    return _SpeciesSet(tuple(entries), tuple(tokens), tuple(token_of), elements, A)


def _feed_elements(
    feed: Mapping[str, Any], sset: _SpeciesSet, library: Library, size: int
) -> np.ndarray:
    """Element totals (size × elements) of a feed given by species names."""
    b = np.zeros((size, len(sset.elements)))
    for name, amount in feed.items():
        formula, phase, form = _split_label(name)
        match = [sp for sp in sset.entries if name in (sp.id, sp.formula)]
        if match:
            sp = match[0]
        else:
            sp = resolve_species(library, formula, phase, form, name)[1][0]
        for el, count in sp.elements.items():
            if el not in sset.elements:
                raise UnknownSpecies(
                    name, detail=f"No species of the list contains {el}; add one that does."
                )
            b[:, sset.elements.index(el)] += count * np.broadcast_to(amount, size)
    return b


def _feed_amounts(feed: Mapping[str, Any], sset: _SpeciesSet, size: int) -> np.ndarray | None:
    """The feed as amounts of the set's entries (size × entries), or None when a feed species is
    not itself an entry of the set (its elements then enter only through the totals)."""
    out = np.zeros((size, len(sset.entries)))
    for name, amount in feed.items():
        match = [j for j, sp in enumerate(sset.entries) if name in (sp.id, sp.formula)]
        if not match:
            return None
        out[:, match[0]] += np.broadcast_to(np.asarray(amount, dtype=float), size)
    return out


def _availability(sset: _SpeciesSet, T: np.ndarray) -> np.ndarray:
    """Which entries have data at each T (states × entries); refuses a token covering no T."""
    avail = np.stack([sp.covers(T) for sp in sset.entries], axis=1)
    owner = np.array(sset.token_of)
    for k, token in enumerate(sset.tokens):
        cols = owner == k
        missing = ~np.any(avail[:, cols], axis=1)
        if np.any(missing):
            group = [sp for sp, c in zip(sset.entries, cols, strict=True) if c]
            lo = min(sp.T_range[0] for sp in group)
            hi = max(sp.T_range[1] for sp in group)
            label = group[0].id if len(group) == 1 else f"{token} (all phases)"
            raise OutsideDataRange(label, float(T[missing][0]), lo, hi)
    return avail


def _gibbs_rt(sset: _SpeciesSet, T: np.ndarray, avail: np.ndarray) -> np.ndarray:
    """G°/RT of every entry at each state's T (states × entries), 0 where an entry has no data."""
    g = gibbs_rt(sset.entries, T)
    g[~avail] = 0.0
    return g


@dataclass
class _Prepared:
    sset: _SpeciesSet
    T: np.ndarray
    P: np.ndarray
    b: np.ndarray  # states × elements
    avail: np.ndarray
    feed: np.ndarray | None = None  # states × entries, when the feed is given in the set's entries

    def groups(self) -> list[tuple[np.ndarray, np.ndarray, np.ndarray]]:
        """States sharing the species their feed can make: (rows, element mask, entry mask).

        An entry is kept where its data cover T and the feed's element totals allow it a positive
        amount (:func:`reachable`); the others are exactly zero. Elements kept are those of the
        kept entries (the others have zero total).
        """
        A = self.sset.A
        keep = np.zeros(self.avail.shape, dtype=bool)
        patterns, which = row_patterns(self.avail)
        for p, pattern in enumerate(patterns):
            rows = np.nonzero(which == p)[0]
            cols = np.nonzero(pattern)[0]
            keep[np.ix_(rows, cols)] = reachable(A[:, cols], self.b[rows])
        out = []
        kinds, where = row_patterns(keep)
        for k, kind in enumerate(kinds):
            rows = np.nonzero(where == k)[0]
            el_mask = np.any(A[:, kind] != 0, axis=1)
            out.append((rows, el_mask, kind))
        return out


def _solve(
    prep: _Prepared,
    g: np.ndarray,
    warm: tuple[dict[bytes, tuple[np.ndarray, GibbsBatch]], np.ndarray] | None = None,
) -> tuple[np.ndarray, np.ndarray, dict[bytes, tuple[np.ndarray, GibbsBatch]], np.ndarray]:
    """Amounts (states × entries), converged mask, the solver state per group of states, and
    the states whose equilibrium has no gas phase at all (not converged: see :func:`rescue`).

    ``warm``: solver states of an earlier solve and, for each state here, the state there to
    start from (the nominal solution at the same T, P and feed for sampled data).
    """
    sset = prep.sset
    gas = sset.gas
    amounts = np.zeros((prep.T.size, len(sset.entries)))
    converged = np.ones(prep.T.size, dtype=bool)
    no_gas = np.zeros(prep.T.size, dtype=bool)
    solved: dict[bytes, tuple[np.ndarray, GibbsBatch]] = {}
    for rows, el_mask, keep in prep.groups():
        # One group of every state, element and entry (the usual case) needs no gathered copies.
        whole = rows.size == prep.T.size and bool(np.all(el_mask)) and bool(np.all(keep))
        A = sset.A[np.ix_(el_mask, keep)]
        Q = reduce_elements(A)
        Ar = Q.T @ A
        kg, kc = gas[keep], ~gas[keep]
        b = prep.b if whole else prep.b[np.ix_(rows, el_mask)]
        scale = b.sum(axis=1)  # total atoms: brings the reduced totals to order one
        br = (b @ Q) / scale[:, None]
        gk = g if whole else g[np.ix_(rows, keep)]
        av = prep.avail if whole else prep.avail[np.ix_(rows, keep)]
        start = start_rows = None
        if warm is not None and keep.tobytes() in warm[0]:
            rows0, start = warm[0][keep.tobytes()]
            start_rows = np.searchsorted(rows0, warm[1][rows])
        args = (
            Ar[:, kg],
            Ar[:, kc],
            gk[:, kg],
            gk[:, kc],
            br,
            np.log(prep.P[rows] / _P_STD),
            av[:, kg],
            av[:, kc],
        )
        if np.any(kg) and start is None and prep.feed is not None and not np.any(kc):
            sol = _solve_from_feed(
                args, prep.feed[np.ix_(rows, np.nonzero(keep)[0])] / scale[:, None]
            )
        elif np.any(kg):
            sol = solve_batch(*args, start=start, start_rows=start_rows)
        else:  # the feed can make no gas at all: only the dual route applies
            n, r, nc = rows.size, Ar.shape[0], int(kc.sum())
            sol = GibbsBatch(
                np.zeros((n, 0)), np.zeros(n), np.zeros((n, nc)), np.zeros((n, nc), dtype=bool),
                np.zeros((n, r)), np.zeros(n, dtype=bool), np.zeros(n, dtype=np.int64),
            )  # fmt: skip
        if not np.all(sol.converged):
            # the reduced image of the all-ones element vector: the direction of the dual's start
            no_gas[rows] = rescue(sol, *args, Q.T @ np.ones(Q.shape[0]))
        solved[keep.tobytes()] = (rows, sol)
        cols = np.nonzero(keep)[0]
        sub = np.empty((rows.size, cols.size))
        sub[:, kg] = np.exp(sol.ln_n)
        sub[:, kc] = sol.m
        sub *= scale[:, None]
        if whole:
            amounts = sub
        else:
            amounts[np.ix_(rows, cols)] = sub
        converged[rows] = sol.converged
    return amounts, converged, solved, no_gas


# The share of the total feed every gas species starts with on top of its own feed: 1 % gave the
# fewest iterations on bench_equilibrium.py's cold gas states (8.2 on average, against 11 from
# equal amounts; 0.1 %: 8.6, 10^-5: 10.9).
_FEED_START_SHARE = 0.01


def _solve_from_feed(args: tuple[np.ndarray, ...], feed: np.ndarray) -> GibbsBatch:
    """``solve_batch`` of a gas-only group started from each state's own feed (scaled like the
    totals), every species raised by a share of the total so that none starts at zero.

    The ideal-gas minimum is unique, so the start changes only how many iterations it takes; a
    state that does not converge from its feed is solved again from the usual equal amounts.
    """
    A_g, A_c, g_g, g_c, b, ln_p, av_g, av_c = args
    n0 = feed + _FEED_START_SHARE * feed.sum(axis=1, keepdims=True)
    total = n0.sum(axis=1)
    usable = np.isfinite(total) & (total > 0)
    B, r = b.shape
    with np.errstate(divide="ignore"):  # a species left at zero (no share) starts at −inf
        ln_n = np.log(np.where(usable[:, None], n0, 1.0))
    ln_N = np.log(np.where(usable, total, 1.0))
    # A state whose feed holds none of the group's species (its elements came through species
    # outside the set) starts from equal amounts, as solve_batch's own cold start does.
    n_av = np.maximum(av_g.sum(axis=1), 1)
    ln_n[~usable] = np.where(av_g[~usable], -np.log(n_av[~usable])[:, None], -np.inf)
    ln_N[~usable] = 0.0
    start = GibbsBatch(
        ln_n, ln_N, np.zeros((B, 0)), np.zeros((B, 0), dtype=bool),
        np.zeros((B, r)), np.zeros(B, dtype=bool), np.zeros(B, dtype=np.int64),
    )  # fmt: skip
    sol = solve_batch(A_g, A_c, g_g, g_c, b, ln_p, av_g, av_c, start=start)
    bad = np.nonzero(~sol.converged)[0]
    if bad.size:
        again = solve_batch(
            A_g, A_c, g_g[bad], g_c[bad], b[bad], ln_p[bad], av_g[bad], av_c[bad]
        )  # fmt: skip
        for name in ("ln_n", "ln_N", "m", "active", "pi", "converged"):
            getattr(sol, name)[bad] = getattr(again, name)
        sol.iterations[bad] += again.iterations
    return sol


# φ is iterated at the composition found until ln φ moves by less than 1e-10 (the Gibbs condition
# is then met to that level); 5–15 rounds are typical, the limit only stops a bug.
_PHI_TOL = 1e-10
_PHI_MAX_ITER = 100


def _with_fugacity(
    prep: _Prepared,
    g: np.ndarray,
    amounts: np.ndarray,
    batches: dict[bytes, tuple[np.ndarray, GibbsBatch]],
) -> np.ndarray:
    """Amounts with Peng–Robinson fugacity coefficients: G°/RT of each gas is raised by ln φ at
    the composition found, and the minimisation repeated (warm) until φ settles. At that point
    μ_j = G°_j + RT ln(φ_j x_j P/P°) = Σ a_je λ_e: the equilibrium of the non-ideal mixture."""
    gas = prep.sset.gas
    crit = critical_constants([sp for sp in prep.sset.entries if sp.phase == "g"], "equilibrate")
    ln_phi = np.zeros((prep.T.size, int(gas.sum())))
    index = np.arange(prep.T.size)
    for _ in range(_PHI_MAX_ITER):
        x = amounts[:, gas]
        new = ln_fugacity_coefficients(prep.T, prep.P, x, crit)
        step = float(np.max(np.abs(new - ln_phi)))
        ln_phi = new
        g_eff = g.copy()
        g_eff[:, gas] += ln_phi
        amounts, ok, batches, no_gas = _solve(prep, g_eff, (batches, index))
        _raise_unconverged(prep, ok, no_gas, amounts)
        if step <= _PHI_TOL:
            return amounts
    raise EquilibriumNotConverged(
        "The fugacity-coefficient iteration",
        [_fmt_state(prep.T[0], prep.P[0])],
        "The Peng–Robinson fugacity coefficients did not settle; the mixture may be near "
        "condensation. Use the ideal-gas model and treat the result as indicative only.",
    )


def _raise_unconverged(
    prep: _Prepared, ok: np.ndarray, no_gas: np.ndarray, amounts: np.ndarray
) -> None:
    """Refuse the states that did not converge, with the reason where it is known."""
    bad = np.nonzero(~ok)[0]
    if bad.size == 0:
        return
    sset = prep.sset
    if np.all(no_gas[bad]):
        i = int(bad[0])
        left = [sp.id for sp, n in zip(sset.entries, amounts[i], strict=True) if n > 0]
        raise EquilibriumNotConverged(
            "The Gibbs energy minimisation",
            [_fmt_state(prep.T[j], prep.P[j]) for j in bad],
            "There the equilibrium has no gas phase: the whole feed stays condensed (at the first "
            f"state as {', '.join(left)}), and the listed gases would together reach less than "
            "the total pressure. This calculation describes a gas phase, so it gives no "
            "composition; to get the condensed amounts, list an inert gas (e.g. Ar(g)) and add "
            "a trace of it to the feed.",
            indices=bad.tolist(),
            reasons=["no gas phase"] * bad.size,
        )
    raise EquilibriumNotConverged(
        "The Gibbs energy minimisation",
        [_fmt_state(prep.T[i], prep.P[i]) for i in bad],
        "Check that the element totals can be made from the listed species (every element must "
        "be carried by some species in the right proportions).",
        indices=bad.tolist(),
        reasons=["no gas phase" if no_gas[i] else "not converged" for i in bad],
    )


# --- results ------------------------------------------------------------------------------------
@dataclass
class Equilibrium(TableExport):
    """Equilibrium amounts of a species set at each state (T, P, feed).

    Its table ``amounts`` has one row per state and species (:meth:`to_frame`, :meth:`to_csv`).

    ``amounts`` (states × species, mol on the feed's scale) and ``gas_fractions`` (mole fractions
    in the gas phase; 0 for condensed phases). With ``samples``, ``bands`` maps ``"amounts"`` and
    ``"gas_fractions"`` to arrays (3 × states × species) at the probabilities :data:`BAND_PROBS`.
    """

    species: tuple[str, ...]
    phases: tuple[str, ...]
    elements: tuple[str, ...]
    element_matrix: np.ndarray
    T: np.ndarray
    P: np.ndarray
    feed_elements: np.ndarray
    amounts: np.ndarray
    bands: dict[str, np.ndarray] | None = None
    trials: int = 0
    seed: int | None = None
    gas_model: str = "ideal"

    @property
    def gas_fractions(self) -> np.ndarray:
        gas = np.array([p == "g" for p in self.phases])
        ng = np.where(gas, self.amounts, 0.0)
        return ng / ng.sum(axis=1, keepdims=True)

    def amount(self, species: str) -> np.ndarray:
        """Amounts of one species (by entry id) at each state, mol."""
        return self.amounts[:, self._col(species)]

    def fraction(self, species: str) -> np.ndarray:
        """Gas mole fraction of one gas species at each state."""
        return self.gas_fractions[:, self._col(species)]

    def _col(self, species: str) -> int:
        if species in self.species:
            return self.species.index(species)
        hits = [i for i, s in enumerate(self.species) if s.split("(")[0] == species]
        if len(hits) == 1:
            return hits[0]
        raise UnknownSpecies(species, [s for s in self.species if species in s] or self.species)

    def rows(self) -> list[dict[str, Any]]:
        """One JSON-ready row per state with amounts, fractions and (with samples) bands."""
        out = []
        x = self.gas_fractions
        for i in range(self.T.size):
            row: dict[str, Any] = {"T_K": float(self.T[i]), "P_Pa": float(self.P[i])}
            per = {}
            for j, sid in enumerate(self.species):
                item: dict[str, Any] = {
                    "phase": self.phases[j],
                    "amount_mol": float(self.amounts[i, j]),
                    "gas_mole_fraction": float(x[i, j]) if self.phases[j] == "g" else None,
                }
                if self.bands is not None:
                    a, y = self.bands["amounts"], self.bands["gas_fractions"]
                    item["amount_band_mol"] = [float(a[k, i, j]) for k in (0, 1, 2)]
                    if self.phases[j] == "g":
                        item["gas_mole_fraction_band"] = [float(y[k, i, j]) for k in (0, 1, 2)]
                per[sid] = item
            row["species"] = per
            out.append(row)
        return out

    def cautions(self) -> list[Caution]:
        """Solid carbon at equilibrium (coke, soot): one caution naming the state with the most,
        when solid carbon holds more than :data:`CARBON_FRACTION_CAUTION` of the feed's carbon.

        Only a carbon species in the set can show it: include ``C(s)`` (graphite) in the species
        to ask. Nothing is said about the rate at which carbon actually deposits.
        """
        if "C" not in self.elements:
            return []
        solid = [
            j
            for j, sid in enumerate(self.species)
            if self.phases[j] != "g" and _split_label(sid)[0] == "C"
        ]
        if not solid:
            return []
        fed = self.feed_elements[:, self.elements.index("C")]
        deposit = self.amounts[:, solid].sum(axis=1)
        share = np.divide(deposit, fed, out=np.zeros_like(deposit), where=fed > 0)
        k = int(np.argmax(share))
        if share[k] <= CARBON_FRACTION_CAUTION:
            return []
        where = f"{self.T[k]:.0f} K and {self.P[k] / 1e5:.4g} bar"
        states = int(np.count_nonzero(share > CARBON_FRACTION_CAUTION))
        return [
            Caution(
                "carbon deposition",
                f"Solid carbon at equilibrium: at {where}, {deposit[k]:.3g} mol of carbon "
                f"({100 * share[k]:.3g} % of the carbon fed) is solid, in {states} of "
                f"{self.T.size} states computed. Carbon (coke, soot) can foul catalysts, block "
                "tubes and beds and cause hot spots; whether and how fast it forms is kinetics.",
                f"n(C, solid) = {deposit[k]:.4g} mol of {fed[k]:.4g} mol C fed at {where} — "
                "this equilibrium (Gibbs minimum over the species given)",
            )
        ]

    def tables(self) -> dict[str, list[dict[str, Any]]]:
        """``amounts``: one row per state and species (with samples: the 2.5/50/97.5 % band)."""
        flat = []
        for row in self.rows():
            for sid, item in row["species"].items():
                line: dict[str, Any] = {"T_K": row["T_K"], "P_Pa": row["P_Pa"], "species": sid}
                line["phase"] = item["phase"]
                line["amount_mol"] = item["amount_mol"]
                line["gas_mole_fraction"] = item["gas_mole_fraction"]
                for key, label in (("amount_band_mol", "amount"), ("gas_mole_fraction_band", "y")):
                    if key in item:
                        for tag, v in zip(("lo", "median", "hi"), item[key], strict=True):
                            line[f"{label}_{tag}"] = v
                flat.append(line)
        return {"amounts": flat}

    def to_dict(self) -> dict[str, Any]:
        return {
            "model": (
                "Peng–Robinson gas mixture (fugacity coefficients, k_ij = 0)"
                if self.gas_model == "peng-robinson"
                else "ideal-gas mixture"
            )
            + " + pure condensed phases; standard state 1 bar",
            "gas_model": self.gas_model,
            "elements": list(self.elements),
            "trials": self.trials,
            "seed": self.seed,
            "band_probabilities": list(BAND_PROBS) if self.bands is not None else None,
            "rows": self.rows(),
            "cautions": [c.as_dict() for c in self.cautions()],
        }


def _species_rows(
    entries: Sequence[Species], T: np.ndarray, avail: np.ndarray, library: Library, keys: list
) -> np.ndarray:
    """∂G_i/∂x (states × species × inputs): each species' own linear rows in the inputs."""
    index = {k: i for i, k in enumerate(keys)}
    pseudo = Reaction([], "", library)
    out = np.zeros((T.size, len(entries), len(keys)))
    for j, sp in enumerate(entries):
        mask = avail[:, j]
        if not np.any(mask):
            continue
        h = np.zeros((T.size, len(keys)))
        s = np.zeros((T.size, len(keys)))
        deviation_rows(sp, T[mask], pseudo, index, h, s, 1.0, mask)
        out[:, j, :] = h - T[:, None] * s
    return out


def _uncertain(entries: Sequence[Species], library: Library) -> list[Species]:
    terms = [
        ReactionTerm(Fraction(1), sp.id, sp.formula, sp.phase, sp.form, (sp,)) for sp in entries
    ]
    return uncertain_species(Reaction(terms, "", library))


def equilibrate(
    species: str | Sequence[str | Species],
    T: Any,
    P: Any = "1 bar",
    feed: str | Mapping[str, Any] | None = None,
    *,
    elements: Mapping[str, Any] | None = None,
    library: Library | None = None,
    samples: int | None = None,
    seed: int | None = None,
    overrides: Sequence[Override] = (),
    correlations: Correlations | None = None,
    gas_model: str = "ideal",
) -> Equilibrium:
    """Equilibrium composition of a species set by Gibbs-energy minimisation at T and P.

    ``species``: "CH4(g) H2O(g) CO(g) CO2(g) H2(g) C(s)" or a list; a name without a phase
    brings every phase the library has for it (each where its data covers T). The element totals
    come from ``feed`` (amounts by species name; scalars or arrays, one per state) or directly
    from ``elements``. ``T`` and ``P`` carry units and broadcast together. With ``samples`` the
    calculation is repeated over that many draws of the property data (``seed`` makes it
    reproducible) and ``bands`` holds the 2.5/50/97.5 % values. ``gas_model="peng-robinson"``
    gives the gases fugacity coefficients from the Peng–Robinson equation of state
    (:mod:`feasibly.thermo.fugacity`), found by iterating φ at the composition to convergence.

    >>> eq = equilibrate("CO H2O CO2 H2", "1000 K", "1 bar", "CO:1, H2O:1")
    >>> round(float(eq.fraction("H2")[0]), 3)
    0.272
    """
    library = library or default_library()
    model = read_gas_model(gas_model, "equilibrate")
    if model == "peng-robinson" and samples is not None:
        raise InvalidInput(
            "samples",
            "equilibrate",
            "None with gas_model='peng-robinson' (bands over sampled data are offered with "
            "ideal gases here; for one reaction, conversion_bands gives them with Peng–Robinson)",
            samples,
        )
    sset = _species_set(species, library)
    T_K, P_Pa = read_states(T, P)
    if (feed is None) == (elements is None):
        raise UnitError(feed, "feed", "give either a feed or element totals, not both or neither")
    if feed is not None:
        amounts_in = parse_feed(feed)
        sizes = {np.size(v) for v in amounts_in.values()} - {1}
    else:
        assert elements is not None
        amounts_in = {}
        sizes = {np.size(v) for v in elements.values()} - {1}
    size = max([T_K.size, *sizes])
    if len(sizes | {T_K.size} - {1}) > 1:
        raise UnitError(sizes, "feed", "array amounts must have one value per temperature")
    T_K, P_Pa = np.broadcast_to(T_K, size).copy(), np.broadcast_to(P_Pa, size).copy()
    if feed is not None:
        b = _feed_elements(amounts_in, sset, library, size)
    else:
        assert elements is not None
        b = np.zeros((size, len(sset.elements)))
        for el, v in elements.items():
            if el not in sset.elements:
                raise UnknownSpecies(el, detail="No species of the list contains this element.")
            b[:, sset.elements.index(el)] = np.broadcast_to(np.asarray(v, dtype=float), size)
        if np.any(b < 0) or not np.all(np.isfinite(b)) or np.any(b.sum(axis=1) <= 0):
            raise UnitError(elements, "element totals", "totals must be finite, ≥ 0, not all 0")
    avail = _availability(sset, T_K)
    feed_amounts = _feed_amounts(amounts_in, sset, size) if feed is not None else None
    prep = _Prepared(sset, T_K, P_Pa, b, avail, feed_amounts)
    g = _gibbs_rt(sset, T_K, avail)
    amounts, ok, batches, no_gas = _solve(prep, g)
    _raise_unconverged(prep, ok, no_gas, amounts)
    if model == "peng-robinson":
        amounts = _with_fugacity(prep, g, amounts, batches)
    result = Equilibrium(
        tuple(sp.id for sp in sset.entries),
        tuple(sp.phase for sp in sset.entries),
        sset.elements,
        sset.A,
        T_K,
        P_Pa,
        b,
        amounts,
        gas_model=model,
    )
    if samples is None:
        return result
    inputs = build_inputs(_uncertain(sset.entries, library), overrides)
    read_trials(samples, "samples", "equilibrate", len(inputs), size)  # before allocating
    drawn = draw_samples(
        inputs, samples, seed=seed, correlation=correlation_matrix(inputs, correlations)
    )
    rows = _species_rows(sset.entries, T_K, avail, library, drawn.keys)
    n = drawn.n
    bands = {k: np.empty((3, size, len(sset.entries))) for k in ("amounts", "gas_fractions")}
    gas = sset.gas
    # states per block: keeps the sampled arrays (block × N × species) to a few tens of MB
    chunk = max(1, block_rows(n * len(sset.entries)))
    for a in range(0, size, chunk):
        sl = slice(a, min(a + chunk, size))
        m = sl.stop - sl.start
        dg = rows[sl] @ drawn.values  # (m, species, N), J/mol
        g_s = g[sl, :, None] + dg / (R * T_K[sl, None, None])
        g_flat = np.moveaxis(g_s, 2, 1).reshape(m * n, -1)
        rep = np.repeat(np.arange(sl.start, sl.stop), n)
        sub = _Prepared(sset, *(np.repeat(x[sl], n, axis=0) for x in (T_K, P_Pa, b, avail)))
        amt, ok_s, _, no_gas_s = _solve(sub, g_flat, (batches, rep))
        _raise_unconverged(sub, ok_s, no_gas_s, amt)
        amt = amt.reshape(m, n, -1)
        ng = np.where(gas, amt, 0.0)
        frac = ng / ng.sum(axis=2, keepdims=True)
        bands["amounts"][:, sl] = np.quantile(amt, BAND_PROBS, axis=1)
        bands["gas_fractions"][:, sl] = np.quantile(frac, BAND_PROBS, axis=1)
    result.bands = bands
    result.trials = n
    result.seed = seed
    return result

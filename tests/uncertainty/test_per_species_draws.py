"""Draws with one stream per input (``method="mc-per-species"``): an input draws the same values
whichever other inputs a call holds, so separately run reactions share their species' draws.

Monte Carlo checks are seeded and size their tolerance from N (4 standard errors, common practice,
no source).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
import uncertainties
from scipy import stats

import feasibly
from feasibly import InvalidUncertainty
from feasibly.uncertainty import (
    assess_uncertainty,
    build_inputs,
    draw_samples,
    extend_samples,
    uncertain_species,
)


def _inputs(*equations: str) -> list[feasibly.uncertainty.UncertainInput]:
    lib = feasibly.default_library()
    species = {
        sp.id: sp for eq in equations for sp in uncertain_species(feasibly.Reaction.parse(eq, lib))
    }
    return build_inputs(species.values(), ())


def test_an_input_draws_the_same_values_whatever_else_is_drawn() -> None:
    small = _inputs("MgCO3 -> MgO + CO2")
    large = _inputs("MgCO3 -> MgO + CO2", "CaCO3 -> CaO + CO2", "CO + H2O -> CO2 + H2")
    assert len(large) > len(small)
    alone = draw_samples(small, 5000, method="mc-per-species", seed=42)
    shared = draw_samples(large[::-1], 5000, method="mc-per-species", seed=42)
    assert np.array_equal(shared.subset(alone.keys).values, alone.values)
    # Another seed, or the joint stream, gives other numbers (so the comparison can fail).
    other = draw_samples(small, 5000, method="mc-per-species", seed=43)
    assert not np.array_equal(other.values, alone.values)
    joint_small = draw_samples(small, 5000, method="mc", seed=42)
    joint_large = draw_samples(large, 5000, method="mc", seed=42)
    assert not np.array_equal(joint_large.subset(joint_small.keys).values, joint_small.values)


def test_per_species_draws_have_the_stated_distribution() -> None:
    # Each row is N(shift, u): the mean within 4 standard errors and a Kolmogorov–Smirnov test
    # against scipy.stats.norm (p > 1e-4: fails by chance once in 10^4 runs).
    n = 50_000
    drawn = draw_samples(_inputs("CaCO3 -> CaO + CO2"), n, method="mc-per-species", seed=7)
    for inp, row in zip(drawn.inputs, drawn.values, strict=True):
        if inp.u == 0:
            continue
        assert abs(row.mean() - inp.shift) < 4 * inp.u / math.sqrt(n)
        assert stats.kstest((row - inp.shift) / inp.u, stats.norm.cdf).pvalue > 1e-4
    # Rows of different inputs are independent: |r| within 4/sqrt(N).
    r = np.corrcoef(drawn.values[0], drawn.values[1])[0, 1]
    assert abs(r) < 4 / math.sqrt(n)


def test_further_blocks_continue_each_stream() -> None:
    ins = _inputs("MgCO3 -> MgO + CO2")
    first = draw_samples(ins, 1000, method="mc-per-species", seed=5)
    more = extend_samples(first, 2000)
    assert more.blocks == [1000, 2000]
    assert np.array_equal(more.values[:, :1000], first.values)
    # The second block is keyed too: the same whatever other inputs are drawn with it.
    wide = extend_samples(draw_samples(ins[::-1], 1000, method="mc-per-species", seed=5), 2000)
    assert np.array_equal(wide.subset(more.keys).values, more.values)
    assert not np.array_equal(more.values[:, 1000:2000], first.values)


def test_without_a_seed_one_is_drawn_and_kept() -> None:
    ins = _inputs("MgCO3 -> MgO + CO2")
    drawn = draw_samples(ins, 1000, method="mc-per-species")
    assert isinstance(drawn.seed, int)
    again = draw_samples(ins, 1000, method="mc-per-species", seed=drawn.seed)
    assert np.array_equal(again.values, drawn.values)


def test_separate_calls_are_correlated_through_shared_species() -> None:
    # Two reactions sharing CO2(g) and CO(g), run separately with the same seed: the correlation
    # of their sampled ΔrG equals the first-order one from the `uncertainties` package (exact
    # here: ΔrG is linear in normal inputs), within 4 standard errors of a sample correlation,
    # (1 - ρ²)/sqrt(N) (Fisher, from memory).
    n, T = 200_000, 1000.0
    a = assess_uncertainty(
        "CO + H2O -> CO2 + H2", T=(T, "K"), samples=n, seed=3, method="mc-per-species"
    )
    b = assess_uncertainty(
        "2 CO -> C + CO2", T=(T, "K"), samples=n, seed=3, method="mc-per-species"
    )
    r_mc = np.corrcoef(a.samples_at(T), b.samples_at(T))[0, 1]
    shared = {inp.key: inp for inp in (*a.samples.inputs, *b.samples.inputs)}
    x = {k: uncertainties.ufloat(0.0, inp.u) for k, inp in shared.items()}

    def linear(assessment: feasibly.UncertainAssessment) -> object:
        row = assessment.model.aG[0]
        return sum(c * x[inp.key] for c, inp in zip(row, assessment.samples.inputs, strict=True))

    r_ref = uncertainties.correlation_matrix([linear(a), linear(b)])[0, 1]
    assert abs(r_ref) > 0.3  # the check means something: the reactions do share variance
    assert r_mc == pytest.approx(r_ref, abs=4 * (1 - r_ref**2) / math.sqrt(n))


def test_given_draws_refuse_what_they_already_fix() -> None:
    drawn = draw_samples(_inputs("MgCO3 -> MgO + CO2"), 1000, method="mc-per-species", seed=1)
    with pytest.raises(feasibly.InvalidInput, match="'draws' parameter of assess_uncertainty"):
        assess_uncertainty("MgCO3 -> MgO + CO2", T="800 K", draws=drawn, adaptive=True)
    with pytest.raises(feasibly.InvalidInput, match="Got 'draws without CaCO3"):
        assess_uncertainty("CaCO3 -> CaO + CO2", T="800 K", draws=drawn)
    with pytest.raises(InvalidUncertainty, match="'mc-per-species'"):
        draw_samples(_inputs("MgCO3 -> MgO + CO2"), 1000, method="per-species")  # type: ignore[arg-type]

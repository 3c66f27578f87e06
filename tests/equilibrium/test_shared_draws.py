"""One set of draws behind every number of a call: the conversion criterion uses the call's own
sample set, overrides and correlations (issue: it drew 4,000 trials of its own).

Independent check: with the call made at the required conversion, P(ΔrG < 0 at the composition
of the required conversion) from the linear ΔrG model and P(conversion ≥ required) from the
equilibrium-extent solver must be the same fraction of the same trials — two routes that share
no code but the draws (G falls along the extent up to equilibrium, so the two events coincide).
"""

from __future__ import annotations

import numpy as np
import pytest

from feasibly import assess_uncertainty
from feasibly.equilibrium import conversion_assessment, conversion_bands
from feasibly.errors import InvalidUncertainty
from feasibly.uncertainty import parse_override

EQ = "CH4 + H2O -> CO + 3 H2"
FEED = "CH4:1, H2O:3"
AT = {"feed": FEED, "key": "CH4", "required": "60%", "P": "5 bar"}


def _call(**kw: object) -> object:
    return assess_uncertainty(
        EQ, T_range=("880 K", "960 K"), points=9, samples=4096, seed=5, at_conversion=AT, **kw
    )


def test_conversion_probability_is_the_calls_probability_on_the_same_draws() -> None:
    u = _call()
    c = conversion_assessment(
        u.reaction, (u.T, "K"), FEED, "CH4", "60%", "5 bar", sample_set=u.samples
    )
    p_conv = np.array([r["P_meets_required"] for r in c["rows"]])
    assert c["trials"] == u.trials and c["seed"] == u.samples.seed and c["shared_draws"]
    assert 0.0 < p_conv.max() and p_conv.min() < 1.0 and np.any((p_conv > 0) & (p_conv < 1))
    # Same trials, same events: equal up to a trial whose ΔrG sits within rounding of zero.
    assert np.max(np.abs(p_conv - u.p_feasible)) <= 1.0 / u.trials


def test_an_override_moves_the_conversion_block_too() -> None:
    base = _call()
    ov = parse_override("CH4(g):dHf = -72.0 ± 0.5 kJ/mol; invented for this test")
    moved = _call(overrides=[ov])
    c0 = conversion_assessment(
        base.reaction, (base.T, "K"), FEED, "CH4", "60%", "5 bar", sample_set=base.samples
    )
    c1 = conversion_assessment(
        moved.reaction, (moved.T, "K"), FEED, "CH4", "60%", "5 bar", sample_set=moved.samples
    )
    p0 = [r["P_meets_required"] for r in c0["rows"]]
    p1 = [r["P_meets_required"] for r in c1["rows"]]
    assert p0 != p1  # before the fix the conversion block stayed identical to the last bit
    # A less stable CH4 (ΔfH° 2.9 kJ/mol above the library's) favours reforming: more conversion.
    n0 = [r["conversion"] for r in c0["rows"]]
    n1 = [r["conversion"] for r in c1["rows"]]
    assert all(b > a for a, b in zip(n0, n1, strict=True))
    assert np.all(np.array(p1) >= np.array(p0))
    assert np.max(np.abs(np.array(p1) - moved.p_feasible)) <= 1.0 / moved.trials


def test_correlations_reach_the_conversion_block() -> None:
    corr = {(("CO(g)", "dHf"), ("CH4(g)", "dHf")): 0.9}
    a = _call()
    b = _call(correlations=corr)
    ca = conversion_bands(EQ, (a.T, "K"), "5 bar", FEED, "CH4", "60%", sample_set=a.samples)
    cb = conversion_bands(EQ, (b.T, "K"), "5 bar", FEED, "CH4", "60%", sample_set=b.samples)
    assert not np.array_equal(ca.hi - ca.lo, cb.hi - cb.lo)


def test_a_sample_set_excludes_its_own_sampling_settings() -> None:
    u = _call()
    with pytest.raises(InvalidUncertainty, match="leave out"):
        conversion_bands(EQ, (u.T, "K"), "5 bar", FEED, "CH4", "60%", seed=1, sample_set=u.samples)
    with pytest.raises(InvalidUncertainty, match="leave samples out"):
        conversion_assessment(
            EQ, (u.T, "K"), FEED, "CH4", "60%", "5 bar", samples=4000, sample_set=u.samples
        )

"""Conversion bands from a few extents per temperature (ranks of ln K) against an extent per trial.

Reference: the full solve (one equilibrium extent per trial, ``np.quantile`` and the mean of the
indicator over all trials), which the rank route must reproduce to the last bit: the extent is a
non-decreasing function of ln K in each row, so the order statistics of the conversion are
those of ln K. Cases cover a gas reaction with an inert (ammonia), a decomposition whose solid
can be used up (calcite, magnesite), a reaction without change of gas amount (water-gas shift),
requirements met by none, some and all trials, and trial counts of odd and even size.
"""

from __future__ import annotations

import numpy as np
import pytest

import feasibly
from feasibly.equilibrium import conversion as conv_module
from feasibly.equilibrium import conversion_bands

CASES = [
    # equation, temperatures (K), pressure, feed, key, required, trials, seed
    ("N2 + 3 H2 -> 2 NH3", np.linspace(550.0, 800.0, 11), "200 bar", "N2:1, H2:3, Ar:0.2", "N2",
     0.3, 4096, 1),
    ("MgCO3 -> MgO + CO2", np.linspace(500.0, 900.0, 41), "1 bar", "MgCO3:1, N2:4", "MgCO3",
     0.3, 20_000, 7),
    ("CaCO3 -> CaO + CO2", np.linspace(900.0, 1200.0, 13), "1 bar", "CaCO3:1", "CaCO3", 0.999,
     3001, 3),
    ("CO + H2O -> CO2 + H2", np.linspace(500.0, 1200.0, 15), "10 bar", "CO:1, H2O:1.5", "CO",
     0.9, 5000, 11),
    # a requirement of 100 % (the key at its bound: counted by bisection over the sorted ln K)
    ("CaCO3 -> CaO + CO2", np.linspace(900.0, 1200.0, 7), "1 bar", "CaCO3:1, N2:9", "CaCO3",
     1.0, 2000, 5),
    # a requirement the feed cannot reach (H2O runs out at 50 %): no trial meets it
    ("CO + H2O -> CO2 + H2", np.linspace(500.0, 900.0, 5), "1 bar", "CO:1, H2O:0.5", "CO",
     0.9, 1000, 2),
]  # fmt: skip


@pytest.mark.parametrize(("equation", "T", "P", "feed", "key", "required", "n", "seed"), CASES)
def test_rank_route_gives_the_full_solve_to_the_bit(
    equation, T, P, feed, key, required, n, seed, monkeypatch
):
    rxn = feasibly.Reaction.parse(equation)
    kw = {"samples": n, "seed": seed}
    fast = conversion_bands(rxn, (T, "K"), P, feed, key, required, **kw)
    # the same call with the rank route replaced by the full solve
    monkeypatch.setattr(conv_module, "_bands_by_rank", conv_module._bands_full)
    full = conversion_bands(rxn, (T, "K"), P, feed, key, required, **kw)
    for name in ("nominal", "lo", "median", "hi", "p_meets", "p_meets_se"):
        np.testing.assert_array_equal(getattr(fast, name), getattr(full, name), err_msg=name)
    # the cases reach requirements met by no trial, by some and by all
    assert np.any(full.p_meets == 0) or np.any(full.p_meets == 1) or equation.startswith("N2")
    if "H2O:0.5" in feed:
        assert np.all(full.p_meets == 0)
    else:
        assert np.any((full.p_meets > 0) & (full.p_meets < 1))


def test_rank_route_without_a_requirement_and_with_one_trial_rank_each_side():
    # CO + H2O -> CO2 + H2 from CO:1, H2O:1 at 1 bar, three temperature rows, random ln K
    states = conv_module._States(
        np.array([-1.0, -1.0, 1.0, 1.0]),
        np.ones((3, 4), dtype=bool),
        np.array([1.0, 1.0, 0.0, 0.0]),
        0.0,
        np.zeros(3),
        np.array([600.0, 800.0, 1000.0]),
        np.full(3, 1e5),
        0,
        None,
    )
    rng = np.random.default_rng(5)
    for n in (2, 3, 4, 5, 101):
        ln_k = rng.normal(0.0, 2.0, (3, n))
        # ln K = 0 gives 50 % conversion here (K = x²/(1 − x)²): trials at and next to it are
        # inside the window that is solved one by one
        ln_k[:, :2] = [0.0, 1e-15] if n < 5 else ln_k[:, :2]
        if n >= 5:
            ln_k[:, :5] = [0.0, 1e-15, -1e-15, 4e-12, -4e-12]
        q_fast, p_fast = conv_module._bands_by_rank(states, ln_k, None)
        q_full, p_full = conv_module._bands_full(states, ln_k, None)
        np.testing.assert_array_equal(q_fast, q_full)
        assert np.all(np.isnan(p_fast)) and np.all(np.isnan(p_full))
        for req in (0.01, 0.5, 0.99):
            q_fast, p_fast = conv_module._bands_by_rank(states, ln_k, req)
            q_full, p_full = conv_module._bands_full(states, ln_k, req)
            np.testing.assert_array_equal(q_fast, q_full)
            np.testing.assert_array_equal(p_fast, p_full)


def test_peng_robinson_keeps_the_full_solve(monkeypatch):
    # φ depends on the composition, so the rank argument is not made there: the full solve runs
    calls = []
    monkeypatch.setattr(
        conv_module, "_bands_by_rank", lambda *a: calls.append(a) or conv_module._bands_full(*a)
    )
    conversion_bands("N2 + 3 H2 -> 2 NH3", "700 K", "200 bar", "N2:1, H2:3", "N2", 0.3,
                     samples=256, seed=1, gas_model="peng-robinson")  # fmt: skip
    assert calls == []
    conversion_bands("N2 + 3 H2 -> 2 NH3", "700 K", "200 bar", "N2:1, H2:3", "N2", 0.3,
                     samples=256, seed=1)  # fmt: skip
    assert len(calls) == 1

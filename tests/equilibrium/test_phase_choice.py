"""The condensed-phase choice of many states at once against the choice made state by state.

The Gibbs solver changes the set of condensed phases of the states that ask for it after each
Newton step. ``_choose_phases_batch`` does it for all of them together; ``_choose_phases`` is
the rule for one state (a phase with a negative amount leaves, the most negative first, unless
the species left would not span the elements; otherwise the absent phase that lowers G the most
enters). Both must make the same choice for every state, including the states whose leaving
phase would take the last carrier of an element away, which the batch hands to the one-state
rule.
"""

from __future__ import annotations

import numpy as np
import pytest

from feasibly.equilibrium import _gibbs_solver as gs

# Elements Ca, C, O. Gases CO2, CO, O2 carry no calcium, so a state whose only calcium-bearing
# phase leaves would lose the span of the elements.
A_G = np.array([[0.0, 0.0, 0.0], [1.0, 1.0, 0.0], [2.0, 1.0, 2.0]])
# Condensed CaO, CaCO3, graphite.
A_C = np.array([[1.0, 1.0, 0.0], [0.0, 1.0, 1.0], [1.0, 3.0, 0.0]])


def _problem(states: int, rng: np.random.Generator) -> gs._Problem:
    ng, nc = A_G.shape[1], A_C.shape[1]
    return gs._Problem(
        A_g=A_G,
        A_c=A_C,
        g_g=rng.normal(size=(states, ng)),
        g_c=rng.normal(scale=3.0, size=(states, nc)),
        b=np.ones((states, 3)),
        ln_p=np.zeros(states),
        avail_g=rng.random((states, ng)) < 0.9,
        avail_c=rng.random((states, nc)) < 0.8,
        max_iter=50,
        pivot_tol=1e-12,
    )


@pytest.mark.parametrize("seed", [1, 2, 3])
def test_batch_choice_is_the_one_state_choice(seed: int) -> None:
    rng = np.random.default_rng(seed)
    states = 3000
    prob = _problem(states, rng)
    active = (rng.random((states, A_C.shape[1])) < 0.6) & prob.avail_c
    m = np.where(active, rng.normal(size=active.shape), 0.0)
    pi = rng.normal(size=(states, 3))
    # The states that go through the phase choice (every other one), in a shuffled order.
    chosen = rng.permutation(states)[: states // 2]
    # A few states whose absent phases would lower G by less than the entry tolerance: none
    # may enter.
    near = chosen[:40]
    m[near] = np.abs(m[near])
    prob.g_c[near] = pi[near] @ A_C - 0.5 * gs._ADD_TOL
    active0, m0 = active.copy(), m.copy()

    one_active, one_m = active.copy(), m.copy()
    expected = np.empty(chosen.size, dtype=bool)
    for k, j in enumerate(chosen):
        expected[k] = gs._choose_phases(
            A_G, A_C, prob.g_c[j], pi[j], prob.avail_g[j], prob.avail_c[j], one_active[j], one_m[j]
        )

    got = gs._choose_phases_batch(
        prob, active, m, pi.copy(), chosen, prob.g_c[chosen].T.copy(), pi[chosen].T.copy()
    )
    np.testing.assert_array_equal(got, expected)
    np.testing.assert_array_equal(active, one_active)
    np.testing.assert_array_equal(m, one_m)
    # Every path of the rule was taken: a phase left, a phase entered, nothing changed, and a
    # leaving phase would have broken the span (the one-state rule then decided).
    start_active, start_m = active0[chosen], m0[chosen]
    neg = start_active & (start_m < 0)
    left = neg.any(axis=1)
    entered = ~left & expected
    assert left.sum() > 0 and entered.sum() > 0 and (~expected).sum() > 0
    a_all = np.hstack([A_G, A_C])
    breaking = 0
    for k in np.nonzero(left)[0]:
        c = int(np.argmin(np.where(neg[k], start_m[k], np.inf)))
        trial = start_active[k].copy()
        trial[c] = False
        breaking += not gs._spans(a_all, np.concatenate([prob.avail_g[chosen[k]], trial]))
    assert breaking > 0

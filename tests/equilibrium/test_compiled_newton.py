"""The compiled Newton iteration for gas-only states (``_newton.c``) against its numpy twin
(``_gibbs_solver._iterate``) and against Cantera's ``equilibrate('TP')`` (the outside reference,
species built from the library's own coefficients by tests/reference/_refs.py).

What is required of the twins, and why not the bits: both do the same iteration with the same
rules and the same order of every sum, but numpy's exp and its BLAS matrix products round their
last bit differently from the kernel's, so the iterates differ by rounding. Converged states
therefore agree to the accuracy the iteration itself promises (every step below 1e-12 of the total
amount, trace species settled to 1e-9 relative: ``_TOL``, ``_TRACE_STEP_TOL``), not to the bit;
a state whose last step lands on a tolerance can take one step more in one of the two.
"""

from __future__ import annotations

import importlib.util
from pathlib import Path
from typing import Any

import numpy as np
import pytest

import feasibly
from feasibly.equilibrium import _gibbs_solver as gs
from feasibly.equilibrium import _newton, equilibrate
from feasibly.equilibrium import composition as se

LIB = feasibly.default_library()
compiled = pytest.mark.skipif(
    not _newton.compiled(),
    reason="C kernels not built in this tree (bin/build-kernel); the installed wheel has them",
)
NINE = "CH4(g) H2O(g) CO(g) CO2(g) H2(g) N2(g) NH3(g) C2H6(g) CH3OH(g)"
# Trace species by the dozen orders of magnitude: O, H and OH at 700 K are ~1e-20 and below.
OXY = "H2(g) O2(g) H2O(g) OH(g) H(g) O(g) N2(g) NO(g)"


def _problem(species: str, feed: dict[str, np.ndarray], T: np.ndarray, P_bar: np.ndarray):  # type: ignore[no-untyped-def]
    """solve_batch's arguments for a gas-only set, prepared as composition._solve does."""
    sset = se._species_set(species, LIB)
    n = T.size
    b = se._feed_elements(feed, sset, LIB, n)
    avail = se._availability(sset, T)
    g = se._gibbs_rt(sset, T, avail)
    Q = gs.reduce_elements(sset.A)
    Ar = Q.T @ sset.A
    br = (b @ Q) / b.sum(axis=1)[:, None]
    return sset, (Ar, Ar[:, :0], g, g[:, :0], br, np.log(P_bar), avail, avail[:, :0])


def _nine(n: int, seed: int):  # type: ignore[no-untyped-def]
    rng = np.random.default_rng(seed)
    T = rng.uniform(600.0, 1300.0, n)
    P = np.exp(rng.uniform(0.0, np.log(50.0), n))
    feed = {
        "CH4(g)": rng.uniform(0.2, 2.0, n),
        "H2O(g)": rng.uniform(0.5, 4.0, n),
        "CO2(g)": rng.uniform(0.0, 1.0, n),
        "N2(g)": rng.uniform(0.0, 2.0, n),
    }
    return (T, P, feed), _problem(NINE, feed, T, P)


def _solve(args, monkeypatch: pytest.MonkeyPatch, use_kernel: bool, **kw) -> gs.GibbsBatch:  # type: ignore[no-untyped-def]
    with monkeypatch.context() as m:
        m.setattr(_newton, "compiled", lambda: use_kernel)
        if not use_kernel:
            # the numpy twin must not reach the kernel at all
            m.setattr(_newton, "newton_gas", _refuse)
        return gs.solve_batch(*args, **kw)


def _refuse(*args: object, **kw: object) -> None:
    raise AssertionError("the compiled kernel was called")


def _twins(args, monkeypatch: pytest.MonkeyPatch, **kw) -> tuple[gs.GibbsBatch, gs.GibbsBatch]:  # type: ignore[no-untyped-def]
    return (
        _solve(args, monkeypatch, True, **kw),
        _solve(args, monkeypatch, False, **kw),
    )


def _assert_twins_agree(c: gs.GibbsBatch, p: gs.GibbsBatch, min_same_iter: float = 0.99) -> None:
    """Same converged flags; iteration counts equal in nearly every state and never more than
    one apart; converged amounts as close as the convergence rules make them (see the header)."""
    np.testing.assert_array_equal(c.converged, p.converged)
    diff = np.abs(c.iterations - p.iterations)
    assert diff.max() <= 1
    assert np.mean(diff == 0) >= min_same_iter
    ok = p.converged
    N = np.exp(p.ln_N[ok])[:, None]
    # every step below 1e-12 of N at the end: amounts to a few times that, absolutely
    assert np.all(np.abs(np.exp(c.ln_n[ok]) - np.exp(p.ln_n[ok])) <= 1e-11 * N)
    # species above mole fraction 1e-50 settled to 1e-9 in ln n (_TRACE_STEP_TOL)
    lnx = p.ln_n[ok] - p.ln_N[ok, None]
    checked = lnx > gs._LN_TRACE_CHECKED
    assert np.all(np.abs(c.ln_n[ok][checked] - p.ln_n[ok][checked]) <= 1e-9)
    np.testing.assert_allclose(c.ln_N[ok], p.ln_N[ok], rtol=0, atol=1e-11)


@compiled
def test_cold_states_of_nine_gases_match_the_numpy_twin(monkeypatch: pytest.MonkeyPatch) -> None:
    # 3000 distinct cold states from equal amounts (solve_batch's own start)
    _, (_, args) = _nine(3000, 1)
    c, p = _twins(args, monkeypatch)
    assert p.converged.all()
    _assert_twins_agree(c, p)


@compiled
def test_trace_species_match_the_numpy_twin(monkeypatch: pytest.MonkeyPatch) -> None:
    rng = np.random.default_rng(2)
    n = 1500
    T = rng.uniform(300.0, 3000.0, n)
    P = np.exp(rng.uniform(np.log(0.1), np.log(100.0), n))
    feed = {
        "H2(g)": rng.uniform(0.1, 2.0, n),
        "O2(g)": rng.uniform(0.1, 1.0, n),
        "N2(g)": rng.uniform(0.0, 3.0, n),
    }
    _, args = _problem(OXY, feed, T, P)
    c, p = _twins(args, monkeypatch)
    lnx = p.ln_n - p.ln_N[:, None]
    # the set does exercise the trace rules: species far below 1e-8, and below the 1e-50 check
    assert np.any(lnx < np.log(1e-30)) and np.any(lnx < gs._LN_TRACE_CHECKED)
    # a few states, with amounts down near the underflow, end with a singular system in both
    # (composition then takes them through the dual problem, gs.rescue)
    assert np.mean(p.converged) > 0.95
    _assert_twins_agree(c, p)


@compiled
def test_unavailable_species_match_the_numpy_twin(monkeypatch: pytest.MonkeyPatch) -> None:
    # Species withdrawn at random per state (as outside their data range): ln n stays −inf.
    _, (_, args) = _nine(2000, 3)
    avail = args[6].copy()
    rng = np.random.default_rng(3)
    withdrawn = rng.random(avail.shape) < 0.15
    # never H2 or H2O or N2: every state then still spans its elements (no singular system)
    withdrawn[:, [1, 4, 5]] = False
    avail &= ~withdrawn
    args = (*args[:6], avail, args[7])
    c, p = _twins(args, monkeypatch)
    assert np.all(np.isneginf(c.ln_n[~avail])) and np.all(np.isneginf(p.ln_n[~avail]))
    # a few feeds cannot be balanced by the species left (carbon only in CO and CO2 with too
    # little oxygen, say): those leave unconverged in both
    assert np.mean(p.converged) > 0.9
    _assert_twins_agree(c, p)


@compiled
def test_warm_starts_from_other_states_match_the_numpy_twin(
    monkeypatch: pytest.MonkeyPatch,
) -> None:
    # Sampled data started from a nominal solution, as composition does for Monte Carlo draws:
    # 200 nominal states, each the start of 10 perturbed ones (start_rows), and a start from each
    # state's own feed (composition._solve_from_feed's start).
    (T, _, feed), (sset, args) = _nine(200, 4)
    p0 = _solve(args, monkeypatch, False)
    rows = np.repeat(np.arange(200), 10)
    rng = np.random.default_rng(4)
    g = args[2][rows] + rng.normal(0.0, 0.5, (rows.size, args[2].shape[1]))  # ~1 kJ/mol at 300 K
    warm = (args[0], args[1], g, args[3][rows], args[4][rows], args[5][rows], args[6][rows],
            args[7][rows])  # fmt: skip
    c, p = _twins(warm, monkeypatch, start=p0, start_rows=rows)
    assert p.converged.all()
    _assert_twins_agree(c, p)
    fed = se._feed_amounts(feed, sset, T.size)
    assert fed is not None
    # the feed scaled like the totals (by the total atoms), every species raised by 1 % of it
    fed = fed / se._feed_elements(feed, sset, LIB, T.size).sum(axis=1)[:, None]
    n0 = fed + 0.01 * fed.sum(axis=1, keepdims=True)
    start = gs.GibbsBatch(
        np.log(n0), np.log(n0.sum(axis=1)), np.zeros((T.size, 0)),
        np.zeros((T.size, 0), dtype=bool), np.zeros((T.size, 4)), np.zeros(T.size, dtype=bool),
        np.zeros(T.size, dtype=np.int64),
    )  # fmt: skip
    c, p = _twins(args, monkeypatch, start=start)
    assert p.converged.all()
    _assert_twins_agree(c, p)


@compiled
def test_a_singular_state_leaves_unconverged_as_in_numpy(monkeypatch: pytest.MonkeyPatch) -> None:
    # Nitrogen in the feed but both nitrogen carriers withdrawn: no species carries the element,
    # the first system is singular and the state is given up (not converged) after one iteration.
    _, (_, args) = _nine(50, 5)
    avail = args[6].copy()
    avail[::5, 5] = avail[::5, 6] = False  # N2, NH3
    args = (*args[:6], avail, args[7])
    c, p = _twins(args, monkeypatch)
    gone = np.zeros(50, dtype=bool)
    gone[::5] = True
    assert not p.converged[gone].any() and p.converged[~gone].all()
    np.testing.assert_array_equal(c.iterations[gone], 1)
    np.testing.assert_array_equal(p.iterations[gone], 1)
    _assert_twins_agree(c, p)


@compiled
def test_the_iteration_limit_is_reported_as_in_numpy(monkeypatch: pytest.MonkeyPatch) -> None:
    _, (_, args) = _nine(300, 6)
    c, p = _twins(args, monkeypatch, max_iter=4)
    assert not p.converged.any()
    np.testing.assert_array_equal(c.iterations, 4)
    np.testing.assert_array_equal(p.iterations, 4)
    # four identical steps: the iterates agree to rounding, far from any tolerance
    np.testing.assert_allclose(c.ln_n, p.ln_n, rtol=0, atol=1e-10)


@compiled
def test_states_settled_by_the_stall_rule_match_the_numpy_twin(
    monkeypatch: pytest.MonkeyPatch,
) -> None:
    # CO + 2 H2 lies on a face of the element cone of this set (O = C: neither H2O nor CO2 can
    # form); a trace of H2O, 4e-13 to 1e-11 of the feed, puts it a hair off the face. H2O and CO2
    # are then fixed by the element balance alone, known only to the rounding of the totals, and
    # settle only by the stall rule (_STALL_ITER, _ROUNDING_STEP).
    rng = np.random.default_rng(7)
    n = 200
    T = rng.uniform(400.0, 900.0, n)
    eps = 10.0 ** rng.uniform(np.log10(4e-13), -11.0, n)
    feed = {"CO(g)": np.ones(n), "H2(g)": np.full(n, 2.0), "H2O(g)": eps}
    _, args = _problem("CO(g) H2(g) CH3OH(g) H2O(g) CO2(g)", feed, T, np.full(n, 50.0))
    c, p = _twins(args, monkeypatch)
    assert p.converged.all() and c.converged.all()
    assert np.sum(p.iterations > gs._STALL_ITER) > n // 2
    assert np.sum(c.iterations > gs._STALL_ITER) > n // 2
    # amounts known to the rounding step each (1e-14 of N): a few times that apart
    N = np.exp(p.ln_N)[:, None]
    assert np.all(np.abs(np.exp(c.ln_n) - np.exp(p.ln_n)) <= 1e-13 * N)


@compiled
def test_results_do_not_depend_on_threads_or_neighbours(monkeypatch: pytest.MonkeyPatch) -> None:
    _, (_, args) = _nine(5000, 8)
    with monkeypatch.context() as m:
        m.setattr(_newton, "_threads", lambda: 1)
        one = gs.solve_batch(*args)
    two = gs.solve_batch(*args)
    # a few states alone, in another order: lanes and blocks never mix states
    pick = np.array([4999, 3, 2500, 17, 1200])
    few = gs.solve_batch(*args[:2], *(a[pick] for a in args[2:]))
    for name in ("ln_n", "ln_N", "pi", "converged", "iterations"):
        np.testing.assert_array_equal(getattr(one, name), getattr(two, name))
        np.testing.assert_array_equal(getattr(few, name), getattr(one, name)[pick])


@compiled
def test_kernel_arguments_are_checked() -> None:
    _, (_, args) = _nine(10, 9)
    A, _, g, _, b, ln_p, av, _ = args
    out = (np.zeros((10, 9)), np.zeros(10), np.zeros((10, 4)), np.zeros(10, dtype=np.uint8),
           np.zeros(10, dtype=np.int64))  # fmt: skip
    rules = np.zeros(8)
    with pytest.raises(TypeError, match="C-contiguous"):
        _newton.newton_gas(A, g[:, ::-1], av.view(np.uint8), b, ln_p, *out, 10, 60, rules)
    with pytest.raises(TypeError, match="C-contiguous"):
        _newton.newton_gas(A, g, av.view(np.uint8), b, ln_p.astype(np.float32), *out, 10, 60,
                           rules)  # fmt: skip
    with pytest.raises(ValueError, match="fit together"):
        _newton.newton_gas(A, g[:5], av.view(np.uint8), b, ln_p, *out, 10, 60, rules)


def _refs():  # type: ignore[no-untyped-def]
    path = Path(__file__).resolve().parents[1] / "reference" / "_refs.py"
    spec = importlib.util.spec_from_file_location("_refs", path)
    assert spec is not None and spec.loader is not None
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod


@pytest.mark.reference
@compiled
def test_compiled_kernel_against_cantera(monkeypatch: pytest.MonkeyPatch) -> None:
    """Reference: Cantera 3.2 ``Solution.equilibrate('TP')`` on the same species and data."""
    ct = pytest.importorskip("cantera")
    refs = _refs()
    (T, P, feed), (sset, args) = _nine(80, 10)
    sol = _solve(args, monkeypatch, True)
    assert sol.converged.all()
    x = np.exp(sol.ln_n - sol.ln_N[:, None])
    gas = ct.Solution(thermo="ideal-gas", species=[refs.cantera_species(sp) for sp in sset.entries])
    ids = [sp.id for sp in sset.entries]
    worst = 0.0
    for i in range(T.size):
        gas.TPX = T[i], P[i] * 1e5, {k: float(v[i]) for k, v in feed.items() if v[i] > 0}
        gas.equilibrate("TP")
        ref = np.array([gas.X[gas.species_index(k)] for k in ids])
        worst = max(worst, float(np.abs(x[i] - ref).max()))
    # Both solvers converge far below this (the kernel to 1e-12 of the total; Cantera's default
    # equilibrium tolerance is 1e-9 relative, from memory): 1e-9 absolute in mole fraction.
    assert worst <= 1e-9


def test_without_the_library_numpy_iterates_the_same(monkeypatch: pytest.MonkeyPatch) -> None:
    # The fallback of a wheel built without a C compiler: no library, numpy's iteration, the
    # same answers as equilibrate gives with the kernel (where it is built) and as Cantera's.
    calls = {"kernel": 0}
    real = _newton.newton_gas

    def counting(*a: object, **kw: object) -> None:
        calls["kernel"] += 1
        real(*a, **kw)  # type: ignore[arg-type]

    monkeypatch.setattr(_newton, "newton_gas", counting)
    T = np.linspace(700.0, 1200.0, 40)
    feed = "CH4:1, H2O:2, N2:0.5"
    species = NINE
    with_kernel = equilibrate(species, (T, "K"), "10 bar", feed, library=LIB)
    used = calls["kernel"]
    assert used == (1 if _newton.compiled() else 0)
    monkeypatch.setattr(_newton, "_library_path", lambda: None)
    _newton._compiled.cache_clear()
    try:
        assert not _newton.compiled()
        without = equilibrate(species, (T, "K"), "10 bar", feed, library=LIB)
        assert calls["kernel"] == used  # the numpy iteration ran
    finally:
        monkeypatch.undo()
        _newton._compiled.cache_clear()
    # converged amounts as close as the convergence rules make them (see the header)
    np.testing.assert_allclose(without.gas_fractions, with_kernel.gas_fractions, rtol=0, atol=1e-11)


def test_an_unloadable_library_falls_back_with_a_warning(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    bad = tmp_path / "libfeasibly_newton.so"
    bad.write_text("not a shared library")
    monkeypatch.setattr(_newton, "_LIBRARY", bad)
    _newton._compiled.cache_clear()
    try:
        with pytest.warns(RuntimeWarning, match="same results"):
            assert _newton._compiled() is None
        assert not _newton.compiled()
    finally:
        monkeypatch.undo()
        _newton._compiled.cache_clear()
    assert _newton.compiled() == (_newton._library_path() is not None)


def test_installed_package_carries_the_compiled_newton_kernel() -> None:
    # The wheel bin/check installs must hold the library; only a bare source tree may lack it.
    installed = "site-packages" in Path(feasibly.__file__).parts
    if installed or _newton.compiled():
        assert _newton.compiled()
    else:
        pytest.skip("running from src/ without bin/build-kernel")


def _solve_in_child(args):  # type: ignore[no-untyped-def]
    sol = gs.solve_batch(*args)
    return sol.converged.copy(), sol.ln_n.copy()


@compiled
def test_a_forked_child_solves_on_threads_of_its_own(in_forked_child: Any) -> None:
    # The parent's worker threads do not exist in a child made by fork (multiprocessing's
    # default on Linux): the child must start its own instead of waiting on the parent's.
    _, (_, args) = _nine(_newton._MIN_THREADED + 100, 11)
    here = gs.solve_batch(*args)  # the parent's pool now exists
    converged, ln_n = in_forked_child(_solve_in_child, args)
    np.testing.assert_array_equal(converged, here.converged)
    np.testing.assert_array_equal(ln_n, here.ln_n)

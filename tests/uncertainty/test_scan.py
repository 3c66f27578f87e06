"""The streamed Monte Carlo summary: the C kernels against their numpy twins (to the bit), and the
whole summary against ``numpy.quantile`` and plain counting on the materialised outputs (numpy is
the outside reference here: its 'linear' quantile rule is Hyndman & Fan's definition 7).
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

import numpy as np
import pytest

import feasibly
from feasibly.uncertainty import _quantiles as _selection
from feasibly.uncertainty import _scan, build_inputs, draw_samples
from feasibly.uncertainty.linear import Summary, linear_model, summarise

PROBS = (0.025, 0.5, 0.975)


def _assert_summary_is_numpys(s: Summary, g: np.ndarray, threshold: Any) -> None:
    """The summary's quantiles are numpy's of the outputs ``g`` (rows × trials), to the last
    bits of the summation order, and its P(below) the plain count below ``threshold``."""
    ref = np.quantile(g, PROBS, axis=1)
    for got, want in zip((s.lo, s.median, s.hi), ref, strict=True):
        np.testing.assert_allclose(got, want, rtol=1e-13, atol=1e-9)
    np.testing.assert_array_equal(s.p_below * g.shape[1], (g < threshold).sum(axis=1))


compiled = pytest.mark.skipif(
    not _scan.compiled(),
    reason="C kernels not built in this tree (bin/build-kernel); the installed wheel has them",
)


def test_installed_package_carries_the_compiled_kernels() -> None:
    # The wheel bin/check installs must hold the library; only a bare source tree may lack it.
    installed = "site-packages" in Path(feasibly.__file__).parts
    if installed or _scan.compiled():
        assert _scan.compiled()
    else:
        pytest.skip("running from src/ without bin/build-kernel")


def _chunk(rng: np.random.Generator, rows: int, m: int, k: int, cap: int, groups: int = 2):  # type: ignore[no-untyped-def]
    # Inputs of several groups of rows (each group reads its own block of z, as factored rows
    # on different polynomial pieces do), zero-padded to whole blocks of eight.
    k8 = 8 * -(-k // 8)
    z = np.zeros((groups * k8, m))
    for g in range(groups):
        z[g * k8 : g * k8 + k] = rng.standard_normal((k, m)) * rng.uniform(0.1, 50.0, (k, 1))
    zoff = (np.arange(rows, dtype=np.int64) % groups) * k8
    coef = np.zeros((rows, k8))
    coef[:, :k] = rng.standard_normal((rows, k))
    nominal = rng.standard_normal(rows) * 10
    var = np.array(
        [(coef[r, :k] ** 2 * z[zoff[r] : zoff[r] + k].var(axis=1)).sum() for r in range(rows)]
    )
    spread = np.sqrt(var)
    centre = nominal[:, None] + spread[:, None] * np.array([-1.96, 0.0, 1.96])
    lo = centre - 0.05 * spread[:, None]
    hi = centre + 0.05 * spread[:, None]
    lo[0, 2] = hi[0, 2] = np.inf  # a padding bracket holds nothing
    lo[1, 1], hi[1, 1] = lo[1, 0], hi[1, 0] + 0.2 * spread[1]  # overlapping brackets
    acc = (
        np.zeros(rows, dtype=np.int64),
        np.zeros((rows, 3), dtype=np.int64),
        np.zeros((rows, 3), dtype=np.int64),
        np.full((rows, 3, cap), np.nan),
    )
    return (z, zoff, coef, nominal, nominal * 0.3, lo, hi), acc


@compiled
@pytest.mark.parametrize(
    ("m", "k", "cap"), [(1024, 8, 2000), (3000, 18, 6000), (1000, 7, 2000), (37, 3, 64)]
)
def test_scan_kernel_matches_numpy_to_the_bit(m: int, k: int, cap: int) -> None:
    rng = np.random.default_rng(7)
    args, acc_c = _chunk(rng, 9, m, k, cap)
    acc_n = tuple(a.copy() for a in acc_c)
    bind, _, _ = _scan.scan_kernel()
    run = bind(*args, *acc_c)
    # Several ranges accumulate; ranges longer than the kernel's chunk are cut into chunks.
    for a, b in [(0, m // 3), (m // 3, m), (0, m)]:
        run(a, b)
        _scan.scan_numpy(*args, *acc_n, a, b)
    for got, want in zip(acc_c[:3], acc_n[:3], strict=True):
        np.testing.assert_array_equal(got, want)
    filled = acc_n[2]
    assert filled[0, 2] == 0 and filled.sum() > 0
    for r, b in np.ndindex(filled.shape):
        n = filled[r, b]
        if n <= cap:
            # Bitwise: the same product order, no fused multiply-add in either.
            np.testing.assert_array_equal(acc_c[3][r, b, :n], acc_n[3][r, b, :n])


@compiled
def test_scan_kernel_counts_past_a_full_buffer() -> None:
    rng = np.random.default_rng(8)
    args, acc_c = _chunk(rng, 4, 1024, 8, 5)  # room for 5 values only
    acc_n = tuple(a.copy() for a in acc_c)
    bind, _, _ = _scan.scan_kernel()
    bind(*args, *acc_c)(0, 1024)
    _scan.scan_numpy(*args, *acc_n, 0, 1024)
    np.testing.assert_array_equal(acc_c[2], acc_n[2])
    assert acc_c[2].max() > 5  # the overflow is seen, so the row is recomputed


def test_scan_counts_are_plain_counts() -> None:
    # The numpy kernel (the compiled one's reference) against direct counting.
    rng = np.random.default_rng(9)
    args, acc = _chunk(rng, 6, 512, 8, 4000)
    _scan.scan_numpy(*args, *acc, 0, 512)
    z, zoff, coef, nominal, thr, lo, hi = args
    v = np.stack([coef[r] @ z[zoff[r] : zoff[r] + 8] for r in range(6)]) + nominal[:, None]
    np.testing.assert_array_equal(acc[0], (v < thr[:, None]).sum(axis=1))
    np.testing.assert_array_equal(acc[1], (v[:, None, :] < lo[:, :, None]).sum(axis=2))
    inside = (v[:, None, :] >= lo[:, :, None]) & (v[:, None, :] <= hi[:, :, None])
    np.testing.assert_array_equal(acc[2], inside.sum(axis=2))


@compiled
def test_pick_kernel_matches_numpy() -> None:
    rng = np.random.default_rng(10)
    # Few distinct values, so that runs of equal values meet the selection's partitions.
    values = rng.integers(0, 12, (2, 5, 3, 40)).astype(float)
    values[0, 1, 2] = rng.standard_normal(40)
    filled = rng.integers(0, 41, (2, 5, 3))
    filled[1, 3, 0] = 41  # an overflowed buffer: the row reports −1
    _, c_pick, _ = _scan.scan_kernel()
    for b in range(3):
        total = filled[:, :, b].sum(axis=0)
        ranks = np.sort(rng.integers(0, np.maximum(total, 1)[:, None], (5, 3)), axis=1)
        ranks[4] = [0, 1, int(total[4]) + 5]  # a rank beyond the kept values: NaN
        out_c, out_n = np.empty(ranks.shape), np.empty(ranks.shape)
        cnt_c, cnt_n = np.empty(5, dtype=np.int64), np.empty(5, dtype=np.int64)
        c_pick(values, filled, b, ranks, out_c, cnt_c)
        _scan.pick_numpy(values, filled, b, ranks, out_n, cnt_n)
        np.testing.assert_array_equal(cnt_c, cnt_n)
        np.testing.assert_array_equal(out_c, out_n)
        for r in range(5):  # and both are the order statistics of the kept values
            n = filled[:, r, b]
            if cnt_n[r] >= 0 and ranks[r, -1] < cnt_n[r]:
                kept = np.sort(np.concatenate([values[t, r, b, : n[t]] for t in range(2)]))
                np.testing.assert_array_equal(out_n[r], kept[ranks[r]])
    cnt = np.empty(5, dtype=np.int64)
    _scan.pick_numpy(values, filled, 0, np.zeros((5, 1), dtype=np.int64), np.empty((5, 1)), cnt)
    assert cnt[3] == -1


@compiled
def test_pick_selects_from_long_runs_of_equal_values() -> None:
    # Larger buffers than the insertion sort handles, with many ties and all ranks wanted.
    rng = np.random.default_rng(12)
    values = rng.integers(0, 5, (1, 2, 3, 300)).astype(float)
    filled = np.full((1, 2, 3), 300)
    ranks = np.tile(np.arange(0, 300, 7), (2, 1))
    out = np.empty(ranks.shape)
    _, c_pick, _ = _scan.scan_kernel()
    c_pick(values, filled, 1, ranks, out, np.empty(2, dtype=np.int64))
    for r in range(2):
        np.testing.assert_array_equal(out[r], np.sort(values[0, r, 1])[ranks[r]])
    # Distinct values (deep partitions), all equal values, and a run of the smallest value.
    for case in ("distinct", "equal", "smallest run"):
        v = rng.standard_normal((2, 3, 3, 1500))
        if case == "equal":
            v[:] = 2.5
        elif case == "smallest run":
            v[:, :, :, ::3] = -9.0
        filled = np.full((2, 3, 3), 1500)
        ranks = np.tile(np.array([0, 17, 1499, 1500, 2001, 2999]), (3, 1))
        out = np.empty(ranks.shape)
        c_pick(v, filled, 2, ranks, out, np.empty(3, dtype=np.int64))
        for r in range(3):
            kept = np.sort(np.concatenate([v[0, r, 2], v[1, r, 2]]))
            np.testing.assert_array_equal(out[r], kept[ranks[r]])


@compiled
def test_pick_is_a_sort_for_every_size_tie_pattern_and_rank_set() -> None:
    # The selection partitions out of place (a copy at both ends of a scratch buffer): against
    # numpy's sort, for kept counts from 0 to 1 400 split unevenly between the threads, values
    # distinct, with a few ties, many ties, or one value repeated, ranks as the summary asks
    # for them (lo − d, lo, lo + 1, lo + 1 + d) and repeated or at the ends. The buffers past
    # each thread's count hold junk that must never be read, and the kept values are not moved.
    rng = np.random.default_rng(14)
    _, c_pick, _ = _scan.scan_kernel()
    rows, cap = 40, 700
    for case in ("distinct", "few ties", "many ties", "one value"):
        values = np.full((2, rows, 3, cap), 1e300)
        filled = rng.integers(0, cap + 1, (2, rows, 3))
        filled[:, :4] = [[0, 1, 2], [3, 16, 17], [18, 33, 64], [700, 699, 1]]
        for t, r, b in np.ndindex(2, rows, 3):
            n = filled[t, r, b]
            v = {
                "distinct": rng.standard_normal(n),
                "few ties": np.round(rng.standard_normal(n), 2),
                "many ties": rng.integers(-3, 4, n).astype(float),
                "one value": np.full(n, 0.125),
            }[case]
            values[t, r, b, :n] = v
        before = values.copy()
        for b in range(3):
            total = filled[:, :, b].sum(axis=0)
            ranks = np.zeros((rows, 4), dtype=np.int64)
            for r in range(rows):
                top = max(int(total[r]) - 1, 0)
                lo, d = int(rng.integers(0, top + 1)), int(rng.integers(0, 40))
                ranks[r] = sorted(min(max(x, 0), top) for x in (lo - d, lo, lo + 1, lo + 1 + d))
            ranks[5] = [0, 0, 0, max(int(total[5]) - 1, 0)]
            out, count = np.empty(ranks.shape), np.empty(rows, dtype=np.int64)
            c_pick(values, filled, b, ranks, out, count)
            for r in range(rows):
                kept = np.sort(
                    np.concatenate([values[t, r, b, : filled[t, r, b]] for t in range(2)])
                )
                assert count[r] == kept.size
                if kept.size:
                    np.testing.assert_array_equal(out[r], kept[ranks[r]], err_msg=f"{case} {r}")
                else:
                    assert np.all(np.isnan(out[r]))
        np.testing.assert_array_equal(values, before)


@compiled
def test_pick_does_only_the_rows_asked_for() -> None:
    # Threads share the rows: each call fills its own rows and leaves the others alone.
    rng = np.random.default_rng(13)
    values = rng.standard_normal((2, 6, 3, 50))
    filled = np.full((2, 6, 3), 50)
    ranks = np.tile(np.array([3, 50, 97]), (6, 1))
    _, c_pick, _ = _scan.scan_kernel()
    for pick in (c_pick, _scan.pick_numpy):
        out = np.full(ranks.shape, -1.0)
        count = np.full(6, -7, dtype=np.int64)
        pick(values, filled, 0, ranks, out, count, (2, 5))
        assert np.all(out[[0, 1, 5]] == -1.0) and np.all(count[[0, 1, 5]] == -7)
        for r in range(2, 5):
            kept = np.sort(values[:, r, 0].ravel())
            np.testing.assert_array_equal(out[r], kept[ranks[r]])
            assert count[r] == 100
    with pytest.raises(ValueError, match="do not fit"):
        c_pick(values, filled, 0, ranks, out, count, (4, 7))


@compiled
def test_kernels_refuse_misshapen_arguments() -> None:
    rng = np.random.default_rng(11)
    args, acc = _chunk(rng, 3, 64, 8, 10)
    bind, _, _ = _scan.scan_kernel()
    with pytest.raises(ValueError, match="do not fit"):
        bind(args[0][:15], *args[1:], *acc)  # the second group's block is cut short
    with pytest.raises(TypeError, match="C-contiguous"):
        bind(args[0], args[1], args[2].astype(np.float32), *args[3:], *acc)
    with pytest.raises(ValueError, match="outside"):
        bind(*args, *acc)(0, 65)


def _reaction_model(n: int, seed: int, points: int = 40):  # type: ignore[no-untyped-def]
    rxn = feasibly.Reaction.parse("2 CH4(g) + O2(g) + CO2(g) -> 3 CO(g) + 3 H2(g) + H2O(g)")
    samples = draw_samples(build_inputs(rxn.species_used()), n, seed=seed)
    return linear_model(rxn, np.linspace(800.0, 1500.0, points), samples), samples


@pytest.mark.parametrize("threads", [1, 2])
def test_streamed_summary_is_numpys(threads: int, monkeypatch: pytest.MonkeyPatch) -> None:
    # numpy.quantile and plain counting on the materialised outputs. The outputs differ from the
    # direct product only by summation order (the low-rank product), a few units in the last bit.
    monkeypatch.setattr(_selection, "workers", lambda: threads)
    model, samples = _reaction_model(20_011, 31)
    thr = np.linspace(-2e4, 2e4, model.T.size)
    s = summarise(model, samples, "G", thr)
    g = model.values("G", samples)
    _assert_summary_is_numpys(s, g, thr[:, None])


@compiled
def test_compiled_and_numpy_kernels_give_the_same_summary() -> None:
    model, samples = _reaction_model(30_000, 32)
    args = (
        model.aG,
        model.G0,
        samples.values,
        model.mean("G", samples),
        np.sqrt(np.einsum("ij,jk,ik->i", model.aG, np.cov(samples.values), model.aG)),
        PROBS,
        np.zeros(model.T.size),
    )
    fast = _selection.streamed_statistics(*args)
    slow = _selection.streamed_statistics(*args, kernels=_scan.NUMPY_KERNELS)
    for a, b in zip(fast, slow, strict=True):
        np.testing.assert_array_equal(a, b)


@pytest.mark.parametrize("shape", ["normal", "skewed", "heavy", "ties", "bimodal", "constant"])
def test_streamed_statistics_are_exact_for_any_shape(shape: str) -> None:
    # Rows far from normal make the bracket guesses miss; those rows are recomputed whole. The
    # outputs here are one input each (coefficient 1, nominal 0), so they are the draws exactly.
    rng = np.random.default_rng(33)
    n = 9_001
    x = {
        "normal": rng.standard_normal((3, n)),
        "skewed": rng.exponential(size=(3, n)) ** 3,
        "heavy": rng.standard_cauchy((3, n)),
        "ties": rng.integers(0, 5, (3, n)).astype(float),
        "bimodal": np.where(rng.random((3, n)) < 0.5, -10.0, 10.0) + rng.standard_normal((3, n)),
        "constant": np.full((3, n), 2.5),
    }[shape]
    coef = np.eye(3)
    thr = np.array([0.0, 1.0, -1.0])
    q, e, c = _selection.streamed_statistics(
        coef, np.zeros(3), x, x.mean(axis=1), x.std(axis=1), PROBS, thr
    )
    np.testing.assert_array_equal(q, np.quantile(x, PROBS, axis=1).T)
    np.testing.assert_array_equal(c, (x < thr[:, None]).sum(axis=1))
    assert np.all(e >= 0)


@pytest.mark.parametrize("probs", [(0.1, 0.9), (0.01, 0.05, 0.5, 0.95, 0.99)])
def test_streamed_statistics_with_many_rows_and_passes(probs: tuple[float, ...]) -> None:
    # More rows than one pass holds; fewer than three probabilities (padding brackets) or more
    # (two calls of the three-bracket kernel).
    model, samples = _reaction_model(5_003, 34, points=_selection._ROWS_PER_PASS + 7)
    g = model.values("G", samples)
    mean, std = g.mean(axis=1), g.std(axis=1)
    q, _, c = _selection.streamed_statistics(
        model.aG, model.G0, samples.values, mean, std, probs, np.zeros(model.T.size)
    )
    np.testing.assert_allclose(q, np.quantile(g, probs, axis=1).T, rtol=1e-13, atol=1e-9)
    np.testing.assert_array_equal(c, (g < 0).sum(axis=1))


def test_low_rank_reproduces_the_contributions() -> None:
    model, samples = _reaction_model(1_000, 35)
    scale = samples.values.std(axis=1)
    factors = _selection.low_rank(model.aG, scale)
    assert factors is not None
    a, b = factors
    assert a.shape[1] == 8  # 6 species: ΔfH° and S° directions collapse, 6 Cp factors remain
    top = np.abs(model.aG * scale).max()
    assert np.abs((a @ b - model.aG) * scale).max() <= 16 * np.finfo(float).eps * top
    rng = np.random.default_rng(36)
    assert _selection.low_rank(rng.standard_normal((50, 10)), np.ones(10)) is None  # full rank


def test_kept_draws_are_read_only() -> None:
    _, samples = _reaction_model(100, 37)
    with pytest.raises(ValueError, match="read-only"):
        samples.values[0, 0] = 1.0


def test_an_unloadable_library_falls_back_with_a_warning(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    bad = tmp_path / "libfeasibly_scan.so"
    bad.write_text("not a shared library")
    monkeypatch.setattr(_scan, "_LIBRARY", bad)
    _scan._compiled.cache_clear()
    try:
        with pytest.warns(RuntimeWarning, match="same numbers"):
            assert _scan._compiled() is None
    finally:
        monkeypatch.undo()
        _scan._compiled.cache_clear()
    assert _scan.compiled() == (_scan._library_path() is not None)


def test_without_the_compiled_kernel_rows_are_formed_and_selected_by_numpy(
    monkeypatch: pytest.MonkeyPatch,
) -> None:
    # The fallback path forms the same matrix product as LinearModel.values, block by block.
    monkeypatch.setattr(_scan, "compiled", lambda: False)
    model, samples = _reaction_model(10_007, 38)
    s = summarise(model, samples, "G", 0.0)
    g = model.values("G", samples)
    _assert_summary_is_numpys(s, g, 0.0)


def test_low_rank_keeps_every_direction_its_acceptance_test_needs() -> None:
    # A rank-5 matrix plus one direction at 1e-12 of the largest entry: above the acceptance
    # tolerance (256 ε, 5.7e-14), so it must be kept (rank 6) rather than cut and then refused;
    # at 1e-15 it is rounding noise and goes (rank 5), still within the tolerance.
    rng = np.random.default_rng(39)  # seeded: the same matrix every run
    base = rng.standard_normal((50, 5)) @ rng.standard_normal((5, 20))
    u, v = rng.standard_normal(50), rng.standard_normal(20)
    top = np.abs(base).max()
    extra = top * np.outer(u / np.abs(u).max(), v / np.abs(v).max())
    tolerance = _selection._ACCEPT_ULPS * np.finfo(float).eps
    for size, rank in ((1e-12, 6), (1e-15, 5)):
        coef = base + size * extra
        factors = _selection.low_rank(coef, np.ones(20))
        assert factors is not None
        a, b = factors
        assert a.shape[1] == rank
        assert np.abs(a @ b - coef).max() <= tolerance * np.abs(coef).max()


def test_single_threaded_blas_nests_and_restores() -> None:
    from threadpoolctl import threadpool_info

    def blas_threads() -> list[int]:
        return [i["num_threads"] for i in threadpool_info() if i["user_api"] == "blas"]

    before = blas_threads()
    with _selection.single_threaded_blas():
        assert all(n == 1 for n in blas_threads())
        with _selection.single_threaded_blas():
            assert all(n == 1 for n in blas_threads())
        assert all(n == 1 for n in blas_threads())  # the inner exit leaves the outer limit
    assert blas_threads() == before


# A reaction of 12 gas species (the benchmark's grid reaction of that size) over 800-1500 K: its
# entries change polynomial at 1000 K, so its rows fall on two pieces.
_TWELVE = (
    "N2O4(g) + CO(g) + H2O(g) + C2H6(g) + CH3Cl(g) + HF(g) -> "
    "2 NO2(g) + CO2(g) + 2 H2(g) + C2H4(g) + CH3F(g) + HCl(g)"
)


def _pieces_model(n: int, seed: int, points: int = 30):  # type: ignore[no-untyped-def]
    rxn = feasibly.Reaction.parse(_TWELVE)
    samples = draw_samples(build_inputs(rxn.species_used()), n, seed=seed)
    return linear_model(rxn, np.linspace(800.0, 1500.0, points), samples), samples


def _scale(samples):  # type: ignore[no-untyped-def]
    return np.array([np.hypot(i.u, i.shift) for i in samples.inputs])


def test_rows_on_one_polynomial_piece_need_few_directions_whatever_the_species() -> None:
    # On one piece every coefficient of ΔrG is a combination of a few fixed functions of T
    # (NASA-9: 1/T, ln T, 1, T, T ln T, T², …, T⁵), however many species; all rows together
    # need more directions. factor_rows takes the cheaper form, within the acceptance test.
    model, samples = _pieces_model(2_000, 40)
    assert model.pieces is not None and np.unique(model.pieces).size == 2
    assert np.all(np.diff(model.pieces[model.T <= 1000.0]) == 0)
    scale = _scale(samples)
    whole = _selection.low_rank(model.aG, scale)
    assert whole is not None
    for p in np.unique(model.pieces):
        piece = _selection.low_rank(model.aG[model.pieces == p], scale)
        assert piece is not None and piece[0].shape[1] <= 9 < whole[0].shape[1]
    f = _selection.factor_rows(model.aG, scale, model.pieces)
    # The cheapest form is taken: every row reads at most 2 + species merged inputs (the ΔfH°
    # and S° inputs merged, one heat-capacity input per species), or its piece's directions.
    species = model.aG.shape[1] // 3
    assert f.right is not None and f.left.shape[1] <= 2 + species < model.aG.shape[1] // 2
    top = np.abs(model.aG * scale).max()
    kz = f.left.shape[1]
    for r in range(model.T.size):
        rebuilt = f.left[r] @ f.right[f.zoff[r] : f.zoff[r] + kz]
        assert np.abs((rebuilt - model.aG[r]) * scale).max() <= 16 * np.finfo(float).eps * top


def test_factor_rows_takes_the_pieces_when_they_cost_less() -> None:
    # Two groups of 20 rows of rank 3 each. In directions of their own, all rows together have
    # rank 6: the pieces cost 40 × 3 + 6 × 40 multiply-adds per trial against 40 × 6 + 6 × 40,
    # and are taken. In shared directions all rows together have rank 3: one factorisation
    # (40 × 3 + 3 × 40) is cheaper than two.
    rng = np.random.default_rng(45)  # seeded: the same matrices every run
    for shared, want_zoff in ((False, {0, 3}), (True, {0})):
        right_a = rng.standard_normal((3, 40))
        right_b = right_a if shared else rng.standard_normal((3, 40))
        a = rng.standard_normal((20, 3)) @ right_a
        b = rng.standard_normal((20, 3)) @ right_b
        coef = np.vstack([a, b])
        pieces = np.repeat([0, 1], 20)
        f = _selection.factor_rows(coef, np.ones(40), pieces)
        assert f.right is not None and f.left.shape[1] == 3
        assert set(f.zoff) == want_zoff
        top = np.abs(coef).max()
        for r in range(40):
            rebuilt = f.left[r] @ f.right[f.zoff[r] : f.zoff[r] + 3]
            assert np.abs(rebuilt - coef[r]).max() <= 16 * np.finfo(float).eps * top


def test_factored_summary_is_numpys_quantile_of_the_outputs_it_forms(
    monkeypatch: pytest.MonkeyPatch,
) -> None:
    # Bitwise: numpy.quantile of the outputs formed from the factored inputs (in the kernel's
    # summation order), and plain counting; one thread, so z is one product of the whole draws.
    monkeypatch.setattr(_selection, "workers", lambda: 1)
    model, samples = _pieces_model(20_011, 41)
    f = _selection.factor_rows(model.aG, _scale(samples), model.pieces)
    assert f.right is not None
    thr = np.linspace(-3e4, 3e4, model.T.size)
    mean, u, q, _, c = _selection.factored_statistics(
        f, model.G0, samples.values, PROBS, thr, model.aG
    )
    z = f.inputs(samples.values)
    g = np.empty((model.T.size, samples.n))
    k8 = f.left.shape[1]
    for off in np.unique(f.zoff):
        at = np.flatnonzero(f.zoff == off)
        g[at] = _scan.product_numpy(f.left[at], z[off : off + k8]) + model.G0[at, None]
    np.testing.assert_array_equal(q, np.quantile(g, PROBS, axis=1).T)
    np.testing.assert_array_equal(c, (g < thr[:, None]).sum(axis=1))
    # The moments through z are the moments of those outputs (to rounding).
    np.testing.assert_allclose(mean, g.mean(axis=1), rtol=1e-12, atol=1e-9)
    np.testing.assert_allclose(u, g.std(axis=1, ddof=1), rtol=1e-10)
    # And those outputs are the direct product's to the last bits.
    direct = model.values("G", samples)
    np.testing.assert_allclose(g, direct, rtol=1e-12, atol=1e-9)


@compiled
def test_compiled_and_numpy_kernels_give_the_same_factored_summary() -> None:
    model, samples = _pieces_model(30_001, 42)
    f = _selection.factor_rows(model.aG, _scale(samples), model.pieces)
    args = (f, model.G0, samples.values, PROBS, np.zeros(model.T.size), model.aG)
    fast = _selection.factored_statistics(*args)
    slow = _selection.factored_statistics(*args, kernels=_scan.NUMPY_KERNELS)
    for a, b in zip(fast, slow, strict=True):
        np.testing.assert_array_equal(a, b)


@pytest.mark.parametrize("keep", [True, False])
def test_summary_of_many_species_is_numpys(keep: bool, monkeypatch: pytest.MonkeyPatch) -> None:
    # Through summarise: quantiles, counts, mean and u against numpy on the direct product, with
    # the factored inputs kept whole or formed a block at a time (a second time for the scan).
    monkeypatch.setattr(_selection, "_KEEP_SHARE", 1.0 if keep else 0.0)
    monkeypatch.setattr(_selection, "_Z_BLOCK", 4_096)
    model, samples = _pieces_model(20_011, 43)
    s = summarise(model, samples, "G", 0.0)
    g = model.values("G", samples)
    _assert_summary_is_numpys(s, g, 0.0)
    np.testing.assert_allclose(s.mean, g.mean(axis=1), rtol=1e-12, atol=1e-9)
    np.testing.assert_allclose(s.u, g.std(axis=1, ddof=1), rtol=1e-10)


def test_summary_is_the_same_bits_whatever_the_number_of_threads(
    monkeypatch: pytest.MonkeyPatch,
) -> None:
    # A record made on a four-core machine must verify on a two-core one: the moments are summed
    # over fixed parts of the trials, the counts are integers and the kept values are sorted.
    model, samples = _pieces_model(40_000, 44)
    results = []
    for threads in (1, 2, 4):
        monkeypatch.setattr(_selection, "workers", lambda t=threads: t)
        s = summarise(model, samples, "G", 0.0)
        results.append((s.mean, s.u, s.lo, s.median, s.hi, s.lo_se, s.p_below))
    for other in results[1:]:
        for a, b in zip(results[0], other, strict=True):
            np.testing.assert_array_equal(a, b)


def test_inputs_with_proportional_columns_are_merged_once_and_checked() -> None:
    # Every ΔfH° input enters ΔrG with the same coefficient shape (ν, constant in T) and every
    # S° input with −νT: each set becomes one merged input, the heat-capacity inputs stay.
    model, samples = _pieces_model(2_000, 46)
    scale = _scale(samples)
    m = _selection._merge_columns(model.aG, scale)
    assert m is not None and len(m.sets) == 2
    kinds = [inp.key[1] for inp in samples.inputs]
    assert sorted({kinds[j] for j in m.sets[0][0]} | {kinds[j] for j in m.sets[1][0]}) == [
        "S298",
        "dHf",
    ]
    assert all(kinds[j] == "cp" for j in m.single)
    # The merged inputs reproduce the direct product to rounding.
    w = _selection.Merged(m.sets, m.single).inputs(samples.values)
    np.testing.assert_allclose(m.coef @ w, model.aG @ samples.values, rtol=1e-12, atol=1e-6)
    # A column a hair off proportional (1e-12 relative: beyond the 4-ulp check) is not merged.
    coef = model.aG.copy()
    j = int(m.sets[0][0][0])
    coef[0, j] *= 1.0 + 1e-12
    m2 = _selection._merge_columns(coef, scale)
    assert m2 is not None and j in m2.single and all(j not in at for at, _ in m2.sets)
    # And a matrix with no two proportional columns is left alone.
    rng = np.random.default_rng(47)  # seeded: the same matrix every run
    assert _selection._merge_columns(rng.standard_normal((30, 12)), np.ones(12)) is None


def _summary_in_child(model, samples):  # type: ignore[no-untyped-def]
    s = summarise(model, samples, "G", 0.0)
    return s.median, s.p_below


def test_a_forked_child_summarises_on_threads_of_its_own(in_forked_child: Any) -> None:
    # The parent's worker threads do not exist in a child made by fork (multiprocessing's
    # default on Linux): the child must start its own instead of waiting on the parent's.
    model, samples = _pieces_model(20_000, 48)
    here = summarise(model, samples, "G", 0.0)  # the parent's pool now exists
    median, p_below = in_forked_child(_summary_in_child, model, samples)
    np.testing.assert_array_equal(median, here.median)
    np.testing.assert_array_equal(p_below, here.p_below)


def _former_case(rng: np.random.Generator, n: int, with_right: bool):  # type: ignore[no-untyped-def]
    # Draws of 11 inputs; three sets of proportional inputs (one of a single member) and three
    # singles, in a scrambled order; right maps the 6 merged inputs to 8 rows of z (two groups
    # of four), or z is the merged inputs themselves.
    x = rng.standard_normal((11, n)) * rng.uniform(0.1, 30.0, (11, 1))
    sets = (
        (np.array([4, 0, 9]), rng.standard_normal(3)),
        (np.array([2]), np.array([-1.5])),
        (np.array([7, 5]), rng.standard_normal(2)),
    )
    single = np.array([10, 1, 3])
    right = rng.standard_normal((8, 6)) if with_right else None
    return x, sets, single, right


@compiled
@pytest.mark.parametrize("n", [1, 3, 127, 128, 1000, 1023, 1024, 1025, 4099])
@pytest.mark.parametrize("with_right", [True, False])
def test_former_matches_numpy_to_the_bit(n: int, with_right: bool) -> None:
    # z and its moments (sums of rows, sums of products within each group), with trial counts
    # that end inside a chunk (1024 trials), a vector and a lane, or at a chunk's edge; formed into
    # a wider array at an offset.
    rng = np.random.default_rng(n)
    x, sets, single, right = _former_case(rng, n, with_right)
    rz = 8 if with_right else 6
    groups, kg = (np.array([0, 4]), 4) if with_right else (np.array([0, 3]), 3)
    results = []
    for bind in (_scan._form_compiled, _scan.form_numpy):
        form = bind(x, sets, single, right, groups, kg)
        out = np.full((rz, n + 5), np.nan)
        sums, gram = np.ones(rz), np.full((rz, rz), 2.0)
        form(0, n, out, 2, sums, gram)
        if n > 2:  # a second, partial range adds to the same moments
            form(1, n - 1, out, 3, sums, gram)
        results.append((out, sums, gram))
    for a, b in zip(*results, strict=True):
        np.testing.assert_array_equal(a, b)
    out, sums, gram = results[0]
    # Against plain numpy (to rounding): the merged inputs, z, and the moments.
    w = np.array([ws @ x[at] for at, ws in sets] + [x[i] for i in single])
    z = w if right is None else right @ w
    np.testing.assert_allclose(out[:, 2 : 2 + n], z, rtol=1e-12, atol=1e-9)
    want_sums = 1.0 + z.sum(axis=1) + (z[:, 1 : n - 1].sum(axis=1) if n > 2 else 0.0)
    np.testing.assert_allclose(sums, want_sums, rtol=1e-11)
    for o in groups:
        g = slice(o, o + kg)
        want = 2.0 + z[g] @ z[g].T + (z[g, 1 : n - 1] @ z[g, 1 : n - 1].T if n > 2 else 0.0)
        np.testing.assert_allclose(gram[g, g], want, rtol=1e-11)
    outside = np.ones((rz, rz), dtype=bool)
    for o in groups:
        outside[o : o + kg, o : o + kg] = False
    assert np.all(gram[outside] == 2.0)  # blocks of no group are never touched


@compiled
def test_former_refuses_misshapen_arguments() -> None:
    rng = np.random.default_rng(3)
    x, sets, single, right = _former_case(rng, 50, True)
    with pytest.raises(ValueError, match="do not fit"):
        _scan._form_compiled(x, sets, single, right[:, :5])
    with pytest.raises(ValueError, match="do not fit"):
        _scan._form_compiled(x, sets, np.array([11]), None)  # no such input
    with pytest.raises(ValueError, match="do not fit"):
        _scan._form_compiled(x, sets, single, right, np.array([6]), 4)  # group past the end
    form = _scan._form_compiled(x, sets, single, right)
    with pytest.raises(ValueError, match="outside"):
        form(0, 51, np.empty((8, 60)), 0)
    with pytest.raises(ValueError, match="do not fit"):
        form(0, 50, np.empty((8, 40)), 0)  # too few columns
    with pytest.raises(TypeError, match="C-contiguous"):
        form(0, 10, np.empty((8, 40))[:, ::2], 0)


def test_population_moments_are_the_inputs_distributions() -> None:
    # Against the moments of many draws (the draws follow the distributions; 4 standard errors).
    from scipy import stats

    from feasibly.uncertainty import Override
    from feasibly.uncertainty.linear import population_moments

    rxn = feasibly.Reaction.parse("CO(g) + H2O(g) -> CO2(g) + H2(g)")
    overrides = [
        Override("CO(g)", "dHf", "demo", uncertainty="3 kJ/mol", distribution="uniform"),
        Override("H2(g)", "S298", "demo", uncertainty="0.5 J/(mol*K)", distribution="triangular"),
        # A skewed distribution of the value itself (invented for the test).
        Override("CO2(g)", "dHf", "demo", distribution=stats.skewnorm(4.0, -394.0e3, 600.0)),
    ]
    inputs = build_inputs(rxn.species_used(), overrides)
    n = 200_000
    samples = draw_samples(inputs, n, seed=3)
    mean, cov = population_moments(samples)
    x = samples.values
    sd = np.sqrt(np.diag(cov))
    assert np.all(np.abs(x.mean(axis=1) - mean) <= 4 * sd / np.sqrt(n) + 1e-12)
    np.testing.assert_allclose(x.std(axis=1, ddof=1), sd, rtol=0.02)
    # Correlated normal inputs: the covariance carries the correlation asked for.
    corr = np.eye(len(inputs))
    corr[0, 1] = corr[1, 0] = 0.8
    plain = build_inputs(rxn.species_used())
    samples = draw_samples(plain, n, seed=4, correlation=corr)
    mean, cov = population_moments(samples)
    sd = np.sqrt(np.diag(cov))
    both = np.outer(sd, sd)
    rho = np.divide(cov, both, out=np.zeros_like(cov), where=both > 0)
    se = both * np.sqrt((1.0 + rho**2) / n)
    assert np.all(np.abs(np.cov(samples.values) - cov) <= 5 * se)
    assert cov[0, 1] == pytest.approx(0.8 * sd[0] * sd[1])


def _guess(model, samples):  # type: ignore[no-untyped-def]
    from feasibly.uncertainty.linear import population_moments

    mu, sigma = population_moments(samples)
    return model.G0 + model.aG @ mu, np.sqrt(np.einsum("ij,jk,ik->i", model.aG, sigma, model.aG))


def _missed_rows(monkeypatch: pytest.MonkeyPatch) -> list[int]:
    """A list that gets, for every pass that checks its rows, how many rows missed."""
    calls: list[int] = []
    redo = _selection._redo_missed

    def spy(*a: Any, **k: Any) -> Any:
        calls.append(int(np.count_nonzero(~a[1])))  # a[1]: which rows are exact
        return redo(*a, **k)

    monkeypatch.setattr(_selection, "_redo_missed", spy)
    return calls


@pytest.mark.parametrize("guess", ["none", "inputs", "far off", "too narrow"])
def test_one_pass_summary_is_the_two_pass_summary_to_the_bit(
    guess: str, monkeypatch: pytest.MonkeyPatch
) -> None:
    # Brackets placed from the inputs' distributions (one pass), from nothing (two passes), or
    # from a guess that misses every bracket (10 standard deviations off, or a spread 1000
    # times too small): the misses are scanned again, and every number is the same bits.
    model, samples = _pieces_model(30_001, 45)
    f = _selection.factor_rows(model.aG, _scale(samples), model.pieces)
    args = (f, model.G0, samples.values, PROBS, np.zeros(model.T.size), model.aG)
    want = _selection.factored_statistics(*args)
    mean, std = _guess(model, samples)
    given = {
        "none": None,
        "inputs": (mean, std),
        "far off": (mean + 10 * std, std),
        "too narrow": (mean, std / 1000),
    }[guess]
    calls = _missed_rows(monkeypatch)
    got = _selection.factored_statistics(*args, guess=given)
    for a, b in zip(want, got, strict=True):
        np.testing.assert_array_equal(a, b)
    if guess in ("far off", "too narrow"):
        assert calls and calls[0] == model.T.size  # every row missed once and was redone
    elif guess == "inputs":
        assert calls == [0]  # one pass, no row missed


@compiled
def test_compiled_and_numpy_kernels_give_the_same_one_pass_summary() -> None:
    model, samples = _pieces_model(20_001, 46)
    f = _selection.factor_rows(model.aG, _scale(samples), model.pieces)
    args = (f, model.G0, samples.values, PROBS, np.zeros(model.T.size), model.aG)
    guess = _guess(model, samples)
    fast = _selection.factored_statistics(*args, guess=guess)
    slow = _selection.factored_statistics(*args, kernels=_scan.NUMPY_KERNELS, guess=guess)
    for a, b in zip(fast, slow, strict=True):
        np.testing.assert_array_equal(a, b)


def test_summary_of_a_far_from_normal_output_is_numpys(monkeypatch: pytest.MonkeyPatch) -> None:
    # One input with a wide uniform distribution dominates: the outputs are nearly uniform, so
    # brackets placed for a normal output miss at the tails and those rows are scanned again.
    from feasibly.uncertainty import Override

    rxn = feasibly.Reaction.parse(_TWELVE)
    wide = Override("CO(g)", "dHf", "demo", uncertainty="60 kJ/mol", distribution="uniform")
    samples = draw_samples(build_inputs(rxn.species_used(), [wide]), 20_011, seed=47)
    model = linear_model(rxn, np.linspace(800.0, 1500.0, 30), samples)
    missed = _missed_rows(monkeypatch)
    s = summarise(model, samples, "G", 0.0)
    assert missed and missed[0] > 0
    g = model.values("G", samples)
    _assert_summary_is_numpys(s, g, 0.0)
    np.testing.assert_allclose(s.u, g.std(axis=1, ddof=1), rtol=1e-10)

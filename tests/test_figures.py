"""Figure builders, tested directly on a seeded result (no browser)."""

from __future__ import annotations

import numpy as np
import pytest

pytest.importorskip("plotly", reason="figures need the widgets extra (plotly)")

from feasibly import figures
from feasibly.uncertainty import assess_uncertainty

# 4096 trials: enough for stable bands in a test, fast to draw.
N = 4096


@pytest.fixture(scope="module")
def result():
    return assess_uncertainty(
        "MgCO3 -> MgO + CO2", T_range=("500 K", "900 K"), points=21, samples=N, seed=3
    )


@pytest.fixture(scope="module")
def parts(result):
    return figures.curves(result), figures.snapshot(result, 680.0)


def test_trace_list_is_fixed_and_named(parts):
    fig = figures.feasibility_figure(*parts)
    assert len(fig.data) == len(figures.TRACES) == 14
    assert fig.data[figures.TRACES.index("median")].name == "median ΔrG°"


def test_every_axis_has_a_title_with_units(parts):
    fig = figures.feasibility_figure(*parts, temperature_unit="°C")
    titles = {k: fig.layout[k].title.text for k in fig.layout if k.startswith(("xaxis", "yaxis"))}
    assert titles["xaxis"] == "temperature (°C)"
    assert titles["xaxis2"] == "temperature (°C)"
    assert titles["yaxis2"] == "ΔrG° (kJ/mol)"
    assert titles["yaxis"] == "trials crossing here (%)"
    assert titles["yaxis3"] == "P(feasible) (%)"
    assert titles["xaxis3"] == "ΔrG° (kJ/mol)"
    assert titles["xaxis4"] == "share of the variance (%)"
    for key, text in titles.items():
        if key != "yaxis5":  # the shares' category axis: its labels are the inputs
            assert "(" in text and text.endswith(")"), (key, text)


def test_crossover_bars_sit_under_the_gibbs_traces(parts):
    """The crossover histogram once hid the selected-temperature marker. plotly draws an
    overlaying axis above the one it overlays, so every ΔrG trace of the first panel must be on
    the overlaying axis and the bars on the one beneath; the ΔrG axis keeps its own round ticks."""
    fig = figures.feasibility_figure(*parts)
    assert fig.layout.yaxis2.overlaying == "y"
    bars = fig.data[figures.TRACES.index("crossover temperature")]
    assert bars.yaxis == "y"
    for name in ("95 % upper", "95 % interval", "median", "zero line", "selected temperature"):
        assert fig.data[figures.TRACES.index(name)].yaxis == "y2", name
    assert fig.layout.yaxis2.side == "left" and fig.layout.yaxis.side == "right"
    assert fig.layout.yaxis2.tickmode == "auto"
    # A whole-number format printed shares below 1 % as "0 0 0 0": no fixed format on that axis.
    assert fig.layout.yaxis.tickformat is None


def test_bands_are_ordered(parts):
    c, _ = parts
    assert np.all(c.lo95 <= c.lo68) and np.all(c.lo68 <= c.median)
    assert np.all(c.median <= c.hi68) and np.all(c.hi68 <= c.hi95)
    fig = figures.feasibility_figure(*parts)
    lo = np.asarray(fig.data[figures.TRACES.index("95 % interval")].y)
    hi = np.asarray(fig.data[figures.TRACES.index("95 % upper")].y)
    med = np.asarray(fig.data[figures.TRACES.index("median")].y)
    assert np.all(lo <= med) and np.all(med <= hi)


def test_zero_line_is_present_in_both_gibbs_panels(parts):
    fig = figures.feasibility_figure(*parts)
    zero = fig.data[figures.TRACES.index("zero line")]
    assert list(zero.y) == [0.0, 0.0] and zero.name == "ΔrG° = 0"
    hist_zero = fig.data[figures.TRACES.index("zero line (histogram)")]
    assert list(hist_zero.x) == [0.0, 0.0]


def test_temperature_units_convert_the_axis(parts, result):
    k = figures.feasibility_figure(*parts, temperature_unit="K")
    c = figures.feasibility_figure(*parts, temperature_unit="°C")
    f = figures.feasibility_figure(*parts, temperature_unit="°F")
    i = figures.TRACES.index("median")
    assert np.allclose(np.asarray(c.data[i].x), result.T - 273.15)
    assert np.allclose(np.asarray(f.data[i].x), result.T * 9 / 5 - 459.67)
    assert np.allclose(np.asarray(k.data[i].x), result.T)


def test_snapshot_matches_the_kernel_and_bins_the_draws(result):
    s = figures.snapshot(result, 700.0)
    row = result.at("700 K")
    assert s.p_feasible == row["P_feasible"] and s.verdict == row["verdict"]
    assert s.lo95_kJ <= s.median_kJ <= s.hi95_kJ
    # Binned percentages, not the N draws, go to the figure.
    assert s.hist_percent.size == 40 and s.hist_percent.sum() == pytest.approx(100.0)
    assert sum(v for _, v in s.shares) == pytest.approx(1.0)


def test_crossover_distribution_sums_to_the_crossing_trials(parts):
    c, _ = parts
    assert c.crossing_percent.sum() + c.crossing_none_percent == pytest.approx(100.0, abs=1e-9)


def test_snapshot_patch_equals_a_rebuild(result, parts):
    c, _ = parts
    s2 = figures.snapshot(result, 800.0)
    fig = figures.feasibility_figure(c, figures.snapshot(result, 650.0))
    patch = figures.snapshot_patch(c, s2)
    for index, props in patch["traces"].items():
        fig.data[index].update(props)
    rebuilt = figures.feasibility_figure(c, s2)
    for index in patch["traces"]:
        assert np.allclose(np.asarray(fig.data[index].x), np.asarray(rebuilt.data[index].x))


def test_sweep_and_route_figures():
    s = figures.sweep_figure(
        [1, 2, 3], [("a", [1, 2, 3])], "p(H₂O) (bar)", "P(feasible) (%)", "t", y_line=95
    )
    assert len(s.data) == 2 and s.layout.xaxis.title.text == "p(H₂O) (bar)"
    r = figures.route_figure([("A", [0.5], 0.5, 0.5), ("B", [0.6, 0.7], 0.35, 0.42)])
    assert [t.name for t in r.data][-2:] == ["all steps (shared draws)", "all steps if independent"]
    assert r.layout.yaxis.title.text == "probability (%)"


def test_patching_a_figure_gives_the_figure_of_the_new_result() -> None:
    # curves_patch + snapshot_patch on a figure drawn for one result must give exactly the
    # figure drawn for the other: the widgets update in place instead of rebuilding.
    import json

    a = assess_uncertainty("MgCO3 -> MgO + CO2", T_range=("500 K", "900 K"), samples=2048, seed=1)
    b = assess_uncertainty(
        "CaCO3 -> CaO + CO2",
        T_range=("600 K", "1100 K"),
        samples=2048,
        seed=2,
        partial_pressures={"CO2": "0.1 bar"},
        confidence=0.9,
    )
    ca, cb = figures.curves(a), figures.curves(b)
    sa, sb = figures.snapshot(a, 700.0), figures.snapshot(b, 900.0)
    for unit in ("K", "°C"):
        fig = figures.feasibility_figure(ca, sa, unit)
        figures.apply_patch(fig, figures.curves_patch(cb, unit))
        figures.apply_patch(fig, figures.snapshot_patch(cb, sb, unit))
        want = figures.feasibility_figure(cb, sb, unit)
        assert json.loads(fig.to_json()) == json.loads(want.to_json())

"""Widget state without a browser: set traits, assert traits and outputs, count recomputations."""

from __future__ import annotations

import pytest

pytest.importorskip("ipywidgets", reason="widgets need the widgets extra (ipywidgets)")
pytest.importorskip("plotly", reason="widgets need the widgets extra (plotly)")
pytest.importorskip("anywidget", reason="plotly's FigureWidget needs anywidget")

import json

import ipywidgets
import traitlets

from feasibly import figures
from feasibly.uncertainty import assess_uncertainty
from feasibly.widgets import (
    Conditions,
    FeasibilityPanel,
    FeasibilityWorksheet,
    ReactionBuilder,
    SpeciesEstimate,
    SpeciesPicker,
    TemperatureControl,
    UncertaintyInput,
)
from feasibly.widgets import worksheet as worksheet_module

# 2048 trials: the widget tests check wiring, not statistics.
N = 2048


@pytest.fixture
def counters(monkeypatch):
    """Count kernel samplings and panel evaluations."""
    calls = {"sample": 0, "snapshot": 0}
    real_assess, real_snapshot = worksheet_module.assess_uncertainty, figures.snapshot

    def assess(*a, **k):
        calls["sample"] += 1
        return real_assess(*a, **k)

    def snapshot(*a, **k):
        calls["snapshot"] += 1
        return real_snapshot(*a, **k)

    monkeypatch.setattr(worksheet_module, "assess_uncertainty", assess)
    monkeypatch.setattr(figures, "snapshot", snapshot)
    return calls


@pytest.fixture
def sheet(counters):
    ws = FeasibilityWorksheet(
        # 600 K: near the MgCO3 decomposition crossover with the NASA 2002 data (about 580 K at
        # P = 0.5), so the call starts "too close to call"
        "MgCO3 -> MgO + CO2",
        T="600 K",
        T_window=("500 K", "900 K"),
        samples=N,
    )
    counters["sample"] = counters["snapshot"] = 0
    return ws


# --- species picker -------------------------------------------------------------------------------
def test_picker_lists_matches_and_yields_an_entry():
    p = SpeciesPicker(query="carbon dioxide")
    assert "CO2(g)" in p.matches
    p.value = "CO2(g)"
    assert p.species is not None and p.species.formula == "CO2"
    label = dict((v, k) for k, v in p._list.options)["CO2(g)"]
    assert "gas" in label and "K" in label and "kJ/mol" in label  # phase, range, uncertainty
    assert p._info.value == ""
    p.show_provenance = True
    assert "source" in p._info.value and "CO2(g)" in p._info.value


def test_picker_reports_no_match_inline():
    p = SpeciesPicker(query="Qqzx")
    assert p.matches == [] and "No species" in p.error and "No species" in p._feedback.value


# --- reaction builder -----------------------------------------------------------------------------
def test_builder_reports_balance_and_keeps_the_last_good_reaction():
    b = ReactionBuilder("TiO2 + 2 Cl2 + C -> TiCl4 + CO2")
    assert b.balanced and b.error == ""
    assert "TiO<sub>2</sub>" in b._shown.value and "(cr" in b._shown.value  # subscripts, phases
    good = b.reaction_text
    b.equation = "TiO2 + Cl2 -> TiCl4 + O2"
    assert not b.balanced and "not balanced" in b.error
    assert "Cl" in b._table.value and "differs" in b._table.value  # per-element table
    assert b.reaction_text == good and "last good" in b._shown.value


def test_builder_suggests_species_and_applies_a_suggestion():
    b = ReactionBuilder("TiO3 + 2 Cl2 + C -> TiCl4 + CO2")
    assert "TiO2" in b.suggestions and "Did you mean" in b._feedback.value
    b.use_suggestion("TiO3", "TiO2")
    assert b.equation.startswith("TiO2 ") and b.balanced


def test_builder_auto_balances_or_says_why_not():
    b = ReactionBuilder("C3H8 + O2 -> CO2 + H2O")
    b.auto_balance()
    assert b.equation == "C3H8 + 5 O2 -> 3 CO2 + 4 H2O" and b.balanced
    b.equation = "CO -> C2"
    b.auto_balance()
    assert "Cannot balance" in b.error or "Cannot read" in b.error or "No species" in b.error


def test_builder_row_mode_writes_the_equation():
    b = ReactionBuilder("MgCO3 -> MgO + CO2")
    b.mode = "rows"
    rows = b._rows.children
    assert [r.term() for r in rows] == [
        ("reactant", "MgCO3"),
        ("product", "MgO"),
        ("product", "CO2"),
    ]
    rows[2].coef.value = "2"
    assert b.equation == "MgCO3 -> MgO + 2 CO2" and not b.balanced


# --- temperature control --------------------------------------------------------------------------
def test_temperature_units_and_inline_refusal():
    t = TemperatureControl(value=700.0, valid_range=(298.15, 1000.0))
    t.unit = "°C"
    assert t._entry.value == "426.85" and t.value == 700.0
    t._entry.value = "500"  # °C
    assert t.value == pytest.approx(773.15) and t.error == ""
    t._entry.value = "900"  # °C = 1173 K, outside
    assert t.value == pytest.approx(773.15) and "outside" in t.error
    assert "outside" in t._feedback.value
    t._entry.value = "-300"  # below absolute zero: the kernel's message
    assert "absolute zero" in t.error and t.value == pytest.approx(773.15)
    t.unit = "°F"
    assert float(t._entry.value) == pytest.approx(932.0)
    with pytest.raises(traitlets.TraitError, match="outside the data range"):
        t.value = 2000.0


# --- uncertainty input and estimate ---------------------------------------------------------------
def test_uncertainty_input_converts_coverage_and_requires_a_reason():
    u = UncertaintyInput(target="MgCO3(cr)", quantity="dHf", value="-1111", uncertainty="4")
    assert "say why" in u.error and u.override is None
    u.reason = "our calorimetry"
    u.coverage = "95 %"
    assert u.error == "" and u.standard_u == pytest.approx(4000 / 1.96)
    assert u.override is not None and u.override.coverage == "95%"
    good = u.override
    u.uncertainty = "-3"
    assert "negative" in u.error and u.override is good  # the last valid entry is kept


def test_species_estimate_builds_a_library_entry():
    e = SpeciesEstimate(
        formula="CoCO3",
        phase="cr",
        T_max=900.0,
        cp=95.0,
        dHf={"value": "-893", "uncertainty": "12", "coverage": "95 %", "reason": "estimate"},
        S298={"value": "86", "uncertainty": "6", "coverage": "k = 2", "reason": "estimate"},
        cp_u={"value": "1", "uncertainty": "10", "reason": "estimate"},
    )
    assert e.error == "" and e.species_id == "CoCO3(cr)"
    sp = e.library["CoCO3(cr)"]
    assert sp.dHf.u == pytest.approx(12000 / 1.96) and sp.S298.u == pytest.approx(3.0)
    e.S298.reason = ""
    assert "source or reason" in e.error and "CoCO3(cr)" in e.library


# --- conditions -----------------------------------------------------------------------------------
def test_conditions_units_fractions_and_totals():
    c = Conditions(gases=["H2", "H2O(g)"])
    c.entries = {"H2": "0.9", "H2O(g)": "50 mbar"}
    assert c.partial_pressures_Pa == pytest.approx({"H2": 90000.0, "H2O(g)": 5000.0})
    c.entries = {"H2": "0.9 bar", "H2O(g)": "0.2 bar"}
    assert "add up to 1.1 bar" in c.error
    assert c.partial_pressures_Pa == pytest.approx({"H2": 90000.0, "H2O(g)": 5000.0})
    c.entries = {"H2": "0.9 kg"}
    assert "not a pressure" in c.error


# --- panel and worksheet --------------------------------------------------------------------------
def test_panel_reads_the_kept_draws_without_resampling():
    r = assess_uncertainty("MgCO3 -> MgO + CO2", T_range=("500 K", "900 K"), samples=N, seed=1)
    p = FeasibilityPanel(r, temperature=650.0)
    first = p.figure.data[figures.TRACES.index("histogram")].y
    values_before = r.samples.values.copy()
    p.temperature = 800.0
    assert (r.samples.values == values_before).all()
    assert p.verdict == r.at("800 K")["verdict"] and p.probability == r.at("800 K")["P_feasible"]
    assert list(p.figure.data[figures.TRACES.index("histogram")].y) != list(first)
    assert "Feasible at 800 K" in p.summary
    assert "Gas is produced" in p._cautions.value  # the kernel's caution, shown


def test_panel_caution_quotes_the_adiabatic_temperature_band():
    """With the result's draws, the exotherm caution carries the 95 % interval of the adiabatic
    temperature (feasibly.heat.cautions_with_draws) and the deferral to process-safety review."""
    r = assess_uncertainty("CO + H2O -> CO2 + H2", T="500 K", samples=N, seed=1)
    p = FeasibilityPanel(r, temperature=500.0)
    assert "Strongly exothermic" in p._cautions.value
    assert "95 % interval" in p._cautions.value
    assert "process-safety review" in p._cautions.value


def test_one_change_one_recomputation(sheet, counters):
    sheet.temperature.value = 700.0
    assert counters == {"sample": 0, "snapshot": 1}
    sheet.temperature.unit = "°C"
    assert counters == {"sample": 0, "snapshot": 2}
    sheet.reaction.equation = "Mg(OH)2 -> MgO + H2O(g)"
    assert counters == {"sample": 1, "snapshot": 3}
    sheet.seed = 9
    assert counters == {"sample": 2, "snapshot": 4}
    assert sheet.resamples == 3  # one at construction (reset counter), then two


def test_temperature_change_changes_verdict_and_plot(sheet):
    hist = figures.TRACES.index("histogram")
    before = (sheet.panel.verdict, list(sheet.panel.figure.data[hist].x))
    sheet.temperature.value = 880.0
    after = (sheet.panel.verdict, list(sheet.panel.figure.data[hist].x))
    assert before[0] == "too close to call" and after[0] == "feasible"
    assert before[1] != after[1]


def test_bad_equation_is_shown_inline_and_the_last_result_kept(sheet, counters):
    shown = sheet.result
    sheet.reaction.equation = "MgCO3 -> MgO"
    assert "not balanced" in sheet.reaction._feedback.value
    assert sheet.result is shown and counters["sample"] == 0
    assert "STALE" in sheet._status.value and sheet.stale
    assert sheet.panel.layout.opacity == "0.45"


def test_kernel_error_is_shown_inline_and_the_last_result_marked_stale(sheet):
    shown = sheet.result
    # MgCO3 data (NASA thermo.inp: solid to 1263 K, then liquid) end at 6000 K: nothing covered
    sheet.T_window = (6100.0, 6500.0)
    assert "6000 K" in sheet.error and "6000 K" in sheet._feedback.value
    assert sheet.result is shown and sheet.stale and "STALE" in sheet._status.value
    # No phase was given, so the advice is not to give the species without one.
    assert "without a phase" not in sheet.error and "narrow the temperature window" in sheet.error


def test_pressures_reach_the_kernel(sheet):
    assert sheet.conditions.gases == ["CO2"]
    p_std = sheet.panel.probability
    sheet.conditions.entries = {"CO2": "0.01 bar"}
    assert sheet.result.partial_pressures_Pa == {"CO2": pytest.approx(1000.0)}
    assert sheet.panel.probability > p_std
    assert "ΔrG (kJ/mol)" in sheet.panel.figure.layout.yaxis2.title.text


def test_sample_arrays_are_not_synced(sheet):
    """Only traits tagged for sync reach the browser; the result and its draws are not."""
    for w in (sheet, sheet.panel, sheet.temperature, sheet.reaction, sheet.conditions):
        synced = set(w.trait_names(sync=True))
        assert not synced & {"result", "samples", "value", "temperature", "equation"}
    hist = sheet.panel.figure.data[figures.TRACES.index("histogram")]
    assert len(hist.y) == 40  # binned counts, not the 2048 draws


def test_repr_is_a_short_deterministic_summary(sheet):
    assert repr(sheet) == (
        "<FeasibilityWorksheet MgCO3 -> MgO + CO2 at 600.00 K: "
        f"{sheet.panel.verdict}, P(feasible) = {sheet.panel.probability:.3f}>"
    )


def test_record_export_writes_a_record_that_verifies(sheet, tmp_path):
    from feasibly.records import verify_record

    out = tmp_path / "screen.json"
    sheet.export.author = "A. Chemist"
    sheet.export.rationale = "screening before the pilot run"
    sheet.export.path = str(out)
    written = sheet.export.export()
    assert written == [str(out), str(out.with_suffix(".html"))]
    assert sheet.export.error == ""
    assert verify_record(out).identical  # the record reproduces the result on screen
    # Writing again without permission is refused inline, and nothing is lost.
    assert sheet.export.export() == []
    assert "file exists" in sheet.export.error and out.exists()


def test_required_conversion_in_the_worksheet(sheet):
    # The kernel's conversion_assessment on the worksheet's reaction and temperatures.
    target = sheet.conversion
    assert not target.active and target.result == {}
    key = sheet.panel.result.reaction.terms[0].formula
    target.feed = f"{key}:1, N2:4"
    target.key = key
    target.required = "30%"
    res = target.result
    assert res["key"] == key and res["required_conversion"] == 0.3
    assert [r["T_K"] for r in res["rows"]] == sheet.panel.result.T.tolist()
    assert "conversion of" in target._out.value
    # The call is now on ΔrG at the composition of 30 % conversion, from the call's own draws.
    assert sheet.result.at_conversion is not None and "30% conversion" in sheet.result.conditions
    assert res["shared_draws"] and res["trials"] == sheet.result.trials
    target.feed = "nonsense"  # a bad feed: message inline, the old answer cleared, stale marked
    assert sheet.error and target.result == {} and sheet.stale
    assert "No conversion result" in target._out.value


# --- controls, stale results, and the record of what is on screen -----------------------------
def test_readme_example_works_in_the_main_worksheet(counters):
    # A decomposition whose data end inside the main worksheet's 600–1100 K window: CuSO4(cr)
    # is cut at its tabulated decomposition point, 863.15 K (chemicals' Tm, data/README.md).
    # The window is fitted to the data and said so; no error.
    ws = FeasibilityWorksheet(
        "C3H8 -> C3H6 + H2", T="900 K", T_window=("600 K", "1100 K"), samples=N
    )
    ws.reaction.equation = "CuSO4 -> CuO + SO3"
    assert ws.error == "" and not ws.stale
    assert ws.result.reaction.equation() == "CuSO4 -> CuO + SO3"
    assert ws.result.T[0] == 600.0 and ws.result.T[-1] == 863.15
    assert "fitted to the data" in ws.window_note and "600–863.15 K" in ws._status.value


def test_window_confidence_and_trials_controls(sheet, counters):
    lo_box, hi_box = sheet._window_boxes
    assert (lo_box.value, hi_box.value) == (500.0, 900.0)
    hi_box.value = 800.0
    assert sheet.T_window == (500.0, 800.0) and sheet.result.T[-1] == 800.0
    conf, trials = sheet._settings.children[2:]
    trials.value = 1024
    assert sheet.result.trials == 1024
    conf.value = 0.9
    assert sheet.result.confidence == 0.9
    assert counters["sample"] == 3  # one new set of draws per change
    conf.value = 1.0  # not a confidence level: refused inline, the result marked stale
    assert "confidence" in sheet.error and sheet.stale


def test_one_total_pressure(sheet):
    boxes = [c for c in sheet.conversion.children if isinstance(c, ipywidgets.Text)]
    assert [b.description for b in boxes] == ["feed (mol)", "key", "needed"]
    sheet.conditions.total_pressure = "5 bar"
    assert sheet.conversion.pressure == "5 bar"


def test_override_is_marked_and_reaches_call_conversion_and_record(sheet, tmp_path):
    from feasibly.records import verify_record

    p_before = sheet.panel.probability
    inp = sheet.override_input
    inp.target, inp.quantity = "MgCO3(cr)", "dHf"
    inp.value, inp.uncertainty, inp.reason = "-1105", "1", "invented for this test"
    sheet.apply_override()
    assert [o.target for o in sheet.result.overrides] == ["MgCO3(cr)"]
    assert "override active" in sheet._overrides_shown.value
    assert sheet.panel.probability != p_before
    target = sheet.conversion
    target.feed, target.key, target.required = "MgCO3:1, N2:4", "MgCO3", "30%"
    sheet.temperature.value = 700.0
    out = tmp_path / "on-screen.json"
    sheet.export.path = str(out)
    assert sheet.export.export() == [str(out), str(out.with_suffix(".html"))]
    rec = json.loads(out.read_text())
    assert rec["uncertainty"]["overrides"][0]["target"] == "MgCO3(cr)"
    assert rec["uncertainty"]["sensitivity_T_K"] == 700.0  # the selected temperature
    assert rec["conversion"]["required"] == 0.3 and rec["conversion"]["shared_draws"]
    assert rec["conditions"]["call_at_required_conversion"] is True
    assert verify_record(out).identical
    sheet.clear_overrides()
    assert sheet.result.overrides == [] and sheet._overrides_shown.value == ""


def test_record_button_refuses_a_stale_result(sheet, tmp_path):
    sheet.export.path = str(tmp_path / "stale.json")
    sheet.reaction.equation = "MgCO3 -> MgO"  # unbalanced: the result on screen is now stale
    assert sheet.export.export() == []
    assert "earlier inputs" in sheet.export.error and not (tmp_path / "stale.json").exists()


def test_builder_shows_name_and_cas_of_each_species(sheet):
    shown = sheet.reaction._shown.value
    assert "MgCO3 = magnesium carbonate (CAS 546-93-0)" in shown


def test_isomer_is_refused_with_described_candidates():
    from feasibly.widgets import ReactionBuilder

    # o-xylene is not in the library; ethylbenzene shares C8H10 and must not stand in for it
    b = ReactionBuilder("C6H4(CH3)2 + 10.5 O2 -> 8 CO2 + 5 H2O")
    assert not b.balanced and "may be another isomer" in b.error
    assert b.suggestions == ["C6H5C2H5"]
    assert "ethylbenzene" in b._fix.children[0].description


def test_phase_notes_show_metastable_and_missing_phases(counters):
    ws = FeasibilityWorksheet(
        "2 H2S + SO2 -> 3 S(l) + 2 H2O", T="1000 K", T_window=("900 K", "1100 K"), samples=N
    )
    assert "S(l) is metastable" in ws._phase_notes.value and "S2(g)" in ws._phase_notes.value
    # Phenol has a solid and a gas entry but no liquid; it melts at 314.15 K and boils at
    # 454.95 K (chemicals' Tm/Tb), so at 350–400 K the stable liquid is missing from the data.
    ws.reaction.equation = "C6H5OH + 7 O2 -> 6 CO2 + 3 H2O"
    ws.T_window = (350.0, 400.0)
    assert (
        "stable liquid" in ws._phase_notes.value
        and "missing from the data" in ws._phase_notes.value
    )


def test_high_pressure_ideal_gas_call_shows_the_non_ideality_warning(counters):
    # The worksheet's call uses ideal gases; at 300 bar of ammonia synthesis gas the
    # Peng–Robinson correction exceeds the data's uncertainty and the warning is on screen
    # (the same text as feasibly.uncertainty.gas_model_warning gives the call).
    from feasibly.uncertainty import gas_model_warning

    ws = FeasibilityWorksheet(
        "N2 + 3 H2 -> 2 NH3", T="700 K", T_window=("650 K", "750 K"), samples=N
    )
    assert "Non-ideal gases" not in ws._phase_notes.value
    with ws.conditions.hold_trait_notifications():
        ws.conditions.total_pressure = "300 bar"
        ws.conditions.entries = {"N2": "50 bar", "H2": "150 bar", "NH3": "100 bar"}
    assert not ws.error and not ws.conditions.error
    text = gas_model_warning(ws.panel.result)
    assert text is not None and "Non-ideal gases" in ws._phase_notes.value
    assert "Peng–Robinson fugacity coefficients would move ln Q" in ws._phase_notes.value


def test_equation_and_pressure_changes_update_the_figure_in_place(sheet, monkeypatch):
    # No rebuild: the same FigureWidget and the same trace objects, new numbers in them.
    builds = []
    real_build = figures.feasibility_figure
    monkeypatch.setattr(
        figures, "feasibility_figure", lambda *a, **k: builds.append(1) or real_build(*a, **k)
    )
    fig = sheet.panel.figure
    traces = list(fig.data)
    median = figures.TRACES.index("median")
    sheet.reaction.equation = "Mg(OH)2 -> MgO + H2O(g)"
    assert builds == [] and sheet.panel.figure is fig
    assert all(a is b for a, b in zip(fig.data, traces, strict=True))
    assert list(fig.data[median].y) == pytest.approx(list(sheet.result.G.median / 1000))
    assert fig.layout.title.text == sheet.result.reaction.equation(pretty=True)
    (gas,) = sheet.conditions.gases
    sheet.conditions.entries = {gas: "0.01 bar"}
    assert sheet.result.partial_pressures_Pa == {gas: pytest.approx(1000.0)}
    assert builds == [] and sheet.panel.figure is fig
    assert all(a is b for a, b in zip(fig.data, traces, strict=True))
    assert list(fig.data[median].y) == pytest.approx(list(sheet.result.G.median / 1000))
    assert "ΔrG (kJ/mol)" in fig.layout.yaxis2.title.text  # ΔrG° became ΔrG (overlaying axis)
    sheet.temperature.unit = "°C"  # a new display unit redraws every axis
    assert len(builds) == 1 and sheet.panel.figure is fig


def test_conversion_notes_are_shown():
    """The non-ideal-gas warning of conversion_assessment appears in the conversion view."""
    from feasibly.equilibrium import conversion_assessment
    from feasibly.widgets import ConversionTarget

    res = conversion_assessment(
        "N2 + 3 H2 -> 2 NH3", ([600.0, 700.0], "K"), "N2:1, H2:3", "N2", "20%", "200 bar",
        samples=256, seed=1,
    )  # fmt: skip
    assert res["notes"]
    shown = ConversionTarget._table(res)
    assert "Non-ideal gases" in shown and "peng-robinson" in shown

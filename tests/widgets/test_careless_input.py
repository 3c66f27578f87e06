"""Issue 17, widgets: no error raises into the notebook; it shows inline, the last good result
is marked stale, and the next good input recovers. User text goes into HTML escaped."""

from __future__ import annotations

import pytest

pytest.importorskip("ipywidgets", reason="widgets need the widgets extra (ipywidgets)")
pytest.importorskip("plotly", reason="widgets need the widgets extra (plotly)")
pytest.importorskip("anywidget", reason="plotly's FigureWidget needs anywidget")

from feasibly.widgets import ReactionBuilder, SpeciesEstimate, UncertaintyInput

XSS = '<img src=x onerror="alert(1)">'


def _estimate() -> SpeciesEstimate:
    return SpeciesEstimate(
        formula="CoCO3",
        phase="cr",
        T_max=900.0,
        cp=95.0,
        dHf={"value": "-893", "uncertainty": "12", "coverage": "95 %", "reason": "estimate"},
        S298={"value": "86", "uncertainty": "6", "coverage": "k = 2", "reason": "estimate"},
        cp_u={"value": "1", "uncertainty": "10", "reason": "estimate"},
    )


def test_uncertainty_input_escapes_the_target_id() -> None:
    # The target species id went into an HTML widget unescaped (an onerror handler ran).
    u = UncertaintyInput(target=XSS, quantity="dHf")
    html = u._title.value + u._feedback.value + u._readout.value
    assert "<img" not in html and "&lt;img" in html
    assert "No species" in u.error


def test_uncertainty_input_recovers_after_a_bad_value() -> None:
    # UncertaintyInput stayed stuck re-raising after one bad value.
    u = UncertaintyInput(target="MgO(cr)", quantity="dHf", reason="our DSC")
    u.value, u.uncertainty = "-601", "2"
    assert u.error == "" and u.override is not None
    good = u.override
    for bad in ("1/0", "nan", "1e999", "[", "2 650"):
        u.value = bad
        assert u.error and u.override is good  # the last good entry stays, marked stale
        assert "last valid entry" in u._readout.value
    u.unit = "furlongs"  # not offered: shown inline, not raised
    assert u.error
    u.unit = "kJ/mol"
    u.value = "-600"
    assert u.error == "" and u.override is not good and u.override.value == "-600 kJ/mol"


def test_species_estimate_nan_does_not_break_a_link() -> None:
    # NaN in SpeciesEstimate broke a link (NaN ≠ NaN) and raised into the notebook.
    e = _estimate()
    assert e.error == "" and e.species_id == "CoCO3(cr)"
    for trait in ("T_min", "T_max", "cp"):
        setattr(e, trait, float("nan"))
        assert e.error and "CoCO3(cr)" in e.library  # stale but present
    e.T_min, e.T_max, e.cp = 298.15, 900.0, 95.0
    assert e.error == ""
    e._cp.value = float("inf")  # typed into the box itself
    assert e.error
    e._cp.value = 90.0
    assert e.error == "" and e.library["CoCO3(cr)"].cp_model.cp(500.0) == pytest.approx(90.0)


def test_species_estimate_may_not_silently_replace_a_shipped_entry() -> None:
    e = _estimate()
    e.formula = "MgCO3"
    assert "already in the library" in e.error and e.species_id == "CoCO3(cr)"
    e.replace_shipped = True
    assert e.error == "" and e.species_id == "MgCO3(cr)"
    assert "REPLACES the shipped entry" in e._shown.value


def test_balance_table_with_species_names_does_not_raise() -> None:
    # An unbalanced equation typed with species names (water -> H2 + O2) raised from the
    # balance table.
    b = ReactionBuilder(equation="water -> H2 + O2")
    assert not b.balanced and "not balanced" in b.error
    assert "differs" in b._table.value
    b.equation = "2 water -> 2 H2 + O2"
    assert b.balanced and b.error == ""


def test_reaction_builder_recovers_from_hostile_text() -> None:
    b = ReactionBuilder(equation="H2 + Cl2 -> 2 HCl")
    assert b.balanced
    for bad in ("H2+" + "1" * 20000 + "x -> H2", "13CO2 -> CO2", XSS + " -> H2", "1/0 H2 -> H2"):
        b.equation = bad
        assert b.error and not b.balanced
        assert "<img" not in b._feedback.value
        assert "last good equation" in b._shown.value
    b.equation = "H2 + Cl2 -> 2 HCl"
    assert b.balanced and b.error == ""

"""The strongly exothermic caution quotes the adiabatic temperature with its 95 % interval from
the call's draws, and still defers to process-safety review. The adiabatic temperature itself is
checked against Cantera in tests/reference/test_heat_vs_references.py."""

from __future__ import annotations

import json

import pytest

import feasibly
from feasibly.cli import main
from feasibly.heat import adiabatic_temperature, cautions_with_draws, result_cautions
from feasibly.records import record_from, record_html, verify_record
from feasibly.thermo.safety import DEFERRAL, stoichiometric_feed

SHIFT = "CO + H2O -> CO2 + H2"
BURN = "CH4 + 2 O2 -> CO2 + 2 H2O"


def _exotherm(cautions):
    found = [c for c in cautions if c.kind == "strongly exothermic"]
    assert len(found) == 1
    return found[0]


@pytest.fixture(scope="module")
def shift_call() -> feasibly.UncertainAssessment:
    # 4096 draws: the quoted interval is compared with the kernel's, not with a tolerance
    return feasibly.assess_uncertainty(SHIFT, T="500 K", samples=4096, seed=3)


def test_caution_quotes_the_adiabatic_temperature_and_its_band(shift_call) -> None:
    a = feasibly.assess(SHIFT, T="500 K")
    nominal = _exotherm(a.cautions)
    assert "95 % interval" not in nominal.message  # no draws: the nominal value only
    banded = _exotherm(cautions_with_draws(a.cautions, shift_call, a.standard.T, a.standard.dH))
    hot = adiabatic_temperature(SHIFT, stoichiometric_feed(shift_call.reaction), "500 K",
                                call=shift_call)  # fmt: skip
    assert hot.interval is not None
    lo, hi = hot.interval
    assert lo < hot.T_K < hi
    assert f"would reach about {hot.T_K:.0f} K" in banded.message
    assert f"95 % interval {lo:.0f}–{hi:.0f} K from the data's uncertainty" in banded.message
    assert "refer the step to process-safety review" in banded.message
    assert banded.basis == nominal.basis
    # The other cautions are untouched.
    others = [c for c in a.cautions if c.kind != "strongly exothermic"]
    assert [c for c in cautions_with_draws(a.cautions, shift_call, a.standard.T, a.standard.dH)
            if c.kind != "strongly exothermic"] == others  # fmt: skip


def test_above_the_dissociation_limit_the_band_comes_with_the_warning() -> None:
    call = feasibly.assess_uncertainty(BURN, T="300 K", samples=2048, seed=1)
    a = feasibly.assess(BURN, T="300 K")
    banded = _exotherm(cautions_with_draws(a.cautions, call, a.standard.T, a.standard.dH))
    hot = adiabatic_temperature(BURN, stoichiometric_feed(call.reaction), "300 K", call=call)
    assert hot.interval is not None
    assert "would pass 2500 K" in banded.message
    assert f"complete conversion gives {hot.T_K:.0f} K, 95 % interval" in banded.message
    assert "an overestimate" in banded.message


def test_an_endothermic_call_has_no_exotherm_caution_to_band() -> None:
    call = feasibly.assess_uncertainty("CaCO3 -> CaO + CO2", T="1100 K", samples=512, seed=1)
    a = feasibly.assess("CaCO3 -> CaO + CO2", T="1100 K")
    assert cautions_with_draws(a.cautions, call, a.standard.T, a.standard.dH) == a.cautions


def test_result_cautions_band_and_defer_and_repeat(shift_call) -> None:
    first = result_cautions(shift_call)
    assert any("95 % interval" in m for m in first) and first[-1] == DEFERRAL
    assert result_cautions(shift_call) == first  # the same draws: the same words


def test_the_record_quotes_the_band_and_verifies(shift_call) -> None:
    a = feasibly.assess(SHIFT, T="500 K")
    rec = record_from(a, shift_call)
    messages = [c["message"] for c in rec["results"]["assessment"]["cautions"]]
    assert any("95 % interval" in m for m in messages)
    assert verify_record(rec).identical
    html = record_html(rec)
    assert "95 % interval" in html and "process-safety review" in html
    # Without draws, the record keeps the nominal caution.
    plain = record_from(a)
    assert not any("95 % interval" in c["message"]
                   for c in plain["results"]["assessment"]["cautions"])  # fmt: skip


def test_the_command_line_quotes_the_band(capsys: pytest.CaptureFixture[str]) -> None:
    argv = ["assess", SHIFT, "--T", "500", "K", "--samples", "2048", "--seed", "3", "--json"]
    assert main(argv) == 0
    doc = json.loads(capsys.readouterr().out)
    exo = [c for c in doc["cautions"] if c["kind"] == "strongly exothermic"]
    assert exo and "95 % interval" in exo[0]["message"]
    assert main(argv[:-1]) == 0
    assert "95 % interval" in capsys.readouterr().out

"""``feasibly assess --heat``: the duty per row and the adiabatic temperature, in the table and
in JSON, from the call's own draws; an endothermic step says it has no adiabatic temperature."""

from __future__ import annotations

import json

import pytest

from feasibly.cli import main
from feasibly.heat import adiabatic_temperature, heat_duty


def test_json_carries_duty_per_row_and_the_adiabatic_temperature(
    capsys: pytest.CaptureFixture[str],
) -> None:
    args = ["assess", "C2H4 + H2 -> C2H6", "--T", "500", "600", "K", "--feed", "C2H4:1, H2:1, N2:4"]
    assert main([*args, "--heat", "--json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    for row in doc["rows"]:
        direct = heat_duty("C2H4 + H2 -> C2H6", f"{row['T_K']} K", "C2H4:1, H2:1, N2:4")
        assert row["duty_J_per_mol"] == pytest.approx(direct.J_per_mol_reaction, rel=1e-12)
    hot = adiabatic_temperature("C2H4 + H2 -> C2H6", "C2H4:1, H2:1, N2:4", "500 K")
    assert doc["heat"]["adiabatic_T_K"] == pytest.approx(hot.T_K, rel=1e-12)


def test_sampled_heat_has_intervals(capsys: pytest.CaptureFixture[str]) -> None:
    args = ["assess", "C2H4 + H2 -> C2H6", "--T", "500", "K", "--feed", "C2H4:1, H2:1, N2:4"]
    assert main([*args, "--heat", "--samples", "2000", "--seed", "3", "--json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    lo, hi = doc["rows"][0]["duty_J_per_mol_interval_95"]
    assert lo < doc["rows"][0]["duty_J_per_mol"] < hi
    lo, hi = doc["heat"]["adiabatic_T_K_interval_95"]
    assert lo < doc["heat"]["adiabatic_T_K"] < hi


def test_json_at_the_equilibrium_conversion_has_every_interval(
    capsys: pytest.CaptureFixture[str],
) -> None:
    """Each draw of the call at its own extent: the JSON rows carry the extent and the per-kg
    figures with their intervals, the same as heat_duty with the call's draws."""
    from feasibly import assess_uncertainty

    args = ["assess", "CO + H2O -> CO2 + H2", "--T", "900", "K", "--feed", "CO:1, H2O:1"]
    args += ["--heat", "--heat-conversion", "equilibrium", "--samples", "1024", "--seed", "5"]
    assert main([*args, "--json"]) == 0
    row = json.loads(capsys.readouterr().out)["rows"][0]
    call = assess_uncertainty("CO + H2O -> CO2 + H2", T="900 K", samples=1024, seed=5)
    direct = heat_duty("CO + H2O -> CO2 + H2", "900 K", "CO:1, H2O:1",
                       conversion="equilibrium", call=call)  # fmt: skip
    assert row["extent_mol"] == direct.extent
    assert row["extent_mol_interval_95"] == list(direct.extent_interval or ())
    assert row["duty_J_per_kg_feed_interval_95"] == list(direct.interval_per_kg_feed or ())
    assert row["duty_J_per_kg_product_interval_95"] == list(direct.interval_per_kg_product or ())


def test_endothermic_step_says_why_there_is_no_adiabatic_temperature(
    capsys: pytest.CaptureFixture[str],
) -> None:
    args = ["assess", "CaCO3 -> CaO + CO2", "--T", "1100", "K", "--feed", "CaCO3:1", "--heat"]
    assert main([*args, "--feed-T", "25", "degC"]) == 0
    out = capsys.readouterr().out
    assert "Heat duty" in out and "MJ per kg CaO" in out
    assert "No adiabatic temperature: this step takes in" in out


def test_heat_needs_a_feed(capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["assess", "CaCO3 -> CaO + CO2", "--T", "1100", "K", "--heat"]) == 2
    assert "--feed" in capsys.readouterr().err

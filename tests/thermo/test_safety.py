"""Cautions closer to practice: explosive or self-reactive substances, corrosives, the energy stored
in pressurised gas, and solid carbon found by ``equilibrate``; each flag names its source.

Outside references: the ideal-gas relations p·V = RT and W = RT·ln(p/p0) for reversible isothermal
expansion (IUPAC Green Book §2.11), evaluated here with scipy's CODATA gas constant; the Boudouard
equilibrium 2 CO ⇌ C + CO2 at 1 bar, which deposits carbon from CO at low temperature and not at
high (from memory: about half CO near 950 K), checked against Cantera's equilibrate elsewhere.
"""

from __future__ import annotations

import csv
import math
from pathlib import Path

import pytest
from scipy import constants

import feasibly
from feasibly.thermo import PRESSURE_CAUTION_PA, pressure_caution

DATA = Path(__file__).resolve().parents[2] / "data" / "process-cautions.csv"


def _kinds(a: feasibly.Assessment) -> dict[str, feasibly.Caution]:
    return {c.kind: c for c in a.cautions}


def test_process_cautions_table_has_a_source_on_every_row() -> None:
    with DATA.open(newline="", encoding="utf-8") as f:
        rows = list(csv.DictReader(f))
    assert rows and {r["flag"] for r in rows} == {"explosive or self-reactive", "corrosive"}
    for r in rows:
        assert r["formula"] and r["basis"] and r["source"], r
        # Recalled, not read: every row says so (see the data README).
        assert "(from memory)" in r["source"], r


def test_ammonium_nitrate_is_flagged_explosive_with_its_source() -> None:
    a = feasibly.assess("NH4NO3 -> N2O + 2 H2O", T="500 K")
    flag = _kinds(a)["explosive or self-reactive"]
    assert "NH4NO3 (ammonium nitrate)" in flag.message
    assert "UN 0222" in flag.basis and "Dangerous Goods List" in flag.basis
    assert feasibly.thermo.DEFERRAL in a.notes  # and the step is referred to safety review


@pytest.mark.parametrize(
    ("equation", "formula"),
    [
        ("H2 + Cl2 -> 2 HCl", "HCl"),
        ("SO3 + H2O(g) -> H2SO4(g)", "SO3"),
        ("N2 + 3 H2 -> 2 NH3", "NH3"),
    ],
)
def test_corrosives_are_flagged(equation: str, formula: str) -> None:
    a = feasibly.assess(equation, T="600 K")
    corrosive = [c for c in a.cautions if c.kind == "corrosive"]
    assert any(c.message.startswith(formula + " ") for c in corrosive), a.cautions
    assert all("UN Recommendations" in c.basis for c in corrosive)


def test_pressurised_gas_quotes_its_stored_energy() -> None:
    a = feasibly.assess(
        "N2 + 3 H2 -> 2 NH3",
        T="700 K",
        partial_pressures={"N2": "50 bar", "H2": "150 bar", "NH3": "10 bar"},
    )
    stored = _kinds(a)["stored energy in pressurised gas"]
    p, T, R = 210e5, 700.0, constants.R
    assert f"{R * T / 1000:.2f} kJ" in stored.message  # p·V = RT per mole
    assert f"{R * T * math.log(p / 101_325) / 1000:.2f} kJ per mole" in stored.message
    assert f"{1000 * R * T / p:.3g} L" in stored.message  # V = RT/p
    assert "210 bar" in stored.message and "Pressure Equipment Directive" in stored.basis


def test_no_pressure_caution_at_or_below_half_a_bar_gauge() -> None:
    assert pressure_caution({"CO2": PRESSURE_CAUTION_PA}, 600.0) is None
    assert pressure_caution({"CO2": 1e5, "N2": 0.4e5}, 600.0) is None
    assert pressure_caution({"CO2": 1e5, "N2": 0.6e5}, 600.0) is not None
    a = feasibly.assess("MgCO3 -> MgO + CO2", T="700 K", partial_pressures={"CO2": "0.05 bar"})
    assert "stored energy in pressurised gas" not in _kinds(a)


def test_carbon_deposition_from_equilibrate() -> None:
    cold = feasibly.equilibrate(["CO", "CO2", "C(s)"], T=([700, 800], "K"), feed="CO:1")
    found = cold.cautions()
    assert [c.kind for c in found] == ["carbon deposition"]
    solid = float(cold.amount("C(cr,graphite)")[0])
    assert f"{solid:.3g} mol of carbon" in found[0].message
    assert "700 K and 1 bar" in found[0].message
    assert cold.to_dict()["cautions"][0]["kind"] == "carbon deposition"
    # Hot and dilute in CO2: the Boudouard equilibrium leaves no solid carbon.
    hot = feasibly.equilibrate(["CO", "CO2", "C(s)"], T=([1400], "K"), feed="CO:1, CO2:20")
    assert hot.cautions() == []
    # Without a solid carbon species in the set nothing can be said (and nothing is).
    gas_only = feasibly.equilibrate(["CO", "CO2", "H2", "H2O"], T=([700], "K"), feed="CO:1, H2O:1")
    assert gas_only.cautions() == []


def test_carbon_caution_reaches_the_command_line(capsys) -> None:
    from feasibly.cli import main

    code = main(["equilibrate", "--species", "CO CO2 C(s)", "--feed", "CO:1", "--T", "750", "K"])
    assert code == 0
    assert "Caution: Solid carbon at equilibrium" in capsys.readouterr().out

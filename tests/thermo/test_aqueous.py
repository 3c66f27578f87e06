"""Aqueous species in equations, molalities in Q, and the refusals around them."""

from __future__ import annotations

import json

import numpy as np
import pytest

from feasibly import assess
from feasibly.conditions import read_molalities
from feasibly.errors import FeasiblyError, InvalidInput, ReactionSyntaxError, UnitError
from feasibly.library import Library, default_library
from feasibly.thermo.reaction import Reaction, parse_equation
from feasibly.uncertainty import assess_uncertainty


def test_aq_labels_read_next_to_charges() -> None:
    terms = parse_equation("H2O(l) -> H+(aq) + OH-(aq)")
    assert [(t[1], t[2]) for t in terms] == [("H2O", "l"), ("H+", "aq"), ("OH-", "aq")]
    # no spaces: '+' before a formula separates terms, '+' before a label is a charge
    terms = parse_equation("AgCl(cr)->Ag+(aq)+Cl-(aq)")
    assert [t[1] for t in terms] == ["AgCl", "Ag+", "Cl-"]


def test_library_has_at_least_100_aqueous_species() -> None:
    aq = [sp for sp in default_library() if sp.phase == "aq"]
    assert len(aq) >= 100
    h = default_library()["H+(aq)"]
    assert (h.dHf.value, h.S298.value, h.dHf.u, h.S298.u) == (0.0, 0.0, 0.0, 0.0)
    # ions' S° on the H+ scale may be negative (CRC: S°(CO3-2, aq) = -56.9 J/(mol K))
    assert default_library()["CO3-2(aq)"].S298.value == pytest.approx(-56.9)


def test_unlabelled_species_never_become_solutes() -> None:
    """NH3(aq) or CO2(aq) would have lower ΔfG° than the gas; a species without a label takes
    its pure phases only."""
    for eq in ("N2 + 3 H2 -> 2 NH3", "C + O2 -> CO2"):
        phases = assess(eq, T="25 degC").standard.phases[0]
        assert all(not p.endswith("(aq)") for p in phases), phases


def test_gas_and_aqueous_ions_are_not_mixed() -> None:
    with pytest.raises(ReactionSyntaxError, match="different conventions"):
        Reaction.parse("Na+(g) -> Na+(aq)")


def test_no_metastability_claim_between_solute_and_gas_ion() -> None:
    a = assess("AgCl(cr) -> Ag+(aq) + Cl-(aq)", T="25 degC")
    assert a.metastable == []


def test_molalities_enter_q_and_unknown_ones_are_refused() -> None:
    eq = "CaCO3(cr,calcite) -> Ca+2(aq) + CO3-2(aq)"
    a = assess(eq, T="25 degC", molalities={"Ca+2": "1e-3 mol/kg"})
    assert a.log10_Q == pytest.approx(-3.0)
    assert a.assumed_standard == ["CO3-2(aq)"]
    assert a.to_dict()["molalities_mol_per_kg"] == {"Ca+2": pytest.approx(1e-3)}
    assert any("ideal dilute solution" in n for n in a.notes)
    with pytest.raises(UnitError, match="not in the equation"):
        assess(eq, T="25 degC", molalities={"Na+": "0.1 mol/kg"})
    with pytest.raises(UnitError, match="not aqueous"):
        assess(eq, T="25 degC", molalities={"CaCO3": "0.1 mol/kg"})


@pytest.mark.parametrize(
    ("value", "fragment"),
    [
        (0.1, "bare number"),
        ("0.1 bar", "mol/kg"),
        ("-1 mol/kg", "above 0"),
        ("nan mol/kg", "finite"),
        ("0.1 " + "mol/kg*" * 40, "longer than"),  # bounded before any unit parsing
    ],
)
def test_bad_molalities(value: object, fragment: str) -> None:
    with pytest.raises(UnitError, match=fragment):
        read_molalities({"Cl-": value})
    with pytest.raises(InvalidInput, match="mapping"):
        read_molalities(["Cl-", "0.1 mol/kg"])  # type: ignore[arg-type]


def test_molality_reader_units() -> None:
    assert read_molalities({"Cl-": "250 mmol/kg", "Na+": "0.5 molal"}) == {
        "Cl-": pytest.approx(0.25),
        "Na+": pytest.approx(0.5),
    }


def test_uncertainty_run_uses_molalities_and_grows_away_from_25_c() -> None:
    eq = "H2O(l) -> H+(aq) + OH-(aq)"
    u = assess_uncertainty(
        eq,
        T_range=("0 degC", "100 degC"),
        points=5,
        samples=20_000,
        seed=3,
        molalities={"H+": "1e-7 mol/kg", "OH-": "1e-7 mol/kg"},
    )
    a = assess(
        eq,
        T_range=("0 degC", "100 degC"),
        points=5,
        molalities={"H+": "1e-7 mol/kg", "OH-": "1e-7 mol/kg"},
    )
    assert a.dG_actual is not None
    assert np.allclose(u.G.mean, a.dG_actual, atol=4 * u.G.u.max() / np.sqrt(20_000))
    # pure water at 25 °C: ΔrG at 1e-7 mol/kg each is ≈ 0 (pKw ≈ 14)
    assert abs(a.dG_actual[1]) < 500.0
    # the Cp factor's share: ΔrH° uncertainty is larger at 0 and 100 °C than at 25 °C
    assert u.H.u[0] > u.H.u[1] and u.H.u[-1] > u.H.u[1]


def test_records_refuse_molalities_and_conversion_refuses_solutes() -> None:
    from feasibly.equilibrium import equilibrium_extent
    from feasibly.errors import RecordError
    from feasibly.records import record_from

    a = assess("AgCl(cr) -> Ag+(aq) + Cl-(aq)", T="25 degC", molalities={"Ag+": "1e-5 mol/kg"})
    with pytest.raises(RecordError, match="molalities cannot be recorded"):
        record_from(a, author="x", reviewer="y", rationale="z")
    with pytest.raises(InvalidInput, match="aqueous solute"):
        equilibrium_extent(
            "AgCl(cr) -> Ag+(aq) + Cl-(aq)", T="25 degC", P="1 bar", feed={"AgCl": 1.0}
        )


def test_aqueous_entries_may_have_negative_s_and_cp_but_solids_not() -> None:
    ion = {
        "formula": "Zz-",
        "phase": "aq",
        "T_range_K": [273.15, 373.15],
        "dHf_298": {"value": -1.0, "u": 1.0, "source": "x"},
        "S_298": {"value": -5.0, "u": 1.0, "source": "x"},
        "cp": {"model": "constant", "cp_J_per_mol_K": -100.0, "u_rel": 0.1, "source": "x"},
    }
    ion["formula"] = "OH-"
    doc = {"schema": "feasibly-species", "schema_version": 1, "species": [ion]}
    lib = Library.from_text(json.dumps(doc), "ions.json")
    assert lib["OH-(aq)"].S298.value == -5.0
    solid = dict(ion, formula="NaCl", phase="cr")
    doc["species"] = [solid]
    with pytest.raises(FeasiblyError, match=r"S_298\.value"):
        Library.from_text(json.dumps(doc), "solid.json")
    doc["species"] = [dict(solid, S_298={"value": 72.1, "u": 1.0, "source": "x"})]
    with pytest.raises(FeasiblyError, match=r"cp\.cp_J_per_mol_K"):
        Library.from_text(json.dumps(doc), "solid.json")


def test_cli_molality_option(capsys: pytest.CaptureFixture[str]) -> None:
    from feasibly.cli import main

    code = main(
        [
            "assess",
            "AgCl(cr) -> Ag+(aq) + Cl-(aq)",
            "--T",
            "25",
            "degC",
            "--m",
            "Ag+=1e-5",
            "mol/kg",
            "--m",
            "Cl-=1e-5",
            "mol/kg",
        ]
    )
    out, err = capsys.readouterr()
    assert code == 0, err
    assert "Ag+ 1e-05 mol/kg" in out and "ideal dilute solution" in out
    code = main(["assess", "AgCl(cr) -> Ag+(aq) + Cl-(aq)", "--T", "25", "degC", "--m", "Ag+=1e-5"])
    _, err = capsys.readouterr()
    assert code == 2 and "molality" in err and "Traceback" not in err


def test_molalities_and_a_required_conversion_are_not_combined() -> None:
    # The call at a required conversion takes its composition from a gas feed; molalities would
    # be a second, conflicting description of the conditions.
    conv = {"feed": {"CO2": 1.0}, "key": "CO2", "required": "50%", "P": "1 bar"}
    eq = "CaCO3(cr,calcite) + CO2 + H2O(l) -> Ca+2(aq) + 2 HCO3-(aq)"
    mol = {"Ca+2": "1e-3 mol/kg"}
    with pytest.raises(UnitError, match="not both"):
        assess(eq, T="25 degC", molalities=mol, at_conversion=conv)
    with pytest.raises(UnitError, match="not both"):
        assess_uncertainty(eq, T="25 degC", samples=256, seed=1, molalities=mol, at_conversion=conv)

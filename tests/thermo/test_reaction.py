"""Reading, checking and finding the balance of equations; phase choice.

Expected balances are the conservation of atoms (checked by counting), not numbers we computed.
"""

from __future__ import annotations

from fractions import Fraction

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

import feasibly
from feasibly import (
    AmbiguousBalance,
    FeasiblyError,
    Library,
    OutsideDataRange,
    Reaction,
    ReactionSyntaxError,
    UnbalancedReaction,
    UnknownSpecies,
)
from feasibly.thermo.reaction import parse_equation


def coefs(rxn: Reaction) -> dict[str, Fraction]:
    return {t.label(): t.coefficient for t in rxn.terms}


@pytest.mark.parametrize(
    "text",
    [
        "2 H2 + O2 -> 2 H2O",
        "2H2 + O2 = 2H2O",
        "2 H2 + O2 <=> 2 H2O",
        "2 H2 + O2 → 2 H2O",
        "H2 + 1/2 O2 -> H2O",
        "H2 + 0.5 O2 -> H2O",
        "H2+0.5O2->H2O",
    ],
)
def test_syntax_variants(text: str) -> None:
    rxn = Reaction.parse(text)
    c = coefs(rxn)
    assert c["O2"] / c["H2"] == Fraction(1, 2)
    assert c["H2O"] / c["H2"] == -1


def test_phase_labels() -> None:
    parsed = parse_equation("MgCO3(s) -> MgO(cr) + CO2(g)")
    assert [(f, p) for _, f, p, _, _ in parsed] == [("MgCO3", "cr"), ("MgO", "cr"), ("CO2", "g")]
    parsed = parse_equation("Ca(OH)2(s) -> CaO(s) + H2O(l)")
    assert parsed[0][1:3] == ("Ca(OH)2", "cr")


def test_unbalanced_names_elements_and_amounts() -> None:
    with pytest.raises(UnbalancedReaction) as info:
        Reaction.parse("CH4 + O2 -> CO2 + H2O")
    err = info.value
    assert err.imbalance == {"O": pytest.approx(1.0), "H": pytest.approx(-2.0)}
    assert "O: products have 1 more" in str(err)
    assert "H: reactants have 2 more" in str(err)


def test_auto_balance() -> None:
    rxn = Reaction.parse("C2H5OH + O2 -> CO2 + H2O", balance=True)
    assert str(rxn) == "C2H5OH + 3 O2 -> 2 CO2 + 3 H2O"
    assert not rxn.imbalance()


def test_auto_balance_refusals() -> None:
    with pytest.raises(AmbiguousBalance, match="independent ways"):
        Reaction.parse("C + O2 -> CO + CO2", balance=True)
    with pytest.raises(AmbiguousBalance, match="O2 on the other side"):
        Reaction.parse("H2O + O2 -> H2", balance=True)
    with pytest.raises(AmbiguousBalance, match="CH4 cannot take part"):
        Reaction.parse("CO2 -> CO + CH4 + O2", balance=True)
    with pytest.raises(AmbiguousBalance, match="no coefficients"):
        Reaction.parse("CH4 -> CO2", balance=True)


@pytest.mark.parametrize(
    ("text", "error", "fragment"),
    [
        ("", ReactionSyntaxError, "empty"),
        ("H2 + O2", ReactionSyntaxError, "exactly one arrow"),
        ("H2 -> O2 -> H2O", ReactionSyntaxError, "exactly one arrow"),
        ("-> H2O", ReactionSyntaxError, "both sides"),
        ("H2 + + O2 -> H2O", ReactionSyntaxError, "empty term"),
        ("H2 + 0 O2 -> H2", ReactionSyntaxError, "must be positive"),
        ("H2(plasma) -> H2", UnknownSpecies, "The library has H2(g)"),
        ("H2(g,alpha,beta) -> H2", UnknownSpecies, "Cannot read"),
        ("Xq2 -> Xq2", UnknownSpecies, "not an element"),
        ("H2 -> H2(aq)", UnknownSpecies, "The library has"),
        ("CO3 -> CO3", UnknownSpecies, "No species"),
        ("H2 + H2 -> 2 H2", ReactionSyntaxError, "more than once"),
    ],
)
def test_bad_equations(text: str, error: type, fragment: str) -> None:
    with pytest.raises(error) as info:
        Reaction.parse(text)
    assert fragment in str(info.value)
    assert isinstance(info.value, FeasiblyError)


def test_same_composition_isomers_must_be_named(lib: Library) -> None:
    # Ethanol and dimethyl ether share C2H6O; the message lists both ways to write them.
    with pytest.raises(UnknownSpecies, match="Several species share"):
        Reaction.parse("C2H6O -> C2H4 + H2O", library=lib)


def test_unlabelled_species_take_the_stable_phase() -> None:
    rxn = Reaction.parse("H2 + 1/2 O2 -> H2O")
    plan = rxn.phase_plan(np.array([300.0, 500.0]))
    water = rxn.terms[2]
    assert [water.candidates[i].phase for i in plan[2]] == ["l", "g"]
    # The liquid–vapour change of water at 1 bar: 372.76 K (IAPWS; from memory). The NASA
    # polynomials put it within about 1 K of that.
    (change,) = [c for c in rxn.phase_changes(300.0, 500.0) if c[0] == "H2O"]
    assert change[1] == pytest.approx(372.8, abs=1.5)


def test_explicit_phase_is_respected_and_metastability_flagged() -> None:
    rxn = Reaction.parse("H2 + 1/2 O2 -> H2O(g)")
    assert rxn.terms[2].candidates[0].phase == "g"
    flagged = rxn.metastable(np.array([300.0]))
    assert flagged and flagged[0][0] == "H2O(g)" and flagged[0][2] == "H2O(l)"


def test_outside_range_names_species_and_range() -> None:
    rxn = Reaction.parse("H2 + 1/2 O2 -> H2O(l)")
    with pytest.raises(OutsideDataRange) as info:
        rxn.phase_plan(np.array([700.0]))
    assert "H2O(l) has data from" in str(info.value) and "700 K is outside" in str(info.value)


# --- property tests --------------------------------------------------------------------------

BALANCED = [
    "2 H2 + O2 -> 2 H2O",
    "CH4 + 2 O2 -> CO2 + 2 H2O",
    "CO + H2O -> CO2 + H2",
    "2 SO2 + O2 -> 2 SO3",
    "N2 + 3 H2 -> 2 NH3",
    "Fe2O3 + 3 CO -> 2 Fe + 3 CO2",
    "MgCO3 -> MgO + CO2",
    "C + CO2 -> 2 CO",
    "4 NH3 + 5 O2 -> 4 NO + 6 H2O",
    "TiO2 + 2 Cl2 + C -> TiCl4 + CO2",
]


@settings(max_examples=150, deadline=None)
@given(
    st.sampled_from(BALANCED),
    st.sampled_from([Fraction(1, 2), Fraction(1), Fraction(2), Fraction(3, 2)]),
    st.sampled_from(["->", "=", "<=>", "→"]),
)
def test_formatted_balanced_equations_round_trip(text: str, scale: Fraction, arrow: str) -> None:
    base = Reaction.parse(text)
    left = " + ".join(f"{-t.coefficient * scale} {t.label()}" for t in base.terms if t.nu < 0)
    right = " + ".join(f"{t.coefficient * scale} {t.label()}" for t in base.terms if t.nu > 0)
    again = Reaction.parse(f"{left} {arrow} {right}")
    assert coefs(again) == {k: v * scale for k, v in coefs(base).items()}
    assert coefs(Reaction.parse(str(again))) == coefs(again)


POOL = [
    "H2",
    "O2",
    "H2O",
    "CO",
    "CO2",
    "CH4",
    "C2H6",
    "N2",
    "NH3",
    "NO",
    "NO2",
    "SO2",
    "H2S",
    "S",
    "Fe",
    "Fe2O3",
    "FeO",
    "C",
    "HCl",
    "Cl2",
    "MgO",
    "Mg",
]


@settings(max_examples=200, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.lists(st.sampled_from(POOL), min_size=2, max_size=5, unique=True), st.data())
def test_auto_balance_conserves_every_element(species: list[str], data: st.DataObject) -> None:
    split = data.draw(st.integers(1, len(species) - 1))
    text = " + ".join(species[:split]) + " -> " + " + ".join(species[split:])
    try:
        rxn = Reaction.parse(text, balance=True)
    except AmbiguousBalance:
        return
    assert all(t.coefficient.denominator == 1 for t in rxn.terms)
    assert not rxn.imbalance()
    # Smallest integers: their greatest common divisor is 1.
    from math import gcd

    g = 0
    for t in rxn.terms:
        g = gcd(g, abs(t.coefficient.numerator))
    assert g == 1


@settings(max_examples=300, deadline=None)
@given(st.text(alphabet=st.sampled_from(list("HCONFeSl()[]+-=<>→23/. aqgs^*·")), max_size=40))
def test_random_text_raises_only_documented_errors(text: str) -> None:
    try:
        Reaction.parse(text)
    except FeasiblyError:
        pass


@settings(max_examples=100, deadline=None)
@given(st.text(max_size=40))
def test_arbitrary_unicode_raises_only_documented_errors(text: str) -> None:
    try:
        Reaction.parse(text, balance=True)
    except FeasiblyError:
        pass


# --- identity: a formula, name or CAS number is exactly one compound, or refused -----------------
@pytest.mark.parametrize(
    ("equation", "written", "other"),
    [
        # Ethyl formate is not in the library; propanoic acid and methyl acetate share C3H6O2.
        ("HCOOC2H5 -> CO + C2H5OH", "HCOOC2H5", "CH3COOCH3 (methyl acetate, CAS 79-20-9"),
        # o-Xylene is not in the library; ethylbenzene shares C8H10.
        ("C6H4(CH3)2 + 10.5 O2 -> 8 CO2 + 5 H2O", "C6H4(CH3)2", "C6H5C2H5 (ethylbenzene"),
    ],
)
def test_a_structural_formula_never_becomes_another_isomer(
    equation: str, written: str, other: str
) -> None:
    with pytest.raises(UnknownSpecies) as info:
        Reaction.parse(equation)
    msg = str(info.value)
    assert info.value.query == written
    assert other in msg  # the candidate is named, with name and CAS, as a different compound
    assert "may be another isomer" in msg or "does not guess" in msg


@pytest.mark.parametrize(
    ("equation", "written", "name", "cas"),
    [
        # the esterification once resolved ethyl acetate to 1,4-dioxane (c-C4H8O2), which is in
        # the library too now: each formula is its own compound
        ("CH3COOH + C2H5OH -> CH3COOC2H5 + H2O", "CH3COOC2H5", "ethyl acetate", "141-78-6"),
        ("HCOOCH3 -> CO + CH3OH", "HCOOCH3", "methyl formate", "107-31-3"),
        ("c-C4H8O2(l) + 5 O2 -> 4 CO2 + 4 H2O", "c-C4H8O2", "1,4-dioxane", "123-91-1"),
    ],
)
def test_isomers_in_the_library_keep_their_identity(
    equation: str, written: str, name: str, cas: str
) -> None:
    # CAS numbers as listed in the CRC Handbook table carried by chemicals
    rxn = Reaction.parse(equation)
    (term,) = [t for t in rxn.terms if t.formula == written]
    assert term.identity()["name"] == name and term.identity()["cas"] == cas


def test_a_molecular_formula_of_several_isomers_lists_them_all(lib: Library) -> None:
    with pytest.raises(UnknownSpecies) as info:
        Reaction.parse("C2H6O -> C2H4 + H2O", library=lib)
    assert info.value.suggestions == ["C2H5OH", "CH3OCH3"]
    assert "C2H5OH (ethanol, CAS 64-17-5; phases g, l)" in str(info.value)
    assert "CH3OCH3 (dimethyl ether, CAS 115-10-6; phases g)" in str(info.value)


@pytest.mark.parametrize(
    "equation",
    [
        "{ethanol} -> C2H4 + H2O",
        "{Ethanol}(g) -> C2H4 + H2O",
        "{64-17-5} -> {ethylene} + {water}",
        "{ethyl alcohol} -> {74-85-1}+{7732-18-5}",
    ],
)
def test_names_and_cas_numbers_in_braces(equation: str) -> None:
    rxn = Reaction.parse(equation)
    ids = {t.formula: t.identity() for t in rxn.terms}
    # Ethanol's CAS number, 64-17-5, is the one the data library carries for C2H5OH.
    assert ids["C2H5OH"]["name"] == "ethanol" and ids["C2H5OH"]["cas"] == "64-17-5"


def test_named_species_keep_their_phase_label_and_coefficient() -> None:
    rxn = Reaction.parse("2 {methanol}(l) + 3 O2 -> 2 CO2 + 4 {water}(g)")
    assert str(rxn) == "2 CH3OH(l) + 3 O2 -> 2 CO2 + 4 H2O(g)"
    assert rxn.terms[0].text == "{methanol}"


@pytest.mark.parametrize(
    ("equation", "error", "fragment"),
    [
        ("{ethyl formate} -> CO + C2H5OH", UnknownSpecies, "No compound of the data library"),
        ("{64-17-4} -> C2H4 + H2O", UnknownSpecies, "check digit"),
        ("{} -> C2H4 + H2O", UnknownSpecies, "braces are empty"),
        ("{ethanol -> C2H4 + H2O", ReactionSyntaxError, "no partner"),
        ("2{ethanol}x -> C2H4 + H2O", ReactionSyntaxError, "stands alone"),
    ],
)
def test_bad_named_species(equation: str, error: type, fragment: str) -> None:
    with pytest.raises(error, match=fragment):
        Reaction.parse(equation)


def test_exact_formulas_still_resolve_and_carry_name_and_cas() -> None:
    rxn = Reaction.parse("CaCO3 -> CaO + CO2")
    # CAS numbers as the data library records them (from the chemicals identifier database).
    assert [t.identity()["cas"] for t in rxn.terms] == ["471-34-1", "1305-78-8", "124-38-9"]


def test_a_shipped_gas_only_compound_is_not_used_for_its_solid() -> None:
    """NiO has only a gas entry (thermo.inp has no NiO(cr); the Burcat solid, ΔfH° 231 kJ/mol
    off its own header, is gone); written without a phase it must be refused where it is a
    solid (CRC: NiO melts at 2230 K), not silently used as NiO(g), which gave ΔrG° = −442 kJ/mol
    for NiO + H2 → Ni + H2O at 800 K (about −20 from the CRC/NBS solid values, from memory)."""
    with pytest.raises(feasibly.MissingCondensedPhase, match=r"write NiO\(g\)"):
        feasibly.assess("NiO + H2 -> Ni + H2O", T="800 K")
    # the gas, when asked for by name, with the missing solid said
    a = feasibly.assess("NiO(g) + H2 -> Ni + H2O", T="800 K")
    assert any(n.startswith("NiO(g):") and "stable solid" in n for n in a.notes)

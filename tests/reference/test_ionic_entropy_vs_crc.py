"""Ionic-contribution S° against salts the fit never saw: CRC Handbook / NBS S°(298.15 K) of
crystalline salts that the shipped library does not carry (so no term was fitted to them), read
from the CRC table carried by ``chemicals`` (``chemicals.reaction.S0s(CAS, method="CRC")``)."""

from __future__ import annotations

import pytest

from feasibly.estimation import ionic_entropy
from feasibly.library import default_library
from feasibly.library.formula import parse_formula

chemicals_reaction = pytest.importorskip(
    "chemicals.reaction", reason="needs chemicals (test extra)"
)

pytestmark = pytest.mark.reference

Z95 = 1.959963984540054  # scipy.stats.norm.ppf(0.975)

# (formula written from the CRC row's name, CAS of that row, the row's name). Source of every
# S°: CRC Handbook, Standard Thermodynamic Properties of Chemical Substances (NBS values), as
# carried by chemicals. Rows whose CAS look-up gives another composition than the name
# (iron(II) orthosilicate, silver(II) oxide) are left out: the name is not the formula.
OUTSIDE = [
    ("CdCO3", "513-78-0", "Cadmium carbonate"),
    ("CdS", "1306-23-6", "Cadmium sulfide"),
    ("Na2SiO3", "6834-92-0", "Sodium metasilicate"),
    ("HgCl2", "7487-94-7", "Mercury(II) chloride"),
    ("ZnBr2", "7699-45-8", "Zinc bromide"),
    ("HgI2", "7774-29-0", "Mercury(II) iodide (red)"),
    ("FeBr2", "7789-46-0", "Iron(II) bromide"),
    ("CdF2", "7790-79-6", "Cadmium fluoride"),
    ("CoSO4", "10124-43-3", "Cobalt(II) sulfate"),
    ("ZnI2", "10139-47-6", "Zinc iodide"),
    ("Ga(OH)3", "12023-99-3", "Gallium(III) hydroxide"),
    ("Ni(OH)2", "12054-48-7", "Nickel(II) hydroxide"),
    ("Zn(OH)2", "20427-58-1", "Zinc hydroxide"),
    ("Co(OH)2", "21041-93-0", "Cobalt(II) hydroxide"),
    ("Cd(OH)2", "21041-95-2", "Cadmium hydroxide"),
]


def _crc_s(cas: str) -> float:
    return float(chemicals_reaction.S0s(cas, method="CRC"))


def test_outside_salts_are_not_in_the_library() -> None:
    have = {frozenset(sp.elements.items()) for sp in default_library() if sp.phase == "cr"}
    for formula, _, name in OUTSIDE:
        assert frozenset(parse_formula(formula).elements.items()) not in have, name


def test_95_interval_covers_90_percent_of_the_outside_salts() -> None:
    covered = []
    for formula, cas, _name in OUTSIDE:
        est = ionic_entropy(formula)
        err = est.S298 - _crc_s(cas)
        covered.append(abs(err) <= Z95 * est.u_S298)
        # No estimate is a confident wrong call: each within 3 standard uncertainties.
        assert abs(err) <= 3 * est.u_S298, (formula, err, est.u_S298)
    assert sum(covered) / len(covered) >= 0.90


@pytest.mark.parametrize(("formula", "cas", "name"), OUTSIDE[:3])
def test_named_salts(formula: str, cas: str, name: str) -> None:
    """Three single checks, CRC/NBS value against the estimate's 95 % interval."""
    est = ionic_entropy(formula)
    assert est.S298 == pytest.approx(_crc_s(cas), abs=Z95 * est.u_S298), name

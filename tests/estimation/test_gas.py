"""Group-additivity estimates of gases: the make-up of an estimate, symmetry and stereo terms,
the Cp fit, refusals with their reasons, the entry it becomes, and the package without RDKit."""

from __future__ import annotations

import json
import math
import subprocess
import sys

import numpy as np
import pytest

import feasibly
from feasibly.errors import InvalidInput, NotEstimable
from feasibly.estimation import ORIGIN, estimate_gas, group_set, nominal_gas
from feasibly.library.cp_models import R

rdkit = pytest.importorskip("rdkit", reason="estimates need RDKit (feasibly[estimate])")


def _groups(smiles: str) -> dict[str, float]:
    n = nominal_gas(smiles)
    return {g["name"]: g["count"] for g in (*n["groups"], *n["corrections"])}


def test_groups_of_simple_structures_are_bensons() -> None:
    # Benson (1976) writes these molecules with exactly these groups (the group names of the
    # pgradd tables); the carbonyl O is part of CO, a C_B group is named by its substituent.
    assert _groups("CCC") == {"C(C)(H)3": 2, "C(C)2(H)2": 1}
    assert _groups("CCO") == {"C(C)(H)3": 1, "C(C)(O)(H)2": 1, "O(C)(H)": 1}
    assert _groups("Cc1ccccc1") == {"C(C)(H)3": 1, "C[B](C)(C[B])2": 1, "C[B](C[B])2(H)": 5}
    assert _groups("C1CCCCC1") == {"C(C)2(H)2": 6, "Cyclohexane": 1}
    assert _groups("c1ccc2ccccc2c1") == {"C[B](C[B])2(H)": 8, "C[BF](C[BF])(C[B])2": 2}
    # Methyl on O takes the C(C)(H)3 value (Benson's equivalence, pgradd's remap).
    assert _groups("COC") == {"C(C)(H)3": 2, "O(C)2": 1}
    # n-pentane has no gauche pair; 2-methylbutane one (Benson's counting rule).
    assert "AlkaneGauche" not in _groups("CCCCC")
    assert _groups("CCC(C)C")["AlkaneGauche"] == 1
    assert _groups("C/C=C\\C")["Cis"] == 1
    assert "Cis" not in _groups("C/C=C/C")
    assert _groups("Cc1ccccc1C")["Ortho"] == 1


def test_values_are_the_sums_of_the_shipped_groups() -> None:
    data = group_set()
    n = nominal_gas("CCCC")
    g = data["groups"]
    expected_h = 2 * g["C(C)(H)3"]["dHf_298_J_per_mol"] + 2 * g["C(C)2(H)2"]["dHf_298_J_per_mol"]
    expected_s = 2 * g["C(C)(H)3"]["S_298_J_per_mol_K"] + 2 * g["C(C)2(H)2"]["S_298_J_per_mol_K"]
    assert n["dHf"] == pytest.approx(expected_h, rel=1e-12)
    assert n["S298"] == pytest.approx(expected_s - R * math.log(18), rel=1e-12)


@pytest.mark.parametrize(
    ("smiles", "sigma"),
    [
        # σ = order of the rotational subgroup of the point group × 3 per methyl rotor
        # (the textbook definition; e.g. benzene D6h → 12, methane Td → 12).
        ("C", 12),
        ("O", 2),
        ("CC", 18),
        ("CCC", 18),
        ("CC(C)C", 81),
        ("CC(C)(C)C", 972),
        ("c1ccccc1", 12),
        ("Cc1ccccc1", 6),
        ("C=C", 4),
        ("CC(C)=O", 18),
        ("C1CCCCC1", 6),
        ("c1ccc2ccccc2c1", 4),
        ("CO", 3),
    ],
)
def test_symmetry_numbers(smiles: str, sigma: int) -> None:
    from rdkit import Chem

    from feasibly.estimation._symmetry import symmetry_number

    found = symmetry_number(Chem.AddHs(Chem.MolFromSmiles(smiles)))
    assert found is not None and found[0] == sigma


def test_an_unassigned_stereocentre_adds_r_ln_2() -> None:
    racemic = nominal_gas("CCC(C)O")
    one = nominal_gas("CC[C@@H](C)O")
    assert racemic["stereocentres"] == 1 and one["stereocentres"] == 0
    assert racemic["S298"] - one["S298"] == pytest.approx(R * math.log(2), rel=1e-12)
    assert racemic["dHf"] == one["dHf"]


def test_cp_fit_follows_the_group_sums() -> None:
    est = estimate_gas("CCCCCC")
    T = np.array(est.cp_T)
    # The fit's largest residual is stated, and is what the fit achieves at the group points.
    assert np.max(np.abs(est.cp(T) - np.array(est.cp_values))) == pytest.approx(
        est.cp_fit_max_residual, rel=1e-9
    )
    # A cubic through 7 smooth points: under 1 % of Cp (the group sums rise monotonically).
    assert est.cp_fit_max_residual < 0.01 * min(est.cp_values)
    sp = est.library()[est.id]
    assert sp.cp(T) == pytest.approx(est.cp(T), rel=1e-12)
    assert sp.T_range == (298.15, est.T_max)


@pytest.mark.parametrize(
    ("smiles", "says"),
    [
        ("[CH3]", "radical"),
        ("C[O-]", "charge"),
        ("C[Fe]C", "metal"),
        ("CCN", "C, H and O only"),
        ("C=C=C", "cumulated"),
        ("C1CC12CC2", "fused, bridged or spiro"),
        ("C1CC2CC1C2", "fused, bridged or spiro"),
        ("C=C1CC1", "ring (strain) correction"),
        ("C1CCCCCCCCCC1", "ring (strain) correction"),
        ("CC=CC", "cis and trans"),
        ("CC(C)(C)C(C)(C)C", "crowded"),
        ("CCO.CCO", "more than one molecule"),
    ],
)
def test_out_of_domain_structures_are_refused_with_the_reason(smiles: str, says: str) -> None:
    with pytest.raises(NotEstimable) as info:
        estimate_gas(smiles)
    assert says in str(info.value)
    assert "Supply measured or tabulated values" in str(info.value)


def test_a_missing_group_is_named() -> None:
    # Methyl acetate needs O(C)(CO): the group set gives it ΔfH° and S° but no Cp.
    with pytest.raises(NotEstimable) as info:
        estimate_gas("CC(=O)OC")
    assert "O(C)(CO)" in info.value.missing
    assert "O(C)(CO)" in str(info.value) and "Cp" in str(info.value)
    # Cyclopentanone's ring correction has ΔfH° only.
    with pytest.raises(NotEstimable, match="cyclopentanone"):
        estimate_gas("O=C1CCCC1")


@pytest.mark.parametrize("bad", ["", "C1CC", "not a smiles", "C" * 500, 42])
def test_unreadable_smiles_is_invalid_input(bad: object) -> None:
    with pytest.raises(InvalidInput, match="smiles"):
        estimate_gas(bad)  # type: ignore[arg-type]


def test_bad_labels_and_names_are_refused() -> None:
    for label in ("", "has space", "x" * 41, "a)b"):
        with pytest.raises(InvalidInput, match="label"):
            estimate_gas("CCO", label=label)
    for name in ("ethanol\x1b]52;c;aGk=\x07", "x" * 121):
        with pytest.raises(InvalidInput, match="name"):
            estimate_gas("CCO", name=name)


def test_the_entry_carries_estimated_provenance_and_is_usable() -> None:
    est = estimate_gas("CC(C)CC(C)=O", name="4-methylpentan-2-one")
    lib = est.library()
    sp = lib[est.id]
    assert sp.origin == ORIGIN
    assert sp.dHf.value == est.dHf and sp.dHf.u == pytest.approx(est.u_dHf, rel=1e-12)
    assert sp.S298.value == est.S298 and sp.cp_u_rel == est.cp_u_rel
    assert "estimated" in sp.dHf.uncertainty["source"]
    notes = " ".join(sp.notes)
    for g in est.groups:
        assert g["name"] in notes
    assert "pgradd" in notes and "symmetry number" in notes
    assert lib.by_name("4-methylpentan-2-one") == [sp]
    # The summary (the command line's --json) holds the three values and their u.
    summary = json.loads(json.dumps(est.summary()))
    assert summary["dHf_298_J_per_mol"] == {"value": est.dHf, "u": est.u_dHf}
    assert summary["groups"][0]["name"] == est.groups[0]["name"]


def test_the_uncertainty_follows_the_calibrated_rule() -> None:
    from feasibly.estimation import uncertainty_rule

    rule = uncertainty_rule()["classes"]
    est = estimate_gas("CCCCCC")
    assert est.structure_class == "alkane"
    assert est.u_dHf == pytest.approx(rule["alkane"]["k_dHf_J_per_mol"] * math.sqrt(6))
    assert est.u_S298 == pytest.approx(rule["alkane"]["k_S_J_per_mol_K"] * math.sqrt(6))


def test_package_imports_and_refuses_clearly_without_rdkit() -> None:
    code = (
        "import sys; sys.modules['rdkit'] = None\n"
        "import feasibly, feasibly.estimation\n"
        "from feasibly.errors import InvalidInput\n"
        "try:\n"
        "    feasibly.estimation.estimate_gas('CCO')\n"
        "except InvalidInput as e:\n"
        "    print(e)\n"
        "from feasibly.cli import main\n"
        "print('exit', main(['estimate', 'CCO']))\n"
    )
    out = subprocess.run(
        [sys.executable, "-c", code], capture_output=True, text=True, check=True, timeout=120
    )
    assert "feasibly[estimate]" in out.stdout
    assert "exit 2" in out.stdout
    assert "feasibly[estimate]" in out.stderr


def test_face_lists_the_wing() -> None:
    import feasibly.estimation as wing

    assert set(wing.__all__) <= set(dir(wing))
    assert feasibly.__version__

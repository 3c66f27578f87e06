"""Neumann–Kopp Cp of inorganic solids: the sum of the library's element Cp°(298.15 K), the
calibrated uncertainty recomputed from its shipped table, the entry it makes, and refusals."""

from __future__ import annotations

import csv
import math
from pathlib import Path

import numpy as np
import pytest

from feasibly.errors import InvalidInput, NotEstimable
from feasibly.estimation import NK_ORIGIN, estimate_solid, neumann_kopp, neumann_kopp_rule
from feasibly.library import default_library

ROOT = Path(__file__).resolve().parents[2]
Z95 = 1.959963984540054  # scipy.stats.norm.ppf(0.975)


def test_sum_of_the_elements_reference_state_cp() -> None:
    lib = default_library()
    nk = neumann_kopp("MnCO3")
    T = np.array([298.15])
    expected = (
        (lib["Mn(cr,alpha)"].cp(T)[0] if "Mn(cr,alpha)" in lib else lib["Mn(cr)"].cp(T)[0])
        + lib["C(cr,graphite)"].cp(T)[0]
        + 1.5 * lib["O2(g)"].cp(T)[0]
    )
    assert nk.cp298 == pytest.approx(expected, rel=1e-12)
    assert nk.u_cp298 == pytest.approx(nk.u_rel * nk.cp298)
    assert {el for el, *_ in nk.contributions} == {"Mn", "C", "O"}


def test_calibration_recomputed_from_the_shipped_table() -> None:
    rows = list(csv.DictReader((ROOT / "data" / "neumann-kopp-calibration.csv").open()))
    rule = neumann_kopp_rule()
    rel = np.array([float(r["rel_error"]) for r in rows])
    assert len(rows) == rule["count"] >= 100
    assert float(np.quantile(np.abs(rel), 0.95, method="higher")) / Z95 == pytest.approx(
        rule["u_rel"], abs=5e-5
    )
    coverage = float(np.mean(np.abs(rel) <= Z95 * rule["u_rel"]))
    assert coverage == pytest.approx(rule["coverage_95"]) and coverage >= 0.90
    # The table is what the rule gives from today's library (the reference is the library's
    # own tabulated solid, NASA Glenn or CRC, named per row).
    lib = default_library()
    for r in rows[:: max(1, len(rows) // 25)]:
        sp = lib[r["id"]]
        assert float(r["cp_298"]) == pytest.approx(sp.cp(np.array([298.15]))[0], abs=1e-3)
        assert float(r["cp_neumann_kopp"]) == pytest.approx(
            neumann_kopp(sp.formula).cp298, abs=1e-3
        )


def test_entry_is_the_users_values_with_the_estimated_cp() -> None:
    lib = estimate_solid(
        "MnCO3",
        dHf_J_per_mol=(-893_000.0, 6_100.0),  # invented for this test
        S298_J_per_mol_K=(86.0, 3.0),  # invented for this test
        source="invented test values",
        T_max=550.0,
    )
    sp = lib["MnCO3(cr,estimated)"]
    assert sp.origin == NK_ORIGIN
    assert sp.cp(np.array([400.0]))[0] == pytest.approx(neumann_kopp("MnCO3").cp298)
    assert sp.cp_u_rel == neumann_kopp_rule()["u_rel"]
    assert sp.dHf.value == -893_000.0 and sp.dHf.u == 6_100.0
    assert sp.T_range == (298.15, 550.0)
    assert "Neumann–Kopp" in " ".join(sp.notes)


def _element_without_reference_state() -> str:
    from feasibly.library.formula import element_table

    have = {sp.reference_state_of for sp in default_library() if sp.reference_state_of}
    return next(el for el in sorted(element_table()) if el not in have and len(el) == 2)


def test_refusals() -> None:
    with pytest.raises(NotEstimable, match="element"):
        neumann_kopp("Fe")
    with pytest.raises(NotEstimable, match="charged"):
        neumann_kopp("SO4-2")
    el = _element_without_reference_state()
    with pytest.raises(NotEstimable, match=f"no reference-state entry for {el}") as info:
        neumann_kopp(f"{el}O2")
    assert info.value.missing == [el]


@pytest.mark.parametrize(
    "kwargs",
    [
        {"dHf_J_per_mol": (math.nan, 1.0)},
        {"dHf_J_per_mol": -893000.0},
        {"S298_J_per_mol_K": (86.0, -1.0)},
        {"source": " "},
        {"T_max": 900.0},
    ],
)
def test_bad_arguments(kwargs: dict) -> None:
    args = {
        "dHf_J_per_mol": (-893_000.0, 6_100.0),
        "S298_J_per_mol_K": (86.0, 3.0),
        "source": "invented test values",
    } | kwargs
    with pytest.raises(InvalidInput):
        estimate_solid("MnCO3", **args)

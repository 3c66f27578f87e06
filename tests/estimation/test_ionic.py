"""Ionic-contribution S° of salts: the split of a formula, the estimate as the sum of the shipped
terms, the fit and its leave-one-out calibration recomputed from the shipped tables, the entry
estimate_solid makes from it, and the refusals with their reasons."""

from __future__ import annotations

import csv
import json
from pathlib import Path

import numpy as np
import pytest

from feasibly.errors import NotEstimable
from feasibly.estimation import (
    IONIC_ORIGIN,
    estimate_solid,
    ionic_entropy,
    ionic_entropy_rule,
)
from feasibly.estimation.ionic import split_ionic
from feasibly.library import default_library

ROOT = Path(__file__).resolve().parents[2]
Z95 = 1.959963984540054  # scipy.stats.norm.ppf(0.975)


def _terms() -> dict[str, dict[str, str]]:
    with (ROOT / "data" / "ionic-entropy-contributions.csv").open(encoding="utf-8") as f:
        return {r["term"]: r for r in csv.DictReader(f)}


def _training() -> list[dict[str, str]]:
    with (ROOT / "data" / "ionic-entropy-calibration.csv").open(encoding="utf-8") as f:
        return list(csv.DictReader(f))


def _u(rule: dict, S: float, ions: int, anion: str) -> float:
    u = rule["u_rel"] * abs(S) if rule["kind"] == "relative" else rule["u_per_ion"] * ions
    return u * rule["class_factor"].get(anion, 1.0)


def _fit(rows: list[dict[str, str]]) -> dict[str, float]:
    terms = sorted({r["cation"] for r in rows} | {r["anion"] for r in rows})
    col = {t: i for i, t in enumerate(terms)}
    A = np.zeros((len(rows), len(terms)))
    for i, r in enumerate(rows):
        A[i, col[r["cation"]]] += int(r["n"])
        A[i, col[r["anion"]]] += int(r["m"])
    x = np.linalg.lstsq(A, np.array([float(r["S_298"]) for r in rows]), rcond=None)[0]
    return {t: float(x[col[t]]) for t in terms}


def _predict(s: dict[str, float], r: dict[str, str]) -> float:
    return int(r["n"]) * s[r["cation"]] + int(r["m"]) * s[r["anion"]]


@pytest.mark.parametrize(
    ("formula", "cation", "n", "anion", "m"),
    [
        ("Ca(OH)2", "Ca2+", 1, "OH-", 2),
        ("Al2(SO4)3", "Al3+", 2, "SO4 2-", 3),
        ("Mg2SiO4", "Mg2+", 2, "SiO4 4-", 1),
        ("CaSiO3", "Ca2+", 1, "SiO3 2-", 1),
        ("KNO3", "K+", 1, "NO3-", 1),
        ("UF6", "U6+", 1, "F-", 6),
    ],
)
def test_split(formula: str, cation: str, n: int, anion: str, m: int) -> None:
    sp = split_ionic(formula)
    assert (sp.cation, sp.n, sp.anion, sp.m) == (cation, n, anion, m)


def test_estimate_is_the_sum_of_the_shipped_terms() -> None:
    terms = _terms()
    est = ionic_entropy("Al2(SO4)3")
    expected = 2 * float(terms["Al3+"]["s_J_per_mol_K"]) + 3 * float(
        terms["SO4 2-"]["s_J_per_mol_K"]
    )
    assert est.S298 == pytest.approx(expected, abs=1e-9)
    assert est.u_S298 == pytest.approx(_u(ionic_entropy_rule(), est.S298, 5, "SO4 2-"))
    summary = json.loads(json.dumps(est.summary()))
    assert [t["ion"] for t in summary["terms"]] == ["Al3+", "SO4 2-"]
    assert summary["u_S298_J_per_mol_K"] == est.u_S298


def test_training_table_is_todays_library_and_the_fit_reproduces_it() -> None:
    rows, terms, rule = _training(), _terms(), ionic_entropy_rule()
    assert len(rows) == rule["training_salts"] >= 100
    lib = default_library()
    for r in rows:
        sp = lib[r["id"]]
        assert not sp.hypothetical_298 and sp.phase == "cr"
        assert sp.S298.source in ("nasa-glenn-2002", "crc-298")
        assert float(r["S_298"]) == pytest.approx(sp.S298.value, abs=1e-3)  # table rounds to 1e-3
    # Refit from the table: the shipped terms are that fit (the minimum-norm solution).
    s = _fit(rows)
    assert set(s) == set(terms)
    for t, v in s.items():
        assert float(terms[t]["s_J_per_mol_K"]) == pytest.approx(v, abs=2e-3)  # 3 decimals
        assert int(terms[t]["compounds"]) >= rule["min_training_salts"]
    inside = [
        abs(_predict(s, r) - float(r["S_298"]))
        <= Z95 * _u(rule, _predict(s, r), int(r["n"]) + int(r["m"]), r["anion"])
        for r in rows
    ]
    # The stated 95 % interval holds at least 95 % of the salts the fit was made from.
    assert np.mean(inside) >= 0.95
    assert np.mean(inside) == pytest.approx(rule["fit_coverage_95"], abs=1e-4)


def test_leave_one_out_coverage_recomputed() -> None:
    rows, rule = _training(), ionic_entropy_rule()
    errors, covered = [], []
    for i, r in enumerate(rows):
        s = _fit(rows[:i] + rows[i + 1 :])
        pred = _predict(s, r)
        assert pred == pytest.approx(float(r["S_loo"]), abs=2e-3)  # table rounds to 1e-3
        err = pred - float(r["S_298"])
        errors.append(err)
        covered.append(abs(err) <= Z95 * _u(rule, pred, int(r["n"]) + int(r["m"]), r["anion"]))
    e = np.array(errors)
    assert np.mean(covered) >= 0.90
    assert np.mean(covered) == pytest.approx(rule["loo_coverage_95"], abs=1e-4)
    # The table's S° are rounded to 1e-3 and the figures to 1e-3: 2e-3 holds both roundings.
    assert np.mean(np.abs(e)) == pytest.approx(rule["loo_mean_abs_error"], abs=2e-3)
    assert e[np.argmax(np.abs(e))] == pytest.approx(rule["loo_worst_error"], abs=2e-3)
    # The rule is the smallest that covers 95 % of the held-out errors (per ion or relative).
    ions = np.array([int(r["n"]) + int(r["m"]) for r in rows])
    pred = e + np.array([float(r["S_298"]) for r in rows])
    scaled = np.abs(e) / ions if rule["kind"] == "per_ion" else np.abs(e / pred)
    key = "u_per_ion" if rule["kind"] == "per_ion" else "u_rel"
    q = float(np.quantile(scaled, 0.95, method="higher")) / Z95
    assert q == pytest.approx(rule[key], rel=1e-3)
    # A class factor widens the pooled rule to the class's own 95th percentile, never narrows.
    anions = np.array([r["anion"] for r in rows])
    for a, factor in rule["class_factor"].items():
        q_a = float(np.quantile(scaled[anions == a], 0.95, method="higher")) / Z95
        assert factor >= 1.0 and factor == pytest.approx(q_a / rule[key], abs=2e-3)


def test_estimate_solid_takes_s_from_the_ionic_terms() -> None:
    lib = estimate_solid(
        "Al2(SO4)3",
        dHf_J_per_mol=(-3_440_000.0, 5_000.0),  # invented for this test
        source="invented test values",
    )
    sp = lib["Al2(SO4)3(cr,estimated)"]
    est = ionic_entropy("Al2(SO4)3")
    assert sp.S298.value == est.S298 and sp.S298.u == est.u_S298
    assert sp.S298.source == IONIC_ORIGIN
    assert "ionic-contribution S°" in sp.origin
    assert "Al3+" in sp.S298.entry and "SO4 2-" in sp.S298.entry
    assert sp.dHf.value == -3_440_000.0
    given = estimate_solid(
        "Al2(SO4)3",
        dHf_J_per_mol=(-3_440_000.0, 5_000.0),  # invented for this test
        S298_J_per_mol_K=(239.0, 2.0),  # invented for this test
        source="invented test values",
    )["Al2(SO4)3(cr,estimated)"]
    assert (given.S298.value, given.S298.u) == (239.0, 2.0)


def _dropped(kind: str) -> tuple[str, int]:
    for ion, count in ionic_entropy_rule()["dropped_terms"].items():
        if (kind == "cation") == ion.endswith("+"):
            return ion, count
    raise AssertionError("no dropped term of that kind")


@pytest.mark.parametrize(
    ("formula", "says"),
    [
        ("Fe3O4", "mixed-valence"),
        ("Na3O2", "do not balance"),
        ("SiO2", "no metal cation"),
        ("MgAl2O4", "more than one cation"),
        ("BiOCl", "not a whole number of one anion"),
        ("CuSO4(H2O)5", "hydrates"),
        ("SO4-2", "charged"),
        ("Fe", "element"),
    ],
)
def test_refusals_name_the_reason(formula: str, says: str) -> None:
    with pytest.raises(NotEstimable, match=says) as info:
        ionic_entropy(formula)
    assert info.value.method == "ionic-contribution S°"


def test_refusals_for_terms_without_enough_salts() -> None:
    ion, count = _dropped("cation")
    el = ion.rstrip("+").rstrip("0123456789")
    z = int(ion.rstrip("+")[len(el) :] or 1)
    formula = f"{el}Cl{z}" if z > 1 else f"{el}Cl"
    with pytest.raises(NotEstimable, match=f"{count} training salt") as info:
        ionic_entropy(formula)
    assert info.value.missing == [ion]
    # An element no training salt has at all (rhodium: no chloride, oxide, ... in the table).
    assert not any(t.startswith("Rh") for t in _terms())
    with pytest.raises(NotEstimable, match="no fitted term for Rh3") as info:
        ionic_entropy("RhCl3")
    assert info.value.missing == ["Rh3+"]
    # estimate_solid refuses the same way rather than leaving S° empty.
    with pytest.raises(NotEstimable, match="mixed-valence"):
        estimate_solid("Fe3O4", dHf_J_per_mol=(-1.1e6, 2e3), source="invented test values")

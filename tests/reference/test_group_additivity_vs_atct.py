"""Group-additivity estimates vs Active Thermochemical Tables and the other outside values.

Reference: B. Ruscic et al., ATcT ver. 1.112 (``ATcT 1.112 (g).tsv`` as carried by the
``chemicals`` package), ΔfH°(g, 298.15 K); for S° the CRC Handbook table
(``chemicals.heat_capacity.CRC_standard_data``). Every ATcT species in the shipped calibration
table is re-estimated from its SMILES now and compared with the ATcT value read now (not the
number in the table): the table must be what the code gives, and the stated 95 % interval
must cover ATcT for at least 90 % of them (the issue's target). The whole table is re-estimated
in the slow test.
"""

from __future__ import annotations

import csv
import io
import math
from pathlib import Path

import pytest

from feasibly.estimation import estimate_gas

pytest.importorskip("rdkit", reason="estimates need RDKit (feasibly[estimate])")
chemicals = pytest.importorskip("chemicals", reason="the reference values come from chemicals")

TABLE = Path(__file__).resolve().parents[2] / "data" / "group-additivity-calibration.csv"
ROWS = list(csv.DictReader(io.StringIO(TABLE.read_text("utf-8"))))
Z95 = 1.959963984540054  # scipy.stats.norm.ppf(0.975)


def test_estimates_cover_atct() -> None:
    from chemicals import reaction

    reaction._load_reaction_data()
    atct = reaction.Hfg_ATcT_data
    rows = [r for r in ROWS if r["dHf_ref_source"] == "ATcT 1.112"]
    assert len(rows) >= 30
    inside = []
    for r in rows:
        est = estimate_gas(r["smiles"])
        assert est.dHf == pytest.approx(float(r["dHf_est"]), abs=0.1)  # table rounding: 0.1 J
        ref = float(atct.at[r["cas"], "Hfg"])
        assert ref == float(r["dHf_ref"])
        inside.append(abs(est.dHf - ref) <= Z95 * est.u_dHf)
    assert sum(inside) / len(inside) >= 0.90


def test_entropies_against_crc() -> None:
    from chemicals import heat_capacity

    crc = heat_capacity.CRC_standard_data
    rows = [r for r in ROWS if r["S_ref_source"] == "CRC Handbook"]
    assert len(rows) >= 20
    inside = []
    for r in rows:
        est = estimate_gas(r["smiles"])
        ref = float(crc.at[r["cas"], "S0g"])
        inside.append(abs(est.S298 - ref) <= Z95 * est.u_S298)
    assert sum(inside) / len(inside) >= 0.90


@pytest.mark.slow
def test_whole_table_is_what_the_code_gives() -> None:
    for r in ROWS:
        est = estimate_gas(r["smiles"])
        assert est.dHf == pytest.approx(float(r["dHf_est"]), abs=0.1), r["smiles"]
        assert est.S298 == pytest.approx(float(r["S_est"]), abs=1e-3), r["smiles"]
        assert est.structure_class == r["class"]
        assert math.isclose(est.n_groups, float(r["n_groups"]))

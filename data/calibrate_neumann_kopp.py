"""Calibrate the Neumann–Kopp rule for inorganic solids against tabulated Cp°(298.15 K).

Rewrites ``neumann-kopp-calibration.csv`` (one row per solid: formula, CRC Cp°, the rule's
value, relative error) and ``neumann-kopp-uncertainty.json`` (u_rel and the figures).

Reference: the crystalline entries of the shipped library at 298.15 K, whose Cp comes from the
NASA Glenn polynomials (McBride et al.) or the CRC Handbook's "Standard Thermodynamic
Properties of Chemical Substances" (the ``cp_source`` column names which, per entry). The
library's formulas are curated, which the CAS look-up of ``chemicals`` is not for solids (it
gives Fe3H8O4 for iron(II,III) oxide). The solids taken are the ones the rule could have
predicted: inorganic (no C–H compound), at least two elements, every element with a
reference-state entry in the library (whose Cp° at 298.15 K the rule sums).
The rule has no fitted parameter, so every solid is held out; u_rel is the smallest value for
which ±1.96·u_rel covers 95 % of the relative errors.

    python data/calibrate_neumann_kopp.py
"""

from __future__ import annotations

import csv
import json
import math
import sys
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parent / "src"))

from feasibly.estimation.solids import _element_cp  # noqa: E402
from feasibly.library import default_library  # noqa: E402

TABLE = HERE / "neumann-kopp-calibration.csv"
RULE = HERE / "neumann-kopp-uncertainty.json"
Z95 = 1.959963984540054  # scipy.stats.norm.ppf(0.975)


def main() -> None:
    lib = default_library()
    table = _element_cp(lib)
    rows = []
    for sp in lib:
        els = sp.elements
        if sp.phase != "cr" or sp.hypothetical_298 or sp.charge or len(els) < 2:
            continue
        if ("C" in els and "H" in els) or any(el not in table for el in els):
            continue  # organic, or an element without a reference state: outside the rule
        if not sp.covers(np.array([298.15]))[0]:
            continue
        nk = sum(n * table[el][1] for el, n in els.items())
        ref = float(sp.cp(np.array([298.15]))[0])
        rows.append(
            {
                "id": sp.id,
                "formula": sp.formula,
                "cp_source": str(sp.cp_source.get("source", "")),
                "cp_298": round(ref, 3),
                "cp_neumann_kopp": round(nk, 3),
                "rel_error": round(nk / ref - 1, 5),
            }
        )
    rows.sort(key=lambda r: r["formula"])
    with TABLE.open("w", newline="", encoding="utf-8") as f:
        w = csv.DictWriter(f, fieldnames=list(rows[0]), lineterminator="\n")
        w.writeheader()
        w.writerows(rows)
    rel = np.array([r["rel_error"] for r in rows])
    u_rel = round(float(np.quantile(np.abs(rel), 0.95, method="higher")) / Z95, 4)
    worst = rows[int(np.argmax(np.abs(rel)))]
    out = {
        "rule": "Cp°(298.15 K) = Σ n_e Cp°(element e, reference state, 298.15 K); u = u_rel·Cp",
        "u_rel": u_rel,
        "count": len(rows),
        "mean_rel_error": float(np.mean(rel)),
        "mean_abs_rel_error": float(np.mean(np.abs(rel))),
        "worst_rel_error": float(rel[np.argmax(np.abs(rel))]),
        "worst": worst["formula"],
        "coverage_95": float(np.mean(np.abs(rel) <= Z95 * u_rel)),
        "basis": "Cp°(298.15 K) of the library's crystalline entries (NASA Glenn, CRC); "
        "data/neumann-kopp-calibration.csv",
        "S_298": "not from this rule: fitted ionic contributions (Latimer's form), "
        "data/fit_ionic_entropy.py and ionic-entropy-uncertainty.json",
    }
    RULE.write_text(json.dumps(out, indent=1, ensure_ascii=False) + "\n", "utf-8")
    print({k: v for k, v in out.items() if k not in ("rule", "basis", "S_298")})
    assert math.isfinite(u_rel)


if __name__ == "__main__":
    main()

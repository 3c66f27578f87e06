"""The 1 bar check: the NASA gas entropies are on a 1 bar basis, whatever the files' label says.

Cantera's NASA files label a reference pressure of 101325 Pa, but S°(298.15) of the gases in
``janaf.toml`` [one_bar_check] matches NIST-JANAF's 1 bar values; on a 1 atm basis they would be
lower by R ln(1.01325) = 0.109 J/(mol K). The build stops if the median difference is not far
closer to 0 than to that (individual gases may differ: NASA fitted newer data than JANAF for CH4).
"""

from __future__ import annotations

import math
from typing import Any

from . import tables
from ._kernel import ONE_ATM_PA, STANDARD_PRESSURE_PA
from .entries import Entry
from .errors import need
from .formulas import same_comp
from .polynomials import R

# |median difference| allowed, J/(mol K): well below half of the 0.109 a 1 atm basis would show
# (common practice, no source).
MEDIAN_TOL = 0.03


def check_one_bar(entries: list[Entry], janaf: dict[str, dict[str, Any]]) -> dict[str, Any]:
    """Compare polynomial S(298.15) of the listed gases with NIST-JANAF (1 bar) tables."""
    picks = tables.janaf().one_bar_check
    out = {}
    by_id = {e["id"]: e for e in entries}
    lnp = R * math.log(ONE_ATM_PA / STANDARD_PRESSURE_PA)
    for sid, idx in picks.items():
        need(sid in by_id and idx in janaf, f"1-bar check {sid}/{idx}: entry or table missing")
        j = janaf[idx]
        need(
            j["S298"] is not None and same_comp(j["elements"], by_id[sid]["elements"]),
            f"1-bar check {sid}/{idx}",
        )
        s_poly = by_id[sid]["S_298"]["value"]
        out[sid] = {
            "janaf_index": idx,
            "S_poly": round(s_poly, 4),
            "S_janaf_1bar": j["S298"],
            "diff": round(s_poly - j["S298"], 4),
            "expected_if_1atm": round(-lnp, 4),
        }
    diffs = sorted(v["diff"] for v in out.values())
    med = diffs[len(diffs) // 2]
    need(abs(med) < MEDIAN_TOL, f"1-bar check failed: {out}")
    return out

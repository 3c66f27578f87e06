"""Rebuild ``critical-constants.csv``: Tc, Pc and the acentric factor ω of the library's gases.

Source: the ``chemicals`` package (MIT; Caleb Bell and contributors), which carries critically
evaluated compilations and names each: ``HEOS`` (reference equations of state, CoolProp),
``IUPAC``/``MATTHEWS`` (critically evaluated experimental values), ``CRC``, ``PSRK``, ``YAWS``…
For each value the method ``chemicals`` picks first for that compound is used and written beside
the value, so every number says where it came from. ω by ``ACENTRIC_DEFINITION`` is computed by
``chemicals`` from a vapour-pressure correlation and Tc, Pc; it is used only where no tabulated
value exists. Compounds lacking any of the three are left out (the Peng–Robinson option then
refuses them by name).

Run: ``python data/build_critical_constants.py`` (needs ``chemicals``; deterministic output).
"""

from __future__ import annotations

import csv
import io
import json
from pathlib import Path

from chemicals import acentric, critical

HERE = Path(__file__).resolve().parent


def main() -> None:
    lib = json.loads((HERE / "species-library.json").read_text("utf-8"))
    entries = lib["species"] if isinstance(lib, dict) and "species" in lib else lib
    seen: dict[str, str] = {}
    for e in entries:
        if e.get("phase") == "g" and e.get("cas") and not e.get("charge"):
            seen.setdefault(e["cas"], e["formula"])
    out = io.StringIO()
    w = csv.writer(out, lineterminator="\n")
    w.writerow(
        ["cas", "formula", "Tc_K", "Pc_Pa", "omega", "Tc_source", "Pc_source", "omega_source"]
    )
    for cas in sorted(seen):
        tm = critical.Tc_methods(cas)
        pm = critical.Pc_methods(cas)
        om = acentric.omega_methods(cas)
        if not (tm and pm and om):
            continue
        Tc = critical.Tc(cas, method=tm[0])
        Pc = critical.Pc(cas, method=pm[0])
        omega = acentric.omega(cas, method=om[0])
        if not (Tc and Pc and omega is not None):
            continue
        w.writerow([cas, seen[cas], f"{Tc:.6g}", f"{Pc:.6g}", f"{omega:.6g}", tm[0], pm[0], om[0]])
    header = (
        "# Critical constants of the library's gases, from the chemicals package (MIT), one\n"
        "# method per value as named in the last three columns; rebuilt by\n"
        "# data/build_critical_constants.py.\n"
    )
    (HERE / "critical-constants.csv").write_text(header + out.getvalue(), encoding="utf-8")


if __name__ == "__main__":
    main()

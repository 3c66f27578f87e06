"""Rebuild ``data/benson-groups.json``: Benson gas-phase group values for C/H/O species.

The values are read, unchanged except for units, from the group tables that the ``pgradd``
package (MIT licence, Vlachos Research Group) carries in ``pgradd/data/BensonGA/`` (entered there
from S. W. Benson, *Thermochemical Kinetics*, 2nd ed., Wiley 1976, pp. 272–275, with the ring
corrections and the equivalences ("remaps") of that book). pgradd is needed only to rebuild
this file, never at run time:

    pip download pgradd==2.9.14 --no-deps -d /tmp/pgradd && \\
        python data/build_group_values.py /tmp/pgradd/pgradd-2.9.14-py3-none-any.whl

The tables are read with ``yaml.safe_load`` straight out of the wheel (a zip file); nothing in
them is executed. Output is deterministic (sorted keys): run it twice, identical bytes.
"""

from __future__ import annotations

import json
import re
import sys
import zipfile
from collections import Counter
from pathlib import Path

import yaml

HERE = Path(__file__).resolve().parent
OUT = HERE / "benson-groups.json"
BASE = "pgradd/data/BensonGA/"
# Group files of the gas scheme (gas_benson/original.yaml includes these); nitrogen and radical
# groups are left out: the estimator types only closed-shell C/H/O structures.
GROUP_FILES = ("gas_benson/hydrocarbons.yaml", "gas_benson/oxygenates.yaml")
CORRECTIONS = "gas_benson/corrections.yaml"
STRAIN = "gas_benson/strain.yaml"
SCHEME = "scheme.yaml"
KCAL = 4184.0  # J per thermochemical kcal (the tables' kcal/mol and cal/(mol·K))

#: Ring corrections used, each with the ring skeleton it applies to (ring atoms and ring bonds in
#: Kekulé form, plus exocyclic C=O on ring atoms), written here as SMILES. Polycyclic entries
#: (spiro, bicyclo) are left out: the estimator refuses fused non-aromatic rings.
RING_SKELETONS = {
    "Cyclopropane": "C1CC1",
    "Cyclopropene": "C1=CC1",
    "Cyclobutane": "C1CCC1",
    "Cyclobutene": "C1=CCC1",
    "Cyclopentane": "C1CCCC1",
    "Cyclopentene": "C1=CCCC1",
    "Cyclopentadiene": "C1=CC=CC1",
    "Cyclohexane": "C1CCCCC1",
    "Cyclohexene": "C1=CCCCC1",
    "Cyclohexadiene-1,3": "C1=CC=CCC1",
    "Cyclohexadiene-1,4": "C1=CCC=CC1",
    "Cycloheptane": "C1CCCCCC1",
    "Cycloheptene": "C1=CCCCCC1",
    "Cycloheptadiene-1,3": "C1=CC=CCCC1",
    "Cycloheptatriene-1,3,5": "C1=CC=CC=CC1",
    "Cyclooctane": "C1CCCCCCC1",
    "cis-Cyclooctene": "C1=CCCCCCC1",
    "Cyclooctatriene-1,3,5": "C1=CC=CC=CCC1",
    "Cyclooctatetraene": "C1=CC=CC=CC=C1",
    "Cyclononane": "C1CCCCCCCC1",
    "cis-Cyclononene": "C1=CCCCCCCC1",
    "Oxirane": "C1CO1",
    "Oxetane": "C1COC1",
    "Tetrahydrofuran": "C1CCOC1",
    "Tetrahydro-2H-pyran": "C1CCOCC1",
    "Dioxane-1,3": "C1COCOC1",
    "Dioxane-1,4": "C1COCCO1",
    "Trioxane-1,3,5": "C1OCOCO1",
    "Furan": "C1=COC=C1",
    "3,4-dihydro-2H-pyran": "C1=COCCC1",
    "cyclopentanone": "O=C1CCCC1",
    "cyclohexanone": "O=C1CCCCC1",
    "dihydrofuran-2,5-dione": "O=C1CCC(=O)O1",
    "dihydro-2H-pyran-2,6(3H)-dione": "O=C1CCCC(=O)O1",
    "furan-2,5-dione": "O=C1C=CC(=O)O1",
}
#: Non-group corrections used by the estimator (Benson 1976, the same pages).
CORRECTION_NAMES = ("AlkaneGauche", "Cis", "Ortho")

_PART = re.compile(r"\(([^()]+)\)(\d*)")
_CENTRE = re.compile(r"^(C\[[A-Za-z]+\]|CO|C|O)(?=\()")
ALLOWED = {"C", "C[d]", "C[t]", "C[B]", "C[BF]", "C[a]", "CO", "O", "H"}


def canonical_key(name: str) -> str | None:
    """A group name of the tables as the estimator's key (centre, then neighbours sorted with H
    last), or None when it is not a C/H/O group the estimator types."""
    m = _CENTRE.match(name)
    if not m:
        return None
    centre = m.group(1)
    rest = name[m.end() :]
    parts = _PART.findall(rest)
    if "".join(f"({a}){n}" for a, n in parts) != rest:
        return None
    counts: Counter[str] = Counter()
    for atom, n in parts:
        counts[atom] += int(n or 1)
    if centre not in ALLOWED or any(a not in ALLOWED for a in counts):
        return None
    return key_of(centre, counts)


def key_of(centre: str, neighbours: Counter[str]) -> str:
    order = sorted(neighbours, key=lambda a: (a == "H", a))
    return centre + "".join(
        f"({a})" + (str(neighbours[a]) if neighbours[a] > 1 else "") for a in order
    )


def _si(thermo: dict) -> dict:
    h = thermo.get("H_ref")
    s = thermo.get("S_ref")
    cp = thermo.get("Cp_data") or []
    return {
        "dHf_298_J_per_mol": None if h is None else round(float(h) * KCAL, 6),
        "S_298_J_per_mol_K": None if s is None else round(float(s) * KCAL / 1000, 6),
        "cp_J_per_mol_K": [[float(t), round(float(c) * KCAL / 1000, 6)] for t, c in cp],
    }


def main(wheel: str) -> None:
    with zipfile.ZipFile(wheel) as zf:
        names = zf.namelist()
        version = next(n.split("-")[1] for n in names if n.endswith(".dist-info/METADATA"))
        licence_path = next(n for n in names if n.endswith("LICENSE.md"))
        licence = zf.read(licence_path).decode("utf-8")

        def load(rel: str) -> dict:
            doc = yaml.safe_load(zf.read(BASE + rel).decode("utf-8"))
            units = doc.get("units", {})
            # The unit conversion above assumes exactly these units; stop if a version differs.
            assert units.get("molar enthalpy") == "kcal/mol", (rel, units)
            assert units.get("molar entropy") == "cal/(mol*K)", (rel, units)
            return doc

        groups: dict[str, dict] = {}
        for rel in GROUP_FILES:
            for name, body in load(rel)["groups"].items():
                key = canonical_key(name)
                if key is None:
                    continue
                if key in groups:
                    raise SystemExit(f"{rel}: {name} duplicates {groups[key]['source_name']}")
                groups[key] = {"source_name": name, "file": BASE + rel, **_si(body["thermochem"])}
        corrections = {}
        doc = load(CORRECTIONS)["groups"]
        for name in CORRECTION_NAMES:
            corrections[name] = {"file": BASE + CORRECTIONS, **_si(doc[name]["thermochem"])}
        rings = {}
        doc = load(STRAIN)["other_descriptors"]
        for name, smiles in RING_SKELETONS.items():
            rings[name] = {
                "skeleton_smiles": smiles,
                "file": BASE + STRAIN,
                **_si(doc[name]["thermochem"]),
            }
        scheme = yaml.safe_load(zf.read(BASE + SCHEME).decode("utf-8"))
        remaps = {}
        for name, target in scheme["remaps"].items():
            src, dst = canonical_key(name), None
            if len(target) == 1 and target[0][0] == 1:
                dst = canonical_key(target[0][1])
            if src and dst and dst in groups and src not in groups:
                remaps[src] = dst
    out = {
        "what": "Benson gas-phase group values (298.15 K ΔfH°, S°, Cp at tabulated temperatures) "
        "for closed-shell C/H/O species, SI units",
        "provenance": {
            "package": "pgradd",
            "version": version,
            "files": sorted({BASE + f for f in (*GROUP_FILES, CORRECTIONS, STRAIN, SCHEME)}),
            "licence": "MIT",
            "licence_text": licence.strip(),
            "original_source": "S. W. Benson, Thermochemical Kinetics, 2nd ed., Wiley, New York "
            "1976, pp. 272-275 (as entered by the package's authors)",
            "conversion": "kcal = 4184 J (thermochemical calorie); values otherwise unchanged",
            "built_by": "data/build_group_values.py",
        },
        "groups": groups,
        "remaps": remaps,
        "corrections": corrections,
        "rings": rings,
    }
    OUT.write_text(json.dumps(out, indent=1, sort_keys=True, ensure_ascii=False) + "\n", "utf-8")
    print(f"wrote {OUT.name}: {len(groups)} groups, {len(remaps)} remaps, {len(rings)} rings")


if __name__ == "__main__":
    if len(sys.argv) != 2:
        raise SystemExit(__doc__)
    main(sys.argv[1])

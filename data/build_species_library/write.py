"""Writing the four files, and the summary printed after a build.

``elements.json`` is written first, as soon as it is built: the kernel's formula reader takes its
element table from it. The library text is read by the kernel (as a shipped library: schema, every
entry, sources, policies, content hash) before it is written, so a library the kernel would refuse
is not written.
"""

from __future__ import annotations

import json
from collections import Counter
from pathlib import Path
from typing import Any

from ._kernel import KERNEL_ORIGIN
from .calibration import CSV_NAME as CALIBRATION_CSV
from .document import document_text, kernel_read, library_document
from .entries import Entry
from .gaps import NOTE as GAPS_NOTE
from .sources import VERS

OUT = Path(__file__).resolve().parent.parent


def finish(entries: list[Entry]) -> list[Entry]:
    """Drop the build's bookkeeping keys, de-duplicate notes (first kept), sort by id."""
    for e in entries:
        for key in [k for k in e if k.startswith("_")]:
            del e[key]
        e["notes"] = sorted(set(e["notes"]), key=e["notes"].index)
    entries.sort(key=lambda e: e["id"])
    return entries


def write_elements(els: dict[str, dict[str, Any]], out: Path = OUT) -> None:
    """Write elements.json. First of the four: the kernel's formula reader, which reads the
    library before it is written, takes its element table from this file."""
    ele = {
        "source": f"chemicals {VERS['chemicals']} chemicals.elements.periodic_table (standard "
        "atomic weights as carried by the package)",
        "elements": {s: els[s] for s in sorted(els)},
    }
    (out / "elements.json").write_text(
        json.dumps(ele, indent=1, ensure_ascii=True) + "\n", encoding="utf-8"
    )


def write_outputs(
    species: list[Entry],
    hazards_csv: str,
    one_bar: dict[str, Any],
    jmatch: dict[str, str],
    gaps: dict[str, dict[str, Any]],
    unmapped: list[str],
    calibrated: tuple[dict[str, str], str],
    out: Path = OUT,
    checks: dict[str, Any] | None = None,
) -> None:
    """Write species-library.json, hazard-flags.csv, source-gaps.json and
    uncertainty-calibration.csv (``calibrated``: the calibrated policies' texts and the CSV)."""
    policies_extra, calibration_csv = calibrated
    text = document_text(library_document(species, policies_extra))
    kernel_read(text, "species-library.json", shipped=True)
    sg = {
        "note": GAPS_NOTE,
        "one_bar_check": one_bar,
        "janaf_index": dict(sorted(jmatch.items())),
        "species": dict(sorted(gaps.items())),
        "unmapped": sorted(unmapped),
    }
    if checks is not None:
        sg["crosschecks"] = checks
    (out / "species-library.json").write_text(text, encoding="utf-8")
    (out / "hazard-flags.csv").write_text(hazards_csv, encoding="utf-8")
    (out / "source-gaps.json").write_text(
        json.dumps(sg, indent=1, ensure_ascii=True) + "\n", encoding="utf-8"
    )
    (out / CALIBRATION_CSV).write_text(calibration_csv, encoding="utf-8")


def summary(
    species: list[Entry],
    gaps: dict[str, Any],
    n_hazards: int,
    jmatch: dict[str, str],
    one_bar: dict[str, Any],
    unmapped: list[str],
) -> None:
    """Print the counts a reviewer compares with data/README.md."""
    print("species:", len(species), dict(Counter(e["phase"] for e in species)))
    print("dHf source:", dict(Counter(e["dHf_298"]["source"] for e in species)))
    print("S source:", dict(Counter(e["S_298"]["source"] for e in species)))
    print("cp source:", dict(Counter((e["cp"]["source"], e["cp"]["model"]) for e in species)))
    print(
        "ions:",
        sum(1 for e in species if e["charge"]),
        "with CAS:",
        sum(1 for e in species if e["cas"]),
        "named:",
        sum(1 for e in species if e["names"]),
        "ref states:",
        sum(1 for e in species if e["reference_state_of"]),
    )
    print("hazard rows:", n_hazards, "gaps:", len(gaps), "janaf matches:", len(jmatch))
    print("one bar:", json.dumps(one_bar))
    print("unmapped:", len(unmapped))
    print("kernel rules from:", KERNEL_ORIGIN)

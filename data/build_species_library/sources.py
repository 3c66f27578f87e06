"""Where the sources are: package files, package versions and licences, and the sources block.

Every source file is located through its installed package; a missing file stops the build. The
versions and licences of the carrying packages fill the placeholders of ``tables/sources.toml``.
"""

from __future__ import annotations

import csv
import importlib.metadata as md
import importlib.resources as ir
import re
from pathlib import Path
from typing import Any

from . import tables
from .errors import SourceError, need


def _version(dist: str) -> str:
    try:
        return md.version(dist)
    except md.PackageNotFoundError:
        raise SourceError(f"source package {dist} is not installed (see data/README.md)") from None


#: Version of every source package, as recorded in the sources block.
VERS = {d: _version(d) for d in tables.SOURCE_PACKAGES}


def licence_of(dist: str) -> str:
    """The licence a distribution's metadata states."""
    meta = md.metadata(dist)
    for key in ("License-Expression", "License"):
        values = meta.get_all(key) or []
        if values and values[0]:
            return str(values[0])
    return "see package"


def pkg_file(pkg: str, *parts: str) -> Path:
    """A data file shipped inside an installed package."""
    p = Path(str(ir.files(pkg).joinpath(*parts)))
    need(p.is_file(), f"source file missing: {pkg}/{'/'.join(parts)}")
    return p


def cantera_file(name: str) -> Path:
    """A file from Cantera's data directories."""
    import cantera

    for d in cantera.get_data_directories():
        p = Path(d) / name
        if p.is_file():
            return p
    raise SourceError(f"cantera data file {name} not found in {cantera.get_data_directories()}")


def read_tsv(path: Path, required: list[str]) -> list[dict[str, Any]]:
    """Rows of a tab-separated source table that must have the ``required`` columns."""
    with open(path, encoding="utf-8", newline="") as f:
        rows = list(csv.DictReader(f, delimiter="\t"))
    need(rows and all(c in rows[0] for c in required), f"{path.name}: columns {required} expected")
    return rows


def fnum(x: str | None) -> float | None:
    """A number cell of a source table; None when empty."""
    x = (x or "").strip()
    return float(x) if x else None


def sources_block() -> dict[str, dict[str, str]]:
    """The library's ``sources`` block: ``tables/sources.toml`` with versions and licences."""
    licences = {d: licence_of(d) for d in tables.SOURCE_PACKAGES}

    def fill(text: str) -> str:
        return re.sub(
            r"\{(version|licence):([a-z]+)\}",
            lambda m: (VERS if m.group(1) == "version" else licences)[m.group(2)],
            text,
        )

    return {
        sid: {k: fill(v) for k, v in block.items()} for sid, block in tables.sources_text().items()
    }

"""The library document (``species-library.json``) and its reading by the kernel.

The build hands the document to the kernel's own reader (``feasibly.library.Library``) twice:
the entries before the transition step (the step asks the kernel which neighbour a phase is
carried from) and the finished document before it is written, so the shipped file passes the
same checks every user of it runs.
"""

from __future__ import annotations

import json
from typing import Any

from . import tables
from ._kernel import STANDARD_PRESSURE_PA, Library, canonical_hash
from .entries import Entry
from .policies import uncertainty_policy_block, used_policies
from .sources import sources_block

SCHEMA_MARK = "feasibly-species"
SCHEMA_VERSION = 1


def library_document(
    species: list[Entry], extra_policies: dict[str, str] | None = None
) -> dict[str, Any]:
    """The whole document around ``species`` (key order is the written order).

    ``extra_policies``: the policies the build writes itself (the calibrated ones); with them the
    block lists only the policies the entries use.
    """
    return {
        "schema": SCHEMA_MARK,
        "schema_version": SCHEMA_VERSION,
        "library_version": tables.library_version(),
        "content_sha256": canonical_hash(species),
        "standard_pressure_Pa": STANDARD_PRESSURE_PA,
        "sources": sources_block(),
        "uncertainty_policy": uncertainty_policy_block(
            extra_policies, used_policies(species) if extra_policies is not None else None
        ),
        "species": species,
    }


def document_text(doc: dict[str, Any]) -> str:
    """The document as written: JSON, one-space indent, ASCII, final newline."""
    return json.dumps(doc, indent=1, sort_keys=False, ensure_ascii=True) + "\n"


def kernel_read(text: str, name: str, shipped: bool) -> Library:
    """The kernel's reading of a document (raises the kernel's DataFileError on any problem)."""
    return Library.from_text(text, name, origin="library", shipped=shipped)

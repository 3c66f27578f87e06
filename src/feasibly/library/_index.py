"""A compact index of the shipped species file, written when the wheel is built.

``species-library.json`` is 2 MB; a call uses a handful of its ~1200 entries. The index
(``species-library.index.json``, plain JSON, beside it in ``feasibly/_data``) lists each entry's
id, formula, names and CAS number and where the entry's text sits in the file, together with the
SHA-256 of the file's bytes. :func:`build_index` checks the file's own content hash (the
canonical form of its species list, :func:`canonical_hash`) before writing, so at run time a
matching byte hash stands for that check; the library then parses an entry only when a call uses
it. A missing, stale or unreadable index is ignored and the whole file is read and hashed as
before, so a changed data file is never trusted on the strength of an old index.

Standard library only: the build hook loads this file by path, before feasibly is installed.
"""

from __future__ import annotations

import hashlib
import json
from typing import Any

__all__ = ["INDEX_NAME", "build_index", "canonical_hash", "lookup_fields", "read_index"]

INDEX_NAME = "species-library.index.json"
_FORMAT = "feasibly-species-index"
_VERSION = 1
_META = ("library_version", "content_sha256", "sources", "uncertainty_policy")


def canonical_hash(species: Any) -> str:
    """SHA-256 of the canonical JSON form of ``species`` (sorted keys, no spaces, ASCII)."""
    text = json.dumps(species, sort_keys=True, separators=(",", ":"), ensure_ascii=True)
    return hashlib.sha256(text.encode("utf-8")).hexdigest()


def lookup_fields(raw: dict[str, Any]) -> tuple[str, str, tuple[str, ...], str | None]:
    """What look-up needs from a raw entry: id, formula, names and CAS number.

    The id is the entry's own, or formula(phase[,form]) as the entry reader forms it; malformed
    fields give empty values here and are reported when the entry is read in full.
    """
    formula, phase, form = raw.get("formula"), raw.get("phase"), raw.get("form")
    entry_id = raw.get("id") or (f"{formula}({phase},{form})" if form else f"{formula}({phase})")
    names = raw.get("names", [])
    cas = raw.get("cas")
    return (
        str(entry_id),
        formula if isinstance(formula, str) else "",
        tuple(n for n in names if isinstance(n, str)) if isinstance(names, list) else (),
        cas if isinstance(cas, str) else None,
    )


def _skip(text: str, pos: int) -> int:
    while text[pos] in " \t\r\n":
        pos += 1
    return pos


def _species_spans(text: str) -> list[tuple[int, int]]:
    """Character spans of the entries of the top-level ``species`` list of a JSON document."""
    decoder = json.JSONDecoder()
    pos = _skip(text, 0)
    if text[pos] != "{":
        raise ValueError("the document is not a JSON object")
    pos += 1
    while True:
        pos = _skip(text, pos)
        key, pos = decoder.raw_decode(text, pos)
        pos = _skip(text, pos)
        if text[pos] != ":":
            raise ValueError("malformed JSON object")
        pos = _skip(text, pos + 1)
        if key == "species":
            break
        _, pos = decoder.raw_decode(text, pos)
        pos = _skip(text, pos)
        if text[pos] != ",":
            raise ValueError("no species list")
        pos += 1
    if text[pos] != "[":
        raise ValueError("species is not a list")
    spans = []
    pos = _skip(text, pos + 1)
    while text[pos] != "]":
        _, end = decoder.raw_decode(text, pos)
        spans.append((pos, end))
        pos = _skip(text, end)
        if text[pos] == ",":
            pos = _skip(text, pos + 1)
    return spans


def build_index(data: bytes) -> dict[str, Any]:
    """The index of the species file ``data``; raises ValueError unless its content hash holds."""
    text = data.decode("utf-8")
    doc = json.loads(text)
    species = doc["species"]
    if doc.get("content_sha256") != canonical_hash(species):
        raise ValueError("content_sha256 does not match the species list; not indexing")
    spans = _species_spans(text)
    if len(spans) != len(species):
        raise ValueError("could not locate every species entry")
    entries = []
    seen = set()
    for (start, end), raw in zip(spans, species, strict=True):
        if not isinstance(raw, dict) or json.loads(text[start:end]) != raw:
            raise ValueError(f"entry at character {start} does not read back as itself")
        entry_id, formula, names, cas = lookup_fields(raw)
        if entry_id in seen:
            raise ValueError(f"duplicate id {entry_id}; the full reader reports it")
        seen.add(entry_id)
        entries.append([entry_id, formula, list(names), cas, start, end])
    return {
        "format": _FORMAT,
        "version": _VERSION,
        "source_sha256": hashlib.sha256(data).hexdigest(),
        "meta": {k: doc[k] for k in _META if k in doc},
        "entries": entries,
    }


def read_index(data: bytes, index_text: str | None) -> dict[str, Any] | None:
    """The index when it was built from exactly ``data`` (same SHA-256 of the bytes), else None."""
    if index_text is None:
        return None
    try:
        index = json.loads(index_text)
    except json.JSONDecodeError:
        return None
    if (
        not isinstance(index, dict)
        or index.get("format") != _FORMAT
        or index.get("version") != _VERSION
        or index.get("source_sha256") != hashlib.sha256(data).hexdigest()
    ):
        return None
    return index

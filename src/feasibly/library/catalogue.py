"""The species data library: the shipped one and users' files, and look-up by id, formula, name.

The shipped library (``species-library.json``, built by ``data/build_species_library/``) and
user species files share one schema (``data/SCHEMA.md``). Loading checks every entry and reports
every problem with its entry and field in one :class:`~feasibly.errors.DataFileError`. Files are
read as plain JSON or TOML data; nothing in them is ever executed.
"""

from __future__ import annotations

import csv
import difflib
import io
import math
import re
from collections.abc import Iterable, Iterator, Mapping
from functools import cache
from pathlib import Path
from types import MappingProxyType
from typing import Any

from .._files import data_bytes, data_text, optional_data_text
from .._limits import MAX_DATA_FILE_BYTES
from .._pickling import ProxyPickling
from ..errors import DataFileError, FeasiblyError, UnknownSpecies
from ._index import INDEX_NAME, read_index
from ._reader import (
    COVERAGE_DIVISORS,
    PendingEntry,
    _from_index,
    _index_species,
    _parse_document,
    _read_species,
    canonical_hash,
    standard_uncertainty,
)
from .cp_models import T_REF
from .formula import parse_formula
from .species import Species

__all__ = [
    "COVERAGE_DIVISORS",
    "Library",
    "canonical_hash",
    "default_library",
    "standard_uncertainty",
]


# Queries longer than this get no suggestions: the longest id, formula or name is under 100.
_MAX_SUGGEST_CHARS = 120


def _norm(text: str) -> str:
    return re.sub(r"[\s_]+", " ", text.strip().lower())


class Library(ProxyPickling):
    """An immutable set of species entries with look-up by id, formula, name and CAS."""

    def __init__(
        self,
        species: Iterable[Species | PendingEntry],
        meta: Mapping[str, Any] | None = None,
        hazards: Mapping[str, tuple[dict[str, str], ...]] | None = None,
        user_files: tuple[str, ...] = (),
    ) -> None:
        # Entries by id: a Species, or a pending entry of the shipped file that is validated and
        # built on first use (look-up needs only its id, formula, names and CAS).
        self._entries: dict[str, Species | PendingEntry] = {}
        for sp in species:
            self._entries[sp.id] = sp
        self.meta = MappingProxyType(dict(meta or {}))
        self._hazards = dict(hazards or {})
        self.user_files = user_files
        #: (id, origin of the entry replaced, origin of the replacement) for each replacement.
        self.replaced: tuple[tuple[str, str, str], ...] = ()
        self._by_formula: dict[str, list[str]] = {}
        self._by_name: dict[str, list[str]] = {}
        self._by_cas: dict[str, list[str]] = {}
        for sp in self._entries.values():
            self._by_formula.setdefault(sp.formula, []).append(sp.id)
            if sp.cas:
                self._by_cas.setdefault(sp.cas, []).append(sp.id)
            for name in sp.names:
                self._by_name.setdefault(_norm(name), []).append(sp.id)

    def _get(self, entry_id: str) -> Species:
        entry = self._entries[entry_id]
        if isinstance(entry, PendingEntry):
            entry = self._entries[entry_id] = entry.build()
        return entry

    def _all(self) -> list[Species]:
        return [self._get(k) for k in list(self._entries)]

    def __reduce__(self) -> Any:
        # The shipped library travels as a reference checked by its content hash (a process pool
        # or a cluster worker has it already); any other library travels whole.
        if self is default_library():
            return (_shipped_library, (self.content_hash,))
        return super().__reduce__()

    # --- construction -------------------------------------------------------------------------
    @classmethod
    def from_text(
        cls, text: str, name: str = "<text>", origin: str = "user", shipped: bool = False
    ) -> Library:
        """Read a species document from JSON or TOML text (TOML when ``name`` ends in .toml)."""
        species, meta = _read_species(_parse_document(text, name), name, origin, shipped)
        return cls(species, meta)

    @classmethod
    def from_file(cls, path: str | Path) -> Library:
        """Read a user species file (``.json`` or ``.toml``) of the shipped schema."""
        path = Path(path)
        try:
            if path.stat().st_size > MAX_DATA_FILE_BYTES:
                raise DataFileError(
                    str(path),
                    [f"larger than {MAX_DATA_FILE_BYTES // 2**20} MiB; not a species file"],
                )
            text = path.read_text("utf-8")
        except OSError as exc:
            raise DataFileError(str(path), [f"cannot read the file ({exc.strerror})"]) from None
        except UnicodeDecodeError:
            raise DataFileError(str(path), ["not UTF-8 text"]) from None
        lib = cls.from_text(text, str(path), origin=f"user file {path.name}")
        return cls(lib, lib.meta, user_files=(str(path),))

    def with_species(
        self, other: Library | Iterable[Species], *, replace_shipped: bool = False
    ) -> Library:
        """A new library with ``other``'s entries added.

        An entry whose id is already in this library (shipped, or from an earlier user file) is
        refused with :class:`~feasibly.errors.DataFileError` unless ``replace_shipped`` is true;
        then it replaces the existing one, and :attr:`replaced` lists it, so that every output
        can say so.
        """
        extra = list(other)
        files = self.user_files + (other.user_files if isinstance(other, Library) else ())
        clashes = [sp for sp in extra if sp.id in self._entries]
        if clashes and not replace_shipped:
            where = files[-1] if files else (extra[0].origin if extra else "species")
            raise DataFileError(
                where,
                [
                    f"entry {sp.id}: this id is already in the library "
                    f"({self._entries[sp.id].origin}); a species file may add entries but "
                    "replaces one only when asked (replace_shipped=True, or --replace-shipped "
                    "on the command line); otherwise give your entry another form label, "
                    "e.g. (g,mine)"
                    for sp in clashes[:20]
                ],
            )
        merged = {**self._entries, **{sp.id: sp for sp in extra}}
        replaced = self.replaced + tuple(
            (sp.id, self._entries[sp.id].origin, sp.origin) for sp in clashes
        )
        out = Library(merged.values(), self.meta, self._hazards, files)
        out.replaced = replaced
        return out

    def user_entries(self) -> list[tuple[str, str]]:
        """(id, origin) of every entry that did not come from the shipped library."""
        return [(sp.id, sp.origin) for sp in self._entries.values() if sp.origin != "library"]

    # --- access -------------------------------------------------------------------------------
    def __len__(self) -> int:
        return len(self._entries)

    def __iter__(self) -> Iterator[Species]:
        return iter(self._all())

    def __contains__(self, key: object) -> bool:
        return key in self._entries

    def __getitem__(self, entry_id: str) -> Species:
        try:
            return self._get(entry_id)
        except KeyError:
            raise UnknownSpecies(entry_id, self.suggest(entry_id)) from None

    @property
    def version(self) -> str:
        """Data library version (``library_version`` of the shipped file)."""
        return str(self.meta.get("library_version", "unversioned"))

    @property
    def content_hash(self) -> str:
        """SHA-256 of the shipped species content."""
        return str(self.meta.get("content_sha256", ""))

    def by_formula(self, formula: str) -> list[Species]:
        """All phases of one formula, as written in the library (exact text)."""
        return [self._get(k) for k in self._by_formula.get(formula, [])]

    def by_name(self, name: str) -> list[Species]:
        """Entries with this name (any case; runs of spaces and underscores read as one space)."""
        return [self._get(k) for k in self._by_name.get(_norm(name), [])]

    def by_cas(self, cas: str) -> list[Species]:
        """Entries with this CAS registry number."""
        return [self._get(k) for k in self._by_cas.get(cas.strip(), [])]

    def same_composition(self, formula: str) -> list[Species]:
        """Entries with the same elements and charge as ``formula`` (isomers included)."""
        return self._same_composition(formula)

    def find(self, query: str) -> list[Species]:
        """Entries whose id, formula, CAS number or a name equals ``query`` (names: any case).

        A formula that is written differently but has the same composition as a library formula
        (``CH4O`` for ``CH3OH``) also matches when no entry matches exactly.
        """
        q = query.strip()
        if q in self._entries:
            return [self._get(q)]
        hits = self._by_formula.get(q) or self._by_cas.get(q) or self._by_name.get(_norm(q))
        if hits:
            return [self._get(k) for k in hits]
        return self._same_composition(q)

    def _same_composition(self, q: str) -> list[Species]:
        try:
            key = parse_formula(q).key()
        except FeasiblyError:
            return []
        return [sp for sp in self._all() if (tuple(sorted(sp.elements.items())), sp.charge) == key]

    def search(self, text: str, limit: int = 20) -> list[Species]:
        """Ranked matches for free text: exact hits, then prefix and substring hits, then near."""
        q = text.strip()
        if not q:
            return []
        ranked: list[Species] = []

        def add(items: Iterable[Species]) -> None:
            for sp in items:
                if sp not in ranked:
                    ranked.append(sp)

        add(self.find(q))
        low = _norm(q)
        add(
            sp
            for sp in self._all()
            if sp.formula.lower().startswith(low) or sp.id.lower().startswith(low)
        )
        add(sp for sp in self._all() if any(low in _norm(n) for n in sp.names))
        add(s for key in self.suggest(q, limit) for s in self.find(key))
        return ranked[:limit]

    def suggest(self, query: str, limit: int = 5) -> list[str]:
        """Close matches among ids, formulas and names, for error messages."""
        if len(query) > _MAX_SUGGEST_CHARS:
            return []  # nothing in the library is that long; difflib's cost grows with it
        keys = list(self._entries) + list(self._by_formula) + list(self._by_name)
        low = {k.lower(): k for k in keys}
        hits = difflib.get_close_matches(query.strip().lower(), list(low), n=limit, cutoff=0.6)
        return list(dict.fromkeys(low[h] for h in hits))

    def transition_parent(self, sp: Species) -> Species | None:
        """The condensed phase an entry that does not exist at 298.15 K is carried from.

        Same formula, condensed, and its range touches this entry's range at the end nearer
        298.15 K (α-Fe for γ-Fe, the solid for a liquid above its melting point, liquid water
        for ice). Uncertainty propagation takes such an entry's H and S at that transition from
        its neighbour, so that sampled phases still meet where their G are equal.
        """
        if not sp.hypothetical_298 or sp.phase == "g":
            return None
        lo, hi = sp.T_range
        t_a = min(max(T_REF, lo), hi)
        for other in self.by_formula(sp.formula):
            if other is sp or other.phase == "g":
                continue
            olo, ohi = other.T_range
            if t_a == lo and math.isclose(ohi, lo, rel_tol=1e-9):
                return other
            if t_a == hi and math.isclose(olo, hi, rel_tol=1e-9):
                return other
        return None

    def hazards(self, sp: Species) -> tuple[dict[str, str], ...]:
        """Hazard flags (toxic, flammable, oxidiser, explosive or self-reactive, corrosive) of a
        species with their basis and source."""
        return self._hazards.get(sp.cas or "", ()) or self._hazards.get(sp.formula, ())


def _read_hazards(*texts: str) -> dict[str, tuple[dict[str, str], ...]]:
    """Flags by CAS number and by formula, from one or more CSV texts of the same columns."""
    out: dict[str, list[dict[str, str]]] = {}
    for row in (r for text in texts for r in csv.DictReader(io.StringIO(text))):
        flag = {k: row[k] for k in ("flag", "basis", "source", "name")}
        for key in (row.get("cas") or "", row.get("formula") or ""):
            if key:
                out.setdefault(key, []).append(flag)
    return {k: tuple(v) for k, v in out.items()}


@cache
def default_library() -> Library:
    """The shipped species library (read once per process).

    The file's structure and content hash are checked here (or stand checked by the index built
    with the wheel, when the file's bytes are the ones it was built from); each entry is
    validated in full when a call first uses it, with the same message naming entry and field.
    """
    name = "species-library.json"
    data = data_bytes(name)
    text = data.decode("utf-8")
    index = read_index(data, optional_data_text(INDEX_NAME))
    if index is not None:
        species, meta = _from_index(index, text, name, "library")
    else:
        species, meta = _index_species(_parse_document(text, name), name, "library", True)
    # hazard-flags.csv is generated by the data build; process-cautions.csv is a curated table
    # (explosive or self-reactive substances, corrosives), each row with its source.
    hazards = _read_hazards(data_text("hazard-flags.csv"), data_text("process-cautions.csv"))
    return Library(species, meta, hazards)


def _shipped_library(content_hash: str) -> Library:
    """The shipped library on the receiving side of a pickle, refused if its data differ."""
    lib = default_library()
    if lib.content_hash != content_hash:
        raise DataFileError(
            "species-library.json",
            [
                f"the sending process used species data {content_hash[:12]}…, this installation "
                f"has {lib.content_hash[:12]}…; install the same feasibly version on every worker"
            ],
        )
    return lib

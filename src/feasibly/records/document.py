"""Decision records: a reproducible, reviewable record of one feasibility call.

A record is a plain JSON document (schema ``feasibly-record`` version :data:`SCHEMA_VERSION`,
published as ``data/record-schema.json``) holding the equation as entered and as balanced, the
conditions, the sampling settings and seed, every user override with its reason, every species
entry the call may use (values, uncertainties, conventions, sources, and the entry itself, so a
user's own species travel with the record), the data library version and hash, the package and
platform versions, who made and reviewed the call and why, and the results: per-temperature
summary, verdict, feasible window, sensitivity ranking and the cautions shown.

- :mod:`feasibly.records.build` makes a record (:func:`~feasibly.records.make_record`,
  :func:`~feasibly.records.record_from`).
- :func:`write_record` writes the JSON (and an HTML report and Markdown) atomically and never
  replaces an existing file unless asked; :func:`load_record` reads and validates one.
- :mod:`feasibly.records.verify` recomputes the call from the record's inputs and says whether
  every result is identical (bitwise, on the same platform), or exactly what differs.

``integrity.content_sha256`` is the SHA-256 of the canonical JSON of everything else, so an edit
after export is detected. It is tamper *evidence*, not a signature: someone who edits a record and
recomputes the hash is caught only where :func:`verify_record` recomputes a different result.
Loading a record reads JSON data only; nothing in it is executed, evaluated or unpickled.

This module holds the document itself: canonical form, hash, reading, validation and atomic
writing. The HTML and Markdown forms live in ``feasibly.records._report``.
"""

from __future__ import annotations

import errno
import hashlib
import json
import os
import tempfile
from collections.abc import Mapping
from pathlib import Path
from typing import Any

from .. import __about__
from .._limits import MAX_NESTING, MAX_RECORD_BYTES, nesting_depth
from ..errors import RecordError
from ._schema import schema_problems

__all__ = [
    "SCHEMA_MARK",
    "SCHEMA_VERSION",
    "load_record",
    "record_hash",
    "record_html",
    "record_markdown",
    "validate_record",
    "write_record",
]

SCHEMA_MARK = "feasibly-record"
SCHEMA_VERSION = 1
_CANONICAL = (
    "JSON of the record without its integrity member: keys sorted, separators ',' and ':', "
    "non-ASCII characters escaped, UTF-8"
)
_SECTIONS = (
    "created",
    "review",
    "reaction",
    "conditions",
    "uncertainty",
    "data",
    "species",
    "environment",
    "results",
    "heat",
    "comparison",
)
# Sections a recomputation rebuilds and compares; the rest (who, when, where) are not results.
_RECOMPUTED = ("reaction", "data", "species", "results")


# --- plain data -----------------------------------------------------------------------------------
def _canonical(doc: Any) -> bytes:
    text = json.dumps(
        doc, sort_keys=True, separators=(",", ":"), ensure_ascii=True, allow_nan=False
    )
    return text.encode("utf-8")


def record_hash(record: Mapping[str, Any]) -> str:
    """SHA-256 of the canonical serialisation of ``record`` without its ``integrity`` and
    ``signature`` members (a signature is added after sealing and covers the seal)."""
    body = {k: v for k, v in record.items() if k not in ("integrity", "signature")}
    return hashlib.sha256(_canonical(body)).hexdigest()


def _section_hashes(record: Mapping[str, Any]) -> dict[str, str]:
    return {k: hashlib.sha256(_canonical(record[k])).hexdigest() for k in _SECTIONS if k in record}


def _seal(record: dict[str, Any]) -> dict[str, Any]:
    record["integrity"] = {
        "content_sha256": record_hash(record),
        "sections_sha256": _section_hashes(record),
        "canonical_form": _CANONICAL,
    }
    return record


# --- reading and checking -------------------------------------------------------------------------
def _no_constants(word: str) -> Any:
    raise ValueError(f"{word} is not a JSON number (write a finite number)")


def _unique_keys(pairs: list[tuple[str, Any]]) -> dict[str, Any]:
    out: dict[str, Any] = {}
    for k, v in pairs:
        if k in out:
            raise ValueError(f"field {k!r} appears twice")
        out[k] = v
    return out


def parse_record_text(text: str, where: str = "<text>") -> dict[str, Any]:
    """Read record JSON text into plain data (strict: no NaN/Infinity, no repeated keys; bounded
    size and nesting)."""
    if len(text) > MAX_RECORD_BYTES:
        raise RecordError(where, [f"larger than {MAX_RECORD_BYTES // 2**20} MiB; not a record"])
    too_deep = f"lists and objects nested more than {MAX_NESTING} deep; not a record"
    try:
        doc = json.loads(text, parse_constant=_no_constants, object_pairs_hook=_unique_keys)
    except RecursionError:
        raise RecordError(where, [too_deep]) from None
    except json.JSONDecodeError as exc:
        raise RecordError(
            where, [f"not JSON: {exc.msg} at line {exc.lineno}, column {exc.colno}"]
        ) from None
    except ValueError as exc:
        raise RecordError(where, [f"not a usable JSON document: {exc}"]) from None
    if not isinstance(doc, dict):
        raise RecordError(where, ["the record must be a JSON object at the top level"])
    if nesting_depth(doc) > MAX_NESTING:
        raise RecordError(where, [too_deep])
    return doc


def _semantic_problems(doc: Mapping[str, Any]) -> list[str]:
    out = []
    temp = doc["conditions"]["temperature"]
    if temp["kind"] == "range":
        for key in ("T_lo_K", "T_hi_K", "points"):
            if key not in temp:
                out.append(f"field conditions.temperature.{key}: missing (needed for a range)")
    unc = doc["uncertainty"]
    if unc is not None:
        if (unc["samples"] is None) == (unc["adaptive"] is None):
            out.append("field uncertainty.samples: give samples, or adaptive settings, not both")
        crit = unc["criterion"]
        need = "threshold_J_per_mol" if crit["kind"] == "threshold" else "required_K"
        if need not in crit:
            out.append(f"field uncertainty.criterion.{need}: missing (criterion {crit['kind']})")
    return out


def validate_record(doc: Any, where: str = "record", check_hash: bool = True) -> dict[str, Any]:
    """Check ``doc`` against the published schema and its content hash; return it.

    Raises :class:`RecordError` listing every problem (``field X: problem``).
    """
    if not isinstance(doc, dict):
        raise RecordError(where, ["the record must be a JSON object at the top level"])
    if doc.get("schema") != SCHEMA_MARK:
        raise RecordError(
            where, [f"field schema: {doc.get('schema')!r} is not {SCHEMA_MARK!r}; not a record"]
        )
    version = doc.get("schema_version")
    if version != SCHEMA_VERSION or isinstance(version, bool):
        raise RecordError(
            where,
            [
                f"field schema_version: {version!r} is not a version this feasibly "
                f"({__about__.__version__}) reads ({SCHEMA_VERSION}); use the feasibly "
                "version that wrote it, or a newer one"
            ],
        )
    problems = schema_problems(doc)
    if not problems:
        problems = _semantic_problems(doc)
    if not problems and check_hash:
        actual = record_hash(doc)
        if doc["integrity"]["content_sha256"] != actual:
            changed = _changed_sections(doc)
            problems.append(
                "field integrity.content_sha256: does not match the content "
                f"({actual}); the record was changed after it was exported"
                + (f" (in: {', '.join(changed)})" if changed else "")
            )
    if problems:
        raise RecordError(where, problems)
    return doc


def _changed_sections(doc: Mapping[str, Any]) -> list[str]:
    stored = doc.get("integrity", {}).get("sections_sha256", {})
    now = _section_hashes(doc)
    return sorted(k for k in set(stored) | set(now) if stored.get(k) != now.get(k))


def load_record(path: str | Path, *, check_hash: bool = True) -> dict[str, Any]:
    """Read a record file and validate it (schema version, fields and types, content hash)."""
    path = Path(path)
    try:
        if path.stat().st_size > MAX_RECORD_BYTES:
            raise RecordError(
                str(path), [f"larger than {MAX_RECORD_BYTES // 2**20} MiB; not a record"]
            )
        text = path.read_text("utf-8")
    except OSError as exc:
        raise RecordError(str(path), [f"cannot read the file ({exc.strerror})"]) from None
    except UnicodeDecodeError:
        raise RecordError(str(path), ["not UTF-8 text, so not a record"]) from None
    return validate_record(parse_record_text(text, str(path)), str(path), check_hash)


# --- writing --------------------------------------------------------------------------------------
def _target(path: Any, what: str) -> Path:
    """A usable path to write ``what`` to, or a RecordError saying why not."""
    if not isinstance(path, (str, Path)) or not str(path).strip():
        raise RecordError("write_record", [f"the {what} path is empty; give a file name"])
    p = Path(path)
    if p.is_dir() or str(path).endswith(("/", os.sep)):
        raise RecordError(str(p), [f"is a directory; give a file name for the {what}"])
    parent = p.parent if str(p.parent) else Path(".")
    if not parent.is_dir():
        raise RecordError(str(p), [f"the directory {parent} does not exist; create it first"])
    return p


def _temp_copy(path: Path, text: str) -> str:
    """Write ``text`` to a new temporary file beside ``path``; return its name."""
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
    try:
        with os.fdopen(fd, "w", encoding="utf-8", newline="\n") as fh:
            fh.write(text)
            fh.flush()
            os.fsync(fh.fileno())
        # mkstemp makes the file private (0600); a record is meant to be shared like any other
        # document the user writes, so give it the usual mode under the user's umask.
        umask = os.umask(0)
        os.umask(umask)
        os.chmod(tmp, 0o666 & ~umask)
    except BaseException:
        _unlink(tmp)
        raise
    return tmp


def _unlink(path: str | Path) -> None:
    try:
        os.unlink(path)
    except OSError:
        pass


def _commit(pairs: list[tuple[Path, str]], overwrite: bool) -> None:
    """Move every temporary file onto its target, all or none.

    Without ``overwrite`` each target is created with a hard link, which fails if the target
    exists (no window for a clobber); with it, each existing target is first kept under a
    hard-linked backup name, so that if a later step fails every target is put back as it was.
    """
    done: list[tuple[Path, str | None]] = []  # (target, backup of its old content or None)
    backups: list[str] = []
    try:
        for path, tmp in pairs:
            backup = None
            if overwrite and path.exists():
                backup = f"{tmp}.old"
                os.link(path, backup)
                backups.append(backup)
            if overwrite:
                os.replace(tmp, path)
            else:
                try:
                    os.link(tmp, path)
                except FileExistsError:
                    raise RecordError(
                        str(path),
                        ["file exists; pass overwrite=True (or --overwrite) to replace it"],
                    ) from None
                except OSError as exc:
                    if exc.errno not in (errno.EPERM, errno.EOPNOTSUPP, errno.EXDEV):
                        raise
                    # a filesystem without hard links: check, then rename
                    if path.exists():
                        raise RecordError(
                            str(path), ["file exists; pass overwrite=True to replace it"]
                        ) from None
                    os.replace(tmp, path)
            done.append((path, backup))
    except BaseException:
        for path, backup in reversed(done):
            if backup is not None:
                os.replace(backup, path)
            else:
                _unlink(path)
        raise
    finally:
        for _, tmp in pairs:
            _unlink(tmp)
        for backup in backups:
            _unlink(backup)


def write_record(
    record: Mapping[str, Any],
    path_json: str | Path,
    path_html: str | Path | None = None,
    *,
    path_markdown: str | Path | None = None,
    overwrite: bool = False,
) -> list[Path]:
    """Write the record as JSON (and optionally its HTML report and Markdown); return the paths.

    The files are written as a unit: the record is validated and every text rendered first,
    each is written to a temporary file beside its target, and only when all are complete are
    they moved into place — all of them, or none (an existing pair stays intact until the new
    one is complete). An existing file is left alone (:class:`RecordError`) unless
    ``overwrite`` is true. Empty paths, directories, missing directories and any failure to
    write (read-only directory, full disk, file-size limit) are a :class:`RecordError`.
    """
    doc = validate_record(dict(record), "record to write")
    from ._report import render_html, render_markdown

    targets: list[tuple[Path, str]] = [
        (
            _target(path_json, "JSON record"),
            json.dumps(doc, indent=2, ensure_ascii=False, allow_nan=False) + "\n",
        )
    ]
    if path_html is not None:
        targets.append((_target(path_html, "HTML report"), render_html(doc)))
    if path_markdown is not None:
        targets.append((_target(path_markdown, "Markdown summary"), render_markdown(doc)))
    if len({p.resolve() for p, _ in targets}) < len(targets):
        raise RecordError("write_record", ["the JSON, HTML and Markdown paths must differ"])
    if not overwrite:
        existing = [str(p) for p, _ in targets if p.exists()]
        if existing:
            raise RecordError(
                ", ".join(existing),
                ["file exists; pass overwrite=True (or --overwrite) to replace it"],
            )
    pairs: list[tuple[Path, str]] = []
    current = targets[0][0]
    try:
        for p, text in targets:
            current = p
            pairs.append((p, _temp_copy(p, text)))
        _commit(pairs, overwrite)
    except OSError as exc:
        for _, tmp in pairs:
            _unlink(tmp)
        reason = exc.strerror or type(exc).__name__
        raise RecordError(
            str(current),
            [f"cannot write the record ({reason}); nothing was written or replaced"],
        ) from None
    return [p for p, _ in targets]


def record_html(record: Mapping[str, Any]) -> str:
    """The self-contained HTML report of a record (figures inline, no network, printable)."""
    from ._report import render_html

    return render_html(validate_record(dict(record)))


def record_markdown(record: Mapping[str, Any]) -> str:
    """A Markdown summary of a record, for lab notebooks and merge requests."""
    from ._report import render_markdown

    return render_markdown(validate_record(dict(record)))

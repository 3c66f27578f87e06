"""Decision records: a reproducible, reviewable record of one feasibility call.

A record is a plain JSON document (schema ``feasibly-record`` version :data:`SCHEMA_VERSION`,
published as ``data/record-schema.json``) holding the equation as entered and as balanced, the
conditions, the sampling settings and seed, every user override with its reason, every species
entry the call may use (values, uncertainties, conventions, sources, and the entry itself, so a
user's own species travel with the record), the data library version and hash, the package and
platform versions, who made and reviewed the call and why, and the results: per-temperature
summary, verdict, feasible window, sensitivity ranking and the cautions shown.

- :func:`make_record` runs the calculation and records it; :func:`record_from` records an
  :class:`~feasibly.Assessment` (and :class:`~feasibly.uncertainty.UncertainAssessment`) already
  run.
- :func:`write_record` writes the JSON (and an HTML report and Markdown) atomically and never
  replaces an existing file unless asked; :func:`load_record` reads and validates one.
- :func:`verify_record` recomputes the call from the record's inputs and says whether every result
  is identical (bitwise, on the same platform), or exactly what differs.

``integrity.content_sha256`` is the SHA-256 of the canonical JSON of everything else, so an edit
after export is detected. It is tamper *evidence*, not a signature: someone who edits a record and
recomputes the hash is caught only where :func:`verify_record` recomputes a different result.
Loading a record reads JSON data only; nothing in it is executed, evaluated or unpickled.

Architecture: this module calls the kernel (assessment, confidence, library); the kernel never
imports it. The HTML and Markdown forms live in :mod:`feasibly._report_html`.
"""

from __future__ import annotations

import hashlib
import json
import math
import os
import secrets
import tempfile
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from datetime import UTC, datetime
from pathlib import Path
from typing import Any

import numpy as np

from .. import __about__
from ..errors import RecordError, UnbalancedReaction
from ..library.catalogue import Library
from ..library.cp_models import R
from ..thermo.assessment import Assessment, assess
from ..thermo.reaction import Reaction
from ..uncertainty.assessment import _ADAPTIVE_MAX_TRIALS, UncertainAssessment, assess_uncertainty
from ..uncertainty.inputs import InputKey, Method, Override
from ._schema import schema_problems
from .build import (
    correlations,
    environment,
    plain,
    results_section,
    species_section,
    temperature_section,
)

__all__ = [
    "SCHEMA_MARK",
    "SCHEMA_VERSION",
    "Difference",
    "VerifyResult",
    "load_record",
    "make_record",
    "record_from",
    "record_hash",
    "record_html",
    "record_markdown",
    "validate_record",
    "verify_record",
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
    """SHA-256 of the canonical serialisation of ``record`` without its ``integrity`` member."""
    body = {k: v for k, v in record.items() if k != "integrity"}
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


# --- building -------------------------------------------------------------------------------------
def _override_data(o: Override) -> dict[str, Any]:
    def given(v: Any) -> Any:
        if v is None or isinstance(v, str):
            return v
        if isinstance(v, (int, float)) and not isinstance(v, bool):
            return float(v)
        if hasattr(v, "magnitude") and hasattr(v, "units"):
            return f"{float(v.magnitude)!r} {v.units:D}"
        raise RecordError("override", [f"field value: {v!r} cannot be written into a record"])

    dist: Any = o.distribution
    if not isinstance(dist, str):
        name = getattr(getattr(dist, "dist", None), "name", None)
        args, kwds = getattr(dist, "args", None), getattr(dist, "kwds", None)
        if not isinstance(name, str) or not isinstance(args, tuple) or not isinstance(kwds, dict):
            raise RecordError(
                f"override of {o.target} {o.quantity}",
                ["field distribution: only frozen scipy.stats distributions can be recorded"],
            )
        dist = {
            "scipy": name,
            "args": [float(a) for a in args],
            "kwds": {k: float(v) for k, v in kwds.items()},
        }
    return {
        "target": o.target,
        "quantity": o.quantity,
        "reason": o.reason,
        "value": given(o.value),
        "uncertainty": given(o.uncertainty),
        "coverage": o.coverage,
        "distribution": dist,
    }


def _criterion(u: UncertainAssessment, required_K: float | None) -> dict[str, Any]:
    thr = np.asarray(u.threshold_J_per_mol, dtype=float)
    if u.threshold_text.startswith("K ≥"):
        k = required_K if required_K is not None else float(u.threshold_text.split("≥", 1)[1])
        if not np.array_equal(-R * u.T * math.log(k), thr):
            raise RecordError(
                "record_from",
                [
                    "field required_K: the criterion text gives K only to 6 digits; pass "
                    "required_K= with the exact value used"
                ],
            )
        return {"kind": "required_K", "required_K": float(k)}
    return {"kind": "threshold", "threshold_J_per_mol": float(thr[0])}


def _uncertainty_inputs(
    u: UncertainAssessment,
    required_K: float | None,
    max_trials: int | None,
    sensitivity_at: float,
) -> dict[str, Any]:
    if u.samples.seed is None:
        raise RecordError(
            "record_from",
            [
                "field seed: the Monte Carlo run had no seed, so it cannot be reproduced; "
                "run it again with seed= (or --seed)"
            ],
        )
    adaptive = None
    if u.adaptive is not None:
        if max_trials is None:
            # Not converged: the limit stopped it within one block of `trials`, which reproduces it.
            max_trials = _ADAPTIVE_MAX_TRIALS if u.adaptive.converged else u.adaptive.trials
        adaptive = {"max_trials": int(max_trials)}
    return {
        "method": u.samples.method,
        "seed": int(u.samples.seed),
        "samples": None if u.adaptive is not None else int(u.samples.n),
        "adaptive": adaptive,
        "confidence": float(u.confidence),
        "criterion": _criterion(u, required_K),
        "criterion_text": u.threshold_text,
        "sensitivity_T_K": float(sensitivity_at),
        "overrides": [_override_data(o) for o in u.overrides],
        "correlations": correlations(u),
    }


def _infer_balance(a: Assessment) -> bool:
    rxn = a.reaction
    try:
        plain = Reaction.parse(rxn.text, rxn.library, balance=False)
    except UnbalancedReaction:
        return True
    return plain.equation() != rxn.equation()


def record_from(
    assessment: Assessment,
    uncertain: UncertainAssessment | None = None,
    *,
    author: str = "",
    reviewer: str = "",
    rationale: str = "",
    balance: bool | None = None,
    required_K: float | None = None,
    max_trials: int | None = None,
    sensitivity_at: Any = None,
    conversion: Mapping[str, Any] | None = None,
    conversion_inputs: Mapping[str, Any] | None = None,
) -> dict[str, Any]:
    """The decision record (plain dict, sealed with its content hash) of calls already made.

    ``conversion`` is the result of :func:`feasibly.equilibrium.conversion_assessment` for the
    same reaction and temperatures, and ``conversion_inputs`` what it was called with: ``feed``
    (species → amount), ``key``, ``required`` (fraction), ``P_Pa``, ``samples``, ``seed`` and
    ``confidence``. Give both or neither.

    ``uncertain`` must be the Monte Carlo run of the same reaction on the same temperatures and
    pressures, with a seed. ``balance`` (whether coefficients were found) is inferred when not
    given; ``required_K`` is needed only when the run used one not exactly written in 6 digits;
    ``max_trials`` is the adaptive trial limit if one other than the default was used.
    """
    a, u = assessment, uncertain
    for name, text in (("author", author), ("reviewer", reviewer), ("rationale", rationale)):
        if not isinstance(text, str):
            raise RecordError("record_from", [f"field review.{name}: must be text"])
    problems = []
    if u is not None:
        if u.reaction.equation() != a.reaction.equation():
            problems.append("field uncertain: it is the run of a different reaction")
        if not np.array_equal(u.T, a.standard.T):
            problems.append("field uncertain: it was run on other temperatures")
        if u.partial_pressures_Pa != a.partial_pressures_Pa:
            problems.append("field uncertain: it was run at other partial pressures")
        if u.standard_pressure != a.standard.standard_pressure:
            problems.append("field uncertain: it was run at another standard pressure")
    if (conversion is None) != (conversion_inputs is None):
        problems.append("field conversion: give the conversion result and its inputs together")
    if conversion is not None and conversion.get("T_K") != [float(t) for t in a.standard.T]:
        problems.append("field conversion: it was computed on other temperatures")
    if problems:
        raise RecordError("record_from", problems)
    t_sens = float(a.standard.T[len(a.standard.T) // 2])
    if sensitivity_at is not None:
        from ..units import to_kelvin

        t_sens = float(np.squeeze(to_kelvin(sensitivity_at)))
    rxn = a.reaction
    record: dict[str, Any] = {
        "schema": SCHEMA_MARK,
        "schema_version": SCHEMA_VERSION,
        "created": datetime.now(UTC).isoformat(timespec="seconds"),
        "review": {"author": author, "reviewer": reviewer, "rationale": rationale},
        "reaction": {
            "entered": rxn.text,
            "balance": _infer_balance(a) if balance is None else bool(balance),
            "balanced": rxn.equation(),
            "pretty": rxn.equation(pretty=True),
        },
        "conditions": {
            "temperature": temperature_section(a),
            "standard_pressure_Pa": float(a.standard.standard_pressure),
            "partial_pressures_Pa": plain(a.partial_pressures_Pa),
        },
        "uncertainty": (
            _uncertainty_inputs(u, required_K, max_trials, t_sens) if u is not None else None
        ),
        "data": {
            "library_version": a.library_version,
            "library_sha256": a.library_hash,
            "user_files": list(rxn.library.user_files),
        },
        "species": species_section(rxn),
        "environment": environment(),
        "results": results_section(a, u, t_sens),
    }
    if conversion is not None and conversion_inputs is not None:
        record["conversion"] = plain(dict(conversion_inputs))
        record["results"]["conversion"] = plain(dict(conversion))
    return _seal(record)


def make_record(
    equation: str,
    T: Any = None,
    T_range: Any = None,
    points: int = 12,
    *,
    partial_pressures: Mapping[str, Any] | None = None,
    standard_pressure: Any = "1 bar",
    library: Library | None = None,
    balance: bool = False,
    samples: int | None = None,
    seed: int | None = None,
    method: Method = "mc",
    adaptive: bool = False,
    max_trials: int = _ADAPTIVE_MAX_TRIALS,
    confidence: float = 0.95,
    threshold: Any = "0 J/mol",
    required_K: Any = None,
    overrides: Sequence[Override] = (),
    correlations: Mapping[tuple[InputKey, InputKey], float] | None = None,
    sensitivity_at: Any = None,
    author: str = "",
    reviewer: str = "",
    rationale: str = "",
) -> dict[str, Any]:
    """Run the call (:func:`feasibly.assess`, and the Monte Carlo run when ``samples`` or
    ``adaptive`` is given) and return its decision record.

    Arguments are those of :func:`feasibly.assess` and
    :func:`feasibly.uncertainty.assess_uncertainty`. Without a ``seed`` a fresh one is drawn and
    recorded, so the run can be reproduced.

    >>> rec = make_record("MgCO3 -> MgO + CO2", T="800 K", samples=4096, seed=1, author="A. Chem")
    >>> rec["results"]["summary"]["verdict"], rec["uncertainty"]["seed"]
    ('feasible', 1)
    """
    a = assess(
        equation,
        T=T,
        T_range=T_range,
        points=points,
        partial_pressures=partial_pressures,
        standard_pressure=standard_pressure,
        library=library,
        balance=balance,
    )
    u = None
    if samples is not None or adaptive:
        if seed is None:
            seed = secrets.randbits(
                32
            )  # 32 bits: ample for distinct runs, exact in any JSON reader
        u = assess_uncertainty(
            a.reaction,
            T=T,
            T_range=T_range,
            points=points,
            samples=samples if samples is not None else 100_000,
            seed=seed,
            method=method,
            adaptive=adaptive,
            confidence=confidence,
            threshold=threshold,
            required_K=required_K,
            overrides=overrides,
            correlations=correlations,
            partial_pressures=partial_pressures,
            standard_pressure=standard_pressure,
            library=library,
            max_trials=max_trials,
            progress=False,
        )
    return record_from(
        a,
        u,
        author=author,
        reviewer=reviewer,
        rationale=rationale,
        balance=balance,
        required_K=float(required_K) if required_K is not None else None,
        max_trials=max_trials if adaptive else None,
        sensitivity_at=sensitivity_at,
    )


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
    """Read record JSON text into plain data (strict: no NaN/Infinity, no repeated keys)."""
    try:
        doc = json.loads(text, parse_constant=_no_constants, object_pairs_hook=_unique_keys)
    except json.JSONDecodeError as exc:
        raise RecordError(
            where, [f"not JSON: {exc.msg} at line {exc.lineno}, column {exc.colno}"]
        ) from None
    except ValueError as exc:
        raise RecordError(where, [f"not a usable JSON document: {exc}"]) from None
    if not isinstance(doc, dict):
        raise RecordError(where, ["the record must be a JSON object at the top level"])
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
        text = path.read_text("utf-8")
    except OSError as exc:
        raise RecordError(str(path), [f"cannot read the file ({exc.strerror})"]) from None
    except UnicodeDecodeError:
        raise RecordError(str(path), ["not UTF-8 text, so not a record"]) from None
    return validate_record(parse_record_text(text, str(path)), str(path), check_hash)


# --- writing --------------------------------------------------------------------------------------
def _write_atomic(path: Path, text: str, overwrite: bool) -> None:
    directory = path.parent if str(path.parent) else Path(".")
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=directory)
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
        if overwrite:
            os.replace(tmp, path)
        else:
            try:
                os.link(tmp, path)  # fails if the target exists: no window for a clobber
            except FileExistsError:
                raise RecordError(
                    str(path), ["file exists; pass overwrite=True (or --overwrite) to replace it"]
                ) from None
            except OSError:  # a filesystem without hard links: check, then rename
                if path.exists():
                    raise RecordError(
                        str(path), ["file exists; pass overwrite=True to replace it"]
                    ) from None
                os.replace(tmp, path)
    finally:
        if os.path.exists(tmp):
            os.unlink(tmp)


def write_record(
    record: Mapping[str, Any],
    path_json: str | Path,
    path_html: str | Path | None = None,
    *,
    path_markdown: str | Path | None = None,
    overwrite: bool = False,
) -> list[Path]:
    """Write the record as JSON (and optionally its HTML report and Markdown); return the paths.

    The record is validated first (a record changed after it was made is refused). Each file is
    written to a temporary file in its directory and renamed into place; an existing file is
    left alone (:class:`RecordError`) unless ``overwrite`` is true, and then none is written.
    """
    doc = validate_record(dict(record), "record to write")
    from ._report import render_html, render_markdown

    targets: list[tuple[Path, str]] = [
        (Path(path_json), json.dumps(doc, indent=2, ensure_ascii=False, allow_nan=False) + "\n")
    ]
    if path_html is not None:
        targets.append((Path(path_html), render_html(doc)))
    if path_markdown is not None:
        targets.append((Path(path_markdown), render_markdown(doc)))
    if len({p.resolve() for p, _ in targets}) < len(targets):
        raise RecordError("write_record", ["the JSON, HTML and Markdown paths must differ"])
    if not overwrite:
        existing = [str(p) for p, _ in targets if p.exists()]
        if existing:
            raise RecordError(
                ", ".join(existing),
                ["file exists; pass overwrite=True (or --overwrite) to replace it"],
            )
    for p, text in targets:
        _write_atomic(p, text, overwrite)
    return [p for p, _ in targets]


def record_html(record: Mapping[str, Any]) -> str:
    """The self-contained HTML report of a record (figures inline, no network, printable)."""
    from ._report import render_html

    return render_html(validate_record(dict(record)))


def record_markdown(record: Mapping[str, Any]) -> str:
    """A Markdown summary of a record, for lab notebooks and merge requests."""
    from ._report import render_markdown

    return render_markdown(validate_record(dict(record)))


# --- verifying ------------------------------------------------------------------------------------
@dataclass(frozen=True)
class Difference:
    """One place where the record and the recomputation (or the data now) disagree."""

    field: str
    recorded: Any
    now: Any
    kind: str = "result"  # result | integrity | data | recompute

    def __str__(self) -> str:
        if self.kind in ("integrity", "recompute"):
            return f"{self.field}: {self.now}"
        return f"{self.field}: recorded {_short(self.recorded)}, now {_short(self.now)}"


def _short(x: Any) -> str:
    text = json.dumps(x, ensure_ascii=False)
    return text if len(text) <= 80 else text[:77] + "…"


@dataclass
class VerifyResult:
    """What :func:`verify_record` found. ``identical`` is true only when nothing differs."""

    differences: list[Difference] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)

    @property
    def identical(self) -> bool:
        return not self.differences

    @property
    def tampered(self) -> bool:
        """True when the content hash shows an edit after export."""
        return any(d.kind == "integrity" for d in self.differences)

    def summary(self, limit: int = 25) -> str:
        """Plain words for a person: identical, or each difference (first ``limit``)."""
        if self.identical:
            lines = ["identical: recomputing the record gives every result bit for bit."]
        else:
            lines = [f"DIFFERS: {len(self.differences)} difference(s)."]
            lines += [f"  - {d}" for d in self.differences[:limit]]
            if len(self.differences) > limit:
                lines.append(f"  … and {len(self.differences) - limit} more")
        lines += [f"note: {n}" for n in self.notes]
        return "\n".join(lines)

    def to_dict(self) -> dict[str, Any]:
        return {
            "identical": self.identical,
            "tampered": self.tampered,
            "differences": [
                {"field": d.field, "kind": d.kind, "recorded": d.recorded, "now": d.now}
                for d in self.differences
            ],
            "notes": list(self.notes),
        }


def verify_record(record: Mapping[str, Any] | str | Path) -> VerifyResult:
    """Recompute a record (a dict, or the path of its JSON) and compare every result exactly.

    Reports an edit after export (content hash), each result that differs (recorded and now),
    species entries of the shipped library that differ from the library installed now, and a
    change of data library version or hash as such. Malformed records raise :class:`RecordError`.
    """
    from .verify import verify

    return verify(record)

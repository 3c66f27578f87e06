"""Verify a decision record: recompute it and compare every result exactly.

The record's inputs alone (equation, balance flag, conditions, sampling settings and seed,
overrides with their reasons, correlations, the user species entries it carries, and the inputs
of its heat balance and formation-line comparison when it has them) are fed to
the kernel again; the rebuilt sections are compared with the recorded ones value by value, floats
bit for bit.
"""

from __future__ import annotations

import json
from collections.abc import Mapping
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from ..conditions import STANDARD_PRESSURE_PA
from ..equilibrium.conversion import conversion_assessment
from ..errors import FeasiblyError, RecordError
from ..library.catalogue import Library, default_library
from ..thermo import assess
from ..uncertainty import ADAPTIVE_MAX_TRIALS, assess_uncertainty
from ..uncertainty.inputs import InputKey, Override
from .build import environment, record_from
from .document import _RECOMPUTED, _changed_sections, load_record, record_hash, validate_record
from .signing import SignatureCheck

__all__ = ["Difference", "VerifyResult", "verify_record"]


def _same(a: Any, b: Any) -> bool:
    if isinstance(a, float) and isinstance(b, float):
        return a.hex() == b.hex()  # bitwise, so −0.0 and 0.0 differ as the results would
    return type(a) is type(b) and a == b


def _diff(a: Any, b: Any, path: str, out: list[Difference], kind: str = "result") -> None:
    if isinstance(a, dict) and isinstance(b, dict):
        for k in list(a) + [k for k in b if k not in a]:
            where = f"{path}.{k}" if path else k
            if k not in b:
                out.append(Difference(where, a[k], "(absent)", kind))
            elif k not in a:
                out.append(Difference(where, "(absent)", b[k], kind))
            else:
                _diff(a[k], b[k], where, out, kind)
    elif isinstance(a, list) and isinstance(b, list):
        if len(a) != len(b):
            out.append(Difference(f"{path} (length)", len(a), len(b), kind))
        for i, (x, y) in enumerate(zip(a, b, strict=False)):
            _diff(x, y, f"{path}[{i}]", out, kind)
    elif not _same(a, b):
        out.append(Difference(path, a, b, kind))


def _distribution(data: Any) -> Any:
    if isinstance(data, str):
        return data
    from scipy import stats

    family = getattr(stats, str(data["scipy"]), None)
    if not isinstance(family, stats.rv_continuous):
        raise RecordError(
            "record",
            [f"field distribution.scipy: {data['scipy']!r} is not a scipy.stats distribution"],
        )
    return family(*data["args"], **data["kwds"])


def _library_for(doc: Mapping[str, Any]) -> Library:
    """The shipped library with the user entries the record carries (its own files not needed).

    A carried entry may replace a shipped one (the call was made that way, with the user's
    explicit permission); :attr:`Library.replaced` lists them so the result can say so.
    """
    lib = default_library()
    origins = dict.fromkeys(s["origin"] for s in doc["species"] if s["origin"] != "library")
    for origin in origins:
        entries = [s["entry"] for s in doc["species"] if s["origin"] == origin]
        text = json.dumps({"schema": "feasibly-species", "schema_version": 1, "species": entries})
        carried = Library.from_text(text, "species carried in the record", origin)
        lib = lib.with_species(carried, replace_shipped=True)
    return lib


def _rerun(doc: Mapping[str, Any]) -> dict[str, Any]:
    """Recompute the recorded sections from the record's inputs alone."""
    lib = _library_for(doc)
    cond = doc["conditions"]
    temp = cond["temperature"]
    T: Any = None
    T_range: Any = None
    points = 12
    if temp["kind"] == "range":
        T_range, points = ((temp["T_lo_K"], "K"), (temp["T_hi_K"], "K")), temp["points"]
    else:
        T = (temp["T_K"], "K")
    p_std = "1 bar" if cond["standard_pressure_Pa"] == STANDARD_PRESSURE_PA else "1 atm"
    pressures = {k: (float(v), "Pa") for k, v in cond["partial_pressures_Pa"].items()}
    rxn = doc["reaction"]
    conv_in = doc.get("conversion")
    at_conversion = None
    if cond.get("call_at_required_conversion") and conv_in is not None:
        at_conversion = {k: conv_in[k] for k in ("feed", "key", "required", "P_Pa")}
    a = assess(
        rxn["entered"],
        at_conversion=at_conversion,
        T=T,
        T_range=T_range,
        points=points,
        partial_pressures=pressures,
        standard_pressure=p_std,
        library=lib,
        balance=rxn["balance"],
        # records made before the gas model was recorded used ideal gases
        gas_model=cond.get("gas_model", "ideal"),
    )

    def conversion_of(u: Any) -> dict[str, Any]:
        if conv_in is None:
            return {}
        shared = bool(conv_in.get("shared_draws"))
        if shared and u is None:
            raise RecordError(
                "record", ["field conversion.shared_draws: true, but the record has no draws"]
            )
        return {
            "conversion_inputs": conv_in,
            "conversion": conversion_assessment(
                a.reaction,
                (a.standard.T, "K"),
                dict(conv_in["feed"]),
                conv_in["key"],
                conv_in["required"],
                (conv_in["P_Pa"], "Pa"),
                samples=None if shared else conv_in["samples"],
                seed=None if shared else conv_in["seed"],
                confidence=conv_in["confidence"],
                library=lib,
                sample_set=u.samples if shared else None,
                # records written before the gas model was recorded used ideal gases
                gas_model=conv_in.get("gas_model", "ideal"),
            ),
        }

    # Heat and comparison sections are recomputed from their own recorded inputs (the heat from
    # the call's draws, the comparison from its own seed).
    extras: dict[str, Any] = {"heat": doc.get("heat"), "comparison": doc.get("comparison")}
    unc = doc["uncertainty"]
    if unc is None:
        return record_from(a, None, balance=rxn["balance"], **conversion_of(None), **extras)
    crit = unc["criterion"]
    overrides = [
        Override(
            o["target"],
            o["quantity"],
            o["reason"],
            o["value"],
            o["uncertainty"],
            o["coverage"],
            _distribution(o["distribution"]),
        )
        for o in unc["overrides"]
    ]
    corr: dict[tuple[InputKey, InputKey], float] = {
        ((c["a"][0], c["a"][1]), (c["b"][0], c["b"][1])): float(c["rho"])
        for c in unc["correlations"]
    }
    adaptive = unc["adaptive"]
    max_trials = adaptive["max_trials"] if adaptive else ADAPTIVE_MAX_TRIALS
    u = assess_uncertainty(
        a.reaction,
        T=T,
        T_range=T_range,
        points=points,
        samples=unc["samples"] if unc["samples"] is not None else 100_000,
        seed=unc["seed"],
        method=unc["method"],
        adaptive=adaptive is not None,
        max_trials=max_trials,
        confidence=unc["confidence"],
        threshold=(crit["threshold_J_per_mol"], "J/mol") if crit["kind"] == "threshold" else None,
        required_K=crit.get("required_K"),
        overrides=overrides,
        correlations=corr or None,
        partial_pressures=pressures,
        standard_pressure=p_std,
        library=lib,
        progress=False,
        at_conversion=at_conversion,
        gas_model=cond.get("gas_model", "ideal"),
    )
    return record_from(
        a,
        u,
        balance=rxn["balance"],
        required_K=crit.get("required_K"),
        max_trials=max_trials if adaptive else None,
        sensitivity_at=(unc["sensitivity_T_K"], "K"),
        **conversion_of(u),
        **extras,
    )


def verify_record(
    record: Mapping[str, Any] | str | Path, *, trusted_key: str | Path | Any | None = None
) -> VerifyResult:
    """Recompute a record (a dict, or the path of its JSON) and compare every result exactly.

    Reports an edit after export (content hash), each result that differs (recorded and now),
    species entries of the shipped library that differ from the library installed now, and a
    change of data library version or hash as such. Malformed records raise :class:`RecordError`.

    The signature (:mod:`feasibly.records.signing`) is checked too: one that does not hold, or
    (with ``trusted_key``, a PEM public key file or key) one by another key or none, is a
    difference. ``result.signature`` says in plain words what the record proves.
    """
    if isinstance(record, (str, Path)):
        doc = load_record(record, check_hash=False)
    else:
        doc = validate_record(dict(record), check_hash=False)
    result = VerifyResult()
    from .signing import check_signature

    result.signature = check_signature(doc, trusted_key)
    if not result.signature.ok:
        result.differences.append(
            Difference("signature", None, result.signature.meaning, "signature")
        )
    actual = record_hash(doc)
    if doc["integrity"]["content_sha256"] != actual:
        changed = _changed_sections(doc)
        result.differences.append(
            Difference(
                "integrity.content_sha256",
                doc["integrity"]["content_sha256"],
                "the content hash does not match: the record was edited after export"
                + (f" (changed: {', '.join(changed)})" if changed else ""),
                "integrity",
            )
        )
    lib = default_library()
    data = doc["data"]
    if (data["library_version"], data["library_sha256"]) != (lib.version, lib.content_hash):
        result.notes.append(
            f"data drift: recorded with data library {data['library_version']} "
            f"(sha256 {data['library_sha256'][:12]}…), now {lib.version} "
            f"(sha256 {lib.content_hash[:12]}…); results may differ for that reason"
        )
    env, now_env = doc["environment"], environment()
    changed_env = [
        f"{k} {env.get(k)} → {now_env[k]}"
        for k in ("feasibly", "python", "numpy", "scipy", "pint", "platform")
        if env.get(k) != now_env[k]
    ]
    if changed_env:
        result.notes.append(
            "different environment (" + "; ".join(changed_env) + "): results are bitwise "
            "reproducible only on the same platform and versions; differences in the last "
            "digits may come from that"
        )
    try:
        for sid, _, origin in _library_for(doc).replaced:
            result.notes.append(
                f"{sid} is not the shipped entry: the recorded call replaced it with one from "
                f"{origin}"
            )
        fresh = _rerun(doc)
    except FeasiblyError as exc:
        result.differences.append(
            Difference("recomputation", None, f"could not recompute the call: {exc}", "recompute")
        )
        return result
    # Which user files the entries came from is a description, not a result: the record
    # carries the entries themselves and verification never reads those files.
    fresh["data"]["user_files"] = doc["data"]["user_files"]
    for section in _RECOMPUTED:
        kind = "data" if section in ("data", "species") else "result"
        _diff(doc[section], fresh[section], section, result.differences, kind)
    return result


# --- verifying ------------------------------------------------------------------------------------
@dataclass(frozen=True)
class Difference:
    """One place where the record and the recomputation (or the data now) disagree."""

    field: str
    recorded: Any
    now: Any
    kind: str = "result"  # result | integrity | data | recompute | signature

    def __str__(self) -> str:
        if self.kind in ("integrity", "recompute", "signature"):
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
    signature: SignatureCheck | None = None

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
        if self.signature is not None and self.signature.ok:
            lines.append(f"signature: {self.signature.meaning}")
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
            "signature": None if self.signature is None else self.signature.to_dict(),
        }

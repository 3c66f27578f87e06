"""Readers of the curation tables in ``tables/`` (TOML, read with :mod:`tomllib` only).

Each reader checks the shape of its table (known keys, value types) and stops with
:class:`~.errors.SourceError` naming the file, the row and the key, so a typing slip in a table
fails the build instead of silently changing the library. No reader imports a source package:
the tables can be read (and tested) without cantera, chemicals or janaf.
"""

from __future__ import annotations

import re
import tomllib
from collections.abc import Mapping
from pathlib import Path
from typing import Any, NamedTuple

from .errors import SourceError, need

TABLES = Path(__file__).resolve().parent / "tables"

_STR = (str,)
_NUM = (int, float)


class GasName(NamedTuple):
    """Curated formula and names of a NASA gas species; ``note`` is added to the entry's notes."""

    formula: str
    names: tuple[str, ...]
    note: str | None


class CondensedName(NamedTuple):
    """Curated formula and names of a NASA condensed base name (names may differ by phase)."""

    formula: str
    names: tuple[str, ...]
    names_by_phase: Mapping[str, tuple[str, ...]]
    #: phase label -> form, where the record's comment names the polymorph its label does not
    form_by_label: Mapping[str, str] = {}


class PhaseLabel(NamedTuple):
    """Library phase and form (polymorph) of a NASA condensed phase label."""

    phase: str
    form: str | None


class NasaExceptions(NamedTuple):
    """NASA species left out (name -> reason) and charges used instead of the file's."""

    skip: Mapping[str, str]
    charge: Mapping[str, int]


class CrcPick(NamedTuple):
    """A CRC table row (by CAS) and the constant-Cp entry it becomes, or why it is skipped."""

    cas: str
    crc_name: str | None
    formula: str | None
    form: str | None
    names: tuple[str, ...]
    skip: str | None


class CrcFormula(NamedTuple):
    """The formula (and form, names) a CRC row is written with when the rule cannot give one."""

    formula: str
    form: str | None
    names: tuple[str, ...]


class Disposition(NamedTuple):
    """Why a gap beyond the cross-check's limit is accepted, and the value kept."""

    chosen: str
    value: float
    reason: str


class Policy(NamedTuple):
    """An uncertainty policy: its text and the numbers the build applies."""

    text: str
    u: float | None
    u_base: float | None
    u_fraction: float | None
    u_rel: float | None
    T_range_K: tuple[float, float] | None
    gap_threshold_J_per_mol: float | None


class Hazards(NamedTuple):
    """Toxic thresholds and curated hazard lists (library id -> reason)."""

    toxic_ppm: float
    toxic_mg_m3: float
    curated_source: str
    toxic: Mapping[str, str]
    flammable: Mapping[str, str]
    oxidiser: Mapping[str, str]


class JanafRules(NamedTuple):
    """Library id -> JANAF index for the 1 bar check; entry form -> word in a JANAF table name."""

    one_bar_check: Mapping[str, str]
    form_words: Mapping[str, str]


PHASES = ("g", "l", "cr")
# Packages a sources.toml placeholder may name (the build's source packages).
SOURCE_PACKAGES = ("cantera", "chemicals", "janaf")
# Keys of one source, in the order they are written to the library.
SOURCE_KEYS = ("citation", "carried_by", "licence", "note")


def read(name: str, folder: Path = TABLES) -> dict[str, Any]:
    """The parsed TOML table ``name`` (e.g. ``"crc.toml"``) from ``folder``."""
    path = folder / name
    need(path.is_file(), f"curation table missing: {path}")
    try:
        with path.open("rb") as f:
            return tomllib.load(f)
    except tomllib.TOMLDecodeError as exc:
        raise SourceError(f"{path.name}: not valid TOML: {exc}") from None


def _row(
    where: str,
    row: Any,
    required: Mapping[str, tuple[type, ...]],
    optional: Mapping[str, tuple[type, ...]] | None = None,
) -> dict[str, Any]:
    optional = optional or {}
    need(isinstance(row, dict), f"{where}: a table (key = value pairs) is expected")
    for key, types in required.items():
        need(key in row, f"{where}: key '{key}' missing")
        _type(where, key, row[key], types)
    for key, value in row.items():
        if key in required:
            continue
        need(key in optional, f"{where}: unknown key '{key}'")
        _type(where, key, value, optional[key])
    return row


def _type(where: str, key: str, value: Any, types: tuple[type, ...]) -> None:
    if types == (list,):
        need(
            isinstance(value, list) and all(isinstance(x, str) and x for x in value),
            f"{where}: '{key}' must be a list of non-empty strings",
        )
        return
    ok = isinstance(value, types) and not isinstance(value, bool)
    if ok and types == _STR:
        ok = bool(value.strip())
    need(ok, f"{where}: '{key}' must be {' or '.join(t.__name__ for t in types)}, not {value!r}")


def _phase(where: str, phase: str) -> str:
    need(phase in PHASES, f"{where}: phase {phase!r} is not one of {', '.join(PHASES)}")
    return phase


def nasa_gas(folder: Path = TABLES) -> dict[str, GasName]:
    """``nasa_gas.toml``: NASA gas species name -> curated formula and names."""
    out = {}
    for name, row in read("nasa_gas.toml", folder).items():
        where = f"nasa_gas.toml [{name}]"
        r = _row(where, row, {"formula": _STR, "names": (list,)}, {"note": _STR})
        out[name] = GasName(r["formula"], tuple(r["names"]), r.get("note"))
    return out


def nasa_condensed(folder: Path = TABLES) -> dict[str, CondensedName]:
    """``nasa_condensed.toml``: NASA condensed base name -> curated formula and names."""
    out = {}
    for name, row in read("nasa_condensed.toml", folder).items():
        where = f"nasa_condensed.toml [{name}]"
        r = _row(
            where,
            row,
            {"formula": _STR, "names": (list,)},
            {"names_by_phase": (dict,), "form_by_label": (dict,)},
        )
        by_phase = {}
        for phase, names in r.get("names_by_phase", {}).items():
            _type(where, f"names_by_phase.{_phase(where, phase)}", names, (list,))
            by_phase[phase] = tuple(names)
        forms = r.get("form_by_label", {})
        for label, form in forms.items():
            _type(where, f"form_by_label.{label}", form, _STR)
        out[name] = CondensedName(r["formula"], tuple(r["names"]), by_phase, dict(forms))
    return out


def nasa_phase_labels(folder: Path = TABLES) -> dict[str, PhaseLabel]:
    """``nasa_phase_labels.toml``: NASA condensed phase label -> library phase and form."""
    out = {}
    for label, row in read("nasa_phase_labels.toml", folder).items():
        where = f"nasa_phase_labels.toml [{label}]"
        r = _row(where, row, {"phase": _STR}, {"form": _STR})
        need(r["phase"] != "g", f"{where}: a condensed label cannot mean the gas phase")
        out[label] = PhaseLabel(_phase(where, r["phase"]), r.get("form"))
    return out


def nasa_exceptions(folder: Path = TABLES) -> NasaExceptions:
    """``nasa_exceptions.toml``: NASA species left out, and charge fixes."""
    doc = _row(
        "nasa_exceptions.toml",
        read("nasa_exceptions.toml", folder),
        {},
        {"skip": (dict,), "charge": (dict,)},
    )
    skip, charge = doc.get("skip", {}), doc.get("charge", {})
    for name, why in skip.items():
        _type(f"nasa_exceptions.toml [skip] {name}", "reason", why, _STR)
    for name, z in charge.items():
        _type(f"nasa_exceptions.toml [charge] {name}", "charge", z, (int,))
        need(z != 0, f"nasa_exceptions.toml [charge] {name}: a charge fix of 0 fixes nothing")
    return NasaExceptions(skip, charge)


def crc_picks(folder: Path = TABLES) -> list[CrcPick]:
    """``crc.toml``: CRC rows (in build order) and the constant-Cp entries they become."""
    out = []
    for i, row in enumerate(read("crc.toml", folder).get("pick", [])):
        where = f"crc.toml pick[{i}]"
        if isinstance(row, dict) and "skip" in row:
            r = _row(where, row, {"cas": _STR, "skip": _STR})
            out.append(CrcPick(r["cas"], None, None, None, (), r["skip"]))
            continue
        r = _row(
            where,
            row,
            {"cas": _STR, "crc_name": _STR, "formula": _STR, "names": (list,)},
            {"form": _STR},
        )
        out.append(
            CrcPick(r["cas"], r["crc_name"], r["formula"], r.get("form"), tuple(r["names"]), None)
        )
    need(out, "crc.toml: 'pick' list missing or empty")
    return out


def crc_formulas(folder: Path = TABLES) -> dict[str, CrcFormula]:
    """``crc_formulas.toml``: CRC CAS -> the formula (form, names) its entries are written with."""
    out = {}
    for cas, row in read("crc_formulas.toml", folder).items():
        where = f"crc_formulas.toml [{cas}]"
        need(re.fullmatch(r"\d+-\d\d-\d", cas) is not None, f"{where}: not a CAS number")
        r = _row(where, row, {"formula": _STR}, {"form": _STR, "names": (list,)})
        out[cas] = CrcFormula(r["formula"], r.get("form"), tuple(r.get("names", [])))
    return out


def dispositions(folder: Path = TABLES) -> dict[tuple[str, str, str], Disposition]:
    """``dispositions.toml``: (entry id, quantity, compilation) -> the accepted gap's reason."""
    out = {}
    for i, row in enumerate(read("dispositions.toml", folder).get("dispute", [])):
        where = f"dispositions.toml dispute[{i}]"
        r = _row(
            where,
            row,
            {"id": _STR, "quantity": _STR, "compilation": _STR, "chosen": _STR,
             "value": (int, float), "reason": _STR},
        )  # fmt: skip
        need(len(r["reason"]) > 20, f"{where}: a reason must say why, in words")
        key = (r["id"], r["quantity"], r["compilation"])
        need(key not in out, f"{where}: {key} listed twice")
        out[key] = Disposition(r["chosen"], float(r["value"]), r["reason"])
    return out


def policies(folder: Path = TABLES) -> dict[str, Policy]:
    """``policies.toml``: uncertainty policy id -> its text and numbers."""
    out = {}
    for pid, row in read("policies.toml", folder).items():
        where = f"policies.toml [{pid}]"
        need(isinstance(row, dict), f"{where}: a table (key = value pairs) is expected")
        t_range = row.get("T_range_K")
        r = _row(
            where,
            {k: v for k, v in row.items() if k != "T_range_K"},
            {"text": _STR},
            dict.fromkeys(("u", "u_base", "u_fraction", "u_rel", "gap_threshold_J_per_mol"), _NUM),
        )
        need(
            ("u_base" in r) == ("u_fraction" in r),
            f"{where}: u_base and u_fraction go together",
        )
        need(
            sum(k in r for k in ("u", "u_base", "u_rel")) <= 1,
            f"{where}: at most one of u, u_base + u_fraction, u_rel",
        )
        if t_range is not None:
            need(
                isinstance(t_range, list)
                and len(t_range) == 2
                and all(isinstance(t, float) for t in t_range)
                and 0 < t_range[0] < t_range[1],
                f"{where}: T_range_K must be [low, high] in K (floats, low < high)",
            )
            t_range = (t_range[0], t_range[1])
        numbers = {
            k: float(r[k]) if k in r else None
            for k in ("u", "u_base", "u_fraction", "u_rel", "gap_threshold_J_per_mol")
        }
        for k, v in numbers.items():
            need(v is None or v >= 0, f"{where}: '{k}' must not be negative")
        out[pid] = Policy(
            r["text"],
            numbers["u"],
            numbers["u_base"],
            numbers["u_fraction"],
            numbers["u_rel"],
            t_range,
            numbers["gap_threshold_J_per_mol"],
        )
    return out


def sources_text(folder: Path = TABLES) -> dict[str, dict[str, str]]:
    """``sources.toml``: source id -> citation, carried_by, licence, note (with placeholders)."""
    out = {}
    for sid, row in read("sources.toml", folder).items():
        where = f"sources.toml [{sid}]"
        r = _row(where, row, dict.fromkeys(SOURCE_KEYS, _STR))
        need(list(r) == list(SOURCE_KEYS), f"{where}: keys must be in the order {SOURCE_KEYS}")
        for key, text in r.items():
            for pkg in re.findall(r"\{(?:version|licence):([^}]*)\}", text):
                need(pkg in SOURCE_PACKAGES, f"{where}: '{key}' names unknown package {pkg!r}")
            rest = re.sub(r"\{(?:version|licence):[a-z]+\}", "", text)
            need("{" not in rest and "}" not in rest, f"{where}: '{key}' has a stray brace")
        out[sid] = dict(r)
    return out


def hazards(folder: Path = TABLES) -> Hazards:
    """``hazards.toml``: toxic thresholds and curated toxic, flammable and oxidiser lists."""
    doc = _row(
        "hazards.toml",
        read("hazards.toml", folder),
        {
            "toxic_ppm": _NUM,
            "toxic_mg_m3": _NUM,
            "curated_source": _STR,
            "toxic": (dict,),
            "flammable": (dict,),
            "oxidiser": (dict,),
        },
    )
    for flag in ("toxic", "flammable"):
        for sid, why in doc[flag].items():
            _type(f"hazards.toml [{flag}] {sid}", "reason", why, _STR)
    ox = _row("hazards.toml [oxidiser]", doc["oxidiser"], {"reason": _STR, "species": (list,)})
    need(
        len(set(ox["species"])) == len(ox["species"]),
        "hazards.toml [oxidiser]: a species is listed twice",
    )
    return Hazards(
        float(doc["toxic_ppm"]),
        float(doc["toxic_mg_m3"]),
        doc["curated_source"],
        doc["toxic"],
        doc["flammable"],
        dict.fromkeys(ox["species"], ox["reason"]),
    )


def janaf(folder: Path = TABLES) -> JanafRules:
    """``janaf.toml``: the 1 bar check's gases and the form words used to pick JANAF tables."""
    doc = _row(
        "janaf.toml", read("janaf.toml", folder), {"one_bar_check": (dict,), "form_words": (dict,)}
    )
    for part in ("one_bar_check", "form_words"):
        for key, value in doc[part].items():
            _type(f"janaf.toml [{part}] {key}", "value", value, _STR)
    return JanafRules(doc["one_bar_check"], doc["form_words"])


def library_version(folder: Path = TABLES) -> str:
    """``library.toml``: the version written as ``library_version``."""
    doc = _row("library.toml", read("library.toml", folder), {"library_version": _STR})
    return doc["library_version"]

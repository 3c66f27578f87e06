"""Reading species files (the shipped library and users' own): every entry checked against the
schema of ``data/SCHEMA.md``, every problem reported with its entry and field at once. Files are
plain JSON or TOML data; nothing in them is executed."""

from __future__ import annotations

import itertools
import json
import math
import re
import tomllib
from collections.abc import Mapping
from types import MappingProxyType
from typing import Any, TypeGuard

import numpy as np

from .._limits import MAX_DATA_FILE_BYTES, MAX_NESTING, nesting_depth
from ..errors import DataFileError, FeasiblyError, excerpt
from ._index import canonical_hash, lookup_fields
from .cp_models import T_REF, ConstantCp, CpModel, MaierKelleyCp, Nasa7, Nasa9
from .formula import element_table, parse_formula
from .species import PHASES, SourcedValue, Species

__all__ = ["COVERAGE_DIVISORS", "canonical_hash", "standard_uncertainty"]

SCHEMA_MARK = "feasibly-species"


SCHEMA_VERSION = 1


#: Coverage statements a source may use, and the number the stated value is divided by to give a
#: standard uncertainty (JCGM 100:2008: k = 2 → 2; a 95 % interval of a normal distribution →
#: k = 1.960 as tabulated in Table G.1; ± a of a rectangular distribution → √3, §4.3.7).
COVERAGE_DIVISORS = MappingProxyType(
    {
        "standard": 1.0,
        "k=2": 2.0,
        "expanded-95": 1.96,
        "half-width-rectangular": math.sqrt(3.0),
    }
)
_TOP_REQUIRED = {"schema", "schema_version", "species"}
_TOP_OPTIONAL = {
    "library_version",
    "content_sha256",
    "standard_pressure_Pa",
    "sources",
    "uncertainty_policy",
    "description",
}
_ENTRY_REQUIRED = {"formula", "phase", "T_range_K", "dHf_298", "S_298", "cp"}
_ENTRY_OPTIONAL = {
    "id",
    "elements",
    "charge",
    "form",
    "names",
    "cas",
    "molar_mass_g_per_mol",
    "reference_state_of",
    "hypothetical_298",
    "notes",
    "phase_points",
}
_VALUE_KEYS = {"value", "u", "source", "entry", "uncertainty", "replaced"}
_CP_KEYS = {
    "nasa7": {"T_breaks_K", "coefficients"},
    "nasa9": {"T_breaks_K", "coefficients"},
    "constant": {"cp_J_per_mol_K"},
    "maier_kelley": {"a", "b", "c"},
}
_CP_COMMON = {"model", "u_rel", "source", "entry", "uncertainty"}


#: An explicit entry id: formula characters, phase and form punctuation; no spaces, quotes, angle
#: brackets or control characters, so an id is safe to show anywhere and to type in an equation.
_ID = re.compile(r"[A-Za-z0-9\[(][A-Za-z0-9()\[\],+\-.*^·]{0,119}")
#: Names, notes and sources: printable text; control characters (terminal escapes) are refused.
_CONTROL = re.compile(r"[\x00-\x08\x0b-\x1f\x7f-\x9f\u200b-\u200f\u202a-\u202e\u2066-\u2069]")
_MAX_NAME_CHARS = 200
# Bounds on values, far outside anything physical but inside what float64 arithmetic on them
# keeps finite: ΔfH° of a hypothetical phase's bookkeeping constant in the shipped data reaches
# 4e8 J/mol; S° 8e5 J/(mol·K); a heat capacity of 1e4 J/(mol·K) is that of ~400 atoms at the
# Dulong–Petit limit, larger than any species a feasibility screen handles.
_MAX_ABS_DHF = 1e10
_MAX_ABS_S = 1e8
_MAX_CP = 1e4
# A relative Cp uncertainty above 10 (1000 %) says nothing about Cp at all.
_MAX_CP_U_REL = 10.0
#: Highest temperature an entry may claim data for: far above any tabulated polynomial (6000 K).
_MAX_T_K = 1e5

# The largest ionic charge of an entry (the formula reader's bound).
_MAX_CHARGE = 100

# H(298.15) of an element's reference state is 0 by definition; 1e-6 J/mol allows float noise only.
#: The data's standard state (1 bar); feasibly.conditions.STANDARD_PRESSURE_PA is the same number.
_STANDARD_PRESSURE_PA = 100000.0
_REF_STATE_TOL = 1e-6


def standard_uncertainty(stated: float, convention: str) -> float:
    """Convert an uncertainty as a source states it into a standard uncertainty.

    ``convention`` is one of :data:`COVERAGE_DIVISORS` or ``k=<number>``.

    >>> round(standard_uncertainty(4.0, "expanded-95"), 4)
    2.0408
    >>> standard_uncertainty(3.0, "k=3")
    1.0
    """
    from ..errors import InvalidUncertainty

    if (
        not isinstance(stated, (int, float))
        or isinstance(stated, bool)
        or not math.isfinite(stated)
    ):
        raise InvalidUncertainty(f"uncertainty {stated!r} is not a finite number")
    if stated < 0:
        raise InvalidUncertainty(f"uncertainty {stated!r} is negative; uncertainties are ≥ 0")
    if convention in COVERAGE_DIVISORS:
        return float(stated) / COVERAGE_DIVISORS[convention]
    match = re.fullmatch(r"k\s*=\s*([0-9]*\.?[0-9]+)", str(convention).strip())
    if match and float(match.group(1)) > 0:
        return float(stated) / float(match.group(1))
    known = ", ".join([*COVERAGE_DIVISORS, "k=<number>"])
    raise InvalidUncertainty(f"unknown coverage convention {convention!r}; use one of {known}")


class _Problems:
    """Collects validation problems as 'entry N (id): field F: problem' lines."""

    def __init__(self) -> None:
        self.items: list[str] = []

    def add(self, where: str, field: str, problem: str) -> None:
        self.items.append(f"{where}: field {field}: {problem}")


def _finite(x: Any) -> TypeGuard[float]:
    return isinstance(x, (int, float)) and not isinstance(x, bool) and math.isfinite(x)


class _EntryReader:
    """Validates one raw entry and builds its :class:`Species` (or records problems)."""

    def __init__(
        self,
        raw: Any,
        where: str,
        problems: _Problems,
        sources: Mapping[str, Any] | None,
        policies: Mapping[str, Any] | None,
        origin: str,
    ) -> None:
        self.raw = raw
        self.where = where
        self.problems = problems
        self.sources = sources
        self.policies = policies
        self.origin = origin
        self.ok = True

    def bad(self, field: str, problem: str) -> None:
        self.ok = False
        self.problems.add(self.where, field, problem)

    def _check_source(self, field: str, source: Any) -> None:
        if not isinstance(source, str) or not source.strip():
            self.bad(
                field, "a source (citation or note saying where the value came from) is needed"
            )
            return
        if _CONTROL.search(source):
            self.bad(field, "must be printable text (no control characters)")
            return
        if source.startswith("policy:"):
            if self.policies is not None and source[7:] not in self.policies:
                self.bad(field, f"policy {source[7:]!r} is not described in uncertainty_policy")
        elif self.sources is not None and source not in self.sources:
            self.bad(field, f"source {source!r} is not listed in the file's sources")

    def _uncertainty_block(self, field: str, block: Any, u: Any) -> tuple[float | None, dict]:
        """Return (standard uncertainty, uncertainty dict), checking they agree."""
        if block is None:
            if u is None:
                self.bad(
                    field,
                    "an uncertainty is needed: give u (standard uncertainty) or "
                    "uncertainty = {stated, convention}",
                )
                return None, {}
            if not _finite(u) or u < 0:
                self.bad(field + ".u", f"{u!r} is not a finite number ≥ 0")
                return None, {}
            return float(u), {
                "stated": float(u),
                "convention": "standard",
                "divisor": 1.0,
                "assumed": False,
            }
        if not isinstance(block, dict):
            self.bad(field + ".uncertainty", "must be a table with stated and convention")
            return None, {}
        allowed = {"stated", "convention", "divisor", "source", "assumed"}
        for key in block.keys() - allowed:
            self.bad(f"{field}.uncertainty.{key}", "unknown key")
        stated, convention = block.get("stated"), block.get("convention", "standard")
        if not _finite(stated) or stated < 0:
            self.bad(field + ".uncertainty.stated", f"{stated!r} is not a finite number ≥ 0")
            return None, {}
        try:
            derived = standard_uncertainty(float(stated), str(convention))
        except FeasiblyError as exc:
            self.bad(field + ".uncertainty.convention", str(exc))
            return None, {}
        if u is not None:
            if not _finite(u) or u < 0:
                self.bad(field + ".u", f"{u!r} is not a finite number ≥ 0")
                return None, {}
            # The shipped file writes both; they must agree to rounding (1e-9 relative).
            if not math.isclose(float(u), derived, rel_tol=1e-9, abs_tol=1e-12):
                self.bad(
                    field + ".u",
                    f"{u} does not equal stated {stated} / divisor of "
                    f"{convention!r} = {derived:.6g}",
                )
        if "source" in block:
            self._check_source(field + ".uncertainty.source", block["source"])
        out = dict(block)
        out.setdefault("convention", "standard")
        out["divisor"] = float(stated) / derived if derived else 1.0
        out.setdefault("assumed", False)
        return derived, out

    def value_block(self, field: str, limit: float) -> SourcedValue | None:
        block = self.raw.get(field)
        if not isinstance(block, dict):
            self.bad(field, "must be a table with value, u (or uncertainty) and source")
            return None
        for key in block.keys() - _VALUE_KEYS:
            self.bad(f"{field}.{key}", "unknown key")
        value = block.get("value")
        if not _finite(value):
            self.bad(field + ".value", f"{excerpt(value)} is not a finite number")
            return None
        if abs(value) > limit:
            self.bad(field + ".value", f"{value!r} is outside ±{limit:g}, not a physical value")
            return None
        self._check_source(field + ".source", block.get("source"))
        u, unc = self._uncertainty_block(field, block.get("uncertainty"), block.get("u"))
        if u is None:
            return None
        replaced = block.get("replaced")
        if replaced is not None and not isinstance(replaced, dict):
            self.bad(field + ".replaced", "must be a table")
            replaced = None
        return SourcedValue(
            float(value),
            u,
            str(block.get("source", "")),
            str(block.get("entry", "")),
            MappingProxyType(unc),
            MappingProxyType(replaced) if replaced else None,
        )

    def cp_block(
        self, T_range: tuple[float, float] | None, aqueous: bool = False
    ) -> tuple[CpModel, float, dict] | None:
        block = self.raw.get("cp")
        if not isinstance(block, dict):
            self.bad("cp", "must be a table with model, its parameters and u_rel")
            return None
        model = block.get("model")
        if not isinstance(model, str) or model not in _CP_KEYS:
            self.bad("cp.model", f"{excerpt(model)} is not one of {', '.join(_CP_KEYS)}")
            return None
        for key in block.keys() - _CP_KEYS[model] - _CP_COMMON:
            self.bad(f"cp.{key}", f"unknown key for model {model}")
        for key in _CP_KEYS[model] - block.keys():
            self.bad(
                f"cp.{key}", f"missing (model {model} needs {', '.join(sorted(_CP_KEYS[model]))})"
            )
        u_rel, _ = self._uncertainty_block("cp", block.get("uncertainty"), block.get("u_rel"))
        self._check_source("cp.source", block.get("source"))
        if u_rel is not None and u_rel > _MAX_CP_U_REL:
            self.bad("cp.u_rel", f"{u_rel:g} is above {_MAX_CP_U_REL:g} (a relative uncertainty)")
        if not self.ok or u_rel is None:
            return None
        built = self._cp_model(block, model, T_range, aqueous)
        if built is None:
            return None
        if T_range is not None:
            # Cp over the whole range: finite and not absurd, so that the H and S integrals stay
            # finite (a Cp of 1e308 once turned into "not feasible, P = 0"). The sign is checked
            # per model above (a shipped NASA fit, NH4ClO4(cr,II), dips below 0 and is kept).
            grid = np.linspace(T_range[0], T_range[1], 64)
            with np.errstate(all="ignore"):
                cp_grid = np.asarray(built.cp(grid), dtype=float)
            if not np.all(np.isfinite(cp_grid)) or np.any(np.abs(cp_grid) > _MAX_CP):
                self.bad(
                    "cp",
                    f"Cp is not within ±{_MAX_CP:g} J/(mol·K) everywhere in T_range_K; check "
                    "the units (J/(mol·K)) and the coefficients",
                )
                return None
        info = {k: block[k] for k in ("model", "source", "entry") if k in block}
        if "uncertainty" in block:
            info["uncertainty"] = dict(block["uncertainty"])
        return built, u_rel, info

    def _cp_model(
        self,
        block: dict[str, Any],
        model: str,
        T_range: tuple[float, float] | None,
        aqueous: bool = False,
    ) -> CpModel | None:
        try:
            if model in ("nasa7", "nasa9"):
                n_coef = 7 if model == "nasa7" else 9
                breaks, coeffs = block["T_breaks_K"], block["coefficients"]
                if (
                    not isinstance(breaks, list)
                    or len(breaks) < 2
                    or not all(_finite(b) for b in breaks)
                    or any(b2 <= b1 for b1, b2 in itertools.pairwise(breaks))
                ):
                    self.bad("cp.T_breaks_K", "must be ≥ 2 ascending finite temperatures")
                    return None
                if (
                    not isinstance(coeffs, list)
                    or len(coeffs) != len(breaks) - 1
                    or not all(
                        isinstance(c, list) and len(c) == n_coef and all(map(_finite, c))
                        for c in coeffs
                    )
                ):
                    self.bad(
                        "cp.coefficients",
                        f"need {len(breaks) - 1} list(s) of {n_coef} finite numbers "
                        "(one per interval)",
                    )
                    return None
                if T_range is not None and (
                    not math.isclose(breaks[0], T_range[0], rel_tol=1e-9)
                    or not math.isclose(breaks[-1], T_range[1], rel_tol=1e-9)
                ):
                    self.bad(
                        "cp.T_breaks_K",
                        f"ends {breaks[0]}, {breaks[-1]} do not match T_range_K {list(T_range)}",
                    )
                    return None
                if model == "nasa9":
                    return Nasa9.from_lists(breaks, coeffs)
                return Nasa7.from_lists(breaks, coeffs)
            if model == "constant":
                value = block["cp_J_per_mol_K"]
                # An aqueous ion's standard partial molar Cp (H+ convention) may be zero or
                # negative; a pure phase's heat capacity never is.
                if not _finite(value) or (value <= 0 and not aqueous):
                    self.bad("cp.cp_J_per_mol_K", f"{value!r} is not a positive finite number")
                    return None
                return ConstantCp(float(value))
            a, b, c = block["a"], block["b"], block["c"]
            if not all(map(_finite, (a, b, c))):
                self.bad("cp", "a, b and c must be finite numbers")
                return None
            mk = MaierKelleyCp(float(a), float(b), float(c))
            if T_range is not None:
                grid = np.linspace(T_range[0], T_range[1], 64)
                if np.any(mk.cp(grid) <= 0):
                    self.bad("cp", "Cp = a + bT + c/T² is not positive over T_range_K")
                    return None
            return mk
        except (TypeError, ValueError, OverflowError) as exc:  # pragma: no cover - guarded above
            self.bad("cp", f"unusable parameters ({exc})")
            return None

    def read(self) -> Species | None:
        raw = self.raw
        if not isinstance(raw, dict):
            self.bad("(entry)", "must be a table of fields")
            return None
        for key in raw.keys() - _ENTRY_REQUIRED - _ENTRY_OPTIONAL:
            self.bad(key, "unknown key (check the spelling against data/SCHEMA.md)")
        for key in _ENTRY_REQUIRED - raw.keys():
            self.bad(key, "missing")
        if not self.ok:
            return None
        formula = raw["formula"]
        parsed = None
        if not isinstance(formula, str):
            self.bad("formula", "must be text")
        else:
            try:
                parsed = parse_formula(formula)
            except FeasiblyError as exc:
                self.bad("formula", str(exc))
        elements = raw.get("elements")
        if elements is not None:
            table = element_table()
            if not isinstance(elements, dict) or not elements:
                self.bad("elements", "must be a table of element symbol → count")
                elements = None
            else:
                for el, n in elements.items():
                    if el not in table:
                        self.bad("elements", f"{el!r} is not an element symbol")
                    elif not _finite(n) or n <= 0:
                        self.bad("elements", f"count of {el} must be a positive number")
        if parsed is not None and elements is not None and self.ok:
            if {k: float(v) for k, v in elements.items()} != dict(parsed.elements):
                self.bad(
                    "elements",
                    f"{dict(elements)} does not match formula {formula!r} "
                    f"({dict(parsed.elements)})",
                )
        charge = raw.get("charge", parsed.charge if parsed else 0)
        if not isinstance(charge, int) or isinstance(charge, bool):
            self.bad("charge", "must be an integer")
        elif abs(charge) > _MAX_CHARGE:
            self.bad("charge", f"must be between -{_MAX_CHARGE} and {_MAX_CHARGE}")
        elif parsed is not None and charge != parsed.charge:
            self.bad("charge", f"{charge} does not match formula {formula!r} ({parsed.charge})")
        phase = raw["phase"]
        if not isinstance(phase, str) or phase not in PHASES:
            self.bad("phase", f"{excerpt(phase)} is not one of {', '.join(PHASES)}")
        form = raw.get("form")
        if form is not None and (
            not isinstance(form, str) or not re.fullmatch(r"[A-Za-z0-9][\w\-]*", form)
        ):
            self.bad("form", "must be a short label such as 'calcite', 'alpha' or 'II'")
        T_range = raw["T_range_K"]
        rng: tuple[float, float] | None = None
        if (
            not isinstance(T_range, list)
            or len(T_range) != 2
            or not all(map(_finite, T_range))
            or T_range[0] <= 0
            or T_range[1] <= T_range[0]
            or T_range[1] > _MAX_T_K
        ):
            self.bad(
                "T_range_K",
                f"{excerpt(T_range)} is not [Tmin, Tmax] with 0 K < Tmin < Tmax ≤ {_MAX_T_K:g} K",
            )
        else:
            rng = (float(T_range[0]), float(T_range[1]))
        dHf = self.value_block("dHf_298", _MAX_ABS_DHF)
        S298 = self.value_block("S_298", _MAX_ABS_S)
        hypothetical = raw.get("hypothetical_298")
        if hypothetical is not None and not isinstance(hypothetical, bool):
            self.bad("hypothetical_298", f"{excerpt(hypothetical)} is not true or false")
            hypothetical = None
        if hypothetical is None and rng is not None:
            hypothetical = not (rng[0] <= T_REF <= rng[1])
        # A phase that does not exist at 298.15 K carries the source's extrapolated bookkeeping
        # constant there, which may be negative; a real third-law entropy never is.
        # An aqueous ion's S° is relative to S°(H+, aq) = 0 and may be negative.
        aqueous_ion = phase == "aq" and parsed is not None and parsed.charge != 0
        if S298 is not None and S298.value < 0 and not hypothetical and not aqueous_ion:
            self.bad("S_298.value", f"{S298.value} is negative; third-law entropies are ≥ 0")
        cp = self.cp_block(rng, aqueous=phase == "aq")
        ref = raw.get("reference_state_of")
        if ref is not None:
            if (
                not isinstance(ref, str)
                or parsed is None
                or ref not in parsed.elements
                or len(parsed.elements) != 1
            ):
                self.bad(
                    "reference_state_of",
                    f"{excerpt(ref)} is not the single element of {excerpt(formula)}",
                )
            elif dHf is not None and abs(dHf.value) > _REF_STATE_TOL:
                self.bad(
                    "dHf_298.value",
                    f"{dHf.value} J/mol, but this is the reference state of "
                    f"{ref}: ΔfH°(298.15 K) must be 0",
                )
        names = raw.get("names", [])
        if not isinstance(names, list) or not all(isinstance(n, str) for n in names):
            self.bad("names", "must be a list of text")
            names = []
        for n in names:
            if _CONTROL.search(n) or len(n) > _MAX_NAME_CHARS or not n.strip():
                self.bad(
                    "names",
                    f"{excerpt(n)} must be non-empty printable text of at most "
                    f"{_MAX_NAME_CHARS} characters (no control characters)",
                )
        cas = raw.get("cas")
        if cas is not None and (
            not isinstance(cas, str) or not re.fullmatch(r"\d{2,7}-\d\d-\d", cas)
        ):
            self.bad("cas", f"{cas!r} is not a CAS registry number like 124-38-9")
        notes = raw.get("notes", [])
        if not isinstance(notes, list) or not all(isinstance(n, str) for n in notes):
            self.bad("notes", "must be a list of text")
            notes = []
        if any(_CONTROL.search(n) for n in notes):
            self.bad("notes", "must be printable text (no control characters)")
        explicit_id = raw.get("id")
        if explicit_id is not None and (
            not isinstance(explicit_id, str) or not _ID.fullmatch(explicit_id)
        ):
            self.bad(
                "id",
                f"{excerpt(explicit_id)} is not an entry id: use the formula with its phase, "
                "e.g. CO2(g) or CaCO3(cr,calcite) (letters, digits and ()[],+-.*^ only)",
            )
        points = raw.get("phase_points")
        if points is not None:
            if not isinstance(points, dict) or set(points) != {"T_melt_K", "T_boil_K", "source"}:
                self.bad("phase_points", "must be a table of T_melt_K, T_boil_K and source")
            elif not isinstance(points["source"], str) or not all(
                points[k] is None or (_finite(points[k]) and points[k] > 0)
                for k in ("T_melt_K", "T_boil_K")
            ):
                self.bad("phase_points", "temperatures must be positive numbers or null")
        if (
            not self.ok
            or parsed is None
            or rng is None
            or dHf is None
            or S298 is None
            or cp is None
        ):
            return None
        entry_id = raw.get("id") or (
            f"{formula}({phase},{form})" if form else f"{formula}({phase})"
        )
        table = element_table()
        molar_mass = sum(table[el]["atomic_weight"] * n for el, n in parsed.elements.items())
        given_mass = raw.get("molar_mass_g_per_mol")
        # 1e-3 g/mol: atomic weights are given to ~1e-4 g/mol; more would be a different formula.
        if given_mass is not None and (
            not _finite(given_mass) or abs(given_mass - molar_mass) > 1e-3
        ):
            self.bad(
                "molar_mass_g_per_mol",
                f"{given_mass!r} differs from {molar_mass:.5f} computed from the formula",
            )
            return None
        model, u_rel, info = cp
        return Species(
            id=str(entry_id),
            formula=formula,
            elements=parsed.elements,
            charge=parsed.charge,
            phase=phase,
            form=form,
            names=tuple(names),
            cas=cas,
            molar_mass=float(molar_mass),
            T_range=rng,
            reference_state_of=ref,
            dHf=dHf,
            S298=S298,
            cp_model=model,
            cp_u_rel=u_rel,
            cp_source=MappingProxyType(info),
            hypothetical_298=bool(hypothetical),
            notes=tuple(notes),
            origin=self.origin,
            raw=MappingProxyType(raw),
        )


def _parse_document(text: str, name: str) -> Any:
    if len(text) > MAX_DATA_FILE_BYTES:
        raise DataFileError(
            name, [f"larger than {MAX_DATA_FILE_BYTES // 2**20} MiB; not a species file"]
        )
    too_deep = f"tables and lists nested more than {MAX_NESTING} deep; not a species file"
    try:
        if name.endswith(".toml"):
            try:
                doc = tomllib.loads(text)
            except tomllib.TOMLDecodeError as exc:
                raise DataFileError(name, [f"not valid TOML: {exc}"]) from None
        else:
            try:
                # NaN and Infinity are read so that the field check names the field they are in.
                doc = json.loads(text)
            except json.JSONDecodeError as exc:
                raise DataFileError(name, [f"not valid JSON: {exc}"]) from None
    except RecursionError:
        raise DataFileError(name, [too_deep]) from None
    if nesting_depth(doc) > MAX_NESTING:
        raise DataFileError(name, [too_deep])
    return doc


def _check_document(
    doc: Any, name: str, shipped: bool, problems: _Problems
) -> tuple[list[Any], dict | None, dict | None]:
    """Top-level checks of a species document; returns its entries, sources and policies."""
    if not isinstance(doc, dict):
        raise DataFileError(name, ["the file must hold a table at the top level"])
    for key in _TOP_REQUIRED - doc.keys():
        problems.add("file", key, "missing")
    for key in doc.keys() - _TOP_REQUIRED - _TOP_OPTIONAL:
        problems.add("file", key, "unknown key")
    if doc.get("schema", SCHEMA_MARK) != SCHEMA_MARK:
        problems.add("file", "schema", f"{doc.get('schema')!r} is not {SCHEMA_MARK!r}")
    if "schema_version" in doc and doc["schema_version"] != SCHEMA_VERSION:
        problems.add(
            "file",
            "schema_version",
            f"{doc['schema_version']!r} is not a version this feasibly reads ({SCHEMA_VERSION})",
        )
    species_raw = doc.get("species")
    if not isinstance(species_raw, list) or (not species_raw and "species" in doc):
        problems.add("file", "species", "must be a non-empty list of entries")
        species_raw = []
    if shipped:
        for key in ("library_version", "content_sha256", "sources", "uncertainty_policy"):
            if key not in doc:
                problems.add("file", key, "missing (required in a shipped library)")
    if "content_sha256" in doc and isinstance(species_raw, list):
        actual = canonical_hash(species_raw)
        if doc["content_sha256"] != actual:
            problems.add(
                "file",
                "content_sha256",
                f"{doc['content_sha256']} does not match the "
                f"content ({actual}); the species data was changed after it was hashed",
            )
    pressure = doc.get("standard_pressure_Pa", _STANDARD_PRESSURE_PA)
    if pressure != _STANDARD_PRESSURE_PA:
        problems.add(
            "file",
            "standard_pressure_Pa",
            f"{pressure!r}: feasibly's data are on the "
            "1 bar standard state (100000 Pa); convert the entropies of gases first",
        )
    sources = doc.get("sources")
    policies = doc.get("uncertainty_policy")
    return (
        species_raw,
        sources if isinstance(sources, dict) else None,
        policies if isinstance(policies, dict) else None,
    )


def _meta(doc: dict) -> dict:
    return {
        k: doc[k]
        for k in ("library_version", "content_sha256", "sources", "uncertainty_policy")
        if k in doc
    }


def _entry_label(raw: Any) -> str:
    """How an entry is named in a message: its id or formula, quoted at most 40 characters."""
    label = (raw.get("id") or raw.get("formula")) if isinstance(raw, dict) else None
    return excerpt(label, 40)[1:-1] if isinstance(label, str) else excerpt(label, 40)


def _read_species(doc: Any, name: str, origin: str, shipped: bool) -> tuple[list[Species], dict]:
    problems = _Problems()
    species_raw, sources, policies = _check_document(doc, name, shipped, problems)
    out: list[Species] = []
    seen: dict[str, int] = {}
    for i, raw in enumerate(species_raw):
        where = f"entry {i} ({_entry_label(raw)})"
        reader = _EntryReader(raw, where, problems, sources, policies, origin)
        sp = reader.read()
        if sp is None:
            continue
        if sp.id in seen:
            problems.add(f"entry {i} ({sp.id})", "id", f"duplicate of entry {seen[sp.id]}")
            continue
        seen[sp.id] = i
        out.append(sp)
    if problems.items:
        raise DataFileError(name, problems.items)
    return out, _meta(doc)


class PendingEntry:
    """An entry of a hash-checked document, validated and built into a Species on first use.

    Carries what look-up needs (id, formula, names, CAS), so a call that uses four species
    builds four. The raw entry is either given or parsed from its span of the file's text (the
    prebuilt index). A problem in the entry raises the same
    :class:`~feasibly.errors.DataFileError` (entry and field named) as reading it eagerly.
    """

    def __init__(
        self,
        index: int,
        context: tuple[str, str, dict | None, dict | None],
        raw: dict | None = None,
        *,
        fields: tuple[str, str, tuple[str, ...], str | None] | None = None,
        span: tuple[str, int, int] | None = None,
    ) -> None:
        self.index = index
        self._context = context
        self._raw = raw
        self._span = span
        if fields is None:
            fields = lookup_fields(raw or {})
        self.id, self.formula, self.names, self.cas = fields
        self.origin = context[1]  # where the entry came from, as a built Species would say
        self._built: Species | None = None

    @property
    def raw(self) -> dict:
        """The entry as written in the file."""
        if self._raw is None:
            assert self._span is not None  # one of raw and span is always given
            text, start, end = self._span
            self._raw = json.loads(text[start:end])
        return self._raw

    def build(self) -> Species:
        """The validated Species (built once, shared by every library holding this entry)."""
        if self._built is None:
            name, origin, sources, policies = self._context
            problems = _Problems()
            raw = self.raw
            where = f"entry {self.index} ({_entry_label(raw)})"
            sp = _EntryReader(raw, where, problems, sources, policies, origin).read()
            if problems.items or sp is None:
                raise DataFileError(name, problems.items or [f"{where}: could not be read"])
            self._built = sp
        return self._built


def _from_index(index: dict, text: str, name: str, origin: str) -> tuple[list[PendingEntry], dict]:
    """Pending entries from a prebuilt index whose byte hash matched the file (see _index.py)."""
    meta = dict(index["meta"])
    sources, policies = meta.get("sources"), meta.get("uncertainty_policy")
    context = (
        name,
        origin,
        sources if isinstance(sources, dict) else None,
        policies if isinstance(policies, dict) else None,
    )
    out = [
        PendingEntry(
            i,
            context,
            fields=(entry_id, formula, tuple(names), cas),
            span=(text, start, end),
        )
        for i, (entry_id, formula, names, cas, start, end) in enumerate(index["entries"])
    ]
    return out, meta


def _index_species(
    doc: Any, name: str, origin: str, shipped: bool
) -> tuple[list[PendingEntry], dict]:
    """Top-level checks and the content hash now; each entry is checked when first used."""
    problems = _Problems()
    species_raw, sources, policies = _check_document(doc, name, shipped, problems)
    out: list[PendingEntry] = []
    seen: dict[str, int] = {}
    context = (name, origin, sources, policies)
    for i, raw in enumerate(species_raw):
        if not isinstance(raw, dict):
            problems.add(f"entry {i} (None)", "(entry)", "must be a table of fields")
            continue
        entry = PendingEntry(i, context, raw)
        if entry.id in seen:
            problems.add(f"entry {i} ({entry.id})", "id", f"duplicate of entry {seen[entry.id]}")
            continue
        seen[entry.id] = i
        out.append(entry)
    if problems.items:
        raise DataFileError(name, problems.items)
    return out, _meta(doc)

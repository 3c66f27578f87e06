"""The data build's curation tables (data/build_species_library/tables/*.toml) and its layout.

The full rebuild needs the source packages and the pinned cea sdist and is run by hand (see
DEVELOPERS.md); these tests need none of them. They read the tables through the build's own
readers and check them against their documented shapes, against each other, and against the
committed species-library.json, hazard-flags.csv and data/README.md, so that a table edited
without a rebuild, or a typing slip in a table, fails here.
"""

from __future__ import annotations

import ast
import csv
import json
import re
import shutil
import sys
from collections import Counter
from collections.abc import Iterator
from functools import cache
from pathlib import Path
from types import ModuleType

import pytest

DATA = Path(__file__).resolve().parents[1] / "data"
BUILD = DATA / "build_species_library"

# Policy ids the build's code applies (entries.py, crc.py, atct.py, reference_states.py,
# transitions.py) plus the stated-uncertainty description atct-95.
POLICY_IDS = {
    "nasa-gas-dHf",
    "nasa-ion-dHf",
    "condensed-dHf",
    "hypothetical-dHf",
    "transition-dHf",
    "crc-dHf",
    "disputed-dHf",
    "disputed-dHf-compilations",
    "disputed-S-compilations",
    "reference-state",
    "gas-S",
    "condensed-S",
    "hypothetical-S",
    "transition-S",
    "crc-S",
    "cp-gas-poly",
    "cp-condensed-poly",
    "cp-crc-constant",
    "atct-95",
}
# Policies whose values the calibration (calibration.py) re-sets from the measured spread
# between compilations; they are never written to the library.
PROVISIONAL_IDS = {
    "nasa-gas-dHf",
    "nasa-ion-dHf",
    "condensed-dHf",
    "crc-dHf",
    "gas-S",
    "condensed-S",
    "crc-S",
    "cp-gas-poly",
    "cp-condensed-poly",
    "cp-crc-constant",
}
# Policies the calibration writes (texts with the measured numbers).
CALIBRATED_IDS = {
    "cal-gas-dHf-cas",
    "cal-gas-dHf-nocas",
    "cal-ion-dHf",
    "cal-condensed-dHf",
    "cal-gas-S-cas",
    "cal-gas-S-nocas",
    "cal-condensed-S",
    "cal-cp-gas",
    "cal-cp-condensed",
    "cal-cp-constant",
    "cal-gas-dHf-cas-corroborated",
    "cal-condensed-dHf-corroborated",
    "cal-gas-S-cas-corroborated",
    "cal-condensed-S-corroborated",
    "cal-cp-gas-compared",
    "cal-cp-condensed-compared",
    "source-disagreement",
}
# Policies the aqueous step writes (aqueous.py: the table's closure, the H+ convention, the
# constant-Cp factor over 0-100 degC).
AQUEOUS_IDS = {"aq-closure", "h-plus-convention", "cp-aq-constant", "aq-25C-only"}
ID = re.compile(r"^(?P<formula>.+)\((?P<phase>g|l|cr)(,(?P<form>[^()]+))?\)$")


@pytest.fixture(scope="module")
def tables() -> Iterator[ModuleType]:
    sys.path.insert(0, str(DATA))
    try:
        from build_species_library import tables as module
    finally:
        sys.path.remove(str(DATA))
    yield module


@cache
def shipped() -> dict:
    return json.loads((DATA / "species-library.json").read_text("utf-8"))


def shipped_ids() -> set[str]:
    return {e["id"] for e in shipped()["species"]}


def make_id(formula: str, phase: str, form: str | None) -> str:
    return f"{formula}({phase})" if not form else f"{formula}({phase},{form})"


def cas_ok(cas: str) -> bool:
    """CAS registry number with a valid check digit (CAS rule: weighted digit sum mod 10)."""
    m = re.fullmatch(r"(\d{2,7})-(\d\d)-(\d)", cas)
    if not m:
        return False
    digits = (m.group(1) + m.group(2))[::-1]
    return sum((i + 1) * int(d) for i, d in enumerate(digits)) % 10 == int(m.group(3))


def test_cas_check_digit_rule_itself() -> None:
    # Water 7732-18-5 and carbon dioxide 124-38-9 (CAS numbers from memory); one digit off fails.
    assert cas_ok("7732-18-5") and cas_ok("124-38-9")
    assert not cas_ok("7732-18-4") and not cas_ok("7732185")


def test_every_table_file_says_what_it_is_and_who_reads_it(tables: ModuleType) -> None:
    files = sorted((BUILD / "tables").glob("*"))
    assert [f.suffix for f in files] == [".toml"] * len(files) and len(files) >= 10
    for f in files:
        head = f.read_text("utf-8").splitlines()[:4]
        assert head[0].startswith("# "), f.name
        comment = " ".join(line.removeprefix("#").strip() for line in head if line.startswith("#"))
        assert "Read by build_species_library/tables.py" in comment, f.name
        tables.read(f.name)  # parses as TOML


def test_nasa_gas_rows(tables: ModuleType) -> None:
    rows = tables.nasa_gas()
    assert len(rows) > 150
    for name, r in rows.items():
        assert r.formula and " " not in r.formula, name
        assert all(n == n.strip() and n for n in r.names), name
        # every curated gas is in the shipped library under the curated formula
        assert f"{r.formula}(g)" in shipped_ids(), name
    formulas = Counter(r.formula for r in rows.values())
    assert formulas.most_common(1)[0][1] == 1, "two NASA gases would get the same id"
    # README's isomer rule: the most common isomer keeps the plain formula.
    plain = {
        "C3H6,propylene": "C3H6",
        "C4H10,n-butane": "C4H10",
        "C8H18,n-octane": "C8H18",
        "C4H8,1-butene": "C4H8",
        "C3H6,cyclo-": "c-C3H6",
        "C3H4,allene": "CH2CCH2",
    }
    assert {k: rows[k].formula for k in plain} == plain


def test_nasa_condensed_rows_and_labels(tables: ModuleType) -> None:
    rows = tables.nasa_condensed()
    labels = tables.nasa_phase_labels()
    condensed = {e["formula"] for e in shipped()["species"] if e["phase"] != "g"}
    for base, r in rows.items():
        assert r.formula in condensed, base
        assert set(r.names_by_phase) <= {"cr", "l"}, base
        assert set(r.form_by_label) <= set(labels), base
    assert rows["H2O"].names_by_phase == {"cr": ("ice",)}
    assert rows["CaCO3"].form_by_label == {"cr": "calcite"}
    assert {lab.phase for lab in labels.values()} == {"cr", "l"}
    # The mapping data/README.md documents.
    readme = {
        "a": "alpha",
        "b": "beta",
        "c": "gamma",
        "d": "delta",
        "I": "I",
        "II": "II",
        "III": "III",
        "gr": "graphite",
        "caL": "calcite",
        "Lqz": "alpha-quartz",
        "hqz": "beta-quartz",
        "ru": "rutile",
        "cr1": "orthorhombic",
        "cr2": "monoclinic",
        "a-qz": "alpha-quartz",
        "b-qz": "beta-quartz",
        "b-crt": "beta-cristobalite",
    }
    assert {k: labels[k].form for k in readme} == readme
    assert labels["L"] == ("l", None) and labels["cr"] == ("cr", None)


def test_nasa_exceptions(tables: ModuleType) -> None:
    ex = tables.nasa_exceptions()
    assert "e-" in ex.skip and all(ex.skip.values())
    assert dict(ex.charge) == {}
    unmapped = json.loads((DATA / "source-gaps.json").read_text("utf-8"))["unmapped"]
    for name, why in ex.skip.items():
        assert f"NASA {name}: {why}" in unmapped


def test_crc_formulas_and_dispositions(tables: ModuleType) -> None:
    formulas = tables.crc_formulas()
    assert all(cas_ok(c) for c in formulas), [c for c in formulas if not cas_ok(c)]
    ids = shipped_ids()
    built = {e["cas"]: e for e in shipped()["species"] if e["cp"]["source"] == "crc-298"}
    for cas, f in formulas.items():
        if cas in built:
            assert built[cas]["formula"] == f.formula, cas
    gaps = json.loads((DATA / "source-gaps.json").read_text("utf-8"))
    for (sid, q, comp), d in tables.dispositions().items():
        assert sid in ids, sid
        assert q in ("dHf_298", "S_298") and len(d.reason) > 20
        assert any(
            x["id"] == sid and x["quantity"] == q and x["compilation"].split(" ")[0] == comp
            for x in gaps["crosschecks"]["excused"]
        ), (sid, q, comp)
    assert gaps["crosschecks"]["unused_dispositions"] == []


def test_crc_picks(tables: ModuleType) -> None:
    picks = tables.crc_picks()
    cas = [p.cas for p in picks]
    assert len(set(cas)) == len(cas)
    assert all(cas_ok(c) for c in cas), [c for c in cas if not cas_ok(c)]
    from_crc = {e["id"]: e for e in shipped()["species"] if e["cp"]["source"] == "crc-298"}
    other_solids = {
        e["formula"]
        for e in shipped()["species"]
        if e["phase"] == "cr" and e["cp"]["source"] != "crc-298"
    }
    built = 0
    for p in picks:
        if p.skip:
            assert p.formula is None
            continue
        sid = make_id(p.formula, "cr", p.form)
        if sid in from_crc:
            assert from_crc[sid]["cas"] == p.cas and from_crc[sid]["cp"]["model"] == "constant"
            built += 1
        else:
            # left out only because another source already has a solid of that formula
            assert p.formula in other_solids, sid
    # the other CRC entries come from crc_auto.py (every complete row), not from the picks
    pick_ids = {make_id(p.formula, "cr", p.form) for p in picks if not p.skip}
    assert built == len([i for i in from_crc if i in pick_ids])


def test_policies_are_the_ones_the_build_applies(tables: ModuleType) -> None:
    pol = tables.policies()
    assert set(pol) == POLICY_IDS
    for pid, p in pol.items():
        assert p.text.endswith((".", ")")) and "  " not in p.text and "\\" not in p.text, pid
        if pid.startswith("cp-"):
            assert p.u_rel is not None and 0 < p.u_rel < 1, pid
    assert (pol["condensed-S"].u_base, pol["condensed-S"].u_fraction) == (0.3, 0.005)
    assert (pol["transition-dHf"].u_base, pol["transition-dHf"].u_fraction) == (200.0, 0.05)
    assert pol["reference-state"].u == 0.0 and pol["transition-S"].u == 0.0
    assert pol["cp-crc-constant"].T_range_K == (250.0, 500.0)
    assert pol["disputed-dHf"].gap_threshold_J_per_mol == 20000.0
    # The texts are what the committed library carries, word for word, for the policies it
    # uses; the provisional class policies are re-set by the calibration (cal-* ids, texts
    # written by calibration.py with the measured numbers and a pointer to the CSV).
    block = shipped()["uncertainty_policy"]
    assert list(block) == sorted(block)
    for pid, text in block.items():
        if pid in pol:
            assert text == pol[pid].text, pid
        elif pid in AQUEOUS_IDS:
            assert "aqueous" in text.lower() or "H+(aq)" in text, pid
        else:
            assert pid in CALIBRATED_IDS, pid
            assert "uncertainty-calibration.csv" in text or "sources disagree" in text, pid
    assert PROVISIONAL_IDS.isdisjoint(block)
    assert CALIBRATED_IDS <= set(block)


def test_sources_text_matches_the_committed_sources_block(tables: ModuleType) -> None:
    text = tables.sources_text()
    block = shipped()["sources"]
    assert list(text) == list(block)
    for sid, fields in text.items():
        assert list(fields) == list(block[sid]) == list(tables.SOURCE_KEYS)
        for key, template in fields.items():
            parts = re.split(r"\{(?:version|licence):[a-z]+\}", template)
            pattern = "(.+?)".join(re.escape(p) for p in parts)
            assert re.fullmatch(pattern, block[sid][key]), (sid, key)


def test_hazard_lists(tables: ModuleType) -> None:
    hz = tables.hazards()
    assert hz.toxic_ppm > 0 and hz.toxic_mg_m3 > 0
    curated = {**hz.toxic, **hz.flammable, **hz.oxidiser}
    for sid in curated:
        assert ID.match(sid) and sid in shipped_ids(), sid
    with open(DATA / "hazard-flags.csv", encoding="utf-8", newline="") as f:
        rows = list(csv.DictReader(f))
    curated_rows = [r for r in rows if r["basis"].startswith("curated: ")]
    assert curated_rows and all(r["source"] == hz.curated_source for r in curated_rows)
    reasons = set(curated.values())
    assert {r["basis"][len("curated: ") :] for r in curated_rows} <= reasons


def test_janaf_rules(tables: ModuleType) -> None:
    rules = tables.janaf()
    assert len(rules.one_bar_check) >= 5
    for sid, idx in rules.one_bar_check.items():
        assert sid.endswith("(g)") and sid in shipped_ids(), sid
        assert re.fullmatch(r"[A-Z][a-z]?-\d{3}", idx), idx
    gaps = json.loads((DATA / "source-gaps.json").read_text("utf-8"))
    assert list(gaps["one_bar_check"]) == list(rules.one_bar_check)
    # every form word belongs to a form some table gives
    forms = {lab.form for lab in tables.nasa_phase_labels().values()}
    forms |= {p.form for p in tables.crc_picks()}
    forms |= {f for r in tables.nasa_condensed().values() for f in r.form_by_label.values()}
    assert set(rules.form_words) <= forms


def test_library_version_is_the_committed_one(tables: ModuleType) -> None:
    assert tables.library_version() == shipped()["library_version"]


# --- the readers refuse malformed tables --------------------------------------------------------


@pytest.mark.parametrize(
    ("name", "old", "new", "message"),
    [
        ("nasa_gas.toml", '"CH4" = { formula = "CH4", ', '"CH4" = { ', "key 'formula' missing"),
        ("nasa_gas.toml", 'names = ["methane"] }', 'names = ["methane"], cas = "x" }', "unknown"),
        ("nasa_gas.toml", 'names = ["methane"] }', 'names = "methane" }', "list of non-empty"),
        ("nasa_gas.toml", '"CH4" = {', '"CO" = { formula = "CO", names = []}\n"CH4" = {', "TOML"),
        ("nasa_phase_labels.toml", '"s" = { phase = "cr" }', '"s" = { phase = "g" }', "gas"),
        ("nasa_phase_labels.toml", '"s" = { phase = "cr" }', '"s" = { phase = "solid" }', "phase"),
        ("crc.toml", 'crc_name = "Zinc oxide"', 'name = "Zinc oxide"', "key 'crc_name' missing"),
        ("policies.toml", "u = 4000.0", 'u = "4000"', "'u' must be"),
        ("policies.toml", "u_fraction = 0.005\n", "", "go together"),
        ("policies.toml", "u = 2.0", "u = -2.0", "negative"),
        ("policies.toml", "T_range_K = [250.0, 500.0]", "T_range_K = [500.0, 250.0]", "low < high"),
        ("sources.toml", "{version:cantera}", "{version:pandas}", "unknown package"),
        ("sources.toml", 'note = "uncertainties', 'extra = "x"\nnote = "uncertainties', "unknown"),
        ("hazards.toml", "toxic_ppm = 50.0\n", "", "toxic_ppm"),
        ("hazards.toml", '    "O3(g)",\n', '    "O3(g)",\n    "O3(g)",\n', "twice"),
        ("nasa_exceptions.toml", "[charge]\n", '[charge]\n"Zn+" = 0\n', "fixes nothing"),
        ("crc_formulas.toml", '"64-18-6" = {', '"64-18-X" = {', "not a CAS number"),
        ("dispositions.toml", 'chosen = "atct-1.112"', "", "key 'chosen' missing"),
    ],
)
def test_a_malformed_table_stops_the_build(
    tables: ModuleType, tmp_path: Path, name: str, old: str, new: str, message: str
) -> None:
    folder = tmp_path / "tables"
    shutil.copytree(BUILD / "tables", folder)
    text = (folder / name).read_text("utf-8")
    assert old in text, "the test's edit no longer applies"
    (folder / name).write_text(text.replace(old, new, 1), "utf-8")
    reader = {
        "nasa_gas.toml": tables.nasa_gas,
        "nasa_phase_labels.toml": tables.nasa_phase_labels,
        "crc.toml": tables.crc_picks,
        "policies.toml": tables.policies,
        "sources.toml": tables.sources_text,
        "hazards.toml": tables.hazards,
        "nasa_exceptions.toml": tables.nasa_exceptions,
        "crc_formulas.toml": tables.crc_formulas,
        "dispositions.toml": tables.dispositions,
    }[name]
    reader(BUILD / "tables")  # the committed table reads
    with pytest.raises(tables.SourceError, match=re.escape(message)) as err:
        reader(folder)
    assert name in str(err.value)


# --- the folder's layout --------------------------------------------------------------------------


def test_modules_import_only_modules_listed_before_them() -> None:
    tree = ast.parse((BUILD / "__init__.py").read_text("utf-8"))
    # MODULES is a literal tuple in __init__.py; read it without importing the package.
    modules = next(
        ast.literal_eval(node.value)
        for node in tree.body
        if isinstance(node, ast.Assign) and getattr(node.targets[0], "id", "") == "MODULES"
    )
    files = {p.stem for p in BUILD.glob("*.py")} - {"__init__", "__main__"}
    assert set(modules) == files and len(modules) == len(set(modules))
    for pos, mod in enumerate(modules):
        text = (BUILD / f"{mod}.py").read_text("utf-8")
        assert len(text.splitlines()) <= 400, mod
        for node in ast.walk(ast.parse(text)):
            if isinstance(node, ast.ImportFrom) and node.level == 1:
                names = [node.module] if node.module else [a.name for a in node.names]
                for dep in names:
                    assert dep in modules[:pos], f"{mod} imports {dep}, not listed above it"
            elif isinstance(node, ast.ImportFrom | ast.Import) and mod != "_kernel":
                targets = [node.module or ""] if isinstance(node, ast.ImportFrom) else []
                targets += [a.name for a in node.names] if isinstance(node, ast.Import) else []
                assert not any(t.split(".")[0] == "feasibly" for t in targets), (
                    f"{mod} imports feasibly; only _kernel may"
                )


def test_no_shipped_name_carries_another_formula() -> None:
    """The identifier database files "titanium oxide (Ti3O5)" under TiO's composition; a name (and
    its CAS number) like that would lead a query in braces for Ti3O5 to TiO. No shipped name may
    carry, in parentheses, a formula of other proportions than its entry's."""
    import re

    from feasibly.library import parse_formula

    pattern = re.compile(r"\(([A-Z][a-z]?\d*(?:[A-Z][a-z]?\d*)+)\)")
    bad = []
    for e in shipped()["species"]:
        for name in e["names"]:
            for token in pattern.findall(name):
                if set(token) <= set("IVX"):
                    continue  # an oxidation state, not a formula
                comp = {k: float(v) for k, v in parse_formula(token).elements.items()}
                own = {k: float(v) for k, v in e["elements"].items()}
                ratios = [comp[k] / own[k] for k in comp if k in own]
                if set(comp) != set(own) or max(ratios) - min(ratios) > 1e-9:
                    bad.append((e["id"], name))
    assert not bad, bad

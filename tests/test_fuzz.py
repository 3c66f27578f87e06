"""Generated careless and hostile input (issue 17): equations, unit strings, species files,
records, widget traits and command lines.

Each generated input must end in a result or a :class:`feasibly.FeasiblyError` (the command line:
exit 0, 1 or 2, never 3, never a traceback), within a per-input wall-clock bound that catches a
hang or a super-linear blow-up (a hang detector, not a timing assertion). ``tests/fuzz_campaign.py``
runs the same checks over ten thousand and more inputs and prints tried/passed counts per class.
"""

from __future__ import annotations

import contextlib
import copy
import io
import json
import math
import signal
from collections.abc import Callable, Iterator
from functools import cache
from typing import Any

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

import feasibly
from feasibly.errors import FeasiblyError

pytestmark = pytest.mark.slow

#: Per-input bound: every check here finishes in well under a second when it is linear; 20 s
#: can only be reached by a hang or a blow-up (the issue's worst cases took 15 s and 53 s).
PER_INPUT_SECONDS = 20.0
#: Examples per class in the suite run by bin/check (the campaign runs many more).
SUITE_EXAMPLES = 60


class Hang(BaseException):
    """An input still running after :data:`PER_INPUT_SECONDS` (BaseException, so no handler in
    the product can swallow it)."""


@contextlib.contextmanager
def bounded(seconds: float = PER_INPUT_SECONDS) -> Iterator[None]:
    def on_alarm(signum: int, frame: Any) -> None:
        raise Hang(f"still running after {seconds} s")

    old = signal.signal(signal.SIGALRM, on_alarm)
    signal.setitimer(signal.ITIMER_REAL, seconds)
    try:
        yield
    finally:
        signal.setitimer(signal.ITIMER_REAL, 0)
        signal.signal(signal.SIGALRM, old)


def only_project_errors(fn: Callable[[], Any]) -> str:
    """Run ``fn``; return 'ok' or 'refused'. Anything else (a non-project exception, a hang)
    propagates and fails the check."""
    with bounded():
        try:
            fn()
        except FeasiblyError as exc:
            # A short message quoting a bounded excerpt, never the whole input.
            assert len(str(exc)) < 8000, len(str(exc))
            return "refused"
    return "ok"


# --- strategies -----------------------------------------------------------------------------------
_NASTY = [
    "\x1b]52;c;ZXZpbA==\x07",
    "\x1b[2J",
    "\x9b",
    "\u202e",
    "<script>",
    "'",
    '"',
    "\\",
    "\x00",
    "¹³",
    "₂",
    "→",
    "⇌",
    "±",
    "°C",
    "℃",
    "1e309",
    "1e-324",
    "nan",
    "inf",
    "9" * 40,
    " " * 300,
]
_EQ_TOKENS = [
    "H2",
    "O2",
    "H2O",
    "CO2",
    "CO",
    "CH4",
    "MgCO3",
    "MgO",
    "CaCO3",
    "CaO",
    "Fe",
    "Fe3O4",
    "NaCl",
    "water",
    "(g)",
    "(l)",
    "(s)",
    "(cr)",
    "(aq)",
    "(cr,calcite)",
    "(",
    ")",
    "[",
    "]",
    "+",
    "-",
    "->",
    "=",
    "<=>",
    " ",
    "  ",
    "1/2",
    "2",
    "13",
    "0",
    "0.5",
    ".",
    "/",
    "*",
    "·",
    "^",
    "e",
    "Xx",
    "Q",
    "13CO2",
    "H2+",
    "SO4-2",
    "Fe+3",
    "n-",
    "1/0",
    *_NASTY,
]
_UNIT_TOKENS = [
    "K",
    "degC",
    "°C",
    "C",
    "F",
    "kelvin",
    "bar",
    "Pa",
    "kPa",
    "atm",
    "J/mol",
    "kJ/mol",
    "kcal/mol",
    "m",
    "s",
    "mol",
    "/",
    "*",
    "^",
    "**",
    "(",
    ")",
    "[",
    "]",
    ",",
    " ",
    "1",
    "0",
    "-",
    "+",
    ".",
    "e",
    "E",
    "%",
    "delta_degC",
    "K K",
    "1/0",
    *_NASTY,
]


def _joined(tokens: list[str], max_size: int) -> st.SearchStrategy[str]:
    return st.lists(st.sampled_from(tokens), max_size=max_size).map("".join)


_VALID_EQUATIONS = [
    "MgCO3 -> MgO + CO2",
    "2 H2 + O2 -> 2 H2O",
    "CaCO3(cr) -> CaO(cr) + CO2(g)",
    "CH4 + H2O -> CO + 3 H2",
    "N2 + 3 H2 -> 2 NH3",
    "C + O2 = CO2",
    "1/2 N2 + 3/2 H2 <=> NH3",
]
# Well-formed equations with a few hostile tokens spliced in at random places.
_spliced = st.builds(
    lambda eq, at, tok: eq[:at] + tok + eq[at:],
    st.sampled_from(_VALID_EQUATIONS),
    st.integers(0, 30),
    st.sampled_from(["", "", "", *_EQ_TOKENS]),
)
equations = st.one_of(
    _spliced,
    _joined(_EQ_TOKENS, 40),
    st.text(max_size=120),
    st.builds(lambda a, b: a + " -> " + b, _joined(_EQ_TOKENS, 12), _joined(_EQ_TOKENS, 12)),
    st.builds(lambda n, k: "H2+" + "1" * n + "x -> H2", st.integers(0, 5000), st.just(0)),
)
_numbers = st.one_of(
    st.floats(allow_nan=True, allow_infinity=True),
    st.integers(-(10**30), 10**30),
    st.sampled_from(["1", "-1", "1e999", "nan", "0", "5e-324", "800", "1.5.2", ""]),
)
quantities: st.SearchStrategy[Any] = st.one_of(
    st.builds(
        lambda x, u, sep: f"{x}{sep}{u}",
        st.floats(-1e4, 1e5),
        st.sampled_from(["K", "degC", "°C", "C", "bar", "kPa", "atm", "Pa", "kJ/mol", "J/mol"]),
        st.sampled_from(["", " ", "  "]),
    ),
    st.builds(lambda n, u: f"{n} {u}", _numbers, _joined(_UNIT_TOKENS, 6)),
    _joined(_UNIT_TOKENS, 20),
    st.text(max_size=60),
    st.tuples(
        st.one_of(_numbers, st.lists(_numbers, max_size=4), st.text(max_size=5), st.none()),
        st.one_of(_joined(_UNIT_TOKENS, 5), st.none(), st.integers()),
    ),
    _numbers,
    st.none(),
)
json_values = st.recursive(
    st.one_of(
        st.none(),
        st.booleans(),
        st.floats(allow_nan=True, allow_infinity=True),
        st.integers(-(10**20), 10**20),
        st.text(max_size=20),
        st.sampled_from([*_NASTY, "cr", "g", "nasa7", "constant", "CO2(g)", "no", "true"]),
    ),
    lambda children: st.one_of(
        st.lists(children, max_size=4), st.dictionaries(st.text(max_size=8), children, max_size=4)
    ),
    max_leaves=12,
)


def _good_entry() -> dict[str, Any]:
    return {
        "formula": "CH4",
        "phase": "g",
        "form": "fz",
        "T_range_K": [300.0, 600.0],
        "dHf_298": {"value": -74600.0, "u": 300.0, "source": "notebook"},
        "S_298": {"value": 186.3, "u": 0.5, "source": "notebook"},
        "cp": {"model": "constant", "cp_J_per_mol_K": 35.7, "u_rel": 0.05, "source": "estimate"},
    }


_ENTRY_PATHS = [
    ("formula",),
    ("phase",),
    ("form",),
    ("id",),
    ("names",),
    ("notes",),
    ("charge",),
    ("hypothetical_298",),
    ("T_range_K",),
    ("T_range_K", 0),
    ("T_range_K", 1),
    ("dHf_298",),
    ("dHf_298", "value"),
    ("dHf_298", "u"),
    ("dHf_298", "source"),
    ("dHf_298", "uncertainty"),
    ("S_298", "value"),
    ("S_298", "u"),
    ("cp",),
    ("cp", "model"),
    ("cp", "cp_J_per_mol_K"),
    ("cp", "u_rel"),
    ("cas",),
    ("elements",),
    ("reference_state_of",),
]


def _set_path(doc: Any, path: tuple[Any, ...], value: Any) -> None:
    node = doc
    for key in path[:-1]:
        node = node[key]
    node[path[-1]] = value


species_texts = st.one_of(
    st.builds(
        lambda h, s, cp, t: json.dumps(
            {
                "schema": "feasibly-species",
                "schema_version": 1,
                "species": [
                    _edited(
                        _good_entry(),
                        [
                            (("dHf_298", "value"), h),
                            (("S_298", "value"), s),
                            (("cp", "cp_J_per_mol_K"), cp),
                            (("T_range_K",), t),
                        ],
                    )
                ],
            }
        ),
        st.floats(-2e6, 2e6),
        st.floats(0, 1000),
        st.floats(0.1, 2e4),
        st.lists(st.floats(1, 8000), min_size=2, max_size=2).map(sorted),
    ),
    st.builds(
        lambda edits: json.dumps(
            {
                "schema": "feasibly-species",
                "schema_version": 1,
                "species": [_edited(_good_entry(), edits)],
            }
        ),
        st.lists(st.tuples(st.sampled_from(_ENTRY_PATHS), json_values), min_size=1, max_size=4),
    ),
    json_values.map(json.dumps),
    st.text(max_size=200),
    st.integers(1, 3000).map(lambda n: "[" * n + "]" * n),
)
species_names = st.sampled_from(["f.json", "f.toml"])


def _edited(entry: dict[str, Any], edits: list[tuple[tuple[Any, ...], Any]]) -> dict[str, Any]:
    for path, value in edits:
        with contextlib.suppress(KeyError, TypeError, IndexError):
            _set_path(entry, path, value)
    return entry


# --- checks (each returns 'ok' or 'refused'; anything else fails) ---------------------------------
def check_equation(text: str) -> str:
    def run() -> None:
        feasibly.Reaction.parse(text)
        result = feasibly.assess(text, T="800 K")
        assert all(math.isfinite(x) for x in result.standard.dG)

    return only_project_errors(run)


def check_quantity(value: Any) -> str:
    from feasibly.units import to_energy_per_mol, to_kelvin, to_pascal

    outcomes = [
        only_project_errors(lambda: to_kelvin(value)),
        only_project_errors(lambda: to_pascal(value)),
        only_project_errors(lambda: to_energy_per_mol(value)),
    ]
    for fn in (to_kelvin, to_pascal, to_energy_per_mol):
        with contextlib.suppress(FeasiblyError):
            out = fn(value)
            assert all(math.isfinite(x) for x in out.ravel()), out  # never a non-finite number
    return "ok" if "ok" in outcomes else "refused"


def check_species_file(text: str, name: str) -> str:
    def run() -> None:
        lib = feasibly.Library.from_text(text, name)
        merged = feasibly.default_library().with_species(lib)
        for sp in lib:
            assert sp.id in merged
            h = sp.enthalpy(np.array(sp.T_range))
            assert np.all(np.isfinite(h)), (sp.id, h)

    return only_project_errors(run)


@cache
def base_record() -> dict[str, Any]:
    rec: dict[str, Any] = feasibly.make_record(
        "MgCO3 -> MgO + CO2", T="800 K", samples=1024, seed=3, author="A"
    )
    return rec


_RECORD_PATHS = [
    ("review", "author"),
    ("review", "rationale"),
    ("created",),
    ("reaction", "entered"),
    ("reaction", "balance"),
    ("conditions", "temperature", "T_K"),
    ("conditions", "standard_pressure_Pa"),
    ("conditions", "partial_pressures_Pa"),
    ("uncertainty", "samples"),
    ("uncertainty", "seed"),
    ("uncertainty", "confidence"),
    ("uncertainty", "method"),
    ("uncertainty", "criterion"),
    ("uncertainty", "overrides"),
    ("species", 0, "origin"),
    ("species", 0, "entry", "phase"),
    ("species", 0, "entry", "cp"),
    ("species", 0, "provenance", "cp", "model"),
    ("results",),
    ("schema_version",),
    ("integrity", "content_sha256"),
    ("signature",),
]


def check_record(edits: list[tuple[tuple[Any, ...], Any]], reseal: bool, verify: bool) -> str:
    from feasibly.records import record_html, validate_record, verify_record
    from feasibly.records.document import _seal, parse_record_text

    doc = copy.deepcopy(base_record())
    for path, value in edits:
        with contextlib.suppress(KeyError, TypeError, IndexError):
            _set_path(doc, path, value)
    if reseal:
        with contextlib.suppress(Exception):
            doc = _seal({k: v for k, v in doc.items() if k != "integrity"})

    def run() -> None:
        text = json.dumps(doc, allow_nan=True)
        parsed = parse_record_text(text)
        checked = validate_record(parsed, check_hash=False)
        html = record_html(checked) if reseal else ""
        assert "<script" not in html.split("</style>", 1)[-1].lower()
        if verify:
            verify_record(checked)

    return only_project_errors(run)


record_edits = st.lists(
    st.tuples(st.sampled_from(_RECORD_PATHS), json_values), min_size=1, max_size=3
)


def check_widget(kind: str, trait: str, value: Any) -> str:
    """Set a trait to a generated value: nothing raises into the notebook except traitlets'
    own type refusal (TraitError), and an error shown is never an internal error."""
    import traitlets

    widget = _widgets()[kind]
    with bounded():
        try:
            setattr(widget, trait, value)
        except traitlets.TraitError:
            return "refused"  # the trait's declared type refused it (a str for a Float, ...)
    error = str(getattr(widget, "error", ""))
    assert "internal error" not in error, error
    assert "<img" not in widget._feedback.value
    return "refused" if error else "ok"


@cache
def _widgets() -> dict[str, Any]:
    from feasibly.widgets import ReactionBuilder, SpeciesEstimate, UncertaintyInput

    return {
        "reaction": ReactionBuilder(equation="H2 + Cl2 -> 2 HCl"),
        "input": UncertaintyInput(target="MgO(cr)", reason="r", uncertainty="2"),
        "estimate": SpeciesEstimate(
            formula="CoCO3",
            phase="cr",
            dHf={"value": "-893", "uncertainty": "12", "reason": "estimate"},
            S298={"value": "86", "uncertainty": "6", "reason": "estimate"},
            cp_u={"value": "1", "uncertainty": "10", "reason": "estimate"},
        ),
    }


_WIDGET_TRAITS = {
    "reaction": ["equation"],
    "input": ["target", "value", "uncertainty", "unit", "reason"],
    "estimate": ["formula", "name", "T_min", "T_max", "cp"],
}
widget_cases = st.sampled_from(sorted(_WIDGET_TRAITS)).flatmap(
    lambda kind: st.tuples(
        st.just(kind),
        st.sampled_from(_WIDGET_TRAITS[kind]),
        st.one_of(equations, quantities.filter(lambda v: isinstance(v, (str, float))), json_values),
    )
)

_CLI_OPTIONS = [
    "--T",
    "--T-range",
    "--points",
    "--p",
    "--P",
    "--y",
    "--samples",
    "--seed",
    "--threshold",
    "--require-K",
    "--confidence",
    "--override",
    "--feed",
    "--key",
    "--require-conversion",
    "--record",
    "--balance",
    "--json",
    "--adaptive",
    "--correlate",
    "--species-file",
]
cli_argv = st.lists(
    st.one_of(st.sampled_from(_CLI_OPTIONS), _joined(_EQ_TOKENS + _UNIT_TOKENS, 4)),
    max_size=8,
)


def check_cli(extra: list[str], tmp: str) -> str:
    """``feasibly assess`` with generated options: exit 0, 1 or 2; never 3, never a traceback.
    A --record or --species-file value is pointed into a temporary directory."""
    from feasibly.cli import main

    argv = ["assess", "MgCO3 -> MgO + CO2", "--T", "800", "K"]
    for i, token in enumerate(extra):
        prev = extra[i - 1] if i else ""
        if prev in ("--record", "--species-file") and token and not token.startswith("-"):
            token = f"{tmp}/{abs(hash(token)) % 1000}.json"
        argv.append(token)
    out, err = io.StringIO(), io.StringIO()
    with bounded(), contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        code = main(argv)
    text = err.getvalue()
    assert code in (0, 1, 2), (argv, code, text)
    assert "Traceback" not in text and "internal error" not in text, text
    return "ok" if code == 0 else "refused"


# --- the suite (bin/check) ------------------------------------------------------------------------
_SUITE = settings(
    max_examples=SUITE_EXAMPLES,
    deadline=None,  # the per-input bound above replaces hypothesis' per-example deadline
    derandomize=True,  # the same inputs on every run, so a failure reproduces
    suppress_health_check=[HealthCheck.too_slow, HealthCheck.filter_too_much],
    database=None,
)


@_SUITE
@given(equations)
def test_fuzz_equations(text: str) -> None:
    check_equation(text)


@_SUITE
@given(quantities)
def test_fuzz_unit_strings(value: Any) -> None:
    check_quantity(value)


@_SUITE
@given(species_texts, species_names)
def test_fuzz_species_files(text: str, name: str) -> None:
    check_species_file(text, name)


@settings(_SUITE, max_examples=30)
@given(record_edits, st.booleans(), st.just(False))
def test_fuzz_records(edits: list[Any], reseal: bool, verify: bool) -> None:
    check_record(edits, reseal, verify)


@settings(_SUITE, max_examples=5)
@given(record_edits, st.just(True), st.just(True))
def test_fuzz_records_verified(edits: list[Any], reseal: bool, verify: bool) -> None:
    check_record(edits, reseal, verify)


@_SUITE
@given(widget_cases)
def test_fuzz_widget_traits(case: tuple[str, str, Any]) -> None:
    pytest.importorskip("ipywidgets", reason="widgets need the widgets extra")
    check_widget(*case)


@settings(_SUITE, max_examples=25)
@given(cli_argv)
def test_fuzz_command_line_exits_2(tmp_path_factory: Any, extra: list[str]) -> None:
    check_cli(extra, str(tmp_path_factory.getbasetemp()))

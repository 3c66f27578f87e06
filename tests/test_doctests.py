"""Examples in docstrings and in README.md are executed, so they cannot rot."""

from __future__ import annotations

import doctest
import importlib
import pkgutil
from pathlib import Path

import pytest

import feasibly

MODULES = sorted(info.name for info in pkgutil.walk_packages(feasibly.__path__, "feasibly."))
#: Modules whose docstrings promise worked examples: a run that attempts none of them (a moved
#: function, a docstring rewritten without its example) fails instead of passing vacuously.
WITH_EXAMPLES = {
    "feasibly.conditions",
    "feasibly.units",
    "feasibly.library.formula",
    "feasibly.library._reader",
    "feasibly.thermo.reaction",
    "feasibly.thermo.assessment",
    "feasibly.uncertainty.inputs",
    "feasibly.uncertainty.linear",
    "feasibly.uncertainty.assessment",
    "feasibly.uncertainty.route",
    "feasibly.equilibrium.conversion",
    "feasibly.equilibrium.composition",
    "feasibly.records.build",
    "feasibly.thermo.energy",
    "feasibly.heat.duty",
    "feasibly.heat.adiabatic",
    "feasibly.comparison.formation",
}
README = Path(__file__).resolve().parents[1] / "README.md"


@pytest.mark.parametrize("name", MODULES)
def test_module_docstring_examples(name: str) -> None:
    module = importlib.import_module(name)
    result = doctest.testmod(module, optionflags=doctest.ELLIPSIS | doctest.NORMALIZE_WHITESPACE)
    assert result.failed == 0
    if name in WITH_EXAMPLES:
        assert result.attempted > 0, f"{name} promises examples but none ran"


def test_the_promised_modules_exist() -> None:
    assert set(MODULES) >= WITH_EXAMPLES


def test_readme_examples() -> None:
    result = doctest.testfile(
        str(README),
        module_relative=False,
        optionflags=doctest.ELLIPSIS | doctest.NORMALIZE_WHITESPACE,
    )
    assert result.failed == 0
    assert result.attempted > 0

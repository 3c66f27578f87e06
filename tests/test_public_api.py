"""Every public name is importable and documented (the layer rule is in test_layers.py)."""

from __future__ import annotations

import importlib
import inspect
import pkgutil
from pathlib import Path

import pytest

import feasibly


def test_all_names_import_and_have_docstrings() -> None:
    for name in feasibly.__all__:
        obj = getattr(feasibly, name)
        if name in {"__version__", "Q_", "ureg"}:
            continue
        assert inspect.getdoc(obj), f"feasibly.{name} has no docstring"


def test_every_module_has_a_docstring() -> None:
    for info in pkgutil.walk_packages(feasibly.__path__, "feasibly."):
        module = importlib.import_module(info.name)
        assert module.__doc__, info.name


def test_every_public_module_has_an_api_reference_page() -> None:
    """docs/*.rst (built with warnings as errors by bin/check) name every public module."""
    docs = Path(__file__).resolve().parents[1] / "docs"
    if not docs.is_dir():
        pytest.skip("docs/ is not beside the tests (not a source checkout)")
    text = "\n".join(p.read_text("utf-8") for p in docs.glob("*.rst"))
    for info in pkgutil.walk_packages(feasibly.__path__, "feasibly."):
        parts = info.name.split(".")
        if any(p.startswith("_") for p in parts[1:]):
            continue
        assert f"automodule:: {info.name}\n" in text, f"{info.name} has no API reference page"

"""Every public name is importable and documented (the layer rule is in test_layers.py)."""

from __future__ import annotations

import importlib
import inspect
import pkgutil

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

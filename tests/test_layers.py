"""The layer rule of the house (DEVELOPERS.md, "The house"), tested by behaviour and by imports.

1. Importing every kernel wing in a fresh interpreter loads no widget or figure code, nor
   ipywidgets or plotly (after xarray's tests/test_plugins.py::test_lazy_import).
2. Each module imports only from its own wing or from wings on lower levels, and never a
   ``_private`` name (or module) of another wing.
"""

from __future__ import annotations

import ast
import importlib.util
import json
import subprocess
import sys
from pathlib import Path

import pytest

import feasibly

#: Levels from the bottom: a module may import its own wing and any wing on a lower level.
LEVELS: dict[str, int] = {
    "__about__": 1,
    "errors": 1,
    "_files": 1,
    "_palette": 1,
    "_pickling": 1,
    "_limits": 1,
    "_kernels": 1,
    "_tables": 2,
    "units": 2,
    "library": 2,
    "conditions": 3,
    "thermo": 4,
    "uncertainty": 5,
    "estimation": 5,
    "equilibrium": 6,
    "figures": 6,
    "heat": 7,
    "comparison": 7,
    "images": 7,
    "records": 8,
    "batch": 8,
    "cli": 9,
    "widgets": 9,
}
PACKAGE = Path(feasibly.__file__).parent
KERNEL = [
    w
    for w, level in LEVELS.items()
    if level <= 8 and w != "figures" and importlib.util.find_spec(f"feasibly.{w}") is not None
]


def _wing(module: str) -> str | None:
    """'feasibly.thermo.reaction' → 'thermo'; the face 'feasibly' → None."""
    parts = module.split(".")
    return parts[1] if len(parts) > 1 else None


def _module_name(path: Path, package: Path) -> str:
    rel = path.relative_to(package.parent).with_suffix("")
    parts = list(rel.parts)
    if parts[-1] == "__init__":
        parts = parts[:-1]
    return ".".join(parts)


def _imports(path: Path, root: Path) -> list[tuple[int, str, list[str]]]:
    """(line, absolute module, names) of every feasibly import in one file."""
    me = _module_name(path, root)
    package = me if path.name == "__init__.py" else me.rsplit(".", 1)[0]
    out = []
    for node in ast.walk(ast.parse(path.read_text("utf-8"))):
        if isinstance(node, ast.ImportFrom):
            if node.level:
                base = package.split(".")
                base = base[: len(base) - (node.level - 1)]
                module = ".".join(base + ([node.module] if node.module else []))
            else:
                module = node.module or ""
            names = [a.name for a in node.names]
            if module == "feasibly" or (node.module is None and node.level):
                # `from . import x` / `from feasibly import x`: x may be a module of the package
                for name in names:
                    candidate = f"{module}.{name}"
                    if (root.parent / candidate.replace(".", "/")).with_suffix(".py").exists() or (
                        root.parent / candidate.replace(".", "/")
                    ).is_dir():
                        out.append((node.lineno, candidate, []))
                    else:
                        out.append((node.lineno, module, [name]))
            elif module.startswith("feasibly"):
                out.append((node.lineno, module, names))
        elif isinstance(node, ast.Import):
            out += [(node.lineno, a.name, []) for a in node.names if a.name.startswith("feasibly")]
    return out


def violations(package: Path = PACKAGE) -> list[str]:
    """Every import that breaks the layer rule, as 'file:line: reason'."""
    found = []
    for path in sorted(package.rglob("*.py")):
        me = _module_name(path, package)
        wing = _wing(me)
        if wing is None:
            continue  # the face imports everything it re-exports
        if wing not in LEVELS:
            found.append(f"{path.name}: wing {wing!r} has no level; add it to the layer table")
            continue
        for line, module, names in _imports(path, package):
            other = _wing(module)
            where = f"{path.relative_to(package.parent)}:{line}"
            if other is None:
                found.append(f"{where}: imports the package face from inside a wing")
                continue
            if other == wing:
                continue
            if other not in LEVELS:
                found.append(f"{where}: imports {module}, a wing with no level")
            elif LEVELS[other] >= LEVELS[wing]:
                found.append(
                    f"{where}: {wing} (level {LEVELS[wing]}) imports {module} "
                    f"(level {LEVELS[other]})"
                )
            private = [p for p in module.split(".")[2:] if p.startswith("_")]
            private += [n for n in names if n.startswith("_") and n != "__version__"]
            if private:
                found.append(f"{where}: imports private {', '.join(private)} across a wing border")
    return found


def test_kernel_wings_load_no_widget_or_figure_code() -> None:
    code = (
        "import importlib, json, sys\n"
        f"for wing in {KERNEL!r}:\n"
        "    importlib.import_module('feasibly.' + wing)\n"
        "print(json.dumps(sorted(m for m in sys.modules if m.split('.')[0] in "
        "('ipywidgets', 'plotly', 'anywidget') or m.startswith(('feasibly.widgets', "
        "'feasibly.figures')))))\n"
    )
    out = subprocess.run(
        [sys.executable, "-c", code], capture_output=True, text=True, check=True, timeout=120
    )
    assert json.loads(out.stdout) == []


def test_every_import_respects_the_levels() -> None:
    assert violations() == []


def test_the_rule_catches_a_deliberate_violation(tmp_path: Path) -> None:
    """A scratch copy with an upward import and a private import across wings must fail."""
    scratch = tmp_path / "feasibly"
    (scratch / "thermo").mkdir(parents=True)
    (scratch / "__init__.py").write_text('"""face"""\n')
    (scratch / "thermo" / "__init__.py").write_text('"""thermo"""\n')
    (scratch / "thermo" / "bad.py").write_text(
        '"""upward"""\nfrom ..records import make_record\nfrom ..library._reader import _finite\n'
    )
    found = violations(scratch)
    assert any("thermo (level 4) imports feasibly.records (level 8)" in v for v in found), found
    assert any("private _reader" in v for v in found), found


@pytest.mark.parametrize("wing", [w for w in LEVELS if (PACKAGE / w).is_dir()])
def test_every_wing_has_a_documented_face(wing: str) -> None:
    face = importlib.import_module(f"feasibly.{wing}")
    assert face.__doc__ and "Layer rule" in face.__doc__, wing
    assert isinstance(face.__all__, list) and face.__all__, wing
    for name in face.__all__:
        assert hasattr(face, name), f"feasibly.{wing}.{name}"

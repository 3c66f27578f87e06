"""Build hook: compile feasibly's C kernels (``src/feasibly/uncertainty/_scan.c``,
``src/feasibly/equilibrium/_newton.c``) into the wheel, and write the index of the species file
(``src/feasibly/library/_index.py``) beside it.

hatchling runs this when it builds a wheel (``[tool.hatch.build.targets.wheel.hooks.custom]`` in
pyproject.toml). ``python hatch_build.py`` compiles the same library into the source tree, for
running the tests against ``src/`` (``bin/build-kernel`` does that), and writes the index into
``src/feasibly/_data/`` (ignored by git; a stale index is recognised by its byte hash and ignored).

Without a C compiler the wheel is built without the libraries: feasibly's summaries then select
with numpy (the same numbers) and gas-only equilibria iterate with numpy (the same equilibria to
the convergence tolerance), a few times slower (``feasibly.uncertainty._scan.compiled()`` and
``feasibly.equilibrium._newton.compiled()`` say which).
"""

from __future__ import annotations

import importlib.util
import json
import os
import shlex
import subprocess
import sys
import sysconfig
from pathlib import Path

HERE = Path(__file__).parent
# (source, library, link libraries) per kernel: each its own shared library in its wing's _lib/
# folder, which is not a package, so module scanners never take it for an extension module.
KERNELS = [
    ("uncertainty/_scan.c", "uncertainty/_lib/libfeasibly_scan.so", []),
    ("equilibrium/_newton.c", "equilibrium/_lib/libfeasibly_newton.so", ["-lm"]),
]
# -ffp-contract=off: no fused multiply-add, so the C kernel and the numpy kernel agree to the bit
# (the tests compare them). No -ffast-math: comparisons with ±inf and NaN must keep IEEE meaning.
# -Wno-psabi: GCC notes that the ABI for passing 32-byte vectors changed in GCC 4.6; the vectors
# never cross the library's boundary, so the note says nothing about these kernels.
FLAGS = [
    "-O3", "-std=c11", "-fPIC", "-shared", "-ffp-contract=off", "-Wall", "-Werror", "-Wno-psabi",
]  # fmt: skip


INDEXER = HERE / "src" / "feasibly" / "library" / "_index.py"
SPECIES = HERE / "data" / "species-library.json"


def write_index(target_dir: Path) -> Path:
    """Write the species index for ``data/species-library.json`` into ``target_dir``.

    Raises ValueError when the file's content hash does not hold (the index is then not written
    and feasibly reads the whole file, reporting the problem).
    """
    spec = importlib.util.spec_from_file_location("_feasibly_index", INDEXER)
    assert spec is not None and spec.loader is not None
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    index = module.build_index(SPECIES.read_bytes())
    target_dir.mkdir(parents=True, exist_ok=True)
    target = target_dir / module.INDEX_NAME
    # Compact separators: the index is read at every start-up.
    target.write_text(json.dumps(index, separators=(",", ":"), ensure_ascii=True), "utf-8")
    return target


def compile_kernel(source: str, target: Path, libs: list[str]) -> None:
    """Compile the kernel ``source`` (relative to src/feasibly) into the shared library
    ``target``; raises CalledProcessError."""
    cc = shlex.split(os.environ.get("CC") or sysconfig.get_config_var("CC") or "cc")
    target.parent.mkdir(parents=True, exist_ok=True)
    path = HERE / "src" / "feasibly" / source
    subprocess.run([*cc, *FLAGS, str(path), "-o", str(target), *libs], check=True)


try:
    from hatchling.builders.hooks.plugin.interface import BuildHookInterface
except ImportError:  # run as a script, without hatchling
    BuildHookInterface = object  # type: ignore[assignment,misc]


class KernelBuildHook(BuildHookInterface):  # type: ignore[misc,valid-type]
    """Adds the compiled kernels to the wheel, which then is tagged for this platform."""

    def initialize(self, version: str, build_data: dict) -> None:  # type: ignore[type-arg]
        if self.target_name != "wheel":
            return
        try:
            index = write_index(Path(self.directory) / "index-build")
        except ValueError as exc:
            self.app.display_warning(f"feasibly: species index not written ({exc})")
        else:
            build_data["force_include"][str(index)] = f"feasibly/_data/{index.name}"
        if sys.platform == "win32":
            return
        for source, library, libs in KERNELS:
            target = Path(self.directory) / "kernel-build" / Path(library).name
            try:
                compile_kernel(source, target, libs)
            except (OSError, subprocess.CalledProcessError) as exc:
                self.app.display_warning(
                    f"feasibly: C kernel {source} not compiled ({exc}); its numpy twin is used"
                )
                continue
            build_data["force_include"][str(target)] = f"feasibly/{library}"
            build_data["pure_python"] = False
            build_data["infer_tag"] = True


if __name__ == "__main__":
    for source, library, libs in KERNELS:
        out = HERE / "src" / "feasibly" / library
        compile_kernel(source, out, libs)
        print(f"compiled {out.relative_to(HERE)}")
    print(f"wrote {write_index(HERE / 'src' / 'feasibly' / '_data').relative_to(HERE)}")

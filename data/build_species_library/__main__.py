"""Run the build: ``python data/build_species_library`` from the repository root.

Run as a folder, Python puts this folder itself first on ``sys.path``; it is replaced by its parent
(``data/``) so the modules import as the package ``build_species_library`` and none of them
shadows a source package (``janaf``, ``tables`` …). The checkout's ``src`` goes first on
``sys.path`` too, so the build uses the kernel rules of the code it ships data for, not an
installed feasibly.
"""

from __future__ import annotations

import sys
from pathlib import Path

HERE = Path(__file__).resolve().parent
if sys.path and Path(sys.path[0] or ".").resolve() == HERE:
    sys.path[0] = str(HERE.parent)
elif str(HERE.parent) not in sys.path:
    sys.path.insert(0, str(HERE.parent))
SRC = HERE.parent.parent / "src"
if (SRC / "feasibly" / "__init__.py").is_file():
    sys.path.insert(0, str(SRC))

from build_species_library.pipeline import main  # noqa: E402 (needs the path set above)

if __name__ == "__main__":
    main()

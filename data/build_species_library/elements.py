"""``elements.json``: element names and atomic weights from chemicals' periodic table."""

from __future__ import annotations

from typing import Any

from chemicals.elements import periodic_table

from .errors import need


def build_elements() -> dict[str, dict[str, Any]]:
    """Symbol -> name and atomic weight, as chemicals carries them."""
    els = {}
    for e in periodic_table:
        need(e.MW and e.MW > 0, f"element {e.symbol} without atomic weight")
        els[e.symbol] = {"name": e.name, "atomic_weight": float(e.MW)}
    need(len(els) >= 100 and "Fe" in els and "C" in els, "chemicals periodic table changed shape")
    return els

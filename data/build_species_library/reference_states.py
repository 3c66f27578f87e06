"""Reference states of the elements: ΔfH°(298.15) = 0 exactly.

Per element: among single-element neutral entries whose range contains 298.15 K, the one with the
lowest H(298.15) (NASA sets the reference state to 0 by construction), checked to lie within
``REF_ZERO_TOL`` of 0; otherwise the element gets no reference state and the entry says why.
"""

from __future__ import annotations

from .entries import Entry
from .policies import policy_block

# Tolerance when the polynomial's own H(298.15) is compared with a stated reference-state zero:
# NASA sets reference elements to 0 by construction; 50 J/mol covers fitting round-off (common
# practice, no source).
REF_ZERO_TOL = 50.0


def set_reference_states(entries: list[Entry]) -> None:
    """Mark each element's reference state and set its ΔfH° to exactly 0 (u = 0)."""
    best: dict[str, Entry] = {}
    for e in entries:
        if len(e["elements"]) != 1 or e["charge"] or e["hypothetical_298"]:
            continue
        (el,) = e["elements"]
        v = e["dHf_298"]["value"]
        if el not in best or v < best[el]["dHf_298"]["value"] - 1e-9:
            best[el] = e
    for el, e in sorted(best.items()):
        v = e["dHf_298"]["value"]
        if abs(v) > REF_ZERO_TOL:
            e["notes"].append(
                f"not made reference state of {el}: lowest H(298.15) is {v:.1f} J/mol, not ~0 "
                "(the element's reference form is missing from the sources)"
            )
            continue
        e["reference_state_of"] = el
        if v != 0.0:
            e["notes"].append(
                f"dHf_298 set to exactly 0 (reference state); polynomial H(298.15) = {v:.3f} J/mol"
            )
        old = e["dHf_298"]
        e["dHf_298"] = policy_block(
            0.0,
            "reference-state",
            old["source"],
            old["entry"] + " (reference state: 0 by definition)",
        )

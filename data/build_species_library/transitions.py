"""Phases carried from a neighbour at a transition: their uncertainty policy.

An entry that does not exist at 298.15 K (γ-Fe, a liquid above its melting point) is carried by
the kernel from the condensed phase it touches at the transition temperature T_tr. Which
neighbour that is, is the kernel's rule (``Library.transition_parent``), asked of the kernel's
own reading of the entries. Such an entry's ΔfH° uncertainty becomes that of the transition
enthalpy (policy transition-dHf) and its S° uncertainty 0 (policy transition-S). The transition
enthalpy is taken from the two polynomials with the build's own NASA-7 evaluation
(:mod:`.polynomials`; the kernel's changes the last digits, see :mod:`._kernel`).
"""

from __future__ import annotations

from ._kernel import T_REF
from .document import document_text, kernel_read, library_document
from .entries import Entry, public
from .policies import policy_block
from .polynomials import h_on_dhf_scale


def apply_transition_policy(entries: list[Entry]) -> int:
    """Re-state the uncertainty of entries carried from a neighbour; return how many."""
    text = document_text(library_document(public(entries)))
    lib = kernel_read(text, "<entries before the transition policy>", shipped=False)
    by_id = {e["id"]: e for e in entries}
    count = 0
    for e in entries:
        if (
            not e["hypothetical_298"]
            or e["dHf_298"]["uncertainty"].get("source") != "policy:hypothetical-dHf"
        ):
            continue
        found = lib.transition_parent(lib[e["id"]])
        if found is None:
            continue
        parent = by_id[found.id]
        # The temperature the kernel carries the phase at: the end of its range nearer 298.15 K.
        lo, hi = e["T_range_K"]
        t_a = min(max(T_REF, lo), hi)
        h_self, h_parent = h_on_dhf_scale(e, t_a), h_on_dhf_scale(parent, t_a)
        if h_self is None or h_parent is None:
            continue
        dh_tr = h_self - h_parent
        e["dHf_298"] = policy_block(
            e["dHf_298"]["value"],
            "transition-dHf",
            e["dHf_298"]["source"],
            e["dHf_298"]["entry"],
            of=dh_tr,
        )
        e["S_298"] = policy_block(
            e["S_298"]["value"], "transition-S", e["S_298"]["source"], e["S_298"]["entry"]
        )
        e["notes"].append(
            f"carried from {parent['id']} at {t_a:g} K (transition enthalpy "
            f"{dh_tr / 1000:.3f} kJ/mol from the two polynomials); dHf_298.u is the transition "
            "enthalpy's uncertainty"
        )
        count += 1
    return count

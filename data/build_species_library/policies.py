"""Value blocks and the written uncertainty policies (``tables/policies.toml``).

A value block carries a value, its standard uncertainty and how that uncertainty was stated; the
standard uncertainty follows from the stated one by the kernel's coverage rule
(``standard_uncertainty``). Where no source states one, a policy sets it and the block says so
(``assumed: true``, ``source: "policy:<id>"``).
"""

from __future__ import annotations

from typing import Any

from . import tables
from ._kernel import COVERAGE_DIVISORS, standard_uncertainty
from .errors import need

POLICIES = tables.policies()


def value_block(
    value: float,
    stated: float,
    convention: str,
    source: str,
    entry: str,
    usource: str,
    assumed: bool,
) -> dict[str, Any]:
    """A value with the uncertainty a source (or policy) states, under ``convention``."""
    return {
        "value": float(value),
        "u": standard_uncertainty(stated, convention),
        "source": source,
        "entry": entry,
        "uncertainty": {
            "stated": float(stated),
            "convention": convention,
            "divisor": float(COVERAGE_DIVISORS[convention]),
            "source": usource,
            "assumed": bool(assumed),
        },
    }


def policy_u(pid: str, of: float | None = None) -> float:
    """Standard uncertainty policy ``pid`` sets (``of``: the value a value-dependent one uses)."""
    p = POLICIES[pid]
    if p.u is not None:
        return p.u
    need(p.u_base is not None and of is not None, f"policy {pid} sets no value uncertainty")
    assert p.u_base is not None and p.u_fraction is not None and of is not None
    return p.u_base + p.u_fraction * abs(of)


def policy_block(
    value: float, pid: str, source: str, entry: str, of: float | None = None
) -> dict[str, Any]:
    """A value block whose uncertainty policy ``pid`` sets (``of`` for value-dependent ones)."""
    u = policy_u(pid, of)
    return value_block(value, u, "standard", source, entry, f"policy:{pid}", True)


def cp_u_rel(pid: str) -> float:
    """Relative standard uncertainty of the Cp factor policy ``pid`` sets."""
    u = POLICIES[pid].u_rel
    need(u is not None, f"policy {pid} sets no u_rel")
    assert u is not None
    return u


def cp_uncertainty(pid: str) -> dict[str, Any]:
    """The ``uncertainty`` block of a Cp model whose u_rel policy ``pid`` sets."""
    u = cp_u_rel(pid)
    return {
        "stated": u,
        "convention": "standard",
        "divisor": 1.0,
        "source": f"policy:{pid}",
        "assumed": True,
    }


def uncertainty_policy_block(
    extra: dict[str, str] | None = None, used: set[str] | None = None
) -> dict[str, str]:
    """The library's ``uncertainty_policy`` block: policy id -> text, sorted by id.

    ``extra``: policies written by the build itself (the calibrated ones); ``used``: when given,
    only these policy ids are listed (a policy no entry uses would mislead a reader).
    """
    texts = {k: p.text for k, p in POLICIES.items()} | dict(extra or {})
    return {k: t for k, t in sorted(texts.items()) if used is None or k in used}


def used_policies(species: list[dict[str, Any]]) -> set[str]:
    """Policy ids the entries' uncertainty blocks name (plus atct-95, the stated rule's text)."""
    out = {"atct-95"}
    for e in species:
        for block in (e["dHf_298"], e["S_298"], e["cp"]):
            src = str(block.get("uncertainty", {}).get("source", ""))
            if src.startswith("policy:"):
                out.add(src.removeprefix("policy:"))
    return out

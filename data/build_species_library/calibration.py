"""Uncertainty policies from evidence: the measured spread between independent compilations.

Where no source states an uncertainty, the standard uncertainty of a value is set per class
(gas neutral / gas ion / condensed × ΔfH°, S°; gas / condensed / constant-Cp × the Cp factor)
from the differences between the library's values and the independent compilations that also
tabulate them: NIST-JANAF (the ``janaf`` package's tables, matched in :mod:`.janaf_tables`), the
CRC/NBS 298.15 K table and ATcT (both carried by ``chemicals``). A value is never compared with
the source it was taken from.

The rule (written to ``data/uncertainty-calibration.csv`` and the policy texts):

- ΔfH°, S°: u = ½ × the 95th percentile of |library − independent|, taken for each independent
  compilation separately and the largest kept, so that every compilation sees at least 95 % of
  its differences within 2u (pooled, the near-copies NASA/JANAF would hide the spread CRC/NBS
  shows);
- Cp factor (it scales the increments h(T) = H(T) − H(298.15 K) and s(T) = S(T) − S(298.15 K),
  see feasibly.uncertainty.linear): u_rel = ½ × the 95th percentile of the relative differences
  of h(T) and s(T) between the library and the JANAF table at the table's temperatures from
  400 K up to the entry's upper limit;
- constant-Cp entries: u_rel = ½ × the 95th percentile of the relative error a constant
  Cp(298.15 K) makes in h(T) and s(T) between 350 and 500 K, measured on the library's
  condensed polynomial entries;
- corroborated values: a ΔfH° or S° that independent compilations reproduce gets the smaller u
  those comparisons support, measured held-out: over the entries compared with two
  compilations, the differences from the second among the entries the first reproduces (within
  2u, solved as a fixed point); u = ½ × their 95th percentile;
- compared Cp: an entry with NIST-JANAF increments gets u_rel = √(m² + g²/3), g its own largest
  relative difference from 400 K up, m the class's median difference (the agreement of tables
  that agree);
- disagreement: a policy-governed value that differs from an independent one by more than
  ``DISPUTE_K`` × its calibrated u is a dispute, not scatter; its u becomes
  √(u² + g²/3), g the largest such gap (a rectangular spread of half-width g added to the class
  u: the other value lies inside the interval). Values with a stated uncertainty (ATcT) are
  not widened: the ATcT network includes the older determinations and supersedes them.

Every number here is a function of the entries that exist: a new source or new entries change
the comparisons and the chosen values on the next build, with no change to this module.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping, Sequence
from typing import TYPE_CHECKING, Any, NamedTuple

import numpy as np

from .comparisons import (
    CLASSES,
    CP_T_MAX,
    CP_T_MIN,
    RELATIVE,
    Comparison,
    _policy,
    collect,
    cp_class,
    governed,
    read_crc,
    value_class,
)
from .corroboration import COMPARED, CORROBORATED, Corroboration, corroborate, set_cp
from .errors import need
from .policies import value_block

if TYPE_CHECKING:
    from .entries import Entry

# Fraction of the observed differences that should lie within 2u (the GUM's usual 95 %).
TARGET = 0.95
# A difference beyond 2u (the class's own 95 % reach) is a disagreement between sources that the
# class scatter does not explain: it enters that value's uncertainty (common practice, no source).
DISPUTE_K = 2.0
CSV_NAME = "uncertainty-calibration.csv"
# A compilation takes part in setting a class's u only with at least this many comparisons: with
# fewer, its 95th percentile is mostly one or two values (common practice, no source).
MIN_PER_SOURCE = 20
DISPUTE_POLICY = "source-disagreement"
#: Build bookkeeping key (removed before writing): source ids an earlier step has shown this entry's
#: value to supersede, with a written reason in its notes; gaps to those sources do not widen u.
SUPERSEDED_KEY = "_superseded_sources"


class Calibration(NamedTuple):
    """Chosen uncertainty of one class and the evidence it rests on."""

    cls: str
    n_entries: int
    n_comparisons: int
    median_abs: float
    p95_abs: float
    u: float


# --- the rule ----------------------------------------------------------------------------------


def _p95(x: np.ndarray) -> float:
    # numpy's default (linear interpolation between order statistics): deterministic.
    return float(np.quantile(x, TARGET))


def derive(comparisons: Iterable[Comparison]) -> dict[str, Calibration]:
    """Chosen u (or u_rel) per class: half the 95th percentile of |difference|."""
    by: dict[str, list[Comparison]] = {}
    for c in comparisons:
        by.setdefault(c.cls, []).append(c)
    out = {}
    for cls in CLASSES:
        rows = by.get(cls, [])
        need(len(rows) >= 20, f"calibration class {cls}: only {len(rows)} comparisons")
        d = np.abs(np.array([c.diff for c in rows]))
        per_source: dict[str, list[float]] = {}
        for c in rows:
            per_source.setdefault(c.against.split(" ")[0], []).append(abs(c.diff))
        # Each compilation with enough comparisons must see 95 % of its differences within 2u:
        # pooling would let the sources that copy each other (NASA fits of JANAF tables) hide
        # the spread the more independent ones (CRC/NBS) show.
        p95 = max(_p95(np.array(v)) for v in per_source.values() if len(v) >= MIN_PER_SOURCE)
        out[cls] = Calibration(
            cls, len({c.entry for c in rows}), len(rows), float(np.median(d)), p95, p95 / 2.0
        )
    return out


def policy_texts(
    cal: Mapping[str, Calibration], corr: Mapping[str, Corroboration] | None = None
) -> dict[str, str]:
    """The written policies of the calibrated classes, the corroborated values, the compared Cp
    factors and the disagreement rule."""
    out = {}
    for cls, k in sorted((corr or {}).items()):
        pid, q, unit, what = CLASSES[cls]
        num = f"u = {k.u:.4g} x |S|" if cls in RELATIVE else f"u = {k.u:.4g} {unit}"
        out[pid + CORROBORATED] = (
            f"{what}, reproduced within 2u by every independent compilation that tabulates it "
            f"(NIST-JANAF, CRC/NBS, ATcT): standard {num} = half the 95th percentile of the "
            f"held-out differences ({k.n_pairs}: over the entries compared with two "
            "compilations, the difference from one where the other reproduces the value; "
            f"{100 * k.coverage:.1f} % within 2u). Measured by the build; see data/{CSV_NAME}."
        )
    for cls in ("cp-gas", "cp-condensed"):
        pid, _, _, what = CLASSES[cls]
        out[pid + COMPARED] = (
            f"{what} of an entry with a NIST-JANAF table: u_rel = sqrt(m^2 + g^2/3), g the "
            "entry's own largest relative difference of h(T), s(T) from the table at "
            f"{CP_T_MIN:g}-{CP_T_MAX:g} K inside its range, m = {cal[cls].median_abs:.3g} the "
            "class's median difference (the agreement of tables that agree). Rule: common "
            f"practice, no source; the evidence is in data/{CSV_NAME}."
        )
    for cls, (pid, q, unit, what) in CLASSES.items():
        c = cal[cls]
        if q == "cp":
            basis = (
                "relative error of a constant Cp(298.15) in h(T), s(T) at 350-500 K over the "
                "library's condensed polynomial entries"
                if cls == "cp-constant"
                else "relative differences of the increments h(T), s(T) from the NIST-JANAF "
                f"tables at {CP_T_MIN:g}-{CP_T_MAX:g} K"
            )
            num = f"u_rel = {c.u:.4g}"
        else:
            basis = (
                "differences from the independent compilations that tabulate the same "
                "species-phase (NIST-JANAF, CRC/NBS 298.15 K table, ATcT)"
            )
            num = f"u = {c.u:.4g} x |S|" if cls in RELATIVE else f"u = {c.u:.4g} {unit}"
        out[pid] = (
            f"{what}, no uncertainty stated by its source: standard {num} = half the 95th "
            f"percentile of |library - independent|, the largest over the compared sources "
            f"({c.n_comparisons} comparisons, "
            f"{c.n_entries} entries; median {c.median_abs:.3g}, 95th percentile "
            f"{c.p95_abs:.3g} (of the source that sets u); {basis}). Measured by the build; "
            f"see data/{CSV_NAME}."
        )
    out[DISPUTE_POLICY] = (
        f"A value whose uncertainty a calibrated class sets and which differs from an "
        f"independent compilation by more than {DISPUTE_K:g} u: the sources disagree. Standard "
        "u = sqrt(u_class^2 + g^2/3), g the largest such gap (a rectangular spread of half-width "
        "g added to the class u), unless a stated-uncertainty source (ATcT) gave the value. The "
        "entry's notes name the sources and their values. Rule: common practice, no source."
    )
    return out


def _calibrated_block(block: Mapping[str, Any], u: float, pid: str) -> dict[str, Any]:
    out = value_block(
        block["value"], u, "standard", block["source"], block["entry"], f"policy:{pid}", True
    )
    if "replaced" in block:
        out["replaced"] = block["replaced"]
    return out


def apply(
    entries: list[Entry],
    cal: Mapping[str, Calibration],
    comparisons: Sequence[Comparison],
    corr: Mapping[str, Corroboration] | None = None,
) -> int:
    """Set the calibrated uncertainty on every policy-governed value and Cp factor, give the
    corroborated values and the compared Cp factors their own, then widen the disputed values;
    return how many values were widened."""
    corr = corr or {}
    for e in entries:
        for q, field in (("dHf", "dHf_298"), ("S", "S_298")):
            cls = value_class(e, q)
            if cls is not None and governed(e[field]):
                u = cal[cls].u * (abs(e[field]["value"]) if cls in RELATIVE else 1.0)
                e[field] = _calibrated_block(e[field], u, CLASSES[cls][0])
        ccls = cp_class(e)
        if ccls is not None and governed(e["cp"]):
            set_cp(e, cal[ccls].u, CLASSES[ccls][0])
    by_id = {e["id"]: e for e in entries}
    # compared Cp factors: the entry's own largest difference from the JANAF increments
    worst: dict[str, float] = {}
    for c in comparisons:
        if c.cls in ("cp-gas", "cp-condensed") and c.entry in by_id:
            worst[c.entry] = max(worst.get(c.entry, 0.0), abs(c.diff))
    for sid, g in sorted(worst.items()):
        e = by_id[sid]
        ccls = cp_class(e)
        if ccls is None or not governed(e["cp"]):
            continue
        m = cal[ccls].median_abs
        set_cp(e, math.sqrt(m**2 + g**2 / 3.0), CLASSES[ccls][0] + COMPARED)
    # corroborated values: every compilation reproduces the value within 2 u_corroborated
    own: dict[tuple[str, str], list[Comparison]] = {}
    for c in comparisons:
        if not c.cls.startswith("cp-") and c.against not in by_id[c.entry].get(SUPERSEDED_KEY, ()):
            field = "dHf_298" if c.cls.startswith("dHf") else "S_298"
            own.setdefault((c.entry, field), []).append(c)
    for (sid, field), rows in sorted(own.items()):
        cls = rows[0].cls
        if cls not in corr or not governed(by_id[sid][field]):
            continue
        block = by_id[sid][field]
        u = corr[cls].u * (abs(block["value"]) if cls in RELATIVE else 1.0)
        if all(abs(c.gap) <= 2.0 * u for c in rows):
            by_id[sid][field] = _calibrated_block(block, u, CLASSES[cls][0] + CORROBORATED)
    gaps: dict[tuple[str, str], list[Comparison]] = {}
    for (sid, field), rows in own.items():
        u = by_id[sid][field]["u"]
        for c in rows:
            if abs(c.gap) > DISPUTE_K * u and governed(by_id[sid][field]):
                gaps.setdefault((sid, field), []).append(c)
    for (sid, field), rows in sorted(gaps.items()):
        e = by_id[sid]
        block = e[field]
        g = max(abs(c.gap) for c in rows)
        u = math.sqrt(block["u"] ** 2 + g**2 / 3.0)
        e[field] = _calibrated_block(block, u, DISPUTE_POLICY)
        unit, fmt = ("J/mol", ".0f") if field == "dHf_298" else ("J/(mol K)", ".3f")
        said = "; ".join(f"{c.against} {c.other:{fmt}}" for c in rows)
        e["notes"].append(
            f"{field}: sources disagree ({said} {unit}; this value {block['value']:{fmt}}, class "
            f"u {block['u']:.4g}); u widened to {u:.4g} (policy {DISPUTE_POLICY})"
        )
    return len(gaps)


def coverage(
    entries: Sequence[Entry], comparisons: Sequence[Comparison], constant_u: float
) -> dict[str, tuple[float, float]]:
    """Per class: fraction of comparisons within 2u of the shipped u, and the median of u/|d|
    (``constant_u``: the constant-Cp class's u_rel, measured on polynomial entries)."""
    by_id = {e["id"]: e for e in entries}
    by: dict[str, list[tuple[float, float]]] = {}
    for c in comparisons:
        e = by_id[c.entry]
        if c.cls == "cp-constant":
            u = constant_u
        elif c.cls.startswith("cp-"):
            u = e["cp"]["u_rel"]
        else:
            u = e["dHf_298" if c.cls.startswith("dHf") else "S_298"]["u"]
            by.setdefault(c.cls, []).append((abs(c.gap), u))
            continue
        by.setdefault(c.cls, []).append((abs(c.diff), u))
    out = {}
    for cls, rows in by.items():
        d = np.array([r[0] for r in rows])
        u = np.array([r[1] for r in rows])
        with np.errstate(divide="ignore"):
            ratio = np.where(d > 0, u / np.where(d > 0, d, 1.0), np.inf)
        out[cls] = (float(np.mean(d <= 2.0 * u)), float(np.median(ratio)))
    return out


def calibration_csv(
    cal: Mapping[str, Calibration],
    comparisons: Sequence[Comparison],
    shipped: Mapping[str, tuple[float, float]],
    widened: Mapping[str, int],
    corr: Mapping[str, Corroboration] | None = None,
) -> str:
    """``uncertainty-calibration.csv``: one row per class, then one per class and source."""
    head = (
        "class,policy,quantity,unit,against,n_entries,n_comparisons,median_abs_diff,"
        "p95_abs_diff,chosen_u,coverage_2u_class_u,coverage_2u_shipped_u,"
        "median_u_over_abs_diff,n_widened,rule"
    )
    lines = [head]
    by: dict[tuple[str, str], list[Comparison]] = {}
    for c in comparisons:
        by.setdefault((c.cls, c.against), []).append(c)
    for cls, (pid, q, unit, _) in CLASSES.items():
        c = cal[cls]
        rule = (
            "u_rel = p95(|d_rel|)/2"
            if q == "cp"
            else "u = max over sources of p95(|d|/|S|)/2 x |S|"
            if cls in RELATIVE
            else "u = max over sources of p95(|d|)/2"
        )
        cov_class = _cov([x for k, v in by.items() if k[0] == cls for x in v], c.u)
        cov_s, ratio = shipped.get(cls, (float("nan"), float("nan")))
        lines.append(
            f"{cls},{pid},{q},{unit},all,{c.n_entries},{c.n_comparisons},{c.median_abs:.6g},"
            f"{c.p95_abs:.6g},{c.u:.6g},{cov_class:.4f},{cov_s:.4f},{ratio:.4g},"
            f"{widened.get(cls, 0)},{rule}"
        )
        for (k_cls, against), rows in sorted(by.items()):
            if k_cls != cls:
                continue
            d = np.abs(np.array([r.diff for r in rows]))
            with np.errstate(divide="ignore"):
                ratio = float(np.median(np.where(d > 0, c.u / np.where(d > 0, d, 1.0), np.inf)))
            lines.append(
                f"{cls},{pid},{q},{unit},{against},{len({r.entry for r in rows})},{len(rows)},"
                f"{float(np.median(d)):.6g},{_p95(d):.6g},,{_cov(rows, c.u):.4f},,{ratio:.4g},,"
            )
    for cls, k in sorted((corr or {}).items()):
        pid, q, unit, _ = CLASSES[cls]
        lines.append(
            f"{cls}{CORROBORATED},{pid}{CORROBORATED},{q},{unit},held-out pairs,,{k.n_pairs},,"
            f",{k.u:.6g},{k.coverage:.4f},,,,u = p95(held-out |d|)/2 (fixed point)"
        )
    return "\n".join(lines) + "\n"


def _cov(rows: Sequence[Comparison], u: float) -> float:
    d = np.abs(np.array([r.diff for r in rows]))
    return float(np.mean(d <= 2.0 * u)) if d.size else float("nan")


def calibrate(
    entries: list[Entry],
    jmatch: Mapping[str, str],
    atct: Mapping[str, Mapping[str, float]],
) -> tuple[dict[str, str], str, dict[str, Any]]:
    """Run the calibration on ``entries`` (changed in place). Returns the policy texts to add to
    the library, the CSV text and a summary for the build's printout."""
    atct_values = {k: v["atct-1.112"] for k, v in atct.items() if "atct-1.112" in v}
    comparisons = collect(entries, jmatch, atct_values, read_crc())
    cal = derive(comparisons)
    corr = corroborate(comparisons, cal)
    widened_ids = apply(entries, cal, comparisons, corr)
    widened: dict[str, int] = {}
    for e in entries:
        for q, field in (("dHf", "dHf_298"), ("S", "S_298")):
            if _policy(e[field]) == DISPUTE_POLICY:
                cls = value_class(e, q)
                if cls is not None:
                    widened[cls] = widened.get(cls, 0) + 1
    shipped = coverage(entries, comparisons, cal["cp-constant"].u)
    csv_text = calibration_csv(cal, comparisons, shipped, widened, corr)
    summary = {
        "classes": {k: round(c.u, 6) for k, c in cal.items()},
        "coverage_shipped": {k: round(v[0], 4) for k, v in sorted(shipped.items())},
        "corroborated": {k: round(c.u, 6) for k, c in corr.items()},
        "widened": widened_ids,
    }
    return policy_texts(cal, corr), csv_text, summary

"""Fit ionic contributions to S°(298.15 K) of inorganic solids and calibrate their uncertainty.

Latimer's form, S°(MₙXₘ, cr) ≈ n·s(M^z+) + m·s(X^q−), with the contributions fitted here by
least squares (no published table with terms that allow shipping it was available).

Training set: the shipped library's crystalline, neutral entries whose S° comes from a source
(NASA Glenn thermo.inp, ``nasa-glenn-2002``, or the CRC Handbook, ``crc-298``), not
``hypothetical_298`` and not estimated, valid at 298.15 K, that
:func:`feasibly.estimation.ionic.split_ionic` reads as one cation element and one anion. Where
a formula has several entries (polymorphs), the one of lowest G°(298.15 K) = ΔfH° − T·S° is
taken (the stable form at 298.15 K). Terms with fewer than ``MIN_SALTS`` training salts are
dropped with their salts, repeatedly, until every term rests on at least ``MIN_SALTS``.

The fit is determined up to one shift per connected set of terms (adding k·z to every cation
term of charge z and −k·q to every anion term of charge q changes no prediction); the
minimum-norm least-squares solution fixes it, and each term's ``component`` records which set
it belongs to (an estimate needs its cation and anion in the same one).

Uncertainty: leave-one-out, each salt predicted by a fit without it. Two rules are sized so
that ±1.96·u covers 95 % of the held-out errors: u = u_rel·S° and u = u_ion·(n + m); the one
with the smaller mean u over the training salts is shipped. An anion class with at least
``CLASS_MIN`` held-out salts whose own 95th percentile needs a larger u gets a factor > 1 on
it (``class_factor``); no class is given a smaller u than the pooled rule.

Writes ``ionic-entropy-contributions.csv`` (the terms, shipped), ``ionic-entropy-calibration.csv``
(one row per training salt) and ``ionic-entropy-uncertainty.json`` (the rule and the figures,
shipped).

    python data/fit_ionic_entropy.py
"""

from __future__ import annotations

import csv
import json
import math
import sys
from collections import Counter
from pathlib import Path
from typing import Any

import numpy as np

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parent / "src"))

from feasibly.errors import NotEstimable  # noqa: E402
from feasibly.estimation.ionic import ANIONS, IonicSplit, split_ionic  # noqa: E402
from feasibly.library import default_library  # noqa: E402

TERMS = HERE / "ionic-entropy-contributions.csv"
TABLE = HERE / "ionic-entropy-calibration.csv"
RULE = HERE / "ionic-entropy-uncertainty.json"
SOURCES = ("nasa-glenn-2002", "crc-298")
# A term fitted to one or two salts absorbs their errors and cannot be checked by leaving one
# out; three is the least that leaves two to fit it (common practice, no source).
MIN_SALTS = 3
# Fewest held-out salts of one anion class for its own 95th percentile to widen the pooled
# rule: below ten the percentile is the class's largest error of a handful (common practice,
# no source).
CLASS_MIN = 10
T0 = 298.15
Z95 = 1.959963984540054  # scipy.stats.norm.ppf(0.975)


def training_set() -> tuple[list[dict[str, Any]], Counter[str], dict[str, int]]:
    lib = default_library()
    best: dict[str, tuple[float, Any, IonicSplit]] = {}
    refused: Counter[str] = Counter()
    for sp in lib:
        if sp.phase != "cr" or sp.hypothetical_298 or sp.charge or sp.origin != "library":
            continue
        if sp.S298.source not in SOURCES or not sp.covers(np.array([T0]))[0]:
            continue
        try:
            split = split_ionic(sp.formula)
        except NotEstimable as exc:
            refused[_kind_of_refusal(exc.reasons[0])] += 1
            continue
        g = sp.dHf.value - T0 * sp.S298.value
        key = sp.formula
        if key not in best or g < best[key][0]:
            best[key] = (g, sp, split)
    rows = []
    for _, sp, split in sorted(best.values(), key=lambda b: b[1].formula):
        rows.append(
            {
                "id": sp.id,
                "formula": sp.formula,
                "S_source": sp.S298.source,
                "cation": split.cation,
                "n": split.n,
                "anion": split.anion,
                "m": split.m,
                "S_298": sp.S298.value,
            }
        )
    every = Counter(r["cation"] for r in rows) + Counter(r["anion"] for r in rows)
    while True:
        counts = Counter(r["cation"] for r in rows) + Counter(r["anion"] for r in rows)
        keep = [r for r in rows if min(counts[r["cation"]], counts[r["anion"]]) >= MIN_SALTS]
        if len(keep) == len(rows):
            dropped = {t: k for t, k in sorted(every.items()) if t not in counts}
            return rows, refused, dropped
        rows = keep


def _kind_of_refusal(reason: str) -> str:
    for key, kind in (
        ("no metal", "no metal cation"),
        ("more than one cation", "several cation elements"),
        ("element, not a salt", "element"),
        ("is not a whole number of one anion", "not one listed anion"),
        ("non-integer charge", "non-integer cation charge"),
        ("whole-numbered", "non-integer cation count"),
    ):
        if key in reason:
            return kind
    return "other"


def fit(rows: list[dict[str, Any]]) -> dict[str, float]:
    terms = sorted({r["cation"] for r in rows} | {r["anion"] for r in rows})
    col = {t: i for i, t in enumerate(terms)}
    A = np.zeros((len(rows), len(terms)))
    for i, r in enumerate(rows):
        A[i, col[r["cation"]]] += r["n"]
        A[i, col[r["anion"]]] += r["m"]
    b = np.array([r["S_298"] for r in rows])
    x = np.linalg.lstsq(A, b, rcond=None)[0]  # minimum-norm: fixes the per-set shift
    return {t: float(x[col[t]]) for t in terms}


def components(rows: list[dict[str, Any]]) -> dict[str, int]:
    parent: dict[str, str] = {}

    def root(t: str) -> str:
        while parent.setdefault(t, t) != t:
            t = parent[t]
        return t

    for r in rows:
        parent[root(r["cation"])] = root(r["anion"])
    roots = sorted({root(t) for t in parent})
    return {t: roots.index(root(t)) for t in sorted(parent)}


def predict(s: dict[str, float], r: dict[str, Any]) -> float:
    return r["n"] * s[r["cation"]] + r["m"] * s[r["anion"]]


def main() -> None:
    rows, refused, dropped = training_set()
    s = fit(rows)
    comp = components(rows)
    counts = Counter(r["cation"] for r in rows) + Counter(r["anion"] for r in rows)
    for i, r in enumerate(rows):
        r["S_fit"] = predict(s, r)
        rest = rows[:i] + rows[i + 1 :]
        rc = components(rest)
        ok = r["cation"] in rc and r["anion"] in rc and rc[r["cation"]] == rc[r["anion"]]
        r["S_loo"] = predict(fit(rest), r) if ok else float("nan")
    loo = [r for r in rows if np.isfinite(r["S_loo"])]
    err = np.array([r["S_loo"] - r["S_298"] for r in loo])
    pred = np.array([r["S_loo"] for r in loo])
    ions = np.array([r["n"] + r["m"] for r in loo])
    u_rel = float(np.quantile(np.abs(err / pred), 0.95, method="higher")) / Z95
    u_ion = float(np.quantile(np.abs(err) / ions, 0.95, method="higher")) / Z95
    rel_mean = float(np.mean(u_rel * np.abs([r["S_fit"] for r in rows])))
    ion_mean = float(np.mean(u_ion * np.array([r["n"] + r["m"] for r in rows])))
    if rel_mean <= ion_mean:
        rule: dict[str, Any] = {
            "kind": "relative",
            "u_rel": round(u_rel, 4),
            "rule": f"u(S°) = {round(u_rel, 4)} × S° (relative; leave-one-out calibrated)",
        }
    else:
        rule = {
            "kind": "per_ion",
            "u_per_ion": round(u_ion, 3),
            "rule": f"u(S°) = {round(u_ion, 3)} J/(mol·K) × (number of ions in the formula) "
            "(leave-one-out calibrated)",
        }

    # Widen (never narrow) the pooled rule for an anion class whose own held-out errors need
    # more: the class's 95th percentile over the pooled one, for classes with enough salts.
    base = rule["u_rel"] if rule["kind"] == "relative" else rule["u_per_ion"]
    factors = {}
    for a in sorted({r["anion"] for r in loo}):
        cls = [r for r in loo if r["anion"] == a]
        if len(cls) < CLASS_MIN:
            continue
        e_a = np.array([abs(r["S_loo"] - r["S_298"]) for r in cls])
        scale = np.array(
            [abs(r["S_loo"]) if rule["kind"] == "relative" else r["n"] + r["m"] for r in cls]
        )
        q_a = float(np.quantile(e_a / scale, 0.95, method="higher")) / Z95
        if q_a > base:
            factors[a] = math.ceil(q_a / base * 1000) / 1000  # rounded up: coverage kept
    rule["class_factor"] = factors
    if factors:
        rule["rule"] += "; times " + ", ".join(f"{f:g} for {a}" for a, f in factors.items())

    def u_of(r: dict[str, Any], S: float) -> float:
        u = base * abs(S) if rule["kind"] == "relative" else base * (r["n"] + r["m"])
        return u * factors.get(r["anion"], 1.0)

    for r in rows:
        r["u"] = u_of(r, r["S_loo"]) if np.isfinite(r["S_loo"]) else float("nan")
    by_anion = {}
    for a in sorted({r["anion"] for r in loo}):
        e = np.array([r["S_loo"] - r["S_298"] for r in loo if r["anion"] == a])
        cov = [abs(r["S_loo"] - r["S_298"]) <= Z95 * r["u"] for r in loo if r["anion"] == a]
        by_anion[a] = {
            "count": len(e),
            "mean_abs_error": round(float(np.mean(np.abs(e))), 2),
            "worst_error": round(float(e[np.argmax(np.abs(e))]), 2),
            "coverage_95": round(float(np.mean(cov)), 3),
        }
    covered = [abs(r["S_loo"] - r["S_298"]) <= Z95 * r["u"] for r in loo]
    in_sample = [abs(r["S_fit"] - r["S_298"]) <= Z95 * u_of(r, r["S_fit"]) for r in rows]
    worst = loo[int(np.argmax(np.abs(err)))]
    out = {
        "method": "S°(298.15 K) = Σ n·s(cation) + Σ m·s(anion), contributions fitted by least "
        "squares (Latimer's form; the values are this project's fit, not a published table)",
        **rule,
        "min_training_salts": MIN_SALTS,
        "training_salts": len(rows),
        "terms": len(s),
        "held_out_predicted": len(loo),
        "held_out_not_determined": len(rows) - len(loo),
        "loo_mean_error": round(float(np.mean(err)), 3),
        "loo_mean_abs_error": round(float(np.mean(np.abs(err))), 3),
        "loo_worst_error": round(float(err[np.argmax(np.abs(err))]), 3),
        "loo_worst": worst["formula"],
        "loo_coverage_95": round(float(np.mean(covered)), 4),
        "fit_coverage_95": round(float(np.mean(in_sample)), 4),
        "fit_rms_error": round(
            float(np.sqrt(np.mean([(r["S_fit"] - r["S_298"]) ** 2 for r in rows]))), 3
        ),
        "alternative_rule_mean_u": {"relative": round(rel_mean, 3), "per_ion": round(ion_mean, 3)},
        "by_anion": by_anion,
        "dropped_terms": dropped,
        "basis": "S° of the library's crystalline salts (NASA Glenn thermo.inp, CRC Handbook); "
        "data/ionic-entropy-calibration.csv; refit with data/fit_ionic_entropy.py",
        "anions_recognised": list(ANIONS),
    }
    with TERMS.open("w", newline="", encoding="utf-8") as f:
        w = csv.writer(f, lineterminator="\n")
        w.writerow(["term", "kind", "charge", "s_J_per_mol_K", "compounds", "component"])
        cations = {r["cation"]: split_ionic(r["formula"]).charge for r in rows}
        for t in sorted(s, key=lambda t: (t not in cations, t)):
            kind, charge = ("cation", cations[t]) if t in cations else ("anion", -ANIONS[t][1])
            w.writerow([t, kind, charge, f"{s[t]:.3f}", counts[t], comp[t]])
    with TABLE.open("w", newline="", encoding="utf-8") as f:
        fields = [
            "id",
            "formula",
            "S_source",
            "cation",
            "n",
            "anion",
            "m",
            "S_298",
            "S_fit",
            "S_loo",
            "u",
        ]
        w2 = csv.DictWriter(f, fieldnames=fields, lineterminator="\n")
        w2.writeheader()
        for r in rows:
            w2.writerow({k: (round(v, 3) if isinstance(v, float) else v) for k, v in r.items()})
    RULE.write_text(json.dumps(out, indent=1, ensure_ascii=False) + "\n", "utf-8")
    print(
        {
            k: v
            for k, v in out.items()
            if k not in ("method", "basis", "by_anion", "anions_recognised")
        }
    )
    for a, v in by_anion.items():
        print(f"  {a:<8} {v}")
    print("refused from the library's solids:", dict(refused))


if __name__ == "__main__":
    main()

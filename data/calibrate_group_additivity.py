"""Calibrate the uncertainty of the Benson group-additivity estimates against outside values.

Rewrites ``group-additivity-calibration.csv`` (one row per species the method covers: estimate,
reference value and its source, error) and ``group-additivity-uncertainty.json`` (the rule the
estimator applies, with the figures per class).

References, all as carried by the ``chemicals`` package (MIT):
- ΔfH°(g, 298.15 K): ATcT 1.112 where it has the species, otherwise the NIST Chemistry WebBook
  value, otherwise the CRC Handbook value;
- S°(g, 298.15 K): CRC Handbook, otherwise NIST WebBook;
- Cp: the TRC ideal-gas Cp correlation (Frenkel et al., TRC Thermodynamic Tables) integrated
  from 298.15 K to the estimate's top temperature (at most 1000 K): the relative error of the
  enthalpy increment h(T) is what the library's Cp factor scales.

The candidates are every CAS number with a gas ΔfH° in those tables whose formula holds only
C, H and O (with C); the structure is the SMILES chemicals gives for it. The estimator refuses
what it does not cover; the refusals are counted by reason.

The rule: per class (alkane, unsaturated, aromatic, oxygenate; a class with fewer than
``MIN_CLASS`` species uses the pooled figure), u = k·√n with n the number of groups, where k
is the smallest value for which the interval ±1.96·u covers the reference for 95 % of that
class. The group values themselves were fitted by their authors (Benson 1976) to data that
overlap these references, so this is not an independent test of the group values; what is
held out is the rule: the leave-one-out coverage recomputes k without each species and asks
whether that species' interval covers its reference.

    python data/calibrate_group_additivity.py      # needs rdkit and chemicals; ~5 minutes
"""

from __future__ import annotations

import csv
import json
import math
import re
import sys
from collections import Counter
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parent / "src"))

from feasibly.errors import NotEstimable  # noqa: E402
from feasibly.estimation import nominal_gas  # noqa: E402
from feasibly.estimation.gas import fit_cp  # noqa: E402

TABLE = HERE / "group-additivity-calibration.csv"
RULE = HERE / "group-additivity-uncertainty.json"
#: Classes with fewer species than this take the pooled k: a 95th percentile of fewer than 15
#: values is the largest or second-largest of them, too unstable to state per class.
MIN_CLASS = 15
#: Largest molecule tried (heavy atoms): the group tables were set up on small molecules, and
#: the symmetry search grows with size.
MAX_HEAVY = 16
Z95 = 1.959963984540054  # two-sided 95 % normal quantile (scipy.stats.norm.ppf(0.975))
T_CP_MAX = 1000.0  # top of the Cp comparison: TRC correlations are fitted to about there


def _cho(formula: str) -> bool:
    els = set(re.findall(r"[A-Z][a-z]?", formula))
    return "C" in els and els <= {"C", "H", "O"} and "+" not in formula and "-" not in formula


def references() -> list[dict]:
    from chemicals import heat_capacity, identifiers, miscdata, reaction

    reaction._load_reaction_data()
    atct = reaction.Hfg_ATcT_data
    wb = miscdata.webbook_data.copy()
    # The WebBook table is indexed by the CAS number as an integer (check digit last).
    wb.index = [_cas_text(c) for c in wb.index]
    crc = heat_capacity.CRC_standard_data
    trc = heat_capacity.TRC_gas_data
    cas_all = sorted(
        {
            c
            for c in set(atct.index)
            | set(wb.index[wb["Hfg"].notna()])
            | set(crc.index[crc["Hfg"].notna()])
            if isinstance(c, str)
        }
    )
    out: list[dict] = []
    seen: dict[str, dict] = {}
    for cas in cas_all:
        try:
            meta = identifiers.search_chemical(cas)
        except Exception:  # an unknown CAS number in chemicals' own tables: skip it
            continue
        if not meta.smiles or not _cho(meta.formula) or meta.CASs != cas:
            continue  # (a CAS number resolved to another substance's record is not used)
        if _atct_matches(atct, cas, meta.formula):
            h, hsrc = float(atct.at[cas, "Hfg"]), "ATcT 1.112"
        elif cas in wb.index and not math.isnan(wb.at[cas, "Hfg"]):
            h, hsrc = float(wb.at[cas, "Hfg"]), "NIST WebBook"
        elif cas in crc.index and not math.isnan(crc.at[cas, "Hfg"]):
            h, hsrc = float(crc.at[cas, "Hfg"]), "CRC Handbook"
        else:
            continue
        s, ssrc = math.nan, ""
        if cas in crc.index and not math.isnan(crc.at[cas, "S0g"]):
            s, ssrc = float(crc.at[cas, "S0g"]), "CRC Handbook"
        elif cas in wb.index and not math.isnan(wb.at[cas, "S0g"]):
            s, ssrc = float(wb.at[cas, "S0g"]), "NIST WebBook"
        cp = None
        if cas in trc.index:
            row = trc.loc[cas]
            cp = {k: float(row[k]) for k in ("Tmin", "Tmax", *(f"a{i}" for i in range(8)))}
        key = _canonical(meta.smiles)
        if key in seen:  # another CAS number of the same structure: keep the better source
            prev = seen[key]
            if _RANK[hsrc] < _RANK[prev["H_src"]]:
                out.remove(prev)
            else:
                continue
        out.append(
            {
                "cas": cas,
                "name": meta.common_name,
                "smiles": meta.smiles,
                "formula": meta.formula,
                "H": h,
                "H_src": hsrc,
                "S": s,
                "S_src": ssrc,
                "trc": cp,
            }
        )
        seen[key] = out[-1]
    return out


_RANK = {"ATcT 1.112": 0, "NIST WebBook": 1, "CRC Handbook": 2}


def _cas_text(c: object) -> object:
    if isinstance(c, (int, np.integer)):
        d = str(int(c))
        return f"{d[:-3]}-{d[-3:-1]}-{d[-1]}"
    return c


def _canonical(smiles: str) -> str:
    from rdkit import Chem

    mol = Chem.MolFromSmiles(smiles)
    return smiles if mol is None else Chem.MolToSmiles(mol)


def _atct_matches(atct, cas: str, formula: str) -> bool:
    """True when ATcT has this CAS number for a neutral species of the same composition (some
    of its CAS numbers belong to ions or other isomers in chemicals' identifier tables)."""
    from feasibly.errors import FeasiblyError
    from feasibly.library.formula import parse_formula

    if cas not in atct.index or math.isnan(atct.at[cas, "Hfg"]):
        return False
    text = str(atct.at[cas, "Formula"]).replace("(g)", "").strip()
    if "+" in text or "-" in text or "[" in text:
        return False
    try:
        return parse_formula(text).key() == parse_formula(formula).key()
    except FeasiblyError:
        return False


def _trc_h(T: float, c: dict) -> float:
    from chemicals.heat_capacity import TRCCp_integral

    args = [c[f"a{i}"] for i in range(8)]
    return float(TRCCp_integral(T, *args) - TRCCp_integral(298.15, *args))


def _est_h(coeffs: tuple[float, ...], T: float) -> float:
    from feasibly.library.cp_models import Nasa7

    poly = Nasa7.from_lists([298.15, max(T, 298.16)], [list(coeffs)])
    return float(poly.h_inc(np.array([T]))[0])


def k_for(ratios: np.ndarray) -> float:
    """Smallest k with |err|/√n ≤ 1.96·k for 95 % of the values (the 'higher' quantile)."""
    return float(np.quantile(ratios, 0.95, method="higher")) / Z95


def main() -> None:
    refs = references()
    rows, refused = [], Counter()
    for r in refs:
        from rdkit import Chem

        mol = Chem.MolFromSmiles(r["smiles"])
        if mol is None or mol.GetNumHeavyAtoms() > MAX_HEAVY:
            refused["larger than the calibrated size or unreadable"] += 1
            continue
        try:
            est = nominal_gas(r["smiles"])
        except NotEstimable as exc:
            first = exc.reasons[0]
            key = (
                "missing group values"
                if "no value for" in first or "gives" in first
                else "ring without correction"
                if "ring" in first
                else "cis/trans not given"
                if "cis and trans" in first
                else "cumulene"
                if "cumulated" in first
                else "radical"
                if "radical" in first
                else "other: " + first[:60]
            )
            refused[key] += 1
            continue
        coeffs, resid = fit_cp(np.array(est["cp_T"]), np.array(est["cp"]))
        h_est = h_ref = math.nan
        T_cp = math.nan
        if r["trc"] is not None:
            T_cp = min(est["cp_T"][-1], T_CP_MAX, r["trc"]["Tmax"])
            if T_cp > 400 and r["trc"]["Tmin"] <= 300:
                h_est, h_ref = _est_h(coeffs, T_cp), _trc_h(T_cp, r["trc"])
            else:
                T_cp = math.nan
        rows.append(
            {
                "cas": r["cas"],
                "name": r["name"],
                "smiles": est["smiles"],
                "class": est["class"],
                "n_groups": est["n_groups"],
                "sigma": est["sigma"],
                "dHf_est": round(est["dHf"], 1),
                "dHf_ref": r["H"],
                "dHf_ref_source": r["H_src"],
                "S_est": round(est["S298"], 3),
                "S_ref": r["S"],
                "S_ref_source": r["S_src"],
                "cp_fit_max_residual": round(resid, 4),
                "T_cp": T_cp,
                "h_inc_est": round(h_est, 1),
                "h_inc_ref": round(h_ref, 1),
            }
        )
    with TABLE.open("w", newline="", encoding="utf-8") as f:
        w = csv.DictWriter(f, fieldnames=list(rows[0]), lineterminator="\n")
        w.writeheader()
        for row in sorted(rows, key=lambda x: (x["class"], x["cas"])):
            w.writerow(
                {k: ("" if isinstance(v, float) and math.isnan(v) else v) for k, v in row.items()}
            )
    rule = calibrate(rows)
    rule["candidates"] = len(refs)
    rule["covered"] = len(rows)
    rule["refused"] = dict(sorted(refused.items()))
    RULE.write_text(json.dumps(rule, indent=1, ensure_ascii=False) + "\n", "utf-8")
    report(rule)


def _errors(rows: list[dict], what: str) -> tuple[np.ndarray, np.ndarray]:
    est, ref = f"{what}_est", f"{what}_ref"
    ok = [r for r in rows if not math.isnan(float(r[ref]))]
    err = np.array([float(r[est]) - float(r[ref]) for r in ok])
    n = np.array([float(r["n_groups"]) for r in ok])
    return err, n


def _figures(err: np.ndarray, n: np.ndarray, k: float, loo: bool) -> dict:
    ratio = np.abs(err) / np.sqrt(n)
    inside = np.abs(err) <= Z95 * k * np.sqrt(n)
    out = {
        "count": len(err),
        "mean_error": float(np.mean(err)),
        "mean_abs_error": float(np.mean(np.abs(err))),
        "worst_error": float(err[np.argmax(np.abs(err))]),
        "coverage_95": float(np.mean(inside)),
    }
    if loo:
        hits = [
            abs(err[i]) <= Z95 * k_for(np.delete(ratio, i)) * math.sqrt(n[i])
            for i in range(len(err))
        ]
        out["coverage_95_leave_one_out"] = float(np.mean(hits))
    return out


def _class_figures(sub: list[dict]) -> dict:
    """k (or u_rel) and the figures of one set of species, per property; None where a property
    has fewer than MIN_CLASS species."""
    out: dict = {}
    for what, key in (("dHf", "k_dHf_J_per_mol"), ("S", "k_S_J_per_mol_K")):
        err, n = _errors(sub, what)
        if len(err) < MIN_CLASS:
            out[what] = None
            continue
        k = round(k_for(np.abs(err) / np.sqrt(n)), 1 if what == "dHf" else 3)
        out[key] = k
        out[what] = _figures(err, n, k, True)
    cp = [r for r in sub if not math.isnan(float(r["h_inc_ref"]))]
    rel = np.array([abs(r["h_inc_est"] / r["h_inc_ref"] - 1) for r in cp])
    if len(rel) < MIN_CLASS:
        out["cp_increment"] = None
    else:
        u_cp = round(float(np.quantile(rel, 0.95, method="higher")) / Z95, 4)
        out["u_rel_cp"] = u_cp
        out["cp_increment"] = {
            "count": len(rel),
            "mean_abs_rel_error": float(np.mean(rel)),
            "worst_rel_error": float(np.max(rel)),
            "coverage_95": float(np.mean(rel <= Z95 * u_cp)),
        }
    return out


def calibrate(rows: list[dict]) -> dict:
    classes = sorted({r["class"] for r in rows})
    pooled = _class_figures(rows)
    result: dict = {"classes": {"pooled": pooled}}
    for cls in classes:
        block = _class_figures([r for r in rows if r["class"] == cls])
        for what, key in (
            ("dHf", "k_dHf_J_per_mol"),
            ("S", "k_S_J_per_mol_K"),
            ("cp_increment", "u_rel_cp"),
        ):
            if block[what] is None:
                block[key] = pooled[key]
                block[what] = f"fewer than {MIN_CLASS} species: the pooled value is used"
        result["classes"][cls] = block
    # Coverage of the rule as applied (each species with its own class's k) over all species.
    applied = {}
    for what, key in (("dHf", "k_dHf_J_per_mol"), ("S", "k_S_J_per_mol_K")):
        hits = [
            abs(float(r[f"{what}_est"]) - float(r[f"{what}_ref"]))
            <= Z95 * result["classes"][r["class"]][key] * math.sqrt(float(r["n_groups"]))
            for r in rows
            if not math.isnan(float(r[f"{what}_ref"]))
        ]
        applied[what] = {"count": len(hits), "coverage_95": float(np.mean(hits))}
    by_source = {}
    for src in sorted({r["dHf_ref_source"] for r in rows}):
        sub = [r for r in rows if r["dHf_ref_source"] == src]
        err = np.array([float(r["dHf_est"]) - float(r["dHf_ref"]) for r in sub])
        u = np.array(
            [
                result["classes"][r["class"]]["k_dHf_J_per_mol"] * math.sqrt(float(r["n_groups"]))
                for r in sub
            ]
        )
        by_source[src] = {
            "count": len(sub),
            "mean_error": float(np.mean(err)),
            "mean_abs_error": float(np.mean(np.abs(err))),
            "worst_error": float(err[np.argmax(np.abs(err))]),
            "coverage_95": float(np.mean(np.abs(err) <= Z95 * u)),
        }
    applied["dHf_by_reference"] = by_source
    result["applied_rule_coverage"] = applied
    result["rule"] = (
        "u(ΔfH°) = k_dHf·√n, u(S°) = k_S·√n (n = number of groups), u_rel(Cp) per class; "
        "k is the smallest value for which ±1.96·u covers the reference for 95 % of the class "
        f"(a class with fewer than {MIN_CLASS} reference values for a property takes the "
        "pooled value for it)"
    )
    result["basis"] = (
        "calibrated against ATcT 1.112 / NIST WebBook / CRC ΔfH°, CRC / WebBook S° and TRC "
        "ideal-gas Cp via the chemicals package; data/group-additivity-calibration.csv"
    )
    return result


def report(rule: dict) -> None:
    print(f"candidates {rule['candidates']}, covered {rule['covered']}, refused {rule['refused']}")
    kname = {"dHf": "k_dHf_J_per_mol", "S": "k_S_J_per_mol_K"}
    for cls, b in rule["classes"].items():
        parts = [f"{cls:12s}"]
        for what, unit, scale in (("dHf", "kJ/mol", 1000), ("S", "J/(mol K)", 1)):
            f = b[what]
            if isinstance(f, str):
                parts.append(f"{what}: {f}")
                continue
            parts.append(
                f"{what}: n={f['count']} k={b[kname[what]] / scale:.2f} {unit} "
                f"mean {f['mean_error'] / scale:+.2f} |mean| {f['mean_abs_error'] / scale:.2f} "
                f"worst {f['worst_error'] / scale:+.1f} cov {f['coverage_95']:.3f} "
                f"LOO {f['coverage_95_leave_one_out']:.3f}"
            )
        c = b["cp_increment"]
        parts.append(
            f"Cp: {c}"
            if isinstance(c, str)
            else f"Cp h(T): n={c['count']} u_rel {b['u_rel_cp']:.3f} "
            f"worst {c['worst_rel_error']:.3f} cov {c['coverage_95']:.3f}"
        )
        print(" | ".join(parts))
    print("rule as applied:", rule["applied_rule_coverage"])


if __name__ == "__main__":
    main()

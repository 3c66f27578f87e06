"""Cross-checks that fail the build.

Every entry's ΔfH°(298.15 K) and S°(298.15 K) is compared with its own source record and with
every independent compilation the build can read that has the species:

* its own record: a thermo.inp record's header ΔfH° vs the polynomial's own H(298.15); a CRC row's
  ΔfG° vs ΔfH° − T·ΔfS° (element entropies from the library's reference states);
* NIST-JANAF 4th ed. (janaf package; the matched table), ATcT 1.112 (chemicals), the CRC/NBS
  298.15 K table (chemicals, by CAS and phase), and Cantera's older NASA files (by NASA name).

A gap larger than ``K_COVERAGE`` times the combined standard uncertainty √(u_entry² + u_other²)
fails the build, unless ``tables/dispositions.toml`` holds a written reason and the value chosen
for that (entry, quantity, compilation); the reason is then copied to the entry's notes. The
other compilation's u is its stated one (ATcT) or, where it states none in a form the build can
read, the policy u of the same class (JANAF, Cantera's NASA files: the NASA policies; CRC: the
crc policies).

The physical checks are :mod:`.physical_checks`.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from typing import Any

from chemicals.elements import periodic_table

from .comparisons import RELATIVE, ROW_U, crc_row_dfg, element_entropies, value_class
from .crc import CRC_FILE
from .entries import Entry
from .errors import need
from .nasa import load_nasa
from .physical_checks import physical_failures
from .policies import value_block
from .polynomials import poly_298
from .sources import fnum, pkg_file, read_tsv
from .tables import dispositions

#: Coverage factor of the cross-check: a gap beyond 2 combined standard uncertainties (about
#: 95 % for a normal difference) fails. Common practice, no source.
K_COVERAGE = 2.0
#: Standard uncertainty given to the agreement of a record's header ΔfH° with its own polynomial,
#: J/mol: the header is rounded and the fit reproduces its table to a few J/mol; 25 J/mol (a 50
#: J/mol limit at k = 2, as for reference states in reference_states.py) is fitting round-off
#: only (common practice, no source).
OWN_RECORD_J_PER_MOL = 25.0


def _u_class(e: Entry, quantity: str, classes: Mapping[str, float]) -> float:
    """The calibrated u of ``e``'s class (``classes``: the calibration's chosen u per class),
    used for a compilation that states none the build reads."""
    cls = value_class(e, "dHf" if quantity == "dHf_298" else "S")
    need(cls is not None, f"{e['id']}: no calibration class for {quantity}")
    assert cls is not None
    u = classes[cls]
    return u * abs(e["S_298"]["value"]) if cls in RELATIVE else u


def _comparisons(
    entries: list[Entry],
    janaf: Mapping[str, Mapping[str, Any]],
    jmatch: Mapping[str, str],
    gaps_atct: Mapping[str, Mapping[str, float]],
    classes: Mapping[str, float],
) -> list[dict[str, Any]]:
    crc_rows = read_tsv(pkg_file("chemicals", *CRC_FILE), ["CAS", "Hfs", "S0s"])
    crc = {r["CAS"]: r for r in crc_rows}
    old: dict[str, tuple[float, float]] = {}
    for fname in ("nasa_gas.yaml", "nasa_condensed.yaml"):
        for s in load_nasa(fname):
            th = s["thermo"]
            old[s["name"]] = poly_298(th["temperature-ranges"], th["data"])
    letter = {"cr": "s", "l": "l", "g": "g"}
    out = []
    for e in entries:
        if e["charge"]:
            continue  # ion conventions differ between compilations (see data/README.md)
        vals: list[tuple[str, str, float, float]] = []  # quantity, compilation, value, u
        if e["hypothetical_298"]:
            # A phase that does not exist at 298.15 K: thermo.inp's header then carries the
            # compound's ΔfH° (of its 298.15 K phase), and the compilations tabulate other
            # conventions; only the continuity of G at its transition checks it.
            continue
        if "_record_dhf" in e:
            h_poly = poly_298(e["cp"]["T_breaks_K"], e["cp"]["coefficients"])[0]
            out.append(
                _cmp(
                    e,
                    "dHf_298",
                    "own record header",
                    e["_record_dhf"],
                    OWN_RECORD_J_PER_MOL,
                    h_poly,
                    0.0,
                )
            )
        if e["id"] in jmatch:
            j = janaf[jmatch[e["id"]]]
            if j["dHf298"] is not None:
                vals.append(("dHf_298", f"janaf-4 {jmatch[e['id']]}", j["dHf298"],
                             _u_class(e, "dHf_298", classes)))  # fmt: skip
            if j["S298"] is not None:
                vals.append(("S_298", f"janaf-4 {jmatch[e['id']]}", j["S298"],
                             _u_class(e, "S_298", classes)))  # fmt: skip
        if "atct-1.112" in gaps_atct.get(e["id"], {}) and e["dHf_298"]["source"] != "atct-1.112":
            vals.append(("dHf_298", "atct-1.112", gaps_atct[e["id"]]["atct-1.112"],
                         e.get("_atct_u", 0.0)))  # fmt: skip
        if e["cas"] in crc and e["dHf_298"]["source"] != "crc-298":
            r = crc[e["cas"]]
            ph = letter[e["phase"]]
            h, s, g = (fnum(r.get(f"{k}{ph}")) for k in ("Hf", "S0", "Gf"))
            # The CAS lookup can point at another compound (a wrong CAS in the identifier
            # database): the row is compared only when its ΔfH°, S°, ΔfG° are consistent with this
            # entry's composition (ΔfG° = ΔfH° − T·ΔfS°, the CRC row-check limit).
            if h is None or s is None or g is None or not _row_fits(e, h, s, g, entries):
                h = s = None
            if h is not None:
                vals.append(("dHf_298", "crc-298", h, _u_class(e, "dHf_298", classes)))
            if s is not None and e["S_298"]["source"] != "crc-298":
                vals.append(("S_298", "crc-298", s, _u_class(e, "S_298", classes)))
        if e.get("_record_name") in old:
            h, s = old[e["_record_name"]]
            vals.append(("dHf_298", "nasa-glenn-1993", h, _u_class(e, "dHf_298", classes)))
            vals.append(("S_298", "nasa-glenn-1993", s, _u_class(e, "S_298", classes)))
        for q, src, v, u in vals:
            out.append(_cmp(e, q, src, v, u, e[q]["value"], e[q]["u"]))
        if "_crc_gf" in e:
            out.append(_cmp_gf(e, entries))
    return [c for c in out if c is not None]


def _cmp(
    e: Entry, q: str, src: str, other: float, u_other: float, mine: float, u_mine: float
) -> dict[str, Any]:
    u_c = math.hypot(u_mine, u_other)
    gap = mine - other
    return {
        "id": e["id"],
        "quantity": q,
        "compilation": src,
        "library": round(mine, 3),
        "other": round(other, 3),
        "gap": round(gap, 3),
        "u_combined": round(u_c, 3),
        "fails": abs(gap) > K_COVERAGE * u_c + 1e-6,
    }


_REF_S: dict[str, float] = {}


def _cmp_gf(e: Entry, entries: list[Entry]) -> dict[str, Any] | None:
    """A CRC row's own consistency: ΔfG° vs ΔfH° − T(S° − Σ S°(elements))."""
    if not _REF_S:
        _REF_S.update(element_entropies(entries))
    gf = e["_crc_gf"]
    if gf is None:
        return None
    h = e.get("_crc_hf", e["dHf_298"]["value"])
    g_calc = crc_row_dfg(e["elements"], h, e["S_298"]["value"], _REF_S)
    if g_calc is None:
        return None
    return _cmp(e, "dfG_298 (own row)", "crc-298 row dfG", gf, 0.0, g_calc, ROW_U)


def _row_fits(e: Entry, h: float, s: float, g: float, entries: list[Entry]) -> bool:
    """Whether a CRC row (ΔfH°, S°, ΔfG°) is consistent with the composition of entry ``e``."""
    probe = {"elements": e["elements"], "_crc_hf": h, "_crc_gf": g, "S_298": {"value": s},
             "id": e["id"], "dHf_298": {"value": h}}  # fmt: skip
    c = _cmp_gf(probe, entries)
    return c is not None and not c["fails"]


def drop_unverified_crc(entries: list[Entry], dropped: list[str]) -> list[Entry]:
    """Automatic non-organic CRC entries whose formula comes from chemicals' identifier database
    (wrong for some salts, e.g. HoO for holmium oxide) are kept only when the row's own ΔfG°
    agrees with
    ΔfH° − T(S° − ΣS°(elements)) for that composition within the cross-check limit: the check
    verifies the composition as well as the row."""
    keep = []
    refs = {e["reference_state_of"] for e in entries if e["reference_state_of"]}
    for e in entries:
        if e.get("_crc_auto") and set(e["elements"]) - refs:
            dropped.append(
                f"CRC {e['cas']} {e['id']}: element(s) {sorted(set(e['elements']) - refs)} "
                "without a reference state in the library, left out"
            )
            continue
        if e.get("_crc_auto") and len(e["elements"]) == 1:
            (el,) = e["elements"]
            name = e["names"][0] if e["names"] else ""
            if not name.lower().startswith(str(periodic_table[el].name).lower()):
                dropped.append(f"CRC {e['cas']} {e['id']}: '{name}' is not element {el}, left out")
                continue
        elif "_crc_auto" in e:
            c = _cmp_gf(e, entries) if e.get("_crc_gf") is not None else None
            # a row whose own ΔfG disagrees is left out whatever its formula's origin; a row
            # without ΔfG only when its formula needs the check (see above)
            if (c is not None and c["fails"]) or (c is None and e["_crc_auto"]):
                why = "no dfG in the row" if c is None else f"dfG check gap {c['gap']:+.0f} J/mol"
                dropped.append(
                    f"CRC {e['cas']} {e['id']}: composition not verified ({why}), left out"
                )
                continue
        keep.append(e)
    return keep


#: Largest gap a supersession rule may excuse; beyond it only a written disposition does (a gap
#: this large is more likely a defect than a re-evaluation: e.g. the S° = 631 J/(mol K) of
#: NH4ClO4 or the ΔfH° = −8.3 kJ/mol of NiO this library once carried). Common practice, no
#: source.
RULE_CAP = {"dHf_298": 30000.0, "S_298": 10.0}


def supersession(c: Mapping[str, Any], e: Entry) -> str | None:
    """The written rule under which a compilation's disagreement is accepted, if one applies."""
    q, comp = c["quantity"], c["compilation"].split(" ")[0]
    if q not in RULE_CAP or abs(c["gap"]) > RULE_CAP[q]:
        return None
    src = e[q]["source"]
    if src == "atct-1.112":
        return "rule atct-network: the ATcT 1.112 thermochemical-network value supersedes " + comp
    return None


_SUMMARY_KEYS = ("id", "quantity", "compilation", "library", "other", "gap", "u_combined")


def _explained(comps: list[dict[str, Any]], why: str) -> list[dict[str, Any]]:
    """The comparisons a ``why`` ("disposition" or "rule") explains, for source-gaps.json."""
    return sorted(
        ({k: c[k] for k in (*_SUMMARY_KEYS, why)} for c in comps if c.get(why)),
        key=lambda c: (c["id"], c["quantity"], c["compilation"]),
    )


def run_crosschecks(
    entries: list[Entry],
    janaf: Mapping[str, Mapping[str, Any]],
    jmatch: Mapping[str, str],
    gaps_atct: Mapping[str, Mapping[str, float]],
    classes: Mapping[str, float],
) -> dict[str, Any]:
    """Run every check; stop the build on an unexcused failure. Returns the summary written
    to source-gaps.json (``crosschecks``)."""
    comps = _comparisons(entries, janaf, jmatch, gaps_atct, classes)
    disp = dispositions()
    by_id = {e["id"]: e for e in entries}
    used = set()
    unexcused = []
    widen: dict[tuple[str, str], list[dict[str, Any]]] = {}
    for c in comps:
        if not c["fails"]:
            continue
        k = (c["id"], c["quantity"], c["compilation"].split(" ")[0])
        d = disp.get(k)
        e = by_id[c["id"]]
        if d is None:
            rule = supersession(c, e)
            if rule is None and e[c["quantity"]]["source"] in ("nasa-glenn-2002", "crc-298"):
                widen.setdefault((c["id"], c["quantity"]), []).append(c)
                continue
            if rule is None:
                unexcused.append(c)
            else:
                c["rule"] = rule
                e["notes"].append(
                    f"disputed {c['quantity']}: {c['compilation']} gives {c['other']:g}, "
                    f"{c['gap']:+g} from the value used; {rule}"
                )
            continue
        need(
            math.isclose(d.value, e[c["quantity"]]["value"], rel_tol=0, abs_tol=1e-3)
            if c["quantity"] in ("dHf_298", "S_298")
            else True,
            f"dispositions.toml {k}: value {d.value} is not the library's {c['library']}",
        )
        used.add(k)
        c["disposition"] = d.reason
        e["notes"].append(
            f"disputed {c['quantity']}: {c['compilation']} gives {c['other']:g}, "
            f"{c['gap']:+g} from the value used ({d.value:g}, {d.chosen}): {d.reason}"
        )
    for (eid, q), cs in sorted(widen.items()):
        e = by_id[eid]
        worst = max(abs(c["gap"]) for c in cs)
        old = e[q]
        pid = "disputed-dHf-compilations" if q == "dHf_298" else "disputed-S-compilations"
        e[q] = value_block(old["value"], worst, "half-width-rectangular", old["source"],
                           old["entry"], f"policy:{pid}", True)  # fmt: skip
        who = "; ".join(f"{c['compilation']} {c['other']:g} ({c['gap']:+g})" for c in cs)
        for c in cs:
            c["rule"] = f"policy {pid}: NASA value kept, u widened to cover the gap"
        e["notes"].append(
            f"disputed {q}: {who} differ from the {old['source']} value {old['value']:g} "
            "beyond the "
            "cross-check limit with no supersession rule; value kept, uncertainty a rectangular "
            f"half-width of {worst:g} (policy {pid})"
        )
    phys = physical_failures(entries)
    lines = [
        f"{c['id']} {c['quantity']} vs {c['compilation']}: library {c['library']:g}, other "
        f"{c['other']:g}, gap {c['gap']:+g} > {K_COVERAGE:g} x u_c {c['u_combined']:g}"
        for c in unexcused
    ]
    need(
        not lines and not phys,
        "cross-checks failed:\n  " + "\n  ".join(lines + phys),
    )
    return {
        "rule": (
            f"gap > {K_COVERAGE:g} x sqrt(u_entry^2 + u_other^2) fails unless "
            "tables/dispositions.toml gives a reason and the chosen value"
        ),
        "comparisons": len(comps),
        "beyond_2u": sum(1 for c in comps if c["fails"]),
        "excused": _explained(comps, "disposition"),
        "excused_by_rule": _explained(comps, "rule"),
        "unused_dispositions": sorted(f"{a} {b} {c}" for a, b, c in set(disp) - used),
    }

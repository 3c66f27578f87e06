"""The HTML report and Markdown form of a decision record (private to :mod:`feasibly.records`).

The HTML is one self-contained file: inline CSS and inline SVG figures, no scripts, no fonts or
images from elsewhere, and a Content-Security-Policy that forbids any network request. Every
piece of text taken from the record is HTML-escaped, so a record cannot inject markup or script.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from html import escape
from typing import Any

from ..conditions import STANDARD_PRESSURE_PA
from ..thermo.safety import DEFERRAL
from ..uncertainty.linear import window_phrase
from ._svg import OKABE_ITO, Band, HLine, Line, chart

__all__ = ["render_html", "render_markdown"]

#: How each sampling method reads in a report.
_METHOD_WORDS = {
    "mc": "plain Monte Carlo",
    "mc-per-species": "plain Monte Carlo, one stream per species input",
    "sobol": "scrambled Sobol",
}

_VERDICT_COLOUR = {
    "feasible": OKABE_ITO["green"],
    "favourable": OKABE_ITO["green"],
    "not feasible": OKABE_ITO["vermillion"],
    "not favourable": OKABE_ITO["vermillion"],
    "not shown feasible": OKABE_ITO["vermillion"],
}
_SCOPE = (
    "Scope: this record is a thermodynamic screening result from sourced property data and "
    "their stated uncertainties. It says nothing about reaction rate, hazards or scale-up."
)

_CSS = """
body { font-family: system-ui, sans-serif; color: #111; max-width: 60rem; margin: 1.5rem auto;
       padding: 0 1rem; line-height: 1.4; }
h1 { font-size: 1.5rem; margin-bottom: .2rem; } h2 { font-size: 1.15rem; margin-top: 1.6rem;
     border-bottom: 1px solid #999; }
.equation { font-size: 1.3rem; font-family: Georgia, serif; }
.muted { color: #444; font-size: .9rem; }
.verdict { border: 3px solid var(--c); border-left-width: 12px; padding: .6rem 1rem;
           margin: 1rem 0; }
.verdict .word { font-size: 1.4rem; font-weight: bold; text-transform: uppercase; }
.caution { border: 2px solid #D55E00; padding: .5rem 1rem; margin: .8rem 0; }
table { border-collapse: collapse; margin: .5rem 0; font-size: .88rem; }
th, td { border: 1px solid #bbb; padding: .2rem .45rem; text-align: right; vertical-align: top; }
th { background: #eee; } td.t, th.t { text-align: left; }
code, .hash { font-family: ui-monospace, monospace; font-size: .82rem; word-break: break-all; }
svg.figure { max-width: 100%; height: auto; display: block; margin: .6rem 0; }
.sign { display: flex; gap: 3rem; margin-top: 2rem; }
.sign div { flex: 1; border-top: 1px solid #000; padding-top: .2rem; }
@page { margin: 15mm; }
@media print {
  body { max-width: none; margin: 0; font-size: 10pt; }
  h2, table, figure, .verdict, .caution { break-inside: avoid; }
  th { background: #eee !important; print-color-adjust: exact; -webkit-print-color-adjust: exact; }
}
"""


def _num(x: Any, scale: float = 1.0, digits: int = 2) -> str:
    if isinstance(x, (int, float)) and not isinstance(x, bool) and math.isfinite(x):
        return f"{x / scale:,.{digits}f}"
    return "—" if x is None else escape(str(x))


def _pct(p: Any, digits: int = 1) -> str:
    return f"{p:.{digits}%}" if isinstance(p, (int, float)) and math.isfinite(p) else "—"


def _code(x: Any) -> str:
    """Text for a Markdown code span: escaped, and no backtick to end the span early."""
    return escape(str(x)).replace("`", "&#96;")


def _e(x: Any) -> str:
    return escape(str(x))


def _table(header: Sequence[str], rows: Sequence[Sequence[str]], text_cols: int = 0) -> str:
    def cell(tag: str, i: int, v: str) -> str:
        cls = ' class="t"' if i < text_cols else ""
        return f"<{tag}{cls}>{v}</{tag}>"

    head = "".join(cell("th", i, _e(h)) for i, h in enumerate(header))
    body = "".join(
        "<tr>" + "".join(cell("td", i, v) for i, v in enumerate(r)) + "</tr>" for r in rows
    )
    return f"<table><thead><tr>{head}</tr></thead><tbody>{body}</tbody></table>"


def _window_text(doc: Mapping[str, Any]) -> list[str]:
    unc = doc["results"]["uncertainty"]
    if unc is None:
        return []
    level = f"{doc['uncertainty']['confidence']:.0%}"
    out = []
    for w in unc["feasible_window"]:
        lo = (
            f"the lower end of the range ({w['T_lo_K']:.0f} K) or below"
            if w["lo_open"]
            else f"{w['T_lo_K']:.0f} K"
            + (f" (± {w['T_lo_se_K']:.0f} K)" if w.get("T_lo_se_K") else "")
        )
        hi = (
            f"the upper end of the range ({w['T_hi_K']:.0f} K) or above"
            if w["hi_open"]
            else f"{w['T_hi_K']:.0f} K"
            + (f" (± {w['T_hi_se_K']:.0f} K)" if w.get("T_hi_se_K") else "")
        )
        out.append(f"Feasible at {level} confidence from {lo} to {hi}.")
    if not out:
        out.append(f"Nowhere in this range feasible at {level} confidence.")
    cross = unc.get("crossover_distribution")
    if cross and "median_K" in cross:
        out.append(
            f"ΔrG crosses the criterion at {cross['median_K']:.0f} K (95 % interval "
            f"{cross['lo_K']:.0f}–{cross['hi_K']:.0f} K); {cross['fraction_none']:.0%} of trials "
            "do not cross in the range."
        )
    return out


def _figures(doc: Mapping[str, Any]) -> list[str]:
    res = doc["results"]
    a_rows = res["assessment"]["rows"]
    T = [r["T_K"] for r in a_rows]
    actual = "dG_actual_J_per_mol" in a_rows[0]
    std = Line(
        T,
        [_kj(r["dG_J_per_mol"]) for r in a_rows],
        "ΔrG° (standard values)",
        OKABE_ITO["black"],
        "2 3",
    )
    lines, bands = [std], []
    if actual:
        lines.append(
            Line(
                T,
                [_kj(r["dG_actual_J_per_mol"]) for r in a_rows],
                "ΔrG at the partial pressures",
                OKABE_ITO["purple"],
                "8 3",
                False,
            )
        )
    unc = res["uncertainty"]
    hlines = [HLine(0.0, "ΔrG = 0", OKABE_ITO["vermillion"])]
    figs = []
    if unc is not None:
        rows = unc["rows"]
        thr = [_kj(r["threshold_J_per_mol"]) for r in rows]
        if any(t != 0.0 for t in thr):
            if len(set(thr)) == 1:
                hlines.append(HLine(thr[0], "criterion", OKABE_ITO["orange"], "2 2"))
            else:
                lines.append(Line(T, thr, "criterion −RT ln K", OKABE_ITO["orange"], "2 2", False))
        bands.append(
            Band(
                T,
                [_kj(r["dG_lo_J_per_mol"]) for r in rows],
                [_kj(r["dG_hi_J_per_mol"]) for r in rows],
                "95 % interval (Monte Carlo)",
            )
        )
        # The mean goes first so that the dashed standard-value lines stay visible on top of it.
        lines.insert(0, Line(T, [_kj(r["dG_mean_J_per_mol"]) for r in rows], "mean (Monte Carlo)"))
    figs.append(
        chart(
            title="Reaction Gibbs energy against temperature",
            x_label="temperature T / K",
            y_label="ΔrG / (kJ/mol)",
            lines=lines,
            bands=bands,
            hlines=hlines,
        )
    )
    if unc is not None:
        level = doc["uncertainty"]["confidence"]
        figs.append(
            chart(
                title="Probability that the step is feasible",
                x_label="temperature T / K",
                y_label="P(feasible) / %",
                lines=[
                    Line(
                        T,
                        [100 * r["P_feasible"] for r in unc["rows"]],
                        "P(feasible)",
                        OKABE_ITO["green"],
                    )
                ],
                hlines=[
                    HLine(100 * level, f"confidence level {level:.0%}", OKABE_ITO["blue"]),
                    HLine(
                        100 * (1 - level),
                        f"{1 - level:.0%}: below, not feasible",
                        OKABE_ITO["vermillion"],
                        "2 3",
                    ),
                ],
                y_limits=(0.0, 100.0),
            )
        )
    return figs


def _kj(x: Any) -> float:
    return x / 1000.0 if isinstance(x, (int, float)) else math.nan


def _results_table(doc: Mapping[str, Any]) -> str:
    res = doc["results"]
    a_rows = res["assessment"]["rows"]
    unc = res["uncertainty"]
    actual = "dG_actual_J_per_mol" in a_rows[0]
    header = ["T / K", "T / °C", "ΔrH° kJ/mol", "ΔrS° J/(mol·K)", "ΔrG° kJ/mol", "log10 K°"]
    if actual:
        header.append("ΔrG kJ/mol")
    if unc is not None:
        header += ["mean ΔrG kJ/mol", "u kJ/mol", "95 % interval kJ/mol", "P(feasible)", "call"]
    rows = []
    for i, r in enumerate(a_rows):
        row = [
            _num(r["T_K"]),
            _num(r["T_K"] - 273.15),
            _num(r["dH_J_per_mol"], 1000),
            _num(r["dS_J_per_mol_K"]),
            _num(r["dG_J_per_mol"], 1000),
            _num(r["log10_K"], digits=3),
        ]
        if actual:
            row.append(_num(r["dG_actual_J_per_mol"], 1000))
        if unc is not None:
            u = unc["rows"][i]
            row += [
                _num(u["dG_mean_J_per_mol"], 1000),
                _num(u["dG_std_J_per_mol"], 1000),
                f"[{_num(u['dG_lo_J_per_mol'], 1000)}, {_num(u['dG_hi_J_per_mol'], 1000)}]",
                f"{_pct(u['P_feasible'])} ± {_pct(u['P_feasible_se'])}",
                f"<b>{_e(u['verdict'])}</b>",
            ]
        rows.append(row)
    return _table(header, rows)


def _settings(doc: Mapping[str, Any]) -> str:
    cond, unc = doc["conditions"], doc["uncertainty"]
    items = []
    t = cond["temperature"]
    if t["kind"] == "range":
        items.append(
            f"Temperatures: {t['T_lo_K']:g} K to {t['T_hi_K']:g} K, {t['points']} evenly spaced"
        )
    else:
        items.append("Temperature(s): " + ", ".join(f"{x:g} K" for x in t["T_K"]))
    p_std = "1 bar" if cond["standard_pressure_Pa"] == STANDARD_PRESSURE_PA else "1 atm"
    items.append(f"Standard pressure: {p_std}")
    pp = cond["partial_pressures_Pa"]
    if pp:
        given = ", ".join(f"{_e(k)} {v / 1e5:g} bar" for k, v in pp.items())
        gases = (
            "Peng–Robinson gas mixture, fugacities φ y P"
            if cond.get("gas_model") == "peng-robinson"
            else "ideal gases"
        )
        items.append(f"Partial pressures ({gases}, condensed phases pure): {given}")
    if cond.get("gas_model") == "peng-robinson" and cond.get("call_at_required_conversion"):
        items.append("Gases: Peng–Robinson mixture (fugacities φ y P) at the required conversion")
    if unc is None:
        items.append("No Monte Carlo run: standard values only, no confidence level.")
    else:
        n = (
            f"adaptive (JCGM 101 §7.9), at most {unc['adaptive']['max_trials']:,} trials"
            if unc["adaptive"]
            else f"{unc['samples']:,} trials"
        )
        used = doc["results"]["uncertainty"]["trials"]
        items.append(
            f"Sampling: {_METHOD_WORDS.get(unc['method'], unc['method'])}, "
            f"{n} ({used:,} used), seed {unc['seed']}"
        )
        items.append(
            f"Criterion: {_e(unc['criterion_text'])}; confidence level {unc['confidence']:.0%}"
        )
    out = "<ul>" + "".join(f"<li>{x}</li>" for x in items) + "</ul>"
    if unc is not None and unc["overrides"]:
        rows = [
            [
                _e(o["target"]),
                _e(o["quantity"]),
                _e(o["value"] if o["value"] is not None else "library value"),
                _e(o["uncertainty"] if o["uncertainty"] is not None else "library u"),
                _e(o["coverage"]),
                _e(o["distribution"] if isinstance(o["distribution"], str) else "scipy"),
                _e(o["reason"]),
            ]
            for o in unc["overrides"]
        ]
        out += "<h3>Your overrides of the library data</h3>" + _table(
            ["entry", "quantity", "value", "uncertainty", "coverage", "shape", "reason"], rows, 7
        )
    if unc is not None and unc["correlations"]:
        rows = [
            [_e(":".join(c["a"])), _e(":".join(c["b"])), _num(c["rho"], digits=3)]
            for c in unc["correlations"]
        ]
        out += "<h3>Correlations</h3>" + _table(["input", "input", "ρ"], rows, 2)
    return out


def _sensitivity(doc: Mapping[str, Any]) -> str:
    unc = doc["results"]["uncertainty"]
    if unc is None or not unc["sensitivity"]:
        return ""
    units = {"dHf": "J/mol", "S298": "J/(mol·K)", "cp": "relative"}
    rows = [
        [
            _e(s["species"]),
            _e(s["quantity"]),
            _pct(s["share"]),
            f"{s['u']:.4g} {units.get(s['quantity'], '')}",
            _e(s["source"]),
        ]
        for s in unc["sensitivity"][:12]
    ]
    return (
        f"<h2>Where the doubt comes from (at {unc['sensitivity_T_K']:.0f} K)</h2>"
        "<p class='muted'>Share of the variance of ΔrG from each input, largest first.</p>"
        + _table(["entry", "quantity", "share", "standard uncertainty u", "source"], rows, 2)
    )


def _conv(block: Mapping[str, Any]) -> str:
    unc = block.get("uncertainty", {})
    text = f"{unc.get('stated', block['u']):g} as {unc.get('convention', 'standard')}"
    return text + (" (assumed by policy)" if unc.get("assumed") else "")


def _conversion(doc: Mapping[str, Any]) -> str:
    """The required-conversion section, when the call used that criterion."""
    inputs, res = doc.get("conversion"), doc["results"].get("conversion")
    if not inputs or not res:
        return ""
    sampled = bool(res.get("trials"))
    feed = ", ".join(f"{_e(k)} {_num(v, digits=3)}" for k, v in inputs["feed"].items())
    head = ["T / K", "conversion"] + (["95 % interval", "P(meets)"] if sampled else ["meets?"])
    rows = []
    for r in res["rows"]:
        row = [_num(r["T_K"]), _pct(r["conversion"])]
        if sampled:
            row += [
                f"{_pct(r['conversion_lo'])} – {_pct(r['conversion_hi'])}",
                f"{_pct(r['P_meets_required'])} ± {_pct(r['P_meets_required_se'])}",
            ]
        else:
            row.append("yes" if r["meets_required"] else "no")
        rows.append(row)
    if res["window"]:
        spans = window_phrase(res["window"])
        where = f"at {inputs['confidence']:.0%} confidence" if sampled else "at nominal data"
        window = f"The required conversion is met {where} {spans}."
    else:
        window = "The required conversion is not met anywhere in this range."
    return (
        f"<h2>Required conversion of {_e(inputs['key'])}</h2>"
        f"<p>Needed: {_pct(inputs['required'], 0)} of {_e(inputs['key'])} at "
        f"{_num(inputs['P_Pa'], 1e5, 3)} bar total pressure; feed (mol): {feed}. "
        f"{_e(res['model'])}.</p><p>{_e(window)}</p>"
        + "".join(f"<p>Note: {_e(n)}</p>" for n in res.get("notes", []))
        + _table(head, rows)
    )


def _band(x: Any, interval: Any, scale: float, digits: int = 1) -> str:
    """A value and its 95 % interval, e.g. "−763.4 [−763.7, −763.1]"."""
    text = _num(x, scale, digits)
    if interval:
        text += f" [{_num(interval[0], scale, digits)}, {_num(interval[1], scale, digits)}]"
    return text


def _heat(doc: Mapping[str, Any]) -> str:
    """The heat-balance section: duty per temperature with intervals, adiabatic temperature."""
    inputs, res = doc.get("heat"), doc["results"].get("heat")
    if not inputs or not res:
        return ""
    feed = ", ".join(f"{_e(k)} {_num(v, digits=3)}" for k, v in inputs["feed"].items())
    t_feed = inputs["T_feed_K"]
    if t_feed is None:
        enters = "at the reaction temperature"
    elif isinstance(t_feed, Mapping):
        enters = "at " + ", ".join(f"{_e(k)} {v:g} K" for k, v in t_feed.items())
    else:
        enters = f"at {t_feed:g} K"
    conv = inputs["conversion"]
    of = f"of {_e(inputs['key'])}" if inputs["key"] else "of the limiting reactant"
    if conv == "equilibrium":
        basis = (
            "the equilibrium conversion at each temperature (ideal gases at "
            f"{_num(inputs['P_Pa'], 1e5, 3)} bar)"
        )
    else:
        basis = f"{_pct(conv, 0)} {of}"
    sampled = res["shared_draws"]
    where = (
        f"95 % intervals from the call's own {res['trials']:,} draws (the same draws as the "
        "feasibility call)."
        if sampled
        else "Nominal data only: no interval (the call has no Monte Carlo run)."
    )
    product = _e(res["product"] or "product")
    head = ["T / K", "extent / mol", "duty kJ/mol", f"MJ per kg {product}", "MJ per kg feed"]
    rows = []
    for r in res["rows"]:
        rows.append(
            [
                _num(r["T_K"]),
                _band(r["extent_mol"], r.get("extent_mol_interval_95"), 1.0, 4),
                _band(r["duty_J_per_mol"], r.get("duty_J_per_mol_interval_95"), 1e3),
                _band(
                    r["duty_J_per_kg_product"], r.get("duty_J_per_kg_product_interval_95"), 1e6, 3
                ),
                _band(r["duty_J_per_kg_feed"], r.get("duty_J_per_kg_feed_interval_95"), 1e6, 3),
            ]
        )
    figure = ""
    if len(res["rows"]) > 1:
        T = [r["T_K"] for r in res["rows"]]
        bands = []
        if sampled:
            bands.append(
                Band(
                    T,
                    [_kj(r["duty_J_per_mol_interval_95"][0]) for r in res["rows"]],
                    [_kj(r["duty_J_per_mol_interval_95"][1]) for r in res["rows"]],
                    "95 % interval (the call's draws)",
                )
            )
        figure = (
            "<figure>"
            + chart(
                title="Heat duty against reaction temperature",
                x_label="reaction temperature T / K",
                y_label="duty / (kJ per mol of reaction)",
                lines=[
                    Line(T, [_kj(r["duty_J_per_mol"]) for r in res["rows"]], "duty (nominal data)")
                ],
                bands=bands,
                hlines=[HLine(0.0, "0: neither heat in nor out", OKABE_ITO["black"], "2 3")],
            )
            + "</figure>"
        )
    hot = res["adiabatic"]
    if hot is None:
        adiabatic = f"<p id='adiabatic'>{_e(res['adiabatic_note'])}</p>"
    else:
        band = ""
        if hot.get("adiabatic_T_K_interval_95"):
            lo, hi = hot["adiabatic_T_K_interval_95"]
            band = f" (95 % interval {lo:,.0f}–{hi:,.0f} K)"
        at = (
            "at the equilibrium conversion there"
            if hot["conversion"] is None
            else f"at {_pct(hot['conversion'], 0)} {of}"
        )
        adiabatic = (
            f"<p id='adiabatic'><b>Adiabatic outlet temperature</b>, feed at "
            f"{hot['T_feed_K']:g} K, {at}: <b>{hot['adiabatic_T_K']:,.0f} K</b>{band}; a rise "
            f"of {hot['temperature_rise_K']:,.0f} K.</p>"
            + "".join(f"<p class='muted'>{_e(n)}</p>" for n in hot["notes"])
        )
    notes = dict.fromkeys(n for r in res["rows"] for n in r["notes"])
    return (
        "<h2 id='heat'>Heat duty and adiabatic temperature</h2>"
        f"<p>Feed (mol): {feed}, entering {enters}; products leave at the reaction "
        f"temperature. Conversion: {basis}. Positive duty: heat to put in; negative: heat to "
        f"take out. Phase changes on the way are included. {where}</p>"
        + _table(head, rows)
        + "".join(f"<p class='muted'>Note: {_e(n)}</p>" for n in notes)
        + figure
        + adiabatic
    )


#: Colours of the compared formation lines, in order (Okabe–Ito).
_LINE_COLOURS = ("blue", "vermillion", "green", "orange", "purple", "sky", "black")


def _comparison(doc: Mapping[str, Any]) -> str:
    """Formation lines compared: the diagram with 95 % bands, the table, P(a below b)."""
    inputs, res = doc.get("comparison"), doc["results"].get("comparison")
    if not inputs or not res:
        return ""
    T = res["T_K"]
    reagent = _e(res["reagent"])
    lines, bands = [], []
    sampled = bool(res["trials"])
    for i, ln in enumerate(res["lines"]):
        colour = OKABE_ITO[_LINE_COLOURS[i % len(_LINE_COLOURS)]]
        dash = ("", "8 3", "2 3", "6 2 2 2")[(i // len(_LINE_COLOURS)) % 4]
        if sampled:
            bands.append(
                Band(
                    T,
                    [_kj(v) for v in ln["lo95_J_per_mol"]],
                    [_kj(v) for v in ln["hi95_J_per_mol"]],
                    f"{ln['label']} 95 %",
                    colour,
                )
            )
        lines.append(Line(T, [_kj(v) for v in ln["dG_J_per_mol"]], ln["label"], colour, dash))
    figure = chart(
        title=f"Formation lines per mole of {res['reagent']} (lower: more stable)",
        x_label="temperature T / K",
        y_label=f"ΔrG° / (kJ per mol {res['reagent']})",
        lines=lines,
        bands=bands,
    )
    head = ["T / K"] + [
        f"{ln['label']} kJ/mol" + (" [95 %]" if sampled else "") for ln in res["lines"]
    ]
    rows = []
    for k, t in enumerate(T):
        row = [_num(t)]
        for ln in res["lines"]:
            interval = [ln["lo95_J_per_mol"][k], ln["hi95_J_per_mol"][k]] if sampled else None
            row.append(_band(ln["dG_J_per_mol"][k], interval, 1e3))
        rows.append(row)
    equations = "; ".join(
        f"{_e(ln['label'])}: <code>{_e(ln['equation'])}</code>" for ln in res["lines"]
    )
    changes = [
        f"{_e(ln['label'])}: {_e(c['from'])} → {_e(c['to'])} at {c['T_K']:.0f} K"
        for ln in res["lines"]
        for c in ln["phase_changes"]
    ]
    out = (
        f"<h2 id='comparison'>Formation lines compared (per mole of {reagent})</h2>"
        f"<p>{equations}.</p>"
        f"<figure>{figure}</figure>"
        + (f"<p>Phase changes on the lines: {'; '.join(changes)}.</p>" if changes else "")
        + _table(head, rows)
    )
    if res["p_below"]:
        p_head = ["T / K"] + [f"P({p['a']} below {p['b']})" for p in res["p_below"]]
        p_rows = [[_num(t)] + [_pct(p["P"][k]) for p in res["p_below"]] for k, t in enumerate(T)]
        out += (
            "<p>Probability that one line lies below another (its compound the more stable, "
            "its element able to reduce the other's compound), counted draw by draw:</p>"
            + _table(p_head, p_rows)
        )
    ratio_keys = [k for k in res["lines"][0] if k.startswith("log10_") and k.endswith("_needed")]
    if ratio_keys:
        names = {
            k: k.removeprefix("log10_").removesuffix("_needed").replace("_per_", "/")
            for k in ratio_keys
        }
        r_head = ["T / K"] + [
            f"{ln['label']}: {names[k]}" for ln in res["lines"] for k in ratio_keys
        ]
        r_rows = [
            [_num(t)]
            + [f"{10 ** ln[k]['nominal'][i]:.3g}" for ln in res["lines"] for k in ratio_keys]
            for i, t in enumerate(T)
        ]
        out += (
            "<p>Reductant ratio each reduction needs at equilibrium (nominal data; a furnace gas "
            "richer in CO or H2 than this reduces the oxide; 95 % bands are in the JSON "
            "record):</p>" + _table(r_head, r_rows)
        )
    out += (
        "<p class='muted'>"
        + (
            f"Bands and probabilities from the comparison's own {res['trials']:,} draws "
            f"(seed {res['seed']}); species shared by two lines move both together. "
            if sampled
            else "Nominal data only: no bands. "
        )
        + "Thermodynamics only: whether a reduction runs also depends on rate, gas flow and "
        "contact.</p>"
    )
    return out


def _species(doc: Mapping[str, Any]) -> str:
    from ..library import default_library

    shipped = default_library()
    rows = []
    for s in doc["species"]:
        p = s["provenance"]
        origin = s["origin"]
        if origin != "library" and s["id"] in shipped:
            origin += " (REPLACES the shipped entry of this id)"
        h, sv, cp = p["dHf_298_J_per_mol"], p["S_298_J_per_mol_K"], p["cp"]
        rows.append(
            [
                f"<b>{_e(s['id'])}</b><br><span class='muted'>{_e(origin)}</span>",
                f"{p['T_range_K'][0]:g}–{p['T_range_K'][1]:g}",
                f"{h['value'] / 1000:,.3f} ± {h['u'] / 1000:.3f}<br>"
                f"<span class='muted'>{_e(h['source'])}; {_e(_conv(h))}</span>",
                f"{sv['value']:,.3f} ± {sv['u']:.3f}<br>"
                f"<span class='muted'>{_e(sv['source'])}; {_e(_conv(sv))}</span>",
                f"{_e(cp.get('model', ''))} ± {_pct(cp['u_rel'])}<br>"
                f"<span class='muted'>{_e(cp.get('source', ''))}</span>",
            ]
        )
    return _table(
        ["entry", "T range / K", "ΔfH°(298.15 K) / (kJ/mol)", "S°(298.15 K) / (J/(mol·K))", "Cp"],
        rows,
        5,
    )


def render_html(doc: Mapping[str, Any]) -> str:
    """The report as one HTML document (string)."""
    res, rxn, review = doc["results"], doc["reaction"], doc["review"]
    summary = res["summary"]
    colour = _VERDICT_COLOUR.get(summary["verdict"], OKABE_ITO["orange"])
    if summary["basis"] == "standard values only":
        # Nominal data only: never the green of a confident call.
        colour = OKABE_ITO["orange"] if colour == OKABE_ITO["green"] else colour
    a = res["assessment"]
    cautions = "".join(f"<li>{_e(c['message'])}</li>" for c in a["cautions"])
    notes = "".join(f"<p>{_e(n)}</p>" for n in a["notes"])
    caution_block = ""
    if cautions or DEFERRAL in a["notes"]:
        caution_block = (
            f"<section class='caution'><h2>Cautions</h2><ul>{cautions}</ul>"
            + (f"<p><b>{_e(DEFERRAL)}</b></p>" if DEFERRAL in a["notes"] else "")
            + "</section>"
        )
        notes = "".join(f"<p>{_e(n)}</p>" for n in a["notes"] if n != DEFERRAL)
    entered = ""
    if " ".join(rxn["entered"].split()) != rxn["balanced"]:
        entered = (
            f"<p class='muted'>Entered as: <code>{_e(rxn['entered'])}</code>"
            + (" (coefficients found by feasibly)" if rxn["balance"] else "")
            + "</p>"
        )
    extras = "".join(
        f"<p>Phase change: {_e(c['term'])} goes from {_e(c['from'])} to {_e(c['to'])} at "
        f"{c['T_K']:.1f} K.</p>"
        for c in a.get("phase_changes", [])
    )
    used = a.get("species_as_used", [])
    identities = ""
    if used:
        identities = (
            "<p class='muted' id='species-as-used'>Species as used: "
            + "; ".join(
                f"{_e(u['formula'])} = {_e(u['name'] or 'unnamed')} "
                f"(CAS {_e(u['cas'] or 'not recorded')})"
                + (f", written {_e(u['written'])}" if u["written"] != u["formula"] else "")
                for u in used
            )
            + "</p>"
        )
    env = doc["environment"]
    data = doc["data"]
    integrity = doc["integrity"]
    people = [
        ("Author", review["author"]),
        ("Reviewer", review["reviewer"]),
    ]
    parts = [
        "<!DOCTYPE html>",
        '<html lang="en"><head><meta charset="utf-8">',
        '<meta http-equiv="Content-Security-Policy" content="default-src \'none\'; '
        "style-src 'unsafe-inline'; img-src data:\">",
        '<meta name="viewport" content="width=device-width, initial-scale=1">',
        f"<title>Decision record: {_e(rxn['balanced'])}</title>",
        f"<style>{_CSS}</style></head><body>",
        "<header><h1>Feasibility decision record</h1>",
        f"<p class='equation' id='equation'>{_e(rxn['pretty'])}</p>{entered}{identities}",
        f"<p class='muted'>Made {_e(doc['created'])}"
        + "".join(f" · {k}: {_e(v) or '—'}" for k, v in people)
        + "</p></header>",
        f"<section class='verdict' id='verdict' style='--c: {colour}'>"
        f"<div class='word'>{_e(summary['verdict'])}</div>"
        + (
            "<div class='word' id='no-uncertainty'>no uncertainty analysis</div>"
            if summary["basis"] == "standard values only"
            else ""
        )
        + f"<div>{_e(summary['headline'])}</div>"
        + "</section>",
        caution_block,
        "<h2>Figures</h2>",
        *(f"<figure>{svg}</figure>" for svg in _figures(doc)),
        "<h2>Results per temperature</h2>",
        "".join(f"<p>{_e(t)}</p>" for t in _window_text(doc)),
        _results_table(doc),
        extras,
        notes,
        _sensitivity(doc),
        _conversion(doc),
        _heat(doc),
        _comparison(doc),
        "<h2>Conditions and settings</h2>",
        _settings(doc),
        "<h2>Species data used</h2>",
        "<p class='muted'>Values ± standard uncertainty u; each with its source and how the "
        "source stated the uncertainty.</p>",
        _species(doc),
        "<h2>Data and software</h2><ul>",
        f"<li>Data library {_e(data['library_version'])}, sha256 "
        f"<span class='hash'>{_e(data['library_sha256'])}</span></li>",
        (
            f"<li>Your species files: {_e(', '.join(data['user_files']))} (entries carried in "
            "this record)</li>"
            if data["user_files"]
            else ""
        ),
        "<li>"
        + ", ".join(f"{_e(k)} {_e(v)}" for k, v in env.items() if k != "platform")
        + f"; {_e(env['platform'])}</li></ul>",
        "<h2>Review</h2>",
        f"<p><b>Rationale:</b> {_e(review['rationale']) or '—'}</p>",
        "<div class='sign'>"
        + "".join(f"<div>{k}: {_e(v)}<br>signature and date</div>" for k, v in people)
        + "</div>",
        "<h2>Integrity</h2>",
        f"<p>Content sha256 <span class='hash'>{_e(integrity['content_sha256'])}</span>. Check "
        "the JSON record with <code>feasibly verify RECORD.json</code>: it recomputes the call "
        "and says whether every result is identical.</p>",
        f"<footer><p class='muted'>{_e(_SCOPE)}</p></footer>",
        "</body></html>",
    ]
    return "\n".join(p for p in parts if p) + "\n"


def render_markdown(doc: Mapping[str, Any]) -> str:
    """The record as Markdown: verdict, equation, results table, cautions, settings, hashes.

    People's free text is HTML-escaped, since Markdown renderers pass raw HTML through.
    """
    res, rxn = doc["results"], doc["reaction"]
    review = {k: escape(v) for k, v in doc["review"].items()}
    a, unc = res["assessment"], res["uncertainty"]
    lines = [
        f"# Feasibility decision record: {escape(rxn['pretty'])}",
        "",
        f"**{escape(res['summary']['verdict'].upper())}** — {escape(res['summary']['headline'])}",
        "",
        *_window_text(doc),
        "",
        f"- Equation entered: `{_code(rxn['entered'])}`; balanced: `{_code(rxn['balanced'])}`",
        f"- Made {escape(doc['created'])}; author: {review['author'] or '—'}; "
        f"reviewer: {review['reviewer'] or '—'}",
        f"- Rationale: {review['rationale'] or '—'}",
        "",
    ]
    if a["cautions"]:
        lines += ["## Cautions", "", *(f"- {escape(c['message'])}" for c in a["cautions"]), ""]
    lines += [*(f"> {escape(n)}" for n in a["notes"]), ""] if a["notes"] else []
    header = ["T / K", "ΔrG° kJ/mol"]
    if unc is not None:
        header += ["mean ΔrG kJ/mol", "95 % interval kJ/mol", "P(feasible)", "call"]
    lines += ["## Results", "", "| " + " | ".join(header) + " |", "|" + "---:|" * len(header)]
    for i, r in enumerate(a["rows"]):
        row = [_num(r["T_K"]), _num(r["dG_J_per_mol"], 1000)]
        if unc is not None:
            u = unc["rows"][i]
            row += [
                _num(u["dG_mean_J_per_mol"], 1000),
                f"[{_num(u['dG_lo_J_per_mol'], 1000)}, {_num(u['dG_hi_J_per_mol'], 1000)}]",
                _pct(u["P_feasible"]),
                u["verdict"],
            ]
        lines.append("| " + " | ".join(row) + " |")
    heat = res.get("heat")
    if heat:
        lines += [
            "",
            "## Heat duty",
            "",
            "| T / K | duty kJ/mol | MJ per kg feed |",
            "|---:|---:|---:|",
        ]
        for r in heat["rows"]:
            per_mol = _band(r["duty_J_per_mol"], r.get("duty_J_per_mol_interval_95"), 1e3)
            per_kg = _band(r["duty_J_per_kg_feed"], r.get("duty_J_per_kg_feed_interval_95"), 1e6, 3)
            lines.append(f"| {_num(r['T_K'])} | {per_mol} | {per_kg} |")
        hot = heat["adiabatic"]
        if hot is None:
            lines += ["", escape(heat["adiabatic_note"])]
        else:
            band = hot.get("adiabatic_T_K_interval_95")
            lines += [
                "",
                f"Adiabatic outlet temperature (feed at {hot['T_feed_K']:g} K): "
                f"{hot['adiabatic_T_K']:,.0f} K"
                + (f" (95 % interval {band[0]:,.0f}–{band[1]:,.0f} K)" if band else "")
                + ".",
            ]
    comparison = res.get("comparison")
    if comparison:
        lines += ["", f"## Formation lines per mole of {escape(comparison['reagent'])}", ""]
        k = len(comparison["T_K"]) // 2
        t_mid = comparison["T_K"][k]
        for ln in comparison["lines"]:
            band = ""
            if "lo95_J_per_mol" in ln:
                band = (
                    f" [{_num(ln['lo95_J_per_mol'][k], 1e3, 1)}, "
                    f"{_num(ln['hi95_J_per_mol'][k], 1e3, 1)}]"
                )
            lines.append(
                f"- {escape(ln['label'])} (`{_code(ln['equation'])}`): ΔrG° at {t_mid:.0f} K "
                f"{_num(ln['dG_J_per_mol'][k], 1e3, 1)}{band} kJ/mol"
            )
        for p in comparison["p_below"]:
            lines.append(
                f"- P({escape(p['a'])} below {escape(p['b'])}) at {t_mid:.0f} K: {_pct(p['P'][k])}"
            )
    settings = doc["uncertainty"]
    lines += [""]
    if settings is not None:
        lines.append(
            f"Sampling {settings['method']}, seed {settings['seed']}, {unc['trials']:,} trials; "
            f"{escape(settings['criterion_text'])}; confidence {settings['confidence']:.0%}."
        )
        for o in settings["overrides"]:
            lines.append(
                f"- Override {escape(o['target'])} {escape(o['quantity'])}: {escape(o['reason'])}"
            )
    lines += [
        "",
        f"Data library {escape(doc['data']['library_version'])} (sha256 "
        f"`{doc['data']['library_sha256']}`); record sha256 "
        f"`{doc['integrity']['content_sha256']}`.",
        "",
        _SCOPE,
        "",
    ]
    return "\n".join(lines)

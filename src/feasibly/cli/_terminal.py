"""What the command line prints: the assessment, the uncertainty summary and the conversion, as
terminal text; and the exit codes every subcommand shares."""

from __future__ import annotations

import io
import math
import re
import sys
from collections.abc import Sequence
from typing import TYPE_CHECKING, Any

from ..conditions import STANDARD_PRESSURE_PA
from ..library import Library, default_library
from ..thermo import NO_UNCERTAINTY, Assessment, Caution

if TYPE_CHECKING:
    from ..uncertainty import UncertainAssessment


def _window_phrase(windows: Any) -> str:
    # The uncertainty wing (scipy) loads only when a window is printed: a plain screen
    # starts without it.
    from ..uncertainty import window_phrase

    return window_phrase(windows)


EXIT_OK = 0


EXIT_INPUT = 2  # the user's input or data could not be used (also argparse's own code)


EXIT_INTERNAL = 3  # a bug in feasibly: the message asks for a report


EXIT_INTERRUPTED = 130  # Ctrl-C: the shell's convention, 128 + SIGINT


# C0 and C1 control characters (ESC starts terminal sequences; the C1 forms \x9b CSI and \x9d OSC
# do the same without it, OSC 52 writes the clipboard) and the bidirectional overrides that make
# text display in another order than it reads; newline and tab are layout and stay.
_UNSAFE = re.compile(r"[\x00-\x08\x0b-\x1f\x7f-\x9f\u200b-\u200f\u202a-\u202e\u2066-\u2069]")


def terminal_safe(text: str) -> str:
    r"""``text`` with every control character shown as a visible ``\uXXXX`` escape, so that
    nothing a user file or record carries can move the cursor, retitle the window or write the
    clipboard when printed. The escape is JSON's own, so ``--json`` output stays valid JSON.

    >>> print(terminal_safe("CO2\x1b]52;c;ZXZpbA==\x07(g)"))
    CO2\u001b]52;c;ZXZpbA==\u0007(g)
    """
    return _UNSAFE.sub(lambda m: f"\\u{ord(m.group()):04x}", text)


class SafeStream(io.TextIOBase):
    """A text stream that passes everything through :func:`terminal_safe` before writing."""

    def __init__(self, inner: Any) -> None:
        self._inner = inner

    def write(self, text: str) -> int:
        self._inner.write(terminal_safe(text))
        return len(text)

    def flush(self) -> None:
        self._inner.flush()

    def isatty(self) -> bool:
        return bool(self._inner.isatty())

    @property
    def encoding(self) -> str:  # type: ignore[override]
        return str(getattr(self._inner, "encoding", "utf-8"))


def _library(files: list[str] | None, replace_shipped: bool = False) -> Library:
    """The shipped library with the user's files added; says on stderr which entries came from
    which file and which shipped entries they replace."""
    lib = default_library()
    for path in files or []:
        user = Library.from_file(path)
        lib = lib.with_species(user, replace_shipped=replace_shipped)
        replaced = {sid for sid, _, _ in lib.replaced}
        ids = [sp.id for sp in user]
        shown = ", ".join(
            sid + (" (REPLACES the shipped entry)" if sid in replaced else "") for sid in ids[:20]
        )
        more = f" and {len(ids) - 20} more" if len(ids) > 20 else ""
        print(f"species from {path}: {shown}{more}", file=sys.stderr)
    return lib


def _fmt(x: float, digits: int = 2) -> str:
    if not math.isfinite(x):
        return "—"
    return f"{x:,.{digits}f}"


def _kj(x: float) -> str:
    return f"{x / 1000:+,.2f} kJ/mol" if math.isfinite(x) else "+∞ (the requirement cannot be met)"


def _spans(spans: list[tuple[float, float]], lo: float, hi: float) -> str:
    return "; ".join(
        ("from the start of the range" if a <= lo else f"from {a:.0f} K")
        + (" to the end of the range" if b >= hi else f" to {b:.0f} K")
        for a, b in spans
    )


def _print_call(a: Assessment, u: UncertainAssessment | None, conv: dict[str, Any] | None) -> None:
    """The decision first: the call at the user's conditions, its window, how sure, the lead."""
    s = a.standard
    sym = a.call_symbol
    where = a.conditions or "standard state (1 bar for each gas, pure condensed phases)"
    print(f"━━ The call ━━ {a.reaction.equation(pretty=True)}")
    print(f"  conditions   {where}")
    if u is None:
        if s.T.size == 1:
            word = "favourable" if a.favourable[0] else "NOT favourable"
            line = f"{word} at {s.T[0]:.1f} K: {sym} = {_kj(float(a.dG_call[0]))}"
            if a.dG_actual is not None:
                line += f" at these conditions (ΔrG° = {_kj(float(s.dG[0]))} at standard state)"
            print(f"  call         {line}")
        else:
            window = a.window()
            neg = a.favourable
            if window:
                span = _spans(window, float(s.T[0]), float(s.T[-1]))
                print(f"  call         favourable ({sym} < 0) {span}")
            elif window is not None:
                print(f"  call         NOT favourable anywhere in {s.T[0]:.0f}–{s.T[-1]:.0f} K")
            else:
                print(
                    f"  call         favourable ({sym} < 0) at {int(neg.sum())} of {neg.size} "
                    "temperatures"
                )
        print(f"  how sure     {NO_UNCERTAINTY}")
    else:
        basis = f"on ΔrG at {a.conditions}" if a.conditions else "on ΔrG°"
        if u.T.size == 1:
            print(
                f"  call         {u.verdicts[0]} at {u.T[0]:.1f} K at {u.confidence:.0%} "
                f"confidence ({basis}); {sym} = {_kj(float(a.dG_call[0]))} at the nominal data"
            )
            print(
                f"  how sure     P(feasible) = {u.p_feasible[0]:.1%} ± {u.p_feasible_se[0]:.1%} "
                f"from {u.trials:,} trials"
            )
        else:
            windows = u.window()
            if windows:
                print(
                    f"  call         feasible at {u.confidence:.0%} confidence "
                    f"{_window_phrase(windows)} ({basis})"
                )
            else:
                print(
                    f"  call         nowhere feasible at {u.confidence:.0%} confidence in this "
                    f"range ({basis})"
                )
            print(f"  how sure     P(feasible) per temperature below, from {u.trials:,} trials")
        t_lead = float(u.T[len(u.T) // 2])
        shares = u.sensitivity_by_species((t_lead, "K"))[:1]
        if shares:
            sid, share = shares[0]
            print(f"  leading input {sid}: {share:.0%} of the variance of ΔrG at {t_lead:.0f} K")
    cross = a.crossover_call_K
    if cross is not None:
        at = f"at {a.conditions}" if a.dG_actual is not None else "at standard state"
        if cross:
            joined = ", ".join(f"{t:.1f} K ({t - 273.15:.1f} °C)" for t in cross)
            print(f"  crossover    {sym} = 0 {at}: {joined}")
        else:
            print(f"  crossover    {sym} does not change sign in this range ({at})")
        if a.dG_actual is not None and a.crossover_K is not None:
            std = ", ".join(f"{t:.1f} K" for t in a.crossover_K) or "none in range"
            print(f"               (ΔrG° = 0 at standard state: {std})")
    if conv is not None:
        req = conv["required_conversion"]
        w = conv["window"]
        sampled = conv["trials"] > 0
        how = f"at {conv['confidence']:.0%} confidence" if sampled else "at the nominal data"
        text = _window_phrase(w) if w else "nowhere in this range"
        print(f"  conversion   {req:.0%} of {conv['key']} reached {how} {text}")
    print("  This is thermodynamics only: it says nothing about rate, hazards or scale-up.")
    print()
    print("━━ The numbers behind it ━━")


def _print_assessment(a: Assessment, cautions: Sequence[Caution] | None = None) -> None:
    s = a.standard
    print(f"Reaction   {a.reaction.equation(pretty=True)}")
    if a.reaction.equation() != " ".join(a.reaction.text.split()):
        print(f"           (entered as: {a.reaction.text})")
    ids = []
    for t in a.reaction.terms:
        who = t.identity()
        ids.append(f"{t.formula} = {who['name'] or 'unnamed'} (CAS {who['cas'] or '—'})")
    print(f"Species    {'; '.join(ids)}")
    lo, hi = a.reaction.valid_range()
    p_label = "1 bar" if s.standard_pressure == STANDARD_PRESSURE_PA else "1 atm"
    print(
        f"Data       feasibly library {a.library_version} (sha256 {a.library_hash[:12]}…); "
        f"valid {lo:g}–{hi:g} K; standard pressure {p_label}"
    )
    header = ["T / K", "T / °C", "ΔrH° kJ/mol", "ΔrS° J/(mol·K)", "ΔrG° kJ/mol", "log10 K"]
    if a.dG_actual is not None:
        header.append("ΔrG kJ/mol")
    header.append(f"{a.call_symbol} < 0?")
    rows = []
    for i in range(s.T.size):
        row = [
            _fmt(s.T[i]),
            _fmt(s.T[i] - 273.15),
            _fmt(s.dH[i] / 1000),
            _fmt(s.dS[i]),
            _fmt(s.dG[i] / 1000),
            _fmt(s.log10_K[i], 3),
        ]
        if a.dG_actual is not None:
            row.append(_fmt(a.dG_actual[i] / 1000))
        row.append("yes" if a.favourable[i] else "no")
        rows.append(row)
    widths = [max(len(h), *(len(r[j]) for r in rows)) for j, h in enumerate(header)]
    print()
    print("  ".join(h.rjust(w) for h, w in zip(header, widths, strict=True)))
    for r in rows:
        print("  ".join(c.rjust(w) for c, w in zip(r, widths, strict=True)))
    print()
    if a.crossover_K is not None:
        if a.crossover_K:
            joined = ", ".join(f"{t:.1f} K ({t - 273.15:.1f} °C)" for t in a.crossover_K)
            print(f"ΔrG° = 0 at {joined}")
        else:
            print("ΔrG° does not change sign in this range.")
        if a.crossover_298_estimate_K is not None:
            print(
                f"  (the 298.15 K shortcut ΔrH°/ΔrS° would say {a.crossover_298_estimate_K:.1f} K)"
            )
    gases = (
        "Peng–Robinson gas mixture (fugacities φ y P)"
        if a.gas_model == "peng-robinson"
        else "ideal gases"
    )
    if a.dG_actual is not None and a.at_conversion is not None:
        print(
            f"ΔrG at {a.conditions}: at the composition that conversion gives; {gases}, "
            "condensed phases pure. ΔrG < 0 exactly where the equilibrium conversion is higher."
        )
    elif a.dG_actual is not None:
        given = ", ".join(
            [f"{k} {v / 1e5:g} bar" for k, v in a.partial_pressures_Pa.items()]
            + [f"{k} {m:g} mol/kg" for k, m in a.molalities_mol_per_kg.items()]
        )
        print(f"ΔrG at {given}; {gases}, ideal dilute solution (γ = 1), condensed phases pure.")
        if a.assumed_standard:
            print(
                f"  At the standard state (no pressure or molality given): "
                f"{', '.join(a.assumed_standard)}"
            )
    for term, T, before, after in a.phase_changes:
        print(f"Phase change: {term} goes from {before} to {after} at {T:.1f} K.")
    for used, T, stable in a.metastable:
        print(
            f"Note: {used} is metastable at {T:.1f} K ({stable} has lower G°); "
            "it is used because the equation names that phase."
        )
    shown = a.cautions if cautions is None else cautions
    if shown:
        print()
        print("CAUTION")
        for c in shown:
            print(f"  - {c.message}")
    for note in a.notes:
        print()
        print(note)


def _print_uncertainty(u: UncertainAssessment) -> None:
    print()
    basis = (
        "ΔrG at the given partial pressures or molalities"
        if u.partial_pressures_Pa or u.molalities_mol_per_kg
        else "ΔrG°"
    )
    print(
        f"How sure: {u.trials:,} trials ({u.samples.method}, seed {u.samples.seed}); "
        f"criterion {u.threshold_text} on {basis}; confidence level {u.confidence:.0%}"
    )
    if u.adaptive is not None:
        a = u.adaptive
        state = "met" if a.converged else "NOT met (trial limit reached)"
        print(
            f"  adaptive (JCGM 101 §7.9): {a.blocks} blocks of {a.block_size:,}; tolerance {state}"
        )
    header = ["T / K", "mean kJ/mol", "u kJ/mol", "95 % interval kJ/mol", "P(feasible)", "call"]
    rows = []
    for r in u.rows():
        rows.append(
            [
                _fmt(r["T_K"]),
                _fmt(r["dG_mean_J_per_mol"] / 1000),
                _fmt(r["dG_std_J_per_mol"] / 1000),
                f"[{r['dG_lo_J_per_mol'] / 1000:,.2f}, {r['dG_hi_J_per_mol'] / 1000:,.2f}]",
                f"{r['P_feasible']:.1%} ± {r['P_feasible_se']:.1%}",
                r["verdict"],
            ]
        )
    widths = [max(len(h), *(len(x[j]) for x in rows)) for j, h in enumerate(header)]
    print("  ".join(h.rjust(w) for h, w in zip(header, widths, strict=True)))
    for x in rows:
        print("  ".join(c.rjust(w) for c, w in zip(x, widths, strict=True)))
    windows = u.window()
    if windows:
        for w in windows:
            lo = "below the range" if w["lo_open"] else f"{w['T_lo_K']:.0f} K"
            hi = "above the range" if w["hi_open"] else f"{w['T_hi_K']:.0f} K"
            print(f"Feasible at {u.confidence:.0%} confidence from {lo} to {hi}.")
    else:
        print(f"Nowhere in this range is the step feasible at {u.confidence:.0%} confidence.")
    if u.crossing_range is not None:
        c = u.crossover()
        if "median_K" in c:
            print(
                f"ΔrG crosses the criterion at {c['median_K']:.0f} K (95 %: {c['lo_K']:.0f}–"
                f"{c['hi_K']:.0f} K); {c['fraction_none']:.0%} of trials do not cross in range."
            )
    t_mid = float(u.T[len(u.T) // 2])
    shares = u.sensitivity_by_species((t_mid, "K"))[:3]
    if shares:
        joined = "; ".join(f"{sid} {share:.0%}" for sid, share in shares)
        print(f"Doubt at {t_mid:.0f} K comes from: {joined} (shares of the variance of ΔrG).")


def _print_conversion(c: dict[str, Any]) -> None:
    print()
    req = c["required_conversion"]
    print(
        f"Equilibrium conversion of {c['key']} at {c['P_Pa'] / 1e5:g} bar "
        f"(required: {req:.0%}; {c['model']})"
    )
    sampled = c["trials"] > 0
    header = ["T / K", "conversion"] + (["95 % interval", "P(meets)"] if sampled else ["meets?"])
    rows = []
    for r in c["rows"]:
        row = [_fmt(r["T_K"]), f"{r['conversion']:.1%}"]
        if sampled:
            row += [
                f"[{r['conversion_lo']:.1%}, {r['conversion_hi']:.1%}]",
                f"{r['P_meets_required']:.1%} ± {r['P_meets_required_se']:.1%}",
            ]
        else:
            row.append("yes" if r["meets_required"] else "no")
        rows.append(row)
    widths = [max(len(h), *(len(x[j]) for x in rows)) for j, h in enumerate(header)]
    print("  ".join(h.rjust(w) for h, w in zip(header, widths, strict=True)))
    for x in rows:
        print("  ".join(v.rjust(w) for v, w in zip(x, widths, strict=True)))
    if c["window"]:
        from ..uncertainty import window_phrase  # the uncertainty wing loads only when it is used

        spans = window_phrase(c["window"])
        where = f"at {c['confidence']:.0%} confidence" if sampled else "at the nominal data"
        print(f"The required conversion is met {where} {spans}.")
    else:
        print("The required conversion is not met anywhere in this range.")
    for note in c.get("notes", []):
        print(f"Note: {note}")

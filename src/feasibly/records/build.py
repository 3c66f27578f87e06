"""A decision record from an assessment: kernel results turned into sealed record sections.

:func:`make_record` runs the calculation and records it; :func:`record_from` records an
:class:`~feasibly.Assessment` (and :class:`~feasibly.uncertainty.UncertainAssessment`) already
run. The section builders are pure functions from the kernel's objects to plain JSON-ready data;
no file access here (writing and reading live in :mod:`feasibly.records.document`).
"""

from __future__ import annotations

import math
import platform
import secrets
from collections.abc import Mapping, Sequence
from datetime import UTC, datetime
from typing import Any

import numpy as np

from .. import __about__
from ..conditions import read_temperature
from ..errors import RecordError, UnbalancedReaction
from ..library.catalogue import Library
from ..library.cp_models import R
from ..library.species import Species
from ..thermo.assessment import NO_UNCERTAINTY, Assessment, assess
from ..thermo.reaction import Reaction
from ..uncertainty import (
    ADAPTIVE_MAX_TRIALS,
    UncertainAssessment,
    assess_uncertainty,
    gas_model_warning,
)
from ..uncertainty.inputs import InputKey, Method, Override
from ..uncertainty.linear import uncertain_species
from ._plain import plain
from ._sections import comparison_inputs, comparison_section, heat_inputs, heat_section
from .document import SCHEMA_MARK, SCHEMA_VERSION, _seal

__all__ = ["make_record", "record_from"]


def environment() -> dict[str, str]:
    import pint
    import scipy

    return {
        "feasibly": __about__.__version__,
        "python": platform.python_version(),
        "numpy": np.__version__,
        "scipy": scipy.__version__,
        "pint": str(pint.__version__),
        "platform": platform.platform(),
        "machine": platform.machine(),
    }


def record_species(rxn: Reaction) -> list[Species]:
    """Entries the call may use: candidate phases, their transition neighbours, and any user entry
    of the same formula (which decides the metastability notes)."""
    found = {sp.id: sp for sp in uncertain_species(rxn)}
    for term in rxn.terms:
        for sp in rxn.library.by_formula(term.formula):
            if sp.origin != "library":
                found.setdefault(sp.id, sp)
    return [found[k] for k in sorted(found)]


def species_section(rxn: Reaction) -> list[dict[str, Any]]:
    return [
        {
            "id": sp.id,
            "origin": sp.origin,
            "provenance": plain(sp.provenance()),
            "entry": plain(sp.raw),
        }
        for sp in record_species(rxn)
    ]


def correlations(u: UncertainAssessment) -> list[dict[str, Any]]:
    m = u.samples.correlation
    if m is None:
        return []
    keys = u.samples.keys
    out = [
        {"a": list(keys[i]), "b": list(keys[j]), "rho": float(m[i, j])}
        for i in range(len(keys))
        for j in range(i + 1, len(keys))
        if m[i, j] != 0
    ]
    if not out and len(keys) > 1:  # correlated sampling with all ρ = 0 still takes that path
        out.append({"a": list(keys[0]), "b": list(keys[1]), "rho": 0.0})
    return out


def summary(a: Assessment, u: UncertainAssessment | None) -> dict[str, str]:
    if u is not None:
        calls = u.verdicts
        level = f"{u.confidence:.0%}"
        windows = u.window()
        if len(set(calls)) == 1:
            verdict = calls[0]
            where = f"at {u.T[0]:.0f} K" if u.T.size == 1 else f"over {u.T[0]:.0f}–{u.T[-1]:.0f} K"
            headline = f"{verdict.capitalize()} at {level} confidence {where}."
        elif windows:
            verdict = "feasible in part of the range"
            parts = []
            for w in windows:
                lo = f"{w['T_lo_K']:.0f} K" + (" (range start)" if w["lo_open"] else "")
                hi = f"{w['T_hi_K']:.0f} K" + (" (range end)" if w["hi_open"] else "")
                parts.append(f"from {lo} to {hi}")
            headline = f"Feasible at {level} confidence {' and '.join(parts)}."
        else:
            verdict = "not shown feasible"
            headline = f"Nowhere in this range feasible at {level} confidence."
        basis = f"ΔrG at {a.conditions}" if a.conditions else "ΔrG°"
        headline += f" (On {basis}; {u.trials:,} Monte Carlo trials.)"
        return {"verdict": verdict, "headline": headline, "basis": "monte carlo"}
    sym = a.call_symbol
    at = f" at {a.conditions}" if a.conditions else ""
    neg = a.favourable
    if bool(np.all(neg)):
        verdict, headline = "favourable", f"{sym} < 0{at} at every temperature assessed."
    elif not bool(np.any(neg)):
        verdict, headline = "not favourable", f"{sym} ≥ 0{at} at every temperature assessed."
    else:
        verdict = "favourable in part of the range"
        window = a.window()
        if window:
            t_lo, t_hi = float(a.standard.T[0]), float(a.standard.T[-1])
            spans = " and ".join(
                f"from {x:.0f} K{' (range start)' if x <= t_lo else ''} to "
                f"{y:.0f} K{' (range end)' if y >= t_hi else ''}"
                for x, y in window
            )
            headline = f"{sym} < 0{at} {spans}."
        else:
            headline = f"{sym} < 0{at} at {int(np.count_nonzero(neg))} of {neg.size} temperatures."
    if a.dG_actual is not None:
        std = a.standard.dG < 0
        headline += f" (Standard state: ΔrG° < 0 at {int(std.sum())} of {std.size} temperatures.)"
    headline += " " + NO_UNCERTAINTY
    return {"verdict": verdict, "headline": headline, "basis": "standard values only"}


def results_section(a: Assessment, u: UncertainAssessment | None, t_sens: float) -> dict[str, Any]:
    assessment = plain(a.to_dict())
    # An ideal-gas call where non-ideality exceeds the data's uncertainty carries the warning in
    # every record, whether or not the caller added it to the notes (verify recomputes it here).
    warning = gas_model_warning(a)
    if warning is not None and warning not in assessment["notes"]:
        assessment["notes"].append(warning)
    if u is not None and any(c.kind == "strongly exothermic" for c in a.cautions):
        # With draws, the exotherm caution quotes the adiabatic temperature with its interval.
        from ..heat import cautions_with_draws

        banded = cautions_with_draws(a.cautions, u, a.standard.T, a.standard.dH)
        assessment["cautions"] = [plain(c.as_dict()) for c in banded]
    return {
        "summary": summary(a, u),
        "assessment": assessment,
        "uncertainty": plain(u.to_dict(t_sens)) if u is not None else None,
    }


def temperature_section(a: Assessment) -> dict[str, Any]:
    T = a.standard.T
    if a.crossover_K is not None:  # a range was asked for (assess searches it for crossovers)
        return {
            "kind": "range",
            "T_K": plain(T),
            "T_lo_K": float(T[0]),
            "T_hi_K": float(T[-1]),
            "points": int(T.size),
        }
    return {"kind": "point", "T_K": plain(T)}


# --- building -------------------------------------------------------------------------------------
def _override_data(o: Override) -> dict[str, Any]:
    def given(v: Any) -> Any:
        if v is None or isinstance(v, str):
            return v
        if isinstance(v, (int, float)) and not isinstance(v, bool):
            return float(v)
        if hasattr(v, "magnitude") and hasattr(v, "units"):
            return f"{float(v.magnitude)!r} {v.units:D}"
        raise RecordError("override", [f"field value: {v!r} cannot be written into a record"])

    dist: Any = o.distribution
    if not isinstance(dist, str):
        name = getattr(getattr(dist, "dist", None), "name", None)
        args, kwds = getattr(dist, "args", None), getattr(dist, "kwds", None)
        if not isinstance(name, str) or not isinstance(args, tuple) or not isinstance(kwds, dict):
            raise RecordError(
                f"override of {o.target} {o.quantity}",
                ["field distribution: only frozen scipy.stats distributions can be recorded"],
            )
        dist = {
            "scipy": name,
            "args": [float(a) for a in args],
            "kwds": {k: float(v) for k, v in kwds.items()},
        }
    return {
        "target": o.target,
        "quantity": o.quantity,
        "reason": o.reason,
        "value": given(o.value),
        "uncertainty": given(o.uncertainty),
        "coverage": o.coverage,
        "distribution": dist,
    }


def _criterion(u: UncertainAssessment, required_K: float | None) -> dict[str, Any]:
    thr = np.asarray(u.threshold_J_per_mol, dtype=float)
    if u.threshold_text.startswith("K ≥"):
        k = required_K if required_K is not None else float(u.threshold_text.split("≥", 1)[1])
        if not np.array_equal(-R * u.T * math.log(k), thr):
            raise RecordError(
                "record_from",
                [
                    "field required_K: the criterion text gives K only to 6 digits; pass "
                    "required_K= with the exact value used"
                ],
            )
        return {"kind": "required_K", "required_K": float(k)}
    return {"kind": "threshold", "threshold_J_per_mol": float(thr[0])}


def _uncertainty_inputs(
    u: UncertainAssessment,
    required_K: float | None,
    max_trials: int | None,
    sensitivity_at: float,
) -> dict[str, Any]:
    if u.samples.seed is None:
        raise RecordError(
            "record_from",
            [
                "field seed: the Monte Carlo run had no seed, so it cannot be reproduced; "
                "run it again with seed= (or --seed)"
            ],
        )
    adaptive = None
    if u.adaptive is not None:
        if max_trials is None:
            # Not converged: the limit stopped it within one block of `trials`, which reproduces it.
            max_trials = ADAPTIVE_MAX_TRIALS if u.adaptive.converged else u.adaptive.trials
        adaptive = {"max_trials": int(max_trials)}
    return {
        "method": u.samples.method,
        "seed": int(u.samples.seed),
        "samples": None if u.adaptive is not None else int(u.samples.n),
        "adaptive": adaptive,
        "confidence": float(u.confidence),
        "criterion": _criterion(u, required_K),
        "criterion_text": u.threshold_text,
        "sensitivity_T_K": float(sensitivity_at),
        "overrides": [_override_data(o) for o in u.overrides],
        "correlations": correlations(u),
    }


def _infer_balance(a: Assessment) -> bool:
    rxn = a.reaction
    try:
        plain = Reaction.parse(rxn.text, rxn.library, balance=False)
    except UnbalancedReaction:
        return True
    return plain.equation() != rxn.equation()


def record_from(
    assessment: Assessment,
    uncertain: UncertainAssessment | None = None,
    *,
    author: str = "",
    reviewer: str = "",
    rationale: str = "",
    balance: bool | None = None,
    required_K: float | None = None,
    max_trials: int | None = None,
    sensitivity_at: Any = None,
    conversion: Mapping[str, Any] | None = None,
    conversion_inputs: Mapping[str, Any] | None = None,
    heat: Mapping[str, Any] | None = None,
    comparison: Mapping[str, Any] | None = None,
) -> dict[str, Any]:
    """The decision record (plain dict, sealed with its content hash) of calls already made.

    ``heat`` (``feed``, ``T_feed`` — one temperature, one per feed species, or None for the
    reaction temperature —, ``conversion`` — a fraction or ``"equilibrium"`` —, ``key``, ``P``,
    ``product``) adds the heat duty at each temperature of the call and the adiabatic
    temperature, computed here from the call's own draws (:mod:`feasibly.heat`).
    ``comparison`` (``compounds``, ``reagent``, ``T_range``, ``points``, ``samples``, ``seed``)
    adds formation lines compared on one scale (:mod:`feasibly.comparison`); their draws are
    their own (other reactions than the call's), from their own seed.

    ``conversion`` is the result of :func:`feasibly.equilibrium.conversion_assessment` for the
    same reaction and temperatures, and ``conversion_inputs`` what it was called with: ``feed``
    (species → amount), ``key``, ``required`` (fraction), ``P_Pa``, ``samples``, ``seed`` and
    ``confidence``. Give both or neither.

    ``uncertain`` must be the Monte Carlo run of the same reaction on the same temperatures and
    pressures, with a seed. ``balance`` (whether coefficients were found) is inferred when not
    given; ``required_K`` is needed only when the run used one not exactly written in 6 digits;
    ``max_trials`` is the adaptive trial limit if one other than the default was used.
    """
    a, u = assessment, uncertain
    for name, text in (("author", author), ("reviewer", reviewer), ("rationale", rationale)):
        if not isinstance(text, str):
            raise RecordError("record_from", [f"field review.{name}: must be text"])
    problems = []
    if a.molalities_mol_per_kg or (u is not None and u.molalities_mol_per_kg):
        # The record format (version 1) has no field for molalities, so its verification would
        # recompute a different ΔrG: refuse rather than seal a record that cannot be checked.
        problems.append(
            "field conditions: results at given molalities cannot be recorded yet (record "
            "format version 1 has no molality field); record the standard-state run instead"
        )
    if u is not None:
        if u.reaction.equation() != a.reaction.equation():
            problems.append("field uncertain: it is the run of a different reaction")
        if not np.array_equal(u.T, a.standard.T):
            problems.append("field uncertain: it was run on other temperatures")
        if u.partial_pressures_Pa != a.partial_pressures_Pa:
            problems.append("field uncertain: it was run at other partial pressures")
        if u.standard_pressure != a.standard.standard_pressure:
            problems.append("field uncertain: it was run at another standard pressure")
        if u.at_conversion != a.at_conversion:
            problems.append("field uncertain: its call was made at other conditions")
        if u.gas_model != a.gas_model:
            problems.append("field uncertain: it was run with another gas model")
    if a.at_conversion is not None:
        same = conversion_inputs is not None and all(
            conversion_inputs.get(k) == a.at_conversion[k] for k in ("feed", "key", "required")
        )
        if (
            not same
            or conversion_inputs is None
            or conversion_inputs["P_Pa"] != a.at_conversion["P_Pa"]
        ):
            problems.append(
                "field conversion: the call was made at a required conversion; give that "
                "conversion result and the same inputs"
            )
    if conversion is not None and conversion_inputs is not None:
        shared = bool(conversion.get("shared_draws"))
        if shared != bool(conversion_inputs.get("shared_draws", False)):
            problems.append(
                "field conversion.shared_draws: say whether the conversion used the call's draws"
            )
        if shared and (
            u is None
            or conversion.get("trials") != u.trials
            or conversion.get("seed") != u.samples.seed
            or conversion_inputs.get("samples") != u.trials
            or conversion_inputs.get("seed") != u.samples.seed
        ):
            problems.append(
                "field conversion: it says it used the call's draws, but its trials or seed are "
                "not those of the call"
            )
        if not shared and u is not None and conversion.get("trials"):
            problems.append(
                "field conversion: its Monte Carlo bands come from draws of their own; a record "
                "holds one set of draws (pass sample_set=the call's samples)"
            )
    if (conversion is None) != (conversion_inputs is None):
        problems.append("field conversion: give the conversion result and its inputs together")
    if conversion is not None and conversion.get("T_K") != [float(t) for t in a.standard.T]:
        problems.append("field conversion: it was computed on other temperatures")
    if problems:
        raise RecordError("record_from", problems)
    heat_in = heat_inputs(heat) if heat is not None else None
    comparison_in = comparison_inputs(comparison) if comparison is not None else None
    t_sens = float(a.standard.T[len(a.standard.T) // 2])
    if sensitivity_at is not None:
        t_sens = read_temperature(sensitivity_at)
    rxn = a.reaction
    record: dict[str, Any] = {
        "schema": SCHEMA_MARK,
        "schema_version": SCHEMA_VERSION,
        "created": datetime.now(UTC).isoformat(timespec="seconds"),
        "review": {"author": author, "reviewer": reviewer, "rationale": rationale},
        "reaction": {
            "entered": rxn.text,
            "balance": _infer_balance(a) if balance is None else bool(balance),
            "balanced": rxn.equation(),
            "pretty": rxn.equation(pretty=True),
        },
        "conditions": {
            "temperature": temperature_section(a),
            "standard_pressure_Pa": float(a.standard.standard_pressure),
            "partial_pressures_Pa": plain(a.partial_pressures_Pa),
            "call_at_required_conversion": a.at_conversion is not None,
            "gas_model": a.gas_model,
        },
        "uncertainty": (
            _uncertainty_inputs(u, required_K, max_trials, t_sens) if u is not None else None
        ),
        "data": {
            "library_version": a.library_version,
            "library_sha256": a.library_hash,
            "user_files": list(rxn.library.user_files),
            # the data owners' citations and terms, as the shipped library states them
            "sources": plain(dict(rxn.library.meta.get("sources", {}))),
        },
        "species": species_section(rxn),
        "environment": environment(),
        "results": results_section(a, u, t_sens),
    }
    if conversion is not None and conversion_inputs is not None:
        record["conversion"] = plain(dict(conversion_inputs))
        record["results"]["conversion"] = plain(dict(conversion))
    if heat_in is not None:
        record["heat"] = plain(heat_in)
        record["results"]["heat"] = heat_section(a, u, heat_in)
    if comparison_in is not None:
        record["comparison"] = plain(comparison_in)
        record["results"]["comparison"] = comparison_section(rxn.library, comparison_in)
    return _seal(record)


def make_record(
    equation: str,
    T: Any = None,
    T_range: Any = None,
    points: int = 12,
    *,
    partial_pressures: Mapping[str, Any] | None = None,
    standard_pressure: Any = "1 bar",
    library: Library | None = None,
    balance: bool = False,
    samples: int | None = None,
    seed: int | None = None,
    method: Method = "mc",
    adaptive: bool = False,
    max_trials: int = ADAPTIVE_MAX_TRIALS,
    confidence: float = 0.95,
    threshold: Any = "0 J/mol",
    required_K: Any = None,
    overrides: Sequence[Override] = (),
    correlations: Mapping[tuple[InputKey, InputKey], float] | None = None,
    sensitivity_at: Any = None,
    author: str = "",
    reviewer: str = "",
    rationale: str = "",
    gas_model: str = "ideal",
) -> dict[str, Any]:
    """Run the call (:func:`feasibly.assess`, and the Monte Carlo run when ``samples`` or
    ``adaptive`` is given) and return its decision record.

    Arguments are those of :func:`feasibly.assess` and
    :func:`feasibly.uncertainty.assess_uncertainty`. Without a ``seed`` a fresh one is drawn and
    recorded, so the run can be reproduced.

    >>> rec = make_record("MgCO3 -> MgO + CO2", T="800 K", samples=4096, seed=1, author="A. Chem")
    >>> rec["results"]["summary"]["verdict"], rec["uncertainty"]["seed"]
    ('feasible', 1)
    """
    a = assess(
        equation,
        T=T,
        T_range=T_range,
        points=points,
        partial_pressures=partial_pressures,
        standard_pressure=standard_pressure,
        library=library,
        balance=balance,
        gas_model=gas_model,
    )
    u = None
    if samples is not None or adaptive:
        if seed is None:
            seed = secrets.randbits(
                32
            )  # 32 bits: ample for distinct runs, exact in any JSON reader
        u = assess_uncertainty(
            a.reaction,
            T=T,
            T_range=T_range,
            points=points,
            samples=samples if samples is not None else 100_000,
            seed=seed,
            method=method,
            adaptive=adaptive,
            confidence=confidence,
            threshold=threshold,
            required_K=required_K,
            overrides=overrides,
            correlations=correlations,
            partial_pressures=partial_pressures,
            standard_pressure=standard_pressure,
            library=library,
            max_trials=max_trials,
            progress=False,
            gas_model=gas_model,
        )
    return record_from(
        a,
        u,
        author=author,
        reviewer=reviewer,
        rationale=rationale,
        balance=balance,
        required_K=float(required_K) if required_K is not None else None,
        max_trials=max_trials if adaptive else None,
        sensitivity_at=sensitivity_at,
    )

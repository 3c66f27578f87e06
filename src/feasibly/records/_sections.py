"""The optional sections of a decision record beside the call (private to
:mod:`feasibly.records`): a heat balance from the call's own draws, and formation lines compared
on one scale. Each has an input reader (the record's own form, read back unchanged by
``verify``) and a builder from the kernel's results to plain JSON-ready data.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import Any

import numpy as np

from ..conditions import read_feed, read_pressure, read_temperature
from ..errors import InvalidInput, OutsideDataRange, RecordError
from ..library.catalogue import Library
from ..thermo.assessment import Assessment
from ..thermo.reaction import Reaction
from ..uncertainty import UncertainAssessment
from ..uncertainty.linear import uncertain_species
from ._plain import plain

__all__ = ["comparison_inputs", "comparison_section", "heat_inputs", "heat_section"]


def heat_inputs(given: Mapping[str, Any]) -> dict[str, Any]:
    """The inputs of a heat balance in the record's own form (SI floats, fractions).

    ``given`` holds ``feed`` (text or species → amount), ``T_feed`` (one temperature, one per
    feed species, or None: the reaction temperature), ``conversion`` (a fraction, ``"90%"`` or
    ``"equilibrium"``), ``key``, ``P`` and ``product``; the record's own keys (``T_feed_K``,
    ``P_Pa``) are read as they are, so a record's section reads back unchanged.
    """
    from ..heat import read_conversion_choice

    unknown = set(given) - {
        "feed", "T_feed", "T_feed_K", "conversion", "key", "P", "P_Pa", "product"
    }  # fmt: skip
    if unknown:
        raise RecordError("record_from", [f"field heat.{k}: unknown" for k in sorted(unknown)])
    if "feed" not in given:
        raise RecordError("record_from", ["field heat.feed: missing (the amounts fed)"])
    feed = {k: float(np.squeeze(v)) for k, v in read_feed(given["feed"]).items()}
    if "T_feed_K" in given:
        t_feed = given["T_feed_K"]
    else:
        raw = given.get("T_feed")
        if raw is None:
            t_feed = None
        elif isinstance(raw, Mapping):
            t_feed = {str(k): read_temperature(v) for k, v in raw.items()}
        else:
            t_feed = read_temperature(raw)
    P_Pa = float(given["P_Pa"]) if "P_Pa" in given else read_pressure(given.get("P", "1 bar"))
    choice = read_conversion_choice(given.get("conversion", 1.0))
    return {
        "feed": feed,
        "T_feed_K": t_feed,
        "conversion": choice if isinstance(choice, str) else float(choice),
        "key": given.get("key"),
        "P_Pa": P_Pa,
        "product": given.get("product"),
    }


def heat_section(
    a: Assessment, u: UncertainAssessment | None, inputs: Mapping[str, Any]
) -> dict[str, Any]:
    """Heat duty at each temperature of the call and the adiabatic temperature of the feed, from
    the call's own draws when it has them (:mod:`feasibly.heat`)."""
    from ..heat import adiabatic_temperature, heat_duty

    t_feed = inputs["T_feed_K"]
    T_feed: Any = None
    if isinstance(t_feed, Mapping):
        T_feed = {k: (float(v), "K") for k, v in t_feed.items()}
    elif t_feed is not None:
        T_feed = (float(t_feed), "K")
    common: dict[str, Any] = {"conversion": inputs["conversion"], "key": inputs["key"]}
    rows = []
    product = None
    for t in a.standard.T:
        d = heat_duty(
            a.reaction,
            (float(t), "K"),
            inputs["feed"],
            T_feed=T_feed,
            P=(inputs["P_Pa"], "Pa"),
            product=inputs["product"],
            call=u,
            **common,
        )
        row = d.to_dict()
        for k in ("equation", "P_Pa", "key"):
            row.pop(k)
        product = row.pop("product")  # the same in every row: said once below
        rows.append(row)
    out: dict[str, Any] = {
        "rows": rows,
        "product": product,
        "shared_draws": u is not None,
        "trials": int(u.trials) if u is not None else None,
        "adiabatic": None,
        "adiabatic_note": "",
    }
    if isinstance(t_feed, Mapping) and len(set(t_feed.values())) > 1:
        out["adiabatic_note"] = (
            "No adiabatic temperature: the feed enters at several temperatures; it is given for "
            "a feed at one temperature."
        )
        return plain(out)
    t_in = float(next(iter(t_feed.values()))) if isinstance(t_feed, Mapping) else t_feed
    if t_in is None:
        t_in = float(a.standard.T[0])
    try:
        hot = adiabatic_temperature(
            a.reaction, inputs["feed"], (t_in, "K"), P=(inputs["P_Pa"], "Pa"), call=u, **common
        )
    except InvalidInput as exc:  # an endothermic step has no adiabatic temperature to quote
        reason = exc.expected.replace("a step that releases heat: this one", "this step")
        out["adiabatic_note"] = f"No adiabatic temperature: {reason}."
        return plain(out)
    except OutsideDataRange as exc:  # the outlet would leave the range of its data
        out["adiabatic_note"] = f"No adiabatic temperature within the data: {exc}"
        return plain(out)
    adiabatic = hot.to_dict()
    adiabatic.pop("equation")
    out["adiabatic"] = adiabatic
    out["adiabatic_note"] = hot.notes[0]
    return plain(out)


def comparison_inputs(given: Mapping[str, Any]) -> dict[str, Any]:
    """The inputs of a formation-line comparison in the record's own form."""
    from ..conditions import read_temperatures

    unknown = set(given) - {
        "compounds", "reagent", "T_range", "T_lo_K", "T_hi_K", "points", "samples", "seed"
    }  # fmt: skip
    if unknown:
        raise RecordError(
            "record_from", [f"field comparison.{k}: unknown" for k in sorted(unknown)]
        )
    compounds = given.get("compounds")
    if isinstance(compounds, str) or not isinstance(compounds, Sequence) or not compounds:
        raise RecordError(
            "record_from", ["field comparison.compounds: a list of compounds or equations"]
        )
    points = int(given.get("points", 61))
    if "T_lo_K" in given:
        lo, hi = float(given["T_lo_K"]), float(given["T_hi_K"])
    else:
        temps, _ = read_temperatures(
            None, given.get("T_range", ("500 K", "2000 K")), points, "record_from"
        )
        lo, hi = float(temps[0]), float(temps[-1])
    samples = given.get("samples")
    seed = given.get("seed")
    if samples is not None and seed is None:
        raise RecordError(
            "record_from",
            [
                "field comparison.seed: the comparison's Monte Carlo run needs a seed to be "
                "reproduced; give seed="
            ],
        )
    return {
        "compounds": [str(c) for c in compounds],
        "reagent": str(given.get("reagent", "O2")),
        "T_lo_K": lo,
        "T_hi_K": hi,
        "points": points,
        "samples": None if samples is None else int(samples),
        "seed": None if seed is None else int(seed),
    }


def comparison_section(library: Library, inputs: Mapping[str, Any]) -> dict[str, Any]:
    """Formation lines per mole of the reagent (:func:`feasibly.comparison.formation_lines`):
    ΔrG° with 68 % and 95 % bands per line and temperature, the phase changes on each line, the
    reductant ratios, and P(line a below line b) at each T for every pair."""
    from ..comparison import formation_lines

    lines = formation_lines(
        list(inputs["compounds"]),
        reagent=inputs["reagent"],
        T_range=((inputs["T_lo_K"], "K"), (inputs["T_hi_K"], "K")),
        points=inputs["points"],
        samples=inputs["samples"],
        seed=inputs["seed"],
        library=library,
    )
    own = sorted(
        {
            sp.id
            for eq in lines.equations
            for sp in uncertain_species(Reaction.parse(eq, library))
            if sp.origin != "library"
        }
    )
    if own:
        raise RecordError(
            "record_from",
            [
                "field comparison.compounds: lines using your own species entries ("
                + ", ".join(own)
                + ") cannot be recorded yet (the record carries only the call's entries)"
            ],
        )
    out_lines = []
    for i, label in enumerate(lines.labels):
        line: dict[str, Any] = {
            "label": label,
            "equation": lines.equations[i],
            "dG_J_per_mol": lines.G[i],
            "phase_changes": [
                {"species": sp, "T_K": t, "from": a, "to": b}
                for sp, t, a, b in lines.phase_changes[i]
            ],
        }
        if lines.bands is not None:
            # bands rows: BAND_PROBS = 2.5, 16, 50, 84, 97.5 %
            line["lo95_J_per_mol"] = lines.bands[0, i]
            line["lo68_J_per_mol"] = lines.bands[1, i]
            line["median_J_per_mol"] = lines.bands[2, i]
            line["hi68_J_per_mol"] = lines.bands[3, i]
            line["hi95_J_per_mol"] = lines.bands[4, i]
        for name, r in lines.ratios.items():
            key = "log10_" + name.replace("/", "_per_") + "_needed"
            line[key] = {k: v[i] for k, v in r.items()}
        out_lines.append(line)
    p_below = []
    if lines.bands is not None:
        labels = lines.labels
        p_below = [
            {"a": labels[i], "b": labels[j], "P": lines.p_below(labels[i], labels[j])}
            for i in range(len(labels))
            for j in range(i + 1, len(labels))
        ]
    return plain(
        {
            "reagent": lines.reagent,
            "T_K": lines.T,
            "lines": out_lines,
            "p_below": p_below,
            "trials": lines.samples,
            "seed": lines.seed,
        }
    )

#!/usr/bin/env python
"""Benchmark: how long the worksheet takes, kernel-side, to show a change the user makes.

Drives the widgets' traits the way the browser does (no browser; the time is the Python side of
one change: kernel, figures and the widget messages queued) on a FeasibilityWorksheet with its
defaults (20 000 trials, 41 temperatures):

  temperature   TemperatureControl.value, alternating 650 K / 820 K   (goal ≤ 30 ms)
  equation      ReactionBuilder.equation, MgCO3 ⇄ CaCO3 decomposition (goal ≤ 150 ms)
  pressure      Conditions.entries, CO2 at 0.01 bar ⇄ 0.1 bar          (goal ≤ 150 ms)
  pressure + conversion target  the same with a required conversion set (goal ≤ 300 ms)

Each change is timed two ways, alternately, over --rounds rounds:
  in place   the worksheet as it is: one batch_update of the existing figure's traces
  rebuild    the same change, then the figure built anew and pushed into the widget as the
             worksheet did before in-place updates (feasibility_figure + _draw): the
             difference is what in-place updating saves
Prints min/median/max of each (ms) and of the ratio rebuild / in place, in wall time and in the
process's CPU time (all its threads): on a machine shared with other work the wall time of a
change stretches with the load, its CPU time much less.
Run by hand:  PYTHONPATH=src python benchmarks/bench_worksheet.py [--rounds N]
"""

from __future__ import annotations

import argparse
import time
import warnings
from collections.abc import Callable

from _rounds import ratio_line, time_line

from feasibly import figures
from feasibly.widgets import FeasibilityWorksheet
from feasibly.widgets.panel import _WIDTH


def _toggler(set_a: Callable[[], None], set_b: Callable[[], None]) -> Callable[[], None]:
    state = {"a": False}

    def change() -> None:
        state["a"] = not state["a"]
        (set_a if state["a"] else set_b)()

    return change


def _rebuild(ws: FeasibilityWorksheet) -> None:
    p = ws.panel
    c = figures.curves(p.result)
    snap = figures.snapshot(p.result, p.temperature)
    p._draw(figures.feasibility_figure(c, snap, p.temperature_unit, width=_WIDTH))


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--rounds", type=int, default=7, help="interleaved rounds (at least 5)")
    args = ap.parse_args()
    warnings.simplefilter("ignore")  # ipywidgets' deprecation notices are not ours to time
    ws = FeasibilityWorksheet("MgCO3 -> MgO + CO2", T="650 K", T_window=("500 K", "900 K"))
    temp = ws.temperature
    changes: dict[str, Callable[[], None]] = {
        "temperature": _toggler(
            lambda: setattr(temp, "value", 650.0), lambda: setattr(temp, "value", 820.0)
        ),
        "equation": _toggler(
            lambda: setattr(ws.reaction, "equation", "CaCO3 -> CaO + CO2"),
            lambda: setattr(ws.reaction, "equation", "MgCO3 -> MgO + CO2"),
        ),
        "pressure": _toggler(
            lambda: setattr(ws.conditions, "entries", {"CO2": "0.01 bar"}),
            lambda: setattr(ws.conditions, "entries", {"CO2": "0.1 bar"}),
        ),
    }
    print(
        f"worksheet: {ws.samples:,} trials, {ws.points} temperatures; {args.rounds} rounds, "
        "in place and rebuild alternating"
    )

    def measure(name: str, change: Callable[[], None], rebuild: bool) -> tuple[float, float]:
        t0, c0 = time.perf_counter(), time.process_time()
        change()
        if rebuild and name != "temperature":  # a temperature change never rebuilt the figure
            _rebuild(ws)
        dt, dc = time.perf_counter() - t0, time.process_time() - c0
        assert ws.error == "" and ws.panel.error == "", (ws.error, ws.panel.error)
        return dt, dc

    def run(label: str) -> None:
        for name, change in changes.items():
            change(), change()  # warm-up, both directions
            inplace: list[tuple[float, float]] = []
            rebuilt: list[tuple[float, float]] = []
            for r in range(args.rounds):
                for rebuild in (False, True) if r % 2 == 0 else (True, False):
                    (rebuilt if rebuild else inplace).append(measure(name, change, rebuild))
            print(f"  {label}{name}")
            for k, clock in enumerate(("wall", "CPU ")):
                a, b = [t[k] for t in inplace], [t[k] for t in rebuilt]
                print("    " + time_line(f"in place, {clock}", a))
                if name != "temperature":
                    print("    " + time_line(f"rebuild,  {clock}", b))
                    print("    " + ratio_line(f"rebuild / in place, {clock}", b, a))

    run("")
    ws.conversion.feed = "MgCO3:1, N2:4"
    ws.conversion.key = "MgCO3"
    ws.conversion.required = "30%"
    assert ws.conversion.result, ws.conversion.error
    del changes["equation"]  # the target names MgCO3: an equation without it is refused
    del changes["temperature"]
    run("with a conversion target: ")


if __name__ == "__main__":
    main()

"""Screen a table of reactions in one run: the call, P(feasible) and its standard error, the 95 %
interval, the window and the leading input, one result row per reaction and temperature.

How the numbers are made, and why they equal one reaction at a time:

- Every uncertain input (ΔfH°, S° and the heat-capacity factor of each species-phase) is drawn
  once per table from its own stream, keyed by the seed and the input
  (``method="mc-per-species"`` of :func:`~feasibly.uncertainty.draw_samples`). A species shared by
  several reactions has one set of draws, so their results stay correlated, and each reaction's
  draws are bitwise those that :func:`~feasibly.assess_uncertainty` makes for it alone with the
  same seed and that method.
- The table's ΔrG rows are the exact linear model of :mod:`feasibly.uncertainty.linear`: a
  coefficient matrix over (reaction, temperature) × inputs times the draws. The matrix is block
  sparse (a reaction touches only its own species' inputs), so each reaction's block multiplies
  only its own rows of the draws, with the same dense product and the same streamed order
  statistics as the one-reaction path; a general sparse product would sum in another order and
  give other last bits.
- Rows with a required conversion solve the equilibrium once per trial and temperature, through
  :func:`~feasibly.equilibrium.conversion_assessment` with the same keyed draws.

The table is cut into chunks whose draws fit in a fixed memory budget; a chunk is one task, run
in this process or on a Dask cluster (``client=``). A row's numbers depend only on the row, the
seed and the number of trials, so the cut and the place a chunk runs change nothing.

An error in a row (an unknown species, a temperature outside the data) is reported in that row's
``error`` column; the other rows are screened as usual.

Feasibility says nothing about rate, hazards or scale-up; a 'feasible' row is a thermodynamic
statement only.
"""

from __future__ import annotations

import functools
import math
import secrets
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Final

import numpy as np

from ..__about__ import __version__
from ..conditions import (
    read_confidence,
    read_count,
    read_partial_pressure_text,
    read_temperatures,
)
from ..equilibrium import conversion_assessment
from ..errors import FeasiblyError, InvalidInput, excerpt
from ..library import Library, default_library
from ..thermo import Reaction, missing_stable_phases
from ..uncertainty import (
    UncertainAssessment,
    UncertainInput,
    assess_uncertainty,
    build_inputs,
    draw_samples,
    uncertain_species,
    verdict,
    window_phrase,
)
from ._progress import Progress
from .table import INPUT_COLUMNS, RESULT_COLUMNS, cell, check_columns

__all__ = ["screen"]

#: Sampling method of every screen: one stream per input, so shared species share their draws.
METHOD: Final = "mc-per-species"
# Temperatures in a T_low..T_high range when T_points is empty: the default of `feasibly assess`.
_DEFAULT_POINTS = 12
# Draws held at once per chunk: 256 MB of float64 (about 320 inputs at 10^5 trials, 32 at 10^6);
# a row whose own inputs exceed it still runs, alone in its chunk.
_CHUNK_BYTES = 256 * 2**20
# On a cluster, chunks per worker so that a slow chunk does not leave the others idle
# (common practice, no source).
_CHUNKS_PER_WORKER = 4

_CONVERSION_COLUMNS = ("feed", "key", "required_conversion")
_TEXT_COLUMNS = (
    "label", "note", "equation", "reaction", "criterion", "call", "window", "leading_input",
    "error",
)  # fmt: skip
_NOT_FLOAT = (*_TEXT_COLUMNS, "row", "trials", "seed")
# Kernel argument names and the table columns that carry them, for messages in the table's terms.
_COLUMN_OF = {
    "T": "T",
    "T_range": "T_low/T_high",
    "points": "T_points",
    "threshold": "threshold",
    "required_K": "required_K",
    "partial_pressures": "partial_pressures",
}


@dataclass(frozen=True)
class _Settings:
    samples: int
    seed: int
    confidence: float


@dataclass
class _Job:
    """One table row, read: the reaction and its conditions."""

    cells: dict[str, Any]
    reaction: Reaction
    inputs: list[UncertainInput]
    T: Any
    T_range: tuple[str, str] | None
    points: int
    conversion: bool


def _message(exc: BaseException) -> str:
    """A row's error in the table's own terms (a kernel argument is named by its column)."""
    column = None
    if type(exc) is InvalidInput:
        column = _COLUMN_OF.get(exc.parameter) or (
            exc.parameter if exc.parameter in INPUT_COLUMNS else None
        )
    if column is not None:
        assert isinstance(exc, InvalidInput)
        got = "nothing" if exc.value is None else excerpt(exc.value)
        return f"column {column!r} must be {exc.expected}. Got {got} instead."
    if isinstance(exc, FeasiblyError):
        return str(exc)
    return (
        f"internal error ({type(exc).__name__}: {exc}). This is a bug in feasibly; please report "
        "it with this row."
    )


def _points(value: Any) -> int:
    if value is None:
        return _DEFAULT_POINTS
    if isinstance(value, str):
        try:
            value = float(value)
        except ValueError:
            raise InvalidInput("points", "screen", "a whole number of at least 2", value) from None
    if isinstance(value, float) and value.is_integer():
        value = int(value)
    return read_count(value, "points", "screen", minimum=2)


def _read_row(cells: dict[str, Any], library: Library) -> _Job:
    """Read one row's reaction and conditions; raises the project's error for a bad cell."""
    equation = cells.get("equation")
    if equation is None:
        raise InvalidInput("equation", "screen", "an equation such as 'CaCO3 -> CaO + CO2'", None)
    rxn = Reaction.parse(str(equation), library)
    low, high = cells.get("T_low"), cells.get("T_high")
    T_range = None
    if low is not None or high is not None:
        if low is None or high is None:
            raise InvalidInput(
                "T_range", "screen", "given with both ends (T_low and T_high)", (low, high)
            )
        T_range = (str(low), str(high))
    elif cells.get("T_points") is not None:
        raise InvalidInput(
            "points", "screen", "left empty unless T_low and T_high are given", cells["T_points"]
        )
    points = _points(cells.get("T_points"))
    conv = [c for c in _CONVERSION_COLUMNS if cells.get(c) is not None]
    if conv and len(conv) < len(_CONVERSION_COLUMNS):
        raise InvalidInput(
            "required_conversion",
            "screen",
            "given with feed and key (all three, e.g. 'CH4:1, H2O:2', 'CH4', '90%')",
            {c: cells.get(c) for c in _CONVERSION_COLUMNS},
        )
    if conv:
        for c in ("threshold", "required_K", "partial_pressures"):
            if cells.get(c) is not None:
                raise InvalidInput(
                    c,
                    "screen",
                    "empty in a row judged by a required conversion (feed, key, "
                    "required_conversion)",
                    cells[c],
                )
    elif cells.get("total_pressure") is not None:
        raise InvalidInput(
            "total_pressure",
            "screen",
            "given only with a required conversion; for ΔrG at pressure give partial_pressures",
            cells["total_pressure"],
        )
    # A compound written without a phase whose only data are gas is refused where the tables
    # make it a solid or liquid, as in assess (FeO, NiO): the row reports it.
    temps, _ = read_temperatures(cells.get("T"), T_range, points, "screen")
    missing_stable_phases(rxn, temps)
    inputs = build_inputs(uncertain_species(rxn), ())
    return _Job(cells, rxn, inputs, cells.get("T"), T_range, points, bool(conv))


def _base(job_cells: dict[str, Any], settings: _Settings) -> dict[str, Any]:
    row = dict.fromkeys(RESULT_COLUMNS)
    row.update(
        {
            "row": job_cells["row"],
            "label": job_cells.get("label"),
            "note": job_cells.get("note"),
            "equation": job_cells.get("equation"),
            "trials": settings.samples,
            "seed": settings.seed,
        }
    )
    for name in ("T_K", "P_feasible", "P_feasible_se", "leading_share"):
        row[name] = math.nan
    for name in ("dG_mean_J_per_mol", "dG_lo_J_per_mol", "dG_hi_J_per_mol"):
        row[name] = math.nan
    for name in ("conversion_lo", "conversion_median", "conversion_hi"):
        row[name] = math.nan
    return row


def _window(job: _Job, windows: Sequence[dict[str, Any]]) -> str | None:
    if job.T_range is None:
        return None  # one temperature: no range to hold a window
    return window_phrase(windows) if windows else "nowhere in the range"


def _assess(job: _Job, draws: Any, settings: _Settings, library: Library) -> UncertainAssessment:
    cells = job.cells
    pressures = cells.get("partial_pressures")
    return assess_uncertainty(
        job.reaction,
        T=job.T,
        T_range=job.T_range,
        points=job.points,
        draws=draws,
        confidence=settings.confidence,
        threshold=cells.get("threshold"),
        required_K=cells.get("required_K"),
        partial_pressures=(
            {
                name: (pa, "Pa")
                for name, pa in read_partial_pressure_text(str(pressures), "screen").items()
            }
            if pressures is not None
            else None
        ),
        standard_pressure=cells.get("standard_pressure") or "1 bar",
        library=library,
    )


def _dg_rows(job: _Job, draws: Any, settings: _Settings, library: Library) -> list[dict[str, Any]]:
    a = _assess(job, draws, settings, library)
    window = _window(job, a.window())
    reaction = a.reaction.equation()
    out = []
    for i, lead in enumerate(a.leading_inputs()):
        row = _base(job.cells, settings)
        p = float(a.p_feasible[i])
        row.update(
            {
                "reaction": reaction,
                "T_K": float(a.T[i]),
                "criterion": a.threshold_text,
                "call": verdict(p, settings.confidence),
                "P_feasible": p,
                "P_feasible_se": float(a.p_feasible_se[i]),
                "dG_mean_J_per_mol": float(a.G.mean[i]),
                "dG_lo_J_per_mol": float(a.G.lo[i]),
                "dG_hi_J_per_mol": float(a.G.hi[i]),
                "window": window,
                "leading_input": f"{lead['species']} {lead['quantity']}",
                "leading_share": lead["share"],
            }
        )
        out.append(row)
    return out


def _conversion_rows(
    job: _Job, draws: Any, settings: _Settings, library: Library
) -> list[dict[str, Any]]:
    cells = job.cells
    temps, _ = read_temperatures(job.T, job.T_range, job.points, "screen")
    c = conversion_assessment(
        job.reaction,
        (temps, "K"),
        str(cells["feed"]),
        str(cells["key"]),
        cells["required_conversion"],
        cells.get("total_pressure") or "1 bar",
        samples=settings.samples,
        seed=settings.seed,
        confidence=settings.confidence,
        library=library,
        method=METHOD,
    )
    # The leading input of ΔrG° on the same draws: the conversion at each T is a monotone
    # function of ΔrG°, so the same input drives its spread.
    a = assess_uncertainty(
        job.reaction, T=(temps, "K"), draws=draws, confidence=settings.confidence, library=library
    )
    window = _window(job, c["window"])
    criterion = f"conversion of {c['key']} ≥ {100 * c['required_conversion']:g} %"
    out = []
    for i, (crow, lead) in enumerate(zip(c["rows"], a.leading_inputs(), strict=True)):
        row = _base(cells, settings)
        p = float(crow["P_meets_required"])
        row.update(
            {
                "reaction": a.reaction.equation(),
                "T_K": float(crow["T_K"]),
                "criterion": criterion,
                "call": verdict(p, settings.confidence),
                "P_feasible": p,
                "P_feasible_se": float(crow["P_meets_required_se"]),
                "dG_mean_J_per_mol": float(a.G.mean[i]),
                "dG_lo_J_per_mol": float(a.G.lo[i]),
                "dG_hi_J_per_mol": float(a.G.hi[i]),
                "conversion_lo": float(crow["conversion_lo"]),
                "conversion_median": float(crow["conversion_median"]),
                "conversion_hi": float(crow["conversion_hi"]),
                "window": window,
                "leading_input": f"{lead['species']} {lead['quantity']}",
                "leading_share": lead["share"],
            }
        )
        out.append(row)
    return out


# --- libraries that travel to workers -----------------------------------------------------------
LibrarySpec = tuple[tuple[str, str], ...] | None


@functools.lru_cache(maxsize=8)
def _library_from_spec(spec: LibrarySpec) -> Library:
    """The shipped library with the user's species files (path, text) added, as `from_file` reads
    them; kept per worker process, so each chunk does not re-read it."""
    lib = default_library()
    for path, text in spec or ():
        user = Library.from_text(text, path, origin=f"user file {Path(path).name}")
        lib = lib.with_species(Library(user, user.meta, user_files=(path,)))
    return lib


def _library_spec(library: Library) -> Library | LibrarySpec:
    """How ``library`` travels to a worker: None for the shipped one, the text of its species
    files when it is the shipped one with those added (rebuilt and kept per worker), else the
    library itself (pickled)."""
    if library is default_library():
        return None
    try:
        spec = tuple((p, Path(p).read_text("utf-8")) for p in library.user_files)
    except OSError:
        return library  # a file gone since it was read: send the entries themselves
    rebuilt = _library_from_spec(spec)
    # Entries compare by identity; a rebuilt user entry is the same when read from the same text.
    same = [sp.id for sp in rebuilt] == [sp.id for sp in library] and all(
        a is b or (a.origin == b.origin and dict(a.raw) == dict(b.raw))
        for a, b in zip(rebuilt, library, strict=True)
    )
    return spec if same else library


# --- one chunk: the unit of work, here or on a worker -------------------------------------------
def _run_chunk(
    rows: list[dict[str, Any]],
    settings: _Settings,
    library: Library | LibrarySpec,
    tick: Callable[[int], None] | None = None,
) -> tuple[list[dict[str, Any]], dict[str, str]]:
    """Screen some rows over shared keyed draws; returns their result rows and the version and
    data library this ran with (every worker of a cluster must agree with the client)."""
    lib = library if isinstance(library, Library) else _library_from_spec(library)
    results: dict[int, list[dict[str, Any]]] = {}
    jobs: list[_Job] = []
    for cells in rows:
        try:
            jobs.append(_read_row(cells, lib))
        except Exception as exc:  # a bad row is reported in the row, never stops the table
            results[cells["row"]] = [_base(cells, settings) | {"error": _message(exc)}]
            if tick:
                tick(1)
    union: dict[tuple[str, str], UncertainInput] = {}
    for job in jobs:
        for inp in job.inputs:
            union.setdefault(inp.key, inp)
    draws = None
    if union:
        draws = draw_samples(
            list(union.values()), settings.samples, method=METHOD, seed=settings.seed
        )
    for job in jobs:
        try:
            run = _conversion_rows if job.conversion else _dg_rows
            results[job.cells["row"]] = run(job, draws, settings, lib)
        except Exception as exc:  # a bad row is reported in the row, never stops the table
            results[job.cells["row"]] = [_base(job.cells, settings) | {"error": _message(exc)}]
        if tick:
            tick(1)
    out = [r for cells in rows for r in results[cells["row"]]]
    return out, {"version": __version__, "library": lib.content_hash}


def _plan(
    rows: list[dict[str, Any]], library: Library, samples: int, max_rows: int
) -> list[list[dict[str, Any]]]:
    """Cut the rows, in order, into chunks whose shared draws fit the memory budget.

    A conversion row (N equilibrium solves per temperature) is a chunk of its own.
    """
    budget = max(1, _CHUNK_BYTES // (8 * samples))
    chunks: list[list[dict[str, Any]]] = []
    current: list[dict[str, Any]] = []
    keys: set[str] = set()
    for cells in rows:
        try:
            rxn = Reaction.parse(str(cells.get("equation")), library)
            ids = {sp.id for sp in uncertain_species(rxn)}
        except Exception:  # the row's own chunk reports it
            ids = set()
        conversion = any(cells.get(c) is not None for c in _CONVERSION_COLUMNS)
        grown = keys | ids
        if current and (conversion or 3 * len(grown) > budget or len(current) >= max_rows):
            chunks.append(current)
            current, grown = [], set(ids)
        current.append(cells)
        keys = grown
        if conversion:
            chunks.append(current)
            current, keys = [], set()
    if current:
        chunks.append(current)
    return chunks


def _read_seed(seed: Any) -> int:
    if seed is None:
        # Drawn here and written into every result row, so the screen can be repeated.
        return secrets.randbits(63)
    if isinstance(seed, bool) or not isinstance(seed, (int, np.integer)) or seed < 0:
        raise InvalidInput("seed", "screen", "a whole number of at least 0", seed)
    return int(seed)


def screen(
    table: Any,
    *,
    samples: int = 100_000,
    seed: int | None = None,
    confidence: float = 0.95,
    library: Library | None = None,
    client: Any = None,
    progress: bool | None = None,
) -> Any:
    """Screen every reaction of a table: one result row per reaction and temperature.

    ``table`` is a pandas DataFrame with the columns of :data:`~feasibly.batch.INPUT_COLUMNS`
    (read files with :func:`~feasibly.batch.read_table`); the result has the columns of
    :data:`~feasibly.batch.RESULT_COLUMNS`. ``samples`` Monte Carlo trials per reaction, drawn
    once per input for the whole table from ``seed`` (drawn and reported when not given).
    ``client`` (a ``dask.distributed.Client``) runs the chunks on its cluster; the result is the
    same. ``progress`` shows a progress line on stderr (default: when stderr is a terminal).

    Each row equals ``assess_uncertainty(equation, ..., samples=samples, seed=seed,
    method="mc-per-species")`` for that reaction alone (or ``conversion_assessment`` with that
    method for a required conversion).

    >>> import pandas as pd
    >>> t = pd.DataFrame({"equation": ["MgCO3 -> MgO + CO2"], "T": ["800 K"]})
    >>> screen(t, samples=4096, seed=1)["call"].tolist()
    ['feasible']
    """
    import pandas as pd

    if not isinstance(table, pd.DataFrame):
        raise InvalidInput(
            "table",
            "screen",
            "a pandas DataFrame (read CSV or Parquet files with read_table)",
            type(table).__name__,
        )
    check_columns([str(c) for c in table.columns])
    settings = _Settings(
        read_count(samples, "samples", "screen", minimum=2),
        _read_seed(seed),
        read_confidence(confidence, "screen"),
    )
    library = library or default_library()
    rows = [
        {str(k): cell(rec, str(k)) for k in rec} | {"row": i}
        for i, rec in enumerate(table.to_dict("records"))
    ]
    bar = Progress(len(rows), progress)
    if client is None:
        chunks = _plan(rows, library, settings.samples, max_rows=len(rows) or 1)
        parts = [_run_chunk(chunk, settings, library, bar.advance)[0] for chunk in chunks]
    else:
        parts = _run_on_cluster(client, rows, settings, library, bar)
    bar.close()
    result = pd.DataFrame.from_records(
        [r for part in parts for r in part], columns=list(RESULT_COLUMNS)
    )
    # One dtype per column whatever the rows hold (text columns stay text when all empty).
    return result.astype(
        {name: "str" for name in _TEXT_COLUMNS}
        | {"row": "int64", "trials": "int64", "seed": "int64"}
        | {name: "float64" for name in RESULT_COLUMNS if name not in _NOT_FLOAT}
    )


def _run_on_cluster(
    client: Any, rows: list[dict[str, Any]], settings: _Settings, library: Library, bar: Progress
) -> list[list[dict[str, Any]]]:
    """Run the chunks as tasks on a Dask cluster; results come back in table order."""
    from distributed import as_completed

    spec = _library_spec(library)
    workers = max(1, len(client.nthreads()))
    max_rows = max(1, math.ceil(len(rows) / (_CHUNKS_PER_WORKER * workers)))
    chunks = _plan(rows, library, settings.samples, max_rows)
    futures = client.map(_run_chunk, chunks, settings=settings, library=spec, pure=False)
    sizes = {f.key: len(c) for f, c in zip(futures, chunks, strict=True)}
    for fut in as_completed(futures):
        bar.advance(sizes[fut.key])
    done = client.gather(futures)
    want = {"version": __version__, "library": library.content_hash}
    for _, meta in done:
        if meta != want:
            raise FeasiblyError(
                f"a worker of the cluster runs feasibly {meta['version']} with data library "
                f"{meta['library'][:12]}…, this process feasibly {want['version']} with "
                f"{want['library'][:12]}…; install the same feasibly on every worker, so that the "
                "screen gives the same numbers wherever a row runs"
            )
    return [part for part, _ in done]

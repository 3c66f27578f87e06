"""Rebuild feasibly's shipped species data library (schema ``feasibly-species``, version 1).

Run from the repository root::

    python data/build_species_library

It rewrites ``data/species-library.json``, ``elements.json``, ``hazard-flags.csv`` and
``source-gaps.json`` (see ``data/README.md`` and ``data/SCHEMA.md``). Build-time dependencies
only, never run-time ones: cantera, chemicals, janaf, pyyaml, numpy, scikit-build-core (for
``pip download`` of the ``cea`` sdist), plus feasibly's
own run-time dependencies (the build uses the kernel's rules from the checkout's ``src``). Every
source file is located through its installed package and each package's version is recorded in
the ``sources`` block. The build stops with :class:`~.errors.SourceError` when a source file or
a curation table is missing or has changed shape. Output is deterministic: same inputs, identical
bytes.

The curation tables (which species, which names, which uncertainty policies) are data, in
``tables/*.toml``, each starting with a comment saying what it is and which module reads it.

Modules, in dependency order (each imports only modules listed above it; :data:`MODULES`):

- ``errors`` — :class:`SourceError`, the build's one failure;
- ``tables`` — readers of ``tables/*.toml`` (tomllib only; no source package needed);
- ``_kernel`` — the one place feasibly is imported: the kernel rules the build reuses;
- ``sources`` — locating package files, versions, licences; the ``sources`` block;
- ``policies`` — value blocks and the written uncertainty policies;
- ``polynomials`` — NASA-7 H(298.15), S(298.15) as the build evaluates them;
- ``formulas`` — spellings, compositions, Hill order, molar mass;
- ``elements`` — ``elements.json`` from chemicals' periodic table;
- ``entries`` — ids, common fields, the value blocks a polynomial gives;
- ``document`` — the library document and its reading by the kernel;
- ``thermo_inp`` — fetching the pinned ``cea`` sdist (sha256 checked) and reading its thermo.inp;
- ``nasa`` — NASA Glenn entries from thermo.inp (NASA-9), and the reader of Cantera's older files;
- ``crc`` — constant-Cp entries from the CRC 298.15 K table (curated solid picks);
- ``crc_auto`` — constant-Cp entries from every other complete CRC row;
- ``atct`` — ATcT tables: reading, and ΔfH° from them;
- ``identifiers`` — CAS numbers and names;
- ``reference_states`` — each element's reference state, ΔfH° = 0;
- ``transitions`` — phases carried from a neighbour at a transition;
- ``janaf_tables`` — NIST-JANAF tables and matching entries to them;
- ``one_bar`` — the check that the gas entropies are on a 1 bar basis;
- ``physical_checks`` — S°, Cp and G-continuity bounds, range ends, reference states (and the
  range cuts made before them);
- ``comparisons`` — the library's policy-governed values against independent compilations;
- ``crosschecks`` — comparisons with every independent compilation and the physical checks;
  a failure without a written disposition (``tables/dispositions.toml``) stops the build;
- ``gaps`` — ``source-gaps.json``: ΔfH° from every source;
- ``corroboration`` — the per-entry evidence: corroborated values (held out) and Cp factors
  compared with NIST-JANAF;
- ``calibration`` — uncertainty policies from the measured spread between independent
  compilations, the disagreement rule, ``uncertainty-calibration.csv``;
- ``aqueous`` — aqueous ions (1 mol/kg, H+ convention) from the CRC table, closure-checked;
- ``phase_points`` — tabulated melting and boiling points (chemicals) on the entries;
- ``hazards`` — ``hazard-flags.csv``;
- ``write`` — writing the four files (elements first; the library after the kernel has read it);
- ``pipeline`` — the steps in run order: elements, NASA thermo.inp, CRC (curated picks, then
  every complete row), identifiers, reference states, CRC composition check, range cuts, ATcT,
  transitions, JANAF (1 bar check, matches), gaps, calibration, cross-checks, aqueous, phase
  points, hazards, write.

``__main__`` sets ``sys.path`` (this package, the checkout's ``src``) and runs ``pipeline.main``.
This package's ``__init__`` imports nothing, so the table readers can be imported (and tested)
without the source packages.
"""

#: The build's modules in dependency order (a test checks every import points up this list).
MODULES = (
    "errors",
    "tables",
    "_kernel",
    "sources",
    "policies",
    "polynomials",
    "formulas",
    "elements",
    "entries",
    "document",
    "thermo_inp",
    "nasa",
    "crc",
    "crc_auto",
    "atct",
    "identifiers",
    "reference_states",
    "transitions",
    "janaf_tables",
    "one_bar",
    "physical_checks",
    "comparisons",
    "crosschecks",
    "gaps",
    "corroboration",
    "calibration",
    "aqueous",
    "phase_points",
    "hazards",
    "write",
    "pipeline",
)

"""Bounds on the size of what a user (or a received file) may ask feasibly to read or compute.

Every parser and every allocation sized by user input checks one of these before it works, so a
careless or crafted input costs a clear error, not minutes of CPU or gigabytes of memory. Each
bound is far above what a real calculation needs; the reason is beside it.
"""

from __future__ import annotations

from typing import Any

__all__ = [
    "MAX_DATA_FILE_BYTES",
    "MAX_EQUATION_CHARS",
    "MAX_FORMULA_CHARS",
    "MAX_NESTING",
    "MAX_NUMBER_DIGITS",
    "MAX_OVERRIDE_CHARS",
    "MAX_POINTS",
    "MAX_QUANTITY_CHARS",
    "MAX_RECORD_BYTES",
    "MAX_SAMPLES",
    "MAX_TRIAL_TEMPERATURES",
    "gib",
    "nesting_depth",
]

#: Equation text: a 20-species equation with phase labels and forms is under 500 characters.
MAX_EQUATION_CHARS = 2000
#: One formula: the longest formulas in the shipped library are under 40 characters.
MAX_FORMULA_CHARS = 200
#: Digits in one number of a formula or equation (count, coefficient, charge): a float64 holds
#: 15–17 significant digits, so more cannot be meant and only costs time to convert.
MAX_NUMBER_DIGITS = 17
#: One quantity with its unit ("1073.15 K", "-4.2 kJ/mol"): a long unit text is under 40.
MAX_QUANTITY_CHARS = 200
#: One override line ("ID:dHf = V ± U UNIT 95% normal; reason"): room for a paragraph of reason.
MAX_OVERRIDE_CHARS = 4000
#: A user species file: the shipped library of ~900 entries is 2.3 MB.
MAX_DATA_FILE_BYTES = 32 * 2**20
#: A decision record: records carry a few species entries and results; a large one is ~1 MB.
MAX_RECORD_BYTES = 32 * 2**20
#: Nesting of tables and lists in a species file or record: the schemas need at most 6 levels.
MAX_NESTING = 64
#: Monte Carlo trials: 10^7 trials of 18 inputs hold 1.4 GB of draws; JCGM 101 asks 10^6 for a
#: 95 % interval to two significant digits, so ten times that is ample.
MAX_SAMPLES = 10_000_000
#: Temperatures on one grid: 10 001 is a 0.1 K step over 1000 K, finer than any data warrants.
MAX_POINTS = 10_001
#: Trials × temperatures of one uncertainty or conversion run (the work, and for conversion the
#: memory, grows with the product): 2·10^9 is 10^6 trials on 2000 temperatures.
MAX_TRIAL_TEMPERATURES = 2_000_000_000


def gib(n_bytes: float) -> str:
    """A byte count as text for a message (``'56 GiB'``, ``'310 MiB'``)."""
    if n_bytes >= 2**30:
        return f"{n_bytes / 2**30:,.0f} GiB"
    return f"{n_bytes / 2**20:,.0f} MiB"


def nesting_depth(doc: Any) -> int:
    """Deepest nesting of tables and lists in parsed data (iterative: no recursion limit)."""
    deepest = 0
    stack: list[tuple[Any, int]] = [(doc, 1)]
    while stack:
        node, depth = stack.pop()
        if isinstance(node, dict):
            children: Any = node.values()
        elif isinstance(node, list):
            children = node
        else:
            continue
        deepest = max(deepest, depth)
        if deepest > MAX_NESTING:
            return deepest
        stack.extend((child, depth + 1) for child in children)
    return deepest

"""The screen's tables: the columns a screen reads, the columns it writes, and CSV/Parquet files.

A table has one reaction per row. Its column names are fixed (a misspelt column is refused rather
than ignored, so that a criterion never silently falls back to its default):

=======================  ==========================================================================
column                   meaning
=======================  ==========================================================================
``equation``             the reaction, e.g. ``CaCO3 -> CaO + CO2`` (required)
``label``                your name for the row, carried into the result
``note``                 free text, carried into the result
``T``                    one temperature with its unit, e.g. ``800 degC`` or ``1100 K``
``T_low``, ``T_high``    a temperature range instead, each with its unit
``T_points``             temperatures in the range, evenly spaced (default 12)
``partial_pressures``    gases' partial pressures, e.g. ``CO2=0.3 bar; H2O=0.1 bar``
                         (the call is then on ΔrG at these pressures, not ΔrG°)
``standard_pressure``    ``1 bar`` (default) or ``1 atm``
``threshold``            feasible when ΔrG is below this, e.g. ``-10 kJ/mol`` (default 0)
``required_K``           feasible when K° is at least this number (instead of ``threshold``)
``feed``                 for a required conversion: feed amounts, e.g. ``CH4:1, H2O:2, N2:0.5``
``key``                  the reactant whose conversion counts, e.g. ``CH4``
``required_conversion``  the conversion you need, e.g. ``90%`` or ``0.9``
``total_pressure``       total pressure of that equilibrium, with its unit (default ``1 bar``)
=======================  ==========================================================================

Empty cells are missing values. A row with ``feed``, ``key`` and ``required_conversion`` is
judged by P(conversion ≥ required) at equilibrium; every other row by P(ΔrG < threshold).
"""

from __future__ import annotations

import difflib
import math
from pathlib import Path
from typing import Any

from ..errors import DataFileError, InvalidInput

__all__ = ["INPUT_COLUMNS", "RESULT_COLUMNS", "read_table", "write_table"]

#: The columns a screen reads, with what each holds.
INPUT_COLUMNS: dict[str, str] = {
    "equation": "the reaction, e.g. 'CaCO3 -> CaO + CO2' (required)",
    "label": "your name for the row, carried into the result",
    "note": "free text, carried into the result",
    "T": "one temperature with its unit, e.g. '800 degC'",
    "T_low": "low end of a temperature range, with its unit",
    "T_high": "high end of the range, with its unit",
    "T_points": "temperatures in the range, evenly spaced (default 12)",
    "partial_pressures": "gases' partial pressures, e.g. 'CO2=0.3 bar; H2O=0.1 bar'",
    "standard_pressure": "'1 bar' (default) or '1 atm'",
    "threshold": "feasible when ΔrG is below this, e.g. '-10 kJ/mol' (default 0)",
    "required_K": "feasible when K° is at least this number",
    "feed": "feed amounts for a required conversion, e.g. 'CH4:1, H2O:2'",
    "key": "the reactant whose conversion counts",
    "required_conversion": "the conversion you need, e.g. '90%'",
    "total_pressure": "total pressure of that equilibrium (default '1 bar')",
}

#: The columns of a screen's result, one row per reaction and temperature, with what each holds.
RESULT_COLUMNS: dict[str, str] = {
    "row": "position of the reaction in the table (0 = first data row)",
    "label": "the row's label, if the table has one",
    "note": "the row's note, if the table has one",
    "equation": "the equation as given",
    "reaction": "the reaction as read (balanced, with phases)",
    "T_K": "temperature, K",
    "criterion": "what 'feasible' means for this row",
    "call": "'feasible', 'not feasible' or 'too close to call' at the confidence level",
    "P_feasible": "probability that the criterion holds over the data's uncertainty",
    "P_feasible_se": "Monte Carlo standard error of P_feasible",
    "dG_mean_J_per_mol": "mean of ΔrG (at the row's partial pressures), J/mol",
    "dG_lo_J_per_mol": "low end of the 95 % interval of ΔrG, J/mol",
    "dG_hi_J_per_mol": "high end of the 95 % interval of ΔrG, J/mol",
    "conversion_lo": "low end of the 95 % interval of the conversion (conversion rows)",
    "conversion_median": "median conversion (conversion rows)",
    "conversion_hi": "high end of the 95 % interval of the conversion (conversion rows)",
    "window": "where over the row's temperature range the call is 'feasible' (ranges only)",
    "leading_input": "the input with the largest share of Var(ΔrG°) at this T",
    "leading_share": "that input's share of the variance (0 to 1)",
    "trials": "Monte Carlo trials",
    "seed": "seed of the draws (repeat the row with it)",
    "error": "why the row could not be screened (empty when it was)",
}


def check_columns(columns: list[str]) -> None:
    """Refuse a table without ``equation`` or with a column the screen does not read."""
    unknown = [c for c in columns if c not in INPUT_COLUMNS]
    if unknown:
        hints = []
        for c in unknown:
            close = difflib.get_close_matches(str(c), list(INPUT_COLUMNS), n=1)
            hints.append(f"{c!r} (did you mean {close[0]!r}?)" if close else repr(c))
        raise InvalidInput(
            "table",
            "screen",
            "a table whose columns are among "
            + ", ".join(INPUT_COLUMNS)
            + "; unknown: "
            + ", ".join(hints)
            + " (put your own text in 'label' or 'note')",
            [str(c) for c in unknown],
        )
    if "equation" not in columns:
        raise InvalidInput("table", "screen", "a table with an 'equation' column", list(columns))


def cell(row: dict[str, Any], name: str) -> Any:
    """A cell's value, or None when the column is absent or the cell empty (NaN, '', None)."""
    value = row.get(name)
    if value is None:
        return None
    if isinstance(value, float) and math.isnan(value):
        return None
    if isinstance(value, str):
        value = value.strip()
        return value or None
    if hasattr(value, "item"):  # numpy scalars from pandas
        value = value.item()
        if isinstance(value, float) and math.isnan(value):
            return None
    return value


def _suffix(path: Path, what: str) -> str:
    suffix = path.suffix.lower()
    if suffix not in (".csv", ".parquet", ".pq"):
        raise InvalidInput(what, "screen", "a file ending in .csv or .parquet", str(path))
    return "csv" if suffix == ".csv" else "parquet"


def read_table(path: str | Path) -> Any:
    """Read a screen table from CSV (UTF-8) or Parquet into a pandas DataFrame.

    CSV cells are read as text (a unit such as ``800 K`` stays with its number); empty cells are
    missing. Nothing in the file is evaluated.
    """
    import pandas as pd

    path = Path(path)
    kind = _suffix(path, "table")
    try:
        if kind == "csv":
            table = pd.read_csv(path, dtype=str, keep_default_na=False, na_values=[""])
        else:
            table = pd.read_parquet(path)
    except FileNotFoundError:
        raise DataFileError(str(path), ["no such file"]) from None
    except (OSError, ValueError, UnicodeDecodeError) as exc:
        # pandas and pyarrow raise several unrelated types for unreadable files
        raise DataFileError(str(path), [f"cannot read the table ({exc})"]) from None
    check_columns([str(c) for c in table.columns])
    return table


def write_table(result: Any, path: str | Path) -> Path:
    """Write a screen's result as CSV (UTF-8) or Parquet, chosen by the file's ending."""
    path = Path(path)
    kind = _suffix(path, "out")
    if kind == "csv":
        result.to_csv(path, index=False)
    else:
        result.to_parquet(path, index=False)
    return path

"""Result tables as pandas DataFrames or CSV files: one helper for every result object.

A table is a list of rows (dicts with the documented keys, SI units in the key names). pandas is
optional: :func:`to_frame` imports it when called and says how to install it when it is missing;
:func:`write_csv` needs only the standard library.
"""

from __future__ import annotations

import csv
import io
import math
from collections.abc import Mapping, Sequence
from pathlib import Path
from typing import Any

from .errors import ExportError

__all__ = ["TableExport", "csv_text", "to_frame", "write_csv"]


def _columns(rows: Sequence[Mapping[str, Any]]) -> list[str]:
    """Every key in the order first seen (rows of one table may add optional keys)."""
    seen: dict[str, None] = {}
    for row in rows:
        for key in row:
            seen.setdefault(key, None)
    return list(seen)


def _cell(value: Any) -> Any:
    """A value a spreadsheet reads: lists joined with '; ', None and NaN as empty."""
    if value is None:
        return ""
    if isinstance(value, float) and math.isnan(value):
        return ""
    if isinstance(value, (list, tuple)):
        return "; ".join(str(v) for v in value)
    if isinstance(value, float):
        return repr(value)  # shortest text that reads back to the same double
    return value


def to_frame(rows: Sequence[Mapping[str, Any]], name: str) -> Any:
    """The rows as a ``pandas.DataFrame`` (one column per key); ``name`` names the table."""
    try:
        import pandas as pd
    except ImportError:
        raise ExportError(
            f"the {name} table as a DataFrame",
            "pandas is not installed",
            "Install it (pip install 'feasibly[frames]' or pip install pandas), or write the "
            "table as CSV with to_csv(), which needs nothing extra.",
        ) from None
    columns = _columns(rows)
    data = [
        {k: ("; ".join(map(str, v)) if isinstance(v, (list, tuple)) else v) for k, v in r.items()}
        for r in rows
    ]
    frame = pd.DataFrame(data, columns=columns)
    frame.attrs["table"] = name
    return frame


def csv_text(rows: Sequence[Mapping[str, Any]]) -> str:
    """The rows as CSV text (header line of keys, then one line per row)."""
    out = io.StringIO()
    writer = csv.DictWriter(out, fieldnames=_columns(rows), lineterminator="\n")
    writer.writeheader()
    for row in rows:
        writer.writerow({k: _cell(v) for k, v in row.items()})
    return out.getvalue()


def write_csv(
    rows: Sequence[Mapping[str, Any]], path: str | Path, name: str, overwrite: bool = True
) -> Path:
    """Write the rows to ``path`` as CSV (UTF-8); returns the path."""
    target = Path(path)
    if target.exists() and not overwrite:
        raise ExportError(
            f"the {name} table", f"{target} exists", "Choose another file name or allow overwrite."
        )
    try:
        target.parent.mkdir(parents=True, exist_ok=True)
        target.write_text(csv_text(rows), encoding="utf-8")
    except OSError as exc:
        raise ExportError(
            f"the {name} table",
            f"{target} cannot be written ({exc.strerror})",
            "Choose a folder you can write to.",
        ) from None
    return target


class TableExport:
    """Mixin of the result objects: their tables as DataFrames, CSV files or a folder of CSVs.

    A class lists its tables in :meth:`tables` (name → rows); the first one is the default.
    """

    def tables(self) -> dict[str, list[dict[str, Any]]]:  # pragma: no cover - overridden
        raise NotImplementedError

    def _table(self, table: str | None) -> tuple[str, list[dict[str, Any]]]:
        found = self.tables()
        name = table or next(iter(found))
        if name not in found:
            raise ExportError(
                f"the table {name!r}",
                f"{type(self).__name__} has the tables {', '.join(found)}",
                "Choose one of those.",
            )
        return name, found[name]

    def to_frame(self, table: str | None = None) -> Any:
        """One table as a ``pandas.DataFrame`` (pandas needed; default: the first table)."""
        name, rows = self._table(table)
        return to_frame(rows, name)

    def to_csv(self, path: str | Path, table: str | None = None, overwrite: bool = True) -> Path:
        """Write one table as CSV (no pandas needed); returns the path."""
        name, rows = self._table(table)
        return write_csv(rows, path, name, overwrite)

    def write_tables(
        self, folder: str | Path, stem: str = "", overwrite: bool = True
    ) -> list[Path]:
        """Every table as ``folder/[stem-]NAME.csv``; returns the paths written."""
        prefix = f"{stem}-" if stem else ""
        return [
            write_csv(rows, Path(folder) / f"{prefix}{name}.csv", name, overwrite)
            for name, rows in self.tables().items()
        ]

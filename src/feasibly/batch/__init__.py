"""Screening at scale: a table of reactions, one run, one result row per reaction and temperature.

- :mod:`~feasibly.batch.table` — the columns a screen reads and writes, CSV and Parquet files;
- :mod:`~feasibly.batch.screening` — the screen itself, in this process or on a Dask cluster.

Needs the ``batch`` extra (pandas, pyarrow; dask[distributed] for clusters).

Layer rule: sits above :mod:`feasibly.uncertainty` and :mod:`feasibly.equilibrium` (it imports
them and the levels below) and below the command line and the widgets; no kernel wing imports it.
"""

from .screening import METHOD, screen
from .table import INPUT_COLUMNS, RESULT_COLUMNS, read_table, write_table

__all__ = ["INPUT_COLUMNS", "METHOD", "RESULT_COLUMNS", "read_table", "screen", "write_table"]

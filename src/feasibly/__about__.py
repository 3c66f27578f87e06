"""Package version (single source; read by the build backend and by records)."""

__version__ = "0.1.0"

"""The one reader of the data files shipped with feasibly (species library, elements, hazards,
the record schema): from the installed package (``feasibly/_data``), or from ``data/`` of a
source checkout when running with ``PYTHONPATH=src``."""

from __future__ import annotations

from importlib import resources
from pathlib import Path

__all__ = ["data_text"]


def data_text(name: str) -> str:
    """Text of a shipped data file: from the installed package, or from ``data/`` of a checkout."""
    packaged = resources.files("feasibly").joinpath("_data", name)
    if packaged.is_file():
        return packaged.read_text("utf-8")
    checkout = Path(__file__).resolve().parents[2] / "data" / name
    if checkout.is_file():
        return checkout.read_text("utf-8")
    raise FileNotFoundError(f"shipped data file {name} is missing from the installation")

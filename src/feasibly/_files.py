"""The one reader of the data files shipped with feasibly (species library, elements, hazards,
the record schema): from the installed package (``feasibly/_data``), or from ``data/`` of a
source checkout when running with ``PYTHONPATH=src``."""

from __future__ import annotations

from importlib import resources
from importlib.resources.abc import Traversable
from pathlib import Path

__all__ = ["data_bytes", "data_text", "optional_data_text"]


def _find(name: str) -> Traversable | None:
    packaged = resources.files("feasibly").joinpath("_data", name)
    if packaged.is_file():
        return packaged
    checkout = Path(__file__).resolve().parents[2] / "data" / name
    if checkout.is_file():
        return checkout
    return None


def data_text(name: str) -> str:
    """Text of a shipped data file: from the installed package, or from ``data/`` of a checkout."""
    return data_bytes(name).decode("utf-8")


def data_bytes(name: str) -> bytes:
    """Bytes of a shipped data file (as :func:`data_text`, undecoded)."""
    found = _find(name)
    if found is None:
        raise FileNotFoundError(f"shipped data file {name} is missing from the installation")
    return found.read_bytes()


def optional_data_text(name: str) -> str | None:
    """Text of a data file that may be absent (a build product such as the species index)."""
    found = _find(name)
    return None if found is None else found.read_text("utf-8")

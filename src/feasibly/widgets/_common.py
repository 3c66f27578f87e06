"""Shared helpers of the widgets: inline messages and temperature display units (no thermo)."""

from __future__ import annotations

import html
from typing import Any

from ..conditions import read_temperature
from ..units import TEMPERATURE_UNITS, from_kelvin

__all__ = ["TEMPERATURE_UNITS", "error_html", "fmt_T", "kelvin", "note_html", "shown"]

# Okabe–Ito vermillion for problems, blue for notes; text stays dark for contrast.
_ERROR_STYLE = (
    "border-left:4px solid #D55E00;background:#fff4ec;padding:4px 8px;margin:2px 0;"
    "color:#3a1a00;white-space:normal;line-height:1.35"
)
_NOTE_STYLE = (
    "border-left:4px solid #0072B2;background:#eef6fb;padding:4px 8px;margin:2px 0;"
    "color:#0b2a40;white-space:normal;line-height:1.35"
)


def error_html(message: str) -> str:
    """An inline problem box (empty string when there is no problem)."""
    if not message:
        return ""
    body = html.escape(message)
    return f'<div role="alert" class="feasibly-error" style="{_ERROR_STYLE}">{body}</div>'


def note_html(message: str, raw: bool = False) -> str:
    """An inline note box; ``raw`` when ``message`` is already HTML built by us."""
    if not message:
        return ""
    body = message if raw else html.escape(message)
    return f'<div class="feasibly-note" style="{_NOTE_STYLE}">{body}</div>'


def shown(T_K: float, unit: str) -> float:
    """A temperature in K expressed in a display unit."""
    return float(from_kelvin(T_K, unit))


def kelvin(value: Any, unit: str) -> float:
    """A number typed in a display unit, in K, through the kernel's unit handling (may raise)."""
    return read_temperature((float(value), TEMPERATURE_UNITS[unit]))


def fmt_T(T_K: float, unit: str = "K") -> str:
    """A temperature for a readout, e.g. '1073.15 K' or '800 °C'."""
    return f"{shown(T_K, unit):.6g} {unit}"

"""Shared helpers of the widgets: inline messages and temperature display units (no thermo)."""

from __future__ import annotations

import base64
import functools
import html
import math
import os
from collections.abc import Callable
from typing import Any, TypeVar

from traitlets import HasTraits, TraitError

from ..conditions import read_temperature
from ..errors import FeasiblyError, excerpt
from ..units import TEMPERATURE_UNITS, from_kelvin

__all__ = [
    "STATIC_COPY_ENV",
    "TEMPERATURE_UNITS",
    "error_html",
    "figure_html",
    "fmt_T",
    "guarded",
    "kelvin",
    "note_html",
    "shown",
    "static_copy_wanted",
    "sync",
]

#: Set (to anything but "" or "0") when a notebook runs to become a static copy (``bin/worksheet
#: --headless``): the worksheet then adds an HTML copy of the call and its figure to its output,
#: which nbconvert shows where no widget state is stored.
STATIC_COPY_ENV = "FEASIBLY_STATIC_COPY"

_F = TypeVar("_F", bound=Callable[..., Any])


def guarded(method: _F) -> _F:
    """An observer or action of a widget that never raises into the notebook.

    A :class:`~feasibly.errors.FeasiblyError` the method lets through, or any other exception
    (a bug), becomes the widget's ``error`` trait and its inline problem box; the result shown
    stays the last good one, and the next good input recovers.
    """

    @functools.wraps(method)
    def run(self: Any, *args: Any, **kwargs: Any) -> Any:
        try:
            return method(self, *args, **kwargs)
        except FeasiblyError as exc:
            message = str(exc)
        except Exception as exc:
            message = (
                f"internal error ({type(exc).__name__}: {excerpt(str(exc), 200)}); this is a "
                "bug in feasibly, please report it. What is shown is from the last good input."
            )
        try:
            if isinstance(self, HasTraits) and self.has_trait("error"):
                self.set_trait("error", message)
            box = getattr(self, "_feedback", None)
            if box is not None:
                box.value = error_html(message)
        except Exception:
            pass
        return None

    return run  # type: ignore[return-value]


def _same(a: Any, b: Any) -> bool:
    if isinstance(a, float) and isinstance(b, float) and math.isnan(a) and math.isnan(b):
        return True
    try:
        return bool(a == b)
    except Exception:
        return False


def sync(child: HasTraits, owner: HasTraits, name: str, child_name: str = "value") -> None:
    """Keep ``child.child_name`` and ``owner.name`` equal, both ways, without ever raising.

    Unlike ``ipywidgets.link``, a NaN typed into a number box does not "break" the link
    (NaN ≠ NaN), and a value the child cannot show (a unit not in a dropdown) is reported in
    the owner's ``error`` trait instead of raised.
    """

    def _set(target: HasTraits, attr: str, value: Any) -> None:
        if _same(getattr(target, attr), value):
            return
        try:
            setattr(target, attr, value)
        except TraitError as exc:
            if owner.has_trait("error"):
                problem = f"{excerpt(value)} cannot be used for {name}: {excerpt(str(exc), 120)}"
                owner.set_trait("error", problem)

    child.observe(lambda change: _set(owner, name, change["new"]), names=child_name)
    owner.observe(lambda change: _set(child, child_name, change["new"]), names=name)


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


def static_copy_wanted() -> bool:
    """True when this notebook run makes a static copy (see :data:`STATIC_COPY_ENV`)."""
    return os.environ.get(STATIC_COPY_ENV, "") not in ("", "0")


def figure_html(fig: Any, alt: str) -> str:
    """A plotly figure as an inline SVG image (drawn offline by the local chromium), or the reason
    it could not be drawn in an inline problem box."""
    from ..errors import FeasiblyError
    from ..images import render_figure

    try:
        svg = render_figure(fig)["svg"]
    except FeasiblyError as exc:
        return error_html(f"The figure is missing from this copy. {exc}")
    data = base64.b64encode(svg).decode("ascii")
    return (
        f'<img class="feasibly-static-figure" alt="{html.escape(alt)}" '
        f'style="max-width:100%" src="data:image/svg+xml;base64,{data}">'
    )

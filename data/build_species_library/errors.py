"""The build's one failure: a source file or a curation table is missing or has changed shape."""

from __future__ import annotations


class SourceError(RuntimeError):
    """A source file or curation table is missing or no longer has the shape the build expects."""


def need(cond: object, msg: str) -> None:
    """Stop the build with ``msg`` unless ``cond`` holds."""
    if not cond:
        raise SourceError(msg)

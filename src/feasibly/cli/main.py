"""The ``feasibly`` command: ``feasibly assess`` screens a reaction, ``feasibly screen`` a table of
them, ``feasibly species`` searches.

Errors print a one-paragraph message and exit non-zero; no traceback reaches the user.
"""

from __future__ import annotations

import argparse
import sys
from collections.abc import Sequence

from ..__about__ import __version__
from ..errors import FeasiblyError, InvalidInput, excerpt
from ._terminal import (
    EXIT_INPUT,
    EXIT_INTERNAL,
)
from .assess import register as register_assess
from .ellingham import register as register_ellingham
from .equilibrate import register as register_equilibrate
from .screen import register as register_screen
from .species import register as register_species
from .verify import register as register_verify

__all__ = ["main"]

#: Keyword arguments of the kernel and the command-line options that carry them.
_OPTIONS = {
    "T": "--T",
    "T_range": "--T-range",
    "points": "--points",
    "confidence": "--confidence",
    "samples": "--samples",
    "threshold": "--threshold",
    "required_K": "--require-K",
    "seed": "--seed",
}


def _message(exc: FeasiblyError) -> str:
    """The error in the command line's own terms: an argument is named by its option."""
    if type(exc) is InvalidInput and exc.parameter in _OPTIONS:
        got = "nothing" if exc.value is None else excerpt(exc.value)
        return f"{_OPTIONS[exc.parameter]} must be {exc.expected}. Got {got} instead."
    return str(exc)


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="feasibly",
        description="Thermodynamic feasibility of a reaction at your temperature and pressure.",
    )
    parser.add_argument("--version", action="version", version=f"feasibly {__version__}")
    sub = parser.add_subparsers(dest="command", required=True)

    register_assess(sub)
    register_species(sub)
    register_verify(sub)
    register_equilibrate(sub)
    register_ellingham(sub)
    register_screen(sub)
    return parser


def main(argv: Sequence[str] | None = None) -> int:
    """Entry point of the ``feasibly`` command; returns the exit code."""
    parser = build_parser()
    args = parser.parse_args(argv)
    try:
        return int(args.run(args))
    except FeasiblyError as exc:
        print(f"feasibly: {_message(exc)}", file=sys.stderr)
        return EXIT_INPUT
    except Exception as exc:
        print(
            f"feasibly: internal error ({type(exc).__name__}: {exc}). This is a bug in "
            "feasibly; please report it with the command you ran.",
            file=sys.stderr,
        )
        return EXIT_INTERNAL


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())

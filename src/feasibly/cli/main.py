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
    EXIT_INTERRUPTED,
    EXIT_OK,
    SafeStream,
)
from .assess import register as register_assess
from .ellingham import register as register_ellingham
from .equilibrate import register as register_equilibrate
from .estimate import register as register_estimate
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
    "max_trials": "--samples",
}


def _message(exc: FeasiblyError) -> str:
    """The error in the command line's own terms: an argument is named by its option."""
    if isinstance(exc, InvalidInput) and exc.function and exc.parameter in _OPTIONS:
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
    register_estimate(sub)
    return parser


def main(argv: Sequence[str] | None = None) -> int:
    """Entry point of the ``feasibly`` command; returns the exit code.

    0 success, 1 a verification found differences, 2 the input could not be used (every user
    error, with a message and no traceback), 3 a bug in feasibly, 130 interrupted (Ctrl-C).
    Everything printed passes through :func:`~feasibly.cli._terminal.terminal_safe`, so names
    and text from user files or records cannot send escape sequences to the terminal.
    """
    out, err = sys.stdout, sys.stderr
    sys.stdout, sys.stderr = SafeStream(out), SafeStream(err)
    try:
        return _run(argv)
    finally:
        try:
            sys.stdout.flush()
            sys.stderr.flush()
        except (OSError, ValueError):
            pass
        sys.stdout, sys.stderr = out, err


def _run(argv: Sequence[str] | None) -> int:
    try:
        parser = build_parser()
        try:
            args = parser.parse_args(argv)
        except SystemExit as exc:  # --help, --version (0) or a usage error (2): argparse printed
            return int(exc.code) if isinstance(exc.code, int) else EXIT_INPUT
        try:
            return int(args.run(args))
        except FeasiblyError as exc:
            print(f"feasibly: {_message(exc)}", file=sys.stderr)
            return EXIT_INPUT
        except MemoryError:
            print(
                "feasibly: not enough memory for this request; use fewer --samples or --points.",
                file=sys.stderr,
            )
            return EXIT_INPUT
        except BrokenPipeError:
            return EXIT_OK  # the reader (e.g. `| head`) stopped reading: not an error of ours
        except Exception as exc:
            print(
                f"feasibly: internal error ({type(exc).__name__}: {excerpt(str(exc), 300)}). "
                "This is a bug in feasibly; please report it with the command you ran.",
                file=sys.stderr,
            )
            return EXIT_INTERNAL
    except KeyboardInterrupt:
        print("\nfeasibly: interrupted.", file=sys.stderr)
        return EXIT_INTERRUPTED


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())

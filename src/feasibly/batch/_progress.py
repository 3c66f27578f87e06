"""A one-line progress bar on stderr for long screens (shown on a terminal, or when asked)."""

from __future__ import annotations

import sys
import time


class Progress:
    """Rows done out of ``total``, redrawn in place on stderr."""

    def __init__(self, total: int, enabled: bool | None) -> None:
        self.total = total
        self.done = 0
        # Shown on a terminal only unless asked: a log file would fill with redraws.
        self.enabled = sys.stderr.isatty() if enabled is None else bool(enabled)
        self.started = time.perf_counter()

    def advance(self, rows: int = 1) -> None:
        self.done += rows
        if not self.enabled:
            return
        frac = min(1.0, self.done / self.total) if self.total else 1.0
        bar = "#" * int(30 * frac)
        elapsed = time.perf_counter() - self.started
        sys.stderr.write(
            f"\rscreening [{bar:<30}] {self.done:,}/{self.total:,} reactions, {elapsed:.1f} s"
        )
        sys.stderr.flush()

    def close(self) -> None:
        if self.enabled:
            sys.stderr.write("\n")
            sys.stderr.flush()

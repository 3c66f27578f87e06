"""Shared fixtures. Tests run against the installed feasibly (see DEVELOPERS.md)."""

from __future__ import annotations

import shutil
from pathlib import Path
from typing import Any

import pytest

import feasibly

# Flags from ../shared/notes/browser-testing.md: no sandbox as root, no GPU, and none of
# Chromium's own outside look-ups (the network here reaches only the package registries).
CHROMIUM_ARGS = (
    "--headless",
    "--no-sandbox",
    "--disable-gpu",
    "--disable-quic",
    "--no-first-run",
    "--disable-background-networking",
    "--disable-component-update",
    "--disable-sync",
    "--gaia-url=http://127.0.0.1:9",
    "--lso-url=http://127.0.0.1:9",
    "--component-updater=url-source=http://127.0.0.1:9",
)


def pytest_collection_modifyitems(items: list[pytest.Item]) -> None:
    """Everything under tests/reference/ is a check against an outside reference."""
    for item in items:
        if "reference" in Path(str(item.path)).parent.parts[-1:]:
            item.add_marker(pytest.mark.reference)


@pytest.fixture(scope="session")
def lib() -> feasibly.Library:
    return feasibly.default_library()


@pytest.fixture
def chromium() -> dict[str, Any]:
    """Launch options for Debian's Chromium with Playwright; skips when it is not installed."""
    path = shutil.which("chromium") or "/usr/bin/chromium"
    if not Path(path).exists():
        pytest.skip("Debian's chromium is not installed (apt-get install chromium)")
    return {"executable_path": path, "headless": True, "args": list(CHROMIUM_ARGS)}


class Hang(BaseException):
    """Raised into a block that ran far longer than it could in linear time (a hang detector,
    not a timing assertion: the bound is orders of magnitude above the expected time)."""


@pytest.fixture
def no_hang() -> Any:
    """``with no_hang(20):`` fails the test instead of hanging when the block does not finish.

    Uses SIGALRM (main thread, POSIX), so a runaway pure-Python loop is interrupted; the bound
    is generous because the point is to catch super-linear blow-ups, never to time code.
    """
    import contextlib
    import signal

    @contextlib.contextmanager
    def guard(seconds: float = 20.0) -> Any:
        def on_alarm(signum: int, frame: Any) -> None:
            raise Hang(f"still running after {seconds} s")

        old = signal.signal(signal.SIGALRM, on_alarm)
        signal.setitimer(signal.ITIMER_REAL, seconds)
        try:
            yield
        finally:
            signal.setitimer(signal.ITIMER_REAL, 0)
            signal.signal(signal.SIGALRM, old)

    return guard


def _call_and_send(target: Any, args: tuple[Any, ...], queue: Any) -> None:
    queue.put(target(*args))


@pytest.fixture
def in_forked_child() -> Any:
    """``in_forked_child(target, *args)``: ``target(*args)`` in a child made by fork
    (multiprocessing's default on Linux), its result returned; fails if the child does not
    answer or exits with an error.

    For code with worker threads: the parent's threads do not exist in the child, which must
    start its own instead of waiting on them.
    """
    import multiprocessing

    def run(target: Any, *args: Any) -> Any:
        ctx = multiprocessing.get_context("fork")
        queue = ctx.Queue()
        child = ctx.Process(target=_call_and_send, args=(target, args, queue))
        child.start()
        try:
            # a child waiting on threads that do not exist would never answer: 120 s is ~1000
            # times the work of the tests that use this (common practice, no source)
            result = queue.get(timeout=120)
            child.join(timeout=60)
        finally:
            if child.is_alive():
                child.kill()
        assert child.exitcode == 0
        return result

    return run

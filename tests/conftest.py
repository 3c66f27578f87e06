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

"""Shared fixtures. Tests run against the installed feasibly (see DEVELOPERS.md)."""

from __future__ import annotations

import pytest

import feasibly


@pytest.fixture(scope="session")
def lib() -> feasibly.Library:
    return feasibly.default_library()

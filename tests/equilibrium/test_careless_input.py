"""Issue 17, equilibrium: absurd feeds and trial counts are refused with the field named."""

from __future__ import annotations

import pytest

from feasibly import conversion_bands, equilibrium_extent
from feasibly.errors import InvalidUncertainty, UnitError


def test_feed_of_1e308_mol_is_refused_not_a_wrong_conversion() -> None:
    # A feed of 1e308 mol gave 50 % conversion instead of 28.6 %.
    with pytest.raises(UnitError, match="feed amount of CH4"):
        equilibrium_extent(
            "CH4 + H2O -> CO + 3 H2", "900 K", "1 bar", {"CH4": 1e308, "H2O": 1e308}, key="CH4"
        )


def test_feed_given_as_text_amounts_is_read_or_refused() -> None:
    with pytest.raises(UnitError, match="amount must be a number"):
        equilibrium_extent("CH4 + H2O -> CO + 3 H2", "900 K", "1 bar", "CH4:x, H2O:1", key="CH4")


def test_conversion_trial_count_is_capped_before_allocating() -> None:
    with pytest.raises(InvalidUncertainty, match="GiB of draws"):
        conversion_bands(
            "CH4 + H2O -> CO + 3 H2", "900 K", "1 bar", "CH4:1, H2O:1", "CH4", samples=10**12
        )

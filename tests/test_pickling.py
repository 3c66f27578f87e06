"""The objects a user sends through a process pool or a cluster survive pickle on every protocol
and give the same numbers afterwards; the shipped library travels as a checked reference."""

from __future__ import annotations

import pickle

import numpy as np
import pytest

import feasibly
from feasibly.errors import DataFileError
from feasibly.library import catalogue

PROTOCOLS = range(pickle.HIGHEST_PROTOCOL + 1)


@pytest.mark.parametrize("protocol", PROTOCOLS)
def test_reaction_and_assessment(protocol: int) -> None:
    a = feasibly.assess("MgCO3 -> MgO + CO2", T_range=("600 K", "900 K"), points=4)
    back = pickle.loads(pickle.dumps(a, protocol=protocol))
    assert back.reaction.equation() == a.reaction.equation()
    np.testing.assert_array_equal(back.standard.dG, a.standard.dG)
    # The shipped library is not copied: the receiver uses its own, checked by content hash.
    assert back.reaction.library is feasibly.default_library()
    again = feasibly.assess(back.reaction, T_range=("600 K", "900 K"), points=4)
    np.testing.assert_array_equal(again.standard.dG, a.standard.dG)


@pytest.mark.parametrize("protocol", PROTOCOLS)
def test_uncertain_assessment_keeps_its_draws(protocol: int) -> None:
    u = feasibly.assess_uncertainty(
        "MgCO3 -> MgO + CO2", T="700 K", samples=2000, seed=5, required_K=3.0
    )
    back = pickle.loads(pickle.dumps(u, protocol=protocol))
    assert back.at("720 K") == u.at("720 K")
    assert back.verdicts == u.verdicts


def test_a_user_library_travels_whole(tmp_path) -> None:
    src = feasibly.Library.from_file(
        __import__("pathlib").Path(__file__).resolve().parents[1]
        / "data"
        / "examples"
        / "my-species.toml"
    )
    back = pickle.loads(pickle.dumps(src))
    assert [sp.id for sp in back] == [sp.id for sp in src]
    assert back.content_hash == src.content_hash


def test_other_shipped_data_are_refused() -> None:
    with pytest.raises(DataFileError, match="install the same feasibly version"):
        catalogue._shipped_library("0" * 64)


def test_route_and_equilibria() -> None:
    r = feasibly.assess_route([("MgCO3 -> MgO + CO2", "800 K")], samples=1024, seed=1)
    assert pickle.loads(pickle.dumps(r)).p_all == r.p_all
    x = feasibly.equilibrium_extent("CO + H2O -> CO2 + H2", "900 K", "1 bar", "CO:1, H2O:1")
    np.testing.assert_array_equal(pickle.loads(pickle.dumps(x)).extent, x.extent)
    eq = feasibly.equilibrate(
        "CH4(g) H2O(g) CO(g) CO2(g) H2(g)", feed="CH4:1, H2O:2", T="900 K", P="1 bar"
    )
    np.testing.assert_array_equal(pickle.loads(pickle.dumps(eq)).amounts, eq.amounts)


@pytest.mark.parametrize("protocol", PROTOCOLS)
def test_a_library_with_entries_not_yet_built(protocol: int) -> None:
    # A library made from the shipped one holds entries that are built on first use; they
    # travel unbuilt and build on arrival.
    lib = feasibly.default_library()
    mine = lib.with_species([lib["CO(g)"]], replace_shipped=True)
    back = pickle.loads(pickle.dumps(mine, protocol=protocol))
    assert len(back) == len(mine)
    assert back["H2O(g)"].provenance() == lib["H2O(g)"].provenance()
    assert [sp.id for sp in back.find("methane")] == ["CH4(g)"]

"""The screen on a Dask cluster gives the same table as in one process (loopback only)."""

from __future__ import annotations

from collections.abc import Iterator
from pathlib import Path
from typing import Any

import pandas as pd
import pytest

import feasibly
from feasibly.batch import screen, screening
from feasibly.cli import main
from feasibly.cli import screen as cli_screen

distributed = pytest.importorskip("distributed", reason="the batch extra installs dask.distributed")

pytestmark = pytest.mark.slow

EXAMPLE_SPECIES = Path(__file__).resolve().parents[2] / "data" / "examples" / "my-species.toml"
N = 4096  # trials: small for speed; the equality checked here is bitwise at any N
SEED = 7

ROWS: list[dict[str, Any]] = [
    {"equation": "MgCO3 -> MgO + CO2", "T_low": "600 K", "T_high": "900 K", "T_points": "5"},
    {"equation": "CaCO3 -> CaO + CO2", "T": "1100 K", "partial_pressures": "CO2=0.2 bar"},
    {"equation": "Nope -> Nothing", "T": "800 K"},  # an error row travels back too
    {"equation": "CO + H2O -> CO2 + H2", "T": "900 K", "required_K": "1.5"},
    {
        "equation": "CO + H2O -> CO2 + H2",
        "T_low": "600 K",
        "T_high": "1000 K",
        "T_points": "3",
        "feed": "CO:1, H2O:1, N2:1",
        "key": "CO",
        "required_conversion": "0.6",
    },
    {"equation": "2 CO -> C + CO2", "T": "800 K"},
]


@pytest.fixture(scope="module")
def cluster() -> Iterator[Any]:
    # Threads in this process, on loopback, no dashboard: bounded start-up and no open ports
    # beyond 127.0.0.1.
    with distributed.LocalCluster(
        n_workers=2,
        threads_per_worker=1,
        processes=False,
        protocol="tcp://",  # a real socket, so the command line can reach it by address
        host="127.0.0.1",
        dashboard_address=None,
    ) as c:
        yield c


@pytest.fixture(scope="module")
def here() -> pd.DataFrame:
    return screen(pd.DataFrame(ROWS), samples=N, seed=SEED)


def test_a_client_gives_the_single_process_table(cluster: Any, here: pd.DataFrame) -> None:
    with distributed.Client(cluster) as client:
        there = screen(pd.DataFrame(ROWS), samples=N, seed=SEED, client=client)
    pd.testing.assert_frame_equal(there, here, check_exact=True)
    assert here["error"].notna().sum() == 1  # the error row is in both
    assert (here["criterion"] == "conversion of CO ≥ 60 %").sum() == 3


def test_the_command_line_reaches_an_existing_scheduler(
    cluster: Any, here: pd.DataFrame, tmp_path: Path
) -> None:
    src, out = tmp_path / "t.csv", tmp_path / "r.parquet"
    pd.DataFrame(ROWS).to_csv(src, index=False)
    address = cluster.scheduler_address
    assert address.startswith("tcp://127.0.0.1:")
    argv = ["screen", str(src), "--out", str(out), "--samples", str(N), "--seed", str(SEED)]
    assert main([*argv, "--scheduler", address]) == 0
    pd.testing.assert_frame_equal(pd.read_parquet(out), here, check_exact=True)


def test_user_species_travel_to_the_workers(cluster: Any) -> None:
    lib = feasibly.default_library().with_species(feasibly.Library.from_file(EXAMPLE_SPECIES))
    rows = pd.DataFrame(
        [{"equation": "2 C9H10O3(cr) + 20 O2 -> 18 CO2 + 10 H2O", "T": "400 K"}, ROWS[0]]
    )
    local = screen(rows, samples=N, seed=SEED, library=lib)
    assert local["error"].isna().all()
    with distributed.Client(cluster) as client:
        there = screen(rows, samples=N, seed=SEED, library=lib, client=client)
        pd.testing.assert_frame_equal(there, local, check_exact=True)
        # A library not made from files travels whole (pickled) and gives the same table.
        made = feasibly.Library(list(lib), lib.meta)
        assert screening._library_spec(made) is made
        assert screening._library_spec(lib) == (
            (str(EXAMPLE_SPECIES), EXAMPLE_SPECIES.read_text()),
        )
        there = screen(rows, samples=N, seed=SEED, library=made, client=client)
        pd.testing.assert_frame_equal(there, local, check_exact=True)


def test_local_worker_processes_give_the_same_table(here: pd.DataFrame, tmp_path: Path) -> None:
    # --workers starts worker processes on loopback; each imports feasibly afresh.
    src, out = tmp_path / "t.parquet", tmp_path / "r.csv"
    pd.DataFrame(ROWS).astype(object).to_parquet(src, index=False)
    argv = ["screen", str(src), "--out", str(out), "--samples", str(N), "--seed", str(SEED)]
    assert main([*argv, "--workers", "1"]) == 0
    back = pd.read_csv(out)
    for name in ("T_K", "P_feasible", "P_feasible_se", "dG_lo_J_per_mol", "conversion_hi"):
        pd.testing.assert_series_equal(back[name], here[name], check_exact=True)


def test_an_unreachable_scheduler_is_reported(
    tmp_path: Path, capsys: pytest.CaptureFixture[str], monkeypatch: pytest.MonkeyPatch
) -> None:
    monkeypatch.setattr(cli_screen, "_CONNECT_TIMEOUT", "2s")
    src = tmp_path / "t.csv"
    pd.DataFrame(ROWS[:1]).to_csv(src, index=False)
    argv = [
        "screen",
        str(src),
        "--out",
        str(tmp_path / "r.csv"),
        "--scheduler",
        "tcp://127.0.0.1:9",
    ]
    assert main(argv) == 2
    assert "cannot reach the Dask scheduler at 'tcp://127.0.0.1:9'" in capsys.readouterr().err
    assert main([*argv[:4], "--scheduler", "tcp://127.0.0.1:9", "--workers", "1"]) == 2

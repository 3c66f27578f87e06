"""The batch screen: each row equals the one-reaction calls bitwise, errors stay in their row,
tables go in and out as CSV and Parquet, and the chunking changes nothing.

Monte Carlo checks are seeded and size their tolerance from N (4 standard errors, common practice,
no source).
"""

from __future__ import annotations

import json
import math
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd
import pytest
from scipy import stats

import feasibly
from feasibly.batch import INPUT_COLUMNS, RESULT_COLUMNS, read_table, screen, write_table
from feasibly.batch import screening as screen_module
from feasibly.cli import main
from feasibly.equilibrium import conversion_assessment
from feasibly.uncertainty import assess_uncertainty, window_phrase

N = 8192  # trials: small for speed; the equality checked here is bitwise at any N
SEED = 20261202

# Rows of every kind: one temperature, a range, a required K, a threshold, partial pressures,
# the 1 atm standard state, and a required conversion.
ROWS: list[dict[str, Any]] = [
    {"label": "magnesite", "equation": "MgCO3 -> MgO + CO2", "T": "800 K"},
    {
        "label": "calcite",
        "equation": "CaCO3 -> CaO + CO2",
        "T_low": "900 K",
        "T_high": "1150 K",
        "T_points": "6",
    },
    {"equation": "CO + H2O -> CO2 + H2", "T": "650 degC", "required_K": "2"},
    {"equation": "2 CO -> C + CO2", "T_low": "700 K", "T_high": "1100 K", "threshold": "-5 kJ/mol"},
    {
        "equation": "CaCO3 -> CaO + CO2",
        "T": "1050 K",
        "partial_pressures": "CO2=0.15 bar",
        "note": "lime kiln, dilute CO2",
    },
    {"equation": "MgCO3 -> MgO + CO2", "T": "700 K", "standard_pressure": "1 atm"},
    {
        "equation": "CH4 + H2O -> CO + 3 H2",
        "T_low": "850 K",
        "T_high": "1050 K",
        "T_points": "4",
        "feed": "CH4:1, H2O:2",
        "key": "CH4",
        "required_conversion": "90%",
        "total_pressure": "1 bar",
    },
]


def table(rows: list[dict[str, Any]] = ROWS) -> pd.DataFrame:
    return pd.DataFrame(rows)


@pytest.fixture(scope="module")
def result() -> pd.DataFrame:
    return screen(table(), samples=N, seed=SEED)


def _one_by_one(spec: dict[str, Any]) -> tuple[list[dict[str, Any]], str | None]:
    """The same row through the one-reaction functions: per-T values and the window phrase."""
    common: dict[str, Any] = {"samples": N, "seed": SEED, "method": "mc-per-species"}
    if "T" in spec:
        where: dict[str, Any] = {"T": spec["T"]}
    else:
        where = {
            "T_range": (spec["T_low"], spec["T_high"]),
            "points": int(spec.get("T_points", 12)),
        }
    if "feed" in spec:
        temps = (
            np.linspace(
                float(spec["T_low"].split()[0]), float(spec["T_high"].split()[0]), where["points"]
            ),
            "K",
        )
        c = conversion_assessment(
            spec["equation"],
            temps,
            spec["feed"],
            spec["key"],
            spec["required_conversion"],
            spec["total_pressure"],
            confidence=0.95,
            **common,
        )
        a = assess_uncertainty(spec["equation"], T=temps, **common)
        rows = [
            {
                "T_K": r["T_K"],
                "P_feasible": r["P_meets_required"],
                "P_feasible_se": r["P_meets_required_se"],
                "conversion_lo": r["conversion_lo"],
                "conversion_hi": r["conversion_hi"],
                "dG_lo_J_per_mol": float(a.G.lo[i]),
            }
            for i, r in enumerate(c["rows"])
        ]
        return rows, window_phrase(c["window"]) or "nowhere in the range"
    a = assess_uncertainty(
        spec["equation"],
        **where,
        **common,
        threshold=spec.get("threshold"),
        required_K=spec.get("required_K"),
        partial_pressures=(
            dict([spec["partial_pressures"].split("=")]) if "partial_pressures" in spec else None
        ),
        standard_pressure=spec.get("standard_pressure", "1 bar"),
    )
    rows = []
    for i, t in enumerate(a.T):
        lead = a.sensitivity((float(t), "K"))[0]
        rows.append(
            {
                "T_K": float(t),
                "call": a.verdicts[i],
                "criterion": a.threshold_text,
                "P_feasible": float(a.p_feasible[i]),
                "P_feasible_se": float(a.p_feasible_se[i]),
                "dG_mean_J_per_mol": float(a.G.mean[i]),
                "dG_lo_J_per_mol": float(a.G.lo[i]),
                "dG_hi_J_per_mol": float(a.G.hi[i]),
                "leading_input": f"{lead['species']} {lead['quantity']}",
                "leading_share": lead["share"],
            }
        )
    window = None if "T" in spec else (window_phrase(a.window()) or "nowhere in the range")
    return rows, window


@pytest.mark.parametrize("i", range(len(ROWS)), ids=[str(i) for i in range(len(ROWS))])
def test_each_row_equals_the_one_reaction_call(result: pd.DataFrame, i: int) -> None:
    got = result[result["row"] == i]
    want, window = _one_by_one(ROWS[i])
    assert len(got) == len(want)
    assert got["error"].isna().all()
    for (_, g), w in zip(got.iterrows(), want, strict=True):
        for name, value in w.items():
            if name == "leading_share":
                # sensitivity() re-forms the model at one T: equal to rounding, not bitwise
                assert g[name] == pytest.approx(value, rel=1e-9)
            else:
                assert g[name] == value, name  # bitwise: the same draws and the same arithmetic
        assert g["window"] == window if window is not None else pd.isna(g["window"])
        assert g["trials"] == N and g["seed"] == SEED


def test_the_comparison_can_fail(result: pd.DataFrame) -> None:
    # Another seed moves the numbers: equality above is not vacuous.
    other = screen(table(ROWS[:1]), samples=N, seed=SEED + 1)
    assert other["P_feasible"].iloc[0] != result["P_feasible"].iloc[0] or (
        other["dG_lo_J_per_mol"].iloc[0] != result["dG_lo_J_per_mol"].iloc[0]
    )


def test_probability_matches_the_normal_distribution(result: pd.DataFrame) -> None:
    # ΔrG is linear in normal inputs, so exactly normal: P(ΔrG < 0) = Φ(−mean/u), with mean and u
    # from the linear model (scipy.stats.norm as the reference), within 4 Monte Carlo standard
    # errors of a binomial proportion.
    a = assess_uncertainty("CaCO3 -> CaO + CO2", T_range=("900 K", "1150 K"), points=6,
                           samples=N, seed=SEED, method="mc-per-species")  # fmt: skip
    cov = np.diag([inp.u**2 for inp in a.samples.inputs])
    u = np.sqrt(np.einsum("ij,jk,ik->i", a.model.aG, cov, a.model.aG))
    p_ref = stats.norm.cdf(-a.model.G0 / u)
    got = result[result["row"] == 1]["P_feasible"].to_numpy()
    se = np.sqrt(np.maximum(p_ref * (1 - p_ref), 1 / N) / N)
    assert np.all(np.abs(got - p_ref) <= 4 * se)
    assert p_ref.max() > 0.1  # the range reaches probabilities the check can see


def test_errors_stay_in_their_row(result: pd.DataFrame) -> None:
    bad = [
        {"equation": "Foo -> Bar", "T": "800 K"},
        {"equation": "MgCO3 -> MgO + CO2", "T": "800"},
        {"equation": "CaCO3(cr,calcite) -> CaO + CO2", "T": "1700 K"},
        {"equation": "MgCO3 -> MgO + CO2", "T_low": "700 K"},
        {"equation": "CH4 + H2O -> CO + 3 H2", "T": "900 K", "feed": "CH4:1, H2O:2"},
        {"equation": "MgCO3 -> MgO + CO2", "T": "800 K", "total_pressure": "5 bar"},
        {"equation": "MgCO3 -> MgO + CO2", "T_low": "700 K", "T_high": "900 K", "T_points": "2.5"},
        {"equation": "MgCO3 -> MgO + CO2", "T": "800 K", "partial_pressures": "CO2 0.3 bar"},
        {"equation": None, "T": "800 K"},
    ]
    mixed = table([ROWS[0], *bad, ROWS[1]])
    out = screen(mixed, samples=N, seed=SEED)
    errors = out.groupby("row")["error"].first()
    expected = [
        "No species 'Foo'",
        "'800' is not a temperature",
        "CaCO3(cr,calcite) has data from",
        "column 'T_low/T_high' must be given with both ends",
        "column 'required_conversion' must be given with feed and key",
        "column 'total_pressure' must be given only with a required conversion",
        "column 'T_points' must be a whole number of at least 2",
        "column 'partial_pressures' must be pairs SPECIES=PRESSURE",
        "column 'equation' must be an equation",
    ]
    for k, text in enumerate(expected, start=1):
        assert text in str(errors[k]), (k, errors[k])
    # The good rows around them are screened exactly as on their own.
    for pos, original in ((0, 0), (len(bad) + 1, 1)):
        got = out[out["row"] == pos].drop(columns=["row", "label", "note"]).reset_index(drop=True)
        want = result[result["row"] == original].drop(columns=["row", "label", "note"])
        pd.testing.assert_frame_equal(got, want.reset_index(drop=True), check_exact=True)


def test_table_level_mistakes_are_refused_with_the_column_named() -> None:
    with pytest.raises(
        feasibly.InvalidInput,
        match=r"unknown: 'Temperature', 'required_k' \(did you mean 'required_K'\?\)",
    ):
        screen(pd.DataFrame({"equation": ["MgCO3 -> MgO + CO2"], "Temperature": ["800 K"],
                             "required_k": [2]}))  # fmt: skip
    with pytest.raises(feasibly.InvalidInput, match="an 'equation' column"):
        screen(pd.DataFrame({"T": ["800 K"]}))
    with pytest.raises(feasibly.InvalidInput, match="'samples' parameter of screen"):
        screen(table(ROWS[:1]), samples=1)
    with pytest.raises(feasibly.InvalidInput, match="'confidence' parameter of screen"):
        screen(table(ROWS[:1]), confidence=1.5)
    with pytest.raises(feasibly.InvalidInput, match="'seed' parameter of screen"):
        screen(table(ROWS[:1]), seed=-1)
    with pytest.raises(feasibly.InvalidInput, match="a pandas DataFrame"):
        screen(ROWS)


def test_the_cut_into_chunks_changes_nothing(
    result: pd.DataFrame, monkeypatch: pytest.MonkeyPatch
) -> None:
    # A budget of one input's draws puts every row in a chunk of its own.
    monkeypatch.setattr(screen_module, "_CHUNK_BYTES", 8 * N)
    assert len(screen_module._plan(
        [{"equation": r["equation"], "row": i} for i, r in enumerate(ROWS)],
        feasibly.default_library(), N, len(ROWS))) == len(ROWS)  # fmt: skip
    apart = screen(table(), samples=N, seed=SEED)
    pd.testing.assert_frame_equal(apart, result, check_exact=True)


def test_a_seed_is_drawn_and_reported_when_not_given() -> None:
    first = screen(table(ROWS[:2]), samples=2048)
    seed = int(first["seed"].iloc[0])
    assert (first["seed"] == seed).all()
    again = screen(table(ROWS[:2]), samples=2048, seed=seed)
    pd.testing.assert_frame_equal(again, first, check_exact=True)


@pytest.mark.parametrize("suffix", [".csv", ".parquet"])
def test_files_in_and_out_through_the_command_line(
    tmp_path: Path, result: pd.DataFrame, suffix: str, capsys: pytest.CaptureFixture[str]
) -> None:
    src = tmp_path / f"reactions{suffix}"
    write_table(table().astype(object).where(table().notna(), None), src)
    assert read_table(src)["equation"].tolist() == [r["equation"] for r in ROWS]
    out = tmp_path / f"result{suffix}"
    argv = ["screen", str(src), "--out", str(out), "--samples", str(N), "--seed", str(SEED)]
    assert main(argv) == 0
    captured = capsys.readouterr()
    assert f"written to {out}" in captured.out
    assert "screening [" not in captured.err  # no progress line unless a terminal or asked
    back = pd.read_parquet(out) if suffix == ".parquet" else pd.read_csv(out)
    assert list(back.columns) == list(RESULT_COLUMNS)
    if suffix == ".parquet":
        pd.testing.assert_frame_equal(back, result, check_exact=True)
    else:  # CSV: numbers round-trip exactly; empty text comes back as NaN
        for name in ("T_K", "P_feasible", "P_feasible_se", "dG_lo_J_per_mol", "dG_hi_J_per_mol"):
            assert np.array_equal(back[name].to_numpy(), result[name].to_numpy(), equal_nan=True)
        assert back["call"].tolist() == result["call"].tolist()
    # An existing result is not replaced without --overwrite.
    assert main(argv) == 2
    assert "--overwrite" in capsys.readouterr().err
    assert main([*argv, "--overwrite", "--progress"]) == 0
    assert "screening [" in capsys.readouterr().err


def test_unreadable_tables_exit_2_with_a_message(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    missing = tmp_path / "none.csv"
    assert main(["screen", str(missing), "--out", str(tmp_path / "r.csv")]) == 2
    assert "no such file" in capsys.readouterr().err
    odd = tmp_path / "t.xlsx"
    odd.write_text("x")
    assert main(["screen", str(odd), "--out", str(tmp_path / "r.csv")]) == 2
    assert "a file ending in .csv or .parquet" in capsys.readouterr().err
    typo = tmp_path / "typo.csv"
    typo.write_text("equation,Temp\nMgCO3 -> MgO + CO2,800 K\n")
    assert main(["screen", str(typo), "--out", str(tmp_path / "r.csv")]) == 2
    assert "unknown: 'Temp'" in capsys.readouterr().err


def test_columns_are_documented() -> None:
    doc = screen_module.__doc__ or ""
    table_doc = feasibly.batch.table.__doc__ or ""
    assert "keyed" in doc
    for name in INPUT_COLUMNS:
        assert f"``{name}``" in table_doc, name
    assert math.isclose(len(RESULT_COLUMNS), len(set(RESULT_COLUMNS)))


def test_a_row_is_repeated_by_the_assess_command(
    result: pd.DataFrame, capsys: pytest.CaptureFixture[str]
) -> None:
    # What the README promises: `feasibly assess … --method mc-per-species` gives the row again.
    argv = ["assess", "MgCO3 -> MgO + CO2", "--T", "800", "K", "--samples", str(N)]
    argv += ["--seed", str(SEED), "--method", "mc-per-species", "--json"]
    assert main(argv) == 0
    row = json.loads(capsys.readouterr().out)["rows"][0]
    got = result[result["row"] == 0].iloc[0]
    assert row["P_feasible"] == got["P_feasible"]
    assert row["dG_lo_J_per_mol"] == got["dG_lo_J_per_mol"]
    assert row["verdict"] == got["call"]


def test_a_gas_only_compound_is_refused_in_its_row() -> None:
    """FeO has only its gas in the data and is a solid below 1650 K (CRC Handbook via
    chemicals): its row reports the refusal, the others are screened."""
    import pandas as pd

    from feasibly.batch import screen

    out = screen(
        pd.DataFrame(
            {"equation": ["FeO + CO -> Fe + CO2", "CaCO3 -> CaO + CO2"], "T": ["900 K", "1200 K"]}
        ),
        samples=256,
        seed=3,
    )
    assert "write FeO(g)" in str(out.loc[out["row"] == 0, "error"].iloc[0])
    assert out.loc[out["row"] == 1, "error"].isna().all()

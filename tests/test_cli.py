"""The feasibly command: output shape, JSON keys, exit codes, and no tracebacks."""

from __future__ import annotations

import json
import subprocess
import sys

import pytest

from feasibly.cli import main


def run(capsys: pytest.CaptureFixture[str], *argv: str) -> tuple[int, str, str]:
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def test_assess_table(capsys: pytest.CaptureFixture[str]) -> None:
    code, out, _ = run(
        capsys, "assess", "C2H6 -> C2H4 + H2", "--T-range", "600", "1200", "K", "--points", "4"
    )
    assert code == 0
    assert "ΔrG° kJ/mol" in out and "ΔrG° = 0 at" in out and "ΔrH°/ΔrS°" in out


def test_assess_json(capsys: pytest.CaptureFixture[str]) -> None:
    code, out, _ = run(capsys, "assess", "C2H6 -> C2H4 + H2", "--T", "800", "degC", "--json")
    assert code == 0
    doc = json.loads(out)
    assert doc["rows"][0]["T_K"] == pytest.approx(1073.15)
    assert "crossover_K" not in doc  # only with a range
    code, out, _ = run(
        capsys, "assess", "C2H6 -> C2H4 + H2", "--T-range", "600", "700", "K", "--json"
    )
    assert json.loads(out)["crossover_K"] == []


def test_partial_pressures_and_mole_fractions(capsys: pytest.CaptureFixture[str]) -> None:
    code, out, _ = run(
        capsys,
        "assess",
        "C2H6 -> C2H4 + H2",
        "--T",
        "1000",
        "K",
        "--json",
        "--p",
        "C2H6=0.5",
        "bar",
        "--p",
        "H2=0.1 bar",
    )
    assert code == 0
    doc = json.loads(out)
    assert doc["partial_pressures_Pa"] == {"C2H6": 50000.0, "H2": 10000.0}
    code, out, _ = run(
        capsys,
        "assess",
        "C2H6 -> C2H4 + H2",
        "--T",
        "1000",
        "K",
        "--json",
        "--P",
        "2",
        "bar",
        "--y",
        "C2H6=0.5",
    )
    assert json.loads(out)["partial_pressures_Pa"] == {"C2H6": pytest.approx(100000.0)}


@pytest.mark.parametrize(
    ("argv", "fragment"),
    [
        (["assess", "C2H6 -> C2H4", "--T", "900", "K"], "not balanced"),
        (["assess", "C2H6 -> C2H4 + H2", "--T", "900"], "unit"),
        (["assess", "C2H6 -> C2H4 + H2", "--T", "-5", "K"], "absolute zero"),
        (["assess", "C2H6 -> C2H4 + H2"], "--T"),
        (["assess", "Qq -> Qq", "--T", "900", "K"], "not an element"),
        (["assess", "C2H6 -> C2H4 + H2", "--T", "900", "K", "--P", "2", "bar"], "--y"),
        (
            ["assess", "C2H6 -> C2H4 + H2", "--T", "900", "K", "--species-file", "/nope.toml"],
            "cannot read",
        ),
    ],
)
def test_errors_exit_nonzero_with_message(
    capsys: pytest.CaptureFixture[str], argv: list[str], fragment: str
) -> None:
    code, _, err = run(capsys, *argv)
    assert code == 2
    assert fragment in err
    assert "Traceback" not in err


def test_species_search(capsys: pytest.CaptureFixture[str]) -> None:
    code, out, _ = run(capsys, "species", "carbon dioxide")
    assert code == 0 and "CO2(g)" in out and "ΔfH°(298.15)" in out
    code, out, _ = run(capsys, "species", "zzzzqqq")
    assert code == 2


def test_installed_console_script() -> None:
    # The entry point declared in pyproject.toml works from the installed wheel.
    exe = [sys.executable, "-m", "feasibly.cli"]
    proc = subprocess.run(
        [*exe, "species", "CO2", "--limit", "1"], capture_output=True, text=True, check=False
    )
    assert proc.returncode == 0, proc.stderr
    assert "CO2(g)" in proc.stdout

"""Issue 17, command line: every user error exits 2 with a short message and no traceback, 3
only for a real bug, 130 on Ctrl-C; nothing a file or argument carries reaches the terminal as a
control sequence; a shipped entry is replaced only with --replace-shipped, and said so."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from feasibly.cli import _terminal, assess, main

EQ = "MgCO3 -> MgO + CO2"


def run(capsys: pytest.CaptureFixture[str], *argv: str) -> tuple[int, str, str]:
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def _species_file(tmp_path: Path, name: str, entry: dict) -> Path:
    path = tmp_path / name
    path.write_text(
        json.dumps({"schema": "feasibly-species", "schema_version": 1, "species": [entry]})
    )
    return path


def _fake_co2() -> dict:
    return {
        "id": "CO2(g)",
        "formula": "CO2",
        "phase": "g",
        "T_range_K": [200.0, 3000.0],
        "dHf_298": {"value": -1.0e7, "u": 1.0, "source": "crafted"},
        "S_298": {"value": 213.8, "u": 0.1, "source": "crafted"},
        "cp": {"model": "constant", "cp_J_per_mol_K": 37.1, "u_rel": 0.05, "source": "crafted"},
    }


@pytest.mark.parametrize(
    ("argv", "fragment"),
    [
        (["--T", "2 650 K"], "exactly one number"),
        (["--T", "[2, 400] K"], "one number followed by its unit"),
        (["--T", "kelvin"], "one number followed by its unit"),
        (["--T", "1/0 K"], "not a temperature"),
        (["--T-range", "a", "b", "K"], "not a temperature"),
        (["--T-range", "300", "900", "K", "--points", "1000000"], "--points must be"),
        (["--T", "800", "K", "--samples", "500000000"], "GiB of draws"),
        (["--T", "800", "K", "--samples", "1000", "--threshold", "nan", "J/mol"], "molar energy"),
        (["--T", "800", "K", "--samples", "1024", "--require-K", "inf"], "must be positive"),
        (["--T", "800", "K", "--p", "CO2=5e-324 Pa"], "outside 1e-30 Pa"),
        (
            [*"--T 800 K --P 1 bar --y CO2=0.9 --y O2=0.9 --y N2=0.9 --y H2O=0.9".split()],
            "add up to 3.6",
        ),
        (["--T", "800", "K", "--record", ""], "--record"),
        (["--T", "800", "K", "--sign-with", "key.pem"], "--record"),
        (["--T", "800", "K", "--samples", "100", "--correlate", "a:dHf", "b:dHf", "x"], "RHO"),
    ],
)
def test_user_errors_exit_2_without_traceback(
    capsys: pytest.CaptureFixture[str], argv: list[str], fragment: str
) -> None:
    code, _, err = run(capsys, "assess", EQ, *argv)
    assert code == 2, err
    assert fragment in err and "Traceback" not in err and "internal error" not in err
    assert len(err) < 600


def test_huge_equation_gives_a_short_message(capsys: pytest.CaptureFixture[str]) -> None:
    code, _, err = run(capsys, "assess", "H2+" + "1" * 20000 + "x -> H2", "--T", "800", "K")
    assert code == 2 and len(err) < 400


def test_usage_errors_exit_2(capsys: pytest.CaptureFixture[str]) -> None:
    code, _, err = run(capsys, "assess", EQ, "--points", "many")
    assert code == 2 and "invalid int value" in err
    assert run(capsys, "frobnicate")[0] == 2


def test_ctrl_c_exits_130_without_traceback(
    capsys: pytest.CaptureFixture[str], monkeypatch: pytest.MonkeyPatch
) -> None:
    def interrupted(*args: object, **kwargs: object) -> None:
        raise KeyboardInterrupt

    monkeypatch.setattr(assess, "assess", interrupted)
    code, _, err = run(capsys, "assess", EQ, "--T", "800", "K")
    assert code == 130 and "interrupted" in err and "Traceback" not in err


def test_only_a_real_bug_exits_3(
    capsys: pytest.CaptureFixture[str], monkeypatch: pytest.MonkeyPatch
) -> None:
    def bug(*args: object, **kwargs: object) -> None:
        raise ZeroDivisionError("x" * 5000)

    monkeypatch.setattr(assess, "assess", bug)
    code, _, err = run(capsys, "assess", EQ, "--T", "800", "K")
    assert code == 3 and "this is a bug" in err.lower() and len(err) < 600


def test_terminal_output_escapes_control_characters(
    capsys: pytest.CaptureFixture[str], tmp_path: Path
) -> None:
    # Species names printed raw, so escape sequences (including OSC 52, which writes the
    # clipboard) reached the terminal. Everything printed now passes through one filter.
    osc52 = "\x1b]52;c;ZXZpbA==\x07"
    entry = _fake_co2() | {"id": "CO2(g,mine)", "form": "mine"}
    path = _species_file(tmp_path, f"x{osc52}.json", entry)
    code, out, err = run(capsys, "species", "CO2", "--species-file", str(path))
    assert code == 0
    assert "\x1b" not in out + err and "\x07" not in out + err and "\\u001b]52" in err
    assert _terminal.terminal_safe("a\x9b2Jb\u202ec") == "a\\u009b2Jb\\u202ec"
    doc = json.dumps({"author": "x\x9b\x7f\u202e"}, ensure_ascii=False)
    assert json.loads(_terminal.terminal_safe(doc)) == {"author": "x\x9b\x7f\u202e"}


def test_user_file_cannot_silently_replace_shipped_co2(
    capsys: pytest.CaptureFixture[str], tmp_path: Path
) -> None:
    # A user species file silently replaced the shipped CO2(g) (ΔrG° +38.9 → −9,466 kJ/mol)
    # and the output never mentioned it.
    path = _species_file(tmp_path, "crafted.json", _fake_co2())
    code, _, err = run(capsys, "assess", EQ, "--T", "800", "K", "--species-file", str(path))
    assert code == 2 and "--replace-shipped" in err
    record = tmp_path / "call.json"
    code, _, err = run(
        capsys,
        "assess",
        EQ,
        "--T",
        "800",
        "K",
        "--species-file",
        str(path),
        "--replace-shipped",
        "--record",
        str(record),
    )
    assert code == 0
    assert f"species from {path}: CO2(g) (REPLACES the shipped entry)" in err
    html = record.with_suffix(".html").read_text()
    assert "user file crafted.json (REPLACES the shipped entry of this id)" in html
    code, out, _ = run(capsys, "verify", str(record))
    assert code == 0 and "CO2(g) is not the shipped entry" in out and "crafted.json" in out


def test_added_species_are_listed_with_their_file(
    capsys: pytest.CaptureFixture[str], tmp_path: Path
) -> None:
    entry = _fake_co2() | {"id": "CO2(g,mine)", "form": "mine"}
    entry["dHf_298"] = {"value": -393500.0, "u": 100.0, "source": "mine"}
    path = _species_file(tmp_path, "mine.json", entry)
    code, _, err = run(
        capsys,
        "assess",
        "MgCO3 -> MgO + CO2(g,mine)",
        "--T",
        "800",
        "K",
        "--species-file",
        str(path),
    )
    assert code == 0 and f"species from {path}: CO2(g,mine)" in err and "REPLACES" not in err


def test_unsigned_verify_says_what_it_does_not_prove(
    capsys: pytest.CaptureFixture[str], tmp_path: Path
) -> None:
    record = tmp_path / "call.json"
    assert run(capsys, "assess", EQ, "--T", "800", "K", "--record", str(record))[0] == 0
    code, out, _ = run(capsys, "verify", str(record))
    assert code == 0 and "unsigned" in out and "NOT authenticated" in out

"""Issue 17, records: escaped reports, pairs written as a unit, unusable paths refused, bounded
reading, and Ed25519 signatures that cover author, date and rationale."""

from __future__ import annotations

import copy
import json
import os
import resource
import subprocess
import sys
from pathlib import Path
from typing import Any

import pytest

from feasibly.cli import main
from feasibly.errors import RecordError
from feasibly.records import (
    check_signature,
    load_record,
    make_record,
    record_html,
    record_markdown,
    sign_record,
    validate_record,
    verify_record,
    write_record,
)
from feasibly.records.document import _seal, parse_record_text

cryptography = pytest.importorskip("cryptography", reason="signing needs feasibly[signing]")
from cryptography.hazmat.primitives import serialization  # noqa: E402
from cryptography.hazmat.primitives.asymmetric import ed25519  # noqa: E402


@pytest.fixture(scope="module")
def record() -> dict[str, Any]:
    return make_record(
        "MgCO3 -> MgO + CO2",
        T="800 K",
        samples=4096,  # 2^12: small for speed; reproduction is bitwise at any N
        seed=17,
        author="A. Chemist",
        reviewer="B. Reviewer",
        rationale="Calcination step of the pilot.",
    )


def _resealed(doc: dict[str, Any]) -> dict[str, Any]:
    body = {k: v for k, v in doc.items() if k not in ("integrity", "signature")}
    return _seal(copy.deepcopy(body))


def _keys(tmp_path: Path, name: str = "me") -> tuple[Path, Path, Any]:
    key = ed25519.Ed25519PrivateKey.generate()
    private = tmp_path / f"{name}.pem"
    private.write_bytes(
        key.private_bytes(
            serialization.Encoding.PEM,
            serialization.PrivateFormat.PKCS8,
            serialization.NoEncryption(),
        )
    )
    public = tmp_path / f"{name}.pub.pem"
    public.write_bytes(
        key.public_key().public_bytes(
            serialization.Encoding.PEM, serialization.PublicFormat.SubjectPublicKeyInfo
        )
    )
    return private, public, key


# --- injection ------------------------------------------------------------------------------------
def test_report_escapes_the_heat_capacity_model_name(record: dict[str, Any]) -> None:
    # A re-sealed record could restyle the page through the unescaped cp model name.
    doc = copy.deepcopy(record)
    payload = "</td></tr></table><style>.word{display:none}</style><div>NOT FEASIBLE</div>"
    doc["species"][0]["provenance"]["cp"]["model"] = payload
    html = record_html(_resealed(doc))
    assert payload not in html and "&lt;style&gt;" in html
    md = record_markdown(_resealed(doc))
    assert "<style>" not in md


def test_report_escapes_every_text_field(record: dict[str, Any]) -> None:
    doc = copy.deepcopy(record)
    evil = "<script>alert(1)</script>"
    doc["review"] = {"author": evil, "reviewer": evil, "rationale": evil}
    doc["reaction"]["entered"] = evil
    html = record_html(_resealed(doc))
    assert "<script>alert" not in html and "&lt;script&gt;" in html


# --- writing as a unit ----------------------------------------------------------------------------
def test_html_failure_leaves_no_json(record: dict[str, Any], tmp_path: Path, monkeypatch) -> None:
    # An HTML failure left the JSON behind.
    from feasibly.records import _report

    def broken(doc: Any) -> str:
        raise RuntimeError("renderer failed")

    monkeypatch.setattr(_report, "render_html", broken)
    with pytest.raises(RuntimeError):
        write_record(record, tmp_path / "r.json", tmp_path / "r.html")
    assert list(tmp_path.iterdir()) == []


def test_overwrite_keeps_the_old_pair_until_the_new_one_is_complete(
    record: dict[str, Any], tmp_path: Path, monkeypatch
) -> None:
    # With --overwrite the old JSON was gone before the HTML failed.
    j, h = tmp_path / "r.json", tmp_path / "r.html"
    j.write_text("old json")
    h.write_text("old html")
    real_replace = os.replace
    calls = []

    def flaky(src: Any, dst: Any) -> None:
        calls.append(dst)
        if str(dst) == str(h):
            raise OSError(28, "No space left on device")
        real_replace(src, dst)

    monkeypatch.setattr(os, "replace", flaky)
    with pytest.raises(RecordError, match="nothing was written or replaced"):
        write_record(record, j, h, overwrite=True)
    monkeypatch.setattr(os, "replace", real_replace)
    assert j.read_text() == "old json" and h.read_text() == "old html"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["r.html", "r.json"]  # no temporaries
    write_record(record, j, h, overwrite=True)
    assert json.loads(j.read_text())["integrity"] == record["integrity"]


def test_existing_pair_is_refused_without_overwrite(record: dict[str, Any], tmp_path: Path) -> None:
    h = tmp_path / "r.html"
    h.write_text("old html")
    with pytest.raises(RecordError, match="file exists"):
        write_record(record, tmp_path / "r.json", h)
    assert not (tmp_path / "r.json").exists() and h.read_text() == "old html"


@pytest.mark.parametrize("path", ["", "   "])
def test_empty_record_path_is_an_error(record: dict[str, Any], path: str) -> None:
    # --record "" wrote nothing and exited 0.
    with pytest.raises(RecordError, match="path is empty"):
        write_record(record, path)


def test_record_into_a_missing_directory(record: dict[str, Any], tmp_path: Path) -> None:
    with pytest.raises(RecordError, match="does not exist"):
        write_record(record, tmp_path / "nowhere" / "r.json")


def test_record_onto_a_directory(record: dict[str, Any], tmp_path: Path) -> None:
    (tmp_path / "r.json").mkdir()
    with pytest.raises(RecordError, match="is a directory"):
        write_record(record, tmp_path / "r.json")


@pytest.mark.skipif(os.geteuid() == 0, reason="root writes into read-only directories")
def test_record_into_a_read_only_directory(record: dict[str, Any], tmp_path: Path) -> None:
    ro = tmp_path / "ro"
    ro.mkdir()
    ro.chmod(0o500)
    try:
        with pytest.raises(RecordError, match="cannot write"):
            write_record(record, ro / "r.json")
    finally:
        ro.chmod(0o700)


def test_record_past_the_file_size_limit_is_an_error(tmp_path: Path) -> None:
    # Past a file-size limit (RLIMIT_FSIZE) the write failed with a traceback (exit 3).
    script = (
        "import resource, sys\n"
        "from feasibly.cli import main\n"
        "resource.setrlimit(resource.RLIMIT_FSIZE, (2000, 2000))\n"
        "sys.exit(main(['assess', 'MgCO3 -> MgO + CO2', '--T', '800', 'K', '--record', "
        f"{str(tmp_path / 'r.json')!r}]))\n"
    )
    assert resource.RLIM_INFINITY is not None
    proc = subprocess.run(
        [sys.executable, "-c", script], capture_output=True, text=True, timeout=120
    )
    assert proc.returncode == 2, proc.stderr
    assert "cannot write the record" in proc.stderr and "Traceback" not in proc.stderr
    assert not (tmp_path / "r.json").exists()


# --- bounded reading ------------------------------------------------------------------------------
def test_deeply_nested_record_is_refused() -> None:
    with pytest.raises(RecordError, match="nested"):
        parse_record_text('{"a":' + "[" * 100_000 + "]" * 100_000 + "}")


def test_verify_refuses_a_huge_sample_count(record: dict[str, Any]) -> None:
    # A received record with samples = 10**12 made verify allocate or spin.
    doc = copy.deepcopy(record)
    doc["uncertainty"]["samples"] = 10**12
    result = verify_record(_resealed(doc))
    assert not result.identical
    assert any("could not recompute" in str(d) and "GiB" in str(d) for d in result.differences)


# --- signatures -----------------------------------------------------------------------------------
def test_resealed_review_edit_is_reported_as_unauthenticated(record: dict[str, Any]) -> None:
    # verify said "identical" after author, date or rationale were changed and re-sealed, and
    # did not say that these are not authenticated.
    doc = copy.deepcopy(record)
    doc["review"]["author"] = "Someone Else"
    doc["created"] = "2020-01-01T00:00:00+00:00"
    result = verify_record(_resealed(doc))
    assert result.signature is not None and not result.signature.signed
    assert "NOT authenticated" in result.signature.meaning
    assert result.to_dict()["signature"]["signed"] is False


def test_signed_record_detects_an_edit_of_author_date_or_rationale(
    record: dict[str, Any], tmp_path: Path
) -> None:
    private, public, _ = _keys(tmp_path)
    signed = sign_record(record, private)
    validate_record(copy.deepcopy(signed))  # the schema and the hash accept a signed record
    good = verify_record(signed, trusted_key=public)
    assert good.identical and good.signature is not None and good.signature.trusted
    for field, value in (("author", "Someone"), ("rationale", "other"), ("reviewer", "x")):
        doc = copy.deepcopy(signed)
        doc["review"][field] = value
        forged = {**_resealed(doc), "signature": signed["signature"]}
        result = verify_record(forged)
        assert not result.identical
        assert result.signature is not None and result.signature.valid is False
    doc = copy.deepcopy(signed)
    doc["created"] = "2020-01-01T00:00:00+00:00"
    assert check_signature({**_resealed(doc), "signature": signed["signature"]}).valid is False


def test_verify_reports_the_signer_fingerprint(record: dict[str, Any], tmp_path: Path) -> None:
    private, _, key = _keys(tmp_path)
    signed = sign_record(record, private)
    raw = key.public_key().public_bytes(serialization.Encoding.Raw, serialization.PublicFormat.Raw)
    import hashlib

    fingerprint = "sha256:" + hashlib.sha256(raw).hexdigest()
    check = check_signature(signed)
    assert check.signed and check.valid and check.fingerprint == fingerprint
    assert check.trusted is None and "not checked" in check.meaning


def test_signature_by_another_key_fails_against_the_trusted_key(
    record: dict[str, Any], tmp_path: Path
) -> None:
    mine, _, _ = _keys(tmp_path, "mine")
    _, theirs_public, _ = _keys(tmp_path, "theirs")
    result = verify_record(sign_record(record, mine), trusted_key=theirs_public)
    assert not result.identical and result.signature is not None
    assert result.signature.valid and result.signature.trusted is False
    unsigned = verify_record(record, trusted_key=theirs_public)
    assert not unsigned.identical


def test_private_key_is_never_stored_in_the_record(record: dict[str, Any], tmp_path: Path) -> None:
    private, _, key = _keys(tmp_path)
    signed = sign_record(record, private)
    secret = key.private_bytes(
        serialization.Encoding.Raw, serialization.PrivateFormat.Raw, serialization.NoEncryption()
    )
    import base64

    text = json.dumps(signed)
    assert base64.b64encode(secret).decode() not in text and secret.hex() not in text
    assert "PRIVATE" not in text and set(signed["signature"]) == {
        "algorithm",
        "public_key",
        "key_fingerprint",
        "covers",
        "value",
    }


def test_unsigned_records_still_load(record: dict[str, Any], tmp_path: Path) -> None:
    path = tmp_path / "r.json"
    write_record(record, path)
    assert load_record(path)["integrity"] == record["integrity"]


def test_bad_key_files_are_record_errors(record: dict[str, Any], tmp_path: Path) -> None:
    bad = tmp_path / "bad.pem"
    bad.write_text("not a key")
    with pytest.raises(RecordError, match="not a PEM private key"):
        sign_record(record, bad)
    with pytest.raises(RecordError, match="cannot read"):
        sign_record(record, tmp_path / "missing.pem")


def test_cli_signs_and_verifies_against_a_trusted_key(
    record: dict[str, Any], tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    private, public, _ = _keys(tmp_path)
    _, other, _ = _keys(tmp_path, "other")
    out = tmp_path / "call.json"
    code = main(
        [
            "assess",
            "MgCO3 -> MgO + CO2",
            "--T",
            "800",
            "K",
            "--record",
            str(out),
            "--author",
            "A. Chemist",
            "--sign-with",
            str(private),
        ]
    )
    err = capsys.readouterr().err
    assert code == 0 and "signed with key sha256:" in err
    assert main(["verify", str(out), "--trusted-key", str(public)]) == 0
    text = capsys.readouterr().out
    assert "signature holds" in text and "it is the trusted key" in text
    assert main(["verify", str(out), "--trusted-key", str(other)]) == 1
    assert "NOT the trusted key" in capsys.readouterr().out
    doc = json.loads(out.read_text())
    doc["review"]["author"] = "Someone Else"
    forged = {**_resealed(doc), "signature": doc["signature"]}
    out.write_text(json.dumps(forged))
    assert main(["verify", str(out)]) == 1
    assert "does NOT hold" in capsys.readouterr().out

"""Signed decision records: an Ed25519 signature with the reviewer's own key.

The content hash of a record (``integrity.content_sha256``) shows an edit only to someone who
does not recompute it: anyone can change the author, the date or the rationale and re-seal. A
signature made with a private key that only its owner holds closes that gap. It covers the whole
record (every member except ``signature`` itself, including ``review``, ``created`` and
``integrity``), in the same canonical JSON the hash uses, so any later change breaks it.

The record carries the signer's *public* key and its fingerprint; the private key stays in the
user's file and is never written anywhere. A valid signature proves that the holder of that key
signed exactly this content; that the key belongs to the person named as author is for the
reader to establish, by checking against a public key they trust (``trusted_key``, or
``feasibly verify --trusted-key``).

Keys are the usual PEM files (PKCS#8 private key, SubjectPublicKeyInfo public key), e.g. made
with ``openssl genpkey -algorithm ed25519 -out me.pem`` and ``openssl pkey -in me.pem -pubout
-out me.pub.pem``. The ``cryptography`` package does the work (``pip install feasibly[signing]``).
"""

from __future__ import annotations

import base64
import binascii
import hashlib
from collections.abc import Mapping
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from ..errors import RecordError
from .document import _canonical, validate_record

__all__ = ["SignatureCheck", "check_signature", "key_fingerprint", "sign_record"]

ALGORITHM = "ed25519"
_COVERS = (
    "canonical JSON of the whole record without its signature member (keys sorted, separators "
    "',' and ':', non-ASCII escaped, UTF-8)"
)
# A PEM key file is a few hundred bytes; refuse anything much larger before reading it.
_MAX_KEY_BYTES = 64 * 1024

UNSIGNED_MEANING = (
    "unsigned: the content hash shows edits made without re-sealing, but anyone can change a "
    "record (including author, reviewer, date and rationale) and recompute the hash, so who "
    "made the call and when is NOT authenticated; recomputation shows only that the results "
    "follow from the recorded inputs and data"
)


def _crypto() -> Any:
    try:
        from cryptography.hazmat.primitives import serialization
        from cryptography.hazmat.primitives.asymmetric import ed25519
    except ImportError:  # pragma: no cover - the test extra installs it
        raise RecordError(
            "signature",
            [
                "signing and checking signatures need the cryptography package: "
                "pip install 'feasibly[signing]'"
            ],
        ) from None
    return serialization, ed25519


def _signed_bytes(record: Mapping[str, Any]) -> bytes:
    return _canonical({k: v for k, v in record.items() if k != "signature"})


def key_fingerprint(public_raw: bytes) -> str:
    """SHA-256 of the raw 32-byte public key, as ``sha256:`` and 64 hex digits."""
    return "sha256:" + hashlib.sha256(public_raw).hexdigest()


def _read_key_file(path: str | Path, what: str) -> bytes:
    p = Path(path)
    try:
        if p.stat().st_size > _MAX_KEY_BYTES:
            raise RecordError(str(p), [f"larger than {_MAX_KEY_BYTES // 1024} KiB; not a {what}"])
        return p.read_bytes()
    except OSError as exc:
        raise RecordError(str(p), [f"cannot read the {what} ({exc.strerror})"]) from None


def _public_raw(public_key: Any) -> bytes:
    serialization, _ = _crypto()
    raw: bytes = public_key.public_bytes(serialization.Encoding.Raw, serialization.PublicFormat.Raw)
    return raw


def load_private_key(path: str | Path, password: bytes | None = None) -> Any:
    """An Ed25519 private key from a PEM file (never copied anywhere)."""
    serialization, ed25519 = _crypto()
    data = _read_key_file(path, "private key file")
    try:
        key = serialization.load_pem_private_key(data, password=password)
    except TypeError:
        raise RecordError(
            str(path), ["the key is encrypted; give its passphrase (or use an unencrypted key)"]
        ) from None
    except ValueError:
        raise RecordError(
            str(path),
            [
                "not a PEM private key (or a wrong passphrase); make one with "
                "`openssl genpkey -algorithm ed25519 -out me.pem`"
            ],
        ) from None
    if not isinstance(key, ed25519.Ed25519PrivateKey):
        raise RecordError(str(path), ["not an Ed25519 key; records are signed with Ed25519"])
    return key


def load_public_key(path: str | Path) -> Any:
    """An Ed25519 public key from a PEM file."""
    serialization, ed25519 = _crypto()
    data = _read_key_file(path, "public key file")
    try:
        key = serialization.load_pem_public_key(data)
    except ValueError:
        raise RecordError(
            str(path), ["not a PEM public key; export one with `openssl pkey -in me.pem -pubout`"]
        ) from None
    if not isinstance(key, ed25519.Ed25519PublicKey):
        raise RecordError(str(path), ["not an Ed25519 public key"])
    return key


def sign_record(
    record: Mapping[str, Any], private_key: str | Path | Any, *, password: bytes | None = None
) -> dict[str, Any]:
    """The record with a ``signature`` member made with ``private_key`` (a PEM file path or an
    Ed25519 private key object). The record must be valid and unedited; a signature it already
    has is replaced. Only the public key and its fingerprint go into the record.
    """
    _, ed25519 = _crypto()
    body = {k: v for k, v in dict(record).items() if k != "signature"}
    doc = validate_record(body, "record to sign")
    key = (
        private_key
        if isinstance(private_key, ed25519.Ed25519PrivateKey)
        else load_private_key(private_key, password)
    )
    raw = _public_raw(key.public_key())
    signature = key.sign(_signed_bytes(doc))
    return {
        **doc,
        "signature": {
            "algorithm": ALGORITHM,
            "public_key": base64.b64encode(raw).decode("ascii"),
            "key_fingerprint": key_fingerprint(raw),
            "covers": _COVERS,
            "value": base64.b64encode(signature).decode("ascii"),
        },
    }


@dataclass(frozen=True)
class SignatureCheck:
    """What a record's signature shows.

    ``signed``: the record has a signature. ``valid``: it holds over the record as it is now
    (None when unsigned). ``fingerprint``: of the key that signed. ``trusted``: the signing key
    is the trusted key given (None when no trusted key was given). ``meaning``: plain words.
    """

    signed: bool
    valid: bool | None
    fingerprint: str | None
    trusted: bool | None
    meaning: str

    @property
    def ok(self) -> bool:
        """Unsigned without a trusted key, or signed, valid and (when asked) by the trusted key."""
        if not self.signed:
            return self.trusted is None
        return bool(self.valid) and self.trusted is not False

    def to_dict(self) -> dict[str, Any]:
        return {
            "signed": self.signed,
            "valid": self.valid,
            "key_fingerprint": self.fingerprint,
            "trusted": self.trusted,
            "meaning": self.meaning,
        }


def check_signature(
    record: Mapping[str, Any], trusted_key: str | Path | Any | None = None
) -> SignatureCheck:
    """Check a record's signature (and, with ``trusted_key``, that the trusted key made it)."""
    sig = record.get("signature")
    trusted_raw = None
    if trusted_key is not None:
        _, ed25519 = _crypto()
        pub = (
            trusted_key
            if isinstance(trusted_key, ed25519.Ed25519PublicKey)
            else load_public_key(trusted_key)
        )
        trusted_raw = _public_raw(pub)
    if sig is None:
        meaning = UNSIGNED_MEANING
        if trusted_raw is not None:
            meaning += (
                f"; a signature by the trusted key {key_fingerprint(trusted_raw)} was asked for "
                "and there is none"
            )
        return SignatureCheck(False, None, None, None if trusted_raw is None else False, meaning)
    _, ed25519 = _crypto()
    from cryptography.exceptions import InvalidSignature

    try:
        raw = base64.b64decode(sig["public_key"], validate=True)
        value = base64.b64decode(sig["value"], validate=True)
        public = ed25519.Ed25519PublicKey.from_public_bytes(raw)
    except (binascii.Error, ValueError, TypeError, KeyError):
        raise RecordError(
            "record", ["field signature: the public key or signature is not valid base64 Ed25519"]
        ) from None
    fingerprint = key_fingerprint(raw)
    if sig.get("key_fingerprint") != fingerprint:
        return SignatureCheck(
            True,
            False,
            fingerprint,
            None if trusted_raw is None else trusted_raw == raw,
            f"the signature block was edited: its fingerprint is not that of its key "
            f"({fingerprint})",
        )
    try:
        public.verify(value, _signed_bytes(record))
        valid = True
    except InvalidSignature:
        valid = False
    trusted = None if trusted_raw is None else trusted_raw == raw
    if not valid:
        meaning = (
            f"signature by key {fingerprint} does NOT hold: the record was changed after it was "
            "signed (any member, including author, reviewer, date and rationale)"
        )
    else:
        meaning = (
            f"signed by key {fingerprint}; the signature holds: nothing in the record, "
            "including author, reviewer, date and rationale, changed since that key signed it"
        )
        if trusted is None:
            meaning += (
                "; whether this key belongs to the named author is not checked (give the "
                "author's public key as the trusted key to check it)"
            )
        elif trusted:
            meaning += "; it is the trusted key"
        else:
            meaning += f"; it is NOT the trusted key ({key_fingerprint(trusted_raw or b'')})"
    return SignatureCheck(True, valid, fingerprint, trusted, meaning)

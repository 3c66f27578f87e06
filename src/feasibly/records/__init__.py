"""Decision records: a sealed, versioned JSON document of one call, its HTML report, and
verification that recomputes the call from the record's own inputs.

- :mod:`~feasibly.records.document` — canonical form, hash, reading, validation, atomic writing;
- :mod:`~feasibly.records.build` — a record from an assessment;
- :mod:`~feasibly.records.verify` — recompute and compare;
- :mod:`~feasibly.records.signing` — an optional Ed25519 signature with the user's own key;
- ``_schema``, ``_report``, ``_svg`` — the published schema, the HTML/Markdown report and its
  dependency-free charts (private);
- ``_sections`` — the optional heat-balance and formation-line sections (private).

Layer rule: imports the kernel wings (thermo, uncertainty, equilibrium); never figures or widgets.
"""

from .build import make_record, record_from
from .document import (
    SCHEMA_MARK,
    SCHEMA_VERSION,
    load_record,
    record_hash,
    record_html,
    record_markdown,
    validate_record,
    write_record,
)
from .signing import SignatureCheck, check_signature, key_fingerprint, sign_record
from .verify import Difference, VerifyResult, verify_record

__all__ = [
    "SCHEMA_MARK",
    "SCHEMA_VERSION",
    "Difference",
    "SignatureCheck",
    "VerifyResult",
    "check_signature",
    "key_fingerprint",
    "load_record",
    "make_record",
    "record_from",
    "record_hash",
    "record_html",
    "record_markdown",
    "sign_record",
    "validate_record",
    "verify_record",
    "write_record",
]

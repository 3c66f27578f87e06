"""The ``feasibly verify`` command: recompute a decision record and say whether it is identical,
and whether its signature (if any) holds and by which key.

Exit codes: 0 identical; 1 the record differs from its recomputation (or was edited after
export, or its signature does not hold or is not by the trusted key); 2 the record cannot be
read (not JSON, wrong schema version, missing or mistyped fields), with the message and no
traceback (``feasibly.cli.main`` turns the error into that).
"""

from __future__ import annotations

import argparse
import json
from typing import Any

__all__ = ["register"]

EXIT_IDENTICAL = 0
EXIT_DIFFERS = 1


def _cmd_verify(args: argparse.Namespace) -> int:
    from ..records import verify_record

    result = verify_record(args.record, trusted_key=args.trusted_key)
    if args.json:
        print(json.dumps(result.to_dict(), indent=2, ensure_ascii=False))
    else:
        print(f"{args.record}: " + result.summary(limit=args.limit))
        if result.signature is not None and not result.signature.signed:
            print(f"note: {result.signature.meaning}.")
    return EXIT_IDENTICAL if result.identical else EXIT_DIFFERS


def register(sub: Any) -> None:
    """Add the ``verify`` subcommand to the ``feasibly`` parser's subparsers."""
    v = sub.add_parser(
        "verify",
        help="recompute a decision record and say whether it is identical",
        description="Recompute a decision record (JSON) from its own inputs and compare every "
        "result bit for bit; also detects edits after export. Exit 0 identical, 1 differs, "
        "2 unreadable record.",
    )
    v.add_argument("record", metavar="RECORD.json", help="a record written by feasibly")
    v.add_argument("--json", action="store_true", help="print the comparison as JSON")
    v.add_argument(
        "--trusted-key",
        metavar="PUB.pem",
        help="Ed25519 public key (PEM) the record must be signed with; without it a valid "
        "signature is reported with its key fingerprint",
    )
    v.add_argument(
        "--limit", type=int, default=25, help="differences to list in the text output (25)"
    )
    v.set_defaults(run=_cmd_verify)

"""The sign-off state the terminal UI shows for an opened plan file (no Textual here).

The trusted keys come from the file named by the environment variable
:data:`TRUSTED_KEYS_ENV` (as ``scanplan draft verify --trusted`` takes them); without it the
signature is checked against the key stored with it (content unchanged, signer not checked).
Once the form's inputs differ from the file's, the signature no longer covers the plan on
screen: the state becomes ``changed``.
"""

from __future__ import annotations

import os
from dataclasses import replace
from typing import Any

from planner.planfile import PlanInputs
from planner.records import record

__all__ = ["TRUSTED_KEYS_ENV", "SignedFile", "open_signed", "state_for"]

TRUSTED_KEYS_ENV = "SCANPLAN_TRUSTED_KEYS"
"""Environment variable: the trusted-keys file the UI verifies signatures against."""


@record(slots=False)
class SignedFile:
    """An opened file's signature check and the inputs it covers."""

    verification: Any          # planner.signing.Verification
    inputs: PlanInputs
    problem: str = ""          # why the trusted keys could not be read, if so


def open_signed(document) -> SignedFile | None:
    """Check the signature of a loaded :class:`planner.plandoc.PlanDocument` (None: the
    file has no signature)."""
    if document.signature is None:
        return None
    from planner.errors import PlannerError
    from planner.signing import load_trusted_keys, verify_document
    trusted, problem = None, ""
    path = os.environ.get(TRUSTED_KEYS_ENV, "").strip()
    if path:
        try:
            trusted = load_trusted_keys(path)
        except PlannerError as exc:
            problem = f"trusted keys not read ({exc.message}); signer not checked"
    return SignedFile(verify_document(document.data, trusted), document.inputs, problem)


def state_for(signed: SignedFile | None, inputs: PlanInputs):
    """The verification that applies to ``inputs`` now (None: no signature)."""
    if signed is None:
        return None
    v = signed.verification
    if inputs != signed.inputs and v.status in ("valid", "unchecked"):
        return replace(v, status="changed")
    return v


def supervisor_fields(verification) -> dict[str, str]:
    """The read-only supervisor fields, filled only from an unchanged signature."""
    if verification is None or verification.status not in ("valid", "unchecked"):
        return {}
    return {"supervisor": verification.name, "date": verification.signed_at,
            "supervisor_comments": verification.comment}

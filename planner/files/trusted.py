"""Model of a trusted-keys file: the supervisors' public keys a department accepts.

Written by ``scanplan draft keygen --public FILE`` and read by ``scanplan draft verify
--trusted FILE``; see :mod:`planner.signing`::

    schema_version: 1
    keys:
      - key_id: 3f2a9c0d1e4b5a67       # first 16 hex digits of SHA-256 of the raw key
        name: A. Supervisor
        role: supervisor
        public_key: <raw Ed25519 public key, base64>
        added_at: '2026-03-01T09:30:00Z'
"""

from __future__ import annotations

from typing import Annotated, Literal

from pydantic import Field

from planner.files.base import FileModel, Text

__all__ = ["TrustedKey", "TrustedKeysFile"]

KeyId = Annotated[str, Field(pattern=r"^[0-9a-f]{16}$")]
Base64 = Annotated[str, Field(pattern=r"^[A-Za-z0-9+/]{43}=$",
                              description="32-byte raw Ed25519 public key, base64.")]


class TrustedKey(FileModel):
    """One signer's public key."""

    key_id: KeyId
    name: Text
    role: str = ""
    public_key: Base64
    added_at: str = ""


class TrustedKeysFile(FileModel):
    """Public keys whose signatures a department accepts."""

    schema_version: Literal[1] = Field(description="File format version; must be 1.")
    keys: list[TrustedKey] = Field(default_factory=list)

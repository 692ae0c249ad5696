"""Supervisor sign-off of a plan file with Ed25519 signatures.

- :func:`generate_key` makes a key pair: the private key as PKCS#8 PEM, file mode 0600,
  optionally encrypted with a passphrase; the public key (with the signer's name, role and
  key id) is added to a trusted-keys file (:class:`planner.files.trusted.TrustedKeysFile`).
- :func:`sign_document` signs the plan file's canonical content (:func:`canonical_bytes`:
  everything in the file but the signature itself, i.e. inputs, the computed headline, the
  student's decisions and sign-off fields, plus the signer, the signing time and the
  comment, as JSON with sorted keys) and writes the ``signature`` section atomically.
- :func:`verify_document` checks it: against a trusted-keys file (the signer must be known)
  or, without one, against the key stored with the signature (content unchanged, signer
  not checked).

A key id is the first 16 hex digits of SHA-256 of the raw 32-byte public key. The
``cryptography`` package is imported only inside these functions, so that nothing else
pays for it at start-up. Ed25519 is RFC 8032 (Josefsson and Liusvaara 2017).
"""

from __future__ import annotations

import base64
import binascii
import hashlib
import json
import os
from typing import Any, Callable

from planner.errors import InputError
from planner.records import record

__all__ = ["Verification", "canonical_bytes", "generate_key", "key_id_of", "load_private_key",
           "load_trusted_keys", "sign_document", "verify_document"]

KEY_ID_HEX = 16
"""Hex digits of a key id (64 bits of SHA-256: enough to tell a department's keys apart)."""

PassphraseSource = Callable[[], bytes]


def key_id_of(raw_public: bytes) -> str:
    """The key id of a raw Ed25519 public key."""
    return hashlib.sha256(raw_public).hexdigest()[:KEY_ID_HEX]


def _b64(data: bytes) -> str:
    return base64.b64encode(data).decode("ascii")


def _unb64(text: Any) -> bytes | None:
    if not isinstance(text, str):
        return None
    try:
        return base64.b64decode(text.encode("ascii"), validate=True)
    except (binascii.Error, ValueError, UnicodeEncodeError):
        return None


# -- trusted keys ---------------------------------------------------------------------------
def load_trusted_keys(path: str | os.PathLike[str]) -> dict[str, dict[str, str]]:
    """Read a trusted-keys file: key id -> {name, role, public_key, key_id, added_at}.

    Raises
    ------
    DataError
        Every problem with file, key path and line (also a key id that does not match its
        public key, and a key id listed twice).
    """
    from planner.files.base import validate_data
    from planner.files.trusted import TrustedKeysFile
    from planner.yamlio import ProblemCollector, load_user_yaml
    loaded = load_user_yaml(path, kind="trusted keys", max_bytes=500_000)
    collector = ProblemCollector(path, loaded)
    model = validate_data(TrustedKeysFile, loaded.data, collector.add)
    out: dict[str, dict[str, str]] = {}
    if model is not None:
        for i, key in enumerate(model.keys):
            raw = _unb64(key.public_key)
            if raw is None or len(raw) != 32:
                collector.add(("keys", i, "public_key"), "not a 32-byte key in base64")
            elif key_id_of(raw) != key.key_id:
                collector.add(("keys", i, "key_id"), f"does not match the public key "
                              f"(its id is {key_id_of(raw)})")
            elif key.key_id in out:
                collector.add(("keys", i, "key_id"), "listed twice")
            else:
                out[key.key_id] = key.model_dump()
    collector.raise_if_any(title="Invalid trusted-keys file")
    return out


def _add_trusted(path: str | os.PathLike[str], entry: dict[str, str]) -> None:
    from planner.atomicfile import user_path
    from planner.yamlio import atomic_write_text, dump_yaml
    target = user_path(path)
    keys: list[dict[str, str]] = []
    if target.exists():
        keys = [k for k in load_trusted_keys(target).values() if k["key_id"] != entry["key_id"]]
    keys.append(entry)
    header = ("# scanplan trusted keys: supervisors whose signatures this department accepts.\n"
              "# Add or remove a person only as the department's governance says.\n")
    atomic_write_text(target, header + dump_yaml({"schema_version": 1, "keys": keys}),
                      overwrite=True)


# -- private keys ---------------------------------------------------------------------------
def generate_key(name: str, key_path: str | os.PathLike[str],
                 trusted_path: str | os.PathLike[str], *, role: str = "supervisor",
                 passphrase: bytes | None = None, overwrite: bool = False) -> dict[str, str]:
    """Make an Ed25519 key pair; write the private key (PEM, mode 0600, encrypted when a
    passphrase is given) and add the public key to the trusted-keys file. Returns the
    trusted entry (key id, name, role, public key)."""
    from cryptography.hazmat.primitives import serialization
    from cryptography.hazmat.primitives.asymmetric.ed25519 import Ed25519PrivateKey

    from planner.atomicfile import atomic_write_text, user_path
    from planner.stamp import current_stamp
    if not name.strip():
        raise InputError("give the key holder's name (--name)")
    if user_path(key_path) == user_path(trusted_path):
        raise InputError("the private key and the trusted-keys file must be different files")
    if user_path(trusted_path).exists():
        load_trusted_keys(trusted_path)        # a broken file is reported before any write
    key = Ed25519PrivateKey.generate()
    encryption: Any = (serialization.BestAvailableEncryption(passphrase) if passphrase
                       else serialization.NoEncryption())
    pem = key.private_bytes(serialization.Encoding.PEM, serialization.PrivateFormat.PKCS8,
                            encryption).decode("ascii")
    raw = key.public_key().public_bytes(serialization.Encoding.Raw,
                                        serialization.PublicFormat.Raw)
    entry = {"key_id": key_id_of(raw), "name": name.strip(), "role": role.strip(),
             "public_key": _b64(raw), "added_at": current_stamp().generated_at}
    holder = (f"{HOLDER_PREFIX}name: {json.dumps(entry['name'], ensure_ascii=False)}\n"
              f"{HOLDER_PREFIX}role: {json.dumps(entry['role'], ensure_ascii=False)}\n")
    target = user_path(key_path)
    previous = target.read_bytes() if overwrite and target.is_file() else None
    atomic_write_text(target, holder + pem, overwrite=overwrite, mode=0o600)
    try:
        _add_trusted(trusted_path, entry)
    except BaseException:          # no key without its trusted entry: undo the key file
        if previous is None:
            target.unlink(missing_ok=True)
        else:
            atomic_write_text(target, previous.decode("utf-8"), overwrite=True, mode=0o600)
        raise
    return entry


HOLDER_PREFIX = "scanplan-key-holder-"
"""Lines before the PEM block of a key file naming its holder (the signer's name and role)."""


def key_holder(path: str | os.PathLike[str]) -> dict[str, str]:
    """The holder's ``name`` and ``role`` written above the PEM block of a key file."""
    out = {"name": "", "role": ""}
    head = _read_key(path).split(b"-----BEGIN", 1)[0].decode("utf-8", "replace")
    for line in head.splitlines():
        key, _, value = line.partition(":")
        field = key.strip().removeprefix(HOLDER_PREFIX)
        if key.strip().startswith(HOLDER_PREFIX) and field in out:
            try:
                parsed = json.loads(value.strip())
            except ValueError:
                continue
            out[field] = parsed if isinstance(parsed, str) else ""
    return out


def key_is_encrypted(path: str | os.PathLike[str]) -> bool:
    """True when the PEM key file is passphrase-protected (InputError when unreadable)."""
    return b"ENCRYPTED" in _read_key(path)


def _read_key(path: str | os.PathLike[str]) -> bytes:
    from planner.atomicfile import user_path
    target = user_path(path)
    try:
        data = target.read_bytes()
    except FileNotFoundError:
        raise InputError(f"{path}: no such key file") from None
    except IsADirectoryError:
        raise InputError(f"{path}: is a folder, not a key file") from None
    except OSError as exc:
        raise InputError(f"cannot read {path}: {(exc.strerror or type(exc).__name__).lower()}") \
            from None
    if len(data) > 20_000 or b"PRIVATE KEY" not in data:
        raise InputError(f"{path}: not a PEM private key file")
    return data


def load_private_key(path: str | os.PathLike[str], passphrase: PassphraseSource | None = None):
    """The Ed25519 private key of a PEM file; ``passphrase()`` is asked only when the file is
    encrypted. InputError (one line) for a missing, unreadable, wrong or non-Ed25519 key or
    a wrong passphrase."""
    from cryptography.hazmat.primitives import serialization
    from cryptography.hazmat.primitives.asymmetric.ed25519 import Ed25519PrivateKey
    data = _read_key(path)
    secret = None
    if b"ENCRYPTED" in data:
        if passphrase is None:
            raise InputError(f"{path}: the key is protected by a passphrase; give --passphrase-env")
        secret = passphrase()
    try:
        start = data.find(b"-----BEGIN")
        key = serialization.load_pem_private_key(data[max(start, 0):], password=secret)
    except (ValueError, TypeError):
        wrong = "wrong passphrase or damaged key" if secret else "damaged or unreadable key"
        raise InputError(f"{path}: {wrong}") from None
    if not isinstance(key, Ed25519PrivateKey):
        raise InputError(f"{path}: not an Ed25519 key")
    return key


# -- signing --------------------------------------------------------------------------------
SIGNED_FIELDS = ("key_id", "name", "role", "signed_at", "comment")
"""Signature-section fields covered by the signature itself."""


def canonical_bytes(data: dict[str, Any], meta: dict[str, Any]) -> bytes:
    """What is signed: the file's content without its ``signature`` section, and the
    signer's fields :data:`SIGNED_FIELDS`, as UTF-8 JSON with sorted keys and no spaces."""
    content = {k: v for k, v in data.items() if k != "signature"}
    payload = {"content": content, "signer": {k: meta.get(k, "") for k in SIGNED_FIELDS},
               "format": "scanplan-signature-1"}
    return json.dumps(payload, sort_keys=True, separators=(",", ":"), ensure_ascii=False,
                      allow_nan=False).encode("utf-8")


def sign_document(path: str | os.PathLike[str], key_path: str | os.PathLike[str], *,
                  comment: str = "", name: str | None = None, role: str | None = None,
                  passphrase: PassphraseSource | None = None) -> dict[str, str]:
    """Sign the plan file at ``path`` with the key at ``key_path`` and write the signature
    section into it atomically. The signer's name and role come from ``name``/``role`` or else
    from the key file (:func:`key_holder`). Returns the section."""
    from cryptography.hazmat.primitives import serialization

    from planner.plandoc import load_plan_document, write_document
    from planner.stamp import current_stamp
    document = load_plan_document(path)
    key = load_private_key(key_path, passphrase)
    holder = key_holder(key_path)
    name = name if name is not None else holder["name"]
    role = role if role is not None else holder["role"]
    raw = key.public_key().public_bytes(serialization.Encoding.Raw,
                                        serialization.PublicFormat.Raw)
    meta = {"key_id": key_id_of(raw), "name": (name or "").strip(), "role": (role or "").strip(),
            "signed_at": current_stamp().generated_at, "comment": comment.strip()}
    if not meta["name"]:
        raise InputError(f"{key_path}: the key file does not name its holder; make it with "
                         "`scanplan draft keygen`")
    signature = key.sign(canonical_bytes(document.data, meta))
    section = {**meta, "public_key": _b64(raw), "signature": _b64(signature)}
    data = {k: v for k, v in document.data.items() if k != "signature"}
    data["signature"] = section
    write_document(path, data)
    return section


@record(slots=False)
class Verification:
    """The result of checking a plan file's signature.

    ``status``: ``valid`` (a trusted signer, content unchanged), ``unchecked`` (content
    unchanged, no trusted-keys file to check the signer against), ``changed`` (content or
    signature changed after signing), ``unknown`` (signer not in the trusted keys) or
    ``missing`` (no signature).
    """

    status: str
    name: str = ""
    signed_at: str = ""
    comment: str = ""
    role: str = ""

    @property
    def ok(self) -> bool:
        """True when the content is as signed by a trusted signer."""
        return self.status == "valid"

    def line(self) -> str:
        """One line for people (the UI, the exports and ``draft verify``)."""
        if self.status == "valid":
            return f"signed by {self.name} at {self.signed_at}"
        if self.status == "unchecked":
            return (f"signed by {self.name} at {self.signed_at} (signer not checked: no "
                    "trusted-keys file)")
        if self.status == "changed":
            return "changed after signing: the signature does not match the content"
        if self.status == "unknown":
            return f"signed by an unknown key ({self.name or 'no name'}): not in the trusted keys"
        return "not signed"


def verify_document(data: dict[str, Any], trusted: dict[str, dict[str, str]] | None
                    ) -> Verification:
    """Check the ``signature`` section of a plan file's data (see :class:`Verification`)."""
    from cryptography.exceptions import InvalidSignature
    from cryptography.hazmat.primitives.asymmetric.ed25519 import Ed25519PublicKey
    section = data.get("signature")
    if not isinstance(section, dict):
        return Verification("missing")
    meta = {k: str(section.get(k, "") or "") for k in SIGNED_FIELDS}
    who = {"name": meta["name"], "signed_at": meta["signed_at"], "comment": meta["comment"],
           "role": meta["role"]}
    stored_key = _unb64(section.get("public_key"))
    if trusted is not None:
        entry = trusted.get(meta["key_id"])
        if entry is None:
            return Verification("unknown", **who)
        raw = _unb64(entry["public_key"])
        if stored_key is not None and stored_key != raw:
            return Verification("changed", **who)
    else:
        raw = stored_key
        if raw is None or key_id_of(raw) != meta["key_id"]:
            return Verification("changed", **who)
    signature = _unb64(section.get("signature"))
    if raw is None or len(raw) != 32 or signature is None:
        return Verification("changed", **who)
    try:
        Ed25519PublicKey.from_public_bytes(raw).verify(signature, canonical_bytes(data, meta))
    except (InvalidSignature, ValueError):
        return Verification("changed", **who)
    return Verification("valid" if trusted is not None else "unchecked", **who)


def passphrase_from_env(variable: str) -> bytes:
    """The passphrase in environment variable ``variable`` (InputError when unset/empty)."""
    value = os.environ.get(variable, "")
    if not value:
        raise InputError(f"environment variable {variable} is not set or empty")
    return value.encode("utf-8")


__all__ += ["key_is_encrypted", "passphrase_from_env", "key_holder"]

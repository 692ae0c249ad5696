"""``scanplan draft``: supervisor sign-off of plan files (``keygen``, ``sign``, ``verify``).

``draft keygen --name NAME -o KEYFILE --public TRUSTED.yaml [--role ROLE]
[--passphrase-env VAR | --ask-passphrase] [--force]`` makes an Ed25519 key pair: the
private key file (mode 0600, never printed) and the public key added to the trusted-keys
file. ``draft sign PLANFILE --key KEYFILE [--comment TEXT] [--passphrase-env VAR]`` signs
the plan file's content and writes the signature into it. ``draft verify PLANFILE
--trusted TRUSTED.yaml`` exits 0 (valid: prints the signer and time), 1 (changed after
signing, unknown signer, no signature: one line) or 2 (bad input: a missing or invalid
file). The ``cryptography`` package loads only when one of these runs (:mod:`planner.signing`).
"""

from __future__ import annotations

import argparse
import sys

from planner.cli.common import UsageError
from planner.errors import DataError, ExitCode

__all__ = ["register", "run_keygen", "run_sign", "run_verify"]


def register(subparsers: argparse._SubParsersAction) -> None:
    """Add the ``draft`` command (``keygen``, ``sign``, ``verify``) to ``subparsers``."""
    parser = subparsers.add_parser(
        "draft", help="sign supervised drafts: make a key, sign a plan file, verify it",
        description="Supervisor sign-off of plan files with Ed25519 signatures.")
    commands = parser.add_subparsers(dest="draft_command", metavar="COMMAND")
    commands.required = True

    keygen = commands.add_parser("keygen", help="make a signing key and add it to the trusted keys")
    keygen.add_argument("--name", required=True, help="the key holder's name, as signatures show it")
    keygen.add_argument("--role", default="supervisor", help="the holder's role (default supervisor)")
    keygen.add_argument("-o", "--output", required=True, metavar="KEYFILE",
                        help="private key file to write (mode 0600)")
    keygen.add_argument("--public", required=True, metavar="TRUSTED",
                        help="trusted-keys YAML to add the public key to (created if needed)")
    _passphrase_arguments(keygen, ask=True)
    keygen.add_argument("--force", action="store_true", help="replace an existing KEYFILE")
    keygen.set_defaults(func=run_keygen)

    sign = commands.add_parser("sign", help="sign a plan file (writes its signature section)")
    sign.add_argument("file", metavar="PLANFILE")
    sign.add_argument("--key", required=True, metavar="KEYFILE", help="private key file")
    sign.add_argument("--comment", default="", help="the supervisor's comment (signed too)")
    _passphrase_arguments(sign, ask=False)
    sign.set_defaults(func=run_sign)

    verify = commands.add_parser("verify", help="check a plan file's signature")
    verify.add_argument("file", metavar="PLANFILE")
    verify.add_argument("--trusted", required=True, metavar="TRUSTED",
                        help="trusted-keys YAML (from draft keygen --public)")
    verify.set_defaults(func=run_verify)


def _passphrase_arguments(p: argparse.ArgumentParser, *, ask: bool) -> None:
    p.add_argument("--passphrase-env", metavar="VAR",
                   help="read the key's passphrase from this environment variable")
    if ask:
        p.add_argument("--ask-passphrase", action="store_true",
                       help="protect the key with a passphrase typed at a prompt")


def _prompt(label: str, *, twice: bool = False) -> bytes:
    import getpass
    if not sys.stdin.isatty():
        raise UsageError("no terminal to ask for the passphrase; give --passphrase-env VAR")
    first = getpass.getpass(f"{label}: ")
    if twice and getpass.getpass(f"{label} again: ") != first:
        raise UsageError("the two passphrases differ")
    if not first:
        raise UsageError("an empty passphrase is not a passphrase")
    return first.encode("utf-8")


def run_keygen(args: argparse.Namespace) -> int:
    """Make the key pair; print the key id, name and role (never the private key)."""
    from planner.signing import generate_key, passphrase_from_env
    if args.passphrase_env and args.ask_passphrase:
        raise UsageError("give --passphrase-env or --ask-passphrase, not both")
    secret = None
    if args.passphrase_env:
        secret = passphrase_from_env(args.passphrase_env)
    elif args.ask_passphrase:
        secret = _prompt("Passphrase for the new key", twice=True)
    try:
        entry = generate_key(args.name, args.output, args.public, role=args.role,
                             passphrase=secret, overwrite=args.force)
    except DataError as exc:       # a broken trusted-keys file is bad input here
        _problems(exc)
        return int(ExitCode.USAGE)
    print(f"key {entry['key_id']} for {entry['name']} ({entry['role'] or 'no role'}): "
          f"private key {args.output}, public key added to {args.public}")
    return int(ExitCode.OK)


def run_sign(args: argparse.Namespace) -> int:
    """Sign the plan file; print who signed and when."""
    from planner.signing import passphrase_from_env, sign_document

    def secret() -> bytes:
        if args.passphrase_env:
            return passphrase_from_env(args.passphrase_env)
        return _prompt(f"Passphrase for {args.key}")
    try:
        section = sign_document(args.file, args.key, comment=args.comment, passphrase=secret)
    except DataError as exc:
        _problems(exc)
        return int(ExitCode.USAGE)
    print(f"{args.file}: signed by {section['name']} at {section['signed_at']} "
          f"(key {section['key_id']})")
    return int(ExitCode.OK)


def run_verify(args: argparse.Namespace) -> int:
    """Verify the signature: 0 valid, 1 changed/unknown/missing, 2 bad input."""
    from planner.plandoc import load_plan_document
    from planner.signing import load_trusted_keys, verify_document
    try:
        trusted = load_trusted_keys(args.trusted)
        document = load_plan_document(args.file)
    except DataError as exc:
        _problems(exc)
        return int(ExitCode.USAGE)
    result = verify_document(document.data, trusted)
    if result.ok:
        print(f"{args.file}: {result.line()}")
        return int(ExitCode.OK)
    print(f"scanplan: error: {args.file}: {result.line()}", file=sys.stderr)
    return int(ExitCode.INVALID_FILE)


def _problems(exc: DataError) -> None:
    """Every problem of a bad file (file:line:col: key.path: message), then one line; a
    file with one problem (missing, unreadable) gets the one line only."""
    for problem in exc.problems if len(exc.problems) > 1 else ():
        print(problem, file=sys.stderr)
    print(f"scanplan: error: {exc.message}", file=sys.stderr)



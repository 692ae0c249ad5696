"""``scanplan schema KIND``: the JSON Schema (draft 2020-12) of a file kind or of ``plan --json``.

``scanplan schema --list`` names the kinds: ``protocol``, ``probes`` (probe inventory),
``policy`` (local safety policy), ``plan`` (a saved plan file), ``plan-output`` (what
``scanplan plan --json`` prints) ``trusted-keys`` (supervisors' public keys) and ``qa`` (a probe QA log). The schemas are generated from the models the loaders use
(:data:`planner.files.SCHEMA_KINDS`), so a file that validates against its schema loads, and
the problems the loader reports are the ones an editor shows. An editor with a YAML language
server checks a file as it is typed when the file's first line is
``# yaml-language-server: $schema=./probes.schema.json`` (the schema written with ``-o``).
"""

from __future__ import annotations

import argparse

from planner.cli.common import UsageError, write_output

__all__ = ["KIND_HELP", "register", "run_schema"]

KIND_HELP: dict[str, str] = {
    "protocol": "a department protocol",
    "probes": "a probe inventory",
    "policy": "a local safety policy",
    "plan": "a saved plan file (inputs, computed headline, decisions, signature)",
    "plan-output": "the JSON that `scanplan plan --json` prints",
    "trusted-keys": "the supervisors' public keys (`scanplan draft keygen --public`)",
    "qa": "a probe QA log (phantom depth-of-penetration measurements)",
}
"""What each schema kind describes, for ``--list``."""


def register(sub: argparse._SubParsersAction) -> None:
    """Add the ``schema`` command to ``sub``."""
    p = sub.add_parser("schema", help="print the JSON Schema of a file kind or of plan --json")
    p.add_argument("kind", nargs="?", metavar="KIND", help="one of: " + ", ".join(KIND_HELP))
    p.add_argument("--list", action="store_true", help="name the schema kinds")
    p.add_argument("-o", "--output", metavar="FILE", help="write to a file (atomic) instead of stdout")
    p.add_argument("--force", action="store_true", help="overwrite an existing output file")
    p.set_defaults(func=run_schema)


def run_schema(args: argparse.Namespace) -> int:
    """Print (or write) one schema, or the list of kinds; return 0."""
    import json

    from planner.files import SCHEMA_KINDS, schema_for

    if args.list:
        if args.kind is not None:
            raise UsageError("give either KIND or --list, not both")
        for kind in SCHEMA_KINDS:
            print(f"{kind:<12} {KIND_HELP.get(kind, '')}")
        return 0
    if args.kind is None:
        raise UsageError("the following arguments are required: KIND (or --list)")
    if args.kind not in SCHEMA_KINDS:
        raise UsageError(f"unknown schema kind {args.kind!r}; valid kinds: {', '.join(SCHEMA_KINDS)}")
    text = json.dumps(schema_for(args.kind), sort_keys=True, indent=2, allow_nan=False) + "\n"
    if args.output:
        write_output(args.output, text, force=args.force)
        return 0
    print(text, end="")
    return 0

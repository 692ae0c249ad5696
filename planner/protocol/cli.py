"""Command-line subcommands for protocols: ``protocol check`` and ``protocol schema``.

``scanplan protocol check FILE...`` prints every problem of every file on stdout,
one per line (``file:line:col: key.path: message``), then one summary line; it
exits 0 when every file is valid and 1 (:attr:`ExitCode.INVALID_FILE`) otherwise.
A missing or unreadable file is a problem of that file, not a crash.

``scanplan protocol schema [-o OUT] [--force]`` writes the JSON Schema of the
protocol format to stdout or, atomically, to ``OUT``.
"""

from __future__ import annotations

import argparse
import json
import sys
from typing import TextIO

from planner.errors import ExitCode
from planner.protocol.jsonschema import protocol_json_schema
from planner.protocol.loader import check_files
from planner.yamlio import atomic_write_text

__all__ = ["register", "run_check", "run_schema"]


def register(subparsers: argparse._SubParsersAction) -> argparse._SubParsersAction:
    """Add the ``protocol`` command (with ``check`` and ``schema``) to ``subparsers``.

    Each leaf parser sets ``func=callable(args) -> int``. Returns the sub-command
    action of ``protocol``, so that further commands (e.g. ``sheet``) can be added
    with its ``add_parser``.
    """
    parser = subparsers.add_parser(
        "protocol", help="check department protocol files, export their JSON Schema",
        description="Department protocol files: validate them or export their JSON Schema.")
    commands = parser.add_subparsers(dest="protocol_command", metavar="COMMAND")
    commands.required = True

    check = commands.add_parser(
        "check", help="validate protocol files and list every problem",
        description="Validate protocol files. Prints every problem as "
                    "file:line:col: key.path: message, then a summary. Exit status 0 when all "
                    "files are valid, 1 when any is not.")
    check.add_argument("files", nargs="+", metavar="FILE", help="protocol YAML files")
    check.add_argument("--json", action="store_true",
                       help="print {file: [problems]} as JSON instead of text")
    check.set_defaults(func=run_check)

    schema = commands.add_parser(
        "schema", help="write the JSON Schema of the protocol format",
        description="Write the JSON Schema (draft 2020-12) of protocol files, for editors.")
    schema.add_argument("-o", "--output", metavar="OUT",
                        help="write to this file (atomically) instead of stdout")
    schema.add_argument("--force", action="store_true", help="overwrite OUT if it exists")
    schema.set_defaults(func=run_schema)
    return commands


def run_check(args: argparse.Namespace, out: TextIO | None = None) -> int:
    """Run ``protocol check``; return the exit code."""
    out = out if out is not None else sys.stdout
    results = check_files(list(args.files))
    invalid = {path: problems for path, problems in results.items() if problems}
    if getattr(args, "json", False):
        out.write(json.dumps(results, indent=2, sort_keys=True) + "\n")
    else:
        for problems in invalid.values():
            for problem in problems:
                out.write(problem + "\n")
        count = sum(len(p) for p in invalid.values())
        files = len(results)
        noun = "file" if files == 1 else "files"
        if invalid:
            out.write(f"checked {files} {noun}: {files - len(invalid)} valid, {len(invalid)} "
                      f"invalid, {count} problem{'s' if count != 1 else ''}\n")
        else:
            out.write(f"checked {files} {noun}: all valid\n")
    return int(ExitCode.INVALID_FILE if invalid else ExitCode.OK)


def run_schema(args: argparse.Namespace, out: TextIO | None = None) -> int:
    """Run ``protocol schema``; return the exit code (``InputError`` if OUT exists)."""
    text = json.dumps(protocol_json_schema(), indent=2) + "\n"
    if getattr(args, "output", None):
        atomic_write_text(args.output, text, overwrite=bool(getattr(args, "force", False)))
    else:
        (out if out is not None else sys.stdout).write(text)
    return int(ExitCode.OK)

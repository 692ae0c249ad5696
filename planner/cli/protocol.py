"""``scanplan protocol``: department protocols: ``protocol check``, ``schema`` and ``sheet``.

``scanplan protocol check FILE... [--kind KIND]`` checks every department file against
its own kind (protocol, probe inventory, local policy, plan file, trusted keys, QA log; recognised
from its keys by :data:`planner.protocol.filekinds.FILE_KINDS`, or forced with ``--kind``),
prints every problem on stdout, one per line (``file:line:col: key.path: message``), then
one summary line; it exits 0 when every file is valid and 1
(:attr:`ExitCode.INVALID_FILE`) otherwise. A missing or unreadable file is a problem of
that file, not a crash.

``scanplan protocol schema [-o OUT] [--force]`` writes the JSON Schema of the
protocol format to stdout or, atomically, to ``OUT``.

``scanplan protocol sheet FILE [--habitus CLASSES] [--probes FILE] [--local FILE]
[--format md|html|json] [-o OUT] [--force]`` writes the protocol sheet (every view for
every WHO habitus class, scan time against the TI limits, safety, the statement); see
:mod:`planner.protocol.sheet`. The protocol schema, loader and sheet load only when their
command runs. An unknown habitus class is a usage error (exit 2); an
invalid or missing protocol, inventory or policy file exits 1 listing every problem.
"""

from __future__ import annotations

import argparse
import json
import sys
from typing import TextIO

from planner.body.habitus import BMI_CLASSES
from planner.cli.common import write_output
from planner.errors import ExitCode

__all__ = ["SHEET_FORMATS", "register", "run_check", "run_schema", "run_sheet"]

SHEET_FORMATS: tuple[str, ...] = ("md", "html", "json")
"""Formats of ``protocol sheet`` (the same as :data:`planner.protocol.sheet.FORMATS`)."""


CHECK_KINDS: tuple[str, ...] = ("protocol", "plan", "probes", "policy", "trusted-keys", "qa")
"""The kinds ``protocol check --kind`` takes, for its help without importing the table
(:data:`planner.protocol.filekinds.KIND_NAMES`; a test keeps the two equal)."""


def register(subparsers: argparse._SubParsersAction) -> argparse._SubParsersAction:
    """Add the ``protocol`` command (``check``, ``schema``, ``sheet``) to ``subparsers``.

    Each leaf parser sets ``func=callable(args) -> int``. Returns the sub-command
    action of ``protocol``, so that further commands can be added with its
    ``add_parser``. The sheet module (and the plan engine) load only when ``sheet`` runs.
    """
    parser = subparsers.add_parser(
        "protocol", help="check protocol files, export their JSON Schema, write protocol sheets",
        description="Department protocol files: validate them, export their JSON Schema or "
                    "write a protocol sheet.")
    commands = parser.add_subparsers(dest="protocol_command", metavar="COMMAND")
    commands.required = True

    check = commands.add_parser(
        "check", help="validate department files (protocols, probe inventories, local "
                      "policies, plan files, trusted keys) and list every problem",
        description="Validate department files, each against its own kind (recognised from "
                    "its keys, or --kind). Prints every problem as "
                    "file:line:col: key.path: message, then a summary. Exit status 0 when all "
                    "files are valid, 1 when any is not.")
    check.add_argument("files", nargs="+", metavar="FILE", help="department YAML files")
    check.add_argument("--kind", metavar="KIND",
                       help="check every file as this kind instead of recognising it: "
                            + ", ".join(CHECK_KINDS))
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

    sheet = commands.add_parser(
        "sheet", help="write the protocol sheet: every view for every habitus class",
        description="Plan every view of a protocol for each WHO BMI class and write the sheet: "
                    "probe, band, harmonic imaging, window, tilt and main cautions per view "
                    "and class; planned time against the TI limits; safety; the statement.")
    sheet.add_argument("file", metavar="FILE", help="protocol YAML file")
    sheet.add_argument("--habitus", metavar="CLASSES",
                       help="comma list of WHO classes (default all): "
                            + ",".join(c[0] for c in BMI_CLASSES))
    sheet.add_argument("--probes", metavar="FILE",
                       help="probe inventory instead of the one the protocol names")
    sheet.add_argument("--local", metavar="FILE",
                       help="local safety policy (default: the protocol's own limits)")
    sheet.add_argument("--format", choices=SHEET_FORMATS, default="md",
                       help="md (default), html (printable, with depth plots) or json")
    sheet.add_argument("-o", "--output", metavar="OUT",
                       help="write to this file (atomically) instead of stdout")
    sheet.add_argument("--force", action="store_true", help="overwrite OUT if it exists")
    sheet.set_defaults(func=run_sheet)
    return commands


def run_check(args: argparse.Namespace, out: TextIO | None = None) -> int:
    """Run ``protocol check``; return the exit code."""
    from planner.protocol.filekinds import check_department_files

    out = out if out is not None else sys.stdout
    checked = check_department_files(list(args.files), kind=getattr(args, "kind", None))
    results = {path: problems for path, (_, problems) in checked.items()}
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
        kinds = _kind_counts([kind for kind, _ in checked.values()])
        if invalid:
            out.write(f"checked {files} {noun}{kinds}: {files - len(invalid)} valid, "
                      f"{len(invalid)} invalid, {count} problem{'s' if count != 1 else ''}\n")
        else:
            out.write(f"checked {files} {noun}{kinds}: all valid\n")
    return int(ExitCode.INVALID_FILE if invalid else ExitCode.OK)


def _kind_counts(kinds: list[str]) -> str:
    """`` (5 protocol, 2 probes)`` when the files are of more than one kind, else ``""``."""
    if len(set(kinds)) <= 1:
        return ""
    counts = {k: kinds.count(k) for k in dict.fromkeys(kinds)}
    return " (" + ", ".join(f"{n} {k}" for k, n in counts.items()) + ")"


def run_schema(args: argparse.Namespace, out: TextIO | None = None) -> int:
    """Run ``protocol schema``; return the exit code (``InputError`` if OUT exists)."""
    from planner.protocol.jsonschema import protocol_json_schema

    text = json.dumps(protocol_json_schema(), indent=2) + "\n"
    if getattr(args, "output", None):
        write_output(args.output, text, force=bool(getattr(args, "force", False)))
    else:
        (out if out is not None else sys.stdout).write(text)
    return int(ExitCode.OK)


def run_sheet(args: argparse.Namespace, out: TextIO | None = None) -> int:
    """Run ``protocol sheet``; return the exit code.

    Raises ``InputError`` (exit 2) for an unknown habitus class or an existing OUT without
    ``--force``, ``DataError`` (exit 1) for an invalid or missing file.
    """
    from planner.protocol.sheet import parse_habitus, render_sheet, sheet_from_file

    classes = parse_habitus(getattr(args, "habitus", None))
    sheet = sheet_from_file(args.file, habitus=classes, probes_path=getattr(args, "probes", None),
                            local_path=getattr(args, "local", None))
    text = render_sheet(sheet, getattr(args, "format", None) or "md")
    if getattr(args, "output", None):
        write_output(args.output, text, force=bool(getattr(args, "force", False)))
    else:
        (out if out is not None else sys.stdout).write(text)
    return int(ExitCode.OK)

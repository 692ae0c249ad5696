"""The ``scanplan`` command line.

Contract: stdout is data (text for people, or JSON with ``--json``, keys sorted);
diagnostics go to stderr as one line ``scanplan: error: ...``. Exit codes come from
:class:`planner.errors.ExitCode`: 0 ok, 1 a checked file is invalid, 2 invalid
command-line input. No traceback reaches the user.

Without a subcommand, ``scanplan`` opens the terminal UI.

Each subcommand lives in its own module of this package (:data:`COMMANDS`) with a
``register(subparsers)`` function. The parser is built lazily: :func:`main` first reads the
command line against light stand-ins that know only the subcommands' names, then imports and
registers the one subcommand that runs, so that ``scanplan --version`` and the terminal UI
never load numpy, the engine or the protocol schema, and ``scanplan calc`` never loads the
plan engine. Subcommand modules import :mod:`planner.cli.common`, never this module.
"""

from __future__ import annotations

import sys
from collections.abc import Iterable, Sequence
from typing import TYPE_CHECKING

from planner.errors import DataError, ExitCode, PlannerError

if TYPE_CHECKING:
    import argparse

__all__ = ["COMMANDS", "build_parser", "main", "run_ui"]

COMMANDS: dict[str, tuple[str, str]] = {
    "plan": ("planner.cli.plan", "plan one exam for one patient"),
    "sweep": ("planner.cli.sweep", "one plan headline per BMI (where a probe or window stops working)"),
    "targets": ("planner.cli.targets", "list the target library"),
    "tissues": ("planner.cli.tissues",
                "list the tissue table (values with units, sources and status; aliases)"),
    "calc": ("planner.cli.calc", "quick physics calculations"),
    "protocol": ("planner.cli.protocol",
                 "check protocol files, export their JSON Schema, write protocol sheets"),
    "draft": ("planner.cli.draft", "sign supervised drafts: make a key, sign a plan file, verify it"),
    "qa": ("planner.cli.qa", "each probe's signal budget and trend from a phantom QA log"),
    "schema": ("planner.cli.schema", "print the JSON Schema of a file kind or of plan --json"),
    "ui": ("planner.cli.ui", "open the terminal UI (the default without a subcommand)"),
}
"""Subcommand name -> (module with ``register(subparsers)``, one-line help), in help order."""


def build_parser(commands: Iterable[str] | None = None) -> argparse.ArgumentParser:
    """The ``scanplan`` parser.

    Parameters
    ----------
    commands : iterable of str, optional
        The subcommands to build in full (their modules are imported); the others are
        stand-ins that only carry their name and help. None builds every subcommand.
    """
    import importlib

    from planner.cli.common import Parser
    from planner.stamp import tool_version
    wanted = set(COMMANDS if commands is None else commands)
    parser = Parser(prog="scanplan", description="Ultrasound scan-planning assistant "
                    "(decision support; defers to local protocols and licensed practice).")
    parser.add_argument("--version", action="version", version=f"scanplan {tool_version()}")
    sub = parser.add_subparsers(dest="command", parser_class=Parser)
    for name, (module, help_text) in COMMANDS.items():
        if name in wanted:
            importlib.import_module(module).register(sub)
        else:
            sub.add_parser(name, help=help_text, add_help=False)
    return parser


def _command(argv: list[str]) -> str | None:
    """The subcommand argparse will run for ``argv`` (None: none given), read against the
    stand-in parser so that no subcommand module loads (``--version`` and ``-h`` exit here).

    Without a subcommand, anything else on the line is a usage error, as argparse says it.

    A line that starts with a subcommand's name is that subcommand (the top-level parser has
    no option that takes a value, and argparse matches subcommand names exactly), so the
    stand-in parser is built only for lines that start with an option or an unknown word."""
    if argv and argv[0] in COMMANDS:
        return argv[0]
    parser = build_parser(())
    namespace, extras = parser.parse_known_args(argv)
    if namespace.command is None and extras:
        parser.parse_args(argv)           # raises UsageError: unrecognized arguments
    return namespace.command


def run_ui(args: argparse.Namespace | None = None) -> int:
    """Start the terminal UI (imports Textual only now); return its exit code.

    The helper that plans the opening inputs on another core starts first, so that it works
    while Textual loads (:mod:`planner.tui.first_plan`)."""
    from planner.tui.first_plan import start
    first_plan = start()
    from planner.tui.app import run_app
    return run_app(first_plan)


def main(argv: Sequence[str] | None = None) -> int:
    """Entry point of ``scanplan`` and ``python -m planner``; returns the exit code."""
    argv = list(sys.argv[1:] if argv is None else argv)
    try:
        if not argv:        # the terminal UI: no parser, nothing more to import before it
            return run_ui()
        command = _command(argv)
        if command is None:
            return run_ui()
        args = build_parser((command,)).parse_args(argv)
        if getattr(args, "func", None) is None:
            return run_ui(args)
        return int(args.func(args))
    except DataError as exc:
        for problem in exc.problems:
            print(problem, file=sys.stderr)
        print(f"scanplan: error: {exc.message}", file=sys.stderr)
        return ExitCode.INVALID_FILE
    except PlannerError as exc:
        print(f"scanplan: error: {exc.message}", file=sys.stderr)
        return ExitCode.USAGE
    except ValueError as exc:
        print(f"scanplan: error: {exc}", file=sys.stderr)
        return ExitCode.USAGE
    except BrokenPipeError:  # pragma: no cover - e.g. piped into head
        return ExitCode.OK
    except OSError as exc:   # a file the system refused, named in one line
        from planner.cli.common import os_error_message
        where = exc.filename if exc.filename is not None else "a file"
        print(f"scanplan: error: {os_error_message(exc, where, 'use')}", file=sys.stderr)
        return ExitCode.USAGE
    except KeyboardInterrupt:  # pragma: no cover
        return 130
    except Exception as exc:  # pragma: no cover - a bug; still no traceback for the user
        print(f"scanplan: internal error: {type(exc).__name__}: {exc} (please report it)",
              file=sys.stderr)
        return ExitCode.INVALID_FILE

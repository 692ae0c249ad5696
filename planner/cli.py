"""The ``scanplan`` command line.

Contract: stdout is data (text for people, or JSON with ``--json``, keys sorted);
diagnostics go to stderr as one line ``scanplan: error: ...``. Exit codes come from
:class:`planner.errors.ExitCode`: 0 ok, 1 a checked file is invalid, 2 invalid
command-line input. No traceback reaches the user.

Without a subcommand, ``scanplan`` opens the terminal UI.
"""

from __future__ import annotations

import argparse
import json
import math
import sys
from typing import Any, Sequence

from planner import __version__
from planner.errors import DataError, ExitCode, PlannerError


class UsageError(Exception):
    """Raised instead of argparse's exit, so that every usage error is one line."""


class _Parser(argparse.ArgumentParser):
    def error(self, message: str):  # noqa: D401 - argparse hook
        raise UsageError(message)


def finite_float(text: str) -> float:
    """argparse type: a finite number (rejects nan and inf)."""
    try:
        value = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"not a number: {text!r}") from None
    if not math.isfinite(value):
        raise argparse.ArgumentTypeError(f"must be a finite number, got {text!r}")
    return value


def emit_json(data: Any) -> None:
    """Write JSON to stdout (sorted keys, no NaN)."""
    sys.stdout.write(json.dumps(data, sort_keys=True, indent=2, allow_nan=False) + "\n")


def build_parser() -> argparse.ArgumentParser:
    parser = _Parser(prog="scanplan", description="Ultrasound scan-planning assistant "
                     "(decision support; defers to local protocols and licensed practice).")
    parser.add_argument("--version", action="version", version=f"scanplan {__version__}")
    sub = parser.add_subparsers(dest="command", parser_class=_Parser)
    from planner import cli_calc, cli_plan
    cli_plan.register(sub)
    cli_calc.register(sub)
    try:
        from planner.protocol import cli as protocol_cli
    except ImportError:  # pragma: no cover - during development only
        protocol_cli = None
    if protocol_cli is not None:
        protocol_cli.register(sub)
    ui = sub.add_parser("ui", help="open the terminal UI (the default without a subcommand)")
    ui.set_defaults(func=run_ui)
    return parser


def run_ui(args=None) -> int:
    """Start the terminal UI (imports Textual only now)."""
    from planner.tui.app import run_app
    return run_app()


def main(argv: Sequence[str] | None = None) -> int:
    """Entry point of ``scanplan`` and ``python -m planner``; returns the exit code."""
    argv = list(sys.argv[1:] if argv is None else argv)
    try:
        parser = build_parser()
        args = parser.parse_args(argv)
        if not getattr(args, "func", None):
            return run_ui()
        return int(args.func(args))
    except UsageError as exc:
        print(f"scanplan: error: {exc}", file=sys.stderr)
        return ExitCode.USAGE
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
    except KeyboardInterrupt:  # pragma: no cover
        return 130
    except Exception as exc:  # pragma: no cover - a bug; still no traceback for the user
        print(f"scanplan: internal error: {type(exc).__name__}: {exc} (please report it)",
              file=sys.stderr)
        return ExitCode.INVALID_FILE

"""What every ``scanplan`` subcommand shares: the parser class, argument types, output.

Nothing here imports numpy, the engine or the protocol schema, so that any subcommand
module can import it at no start-up cost. Subcommand modules import this module, never
:mod:`planner.cli` itself (which loads them), so there is no import cycle.
"""

from __future__ import annotations

import argparse
import json
import os
import sys
from typing import Any

from planner.errors import InputError
from planner.numbers import NumberError, parse_number

__all__ = ["Parser", "UsageError", "emit_json", "finite_float", "write_output"]


class UsageError(InputError):
    """Raised instead of argparse's exit, so that every usage error is one line (exit 2)."""

    def __init__(self, message: str) -> None:
        super().__init__(message, title="Invalid command line")


class Parser(argparse.ArgumentParser):
    """An argparse parser whose errors are :class:`UsageError` and that refuses empty values.

    Python 3.11's argparse stores ``[]`` for ``--opt=--`` (an option whose value is the
    ``--`` separator); every parser here checks its own options after parsing, so that such
    a value is a usage error instead of a silent "not given" or a crash later.
    """

    def error(self, message: str):  # noqa: D401 - argparse hook
        raise UsageError(message)

    def parse_known_args(self, args=None, namespace=None):
        namespace, extras = super().parse_known_args(args, namespace)
        for action in self._actions:
            if not action.option_strings or action.nargs is not None:
                continue
            value = getattr(namespace, action.dest, None)
            values = value if isinstance(action, argparse._AppendAction) and \
                isinstance(value, list) else [value]
            if any(isinstance(v, list) for v in values):
                raise UsageError(f"argument {'/'.join(action.option_strings)}: "
                                 "expected one argument")
        return namespace, extras


def finite_float(text: str) -> float:
    """argparse type: a finite number as :func:`planner.numbers.parse_number` reads it."""
    try:
        return parse_number(text)
    except NumberError as exc:
        raise argparse.ArgumentTypeError(exc.message) from None


def emit_json(data: Any) -> None:
    """Write JSON to stdout (sorted keys, no NaN)."""
    sys.stdout.write(json.dumps(data, sort_keys=True, indent=2, allow_nan=False) + "\n")


def shown_path(path: str | os.PathLike[str], limit: int = 60) -> str:
    """A file name for a one-line message (long names cut in the middle)."""
    text = os.fspath(path)
    return text if len(text) <= limit else f"{text[:limit // 2 - 2]}...{text[-(limit // 2 - 1):]}"


def os_error_message(exc: OSError, path: str | os.PathLike[str], verb: str = "write") -> str:
    """One line for a failed file operation: the file and the system's reason."""
    reason = exc.strerror or type(exc).__name__
    return f"cannot {verb} {shown_path(path)}: {reason.lower()}"


def write_output(path: str | os.PathLike[str], text: str, *, force: bool) -> None:
    """Write ``text`` to ``path`` atomically; an existing file only with ``force``.

    Raises
    ------
    InputError
        When the file exists (without ``force``) or the system refuses the write (a name
        too long, a missing folder, no permission): one line naming the file.
    """
    from planner.yamlio import atomic_write_text
    try:
        atomic_write_text(path, text, overwrite=force)
    except OSError as exc:
        raise InputError(os_error_message(exc, path)) from None

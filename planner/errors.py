"""Errors and exit codes shared by every part of scanplan.

Library code raises :class:`PlannerError` subclasses (or ``ValueError`` from the pure
physics layer); the command line turns them into one line on stderr and an
:class:`ExitCode`; the terminal UI shows their ``title`` and message inline.
"""

from __future__ import annotations

from enum import IntEnum


class ExitCode(IntEnum):
    """Process exit codes of the ``scanplan`` command."""

    OK = 0
    """The command did what was asked."""
    INVALID_FILE = 1
    """A checked file (protocol, plan, probe inventory, local policy) has problems."""
    USAGE = 2
    """The command line itself is invalid (unknown option, bad value, unknown id)."""


class PlannerError(Exception):
    """Base class of every error scanplan reports to a user.

    Parameters
    ----------
    message : str
        One line saying what is wrong and, where possible, what is valid.
    title : str
        A short heading for the terminal UI.
    """

    def __init__(self, message: str, title: str = "Error") -> None:
        super().__init__(message)
        self.message = message
        self.title = title

    def __str__(self) -> str:  # pragma: no cover - trivial
        return self.message


class InputError(PlannerError):
    """An input value is impossible or unknown (bad BMI, unknown target, ...)."""

    def __init__(self, message: str, title: str = "Invalid input") -> None:
        super().__init__(message, title)


class DataError(PlannerError):
    """A data file (shipped or user-supplied) failed validation.

    ``problems`` holds every problem found, each already formatted as
    ``file:line:column: key.path: message``.
    """

    def __init__(self, message: str, problems: list[str] | None = None,
                 title: str = "Invalid file") -> None:
        super().__init__(message, title)
        self.problems = list(problems or [message])


class PathError(InputError):
    """A path the user gave cannot be used: unknown ``~user``, a name too long, a missing
    folder, no permission, an existing file not to be replaced, a refused write."""

    def __init__(self, message: str, title: str = "Cannot use this path") -> None:
        super().__init__(message, title)

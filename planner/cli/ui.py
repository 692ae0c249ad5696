"""``scanplan ui`` (and ``scanplan`` alone): open the terminal UI.

The command carries no function of its own (``func=None``): :func:`planner.cli.main` starts
the UI through :func:`planner.cli.run_ui`, which imports Textual only then.
"""

from __future__ import annotations

import argparse

__all__ = ["register"]


def register(sub: argparse._SubParsersAction) -> None:
    """Add the ``ui`` command to ``sub``."""
    ui = sub.add_parser("ui", help="open the terminal UI (the default without a subcommand)")
    ui.set_defaults(func=None)

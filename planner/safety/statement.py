"""The short statement every scanplan output carries."""

from __future__ import annotations

DISCLAIMER: str = (
    "Decision support only: scanplan does not replace local protocols, licensed clinical "
    "judgement or the TI and MI the scanner displays; those take precedence."
)
"""One-sentence statement shown with every plan, protocol sheet and safety list."""

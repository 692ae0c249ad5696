"""Target and window names as they read inside a sentence."""

from __future__ import annotations

__all__ = ["in_sentence", "sided_name"]

_PROPER_NAME_WORDS = frozenset({"Achilles", "Crass"})
"""First words of target names that are proper names and keep their capital in a sentence."""


def in_sentence(name: str) -> str:
    """``name`` as it reads inside a sentence: first letter lower case unless the first word
    is a proper name ("Kidney" -> "kidney", "Achilles tendon" unchanged)."""
    if name.split(" ", 1)[0] in _PROPER_NAME_WORDS:
        return name
    return name[:1].lower() + name[1:]


def sided_name(name: str, side: str | None) -> str:
    """The name with the side of a paired structure ("Left kidney"); the name alone without one."""
    return f"{side.capitalize()} {in_sentence(name)}" if side else name

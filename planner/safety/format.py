"""Small text helpers shared by the safety rules (no numbers of their own)."""

from __future__ import annotations

from planner.provenance import Sourced


def minutes_text(minutes: float | None) -> str:
    """Return a duration for messages: ``"30 min"``, ``"15 s"``, ``"no limit"``. [min]"""
    if minutes is None:
        return "no limit"
    if minutes < 1.0:
        return f"{round(minutes * 60):d} s"
    if abs(minutes - round(minutes)) < 1e-9:
        return f"{round(minutes):d} min"
    return f"{minutes:.1f} min"


def number_text(value: float) -> str:
    """Return an index value with at least one decimal: ``1 -> "1.0"``, ``0.75 -> "0.75"``."""
    text = f"{value:g}"
    return text if "." in text or "e" in text else f"{text}.0"


def status_text(status: str) -> str:
    """Return a parenthesised status remark for values that are not verified."""
    return {"verified": "", "from_memory": " (from memory)",
            "common_practice": " (common practice)", "derived": " (derived)"}.get(status, "")


def sourced_text(item: Sourced) -> str:
    """Return an index value with its status remark, e.g. ``"1.0 (from memory)"``."""
    return f"{number_text(item.value)}{status_text(item.status)}"


def short_title(title: str) -> str:
    """Return the publication part of a table title (``"BMUS 2009, ..." -> "BMUS 2009"``)."""
    return title.split(",")[0].strip()

"""The headline of a plan as a saved plan file stores it, and what a recomputation changed.

:func:`headline_data` is the ``computed`` section of a plan file (band, probe, window,
harmonic advice, the findings' codes, and which version made it when); on reopening,
:func:`headline_changes` lists what recomputing changed, item by item, so that a plan saved
by another version, or with other data, does not change silently. No engine import here:
the functions read a :class:`planner.engine.Plan` they are given.
"""

from __future__ import annotations

from typing import Any

__all__ = ["FILE_HEADER", "changes_table", "headline_changes", "headline_data"]

FILE_HEADER = ("# scanplan plan file: the plan is recomputed from its inputs on load; 'computed'\n"
               "# is the headline as saved. Decision support only; it defers to local protocols\n"
               "# and licensed practice.\n")

_ITEMS: tuple[tuple[str, str], ...] = (
    ("band", "Band"), ("probe", "Probe"), ("window", "Window"), ("harmonic", "Harmonic"),
    ("findings", "Findings"), ("generated_by", "Made by"))


def headline_data(plan, stamp=None) -> dict[str, Any]:
    """The ``computed`` section for ``plan`` (a :class:`planner.engine.Plan`); ``stamp`` is a
    :class:`planner.stamp.Stamp` (None: made now). Band values in MHz, rounded to 0.01."""
    from planner.stamp import current_stamp
    stamp = stamp if stamp is not None else current_stamp()
    band = plan.frequency_mhz

    def mhz(value: float | None) -> float | None:
        return None if value is None else round(float(value), 2)

    return {
        **stamp.as_data(),
        "band": {"low": mhz(band.low), "high": mhz(band.high),
                 "start": mhz(band.start if band.start is not None else band.high) if band.feasible else None},
        "probe": plan.probe.id if plan.probe is not None else None,
        "window": plan.window.id,
        "harmonic": bool(plan.harmonic.advised),
        "findings": [f.code for f in plan.findings],
    }


def _shown(key: str, value: Any) -> str:
    if value is None:
        return "none"
    if key == "band":
        if value.get("low") is None or value.get("high") is None:
            return "no usable band"
        start = value.get("start")
        return (f"{value['low']:g}-{value['high']:g} MHz"
                + (f", start {start:g}" if start is not None else ", detail not reached"))
    if key == "harmonic":
        return "advised" if value else "not advised"
    if key == "findings":
        return ", ".join(value) or "none"
    return str(value)


def headline_changes(stored: dict[str, Any] | None, fresh: dict[str, Any]
                     ) -> list[tuple[str, str, str]]:
    """``(item, as saved, as recomputed)`` for every headline item that differs.

    Findings are compared as sets and shown as what was removed (``-code``) and added
    (``+code``). The version line is listed only when something else changed, to say which
    version made the stored plan. No stored headline (an older file): no changes.
    """
    if not stored:
        return []
    out: list[tuple[str, str, str]] = []
    for key, label in _ITEMS:
        old, new = stored.get(key), fresh.get(key)
        if key == "generated_by":
            if out and old != new:
                out.append((label, str(old), str(new)))
            continue
        if key == "findings":
            gone = [c for c in (old or []) if c not in (new or [])]
            added = [c for c in (new or []) if c not in (old or [])]
            if gone or added:
                out.append((label, ", ".join(f"-{c}" for c in gone) or "-",
                            ", ".join(f"+{c}" for c in added) or "-"))
            continue
        if old != new:
            out.append((label, _shown(key, old), _shown(key, new)))
    return out


def changes_table(changes: list[tuple[str, str, str]], width: int = 30) -> list[str]:
    """The changes as a short plain-text table (item, as saved, now)."""
    def cut(text: str) -> str:
        return text if len(text) <= width else text[:width - 3] + "..."
    rows = [("item", "as saved", "now")] + [(a, cut(b), cut(c)) for a, b, c in changes]
    w0 = max(len(r[0]) for r in rows)
    w1 = max(len(r[1]) for r in rows)
    return [f"  {a:<{w0}}  {b:<{w1}}  {c}" for a, b, c in rows]

"""Provenance of every number: a source key and a status.

Every value in scanplan's data tables and every constant in code carries a
``source`` (a key of :data:`planner.references.REFERENCES`) and a ``status``:

``verified``
    read in the named publication.
``from_memory``
    recalled from the named textbook or standard, not re-read; shown as such.
``common_practice``
    widely taught or done, no single source (the source key then names the
    practice note it comes from).
``derived``
    computed from stated inputs by a stated formula.
"""

from __future__ import annotations

from typing import Any

from planner.records import record

STATUSES: tuple[str, ...] = ("verified", "from_memory", "common_practice", "derived")


@record
class Sourced:
    """A number (or short text) with its provenance.

    Parameters
    ----------
    value : Any
        The value, in the unit named by the field that holds it.
    source : str
        A key of :data:`planner.references.REFERENCES`.
    status : str
        One of :data:`STATUSES`.
    note : str
        Optional remark (table, page, assumption).
    """

    value: Any
    source: str
    status: str
    note: str = ""

    def __post_init__(self) -> None:
        if self.status not in STATUSES:
            raise ValueError(
                f"status must be one of {', '.join(STATUSES)}, got {self.status!r}")


def sourced_from_mapping(raw: Any, where: str) -> Sourced:
    """Build a :class:`Sourced` from a data-file mapping ``{value, source, status[, note]}``.

    Raises ``ValueError`` naming ``where`` when a key is missing or the status unknown.
    """
    if not isinstance(raw, dict):
        raise ValueError(f"{where}: expected a mapping with value, source and status")
    missing = [k for k in ("value", "source", "status") if k not in raw]
    if missing:
        raise ValueError(f"{where}: missing {', '.join(missing)}")
    extra = set(raw) - {"value", "source", "status", "note"}
    if extra:
        raise ValueError(f"{where}: unknown keys {', '.join(sorted(extra))}")
    try:
        return Sourced(raw["value"], str(raw["source"]), str(raw["status"]),
                       str(raw.get("note", "")))
    except ValueError as exc:
        raise ValueError(f"{where}: {exc}") from None

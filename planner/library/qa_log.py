"""Probe QA logs: phantom depth-of-penetration measurements of a department's probes.

Format: :mod:`planner.files.qa` (schema kind ``qa``). :func:`load_qa_log` checks the whole file
(every problem as ``file:line:col: key.path: message``) and returns plain typed entries, each
with its line in the file, so that a QA warning can point at the measurement it is about.
"""

from __future__ import annotations

import datetime
import os
from pathlib import Path

from planner.records import record

__all__ = ["QaEntry", "QaLog", "load_qa_log"]


@record(slots=False)
class QaEntry:
    """One measurement (units in the names); ``index`` and ``line`` locate it in the file."""

    probe: str
    date: datetime.date
    frequency_mhz: float
    phantom_attenuation_db_per_cm_mhz: float
    depth_of_penetration_cm: float
    index: int
    line: int | None = None
    phantom: str | None = None
    operator: str | None = None
    note: str = ""


@record(slots=False)
class QaLog:
    """A checked QA log: its entries in file order and where it came from."""

    path: str
    entries: tuple[QaEntry, ...]
    demo: bool = False
    department: str | None = None

    def probes(self) -> list[str]:
        """The probe ids measured, in order of first appearance."""
        seen: dict[str, None] = {}
        for e in self.entries:
            seen.setdefault(e.probe, None)
        return list(seen)


_CACHE: dict[tuple, QaLog] = {}


def load_qa_log(path: str | os.PathLike[str]) -> QaLog:
    """Load and check a QA log (cached on path, modification time and size).

    Raises
    ------
    planner.errors.DataError
        Listing every problem as ``file:line:col: key.path: message``.
    """
    try:
        resolved = Path(path).resolve()
        stat = resolved.stat()
        key: tuple | None = (str(resolved), stat.st_mtime_ns, stat.st_size)
    except (OSError, RuntimeError):
        key = None
    if key is not None and key in _CACHE:
        return _CACHE[key]
    log = _read(path)
    if key is not None:
        if len(_CACHE) > 16:
            _CACHE.clear()
        _CACHE[key] = log
    return log


def _read(path: str | os.PathLike[str]) -> QaLog:
    from planner.files.base import validate_data
    from planner.files.qa import QaFile
    from planner.yamlio import ProblemCollector, load_user_yaml

    loaded = load_user_yaml(path, kind="probe QA log")
    problems = ProblemCollector(path, loaded)
    model = validate_data(QaFile, loaded.data, problems.add)
    problems.raise_if_any("Invalid probe QA log")
    assert model is not None
    entries = []
    for i, m in enumerate(model.measurements):
        found = loaded.nearest_line_of(("measurements", i))
        entries.append(QaEntry(m.probe, datetime.date.fromisoformat(m.date), m.frequency_mhz,
                               m.phantom_attenuation_db_per_cm_mhz, m.depth_of_penetration_cm, i,
                               None if found is None else found[0], m.phantom, m.operator, m.note))
    return QaLog(str(path), tuple(entries), model.demo, model.department)

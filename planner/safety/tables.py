"""Typed access to the safety guidance shipped in ``planner/data/safety.yaml``.

Every value comes back as a :class:`planner.provenance.Sourced` (value, source key,
status, note) or as a table row that carries its own source and status, so that a
finding can always name where its number came from and whether it was verified.

References
----------
BMUS2009, BMUS2009Detailed, AIUM2022TI, AIUMEarlyDoppler, WFUMBISUOG2011, AIUMGasBodies,
AIUM2023Lung, TerHaar2009, FDA2019Track3, KingLiuHarris2017, Abramowicz2009, WFUMB1998
(keys of :data:`planner.references.REFERENCES`).
"""

from __future__ import annotations

import math
from dataclasses import field
from functools import lru_cache
from typing import Any

from planner.datafiles import load_package_yaml
from planner.provenance import STATUSES, Sourced, sourced_from_mapping
from planner.records import record

LIMIT_KINDS: tuple[str, ...] = ("unlimited", "limited", "not_recommended")
"""How a scan-time row limits the exam: no limit (ALARA), a time, or not recommended."""


@record
class TimeRow:
    """One band of a scan-time table.

    Parameters
    ----------
    ti_above : float
        Lower edge of the band (exclusive, except 0 which is included). [-]
    ti_up_to : float or None
        Upper edge (inclusive); ``None`` for the open last band. [-]
    kind : str
        One of :data:`LIMIT_KINDS`.
    max_minutes : float or None
        Recommended maximum scan time for ``kind == "limited"``, else ``None``. [min]
    source, status, note : str
        Provenance of the time in this row.
    """

    ti_above: float
    ti_up_to: float | None
    kind: str
    max_minutes: float | None
    source: str
    status: str
    note: str = ""

    def contains(self, ti: float) -> bool:
        """Return whether a displayed ``ti`` falls in this band."""
        above = ti >= 0.0 if self.ti_above == 0.0 else ti > self.ti_above
        return above and (self.ti_up_to is None or ti <= self.ti_up_to)

    def band_text(self) -> str:
        """Return the band as text, e.g. ``"TI 1.0-1.5"`` or ``"TI > 3.0"``."""
        if self.ti_up_to is None:
            return f"TI > {self.ti_above:.1f}"
        if self.ti_above == 0.0:
            return f"TI <= {self.ti_up_to:.1f}"
        return f"TI {self.ti_above:.1f}-{self.ti_up_to:.1f}"


@record
class TimeTable:
    """A published table of recommended maximum scan time versus displayed TI."""

    id: str
    title: str
    source: str
    rows: tuple[TimeRow, ...]

    def row_at(self, ti: float) -> TimeRow:
        """Return the band holding ``ti`` (rows cover 0 to infinity without gaps)."""
        for row in self.rows:
            if row.contains(ti):
                return row
        raise ValueError(f"ti must be >= 0, got {ti}")

    def max_ti_for_minutes(self, minutes: float) -> float | None:
        """Return the highest TI whose band still allows ``minutes`` of scanning.

        ``None`` when even the lowest band does not (it never happens for the shipped
        tables, whose first band is unlimited).
        """
        best: float | None = None
        for row in self.rows:
            if row.kind == "unlimited" or (row.kind == "limited" and row.max_minutes is not None
                                          and row.max_minutes >= minutes):
                best = row.ti_up_to if row.ti_up_to is not None else math.inf
            else:
                break
        return best


@record
class ExamSafety:
    """Safety data of one exam type: the thermal index to watch and its scan-time group."""

    thermal_index: Sourced
    scan_time_group: Sourced


@record
class ValidityRange:
    """Validated and possible ranges of one input (``None`` bound = unbounded)."""

    parameter: str
    valid: Sourced
    impossible: Sourced
    lower_open: bool = False

    @property
    def valid_lo(self) -> float:
        return float(self.valid.value[0])

    @property
    def valid_hi(self) -> float:
        return float(self.valid.value[1])


def _row(raw: dict[str, Any], where: str) -> TimeRow:
    limit = raw["max_minutes"]
    if limit in ("unlimited", "not_recommended"):
        kind, minutes = str(limit), None
    elif isinstance(limit, (int, float)) and not isinstance(limit, bool) and limit > 0:
        kind, minutes = "limited", float(limit)
    else:
        raise ValueError(f"{where}.max_minutes must be > 0, 'unlimited' or 'not_recommended', "
                         f"got {limit!r}")
    if raw["status"] not in STATUSES:
        raise ValueError(f"{where}.status must be one of {', '.join(STATUSES)}")
    up_to = raw["ti_up_to"]
    return TimeRow(float(raw["ti_above"]), None if up_to is None else float(up_to), kind,
                   minutes, str(raw["source"]), str(raw["status"]), str(raw.get("note", "")))


def _table(table_id: str, raw: dict[str, Any]) -> TimeTable:
    rows = tuple(_row(r, f"scan_time_tables.{table_id}.rows[{i}]")
                 for i, r in enumerate(raw["rows"]))
    edge = 0.0
    for i, row in enumerate(rows):
        if row.ti_above != edge:
            raise ValueError(f"scan_time_tables.{table_id}.rows[{i}] starts at {row.ti_above}, "
                             f"expected {edge} (bands must not leave gaps)")
        edge = row.ti_up_to if row.ti_up_to is not None else math.inf
    if edge != math.inf:
        raise ValueError(f"scan_time_tables.{table_id}: the last band must be open "
                         "(ti_up_to: null)")
    return TimeTable(table_id, str(raw["title"]), str(raw["source"]), rows)


@record
class SafetyData:
    """The parsed safety data file."""

    raw: dict[str, Any]
    exam_types: dict[str, ExamSafety]
    tables: dict[str, TimeTable]
    groups: dict[str, tuple[str, tuple[str, ...]]]
    validity: dict[str, ValidityRange]
    _values: dict[str, Sourced] = field(default_factory=dict, repr=False, compare=False)

    def value(self, dotted: str) -> Sourced:
        """Return the sourced value at a dotted path, e.g. ``"ophthalmic.max_mi"`` (parsed once)."""
        found = self._values.get(dotted)
        if found is None:
            node: Any = self.raw
            for part in dotted.split("."):
                node = node[part]
            found = self._values[dotted] = sourced_from_mapping(node, dotted)
        return found

    def group_tables(self, group: str) -> tuple[TimeTable, ...]:
        """Return the published tables of a scan-time group (BMUS first, then AIUM)."""
        return tuple(self.tables[t] for t in self.groups[group][1])


@lru_cache(maxsize=1)
def safety_data() -> SafetyData:
    """Load and check ``planner/data/safety.yaml`` once.

    Raises
    ------
    ValueError
        When the shipped file is malformed (a row, a band gap, a missing key).
    """
    raw = load_package_yaml("safety.yaml")
    exams = {
        exam: ExamSafety(*(sourced_from_mapping(entry[key], f"exam_types.{exam}.{key}")
                           for key in ("thermal_index", "scan_time_group")))
        for exam, entry in raw["exam_types"].items()
    }
    tables = {tid: _table(tid, t) for tid, t in raw["scan_time_tables"].items()}
    groups = {gid: (str(g["label"]), tuple(g["tables"]))
              for gid, g in raw["scan_time_groups"].items()}
    for gid, (_, table_ids) in groups.items():
        for tid in table_ids:
            if tid not in tables:
                raise ValueError(f"scan_time_groups.{gid}: unknown table {tid!r}")
    validity = {
        name: ValidityRange(name, sourced_from_mapping(v["valid"], f"validity.{name}.valid"),
                            sourced_from_mapping(v["impossible"], f"validity.{name}.impossible"),
                            bool(v.get("lower_open", False)))
        for name, v in raw["validity"].items()
    }
    return SafetyData(raw, exams, tables, groups, validity)

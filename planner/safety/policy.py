"""A department's local safety policy: its own limits and preferred settings.

A department may tighten (or, knowingly, differ from) the published guidance: maximum
minutes per TI band, a maximum TI, an MI ceiling and a time cap per exam type, Doppler
restrictions, preferred starting settings. scanplan shows every local value *beside* the
published one, labelled as local practice; the published value is never hidden.

File format (YAML, ``schema_version: 1``)::

    schema_version: 1
    department: Harbourside Community Imaging
    version: "2.1"                       # optional text
    approved_by: Imaging governance group  # optional text
    review_date: "2027-03-31"            # optional text
    scan_time_limits:                    # per exam type id, or "default"
      obstetric:
        - {ti_above: 0.7, ti_up_to: 1.0, max_minutes: 30}
    exam_limits:                         # per exam type id, or "default"
      obstetric: {max_ti: 1.0, max_mi: 1.0, max_minutes: 30}
    doppler_restrictions:
      - exam_types: [obstetric]
        modes: [pulsed_doppler]
        before_weeks: 14                 # optional: only earlier in pregnancy
        permitted: clinical_indication_only   # permitted | clinical_indication_only | not_permitted
        max_ti: 0.7                      # optional
        max_minutes: 5                   # optional
        note: "..."                      # optional
    preferred_settings:                  # per exam type id, or "default"
      obstetric: {start_ti: 0.7, notes: ["..."]}

TI bands follow the published tables: a band covers ``ti_above < TI <= ti_up_to`` (from
0 inclusive); ``ti_up_to: null`` leaves it open.
"""

from __future__ import annotations

import math

import os
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from planner.safety.context import EXAM_TYPES, MODES
from planner.safety.tables import safety_data
from planner.yamlio import ProblemCollector, load_user_yaml

LOCAL_SOURCE_PREFIX: str = "local-policy:"
"""Prefix of the source entry a finding gets from a local policy (not a bibliography key)."""

PERMISSIONS: dict[str, str] = {
    "permitted": "permitted",
    "clinical_indication_only": "only for a clinical indication",
    "not_permitted": "not permitted",
}
"""Doppler permission values of a local policy -> wording in findings."""

DEFAULT_KEY = "default"
_TOP_KEYS = ("schema_version", "department", "version", "approved_by", "review_date",
             "scan_time_limits", "exam_limits", "doppler_restrictions", "preferred_settings")
_TEXT_KEYS = ("version", "approved_by", "review_date")


def is_local_source(source: str) -> bool:
    """Return whether a finding source names a local policy rather than a publication."""
    return source.startswith(LOCAL_SOURCE_PREFIX)


@dataclass(frozen=True, slots=True)
class LocalTimeBand:
    """A local maximum scan time for one TI band. [min]"""

    ti_above: float
    ti_up_to: float | None
    max_minutes: float

    def contains(self, ti: float) -> bool:
        """Return whether a displayed ``ti`` falls in this band."""
        above = ti >= 0.0 if self.ti_above == 0.0 else ti > self.ti_above
        return above and (self.ti_up_to is None or ti <= self.ti_up_to)


@dataclass(frozen=True, slots=True)
class LocalExamLimits:
    """Local ceilings for one exam type; ``None`` where the department sets none."""

    max_ti: float | None = None
    max_mi: float | None = None
    max_minutes: float | None = None


@dataclass(frozen=True, slots=True)
class LocalDopplerRule:
    """A local restriction on Doppler modes for some exam types."""

    exam_types: tuple[str, ...]
    modes: tuple[str, ...]
    permitted: str
    before_weeks: float | None = None
    max_ti: float | None = None
    max_minutes: float | None = None
    note: str = ""


@dataclass(frozen=True, slots=True)
class LocalPreferences:
    """Preferred settings of the department for one exam type."""

    start_ti: float | None = None
    notes: tuple[str, ...] = ()


@dataclass(frozen=True)
class LocalPolicy:
    """A department's local safety policy (see the module docstring for the file format)."""

    department: str
    path: str = ""
    version: str = ""
    approved_by: str = ""
    review_date: str = ""
    scan_time_limits: dict[str, tuple[LocalTimeBand, ...]] = field(default_factory=dict)
    exam_limits: dict[str, LocalExamLimits] = field(default_factory=dict)
    doppler_restrictions: tuple[LocalDopplerRule, ...] = ()
    preferred_settings: dict[str, LocalPreferences] = field(default_factory=dict)

    @property
    def source_key(self) -> str:
        """Source entry for findings: ``local-policy:<file name>`` (or the department)."""
        name = Path(self.path).name if self.path else self.department
        return f"{LOCAL_SOURCE_PREFIX}{name}"

    @property
    def label(self) -> str:
        """Short label for messages: ``local policy (<department>)``."""
        return f"local policy ({self.department})"

    def limits_for(self, exam_type: str) -> LocalExamLimits:
        """Return the exam's ceilings, each field falling back to ``default``."""
        own = self.exam_limits.get(exam_type, LocalExamLimits())
        base = self.exam_limits.get(DEFAULT_KEY, LocalExamLimits())
        return LocalExamLimits(*(a if a is not None else b for a, b in
                                 zip((own.max_ti, own.max_mi, own.max_minutes),
                                     (base.max_ti, base.max_mi, base.max_minutes))))

    def time_limit_min(self, exam_type: str, ti: float | None) -> float | None:
        """Return the local maximum minutes at ``ti`` (band and exam cap), or ``None``. [min]"""
        candidates = [self.limits_for(exam_type).max_minutes]
        if ti is not None:
            bands = self.scan_time_limits.get(exam_type, self.scan_time_limits.get(DEFAULT_KEY, ()))
            candidates += [b.max_minutes for b in bands if b.contains(ti)]
        given = [c for c in candidates if c is not None]
        return min(given) if given else None

    def preferences_for(self, exam_type: str) -> LocalPreferences | None:
        """Return the preferred settings for the exam (or the default ones), if any."""
        return self.preferred_settings.get(exam_type, self.preferred_settings.get(DEFAULT_KEY))

    def doppler_rules_for(self, exam_type: str, modes: tuple[str, ...],
                          gestation_weeks: float | None) -> tuple[LocalDopplerRule, ...]:
        """Return the Doppler rules that apply to this exam, these modes and gestation.

        A rule with ``before_weeks`` applies when the gestation is below it or unknown.
        """
        out = []
        for rule in self.doppler_restrictions:
            if exam_type not in rule.exam_types or not set(rule.modes) & set(modes):
                continue
            if (rule.before_weeks is not None and gestation_weeks is not None
                    and gestation_weeks >= rule.before_weeks):
                continue
            out.append(rule)
        return tuple(out)


class _Reader:
    """Typed field reading that records every problem instead of stopping at the first."""

    def __init__(self, problems: ProblemCollector) -> None:
        self.problems = problems

    def number(self, raw: dict, key_path: tuple, *, required: bool = False, positive: bool = True,
               at_most: float | None = None) -> float | None:
        key = key_path[-1]
        if key not in raw or raw[key] is None:
            if required:
                self.problems.add(key_path, "missing; give a number")
            return None
        value = raw[key]
        if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
            self.problems.add(key_path, f"must be a finite number, got {value!r}")
            return None
        if (positive and value <= 0) or (not positive and value < 0):
            self.problems.add(key_path, f"must be {'> 0' if positive else '>= 0'}, got {value!r}")
            return None
        if at_most is not None and value > at_most:
            self.problems.add(key_path, f"must be <= {at_most:g}, got {value!r}")
            return None
        return float(value)

    def mapping(self, raw: Any, key_path: tuple, allowed: tuple[str, ...]) -> dict:
        if not isinstance(raw, dict):
            self.problems.add(key_path, f"must be a mapping with keys {', '.join(allowed)}")
            return {}
        for key in raw:
            if key not in allowed:
                self.problems.add(key_path + (key,), f"unknown key; valid: {', '.join(allowed)}")
        return raw

    def per_exam(self, raw: Any, key_path: tuple) -> dict:
        choices = tuple(EXAM_TYPES) + (DEFAULT_KEY,)
        if not isinstance(raw, dict):
            self.problems.add(key_path, "must be a mapping from exam type to settings")
            return {}
        good = {}
        for key, value in raw.items():
            if key in choices:
                good[key] = value
            else:
                self.problems.add(key_path + (key,),
                                  f"unknown exam type; valid: {', '.join(choices)}")
        return good

    def id_list(self, raw: dict, key_path: tuple, choices: tuple[str, ...]) -> tuple[str, ...]:
        value = raw.get(key_path[-1])
        if not isinstance(value, list) or not value:
            self.problems.add(key_path, f"must be a non-empty list of {', '.join(choices)}")
            return ()
        for i, item in enumerate(value):
            if item not in choices:
                self.problems.add(key_path + (i,),
                                  f"unknown value {item!r}; valid: {', '.join(choices)}")
        return tuple(v for v in value if v in choices)


def _bands(reader: _Reader, raw: Any, key_path: tuple) -> tuple[LocalTimeBand, ...]:
    if not isinstance(raw, list) or not raw:
        reader.problems.add(key_path,
                            "must be a non-empty list of {ti_above, ti_up_to, max_minutes}")
        return ()
    bands = []
    for i, item in enumerate(raw):
        where = key_path + (i,)
        item = reader.mapping(item, where, ("ti_above", "ti_up_to", "max_minutes"))
        if not item:
            continue
        lo = reader.number(item, where + ("ti_above",), required=True, positive=False)
        hi = reader.number(item, where + ("ti_up_to",))
        minutes = reader.number(item, where + ("max_minutes",), required=True)
        if lo is None or minutes is None or ("ti_up_to" in item and item["ti_up_to"] is not None
                                             and hi is None):
            continue
        if hi is not None and hi <= lo:
            reader.problems.add(where + ("ti_up_to",),
                                f"must be above ti_above ({lo:g}), got {hi:g}")
            continue
        bands.append(LocalTimeBand(lo, hi, minutes))
    ordered = sorted(bands, key=lambda b: b.ti_above)
    for first, second in zip(ordered, ordered[1:]):
        if first.ti_up_to is None or first.ti_up_to > second.ti_above:
            reader.problems.add(key_path, f"TI bands overlap (band from {first.ti_above:g} and "
                                          f"band from {second.ti_above:g})")
    return tuple(ordered)


def _doppler_rule(reader: _Reader, raw: Any, where: tuple) -> LocalDopplerRule | None:
    keys = ("exam_types", "modes", "permitted", "before_weeks", "max_ti", "max_minutes", "note")
    raw = reader.mapping(raw, where, keys)
    if not raw:
        return None
    exams = reader.id_list(raw, where + ("exam_types",), tuple(EXAM_TYPES))
    modes = reader.id_list(raw, where + ("modes",), tuple(MODES))
    permitted = raw.get("permitted")
    if not isinstance(permitted, str) or permitted not in PERMISSIONS:
        hint = " (YAML reads yes/no as true/false)" if isinstance(permitted, bool) else ""
        reader.problems.add(where + ("permitted",),
                            f"must be one of {', '.join(PERMISSIONS)}, got {permitted!r}{hint}")
    weeks = reader.number(raw, where + ("before_weeks",), at_most=45)
    max_ti = reader.number(raw, where + ("max_ti",))
    minutes = reader.number(raw, where + ("max_minutes",))
    note = raw.get("note", "")
    if not isinstance(note, str):
        reader.problems.add(where + ("note",), f"must be text, got {note!r}")
    if not exams or not modes or not isinstance(permitted, str) or permitted not in PERMISSIONS:
        return None
    return LocalDopplerRule(exams, modes, str(permitted), weeks, max_ti, minutes, str(note))


def _preferences(reader: _Reader, raw: Any, where: tuple) -> LocalPreferences:
    raw = reader.mapping(raw, where, ("start_ti", "notes"))
    start = reader.number(raw, where + ("start_ti",)) if raw else None
    notes = raw.get("notes", []) if raw else []
    if not isinstance(notes, list) or not all(isinstance(n, str) and n.strip() for n in notes):
        reader.problems.add(where + ("notes",), "must be a list of non-empty texts")
        notes = []
    return LocalPreferences(start, tuple(n.strip() for n in notes))


def load_local_policy(path: str | os.PathLike[str]) -> LocalPolicy:
    """Load and check a department's local safety policy file.

    Parameters
    ----------
    path : str or os.PathLike
        The YAML file.

    Returns
    -------
    LocalPolicy

    Raises
    ------
    planner.errors.DataError
        Listing every problem as ``file:line:col: key.path: message``.
    """
    loaded = load_user_yaml(path, kind="local policy")
    problems = ProblemCollector(path, loaded)
    reader = _Reader(problems)
    data = reader.mapping(loaded.data, (), _TOP_KEYS)
    if data.get("schema_version") != 1:
        problems.add(("schema_version",), f"must be 1, got {data.get('schema_version')!r}")
    department = data.get("department")
    if not isinstance(department, str) or not department.strip():
        problems.add(("department",), "missing or empty; give the department's name")
        department = ""
    texts = {}
    for key in _TEXT_KEYS:
        value = data.get(key, "")
        if isinstance(value, bool) or not isinstance(value, (str, int, float)):
            problems.add((key,), f"must be text, got {value!r}")
            value = ""
        texts[key] = str(value)
    mi_ceiling = float(safety_data().value("regulatory.max_mi").value)
    bands = {exam: _bands(reader, raw, ("scan_time_limits", exam))
             for exam, raw in reader.per_exam(data.get("scan_time_limits", {}),
                                              ("scan_time_limits",)).items()}
    limits = {}
    for exam, raw in reader.per_exam(data.get("exam_limits", {}), ("exam_limits",)).items():
        where = ("exam_limits", exam)
        raw = reader.mapping(raw, where, ("max_ti", "max_mi", "max_minutes"))
        limits[exam] = LocalExamLimits(reader.number(raw, where + ("max_ti",)),
                                       reader.number(raw, where + ("max_mi",), at_most=mi_ceiling),
                                       reader.number(raw, where + ("max_minutes",)))
    rules_raw = data.get("doppler_restrictions", [])
    if not isinstance(rules_raw, list):
        problems.add(("doppler_restrictions",), "must be a list of restrictions")
        rules_raw = []
    rules = tuple(r for r in (_doppler_rule(reader, raw, ("doppler_restrictions", i))
                              for i, raw in enumerate(rules_raw)) if r is not None)
    prefs = {exam: _preferences(reader, raw, ("preferred_settings", exam))
             for exam, raw in reader.per_exam(data.get("preferred_settings", {}),
                                              ("preferred_settings",)).items()}
    problems.raise_if_any(title="Invalid local policy file")
    return LocalPolicy(department.strip(), str(path), texts["version"], texts["approved_by"],
                       texts["review_date"], bands, limits, rules, prefs)

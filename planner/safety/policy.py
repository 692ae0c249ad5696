"""A department's local safety policy: its own limits and preferred settings.

A department may tighten (or, knowingly, differ from) the published guidance: maximum
minutes per TI band, a maximum TI, an MI ceiling and a time cap per exam type, Doppler
restrictions, preferred starting settings. scanplan shows every local value *beside* the
published one, labelled as local practice; the published value is never hidden.

File format (YAML, ``schema_version: 1``; model :class:`planner.files.policy.PolicyFile`)::

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
from dataclasses import field
from pathlib import Path
from typing import Any

from planner.records import record
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


def is_local_source(source: str) -> bool:
    """Return whether a finding source names a local policy rather than a publication."""
    return source.startswith(LOCAL_SOURCE_PREFIX)


@record
class LocalTimeBand:
    """A local maximum scan time for one TI band. [min]"""

    ti_above: float
    ti_up_to: float | None
    max_minutes: float

    def contains(self, ti: float) -> bool:
        """Return whether a displayed ``ti`` falls in this band."""
        above = ti >= 0.0 if self.ti_above == 0.0 else ti > self.ti_above
        return above and (self.ti_up_to is None or ti <= self.ti_up_to)


@record
class LocalExamLimits:
    """Local ceilings for one exam type; ``None`` where the department sets none."""

    max_ti: float | None = None
    max_mi: float | None = None
    max_minutes: float | None = None


@record
class LocalDopplerRule:
    """A local restriction on Doppler modes for some exam types."""

    exam_types: tuple[str, ...]
    modes: tuple[str, ...]
    permitted: str
    before_weeks: float | None = None
    max_ti: float | None = None
    max_minutes: float | None = None
    note: str = ""


@record
class LocalPreferences:
    """Preferred settings of the department for one exam type."""

    start_ti: float | None = None
    notes: tuple[str, ...] = ()


@record(slots=False)
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


def _is_number(value: Any) -> bool:
    return (isinstance(value, (int, float)) and not isinstance(value, bool)
            and abs(value) < 1e300 and (isinstance(value, int) or math.isfinite(value)))


def _check_bands(problems: ProblemCollector, exam: Any, raw: Any) -> None:
    """Each band's ``ti_up_to`` above its ``ti_above``; bands of one exam do not overlap."""
    if not isinstance(raw, list):
        return
    bands: list[tuple[float, float | None]] = []
    for index, item in enumerate(raw):
        if not isinstance(item, dict) or not _is_number(item.get("ti_above")):
            continue
        low, high = float(item["ti_above"]), item.get("ti_up_to")
        if high is not None and not _is_number(high):
            continue
        if high is not None and high <= low:
            problems.add(("scan_time_limits", exam, index, "ti_up_to"),
                         f"must be above ti_above ({low:g}), got {high:g}")
            continue
        bands.append((low, None if high is None else float(high)))
    ordered = sorted(bands, key=lambda band: band[0])
    for first, second in zip(ordered, ordered[1:]):
        upper = first[1]
        if upper is None or upper > second[0]:
            problems.add(("scan_time_limits", exam), f"TI bands overlap (band from {first[0]:g} "
                                                     f"and band from {second[0]:g})")


def _cross_checks(problems: ProblemCollector, data: dict[str, Any]) -> None:
    """The checks that need more than one field or the published tables."""
    limits = data.get("scan_time_limits")
    for exam, raw in (limits.items() if isinstance(limits, dict) else ()):
        _check_bands(problems, exam, raw)
    ceiling = float(safety_data().value("regulatory.max_mi").value)
    exams = data.get("exam_limits")
    for exam, raw in (exams.items() if isinstance(exams, dict) else ()):
        value = raw.get("max_mi") if isinstance(raw, dict) else None
        if value is not None and _is_number(value) and value > ceiling:
            problems.add(("exam_limits", exam, "max_mi"),
                         f"must be at most {ceiling:g} (the regulatory MI ceiling), got {value!r}")


def _policy_from_model(model: Any, path: str) -> LocalPolicy:
    bands = {exam: tuple(sorted((LocalTimeBand(b.ti_above, b.ti_up_to, b.max_minutes)
                                 for b in raw), key=lambda band: band.ti_above))
             for exam, raw in model.scan_time_limits.items()}
    limits = {exam: LocalExamLimits(raw.max_ti, raw.max_mi, raw.max_minutes)
              for exam, raw in model.exam_limits.items()}
    rules = tuple(LocalDopplerRule(tuple(r.exam_types), tuple(r.modes), r.permitted,
                                   r.before_weeks, r.max_ti, r.max_minutes, r.note)
                  for r in model.doppler_restrictions)
    prefs = {exam: LocalPreferences(raw.start_ti, tuple(raw.notes))
             for exam, raw in model.preferred_settings.items()}
    return LocalPolicy(model.department, path, model.version, model.approved_by,
                       model.review_date, bands, limits, rules, prefs)


def load_local_policy(path: str | os.PathLike[str]) -> LocalPolicy:
    """Load and check a department's local safety policy file.

    The file is read by :func:`planner.yamlio.load_user_yaml` and validated by
    :class:`planner.files.policy.PolicyFile`.

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
    from planner.files.base import validate_data
    from planner.files.policy import PolicyFile

    loaded = load_user_yaml(path, kind="local policy")
    problems = ProblemCollector(path, loaded)
    model = validate_data(PolicyFile, loaded.data, problems.add)
    _cross_checks(problems, loaded.data)
    problems.problems.sort(key=_line_of)
    problems.raise_if_any(title="Invalid local policy file")
    assert model is not None
    return _policy_from_model(model, str(path))


def _line_of(problem: str) -> tuple[int, ...]:
    """``(line, column)`` of a located problem, for sorting (0 when it has none)."""
    head = problem.split(": ", 1)[0].split(":")
    numbers = tuple(int(part) for part in head[-2:] if part.isdigit())
    return numbers if len(numbers) == 2 else (0, 0)

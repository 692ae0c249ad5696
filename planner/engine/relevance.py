"""Relevance of a finding: does it change how this exam is done (``main``), or is it true
but constant across plans or too small to matter (``more``)?

The main list holds what a practitioner acts on; items that appear on nearly every plan
with the same content (the regulatory output ceilings, the published scan-time table when
no expected TI is given), sub-millimetre depth errors, a tilt tolerance on a target whose
judged echo does not depend on the tilt, and the body-wall summary of a slim patient go to
a compact "more" section. Nothing is dropped: every finding stays in the plan, its JSON
(key ``relevance``) and its explanation.

Each grader below takes the finding and the target and returns ``"main"`` or ``"more"``;
codes without a grader are ``main``. Thresholds:

- :data:`MEASURABLE_ERROR_MM` = 1 mm, the usual caliper precision of a B-mode measurement
  (common practice, no single source).
- A wall-aberration loss is main from a fat and muscle wall of
  :data:`planner.engine.artefacts.ABERRATING_WALL_MM` (15 mm).
- The body-wall summary is main when the wall was measured or the fat at the window reaches
  the trunk fat of BMI 30 (:func:`planner.engine.habitus_rules.limited_exam_fat_mm`).
"""

from __future__ import annotations

from collections.abc import Callable, Iterable
from dataclasses import replace
from typing import Any

from planner.findings import Finding

__all__ = ["MEASURABLE_ERROR_MM", "RELEVANCE_GRADERS", "grade", "relevance_of"]

MEASURABLE_ERROR_MM: float = 1.0
"""Smallest depth error that changes a caliper measurement. [mm] (common practice)"""

_SLIM_CLASSES = ("underweight", "normal")


def _number(values: dict[str, Any], key: str) -> float | None:
    value = values.get(key)
    return float(value) if isinstance(value, (int, float)) and not isinstance(value, bool) else None


def _sound_speed(finding: Finding, target: Any) -> str:
    errors = [abs(v) for v in (_number(finding.values, "depth_error_mm"),
                               _number(finding.values, "fat_error_mm")) if v is not None]
    return "main" if errors and max(errors) >= MEASURABLE_ERROR_MM else "more"


def _tilt(finding: Finding, target: Any) -> str:
    # the tolerance matters where the exam judges a mirror-like echo (tendon, nerve, pleura,
    # diaphragm); on mixed or diffuse targets a capsule or skin line stays visible off-axis
    return "main" if getattr(target, "reflector", None) == "specular" else "more"


def _wall(finding: Finding, target: Any) -> str:
    # the wall summary matters where the wall can limit the exam: a measured wall, or a fat
    # layer at the window as thick as a trunk wall's at BMI 30 (an obese patient's
    # endocavitary, neck or distal-limb route has little fat and the summary changes nothing)
    if finding.values.get("measured"):
        return "main"
    fat = _number(finding.values, "subcutaneous_fat_mm")
    if fat is not None:
        from planner.engine.habitus_rules import limited_exam_fat_mm
        return "main" if fat >= limited_exam_fat_mm() else "more"
    return "more" if finding.values.get("who_class") in _SLIM_CLASSES else "main"


def _scan_time(finding: Finding, target: Any) -> str:
    return "main" if finding.values.get("expected_ti") is not None else "more"


def _output_ceiling(finding: Finding, target: Any) -> str:
    return "main" if finding.values.get("expected_mi") is not None else "more"


def _calcification(finding: Finding, target: Any) -> str:
    return "more" if finding.values.get("risk") in ("none", "low") else "main"


def _wall_aberration(finding: Finding, target: Any) -> str:
    from planner.engine.artefacts import ABERRATING_WALL_MM
    wall = _number(finding.values, "wall_mm")
    return "main" if wall is not None and wall >= ABERRATING_WALL_MM else "more"


def _likely_condition(finding: Finding, target: Any) -> str:
    return "main" if finding.values.get("band_changes") else "more"


def _reach_spread(finding: Finding, target: Any) -> str:
    """Main when knowing the top driver would narrow the reach by at least
    :data:`planner.engine.spread.NARROWING_MHZ` and the start is not already settled (set by
    the wall, the exam's usual start or the probe, and reached by at least 90 % of the draws)."""
    from planner.engine.spread import NARROWING_MHZ, SETTLED_PROBABILITY
    narrows = _number(finding.values, "narrows_mhz")
    share = _number(finding.values, "start_probability")
    settled = (finding.values.get("start_basis") != "margin" and share is not None
               and share >= SETTLED_PROBABILITY)
    return "main" if narrows is not None and narrows >= NARROWING_MHZ and not settled else "more"


RELEVANCE_GRADERS: dict[str, Callable[[Finding, Any], str]] = {
    "band.reach_spread": _reach_spread,
    "condition.likely_steatosis": _likely_condition,
    "artefact.wall_aberration": _wall_aberration,
    "artefact.sound_speed": _sound_speed,
    "tilt.specular": _tilt,
    "habitus.wall": _wall,
    "safety.scan_time": _scan_time,
    "safety.output_ceiling": _output_ceiling,
    "shadow.calcification": _calcification,
}
"""Finding code -> grader; a code not listed is always ``main``."""


def relevance_of(finding: Finding, target: Any) -> str:
    """``"main"`` or ``"more"`` for ``finding`` on a plan for ``target``. Warnings and
    cautions are always main: they say the exam may fail or a limit is near."""
    if finding.severity in ("warning", "caution"):
        return "main"
    grader = RELEVANCE_GRADERS.get(finding.code)
    return grader(finding, target) if grader else "main"


def grade(findings: Iterable[Finding], target: Any) -> list[Finding]:
    """``findings`` with their relevance set (order kept)."""
    out = []
    for finding in findings:
        relevance = relevance_of(finding, target)
        out.append(finding if relevance == finding.relevance else replace(finding, relevance=relevance))
    return out

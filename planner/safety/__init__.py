"""Safety guidance for a planned exam: published limits, local policy, input validity.

Every item names its source (a key of :data:`planner.references.REFERENCES`) and whether
the value was verified in that source or is recalled from memory. Local policy values are
shown as local practice beside the published ones, never in their place. Everything here
is decision support: see :data:`DISCLAIMER`.
"""

from __future__ import annotations

from planner.safety.context import EXAM_TYPES, MODES, ExamContext
from planner.safety.policy import LocalPolicy, is_local_source, load_local_policy
from planner.safety.rules import SafetyReport, safety_findings, safety_report
from planner.safety.statement import DISCLAIMER
from planner.safety.thermal import monitored_index
from planner.safety.validity import check_inputs, validity_flags

__all__ = [
    "DISCLAIMER", "EXAM_TYPES", "MODES", "ExamContext", "LocalPolicy", "SafetyReport",
    "check_inputs", "is_local_source", "load_local_policy", "monitored_index",
    "safety_findings", "safety_report", "validity_flags",
]

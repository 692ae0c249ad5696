"""The facts every engine rule reads: patient, target, the ranked window assessments, decisions."""

from __future__ import annotations

from typing import TYPE_CHECKING

from planner.body.patient import Patient
from planner.body.stack import LayerStack
from planner.engine.assess import ProbeOption, WindowAssessment
from planner.findings import Finding
from planner.library.probes import ProbeInventory
from planner.library.targets import Target, Window
from planner.records import record

if TYPE_CHECKING:
    from planner.engine.model import FrequencyBand, HarmonicDecision, TiltDecision


@record
class Decisions:
    """The typed deciders' results and the findings that explain them."""

    band: FrequencyBand
    band_findings: tuple[Finding, ...]
    harmonic: HarmonicDecision
    harmonic_findings: tuple[Finding, ...]
    tilt: TiltDecision
    tilt_findings: tuple[Finding, ...]


@record(slots=False)
class RuleContext:
    """Inputs of the rules. ``chosen`` is the window the plan recommends (or the user chose);
    ``decisions`` holds the deciders' results once they have run."""

    patient: Patient
    target: Target
    assessments: tuple[WindowAssessment, ...]
    chosen: WindowAssessment
    inventory: ProbeInventory
    decisions: Decisions | None = None

    @property
    def option(self) -> ProbeOption | None:
        return self.chosen.best

    @property
    def window(self) -> Window:
        window: Window = self.chosen.window
        return window

    @property
    def stack(self) -> LayerStack:
        return self.chosen.stack

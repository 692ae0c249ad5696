"""The facts every rule reads: request, patient, target, the ranked window assessments."""

from __future__ import annotations

from dataclasses import dataclass

from planner.body.patient import Patient
from planner.engine.assess import ProbeOption, WindowAssessment
from planner.library.probes import ProbeInventory


@dataclass(frozen=True)
class RuleContext:
    """Inputs of the rules. ``chosen`` is the window the plan recommends (or the user chose)."""

    patient: Patient
    target: object
    assessments: tuple[WindowAssessment, ...]
    chosen: WindowAssessment
    inventory: ProbeInventory

    @property
    def option(self) -> ProbeOption | None:
        return self.chosen.best

    @property
    def window(self):
        return self.chosen.window

    @property
    def stack(self):
        return self.chosen.stack

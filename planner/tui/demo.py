"""The plan the terminal UI opens with: an invented patient (demo data, no real person)."""

from __future__ import annotations

from planner.planfile import PlanInputs

DEMO_INPUTS = PlanInputs(target_id="liver", bmi=38.0, sex="female", conditions=(("steatosis", 2),))
"""Invented demo patient: BMI 38 (obese class II), moderate hepatic steatosis, liver exam."""

DEMO_LABEL = "DEMO DATA: invented patient"
"""How the UI marks the demo plan."""

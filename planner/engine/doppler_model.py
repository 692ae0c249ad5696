"""The typed Doppler plan: frozen records made by :func:`planner.engine.doppler_plan.plan_doppler`.

Velocities in cm/s, frequencies in MHz, angles in degrees (beam-to-flow, 0 = along the flow),
losses in dB round trip. Field metadata ``omit_none=True`` leaves a None out of the JSON.
"""

from __future__ import annotations

from dataclasses import field
from typing import Any

from planner.records import record


@record
class SourcedValue:
    """A published or assumed value with its source key and status."""

    value: float
    source: str
    status: str


@record
class ExpectedRange:
    """Expected velocity range of the vessel. [cm/s]"""

    low: SourcedValue
    high: SourcedValue


@record
class Threshold:
    """A diagnostic velocity threshold the plan must show unaliased. [cm/s]"""

    label: str
    value: float
    source: str
    status: str


@record
class VesselSummary:
    """Expected flow of the vessel target, each value with source and status."""

    id: str
    name: str
    flow: str
    quantity: str
    waveform: str
    notes: str
    angle_policy: str
    expected_cm_s: ExpectedRange
    thresholds: tuple[Threshold, ...]
    low_flow_below_cm_s: SourcedValue | None
    reverse_velocity_cm_s: SourcedValue
    diameter_mm: SourcedValue


@record
class DopplerFrequency:
    """A candidate Doppler frequency and its round-trip loss against the Doppler budget."""

    frequency_mhz: float
    round_trip_loss_db: float
    within_budget: bool


@record
class NyquistCell:
    """Nyquist velocity limit at one frequency and angle. [cm/s]"""

    frequency_mhz: float
    angle_deg: float
    v_max_cm_s: float


@record
class DopplerSetting:
    """The recommended frequency and angle, and how to reach the angle."""

    frequency_mhz: float
    angle_deg: float
    v_max_cm_s: float
    round_trip_loss_db: float
    unsteered_deg: float
    steer_deg: float
    heel_toe_deg: float
    how: str


@record
class VelocityCheck:
    """A velocity the plan must show, and whether it aliases. [cm/s]"""

    label: str
    velocity_cm_s: float
    source: str
    status: str
    aliases: bool


@record
class AliasMargin:
    """Design velocity against the Nyquist limit. [cm/s]; ratio [-]"""

    design_velocity_cm_s: float
    v_max_cm_s: float
    margin_cm_s: float
    ratio: float


@record
class Remedy:
    """One remedy for aliasing, re-computed with the change applied (None limit: no range limit)."""

    action: str
    text: str
    changes: dict[str, Any]
    v_max_cm_s: float | None
    cost: str
    removes_aliasing: bool
    round_trip_loss_db: float | None = field(default=None, metadata={"omit_none": True})
    extra_gates_cm: tuple[float, ...] | None = field(default=None, metadata={"omit_none": True})


@record
class VelocityError:
    """Velocity error for a +/-5 deg angle error (None where undefined). [%]"""

    plus_5_deg: float | None
    minus_5_deg: float | None


@record
class DopplerSafety:
    """Modes the Doppler plan uses and whether bone lies near the gate."""

    modes: tuple[str, ...]
    bone_near_gate: bool
    note: str


@record
class DopplerPlan:
    """Doppler plan of a vessel target at the chosen window."""

    vessel: VesselSummary
    depth_cm: float
    window: str
    prf_max_hz: int
    probe: str | None
    budget_db: float
    frequencies: tuple[DopplerFrequency, ...]
    nyquist: tuple[NyquistCell, ...]
    recommended: DopplerSetting
    checks: tuple[VelocityCheck, ...]
    aliasing_expected: bool
    margin: AliasMargin
    remedies: tuple[Remedy, ...]
    velocity_error_percent: VelocityError
    safety: DopplerSafety
    assumptions: tuple[str, ...]
    sources: tuple[str, ...] = ()

"""The typed plan: frozen records for every part of a :class:`Plan`.

Every record is a frozen dataclass with slots. Renderers read attributes; JSON is produced at
the edge by :func:`planner.engine.serialize.plan_to_json_data`. A field whose metadata carries
``json=False`` is a typed decision for the code (never written to JSON); ``omit_none=True``
leaves the key out of the JSON when the value is None. Units are in the field names.
"""

from __future__ import annotations

from dataclasses import field

from planner.engine.curves import DepthCurves
from planner.engine.doppler_model import DopplerPlan
from planner.findings import Finding
from planner.records import record
from planner.safety.validity import ValidityFlag

SCHEMA_VERSION = 1
"""Version of the ``plan --json`` contract."""

HARMONIC_BASES: tuple[str, ...] = ("advised", "contraindicated", "no_harmonic_mode",
                                   "out_of_reach", "optional")
"""Why harmonic imaging is or is not advised (:attr:`HarmonicDecision.basis`)."""


@record
class TargetSummary:
    """The target of the plan."""

    id: str
    name: str
    reflector: str
    region: str
    detail_mm: float


@record
class PatientSummary:
    """The patient as the plan saw them (BMI rounded to 0.1 kg/m^2)."""

    bmi: float
    bmi_given: bool
    who_class: str
    who_class_label: str
    sex: str | None
    conditions: dict[str, int]
    gestation_weeks: float | None


@record
class ReachPoint:
    """How likely a transmit frequency is to reach the target in a patient like this one."""

    frequency_mhz: float
    probability: float


@record
class SpreadDriver:
    """One uncertain input and how much of the reach's spread it explains.

    ``reach_range_mhz`` is the 10th-90th centile of the reach now, ``known_range_mhz`` the same
    with this input known (its linear share removed from the draws); ``explains`` the share
    of the spread's variance that knowing it removes; ``action`` what would pin it down
    (:func:`planner.engine.spread.plan_draws`).
    """

    input: str
    explains: float
    reach_range_mhz: tuple[float, float]
    known_range_mhz: tuple[float, float]
    action: str


@record
class FrequencyBand:
    """Recommended band [floor, reach ceiling] on the chosen probe and the frequency to start
    at; None when no probe. [MHz]

    ``floor_basis`` says what sets ``low``: ``"detail"`` (the lowest frequency that resolves
    the exam's detail) or ``"probe"`` (the probe's lowest frequency: detail does not bind).
    ``start_basis`` says what sets ``start`` (:mod:`planner.engine.start`): ``"margin"`` (the
    reach of 80 % of patients like this one), ``"wall"``, ``"practice"`` or ``"probe"``; empty
    when the band is not feasible.
    """

    low: float | None
    high: float | None
    feasible: bool
    start: float | None = None
    start_basis: str = ""
    floor_basis: str = ""
    start_median: float | None = None
    """The start for the median patient of this habitus (no spread). [MHz]"""
    start_probability: float | None = None
    """Share of patients like this one that ``start`` reaches. [-]"""
    top_probability: float | None = None
    """Share of patients like this one that the band's top (``high``) reaches. [-]"""
    reach_probability: tuple[ReachPoint, ...] = ()
    """Probability of reaching on a grid across the probe's band, frequencies increasing."""
    drivers: tuple[SpreadDriver, ...] = ()
    """The uncertain inputs, most of the spread first (:mod:`planner.engine.spread`)."""


@record
class TransmitBand:
    """Transmit band of harmonic imaging. [MHz]"""

    low: float
    high: float


@record
class HarmonicDecision:
    """Whether harmonic imaging is advised, why in words, and why as a typed basis."""

    advised: bool
    reason: str
    basis: str = field(default="optional", metadata={"json": False})
    transmit_mhz: TransmitBand | None = field(default=None, metadata={"omit_none": True})


@record
class ProbeSummary:
    """The chosen probe: id, label, type, footprint fit and its band. [MHz]"""

    id: str
    label: str
    type: str
    fit: str
    band_mhz: tuple[float, float]


@record
class WindowBand:
    """Band shown for one window. [MHz]"""

    low: float
    high: float


@record
class WindowSummary:
    """One assessed window, ranked (loss at a common reference frequency)."""

    id: str
    name: str
    feasible: bool
    round_trip_loss_db: float
    reference_frequency_mhz: float
    depth_cm: float
    wall_mm: float
    reach_ceiling_mhz: float
    band_mhz: WindowBand | None
    probe: str | None
    position: str
    breathing: str
    adjunct: bool = False
    """A window practice keeps for when the standard ones fail (ranked after them)."""

    @property
    def label(self) -> str:
        """The name, marked when the window is an adjunct ("Posterior, prone (adjunct)")."""
        return f"{self.name} (adjunct)" if self.adjunct else self.name


@record
class ChosenWindow(WindowSummary):
    """The window the plan recommends, with its notes."""

    notes: str = ""


@record
class TiltDecision:
    """Specular tilt tolerance (None for diffuse targets) and handling advice. [deg]"""

    max_deviation_deg: float | None
    scan_plane_deg: float | None
    elevation_plane_deg: float | None
    advice: str


@record
class DisplayDecision:
    """Display depth and focal depth on the scanner's 1540 m/s scale. [cm]"""

    display_depth_cm: float
    focus_cm: float
    note: str


@record
class PlanLayer:
    """One layer of the chosen window's stack, skin first."""

    tissue: str
    label: str
    role: str
    thickness_cm: float
    speed_m_per_s: float
    attenuation_db_per_cm_mhz: float
    attenuation_exponent: float
    impedance_mrayl: float


@record
class InputsSummary:
    """What the plan was asked for: target, forced window, exam type, probe and policy files."""

    target: str
    window: str | None
    exam_type: str
    probes: str
    local_policy: str | None
    side: str | None = None
    """``"left"`` or ``"right"`` for a paired target; None for an unpaired one."""


@record
class Plan:
    """A complete plan for one patient and one target (JSON: :mod:`planner.engine.serialize`)."""

    target: TargetSummary
    patient: PatientSummary
    depth_cm: float
    displayed_depth_cm: float
    frequency_mhz: FrequencyBand
    harmonic: HarmonicDecision
    probe: ProbeSummary | None
    window: ChosenWindow
    windows: tuple[WindowSummary, ...]
    tilt: TiltDecision
    display: DisplayDecision
    depth_error_mm: float
    findings: tuple[Finding, ...]
    safety: tuple[Finding, ...]
    monitored_index: str
    pitfalls: tuple[str, ...]
    assumptions: tuple[str, ...]
    validity: tuple[ValidityFlag, ...]
    disclaimer: str
    layers: tuple[PlanLayer, ...]
    budget_db: float = 60.0
    doppler: DopplerPlan | None = None
    draft: bool = False
    inputs: InputsSummary | None = None
    depth_curves: DepthCurves | None = field(default=None, metadata={"json": False})
    """Round-trip loss against depth through the chosen window (the UI and HTML plots draw it)."""


    @property
    def target_title(self) -> str:
        """The target's name, with the side planned for a paired one ("Left kidney")."""
        from planner.library.names import sided_name
        return sided_name(self.target.name, self.inputs.side if self.inputs is not None else None)

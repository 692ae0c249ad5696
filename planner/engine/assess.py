"""Assess one window: reach, detail, probe, band, harmonic reach, tilt, depth error.

Every number comes from :mod:`planner.physics`; this module only arranges the inputs.
"""

from __future__ import annotations

import math
from dataclasses import field

import numpy as np

from planner.body.stack import LayerStack, StackBatch
from planner.engine.batch import (FIT_CODES, STRONG_TISSUES, WindowBatch, assess_batch,  # noqa: F401
                                  grouped_terms, loss_terms, probe_fit, signal_budget_db)
from planner.library.probes import Probe, ProbeInventory
from planner.library.targets import Window
from planner.physics import aberration, beam, broadband
from planner.physics.arrays import distinct
from planner.records import record


@record(slots=False)
class ProbeOption:
    """How one probe performs through one window."""

    probe: Probe
    fit: str                 # "fits", "aligned" (along the rib space), "blocked", "n/a"
    floor_mhz: float         # detail floor with this probe's aperture
    low_mhz: float
    high_mhz: float
    f_number: float
    feasible: bool

    @property
    def shown_band(self) -> tuple[float, float]:
        """Band to show: the recommended band, or the reachable part when detail is not reached. [MHz]"""
        if self.feasible:
            return self.low_mhz, self.high_mhz
        return self.probe.low_mhz, max(self.probe.low_mhz, self.high_mhz)


@record(slots=False)
class WindowAssessment:
    """Everything the rules need about one window."""

    window: Window
    stack: LayerStack
    budget_db: float
    interface_loss_db: float
    ceiling_mhz: float
    harmonic_ceiling_mhz: float
    displayed_depth_cm: float
    depth_error_mm: float
    fat_error_mm: float
    options: tuple[ProbeOption, ...]
    best: ProbeOption | None
    arrays: dict = field(default_factory=dict, repr=False, compare=False)
    memo: dict = field(default_factory=dict, repr=False, compare=False)
    sigma_ns: float = 0.0
    """rms arrival-time fluctuation of the body wall. [ns]"""
    bandwidth_fraction: float = 0.0
    """Fractional bandwidth of the chosen probe's pulse (0: narrowband). [-]"""
    low_edge_mhz: float = 0.0
    """Lower limit of the received spectrum (:data:`planner.engine.reach.RECEIVE_EDGE_MHZ`). [MHz]"""
    probe_ceiling_mhz: float = 0.0
    """Reach ceiling with the chosen probe's own pulse; ``ceiling_mhz`` is the window's (the
    highest of the probes the engine chooses from, :class:`planner.engine.batch.WindowBatch`). [MHz]"""

    @property
    def feasible(self) -> bool:
        return self.best is not None and self.best.feasible

    def _pulse(self, frequency_mhz: float) -> tuple[float, float]:
        memo = self.memo
        if frequency_mhz not in memo:
            if "terms" not in memo:
                memo["terms"] = grouped_terms(self.arrays, self.sigma_ns)
            k, y = memo["terms"]
            loss, centre = broadband.pulse_loss_db(k, y, float(frequency_mhz), self.bandwidth_fraction,
                                                   self.low_edge_mhz)
            memo[frequency_mhz] = (float(loss) + self.interface_loss_db, float(centre))
        return memo[frequency_mhz]

    def loss_db(self, frequency_mhz: float) -> float:
        """Round-trip broadband loss to the target at a centre frequency: layers, wall
        aberration and interfaces. [dB]"""
        return self._pulse(frequency_mhz)[0]

    def received_centre_mhz(self, frequency_mhz: float) -> float:
        """Mean frequency of the echo received from the target (downshifted). [MHz]"""
        return self._pulse(frequency_mhz)[1]

    def aberration_db(self, frequency_mhz: float) -> float:
        """Round-trip focusing loss of the body wall at a frequency (narrowband). [dB]"""
        return float(aberration.aberration_loss_db(frequency_mhz, self.sigma_ns))


def prime_losses(assessments, frequency_mhz: float) -> None:
    """Compute the loss and echo centre of several assessments at one frequency in a single
    vectorised call (their terms stacked over the union of exponents) and memoise them."""
    todo = [a for a in assessments if frequency_mhz not in a.memo]
    if len(todo) < 2:
        return
    terms = []
    for a in todo:
        if "terms" not in a.memo:
            a.memo["terms"] = grouped_terms(a.arrays, a.sigma_ns)
        terms.append(a.memo["terms"])
    exps = distinct(np.concatenate([y for _, y in terms]))
    k = np.zeros((len(todo), exps.size))
    for i, (ki, yi) in enumerate(terms):
        k[i, np.searchsorted(exps, yi)] = ki
    loss, centre = broadband.pulse_loss_db(
        k, exps, np.full(len(todo), float(frequency_mhz)),
        np.array([a.bandwidth_fraction for a in todo]), np.array([a.low_edge_mhz for a in todo]))
    for a, lo, c in zip(todo, loss.tolist(), centre.tolist()):
        a.memo[frequency_mhz] = (lo + a.interface_loss_db, c)


def option_at(batch: WindowBatch, row: int, index: int) -> ProbeOption:
    """One probe's performance for patient ``row`` of a window batch."""
    pa = batch.probes
    return ProbeOption(pa.probes[index], FIT_CODES[int(pa.fit[row, index])], float(pa.floor_mhz[row, index]),
                       float(pa.low_mhz[row, index]), float(pa.high_mhz[row, index]),
                       float(pa.f_number[row, index]), bool(pa.feasible[row, index]))


def assessment_at(batch: WindowBatch, row: int, window, stack: LayerStack | None = None) -> WindowAssessment:
    """The assessment of patient ``row`` of a window batch, as the rules read it."""
    options = tuple(option_at(batch, row, i) for i in range(len(batch.probes.probes)))
    best_index = int(batch.probes.best[row])
    stack = stack if stack is not None else batch.stacks.stack(row)
    arr = {k: (v[row] if k == "thickness_cm" else v) for k, v in batch.arrays.items()}
    budget = batch.budget_db if batch.probe_budget_db is None else float(batch.probe_budget_db[row])
    return WindowAssessment(window, stack, budget, batch.interface_loss_db,
                            float(batch.ceiling_mhz[row]), float(batch.harmonic_ceiling_mhz[row]),
                            float(batch.displayed_depth_cm[row]),
                            10.0 * float(batch.displayed_depth_cm[row] - batch.depth_cm[row]),
                            float(batch.fat_error_mm[row]), options,
                            options[best_index] if best_index >= 0 else None, arr,
                            sigma_ns=float(batch.sigma_ns[row]),
                            bandwidth_fraction=float(batch.bandwidth_fraction[row]),
                            low_edge_mhz=float(batch.low_edge_mhz[row]),
                            probe_ceiling_mhz=float(batch.probe_ceiling_mhz[row]))


def assess_window(stack: LayerStack, window, target, inventory: ProbeInventory) -> WindowAssessment:
    """Compute reach, detail floor, probe options and depth errors for one window (one row)."""
    batch = StackBatch(window_id=stack.window_id, wall_id=stack.wall_id, layers=stack.layers,
                       thickness_cm=np.array([[lay.thickness_cm for lay in stack.layers]]),
                       wall_cm=np.array([stack.wall_cm]), wall_low_cm=np.array([stack.wall_band_cm[0]]),
                       wall_high_cm=np.array([stack.wall_band_cm[1]]), valid=np.array([True]),
                       above_path_cm=np.array([stack.wall_cm]), notes=stack.notes)
    return assessment_at(assess_batch(batch, target, inventory), 0, window, stack)


def finest_detail_mm(option: ProbeOption, frequency_mhz: float) -> float:
    """Finest detail resolvable at a frequency with a probe option: max(axial, lateral). [mm]"""
    if frequency_mhz <= 0 or not math.isfinite(frequency_mhz):
        return math.inf
    return float(max(beam.axial_resolution_mm(frequency_mhz, option.probe.pulse_cycles),
                     beam.lateral_resolution_mm(frequency_mhz, option.f_number)))

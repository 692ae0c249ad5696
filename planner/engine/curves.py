"""Round-trip loss against depth along the chosen window: the curves the plan carries.

The echo from depth ``z`` has crossed every layer above ``z`` twice, so its single-frequency
round-trip loss is

``L(z, f) = 2 * sum_i alpha0_i * f**y_i * min(d_i, max(0, z - z_i)) + interface losses``

and the plan's curves integrate it over the probe's pulse spectrum, with the focusing loss of
the wall layers crossed so far (:mod:`planner.physics.broadband`, :mod:`planner.physics.aberration`);

where layer ``i`` starts at ``z_i`` and is ``d_i`` thick, and each interface above ``z`` adds
its two-way intensity transmission loss ``-2 * 10 log10 T`` (normal incidence). At the bottom
of the stack this is exactly the loss the engine compares with the signal budget, so the
curve of the band's top frequency meets the budget line at the target. The engine computes
these curves once (:func:`plan_depth_profile`); the terminal UI and the HTML plot draw the
same frequencies from the plan.

References
----------
Kremkau2015 (attenuation chapter); Szabo2004 ch. 4 (power law); ALevelPhysics (interface
transmission).
"""

from __future__ import annotations

import math

from dataclasses import field
from typing import Sequence

import numpy as np

from planner.physics import aberration, broadband
from planner.physics.arrays import distinct
from planner.physics.interfaces import intensity_transmission_normal
from planner.records import record

PROFILE_POINTS: int = 81
"""Evenly spaced sample depths of a plan's curves (layer boundaries are added exactly)."""


@record(slots=False)
class LayerAcoustics:
    """The acoustic properties of one layer that the loss profile needs.

    Attributes
    ----------
    label : str
        What the layer is (for the plot legend and tables).
    thickness_cm : float
        Layer thickness. [cm]
    attenuation_db_per_cm_mhz : float
        alpha0, one way. [dB cm^-1 MHz^-y]
    attenuation_exponent : float
        Power-law exponent y. [-]
    impedance_mrayl : float or None
        Characteristic impedance; None leaves out the interface losses. [MRayl]
    """

    label: str
    thickness_cm: float
    attenuation_db_per_cm_mhz: float
    attenuation_exponent: float
    impedance_mrayl: float | None = None
    aberrating: bool = False
    """True for body-wall fat and muscle (the phase screen, :mod:`planner.physics.aberration`)."""


@record(slots=False)
class LossProfile:
    """Round-trip loss against depth for a few frequencies.

    Attributes
    ----------
    depth_cm : tuple of float
        Sample depths from the skin (0) to the bottom of the stack. [cm]
    frequencies_mhz : tuple of float
        The frequencies, one curve each. [MHz]
    loss_db : tuple of tuple of float
        ``loss_db[k][j]`` is the round-trip loss at ``depth_cm[j]`` and
        ``frequencies_mhz[k]``. [dB]
    boundaries_cm : tuple of float
        Depths of the layer boundaries below the skin. [cm]
    target_depth_cm : float
        Depth of the target (the bottom of the stack). [cm]
    budget_db : float or None
        The usable round-trip signal budget, when known. [dB]
    """

    depth_cm: tuple[float, ...]
    frequencies_mhz: tuple[float, ...]
    loss_db: tuple[tuple[float, ...], ...]
    boundaries_cm: tuple[float, ...]
    target_depth_cm: float
    budget_db: float | None = None

    def loss_at_target_db(self, frequency_index: int) -> float:
        """Round-trip loss at the target for ``frequencies_mhz[frequency_index]``. [dB]"""
        return self.loss_db[frequency_index][-1]

    def reach_cm(self, frequency_index: int) -> float | None:
        """Depth where the loss first reaches the budget (None if it never does). [cm]"""
        if self.budget_db is None:
            return None
        loss = np.asarray(self.loss_db[frequency_index])
        depth = np.asarray(self.depth_cm)
        above = np.nonzero(loss >= self.budget_db)[0]
        if above.size == 0:
            return None
        j = int(above[0])
        if j == 0:
            return 0.0
        l0, l1 = loss[j - 1], loss[j]
        if l1 == l0:
            return float(depth[j])
        return float(depth[j - 1] + (self.budget_db - l0) * (depth[j] - depth[j - 1]) / (l1 - l0))

    def to_dict(self) -> dict:
        """JSON-ready form (loss rounded to 0.01 dB, depths to 0.001 cm)."""
        return {"depth_cm": [round(z, 3) for z in self.depth_cm],
                "frequencies_mhz": list(self.frequencies_mhz),
                "loss_db": [[round(v, 2) for v in row] for row in self.loss_db],
                "boundaries_cm": [round(b, 3) for b in self.boundaries_cm],
                "target_depth_cm": round(self.target_depth_cm, 3), "budget_db": self.budget_db}


CEILING_TOLERANCE_MHZ: float = 0.002
"""Margin below a solved reach ceiling before a plotted frequency is rounded down (the
root finder stops within about 1e-3 MHz). [MHz]"""


def loss_profile(layers: Sequence[LayerAcoustics], frequencies_mhz: Sequence[float], *,
                 budget_db: float | None = None, points: int = PROFILE_POINTS,
                 bandwidth_fraction: float = 0.0, low_edge_mhz: float = 0.0) -> LossProfile:
    """Round-trip loss against depth through a layer stack for several frequencies.

    With a bandwidth the loss is the broadband energy loss of a Gaussian pulse of that centre
    frequency (:func:`planner.physics.broadband.broadband_loss_db`), and the aberrating wall
    layers crossed so far add their focusing loss (:mod:`planner.physics.aberration`); with 0
    it is the single-frequency sum above.

    Raises
    ------
    ValueError
        For an empty stack, a stack of zero depth, no frequencies, a frequency that is not
        finite and > 0, or ``points`` < 2.
    """
    if not layers:
        raise ValueError("layers must hold at least one layer, got none")
    if isinstance(points, bool) or not isinstance(points, int) or points < 2:
        raise ValueError(f"points must be an integer >= 2, got {points!r}")
    freqs = np.asarray(list(frequencies_mhz), dtype=float)
    if freqs.size == 0 or not np.all(np.isfinite(freqs)) or np.any(freqs <= 0):
        raise ValueError(f"frequencies_mhz must be one or more finite values > 0, "
                         f"got {list(frequencies_mhz)!r}")
    thick = np.array([lay.thickness_cm for lay in layers], dtype=float)
    total = float(thick.sum())
    if total <= 0:
        raise ValueError("the layers add up to zero depth")
    tops = np.concatenate(([0.0], np.cumsum(thick)[:-1]))
    bottoms = tops + thick
    depth = distinct(np.concatenate((np.linspace(0.0, total, points), bottoms)))
    crossed = np.clip(depth[:, None] - tops[None, :], 0.0, thick[None, :])       # (n_z, n_layers)
    k = 2.0 * crossed * np.array([lay.attenuation_db_per_cm_mhz for lay in layers])[None, :]
    wall = np.array([lay.aberrating for lay in layers], dtype=bool)
    sigma = aberration.arrival_time_rms_ns(10.0 * (crossed * wall[None, :]).sum(axis=1))
    k = np.concatenate([k, aberration.round_trip_coefficient_db_per_mhz2(sigma)[:, None]], axis=1)
    y = np.append([lay.attenuation_exponent for lay in layers], 2.0)
    loss = broadband.broadband_loss_db(k[:, None, :], y, freqs[None, :], bandwidth_fraction,
                                       low_edge_mhz)[0]                         # (n_z, n_f)
    loss = loss + _interface_steps_db(layers, tops, depth)[:, None]
    return LossProfile(
        depth_cm=tuple(depth.tolist()),
        frequencies_mhz=tuple(freqs.tolist()),
        loss_db=tuple(tuple(row) for row in loss.T.tolist()),
        boundaries_cm=tuple(bottoms[:-1].tolist()),
        target_depth_cm=total, budget_db=None if budget_db is None else float(budget_db))


def _interface_steps_db(layers: Sequence[LayerAcoustics], tops: np.ndarray,
                        depth: np.ndarray) -> np.ndarray:
    """Cumulative two-way interface loss at each depth (an interface counts once passed). [dB]"""
    pairs = [(i, a.impedance_mrayl, b.impedance_mrayl) for i, (a, b) in enumerate(zip(layers, layers[1:]), 1)
             if a.impedance_mrayl is not None and b.impedance_mrayl is not None]
    if not pairs:
        return np.zeros_like(depth)
    index = np.array([i for i, _, _ in pairs])
    transmission = intensity_transmission_normal(np.array([z for _, z, _ in pairs]),
                                                 np.array([z for _, _, z in pairs]))
    step_db = -2.0 * 10.0 * np.log10(transmission)                               # (n_interfaces,)
    return (depth[:, None] > tops[index][None, :]) @ step_db


def candidate_frequencies_mhz(band_low: float | None, band_high: float | None,
                              ceiling_mhz: float | None,
                              probe_band_mhz: tuple[float, float] | None) -> tuple[float, ...]:
    """Two or three frequencies worth comparing on the plot. [MHz]

    The low and high ends of the recommended band (the high end no higher than the exact
    reach ceiling) and, when the probe goes higher, a frequency above the band (to show what
    the budget forbids). Without a band, the window's reach ceiling and the probe's lowest
    frequency are used.
    """
    picks: list[float] = []
    if band_low and band_high:
        top = float(band_high)
        if ceiling_mhz and float(ceiling_mhz) < top:
            # the band's end is rounded; the ceiling is exact to the solver's tolerance
            top = float(ceiling_mhz) - CEILING_TOLERANCE_MHZ
        picks += [float(band_low), top]
    else:
        if ceiling_mhz:
            picks.append(float(ceiling_mhz) - CEILING_TOLERANCE_MHZ)
        if probe_band_mhz:
            picks.append(float(probe_band_mhz[0]))
    top_probe = float(probe_band_mhz[1]) if probe_band_mhz else None
    highest = max(picks) if picks else 3.0
    above = (min(top_probe, highest * 1.6) if top_probe is not None and top_probe > highest * 1.1
             else highest * 1.6)
    picks.append(above)
    out: list[float] = []
    for f in sorted(picks):
        f = math.floor(f * 100.0 + 1e-9) / 100.0      # down: a top rounded up would exceed the ceiling
        if f > 0 and all(abs(f - g) >= 0.1 for g in out):
            out.append(f)
    return tuple(out[:3])


def stack_acoustics(stack) -> list[LayerAcoustics]:
    """The layers of a :class:`planner.body.stack.LayerStack` as the profile needs them."""
    from planner.engine.batch import ABERRATING_ROLES
    return [LayerAcoustics(lay.label, lay.thickness_cm, lay.tissue.attenuation_db_per_cm_mhz,
                           lay.tissue.attenuation_exponent, lay.tissue.impedance_mrayl,
                           lay.role in ABERRATING_ROLES)
            for lay in stack.layers]


@record(slots=False)
class DepthCurves:
    """The curves a plan carries: its chosen window's layers, the frequencies to compare and the
    budget, fixed by the engine; the loss is sampled when a view first draws it (cached).

    Attributes
    ----------
    layers : tuple of LayerAcoustics
        The chosen window's stack, probe first.
    frequencies_mhz : tuple of float
        The band's ends and one frequency above it (:func:`candidate_frequencies_mhz`). [MHz]
    budget_db : float
        The round-trip signal budget of the plan. [dB]
    bandwidth_fraction, low_edge_mhz : float
        The chosen probe's pulse: fractional bandwidth and lowest frequency.
    """

    layers: tuple[LayerAcoustics, ...]
    frequencies_mhz: tuple[float, ...]
    budget_db: float
    bandwidth_fraction: float = 0.0
    low_edge_mhz: float = 0.0
    _samples: dict = field(default_factory=dict, compare=False, repr=False)

    def profile(self, points: int = PROFILE_POINTS) -> LossProfile:
        """Loss against depth at ``points`` evenly spaced depths (plus the layer boundaries)."""
        if points not in self._samples:
            self._samples[points] = loss_profile(self.layers, self.frequencies_mhz,
                                                 budget_db=self.budget_db, points=points,
                                                 bandwidth_fraction=self.bandwidth_fraction,
                                                 low_edge_mhz=self.low_edge_mhz)
        return self._samples[points]


def plan_depth_curves(assessment, band_low: float | None, band_high: float | None) -> DepthCurves | None:
    """The curves of a plan: loss against depth through the chosen window at the band's ends
    and one frequency above it (None when the stack has no depth)."""
    option = assessment.best
    probe_band = (option.probe.low_mhz, option.probe.high_mhz) if option is not None else None
    ceiling = assessment.ceiling_mhz if option is None else assessment.probe_ceiling_mhz
    freqs = candidate_frequencies_mhz(band_low, band_high, ceiling, probe_band)
    if not freqs or assessment.stack.depth_cm <= 0:
        return None
    return DepthCurves(tuple(stack_acoustics(assessment.stack)), freqs, float(assessment.budget_db),
                       float(assessment.bandwidth_fraction), float(assessment.low_edge_mhz))

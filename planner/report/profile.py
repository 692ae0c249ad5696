"""Round-trip loss against depth along a plan's layer stack (for the depth-profile plot).

A plan's chosen window is a stack of layers (skin, fat, muscle, organ ...). The echo
from depth ``z`` has crossed every layer above ``z`` twice, so its round-trip loss is

``L(z, f) = 2 * sum_i alpha0_i * f**y_i * min(d_i, max(0, z - z_i)) + interface losses``

where layer ``i`` starts at ``z_i`` and is ``d_i`` thick, and each interface above ``z``
adds its two-way intensity transmission loss ``-2 * 10 log10 T`` (normal incidence). At
the bottom of the stack this is exactly the loss the engine compares with the signal
budget, so the curve of the highest usable frequency meets the budget line at the target.

Everything here is pure: numbers in, numbers out, no user interface.

References
----------
Kremkau2015 (attenuation chapter); Szabo2004 ch. 4 (power law); TeachingAttenuationRule
(0.5 dB/cm/MHz, one way); RadiologyPhysicsSummary (penetration about 40/f cm, i.e. a
40 dB round-trip budget at 0.5 dB/cm/MHz); ALevelPhysics (interface transmission).
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from typing import Any, Mapping, Sequence

import numpy as np

from planner.engine.model import Plan, PlanLayer
from planner.physics import attenuation
from planner.physics.interfaces import intensity_transmission_normal

__all__ = ["LayerAcoustics", "LossProfile", "candidate_frequencies_mhz", "layer_acoustics",
           "loss_profile", "plan_budget_db", "plan_loss_profile"]

_STEATOSIS_ID = re.compile(r"^liver_steatosis_(\d)$")


@dataclass(frozen=True)
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


@dataclass(frozen=True)
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


def layer_acoustics(layer: Mapping[str, Any] | PlanLayer) -> LayerAcoustics:
    """Acoustic properties of one layer of ``plan.layers``.

    A layer that carries ``attenuation_db_per_cm_mhz`` (and optionally
    ``attenuation_exponent`` and ``impedance_mrayl``) is used as given. Otherwise its
    ``tissue`` id is looked up in the tissue table; the steatotic-liver ids
    ``liver_steatosis_<grade>`` come from the body model's steatosis grades.

    Raises
    ------
    ValueError
        When the layer has no usable thickness or its tissue is unknown.
    """
    if isinstance(layer, PlanLayer):
        return LayerAcoustics(layer.label or layer.tissue, float(layer.thickness_cm),
                              float(layer.attenuation_db_per_cm_mhz),
                              float(layer.attenuation_exponent), float(layer.impedance_mrayl))
    thickness = layer.get("thickness_cm")
    if isinstance(thickness, bool) or not isinstance(thickness, (int, float)) \
            or not np.isfinite(thickness) or thickness < 0:
        raise ValueError(f"layer thickness_cm must be a finite number >= 0, got {thickness!r}")
    label = str(layer.get("label") or layer.get("tissue") or "layer")
    if "attenuation_db_per_cm_mhz" in layer:
        return LayerAcoustics(label, float(thickness), float(layer["attenuation_db_per_cm_mhz"]),
                              float(layer.get("attenuation_exponent", 1.0)),
                              None if layer.get("impedance_mrayl") is None
                              else float(layer["impedance_mrayl"]))
    tissue = _tissue(str(layer.get("tissue", "")))
    return LayerAcoustics(label, float(thickness), tissue.attenuation_db_per_cm_mhz,
                          tissue.attenuation_exponent, tissue.impedance_mrayl)


def _tissue(tissue_id: str):
    from planner.body.stack import steatotic_liver
    from planner.physics.tissues import get_tissue, load_tissues
    match = _STEATOSIS_ID.match(tissue_id)
    if match:
        grade = int(match.group(1))
        if grade not in (1, 2, 3):
            raise ValueError(f"steatosis grade must be 1, 2 or 3, got {grade} in {tissue_id!r}")
        return steatotic_liver(grade)
    if tissue_id not in load_tissues():
        raise ValueError(f"unknown tissue {tissue_id!r} in the plan's layers")
    return get_tissue(tissue_id)


def loss_profile(layers: Sequence[LayerAcoustics], frequencies_mhz: Sequence[float], *,
                 budget_db: float | None = None, points: int = 121) -> LossProfile:
    """Round-trip loss against depth through a layer stack for several frequencies.

    Parameters
    ----------
    layers : sequence of LayerAcoustics
        The stack, probe first.
    frequencies_mhz : sequence of float
        Frequencies, one curve each. [MHz]
    budget_db : float, optional
        Usable round-trip budget, stored for the plot. [dB]
    points : int
        Number of evenly spaced depths (layer boundaries are added exactly).

    Returns
    -------
    LossProfile

    Raises
    ------
    ValueError
        For an empty stack, a stack of zero depth, no frequencies, a frequency that is not
        finite and > 0, or ``points`` < 2.

    Notes
    -----
    ``L(z, f) = 2 sum_i alpha0_i f^y_i min(d_i, max(0, z - z_i))`` plus
    ``-2 * 10 log10 T_i`` for each interface above ``z`` (Kremkau2015; ALevelPhysics).
    The attenuation coefficients come from :func:`planner.physics.attenuation.attenuation_db_per_cm`.
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
    depth = np.unique(np.concatenate((np.linspace(0.0, total, points), bottoms)))
    alpha = attenuation.attenuation_db_per_cm(
        freqs[:, None], np.array([lay.attenuation_db_per_cm_mhz for lay in layers])[None, :],
        np.array([lay.attenuation_exponent for lay in layers])[None, :])        # (n_f, n_layers)
    crossed = np.clip(depth[:, None] - tops[None, :], 0.0, thick[None, :])       # (n_z, n_layers)
    loss = 2.0 * crossed @ alpha.T                                              # (n_z, n_f)
    loss = loss + _interface_steps_db(layers, tops, depth)[:, None]
    return LossProfile(
        depth_cm=tuple(float(z) for z in depth),
        frequencies_mhz=tuple(float(f) for f in freqs),
        loss_db=tuple(tuple(float(v) for v in loss[:, k]) for k in range(freqs.size)),
        boundaries_cm=tuple(float(b) for b in bottoms[:-1]),
        target_depth_cm=total, budget_db=None if budget_db is None else float(budget_db))


def _interface_steps_db(layers: Sequence[LayerAcoustics], tops: np.ndarray,
                        depth: np.ndarray) -> np.ndarray:
    """Cumulative two-way interface loss at each depth (an interface counts once passed). [dB]"""
    steps = np.zeros_like(depth)
    for i in range(1, len(layers)):
        z1, z2 = layers[i - 1].impedance_mrayl, layers[i].impedance_mrayl
        if z1 is None or z2 is None:
            continue
        transmission = float(intensity_transmission_normal(z1, z2))
        steps += np.where(depth > tops[i], -2.0 * 10.0 * np.log10(transmission), 0.0)
    return steps


def plan_budget_db(plan: Plan) -> float:
    """The signal budget the plan used. [dB]"""
    return float(plan.budget_db)


def candidate_frequencies_mhz(plan: Plan) -> tuple[float, ...]:
    """Two or three frequencies worth comparing on the plot. [MHz]

    The low and high ends of the recommended band (the high end no higher than the exact
    reach ceiling) and, when the probe goes higher, a frequency above the band (to show
    what the budget forbids). Without a band, the
    window's reach ceiling and the probe's band ends are used.
    """
    band = plan.frequency_mhz
    probe_band: tuple[float, ...] = plan.probe.band_mhz if plan.probe else ()
    picks: list[float] = []
    low, high = band.low, band.high
    ceiling = plan.window.reach_ceiling_mhz
    if low and high:
        top = float(high)
        if ceiling and float(ceiling) < top:
            top = float(ceiling)          # the band's end is rounded; the ceiling is exact
        picks += [float(low), top]
    else:
        if ceiling:
            picks.append(float(ceiling))
        picks += [float(f) for f in probe_band[:1]]
    top_probe = float(probe_band[1]) if len(probe_band) > 1 else None
    highest = max(picks) if picks else 3.0
    above = min(top_probe, highest * 1.6) if top_probe is not None and top_probe > highest * 1.1 \
        else highest * 1.6
    picks.append(above)
    out: list[float] = []
    for f in sorted(picks):
        f = round(f, 2)
        if f > 0 and all(abs(f - g) >= 0.1 for g in out):
            out.append(f)
    return tuple(out[:3])


def plan_loss_profile(plan: Plan, frequencies_mhz: Sequence[float] | None = None,
                      points: int = 121) -> LossProfile:
    """The loss profile along a plan's chosen window.

    Parameters
    ----------
    plan : Plan
        A typed plan (its ``layers``, band, probe, window and budget are used).
    frequencies_mhz : sequence of float, optional
        Defaults to :func:`candidate_frequencies_mhz`. [MHz]
    points : int
        Number of evenly spaced sample depths.
    """
    layers = [layer_acoustics(layer) for layer in plan.layers]
    freqs = list(frequencies_mhz) if frequencies_mhz is not None else \
        list(candidate_frequencies_mhz(plan))
    return loss_profile(layers, freqs, budget_db=plan_budget_db(plan), points=points)

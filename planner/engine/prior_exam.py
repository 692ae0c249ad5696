"""Prior-exam calibration: a patient's effective organ attenuation from where speckle faded.

At a previous exam the target organ's speckle faded at ``fade_cm`` from the skin with the
pulse centred at ``frequency_mhz``. In the engine's model that depth is where the broadband
round-trip loss (wall layers, wall aberration, the organ, interfaces;
:func:`planner.engine.reach.grouped_terms`, :func:`planner.physics.broadband.pulse_loss_db`)
uses up the probe's diffuse budget. The body wall is held at its estimate and the unknown is a
scale ``s`` on the attenuation coefficient of the **target organ's tissue** (the layers of the
target's own tissue): the wall is estimated from BMI or measured, while the organ's
attenuation varies most between patients (steatosis raises liver attenuation to about
0.7-1.0 dB/cm/MHz, fibrosis less; AttenuationSteatosisReview2022), and the organ makes most of
the path to a fade deep in it. ``s`` is solved by bisection (the loss rises with s) in
``[SCALE_MIN, SCALE_MAX]``; a fade depth that needs less than :data:`SCALE_MIN` (deeper than the
model allows) or more than :data:`SCALE_MAX` is refused with one line.
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np

from planner.errors import InputError
from planner.physics import broadband
from planner.physics.constants import SIGNAL_BUDGET_DIFFUSE_DB
from planner.records import record

__all__ = ["SCALE_MAX", "SCALE_MIN", "PriorCalibration", "organ_columns", "fade_depth_cm",
           "fade_loss_db", "prior_pair", "prior_problems", "scale_layers", "solve_prior"]

SCALE_MIN: float = 0.5
"""Smallest organ-attenuation scale accepted: half the population value, beyond the +/-30-50 %
tolerance the plans state for tissue attenuation (common practice). [-]"""
SCALE_MAX: float = 3.0
"""Largest scale accepted: three times the population value (1.5 dB/cm/MHz for liver), above
the severe-steatosis values reported (AttenuationSteatosisReview2022; common practice). [-]"""

STEATOSIS_S1_CUTOFF: float = 0.63
"""Lowest reported attenuation cut-off for steatosis grade S1 (0.63-0.70 across systems;
AttenuationSteatosisReview2022, from memory). [dB cm^-1 MHz^-1]"""
STEATOSIS_SEVERE: float = 0.80
"""Attenuation from which moderate to severe steatosis is reported (0.8-0.9;
AttenuationSteatosisReview2022, from memory). [dB cm^-1 MHz^-1]"""

_STEPS = 50


def prior_pair(frequency_mhz: float | None, fade_cm: float | None) -> tuple[float, float] | None:
    """The prior exam's (frequency, fade depth): both or neither (InputError, one line)."""
    if frequency_mhz is None and fade_cm is None:
        return None
    if frequency_mhz is None or fade_cm is None:
        given, missing = ("prior fade depth (--prior-fade-cm)", "prior frequency (--prior-frequency-mhz)") \
            if frequency_mhz is None else \
            ("prior frequency (--prior-frequency-mhz)", "prior fade depth (--prior-fade-cm)")
        raise InputError(f"a {given} needs the {missing} too: the prior exam's frequency and "
                         "fade depth go together")
    return float(frequency_mhz), float(fade_cm)


def prior_problems(frequency_mhz: float | None, fade_cm: float | None) -> dict[str, str]:
    """Problems of the two prior-exam inputs by field name (for forms and plan files)."""
    import math
    values = {"prior_frequency_mhz": frequency_mhz, "prior_fade_cm": fade_cm}
    given = [n for n, v in values.items() if v is not None]
    if len(given) == 1:
        other = "prior_fade_cm" if given[0] == "prior_frequency_mhz" else "prior_frequency_mhz"
        return {other: "give the prior exam's frequency and fade depth together"}
    return {n: f"{n} must be a finite number above 0, got {v:g}" for n, v in values.items()
            if v is not None and (not math.isfinite(v) or v <= 0)}


@record(slots=False)
class PriorCalibration:
    """The solved scale and what it implies (units in the names)."""

    frequency_mhz: float
    fade_cm: float
    scale: float
    tissue_id: str
    tissue_name: str
    population_db_per_cm_mhz: float
    exponent: float
    budget_db: float

    @property
    def organ(self) -> str:
        """The organ's tissue in words ("liver" for every liver row)."""
        return self.tissue_name.split(" (")[0].split(",")[0].lower()

    @property
    def effective_db_per_cm_mhz(self) -> float:
        """alpha0 of the organ for this patient (at 1 MHz, exponent unchanged). [dB cm^-1 MHz^-y]"""
        return self.scale * self.population_db_per_cm_mhz

    @property
    def slope_db_per_cm_mhz(self) -> float:
        """The attenuation per MHz at the prior frequency, ``alpha0 s f^(y-1)``, the quantity
        attenuation-coefficient measurements report (a slope near 3 MHz). [dB cm^-1 MHz^-1]"""
        return self.effective_db_per_cm_mhz * self.frequency_mhz ** (self.exponent - 1.0)

    def implication(self) -> str:
        """What the effective attenuation implies, with its source; not a diagnosis."""
        a = round(self.slope_db_per_cm_mhz, 2)     # judged as shown: 0.7999 reads 0.80
        what = f"effective {self.organ} attenuation {a:.2f} dB/cm/MHz at " \
               f"{self.frequency_mhz:g} MHz ({self.scale:.2f} x the population value)"
        if not self.tissue_id.startswith("liver"):
            return what
        if a >= STEATOSIS_SEVERE:
            band = "in the range reported for moderate to severe steatosis (0.8 and above)"
        elif a >= STEATOSIS_S1_CUTOFF:
            band = "in the range reported for mild steatosis (S1 cut-offs 0.63-0.70)"
        else:
            band = "below the cut-offs reported for steatosis (S1 0.63-0.70)"
        return f"{what}: {band} (AttenuationSteatosisReview2022); a pointer, not a diagnosis"


def organ_columns(layers, target_tissue: str) -> np.ndarray:
    """Which layers are the target organ's tissue (a steatosis variant counts). (n,) bool"""
    return np.array([lay.tissue.id == target_tissue or lay.tissue.id.startswith(target_tissue + "_")
                     for lay in layers], dtype=bool)


def _path_to(thickness: np.ndarray, organ: np.ndarray, fade_cm: float, shown: str) -> np.ndarray:
    """Layer thicknesses down to ``fade_cm`` (the last organ layer extended when deeper). [cm]"""
    top = np.concatenate([[0.0], np.cumsum(thickness)[:-1]])
    first = float(top[organ][0])
    if fade_cm <= first:
        raise InputError(f"argument --prior-fade-cm: {fade_cm:g} cm is not below the top of the "
                         f"{shown} ({first:.1f} cm from the skin at this window)")
    t = np.clip(fade_cm - top, 0.0, thickness)
    extra = fade_cm - float(thickness.sum())
    if extra > 0:
        if not organ[-1]:
            raise InputError(f"argument --prior-fade-cm: {fade_cm:g} cm lies below the {shown} "
                             f"path of this window (it ends at {thickness.sum():.1f} cm)")
        t[-1] += extra
    return t


def fade_loss_db(assessment, organ: np.ndarray, thickness: np.ndarray, scale, frequency_mhz: float):
    """Round-trip loss at the fade depth for organ scales ``scale`` (array). [dB]"""
    from planner.engine.reach import grouped_terms
    s = np.atleast_1d(np.asarray(scale, dtype=float))
    alpha = np.asarray(assessment.arrays["attenuation_db_per_cm_mhz"], dtype=float)
    arrays = {"thickness_cm": np.broadcast_to(thickness, (s.size, thickness.size)) * 1.0,
              "attenuation_db_per_cm_mhz": alpha,
              "attenuation_exponent": np.asarray(assessment.arrays["attenuation_exponent"], float)}
    # k = 2 alpha d: scaling the organ's path length by s scales its loss as s alpha would
    arrays["thickness_cm"] = arrays["thickness_cm"] * np.where(organ[None, :], s[:, None], 1.0)
    k, y = grouped_terms(arrays, np.full(s.size, assessment.sigma_ns))
    loss, _ = broadband.pulse_loss_db(k, y, np.full(s.size, float(frequency_mhz)),
                                      assessment.bandwidth_fraction, assessment.low_edge_mhz)
    return loss + assessment.interface_loss_db


def solve_prior(assessment, target, frequency_mhz: float, fade_cm: float) -> PriorCalibration:
    """Solve the organ-attenuation scale that puts the fade at ``fade_cm`` (one line on failure)."""
    if not 0.5 <= frequency_mhz <= 30:
        raise InputError(f"argument --prior-frequency-mhz: must be 0.5-30 MHz, got {frequency_mhz:g}")
    if not 0 < fade_cm <= 40:
        raise InputError(f"argument --prior-fade-cm: must be above 0 and at most 40 cm, got {fade_cm:g}")
    layers = assessment.stack.layers
    organ = organ_columns(layers, target.target_tissue)
    shown = target.target_tissue.replace("_", " ")
    if not organ.any():
        raise InputError(f"prior-exam calibration needs the target's own tissue ({shown}) on the "
                         f"path; {target.id} at this window has none")
    thickness = np.array([lay.thickness_cm for lay in layers], dtype=float)
    t = _path_to(thickness, organ, fade_cm, shown)
    probe = assessment.best.probe if assessment.best is not None else None
    own = getattr(probe, "budget_db", None)
    budget = float(own) if own is not None else SIGNAL_BUDGET_DIFFUSE_DB.value
    lo_hi = fade_loss_db(assessment, organ, t, [SCALE_MIN, SCALE_MAX], frequency_mhz)
    if lo_hi[0] > budget:
        raise InputError(
            f"a fade at {fade_cm:g} cm at {frequency_mhz:g} MHz is deeper than the model allows: even "
            f"{SCALE_MIN:g} x the population {shown} attenuation loses {lo_hi[0]:.0f} dB there, more "
            f"than the {budget:g} dB budget; check the depth, the frequency or the probe's QA budget")
    if lo_hi[1] < budget:
        raise InputError(
            f"a fade at {fade_cm:g} cm at {frequency_mhz:g} MHz is shallower than the model allows: it "
            f"needs more than {SCALE_MAX:g} x the population {shown} attenuation; a fade that shallow "
            "more likely comes from settings (gain, focus, depth) or shadowing than from the tissue")
    lo, hi = SCALE_MIN, SCALE_MAX
    for _ in range(_STEPS):
        mid = 0.5 * (lo + hi)
        if fade_loss_db(assessment, organ, t, mid, frequency_mhz)[0] >= budget:
            hi = mid
        else:
            lo = mid
    tissue = layers[int(np.argmax(organ))].tissue
    return PriorCalibration(float(frequency_mhz), float(fade_cm), 0.5 * (lo + hi), tissue.id,
                            tissue.name, tissue.attenuation_db_per_cm_mhz, tissue.attenuation_exponent,
                            budget)


def fade_depth_cm(assessment, target, frequency_mhz: float, scale: float = 1.0,
                  budget_db: float | None = None, max_cm: float = 40.0) -> float:
    """The forward model: the depth from the skin at which the organ's speckle fades at a
    frequency for an organ-attenuation scale (bisection; the inverse of :func:`solve_prior`). [cm]"""
    layers = assessment.stack.layers
    organ = organ_columns(layers, target.target_tissue)
    thickness = np.array([lay.thickness_cm for lay in layers], dtype=float)
    if budget_db is None:
        probe = assessment.best.probe if assessment.best is not None else None
        own = getattr(probe, "budget_db", None)
        budget_db = float(own) if own is not None else SIGNAL_BUDGET_DIFFUSE_DB.value
    top = float(np.concatenate([[0.0], np.cumsum(thickness)])[int(np.argmax(organ))])
    shown = target.target_tissue
    lo, hi = top + 1e-6, max_cm
    for _ in range(_STEPS):
        mid = 0.5 * (lo + hi)
        loss = fade_loss_db(assessment, organ, _path_to(thickness, organ, mid, shown), scale,
                            frequency_mhz)[0]
        if loss >= budget_db:
            hi = mid
        else:
            lo = mid
    return 0.5 * (lo + hi)


def scale_layers(batch, target_tissue: str, scale: float):
    """A stack batch with the target organ's attenuation scaled (the replanned patient)."""
    organ = organ_columns(batch.layers, target_tissue)
    layers = tuple(replace(lay, tissue=replace(lay.tissue, attenuation_db_per_cm_mhz=
                                               lay.tissue.attenuation_db_per_cm_mhz * scale))
                   if o else lay for lay, o in zip(batch.layers, organ))
    return replace(batch, layers=layers)

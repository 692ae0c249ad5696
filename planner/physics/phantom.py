"""Phantom depth of penetration and the round-trip budget it implies (broadband pulse model).

A QA phantom (IEC61391: tissue-mimicking material, 1540 m/s, 0.5 or 0.7 dB cm^-1 MHz^-1,
exponent 1) is uniform: no body-wall aberration and no interfaces inside it. Its depth of
penetration (DOP) is the depth at which the background speckle disappears into noise at
maximum output and gain (IEC61391; Goodsitt1998). At that depth the speckle echo has just
used up the system's usable round trip, so the budget the engine uses in patients is

``D = L(f0, B; k = 2 alpha0 DOP, y)``

the broadband round-trip loss of the probe's Gaussian pulse (centre f0, fractional -6 dB
bandwidth B) through ``DOP`` cm of phantom (:func:`planner.physics.broadband.broadband_loss_db`,
the same loss the engine integrates in patients; derived). The inverse,
:func:`penetration_cm`, is the depth at which a budget is used up; the pair is exact
(a round trip).

Reference: a narrowband pulse at 3.5 MHz in a 0.5 dB/cm/MHz phantom with a 16.5 cm DOP gives
``2 * 0.5 * 3.5 * 16.5 = 57.75`` dB (derived).
"""

from __future__ import annotations

import numpy as np

from planner.physics import broadband
from planner.physics._checks import non_negative as _non_negative, positive as _positive

_BISECTION_STEPS: int = 60
"""Halvings of the depth bracket in :func:`penetration_cm` (2^-60 of the bracket). [-]"""


def phantom_loss_db(depth_cm, attenuation_db_per_cm_mhz, frequency_mhz, bandwidth_fraction,
                    exponent=1.0):
    """Broadband round-trip loss of a pulse to a depth in a uniform phantom. [dB]

    Parameters
    ----------
    depth_cm : float or array
        Depth in the phantom. [cm]
    attenuation_db_per_cm_mhz : float or array
        Phantom attenuation coefficient alpha0 (one way). [dB cm^-1 MHz^-y]
    frequency_mhz : float or array
        Centre frequency of the pulse-echo spectrum. [MHz]
    bandwidth_fraction : float or array
        Fractional -6 dB bandwidth of the pulse-echo spectrum (0: narrowband). [-]
    exponent : float
        Phantom power-law exponent y (IEC phantoms: 1). [-]
    """
    z = np.asarray(_non_negative("depth_cm", depth_cm), dtype=float)
    a = np.asarray(_non_negative("attenuation_db_per_cm_mhz", attenuation_db_per_cm_mhz), dtype=float)
    k = (2.0 * a * z)[..., None]
    y = np.broadcast_to(np.asarray(exponent, dtype=float), k.shape)
    loss, _ = broadband.broadband_loss_db(k, y, frequency_mhz, bandwidth_fraction)
    return loss


def budget_from_penetration_db(depth_of_penetration_cm, attenuation_db_per_cm_mhz, frequency_mhz,
                               bandwidth_fraction, exponent=1.0):
    """The round-trip budget a measured phantom depth of penetration implies. [dB]

    ``D = phantom_loss_db(DOP, ...)`` (derived; module docstring).
    """
    _positive("depth_of_penetration_cm", depth_of_penetration_cm)
    return phantom_loss_db(depth_of_penetration_cm, attenuation_db_per_cm_mhz, frequency_mhz,
                           bandwidth_fraction, exponent)


def penetration_cm(budget_db, attenuation_db_per_cm_mhz, frequency_mhz, bandwidth_fraction,
                   exponent=1.0, max_depth_cm: float = 100.0):
    """The phantom depth at which a budget is used up: the inverse of
    :func:`budget_from_penetration_db` (bisection; the loss rises with depth). [cm]

    A budget the phantom does not use up within ``max_depth_cm`` returns ``inf``: for wide
    pulses the loss grows ever more slowly with depth as the received spectrum slides down
    (:mod:`planner.physics.broadband`), and may never reach a large budget.
    """
    budget = np.asarray(_positive("budget_db", budget_db), dtype=float)
    shape = np.broadcast_shapes(budget.shape, np.shape(attenuation_db_per_cm_mhz),
                                np.shape(frequency_mhz), np.shape(bandwidth_fraction))
    lo = np.zeros(shape)
    hi = np.full(shape, float(max_depth_cm))
    for _ in range(_BISECTION_STEPS):
        mid = 0.5 * (lo + hi)
        over = phantom_loss_db(mid, attenuation_db_per_cm_mhz, frequency_mhz, bandwidth_fraction,
                               exponent) >= budget
        hi = np.where(over, mid, hi)
        lo = np.where(over, lo, mid)
    reached = phantom_loss_db(float(max_depth_cm), attenuation_db_per_cm_mhz, frequency_mhz,
                              bandwidth_fraction, exponent) >= budget
    return np.where(reached, 0.5 * (lo + hi), np.inf)

"""Tissue harmonic imaging: transmit f0, receive 2 f0.

References
----------
HarmonicGlossary and Ralls2000THI (harmonic generation during propagation, reduced
near-field clutter); Szabo2004 ch. 12 (the second-harmonic echo lies about 10-20 dB
below the fundamental, from memory; see HARMONIC_CONVERSION_LOSS_DB).
"""

from __future__ import annotations

import numpy as np

from planner.physics._checks import non_negative as _non_negative
from planner.physics.attenuation import attenuation_db_per_cm
from planner.physics.constants import HARMONIC_CONVERSION_LOSS_DB


def harmonic_round_trip_loss_db(thickness_cm, transmit_mhz, attenuation_db_per_cm_mhz,
                                attenuation_exponent,
                                conversion_loss_db=HARMONIC_CONVERSION_LOSS_DB.value):
    """Round-trip loss of a harmonic echo through a layer stack (last axis = layers). [dB]

    ``sum_i d_i (alpha_i(f0) + alpha_i(2 f0)) + L_conv``: down at f0, back at 2 f0, plus the
    stated conversion loss (Szabo2004, from memory).
    """
    d = _non_negative("thickness_cm", thickness_cm)
    f0 = np.asarray(transmit_mhz, dtype=float)[..., None]
    per_cm = attenuation_db_per_cm(f0, attenuation_db_per_cm_mhz, attenuation_exponent) + \
        attenuation_db_per_cm(2.0 * f0, attenuation_db_per_cm_mhz, attenuation_exponent)
    return np.sum(per_cm * d, axis=-1) + conversion_loss_db

"""Sound-speed misregistration: where the scanner draws echoes when tissue is not 1540 m/s.

References
----------
SonographySpeedTutorial: the scanner converts time to depth with c = 1540 m/s, so
displayed depth = true depth x 1540 / c_actual; slow fat puts echoes too deep.
"""

from __future__ import annotations

import numpy as np

from planner.physics.constants import ASSUMED_SPEED_M_PER_S


def displayed_thickness_cm(thickness_cm, speed_m_per_s, assumed_speed_m_per_s=ASSUMED_SPEED_M_PER_S):
    """Thickness the scanner displays for a layer of true thickness ``d``. [cm]

    ``d * c_assumed / c``: 3.0 cm of fat (1450 m/s) displays as 3.186 cm (derived,
    SonographySpeedTutorial).
    """
    d = np.asarray(thickness_cm, dtype=float)
    c = np.asarray(speed_m_per_s, dtype=float)
    if not np.all(np.isfinite(d)) or np.any(d < 0):
        raise ValueError(f"thickness_cm must be finite and >= 0, got {thickness_cm!r}")
    if not np.all(np.isfinite(c)) or np.any(c <= 0):
        raise ValueError(f"speed_m_per_s must be finite and > 0, got {speed_m_per_s!r}")
    return d * assumed_speed_m_per_s / c


def displayed_depth_cm(thickness_cm, speed_m_per_s, assumed_speed_m_per_s=ASSUMED_SPEED_M_PER_S):
    """Displayed depth of the bottom of a layer stack (last axis = layers). [cm]

    ``sum(d_i * c_assumed / c_i)``.
    """
    return np.sum(displayed_thickness_cm(thickness_cm, speed_m_per_s, assumed_speed_m_per_s),
                  axis=-1)


def depth_error_mm(thickness_cm, speed_m_per_s, assumed_speed_m_per_s=ASSUMED_SPEED_M_PER_S):
    """Displayed minus true depth at the bottom of a layer stack; positive = drawn too deep. [mm]"""
    d = np.asarray(thickness_cm, dtype=float)
    return 10.0 * (displayed_depth_cm(d, speed_m_per_s, assumed_speed_m_per_s) - np.sum(d, axis=-1))

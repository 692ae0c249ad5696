"""Doppler: shift, range-limited PRF, Nyquist velocity limit, angle-error sensitivity.

The angle is the beam-to-flow angle (0 deg = beam along the flow).

References
----------
DopplerTeaching (f_D = 2 f0 v cos(theta) / c; angle <= 60 deg for velocity measurement);
NyquistTeaching (f_D,max = PRF / 2; v_max = c PRF / (4 f0 cos theta); PRF_max = c / (2 d)).
"""

from __future__ import annotations

import numpy as np

from planner.physics._checks import positive as _positive

from planner.physics.constants import ASSUMED_SPEED_M_PER_S


def _doppler_angle(value) -> np.ndarray:
    arr = np.asarray(value, dtype=float)
    if not np.all(np.isfinite(arr)) or np.any(arr < 0) or np.any(arr > 90):
        raise ValueError(f"angle_deg must be between 0 and 90 degrees, got {value!r}")
    return arr


def doppler_shift_hz(transmit_mhz, velocity_cm_s, angle_deg, speed_m_per_s=ASSUMED_SPEED_M_PER_S):
    """Doppler shift ``2 f0 v cos(theta) / c``. [Hz]

    2 MHz, 100 cm/s, 60 deg: 1299 Hz (derived, DopplerTeaching). Zero at 90 deg.
    """
    f0 = _positive("transmit_mhz", transmit_mhz) * 1e6
    v = np.asarray(velocity_cm_s, dtype=float) / 100.0
    if not np.all(np.isfinite(v)):
        raise ValueError(f"velocity_cm_s must be finite, got {velocity_cm_s!r}")
    cos_t = np.cos(np.radians(_doppler_angle(angle_deg)))
    return 2.0 * f0 * v * np.where(np.isclose(cos_t, 0.0, atol=1e-12), 0.0, cos_t) / \
        _positive("speed_m_per_s", speed_m_per_s)


def prf_max_hz(depth_cm, speed_m_per_s=ASSUMED_SPEED_M_PER_S):
    """Range-limited pulse repetition frequency ``c / (2 d)``: one pulse in flight. [Hz]

    10 cm: 7700 Hz (derived, NyquistTeaching).
    """
    return _positive("speed_m_per_s", speed_m_per_s) / (2.0 * _positive("depth_cm", depth_cm) / 100.0)


def nyquist_velocity_cm_s(prf_hz, transmit_mhz, angle_deg, speed_m_per_s=ASSUMED_SPEED_M_PER_S):
    """Highest velocity measured without aliasing, ``c PRF / (4 f0 cos theta)``. [cm/s]

    Infinite at 90 deg (no Doppler shift at all), so callers must keep the angle below 90.
    """
    cos_t = np.cos(np.radians(_doppler_angle(angle_deg)))
    c = _positive("speed_m_per_s", speed_m_per_s)
    with np.errstate(divide="ignore"):
        v = c * _positive("prf_hz", prf_hz) / (4.0 * _positive("transmit_mhz", transmit_mhz) * 1e6 *
                                               np.where(cos_t < 1e-12, 0.0, cos_t))
    return v * 100.0


def max_velocity_at_depth_cm_s(depth_cm, transmit_mhz, angle_deg,
                               speed_m_per_s=ASSUMED_SPEED_M_PER_S):
    """Nyquist velocity at the range-limited PRF: ``c^2 / (8 d f0 cos theta)``. [cm/s]

    10 cm, 3 MHz, 0 deg: 98.8 cm/s (derived, NyquistTeaching).
    """
    return nyquist_velocity_cm_s(prf_max_hz(depth_cm, speed_m_per_s), transmit_mhz, angle_deg,
                                 speed_m_per_s)


def velocity_error_fraction(angle_deg, angle_error_deg):
    """Relative velocity error when the true angle differs from the set angle by an error.

    ``cos(theta + e) / cos(theta) - 1`` (derived from the Doppler equation: the scanner
    divides by cos of the set angle). At 60 deg, +5 deg gives -15.5 %, -5 deg +14.7 %.
    Returns NaN where ``theta + e`` reaches 90 deg or more.
    """
    theta = np.radians(_doppler_angle(angle_deg))
    e = np.radians(np.asarray(angle_error_deg, dtype=float))
    true_angle = theta + e
    with np.errstate(invalid="ignore", divide="ignore"):
        out = np.cos(true_angle) / np.cos(theta) - 1.0
    return np.where((true_angle >= np.pi / 2) | (true_angle < -np.pi / 2) |
                    (np.cos(theta) < 1e-12), np.nan, out)

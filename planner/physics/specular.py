"""Specular tilt tolerance of a focused 1-D aperture: a wave model of the echo of a tilted mirror.

A flat mirror at depth z tilted by theta returns the echo of a beam from an aperture of width
A with a fixed focus at depth F (a lens in elevation; in the scan plane the receive focus
follows the depth, F = z). By reciprocity the transmit field and the receive sensitivity on
the mirror are the same function u(xi), so the echo amplitude is

``E(theta) = int u(xi)^2 exp(2 i k xi sin(theta)) d xi``,
``u(xi) = int_{-A/2}^{A/2} exp(-i k x^2 / (2 F)) exp(i k (xi - x)^2 / (2 z)) dx``

(Fresnel approximation of the propagation, uniform aperture; the mirror's tilt adds the
round-trip path ``2 xi sin(theta)``: KinslerFrey2000 for the Fresnel diffraction integral,
derived). The tolerance is the tilt at which ``|E|`` falls to half its value at normal
incidence. Near a tight focus it approaches the geometric ``0.5 atan(a / z)`` (the echo must
land on the receive aperture); away from a fixed lens focus the beam's own divergence sets it,
which the geometric rule misses (DESIGN.md section 3.9).
"""

from __future__ import annotations

from functools import lru_cache

import numpy as np

from planner.physics._checks import positive as _positive
from planner.physics.constants import ASSUMED_SPEED_M_PER_S

_APERTURE_POINTS = 96
_MIRROR_POINTS = 256
_ANGLE_POINTS = 160


def mirror_echo_amplitude(aperture_mm: float, depth_cm: float, frequency_mhz: float,
                          focus_cm: float | None, tilt_deg, speed_m_per_s: float = ASSUMED_SPEED_M_PER_S):
    """``|E(theta)| / |E(0)|`` of a flat mirror at ``depth_cm`` for tilts ``tilt_deg``. [-]"""
    a = _positive("aperture_mm", aperture_mm) * 1e-3
    z = _positive("depth_cm", depth_cm) * 1e-2
    f = _positive("frequency_mhz", frequency_mhz) * 1e6
    focus = z if focus_cm is None else _positive("focus_cm", focus_cm) * 1e-2
    k = 2.0 * np.pi * f / _positive("speed_m_per_s", speed_m_per_s)
    wavelength = 2.0 * np.pi / k
    x = (np.arange(_APERTURE_POINTS) + 0.5) / _APERTURE_POINTS * a - a / 2.0
    dx = a / _APERTURE_POINTS
    # the beam on the mirror spans the aperture's shadow widened by defocus and diffraction
    half = 0.5 * a * (1.0 + abs(1.0 - z / focus)) + 6.0 * wavelength * z / a
    xi = np.linspace(-half, half, _MIRROR_POINTS)
    dxi = xi[1] - xi[0]
    phase = -k * x[None, :] ** 2 / (2.0 * focus) + k * (xi[:, None] - x[None, :]) ** 2 / (2.0 * z)
    u = np.exp(1j * phase).sum(axis=1) * dx                                   # (n_xi,)
    theta = np.radians(np.atleast_1d(np.asarray(tilt_deg, dtype=float)))
    echo = np.exp(2j * k * np.sin(theta)[:, None] * xi[None, :]) @ (u * u) * dxi
    normal = np.sum(u * u) * dxi
    return np.abs(echo) / np.abs(normal)


@lru_cache(maxsize=512)
def _tolerance(aperture_mm: float, depth_cm: float, frequency_mhz: float,
               focus_cm: float | None) -> float:
    geometric = 0.5 * np.degrees(np.arctan(aperture_mm / 2.0 / (depth_cm * 10.0)))
    lam_mm = ASSUMED_SPEED_M_PER_S / (frequency_mhz * 1e3)
    diffraction = np.degrees(lam_mm / aperture_mm)
    top = min(45.0, 4.0 * max(geometric, diffraction) + 1.0)
    angles = np.linspace(0.0, top, _ANGLE_POINTS)
    amp = mirror_echo_amplitude(aperture_mm, depth_cm, frequency_mhz, focus_cm, angles)
    below = np.nonzero(amp <= 0.5)[0]
    if below.size == 0:
        return float(top)
    j = int(below[0])
    a0, a1 = amp[j - 1], amp[j]
    return float(angles[j - 1] + (a0 - 0.5) * (angles[j] - angles[j - 1]) / (a0 - a1))


def specular_tolerance_wave_deg(aperture_mm: float, depth_cm: float, frequency_mhz: float,
                                focus_cm: float | None = None) -> float:
    """Tilt of a flat mirror at ``depth_cm`` that halves its echo amplitude. [deg]

    1-D aperture ``aperture_mm`` wide with a fixed focus at ``focus_cm`` (None: focused at the
    mirror, as a dynamically focused scan plane), at ``frequency_mhz``; see the module notes.
    Inputs are rounded (0.01 mm, 0.001 cm, 0.01 MHz) and results cached.
    """
    _positive("aperture_mm", aperture_mm)
    _positive("depth_cm", depth_cm)
    _positive("frequency_mhz", frequency_mhz)
    if focus_cm is not None:
        _positive("focus_cm", focus_cm)
    return _tolerance(round(float(aperture_mm), 2), round(float(depth_cm), 3),
                      round(float(frequency_mhz), 2),
                      None if focus_cm is None else round(float(focus_cm), 3))

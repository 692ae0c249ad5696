"""Refraction geometry: beam bending, lateral displacement, prism duplication, edge shadows.

Angles from the interface normal unless stated. The scanner assumes the beam does not bend
and places echoes on the undeviated line; the edge shadow traces the bent rays.

References
----------
KinslerFrey2000 ch. 6 (Snell's law). The midline "double image" mechanism of the
rectus muscles acting as a prism is described in sonography teaching (Kremkau2015,
artefact chapter); the geometry below is derived from Snell's law.
"""

from __future__ import annotations

from functools import lru_cache

import numpy as np

from planner.physics._checks import angle_0_90 as _angle, positive as _positive
from planner.physics.interfaces import transmitted_angle_deg


def bend_angle_deg(incidence_deg, c1_m_per_s, c2_m_per_s):
    """Deviation of the beam at an interface, ``tt - ti``; NaN beyond the critical angle. [deg]

    Fat to muscle at 30 deg: +3.0 deg (bends away from the normal; derived).
    """
    ti = _angle("incidence_deg", incidence_deg)
    return transmitted_angle_deg(ti, c1_m_per_s, c2_m_per_s) - ti


def lateral_displacement_mm(incidence_deg, c1_m_per_s, c2_m_per_s, depth_beyond_cm):
    """Sideways shift of the true echo source from where the scanner draws it. [mm]

    A beam crossing an interface tilted by ``incidence_deg`` to the beam axis is deviated by
    the bend angle delta; after travelling ``depth_beyond_cm`` beyond the interface, the
    echo source lies ``depth * tan(delta)`` to the side of the straight line the scanner
    assumes (derived from Snell's law; small-region approximation, one interface).
    """
    delta = np.radians(bend_angle_deg(incidence_deg, c1_m_per_s, c2_m_per_s))
    d = np.asarray(depth_beyond_cm, dtype=float)
    if not np.all(np.isfinite(d)) or np.any(d < 0):
        raise ValueError(f"depth_beyond_cm must be finite and >= 0, got {depth_beyond_cm!r}")
    return 10.0 * d * np.abs(np.tan(delta))


def prism_duplication_separation_mm(prism_angle_deg, c_outer_m_per_s, c_prism_m_per_s,
                                    depth_beyond_cm):
    """Separation of the two images a midline prism (paired rectus muscles in fat) makes. [mm]

    Each rectus muscle belly presents a face tilted by ``prism_angle_deg`` to the skin; a
    beam entering it from fat is deviated by the bend angle, towards the midline on both
    sides, so one deep structure is reached by two beams and drawn twice. The two images lie
    about ``2 * depth * tan(delta)`` apart (derived from Snell's law; entry face only,
    the exit face partly undoes the bend, so this is an upper estimate).
    """
    return 2.0 * lateral_displacement_mm(prism_angle_deg, c_outer_m_per_s, c_prism_m_per_s,
                                         depth_beyond_cm)


EDGE_SHADOW_RAYS: int = 2001
"""Rays traced across one half of the structure for :func:`edge_shadow_width_mm` (derived:
the band of a slower lumen is the same from 500 to 16,000 rays; a faster lumen's within one bin). [-]"""

EDGE_SHADOW_BINS_PER_RADIUS: int = 100
"""Landing bins per radius; the landed power is averaged over three bins (a/33, below the
lateral resolution of the probes that image such structures; derived). [-]"""


def _transmitted_power(z1, z2, cos_i, cos_t):
    """Power fraction transmitted across a fluid-fluid interface at oblique incidence,
    ``1 - R^2`` with ``R = (Z2 cos_i - Z1 cos_t) / (Z2 cos_i + Z1 cos_t)`` (KinslerFrey2000 ch. 6). [-]"""
    r = (z2 * cos_i - z1 * cos_t) / (z2 * cos_i + z1 * cos_t)
    return 1.0 - r * r


def edge_shadow_width_mm(radius_mm, c_outside_m_per_s, c_inside_m_per_s,
                         density_outside_kg_per_m3=1000.0, density_inside_kg_per_m3=1000.0,
                         beyond_mm=None):
    """Width of the shadow band behind each rim of a round fluid-filled structure. [mm]

    Rays parallel to the axis of a circular cross-section of radius a are traced with Snell's
    law at entry and at exit; each carries the power that the two crossings transmit
    (:func:`_transmitted_power`; a ray beyond the critical angle at entry carries none). For a
    circle the ray meets the far wall at its entry refraction angle, so it leaves parallel to
    its incidence angle and deviated by ``2 (theta_1 - theta_2)``: towards the axis for a
    slower lumen (bile in liver), away from it for a faster one. The rays land on a plane
    ``beyond_mm`` behind the far wall (default: one radius); the band is the width next to the
    rim line ``|u| = a`` where the landed power per unit width falls below half the incident
    (derived from Snell's law and the oblique-incidence transmission, KinslerFrey2000 ch. 6).
    A straight-ray model gives ``a (1 - c_slow / c_fast)`` at each rim and never finds one for a
    slower lumen, which cannot reach the critical angle once the ray has bent at entry; the
    traced band comes from the deviation near grazing incidence and grows with distance.
    Equal speeds and densities give 0. Gallbladder of radius 15 mm (bile 1540 m/s, 1010
    kg/m3) in liver (1577 m/s, 1060 kg/m3), 15 mm beyond: about 1.5 mm (derived).
    """
    a = float(_positive("radius_mm", radius_mm))
    c_out = float(_positive("c_outside_m_per_s", c_outside_m_per_s))
    c_in = float(_positive("c_inside_m_per_s", c_inside_m_per_s))
    rho_out = float(_positive("density_outside_kg_per_m3", density_outside_kg_per_m3))
    rho_in = float(_positive("density_inside_kg_per_m3", density_inside_kg_per_m3))
    beyond = a if beyond_mm is None else float(_positive("beyond_mm", beyond_mm))
    return _traced_band_mm(a, c_out, c_in, rho_out * c_out, rho_in * c_in, beyond)


@lru_cache(maxsize=256)
def _traced_band_mm(a: float, c_out: float, c_in: float, z_out: float, z_in: float,
                    beyond: float) -> float:
    """:func:`edge_shadow_width_mm` for checked scalars (cached: plans reuse few structures). [mm]"""
    if c_out == c_in and z_out == z_in:
        return 0.0
    n = EDGE_SHADOW_RAYS
    x = a * (np.arange(n) + 0.5) / n                     # ray offsets across one half
    s1 = x / a
    c1 = np.sqrt(1.0 - s1 * s1)
    s2 = s1 * c_in / c_out
    through = s2 < 1.0
    s2 = np.where(through, s2, 0.0)
    c2 = np.sqrt(1.0 - s2 * s2)
    t = _transmitted_power(z_out, z_in, c1, c2)
    power = np.where(through, t * t, 0.0)               # entry and exit transmit the same
    th1, th2 = np.arcsin(s1), np.arcsin(s2)
    # entry point a(sin th1, -cos th1); inside direction turned by th1 - th2 towards the axis
    turn = th1 - th2
    dx, dy = -np.sin(turn), np.cos(turn)
    px, py = x, -a * c1
    chord = -2.0 * (px * dx + py * dy)
    ex, ey = px + chord * dx, py + chord * dy           # exit point on the circle
    dev = 2.0 * turn
    plane = a + beyond
    ok = through & (np.cos(dev) > 1e-6)
    u = np.where(ok, ex - (plane - ey) * np.tan(dev), np.nan)
    # landed power per unit width in bins of a/100 over the right half, lumen rays plus the
    # undeviated rays outside the rim (|x| > a, unit power per unit width); rays landing at
    # u < 0 belong to the mirror half and are mirrored back
    width = a / EDGE_SHADOW_BINS_PER_RADIUS
    bins = int(np.ceil(2.0 * EDGE_SHADOW_BINS_PER_RADIUS))
    landed = np.abs(u[ok]) / width
    keep = landed < bins
    hist = np.bincount(landed[keep].astype(int), weights=power[ok][keep] * (a / n), minlength=bins)
    centres = (np.arange(bins) + 0.5) * width
    intensity = hist / width + (centres > a)
    intensity = np.convolve(intensity, np.ones(3) / 3.0, mode="same")
    low = intensity < 0.5
    low[-1] = False                                    # the edge of the window is not a band
    rim = int(EDGE_SHADOW_BINS_PER_RADIUS) - 1        # the bin just inside u = a
    if not (low[rim] or low[rim + 1]):
        return 0.0
    start = rim if low[rim] else rim + 1
    below = np.flatnonzero(~low[:start])
    above = np.flatnonzero(~low[start:])
    first = below[-1] + 1 if below.size else 0
    last = start + above[0] if above.size else bins
    return float((last - first) * width)

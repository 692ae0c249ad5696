"""Refraction geometry: beam bending, lateral displacement, prism duplication, edge shadows.

Angles from the interface normal unless stated. Straight-ray geometry (the scanner
assumes the beam does not bend and places echoes on the undeviated line).

References
----------
KinslerFrey2000 ch. 6 (Snell's law). The midline "double image" mechanism of the
rectus muscles acting as a prism is described in sonography teaching (Kremkau2015,
artefact chapter); the geometry below is derived from Snell's law.
"""

from __future__ import annotations

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


def edge_shadow_width_mm(radius_mm, c_outside_m_per_s, c_inside_m_per_s):
    """Width of the rim band of a round structure where rays reach the critical angle. [mm]

    A beam parallel to the axis of a circular cross-section of radius a meets the wall at
    incidence ``arcsin(x/a)`` at lateral offset x, on entry and again (for a straight ray)
    on exit. Whichever crossing goes from the slower into the faster medium has a critical
    angle ``theta_c = arcsin(c_slow/c_fast)``; rays with ``x >= a sin(theta_c)`` are
    totally reflected there, leaving a shadow band of width ``a (1 - sin theta_c)`` at
    each rim (derived from Snell's law). Equal speeds give 0.
    Gallbladder of radius 15 mm (bile 1540 m/s) in liver (1577 m/s): 0.35 mm.
    """
    a = _positive("radius_mm", radius_mm)
    c_out = _positive("c_outside_m_per_s", c_outside_m_per_s)
    c_in = _positive("c_inside_m_per_s", c_inside_m_per_s)
    ratio = np.minimum(c_out, c_in) / np.maximum(c_out, c_in)
    return a * (1.0 - ratio)

"""Interfaces: impedance, reflection and transmission, Snell's law, critical angle.

Angles are measured from the interface normal (0 deg = normal incidence).
Reflection and transmission are *intensity* (energy-flux) coefficients, R + T = 1.

References
----------
ALevelPhysics (R = ((Z2 - Z1)/(Z2 + Z1))^2 at normal incidence); AcousticsNotebook and
KinslerFrey2000 ch. 6 (Snell's law; Rayleigh's fluid-fluid oblique reflection
r = (Z2 cos ti - Z1 cos tt)/(Z2 cos ti + Z1 cos tt)).
"""

from __future__ import annotations

import numpy as np

from planner.physics._checks import positive as _positive, angle_0_90 as _angle


def impedance_mrayl(density_kg_per_m3, speed_m_per_s):
    """Characteristic acoustic impedance ``Z = rho c``. [MRayl = 1e6 kg m^-2 s^-1]

    Fat, 924 kg/m^3 at 1450 m/s: 1.340 MRayl (Bushberg2012 Table 14-1).
    """
    return _positive("density_kg_per_m3", density_kg_per_m3) * \
        _positive("speed_m_per_s", speed_m_per_s) * 1e-6


def intensity_reflection_normal(z1_mrayl, z2_mrayl):
    """Intensity reflection coefficient at normal incidence. [fraction]

    ``R = ((Z2 - Z1) / (Z2 + Z1))**2`` (ALevelPhysics); symmetric in Z1 and Z2.
    Fat/muscle (1.34/1.71 MRayl): 0.0147.
    """
    z1 = _positive("z1_mrayl", z1_mrayl)
    z2 = _positive("z2_mrayl", z2_mrayl)
    return ((z2 - z1) / (z2 + z1)) ** 2


def intensity_transmission_normal(z1_mrayl, z2_mrayl):
    """Intensity transmission coefficient at normal incidence, ``1 - R``. [fraction]

    Written as ``4 Z1 Z2 / (Z1 + Z2)**2`` so that it stays accurate when R is near 1.
    """
    z1 = _positive("z1_mrayl", z1_mrayl)
    z2 = _positive("z2_mrayl", z2_mrayl)
    return 4.0 * z1 * z2 / (z1 + z2) ** 2


def critical_angle_deg(c1_m_per_s, c2_m_per_s):
    """Critical angle of incidence, ``arcsin(c1/c2)``; NaN where none exists (c2 <= c1). [deg]

    Fat to muscle (1450 to 1580 m/s): 66.6 deg (derived, AcousticsNotebook).
    """
    c1 = _positive("c1_m_per_s", c1_m_per_s)
    c2 = _positive("c2_m_per_s", c2_m_per_s)
    with np.errstate(invalid="ignore"):
        return np.where(c2 > c1, np.degrees(np.arcsin(np.minimum(c1 / c2, 1.0))), np.nan)


def transmitted_angle_deg(incidence_deg, c1_m_per_s, c2_m_per_s):
    """Refracted angle by Snell's law, ``sin(tt)/c2 = sin(ti)/c1``; NaN beyond the critical angle. [deg]

    Fat to muscle at 30 deg: 33.0 deg (derived, AcousticsNotebook).
    """
    ti = _angle("incidence_deg", incidence_deg)
    c1 = _positive("c1_m_per_s", c1_m_per_s)
    c2 = _positive("c2_m_per_s", c2_m_per_s)
    s = np.sin(np.radians(ti)) * c2 / c1
    with np.errstate(invalid="ignore"):
        return np.where(s <= 1.0, np.degrees(np.arcsin(np.minimum(s, 1.0))), np.nan)


def is_total_reflection(incidence_deg, c1_m_per_s, c2_m_per_s):
    """True where the incidence angle reaches the critical angle (no transmitted wave)."""
    ti = _angle("incidence_deg", incidence_deg)
    s = np.sin(np.radians(ti)) * _positive("c2_m_per_s", c2_m_per_s) / \
        _positive("c1_m_per_s", c1_m_per_s)
    return s >= 1.0


def intensity_reflection_oblique(z1_mrayl, z2_mrayl, c1_m_per_s, c2_m_per_s, incidence_deg):
    """Intensity reflection at oblique incidence on a fluid-fluid interface (Rayleigh). [fraction]

    ``r = (Z2 cos ti - Z1 cos tt) / (Z2 cos ti + Z1 cos tt)``, ``R = r**2``, and R = 1 at or
    beyond the critical angle (KinslerFrey2000 ch. 6; AcousticsNotebook). Shear waves are
    neglected, which is adequate for soft tissues and fluids, not for bone.
    Fat to muscle: R(0) = 0.0147, R(60 deg) = 0.100, R(70 deg) = 1.
    """
    z1 = _positive("z1_mrayl", z1_mrayl)
    z2 = _positive("z2_mrayl", z2_mrayl)
    ti = _angle("incidence_deg", incidence_deg)
    s = np.sin(np.radians(ti)) * _positive("c2_m_per_s", c2_m_per_s) / \
        _positive("c1_m_per_s", c1_m_per_s)
    total = s >= 1.0
    cos_t = np.sqrt(np.clip(1.0 - s ** 2, 0.0, 1.0))
    cos_i = np.cos(np.radians(ti))
    r = (z2 * cos_i - z1 * cos_t) / (z2 * cos_i + z1 * cos_t)
    return np.where(total, 1.0, r ** 2)


def intensity_transmission_oblique(z1_mrayl, z2_mrayl, c1_m_per_s, c2_m_per_s, incidence_deg):
    """Energy-flux transmission at oblique incidence, ``1 - R`` (0 beyond the critical angle)."""
    return 1.0 - intensity_reflection_oblique(z1_mrayl, z2_mrayl, c1_m_per_s, c2_m_per_s,
                                              incidence_deg)

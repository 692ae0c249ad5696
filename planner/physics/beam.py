"""Beam and resolution: wavelength, axial and lateral resolution, near field, specular tilt.

References
----------
Kremkau2015 and Bushberg2012 (wavelength c/f; axial resolution = spatial pulse length / 2;
lateral resolution at focus about wavelength x F-number); Szabo2004 ch. 6 (focused-beam
depth of field about 7 wavelength x F-number squared, from memory; near-field length
D^2/(4 wavelength) for an unfocused aperture). The specular tilt tolerance is derived from
reflection geometry: a flat reflector tilted by theta deflects the echo by 2 theta, which
returns onto a receive aperture of half-width a at depth z only while tan(2 theta) <= a/z
(Crass1988 measured tendon echoes fading within 2-7 deg, consistent with it).
"""

from __future__ import annotations

import numpy as np

from planner.physics._checks import positive as _positive

from planner.physics.constants import ASSUMED_SPEED_M_PER_S


def wavelength_mm(frequency_mhz, speed_m_per_s=ASSUMED_SPEED_M_PER_S):
    """Wavelength ``c / f``. [mm]   5 MHz at 1540 m/s: 0.308 mm."""
    return _positive("speed_m_per_s", speed_m_per_s) / \
        (_positive("frequency_mhz", frequency_mhz) * 1000.0)


def axial_resolution_mm(frequency_mhz, pulse_cycles=2.0, speed_m_per_s=ASSUMED_SPEED_M_PER_S):
    """Axial resolution, half the spatial pulse length ``n * wavelength / 2``. [mm]

    5 MHz, 2 cycles: 0.308 mm (Kremkau2015).
    """
    return _positive("pulse_cycles", pulse_cycles) * wavelength_mm(frequency_mhz, speed_m_per_s) / 2.0


def f_number(depth_cm, aperture_mm):
    """F-number ``z / D`` of an aperture D focused at depth z. [-]"""
    return _positive("depth_cm", depth_cm) * 10.0 / _positive("aperture_mm", aperture_mm)


def lateral_resolution_mm(frequency_mhz, f_number_ratio, speed_m_per_s=ASSUMED_SPEED_M_PER_S):
    """Lateral resolution at the focus, about ``wavelength * F``. [mm]

    The pulse-echo -6 dB beam width of a uniformly weighted aperture is 0.89 wavelength x F
    in theory and 0.93-0.99 wavelength x F in the pymust field simulation (Garcia2022SIMUS);
    the rule wavelength x F is the textbook value (Kremkau2015).
    """
    return wavelength_mm(frequency_mhz, speed_m_per_s) * _positive("f_number_ratio", f_number_ratio)


def near_field_length_cm(aperture_mm, frequency_mhz, speed_m_per_s=ASSUMED_SPEED_M_PER_S):
    """Near-field (Fresnel) length of an unfocused circular piston, ``D^2 / (4 wavelength)``. [cm]

    One-way, on axis: the last axial maximum of a circular piston (KinslerFrey2000 ch. 7). It
    is a piston figure: for a 1-D array aperture of width D (a strip, unfocused in the scan
    plane) the last on-axis maximum of the Fresnel integral lies nearer the face (about 26 %
    nearer in a field simulation, derived), and a focused array has no near field to speak
    of. No plan decision uses it.
    """
    d = _positive("aperture_mm", aperture_mm)
    return d ** 2 / (4.0 * wavelength_mm(frequency_mhz, speed_m_per_s)) / 10.0


def depth_of_field_mm(frequency_mhz, f_number_ratio, speed_m_per_s=ASSUMED_SPEED_M_PER_S):
    """Axial extent of the focal zone, about ``7 * wavelength * F^2``. [mm]  (Szabo2004, from memory)

    Read as the two-way (pulse-echo) -6 dB extent about the focus. Against field simulations
    of linear arrays it is within -16..+10 %; for a convex array it is 22-48 % short (derived
    from a pymust comparison); the engine uses it for no decision.
    """
    f_num = _positive("f_number_ratio", f_number_ratio)
    return 7.0 * wavelength_mm(frequency_mhz, speed_m_per_s) * f_num ** 2


def min_frequency_axial_mhz(detail_mm, pulse_cycles=2.0, speed_m_per_s=ASSUMED_SPEED_M_PER_S):
    """Lowest frequency whose axial resolution ``n c / (2 f)`` is as fine as ``detail_mm``. [MHz]"""
    return _positive("pulse_cycles", pulse_cycles) * _positive("speed_m_per_s", speed_m_per_s) / \
        (2000.0 * _positive("detail_mm", detail_mm))


def min_frequency_lateral_mhz(detail_mm, f_number_ratio, speed_m_per_s=ASSUMED_SPEED_M_PER_S):
    """Lowest frequency whose lateral resolution ``c F / f`` is as fine as ``detail_mm``. [MHz]"""
    return _positive("f_number_ratio", f_number_ratio) * _positive("speed_m_per_s", speed_m_per_s) / \
        (1000.0 * _positive("detail_mm", detail_mm))


def specular_tolerance_deg(half_aperture_mm, depth_cm):
    """Largest tilt of a flat specular surface whose echo still returns to the aperture. [deg]

    The echo of a surface tilted by theta leaves at 2 theta and lands ``z tan(2 theta)`` to
    the side after the return trip; it still meets an aperture of half-width a while
    ``tan(2 theta) <= a / z``, so ``theta_max = 0.5 atan(a / z)`` (derived). At that tilt
    half the echo misses the aperture (about -6 dB). With a/z = 1/(2F):
    F = 1: 13.3 deg, F = 2: 7.0 deg, F = 3: 4.7 deg.
    """
    a = _positive("half_aperture_mm", half_aperture_mm)
    z = _positive("depth_cm", depth_cm) * 10.0
    return 0.5 * np.degrees(np.arctan(a / z))


def specular_tolerance_f_number_deg(f_number_ratio):
    """The same tolerance written with the receive F-number: ``0.5 atan(1 / (2F))``. [deg]"""
    return 0.5 * np.degrees(np.arctan(1.0 / (2.0 * _positive("f_number_ratio", f_number_ratio))))

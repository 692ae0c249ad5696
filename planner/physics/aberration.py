"""Body-wall aberration: a phase screen of fat and muscle, and the focusing gain it costs.

Sound-speed differences between fat lobules, septa and muscle in the body wall make the
arrival time of a wavefront vary across the aperture. Modelled as a thin Gaussian random
phase screen with rms arrival-time fluctuation ``sigma_t``, the coherent part of the focal
field at frequency f is multiplied by ``exp(-(2 pi f sigma_t)^2 / 2)``, so the coherent focal
gain (intensity) falls by ``exp(-(2 pi f sigma_t)^2)`` on each pass: the Strehl ratio of a
Gaussian phase screen (Goodman2000StatOptics, from memory). Transmit and receive both cross
the wall, so the round-trip loss is ``2 * 10 log10(e) * (2 pi f sigma_t)^2`` dB.

``sigma_t`` grows with the thickness of the aberrating layers. Hinkelman, Szabo & Waag
measured 21.3 +/- 8.4 ns (rms) through 16 human chest-wall specimens (Hinkelman1997Chest,
verified). Independent inhomogeneities add their time variances, so
``sigma_t = SIGMA_REF_NS * sqrt(d / D_REF_MM)`` with ``d`` the fat plus muscle thickness
(derived; the random-walk scaling and the reference thickness are from memory; the abdominal
wall specimens of Hinkelman et al. 1994 and 1998 gave larger values, tens of ns through
2-4 cm, consistent with this growth: HinkelmanAbdominal, from memory).

Harmonic imaging is less affected: the second harmonic is generated in depth, beyond the
wall, from the transmit beam, so the wall acts on it at the transmit frequency rather than at
2 f0 on the way back (HarmonicGlossary; Ralls2000THI, qualitative). The harmonic echo is given
the fundamental's round-trip aberration at f0 (:data:`HARMONIC_ABERRATION_FACTOR` of the
f0-out/2f0-back value; from memory).
"""

from __future__ import annotations

import numpy as np

from planner.physics._checks import non_negative as _non_negative, positive as _positive
from planner.provenance import Sourced

SIGMA_REF = Sourced(21.3, "Hinkelman1997Chest", "verified",
                    "rms arrival-time fluctuation through 16 chest-wall specimens, +/- 8.4 ns s.d.")
"""rms arrival-time fluctuation of the reference wall. [ns]"""

WALL_REF = Sourced(20.0, "Hinkelman1997Chest", "from_memory",
                   "typical thickness of the chest-wall specimens measured")
"""Fat plus muscle thickness of the reference wall. [mm]"""

HARMONIC_ABERRATION_FACTOR = Sourced(
    0.4, "Ralls2000THI", "from_memory",
    "harmonic formed beyond the wall: aberration counted at f0 both ways, 2 / (1 + 2^2) of the "
    "f0-out/2f0-back phase variance")
"""Share of the f0-out/2f0-back aberration loss a harmonic echo suffers. [-]"""

_DB_ENERGY = 10.0 / np.log(10.0)


def arrival_time_rms_ns(wall_mm):
    """rms arrival-time fluctuation of a fat and muscle wall ``wall_mm`` thick. [ns]

    ``21.3 ns * sqrt(d / 20 mm)`` (see module notes): 20 mm 21.3 ns, 45 mm 32.0 ns.
    """
    d = _non_negative("wall_mm", wall_mm)
    return SIGMA_REF.value * np.sqrt(np.asarray(d, dtype=float) / WALL_REF.value)


def focal_gain_factor(frequency_mhz, sigma_ns):
    """Coherent focal intensity with the screen over that without, one pass. [-]

    ``exp(-(2 pi f sigma_t)^2)`` (Gaussian phase screen).
    """
    phase = 2.0 * np.pi * _positive("frequency_mhz", frequency_mhz) * 1e6 * \
        np.asarray(_non_negative("sigma_ns", sigma_ns), dtype=float) * 1e-9
    return np.exp(-phase ** 2)


def round_trip_coefficient_db_per_mhz2(sigma_ns):
    """``c`` of the round-trip aberration loss ``c f^2`` (f in MHz). [dB MHz^-2]

    ``2 * 10 log10(e) * (2 pi sigma_t)^2`` with sigma_t in microseconds.
    """
    s_us = np.asarray(_non_negative("sigma_ns", sigma_ns), dtype=float) * 1e-3
    return 2.0 * _DB_ENERGY * (2.0 * np.pi * s_us) ** 2


def aberration_loss_db(frequency_mhz, sigma_ns, harmonic: bool = False):
    """Round-trip focusing loss of the wall at a (transmit) frequency. [dB]

    Fundamental: ``c f^2``; harmonic (transmit f, receive 2 f): ``factor * c (f^2 + (2f)^2) / 2``
    with :data:`HARMONIC_ABERRATION_FACTOR`, i.e. ``c f^2`` again. 32 ns at 5 MHz: 8.8 dB.
    """
    f = _positive("frequency_mhz", frequency_mhz)
    c = round_trip_coefficient_db_per_mhz2(sigma_ns)
    if harmonic:
        return HARMONIC_ABERRATION_FACTOR.value * c * (f ** 2 + (2.0 * f) ** 2) / 2.0
    return c * f ** 2

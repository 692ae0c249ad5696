"""Physical constants used across the physics modules, each with its provenance."""

from __future__ import annotations

from planner.provenance import Sourced

ASSUMED_SPEED_M_PER_S: float = 1540.0
"""Speed of sound every scanner assumes when it converts echo time to depth. [m/s]"""

ASSUMED_SPEED = Sourced(ASSUMED_SPEED_M_PER_S, "SonographySpeedTutorial", "verified",
                        "conventional soft-tissue average assumed by scanners")

DB_PER_NEPER: float = 8.685889638065035
"""Decibels per neper, 20 / ln(10). [dB/Np] (mathematical identity)"""

SIGNAL_BUDGET_DIFFUSE_DB = Sourced(
    60.0, "RadiologyPhysicsSummary", "derived",
    "usable round-trip attenuation budget for diffuse parenchyma; d_max = D/(2 alpha0 f) with "
    "D = 60 dB gives 60/f cm at 0.5 dB/cm/MHz, between the verified 40/f teaching rule and "
    "the depth modern curved arrays show")
"""Default usable round-trip attenuation budget for diffuse echoes. [dB]"""

SPECULAR_ALLOWANCE_DB = Sourced(
    15.0, "CommonPractice", "common_practice",
    "strong specular reflectors (bone surface, calculi, diaphragm, pleura) return echoes far "
    "above the speckle level, so they stay visible beyond the diffuse reach")
"""Extra round-trip budget granted to strong specular reflectors. [dB]"""

HARMONIC_CONVERSION_LOSS_DB = Sourced(
    15.0, "Szabo2004", "from_memory",
    "second-harmonic tissue echo about 10-20 dB below the fundamental at typical imaging "
    "depths; the middle value is used")
"""Level of the second-harmonic echo below the fundamental it grows from. [dB]"""

ANGLE_LIMIT_VELOCITY_DEG = Sourced(60.0, "DopplerTeaching", "verified",
                                   "beam-to-flow angle for velocity measurement")
"""Largest beam-to-flow angle accepted for a velocity measurement. [deg]"""

BANDWIDTH_FRACTION_DEFAULT = Sourced(
    0.6, "Szabo2004", "from_memory",
    "fractional -6 dB bandwidth of the pulse-echo spectrum of a typical imaging array (about "
    "50-80 %); used for a probe whose inventory entry gives none")
"""Default fractional -6 dB pulse-echo bandwidth of a probe. [-]"""

"""Argument checks shared by the physics modules (fast path for plain Python numbers)."""

from __future__ import annotations

import math

import numpy as np


def positive(name: str, value):
    """Return ``value`` as float or float array; ValueError unless finite and > 0."""
    if type(value) in (float, int):
        if not (value > 0 and math.isfinite(value)):
            raise ValueError(f"{name} must be finite and > 0, got {value!r}")
        return float(value)
    arr = np.asarray(value, dtype=float)
    if not np.all(np.isfinite(arr)) or np.any(arr <= 0):
        raise ValueError(f"{name} must be finite and > 0, got {value!r}")
    return arr


def non_negative(name: str, value):
    """Return ``value`` as float or float array; ValueError unless finite and >= 0."""
    if type(value) in (float, int):
        if not (value >= 0 and math.isfinite(value)):
            raise ValueError(f"{name} must be finite and >= 0, got {value!r}")
        return float(value)
    arr = np.asarray(value, dtype=float)
    if not np.all(np.isfinite(arr)) or np.any(arr < 0):
        raise ValueError(f"{name} must be finite and >= 0, got {value!r}")
    return arr


def angle_0_90(name: str, value):
    """Return ``value`` as float or array; ValueError unless between 0 and 90 degrees."""
    if type(value) in (float, int):
        if not (0 <= value <= 90):
            raise ValueError(f"{name} must be between 0 and 90 degrees, got {value!r}")
        return float(value)
    arr = np.asarray(value, dtype=float)
    if not np.all(np.isfinite(arr)) or np.any(arr < 0) or np.any(arr > 90):
        raise ValueError(f"{name} must be between 0 and 90 degrees, got {value!r}")
    return arr

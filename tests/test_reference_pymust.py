"""Independent reference: the pymust field simulator (Garcia2022SIMUS, PyMUST 0.1.9).

The transducer is defined by its parameters only (5 MHz, 64 elements, 0.30 mm pitch,
0.25 mm width, 5 mm elevation height focused at 20 mm, 1540 m/s, narrow band: 20 %
bandwidth, 10 cycles). Runs only with the ``reference`` extra installed; `.ci/run`
installs it.
"""

import numpy as np
import pytest

from planner.physics import attenuation, beam

pymust = pytest.importorskip("pymust")
pytestmark = pytest.mark.reference


def _param(attenuation_db_per_cm_mhz: float = 0.0):
    p = pymust.utils.Param()
    p.fc = 5e6
    p.pitch = 0.30e-3
    p.width = 0.25e-3
    p.Nelements = 64
    p.focus = 20e-3
    p.height = 5e-3
    p.c = 1540.0
    p.attenuation = attenuation_db_per_cm_mhz
    p.bandwidth = 20
    p.TXnow = 10
    return p


def test_lateral_resolution_at_focus_against_pymust():
    """Pulse-echo -6 dB width at a 30 mm transmit focus vs our wavelength x F-number.

    Aperture 64 x 0.30 = 19.2 mm, F = 30 / 19.2; ours 0.481 mm. pymust gives about
    0.44 mm (0.91 wavelength x F); uniform-aperture theory 0.886. Our textbook rule may be
    up to 15 % conservative, never narrower than the simulation.
    """
    p = _param()
    delays = pymust.txdelay(0.0, 30e-3, p)
    x = np.linspace(-4e-3, 4e-3, 801)
    rp = np.ravel(pymust.pfield(x, None, np.full_like(x, 30e-3), delays, p)[0])
    two_way = (rp / rp.max()) ** 2
    inside = x[two_way >= 0.5]
    width_mm = (inside.max() - inside.min()) * 1e3
    ours = float(beam.lateral_resolution_mm(5.0, beam.f_number(3.0, 19.2)))
    assert 0.85 <= width_mm / ours <= 1.02, (width_mm, ours)


def test_attenuation_slope_against_pymust():
    """On-axis one-way loss slope with 0.5 dB/cm/MHz at 5 MHz: ours 2.5 dB/cm; pymust within 2 %."""
    p0, p1 = _param(0.0), _param(0.5)
    z = np.linspace(0.5e-2, 8e-2, 40)
    delays = pymust.txdelay(0.0, 30e-3, p0)
    r0 = np.ravel(pymust.pfield(np.zeros_like(z), None, z, delays, p0)[0])
    r1 = np.ravel(pymust.pfield(np.zeros_like(z), None, z, delays, p1)[0])
    slope = -np.polyfit(z * 100, 20 * np.log10(r1 / r0), 1)[0]
    ours = float(attenuation.attenuation_db_per_cm(5.0, 0.5, 1.0))
    assert slope == pytest.approx(ours, rel=0.02), (slope, ours)

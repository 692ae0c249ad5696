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


def _broadband_param(attenuation_db_per_cm_mhz: float):
    """pymust's own broadband pulse: 75 % pulse-echo bandwidth (its default), 1-cycle transmit."""
    p = pymust.utils.Param()
    p.fc = 5e6
    p.pitch = 0.30e-3
    p.width = 0.25e-3
    p.Nelements = 64
    p.c = 1540.0
    p.attenuation = attenuation_db_per_cm_mhz
    p.bandwidth = 75
    return p


def test_broadband_round_trip_loss_against_pymust():
    """On-axis pulse-echo energy loss of a 75 % pulse in 0.5 dB/cm/MHz at 4-16 cm.

    pymust (Garcia2022SIMUS): ratio of sum_f |S(f)|^4 with and without attenuation for a
    5 MHz, 64 x 0.30 mm array focused at 6 cm (about 18 / 30 / 48 / 62 dB). Ours: the Gaussian
    75 % spectrum received above the transducer's -40 dB spectral limit. That limit is a
    property of the transducer, not a fitted value: it is read here from pymust's own
    transducer model (pulse spectrum x probe response) as the lowest frequency whose pulse-echo
    level is within 40 dB of the peak, 2.3 MHz (status: derived from the simulator's model; the
    -40 dB level is a conventional choice, common practice). Agreement within 10 % at every
    depth; the single-frequency 20 / 40 / 60 / 80 dB would be 11-30 % off.
    """
    from planner.physics import broadband

    p = _broadband_param(0.0)
    f = np.linspace(1e3, 2 * p.fc, 20001)
    pe = np.abs(p.getPulseSpectrumFunction()(2 * np.pi * f) * p.getProbeFunction()(2 * np.pi * f)) ** 2
    level_db = 20 * np.log10(np.maximum(pe / pe.max(), 1e-300))
    edge_mhz = f[np.argmax(level_db > -40.0)] / 1e6
    z = np.array([4.0, 8.0, 12.0, 16.0]) * 1e-2
    energy = {}
    for alpha in (0.0, 0.5):
        param = _broadband_param(alpha)
        delays = pymust.txdelay(0.0, 60e-3, param)
        spect = np.asarray(pymust.pfield(np.zeros_like(z), None, z, delays, param)[1])
        energy[alpha] = np.sum(np.abs(spect.reshape(len(z), -1)) ** 4, axis=-1)
    theirs = -10 * np.log10(energy[0.5] / energy[0.0])
    ours = broadband.broadband_loss_db(2 * 0.5 * z[:, None] * 100, np.ones((4, 1)), 5.0, 0.75,
                                       edge_mhz)[0]
    assert np.all(np.abs(ours / theirs - 1) <= 0.10), (theirs, ours, edge_mhz)
    narrow = 2 * 0.5 * 5.0 * z * 100
    assert np.all(np.abs(narrow / theirs - 1) > 0.10)

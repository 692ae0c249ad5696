"""Independent reference for power-law exponents y != 1: sonosk 0.1.0 (KooklanSonoSK).

sonosk (``sonosk.field.rayleigh``) sums the Rayleigh integral over the patches of a baffled
piston at one frequency, with the medium's power-law attenuation ``alpha0 f^y`` applied along
every patch-to-point path. A spectrum of CW runs, weighted by the spectrum of a drive pulse,
is the transient field of that pulse, so it gives the broadband loss for any exponent.

Setup (all inputs chosen here, none fitted): a flat piston of 2 mm radius (patches of
0.05 mm) in a 1540 m/s medium; a 2-cycle Hann-windowed 5 MHz surface-velocity pulse; on-axis
points at 2, 4, 6, 8 and 10 cm; 0.5 dB/cm/MHz^y with y = 1.0 (control), 1.3 and 1.5;
frequencies 0.1-16 MHz in 0.1 MHz steps (the pulse-echo spectrum there is below -60 dB).

Pulse-echo loss from what sonosk returns: ``P(z, f) = V(f) rayleigh(f)`` is the one-way
on-axis pressure spectrum (V the drive's spectrum). With the same piston transmitting and
receiving a point echo, the echo's amplitude spectrum is ``P(z, f)^2`` (reciprocity), and its
energy ``sum_f |P(z, f)|^4``. The loss is
``-10 log10( sum_f |P_att(z, f)|^4 / sum_f |P_0(z, f)|^4 )`` with ``P_0`` the run without
attenuation at the same point: the diffraction (the piston's 1/z spreading and its
frequency-dependent near field) cancels in the ratio. The model's pulse is the spectrum
actually simulated: its centre is the midpoint of the -6 dB points of ``|P_0(z, f)|^2`` (the
pulse-echo amplitude spectrum, diffraction included) and its fractional bandwidth the -6 dB
width over that centre, measured at each depth (5.50-5.81 MHz and 57-59 %).

The model (:func:`planner.physics.broadband.broadband_loss_db`) assumes a Gaussian spectrum;
the simulated one falls faster below its band (at 10 cm: -34 dB at 2 MHz and -62 dB at 1 MHz
against the Gaussian's -32 and -51 dB). Deep and with a steep law the echo is made of that
low tail, so the Gaussian keeps more energy and the model reads low by up to 0.9 / 3.8 / 6.4 %
at 10 cm for y = 1.0 / 1.3 / 1.5. The closed form itself agrees with the numerical integral of
its own Gaussian within 0.05 dB, so the gap is the shape of the spectrum, not the expansion.
Tolerance: 10 % (the task's figure; no fitting).

The transient simulator esdiva 0.3.0 gives the same picture (``scripts/check_esdiva.py``);
its install (about 800 MB with VTK, numba and llvmlite; Rivera2026eSDIva) is too heavy for CI.
"""

import numpy as np
import pytest

from planner.physics import broadband

sonosk = pytest.importorskip("sonosk")
pytestmark = pytest.mark.reference

from sonosk import field, transducer  # noqa: E402  (after the importorskip)

C_M_S = 1540.0
ALPHA0 = 0.5                                # one-way, dB cm^-1 MHz^-y
DEPTHS_CM = np.array([2.0, 4.0, 6.0, 8.0, 10.0])
FREQS_HZ = np.arange(1, 161) * 0.1e6


def _drive_spectrum(freqs_hz, centre_hz=5e6, cycles=2, fs_hz=200e6):
    """Spectrum of a ``cycles``-cycle Hann-windowed sine at ``centre_hz``. [m/s s]"""
    n = int(round(cycles / centre_hz * fs_hz))
    t = np.arange(n) / fs_hz
    v = np.sin(2 * np.pi * centre_hz * t) * np.hanning(n)
    return np.exp(-2j * np.pi * freqs_hz[:, None] * t[None, :]) @ v / fs_hz


@pytest.fixture(scope="module")
def one_way():
    """``{alpha0, y: P(z, f)}``: sonosk's on-axis pressure spectra, shape (depths, freqs)."""
    piston = transducer.piston(2e-3, dx=0.05e-3)
    points = np.stack([np.zeros_like(DEPTHS_CM), np.zeros_like(DEPTHS_CM), DEPTHS_CM / 100], 1)
    drive = _drive_spectrum(FREQS_HZ)

    def spectra(alpha0, y):
        cw = np.array([field.rayleigh(piston, points, f, C_M_S, alpha0, y) for f in FREQS_HZ])
        return (cw * drive[:, None]).T

    runs = {(0.0, 1.0): spectra(0.0, 1.0)}
    for y in (1.0, 1.3, 1.5):
        runs[(ALPHA0, y)] = spectra(ALPHA0, y)
    return runs


def minus_6db_band(freqs, amplitude):
    """Centre (midpoint of the -6 dB points) and fractional -6 dB width of a spectrum.

    The edges are interpolated linearly between samples; ``amplitude`` must have one main
    lobe. Returns ``(centre, width / centre)`` in the units of ``freqs``.
    """
    a = np.asarray(amplitude, dtype=float) / np.max(amplitude)
    above = np.nonzero(a >= 0.5)[0]
    lo, hi = above[0], above[-1]
    assert lo > 0 and hi < a.size - 1, "the -6 dB band must lie inside the frequency grid"
    f_lo = np.interp(0.5, [a[lo - 1], a[lo]], [freqs[lo - 1], freqs[lo]])
    f_hi = np.interp(0.5, [a[hi + 1], a[hi]], [freqs[hi + 1], freqs[hi]])
    centre = 0.5 * (f_lo + f_hi)
    return centre, (f_hi - f_lo) / centre


def test_band_measure_on_a_gaussian():
    """A Gaussian amplitude spectrum of 75 % at 5 MHz reads back as 5 MHz and 75 % (derived)."""
    f = np.linspace(0.0, 12.0, 1201)
    s = broadband.spectrum_sigma_mhz(5.0, 0.75)
    centre, frac = minus_6db_band(f, np.exp(-(f - 5.0) ** 2 / (2 * s * s)))
    assert centre == pytest.approx(5.0, abs=1e-3)
    assert frac == pytest.approx(0.75, abs=1e-3)


def _compare(one_way, y):
    p0 = one_way[(0.0, 1.0)]
    p1 = one_way[(ALPHA0, y)]
    rows = []
    for i, depth in enumerate(DEPTHS_CM):
        echo0 = np.abs(p0[i]) ** 2                       # pulse-echo amplitude spectrum
        theirs = -10 * np.log10(np.sum(np.abs(p1[i]) ** 4) / np.sum(echo0 ** 2))
        centre_hz, frac = minus_6db_band(FREQS_HZ, echo0)
        ours, _ = broadband.broadband_loss_db(np.array([2 * ALPHA0 * depth]), np.array([y]),
                                              centre_hz / 1e6, frac)
        rows.append((depth, centre_hz / 1e6, frac, theirs, float(ours)))
    return np.array(rows)


@pytest.mark.parametrize("y", [1.0, 1.3, 1.5])
def test_broadband_loss_against_sonosk_spectrum_sum(one_way, y):
    """Pulse-echo energy loss, 2-cycle 5 MHz pulse, 0.5 dB/cm/MHz^y, 2-10 cm, vs sonosk 0.1.0.

    sonosk 0.1.0 CW Rayleigh integral summed over 0.1-16 MHz (module docstring: 2 mm piston,
    on axis, diffraction removed by the run without attenuation); ours the Gaussian closed
    form with the centre and -6 dB bandwidth measured from the simulated pulse-echo spectrum
    at each depth. Within 10 % at every depth; the single-frequency loss ``A(f0)`` at the
    measured centre is more than 10 % off from 6 cm on (13-115 %), so the check can tell the
    broadband model from the narrowband one.
    """
    rows = _compare(one_way, y)
    depth, centre, frac, theirs, ours = rows.T
    # the measured pulse: a 2-cycle Hann burst squared, 5.50-5.81 MHz and 57-59 %
    assert np.all((centre > 5.0) & (centre < 6.5)) and np.all((frac > 0.45) & (frac < 0.7))
    assert np.all(np.diff(theirs) > 0)
    assert np.all(np.abs(ours / theirs - 1) <= 0.10), rows
    narrow = 2 * ALPHA0 * depth * centre ** y                  # A(f) at the measured centre
    assert np.all(np.abs(narrow / theirs - 1)[depth >= 6.0] > 0.10), rows

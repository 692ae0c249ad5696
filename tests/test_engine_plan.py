"""Plan engine: the behaviour a practitioner expects (each test says what and from where)."""

import json

import numpy as np
import pytest

from planner.engine.serialize import plan_to_json_data
from planner.body.patient import Patient
from planner.engine import PlanRequest, make_plan
from planner.engine.sweep import sweep
from planner.errors import InputError


def plan(target, window=None, **patient):
    return make_plan(PlanRequest(target, Patient.from_inputs(**patient), window_id=window))


def test_thyroid_slim_neck_linear_10_mhz_or_more():
    """Thyroid in a slim neck: linear array, 10 MHz or more (linear 7-15 MHz, common practice)."""
    p = plan("thyroid", bmi=21)
    assert p.probe.type in ("linear", "linear_hf")
    assert p.frequency_mhz.high >= 10.0
    assert p.frequency_mhz.feasible


def test_liver_upper_frequency_falls_with_bmi():
    """Liver: the highest usable frequency falls as BMI rises (attenuation through fat)."""
    highs = [plan("liver", bmi=b).frequency_mhz.high for b in (20, 25, 30, 35, 45, 55)]
    assert all(a > b for a, b in zip(highs, highs[1:])), highs


def test_liver_upper_frequency_falls_with_depth():
    highs = [plan("liver", bmi=25, depth_cm=d).frequency_mhz.high for d in (10, 14, 18, 22)]
    assert all(a > b for a, b in zip(highs, highs[1:])), highs


def test_steatosis_lowers_the_band_further():
    """Steatosis raises liver attenuation (AttenuationSteatosisReview2022), so reach falls."""
    normal = plan("liver", bmi=35).frequency_mhz.high
    fatty = plan("liver", bmi=35, conditions={"steatosis": 2}).frequency_mhz.high
    severe = plan("liver", bmi=35, conditions={"steatosis": 3}).frequency_mhz.high
    assert normal > fatty > severe


def test_measured_thin_wall_overrides_high_bmi():
    """A measured thin wall beats the BMI estimate: BMI 45 with a 15 mm wall plans like a slim patient."""
    estimated = plan("liver", bmi=45)
    measured = plan("liver", bmi=45, wall_mm=15)
    slim = plan("liver", bmi=22)
    assert measured.frequency_mhz.high > estimated.frequency_mhz.high
    assert measured.frequency_mhz.high == pytest.approx(slim.frequency_mhz.high, abs=0.4)
    assert any("Measured wall" in a for a in measured.assumptions)


def test_measured_depth_is_honoured():
    p = plan("liver", bmi=30, depth_cm=17.0)
    assert p.depth_cm == pytest.approx(17.0, abs=0.01)


def test_tendon_specular_tilt_inside_published_anisotropy_range_Crass1988():
    """Tendon: specular; tilt tolerance inside the published 2-7 deg anisotropy range (Crass 1988)."""
    p = plan("achilles-tendon", bmi=24)
    assert p.target.reflector == "specular"
    assert 2.0 <= p.tilt.max_deviation_deg <= 7.0
    codes = [f.code for f in p.findings]
    assert "tilt.anisotropy" in codes and "tilt.specular" in codes


def test_liver_parenchyma_tilt_free():
    """Diffuse parenchyma: echo strength is angle independent (RCEMSpecular), so tilt is free."""
    p = plan("liver", bmi=24)
    assert p.tilt.max_deviation_deg is None
    assert "window" in p.tilt.advice


def test_thick_walled_liver_bmi35_harmonic_advised():
    """BMI 35 liver: harmonic imaging advised while its budget still reaches (THIRadioGraphics)."""
    p = plan("liver", bmi=35)
    assert p.harmonic.advised is True
    assert p.harmonic.transmit_mhz.high >= p.probe.band_mhz[0]


def test_slim_liver_harmonic_routine_and_its_reason_is_not_the_wall():
    """Slim adult liver: harmonic imaging is routine in adult abdominal scanning
    (THIRadioGraphics), so it is advised, for that reason and not for clutter (thin wall)."""
    h = plan("liver", bmi=21).harmonic
    assert h.advised is True and "routine" in h.reason and "clutter" not in h.reason


def test_harmonic_transmit_keeps_the_second_harmonic_in_the_upper_band():
    """Transmit range inside the probe's band with 2 f0 in its upper half and inside it
    (not pinned to the probe's lowest frequency)."""
    p = plan("liver", bmi=45)
    low, high = p.probe.band_mhz
    t = p.harmonic.transmit_mhz
    assert t.low >= (low + high) / 4 - 0.05 and 2 * t.high <= high + 1e-9 and t.low > low


def test_no_clutter_reason_from_bmi_on_a_route_without_fat():
    """Transvaginal embryo and Achilles at BMI 45: the wall at the route decides (no fat there),
    so no 'clutter likely' advice (the BMI alone never decides it)."""
    for target in ("embryo", "achilles-tendon"):
        h = plan(target, bmi=45).harmonic
        assert "clutter is likely" not in h.reason.lower() and "bmi" not in h.reason.lower()


def test_lung_b_lines_never_harmonic():
    """Harmonic imaging suppresses B-lines, the signs of the exam (REFERENCES: THI trade-off)."""
    p = plan("pleura", bmi=40)
    assert p.harmonic.advised is False
    assert any(f.code == "harmonic.contraindicated" for f in p.findings)


def test_intercostal_window_needs_footprint_that_fits_rib_gap(tmp_path):
    """Intercostal windows call for a footprint that fits the rib gap: with a wide curved array and
    a phased array in the inventory, the intercostal liver plan picks the one that fits."""
    inv = tmp_path / "probes.yaml"
    inv.write_text("""schema_version: 1
probes:
  - {id: wide-curve, label: Wide curved array, type: curvilinear, band_mhz: [1.0, 6.0], aperture_mm: 50,
     elevation_aperture_mm: 14, elevation_focus_cm: 7, footprint_mm: [70, 30], receive_f_number: 2.0,
     pulse_cycles: 2, harmonic: true}
  - {id: sector, label: Sector array, type: phased, band_mhz: [1.0, 5.0], aperture_mm: 19,
     elevation_aperture_mm: 13, elevation_focus_cm: 7, footprint_mm: [16, 14], receive_f_number: 2.0,
     pulse_cycles: 2, harmonic: true}
""")
    p = make_plan(PlanRequest("liver", Patient.from_inputs(bmi=30), window_id="right-intercostal",
                              probes_path=str(inv)))
    assert p.probe.id == "sector"
    assert p.probe.fit in ("fits", "aligned")
    rib = next(f for f in p.findings if f.code == "shadow.ribs")
    assert rib.values["rib_gap_mm"] >= rib.values["footprint_width_mm"]


def test_detail_unreachable_says_so_and_what_could_change():
    """When no window gives the needed detail the plan says so and lists alternatives.

    A measured 20 cm path through a severely steatotic liver at BMI 60: even the broadband
    pulse (which reaches higher than a single frequency, Kuc1984) stays below the detail floor
    at every window. (Without the measured depth the same patient is now planned at 2.6-3.9 MHz
    with a downshift caution.)"""
    p = plan("hepatic-veins", bmi=60, conditions={"steatosis": 3}, depth_cm=20)
    assert p.frequency_mhz.feasible is False
    codes = [f.code for f in p.findings]
    assert "band.detail_unreachable" in codes and "plan.no_window" in codes
    msg = next(f for f in p.findings if f.code == "plan.no_window").message
    assert "accept less detail" in msg and "compression" in msg


def test_midline_aorta_warns_of_refraction_duplication_DoubleAortaPhantom2009():
    p = plan("aorta", bmi=30, window="midline-transverse")
    f = next(f for f in p.findings if f.code == "refraction.midline_prism")
    assert f.values["separation_mm"] > 0


def test_fat_layer_is_drawn_too_deep_SonographySpeedTutorial():
    """Fat (1450 m/s) is drawn about 6 % too thick by a 1540 m/s scanner."""
    p = plan("liver", bmi=45)
    f = next(f for f in p.findings if f.code == "artefact.sound_speed")
    fat_cm = sum(l.thickness_cm for l in p.layers if l.tissue == "fat")
    assert f.values["fat_error_mm"] == pytest.approx(10 * fat_cm * (1540 / 1450 - 1), rel=0.02)


def test_windows_ranked_feasible_first_then_close_by_practice_then_by_loss():
    """Feasible first; windows within 6 dB of the best by the usual order of practice; the rest
    by loss (CLOSE_LOSS_DB, common practice)."""
    from planner.engine.request import CLOSE_LOSS_DB
    from planner.library.targets import load_library
    for target, bmi in (("kidney", 35), ("gallbladder", 21), ("liver", 45)):
        p = plan(target, bmi=bmi)
        order = {w.id: w.practice_order or 99 for w in load_library().get(target).windows}
        feasible = [w.feasible for w in p.windows]
        assert feasible == sorted(feasible, reverse=True)
        best = min(w.round_trip_loss_db for w in p.windows if w.feasible)
        close = [w for w in p.windows if w.feasible and w.round_trip_loss_db <= best + CLOSE_LOSS_DB + 0.05]
        assert p.windows[:len(close)] == close[:len(close)] or {w.id for w in p.windows[:len(close)]} == {w.id for w in close}
        ranks = [(order[w.id], w.round_trip_loss_db) for w in p.windows[:len(close)]]
        assert ranks == sorted(ranks)
        rest = [w.round_trip_loss_db for w in p.windows[len(close):] if w.feasible]
        assert rest == sorted(rest)


def test_json_contract_keys():
    d = plan_to_json_data(plan("gallbladder", bmi=32))
    for key in ("target", "depth_cm", "frequency_mhz", "harmonic", "probe", "windows", "tilt",
                "depth_error_mm", "findings", "safety", "assumptions", "validity", "disclaimer"):
        assert key in d
    assert set(d["target"]) >= {"id", "name", "reflector"}
    assert set(d["frequency_mhz"]) >= {"low", "high"}
    assert set(d["harmonic"]) >= {"advised", "reason"}
    assert all(set(w) >= {"id", "feasible", "round_trip_loss_db"} for w in d["windows"])
    assert set(d["tilt"]) >= {"max_deviation_deg", "advice"}
    assert any(f["code"] == "safety.alara" for f in d["safety"])
    for f in d["findings"] + d["safety"]:
        assert set(f) >= {"code", "severity", "message", "values", "sources"}
    json.dumps(d, allow_nan=False)


@pytest.mark.parametrize("bmi", [17, 25, 45])
def test_every_target_plans_with_safety_and_statement(bmi):
    """Every target plans for slim, average and large patients, with ALARA, index and statement."""
    from planner.library.targets import load_library
    for tid in load_library().targets:
        d = plan_to_json_data(plan(tid, bmi=bmi))
        json.dumps(d, allow_nan=False)
        codes = [f["code"] for f in d["safety"]]
        assert "safety.alara" in codes and "safety.index" in codes, tid
        assert d["monitored_index"] in ("TIS", "TIB", "TIC")
        assert "local protocols" in d["disclaimer"]


def test_unknown_target_and_window_list_valid_choices():
    with pytest.raises(InputError, match="valid targets"):
        plan("lever", bmi=25)
    with pytest.raises(InputError, match="valid windows"):
        plan("liver", window="front-door", bmi=25)


def test_measured_depth_shallower_than_wall_is_an_error():
    with pytest.raises(InputError, match="not deeper than the body wall"):
        plan("liver", bmi=50, depth_cm=1.0)


def test_sweep_agrees_with_make_plan():
    """The vectorised sweep gives the same reach and depth as make_plan for one scenario."""
    for bmi in (19.0, 27.0, 44.0):
        p = make_plan(PlanRequest("liver", Patient.from_inputs(bmi=bmi), window_id="right-subcostal"))
        s = sweep("liver", [bmi], window_id="right-subcostal")
        assert s["depth_cm"][0] == pytest.approx(p.depth_cm, abs=0.01)
        assert s["ceiling_mhz"][0] == pytest.approx(p.windows[0].reach_ceiling_mhz, abs=0.01)


def test_sweep_monotonic_and_finite():
    b = np.linspace(17, 60, 200)
    s = sweep("kidney", b)
    assert np.all(np.isfinite(s["ceiling_mhz"]))
    assert np.all(np.diff(s["depth_cm"]) >= -1e-9)
    assert np.all(np.diff(s["ceiling_mhz"]) <= 1e-9)


def test_local_policy_tightens_a_limit_and_both_values_show():
    """A department's tighter scan-time limit appears beside the published one (BMUS 2009 Fig. 1:
    obstetric TI 1.0-1.5 allows < 30 min), and exceeding it is a warning."""
    import pathlib

    from planner.safety import ExamContext
    policy = pathlib.Path(__file__).resolve().parents[1] / "protocols" / "examples" / "local-policy.yaml"
    ctx = ExamContext(exam_type="obstetric", gestation_weeks=22, expected_ti=1.2, planned_minutes=25,
                      bone_near_focus=True)
    p = make_plan(PlanRequest("fetal-head", Patient.from_inputs(bmi=38, gestation_weeks=22),
                              context=ctx, local_policy_path=str(policy)))
    f = next(f for f in p.safety if f.values.get("local_limit_min") is not None)
    assert f.values["published_limit_min"] == 30
    assert f.values["local_limit_min"] < 30
    assert f.severity == "warning"
    assert "exceeds" in f.message and "30 min" in f.message
    assert p.monitored_index == "TIB"

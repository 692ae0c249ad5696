"""Doppler planning: worked Nyquist examples, published velocity ranges, aliasing and remedies."""

import json
import math
from types import SimpleNamespace as NS

import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

from planner.body.patient import Patient
from planner.engine.serialize import to_json_data
from planner.engine.doppler_plan import (DOPPLER_PLAN_MODES, Vessel, _parse_vessel,
                                         doppler_frequencies_mhz, load_vessels, plan_doppler)
from planner.engine.plan import assess_windows, rank_assessments
from planner.library.probes import load_inventory
from planner.library.targets import WALL_MODEL_IDS, load_library
from planner.physics import attenuation, doppler
from planner.provenance import STATUSES
from planner.references import REFERENCES
from planner.report.doppler_text import doppler_text
from planner.safety import ExamContext, safety_findings

C = 1540.0
INV = load_inventory(None)
REQUIRED = {"aorta", "portal-vein", "hepatic-veins", "renal-artery", "carotid-bifurcation",
            "vertebral-artery", "common-femoral-vein", "popliteal-vein", "umbilical-artery",
            "fetal-mca", "uterine-artery"}


def fake_window(depth_cm, alpha=0.5, wall="epigastric", wid="test-window", name="test window"):
    """One homogeneous layer: round-trip loss 2 alpha f d (no interfaces)."""
    arr = {"thickness_cm": np.array([depth_cm]), "attenuation_db_per_cm_mhz": np.array([alpha]),
           "attenuation_exponent": np.array([1.0]), "impedance_mrayl": np.array([1.63])}

    def loss(f):
        return float(attenuation.stack_round_trip_loss_db(
            arr["thickness_cm"], f, arr["attenuation_db_per_cm_mhz"], arr["attenuation_exponent"]))
    window = NS(id=wid, name=name, wall=wall, rib_gap_mm=None, endocavitary=False)
    return NS(window=window, stack=NS(depth_cm=depth_cm, arrays=lambda: arr), loss_db=loss)


def target(tid, probe_types=("curvilinear",)):
    return NS(id=tid, name=tid.replace("-", " "), probe_types=probe_types)


def real_plan(tid, bmi):
    lib = load_library()
    t = lib.get(tid)
    weeks = 30 if t.exam_type == "obstetric" else None
    patient = Patient(bmi=bmi, bmi_given=True, gestation_weeks=weeks)
    ranked, _ = rank_assessments(assess_windows(patient, t, list(t.windows), INV, t.windows[0]))
    chosen = ranked[0]
    return plan_doppler(t, chosen, chosen.best.probe if chosen.best else None, INV,
                        alternatives=ranked[1:])


def nyquist_cell(plan, f, a):
    return next(r.v_max_cm_s for r in plan.nyquist if r.frequency_mhz == f and r.angle_deg == a)


# --- formulas against worked examples (derived; inputs stated) -----------------------------

def test_prf_and_nyquist_table_NyquistTeaching():
    """d = 10 cm: PRF_max = c/(2d) = 7700 Hz; v_max(0 deg) = c^2/(8 d f0): 2 MHz -> 148 cm/s,
    1 MHz -> 296 cm/s; at 60 deg twice as much (1/cos 60) (derived worked values)."""
    plan, _ = plan_doppler(target("renal-artery"), fake_window(10.0), INV.get("abdominal-curved"), INV)
    assert plan.prf_max_hz == pytest.approx(7700, abs=1)
    assert nyquist_cell(plan, 2.0, 0.0) == pytest.approx(148.0, abs=1.0)
    assert nyquist_cell(plan, 1.0, 0.0) == pytest.approx(296.0, abs=1.0)
    assert nyquist_cell(plan, 2.0, 60.0) == pytest.approx(2 * 148.2, abs=1.0)


def test_velocity_error_at_60_deg_derived():
    """cos(60 +/- 5)/cos 60 - 1 = -15.5 / +14.7 % (derived worked value)."""
    plan, _ = plan_doppler(target("renal-artery"), fake_window(10.0), INV.get("abdominal-curved"), INV)
    assert plan.recommended.angle_deg == 60.0
    assert (plan.velocity_error_percent.plus_5_deg, plan.velocity_error_percent.minus_5_deg) == (-15.5, 14.7)


def test_zero_angle_policy_SMFM2015FetalAnemia():
    """Fetal MCA is read at 0 deg (SMFM 2015): a 5 deg error then costs only cos 5 - 1 = -0.4 %."""
    plan, _ = plan_doppler(target("fetal-mca"), fake_window(9.0, wall="pregnancy_lower"),
                           INV.get("abdominal-curved"), INV)
    assert plan.recommended.angle_deg == 0.0
    assert plan.velocity_error_percent.plus_5_deg == pytest.approx(-0.4, abs=0.05)


def test_doppler_frequencies_lower_half_of_band():
    """Low edge to geometric centre: 1-6 MHz -> 1, 1.5, 2, 2.4 (centre 2.45); 4-12 -> 4, 5, 6, 6.9.
    # regression of our own rule (common practice: Doppler below the imaging band)"""
    assert doppler_frequencies_mhz(1.0, 6.0) == [1.0, 1.5, 2.0, 2.4]
    assert doppler_frequencies_mhz(4.0, 12.0) == [4.0, 5.0, 6.0, 6.9]
    for low, high in [(1, 5), (3, 9), (4, 10), (8, 18)]:
        freqs = doppler_frequencies_mhz(low, high)
        assert freqs[0] == low and max(freqs) <= math.sqrt(low * high) + 1e-9


# --- expected velocities against their published sources -----------------------------------

def test_required_vessels_present_and_sourced():
    vessels = load_vessels()
    assert REQUIRED <= set(vessels)
    for v in vessels.values():
        for rec in v.records():
            assert rec.source in REFERENCES, f"{v.id}: unknown source {rec.source}"
            assert rec.status in STATUSES
        assert float(v.normal_low_cm_s.value) < float(v.normal_high_cm_s.value)


def test_carotid_criteria_Grant2003SRUCarotid():
    """SRU 2003 consensus: ICA PSV < 125 cm/s below 50 %; 125-230 cm/s 50-69 %; > 230 cm/s >= 70 %."""
    v = load_vessels()["carotid-bifurcation"]
    assert v.normal_high_cm_s.value == 125 and v.normal_high_cm_s.source == "Grant2003SRUCarotid"
    assert sorted(s.value for _, s in v.thresholds) == [125, 230]
    assert {s.source for _, s in v.thresholds} == {"Grant2003SRUCarotid"}


def test_renal_criteria_Strandness1994Renal_Olin1995Renal():
    """PSV > 180 cm/s abnormal (Strandness 1994, verified abstract); 200 cm/s for >= 60 %
    (Olin 1995, from memory); ratio 3.5 x upper normal aortic PSV 100 cm/s = 350 cm/s (derived)."""
    vessels = load_vessels()
    v = vessels["renal-artery"]
    assert (v.normal_high_cm_s.value, v.normal_high_cm_s.source, v.normal_high_cm_s.status) == \
        (180, "Strandness1994Renal", "verified")
    values = {s.source: s for _, s in v.thresholds}
    assert values["Olin1995Renal"].value == 200 and values["Olin1995Renal"].status == "from_memory"
    assert values["Derived"].value == pytest.approx(3.5 * vessels["aorta"].normal_high_cm_s.value)


def test_aorta_RenalDuplexTeaching():
    """Normal perirenal aortic PSV 40-100 cm/s (teaching page)."""
    v = load_vessels()["aorta"]
    assert (v.normal_low_cm_s.value, v.normal_high_cm_s.value) == (40, 100)


@pytest.mark.parametrize("week, median", [(18, 23.2), (20, 25.5), (24, 30.7), (30, 40.5), (36, 53.5),
                                          (40, 64.4)])
def test_mca_median_table_Mari2000MCA(week, median):
    """Stored medians equal Mari 2000 Table values and follow exp(2.31 + 0.046 GA) within 2 %."""
    table = dict(load_vessels()["fetal-mca"].median_psv_by_week.value)
    assert table[week] == median
    assert math.exp(2.31 + 0.046 * week) == pytest.approx(median, rel=0.02)


def test_mca_threshold_SMFM2015FetalAnemia():
    """1.5 multiples of the median (SMFM 2015) x the 40-week median 64.4 cm/s (Mari 2000)."""
    v = load_vessels()["fetal-mca"]
    assert v.design_velocity_cm_s == pytest.approx(1.5 * 64.4, abs=0.05)
    assert v.angle_policy == "zero" and v.bone_near_gate


def test_venous_and_portal_ranges_teaching_sources():
    """Femoral vein 12-30 cm/s (LowerLimbVeinTeaching); portal vein 20-40 cm/s, < 16 cm/s slow
    (PortalVeinTeaching); hepatic veins D 16, A 8 cm/s, S 21 + 2 x (5 x 1.9) = 40 cm/s
    (HepaticVeinProbands, derived upper value)."""
    vs = load_vessels()
    cfv, pv, hv = vs["common-femoral-vein"], vs["portal-vein"], vs["hepatic-veins"]
    assert (cfv.normal_low_cm_s.value, cfv.normal_high_cm_s.value) == (12, 30)
    assert (pv.normal_low_cm_s.value, pv.normal_high_cm_s.value, pv.low_flow_below_cm_s.value) == (20, 40, 16)
    assert (hv.normal_low_cm_s.value, hv.reverse_velocity_cm_s.value) == (16, 8)
    assert hv.normal_high_cm_s.value == pytest.approx(21 + 2 * 5 * 1.9, abs=0.5)
    assert vs["vertebral-artery"].design_velocity_cm_s == 100


def test_vessel_ids_and_angle_keys_match_the_target_library():
    lib = load_library()
    for vid, v in load_vessels().items():
        t = lib.get(vid)
        allowed = {"default", *WALL_MODEL_IDS, *t.window_ids()}
        assert set(v.unsteered_angle_deg) <= allowed, vid


def test_bad_vessel_entry_reports_every_problem():
    problems = []
    raw = {"name": "x", "flow": "lymph", "quantity": "q", "waveform": "w", "thresholds": [{"label": "t"}],
           "angle_policy": "sideways", "unsteered_angle_deg": {"default": {"value": 120, "source": "Derived",
                                                                            "status": "derived"}},
           "bone_near_gate": False, "normal_low_cm_s": {"value": 1, "source": "Derived", "status": "guess"},
           "normal_high_cm_s": {"value": 2, "source": "Derived", "status": "derived"},
           "reverse_velocity_cm_s": {"value": 0, "source": "Derived", "status": "derived"},
           "diameter_mm": {"value": 5, "source": "Derived", "status": "derived"},
           "preferred_angle_deg": {"value": 60, "source": "Derived", "status": "derived"}}
    _parse_vessel("bad", raw, problems)
    text = "\n".join(problems)
    assert "angle_policy" in text and "thresholds[0]" in text and "unsteered_angle_deg.default" in text
    assert "status" in text
    problems = []
    assert _parse_vessel("bad", {"name": "x"}, problems) is None and "missing keys" in problems[0]


# --- planning behaviour ---------------------------------------------------------------------

def test_non_vessel_target_gets_no_plan():
    plan, findings = plan_doppler(target("gallbladder"), fake_window(6.0), INV.get("abdominal-curved"), INV)
    assert plan is None and [f.code for f in findings] == ["doppler.no_vessel_data"]


def test_deep_renal_artery_aliases_and_remedies_are_recomputed():
    """Renal artery at 15 cm (0.55 dB/cm/MHz): 2.4 MHz would alias the 180 cm/s normal limit
    (c^2/(8 d f cos 60) = 165 cm/s), so 2.0 MHz is chosen (198 cm/s); the 350 cm/s ratio velocity
    aliases. Every remedy that claims to remove it is re-run here with the physics functions."""
    plan, findings = plan_doppler(target("renal-artery"), fake_window(15.0, alpha=0.55),
                                  INV.get("abdominal-curved"), INV)
    rec = plan.recommended
    assert (rec.frequency_mhz, rec.angle_deg) == (2.0, 60.0)
    assert rec.v_max_cm_s == pytest.approx(C ** 2 / (8 * 0.15 * 2e6 * 0.5) * 100, abs=0.1)
    assert plan.aliasing_expected and plan.margin.design_velocity_cm_s == 350
    assert [c.aliases for c in plan.checks] == [False, True, True]   # 180 ok; 200, 350 alias
    alias = next(f for f in findings if f.code == "doppler.aliasing")
    assert alias.severity == "caution" and "350" in alias.message and "198" in alias.message
    by_action = {r.action: r for r in plan.remedies}
    low = by_action["lower_frequency"]
    assert low.changes["frequency_mhz"] == (2.0, 1.0)     # 1.5 MHz gives only 264 cm/s
    assert doppler.max_velocity_at_depth_cm_s(15.0, 1.0, 60.0) >= 350 > \
        doppler.max_velocity_at_depth_cm_s(15.0, 1.5, 60.0)
    assert by_action["baseline_shift"].v_max_cm_s == pytest.approx(2 * rec.v_max_cm_s, abs=0.2)
    hprf = by_action["high_prf"]
    k = hprf.changes["prf_hz"][1] / hprf.changes["prf_hz"][0]
    assert doppler.nyquist_velocity_cm_s(k * doppler.prf_max_hz(15.0), 2.0, 60.0) >= 350
    assert hprf.extra_gates_cm == (7.5,)
    new_depth = by_action["shallower_window"].changes["depth_cm"][1]
    assert doppler.max_velocity_at_depth_cm_s(new_depth, 2.0, 60.0) >= 350
    assert by_action["continuous_wave"].changes["probe"] == "intercostal-phased"
    for r in plan.remedies:
        assert r.removes_aliasing == (r.v_max_cm_s is None or r.v_max_cm_s >= 350)


def test_bmi45_renal_plan_names_aliasing_and_a_remedy_that_removes_it():
    """BMI 45 through the real target library and wall model: the aliasing finding states its
    numbers and the first effective remedy, re-applied here, keeps 350 cm/s below the limit."""
    plan, findings = real_plan("renal-artery", 45)
    assert plan.aliasing_expected
    rec, depth = plan.recommended, plan.depth_cm
    assert rec.v_max_cm_s == pytest.approx(
        doppler.max_velocity_at_depth_cm_s(depth, rec.frequency_mhz, rec.angle_deg), abs=0.1)
    alias = next(f for f in findings if f.code == "doppler.aliasing")
    assert f"{rec.v_max_cm_s:.0f} cm/s" in alias.message and "350" in alias.message
    fix = next(r for r in plan.remedies if r.removes_aliasing)
    assert fix.action == "lower_frequency" and fix.text in alias.message
    f_new = fix.changes["frequency_mhz"][1]
    assert doppler.max_velocity_at_depth_cm_s(depth, f_new, rec.angle_deg) >= 350


def test_shallower_alternative_window_is_recomputed_at_its_depth():
    deep = fake_window(15.0, alpha=0.55)
    shallow = fake_window(8.0, alpha=0.55, wall="posterior_flank", wid="flank-coronal", name="flank")
    plan, _ = plan_doppler(target("renal-artery"), deep, INV.get("abdominal-curved"), INV, alternatives=[shallow])
    remedy = next(r for r in plan.remedies if r.action == "shallower_window")
    assert remedy.changes["window"] == "flank-coronal"
    a = remedy.changes["angle_deg"][1]
    assert a == 20.0          # the flank view runs along the artery (vessels.yaml)
    assert remedy.v_max_cm_s == pytest.approx(doppler.max_velocity_at_depth_cm_s(8.0, 2.0, a), abs=0.1)


def test_carotid_angle_steer_and_heel_toe():
    """Carotid parallel to the skin (90 deg): a linear array steers 20 deg and heel-toes 10 deg
    to reach 60 deg; a curved array stops at 70 deg and the plan cautions."""
    plan, findings = plan_doppler(target("carotid-bifurcation", ("linear",)),
                                  fake_window(3.0, wall="neck_lateral"), INV.get("general-linear"), INV)
    rec = plan.recommended
    assert (rec.angle_deg, rec.steer_deg, rec.heel_toe_deg) == (60.0, 20.0, 10.0)
    assert "steer" in rec.how and "heel-toe" in rec.how
    assert not [f for f in findings if f.code == "doppler.angle"]
    plan, findings = plan_doppler(target("carotid-bifurcation"), fake_window(3.0, wall="neck_lateral"),
                                  INV.get("abdominal-curved"), INV)
    assert plan.recommended.angle_deg == 70.0
    assert any(f.code == "doppler.angle" and f.severity == "caution" for f in findings)


def test_weak_signal_when_no_frequency_fits_the_budget():
    plan, findings = plan_doppler(target("aorta"), fake_window(20.0, alpha=1.2), INV.get("abdominal-curved"), INV)
    assert not any(row.within_budget for row in plan.frequencies)
    assert plan.recommended.frequency_mhz == 1.0
    assert any(f.code == "doppler.signal" and f.severity == "warning" for f in findings)


def test_missing_probe_falls_back_to_inventory_probe():
    plan, _ = plan_doppler(target("aorta"), fake_window(8.0), None, INV)
    assert plan.probe == "abdominal-curved"


@pytest.mark.parametrize("tid", sorted(REQUIRED))
@pytest.mark.parametrize("bmi", [22, 45])
def test_every_vessel_plan_is_json_ready(tid, bmi):
    plan, findings = real_plan(tid, bmi)
    text = json.dumps(to_json_data(plan), allow_nan=False)
    assert plan.vessel.id == tid and "NaN" not in text
    assert findings[0].code == "doppler.settings"
    assert all(s in REFERENCES for s in plan.sources)
    assert plan.aliasing_expected == any(c.aliases for c in plan.checks)
    assert bool(plan.remedies) == plan.aliasing_expected


def test_early_pregnancy_doppler_comes_from_the_safety_rules_WFUMBISUOG2011():
    """The plan's Doppler modes switch on the existing safety rules (not duplicated here)."""
    ctx = ExamContext(exam_type="obstetric", gestation_weeks=12, modes=DOPPLER_PLAN_MODES,
                      bone_near_focus=load_vessels()["fetal-mca"].bone_near_gate)
    codes = {f.code for f in safety_findings(ctx)}
    assert "safety.early_pregnancy_doppler" in codes and "safety.doppler_near_bone" in codes


def test_text_section_shows_numbers_and_remedies():
    plan, _ = plan_doppler(target("renal-artery"), fake_window(15.0, alpha=0.55), INV.get("abdominal-curved"), INV)
    text = "\n".join(doppler_text(plan))
    assert "ALIASING expected: 350 cm/s" in text and "198 cm/s" in text
    assert text.count("removes aliasing") == sum(r.removes_aliasing for r in plan.remedies)
    plan, _ = plan_doppler(target("portal-vein"), fake_window(9.0, wall="ruq_intercostal"),
                           INV.get("abdominal-curved"), INV)
    assert "No aliasing expected" in "\n".join(doppler_text(plan))
    assert isinstance(load_vessels()["portal-vein"], Vessel)


@settings(max_examples=60, deadline=None)
@given(st.sampled_from(sorted(REQUIRED)), st.floats(1.0, 25.0), st.floats(0.3, 1.0),
       st.sampled_from(["abdominal-curved", "general-linear", "intercostal-phased"]))
def test_invariants_over_depths_and_probes(tid, depth, alpha, probe_id):
    """Invariants: the recommended limit is c^2/(8 d f0 cos theta); aliasing is flagged exactly
    when the design velocity exceeds it; a remedy removes aliasing exactly when its recomputed
    limit reaches the design velocity; the plan is JSON without NaN or infinity."""
    plan, _ = plan_doppler(target(tid), fake_window(depth, alpha), INV.get(probe_id), INV)
    rec, vd = plan.recommended, plan.margin.design_velocity_cm_s
    cos_t = math.cos(math.radians(rec.angle_deg))
    expected = C ** 2 / (8 * depth / 100 * rec.frequency_mhz * 1e6 * cos_t) * 100
    assert rec.v_max_cm_s == pytest.approx(expected, abs=0.06)
    assert plan.aliasing_expected == (vd > expected)
    for r in plan.remedies:
        assert r.removes_aliasing == (r.v_max_cm_s is None or r.v_max_cm_s >= vd)
    json.dumps(to_json_data(plan), allow_nan=False)

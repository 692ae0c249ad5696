"""Gestational age in obstetric plans: growth charts, gestational ranges, geometry and errors.

External checks (each named beside its assertion):

* Papageorghiou2014CRL: the published INTERGROWTH-21st crown-rump length centile table
  (median column, 9+0 to 14+0 weeks).
* Hadlock1984: the menstrual-age regressions on HC, AC, BPD and FL of an independent
  chart; the INTERGROWTH-21st 50th centiles must date to their own gestation within the
  spread of fetal dating (Hadlock's BPD is outer-to-inner, INTERGROWTH's outer-to-outer, so
  BPD and FL get the 2-week tolerance of third-trimester dating).
* Papageorghiou2016SFH: the published symphysis-fundal height centile table at weeks that
  the package table does not hold (checks the interpolation against the publication).
* FMFNuchal / Salomon2013FirstTrimester: nuchal translucency at 11+0 to 13+6 weeks with a
  CRL of 45-84 mm; skull ossification from 11 weeks.
"""

from __future__ import annotations

import subprocess
import sys

import numpy as np
import pytest

from planner.body import gestation as g
from planner.body.patient import Patient
from planner.engine import PlanRequest, make_plan
from planner.errors import InputError
from planner.library.targets import load_library
from planner.physics.tissues import get_tissue

# INTERGROWTH-21st CRL standard, published centile table, median (P50) column. [weeks, mm]
CRL_TABLE_P50 = [(9.0, 21.9), (10.0, 32.6), (11.0, 43.8), (12.0, 55.6), (13.0, 67.8),
                 (14.0, 80.6), (9 + 3 / 7, 26.5), (12 + 4 / 7, 62.5)]

# INTERGROWTH-21st symphysis-fundal height table, P50, at weeks between the package rows.
SFH_TABLE_P50 = [(18, 17.8), (22, 21.8), (26, 25.7), (30, 29.6), (34, 33.2), (38, 36.5)]


def _hadlock_ga(quantity: str, cm: float) -> float:
    """Menstrual age from one measurement in cm (Hadlock1984 regressions). [weeks]"""
    return {"hc": 8.96 + 0.540 * cm + 0.0003 * cm ** 3,
            "ac": 8.14 + 0.753 * cm + 0.0036 * cm ** 2,
            "bpd": 9.54 + 1.482 * cm + 0.1676 * cm ** 2,
            "fl": 10.35 + 2.460 * cm + 0.170 * cm ** 2}[quantity]


@pytest.mark.parametrize("weeks,median_mm", CRL_TABLE_P50)
def test_crl_matches_the_published_intergrowth_table(weeks, median_mm):
    # Papageorghiou2014CRL, centile table, P50 column (values rounded to 0.1 mm)
    assert float(g.crl_mm(weeks)) == pytest.approx(median_mm, abs=0.1)


@pytest.mark.parametrize("quantity,function,tolerance_weeks", [
    ("hc", g.hc_mm, 1.0), ("ac", g.ac_mm, 1.0), ("bpd", g.bpd_mm, 2.0), ("fl", g.fl_mm, 2.0)])
def test_growth_chart_dates_to_its_gestation_on_hadlocks_chart(quantity, function, tolerance_weeks):
    # Hadlock1984 regressions (an independent chart) applied to the INTERGROWTH-21st medians
    for weeks in range(14, 37):
        dated = _hadlock_ga(quantity, float(function(weeks)) / 10.0)
        assert dated == pytest.approx(weeks, abs=tolerance_weeks), (quantity, weeks, dated)


def test_growth_is_monotonic_over_the_chart_range():
    weeks = np.arange(14.0, 40.5, 0.5)
    for function in (g.hc_mm, g.bpd_mm, g.ac_mm, g.fl_mm):
        assert np.all(np.diff(function(weeks)) > 0), function.__name__


@pytest.mark.parametrize("weeks,sfh_cm", SFH_TABLE_P50)
def test_fundal_height_follows_the_published_table(weeks, sfh_cm):
    # Papageorghiou2016SFH, centile table, P50 column
    assert g.fundal_height_cm(weeks) == pytest.approx(sfh_cm, abs=0.3)


def test_nuchal_window_and_first_trimester_ranges_follow_the_guidelines():
    embryo = g.gestation_range("embryo")
    lo, hi = embryo.nuchal_translucency.value
    assert (lo, hi) == pytest.approx((11.0, 13 + 6 / 7), abs=0.01)      # FMFNuchal: 11+0 to 13+6
    # FMFNuchal: CRL 45-84 mm; the INTERGROWTH-21st medians at the window's ends lie inside
    # it to within the CRL centile spread (about 4 mm, Papageorghiou2014CRL P25-P50)
    assert 41.0 <= float(g.crl_mm(lo)) <= 49.0 and float(g.crl_mm(hi)) <= 84.0
    assert embryo.valid.value[1] == 14.0       # Salomon2013FirstTrimester: CRL dating to 84 mm
    assert g.gestation_range("fetal-head").scan.value[0] == 11.0    # ossified skull from 11 weeks
    assert g.gestation_range("fetal-head").valid.value == (14.0, 40.0)   # INTERGROWTH chart range


def test_every_obstetric_target_has_a_range_and_no_other_does():
    lib = load_library()
    with_range = {t.id for t in lib if g.gestation_range(t.id) is not None}
    assert with_range == {t.id for t in lib if t.exam_type == "obstetric"}


def test_fetal_skull_thickens_and_ossifies_but_stays_below_adult_bone():
    soft, bone = get_tissue("soft_tissue"), get_tissue("cortical_bone")
    skulls = [g.fetal_skull_tissue(w) for w in (12.0, 20.0, 28.0, 36.0)]
    alphas = [s.attenuation_db_per_cm_mhz for s in skulls]
    assert all(a < b for a, b in zip(alphas, alphas[1:]))
    assert soft.attenuation_db_per_cm_mhz < alphas[0] and alphas[-1] < bone.attenuation_db_per_cm_mhz
    thick = [g.skull_thickness_mm(w) for w in (12, 20, 28, 36)]
    assert all(a < b for a, b in zip(thick, thick[1:])) and thick[-1] <= 2.5   # mm, thin plate


def _plan(target: str, weeks: float | None, window: str | None = None):
    return make_plan(PlanRequest(target, Patient.from_inputs(bmi=25, gestation_weeks=weeks),
                                 window_id=window))


def _layer(plan, role: str) -> float:
    return sum(lay.thickness_cm for lay in plan.layers if lay.role == role)


def test_fetal_head_plans_deepen_and_the_brain_path_follows_the_bpd():
    plans = [_plan("fetal-head", w, "transabdominal") for w in (12, 20, 28, 36)]
    depths = [p.depth_cm for p in plans]
    brains = [_layer(p, "fetal_brain") for p in plans]
    assert all(a < b for a, b in zip(depths, depths[1:])), depths
    assert all(a < b for a, b in zip(brains, brains[1:])), brains
    for w, brain in zip((12, 20, 28, 36), brains):      # BPD (outer-outer) less two bones
        assert brain == pytest.approx((float(g.bpd_mm(w)) - 2 * g.skull_thickness_mm(w)) / 10, abs=0.01)
    skull = [next(lay for lay in p.layers if lay.role == "fetal_skull") for p in plans]
    assert all("Fetal parietal bone" in lay.label for lay in skull)
    assert skull[0].attenuation_db_per_cm_mhz < skull[-1].attenuation_db_per_cm_mhz


def test_fetal_heart_plans_deepen_as_the_fetus_grows():
    plans = [_plan("fetal-heart", w, "transabdominal") for w in (12, 20, 28, 36)]
    depths = [p.depth_cm for p in plans]
    hearts = [_layer(p, "fetal_heart") for p in plans]
    assert all(a < b for a, b in zip(depths, depths[1:])), depths
    assert all(a < b for a, b in zip(hearts, hearts[1:])), hearts


def test_embryo_is_shallower_early_and_refused_late():
    assert _plan("embryo", 8).depth_cm < _plan("embryo", 12).depth_cm
    with pytest.raises(InputError, match="outside the range.*5 to 14 weeks.*fetal-head"):
        _plan("embryo", 30)


def test_edge_of_practice_is_flagged_not_refused():
    plan = _plan("fetal-head", 12)
    flags = [f for f in plan.validity if f.parameter == "gestation_weeks"]
    assert flags and flags[0].valid_range == (14.0, 40.0) and "extrapolated" in flags[0].message
    assert not [f for f in _plan("fetal-head", 20).validity if f.parameter == "gestation_weeks"]
    with pytest.raises(InputError, match="not yet ossified"):
        _plan("fetal-head", 9)


def test_no_gestation_assumes_the_stated_default():
    plan, at20 = _plan("fetal-head", None), _plan("fetal-head", 20)
    assert plan.depth_cm == at20.depth_cm and plan.patient.gestation_weeks is None
    assert any("20 weeks assumed" in a for a in plan.assumptions)
    assert any("12 weeks assumed" in a for a in _plan("embryo", None).assumptions)


def test_fetal_skull_advice_fits_fetal_bone():
    finding = next(f for f in _plan("fetal-head", 28).findings if f.code == "shadow.bone")
    text = finding.message
    assert "parietal" in text and "perpendicular" in text and "reverberation" in text
    assert "lowest frequency" not in text and "Salomon2019Biometry" in finding.sources
    adult = next(f for f in _plan("adult-transcranial", None).findings if f.code == "shadow.bone")
    assert "lowest frequency" in adult.message


def test_non_obstetric_geometry_ignores_gestation():
    assert [lay.thickness_cm for lay in _plan("liver", 20).layers] == \
        [lay.thickness_cm for lay in _plan("liver", None).layers]


def test_cli_refuses_an_out_of_range_gestation_with_one_line():
    out = subprocess.run([sys.executable, "-m", "planner", "plan", "--target", "embryo",
                          "--gestation-weeks", "30"], capture_output=True, text=True, timeout=120)
    assert out.returncode == 2 and out.stdout == ""
    lines = out.stderr.strip().splitlines()
    assert len(lines) == 1 and "gestational age 30 weeks" in lines[0]


def test_ui_marks_the_gestation_field():
    from planner.tui.compute import compute, form_values
    from planner.tui.demo import DEMO_INPUTS
    from dataclasses import replace
    outcome = compute(form_values(replace(DEMO_INPUTS, target_id="embryo", gestation_weeks=30.0)))
    assert outcome.plan is None and "gestation_weeks" in outcome.problems

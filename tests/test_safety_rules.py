"""Safety findings for exam contexts, checked against the published guidance they apply.

Each test names the publication (keys of planner.references.REFERENCES) it checks.
"""

from __future__ import annotations

import itertools
import json
import re

import pytest

from planner.findings import SEVERITIES, Finding
from planner.references import REFERENCES
from planner.safety import (DISCLAIMER, EXAM_TYPES, MODES, ExamContext, is_local_source,
                            monitored_index, safety_findings, safety_report)
from planner.safety.thermal import table_limits


def _by_code(findings: list[Finding]) -> dict[str, Finding]:
    return {f.code: f for f in findings}


def _scan_time(**kwargs) -> Finding:
    return _by_code(safety_findings(ExamContext(**kwargs)))["safety.scan_time"]


def _contexts():
    """A spread of contexts over every exam type, mode set and risk flag."""
    for exam in EXAM_TYPES:
        pregnant = exam in ("obstetric", "gynaecological")
        weeks = (None, 8, 24) if pregnant else (None,)
        for week, modes, flags in itertools.product(
                weeks, (("b_mode",), ("b_mode", "colour_doppler", "pulsed_doppler")),
                ((False, False, False), (True, True, True))):
            yield ExamContext(exam, gestation_weeks=week,
                              pregnancy_possible=exam == "gynaecological" and week is not None,
                              modes=modes, contrast_agent=flags[0], febrile=flags[1],
                              lung_in_beam=flags[2], bone_near_focus=flags[2],
                              expected_ti=1.2, planned_minutes=25, expected_mi=0.5)


CONTEXTS = list(_contexts())


@pytest.mark.parametrize("ctx", CONTEXTS, ids=lambda c: f"{c.exam_type}-{len(c.modes)}")
def test_every_context_gives_alara_index_and_statement(ctx):
    """Every context yields ALARA (BMUS 2009 key principles), the thermal index to monitor and
    the decision-support statement."""
    report = safety_report(ctx)
    codes = [f.code for f in report.findings]
    assert codes[:3] == ["safety.alara", "safety.index", "safety.scan_time"]
    assert report.statement == DISCLAIMER
    index = report.monitored_index
    assert index in ("TIS", "TIB", "TIC")
    assert re.search(rf"\b{index}\b", report.findings[1].message)
    assert re.search(rf"\b{index}\b", report.findings[2].message)
    for finding in report.findings:
        assert finding.severity in SEVERITIES
        assert finding.sources and all(s in REFERENCES for s in finding.sources), finding.code
    json.dumps(report.to_dict())  # JSON-ready


def test_statement_is_short_and_defers():
    """The statement defers to local protocols, licensed judgement and displayed indices."""
    assert DISCLAIMER.count(".") <= 2 and len(DISCLAIMER) < 240
    for word in ("Decision support", "local protocols", "licensed", "display"):
        assert word.lower() in DISCLAIMER.lower()


def test_alara_mentions_souvenir_rule_in_pregnancy_BMUS2009():
    """BMUS 2009 key principles: no scans in pregnancy only for souvenir pictures."""
    alara = _by_code(safety_findings(ExamContext("obstetric", gestation_weeks=20)))["safety.alara"]
    assert "souvenir" in alara.message and "BMUS2009" in alara.sources
    plain = _by_code(safety_findings(ExamContext("cardiac")))["safety.alara"]
    assert "souvenir" not in plain.message


# --------------------------------------------------------------------------- scan time

def test_obstetric_ti_1_2_allows_under_30_minutes_BMUS2009():
    """BMUS 2009 Fig. 1: obstetric TI 1.0-1.5 allows under 30 minutes."""
    finding = _scan_time(exam_type="obstetric", gestation_weeks=22, expected_ti=1.2,
                         planned_minutes=20)
    assert finding.values["published_limit_min"] == pytest.approx(30.0)
    assert finding.values["monitored_index"] == "TIB"
    assert "TIB" in finding.message and "30 min" in finding.message


@pytest.mark.parametrize(("planned", "severity"), [(20, "info"), (25, "caution"),
                                                   (29, "caution"), (35, "warning")])
def test_obstetric_planned_minutes_against_limit_BMUS2009(planned, severity):
    """BMUS 2009 Fig. 1, TI 1.0-1.5 -> < 30 min: above it a warning; above 80 % (24 min) a
    caution (scanplan's margin)."""
    finding = _scan_time(exam_type="obstetric", gestation_weeks=22, expected_ti=1.2,
                         planned_minutes=planned)
    assert finding.severity == severity


def test_obstetric_ti_above_3_not_recommended_BMUS2009():
    """BMUS 2009 Fig. 1: TI > 3.0 is not recommended for obstetric scanning."""
    finding = _scan_time(exam_type="obstetric", gestation_weeks=30, expected_ti=3.2,
                         planned_minutes=0.5)
    assert finding.severity == "warning"
    assert finding.values["published_limit_kind"] == "not_recommended"
    assert "not recommended" in finding.message


def test_obstetric_ti_at_or_below_0_7_has_no_limit_BMUS2009_AIUM2022TI():
    """BMUS 2009 Fig. 1 (0-0.7 unlimited) and AIUM 2022 Table 1 (no limit at TI <= 0.7)."""
    finding = _scan_time(exam_type="obstetric", gestation_weeks=30, expected_ti=0.7,
                         planned_minutes=90)
    assert finding.severity == "info"
    assert finding.values["published_limit_min"] is None
    assert finding.values["published_limit_kind"] == "unlimited"


def test_general_ti_1_2_takes_stricter_of_BMUS_and_AIUM():
    """General abdominal, TI 1.2: BMUS non-obstetric table < 120 min (BMUS2009Detailed), AIUM
    2022 Table 2 no limit up to 1.5 (AIUM2022TI); the stricter, 120 min, is compared."""
    finding = _scan_time(exam_type="general_abdominal", expected_ti=1.2, planned_minutes=130)
    assert finding.values["published_limit_min"] == pytest.approx(120.0)
    kinds = {t["table"]: t["kind"] for t in finding.values["tables"]}
    assert kinds == {"bmus_general": "limited", "aium_table_2": "unlimited"}
    assert finding.severity == "warning"
    assert "TIS" in finding.message


def test_typed_table_limits_are_the_bands_the_finding_compares_BMUS2009_AIUM2022TI():
    """BMUS 2009 Fig. 1: TI 2.0-2.5 -> 4 min after 10 weeks; AIUM 2022: 33 % shorter for
    pulsed Doppler with bone near the focus (4 x 0.67 = 2.68 min). The typed bands are the
    entries of the finding's ``tables`` value; none without an expected TI or for the eye."""
    plain = ExamContext("obstetric", gestation_weeks=24, expected_ti=2.2)
    doppler = ExamContext("obstetric", gestation_weeks=24, expected_ti=2.2,
                          modes=("b_mode", "pulsed_doppler"), bone_near_focus=True)
    bmus = table_limits(plain)[0]
    assert (bmus.title, bmus.band, bmus.kind, bmus.limit_min) == ("BMUS 2009", "TI 2.0-2.5",
                                                                  "limited", 4.0)
    assert table_limits(doppler)[0].limit_min == pytest.approx(4.0 * (1 - 0.33))
    for ctx in (plain, doppler):
        finding = _by_code(safety_findings(ctx))["safety.scan_time"]
        assert [t.as_values() for t in table_limits(ctx)] == finding.values["tables"]
    assert table_limits(ExamContext("obstetric", gestation_weeks=24)) == ()
    assert table_limits(ExamContext("ophthalmic", expected_ti=0.5)) == ()


def test_gynaecological_with_pregnancy_uses_obstetric_table_AIUM2022TI():
    """AIUM 2022 Table 1 includes gynaecological exams when pregnancy is possible."""
    pregnant = _scan_time(exam_type="gynaecological", pregnancy_possible=True, expected_ti=1.2)
    not_pregnant = _scan_time(exam_type="gynaecological", expected_ti=1.2)
    assert pregnant.values["published_limit_min"] == pytest.approx(30.0)
    assert not_pregnant.values["published_limit_min"] == pytest.approx(120.0)


def test_neonatal_head_uses_the_obstetric_table_AIUM2022TI():
    """AIUM 2022 Table 1 covers neonatal transcranial exams; neonatal other exams use Table 2."""
    head = _scan_time(exam_type="neonatal_head", expected_ti=1.2)
    other = _scan_time(exam_type="neonatal_other", expected_ti=1.2)
    assert head.values["table_group"] == "pregnancy_neonatal"
    assert other.values["table_group"] == "general"


def test_pulsed_doppler_near_bone_cuts_times_by_a_third_AIUM2022TI():
    """AIUM 2022: reduce maximum dwell times by 33 % for pulsed Doppler with bone near the focus.
    Obstetric TI 1.2: 30 min -> 20.1 min."""
    base = dict(exam_type="obstetric", gestation_weeks=28, expected_ti=1.2, planned_minutes=25)
    plain = _scan_time(**base, modes=("b_mode", "pulsed_doppler"))
    near_bone = _scan_time(**base, modes=("b_mode", "pulsed_doppler"), bone_near_focus=True)
    bone_b_mode = _scan_time(**base, bone_near_focus=True)
    assert plain.values["published_limit_min"] == pytest.approx(30.0)
    assert near_bone.values["published_limit_min"] == pytest.approx(30.0 * 0.67)
    assert bone_b_mode.values["published_limit_min"] == pytest.approx(30.0)
    assert (plain.severity, near_bone.severity) == ("caution", "warning")
    codes = [f.code for f in safety_findings(ExamContext(
        **base, modes=("pulsed_doppler",), bone_near_focus=True))]
    assert "safety.doppler_near_bone" in codes


def test_without_expected_ti_the_table_and_max_ti_for_planned_time_are_shown_BMUS2009():
    """BMUS 2009 Fig. 1: for 40 planned minutes the TI must stay <= 1.0 (< 60 min band)."""
    finding = _scan_time(exam_type="obstetric", gestation_weeks=20, planned_minutes=40)
    assert finding.severity == "info"
    assert "keep TIB <= 1.0" in finding.message
    assert "< 30 min" in finding.message  # the table itself is listed


def test_eye_is_outside_the_scan_time_tables_AIUM2022TI():
    """AIUM 2022 Tables 1 and 2 exclude the eye."""
    finding = _scan_time(exam_type="ophthalmic", expected_ti=0.5, planned_minutes=10)
    assert finding.values["table_group"] == "none"
    assert "eye" in finding.message


# --------------------------------------------------------------------------- pregnancy

def test_first_trimester_doppler_restrictions_WFUMBISUOG2011():
    """WFUMB/ISUOG 2011: Doppler at 11-14 weeks or earlier not routine, TI <= 1.0, usually
    <= 5-10 min, never > 60 min."""
    base = dict(exam_type="obstetric", gestation_weeks=12, modes=("b_mode", "pulsed_doppler"))
    ok = _by_code(safety_findings(ExamContext(**base, expected_ti=0.8, planned_minutes=5)))
    hot = _by_code(safety_findings(ExamContext(**base, expected_ti=1.1, planned_minutes=5)))
    long = _by_code(safety_findings(ExamContext(**base, expected_ti=0.8, planned_minutes=65)))
    finding = ok["safety.early_pregnancy_doppler"]
    assert finding.severity == "caution"
    assert finding.values["published_max_ti"] == pytest.approx(1.0)
    assert finding.values["absolute_max_minutes"] == pytest.approx(60)
    assert "routine" in finding.message and "TIB" in finding.message
    assert "WFUMBISUOG2011" in finding.sources
    assert hot["safety.early_pregnancy_doppler"].severity == "warning"
    assert long["safety.early_pregnancy_doppler"].severity == "warning"


def test_early_doppler_rule_stops_after_14_weeks_WFUMBISUOG2011():
    """The statement covers 11-14 week scans or earlier; at 20 weeks it does not apply, and it
    never applies to B-mode alone."""
    late = ExamContext("obstetric", gestation_weeks=20, modes=("b_mode", "pulsed_doppler"))
    b_mode = ExamContext("obstetric", gestation_weeks=12)
    for ctx in (late, b_mode):
        assert "safety.early_pregnancy_doppler" not in _by_code(safety_findings(ctx))


def test_febrile_pregnant_patient_AIUM2022TI():
    """AIUM 2022: scan febrile gravidas only if clinically indicated; defer if possible."""
    finding = _by_code(safety_findings(ExamContext("obstetric", gestation_weeks=20,
                                                   febrile=True)))["safety.febrile"]
    assert finding.severity == "caution"
    assert "clinically indicated" in finding.message and "defer" in finding.message
    assert "AIUM2022TI" in finding.sources
    adult = _by_code(safety_findings(ExamContext("general_abdominal", febrile=True)))
    assert adult["safety.febrile"].severity == "advice"


# --------------------------------------------------------------------------- mechanical index

def test_neonatal_lung_mi_AIUM2023Lung_BMUS2009Detailed():
    """Neonatal lung in the beam: BMUS MI < 0.3, AIUM 2023 MI < 0.4."""
    def mi(value):
        ctx = ExamContext("neonatal_other", lung_in_beam=True, expected_mi=value)
        return _by_code(safety_findings(ctx))["safety.mi.neonatal"]

    assert mi(0.2).severity == "caution"
    assert mi(0.35).severity == "caution"
    assert mi(0.45).severity == "warning"
    assert mi(0.2).values["aium_lung_max_mi"] == pytest.approx(0.4)
    assert "AIUM2023Lung" in mi(0.2).sources


def test_adult_lung_threshold_AIUMGasBodies():
    """AIUM: lung capillary haemorrhage in laboratory mammals from an in situ MI of about 0.4."""
    finding = _by_code(safety_findings(ExamContext("thorax", lung_in_beam=True,
                                                   expected_mi=0.9)))["safety.mi.lung"]
    assert finding.values["published_max_mi"] == pytest.approx(0.4)
    assert finding.severity == "caution"


def test_contrast_agent_mi_TerHaar2009():
    """ter Haar 2009: contrast microvascular effects from MI about 0.4; BMUS: cavitation risk
    above 0.7 (from memory)."""
    def contrast(value):
        ctx = ExamContext("general_abdominal", contrast_agent=True, expected_mi=value)
        return _by_code(safety_findings(ctx))["safety.mi.contrast"]

    assert contrast(0.1).severity == "caution"
    assert contrast(0.8).severity == "warning"
    assert "from memory" in contrast(0.1).message
    assert contrast(0.1).values["microvascular_threshold_mi"] == pytest.approx(0.4)


def test_ophthalmic_limits_FDA2019Track3():
    """FDA ophthalmic: MI <= 0.23, I_SPTA.3 <= 50 mW/cm² (King et al. 2017); TI <= 1.0 (from
    memory)."""
    ok = _by_code(safety_findings(ExamContext("ophthalmic", expected_ti=0.4, expected_mi=0.2)))
    hot = _by_code(safety_findings(ExamContext("ophthalmic", expected_mi=0.3)))
    assert ok["safety.ophthalmic"].severity == "caution"
    assert hot["safety.ophthalmic"].severity == "warning"
    assert ok["safety.output_ceiling"].values["max_ispta_mw_per_cm2"] == 50
    assert "from memory" in ok["safety.ophthalmic"].message


def test_regulatory_ceiling_is_context_FDA2019Track3():
    """FDA Track 3: derated I_SPTA.3 <= 720 mW/cm², MI <= 1.9 (non-ophthalmic)."""
    info = _by_code(safety_findings(ExamContext("cardiac")))["safety.output_ceiling"]
    assert (info.severity, info.values["max_mi"], info.values["max_ispta_mw_per_cm2"]) == (
        "info", 1.9, 720)
    over = _by_code(safety_findings(ExamContext("cardiac", expected_mi=2.1)))
    assert over["safety.output_ceiling"].severity == "warning"


def test_index_finding_flags_an_assumed_gestation_BMUS2009():
    """Without a gestational age the obstetric index is assumed (TIB), and the finding says so."""
    finding = _by_code(safety_findings(ExamContext("obstetric")))["safety.index"]
    assert finding.values["assumed"] is True and finding.severity == "advice"
    assert monitored_index(ExamContext("obstetric")) == "TIB"


def test_no_local_sources_without_policy():
    for ctx in CONTEXTS[:20]:
        for finding in safety_findings(ctx):
            assert not any(is_local_source(s) for s in finding.sources)
            assert "local_limit_min" not in finding.values


def test_modes_cover_every_mode():
    """Every mode id is accepted."""
    ctx = ExamContext(modes=tuple(MODES))
    assert ctx.modes == tuple(MODES)


def test_possible_pregnancy_in_another_exam_AIUM2022TI():
    """A possibly pregnant patient in a chest exam: the febrile-gravida rule (AIUM 2022) applies,
    the obstetric table is advised only if the uterus is in the beam, and the souvenir rule of
    pregnancy scans (BMUS 2009) is not shown."""
    found = _by_code(safety_findings(ExamContext("thorax", pregnancy_possible=True,
                                                 febrile=True)))
    assert found["safety.febrile"].severity == "caution"
    assert "safety.pregnancy_possible" in found
    assert "souvenir" not in found["safety.alara"].message
    assert found["safety.scan_time"].values["table_group"] == "general"

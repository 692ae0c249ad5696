"""Safety data against the published tables and statements it comes from.

Each check names its source (keys of planner.references.REFERENCES). Where a cell is
recalled from memory the data file says so; the checks below pin only cells read in the
named publication, except where a comment says otherwise.
"""

from __future__ import annotations

import math
from typing import Any

import pytest

from planner.datafiles import load_package_yaml
from planner.provenance import STATUSES
from planner.references import REFERENCES
from planner.safety import EXAM_TYPES, ExamContext, monitored_index
from planner.safety.tables import safety_data

# --------------------------------------------------------------------------- data integrity


def _walk(node: Any, path: str, found: list[str]) -> None:
    """Collect every number that is neither a sourced value nor inside a sourced table row."""
    if isinstance(node, dict):
        if {"value", "source", "status"} <= set(node):
            return
        if {"ti_above", "max_minutes", "source", "status"} <= set(node):
            return
        for key, value in node.items():
            _walk(value, f"{path}.{key}", found)
    elif isinstance(node, list):
        for i, item in enumerate(node):
            _walk(item, f"{path}[{i}]", found)
    elif isinstance(node, (int, float)) and not isinstance(node, bool):
        found.append(path)


def _sourced_nodes(node: Any, path: str = ""):
    if isinstance(node, dict):
        if "source" in node or "status" in node:
            yield path, node
        for key, value in node.items():
            yield from _sourced_nodes(value, f"{path}.{key}")
    elif isinstance(node, list):
        for i, item in enumerate(node):
            yield from _sourced_nodes(item, f"{path}[{i}]")


def test_every_number_in_safety_data_is_sourced():
    """Every number carries a source and a status (project rule)."""
    raw = load_package_yaml("safety.yaml")
    raw = {k: v for k, v in raw.items() if k != "schema_version"}
    bare: list[str] = []
    _walk(raw, "safety", bare)
    assert bare == []


def test_every_source_is_in_the_bibliography_with_a_known_status():
    raw = load_package_yaml("safety.yaml")
    nodes = list(_sourced_nodes(raw))
    assert len(nodes) > 60
    for path, node in nodes:
        assert node["source"] in REFERENCES, path
        if "rows" not in node:  # a table names its publication; each row has its own status
            assert node["status"] in STATUSES, path


def test_every_exam_type_has_safety_data():
    data = safety_data()
    assert set(data.exam_types) == set(EXAM_TYPES)
    for exam, entry in data.exam_types.items():
        assert entry.thermal_index.value in ("TIS", "TIB", "TIC"), exam
        assert entry.scan_time_group.value in (*data.groups, "none"), exam


@pytest.mark.parametrize("table_id", ["bmus_obstetric", "bmus_general", "aium_table_1",
                                      "aium_table_2"])
def test_scan_time_tables_cover_every_ti_and_shorten_with_ti(table_id):
    """Invariant: bands are contiguous from 0 to infinity and times fall as TI rises."""
    table = safety_data().tables[table_id]
    assert table.row_at(0.0).kind == "unlimited"
    assert table.rows[-1].ti_up_to is None and table.rows[-1].kind == "not_recommended"
    times = [r.max_minutes for r in table.rows if r.kind == "limited"]
    assert times == sorted(times, reverse=True)
    for lo, hi in zip(table.rows, table.rows[1:]):
        assert lo.ti_up_to == hi.ti_above


# --------------------------------------------------------------------------- BMUS 2009 Fig. 1

BMUS_OBSTETRIC_FIG1 = [  # (displayed TI, BMUS 2009 Fig. 1 recommended maximum)
    (0.0, None), (0.5, None), (0.7, None),
    (0.8, 60.0), (1.0, 60.0),
    (1.2, 30.0), (1.5, 30.0),
    (1.8, 15.0), (2.2, 4.0), (2.7, 1.0),
    (3.1, "not_recommended"), (4.5, "not_recommended"),
]


@pytest.mark.parametrize(("ti", "expected"), BMUS_OBSTETRIC_FIG1)
def test_obstetric_scan_time_BMUS2009(ti, expected):
    """BMUS 2009, Fig. 1: TI 0-0.7 unlimited; 0.7-1.0 < 60 min; 1.0-1.5 < 30 min; 1.5-2.0 < 15;
    2.0-2.5 < 4; 2.5-3.0 < 1; > 3.0 not recommended for obstetric scanning.

    Band edges (0.7, 1.0, 1.5) belong to the lower band: the figure does not say, and AIUM
    2022 words its threshold as "at or below 0.7".
    """
    row = safety_data().tables["bmus_obstetric"].row_at(ti)
    if expected is None:
        assert row.kind == "unlimited"
    elif expected == "not_recommended":
        assert row.kind == "not_recommended"
    else:
        assert row.kind == "limited" and row.max_minutes == pytest.approx(expected)
    assert row.source == "BMUS2009" and row.status == "verified"


BMUS_GENERAL_VERIFIED = [(0.5, None), (1.0, None), (1.2, 120.0), (1.7, 60.0), (2.3, 15.0),
                         (2.8, 4.0)]


@pytest.mark.parametrize(("ti", "expected"), BMUS_GENERAL_VERIFIED)
def test_general_scan_time_BMUS2009Detailed(ti, expected):
    """BMUS non-obstetric table (general abdominal, peripheral vascular, other except eye):
    TI <= 1.0 unlimited; 1.0-1.5 < 120 min; 1.5-2.0 < 60; 2.0-2.5 < 15; 2.5-3.0 < 4 (read)."""
    row = safety_data().tables["bmus_general"].row_at(ti)
    if expected is None:
        assert row.kind == "unlimited"
    else:
        assert row.max_minutes == pytest.approx(expected)
    assert row.status == "verified"


def test_general_table_tail_is_marked_from_memory_BMUS2009Detailed():
    """Rows above TI 3.0 of the non-obstetric table were not read: they must say so."""
    table = safety_data().tables["bmus_general"]
    for ti in (3.5, 5.0, 7.0):
        assert table.row_at(ti).status == "from_memory"


@pytest.mark.parametrize(("table_id", "no_limit_up_to"), [("aium_table_1", 0.7),
                                                          ("aium_table_2", 1.5)])
def test_aium_no_limit_thresholds_AIUM2022TI(table_id, no_limit_up_to):
    """AIUM 2022: no time limit at TI <= 0.7 (Table 1) and TI <= 1.5 (Table 2)."""
    table = safety_data().tables[table_id]
    assert table.row_at(no_limit_up_to).kind == "unlimited"
    assert table.row_at(no_limit_up_to).status == "verified"
    above = table.row_at(no_limit_up_to + 0.05)
    assert above.kind == "limited" and above.status == "from_memory"


def test_aium_bone_reduction_AIUM2022TI():
    """AIUM 2022: reduce maximum times by 33 % for pulsed Doppler with bone near the focus."""
    item = safety_data().value("scan_time.pulsed_doppler_bone_reduction_fraction")
    assert item.value == pytest.approx(0.33) and item.status == "verified"


def test_max_ti_for_a_planned_time_BMUS2009():
    """BMUS 2009 Fig. 1 read backwards: 40 min is allowed up to TI 1.0 (< 60 min band), 20 min
    up to 1.5 (< 30 min), 2 min up to 2.5 (< 4 min)."""
    table = safety_data().tables["bmus_obstetric"]
    assert table.max_ti_for_minutes(40) == pytest.approx(1.0)
    assert table.max_ti_for_minutes(20) == pytest.approx(1.5)
    assert table.max_ti_for_minutes(2) == pytest.approx(2.5)
    assert table.max_ti_for_minutes(600) == pytest.approx(0.7)


# --------------------------------------------------------------------------- other statements

@pytest.mark.parametrize(("path", "value", "status"), [
    ("first_trimester_doppler.max_ti", 1.0, "verified"),          # WFUMB/ISUOG 2011: TI <= 1.0
    ("first_trimester_doppler.usual_max_minutes", 10, "verified"),  # usually <= 5-10 min
    ("first_trimester_doppler.absolute_max_minutes", 60, "verified"),  # never > 60 min
    ("first_trimester_doppler.aium_max_ti", 0.7, "verified"),     # AIUM: Doppler at TI <= 0.7
    ("mechanical_index.lung_haemorrhage_mi", 0.4, "verified"),    # AIUM gas bodies: lung 0.4
    ("mechanical_index.intestine_mi", 1.4, "verified"),           # AIUM gas bodies: intestine 1.4
    ("mechanical_index.neonatal_lung_max_mi", 0.4, "verified"),   # AIUM 2023 lung: MI < 0.4
    ("mechanical_index.neonatal_unrestricted_up_to_mi", 0.3, "verified"),  # BMUS: 0-0.3
    ("mechanical_index.contrast_microvascular_mi", 0.4, "verified"),  # ter Haar 2009
    ("regulatory.max_ispta_mw_per_cm2", 720, "verified"),         # FDA Track 3
    ("regulatory.max_mi", 1.9, "verified"),                       # FDA Track 3
    ("ophthalmic.max_ispta_mw_per_cm2", 50, "verified"),          # King, Liu, Harris 2017
    ("ophthalmic.max_mi", 0.23, "verified"),                      # FDA ophthalmic
    ("ophthalmic.max_ti", 1.0, "from_memory"),                    # FDA ophthalmic TI, recalled
])
def test_published_values(path, value, status):
    item = safety_data().value(path)
    assert item.value == pytest.approx(value)
    assert item.status == status


# --------------------------------------------------------------------------- index to watch

@pytest.mark.parametrize(("weeks", "index"), [(6, "TIS"), (9.5, "TIS"), (10, "TIS"),
                                              (10.5, "TIB"), (12, "TIB"), (20, "TIB"),
                                              (38, "TIB")])
def test_obstetric_index_by_gestation_BMUS2009(weeks, index):
    """BMUS 2009 Fig. 1 (and AIUM 2022 Table 1): monitor TIS up to 10 weeks post-LMP, TIB
    thereafter."""
    assert monitored_index(ExamContext("obstetric", gestation_weeks=weeks)) == index


def test_gynaecological_pregnancy_follows_obstetric_rule_AIUM2022TI():
    """AIUM 2022 Table 1 covers gynaecological exams when pregnancy is possible."""
    early = ExamContext("gynaecological", pregnancy_possible=True, gestation_weeks=7)
    late = ExamContext("gynaecological", pregnancy_possible=True, gestation_weeks=16)
    assert (monitored_index(early), monitored_index(late)) == ("TIS", "TIB")


@pytest.mark.parametrize(("exam", "index"), [
    ("adult_transcranial", "TIC"),    # IEC 62359: TIC, bone at the surface
    ("neonatal_head", "TIB"),         # IEC 62359: TIB, neonatal head through the fontanelle
    ("general_abdominal", "TIS"),     # IEC 62359: TIS, abdominal
    ("cardiac", "TIS"),               # IEC 62359: TIS, cardiac
    ("peripheral_vascular", "TIS"),   # IEC 62359: TIS, peripheral vascular
])
def test_index_by_exam_IEC62359(exam, index):
    assert monitored_index(ExamContext(exam)) == index


def test_bone_near_focus_switches_soft_tissue_exams_to_TIB_IEC62359():
    """IEC 62359: TIB applies when bone is at or near the focus."""
    assert monitored_index(ExamContext("musculoskeletal", bone_near_focus=True)) == "TIB"
    assert monitored_index(ExamContext("adult_transcranial", bone_near_focus=True)) == "TIC"


def test_validity_ranges_match_model_design():
    """The body model is fitted for BMI 17-60; depth to 30 cm; 1-20 MHz; 4-42 weeks."""
    v = safety_data().validity
    assert (v["bmi"].valid_lo, v["bmi"].valid_hi) == (17, 60)
    assert v["depth_cm"].valid_hi == 30
    assert (v["frequency_mhz"].valid_lo, v["frequency_mhz"].valid_hi) == (1, 20)
    assert (v["gestation_weeks"].valid_lo, v["gestation_weeks"].valid_hi) == (4, 42)
    assert v["wall_mm"].valid_hi == 150
    assert not math.isinf(v["expected_ti"].valid_hi)

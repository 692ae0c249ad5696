"""Tests of the target and window library (planner/data/targets.yaml + loader).

Published or practice values are named beside each check. Depth ranges marked
"common practice" are typical adult skin-to-target ranges recalled from sonography
textbooks and teaching; they carry wide tolerances by nature.
"""

from __future__ import annotations

import copy
import dataclasses
import math
import re

import pytest
import yaml

from planner.datafiles import load_package_yaml
from planner.errors import DataError, InputError
from planner.library.targets import (EXAM_TYPES, INTERCOSTAL_WALLS, PROBE_TYPES, REGIONS,
                                     WALL_MODEL_IDS, load_library, load_library_file,
                                     parse_library)
from planner.provenance import STATUSES
from planner.references import REFERENCES

LIB = load_library()
RAW = load_package_yaml("targets.yaml")
TISSUES = load_package_yaml("tissues.yaml")["tissues"]

REQUIRED_IDS = (
    "liver", "gallbladder", "pancreas", "kidney", "aorta", "bladder", "thyroid",
    "carotid-bifurcation", "achilles-tendon", "fetal-head", "embryo",
    # vessel targets shared with the Doppler velocity table
    "portal-vein", "hepatic-veins", "renal-artery", "vertebral-artery", "common-femoral-vein",
    "popliteal-vein", "umbilical-artery", "fetal-mca", "uterine-artery")
VESSEL_IDS = REQUIRED_IDS[11:]


# ---------------------------------------------------------------- structure

def test_library_size_and_required_ids():
    assert len(LIB) >= 30
    missing = [target_id for target_id in REQUIRED_IDS if target_id not in LIB]
    assert missing == []


def test_every_region_is_covered():
    assert {target.region for target in LIB} == set(REGIONS)


def test_load_library_is_cached_and_file_loader_agrees():
    assert load_library() is LIB
    from importlib import resources
    path = resources.files("planner") / "data" / "targets.yaml"
    assert load_library_file(str(path)).ids() == LIB.ids()


@pytest.mark.parametrize("target", list(LIB), ids=lambda t: t.id)
def test_every_target_and_window_is_well_formed(target):
    assert re.fullmatch(r"[a-z0-9]+(-[a-z0-9]+)*", target.id)
    assert target.exam_type in EXAM_TYPES
    assert target.target_tissue in TISSUES
    assert target.probe_types and set(target.probe_types) <= set(PROBE_TYPES)
    assert target.typical_depth_cm > 0 and target.detail_mm > 0
    assert target.windows and len(set(target.window_ids())) == len(target.windows)
    for window in target.windows:
        assert window.wall in WALL_MODEL_IDS
        assert window.path and all(layer.tissue in TISSUES for layer in window.path)
        assert all(layer.thickness_cm > 0 for layer in window.path)
        assert window.wall_factor > 0
        # a rib gap is needed exactly where a footprint must fit between ribs
        if window.wall in INTERCOSTAL_WALLS:
            assert window.rib_gap_mm is not None and window.rib_gap_mm > 0
    if target.fluid_filled:
        assert TISSUES[target.lumen_tissue]["kind"] == "fluid"


def test_vessel_targets_are_fluid_filled_with_a_blood_lumen():
    for target_id in VESSEL_IDS:
        target = LIB.get(target_id)
        assert target.fluid_filled and target.lumen_tissue == "blood"
        assert target.wall_tissue == "vessel_wall"


def test_layer_roles_sit_on_the_matching_tissue():
    roles = [(layer.role, layer.tissue) for target in LIB for window in target.windows
             for layer in window.path if layer.role]
    assert ("bladder", "urine") in roles and ("stomach", "water") in roles
    from planner.library.targets import LAYER_ROLES
    assert all(LAYER_ROLES[role] == tissue for role, tissue in roles)
    # growth roles (planner/body/gestation.py) sit on obstetric targets only
    from planner.body.gestation import GROWTH_ROLES
    assert {t.exam_type for t in LIB for w in t.windows for lay in w.path
            if lay.role in GROWTH_ROLES} == {"obstetric"}


def test_dataclasses_are_frozen():
    with pytest.raises(dataclasses.FrozenInstanceError):
        LIB.get("liver").typical_depth_cm = 1.0  # type: ignore[misc]
    with pytest.raises(dataclasses.FrozenInstanceError):
        LIB.get("liver").windows[0].wall = "temporal"  # type: ignore[misc]


# ---------------------------------------------------------------- table integrity

def _sourced_records(node, path=""):
    if isinstance(node, dict):
        if "value" in node:
            yield path, node
            return
        for key, value in node.items():
            yield from _sourced_records(value, f"{path}.{key}")
    elif isinstance(node, list):
        for index, value in enumerate(node):
            yield from _sourced_records(value, f"{path}[{index}]")


def _bare_numbers(node, path=""):
    if isinstance(node, dict):
        if "value" in node:
            return
        for key, value in node.items():
            yield from _bare_numbers(value, f"{path}.{key}")
    elif isinstance(node, list):
        for index, value in enumerate(node):
            yield from _bare_numbers(value, f"{path}[{index}]")
    elif isinstance(node, (int, float)) and not isinstance(node, bool):
        yield path


def test_every_number_has_a_known_source_and_a_valid_status():
    """Table integrity: every value carries a bibliography key and a status."""
    records = list(_sourced_records(RAW["targets"]))
    assert len(records) > 300
    bad = [(path, rec.get("source"), rec.get("status")) for path, rec in records
           if rec.get("source") not in REFERENCES or rec.get("status") not in STATUSES]
    assert bad == []


ORDINALS = (".practice_order",)
"""Keys that hold an ordinal (the usual order of practice, sourced in the file's header), not a
measured value."""


def test_no_bare_numbers_outside_sourced_records():
    assert [p for p in _bare_numbers(RAW["targets"]) if not p.endswith(ORDINALS)] == []


def test_provenance_reaches_the_dataclasses():
    liver = LIB.get("liver")
    assert set(liver.provenance) == {"typical_depth_cm", "detail_mm"}
    assert liver.provenance["typical_depth_cm"].value == liver.typical_depth_cm
    window = liver.window("right-intercostal")
    assert window.provenance["rib_gap_mm"].value == window.rib_gap_mm
    assert window.path[0].provenance["thickness_cm"].status in STATUSES
    for target in LIB:
        assert set(target.sources()) <= set(REFERENCES)


# ---------------------------------------------------------------- values against outside sources

# Typical adult skin-to-target ranges of common sonography practice (CommonPractice;
# textbook recall, wide tolerance).
PRACTICE_DEPTH_RANGES_CM = [
    ("liver", 12.0, 16.0),            # posterior right lobe 12-16 cm
    ("gallbladder", 3.0, 10.0),       # 3-8 cm (far wall up to 10 cm)
    ("pancreas", 5.0, 10.0),          # behind stomach and left lobe
    ("kidney", 4.0, 12.0),
    ("aorta", 5.0, 12.0),
    ("bladder", 3.0, 10.0),
    ("thyroid", 0.5, 3.0),
    ("carotid-bifurcation", 1.0, 4.0),
    ("achilles-tendon", 0.2, 1.5),
    ("supraspinatus-tendon", 0.5, 3.0),
    ("median-nerve", 0.3, 1.0),
    ("testis", 0.5, 3.0),
    ("breast", 0.3, 4.0),
    ("infant-pylorus", 1.0, 3.0),
    ("infant-hip", 1.0, 3.0),
    ("pleura", 0.5, 3.0),
    ("pleural-effusion", 4.0, 15.0),
    ("heart", 4.0, 20.0),             # transthoracic 5-20 cm
    ("adult-transcranial", 4.0, 10.0),  # temporal window 4-10 cm
    ("neonatal-brain", 0.0, 10.0),    # through the fontanelle
]


@pytest.mark.parametrize("target_id, low_cm, high_cm", PRACTICE_DEPTH_RANGES_CM)
def test_typical_depth_inside_practice_range(target_id, low_cm, high_cm):
    depth = LIB.get(target_id).typical_depth_cm
    assert low_cm <= depth <= high_cm


def test_aorta_depth_SkinToGreatVessels2024():
    """Skin to anterior aorta 45 mm (normal weight) to 57 mm (overweight), periumbilical
    ultrasound in 187 women (AAGL 2024 abstract): the near wall at BMI ~25 lies between."""
    aorta = LIB.get("aorta")
    near_wall_cm = aorta.typical_depth_cm - 2.0 * aorta.surfaces[0].radius_mm / 10.0
    assert 4.5 <= near_wall_cm <= 5.7


def test_common_femoral_vein_depth_FemoralDepth2009():
    """Skin to femoral vein 12.8-13.7 +/- 4.9 mm at BMI 23 (Hong Kong J Nephrol 2009):
    the near wall lies within one standard deviation of the published mean."""
    vein = LIB.get("common-femoral-vein")
    near_wall_mm = 10.0 * vein.typical_depth_cm - 2.0 * vein.surfaces[0].radius_mm
    assert 12.8 - 4.9 <= near_wall_mm <= 13.7 + 4.9


def test_carotid_radius_CarotidDiameterSummary():
    """Mean common carotid lumen 6.1 mm (women) and 6.5 mm (men)."""
    diameter_mm = 2.0 * LIB.get("carotid-bifurcation").surfaces[0].radius_mm
    assert 6.1 <= diameter_mm <= 6.5


def test_duct_and_vein_sizes_within_normal_limits_TargetNormalsTeaching():
    """Normal limits of teaching pages: portal vein <= 13 mm, bile duct < 6 mm (inner),
    gallbladder wall <= 3 mm, pancreatic duct <= 3 mm."""
    assert 2.0 * LIB.get("portal-vein").surfaces[0].radius_mm <= 13.0
    assert 2.0 * LIB.get("common-bile-duct").surfaces[0].radius_mm <= 6.0
    assert LIB.get("gallbladder").detail_mm <= 3.0
    assert LIB.get("pancreas").detail_mm <= 3.0


def test_pylorus_detail_resolves_the_cut_off_PylorusMeta2022():
    """Muscle thickness >= 3 mm is the pooled cut-off (BJR 2022 meta-analysis): the
    required detail must be finer than the cut-off itself."""
    assert LIB.get("infant-pylorus").detail_mm < 3.0


def test_median_nerve_path_matches_normal_area_MedianNerveCSA2009():
    """An area <= 9.8 mm2 at the tunnel inlet excludes carpal tunnel syndrome: the nerve
    layer, read as a 3:1 ellipse, has a normal area."""
    nerve_mm = 10.0 * LIB.get("median-nerve").window("carpal-tunnel-inlet").path[-1].thickness_cm
    area_mm2 = math.pi / 4.0 * nerve_mm * (3.0 * nerve_mm)
    assert area_mm2 <= 9.8


def test_infant_hip_geometry_Graf1980():
    """Standard plane: iliac line parallel to the transducer; mature bony-roof angle
    alpha >= 60 degrees."""
    surfaces = {s.name: s for s in LIB.get("infant-hip").surfaces}
    assert surfaces["iliac line"].tilt_from_skin_deg == 0.0
    assert surfaces["bony acetabular roof"].tilt_from_skin_deg >= 60.0


def test_harmonics_contraindicated_only_where_artefacts_are_the_sign_Ralls2000THI():
    """Harmonic imaging suppresses reverberation artefacts, so it is not used where they
    are diagnostic (B-lines); elsewhere it is allowed."""
    assert LIB.get("pleura").harmonic_contraindicated
    flagged = {target.id for target in LIB if target.harmonic_contraindicated}
    assert all(LIB.get(target_id).region == "thorax" for target_id in flagged)
    assert not LIB.get("liver").harmonic_contraindicated


def test_exam_types_follow_the_thermal_index_tables_BMUS2009_AIUM2022TI():
    """Obstetric and neonatal head/spine scans use the stricter table; the transcranial
    window is scanned through bone at the surface (TIC, IEC 62359)."""
    for target_id in ("embryo", "fetal-head", "fetal-heart", "fetal-mca", "umbilical-artery",
                      "cervix", "placenta"):
        assert LIB.get(target_id).exam_type == "obstetric"
    assert LIB.get("neonatal-brain").exam_type == "neonatal_head"
    assert LIB.get("neonatal-spine").exam_type == "neonatal_spine"
    transcranial = LIB.get("adult-transcranial")
    assert transcranial.exam_type == "adult_transcranial"
    assert all(w.bone_in_path and w.wall == "temporal" for w in transcranial.windows)
    # TIB: bone reached after soft tissue and fluid in second-trimester fetal heads
    assert LIB.get("fetal-head").window("transabdominal").bone_in_path


def test_midline_transverse_windows_flag_refraction_DoubleAortaPhantom2009():
    """Rectus-muscle refraction duplicates deep midline structures in transverse views."""
    assert LIB.get("aorta").window("midline-transverse").midline_rectus
    assert LIB.get("pancreas").window("epigastric-transverse").midline_rectus
    assert not LIB.get("aorta").window("left-flank-coronal").midline_rectus


def test_endocavitary_route_offered_for_pelvic_and_early_pregnancy_targets_NHSGGC468():
    """Consider the transvaginal route for pelvic organs and early pregnancy in high BMI."""
    for target_id in ("uterus", "ovary", "embryo", "cervix"):
        walls = {window.wall for window in LIB.get(target_id).windows}
        assert "endocavitary" in walls
        assert "endocavitary" in LIB.get(target_id).probe_types


# ---------------------------------------------------------------- look-ups

def test_unknown_target_lists_every_valid_target():
    with pytest.raises(InputError) as info:
        LIB.get("livr")
    message = str(info.value)
    assert "unknown target 'livr'" in message and "'liver'" in message
    assert all(target_id in message for target_id in LIB.ids())


def test_unknown_window_lists_the_windows():
    with pytest.raises(InputError) as info:
        LIB.get("kidney").window("frontal")
    assert "flank-coronal" in str(info.value) and "posterior-prone" in str(info.value)


def test_in_region():
    assert {t.id for t in LIB.in_region("cardiac")} == {"heart"}
    with pytest.raises(InputError):
        LIB.in_region("arm")


# ---------------------------------------------------------------- broken files

def _broken_copy() -> dict:
    data = copy.deepcopy(RAW)
    data["extra"] = 1
    data["schema_version"] = 2
    targets = data["targets"]
    liver = targets["liver"]
    liver["colour"] = "brown"
    liver["region"] = "belly"
    liver["reflector"] = "shiny"
    liver["exam_type"] = "abdominal"
    liver["target_tissue"] = "steel"
    del liver["typical_depth_cm"]["source"]
    liver["detail_mm"]["status"] = "guessed"
    liver["probe_types"].append("sector")
    liver["windows"][0]["wall"] = "flank"
    liver["windows"][0]["path"][0]["tissue"] = "granite"
    liver["windows"][0]["path"][0]["thickness_cm"]["value"] = -2
    liver["windows"][1]["rib_gap_mm"] = None
    liver["windows"][2]["angle"] = 5
    gallbladder = targets["gallbladder"]
    gallbladder["surfaces"][0]["tilt_from_skin_deg"]["source"] = "NoSuchKey2099"
    gallbladder["lumen_tissue"] = None
    gallbladder["harmonic_contraindicated"] = "yes"
    targets["pancreas"]["windows"][1]["path"][1]["tissue"] = "urine"
    targets["adult-transcranial"]["windows"][0]["bone_in_path"] = False
    targets["spleen"]["windows"][0]["gas_risk"] = "lots"
    targets["kidney"]["windows"][1]["id"] = "flank-coronal"
    del targets["thyroid"]["pitfalls"]
    targets["Bad_Id"] = copy.deepcopy(targets["testis"])
    return data


EXPECTED_PROBLEMS = [
    ": extra: unknown key 'extra'",
    "schema_version: must be 1, got the number 2",
    "targets.liver.colour: unknown key 'colour'",
    "targets.liver.region: 'belly' is not one of abdomen,",
    "targets.liver.reflector: 'shiny' is not one of specular,",
    "targets.liver.exam_type: 'abdominal' is not one of general_abdominal,",
    "targets.liver.target_tissue: 'steel' is not one of water,",
    "targets.liver.typical_depth_cm.source: missing (required)",
    "targets.liver.detail_mm.status: 'guessed' is not one of verified,",
    "targets.liver.probe_types[2]: 'sector' is not one of linear,",
    "targets.liver.windows[0].wall: 'flank' is not one of epigastric,",
    "targets.liver.windows[0].path[0].tissue: 'granite' is not one of water,",
    "targets.liver.windows[0].path[0].thickness_cm.value: must be greater than 0, got -2",
    "targets.liver.windows[1].rib_gap_mm: an intercostal window (ruq_intercostal) must give",
    "targets.liver.windows[2].angle: unknown key 'angle'",
    "targets.gallbladder.surfaces[0].tilt_from_skin_deg.source: unknown source key 'NoSuchKey2099'",
    "targets.gallbladder.lumen_tissue: a fluid-filled target must name its lumen tissue",
    "targets.gallbladder.harmonic_contraindicated: expected true or false, got text 'yes'",
    "targets.pancreas.windows[1].path[1].role: a 'stomach' layer must be tissue 'water'",
    "targets.adult-transcranial.windows[0].bone_in_path: the temporal wall includes bone",
    "targets.spleen.windows[0].gas_risk: 'lots' is not one of none,",
    "targets.kidney.windows[1].id: duplicate window id 'flank-coronal'",
    "targets.thyroid.pitfalls: missing (required)",
    "targets.Bad_Id: 'Bad_Id' is not a kebab-case id",
]


def test_broken_copy_reports_every_problem_at_once(tmp_path):
    path = tmp_path / "targets.yaml"
    path.write_text(yaml.safe_dump(_broken_copy(), sort_keys=False), encoding="utf-8")
    with pytest.raises(DataError) as info:
        load_library_file(path)
    problems = info.value.problems
    text = "\n".join(problems)
    missing = [expected for expected in EXPECTED_PROBLEMS if expected not in text]
    assert missing == []
    assert all(re.match(rf"{re.escape(str(path))}:\d+:\d+: \S", p) for p in problems)
    assert len(problems) >= len(EXPECTED_PROBLEMS)


SMALL = """\
schema_version: 1
targets:
  tiny:
    name: Tiny target
    region: abdomen
    reflector: diffuse
    exam_type: general_abdominal
    target_tissue: liver
    typical_depth_cm: {value: 5, source: CommonPractice, status: common_practice}
    detail_mm: {value: 1e3, source: CommonPractice, status: common_practice}
    probe_types: [curvilinear]
    surfaces: []
    fluid_filled: false
    wall_tissue: null
    lumen_tissue: null
    calcification_risk: low
    harmonic_contraindicated: false
    pitfalls: []
    windows:
      - id: only
        name: Only window
        wall: subcostal
        position: Supine
        breathing: Quiet
        wall_factor: {value: 1.0, source: CommonPractice, status: common_practice}
        path:
          - tissue: liver
            thickness_cm: {value: 2, source: CommonPractice, status: common_practice}
        rib_gap_mm: null
        gas_risk: low
        midline_rectus: false
        bone_in_path: false
"""


def test_small_valid_file_parses():
    library = parse_library(SMALL.replace("1e3", "1.0"), "small.yaml")
    assert library.ids() == ("tiny",)
    assert library.get("tiny").windows[0].path_cm == pytest.approx(2.0)


def test_problem_carries_the_line_of_the_bad_key():
    """PyYAML reads 1e3 as text (YAML 1.1); the problem points at the key (line 10, column 17)."""
    with pytest.raises(DataError) as info:
        parse_library(SMALL, "small.yaml")
    from planner.files.problems import NUMBER_TEXT_HINT
    assert info.value.problems == [
        "small.yaml:10:17: targets.tiny.detail_mm.value: expected a number, got text '1e3'"
        + NUMBER_TEXT_HINT]


def test_duplicate_target_and_syntax_errors_are_reported():
    doubled = SMALL.replace("1e3", "1.0") + SMALL.replace("1e3", "1.0").split("targets:\n")[1]
    with pytest.raises(DataError) as info:
        parse_library(doubled, "dup.yaml")
    assert any("targets.tiny: duplicate key 'tiny'" in p for p in info.value.problems)
    with pytest.raises(DataError) as info:
        parse_library("targets: [unclosed", "bad.yaml")
    assert "YAML syntax error" in info.value.problems[0]


def test_unreadable_file_is_a_data_error(tmp_path):
    with pytest.raises(DataError):
        load_library_file(tmp_path / "absent.yaml")

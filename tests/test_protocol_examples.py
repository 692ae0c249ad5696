"""Every shipped department protocol validates, and its thresholds match their sources.

Published values checked below (each test names its source):
- Common bile duct: < 6 mm normal, 6-8 mm indeterminate, > 8 mm dilated, < 10 mm after
  cholecystectomy ('Ultrasound basics' radiology teaching page; key ProtocolNormalValuesTeaching).
- Abdominal aortic aneurysm: maximum infrarenal diameter >= 3.0 cm (Australian Family
  Physician 2013, 'Aortic aneurysms: screening, surveillance and referral').
- Carotid stenosis: SRU consensus 2003 (Grant et al., Radiology 2003;229:340-346) -
  ICA PSV 125 and 230 cm/s, EDV 40 and 100 cm/s, ICA/CCA ratio 2 and 4.
- Kidney length about 9-13 cm; thyroid lobe 4-6 cm long, AP < 2 cm, isthmus < 4 mm
  ('Ultrasound basics' teaching page).
- Obstetric scanning: no time limit up to a displayed TI of 0.7 (BMUS 2009, Fig. 1);
  monitor TIB after 10 weeks (BMUS 2009).
- General abdominal and other non-obstetric scanning: no time limit up to TI 1.0
  (BMUS 2009 Part II non-obstetric table).
- Doppler velocity measurement at a beam-to-flow angle of 60 degrees or less.
"""

from __future__ import annotations

from pathlib import Path

import pytest

from planner.library.targets import load_library
from planner.protocol import Protocol, load_protocol
from planner.protocol.schema import EXAM_TYPES
from planner.provenance import STATUSES
from planner.references import REFERENCES

ROOT = Path(__file__).parents[1] / "protocols"
NOT_PROTOCOLS = {"probes.yaml", "local-policy.yaml", "qa.yaml"}   # other file kinds
SHIPPED = sorted(p for p in ROOT.glob("**/*.yaml") if p.name not in NOT_PROTOCOLS)


@pytest.fixture(scope="module")
def protocols() -> dict[str, Protocol]:
    return {p.id: p for p in (load_protocol(path) for path in SHIPPED)}


def bands(protocol: Protocol, measurement_id: str) -> list[tuple]:
    measurement = next(m for m in protocol.measurements() if m.id == measurement_id)
    return [(t.above, t.at_or_above, t.below, t.at_or_below, t.applies_to)
            for t in measurement.thresholds]


@pytest.mark.parametrize("path", SHIPPED, ids=lambda p: str(p.relative_to(ROOT)))
def test_shipped_protocol_validates(path):
    protocol = load_protocol(path)
    assert protocol.views
    assert protocol.total_expected_minutes() <= protocol.safety.max_scan_minutes.value


def test_required_examples_are_shipped(protocols):
    assert {"upper-abdomen", "renal-tract", "mid-trimester-survey", "thyroid",
            "carotid-doppler", "lower-limb-veins"} <= set(protocols)
    assert len({p.department for p in protocols.values()}) >= 2


def test_every_threshold_and_sourced_limit_has_a_known_source_and_status(protocols):
    for protocol in protocols.values():
        keys = set(REFERENCES) | set(protocol.local_references)
        for measurement in protocol.measurements():
            for band in measurement.thresholds:
                assert band.source in keys and band.status in STATUSES, measurement.id
        limits = [protocol.safety.max_scan_minutes, protocol.safety.max_ti,
                  protocol.safety.max_mi, protocol.preparation.fasting_hours]
        limits += [v.doppler.max_angle_deg for v in protocol.views if v.doppler]
        for limit in filter(None, limits):
            assert limit.source in keys and limit.status in STATUSES


def test_views_use_targets_and_windows_of_the_library(protocols):
    library = load_library()
    for protocol in protocols.values():
        for view in protocol.views:
            windows = [w.id for w in library.targets[view.target].windows]
            assert view.window in windows
            assert all(f.window in windows for f in view.fallbacks)


def test_common_bile_duct_bands_match_teaching_values(protocols):
    """'Ultrasound basics' teaching page: <6 normal, 6-8 indeterminate, >8 abnormal,
    <10 after cholecystectomy."""
    assert bands(protocols["upper-abdomen"], "cbd-diameter") == [
        (None, None, 6.0, None, None), (None, 6.0, None, 8.0, None),
        (8.0, None, None, None, None), (None, None, 10.0, None, "Patients after cholecystectomy")]


def test_aneurysm_threshold_is_three_cm_outer_to_outer(protocols):
    """Australian Family Physician 2013: aneurysm at a diameter of 3.0 cm or more."""
    measurement = next(m for m in protocols["upper-abdomen"].measurements()
                       if m.id == "aorta-diameter")
    assert measurement.unit == "cm" and measurement.calliper == "outer_to_outer"
    assert [t.at_or_above for t in measurement.thresholds if t.at_or_above] == [3.0]


@pytest.mark.parametrize("side", ["right", "left"])
def test_carotid_bands_are_the_sru_2003_criteria(protocols, side):
    """Grant et al. 2003 (SRU consensus): PSV <125 / 125-230 / >230 cm/s; EDV <40 / 40-100 /
    >100 cm/s; ICA/CCA ratio <2 / 2-4 / >4."""
    carotid = protocols["carotid-doppler"]
    for name, low, high in (("psv", 125, 230), ("edv", 40, 100), ("cca-ratio", 2, 4)):
        assert bands(carotid, f"{side}-ica-{name}") == [
            (None, None, low, None, None), (None, low, None, high, None),
            (high, None, None, None, None)]


def test_kidney_and_thyroid_bands_match_teaching_values(protocols):
    """'Ultrasound basics': kidney 9-13 cm; thyroid lobe 4-6 cm, AP < 2 cm, isthmus < 4 mm."""
    assert (None, 9.0, None, 13.0, None) in bands(protocols["renal-tract"], "left-kidney-length")
    assert bands(protocols["thyroid"], "right-lobe-length") == [(None, 4.0, None, 6.0, None)]
    assert bands(protocols["thyroid"], "left-lobe-depth")[0] == (None, None, 2.0, None, None)
    assert bands(protocols["thyroid"], "isthmus-thickness") == [(None, None, 4.0, None, None)]


def test_obstetric_limits_follow_bmus(protocols):
    """BMUS 2009 Fig. 1: no time limit up to TI 0.7 in obstetrics; TIB after 10 weeks."""
    safety = protocols["mid-trimester-survey"].safety
    assert safety.max_ti.value == 0.7 and safety.max_ti.source == "BMUS2009"
    assert safety.monitored_index == "TIB"
    assert safety.pulsed_doppler != "allowed"


def test_non_obstetric_ti_ceiling_follows_bmus(protocols):
    """BMUS 2009 Part II non-obstetric table: no time limit up to TI 1.0."""
    for protocol in protocols.values():
        if protocol.exam_type != "obstetric":
            assert protocol.safety.max_ti.value <= 1.0


def test_doppler_angles_are_at_most_60_degrees(protocols):
    """Velocity measurement at a beam-to-flow angle of 60 degrees or less."""
    angles = [v.doppler.max_angle_deg.value for p in protocols.values() for v in p.views
              if v.doppler and v.doppler.max_angle_deg]
    assert angles and max(angles) <= 60


def test_exam_types_agree_with_the_target_library():
    from planner.library import targets

    assert set(EXAM_TYPES) == set(targets.EXAM_TYPES)


def test_exam_types_agree_with_the_safety_rules():
    from planner import safety
    assert set(EXAM_TYPES) == set(safety.EXAM_TYPES)

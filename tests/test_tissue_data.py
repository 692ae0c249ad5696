"""The tissue table and the fat-versus-BMI model against published figures.

Every range below is written here with the publication it comes from (never read from the
data file it checks). Ranges carry the published spread (or the stated tolerance where one
value is published); "(from memory)" marks a figure recalled from the named book, not re-read.
IT'IS v4.1 rows (Hasgall 2022) give one value per tissue: speed is checked to +/-3 %, density
to +/-5 % (+/-2 % for watery fluids), alpha0 to +/-30 % (the scatter stated in tissues.yaml)
and b to +/-0.02 (the rounding of the read value).

Where a range comes from the publication the value was taken from, it checks the
transcription (the test fails if the table drifts from its source), not the value itself;
the independent checks are the ones against a second publication (IT'IS v4.1 against the
attenuation kept from Diagnostics 2023, Lin 1987 against the liver in test_data_integrity,
and every range whose source differs from the value's).
"""

from __future__ import annotations

import math
from pathlib import Path

import pytest
import yaml

from planner.body.walls import load_wall_models, wall_layers_mm
from planner.datafiles import load_package_yaml
from planner.files.package import TissuesFile
from planner.physics.tissues import get_tissue, load_tissues, resolve_tissue_id, tissue_aliases
from planner.references import REFERENCES

NP_TO_DB_PER_CM = 20.0 / math.log(10.0) / 100.0
"""1 Np/m = 20 / ln 10 dB/m = 0.08686 dB/cm (IT'IS gives alpha0 in Np/m/MHz)."""


def _pm(value: float, fraction: float) -> tuple[float, float]:
    """A single published value with a stated relative tolerance."""
    return round(value * (1 - fraction), 6), round(value * (1 + fraction), 6)


def _itis_alpha(np_per_m_mhz: float) -> tuple[float, float]:
    """An IT'IS alpha0 [Np/m/MHz] in dB/cm/MHz, with the +/-30 % scatter of attenuation."""
    return _pm(np_per_m_mhz * NP_TO_DB_PER_CM, 0.30)


def _itis_b(b: float) -> tuple[float, float]:
    """An IT'IS exponent b, to the rounding of the value read (+/-0.02)."""
    return round(b - 0.02, 4), round(b + 0.02, 4)


# --- speed of sound [m/s] -------------------------------------------------------------------
FLUID_SPEED = ("MechMater 2012 Table 3: aqueous humour 1518-1597 m/s, nearest tabulated watery "
               "body fluid (Duck 1990 body fluids about 1534-1540, from memory)")
SPEED = [
    ("water", 1515, 1530, "Bilaniuk & Wong 1993: water at 37 degC 1524 m/s (+/-0.5 %)"),
    ("blood", 1559, 1590, "Park 2023 Table 7 (IT'IS): blood 1578.2 m/s, min 1559.2 max 1590"),
    ("fat", 1412, 1485, "Park 2023 Table 7 (IT'IS): fat 1440.2 +/- 20.9, bounds 1412-1485 m/s"),
    ("skin", 1595, 1635, "MechMater 2012 Table 3: skin 1595-1635 m/s"),
    ("muscle_across", 1541, 1583, "Bioengineering 2025 A.2: muscle across fibres 1562 +/- 21"),
    ("muscle_along", 1564, 1633, "Bioengineering 2025 A.2: muscle along fibres 1599 +/- 34"),
    ("soft_tissue", 1539, 1541, "scanner convention 1540 m/s (sonography speed tutorial)"),
    ("liver", 1566, 1588, "PMB 2019 Table 1: normal liver 1577 +/- 11 m/s"),
    ("liver_steatotic", 1500, 1545, "Imbault 2017: steatotic liver 1500-1540 m/s (from memory)"),
    ("kidney", 1530, 1590, "MechMater 2012 Table 3: kidney 1530-1590 m/s"),
    ("spleen", 1537, 1597, "MechMater 2012 Table 3: spleen 1537-1597 m/s"),
    ("pancreas", *_pm(1591, 0.03), "IT'IS v4.1 (Hasgall 2022): pancreas 1591 m/s"),
    ("bile", 1518, 1597, FLUID_SPEED),
    ("urine", *_pm(1537.67, 0.03), "IT'IS v4.1 (Hasgall 2022): urine 1537.67 m/s"),
    ("amniotic_fluid", 1518, 1597, FLUID_SPEED),
    ("ascites", *_pm(1554.2, 0.03), "IT'IS v4.1 (Hasgall 2022): extracellular fluids 1554.2"),
    ("brain", 1540, 1580, "MechMater 2012 Table 3: brain 1540-1580 m/s"),
    ("tendon", 1654, 1852, "MechMater 2012 Table 3: tendon 1654-1852 m/s"),
    ("thyroid", 1560, 1600, "Goss 1978/1980 compilations: thyroid 1560-1600 (from memory)"),
    ("breast", 1490, 1530, "MechMater 2012 Table 3: breast 1490-1530 m/s"),
    ("vessel_wall", 1500, 1532, "MechMater 2012 Table 3: blood vessel 1500-1532 m/s"),
    ("cartilage", 1565, 1770, "MechMater 2012 Table 3: cartilage 1565-1770 m/s"),
    ("cortical_bone", 3200, 4000, "MechMater 2012 Table 3: cortical bone 3200-4000 m/s"),
    ("lung", *_pm(949.286, 0.03), "IT'IS v4.1 (Hasgall 2022): lung (inflated) 949.286 m/s"),
    ("air", 331.30, 351.88, "density-of-air table: 331.30 m/s at 0 degC to 351.88 at 35 degC"),
    ("tm_phantom_05", 1520, 1550, "IEC 1390 phantom data sheet: TMM 1535 +/- 15 m/s"),
    ("tm_phantom_07", 1525, 1555, "IEC 61391: TMM 1540 +/- 15 m/s (from memory)"),
]

# --- density [kg/m^3] -----------------------------------------------------------------------
ORGANS = "MechMater 2012 Table 3: brain 1040, kidney/muscle 1050, spleen 1054, liver 1060 kg/m3"
FLUID_DENSITY = "MechMater 2012: aqueous humour 1010 kg/m3 (+/-2 %); water 993-998"
DENSITY = [
    ("water", 990, 996, "Park 2023 Table 7 (IT'IS): water at 37 degC 993.36 kg/m3"),
    ("blood", 1025, 1060, "Park 2023 Table 7 (IT'IS): blood 1050, min 1025 max 1060 kg/m3"),
    ("fat", 812, 961, "Park 2023 (IT'IS): fat 911, min 812 max 961; MechMater 950 kg/m3"),
    ("skin", 1035, 1145, "MechMater 2012: skin 1090 kg/m3 (+/-5 %)"),
    ("muscle_across", 1042, 1074, "Bioengineering 2025 A.1: skeletal muscle 1058 +/- 16"),
    ("muscle_along", 1042, 1074, "Bioengineering 2025 A.1: skeletal muscle 1058 +/- 16"),
    ("soft_tissue", 1040, 1060, ORGANS),
    ("liver", 1040, 1090, "PMB 2019 and MechMater 2012: liver 1060 kg/m3; +/-3 %"),
    ("liver_steatotic", 950, 1060, "between fat 950 and liver 1060 kg/m3 (MechMater 2012)"),
    ("kidney", 1024, 1088, "Bioengineering 2025 A.1: kidney 1056 +/- 32 kg/m3"),
    ("spleen", 1001, 1107, "MechMater 2012: spleen 1054 kg/m3 (+/-5 %)"),
    ("pancreas", *_pm(1086.5, 0.05), "IT'IS v4.1 (Hasgall 2022): pancreas 1086.5 kg/m3"),
    ("bile", 990, 1030, FLUID_DENSITY),
    ("urine", *_pm(1023.61, 0.02), "IT'IS v4.1 (Hasgall 2022): urine 1023.61 kg/m3"),
    ("amniotic_fluid", 990, 1030, FLUID_DENSITY),
    ("ascites", *_pm(1005.64, 0.02), "IT'IS v4.1 (Hasgall 2022): extracellular fluids 1005.64"),
    ("brain", 1001, 1065, "Bioengineering 2025 A.1: white 1024 +/- 23, grey 1047 +/- 18"),
    ("tendon", 1076, 1166, "Bioengineering 2025 A.1: tendon 1121 +/- 45; MechMater 1130"),
    ("thyroid", *_pm(1050, 0.05), "IT'IS v4.1 (Hasgall 2022): thyroid gland 1050 kg/m3"),
    ("breast", 990, 1092, "Park 2023 (IT'IS): glandular 990-1092; MechMater breast 1020"),
    ("vessel_wall", 1018, 1082, "PMB 2019 Table 1: hepatic artery 1050 kg/m3 (+/-3 %)"),
    ("cartilage", 990, 1076, "Bioengineering 2025 A.1: cartilage 1033 +/- 43 kg/m3"),
    ("cortical_bone", 1800, 2200, "MechMater 2012 Table 3: cortical bone 1800-2200 kg/m3"),
    ("lung", *_pm(394, 0.05), "IT'IS v4.1 (Hasgall 2022): lung (inflated) 394 kg/m3"),
    ("air", 1.14, 1.30, "density of air table: 1.1455 kg/m3 at 35 degC to 1.2922 at 0 degC"),
    ("tm_phantom_05", 1000, 1100, "IEC agar-based TMM about 1040-1060 kg/m3 (from memory)"),
    ("tm_phantom_07", 1000, 1100, "IEC agar-based TMM about 1040-1060 kg/m3 (from memory)"),
]


# --- attenuation coefficient at 1 MHz [dB/cm/MHz^y] -----------------------------------------
def _t4(value: float) -> tuple[float, float]:
    """Diagnostics 2023 Table 4 value with the +/-30 % scatter of published attenuation."""
    return _pm(value, 0.30)


WATERY = "between water 0.0022 and blood 0.15 (Diagnostics 2023 Table 4)"
AVERAGE = "Radiopaedia: soft tissue 0.5-0.75 dB/cm/MHz"
CONNECTIVE = "Diagnostics 2023 Table 4: connective tissue 1.57 (+/-30 %)"
ATTENUATION = [
    ("water", *_t4(0.0022), "Diagnostics 2023 Table 4: water 0.0022 dB/cm at 1 MHz"),
    ("blood", *_t4(0.15), "Diagnostics 2023 Table 4: blood 0.15"),
    ("fat", *_t4(0.63), "Diagnostics 2023 Table 4: adipose tissue 0.63"),
    ("skin", *_t4(0.35), "Diagnostics 2023 Table 4: skin 0.35"),
    ("muscle_across", *_t4(0.96), "Diagnostics 2023 Table 4: muscle, perpendicular 0.96"),
    ("muscle_along", *_t4(1.40), "Diagnostics 2023 Table 4: muscle, parallel 1.40"),
    ("soft_tissue", 0.5, 0.75, AVERAGE),
    ("liver", *_t4(0.50), "Diagnostics 2023 Table 4: liver 0.50; Maklad 1984 0.52 in vivo"),
    ("liver_steatotic", 0.63, 1.2, "steatosis grading: S1 cut-off 0.63-0.70 (from memory)"),
    ("kidney", *_t4(1.00), "Diagnostics 2023 Table 4: kidney 1.00"),
    ("spleen", *_t4(0.40), "Diagnostics 2023 Table 4: spleen 0.40"),
    ("pancreas", *_itis_alpha(9.5502), "IT'IS v4.1 (Hasgall 2022): pancreas 9.5502 Np/m/MHz"),
    ("bile", *_itis_alpha(0.255), "IT'IS v4.1 (Hasgall 2022): bile 0.255 Np/m/MHz"),
    ("urine", *_itis_alpha(0.0706), "IT'IS v4.1 (Hasgall 2022): urine 0.0706 Np/m/MHz"),
    ("amniotic_fluid", 0.0022, 0.15, WATERY),
    ("ascites", 0.0022, 0.15, WATERY),
    ("brain", *_itis_alpha(6.8032), "IT'IS v4.1 (Hasgall 2022): brain 6.8032 Np/m/MHz"),
    ("tendon", (14.506 - 1.45) * NP_TO_DB_PER_CM, (14.506 + 1.45) * NP_TO_DB_PER_CM,
     "IT'IS v4.1: tendon/ligament 14.506 +/- 1.45 Np/m/MHz (SD as in Park 2023 Table 7)"),
    ("thyroid", 1.24, 1.76, "Fujii 2003: normal thyroid 1.50 +/- 0.26 dB/cm/MHz in vivo"),
    ("breast", *_t4(0.75), "Diagnostics 2023 Table 4: breast 0.75"),
    ("vessel_wall", *_itis_alpha(7.02), "IT'IS v4.1 (Hasgall 2022): blood vessel wall 7.02"),
    ("cartilage", *_t4(1.57), CONNECTIVE),
    ("cortical_bone", *_t4(15.0), "Diagnostics 2023 Table 4: bone 15.0"),
    ("lung", *_t4(40.0), "Diagnostics 2023 Table 4: lung 40.0"),
    ("air", *_t4(7.5), "Diagnostics 2023 Table 4: air 7.50"),
    ("tm_phantom_05", 0.4, 0.6, "IEC 1390 phantom data sheet: 0.5 +/- 0.1 dB/cm/MHz"),
    ("tm_phantom_07", 0.65, 0.75, "IEC 61391: 0.7 dB/cm/MHz phantom (from memory)"),
]

# --- attenuation exponent y [-] -------------------------------------------------------------
SOFT_Y = "Szabo 2004 App. B: soft tissues y about 1.0-1.5 (from memory)"
FLUID_Y = "between tissue (1) and water (2): classical absorption (Kinsler & Frey, from memory)"
AGAR_Y = "Browne 2003: agar-based TMM attenuation linear in frequency"
ITIS_ONE = "IT'IS v4.1 (Hasgall 2022): b = 1 (also its no-fit default)"
EXPONENT = [
    ("water", 1.9, 2.1, "Pinkerton 1949 (k-Wave attenuationWater): absorption goes as f^2"),
    ("blood", *_itis_b(1.0498), "IT'IS v4.1 (Hasgall 2022): blood b = 1.0498"),
    ("fat", 1.0, 1.0861, "IT'IS v4.1 (Hasgall 2022): SAT (subcutaneous fat) b = 1, fat 1.0861"),
    ("skin", 1.0, 1.5, SOFT_Y),
    ("muscle_across", *_itis_b(1.0827), "IT'IS v4.1 (Hasgall 2022): muscle b = 1.0827"),
    ("muscle_along", *_itis_b(1.0827), "IT'IS v4.1 (Hasgall 2022): muscle b = 1.0827"),
    ("soft_tissue", 1.0, 1.0, "teaching rule 0.5 dB/cm per MHz: linear in frequency"),
    ("liver", 1.05, 1.25, "Lin 1987: normal human liver 0.399 f^1.139 (1.25-8 MHz)"),
    ("liver_steatotic", 1.0, 1.5, SOFT_Y),
    ("kidney", *_itis_b(1.022), "IT'IS v4.1 (Hasgall 2022): kidney b = 1.022"),
    ("spleen", *_itis_b(1.3832), "IT'IS v4.1 (Hasgall 2022): spleen b = 1.3832"),
    ("pancreas", *_itis_b(1.0), ITIS_ONE),
    ("bile", *_itis_b(1.31), "IT'IS v4.1 (Hasgall 2022): bile b = 1.31"),
    ("urine", *_itis_b(1.645), "IT'IS v4.1 (Hasgall 2022): urine b = 1.645"),
    ("amniotic_fluid", 1.0, 2.0, FLUID_Y), ("ascites", 1.0, 2.0, FLUID_Y),
    ("brain", *_itis_b(1.3), "IT'IS v4.1 (Hasgall 2022): brain b = 1.3"),
    ("tendon", *_itis_b(1.1719), "IT'IS v4.1 (Hasgall 2022): tendon/ligament b = 1.1719"),
    ("thyroid", *_itis_b(1.0), ITIS_ONE),
    ("breast", 1.1151, 1.5, "Li 2022 (Park 2023 code): 1.1151-1.3635 by density; IT'IS gland 1.5"),
    ("vessel_wall", *_itis_b(1.0), ITIS_ONE), ("cartilage", *_itis_b(1.0), ITIS_ONE),
    ("cortical_bone", *_itis_b(1.0), ITIS_ONE), ("lung", *_itis_b(1.0), ITIS_ONE),
    ("air", *_itis_b(2.0), "IT'IS v4.1 (Hasgall 2022): air b = 2"),
    ("tm_phantom_05", 0.95, 1.1, AGAR_Y), ("tm_phantom_07", 0.95, 1.1, AGAR_Y),
]

KEPT_BELOW_PUBLISHED = {
    ("attenuation_db_per_cm_mhz", "thyroid"):
        "soft-tissue stand-in 0.5 kept (common practice) pending review of the thyroid window",
    ("attenuation_exponent", "breast"):
        "b = 1 kept (common practice) so that 10-18 MHz breast imaging stays as practised",
}
"""Values knowingly kept outside the published range, each marked common practice in the table
with the reason in its note: the published check stays, as an expected failure."""


def _cases(field: str, cases):
    """Parametrize ``cases``; a value kept outside its published range is an expected failure."""
    out = []
    for case in cases:
        reason = KEPT_BELOW_PUBLISHED.get((field, case[0]))
        marks = [pytest.mark.xfail(strict=True, reason=reason)] if reason else []
        out.append(pytest.param(*case, marks=marks, id=f"{case[0]}: {case[3]}"))
    return out


def _check(tissue_id: str, field: str, low: float, high: float, source: str) -> None:
    value = getattr(load_tissues()[tissue_id], field)
    assert low <= value <= high, f"{tissue_id}.{field} = {value} outside [{low}, {high}] ({source})"


@pytest.mark.parametrize("tissue_id, low, high, source", _cases("speed_m_per_s", SPEED))
def test_speed_in_published_range(tissue_id, low, high, source):
    _check(tissue_id, "speed_m_per_s", low, high, source)


@pytest.mark.parametrize("tissue_id, low, high, source", _cases("density_kg_per_m3", DENSITY))
def test_density_in_published_range(tissue_id, low, high, source):
    _check(tissue_id, "density_kg_per_m3", low, high, source)


@pytest.mark.parametrize("tissue_id, low, high, source",
                         _cases("attenuation_db_per_cm_mhz", ATTENUATION))
def test_attenuation_in_published_range(tissue_id, low, high, source):
    _check(tissue_id, "attenuation_db_per_cm_mhz", low, high, source)


@pytest.mark.parametrize("tissue_id, low, high, source",
                         _cases("attenuation_exponent", EXPONENT))
def test_exponent_in_published_range(tissue_id, low, high, source):
    _check(tissue_id, "attenuation_exponent", low, high, source)


def test_every_tissue_has_a_published_check_of_every_value():
    """No tissue escapes the four tables above (and no table names an unknown tissue)."""
    ids = set(load_tissues())
    for cases in (SPEED, DENSITY, ATTENUATION, EXPONENT):
        assert {c[0] for c in cases} == ids


@pytest.mark.parametrize("field, tissue_id", sorted(KEPT_BELOW_PUBLISHED))
def test_values_kept_outside_the_published_range_say_so(field, tissue_id):
    """A value kept outside its published range is common practice, never verified."""
    sourced = load_tissues()[tissue_id].provenance[field]
    assert sourced.status == "common_practice"
    assert any(word in (sourced.note or "") for word in ("kept", "not adopted")), tissue_id


# --- IT'IS v4.1 rows (Hasgall 2022), read in full -------------------------------------------
def test_neper_to_decibel():
    """20 / ln 10 = 8.686 dB per neper: 1 Np/m = 0.08686 dB/cm."""
    assert NP_TO_DB_PER_CM == pytest.approx(0.08686, abs=1e-5)


@pytest.mark.parametrize("tissue_id, np_per_m_mhz", [
    ("pancreas", 9.5502), ("bile", 0.255), ("urine", 0.0706), ("brain", 6.8032),
    ("tendon", 14.506), ("vessel_wall", 7.02)])
def test_adopted_itis_attenuation_is_the_row_read(tissue_id, np_per_m_mhz):
    """Where the table takes alpha0 from IT'IS v4.1 it is the row's value converted to dB
    (to the 2 % of rounding), and the note names it."""
    tissue = load_tissues()[tissue_id]
    assert tissue.attenuation_db_per_cm_mhz == pytest.approx(
        np_per_m_mhz * NP_TO_DB_PER_CM, rel=0.02)
    assert tissue.provenance["attenuation_db_per_cm_mhz"].source == "Hasgall2022ITIS"
    assert f"{np_per_m_mhz:g}" in tissue.provenance["attenuation_db_per_cm_mhz"].note


ITIS_AGREES = [("water", 0.0253284), ("blood", 2.3676), ("fat", 7.0), ("liver", 6.915),
               ("spleen", 4.3726), ("breast", 8.635)]
"""IT'IS v4.1 alpha0 [Np/m/MHz] of tissues whose kept value (Diagnostics 2023) it confirms."""
ITIS_DISAGREES = [("skin", 21.158), ("kidney", 2.8067), ("cartilage", 0.4397),
                  ("cortical_bone", 54.553), ("lung", 230.94), ("air", 0.0391439),
                  ("muscle_across", 7.1088), ("muscle_along", 7.1088)]
"""IT'IS v4.1 alpha0 [Np/m/MHz] of tissues whose kept value it does not confirm (muscle: IT'IS
does not state the fibre direction)."""


@pytest.mark.parametrize("tissue_id, np_per_m_mhz", ITIS_AGREES)
def test_kept_attenuation_agrees_with_itis(tissue_id, np_per_m_mhz):
    """Where Diagnostics 2023 Table 4 is kept, IT'IS v4.1 agrees within the +/-50 % scatter of
    published attenuation (fat: the SAT, subcutaneous-fat, row)."""
    value = load_tissues()[tissue_id].attenuation_db_per_cm_mhz
    assert 0.5 <= value / (np_per_m_mhz * NP_TO_DB_PER_CM) <= 1.5


@pytest.mark.parametrize("tissue_id, np_per_m_mhz", ITIS_DISAGREES)
def test_disagreements_with_itis_are_noted(tissue_id, np_per_m_mhz):
    """Where the kept attenuation and IT'IS v4.1 differ beyond the +/-50 % scatter, the note
    records the IT'IS value, so the disagreement is visible rather than silent."""
    sourced = load_tissues()[tissue_id].provenance["attenuation_db_per_cm_mhz"]
    ratio = sourced.value / (np_per_m_mhz * NP_TO_DB_PER_CM)
    assert not 0.5 <= ratio <= 1.5
    assert "IT'IS" in sourced.note and f"{np_per_m_mhz:g}"[:5] in sourced.note


def test_every_attenuation_from_diagnostics_2023_has_a_second_source_check():
    """The range tests above check each alpha0 against the publication it was taken from (they
    fail if the table drifts from it); a value is checked independently only against another
    publication. Every alpha0 taken from Diagnostics 2023 is compared with IT'IS v4.1: it agrees
    within the +/-50 % scatter, or the disagreement is recorded in its note."""
    kept = {tid for tid, t in load_tissues().items()
            if t.provenance["attenuation_db_per_cm_mhz"].source == "Diagnostics2023"}
    assert kept == {tid for tid, _ in ITIS_AGREES + ITIS_DISAGREES}


def test_an_itis_b_of_one_is_flagged_as_its_default():
    """IT'IS takes b = 1 where its data allow no fit: every exponent verified by a listed b = 1
    says so in its note."""
    for tissue in load_tissues().values():
        sourced = tissue.provenance["attenuation_exponent"]
        if sourced.source == "Hasgall2022ITIS" and sourced.value == 1.0:
            assert "no-fit default" in sourced.note, tissue.id


def test_fat_speed_for_body_temperature():
    """Fat 1450 m/s: inside IT'IS fat 1440.2 +/- 20.9 (Park 2023 Table 7) and ex vivo
    1462 +/- 26 at room temperature (Bioengineering 2025 A.2); kept below the room-temperature
    compilation MechMater 2012 (1468-1488) because fat slows as it warms (see the note)."""
    speed = get_tissue("fat").speed_m_per_s
    assert 1440.2 - 20.9 <= speed <= 1440.2 + 20.9
    assert 1461.77 - 26.11 <= speed <= 1461.77 + 26.11
    assert speed < 1468
    assert "warms" in get_tissue("fat").provenance["speed_m_per_s"].note


def test_cortical_bone_impedance_inside_the_published_table():
    """Sensors 2023 Table A2: substantia corticalis 3432 m/s and 6.50 MRayl; with the ex vivo
    1862 kg/m3 (Bioengineering 2025 A.1) the impedance stays at or below 6.50."""
    bone = get_tissue("cortical_bone")
    assert bone.speed_m_per_s == pytest.approx(3432)
    assert 6.0 <= bone.impedance_mrayl <= 6.50


# --- provenance ------------------------------------------------------------------------------
def _statuses() -> list[str]:
    return [s.status for t in load_tissues().values() for s in t.provenance.values()]


VERIFIED_FLOOR = 0.80
"""Share of values read in a named publication (87 of 108 when written; a value inside a range
the publication states counts, with the range in the note). Still from memory: amniotic fluid,
the steatotic liver, bile speed and density, the thyroid speed, skin's exponent and the 0.7
dB/cm/MHz phantom. The floor is the target of issue 12 and stops the share from slipping."""


def test_verified_share_reaches_the_target():
    statuses = _statuses()
    assert statuses.count("verified") / len(statuses) >= VERIFIED_FLOOR


def test_every_source_is_in_the_bibliography_and_memory_is_said():
    for tissue in load_tissues().values():
        for field, sourced in tissue.provenance.items():
            assert sourced.source in REFERENCES, f"{tissue.id}.{field}"
            if sourced.status == "derived":
                assert sourced.note, f"{tissue.id}.{field}: a derived value states its inputs"


def test_stand_ins_are_not_marked_verified():
    """Pancreas now carries its own IT'IS row; the thyroid's attenuation is still the
    soft-tissue average and is marked so."""
    t = load_tissues()
    for field, sourced in t["pancreas"].provenance.items():
        assert sourced.source == "Hasgall2022ITIS" and sourced.status == "verified", field
    thyroid = t["thyroid"].provenance["attenuation_db_per_cm_mhz"]
    assert thyroid.status == "common_practice" and "stand-in" in thyroid.note


@pytest.mark.parametrize("key, words", [
    ("Diagnostics2023", ("2023;13(5):855", "doi:10.3390/diagnostics13050855", "Table 4")),
    ("PMB2019Liver", ("2019;64(22):225001", "doi:10.1088/1361-6560/ab5010", "Table 1")),
    ("Bioengineering2025", ("Fernandes", "Carvalho", "2025;12(9):946",
                            "doi:10.3390/bioengineering12090946", "Appendix A.1")),
    ("Hasgall2022ITIS", ("Hasgall", "Kuster", "Version 4.1", "doi:10.13099/VIP21000-04-1",
                         "Np/m/MHz", "optimuslib/optimus")),
])
def test_tissue_sources_are_full_citations(key, words):
    """The compilations most of the table rests on carry journal or publisher, volume or
    version, DOI and the table read (and where it was read)."""
    for word in words:
        assert word in REFERENCES[key], f"{key}: {word}"


def test_tissue_bibliography_keys_are_not_reused_by_the_practice_table():
    """The practice-concordance bibliography may not repeat a key of the tissue bibliography."""
    practice = yaml.safe_load((Path(__file__).parent / "practice" / "references.yaml")
                              .read_text(encoding="utf-8"))
    assert not set(load_package_yaml("references/tissue_data.yaml")) & set(practice)


def test_water_absorption_two_sources_agree():
    """Pinkerton 1949's fit of absorption/f^2 (as coded in k-Wave attenuationWater) at 20 degC
    gives the 0.0022 dB/cm at 1 MHz of Diagnostics 2023 Table 4 (independent cross-check)."""
    coeffs = (56.723531840522710, -2.899633796917384, 0.099253401567561, -0.002067402501557,
              2.189417428917596e-05, -6.210860973978427e-08, -6.402634551821596e-10,
              3.869387679459408e-12)
    a_on_f2 = sum(c * 20.0 ** i for i, c in enumerate(coeffs)) * 1e-17
    assert 8.686 * 1e12 * a_on_f2 == pytest.approx(0.0022, rel=0.05)
    assert get_tissue("water").attenuation_db_per_cm_mhz == pytest.approx(0.0022, rel=0.05)


def test_air_density_follows_the_ideal_gas_law():
    """The density-of-air table (1.2041 kg/m3 at 20 degC, 1 atm) is p / (R_specific T) with
    R_specific = 287.058 J/(kg K); the table value of 1.2 kg/m3 is that room-temperature figure."""
    rho_20 = 101325.0 / (287.058 * 293.15)
    assert rho_20 == pytest.approx(1.2041, abs=5e-4)
    assert get_tissue("air").density_kg_per_m3 == pytest.approx(rho_20, rel=0.01)


def test_corrections_follow_the_published_tables():
    """Values corrected against the source read: Diagnostics 2023 Table 4 lists air 7.50 dB/cm
    at 1 MHz (not the 40 of lung); water at 37 degC is 1524 m/s (Bilaniuk & Wong 1993);
    IT'IS v4.1 lists inflated lung 949.286 m/s and 394 kg/m3, pancreas 1591 m/s and 1086.5
    kg/m3, urine 1537.67 m/s and air b = 2."""
    assert get_tissue("air").attenuation_db_per_cm_mhz == pytest.approx(7.5)
    assert get_tissue("lung").attenuation_db_per_cm_mhz == pytest.approx(40.0)
    assert get_tissue("water").speed_m_per_s == pytest.approx(1524, abs=3)
    assert get_tissue("lung").speed_m_per_s == pytest.approx(949.286, abs=1)
    assert get_tissue("lung").density_kg_per_m3 == pytest.approx(394)
    assert get_tissue("pancreas").speed_m_per_s == pytest.approx(1591)
    assert get_tissue("pancreas").density_kg_per_m3 == pytest.approx(1086.5, abs=1)
    assert get_tissue("urine").speed_m_per_s == pytest.approx(1537.67, abs=1)
    assert get_tissue("air").attenuation_exponent == pytest.approx(2.0)


# --- aliases ---------------------------------------------------------------------------------
@pytest.mark.parametrize("name, canonical", [("muscle", "muscle_across"),
                                             ("bone", "cortical_bone"),
                                             (" Muscle ", "muscle_across"),
                                             ("BONE", "cortical_bone"),
                                             ("muscle_along", "muscle_along")])
def test_practitioner_names_resolve(name, canonical):
    assert resolve_tissue_id(name) == canonical
    assert get_tissue(name).id == canonical


def test_aliases_are_not_table_ids():
    assert tissue_aliases() == {"muscle": "muscle_across", "bone": "cortical_bone"}
    assert not set(tissue_aliases()) & set(load_tissues())


def test_unknown_name_lists_ids_and_aliases():
    with pytest.raises(ValueError, match=r"unknown tissue 'nerve'.*muscle=muscle_across"):
        get_tissue("nerve")


@pytest.mark.parametrize("aliases, message", [({"fat": "liver"}, "shadows"),
                                              ({"gland": "thyroidd"}, "unknown tissue")])
def test_file_model_refuses_bad_aliases(aliases, message):
    row = {"value": 1.0, "source": "Derived", "status": "derived"}
    tissue = {"name": "x", "kind": "soft", "speed_m_per_s": row, "density_kg_per_m3": row,
              "attenuation_db_per_cm_mhz": row, "attenuation_exponent": row}
    doc = {"schema_version": 1, "aliases": aliases, "tissues": {"fat": tissue, "liver": tissue}}
    with pytest.raises(ValueError, match=message):
        TissuesFile.model_validate(doc)


# --- phantoms --------------------------------------------------------------------------------
@pytest.mark.parametrize("tissue_id, alpha", [("tm_phantom_05", 0.5), ("tm_phantom_07", 0.7)])
def test_qa_phantom_materials(tissue_id, alpha):
    """IEC 61391-1/-2 test phantoms: 1540 m/s, 0.5 or 0.7 dB/cm/MHz, linear in frequency."""
    t = get_tissue(tissue_id)
    assert t.kind == "soft"
    assert t.speed_m_per_s == pytest.approx(1540)
    assert t.attenuation_db_per_cm_mhz == pytest.approx(alpha)
    assert t.attenuation_exponent == pytest.approx(1.0)
    # the 0.5 dB/cm/MHz speed was read in a phantom data sheet; the 0.7 one only recalled
    speed_sources = {"tm_phantom_05": "PhantomDatasheetIEC1390", "tm_phantom_07": "IEC61391"}
    assert t.provenance["speed_m_per_s"].source == speed_sources[tissue_id]
    assert t.provenance["density_kg_per_m3"].status == "from_memory"   # not read: say so


def test_agar_tmm_measurement_is_near_linear():
    """Sun et al. 2012 measured IEC agar TMM: alpha = 0.40 f + 0.0076 f^2 dB/cm. Its effective
    exponent between 2 and 10 MHz (derived) lies in the phantoms' published range."""
    a2, a10 = 0.40 * 2 + 0.0076 * 4, 0.40 * 10 + 0.0076 * 100
    y = math.log(a10 / a2) / math.log(5.0)
    assert 1.0 < y < 1.1
    assert get_tissue("tm_phantom_05").attenuation_db_per_cm_mhz == pytest.approx(
        0.40 + 0.0076, rel=0.25)


# --- subcutaneous fat versus BMI -------------------------------------------------------------
def _fat(wall: str, bmi: float, sex: str | None) -> float:
    model = load_wall_models()[wall]
    i = [lay.role for lay in model.layers].index("subcutaneous_fat")
    return float(wall_layers_mm(model, bmi, sex)[i])


def _whole(wall: str, bmi: float, sex: str | None) -> float:
    return float(wall_layers_mm(load_wall_models()[wall], bmi, sex).sum())


@pytest.mark.parametrize("bmi, mean, sd", [(22, 17, 7), (40, 30, 12)])
def test_umbilical_wall_Milad2002(bmi, mean, sd):
    """Milad & Terkildsen 2002: umbilical wall 1.7 +/- 0.7 cm (BMI < 30), 3.0 +/- 1.2 cm
    (BMI >= 30) in women; the model lies within one SD at BMI 22 and 40."""
    assert abs(_whole("periumbilical", bmi, "female") - mean) <= sd


@pytest.mark.parametrize("bmi, mean, sd", [(22, 20, 7), (40, 44, 10)])
def test_upper_quadrant_wall_Milad2002(bmi, mean, sd):
    """Milad & Terkildsen 2002: left upper quadrant 2.0 +/- 0.7 vs 4.4 +/- 1.0 cm."""
    assert abs(_whole("epigastric", bmi, "female") - mean) <= sd


def test_upper_wall_grows_faster_than_umbilical_Milad2002():
    """Milad 2002: 24 mm between the groups in the upper quadrant vs 13 mm at the umbilicus."""
    upper = _whole("epigastric", 40, "female") - _whole("epigastric", 22, "female")
    umbilical = _whole("periumbilical", 40, "female") - _whole("periumbilical", 22, "female")
    assert upper > umbilical


@pytest.mark.parametrize("bmi, published", [(22, 18.2), (30, 25.7), (40, 36.9)])
def test_periumbilical_wall_AAGL2024(bmi, published):
    """AAGL 2024 (187 women, ultrasound): 18.2 / 25.7 / 36.9 mm normal / overweight / obese;
    +/-15 % (the overweight mean is compared at BMI 30, the class boundary)."""
    assert _whole("periumbilical", bmi, "female") == pytest.approx(published, rel=0.15)


@pytest.mark.parametrize("bmi", [22, 30, 40])
def test_skin_to_sheath_Afifi(bmi):
    """Afifi nomogram (women): skin to rectus sheath = 0.7306 BMI + 0.864 mm (within 1 mm)."""
    model = load_wall_models()["periumbilical"]
    skin_and_fat = float(wall_layers_mm(model, bmi, "female")[:2].sum())
    assert skin_and_fat == pytest.approx(0.7306 * bmi + 0.864, abs=1.0)


def test_abdominal_fat_at_obesity_cut_off_Chandak2018():
    """Chandak 2018: abdominal subcutaneous fat 18.65 mm flags BMI >= 30 (sex mean, +/-15 %)."""
    assert _fat("paramedian", 30, None) == pytest.approx(18.65, rel=0.15)


def test_abdominal_fat_level_Gibney2010():
    """Gibney 2010: abdominal fat 13.9 mm (95 % CI printed 13.2-17.7) over a cohort split
    into BMI < 25, 25-29.9 and >= 30; the model (sex mean) at BMI 25 and 28 lies in it."""
    assert 13.2 <= _fat("paramedian", 25, None) <= 17.7
    assert 13.2 <= _fat("paramedian", 28, None) <= 17.7


def test_thigh_fat_slope_and_level_Gibney2010():
    """Gibney 2010: +4 mm of fat per 10 kg/m2 (pooled over sites); thigh 10.4 mm."""
    assert _fat("thigh", 35, None) - _fat("thigh", 25, None) == pytest.approx(4.0, abs=1.0)
    assert _fat("thigh", 25, None) == pytest.approx(10.4, rel=0.25)


@pytest.mark.parametrize("wall", ["paramedian", "thigh"])
def test_women_carry_more_fat_Gibney2010(wall):
    """Gibney 2010: women +5.1 mm of subcutaneous fat (pooled), within 1.5 mm."""
    assert _fat(wall, 25, "female") - _fat(wall, 25, "male") == pytest.approx(5.1, abs=1.5)


def test_abdominal_slope_exceeds_pooled_Gibney2010():
    """The abdomen tracks BMI more than the pooled sites (Gibney 0.4 mm per unit): the
    periumbilical slope is Afifi's 0.73 and the lower-abdomen slope is larger still."""
    per_unit = (_fat("paramedian", 40, None) - _fat("paramedian", 22, None)) / 18
    assert per_unit > 0.4
    umbilical = (_fat("periumbilical", 40, "female") - _fat("periumbilical", 22, "female")) / 18
    assert umbilical == pytest.approx(0.7306, abs=0.05)


@pytest.mark.parametrize("bmi, low, high", [(21.7, 12.8, 15.4), (24.4, 14.6, 16.2),
                                            (28.4, 15.4, 19.6)])
def test_pregnancy_fat_Eley2019(bmi, low, high):
    """Eley 2019 (18-22 weeks): median 15.4 mm (IQR 12.8-19.6) at BMI 24.4 (21.7-28.4)."""
    assert low <= _fat("pregnancy_lower", bmi, "female") <= high

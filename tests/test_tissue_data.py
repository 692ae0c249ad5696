"""The tissue table and the fat-versus-BMI model against published figures.

Every range below is written here with the publication it comes from (never read from the
data file it checks). Ranges carry the published spread (or the stated tolerance where one
value is published); "(from memory)" marks a figure recalled from the named book, not re-read.
"""

from __future__ import annotations

import math

import pytest

from planner.body.walls import load_wall_models, wall_layers_mm
from planner.files.package import TissuesFile
from planner.physics.tissues import get_tissue, load_tissues, resolve_tissue_id, tissue_aliases
from planner.references import REFERENCES

# --- speed of sound [m/s] -------------------------------------------------------------------
SOFT_SPAN = "MechMater 2012 Table 3: parenchymal soft tissues 1517 (muscle) - 1635 (liver) m/s"
FLUID_SPEED = ("MechMater 2012 Table 3: aqueous humour 1518-1597 m/s, nearest tabulated watery "
               "body fluid (Duck 1990 body fluids about 1534-1540, from memory)")
SPEED = [
    ("water", 1515, 1530, "Bilaniuk & Wong 1993: water at 37 degC 1524 m/s (+/-0.5 %)"),
    ("blood", 1559, 1590, "Park 2023 Table 7 (IT'IS): blood 1578.2 m/s, min 1559.2 max 1590"),
    ("fat", 1412, 1488, "Park 2023 fat 1412-1485; MechMater 2012 fat 1468-1488 m/s"),
    ("skin", 1595, 1635, "MechMater 2012 Table 3: skin 1595-1635 m/s"),
    ("muscle_across", 1541, 1583, "Bioengineering 2025 A.2: muscle across fibres 1562 +/- 21"),
    ("muscle_along", 1564, 1633, "Bioengineering 2025 A.2: muscle along fibres 1599 +/- 34"),
    ("soft_tissue", 1539, 1541, "scanner convention 1540 m/s (sonography speed tutorial)"),
    ("liver", 1566, 1588, "PMB 2019 Table 1: normal liver 1577 +/- 11 m/s"),
    ("liver_steatotic", 1500, 1545, "Imbault 2017: steatotic liver 1500-1540 m/s (from memory)"),
    ("kidney", 1530, 1590, "MechMater 2012 Table 3: kidney 1530-1590 m/s"),
    ("spleen", 1537, 1597, "MechMater 2012 Table 3: spleen 1537-1597 m/s"),
    ("pancreas", 1517, 1635, SOFT_SPAN),
    ("bile", 1518, 1597, FLUID_SPEED),
    ("urine", 1518, 1597, FLUID_SPEED),
    ("amniotic_fluid", 1518, 1597, FLUID_SPEED),
    ("ascites", 1518, 1597, FLUID_SPEED),
    ("brain", 1540, 1580, "MechMater 2012 Table 3: brain 1540-1580 m/s"),
    ("tendon", 1654, 1852, "MechMater 2012 Table 3: tendon 1654-1852 m/s"),
    ("thyroid", 1560, 1600, "Goss 1978/1980 compilations: thyroid 1560-1600 (from memory)"),
    ("breast", 1490, 1530, "MechMater 2012 Table 3: breast 1490-1530 m/s"),
    ("vessel_wall", 1500, 1532, "MechMater 2012 Table 3: blood vessel 1500-1532 m/s"),
    ("cartilage", 1565, 1770, "MechMater 2012 Table 3: cartilage 1565-1770 m/s"),
    ("cortical_bone", 3200, 4000, "MechMater 2012 Table 3: cortical bone 3200-4000 m/s"),
    ("lung", 400, 800, "Bushberg 2012 Table 14-1: lung 600 m/s (from memory)"),
    ("air", 325, 355, "A-level examination data: air 330 m/s; 343 m/s at 20 degC"),
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
    ("pancreas", 1040, 1060, ORGANS),
    ("bile", 990, 1030, FLUID_DENSITY),
    ("urine", 990, 1030, FLUID_DENSITY),
    ("amniotic_fluid", 990, 1030, FLUID_DENSITY),
    ("ascites", 990, 1030, FLUID_DENSITY),
    ("brain", 1001, 1065, "Bioengineering 2025 A.1: white 1024 +/- 23, grey 1047 +/- 18"),
    ("tendon", 1076, 1166, "Bioengineering 2025 A.1: tendon 1121 +/- 45; MechMater 1130"),
    ("thyroid", 1040, 1060, ORGANS),
    ("breast", 990, 1092, "Park 2023 (IT'IS): glandular 990-1092; MechMater breast 1020"),
    ("vessel_wall", 1018, 1082, "PMB 2019 Table 1: hepatic artery 1050 kg/m3 (+/-3 %)"),
    ("cartilage", 990, 1076, "Bioengineering 2025 A.1: cartilage 1033 +/- 43 kg/m3"),
    ("cortical_bone", 1800, 2200, "MechMater 2012 Table 3: cortical bone 1800-2200 kg/m3"),
    ("lung", 150, 600, "Bushberg 2012 Table 14-1: lung 300 kg/m3 (from memory)"),
    ("air", 1.14, 1.30, "density of air table: 1.1455 kg/m3 at 35 degC to 1.2922 at 0 degC"),
    ("tm_phantom_05", 1000, 1100, "IEC agar-based TMM about 1040-1060 kg/m3 (from memory)"),
    ("tm_phantom_07", 1000, 1100, "IEC agar-based TMM about 1040-1060 kg/m3 (from memory)"),
]

# --- attenuation coefficient at 1 MHz [dB/cm/MHz^y] -----------------------------------------
def _t4(value: float) -> tuple[float, float]:
    """Diagnostics 2023 Table 4 value with the +/-30 % scatter of published attenuation."""
    return round(0.7 * value, 6), round(1.3 * value, 6)


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
    ("pancreas", 0.5, 0.75, AVERAGE),
    ("bile", 0.0022, 0.15, WATERY),
    ("urine", 0.0022, 0.15, WATERY),
    ("amniotic_fluid", 0.0022, 0.15, WATERY),
    ("ascites", 0.0022, 0.15, WATERY),
    ("brain", 0.4, 0.8, "Menikou 2017 brain-mimicking recipe 0.59; Szabo 0.58 (memory)"),
    ("tendon", 0.9, 1.6, "Bushberg 0.9-1.1 (memory) to connective tissue 1.57 (Diagnostics)"),
    ("thyroid", 0.5, 1.76, "Radiopaedia soft tissue 0.5-0.75 up to Fujii 2003 normal thyroid "
                           "1.50 +/- 0.26 in vivo"),
    ("breast", *_t4(0.75), "Diagnostics 2023 Table 4: breast 0.75"),
    ("vessel_wall", *_t4(1.57), CONNECTIVE),
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
EXPONENT = [
    ("water", 1.9, 2.1, "Pinkerton 1949 (k-Wave attenuationWater): absorption goes as f^2"),
    ("blood", 1.1, 1.3, "Szabo 2004 App. B: blood y = 1.21 (from memory)"),
    ("fat", 1.0, 1.5, SOFT_Y), ("skin", 1.0, 1.5, SOFT_Y),
    ("muscle_across", 1.0, 1.5, SOFT_Y), ("muscle_along", 1.0, 1.5, SOFT_Y),
    ("soft_tissue", 1.0, 1.0, "teaching rule 0.5 dB/cm per MHz: linear in frequency"),
    ("liver", 1.05, 1.25, "Lin 1987: normal human liver 0.399 f^1.139 (1.25-8 MHz)"),
    ("liver_steatotic", 1.0, 1.5, SOFT_Y), ("kidney", 1.0, 1.5, SOFT_Y),
    ("spleen", 1.0, 1.5, SOFT_Y), ("pancreas", 1.0, 1.5, SOFT_Y),
    ("bile", 1.0, 2.0, FLUID_Y), ("urine", 1.0, 2.0, FLUID_Y),
    ("amniotic_fluid", 1.0, 2.0, FLUID_Y), ("ascites", 1.0, 2.0, FLUID_Y),
    ("brain", 1.0, 1.5, SOFT_Y), ("tendon", 1.0, 1.5, SOFT_Y), ("thyroid", 1.0, 1.5, SOFT_Y),
    ("breast", 1.0, 1.5, "Li 2022 via Park 2023: breast 1.12-1.36; Szabo 1.5 (from memory)"),
    ("vessel_wall", 1.0, 1.5, SOFT_Y), ("cartilage", 1.0, 1.5, SOFT_Y),
    ("cortical_bone", 1.0, 2.0, "bone y about 1-2 (Szabo 2004, from memory)"),
    ("lung", 1.0, 2.0, "no fit published; gas absorption up to f^2 (from memory)"),
    ("air", 1.0, 2.0, "no fit published; classical gas absorption f^2 (from memory)"),
    ("tm_phantom_05", 0.95, 1.1, AGAR_Y), ("tm_phantom_07", 0.95, 1.1, AGAR_Y),
]


def _ids(cases):
    return [f"{c[0]}: {c[3]}" for c in cases]


def _check(tissue_id: str, field: str, low: float, high: float, source: str) -> None:
    value = getattr(load_tissues()[tissue_id], field)
    assert low <= value <= high, f"{tissue_id}.{field} = {value} outside [{low}, {high}] ({source})"


@pytest.mark.parametrize("tissue_id, low, high, source", SPEED, ids=_ids(SPEED))
def test_speed_in_published_range(tissue_id, low, high, source):
    _check(tissue_id, "speed_m_per_s", low, high, source)


@pytest.mark.parametrize("tissue_id, low, high, source", DENSITY, ids=_ids(DENSITY))
def test_density_in_published_range(tissue_id, low, high, source):
    _check(tissue_id, "density_kg_per_m3", low, high, source)


@pytest.mark.parametrize("tissue_id, low, high, source", ATTENUATION, ids=_ids(ATTENUATION))
def test_attenuation_in_published_range(tissue_id, low, high, source):
    _check(tissue_id, "attenuation_db_per_cm_mhz", low, high, source)


@pytest.mark.parametrize("tissue_id, low, high, source", EXPONENT, ids=_ids(EXPONENT))
def test_exponent_in_published_range(tissue_id, low, high, source):
    _check(tissue_id, "attenuation_exponent", low, high, source)


def test_every_tissue_has_a_published_check_of_every_value():
    """No tissue escapes the four tables above (and no table names an unknown tissue)."""
    ids = set(load_tissues())
    for cases in (SPEED, DENSITY, ATTENUATION, EXPONENT):
        assert {c[0] for c in cases} == ids


# --- provenance ------------------------------------------------------------------------------
def _statuses() -> list[str]:
    return [s.status for t in load_tissues().values() for s in t.provenance.values()]


VERIFIED_FLOOR = 0.55
"""Share of values read in a named publication (60 of 108 when written; a value inside a range
the publication states counts, with the range in the note). The exponents and the body fluids
are from memory: no readable copy of Duck 1990, Szabo App. B, Azhari App. A or the IT'IS table
was found. The floor stops the share from slipping back."""


def test_verified_share_does_not_fall():
    statuses = _statuses()
    assert statuses.count("verified") / len(statuses) >= VERIFIED_FLOOR


@pytest.mark.xfail(strict=True, reason="target of 80 % verified not reached: exponents and "
                   "body-fluid values are from memory; remove this mark when it passes")
def test_verified_share_reaches_target():
    statuses = _statuses()
    assert statuses.count("verified") / len(statuses) >= 0.80


def test_every_source_is_in_the_bibliography_and_memory_is_said():
    for tissue in load_tissues().values():
        for field, sourced in tissue.provenance.items():
            assert sourced.source in REFERENCES, f"{tissue.id}.{field}"
            if sourced.status == "derived":
                assert sourced.note, f"{tissue.id}.{field}: a derived value states its inputs"


@pytest.mark.parametrize("key, words", [
    ("Diagnostics2023", ("2023;13(5):855", "doi:10.3390/diagnostics13050855", "Table 4")),
    ("PMB2019Liver", ("2019;64(22):225001", "doi:10.1088/1361-6560/ab5010", "Table 1")),
    ("Bioengineering2025", ("Fernandes", "Carvalho", "2025;12(9):946",
                            "doi:10.3390/bioengineering12090946", "Appendix A.1")),
])
def test_tissue_sources_are_full_citations(key, words):
    """The three compilations most of the table rests on carry journal, volume, article
    number, DOI and the table read (as printed on the journal and PubMed Central pages)."""
    for word in words:
        assert word in REFERENCES[key], f"{key}: {word}"


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
    at 1 MHz (not the 40 of lung); water at 37 degC is 1524 m/s (Bilaniuk & Wong 1993)."""
    assert get_tissue("air").attenuation_db_per_cm_mhz == pytest.approx(7.5)
    assert get_tissue("lung").attenuation_db_per_cm_mhz == pytest.approx(40.0)
    assert get_tissue("water").speed_m_per_s == pytest.approx(1524, abs=3)


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

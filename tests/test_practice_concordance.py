"""Concordance of plans with published practice (tests/practice/cases.yaml).

One test per case and column asserts that the plan agrees with practice under the rules of
scripts/practice_report.py (start frequency inside the practice band +/- 0.25 MHz; probe type
accepted; harmonic equal unless practice says either; first window accepted). The practice
values come from the sources named beside each value in the table, never from the plan.
Where the current engine disagrees, the table's ``known_disagreements`` lists the case and
column with a diagnosis, and exactly those tests are ``xfail(strict=True)``: a change that
brings the plan into line with practice makes them XPASS, which fails until the entry is
removed from the list.
"""

from __future__ import annotations

import importlib.util
import json
import sys
from functools import lru_cache
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
_spec = importlib.util.spec_from_file_location("practice_report", ROOT / "scripts" / "practice_report.py")
assert _spec is not None and _spec.loader is not None
report = importlib.util.module_from_spec(_spec)
sys.modules.setdefault("practice_report", report)
_spec.loader.exec_module(report)

TABLE = report.load_table()
REQUIRED_TARGETS = ("liver", "gallbladder", "kidney", "aorta", "pancreas", "spleen", "thyroid",
                    "carotid-bifurcation", "femoral-vein", "popliteal-vein", "appendix",
                    "achilles-tendon", "fetal-head", "fetal-heart", "embryo", "uterus", "ovary",
                    "testis", "breast", "neonatal-brain")
"""Targets the table must cover, each at a BMI below 25 and one of 40 or more (neonates apart)."""


@lru_cache(maxsize=None)
def _plan_values(case_id: str) -> dict:
    case = next(c for c in TABLE.cases if c["id"] == case_id)
    return report.plan_values(report.plan_case(case["inputs"]))


def _params():
    out = []
    for case in TABLE.cases:
        for column in report.COLUMNS:
            known = TABLE.known.get((case["id"], column))
            marks = ([pytest.mark.xfail(strict=True, reason=f"{known['cause']}: {known['diagnosis']}")]
                     if known else [])
            out.append(pytest.param(case["id"], column, marks=marks, id=f"{case['id']}-{column}"))
    return out


@pytest.mark.parametrize(("case_id", "column"), _params())
def test_plan_agrees_with_practice(case_id, column):
    case = next(c for c in TABLE.cases if c["id"] == case_id)
    practice = case["practice"][column]
    value = _plan_values(case_id)[column]
    assert report.agrees(column, practice, value), (
        f"{case_id}: plan {report.plan_text(column, value)} against practice "
        f"{report.practice_text(column, practice)} ({practice['source']}, {practice['where']}, "
        f"{practice['status']})")


def test_table_has_at_least_40_cases_with_unique_ids():
    ids = [c["id"] for c in TABLE.cases]
    assert len(ids) >= 40
    assert len(set(ids)) == len(ids)


def test_every_value_names_a_known_source_a_place_and_a_status():
    keys = report.reference_keys()
    for case in TABLE.cases:
        for column in report.COLUMNS:
            value = case["practice"][column]
            assert value["source"] in keys, f"{case['id']}/{column}: {value['source']}"
            assert value["where"].strip(), f"{case['id']}/{column}: no place in the source"
            assert value["status"] in report.STATUSES, f"{case['id']}/{column}"


def test_table_references_do_not_redefine_package_keys():
    from planner.references import REFERENCES
    from planner.yamlio import load_user_yaml
    own = load_user_yaml(report.TABLE_REFERENCES, kind="reference list").data
    assert own and not set(own) & set(REFERENCES)
    assert all(isinstance(v, str) and v.strip() for v in own.values())
    text = report.TABLE.read_text(encoding="utf-8")
    unused = sorted(k for k in own if k not in text)
    assert not unused, f"keys no value or note of the table uses: {unused}"


def test_required_targets_at_slim_and_obese_habitus():
    by_target: dict[str, set[float]] = {}
    for case in TABLE.cases:
        by_target.setdefault(case["inputs"]["target"], set()).add(float(case["inputs"]["bmi"]))
    for target in REQUIRED_TARGETS:
        assert target in by_target, f"no case for {target}"
        if target == "neonatal-brain":
            continue
        bmis = by_target[target]
        assert min(bmis) < 25 and max(bmis) >= 40, f"{target}: BMIs {sorted(bmis)}"
    carotid = [c for c in TABLE.cases if c["inputs"]["target"] == "carotid-bifurcation"]
    assert carotid and all(c["inputs"].get("doppler") for c in carotid)
    for target in ("fetal-head", "fetal-heart"):
        assert all(c["inputs"].get("gestation_weeks") == 20
                   for c in TABLE.cases if c["inputs"]["target"] == target)


def test_accepted_ids_exist_in_the_library():
    """Accepted windows are windows of the case's target; probe types are the plan's types."""
    from planner.library.probes import default_inventory
    from planner.library.targets import load_library
    library = load_library()
    types = {p.type for p in default_inventory().probes}
    for case in TABLE.cases:
        target = library.get(case["inputs"]["target"])
        windows = {w.id for w in target.windows}
        for wid in case["practice"]["first_window"]["accept"]:
            assert wid in windows, f"{case['id']}: {wid} is not a window of {target.id}"
        if "window" in case["inputs"]:
            assert case["inputs"]["window"] in windows
        assert set(case["practice"]["probe_type"]["accept"]) <= types, case["id"]


def test_known_disagreements_are_exactly_the_failing_pairs():
    """The list stays honest both ways: no entry agrees, no disagreement is unlisted."""
    result = report.evaluate(TABLE)
    assert result["stale_known"] == []
    assert result["unlisted_disagreements"] == []
    for entry in TABLE.known.values():
        assert "\n" not in entry["diagnosis"] and len(entry["diagnosis"]) <= 240


WALL_FREE_PAIRS = (("embryo-bmi21-8w", "embryo-bmi42-8w"), ("uterus-bmi21-tv", "uterus-bmi42-tv"),
                   ("ovary-bmi21", "ovary-bmi42"), ("testis-bmi21", "testis-bmi42"),
                   ("achilles-tendon-bmi21", "achilles-tendon-bmi42"))
"""Slim and obese cases whose route has no abdominal wall (endocavitary, scrotum, ankle)."""


@pytest.mark.parametrize(("slim", "obese"), WALL_FREE_PAIRS, ids=[p[0] for p in WALL_FREE_PAIRS])
def test_plan_barely_changes_with_bmi_where_the_route_has_no_wall(slim, obese):
    """Common practice: BMI does not change the transvaginal, scrotal or Achilles start (the
    path does not cross the abdominal wall), so probe, first window and start stay put."""
    a, b = _plan_values(slim), _plan_values(obese)
    assert a["probe_type"] == b["probe_type"] and a["first_window"] == b["first_window"]
    assert a["start_band"] is not None and b["start_band"] is not None
    assert abs(a["start_band"] - b["start_band"]) <= 0.5


def test_agreement_rules():
    band = {"low_mhz": 3.5, "high_mhz": 5.0}
    assert report.agrees("start_band", band, 5.25) and report.agrees("start_band", band, 3.25)
    assert not report.agrees("start_band", band, 5.3) and not report.agrees("start_band", band, None)
    assert report.agrees("harmonic", {"value": "either"}, False)
    assert report.agrees("harmonic", {"value": "on"}, True)
    assert not report.agrees("harmonic", {"value": "off"}, True)
    assert report.agrees("first_window", {"accept": ["a", "b"]}, "b")
    assert not report.agrees("probe_type", {"accept": ["linear"]}, "curvilinear")


def test_plan_values_read_the_plan_json_keys():
    """The compared values are the ones `scanplan plan --json` prints (start = band top)."""
    import contextlib
    import io

    from planner.cli import main
    case = TABLE.cases[0]
    out = io.StringIO()
    with contextlib.redirect_stdout(out):
        assert main(report.plan_argv(case["inputs"])) == 0
    data = json.loads(out.getvalue())
    assert report.plan_values(data) == _plan_values(case["id"])
    assert data["frequency_mhz"]["feasible"] is True


def test_report_script_text_and_json(capsys):
    assert report.main(["--case", "liver-bmi21", "--case", "thyroid-bmi21"]) == 0
    text = capsys.readouterr().out
    assert "liver-bmi21" in text and "Totals" in text and "overall" in text
    assert report.main(["--json", "--case", "liver-bmi21"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["overall"]["of"] == len(report.COLUMNS)
    assert set(data["totals"]) == set(report.COLUMNS)


def test_bad_table_lists_every_problem(tmp_path, capsys):
    bad = tmp_path / "cases.yaml"
    bad.write_text("schema: 1\ncases:\n  - id: x\n    inputs: {target: liver, bmi: 21}\n"
                   "    practice:\n      start_band: {low_mhz: 5, high_mhz: 3, source: Nope,"
                   " where: here, status: guessed}\n"
                   "known_disagreements:\n  - {case: y, column: colour, cause: z, diagnosis: ''}\n",
                   encoding="utf-8")
    with pytest.raises(report.TableError) as info:
        report.load_table(bad)
    text = "\n".join(info.value.problems)
    for needle in ("missing column 'probe_type'", "unknown source key 'Nope'", "status must be",
                   "0 < low_mhz <= high_mhz", "no case 'y'", "column must be", "unknown cause",
                   "diagnosis", f"{bad}:"):
        assert needle in text, needle
    assert report.main(["--table", str(bad)]) == 1
    assert "practice_report: error" in capsys.readouterr().err

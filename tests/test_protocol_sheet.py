"""`scanplan protocol sheet`: every view for every WHO habitus class, time, safety, statement.

Golden files live in ``tests/golden/sheets/``. After an intended change of the sheet,
regenerate them and review the diff::

    SCANPLAN_UPDATE_GOLDEN=1 /work/venv/bin/python -m pytest tests/test_protocol_sheet.py

(any non-empty value other than ``0`` rewrites the golden files instead of comparing).
"""

from __future__ import annotations

import json
import os
import re
from html.parser import HTMLParser
from pathlib import Path
from xml.etree import ElementTree

import pytest

from planner.body.habitus import BMI_CLASSES, who_bmi_class
from planner.cli import main
from planner.errors import DataError, ExitCode, InputError
from planner.protocol import load_protocol
from planner.protocol import sheet as sheet_module
from planner.protocol.sheet import (CLASS_IDS, build_sheet, parse_habitus, render_sheet,
                                    sheet_from_file)
from planner.protocol.sheet_model import sheet_to_json_data
from planner.safety import DISCLAIMER

ROOT = Path(__file__).parents[1]
PROTOCOLS = ROOT / "protocols"
UPPER = PROTOCOLS / "harbourside" / "upper-abdomen.yaml"
RENAL = PROTOCOLS / "harbourside" / "renal-tract.yaml"
SURVEY = PROTOCOLS / "fellbrook" / "mid-trimester-survey.yaml"
LOCAL = PROTOCOLS / "examples" / "local-policy.yaml"
BROKEN = ROOT / "tests" / "fixtures" / "protocols_broken" / "unknown_window.yaml"
GOLDEN = ROOT / "tests" / "golden" / "sheets"
UPDATE = os.environ.get("SCANPLAN_UPDATE_GOLDEN", "") not in ("", "0")
SHIPPED = sorted(p for p in PROTOCOLS.glob("*/*.yaml")
                 if p.name not in ("probes.yaml", "qa.yaml") and p.parent.name != "examples")


def cli(argv: list[str], capsys) -> tuple[int, str, str]:
    code = main(["protocol", "sheet", *map(str, argv)])
    captured = capsys.readouterr()
    return code, captured.out, captured.err


@pytest.fixture(scope="module")
def upper():
    return sheet_from_file(UPPER)


def check_golden(name: str, text: str) -> None:
    path = GOLDEN / name
    if UPDATE:
        path.parent.mkdir(parents=True, exist_ok=True)
        path.write_text(text, encoding="utf-8")
        return
    assert path.exists(), f"missing golden file {path}; run with SCANPLAN_UPDATE_GOLDEN=1"
    assert text == path.read_text(encoding="utf-8"), (
        f"{name} differs from its golden file; if the change is intended, regenerate with "
        "SCANPLAN_UPDATE_GOLDEN=1 and review the diff")


# --- golden outputs ---------------------------------------------------------------------

@pytest.mark.parametrize("fmt", ["md", "html", "json"])
def test_golden_upper_abdomen(fmt, capsys):
    """The Harbourside upper-abdomen sheet with its own inventory, all six classes."""
    code, out, err = cli([UPPER, "--format", fmt], capsys)
    assert (code, err) == (0, "")
    check_golden(f"upper-abdomen.{fmt}", out)


def test_golden_obstetric_with_local_policy_and_two_classes(capsys):
    """An obstetric sheet: gestation assumption, TIB, local policy beside the protocol's."""
    code, out, err = cli([SURVEY, "--habitus", "obese_3,normal", "--local", LOCAL], capsys)
    assert (code, err) == (0, "")
    check_golden("mid-trimester-survey.normal-obese_3.local.md", out)


# --- every shipped protocol ---------------------------------------------------------------

@pytest.mark.parametrize("path", SHIPPED, ids=lambda p: f"{p.parent.name}/{p.stem}")
def test_every_shipped_protocol_validates_and_renders_with_the_statement(path):
    """Every shipped protocol validates, and each format carries the decision-support
    statement (DESIGN section 4: every output carries it)."""
    protocol = load_protocol(path)
    sheet = build_sheet(protocol, protocol_path=path)
    assert [v.id for v in sheet.views] == [v.id for v in protocol.views]
    for fmt in ("md", "html", "json"):
        text = render_sheet(sheet, fmt)
        assert DISCLAIMER in (json.loads(text)["statement"] if fmt == "json" else
                              text.replace("&#x27;", "'"))


def test_shipped_protocol_list_is_not_empty():
    assert len(SHIPPED) >= 6


# --- content --------------------------------------------------------------------------------

def test_every_view_has_one_row_per_who_class_at_a_bmi_inside_the_class(upper):
    """WHO2000Obesity: each row's BMI lies in its class (18.5 / 25 / 30 / 35 / 40 kg/m2)."""
    assert [c.id for c in upper.habitus_classes] == [c[0] for c in BMI_CLASSES]
    for view in upper.views:
        assert [r.class_id for r in view.classes] == list(CLASS_IDS)
        for row in view.classes:
            assert who_bmi_class(row.bmi)[0] == row.class_id


def test_heaviest_class_gets_a_lower_top_frequency_than_normal_for_deep_views(upper):
    """Practice: deep targets in large patients need a lower frequency (penetration about
    40/f cm, RadiologyPhysicsSummary; drop to the low band of the curvilinear probe for
    deep targets, common practice); a thicker wall makes every target
    deeper (HabitusPracticeModel). Deep = 8 cm or more at normal weight."""
    deep = 0
    for view in upper.views:
        rows = {r.class_id: r for r in view.classes}
        normal, heavy = rows["normal"], rows["obese_3"]
        assert heavy.depth_cm > normal.depth_cm
        if normal.depth_cm >= 8.0:
            deep += 1
            assert heavy.band_mhz.high < normal.band_mhz.high, view.id
    assert deep >= 4


def test_harmonic_imaging_is_advised_from_obese_class_one(upper):
    """Harmonic imaging is clearly better in abdominal imaging from BMI 30
    (THIRadioGraphics; Ralls2000THI: better images in large body habitus)."""
    for view in upper.views:
        for row in view.classes:
            if row.class_id in ("obese_1", "obese_2", "obese_3"):
                assert row.harmonic.advised, (view.id, row.class_id)


def test_main_warnings_are_at_most_three_cautions_or_warnings_most_severe_first(upper):
    for view in upper.views:
        for row in view.classes:
            severities = [w.severity for w in row.warnings]
            assert len(severities) <= 3
            assert set(severities) <= {"caution", "warning"}
            assert severities == sorted(severities, key=("warning", "caution").index)


def test_total_planned_minutes_is_the_sum_of_the_views(upper):
    """upper-abdomen.yaml: 3 + 3 + 2 + 3 + 3 + 2 + 2 + 2 = 20 min."""
    assert upper.time.planned_minutes == 20.0


def test_published_and_protocol_limits_side_by_side(upper):
    """BMUS2009Detailed: no time limit up to TI 1.0 outside obstetrics; AIUM2022TI: none up
    to 1.5. The protocol's own 30 min cap is shown as its own row."""
    limits = {(r.kind, r.label): r for r in upper.time.limits}
    assert limits[("published", "BMUS 2009")].limit == "unlimited"
    assert limits[("published", "AIUM 2022")].limit == "unlimited"
    protocol = limits[("protocol", "protocol upper-abdomen")]
    assert (protocol.max_minutes, protocol.max_ti, protocol.within) == (30.0, 1.0, True)
    assert upper.safety.local_policy is not None
    assert upper.safety.local_policy.origin == "protocol"


def _survey_copy(tmp_path: Path, max_ti: float) -> Path:
    """The mid-trimester protocol with another max_ti (its inventory copied beside it)."""
    text = SURVEY.read_text(encoding="utf-8")
    text, count = re.subn(r"max_ti: \{value: 0\.7,", f"max_ti: {{value: {max_ti},", text)
    assert count == 1
    (tmp_path / "probes.yaml").write_text(
        (SURVEY.parent / "probes.yaml").read_text(encoding="utf-8"), encoding="utf-8")
    path = tmp_path / "survey.yaml"
    path.write_text(text, encoding="utf-8")
    return path


@pytest.mark.parametrize("max_ti, minutes, within, severity", [
    (1.2, 30.0, True, "info"),       # BMUS 2009 Fig. 1: TI 1.0-1.5 -> 30 min; 18 min planned
    (2.2, 4.0, False, "warning"),    # BMUS 2009 Fig. 1: TI 2.0-2.5 -> 4 min
])
def test_obstetric_time_is_read_at_the_expected_ti_in_bmus_figure_one(
        tmp_path, max_ti, minutes, within, severity):
    """BMUS2009 Fig. 1 (obstetric, TIB after 10 weeks): scan-time limit per TI band."""
    sheet = sheet_from_file(_survey_copy(tmp_path, max_ti), habitus=("normal",))
    time = sheet.time
    assert time.planned_minutes == 18.0 and time.expected_ti == max_ti
    bmus = next(r for r in time.limits if r.label == "BMUS 2009")
    assert (bmus.max_minutes, bmus.within) == (minutes, within)
    assert time.severity == severity
    assert time.monitored_index == "TIB"


def test_obstetric_sheet_states_the_gestation_it_assumes():
    """ISUOG2022MidTrimester: routine scan at 18-22 weeks; BMUS2009: TIB after 10 weeks."""
    sheet = sheet_from_file(SURVEY, habitus=("normal",))
    assert any("Gestation 20 weeks assumed" in a for a in sheet.assumptions)
    assert sheet.safety.monitored_index == "TIB"
    assert all(v.monitored_index == "TIB" for v in sheet.views)


def test_local_policy_file_adds_its_own_row(capsys):
    """Local policy shown beside the published value, never in its place (safety rules)."""
    code, out, _ = cli([UPPER, "--local", LOCAL, "--habitus", "normal", "--format", "json"],
                       capsys)
    data = json.loads(out)
    kinds = [r["kind"] for r in data["time"]["limits"]]
    assert code == 0 and kinds == ["published", "published", "local", "protocol"]
    local = data["time"]["limits"][2]
    # local-policy.yaml: exam_limits default max_minutes 45, no default TI band at 1.0
    assert (local["max_minutes"], local["source"]) == (45.0, "local-policy:local-policy.yaml")
    assert data["safety"]["local_policy"]["origin"] == "file"


def test_views_with_the_same_target_window_and_side_share_their_plans(tmp_path):
    """A view repeated under another id (the same target, window, side and context) reuses
    its plan and the sheet says so; the renal protocol's right and left kidney do not share."""
    import shutil

    import yaml
    data = yaml.safe_load(RENAL.read_text())
    shutil.copy(RENAL.parent / "probes.yaml", tmp_path / "probes.yaml")
    if (RENAL.parent / "qa.yaml").exists():           # the inventory may name its QA log
        shutil.copy(RENAL.parent / "qa.yaml", tmp_path / "qa.yaml")
    repeat = {k: v for k, v in data["views"][0].items() if k != "measurements"}
    data["views"] = [data["views"][0], dict(repeat, id="repeat-view")]
    path = tmp_path / "repeat.yaml"
    path.write_text(yaml.safe_dump(data, sort_keys=False))
    sheet = sheet_from_file(path, habitus=("normal",))
    assert sheet.views[0].classes[0] == sheet.views[1].classes[0]
    assert any("share one plan" in a for a in sheet.assumptions)
    renal = sheet_from_file(RENAL, habitus=("normal",))
    assert not any("share one plan" in a for a in renal.assumptions)


def test_probes_option_replaces_the_inventory(capsys):
    """A probe the given inventory lacks is shown as such, not silently dropped."""
    other = PROTOCOLS / "fellbrook" / "probes.yaml"
    code, out, _ = cli([UPPER, "--probes", other, "--habitus", "normal", "--format", "json"],
                       capsys)
    data = json.loads(out)
    assert code == 0
    assert data["equipment"]["probe"] == {"id": "general-curved", "label": None}
    assert data["equipment"]["inventory"] == "probes.yaml (given with --probes)"
    fellbrook = {"obstetric-curved", "vascular-curved", "vascular-linear", "superficial-linear", "obstetric-endocavitary"}
    assert all(r["probe"]["id"] in fellbrook for v in data["views"] for r in v["classes"])


# --- the habitus option and errors --------------------------------------------------------------

def test_habitus_option_keeps_who_order_and_only_the_chosen_classes(capsys):
    code, out, _ = cli([UPPER, "--habitus", "obese_3, normal,obese_3", "--format", "json"],
                       capsys)
    data = json.loads(out)
    assert code == 0
    assert [c["id"] for c in data["habitus_classes"]] == ["normal", "obese_3"]
    assert all([r["class"] for r in v["classes"]] == ["normal", "obese_3"] for v in data["views"])
    assert all(v["plot_class"] == "obese_3" for v in data["views"])


def test_unknown_habitus_class_is_one_line_listing_the_valid_ones(capsys):
    code, out, err = cli([UPPER, "--habitus", "normal,obese_4"], capsys)
    assert code == ExitCode.USAGE == 2 and out == ""
    assert err.count("\n") == 1
    assert "'obese_4'" in err and ", ".join(CLASS_IDS) in err
    with pytest.raises(InputError):
        parse_habitus(" , ")


def test_missing_protocol_file_exits_one_with_the_problem(tmp_path, capsys):
    missing = tmp_path / "absent.yaml"
    code, out, err = cli([missing], capsys)
    assert code == ExitCode.INVALID_FILE == 1 and out == ""
    assert f"{missing}: cannot read protocol file: no such file" in err


def test_invalid_protocol_lists_every_problem(capsys):
    code, out, err = cli([BROKEN], capsys)
    lines = err.splitlines()
    assert code == 1 and out == ""
    assert lines[0].startswith(f"{BROKEN}:23:5: views[0].window: unknown window")
    assert lines[1].startswith(f"{BROKEN}:28:9: views[0].fallbacks[0].window")


def test_missing_probe_inventory_or_policy_exits_one(tmp_path):
    with pytest.raises(DataError):
        sheet_from_file(UPPER, probes_path=tmp_path / "none.yaml")
    with pytest.raises(DataError):
        sheet_from_file(UPPER, local_path=tmp_path / "none.yaml")


def test_output_file_is_written_and_not_overwritten_without_force(tmp_path, capsys):
    target = tmp_path / "sheet.html"
    args = [UPPER, "--habitus", "normal", "--format", "html", "-o", target]
    assert cli(args, capsys)[:2] == (0, "")
    assert target.read_text(encoding="utf-8").startswith("<!DOCTYPE html>")
    code, _, err = cli(args, capsys)
    assert code == 2 and "--force" in err
    assert cli(args + ["--force"], capsys)[0] == 0


# --- format details -----------------------------------------------------------------------------

class _Tags(HTMLParser):
    def __init__(self) -> None:
        super().__init__()
        self.tags: list[str] = []
        self.links: list[str] = []

    def handle_starttag(self, tag, attrs):
        self.tags.append(tag)
        self.links += [v for k, v in attrs if k in ("src", "href") and v]


def test_html_is_self_contained_with_one_inline_svg_per_view(upper):
    text = render_sheet(upper, "html")
    parser = _Tags()
    parser.feed(text)
    assert parser.tags.count("svg") == len(upper.views) == 8
    assert parser.links == [] and "script" not in parser.tags
    for svg in re.findall(r"<svg.*?</svg>", text, flags=re.S):
        ElementTree.fromstring(svg)        # each plot is well-formed SVG


def test_json_keys_are_documented_in_the_module_docstring(upper):
    doc = sheet_module.__doc__
    data = sheet_to_json_data(upper)
    keys = set(data) | set(data["protocol"]) | set(data["time"]) | set(data["safety"])
    keys |= set(data["views"][0]) | set(data["views"][0]["classes"][0])
    keys |= set(data["time"]["limits"][0]) | set(data["preparation"]) | set(data["personnel"])
    keys |= set(data["equipment"])
    undocumented = sorted(k for k in keys if k not in doc)
    assert undocumented == []


def test_cli_formats_match_the_renderers_and_the_cli_loads_no_engine():
    """Building the parser must not import the plan engine (terminal UI start-up)."""
    import subprocess
    import sys

    from planner.cli.protocol import SHEET_FORMATS
    from planner.protocol.sheet import FORMATS
    assert SHEET_FORMATS == FORMATS
    code = ("import sys, planner.cli as c; c.build_parser(); "
            "sys.exit('planner.engine.plan' in sys.modules)")
    assert subprocess.run([sys.executable, "-c", code], cwd=ROOT).returncode == 0


def test_render_rejects_an_unknown_format(upper):
    with pytest.raises(InputError, match="md, html, json"):
        render_sheet(upper, "pdf")


def test_output_is_deterministic(upper):
    again = sheet_from_file(UPPER)
    for fmt in ("md", "html", "json"):
        assert render_sheet(upper, fmt) == render_sheet(again, fmt)


def test_benchmark_sheet_has_twenty_distinct_views_and_runs():
    protocol, _ = sheet_module._benchmark_protocol()
    assert len(protocol.views) == 20
    assert len({(v.target, v.window) for v in protocol.views}) == 20
    sheet_module.benchmark_sheet()

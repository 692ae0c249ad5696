"""``scanplan sweep``: one row per BMI, each the headline ``scanplan plan`` gives for that BMI."""

from __future__ import annotations

import contextlib
import io
import json

import pytest

from planner.cli import main
from planner.cli.sweep import bmi_range
from planner.cli.common import UsageError


def _run(argv: list[str]) -> tuple[int, str, str]:
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        code = main(argv)
    return code, out.getvalue(), err.getvalue()


@pytest.mark.parametrize("flags", [
    ["--target", "liver", "--condition", "steatosis:2"],
    ["--target", "kidney", "--sex", "male"],
    ["--target", "femoral-vein", "--fat-mm", "30"],
    ["--target", "fetal-heart", "--gestation-weeks", "22"],
])
def test_sweep_rows_equal_plan_json(flags):
    code, out, _ = _run(["sweep", *flags, "--bmi", "20:50:10", "--json"])
    assert code == 0
    rows = json.loads(out)
    assert [r["bmi"] for r in rows] == [20.0, 30.0, 40.0, 50.0]
    assert all(set(r) == {"bmi", "window", "probe", "start_mhz", "high_mhz", "low_mhz", "harmonic",
                          "feasible"} for r in rows)
    for row in rows:
        code, out, _ = _run(["plan", *flags, "--bmi", f"{row['bmi']:g}", "--json"])
        plan = json.loads(out)
        assert (row["window"], row["probe"], row["high_mhz"], row["low_mhz"], row["harmonic"]) == (
            plan["window"]["id"], plan["probe"]["id"], plan["frequency_mhz"]["high"],
            plan["frequency_mhz"]["low"], plan["harmonic"]["advised"])


def test_sweep_text_table_and_statement():
    code, out, _ = _run(["sweep", "--target", "aorta", "--bmi", "25:45:10"])
    assert code == 0
    assert out.splitlines()[0].split()[:3] == ["BMI", "window", "probe"]
    assert len([l for l in out.splitlines() if l.strip()[:2] in ("25", "35", "45")]) == 3
    assert "Decision support only" in out


def test_sweep_from_a_plan_file(tmp_path):
    saved = tmp_path / "p.yaml"
    assert _run(["plan", "--target", "gallbladder", "--bmi", "33", "--fat-mm", "40",
                 "--save", str(saved), "--json"])[0] == 0
    a = json.loads(_run(["sweep", "--from", str(saved), "--bmi", "30:40:5", "--json"])[1])
    b = json.loads(_run(["sweep", "--target", "gallbladder", "--fat-mm", "40", "--bmi", "30:40:5",
                         "--json"])[1])
    assert a == b


@pytest.mark.parametrize("text", ["50:20:5", "20:50:0", "20:50", "20:50:-1", "5:30:1", "20:1_0:1",
                                  "20:٣٥:1", "20:50:0.001", "x"])
def test_bad_ranges_are_one_line_usage_errors(text):
    code, out, err = _run(["sweep", "--target", "liver", "--bmi", text])
    assert code == 2 and out == ""
    assert err.count("\n") == 1 and err.startswith("scanplan: error: argument --bmi")


def test_bmi_range_includes_both_ends():
    assert bmi_range("20:30:2.5") == [20.0, 22.5, 25.0, 27.5, 30.0]
    assert bmi_range("35") == [35.0]
    with pytest.raises(UsageError):
        bmi_range("20:30:0")

"""Command line: JSON contracts hold exactly; bad input gives one line on stderr and exit 2."""

import json
import subprocess
import sys

import pytest

from planner.cli import main


def run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def test_calc_interface_json_contract_fat_muscle(capsys):
    """Fat -> muscle (Bushberg2012 textbook values, derived): R 0.0147, critical angle 66.6 deg."""
    code, out, err = run(capsys, "calc", "interface", "--z1", "1.34", "--z2", "1.71", "--c1", "1450",
                         "--c2", "1580", "--json")
    assert code == 0 and err == ""
    data = json.loads(out)
    assert set(data) == {"reflection_intensity", "transmission_intensity", "transmitted_angle_deg",
                         "critical_angle_deg"}
    assert data["reflection_intensity"] == pytest.approx(0.0147, abs=0.001)
    assert data["critical_angle_deg"] == pytest.approx(66.6, abs=0.2)
    assert data["transmitted_angle_deg"] == pytest.approx(0.0)


def test_calc_interface_beyond_critical_angle_is_null(capsys):
    code, out, _ = run(capsys, "calc", "interface", "--from", "fat", "--to", "muscle_along",
                       "--angle-deg", "80", "--json")
    data = json.loads(out)
    assert code == 0
    assert data["transmitted_angle_deg"] is None
    assert data["reflection_intensity"] == 1.0


def test_calc_interface_no_critical_angle_into_slower(capsys):
    _, out, _ = run(capsys, "calc", "interface", "--from", "muscle_across", "--to", "fat", "--json")
    assert json.loads(out)["critical_angle_deg"] is None


def test_calc_path_json_contract(capsys):
    """3 cm fat + 10 cm liver at 3.5 MHz: fat 13.2 dB round trip (derived, 0.63 dB/cm/MHz)."""
    code, out, _ = run(capsys, "calc", "path", "--layers", "fat:3,liver:10", "--frequency-mhz", "3.5",
                       "--json")
    data = json.loads(out)
    assert code == 0
    assert {"round_trip_loss_db", "true_depth_cm", "displayed_depth_cm", "depth_error_mm",
            "layers"} <= set(data)
    assert data["true_depth_cm"] == pytest.approx(13.0)
    fat = data["layers"][0]
    assert set(fat) >= {"tissue", "thickness_cm", "speed_m_per_s", "attenuation_db_per_cm_mhz", "loss_db"}
    assert fat["loss_db"] == pytest.approx(13.23, abs=0.05)
    assert data["depth_error_mm"] == pytest.approx(10 * (3 * 1540 / 1450 + 10 * 1540 / 1577 - 13), abs=0.01)


def test_calc_doppler_json_contract(capsys):
    """d 10 cm, 3 MHz, 0 deg: PRF 7700 Hz, v_max 98.8 cm/s; 100 cm/s -> 3896 Hz (derived)."""
    code, out, _ = run(capsys, "calc", "doppler", "--depth-cm", "10", "--frequency-mhz", "3",
                       "--angle-deg", "0", "--velocity-cm-s", "100", "--json")
    data = json.loads(out)
    assert code == 0
    assert data["prf_max_hz"] == pytest.approx(7700, abs=1)
    assert data["v_max_cm_s"] == pytest.approx(98.8, abs=0.1)
    assert data["doppler_shift_hz"] == pytest.approx(3896, abs=1)
    assert set(data["velocity_error_percent"]) == {"plus_5_deg", "minus_5_deg"}


@pytest.mark.parametrize("argv, fragment", [
    (["calc", "path", "--layers", "fatt:3", "--frequency-mhz", "3"], "valid tissues"),
    (["calc", "path", "--layers", "fat:-3", "--frequency-mhz", "3"], "thickness"),
    (["calc", "path", "--layers", "fat:3", "--frequency-mhz", "0"], "frequency"),
    (["calc", "path", "--layers", "fat:3", "--frequency-mhz", "nan"], "finite"),
    (["calc", "doppler", "--depth-cm", "-1", "--frequency-mhz", "3", "--angle-deg", "30"], "depth"),
    (["calc", "doppler", "--depth-cm", "5", "--frequency-mhz", "inf", "--angle-deg", "30"], "finite"),
    (["calc", "interface", "--from", "fat", "--to", "liver", "--angle-deg", "95"], "angle"),
    (["calc", "interface", "--from", "fat", "--to", "marrow"], "valid tissues"),
    (["plan", "--target", "lever"], "valid targets"),
    (["plan", "--target", "liver", "--bmi", "-3"], "BMI"),
    (["plan", "--target", "liver", "--condition", "steatosis:9"], "grade"),
    (["plan", "--target", "liver", "--window", "nowhere"], "valid windows"),
    (["plan"], "required"),
    (["frobnicate"], "invalid choice"),
])
def test_bad_input_one_line_exit_2(capsys, argv, fragment):
    code, out, err = run(capsys, *argv)
    assert code == 2
    assert out == ""
    lines = err.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("scanplan: error:")
    assert fragment.lower() in lines[0].lower()
    assert "Traceback" not in err


def test_plan_text_and_json(capsys):
    code, out, _ = run(capsys, "plan", "--target", "kidney", "--bmi", "38")
    assert code == 0 and "MHz" in out and "local protocols" in out
    code, out, _ = run(capsys, "plan", "--target", "kidney", "--bmi", "38", "--json")
    data = json.loads(out)
    assert data["target"]["id"] == "kidney"


def test_targets_json_list(capsys):
    code, out, _ = run(capsys, "targets", "--json")
    rows = json.loads(out)
    assert code == 0 and len(rows) >= 30
    assert all({"id", "name", "reflector"} <= set(r) for r in rows)


def test_python_dash_m_planner_works():
    proc = subprocess.run([sys.executable, "-m", "planner", "calc", "doppler", "--depth-cm", "5",
                           "--frequency-mhz", "2", "--angle-deg", "60", "--json"],
                          capture_output=True, text=True, timeout=60)
    assert proc.returncode == 0
    assert json.loads(proc.stdout)["prf_max_hz"] == pytest.approx(15400, abs=1)


def test_import_hygiene_no_textual():
    """`import planner` and every non-UI module load without Textual."""
    code = ("import sys, planner, planner.cli, planner.engine, planner.safety, planner.report, "
            "planner.library.targets, planner.engine.sweep, planner.cli.calc, planner.cli.plan, "
            "planner.cli.protocol, planner.cli.targets, planner.cli.ui, planner.numbers; "
            "from planner.cli import build_parser; build_parser(); "
            "assert not any(m == 'textual' or m.startswith('textual.') for m in sys.modules), "
            "[m for m in sys.modules if m.startswith('textual')]")
    proc = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=60)
    assert proc.returncode == 0, proc.stderr

"""Probe QA calibration: phantom depth of penetration -> each probe's signal budget, the QA
checks and trend, ``scanplan qa``, ``plan --qa`` and the inventory's ``qa_log``."""

from __future__ import annotations

import io
import json
import math
import shutil
from contextlib import redirect_stderr, redirect_stdout
from pathlib import Path

import numpy as np
import pytest

from planner.cli import main
from planner.physics import phantom

ROOT = Path(__file__).resolve().parents[1]
HARBOURSIDE = ROOT / "protocols" / "harbourside"


def run(*argv: str) -> tuple[int, str, str]:
    out, err = io.StringIO(), io.StringIO()
    with redirect_stdout(out), redirect_stderr(err):
        code = main(list(argv))
    return code, out.getvalue(), err.getvalue()


def write_log(path: Path, rows: list[tuple[str, str, float, float, float]]) -> Path:
    lines = ["schema_version: 1", "measurements:"]
    for probe, date, f, a, dop in rows:
        lines.append(f"  - {{probe: {probe}, date: {date}, frequency_mhz: {f}, "
                     f"phantom_attenuation_db_per_cm_mhz: {a}, depth_of_penetration_cm: {dop}}}")
    path.write_text("\n".join(lines) + "\n")
    return path


# -- the phantom model ---------------------------------------------------------------------
def test_narrowband_budget_is_the_hand_product():
    """Narrowband: D = 2 alpha0 f DOP (the power-law definition; 2 x 0.5 x 3.5 x 16.5 = 57.75 dB)."""
    assert phantom.budget_from_penetration_db(16.5, 0.5, 3.5, 0.0) == pytest.approx(57.75, abs=1e-12)


def test_broadband_budget_matches_the_gaussian_downshift_closed_form():
    """y = 1: L = 2 a0 f0 z - 10 log10(e) 8 alpha^2 z^2 sigma^2 (Kuc 1984 Gaussian spectrum:
    the received spectrum is the emitted Gaussian shifted down by 4 alpha z sigma^2)."""
    f0, bw, a0, z = 3.5, 0.6, 0.5, 16.5
    s = bw * f0 / (2.0 * math.sqrt(2.0 * math.log(2.0)))
    sigma2 = s * s / 2.0
    alpha = a0 / (20.0 * math.log10(math.e))                     # Np/cm/MHz, one way
    expected = 2 * a0 * f0 * z - 10 * math.log10(math.e) * 8 * alpha ** 2 * z ** 2 * sigma2
    assert phantom.budget_from_penetration_db(z, a0, f0, bw) == pytest.approx(expected, abs=0.02)


@pytest.mark.parametrize("f, a, dop, bw", [(3.5, 0.5, 16.5, 0.6), (2.5, 0.7, 17.0, 0.6),
                                            (7.5, 0.5, 7.4, 0.75), (12.0, 0.5, 4.0, 0.4),
                                            (5.0, 0.7, 9.0, 0.0)])
def test_the_derived_budget_reproduces_the_phantom_depth_exactly(f, a, dop, bw):
    """Round trip: the budget derived from a DOP, used by the same model, gives that DOP."""
    budget = phantom.budget_from_penetration_db(dop, a, f, bw)
    assert phantom.penetration_cm(budget, a, f, bw) == pytest.approx(dop, abs=1e-9)


def test_the_engine_ceiling_solver_reaches_the_measured_frequency_at_the_phantom_depth():
    """The engine's own reach solver (reach.ceilings_mhz), given the phantom layer and the
    derived budget, puts the ceiling at the measured frequency: the model the plans use."""
    from planner.engine.reach import ceilings_mhz
    from planner.physics.tissues import get_tissue
    tm = get_tissue("tm_phantom_05")
    f, dop, bw = 3.5, 16.5, 0.6
    budget = float(phantom.budget_from_penetration_db(dop, tm.attenuation_db_per_cm_mhz, f, bw,
                                                      tm.attenuation_exponent))
    k = np.array([[2 * tm.attenuation_db_per_cm_mhz * dop]])
    y = np.array([tm.attenuation_exponent])
    ceil_f, _ = ceilings_mhz((k, y), (k, y), np.array([budget]), np.array([budget]),
                             [(bw, 0.0, 0.0)])
    assert float(ceil_f[0, 0]) == pytest.approx(f, abs=2e-3)


# -- the file kind -------------------------------------------------------------------------
def test_a_bad_log_reports_every_problem_with_file_key_and_line(tmp_path):
    path = tmp_path / "qa.yaml"
    path.write_text("schema_version: 1\nmeasurements:\n"
                    "  - {probe: a, date: 2026-02-30, frequency_mhz: 3.5,\n"
                    "     phantom_attenuation_db_per_cm_mhz: 0.5, depth_of_penetration_cm: 16}\n"
                    "  - probe: b\n    date: 2026-03-01\n    frequency_mhz: '3.5'\n"
                    "    phantom_attenuation_db_per_cm_mhz: 2.0\n    depth_of_penetration_cm: 12\n"
                    "    colour: red\n")
    code, out, err = run("qa", str(path))
    assert code == 1
    text = out + err
    for key, line in (("measurements[0].date", 3), ("measurements[1].frequency_mhz", 7),
                      ("measurements[1].phantom_attenuation_db_per_cm_mhz", 8),
                      ("measurements[1].colour", 10)):
        hit = next((ln for ln in text.splitlines() if f" {key}:" in ln), None)
        assert hit is not None, (key, text)
        assert f"{path}:{line}:" in hit, hit


def test_schema_lists_the_qa_kind_and_it_validates_the_demo_logs():
    import jsonschema           # a declared test dependency: missing must fail, not skip
    from planner.yamlio import load_user_yaml
    code, out, _ = run("schema", "qa")
    assert code == 0
    schema = json.loads(out)
    for log in ("harbourside", "fellbrook"):
        data = load_user_yaml(ROOT / "protocols" / log / "qa.yaml", kind="qa").data
        jsonschema.validate(data, schema)


# -- QA checks and trend -------------------------------------------------------------------
def test_a_fall_of_more_than_one_centimetre_is_flagged(tmp_path):
    """Action level 1 cm from baseline (Goodsitt 1998; service-manual practice)."""
    log = write_log(tmp_path / "qa.yaml", [("abdominal-curved", "2026-01-01", 3.5, 0.5, 18.0),
                                           ("abdominal-curved", "2026-04-01", 3.5, 0.5, 17.6),
                                           ("abdominal-curved", "2026-07-01", 3.5, 0.5, 16.8)])
    code, out, _ = run("qa", str(log), "--json")
    assert code == 0
    data = json.loads(out)
    (probe,) = data["probes"]
    assert probe["fall_cm"] == pytest.approx(1.2, abs=0.01)
    assert probe["trend_cm_per_month"] < 0
    assert any("fell 1.2 cm" in f for f in probe["flags"])
    assert data["generated_by"].startswith("scanplan ") and data["generated_at"].endswith("Z")


def test_a_stable_probe_has_no_flag_and_a_fall_within_the_level_none(tmp_path):
    log = write_log(tmp_path / "qa.yaml", [("abdominal-curved", "2026-01-01", 3.5, 0.5, 18.0),
                                           ("abdominal-curved", "2026-07-01", 3.5, 0.5, 17.2)])
    data = json.loads(run("qa", str(log), "--json")[1])
    assert data["flags"] == []


def test_a_same_day_outlier_and_an_implausible_value_are_flagged_and_not_used(tmp_path):
    log = write_log(tmp_path / "qa.yaml", [("general-linear", "2026-10-01", 7.5, 0.5, 7.4),
                                           ("general-linear", "2026-10-01", 10.0, 0.5, 5.6),
                                           ("general-linear", "2026-10-01", 5.0, 0.5, 14.5),
                                           ("abdominal-curved", "2026-10-01", 3.5, 0.5, 3.0)])
    data = json.loads(run("qa", str(log), "--json")[1])
    linear, curved = data["probes"]
    used = [m["used"] for m in linear["measurements"]]
    assert used == [True, True, False]
    assert linear["measurements"][2]["line"] == 5
    assert linear["budget_db"] == pytest.approx(
        float(np.median([m["budget_db"] for m in linear["measurements"][:2]])), abs=0.06)
    assert curved["budget_db"] is None and not curved["measurements"][0]["used"]
    assert any("limit 50 %" in f for f in curved["flags"])


def test_a_wide_pulse_whose_default_reach_is_unbounded_is_still_calibrated(tmp_path):
    """75 % bandwidth at 3.5 MHz in 0.5 dB/cm/MHz: the model's loss never reaches 60 dB within
    100 cm (penetration inf), yet a measured depth gives a finite budget that is used."""
    assert math.isinf(float(phantom.penetration_cm(60.0, 0.5, 3.5, 0.75)))
    inv = tmp_path / "probes.yaml"
    inv.write_text((HARBOURSIDE / "probes.yaml").read_text().replace(
        "    harmonic: true\n", "    harmonic: true\n    bandwidth_fraction: 0.75\n", 1))
    log = write_log(tmp_path / "qa.yaml", [("general-curved", "2026-10-01", 3.5, 0.5, 16.5)])
    data = json.loads(run("qa", str(log), "--probes", str(inv), "--json")[1])
    (probe,) = data["probes"]
    assert probe["bandwidth_fraction"] == 0.75 and probe["flags"] == []
    assert probe["measurements"][0]["predicted_cm"] is None
    assert probe["budget_db"] == pytest.approx(
        float(phantom.budget_from_penetration_db(16.5, 0.5, 3.5, 0.75)), abs=0.05)


# -- plans ---------------------------------------------------------------------------------
def _plan(*argv: str) -> dict:
    code, out, err = run("plan", "--target", "liver", "--bmi", "35", "--json", *argv)
    assert code == 0, err
    return json.loads(out)


def test_qa_sets_budget_db_and_says_where_it_came_from(tmp_path):
    log = write_log(tmp_path / "qa.yaml", [("abdominal-curved", "2026-10-01", 3.5, 0.5, 16.5)])
    base, qa = _plan(), _plan("--qa", str(log))
    expected = round(float(phantom.budget_from_penetration_db(16.5, 0.5, 3.5, 0.6)), 1)
    assert base["budget_db"] == 60.0
    assert qa["budget_db"] == pytest.approx(expected)
    text = " ".join(qa["assumptions"])
    assert f"budget {expected:g} dB from QA on 2026-10-01, probe abdominal-curved" in text
    assert qa["frequency_mhz"]["high"] < base["frequency_mhz"]["high"]   # a smaller budget


def test_an_inventory_names_its_qa_log_relative_to_itself(tmp_path):
    shutil.copy(HARBOURSIDE / "probes.yaml", tmp_path / "probes.yaml")
    shutil.copy(HARBOURSIDE / "qa.yaml", tmp_path / "qa.yaml")
    with open(tmp_path / "probes.yaml", "a") as fh:
        fh.write("qa_log: qa.yaml\n")
    report = json.loads(run("qa", str(tmp_path / "qa.yaml"), "--probes",
                            str(tmp_path / "probes.yaml"), "--json")[1])
    budgets = {p["probe"]: (p["budget_db"], p["date"]) for p in report["probes"]}
    for argv in (("--bmi", "35"), ("--bmi", "22", "--window", "right-subcostal")):
        code, out, err = run("plan", "--target", "liver", "--json", "--probes",
                             str(tmp_path / "probes.yaml"), *argv)
        assert code == 0, err
        plan = json.loads(out)
        probe = plan["probe"]["id"]
        budget, date = budgets[probe]
        assert plan["budget_db"] == budget
        assert any(f"budget {budget:g} dB from QA on {date}, probe {probe}" in a
                   for a in plan["assumptions"])


def test_a_qa_warning_about_the_chosen_probe_is_a_plan_finding(tmp_path):
    log = write_log(tmp_path / "qa.yaml", [("abdominal-curved", "2026-01-01", 3.5, 0.5, 18.0),
                                           ("abdominal-curved", "2026-07-01", 3.5, 0.5, 16.5)])
    plan = _plan("--qa", str(log))
    assert plan["probe"]["id"] == "abdominal-curved"
    (found,) = [f for f in plan["findings"] if f["code"] == "qa_warning"]
    assert "fell 1.5 cm" in found["message"] and found["severity"] == "caution"


def test_the_protocol_sheet_uses_the_inventorys_qa_log(tmp_path):
    from planner.protocol.sheet import sheet_from_file
    for name in ("probes.yaml", "qa.yaml", "thyroid.yaml"):
        shutil.copy(HARBOURSIDE / name, tmp_path / name)
    with open(tmp_path / "probes.yaml", "a") as fh:
        fh.write("qa_log: qa.yaml\n")
    sheet = sheet_from_file(tmp_path / "thyroid.yaml", habitus=("normal",))
    assert any("signal budget from its QA log qa.yaml" in a for a in sheet.assumptions)


# -- prior-exam calibration ----------------------------------------------------------------
def _liver_assessment(bmi: float = 30.0):
    from planner.body.patient import Patient
    from planner.engine.plan import assess_windows, rank_assessments
    from planner.library.probes import default_inventory
    from planner.library.targets import load_library
    target = load_library().get("liver")
    ranked, _ = rank_assessments(assess_windows(Patient.from_inputs(bmi=bmi), target,
                                                list(target.windows), default_inventory(),
                                                target.windows[0]))
    return ranked[0], target


def test_the_fade_model_is_the_hand_sum_for_a_narrowband_pulse():
    """Narrowband, no aberration, no interfaces: the fade is where sum 2 alpha_i t_i f^y_i
    (wall) + 2 s alpha_liver (D - top) f^y = budget, solved by hand."""
    from types import SimpleNamespace

    from planner.engine.prior_exam import fade_depth_cm
    a, target = _liver_assessment()
    bare = SimpleNamespace(stack=a.stack, arrays=a.arrays, sigma_ns=0.0, bandwidth_fraction=0.0,
                           low_edge_mhz=0.0, interface_loss_db=0.0, best=None)
    f, s, budget = 3.5, 1.3, 60.0
    wall = sum(2 * lay.tissue.attenuation_db_per_cm_mhz * lay.thickness_cm
               * f ** lay.tissue.attenuation_exponent for lay in a.stack.layers[:-1])
    liver = a.stack.layers[-1].tissue
    top = sum(lay.thickness_cm for lay in a.stack.layers[:-1])
    expected = top + (budget - wall) / (2 * s * liver.attenuation_db_per_cm_mhz
                                        * f ** liver.attenuation_exponent)
    assert fade_depth_cm(bare, target, f, s, budget_db=budget) == pytest.approx(expected, abs=1e-6)


def test_the_prior_solve_recovers_a_published_steatosis_attenuation():
    """Construct the fade of a liver whose attenuation slope at 3.5 MHz is 0.80 dB/cm/MHz
    (moderate steatosis; AttenuationSteatosisReview2022, the table's liver_steatotic value) and
    solve it back through the CLI."""
    from planner.engine.prior_exam import fade_depth_cm
    a, target = _liver_assessment()
    f = 3.5
    liver = a.stack.layers[-1].tissue
    scale = 0.80 / (liver.attenuation_db_per_cm_mhz * f ** (liver.attenuation_exponent - 1.0))
    fade = fade_depth_cm(a, target, f, scale)
    plan = json.loads(run("plan", "--target", "liver", "--bmi", "30", "--json",
                          "--prior-frequency-mhz", str(f), "--prior-fade-cm", repr(fade))[1])
    found = next(x for x in plan["findings"] if x["code"] == "prior_exam_calibration")
    assert found["values"]["effective_db_per_cm_mhz"] == pytest.approx(0.80, abs=1e-3)
    assert "moderate to severe steatosis" in found["message"]
    assert any("scaled by" in s for s in plan["assumptions"])


def test_a_fade_deeper_than_the_model_allows_is_refused():
    code, _, err = run("plan", "--target", "liver", "--bmi", "30", "--prior-frequency-mhz", "5",
                       "--prior-fade-cm", "39")
    assert code == 2 and "deeper than the model allows" in err and err.count("\n") == 1


@pytest.mark.parametrize("argv, text", [
    (("--prior-fade-cm", "14"), "needs the prior frequency (--prior-frequency-mhz)"),
    (("--prior-frequency-mhz", "3.5"), "needs the prior fade depth (--prior-fade-cm)"),
    (("--prior-frequency-mhz", "3.5", "--prior-fade-cm", "1"), "not below the top of the liver"),
])
def test_prior_flag_errors_are_one_line_exit_2(argv, text):
    code, out, err = run("plan", "--target", "liver", "--bmi", "30", *argv)
    assert code == 2 and out == "" and text in err and err.count("\n") == 1


def test_cli_exit_codes(tmp_path):
    assert run("qa", str(tmp_path / "missing.yaml"))[0] in (1, 2)
    assert run("qa")[0] == 2
    assert run("qa", str(HARBOURSIDE / "qa.yaml"), "--probes", str(HARBOURSIDE / "probes.yaml"))[0] == 0
    assert run("plan", "--target", "liver", "--qa", str(tmp_path / "missing.yaml"))[0] in (1, 2)


def test_the_form_carries_the_qa_log_and_the_prior_exam_of_a_plan_file():
    from planner.planfile import PlanInputs
    from planner.tui.compute import form_values, parse_form
    inputs = PlanInputs(target_id="liver", bmi=30.0, qa_path=str(HARBOURSIDE / "qa.yaml"),
                        probes_path=str(HARBOURSIDE / "probes.yaml"),
                        prior_frequency_mhz=3.5, prior_fade_cm=14.0)
    back, problems = parse_form(form_values(inputs))
    assert problems == {} and back == inputs


def test_sessions_at_other_frequencies_stay_finite_for_a_wide_pulse(tmp_path):
    """A later session at another frequency whose budget the baseline's conditions never use
    up (75 % bandwidth) still gets a finite depth-of-penetration equivalent (JSON has no inf)."""
    inv = tmp_path / "probes.yaml"
    inv.write_text((HARBOURSIDE / "probes.yaml").read_text().replace(
        "    harmonic: true\n", "    harmonic: true\n    bandwidth_fraction: 0.75\n", 1))
    log = write_log(tmp_path / "qa.yaml", [("general-curved", "2026-01-01", 2.0, 0.5, 22.0),
                                           ("general-curved", "2026-07-01", 10.0, 0.5, 24.0)])
    later = float(phantom.budget_from_penetration_db(24.0, 0.5, 10.0, 0.75))
    assert math.isinf(float(phantom.penetration_cm(later, 0.5, 2.0, 0.75)))   # the case meant
    code, out, err = run("qa", str(log), "--probes", str(inv), "--json")
    assert code == 0, err
    (probe,) = json.loads(out)["probes"]
    assert all(math.isfinite(s["dop_equivalent_cm"]) for s in probe["sessions"])
    assert probe["sessions"][1]["dop_equivalent_cm"] > probe["sessions"][0]["dop_equivalent_cm"]


# -- the scatter of a probe's own log -----------------------------------------------------
def test_the_pooled_scatter_worked_by_hand():
    """Sessions (60, 62, 64) and (50, 52) dB: deviations from the session means (-2, 0, 2) and
    (-1, 1), squared sum 10 over 2 + 1 = 3 degrees of freedom: sqrt(10 / 3) = 1.826 dB. One
    measurement per session has no degree of freedom."""
    from planner.engine.qa_budget import budget_scatter_db
    sd, dof = budget_scatter_db([[60.0, 62.0, 64.0], [50.0, 52.0]])
    assert dof == 3 and sd == pytest.approx(math.sqrt(10.0 / 3.0), abs=1e-12)
    assert budget_scatter_db([[60.0], [58.0], [57.0]]) == (None, 0)
    assert budget_scatter_db([[60.0, 61.0]]) == (None, 1)


def _repeat_log(tmp_path: Path, dops: list[float]) -> Path:
    return write_log(tmp_path / "qa.yaml",
                     [("abdominal-curved", "2026-10-01", 3.5, 0.5, d) for d in dops])


def test_a_scattered_log_widens_its_probes_budget_spread(tmp_path):
    """Three repeats at 15.6, 16.5 and 17.4 cm (within the 1 cm session limit of their median)
    scatter by several dB: the probe's spread is the pooled s.d. of the three derived budgets,
    the plan draws with it, and the budget then explains more of the reach spread than with
    close repeats (16.4, 16.5, 16.6 cm), whose scatter falls below the reading precision."""
    wide = json.loads(run("qa", str(_repeat_log(tmp_path, [15.6, 16.5, 17.4])), "--json")[1])
    probe = next(p for p in wide["probes"] if p["probe"] == "abdominal-curved")
    budgets = [m["budget_db"] for m in probe["measurements"]]
    mean = sum(budgets) / 3
    by_hand = math.sqrt(sum((b - mean) ** 2 for b in budgets) / 2)
    assert probe["scatter_dof"] == 2 and probe["scatter_db"] == pytest.approx(by_hand, abs=0.01)
    assert probe["budget_sd_db"] == pytest.approx(max(by_hand, 1.4), abs=0.01) and by_hand > 1.4
    wide_plan = _plan("--qa", str(tmp_path / "qa.yaml"))
    close = json.loads(run("qa", str(_repeat_log(tmp_path, [16.4, 16.5, 16.6])), "--json")[1])
    probe = next(p for p in close["probes"] if p["probe"] == "abdominal-curved")
    assert probe["scatter_db"] < 1.4 and probe["budget_sd_db"] == pytest.approx(1.4)
    close_plan = _plan("--qa", str(tmp_path / "qa.yaml"))

    def budget_share(plan):
        return next(d["explains"] for d in plan["frequency_mhz"]["drivers"] if d["input"] == "budget")
    assert budget_share(wide_plan) > budget_share(close_plan)

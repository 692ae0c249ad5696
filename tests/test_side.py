"""Paired targets know their side: windows and their ranking depend on it (kidney: right
through the liver, supine or in left decubitus; left coronal through the spleen; prone when
those fail; KidneyWindowsTeaching, AIUMAbdomen2017)."""

from __future__ import annotations

import pytest

from planner.body.patient import Patient
from planner.engine import PlanRequest, make_plan
from planner.errors import InputError


def _plan(target, bmi, side=None, window=None):
    return make_plan(PlanRequest(target, Patient.from_inputs(bmi=bmi), side=side, window_id=window))


@pytest.mark.parametrize("bmi", [21, 45])
def test_right_and_left_kidney_use_their_own_windows(bmi):
    right, left = _plan("kidney", bmi, "right"), _plan("kidney", bmi, "left")
    assert right.inputs.side == "right" and left.inputs.side == "left"
    assert "spleen" not in right.window.id and "liver" not in left.window.id
    assert {w.id for w in right.windows} != {w.id for w in left.windows}


def test_no_side_plans_the_right_and_says_so():
    plan = _plan("kidney", 30)
    assert plan.inputs.side == "right"
    assert any("right kidney is planned" in a and "no side given" in a for a in plan.assumptions)
    assert all("spleen" not in w.id for w in plan.windows)


def test_a_side_for_an_unpaired_target_and_a_window_of_the_other_side_are_refused():
    with pytest.raises(InputError, match="not a paired structure"):
        _plan("liver", 25, "left")
    with pytest.raises(InputError, match="serves the left"):
        _plan("kidney", 25, "right", "left-intercostal-through-spleen")


def test_practice_order_breaks_close_losses():
    """Gallbladder: the subcostal route is tried first when its loss is within 6 dB of the
    intercostal one (AIUMAbdomen2017: supine subcostal in deep inspiration first)."""
    assert _plan("gallbladder", 21).window.id == "right-subcostal"


def test_a_window_without_a_side_implies_the_window_side():
    """A left-kidney window named without --side plans the left kidney and says so (a
    coronal window through the spleen serves the left kidney; KidneyWindowsTeaching)."""
    plan = _plan("kidney", 30, window="left-intercostal-through-spleen")
    assert plan.inputs.side == "left"
    assert any("left kidney is planned" in a and "left-intercostal-through-spleen" in a
               for a in plan.assumptions)


def test_a_paired_target_whose_windows_serve_both_sides_plans_no_side_unless_given():
    """The Achilles tendon is scanned the same way on either leg (one posterior window): no
    side is assumed, and a given one only names the plan."""
    plain, left = _plan("achilles-tendon", 30), _plan("achilles-tendon", 30, "left")
    assert plain.inputs.side is None and plain.target_title == "Achilles tendon"
    assert not any("is planned" in a for a in plain.assumptions)
    assert left.target_title == "Left Achilles tendon"
    assert left.frequency_mhz == plain.frequency_mhz and left.window.id == plain.window.id


def test_the_renal_sheet_names_each_kidney_by_its_side():
    """The example renal protocol scans both kidneys (its scope): the sheet's rows name the
    right and the left kidney, not one unsided kidney twice."""
    from pathlib import Path

    from planner.protocol import load_protocol
    from planner.protocol.sheet import build_sheet

    root = Path(__file__).resolve().parents[1] / "protocols" / "harbourside"
    sheet = build_sheet(load_protocol(root / "renal-tract.yaml"), habitus=("normal",))
    names = [view.target.name for view in sheet.views if view.target.id == "kidney"]
    assert names == ["Right kidney", "Left kidney"]


def test_a_sheet_plans_each_side_of_a_paired_view_on_its_own(tmp_path):
    """Two views of one paired target through a window serving both sides (the carotid's
    window), one right and one left: each view's plan is made for its own side (its title
    names that side), not the first view's plan reused."""
    import shutil
    from pathlib import Path

    import yaml

    from planner.protocol import load_protocol
    from planner.protocol.sheet import build_sheet

    root = Path(__file__).resolve().parents[1] / "protocols" / "fellbrook"
    data = yaml.safe_load((root / "carotid-doppler.yaml").read_text())
    shutil.copy(root / "probes.yaml", tmp_path / "probes.yaml")
    view = next(v for v in data["views"] if v["target"] == "carotid-bifurcation")
    view = {k: v for k, v in view.items() if k not in ("measurements", "side")}
    data["views"] = [dict(view, id="right-bifurcation", side="right"),
                     dict(view, id="left-bifurcation", side="left")]
    path = tmp_path / "both-sides.yaml"
    path.write_text(yaml.safe_dump(data, sort_keys=False))
    sheet = build_sheet(load_protocol(path), habitus=("normal",))
    titles = [p.target_title for p in sheet.plot_plans]
    assert titles[0].startswith("Right") and titles[1].startswith("Left"), titles

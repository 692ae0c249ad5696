"""The 'Large habitus' label on a protocol sheet: listed only in the class where the habitus
changes that view's set-up (probe, harmonic imaging, detail reached) from the next lighter
class, and said to hold for the heavier classes too; every plan itself still carries it
from BMI 30 on trunk routes (Heinitz2023; NHSGGC468)."""

from __future__ import annotations

from pathlib import Path

from planner.protocol.sheet import sheet_from_file
from planner.protocol.sheet_rows import HABITUS_CODE

ROOT = Path(__file__).resolve().parents[1]


def _setup(row) -> tuple:
    return (row.probe.id if row.probe else None, row.harmonic.advised, row.band_mhz.feasible)


def _changed(row, previous) -> bool:
    """A different set-up: probe, harmonic, feasibility, or a start moved by half a MHz or more
    (about one step of a scanner's frequency control)."""
    a, b = row.band_mhz.start, previous.band_mhz.start
    moved = (a is None) != (b is None) or (a is not None and b is not None and abs(a - b) >= 0.5 - 1e-9)
    return _setup(row) != _setup(previous) or moved


def test_large_habitus_is_listed_where_it_changes_the_view():
    sheet = sheet_from_file(ROOT / "protocols" / "harbourside" / "upper-abdomen.yaml")
    listed = 0
    for view in sheet.views:
        rows = view.classes
        for previous, row in zip(rows, rows[1:]):
            has = any(w.code == HABITUS_CODE for w in row.warnings)
            if row.bmi < 30:
                assert not has
            elif _changed(row, previous):
                listed += has
                label = next((w.title for w in row.warnings if w.code == HABITUS_CODE), "")
                assert not has or label.endswith("this class and heavier")
            else:
                assert not has, (view.id, row.class_id)
    assert listed > 0


def test_every_obese_plan_still_carries_the_caution():
    from planner.engine import PlanRequest, make_plan
    from planner.body.patient import Patient
    plan = make_plan(PlanRequest("liver", Patient.from_inputs(bmi=45)))
    assert HABITUS_CODE in [f.code for f in plan.findings]

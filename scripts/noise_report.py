#!/usr/bin/env python3
"""Noise in the main findings: how many of them a practitioner would skip.

Plans 13 targets at BMI 21 and 45 (26 plans: the review set of liver, gallbladder, kidney,
aorta, thyroid, carotid with Doppler, fetal head and heart at 20 weeks, a first-trimester
embryo, Achilles tendon, appendix, femoral vein and pancreas) and sorts every main finding
and main safety item by a rubric of items practitioners said they skip (the review of the
tool as an experienced sonographer, an educator and a department lead would read it):

- ``sub-millimetre``: a sound-speed depth error under 1 mm at the target and in the fat;
- ``constant``: the regulatory output ceilings without an expected MI, the scan-time table
  without an expected TI (the same on every plan);
- ``tilt-irrelevant``: a specular tilt tolerance on a target that is not a mirror-like
  reflector (a kidney capsule, an embryo's skin line);
- ``fat-irrelevant``: a limited-exam, pannus, body-wall or near-field-clutter statement where the fat at
  the window is under the trunk threshold (an endocavitary, neck or distal-limb route);
- ``negligible``: a wall-aberration figure under 1 dB, or a likely condition that does not
  change the band.

Everything else counts as acted on. Prints each plan's main items with the skip reason, and
the totals; ``--json`` for machine output. Exit 0.

Usage: python scripts/noise_report.py [--json]
"""

from __future__ import annotations

import argparse
import json
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

TARGETS = ("liver", "gallbladder", "kidney", "aorta", "thyroid", "carotid-bifurcation",
           "fetal-head", "fetal-heart", "embryo", "achilles-tendon", "appendix", "femoral-vein",
           "pancreas")
BMIS = (21.0, 45.0)
WEEKS = {"fetal-head": 20.0, "fetal-heart": 20.0, "embryo": 8.0}
"""Gestation of the obstetric review cases (mid-trimester survey; first-trimester embryo)."""
DOPPLER = {"carotid-bifurcation"}
LIMIT = 0.10
"""Largest share of main items a practitioner would skip (the product's quality bar)."""


def skip_reason(finding, plan, fat_threshold_mm: float) -> str | None:
    """The rubric's reason to skip a main item, or None when a practitioner acts on it."""
    v, code = finding.values, finding.code
    if code == "artefact.sound_speed":
        if max(abs(v.get("depth_error_mm", 0.0)), abs(v.get("fat_error_mm", 0.0))) < 1.0:
            return "sub-millimetre"
    if code == "safety.output_ceiling" and v.get("expected_mi") is None:
        return "constant"
    if code == "safety.scan_time" and v.get("expected_ti") is None:
        return "constant"
    if code == "tilt.specular" and plan.target.reflector != "specular":
        return "tilt-irrelevant"
    fat = next((lay.thickness_cm * 10 for lay in plan.layers if lay.role == "subcutaneous_fat"), 0.0)
    if code in ("habitus.limited_exam", "habitus.pannus", "habitus.wall") and fat < fat_threshold_mm \
            and not v.get("measured"):
        return "fat-irrelevant"
    text = (finding.message + " " + finding.explanation).lower()
    if code.startswith("harmonic") and "clutter" in text and fat < fat_threshold_mm and "bmi" in text:
        return "fat-irrelevant"
    if code == "artefact.wall_aberration" and v.get("aberration_db", 0.0) < 1.0:
        return "negligible"
    if code == "condition.likely_steatosis" and not v.get("band_changes", True):
        return "negligible"
    return None


def report() -> dict:
    from planner.body.patient import Patient
    from planner.engine import PlanRequest, make_plan
    from planner.engine.habitus_rules import limited_exam_fat_mm

    threshold = float(limited_exam_fat_mm())
    plans, total, skipped = [], 0, 0
    for target in TARGETS:
        for bmi in BMIS:
            plan = make_plan(PlanRequest(target, Patient.from_inputs(bmi=bmi, gestation_weeks=WEEKS.get(target)),
                                         doppler=target in DOPPLER))
            items = []
            for f in plan.findings + plan.safety:
                if f.relevance != "main":
                    continue
                reason = skip_reason(f, plan, threshold)
                items.append({"code": f.code, "title": f.title, "skip": reason})
                total += 1
                skipped += reason is not None
            plans.append({"target": target, "bmi": bmi, "main": items})
    share = skipped / total if total else 0.0
    return {"plans": plans, "main_items": total, "skipped": skipped, "share": round(share, 4),
            "limit": LIMIT, "met": share <= LIMIT}


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--json", action="store_true")
    args = parser.parse_args(argv)
    data = report()
    if args.json:
        print(json.dumps(data, indent=2))
        return 0
    for p in data["plans"]:
        print(f"{p['target']} BMI {p['bmi']:g}")
        for item in p["main"]:
            flag = f"  SKIP ({item['skip']})" if item["skip"] else ""
            print(f"  - {item['title']} [{item['code']}]{flag}")
    print(f"\nmain items {data['main_items']}, a practitioner would skip {data['skipped']} "
          f"({data['share']:.1%}; limit {LIMIT:.0%}): {'met' if data['met'] else 'NOT MET'}")
    return 0


if __name__ == "__main__":
    sys.exit(main())

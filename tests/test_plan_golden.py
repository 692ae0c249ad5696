"""Golden outputs of ``scanplan plan``: the JSON contract and the text, Markdown and HTML plans.

The JSON files pin the ``plan --json`` contract key for key and byte for byte (adding keys is
allowed, renaming or dropping one is not); the text, Markdown and HTML files pin the renderers.
Golden files live in ``tests/golden/plans/``. After an intended change, regenerate with::

    SCANPLAN_UPDATE_GOLDEN=1 .venv/bin/python -m pytest tests/test_plan_golden.py

and review the diff. Every value here is a regression, not a published value.
"""

from __future__ import annotations

import contextlib
import io
import os
from pathlib import Path

import pytest

from planner.cli import main

ROOT = Path(__file__).resolve().parents[1]
GOLDEN = ROOT / "tests" / "golden" / "plans"
UPDATE = os.environ.get("SCANPLAN_UPDATE_GOLDEN", "") not in ("", "0")
FELLBROOK_PROBES = str(ROOT / "protocols" / "fellbrook" / "probes.yaml")
LOCAL_POLICY = str(ROOT / "protocols" / "examples" / "local-policy.yaml")

CASES: dict[str, list[str]] = {
    "liver-bmi22": ["--target", "liver", "--bmi", "22"],
    "liver-bmi45-steatosis": ["--target", "liver", "--bmi", "45", "--condition", "steatosis:2",
                              "--sex", "female"],
    "gallbladder-bmi32-draft": ["--target", "gallbladder", "--bmi", "32", "--draft"],
    "kidney-wall": ["--target", "kidney", "--wall-mm", "40", "--condition", "ascites"],
    "pancreas-bmi50": ["--target", "pancreas", "--bmi", "50", "--condition", "bowel_gas:2"],
    "aorta-doppler-bmi38": ["--target", "aorta", "--bmi", "38", "--doppler"],
    "carotid-doppler": ["--target", "carotid-bifurcation", "--bmi", "27", "--doppler"],
    "renal-artery-doppler-bmi42": ["--target", "renal-artery", "--bmi", "42", "--doppler"],
    "portal-vein-doppler-probes": ["--target", "portal-vein", "--bmi", "30", "--doppler",
                                   "--probes", FELLBROOK_PROBES],
    "umbilical-artery-doppler": ["--target", "umbilical-artery", "--bmi", "31",
                                 "--gestation-weeks", "28", "--doppler"],
    "fetal-mca-doppler-local": ["--target", "fetal-mca", "--bmi", "36", "--gestation-weeks", "32",
                                "--doppler", "--local", LOCAL_POLICY],
    "uterine-artery-doppler": ["--target", "uterine-artery", "--bmi", "29", "--gestation-weeks",
                               "10", "--doppler"],
    "popliteal-doppler-draft": ["--target", "popliteal-vein", "--bmi", "41", "--doppler", "--draft"],
    "fetal-head": ["--target", "fetal-head", "--bmi", "34", "--gestation-weeks", "20"],
    "embryo-pregnancy": ["--target", "embryo", "--gestation-weeks", "8", "--expected-ti", "1.2",
                         "--minutes", "20"],
    "achilles": ["--target", "achilles-tendon", "--bmi", "24"],
    "supraspinatus-bmi40": ["--target", "supraspinatus-tendon", "--bmi", "40"],
    "thyroid-depth": ["--target", "thyroid", "--bmi", "26", "--depth-cm", "2.5"],
    "pleura": ["--target", "pleura", "--bmi", "28", "--lung-in-beam", "--expected-mi", "0.9"],
    "heart-bmi44-contrast": ["--target", "heart", "--bmi", "44", "--contrast", "--febrile"],
    "infant-hip": ["--target", "infant-hip"],
    "neonatal-brain": ["--target", "neonatal-brain"],
    "adult-transcranial": ["--target", "adult-transcranial", "--bmi", "30"],
    "prostate-window": ["--target", "prostate", "--bmi", "33", "--window",
                        "transrectal"],
    "appendix-fat": ["--target", "appendix", "--fat-mm", "35", "--condition", "no_breath_hold",
                     "--condition", "post_prandial"],
    "bladder-modes": ["--target", "bladder", "--bmi", "37", "--mode", "b_mode", "--mode",
                      "colour_doppler", "--condition", "full_bladder"],
}
"""Plans covering every part of the output: Doppler, drafts, conditions, measured values,
local policy and a department inventory, obstetric, neonatal, tendon and thoracic exams."""

RENDERED = ("liver-bmi45-steatosis", "gallbladder-bmi32-draft", "aorta-doppler-bmi38",
            "renal-artery-doppler-bmi42", "fetal-mca-doppler-local", "popliteal-doppler-draft")
"""Cases whose text, Markdown and HTML plans are pinned as well."""


def run_plan(args: list[str]) -> str:
    out = io.StringIO()
    with contextlib.redirect_stdout(out):
        code = main(["plan", *args])
    assert code == 0
    return out.getvalue()


def check_golden(name: str, text: str) -> None:
    path = GOLDEN / name
    text = text.replace(str(ROOT), "<checkout>")      # the same golden in any clone
    if UPDATE:
        GOLDEN.mkdir(parents=True, exist_ok=True)
        path.write_text(text, encoding="utf-8")
        return
    assert path.exists(), f"missing golden file {path}; run with SCANPLAN_UPDATE_GOLDEN=1"
    assert text == path.read_text(encoding="utf-8"), (
        f"{name} differs from its golden file; if the change is intended, regenerate with "
        "SCANPLAN_UPDATE_GOLDEN=1 and review the diff")


@pytest.mark.parametrize("name", sorted(CASES))
def test_plan_json_matches_golden(name: str) -> None:
    """``plan --json`` is the published contract: it must not change by accident."""
    check_golden(f"{name}.json", run_plan([*CASES[name], "--json"]))


@pytest.mark.parametrize("fmt", ["text", "md", "html"])
@pytest.mark.parametrize("name", RENDERED)
def test_plan_rendering_matches_golden(name: str, fmt: str) -> None:
    """The text, Markdown and HTML plans read the same typed plan the JSON comes from."""
    check_golden(f"{name}.{fmt}", run_plan([*CASES[name], "--format", fmt]))

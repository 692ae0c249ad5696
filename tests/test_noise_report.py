"""Noise in the main findings stays under 10 % over the 26-plan review set (scripts/noise_report.py)."""

from __future__ import annotations

import importlib.util
from pathlib import Path
from types import SimpleNamespace

from planner.findings import Finding

_SPEC = importlib.util.spec_from_file_location(
    "noise_report", Path(__file__).resolve().parents[1] / "scripts" / "noise_report.py")
noise_report = importlib.util.module_from_spec(_SPEC)
_SPEC.loader.exec_module(noise_report)


def _plan(reflector="diffuse", fat_mm=0.0):
    layer = SimpleNamespace(role="subcutaneous_fat", thickness_cm=fat_mm / 10)
    return SimpleNamespace(target=SimpleNamespace(reflector=reflector), layers=(layer,))


def test_rubric_flags_the_items_practitioners_skip():
    """The reviewers' skip list: sub-millimetre depth errors, constant output tables, a tilt
    tolerance on a diffuse target, a habitus caution on a route without fat."""
    assert noise_report.skip_reason(Finding("artefact.sound_speed", "info", "t", "m",
                                            {"depth_error_mm": 0.3, "fat_error_mm": 0.5}),
                                    _plan(), 19.0) == "sub-millimetre"
    assert noise_report.skip_reason(Finding("safety.scan_time", "info", "t", "m", {}), _plan(), 19.0) == "constant"
    assert noise_report.skip_reason(Finding("tilt.specular", "info", "t", "m", {}), _plan(), 19.0) == "tilt-irrelevant"
    assert noise_report.skip_reason(Finding("habitus.limited_exam", "caution", "t", "m", {}),
                                    _plan(fat_mm=2.0), 19.0) == "fat-irrelevant"
    assert noise_report.skip_reason(Finding("habitus.limited_exam", "caution", "t", "m", {}),
                                    _plan(fat_mm=35.0), 19.0) is None


def test_noise_in_the_main_findings_is_at_most_ten_percent():
    data = noise_report.report()
    assert data["main_items"] >= 26 * 4
    assert data["share"] <= noise_report.LIMIT, [
        (p["target"], p["bmi"], i["code"], i["skip"]) for p in data["plans"] for i in p["main"] if i["skip"]]

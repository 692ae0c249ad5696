"""Text for the plan views: severity tags, values with units, the summary lines.

Everything returns Textual content markup (strings); text from the engine is escaped.
Severity is always written as a word, so it reads the same without colour (NO_COLOR).
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

from planner.tui.markup import escape

from planner.findings import Finding

if TYPE_CHECKING:  # the engine loads after the first paint
    from planner.engine.model import HarmonicDecision, Plan

SEVERITY_STYLE: dict[str, str] = {
    "warning": "bold $error",
    "caution": "bold $warning",
    "advice": "bold $accent",
    "info": "bold $text-muted",
}
"""Markup style of each severity tag (theme variables, so light and dark themes both work)."""

SEVERITY_WORD: dict[str, str] = {"warning": "WARNING", "caution": "CAUTION",
                                 "advice": "ADVICE", "info": "INFO"}

_UNITS: tuple[tuple[str, str], ...] = (
    ("_db_per_cm_mhz", "dB/cm/MHz"), ("_m_per_s", "m/s"), ("_cm_per_s", "cm/s"),
    ("_cm_s", "cm/s"),
    ("_mw_per_cm2", "mW/cm²"), ("_w_per_cm2", "W/cm²"), ("_kg_per_m3", "kg/m³"),
    ("_mhz", "MHz"), ("_khz", "kHz"), ("_hz", "Hz"), ("_cm", "cm"), ("_mm", "mm"), ("_um", "µm"),
    ("_db", "dB"), ("_deg", "°"), ("_min", "min"), ("_minutes", "min"), ("_s", "s"),
    ("_percent", "%"), ("_weeks", "weeks"), ("_mrayl", "MRayl"))


def severity_tag(severity: str) -> str:
    """A fixed-width severity word in its theme colour."""
    word = SEVERITY_WORD.get(severity, severity.upper())
    return f"[{SEVERITY_STYLE.get(severity, 'bold')}]{word:<7}[/]"


_WORDS: dict[str, str] = {"bmi": "BMI", "who": "WHO", "ti": "TI", "mi": "MI", "tis": "TIS",
                          "tib": "TIB", "tic": "TIC", "prf": "PRF", "f": "F", "ispta": "I_SPTA"}


def _label(stem: str) -> str:
    words = [_WORDS.get(w, w) for w in stem.split("_")]
    text = " ".join(words)
    return text.replace("F number", "F-number")


def split_unit(key: str) -> tuple[str, str]:
    """Split a value key into a readable label and its unit: ``reach_ceiling_mhz`` ->
    ``('reach ceiling', 'MHz')``."""
    for suffix, unit in _UNITS:
        if key.endswith(suffix) and len(key) > len(suffix):
            return _label(key[: -len(suffix)]), unit
    return _label(key), ""


def _number(value: float) -> str:
    if isinstance(value, int) or float(value).is_integer():
        return f"{value:g}" if abs(value) < 1e6 else f"{value:.3g}"
    return f"{value:.3g}" if abs(value) < 10 else f"{value:.1f}"


def value_text(value: Any, unit: str = "") -> str:
    """A value as plain text with its unit."""
    tail = f" {unit}" if unit and unit != "°" else unit
    if value is None:
        return "not given"
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, (int, float)):
        return _number(value) + tail
    if isinstance(value, (list, tuple)):
        if len(value) == 2 and all(isinstance(v, (int, float)) for v in value):
            return f"{_number(value[0])}–{_number(value[1])}{tail}"
        return ", ".join(value_text(v) for v in value) + (tail if value else "")
    if isinstance(value, dict):
        return "; ".join(f"{split_unit(k)[0]} {value_text(v, split_unit(k)[1])}"
                         for k, v in value.items())
    return str(value).replace("_", " ")


def value_rows(values: dict[str, Any]) -> list[tuple[str, str]]:
    """``(label, value with unit)`` rows for a finding's values."""
    rows = []
    for key, value in values.items():
        label, unit = split_unit(str(key))
        rows.append((label, value_text(value, unit)))
    return rows


def band_text(plan: Plan) -> str:
    """The recommended band, or what is wrong with it."""
    band = plan.frequency_mhz
    low, high = band.low, band.high
    if low is None or high is None:
        return "[bold $error]no usable band[/]"
    if band.feasible and band.start is not None:
        from planner.engine.start import basis_text, odds_text
        odds = odds_text(band)
        return (f"[b]start {band.start:.1f} MHz[/b] · band {low:.1f}–{high:.1f} MHz "
                f"[$text-muted]({escape(basis_text(band.start_basis))}"
                + (f"; {escape(odds)}" if odds else "") + ")[/]")
    text = f"[b]{low:.1f}–{high:.1f} MHz[/b]"
    if not band.feasible:
        text += "  [bold $error]needed detail NOT reached[/]"
    return text


def patient_text(plan: Plan) -> str:
    """One line: BMI with its WHO class, conditions, gestation."""
    p = plan.patient
    text = f"BMI {p.bmi:g} ({escape(p.who_class_label)})" if p.bmi else "BMI not given"
    if not p.bmi_given:
        text += " [i]assumed[/i]"
    if p.conditions:
        text += " · " + ", ".join(f"{escape(k.replace('_', ' '))} {v}" for k, v in p.conditions.items())
    if p.gestation_weeks:
        text += f" · {p.gestation_weeks:g} weeks"
    return text


def tilt_text(plan: Plan) -> str:
    """The tilt tolerance in a few words."""
    tilt = plan.tilt
    if tilt.max_deviation_deg is None:
        return "free (diffuse target: choose the tilt for the window)"
    parts = [f"within {tilt.max_deviation_deg:.1f}° of perpendicular"]
    if tilt.scan_plane_deg is not None and tilt.elevation_plane_deg is not None:
        parts.append(f"(scan plane {tilt.scan_plane_deg:.1f}°, "
                     f"elevation {tilt.elevation_plane_deg:.1f}°)")
    return " ".join(parts)


def summary_rows(plan: Plan) -> list[tuple[str, str]]:
    """The summary card as ``(label, markup)`` rows: what to pick up and how to set it."""
    target, window, probe, display = plan.target, plan.window, plan.probe, plan.display
    n = len(plan.windows)
    rows = [
        ("Target", f"[b]{escape(plan.target_title)}[/b] · {escape(target.reflector)}"
                   f" · detail {target.detail_mm:g} mm"),
        ("Patient", patient_text(plan)),
        ("Band", band_text(plan)),
        ("Probe", escape(probe.label) + (f" ({escape(probe.fit)})" if probe.fit != "fits" else "")
         if probe else "[bold $error]no probe in the inventory fits[/]"),
        ("Harmonic", ("[b]advised[/b]" if plan.harmonic.advised else "not advised")
         + _harmonic_band(plan.harmonic)),
        ("Window", f"[b]{escape(window.name)}[/b]" + (f" (best of {n})" if n > 1 else "")),
        ("Position", escape(f"{window.position}; {window.breathing}")),
        ("Depth", f"target {plan.depth_cm:.1f} cm (shown {plan.displayed_depth_cm:.1f})"
                  f" · set {display.display_depth_cm:.0f} cm · focus {display.focus_cm:.1f} cm"),
        ("Tilt", escape(tilt_text(plan))),
        ("Watch", f"[b]{escape(plan.monitored_index)}[/b] on the display · ALARA"),
    ]
    return rows


def _harmonic_band(harmonic: HarmonicDecision) -> str:
    band = harmonic.transmit_mhz
    if harmonic.advised and band is not None:
        if band.high - band.low < 0.05:
            return f": transmit {band.low:.1f} MHz"
        return f": transmit {band.low:.1f}–{band.high:.1f} MHz"
    return ""


def finding_markup(finding: Finding) -> str:
    """A finding as an option: tag and title, then the message."""
    return (f"{severity_tag(finding.severity)} [b]{escape(finding.title)}[/b]\n"
            f"{escape(finding.message)}")

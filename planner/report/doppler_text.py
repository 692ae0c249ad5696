"""The Doppler section of the text plan (the typed DopplerPlan of planner.engine.doppler_model)."""

from __future__ import annotations

import textwrap

from planner.engine.doppler_model import DopplerPlan


def _wrap(text: str, indent: str, hang: int = 13) -> str:
    return textwrap.fill(text, width=96, initial_indent=indent, subsequent_indent=" " * hang)


def _pct(value: float | None) -> str:
    return "n/a" if value is None else f"{value:+.1f} %"


def _table(doppler: DopplerPlan) -> list[str]:
    """Nyquist limit [cm/s] by Doppler frequency (rows) and beam-to-flow angle (columns)."""
    angles = sorted({row.angle_deg for row in doppler.nyquist})
    cells = {(row.frequency_mhz, row.angle_deg): row.v_max_cm_s for row in doppler.nyquist}
    lines = ["  Nyquist limit [cm/s] at this depth:",
             "    MHz   " + "".join(f"{a:>7g} deg" for a in angles) + "   round-trip loss"]
    for freq in doppler.frequencies:
        f = freq.frequency_mhz
        budget = "" if freq.within_budget else "  (beyond budget)"
        lines.append(f"    {f:<5g} " + "".join(f"{cells[(f, a)]:>11.0f}" for a in angles)
                     + f"   {freq.round_trip_loss_db:.0f} dB{budget}")
    return lines


def doppler_text(doppler: DopplerPlan) -> list[str]:
    """Lines of the Doppler section: setting, limits, aliasing check and recomputed remedies."""
    v, rec, err = doppler.vessel, doppler.recommended, doppler.velocity_error_percent
    low, high = v.expected_cm_s.low, v.expected_cm_s.high
    sources = f"low: {low.source}, {low.status}; high: {high.source}, {high.status}"
    lines = [f"Doppler: {v.name} ({v.flow}, {v.quantity})",
             _wrap(f"{low.value:g}-{high.value:g} cm/s ({sources})".replace("_", " "),
                   "  Expected   ")]
    for t in v.thresholds:
        status = t.status.replace("_", " ")
        lines.append(_wrap(f"{t.label}: {t.value:g} cm/s ({t.source}, {status})", " " * 13))
    lines += [
        f"  Depth      {doppler.depth_cm:.1f} cm: PRF up to {doppler.prf_max_hz / 1000:.1f} kHz",
        _wrap(f"{rec.frequency_mhz:g} MHz at {rec.angle_deg:g} deg: velocities up to "
              f"{rec.v_max_cm_s:.0f} cm/s without aliasing; {rec.how}", "  Setting    "),
        f"  Angle      a 5 deg error gives {_pct(err.plus_5_deg)} / {_pct(err.minus_5_deg)}",
        *_table(doppler),
    ]
    m = doppler.margin
    if not doppler.aliasing_expected:
        lines.append(f"  No aliasing expected: {m.design_velocity_cm_s:g} cm/s is below the "
                     f"{m.v_max_cm_s:.0f} cm/s limit.")
        return lines
    lines.append(f"  ALIASING expected: {m.design_velocity_cm_s:g} cm/s exceeds the "
                 f"{m.v_max_cm_s:.0f} cm/s limit by {-m.margin_cm_s:.0f} cm/s.")
    lines.append("  Remedies (each recomputed with the change applied):")
    for i, r in enumerate(doppler.remedies, 1):
        limit = "no range limit" if r.v_max_cm_s is None else f"limit {r.v_max_cm_s:.0f} cm/s"
        verdict = "removes aliasing" if r.removes_aliasing else "not enough alone"
        lines.append(_wrap(f"{r.text}: {limit}, {verdict}; {r.cost}", f"    {i}. ", 7))
    return lines

"""How likely each frequency is to reach a patient like this one, with the start, the band's
top and what would narrow the doubt (the plan's ``frequency_mhz.reach_probability`` and
``drivers``, :mod:`planner.engine.spread`).

Shown in the Depth view under the loss profile, as a strip chart of text (a bar per
frequency), so that it costs no plot widget.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

from textual.app import ComposeResult
from textual.containers import Vertical
from textual.markup import escape
from textual.widgets import Static

from planner.engine.spread import INPUT_WORDS, collapsed, top_driver

if TYPE_CHECKING:
    from planner.engine.model import FrequencyBand, Plan

UI_ACTIONS = {"wall": "measuring the wall (Wall mm) or the depth (Depth cm)",
              "attenuation": "the last exam's fade depth (Prior MHz, Prior cm)",
              "budget": "a phantom QA log for the probe"}
"""What would pin each input down, in the form's own terms."""


def odds_markup(band: FrequencyBand) -> str:
    """The start's and the top's probability and the top driver, in words."""
    if band.start is None or band.start_probability is None or band.top_probability is None:
        return "[$text-muted]No reach across patients: the band is not usable.[/]"
    text = (f"[b]Reach across patients like this one[/b]\nstart {band.start:.1f} MHz reaches "
            f"{100 * band.start_probability:.0f} %, top {band.high:.1f} MHz "
            f"{100 * band.top_probability:.0f} %; median patient's start "
            f"{band.start_median:.1f} MHz")
    d = top_driver(band)
    if band.drivers and collapsed(band.drivers[0]):
        text += "\n[$text-muted]Nearly every patient like this one is reached across the probe's band.[/]"
    elif d is not None:
        lo, hi = d.reach_range_mhz
        klo, khi = d.known_range_mhz
        text += (f"\n[$text-muted]Most of the spread ({100 * d.explains:.0f} %): "
                 f"{INPUT_WORDS.get(d.input, d.input)}; "
                 f"{escape(UI_ACTIONS.get(d.input, d.action))} would narrow the reach "
                 f"from {lo:.1f}–{hi:.1f} to {klo:.1f}–{khi:.1f} MHz.[/]")
    return text


BARS = " ▁▂▃▄▅▆▇█"
"""Block heights for 0-100 % (eighths)."""


def strip_markup(band: FrequencyBand) -> str:
    """The probability of reaching across the probe's band as a strip chart: frequencies, the
    share reached and a bar per frequency; the column nearest the start is marked."""
    points = band.reach_probability
    if not points:
        return ""
    near = min(range(len(points)), key=lambda i: abs(points[i].frequency_mhz - (band.start or 0)))
    cells = [(f"{p.frequency_mhz:4.1f}", f"{100 * p.probability:4.0f}",
              "   " + BARS[min(8, round(8 * p.probability))]) for p in points]

    def row(label: str, k: int) -> str:
        parts = [f"[b]{c[k]}[/b]" if i == near else c[k] for i, c in enumerate(cells)]
        return f"{label:<9}" + " ".join(parts)
    return "\n".join([row("MHz", 0), row("reached %", 1), row("", 2)])


class ReachOdds(Vertical):
    """The strip chart and its caption."""

    def compose(self) -> ComposeResult:
        yield Static("", id="odds-strip")
        yield Static("", id="odds-caption")

    def show_plan(self, plan: Plan) -> None:
        """Show the reach probability of ``plan``."""
        band = plan.frequency_mhz
        self.query_one("#odds-strip", Static).update(strip_markup(band))
        self.query_one("#odds-caption", Static).update(odds_markup(band))

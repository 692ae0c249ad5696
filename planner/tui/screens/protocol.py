"""The protocol view: a department protocol's problems, or its sheet.

The file is checked and its sheet built (every view for every WHO adult BMI class,
WHO2000Obesity) in a thread, so the UI never waits on it. A file with problems shows every
problem, one per line, with its line, column and key path; a valid file shows the sheet's
facts, the planned minutes against the published and local scan-time limits (BMUS2009,
AIUM2022TI), one compact table per view and the decision-support statement. No exception
from loading or building reaches the UI: each is shown as a problem.
"""

from __future__ import annotations

import re
from pathlib import Path
from typing import TYPE_CHECKING

from rich import box
from rich.table import Table
from textual import work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical, VerticalScroll
from textual.markup import escape
from textual.message import Message
from textual.widgets import Static

from planner.errors import DataError, PlannerError
from planner.records import record
from planner.tui.screens.closing import OnceModal

if TYPE_CHECKING:  # the engine and the sheet load in the worker, not at start-up
    from planner.engine.model import FrequencyBand
    from planner.protocol.sheet_model import LimitRow, Sheet, SheetView, TimeSection
    from planner.protocol.sheet_rows import SheetRow

_LOCATION = re.compile(r"^(?P<file>.+?):(?P<line>\d+):(?P<col>\d+): (?P<rest>.*)$", re.S)
CLASS_HEADERS: tuple[str, ...] = ("Class", "BMI", "Probe", "MHz", "Harm.", "Tilt", "Depth",
                                  "Main cautions")
"""Columns of a view's table: one row per WHO habitus class."""


@record(slots=False)
class Problem:
    """One problem of a protocol file, split into its parts.

    ``line`` and ``column`` are 1-based, ``None`` when the problem names no place in the
    file (a missing or unreadable file); ``key_path`` is empty when it names no key.
    """

    file: str
    line: int | None
    column: int | None
    key_path: str
    message: str


def split_problem(text: str) -> Problem:
    """Split a ``file:line:col: key.path: message`` problem; other text keeps its whole."""
    found = _LOCATION.match(text)
    if not found:
        file, sep, rest = text.partition(": ")
        return Problem(file, None, None, "", rest) if sep else Problem("", None, None, "", text)
    key, sep, message = found["rest"].partition(": ")
    if not sep or " " in key:
        key, message = "", found["rest"]
    return Problem(found["file"], int(found["line"]), int(found["col"]), key, message)


class ProtocolLoaded(Message):
    """The worker's result: the typed sheet, or the problems of the file."""

    def __init__(self, sheet: Sheet | None, problems: tuple[str, ...] = ()) -> None:
        super().__init__()
        self.sheet = sheet
        self.problems = problems


def load_sheet(path: Path) -> ProtocolLoaded:
    """Check the protocol at ``path`` and build its sheet. Never raises."""
    try:
        from planner.protocol.loader import load_protocol
        from planner.protocol.sheet import build_sheet
        return ProtocolLoaded(build_sheet(load_protocol(path), protocol_path=path))
    except DataError as exc:
        return ProtocolLoaded(None, tuple(exc.problems))
    except (PlannerError, ValueError, OSError) as exc:
        return ProtocolLoaded(None, (f"{path}: {getattr(exc, 'message', None) or exc}",))
    except Exception as exc:  # noqa: BLE001 - shown to the user instead of a crash
        return ProtocolLoaded(None, (f"{path}: unexpected error: {type(exc).__name__}: {exc}",))


def problems_table(problems: tuple[str, ...]) -> Table:
    """Every problem on its own row: file, line, column, key path, message."""
    table = _table()
    for name, kwargs in (("File", {"overflow": "fold", "max_width": 28}),
                         ("Line", {"justify": "right"}), ("Col", {"justify": "right"}),
                         ("Key path", {"overflow": "fold", "max_width": 26}),
                         ("Message", {"ratio": 1, "overflow": "fold"})):
        table.add_column(name, **kwargs)
    for text in problems:
        p = split_problem(text)
        table.add_row(Path(p.file).name if p.file else "-",
                      "-" if p.line is None else str(p.line),
                      "-" if p.column is None else str(p.column), p.key_path or "-", p.message)
    return table


def _band_text(band: FrequencyBand) -> str:
    if band.low is None or band.high is None:
        return "none"
    text = f"{band.low:.1f}-{band.high:.1f}"
    return text if band.feasible else text + "*"


def class_cells(row: SheetRow) -> list[str]:
    """The cells of one habitus class of one view (see :data:`CLASS_HEADERS`)."""
    tilt = row.tilt_deg
    cautions = "; ".join(("‼ " if w.severity == "warning" else "! ") + w.title
                         for w in row.warnings) or "-"
    return [row.label, f"{row.bmi:g}", row.probe.id if row.probe else "none fits",
            _band_text(row.band_mhz), "yes" if row.harmonic.advised else "no",
            "free" if tilt is None else f"≤{tilt:.1f}°", f"{row.depth_cm:.1f}", cautions]


def _table() -> Table:
    return Table(box=box.SIMPLE_HEAD, expand=True, show_edge=False, pad_edge=False,
                 collapse_padding=True)


def view_table(view: SheetView) -> Table:
    """A compact table of one view: a row per WHO habitus class."""
    table = _table()
    for header in CLASS_HEADERS:
        if header == "Class":
            table.add_column(header, max_width=15, overflow="fold")
        elif header == "Main cautions":
            table.add_column(header, ratio=1, min_width=16, overflow="fold")
        else:
            table.add_column(header, no_wrap=True)
    for row in view.classes:
        table.add_row(*class_cells(row))
    return table


def _limit_text(row: LimitRow) -> str:
    from planner.safety.format import minutes_text
    if row.limit == "unlimited":
        return "no time limit"
    if row.limit == "not_recommended":
        return "not recommended"
    if row.limit == "limited" and row.max_minutes is not None:
        return f"< {minutes_text(row.max_minutes)}"
    return "-"


def _limit_label(row: LimitRow) -> str:
    if row.kind == "published":
        return f"{row.label}, {row.band}"
    if row.kind == "local":
        return f"local: {row.label}"
    return row.label


def limits_table(time: TimeSection) -> Table:
    """The planned minutes against each published, local and protocol limit."""
    from planner.safety.format import number_text
    index = time.monitored_index
    table = _table()
    for header in ("Limit", "Time", "TI", "Source", f"Planned {time.planned_minutes:g} min"):
        table.add_column(header, overflow="fold")
    for row in time.limits:
        within = {True: "within", False: "EXCEEDS", None: "-"}[row.within]
        table.add_row(_limit_label(row),
                      _limit_text(row),
                      "-" if row.max_ti is None else f"{index} ≤ {number_text(row.max_ti)}",
                      row.source + ("" if row.status in ("verified", "local")
                                    else f" ({row.status.replace('_', ' ')})"),
                      within)
    return table


def sheet_widgets(sheet: Sheet) -> list[Static]:
    """The sheet as Statics, top to bottom, ending with the decision-support statement."""
    from planner.safety.format import number_text
    p, t = sheet.protocol, sheet.time
    facts = [("Department", p.department), ("Version", p.version),
             ("Review date", p.review_date), ("Exam type", p.exam_type_label),
             ("File", p.file or "-")]
    ti = "not given" if t.expected_ti is None else number_text(t.expected_ti)
    out = [Static(f"[b]{escape(p.title)}[/b]", id="protocol-title", classes="sheet-title"),
           Static("\n".join(f"[$text-muted]{k:<12}[/] {escape(str(v))}" for k, v in facts),
                  id="protocol-facts"),
           Static(f"[b]Scan time:[/b] {t.planned_minutes:g} min planned (sum of "
                  f"{len(sheet.views)} views); expected {t.monitored_index} {ti}",
                  id="protocol-time", classes="subhead"),
           Static(limits_table(t), id="protocol-limits"),
           Static(f"[b]{escape(t.severity)}:[/b] {escape(t.message)}", classes="hint")]
    bmis = ", ".join(f"{c.label} {c.bmi:g}" for c in sheet.habitus_classes)
    out.append(Static(f"Each WHO class is planned at one BMI [kg/m²]: {escape(bmis)}. "
                      "Band in MHz (* detail not reached); Harm. = harmonic imaging advised; "
                      "tilt = largest deviation from perpendicular; depth in cm; ‼ warning, "
                      "! caution.",
                      id="protocol-legend", classes="hint"))
    for n, view in enumerate(sheet.views, 1):
        out.append(Static(f"[b]{n}. {escape(view.title)}[/b] · {escape(view.target.name)}"
                          f" · {escape(view.window.name)} · "
                          f"{view.expected_minutes:g} min · watch {view.monitored_index}",
                          classes="view-head"))
        out.append(Static(view_table(view), id=f"view-{n}", classes="view-table"))
    out.append(Static(f"[i]{escape(sheet.statement)}[/i]", id="protocol-statement"))
    return out


class ProtocolScreen(OnceModal[None]):
    """A protocol file's problems or its sheet; Escape goes back to the plan.

    Parameters
    ----------
    path : pathlib.Path
        The protocol file (YAML).
    """

    BINDINGS = [Binding("escape", "close", "Back", show=True)]

    def __init__(self, path: Path) -> None:
        super().__init__()
        self.path = Path(path)
        self.sheet: Sheet | None = None
        self.problems: tuple[str, ...] = ()
        self.loaded = False

    def compose(self) -> ComposeResult:
        with Vertical(id="protocol-box", classes="modal-box"):
            yield Static(f"Protocol: {escape(self.path.name)}", classes="modal-title")
            yield Static("Checking the file and planning every view…", id="protocol-status")
            yield VerticalScroll(id="protocol-scroll")
            yield Static("↑ ↓ PgUp PgDn Home End scroll · Esc back to the plan",
                         classes="hint")

    def on_mount(self) -> None:
        self.query_one("#protocol-scroll").focus()
        self._load()

    @work(thread=True, exclusive=True, group="protocol")
    def _load(self) -> None:
        self.post_message(load_sheet(self.path))

    async def on_protocol_loaded(self, event: ProtocolLoaded) -> None:
        event.stop()
        status = self.query_one("#protocol-status", Static)
        scroll = self.query_one("#protocol-scroll")
        problems = event.problems
        if event.sheet is not None:
            try:
                await scroll.mount_all(sheet_widgets(event.sheet))
                self.sheet = event.sheet
                n = len(event.sheet.views)
                status.update(f"[$success]✓[/] valid · {n} view{'s' if n != 1 else ''} × "
                              f"{len(event.sheet.habitus_classes)} WHO habitus classes")
            except Exception as exc:  # noqa: BLE001 - a display bug must not end the session
                await scroll.remove_children()
                problems = (f"{self.path}: cannot show this sheet ({type(exc).__name__}: {exc}); "
                            "please report it",)
        if self.sheet is None:
            self.problems = problems
            count = len(problems)
            status.update(f"[bold $error]✗ {count} problem{'s' if count != 1 else ''}[/] "
                          f"in {escape(str(self.path))}")
            await scroll.mount(Static(problems_table(problems), id="protocol-problems"))
        self.loaded = True

    def action_close(self) -> None:
        self.close_once(None)

"""The inputs of a plan: patient, target and window, exam context, supervision.

Every change posts :class:`~planner.tui.messages.InputsEdited`; the screen then reads
:meth:`InputPanel.raw_values` and recomputes. Lists that come from the engine (targets,
windows, exam types, modes, conditions) are filled by :meth:`InputPanel.set_library`
once it has loaded, after the first paint.
"""

from __future__ import annotations

from typing import Any

from textual import on
from textual.app import ComposeResult
from textual.containers import Vertical, VerticalScroll
from textual.suggester import Suggester
from textual.widgets import Checkbox, Input, Select, Static

from planner.tui.compute import CHOICE_TEXT_FIELDS, SUPERVISOR_FIELDS
from planner.tui.messages import InputsEdited, TargetPicked
from planner.tui.widgets.form_input import FormInput
from planner.tui.widgets.field import FieldRow
from planner.tui.widgets.target_picker import TargetPicker
from planner.tui.widgets.tick import Tick

AUTO = "auto"
"""Select value meaning 'let the engine decide' (window, exam type) or 'unknown' (sex)."""

FLAGS = ("pregnancy_possible", "contrast_agent", "febrile", "lung_in_beam", "doppler", "draft")
_TEXT_INPUTS = ("bmi", "height_cm", "weight_kg", "wall_mm", "fat_mm", "depth_cm", "conditions",
                "gestation_weeks", "expected_ti", "expected_mi", "planned_minutes",
                "prior_frequency_mhz", "prior_fade_cm", "student",
                "student_reflection", "student_start_mhz", *CHOICE_TEXT_FIELDS)
CARRIED = ("probes_path", "local_policy_path", "qa_path", *SUPERVISOR_FIELDS)
"""Inputs a plan file may hold that the form keeps but does not edit (department files, with
the probe QA log, and the supervisor's fields, which only a verified signature fills). A probe inventory's own ``qa_log`` applies in the form as well."""
_SELECTS = ("sex", "window_id", "side", "exam_type", "student_harmonic")
DRAFT_FIRST_FIELD = "student"
"""The field Ctrl+G moves the focus to: the first of the student's own."""
_EVENTS = (Input.Changed, Select.Changed, Checkbox.Changed, TargetPicked)


class ConditionSuggester(Suggester):
    """Completes the condition being typed after the last comma."""

    def __init__(self) -> None:
        super().__init__(use_cache=False, case_sensitive=False)
        self.names: list[str] = []

    async def get_suggestion(self, value: str) -> str | None:
        head, sep, last = value.rpartition(",")
        stem = last.lstrip()
        if not stem or ":" in stem:
            return None
        for name in self.names:
            if name.startswith(stem) and name != stem:
                return f"{head}{sep}{last[:len(last) - len(stem)]}{name}"
        return None


def _text(field: str, value: str, placeholder: str = "") -> Input:
    return FormInput(value=value, id=field, compact=True, placeholder=placeholder)


class InputPanel(VerticalScroll):
    """The form on the left of the planning screen."""

    def __init__(self, values: dict[str, Any]) -> None:
        super().__init__(id="inputs")
        self.values = dict(values)
        self.library = None
        self.suggester = ConditionSuggester()
        self._exam_ids: set[str] = set()
        self.mode_ids: tuple[str, ...] = ()
        self._rows: dict[str, FieldRow] = {}

    def compose(self) -> ComposeResult:
        v = self.values
        yield Static("Patient", classes="section")
        yield FieldRow("BMI kg/m²", _text("bmi", v["bmi"], "or height + weight"), field="bmi")
        yield FieldRow("Height cm", _text("height_cm", v["height_cm"]), field="height_cm")
        yield FieldRow("Weight kg", _text("weight_kg", v["weight_kg"]), field="weight_kg")
        yield FieldRow("Sex", Select([("unknown", AUTO), ("female", "female"), ("male", "male")],
                                     value=v["sex"] or AUTO, allow_blank=False, compact=True,
                                     id="sex"), field="sex")
        yield FieldRow("Wall mm", _text("wall_mm", v["wall_mm"], "measured, optional"),
                       field="wall_mm")
        yield FieldRow("Fat mm", _text("fat_mm", v.get("fat_mm", ""), "measured, optional"),
                       field="fat_mm")
        yield FieldRow("Depth cm", _text("depth_cm", v["depth_cm"], "measured, optional"),
                       field="depth_cm")
        conditions = _text("conditions", v["conditions"], "e.g. steatosis:2, ascites")
        conditions.suggester = self.suggester
        yield FieldRow("Conditions", conditions, field="conditions")
        yield FieldRow("Prior MHz", _text("prior_frequency_mhz", v.get("prior_frequency_mhz", ""),
                                          "last exam"), field="prior_frequency_mhz")
        yield FieldRow("Prior cm", _text("prior_fade_cm", v.get("prior_fade_cm", ""),
                                         "where it faded"), field="prior_fade_cm")
        yield Static("Target and window", classes="section")
        yield FieldRow("Target", TargetPicker(v["target_id"]), field="target_id", stacked=True)
        yield FieldRow("Window", Select([("automatic", AUTO)], value=AUTO,
                                        allow_blank=False, compact=True, id="window_id"),
                       field="window_id")
        yield FieldRow("Side", Select([("automatic", AUTO), ("right", "right"), ("left", "left")],
                                      value=v.get("side") or AUTO, allow_blank=False, compact=True,
                                      id="side"), field="side")
        yield Static("Exam", classes="section")
        yield FieldRow("Exam type", Select([("target's usual", AUTO)], value=AUTO,
                                           allow_blank=False, compact=True, id="exam_type"),
                       field="exam_type")
        yield FieldRow("Modes", Vertical(id="modes"), field="modes", stacked=True)
        yield FieldRow("Gestation wk", _text("gestation_weeks", v["gestation_weeks"], "optional"),
                       field="gestation_weeks")
        yield Tick("Pregnancy possible", v["pregnancy_possible"], id="pregnancy_possible",
                   compact=True)
        yield Tick("Gas contrast agent", v["contrast_agent"], id="contrast_agent", compact=True)
        yield Tick("Febrile patient", v["febrile"], id="febrile", compact=True)
        yield Tick("Lung in the beam", v.get("lung_in_beam", False), id="lung_in_beam", compact=True)
        yield Tick("Doppler planning", v.get("doppler", False), id="doppler", compact=True)
        yield FieldRow("Expected TI", _text("expected_ti", v["expected_ti"], "as displayed"),
                       field="expected_ti")
        yield FieldRow("Expected MI", _text("expected_mi", v.get("expected_mi", ""), "as displayed"),
                       field="expected_mi")
        yield FieldRow("Minutes", _text("planned_minutes", v["planned_minutes"], "planned dwell"),
                       field="planned_minutes")
        yield Static("Supervision", classes="section")
        yield Tick("Supervised draft", v["draft"], id="draft", compact=True)
        with Vertical(id="signoff"):
            yield FieldRow("Student", _text("student", v["student"], "your name"), field="student")
            yield Static("Your own decisions, first", classes="hint")
            for name, label, hint in (
                    ("student_probe", "Probe", "id or type, e.g. curved"),
                    ("student_start_mhz", "Start MHz", "frequency to start at"),
                    ("student_window", "Window", "window id"),
                    ("student_position", "Position", "patient position"),
                    ("student_harmonic", "Harmonic", ""),
                    ("student_tilt", "Tilt", "tilt approach"),
                    ("student_rationale", "Rationale", "why, in a line"),
                    ("student_reflection", "Reflection", "after the scan")):
                control = (Select([("not decided", AUTO), ("on", "on"), ("off", "off")],
                                  value=v.get(name) or AUTO, allow_blank=False, compact=True,
                                  id=name) if name == "student_harmonic"
                           else _text(name, v.get(name) or "", hint))
                yield FieldRow(label, control, field=name)
            yield Static("Sign-off: not signed", id="signature-status", classes="hint")
            for name, label in zip(SUPERVISOR_FIELDS, ("Supervisor", "Date", "Comments")):
                box = FormInput(value="", id=name, compact=True, disabled=True,
                                placeholder="from a verified signature")
                yield FieldRow(label, box, field=name)

    def on_mount(self) -> None:
        self.query_one("#signoff").display = bool(self.values["draft"])
        self._show_side(self.values["target_id"])
        self.query_one("#bmi", Input).focus()

    # -- engine data ------------------------------------------------------------------------
    def set_library(self, library, exam_types: dict[str, str], modes: dict[str, str],
                    conditions: list[str]) -> None:
        """Fill the lists that come from the engine, then show the current values again."""
        self.library = library
        self.suggester.names = list(conditions)
        self._exam_ids = set(exam_types)
        with self.prevent(*_EVENTS):
            self.query_one(TargetPicker).set_targets(
                [(t.id, t.name, t.region) for t in library])
            self.query_one("#exam_type", Select).set_options(
                [("target's usual", AUTO)] + [(label, key) for key, label in exam_types.items()])
            chosen = set(self.values.get("modes") or ("b_mode",))
            self.mode_ids = tuple(modes)
            self.query_one("#modes").mount_all(
                [Tick(label, key in chosen, id=f"mode-{key}", compact=True)
                 for key, label in modes.items()])
        self.fill(self.values)

    def _window_options(self, target_id: str) -> list[tuple[str, str]]:
        options = [("automatic", AUTO)]
        if self.library is not None and target_id in self.library:
            options += [(w.name, w.id) for w in self.library.get(target_id).windows]
        return options

    def _show_side(self, target_id: str) -> None:
        """The side field only for a paired target (kidney, carotid, limb veins, ...)."""
        paired = (self.library is not None and target_id in self.library
                  and self.library.get(target_id).paired)
        self.query_one("#row-side").display = paired

    # -- reading and writing the form -------------------------------------------------------
    def raw_values(self) -> dict[str, Any]:
        """What the form holds now, as :func:`planner.tui.compute.parse_form` reads it."""
        out: dict[str, Any] = {name: self.query_one(f"#{name}", Input).value
                               for name in _TEXT_INPUTS}
        for name in _SELECTS:
            value = self.query_one(f"#{name}", Select).value
            out[name] = None if value in (AUTO, Select.NULL) else value
        out["target_id"] = self.query_one(TargetPicker).chosen_id
        out["modes"] = tuple(m for m in self.mode_ids
                             if self.query_one(f"#mode-{m}", Checkbox).value) \
            if self.mode_ids else tuple(self.values.get("modes") or ("b_mode",))
        for name in FLAGS:
            out[name] = self.query_one(f"#{name}", Checkbox).value
        for name in CARRIED:
            out[name] = self.values.get(name)
        self.values = dict(out)
        return out

    def fill(self, values: dict[str, Any]) -> None:
        """Show ``values`` (from :func:`planner.tui.compute.form_values`) without recomputing."""
        self.values = dict(values)
        with self.prevent(*_EVENTS):
            for name in _TEXT_INPUTS:
                self.query_one(f"#{name}", Input).value = str(values.get(name) or "")
            picker = self.query_one(TargetPicker)
            picker.choose(values["target_id"], announce=False)
            picker.refilter()
            window = self.query_one("#window_id", Select)
            window.set_options(self._window_options(values["target_id"]))
            ids = [value for _, value in self._window_options(values["target_id"])]
            window.value = values.get("window_id") if values.get("window_id") in ids else AUTO
            self.query_one("#side", Select).value = values.get("side") or AUTO
            self._show_side(values["target_id"])
            self.query_one("#sex", Select).value = values.get("sex") or AUTO
            self.query_one("#student_harmonic", Select).value = \
                values.get("student_harmonic") or AUTO
            exam = self.query_one("#exam_type", Select)
            known = values.get("exam_type") in self._exam_ids
            exam.value = values["exam_type"] if known else AUTO
            for mode in self.mode_ids:
                self.query_one(f"#mode-{mode}", Checkbox).value = mode in (values.get("modes") or ())
            for name in FLAGS:
                self.query_one(f"#{name}", Checkbox).value = bool(values.get(name))
        self.query_one("#signoff").display = bool(values.get("draft"))

    def show_signature(self, status: str, signed: dict[str, str] | None) -> None:
        """Show the signature's status line and, from a signature whose content is unchanged,
        the supervisor's name, time and comment (read-only fields; empty otherwise)."""
        self.query_one("#signature-status", Static).update(f"Sign-off: {status}")
        for name in SUPERVISOR_FIELDS:
            self.query_one(f"#{name}", Input).value = (signed or {}).get(name, "")

    def show_problems(self, problems: dict[str, str]) -> dict[str, str]:
        """Mark each field with its problem; return the problems no field shows."""
        rows = self._rows or {row.field: row for row in self.query(FieldRow)}
        self._rows = rows
        for name, row in rows.items():
            message = problems.get(name) or ""
            if message != row.error:
                row.set_error(message)
        return {k: v for k, v in problems.items() if k not in rows}

    # -- events -----------------------------------------------------------------------------
    @on(TargetPicked)
    def _target_picked(self, event: TargetPicked) -> None:
        event.stop()
        with self.prevent(Select.Changed):
            window = self.query_one("#window_id", Select)
            window.set_options(self._window_options(event.target_id))
            window.value = AUTO
            self.query_one("#side", Select).value = AUTO
        self._show_side(event.target_id)
        self.post_message(InputsEdited())

    @on(Checkbox.Changed, "#draft")
    def _draft_changed(self, event: Checkbox.Changed) -> None:
        self.query_one("#signoff").display = event.value

    @on(Input.Changed)
    @on(Select.Changed)
    @on(Checkbox.Changed)
    def _edited(self, event) -> None:
        event.stop()
        self.post_message(InputsEdited())

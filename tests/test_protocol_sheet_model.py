"""The typed protocol sheet: frozen slotted records, and one JSON edge with the same keys.

The reference for the JSON is the reviewed golden file ``tests/golden/sheets/upper-abdomen.json``
(written by ``scanplan protocol sheet --format json`` before the sheet became typed): the
serializer must give exactly its keys, at every level, and exactly its values.
"""

from __future__ import annotations

import dataclasses
import json
from pathlib import Path
from typing import Any

import pytest

from planner.protocol import sheet_render
from planner.protocol.sheet import render_sheet, sheet_from_file
from planner.protocol.sheet_model import Sheet, sheet_to_json_data
from planner.tui.screens import protocol as protocol_screen

ROOT = Path(__file__).parents[1]
UPPER = ROOT / "protocols" / "harbourside" / "upper-abdomen.yaml"
SURVEY = ROOT / "protocols" / "fellbrook" / "mid-trimester-survey.yaml"
LOCAL = ROOT / "protocols" / "examples" / "local-policy.yaml"
GOLDEN_JSON = ROOT / "tests" / "golden" / "sheets" / "upper-abdomen.json"
SCALARS = (str, int, float, bool, type(None))


@pytest.fixture(scope="module")
def upper() -> Sheet:
    return sheet_from_file(UPPER)


def _records(value: Any, path: str = "sheet"):
    """Every (path, record) reachable through the JSON fields of a sheet; fails on any
    container that is not a tuple or any value that is not a record or a scalar."""
    if dataclasses.is_dataclass(value) and not isinstance(value, type):
        yield path, value
        for f in dataclasses.fields(value):
            if f.metadata.get("json", True):
                yield from _records(getattr(value, f.name), f"{path}.{f.name}")
    elif isinstance(value, tuple):
        for n, item in enumerate(value):
            yield from _records(item, f"{path}[{n}]")
    else:
        assert isinstance(value, SCALARS), f"{path} is a {type(value).__name__}, not a record"


def _first_field(record: Any) -> str:
    return dataclasses.fields(record)[0].name


@pytest.mark.parametrize("kwargs", [{}, {"habitus": ("normal", "obese_3"), "local_path": LOCAL}],
                         ids=["upper-abdomen", "survey-local"])
def test_every_part_of_the_sheet_is_a_frozen_slotted_record(kwargs):
    sheet = sheet_from_file(SURVEY if kwargs else UPPER, **kwargs)
    found = list(_records(sheet))
    kinds = {type(r).__name__ for _, r in found}
    assert {"Sheet", "ProtocolFacts", "Preparation", "Personnel", "Equipment", "ProbeRef",
            "HabitusClass", "SheetView", "NamedRef", "SheetRow", "TimeSection", "LimitRow",
            "TableMaxTi", "PublishedTable", "PublishedRow", "SafetySection", "ProtocolLimits",
            "LocalPolicyRef", "SheetFinding", "SourcedValue"} <= kinds
    for path, record in found:
        params = type(record).__dataclass_params__
        assert params.frozen, path
        assert hasattr(type(record), "__slots__") and not hasattr(record, "__dict__"), path
        with pytest.raises(dataclasses.FrozenInstanceError):
            setattr(record, _first_field(record), None)


def _key_tree(value: Any, path: str = "$") -> set[str]:
    """Every key path of JSON data (list items merged under ``[]``)."""
    out: set[str] = set()
    if isinstance(value, dict):
        for key, item in value.items():
            out.add(f"{path}.{key}")
            out |= _key_tree(item, f"{path}.{key}")
    elif isinstance(value, list):
        for item in value:
            out |= _key_tree(item, f"{path}[]")
    return out


def test_json_serializer_gives_the_golden_keys_and_values(upper):
    """Same key paths as the reviewed golden JSON, then the same data, then the same text."""
    golden = json.loads(GOLDEN_JSON.read_text(encoding="utf-8"))
    data = sheet_to_json_data(upper)
    assert sorted(_key_tree(data) ^ _key_tree(golden)) == []
    assert json.loads(json.dumps(data)) == golden
    assert render_sheet(upper, "json") == GOLDEN_JSON.read_text(encoding="utf-8")


def test_json_serializer_leaves_the_plot_plans_out_and_stamps_kind_and_version(upper):
    data = sheet_to_json_data(upper)
    assert (data["kind"], data["schema_version"]) == ("protocol_sheet", 1)
    assert "plot_plans" not in data and len(upper.plot_plans) == len(upper.views)
    assert data["views"][0]["classes"][0]["class"] == upper.views[0].classes[0].class_id


@pytest.mark.parametrize("module", [sheet_render, protocol_screen],
                         ids=["sheet_render", "tui.protocol"])
def test_renderers_take_typed_sheet_parts_never_dicts(module):
    """No function of the renderers is annotated to take or return a dict or Any."""
    for name, obj in vars(module).items():
        if callable(obj) and getattr(obj, "__module__", None) == module.__name__:
            for arg, hint in getattr(obj, "__annotations__", {}).items():
                assert "dict" not in str(hint) and "Any" not in str(hint), (name, arg, hint)


def test_renderers_refuse_a_dict_shaped_sheet(upper):
    """A renderer reads attributes: JSON data handed to it fails loudly, not half-rendered."""
    data = sheet_to_json_data(upper)
    for render in (sheet_render.sheet_markdown, sheet_render.sheet_html,
                   protocol_screen.sheet_widgets):
        with pytest.raises(AttributeError):
            render(data)  # type: ignore[arg-type]


def test_each_row_names_where_its_reach_doubt_comes_from(upper):
    """The Band and start cell of every habitus class says which sampled input explains most of
    the spread of its reach (the plan's top driver), unless nearly everyone is reached."""
    from planner.engine.spread import INPUT_WORDS
    named = 0
    for view in upper.views:
        for row in view.classes:
            cell = sheet_render._cells(row)[2]
            band = row.band_mhz
            if not band.feasible or not band.drivers:
                continue
            top = band.drivers[0]
            narrows = top.explains > 0 and top.reach_range_mhz[1] - top.reach_range_mhz[0] >= 0.1
            assert (f"doubt mostly from {INPUT_WORDS[top.input]}" in cell) == narrows, cell
            named += narrows
    assert named > 0

"""planner.records: frozen records behave as frozen dataclasses do (the standard library's
``dataclasses`` documentation is the reference for each behaviour checked)."""

from __future__ import annotations

import dataclasses
import pickle

import pytest

from planner.records import record


@record
class Point:
    """A slotted record."""

    x: float
    y: float = 0.0
    label: str = dataclasses.field(default="", compare=False)
    tags: tuple = dataclasses.field(default=(), repr=False)


@record(slots=False)
class Loose:
    """A record with an instance dict."""

    items: tuple = ()


@record
class Empty:
    """No fields."""


@record
class One:
    """One field."""

    value: int


def test_a_record_is_a_frozen_dataclass():
    p = Point(1.0, 2.0)
    assert dataclasses.is_dataclass(p)
    assert [f.name for f in dataclasses.fields(p)] == ["x", "y", "label", "tags"]
    with pytest.raises(dataclasses.FrozenInstanceError):
        p.x = 3.0
    with pytest.raises(dataclasses.FrozenInstanceError):
        del p.y
    assert dataclasses.replace(p, x=5.0) == Point(5.0, 2.0)
    assert dataclasses.asdict(p) == {"x": 1.0, "y": 2.0, "label": "", "tags": ()}
    assert not hasattr(p, "__dict__") and hasattr(Loose(), "__dict__")


@pytest.mark.parametrize("cls, args", [(Point, (1.0, 2.0)), (Loose, ((1, 2),)), (Empty, ()),
                                       (One, (3,))])
def test_equality_and_hash_follow_the_compared_fields(cls, args):
    """Equal instances hash alike; equality only within one class (dataclasses returns
    NotImplemented for another class, so the comparison falls back to identity)."""
    a, b = cls(*args), cls(*args)
    assert a == b and hash(a) == hash(b) and not (a != b)
    assert a != object() and (a == args) is False
    assert len({a, b}) == 1


def test_fields_left_out_of_the_comparison_do_not_count():
    assert Point(1.0, label="a") == Point(1.0, label="b")
    assert hash(Point(1.0, label="a")) == hash(Point(1.0, label="b"))
    assert Point(1.0, tags=(1,)) != Point(1.0, tags=(2,))        # repr=False still compares
    assert Point(1.0) != Point(2.0) and One(1) != One(2)


def test_a_record_equals_the_dataclass_it_replaces_field_for_field():
    @dataclasses.dataclass(frozen=True, slots=True)
    class Reference:
        x: float
        y: float = 0.0
        label: str = dataclasses.field(default="", compare=False)
        tags: tuple = dataclasses.field(default=(), repr=False)

    for args in [(1.0, 2.0), (1.0, 2.0, "a", (1,)), (0.0,)]:
        ours, theirs = Point(*args), Reference(*args)
        assert repr(ours).replace("Point", "Reference", 1).replace(
            "test_a_record_equals_the_dataclass_it_replaces_field_for_field.<locals>.", "") \
            == repr(theirs).replace(
            "test_a_record_equals_the_dataclass_it_replaces_field_for_field.<locals>.", "")
        assert dataclasses.astuple(ours) == dataclasses.astuple(theirs)


def test_repr_names_the_shown_fields_and_survives_recursion():
    assert repr(Point(1.0, 2.0, "a", (1,))) == "Point(x=1.0, y=2.0, label='a')"
    box = Loose(([],))
    box.items[0].append(box)
    assert "..." in repr(box)


def test_a_record_pickles():
    assert pickle.loads(pickle.dumps(Point(1.0, 2.0, "a"))) == Point(1.0, 2.0, "a")

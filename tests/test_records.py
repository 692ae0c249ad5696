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


def test_construction_follows_the_generated_init():
    """Positional or keyword arguments in field order, defaults, default factories,
    ``init=False`` fields and ``__post_init__``, and the TypeErrors of a bad call, as the
    ``__init__`` that ``dataclasses`` generates behaves."""
    @record
    class Full:
        a: int
        b: list = dataclasses.field(default_factory=list)
        c: int = 3
        d: int = dataclasses.field(default=7, init=False)
        e: tuple = dataclasses.field(default_factory=tuple, init=False)

        def __post_init__(self):
            object.__setattr__(self, "c", self.c * 10)

    full = Full(1)
    assert (full.a, full.b, full.c, full.d, full.e) == (1, [], 30, 7, ())
    assert Full(1, [2], c=4).c == 40 and Full(a=5).a == 5
    assert Full(1).b is not Full(1).b                 # a fresh list per instance
    for bad in [lambda: Full(), lambda: Full(1, [], 3, 4), lambda: Full(1, a=2),
                lambda: Full(1, z=2), lambda: Full(1, d=2)]:
        with pytest.raises(TypeError):
            bad()
    assert Full.__match_args__ == ("a", "b", "c")
    assert [f.name for f in dataclasses.fields(Full)] == ["a", "b", "c", "d", "e"]


def test_bad_definitions_are_refused_as_dataclasses_refuses_them():
    with pytest.raises(TypeError):
        @record
        class Order:
            a: int = 1
            b: int
    with pytest.raises(ValueError):
        @record
        class Mutable:
            a: list = []


def test_a_record_extends_a_record():
    @record
    class Base:
        x: int
        y: int = 2

    @record
    class Child(Base):
        z: int = 5

    child = Child(1, z=9)
    assert (child.x, child.y, child.z) == (1, 2, 9)
    assert [f.name for f in dataclasses.fields(Child)] == ["x", "y", "z"]
    assert Child.__slots__ == ("z",) and not hasattr(child, "__dict__")
    assert child != Base(1, 2) and dataclasses.replace(child, y=0).y == 0


def test_a_loose_record_keeps_its_class_defaults_and_is_frozen():
    assert Loose.items == () and Loose().items == ()
    loose = Loose()
    with pytest.raises(dataclasses.FrozenInstanceError):
        loose.items = (1,)
    with pytest.raises(dataclasses.FrozenInstanceError):
        loose.other = 1

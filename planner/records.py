"""Frozen records: the project's immutable value types, defined at a small start-up cost.

:func:`record` makes a class behave as a frozen :mod:`dataclasses` dataclass: ``fields``,
``replace``, ``asdict`` and ``is_dataclass`` work (the class carries the same
``__dataclass_fields__`` of :class:`dataclasses.Field` objects), assigning or deleting a
field raises ``FrozenInstanceError``, instances pickle, and the class is slotted unless
told otherwise. What differs is how the methods are made. ``dataclasses`` writes
``__init__``, ``__setattr__``, ``__delattr__``, ``__eq__``, ``__hash__`` and ``__repr__``
as source text and compiles them for every class; on CPython 3.11 those compiles (and the
parsing of each string annotation) are most of the cost of defining a class, and a plan
imports about 90 of these classes before it prints anything. Here each method is written
once, as a closure or a shared function that reads the class's fields through tuples and
``operator.attrgetter`` made at decoration time, with the generated methods' meaning:

- ``__init__``: positional or keyword arguments in field order, defaults and default
  factories, fields with ``init=False`` set from their default, then ``__post_init__``;
  the same TypeErrors for a missing, repeated or unknown argument, and at definition a
  non-default field after a default one or an unhashable default is refused;
- equality: only between instances of the same class, field by field over the fields with
  ``compare=True`` (``NotImplemented`` otherwise, as ``dataclasses`` does);
- hash: over the fields whose ``hash`` (or, if None, ``compare``) is true;
- repr: ``ClassName(field=value, ...)`` over the fields with ``repr=True``, guarded against
  recursion.

Not supported (refused at definition): ``InitVar``, ``KW_ONLY`` and ``kw_only`` fields; no
record of this project uses them. A class without a docstring gets ``Name(field, ...)``
instead of the full signature (which would need :mod:`inspect`).

Measured on this project's machine (CPython 3.11.7), defining the 87 record classes a
``scanplan plan`` imports took 31-37 ms with ``dataclasses`` writing ``__init__`` and the
frozen ``__setattr__``/``__delattr__`` and 5.7 ms with these closures (wall time summed over
the decorations); constructing an instance costs the same within the benchmark's noise.
"""

from __future__ import annotations

import reprlib
from dataclasses import (  # type: ignore[attr-defined]
    _FIELD, _FIELD_CLASSVAR, _FIELDS, _PARAMS, KW_ONLY, MISSING, Field, FrozenInstanceError,
    _DataclassParams, field)
from operator import attrgetter
from typing import TYPE_CHECKING, Any, Callable, ClassVar, TypeVar, overload

if TYPE_CHECKING:
    from typing_extensions import dataclass_transform
else:
    def dataclass_transform(**_kwargs):
        """Runtime stand-in: the decorator only informs type checkers."""
        return lambda f: f

__all__ = ["record"]

T = TypeVar("T", bound=type)


def _key(names: tuple[str, ...]) -> Callable[[Any], tuple]:
    """A function giving the tuple of the named attributes of an instance."""
    if not names:
        return lambda obj: ()
    if len(names) == 1:
        one = attrgetter(names[0])
        return lambda obj: (one(obj),)
    return attrgetter(*names)


def _eq(self, other):
    if other.__class__ is self.__class__:
        key = self.__class__.__record_eq__
        return key(self) == key(other)
    return NotImplemented


def _hash(self):
    return hash(self.__class__.__record_hash__(self))


@reprlib.recursive_repr()
def _repr(self):
    cls = self.__class__
    values = cls.__record_repr__(self)
    body = ", ".join(f"{name}={value!r}" for name, value in zip(cls.__record_repr_names__, values))
    return f"{cls.__qualname__}({body})"


def _is_classvar(annotation: Any) -> bool:
    """Whether an annotation (text under postponed evaluation, or an object) is a ClassVar."""
    if isinstance(annotation, str):
        return annotation.startswith(("ClassVar", "typing.ClassVar", "t.ClassVar"))
    return annotation is ClassVar or getattr(annotation, "__origin__", None) is ClassVar


def _collect(cls: type) -> dict[str, Field]:
    """The class's fields in definition order: inherited records' first, then its own
    annotations (a ``ClassVar`` is kept as a pseudo-field, as :mod:`dataclasses` does)."""
    found: dict[str, Field] = {}
    for base in cls.__mro__[-1:0:-1]:
        inherited = base.__dict__.get(_FIELDS)
        if inherited:
            found.update(inherited)
    for name, annotation in cls.__dict__.get("__annotations__", {}).items():
        if annotation is KW_ONLY or isinstance(annotation, str) and annotation.startswith(
                ("InitVar", "KW_ONLY", "dataclasses.InitVar", "dataclasses.KW_ONLY")):
            raise TypeError(f"{cls.__qualname__}.{name}: record does not support InitVar or KW_ONLY")
        default = cls.__dict__.get(name, MISSING)
        made = default if isinstance(default, Field) else field(default=default)
        if made.kw_only is True:
            raise TypeError(f"{cls.__qualname__}.{name}: record does not support kw_only fields")
        made.name, made.type = name, annotation
        kind = _FIELD_CLASSVAR if _is_classvar(annotation) else _FIELD
        made._field_type = kind                                   # type: ignore[union-attr]
        if kind is _FIELD and made.default is not MISSING \
                and made.default.__class__.__hash__ is None:
            raise ValueError(f"mutable default {type(made.default)} for field {name} is not "
                             "allowed: use default_factory")
        found[name] = made
    return found


def _make_init(qualname: str, fs: list[Field], post_init: bool) -> Callable[..., None]:
    """One ``__init__`` for the fields, with the generated one's meaning (positional or
    keyword arguments in field order, defaults and default factories, fields with
    ``init=False`` set from their default, then ``__post_init__``), built from closures
    rather than compiled from source text."""
    names = tuple(f.name for f in fs if f.init)
    defaults = {f.name: f.default for f in fs if f.init and f.default is not MISSING}
    factories = {f.name: f.default_factory for f in fs
                 if f.init and f.default_factory is not MISSING}
    late = tuple((f.name, f.default_factory if f.default_factory is not MISSING
                  else (lambda value=f.default: value))
                 for f in fs if not f.init and (f.default is not MISSING
                                                or f.default_factory is not MISSING))
    seen_default = False
    for f in fs:
        if not f.init:
            continue
        if f.name in defaults or f.name in factories:
            seen_default = True
        elif seen_default:
            raise TypeError(f"non-default argument {f.name!r} follows default argument")
    count = len(names)
    setter = object.__setattr__

    def __init__(self, *args, **kwargs):
        given = len(args)
        if given > count:
            raise TypeError(f"{qualname}.__init__() takes {count + 1} positional arguments "
                            f"but {given + 1} were given")
        for name, value in zip(names, args):
            setter(self, name, value)
        if given < count or kwargs:
            for name in names[given:]:
                if name in kwargs:
                    value = kwargs.pop(name)
                elif name in defaults:
                    value = defaults[name]
                elif name in factories:
                    value = factories[name]()
                else:
                    raise TypeError(f"{qualname}.__init__() missing 1 required argument: "
                                    f"{name!r}")
                setter(self, name, value)
            if kwargs:
                extra = next(iter(kwargs))
                if extra in names:
                    raise TypeError(f"{qualname}.__init__() got multiple values for "
                                    f"argument {extra!r}")
                raise TypeError(f"{qualname}.__init__() got an unexpected keyword argument "
                                f"{extra!r}")
        for name, make in late:
            setter(self, name, make())
        if post_init:
            self.__post_init__()

    return __init__


def _frozen(cls: type, names: frozenset[str]) -> tuple[Callable, Callable]:
    """``__setattr__`` and ``__delattr__`` refusing the fields, as :mod:`dataclasses` makes
    them for a frozen class."""
    def __setattr__(self, name, value):
        if type(self) is cls or name in names:
            raise FrozenInstanceError(f"cannot assign to field {name!r}")
        super(cls, self).__setattr__(name, value)

    def __delattr__(self, name):
        if type(self) is cls or name in names:
            raise FrozenInstanceError(f"cannot delete field {name!r}")
        super(cls, self).__delattr__(name)

    return __setattr__, __delattr__


def _getstate(self):
    return [getattr(self, name) for name in self.__class__.__record_names__]


def _setstate(self, state):
    for name, value in zip(self.__class__.__record_names__, state):
        object.__setattr__(self, name, value)


def _params(slots: bool) -> Any:
    """``__dataclass_params__`` for a frozen record (its constructor grew arguments in later
    Pythons; each is given by name where it exists)."""
    wanted = {"init": True, "repr": True, "eq": True, "order": False, "unsafe_hash": False,
              "frozen": True, "match_args": True, "kw_only": False, "slots": slots,
              "weakref_slot": False}
    code = _DataclassParams.__init__.__code__
    accepted = code.co_varnames[1:code.co_argcount]
    return _DataclassParams(**{name: wanted.get(name, False) for name in accepted})


_PARAMS_VALUE = {True: _params(True), False: _params(False)}
"""The parameters of slotted and of loose records (shared: they are never changed)."""


def _finish(cls: T, slots: bool) -> T:
    found = _collect(cls)
    fs = [f for f in found.values() if f._field_type is _FIELD]  # type: ignore[attr-defined]
    names = tuple(f.name for f in fs)
    own = dict(cls.__dict__)
    for f in fs:
        if f.name in own:
            if slots or f.default is MISSING:
                del own[f.name]
            else:
                own[f.name] = f.default
    if slots:
        if "__slots__" in own:
            raise TypeError(f"{cls.__name__} already specifies __slots__")
        inherited: set[str] = set()
        for base in cls.__mro__[1:-1]:
            declared = base.__dict__.get("__slots__", ())
            inherited.update((declared,) if isinstance(declared, str) else declared)
        own["__slots__"] = tuple(name for name in names if name not in inherited)
        own.pop("__dict__", None)
        own.pop("__weakref__", None)
        made = type(cls)(cls.__name__, cls.__bases__, own)
        made.__qualname__ = cls.__qualname__
        if "__getstate__" not in own:
            made.__getstate__ = _getstate                     # type: ignore[method-assign,assignment]
        if "__setstate__" not in own:
            made.__setstate__ = _setstate                     # type: ignore[attr-defined]
        cls = made                                            # type: ignore[assignment]
    else:
        for name in names:
            if name in cls.__dict__ and name not in own:
                delattr(cls, name)
            elif name in own:
                setattr(cls, name, own[name])
    setattr(cls, _FIELDS, found)
    setattr(cls, _PARAMS, _PARAMS_VALUE[slots])
    cls.__record_names__ = names                              # type: ignore[attr-defined]
    if "__init__" not in own:
        cls.__init__ = _make_init(cls.__qualname__, fs,       # type: ignore[misc]
                                  hasattr(cls, "__post_init__"))
    if "__match_args__" not in own:
        cls.__match_args__ = tuple(f.name for f in fs if f.init)  # type: ignore[attr-defined,misc]
    cls.__setattr__, cls.__delattr__ = _frozen(cls, frozenset(names))  # type: ignore[method-assign,assignment]
    compared = tuple(f.name for f in fs if f.compare)
    hashed = tuple(f.name for f in fs if (f.compare if f.hash is None else f.hash))
    shown = tuple(f.name for f in fs if f.repr)
    cls.__record_eq__ = staticmethod(_key(compared))          # type: ignore[attr-defined]
    cls.__record_hash__ = staticmethod(_key(hashed))          # type: ignore[attr-defined]
    cls.__record_repr__ = staticmethod(_key(shown))           # type: ignore[attr-defined]
    cls.__record_repr_names__ = shown                         # type: ignore[attr-defined]
    if "__eq__" not in own:
        cls.__eq__ = _eq                                      # type: ignore[assignment]
    if "__hash__" not in own or own["__hash__"] is None:
        cls.__hash__ = _hash                                  # type: ignore[assignment]
    if "__repr__" not in own:
        cls.__repr__ = _repr                                  # type: ignore[assignment]
    if not cls.__dict__.get("__doc__"):
        cls.__doc__ = f"{cls.__name__}({', '.join(names)})"
    return cls


@overload
def record(cls: T, /) -> T: ...
@overload
def record(*, slots: bool = True) -> Callable[[T], T]: ...


@dataclass_transform(frozen_default=True, eq_default=True, field_specifiers=(field, Field))
def record(cls=None, /, *, slots=True):
    """Decorate a class as a frozen record (see the module docstring); ``slots=False`` keeps
    an instance ``__dict__`` (needed by ``functools.cached_property``)."""
    if cls is None:
        return lambda c: _finish(c, slots)
    return _finish(cls, slots)

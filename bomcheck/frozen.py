"""Frozen value classes that are quick to define: ``@frozen`` is ``@dataclass(frozen=True)`` whose
comparison, hash and repr are shared functions instead of code compiled for each class.

Python 3.11's ``dataclass`` writes the source of every generated method and compiles it with
``exec``, about 0.1-0.2 ms a method; a frozen class gets six of them (seven more with ``order``),
and the package defines dozens of such classes, so their definition was a large part of the
import time of every run. Here the stdlib still builds the fields, ``__init__`` and the frozen
``__setattr__``/``__delattr__`` (the parts whose exact behaviour matters most), and ``__eq__``,
``__hash__``, ``__repr__`` and the orderings are closures over the field names: the same
results as the generated ones (tuples of the compared fields, the class's qualified name and each
``repr=True`` field in the repr), with nothing to compile. A method the class body defines itself
is kept, as ``dataclass`` keeps it.
"""

from __future__ import annotations

import dataclasses
import reprlib
from collections.abc import Callable
from operator import attrgetter
from typing import Any, TypeVar

__all__ = ["frozen"]

T = TypeVar("T", bound=type)

_ORDER = {"__lt__": tuple.__lt__, "__le__": tuple.__le__, "__gt__": tuple.__gt__,
          "__ge__": tuple.__ge__}


def frozen(cls: T | None = None, /, *, order: bool = False) -> Any:
    """``@frozen`` / ``@frozen(order=True)``: as ``@dataclass(frozen=True[, order=True])``."""
    if cls is None:
        return lambda c: _make(c, order)
    return _make(cls, order)


def _values(names: tuple[str, ...]) -> Callable[[Any], tuple]:
    """A function giving the tuple of an instance's ``names`` fields, in order (``attrgetter``
    gives a tuple for two names or more)."""
    if len(names) > 1:
        return attrgetter(*names)
    if names:
        get = attrgetter(names[0])
        return lambda obj: (get(obj),)
    return lambda obj: ()


def _make(cls: T, order: bool) -> T:
    body = dict(cls.__dict__)
    defined_order = [n for n in _ORDER if n in body]
    if order and defined_order:  # as dataclass: order=True and an own ordering contradict
        raise TypeError(f"Cannot overwrite attribute {defined_order[0]} in class "
                        f"{cls.__name__}. Consider using functools.total_ordering")
    cls = dataclasses.dataclass(cls, frozen=True, eq=False, repr=False)
    fields = dataclasses.fields(cls)  # the fields proper (no ClassVar / InitVar)
    compared = _values(tuple(f.name for f in fields if f.compare))
    shown = tuple(f.name for f in fields if f.repr)

    @reprlib.recursive_repr()
    def __repr__(self) -> str:
        return (f"{self.__class__.__qualname__}("
                + ", ".join([f"{n}={getattr(self, n)!r}" for n in shown]) + ")")

    def __eq__(self, other: Any) -> Any:
        if other.__class__ is self.__class__:
            return compared(self) == compared(other)
        return NotImplemented

    hashed = _values(tuple(f.name for f in fields
                           if (f.compare if f.hash is None else f.hash)))

    def __hash__(self) -> int:
        return hash(hashed(self))

    methods: dict[str, Callable] = {"__repr__": __repr__, "__eq__": __eq__}
    # dataclass keeps a __hash__ the body defines (a body defining only __eq__ gets None from
    # Python, which does not count as defined)
    if not ("__hash__" in body and not (body["__hash__"] is None and "__eq__" in body)):
        methods["__hash__"] = __hash__
    if order:
        methods.update({name: _ordering(op, compared) for name, op in _ORDER.items()})
    for name, fn in methods.items():
        if name == "__hash__" or name not in body:
            fn.__qualname__ = f"{cls.__qualname__}.{name}"
            setattr(cls, name, fn)
    return cls


def _ordering(op: Callable[[tuple, tuple], bool],
              compared: Callable[[Any], tuple]) -> Callable[[Any, Any], Any]:
    """An ordering method comparing the tuples of compared fields of two instances of a class."""
    def method(self: Any, other: Any) -> Any:
        if other.__class__ is self.__class__:
            return op(compared(self), compared(other))
        return NotImplemented
    return method

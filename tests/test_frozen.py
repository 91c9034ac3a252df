"""``bomcheck.frozen``: a ``@frozen`` class behaves as ``@dataclass(frozen=True)`` does (source: the
Python 3.11 ``dataclasses`` documentation: equality and hash over the compared fields' tuple, repr of
the ``repr=True`` fields, FrozenInstanceError on assignment, ``order`` by the fields' tuple)."""

import copy
import dataclasses
import pickle
from dataclasses import FrozenInstanceError, dataclass, field
from typing import ClassVar

import pytest

from bomcheck.frozen import frozen


def _point(deco):
    class Point:
        """A point."""

        x: int
        label: str = "p"
        notes: list = field(default_factory=list, compare=False, hash=False)
        weight: float = field(default=1.0, repr=False)
        ORIGIN: ClassVar[int] = 0

    Point.__qualname__ = "Point"
    return deco(Point)


STD, OURS = _point(dataclass(frozen=True)), _point(frozen)


@frozen
class Pickled:
    a: int
    b: tuple = ()


@pytest.mark.parametrize("cls", [STD, OURS], ids=["dataclass", "frozen"])
def test_equality_hash_and_repr_follow_the_compared_fields(cls):
    a, b, c = cls(1, "a", [1], 2.0), cls(1, "a", [2], 2.0), cls(2)
    assert a == b and hash(a) == hash(b) == hash((1, "a", 2.0))
    assert a != c and (a == 1) is False and a.__eq__(1) is NotImplemented
    assert repr(a) == "Point(x=1, label='a', notes=[1])"
    assert dataclasses.replace(a, x=5).x == 5 and copy.deepcopy(a) == a
    assert [f.name for f in dataclasses.fields(cls)] == ["x", "label", "notes", "weight"]
    assert cls.__match_args__ == ("x", "label", "notes", "weight")


@pytest.mark.parametrize("cls", [STD, OURS], ids=["dataclass", "frozen"])
@pytest.mark.parametrize("change", [lambda p: setattr(p, "x", 2), lambda p: setattr(p, "new", 2),
                                    lambda p: delattr(p, "x")], ids=["assign", "add", "delete"])
def test_instances_cannot_change(cls, change):
    with pytest.raises(FrozenInstanceError):
        change(cls(1))


def test_the_same_results_as_the_dataclass_it_stands_for():
    for args in [(1,), (1, "b", [3], 0.5), (0, "", [], 1.0)]:
        ours, std = OURS(*args), STD(*args)
        assert repr(ours) == repr(std) and hash(ours) == hash(std)


def test_order_sorts_by_the_fields_tuple():
    @frozen(order=True)
    class Key:
        name: str
        n: int = 0

    keys = [Key("b"), Key("a", 2), Key("a", 1)]
    assert sorted(keys) == [Key("a", 1), Key("a", 2), Key("b")]
    assert Key("a") <= Key("a") and Key("b") > Key("a") and Key("a") >= Key("a")
    with pytest.raises(TypeError):
        Key("a") < 1  # noqa: B015


def test_a_method_the_class_defines_is_kept():
    @frozen
    class Named:
        name: str

        def __repr__(self) -> str:
            return f"<{self.name}>"

        def __eq__(self, other) -> bool:
            return isinstance(other, Named) and other.name.lower() == self.name.lower()

        def __hash__(self) -> int:
            return hash(self.name.lower())

    assert repr(Named("A")) == "<A>" and Named("A") == Named("a")
    assert hash(Named("A")) == hash(Named("a"))


def test_instances_pickle():
    p = Pickled(1, (2,))
    assert pickle.loads(pickle.dumps(p)) == p

"""Tests of bomcheck.evaluate.checks: the registry of check kinds and their margins."""

from __future__ import annotations

import numpy as np
import pytest

from bomcheck.evaluate import engine
from bomcheck.evaluate.checks import CHECKS, check_kind, margin_max, margin_min


def test_margins_are_positive_inside_the_limit():
    value, limit = np.array([1.0, 3.0, 5.0]), np.array([3.0, 3.0, 3.0])
    assert margin_max(value, limit).tolist() == [2.0, 0.0, -2.0]
    assert margin_min(value, limit).tolist() == [-2.0, 0.0, 2.0]


@pytest.mark.parametrize("name, inside, outside, side", [
    ("max", "<=", ">", "at or below"),
    ("min", ">=", "<", "at or above"),
])
def test_each_kind_reads_its_own_way(name, inside, outside, side):
    kind = check_kind(name)
    assert (kind.name, kind.inside, kind.outside, kind.warn_side) == (name, inside, outside, side)


def test_unknown_kind_lists_the_valid_ones():
    with pytest.raises(ValueError, match="unknown check kind 'between'; expected one of: max, min"):
        check_kind("between")


def test_the_engine_reads_the_one_registry():
    assert engine.CHECKS is CHECKS

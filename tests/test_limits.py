"""Read stage (bomcheck/read/limits.py): the size limits every input is held to, set once per run
and read by the readers; every limit the command line raises names its option."""

from __future__ import annotations

import dataclasses

import pytest

from bomcheck.read.limits import MIB, OPTION, Limits, current, hint, use_limits


def test_defaults_are_far_above_a_real_board():
    # A real BOM has at most a few thousand placements and rows (common practice).
    d = Limits()
    assert d.placements >= 10_000 and d.rows >= 100_000 and d.file_bytes >= 100 * MIB
    assert d.cells >= d.rows and d.cell_placements <= d.placements
    assert d.include_hidden is False


def test_with_options_replaces_only_the_given_known_limits():
    d = Limits()
    got = d.with_options(rows=10, columns=None, placements=5, unknown=3)
    assert (got.rows, got.placements) == (10, 5)
    assert got.columns == d.columns and got.file_bytes == d.file_bytes
    assert d.rows == Limits().rows  # the original is unchanged (frozen value)
    with pytest.raises(dataclasses.FrozenInstanceError):
        d.rows = 1  # type: ignore[misc]


def test_use_limits_holds_inside_the_block_and_restores_after():
    # Python contextvars semantics: a set value is restored by its token.
    before = current()
    with use_limits(Limits(rows=7)) as lim:
        assert current() is lim and current().rows == 7
        with use_limits(Limits(rows=3)):
            assert current().rows == 3
        assert current().rows == 7
    assert current() == before


def test_use_limits_restores_after_an_error():
    # Python context-manager protocol: the finally clause runs on an error.
    before = current()
    with pytest.raises(RuntimeError), use_limits(Limits(rows=1)):
        raise RuntimeError("boom")
    assert current() == before


def test_every_option_names_a_limit_and_the_hint_says_how_to_raise_it():
    # Project rule: a refused file names the limit and the option that raises it.
    names = {f.name for f in dataclasses.fields(Limits)}
    assert set(OPTION) <= names
    for name, opt in OPTION.items():
        assert opt.startswith("--") and opt in hint(name)
    assert hint("zip_ratio") == "a fixed limit"

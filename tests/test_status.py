"""The one definition of verdict statuses (bomcheck/status.py): their order, ranks, the worst of
several and "at least"; the project's no-wrong-pass rule fixes the order (nodata is worse than a
warning, a waiver better than a warning)."""

from __future__ import annotations

import pytest

from bomcheck.status import BASES, RANK, RULE_STATUSES, STATUS_ORDER, at_least, rank, worst


@pytest.mark.parametrize(("statuses", "expected"), [
    ((), "pass"), (("pass",), "pass"), (("pass", "warn"), "warn"),
    # No wrong pass (project rule): an unchecked stress may be anything, so nodata outranks warn.
    (("warn", "nodata", "pass"), "nodata"), (("nodata", "fail"), "fail"),
    (("waived", "pass"), "waived"), (("waived", "warn"), "warn"),
])
def test_worst(statuses, expected):
    assert worst(statuses) == expected


def test_worst_reads_an_iterator_once():
    # Python iterator protocol: a generator of statuses can be read only once.
    assert worst(iter(["pass", "fail", "warn"])) == "fail"


def test_rank_follows_the_order_and_an_unknown_text_ranks_as_pass():
    # One status order (issue 12: one status module with order and rank).
    assert [rank(s) for s in STATUS_ORDER] == list(range(len(STATUS_ORDER)))
    assert rank("no such status") == rank("pass") == 0
    assert RANK == {s: i for i, s in enumerate(STATUS_ORDER)}


@pytest.mark.parametrize(("status", "level", "expected"), [
    ("fail", "warn", True), ("warn", "warn", True), ("nodata", "warn", True),
    ("waived", "warn", False), ("pass", "pass", True), ("warn", "fail", False),
])
def test_at_least(status, level, expected):
    # The exit-code threshold (project rule: 1 for findings at or above the chosen level).
    assert at_least(status, level) is expected


def test_at_least_refuses_an_unknown_level():
    # A threshold that names no status is a bug in the caller, not a pass.
    with pytest.raises(KeyError):
        at_least("fail", "severe")


def test_rules_give_every_status_but_waived_and_bases_run_from_firm_to_missing():
    # A waiver, not a rule, waives (module docstring); bases in increasing doubt.
    assert set(RULE_STATUSES) == set(STATUS_ORDER) - {"waived"}
    assert BASES[0] == "firm" and BASES[-1] == "missing" and len(set(BASES)) == 4


def test_status_order_puts_waived_between_pass_and_warn():
    assert STATUS_ORDER == ("pass", "waived", "warn", "nodata", "fail")

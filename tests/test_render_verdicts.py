"""What the text writers read from a report (bomcheck.render.verdicts): the governing verdicts, each
placement's problems and waivers, and the rows not audited, on a hand-built report."""

import math
from dataclasses import replace

import pandas as pd
import pytest
from tiny_reports import tiny_report

from bomcheck.render.verdicts import (bom_rows, governing, has_text, not_audited_counts,
                                      problems_by_placement, waived_by_placement)


@pytest.mark.parametrize("value, expected", [
    ("x", True), ("0", True), (0, True), ("", False), (None, False), (math.nan, False),
])
def test_has_text(value, expected):
    assert has_text(value) is expected


def test_governing_is_one_verdict_per_placement():
    gov = governing(tiny_report())
    assert list(gov.index) == [0, 1, 2, 3, 4]
    assert list(gov["status"]) == ["pass", "fail", "warn", "nodata", "waived"]


def test_governing_of_no_verdicts_is_an_empty_frame_with_its_columns():
    report = tiny_report()
    empty = report.verdicts.iloc[:0]
    gov = governing(replace(report, verdicts=empty))
    assert len(gov) == 0 and {"rule_id", "status", "message"} <= set(gov.columns)


def test_problems_are_every_verdict_not_passing_by_placement():
    problems = problems_by_placement(tiny_report())
    assert sorted(problems) == [1, 2, 3, 4]  # C1 passes every rule
    assert problems[1] == [("fail", "R-V", "C2: ratio 80 % > 70 % limit")]  # R-T passes
    assert problems[3] == [("nodata", "R-V", "C4: no data: missing applied voltage")]
    assert problems[4][0][0] == "waived"


def test_waivers_by_placement_name_rule_former_status_and_reason():
    assert waived_by_placement(tiny_report()) == {4: "R-V (was fail): test report TR-9"}
    report = tiny_report()
    plain = report.verdicts.drop(columns=["waived_from", "waiver_reason"])
    assert waived_by_placement(replace(report, verdicts=plain)) == {}


def test_not_audited_counts_by_kind_in_row_order():
    assert not_audited_counts(tiny_report()) == {"not_fitted": 1, "not_capacitor": 1}
    report = tiny_report()
    more = pd.concat([report.skipped, report.skipped.assign(row=9)], ignore_index=True)
    counts = not_audited_counts(replace(report, skipped=more))
    assert counts == {"not_fitted": 1, "not_capacitor": 2}


def test_bom_rows_are_each_verdicts_placement_row_and_missing_elsewhere():
    report = tiny_report()
    v = report.verdicts
    expected = [int(report.table["row"][p]) for p in v["pidx"]]
    assert bom_rows(report, v) == expected
    stray = pd.DataFrame({"pidx": [0, len(report.table) + 5, -1]})
    assert bom_rows(report, stray, 1) == [int(report.table["row"][0]), 1, 1]
    assert bom_rows(report, stray)[1:] == [None, None]

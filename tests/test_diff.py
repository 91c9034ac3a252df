"""Release-to-release comparison of two JSON reports (bomcheck.report.diff); `bomcheck diff` is in
test_commands.py, its Markdown in test_markdown.py."""

import json

import pytest

from diff_reports import NEW, NEW_SPEC, OLD, OLD_SPEC, report, report_v2

from bomcheck.report.diff import VerdictChange, compare, report_digest, summary_line
from bomcheck.errors import InputError


def test_one_new_one_resolved_one_changed():
    d = compare(OLD, NEW)
    assert d.changed == (VerdictChange("C1", "R-V", "pass", "fail", None, "C1: R-V fail"),)
    assert d.resolved == (
        VerdictChange("C2", "R-T", "warn", None, "C2: R-T warn", None),
        VerdictChange("C5", "R-V", "fail", None, "C5: R-V fail", None),
    )
    assert d.new_verdicts == (VerdictChange("C3", "R-V", None, "fail", None, "C3: R-V fail"),)
    assert (d.added, d.removed) == (("C3",), ("C5",))
    assert [(c.refdes, c.rule) for c in d.new_problems] == [("C3", "R-V"), ("C1", "R-V")]
    assert d.counts() == {"new": 1, "resolved": 2, "changed": 1, "added": 1, "removed": 1,
                          "new_problems": 2}


def test_same_report_has_no_changes():
    d = compare(NEW, NEW)
    assert d.counts() == dict.fromkeys(("new", "resolved", "changed", "added", "removed",
                                        "new_problems"), 0)


@pytest.mark.parametrize("old, new, problem", [
    ("fail", "warn", False),     # better
    ("fail", "waived", False),   # waived ranks just above pass
    ("waived", "fail", True),    # the waiver expired or was removed
    ("pass", "waived", False),
    ("warn", "nodata", True),    # order warn < nodata < fail
    ("pass", "warn", True),
])
def test_worsened_verdicts_are_problems(old, new, problem):
    d = compare(report({"C1": [("R-V", old)]}), report({"C1": [("R-V", new)]}))
    assert [c.is_problem for c in d.changed] == [problem]


def test_new_passing_verdicts_are_no_problem_and_stay_out_of_the_table():
    d = compare(report({"C1": [("R-V", "pass")]}),
                report({"C1": [("R-V", "pass")], "C2": [("R-V", "pass")]}))
    assert len(d.new_verdicts) == 1 and d.new_problems == ()
    assert d.rows() == [] and len(d.rows(include_pass=True)) == 1


def test_designators_in_natural_order():
    d = compare(report({}), report({r: [("R-V", "fail")] for r in ("C10", "C2", "C1")}))
    assert [c.refdes for c in d.new_verdicts] == ["C1", "C2", "C10"]
    assert d.added == ("C1", "C2", "C10")


def test_summary_line_names_rule_set_change():
    d = compare(report({}, rulesets=("industrial 1.0",)), report({}, rulesets=("strict 1.0",)))
    assert summary_line(d) == ("0 new problems; verdicts: 0 new, 0 resolved, 0 changed; "
                               "placements: 0 added, 0 removed (rule sets differ: industrial 1.0 "
                               "-> strict 1.0)")


def test_not_a_report_is_an_input_error():
    with pytest.raises(InputError, match="not a bomcheck JSON report"):
        compare({"hello": 1}, NEW)


def test_schema_2_reports_compare_alike_and_with_schema_1():
    assert compare(report_v2(OLD_SPEC), report_v2(NEW_SPEC)).to_dict() == \
        compare(OLD, NEW).to_dict()
    # a baseline written before schema 2 still compares with a new report
    assert compare(OLD, report_v2(NEW_SPEC)).counts() == compare(OLD, NEW).counts()


def test_combined_reports_compare_board_by_board():
    old = {"boards": [{"product": "A", "report": report_v2(OLD_SPEC)},
                      {"product": "B", "report": report_v2(OLD_SPEC)}]}
    new = {"boards": [{"product": "A", "report": report_v2(OLD_SPEC)},
                      {"product": "B", "report": report_v2(NEW_SPEC)}]}
    d = compare(old, new)
    assert d.changed == (VerdictChange("B/C1", "R-V", "pass", "fail", None, "C1: R-V fail"),)
    assert d.added == ("B/C3",) and d.removed == ("B/C5",)


def test_report_digest_compares_as_the_written_report(sample_report_bare):
    """The digest `audit --baseline` compares (taken from the tables) gives the same comparison
    as the JSON report written by --json."""
    report = sample_report_bare
    written = json.loads(report.to_json())
    for old in (OLD, written):
        assert compare(old, report_digest(report)).to_dict() == compare(old, written).to_dict()
    assert compare(written, report_digest(report)).counts()["changed"] == 0

"""Release-to-release comparison of two JSON reports (bomcheck.report.diff) and `bomcheck diff`."""

import json

import pytest

from bomcheck.cli.main import main
from bomcheck.render.markdown import diff_markdown
from bomcheck.report.diff import VerdictChange, compare, summary_line
from bomcheck.errors import InputError


def report(placements: dict, rulesets=("tiny 1",)) -> dict:
    """A minimal schema 1 JSON report: {refdes: [(rule, status), ...]} (passes under "checks")."""
    out = []
    for refdes, verdicts in placements.items():
        out.append({
            "refdes": refdes,
            "findings": [{"rule": r, "status": s, "message": f"{refdes}: {r} {s}"}
                         for r, s in verdicts if s != "pass"],
            "checks": [{"rule": r, "value": 0.1, "limit": 0.7, "margin": 0.6}
                       for r, s in verdicts if s == "pass"],
        })
    return {"tool": {"name": "bomcheck", "version": "0.0-test"}, "status": "fail",
            "rulesets": [{"name": n.split()[0], "version": n.split()[1]} for n in rulesets],
            "placements": out}


OLD_SPEC = {
    "C1": [("R-V", "pass"), ("R-T", "pass")],
    "C2": [("R-V", "pass"), ("R-T", "warn")],
    "C10": [("R-V", "fail")],
    "C5": [("R-V", "fail")],
}
NEW_SPEC = {
    "C1": [("R-V", "fail"), ("R-T", "pass")],    # changed: pass -> fail (worse)
    "C2": [("R-V", "pass")],                     # resolved: R-T warn gone
    "C3": [("R-V", "fail")],                     # added placement with a new failing verdict
    "C10": [("R-V", "fail")],                    # unchanged
}
OLD, NEW = report(OLD_SPEC), report(NEW_SPEC)


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


def test_markdown_lists_problems_first():
    md = diff_markdown(compare(OLD, NEW))
    table = [ln for ln in md.splitlines() if ln.startswith("| ") and "refdes" not in ln]
    assert table == [
        "| changed (new problem) | C1 | R-V | pass | fail |",
        "| new (new problem) | C3 | R-V |  | fail |",
        "| resolved | C2 | R-T | warn |  |",
        "| resolved | C5 | R-V | fail |  |",
    ]
    assert "Placements added: C3." in md and "Placements removed: C5." in md


def test_not_a_report_is_an_input_error():
    with pytest.raises(InputError, match="not a bomcheck JSON report"):
        compare({"hello": 1}, NEW)


# --------------------------------------------------------------------------------------------
# CLI

@pytest.fixture
def pair(tmp_path):
    old, new = tmp_path / "old.json", tmp_path / "new.json"
    old.write_text(json.dumps(OLD), encoding="utf-8")
    new.write_text(json.dumps(NEW), encoding="utf-8")
    return str(old), str(new)


def test_cli_diff_exit_status_with_fail_on_new(pair, capsys):
    old, new = pair
    assert main(["diff", old, new]) == 0                    # a comparison alone never fails
    assert main(["diff", old, new, "--fail-on", "new"]) == 1
    assert main(["diff", new, new, "--fail-on", "new"]) == 0
    # the way back resolves C3 and improves C1, but C5 comes back as a new failure
    assert main(["diff", new, old, "--fail-on", "new"]) == 1
    out = capsys.readouterr().out
    assert "Changes since the baseline" in out and "new problem" in out


def test_cli_diff_json_and_markdown(pair, tmp_path, capsys):
    old, new = pair
    out_json, out_md = tmp_path / "d.json", tmp_path / "d.md"
    assert main(["diff", old, new, "--json", str(out_json), "--markdown", str(out_md)]) == 0
    data = json.loads(out_json.read_text(encoding="utf-8"))
    assert data["counts"]["new_problems"] == 2
    assert data["changed"] == [{"refdes": "C1", "rule": "R-V", "old_status": "pass",
                                "new_status": "fail", "old_message": None,
                                "new_message": "C1: R-V fail"}]
    assert (data["old"]["label"], data["new"]["label"]) == (old, new)
    assert out_md.read_text(encoding="utf-8") == diff_markdown(compare(OLD, NEW, old_label=old,
                                                                       new_label=new))
    capsys.readouterr()
    assert main(["diff", old, new, "--json", "-"]) == 0
    assert json.loads(capsys.readouterr().out)["counts"]["changed"] == 1


def test_cli_diff_bad_file_is_one_line_error(tmp_path, capsys):
    bad = tmp_path / "bad.json"
    bad.write_text("{not json", encoding="utf-8")
    assert main(["diff", str(bad), str(bad)]) == 2
    err = capsys.readouterr().err
    assert err.startswith("bomcheck: error: ") and err.count("\n") == 1
    assert "Traceback" not in err


def report_v2(placements: dict) -> dict:
    """The same minimal report in schema 2: one "verdicts" list, no message on a pass."""
    old = report(placements)
    for p in old["placements"]:
        p["verdicts"] = sorted(
            [{"rule": f["rule"], "status": f["status"], "message": f["message"]}
             for f in p.pop("findings")]
            + [{"rule": c["rule"], "status": "pass", "margin": c["margin"]}
               for c in p.pop("checks")], key=lambda v: v["rule"])
    return {"schema_version": 2, **old}


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


def test_report_digest_compares_as_the_written_report():
    """The digest `audit --baseline` compares (taken from the tables) gives the same comparison
    as the JSON report written by --json."""
    from pathlib import Path

    from bomcheck.pipeline.audit import run_audit
    from bomcheck.report.diff import report_digest

    root = Path(__file__).resolve().parents[1] / "sample_boms"
    report = run_audit(str(root / "bw7-controller-bom.csv"), str(root / "bw7-design.csv"))
    written = json.loads(report.to_json())
    for old in (OLD, written):
        assert compare(old, report_digest(report)).to_dict() == compare(old, written).to_dict()
    assert compare(written, report_digest(report)).counts()["changed"] == 0

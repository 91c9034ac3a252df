"""The report value (bomcheck.report.model.Report): the one order of every output (worst_first,
verdicts_worst_first), the governing verdict, the overall status and what was not audited."""

from __future__ import annotations

import json
import math
from dataclasses import replace
from types import SimpleNamespace

import numpy as np
import pandas as pd
import pytest
from tiny_reports import tiny_report

from bomcheck.report.model import (Report, _records, natural_columns, relative_margin,
                                   ruleset_summary)

NAN = math.nan


def _report(refdes, statuses, verdicts) -> Report:
    table = pd.DataFrame({"refdes": refdes, "row": range(2, 2 + len(refdes)),
                          "text": [""] * len(refdes), "status": statuses})
    v = pd.DataFrame(verdicts, columns=["pidx", "refdes", "rule_id", "status", "value", "limit",
                                        "margin", "message", "source"])
    rules = SimpleNamespace(rules=[])
    return Report(tool_version="t", rulesets=(), inputs=(), table=table, verdicts=v,
                  not_fitted=pd.DataFrame(columns=["refdes", "row", "not_fitted_reason", "text"]),
                  skipped=pd.DataFrame(columns=["row", "kind", "reason", "text"]), rules=rules)


def test_relative_margin_not_raw_margin_ranks_failures():
    # C1: discharge 9.5 s against a 5 s limit: margin -4.5 s, relative -90 %.
    # C2: voltage ratio 1.96 against 0.8: margin -1.16 (a ratio), relative -145 %: worse.
    r = _report(["C1", "C2"], ["fail", "fail"], [
        (0, "C1", "DIS", "fail", 9.5, 5.0, -4.5, "m", "s"),
        (1, "C2", "V", "fail", 1.96, 0.8, -1.16, "m", "s"),
    ])
    assert list(r.worst_first()["refdes"]) == ["C2", "C1"]


def test_designators_in_natural_order_within_a_status():
    names = ["C10", "C7", "C100", "C9A", "c8", "R1", "C9"]
    r = _report(names, ["pass"] * len(names), [
        (i, n, "V", "pass", 0.5, 0.7, 0.2, "m", "s") for i, n in enumerate(names)])
    assert list(r.worst_first()["refdes"]) == ["C7", "c8", "C9", "C9A", "C10", "C100", "R1"]


def test_findings_worst_status_first_then_placement_order():
    r = _report(["C1", "C2", "C3"], ["warn", "fail", "nodata"], [
        (0, "C1", "V", "warn", 0.65, 0.7, 0.05, "m", "s"),
        (1, "C2", "V", "fail", 0.8, 0.7, -0.1, "m", "s"),
        (1, "C2", "L", "nodata", NAN, 1.0, NAN, "m", "s"),
        (2, "C3", "V", "nodata", NAN, 0.7, NAN, "m", "s"),
        (2, "C3", "T", "pass", 30.0, 10.0, 20.0, "m", "s"),
    ])
    v = r.verdicts_worst_first()
    assert list(zip(v["refdes"], v["rule_id"])) == [
        ("C2", "V"), ("C2", "L"), ("C3", "V"), ("C1", "V")]


def test_relative_margin_is_margin_over_the_limits_size():
    # unit-free: 30 degC over a 10 degC limit is +300 %; a zero or missing limit gives no figure
    v = pd.DataFrame({"margin": [30.0, -0.1, 1.0, 1.0], "limit": [10.0, -0.5, 0.0, NAN]})
    assert relative_margin(v).tolist()[:2] == pytest.approx([3.0, -0.2])
    assert relative_margin(v)[2:].isna().all()
    assert relative_margin(pd.DataFrame({"status": ["pass"]})).isna().all()


def test_natural_columns_sort_number_by_value_not_text():
    # natural order (common practice for designators: C9 before C10)
    cols = natural_columns(pd.Series(["C010", "C9", None]))
    assert cols["_n_digits"].tolist() == ["10", "9", ""]  # leading zeros dropped
    assert cols["_n_len"].tolist() == [2, 1, 0]


def test_status_is_the_worst_and_nodata_when_a_design_row_is_not_in_the_bom():
    report = tiny_report()
    assert report.status == "fail"
    passing = report.table.assign(status="pass")
    assert replace(report, table=passing).status == "nodata"  # C9 is not in the BOM
    clean = replace(report, table=passing, design_unmatched=())
    assert clean.status == "pass"
    # nothing audited never passes (the project's no-wrong-pass rule, DEVELOPERS.md)
    assert replace(clean, table=passing.iloc[:0]).status == "nodata"
    assert replace(clean, totals={"unreadable_rows": 1}).status == "nodata"


def test_governing_is_the_worst_verdict_of_each_placement_with_its_metric():
    gov = tiny_report().governing()
    assert gov.loc[1, "rule_id"] == "R-V" and gov.loc[1, "status"] == "fail"  # C2: fail over pass
    assert gov.loc[1, "metric"] == "voltage_ratio"
    assert list(gov.index) == [0, 1, 2, 3, 4]


def test_not_audited_lists_not_fitted_and_skipped_rows_in_row_order():
    rows = tiny_report().not_audited()
    assert [(d["row"], d["kind"], d["refdes"]) for d in rows] == [
        (6, "not_fitted", "C6"), (7, "not_capacitor", None)]
    assert rows[0]["reason"] == "DNP"


def test_to_dict_is_the_parsed_json_text():
    report = tiny_report()
    assert report.to_dict() == json.loads(report.to_json())
    assert report.to_dict()["status"] == "fail"


def test_ruleset_summary_puts_the_sources_on_the_last_layer():
    source = SimpleNamespace(id="S1", title="A handbook", clause="4.2", confidence="high")
    ruleset = SimpleNamespace(layers=[], sources=[source], name="tiny", title="Tiny", version="1")
    (entry,) = ruleset_summary(ruleset)
    assert (entry["name"], entry["path"]) == ("tiny", None)
    assert entry["sources"] == [{"id": "S1", "title": "A handbook", "clause": "4.2",
                                 "confidence": "high"}]


def test_spec_records_of_chosen_rows_match_the_records_of_those_rows():
    # Invariant of the implementation: records of rows picked by position equal the records of
    # the sub-table; NaN, None and NA become None, tuples lists, numpy scalars Python values.
    table = pd.DataFrame({
        "a": [1.5, np.nan, 3.0], "b": pd.Series(["x", None, "z"], dtype=object),
        "c": pd.array([1, None, 3], dtype="Int64"),
        "d": pd.Series([(1, 2), (), None], dtype=object), "e": [True, False, True],
    })
    rows = np.array([2, 1])
    fields = ("a", "b", "c", "d", "e", "missing")
    assert _records(table, fields, rows) == _records(table.iloc[rows], fields)
    assert _records(table, fields) == [
        {"a": 1.5, "b": "x", "c": 1, "d": [1, 2], "e": True, "missing": None},
        {"a": None, "b": None, "c": None, "d": [], "e": False, "missing": None},
        {"a": 3.0, "b": "z", "c": 3, "d": None, "e": True, "missing": None},
    ]
    assert all(type(r["a"]) in (float, type(None)) for r in _records(table, fields))

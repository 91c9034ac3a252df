"""The one order of every output (bomcheck.report.model.Report.worst_first and verdicts_worst_first)."""

from __future__ import annotations

import math
from types import SimpleNamespace

import pandas as pd

from bomcheck.report.model import Report

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

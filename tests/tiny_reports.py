"""A tiny audit report built by hand for the renderer tests (JUnit, Markdown, CSV, verdicts):
five placements, one of each status, a waiver finding, a not-fitted placement, a skipped row and
a design-sheet row not in the BOM. Invented part numbers and names."""

import math
from types import SimpleNamespace

import pandas as pd

from bomcheck.evaluate.waivers import WaiverFinding
from bomcheck.report.model import Report

NAN = math.nan


def tiny_report(texts=None) -> Report:
    """Five placements, one of each status; invented part numbers."""
    texts = texts or {}
    table = pd.DataFrame({
        "refdes": ["C1", "C2", "C3", "C4", "C5"],
        "row": [2, 3, 3, 4, 5],
        "text": [texts.get(r, f"KV-0603-104-{r} | CAP CER 100NF 50V X7R")
                 for r in ("C1", "C2", "C3", "C4", "C5")],
        "technology": ["ceramic", "ceramic", "ceramic", "tantalum", None],
        "capacitance_f": [1e-7, 1e-7, 1e-7, 2.2e-5, NAN],
        "voltage_v": [50.0, 16.0, 16.0, NAN, 25.0],
        "dielectric": ["X7R", "X7R", "X7R", None, None],
        "package": ["0603", "0603", "0603", "C", None],
        "status": ["pass", "fail", "warn", "nodata", "waived"],
    })
    verdicts = pd.DataFrame([
        (0, "C1", "R-V", "pass", 0.5, 0.7, 0.6, 0.2, "C1: ratio 50 % <= 70 % limit", "S1", None, None),
        (1, "C2", "R-T", "pass", 30.0, 10.0, NAN, 20.0, "C2: margin 30 degC >= 10 degC", "S2", None, None),
        (1, "C2", "R-V", "fail", 0.8, 0.7, 0.6, -0.1, "C2: ratio 80 % > 70 % limit", "S1", None, None),
        (2, "C3", "R-V", "warn", 0.65, 0.7, 0.6, 0.05, "C3: ratio 65 % > 60 % warn limit", "S1", None, None),
        (3, "C4", "R-V", "nodata", NAN, 0.5, NAN, NAN, "C4: no data: missing applied voltage", "S1", None, None),
        (4, "C5", "R-V", "waived", 0.9, 0.7, 0.6, -0.2,
         "C5: ratio 90 % > 70 % limit; waived (was fail) by R. Okafor until 2027-06-30: test report TR-9",
         "S1", "fail", "test report TR-9"),
    ], columns=["pidx", "refdes", "rule_id", "status", "value", "limit", "warn_limit", "margin",
                "message", "source", "waived_from", "waiver_reason"])
    rules = SimpleNamespace(rules=[SimpleNamespace(id="R-V", metric="voltage_ratio"),
                                   SimpleNamespace(id="R-T", metric="temp_margin_c")])
    not_fitted = pd.DataFrame({"refdes": ["C6"], "row": [6], "not_fitted_reason": ["DNP"],
                               "text": ["KV-0402-220-C0G | DNP"]})
    skipped = pd.DataFrame({"row": [7], "kind": ["not_capacitor"], "reason": ["resistor"],
                            "text": ["R1 | 4K7"]})
    finding = WaiverFinding(row=2, code="expired", refdes="C2", rule="R-V", placements=(),
                            message="waiver 2 (C2 R-V) expired on 2026-01-31; its verdicts stand",
                            reason="old", approved_by="R. Okafor", expires="2026-01-31")
    return Report(
        tool_version="0.0-test",
        rulesets=({"name": "tiny", "title": "Tiny rules", "version": "1"},),
        inputs=({"role": "bom", "path": "bom.csv", "sha256": "0" * 64},),
        table=table, verdicts=verdicts, not_fitted=not_fitted, skipped=skipped,
        design_unmatched=({"refdes": "C9", "row": 8, "status": "nodata",
                           "reason": "C9 (design sheet row 8) is not in the BOM"},),
        totals={"audited": 5, "pass": 1, "waived": 1, "warn": 1, "nodata": 1, "fail": 1},
        cautions=("Check it by hand.", "Mind the charge."),
        rules=rules, waiver_findings=(finding,),
    )

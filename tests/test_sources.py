"""Evaluate stage (bomcheck/evaluate/sources.py): every approved source of a BOM line audited
where the line is placed; a placement is only as good as its worst source (common practice:
purchasing may build a line with any of its approved manufacturer parts)."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from bomcheck.evaluate.sources import (FROM_LINE_TEXT, FROM_OWN_TEXT, SOURCE_STATUS_COLUMNS,
                                       variant, worst_of_sources)
from bomcheck.pipeline.audit import run_audit


def test_worst_of_sources_takes_the_worst_status_and_names_the_first_source_giving_it():
    # Status order of bomcheck/status.py: pass < waived < warn < nodata < fail; None where a
    # placement has no such source.
    statuses = [np.array(["pass", "warn", "pass"], dtype=object),
                np.array([None, "fail", "pass"], dtype=object),
                np.array(["nodata", None, "pass"], dtype=object)]
    worst, governing = worst_of_sources(statuses)
    assert worst.tolist() == ["nodata", "fail", "pass"]
    assert governing.tolist() == [2, 1, 0]


def test_variant_swaps_only_the_lines_that_have_the_source():
    table = pd.DataFrame({"refdes": ["C1", "C2", "C3"], "line": [0, 0, 1],
                          "mpn": ["KV-106", "KV-106", "KV-105"],
                          "manufacturer": ["Kvellon"] * 3, "voltage_v": [25.0, 25.0, 50.0],
                          "text": ["CAP 10UF 25V", "CAP 10UF 25V", "CAP 1UF 50V"]})
    sources = pd.DataFrame({"line": [0, 0, 1, 1], "source": [0, 1, 0, 1], "row": [2, 3, 4, 5],
                            "manufacturer": ["Kvellon", "Brisk", "Kvellon", "Tollin"],
                            "mpn": ["KV-106", "BC-106", "KV-105", "TP-105"],
                            "text": ["", "CAP 10UF 6.3V", "", ""]})
    parsed = []

    def spec_of(text: str) -> dict:
        parsed.append(text)
        return {"voltage_v": 6.3}

    out, pos, described = variant(table, sources, 1, spec_of)
    assert pos.tolist() == [0, 1, 2]
    assert out["mpn"].tolist() == ["BC-106", "BC-106", "TP-105"]
    # Line 0's source row has its own text (parsed once for both placements); line 1's has none
    # and keeps the line's text and values.
    assert parsed == ["CAP 10UF 6.3V"]
    assert out["voltage_v"].tolist() == [6.3, 6.3, 50.0]
    assert described.tolist() == [FROM_OWN_TEXT, FROM_OWN_TEXT, FROM_LINE_TEXT]
    assert table["mpn"].tolist() == ["KV-106", "KV-106", "KV-105"]  # the input is not changed


def test_a_weaker_approved_source_governs_the_placement(tmp_path):
    # C1's own part is rated 25 V, its approved alternative only 6.3 V: at 5 V the alternative
    # is at 79.4 % of its rating against the SRC derating sheet's 60 % for ceramics (severe
    # environment; arithmetic 5 / 6.3 = 0.7937), so the placement fails on source 1.
    bom = tmp_path / "bom.csv"
    bom.write_text("Designator,Qty,Value,Description,Manufacturer,MPN\n"
                   "C1,1,10uF,CAP CER 10UF 25V X5R 0805,Kvellon,KV-106\n"
                   ",,,CAP CER 10UF 6.3V X5R 0805,Brisk Ceramics,BC-106\n"
                   "C2,1,1uF,CAP CER 1UF 50V X7R 0603,Kvellon,KV-105\n", encoding="utf-8")
    design = tmp_path / "design.csv"
    design.write_text("refdes,v_dc,t_ambient_c\n*,5,40\n", encoding="utf-8")
    report = run_audit(str(bom), str(design))
    t = report.table.set_index("refdes")
    assert t.at["C1", "status"] == "fail" and t.at["C1", "governing_source"] == 1
    assert t.at["C1", "governing_mpn"] == "BC-106" and t.at["C2", "governing_source"] == 0
    v = report.with_messages(report.verdicts)
    row = v[(v.refdes == "C1") & (v.rule_id == "IND-CER-V") & (v.approved_source == 1)].iloc[0]
    assert row.status == "fail" and row.value == pytest.approx(5 / 6.3)
    assert row.message.startswith("C1 (approved source 1, BC-106): ")
    s = report.source_status
    assert list(s.columns) == list(SOURCE_STATUS_COLUMNS)
    assert s[["refdes", "source", "status", "described_by"]].values.tolist() == [
        ["C1", 0, "nodata", FROM_LINE_TEXT], ["C1", 1, "fail", FROM_OWN_TEXT],
        ["C2", 0, "nodata", FROM_LINE_TEXT]]

"""Normalise stage (bomcheck/parse/placements.py): the capacitor lines expanded to one row per
placement, and the findings on placements (column conflicts on fitted placements, no capacitance
read, a designator listed twice)."""

from __future__ import annotations

from bomcheck.parse.importer import read_bom
from read_helpers import bom_file as _file, check_accounting as _check_accounting


def test_a_line_expands_to_one_placement_per_designator_in_order(tmp_path):
    # IEEE 315 / common practice: "C1-C3" is C1, C2, C3; each placement keeps its line's row
    # and text, and counts as one of the line's quantity.
    r = read_bom(_file(tmp_path, "Designator,Qty,Value\nC1-C3,3,100nF 50V X7R\nC10,1,1uF 16V\n"))
    _check_accounting(r)
    p = r.placements
    assert p["refdes"].tolist() == ["C1", "C2", "C3", "C10"]
    assert p["row"].tolist() == [2, 2, 2, 3] and p["line"].tolist() == [0, 0, 0, 1]
    assert p["voltage_v"].tolist() == [50.0, 50.0, 50.0, 16.0]
    assert p["value_text"].tolist() == ["100nF 50V X7R"] * 3 + ["1uF 16V"]


def test_a_line_conflict_is_a_finding_on_each_fitted_placement(tmp_path):
    # Common practice (conservative reading): value 10 uF against 4.7 uF in the description.
    r = read_bom(_file(tmp_path, "Designator,Value,Description\nC1 C2,10uF,CAP 4.7UF 16V\n"))
    assert [(f.row, f.refdes, f.code) for f in r.findings] == [
        (2, "C1", "column_conflict"), (2, "C2", "column_conflict")]


def test_duplicate_designator_is_a_finding(tmp_path):
    r = read_bom(_file(tmp_path, "Designator,Value\nC1,100nF\nC2,1uF\nC1,10nF\n"))
    _check_accounting(r)
    assert [(f.row, f.refdes, f.code) for f in r.findings] == [(4, "C1", "duplicate_refdes")]
    assert "also listed on row 2" in r.findings[0].message


def test_fitted_capacitor_without_capacitance_is_a_finding(tmp_path):
    # Common practice: a capacitor line states its capacitance; when none is read the placement
    # says so (a not-fitted one does not matter).
    # A value cell with text that gives no capacitance ("TBD") is data not understood: nodata.
    text = ("Designator,Value,Description,Fitted\nC1,,CAP CER 16V X7R,\nC2,,CAP CER 16V X7R,no\n"
            "C3,TBD,CAP CER 16V X7R,\n")
    r = read_bom(_file(tmp_path, text))
    assert [(f.refdes, f.code, f.severity) for f in r.findings] == [
        ("C1", "capacitance_missing", "warn"), ("C3", "capacitance_unread", "nodata")]


def test_conflicts_not_reported_on_not_fitted_placements(tmp_path):
    r = read_bom(_file(tmp_path, "Designator,Value,Description\nC1,10uF,CAP 1uF DNP\n"))
    assert r.placements["fitted"].tolist() == [False] and not r.findings

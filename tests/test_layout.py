"""Multi-level ERP/PLM BOMs and approved-source (AML) rows (issue 11), fixtures written here."""

from __future__ import annotations

import json
from importlib import resources

import jsonschema
import pytest

from bomcheck.pipeline.audit import run_audit
from bomcheck.parse.importer import ROW_CATEGORIES, accounting_identity, read_bom
from bomcheck.parse.layout import parse_level


def _file(tmp_path, text, name="bom.csv"):
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return str(path)


def _identity_holds(r) -> None:
    t = r.totals
    assert t["rows_read"] == sum(t[k] for k, _ in ROW_CATEGORIES)
    kinds = r.skipped["kind"].tolist()
    assert kinds.count("approved_source") == t["approved_source_rows"]
    assert kinds.count("not_placement") == t["not_placement_rows"]
    assert accounting_identity(t)[1]


@pytest.mark.parametrize(("cell", "level"), [("0", 0), ("1", 1), (".1", 1), ("..2", 2),
                                             ("...3", 3), ("+1", 1), ("", None), ("1.2", None),
                                             ("A", None)])
def test_level_cells(cell, level):
    # Common practice of indented (multi-level) BOM exports.
    assert parse_level(cell) == level


# An invented multi-level export: assembly at level 0, a sub-assembly and material at level 1,
# placements at level 2 (".." notation), approved-manufacturer rows under two lines.
_ERP = (
    "Level,Item,Internal Part Number,Description,Qty Per,UoM,Ref Des,Mfr Name,Mfr Part No\n"
    "0,,ASM-7700,Motor controller assembly,1,EA,,,\n"
    ".1,10,PCB-7701,Bare board rev C,1,EA,,Orvane Boards,OB-7701-C\n"
    ".1,20,SUB-7702,Power stage sub-assembly,1,EA,,,\n"
    "..2,10,CAP-1001,CAP CER 100NF 50V X7R 0603,3,EA,\"C1,C2,C3\",Kvellon,KV-104-0603\n"
    ",,,,,,,Brisk Ceramics,BC0603X7R104K\n"
    ",,,,,,,Tollin Passives,TP-0603-104-50\n"
    "..2,20,CAP-1002,CAP ALU 470UF 35V 105C 10X12.5,1,EA,C4,Sarnex,SX-477-35\n"
    "..2,30,RES-2001,RES 10K 1% 0603,2,EA,\"R1,R2\",Varnholt,VR-10K-0603\n"
    ",,,,,,,Mellby,MB-10K-0603\n"
    ".1,30,SOLD-01,Solder paste,0.01,KG,,,\n"
)


def test_multi_level_bom_reads_the_designator_level_and_accounts_for_every_row(tmp_path):
    r = read_bom(_file(tmp_path, _ERP))
    _identity_holds(r)
    assert r.placements["refdes"].tolist() == ["C1", "C2", "C3", "C4"]
    t = r.totals
    assert (t["rows_read"], t["capacitor_rows"], t["non_capacitor_rows"], t["unreadable_rows"],
            t["approved_source_rows"], t["not_placement_rows"]) == (10, 2, 1, 0, 3, 4)
    structure = r.skipped[r.skipped["kind"] == "not_placement"]
    assert structure["row"].tolist() == [2, 3, 4, 11]
    assert all("level" in reason and "not a placement" in reason
               for reason in structure["reason"])
    assert r.source.columns["level"] == "Level" and r.source.columns["qty"] == "Qty Per"


def test_approved_source_rows_are_a_table_joined_on_line(tmp_path):
    r = read_bom(_file(tmp_path, _ERP))
    src = r.sources
    line_c1 = int(r.placements.loc[r.placements["refdes"] == "C1", "line"].iloc[0])
    mine = src[src["line"] == line_c1]
    assert mine["source"].tolist() == [0, 1, 2]
    assert mine["mpn"].tolist() == ["KV-104-0603", "BC0603X7R104K", "TP-0603-104-50"]
    assert mine["manufacturer"].tolist() == ["Kvellon", "Brisk Ceramics", "Tollin Passives"]
    assert mine["row"].tolist() == [5, 6, 7]
    # The resistor line's approved source is listed too, under its own line, and its row says so.
    res = r.skipped[r.skipped["row"] == 10]
    assert res["kind"].tolist() == ["approved_source"]
    assert "not a capacitor line" in res["reason"].iloc[0]
    # Every capacitor line has its own source 0.
    cap_lines = set(r.placements["line"])
    assert cap_lines <= set(src.loc[src["source"] == 0, "line"])


def test_flat_bom_with_aml_rows_has_no_unreadable_rows(tmp_path):
    text = ("Designator,Qty,Value,Description,Manufacturer,MPN\n"
            "C1 C2,2,10uF,CAP CER 10UF 25V X5R 0805,Kvellon,KV-106-0805\n"
            ",,,,Brisk Ceramics,BC0805X5R106\n"
            ",,,alternate with longer lead time,Tollin Passives,TP-0805-106\n"
            "C3,1,1uF,CAP CER 1UF 50V X7R 0603,Kvellon,KV-105-0603\n")
    r = read_bom(_file(tmp_path, text))
    _identity_holds(r)
    assert r.totals["unreadable_rows"] == 0 and r.totals["approved_source_rows"] == 2
    assert r.sources["text"].tolist() == ["", "", "alternate with longer lead time", ""]
    assert accounting_identity(r.totals)[0] == (
        "rows read 4 = capacitor rows 2 + non-capacitor rows 0 + unreadable rows 0 + "
        "approved-source rows 2")


def test_a_row_with_its_own_value_is_not_an_approved_source(tmp_path):
    # A row with a value but no designator is a line missing its designators, not a source.
    text = ("Designator,Qty,Value,Manufacturer,MPN\n"
            "C1,1,10uF 25V X5R,Kvellon,KV-106\n"
            ",,4.7uF 25V X5R,Kvellon,KV-475\n")
    r = read_bom(_file(tmp_path, text))
    assert r.totals["unreadable_rows"] == 1 and r.totals["approved_source_rows"] == 0


def test_material_at_the_placement_level_is_not_a_placement_but_a_capacitor_is_unreadable(
        tmp_path):
    # No wrong pass: a capacitor line that lost its designators is never quietly skipped.
    text = ("Level,Description,Qty,Designator,MPN\n"
            "1,Bare board rev C,1,,PCB-1\n"
            "1,CAP CER 100NF 50V X7R 0603,2,\"C1,C2\",KV-104\n"
            "1,CAP CER 1UF 25V X5R 0603,1,,KV-105\n")
    r = read_bom(_file(tmp_path, text))
    _identity_holds(r)
    kinds = dict(zip(r.skipped["row"], r.skipped["kind"]))
    assert kinds == {2: "not_placement", 4: "unreadable"}


def test_side_by_side_source_columns_are_approved_sources(tmp_path):
    # Contract-manufacturer exports list further sources in numbered columns (common practice).
    text = ("Designator,Value,Manufacturer 1,MPN 1,Manufacturer 2,MPN 2\n"
            "C1,100nF 50V X7R,Kvellon,KV-104,Brisk Ceramics,BC-104\n"
            "C2,1uF 25V X5R,Kvellon,KV-105,,\n"
            ",,Tollin Passives,TP-105,,\n")
    r = read_bom(_file(tmp_path, text))
    _identity_holds(r)
    assert not [f for f in r.findings if f.code == "column_ambiguous"]
    src = r.sources
    assert src[["line", "source", "mpn"]].values.tolist() == [
        [0, 0, "KV-104"], [0, 1, "BC-104"], [1, 0, "KV-105"], [1, 1, "TP-105"]]


def test_audit_json_of_a_multi_level_bom_validates(tmp_path):
    # The new row kinds reach the report's not-audited list and its schema.
    report = run_audit(_file(tmp_path, _ERP), None)
    data = json.loads(report.to_json())
    schema = json.loads(resources.files("bomcheck.schemas").joinpath("report.schema.json")
                        .read_text())
    jsonschema.validate(data, schema)
    kinds = {d["kind"] for d in data["not_audited"]}
    assert {"approved_source", "not_placement"} <= kinds
    t = data["totals"]
    assert t["rows_read"] == sum(t[k] for k, _ in ROW_CATEGORIES)

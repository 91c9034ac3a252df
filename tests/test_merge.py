"""Parse stage (bomcheck/parse/merge.py): the specs of one BOM line's cells merged into one spec;
where the cells disagree on a number the conservative reading wins and the disagreement is a
finding."""

from __future__ import annotations

import pytest

from bomcheck.parse.importer import read_bom
from bomcheck.parse.merge import SpecMerge
from bomcheck.parse.values import parse_value
from read_helpers import bom_file as _file, placement_column as _col


def _merged(**cells: str):
    """The merge of one line's cells (source -> text). The specs are kept alive beside the
    merger, as the parser's cache keeps them (the merger caches by spec identity)."""
    specs = {src: parse_value(text, context={"value_alt": "value"}.get(src, src))
             for src, text in cells.items()}
    merger = SpecMerge(lambda src, text: parse_value(text, context=src))
    out, conflicts = merger.merge(specs)
    return out, conflicts, specs


def test_voltage_column_against_the_value_keeps_the_lower():
    # Common practice (conservative reading): the lower rated voltage, and the finding says so.
    out, conflicts, _ = _merged(value="10uF 16V", voltage="50V")
    assert out["voltage_v"] == 16.0
    assert [c for c, _ in conflicts] == ["column_conflict"]
    assert "50 V" in conflicts[0][1] and "16 V" in conflicts[0][1]


def test_value_against_the_description_keeps_the_smaller_capacitance():
    # Common practice (conservative reading): the smaller capacitance.
    out, conflicts, _ = _merged(value="10uF", description="CAP CER 4.7UF 16V X7R")
    assert out["capacitance_f"] == pytest.approx(4.7e-6)
    assert out["voltage_v"] == 16.0 and out["dielectric"] == "X7R"
    assert [c for c, _ in conflicts] == ["column_conflict"] and "smaller" in conflicts[0][1]


def test_tolerance_column_against_the_value_keeps_the_wider():
    # Common practice (conservative reading): the wider tolerance.
    out, conflicts, _ = _merged(value="100nF 10%", tolerance="20%")
    assert out["tol_minus_pct"] == 20.0 and [c for c, _ in conflicts] == ["column_conflict"]


def test_agreeing_cells_fill_each_other_without_a_finding():
    # Common practice of BOM exports: dedicated columns beside a short value cell; agreeing cells
    # are no finding.
    out, conflicts, _ = _merged(value="100nF", voltage="50V", dielectric="X7R", package="0603")
    assert (out["capacitance_f"], out["voltage_v"], out["dielectric"], out["package"]) == (
        pytest.approx(100e-9), 50.0, "X7R", "0603")
    assert conflicts == [] and out["is_capacitor"]


def test_a_cells_own_warnings_and_unread_tokens_are_kept_once():
    # No wrong pass (project rule): what a cell says that was not read is kept, and said once.
    out, _, specs = _merged(value="100nF ZZTOP", description="100nF ZZTOP")
    assert out["unread"] == ("ZZTOP",) and specs["value"].unread == ("ZZTOP",)


def test_dielectric_code_implies_its_temperature_range():
    # EIA-198: X7R is specified from -55 to +125 degC.
    merger = SpecMerge(lambda src, text: parse_value(text, context=src))
    spec = parse_value("100nF X7R")
    assert merger.derived_temps(spec) == (-55.0, 125.0)
    assert merger.derived_temps(parse_value("100nF")) is None


def test_bom_column_vs_text_keeps_the_lower_voltage(tmp_path):
    # Issue 9 class 6: 50 V column vs 16V in the value.
    r = read_bom(_file(tmp_path, "Designator,Value,Voltage\nC1,10uF 16V,50V\n"))
    assert _col(r, "voltage_v") == [16.0]
    assert [f.code for f in r.findings] == ["column_conflict"]


def test_technology_only_in_a_category_column(tmp_path):
    # Issue 9 class 8 / issue 11: catalogue categories name the technology.
    text = ("Ref Des,Qty Per,Value,Category,Mfr Name,Mfr Part No\n"
            "C1,1,470uF 35V,Aluminum Electrolytic Capacitors,Sarnex,SX-477\n"
            "C2,1,100uF 6.3V,Tantalum Capacitors - Polymer,Sarnex,SX-107\n"
            "C3,1,100nF 50V,Ceramic Capacitors,Kvellon,KV-104\n"
            "R1,1,10k,Resistors,Varnholt,VR-10K\n")
    r = read_bom(_file(tmp_path, text))
    assert _col(r, "technology") == ["aluminium-electrolytic", "tantalum-polymer", "ceramic"]
    assert r.totals["non_capacitor_rows"] == 1


def test_footprint_and_case_letter_of_the_same_case_do_not_conflict(tmp_path):
    # IPC-7351 CAPT6032X280N is the 6032-28 case, tantalum case C in the common lettering.
    text = ("Designator,Description,Footprint\n"
            "C1,CAP TANT 47UF 16V 10% case C,CAPT6032X280N\n"
            "C2,CAP TANT 47UF 16V 10% case D,CAPT6032X280N\n")
    r = read_bom(_file(tmp_path, text))
    assert [f.refdes for f in r.findings] == ["C2"]


def test_safety_word_of_another_part_does_not_make_a_safety_capacitor(tmp_path):
    r = read_bom(_file(tmp_path, "Designator,Description\nC5,CAP CER 47PF 50V C0G 0402 "
                                 "(Y1 load)\n"))
    assert _col(r, "safety_class") == [None] and _col(r, "voltage_kind") == [None]


def test_a_merger_never_mistakes_a_new_spec_for_a_freed_one():
    # The merger caches by spec identity; a spec dropped by its caller may free its id for the
    # next one. Each line must still get its own reading (no wrong value from a stale entry).
    merger = SpecMerge(lambda src, text: parse_value(text, context=src))
    for n in range(1, 400):
        specs = {"value": parse_value(f"{n}uF", context="value"),
                 "voltage": parse_value(f"{n + 5}V", context="voltage")}
        out, _ = merger.merge(specs)
        del specs
        assert out["capacitance_f"] == pytest.approx(n * 1e-6)
        assert out["voltage_v"] == n + 5

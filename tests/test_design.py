"""Design sheet: units, aliases, rows/groups/defaults precedence, errors, CSV/XLSX/TOML files."""

from __future__ import annotations

import hashlib
import math
import random
import re

import numpy as np
import pandas as pd
import pytest

from bomcheck.errors import InputError
from bomcheck.parse.design import (
    CONDITION_COLUMNS,
    Design,
    Group,
    _condition_columns,
    _read_table_design,
    design_from_table,
    is_design_header,
    read_design,
)
from bomcheck.parse.design_build import _single_designators
from bomcheck.parse.design_cells import SINGLE
from bomcheck.read.reader import read_input_table
from bomcheck.vocabulary import CONDITIONS

# Invented rails and designators only.


def sheet(header: list[str], *rows: list[str]) -> Design:
    """A design sheet from a header and rows of text cells (row numbers 2, 3, ...)."""
    return design_from_table(pd.DataFrame([list(r) for r in rows], columns=header),
                             path="design.csv")


# --- units in cells (pint) -------------------------------------------------------------------

CELL_UNITS = [
    # (column, cell, field, expected SI value)
    ("v_dc", "500 mV", "v_dc", 0.5),  # SI prefix milli = 1e-3 (BIPM SI Brochure, 9th ed.)
    ("v_dc", "13.2 V", "v_dc", 13.2),
    ("v_dc", "12 VDC", "v_dc", 12.0),  # "DC" is a word, not a unit
    ("t_ambient_c", "85 degC", "t_ambient_c", 85.0),
    ("t_ambient_c", "85 \u00b0C", "t_ambient_c", 85.0),
    ("t_ambient_c", "358.15 K", "t_ambient_c", 85.0),  # SI: t/degC = T/K - 273.15
    ("c_min_f", "2.2 uF", "c_min_f", 2.2e-6),  # SI prefix micro = 1e-6
    ("c_min_f", "2.2 \u00b5F", "c_min_f", 2.2e-6),  # U+00B5 MICRO SIGN
    ("c_min_f", "2.2 \u03bcF", "c_min_f", 2.2e-6),  # U+03BC GREEK SMALL LETTER MU
    ("life_h", "10 years", "life_h", 87660.0),  # pint: year = 365.25 days (Julian year)
    ("life_h", "50000 h", "life_h", 50000.0),
    ("t_rise_c", "10 degC", "t_rise_c", 10.0),  # a rise is a difference: 10 K
    ("t_rise_c", "18 degF", "t_rise_c", 10.0),  # 1 degF step = 5/9 K (definition of degF)
    ("v_ripple_pk", "200 mVpp", "v_ripple_pk", 0.1),  # peak = peak-to-peak / 2 (definition)
    ("v_ripple_pk", "0.3 V pk", "v_ripple_pk", 0.3),
    ("v_tol_pct", "5 %", "v_tol_pct", 5.0),
    ("v_tol_pct", "\u00b15%", "v_tol_pct", 5.0),
    ("v_dc", "1,5", "v_dc", 1.5),  # decimal comma
]


@pytest.mark.parametrize("column, cell, field, expected", CELL_UNITS,
                         ids=[f"{c[0]}={c[1]}" for c in CELL_UNITS])
def test_cell_units(column, cell, field, expected):
    d = sheet(["refdes", column], ["C1", cell])
    assert d.conditions.at["C1", field] == pytest.approx(expected)


HEADER_UNITS = [
    # (header, bare number, field, expected SI value)
    ("v_dc [V]", "12", "v_dc", 12.0),
    ("Vdc (V)", "12", "v_dc", 12.0),
    ("v_dc [mV]", "3300", "v_dc", 3.3),  # milli = 1e-3
    ("working voltage", "24", "v_dc", 24.0),
    ("Ripple mVpp", "200", "v_ripple_pk", 0.1),  # mV peak-to-peak: peak = half
    ("Ripple (V p-p)", "1", "v_ripple_pk", 0.5),
    ("v_ripple_pk [mV]", "200", "v_ripple_pk", 0.2),
    ("t_amb (\u00b0C)", "85", "t_ambient_c", 85.0),
    ("t_amb [degF]", "185", "t_ambient_c", 85.0),  # (185 - 32) x 5/9 = 85 (definition of degF)
    ("ambient", "45", "t_ambient_c", 45.0),
    ("t_rise", "12", "t_rise_c", 12.0),
    ("t_rise (\u00b0C)", "12", "t_rise_c", 12.0),
    ("c_min", "1e-6", "c_min_f", 1e-6),
    ("required capacitance [uF]", "2.2", "c_min_f", 2.2e-6),
    ("life", "20000", "life_h", 20000.0),
    ("life [years]", "10", "life_h", 87660.0),  # pint: year = 365.25 days
    ("v_tol_pct", "10", "v_tol_pct", 10.0),
    ("Voltage tolerance (%)", "5", "v_tol_pct", 5.0),
    ("v_transient_pk", "30", "v_transient_pk", 30.0),
    ("Reverse voltage", "0.5", "v_reverse_pk", 0.5),
    ("AC voltage (V rms)", "230", "v_ac_rms", 230.0),
]


@pytest.mark.parametrize("header, cell, field, expected", HEADER_UNITS,
                         ids=[h[0] for h in HEADER_UNITS])
def test_bare_numbers_take_the_header_unit(header, cell, field, expected):
    d = sheet(["Designator", header], ["C1", cell])
    assert d.conditions.at["C1", field] == pytest.approx(expected)


def test_bare_numbers_without_header_unit_take_the_conditions_unit():
    d = sheet(["refdes", *CONDITIONS], ["C1", *["2"] * len(CONDITIONS)])
    # CONDITIONS units are SI already (V, degC, delta degC, F, h; % for v_tol_pct).
    assert d.conditions.loc["C1", list(CONDITIONS)].tolist() == [2.0] * len(CONDITIONS)


def test_tolerance_gives_the_upper_bound_and_both_are_kept():
    d = sheet(["refdes", "v_dc", "v_tol_pct"], ["C1", "12 V", "10"])
    row = d.conditions.loc["C1"]
    # 12 V x (1 + 10/100) = 13.2 V (arithmetic)
    assert row["v_dc_max"] == pytest.approx(13.2)
    assert row["v_dc"] == 12.0 and row["v_tol_pct"] == 10.0


def test_an_explicit_upper_bound_is_not_overwritten():
    d = sheet(["refdes", "v_dc", "v_dc_max", "v_tol_pct"], ["C1", "12", "12.5", "10"])
    assert d.conditions.at["C1", "v_dc_max"] == 12.5


def test_cell_mark_overrides_header_peak_to_peak():
    d = sheet(["refdes", "Ripple mVpp"], ["C1", "80"], ["C2", "80 mVpk"])
    assert d.conditions.at["C1", "v_ripple_pk"] == pytest.approx(0.04)
    assert d.conditions.at["C2", "v_ripple_pk"] == pytest.approx(0.08)


@pytest.mark.parametrize("cell", ["", "-", "n/a", "N/A"])
def test_no_value_markers(cell):
    d = sheet(["refdes", "v_dc", "v_reverse_pk"], ["C1", "5", cell])
    assert math.isnan(d.conditions.at["C1", "v_reverse_pk"])


# --- errors ----------------------------------------------------------------------------------


def test_wrong_dimension_names_file_row_and_column():
    with pytest.raises(InputError) as info:
        sheet(["refdes", "v_dc [V]"], ["C1", "5"], ["C2", "5 A"])
    e = info.value
    assert (e.path, e.row, e.column, e.text) == ("design.csv", 3, "v_dc [V]", "5 A")
    assert "voltage" in e.expected
    assert str(e).startswith("design.csv, row 3, column 'v_dc [V]': wrong dimension")


@pytest.mark.parametrize("header, cell", [
    ("t_ambient_c", "hot"),
    ("c_min_f", "12 V"),
    ("life_h", "10 V"),
    ("v_dc", "nan"),
    ("v_dc", "1,500"),
], ids=["words", "volts-for-farads", "volts-for-hours", "nan", "comma-grouping"])
def test_unreadable_cells_name_the_cell(header, cell):
    with pytest.raises(InputError) as info:
        sheet(["refdes", header], ["C1", "1"], ["C7", cell])
    assert (info.value.row, info.value.column, info.value.text) == (3, header, cell)


@pytest.mark.parametrize("header", ["v_dc [uF]", "v_dc [Vpp]", "Ripple (V rms)", "t_amb [V]"])
def test_bad_header_unit_or_mark_names_the_header(header):
    with pytest.raises(InputError) as info:
        sheet(["refdes", header], ["C1", "1"])
    assert info.value.column == header and info.value.row == 1


def test_designator_addressed_twice_names_both_rows():
    with pytest.raises(InputError, match="C3 is addressed by rows 2 and 4") as info:
        sheet(["refdes", "v_dc"], ["C1-C5", "5"], ["C9", "3.3"], ["C3", "12"])
    assert info.value.row == 4


def test_designator_twice_in_one_row():
    with pytest.raises(InputError, match="twice in row 2"):
        sheet(["refdes", "v_dc"], ["C1-C5, C3", "5"])


def test_designator_in_two_groups_names_both_rows():
    with pytest.raises(InputError, match=r"C4 \(groups '\+5V_LOGIC' and '\+3V3_IO'\) is "
                                         r"addressed by rows 2 and 3"):
        sheet(["refdes", "members", "v_dc"], ["+5V_LOGIC", "C1-C4", "5"],
              ["+3V3_IO", "C4-C6", "3.3"])


@pytest.mark.parametrize("rows, match", [
    ([["*", "", "45"], ["*", "", "50"]], "'\\*' \\(board-wide defaults\\) is addressed by rows"),
    ([["+5V_LOGIC", "C1", ""], ["+5V_LOGIC", "C2", ""]], "group '\\+5V_LOGIC' is addressed by"),
    ([["+5V_LOGIC", "C1, VCC_SENSE", ""]], "'VCC_SENSE' is not a designator"),
    ([["see note", "", "45"]], "is not a designator"),
    ([["", "", "45"]], "names no designator or group"),
    ([["*", "C1-C3", ""]], "defaults row cannot"),
    ([["C5-C2", "", "45"]], "runs backwards"),
], ids=["two-defaults", "group-twice", "bad-member", "not-a-designator", "no-target",
        "defaults-with-members", "backwards-range"])
def test_structural_errors(rows, match):
    with pytest.raises(InputError, match=match):
        sheet(["refdes", "members", "t_amb"], *rows)


def test_two_columns_for_one_field():
    with pytest.raises(InputError, match="two columns give v_dc: 'Vdc' and 'working voltage'"):
        sheet(["refdes", "Vdc", "working voltage"], ["C1", "5", "5"])


def test_no_designator_column():
    with pytest.raises(InputError, match="no designator column"):
        sheet(["v_dc", "t_amb"], ["5", "45"])


def test_unknown_group_kind():
    with pytest.raises(InputError, match="unknown group kind") as info:
        sheet(["refdes", "members", "kind", "v_dc"], ["+48V_BUS", "C1-C2", "ladder", "48"])
    assert info.value.column == "kind"


@pytest.mark.parametrize("header, cell, match", [
    ("v_dc", "12 Vac", "AC given for v_dc"),
    ("v_ac_rms", "230 VDC", "DC given for v_ac_rms"),
    ("v_ripple_pk", "1 V rms", "rms given for v_ripple_pk"),
], ids=["ac-in-dc", "dc-in-ac", "rms-in-peak"])
def test_cell_marks_that_contradict_the_column(header, cell, match):
    with pytest.raises(InputError, match=match):
        sheet(["refdes", header], ["C1", cell])


def test_ac_and_dc_words_in_their_own_columns():
    d = sheet(["refdes", "Voltage AC", "Voltage DC"], ["C1", "230 Vac", "325 V DC"])
    assert (d.conditions.at["C1", "v_ac_rms"], d.conditions.at["C1", "v_dc"]) == (230.0, 325.0)


def test_suspicious_values_are_warnings():
    d = sheet(["refdes", "v_dc", "v_dc_max", "v_tol_pct"], ["C1", "12", "11", ""],
              ["C2", "5", "", "0.05"])
    assert any("v_dc_max is below v_dc" in str(w) and "C1" in str(w) for w in d.warnings)
    assert any("v_tol_pct of 0.05 % in row 3" in str(w) for w in d.warnings)
    tol = next(w for w in d.warnings if w.column == "v_tol_pct")
    assert tol.to_dict() == {"path": "design.csv", "row": 3, "column": "v_tol_pct",
                             "message": tol.message}


def test_unknown_column_with_values_is_an_error():
    # Issue 9 class 4 (changed: this test asserted a warning, and the column's data was lost).
    with pytest.raises(InputError) as info:
        sheet(["refdes", "v_dc", "Layout owner"], ["C1", "5", "KB"])
    assert (info.value.path, info.value.row, info.value.column) == ("design.csv", 1,
                                                                   "Layout owner")


def test_unknown_empty_column_is_a_warning():
    d = sheet(["refdes", "v_dc", "Layout owner"], ["C1", "5", ""])
    assert d.conditions.at["C1", "v_dc"] == 5.0
    assert "Layout owner" not in d.conditions.columns
    assert any(w.column == "Layout owner" and "empty" in w.message for w in d.warnings)


# --- groups, defaults, precedence ------------------------------------------------------------

PRECEDENCE = (
    ["refdes", "members", "v_dc [V]", "v_tol_pct", "Ripple mVpp", "t_amb (\u00b0C)", "life",
     "notes"],
    ["*", "", "", "", "", "40", "10 years", "board"],
    ["+5V_LOGIC", "C1-C4, C10", "5", "5", "100", "", "", "logic rail"],
    ["C3", "", "", "", "", "85", "", "beside the regulator"],
    ["C20-C21", "", "12", "", "", "", "50000 h", ""],
)


@pytest.fixture()
def precedence() -> Design:
    return sheet(*PRECEDENCE)


def test_groups_and_defaults(precedence):
    g = precedence.groups["+5V_LOGIC"]
    assert (g.members, g.row, g.kind, g.notes) == (("C1", "C2", "C3", "C4", "C10"), 3, "rail",
                                                   "logic rail")
    assert dict(g.conditions) == pytest.approx({"v_dc": 5.0, "v_tol_pct": 5.0,
                                                "v_ripple_pk": 0.05})
    assert precedence.defaults == pytest.approx({"t_ambient_c": 40.0, "life_h": 87660.0})
    assert precedence.defaults_row == 2
    # defaults are not folded into conditions
    assert math.isnan(precedence.conditions.at["C1", "t_ambient_c"])


def test_for_placements_applies_row_over_group_over_defaults(precedence):
    bom = pd.Series(["C3", "C1", "C21", "C99", "c4"], index=[10, 11, 12, 13, 14])
    out = precedence.for_placements(bom)
    assert list(out.index) == [10, 11, 12, 13, 14]
    assert out["refdes"].tolist() == ["C3", "C1", "C21", "C99", "c4"]
    assert out["condition_source"].tolist() == ["row", "group", "row", "defaults", "group"]
    assert out["design_row"].tolist() == [4, 3, 5, 2, 3]
    assert out["t_ambient_c"].tolist() == [85.0, 40.0, 40.0, 40.0, 40.0]
    assert out["v_dc"].tolist()[:3] == [5.0, 5.0, 12.0]
    assert out["v_dc_max"].tolist()[:2] == pytest.approx([5.25, 5.25])  # 5 V x 1.05
    assert out["life_h"].tolist()[:3] == [87660.0, 87660.0, 50000.0]
    assert out["group"].tolist() == ["+5V_LOGIC", "+5V_LOGIC", None, None, "+5V_LOGIC"]
    assert out["notes"].tolist() == ["beside the regulator", "logic rail", "", "", "logic rail"]
    # Conditions the sheet never gives are no column (missing downstream, as NaN would be).
    assert {"v_dc", "v_dc_max", "v_tol_pct", "t_ambient_c", "life_h"} <= set(out.columns)
    assert "r_bleeder_ohm" not in out.columns


def test_for_placements_without_defaults_gives_none():
    d = sheet(["refdes", "v_dc"], ["C1", "5"])
    out = d.for_placements(pd.Series(["C1", "C2"]))
    assert out["condition_source"].tolist() == ["row", "none"]
    assert out["design_row"].isna().tolist() == [False, True]
    assert out.loc[1, [c for c in CONDITION_COLUMNS if c in out.columns]].isna().all()
    assert "v_dc" in out.columns


def test_unmatched_lists_design_designators_missing_from_the_bom(precedence):
    missing = precedence.unmatched({"C1", "C2", "C3", "C4", "C20"})
    assert missing == [("C10", 3), ("C21", 5)]
    assert all(isinstance(r, str) and isinstance(n, int) for r, n in missing)


def test_upper_bound_travels_with_its_dc_value():
    d = sheet(["refdes", "members", "group", "v_dc", "v_dc_max", "v_tol_pct"],
              ["+12V_AUX", "C1-C3", "", "12", "13", ""],
              ["+24V_IN", "C7-C8", "", "24", "", "10"],
              ["C2", "", "", "11", "", ""],
              ["C8", "", "", "23", "", ""])
    c = d.conditions
    assert c.at["C1", "v_dc_max"] == 13.0
    assert math.isnan(c.at["C2", "v_dc_max"])  # the group's 13 V belongs to its 12 V
    assert c.at["C8", "v_dc_max"] == pytest.approx(25.3)  # 23 V x 1.10, the rail tolerance


def test_group_cell_joins_a_group_and_a_group_row_without_members():
    d = sheet(["refdes", "rail", "v_dc", "t_amb"],
              ["C1-C3", "+3V3_IO", "", "50"],
              ["C4", "+3V3_IO", "", ""],
              ["+3V3_IO", "", "3.3", ""])
    assert d.groups["+3V3_IO"].members == ("C1", "C2", "C3", "C4")
    assert d.groups["+3V3_IO"].row == 4
    assert d.conditions["v_dc"].tolist() == [3.3] * 4
    assert d.conditions.at["C1", "t_ambient_c"] == 50.0
    assert d.conditions["condition_source"].tolist() == ["row"] * 4


def test_bank_and_series_keep_group_quantities_off_their_members():
    d = sheet(["refdes", "members", "kind", "v_dc", "c_min", "t_amb"],
              ["BULK_12V", "C1-C3", "bank", "12", "300 uF", "60"],
              ["HV_LINK", "C5-C6", "series", "400", "", "70"])
    c = d.conditions
    assert c.loc[["C1", "C2", "C3"], "v_dc"].tolist() == [12.0] * 3
    # the bank meets it, not each part: a member's own need is "none" (0 F), the bank's is checked
    assert c.loc[["C1", "C2", "C3"], "c_min_f"].tolist() == [0.0] * 3
    assert c.loc[["C5", "C6"], "v_dc"].isna().all()  # each member carries a share of the 400 V
    assert c.loc[["C5", "C6"], "t_ambient_c"].tolist() == [70.0, 70.0]
    assert d.groups["BULK_12V"].kind == "bank"
    assert d.groups["BULK_12V"].conditions["c_min_f"] == pytest.approx(300e-6)
    assert d.groups["HV_LINK"].conditions["v_dc"] == 400.0


def test_group_is_constructible_with_the_contract_fields():
    g = Group("+5V_LOGIC", ("C1",), 3)
    assert g.kind == "rail" and dict(g.conditions) == {}


@pytest.mark.parametrize("cells, expected", [
    (["refdes", "v_dc"], True),
    (["Designator", "Ripple mVpp"], True),
    (["rail", "members"], True),
    (["Designator", "Comment", "Footprint"], False),
    (["v_dc", "t_amb"], False),
])
def test_is_design_header(cells, expected):
    assert is_design_header(cells) is expected


# --- files -----------------------------------------------------------------------------------


def test_read_csv_file(tmp_path):
    path = tmp_path / "design.csv"
    path.write_text(
        "Operating conditions, rev B\n"
        "\n"
        "refdes,members,v_dc [V],v_tol_pct,Ripple mVpp,t_amb (\u00b0C),life,notes\n"
        "*,,,,,45,10 years,\n"
        "+5V_LOGIC,\"C1-C9, C20\",5,5,100,,,logic\n"
        "C14,,,,,85 degC,,hot spot\n"
        "C30,,500 mV,,,,50000 h,\n",
        encoding="utf-8",
    )
    d = read_design(str(path))
    assert d.sha256 == hashlib.sha256(path.read_bytes()).hexdigest()
    assert d.format == "csv" and d.path == str(path)
    assert d.defaults_row == 4
    assert d.groups["+5V_LOGIC"].row == 5
    assert len(d.groups["+5V_LOGIC"].members) == 10
    c = d.conditions
    assert c.at["C14", "design_row"] == 6 and c.at["C14", "t_ambient_c"] == 85.0
    assert c.at["C30", "v_dc"] == 0.5 and c.at["C30", "life_h"] == 50000.0
    assert c.at["C20", "v_ripple_pk"] == pytest.approx(0.05)
    assert c.at["C20", "v_dc_max"] == pytest.approx(5.25)


def test_csv_wrong_dimension_names_the_file_line(tmp_path):
    path = tmp_path / "design.csv"
    path.write_text("refdes,v_dc [V]\nC1,5\nC2,5 A\n", encoding="utf-8")
    with pytest.raises(InputError) as info:
        read_design(str(path))
    assert (info.value.path, info.value.row, info.value.column) == (str(path), 3, "v_dc [V]")


def test_read_xlsx_file(tmp_path):
    openpyxl = pytest.importorskip("openpyxl")
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "Notes"
    ws.append(["Nothing to see here"])
    ws = wb.create_sheet("Conditions")
    ws.append(["Board KX-7 operating conditions"])
    ws.append(["Ref Des", "Vdc (V)", "v_tol_pct", "t_amb (\u00b0C)", "required capacitance",
               "life [years]"])
    ws.append(["*", None, None, 40, None, 10])
    ws.append(["C1-C3", 12, 10, None, "2.2 uF", None])
    ws.append(["C7", "500 mV", None, 85.5, None, None])
    ws.append(["C8", 3.3, 0.05, None, None, None])
    ws["C6"].number_format = "0%"  # typed as "5%": the workbook stores 0.05
    path = tmp_path / "design.xlsx"
    wb.save(path)

    d = read_design(str(path))
    assert d.format == "xlsx" and d.sheet == "Conditions"
    c = d.conditions
    assert c.at["C2", "design_row"] == 4  # worksheet row numbers
    assert c.at["C2", "v_dc_max"] == pytest.approx(13.2)  # 12 V x 1.10
    assert c.at["C3", "c_min_f"] == pytest.approx(2.2e-6)
    assert c.at["C7", "v_dc"] == 0.5 and c.at["C7", "t_ambient_c"] == 85.5
    assert d.defaults == pytest.approx({"t_ambient_c": 40.0, "life_h": 87660.0})
    # The cell formatted "0%" shows 5 %: it reads as 5 %, not 0.05 % (issue 9, class 9).
    assert c.at["C8", "v_dc_max"] == pytest.approx(3.3 * 1.05)
    assert not any("v_tol_pct of 0.05 %" in w for w in map(str, d.warnings))
    assert read_design(str(path), sheet="Conditions").conditions.equals(c)


TOML = '''\
# Operating conditions of the invented board KX-7
[defaults]
t_ambient_c = "45 degC"
life_h = "10 years"

[groups."+5V_LOGIC"]
members = ["C1-C4", "C20"]
v_dc = "5 V"
v_tol_pct = 5
"ripple [mVpp]" = 100
notes = "logic rail"

[groups.BULK_12V]
kind = "bank"
v_dc = 12
c_min_f = "470 uF"

[parts.C3]
t_ambient_c = "85 degC"
notes = "beside the regulator"

[parts."C40-C42, C45"]
v_dc = "11.5 V"
group = "BULK_12V"

[parts.C50-C51]
v_dc = 3.3
t_rise_c = "10 degC"
'''


def test_read_toml_file(tmp_path):
    path = tmp_path / "design.toml"
    path.write_text(TOML, encoding="utf-8")
    d = read_design(str(path))
    assert d.format == "toml" and d.sha256 == hashlib.sha256(path.read_bytes()).hexdigest()
    assert d.defaults == pytest.approx({"t_ambient_c": 45.0, "life_h": 87660.0})
    assert d.defaults_row == 2
    g = d.groups["+5V_LOGIC"]
    assert g.members == ("C1", "C2", "C3", "C4", "C20") and g.row == 6
    assert d.groups["BULK_12V"].members == ("C40", "C41", "C42", "C45")
    assert d.groups["BULK_12V"].kind == "bank"
    c = d.conditions
    assert c.at["C1", "v_ripple_pk"] == pytest.approx(0.05)
    assert c.at["C1", "v_dc_max"] == pytest.approx(5.25)
    assert c.at["C3", "t_ambient_c"] == 85.0 and c.at["C3", "v_dc"] == 5.0
    assert c.at["C3", "design_row"] == 18 and c.at["C3", "condition_source"] == "row"
    assert c.at["C41", "v_dc"] == 11.5 and c.at["C41", "c_min_f"] == 0.0  # the bank's need
    assert c.at["C51", "t_rise_c"] == 10.0 and c.at["C51", "design_row"] == 26
    out = d.for_placements(pd.Series(["C2", "C3", "C99"]))
    assert out["t_ambient_c"].tolist() == [45.0, 85.0, 45.0]
    assert out["condition_source"].tolist() == ["group", "row", "defaults"]


def test_missing_file(tmp_path):
    with pytest.raises(InputError, match="not found"):
        read_design(str(tmp_path / "none.csv"))


def test_csv_without_a_design_header(tmp_path):
    path = tmp_path / "bom.csv"
    path.write_text("Designator,Comment\nC1,100n\n", encoding="utf-8")
    with pytest.raises(InputError, match="no design-sheet header"):
        read_design(str(path))


def test_large_sheet_is_column_work():
    # 20k designators with a handful of distinct texts: conversion is per distinct string.
    n = 20_000
    texts = np.array(["5 V", "12 V", "500 mV", "3.3"], dtype=object)[np.arange(n) % 4]
    frame = pd.DataFrame({"refdes": [f"C{i}" for i in range(1, n + 1)], "v_dc": texts})
    d = design_from_table(frame)
    assert len(d.conditions) == n
    assert d.conditions["v_dc"].iloc[:4].tolist() == [5.0, 12.0, 0.5, 3.3]
    out = d.for_placements(pd.Series([f"C{i}" for i in range(n, 0, -1)]))
    assert out["v_dc"].iloc[-4:].tolist() == [3.3, 0.5, 12.0, 5.0]  # C4, C3, C2, C1


def test_design_sheet_circuit_columns_csv_and_toml(tmp_path):
    # The circuit columns the stress stage reads (bomcheck/stress/circuit.py), from a table
    # and from TOML alike; SI prefixes k = 1e3, m = 1e-3 (SI brochure).
    csv = tmp_path / "d.csv"
    csv.write_text(
        "refdes,members,kind,v_dc,r_balance_ohm,r_balance_tol_pct,r_bleeder_ohm,"
        "t_discharge_max_s,slew_v_per_s,r_source_ohm,i_ripple_a,f_ripple_hz\n"
        "LINK,C1-C2,series,400 V,100 kohm,1,47 kohm,10 s,,47 ohm,0.9 A,100 Hz\n"
        "BULK,C3-C4,bank,24,,,10 kohm,,12 V/ms,,1.5 A,50 kHz\n", encoding="utf-8")
    toml = tmp_path / "d.toml"
    toml.write_text(
        '[groups.LINK]\nmembers = "C1-C2"\nkind = "series"\nv_dc = "400 V"\n'
        'r_balance_ohm = "100 kohm"\nr_balance_tol_pct = "±1 %"\nr_bleeder_ohm = "47 kohm"\n'
        't_discharge_max_s = "10 s"\nr_source_ohm = 47\ni_ripple_a = "900 mA"\n'
        'f_ripple_hz = "100 Hz"\n'
        '[groups.BULK]\nmembers = "C3-C4"\nkind = "bank"\nv_dc = 24\nr_bleeder_ohm = "10 kohm"\n'
        'slew_v_per_s = "12 V/ms"\ni_ripple_a = "1.5 A"\nf_ripple_hz = "50 kHz"\n',
        encoding="utf-8")
    for path in (csv, toml):
        d = read_design(str(path))
        c = d.conditions
        # Per-member values reach the members; whole-group values stay on the group.
        assert c.loc[["C1", "C2"], "r_balance_ohm"].tolist() == [100e3, 100e3]
        assert c.loc[["C1", "C2"], "r_balance_tol_pct"].tolist() == pytest.approx([1.0, 1.0])
        assert c.loc[["C1", "C2"], "i_ripple_a"].tolist() == pytest.approx([0.9, 0.9])
        assert c.loc[["C1", "C2"], "r_bleeder_ohm"].isna().all()
        assert c.loc[["C3", "C4"], "slew_v_per_s"].tolist() == pytest.approx([12000.0] * 2)
        assert c.loc[["C3", "C4"], "i_ripple_a"].isna().all()  # shared by the stage
        link, bulk = d.groups["LINK"], d.groups["BULK"]
        assert (link.kind, link.conditions["r_bleeder_ohm"]) == ("series", 47e3)
        assert link.conditions["r_source_ohm"] == 47.0
        assert link.conditions["t_discharge_max_s"] == 10.0
        assert (bulk.kind, bulk.conditions["i_ripple_a"]) == ("bank", 1.5)
        assert bulk.conditions["f_ripple_hz"] == pytest.approx(50e3)


def test_design_sheet_circuit_column_of_the_wrong_dimension(tmp_path):
    path = tmp_path / "d.csv"
    path.write_text("refdes,v_dc,r_bleeder_ohm\nC1,400,47 uF\n", encoding="utf-8")
    with pytest.raises(InputError) as info:
        read_design(str(path))
    assert info.value.row == 2 and info.value.column == "r_bleeder_ohm"


# The design sheet at scale: condition columns read as numbers give the same design, warnings
# and errors as the same sheet read as text (a bare number's text is read by ``float`` and
# rounded to 15 significant digits either way), and single designators found by character
# classes agree with the pattern.

SCALE_HEADER = "refdes,members,v_dc [V],v_tol_pct,Ripple mVpp,t_ambient_c,c_min_f,life_h,notes\n"


def _write_scale(tmp_path, body, header=SCALE_HEADER):
    path = tmp_path / "design.csv"
    path.write_text(header + body, encoding="utf-8")
    return str(path)


def _as_numbers(path):
    """The sheet read with its condition columns as numbers (NeedsText if it cannot be)."""
    raw = read_input_table(path, sheet=None, header_predicate=is_design_header, what="design",
                           expected="", numeric=_condition_columns)
    kinds = {h: raw.frame[h].dtype.kind for h in raw.frame.columns}
    assert {h for h, k in kinds.items() if k == "f"} == {
        h for h in raw.frame.columns if h not in ("refdes", "members", "notes")}
    return design_from_table(raw.frame, raw.rows, path=path, header_row=raw.header_row)


def _same_as_text(path):
    numbers, text = read_design(path), _read_table_design(path, None, None)
    assert _as_numbers(path).table.equals(numbers.table)  # read as numbers, not again as text
    assert numbers.conditions.equals(text.conditions)
    assert numbers.table.equals(text.table)
    assert numbers.warnings == text.warnings
    assert (numbers.defaults, numbers.defaults_row) == (text.defaults, text.defaults_row)
    assert numbers.groups == text.groups
    return numbers


def test_plain_numbers_read_as_numbers_equal_their_text(tmp_path):
    # Long mantissas, exponents, signs and zeros: float() of the text, then 15 digits
    # (value from memory: IEEE 754 doubles hold 15 significant decimal digits exactly).
    body = ("*,,,,,45,,87600,\n"
            "RAIL,\"C1-C3\",5,5,100,,1e-4,,rail\n"
            "C4,,12.000000000000001,0.05,,85,2.2e-6,5e4,\n"
            "C5,,-3.3,,,-40,0,,neg\n"
            "C6,,0.1234567890123456789,,,+25.5,.5e-6,,\n"
            "C7,,-0,,,,,,\n"
            "\n")
    design = _same_as_text(_write_scale(tmp_path, body))
    assert design.conditions.at["C5", "v_dc"] == -3.3
    assert design.conditions.at["C1", "v_ripple_pk"] == pytest.approx(0.05)  # 100 mVpp / 2
    assert design.conditions.at["C4", "v_tol_pct"] == 0.05
    assert any("unusually small" in w.message for w in design.warnings)


def test_many_random_plain_numbers_equal_their_text(tmp_path):
    rng = random.Random(7)
    lines = []
    for i in range(400):
        digits = "".join(rng.choice("0123456789") for _ in range(rng.randint(1, 18)))
        cut = rng.randint(0, min(3, len(digits)))  # within the plausible voltages
        v = f"{digits[:cut]}.{digits[cut:]}" if rng.random() < 0.8 else digits[:3]
        if rng.random() < 0.3:
            v += f"e{rng.randint(-3, 1)}"
        lines.append(f"C{i + 1},,{v},,,{rng.randint(-40, 120)},,,\n")
    _same_as_text(_write_scale(tmp_path, "".join(lines)))


@pytest.mark.parametrize("cell", ["13.2 V", "none", "n/a", "-", " ", "±5 %", "1,5", "nan", "inf"])
def test_a_cell_that_needs_its_text_reads_the_sheet_as_text(tmp_path, cell):
    column = "v_tol_pct" if "%" in cell else "c_min_f" if cell == "none" else "v_dc"
    header = f"refdes,{column},t_ambient_c\n"
    path = _write_scale(tmp_path, f"C1,5,40\nC2,{cell},50\n", header)
    try:
        text = _read_table_design(path, None, None)
    except InputError as exc:
        with pytest.raises(InputError) as got:
            read_design(path)
        assert str(got.value) == str(exc)
        return
    assert read_design(path).conditions.equals(text.conditions)


@pytest.mark.parametrize("cell", ["1e400", "-5", "2000000"])
def test_an_implausible_number_is_named_by_its_text(tmp_path, cell):
    path = _write_scale(tmp_path, f"C1,{cell},40\n", "refdes,c_min_f,t_ambient_c\n")
    with pytest.raises(InputError) as text:
        _read_table_design(path, None, None)
    with pytest.raises(InputError) as got:
        read_design(path)
    assert str(got.value) == str(text.value) and cell in str(got.value)


@pytest.mark.parametrize("column, cell, problem", [
    # pandas' float reader makes a column of only true/false 1.0 and 0.0 (pandas read_csv
    # documentation: true_values/false_values; its booleans also convert); the text path
    # refuses them. A FALSE in v_ac_rms read as 0 V would be a wrong pass.
    ("v_dc [V]", "TRUE", "not a quantity"),
    ("v_ac_rms [V]", "false", "not a quantity"),
    ("t_rise_c", "tRuE", "not a quantity"),
    # The text path refuses more than 30 significant digits or 40 characters
    # (bomcheck.parse.units.parse_number); pandas' reader would round them.
    ("v_dc", "48.0000000000000000000000000000000000001", "too many digits"),
    ("v_dc", "0.1000000000000000055511151231257827", "too many digits"),
    ("v_dc", "123456789012345678901234567890e+00000000000", "too many digits"),
])
def test_a_cell_the_float_reader_would_take_is_read_as_its_text(tmp_path, column, cell,
                                                                 problem):
    path = _write_scale(tmp_path, f"C1,{cell},55\n", f"refdes,{column},t_ambient_c\n")
    with pytest.raises(InputError) as text:
        _read_table_design(path, None, None)
    with pytest.raises(InputError) as got:
        read_design(path)
    assert str(got.value) == str(text.value) and problem in str(got.value)


def test_a_note_saying_true_only_costs_the_text_path(tmp_path):
    path = _write_scale(tmp_path, "C1,,48,,,55,,,this is true\n")
    design = read_design(path)
    assert design.conditions.at["C1", "v_dc"] == 48.0
    assert design.conditions.equals(_read_table_design(path, None, None).conditions)


def test_single_designators_by_character_classes_agree_with_the_pattern():
    rng = random.Random(3)
    alphabet = "Cc1_0A9 ,-zZ@[`{/:\t"
    for _ in range(2000):
        cells = ["".join(rng.choice(alphabet) for _ in range(rng.randint(0, 5)))
                 for _ in range(rng.randint(1, 8))]
        single, upper = _single_designators(np.array(cells, dtype=object))
        want = [bool(re.fullmatch(SINGLE, c)) for c in cells]
        assert single.tolist() == want
        assert upper.tolist() == [c.upper() for c, w in zip(cells, want) if w]


def test_no_value_words_keep_a_column_read_as_numbers(tmp_path):
    # "-", "n/a", "NA" give no value, as their text does (design_cells.NO_VALUE).
    path = _write_scale(tmp_path, "C1,,5,,,-,,,\nC2,,N/A,,,40,,na,\nC3,,\u2013,,,NA,,,\n")
    design = _same_as_text(path)
    assert design.conditions["v_dc"].isna().tolist() == [False, True, True]

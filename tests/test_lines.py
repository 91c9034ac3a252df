"""Normalise stage (bomcheck/parse/lines.py): the lines of a BOM table, each classified as
capacitor placements, another part or an unreadable row; BOM exports in the styles of
schematic-capture, PCB, ERP and CM tools (issues 9 and 11): header units, competing columns,
footprints, cables. Fixtures written here."""

from __future__ import annotations

import math

import numpy as np
import pytest

from bomcheck.parse.importer import read_bom
from bomcheck.parse.lines import parse_qty, row_texts
from read_helpers import bom_file as _file, placement_column as _col


def test_unit_in_the_header_applies_to_bare_numbers(tmp_path):
    # Issue 9 class 8: 470 under "Capacitance (uF)" is 470 uF, not the code 47 pF (IEC 60062).
    text = ("Designator,Capacitance (uF),Voltage [V],Rated Temp (°C),Tolerance (%)\n"
            "C1,470,400,105,20\n"
            "C2,4.7,16,85,10\n"
            "C3,100nF,50,125,5\n")
    r = read_bom(_file(tmp_path, text))
    assert _col(r, "capacitance_f") == pytest.approx([470e-6, 4.7e-6, 100e-9])
    assert _col(r, "voltage_v") == [400.0, 16.0, 50.0]
    assert _col(r, "temp_max_c") == [105.0, 85.0, 125.0]
    assert _col(r, "tol_minus_pct") == [20.0, 10.0, 5.0]


def test_kilovolt_header(tmp_path):
    r = read_bom(_file(tmp_path, "Designator,Value,Voltage (kV)\nC1,1nF,3\n"))
    assert _col(r, "voltage_v") == [3000.0]


def test_two_columns_for_one_field_are_a_finding(tmp_path):
    # Issue 9 class 8: a stale "Voltage (Rev A)" beside "Voltage (V)": the unit column is used
    # and the choice is reported, naming both.
    text = ("Designator,Value,Voltage (Rev A),Voltage (V)\n"
            "C1,100nF,50,16\n")
    r = read_bom(_file(tmp_path, text))
    assert _col(r, "voltage_v") == [16.0]
    f = [f for f in r.findings if f.code == "column_ambiguous"]
    # One finding on the header, one on the line where the two columns differ (the audit turns
    # a line finding into a warning on its placements: never a silent pass).
    assert [x.row for x in f] == [1, 2]
    assert all("'Voltage (V)'" in x.message and "'Voltage (Rev A)'" in x.message for x in f)


def test_library_style_values_in_a_bom(tmp_path):
    # Common practice of EDA symbol libraries; the footprint keeps giving package 0603.
    text = ("Reference,Value,Footprint\n"
            "C1,C_0603_100n_50V_X7R,Capacitor_SMD:C_0603_1608Metric\n"
            "C2,C_1206_22u_25V_X5R_20%,Capacitor_SMD:C_1206_3216Metric\n")
    r = read_bom(_file(tmp_path, text))
    assert _col(r, "capacitance_f") == pytest.approx([100e-9, 22e-6])
    assert _col(r, "voltage_v") == [50.0, 25.0] and _col(r, "package") == ["0603", "1206"]
    assert not r.findings


def test_cable_with_a_c_designator_is_not_a_capacitor(tmp_path):
    text = ("Designator,Description\n"
            "C30,CABLE ASSY FFC 24P 100MM\n"
            "C31,CAP CER 24PF 50V C0G 0402\n")
    r = read_bom(_file(tmp_path, text))
    assert _col(r, "refdes") == ["C31"]
    sk = r.skipped
    assert sk["kind"].tolist() == ["not_capacitor"] and "cable" in sk["reason"].iloc[0]


@pytest.mark.parametrize(
    ("text", "qty"),
    # Quantity cells as BOM exports write them (common practice): a bare count, with "pcs" or
    # "Stk." (German Stück), a decimal comma.
    [("4", 4.0), ("2 pcs", 2.0), ("1pc", 1.0), ("3 Stk.", 3.0), ("2,5", 2.5), (" 7 ", 7.0)],
)
def test_quantity_cells(text, qty):
    assert parse_qty(text) == (qty, True)


def test_empty_quantity_is_readable_but_no_number_and_words_are_unreadable():
    # An empty quantity cell is common practice (the designators count); a word is not a count.
    value, readable = parse_qty("")
    assert math.isnan(value) and readable
    value, readable = parse_qty("four")
    assert math.isnan(value) and not readable


def test_row_texts_join_the_filled_cells_of_each_row():
    # What the user sees of a row in a reason: its filled cells in column order (project wording).
    arrays = [np.array(["C1", "C2", ""], dtype=object), np.array(["100nF", "", ""], dtype=object),
              np.array(["50V", "16V", "x"], dtype=object)]
    assert row_texts(arrays, np.array([0, 1, 2])) == ["C1 | 100nF | 50V", "C2 | 16V", "x"]
    assert row_texts(arrays, np.array([], dtype=int)) == []


def test_a_resistor_line_is_another_part_and_a_capacitor_line_gives_placements(tmp_path):
    # Totals: rows read = capacitor rows + non-capacitor rows + unreadable rows (the import's
    # row accounting, see bomcheck/parse/accounting.py).
    r = read_bom(_file(tmp_path, "Designator,Qty,Value\nC1 C2,2,100nF 50V X7R\nR1,1,10k\n"))
    assert _col(r, "refdes") == ["C1", "C2"]
    assert (r.totals["capacitor_rows"], r.totals["non_capacitor_rows"]) == (1, 1)

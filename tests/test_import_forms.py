"""BOM exports in the styles of schematic-capture, PCB, ERP and CM tools (issues 9 and 11):
header units, competing columns, category columns, footprints, cables. Fixtures written here."""

from __future__ import annotations

import pytest

from bomcheck.parse.importer import read_bom


def _file(tmp_path, text, name="bom.csv"):
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return str(path)


def _col(r, name):
    return r.placements[name].tolist()


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


def test_library_style_values_in_a_bom(tmp_path):
    # Common practice of EDA symbol libraries; the footprint keeps giving package 0603.
    text = ("Reference,Value,Footprint\n"
            "C1,C_0603_100n_50V_X7R,Capacitor_SMD:C_0603_1608Metric\n"
            "C2,C_1206_22u_25V_X5R_20%,Capacitor_SMD:C_1206_3216Metric\n")
    r = read_bom(_file(tmp_path, text))
    assert _col(r, "capacitance_f") == pytest.approx([100e-9, 22e-6])
    assert _col(r, "voltage_v") == [50.0, 25.0] and _col(r, "package") == ["0603", "1206"]
    assert not r.findings


def test_footprint_and_case_letter_of_the_same_case_do_not_conflict(tmp_path):
    # IPC-7351 CAPT6032X280N is the 6032-28 case, tantalum case C in the common lettering.
    text = ("Designator,Description,Footprint\n"
            "C1,CAP TANT 47UF 16V 10% case C,CAPT6032X280N\n"
            "C2,CAP TANT 47UF 16V 10% case D,CAPT6032X280N\n")
    r = read_bom(_file(tmp_path, text))
    assert [f.refdes for f in r.findings] == ["C2"]


def test_cable_with_a_c_designator_is_not_a_capacitor(tmp_path):
    text = ("Designator,Description\n"
            "C30,CABLE ASSY FFC 24P 100MM\n"
            "C31,CAP CER 24PF 50V C0G 0402\n")
    r = read_bom(_file(tmp_path, text))
    assert _col(r, "refdes") == ["C31"]
    sk = r.skipped
    assert sk["kind"].tolist() == ["not_capacitor"] and "cable" in sk["reason"].iloc[0]


def test_safety_word_of_another_part_does_not_make_a_safety_capacitor(tmp_path):
    r = read_bom(_file(tmp_path, "Designator,Description\nC5,CAP CER 47PF 50V C0G 0402 "
                                 "(Y1 load)\n"))
    assert _col(r, "safety_class") == [None] and _col(r, "voltage_kind") == [None]


def test_bom_column_vs_text_keeps_the_lower_voltage(tmp_path):
    # Issue 9 class 6: 50 V column vs 16V in the value.
    r = read_bom(_file(tmp_path, "Designator,Value,Voltage\nC1,10uF 16V,50V\n"))
    assert _col(r, "voltage_v") == [16.0]
    assert [f.code for f in r.findings] == ["column_conflict"]

"""Normalise stage: BOM files to capacitor placements, every row accounted for.

Every fixture is written by its test into tmp_path; part numbers and maker names are invented.
Each BOM test checks the accounting identity and the exact placements.
"""

import gc
import hashlib
import math

import numpy as np
import openpyxl
import pandas as pd
import pytest

from bomcheck.cli.main import main
from bomcheck.errors import InputError
from bomcheck.parse.importer import (
    PLACEMENT_COLUMNS,
    SKIPPED_COLUMNS,
    ImportFinding,
    ImportOptions,
    import_frame,
    read_bom,
)
from bomcheck.spec import SPEC_KEYS
from read_helpers import check_accounting as _check_accounting


def _file(tmp_path, text, name="bom.csv", encoding="utf-8"):
    path = tmp_path / name
    path.write_bytes(text.encode(encoding))
    return str(path)


def _num(v):
    return None if v is None or (isinstance(v, float) and math.isnan(v)) else float(v)


def _placements(result):
    """(refdes, row, fitted, capacitance in F, rated voltage in V) per placement."""
    p = result.placements
    return [(r, int(row), bool(f), _num(c), _num(v)) for r, row, f, c, v in
            zip(p["refdes"], p["row"], p["fitted"], p["capacitance_f"], p["voltage_v"])]


def _same(got, expected):
    assert len(got) == len(expected), (got, expected)
    for g, e in zip(got, expected):
        assert g[:3] == e[:3], (g, e)
        for a, b in zip(g[3:], e[3:]):
            assert (a is None and b is None) or math.isclose(a, b, rel_tol=1e-9), (g, e)


def _skipped(result):
    return [(int(r), k, reason) for r, k, reason in
            zip(result.skipped["row"], result.skipped["kind"], result.skipped["reason"])]


# ---------------------------------------------------------------------------------------------
# Formats, encodings, languages


def test_cp1252_csv_with_title_rows_and_micro_sign(tmp_path):
    # cp1252 code page: byte 0xB5 is the micro sign, 0xFC is u-umlaut.
    raw = (b"Pr\xfcfprotokoll KV-2210 Rev C\r\nexport 2024-05-01\r\n\r\n"
           b"Designator,Qty,Value,Description,Voltage\r\n"
           b"C1,1,4.7\xb5F,CAP CER 4.7\xb5F 25V X7R 0805,25V\r\n"
           b"C2,1,100n,CAP CER 100nF 50V X7R 0402,50V\r\n"
           b"R1,1,4K7,RES 4K7 1% 0402,\r\n")
    path = tmp_path / "bom.csv"
    path.write_bytes(raw)
    r = read_bom(str(path))
    _check_accounting(r)
    assert (r.source.encoding, r.source.format, r.source.header_row) == ("cp1252", "csv", 4)
    # SI prefix micro = 1e-6; IEC 60062 RKM: "100n" = 100 nF.
    _same(_placements(r), [("C1", 5, True, 4.7e-6, 25.0), ("C2", 6, True, 100e-9, 50.0)])
    assert _skipped(r) == [(7, "not_capacitor",
                            "designator prefix 'R' (resistor) is not a capacitor")]
    assert r.placements["value_text"].tolist() == ["4.7\u00b5F", "100n"]


def _xlsx(path):
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "BOM"
    ws["A1"] = "KV-2210 controller - bill of materials"
    ws.merge_cells("A1:F1")
    ws["A2"] = "Rev C"
    header = ["Designator", "Qty", "Value", "Description", "Package", "Voltage"]
    rows = {
        4: header,
        5: ["C1", 1, "100nF", "CAP CER 0.1UF 50V X7R", "0402", "50V"],
        6: ["C2, C3", 2, "4u7", "CAP CER 4.7UF 25V X5R", "0805", 25],
        8: ["R1", 1, "10K", "RES 10K 1%", "0402", None],  # row 7: blank spacer
        9: ["C4", 1, "22pF", "CAP CER 22PF 50V C0G", "0402", "50V"],
    }
    for r, values in rows.items():
        for c, v in enumerate(values, start=1):
            ws.cell(r, c, v)
    wb.save(path)
    return str(path)


def test_xlsx_with_merged_title_and_header_on_row_4(tmp_path):
    r = read_bom(_xlsx(tmp_path / "bom.xlsx"))
    _check_accounting(r)
    assert (r.source.format, r.source.sheet, r.source.header_row) == ("xlsx", "BOM", 4)
    # IEC 60062 RKM: 4u7 = 4.7 uF; a bare 25 in a voltage column is 25 V.
    _same(_placements(r), [("C1", 5, True, 100e-9, 50.0), ("C2", 6, True, 4.7e-6, 25.0),
                           ("C3", 6, True, 4.7e-6, 25.0), ("C4", 9, True, 22e-12, 50.0)])
    assert r.placements["package"].tolist() == ["0402", "0805", "0805", "0402"]
    assert r.placements["dielectric"].tolist() == ["X7R", "X5R", "X5R", "C0G"]
    assert _skipped(r) == [(8, "not_capacitor",
                            "designator prefix 'R' (resistor) is not a capacitor")]
    assert r.totals["blank_rows"] == 1


def test_semicolon_csv_german_headers_decimal_commas(tmp_path):
    text = ("St\u00fcckliste Netzteil KV-2210\n"
            "Bauteil;Menge;Wert;Bezeichnung;Geh\u00e4use;Spannung;Best\u00fcckt;Bemerkung\n"
            "C1;1;4,7\u00b5F;Kondensator Keramik 4,7\u00b5F X7R;0805;6,3V;ja;\n"
            "C2, C3;2;0,1\u00b5F;Kondensator 100nF X7R;0402;50V;ja;\n"
            "C4;1;2,2nF;;0402;50V;nein;\n"
            "C5;1;10\u00b5F;;0805;16V;;nicht best\u00fcckt\n"
            "R1;1;4K7;Widerstand 4,7k;0402;;ja;\n")
    r = read_bom(_file(tmp_path, text, encoding="utf-8-sig"))
    _check_accounting(r)
    assert r.source.format == "semicolon"
    assert r.source.columns == {
        "refdes": "Bauteil", "qty": "Menge", "value": "Wert", "description": "Bezeichnung",
        "package": "Geh\u00e4use", "voltage": "Spannung", "fitted": "Best\u00fcckt",
        "notes": "Bemerkung"}
    # Decimal commas: 4,7 uF = 4.7 uF; 6,3 V = 6.3 V.
    _same(_placements(r), [("C1", 3, True, 4.7e-6, 6.3), ("C2", 4, True, 0.1e-6, 50.0),
                           ("C3", 4, True, 0.1e-6, 50.0), ("C4", 5, False, 2.2e-9, 50.0),
                           ("C5", 6, False, 10e-6, 16.0)])
    assert r.placements["not_fitted_reason"].tolist()[3:] == [
        "Best\u00fcckt column says 'nein'", "'nicht best\u00fcckt' in notes"]
    assert _skipped(r) == [(7, "not_capacitor",
                            "designator prefix 'R' (resistor) is not a capacitor")]


def test_french_headers(tmp_path):
    text = ("Rep\u00e8re;Quantit\u00e9;Valeur;D\u00e9signation;Bo\u00eetier;Tension;Remarque\n"
            "C1;1;100nF;Condensateur c\u00e9ramique 100nF 50V;0603;50V;\n"
            "C2;1;1\u00b5F;Condensateur 1\u00b5F;0603;25V;non mont\u00e9\n"
            "L1;1;10\u00b5H;Inductance 10\u00b5H;1210;;\n")
    r = read_bom(_file(tmp_path, text))
    _check_accounting(r)
    assert r.source.columns["refdes"] == "Rep\u00e8re"
    assert r.source.columns["qty"] == "Quantit\u00e9"
    assert r.source.columns["description"] == "D\u00e9signation"
    _same(_placements(r), [("C1", 2, True, 100e-9, 50.0), ("C2", 3, False, 1e-6, 25.0)])
    assert r.placements["not_fitted_reason"].tolist() == [None, "'non mont\u00e9' in notes"]
    assert _skipped(r) == [(4, "not_capacitor",
                            "designator prefix 'L' (inductor) is not a capacitor")]


def test_utf16_tab_separated(tmp_path):
    text = "Designator\tQty\tValue\tVoltage\r\nC1\t1\t4\u00b57\t16V\r\nC2\t1\t1n0\t50V\r\n"
    r = read_bom(_file(tmp_path, text, name="bom.txt", encoding="utf-16"))
    _check_accounting(r)
    assert (r.source.format, r.source.encoding) == ("tsv", "utf-16")
    # IEC 60062 RKM with the micro sign: 4u7 = 4.7 uF; 1n0 = 1 nF.
    _same(_placements(r), [("C1", 2, True, 4.7e-6, 16.0), ("C2", 3, True, 1e-9, 50.0)])


# ---------------------------------------------------------------------------------------------
# Designators and quantities


def test_grouped_designators_and_qty(tmp_path):
    text = ('Designator,Qty,Value,Voltage\n'
            '"C1, C3-C5",4,100nF,50V\n'
            'C6 C7,3,1uF,25V\n'
            '"C8/C9, C10..C12",4,10uF,16V\n'
            'C13-15,3,22pF,50V\n'
            'C16,,47pF,50V\n'
            'C17,two,47pF,50V\n')
    r = read_bom(_file(tmp_path, text))
    _check_accounting(r)
    assert r.placements["refdes"].tolist() == [f"C{i}" for i in (1, 3, 4, 5, *range(6, 18))]
    assert r.placements["row"].tolist() == [2] * 4 + [3] * 2 + [4] * 5 + [5] * 3 + [6, 7]
    assert r.placements["line"].tolist() == [0] * 4 + [1] * 2 + [2] * 5 + [3] * 3 + [4, 5]
    got = [(f.row, f.refdes, f.code) for f in r.findings]
    assert got == [(3, None, "qty_mismatch"), (4, None, "qty_mismatch"),
                   (7, None, "qty_unreadable")]
    assert "Qty says 3 but the designators name 2 ('C6 C7')" in r.findings[0].message
    assert "Qty says 4 but the designators name 5" in r.findings[1].message
    qty = r.placements["qty"].tolist()
    assert qty[:4] == [4.0] * 4 and math.isnan(qty[-2]) and math.isnan(qty[-1])


def test_continuation_rows_join_the_line_above(tmp_path):
    text = ('Designator,Qty,Value,Description\n'
            '"C1, C2, C3,",6,100nF,CAP CER 100nF 50V\n'
            '"C4, C5, C6",,,\n'           # only designators: the list goes on
            'C7,1,1uF,CAP CER 1uF\n'
            ',,,25V X7R 0603\n'           # no designator: the description goes on
            'R1,1,10K,RES 10K\n'
            'R2,,,\n'                     # below a single designator: a line of its own
            ',,,see note 4\n')
    r = read_bom(_file(tmp_path, text))
    _check_accounting(r)
    _same(_placements(r), [(f"C{i}", 2, True, 100e-9, 50.0) for i in range(1, 7)]
          + [("C7", 4, True, 1e-6, 25.0)])
    assert r.placements["description"].tolist()[-1] == "CAP CER 1uF 25V X7R 0603"
    assert r.placements["dielectric"].tolist()[-1] == "X7R"
    assert not r.findings  # Qty 6 matches the six designators over two rows
    assert r.totals["continuation_rows"] == 3
    assert r.totals["capacitor_rows"] == 4 and r.totals["rows_read"] == 7
    reason = "designator prefix 'R' (resistor) is not a capacitor"
    assert _skipped(r) == [(6, "not_capacitor", reason), (7, "not_capacitor", reason),
                           (8, "not_capacitor", f"{reason} (continuation of row 7)")]


def test_unreadable_rows_have_reasons(tmp_path):
    text = ("Designator,Value\n"
            ",100nF\n"
            "Designator,Value\n"
            "see note,100nF\n"
            "C5-C3,1uF\n"
            "C1 R1,1uF\n"
            "C9,???\n"
            "C10,\n"
            "C11,100nF\n")
    r = read_bom(_file(tmp_path, text))
    _check_accounting(r)
    _same(_placements(r), [("C11", 9, True, 100e-9, None)])
    assert _skipped(r) == [
        (2, "unreadable", "no designator"),
        (3, "unreadable", "repeated header row"),
        (4, "unreadable", "designator list not readable: 'see'"),
        (5, "unreadable", "designator list not readable: designator range runs backwards "
                          "('C5-C3')"),
        (6, "unreadable", "designators mix capacitor and other prefixes (C, R)"),
        (7, "unreadable", "capacitor designator, but no capacitor value could be read ('???')"),
        (8, "unreadable", "capacitor designator with no value or description"),
    ]
    assert r.skipped["text"].tolist()[:2] == ["100nF", "Designator | Value"]


# ---------------------------------------------------------------------------------------------
# Designators


def test_capacitor_rows_without_usable_designators_are_unreadable(tmp_path):
    # Common practice: a capacitor row whose designator is empty or does not expand is
    # counted unreadable with its reason, never dropped (the audit cannot pass it).
    text = ("Designator,Qty,Value,Description\n"
            "C1,1,10uF,CAP CER 10uF 50V X7R 10%\n"
            ",1,10uF,CAP CER 10uF 6.3V X7R 10%\n"
            "C5-C3,3,10uF,CAP CER 10uF 6.3V X7R 10%\n"
            "C7..,1,10uF,CAP CER 10uF 6.3V X7R 10%\n")
    r = read_bom(_file(tmp_path, text))
    _check_accounting(r)
    assert r.totals["unreadable_rows"] == 3 and r.totals["capacitor_rows"] == 1
    rows = _skipped(r)
    assert [(row, kind) for row, kind, _ in rows] == [(3, "unreadable"), (4, "unreadable"),
                                                      (5, "unreadable")]
    assert rows[0][2] == "no designator"
    assert "runs backwards" in rows[1][2] and "not readable" in rows[2][2]


# ---------------------------------------------------------------------------------------------
# Capacitor or not


def test_traps(tmp_path):
    text = ("Designator,Qty,Value,Description\n"
            "CR1,1,BAT54,DIODE SCHOTTKY 30V\n"
            "CN1,1,HDR 2x5,CONN HEADER 2x5 2.54MM\n"
            "Y1,1,16MHz,CRYSTAL 16MHZ 18PF 20PPM\n"
            "X2,1,32.768kHz,XTAL 32.768KHZ 12.5PF\n"
            "L1,1,3n9,IND 3N9 0402\n"
            "L2,1,4u7H,\n"
            "R1,1,4K7,\n"
            "R2,1,2R2 RES,\n"
            "CRY1,1,25MHz,RESONATOR 25MHZ 18PF\n"
            "C1,1,2R2,CAP CER 2.2PF C0G\n"
            "C2,1,4u7,\n"
            "C3,1,18pF,load capacitor for crystal Y1\n"
            "C4,1,4u7H,\n"
            "CX1,1,100nF,CAP FILM X2 275VAC\n"
            "CE1,1,100uF,CAP ALU ELEC 100UF 35V\n"
            "E1,1,104,\n"
            "E2,1,100nF,CAP CER 100NF 50V\n")
    r = read_bom(_file(tmp_path, text))
    _check_accounting(r)
    # IEC 60062: 2R2 = 2.2 pF (R as the decimal point in pF), 4u7 = 4.7 uF.
    _same(_placements(r), [("C1", 11, True, 2.2e-12, None), ("C2", 12, True, 4.7e-6, None),
                           ("C3", 13, True, 18e-12, None), ("CX1", 15, True, 100e-9, 275.0),
                           ("CE1", 16, True, 100e-6, 35.0), ("E2", 18, True, 100e-9, 50.0)])
    assert _skipped(r) == [
        (2, "not_capacitor", "designator prefix 'CR' (diode) is not a capacitor"),
        (3, "not_capacitor", "designator prefix 'CN' (connector) is not a capacitor"),
        (4, "not_capacitor", "designator prefix 'Y' (crystal) is not a capacitor"),
        (5, "not_capacitor", "designator prefix 'X' (crystal) is not a capacitor"),
        (6, "not_capacitor", "designator prefix 'L' (inductor) is not a capacitor"),
        (7, "not_capacitor", "designator prefix 'L' (inductor) is not a capacitor"),
        (8, "not_capacitor", "designator prefix 'R' (resistor) is not a capacitor"),
        (9, "not_capacitor", "designator prefix 'R' (resistor) is not a capacitor"),
        (10, "not_capacitor", "designator prefix 'CRY' (crystal) is not a capacitor"),
        (14, "unreadable", "capacitor designator, but the text reads as an inductor ('4u7H')"),
        (17, "not_capacitor", "designator prefix 'E' is not a capacitor prefix and only a "
                              "bare code reads as a capacitor ('104')"),
    ]


@pytest.mark.parametrize(
    ("line", "pfx"),
    [("R7,100nF,CAP CER 100NF 50V", "'R' (resistor)"),
     ("U5,10uF,CAP CER 10uF 6.3V X7R 10%", "'U' (integrated circuit)"),
     ("L1,4u7,CAP CER 4.7uF 6.3V X7R", "'L' (inductor)")],
)
def test_other_prefix_with_capacitor_text_is_unreadable(tmp_path, line, pfx):
    # Common practice: text that says capacitor on its own (farad unit, CAP, a dielectric code)
    # under the designator of another part means one of the two is a typo; the line is
    # unreadable (counted, so the audit cannot pass it), not quietly a non-capacitor.
    r = read_bom(_file(tmp_path, "Designator,Value,Description\n" + line + "\n"))
    _check_accounting(r)
    assert r.totals["unreadable_rows"] == 1 and r.totals["non_capacitor_rows"] == 0
    (row, kind, reason), = _skipped(r)
    assert (row, kind) == (2, "unreadable")
    assert reason.startswith(f"designator prefix {pfx}, but the text reads as a capacitor")
    assert "disagree" in reason


@pytest.mark.parametrize(
    ("value", "description", "reason"),
    [("2R2 RES", "", "the text reads as a resistor ('RES')"),
     ("", "", "no value or description"),
     ("BW7-MCU", "", "no capacitor evidence in the text ('BW7-MCU')")],
)
def test_unknown_prefix_reasons(tmp_path, value, description, reason):
    r = read_bom(_file(tmp_path, f"Designator,Value,Description\nZ1,{value},{description}\n"))
    _check_accounting(r)
    assert _skipped(r) == [(2, "not_capacitor", reason)]


# ---------------------------------------------------------------------------------------------
# Columns against the text


def test_conservative_reading_wins_and_conflicts_are_findings(tmp_path):
    # Issue 9 class 6: where the columns and the text disagree on a number, the conservative
    # reading is used (smaller capacitance, lower rated voltage, wider tolerance, the dielectric
    # code with the narrower range). Each disagreement is a finding.
    text = ("Designator,Value,Description,Voltage,Tolerance,Dielectric\n"
            "C1,10uF,CAP CER 1uF 25V X5R,,,\n"
            "C2,100nF,CAP CER 0.1UF 50V X7R,25V,,\n"
            "C3,1uF,CAP CER 1UF 16V X7R,,,X5R\n"
            "C4,1uF,CAP CER 1UF 16V 20%,,K,\n"
            "C5,100nF,CAP CER 0.1UF 50V,50V,10%,\n"
            "C6,100nF,CAP CER 0.1UF 16V,50V,,\n")
    r = read_bom(_file(tmp_path, text))
    _check_accounting(r)
    _same(_placements(r), [("C1", 2, True, 1e-6, 25.0), ("C2", 3, True, 100e-9, 25.0),
                           ("C3", 4, True, 1e-6, 16.0), ("C4", 5, True, 1e-6, 16.0),
                           ("C5", 6, True, 100e-9, 50.0), ("C6", 7, True, 100e-9, 16.0)])
    p = r.placements
    # EIA-198 class II: X5R = -55..+85 degC (secondary); IEC 60062: K = +/-10 %.
    assert p["dielectric"].tolist()[2] == "X5R"
    assert (p["temp_min_c"].iloc[2], p["temp_max_c"].iloc[2]) == (-55.0, 85.0)
    assert (p["tol_minus_pct"].iloc[3], p["tol_plus_pct"].iloc[3]) == (20.0, 20.0)
    assert [(f.row, f.refdes, f.code, f.message) for f in r.findings] == [
        (2, "C1", "column_conflict",
         "capacitance: value says 10uF but description says 1uF; using the description "
         "(smaller capacitance, the conservative reading)"),
        (3, "C2", "column_conflict", "rated voltage: voltage column says 25 V but description "
                                     "says 50 V; using the voltage column (lower rated voltage, "
                                     "the conservative reading)"),
        (4, "C3", "column_conflict", "dielectric: dielectric column says X5R but description "
                                     "says X7R; using the dielectric column (narrower "
                                     "temperature range or larger change, the conservative "
                                     "reading)"),
        (5, "C4", "column_conflict", "tolerance: tolerance column says +/-10 % but description "
                                     "says +/-20 %; using the description (wider tolerance, "
                                     "the conservative reading)"),
        (7, "C6", "column_conflict", "rated voltage: voltage column says 50 V but description "
                                     "says 16 V; using the description (lower rated voltage, "
                                     "the conservative reading)"),
    ]


@pytest.mark.parametrize(("column", "text", "kept"), [("X7R", "X5R", "X5R"), ("X5R", "X7R", "X5R"),
                                                     ("C0G", "X7R", "X7R"),
                                                     ("X7R", "X7S", "X7S")])
def test_dielectric_conflict_keeps_the_less_favourable_code(tmp_path, column, text, kept):
    # EIA-198: X5R is rated to +85 degC, X7R to +125 degC; X7S allows +/-22 % against X7R's
    # +/-15 %, C0G 0 +/-30 ppm/degC. Whichever cell holds it, the less favourable code is used.
    r = read_bom(_file(tmp_path, "Designator,Value,Description,Dielectric\n"
                                 f"C3,10uF,CAP CER 10uF 50V {text} 10%,{column}\n"))
    assert r.placements["dielectric"].tolist() == [kept]
    assert [f.code for f in r.findings] == ["column_conflict"]
    assert "the conservative reading" in r.findings[0].message


def test_rated_temperature_conflicts_keep_the_lower(tmp_path):
    # Issue 9 class 6: 105 degC column vs 85C in the description; X5R's 85 degC limit
    # (EIA-198) vs a 125 degC column. The lower rated maximum is used, with a finding.
    text = ("Designator,Value,Description,Temperature\n"
            "C1,470uF 35V,CAP ALU 470UF 35V 85C,105C\n"
            "C2,10uF 16V,CAP CER X5R,125C\n"
            "C3,10uF 16V,CAP CER X5R 125C,\n")
    r = read_bom(_file(tmp_path, text))
    assert r.placements["temp_max_c"].tolist() == [85.0, 85.0, 85.0]
    codes = [(f.refdes, f.code) for f in r.findings]
    assert codes == [("C1", "column_conflict"), ("C2", "column_conflict"),
                     ("C3", "text_conflict")]
    assert "using the lower, 85 degC" in r.findings[0].message


# ---------------------------------------------------------------------------------------------
# Options, result shape


def test_columns_named_by_hand_and_in_a_toml_map(tmp_path):
    path = _file(tmp_path, "Pos;Typ;Stk\nC1;100nF;1\n")
    with pytest.raises(InputError, match="no designator column"):
        read_bom(path)
    r = read_bom(path, ImportOptions(columns={"refdes": "Pos", "value": "Typ", "qty": "Stk"}))
    _check_accounting(r)
    _same(_placements(r), [("C1", 2, True, 100e-9, None)])
    assert r.source.columns == {"refdes": "Pos", "qty": "Stk", "value": "Typ"}
    toml = tmp_path / "map.toml"
    toml.write_text('[columns]\nrefdes = "Pos"\n\n[aliases]\nvalue = ["Typ"]\n', "utf-8")
    r2 = read_bom(path, ImportOptions(column_map=str(toml)))
    assert r2.source.columns == {"refdes": "Pos", "qty": "Stk", "value": "Typ"}  # Stk: alias
    assert _placements(r2) == _placements(r)


def test_sheet_option(tmp_path):
    path = tmp_path / "bom.xlsx"
    wb = openpyxl.Workbook()
    wb.active.title = "Notes"
    wb.active["A1"] = "see the other sheets"
    for name, value in (("Variant A", "100nF"), ("Variant B", "1uF")):
        ws = wb.create_sheet(name)
        ws.append(["Designator", "Value"])
        ws.append(["C1", value])
    wb.save(path)
    assert read_bom(str(path)).source.sheet == "Variant A"
    r = read_bom(str(path), ImportOptions(sheet="Variant B"))
    _same(_placements(r), [("C1", 2, True, 1e-6, None)])
    assert read_bom(str(path), ImportOptions(sheet=3)).source.sheet == "Variant B"


def test_result_shape(tmp_path):
    path = _file(tmp_path, "Designator,Value,MPN,Manufacturer\nC1,100nF,KV-0402-104K,Kvellon\n"
                           "R1,10K,,\n")
    r = read_bom(path)
    assert list(r.placements.columns) == list(PLACEMENT_COLUMNS)
    assert set(PLACEMENT_COLUMNS) >= set(SPEC_KEYS) - {"text"}
    assert list(r.skipped.columns) == list(SKIPPED_COLUMNS)
    p = r.placements
    assert p["row"].dtype == np.int64 and p["fitted"].dtype == bool
    assert p["capacitance_f"].dtype == float and p["qty"].dtype == float
    rec = p.iloc[0]
    assert (rec["mpn"], rec["manufacturer"], rec["text"]) == ("KV-0402-104K", "Kvellon", "100nF")
    assert rec["warnings"] == () and isinstance(rec["unread"], tuple)
    assert r.source.sha256 == hashlib.sha256(open(path, "rb").read()).hexdigest()
    assert r.source.to_dict()["columns"]["mpn"] == "MPN"
    assert r.skipped["text"].tolist() == ["R1 | 10K"]


def test_findings_sort_and_serialise():
    a = ImportFinding(4, None, "qty_mismatch", "m")
    b = ImportFinding(4, "C1", "column_conflict", "m")
    c = ImportFinding(2, "C9", "column_conflict", "m")
    assert sorted([b, a, c]) == [c, a, b]
    assert a.to_dict() == {"row": 4, "refdes": None, "code": "qty_mismatch", "message": "m",
                           "severity": "warn"}


def test_empty_table_below_the_header(tmp_path):
    r = read_bom(_file(tmp_path, "Designator,Value\n\n"))
    _check_accounting(r)
    assert r.totals["rows_read"] == 0 and len(r.placements) == 0


# ---------------------------------------------------------------------------------------------
# Bad input: one line naming the file and the problem; exit status 2 through the CLI


def _bad_files(tmp_path):
    empty = tmp_path / "empty.csv"
    empty.write_bytes(b"")
    binary = tmp_path / "blob.csv"
    binary.write_bytes(bytes(range(256)) * 16)
    fake = tmp_path / "fake.xlsx"
    fake.write_text("Designator,Value\nC1,1n\n", encoding="utf-8")
    nodes = tmp_path / "nodes.csv"
    nodes.write_text("Part number,Value,Qty\nKV-1,100nF,2\n", encoding="utf-8")
    return {"empty": (empty, "the file is empty"), "binary": (binary, "a binary file"),
            "xlsx": (fake, "not an XLSX workbook"),
            "no designator": (nodes, "no designator column among the headers found")}


@pytest.mark.parametrize("case", ["empty", "binary", "xlsx", "no designator"])
def test_bad_input_is_one_line_naming_file_and_problem(tmp_path, case):
    path, problem = _bad_files(tmp_path)[case]
    with pytest.raises(InputError) as err:
        read_bom(str(path))
    msg = str(err.value)
    assert msg.startswith(f"{path}: ") and problem in msg and "\n" not in msg


@pytest.mark.parametrize("case", ["empty", "binary", "xlsx", "no designator"])
def test_cli_import_exits_2_without_traceback(tmp_path, capsys, case):
    path, problem = _bad_files(tmp_path)[case]
    assert main(["import", str(path)]) == 2
    err = capsys.readouterr().err
    assert err.startswith("bomcheck: error: ") and problem in err
    assert err.count("\n") == 1 and "Traceback" not in err


def test_cli_import_json(tmp_path, capsys):
    import json

    path = _file(tmp_path, "Designator,Value\nC1,100nF\nR1,1K\n")
    assert main(["import", path, "--json", "-"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert [p["refdes"] for p in out["placements"]] == ["C1"]
    assert out["totals"]["rows_read"] == 2 and out["skipped"][0]["row"] == 3


# ---------------------------------------------------------------------------------------------
# Numbers read by a guess, or not at all, are findings the audit gives as nodata


def test_guessed_or_unread_numbers_are_nodata_findings(tmp_path):
    # Common practice: "1,500uF" in a comma CSV may be 1500 uF or 1.5 uF; "-10uF" has a sign no
    # capacitance has; "85" has no unit. None of these may pass silently.
    text = ("Designator,Qty,Value,Description\n"
            'C1,1,"1,500uF","CAP ALU ELEC 1,500uF 25V 105C 20%"\n'
            "C2,1,-10uF,CAP CER 16V X7R\n"
            "C3,1,10uF,CAP CER 10uF 16V X7R 85\n"
            "C4,1,10uF,CAP CER 10uF 16V X7R\n")
    r = read_bom(_file(tmp_path, text))
    _check_accounting(r)
    got = sorted({(f.refdes, f.code, f.severity) for f in r.findings})
    assert got == [("C1", "value_unread", "nodata"), ("C2", "capacitance_unread", "nodata"),
                   ("C2", "value_unread", "nodata"), ("C3", "value_unread", "nodata")]
    c2 = [f.message for f in r.findings if f.refdes == "C2" and f.code == "value_unread"]
    assert c2 == ["value: '-10uF': a negative capacitance or rated voltage; not read"]


def test_scientific_value_cell_is_read_as_farads(tmp_path):
    # SI: a spreadsheet's numeric value cell written as 1E-05 is 10 uF in farads; read, so no
    # capacitance finding.
    text = "Designator,Qty,Value,Description\nC2,1,1E-05,CAP CER 16V X7R 10% 0805\n"
    r = read_bom(_file(tmp_path, text))
    assert r.placements["capacitance_f"].tolist() == [pytest.approx(1e-5)]
    assert r.findings == ()


def test_comment_and_part_description_columns_are_read_conservatively(tmp_path):
    # Common practice of EDA BOM exports: a "Comment" or "Part Description" column beside
    # "Value" and "Description" may carry the rating; the conservative reading of all of them
    # is used (lower rated voltage; EIA-198 X5R to +85 degC against X7R to +125 degC) and each
    # disagreement is a finding.
    text = ("Comment,Description,Designator,Footprint,Quantity,Value,Part Description\n"
            "10uF 6.3V X5R,CAP CER 10uF 50V X7R 10%,C1,0805,1,10uF,\n"
            "Capacitor,CAP CER 10uF 50V X7R 10%,C2,0805,1,10uF,CAP CER 10uF 6.3V X5R\n"
            "DNP,CAP CER 10uF 50V X7R 10%,C3,0805,1,10uF,\n")
    r = read_bom(_file(tmp_path, text))
    _check_accounting(r)
    p = r.placements
    assert p["voltage_v"].tolist()[:2] == [6.3, 6.3]
    assert p["dielectric"].tolist()[:2] == ["X5R", "X5R"]
    assert p["temp_max_c"].tolist()[:2] == [85.0, 85.0]
    assert p["fitted"].tolist() == [True, True, False]
    got = sorted((f.refdes, f.code) for f in r.findings)
    assert got == [("C1", "column_conflict")] * 2 + [("C2", "column_conflict")] * 2
    assert any("second value column says 6.3 V" in f.message for f in r.findings)


# The import pauses the collector and hands what it keeps to the oldest generation.
def _small_import():
    frame = pd.DataFrame({"Designator": ["C1", "C2"], "Value": ["100nF 50V X7R", "1uF 25V"],
                          "Description": ["CAP CER lot 4711", "CAP CER lot 4712"]})
    return import_frame(frame)


def test_import_leaves_the_collector_as_it_found_it():
    assert gc.isenabled() and gc.get_freeze_count() == 0
    result = _small_import()
    assert len(result.placements) == 2
    # Enabled again, nothing left in the permanent generation.
    assert gc.isenabled() and gc.get_freeze_count() == 0


def test_import_keeps_the_callers_frozen_objects_frozen():
    gc.freeze()  # a caller that freezes its objects (before forking workers, say)
    try:
        frozen = gc.get_freeze_count()
        assert frozen > 0
        _small_import()
        assert gc.get_freeze_count() >= frozen
    finally:
        gc.unfreeze()

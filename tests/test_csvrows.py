"""CSV rows of an audit (bomcheck.render.csvrows): RFC 4180 with CRLF line ends, one row per fitted
placement, formula cells guarded (OWASP CSV injection), a batch's rows prefixed by product."""

import csv
import io

import pytest
from tiny_reports import tiny_report

from bomcheck.render.csvrows import (CSV_COLUMNS, INJECTION_LEAD, batch_csv_header, board_csv,
                                     csv_rows)


EXPECTED_CSV = (
    "refdes,row,status,waived_from,rule,metric,value,limit,margin,technology,capacitance_f,"
    "voltage_v,dielectric,package,text,message,source,waived\r\n"
    "C1,2,pass,,R-V,voltage_ratio,0.5,0.7,0.2,ceramic,1e-07,50,X7R,0603,"
    "KV-0603-104-C1 | CAP CER 100NF 50V X7R,C1: ratio 50 % <= 70 % limit,S1,\r\n"
    "C2,3,fail,,R-V,voltage_ratio,0.8,0.7,-0.1,ceramic,1e-07,16,X7R,0603,"
    "\"'=HYPERLINK(\"\"http://example.invalid\"\")\",C2: ratio 80 % > 70 % limit,S1,\r\n"
    "C3,3,warn,,R-V,voltage_ratio,0.65,0.7,0.05,ceramic,1e-07,16,X7R,0603,"
    "\"'+1+1\",C3: ratio 65 % > 60 % warn limit,S1,\r\n"
    "C4,4,nodata,,R-V,voltage_ratio,,0.5,,tantalum,2.2e-05,,,C,"
    "\"'@SUM(A1:A2)\",C4: no data: missing applied voltage,S1,\r\n"
    "C5,5,waived,fail,R-V,voltage_ratio,0.9,0.7,-0.2,,,25,,,"
    "KV-0603-104-C5 | CAP CER 100NF 50V X7R,"
    "\"C5: ratio 90 % > 70 % limit; waived (was fail) by R. Okafor until 2027-06-30: test report "
    "TR-9\",S1,R-V (was fail): test report TR-9\r\n"
)


def test_csv_is_exact_and_guards_formula_cells():
    # CSV injection: cells led by = + - @ tab CR are prefixed with a quote and quoted (OWASP).
    report = tiny_report({"C2": '=HYPERLINK("http://example.invalid")', "C3": "+1+1",
                          "C4": "@SUM(A1:A2)"})
    assert csv_rows(report) == EXPECTED_CSV


@pytest.mark.parametrize("lead", INJECTION_LEAD, ids=repr)
def test_csv_quotes_every_formula_lead(lead):
    report = tiny_report({"C1": f"{lead}cmd|' /C calc'!A0"})
    rows = list(csv.reader(io.StringIO(csv_rows(report), newline="")))
    assert rows[1][14] == f"'{lead}cmd|' /C calc'!A0"


def test_csv_keeps_negative_numbers_numeric():
    rows = list(csv.DictReader(io.StringIO(csv_rows(tiny_report()))))
    assert rows[1]["margin"] == "-0.1" and float(rows[1]["margin"]) == -0.1


def test_board_csv_prefixes_each_row_with_the_product():
    report = tiny_report()
    rows = list(csv.reader(io.StringIO(board_csv(report, "Widget, 7"), newline="")))
    plain = list(csv.reader(io.StringIO(csv_rows(report), newline="")))[1:]
    assert [r[0] for r in rows] == ["Widget, 7"] * len(plain) and [r[1:] for r in rows] == plain
    assert batch_csv_header() == "product," + ",".join(CSV_COLUMNS) + "\r\n"

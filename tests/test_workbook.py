"""Read stage, workbooks: sheets, merged titles, both readers, hidden parts, percent cells,
limits, damaged parts, .xls/.ods."""

import os
import sys
import zipfile
from unittest import mock

import openpyxl
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from bomcheck.errors import InputError
from bomcheck.read.limits import Limits, use_limits
from bomcheck.read.reader import HeaderNotFound
from bomcheck.read.workbook import OLE_MAGIC

sys.path.insert(0, os.path.dirname(__file__))
from hostile_corpus import BOM_ROWS, sheet_xml, xlsx_bytes  # noqa: E402
from read_helpers import cells_of, one_line_error, read_any, read_table  # noqa: E402


def _workbook(path, *, cover=True):
    wb = openpyxl.Workbook()
    ws = wb.active
    if cover:
        ws.title = "Cover"
        ws["A1"] = "Notes for the assembly house"
        ws = wb.create_sheet("BOM")
    else:
        ws.title = "BOM"
    ws["A1"] = "KV-2210 controller, bill of materials"
    ws.merge_cells("A1:E1")
    ws["A2"] = "Rev C"
    ws.append([])  # row 3 stays empty
    ws.cell(4, 1, "Designator")
    for col, name in enumerate(["Qty", "Value", "Package", "Voltage"], start=2):
        ws.cell(4, col, name)
    rows = {5: ["C1", 1, "100nF", "0402", "16V"], 6: ["C2, C3", 2.0, 4.7, "0603", 25],
            8: ["C4", 1, "1uF", 603, "50V"]}  # row 7: a blank spacer
    for r, values in rows.items():
        for c, v in enumerate(values, start=1):
            ws.cell(r, c, v)
    wb.create_sheet("Spare")
    wb.save(path)
    return str(path)


def test_xlsx_merged_title_header_on_row_4(tmp_path):
    t = read_table(_workbook(tmp_path / "b.xlsx"))
    assert (t.format, t.sheet, t.header_row, t.encoding) == ("xlsx", "BOM", 4, None)
    assert t.headers == ["Designator", "Qty", "Value", "Package", "Voltage"]
    # Numbers as a user sees them: whole numbers without ".0"; text cells keep their zeros.
    assert cells_of(t) == [["C1", "1", "100nF", "0402", "16V"], ["C2, C3", "2", "4.7", "0603", "25"],
                         ["C4", "1", "1uF", "603", "50V"]]
    assert t.rows.tolist() == [5, 6, 8] and t.blank_rows == 1


@pytest.mark.parametrize("sheet", ["BOM", "bom", 2, "2"])
def test_xlsx_sheet_by_name_or_index(tmp_path, sheet):
    assert read_table(_workbook(tmp_path / "b.xlsx"), sheet=sheet).sheet == "BOM"


def test_xlsx_named_sheet_without_header(tmp_path):
    with pytest.raises(HeaderNotFound, match="sheet 'Cover'"):
        read_table(_workbook(tmp_path / "b.xlsx"), sheet=1)


@pytest.mark.parametrize(("sheet", "problem"),
                         [("Parts", "no such sheet"), (9, "no sheet number 9")])
def test_xlsx_missing_sheet_lists_the_sheets(tmp_path, sheet, problem):
    with pytest.raises(InputError, match=problem) as err:
        read_table(_workbook(tmp_path / "b.xlsx"), sheet=sheet)
    assert "'Cover', 'BOM', 'Spare'" in str(err.value)


def test_xlsx_through_openpyxl_when_calamine_is_missing(tmp_path, monkeypatch):
    path = _workbook(tmp_path / "b.xlsx", cover=False)
    fast = read_table(path)
    monkeypatch.setitem(sys.modules, "python_calamine", None)  # import now fails
    slow = read_table(path)
    assert (slow.sheet, slow.header_row, slow.headers, slow.rows.tolist(), slow.blank_rows) == \
        (fast.sheet, fast.header_row, fast.headers, fast.rows.tolist(), fast.blank_rows)
    assert cells_of(slow) == cells_of(fast)


def test_text_named_xlsx_is_not_a_workbook(tmp_path):
    path = tmp_path / "b.xlsx"
    path.write_text("Designator,Value\nC1,1n\n", encoding="utf-8")
    assert "not an XLSX workbook" in one_line_error(path)


def test_zip_without_workbook_is_not_a_workbook(tmp_path):
    path = tmp_path / "b.xlsx"
    with zipfile.ZipFile(path, "w") as zf:
        zf.writestr("readme.txt", "hello")
    assert "not an XLSX workbook" in one_line_error(path)


def test_damaged_workbook(tmp_path):
    good = _workbook(tmp_path / "good.xlsx")
    path = tmp_path / "b.xlsx"
    path.write_bytes(open(good, "rb").read()[:600])
    assert "not an XLSX workbook" in one_line_error(path)


def test_legacy_xls(tmp_path):
    path = tmp_path / "b.xls"
    path.write_bytes(OLE_MAGIC + bytes(504))
    assert "legacy Excel" in one_line_error(path)


@pytest.fixture(params=["openpyxl", "calamine"])
def workbook_reader(request, monkeypatch):
    """Run a workbook test through each reader: openpyxl (the default install) and
    python-calamine (the fast extra)."""
    if request.param == "openpyxl":
        monkeypatch.setitem(sys.modules, "python_calamine", None)
    else:
        pytest.importorskip("python_calamine")
    return request.param


def _book(tmp_path, wb) -> str:
    path = tmp_path / "b.xlsx"
    wb.save(path)
    return str(path)


def test_percent_formatted_cell_reads_as_shown(tmp_path, workbook_reader):
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.append(["Designator", "Value", "Tolerance"])
    ws.append(["C1", "100nF 50V X7R", 0.05])
    ws.append(["C2", "1uF 25V X5R", 0.125])
    ws.append(["C3", "1uF 25V X5R", 0.2])
    ws["C2"].number_format = "0%"  # shown as 5 %
    ws["C3"].number_format = "0.0%"
    path = _book(tmp_path, wb)
    t = read_table(path)
    # A percent format shows value x 100 with a % sign (ECMA-376 Part 1, 18.8.31 numFmt).
    assert [r[2] for r in cells_of(t)] == ["5%", "12.5%", "0.2"]


def test_hidden_rows_columns_and_sheets_are_skipped_and_counted(tmp_path, workbook_reader):
    wb = openpyxl.Workbook()
    old = wb.active
    old.title = "Rev A"
    old.append(["Designator", "Value"])
    old.append(["C9", "stale"])
    old.sheet_state = "hidden"
    ws = wb.create_sheet("BOM")
    ws.append(["Designator", "Voltage (Rev A)", "Voltage (V)", "Value"])
    ws.append(["C1", "16", "50", "100nF"])
    ws.append(["C2", "16", "25", "1uF"])
    ws.append(["C3", "16", "25", "old line"])
    ws.column_dimensions["B"].hidden = True
    ws.row_dimensions[4].hidden = True
    path = _book(tmp_path, wb)

    t = read_table(path)
    assert t.sheet == "BOM" and t.headers == ["Designator", "Voltage (V)", "Value"]
    assert cells_of(t) == [["C1", "50", "100nF"], ["C2", "25", "1uF"]]
    assert t.rows.tolist() == [2, 3]
    codes = {w.code: w for w in t.warnings}
    assert set(codes) == {"hidden-sheets", "hidden-rows", "hidden-columns"}
    assert codes["hidden-rows"].rows == (4,)
    assert "'Voltage (Rev A)'" in codes["hidden-columns"].message
    assert "'Rev A'" in codes["hidden-sheets"].message

    with use_limits(Limits(include_hidden=True)):
        t = read_table(path)
    assert t.sheet == "Rev A"  # the first sheet with a header, hidden or not
    with use_limits(Limits(include_hidden=True)):
        t = read_table(path, sheet="BOM")
    assert len(t.headers) == 4 and len(t.frame) == 3 and t.warnings == ()
    t = read_table(path, sheet="Rev A")  # named: a hidden sheet is read
    assert cells_of(t) == [["C9", "stale"]]


@pytest.mark.parametrize("extra, dimension, needle", [
    ('<row r="1048576"><c r="XFD1048576"><v>1</v></c></row>', None, "row 1,048,576"),
    ("", "A1:XFD1048576", "declared last row 1,048,576"),
    ('<row r="9"><c r="AMK9"><v>1</v></c></row>', None, "column 1,025"),
])
def test_sheet_beyond_the_limits_is_refused_before_reading(tmp_path, workbook_reader, extra,
                                                           dimension, needle):
    path = tmp_path / "b.xlsx"
    path.write_bytes(xlsx_bytes([("BOM", sheet_xml(BOM_ROWS, extra=extra, dimension=dimension),
                                  "visible")]))
    msg = one_line_error(path)
    assert needle in msg and "'BOM'" in msg and "refused" in msg


def test_cells_limit_counts_the_sheets_rectangle(tmp_path, workbook_reader):
    path = tmp_path / "b.xlsx"
    path.write_bytes(xlsx_bytes([("BOM", sheet_xml(
        BOM_ROWS, extra='<row r="300"><c r="Z300"><v>1</v></c></row>'), "visible")]))
    with use_limits(Limits(cells=5000)):
        assert "area (rows x columns) 7,800" in one_line_error(path)
    assert read_table(str(path)).rows.tolist() == [2, 3, 300]  # within the default limits


def test_zip_bomb_is_refused(tmp_path, workbook_reader):
    buf = __import__("io").BytesIO()
    with zipfile.ZipFile(buf, "w", zipfile.ZIP_DEFLATED) as zf:
        zf.writestr("xl/workbook.xml", "<workbook/>")
        zf.writestr("xl/worksheets/sheet1.xml", b"<row>" + bytes(40 << 20))
    path = tmp_path / "b.xlsx"
    path.write_bytes(buf.getvalue())
    assert "zip bomb" in one_line_error(path)


@pytest.mark.parametrize("broken", ["truncated", "entity", "shared-string", "missing-part"])
def test_damaged_workbook_parts_are_one_line_errors(tmp_path, workbook_reader, broken):
    xml = sheet_xml(BOM_ROWS)
    drop: tuple[str, ...] = ()
    if broken == "truncated":
        xml = xml[:-40]
    elif broken == "entity":
        xml = xml.replace("CAP CER", "&undefined;")
    elif broken == "shared-string":
        xml = xml.replace("</sheetData>", '<row r="4"><c r="A4" t="s"><v>99</v></c></row>'
                                          "</sheetData>")
    else:
        drop = ("xl/worksheets/sheet1.xml",)
    path = tmp_path / "b.xlsx"
    path.write_bytes(xlsx_bytes([("BOM", xml, "visible")], drop=drop))
    one_line_error(path)


def _ods(rows) -> bytes:
    """A minimal OpenDocument spreadsheet (ISO/IEC 26300: stored mimetype first, content.xml)."""
    cells = "".join(
        "<table:table-row>" + "".join(
            f'<table:table-cell office:value-type="string"><text:p>{v}</text:p>'
            "</table:table-cell>" for v in row) + "</table:table-row>" for row in rows)
    content = (
        '<?xml version="1.0" encoding="UTF-8"?><office:document-content '
        'xmlns:office="urn:oasis:names:tc:opendocument:xmlns:office:1.0" '
        'xmlns:table="urn:oasis:names:tc:opendocument:xmlns:table:1.0" '
        'xmlns:text="urn:oasis:names:tc:opendocument:xmlns:text:1.0" office:version="1.2">'
        f'<office:body><office:spreadsheet><table:table table:name="BOM">{cells}'
        "</table:table></office:spreadsheet></office:body></office:document-content>")
    manifest = (
        '<?xml version="1.0" encoding="UTF-8"?><manifest:manifest xmlns:manifest="urn:oasis:'
        'names:tc:opendocument:xmlns:manifest:1.0" manifest:version="1.2"><manifest:file-entry '
        'manifest:full-path="/" manifest:media-type="application/vnd.oasis.opendocument.'
        'spreadsheet"/><manifest:file-entry manifest:full-path="content.xml" '
        'manifest:media-type="text/xml"/></manifest:manifest>')
    buf = __import__("io").BytesIO()
    with zipfile.ZipFile(buf, "w") as zf:
        zf.writestr("mimetype", "application/vnd.oasis.opendocument.spreadsheet",
                    compress_type=zipfile.ZIP_STORED)
        zf.writestr("META-INF/manifest.xml", manifest, compress_type=zipfile.ZIP_DEFLATED)
        zf.writestr("content.xml", content, compress_type=zipfile.ZIP_DEFLATED)
    return buf.getvalue()


def test_ods_is_read_through_calamine(tmp_path):
    pytest.importorskip("python_calamine")
    path = tmp_path / "b.ods"
    path.write_bytes(_ods(BOM_ROWS))
    t = read_table(str(path))
    assert t.format == "ods" and t.sheet == "BOM" and t.headers == BOM_ROWS[0]
    assert cells_of(t) == BOM_ROWS[1:]


@pytest.mark.parametrize("name, data", [("b.ods", _ods(BOM_ROWS)),
                                        ("b.xls", OLE_MAGIC + bytes(504))])
def test_xls_and_ods_without_calamine_name_the_extra(tmp_path, monkeypatch, name, data):
    monkeypatch.setitem(sys.modules, "python_calamine", None)
    path = tmp_path / name
    path.write_bytes(data)
    msg = one_line_error(path)
    assert 'pip install "bomcheck[fast]"' in msg and "python-calamine" in msg


@settings(max_examples=25, deadline=None, derandomize=True,
          suppress_health_check=[HealthCheck.too_slow])
@given(cuts=st.lists(st.tuples(st.integers(0, 4000), st.binary(min_size=1, max_size=8)),
                     min_size=1, max_size=4),
       calamine=st.booleans())
def test_fuzzed_workbooks_never_raise_anything_but_input_error(cuts, calamine):
    data = bytearray(xlsx_bytes([("BOM", sheet_xml(BOM_ROWS), "visible")]))
    for at, junk in cuts:
        at %= len(data)
        data[at:at + len(junk)] = junk
    patch = {} if calamine else {"python_calamine": None}
    with mock.patch.dict(sys.modules, patch):
        read_any(bytes(data), ".xlsx")

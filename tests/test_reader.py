"""Read stage: formats, encodings, header search, blank rows, source rows, sheets, bad files."""

import sys
import zipfile

import openpyxl
import pytest

from bomcheck import reader
from bomcheck.errors import InputError
from bomcheck.reader import HeaderNotFound, read_table, unique_headers


def _write(path, text, encoding="utf-8"):
    path.write_bytes(text.encode(encoding))
    return str(path)


def _cells(table):
    return table.frame.values.tolist()


def test_csv_title_rows_cp1252_micro_sign(tmp_path):
    # Windows export: cp1252, where byte 0xB5 is the micro sign (cp1252 code page table).
    raw = (b"St\xfcckliste Baugruppe KV-2210\r\nStand 2024-05-01\r\n\r\n"
           b"Designator,Qty,Value,Package\r\nC1,1,4.7\xb5F,0402\r\nC2,2,100n,0603\r\n")
    path = tmp_path / "bom.csv"
    path.write_bytes(raw)
    t = read_table(str(path))
    assert (t.format, t.encoding, t.header_row) == ("csv", "cp1252", 4)
    assert t.headers == ["Designator", "Qty", "Value", "Package"]
    assert _cells(t) == [["C1", "1", "4.7\u00b5F", "0402"], ["C2", "2", "100n", "0603"]]
    assert t.rows.tolist() == [5, 6]


def test_utf8_with_byte_order_mark(tmp_path):
    t = read_table(_write(tmp_path / "b.csv", "\ufeffRefDes,Value\nC1,1µF\n"))
    assert t.encoding == "utf-8-sig" and t.headers == ["RefDes", "Value"]
    assert _cells(t) == [["C1", "1µF"]]


def test_utf8_without_byte_order_mark_keeps_both_micro_glyphs(tmp_path):
    t = read_table(_write(tmp_path / "b.csv", "RefDes,Value\nC1,1\u00b5F\nC2,1\u03bcF\n"))
    assert t.encoding == "utf-8" and _cells(t) == [["C1", "1\u00b5F"], ["C2", "1\u03bcF"]]


def test_utf16_tab_separated(tmp_path):
    # "Unicode text" exports: UTF-16 little-endian with a byte-order mark, tab-separated.
    path = tmp_path / "b.txt"
    path.write_bytes("Designator\tValue\tQty\r\nC1\t4µ7\t1\r\n".encode("utf-16"))
    t = read_table(str(path))
    assert (t.format, t.encoding) == ("tsv", "utf-16")
    assert _cells(t) == [["C1", "4µ7", "1"]]


def test_semicolon_file_with_decimal_commas(tmp_path):
    text = "Bauteil;Wert;Menge\nC1;4,7µF;1\nC2, C3;0,1µF;2\nC4;2,2nF;1\n"
    t = read_table(_write(tmp_path / "b.csv", text))
    assert t.format == "semicolon"
    assert _cells(t) == [["C1", "4,7µF", "1"], ["C2, C3", "0,1µF", "2"], ["C4", "2,2nF", "1"]]


def test_quoted_commas_do_not_fool_the_sniffer(tmp_path):
    text = 'Designator,Value,Qty\n"C1, C2, C3",100nF,3\n"C4; C5",1uF,2\n'
    t = read_table(_write(tmp_path / "b.csv", text))
    assert t.format == "csv" and _cells(t)[0] == ["C1, C2, C3", "100nF", "3"]


def test_forced_encoding(tmp_path):
    path = tmp_path / "b.csv"
    path.write_bytes(b"Designator,Value\nC1,4.7\xb5F\n")
    assert _cells(read_table(str(path), encoding="latin-1")) == [["C1", "4.7\u00b5F"]]
    with pytest.raises(InputError, match="cannot be decoded as utf-8") as err:
        read_table(str(path), encoding="utf-8")
    assert str(path) in str(err.value)
    with pytest.raises(InputError, match="unknown text encoding"):
        read_table(str(path), encoding="no-such-codec")


def test_blank_rows_dropped_counted_and_source_lines_kept(tmp_path):
    text = ("Title\n\nDesignator,Value\nC1,1n\n\n,,\nC2,2n\n   \nC3,3n\n")
    t = read_table(_write(tmp_path / "b.csv", text))
    assert t.header_row == 3
    assert _cells(t) == [["C1", "1n"], ["C2", "2n"], ["C3", "3n"]]
    assert t.rows.tolist() == [4, 7, 9]
    assert t.blank_rows == 3


def test_quoted_line_break_keeps_line_numbers(tmp_path):
    text = 'Designator,Value,Notes\nC1,1n,"two\nlines"\nC2,2n,\nC3,3n,x\n'
    t = read_table(_write(tmp_path / "b.csv", text))
    assert _cells(t)[0] == ["C1", "1n", "two\nlines"]
    assert t.rows.tolist() == [2, 4, 5]


def test_crlf_line_ends(tmp_path):
    t = read_table(_write(tmp_path / "b.csv", "Designator,Value\r\nC1,1n\r\nC2,2n\r\n"))
    assert _cells(t) == [["C1", "1n"], ["C2", "2n"]] and t.rows.tolist() == [2, 3]


def test_cells_stay_text(tmp_path):
    t = read_table(_write(tmp_path / "b.csv", "Designator,Value,Package,Qty\nC1,104,0402,01\n"))
    assert _cells(t) == [["C1", "104", "0402", "01"]]  # leading zeros survive


def test_rows_wider_than_the_header(tmp_path):
    t = read_table(_write(tmp_path / "b.csv", "Designator,Value\nC1,1n,extra\nC2,2n\n"))
    assert list(t.frame.columns) == ["Designator", "Value", "column 3"]
    assert _cells(t) == [["C1", "1n", "extra"], ["C2", "2n", ""]]
    assert t.rows.tolist() == [2, 3]


def test_headers_made_unique():
    assert unique_headers(["Value", "Value", "", "Qty", "Value"]) == [
        "Value", "Value (2)", "column 3", "Qty", "Value (3)"]


def test_duplicate_and_trailing_empty_headers(tmp_path):
    t = read_table(_write(tmp_path / "b.csv", "Designator,Value,Value,\nC1,1n,2n,\n"))
    assert t.headers == ["Designator", "Value", "Value"]  # empty unnamed column dropped
    assert list(t.frame.columns) == ["Designator", "Value", "Value (2)"]


def test_header_predicate_picks_the_row(tmp_path):
    path = _write(tmp_path / "b.csv", "Pos,Typ\nC1,1n\n")
    t = read_table(path, header_predicate=lambda cells: cells[:1] == ["Pos"])
    assert t.header_row == 1 and _cells(t) == [["C1", "1n"]]


def test_header_after_twenty_banner_rows(tmp_path):
    banner = "".join(f"Banner line {i}\n" for i in range(20))
    t = read_table(_write(tmp_path / "b.csv", banner + "Designator,Value\nC1,1n\n"))
    assert t.header_row == 21 and t.rows.tolist() == [22]


def test_no_header_row(tmp_path):
    path = _write(tmp_path / "b.csv", "Title\nItem,Val,Count\nKV-1,1n,3\n")
    with pytest.raises(HeaderNotFound) as err:
        read_table(path)
    assert isinstance(err.value, InputError)
    assert err.value.best_guess == ["Item", "Val", "Count"]
    assert path in str(err.value) and "\n" not in str(err.value)


# ---------------------------------------------------------------------------------------------
# Workbooks


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
    assert _cells(t) == [["C1", "1", "100nF", "0402", "16V"], ["C2, C3", "2", "4.7", "0603", "25"],
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
    assert _cells(slow) == _cells(fast)


# ---------------------------------------------------------------------------------------------
# Files that are not tables


def _one_line_error(path, **kwargs) -> str:
    with pytest.raises(InputError) as err:
        read_table(str(path), **kwargs)
    msg = str(err.value)
    assert msg.startswith(str(path)) and "\n" not in msg
    return msg


@pytest.mark.parametrize("content", [b"", b"\n\n  \r\n", b"\xef\xbb\xbf\r\n",
                                     " \n".encode("utf-16")])
def test_empty_file(tmp_path, content):
    path = tmp_path / "empty.csv"
    path.write_bytes(content)
    assert "the file is empty" in _one_line_error(path)


def test_binary_file(tmp_path):
    path = tmp_path / "image.csv"
    path.write_bytes(bytes(range(256)) * 8)
    assert "a binary file" in _one_line_error(path)


def test_utf16_without_byte_order_mark_gets_a_hint(tmp_path):
    path = tmp_path / "b.csv"
    path.write_bytes("Designator,Value\nC1,1n\n".encode("utf-16-le"))
    assert "--encoding utf-16-le" in _one_line_error(path)
    assert _cells(read_table(str(path), encoding="utf-16-le")) == [["C1", "1n"]]


def test_text_named_xlsx_is_not_a_workbook(tmp_path):
    path = tmp_path / "b.xlsx"
    path.write_text("Designator,Value\nC1,1n\n", encoding="utf-8")
    assert "not an XLSX workbook" in _one_line_error(path)


def test_zip_without_workbook_is_not_a_workbook(tmp_path):
    path = tmp_path / "b.xlsx"
    with zipfile.ZipFile(path, "w") as zf:
        zf.writestr("readme.txt", "hello")
    assert "not an XLSX workbook" in _one_line_error(path)


def test_damaged_workbook(tmp_path):
    good = _workbook(tmp_path / "good.xlsx")
    path = tmp_path / "b.xlsx"
    path.write_bytes(open(good, "rb").read()[:600])
    assert "not an XLSX workbook" in _one_line_error(path)


def test_legacy_xls(tmp_path):
    path = tmp_path / "b.xls"
    path.write_bytes(reader._OLE_MAGIC + bytes(504))
    assert "legacy Excel" in _one_line_error(path)


def test_missing_file(tmp_path):
    assert "file not found" in _one_line_error(tmp_path / "none.csv")


def test_sheet_option_on_a_text_table(tmp_path):
    path = tmp_path / "b.csv"
    path.write_text("Designator,Value\nC1,1n\n", encoding="utf-8")
    assert "not a workbook" in _one_line_error(path, sheet="BOM")


def test_quoted_line_break_in_a_title_row(tmp_path):
    text = '"Board KV-2210\nbill of materials"\nDesignator,Value\nC1,1n\nC2,2n\n'
    t = read_table(_write(tmp_path / "b.csv", text))
    assert t.header_row == 3 and _cells(t) == [["C1", "1n"], ["C2", "2n"]]
    assert t.rows.tolist() == [4, 5]


def test_large_file_read_in_parallel_keeps_rows(tmp_path):
    # pandas reads files over a few MB in threads; the row numbers must still line up.
    lines = ["Title", "Designator,Value,Description"]
    lines += [f"C{i},{i % 97}nF,CAP CER {i % 97}nF 50V X7R 0402 {'x' * 40}"
              for i in range(1, 80001)]
    lines.insert(5000, "")  # line 5001 is blank: C4998 is on line 5000, C4999 on 5002
    t = read_table(_write(tmp_path / "big.csv", "\n".join(lines) + "\n"))
    assert len(t.frame) == 80000 and t.blank_rows == 1
    assert t.rows[0] == 3 and t.rows[-1] == 80003
    assert t.frame.iloc[4997, 0] == "C4998" and t.rows[4997] == 5000
    assert t.frame.iloc[4998, 0] == "C4999" and t.rows[4998] == 5002

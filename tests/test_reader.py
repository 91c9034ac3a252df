"""Read stage: formats, encodings, header search, blank rows, source rows, sheets, bad files."""

import sys
import zipfile

import openpyxl
import pytest

from bomcheck.errors import InputError
from bomcheck.parse.columns import has_designator_column
from bomcheck.read import reader
from bomcheck.read.reader import HeaderNotFound, unique_headers
from bomcheck.read.workbook import OLE_MAGIC


def read_table(path, **kwargs):
    """The reader with the importer's header test (a designator-like column): the caller says
    what its header row holds."""
    kwargs.setdefault("header_predicate", has_designator_column)
    return reader.read_table(path, **kwargs)


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
    path.write_bytes(OLE_MAGIC + bytes(504))
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


# ---------------------------------------------------------------------------------------------
# Hostile and unusual text tables (issue 10): cell sizes, line ends, mixed encodings, limits.

from bomcheck.read.limits import Limits, use_limits  # noqa: E402


def test_cell_over_128_kib_and_a_long_header_are_read(tmp_path):
    # The csv module's own default limit is 128 KiB per cell; a BOM note can be longer.
    note, head = "n" * 200_000, "H" * 150_000
    path = _write(tmp_path / "b.csv", f"Designator,Value,{head}\nC1,1uF,\"{note}\"\nC2,2uF,x\n")
    t = read_table(path)
    assert t.headers == ["Designator", "Value", head]
    assert _cells(t) == [["C1", "1uF", note], ["C2", "2uF", "x"]]


@pytest.mark.parametrize("quoted", [False, True])
def test_cell_over_the_limit_is_refused_naming_the_row(tmp_path, quoted):
    big = "x" * 3000
    cell = f'"{big}"' if quoted else big
    path = _write(tmp_path / "b.csv", f"Designator,Value\nC1,1uF\nC2,{cell}\n")
    with use_limits(Limits(cell_chars=2000)):
        msg = _one_line_error(path)
    assert "row 3" in msg and "2,000 characters" in msg


@pytest.mark.parametrize("text, rows", [
    ("Designator,Value\rC1,1uF\rC2,2uF\r", [2, 3]),  # lone CR (old Mac line ends)
    ("Designator,Value\r\nC1,1uF\rC2,2uF\nC3,3uF\r\n", [2, 3, 4]),  # all three mixed
    ("Title\rDesignator,Value\rC1,1uF\r", [3]),  # lone CR above the header
])
def test_lone_cr_and_mixed_line_ends(tmp_path, text, rows):
    t = read_table(_write(tmp_path / "b.csv", text))
    assert t.headers == ["Designator", "Value"]
    assert [r[0] for r in _cells(t)] == [f"C{i}" for i in range(1, len(rows) + 1)]
    assert t.rows.tolist() == rows


def test_quoted_cell_holding_a_cr(tmp_path):
    t = read_table(_write(tmp_path / "b.csv", 'Designator,Notes\r\nC1,"a\rb"\r\nC2,c\r\n'))
    assert _cells(t) == [["C1", "a\rb"], ["C2", "c"]]
    assert t.rows.tolist() == [2, 4]  # C2 starts on line 4: the quoted CR ends line 2


def test_one_cp1252_line_in_a_utf8_file_is_read_per_line_and_reported(tmp_path):
    raw = ("Designator,Value\nC1,4.7µF 25V\n").encode("utf-8") + \
        "C2,10 µF 16V\n".encode("cp1252") + "C3,1µF\n".encode("utf-8")
    path = tmp_path / "b.csv"
    path.write_bytes(raw)
    t = read_table(str(path))
    assert _cells(t) == [["C1", "4.7µF 25V"], ["C2", "10 µF 16V"], ["C3", "1µF"]]
    assert t.encoding == reader.MIXED_ENCODING
    (w,) = t.warnings
    assert w.code == "mixed-encoding" and w.rows == (3,)
    assert str(path) in w.message and "line 3" in w.message


def test_a_whole_cp1252_file_has_no_mixed_encoding_warning(tmp_path):
    path = tmp_path / "b.csv"
    path.write_bytes("Designator,Value\nC1,4.7µF\n".encode("cp1252"))
    t = read_table(str(path))
    assert t.encoding == "cp1252" and t.warnings == () and _cells(t) == [["C1", "4.7µF"]]


@pytest.mark.skipif(not hasattr(__import__("os"), "mkfifo"), reason="needs FIFOs")
def test_a_fifo_is_refused_without_blocking(tmp_path):
    import os

    fifo = tmp_path / "b.csv"
    os.mkfifo(fifo)
    assert "FIFO" in _one_line_error(fifo)  # opening it would wait for a writer forever


def test_a_device_is_refused():
    if not __import__("os").path.exists("/dev/zero"):
        pytest.skip("no /dev/zero")
    with pytest.raises(InputError, match="character device"):
        read_table("/dev/zero")


def test_file_size_limit_and_its_override(tmp_path):
    path = _write(tmp_path / "b.csv", "Designator,Value\n" + "C1,1uF\n" * 200_000)
    with use_limits(Limits(file_bytes=1 << 20)):
        assert "larger than the limit of 1 MiB" in _one_line_error(path)
        assert "--max-file-mb" in _one_line_error(path)
    assert len(read_table(path).frame) == 200_000


@pytest.mark.parametrize("text, needle", [
    ("Designator,Value\n" + "C1,1uF\n" * 50, "lines 50 is over the limit of 40"),
    ("Designator,Value," + ",".join(f"h{i}" for i in range(60)) + "\nC1\n", "header columns 62"),
    ("Designator,Value\nC1,1uF" + ",x" * 70 + "\n", "columns in a line 72"),
])
def test_rows_and_columns_limits(tmp_path, text, needle):
    with use_limits(Limits(rows=40, columns=50)):
        assert needle in _one_line_error(_write(tmp_path / "b.csv", text))


def test_standard_input(monkeypatch):
    import io

    data = "Designator,Value\nC1,1uF\n".encode("utf-8")
    monkeypatch.setattr(sys, "stdin", io.TextIOWrapper(io.BytesIO(data)))
    t = read_table("-")
    assert _cells(t) == [["C1", "1uF"]]
    import hashlib

    assert t.sha256 == hashlib.sha256(data).hexdigest()


def test_standard_input_is_held_to_the_size_limit(monkeypatch):
    import io

    monkeypatch.setattr(sys, "stdin", io.TextIOWrapper(io.BytesIO(b"Designator\n" * 1000)))
    with use_limits(Limits(file_bytes=1000)), pytest.raises(InputError, match="<stdin>"):
        read_table("-")


def test_toml_nested_thousands_deep_is_an_input_error():
    with pytest.raises(InputError, match="nested more than 32 levels"):
        reader.load_toml("a = " + "[" * 3000 + "]" * 3000, "x.toml")
    with pytest.raises(InputError, match="nested more than 32 levels"):
        reader.load_toml("a = " + "[" * 40 + "]" * 40, "x.toml")  # below tomllib's recursion
    assert reader.load_toml("a = [[1], [2]]", "x.toml") == {"a": [[1], [2]]}


# ---------------------------------------------------------------------------------------------
# Workbooks: both readers, hidden parts, percent cells, limits (issues 9 and 10).

sys.path.insert(0, str(__import__("pathlib").Path(__file__).parent))
from hostile_corpus import BOM_ROWS, sheet_xml, xlsx_bytes  # noqa: E402


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
    assert [r[2] for r in _cells(t)] == ["5%", "12.5%", "0.2"]


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
    assert _cells(t) == [["C1", "50", "100nF"], ["C2", "25", "1uF"]]
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
    assert _cells(t) == [["C9", "stale"]]


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
    msg = _one_line_error(path)
    assert needle in msg and "'BOM'" in msg and "refused" in msg


def test_cells_limit_counts_the_sheets_rectangle(tmp_path, workbook_reader):
    path = tmp_path / "b.xlsx"
    path.write_bytes(xlsx_bytes([("BOM", sheet_xml(
        BOM_ROWS, extra='<row r="300"><c r="Z300"><v>1</v></c></row>'), "visible")]))
    with use_limits(Limits(cells=5000)):
        assert "area (rows x columns) 7,800" in _one_line_error(path)
    assert read_table(str(path)).rows.tolist() == [2, 3, 300]  # within the default limits


def test_zip_bomb_is_refused(tmp_path, workbook_reader):
    buf = __import__("io").BytesIO()
    with zipfile.ZipFile(buf, "w", zipfile.ZIP_DEFLATED) as zf:
        zf.writestr("xl/workbook.xml", "<workbook/>")
        zf.writestr("xl/worksheets/sheet1.xml", b"<row>" + bytes(40 << 20))
    path = tmp_path / "b.xlsx"
    path.write_bytes(buf.getvalue())
    assert "zip bomb" in _one_line_error(path)


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
    _one_line_error(path)


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
    assert _cells(t) == BOM_ROWS[1:]


@pytest.mark.parametrize("name, data", [("b.ods", _ods(BOM_ROWS)),
                                        ("b.xls", OLE_MAGIC + bytes(504))])
def test_xls_and_ods_without_calamine_name_the_extra(tmp_path, monkeypatch, name, data):
    monkeypatch.setitem(sys.modules, "python_calamine", None)
    path = tmp_path / name
    path.write_bytes(data)
    msg = _one_line_error(path)
    assert 'pip install "bomcheck[fast]"' in msg and "python-calamine" in msg


# ---------------------------------------------------------------------------------------------
# Fuzz: whatever the bytes, the reader returns a table or raises InputError (issue 10).

from unittest import mock  # noqa: E402

from hypothesis import HealthCheck, given, settings  # noqa: E402
from hypothesis import strategies as st  # noqa: E402

_FUZZ = settings(max_examples=150, deadline=None, derandomize=True,
                 suppress_health_check=[HealthCheck.too_slow])
_TEXTISH = st.lists(st.sampled_from(["Designator", "Value", "C1", "C2-C4", ",", ";", "\t", '"',
                                     "\r", "\n", "\r\n", " ", "4.7µF", "100n", "x" * 300, "\x00",
                                     "\xb5", "#"]), max_size=60).map("".join)


def _read_any(data: bytes, suffix: str) -> None:
    import tempfile

    with tempfile.TemporaryDirectory() as d:
        path = __import__("pathlib").Path(d) / f"b{suffix}"
        path.write_bytes(data)
        try:
            read_table(str(path))
        except InputError as exc:
            assert "\n" not in str(exc)


@_FUZZ
@given(text=_TEXTISH, encoding=st.sampled_from(["utf-8", "cp1252", "utf-16"]))
def test_fuzzed_text_tables_never_raise_anything_but_input_error(text, encoding):
    _read_any(text.encode(encoding, errors="replace"), ".csv")


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
        _read_any(bytes(data), ".xlsx")


def test_a_raised_file_limit_does_not_allocate_the_limit(tmp_path):
    # A 100 GB limit (--max-file-mb 100000) once made read() ask for 100 GB up front.
    from bomcheck.read.limits import Limits, use_limits
    from bomcheck.read.reader import read_bytes

    (tmp_path / "b.csv").write_bytes(b"Designator,Value\nC1,1uF\n")
    with use_limits(Limits(file_bytes=100_000 << 20)):
        assert read_bytes(str(tmp_path / "b.csv")) == b"Designator,Value\nC1,1uF\n"

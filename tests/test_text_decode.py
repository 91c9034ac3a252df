"""Read stage, text decoding: byte-order marks, cp1252 exports, mixed lines, binary files."""

import os
import sys
import pytest

from bomcheck.errors import InputError
from bomcheck.read import reader

sys.path.insert(0, os.path.dirname(__file__))
from read_helpers import cells_of, one_line_error, read_table, write_file  # noqa: E402


def test_csv_title_rows_cp1252_micro_sign(tmp_path):
    # Windows export: cp1252, where byte 0xB5 is the micro sign (cp1252 code page table).
    raw = (b"St\xfcckliste Baugruppe KV-2210\r\nStand 2024-05-01\r\n\r\n"
           b"Designator,Qty,Value,Package\r\nC1,1,4.7\xb5F,0402\r\nC2,2,100n,0603\r\n")
    path = tmp_path / "bom.csv"
    path.write_bytes(raw)
    t = read_table(str(path))
    assert (t.format, t.encoding, t.header_row) == ("csv", "cp1252", 4)
    assert t.headers == ["Designator", "Qty", "Value", "Package"]
    assert cells_of(t) == [["C1", "1", "4.7\u00b5F", "0402"], ["C2", "2", "100n", "0603"]]
    assert t.rows.tolist() == [5, 6]


def test_utf8_with_byte_order_mark(tmp_path):
    t = read_table(write_file(tmp_path / "b.csv", "\ufeffRefDes,Value\nC1,1µF\n"))
    assert t.encoding == "utf-8-sig" and t.headers == ["RefDes", "Value"]
    assert cells_of(t) == [["C1", "1µF"]]


def test_utf8_without_byte_order_mark_keeps_both_micro_glyphs(tmp_path):
    t = read_table(write_file(tmp_path / "b.csv", "RefDes,Value\nC1,1\u00b5F\nC2,1\u03bcF\n"))
    assert t.encoding == "utf-8" and cells_of(t) == [["C1", "1\u00b5F"], ["C2", "1\u03bcF"]]


def test_utf16_tab_separated(tmp_path):
    # "Unicode text" exports: UTF-16 little-endian with a byte-order mark, tab-separated.
    path = tmp_path / "b.txt"
    path.write_bytes("Designator\tValue\tQty\r\nC1\t4µ7\t1\r\n".encode("utf-16"))
    t = read_table(str(path))
    assert (t.format, t.encoding) == ("tsv", "utf-16")
    assert cells_of(t) == [["C1", "4µ7", "1"]]


def test_forced_encoding(tmp_path):
    path = tmp_path / "b.csv"
    path.write_bytes(b"Designator,Value\nC1,4.7\xb5F\n")
    assert cells_of(read_table(str(path), encoding="latin-1")) == [["C1", "4.7\u00b5F"]]
    with pytest.raises(InputError, match="cannot be decoded as utf-8") as err:
        read_table(str(path), encoding="utf-8")
    assert str(path) in str(err.value)
    with pytest.raises(InputError, match="unknown text encoding"):
        read_table(str(path), encoding="no-such-codec")


def test_binary_file(tmp_path):
    path = tmp_path / "image.csv"
    path.write_bytes(bytes(range(256)) * 8)
    assert "a binary file" in one_line_error(path)


def test_utf16_without_byte_order_mark_gets_a_hint(tmp_path):
    path = tmp_path / "b.csv"
    path.write_bytes("Designator,Value\nC1,1n\n".encode("utf-16-le"))
    assert "--encoding utf-16-le" in one_line_error(path)
    assert cells_of(read_table(str(path), encoding="utf-16-le")) == [["C1", "1n"]]


def test_one_cp1252_line_in_a_utf8_file_is_read_per_line_and_reported(tmp_path):
    raw = ("Designator,Value\nC1,4.7µF 25V\n").encode("utf-8") + \
        "C2,10 µF 16V\n".encode("cp1252") + "C3,1µF\n".encode("utf-8")
    path = tmp_path / "b.csv"
    path.write_bytes(raw)
    t = read_table(str(path))
    assert cells_of(t) == [["C1", "4.7µF 25V"], ["C2", "10 µF 16V"], ["C3", "1µF"]]
    assert t.encoding == reader.MIXED_ENCODING
    (w,) = t.warnings
    assert w.code == "mixed-encoding" and w.rows == (3,)
    assert str(path) in w.message and "line 3" in w.message


def test_a_whole_cp1252_file_has_no_mixed_encoding_warning(tmp_path):
    path = tmp_path / "b.csv"
    path.write_bytes("Designator,Value\nC1,4.7µF\n".encode("cp1252"))
    t = read_table(str(path))
    assert t.encoding == "cp1252" and t.warnings == () and cells_of(t) == [["C1", "4.7µF"]]

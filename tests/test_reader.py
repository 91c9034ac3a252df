"""Read stage, the front door: empty files, the sheet option, standard input, one hash per
input and one table reader for every kind of input."""

import hashlib
import os
import sys

import pytest

from bomcheck.evaluate.waivers import load_waivers
from bomcheck.parse.design import read_design
from bomcheck.parse.parts import read_parts
from bomcheck.read import reader
from bomcheck.substitute import read_alternates

sys.path.insert(0, os.path.dirname(__file__))
from read_helpers import cells_of, one_line_error, read_table  # noqa: E402


@pytest.mark.parametrize("content", [b"", b"\n\n  \r\n", b"\xef\xbb\xbf\r\n",
                                     " \n".encode("utf-16")])
def test_empty_file(tmp_path, content):
    path = tmp_path / "empty.csv"
    path.write_bytes(content)
    assert "the file is empty" in one_line_error(path)


def test_sheet_option_on_a_text_table(tmp_path):
    path = tmp_path / "b.csv"
    path.write_text("Designator,Value\nC1,1n\n", encoding="utf-8")
    assert "not a workbook" in one_line_error(path, sheet="BOM")


def test_standard_input(monkeypatch):
    import io

    data = "Designator,Value\nC1,1uF\n".encode("utf-8")
    monkeypatch.setattr(sys, "stdin", io.TextIOWrapper(io.BytesIO(data)))
    t = read_table("-")
    assert cells_of(t) == [["C1", "1uF"]]
    assert t.sha256 == hashlib.sha256(data).hexdigest()


def test_a_file_is_hashed_as_read(tmp_path):
    data = b"Designator,Value\r\nC1,1uF\r\n"
    path = tmp_path / "b.csv"
    path.write_bytes(data)
    assert read_table(str(path)).sha256 == hashlib.sha256(data).hexdigest()


def test_the_caller_says_what_the_header_holds(tmp_path):
    path = tmp_path / "t.csv"
    path.write_bytes(b"title\nPos,Name\n1,a\n")
    table = reader.read_table(str(path), header_predicate=lambda cells: cells[:1] == ["Pos"])
    assert (table.header_row, table.headers) == (2, ["Pos", "Name"])
    with pytest.raises(TypeError):  # no default: the reader knows no BOM columns
        reader.read_table(str(path))


# The same Windows-export bytes (cp1252: 0xB5 is the micro sign, 0xFC is u-umlaut; cp1252 code
# page table) through every side input: one table reader, so one decoding and one hash.
_CP1252_INPUTS = {
    "design sheet": (b"refdes,v_dc [V],notes\r\nC1,5,Pr\xfcfling 4.7\xb5F\r\n",
                     lambda p: read_design(p).conditions["notes"].tolist(), "read_design"),
    "waivers": (b"refdes,rule,reason,approved_by,expires\r\n"
                b"C1,R-1,Pr\xfcfling 4.7\xb5F,A. Okafor,2030-01-01\r\n",
                lambda p: [w.reason for w in load_waivers(p).waivers], "load_waivers"),
    "parts file": (b"mpn,rated_voltage\r\nPr\xfcfling 4.7\xb5F,6.3 V\r\n",
                   lambda p: read_parts(p).values["mpn"].tolist(), "read_parts"),
    "alternates": (b"original,mpn,description\r\nP-1,P-2,Pr\xfcfling 4.7\xb5F\r\n",
                   lambda p: [a.cells.get("description") for a in read_alternates(p)], "read_alternates"),
}


@pytest.mark.parametrize("what", sorted(_CP1252_INPUTS))
def test_a_cp1252_file_reads_alike_as_every_input(tmp_path, what):
    data, texts, _ = _CP1252_INPUTS[what]
    path = tmp_path / "input.csv"
    path.write_bytes(data)
    assert texts(str(path)) == ["Pr\u00fcfling 4.7\u00b5F"]


@pytest.mark.parametrize("what", ["design sheet", "waivers", "parts file"])
def test_every_input_carries_the_hash_of_its_bytes(tmp_path, what):
    data, _, loader = _CP1252_INPUTS[what]
    path = tmp_path / "input.csv"
    path.write_bytes(data)
    load = {"read_design": read_design, "load_waivers": load_waivers, "read_parts": read_parts}
    assert load[loader](str(path)).sha256 == hashlib.sha256(data).hexdigest()

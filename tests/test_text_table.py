"""Read stage, text tables: delimiters, blank rows, line ends, quoted cells, limits, fuzz."""

import os
import sys
import pytest
from hypothesis import given
from hypothesis import strategies as st

from bomcheck.read.limits import Limits, use_limits

sys.path.insert(0, os.path.dirname(__file__))
from read_helpers import FUZZ, TEXTISH, cells_of, one_line_error, read_any, read_table, write_file  # noqa: E402


def test_semicolon_file_with_decimal_commas(tmp_path):
    text = "Bauteil;Wert;Menge\nC1;4,7µF;1\nC2, C3;0,1µF;2\nC4;2,2nF;1\n"
    t = read_table(write_file(tmp_path / "b.csv", text))
    assert t.format == "semicolon"
    assert cells_of(t) == [["C1", "4,7µF", "1"], ["C2, C3", "0,1µF", "2"], ["C4", "2,2nF", "1"]]


def test_quoted_commas_do_not_fool_the_sniffer(tmp_path):
    text = 'Designator,Value,Qty\n"C1, C2, C3",100nF,3\n"C4; C5",1uF,2\n'
    t = read_table(write_file(tmp_path / "b.csv", text))
    assert t.format == "csv" and cells_of(t)[0] == ["C1, C2, C3", "100nF", "3"]


def test_blank_rows_dropped_counted_and_source_lines_kept(tmp_path):
    text = ("Title\n\nDesignator,Value\nC1,1n\n\n,,\nC2,2n\n   \nC3,3n\n")
    t = read_table(write_file(tmp_path / "b.csv", text))
    assert t.header_row == 3
    assert cells_of(t) == [["C1", "1n"], ["C2", "2n"], ["C3", "3n"]]
    assert t.rows.tolist() == [4, 7, 9]
    assert t.blank_rows == 3


def test_quoted_line_break_keeps_line_numbers(tmp_path):
    text = 'Designator,Value,Notes\nC1,1n,"two\nlines"\nC2,2n,\nC3,3n,x\n'
    t = read_table(write_file(tmp_path / "b.csv", text))
    assert cells_of(t)[0] == ["C1", "1n", "two\nlines"]
    assert t.rows.tolist() == [2, 4, 5]


def test_crlf_line_ends(tmp_path):
    t = read_table(write_file(tmp_path / "b.csv", "Designator,Value\r\nC1,1n\r\nC2,2n\r\n"))
    assert cells_of(t) == [["C1", "1n"], ["C2", "2n"]] and t.rows.tolist() == [2, 3]


def test_cells_stay_text(tmp_path):
    t = read_table(write_file(tmp_path / "b.csv", "Designator,Value,Package,Qty\nC1,104,0402,01\n"))
    assert cells_of(t) == [["C1", "104", "0402", "01"]]  # leading zeros survive


def test_rows_wider_than_the_header(tmp_path):
    t = read_table(write_file(tmp_path / "b.csv", "Designator,Value\nC1,1n,extra\nC2,2n\n"))
    assert list(t.frame.columns) == ["Designator", "Value", "column 3"]
    assert cells_of(t) == [["C1", "1n", "extra"], ["C2", "2n", ""]]
    assert t.rows.tolist() == [2, 3]


def test_quoted_line_break_in_a_title_row(tmp_path):
    text = '"Board KV-2210\nbill of materials"\nDesignator,Value\nC1,1n\nC2,2n\n'
    t = read_table(write_file(tmp_path / "b.csv", text))
    assert t.header_row == 3 and cells_of(t) == [["C1", "1n"], ["C2", "2n"]]
    assert t.rows.tolist() == [4, 5]


def test_large_file_read_in_parallel_keeps_rows(tmp_path):
    # pandas reads files over a few MB in threads; the row numbers must still line up.
    lines = ["Title", "Designator,Value,Description"]
    lines += [f"C{i},{i % 97}nF,CAP CER {i % 97}nF 50V X7R 0402 {'x' * 40}"
              for i in range(1, 80001)]
    lines.insert(5000, "")  # line 5001 is blank: C4998 is on line 5000, C4999 on 5002
    t = read_table(write_file(tmp_path / "big.csv", "\n".join(lines) + "\n"))
    assert len(t.frame) == 80000 and t.blank_rows == 1
    assert t.rows[0] == 3 and t.rows[-1] == 80003
    assert t.frame.iloc[4997, 0] == "C4998" and t.rows[4997] == 5000
    assert t.frame.iloc[4998, 0] == "C4999" and t.rows[4998] == 5002


def test_cell_over_128_kib_and_a_long_header_are_read(tmp_path):
    # The csv module's own default limit is 128 KiB per cell; a BOM note can be longer.
    note, head = "n" * 200_000, "H" * 150_000
    path = write_file(tmp_path / "b.csv", f"Designator,Value,{head}\nC1,1uF,\"{note}\"\nC2,2uF,x\n")
    t = read_table(path)
    assert t.headers == ["Designator", "Value", head]
    assert cells_of(t) == [["C1", "1uF", note], ["C2", "2uF", "x"]]


@pytest.mark.parametrize("quoted", [False, True])
def test_cell_over_the_limit_is_refused_naming_the_row(tmp_path, quoted):
    big = "x" * 3000
    cell = f'"{big}"' if quoted else big
    path = write_file(tmp_path / "b.csv", f"Designator,Value\nC1,1uF\nC2,{cell}\n")
    with use_limits(Limits(cell_chars=2000)):
        msg = one_line_error(path)
    assert "row 3" in msg and "2,000 characters" in msg


@pytest.mark.parametrize("text, rows", [
    ("Designator,Value\rC1,1uF\rC2,2uF\r", [2, 3]),  # lone CR (old Mac line ends)
    ("Designator,Value\r\nC1,1uF\rC2,2uF\nC3,3uF\r\n", [2, 3, 4]),  # all three mixed
    ("Title\rDesignator,Value\rC1,1uF\r", [3]),  # lone CR above the header
])
def test_lone_cr_and_mixed_line_ends(tmp_path, text, rows):
    t = read_table(write_file(tmp_path / "b.csv", text))
    assert t.headers == ["Designator", "Value"]
    assert [r[0] for r in cells_of(t)] == [f"C{i}" for i in range(1, len(rows) + 1)]
    assert t.rows.tolist() == rows


def test_quoted_cell_holding_a_cr(tmp_path):
    t = read_table(write_file(tmp_path / "b.csv", 'Designator,Notes\r\nC1,"a\rb"\r\nC2,c\r\n'))
    assert cells_of(t) == [["C1", "a\rb"], ["C2", "c"]]
    assert t.rows.tolist() == [2, 4]  # C2 starts on line 4: the quoted CR ends line 2


@pytest.mark.parametrize("text, needle", [
    ("Designator,Value\n" + "C1,1uF\n" * 50, "lines 50 is over the limit of 40"),
    ("Designator,Value," + ",".join(f"h{i}" for i in range(60)) + "\nC1\n", "header columns 62"),
    ("Designator,Value\nC1,1uF" + ",x" * 70 + "\n", "columns in a line 72"),
])
def test_rows_and_columns_limits(tmp_path, text, needle):
    with use_limits(Limits(rows=40, columns=50)):
        assert needle in one_line_error(write_file(tmp_path / "b.csv", text))


@FUZZ
@given(text=TEXTISH, encoding=st.sampled_from(["utf-8", "cp1252", "utf-16"]))
def test_fuzzed_text_tables_never_raise_anything_but_input_error(text, encoding):
    read_any(text.encode(encoding, errors="replace"), ".csv")


def test_the_float_reader_guard_finds_booleans_and_overlong_numbers():
    # What pandas' float reader would take but the text path reads otherwise (see
    # bomcheck.read.text_table._FLOAT_READER_DIFFERS notes): any case of true/false, a run of
    # more than 30 digits and points, more than 40 number characters.
    from bomcheck.read.text_table import _float_reader_may_differ as differs
    assert differs("h\nC1,TRUE,5\n", 2) and differs("h\nC1,5,note FaLsE\n", 2)
    assert not differs("true\nC1,5,5\n", 5)  # the header is not the body
    assert differs("1" * 31, 0) and not differs("1" * 30, 0)
    assert differs("1" * 16 + "." + "1" * 15, 0)  # 31 digits with a point
    assert differs("1" * 30 + "e+" + "0" * 9, 0) and not differs("1" * 30 + "e+" + "0" * 8, 0)
    assert not differs("C1,13.2,5\nC2,-0.5e-3,85\n", 0) and not differs("", 0)


def test_longest_run_against_a_plain_count():
    import random

    import numpy as np

    from bomcheck.read.text_table import _longest_run
    rng = random.Random(11)
    for _ in range(3000):
        member = np.array([rng.random() < 0.7 for _ in range(rng.randrange(0, 40))], dtype=bool)
        best = run = 0
        for x in member:
            run = run + 1 if x else 0
            best = max(best, run)
        assert _longest_run(member) == best


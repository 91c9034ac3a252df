"""Read stage, the shared table: unique headers, the header-row search."""

import os
import sys
import pytest

from bomcheck.errors import InputError
from bomcheck.read.reader import HeaderNotFound, unique_headers

sys.path.insert(0, os.path.dirname(__file__))
from read_helpers import cells_of, read_table, write_file  # noqa: E402


def test_headers_made_unique():
    assert unique_headers(["Value", "Value", "", "Qty", "Value"]) == [
        "Value", "Value (2)", "column 3", "Qty", "Value (3)"]


def test_duplicate_and_trailing_empty_headers(tmp_path):
    t = read_table(write_file(tmp_path / "b.csv", "Designator,Value,Value,\nC1,1n,2n,\n"))
    assert t.headers == ["Designator", "Value", "Value"]  # empty unnamed column dropped
    assert list(t.frame.columns) == ["Designator", "Value", "Value (2)"]


def test_header_predicate_picks_the_row(tmp_path):
    path = write_file(tmp_path / "b.csv", "Pos,Typ\nC1,1n\n")
    t = read_table(path, header_predicate=lambda cells: cells[:1] == ["Pos"])
    assert t.header_row == 1 and cells_of(t) == [["C1", "1n"]]


def test_header_after_twenty_banner_rows(tmp_path):
    banner = "".join(f"Banner line {i}\n" for i in range(20))
    t = read_table(write_file(tmp_path / "b.csv", banner + "Designator,Value\nC1,1n\n"))
    assert t.header_row == 21 and t.rows.tolist() == [22]


def test_no_header_row(tmp_path):
    path = write_file(tmp_path / "b.csv", "Title\nItem,Val,Count\nKV-1,1n,3\n")
    with pytest.raises(HeaderNotFound) as err:
        read_table(path)
    assert isinstance(err.value, InputError)
    assert err.value.best_guess == ["Item", "Val", "Count"]
    assert path in str(err.value) and "\n" not in str(err.value)

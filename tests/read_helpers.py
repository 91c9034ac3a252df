"""Shared helpers of the read- and parse-stage tests: the reader with the importer's header test,
files written from text, the cells of a table, a placement column, one-line errors and the fuzz
settings."""


import pytest
from hypothesis import HealthCheck, settings
from hypothesis import strategies as st

from bomcheck.errors import InputError
from bomcheck.parse.columns import has_designator_column
from bomcheck.read import reader


def read_table(path, **kwargs):
    """The reader with the importer's header test (a designator-like column): the caller says
    what its header row holds."""
    kwargs.setdefault("header_predicate", has_designator_column)
    return reader.read_table(path, **kwargs)


def write_file(path, text, encoding="utf-8"):
    path.write_bytes(text.encode(encoding))
    return str(path)


def bom_file(tmp_path, text, name="bom.csv"):
    """A BOM file written from text (UTF-8) in ``tmp_path``; its path as a string."""
    return write_file(tmp_path / name, text)


def placement_column(result, name):
    """One column of an import's placement table, as a list."""
    return result.placements[name].tolist()


def check_accounting(result):
    """Every row of a flat BOM import is accounted for: rows read = capacitor + non-capacitor +
    unreadable rows, and every placement is fitted or not."""
    t = result.totals
    assert t["rows_read"] == t["capacitor_rows"] + t["non_capacitor_rows"] + t["unreadable_rows"]
    kinds = result.skipped["kind"].tolist()
    assert kinds.count("not_capacitor") == t["non_capacitor_rows"]
    assert kinds.count("unreadable") == t["unreadable_rows"]
    assert t["placements"] == len(result.placements) == t["fitted"] + t["not_fitted"]
    assert t["fitted"] == int(result.placements["fitted"].sum())
    assert set(result.skipped["row"]).isdisjoint(result.placements["row"])


def cells_of(table):
    return table.frame.values.tolist()


def one_line_error(path, **kwargs) -> str:
    with pytest.raises(InputError) as err:
        read_table(str(path), **kwargs)
    msg = str(err.value)
    assert msg.startswith(str(path)) and "\n" not in msg
    return msg


FUZZ = settings(max_examples=150, deadline=None, derandomize=True,
                 suppress_health_check=[HealthCheck.too_slow])


TEXTISH = st.lists(st.sampled_from(["Designator", "Value", "C1", "C2-C4", ",", ";", "\t", '"',
                                     "\r", "\n", "\r\n", " ", "4.7µF", "100n", "x" * 300, "\x00",
                                     "\xb5", "#"]), max_size=60).map("".join)


def read_any(data: bytes, suffix: str) -> None:
    import tempfile

    with tempfile.TemporaryDirectory() as d:
        path = __import__("pathlib").Path(d) / f"b{suffix}"
        path.write_bytes(data)
        try:
            read_table(str(path))
        except InputError as exc:
            assert "\n" not in str(exc)

"""Normalise stage (bomcheck/parse/design_toml.py): a TOML design sheet's ``[defaults]``,
``[groups.NAME]`` and ``[parts."C1-C4"]`` tables read into the same entries as a table's rows,
with errors that name the file, the entry's line and its key."""

from __future__ import annotations

import pytest

from bomcheck.errors import InputError
from bomcheck.parse.design import design_from_toml
from bomcheck.parse.design_cells import CONDITION_COLUMNS
from bomcheck.parse.design_toml import entries_from_toml

SMALL = '''\
[defaults]
t_ambient_c = "45 degC"

[groups.RAIL_5V]
members = ["C1-C2"]
v_dc = "5 V"

[parts.C3]
v_dc = 12
'''


def test_entries_are_the_rows_a_table_would_give():
    # [defaults] is the "*" row of a table, a group its name, a part its designators; each
    # entry's row is the line of its [...] header (TOML 1.0: tables start at their header).
    entries, labels, warnings = entries_from_toml(SMALL, path="d.toml")
    assert entries.text["refdes"].tolist() == ["*", "RAIL_5V", "C3"]
    assert entries.rows.tolist() == [1, 4, 8]
    assert entries.is_group.tolist() == [False, True, False]
    assert entries.text["members"].tolist() == ["", "C1-C2", ""]
    col = list(CONDITION_COLUMNS)
    assert entries.values[0, col.index("t_ambient_c")] == 45.0
    v_dc = entries.values[:, col.index("v_dc")]
    assert v_dc[1] == 5.0 and v_dc[2] == 12.0
    assert labels.refdes == "table name" and warnings == []


def test_unknown_top_level_key_and_an_empty_sheet_are_warnings():
    # TOML 1.0 allows any key; one the design format does not know is said, not silently used.
    _, _, warnings = entries_from_toml("x = 1\n", path="d.toml")
    text = " | ".join(map(str, warnings))
    assert "top-level key 'x'" in text and "no [defaults]" in text
    assert all(w.path == "d.toml" for w in warnings)


@pytest.mark.parametrize("text, match, row, column", [
    ('[parts.C1]\nv_dc = "5 A"\n', "wrong dimension", 1, "parts.C1.v_dc"),
    ('\n[parts."C1, C2"]\nt_amb = "warm"\n', "not a quantity", 2, 'parts."C1, C2".t_amb'),
    ('[parts.C1]\nv_dc = true\n', "not a value", 1, "parts.C1.v_dc"),
    ('[part]\nrefdes = "C1"\n', "unknown table", 1, "part"),
    ('[parts.C1]\nmembers = "C2"\n', "members belong in a group", 1, "parts.C1.members"),
    ('[parts.C1]\nv_dc = 5\n[parts.C1-C3]\nv_dc = 6\n', "C1 is addressed by rows 1 and 3", 3,
     "table name"),
    ('[parts.C1\nv_dc = 5\n', "not valid TOML", 1, None),
], ids=["dimension", "unreadable", "bool", "unknown-table", "members-in-part",
        "twice", "syntax"])
def test_toml_errors(text, match, row, column):
    with pytest.raises(InputError, match=match) as info:
        design_from_toml(text, path="d.toml")
    assert (info.value.path, info.value.row, info.value.column) == ("d.toml", row, column)


def test_toml_unknown_key_is_an_error():
    # Issue 9 class 4 (changed: was a warning, and the key's value was lost).
    with pytest.raises(InputError) as info:
        design_from_toml('[parts.C1]\nv_dc = 5\ntemp_rize = "10 degC"\n', path="d.toml")
    assert info.value.column == "parts.C1.temp_rize"
    assert "t_rise_c" in info.value.hint  # the closest known name


def test_toml_cells_follow_the_same_rules():
    with pytest.raises(InputError) as info:
        design_from_toml('[parts.C1]\nv_dc = 5\nv_ripple_pk = "-1 V"\n', path="d.toml")
    assert (info.value.row, info.value.column) == (1, "parts.C1.v_ripple_pk")
    with pytest.raises(InputError, match="not a quantity"):
        design_from_toml('[parts.C1]\nv_dc = "5 V * 0"\n', path="d.toml")

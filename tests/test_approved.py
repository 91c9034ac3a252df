"""Normalise stage (bomcheck/parse/approved.py): the approved-source table of a BOM, each line's
own manufacturer part, the sources written beside it in numbered columns and the approved-source
rows under it (common practice of ERP and contract-manufacturer BOM exports)."""

from __future__ import annotations

import numpy as np

from bomcheck.parse.approved import Lines, sources_of
from bomcheck.parse.bomresult import LINE_CAP, LINE_NONCAP, SOURCE_COLUMNS


def _obj(*cells: str) -> np.ndarray:
    return np.array(cells, dtype=object)


# Three lines built in code: two capacitor lines (rows 2 and 4) and a resistor line (row 3)
# whose second source is written beside it in a numbered column pair.
LINES = Lines(line_of_row=np.array([0, 1, 2]), kind=np.array([LINE_CAP, LINE_NONCAP, LINE_CAP]),
              head_rows=np.array([2, 3, 4]), manufacturer=_obj("Kvellon", "Varnholt", "Sarnex"),
              mpn=_obj("KV-104", "VR-10K", "SX-477"),
              side_by_side=[(_obj("", "Mellby", ""), _obj("", "MB-10K", ""))])


def test_every_capacitor_line_has_its_own_part_as_source_zero():
    # Common practice of approved-manufacturer lists: the line's own part is the first source.
    out = sources_of(LINES, None, None, None, None)
    assert list(out.columns) == list(SOURCE_COLUMNS)
    own = out[out["source"] == 0]
    assert own["line"].tolist() == [0, 1, 2] and own["row"].tolist() == [2, 3, 4]
    assert own["mpn"].tolist() == ["KV-104", "VR-10K", "SX-477"]


def test_another_parts_line_is_listed_only_when_it_has_approved_sources():
    # A resistor line matters here only through its approved sources (common practice of AML
    # rows).
    lines = Lines(LINES.line_of_row, LINES.kind, LINES.head_rows, LINES.manufacturer, LINES.mpn,
                  side_by_side=[])
    assert sources_of(lines, None, None, None, None)["line"].tolist() == [0, 2]


def test_approved_source_rows_follow_the_numbered_columns_in_line_order():
    # An approved-source row (row 5) under line 0 and one (row 6) under line 1: each becomes the
    # next source of its line, with its description and notes as the text.
    cells = {"manufacturer": _obj("Brisk Ceramics", "Tollin Passives"),
             "mpn": _obj("BC-104", "TP-10K"), "description": _obj("longer  lead time", ""),
             "notes": _obj("", "")}
    out = sources_of(LINES, np.array([0, 1]), np.array([0, 1]), np.array([5, 6]), cells)
    assert out[["line", "source", "row", "mpn"]].values.tolist() == [
        [0, 0, 2, "KV-104"], [0, 1, 5, "BC-104"],
        [1, 0, 3, "VR-10K"], [1, 1, 3, "MB-10K"], [1, 2, 6, "TP-10K"],
        [2, 0, 4, "SX-477"]]
    assert out.loc[1, "text"] == "longer lead time"

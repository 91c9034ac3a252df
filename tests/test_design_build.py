"""Building a design from its entries: single designators found in one pattern pass (the same
answer as one test per cell), lists and ranges expanded, each designator addressed once per
level, and designator rows over group rows."""

import re

import numpy as np
import pandas as pd
import pytest

from bomcheck.errors import InputError
from bomcheck.parse.design import design_from_table
from bomcheck.parse.design_build import _single_designators
from bomcheck.parse.design_cells import SINGLE

CELLS = ["C1", "c2", "C10A", "C1-C4", "C1, C2", "+5V", "_X9", "C\u0663", "C1 ", "\u00df1",
         "R12b", "12", "C1A1"]


def _one_by_one(cells):
    single = np.array([bool(re.fullmatch(SINGLE, c)) for c in cells])
    return single, [c.upper() for c, s in zip(cells, single) if s]


@pytest.mark.parametrize("extra", [[], ["C7\nC8"]], ids=["one pass", "line break: per cell"])
def test_single_designators_agree_with_one_test_per_cell(extra):
    cells = np.array(CELLS + extra, dtype=object)
    single, upper = _single_designators(cells)
    want_single, want_upper = _one_by_one(cells.tolist())
    assert single.tolist() == want_single.tolist()
    assert upper.tolist() == want_upper


def test_single_designators_of_no_cells():
    single, upper = _single_designators(np.array([], dtype=object))
    assert single.tolist() == [] and upper.tolist() == []


def test_a_designator_row_wins_over_its_group_and_is_warned_about():
    frame = pd.DataFrame({"refdes": ["RAIL", "C2"], "members": ["C1-C3", ""],
                          "v_dc": ["5", "3.3"]})
    design = design_from_table(frame, path="d.csv")
    assert design.conditions.loc[["C1", "C2", "C3"], "v_dc"].tolist() == [5.0, 3.3, 5.0]
    assert [w.column for w in design.warnings] == ["v_dc"]
    assert "overriding 5 of its group RAIL (row 2)" in design.warnings[0].message


def test_a_designator_in_two_designator_rows_names_both_rows():
    frame = pd.DataFrame({"refdes": ["C1-C3", "C5", "c2"], "v_dc": ["5", "5", "5"]})
    with pytest.raises(InputError, match=r"C2 is addressed by rows 2 and 4"):
        design_from_table(frame, path="d.csv")


def test_large_sheet_of_single_designators_builds_in_source_order():
    n = 20_000
    frame = pd.DataFrame({"refdes": [f"c{i}" for i in range(n, 0, -1)],
                          "v_dc": [str(i % 50) for i in range(n)]})
    design = design_from_table(frame)
    assert design.conditions.index[:3].tolist() == [f"C{n}", f"C{n - 1}", f"C{n - 2}"]
    assert design.conditions["design_row"].is_monotonic_increasing

"""The design sheet as read: designators found by hash joins, normalised only when spelled
otherwise, precedence applied per placement, and the designators the BOM lacks."""

import numpy as np
import pandas as pd
import pytest

from bomcheck.parse.design import design_from_table
from bomcheck.parse.design_model import merge_levels, positions


@pytest.fixture
def design():
    frame = pd.DataFrame({"refdes": ["*", "RAIL", "C1", "C2"],
                          "members": ["", "C3, C4", "", ""],
                          "v_dc": ["", "5", "12", ""],
                          "t_ambient_c": ["40", "", "", "85"]})
    return design_from_table(frame, path="d.csv")


def test_positions_join_as_stored_and_normalise_the_rest(design):
    idx = design.conditions.index
    at = positions(idx, np.array(["C2", " c1 ", "C99", "c3", None], dtype=object))
    assert [idx[i] if i >= 0 else None for i in at] == ["C2", "C1", None, "C3", None]


def test_for_placements_keeps_order_duplicates_and_index(design):
    refdes = pd.Series(["C4", "C1", "C4", "C99"], index=[10, 11, 12, 13])
    out = design.for_placements(refdes)
    assert out.index.tolist() == [10, 11, 12, 13]
    assert out["refdes"].tolist() == ["C4", "C1", "C4", "C99"]
    assert out["v_dc"].tolist()[:3] == [5.0, 12.0, 5.0] and np.isnan(out["v_dc"].iat[3])
    assert out["t_ambient_c"].tolist() == [40.0, 40.0, 40.0, 40.0]  # the defaults row
    assert out["condition_source"].tolist() == ["group", "row", "group", "defaults"]
    assert out["group"].tolist() == ["RAIL", None, "RAIL", None]
    assert str(out["design_row"].dtype) == "Int64"
    assert out["design_row"].tolist() == [3, 4, 3, 2]  # C99 takes the defaults row


def test_without_defaults_an_unnamed_placement_has_no_row():
    design = design_from_table(pd.DataFrame({"refdes": ["C1"], "v_dc": ["5"]}))
    out = design.for_placements(pd.Series(["C1", "C2"]))
    assert out["design_row"].isna().tolist() == [False, True]
    assert out["condition_source"].tolist() == ["row", "none"]


@pytest.mark.parametrize("given", [set, list, pd.Series, lambda x: np.array(x, dtype=object)],
                         ids=["set", "list", "series", "array"])
def test_unmatched_takes_any_collection_of_designators(design, given):
    assert design.unmatched(given(["C1", "c3 "])) == [("C4", 3), ("C2", 5)]


def test_merge_levels_lets_the_upper_bound_travel_with_its_dc_value():
    from bomcheck.parse.design_cells import CONDITION_COLUMNS

    k = len(CONDITION_COLUMNS)
    i_dc, i_max, i_tol = (CONDITION_COLUMNS.index(c) for c in ("v_dc", "v_dc_max", "v_tol_pct"))
    specific, general = np.full((1, k), np.nan), np.full((1, k), np.nan)
    specific[0, i_dc], general[0, i_max], general[0, i_tol] = 12.0, 5.5, 10.0
    out = merge_levels(specific, general)
    # 12 V given at the more specific level drops the general 5.5 V bound; 10 % derives 13.2 V.
    assert out[0, i_dc] == 12.0 and out[0, i_max] == pytest.approx(13.2)

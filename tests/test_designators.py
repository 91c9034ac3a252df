"""Tests of bomcheck.parse.designators: the vectorised expansion of designator cells agrees with
bomcheck.parse.refdes.expand (the one definition of the designator language)."""

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

from bomcheck.parse.designators import expand_lines
from bomcheck.parse.refdes import expand, prefix


@pytest.mark.parametrize(
    "text",
    ["C1", "c12", " C3 ", "C12A", "C1, C3-C5", "C1 C2", "C1/C2", "C10..C12", "C1-3", "C7-C9",
     "C001-C003", "c1-C3", "C5 - C7", "CP1-CP4", "C1-C3, CE4"],
)
def test_fast_paths_agree_with_refdes_expand(text):
    des = expand_lines(np.array([text, "C99"], dtype=object))
    got = des.lists.get(0) or [des.single[0]]
    assert got == expand(text)
    assert des.count[0] == len(got) and des.prefix[0] == prefix(got[0])


@given(st.lists(st.tuples(st.sampled_from(["C", "CE", "c", "R"]), st.integers(1, 5000),
                          st.integers(0, 6)), min_size=1, max_size=6),
       st.sampled_from([", ", " ", "/", ";", ",", ", ,"]))
def test_range_and_list_fast_paths_match_expand(parts, sep):
    texts = [f"{p}{n}-{p}{n + k}" if k else f"{p}{n}" for p, n, k in parts]
    texts.append(sep.join(f"{p}{n}" for p, n, _ in parts))  # a plain list
    des = expand_lines(np.array(texts, dtype=object))
    for i, t in enumerate(texts):
        got = des.lists.get(i) or ([des.single[i]] if des.single[i] else [])
        if i in des.error:  # only a list mixing C and R prefixes is refused
            assert "mix capacitor and other prefixes" in des.error[i]
        else:
            assert got == expand(t)

"""Designator lists expanded to single designators (common practice of EDA BOM exports)."""

import pytest
from hypothesis import given
from hypothesis import strategies as st

from bomcheck.errors import InputError
from bomcheck.parse.refdes import MAX_RANGE, expand, is_designator, prefix

# Designator list forms as BOM exports write them (common practice).
CASES = [
    ("C1", ["C1"]),
    ("c12", ["C12"]),
    ("  C3  ", ["C3"]),
    ("C1, C3-C5", ["C1", "C3", "C4", "C5"]),
    ("C1 C2", ["C1", "C2"]),
    ("C1/C2", ["C1", "C2"]),
    ("C1;C2", ["C1", "C2"]),
    ("C1\nC2", ["C1", "C2"]),  # a line break inside a spreadsheet cell
    ("C10..C12", ["C10", "C11", "C12"]),
    ("C10 .. C12", ["C10", "C11", "C12"]),
    ("C1-3", ["C1", "C2", "C3"]),
    ("C1 - C3", ["C1", "C2", "C3"]),
    ("C1\u2013C3", ["C1", "C2", "C3"]),  # en dash
    ("C1:C3", ["C1", "C2", "C3"]),
    ("C1 : C3", ["C1", "C2", "C3"]),
    ("C1 to C3", ["C1", "C2", "C3"]),
    ("C1, C2,", ["C1", "C2"]),
    ("C1,,C2", ["C1", "C2"]),
    ("C08-C11", ["C08", "C09", "C10", "C11"]),  # zero-padded numbers keep their width
    ("CR1-CR3", ["CR1", "CR2", "CR3"]),
    ("C12A", ["C12A"]),
    ("C1 C2-C4 C8", ["C1", "C2", "C3", "C4", "C8"]),
    ("", []),
    (" , ", []),
]


@pytest.mark.parametrize(("text", "expected"), CASES, ids=[repr(c[0]) for c in CASES])
def test_expand(text, expected):
    assert expand(text) == expected


def test_words_between_designators_stay_apart():
    # "to" joins a range only between a number and a designator.
    assert expand("see note to C3") == ["see", "note", "to", "C3"]


@pytest.mark.parametrize("text", ["see note", "U1.C3", "C1-C3A", "C1--C3", "5"])
def test_text_that_is_not_designators_comes_back_for_the_caller(text):
    items = expand(text)
    assert items and not all(is_designator(i) for i in items)


@pytest.mark.parametrize(
    ("text", "problem"),
    [("C5-C3", "runs backwards"), ("C1-R3", "mixes prefixes"),
     (f"C1-C{MAX_RANGE + 1}", f"more than {MAX_RANGE}")],
)
def test_bad_ranges_raise_with_place(text, problem):
    with pytest.raises(InputError, match=problem) as err:
        expand(text, path="bom.csv", row=12)
    msg = str(err.value)
    assert msg.startswith("bom.csv, row 12: ") and repr(text) in msg


def test_longest_range_allowed():
    assert len(expand(f"C1-C{MAX_RANGE}")) == MAX_RANGE


@pytest.mark.parametrize(("refdes", "pfx"), [("CR12", "CR"), ("c5", "C"), ("CON3", "CON"),
                                             ("12", ""), ("C_1", "C_")])
def test_prefix(refdes, pfx):
    assert prefix(refdes) == pfx


@pytest.mark.parametrize(("item", "ok"), [("C12", True), (" C12A ", True), ("C1-C3", False),
                                          ("12", False), ("C", False), ("C1.2", False)])
def test_is_designator(item, ok):
    assert is_designator(item) is ok


@given(st.lists(st.tuples(st.sampled_from(["C", "CP", "R", "TP"]), st.integers(1, 999),
                          st.integers(0, 5)), min_size=1, max_size=8),
       st.sampled_from([", ", " ", "/", ";"]))
def test_lists_of_ranges_round_trip(parts, sep):
    text = sep.join(f"{p}{n}-{p}{n + k}" if k else f"{p}{n}" for p, n, k in parts)
    expected = [f"{p}{i}" for p, n, k in parts for i in range(n, n + k + 1)]
    assert expand(text) == expected


# Hostile designator cells (issue 10): linear time, bounded numbers and expansions.

def _seconds(fn) -> float:
    import time

    t0 = time.perf_counter()
    fn()
    return time.perf_counter() - t0


@pytest.mark.parametrize("cell", [
    "C" * 100_000 + "x",  # a long letter run that never reaches a digit
    "C1" + " " * 100_000 + "x",  # a long space run that is no range mark
    ("C1" + "x" * 9 + "-") * 9000,  # range marks between letter runs
    "Ab" * 50_000 + "1",
])
def test_a_100_kb_garbage_cell_is_linear(cell):
    # The quadratic forms took minutes on such cells; linear ones take milliseconds.
    def run():
        is_designator(cell)
        try:
            expand(cell)
        except InputError:
            pass
    assert _seconds(run) < 0.5


def test_a_5000_digit_number_is_a_clean_error():
    with pytest.raises(InputError, match="longer than 9 digits"):
        expand("C1-C" + "9" * 5000)
    assert not is_designator("C" + "9" * 5000)  # no int() of it anywhere


def test_one_cell_is_held_to_the_cell_placement_limit():
    from bomcheck.read.limits import Limits, use_limits

    assert len(expand("C1-C5000, D1-D5000")) == 10_000
    with pytest.raises(InputError, match="more than 10,000 placements"):
        expand("C1-C9999, D1-D9999")
    with use_limits(Limits(cell_placements=100)), pytest.raises(InputError, match="100 "):
        expand("C1-C60 D1-D60")

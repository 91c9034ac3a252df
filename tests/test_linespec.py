"""Tests of bomcheck.parse.linespec: not-fitted marks and decimal commas in cell text (common
practice of BOM exports)."""

import gc
import weakref

import pytest

from bomcheck.parse.linespec import CellParser, decimal_commas, not_fitted_mark


@pytest.mark.parametrize(
    ("text", "mark"),
    [("DNP", "DNP"), ("dnp", "dnp"), ("C5 (DNI)", "DNI"), ("NF", "NF"), ("N/F", "N/F"),
     ("100 NF", None), ("100NF", None), ("4n7 NC", "NC"), ("not populated", "not populated"),
     ("Do Not Place", "Do Not Place"), ("NOPOP", "NOPOP"), ("470uF NP", None),
     ("nicht bestueckt", "nicht bestueckt"), ("Non-Mont\u00e9", "Non-Mont\u00e9"),
     ("CAP CER 100nF", None)],
)
def test_not_fitted_marks(text, mark):
    assert not_fitted_mark(text) == mark


@pytest.mark.parametrize(
    ("text", "semicolon", "expected"),
    [("4,7uF", True, "4.7uF"), ("1,000pF", True, "1.000pF"), ("4,7uF", False, "4.7uF"),
     ("0,1µF 6,3V", False, "0.1µF 6.3V"), ("1,000pF", False, "1,000pF"),
     ("0603,1uF", False, "0603,1uF"), ("C1,C2", False, "C1,C2")],
)
def test_decimal_commas(text, semicolon, expected):
    assert decimal_commas(text, semicolon=semicolon) == expected


def test_cell_parser_is_freed_without_the_collector():
    was = gc.isenabled()
    gc.disable()
    try:
        parser = CellParser(semicolon=False)
        parser.combo({"value": "100nF 50V X7R", "description": "CAP CER 0603 lot 4711"})
        ref = weakref.ref(parser)
        del parser
        # Freed by reference counting alone: its caches do not wait for a collection.
        assert ref() is None
    finally:
        if was:
            gc.enable()

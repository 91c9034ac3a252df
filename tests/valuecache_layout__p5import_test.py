"""Tests of the value-text cache's layout keys (bomcheck.parse.valuecache) and of the cell
parser's lifetime (bomcheck.parse.linespec): texts whose tokens differ only where the parser
reads nothing share a shape, texts that differ in a token it reads do not, and a parser's caches
go with it (no reference cycle left for the collector)."""

import gc
import weakref

import pytest

from bomcheck.parse.linespec import CellParser
from bomcheck.parse.valuecache import ValueParser
from bomcheck.parse.values import parse_value


@pytest.mark.parametrize("texts", [
    # A number before "x" is read as a can size (diameter x length), not stood in for: the two
    # texts share the key of marked tokens but not the number the parser reads.
    ("8707235 x 5 KV-2865454 any", "1234567 x 5 KV-2865454 any", "8707235 x 5 KV-1 other"),
    # A lot number read as a bare number, then the same shape with other lot numbers.
    ("CAP CER 100nF 50V X7R 0603 lot 000001", "CAP CER 100nF 50V X7R 0603 lot 999999",
     "CAP CER 100nF 50V X7R 0603 lot 12345678901234567890"),
    # Three-digit tokens are codes (104 = 100 nF), never stood in for as lot numbers.
    ("104 lot 4711", "105 lot 4711", "104 lot 0815"),
    # A number joined to the unit after it is read.
    ("lot 4711 10 uF 16 V", "lot 4712 22 uF 16 V", "lot 4711 10 V"),
])
def test_texts_alike_but_for_read_tokens_give_parse_value_each(texts):
    # Each text alone, as parse_value reads it (the reference), also when read one after
    # another by one cache that has seen the others' shapes.
    parser = ValueParser()
    for context in ("description", "value", "any"):
        for text in (*texts, *reversed(texts)):
            assert parser.parse(text, context) == parse_value(text, context=context)


def test_many_lot_numbers_share_one_shape():
    parser = ValueParser()
    texts = [f"capacitor 1uF 25V X5R 0805 lot {k:06d} bulk" for k in range(200)]
    for text in texts:
        assert parser.parse(text, "description") == parse_value(text, context="description")
    # One layout for all 200 texts: the lot number is the text's own token.
    assert len(parser._layouts) == 1


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


def _small_import():
    import pandas as pd

    from bomcheck.parse.importer import import_frame

    frame = pd.DataFrame({"Designator": ["C1", "C2"], "Value": ["100nF 50V X7R", "1uF 25V"],
                          "Description": ["CAP CER lot 4711", "CAP CER lot 4712"]})
    return import_frame(frame)


def test_import_leaves_the_collector_as_it_found_it():
    assert gc.isenabled() and gc.get_freeze_count() == 0
    result = _small_import()
    assert len(result.placements) == 2
    # Enabled again, nothing left in the permanent generation.
    assert gc.isenabled() and gc.get_freeze_count() == 0


def test_import_keeps_the_callers_frozen_objects_frozen():
    gc.freeze()  # a caller that freezes its objects (before forking workers, say)
    try:
        frozen = gc.get_freeze_count()
        assert frozen > 0
        _small_import()
        assert gc.get_freeze_count() >= frozen
    finally:
        gc.unfreeze()

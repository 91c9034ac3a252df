"""The one strict JSON encoder (bomcheck.report.jsontext): RFC 8259 text, a NaN or an infinity
anywhere written as null, non-ASCII kept, compact unless indented."""

import json

import pytest

from bomcheck.report.jsontext import json_dumps


# Moved from test_textsafe.py.
def test_json_dumps_writes_non_finite_numbers_as_null():
    value = {"a": float("inf"), "b": [float("nan"), -float("inf"), 1.5], "c": ("x", 2)}
    text = json_dumps(value)
    # RFC 8259 section 6: Infinity and NaN are not permitted
    assert json.loads(text, parse_constant=lambda c: pytest.fail(c)) == {
        "a": None, "b": [None, None, 1.5], "c": ["x", 2]}


def test_text_is_compact_and_keeps_non_ascii():
    assert json_dumps({"a": [1, "µF"]}) == '{"a":[1,"µF"]}'  # RFC 8259 section 8.1: UTF-8 text


def test_indent_gives_one_key_a_line():
    assert json_dumps({"a": 1, "b": float("nan")}, indent=2) == '{\n  "a": 1,\n  "b": null\n}'


def test_finite_values_come_back_unchanged():
    value = {"x": [0.1, -2.5e-310, 1e300], "y": {"z": True, "w": None}}
    assert json.loads(json_dumps(value)) == value

"""The one quantity formatter (bomcheck/quantity.py): SI numbers as an engineer reads them, with
the prefix an engineer writes and just enough digits to show that a limit is broken."""

from __future__ import annotations

import math

import pandas as pd
import pytest

from bomcheck.quantity import (
    format_farads,
    format_metric,
    format_number,
    format_quantity,
    format_si,
    is_missing,
    visible_pair,
)


@pytest.mark.parametrize(("x", "text"), [
    (0.0, "0"), (70.004, "70"), (12345.6, "12346"), (0.000123456, "0.0001235"), (1e20, "1e+20"),
    (math.nan, "?"),
])
def test_format_number_four_significant_digits(x, text):
    # Common practice: four significant digits; NaN prints as "?" (never a number).
    assert format_number(x) == text


@pytest.mark.parametrize(("farads", "text"), [
    # The prefixes engineers write on capacitors (common practice): pF below 1 nF, nF below
    # 1 uF, uF below 1 F (SI prefixes p = 1e-12, n = 1e-9, u = 1e-6).
    (22e-12, "22 pF"), (100e-9, "100 nF"), (4.7e-6, "4.7 uF"), (1.5, "1.5 F"), (0.0, "0 F"),
    (math.nan, "?"),
])
def test_format_farads(farads, text):
    assert format_farads(farads) == text


def test_format_quantity_percent_farads_and_units():
    # Arithmetic: 0.568 = 56.8 %; SI prefix n = 1e-9.
    assert format_quantity(0.568, "", percent=True) == "56.8 %"
    assert format_quantity(100e-9, "F") == "100 nF"
    assert format_quantity(16.0, "V") == "16 V" and format_quantity(3.0, "") == "3"


def test_visible_pair_shows_enough_digits_to_see_the_limit_broken():
    # 70.004 % against a 70 % limit must not print as "70 % > 70 %".
    assert visible_pair(0.70004, 0.7, "", True, lambda v, lim: v > lim) == ("70.004 %", "70 %")
    # A clear break needs no more than the usual four digits.
    assert visible_pair(0.9, 0.7, "", True, lambda v, lim: v > lim) == ("90 %", "70 %")


def test_is_missing():
    # pandas missing-data semantics: None, NaN and NA are missing; 0 and "" are values.
    assert is_missing(None) and is_missing(math.nan) and is_missing(pd.NA)
    assert not is_missing(0.0) and not is_missing("")


def test_format_metric_uses_the_metrics_display_unit():
    # Ratios show as percentages, temperatures in degC (ASCII in text files, the degree sign
    # on the terminal and the HTML page); an unknown metric shows the bare number.
    assert format_metric(0.872, "voltage_ratio") == "87.2 %"
    assert format_metric(-10.0, "t_operating_c") == "-10 degC"
    assert format_metric(-10.0, "t_operating_c", glyphs=True) == "-10 °C"
    assert format_metric(5.0, "no such metric") == "5"
    assert format_metric(None, "voltage_ratio") == ""


# SI prefixes as IEC 60027-1 / SI brochure spell them (u for micro, as plain text)
@pytest.mark.parametrize("value, unit, expected", [
    (4.7e-6, "F", "4.7 uF"), (1e-10, "F", "100 pF"), (0.1, "F", "100 mF"), (13.2, "V", "13.2 V"),
    (38056.68, "ohm", "38.06 kohm"), (0, "V", "0 V"),
])
def test_format_si(value, unit, expected):
    assert format_si(value, unit) == expected


# Formatting of a metric (bomcheck.quantity.format_metric), as the tables show it (common practice:
# percent for ratios, SI prefixes for farads)

@pytest.mark.parametrize("value, metric, text", [
    (0.5625, "voltage_ratio", "56.25 %"),
    (-10.0, "temp_margin_c", "-10 degC"),
    (2.2e-6, "c_worst_f", "2.2 uF"),
    (math.nan, "voltage_ratio", ""),
    (3.0, None, "3"),
])
def test_format_metric(value, metric, text):
    assert format_metric(value, metric) == text

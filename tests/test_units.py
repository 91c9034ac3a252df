"""bomcheck.parse.units checked against pint itself (a separate registry) as the reference library."""

from __future__ import annotations

import math
import re

import pint
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from bomcheck.errors import InputError, UnitError
from bomcheck.parse.units import PLAUSIBLE, SI_UNITS, registry, to_si

MICRO_SIGN = "\u00b5"  # Unicode U+00B5 MICRO SIGN
GREEK_MU = "\u03bc"  # Unicode U+03BC GREEK SMALL LETTER MU


@pytest.fixture(scope="module")
def ref() -> pint.UnitRegistry:
    """An independent pint registry, in pint's own spelling: the outside reference."""
    return pint.UnitRegistry()


def _pint(ref: pint.UnitRegistry, magnitude: float, unit: str, quantity: str) -> float:
    return float(ref.Quantity(magnitude, unit).to(SI_UNITS[quantity]).magnitude)


# (text as a user writes it, quantity, the same value in pint's own spelling)
CASES = [
    ("500 mV", "voltage", (500, "millivolt")),
    ("13.2 V", "voltage", (13.2, "volt")),
    ("13.2V", "voltage", (13.2, "volt")),
    ("1.5 kV", "voltage", (1.5, "kilovolt")),
    ("2.2 uF", "capacitance", (2.2, "microfarad")),
    (f"2.2 {MICRO_SIGN}F", "capacitance", (2.2, "microfarad")),
    (f"2.2 {GREEK_MU}F", "capacitance", (2.2, "microfarad")),
    ("100 nF", "capacitance", (100, "nanofarad")),
    ("85 degC", "temperature", (85, "degree_Celsius")),
    ("85 \u00b0C", "temperature", (85, "degree_Celsius")),
    ("85 \u2103", "temperature", (85, "degree_Celsius")),  # U+2103 DEGREE CELSIUS
    ("-40 degC", "temperature", (-40, "degree_Celsius")),
    ("300 K", "temperature", (300, "kelvin")),
    ("185 degF", "temperature", (185, "degree_Fahrenheit")),
    ("10 years", "time", (10, "year")),
    ("50000 h", "time", (50000, "hour")),
    ("3 days", "time", (3, "day")),
    ("12 V/ms", "slew", (12, "volt / millisecond")),
    ("100 kohm", "resistance", (100, "kiloohm")),
    ("1 k\u2126", "resistance", (1, "kiloohm")),  # U+2126 OHM SIGN
    ("1 k\u03a9", "resistance", (1, "kiloohm")),  # U+03A9 GREEK CAPITAL OMEGA
    ("200 mA", "current", (200, "milliampere")),
    ("0.5 W", "power", (0.5, "watt")),
    ("100 kHz", "frequency", (100, "kilohertz")),
    ("10 %", "dimensionless", (10, "percent")),
]


@pytest.mark.parametrize("text, quantity, pint_form", CASES, ids=[c[0] for c in CASES])
def test_to_si_matches_pint(ref, text, quantity, pint_form):
    # pint (independent registry) is the reference for every conversion.
    assert to_si(text, quantity) == pytest.approx(_pint(ref, *pint_form, quantity), rel=1e-12)


def test_ten_years_is_87660_hours(ref):
    # pint's year is the Julian year of 365.25 days: 10 x 365.25 x 24 h.
    assert to_si("10 years", "time") == pytest.approx(87660.0)
    assert float(ref.Quantity(1, "year").to("day").magnitude) == pytest.approx(365.25)


def test_both_micro_glyphs_are_the_micro_prefix():
    # Unicode: U+00B5 MICRO SIGN and U+03BC GREEK SMALL LETTER MU are both written for micro.
    assert to_si(f"4.7 {MICRO_SIGN}F", "capacitance") == to_si(f"4.7 {GREEK_MU}F", "capacitance")
    assert to_si(f"4.7 {GREEK_MU}F", "capacitance") == pytest.approx(4.7e-6)


DELTAS = [
    ("10 degC", (10, "delta_degC")),
    ("10 \u00b0C", (10, "delta_degC")),
    ("10 K", (10, "kelvin")),
    ("18 degF", (18, "delta_degF")),
    ("10 delta_degC", (10, "delta_degC")),
]


@pytest.mark.parametrize("text, pint_form", DELTAS, ids=[d[0] for d in DELTAS])
def test_temperature_delta_is_a_difference(ref, text, pint_form):
    # pint reference: a temperature difference in delta units (1 degF step = 5/9 K).
    assert to_si(text, "temperature_delta") == pytest.approx(
        _pint(ref, *pint_form, "temperature_delta"))


def test_delta_and_absolute_differ(ref):
    # "10 degC" as a margin is 10 K of difference; as a temperature it is 283.15 K (pint).
    assert to_si("10 degC", "temperature_delta") == pytest.approx(10.0)
    assert to_si("10 degC", "temperature") == pytest.approx(10.0)
    kelvin = float(ref.Quantity(10, "degC").to("kelvin").magnitude)
    assert kelvin == pytest.approx(283.15)
    assert to_si("283.15 K", "temperature") == pytest.approx(10.0)


def test_thermal_resistance_in_degc_per_watt(ref):
    # pint reference: degC/W is a temperature step per watt, same as K/W (was 275.15 before).
    expected = _pint(ref, 2, "kelvin / watt", "thermal_resistance")
    assert to_si("2 degC/W", "thermal_resistance") == pytest.approx(expected)
    assert to_si("2 K/W", "thermal_resistance") == pytest.approx(expected)


@pytest.mark.parametrize("text, quantity, unit, pint_form", [
    ("4.7", "voltage", None, (4.7, "volt")),
    ("200", "voltage", "mV", (200, "millivolt")),
    ("85", "temperature", "\u00b0C", (85, "degree_Celsius")),
    ("185", "temperature", "degF", (185, "degree_Fahrenheit")),
    ("10", "temperature_delta", "\u00b0C", (10, "delta_degC")),
    ("2.2", "capacitance", f"{MICRO_SIGN}F", (2.2, "microfarad")),
    ("10", "time", "years", (10, "year")),
    ("5", "dimensionless", "%", (5, "percent")),
], ids=["SI", "mV", "degC-glyph", "degF", "delta-glyph", "micro-sign", "years", "percent"])
def test_bare_number_takes_the_default_unit(ref, text, quantity, unit, pint_form):
    # pint reference, with the unit the header or the column gives.
    assert to_si(text, quantity, unit) == pytest.approx(_pint(ref, *pint_form, quantity))


def test_decimal_comma(ref):
    # A decimal comma reads as a point, with or without a unit (was 15 V for "1,5 V").
    assert to_si("1,5", "voltage") == pytest.approx(1.5)
    assert to_si("1,5 V", "voltage") == pytest.approx(_pint(ref, 1.5, "volt", "voltage"))
    assert to_si("2,2 uF", "capacitance") == pytest.approx(2.2e-6)


@pytest.mark.parametrize("text, quantity, problem", [
    ("5 A", "voltage", "wrong dimension"),
    ("1 uF", "voltage", "wrong dimension"),
    ("2 V", "temperature", "wrong dimension"),
    ("twelve", "voltage", "not a quantity"),
    ("", "voltage", "empty"),
    ("nan", "voltage", "not a finite number"),
    ("inf", "capacitance", "not a finite number"),
    ("1,500 V", "voltage", "ambiguous comma"),
    ("10,000", "time", "ambiguous comma"),
], ids=["amps-for-volts", "farads-for-volts", "volts-for-degC", "words", "empty", "nan", "inf",
        "comma-grouping", "comma-grouping-bare"])
def test_unusable_text_is_a_unit_error(text, quantity, problem):
    with pytest.raises(UnitError) as info:
        to_si(text, quantity)
    assert problem in str(info.value)
    assert info.value.expected  # says what was expected
    assert isinstance(info.value, InputError) and isinstance(info.value, ValueError)


def test_one_registry():
    # One registry for the project (pint docs, "pint in your projects").
    assert registry() is registry()
    assert isinstance(registry().Quantity("1 V"), registry().Quantity)


# --- the strict cell grammar (issues 9 and 10): a number and one unit token, nothing evaluated ---

REFUSED = [
    ("V", "voltage", "not a quantity"),  # a unit alone is not 1 V
    ("5 V * 0", "voltage", "not a quantity"),  # no arithmetic
    ("9**9**9 V", "voltage", "not a quantity"),  # no arithmetic (pint would run for minutes)
    ("20V \u00b110%", "voltage", "not a quantity"),  # a tolerance is its own column
    ("-40..85 degC", "temperature", "not a quantity"),  # a range is two cells
    ("inf V", "voltage", "not a finite number"),
    ("nan", "voltage", "not a finite number"),
    ("-Infinity", "voltage", "not a finite number"),
    ("1e400 mV", "voltage", "out of range"),
    ("1" * 400, "voltage", "too many digits"),
    ("4u7", "capacitance", "not a quantity"),  # RKM is a BOM notation, not a design-sheet one
    ("5 V 3", "voltage", "not a quantity"),
    ("5 (V)", "voltage", "not a quantity"),
    ("5 frobs", "voltage", "unknown unit"),
]


@pytest.mark.parametrize("text, quantity, problem", REFUSED, ids=[r[0][:20] for r in REFUSED])
def test_cells_are_read_never_evaluated(text, quantity, problem):
    # common practice: a quantity cell is data; anything but "number [unit]" is refused.
    with pytest.raises(UnitError) as info:
        to_si(text, quantity)
    assert problem in info.value.problem
    assert info.value.expected


def test_long_expressions_are_refused_quickly():
    # issue 10: "9**9**9 V" ran for minutes through pint; the grammar refuses it at once.
    import time

    start = time.perf_counter()
    for n in range(200):
        with pytest.raises(UnitError):
            to_si("9**9**9" + " " * n + "V", "voltage")
    assert time.perf_counter() - start < 1.0


ACCEPTED = [
    ("5 V", "voltage", None, 5.0),
    ("5V", "voltage", None, 5.0),
    ("4.7 uF", "capacitance", None, 4.7e-6),
    ("4,7 uF", "capacitance", None, 4.7e-6),  # decimal comma
    ("85 degC", "temperature", None, 85.0),
    ("85 \u00b0C", "temperature", None, 85.0),
    ("85C", "temperature", None, 85.0),  # C after a temperature is Celsius, never coulomb
    ("60 %", "dimensionless", None, 0.6),
    ("1e-6 F", "capacitance", None, 1e-6),
    ("5", "voltage", "V", 5.0),
    ("85", "temperature", "degC", 85.0),
    ("300", "temperature", "K", 26.85),
    ("500", "voltage", "mV", 0.5),
    ("-12 V", "voltage", None, -12.0),
]


@pytest.mark.parametrize("text, quantity, unit, expected", ACCEPTED,
                         ids=[f"{a[0]}|{a[2]}" for a in ACCEPTED])
def test_documented_forms(ref, text, quantity, unit, expected):
    # pint (independent registry) agrees on each unit; value from the SI definitions.
    assert to_si(text, quantity, unit) == pytest.approx(expected)


@pytest.mark.parametrize("text, quantity, unit, sign, problem", [
    ("0", "temperature", "K", "any", "implausible temperature"),  # -273 degC
    ("500 degC", "temperature", None, "any", "implausible temperature"),
    ("-150 degC", "temperature", None, "any", "implausible temperature"),
    ("200 kV", "voltage", None, "any", "implausible voltage"),
    ("-200 kV", "voltage", None, "any", "implausible voltage"),
    ("20 kF", "capacitance", None, "positive", "implausible capacitance"),
    ("-5 V", "voltage", None, "nonneg", "negative voltage"),
    ("0 ohm", "resistance", None, "positive", "zero resistance"),
    ("2000 %", "dimensionless", None, "any", "implausible dimensionless"),
], ids=["0K", "500C", "-150C", "200kV", "-200kV", "20kF", "negative", "zero-ohm", "2000pct"])
def test_implausible_values_are_refused(text, quantity, unit, sign, problem):
    # common practice: the ranges of units.PLAUSIBLE (stated with their reasons there).
    with pytest.raises(UnitError) as info:
        to_si(text, quantity, unit, sign)
    assert problem in info.value.problem
    assert info.value.expected


def test_negative_allowed_where_the_sign_means_something():
    # A negative rail keeps its sign (the stress stage uses its magnitude).
    assert to_si("-48 V", "voltage", None, "any") == -48.0
    assert to_si("-40 degC", "temperature", None, "nonneg") == -40.0  # a point on a scale


def test_each_unit_token_converted_once(monkeypatch):
    # Fast path: a second string with the same unit token does not call pint again.
    from bomcheck.parse import units

    units.unit_factor.cache_clear()
    to_si("3 years", "time")
    info = units.unit_factor.cache_info()
    to_si("4 years", "time")
    assert units.unit_factor.cache_info().hits == info.hits + 1


# --- fuzz (issue 10): any text is a plausible finite value or a UnitError, quickly --------------

_PIECES = st.sampled_from(["5", "-", "+", ".", ",", "e", "E", "400", "9" * 40, "**", "*", " ",
                           "V", "mV", "kV", "F", "uF", "\u00b5", "degC", "\u00b0C", "C", "K",
                           "%", "\u00b1", "..", "/", "ms", "inf", "nan", "years", "(", ")", "x"])
_TEXT = st.one_of(st.text(max_size=30), st.lists(_PIECES, max_size=8).map("".join))


@settings(max_examples=400, deadline=None)  # pint may load on first use
@given(text=_TEXT, quantity=st.sampled_from(["voltage", "capacitance", "temperature",
                                             "temperature_delta", "dimensionless", "time"]),
       sign=st.sampled_from(["any", "nonneg", "positive"]))
def test_any_text_is_a_plausible_value_or_a_unit_error(text, quantity, sign):
    # common practice: no traceback, no absurd number, whatever the cell holds.
    try:
        value = to_si(text, quantity, None, sign)
    except UnitError as exc:
        assert exc.problem and exc.expected
        return
    p = PLAUSIBLE[quantity]
    assert math.isfinite(value)
    if p.low is not None:
        assert p.low <= value <= p.high
    else:
        assert abs(value) <= p.high and (sign == "any" or value >= 0)


@pytest.mark.parametrize("text, quantity", [
    ("10 years", "time"), ("3 yr", "time"), ("2 days", "time"), ("50000 hours", "time"),
    ("12 V/ms", "slew"), ("12 V / ms", "slew"), ("3 kV/us", "slew"),
    ("40 degC/W", "thermal_resistance"), ("40 K/W", "thermal_resistance"),
    ("45 uC", "charge"), ("2 mC", "charge"),
    ("0.1 ohm/V", "resistance_per_volt"), ("3 kohm/V", "resistance_per_volt"),
])
def test_table_units_agree_with_pint(ref, text, quantity):
    # The units read without pint (faster start) give pint's own conversion.
    from bomcheck.parse import units

    number, unit = text.split(" ", 1)
    token = unit.replace(" ", "")
    pint_unit = {"degC/W": "delta_degC/W", "yr": "year"}.get(token, token)
    assert units._table_factor(token, quantity) is not None  # served by the table
    assert to_si(text, quantity) == pytest.approx(_pint(ref, float(number), pint_unit, quantity))


# The column path for bare numbers (plain_to_si) must give exactly what to_si gives one text at a
# time, and leave to to_si every text it would refuse (internal consistency: one grammar).
_BARE = r"[-+]?([0-9]+(\.[0-9]*)?|\.[0-9]+)([eE][-+]?[0-9]+)?"
_PLAIN_TEXTS = ["5", "-5", "0", "-0", "+7", "1e3", "1E-3", ".5", "5.", "0.1", "13.2",
                "123456789012345", "1234567890123456", "0.123456789012345678", "1,5", "5 V",
                "1e999", "1e-400", "4e-320", "100000.5", "-100", "99999999", "2e5", "\u0663",
                "1_0", "inf", "nan", "", "0x10", " 5"]


@pytest.mark.parametrize("quantity, unit, sign, high", [
    ("voltage", "V", "any", None), ("voltage", "mV", "nonneg", None),
    ("capacitance", "uF", "positive", None), ("temperature", "degC", "any", None),
    ("temperature", "K", "any", None), ("time", "years", "positive", None),
    ("dimensionless", "%", "nonneg", 1.0), ("resistance", "kohm", "positive", None),
])
def test_plain_numbers_as_a_column_agree_with_to_si(quantity, unit, sign, high):
    from bomcheck.parse.units import check_plausible, plain_to_si

    at, values = plain_to_si(_PLAIN_TEXTS, quantity, unit, sign, high=high)
    got = dict(zip(at.tolist(), values.tolist()))
    for i, text in enumerate(_PLAIN_TEXTS):
        try:
            want = to_si(text, quantity, unit, sign)
            if high is not None:
                check_plausible(want, quantity, sign, high=high)
        except UnitError:
            assert i not in got, text  # refused texts are left to to_si
            continue
        plain = len(text) <= 15 and re.fullmatch(_BARE, text)
        assert (i in got) == bool(plain), text  # every bare number goes the column path
        if plain:
            assert math.copysign(1, got[i]) == math.copysign(1, want) and got[i] == want, text

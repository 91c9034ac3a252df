"""bomcheck.units checked against pint itself (a separate registry) as the reference library."""

from __future__ import annotations

import pint
import pytest

from bomcheck.errors import InputError, UnitError
from bomcheck.units import SI_UNITS, registry, to_si

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

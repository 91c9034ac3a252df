"""The one pint unit registry, built lazily, and conversion of unit-bearing text to SI floats.

pint is slow to import and to build (see DEVELOPERS.md, performance): it is only touched through
these functions, once per distinct string, never in a per-row loop.
"""

from __future__ import annotations

import functools
import math
import re

from bomcheck.errors import UnitError

# Canonical units of the project's quantities; every number inside the pipeline is in these.
SI_UNITS = {
    "voltage": "V",
    "current": "A",
    "capacitance": "F",
    "temperature": "degC",  # absolute temperature in degrees Celsius
    "temperature_delta": "delta_degC",  # a rise or a margin, in kelvin-sized steps
    "time": "h",  # life and durations in hours; discharge time is given in seconds by its metric
    "seconds": "s",
    "resistance": "ohm",
    "energy": "J",
    "power": "W",
    "frequency": "Hz",
    "thermal_resistance": "delta_degC / W",
    "slew": "V / s",
    "charge": "uC",  # stored charge, in microcoulombs (the size of the safety limits)
    "resistance_per_volt": "ohm / V",
    "dimensionless": "",
}


@functools.lru_cache(maxsize=1)
def registry():
    """The shared ``pint.UnitRegistry`` (built on first use, cached on disk where possible)."""
    import pint

    try:
        ureg = pint.UnitRegistry(cache_folder=":auto:", autoconvert_offset_to_baseunit=True)
    except Exception:  # pragma: no cover - a read-only cache folder must not stop the run
        ureg = pint.UnitRegistry(autoconvert_offset_to_baseunit=True)
    return ureg


# Quantities measured in temperature differences: "degC" written in them is a step, not a point
# on the scale (pint would otherwise convert "2 degC/W" through the kelvin offset to 275.15).
_DELTA_QUANTITIES = {"temperature_delta", "thermal_resistance"}
_OFFSET_UNIT = re.compile(
    r"(?<![A-Za-z_])(degC|degF|degree_Celsius|degree_Fahrenheit|celsius|fahrenheit)(?![A-Za-z_])"
)
_DELTA_OF = {"degC": "delta_degC", "degree_Celsius": "delta_degC", "celsius": "delta_degC",
             "degF": "delta_degF", "degree_Fahrenheit": "delta_degF", "fahrenheit": "delta_degF"}
# "1,5" is a decimal comma; "1,500" could be 1.5 or 1500 and is refused rather than guessed.
_THOUSANDS_COMMA = re.compile(r"\d,\d{3}(?!\d)")
_DECIMAL_COMMA = re.compile(r"(?<=\d),(?=\d)")


def _clean(text: str) -> str:
    # Both micro glyphs (U+00B5 and U+03BC) are real input; pint knows only "u" or "micro".
    t = text.strip().replace("\u00b5", "u").replace("\u03bc", "u").replace("\u00b0C", "degC")
    t = t.replace("\u00b0F", "degF").replace("\u2126", "ohm").replace("\u03a9", "ohm")
    t = t.replace("\u2103", "degC").replace("\u2109", "degF")  # the one-glyph degree signs
    return t


@functools.lru_cache(maxsize=4096)
def to_si(text: str, quantity: str, default_unit: str | None = None) -> float:
    """Convert ``text`` (``"500 mV"``, ``"85 degC"``, ``"10 years"``, ``"4.7"``) to a float in the
    project's unit for ``quantity`` (a key of ``SI_UNITS``).

    A bare number takes ``default_unit`` (or the SI unit when none is given). Raises
    ``UnitError`` (without file context; the caller adds path, row and column) when the text is
    not a quantity or has the wrong dimension.
    """
    target = SI_UNITS[quantity]
    if default_unit is not None:
        default_unit = _clean(default_unit)
    cleaned = _clean(str(text))
    if not cleaned:
        raise UnitError("empty value", text=str(text), expected=f"a {quantity.replace('_', ' ')}")
    if _THOUSANDS_COMMA.search(cleaned):
        raise UnitError("ambiguous comma (decimal or thousands?)", text=str(text),
                        expected="a number without digit grouping, such as 1500 or 1.5")
    cleaned = _DECIMAL_COMMA.sub(".", cleaned)
    try:
        number = float(cleaned)
    except ValueError:
        number = None
    if number is not None:
        if not math.isfinite(number):
            raise UnitError("not a finite number", text=str(text),
                            expected=f"a {quantity.replace('_', ' ')} such as {_example(quantity)}")
        if default_unit is None or default_unit == target:
            return number
        cleaned = f"{number} {default_unit}"
    if quantity in _DELTA_QUANTITIES:
        cleaned = _OFFSET_UNIT.sub(lambda m: _DELTA_OF[m.group(1)], cleaned)
    ureg = registry()
    try:
        q = ureg.Quantity(cleaned)
    except Exception:
        raise UnitError(
            "not a quantity pint can read",
            text=str(text),
            expected=f"a number with a {quantity.replace('_', ' ')} unit such as {_example(quantity)}",
        ) from None
    if not isinstance(q, ureg.Quantity):  # a plain number after all
        q = ureg.Quantity(float(q), default_unit or target)
    try:
        value = float(q.to(target).magnitude)
    except Exception:
        raise UnitError(
            f"wrong dimension ({q.dimensionality})",
            text=str(text),
            expected=f"a {quantity.replace('_', ' ')} such as {_example(quantity)}",
        ) from None
    if math.isnan(value):
        raise UnitError("not a number", text=str(text), expected=f"a {quantity}")
    return value


_EXAMPLES = {
    "voltage": "'13.2 V' or '500 mV'",
    "current": "'1.5 A' or '200 mA'",
    "capacitance": "'2.2 uF' or '100 nF'",
    "temperature": "'85 degC'",
    "temperature_delta": "'10 degC' (a difference)",
    "time": "'10 years' or '50000 h'",
    "seconds": "'5 s'",
    "resistance": "'100 kohm'",
    "energy": "'10 J'",
    "power": "'0.5 W'",
    "frequency": "'100 kHz'",
    "thermal_resistance": "'40 delta_degC/W'",
    "slew": "'12 V/ms'",
    "charge": "'45 uC'",
    "resistance_per_volt": "'0.1 ohm/V'",
    "dimensionless": "'0.6' or '60 %'",
}


def _example(quantity: str) -> str:
    return _EXAMPLES.get(quantity, "a number with a unit")

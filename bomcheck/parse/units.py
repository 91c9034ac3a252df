"""Parse stage helper: the one strict reader of quantity cells (a number and an optional unit) for
the design sheet, parts data and rule limits, the plausible range of each quantity, and the one
pint unit registry.

A cell is read by a regular expression (number, then one unit token); pint only converts a unit
token it does not know itself, once per distinct token, and never evaluates the cell: ``5 V * 0``,
``9**9**9 V``, ``20V ±10%`` and ``-40..85 degC`` are refused, not computed. Accepted forms::

    5 V   5V   4.7 uF   4,7 uF (decimal comma)   1e-6 F   85 degC   85 °C   85C   300 K
    60 %   10 years   12 V/ms   40 degC/W   5 (a bare number: the header's unit, else the SI one)

Plausible ranges (``PLAUSIBLE``; outside one is an input error naming the cell). They are wide on
purpose: they only catch unit slips and absurd numbers, never a real part or circuit.

===================== ========================= =================================================
quantity              range (magnitude)         reason
===================== ========================= =================================================
voltage               <= 100 kV                 beyond any capacitor placed on a board; above is
                                                a unit slip (mV read as V x 1000...)
current               <= 10 kA                  ripple, surge and leakage of board-mounted parts
capacitance           <= 10 kF                  the largest supercapacitor cells are a few kF
temperature           -100 .. 400 degC          no capacitor is rated or used outside it; a bare
                                                number under ``[K]`` that lands here is a slip
temperature_delta     <= 500 degC               the whole span above
time (life)           <= 1e7 h                  about 1,100 years
seconds               <= 1e6 s                  a discharge-time limit of days at most
resistance            <= 1e15 ohm               past any insulation resistance
frequency             <= 10 GHz                 past any ripple or switching frequency
slew                  <= 1e12 V/s               1 kV/ns
thermal_resistance    <= 1e4 degC/W             a free-standing part in still air is ~1e3
energy                <= 1e9 J                  rule limits only
power                 <= 1e6 W                  rule limits only
charge                <= 1e9 uC                 rule limits only
resistance_per_volt   <= 1e9 ohm/V              rule limits only
dimensionless         <= 10 (1000 %)            ratios and fractions; tolerances use 100 %
===================== ========================= =================================================

Every quantity also has a sign rule given by its caller (``SIGNS``): ``any`` (a negative rail,
``v_dc``), ``nonneg`` (a magnitude such as a ripple peak or a rise) or ``positive`` (a rating or
a resistance that is divided by). Temperatures are points on a scale: their range is signed.
"""

from __future__ import annotations

import functools
import math
import re
from collections.abc import Sequence

import numpy as np

from bomcheck.frozen import frozen
from bomcheck.errors import UnitError
from bomcheck.read.limits import NUMBER_CHARS, NUMBER_DIGITS

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


@frozen
class Plausible:
    """The plausible values of a quantity in its SI unit: ``high`` bounds the magnitude; ``low``
    is only set for a scale with its own zero (temperature), where the range is signed."""

    high: float
    reason: str
    low: float | None = None


PLAUSIBLE: dict[str, Plausible] = {
    "voltage": Plausible(100e3, "no capacitor on a board is rated near 100 kV"),
    "current": Plausible(10e3, "ripple, surge and leakage currents of board parts"),
    "capacitance": Plausible(1e4, "the largest supercapacitor cells are a few kF"),
    "temperature": Plausible(400.0, "no capacitor is rated or used outside -100..400 degC",
                             low=-100.0),
    "temperature_delta": Plausible(500.0, "the whole -100..400 degC span"),
    "time": Plausible(1e7, "about 1,100 years"),
    "seconds": Plausible(1e6, "a discharge time of days at most"),
    "resistance": Plausible(1e15, "past any insulation resistance"),
    "frequency": Plausible(10e9, "past any ripple or switching frequency"),
    "slew": Plausible(1e12, "1 kV/ns"),
    "thermal_resistance": Plausible(1e4, "a free-standing part in still air is about 1e3 degC/W"),
    "energy": Plausible(1e9, "far past any stored energy on a board"),
    "power": Plausible(1e6, "far past any dissipation in a capacitor"),
    "charge": Plausible(1e9, "far past any stored charge on a board"),
    "resistance_per_volt": Plausible(1e9, "far past any resistance per volt"),
    "dimensionless": Plausible(10.0, "a ratio or fraction up to 1000 %"),
}
SIGNS = ("any", "nonneg", "positive")


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

# The whole grammar of a quantity cell: a number, optional spaces, at most one unit token (a
# word, a word per word, or %). No operators, no digits in the unit, no second number.
_NUMBER = r"[-+]?(?:\d+(?:[.,]\d*)?|[.,]\d+)(?:[eE][-+]?\d+)?"
_WORD = r"[A-Za-z_]+"
_UNIT = rf"%|{_WORD}(?:\s*/\s*{_WORD})?"
_CELL = re.compile(rf"^(?P<num>{_NUMBER})\s*(?P<unit>{_UNIT})?$")
_UNIT_ONLY = re.compile(rf"^(?:{_UNIT})$")
_NOT_FINITE = re.compile(r"^[-+]?(?:inf(?:inity)?|nan)\b", re.IGNORECASE)
# "1,5" is a decimal comma; "1,500" could be 1.5 or 1500 and is refused rather than guessed.
_THOUSANDS_COMMA = re.compile(r"\d,\d{3}(?!\d)")
_MAX_UNIT = 40

# Unit tokens converted without pint (pint costs more to load than a small audit): SI prefixes
# on the quantity's own unit, and the temperature spellings.
_PREFIX = {"p": 1e-12, "n": 1e-9, "u": 1e-6, "m": 1e-3, "": 1.0, "k": 1e3, "M": 1e6, "G": 1e9}
_PLAIN_UNITS = {"voltage": "V", "current": "A", "capacitance": "F", "resistance": "ohm",
                "energy": "J", "power": "W", "frequency": "Hz", "seconds": "s"}
_KELVIN = 273.15


def _clean(text: str) -> str:
    # Both micro glyphs (U+00B5 and U+03BC) are real input; pint knows only "u" or "micro".
    t = text.strip().replace("\u00b5", "u").replace("\u03bc", "u")
    t = re.sub(r"\u00b0\s*C", "degC", t)
    t = re.sub(r"\u00b0\s*F", "degF", t)
    t = t.replace("\u2126", "ohm").replace("\u03a9", "ohm")
    t = t.replace("\u2103", "degC").replace("\u2109", "degF")  # the one-glyph degree signs
    return t


def _describe(quantity: str) -> str:
    return f"a {quantity.replace('_', ' ')} such as {_example(quantity)}"


def parse_number(text: str, quantity: str) -> tuple[float, str | None]:
    """Split a cleaned cell into its number and unit token; ``UnitError`` for anything else."""
    expected = _describe(quantity)
    if not text:
        raise UnitError("empty value", text=text, expected=expected)
    if _NOT_FINITE.match(text):
        raise UnitError("not a finite number", text=text, expected=expected)
    m = _CELL.match(text)
    if not m:
        raise UnitError("not a quantity (one number with an optional unit)", text=text,
                        expected=expected)
    num, unit = m.group("num"), m.group("unit")
    mantissa = re.split(r"[eE]", num)[0]
    if sum(c.isdigit() for c in mantissa) > NUMBER_DIGITS or len(num) > NUMBER_CHARS:
        raise UnitError("too many digits", text=text, expected=expected)
    if "," in num:
        if _THOUSANDS_COMMA.search(num):
            raise UnitError("ambiguous comma (decimal or thousands?)", text=text,
                            expected="a number without digit grouping, such as 1500 or 1.5")
        num = num.replace(",", ".")
    value = float(num)
    if not math.isfinite(value):
        raise UnitError("number out of range", text=text, expected=expected)
    if unit is not None and len(unit) > _MAX_UNIT:
        raise UnitError("not a unit", text=text, expected=expected)
    return value, unit


@functools.lru_cache(maxsize=1024)
def unit_factor(unit: str, quantity: str) -> tuple[float, float]:
    """``(scale, offset)`` taking a number in ``unit`` to the SI unit of ``quantity``:
    ``si = number * scale + offset``. Known tokens are read from a table; others through pint,
    once per distinct token. Raises ``UnitError`` for an unknown unit or a wrong dimension."""
    unit = _clean(unit)
    if not _UNIT_ONLY.match(unit):
        raise UnitError("not a unit", text=unit, expected=_describe(quantity))
    fast = _table_factor(unit, quantity)
    if fast is not None:
        return fast
    target = SI_UNITS[quantity]
    token = unit
    if quantity in _DELTA_QUANTITIES:
        token = _OFFSET_UNIT.sub(lambda m: _DELTA_OF[m.group(1)], token)
    ureg = registry()
    try:
        one = ureg.Quantity(1.0, token)
        zero = ureg.Quantity(0.0, token)
    except Exception:
        raise UnitError("unknown unit", text=unit, expected=_describe(quantity)) from None
    try:
        offset = float(zero.to(target).magnitude)
        scale = float(one.to(target).magnitude) - offset
    except Exception:
        raise UnitError(f"wrong dimension ({one.dimensionality})", text=unit,
                        expected=_describe(quantity)) from None
    return scale, offset


# Compound and time units by quantity (checked against pint in tests/test_units.py); the year is
# pint's Julian year of 365.25 days.
_TABLE: dict[str, dict[str, float]] = {
    "time": {"h": 1.0, "hour": 1.0, "hours": 1.0, "hr": 1.0, "hrs": 1.0, "day": 24.0,
             "days": 24.0, "year": 8766.0, "years": 8766.0, "yr": 8766.0, "yrs": 8766.0},
    "slew": {"V/s": 1.0, "V/ms": 1e3, "V/us": 1e6, "kV/s": 1e3, "kV/ms": 1e6, "kV/us": 1e9},
    "thermal_resistance": {"K/W": 1.0, "degC/W": 1.0, "C/W": 1.0, "delta_degC/W": 1.0},
    "charge": {"uC": 1.0, "mC": 1e3, "nC": 1e-3, "C": 1e6},
    "resistance_per_volt": {"ohm/V": 1.0, "kohm/V": 1e3, "Mohm/V": 1e6},
}


def _table_factor(unit: str, quantity: str) -> tuple[float, float] | None:
    compact = re.sub(r"\s*/\s*", "/", unit)
    if compact in _TABLE.get(quantity, {}):
        return _TABLE[quantity][compact], 0.0
    base = _PLAIN_UNITS.get(quantity)
    if base and unit.endswith(base) and unit[:-len(base)] in _PREFIX:
        return _PREFIX[unit[:-len(base)]], 0.0
    if quantity == "temperature":
        if unit in ("degC", "C"):  # "85C" as in a rated-temperature cell
            return 1.0, 0.0
        if unit == "K":
            return 1.0, -_KELVIN
    if quantity == "temperature_delta" and unit in ("degC", "C", "K", "delta_degC"):
        return 1.0, 0.0
    if quantity == "dimensionless" and unit == "%":
        return 0.01, 0.0
    return None


@functools.lru_cache(maxsize=4096)
def to_si(text: str, quantity: str, default_unit: str | None = None, sign: str = "any") -> float:
    """Convert a quantity cell (``"500 mV"``, ``"85 degC"``, ``"10 years"``, ``"4.7"``) to a float
    in the project's unit for ``quantity`` (a key of ``SI_UNITS``), checked against its
    plausible range (``PLAUSIBLE``) and ``sign`` (``SIGNS``).

    A bare number takes ``default_unit`` (or the SI unit when none is given). Raises
    ``UnitError`` (without file context; the caller adds path, row and column) when the text is
    not one number with an optional unit, has the wrong dimension or is implausible.
    """
    raw = str(text)
    value, unit = parse_number(_clean(raw), quantity)
    unit = unit if unit is not None else default_unit
    try:
        scale, offset = unit_factor(unit, quantity) if unit else (1.0, 0.0)
    except UnitError as exc:
        raise UnitError(exc.problem, text=raw, expected=exc.expected) from None
    si = value * scale + offset
    if si != 0.0 and math.isfinite(si):
        si = float(f"{si:.15g}")  # drop conversion noise: 100 uF is 1e-4, not 9.99...e-05
    check_plausible(si, quantity, sign, text=raw)
    return si


# A bare number in plain digits (no unit, no comma) of at most 15 characters: at most 15
# significant digits, so its float round-trips through the 15-digit rounding of ``to_si``.
_PLAIN = re.compile(r"[-+]?(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+)(?:[eE][-+]?[0-9]+)?")
_PLAIN_CHARS = 15


def plain_to_si(texts: Sequence[str], quantity: str, default_unit: str | None = None,
                sign: str = "any", *, high: float | None = None) -> tuple[np.ndarray, np.ndarray]:
    """``to_si`` for the texts that are bare numbers, as arrays: (positions of those texts
    read, their SI values). A text with a unit or a comma, a long one and a value outside the
    plausible range (``high`` narrowing it as in ``check_plausible``) are left out: ``to_si``
    reads them one by one and raises the error. Each text is matched once; the arithmetic and
    the range checks are column operations."""
    match = _PLAIN.fullmatch
    at = np.fromiter((i for i, t in enumerate(texts) if len(t) <= _PLAIN_CHARS and match(t)),
                     dtype=np.int64)
    try:
        scale, offset = unit_factor(default_unit, quantity) if default_unit else (1.0, 0.0)
    except UnitError:
        return np.zeros(0, dtype=np.int64), np.zeros(0)
    si = np.fromiter((float(texts[i]) for i in at), dtype=float, count=len(at)) * scale + offset
    if scale != 1.0 or offset != 0.0:  # else each number round-trips (at most 15 digits)
        si = round_15(si)
    ok = plausible_mask(si, quantity, sign, high=high)
    return at[ok], si[ok]


def round_15(values: np.ndarray) -> np.ndarray:
    """Each finite, non-zero value rounded to 15 significant digits (conversion noise dropped:
    100 uF is 1e-4, not 9.99...e-05), as ``to_si`` does one value at a time."""
    out = values.copy()
    pick = np.flatnonzero(np.isfinite(values) & (values != 0.0))
    out[pick] = [float(f"{v:.15g}") for v in values[pick].tolist()]
    return out


def plausible_mask(values: np.ndarray, quantity: str, sign: str = "any", *,
                   high: float | None = None) -> np.ndarray:
    """Which ``values`` (SI) ``check_plausible`` accepts, as a column test."""
    if sign not in SIGNS:
        raise ValueError(f"unknown sign rule {sign!r}; expected one of {SIGNS}")  # a bug
    p = PLAUSIBLE[quantity]
    top = p.high if high is None else min(p.high, high)
    with np.errstate(invalid="ignore"):
        ok = np.isfinite(values)
        if p.low is not None:
            return ok & (p.low <= values) & (values <= top)
        if sign != "any":
            ok &= ~(values < 0)
        if sign == "positive":
            ok &= values != 0
        return ok & ~(np.abs(values) > top)


def check_plausible(value: float, quantity: str, sign: str = "any", *, text: str | None = None,
                    high: float | None = None) -> None:
    """Raise ``UnitError`` when ``value`` (SI) is outside the plausible range of ``quantity`` or
    breaks ``sign``; ``high`` narrows the bound (a tolerance up to 100 %)."""
    if sign not in SIGNS:
        raise ValueError(f"unknown sign rule {sign!r}; expected one of {SIGNS}")  # a bug
    shown = str(value) if text is None else text
    if not math.isfinite(value):
        raise UnitError("number out of range", text=shown, expected=_describe(quantity))
    p = PLAUSIBLE[quantity]
    top = p.high if high is None else min(p.high, high)
    if p.low is not None:
        if not p.low <= value <= top:
            raise UnitError(f"implausible {quantity.replace('_', ' ')} ({p.reason})", text=shown,
                            expected=f"{p.low:g} to {top:g} {SI_UNITS[quantity]} after "
                                     "conversion")
        return
    unit = SI_UNITS[quantity] or "(fraction)"
    if value < 0 and sign != "any":
        raise UnitError(f"negative {quantity.replace('_', ' ')}; this is a magnitude",
                        text=shown, expected=f"a value from 0 to {top:g} {unit}")
    if value == 0 and sign == "positive":
        raise UnitError(f"zero {quantity.replace('_', ' ')}", text=shown,
                        expected=f"a value above 0, up to {top:g} {unit}")
    if abs(value) > top:
        raise UnitError(f"implausible {quantity.replace('_', ' ')} ({p.reason})", text=shown,
                        expected=f"a magnitude up to {top:g} {unit}")


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
    "thermal_resistance": "'40 degC/W'",
    "slew": "'12 V/ms'",
    "charge": "'45 uC'",
    "resistance_per_volt": "'0.1 ohm/V'",
    "dimensionless": "'0.6' or '60 %'",
}


def _example(quantity: str) -> str:
    return _EXAMPLES.get(quantity, "a number with a unit")

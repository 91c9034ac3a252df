"""The one quantity formatter: SI numbers as an engineer reads them (prefixed farads, percentages,
just enough digits to show that a limit is broken), used by every verdict message and output;
``format_metric`` shows a verdict's figure in its metric's display unit (``vocabulary.METRICS``)."""

from __future__ import annotations

import math
from collections.abc import Callable
from typing import Any

from bomcheck.vocabulary import METRICS


def format_number(x: float, digits: int = 4) -> str:
    """A number in at most ``digits`` significant digits, no exponent for everyday magnitudes."""
    if x != x:
        return "?"
    if x == 0:
        return "0"
    if abs(x) >= 10.0 ** digits and abs(x) < 1e15:
        return f"{x:.0f}"
    return f"{x:.{digits}g}"


def format_farads(x: float, digits: int = 4) -> str:
    """Capacitance with the prefix an engineer writes: pF below 1 nF, nF below 1 uF, else uF."""
    if x != x:
        return "?"
    a = abs(x)
    if a == 0:
        return "0 F"
    if a < 1e-9:
        return f"{format_number(x * 1e12, digits)} pF"
    if a < 1e-6:
        return f"{format_number(x * 1e9, digits)} nF"
    if a < 1.0:
        return f"{format_number(x * 1e6, digits)} uF"
    return f"{format_number(x, digits)} F"


def format_quantity(x: float, unit: str, percent: bool = False, digits: int = 4) -> str:
    """``x`` (SI) shown in ``unit``: ratios as percentages, farads prefixed, else number + unit."""
    if percent:
        return f"{format_number(x * 100.0, digits)} %"
    if unit == "F":
        return format_farads(x, digits)
    return f"{format_number(x, digits)} {unit}" if unit else format_number(x, digits)


def visible_pair(value: float, limit: float, unit: str, percent: bool, beyond: Callable[
        [float, float], bool]) -> tuple[str, str]:
    """``value`` and ``limit`` formatted with just enough digits that the printed numbers show
    ``beyond(value, limit)`` (a limit broken by 70.004 % never prints as "70 % > 70 %")."""
    for digits in range(4, 16):
        v, lim = (_rounded(x, digits) for x in (value, limit))
        if beyond(v, lim):
            break
    return (format_quantity(value, unit, percent, digits),
            format_quantity(limit, unit, percent, digits))


def _rounded(x: float, digits: int) -> float:
    return float(f"{x:.{digits}g}") if x == x and x not in (math.inf, -math.inf) else x


_PREFIXES = ((1e-12, "p"), (1e-9, "n"), (1e-6, "u"), (1e-3, "m"), (1.0, ""), (1e3, "k"),
             (1e6, "M"))


def is_missing(value: Any) -> bool:
    """True for None, NaN and pandas' NA (a figure or text a table does not have)."""
    if value is None:
        return True
    try:
        return bool(value != value)
    except (TypeError, ValueError):  # pandas.NA refuses a truth value
        return True


def format_si(value: Any, unit: str) -> str:
    """A number with an SI prefix and unit, 4 significant digits: 4.7e-06, "F" -> "4.7 uF",
    38056.68, "ohm" -> "38.06 kohm"; "" for a missing value."""
    if is_missing(value):
        return ""
    if value == 0:
        return f"0 {unit}"
    scale, prefix = _PREFIXES[0]
    for s, p in _PREFIXES:
        if abs(value) >= s * 0.9999999:
            scale, prefix = s, p
    return f"{value / scale:.4g} {prefix}{unit}"


def format_metric(value: Any, metric: Any, *, glyphs: bool = False) -> str:
    """A verdict's value or limit in its metric's display unit ("87.2 %", "-10 degC"), "" for
    a missing value, the bare number for an unknown metric. ``glyphs`` writes degC as °C (the
    terminal and the HTML page; the text files keep ASCII units)."""
    if is_missing(value):
        return ""
    m = METRICS.get(metric) if isinstance(metric, str) else None
    text = (format_number(float(value)) if m is None
            else format_quantity(float(value), m.unit, m.percent))
    return text.replace("degC", "°C") if glyphs else text

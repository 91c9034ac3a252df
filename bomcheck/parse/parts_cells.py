"""Normalise stage helper for the parts file: each distinct cell to an SI value, a tolerance, a
dielectric code, an override flag or a curve, with the strict grammar and the plausible ranges of
``bomcheck.parse.units``; errors name the file, row and column."""

from __future__ import annotations

import re
from typing import Any

import numpy as np
import pandas as pd

from bomcheck.frozen import frozen
from bomcheck.parse.codes import decode_dielectric
from bomcheck.parse.design_cells import NO_VALUE
from bomcheck.errors import InputError, UnitError
from bomcheck.parse.units import check_plausible, to_si

_CURVE_X_SIGN = {"voltage": "nonneg", "frequency": "positive"}  # log-interpolated: above 0
_TRUE = frozenset({"true", "yes", "y", "1", "x"})
_FALSE = frozenset({"false", "no", "n", "0", ""})


@frozen
class Curve:
    """A part's curve: x values (SI, increasing) and y values (a fraction, or farads)."""

    xs: tuple[float, ...]
    ys: tuple[float, ...]
    farads: bool = False  # y given as capacitance (DC-bias curves only)

    def at(self, x: np.ndarray, *, log_x: bool = False, beyond: bool = True) -> np.ndarray:
        """Values at ``x`` by linear interpolation (in log10 x when ``log_x``), flat beyond the
        ends; with ``beyond=False`` NaN past the last point (the curve says nothing there)."""
        xs = np.asarray(self.xs, dtype=float)
        ys = np.asarray(self.ys, dtype=float)
        x = np.asarray(x, dtype=float)
        with np.errstate(divide="ignore", invalid="ignore"):
            out = (np.interp(np.log10(x), np.log10(xs), ys) if log_x else np.interp(x, xs, ys))
        past = ~beyond & (x > xs[-1] * (1.0 + 1e-9))
        return np.where(np.isnan(x) | past, np.nan, out)


def convert_column(cells: np.ndarray, quantity: str, unit: str, *, path: str, rows: np.ndarray,
             column: str, sign: str = "positive") -> np.ndarray:
    """Floats (SI) of a column of text cells, each distinct text converted once and checked
    against its plausible range and ``sign``."""
    codes, uniques = pd.factorize(np.asarray(cells, dtype=object), use_na_sentinel=True)
    out = np.full(len(uniques) + 1, np.nan)
    for k, u in enumerate(uniques):
        text = str(u).strip()
        if text.casefold() in NO_VALUE:
            continue
        try:
            out[k] = to_si(text, quantity, unit, sign)
        except UnitError as exc:
            i = int(np.argmax(codes == k))
            raise InputError(f"{exc.problem} ({column})", path=path, row=int(rows[i]),
                             column=column, text=text, expected=exc.expected) from None
    return out[codes]


def _distinct(cells: np.ndarray, read, *, path: str, rows: np.ndarray, column: str,
              expected: str, empty: Any, dtype: Any) -> np.ndarray:
    """``read(text)`` once per distinct cell; None from ``read`` is an error naming the cell."""
    codes, uniques = pd.factorize(np.asarray(cells, dtype=object), use_na_sentinel=True)
    out = np.empty(len(uniques) + 1, dtype=dtype)
    out[-1] = empty
    for k, u in enumerate(uniques):
        text = str(u).strip()
        value = empty if text.casefold() in NO_VALUE else read(text)
        if value is None:
            i = int(np.argmax(codes == k))
            raise InputError(f"not a valid {column} value", path=path, row=int(rows[i]),
                             column=column, text=text, expected=expected)
        out[k] = value
    return out[codes]


def _tolerance(text: str) -> float | None:
    try:
        frac = to_si(re.sub(r"^(?:\u00b1|\+/-|\+-)\s*", "", text), "dimensionless", "%",
                     "positive")
        check_plausible(frac, "dimensionless", "positive", text=text, high=1.0)
    except UnitError:
        return None
    return float(f"{frac * 100.0:.12g}")


def _dielectric(text: str) -> str | None:
    d = decode_dielectric(text.upper())
    return None if d is None else d.code


def _override(text: str) -> bool | None:
    t = text.casefold()
    return True if t in _TRUE else False if t in _FALSE else None


TEXT_READERS = {
    "tolerance": lambda cells, **kw: _distinct(
        cells, _tolerance, expected="a symmetric tolerance such as '10 %' or '±20 %' (up to "
        "100 %)", empty=np.nan, dtype=float, **kw),
    "dielectric": lambda cells, **kw: _distinct(
        cells, _dielectric, expected="an EIA dielectric code such as C0G, X7R or X5R",
        empty="", dtype=object, **kw),
    "override": lambda cells, **kw: _distinct(
        cells, _override, expected="true or false", empty=False, dtype=bool, **kw),
}


def read_curve(cell: str, name: str, x_quantity: str, *, path: str, row: int, column: str) -> Curve:
    """``"0 V: 100 %; 5 V: 30 %"`` to a Curve; points sorted by x, x strictly increasing."""
    def bad(problem: str, text: str) -> InputError:
        return InputError(f"{problem} ({name})", path=path, row=row, column=column, text=text,
                          expected="points 'x: y' separated by ';', such as "
                                   + ("'0 V: 100 %; 5 V: 45 %'" if name == "dc_bias"
                                      else "'120 Hz: 0.6; 100 kHz: 1.0'"))

    xs: list[float] = []
    ys: list[float] = []
    farads: set[bool] = set()
    for point in (p for p in cell.split(";") if p.strip()):
        if ":" not in point:
            raise bad("curve point without ':'", point.strip())
        x_text, y_text = (s.strip() for s in point.split(":", 1))
        try:
            xs.append(to_si(x_text, x_quantity, None, _CURVE_X_SIGN.get(x_quantity, "any")))
        except UnitError as exc:
            raise bad(exc.problem, x_text) from None
        y, is_f = _curve_y(y_text, name)
        if y is None:
            raise bad("not a fraction, percentage" + (" or capacitance" if name == "dc_bias"
                                                      else ""), y_text)
        ys.append(y)
        farads.add(is_f)
    if len(xs) < 1:
        raise bad("empty curve", cell)
    if len(farads) > 1:
        raise bad("curve mixes capacitances and fractions", cell)
    order = np.argsort(xs, kind="stable")
    sx = [xs[i] for i in order]
    if any(b <= a for a, b in zip(sx, sx[1:])):
        raise bad("the same x twice", cell)
    is_farads = farads == {True}
    if not is_farads and name == "dc_bias" and any(not 0.0 <= y <= 1.0 for y in ys):
        raise bad("remaining fraction outside 0..100 %", cell)
    return Curve(tuple(sx), tuple(ys[i] for i in order), is_farads)


def _curve_y(text: str, name: str) -> tuple[float | None, bool]:
    try:
        return to_si(text, "dimensionless", None, "nonneg"), False
    except UnitError:
        pass
    if name == "dc_bias":
        try:
            return to_si(text, "capacitance", None, "nonneg"), True
        except UnitError:
            pass
    return None, False

"""Evaluate stage: the placement table's columns as the engine reads them, each converted (and
formatted for messages) once per table, and the mask of placements a rule applies to."""

from __future__ import annotations

import contextlib
import warnings
from collections.abc import Callable, Iterator

import numpy as np
import pandas as pd

from bomcheck.evaluate.rule_model import Applies
from bomcheck.frozen import frozen
from bomcheck.quantity import format_quantity


def round_sig(x: np.ndarray, digits: int = 4) -> np.ndarray:
    """Round to ``digits`` significant digits, so that values printing alike share one string."""
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        mag = np.floor(np.log10(np.abs(x)))
        mag = np.where(np.isfinite(mag), mag, 0.0)
        scale = 10.0 ** (digits - 1 - mag)
        out = np.round(x * scale) / scale
    return np.where(np.isfinite(out), out, x)



@contextlib.contextmanager
def wide_table_edits() -> Iterator[None]:
    """Columns added in place to a wide table (the placement table, built column by column
    without copies) without pandas' fragmentation hint: the hint is about speed, and the full
    copy that would silence it costs more than the few columns added."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", pd.errors.PerformanceWarning)
        yield

@frozen
class Coded:
    """Strings as codes into a lookup (the last entry is "?" for a missing value)."""

    codes: np.ndarray
    lookup: list[str]

    def take(self, rows: np.ndarray) -> Coded:
        return Coded(self.codes[rows], self.lookup)


def coded_values(values: np.ndarray, unit: str, percent: bool = False) -> Coded:
    """Values formatted as in messages ("?" for NaN), each distinct printed value once."""
    codes, uniques = pd.factorize(round_sig(np.asarray(values, dtype=float)), use_na_sentinel=True)
    lookup = [format_quantity(u, unit, percent) for u in uniques.tolist()] + ["?"]
    codes = np.where(codes < 0, len(lookup) - 1, codes)
    return Coded(codes, lookup)


def coded_constant(text: str, k: int) -> Coded:
    return Coded(np.zeros(k, dtype=np.intp), [text])



class Columns:
    def __init__(self, table: pd.DataFrame) -> None:
        self.table = table
        self.n = len(table)
        self._num: dict[str, np.ndarray] = {}
        self._nan: np.ndarray | None = None
        self._factor: dict[str, tuple[np.ndarray, list]] = {}
        self._text: dict[str, np.ndarray] = {}
        self._formatted: dict[tuple[str, str, bool], Coded] = {}
        self._equals: dict[tuple[str, str], np.ndarray] = {}

    def num(self, name: str) -> np.ndarray:
        """The column as floats, NaN where missing or not a number."""
        if name not in self._num:
            if name not in self.table.columns:  # one shared read-only column of NaN
                if self._nan is None:
                    self._nan = np.full(self.n, np.nan)
                    self._nan.flags.writeable = False
                out = self._nan
            else:
                s = self.table[name]
                if not (pd.api.types.is_numeric_dtype(s.dtype)
                        or pd.api.types.is_bool_dtype(s.dtype)):
                    s = pd.to_numeric(s, errors="coerce")
                # A numpy column is read in place (a float column's missing values are NaN
                # already); only an extension column (Int64, Float64) needs NA made NaN, a copy.
                out = (s.to_numpy(dtype=float) if isinstance(s.dtype, np.dtype)
                       else s.to_numpy(dtype=float, na_value=np.nan)).view()
                out.flags.writeable = False  # it may be the table's own memory: read only
            self._num[name] = out
        return self._num[name]

    def factor(self, name: str) -> tuple[np.ndarray, list]:
        """(codes, distinct values); code -1 for a missing value or a missing column."""
        if name not in self._factor:
            if name not in self.table.columns:
                self._factor[name] = (np.full(self.n, -1, dtype=np.intp), [])
            else:
                codes, uniques = pd.factorize(self.table[name], use_na_sentinel=True)
                self._factor[name] = (np.asarray(codes, dtype=np.intp), list(uniques.tolist()))
        return self._factor[name]

    def _test(self, name: str, fn: Callable[[object], bool]) -> np.ndarray:
        codes, uniques = self.factor(name)
        return np.array([fn(u) for u in uniques] + [False], dtype=bool)[codes]

    def isin(self, name: str, values: tuple) -> np.ndarray:
        """True where the value is one of ``values`` (case-insensitive)."""
        wanted = {str(v).upper() for v in values}
        return self._test(name, lambda u: str(u).upper() in wanted)

    def is_true(self, name: str) -> np.ndarray:
        """True where the value is boolean True (missing counts as not True)."""
        return self._test(name, lambda u: isinstance(u, (bool, np.bool_)) and bool(u))

    def text(self, name: str) -> np.ndarray:
        """The column as strings, "" where missing."""
        if name not in self._text:
            if name not in self.table.columns:
                out = np.full(self.n, "", dtype=object)
            else:
                out = self.table[name].to_numpy(dtype=object)
                missing = pd.isna(out)
                if missing.any():
                    out = out.copy()
                    out[missing] = ""
                if pd.api.types.infer_dtype(out, skipna=False) not in ("string", "empty"):
                    out = np.array([str(v) for v in out.tolist()] or [], dtype=object)
            self._text[name] = out
        return self._text[name]

    def equals(self, name: str, value: str) -> np.ndarray:
        """True where the text column is ``value`` (read-only; each column and value compared
        once per table, the rules then take their placements' entries)."""
        key = (name, value)
        if key not in self._equals:
            if name not in self.table.columns:
                out = np.zeros(self.n, dtype=bool)
            else:
                out = np.asarray(self.table[name].to_numpy(dtype=object) == value, dtype=bool)
            out.flags.writeable = False
            self._equals[key] = out
        return self._equals[key]

    def formatted(self, name: str, unit: str, percent: bool = False) -> Coded:
        """The column formatted for messages (e.g. "14.2 V"), as codes into distinct strings."""
        key = (name, unit, percent)
        if key not in self._formatted:
            self._formatted[key] = coded_values(self.num(name), unit, percent)
        return self._formatted[key]

    def coded_map(self, name: str, fn: Callable[[object], str], missing: str,
                  rows: np.ndarray | None = None) -> Coded:
        """``fn`` of each distinct value of a text column, as codes (of the placements ``rows``
        only when given)."""
        codes, uniques = self.factor(name)
        lookup = [fn(u) for u in uniques] + [missing]
        if rows is not None:
            codes = codes[rows]
        return Coded(np.where(codes < 0, len(lookup) - 1, codes), lookup)


def applies_mask(a: Applies, cols: Columns) -> np.ndarray:
    m = np.ones(cols.n, dtype=bool)
    for key in ("technology", "dielectric", "safety_class", "package"):
        values = getattr(a, key)
        if values:
            m &= cols.isin(key, values)
    if a.dielectric_class:
        m &= np.isin(cols.num("dielectric_class"), np.asarray(a.dielectric_class, dtype=float))
    if a.polarized is not None:
        m &= cols.is_true("polarized") == a.polarized
    if a.emi_filter is not None:
        m &= cols.is_true("emi_filter") == a.emi_filter
    if a.voltage_kind == "ac":
        m &= cols.isin("voltage_kind", ("ac",))
    elif a.voltage_kind == "dc":
        # A rating that does not say DC or AC is read as DC (common practice).
        m &= ~cols.isin("voltage_kind", ("ac",))
    for column in a.only_if_given or ():
        m &= ~np.isnan(cols.num(column))
    for b in a.bounds:
        v = cols.num(b.column)
        with np.errstate(invalid="ignore"):
            inside = {">=": v >= b.value, "<=": v <= b.value,
                      ">": v > b.value, "<": v < b.value}[b.op]
        m &= inside | np.isnan(v)
    return m



def object_codes(values: np.ndarray | pd.Series) -> tuple[np.ndarray, list]:
    """``pd.factorize`` of a column (code per row in order of first appearance, -1 for a missing
    value; the distinct values), fast for an object column of a few distinct texts such as a
    verdict table's rule ids: the rows are first told apart by which object they hold (a
    number per row, hashed as a number), and only one row per object is compared by value."""
    values = values.to_numpy() if isinstance(values, pd.Series) else np.asarray(values)
    if values.dtype != object or values.ndim != 1 or not values.flags.c_contiguous or not len(values):
        codes, uniques = pd.factorize(values)
        return np.asarray(codes, dtype=np.intp), list(uniques)
    # The array's own memory read as the addresses of the objects it holds (it stays alive
    # while ``values`` is referenced here).
    by_object = pd.factorize(np.frombuffer(memoryview(values), dtype=np.uintp))[0]
    # factorize numbers objects in order of first appearance: a row is a first occurrence
    # where the running maximum grows.
    running = np.maximum.accumulate(by_object)
    first = np.flatnonzero(np.r_[True, running[1:] > running[:-1]])
    by_value, uniques = pd.factorize(values[first])
    return np.asarray(by_value, dtype=np.intp)[by_object], list(uniques)

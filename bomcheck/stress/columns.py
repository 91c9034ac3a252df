"""Stress stage: the placement table's columns as the stresses read them, each converted to
numbers once and each distinct text looked at once (by code), and the shared all-NaN column."""

from __future__ import annotations

from collections.abc import Callable, Mapping
from typing import Any

import numpy as np
import pandas as pd


def num_column(table: pd.DataFrame, name: str) -> pd.Series:
    """A float column, all-NaN when the table lacks it."""
    if name in table.columns:
        return pd.to_numeric(table[name], errors="coerce").astype(float)
    return pd.Series(np.nan, index=table.index, dtype=float)


def text_column(table: pd.DataFrame, name: str) -> pd.Series:
    """A text column, "" for missing values and when the table lacks it."""
    if name in table.columns:
        return table[name].astype(object).where(table[name].notna(), "").astype(str)
    return pd.Series("", index=table.index, dtype=object)


def as_numbers(values: Any) -> np.ndarray:
    """A column (Series or array) as a float array, NaN where not a number (``num_column``'s
    conversion); a float array is returned as is (never write into it)."""
    array = values.to_numpy() if isinstance(values, pd.Series) else np.asarray(values)
    if array.dtype == np.float64:
        return array
    if array.dtype.kind in "biuf":
        return array.astype(float)
    return pd.to_numeric(pd.Series(values), errors="coerce").astype(float).to_numpy()


def as_text(values: Any) -> np.ndarray:
    """A column as a text array, "" where missing (``text_column``'s conversion)."""
    array = np.array(values.to_numpy(dtype=object) if isinstance(values, pd.Series) else values,
                     dtype=object)
    array[pd.isna(array)] = ""
    return array.astype(str)


def text_codes(values: Any) -> tuple[np.ndarray, list[str]]:
    """A column as (codes, distinct texts), ``texts[codes]`` being its ``as_text``: each distinct
    value is turned to text once. A missing value has code -1, the last text, ""."""
    array = values.to_numpy() if isinstance(values, pd.Series) else np.asarray(values)
    codes, distinct = pd.factorize(array, use_na_sentinel=True)
    texts = distinct.tolist()
    if not all(type(t) is str for t in texts):  # 1, 1.0 and True hash alike: text first
        codes, distinct = pd.factorize(as_text(array))
        texts = [str(t) for t in distinct.tolist()]
    return codes, [*texts, ""]


def labels(codes: np.ndarray, texts: tuple[str, ...]) -> np.ndarray:
    """Text by code (an int or bool array): one string object per distinct text, not per row."""
    return np.array(texts, dtype=object)[codes.astype(np.intp)]


def read_only_nan(n: int) -> np.ndarray:
    """A column of ``n`` NaN that several columns may share: it is read-only."""
    out = np.full(n, np.nan)
    out.flags.writeable = False
    return out


def empty_as(values: Any, nan: np.ndarray) -> Any:
    """``values``, or ``nan`` (a shared read-only column of NaN) where ``values`` is a float
    array of the same length that is NaN throughout: a column nothing was computed for keeps no
    memory of its own."""
    if (values is not nan and isinstance(values, np.ndarray) and values.dtype == np.float64
            and values.shape == nan.shape and len(nan) and np.isnan(values[0])
            and np.isnan(values).all()):
        return nan
    return values


def share_empty(columns: dict[str, Any], nan: np.ndarray) -> None:
    """Every column of ``columns`` that is NaN throughout replaced by ``nan`` (``empty_as``)."""
    for name, values in columns.items():
        columns[name] = empty_as(values, nan)


class Columns:
    """The placement stresses' inputs by name, each converted to numbers or text once.

    ``get`` returns a column (Series or array) or None where there is none; ``n`` is the number
    of placements. Built on a table (``Columns.of``) or on the circuit stage's columns. Text
    columns are read by code (``coded``): each distinct text is looked at once."""

    def __init__(self, get: Callable[[str], Any], n: int) -> None:
        self._get, self.n, self._cache = get, n, {}

    @classmethod
    def of(cls, table: pd.DataFrame) -> Columns:
        """The columns of ``table``."""
        return cls(lambda name: table[name] if name in table.columns else None, len(table))

    def num(self, name: str) -> np.ndarray:
        """A float column, all-NaN where there is none; never write into it."""
        if name not in self._cache:
            values = self._get(name)
            if values is None and "nan:" not in self._cache:
                self._cache["nan:"] = read_only_nan(self.n)
            self._cache[name] = (self._cache["nan:"] if values is None
                                 else as_numbers(values))
        return self._cache[name]

    def coded(self, name: str) -> tuple[np.ndarray, list[str]]:
        """A text column as (codes, distinct texts) (``text_codes``); "" where there is none."""
        key = f"codes:{name}"
        if key not in self._cache:
            values = self._get(name)
            self._cache[key] = (np.full(self.n, -1, dtype=np.intp), [""]) if values is None \
                else text_codes(values)
        return self._cache[key]

    def text_map(self, name: str, fn: Callable[[str], Any], dtype: Any) -> np.ndarray:
        """``fn`` of each distinct text of a column, as an array of ``dtype``."""
        codes, texts = self.coded(name)
        return np.array([fn(t) for t in texts], dtype=dtype)[codes]

    def is_text(self, name: str, *values: str) -> np.ndarray:
        """True where the column's text is one of ``values``."""
        return self.text_map(name, lambda t: t in values, bool)

    def lookup(self, name: str, mapping: Mapping[str, Any]) -> np.ndarray:
        """The float that ``mapping`` gives each text of a column (NaN where none)."""
        return self.text_map(name, mapping.get, float)

    def text(self, name: str) -> np.ndarray:
        """A text column, "" where missing or where there is none (one object per distinct
        text)."""
        return self.text_map(name, str, object)

    def flag(self, name: str) -> np.ndarray:
        """A True/False column, False where missing or where there is none."""
        key = f"flag:{name}"
        if key not in self._cache:
            values = self._get(name)
            array = (np.zeros(self.n, dtype=bool) if values is None else
                     values.to_numpy() if isinstance(values, pd.Series) else np.asarray(values))
            if array.dtype != bool:
                codes, distinct = pd.factorize(array, use_na_sentinel=True)
                array = np.array([bool(v) for v in distinct.tolist()] + [False],
                                 dtype=bool)[codes]
            self._cache[key] = array
        return self._cache[key]

    def rows(self, start: int, stop: int) -> Columns:
        """The placements ``start`` to ``stop`` (each column converted once, for all of them)."""
        return _Rows(self, slice(start, stop))


class _Rows(Columns):
    """A run of consecutive placements of ``Columns``: slices of its converted columns."""

    def __init__(self, whole: Columns, rows: slice) -> None:
        super().__init__(whole._get, rows.stop - rows.start)
        self._whole, self._rows = whole, rows

    def num(self, name: str) -> np.ndarray:
        return self._whole.num(name)[self._rows]

    def coded(self, name: str) -> tuple[np.ndarray, list[str]]:
        codes, texts = self._whole.coded(name)
        return codes[self._rows], texts

    def flag(self, name: str) -> np.ndarray:
        return self._whole.flag(name)[self._rows]


def by_rows(fn: Callable[[Columns], dict[str, np.ndarray]], cols: Columns,
            rows: int = 1 << 16) -> dict[str, np.ndarray]:
    """``fn`` (element-wise column arithmetic) of ``cols``, worked ``rows`` placements at a time
    into the whole columns: its temporaries stay small (in the processor's cache), the values
    are the same."""
    if cols.n <= rows:
        return fn(cols)
    out: dict[str, np.ndarray] = {}
    for start in range(0, cols.n, rows):
        stop = min(start + rows, cols.n)
        for name, values in fn(cols.rows(start, stop)).items():
            if name not in out:
                out[name] = np.empty(cols.n, dtype=values.dtype)
            out[name][start:stop] = values
    return out

"""Shared leaf: one code per distinct row of several columns, so that a stage works each
distinct combination once (the importer's readings, the report's distinct specs, the substitute
check's distinct placements)."""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np
import pandas as pd

__all__ = ["combine", "row_codes"]

_LIMIT = 2**62  # the mixed-radix key is renumbered before it would leave int64


def combine(codes: Sequence[np.ndarray], sizes: Sequence[int]) -> tuple[np.ndarray, int]:
    """(one code per distinct tuple of the per-column ``codes``, the count of distinct tuples).
    Column k's codes are below ``sizes[k]``, or -1 for a missing value (one more value); codes
    are numbered in order of first appearance."""
    if not codes:
        return np.zeros(0, dtype=np.int64), 0
    key = np.zeros(len(codes[0]), dtype=np.int64)
    span = 1  # every key is below span
    for column, size in zip(codes, sizes):
        radix = int(size) + 1
        if span * radix >= _LIMIT:
            key = pd.factorize(key)[0].astype(np.int64)
            span = int(key.max()) + 1 if len(key) else 1
        key = key * radix + (np.asarray(column, dtype=np.int64) + 1)
        span *= radix
    out, distinct = pd.factorize(key)
    return out.astype(np.int64), len(distinct)


def row_codes(columns: Sequence[pd.Series]) -> np.ndarray:
    """One code per row, equal for rows equal in every column (missing values equal to each
    other), in order of first appearance. Numbers are compared as floats, anything else
    (text, flags, tuples) as objects."""
    codes, sizes = [], []
    for series in columns:
        values = (series.to_numpy(dtype=float, na_value=np.nan)
                  if pd.api.types.is_numeric_dtype(series.dtype)
                  and not pd.api.types.is_bool_dtype(series.dtype)
                  else series.to_numpy(dtype=object))
        column, distinct = pd.factorize(values, use_na_sentinel=True)
        codes.append(column)
        sizes.append(len(distinct))
    return combine(codes, sizes)[0]

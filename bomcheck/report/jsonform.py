"""Report stage: the JSON form of a ``Report`` (schema version 2), built column-wise per chunk of
placements and streamed, so memory stays bounded by one chunk whatever the report's size.

Shape (``schemas/report.schema.json``): the head (tool, status, rule sets, inputs, totals,
cautions), ``rules`` (per rule id seen in a verdict: title, metric, source), ``specs`` (each
distinct parsed specification once), ``placements`` (one record per fitted placement: refdes,
row, text, MPN, the index of its spec, status, its conditions, metrics and verdicts) and the
tail (not audited, design rows the BOM lacks, import findings, waivers, groups). A key whose
value is null or empty is left out of conditions, metrics and verdicts (``jq`` reads a missing
key as null); a passing verdict carries no message and a verdict's source is in ``rules``.
"""

from __future__ import annotations

import json.encoder
from collections.abc import Iterator
from itertools import repeat

import numpy as np
import orjson
import pandas as pd

from bomcheck.report.jsontext import json_dumps

SCHEMA_VERSION = 2
CHUNK = 25_000  # placements per chunk: big enough for column work, small enough for memory
INT_FIELDS = frozenset({"row", "design_row", "spec"})
DISTINCT_FIELDS = frozenset({"refdes", "message"})  # a different value on (nearly) every row
_encode = json.encoder.encode_basestring  # JSON string literal, non-ASCII kept as is


def _float_texts(values: np.ndarray) -> list[str]:
    """Shortest round-trip text of each finite float. orjson writes a column of floats about
    five times faster than ``repr`` one by one (benchmarks/bench_scale.py profile: float text
    was the largest single cost of a 1M-placement report), and straight from the array (no
    Python float per value) about a third faster again, with the same text."""
    if not len(values):
        return []
    array = np.ascontiguousarray(values, dtype=np.float64)
    return orjson.dumps(array, option=orjson.OPT_SERIALIZE_NUMPY).decode()[1:-1].split(",")


def column_texts(values, key: str = "", only: np.ndarray | None = None
                 ) -> tuple[np.ndarray, np.ndarray]:
    """(JSON text of each value, whether it is present): null, NaN, infinity, "" and empty lists
    are absent, and so is every row outside the mask ``only``. Floats are written a column at a
    time; each distinct string once (designators and messages, nearly all distinct, directly)."""
    if only is None and getattr(values, "dtype", None) == np.float64 and key not in INT_FIELDS:
        return _float_column_texts(np.asarray(values))  # most columns: no checks, no Series
    series = values if isinstance(values, pd.Series) else pd.Series(values)
    if only is not None:
        texts = np.full(len(series), "", dtype=object)
        present = np.zeros(len(series), dtype=bool)
        texts[only], present[only] = column_texts(series[only], key)
        return texts, present
    dtype = series.dtype
    if dtype == np.bool_:  # a nullable boolean column (with NA) takes the object path
        arr = series.to_numpy(dtype=bool)
        return np.where(arr, "true", "false").astype(object), np.ones(len(arr), dtype=bool)
    if pd.api.types.is_numeric_dtype(dtype) and not pd.api.types.is_bool_dtype(dtype):
        arr = series.to_numpy(dtype=float, na_value=np.nan)
        present = np.isfinite(arr)
        if key in INT_FIELDS:
            texts = np.where(present, np.where(present, arr, 0).astype(np.int64).astype(str), "")
            return texts.astype(object), present
        return _float_column_texts(arr)
    if key in DISTINCT_FIELDS:  # nearly every value differs: no point in finding repeats
        return _distinct_texts(series.to_numpy(dtype=object))
    codes, uniques = pd.factorize(series.to_numpy(dtype=object), use_na_sentinel=True)
    texts, present = [], []
    for u in uniques:
        text, ok = _object_text(u)
        texts.append(text)
        present.append(ok)
    return _lookup(codes, texts, present)


def _float_column_texts(arr: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """``column_texts`` of an array of floats, written straight from the column (most float
    columns hold few repeats)."""
    present = np.isfinite(arr)
    texts = np.full(len(arr), "", dtype=object)
    if present.any():
        texts[present] = _float_texts(arr[present])
    return texts, present


def _distinct_texts(values: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """``column_texts`` of an object column whose values nearly all differ: a column of strings
    is encoded in one pass, anything else value by value."""
    items = values.tolist()
    if pd.api.types.infer_dtype(values, skipna=False) in ("string", "empty"):
        texts = np.empty(len(items), dtype=object)
        texts[:] = list(map(_encode, items))
        return texts, values != ""
    pairs = [_object_text(x) for x in items]
    return (np.asarray([t for t, _ in pairs], dtype=object),
            np.asarray([p for _, p in pairs], dtype=bool))


def _object_text(value) -> tuple[str, bool]:
    """(JSON text, present) of one cell of an object column."""
    if isinstance(value, str):
        return _encode(value), value != ""
    if isinstance(value, (tuple, list)):
        return json_dumps(list(value)), len(value) > 0
    if isinstance(value, (bool, np.bool_)):
        return ("true" if value else "false"), True
    if isinstance(value, (int, float, np.number)):
        v = float(value)
        if not np.isfinite(v):
            return "", False
        return (str(int(value)) if isinstance(value, (int, np.integer)) else _float_texts(
            np.asarray([v]))[0]), True
    if value is None or value is pd.NA or value is pd.NaT:
        return "", False
    return json_dumps(value), True


def _lookup(codes: np.ndarray, texts: list[str], present: list[bool]):
    lookup = np.asarray([*texts, ""], dtype=object)
    ok = np.asarray([*present, False], dtype=bool)
    return lookup[codes], ok[codes]


def objects(fields: list[tuple[str, np.ndarray, np.ndarray]], n: int) -> list[str]:
    """Per row, the JSON object of the ``fields`` (key, texts, present) present in that row.

    ``texts`` is a column of JSON texts, or a float64 array whose values are written per group
    (a float is formatted only where it is written, straight from the column); a key of None
    puts its text in the object as it is (a run of ``"key":value`` pairs written once per
    distinct value). Rows are grouped by which keys they have (a handful of patterns), and each
    group is written by joining its key literals and columns in one pass."""
    if not fields:
        return ["{}"] * n
    present = np.column_stack([p for _, _, p in fields])
    k = present.shape[1]
    if k <= 62:  # one integer per row names its pattern
        codes = present.astype(np.int64) @ (np.int64(1) << np.arange(k, dtype=np.int64))
        patterns, inverse = np.unique(codes, return_inverse=True)
        masks = [[bool(c >> j & 1) for j in range(k)] for c in patterns.tolist()]
    else:
        uniq, inverse = np.unique(present, axis=0, return_inverse=True)
        masks = uniq.tolist()
    inverse = inverse.reshape(-1)
    if len(masks) == 1:  # one pattern (the usual case): every row in order, no regrouping
        return _join_fields(fields, masks[0], None)
    order = np.argsort(inverse, kind="stable")
    bounds = np.searchsorted(inverse[order], np.arange(len(masks) + 1)).tolist()
    out = np.empty(n, dtype=object)
    for p, mask in enumerate(masks):
        rows = order[bounds[p]:bounds[p + 1]]
        out[rows] = _join_fields(fields, mask, rows)
    return out.tolist()


def _join_fields(fields: list[tuple[str, np.ndarray, np.ndarray]], mask: list[bool],
                 rows: np.ndarray | None) -> list[str]:
    """The JSON objects of ``rows`` (all rows when None) that have exactly the keys of ``mask``:
    each row's key literals and value texts joined in one pass (no per-row template parsing)."""
    cols = [j for j, on in enumerate(mask) if on]
    size = len(fields[0][1]) if rows is None else len(rows)
    if not cols:
        return ["{}"] * size
    args: list = []
    for n, j in enumerate(cols):
        key, column = fields[j][0], fields[j][1]
        values = column if rows is None else column[rows]
        texts = _float_texts(values) if values.dtype == np.float64 else values.tolist()
        args += [repeat(("{" if n == 0 else ",") + ("" if key is None else f'"{key}":')), texts]
    args.append(repeat("}"))
    return list(map("".join, zip(*args)))


def frame_objects(frame: pd.DataFrame, keys: tuple[str, ...], n: int) -> list[str]:
    """``objects`` of the columns ``keys`` of ``frame`` that it has (key = column name)."""
    fields = []
    for key in keys:
        if key not in frame.columns:
            continue
        column = frame[key]
        if column.dtype == np.float64 and key not in INT_FIELDS:  # formatted where written
            values = column.to_numpy()
            texts, present = values, np.isfinite(values)
        else:
            texts, present = column_texts(column, key)
        if present.any():
            fields.append((key, texts, present))
    return objects(fields, n)


def join_per_row(texts: list[str], owner: np.ndarray, n: int) -> list[str]:
    """Per row 0..n-1, the JSON array of the ``texts`` whose ``owner`` (sorted) is that row."""
    bounds = np.searchsorted(owner, np.arange(n + 1)).tolist()
    return ["[" + ",".join(texts[a:b]) + "]" for a, b in zip(bounds[:-1], bounds[1:])]


def write_chunks(front_text: str, back_text: str, chunks: Iterator[list[str]]) -> Iterator[str]:
    """The JSON object ``front_text`` + ``placements`` (from ``chunks`` of record texts) +
    ``back_text`` (both JSON objects), as pieces of text."""
    yield front_text[:-1] + ',"placements":['
    first = True
    for texts in chunks:
        if texts:
            yield ("" if first else ",") + ",".join(texts)
            first = False
    yield "]," + back_text[1:] + "\n"

"""Normalise stage: the design sheet as read (``Design``: per-designator SI conditions, groups
and board-wide defaults) and its lookup by the BOM's placements, as array joins."""

from __future__ import annotations

from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, field
from functools import cached_property
from types import MappingProxyType
from typing import Any

import numpy as np
import pandas as pd

from bomcheck.frozen import frozen
from bomcheck.parse.design_cells import CONDITION_COLUMNS, InputWarning

SOURCES = ("row", "group", "defaults", "none")
GROUP_KINDS = ("rail", "bank", "series")
# The rail's DC value, upper bound and tolerance: the bound travels with the value and is
# derived from the tolerance, so the three are always merged together.
RAIL_COLUMNS = ("v_dc", "v_dc_max", "v_tol_pct")


@frozen
class Group:
    """A named set of placements sharing conditions: a rail, a bank on a rail or a series stack.

    ``conditions`` holds the group row's own values (SI, as given); ``row`` is the source row
    that defined the group (the first row naming it when only ``group`` cells name it).
    """

    name: str
    members: tuple[str, ...]
    row: int
    kind: str = "rail"
    conditions: Mapping[str, float] = field(default_factory=lambda: MappingProxyType({}))
    notes: str = ""


@dataclass(frozen=True, eq=False)
class Design:
    """The design sheet read: per-designator conditions, groups and board-wide defaults.

    ``table`` is indexed by designator and holds what the placements need, as numbers: a float
    column per condition the sheet gives (and the rail's three; SI, ``v_tol_pct`` in %),
    ``design_row`` (the source row that set the placement) and categoricals ``notes``,
    ``group`` (NaN for none) and ``condition_source`` ("row" or "group"). ``conditions`` is
    the same with a column per ``CONDITIONS`` name and text columns, built when asked for.
    Defaults are not folded in: ``for_placements`` applies them.
    """

    path: str
    sha256: str
    table: pd.DataFrame
    defaults: dict[str, float]
    groups: dict[str, Group]
    warnings: tuple[InputWarning, ...] = ()
    defaults_row: int | None = None
    format: str = ""
    sheet: str | None = None

    @cached_property
    def conditions(self) -> pd.DataFrame:
        """The per-designator table with a float column per ``CONDITIONS`` name (NaN where the
        sheet gives none), ``notes``, ``group`` (name or None), ``design_row`` and
        ``condition_source``."""
        t = self.table
        values = np.full((len(t), len(CONDITION_COLUMNS)), np.nan)
        for j, k in enumerate(CONDITION_COLUMNS):
            if k in t:
                values[:, j] = t[k].to_numpy()
        out = pd.DataFrame(values, index=t.index, columns=list(CONDITION_COLUMNS), copy=False)
        out["notes"] = pd.Series(_text(t["notes"], ""), index=out.index, dtype=object)
        out["group"] = pd.Series(_text(t["group"], None), index=out.index, dtype=object)
        out["design_row"] = t["design_row"].to_numpy()
        out["condition_source"] = pd.Series(_text(t["condition_source"], ""), index=out.index,
                                            dtype=object)
        return out

    def for_placements(self, refdes: pd.Series) -> pd.DataFrame:
        """Conditions for each designator of ``refdes`` (same index), precedence applied.

        Columns: ``refdes``, each ``CONDITIONS`` name the sheet or its defaults give (with the
        rail's three), ``notes``, ``group``, ``design_row`` (nullable int) and
        ``condition_source`` ("row", "group", "defaults" or "none"). A condition the sheet
        never gives is no column (an absent column is missing data downstream): at 10^6
        placements each would be 8 MB of NaN.
        """
        c = self.table
        at = positions(c.index, refdes)
        found = at >= 0
        names = [k for k in CONDITION_COLUMNS if k in self.defaults or k in RAIL_COLUMNS
                 or (k in c and bool(c[k].notna().any()))]  # the rest stays NaN
        values = np.full((len(at), len(names)), np.nan, order="F")  # a column per name
        for j, k in enumerate(names):
            if k in c and len(c):
                np.take(c[k].to_numpy(), at, out=values[:, j], mode="clip")
        values[~found] = np.nan
        board = np.array([self.defaults.get(k, np.nan) for k in names], dtype=float)
        merge_levels(values, board, names)
        out = pd.DataFrame(values, columns=names, index=refdes.index, copy=False)
        out.insert(0, "refdes", refdes.to_numpy())
        out["notes"] = pd.Series(_taken_text(c["notes"], at, ""), index=out.index, dtype=object)
        out["group"] = pd.Series(_taken_text(c["group"], at, None), index=out.index,
                                 dtype=object)
        has_defaults = bool(self.defaults)
        rows = _take(c["design_row"].to_numpy(dtype=np.int64), at, 0)
        missing = ~found
        if has_defaults and self.defaults_row is not None:
            rows[missing], missing = self.defaults_row, np.zeros(len(at), dtype=bool)
        out["design_row"] = pd.arrays.IntegerArray(rows, missing)
        fallback = "defaults" if has_defaults else "none"
        out["condition_source"] = pd.Series(_taken_text(c["condition_source"], at, fallback),
                                            index=out.index, dtype=object)
        return out

    def unmatched(self, bom_refdes: Iterable[str]) -> list[tuple[str, int]]:
        """Designators the design sheet names (rows and group members) that the BOM lacks, with
        the design row that named them, in design-sheet order."""
        raw = bom_refdes if isinstance(bom_refdes, (pd.Series, np.ndarray)) else list(bom_refdes)
        idx = self.table.index
        at = positions(idx, raw)
        missing = np.ones(len(idx), dtype=bool)
        missing[at[at >= 0]] = False
        rows = self.table["design_row"].to_numpy()[missing]
        return [(str(r), int(n)) for r, n in zip(idx[missing], rows)]


def _text(column: pd.Series, empty: Any) -> np.ndarray:
    """A categorical column as an object array, ``empty`` where it has no value."""
    return _taken_text(column, None, empty)


def _taken_text(column: pd.Series, at: np.ndarray | None, fill: Any) -> np.ndarray:
    """The text of a categorical column at positions ``at`` (all when None) as an object
    array, ``fill`` where ``at`` is -1 or the column has no value: one lookup per category."""
    cat = column.array
    assert isinstance(cat, pd.Categorical)
    codes = cat.codes if at is None else _take(cat.codes, at, -1)
    labels = np.array([*cat.categories.tolist(), fill], dtype=object)
    return labels[codes]  # code -1 (no value, or not found) takes the trailing fill


def text_column(values: np.ndarray) -> pd.Categorical:
    """An object column of text (None or NaN for no value) as a categorical: the codes and
    each distinct text once."""
    codes, uniques = pd.factorize(values, use_na_sentinel=True)
    return pd.Categorical.from_codes(codes, pd.Index(uniques, dtype=object))


def keys(refdes: Sequence[Any] | pd.Series | np.ndarray) -> np.ndarray:
    """Designators as the design sheet stores them: stripped, upper case (as refdes.expand)."""
    text = np.asarray(refdes, dtype=object).astype(str)
    return np.char.upper(np.char.strip(text)).astype(object)


def positions(index: pd.Index, refdes: Sequence[Any] | pd.Series | np.ndarray) -> np.ndarray:
    """Position in ``index`` (the design's designators) of each of ``refdes``, -1 where the
    design names it nowhere. A designator spelled as stored (the importer's are) is found by
    one hash join; only the others are normalised (``keys``) and looked up again."""
    raw = np.asarray(refdes, dtype=object)
    # As an object Index: a bare array would be inferred as text and cast, at ten times the
    # cost of the join.
    at = index.get_indexer(pd.Index(raw, dtype=object, copy=False))
    miss = np.flatnonzero(at < 0)
    if len(miss):
        at[miss] = index.get_indexer(pd.Index(keys(raw[miss]), dtype=object, copy=False))
    return at


def _take(values: np.ndarray, at: np.ndarray, fill: Any) -> np.ndarray:
    """``values[at]`` with ``fill`` where ``at`` is -1 (a new array)."""
    padded = np.empty((len(values) + 1, *values.shape[1:]), dtype=values.dtype)
    padded[:-1] = values
    padded[-1] = fill
    return padded[at]


def merge_levels(specific: np.ndarray, general: np.ndarray | None,
                 columns: Sequence[str] = CONDITION_COLUMNS) -> np.ndarray:
    """Field-by-field precedence of two levels (columns named by ``columns``, which hold the
    ``RAIL_COLUMNS``), with the rail's upper bound travelling with its DC value and derived
    from the tolerance. ``general`` is the same shape as ``specific``, one value per column
    (the board level), or None (no values). Works in place: ``specific`` becomes the result,
    column by column, with no temporary of the whole table."""
    i_dc, i_max, i_tol = (list(columns).index(c) for c in RAIL_COLUMNS)
    out = specific
    own_dc = ~np.isnan(out[:, i_dc]) & np.isnan(out[:, i_max])
    if general is not None:
        for j in range(out.shape[1]):
            col = out[:, j]
            if general.ndim == 1:
                if not np.isnan(general[j]):
                    col[np.isnan(col)] = general[j]
            else:
                np.copyto(col, general[:, j], where=np.isnan(col))
    out[own_dc, i_max] = np.nan
    derive = np.flatnonzero(np.isnan(out[:, i_max]))
    out[derive, i_max] = out[derive, i_dc] * (1.0 + out[derive, i_tol] / 100.0)
    return out

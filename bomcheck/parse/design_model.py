"""Normalise stage: the design sheet as read (``Design``: per-designator SI conditions, groups
and board-wide defaults) and its lookup by the BOM's placements, as array joins."""

from __future__ import annotations

from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, field
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

    ``conditions`` is indexed by designator with a float column per ``CONDITIONS`` name (SI;
    ``v_tol_pct`` in %), ``notes``, ``group`` (name or None), ``design_row`` (the source row that
    set the placement) and ``condition_source`` ("row" or "group"). Defaults are not folded in:
    ``for_placements`` applies them.
    """

    path: str
    sha256: str
    conditions: pd.DataFrame
    defaults: dict[str, float]
    groups: dict[str, Group]
    warnings: tuple[InputWarning, ...] = ()
    defaults_row: int | None = None
    format: str = ""
    sheet: str | None = None

    def for_placements(self, refdes: pd.Series) -> pd.DataFrame:
        """Conditions for each designator of ``refdes`` (same index), precedence applied.

        Columns: ``refdes``, each ``CONDITIONS`` name the sheet or its defaults give (with the
        rail's three), ``notes``, ``group``, ``design_row`` (nullable int) and
        ``condition_source`` ("row", "group", "defaults" or "none"). A condition the sheet
        never gives is no column (an absent column is missing data downstream): at 10^6
        placements each would be 8 MB of NaN.
        """
        c = self.conditions
        at = positions(c.index, refdes)
        found = at >= 0
        given = c[list(CONDITION_COLUMNS)].notna().any().to_numpy()
        names = [k for k, g in zip(CONDITION_COLUMNS, given)
                 if g or k in self.defaults or k in RAIL_COLUMNS]  # the rest stays NaN
        specific = _take(c[names].to_numpy(dtype=float), at, np.nan)
        board = np.array([self.defaults.get(k, np.nan) for k in names], dtype=float)
        values = merge_levels(specific, np.broadcast_to(board, specific.shape), names)
        out = pd.DataFrame(values, columns=names, index=refdes.index, copy=False)
        out.insert(0, "refdes", refdes.to_numpy())
        notes = _take(c["notes"].fillna("").to_numpy(dtype=object), at, "")
        out["notes"] = pd.Series(notes, index=out.index, dtype=object)
        group = _take(c["group"].to_numpy(dtype=object), at, None)
        group[pd.isna(group)] = None
        out["group"] = pd.Series(group, index=out.index, dtype=object)
        has_defaults = bool(self.defaults)
        rows = _take(c["design_row"].to_numpy(dtype=np.int64), at, 0)
        missing = ~found
        if has_defaults and self.defaults_row is not None:
            rows[missing], missing = self.defaults_row, np.zeros(len(at), dtype=bool)
        out["design_row"] = pd.arrays.IntegerArray(rows, missing)
        fallback = "defaults" if has_defaults else "none"
        source = _take(c["condition_source"].to_numpy(dtype=object), at, fallback)
        out["condition_source"] = pd.Series(source, index=out.index, dtype=object)
        return out

    def unmatched(self, bom_refdes: Iterable[str]) -> list[tuple[str, int]]:
        """Designators the design sheet names (rows and group members) that the BOM lacks, with
        the design row that named them, in design-sheet order."""
        raw = bom_refdes if isinstance(bom_refdes, (pd.Series, np.ndarray)) else list(bom_refdes)
        idx = self.conditions.index
        at = positions(idx, raw)
        missing = np.ones(len(idx), dtype=bool)
        missing[at[at >= 0]] = False
        rows = self.conditions["design_row"].to_numpy()[missing]
        return [(str(r), int(n)) for r, n in zip(idx[missing], rows)]


def keys(refdes: Sequence[Any] | pd.Series | np.ndarray) -> np.ndarray:
    """Designators as the design sheet stores them: stripped, upper case (as refdes.expand)."""
    text = np.asarray(refdes, dtype=object).astype(str)
    return np.char.upper(np.char.strip(text)).astype(object)


def positions(index: pd.Index, refdes: Sequence[Any] | pd.Series | np.ndarray) -> np.ndarray:
    """Position in ``index`` (the design's designators) of each of ``refdes``, -1 where the
    design names it nowhere. A designator spelled as stored (the importer's are) is found by
    one hash join; only the others are normalised (``keys``) and looked up again."""
    raw = np.asarray(refdes, dtype=object)
    at = index.get_indexer(raw)
    miss = np.flatnonzero(at < 0)
    if len(miss):
        at[miss] = index.get_indexer(keys(raw[miss]))
    return at


def _take(values: np.ndarray, at: np.ndarray, fill: Any) -> np.ndarray:
    """``values[at]`` with ``fill`` where ``at`` is -1 (a new array)."""
    padded = np.empty((len(values) + 1, *values.shape[1:]), dtype=values.dtype)
    padded[:-1] = values
    padded[-1] = fill
    return padded[at]


def merge_levels(specific: np.ndarray, general: np.ndarray,
                 columns: Sequence[str] = CONDITION_COLUMNS) -> np.ndarray:
    """Field-by-field precedence of two levels (columns named by ``columns``, which hold the
    ``RAIL_COLUMNS``), with the rail's upper bound travelling with its DC value and derived
    from the tolerance."""
    i_dc, i_max, i_tol = (list(columns).index(c) for c in RAIL_COLUMNS)
    out = np.where(np.isnan(specific), general, specific)
    own_dc = ~np.isnan(specific[:, i_dc]) & np.isnan(specific[:, i_max])
    out[own_dc, i_max] = np.nan
    derive = np.isnan(out[:, i_max])
    out[derive, i_max] = out[derive, i_dc] * (1.0 + out[derive, i_tol] / 100.0)
    return out

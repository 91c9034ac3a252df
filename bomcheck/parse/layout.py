"""Normalise stage, before BOM lines are formed: find the rows that are not lines of their own.

Two layouts of ERP/PLM and contract-manufacturer exports put rows in a BOM that are not
placement lines (common practice of those exports; the names are this project's):

- **approved sources** (an approved-manufacturer list written into the BOM): a row with no
  designator and no quantity that carries a manufacturer or a manufacturer part number, under a
  line (or under another such row). It is one more approved source of that line: purchasing may
  build the line's placements with it. It may carry a description or notes of its own; a row
  with its own value, quantity, designators or internal part number is not one (it is a line).
- **multi-level structure**: in a BOM with a level column (``0``, ``1``, ``.1``, ``..2``), the
  levels at which some row carries designators are the placement levels; a row without
  designators at any other level is an assembly, sub-assembly or material row, not a placement.
  At a placement level, a row without designators is one too (a bare board, solder paste, a
  label) unless its text reads as a capacitor: a capacitor line that lost its designators stays
  an unreadable row, never quietly "not a placement".

Everything here works on whole columns; the importer removes these rows before it forms lines
and accounts for each of them (kind ``approved_source`` or ``not_placement``, with its reason).
"""

from __future__ import annotations

import re
from collections.abc import Callable

import numpy as np
import pandas as pd

from bomcheck.frozen import frozen

__all__ = ["APPROVED_SOURCE", "NOT_PLACEMENT", "Layout", "find_layout", "parse_level"]

APPROVED_SOURCE = "approved_source"
NOT_PLACEMENT = "not_placement"

# Level cells: "0", "1", "+1", ".1", "..2", "...3" (the dots repeat the depth), "1.2" is not one.
_LEVEL = re.compile(r"\s*(?:\+?(\d{1,2})|(\.+)(\d{1,2}))\s*")


def parse_level(cell: str) -> int | None:
    """The depth a level cell gives (``".1"`` -> 1, ``"..2"`` -> 2, ``"0"`` -> 0), or None."""
    m = _LEVEL.fullmatch(cell)
    if m is None:
        return None
    return int(m.group(1) if m.group(1) is not None else m.group(3))


@frozen
class Layout:
    """Per source row of the table: approved-source rows, their parent row, and structure rows.

    ``parent[i]`` is the row index (in the same table) of the line an approved-source row
    belongs to, -1 elsewhere; ``source_index[i]`` numbers the approved sources of one line from 1
    (0 elsewhere); ``reason`` holds the reason of every row taken out (None elsewhere);
    ``placement_levels`` lists the levels that carry designators (empty without a level column).
    """

    approved: np.ndarray
    structure: np.ndarray
    parent: np.ndarray
    source_index: np.ndarray
    reason: np.ndarray
    placement_levels: tuple[int, ...] = ()

    @property
    def taken_out(self) -> np.ndarray:
        """Rows that are not lines of their own."""
        return self.approved | self.structure


def find_layout(cells: dict[str, np.ndarray], n: int, repeated: np.ndarray,
                looks_like_capacitor: Callable[[str], bool]) -> Layout | None:
    """Find approved-source and multi-level structure rows; None when there are none.

    ``cells`` maps the canonical fields present in the BOM to their text columns (``""`` for an
    empty cell); ``repeated`` marks repeated header rows (never taken out here);
    ``looks_like_capacitor`` tells whether a row's value and description text read as a
    capacitor (called once per distinct text of the few rows concerned).
    """
    no_ref = (cells["refdes"] == "") & ~repeated
    has_level = "level" in cells
    if not has_level and not no_ref.any():
        return None  # a flat export with a designator on every row (the common case)
    levels = np.full(n, -1, dtype=np.int64)
    if has_level and n:
        codes, uniq = pd.factorize(cells["level"])
        parsed = np.array([-1 if (lv := parse_level(str(u))) is None else lv for u in uniq],
                          dtype=np.int64)
        levels = parsed[codes]
    approved, parent, source_index = _approved_sources(cells, n, repeated, no_ref,
                                                       levels if has_level else None)
    reason = np.full(n, None, dtype=object)
    if approved.any():
        reason[approved] = "approved source of the line above"
    structure = np.zeros(n, dtype=bool)
    placement_levels: tuple[int, ...] = ()
    if has_level:
        structure, placement_levels = _structure_rows(cells, repeated, no_ref, approved, levels,
                                                      looks_like_capacitor, reason)
    if not (approved.any() or structure.any()):
        return None
    return Layout(approved, structure, parent, source_index, reason, placement_levels)


def _approved_sources(cells: dict[str, np.ndarray], n: int, repeated: np.ndarray,
                      no_ref: np.ndarray, levels: np.ndarray | None
                      ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(approved source?, parent row, source number) per row.

    Approved sources: no designator, no quantity, no value, no internal part number, and a
    manufacturer or an MPN; the level, when given, empty or the parent's. Only the rows
    without a designator are looked at (few in a flat export)."""
    def blank(f: str, idx: np.ndarray) -> np.ndarray:
        c = cells.get(f)
        return np.ones(len(idx), dtype=bool) if c is None else c[idx] == ""

    rows = np.flatnonzero(no_ref)
    rows = rows[blank("qty", rows) & blank("value", rows) & blank("ipn", rows)
                & ~(blank("mpn", rows) & blank("manufacturer", rows))]
    candidate = np.zeros(n, dtype=bool)
    candidate[rows] = True
    approved = np.zeros(n, dtype=bool)
    parent = np.full(n, -1, dtype=np.int64)
    source_index = np.zeros(n, dtype=np.int64)
    if len(rows):
        # The parent of each row: the nearest row above that is not a candidate.
        idx = np.where(~candidate, np.arange(n), -1)
        nearest = np.maximum.accumulate(idx)
        ok = candidate & (nearest >= 0)
        ok &= ~repeated[np.maximum(nearest, 0)]
        if levels is not None:
            above = levels[np.maximum(nearest, 0)]
            ok &= (levels == -1) | (levels == above)
        approved = ok
        parent[approved] = nearest[approved]
        if approved.any():
            run = pd.Series(np.where(approved, parent, -1))
            source_index[approved] = (run.groupby(run).cumcount() + 1).to_numpy()[approved]
    return approved, parent, source_index


def _structure_rows(cells: dict[str, np.ndarray], repeated: np.ndarray, no_ref: np.ndarray,
                    approved: np.ndarray, levels: np.ndarray,
                    looks_like_capacitor: Callable[[str], bool], reason: np.ndarray
                    ) -> tuple[np.ndarray, tuple[int, ...]]:
    """(structure row?, the levels that carry designators) of a multi-level BOM; the reasons
    of the structure rows are written into ``reason``."""
    n = len(levels)
    with_des = np.unique(levels[~no_ref & ~repeated & (levels >= 0)])
    placement_levels = tuple(int(v) for v in with_des)
    structure = no_ref & ~approved & (levels >= 0)
    other_level = ~np.isin(levels, with_des)
    same = np.flatnonzero(structure & ~other_level)
    if len(same):
        # At a placement level: not a placement unless the text reads as a capacitor.
        empty = np.full(n, "", dtype=object)
        text = [f"{v} {d}" for v, d in zip(cells.get("value", empty)[same],
                                           cells.get("description", empty)[same])]
        verdict = {t: looks_like_capacitor(t) for t in set(text)}
        cap = np.array([verdict[t] for t in text], dtype=bool)
        structure[same[cap]] = False
    if structure.any():
        where = ", ".join(str(v) for v in placement_levels) or "none"
        for lv in np.unique(levels[structure]):
            at = structure & (levels == lv)
            if lv in with_des:
                reason[at] = (f"level {int(lv)} row without designators and without "
                              "capacitor text: a material or assembly row of a multi-level "
                              "BOM, not a placement")
            else:
                reason[at] = (f"level {int(lv)} row without designators: an assembly or "
                              "material row of a multi-level BOM, not a placement "
                              f"(designators are on level {where})")
    return structure, placement_levels

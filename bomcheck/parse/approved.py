"""Normalise stage: the approved-source table (each BOM line's own manufacturer part, those
written beside it in numbered columns and the approved-source rows under it)."""

from __future__ import annotations


import numpy as np
import pandas as pd

from bomcheck.frozen import frozen
from bomcheck.parse import columns as colmod
from bomcheck.parse.bomresult import LINE_CAP, SOURCE_COLUMNS
from bomcheck.read import reader



@frozen
class Lines:
    """What the line stage tells the layout step: the line of each row and each line's kind,
    source row, manufacturer and MPN."""

    line_of_row: np.ndarray
    kind: np.ndarray
    head_rows: np.ndarray
    manufacturer: np.ndarray
    mpn: np.ndarray
    side_by_side: list[tuple[np.ndarray, np.ndarray]]  # per numbered column pair, per line

    def for_sources(self) -> Lines:
        """What ``sources_of`` reads, to keep until the table is built: no line per row, the
        kinds as small numbers (a million-line BOM keeps 15 MB less)."""
        return Lines(np.zeros(0, dtype=np.int64), self.kind.astype(np.int8), self.head_rows,
                     self.manufacturer, self.mpn, self.side_by_side)



def side_by_side(table: reader.RawTable, mapping: dict[str, str], heads: np.ndarray
                  ) -> list[tuple[np.ndarray, np.ndarray]]:
    """(manufacturer, MPN) cells per line of each numbered source-column pair
    (``Manufacturer 2``/``MPN 2``): further approved sources written beside the first."""
    out = []
    empty = np.full(len(heads), "", dtype=object)
    for mfr_h, mpn_h in colmod.numbered_sources(list(table.frame.columns), mapping):
        out.append(tuple(table.frame[h].to_numpy(dtype=object)[heads] if h else empty
                         for h in (mfr_h, mpn_h)))
    return out  # type: ignore[return-value]


def sources_of(lines: Lines, parent_line: np.ndarray | None, index: np.ndarray | None,
             rows: np.ndarray | None, cells: dict[str, np.ndarray] | None) -> pd.DataFrame:
    """The approved-source table: source 0 of every capacitor line and of every line with
    approved sources, then the sources written beside it (numbered columns), then the
    approved-source rows under it; ordered by line and source."""
    extra: list[pd.DataFrame] = []
    for mfr, mpn in lines.side_by_side:
        li = np.flatnonzero((mfr != "") | (mpn != ""))
        if len(li):
            extra.append(_source_frame(li, lines.head_rows[li], mfr[li], mpn[li],
                                       np.full(len(li), "", dtype=object), 1 + len(extra)))
    if parent_line is not None and len(parent_line):
        k = len(parent_line)
        empty = np.full(k, "", dtype=object)
        cells = cells or {}
        text = [" ".join(" ".join(str(c).split()) for c in pair if str(c).strip())
                for pair in zip(cells.get("description", empty), cells.get("notes", empty))]
        extra.append(_source_frame(parent_line, rows, cells.get("manufacturer", empty),
                                   cells.get("mpn", empty), np.array(text, dtype=object),
                                   1000 + index))
    own = lines.kind == LINE_CAP
    for part in extra:
        own[part["line"].to_numpy()] = True
    li = np.flatnonzero(own)
    first = _source_frame(li, lines.head_rows[li], lines.manufacturer[li], lines.mpn[li],
                          np.full(len(li), "", dtype=object), 0)
    if not extra:
        return first
    out = pd.concat([first, *extra], ignore_index=True).sort_values(
        ["line", "source"], kind="stable").reset_index(drop=True)
    out["source"] = out.groupby("line").cumcount().to_numpy(dtype=np.int64)
    return out


def _source_frame(line: np.ndarray, rows: np.ndarray, manufacturer: np.ndarray,
                  mpn: np.ndarray, text: np.ndarray, order: int | np.ndarray) -> pd.DataFrame:
    """Rows of the approved-source table; ``order`` sorts a line's sources (renumbered after)."""
    k = len(line)
    return pd.DataFrame({
        "line": np.asarray(line, dtype=np.int64),
        "source": np.broadcast_to(np.asarray(order, dtype=np.int64), (k,)).copy(),
        "row": np.asarray(rows, dtype=np.int64), "manufacturer": manufacturer, "mpn": mpn,
        "text": text,
    }, columns=list(SOURCE_COLUMNS))



"""Read stage: the table every reader returns (``RawTable`` of text cells with source row
numbers), its warnings, the header-row search and the finishing shared by text and workbooks."""

from __future__ import annotations

from collections.abc import Callable
from typing import TYPE_CHECKING, Any

import numpy as np

from bomcheck.frozen import frozen
from bomcheck.errors import InputError
from bomcheck.read import limits as limits_mod

if TYPE_CHECKING:
    import pandas as pd

# The header row is looked for in this many leading non-blank rows (title and banner rows first).
HEADER_SEARCH_ROWS = 25
# Whether a row of stripped cells is the header row; the caller says what its header needs.
HeaderPredicate = Callable[[list[str]], bool]


@frozen
class ReadWarning:
    """Something the reader skipped or doubts, for the report: ``code`` (``mixed-encoding``,
    ``hidden-rows``, ``hidden-columns``, ``hidden-sheets``), a one-line ``message`` naming the
    file, and the source ``rows`` concerned (lines or sheet rows; may be empty)."""

    code: str
    message: str
    rows: tuple[int, ...] = ()

    def to_dict(self) -> dict[str, Any]:
        return {"code": self.code, "message": self.message, "rows": list(self.rows)}

    def __str__(self) -> str:
        return self.message


@frozen
class RawTable:
    """One table of text cells as read from a BOM file.

    ``frame`` holds str cells ("" for empty) under the headers made unique (a column the
    caller asked for as numbers may hold floats, NaN for empty); ``rows`` gives the
    source row (XLSX) or line (CSV) of each frame row, 1-based; ``header_row`` likewise.
    """

    path: str
    format: str  # "csv", "tsv", "semicolon" or "xlsx"
    encoding: str | None
    sheet: str | None
    header_row: int
    headers: list[str]
    frame: pd.DataFrame
    rows: np.ndarray
    blank_rows: int = 0
    warnings: tuple[ReadWarning, ...] = ()
    sha256: str = ""  # of the bytes read (a table built in memory: of its cells as CSV)


class HeaderNotFound(InputError):
    """No row among the first ones passed the header test; ``candidates`` holds those rows and
    ``where`` says which sheets were searched (None for a text table)."""

    def __init__(self, problem: str, *, path: str, candidates: list[list[str]],
                 expected: str, hint: str | None = None, where: str | None = None) -> None:
        super().__init__(problem, path=path, expected=expected, hint=hint)
        self.candidates = candidates
        self.where = where

    @property
    def best_guess(self) -> list[str]:
        """The leading row with the most filled cells: what the header row most likely is."""
        best: list[str] = []
        for row in self.candidates:
            if sum(bool(c) for c in row) > sum(bool(c) for c in best):
                best = row
        return [c for c in best]


def refuse(path: str, what: str, found: int, limit: int, name: str, *, row: int | None = None,
            column: str | None = None) -> InputError:
    """The one-line refusal of an input beyond a limit of ``bomcheck.read.limits``."""
    return InputError(f"refused: {what} {found:,} is over the limit of {limit:,}", path=path,
                      row=row, column=column, hint=limits_mod.hint(name))


def find_header(rows: list[list[str]], predicate: Callable[[list[str]], bool]) -> int | None:
    seen = 0
    for i, cells in enumerate(rows):
        cells = [c.strip() for c in cells]
        if not any(cells):
            continue
        if predicate(cells):
            return i
        seen += 1
        if seen >= HEADER_SEARCH_ROWS:
            break
    return None


def unique_headers(headers: list[str]) -> list[str]:
    """Headers made unique: an empty one becomes ``column N``, a repeat gets `` (2)``, ``(3)``."""
    out: list[str] = []
    seen: set[str] = set()
    for i, h in enumerate(headers):
        base = h.strip() or f"column {i + 1}"
        name, k = base, 1
        while name in seen:
            k += 1
            name = f"{base} ({k})"
        seen.add(name)
        out.append(name)
    return out


def finish(path: str, fmt: str, encoding: str | None, sheet: str | None, header_row: int,
            headers: list[str], frame: pd.DataFrame, rows: np.ndarray) -> RawTable:
    """Name the columns, drop blank rows (counted) and trailing empty unnamed columns."""
    import pandas as pd

    names = unique_headers(headers)
    arrays = [_cells(frame[c]) for c in frame.columns]
    # Blank rows (cells empty or only spaces): one comparison per row on the second column,
    # then the few rows still in question cell by cell; the first column last, since a line of
    # only spaces puts them there.
    order = arrays[1:] + arrays[:1]
    if not order:
        blank = np.zeros(0, dtype=np.int64)
    else:
        blank = np.flatnonzero(_blank(order[0]) if len(order) == 1 else _empty(order[0]))
    for arr in order[1:]:
        if not len(blank):
            break
        blank = blank[_blank(arr[blank])]
    keep_cols = [i for i, (h, arr) in enumerate(zip(headers, arrays))
                 if h.strip() or (len(arr) and not _empty(arr).all())]
    if len(blank):
        keep = np.ones(len(rows), dtype=bool)
        keep[blank] = False
        arrays = [a[keep] for a in arrays]
        rows = rows[keep]
    data = {names[i]: pd.Series(arrays[i], dtype=arrays[i].dtype, copy=False) for i in keep_cols}
    out = pd.DataFrame(data, copy=False)
    return RawTable(path=path, format=fmt, encoding=encoding, sheet=sheet, header_row=header_row,
                    headers=[headers[i] for i in keep_cols], frame=out, rows=rows,
                    blank_rows=int(len(blank)))


def _cells(column: pd.Series) -> np.ndarray:
    """A column's cells: text as an object array, a column read as numbers as floats."""
    return column.to_numpy() if column.dtype.kind == "f" else column.to_numpy(dtype=object)


def _empty(cells: np.ndarray) -> np.ndarray:
    """Which cells are empty: "" as text, NaN as a number."""
    return np.isnan(cells) if cells.dtype.kind == "f" else cells == ""


def _blank(cells: np.ndarray) -> np.ndarray:
    """Which cells are empty or only spaces."""
    if cells.dtype.kind == "f":
        return np.isnan(cells)
    return np.array([not c.strip() for c in cells], dtype=bool)

"""Normalise stage: the value-bearing cells of every line read as columns, each distinct cell
parsed once and each distinct reading of a line merged once.

A line's spec, evidence and conflicts depend only on what its cells read (``CellParser.cell_key``:
the spec, the not-fitted mark, capacitor and other-part words), not on the words the parser left
unread (a lot number, a note). So lines are grouped by that reading (``code``, one ``Core`` each,
merged once), and what is each line's own (its text, its cells' warnings and unread tokens, the
findings those warnings give) is put together as columns from the distinct cells.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from bomcheck.frozen import frozen
from bomcheck.parse.linespec import SPEC_SOURCES, CellParser, Core
from bomcheck.rowcodes import combine


def _objects(items: list) -> np.ndarray:
    """An object array of ``items`` (a tuple stays one element)."""
    return np.fromiter(items, dtype=object, count=len(items))


def _filled(n: int, value: object) -> np.ndarray:
    out = np.empty(n, dtype=object)
    out.fill(value)
    return out


@frozen
class SourceCells:
    """One value-bearing source (``value``, ``description``...): the distinct cell of each
    line and, per distinct cell, what the line takes of it."""

    source: str
    code: np.ndarray  # distinct cell per line
    collapsed: np.ndarray  # the cell, spaces collapsed (what the line's text shows)
    read: np.ndarray  # bool: the cell has text to read (a reading)
    warnings: np.ndarray  # its own warnings (tuple)
    unread: np.ndarray  # its own unread tokens (tuple)
    conflicts: np.ndarray  # the findings its own warnings give: ((code, message), ...)


@frozen
class LineCells:
    """What the value-bearing cells of every line say: ``cores`` by ``code`` (merged once per
    distinct reading) and each line's own columns."""

    cores: list[Core]
    code: np.ndarray  # core per line
    cells: np.ndarray  # distinct combination of cells per line (the same text reads the same)
    n_cells: int
    # Per combination of cells (by ``cells``): what each line has of its own.
    own: dict[str, np.ndarray]  # OWN_COLUMNS -> values
    sources: list[SourceCells]  # per source, in SPEC_SOURCES order

    def core_of(self, name: str, dtype: type) -> np.ndarray:
        """One attribute of the cores, per line."""
        return np.array([getattr(c, name) for c in self.cores], dtype=dtype)[self.code]

    def text(self, li: int) -> str:
        """The cells of line ``li`` joined " | " (spaces collapsed)."""
        return str(self.own["text"][self.cells[li]])


# What each line has of its own: its text (the filled cells joined " | "), its value and
# description cells (spaces collapsed), its cells' warnings and unread tokens (tuples).
OWN_COLUMNS = ("text", "value_text", "description", "warnings", "unread")


def parse_line_cells(parser: CellParser, line: dict[str, np.ndarray], present: list[str],
                     n: int) -> LineCells:
    """The cells of ``present`` sources of ``n`` lines parsed and merged (see the module)."""
    sources: list[SourceCells] = []
    infos: list[list] = []
    key_codes, key_sizes, cell_codes, cell_sizes = [], [], [], []
    for s in (s for s in SPEC_SOURCES if s in present):
        codes, uniq = pd.factorize(line[s])
        info = parser.cells(s, map(str, uniq))
        keys: dict[tuple, int] = {}
        kc = np.array([keys.setdefault(parser.cell_key(s, i), len(keys)) for i in info],
                      dtype=np.int64)
        key_codes.append(kc[codes] if len(codes) else np.zeros(0, dtype=np.int64))
        key_sizes.append(len(keys))
        cell_codes.append(codes)
        cell_sizes.append(len(uniq))
        infos.append(info)
        sources.append(_source_cells(parser, s, codes, info))
    if not sources:  # no value-bearing column: every line reads alike (nothing)
        key_codes, key_sizes = [np.zeros(n, dtype=np.int64)], [1]
    code, _ = combine(key_codes, key_sizes)
    cells, n_cells = combine(cell_codes or key_codes, cell_sizes or key_sizes)
    first = np.flatnonzero(~pd.Series(code).duplicated().to_numpy())
    names = [sc.source for sc in sources]
    cores = [parser.core({s: infos[k][cell_codes[k][li]] for k, s in enumerate(names)})
             for li in first]
    # What is each line's own depends only on its cells: made once per combination of cells
    # (at its first line), then taken by line.
    rep = np.flatnonzero(~pd.Series(cells).duplicated().to_numpy())
    at = [sc.code[rep] for sc in sources]
    one = np.array([c.one_source for c in cores], dtype=bool)[code[rep]] if n \
        else np.zeros(0, dtype=bool)
    own = dict(zip(OWN_COLUMNS, (*_texts(sources, at, len(rep)),
                                 *(_own_column(sources, at, name, one)
                                   for name in ("warnings", "unread")))))
    return LineCells(cores, code, cells, n_cells, own, sources)


def _source_cells(parser: CellParser, source: str, codes: np.ndarray, info: list
                  ) -> SourceCells:
    """The per-cell columns of one source (``CellParser.cell`` of each distinct cell)."""
    own_w = [i[2][1] if i[2] is not None else () for i in info]
    return SourceCells(
        source, codes, _objects([i[3] for i in info]),
        np.array([i[2] is not None for i in info], dtype=bool),
        _objects(own_w), _objects([i[2][2] if i[2] is not None else () for i in info]),
        _objects([tuple(parser.merger.text_conflicts(source, w)) if w else () for w in own_w]))


def _own_column(sources: list[SourceCells], at: list[np.ndarray], name: str, one: np.ndarray
                ) -> np.ndarray:
    """The own warnings (or unread tokens) of lines whose cells of each source are ``at``: a
    line with one cell of text (``one``) takes that cell's as they are; the others take every
    read cell's, in source order, each once."""
    m = len(one)
    out = _filled(m, ())
    per_line = []
    for sc, code in zip(sources, at):
        vals = getattr(sc, name)
        has = np.array([bool(v) for v in vals], dtype=bool)[code] & sc.read[code] \
            if m else np.zeros(0, dtype=bool)
        per_line.append((vals, has, code))
    count = sum((h.astype(np.int64) for _, h, _ in per_line), np.zeros(m, dtype=np.int64))
    for vals, has, code in per_line:
        take = has & (count == 1)
        if not take.any():
            continue
        mine = vals[code[take]]
        if not one[take].all():  # merged lines keep each warning once
            dedup = _objects([v if len(v) < 2 else tuple(dict.fromkeys(v))
                              for v in vals])[code[take]]
            mine = np.where(one[take], mine, dedup)
        out[take] = mine
    for li in np.flatnonzero(count > 1):
        out[li] = tuple(dict.fromkeys(x for vals, has, code in per_line
                                      if has[li] for x in vals[code[li]]))
    return out


def _texts(sources: list[SourceCells], at: list[np.ndarray], m: int
           ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(the text: filled cells joined " | ", the value cell, the description cell), spaces
    collapsed, of lines whose cells of each source are ``at``."""
    text = _filled(m, "")
    named = {"value": _filled(m, ""), "description": _filled(m, "")}
    for sc, code in zip(sources, at):
        cell = sc.collapsed[code] if m else _filled(0, "")
        if sc.source in named:
            named[sc.source] = cell
        filled = cell != ""
        both = filled & (text != "")
        text[both] = text[both] + " | " + cell[both]
        only = filled & ~both
        text[only] = cell[only]
    return text, named["value"], named["description"]

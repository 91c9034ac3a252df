"""Normalise stage: a BOM file to one row per capacitor placement, every source row accounted for.

``read_bom`` reads the table (``bomcheck.read.reader``), maps the columns (``bomcheck.parse.columns``),
takes out approved-source rows and multi-level structure rows (``bomcheck.parse.layout``), joins
continuation rows to the line above, expands designator lists (``bomcheck.parse.refdes``), parses
each distinct combination of value-bearing cells once and merges it (``bomcheck.parse.linespec``)
and maps the results back to the lines by code, then decides for every line: capacitor
placements (fitted or not), a non-capacitor row, or an unreadable row with its reason.

Capacitor or not, per line (prefix from the designators, evidence from the parsed text):

- capacitor prefix (C, CP, CE, CT, CX, CY, CB...): a capacitor when the text reads as one, unless
  it rests only on a bare code (``104``, ``2R2``) and the text also names another part
  (``2R2 RES``); a not-fitted line with no readable value is still a (not fitted) placement;
  otherwise unreadable;
- prefix of another part (R, L, D, CR, CN, CON, CRY, Y, U...): not a capacitor;
- any other prefix: a capacitor only when the text says so on its own (a farad unit, capacitor
  words or a dielectric code) and names no other part.

Reasons given for rows not taken (``skipped.reason``), kind ``unreadable``:

- ``no designator`` - the designator cell is empty (and the row does not only continue the
  description or notes of the line above);
- ``repeated header row`` - the header row again (page breaks in some exports);
- ``designator not readable: 'X'`` / ``designator list not readable: <problem> ('X')`` - the
  cell does not expand to designators such as ``C12``;
- ``designators mix capacitor and other prefixes (C, R)``;
- ``capacitor designator, but the text reads as a <family> ('token')`` - e.g. ``4u7H`` on C5;
- ``capacitor designator, but no capacitor value could be read ('text')`` and
  ``capacitor designator with no value or description``;
- ``designator prefix 'U' (integrated circuit), but the text reads as a capacitor ('text'): the
  designator and the text disagree, check the line`` - text that says capacitor on its own
  under the designator of another part.

Kind ``not_capacitor``:

- ``designator prefix 'R' (resistor) is not a capacitor``;
- ``the text reads as a <family> ('token')``, ``designator prefix 'E' is not a capacitor
  prefix and only a bare code reads as a capacitor ('104')``, ``no capacitor evidence in the
  text ('text')`` and ``no value or description`` - for prefixes that are neither.

- ``designator prefix 'C', but the text describes a cable ('CABLE'): not a capacitor``.

Kinds ``approved_source`` (``approved source N of the line on row M``) and ``not_placement``
(rows of a multi-level BOM without designators; see ``bomcheck.parse.layout``).

A continuation row not taken carries its line's reason with ``(continuation of row N)``.
Placements of a line all carry the line's first source row, also for designators written on
its continuation rows.
"""

from __future__ import annotations

import functools
import math
import operator
import re
from collections.abc import Callable, Mapping
from dataclasses import asdict, dataclass, field, replace
from typing import Any

import numpy as np
import pandas as pd

from bomcheck.parse import columns as colmod
from bomcheck.read import reader
from bomcheck.parse.accounting import ROW_CATEGORIES, accounting_identity
from bomcheck.errors import InputError
from bomcheck.parse.layout import APPROVED_SOURCE, NOT_PLACEMENT, find_layout
from bomcheck.parse.refdes import MAX_RANGE, check_total, expand
from bomcheck.parse.linespec import (
    _STRONG_CAP,
    DECISIVE_FAMILIES,
    FLOAT_SPEC,
    SPEC_COLUMNS,
    SPEC_SOURCES,
    Combo,
    CellParser,
    decimal_commas,
    not_fitted_mark,
    other_part_evidence,
    spec_from_cells,
    strip_not_fitted,
)

__all__ = [
    "CAPACITOR_PREFIXES", "OTHER_PREFIXES", "PLACEMENT_COLUMNS", "ROW_CATEGORIES",
    "SKIPPED_COLUMNS", "SOURCE_COLUMNS", "SPEC_COLUMNS", "SPEC_SOURCES", "BomSource",
    "NODATA_CODES", "ImportFinding", "ImportOptions", "ImportResult", "accounting_identity", "decimal_commas",
    "expand_lines", "not_fitted_mark", "other_part_evidence", "parse_qty", "prefix_kind",
    "read_bom", "spec_from_cells", "strip_not_fitted",
]

PLACEMENT_COLUMNS: tuple[str, ...] = (
    "refdes", "row", "line", "fitted", "not_fitted_reason", "text", "value_text",
    "description", "mpn", "manufacturer", "qty", *SPEC_COLUMNS,
)
SKIPPED_COLUMNS: tuple[str, ...] = ("row", "kind", "reason", "text")

# Designator prefixes of capacitors, and of parts that are not capacitors although some start
# with C (common practice of EDA exports; the one-letter classes as in ASME Y14.44, value from
# memory).
CAPACITOR_PREFIXES: frozenset[str] = frozenset(
    {"C", "CA", "CB", "CC", "CE", "CF", "CP", "CT", "CV", "CX", "CY", "VC"}
)
OTHER_PREFIXES: dict[str, str] = {
    "CR": "diode", "D": "diode", "ZD": "diode", "LED": "LED",
    "CN": "connector", "CON": "connector", "CONN": "connector", "J": "connector",
    "P": "connector", "X": "crystal", "Y": "crystal", "XT": "crystal", "XTAL": "crystal",
    "CRY": "crystal", "CRYS": "crystal", "R": "resistor", "RN": "resistor network",
    "RP": "resistor network", "RA": "resistor network", "RT": "thermistor",
    "RV": "varistor", "VR": "variable resistor", "L": "inductor", "FB": "ferrite bead",
    "FL": "filter", "Q": "transistor", "U": "integrated circuit", "IC": "integrated circuit",
    "T": "transformer", "TR": "transformer", "K": "relay", "F": "fuse", "S": "switch",
    "SW": "switch", "TP": "test point", "JP": "jumper", "BT": "battery", "H": "hardware",
    "MH": "mounting hole", "FID": "fiducial", "LS": "loudspeaker", "W": "wire",
}

_CAP_KIND, _OTHER_KIND, _UNKNOWN_KIND = 1, -1, 0
_CAP, _NONCAP, _UNREAD = 0, 1, 2
_KIND_ARRAY = np.array(["capacitor", "not_capacitor", "unreadable"], dtype=object)

# Fitted-column cells, folded (casefold, stripped).
_FITTED_NO = frozenset({
    "no", "n", "0", "false", "f", "nein", "non", "dnp", "dni", "dnf", "nf", "nc",
    "not fitted", "not populated", "do not populate", "do not fit", "do not place", "no pop",
    "nopop", "nicht bestückt", "nicht bestueckt", "non monté", "non monte", "unbestückt",
})
_FITTED_YES = frozenset({
    "yes", "y", "1", "true", "t", "x", "ja", "j", "oui", "o", "fitted", "fit", "populate",
    "populated", "place", "placed", "mount", "mounted", "bestückt", "bestueckt", "monté", "monte",
    "\u2713", "\u2714",
})

@dataclass(frozen=True)
class ImportOptions:
    """How to read a BOM: sheet, forced encoding, columns named by hand, a TOML column map."""

    sheet: str | int | None = None
    encoding: str | None = None
    columns: Mapping[str, str] = field(default_factory=dict)
    column_map: str | None = None


@dataclass(frozen=True)
class BomSource:
    """Where the placements came from: file, hash, format and the columns used."""

    path: str
    sha256: str
    format: str
    encoding: str | None
    sheet: str | None
    header_row: int
    columns: dict[str, str]

    def to_dict(self) -> dict:
        """Plain dict for JSON."""
        return asdict(self)


@functools.total_ordering
@dataclass(frozen=True)
class ImportFinding:
    """Something about a BOM line a reviewer must look at (quantity mismatch, column conflict).

    ``refdes`` is None for a finding on a whole line. ``severity`` is the verdict status the
    audit gives the placements it names: ``"warn"`` when the data read is usable but a reviewer
    should look (quantity against designators, a column conflict resolved conservatively), and
    ``"nodata"`` when the placement's data cannot be trusted as read, so no verdict on it may
    pass (``fitted_conflict``: the fitted column says yes while a cell says not fitted;
    ``value_unread``: a number in the value text was not read, or read only by guessing, such as
    ``1,500uF``, ``-10uF`` or a bare ``85``; ``capacitance_unread``: a fitted capacitor's value
    cell has text but no capacitance was read from the line). ``NODATA_CODES`` lists the codes
    of the second kind; ``capacitance_missing`` (a fitted capacitor with an empty value cell and
    no capacitance in its other text) is a warning, since the checks that need the capacitance
    give nodata themselves.
    """

    row: int
    refdes: str | None
    code: str
    message: str
    severity: str = "warn"

    def _key(self) -> tuple[int, str, str, str]:
        return (self.row, self.refdes or "", self.code, self.message)

    def __lt__(self, other: object) -> bool:
        if not isinstance(other, ImportFinding):
            return NotImplemented
        return self._key() < other._key()

    def to_dict(self) -> dict:
        """Plain dict for JSON."""
        return asdict(self)


# Finding codes whose placements have no trustworthy data (severity "nodata", see ImportFinding).
NODATA_CODES: frozenset[str] = frozenset({"fitted_conflict", "value_unread",
                                          "capacitance_unread"})


def _finding(row: int, refdes: str | None, code: str, message: str) -> ImportFinding:
    """An ImportFinding with the severity its code carries."""
    return ImportFinding(row, refdes, code, message,
                         "nodata" if code in NODATA_CODES else "warn")


SOURCE_COLUMNS: tuple[str, ...] = ("line", "source", "row", "manufacturer", "mpn", "text")

def _empty_sources() -> pd.DataFrame:
    return pd.DataFrame({c: pd.Series(dtype=np.int64 if c in ("line", "source", "row")
                                      else object) for c in SOURCE_COLUMNS})


@dataclass(frozen=True)
class ImportResult:
    """Placements (one row per designator), rows not taken, findings and the totals line.

    ``sources`` lists the approved sources of each BOM line, to join with ``placements`` on
    ``line``: source 0 is the line's own manufacturer and MPN (for every capacitor line and
    every line with approved sources), sources 1, 2... the approved-source rows under it, each
    with its source ``row`` and its own ``text`` (description and notes; "" when it has none, and
    always "" for source 0, whose text is the line's).
    """

    source: BomSource
    placements: pd.DataFrame
    skipped: pd.DataFrame
    findings: tuple[ImportFinding, ...]
    totals: dict[str, int]
    # What the reader skipped or doubted (hidden rows, columns and sheets; mixed encodings).
    read_warnings: tuple = ()
    # Builds ``sources`` on first use (most callers never ask for it).
    source_table: Callable[[], pd.DataFrame] | None = field(default=None, repr=False,
                                                            compare=False)

    @functools.cached_property
    def sources(self) -> pd.DataFrame:
        """The approved-source table (``SOURCE_COLUMNS``), see the class docstring."""
        return self.source_table() if self.source_table is not None else _empty_sources()


# ---------------------------------------------------------------------------------------------
# Small pure helpers (each called once per distinct string)


def prefix_kind(pfx: str) -> int:
    """+1 capacitor prefix, -1 known prefix of another part, 0 unknown."""
    if pfx in CAPACITOR_PREFIXES:
        return _CAP_KIND
    if pfx in OTHER_PREFIXES:
        return _OTHER_KIND
    return _UNKNOWN_KIND


def parse_qty(text: str) -> tuple[float, bool]:
    """(quantity, readable): ``"4"`` -> 4.0; ``"2 pcs"`` -> 2.0; ``""`` -> NaN (readable)."""
    t = text.strip()
    if not t:
        return math.nan, True
    m = re.fullmatch(r"(\d+(?:[.,]\d+)?)\s*(?:pcs?|pc\.|x|stk\.?|st\.?|pce?s?)?", t, re.I)
    if not m:
        return math.nan, False
    return float(m.group(1).replace(",", ".")), True


def _fold(text: str) -> str:
    return " ".join(text.casefold().split())


# ---------------------------------------------------------------------------------------------
# Designator lists


# The language of bomcheck.parse.refdes.is_designator, compiled once (prefix in group 1).
_DESIGNATOR = re.compile(r"([A-Za-z_]+)\d+[A-Za-z]?\Z")
# The shape of a cell: ASCII digits to "9", ASCII letters to upper case. Cells share few shapes
# (C9, C99, R999...), so the single-designator test runs once per distinct shape.
_SHAPE_TABLE = str.maketrans({**dict.fromkeys("0123456789", "9"),
                              **{c: c.upper() for c in "abcdefghijklmnopqrstuvwxyz"}})
_SINGLE_SHAPE = re.compile(r"[ \t]*([A-Z_]+)9+[A-Z]?[ \t]*")


# A plain forward range without leading zeros (C12-C15, C12-15): the common case, expanded here
# exactly as bomcheck.parse.refdes.expand does; anything else goes to expand itself.
_SIMPLE_RANGE = re.compile(r"([A-Za-z_]+)([1-9]\d{0,5})\s*-\s*(?:\1)?([1-9]\d{0,5})")
# What makes bomcheck.parse.refdes.expand do more than split: range marks (and "to", and marks it
# would strip such as "(DNP)" are not designators, so they fail the item test anyway).
_RANGE_MARK = re.compile(r"-|\.\.|\u2013|:|\bto\b")
_LIST_SPLIT = re.compile(r"[,;/\s]+")  # bomcheck.parse.refdes splits lists on these


@dataclass
class _Designators:
    """Per line: single designator (or None), count and first prefix; lists, errors and
    not-fitted marks only for the lines that have them."""

    single: np.ndarray
    count: np.ndarray
    prefix: np.ndarray
    kind: np.ndarray  # prefix_kind of the prefix
    has_error: np.ndarray
    error: dict[int, str]
    mark: dict[int, str]
    lists: dict[int, list[str]]


def _expand_one(text: str) -> tuple[list[str], str | None, str | None, str]:
    """(designators, error reason, not-fitted mark, first prefix) for one designator cell."""
    t = text.strip()
    m = _SIMPLE_RANGE.fullmatch(t)
    if m:
        lo, hi = int(m.group(2)), int(m.group(3))
        if lo <= hi and hi - lo < MAX_RANGE:
            p = m.group(1).upper()
            return [f"{p}{k}" for k in range(lo, hi + 1)], None, None, p
    elif not _RANGE_MARK.search(t):
        # A list of single designators: expand would only split it and upper-case the items.
        items = [i for i in _LIST_SPLIT.split(t.strip(",;")) if i]
        matches = [_DESIGNATOR.match(i) for i in items]
        if items and all(matches):
            prefixes = {mt.group(1).upper() for mt in matches}  # type: ignore[union-attr]
            if len(prefixes) == 1 or len({prefix_kind(p) for p in prefixes}) == 1:
                first = matches[0].group(1).upper()  # type: ignore[union-attr]
                return [i.upper() for i in items], None, None, first
    mark = not_fitted_mark(t)
    if mark:
        t = strip_not_fitted(t)
    if not t.strip():
        return [], "no designator", mark, ""
    try:
        items = expand(t)
    except InputError as exc:
        return [], f"designator list not readable: {exc.problem} ({exc.text!r})", mark, ""
    matches = [_DESIGNATOR.match(i) for i in items]
    if not all(matches):
        bad = next(i for i, mt in zip(items, matches) if not mt)
        what = "designator" if len(items) == 1 else "designator list"
        return [], f"{what} not readable: {bad!r}", mark, ""
    prefixes = [mt.group(1).upper() for mt in matches]  # type: ignore[union-attr]
    if len({prefix_kind(p) for p in set(prefixes)}) > 1:
        pfx = ", ".join(sorted(set(prefixes)))
        return [], f"designators mix capacitor and other prefixes ({pfx})", mark, ""
    return items, None, mark, prefixes[0]


def expand_lines(texts: np.ndarray, path: str | None = None) -> _Designators:
    """Expand every line's designator cell.

    A single designator (most lines of a flat export) takes a vectorised path: the cells'
    shapes (``C12`` -> ``C99``) come from one string translation, and each distinct shape is
    tested once. Lists, ranges and odd cells go through ``bomcheck.parse.refdes.expand`` once per
    distinct text.
    """
    n = len(texts)
    count = np.zeros(n, dtype=np.int64)
    out = _Designators(np.full(n, None, dtype=object), count, np.full(n, "", dtype=object),
                       np.zeros(n, dtype=np.int64), np.zeros(n, dtype=bool), {}, {}, {})
    if n == 0:
        return out
    big = "\n".join(texts)
    if big.count("\n") != n - 1:
        # A cell with a line break (Alt+Enter in a spreadsheet) goes the slow way: "," is a
        # shape the single-designator pattern does not match.
        big = "\n".join(t if "\n" not in t else "," for t in texts)
    codes, shapes = pd.factorize(np.array(big.translate(_SHAPE_TABLE).split("\n"), dtype=object))
    matches = [_SINGLE_SHAPE.fullmatch(str(u)) for u in shapes]
    fast = np.array([m is not None for m in matches], dtype=bool)[codes]
    found = np.array([m.group(1) if m else "" for m in matches], dtype=object)[codes]
    kinds = np.array([prefix_kind(m.group(1)) if m else _UNKNOWN_KIND for m in matches],
                     dtype=np.int64)[codes]
    padded = np.array([bool(m) and m.group(0) != m.group(0).strip() for m in matches],
                      dtype=bool)[codes]
    up = big.upper()
    if fast.all() and up == big and not padded.any():
        return _Designators(texts, np.ones(n, dtype=np.int64), found, kinds, out.has_error,
                            {}, {}, {})
    if fast.any():
        names = texts[fast] if up == big else np.array(up.split("\n"), dtype=object)[fast]
        for j in np.flatnonzero(padded[fast]):
            names[j] = names[j].strip()
        out.single[fast] = names
        count[fast] = 1
        out.prefix[fast] = found[fast]
        out.kind[fast] = kinds[fast]
    slow = np.flatnonzero(~fast)
    if len(slow):
        codes, uniques = pd.factorize(texts[slow])
        results, total = [], 0
        for u in uniques:  # each distinct cell once, held to the placement limit as it goes
            results.append(_expand_one(str(u)))
            total += len(results[-1][0])
            check_total(total, path=path)
        counts_u = np.array([len(r[0]) for r in results], dtype=np.int64)
        count[slow] = counts_u[codes]
        out.prefix[slow] = np.array([r[3] for r in results], dtype=object)[codes]
        out.kind[slow] = np.array([prefix_kind(r[3]) for r in results], dtype=np.int64)[codes]
        for i, code in zip(slow.tolist(), codes.tolist()):
            items, err, mk, _ = results[code]
            if mk:
                out.mark[i] = mk
            if err is not None:
                out.has_error[i] = True
                out.error[i] = err
            elif len(items) == 1:
                out.single[i] = items[0]
            else:
                out.lists[i] = items
    return out


# ---------------------------------------------------------------------------------------------
# Parsing each distinct combination of value-bearing cells once


def _combine_codes(code_arrays: list[np.ndarray], sizes: list[int]) -> tuple[np.ndarray, int]:
    """One code per distinct tuple of per-column codes (first-seen order)."""
    n = len(code_arrays[0]) if code_arrays else 0
    if not code_arrays:
        return np.zeros(n, dtype=np.int64), 1 if n else 0
    key = code_arrays[0].astype(np.int64)
    card = max(sizes[0], 1)
    for codes, size in zip(code_arrays[1:], sizes[1:]):
        size = max(size, 1)
        if card * size >= 2**62:
            key, uniq = pd.factorize(key)
            card = len(uniq)
        key = key * size + codes
        card *= size
    combo, uniq = pd.factorize(key)
    return combo.astype(np.int64), len(uniq)


# ---------------------------------------------------------------------------------------------
# The import


def _overrides(options: ImportOptions) -> colmod.ColumnOverrides:
    parts = []
    if options.column_map:
        parts.append(colmod.load_column_map(options.column_map))
    if options.columns:
        parts.append(colmod.ColumnOverrides(columns=dict(options.columns)))
    return colmod.merge_overrides(*parts) if parts else colmod.ColumnOverrides()


def read_bom(path: str, options: ImportOptions = ImportOptions()) -> ImportResult:
    """Read a BOM and return its capacitor placements, the rows not taken and the findings.

    Every data row ends up as capacitor placements (fitted or not), a non-capacitor row or an
    unreadable row with its reason: ``totals["rows_read"] == capacitor_rows +
    non_capacitor_rows + unreadable_rows``. Raises ``InputError`` for a file that cannot be read
    as a BOM (empty, binary, not a workbook, no designator column).
    """
    path = str(path)
    overrides = _overrides(options)
    try:
        table = reader.read_table(path, sheet=options.sheet, encoding=options.encoding,
                                  header_predicate=colmod.header_predicate(overrides))
    except reader.HeaderNotFound as exc:
        missing: reader.HeaderNotFound | None = exc
    else:
        missing = None
    if missing is not None:
        # Say what the likeliest header row lacks (designator, or value and description).
        try:
            if missing.best_guess:
                colmod.map_columns(missing.best_guess, overrides, path=path)
        except InputError as err:
            if missing.where:
                err.problem += f" (searched {missing.where})"
            raise err from None
        raise missing
    return import_table(table, options)


def import_frame(frame: pd.DataFrame, options: ImportOptions = ImportOptions(), *,
                 path: str = "<table>") -> ImportResult:
    """Import a BOM already in memory: ``frame`` columns are the headers, cells text ("" or NaN
    for empty); rows are numbered as a file's would be (header in row 1, data from row 2). The
    spec hash is that of the table written as CSV, so the same table gives the same report."""
    cells = frame.astype(object).where(frame.notna(), "")
    cells = cells.map(lambda v: v if isinstance(v, str) else str(v))
    headers = [str(h) for h in cells.columns]
    cells.columns = headers
    digest = reader.sha256_hex(cells.to_csv(index=False).encode("utf-8"))
    table = reader.RawTable(path=path, format="table", encoding=None, sheet=None, header_row=1,
                            headers=headers, frame=cells.reset_index(drop=True),
                            rows=np.arange(2, len(cells) + 2), sha256=digest)
    return import_table(table, options)


def import_table(table: reader.RawTable, options: ImportOptions = ImportOptions()) -> ImportResult:
    """The importer on a table of text cells (``reader.RawTable``): column mapping, the
    placements, the rows not taken, the findings and the totals (see ``read_bom``)."""
    path = table.path
    overrides = _overrides(options)
    mapping = colmod.map_columns(list(table.frame.columns), overrides, path=path)
    source = BomSource(
        path=path, sha256="", format=table.format, encoding=table.encoding,
        sheet=table.sheet, header_row=table.header_row,
        columns={f: _original_header(table, h) for f, h in mapping.items()},
    )
    header_findings = tuple(
        _finding(int(table.header_row), None, "column_ambiguous",
                      f"two columns for the {colmod.FIELD_LABELS[fld]}: "
                      f"{_original_header(table, used)!r} is used, "
                      + ", ".join(repr(_original_header(table, o)) for o in others)
                      + " not; check which one is current")
        for fld, used, others in colmod.competing_columns(list(table.frame.columns),
                                                           mapping, overrides))
    result = _build(table, mapping, source)
    if header_findings:
        result = replace(result, findings=tuple(sorted((*result.findings,
                                                        *header_findings))))
    hidden = sum(len(w.rows) for w in table.warnings if w.code == "hidden-rows")
    totals = {**result.totals, "hidden_rows": hidden} if hidden else result.totals
    return replace(result, source=replace(source, sha256=table.sha256),
                   read_warnings=tuple(table.warnings), totals=totals)


def _original_header(table: reader.RawTable, name: str) -> str:
    names = list(table.frame.columns)
    i = names.index(name)
    return table.headers[i] if table.headers[i].strip() else name


def _row_texts(arrays: list[np.ndarray], idx: np.ndarray) -> list[str]:
    """All filled cells of some source rows, joined " | " (what the user sees of the row)."""
    if not len(idx):
        return []
    cols = [a[idx] for a in arrays]
    return [" | ".join(filter(None, cells)) for cells in zip(*cols)]


def _build(table: reader.RawTable, mapping: dict[str, str], source: BomSource) -> ImportResult:
    """Take out the approved-source and multi-level structure rows (``bomcheck.parse.layout``), build
    the lines of the rest, and account for every row."""
    frame = table.frame
    n = len(frame)
    cells = {f: frame[h].to_numpy(dtype=object) for f, h in mapping.items()}
    repeated = cells["refdes"] == _original_header(table, mapping["refdes"]).strip() if n \
        else np.zeros(0, dtype=bool)
    lay = find_layout(cells, n, repeated, _reads_as_capacitor)
    if lay is None:
        result, lines = _build_lines(table, mapping, source, repeated)
        return replace(result, source_table=functools.partial(_sources, lines, None, None,
                                                              None, None))
    out = lay.taken_out
    keep = ~out
    rows = np.asarray(table.rows, dtype=np.int64)
    sub = replace(table, frame=frame[keep].reset_index(drop=True), rows=rows[keep])
    result, lines = _build_lines(sub, mapping, source, repeated[keep])
    pos = np.cumsum(keep) - 1  # each row's position among the rows kept
    approved = np.flatnonzero(lay.approved)
    parent_line = lines.line_of_row[pos[lay.parent[approved]]] if len(approved) else \
        np.zeros(0, dtype=np.int64)
    # Approved sources of rows that are themselves taken out (an assembly row) have no line.
    parent_out = out[lay.parent[approved]] if len(approved) else np.zeros(0, dtype=bool)
    reason = lay.reason.copy()
    for k, i in enumerate(approved):
        p_row = int(rows[lay.parent[i]])
        if parent_out[k]:
            reason[i] = f"approved source of row {p_row}, which is not a placement line"
        else:
            what = "" if lines.kind[parent_line[k]] == _CAP else " (not a capacitor line)"
            reason[i] = f"approved source {int(lay.source_index[i])} of the line on row {p_row}{what}"
    taken = np.flatnonzero(out)
    all_arrays = [frame[c].to_numpy(dtype=object) for c in frame.columns]
    extra = pd.DataFrame({
        "row": pd.Series(rows[taken], dtype=np.int64),
        "kind": pd.Series(np.where(lay.approved[taken], APPROVED_SOURCE, NOT_PLACEMENT),
                          dtype=object),
        "reason": pd.Series(reason[taken], dtype=object),
        "text": pd.Series(_row_texts(all_arrays, taken), dtype=object),
    }, columns=list(SKIPPED_COLUMNS))
    skipped = pd.concat([result.skipped, extra], ignore_index=True).sort_values(
        "row", kind="stable").reset_index(drop=True)
    totals = dict(result.totals)
    totals["rows_read"] = int(n)
    totals["approved_source_rows"] = int(lay.approved.sum())
    totals["not_placement_rows"] = int(lay.structure.sum())
    ok = approved[~parent_out]
    sources = functools.partial(
        _sources, lines, parent_line[~parent_out], lay.source_index[ok], rows[ok],
        {f: cells[f][ok] for f in ("manufacturer", "mpn", "description", "notes") if f in cells})
    return replace(result, skipped=skipped, totals=totals, source_table=sources)


def _reads_as_capacitor(text: str) -> bool:
    """Whether a row's text reads as a capacitor (a farad unit, capacitor words, a dielectric
    code): the parser's verdict, or the capacitor-words test."""
    from bomcheck.parse.values import parse_value

    return bool(_STRONG_CAP.search(text)) or parse_value(text, context="description").is_capacitor


@dataclass(frozen=True)
class _Lines:
    """What the line stage tells the layout step: the line of each row and each line's kind,
    source row, manufacturer and MPN."""

    line_of_row: np.ndarray
    kind: np.ndarray
    head_rows: np.ndarray
    manufacturer: np.ndarray
    mpn: np.ndarray
    side_by_side: list[tuple[np.ndarray, np.ndarray]]  # per numbered column pair, per line


def _competing_cells(table: reader.RawTable, mapping: dict[str, str], heads: np.ndarray,
                     head_rows: np.ndarray, cap_line: np.ndarray) -> list[ImportFinding]:
    """Capacitor lines where two columns competing for one field (``Voltage (Rev A)`` and
    ``Voltage (V)``) hold different text: a finding on the line, so that its placements are
    never a silent pass on the column that was picked."""
    out: list[ImportFinding] = []
    frame = table.frame
    for fld, used, others in colmod.competing_columns(list(frame.columns), mapping):
        a = frame[used].to_numpy(dtype=object)[heads]
        for other in others:
            b = frame[other].to_numpy(dtype=object)[heads]
            differ = cap_line & (a != "") & (b != "") & (a != b)
            for li in np.flatnonzero(differ):
                if _fold(str(a[li])) == _fold(str(b[li])):
                    continue
                out.append(_finding(
                    int(head_rows[li]), None, "column_ambiguous",
                    f"{colmod.FIELD_LABELS[fld]}: column {_original_header(table, used)!r} says "
                    f"{a[li]!r} but column {_original_header(table, other)!r} says {b[li]!r}; "
                    f"using {_original_header(table, used)!r}, check which column is current"))
    return out


def _side_by_side(table: reader.RawTable, mapping: dict[str, str], heads: np.ndarray
                  ) -> list[tuple[np.ndarray, np.ndarray]]:
    """(manufacturer, MPN) cells per line of each numbered source-column pair
    (``Manufacturer 2``/``MPN 2``): further approved sources written beside the first."""
    out = []
    empty = np.full(len(heads), "", dtype=object)
    for mfr_h, mpn_h in colmod.numbered_sources(list(table.frame.columns), mapping):
        out.append(tuple(table.frame[h].to_numpy(dtype=object)[heads] if h else empty
                         for h in (mfr_h, mpn_h)))
    return out  # type: ignore[return-value]


def _sources(lines: _Lines, parent_line: np.ndarray | None, index: np.ndarray | None,
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
    own = lines.kind == _CAP
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


def _build_lines(table: reader.RawTable, mapping: dict[str, str], source: BomSource,
                 repeated: np.ndarray) -> tuple[ImportResult, _Lines]:
    """The lines of a table with no approved-source or structure rows: continuation rows
    joined, designators expanded, cells parsed, each line classified; ``repeated`` marks the
    repeated header rows."""
    frame = table.frame
    n = len(frame)
    all_arrays = [frame[c].to_numpy(dtype=object) for c in frame.columns]
    empty = np.full(n, "", dtype=object)
    col = {f: frame[h].to_numpy(dtype=object) for f, h in mapping.items()}

    def get(f: str) -> np.ndarray:
        return col.get(f, empty)

    refdes_raw = get("refdes")
    src_rows = np.asarray(table.rows, dtype=np.int64)

    # Continuation rows (joined to the line above).
    cont = _continuations(frame, mapping, all_arrays, refdes_raw, repeated)
    line_of_row = np.cumsum(~cont) - 1
    heads = np.flatnonzero(~cont)
    n_lines = len(heads)
    if cont.any():
        line = {f: get(f)[heads] for f in colmod.FIELDS}  # fancy indexing: fresh arrays
        ends = np.append(heads[1:], n)  # a line's rows are heads[li] .. ends[li] - 1
        for li in np.unique(line_of_row[cont]):
            for f, sep in (("refdes", ", "), ("description", " "), ("notes", " ")):
                cells = get(f)[heads[li]:ends[li]]
                line[f][li] = sep.join(c.strip() for c in cells if c.strip())
    else:
        line = {f: get(f) for f in colmod.FIELDS}
    head_rows = src_rows[heads]
    line_repeated = repeated[heads]

    # Designators.
    ref_text = line["refdes"]
    des = expand_lines(ref_text, source.path)
    check_total(int(des.count.sum()), path=source.path)

    # Distinct combinations of the value-bearing cells, parsed once each.
    units = {f: u for f in SPEC_SOURCES if f in mapping
             if (u := colmod.header_unit(_original_header(table, mapping[f]), f))}
    parser = CellParser(semicolon=table.format == "semicolon", units=units)
    present = [s for s in SPEC_SOURCES if s in mapping]
    code_arrays, sizes = [], []
    for s in present:
        codes, uniq = pd.factorize(line[s])
        code_arrays.append(codes)
        sizes.append(len(uniq))
    combo_code, n_combo = _combine_codes(code_arrays, sizes)
    first_line = np.flatnonzero(~pd.Series(combo_code).duplicated().to_numpy())
    combos = [parser.combo({s: str(line[s][li]) for s in present}) for li in first_line]

    # Fitted or not, per line: the fitted column first, then marks in the cells.
    fitted, nf_reason, unclear, contradict = _fitted(line, mapping, table, des, combos,
                                                     combo_code)

    # Classification per line.
    pk = des.kind
    evidence = np.array([c.evidence for c in combos], dtype=np.int64)[combo_code]
    strong = np.array([c.strong for c in combos], dtype=bool)[combo_code]
    has_other = np.array([c.other is not None for c in combos], dtype=bool)[combo_code]
    kind = np.full(n_lines, _UNREAD, dtype=np.int64)
    reason = np.full(n_lines, None, dtype=object)
    ok = ~line_repeated & ~des.has_error
    cap_line = ok & (
        ((pk == _CAP_KIND) & (evidence > 0) & (strong | ~has_other))
        | ((pk == _CAP_KIND) & (evidence == 0) & ~fitted)
        | ((pk == _UNKNOWN_KIND) & (evidence > 0) & strong & ~has_other)
    )
    decisive = np.array([c.other is not None and c.other[0] in DECISIVE_FAMILIES
                         for c in combos], dtype=bool)[combo_code]
    cap_line &= ~(decisive & ~strong)
    other_line = ok & ~cap_line & ((pk == _OTHER_KIND) | (pk == _UNKNOWN_KIND)
                                   | ((pk == _CAP_KIND) & decisive & ~strong))
    # A designator of another part on text that reads as a capacitor on its own (U5 "CAP CER
    # 10uF 6.3V X7R"): the two sources disagree, so the line is unreadable, not a silent
    # non-capacitor (common practice: either the designator or the text is a typo).
    disagree = other_line & (pk == _OTHER_KIND) & (evidence > 0) & strong & ~has_other
    kind[cap_line] = _CAP
    kind[other_line & ~disagree] = _NONCAP
    # One reason per distinct (prefix, combination) among the lines not taken; lines with their
    # own reason (designator errors, repeated headers) one by one.
    not_taken = np.flatnonzero(~cap_line)
    special = line_repeated[not_taken] | des.has_error[not_taken]
    for li in not_taken[special]:
        reason[li] = _reason(int(li), line_repeated, des, pk, combos[combo_code[li]])
    plain = not_taken[~special]
    if len(plain):
        pfx_codes, pfx_uniq = pd.factorize(des.prefix[plain])
        key, n_keys = _combine_codes([pfx_codes, combo_code[plain]], [len(pfx_uniq), n_combo])
        firsts = np.flatnonzero(~pd.Series(key).duplicated().to_numpy())
        texts = np.empty(n_keys, dtype=object)
        for k, j in enumerate(firsts):
            li = int(plain[j])
            texts[k] = _reason(li, line_repeated, des, pk, combos[combo_code[li]])
        reason[plain] = texts[key]

    # Quantities.
    qty_codes, qty_uniq = pd.factorize(line["qty"])
    qty_parsed = [parse_qty(str(q)) for q in qty_uniq]
    qty = np.array([q for q, _ in qty_parsed], dtype=float)[qty_codes] if n_lines else \
        np.zeros(0, dtype=float)
    qty_ok = np.array([r for _, r in qty_parsed], dtype=bool)[qty_codes] if n_lines else \
        np.zeros(0, dtype=bool)

    findings: list[ImportFinding] = []
    cap_idx = np.flatnonzero(cap_line)
    mismatch = cap_line & ~np.isnan(qty) & (qty != des.count) & ~(~fitted & (qty == 0))
    for li in np.flatnonzero(mismatch):
        findings.append(_finding(
            int(head_rows[li]), None, "qty_mismatch",
            f"Qty says {qty[li]:g} but the designators name {des.count[li]} "
            f"({ref_text[li].strip()!r}); the placements follow the designators, check the line",
        ))
    for li in np.flatnonzero(cap_line & ~qty_ok):
        findings.append(_finding(
            int(head_rows[li]), None, "qty_unreadable",
            f"Qty {line['qty'][li]!r} is not a number; not compared with the "
            f"{des.count[li]} designators",
        ))
    for li, msg in unclear:
        if cap_line[li]:
            findings.append(_finding(int(head_rows[li]), None, "fitted_unclear", msg))
    for li, msg in contradict:
        if cap_line[li]:
            findings.append(_finding(int(head_rows[li]), None, "fitted_conflict", msg))
    findings.extend(_competing_cells(table, mapping, heads, head_rows, cap_line))

    placements = _placements(cap_idx, des, line, head_rows, fitted, nf_reason, qty, combos,
                             combo_code)
    findings.extend(_placement_findings(placements, combos, combo_code))

    # Rows not taken: one entry per source row, continuation rows included.
    row_kind = kind[line_of_row] if n else np.zeros(0, dtype=np.int64)
    skipped_rows = np.flatnonzero(row_kind != _CAP)
    sk_lines = line_of_row[skipped_rows]
    sk_reason = reason[sk_lines]
    for j in np.flatnonzero(cont[skipped_rows]):
        sk_reason[j] = f"{sk_reason[j]} (continuation of row {head_rows[sk_lines[j]]})"
    skipped = pd.DataFrame({
        "row": pd.Series(src_rows[skipped_rows], dtype=np.int64),
        "kind": pd.Series(_KIND_ARRAY[row_kind[skipped_rows]], dtype=object),
        "reason": pd.Series(sk_reason, dtype=object, copy=False),
        "text": pd.Series(_row_texts(all_arrays, skipped_rows), dtype=object),
    }, columns=list(SKIPPED_COLUMNS))

    n_fitted = int(placements["fitted"].sum())
    totals = {
        "rows_read": int(n),
        "capacitor_rows": int((row_kind == _CAP).sum()),
        "non_capacitor_rows": int((row_kind == _NONCAP).sum()),
        "unreadable_rows": int((row_kind == _UNREAD).sum()),
        "placements": int(len(placements)),
        "fitted": n_fitted,
        "not_fitted": int(len(placements) - n_fitted),
        "blank_rows": int(table.blank_rows),
        "continuation_rows": int(cont.sum()),
    }
    totals["approved_source_rows"] = 0
    totals["not_placement_rows"] = 0
    lines = _Lines(line_of_row, kind, head_rows, line["manufacturer"], line["mpn"],
                   _side_by_side(table, mapping, heads))
    return ImportResult(source=source, placements=placements, skipped=skipped,
                        findings=tuple(sorted(findings)), totals=totals), lines


_LIST_MARK = re.compile(r"[,;/\s]|\.\.|[-\u2013:]")


def _continuations(frame: pd.DataFrame, mapping: dict[str, str], arrays: list[np.ndarray],
                   refdes: np.ndarray, repeated: np.ndarray) -> np.ndarray:
    """Rows that continue the line above: only designators (a long list written over several
    rows), or no designator and only description/notes text."""
    n = len(frame)
    cont = np.zeros(n, dtype=bool)
    if n < 2:
        return cont
    names = list(frame.columns)
    ref_i = names.index(mapping["refdes"])
    text_i = {names.index(mapping[f]) for f in ("description", "notes") if f in mapping}
    # Either kind has an empty value cell: one comparison per row, then the few candidates.
    first = names.index(mapping["value"]) if "value" in mapping else None
    cand = np.flatnonzero(arrays[first] == "") if first is not None else np.arange(n)
    ref_empty = refdes[cand] == ""
    only_ref, no_ref = cand[~ref_empty], cand[ref_empty]
    for i in range(len(names)):
        if i in (ref_i, first):
            continue
        if len(only_ref):
            only_ref = only_ref[arrays[i][only_ref] == ""]
        if len(no_ref) and i not in text_i:
            no_ref = no_ref[arrays[i][no_ref] == ""]
    for r in no_ref:
        if r > 0 and not repeated[r - 1] and text_i:
            cont[r] = True
    for r in only_ref:
        above = r - 1
        while above >= 0 and refdes[above] == "" and cont[above]:
            above -= 1
        # A designator-only row continues a list: the designator cell above must be a list.
        if above >= 0 and not repeated[above] \
                and _LIST_MARK.search(str(refdes[above]).strip()) \
                and _expand_one(str(refdes[r]))[1] is None:
            cont[r] = True
    return cont


def _fitted(line: dict[str, np.ndarray], mapping: dict[str, str], table: reader.RawTable,
            des: _Designators, combos: list[Combo], combo_code: np.ndarray
            ) -> tuple[np.ndarray, np.ndarray, list[tuple[int, str]], list[tuple[int, str]]]:
    """Per line: fitted?, the reason when not, (line, message) for unclear fitted cells and
    (line, message) for lines that say both fitted and not fitted.

    A fitted column that says yes wins over a not-fitted mark elsewhere in the line (``DNP on
    variant B`` in the notes) and over a mark in its own cell after the yes (``Yes (DNP in
    variant B)``): the placement stays in the audit, and the contradiction is a
    ``fitted_conflict`` finding (common practice: a variant note does not unfit the part of the
    variant the BOM describes). Without a yes, a mark limited to a variant (``DNP on the 115 V
    variant only``, ``DNP for option B``) keeps the part fitted with the same finding."""
    n = len(combo_code)
    fitted = np.ones(n, dtype=bool)
    explicit_yes = np.zeros(n, dtype=bool)
    reason = np.full(n, None, dtype=object)
    unclear: list[tuple[int, str]] = []
    contradict: list[tuple[int, str]] = []
    said_yes = np.full(n, "", dtype=object)
    if "fitted" in mapping:
        header = _original_header(table, mapping["fitted"])
        negative = colmod.is_negative_fitted(header)
        codes, uniq = pd.factorize(line["fitted"])
        verdicts = [_fitted_cell(str(u), negative) for u in uniq]
        says = np.array([f"{header} column says {str(u).strip()!r}" for u in uniq], dtype=object)
        no = np.array([not v[0] for v in verdicts], dtype=bool)[codes]
        fitted[no] = False
        reason[no] = says[codes[no]]
        explicit_yes = np.array([v[0] and v[1] and bool(str(u).strip())
                                 for v, u in zip(verdicts, uniq)], dtype=bool)[codes]
        said_yes[explicit_yes] = says[codes[explicit_yes]]
        odd = np.array([v[0] and not v[1] for v in verdicts], dtype=bool)[codes]
        unclear = [(int(li), f"{says[codes[li]]}, which is neither yes nor no; taken as fitted")
                   for li in np.flatnonzero(odd)]
        own_mark = np.array([v[2] is not None for v in verdicts], dtype=bool)[codes]
        contradict = [(int(li), f"{says[codes[li]]}: yes, but also {verdicts[codes[li]][2]!r}; "
                       "taken as fitted, check which variant the BOM describes")
                      for li in np.flatnonzero(own_mark)]
    # Marks in cells, in order of precedence; each as (mark per distinct cell, code per line,
    # whether that cell limits the mark to a variant).
    sources: list[tuple[str, list[str | None], np.ndarray, list[bool]]] = [
        ("value", [c.marks.get("value") for c in combos], combo_code,
         [_variant_only(c.text) for c in combos])]
    if des.mark:
        idx = np.fromiter(des.mark, dtype=np.int64, count=len(des.mark))
        codes = np.zeros(n, dtype=np.int64)
        codes[idx] = np.arange(1, len(idx) + 1)
        sources.append(("designator", [None, *des.mark.values()], codes,
                        [False] * (len(idx) + 1)))
    for f, label in (("mpn", "part number"), ("description", "description"),
                     ("value_alt", "second value column"),
                     ("description_alt", "second description column"), ("notes", "notes")):
        if f in ("description", "value_alt", "description_alt"):
            sources.append((label, [c.marks.get(f) for c in combos], combo_code,
                            [_variant_only(c.text) for c in combos]))
        elif f in mapping:
            sources.append((label, *_marks_by_cell(line[f])))
    for label, marks, codes, variant in sources:
        has = np.array([m is not None for m in marks], dtype=bool)
        if not has.any():
            continue
        only = np.array(variant, dtype=bool)[codes] & has[codes]
        for li in np.flatnonzero(explicit_yes & has[codes]):
            contradict.append((int(li), f"{said_yes[li]} but {marks[codes[li]]!r} in {label}; "
                               "taken as fitted, check which variant the BOM describes"))
        for li in np.flatnonzero(fitted & ~explicit_yes & only):
            contradict.append((int(li), f"{marks[codes[li]]!r} in {label} names a variant; "
                               "taken as fitted, check which variant the BOM describes"))
        for li in np.flatnonzero(fitted & ~explicit_yes & has[codes] & ~only):
            fitted[li] = False
            reason[li] = f"{marks[codes[li]]!r} in {label}"
    return fitted, reason, unclear, contradict


def _marks_by_cell(cells: np.ndarray) -> tuple[list[str | None], np.ndarray, list[bool]]:
    """(not-fitted mark per distinct cell, code per line, whether the cell limits it to a
    variant); code 0 is the empty cell."""
    filled = np.flatnonzero(cells != "")
    codes = np.zeros(len(cells), dtype=np.int64)
    if not len(filled):
        return [None], codes, [False]
    sub, uniq = pd.factorize(cells[filled])
    codes[filled] = sub + 1
    marks = [not_fitted_mark(str(u)) for u in uniq]
    return ([None, *marks], codes,
            [False, *(m is not None and _variant_only(str(u)) for m, u in zip(marks, uniq))])


# Words that limit a not-fitted mark to some builds ("DNP on the 115 V variant only", "DNP for
# option B"): the part is fitted in the build this BOM may describe (common practice of
# variant notes in BOMs).
_VARIANT_WORDS = re.compile(r"\b(?:variants?|versions?|options?|only|builds?|except|unless)\b",
                            re.IGNORECASE)


def _variant_only(text: str) -> bool:
    """Whether a cell's text limits a not-fitted mark to some variants."""
    return bool(_VARIANT_WORDS.search(text))


def _fitted_cell(cell: str, negative: bool) -> tuple[bool, bool, str | None]:
    """(fitted, understood, not-fitted mark said beside a yes) for a fitted-column cell;
    ``negative`` for a "DNP?" column. ``Yes (DNP in variant B)`` is fitted, with its mark."""
    t = _fold(cell)
    if not t:
        return True, True, None
    if negative:
        if t in _FITTED_YES or not_fitted_mark(cell):
            return False, True, None
        return True, t in _FITTED_NO, None
    if t in _FITTED_NO:
        return False, True, None
    mark = not_fitted_mark(cell)
    if mark:
        rest = _WORDS(strip_not_fitted(cell).casefold())
        if rest and rest[0] in _FITTED_YES:
            return True, True, mark
        return False, True, None
    return True, t in _FITTED_YES, None


_WORDS = re.compile(r"[^\W_]+|[\u2713\u2714]").findall


def _reason(li: int, repeated: np.ndarray, des: _Designators, pk: np.ndarray,
            combo: Combo) -> str:
    """Why a line is not taken as capacitor placements."""
    if repeated[li]:
        return "repeated header row"
    if li in des.error:
        return des.error[li]
    pfx = str(des.prefix[li])
    if pk[li] == _CAP_KIND:
        if combo.other is not None:
            family, token = combo.other
            if family in DECISIVE_FAMILIES and not combo.strong:
                return (f"designator prefix {pfx!r}, but the text describes {_a(family)} "
                        f"({token!r}): not a capacitor")
            return f"capacitor designator, but the text reads as {_a(family)} ({token!r})"
        if not combo.text:
            return "capacitor designator with no value or description"
        return f"capacitor designator, but no capacitor value could be read ({combo.text!r})"
    if pk[li] == _OTHER_KIND:
        if combo.evidence > 0 and combo.strong and combo.other is None:
            return (f"designator prefix {pfx!r} ({OTHER_PREFIXES[pfx]}), but the text reads "
                    f"as a capacitor ({combo.text!r}): the designator and the text disagree, "
                    "check the line")
        return f"designator prefix {pfx!r} ({OTHER_PREFIXES[pfx]}) is not a capacitor"
    if combo.other is not None:
        family, token = combo.other
        return f"the text reads as {_a(family)} ({token!r})"
    if combo.evidence > 0:
        return (f"designator prefix {pfx!r} is not a capacitor prefix and only a bare code "
                f"reads as a capacitor ({combo.text!r})")
    if not combo.text:
        return "no value or description"
    return f"no capacitor evidence in the text ({combo.text!r})"


def _a(word: str) -> str:
    return ("an " if word[0] in "aeiouAEIOU" else "a ") + word


def _placements(cap_idx: np.ndarray, des: _Designators, line: dict[str, np.ndarray],
                head_rows: np.ndarray, fitted: np.ndarray, nf_reason: np.ndarray,
                qty: np.ndarray, combos: list[Combo], combo_code: np.ndarray) -> pd.DataFrame:
    counts = des.count[cap_idx]
    total = int(counts.sum())
    line_of = np.repeat(cap_idx, counts)
    if not des.lists:
        refdes = des.single[cap_idx]
    else:
        refdes = np.empty(total, dtype=object)
        starts = np.cumsum(counts) - counts
        single = counts == 1
        refdes[starts[single]] = des.single[cap_idx[single]]
        for pos, k, li in zip(starts[~single], counts[~single], cap_idx[~single]):
            refdes[pos:pos + k] = des.lists[int(li)]
    cc = combo_code[line_of]
    data: dict[str, Any] = {
        "refdes": refdes,
        "row": head_rows[line_of],
        "line": line_of.astype(np.int64),
        "fitted": fitted[line_of],
        "not_fitted_reason": nf_reason[line_of],
        "mpn": line["mpn"][line_of],
        "manufacturer": line["manufacturer"][line_of],
        "qty": qty[line_of],
    }
    # Per-combination values as two blocks (floats, objects), each taken by code in one step.
    obj_cols = ["text", "value_text", "description",
                *(k for k in SPEC_COLUMNS if k not in FLOAT_SPEC and k != "is_capacitor")]
    n_c = len(combos)
    obj_block = np.empty((n_c, len(obj_cols)), dtype=object)
    for j, k in enumerate(obj_cols):
        # fromiter keeps a tuple (warnings) as one object, not a sequence to spread.
        obj_block[:, j] = np.fromiter(
            (getattr(c, k) for c in combos) if j < 3 else (c.spec[k] for c in combos),
            dtype=object, count=n_c)
    get_floats = operator.itemgetter(*FLOAT_SPEC)
    float_block = np.array([get_floats(c.spec) for c in combos], dtype=float)  # None -> NaN
    if not combos:
        float_block = float_block.reshape(0, len(FLOAT_SPEC))
    obj_taken = obj_block.take(cc, axis=0)
    float_taken = float_block.take(cc, axis=0)
    for j, k in enumerate(obj_cols):
        data[k] = obj_taken[:, j]
    for j, k in enumerate(FLOAT_SPEC):
        data[k] = float_taken[:, j]
    data["is_capacitor"] = np.array([bool(c.spec["is_capacitor"]) for c in combos],
                                    dtype=bool)[cc] if combos else np.zeros(0, dtype=bool)
    series = {k: pd.Series(data[k], dtype=object if data[k].dtype == object else None,
                           copy=False) for k in PLACEMENT_COLUMNS}
    return pd.DataFrame(series, columns=list(PLACEMENT_COLUMNS), copy=False)


def _placement_findings(placements: pd.DataFrame, combos: list[Combo],
                        combo_code: np.ndarray) -> list[ImportFinding]:
    """Column conflicts on fitted placements, and designators listed more than once."""
    out: list[ImportFinding] = []
    if not len(placements):
        return out
    line_of = placements["line"].to_numpy()
    cc = combo_code[line_of]
    has_conflict = np.array([bool(c.conflicts) for c in combos], dtype=bool)[cc]
    fitted = placements["fitted"].to_numpy()
    refdes = placements["refdes"].to_numpy(dtype=object)
    rows = placements["row"].to_numpy()
    for p in np.flatnonzero(has_conflict & fitted):
        for code, msg in combos[cc[p]].conflicts:
            out.append(_finding(int(rows[p]), str(refdes[p]), code, msg))
    # A fitted capacitor with no capacitance read (common practice: every capacitor line states
    # its capacitance; the checks that need it have no data).
    # A value cell with text gives capacitance_unread (the data is there but was not
    # understood), none capacitance_missing.
    no_cap = np.array([c.spec["capacitance_f"] is None for c in combos], dtype=bool)[cc]
    for p in np.flatnonzero(no_cap & fitted):
        combo = combos[cc[p]]
        code = "capacitance_unread" if combo.value_text else "capacitance_missing"
        out.append(_finding(int(rows[p]), str(refdes[p]), code,
                            f"no capacitance could be read from the BOM text ({combo.text!r}); "
                            "checks that need it have no data"))
    if len(set(refdes)) < len(refdes):
        dup = pd.Series(refdes).duplicated(keep="first").to_numpy()
        first_row = pd.Series(rows).groupby(refdes).transform("first").to_numpy()
        for p in np.flatnonzero(dup):
            out.append(_finding(
                int(rows[p]), str(refdes[p]), "duplicate_refdes",
                f"{refdes[p]} is also listed on row {first_row[p]}; each designator should "
                "appear once",
            ))
    return out

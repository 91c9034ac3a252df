"""Normalise stage: a BOM file to one row per capacitor placement, every source row accounted for.

``read_bom`` reads the table (``bomcheck.read.reader``), maps the columns (``bomcheck.parse.columns``),
takes out approved-source rows and multi-level structure rows (``bomcheck.parse.layout``); then
``bomcheck.parse.lines`` joins continuation rows to the line above, expands designator lists
(``bomcheck.parse.designators``), parses each distinct combination of value-bearing cells once
(``bomcheck.parse.linespec``, ``bomcheck.parse.merge``) and maps the results back to the lines by
code, decides what is fitted (``bomcheck.parse.fitted``) and for every line: capacitor placements
(``bomcheck.parse.placements``, fitted or not), a non-capacitor row, or an unreadable row with its
reason. The values returned are in ``bomcheck.parse.bomresult``, the approved sources in
``bomcheck.parse.approved``.

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

import contextlib
import functools
import gc
from collections.abc import Iterator
from dataclasses import replace

import numpy as np
import pandas as pd

from bomcheck.errors import InputError
from bomcheck.parse import aliases
from bomcheck.parse import columns as colmod
from bomcheck.parse.accounting import ROW_CATEGORIES, accounting_identity
from bomcheck.parse.approved import sources_of
from bomcheck.parse.bomresult import (
    LINE_CAP, NODATA_CODES, PLACEMENT_COLUMNS, SKIPPED_COLUMNS, SOURCE_COLUMNS, BomSource,
    ImportFinding, ImportOptions, ImportResult, finding,
)
from bomcheck.parse.designators import (
    CAPACITOR_PREFIXES, OTHER_PREFIXES, expand_lines, prefix_kind,
)
from bomcheck.parse.layout import APPROVED_SOURCE, NOT_PLACEMENT, find_layout
from bomcheck.parse.linespec import (
    _STRONG_CAP, SPEC_COLUMNS, SPEC_SOURCES, decimal_commas, not_fitted_mark,
    other_part_evidence, spec_from_cells, strip_not_fitted,
)
from bomcheck.parse.lines import build_lines, original_header, parse_qty, row_texts
from bomcheck.parse.values import parse_value
from bomcheck.read import reader

__all__ = [
    "CAPACITOR_PREFIXES", "OTHER_PREFIXES", "PLACEMENT_COLUMNS", "ROW_CATEGORIES",
    "SKIPPED_COLUMNS", "SOURCE_COLUMNS", "SPEC_COLUMNS", "SPEC_SOURCES", "BomSource",
    "NODATA_CODES", "ImportFinding", "ImportOptions", "ImportResult", "accounting_identity", "decimal_commas",
    "expand_lines", "not_fitted_mark", "other_part_evidence", "parse_qty", "prefix_kind",
    "read_bom", "spec_from_cells", "strip_not_fitted",
]


@contextlib.contextmanager
def _collector_paused() -> Iterator[None]:
    """Pause Python's cyclic garbage collector while the import runs: it makes a few objects
    per distinct string and no reference cycles, and each collection would walk every spec
    already made (a fifth of the time of a BOM of 30k distinct descriptions). What the import
    keeps lives as long as the result, so it goes straight to the oldest generation (freeze,
    unfreeze: a list splice) instead of being walked by the next young collections; skipped
    when the caller has frozen objects of its own (unfreeze would release them too)."""
    was_enabled = gc.isenabled()
    gc.disable()
    try:
        yield
    finally:
        if was_enabled:
            if not gc.get_freeze_count():
                gc.freeze()
                gc.unfreeze()
            gc.enable()


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
        path=path, sha256=table.sha256, format=table.format, encoding=table.encoding,
        sheet=table.sheet, header_row=table.header_row,
        columns={f: original_header(table, h) for f, h in mapping.items()},
    )
    header_findings = tuple(
        finding(int(table.header_row), None, "column_ambiguous",
                f"two columns for the {aliases.FIELD_LABELS[fld]}: "
                f"{original_header(table, used)!r} is used, "
                + ", ".join(repr(original_header(table, o)) for o in others)
                + " not; check which one is current")
        for fld, used, others in colmod.competing_columns(list(table.frame.columns),
                                                          mapping, overrides))
    with _collector_paused():
        result = _build(table, mapping, source)
    if header_findings:
        result = replace(result, findings=tuple(sorted(
            (*result.findings, *header_findings), key=ImportFinding.sort_key)))
    hidden = sum(len(w.rows) for w in table.warnings if w.code == "hidden-rows")
    totals = {**result.totals, "hidden_rows": hidden} if hidden else result.totals
    return replace(result, read_warnings=tuple(table.warnings), totals=totals)



def _build(table: reader.RawTable, mapping: dict[str, str], source: BomSource) -> ImportResult:
    """Take out the approved-source and multi-level structure rows (``bomcheck.parse.layout``), build
    the lines of the rest, and account for every row."""
    frame = table.frame
    n = len(frame)
    cells = {f: frame[h].to_numpy(dtype=object) for f, h in mapping.items()}
    repeated = cells["refdes"] == original_header(table, mapping["refdes"]).strip() if n \
        else np.zeros(0, dtype=bool)
    lay = find_layout(cells, n, repeated, _reads_as_capacitor)
    if lay is None:
        result, lines = build_lines(table, mapping, source, repeated)
        return replace(result, source_table=functools.partial(sources_of, lines.for_sources(),
                                                              None, None, None, None))
    out = lay.taken_out
    keep = ~out
    rows = np.asarray(table.rows, dtype=np.int64)
    sub = replace(table, frame=frame[keep].reset_index(drop=True), rows=rows[keep])
    result, lines = build_lines(sub, mapping, source, repeated[keep])
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
            what = "" if lines.kind[parent_line[k]] == LINE_CAP else " (not a capacitor line)"
            reason[i] = f"approved source {int(lay.source_index[i])} of the line on row {p_row}{what}"
    taken = np.flatnonzero(out)
    all_arrays = [frame[c].to_numpy(dtype=object) for c in frame.columns]
    extra = pd.DataFrame({
        "row": pd.Series(rows[taken], dtype=np.int64),
        "kind": pd.Series(np.where(lay.approved[taken], APPROVED_SOURCE, NOT_PLACEMENT),
                          dtype=object),
        "reason": pd.Series(reason[taken], dtype=object),
        "text": pd.Series(row_texts(all_arrays, taken), dtype=object),
    }, columns=list(SKIPPED_COLUMNS))
    skipped = pd.concat([result.skipped, extra], ignore_index=True).sort_values(
        "row", kind="stable").reset_index(drop=True)
    totals = dict(result.totals)
    totals["rows_read"] = int(n)
    totals["approved_source_rows"] = int(lay.approved.sum())
    totals["not_placement_rows"] = int(lay.structure.sum())
    ok = approved[~parent_out]
    sources = functools.partial(
        sources_of, lines.for_sources(), parent_line[~parent_out], lay.source_index[ok], rows[ok],
        {f: cells[f][ok] for f in ("manufacturer", "mpn", "description", "notes") if f in cells})
    return replace(result, skipped=skipped, totals=totals, source_table=sources)


def _reads_as_capacitor(text: str) -> bool:
    """Whether a row's text reads as a capacitor (a farad unit, capacitor words, a dielectric
    code): the parser's verdict, or the capacitor-words test."""
    return bool(_STRONG_CAP.search(text)) or parse_value(text, context="description").is_capacitor



"""Report stage, spreadsheet edge: the reviewer's workbook (openpyxl, write-only) from a ``Report``.

Sheets: Summary, Placements, Findings, Rules, Not audited, a voltage-ratio chart and the chart's
data. Nothing here recomputes the audit: every figure comes from the report value, and the
Placements sheet carries every metric, condition and parts-data figure the JSON report carries
(a column empty on every row is not written, on any sheet). Text from input files is always
stored as text, never as a formula, and the file appears only once it is complete. What goes in
the cells is ``xlsx_cells``; the chart is ``xlsx_chart``, the Summary sheet ``xlsx_summary``.
"""

from __future__ import annotations

import math
import os
from collections.abc import Sequence
from datetime import datetime, timezone

import numpy as np
import pandas as pd
from openpyxl import Workbook
from openpyxl.cell.cell import Cell, WriteOnlyCell
from openpyxl.styles import Alignment, Border, Font, NamedStyle, PatternFill, Side
from openpyxl.utils import get_column_letter

from bomcheck.render.outfiles import atomic_path
from bomcheck.render.textsafe import spreadsheet_unsafe
from bomcheck.render.xlsx_cells import (  # noqa: F401  (header_of, safe_text...: the module's API)
    HEADER_FILL, HEADER_RULE, MAX_CELL_CHARS, MAX_ROWS, STATUS_PALETTE, UNSAFE_START, _KINDS,
    _LABELS, _Column, _bools, _cell_text, _curve_points, _floats, _kind_of, _metric_kind,
    _number_width, _numbers, _print_setup, _text, _width, filled, header_of, is_unsafe,
    placement_fields, safe_text)
from bomcheck.render.xlsx_chart import write_chart
from bomcheck.render.xlsx_summary import write_summary
from bomcheck.report.chartdata import UNKNOWN_TECHNOLOGY, limit_lines  # noqa: F401

SHEETS = ("Summary", "Placements", "Findings", "Rules", "Not audited", "Voltage chart",
          "Chart data")


def write_workbook(report, path: str | os.PathLike, *, generated: datetime | None = None) -> None:
    """Write the reviewer's workbook for ``report`` to ``path`` (an .xlsx file).

    ``generated`` is the date shown on Summary (default: now, UTC). The workbook is written to a
    temporary file in the same folder and renamed into place; on any error the temporary file
    is deleted and an existing file at ``path`` is left as it was.
    """
    book = None
    try:
        with atomic_path(path, private_tempdir=True, what="workbook") as tmp:
            book = _Book(report, generated)
            book.build().save(tmp)
    except BaseException:
        _discard(book)
        raise


def _discard(book: _Book | None) -> None:
    """After a failure: close the sheets' streams (their files go with the private temporary
    folder of ``atomic_path``)."""
    if book is None:
        return
    for ws in book.wb.worksheets:
        if getattr(ws, "closed", True) is False:
            try:
                ws.close()
            except Exception:  # a stream broken by the failure itself: nothing more to save
                pass



class _Book:
    """Builds the workbook; holds the named styles and the notes Summary shows."""

    def __init__(self, report, generated: datetime | None) -> None:
        self.report = report
        if generated is None:
            generated = datetime.now(timezone.utc)
        self.generated_label = "generated (UTC)" if generated.tzinfo else "generated"
        if generated.tzinfo:
            generated = generated.astimezone(timezone.utc).replace(tzinfo=None)
        self.generated = generated
        self.notes: list[str] = []
        self.wb = Workbook(write_only=True)
        self.wb.properties.creator = f"bomcheck {report.tool_version}"
        self.wb.properties.created = generated
        self._add_styles()

    # ---- styles ----------------------------------------------------------------------------

    def _add_styles(self) -> None:
        """Named styles shared by every cell: one per number format, status and heading."""
        for name, kind in _KINDS.items():
            if kind.fmt is not None:
                self.wb.add_named_style(NamedStyle(name=f"bc {name}", number_format=kind.fmt))
        self.wb.add_named_style(NamedStyle(name="bc text", number_format="@"))
        rule = Side(style="thin", color=HEADER_RULE)
        self.wb.add_named_style(NamedStyle(
            name="bc header", font=Font(bold=True), border=Border(bottom=rule),
            fill=PatternFill("solid", fgColor=HEADER_FILL),
            alignment=Alignment(vertical="center", wrap_text=True), number_format="@"))
        self.wb.add_named_style(NamedStyle(name="bc title", font=Font(bold=True, size=14)))
        self.wb.add_named_style(NamedStyle(name="bc section", font=Font(bold=True, size=12)))
        self.wb.add_named_style(NamedStyle(name="bc wrap", alignment=Alignment(wrap_text=True,
                                                                             vertical="top")))
        self.wb.add_named_style(NamedStyle(name="bc count", number_format="#,##0",
                                           alignment=Alignment(horizontal="left")))
        for status, (fill, colour, bold) in STATUS_PALETTE.items():
            self.wb.add_named_style(NamedStyle(
                name=f"bc status {status}", fill=PatternFill("solid", fgColor=fill),
                font=Font(color=colour, bold=bold, italic=status == "waived"),
                number_format="@"))

    @staticmethod
    def status_style(status) -> str | None:
        return f"bc status {status}" if status in STATUS_PALETTE else None

    # ---- the workbook ----------------------------------------------------------------------

    def build(self) -> Workbook:
        summary = self.wb.create_sheet("Summary")  # first sheet; filled last, with the notes
        self._placements()
        self._findings()
        self._rules()
        self._not_audited()
        self._chart()
        write_summary(self, summary)
        return self.wb

    def _fit(self, n: int, what: str, order: str = "worst first") -> int:
        """Rows of ``what`` that fit on a sheet; notes a cut for Summary."""
        room = MAX_ROWS - 1
        if n <= room:
            return n
        self.notes.append(f"{what}: {n:,} rows exceed Excel's {MAX_ROWS:,}-row sheet limit; "
                          f"the sheet holds the first {room:,} ({order}). The JSON report "
                          "holds them all.")
        return room

    def _placements(self) -> None:
        r = self.report
        ordered = r.worst_first()
        room = MAX_ROWS - 1
        if len(ordered) > room:
            total = len(ordered)
            ordered = ordered[ordered["status"] != "pass"]
            self.notes.append(
                f"Placements: {total:,} fitted placements exceed Excel's {MAX_ROWS:,}-row sheet "
                f"limit, so the sheet lists only the {len(ordered):,} that are not a pass "
                "(worst first); the totals here and the JSON report cover them all.")
            ordered = ordered.iloc[:self._fit(len(ordered), "Placements (not a pass)")]
        gov = r.governing()
        if len(gov):
            gov = gov.reindex(ordered.index)
        else:
            gov = pd.DataFrame(index=ordered.index, columns=["rule_id", "value", "limit",
                                                             "margin", "message", "metric"])
        metric = gov["metric"]
        cols = [
            _Column("designator", _text(ordered["refdes"]), width=12),
            _Column("status", _text(ordered["status"]),
                    [self.status_style(s) for s in ordered["status"]], width=9),
            *([_Column("waived from", _text(gov["waived_from"]), width=11)]
              if "waived_from" in gov else []),
            _Column("governing rule", _text(gov["rule_id"])),
            *self._metric_columns(gov, metric, ("value", "limit", "margin")),
            _Column("explanation", _text(gov["message"]), "bc wrap", width=60),
            _Column("BOM row", _numbers(ordered["row"], "int"), width=9),
        ]
        # The source text holds the parsed BOM cells (value, description...); the MPN is not
        # parsed but is how a reviewer finds the part.
        for name in ("mpn", "manufacturer", "text"):
            if name in ordered:
                col = self._field(ordered, name)
                cols.append(_Column(col.header, col.values, "bc wrap", 36) if name == "text"
                            else col)
        cols = filled(cols, len(ordered))
        printed = len(cols)  # the review columns; the spec and metric columns follow
        # Every field the JSON report carries: spec, conditions, metrics, parts data, bases.
        names = [n for n in placement_fields(ordered.columns) if ordered[n].notna().any()]
        cols += filled([self._field(ordered, name) for name in names], len(ordered))
        self.notes.append("Placements prints its review columns (designator to BOM text); the "
                          "specification, condition and metric columns after them are on the "
                          "sheet, outside the print area.")
        self._table("Placements", cols, len(ordered), freeze="C2", print_cols=printed)

    def _metric_columns(self, frame: pd.DataFrame, metric: pd.Series,
                        names: Sequence[str]) -> list[_Column]:
        """Verdict numbers (value, limit, margin) in the unit of each row's metric."""
        kinds = metric.map(_metric_kind).fillna("num")
        scale = kinds.map(lambda k: _KINDS[k].scale).astype(float)
        styles = [f"bc {k}" if _KINDS[k].fmt else None for k in kinds]
        out = []
        for name in names:
            values = pd.to_numeric(frame[name], errors="coerce").astype(float) * scale.to_numpy()
            out.append(_Column(name.replace("_", " "), _floats(values), styles, width=11))
        return out

    def _field(self, frame: pd.DataFrame, name: str) -> _Column:
        """A spec, condition or metric column by its vocabulary name, under its human header."""
        series = frame[name] if name in frame else pd.Series([None] * len(frame), index=frame.index)
        kind_name = _kind_of(name)
        if kind_name == "text" and name not in _LABELS and pd.api.types.is_numeric_dtype(
                series.dtype) and not pd.api.types.is_bool_dtype(series.dtype):
            kind_name = "num"
        header = header_of(name)
        if kind_name == "text":
            return _Column(header, _text(series))
        if kind_name == "bool":
            return _Column(header, _bools(series), width=max(8, len(header) + 2))
        kind = _KINDS[kind_name]
        style = f"bc {kind_name}" if kind.fmt else None
        values = _numbers(series, kind_name)
        return _Column(header, values, style, width=_number_width(values, kind, header))

    def _findings(self) -> None:
        r = self.report
        needed = ["pidx", "refdes", "rule_id", "status", "value", "limit", "warn_limit", "margin",
                  "message", "source", "basis"]
        waivers = "waived_from" in r.verdicts.columns
        v = r.verdicts_worst_first()  # the one findings order of every output
        v = v.reindex(columns=needed + (["waived_from"] if waivers else []))
        v = v.iloc[:self._fit(len(v), "Findings")]
        metric_of = {} if r.rules is None else {x.id: x.metric for x in r.rules.rules}
        metric = v["rule_id"].map(metric_of)
        rows = r.table["row"].reindex(v["pidx"].to_numpy())
        cols = [
            _Column("designator", _text(v["refdes"]), width=12),
            _Column("status", _text(v["status"]), [self.status_style(s) for s in v["status"]],
                    width=9),
            *([_Column("waived from", _text(v["waived_from"]), width=11)] if waivers else []),
            _Column("rule", _text(v["rule_id"])),
            _Column("metric", _text(metric)),
            *self._metric_columns(v, metric, ("value", "limit", "warn_limit", "margin")),
            _Column("basis", _text(v["basis"])),
            _Column("BOM row", _numbers(rows, "int"), width=9),
            _Column("message", _text(v["message"]), "bc wrap", width=60),
            _Column("source", _text(v["source"]), "bc wrap", width=40),
        ]
        self._table("Findings", cols, len(v), freeze="B2")

    def _rules(self) -> None:
        rs = self.report.rules
        rules = list(rs.rules) if rs is not None else []
        rules = rules[:self._fit(len(rules), "Rules", "in rule-set order")]
        rows: dict[str, list] = {h: [] for h in (
            "id", "title", "applies", "metric", "check", "fail limit", "warn limit",
            "fail value", "warn value", "curve over", "curve points", "severity", "enabled",
            "source", "confidence", "rule set", "rationale")}
        value_styles: list[str | None] = []
        for rule in rules:
            kind = _metric_kind(rule.metric) or "num"
            scale = _KINDS[kind].scale
            curve = rule.fail if rule.fail.is_curve else None
            rows["id"].append(rule.id)
            rows["title"].append(rule.title)
            rows["applies"].append(rule.applies.text())
            rows["metric"].append(rule.metric)
            rows["check"].append(rule.check)
            rows["fail limit"].append(rule.fail.text(rule.metric))
            rows["warn limit"].append(rule.warn.text(rule.metric) if rule.warn else None)
            rows["fail value"].append(None if rule.fail.is_curve else rule.fail.value * scale)
            rows["warn value"].append(None if rule.warn is None or rule.warn.is_curve
                                      else rule.warn.value * scale)
            rows["curve over"].append(curve.over if curve else None)
            rows["curve points"].append(_curve_points(rule.metric, curve) if curve else None)
            rows["severity"].append(rule.severity)
            rows["enabled"].append(bool(rule.enabled))
            rows["source"].append(rule.source)
            rows["confidence"].append(rule.confidence)
            rows["rule set"].append(rule.origin)
            rows["rationale"].append(rule.rationale)
            value_styles.append(f"bc {kind}" if _KINDS[kind].fmt else None)
        widths = {"id": 16, "title": 44, "applies": 44, "fail limit": 30, "warn limit": 20,
                  "source": 50, "curve points": 36, "rationale": 90, "enabled": 9}
        cols = []
        for header, values in rows.items():
            if header in ("fail value", "warn value"):
                cols.append(_Column(header, values, value_styles, width=11))
            elif header == "enabled":
                cols.append(_Column(header, values, width=9))
            else:
                cols.append(_Column(header, [_cell_text(x) for x in values],
                                    width=widths.get(header)))
        self._table("Rules", cols, len(rules), freeze="B2")

    def _not_audited(self) -> None:
        r = self.report
        entries = [{**d, "file": "BOM"} for d in r.not_audited()]
        entries += [{"refdes": d.get("refdes"), "row": d.get("row"), "kind": "not_in_bom",
                     "reason": d.get("reason"), "text": None, "file": "design sheet"}
                    for d in r.design_unmatched]
        n = self._fit(len(entries), "Not audited", "in row order")
        entries = entries[:n]
        cols = [
            _Column("kind", [_cell_text(d["kind"]) for d in entries], width=15),
            _Column("designator", [_cell_text(d["refdes"]) for d in entries], width=12),
            _Column("file", [d["file"] for d in entries], width=13),
            _Column("row", [None if d["row"] is None else int(d["row"]) for d in entries],
                    width=7),
            _Column("reason", [_cell_text(d["reason"]) for d in entries], width=60),
            _Column("text", [_cell_text(d["text"]) for d in entries], width=80),
        ]
        self._table("Not audited", cols, len(entries), freeze="A2")

    # ---- writing ---------------------------------------------------------------------------

    def _chart(self) -> None:
        """The Chart data and Voltage chart sheets (``xlsx_chart``)."""
        write_chart(self)

    def _put(self, value, style: str | None = None):
        """A Summary value: text made safe (a formula-like text becomes a text cell), with a
        named style when given."""
        return self._put_on(self.wb["Summary"], value, style)

    def _put_on(self, ws, value, style: str | None = None):
        """``_put`` for a cell of sheet ``ws``."""
        if isinstance(value, str):
            value = safe_text(value)
            if style is None and is_unsafe(value):
                style = "bc text"
        if style is None or value is None:
            return value
        cell = WriteOnlyCell(ws, value)
        cell.style = style
        if isinstance(value, str):
            cell.data_type = "s"
        return cell

    def _table(self, title: str, cols: list[_Column], n: int, *, freeze: str,
               auto_filter: bool = True, print_cols: int | None = None):
        """A sheet of ``n`` rows under a frozen, filtered header row; it prints landscape, one
        page wide, its first ``print_cols`` columns (default: all). A column empty on every row
        is left out (``filled``)."""
        kept = filled(cols, n)
        if print_cols is not None:
            print_cols = sum(1 for c in cols[:print_cols] if any(c is k for k in kept))
        cols = kept
        ws = self.wb.create_sheet(title)
        widths = [col.width or _width(col) for col in cols]
        for i, width in enumerate(widths, 1):
            ws.column_dimensions[get_column_letter(i)].width = width
        ws.freeze_panes = freeze
        last = get_column_letter(max(1, len(cols)))
        if auto_filter and cols:
            ws.auto_filter.ref = f"A1:{last}{n + 1}"
        # Headers wrap within their column: as many lines as the longest needs.
        lines = max((math.ceil(len(c.header) / max(1.0, w - 1)) for c, w in zip(cols, widths)),
                    default=1)
        ws.row_dimensions[1].height = 15 * min(lines, 5) + 2
        printed = get_column_letter(max(1, min(len(cols), print_cols or len(cols))))
        _print_setup(ws, f"A1:{printed}{n + 1}", landscape=True, title_rows="1:1")
        _wrapped_heights(ws, cols, widths, n)
        header = []
        for col in cols:
            cell = WriteOnlyCell(ws, col.header)
            cell.style = "bc header"
            header.append(cell)
        ws.append(header)
        _append_rows(ws, cols, n)
        return ws


def _wrapped_heights(ws, cols: list[_Column], widths: list[float], n: int) -> None:
    """Rows whose wrapped text (columns styled ``bc wrap``) needs more than one line get the
    height for it (about 1.1 characters of the column per character, 15 points a line)."""
    wrapped = [(c.values, w) for c, w in zip(cols, widths) if c.style == "bc wrap"]
    if not wrapped:
        return
    need = np.zeros(n)
    for values, w in wrapped:
        lengths = np.fromiter((len(v) if type(v) is str else 0 for v in values[:n]),
                              dtype=float, count=n)
        np.maximum(need, lengths * 1.1 / w, out=need)
    # openpyxl's write-only sheet copies a row's attributes from ``row_dimensions`` as it writes
    # the row: a plain mapping of the two attributes does what a RowDimension does, cheaply.
    lines = np.minimum(8, np.ceil(need)).astype(int)
    for i in np.flatnonzero(need > 1).tolist():
        ws.row_dimensions[i + 2] = {"ht": str(15 * int(lines[i]) + 2), "customHeight": "1"}


# First characters of a text that may be a formula or an error value (``spreadsheet_unsafe``
# decides; this only spares the call for every other text).
_RISKY_FIRST = frozenset("=+-@\t\r #")


def _append_rows(ws, cols: list[_Column], n: int) -> None:
    """The data rows, handed to openpyxl as plain tuples of values (one ``zip`` over the
    columns): the sheet's cell maker (``_cell_maker``) gives each value its column's named
    style, so no cell object is made or styled per value. Input text a spreadsheet would read
    as a formula or an error value is stored as a text cell."""
    ws._values_to_row = _cell_maker(ws, cols)  # openpyxl's per-row hook of a write-only sheet
    for row in zip(*(c.values[:n] for c in cols)):
        ws.append(row)


class _StyledCell(Cell):
    """A write-only cell with a fixed named style, reused for many values: its style id is
    looked up once, not for every value written (openpyxl asks for it per cell)."""

    __slots__ = ("_fixed_id",)
    has_style = True

    def __init__(self, ws, style: str) -> None:
        super().__init__(ws, row=1, column=1)
        self.style = style
        self._fixed_id = Cell.style_id.fget(self)

    @property
    def style_id(self) -> int:
        return self._fixed_id


def _cell_maker(ws, cols: list[_Column]):
    """A replacement of openpyxl's ``WriteOnlyWorksheet._values_to_row`` for one sheet: the
    cells of one row from its values. openpyxl writes each row as soon as it is appended, so
    one cell per column and style is reused for every row (its value rebound each time)."""
    plain = WriteOnlyCell(ws)
    made: dict[tuple[int, str], _StyledCell] = {}

    def styled(j: int, style: str) -> _StyledCell:
        cell = made.get((j, style))
        if cell is None:
            cell = made[j, style] = _StyledCell(ws, style)
        return cell

    fixed = [None if isinstance(c.style, list) or c.style is None else styled(j, c.style)
             for j, c in enumerate(cols)]
    per_row = [c.style if isinstance(c.style, list) else None for c in cols]
    text_style = [None if isinstance(c.style, list) else c.style or "bc text" for c in cols]
    # Only columns holding text need the formula guard.
    texty = [any(type(v) is str for v in c.values) for c in cols]
    columns = list(zip(range(1, len(cols) + 1), fixed, per_row, texty))

    def values_to_row(values, row_idx):
        i = row_idx - 2  # the data's first row is the sheet's second
        for (col, cell, styles, text), value in zip(columns, values):
            if value is None:
                continue
            if text and type(value) is str and value[:1] in _RISKY_FIRST \
                    and spreadsheet_unsafe(value):
                j = col - 1
                cell = styled(j, styles[i] or "bc text" if styles else text_style[j])
                cell.value = value
                cell.data_type = "s"
            else:
                if cell is None:
                    cell = plain if styles is None or styles[i] is None else styled(col - 1,
                                                                                    styles[i])
                cell.value = value
            cell.row, cell.column = row_idx, col
            yield cell

    return values_to_row

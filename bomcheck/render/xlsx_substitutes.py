"""Report stage, spreadsheet edge of the substitute check: the Substitutes sheets (openpyxl) from a
``bomcheck.substitute.result.SubstituteResult``.

Sheets: **Substitutes** (one row per alternate: verdict and the reason purchasing acts on),
**Substitute placements** (one row per placement: both parts' status and governing stress) and
**Substitute verdicts** (one row per placement and rule, side by side). Nothing is recomputed.
Text from input files is stored as text, never as a formula (a cell starting with ``=``, ``+``,
``-``, ``@``, tab or CR is a text cell), and the workbook file appears only once complete.
openpyxl is imported inside the functions, so importing this module loads no spreadsheet library.
"""

from __future__ import annotations

import os
from typing import TYPE_CHECKING, Any

from bomcheck.render.outfiles import atomic_path
from bomcheck.render.textsafe import starts_formula, xml_text
from bomcheck.substitute.result import SubstituteResult
from bomcheck.substitute.words import designator_list
from bomcheck.vocabulary import METRICS

if TYPE_CHECKING:
    from openpyxl import Workbook

SHEETS = ("Substitutes", "Substitute placements", "Substitute verdicts")
MAX_CELL_CHARS = 32_767
# Fills by verdict and status: lightness falls as severity rises (readable in greyscale).
FILLS: dict[str, tuple[str, str, bool]] = {
    "rejected": ("5E2750", "FFFFFF", True), "fail": ("5E2750", "FFFFFF", True),
    "nodata": ("8E9CC2", "1B1F24", True),
    "review": ("E9D8A6", "1B1F24", False), "warn": ("E9D8A6", "1B1F24", False),
    "drop-in": ("E3EBE8", "3B4148", False), "pass": ("E3EBE8", "3B4148", False),
    "waived": ("E2DED6", "3B4148", False),
}
HEADER_FILL = "DCE1E6"
PERCENT_FORMAT = "0.0%"


class _Styles:
    """Shared style objects (one per look, not one per cell)."""

    def __init__(self) -> None:
        from openpyxl.styles import Alignment, Font, PatternFill

        self.header_font = Font(bold=True)
        self.header_fill = PatternFill("solid", fgColor=HEADER_FILL)
        self.wrap = Alignment(wrap_text=True, vertical="top")
        self.top = Alignment(vertical="top")
        self.fills = {k: (PatternFill("solid", fgColor=f), Font(color=c, bold=b))
                      for k, (f, c, b) in FILLS.items()}


def _text_value(value: str) -> str:
    value = xml_text(value)
    if len(value) > MAX_CELL_CHARS:
        value = value[: MAX_CELL_CHARS - 1] + "\u2026"
    return value


def _cell(ws, value: Any, styles: _Styles, *, kind: str = "", number_format: str = ""):
    """A cell for ``ws.append``: text made safe (formula-like text stays text), a fill for
    verdict and status cells, a number format for numbers."""
    from openpyxl.cell.cell import ERROR_CODES, WriteOnlyCell

    if isinstance(value, float) and value != value:  # NaN: an empty cell
        value = None
    cell = WriteOnlyCell(ws, _text_value(value) if isinstance(value, str) else value)
    if isinstance(value, str):
        if starts_formula(value) or value in ERROR_CODES:
            cell.data_type = "s"
            cell.number_format = "@"
        cell.alignment = styles.wrap if kind == "wrap" else styles.top
    if kind == "status" and isinstance(value, str) and value in styles.fills:
        cell.fill, cell.font = styles.fills[value]
    if number_format and isinstance(value, (int, float)) and not isinstance(value, bool):
        cell.number_format = number_format
    return cell


def _sheet(wb: Workbook, title: str, columns: list[tuple[str, float, str]], rows: list[list],
           styles: _Styles, formats: list[list[str]] | None = None) -> None:
    """A sheet with a frozen, filtered header row; ``columns`` are (header, width, kind)."""
    from openpyxl.utils import get_column_letter

    ws = wb.create_sheet(title)
    for i, (_, width, _) in enumerate(columns, 1):
        ws.column_dimensions[get_column_letter(i)].width = width
    ws.freeze_panes = "A2"
    ws.auto_filter.ref = f"A1:{get_column_letter(len(columns))}{len(rows) + 1}"
    header = []
    for name, _, _ in columns:
        c = _cell(ws, name, styles)
        c.font, c.fill = styles.header_font, styles.header_fill
        header.append(c)
    ws.append(header)
    for r, values in enumerate(rows):
        fmt = formats[r] if formats else [""] * len(values)
        ws.append([_cell(ws, v, styles, kind=kind, number_format=f)
                   for v, (_, _, kind), f in zip(values, columns, fmt)])


def _metric_format(metric: str | None) -> str:
    m = METRICS.get(metric or "")
    return PERCENT_FORMAT if m is not None and m.percent else "0.####"


# (header, width, kind) of each sheet's columns; kind "status" fills by verdict, "wrap" wraps.
SUBSTITUTES_COLUMNS: tuple[tuple[str, float, str], ...] = (
    ("Original", 24, ""), ("Matched by", 10, ""), ("Alternate", 24, ""),
    ("Manufacturer", 18, ""), ("Alternate text", 36, "wrap"), ("Spec from", 16, ""),
    ("Footprint checked", 10, ""), ("Placements", 16, "wrap"), ("Not fitted", 12, ""),
    ("Verdict", 11, "status"), ("Reason", 70, "wrap"), ("Differences", 60, "wrap"),
    ("Notes", 30, "wrap"), ("Given in", 24, ""),
)
PLACEMENT_COLUMNS: tuple[tuple[str, float, str], ...] = (
    ("Original", 22, ""), ("Alternate", 22, ""), ("Verdict", 11, "status"),
    ("Refdes", 9, ""), ("BOM row", 8, ""), ("Role", 10, ""), ("Conditions", 28, "wrap"),
    ("Original status", 10, "status"), ("Original rule", 16, ""),
    ("Original value", 11, ""), ("Original limit", 11, ""), ("Original margin", 11, ""),
    ("Alternate status", 10, "status"), ("Alternate rule", 16, ""),
    ("Alternate value", 11, ""), ("Alternate limit", 11, ""),
    ("Alternate margin", 11, ""), ("Change", 9, ""),
)
VERDICT_COLUMNS: tuple[tuple[str, float, str], ...] = (
    ("Alternate", 22, ""), ("Refdes", 9, ""), ("Rule", 16, ""), ("Metric", 16, ""),
    ("Original status", 10, "status"), ("Original value", 11, ""),
    ("Original limit", 11, ""), ("Original margin", 11, ""),
    ("Original message", 60, "wrap"), ("Alternate status", 10, "status"),
    ("Alternate value", 11, ""), ("Alternate limit", 11, ""),
    ("Alternate margin", 11, ""), ("Alternate message", 60, "wrap"),
    ("Worse", 7, ""),
)


def _substitutes_rows(result: SubstituteResult) -> list[list]:
    """One row per alternate: verdict and the reason purchasing acts on."""
    rows = []
    for r in result.results:
        a = r.alternate
        rows.append([
            a.original, r.match, a.label, a.manufacturer, r.proposed_text, r.spec_source,
            "yes" if a.footprint_checked else "no", designator_list(r.refdes, None),
            designator_list(r.not_fitted, None), r.verdict, r.summary,
            "; ".join(f"{d.severity}: {d.text}" for d in r.differences), a.notes, a.where(),
        ])
    return rows


def _placement_rows(result: SubstituteResult) -> tuple[list[list], list[list[str]]]:
    """(rows, number formats): one row per placement, both parts' status and governing stress."""
    rows, formats = [], []
    for r in result.results:
        metric_of = {v.rule_id: v.metric for p in r.placements for v in p.verdicts}
        for p in r.placements:
            go, ga = p.original_governing or {}, p.proposed_governing or {}
            fo, fa = _metric_format(metric_of.get(go.get("rule"))), _metric_format(
                metric_of.get(ga.get("rule")))
            rows.append([
                r.alternate.original, r.alternate.label, r.verdict, p.refdes, p.row, p.role,
                p.conditions, p.original_status, go.get("rule"), go.get("value"),
                go.get("limit"), go.get("margin"), p.proposed_status, ga.get("rule"),
                ga.get("value"), ga.get("limit"), ga.get("margin"), p.change,
            ])
            formats.append([""] * 9 + [fo] * 3 + [""] * 2 + [fa] * 3 + [""])
    return rows, formats


def _verdict_rows(result: SubstituteResult) -> tuple[list[list], list[list[str]]]:
    """(rows, number formats): one row per placement and rule, both parts side by side."""
    rows, formats = [], []
    for r in result.results:
        for p in r.placements:
            for v in p.verdicts:
                o, a = v.original or {}, v.proposed or {}
                f = _metric_format(v.metric)
                rows.append([
                    r.alternate.label, p.refdes, v.rule_id, v.metric, o.get("status"),
                    o.get("value"), o.get("limit"), o.get("margin"), o.get("message"),
                    a.get("status"), a.get("value"), a.get("limit"), a.get("margin"),
                    a.get("message"), "yes" if v.worse else "",
                ])
                formats.append([""] * 5 + [f] * 3 + [""] * 2 + [f] * 3 + [""] * 2)
    return rows, formats


def write_substitutes_sheet(wb: Workbook, result: SubstituteResult) -> None:
    """Add the Substitutes sheets (``SHEETS``) for ``result`` to the workbook ``wb`` (normal or
    write-only)."""
    styles = _Styles()
    _sheet(wb, SHEETS[0], list(SUBSTITUTES_COLUMNS), _substitutes_rows(result), styles)
    rows, formats = _placement_rows(result)
    _sheet(wb, SHEETS[1], list(PLACEMENT_COLUMNS), rows, styles, formats)
    rows, formats = _verdict_rows(result)
    _sheet(wb, SHEETS[2], list(VERDICT_COLUMNS), rows, styles, formats)


def write_substitute_workbook(result: SubstituteResult, path: str | os.PathLike) -> None:
    """Write a workbook holding the Substitutes sheets to ``path`` (an .xlsx file), through a
    temporary file in the same folder renamed into place; on any error the temporary file is
    removed and an existing file at ``path`` is left as it was."""
    from openpyxl import Workbook

    with atomic_path(path, private_tempdir=True, what="workbook") as tmp:
        wb = Workbook(write_only=True)
        write_substitutes_sheet(wb, result)
        wb.save(tmp)

"""Report stage, spreadsheet edge: the reviewer's workbook (openpyxl, write-only) from a ``Report``.

Sheets: Summary, Placements, Findings, Rules, Not audited, a voltage-ratio chart and the chart's
data. Nothing here recomputes the audit: every figure comes from the report value. Text from
input files is always stored as text, never as a formula, and the file appears only once it is
complete.
"""

from __future__ import annotations

import math
import os
from collections.abc import Sequence
from dataclasses import dataclass
from datetime import datetime, timezone

import numpy as np
import pandas as pd
from openpyxl import Workbook
from openpyxl.cell.cell import ERROR_CODES, WriteOnlyCell
from openpyxl.chart import Reference, ScatterChart, Series
from openpyxl.chart.layout import Layout, ManualLayout
from openpyxl.chart.marker import Marker
from openpyxl.styles import Alignment, Border, Font, NamedStyle, PatternFill, Side
from openpyxl.utils import get_column_letter

from bomcheck.report.chartdata import UNKNOWN_TECHNOLOGY, chart_points, limit_lines  # noqa: F401
from bomcheck.render.outfiles import atomic_path
from bomcheck.report.model import CONDITION_FIELDS, METRIC_FIELDS, SPEC_FIELDS
from bomcheck.status import STATUS_ORDER
from bomcheck.render.textsafe import FORMULA_LEADS, starts_formula, xml_text
from bomcheck.vocabulary import CONDITIONS, METRICS

# Excel's sheet limit, header row included.
MAX_ROWS = 1_048_576
# Excel holds at most this many characters in a cell.
MAX_CELL_CHARS = 32_767

# A cell starting with one of these is a formula to Excel or to a CSV import; input text that
# does is stored as a text cell with the Text number format.
UNSAFE_START = FORMULA_LEADS

# Status fills: lightness falls as severity rises, so the order survives greyscale printing and
# red-green colour blindness. (fill, font colour, bold)
STATUS_PALETTE: dict[str, tuple[str, str, bool]] = {
    "fail": ("5E2750", "FFFFFF", True),    # deep plum
    "nodata": ("8E9CC2", "1B1F24", True),  # slate wisteria
    "warn": ("E9D8A6", "1B1F24", False),   # sand
    "pass": ("E3EBE8", "3B4148", False),   # pale sage grey
    "waived": ("E2DED6", "3B4148", False),  # pale stone
}
HEADER_FILL = "DCE1E6"
HEADER_RULE = "8A939C"

# Marker colours of the chart's technology series; limit lines are charcoal with varied dashes.
TECHNOLOGY_COLOURS: dict[str, str] = {
    "ceramic": "2F6690",
    "tantalum": "B5651D",
    "tantalum-polymer": "7A4E9C",
    "tantalum-wet": "3A7D44",
    "tantalum-foil": "8C6D1F",
    "aluminium-electrolytic": "9E2A2B",
    "aluminium-polymer": "D08C60",
    "film": "1B998B",
    "mica": "6C757D",
    "glass": "4C5B8F",
    "supercapacitor": "C44569",
}
LIMIT_LINE_COLOUR = "33373D"
LIMIT_DASHES = ("solid", "dash", "sysDot", "lgDash", "dashDot", "sysDash", "lgDashDot")

SHEETS = ("Summary", "Placements", "Findings", "Rules", "Not audited", "Voltage chart",
          "Chart data")


@dataclass(frozen=True)
class _Kind:
    """How a column's numbers are stored and shown: a number format and a scale from SI."""

    fmt: str | None  # None: plain cell, no named style
    scale: float = 1.0
    unit: str = ""  # shown in the header when the stored number is not in the SI unit


# Number formats show a unit and a bounded number of decimals (a General format lets a long
# float overflow a column, which spreadsheets then show as ###).
_KINDS: dict[str, _Kind] = {
    "text": _Kind(None),
    "bool": _Kind(None),
    "int": _Kind(None),  # General shows whole numbers as they are: no style needed
    "num": _Kind("0.0###"),
    "V": _Kind('0.0##" V"', unit="V"),
    "degC": _Kind('0.0#" °C"', unit="°C"),
    "uF": _Kind('0.0#####" uF"', 1e6, "uF"),
    "pF": _Kind('0.0##" pF"', 1e12, "pF"),
    "ratio": _Kind("0.0#%", unit="%"),  # a fraction shown as a percentage
    "pct": _Kind("0.0#%", 0.01, "%"),  # a number of percent, stored as a fraction
    "ppm": _Kind('0" ppm/°C"', unit="ppm/°C"),
    "h": _Kind('#,##0" h"', unit="h"),
    "J": _Kind('0.0###" J"', unit="J"),
    "s": _Kind('0.0##" s"', unit="s"),
    "ohm": _Kind('#,##0.0##" ohm"', unit="ohm"),
    "ohm/V": _Kind('#,##0.0##" ohm/V"', unit="ohm/V"),
    "A": _Kind('0.0###" A"', unit="A"),
    "mA": _Kind('0.0###" mA"', 1e3, "mA"),
    "W": _Kind('0.0###" W"', unit="W"),
    "uC": _Kind('0.0##" uC"', unit="uC"),
    "Hz": _Kind('#,##0" Hz"', unit="Hz"),
    "V/s": _Kind('#,##0" V/s"', unit="V/s"),
    "degC/W": _Kind('0.0#" °C/W"', unit="°C/W"),
    "date": _Kind("yyyy-mm-dd hh:mm:ss"),
}

# Metric display units (vocabulary.METRICS) and condition units to column kinds.
_UNIT_KINDS = {"V": "V", "degC": "degC", "delta_degC": "degC", "F": "uF", "J": "J", "s": "s",
               "ohm": "ohm", "ohm/V": "ohm/V", "A": "A", "W": "W", "h": "h", "uC": "uC",
               "Hz": "Hz", "V / s": "V/s", "%": "pct"}

_FIELD_KINDS: dict[str, str] = {
    "row": "int", "qty": "num", "is_capacitor": "bool", "capacitance_f": "uF", "voltage_v": "V",
    "tol_minus_pct": "pct", "tol_plus_pct": "pct", "tol_abs_f": "pF", "dielectric_class": "int",
    "cap_change_minus_pct": "pct", "cap_change_plus_pct": "pct", "tc_ppm": "ppm",
    "tc_tol_ppm": "ppm", "temp_min_c": "degC", "temp_max_c": "degC", "emi_filter": "bool",
    "polarized": "bool", "design_row": "int",
    "v_upper_v": "V", "transient_peak_v": "V", "voltage_ratio": "ratio",
    "transient_ratio": "ratio", "reverse_ratio": "ratio",
    "temp_max_used_c": "degC", "c_tol_factor": "ratio", "c_temp_factor": "ratio",
    "c_bias_factor": "ratio", "c_aging_factor": "ratio", "c_worst_f": "uF",
    "esr_ohm": "ohm", "ripple_rated_a": "A", "ripple_rated_hz": "Hz", "surge_rated_a": "A",
    "life_l0_h": "h", "life_t0_c": "degC", "leakage_a": "mA", "rth_c_per_w": "degC/W",
    "dc_bias_keep": "ratio",
}

# Column headers a reviewer reads, where the registries' labels do not give one.
_LABELS: dict[str, str] = {
    "refdes": "designator", "mpn": "manufacturer part number", "text": "BOM text",
    "qty": "quantity", "is_capacitor": "capacitor", "capacitance_f": "capacitance",
    "voltage_v": "rated voltage", "voltage_kind": "rated voltage kind (dc/ac)",
    "tol_minus_pct": "tolerance (minus)", "tol_plus_pct": "tolerance (plus)",
    "tol_abs_f": "tolerance (absolute)", "dielectric_class": "dielectric class",
    "cap_change_minus_pct": "capacitance change over temperature (minus)",
    "cap_change_plus_pct": "capacitance change over temperature (plus)",
    "tc_ppm": "temperature coefficient", "tc_tol_ppm": "temperature coefficient tolerance",
    "film_material": "film material", "temp_min_c": "rated minimum temperature",
    "temp_max_c": "rated maximum temperature", "package_note": "package note",
    "safety_class": "safety class", "emi_filter": "EMI filter", "warnings": "parser warnings",
    "unread": "unread text", "v_dc": "working voltage (v_dc)",
    "v_dc_max": "rail upper bound (v_dc_max)", "v_tol_pct": "rail tolerance (v_tol_pct)",
    "v_ripple_pk": "peak ripple (v_ripple_pk)", "v_transient_pk": "peak transient",
    "v_reverse_pk": "peak reverse voltage", "v_ac_rms": "AC voltage rms",
    "t_ambient_c": "ambient temperature", "t_rise_c": "self-heating", "c_min_f":
    "required capacitance", "life_h": "required life", "r_balance_ohm": "balancing resistor",
    "r_balance_tol_pct": "balancing resistor tolerance", "r_bleeder_ohm": "bleeder resistor",
    "v_safe_v": "safe voltage", "t_discharge_max_s": "discharge time allowed",
    "slew_v_per_s": "slew rate at switch-on", "r_source_ohm": "source resistance",
    "i_ripple_a": "ripple current rms", "f_ripple_hz": "ripple frequency",
    "group": "design group", "design_row": "design-sheet row",
    "condition_source": "conditions from", "v_upper_v": "rail upper bound",
    "transient_peak_v": "transient peak voltage", "transient_ratio": "transient ratio",
    "voltage_ratio": "voltage ratio (applied peak / rated)",
    "temp_max_used_c": "rated maximum temperature used", "c_tol_factor": "tolerance factor",
    "c_temp_factor": "temperature factor", "c_bias_factor": "DC-bias factor",
    "c_aging_factor": "aging factor", "esr_ohm": "ESR", "ripple_rated_a": "rated ripple current",
    "ripple_rated_hz": "rated ripple frequency", "surge_rated_a": "rated surge current",
    "life_l0_h": "rated life L0", "life_t0_c": "rated life temperature",
    "leakage_a": "leakage current", "rth_c_per_w": "thermal resistance",
    "dc_bias_keep": "DC-bias capacitance kept", "c_margin_note": "capacitance margin note",
}


def header_of(name: str) -> str:
    """The column header of a spec, condition or metric column: a label a reviewer reads and
    the unit of the numbers under it (``voltage ratio (applied peak / rated) [%]``)."""
    label = _LABELS.get(name)
    if label is None and name in METRICS:
        label = METRICS[name].description.split(":")[0].split(" (")[0]
    if label is None:
        base = name[:-6] if name.endswith("_basis") else None
        label = (f"{header_of(base).split(' [')[0]}: basis" if base
                 else name.replace("_", " "))
    unit = _KINDS[_kind_of(name)].unit
    return f"{label} [{unit}]" if unit else label


def _kind_of(name: str) -> str:
    """The column kind of a named field ("text" when none is known)."""
    kind = _FIELD_KINDS.get(name)
    if kind is None and name in METRICS:
        kind = _metric_kind(name)
    if kind is None and name in CONDITIONS:
        kind = _UNIT_KINDS.get(CONDITIONS[name][1])
    return kind or "text"


_TOTAL_LABELS: tuple[tuple[str, str], ...] = (
    ("rows_read", "rows read"),
    ("capacitor_rows", "capacitor rows"),
    ("non_capacitor_rows", "non-capacitor rows"),
    ("unreadable_rows", "unreadable rows"),
    ("blank_rows", "blank rows (not counted as read)"),
    ("continuation_rows", "continuation rows"),
    ("placements", "placements"),
    ("fitted", "fitted placements (Placements sheet)"),
    ("not_fitted", "not-fitted placements"),
    ("audited", "placements audited"),
    ("design_unmatched", "design rows not in the BOM"),
)


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


def safe_text(value: str) -> str:
    """Input text as a cell can hold it: characters XML 1.0 forbids become U+FFFD
    (``textsafe.xml_text``, shared by every XML writer) and the
    text is cut to Excel's cell size. A leading ``=``, ``+``, ``-``, ``@``, tab or CR is kept
    (the writer stores such text as a text cell)."""
    value = xml_text(value)
    if len(value) > MAX_CELL_CHARS:
        value = value[: MAX_CELL_CHARS - 1] + "…"
    return value


def is_unsafe(value: str) -> bool:
    """True when a spreadsheet would read ``value`` as a formula or an error code."""
    return starts_formula(value) or value in ERROR_CODES


@dataclass
class _Column:
    """One sheet column: header, one value per row, and the named style of each value (one name
    for the whole column, or a list with one per row)."""

    header: str
    values: list
    style: str | list | None = None
    width: float | None = None


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
        self._summary(summary)
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
        for name in ("mpn", "text"):
            if name in ordered:
                col = self._field(ordered, name)
                cols.append(_Column(col.header, col.values, "bc wrap", 36) if name == "text"
                            else col)
        printed = len(cols)  # the review columns; the spec and metric columns follow
        # Every metric the JSON carries: the core ones, then each circuit metric computed.
        names = [*SPEC_FIELDS, *CONDITION_FIELDS, *METRIC_FIELDS]
        names += [m for m in METRICS if m in ordered and m not in names]
        names += [c for c in ordered.columns if c.endswith("_basis") and c not in names]
        for name in names:
            cols.append(self._field(ordered, name))
        # No column that is empty on every row (a spreadsheet of blank columns hides the rest).
        keep = [i < printed or any(v is not None for v in c.values) for i, c in enumerate(cols)]
        cols = [c for c, k in zip(cols, keep) if k]
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

    # ---- chart -----------------------------------------------------------------------------

    def _chart(self) -> None:
        """Voltage ratio against operating temperature: one marker series per technology and
        one line per distinct voltage-ratio fail limit of the rules in force."""
        points = chart_points(self.report)
        if len(points.ac):
            self.notes.append(f"Voltage chart: {len(points.ac)} AC-rated placements "
                              "(rated V AC) are not plotted: the chart's limit lines are DC "
                              "derating limits, which do not apply to them.")
        plotted = points.dc
        n = self._fit(len(plotted), "Chart data")
        plotted = plotted.iloc[:n]
        plotted = plotted.assign(_tech=plotted["technology"]).sort_values(
            ["_tech"], kind="stable")
        temps = plotted["t_operating_c"].astype(float)
        lines = limit_lines(self.report.rules, temps.min() if len(temps) else None,
                            temps.max() if len(temps) else None)
        rows = max(len(plotted), sum(len(xs) for _, xs, _ in lines))

        line_name: list = [None] * rows
        line_x: list = [None] * rows
        line_y: list = [None] * rows
        blocks = []
        pos = 0
        for name, xs, ys in lines:
            blocks.append((name, pos, len(xs)))
            line_name[pos] = name
            for i, (x, y) in enumerate(zip(xs, ys)):
                line_x[pos + i], line_y[pos + i] = float(x), float(y)
            pos += len(xs)
        pad = [None] * (rows - len(plotted))
        cols = [
            _Column("technology", _text(plotted["_tech"]) + pad, width=24),
            _Column("designator", _text(plotted["refdes"]) + pad, width=12),
            _Column(header_of("t_operating_c"), _floats(temps) + pad, "bc degC", width=14),
            _Column(header_of("voltage_ratio"),
                    _floats(plotted["voltage_ratio"].astype(float)) + pad,
                    "bc ratio", width=14),
            _Column("", [None] * rows, width=3),
            _Column("limit line", line_name, width=40),
            _Column(header_of("t_operating_c"), line_x, "bc degC", width=14),
            _Column("voltage ratio limit [%]", line_y, "bc ratio", width=18),
        ]
        data = self._table("Chart data", cols, rows, freeze="A2", auto_filter=False)

        chart = ScatterChart(scatterStyle="lineMarker")
        chart.title = "Voltage ratio against operating temperature"
        chart.x_axis.title = "operating temperature [°C]"
        chart.y_axis.title = "voltage ratio (applied peak / rated)"
        chart.y_axis.number_format = "0%"
        chart.y_axis.scaling.min = 0
        if lines:
            chart.x_axis.scaling.min = min(min(xs) for _, xs, _ in lines)
            chart.x_axis.scaling.max = max(max(xs) for _, xs, _ in lines)
        chart.x_axis.delete = False
        chart.y_axis.delete = False
        # The limit-line names are long: the legend goes below the plot, which keeps the full
        # width (a legend at the right squeezes the plot to a strip in some spreadsheets).
        chart.legend.position = "b"
        chart.x_axis.majorUnit = 10
        chart.y_axis.majorUnit = 0.1
        chart.x_axis.number_format = '0" °C"'
        chart.plot_area.layout = Layout(manualLayout=ManualLayout(
            layoutTarget="inner", xMode="edge", yMode="edge", x=0.08, y=0.08, w=0.88, h=0.55))
        groups = plotted.groupby("_tech", sort=True).indices if len(plotted) else {}
        for name, idx in groups.items():
            first, last = int(idx.min()) + 2, int(idx.max()) + 2
            s = Series(Reference(data, min_col=4, min_row=first, max_row=last),
                       Reference(data, min_col=3, min_row=first, max_row=last), title=name)
            colour = TECHNOLOGY_COLOURS.get(name, "8C8C8C")
            s.marker = Marker(symbol="circle", size=5)
            s.marker.graphicalProperties = _props(fill=colour, line=colour)
            s.graphicalProperties.line.noFill = True
            s.smooth = False
            chart.series.append(s)
        for k, (name, first, count) in enumerate(blocks):
            lo, hi = first + 2, first + count + 1
            s = Series(Reference(data, min_col=8, min_row=lo, max_row=hi),
                       Reference(data, min_col=7, min_row=lo, max_row=hi), title=name)
            s.marker = Marker(symbol="none")
            s.graphicalProperties.line.solidFill = LIMIT_LINE_COLOUR
            s.graphicalProperties.line.prstDash = LIMIT_DASHES[k % len(LIMIT_DASHES)]
            s.graphicalProperties.line.width = 19050  # EMU: 1.5 pt
            s.smooth = False
            chart.series.append(s)
        # A normal worksheet with the chart anchored to its cells at a real size renders in
        # every spreadsheet (a chartsheet's drawing may import as a 0 x 0 frame).
        sheet = self.wb.create_sheet("Voltage chart", index=len(self.wb.sheetnames) - 1)
        sheet.column_dimensions["A"].width = 140
        _print_setup(sheet, "A1:A56", landscape=True, one_page=True)
        sheet.append([self._put_on(sheet, "Voltage ratio against operating temperature, with "
                                   "each voltage-ratio fail limit of the rules in force; the "
                                   "points are on the Chart data sheet.", "bc section")])
        if len(points.ac):
            sheet.append([f"AC-rated placements ({len(points.ac)}) are not plotted: the limit "
                          "lines are DC derating limits, which do not apply to them."])
        chart.width, chart.height = 25.0, 24.0  # cm: room for the legend below the plot
        sheet.add_chart(chart, "A4")

    # ---- summary ---------------------------------------------------------------------------

    def _summary(self, ws) -> None:
        r = self.report
        for col, width in zip("ABCD", (34, 72, 68, 14)):
            ws.column_dimensions[col].width = width
        put = self._put
        rows = [0]
        _print_setup(ws, "A1:D1", landscape=False)

        def append(values) -> None:
            rows[0] += 1
            ws.append(values)
        append([put("bomcheck capacitor derating audit", "bc title")])
        append(["overall status", put(r.status, self.status_style(r.status))])
        append(["tool version", f"bomcheck {r.tool_version}"])
        append([self.generated_label, put(self.generated, "bc date")])
        append([])

        append([put("Rule sets", "bc section")])
        append(self._header_cells(("rule set", "title", "file", "version")))
        for d in r.rulesets:
            extends = f" (extends {d['extends']})" if d.get("extends") else ""
            append([put(d.get("name")), put(f"{d.get('title') or ''}{extends}"),
                       put(d.get("path")), put(d.get("version"))])
        sources = r.rulesets[-1].get("sources", []) if r.rulesets else []
        append([])
        append([put("Sources of the rules", "bc section")])
        append(self._header_cells(("source", "title", "clause", "confidence")))
        for s in sources:
            append([put(s.get("id")), put(s.get("title")), put(s.get("clause")),
                       put(s.get("confidence"))])
        append([])
        append([put("Inputs", "bc section")])
        append(self._header_cells(("input", "path", "SHA-256")))
        for d in r.inputs:
            append([put(d.get("role")), put(d.get("path")), put(d.get("sha256"))])

        t = r.totals
        append([])
        append([put("Placements by status (worst first)", "bc section")])
        append(self._header_cells(("status", "placements")))
        statuses = [s for s in reversed(STATUS_ORDER)]
        statuses += sorted(k for k in STATUS_PALETTE if k in t and k not in statuses)
        for s in statuses:
            append([put(s, self.status_style(s)), put(int(t.get(s, 0)), "bc count")])
        append(["placements audited", put(int(t.get("audited", len(r.table))), "bc count")])

        append([])
        append([put("Where every row went", "bc section")])
        labels = dict(_TOTAL_LABELS)
        keys = [k for k, _ in _TOTAL_LABELS if k in t]
        keys += [k for k in t if k not in labels and k not in STATUS_PALETTE and k not in keys]
        for k in keys:
            append([labels.get(k, k.replace("_", " ")), put(int(t[k]), "bc count")])
        for identity in _identities(t):
            append(identity)
        not_audited = len(r.not_audited()) + len(r.design_unmatched)
        append(["Not audited sheet rows", put(not_audited, "bc count"),
                   "not-fitted placements + non-capacitor rows + unreadable rows + design rows "
                   "not in the BOM"])

        waivers = [f.to_dict() for f in getattr(r, "waiver_findings", ())]
        if waivers:
            append([])
            append([put("Waivers", "bc section")])
            append(self._header_cells(("waiver", "what became of it", "approved by / expires",
                                          "file row")))
            for d in waivers:
                append([put(f"{d.get('code')}: {d.get('refdes')} {d.get('rule')}"),
                           put(d.get("message")),
                           put(f"{d.get('approved_by') or ''} / {d.get('expires') or ''}"),
                           d.get("row")])

        if self.notes:
            append([])
            append([put("Notes", "bc section")])
            for note in self.notes:
                lines = math.ceil(len(note) * 1.1 / ws.column_dimensions["B"].width)
                ws.row_dimensions[rows[0] + 1].height = 15 * max(1, lines) + 3
                append(["note", put(note, "bc wrap")])
        append([])
        append(["environment", put(r.environment)])
        if r.input_warnings:
            append([put("Input warnings", "bc section")])
            for w in r.input_warnings:
                append(["input warning", put(str(w), "bc wrap")])
        append([])
        append([put("Cautions", "bc section")])
        for i, caution in enumerate(r.cautions, 1):
            # Wrapped text needs its row height: about 1.1 characters of the column per
            # character of Calibri 11, 15 points a line.
            lines = math.ceil(len(caution) * 1.1 / ws.column_dimensions["B"].width)
            ws.row_dimensions[rows[0] + 1].height = 15 * max(1, lines) + 3
            append([f"caution {i}", put(caution, "bc wrap")])
        ws.print_area = f"A1:D{rows[0]}"

    # ---- writing ---------------------------------------------------------------------------

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

    def _header_cells(self, headers: Sequence[str]) -> list:
        return [self._put(h, "bc header") for h in headers]

    def _table(self, title: str, cols: list[_Column], n: int, *, freeze: str,
               auto_filter: bool = True, print_cols: int | None = None):
        """A sheet of ``n`` rows under a frozen, filtered header row; it prints landscape, one
        page wide, its first ``print_cols`` columns (default: all). Rows whose wrapped text
        (columns styled ``bc wrap``) needs more than one line get the height for it."""
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
        wrapped = [(c.values, w) for c, w in zip(cols, widths) if c.style == "bc wrap"]
        if wrapped:
            for i in range(n):
                need = max((len(v) * 1.1 / w for values, w in wrapped
                            if isinstance(v := values[i], str)), default=0)
                if need > 1:
                    ws.row_dimensions[i + 2].height = 15 * min(8, math.ceil(need)) + 2
        header = []
        for col in cols:
            cell = WriteOnlyCell(ws, col.header)
            cell.style = "bc header"
            header.append(cell)
        ws.append(header)
        # openpyxl writes each appended row at once, so one styled cell per column and style
        # can carry every row's value: no new cell and no style lookup per value.
        templates: list[dict[str, WriteOnlyCell]] = [{} for _ in cols]

        def template(j: int, style: str) -> WriteOnlyCell:
            cell = templates[j].get(style)
            if cell is None:
                cell = templates[j][style] = WriteOnlyCell(ws)
                cell.style = style
            return cell

        plan = [(j, c.values, c.style if isinstance(c.style, list) else None,
                 None if isinstance(c.style, list) else c.style) for j, c in enumerate(cols)]
        for i in range(n):
            row = []
            for j, values, per_row, fixed in plan:
                v = values[i]
                if v is None:
                    row.append(None)
                    continue
                style = per_row[i] if per_row is not None else fixed
                if type(v) is str and (starts_formula(v) or v in ERROR_CODES):
                    cell = template(j, style or "bc text")
                    cell.value = v
                    cell.data_type = "s"
                    row.append(cell)
                elif style is None:
                    row.append(v)
                else:
                    cell = template(j, style)
                    cell.value = v
                    row.append(cell)
            ws.append(row)
        return ws


# ---- values for cells ----------------------------------------------------------------------

def _metric_kind(metric) -> str | None:
    """The column kind of a metric's values (None for no metric, e.g. audit-made verdicts)."""
    m = METRICS.get(metric) if isinstance(metric, str) else None
    if m is None:
        return None
    if m.percent:
        return "ratio"
    return _UNIT_KINDS.get(m.unit, "num")


def _text(series) -> list:
    """Cell values of a text column: None for missing, tuples joined, text made safe."""
    if not isinstance(series, pd.Series):
        series = pd.Series(series, dtype=object)
    values = series.astype(object).tolist()
    cache: dict = {}
    out = []
    for v in values:
        if v is None or v is pd.NA or (isinstance(v, float) and v != v):
            out.append(None)
            continue
        got = cache.get(v) if isinstance(v, str) else None
        if got is None:
            got = _cell_text(v)
            if isinstance(v, str):
                cache[v] = got
        out.append(got)
    return out


def _cell_text(v) -> str | None:
    if v is None or v is pd.NA or (isinstance(v, float) and v != v):
        return None
    if isinstance(v, (tuple, list)):
        v = "; ".join(str(x) for x in v)
    v = str(v)
    return safe_text(v) if v else None


def _floats(values: pd.Series) -> list:
    """Python floats, None for NaN."""
    arr = np.asarray(values, dtype=float)
    return pd.Series(arr, dtype=object).where(~np.isnan(arr), None).tolist()


def _numbers(series: pd.Series, kind: str) -> list:
    """Numbers in the kind's stored unit (uF for farads, fractions for percents), None for NaN."""
    x = pd.to_numeric(series, errors="coerce").astype(float) * _KINDS[kind].scale
    if kind == "int":
        arr = x.to_numpy()
        return [None if v != v else int(v) for v in arr.tolist()]
    if _KINDS[kind].scale != 1.0:
        # Drop the binary noise of the scaling (4.7e-6 F x 1e6 = 4.699999999999999 uF).
        return [None if v != v else float(f"{v:.12g}") for v in x.to_numpy().tolist()]
    return _floats(x)


def _bools(series: pd.Series) -> list:
    return [v if isinstance(v, bool) else (bool(v) if isinstance(v, np.bool_) else None)
            for v in series.astype(object).tolist()]


def _print_setup(ws, area: str, *, landscape: bool, title_rows: str | None = None,
                 one_page: bool = False) -> None:
    """Page setup for a printed record: A4, orientation, fit to one page wide (as many pages
    tall as needed, or one page), the header row repeated on every page, the print area.
    Called before the sheet's first row: a write-only sheet writes its properties first."""
    ws.page_setup.orientation = "landscape" if landscape else "portrait"
    ws.page_setup.paperSize = "9"  # A4 (ECMA-376 paper size code 9)
    ws.page_setup.fitToWidth = 1
    ws.page_setup.fitToHeight = 1 if one_page else 0
    ws.sheet_properties.pageSetUpPr.fitToPage = True
    ws.print_options.gridLines = False
    if title_rows:
        ws.print_title_rows = title_rows
    ws.print_area = area


def _number_width(values: list, kind: _Kind, header: str) -> float:
    """A column width (characters) that shows every number in ``kind``'s format in full: its
    integer digits with thousands separators, the format's decimals and its unit."""
    fmt = kind.fmt or ""
    number = fmt.split('"')[0]
    decimals = len(number.split(".")[1].rstrip("%")) if "." in number else 0
    suffix = len(kind.unit) + 1 if kind.unit else 0
    x = pd.to_numeric(pd.Series(values, dtype=object), errors="coerce").astype(float)
    x = x[np.isfinite(x.to_numpy())]
    longest = 0
    if len(x):  # the widest number: the largest magnitude, a sign if any is negative
        biggest = float(x.abs().max()) * (100 if number.endswith("%") else 1)
        longest = len(f"{biggest:,.0f}") + bool((x < 0).any())
    need = longest + (decimals + 1 if decimals else 0) + suffix + 2
    return float(min(40, max(10, need, min(len(header), 18))))


def _width(col: _Column) -> float:
    """Header or the longest of the first few hundred values, within 8..60 characters."""
    longest = len(col.header)
    for v in col.values[:300]:
        if isinstance(v, str):
            longest = max(longest, len(v))
        elif isinstance(v, float):
            longest = max(longest, 9)
    return float(min(60, max(8, longest + 2)))


def _curve_points(metric: str, limit) -> str:
    """``85 °C: 100 %; 125 °C: 66.67 %`` (with ``step`` for a step curve)."""
    from bomcheck.evaluate.rules import axis_quantity
    from bomcheck.quantity import format_quantity

    m = METRICS.get(metric)
    unit, pct = (m.unit, m.percent) if m else ("", False)
    ax = axis_quantity(limit.over) or ("", "", False)
    pts = "; ".join(f"{format_quantity(x, ax[1], ax[2])}: {format_quantity(y, unit, pct)}"
                    for x, y in zip(limit.xs, limit.ys))
    return (pts + " (step)" if limit.step else pts).replace("degC", "°C")


def _identities(t: dict) -> list[list]:
    """The accounting identities with their numbers and whether they hold."""
    out = []
    keys = ("rows_read", "capacitor_rows", "non_capacitor_rows", "unreadable_rows")
    if all(k in t for k in keys):
        from bomcheck.parse.accounting import ROW_CATEGORIES

        terms = [(k, label) for k, label in ROW_CATEGORIES
                 if k in keys or int(t.get(k, 0))]  # approved-source... rows only when present
        total = sum(int(t[k]) for k, _ in terms)
        out.append(["rows read = " + " + ".join(label for _, label in terms),
                    f"{int(t['rows_read']):,} = " + " + ".join(f"{int(t[k]):,}" for k, _ in terms),
                    "holds" if int(t["rows_read"]) == total else "DOES NOT HOLD"])
    keys = ("placements", "fitted", "not_fitted")
    if all(k in t for k in keys):
        a, b, c = (int(t[k]) for k in keys)
        out.append(["placements = fitted + not fitted", f"{a:,} = {b:,} + {c:,}",
                    "holds" if a == b + c else "DOES NOT HOLD"])
    return out


def _props(*, fill: str, line: str):
    from openpyxl.chart.shapes import GraphicalProperties

    props = GraphicalProperties(solidFill=fill)
    props.line.solidFill = line
    return props

"""Report stage, spreadsheet edge: what goes into the workbook's cells (column kinds with their
number formats and units, headers, text made safe, numbers in their stored units, widths).

A metric column takes its header and unit from ``vocabulary.METRICS`` (label, display unit);
the spec, condition and parts-data fields have theirs here. Text from input files is kept as
text: ``safe_text`` replaces what XML forbids and cuts to Excel's cell size, and ``is_unsafe``
says when a text must be stored as a text cell (``textsafe.spreadsheet_unsafe``).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from bomcheck.evaluate.rule_model import axis_quantity
from bomcheck.frozen import frozen
from bomcheck.quantity import format_quantity
from bomcheck.render.textsafe import FORMULA_LEADS, spreadsheet_unsafe, xml_text
from bomcheck.report.model import CONDITION_FIELDS, METRIC_FIELDS, SPEC_FIELDS
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


@frozen
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

# The kinds of the fields that are not metrics (a metric's comes from its unit): spec fields,
# the worst-case capacitance factors and the parts data.
_FIELD_KINDS: dict[str, str] = {
    "row": "int", "qty": "num", "is_capacitor": "bool", "capacitance_f": "uF", "voltage_v": "V",
    "tol_minus_pct": "pct", "tol_plus_pct": "pct", "tol_abs_f": "pF", "dielectric_class": "int",
    "cap_change_minus_pct": "pct", "cap_change_plus_pct": "pct", "tc_ppm": "ppm",
    "tc_tol_ppm": "ppm", "temp_min_c": "degC", "temp_max_c": "degC", "emi_filter": "bool",
    "polarized": "bool", "design_row": "int", "c_tol_factor": "ratio", "c_temp_factor": "ratio",
    "c_bias_factor": "ratio", "c_aging_factor": "ratio",
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
    "condition_source": "conditions from", "c_tol_factor": "tolerance factor",
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
    label = METRICS[name].title if name in METRICS else _LABELS.get(name)
    if label is None:
        base = name[:-6] if name.endswith("_basis") else None
        label = (f"{header_of(base).split(' [')[0]}: basis" if base
                 else name.replace("_", " "))
    unit = _KINDS[_kind_of(name)].unit
    return f"{label} [{unit}]" if unit else label


def _kind_of(name: str) -> str:
    """The column kind of a named field ("text" when none is known): a metric's from its
    display unit (``vocabulary.METRICS``), any other field's from the tables here."""
    kind = _metric_kind(name) if name in METRICS else _FIELD_KINDS.get(name)
    if kind is None and name in CONDITIONS:
        kind = _UNIT_KINDS.get(CONDITIONS[name][1])
    return kind or "text"


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
    return spreadsheet_unsafe(value)


@dataclass
class _Column:
    """One sheet column: header, one value per row, and the named style of each value (one name
    for the whole column, or a list with one per row)."""

    header: str
    values: list
    style: str | list | None = None
    width: float | None = None


def _metric_kind(metric) -> str | None:
    """The column kind of a metric's values (None for no metric, e.g. audit-made verdicts)."""
    m = METRICS.get(metric) if isinstance(metric, str) else None
    if m is None:
        return None
    if m.percent:
        return "ratio"
    return _UNIT_KINDS.get(m.unit, "num")


def _text(series) -> list:
    """Cell values of a text column: None for missing, tuples joined, text made safe (each
    distinct value once)."""
    if not isinstance(series, pd.Series):
        series = pd.Series(series, dtype=object)
    values = series.astype(object)
    try:
        codes, uniques = pd.factorize(values, use_na_sentinel=True)
    except TypeError:  # an unhashable cell (a list): one value at a time
        return [_cell_text(v) for v in values.tolist()]
    cells = np.empty(len(uniques) + 1, dtype=object)  # the last one for missing values (-1)
    cells[:-1] = [_cell_text(u) for u in uniques.tolist()]
    return cells[codes].tolist()


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


def _number_width(values, kind: _Kind, header: str) -> float:
    """A column width (characters) that shows every number in ``kind``'s format in full: its
    integer digits with thousands separators, the format's decimals and its unit."""
    fmt = kind.fmt or ""
    number = fmt.split('"')[0]
    decimals = len(number.split(".")[1].rstrip("%")) if "." in number else 0
    suffix = len(kind.unit) + 1 if kind.unit else 0
    x = np.asarray(values, dtype=float)  # None becomes NaN
    x = x[np.isfinite(x)]
    longest = 0
    if len(x):  # the widest number: the largest magnitude, a sign if any is negative
        biggest = float(np.abs(x).max()) * (100 if number.endswith("%") else 1)
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
    m = METRICS.get(metric)
    unit, pct = (m.unit, m.percent) if m else ("", False)
    ax = axis_quantity(limit.over) or ("", "", False)
    pts = "; ".join(f"{format_quantity(x, ax[1], ax[2])}: {format_quantity(y, unit, pct)}"
                    for x, y in zip(limit.xs, limit.ys))
    return (pts + " (step)" if limit.step else pts).replace("degC", "°C")



def filled(cols: list[_Column], n: int) -> list[_Column]:
    """The columns with a value in at least one of their ``n`` rows: a column empty on every
    row is not written (a sheet of blank columns hides the rest). A sheet without rows keeps
    its headers, which say what it would list."""
    if n == 0:
        return cols
    return [c for c in cols if c.values[:n].count(None) < min(n, len(c.values))]


# Shown among the review columns ("BOM row") or not a placement's figure (the line's quantity).
_REVIEW_FIELDS = ("row", "qty")


def placement_fields(columns) -> list[str]:
    """The fields of the placement table the Placements sheet shows after its review columns,
    in order: every spec field, condition and metric the JSON report carries
    (``report.model``), the parts-data figures (ESR, rated ripple and surge current, life...),
    and the basis of each metric that can rest on assumed data."""
    names = [*SPEC_FIELDS, *CONDITION_FIELDS, *METRIC_FIELDS]
    names += [c for c in _FIELD_KINDS if c not in names and c not in _REVIEW_FIELDS]
    names += [c for c in columns if str(c).endswith("_basis") and c not in names]
    present = set(columns)
    return [n for n in dict.fromkeys(names) if n in present]

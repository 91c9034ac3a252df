"""Report stage, spreadsheet edge: the workbook's voltage-ratio chart and its Chart data sheet.

Voltage ratio against operating temperature: one marker series per technology and one line per
distinct voltage-ratio fail limit of the rules in force (``report.chartdata``). The chart sits
on a normal worksheet, anchored to its cells at a real size, which renders in every spreadsheet
(a chartsheet's drawing may import as a 0 x 0 frame).
"""

from __future__ import annotations

from openpyxl.chart import Reference, ScatterChart, Series
from openpyxl.chart.layout import Layout, ManualLayout
from openpyxl.chart.marker import Marker
from openpyxl.chart.shapes import GraphicalProperties

from bomcheck.render.xlsx_cells import _Column, _floats, _print_setup, _text, filled, header_of
from bomcheck.report.chartdata import chart_points, limit_lines

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


def write_chart(book) -> None:
    """The Chart data sheet and the Voltage chart sheet of ``book`` (an ``xlsx._Book``)."""
    points = chart_points(book.report)
    if len(points.ac):
        book.notes.append(f"Voltage chart: {len(points.ac)} AC-rated placements "
                          "(rated V AC) are not plotted: the chart's limit lines are DC "
                          "derating limits, which do not apply to them.")
    plotted = points.dc.iloc[:book._fit(len(points.dc), "Chart data")]
    plotted = plotted.assign(_tech=plotted["technology"]).sort_values(["_tech"], kind="stable")
    temps = plotted["t_operating_c"].astype(float)
    lines = limit_lines(book.report.rules, temps.min() if len(temps) else None,
                        temps.max() if len(temps) else None)
    roles, rows, blocks = _data_columns(plotted, temps, lines)
    cols = filled(list(roles.values()), rows)
    # Each role's column number on the sheet (None when the column is empty and not written).
    pos = {role: next((n for n, c in enumerate(cols, 1) if c is col), None)
           for role, col in roles.items()}
    data = book._table("Chart data", cols, rows, freeze="A2", auto_filter=False)
    chart = _scatter(lines)
    _add_series(chart, data, plotted, blocks, pos)
    sheet = book.wb.create_sheet("Voltage chart", index=len(book.wb.sheetnames) - 1)
    sheet.column_dimensions["A"].width = 140
    _print_setup(sheet, "A1:A56", landscape=True, one_page=True)
    sheet.append([book._put_on(sheet, "Voltage ratio against operating temperature, with "
                               "each voltage-ratio fail limit of the rules in force; the "
                               "points are on the Chart data sheet.", "bc section")])
    if len(points.ac):
        sheet.append([f"AC-rated placements ({len(points.ac)}) are not plotted: the limit "
                      "lines are DC derating limits, which do not apply to them."])
    chart.width, chart.height = 25.0, 24.0  # cm: room for the legend below the plot
    sheet.add_chart(chart, "A4")


def _data_columns(plotted, temps, lines) -> tuple[dict[str, _Column], int, list]:
    """The Chart data columns by role (the points, then the limit lines one block of rows
    each), the number of rows and each line's (name, first row, row count)."""
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
    roles = {
        "technology": _Column("technology", _text(plotted["_tech"]) + pad, width=24),
        "designator": _Column("designator", _text(plotted["refdes"]) + pad, width=12),
        "points t": _Column(header_of("t_operating_c"), _floats(temps) + pad, "bc degC",
                            width=14),
        "points v": _Column(header_of("voltage_ratio"),
                            _floats(plotted["voltage_ratio"].astype(float)) + pad, "bc ratio",
                            width=14),
        "line": _Column("limit line", line_name, width=40),
        "lines t": _Column(header_of("t_operating_c"), line_x, "bc degC", width=14),
        "lines v": _Column("voltage ratio limit [%]", line_y, "bc ratio", width=18),
    }
    return roles, rows, blocks


def _scatter(lines) -> ScatterChart:
    """The chart with its titles, axes (percent, degrees) and the legend below the plot."""
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
    return chart


def _add_series(chart: ScatterChart, data, plotted, blocks, pos: dict) -> None:
    """One marker series per technology and one line series per limit line, referring to the
    Chart data columns at ``pos``."""
    groups = plotted.groupby("_tech", sort=True).indices if len(plotted) else {}
    for name, idx in groups.items():
        first, last = int(idx.min()) + 2, int(idx.max()) + 2
        s = Series(Reference(data, min_col=pos["points v"], min_row=first, max_row=last),
                   Reference(data, min_col=pos["points t"], min_row=first, max_row=last),
                   title=name)
        colour = TECHNOLOGY_COLOURS.get(name, "8C8C8C")
        s.marker = Marker(symbol="circle", size=5)
        s.marker.graphicalProperties = _props(fill=colour, line=colour)
        s.graphicalProperties.line.noFill = True
        s.smooth = False
        chart.series.append(s)
    for k, (name, first, count) in enumerate(blocks):
        lo, hi = first + 2, first + count + 1
        s = Series(Reference(data, min_col=pos["lines v"], min_row=lo, max_row=hi),
                   Reference(data, min_col=pos["lines t"], min_row=lo, max_row=hi), title=name)
        s.marker = Marker(symbol="none")
        s.graphicalProperties.line.solidFill = LIMIT_LINE_COLOUR
        s.graphicalProperties.line.prstDash = LIMIT_DASHES[k % len(LIMIT_DASHES)]
        s.graphicalProperties.line.width = 19050  # EMU: 1.5 pt
        s.smooth = False
        chart.series.append(s)


def _props(*, fill: str, line: str) -> GraphicalProperties:
    props = GraphicalProperties(solidFill=fill)
    props.line.solidFill = line
    return props

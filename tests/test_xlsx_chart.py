"""The workbook's voltage chart and its Chart data sheet (bomcheck.render.xlsx_chart): one marker
series per technology, one line per distinct limit, references to the columns written."""

import re
import zipfile

from sheets import book, report  # noqa: F401 (fixtures)
from sheets import table

from bomcheck.render import xlsx


# Moved from test_xlsx.py.
def test_chart_series_per_technology_and_limit_line(book, report):
    charts = book["Voltage chart"]._charts
    assert len(charts) == 1
    chart = charts[0]
    assert type(chart).__name__ == "ScatterChart"
    t = report.table
    plotted = t[t["voltage_ratio"].notna() & t["t_operating_c"].notna()]
    technologies = set(plotted["technology"].fillna(xlsx.UNKNOWN_TECHNOLOGY))
    # DC voltage-ratio rules only: AC-rated parts are plotted apart from the DC limit lines
    rules = [r for r in report.rules.rules if r.enabled and r.metric == "voltage_ratio"
             and r.applies.voltage_kind != "ac"]
    # Distinct lines: constants by value, curves by their points.
    shapes = {(r.fail.value,) if not r.fail.is_curve else (r.fail.xs, r.fail.ys, r.fail.step)
              for r in rules}
    titles = [s.tx.v for s in chart.series]
    assert len(chart.series) == len(technologies) + len(shapes)
    assert technologies <= set(titles)
    lines = [x for x in titles if x.startswith("limit")]
    for rule in rules:
        assert sum(rule.id in x.replace(",", " ").split() for x in lines) == 1, rule.id


def test_chart_data_holds_every_plotted_placement(book, report):
    header, rows = table(book["Chart data"])
    t = report.table
    # AC-rated parts are kept off the DC limit lines (they are not judged against them).
    dc = t["voltage_kind"] != "ac"
    n = int((t["voltage_ratio"].notna() & t["t_operating_c"].notna() & dc).sum())
    assert n < int((t["voltage_ratio"].notna() & t["t_operating_c"].notna()).sum())
    assert sum(1 for r in rows if r[1] is not None) == n


def test_chart_series_point_at_their_columns(sample_parts_outputs):
    # The chart's references follow the Chart data columns that are written (an empty column
    # left out shifts the ones after it).
    _, wb, path = sample_parts_outputs
    headers = {cell.column_letter: cell.value for cell in wb["Chart data"][1]}
    with zipfile.ZipFile(path) as z:
        chart = next(z.read(n).decode("utf-8") for n in z.namelist()
                     if n.startswith("xl/charts/chart"))
    used = set(re.findall(r"'Chart data'!\$([A-Z]+)\$", chart))
    assert {headers[c] for c in used} == {
        xlsx.header_of("t_operating_c"), xlsx.header_of("voltage_ratio"),
        "voltage ratio limit [%]"}


def test_ac_rated_parts_are_left_off_the_chart_and_the_sheet_says_why(book, report):
    ac = int(((report.table["voltage_kind"] == "ac") & report.table["voltage_ratio"].notna()
              & report.table["t_operating_c"].notna()).sum())
    assert ac  # the sample board has X/Y safety capacitors (rated V AC)
    first = [r[0] for r in book["Voltage chart"].iter_rows(values_only=True)]
    assert f"AC-rated placements ({ac}) are not plotted" in " ".join(str(x) for x in first)


def test_the_chart_names_its_axes_with_units(book):
    chart = book["Voltage chart"]._charts[0]
    titles = ["".join(r.t for p in axis.title.tx.rich.p for r in (p.r or []))
              for axis in (chart.x_axis, chart.y_axis)]
    assert titles == ["operating temperature [°C]", "voltage ratio (applied peak / rated)"]
    assert chart.y_axis.scaling.min == 0  # a ratio axis starts at zero (common practice)


def test_limit_lines_are_blocks_of_rows_under_their_name(book, report):
    header, rows = table(book["Chart data"])
    names = [(i, r[header.index("limit line")]) for i, r in enumerate(rows)
             if r[header.index("limit line")]]
    lines = [r for r in report.rules.rules if r.enabled and r.metric == "voltage_ratio"]
    assert names and len(names) <= len(lines)
    for i, name in names:
        assert name.startswith("limit ")
        assert rows[i][header.index("voltage ratio limit [%]")] is not None

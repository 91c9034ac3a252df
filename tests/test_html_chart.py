"""The HTML page's chart (bomcheck.render.html_chart): inline SVG of voltage ratio against
operating temperature with the rules' limit lines, AC-rated parts apart."""

import re
import xml.etree.ElementTree as ET

import pandas as pd
import pytest

from bomcheck.render.html import audit_html
from bomcheck.render.html_chart import MAX_LABELS, chart_section, svg_chart

SVG = "{http://www.w3.org/2000/svg}"


@pytest.fixture(scope="module")
def page(sample_report_bare):
    return audit_html(sample_report_bare)


def _points(rows) -> pd.DataFrame:
    return pd.DataFrame(rows, columns=["refdes", "technology", "t_operating_c", "voltage_ratio",
                                       "status"])


# Moved from test_html_report.py.
def test_chart_has_limit_lines_points_and_ac_apart(page, sample_report_bare):
    report = sample_report_bare
    assert page.count("<svg") == 2  # DC chart, and the AC-rated parts apart
    dc = page[page.index('id="chart-dc"'):page.index('id="chart-ac"')]
    assert dc.count('class="limit"') >= 3
    ac_rated = set(report.table.loc[report.table["voltage_kind"] == "ac", "refdes"])
    assert ac_rated and not any(f"<title>{r}:" in dc for r in ac_rated)
    ac = page[page.index('id="chart-ac"'):]
    assert all(f"<title>{r}:" in ac for r in ac_rated)


def test_chart_section_is_the_pages_chart(page, sample_report_bare):
    section = chart_section(sample_report_bare)
    assert section[0].startswith('<h2 id="chart">') and len(section) == 4  # AC parts apart
    assert all(part in page for part in section)


def test_svg_is_well_formed_xml_with_one_point_per_placement():
    # W3C SVG 1.1: an inline <svg> in the SVG namespace is XML; each point carries a <title>
    points = _points([("C1", "ceramic", 40.0, 0.5, "pass"), ("C2", "tantalum", 85.0, 0.8,
                                                               "fail")])
    lines = [("limit 60 %: R-V", [20.0, 100.0], [0.6, 0.6])]
    text = svg_chart(points, lines, "Title & <more>", chart_id="c")
    figure = ET.fromstring(text)
    svg = figure.find(f"{SVG}svg")
    circles = [c for c in svg.iter(f"{SVG}circle") if c.get("class") == "point"]
    assert len(circles) == 2
    assert [c.find(f"{SVG}title").text for c in circles] == [
        "C1: 50.0% at 40 °C (ceramic, pass)", "C2: 80.0% at 85 °C (tantalum, fail)"]
    assert svg.find(f"{SVG}title").text == "Title & <more>"  # escaped, then read back
    (limit,) = [p for p in svg.iter(f"{SVG}polyline") if p.get("class") == "limit"]
    assert limit.find(f"{SVG}title").text == "limit 60 %: R-V"


def test_a_higher_ratio_is_drawn_higher_and_a_hotter_part_further_right():
    # SVG's y axis points down (W3C SVG 1.1, 7.3 the initial coordinate system)
    points = _points([("C1", "ceramic", 40.0, 0.2, "pass"), ("C2", "ceramic", 90.0, 0.9,
                                                               "fail")])
    text = svg_chart(points, [], "t", chart_id="c")
    (x1, y1), (x2, y2) = [(float(a), float(b)) for a, b in
                          re.findall(r'class="point" cx="([\d.]+)" cy="([\d.]+)"', text)]
    assert x2 > x1 and y2 < y1


def test_points_at_one_spot_share_one_label():
    points = _points([("C1", "ceramic", 40.0, 0.5, "pass"), ("C2", "ceramic", 40.0, 0.5,
                                                               "pass")])
    text = svg_chart(points, [], "t", chart_id="c")
    assert re.findall(r'class="lbl"[^>]*>([^<]+)<', text) == ["C1 +1"]


def test_a_crowded_chart_names_only_the_most_stressed_spots():
    # Every point is drawn (its tooltip names it); labels are bounded, so a board of thousands
    # of placements does not stall the page on label placement. The highest ratio is named.
    rows = [(f"C{i}", "ceramic", 20.0 + (i % 100), 0.001 * (i + 1), "pass") for i in range(3000)]
    text = svg_chart(_points(rows), [], "t", chart_id="c")
    labels = re.findall(r'class="lbl"[^>]*>([^<]+)<', text)
    assert text.count('class="point"') == 3000
    assert 0 < len(labels) <= MAX_LABELS
    assert "C2999" in labels and "C0" not in labels
    ET.fromstring(text)


def test_an_empty_chart_still_draws_its_axes():
    text = svg_chart(_points([]), [], "nothing plotted", chart_id="c")
    ET.fromstring(text)
    assert "operating temperature [°C]" in text and 'class="point"' not in text

"""What the stress-versus-temperature chart plots (bomcheck.report.chartdata), shared by the
workbook and the HTML page: the placements (DC-judged and AC-rated apart) and the limit lines."""

from dataclasses import replace

import pytest

from bomcheck.evaluate.rules import load_rules
from bomcheck.report.chartdata import UNKNOWN_TECHNOLOGY, chart_points, limit_lines


# Moved from test_xlsx.py.
def test_step_limit_drawn_as_a_step():
    # NASA EEE-INST-002 Section C1 Table 4, step reading (strict-step): 50 % to 70 degC, 30 % above
    lines = limit_lines(load_rules(["strict-step"]), 40.0, 100.0)
    name, xs, ys = next(x for x in lines if "EEE-TAN-V-STEP" in x[0])
    assert (70.0, 0.5) in zip(xs, ys) and (70.0, 0.3) in zip(xs, ys)
    assert ys[0] == 0.5 and ys[-1] == 0.3 and xs == sorted(xs)


def test_linear_limit_passes_through_its_points():
    # industrial.toml IND-FLM-CAT: 100 % to 85 degC, 75 % at 105 degC, 50 % at 125 degC
    lines = limit_lines(load_rules(["industrial"]), 55.0, 95.0)
    name, xs, ys = next(x for x in lines if "IND-FLM-CAT" in x[0])
    assert dict(zip(xs, ys))[105.0] == pytest.approx(0.75)
    assert xs[0] < 55.0 and xs[-1] > 125.0


def test_points_are_worst_first_and_ac_rated_parts_apart(sample_report_bare):
    report = sample_report_bare
    points = chart_points(report)
    t = report.table
    both = t["voltage_ratio"].notna() & t["t_operating_c"].notna()
    assert len(points.dc) + len(points.ac) == int(both.sum())
    ac_rated = set(t.loc[t["voltage_kind"] == "ac", "refdes"])
    assert set(points.ac["refdes"]) == ac_rated and not ac_rated & set(points.dc["refdes"])
    order = [r for r in report.worst_first()["refdes"] if r in set(points.dc["refdes"])]
    assert list(points.dc["refdes"]) == order


def test_a_report_without_the_figures_plots_nothing(sample_report_bare):
    bare = replace(sample_report_bare,
                   table=sample_report_bare.table.drop(columns=["voltage_ratio"]))
    points = chart_points(bare)
    assert len(points.dc) == len(points.ac) == 0
    assert list(points.dc.columns) == ["refdes", "technology", "t_operating_c", "voltage_ratio",
                                       "status"]


def test_a_part_of_no_known_technology_is_named_so(sample_report_bare):
    table = sample_report_bare.table.assign(technology=None)
    points = chart_points(replace(sample_report_bare, table=table))
    assert set(points.dc["technology"]) == {UNKNOWN_TECHNOLOGY}


def test_constant_limits_span_the_plotted_range_and_rules_share_a_line():
    lines = limit_lines(load_rules(["industrial"]), 20.0, 60.0)
    flat = [(xs, ys) for name, xs, ys in lines if len(xs) == 2]
    assert flat and all(xs[0] < 20.0 and xs[1] > 60.0 and ys[0] == ys[1] for xs, ys in flat)
    names = [name for name, _, _ in lines]
    assert len(names) == len(set(names))  # one line per distinct shape
    assert limit_lines(None, 20.0, 60.0) == []

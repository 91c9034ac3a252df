"""Report stage, shared by the workbook and the HTML report: what the stress-versus-temperature
chart plots.

The chart shows the voltage ratio (applied peak / rated voltage) of each placement against its
operating temperature, with each voltage-ratio fail limit of the rules in force as a line. The
limit lines are DC derating limits: AC-rated parts (``voltage_kind`` "ac", such as X2/Y2 safety
capacitors) are not judged against them, so they are kept apart (``ChartPoints.ac``) and each
renderer shows them on their own, never against the DC lines.
"""

from __future__ import annotations


import numpy as np
import pandas as pd

from bomcheck.frozen import frozen

UNKNOWN_TECHNOLOGY = "unknown technology"


@frozen
class ChartPoints:
    """Placements with both a voltage ratio and an operating temperature, worst first:
    ``dc`` (plotted against the limit lines) and ``ac`` (AC-rated, apart). Columns: refdes,
    technology, t_operating_c, voltage_ratio, status."""

    dc: pd.DataFrame
    ac: pd.DataFrame


def chart_points(report) -> ChartPoints:
    """The placements the chart plots, split into DC-judged and AC-rated."""
    t = report.table
    cols = ["refdes", "technology", "t_operating_c", "voltage_ratio", "status"]
    if not {"voltage_ratio", "t_operating_c"} <= set(t.columns):
        empty = pd.DataFrame(columns=cols)
        return ChartPoints(empty, empty)
    ordered = report.worst_first()
    ratio = pd.to_numeric(ordered["voltage_ratio"], errors="coerce")
    temp = pd.to_numeric(ordered["t_operating_c"], errors="coerce")
    keep = np.isfinite(ratio.to_numpy(dtype=float)) & np.isfinite(temp.to_numpy(dtype=float))
    plotted = ordered[keep]
    tech = (plotted["technology"] if "technology" in plotted else
            pd.Series(None, index=plotted.index, dtype=object)).fillna(UNKNOWN_TECHNOLOGY)
    frame = pd.DataFrame({"refdes": plotted["refdes"], "technology": tech.astype(str),
                          "t_operating_c": temp[keep].astype(float),
                          "voltage_ratio": ratio[keep].astype(float),
                          "status": plotted["status"]}, index=plotted.index)
    kind = (plotted["voltage_kind"] if "voltage_kind" in plotted
            else pd.Series(None, index=plotted.index, dtype=object))
    ac = (kind == "ac").to_numpy()
    return ChartPoints(frame[~ac], frame[ac])


def limit_lines(ruleset, t_min: float | None, t_max: float | None
                ) -> list[tuple[str, list[float], list[float]]]:
    """The distinct voltage-ratio fail limits of the enabled rules as polylines over operating
    temperature: (name, temperatures, ratios). Constants are flat lines over the temperature
    range of the placements (widened to show every curve point); curves over ``t_operating_c``
    follow their points, steps drawn as steps. Rules drawing the same line share it, named by
    their ids."""
    if ruleset is None:
        return []
    # DC limits only: the points plotted against them are DC-rated parts
    rules = [r for r in ruleset.rules if r.enabled and r.metric == "voltage_ratio"
             and r.applies.voltage_kind != "ac"
             and (not r.fail.is_curve or r.fail.over == "t_operating_c")]
    knots = [x for r in rules for x in r.fail.xs]
    lo_vals = [v for v in (t_min, *knots) if v is not None and v == v]
    hi_vals = [v for v in (t_max, *knots) if v is not None and v == v]
    lo, hi = (min(lo_vals), max(hi_vals)) if lo_vals else (25.0, 125.0)
    pad = max(5.0, 0.05 * (hi - lo))
    lo, hi = lo - pad, hi + pad
    shapes: dict[tuple, list[str]] = {}
    for r in rules:
        xs, ys = _polyline(r.fail, lo, hi)
        key = (tuple(round(x, 9) for x in xs), tuple(round(y, 9) for y in ys))
        shapes.setdefault(key, []).append(r.id)
    out = []
    advisory = {r.id for r in rules if r.severity != "fail"}
    for (xs, ys), ids in shapes.items():
        fail = next(r.fail for r in rules if r.id == ids[0])
        label = fail.text("voltage_ratio") if not fail.is_curve else "curve"
        named = ", ".join(f"{i} (advisory)" if i in advisory else i for i in ids)
        out.append((f"limit {label}: {named}", list(xs), list(ys)))
    return out


def _polyline(limit, lo: float, hi: float) -> tuple[list[float], list[float]]:
    """Points drawing ``limit`` from ``lo`` to ``hi`` degC."""
    if not limit.is_curve:
        return [lo, hi], [float(limit.value)] * 2
    xs, ys = list(limit.xs), list(limit.ys)
    if limit.step:
        # Each point's value holds up to and including its x; the next value starts after it.
        px, py = [lo], [ys[0]]
        for i, x in enumerate(xs):
            px.append(x)
            py.append(ys[i])
            if i + 1 < len(xs):
                px.append(x)
                py.append(ys[i + 1])
        px.append(hi)
        py.append(ys[-1])
        return px, py
    inner = [x for x in xs if lo < x < hi]
    px = [lo, *inner, hi]
    py = limit.at(np.asarray(px, dtype=float), len(px)).tolist()
    return px, py

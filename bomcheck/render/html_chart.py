"""Report stage, browser edge: the HTML page's voltage-ratio-against-temperature chart as inline
SVG (limit lines, one labelled point per placement coloured by technology, legend on the right),
from ``report.chartdata``; no script and no external asset."""

from __future__ import annotations

import math

import pandas as pd

from bomcheck.frozen import frozen
from bomcheck.render.textsafe import html_text as esc
from bomcheck.report.chartdata import chart_points, limit_lines

_W, _H = 1060, 460
_LEFT, _RIGHT, _TOP, _BOTTOM = 64, 400, 30, 50
_TECH_COLOURS = ("#2f6690", "#b5651d", "#7a4e9c", "#3a7d44", "#8c6d1f", "#9e2a2b", "#d08c60",
                 "#1b998b", "#6c757d", "#4c5b8f", "#c44569", "#555555")
_DASHES = ("", "6 3", "2 3", "10 4", "6 3 2 3", "3 3", "10 4 2 4")


@frozen
class _Frame:
    """The plot area: data ranges and their mapping to SVG coordinates."""

    x0: float
    x1: float
    y1: float
    height: int

    @property
    def pw(self) -> float:
        return _W - _LEFT - _RIGHT

    @property
    def ph(self) -> float:
        return self.height - _TOP - _BOTTOM

    def px(self, x: float) -> float:
        return _LEFT + (x - self.x0) / (self.x1 - self.x0) * self.pw

    def py(self, y: float) -> float:
        return _TOP + self.ph - min(max(y, 0.0), self.y1) / self.y1 * self.ph


def _frame(points: pd.DataFrame, lines, height: int) -> _Frame:
    """Ranges covering every point and limit line (a default where there are none)."""
    xs = [x for _, lx, _ in lines for x in lx] + points["t_operating_c"].tolist()
    ys = [y for _, _, ly in lines for y in ly] + points["voltage_ratio"].tolist()
    xs = [x for x in xs if math.isfinite(x)] or [25.0, 125.0]
    ys = [y for y in ys if math.isfinite(y)] or [1.0]
    x0, x1 = min(xs), max(xs)
    if x1 - x0 < 1:
        x0, x1 = x0 - 5, x1 + 5
    return _Frame(x0, x1, max(1.0, max(ys)) * 1.08, height)


def svg_chart(points: pd.DataFrame, lines, title: str, *, chart_id: str,
              height: int = _H) -> str:
    """Voltage ratio against operating temperature as inline SVG: limit lines, one labelled
    point per placement, coloured by technology, legend on the right."""
    f = _frame(points, lines, height)
    out = [f'<figure class="chart" id="{chart_id}"><svg xmlns="http://www.w3.org/2000/svg" '
           f'viewBox="0 0 {_W} {height}" role="img" aria-labelledby="{chart_id}-t">'
           f'<title id="{chart_id}-t">{esc(title)}</title>'
           f'<rect x="{_LEFT}" y="{_TOP}" width="{f.pw}" height="{f.ph}" fill="#fff" '
           'stroke="#8a939c"/>']
    out += _grid(f)
    techs = sorted(points["technology"].unique()) if len(points) else []
    colour = {tch: _TECH_COLOURS[i % len(_TECH_COLOURS)] for i, tch in enumerate(techs)}
    out += _legend_and_lines(f, lines, colour)
    out += _points(f, points, colour)
    out.append(f'</svg><figcaption>{esc(title)}</figcaption></figure>')
    return "".join(out)


def _grid(f: _Frame) -> list[str]:
    """Horizontal lines every 10 % (20 % above 120 %), vertical ones at a round step of
    temperature, and the axis titles."""
    out = []
    step = 0.1 if f.y1 <= 1.2 else 0.2
    k = 0
    while k * step <= f.y1 + 1e-9:
        y = k * step
        out.append(f'<line x1="{_LEFT}" x2="{_LEFT + f.pw}" y1="{f.py(y):.1f}" '
                   f'y2="{f.py(y):.1f}" stroke="#e3e6ea"/>'
                   f'<text x="{_LEFT - 6}" y="{f.py(y) + 4:.1f}" text-anchor="end">{y:.0%}</text>')
        k += 1
    span = f.x1 - f.x0
    tick = next(t for t in (5, 10, 20, 25, 50, 100, 200, 500, 1e9) if span / t <= 10)
    t = math.ceil(f.x0 / tick) * tick
    while t <= f.x1:
        out.append(f'<line x1="{f.px(t):.1f}" x2="{f.px(t):.1f}" y1="{_TOP}" '
                   f'y2="{_TOP + f.ph}" stroke="#eef0f2"/>'
                   f'<text x="{f.px(t):.1f}" y="{_TOP + f.ph + 16}" text-anchor="middle">'
                   f'{t:g}</text>')
        t += tick
    out.append(f'<text x="{_LEFT + f.pw / 2}" y="{f.height - 10}" text-anchor="middle">'
               'operating temperature [°C]</text>'
               f'<text transform="translate(16 {_TOP + f.ph / 2}) rotate(-90)" '
               'text-anchor="middle">voltage ratio (applied peak / rated)</text>')
    return out


def _legend_and_lines(f: _Frame, lines, colour: dict[str, str]) -> list[str]:
    """Each limit line (dashes varied) with its legend entry, then the technologies' markers."""
    out = []
    legend_y = _TOP + 4
    lx = _LEFT + f.pw + 14
    for i, (name, lxs, lys) in enumerate(lines):
        dash = _DASHES[i % len(_DASHES)]
        d = " ".join(f"{f.px(a):.1f},{f.py(b):.1f}" for a, b in zip(lxs, lys))
        dash_attr = f' stroke-dasharray="{dash}"' if dash else ""
        out.append(f'<polyline class="limit" points="{d}" fill="none" stroke="#33373d" '
                   f'stroke-width="1.5"{dash_attr}><title>{esc(name)}</title></polyline>')
        out.append(f'<line x1="{lx}" x2="{lx + 24}" y1="{legend_y}" y2="{legend_y}" '
                   f'stroke="#33373d" stroke-width="1.5"{dash_attr}/>'
                   f'<text x="{lx + 30}" y="{legend_y + 4}">{esc(_short(name, 62))}</text>')
        legend_y += 16
    legend_y += 6
    for tch in colour:
        out.append(f'<circle cx="{lx + 12}" cy="{legend_y}" r="4" fill="{colour[tch]}"/>'
                   f'<text x="{lx + 30}" y="{legend_y + 4}">{esc(tch)}</text>')
        legend_y += 16
    return out


# Labels drawn beside the points: a crowded chart names only the most stressed spots (each
# point's tooltip names its placement), which keeps the overlap search small whatever the board.
MAX_LABELS = 100


def _points(f: _Frame, points: pd.DataFrame, colour: dict[str, str]) -> list[str]:
    """One circle per placement, and labels beside them (several placements at one spot share
    one label; a label moves down past those it would overlap). At most ``MAX_LABELS`` spots
    are labelled, the highest voltage ratio first."""
    out = []
    spots: dict[tuple[int, int], list[str]] = {}
    for refdes, tch, temp, ratio, status in zip(points["refdes"], points["technology"],
                                                points["t_operating_c"],
                                                points["voltage_ratio"], points["status"]):
        cx, cy = f.px(temp), f.py(ratio)
        out.append(f'<circle class="point" cx="{cx:.1f}" cy="{cy:.1f}" r="4" '
                   f'fill="{colour[tch]}" stroke="#1b1f24" stroke-width=".5">'
                   f'<title>{esc(refdes)}: {ratio:.1%} at {temp:g} °C ({esc(tch)}, '
                   f'{esc(status)})</title></circle>')
        spots.setdefault((round(cx), round(cy)), []).append(str(refdes))
    # SVG's y grows downwards: the highest ratio has the smallest y
    labelled = sorted(spots.items(), key=lambda kv: (kv[0][1], kv[0][0]))[:MAX_LABELS]
    placed: list[tuple[float, float]] = []
    for (cx, cy), names in sorted(labelled, key=lambda kv: (kv[0][0], kv[0][1])):
        label = names[0] if len(names) == 1 else f"{names[0]} +{len(names) - 1}"
        ly = cy - 5
        while any(abs(px_ - cx) < 48 and abs(py_ - ly) < 10 for px_, py_ in placed):
            ly += 10
        placed.append((cx, ly))
        out.append(f'<text class="lbl" x="{cx + 6}" y="{ly}">{esc(label)}</text>')
    return out


def _short(text: str, n: int) -> str:
    return text if len(text) <= n else text[: n - 1] + "…"


def chart_section(report) -> list[str]:
    """The page's chart section: DC-rated placements against the rules' limit lines, and the
    AC-rated ones apart (no DC limit line applies to them)."""
    points = chart_points(report)
    temps = pd.concat([points.dc["t_operating_c"], points.ac["t_operating_c"]])
    lines = limit_lines(report.rules, temps.min() if len(temps) else None,
                        temps.max() if len(temps) else None)
    out = ["<h2 id=\"chart\">Voltage stress against operating temperature</h2>",
           svg_chart(points.dc, lines, "Voltage ratio against operating temperature, with "
                     "the voltage-ratio fail limit of each rule in force", chart_id="chart-dc")]
    if len(points.ac):
        out.append("<p>AC-rated parts (rated V AC, such as X and Y safety capacitors) are "
                   "judged by their own rules, not by the DC limit lines above; they are "
                   "shown apart.</p>")
        out.append(svg_chart(points.ac, [], "AC-rated parts: working voltage against the AC "
                             "rating (no DC limit line applies)", chart_id="chart-ac",
                             height=300))
    return out

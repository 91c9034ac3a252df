"""Rule files to values: the cross-field checks of one parsed TOML document and the values built.

What the schema cannot say is checked here, every problem collected with its JSON path: known
metrics, check kinds, curve axes and columns; limits in the metric's unit and plausible; a warn
limit on the right side of the fail limit; curves that increase. ``build_file`` returns one
file's rules and data before ``bomcheck.evaluate.rules`` merges the files. No I/O.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from bomcheck.errors import RuleProblem, UnitError
from bomcheck.evaluate.checks import CHECKS
from bomcheck.evaluate.rule_model import (
    BOUND_OPS, RANGES, TABLE_COLUMNS, Aging, Applies, Bound, DcBias, Example, Limit, Rule, Source,
    TypicalRatings, axis_quantity,
)
from bomcheck.evaluate.rule_schema import Problems, path_key, show, suggest, where
from bomcheck.frozen import frozen
from bomcheck.parse.units import check_plausible, to_si
from bomcheck.quantity import format_number
from bomcheck.spec import SAFETY_CLASSES, TECHNOLOGIES
from bomcheck.vocabulary import CONDITIONS, METRICS

# A ratio limit written as a bare number this large was almost surely meant as a percentage.
_RATIO_SANE_MAX = 10.0


@frozen
class FileHead:
    """The ``[ruleset]`` head of one file."""

    name: str
    title: str
    version: str
    description: str


@dataclass
class RuleFile:
    """One parsed, checked file before merging."""

    display: str
    head: FileHead
    rules: list[Rule]
    sources: list[Source]
    enable: list[str]
    disable: list[str]
    extends: str | None
    dc_bias: DcBias | None
    aging: Aging | None
    typical: TypicalRatings | None = None
    circuit: dict[str, Any] | None = None


class _Collector:
    """Collects problems of one file with their sort keys."""

    def __init__(self, doc: dict, display: str, out: Problems) -> None:
        self.doc, self.display, self.out = doc, display, out
        self.count = 0

    def add(self, parts: Sequence[Any], message: str) -> None:
        self.count += 1
        problem = RuleProblem(self.display, where(self.doc, parts), message)
        self.out.append((path_key(parts), problem))


def _si(raw: Any, quantity: str, parts: Sequence[Any], c: _Collector) -> float | None:
    """A number (already SI) or a unit string converted to SI; None and a problem if not."""
    if isinstance(raw, bool):
        c.add(parts, f"found {show(raw)}; expected a number or a string with a unit")
        return None
    if isinstance(raw, (int, float)):
        value = float(raw)
        if not math.isfinite(value):
            c.add(parts, f"found {show(raw)}; expected a finite number")
            return None
        try:  # a ratio written as a number has its own check in _limit
            if quantity != "dimensionless":
                check_plausible(value, quantity)
        except UnitError as exc:
            c.add(parts, str(exc))
            return None
        return value
    if isinstance(raw, str):
        try:  # one number and a unit (bomcheck.parse.units): never an expression, always plausible
            return to_si(raw, quantity)
        except UnitError as exc:
            c.add(parts, str(exc))
            return None
    return None  # the schema reported it


def _limit(raw: Any, metric: str | None, parts: list[Any], c: _Collector) -> Limit | None:
    quantity = METRICS[metric].quantity if metric in METRICS else None
    if isinstance(raw, dict):
        over, points = raw.get("over"), raw.get("points")
        if not isinstance(over, str) or not isinstance(points, list):
            return None
        axis = axis_quantity(over)
        if axis is None:
            valid = ", ".join([*METRICS, *CONDITIONS])
            hint = suggest(over, [*METRICS, *CONDITIONS])
            c.add(parts + ["over"], f"unknown curve axis {over!r}{hint}; "
                  f"expected a metric or condition: {valid}")
        xs: list[float] = []
        ys: list[float] = []
        for j, pt in enumerate(points):
            if not (isinstance(pt, list) and len(pt) == 2):
                return None
            x = _si(pt[0], axis[0], parts + ["points", j, 0], c) if axis else None
            y = _si(pt[1], quantity, parts + ["points", j, 1], c) if quantity else None
            if x is not None:
                xs.append(x)
            if y is not None:
                ys.append(y)
        if axis and len(xs) == len(points) and any(b <= a for a, b in zip(xs, xs[1:])):
            c.add(parts + ["points"], f"curve x values must increase strictly; found "
                  f"{', '.join(format_number(x) for x in xs)}")
            return None
        if axis is None or quantity is None or len(xs) != len(points) or len(ys) != len(points):
            return None
        limit = Limit(over=over, xs=tuple(xs), ys=tuple(ys), step=bool(raw.get("step", False)))
        values = list(ys)
    else:
        if quantity is None:
            return None
        value = _si(raw, quantity, parts, c)
        if value is None:
            return None
        limit = Limit(value=value)
        values = [value]
    if quantity == "dimensionless" and not isinstance(raw, str):
        bad = [v for v in values if abs(v) > _RATIO_SANE_MAX]
        if bad:
            c.add(parts, f"ratio limit {format_number(bad[0])} reads as "
                  f"{format_number(bad[0] * 100)} %; expected a fraction such as 0.6 or a "
                  "string such as '60 %'")
            return None
    return limit


def _warn_side_ok(fail: Limit, warn: Limit, check: str) -> bool:
    """True when the warn limit is reached before the fail limit everywhere on the axis."""
    xs = sorted(set(fail.points()) | set(warn.points()))
    if xs:
        mids = [(a + b) / 2 for a, b in zip(xs, xs[1:])]
        probe = np.asarray(sorted(xs + mids + [xs[0] - 1.0, xs[-1] + 1.0]), dtype=float)
    else:
        probe = np.zeros(1)
    f = fail.at(probe, len(probe))
    w = warn.at(probe, len(probe))
    return bool(np.all(CHECKS[check].margin(w, f) >= -1e-12 * np.abs(f)))


def _build_rule(i: int, r: Any, head_name: str, display: str, c: _Collector) -> Rule | None:
    if not isinstance(r, dict):
        return None
    before = c.count
    p = ["rule", i]
    metric = r.get("metric")
    if isinstance(metric, str) and metric not in METRICS:
        c.add(p + ["metric"], f"unknown metric {metric!r}{suggest(metric, METRICS)}; expected "
              "one of: " + ", ".join(METRICS))
    check = r.get("check")
    if isinstance(check, str) and check not in CHECKS:
        c.add(p + ["check"], f"unknown check kind {check!r}{suggest(check, CHECKS)}; expected "
              "one of: " + ", ".join(CHECKS))
    applies = _applies(r.get("applies", {}), p + ["applies"], c)
    fail = _limit(r["fail"], metric, p + ["fail"], c) if "fail" in r else None
    warn = _limit(r["warn"], metric, p + ["warn"], c) if "warn" in r else None
    severe = (_limit(r["fail_severe"], metric, p + ["fail_severe"], c) if "fail_severe" in r
              else None)
    if fail is not None and severe is not None and check in CHECKS and not _warn_side_ok(
            fail, severe, check):
        c.add(p + ["fail_severe"], f"severe-environment limit {severe.text(metric)} is kinder "
              f"than the fail limit {fail.text(metric)}; expected it at least as strict")
    if fail is not None and warn is not None:
        if fail.is_curve and warn.is_curve and fail.over != warn.over:
            c.add(p + ["warn", "over"], f"warn curve is over {warn.over!r} but the fail curve "
                  f"over {fail.over!r}; expected the same axis")
        elif check in CHECKS and not _warn_side_ok(fail, warn, check):
            c.add(p + ["warn"], f"warn limit {warn.text(metric)} is on the wrong side of the fail "
                  f"limit {fail.text(metric)}; expected it {CHECKS[check].warn_side} the fail "
                  "limit for a "
                  f"{check!r} check")
    examples = []
    for j, ex in enumerate(r.get("examples", []) if isinstance(r.get("examples"), list) else []):
        if not isinstance(ex, dict) or not isinstance(ex.get("given"), dict):
            continue
        for k in ex["given"]:
            if k not in TABLE_COLUMNS:
                c.add(p + ["examples", j, "given", k],
                      f"unknown column {k!r}{suggest(k, TABLE_COLUMNS)}; expected refdes, a spec "
                      "field, a design-sheet condition, a metric or <metric>_basis")
        examples.append(Example(tuple(ex["given"].items()), str(ex.get("expect"))))
    if c.count > before or fail is None or applies is None or not isinstance(metric, str):
        return None
    try:
        return Rule(
            id=r["id"], title=r["title"], applies=applies, metric=metric, check=r["check"],
            fail=fail, warn=warn, severity=r["severity"], enabled=r.get("enabled", True),
            source=r["source"], confidence=r["confidence"], rationale=r["rationale"],
            examples=tuple(examples), origin=head_name, path=display,
            backstop=bool(r.get("backstop", False)), fail_severe=severe,
        )
    except KeyError:  # a missing key the schema has reported
        return None


def _applies(raw: Any, parts: list[Any], c: _Collector) -> Applies | None:
    if not isinstance(raw, dict):
        return None
    ok = True
    numeric = (*CONDITIONS, *METRICS)
    for key, valid in (("technology", TECHNOLOGIES), ("safety_class", SAFETY_CLASSES),
                       ("only_if_given", numeric)):
        for j, v in enumerate(raw.get(key, []) if isinstance(raw.get(key), list) else []):
            if isinstance(v, str) and v not in valid:
                ok = False
                what = "column" if key == "only_if_given" else key.replace("_", " ")
                c.add(parts + [key, j], f"unknown {what} {v!r}"
                      f"{suggest(v, valid)}; expected one of: " + ", ".join(valid))
    bounds: list[Bound] = []
    for key, raw_value in raw.items():
        name, _, side = key.rpartition("_")
        if name in RANGES and side in BOUND_OPS:
            column, quantity, label = RANGES[name]
            value = _si(raw_value, quantity, parts + [key], c)
            if value is None:
                ok = False
                continue
            bounds.append(Bound(key, column, BOUND_OPS[side], value, label))

    def tup(key: str) -> tuple | None:
        v = raw.get(key)
        return tuple(v) if isinstance(v, list) else None

    if not ok:
        return None
    return Applies(
        technology=tup("technology"), dielectric_class=tup("dielectric_class"),
        dielectric=tup("dielectric"), polarized=raw.get("polarized"),
        voltage_kind=raw.get("voltage_kind"), safety_class=tup("safety_class"),
        emi_filter=raw.get("emi_filter"), package=tup("package"),
        only_if_given=tup("only_if_given"), bounds=tuple(bounds),
    )


def _curve_points(raw: Any, parts: list[Any], c: _Collector) -> tuple[tuple, tuple] | None:
    if not (isinstance(raw, list) and all(isinstance(p, list) and len(p) == 2 for p in raw)):
        return None
    try:
        xs = tuple(float(p[0]) for p in raw)
        ys = tuple(float(p[1]) for p in raw)
    except (TypeError, ValueError):
        return None
    if any(b <= a for a, b in zip(xs, xs[1:])):
        c.add(parts, "curve x values must increase strictly; found "
              + ", ".join(format_number(x) for x in xs))
        return None
    if any(not 0.0 <= y <= 1.0 for y in ys):
        c.add(parts, "remaining-capacitance fractions must lie between 0 and 1; found "
              + ", ".join(format_number(y) for y in ys))
        return None
    return xs, ys


def _dc_bias(raw: Any, c: _Collector) -> DcBias | None:
    if not isinstance(raw, dict):
        return None
    main = _curve_points(raw.get("points"), ["dc_bias", "points"], c)
    packages = []
    pk = raw.get("package", {})
    for name, pts in (pk.items() if isinstance(pk, dict) else []):
        curve = _curve_points(pts, ["dc_bias", "package", name], c)
        if curve is not None:
            packages.append((name, *curve))
    if main is None:
        return None
    try:
        return DcBias(label=raw["label"], source=raw["source"], confidence=raw["confidence"],
                      xs=main[0], ys=main[1],
                      dielectric_class=tuple(raw.get("dielectric_class", (2, 3))),
                      packages=tuple(packages))
    except KeyError:
        return None


def _aging(raw: Any) -> Aging | None:
    if not isinstance(raw, dict):
        return None
    try:
        return Aging(
            source=raw["source"], confidence=raw["confidence"], t0_h=float(raw["t0_h"]),
            k_by_dielectric=tuple((k, float(v)) for k, v in raw["k_pct_per_decade"].items()),
            k_by_class=tuple((int(k), float(v))
                             for k, v in raw.get("class_k_pct_per_decade", {}).items()),
            label=raw.get("label", ""),
        )
    except (KeyError, TypeError, ValueError, AttributeError):
        return None


def _typical(raw: Any) -> TypicalRatings | None:
    if not isinstance(raw, dict):
        return None
    try:
        return TypicalRatings(
            label=raw["label"], source=raw["source"], confidence=raw["confidence"],
            temp_max_c=tuple((k, float(v)) for k, v in raw["temp_max_c"].items()),
            lowest_temp_max_c=tuple((k, float(v)) for k, v in
                                    raw.get("lowest_temp_max_c", {}).items()),
        )
    except (KeyError, TypeError, ValueError, AttributeError):
        return None


def build_file(doc: dict, display: str, out: Problems) -> RuleFile | None:
    c = _Collector(doc, display, out)
    head_raw = doc.get("ruleset") if isinstance(doc.get("ruleset"), dict) else {}
    head = FileHead(str(head_raw.get("name", "")), str(head_raw.get("title", "")),
                 str(head_raw.get("version", "")), str(head_raw.get("description", "")))
    raw_rules = doc.get("rule", []) if isinstance(doc.get("rule"), list) else []
    first: dict[str, int] = {}
    for i, r in enumerate(raw_rules):
        rid = r.get("id") if isinstance(r, dict) else None
        if isinstance(rid, str):
            if rid in first:
                c.add(["rule", i, "id"], f"duplicate id {rid!r} (first at rule[{first[rid]}]); "
                      "expected each id once per file (override an inherited rule from another "
                      "file)")
            else:
                first[rid] = i
    rules = [_build_rule(i, r, head.name, display, c) for i, r in enumerate(raw_rules)]
    enable = [x for x in head_raw.get("enable", []) if isinstance(x, str)]
    disable = [x for x in head_raw.get("disable", []) if isinstance(x, str)]
    for j, rid in enumerate(disable):
        if rid in enable:
            c.add(["ruleset", "disable", j], f"rule {rid!r} is both enabled and disabled; "
                  "expected it in one list")
    sources = []
    for s in head_raw.get("sources", []) if isinstance(head_raw.get("sources"), list) else []:
        if isinstance(s, dict) and {"id", "title", "confidence"} <= set(s):
            sources.append(Source(s["id"], s["title"], s["confidence"], s.get("clause")))
    dc_bias = _dc_bias(doc.get("dc_bias"), c)
    aging = _aging(doc.get("aging"))
    if c.count or any(r is None for r in rules):
        return None
    extends = head_raw.get("extends")
    return RuleFile(display, head, [r for r in rules if r is not None], sources, enable, disable,
                 extends if isinstance(extends, str) else None, dc_bias, aging,
                 _typical(doc.get("typical_ratings")),
                 dict(doc["circuit"]) if isinstance(doc.get("circuit"), dict) else None)


__all__ = ["FileHead", "RuleFile", "build_file"]

"""Rule sets as values: the limits, the placements a rule applies to, the rules and the loaded set.

What ``bomcheck.evaluate.rules`` builds from the TOML files and the engine applies. Every limit is
held in the SI unit of the metric it limits; the values are frozen and do no I/O.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import asdict, replace
from typing import Any

import numpy as np

from bomcheck.frozen import frozen
from bomcheck.parse.units import SI_UNITS
from bomcheck.quantity import format_quantity
from bomcheck.spec import SPEC_KEYS
from bomcheck.status import RULE_STATUSES
from bomcheck.vocabulary import CONDITIONS, METRICS, Metric

STATUSES = RULE_STATUSES
ENVIRONMENTS: tuple[str, ...] = ("severe", "benign")
"""Audit environments, stricter first. A rule may give its fail limit for the severe environment
(``fail_severe``); in the benign one its ``fail`` and ``warn`` limits apply as written."""
DEFAULT_ENVIRONMENT = "severe"

# Keys of `applies` that bound a column: <name>_min, _max, _above, _below.
# name -> (column, quantity, label in texts)
RANGES: dict[str, tuple[str, str, str]] = {
    "rated_voltage": ("voltage_v", "voltage", "rated"),
    "capacitance": ("capacitance_f", "capacitance", "C"),
    "applied_peak": ("applied_peak_v", "voltage", "applied peak"),
    # c_min_f = 0 is the design sheet's "none": the circuit states no minimum capacitance.
    "required_capacitance": ("c_min_f", "capacitance", "required C"),
    "node_voltage": ("node_v", "voltage", "node"),
}
BOUND_OPS = {"min": ">=", "max": "<=", "above": ">", "below": "<"}
LIST_KEYS = ("technology", "dielectric_class", "dielectric", "safety_class", "package")

# Columns a placement table may carry (and an example may give).
BASIS_COLUMNS = tuple(f"{m}_{suffix}" for m in METRICS for suffix in ("basis", "best", "worst"))
TABLE_COLUMNS: tuple[str, ...] = (
    ("refdes",) + SPEC_KEYS + tuple(CONDITIONS) + tuple(METRICS) + BASIS_COLUMNS
)


def axis_quantity(column: str) -> tuple[str, str, bool] | None:
    """(quantity, display unit, percent) of a metric or condition column, or None if unknown."""
    if column in METRICS:
        m = METRICS[column]
        return m.quantity, m.unit, m.percent
    if column in CONDITIONS:
        quantity = CONDITIONS[column][0]
        unit = {"temperature_delta": "degC", "dimensionless": ""}.get(quantity, SI_UNITS[quantity])
        return quantity, unit, quantity == "dimensionless"
    return None


def _metric_display(metric: str) -> tuple[str, bool]:
    m = METRICS.get(metric)
    return (m.unit, m.percent) if m else ("", False)


# --------------------------------------------------------------------------------------------
# The values a rule set holds.

@frozen
class Limit:
    """A limit in the metric's SI unit: a constant, or a curve over another column.

    A linear curve interpolates between points and is flat beyond its end points. A step curve
    gives each point's value up to and including its x (the first point's value below it, the last
    point's value above the last x).
    """

    value: float | None = None
    over: str | None = None
    xs: tuple[float, ...] = ()
    ys: tuple[float, ...] = ()
    step: bool = False

    @property
    def is_curve(self) -> bool:
        """True for a curve, False for a constant."""
        return self.over is not None

    def at(self, x: np.ndarray | None, n: int) -> np.ndarray:
        """The limit in force for ``n`` placements with curve axis values ``x`` (NaN -> NaN)."""
        if not self.is_curve:
            return np.full(n, self.value, dtype=float)
        assert x is not None
        xs = np.asarray(self.xs, dtype=float)
        ys = np.asarray(self.ys, dtype=float)
        if self.step:
            i = np.minimum(np.searchsorted(xs, x, side="left"), len(xs) - 1)
            out = ys[i]
        else:
            out = np.interp(x, xs, ys)
        return np.where(np.isnan(x), np.nan, out)

    def points(self) -> list[float]:
        """The x values where the limit changes slope or steps (empty for a constant)."""
        return list(self.xs)

    def text(self, metric: str) -> str:
        """The limit as a reviewer reads it, e.g. ``50 % at 70 degC or below, linear to 30 % at
        110 degC (flat beyond)``."""
        unit, pct = _metric_display(metric)
        if not self.is_curve:
            return format_quantity(float(self.value), unit, pct)
        assert self.over is not None
        ax = axis_quantity(self.over) or ("", "", False)
        y = [format_quantity(v, unit, pct) for v in self.ys]
        x = [format_quantity(v, ax[1], ax[2]) for v in self.xs]
        if self.step:
            parts = [f"{y[i]} up to {x[i]}" for i in range(len(x) - 1)]
            return f"{', '.join(parts)}, {y[-1]} above ({self.over}, step)"
        rest = ", ".join(f"{y[i]} at {x[i]}" for i in range(1, len(x)))
        return f"{y[0]} at {x[0]} or below, linear to {rest} (over {self.over}, flat beyond)"


@frozen
class Bound:
    """One bound of `applies`: ``column op value`` (e.g. voltage_v >= 100 V), SI value."""

    key: str  # the TOML key, e.g. "rated_voltage_min"
    column: str
    op: str  # ">=", "<=", ">", "<"
    value: float
    label: str

    def text(self) -> str:
        """E.g. ``rated >= 100 V``."""
        quantity = RANGES[self.key.rsplit("_", 1)[0]][1]
        unit = SI_UNITS[quantity]
        return f"{self.label} {self.op} {format_quantity(self.value, unit)}"


@frozen
class Applies:
    """What placements a rule applies to; every given field must match, None matches everything.

    Lists match any of their values (case-insensitive). ``voltage_kind = "dc"`` also matches a part
    whose rating does not say DC or AC. ``polarized``/``emi_filter`` true match only parts marked
    so; false match every other part. A bound on a column whose value is unknown applies, so that
    the verdict is "no data" naming the missing value rather than silence. ``only_if_given``
    restricts a rule to placements for which a value is stated (a capacitance requirement, say):
    without it there is nothing to check, rather than data missing.
    """

    technology: tuple[str, ...] | None = None
    dielectric_class: tuple[int, ...] | None = None
    dielectric: tuple[str, ...] | None = None
    polarized: bool | None = None
    voltage_kind: str | None = None
    safety_class: tuple[str, ...] | None = None
    emi_filter: bool | None = None
    package: tuple[str, ...] | None = None
    only_if_given: tuple[str, ...] | None = None  # applies only where these columns have values
    bounds: tuple[Bound, ...] = ()

    def columns(self) -> tuple[str, ...]:
        """Columns whose values the bounds need."""
        return tuple(dict.fromkeys(b.column for b in self.bounds))

    def text(self) -> str:
        """One line such as ``technology tantalum; DC-rated; rated > 10 V``."""
        parts: list[str] = []
        for key in LIST_KEYS:
            values = getattr(self, key)
            if values:
                parts.append(f"{key.replace('_', ' ')} {', '.join(str(v) for v in values)}")
        if self.polarized is not None:
            parts.append("polarized" if self.polarized else "not polarized")
        if self.voltage_kind:
            parts.append(f"{self.voltage_kind.upper()}-rated")
        if self.emi_filter is not None:
            parts.append("EMI filter" if self.emi_filter else "not an EMI filter")
        parts.extend(b.text() for b in self.bounds)
        if self.only_if_given:
            parts.append(f"where {', '.join(self.only_if_given)} given")
        return "; ".join(parts) if parts else "every placement"


@frozen
class Example:
    """A worked example of a rule: placement columns and the status the rule must give."""

    given: tuple[tuple[str, Any], ...]
    expect: str

    def row(self) -> dict[str, Any]:
        """The example as one table row (``refdes`` defaults to ``C1``)."""
        return {"refdes": "C1", **dict(self.given)}


@frozen
class Rule:
    """One derating rule: a check kind configured for a class of parts, with its source."""

    id: str
    title: str
    applies: Applies
    metric: str
    check: str
    fail: Limit
    warn: Limit | None
    severity: str
    enabled: bool
    source: str
    confidence: str
    rationale: str
    examples: tuple[Example, ...] = ()
    origin: str = ""  # name of the rule set that defined it
    path: str = ""  # the file it came from
    # A backstop (e.g. "never above the rated voltage") checks every part but is no derating:
    # it does not count as the check family's verdict for a placement (see vocabulary.FAMILIES).
    backstop: bool = False
    fail_severe: Limit | None = None  # the fail limit in the severe environment, if different

    @property
    def family(self) -> str:
        """The check family of the rule's metric (voltage, temperature, capacitance...)."""
        return self.metric_def.family

    @property
    def metric_def(self) -> Metric:
        """The vocabulary entry of the metric."""
        return METRICS[self.metric]

    @property
    def axes(self) -> tuple[str, ...]:
        """Curve axes of the fail and warn limits (usually ``t_operating_c``)."""
        found = [lim.over for lim in (self.fail, self.warn) if lim is not None and lim.is_curve]
        return tuple(dict.fromkeys(a for a in found if a))

    def needs(self) -> tuple[str, ...]:
        """Columns that must have a value for a verdict; any missing one gives "no data".

        The metric's inputs come before the metric, so a message can name the root cause.
        """
        cols: list[str] = [*self.metric_def.inputs, self.metric]
        for axis in self.axes:
            if axis in METRICS:
                cols.extend(METRICS[axis].inputs)
            cols.append(axis)
        cols.extend(self.applies.columns())
        return tuple(dict.fromkeys(cols))


@frozen
class Source:
    """A document a rule set draws on."""

    id: str
    title: str
    confidence: str
    clause: str | None = None


@frozen
class DcBias:
    """Generic DC-bias data: remaining capacitance fraction against applied / rated voltage."""

    label: str
    source: str
    confidence: str
    xs: tuple[float, ...]
    ys: tuple[float, ...]
    dielectric_class: tuple[int, ...] = (2, 3)
    packages: tuple[tuple[str, tuple[float, ...], tuple[float, ...]], ...] = ()


@frozen
class Aging:
    """Class II/III aging: C(t) = C(t0) x (1 - k/100 x log10(t/t0)), k in % per decade hour."""

    source: str
    confidence: str
    t0_h: float
    k_by_dielectric: tuple[tuple[str, float], ...]
    k_by_class: tuple[tuple[int, float], ...] = ()
    label: str = ""


@frozen
class TypicalRatings:
    """Typical rated maximum temperatures by technology, for parts whose text gives none."""

    label: str
    source: str
    confidence: str
    temp_max_c: tuple[tuple[str, float], ...]
    # The lowest rated maximum temperature of the usual grades: the worst plausible rating of a
    # part whose text gives none (a verdict that passes with it passes whatever the grade).
    lowest_temp_max_c: tuple[tuple[str, float], ...] = ()


@frozen
class Layer:
    """One file that went into a loaded rule set, in load order."""

    name: str
    title: str
    version: str
    path: str
    extends: str | None = None


@frozen
class RuleRow:
    """One row of the ``bomcheck rules`` listing."""

    id: str
    title: str
    applies: str
    metric: str
    check: str
    fail: str
    warn: str
    severity: str
    enabled: bool
    source: str

    def to_dict(self) -> dict[str, Any]:
        """Plain dict of the row."""
        return asdict(self)


@frozen
class RuleSet:
    """A loaded, validated rule set (possibly several files merged), ready for the engine."""

    name: str
    title: str
    version: str
    description: str
    rules: tuple[Rule, ...]
    sources: tuple[Source, ...] = ()
    layers: tuple[Layer, ...] = ()
    dc_bias: DcBias | None = None
    aging: Aging | None = None
    typical: TypicalRatings | None = None
    # The [circuit] table as read (schema-checked): typical data and options of bomcheck.stress.circuit.
    circuit: dict[str, Any] | None = None
    environment: str = "benign"  # the limits as written; see for_environment

    def rule(self, rule_id: str) -> Rule:
        """The rule with this id (KeyError if absent)."""
        for r in self.rules:
            if r.id == rule_id:
                return r
        raise KeyError(rule_id)

    @property
    def enabled_rules(self) -> tuple[Rule, ...]:
        """The rules the engine evaluates."""
        return tuple(r for r in self.rules if r.enabled)

    def with_rules(self, rules: Sequence[Rule]) -> RuleSet:
        """A copy holding ``rules`` instead (e.g. one rule, for its examples)."""
        return replace(self, rules=tuple(rules))

    def for_environment(self, environment: str) -> RuleSet:
        """The set as it applies in ``environment`` (``ENVIRONMENTS``): in the severe one, a rule
        with a ``fail_severe`` limit fails there and has no warn limit."""
        if environment not in ENVIRONMENTS:
            raise ValueError(f"unknown environment {environment!r}; expected one of: "
                             + ", ".join(ENVIRONMENTS))
        if environment == "benign":
            return replace(self, environment=environment)
        rules = tuple(replace(r, fail=r.fail_severe, warn=None) if r.fail_severe else r
                      for r in self.rules)
        return replace(self, rules=rules, environment=environment)

    def describe(self) -> list[RuleRow]:
        """Rows for the ``bomcheck rules [NAME]`` table, in rule-set order."""
        return [
            RuleRow(
                id=r.id,
                title=r.title,
                applies=r.applies.text(),
                metric=r.metric,
                check=r.check,
                fail=r.fail.text(r.metric),
                warn=r.warn.text(r.metric) if r.warn else "",
                severity=r.severity,
                enabled=r.enabled,
                source=r.source,
            )
            for r in self.rules
        ]

    def dc_bias_curve(self, package: str | None = None) -> tuple[np.ndarray, np.ndarray] | None:
        """(applied/rated ratios, remaining fractions) of the generic DC-bias curve, the case-size
        curve when the set has one for ``package``; None when the set carries no DC-bias data."""
        if self.dc_bias is None:
            return None
        if package:
            for name, xs, ys in self.dc_bias.packages:
                if name.upper() == package.upper():
                    return np.asarray(xs, dtype=float), np.asarray(ys, dtype=float)
        return np.asarray(self.dc_bias.xs, dtype=float), np.asarray(self.dc_bias.ys, dtype=float)

    def aging_k(self, dielectric: str | None, dielectric_class: int | None = None) -> float | None:
        """Aging constant k (% per decade hour) for a dielectric code, else for its EIA class;
        None when the set has no figure for either."""
        if self.aging is None:
            return None
        if dielectric:
            for code, k in self.aging.k_by_dielectric:
                if code.upper() == dielectric.upper():
                    return k
        if dielectric_class is not None:
            for cls, k in self.aging.k_by_class:
                if cls == dielectric_class:
                    return k
        return None


__all__ = [
    "BASIS_COLUMNS", "BOUND_OPS", "DEFAULT_ENVIRONMENT", "ENVIRONMENTS", "LIST_KEYS", "RANGES",
    "STATUSES", "TABLE_COLUMNS", "Aging", "Applies", "Bound", "DcBias", "Example", "Layer",
    "Limit", "Rule", "RuleRow", "RuleSet", "Source", "TypicalRatings", "axis_quantity",
]

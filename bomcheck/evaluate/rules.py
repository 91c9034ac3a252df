"""Rule sets as data: load, validate and merge the TOML derating rules the evaluate stage applies.

A rule set is a TOML file (schema: ``bomcheck/schemas/rules.schema.json``) with a ``[ruleset]``
table, ``[[rule]]`` entries and optional typical data (``[dc_bias]``, ``[aging]``,
``[typical_ratings]``, ``[circuit]``) for the
stress stage. Shipped sets live in the package ``bomcheck.rulesets``; users pass their own files by path.
Every limit is converted once, at load, to the SI quantity of the metric it limits. Every problem in
every file is collected and raised together as one ``RuleError``.
"""

from __future__ import annotations

import difflib
import functools
import json
import math
from collections.abc import Sequence
from dataclasses import asdict, dataclass, field, replace
from importlib import resources
from pathlib import Path
from typing import Any

import numpy as np

from bomcheck.errors import InputError, RuleError, RuleProblem, UnitError
from bomcheck.spec import SAFETY_CLASSES, SPEC_KEYS, TECHNOLOGIES
from bomcheck.status import RULE_STATUSES
from bomcheck.parse.units import SI_UNITS, check_plausible, to_si
from bomcheck.quantity import format_number, format_quantity
from bomcheck.vocabulary import CONDITIONS, METRICS, Metric

DEFAULT_RULESET = "industrial"
MAX_EXTENDS_DEPTH = 32  # files in one extends chain (the shipped sets use 2 or 3)
"""The rule set used when no ``--rules`` is given: ``industrial``.

Most BOMs hold commercial and industrial parts, and the industrial set is written for them: its
voltage limits come from the System Reliability Center derating sheet (benign column as the fail
limit, severe column as the warn limit) and its temperature-dependent limits from makers'
published practice. The ``strict`` set takes its limits from NASA EEE-INST-002 Section C1 Table 4, written
for qualified military-style parts in flight hardware; as a default it would fail most commercial
designs on the first run and bury the findings that matter. High-reliability work asks for it with
``--rules strict``.
"""

SHIPPED_PACKAGE = "bomcheck.rulesets"
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
_BOUND_OPS = {"min": ">=", "max": "<=", "above": ">", "below": "<"}
_LIST_KEYS = ("technology", "dielectric_class", "dielectric", "safety_class", "package")

# Columns a placement table may carry (and an example may give).
BASIS_COLUMNS = tuple(f"{m}_{suffix}" for m in METRICS for suffix in ("basis", "best", "worst"))
TABLE_COLUMNS: tuple[str, ...] = (
    ("refdes",) + SPEC_KEYS + tuple(CONDITIONS) + tuple(METRICS) + BASIS_COLUMNS
)

# A ratio limit written as a bare number this large was almost surely meant as a percentage.
_RATIO_SANE_MAX = 10.0


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

@dataclass(frozen=True)
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


@dataclass(frozen=True)
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


@dataclass(frozen=True)
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
        for key in _LIST_KEYS:
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


@dataclass(frozen=True)
class Example:
    """A worked example of a rule: placement columns and the status the rule must give."""

    given: tuple[tuple[str, Any], ...]
    expect: str

    def row(self) -> dict[str, Any]:
        """The example as one table row (``refdes`` defaults to ``C1``)."""
        return {"refdes": "C1", **dict(self.given)}


@dataclass(frozen=True)
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


@dataclass(frozen=True)
class Source:
    """A document a rule set draws on."""

    id: str
    title: str
    confidence: str
    clause: str | None = None


@dataclass(frozen=True)
class DcBias:
    """Generic DC-bias data: remaining capacitance fraction against applied / rated voltage."""

    label: str
    source: str
    confidence: str
    xs: tuple[float, ...]
    ys: tuple[float, ...]
    dielectric_class: tuple[int, ...] = (2, 3)
    packages: tuple[tuple[str, tuple[float, ...], tuple[float, ...]], ...] = ()


@dataclass(frozen=True)
class Aging:
    """Class II/III aging: C(t) = C(t0) x (1 - k/100 x log10(t/t0)), k in % per decade hour."""

    source: str
    confidence: str
    t0_h: float
    k_by_dielectric: tuple[tuple[str, float], ...]
    k_by_class: tuple[tuple[int, float], ...] = ()
    label: str = ""


@dataclass(frozen=True)
class TypicalRatings:
    """Typical rated maximum temperatures by technology, for parts whose text gives none."""

    label: str
    source: str
    confidence: str
    temp_max_c: tuple[tuple[str, float], ...]
    # The lowest rated maximum temperature of the usual grades: the worst plausible rating of a
    # part whose text gives none (a verdict that passes with it passes whatever the grade).
    lowest_temp_max_c: tuple[tuple[str, float], ...] = ()


@dataclass(frozen=True)
class Layer:
    """One file that went into a loaded rule set, in load order."""

    name: str
    title: str
    version: str
    path: str
    extends: str | None = None


@dataclass(frozen=True)
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


@dataclass(frozen=True)
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


# --------------------------------------------------------------------------------------------
# Loading.

def shipped_root():
    """The folder of the shipped rule sets: the installed package ``bomcheck.rulesets`` (the
    top-level ``rules/`` folder, mapped at install), or ``rules/`` itself when the code runs from
    a source checkout whose own ``bomcheck/`` shadows the installed copy."""
    try:
        return resources.files(SHIPPED_PACKAGE)
    except ModuleNotFoundError:
        checkout = Path(__file__).resolve().parent.parent / "rules"
        if checkout.is_dir():
            return checkout
        raise


def shipped_names() -> list[str]:
    """Names of the rule sets shipped in the package, sorted."""
    root = shipped_root()
    return sorted(p.name[: -len(".toml")] for p in root.iterdir() if p.name.endswith(".toml"))


def load_rules(specs: Sequence[str] | str = ()) -> RuleSet:
    """Load rule sets by shipped name or file path and merge them in order.

    Each file's ``extends`` is loaded first; a later rule with the same id replaces the earlier
    one; ``enable``/``disable`` switch rules known at that point. With no spec the default set is
    loaded. Raises ``RuleError`` listing every problem in every file.
    """
    if isinstance(specs, str):
        specs = [specs]
    specs = list(specs) or [DEFAULT_RULESET]
    state = _State()
    for spec in specs:
        _apply(spec, None, state, ())
    if state.problems:
        raise RuleError(state.problems)
    names = [s.name for s in state.top]
    top = state.top[-1]
    merged = len(state.top) > 1
    return RuleSet(
        name="+".join(names),
        title=" + ".join(s.title for s in state.top) if merged else top.title,
        version=", ".join(f"{s.name} {s.version}" for s in state.top) if merged else top.version,
        description="" if merged else top.description,
        rules=tuple(state.rules.values()),
        sources=tuple(state.sources.values()),
        layers=tuple(state.layers),
        dc_bias=state.dc_bias,
        aging=state.aging,
        typical=state.typical,
        circuit=state.circuit,
    )


@dataclass
class _State:
    rules: dict[str, Rule] = field(default_factory=dict)
    sources: dict[str, Source] = field(default_factory=dict)
    layers: list[Layer] = field(default_factory=list)
    top: list[_Head] = field(default_factory=list)
    dc_bias: DcBias | None = None
    aging: Aging | None = None
    typical: TypicalRatings | None = None
    circuit: dict[str, Any] | None = None
    problems: list[RuleProblem] = field(default_factory=list)


@dataclass(frozen=True)
class _Head:
    name: str
    title: str
    version: str
    description: str


@dataclass
class _File:
    """One parsed, checked file before merging."""

    display: str
    head: _Head
    rules: list[Rule]
    sources: list[Source]
    enable: list[str]
    disable: list[str]
    extends: str | None
    dc_bias: DcBias | None
    aging: Aging | None
    typical: TypicalRatings | None = None
    circuit: dict[str, Any] | None = None


def _locate(spec: str, base: Path | None) -> tuple[str, str, Path | None]:
    """(identity key, display name, file path or None for a shipped set) of a spec.

    Raises ``RuleError`` for a name that is neither shipped nor a file.
    """
    looks_like_path = spec.endswith(".toml") or "/" in spec or "\\" in spec
    if not looks_like_path and spec in shipped_names():
        return f"shipped:{spec}", f"{spec}.toml (shipped)", None
    path = Path(spec)
    if base is not None and not path.is_absolute():
        path = base / path
    if path.is_file():
        return f"file:{path.resolve()}", str(path), path
    names = ", ".join(shipped_names())
    raise RuleError([RuleProblem(
        spec, "rule set",
        f"no shipped rule set or file of that name; expected one of {names} or a path to a "
        ".toml file",
    )])


def _apply(spec: str, base: Path | None, state: _State, stack: tuple[str, ...],
           from_display: str | None = None) -> None:
    """Load ``spec`` (its base first) and merge it into ``state``, collecting problems."""
    try:
        key, display, path = _locate(spec, base)
    except RuleError as exc:
        if from_display is not None:  # an `extends` naming nothing
            exc.problems[0] = RuleProblem(from_display, "ruleset.extends", exc.problems[0].message
                                          + f"; found {spec!r}")
        state.problems.extend(exc.problems)
        return
    if key in stack:
        state.problems.append(RuleProblem(from_display or display, "ruleset.extends",
                                          f"extends chain loops back to {display}"))
        return
    if len(stack) >= MAX_EXTENDS_DEPTH:
        state.problems.append(RuleProblem(
            from_display or display, "ruleset.extends",
            f"extends chain longer than {MAX_EXTENDS_DEPTH} files; expected a short chain of "
            "rule sets, each extending a shipped set or another file"))
        return
    from bomcheck.read.reader import load_toml, read_bytes, toml_text

    try:
        if path is not None:  # a regular file within the size limit, like every input
            text = toml_text(read_bytes(str(path), "rule file"), display)
        else:
            text = shipped_root().joinpath(f"{spec}.toml").read_text("utf-8")
        doc = load_toml(text, display)
    except InputError as exc:
        state.problems.append(RuleProblem(display, "TOML" if "TOML" in exc.problem or "nested"
                                          in exc.problem else "file", exc.problem))
        return
    except (OSError, UnicodeDecodeError) as exc:
        state.problems.append(RuleProblem(display, "file", f"cannot read: {exc}"))
        return
    problems: list[tuple[tuple, RuleProblem]] = []
    if path is not None:  # shipped sets are schema-checked by the test suite, not on every run
        _schema_problems(doc, display, problems)
    built = _build_file(doc, display, problems)
    head = doc.get("ruleset")
    extends = head.get("extends") if isinstance(head, dict) else None
    before = len(state.problems)
    if isinstance(extends, str):
        _apply(extends, path.parent if path is not None else None, state, stack + (key,), display)
    problems.sort(key=lambda p: p[0])
    state.problems.extend(dict.fromkeys(p for _, p in problems))  # sorted, each once
    if problems or built is None:
        return
    _merge(built, state, stack, check_ids=len(state.problems) == before)


def _merge(f: _File, state: _State, stack: tuple[str, ...], check_ids: bool) -> None:
    """Merge a checked file into ``state``; ``check_ids`` False when its base failed to load."""
    for rule in f.rules:
        state.rules[rule.id] = rule
    for verb, ids in (("enable", f.enable), ("disable", f.disable)):
        for i, rid in enumerate(ids):
            if rid not in state.rules:
                if not check_ids:
                    continue
                state.problems.append(RuleProblem(
                    f.display, f"ruleset.{verb}[{i}]",
                    f"no rule {rid!r} to {verb}{_suggest(rid, state.rules)}; expected the id of a "
                    "rule in this file, its base or an earlier --rules set",
                ))
            else:
                state.rules[rid] = replace(state.rules[rid], enabled=(verb == "enable"))
    for s in f.sources:
        state.sources.setdefault(s.id, s)
    state.dc_bias = f.dc_bias or state.dc_bias
    state.aging = f.aging or state.aging
    state.typical = f.typical or state.typical
    if f.circuit:  # key by key, so that a set extending another may change one option
        state.circuit = {**(state.circuit or {}), **f.circuit}
    state.layers.append(Layer(f.head.name, f.head.title, f.head.version, f.display, f.extends))
    if not stack:
        state.top.append(f.head)


# --------------------------------------------------------------------------------------------
# Schema validation: every error, with its JSON path and what was expected.

@functools.lru_cache(maxsize=1)
def _schema() -> dict:
    text = resources.files("bomcheck.schemas").joinpath("rules.schema.json").read_text("utf-8")
    return json.loads(text)


@functools.lru_cache(maxsize=1)
def _validator() -> Any:
    """The JSON Schema validator (jsonschema is imported only when a user file is checked)."""
    import jsonschema

    return jsonschema.Draft202012Validator(_schema())


def _path_key(parts: Sequence[Any]) -> tuple:
    return tuple((0, p, "") if isinstance(p, int) else (1, 0, str(p)) for p in parts)


def json_path(parts: Sequence[Any]) -> str:
    """``("rule", 3, "fail")`` -> ``rule[3].fail``."""
    out = ""
    for p in parts:
        out += f"[{p}]" if isinstance(p, int) else (f".{p}" if out else str(p))
    return out or "(top level)"


def _where(doc: Any, parts: Sequence[Any]) -> str:
    where = json_path(parts)
    if len(parts) >= 2 and parts[0] == "rule" and isinstance(parts[1], int):
        rules = doc.get("rule") if isinstance(doc, dict) else None
        if isinstance(rules, list) and parts[1] < len(rules) and isinstance(rules[parts[1]], dict):
            rid = rules[parts[1]].get("id")
            if isinstance(rid, str):
                where += f" (rule {rid})"
    return where


def _show(value: Any) -> str:
    text = json.dumps(value, default=str) if not isinstance(value, str) else repr(value)
    return text if len(text) <= 60 else text[:57] + "..."


def _expected(schema: Any) -> str:
    if not isinstance(schema, dict):
        return "a valid value"
    if "$ref" in schema:
        name = schema["$ref"].rsplit("/", 1)[-1]
        return _expected(_schema()["$defs"].get(name, {}))
    if "description" in schema:
        return schema["description"]
    if "enum" in schema:
        return "one of " + ", ".join(json.dumps(v) for v in schema["enum"])
    if "type" in schema:
        return f"a {schema['type']}"
    return "a valid value"


def _suggest(word: str, choices: Any) -> str:
    close = difflib.get_close_matches(word, list(choices), n=1)
    return f" (did you mean {close[0]!r}?)" if close else ""


def _schema_problems(doc: dict, display: str, out: list[tuple[tuple, RuleProblem]]) -> None:
    for e in _validator().iter_errors(doc):
        parts = list(e.absolute_path)
        for extra_parts, message in _messages(e, parts):
            problem = RuleProblem(display, _where(doc, extra_parts), message)
            out.append((_path_key(extra_parts), problem))


def _messages(e: Any, parts: list[Any]) -> list[tuple[list[Any], str]]:
    """Readable messages for one jsonschema error, in the spirit of ``best_match``."""
    from jsonschema.exceptions import best_match

    v = e.validator
    if v == "additionalProperties":
        allowed = list(e.schema.get("properties", {}))
        extras = [k for k in e.instance if k not in allowed]
        return [(parts + [k], f"unknown key {k!r}{_suggest(k, allowed)}; expected one of: "
                 + ", ".join(allowed)) for k in extras]
    if v == "required":
        # One error per missing key; its message starts with the key's repr.
        named = [k for k in e.validator_value
                 if k not in e.instance and e.message.startswith(repr(k))]
        if not named:
            return [(parts, e.message)]
        expected = _expected(e.schema.get("properties", {}).get(named[0]))
        return [(parts + [named[0]], f"missing required key; expected {expected}")]
    if v in ("oneOf", "anyOf"):
        branch = _matching_branch(e)
        if branch:  # the value has the type of one branch: report what is wrong inside it
            out: list[tuple[list[Any], str]] = []
            for sub in branch:
                out.extend(_messages(sub, parts + list(sub.relative_path)))
            return out
        if "description" in e.schema:
            return [(parts, f"found {_show(e.instance)}; expected {e.schema['description']}")]
        inner = best_match(e.context)
        if inner is None:
            return [(parts, e.message)]
        return [(parts + list(inner.relative_path), inner.message)]
    if v == "enum":
        return [(parts, f"found {_show(e.instance)}; expected one of "
                 + ", ".join(json.dumps(x) for x in e.validator_value))]
    if v in ("type", "pattern", "minLength", "minItems", "maxItems", "uniqueItems", "minimum",
             "exclusiveMinimum", "propertyNames"):
        return [(parts, f"found {_show(e.instance)}; expected {_expected(e.schema)}")]
    return [(parts, e.message)]


def _matching_branch(e: Any) -> list[Any]:
    """The errors of the one oneOf/anyOf branch whose type the value has, if exactly one has."""
    branches: dict[Any, list[Any]] = {}
    for sub in e.context:
        branches.setdefault(sub.schema_path[0], []).append(sub)
    typed = [errs for errs in branches.values()
             if not any(s.validator == "type" and not s.relative_path for s in errs)]
    return typed[0] if len(typed) == 1 else []


# --------------------------------------------------------------------------------------------
# Cross-field checks and construction of the values.

class _Collector:
    """Collects problems of one file with their sort keys."""

    def __init__(self, doc: dict, display: str, out: list[tuple[tuple, RuleProblem]]) -> None:
        self.doc, self.display, self.out = doc, display, out
        self.count = 0

    def add(self, parts: Sequence[Any], message: str) -> None:
        self.count += 1
        problem = RuleProblem(self.display, _where(self.doc, parts), message)
        self.out.append((_path_key(parts), problem))


def _si(raw: Any, quantity: str, parts: Sequence[Any], c: _Collector) -> float | None:
    """A number (already SI) or a unit string converted to SI; None and a problem if not."""
    if isinstance(raw, bool):
        c.add(parts, f"found {_show(raw)}; expected a number or a string with a unit")
        return None
    if isinstance(raw, (int, float)):
        value = float(raw)
        if not math.isfinite(value):
            c.add(parts, f"found {_show(raw)}; expected a finite number")
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
            hint = _suggest(over, [*METRICS, *CONDITIONS])
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
    from bomcheck.evaluate.engine import CHECKS

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
    from bomcheck.evaluate.engine import CHECKS

    before = c.count
    p = ["rule", i]
    metric = r.get("metric")
    if isinstance(metric, str) and metric not in METRICS:
        c.add(p + ["metric"], f"unknown metric {metric!r}{_suggest(metric, METRICS)}; expected "
              "one of: " + ", ".join(METRICS))
    check = r.get("check")
    if isinstance(check, str) and check not in CHECKS:
        c.add(p + ["check"], f"unknown check kind {check!r}{_suggest(check, CHECKS)}; expected "
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
            side = "at or below" if check == "max" else "at or above"
            c.add(p + ["warn"], f"warn limit {warn.text(metric)} is on the wrong side of the fail "
                  f"limit {fail.text(metric)}; expected it {side} the fail limit for a "
                  f"{check!r} check")
    examples = []
    for j, ex in enumerate(r.get("examples", []) if isinstance(r.get("examples"), list) else []):
        if not isinstance(ex, dict) or not isinstance(ex.get("given"), dict):
            continue
        for k in ex["given"]:
            if k not in TABLE_COLUMNS:
                c.add(p + ["examples", j, "given", k],
                      f"unknown column {k!r}{_suggest(k, TABLE_COLUMNS)}; expected refdes, a spec "
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
                      f"{_suggest(v, valid)}; expected one of: " + ", ".join(valid))
    bounds: list[Bound] = []
    for key, raw_value in raw.items():
        name, _, side = key.rpartition("_")
        if name in RANGES and side in _BOUND_OPS:
            column, quantity, label = RANGES[name]
            value = _si(raw_value, quantity, parts + [key], c)
            if value is None:
                ok = False
                continue
            bounds.append(Bound(key, column, _BOUND_OPS[side], value, label))

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


def _build_file(doc: dict, display: str, out: list[tuple[tuple, RuleProblem]]) -> _File | None:
    c = _Collector(doc, display, out)
    head_raw = doc.get("ruleset") if isinstance(doc.get("ruleset"), dict) else {}
    head = _Head(str(head_raw.get("name", "")), str(head_raw.get("title", "")),
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
    return _File(display, head, [r for r in rules if r is not None], sources, enable, disable,
                 extends if isinstance(extends, str) else None, dc_bias, aging,
                 _typical(doc.get("typical_ratings")),
                 dict(doc["circuit"]) if isinstance(doc.get("circuit"), dict) else None)


__all__ = [
    "DEFAULT_RULESET", "STATUSES", "Aging", "Applies", "Bound", "DcBias", "Example", "Layer",
    "Limit", "Rule", "RuleRow", "RuleSet", "Source",
    "json_path", "load_rules", "shipped_names",
]

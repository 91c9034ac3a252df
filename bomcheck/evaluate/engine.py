"""Evaluate stage: apply a rule set to the table of placements and their stresses, giving verdicts.

Pure and vectorised: each rule is a few column operations over the placements it applies to
(boolean masks, ``np.interp`` for curves); only the one-line messages are built per verdict, from
columns whose distinct values are formatted once.
"""

from __future__ import annotations

import operator
import string
from collections.abc import Callable
from dataclasses import dataclass
from itertools import repeat

import numpy as np
import pandas as pd

from bomcheck.evaluate.checks import CHECKS, CheckKind, check_kind  # noqa: F401 (re-exported)
from bomcheck.evaluate.rules import STATUSES, Applies, Rule, RuleSet, axis_quantity
from bomcheck.quantity import format_quantity, visible_pair
from bomcheck.stress.placement import BEST_ONLY
from bomcheck.vocabulary import INPUT_LABELS, METRICS

PASS, WARN, FAIL, NODATA = range(4)
_STATUS_TEXT = np.array(STATUSES, dtype=object)
# A value equal to the limit as written passes; allow for float rounding in ratios and curves.
_REL_TOL = 1e-9

VERDICT_COLUMNS = ("pidx", "refdes", "rule_id", "status", "value", "limit", "warn_limit", "margin",
                   "message", "source", "basis")

GENERIC_NOTE = ("; rests on generic typical data (common practice) and depends on data not "
                "given: give part data for a firm verdict")
ADVISORY_NOTE = "; advisory rule: at most a warning"
BOUND_FAIL_NOTE = "; fails even with every unknown at its most favourable value"
BOUND_PASS_NOTE = "; passes even with every unknown at its worst plausible value"
# Message notes by code (the engine's note column).
NOTE_GENERIC, NOTE_ADVISORY, NOTE_BOUND_FAIL, NOTE_BOUND_PASS = 1, 2, 3, 4
NOTES = ("", GENERIC_NOTE, ADVISORY_NOTE, BOUND_FAIL_NOTE, BOUND_PASS_NOTE)


# --------------------------------------------------------------------------------------------
# Column access, each column converted (and formatted for messages) once per table.

def _round_sig(x: np.ndarray, digits: int = 4) -> np.ndarray:
    """Round to ``digits`` significant digits, so that values printing alike share one string."""
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        mag = np.floor(np.log10(np.abs(x)))
        mag = np.where(np.isfinite(mag), mag, 0.0)
        scale = 10.0 ** (digits - 1 - mag)
        out = np.round(x * scale) / scale
    return np.where(np.isfinite(out), out, x)


@dataclass(frozen=True)
class _Coded:
    """Strings as codes into a lookup (the last entry is "?" for a missing value)."""

    codes: np.ndarray
    lookup: list[str]

    def take(self, rows: np.ndarray) -> _Coded:
        return _Coded(self.codes[rows], self.lookup)


def _coded_values(values: np.ndarray, unit: str, percent: bool = False) -> _Coded:
    """Values formatted as in messages ("?" for NaN), each distinct printed value once."""
    codes, uniques = pd.factorize(_round_sig(np.asarray(values, dtype=float)), use_na_sentinel=True)
    lookup = [format_quantity(u, unit, percent) for u in uniques.tolist()] + ["?"]
    codes = np.where(codes < 0, len(lookup) - 1, codes)
    return _Coded(codes, lookup)


def _coded_constant(text: str, k: int) -> _Coded:
    return _Coded(np.zeros(k, dtype=np.intp), [text])



class _Columns:
    def __init__(self, table: pd.DataFrame) -> None:
        self.table = table
        self.n = len(table)
        self._num: dict[str, np.ndarray] = {}
        self._factor: dict[str, tuple[np.ndarray, list]] = {}
        self._text: dict[str, np.ndarray] = {}
        self._formatted: dict[tuple[str, str, bool], _Coded] = {}

    def num(self, name: str) -> np.ndarray:
        """The column as floats, NaN where missing or not a number."""
        if name not in self._num:
            if name not in self.table.columns:
                out = np.full(self.n, np.nan)
            else:
                s = self.table[name]
                if not (pd.api.types.is_numeric_dtype(s.dtype)
                        or pd.api.types.is_bool_dtype(s.dtype)):
                    s = pd.to_numeric(s, errors="coerce")
                out = s.to_numpy(dtype=float, na_value=np.nan)
            self._num[name] = out
        return self._num[name]

    def factor(self, name: str) -> tuple[np.ndarray, list]:
        """(codes, distinct values); code -1 for a missing value or a missing column."""
        if name not in self._factor:
            if name not in self.table.columns:
                self._factor[name] = (np.full(self.n, -1, dtype=np.intp), [])
            else:
                codes, uniques = pd.factorize(self.table[name], use_na_sentinel=True)
                self._factor[name] = (np.asarray(codes, dtype=np.intp), list(uniques.tolist()))
        return self._factor[name]

    def _test(self, name: str, fn: Callable[[object], bool]) -> np.ndarray:
        codes, uniques = self.factor(name)
        return np.array([fn(u) for u in uniques] + [False], dtype=bool)[codes]

    def isin(self, name: str, values: tuple) -> np.ndarray:
        """True where the value is one of ``values`` (case-insensitive)."""
        wanted = {str(v).upper() for v in values}
        return self._test(name, lambda u: str(u).upper() in wanted)

    def is_true(self, name: str) -> np.ndarray:
        """True where the value is boolean True (missing counts as not True)."""
        return self._test(name, lambda u: isinstance(u, (bool, np.bool_)) and bool(u))

    def text(self, name: str) -> np.ndarray:
        """The column as strings, "" where missing."""
        if name not in self._text:
            if name not in self.table.columns:
                out = np.full(self.n, "", dtype=object)
            else:
                out = self.table[name].to_numpy(dtype=object)
                missing = pd.isna(out)
                if missing.any():
                    out = out.copy()
                    out[missing] = ""
                if pd.api.types.infer_dtype(out, skipna=False) not in ("string", "empty"):
                    out = np.array([str(v) for v in out.tolist()] or [], dtype=object)
            self._text[name] = out
        return self._text[name]

    def formatted(self, name: str, unit: str, percent: bool = False) -> _Coded:
        """The column formatted for messages (e.g. "14.2 V"), as codes into distinct strings."""
        key = (name, unit, percent)
        if key not in self._formatted:
            self._formatted[key] = _coded_values(self.num(name), unit, percent)
        return self._formatted[key]

    def coded_map(self, name: str, fn: Callable[[object], str], missing: str) -> _Coded:
        """``fn`` of each distinct value of a text column, as codes."""
        codes, uniques = self.factor(name)
        lookup = [fn(u) for u in uniques] + [missing]
        return _Coded(np.where(codes < 0, len(lookup) - 1, codes), lookup)


def _applies_mask(a: Applies, cols: _Columns) -> np.ndarray:
    m = np.ones(cols.n, dtype=bool)
    for key in ("technology", "dielectric", "safety_class", "package"):
        values = getattr(a, key)
        if values:
            m &= cols.isin(key, values)
    if a.dielectric_class:
        m &= np.isin(cols.num("dielectric_class"), np.asarray(a.dielectric_class, dtype=float))
    if a.polarized is not None:
        m &= cols.is_true("polarized") == a.polarized
    if a.emi_filter is not None:
        m &= cols.is_true("emi_filter") == a.emi_filter
    if a.voltage_kind == "ac":
        m &= cols.isin("voltage_kind", ("ac",))
    elif a.voltage_kind == "dc":
        # A rating that does not say DC or AC is read as DC (common practice).
        m &= ~cols.isin("voltage_kind", ("ac",))
    for column in a.only_if_given or ():
        m &= ~np.isnan(cols.num(column))
    for b in a.bounds:
        v = cols.num(b.column)
        with np.errstate(invalid="ignore"):
            inside = {">=": v >= b.value, "<=": v <= b.value,
                      ">": v > b.value, "<": v < b.value}[b.op]
        m &= inside | np.isnan(v)
    return m


# --------------------------------------------------------------------------------------------
# Message pieces.

def _template(explain: str) -> tuple[list[str], list[tuple[str, str]]]:
    """A metric's explain text split into literals and ``(column, unit)`` fields (one literal
    more than fields)."""
    literals, fields = [""], []
    for literal, name, spec, _ in string.Formatter().parse(explain):
        literals[-1] += literal
        if name is not None:
            fields.append((name, spec or ""))
            literals.append("")
    return literals, fields


def _measured(literals: list[str], texts: list[list[str]], name: str) -> list[str]:
    """The measured part of messages: explain literals around the field texts, then the value;
    where a field is unknown, the metric's name and value alone (``voltage ratio 92 %``)."""
    lit = literals
    if len(texts) == 1:
        out = [lit[0] + v for v in texts[0]]
    elif len(texts) == 2:
        out = [f"{lit[0]}{a}{lit[1]}{v}" for a, v in zip(*texts)]
    elif len(texts) == 3:
        out = [f"{lit[0]}{a}{lit[1]}{b}{lit[2]}{v}" for a, b, v in zip(*texts)]
    else:
        out = ["".join(x for pair in zip(lit, row[:-1]) for x in pair) + lit[-1] + row[-1]
               for row in zip(*texts)]
    if any("?" in field for field in texts[:-1]):
        label = name.replace("_", " ")
        for i, row in enumerate(zip(*texts[:-1])):
            if "?" in row:
                out[i] = f"{label} {texts[-1][i]}"
    return out


def _label(column: str) -> str:
    if column in INPUT_LABELS:
        return INPUT_LABELS[column]
    if column in METRICS:
        return f"{column} (not computed by the stress stage)"
    return column


def _missing_labels(needs: tuple[str, ...], missing: dict[str, np.ndarray],
                    k: int) -> tuple[np.ndarray, list[str]]:
    """(code per row, texts): labels of the missing inputs, naming a root cause rather than what
    follows from it."""
    code = np.zeros(k, dtype=np.int64)
    for bit, col in enumerate(needs):
        miss = missing[col]
        if col in METRICS:  # a metric whose own inputs are missing is not named twice
            for inp in METRICS[col].inputs:
                if inp in missing:
                    miss = miss & ~missing[inp]
        code |= miss.astype(np.int64) << bit
    uniq, inv = np.unique(code, return_inverse=True)
    texts = [", ".join(_label(c) for b, c in enumerate(needs) if u >> b & 1) or "a value"
             for u in uniq.tolist()]
    return inv.ravel(), texts


# --------------------------------------------------------------------------------------------
# Evaluation.

@dataclass(frozen=True)
class _Context:
    """Per-table columns every rule's messages use."""

    refdes: np.ndarray
    tech_at: _Coded  # "tantalum at " / "at " (curve rules)
    tech_semi: _Coded  # "tantalum; " / "" (constant limits)


def _distinct_rows(parts: list[_Coded], k: int) -> tuple[np.ndarray, np.ndarray]:
    """(first row of each distinct combination of codes, combination number of every row)."""
    key = np.zeros(k, dtype=np.int64)
    span = 1
    for p in parts:
        size = len(p.lookup)
        if span * size >= 2**62:  # keep the mixed-radix key inside int64
            key = pd.factorize(key)[0].astype(np.int64)
            span = int(key.max()) + 1 if k else 1
        key = key * size + p.codes
        span *= size
    inverse, _ = pd.factorize(key)
    # factorize numbers combinations in order of first appearance: a row is a first occurrence
    # where the running maximum of the numbers grows.
    running = np.maximum.accumulate(inverse)
    first = np.flatnonzero(np.r_[True, running[1:] > running[:-1]]) if k else np.zeros(0, np.intp)
    return first, inverse


def _status(kind: CheckKind, value: np.ndarray, limit: np.ndarray,
            warn_limit: np.ndarray) -> np.ndarray:
    """PASS, WARN or FAIL of each value against its limits (NaN compares as pass)."""
    with np.errstate(invalid="ignore"):
        over_fail = kind.margin(value, limit) < -_REL_TOL * np.abs(limit)
        over_warn = kind.margin(value, warn_limit) < -_REL_TOL * np.abs(warn_limit)
    return np.where(over_fail, FAIL, np.where(over_warn, WARN, PASS)).astype(np.int8)


def _kinder(kind: CheckKind, a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """Of two limits, the one kinder to the part (the higher ceiling, the lower floor)."""
    return np.fmax(a, b) if kind.name == "max" else np.fmin(a, b)


def _bounded(rule: Rule, kind: CheckKind, cols: _Columns, idx: np.ndarray, generic: np.ndarray,
             status: np.ndarray, value: np.ndarray, limit: np.ndarray,
             warn_limit: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Statuses of verdicts resting on unknown data, from the bounds of the unknowns.

    The stress stage gives ``<metric>_best`` (every unknown at its most favourable value) and,
    where the unknowns have a plausible worst, ``<metric>_worst``; a curve axis likewise. A
    verdict that fails at the favourable bound fails whatever the unknowns are (firm); one that
    passes at the worst bound passes (firm); anything else depends on the data: a warning.
    Returns (statuses, True where a bound decided).
    """
    best = cols.num(f"{rule.metric}_best")[idx]
    worst = cols.num(f"{rule.metric}_worst")[idx]
    metric_generic = np.isin(cols.text(f"{rule.metric}_basis")[idx], ("generic", BEST_ONLY))
    best = np.where(metric_generic, best, value)
    worst = np.where(metric_generic, worst, value)
    limit_best, warn_best = limit, warn_limit
    for axis in rule.axes:
        axis_generic = cols.text(f"{axis}_basis")[idx] == "generic"
        x_best = np.where(axis_generic, cols.num(f"{axis}_best")[idx], cols.num(axis)[idx])
        lim = rule.fail.at(x_best, len(idx))
        limit_best = np.where(np.isnan(x_best), np.nan, _kinder(kind, limit, lim))
        if rule.warn is not None and rule.warn.is_curve:
            warn_best = _kinder(kind, warn_limit, rule.warn.at(x_best, len(idx)))
        # an axis with no worst bound leaves the worst case unknown
        worst = np.where(axis_generic, np.nan, worst)
    s_best = _status(kind, best, limit_best, warn_best)
    s_worst = _status(kind, worst, limit, warn_limit)
    fails = generic & ~np.isnan(best) & ~np.isnan(limit_best) & (s_best == FAIL)
    passes = generic & ~fails & ~np.isnan(worst) & (s_worst == PASS)
    out = status.copy()
    out[generic] = WARN
    out[fails] = FAIL
    out[passes] = PASS
    return out, fails | passes



def _evaluate_rule(rule: Rule, cols: _Columns, idx: np.ndarray, ctx: _Context,
                   bodies: list[str]) -> dict[str, np.ndarray]:
    k = len(idx)
    kind = CHECKS[rule.check]
    value = cols.num(rule.metric)[idx]
    x = cols.num(rule.fail.over)[idx] if rule.fail.is_curve else None
    limit = rule.fail.at(x, k)
    if rule.warn is not None:
        wx = cols.num(rule.warn.over)[idx] if rule.warn.is_curve else None
        warn_limit = rule.warn.at(wx, k)
    else:
        warn_limit = np.full(k, np.nan)

    missing = {c: np.isnan(cols.num(c)[idx]) for c in rule.needs()}
    # No verdict without the metric, the curve axis or a bounded column; the metric's declared
    # inputs then name the cause. (A metric present with an input absent was computed another
    # way, e.g. the voltage ratio of an AC-rated part from its AC rms voltage.)
    decisive = [rule.metric, *rule.axes, *rule.applies.columns()]
    nodata = np.logical_or.reduce([missing[c] for c in decisive])

    shown = _status(kind, value, limit, warn_limit)  # of the value the message shows
    status = shown.copy()
    metric_basis = cols.text(f"{rule.metric}_basis")[idx]
    best_only = metric_basis == BEST_ONLY  # value unknown: only its kindest bound is shown
    generic = (metric_basis == "generic") | best_only
    for axis in rule.axes:
        generic = generic | (cols.text(f"{axis}_basis")[idx] == "generic")
    basis = np.where(generic, "generic", "firm").astype(object)
    note = np.zeros(k, dtype=np.intp)
    if generic.any():
        status, bound = _bounded(rule, kind, cols, idx, generic, status, value, limit,
                                 warn_limit)
        basis[bound] = "bound"
        note[generic] = NOTE_GENERIC
        note[bound & (status == FAIL)] = NOTE_BOUND_FAIL
        note[bound & (status == PASS)] = NOTE_BOUND_PASS
    # A value known only by its kindest bound is decided only where that bound fails.
    unknown = best_only & (status != FAIL)
    nodata = nodata | unknown
    capped = (status == FAIL) & (rule.severity == "warn") & ~nodata
    status[capped] = WARN
    note[capped] = NOTE_ADVISORY
    status[nodata] = NODATA
    basis[nodata] = "missing"
    margin = np.where(nodata, np.nan, kind.margin(value, limit))
    value = np.where(unknown, np.nan, value)

    body = _bodies(rule, kind, cols, idx, status, shown, note, limit, warn_limit, ctx,
                   missing, bodies)
    return {
        "pidx": idx, "status": status, "value": value, "limit": limit,
        "warn_limit": warn_limit, "margin": margin, "body": body, "basis": basis,
    }


def _bodies(rule: Rule, kind: CheckKind, cols: _Columns, idx: np.ndarray, status: np.ndarray,
            shown: np.ndarray, note: np.ndarray, limit: np.ndarray, warn_limit: np.ndarray,
            ctx: _Context, missing: dict[str, np.ndarray], bodies: list[str]) -> np.ndarray:
    """Message bodies (all of a message after the designator), e.g. ``: 14.2 V peak / 25 V
    rated = 56.8 % > 50 % limit (tantalum at 85 degC; NASA EEE-INST-002 Section C1 Table 4)``.

    Each distinct body is built once and appended to ``bodies``; returns every verdict's index
    into ``bodies``.
    """
    metric = METRICS[rule.metric]
    out = np.empty(len(idx), dtype=np.intp)

    src = rule.source
    nd = status == NODATA
    ok = np.flatnonzero(~nd)
    if ok.size:
        rows = idx[ok]
        k = ok.size
        literals, fields = _template(metric.explain)
        parts = [cols.formatted(name, spec).take(rows) for name, spec in fields]
        parts.append(cols.formatted(rule.metric, metric.unit, metric.percent).take(rows))
        st = shown[ok]  # the comparison printed is that of the value shown
        # "<= ", "> " or, past a warn limit, "> 50 % warn limit, <= "
        compare = _Coded((st != PASS).astype(np.intp), [f"{kind.inside} ", f"{kind.outside} "])
        warned = st == WARN
        if warned.any():
            w = _coded_values(warn_limit[ok][warned], metric.unit, metric.percent)
            compare.codes[warned] = w.codes + 2
            compare.lookup.extend(f"{kind.outside} {x} warn limit, {kind.inside} "
                                  for x in w.lookup)
        parts.append(compare)
        parts.append(_coded_values(limit[ok], metric.unit, metric.percent) if rule.fail.is_curve
                     else _coded_constant(format_quantity(float(rule.fail.value), metric.unit,
                                                          metric.percent), k))
        if rule.axes:
            _, ax_unit, ax_pct = axis_quantity(rule.axes[0]) or ("", "", False)
            parts.append(ctx.tech_at.take(rows))
            parts.append(cols.formatted(rule.axes[0], ax_unit, ax_pct).take(rows))
            tail = f"; {src})"
        else:
            parts.append(ctx.tech_semi.take(rows))
            tail = f"{src})"
        parts.append(_notes(cols, rule.metric, note[ok], rows))
        _show_violations(parts, len(fields), kind, metric, st, cols.num(rule.metric)[rows],
                         limit[ok])
        first, inverse = _distinct_rows(parts, k)
        texts = [np.array(p.lookup, dtype=object)[p.codes[first]].tolist() for p in parts]
        measured = _measured(literals, texts[: len(fields) + 1], rule.metric)
        compare_s, limit_s, *where, note_s = texts[len(fields) + 1:]
        where_b = where[1] if len(where) > 1 else repeat("")
        start = len(bodies)
        bodies.extend(f": {me} {c}{lm} limit ({wa}{wb}{tail}{nt}"
                      for me, c, lm, wa, wb, nt in zip(measured, compare_s, limit_s, where[0],
                                                       where_b, note_s))
        out[ok] = inverse + start
    if nd.any():
        codes, labels = _missing_labels(rule.needs(), {c: m[nd] for c, m in missing.items()},
                                        int(nd.sum()))
        start = len(bodies)
        bodies.extend(f": no data for {rule.title}: missing {lab}; {src}" for lab in labels)
        out[nd] = codes + start
    return out


def _notes(cols: _Columns, metric: str, note: np.ndarray, rows: np.ndarray) -> _Coded:
    """The message notes by code; a verdict left undecided by unknown data (a warning on generic
    data) also names the unknowns from the ``<metric>_note`` column where the stress stage
    gives one."""
    if f"{metric}_note" not in cols.table.columns:
        return _Coded(note, list(NOTES))
    extra = cols.coded_map(f"{metric}_note", lambda t: f" ({t})" if t else "", "").take(rows)
    m = len(extra.lookup)
    codes = note * m + np.where(note == NOTE_GENERIC, extra.codes, m - 1)
    return _Coded(codes, [n + x for n in NOTES for x in extra.lookup])


def _show_violations(parts: list[_Coded], at: int, kind: CheckKind, metric, shown: np.ndarray,
                     value: np.ndarray, limit: np.ndarray) -> None:
    """Where a failing value and its limit print alike at four digits (70.004 % against 70 %),
    print both with the digits that show the failure: ``parts[at]`` is the value, ``parts[at +
    2]`` the limit. Only the few such verdicts are formatted again."""
    with np.errstate(invalid="ignore"):
        rv, rl = _round_sig(value), _round_sig(limit)
        visible = (rv > rl) if kind.name == "max" else (rv < rl)
    hidden = np.flatnonzero((shown == FAIL) & ~visible & np.isfinite(value) & np.isfinite(limit))
    if not hidden.size:
        return
    beyond = operator.gt if kind.name == "max" else operator.lt
    for j in (at, at + 2):
        parts[j] = _Coded(parts[j].codes.copy(), list(parts[j].lookup))
    for i in hidden.tolist():
        v, lim = visible_pair(float(value[i]), float(limit[i]), metric.unit, metric.percent,
                              beyond)
        for j, text in ((at, v), (at + 2, lim)):
            parts[j].codes[i] = len(parts[j].lookup)
            parts[j].lookup.append(text)


def _show_best_only(table: pd.DataFrame) -> pd.DataFrame:
    """The table with each metric known only by its kindest bound (``<metric>_basis`` =
    ``BEST_ONLY``) showing that bound, so that a failure there reads with its value."""
    out = table
    for col in table.columns:
        if not (isinstance(col, str) and col.endswith("_basis")):
            continue
        metric = col[: -len("_basis")]
        rows = (table[col] == BEST_ONLY).to_numpy()
        if metric in table and f"{metric}_best" in table and rows.any():
            if out is table:
                out = table.copy(deep=False)
            value = pd.to_numeric(out[metric], errors="coerce").to_numpy(dtype=float, copy=True)
            value[rows] = pd.to_numeric(out[f"{metric}_best"], errors="coerce").to_numpy(
                dtype=float)[rows]
            out[metric] = value
    return out


def evaluate(table: pd.DataFrame, ruleset: RuleSet) -> pd.DataFrame:
    """Verdicts of every enabled rule on every placement it applies to (long format).

    ``table`` holds one row per fitted placement (RangeIndex): ``refdes``, the CapSpec fields, the
    design conditions, the metrics and optionally ``<metric>_basis``; absent columns count as
    missing. Returns columns ``VERDICT_COLUMNS``, sorted by ``pidx`` then ``rule_id``; ``pidx``
    is the placement's position in ``table``.
    """
    cols = _Columns(_show_best_only(table.reset_index(drop=True)))
    ctx = _Context(
        refdes=cols.text("refdes"),
        tech_at=cols.coded_map("technology", lambda t: f"{t} at " if t else "at ", "at "),
        tech_semi=cols.coded_map("technology", lambda t: f"{t}; " if t else "", ""),
    )
    parts: list[tuple[Rule, dict[str, np.ndarray]]] = []
    bodies: list[str] = []
    for rule in sorted(ruleset.enabled_rules, key=lambda r: r.id):
        idx = np.flatnonzero(_applies_mask(rule.applies, cols))
        if idx.size:
            parts.append((rule, _evaluate_rule(rule, cols, idx, ctx, bodies)))
    if not parts:
        return _empty()
    cat = {name: np.concatenate([p[name] for _, p in parts])
           for name in ("pidx", "status", "value", "limit", "warn_limit", "margin", "body",
                        "basis")}
    sizes = [len(p["pidx"]) for _, p in parts]
    rule_no = np.repeat(np.arange(len(parts)), sizes)
    rule_ids = np.array([r.id for r, _ in parts], dtype=object)
    sources = np.array([r.source for r, _ in parts], dtype=object)
    order = np.argsort(cat["pidx"], kind="stable")
    pidx = cat["pidx"][order]
    rule_no = rule_no[order]
    refdes = ctx.refdes[pidx]
    # The one per-verdict Python step: designator + its distinct body.
    message = np.empty(len(pidx), dtype=object)
    message[:] = list(map(operator.add, refdes.tolist(),
                          np.array(bodies, dtype=object)[cat["body"][order]].tolist()))
    # Object columns stay object: inferring a string dtype for 10^6 messages costs more than
    # the evaluation.
    return pd.DataFrame({
        "pidx": pidx.astype(np.int64),
        "refdes": _obj(refdes),
        "rule_id": _obj(rule_ids[rule_no]),
        "status": _obj(_STATUS_TEXT[cat["status"][order]]),
        "value": cat["value"][order],
        "limit": cat["limit"][order],
        "warn_limit": cat["warn_limit"][order],
        "margin": cat["margin"][order],
        "message": _obj(message),
        "source": _obj(sources[rule_no]),
        "basis": _obj(cat["basis"][order]),
    })


def _obj(values: np.ndarray) -> pd.Series:
    return pd.Series(values, dtype=object, copy=False)


def _empty() -> pd.DataFrame:
    return pd.DataFrame({
        "pidx": np.array([], dtype=np.int64),
        **{c: _obj(np.array([], dtype=object)) for c in ("refdes", "rule_id", "status")},
        **{c: np.array([], dtype=float) for c in ("value", "limit", "warn_limit", "margin")},
        **{c: _obj(np.array([], dtype=object)) for c in ("message", "source", "basis")},
    })


def without_unverdicted(table: pd.DataFrame, verdicts: pd.DataFrame,
                        ruleset: RuleSet) -> pd.DataFrame:
    """The table with every metric a placement has no rule verdict on set to NaN: a stress is
    shown only where a rule on it (or on a curve over it) gave that placement a verdict, and a
    component only where a stress it feeds is shown (a stress shown is a stress checked).

    ``verdicts`` is ``evaluate``'s table (``pidx`` into ``table``); rows of ids that are no rule
    of ``ruleset`` (the audit's own verdicts) count for nothing.
    """
    n = len(table)
    pidx = verdicts["pidx"].to_numpy(dtype=np.int64) if len(verdicts) else np.zeros(0, np.int64)
    ids = verdicts["rule_id"].to_numpy(dtype=object) if len(verdicts) else np.zeros(0, object)
    shown: dict[str, np.ndarray] = {}
    for rule in ruleset.rules:
        at = pidx[ids == rule.id]
        if not at.size:
            continue
        for name in (rule.metric, *rule.axes):
            shown.setdefault(name, np.zeros(n, dtype=bool))[at] = True

    # The fields a shown stress's message prints (its operating temperature, its transient
    # peak) are shown with it.
    for name in list(shown):
        for _, field_name, _, _ in string.Formatter().parse(METRICS[name].explain):
            if field_name in METRICS:
                shown.setdefault(field_name, np.zeros(n, dtype=bool))
                shown[field_name] = shown[field_name] | shown[name]

    done: dict[str, np.ndarray] = {}

    def fed(name: str) -> np.ndarray:  # the feeds of the registry form no cycle
        if name not in done:
            out = shown.get(name, np.zeros(n, dtype=bool)).copy()
            for target in METRICS[name].feeds:
                out |= fed(target)
            done[name] = out
        return done[name]

    blanked: dict[str, np.ndarray] = {}
    for name in METRICS:
        if name not in table.columns:
            continue
        keep = fed(name)
        if keep.all():
            continue
        values = pd.to_numeric(table[name], errors="coerce").to_numpy(dtype=float, copy=True)
        values[~keep] = np.nan
        blanked[name] = values
    if not blanked:
        return table.copy(deep=False)
    # One concatenation, not a column at a time (a frame of many inserted columns fragments).
    rest = table.drop(columns=list(blanked))
    return pd.concat([rest, pd.DataFrame(blanked, index=table.index)], axis=1)[table.columns]

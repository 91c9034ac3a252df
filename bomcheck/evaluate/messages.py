"""Evaluate stage: the one-line verdict messages, built from codes and numbers only for the
verdicts an output prints (each distinct message body formatted once)."""

from __future__ import annotations

import operator
import string
from itertools import repeat

import numpy as np
import pandas as pd

from bomcheck.frozen import frozen
from bomcheck.evaluate.checks import FAIL, NODATA, PASS, WARN, CheckKind, status_of
from bomcheck.evaluate.columns import (Coded, Columns, coded_constant, coded_values, object_codes,
                                       round_sig)
from bomcheck.evaluate.rule_model import Rule, axis_quantity
from bomcheck.quantity import format_quantity, visible_pair
from bomcheck.vocabulary import INPUT_LABELS, METRICS

GENERIC_NOTE = ("; rests on generic typical data (common practice) and depends on data not "
                "given: give part data for a firm verdict")
ADVISORY_NOTE = "; advisory rule: at most a warning"
BOUND_FAIL_NOTE = "; fails even with every unknown at its most favourable value"
BOUND_PASS_NOTE = "; passes even with every unknown at its worst plausible value"
# Message notes by code (the engine's note column).
NOTE_GENERIC, NOTE_ADVISORY, NOTE_BOUND_FAIL, NOTE_BOUND_PASS = 1, 2, 3, 4
NOTES = ("", GENERIC_NOTE, ADVISORY_NOTE, BOUND_FAIL_NOTE, BOUND_PASS_NOTE)


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

@frozen
class Context:
    """Per-table columns every rule's messages use."""

    refdes: np.ndarray
    tech_at: Coded  # "tantalum at " / "at " (curve rules)
    tech_semi: Coded  # "tantalum; " / "" (constant limits)


def _distinct_rows(parts: list[Coded], k: int) -> tuple[np.ndarray, np.ndarray]:
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



@frozen
class RuleVerdicts:
    """One rule's verdicts as codes: what its messages are built from, when an output prints
    them (positions in ``idx`` order, ``idx`` the placements, ascending). The limits, the status
    of the value shown and the missing inputs are computed again for the verdicts printed
    (``selected``): kept for every verdict they took about 30 bytes each."""

    rule: Rule
    kind: CheckKind
    idx: np.ndarray
    status: np.ndarray  # PASS, WARN, FAIL or NODATA
    note: np.ndarray  # NOTES code


def rule_limits(rule: Rule, cols: Columns, idx: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(fail limit, warn limit) of ``rule`` at the placements ``idx``; NaN where none."""
    k = len(idx)
    x = cols.num(rule.fail.over)[idx] if rule.fail.is_curve else None
    limit = rule.fail.at(x, k)
    if rule.warn is None:
        return limit, np.full(k, np.nan)
    wx = cols.num(rule.warn.over)[idx] if rule.warn.is_curve else None
    return limit, rule.warn.at(wx, k)


def shown_status(rule: Rule, kind: CheckKind, cols: Columns, idx: np.ndarray, limit: np.ndarray,
                 warn_limit: np.ndarray) -> np.ndarray:
    """The status of the value a message shows (before bounds and caps)."""
    return status_of(kind, cols.num(rule.metric)[idx], limit, warn_limit)


def missing_inputs(rule: Rule, cols: Columns, idx: np.ndarray) -> dict[str, np.ndarray]:
    """Per column the rule needs, True where it is missing at the placements ``idx``."""
    return {c: np.isnan(cols.num(c)[idx]) for c in rule.needs()}


def bodies_of(rv: RuleVerdicts, sel: np.ndarray, cols: Columns, ctx: Context,
              bodies: list[str]) -> np.ndarray:
    """Message bodies (all of a message after the designator) of the verdicts at positions
    ``sel`` of ``rv``, e.g. ``: 14.2 V peak / 25 V rated = 56.8 % > 50 % limit (tantalum at 85
    degC; NASA EEE-INST-002 Section C1 Table 4)``.

    Each distinct body is built once and appended to ``bodies``; returns each selected
    verdict's index into ``bodies``.
    """
    out = np.empty(len(sel), dtype=np.intp)
    nd = rv.status[sel] == NODATA
    ok = sel[~nd]
    if ok.size:
        out[~nd] = _measured_bodies(rv, ok, cols, ctx, bodies)
    if nd.any():
        rule, src = rv.rule, rv.rule.source
        codes, labels = _missing_labels(rule.needs(),
                                        missing_inputs(rule, cols, rv.idx[sel[nd]]),
                                        int(nd.sum()))
        start = len(bodies)
        bodies.extend(f": no data for {rule.title}: missing {lab}; {src}" for lab in labels)
        out[nd] = codes + start
    return out


def _measured_bodies(rv: RuleVerdicts, ok: np.ndarray, cols: Columns, ctx: Context,
                     bodies: list[str]) -> np.ndarray:
    """``bodies_of`` the verdicts at positions ``ok``, none of them no data."""
    rule, kind, metric = rv.rule, rv.kind, METRICS[rv.rule.metric]
    rows = rv.idx[ok]
    k = ok.size
    literals, fields = _template(metric.explain)
    parts = [cols.formatted(name, spec).take(rows) for name, spec in fields]
    parts.append(cols.formatted(rule.metric, metric.unit, metric.percent).take(rows))
    limit, warn_limit = rule_limits(rule, cols, rows)
    st = shown_status(rule, kind, cols, rows, limit, warn_limit)  # the comparison printed
    parts.append(_compare(kind, metric, st, warn_limit))
    parts.append(coded_values(limit, metric.unit, metric.percent) if rule.fail.is_curve
                 else coded_constant(format_quantity(float(rule.fail.value), metric.unit,
                                                     metric.percent), k))
    if rule.axes:
        _, ax_unit, ax_pct = axis_quantity(rule.axes[0]) or ("", "", False)
        parts.append(ctx.tech_at.take(rows))
        parts.append(cols.formatted(rule.axes[0], ax_unit, ax_pct).take(rows))
        tail = f"; {rule.source})"
    else:
        parts.append(ctx.tech_semi.take(rows))
        tail = f"{rule.source})"
    parts.append(_notes(cols, rule.metric, rv.note[ok], rows))
    _show_violations(parts, len(fields), kind, metric, st, cols.num(rule.metric)[rows], limit)
    first, inverse = _distinct_rows(parts, k)
    texts = [np.array(p.lookup, dtype=object)[p.codes[first]].tolist() for p in parts]
    measured = _measured(literals, texts[: len(fields) + 1], rule.metric)
    compare_s, limit_s, *where, note_s = texts[len(fields) + 1:]
    where_b = where[1] if len(where) > 1 else repeat("")
    start = len(bodies)
    bodies.extend(f": {me} {c}{lm} limit ({wa}{wb}{tail}{nt}"
                  for me, c, lm, wa, wb, nt in zip(measured, compare_s, limit_s, where[0],
                                                   where_b, note_s))
    return inverse + start


def _compare(kind: CheckKind, metric, shown: np.ndarray, warn_limit: np.ndarray) -> Coded:
    """The comparison each message prints: "<= ", "> " or, past a warn limit, "> 50 % warn
    limit, <= "."""
    compare = Coded((shown != PASS).astype(np.intp), [f"{kind.inside} ", f"{kind.outside} "])
    warned = shown == WARN
    if warned.any():
        w = coded_values(warn_limit[warned], metric.unit, metric.percent)
        compare.codes[warned] = w.codes + 2
        compare.lookup.extend(f"{kind.outside} {x} warn limit, {kind.inside} "
                              for x in w.lookup)
    return compare


class Messages:
    """The messages of an evaluation's verdicts, rendered on demand: an output asks for the
    verdicts it prints, and only those are formatted (most verdicts are passes nobody prints)."""

    def __init__(self, cols: Columns, ctx: Context, rules: list[RuleVerdicts]) -> None:
        self._cols, self._ctx = cols, ctx
        self._rules = {rv.rule.id: rv for rv in rules}

    def texts(self, rv: RuleVerdicts, sel: np.ndarray) -> list[str]:
        """The messages (designator + body) of the verdicts at positions ``sel`` of ``rv``."""
        bodies: list[str] = []
        codes = bodies_of(rv, sel, self._cols, self._ctx, bodies)
        refdes = self._ctx.refdes[rv.idx[sel]].tolist()
        return list(map(operator.add, refdes, np.array(bodies, dtype=object)[codes].tolist()))

    def for_verdicts(self, pidx: np.ndarray, rule_ids: np.ndarray) -> np.ndarray:
        """The message of each verdict (placement ``pidx``, rule id); None where this evaluation
        gave no such verdict (the audit's own verdicts carry their messages)."""
        out = np.full(len(pidx), None, dtype=object)
        codes, ids = object_codes(np.asarray(rule_ids, dtype=object))
        for j, rule_id in enumerate(ids):
            rv = self._rules.get(rule_id)
            if rv is None:
                continue
            at = np.flatnonzero(codes == j)
            # the placements asked for in the type of the rule's own (not those in another
            # type: a copy per look-up); one past any placement stays past them
            asked = np.minimum(pidx[at], np.iinfo(rv.idx.dtype).max).astype(rv.idx.dtype)
            pos = np.searchsorted(rv.idx, asked)
            hit = pos < len(rv.idx)
            hit[hit] = rv.idx[pos[hit]] == asked[hit]
            if hit.any():
                out[at[hit]] = self.texts(rv, pos[hit])
        return out


def _notes(cols: Columns, metric: str, note: np.ndarray, rows: np.ndarray) -> Coded:
    """The message notes by code; a verdict left undecided by unknown data (a warning on generic
    data) also names the unknowns from the ``<metric>_note`` column where the stress stage
    gives one."""
    note = note.astype(np.intp)
    if f"{metric}_note" not in cols.table.columns:
        return Coded(note, list(NOTES))
    extra = cols.coded_map(f"{metric}_note", lambda t: f" ({t})" if t else "", "", rows)
    m = len(extra.lookup)
    codes = note * m + np.where(note == NOTE_GENERIC, extra.codes, m - 1)
    return Coded(codes, [n + x for n in NOTES for x in extra.lookup])


def _show_violations(parts: list[Coded], at: int, kind: CheckKind, metric, shown: np.ndarray,
                     value: np.ndarray, limit: np.ndarray) -> None:
    """Where a failing value and its limit print alike at four digits (70.004 % against 70 %),
    print both with the digits that show the failure: ``parts[at]`` is the value, ``parts[at +
    2]`` the limit. Only the few such verdicts are formatted again."""
    failing = np.flatnonzero((shown == FAIL) & np.isfinite(value) & np.isfinite(limit))
    with np.errstate(invalid="ignore"):  # only the failures are rounded
        rv, rl = round_sig(value[failing]), round_sig(limit[failing])
        visible = (rv > rl) if kind.name == "max" else (rv < rl)
    hidden = failing[~visible]
    if not hidden.size:
        return
    beyond = operator.gt if kind.name == "max" else operator.lt
    for j in (at, at + 2):
        parts[j] = Coded(parts[j].codes.copy(), list(parts[j].lookup))
    for i in hidden.tolist():
        v, lim = visible_pair(float(value[i]), float(limit[i]), metric.unit, metric.percent,
                              beyond)
        for j, text in ((at, v), (at + 2, lim)):
            parts[j].codes[i] = len(parts[j].lookup)
            parts[j].lookup.append(text)


"""Evaluate stage: apply a rule set to the table of placements and their stresses, giving verdicts.

Pure and vectorised: each rule is a few column operations over the placements it applies to
(boolean masks, ``np.interp`` for curves). The verdicts are codes and numbers; the one-line
messages are built (``bomcheck.evaluate.messages``) only for the verdicts an output prints.
"""

from __future__ import annotations

import string

import numpy as np
import pandas as pd

from bomcheck.evaluate.checks import (CHECKS, FAIL, NODATA, PASS, WARN, CheckKind, check_kind,
                                      kinder, status_of)
from bomcheck.evaluate.columns import Columns, applies_mask, object_codes
from bomcheck.evaluate.messages import (NOTE_ADVISORY, NOTE_BOUND_FAIL, NOTE_BOUND_PASS,
                                        NOTE_GENERIC, Context, Messages, RuleVerdicts,
                                        rule_limits)
from bomcheck.evaluate.rule_model import STATUSES, Rule, RuleSet
from bomcheck.stress.placement import BEST_ONLY
from bomcheck.vocabulary import METRICS

__all__ = ["CHECKS", "VERDICT_COLUMNS", "CheckKind", "Messages", "check_kind", "evaluate",
           "evaluate_lazily", "without_unverdicted"]

_STATUS_TEXT = np.array(STATUSES, dtype=object)

VERDICT_COLUMNS = ("pidx", "refdes", "rule_id", "status", "value", "limit", "warn_limit", "margin",
                   "message", "source", "basis")


# Basis codes of the engine's verdicts (the verdict table's ``basis`` column).
FIRM, GENERIC, BOUND, MISSING = range(4)
_BASIS_TEXT = np.array(["firm", "generic", "bound", "missing"], dtype=object)


def _generic(cols: Columns, name: str, idx: np.ndarray) -> np.ndarray:
    """True where the column ``name`` rests on generic typical data at the placements ``idx``."""
    return cols.equals(f"{name}_basis", "generic")[idx]


def _bounded(rule: Rule, kind: CheckKind, cols: Columns, idx: np.ndarray, generic: np.ndarray,
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
    metric_generic = (_generic(cols, rule.metric, idx)
                      | cols.equals(f"{rule.metric}_basis", BEST_ONLY)[idx])
    best = np.where(metric_generic, best, value)
    worst = np.where(metric_generic, worst, value)
    limit_best, warn_best = limit, warn_limit
    for axis in rule.axes:
        axis_generic = _generic(cols, axis, idx)
        x_best = np.where(axis_generic, cols.num(f"{axis}_best")[idx], cols.num(axis)[idx])
        lim = rule.fail.at(x_best, len(idx))
        limit_best = np.where(np.isnan(x_best), np.nan, kinder(kind, limit, lim))
        if rule.warn is not None and rule.warn.is_curve:
            warn_best = kinder(kind, warn_limit, rule.warn.at(x_best, len(idx)))
        # an axis with no worst bound leaves the worst case unknown
        worst = np.where(axis_generic, np.nan, worst)
    s_best = status_of(kind, best, limit_best, warn_best)
    s_worst = status_of(kind, worst, limit, warn_limit)
    fails = generic & ~np.isnan(best) & ~np.isnan(limit_best) & (s_best == FAIL)
    passes = generic & ~fails & ~np.isnan(worst) & (s_worst == PASS)
    out = status.copy()
    out[generic] = WARN
    out[fails] = FAIL
    out[passes] = PASS
    return out, fails | passes


def _evaluate_rule(rule: Rule, cols: Columns,
                   idx: np.ndarray) -> tuple[RuleVerdicts, dict[str, np.ndarray]]:
    """The rule's verdicts on the placements ``idx``: the codes its messages are built from,
    and the value, limit, warn limit, margin and basis (``BASIS`` codes) columns."""
    kind = CHECKS[rule.check]
    value = cols.num(rule.metric)[idx]
    limit, warn_limit = rule_limits(rule, cols, idx)
    # No verdict without the metric, the curve axis or a bounded column; the metric's declared
    # inputs then name the cause. (A metric present with an input absent was computed another
    # way, e.g. the voltage ratio of an AC-rated part from its AC rms voltage.)
    decisive = dict.fromkeys([rule.metric, *rule.axes, *rule.applies.columns()])
    nodata = np.logical_or.reduce([np.isnan(cols.num(c)[idx]) for c in decisive])

    status = status_of(kind, value, limit, warn_limit)  # of the value the message shows
    best_only = cols.equals(f"{rule.metric}_basis", BEST_ONLY)[idx]  # only its kindest bound
    generic = _generic(cols, rule.metric, idx) | best_only
    for axis in rule.axes:
        generic = generic | _generic(cols, axis, idx)
    basis = generic.astype(np.int8)  # FIRM or GENERIC
    note = np.zeros(len(idx), dtype=np.int8)
    if generic.any():
        status, bound = _bounded(rule, kind, cols, idx, generic, status, value, limit,
                                 warn_limit)
        basis[bound] = BOUND
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
    basis[nodata] = MISSING
    margin = kind.margin(value, limit)
    margin[nodata] = np.nan
    value = np.where(unknown, np.nan, value)

    rv = RuleVerdicts(rule, kind, idx, status, note)
    return rv, {"value": value, "limit": limit, "warn_limit": warn_limit, "margin": margin,
                "basis": basis}


def _show_best_only(table: pd.DataFrame) -> pd.DataFrame:
    """The table with each metric known only by its kindest bound (``<metric>_basis`` =
    ``BEST_ONLY``) showing that bound, so that a failure there reads with its value."""
    out = table
    for col in table.columns:
        if not (isinstance(col, str) and col.endswith("_basis")):
            continue
        metric = col[: -len("_basis")]
        if metric not in table or f"{metric}_best" not in table:
            continue
        rows = np.asarray(table[col].to_numpy(dtype=object) == BEST_ONLY, dtype=bool)
        if rows.any():
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
    is the placement's position in ``table``. Every verdict carries its message.
    """
    return evaluate_lazily(table, ruleset, passes=True)[0]


def evaluate_lazily(table: pd.DataFrame, ruleset: RuleSet, *,
                    passes: bool = False) -> tuple[pd.DataFrame, Messages]:
    """``evaluate`` with no message on any verdict (``passes``: a message on every verdict);
    the returned ``Messages`` renders a verdict's message on demand, so only the messages an
    output prints are ever built, a chunk of placements at a time (at 10^6 placements the
    messages of the verdicts that are not a pass alone took about a gigabyte)."""
    cols = Columns(_show_best_only(table.reset_index(drop=True)))
    ctx = Context(
        refdes=cols.text("refdes"),
        tech_at=cols.coded_map("technology", lambda t: f"{t} at " if t else "at ", "at "),
        tech_semi=cols.coded_map("technology", lambda t: f"{t}; " if t else "", ""),
    )
    parts: list[tuple[RuleVerdicts, dict[str, np.ndarray]]] = []
    # placements as 32-bit positions where they fit: the messages keep them for every verdict
    small = np.int32 if cols.n < 2**31 else np.int64
    for rule in sorted(ruleset.enabled_rules, key=lambda r: r.id):
        idx = np.flatnonzero(applies_mask(rule.applies, cols)).astype(small)
        if idx.size:
            parts.append(_evaluate_rule(rule, cols, idx))
    messages = Messages(cols, ctx, [rv for rv, _ in parts])
    if not parts:
        return _empty(), messages
    texts = ([np.array(messages.texts(rv, np.arange(len(rv.idx))), dtype=object)
              for rv, _ in parts] if passes else None)
    return _frame(parts, texts, ctx), messages


def _frame(parts: list[tuple[RuleVerdicts, dict[str, np.ndarray]]], texts: list | None,
           ctx: Context) -> pd.DataFrame:
    """The verdict table of the rules' verdicts (``texts``: their messages, or None), sorted by
    placement, then rule id (``parts`` come in rule id order, each by placement: the stable
    sort merges them). The text columns are taken from codes."""
    order = np.argsort(np.concatenate([rv.idx for rv, _ in parts]), kind="stable")

    def placed(get) -> np.ndarray:
        return np.concatenate([get(rv, p) for rv, p in parts])[order]

    sizes = [len(rv.idx) for rv, _ in parts]
    rule_no = np.repeat(np.arange(len(parts), dtype=np.int32), sizes)[order]
    pidx = placed(lambda rv, p: rv.idx).astype(np.int64)
    rule_ids = np.array([rv.rule.id for rv, _ in parts], dtype=object)
    sources = np.array([rv.rule.source for rv, _ in parts], dtype=object)
    message = (np.concatenate(texts)[order] if texts is not None
               else np.full(len(pidx), None, dtype=object))
    # Object columns stay object: inferring a string dtype for 10^6 messages costs more than
    # the evaluation.
    return pd.DataFrame({
        "pidx": pidx,
        "refdes": _obj(ctx.refdes[pidx]),
        "rule_id": _obj(rule_ids[rule_no]),
        "status": _obj(_STATUS_TEXT[placed(lambda rv, p: rv.status)]),
        **{c: placed(lambda rv, p: p[c]) for c in ("value", "limit", "warn_limit", "margin")},
        "message": _obj(message),
        "source": _obj(sources[rule_no]),
        "basis": _obj(_BASIS_TEXT[placed(lambda rv, p: p["basis"])]),
    }, copy=False)  # no consolidation: stacking the columns into blocks would copy them all


def _obj(values: np.ndarray) -> pd.Series:
    return pd.Series(values, dtype=object, copy=False)


def _empty() -> pd.DataFrame:
    return pd.DataFrame({
        "pidx": np.array([], dtype=np.int64),
        **{c: _obj(np.array([], dtype=object)) for c in ("refdes", "rule_id", "status")},
        **{c: np.array([], dtype=float) for c in ("value", "limit", "warn_limit", "margin")},
        **{c: _obj(np.array([], dtype=object)) for c in ("message", "source", "basis")},
    })


def _float_copy(column: pd.Series) -> np.ndarray:
    """A copy of a column as floats (NaN where not a number); a column of floats, nearly every
    metric column, is copied with no conversion."""
    if column.dtype != np.float64:
        column = pd.to_numeric(column, errors="coerce")
    return column.to_numpy(dtype=float, copy=True)


def _shown_by_rules(verdicts: pd.DataFrame, ruleset: RuleSet, n: int) -> dict[str, np.ndarray]:
    """Per metric or curve axis, True at the placements a rule of ``ruleset`` on it gave a
    verdict (``verdicts``: ``pidx`` into a table of ``n`` placements)."""
    pidx = verdicts["pidx"].to_numpy(dtype=np.int64) if len(verdicts) else np.zeros(0, np.int64)
    codes, seen = object_codes(verdicts["rule_id"]) if len(verdicts) else (pidx, [])
    # Per metric, which distinct rule ids show it (the last entry: no rule id); then one look-up
    # per verdict and metric, not one comparison per rule.
    code_of = {rule_id: j for j, rule_id in enumerate(list(seen))}
    shows: dict[str, np.ndarray] = {}
    for rule in ruleset.rules:
        j = code_of.get(rule.id)
        if j is None:
            continue
        for name in (rule.metric, *rule.axes):
            shows.setdefault(name, np.zeros(len(code_of) + 1, dtype=bool))[j] = True
    shown: dict[str, np.ndarray] = {}
    for name, of_rule in shows.items():
        shown[name] = np.zeros(n, dtype=bool)
        shown[name][pidx[of_rule[codes]]] = True
    return shown


def without_unverdicted(table: pd.DataFrame, verdicts: pd.DataFrame,
                        ruleset: RuleSet) -> pd.DataFrame:
    """The table with every metric a placement has no rule verdict on set to NaN: a stress is
    shown only where a rule on it (or on a curve over it) gave that placement a verdict, and a
    component only where a stress it feeds is shown (a stress shown is a stress checked).

    ``verdicts`` is ``evaluate``'s table (``pidx`` into ``table``); rows of ids that are no rule
    of ``ruleset`` (the audit's own verdicts) count for nothing.
    """
    n = len(table)
    shown = _shown_by_rules(verdicts, ruleset, n)

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
        values = _float_copy(table[name])
        values[~keep] = np.nan
        blanked[name] = values
    if not blanked:
        return table.copy(deep=False)
    # One new frame of the columns as they are (no copy; a concatenation in column order
    # copied every blanked column once more: about 8 bytes per placement and metric).
    return pd.DataFrame({c: blanked[c] if c in blanked else table[c] for c in table.columns},
                        index=table.index, copy=False)

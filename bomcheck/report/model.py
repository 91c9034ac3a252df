"""Report stage: the audit's result as one value, and its JSON form (schema ``report.schema.json``).

Renderers (terminal, JSON file, later spreadsheets and CI formats) take a ``Report`` and never
recompute anything. The JSON form holds no clock reading, so the same inputs give the same bytes.
"""

from __future__ import annotations

import json
from dataclasses import field
from typing import Any

import numpy as np
import pandas as pd

from bomcheck.frozen import frozen
from bomcheck.report import jsonform
from bomcheck.report.jsonform import (
    SCHEMA_VERSION,
    column_texts,
    frame_objects,
    join_per_row,
    objects,
    write_chunks,
)
from bomcheck.report.jsontext import json_dumps
from bomcheck.rowcodes import row_codes
from bomcheck.spec import SPEC_KEYS
from bomcheck.status import RANK as _RANK
from bomcheck.status import at_least, worst
from bomcheck.stress.circuit import JSON_FIELDS
from bomcheck.vocabulary import CONDITIONS, METRICS

CAUTIONS: tuple[str, ...] = (
    "These results support engineering review; they do not replace it. A pass means the "
    "placement met the rules in force with the data given, nothing more.",
    "The shipped limits were copied by hand from the documents they cite: check each against "
    "your controlled copy of that standard or handbook before relying on it.",
    "Stored energy and high voltage can injure or kill, and capacitors can hold a charge long "
    "after power is removed. Follow local electrical codes, the applicable safety standard and "
    "licensed practice; treat every capacitor as charged until measured discharged.",
)

SPEC_FIELDS: tuple[str, ...] = tuple(k for k in SPEC_KEYS if k != "text")
CONDITION_FIELDS: tuple[str, ...] = (*CONDITIONS, "notes", "group", "design_row", "condition_source")
# Every metric of the registry, then the factors and notes behind the worst-case capacitance and
# the bases of the metrics that can rest on assumed data (one source: vocabulary.METRICS).
METRIC_FIELDS: tuple[str, ...] = (
    *METRICS, "c_tol_factor", "c_temp_factor", "c_bias_factor", "c_aging_factor",
    "temp_margin_c_basis", "c_margin_basis", "c_margin_note",
)


def ruleset_summary(ruleset) -> tuple[dict, ...]:
    """One entry per rule-set file in force (load order), the last carrying the merged sources."""
    layers = list(ruleset.layers) or []
    sources = [{"id": s.id, "title": s.title, "clause": s.clause, "confidence": s.confidence}
               for s in ruleset.sources]
    out = [{"name": layer.name, "title": layer.title, "version": layer.version,
            "path": layer.path, "extends": layer.extends} for layer in layers]
    if not out:
        out = [{"name": ruleset.name, "title": ruleset.title, "version": ruleset.version,
                "path": None, "extends": None}]
    out[-1]["sources"] = sources
    return tuple(out)


NATURAL_COLUMNS = ("_n_prefix", "_n_len", "_n_digits", "_n_rest")


def natural_columns(refdes: pd.Series) -> pd.DataFrame:
    """Sort columns putting designators in natural order (C7 < C10 < C10A), computed on the
    whole column: letters before the first number, the number by length then digits, the rest
    (``bomcheck.render.textsafe.natural_key`` is the same order for one string)."""
    parts = refdes.fillna("").astype(str).str.casefold().str.extract(r"^(\D*)(\d*)(.*)$")
    digits = parts[1].str.lstrip("0")
    return pd.DataFrame({"_n_prefix": parts[0], "_n_len": digits.str.len(), "_n_digits": digits,
                         "_n_rest": parts[2]}, index=refdes.index)


def relative_margin(verdicts: pd.DataFrame) -> pd.Series:
    """Margin / |limit| per verdict: unit-free, negative beyond the limit (NaN without both)."""
    if "margin" not in verdicts or "limit" not in verdicts:
        return pd.Series(np.nan, index=verdicts.index)
    limit = pd.to_numeric(verdicts["limit"], errors="coerce").abs()
    margin = pd.to_numeric(verdicts["margin"], errors="coerce")
    return margin / limit.where(limit != 0)


worst_status = worst  # kept for callers of the report module
status_at_least = at_least


@frozen
class Report:
    """Everything an audit found. ``table`` has one row per fitted placement (spec, conditions,
    metrics, status); ``verdicts`` one row per placement and rule (see engine.evaluate). A
    rule verdict's message may be left out (None) until an output prints it:
    ``with_messages`` renders it; ``governing``, ``verdicts_worst_first`` and the JSON form
    give theirs rendered."""

    tool_version: str
    rulesets: tuple[dict, ...]
    inputs: tuple[dict, ...]
    table: pd.DataFrame
    verdicts: pd.DataFrame
    not_fitted: pd.DataFrame
    skipped: pd.DataFrame
    import_findings: tuple = ()
    design_unmatched: tuple[dict, ...] = ()
    totals: dict = field(default_factory=dict)
    cautions: tuple[str, ...] = CAUTIONS
    rules: Any = None  # the RuleSet in force, for renderers that list it
    waiver_findings: tuple = ()  # bomcheck.evaluate.waivers.WaiverFinding: applied, expired, unused...
    groups: tuple[dict, ...] = ()  # banks and series stacks with their totals (bomcheck.stress.circuit)
    environment: str = "severe"  # the audit environment the limits were taken for
    # Doubts about the input files that are no verdict (design sheet, parts data, reader):
    # objects with ``to_dict()`` and ``str()``; every output lists them.
    input_warnings: tuple = ()
    # Each approved source's status per placement (bomcheck.evaluate.sources.SOURCE_STATUS_COLUMNS), or
    # None when no line has an approved source beside its own.
    source_status: pd.DataFrame | None = None
    # Renders the messages of the verdicts that carry none (a lazy evaluation's rule verdicts);
    # bomcheck.evaluate.engine.Messages, or None when every verdict has its message.
    messages: Any = field(default=None, compare=False, repr=False)

    @property
    def status(self) -> str:
        """The worst status of all placements, "nodata" too when a design row names a placement
        the BOM lacks, when a BOM row could not be read, or when no placement was audited at
        all (nothing read never passes)."""
        statuses = set(pd.unique(self.table["status"])) if len(self.table) else {"nodata"}
        if self.design_unmatched or self.totals.get("unreadable_rows", 0):
            statuses.add("nodata")
        return worst_status(statuses)

    def worst_first(self) -> pd.DataFrame:
        """Placements ordered worst status first, then by the smallest relative margin of the
        governing verdict (margin / |limit|, unit-free, so a 96 % voltage failure outranks a
        4.5 s discharge margin), then in natural designator order (C7 before C10). Every
        output lists placements in this one order."""
        t = self.table
        gov = self._governing_rows()  # the order needs no message
        rel = (gov["rel_margin"].reindex(t.index) if len(gov) and "rel_margin" in gov
               else pd.Series(np.nan, index=t.index))
        key = natural_columns(t["refdes"]).assign(
            _rank=-t["status"].map(_RANK).fillna(0).to_numpy(), rel_margin=rel.to_numpy(),
            _pos=np.arange(len(t)))
        order = key.sort_values(["_rank", "rel_margin", *NATURAL_COLUMNS, "_pos"],
                                na_position="last", kind="stable").index
        return t.loc[order]

    def verdicts_worst_first(self) -> pd.DataFrame:
        """The verdicts that are not a pass, worst status first, then placements in
        ``worst_first`` order, then rule id: the one order of every findings list."""
        v = self.verdicts
        if not len(v):
            return v
        v = self.with_messages(v[v["status"] != "pass"])
        place = pd.Series(np.arange(len(self.table)), index=self.worst_first().index,
                          dtype=float)
        key = v.assign(_rank=-v["status"].map(_RANK).fillna(0.5), _place=v["pidx"].map(place))
        key = key.sort_values(["_rank", "_place", "rule_id"], kind="stable")
        return key.drop(columns=["_rank", "_place"])

    def governing(self) -> pd.DataFrame:
        """Per placement (index = table index), the verdict that sets its status: the worst
        status, and among equals the smallest margin relative to the limit (column ``_rel``,
        unit-free); with its message."""
        gov = self._governing_rows()
        if not len(gov):
            return gov
        gov = self.with_messages(gov.assign(pidx=gov.index)).drop(columns=["pidx"])
        metric_of = {} if self.rules is None else {r.id: r.metric for r in self.rules.rules}
        return gov.assign(metric=gov["rule_id"].map(metric_of))

    def _governing_rows(self) -> pd.DataFrame:
        """``governing`` without the metric column, and a passing verdict's message left out
        when the evaluation left it out."""
        v = self.verdicts
        if not len(v):
            return v
        rank = v["status"].map(_RANK)
        key = v.assign(_rank=-rank, rel_margin=relative_margin(v))
        key = key.sort_values(["pidx", "_rank", "rel_margin"], na_position="last", kind="stable")
        return key.drop_duplicates("pidx").set_index("pidx").drop(columns=["_rank"])

    def with_messages(self, verdicts: pd.DataFrame, *, passes: bool = True) -> pd.DataFrame:
        """``verdicts`` (rows of ``self.verdicts``) with the message of each one that has none
        rendered (``passes`` False: of each one that is not a pass): an output calls it for the
        verdicts it prints."""
        if self.messages is None or "message" not in verdicts or not len(verdicts):
            return verdicts
        missing = verdicts["message"].isna().to_numpy()
        if not passes:
            missing = missing & (verdicts["status"] != "pass").to_numpy()
        if not missing.any():
            return verdicts
        message = verdicts["message"].to_numpy(dtype=object).copy()
        message[missing] = self.messages.for_verdicts(
            verdicts["pidx"].to_numpy(dtype=np.int64)[missing],
            verdicts["rule_id"].to_numpy(dtype=object)[missing])
        return verdicts.assign(message=pd.Series(message, index=verdicts.index, dtype=object))

    def not_audited(self) -> list[dict]:
        """Not-fitted placements and skipped rows, each with its reason, in row order."""
        out = []
        for refdes, row, reason, text in zip(
            self.not_fitted["refdes"], self.not_fitted["row"],
            self.not_fitted["not_fitted_reason"], self.not_fitted["text"],
        ):
            out.append({"refdes": refdes, "row": int(row), "kind": "not_fitted",
                        "reason": reason or "not fitted", "text": text})
        for row, kind, reason, text in zip(
            self.skipped["row"], self.skipped["kind"], self.skipped["reason"], self.skipped["text"]
        ):
            out.append({"refdes": None, "row": int(row), "kind": kind, "reason": reason,
                        "text": text})
        out.sort(key=lambda d: (d["row"], d["refdes"] or ""))
        return out

    def approved_sources(self) -> list[dict]:
        """Each approved source's status in each placement of its line (empty when no line has
        a source beside its own)."""
        if self.source_status is None:
            return []
        t = self.source_status.drop(columns=["pidx"])
        t = t.astype(object).where(t.notna(), None)
        return [dict(zip(t.columns, (v.item() if isinstance(v, np.generic) else v for v in row)))
                for row in t.itertuples(index=False)]

    def _json_parts(self) -> tuple[dict, dict]:
        """The JSON report's keys before ``placements`` and after it."""
        front = {
            "schema_version": SCHEMA_VERSION,
            "tool": {"name": "bomcheck", "version": self.tool_version},
            "status": self.status,
            "environment": self.environment,
            "rulesets": list(self.rulesets),
            "inputs": list(self.inputs),
            "totals": {k: int(v) for k, v in self.totals.items()},
            "cautions": list(self.cautions),
            "rules": _rules_seen(self.verdicts, self.rules),
        }
        back = {
            "not_audited": self.not_audited(),
            "design_unmatched": list(self.design_unmatched),
            "import_findings": [f.to_dict() for f in self.import_findings],
            "input_warnings": [w.to_dict() for w in self.input_warnings],
            "approved_sources": self.approved_sources(),
            "waivers": [f.to_dict() for f in self.waiver_findings],
            "groups": list(self.groups),
        }
        return front, back

    def to_json(self) -> str:
        """The report as JSON text (schema ``report.schema.json``, version 2); the same inputs
        give byte-identical text. For a large report use ``iter_json``."""
        return "".join(self.iter_json())

    def iter_json(self):
        """The JSON report in pieces of at most one chunk of placements each, built column-wise
        (``bomcheck.report.jsonform``), so writing it never holds the whole text in memory."""
        front, back = self._json_parts()
        spec_codes, specs = _specs(self.table)
        front["specs"] = specs
        chunks = _placement_chunks(self.table, self.verdicts, spec_codes, front["rules"],
                                   lambda v: self.with_messages(v, passes=False))
        return write_chunks(json_dumps(front), json_dumps(back), chunks)

    def to_dict(self) -> dict:
        """The JSON report as Python values (parsed from ``to_json``, so the two never differ)."""
        return json.loads(self.to_json())


def _specs(table: pd.DataFrame) -> tuple[np.ndarray, list[dict]]:
    """(per placement the index of its spec, the distinct specs in order of first appearance)."""
    present = [c for c in SPEC_FIELDS if c in table.columns]
    if not len(table):
        return np.zeros(0, dtype=np.int64), []
    codes = row_codes([table[c] for c in present])
    first = np.unique(codes, return_index=True)[1]
    return codes, _records(table, SPEC_FIELDS, first)


def _rules_seen(verdicts: pd.DataFrame, ruleset) -> dict:
    """Rule id -> title, metric, source and constant limits, for every rule id that gave a
    verdict (sorted); a verdict leaves out what it shares with its rule's entry here."""
    if not len(verdicts):
        return {}
    codes, ids = pd.factorize(verdicts["rule_id"].to_numpy(dtype=object))
    first = np.unique(codes, return_index=True)[1]
    sources = (verdicts["source"].to_numpy(dtype=object)[first] if "source" in verdicts
               else [None] * len(first))
    known = {} if ruleset is None else {r.id: r for r in ruleset.rules}
    out = {}
    for rid, source in sorted(zip(ids.tolist(), sources), key=lambda x: x[0]):
        rule = known.get(rid)
        out[rid] = {"title": getattr(rule, "title", None), "metric": getattr(rule, "metric", None),
                    "limit": _constant(getattr(rule, "fail", None)),
                    "warn_limit": _constant(getattr(rule, "warn", None)),
                    "source": source if isinstance(source, str) else None}
    return out


def _constant(limit) -> float | None:
    """A rule limit's constant value; None for a curve or no limit."""
    value = getattr(limit, "value", None)
    if limit is None or getattr(limit, "is_curve", False) or value is None:
        return None
    return float(value) if np.isfinite(value) else None


PLACEMENT_KEYS = ("refdes", "row", "text", "mpn", "manufacturer")
VERDICT_KEYS = {  # JSON key -> verdict column
    "rule": "rule_id", "status": "status", "value": "value", "limit": "limit",
    "warn_limit": "warn_limit", "margin": "margin", "message": "message", "source": "source",
    "basis": "basis", "waived_from": "waived_from", "approved_source": "approved_source",
}
# Keys written only where a verdict differs from the common case (absent: firm, the line's own
# part).
_UNLESS = {"basis": "firm", "approved_source": 0}


def _placement_chunks(table: pd.DataFrame, verdicts: pd.DataFrame, spec_codes: np.ndarray,
                      rules: dict, rendered):
    """Lists of placement record texts, ``jsonform.CHUNK`` placements at a time; ``rendered``
    gives a chunk's verdicts with the messages the JSON form prints."""
    pidx = (verdicts["pidx"].to_numpy(dtype=np.int64) if len(verdicts)
            else np.zeros(0, dtype=np.int64))
    if len(pidx) and (np.diff(pidx) < 0).any():
        order = np.argsort(pidx, kind="stable")
        verdicts, pidx = verdicts.iloc[order], pidx[order]
    metric_keys = tuple(dict.fromkeys((*METRIC_FIELDS, *JSON_FIELDS)))
    for start in range(0, len(table), jsonform.CHUNK):
        stop = min(len(table), start + jsonform.CHUNK)
        a, b = np.searchsorted(pidx, [start, stop]).tolist()
        yield _placement_records(table.iloc[start:stop], spec_codes[start:stop],
                                 rendered(verdicts.iloc[a:b]), pidx[a:b] - start, rules,
                                 metric_keys)


def _placement_records(part: pd.DataFrame, spec: np.ndarray, verdicts: pd.DataFrame,
                       owner: np.ndarray, rules: dict, metric_keys) -> list[str]:
    """The JSON record of each placement of ``part`` (one chunk), built column by column."""
    m = len(part)
    everywhere = np.ones(m, dtype=bool)
    fields = []
    for key in PLACEMENT_KEYS:
        if key in part.columns:
            texts, present = column_texts(part[key], key)
            if key in ("refdes", "row", "text"):  # always written
                texts = np.where(present, texts, '""' if key != "row" else "null")
                present = everywhere
            fields.append((key, texts, present))
    fields.append(("spec", spec.astype(str).astype(object), everywhere))
    fields.append(("status", *column_texts(part["status"])))
    verdict_texts = _verdict_objects(verdicts, part, owner, rules)
    for key, texts in (("conditions", frame_objects(part, CONDITION_FIELDS, m)),
                       ("metrics", frame_objects(part, metric_keys, m)),
                       ("verdicts", join_per_row(verdict_texts, owner, m))):
        fields.append((key, np.asarray(texts, dtype=object), everywhere))
    return objects(fields, m)


def _verdict_defaults(v: pd.DataFrame, part: pd.DataFrame, owner: np.ndarray,
                      rules: dict) -> dict[str, np.ndarray]:
    """Per verdict, what a reader takes when a key is left out: value = the placement's metric
    of the rule, limit and warn_limit = the rule's constant ones, source = the rule's."""
    codes, ids = pd.factorize(v["rule_id"].to_numpy(dtype=object))
    entry = [rules.get(i, {}) for i in ids.tolist()]
    out = {key: np.asarray([np.nan if e.get(key) is None else e[key] for e in entry],
                           dtype=float)[codes] for key in ("limit", "warn_limit")}
    out["source"] = np.asarray([e.get("source") for e in entry] + [None], dtype=object)[codes]
    value = np.full(len(v), np.nan)
    numbers: dict[str, np.ndarray] = {}  # each metric column read once, however many rules
    for j, e in enumerate(entry):
        metric = e.get("metric")
        if metric in part.columns:
            rows = codes == j
            if metric not in numbers:
                numbers[metric] = pd.to_numeric(part[metric], errors="coerce").to_numpy(
                    dtype=float)
            value[rows] = numbers[metric][owner[rows]]
    out["value"] = value
    return out


def _verdict_objects(v: pd.DataFrame, part: pd.DataFrame, owner: np.ndarray,
                     rules: dict) -> list[str]:
    """Each verdict's JSON object: rule, status and margin always (margin where known); value,
    limit, warn_limit and source only where they differ from ``_verdict_defaults``; the message
    only when it is not a pass."""
    n = len(v)
    if not n:
        return []
    defaults = _verdict_defaults(v, part, owner, rules)
    status = v["status"].to_numpy(dtype=object)
    not_pass = status != "pass"
    head = _rule_and_status(v["rule_id"].to_numpy(dtype=object), status)
    fields = [] if head is None else [(None, *head)]
    for key, col in VERDICT_KEYS.items():
        if col not in v.columns or (head is not None and key in ("rule", "status")):
            continue
        only = not_pass if key == "message" else None
        if key in _UNLESS:
            only = (v[col] != _UNLESS[key]).to_numpy()
        if key in ("value", "limit", "warn_limit"):
            mine = pd.to_numeric(v[col], errors="coerce").to_numpy(dtype=float)
            other = defaults[key]
            only = ~((mine == other) | (np.isnan(mine) & np.isnan(other)))
            texts, present = column_texts(mine, key, only=only)
            texts[only & ~present] = "null"  # a null that overrides a default
            present = only
        elif key == "margin":  # formatted where written (jsonform.objects)
            texts = pd.to_numeric(v[col], errors="coerce").to_numpy(dtype=float)
            present = np.isfinite(texts)
        elif key == "source":
            only = v[col].to_numpy(dtype=object) != defaults["source"]
            texts, present = column_texts(v[col], key, only=only)
        else:
            texts, present = column_texts(v[col], key, only=only)
        fields.append((key, texts, present))
    return objects(fields, n)


def _rule_and_status(rule: np.ndarray, status: np.ndarray
                     ) -> tuple[np.ndarray, np.ndarray] | None:
    """The ``"rule":..,"status":..`` pair of each verdict, written once per distinct pair, as a
    field of ``jsonform.objects`` (key None); None when a verdict lacks either (then each is a
    field of its own, left out where empty)."""
    rule_codes, rules = pd.factorize(rule, use_na_sentinel=True)
    status_codes, statuses = pd.factorize(status, use_na_sentinel=True)
    rule_texts, rule_ok = column_texts(pd.Series(rules, dtype=object))
    status_texts, status_ok = column_texts(pd.Series(statuses, dtype=object))
    if (rule_codes < 0).any() or (status_codes < 0).any() or not rule_ok.all() \
            or not status_ok.all():
        return None
    pair_codes, pairs = pd.factorize(rule_codes * len(statuses) + status_codes)
    texts = np.asarray([f'"rule":{rule_texts[p // len(statuses)]},'
                        f'"status":{status_texts[p % len(statuses)]}' for p in pairs.tolist()],
                       dtype=object)
    return texts[pair_codes], np.ones(len(pair_codes), dtype=bool)


def _records(table: pd.DataFrame, fields: tuple[str, ...],
             rows: np.ndarray | None = None) -> list[dict]:
    """One dict per row (of ``rows``, all when None) with the given fields; NaN and missing
    columns become None. Column by column: no table of objects is built."""
    cols = [c for c in fields if c in table.columns]
    columns = []
    for c in cols:
        values = table[c].to_numpy(dtype=object)
        values = values.copy() if rows is None else values[rows]
        values[pd.isna(values)] = None
        columns.append(values.tolist())
    out = []
    for row in zip(*columns) if cols else ((),) * (len(table) if rows is None else len(rows)):
        d = dict(zip(cols, row))
        for k, v in d.items():
            if isinstance(v, tuple):
                d[k] = list(v)
            elif isinstance(v, np.generic):
                d[k] = v.item()
        out.append(d)
    missing = [c for c in fields if c not in table.columns]
    if missing:
        for d in out:
            d.update(dict.fromkeys(missing))
    return out

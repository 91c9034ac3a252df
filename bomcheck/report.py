"""Report stage: the audit's result as one value, and its JSON form (schema ``report.schema.json``).

Renderers (terminal, JSON file, later spreadsheets and CI formats) take a ``Report`` and never
recompute anything. The JSON form holds no clock reading, so the same inputs give the same bytes.
"""

from __future__ import annotations

import json
import json.encoder
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import pandas as pd

from bomcheck.spec import SPEC_KEYS
from bomcheck.textsafe import json_dumps
from bomcheck.vocabulary import CONDITIONS

# Worst last. "nodata" ranks above "warn": an unchecked stress may be anything, a warning is known.
# "waived" (an approved deviation, bomcheck.waivers) ranks just above "pass": it is known and signed.
STATUS_ORDER: tuple[str, ...] = ("pass", "waived", "warn", "nodata", "fail")
_RANK = {s: i for i, s in enumerate(STATUS_ORDER)}

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
METRIC_FIELDS: tuple[str, ...] = (
    "v_upper_v", "applied_peak_v", "transient_peak_v", "voltage_ratio", "transient_ratio",
    "reverse_ratio", "rated_voltage_v", "t_operating_c", "temp_max_used_c", "temp_margin_c",
    "temp_margin_c_basis",
    "c_tol_factor", "c_temp_factor", "c_bias_factor", "c_aging_factor", "c_worst_f", "c_margin",
    "c_margin_basis", "c_margin_note",
)
FINDING_FIELDS = {  # JSON key -> verdict column
    "rule": "rule_id", "status": "status", "value": "value", "limit": "limit",
    "warn_limit": "warn_limit", "margin": "margin", "message": "message", "source": "source",
}
# Written only when the verdict table has the column (waivers were applied).
OPTIONAL_FINDING_FIELDS = {"waived_from": "waived_from"}


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
    (``bomcheck.textsafe.natural_key`` is the same order for one string)."""
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


def worst_status(statuses) -> str:
    """The worst of some statuses (``STATUS_ORDER``); "pass" for none."""
    best = 0
    for s in statuses:
        r = _RANK.get(s, 0)
        if r > best:
            best = r
    return STATUS_ORDER[best]


def status_at_least(status: str, level: str) -> bool:
    """True when ``status`` is at or above ``level`` in ``STATUS_ORDER``."""
    return _RANK.get(status, 0) >= _RANK[level]


@dataclass(frozen=True)
class Report:
    """Everything an audit found. ``table`` has one row per fitted placement (spec, conditions,
    metrics, status); ``verdicts`` one row per placement and rule (see engine.evaluate)."""

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
    waiver_findings: tuple = ()  # bomcheck.waivers.WaiverFinding: applied, expired, unused...
    groups: tuple[dict, ...] = ()  # banks and series stacks with their totals (bomcheck.circuit)

    @property
    def status(self) -> str:
        """The worst status of all placements and of the design rows the BOM lacks."""
        statuses = set(self.table["status"]) if len(self.table) else set()
        if self.design_unmatched:
            statuses.add("nodata")
        return worst_status(statuses)

    def worst_first(self) -> pd.DataFrame:
        """Placements ordered worst status first, then by the smallest relative margin of the
        governing verdict (margin / |limit|, unit-free, so a 96 % voltage failure outranks a
        4.5 s discharge margin), then in natural designator order (C7 before C10). Every
        output lists placements in this one order."""
        t = self.table
        gov = self.governing()
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
        v = v[v["status"] != "pass"]
        place = pd.Series(np.arange(len(self.table)), index=self.worst_first().index,
                          dtype=float)
        key = v.assign(_rank=-v["status"].map(_RANK).fillna(0.5), _place=v["pidx"].map(place))
        key = key.sort_values(["_rank", "_place", "rule_id"], kind="stable")
        return key.drop(columns=["_rank", "_place"])

    def governing(self) -> pd.DataFrame:
        """Per placement (index = table index), the verdict that sets its status: the worst
        status, and among equals the smallest margin relative to the limit (column ``_rel``,
        unit-free)."""
        v = self.verdicts
        if not len(v):
            return v
        rank = v["status"].map(_RANK)
        key = v.assign(_rank=-rank, rel_margin=relative_margin(v))
        key = key.sort_values(["pidx", "_rank", "rel_margin"], na_position="last", kind="stable")
        gov = key.drop_duplicates("pidx").set_index("pidx").drop(columns=["_rank"])
        metric_of = {} if self.rules is None else {r.id: r.metric for r in self.rules.rules}
        return gov.assign(metric=gov["rule_id"].map(metric_of))

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

    def _head(self) -> dict:
        """Every top-level key of the JSON report but ``placements``."""
        return {
            "tool": {"name": "bomcheck", "version": self.tool_version},
            "status": self.status,
            "rulesets": list(self.rulesets),
            "inputs": list(self.inputs),
            "totals": {k: int(v) for k, v in self.totals.items()},
            "cautions": list(self.cautions),
            "not_audited": self.not_audited(),
            "design_unmatched": list(self.design_unmatched),
            "import_findings": [f.to_dict() for f in self.import_findings],
            "waivers": [f.to_dict() for f in self.waiver_findings],
            "groups": list(self.groups),
        }

    def to_json(self) -> str:
        """The report as JSON text (schema ``report.schema.json``); the same inputs give
        byte-identical text.

        Placements are written from JSON fragments made once per distinct block (spec,
        conditions, metrics, verdict) and joined, so a 100k-placement report costs little more
        than its size; ``findings`` holds every verdict that is not a pass, with its message,
        ``checks`` every passing verdict (rule, value, limit, margin).
        """
        return "".join(self.iter_json())

    def iter_json(self):
        """``to_json`` in pieces, for writing a large report without one huge string."""
        head_text = _dumps(self._head())
        # "placements" goes after "cautions": splice it into the head object.
        i = head_text.index(',"not_audited":')
        yield head_text[:i] + ',"placements":['
        texts = _placement_texts(self.table, self.verdicts)
        for start in range(0, len(texts), 5000):
            chunk = ",".join(texts[start:start + 5000])
            yield chunk if start == 0 else "," + chunk
        yield "]" + head_text[i:] + "\n"

    def to_dict(self) -> dict:
        """The JSON report as Python values (parsed from ``to_json``, so the two never differ)."""
        return json.loads(self.to_json())


_encode = json.encoder.encode_basestring  # JSON string literal, non-ASCII kept as is


def _dumps(value) -> str:
    """Compact strict JSON: a non-finite number anywhere is written as null."""
    return json_dumps(value)


def _block_codes(frame: pd.DataFrame) -> np.ndarray:
    """One code per row such that rows with equal values (NaN equal to NaN) share a code."""
    key = np.zeros(len(frame), dtype=np.int64)
    for col in frame.columns:
        series = frame[col]
        # Numbers factorize as floats (fast); text, flags and tuples as objects.
        values = (series.to_numpy(dtype=float, na_value=np.nan)
                  if pd.api.types.is_numeric_dtype(series.dtype)
                  and not pd.api.types.is_bool_dtype(series.dtype)
                  else series.to_numpy(dtype=object))
        codes, uniques = pd.factorize(values, use_na_sentinel=True)
        key = key * (len(uniques) + 1) + (codes + 1)
        key, _ = pd.factorize(key)
    return key


def _fragments(frame: pd.DataFrame, names: tuple[str, ...]) -> np.ndarray:
    """For each row, the JSON object text of ``names`` (columns absent from ``frame`` are null),
    built once per distinct row."""
    present = [c for c in names if c in frame.columns]
    block = frame[present]
    codes = _block_codes(block) if len(block) else np.zeros(0, dtype=np.int64)
    first = np.unique(codes, return_index=True)[1] if len(codes) else np.zeros(0, dtype=np.int64)
    recs = _records(block.iloc[first], names)
    texts = np.asarray([_dumps(r) for r in recs] or [""], dtype=object)
    return texts[codes] if len(codes) else np.zeros(0, dtype=object)


_FINDING_KEYS = tuple(k for k in FINDING_FIELDS if k != "message")
_CHECK_KEYS = ("rule", "value", "limit", "margin")


def _placement_texts(table: pd.DataFrame, verdicts: pd.DataFrame) -> list[str]:
    n = len(table)
    if n == 0:
        return []
    spec = _fragments(table, SPEC_FIELDS).tolist()
    # design_row differs on every placement: kept out of the shared fragment, spliced in after.
    conditions = _fragments(table, tuple(f for f in CONDITION_FIELDS if f != "design_row")).tolist()
    rows = (pd.to_numeric(table["design_row"], errors="coerce") if "design_row" in table
            else pd.Series(np.nan, index=table.index))
    design_rows = np.where(rows.isna(), "null",
                           rows.fillna(0).astype(np.int64).astype(str)).tolist()
    metrics = _fragments(table, METRIC_FIELDS).tolist()
    from bomcheck.circuit import json_metric_texts  # circuit metrics, only where computed

    circuit = json_metric_texts(table)
    findings, checks = _verdict_texts(verdicts, n)
    enc = _encode
    # One pass over plain lists (iterating pandas columns directly costs more than the join).
    return [
        f'{{"refdes":{enc(r)},"row":{row},"text":{enc(text)},"status":"{st}","spec":{sp},'
        f'"conditions":{c[:-1]},"design_row":{dr}}},"metrics":{m[:-1]}{x}}},'
        f'"findings":[{f}],"checks":[{k}]}}'
        for r, row, text, st, sp, c, dr, m, x, f, k in zip(
            table["refdes"].tolist(), table["row"].astype(int).tolist(), table["text"].tolist(),
            table["status"].tolist(), spec, conditions, design_rows, metrics, circuit,
            findings, checks)
    ]


def _verdict_texts(verdicts: pd.DataFrame, n: int) -> tuple[list[str], list[str]]:
    """Per placement, the joined JSON of its non-pass verdicts and of its passing ones."""
    if not len(verdicts):
        return [""] * n, [""] * n
    v = verdicts.sort_values(["pidx", "rule_id"], kind="stable").reset_index(drop=True)
    v = v.rename(columns={c: k for k, c in FINDING_FIELDS.items()})
    extra = tuple(k for k, c in OPTIONAL_FINDING_FIELDS.items() if c in verdicts.columns)
    passed = (v["status"] == "pass").to_numpy()
    out = []
    for mask, keys in ((~passed, (*_FINDING_KEYS, *extra)), (passed, _CHECK_KEYS)):
        part = v[mask]
        texts = _fragments(part, keys)
        if keys is not _CHECK_KEYS:
            # The message names the designator, so it is unique: escape it alone, not its object.
            messages = part["message"].fillna("").astype(str).tolist()
            texts = [f'{t[:-1]},"message":{_encode(m)}}}' for t, m in
                     zip(texts.tolist(), messages)]
        else:
            texts = texts.tolist()
        pidx = part["pidx"].to_numpy(dtype=np.int64)
        bounds = np.searchsorted(pidx, np.arange(n + 1)).tolist()
        out.append([",".join(texts[bounds[i]:bounds[i + 1]]) for i in range(n)])
    return out[0], out[1]


def _records(table: pd.DataFrame, fields: tuple[str, ...]) -> list[dict]:
    """One dict per row with the given fields; NaN and missing columns become None."""
    cols = [c for c in fields if c in table.columns]
    block = table[cols].astype(object)
    block = block.where(block.notna(), None)
    values = block.to_numpy()
    out = []
    for row in values:
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

"""Report stage, code-review edge: findings pinned to BOM lines as SARIF 2.1.0 and as CI workflow
annotations.

SARIF (OASIS Static Analysis Results Interchange Format 2.1.0): one run, the tool's rules
(``tool.driver.rules``: id, title, source, metric), the inputs as artifacts with their SHA-256,
and one result per verdict that is not a pass (and per design-sheet row naming no BOM
placement, located in the design sheet): ``level`` ``error`` for fail, ``warning`` for
warn and nodata, ``note`` for a waived verdict (with an external suppression carrying the
waiver); its location is the BOM file and the line of the placement's BOM row
(``region.startLine``), its logical location the designator. Results are in the shared
worst-first order.

Workflow annotations (``--annotations``): one line per failing verdict,
``::error file=BOM,line=N,title=RULE::message``, and ``::warning`` for warn and nodata, escaped
as the workflow-command format requires: in the message ``%``, CR and LF become ``%25``,
``%0D`` and ``%0A``; in a property value ``:`` and ``,`` also become ``%3A`` and ``%2C``.
"""

from __future__ import annotations

import math
import os
from urllib.parse import quote

from bomcheck.render.verdicts import bom_rows
from bomcheck.report.jsontext import json_dumps

SARIF_SCHEMA = "https://json.schemastore.org/sarif-2.1.0.json"
SARIF_VERSION = "2.1.0"
_LEVEL = {"fail": "error", "warn": "warning", "nodata": "warning", "waived": "note"}
_ANNOTATION = {"fail": "error", "warn": "warning", "nodata": "warning"}
UNMATCHED_RULE = "design.not_in_bom"


def _where(path: str) -> str:
    """A file path as code review sees it: relative to the working directory (the checkout)
    when the file is inside it, else as given."""
    path = str(path)
    if os.path.isabs(path):
        rel = os.path.relpath(path, os.getcwd())
        if not rel.startswith(".."):
            return rel
    return path


def _uri(path: str) -> str:
    """A URI reference for a file path (RFC 3986): relative to the working directory where
    possible, else a file URI; bytes of a non-UTF-8 name kept, percent-encoded."""
    path = _where(path).replace("\\", "/")
    raw = path.encode("utf-8", "surrogateescape")
    if path.startswith("/"):
        return "file://" + quote(raw, safe="/")
    return quote(raw, safe="/")


def _number(value):
    if value is None:
        return None
    try:
        x = float(value)
    except (TypeError, ValueError):
        return None
    return x if math.isfinite(x) else None


def _text(value) -> str:
    if value is None or (isinstance(value, float) and math.isnan(value)):
        return ""
    return str(value)


def _bom(report) -> dict:
    return next((d for d in report.inputs if d.get("role") == "bom"),
                report.inputs[0] if report.inputs else {"path": "bom", "sha256": ""})


def sarif_log(report) -> dict:
    """The SARIF 2.1.0 log of ``report`` as Python values (module docstring)."""
    bad = report.verdicts_worst_first()
    rule_ids = [str(r) for r in dict.fromkeys(bad["rule_id"].tolist() if len(bad) else [])]
    index = {r: i for i, r in enumerate(rule_ids)}
    descriptors = _descriptors(report, rule_ids)
    artifacts = [{"location": {"uri": _uri(d.get("path") or "")},
                  "roles": ["analysisTarget" if d.get("role") == "bom" else "attachment"],
                  "hashes": {"sha-256": d.get("sha256")}} if d.get("sha256") else
                 {"location": {"uri": _uri(d.get("path") or "")}} for d in report.inputs]
    results = _verdict_results(report, bad, index)
    results += _unmatched_results(report, index, descriptors)
    return {
        "$schema": SARIF_SCHEMA,
        "version": SARIF_VERSION,
        "runs": [{
            "tool": {"driver": {"name": "bomcheck", "version": report.tool_version,
                                "rules": descriptors}},
            "artifacts": artifacts,
            "results": results,
            "invocations": [{"executionSuccessful": True, "toolExecutionNotifications": [
                {"level": "warning", "message": {"text": _text(str(w))}}
                for w in report.input_warnings]}],
            "properties": {"status": report.status, "environment": report.environment,
                           "ruleSets": [f"{r.get('name')} {r.get('version')}"
                                        for r in report.rulesets]},
        }],
    }


def _descriptors(report, rule_ids: list[str]) -> list[dict]:
    """``tool.driver.rules``: each rule with a result, from the rules in force where it is one."""
    rules_in_force = {} if report.rules is None else {r.id: r for r in report.rules.rules}
    descriptors = []
    for rule_id in rule_ids:
        rule = rules_in_force.get(rule_id)
        d = {"id": rule_id, "name": rule_id}
        if rule is not None:
            d["shortDescription"] = {"text": rule.title}
            d["fullDescription"] = {"text": rule.rationale or rule.title}
            d["help"] = {"text": f"Source: {rule.source}"}
            d["properties"] = {"source": rule.source, "metric": rule.metric,
                               "severity": rule.severity, "confidence": rule.confidence,
                               "ruleSet": rule.origin}
        else:
            d["shortDescription"] = {"text": "a check made by the audit itself (inputs, "
                                             "design sheet, BOM consistency)"}
        descriptors.append(d)
    return descriptors


def _verdict_results(report, bad, index: dict[str, int]) -> list[dict]:
    """One result per verdict that is not a pass, located at its placement's BOM line."""
    bom = _bom(report)
    bom_index = next((i for i, d in enumerate(report.inputs) if d is bom), 0)
    uri = _uri(bom.get("path") or "")
    results = []
    cols = [bad[c] if c in bad else [None] * len(bad) for c in
            ("refdes", "rule_id", "status", "message", "source", "basis", "value",
             "limit", "margin", "waived_from")]
    for line, refdes, rule_id, status, message, source, basis, value, limit, margin, was in \
            zip(bom_rows(report, bad, 1), *cols):
        props = {"status": status, "refdes": refdes, "source": _text(source),
                 "basis": _text(basis) or None, "value": _number(value),
                 "limit": _number(limit), "margin": _number(margin)}
        result = {
            "ruleId": str(rule_id), "ruleIndex": index[str(rule_id)],
            "level": _LEVEL.get(status, "warning"),
            "message": {"text": _text(message) or f"{refdes}: {status} ({rule_id})"},
            "locations": [{
                "physicalLocation": {
                    "artifactLocation": {"uri": uri, "index": bom_index},
                    "region": {"startLine": max(1, int(line))}},
                "logicalLocations": [{"name": _text(refdes), "kind": "element"}]}],
            "partialFingerprints": {"placementRule/v1": f"{refdes}:{rule_id}"},
            "properties": {k: v for k, v in props.items() if v is not None},
        }
        if status == "waived":
            result["suppressions"] = [{"kind": "external", "status": "accepted",
                                       "justification": f"waived (was {_text(was)})"}]
        results.append(result)
    return results


def _unmatched_results(report, index: dict[str, int], descriptors: list[dict]) -> list[dict]:
    """Design-sheet rows that name no BOM placement: no data, located in the design sheet (the
    rule's descriptor is added to ``descriptors`` when needed)."""
    design_index = next((i for i, d in enumerate(report.inputs) if d.get("role") == "design"),
                        None)
    if not report.design_unmatched or design_index is None:
        return []
    design = report.inputs[design_index]
    if UNMATCHED_RULE not in index:
        index[UNMATCHED_RULE] = len(descriptors)
        descriptors.append({"id": UNMATCHED_RULE, "name": UNMATCHED_RULE,
                            "shortDescription": {"text": "a design-sheet row names no "
                                                         "placement of the BOM"}})
    return [{
        "ruleId": UNMATCHED_RULE, "ruleIndex": index[UNMATCHED_RULE],
        "level": "warning", "message": {"text": _text(d.get("reason"))},
        "locations": [{"physicalLocation": {
            "artifactLocation": {"uri": _uri(design.get("path") or ""), "index": design_index},
            "region": {"startLine": max(1, int(d.get("row") or 1))}},
            "logicalLocations": [{"name": _text(d.get("refdes")), "kind": "element"}]}],
        "partialFingerprints": {"placementRule/v1": f"{d.get('refdes')}:{UNMATCHED_RULE}"},
        "properties": {"status": "nodata", "refdes": _text(d.get("refdes"))},
    } for d in report.design_unmatched]


def sarif_json(report) -> str:
    """The SARIF log as strict JSON text (two-space indent)."""
    return json_dumps(sarif_log(report), indent=2) + "\n"


def _escape_data(text: str) -> str:
    return text.replace("%", "%25").replace("\r", "%0D").replace("\n", "%0A")


def _escape_property(text: str) -> str:
    return _escape_data(text).replace(":", "%3A").replace(",", "%2C")


def annotations(report) -> list[str]:
    """One workflow-command line per fail, warn and nodata verdict (module docstring)."""
    bom = _escape_property(_where(_bom(report).get("path") or ""))
    bad = report.verdicts_worst_first()
    out = []
    if not len(bad):
        return out
    for line, rule_id, status, message in zip(bom_rows(report, bad, 1), bad["rule_id"],
                                              bad["status"], bad["message"]):
        command = _ANNOTATION.get(status)
        if command is None:
            continue
        line = int(line)
        title = _escape_property(f"bomcheck {status} {rule_id}")
        out.append(f"::{command} file={bom},line={line},title={title}::"
                   f"{_escape_data(_text(message))}")
    design = next((d for d in report.inputs if d.get("role") == "design"), None)
    for d in report.design_unmatched if design is not None else ():
        out.append(f"::warning file={_escape_property(_where(design.get('path') or ''))},"
                   f"line={int(d.get('row') or 1)},"
                   f"title={_escape_property('bomcheck nodata ' + UNMATCHED_RULE)}::"
                   f"{_escape_data(_text(d.get('reason')))}")
    return out

"""Report stage, CI edge: the audit ``Report`` as JUnit XML, a Markdown summary and CSV rows.

Each function takes the report value and returns text; nothing is recomputed and nothing reads a
clock, so the same report gives the same bytes. Writing the text (atomically) is the caller's job.

JUnit mapping (one ``<testsuite>``, one ``<testcase>`` per fitted placement, in BOM order, named
by designator, ``classname`` ``bomcheck.<technology>``):

- pass: no child element;
- fail: ``<failure type="fail">``, message = the governing explanation, body = every verdict
  that is not a pass, one per line;
- nodata: ``<error type="nodata">`` (the check could not run for lack of data, which is what
  JUnit's "error" means, so it is never counted as a pass or a plain failure);
- warn: by ``warn_as``: ``"failure"`` -> ``<failure type="warn">``, ``"skipped"`` ->
  ``<skipped>``, ``"pass"`` -> no child (the warnings go to the test case's ``<system-out>``);
- waived: ``<skipped type="waived">`` with the waiver reason in its message.

The suite's ``tests``, ``failures``, ``errors`` and ``skipped`` counts are those of the test
cases. Design-sheet rows that name no BOM placement and what became of each waiver are listed in
the suite's ``<system-out>``.

CSV (RFC 4180, CRLF line ends): one row per fitted placement (BOM order) with its governing
verdict, status and explanation; ``waived`` lists the placement's waived verdicts (``rule (was
status): reason``). Text cells go through ``textsafe.csv_field``, the CSV-injection guard used
by every writer: a cell that starts with ``=``, ``+``, ``-``, ``@``, a tab or a carriage return
gets a leading single quote and is quoted, and a cell holding a separator followed by such a
lead (``x;=1+1``) is quoted, so that no spreadsheet runs either as a formula whatever its list
separator (OWASP, "CSV Injection"); numbers written by bomcheck itself are left as numbers.

Markdown: every text from the inputs goes through ``textsafe.md_text`` (one escaping function
for every Markdown writer); XML text through ``textsafe.xml_text``.
"""

from __future__ import annotations

import math
import xml.etree.ElementTree as ET
from typing import Any

import pandas as pd

from bomcheck.render.textsafe import FORMULA_LEADS, csv_field, csv_line, md_text, xml_text
from bomcheck.vocabulary import METRICS

WARN_AS: tuple[str, ...] = ("failure", "skipped", "pass")
CSV_COLUMNS: tuple[str, ...] = (
    "refdes", "row", "status", "waived_from", "rule", "metric", "value", "limit", "margin",
    "technology", "capacitance_f", "voltage_v", "dielectric", "package", "text", "explanation",
    "source", "waived",
)
INJECTION_LEAD = FORMULA_LEADS
# Worst first, as a reviewer reads the totals.
_TOTALS_ORDER = ("fail", "nodata", "warn", "waived", "pass")


# --------------------------------------------------------------------------------------------
# Shared helpers.

def _isnan(x: Any) -> bool:
    return x is None or (isinstance(x, float) and math.isnan(x)) or x is pd.NA


def format_metric(value: Any, metric: Any) -> str:
    """A verdict's value or limit in its metric's display unit ("87.2 %", "-10 degC"), or ""."""
    from bomcheck.quantity import format_number, format_quantity

    if _isnan(value):
        return ""
    m = METRICS.get(metric) if isinstance(metric, str) else None
    if m is None:
        return format_number(float(value))
    return format_quantity(float(value), m.unit, m.percent)


def _problems_by_placement(report) -> dict[int, list[tuple[str, str, str]]]:
    """Per placement index, its verdicts that are not a pass: (status, rule id, message)."""
    v = report.verdicts
    if not len(v):
        return {}
    v = v[v["status"] != "pass"]
    out: dict[int, list[tuple[str, str, str]]] = {}
    for pidx, status, rule, msg in zip(v["pidx"].to_numpy(), v["status"].to_numpy(),
                                        v["rule_id"].to_numpy(), v["message"].to_numpy()):
        out.setdefault(int(pidx), []).append((str(status), str(rule), str(msg)))
    return out


def _text(value: Any) -> bool:
    """True for a non-empty text value (not None, NaN or "")."""
    return not _isnan(value) and bool(str(value))


def _governing(report) -> pd.DataFrame:
    gov = report.governing()
    return gov if len(gov) else pd.DataFrame(columns=["rule_id", "status", "message"])


# --------------------------------------------------------------------------------------------
# JUnit XML.

_x = xml_text


def junit_xml(report, *, warn_as: str = "failure") -> str:
    """The report as JUnit XML: one test case per fitted placement (see the module docstring)."""
    if warn_as not in WARN_AS:
        raise ValueError(f"warn_as must be one of {', '.join(WARN_AS)}, not {warn_as!r}")
    t = report.table
    problems = _problems_by_placement(report)
    gov = _governing(report)
    gov_msg = dict(zip(gov.index, gov["message"])) if len(gov) else {}
    counts = {"failures": 0, "errors": 0, "skipped": 0}
    cases = []
    techs = t["technology"] if "technology" in t.columns else pd.Series(None, index=t.index)
    for i, refdes, tech, status in zip(t.index, t["refdes"], techs, t["status"]):
        family = _x(tech) if _text(tech) else "unknown"
        case = ET.Element("testcase", {"name": _x(refdes), "classname": f"bomcheck.{family}"})
        lines = [f"{s.upper()} {r}: {m}" for s, r, m in problems.get(int(i), [])]
        body = _x("\n".join(lines))
        message = _x(gov_msg.get(i, ""))
        if status == "fail" or (status == "warn" and warn_as == "failure"):
            ET.SubElement(case, "failure", {"message": message, "type": status}).text = body
            counts["failures"] += 1
        elif status == "nodata":
            ET.SubElement(case, "error", {"message": message, "type": "nodata"}).text = body
            counts["errors"] += 1
        elif status == "waived" or (status == "warn" and warn_as == "skipped"):
            ET.SubElement(case, "skipped", {"message": message, "type": status}).text = body
            counts["skipped"] += 1
        elif status == "warn":
            ET.SubElement(case, "system-out").text = body
        cases.append(case)
    attrs = {"name": "bomcheck audit", "tests": str(len(cases)),
             **{k: str(n) for k, n in counts.items()}}
    # <testsuites> has no "skipped" attribute in the widely used junit-10.xsd; the suite has.
    root = ET.Element("testsuites", {k: v for k, v in attrs.items() if k != "skipped"})
    suite = ET.SubElement(root, "testsuite", attrs)
    props = ET.SubElement(suite, "properties")
    prop_items = [("bomcheck.version", report.tool_version), ("status", report.status),
                  ("environment", report.environment), ("warn_as", warn_as)]
    prop_items += [(f"ruleset.{r['name']}", str(r.get("version"))) for r in report.rulesets]
    prop_items += [(f"input.{d['role']}", f"{d['path']} sha256:{d['sha256']}")
                   for d in report.inputs]
    for name, value in prop_items:
        ET.SubElement(props, "property", {"name": _x(name), "value": _x(value)})
    suite.extend(cases)
    notes = [f"NODATA {d['reason']}" for d in report.design_unmatched]
    notes += [f"WAIVER {f.code}: {f.message}" for f in report.waiver_findings]
    notes += [f"INPUT WARNING {w}" for w in report.input_warnings]
    if notes:
        ET.SubElement(suite, "system-out").text = _x("\n".join(notes))
    ET.indent(root)
    return '<?xml version="1.0" encoding="UTF-8"?>\n' + ET.tostring(root, encoding="unicode") + "\n"


# --------------------------------------------------------------------------------------------
# Markdown.

_md = md_text


def _input_line(report) -> str:
    """The BOM (and other inputs) by file name and SHA-256, for the head of a summary."""
    parts = []
    for d in report.inputs:
        name = str(d.get("path") or "").replace("\\", "/").rsplit("/", 1)[-1]
        digest = str(d.get("sha256") or "")
        digest = f" (SHA-256 `{digest}`)" if digest.isalnum() else ""
        parts.append(f"{_md(d.get('role'))} {_md(name)}{digest}")
    return "; ".join(parts)


def markdown_summary(report, *, limit: int = 50, diff=None) -> str:
    """A summary for a pull-request comment: the BOM and its hash, totals by status, every
    verdict that is not a pass (worst first, up to ``limit``) with its stress, limit, rule and
    message, waiver problems, the comparison with a baseline (``diff``, a
    ``bomcheck.report.diff.Diff``) and the cautions as a list."""
    t = report.table
    totals = report.totals
    out = [f"## bomcheck audit: {report.status.upper()}", ""]
    inputs = _input_line(report)
    if inputs:
        out += [f"Inputs: {inputs}.", ""]
    out += ["| status | placements |", "|:--|--:|"]
    out += [f"| {s} | {int(totals.get(s, 0))} |" for s in _TOTALS_ORDER]
    out += [f"| **audited** | **{int(totals.get('audited', len(t)))}** |", ""]
    not_audited: dict[str, int] = {}
    for d in report.not_audited():
        not_audited[d["kind"]] = not_audited.get(d["kind"], 0) + 1
    notes = []
    if not_audited:
        notes.append("Not audited: " + ", ".join(f"{k.replace('_', ' ')} {n}"
                                                 for k, n in not_audited.items()) + ".")
    if report.design_unmatched:
        notes.append("Design-sheet rows not in the BOM: " + ", ".join(
            f"{_md(d['refdes'])} (row {d['row']})" for d in report.design_unmatched) + ".")
    if notes:
        out += [" ".join(notes), ""]

    bad = report.verdicts_worst_first()
    if len(bad):  # designators and statuses as the placement table has them
        status_of = t["status"].reindex(bad["pidx"].to_numpy()).to_numpy()
        bad = bad.assign(refdes=t["refdes"].reindex(bad["pidx"].to_numpy()).to_numpy())
        bad = bad[status_of != "pass"]
    if len(bad):
        shown = bad.head(limit)
        placements = bad["pidx"].nunique()
        more = (f", the worst {len(shown)} shown (all in the JSON report)"
                if len(bad) > len(shown) else "")
        metric_of = {} if report.rules is None else {r.id: r.metric for r in report.rules.rules}
        out += [f"### Verdicts not passing: {len(bad)} on {placements} "
                f"placement{'s' if placements != 1 else ''}{more}", "",
                "| refdes | status | rule | stress | limit | message |",
                "|:--|:--|:--|--:|--:|:--|"]
        for refdes, status, rule, value, lim, message in zip(
                shown["refdes"], shown["status"], shown["rule_id"], shown["value"],
                shown["limit"], shown["message"]):
            metric = metric_of.get(rule)
            out.append("| " + " | ".join([
                _md(refdes), _md(status), _md(rule), _md(format_metric(value, metric)),
                _md(format_metric(lim, metric)), _md("" if _isnan(message) else message),
            ]) + " |")
        out.append("")
    else:
        out += [f"Every one of the {len(t)} audited placements passes.", ""]

    found = report.waiver_findings
    if found:
        applied = sum(1 for f in found if f.code == "applied")
        out.append(f"**Waivers:** {applied} applied, {len(found) - applied} not applied.")
        out.append("")
        out += [f"- {f.code.replace('_', ' ')}: {_md(f.message)}" for f in found[:limit]]
        if len(found) > limit:
            out.append(f"- ... {len(found) - limit} more in the JSON report")
        out.append("")
    if diff is not None:
        from bomcheck.report.diff import diff_markdown

        out += [diff_markdown(diff, limit=limit, level=3).rstrip("\n"), ""]
    rulesets = ", ".join(f"{_md(r['name'])} {_md(r.get('version'))}" for r in report.rulesets)
    if report.input_warnings:
        out += ["### Input warnings", ""]
        out += [f"- {_md(str(w))}" for w in report.input_warnings]
        out += [""]
    out += [f"Rule sets: {rulesets}; environment: {_md(report.environment)}.", "",
            "### Cautions", ""]
    out += [f"- {_md(c)}" for c in report.cautions]
    return "\n".join(out) + "\n"


# --------------------------------------------------------------------------------------------
# CSV.

def _cell(value: Any) -> str:
    """A text field with the CSV-injection guard (``textsafe.csv_field``)."""
    return "" if _isnan(value) else csv_field(value)


def _num(value: Any) -> str:
    return "" if _isnan(value) else format(float(value), ".6g")


def _waived_by_placement(report) -> dict[int, str]:
    """Per placement index, its waived verdicts as ``rule (was status): reason; ...``."""
    v = report.verdicts
    if "waived_from" not in v.columns:
        return {}
    v = v[v["status"] == "waived"]
    reasons = v["waiver_reason"] if "waiver_reason" in v.columns else pd.Series("", index=v.index)
    out: dict[int, list[str]] = {}
    for pidx, rule, was, why in zip(v["pidx"], v["rule_id"], v["waived_from"], reasons):
        out.setdefault(int(pidx), []).append(f"{rule} (was {was}): {why}")
    return {k: "; ".join(items) for k, items in out.items()}


def csv_rows(report) -> str:
    """One CSV row per fitted placement in BOM order: designator, BOM row, status (and the
    status a waiver replaced), the governing verdict with its value, limit and margin (SI
    units), the part's key fields, its BOM text and the explanation."""
    t = report.table
    gov = _governing(report)
    out = [csv_line(CSV_COLUMNS)]

    def col(name: str) -> pd.Series:
        return t[name] if name in t.columns else pd.Series(None, index=t.index, dtype=object)

    def gcol(name: str) -> pd.Series:
        if name in gov.columns:
            return gov[name].reindex(t.index)
        return pd.Series(None, index=t.index, dtype=object)

    waived = _waived_by_placement(report)
    for i, *rec in zip(t.index, col("refdes"), col("row"), col("status"), gcol("waived_from"),
                       gcol("rule_id"), gcol("metric"), gcol("value"), gcol("limit"),
                       gcol("margin"), col("technology"), col("capacitance_f"), col("voltage_v"),
                       col("dielectric"), col("package"), col("text"), gcol("message"),
                       gcol("source")):
        (refdes, row, status, waived_from, rule, metric, value, limit, margin, tech, cap, volt,
         diel, package, text, message, source) = rec
        out.append(csv_line([
            _cell(refdes), "" if _isnan(row) else str(int(row)), _cell(status), _cell(waived_from),
            _cell(rule), _cell(metric), _num(value), _num(limit), _num(margin), _cell(tech),
            _num(cap), _num(volt), _cell(diel), _cell(package), _cell(text), _cell(message),
            _cell(source), _cell(waived.get(int(i), "")),
        ]))
    return "".join(out)

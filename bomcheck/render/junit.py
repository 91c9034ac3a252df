"""Report stage, CI edge: the audit ``Report`` as JUnit XML, one test case per fitted placement.

One ``<testsuite>``, one ``<testcase>`` per fitted placement, in BOM order, named by designator,
``classname`` ``bomcheck.<technology>``:

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
the suite's ``<system-out>``. XML text goes through ``textsafe.xml_text``; nothing reads a clock,
so the same report gives the same bytes.
"""

from __future__ import annotations

import xml.etree.ElementTree as ET

import pandas as pd

from bomcheck.render.textsafe import xml_text as _x
from bomcheck.render.verdicts import governing, has_text, problems_by_placement

WARN_AS: tuple[str, ...] = ("failure", "skipped", "pass")


def junit_xml(report, *, warn_as: str = "failure") -> str:
    """The report as JUnit XML: one test case per fitted placement (see the module docstring)."""
    if warn_as not in WARN_AS:
        raise ValueError(f"warn_as must be one of {', '.join(WARN_AS)}, not {warn_as!r}")
    cases, counts = _cases(report, warn_as)
    attrs = {"name": "bomcheck audit", "tests": str(len(cases)),
             **{k: str(n) for k, n in counts.items()}}
    # <testsuites> has no "skipped" attribute in the widely used junit-10.xsd; the suite has.
    root = ET.Element("testsuites", {k: v for k, v in attrs.items() if k != "skipped"})
    suite = ET.SubElement(root, "testsuite", attrs)
    props = ET.SubElement(suite, "properties")
    for name, value in _properties(report, warn_as):
        ET.SubElement(props, "property", {"name": _x(name), "value": _x(value)})
    suite.extend(cases)
    notes = [f"NODATA {d['reason']}" for d in report.design_unmatched]
    notes += [f"WAIVER {f.code}: {f.message}" for f in report.waiver_findings]
    notes += [f"INPUT WARNING {w}" for w in report.input_warnings]
    if notes:
        ET.SubElement(suite, "system-out").text = _x("\n".join(notes))
    ET.indent(root)
    return '<?xml version="1.0" encoding="UTF-8"?>\n' + ET.tostring(root, encoding="unicode") + "\n"


def _cases(report, warn_as: str) -> tuple[list[ET.Element], dict[str, int]]:
    """The test cases of the fitted placements and the suite's counts."""
    t = report.table
    problems = problems_by_placement(report)
    gov = governing(report)
    gov_msg = dict(zip(gov.index, gov["message"])) if len(gov) else {}
    counts = {"failures": 0, "errors": 0, "skipped": 0}
    cases = []
    techs = t["technology"] if "technology" in t.columns else pd.Series(None, index=t.index)
    for i, refdes, tech, status in zip(t.index, t["refdes"], techs, t["status"]):
        family = _x(tech) if has_text(tech) else "unknown"
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
    return cases, counts


def _properties(report, warn_as: str) -> list[tuple[str, str]]:
    """The suite's properties: tool version, status, environment, rule sets and inputs."""
    items = [("bomcheck.version", report.tool_version), ("status", report.status),
             ("environment", report.environment), ("warn_as", warn_as)]
    items += [(f"ruleset.{r['name']}", str(r.get("version"))) for r in report.rulesets]
    items += [(f"input.{d['role']}", f"{d['path']} sha256:{d['sha256']}") for d in report.inputs]
    return items

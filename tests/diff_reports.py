"""Minimal JSON audit reports for the comparison tests (bomcheck.report.diff, ``bomcheck diff``
and its Markdown): invented designators and rule ids, schema 1 and schema 2."""


def report(placements: dict, rulesets=("tiny 1",)) -> dict:
    """A minimal schema 1 JSON report: {refdes: [(rule, status), ...]} (passes under "checks")."""
    out = []
    for refdes, verdicts in placements.items():
        out.append({
            "refdes": refdes,
            "findings": [{"rule": r, "status": s, "message": f"{refdes}: {r} {s}"}
                         for r, s in verdicts if s != "pass"],
            "checks": [{"rule": r, "value": 0.1, "limit": 0.7, "margin": 0.6}
                       for r, s in verdicts if s == "pass"],
        })
    return {"tool": {"name": "bomcheck", "version": "0.0-test"}, "status": "fail",
            "rulesets": [{"name": n.split()[0], "version": n.split()[1]} for n in rulesets],
            "placements": out}


OLD_SPEC = {
    "C1": [("R-V", "pass"), ("R-T", "pass")],
    "C2": [("R-V", "pass"), ("R-T", "warn")],
    "C10": [("R-V", "fail")],
    "C5": [("R-V", "fail")],
}
NEW_SPEC = {
    "C1": [("R-V", "fail"), ("R-T", "pass")],    # changed: pass -> fail (worse)
    "C2": [("R-V", "pass")],                     # resolved: R-T warn gone
    "C3": [("R-V", "fail")],                     # added placement with a new failing verdict
    "C10": [("R-V", "fail")],                    # unchanged
}
OLD, NEW = report(OLD_SPEC), report(NEW_SPEC)


def report_v2(placements: dict) -> dict:
    """The same minimal report in schema 2: one "verdicts" list, no message on a pass."""
    old = report(placements)
    for p in old["placements"]:
        p["verdicts"] = sorted(
            [{"rule": f["rule"], "status": f["status"], "message": f["message"]}
             for f in p.pop("findings")]
            + [{"rule": c["rule"], "status": "pass", "margin": c["margin"]}
               for c in p.pop("checks")], key=lambda v: v["rule"])
    return {"schema_version": 2, **old}

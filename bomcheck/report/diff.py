"""Report stage, release to release: compare two JSON audit reports verdict by verdict.

A verdict is identified by designator and rule id. ``new`` verdicts are in the new report only,
``resolved`` ones in the old report only, ``changed`` ones in both with another status. The new
*problems* (what ``--fail-on new`` gates on) are the new verdicts at warn or worse and the
changed verdicts whose status got worse and is now warn or worse (status order pass < waived <
warn < nodata < fail, so an expired waiver shows as a worsened verdict).
"""

from __future__ import annotations

from typing import Any

from bomcheck.frozen import frozen
from bomcheck.parse import refdes as refdes_mod
from bomcheck.errors import InputError
from bomcheck.status import RANK as _RANK

PROBLEM = "warn"  # the lowest status that counts as a problem


@frozen
class VerdictChange:
    """One verdict that appeared, went away or changed status between two reports."""

    refdes: str
    rule: str
    old_status: str | None = None
    new_status: str | None = None
    old_message: str | None = None
    new_message: str | None = None

    def sort_key(self) -> tuple:
        """Designators in natural order (C2 before C10), then the rule id."""
        return (refdes_mod.sort_key(self.refdes), self.rule)

    @property
    def worsened(self) -> bool:
        """True when the new status is worse than the old (a verdict that is new counts as
        worse than none at all)."""
        old = -1 if self.old_status is None else _RANK.get(self.old_status, 0)
        return self.new_status is not None and _RANK.get(self.new_status, 0) > old

    @property
    def is_problem(self) -> bool:
        """True for a new or worsened verdict that is now warn, nodata or fail."""
        return (self.worsened and self.new_status is not None
                and _RANK.get(self.new_status, 0) >= _RANK[PROBLEM])

    def to_dict(self) -> dict[str, Any]:
        """A JSON-ready dict."""
        return {"refdes": self.refdes, "rule": self.rule, "old_status": self.old_status,
                "new_status": self.new_status, "old_message": self.old_message,
                "new_message": self.new_message}


@frozen
class Diff:
    """Two reports compared: verdicts new, resolved and changed; placements added and removed.

    ``old`` and ``new`` describe each report (label, tool version, rule sets, status)."""

    old: dict
    new: dict
    new_verdicts: tuple[VerdictChange, ...]
    resolved: tuple[VerdictChange, ...]
    changed: tuple[VerdictChange, ...]
    added: tuple[str, ...]
    removed: tuple[str, ...]

    @property
    def new_problems(self) -> tuple[VerdictChange, ...]:
        """New verdicts at warn or worse and changed verdicts worsened to warn or worse."""
        return tuple(c for c in (*self.new_verdicts, *self.changed) if c.is_problem)

    @property
    def rulesets_differ(self) -> bool:
        """True when the two reports were made with different rule sets or versions."""
        return self.old.get("rulesets") != self.new.get("rulesets")

    def counts(self) -> dict[str, int]:
        """How many of each kind of change."""
        return {"new": len(self.new_verdicts), "resolved": len(self.resolved),
                "changed": len(self.changed), "added": len(self.added),
                "removed": len(self.removed), "new_problems": len(self.new_problems)}

    def to_dict(self) -> dict[str, Any]:
        """A JSON-ready dict, every list sorted by designator then rule id."""
        return {
            "old": self.old, "new": self.new, "counts": self.counts(),
            "placements_added": list(self.added), "placements_removed": list(self.removed),
            "new_verdicts": [c.to_dict() for c in self.new_verdicts],
            "resolved": [c.to_dict() for c in self.resolved],
            "changed": [c.to_dict() for c in self.changed],
            "new_problems": [c.to_dict() for c in self.new_problems],
        }

    def rows(self, *, include_pass: bool = False) -> list[tuple[str, VerdictChange]]:
        """(kind, change) in display order: changed, new, resolved; new and resolved verdicts
        that pass on their only side are left out unless ``include_pass``."""
        out = [("changed", c) for c in self.changed]
        out += [("new", c) for c in self.new_verdicts if include_pass or c.new_status != "pass"]
        out += [("resolved", c) for c in self.resolved
                if include_pass or c.old_status != "pass"]
        return out


def _describe(report: dict, label: str | None) -> dict:
    rulesets = [f"{r.get('name')} {r.get('version')}" for r in report.get("rulesets", [])]
    return {"label": label, "tool_version": (report.get("tool") or {}).get("version"),
            "rulesets": rulesets, "status": report.get("status")}


def _placements(report: dict, which: str):
    """(name, placement) of a single report, or of every board of a combined batch report (the
    name then "PRODUCT/refdes")."""
    boards = report.get("boards") if isinstance(report, dict) else None
    if isinstance(boards, list):
        for board in boards:
            sub = board.get("report") if isinstance(board, dict) else None
            if not isinstance(sub, dict) or not isinstance(sub.get("placements"), list):
                raise InputError(f"the {which} report has a board without its report",
                                 expected="the output of bomcheck audit --manifest --json")
            for p in sub["placements"]:
                yield f"{board.get('product')}/{p.get('refdes') if isinstance(p, dict) else p}", p
        return
    placements = report.get("placements") if isinstance(report, dict) else None
    if not isinstance(placements, list):
        raise InputError(f"the {which} report is not a bomcheck JSON report",
                         expected="the output of bomcheck audit --json (a 'placements' list)")
    for p in placements:
        yield (str(p["refdes"]) if isinstance(p, dict) and "refdes" in p else None), p


def _placement_verdicts(p: dict) -> list[dict]:
    """A placement's verdicts: ``verdicts`` (schema 2), or ``findings`` and the passing
    ``checks`` of schema 1 reports."""
    if "verdicts" in p:
        return [v for v in p["verdicts"] or []]
    out = list(p.get("findings") or [])
    return out + [{"status": "pass", "message": None, **c} for c in p.get("checks") or []]


def _verdicts(report: dict, which: str) -> tuple[dict[tuple[str, str], dict], set[str]]:
    """(refdes, rule) -> verdict (the worst when a designator repeats), and the designators."""
    out: dict[tuple[str, str], dict] = {}
    names: set[str] = set()
    for refdes, p in _placements(report, which):
        try:
            if refdes is None:
                raise KeyError("refdes")
            names.add(refdes)
            for f in _placement_verdicts(p):
                key = (refdes, str(f["rule"]))
                old = out.get(key)
                if old is None or _RANK.get(f["status"], 0) > _RANK.get(old["status"], 0):
                    out[key] = f
        except (KeyError, TypeError, AttributeError):
            raise InputError(f"the {which} report has a placement without refdes or verdicts",
                             expected="the output of bomcheck audit --json") from None
    return out, names


def report_digest(report) -> dict:
    """What ``compare`` reads of a ``Report`` (tool, rule sets, status, and per placement its
    verdicts' rule, status and message), taken from its tables without writing the JSON report."""
    v = report.with_messages(report.verdicts, passes=False)
    by_placement: dict[int, list[dict]] = {}
    if len(v):
        messages = v["message"] if "message" in v.columns else [None] * len(v)
        for pidx, rule, status, message in zip(v["pidx"].tolist(), v["rule_id"].tolist(),
                                               v["status"].tolist(), list(messages)):
            by_placement.setdefault(pidx, []).append(
                {"rule": rule, "status": status,
                 "message": message if status != "pass" and isinstance(message, str) else None})
    placements = [{"refdes": r, "verdicts": by_placement.get(i, [])}
                  for i, r in enumerate(report.table["refdes"].tolist())]
    return {"tool": {"name": "bomcheck", "version": report.tool_version},
            "rulesets": list(report.rulesets), "status": report.status,
            "placements": placements}


def _change(key: tuple[str, str], old: dict | None, new: dict | None) -> VerdictChange:
    return VerdictChange(
        refdes=key[0], rule=key[1],
        old_status=None if old is None else old.get("status"),
        new_status=None if new is None else new.get("status"),
        old_message=None if old is None else old.get("message"),
        new_message=None if new is None else new.get("message"),
    )


def compare(old: dict, new: dict, *, old_label: str | None = None,
            new_label: str | None = None) -> Diff:
    """Compare two JSON reports (``Report.to_dict()`` or a parsed ``--json`` file)."""
    old_v, old_names = _verdicts(old, "old")
    new_v, new_names = _verdicts(new, "new")
    both = [k for k in old_v.keys() & new_v.keys()
            if old_v[k].get("status") != new_v[k].get("status")]

    def ordered(changes) -> tuple[VerdictChange, ...]:
        return tuple(sorted(changes, key=VerdictChange.sort_key))

    return Diff(
        old=_describe(old, old_label), new=_describe(new, new_label),
        new_verdicts=ordered(_change(k, None, new_v[k]) for k in new_v.keys() - old_v.keys()),
        resolved=ordered(_change(k, old_v[k], None) for k in old_v.keys() - new_v.keys()),
        changed=ordered(_change(k, old_v[k], new_v[k]) for k in both),
        added=tuple(sorted(new_names - old_names, key=refdes_mod.sort_key)),
        removed=tuple(sorted(old_names - new_names, key=refdes_mod.sort_key)),
    )


def summary_line(diff: Diff) -> str:
    """One line of counts: "2 new problems; verdicts: 3 new, 1 resolved, 2 changed; ..."."""
    c = diff.counts()
    line = (f"{c['new_problems']} new problem{'s' if c['new_problems'] != 1 else ''}; verdicts: "
            f"{c['new']} new, {c['resolved']} resolved, {c['changed']} changed; placements: "
            f"{c['added']} added, {c['removed']} removed")
    if diff.rulesets_differ:
        line += (f" (rule sets differ: {', '.join(diff.old['rulesets'])} -> "
                 f"{', '.join(diff.new['rulesets'])})")
    return line


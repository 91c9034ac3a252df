"""Substitute check, its values: the options, an alternate as given, and the result of checking
it (differences, reasons, both parts' verdicts per placement, the verdict) with its JSON form."""

from __future__ import annotations

import json
import math
from collections.abc import Mapping
from dataclasses import field
from typing import Any

import numpy as np
import pandas as pd

from bomcheck.frozen import frozen
from bomcheck.report.model import CAUTIONS
from bomcheck.status import RANK
from bomcheck.substitute.words import designator_list

VERDICTS: tuple[str, ...] = ("drop-in", "review", "rejected")  # best first
SEVERITIES: tuple[str, ...] = ("reject", "review", "note")  # worst first
SEVERITY_LABEL = {"reject": "Rejected", "review": "Review", "note": "Note"}
DEFAULT_MARGIN_DROP_PP = 10.0  # percentage points, for stresses shown as percentages
DEFAULT_TEMP_MARGIN_DROP_C = 10.0  # degC, for temperature margins
_TOP_SEVERITY = {"rejected": "reject", "review": "review", "drop-in": "note"}


@frozen
class SubstituteOptions:
    """What to check with: rule sets, import options, the design sheet's sheet, a parts file, and
    how far a margin may shrink before the alternate needs review."""

    rules: tuple[str, ...] = ()
    import_options: object | None = None  # bomcheck.parse.importer.ImportOptions
    design_sheet: str | int | None = None
    parts: str | None = None  # parts file keyed by MPN, as for the audit
    margin_drop_pp: float = DEFAULT_MARGIN_DROP_PP
    temp_margin_drop_c: float = DEFAULT_TEMP_MARGIN_DROP_C
    environment: str = "severe"  # as for the audit (rules.ENVIRONMENTS)
    parts_override: bool = False  # as for the audit


@frozen
class Alternate:
    """One proposed alternate for one original, as the alternates file (or the command line)
    gives it.

    ``original`` names the part it replaces: an MPN, the text of a BOM line or a designator list
    (``original_kind`` forces one reading; None tries designators, then MPN, then text).
    ``cells`` are BOM-style cells (``alternates.SPEC_CELLS``) parsed as the BOM's are;
    ``parts_cells`` are parts-data fields (header -> text) laid over the parsed spec, keyed by
    ``mpn``.
    """

    original: str
    original_kind: str | None = None
    mpn: str = ""
    manufacturer: str = ""
    cells: Mapping[str, str] = field(default_factory=dict)
    parts_cells: Mapping[str, str] = field(default_factory=dict)
    footprint_checked: bool = False
    notes: str = ""
    row: int | None = None
    path: str = ""

    @property
    def label(self) -> str:
        """How the alternate is named in outputs: its MPN, else its text."""
        return self.mpn or " | ".join(v for v in self.cells.values() if v) or "(no text)"

    def where(self) -> str:
        """Where it was given, for messages: ``alternates.csv row 4``."""
        if self.row is None:
            return self.path or "command line"
        return f"{self.path} row {self.row}" if self.path else f"row {self.row}"


@frozen
class Difference:
    """One difference between the original and the alternate that matters to the substitute.

    ``severity`` is "reject", "review" or "note"; ``text`` is the phrase purchasing reads
    (``rated 85 degC instead of 125 degC``), ``short`` the form put in brackets beside a verdict.
    """

    field: str
    severity: str
    original: str
    proposed: str
    text: str
    short: str
    refdes: tuple[str, ...]

    def to_dict(self) -> dict:
        """JSON-ready dict."""
        return {"field": self.field, "severity": self.severity, "original": self.original,
                "proposed": self.proposed, "text": self.text, "refdes": list(self.refdes)}


@frozen
class Issue:
    """A reason behind the alternate's verdict, for some placements."""

    severity: str
    kind: str  # "verdict", "margin", "difference" or "placements"
    topic: str  # the metric or spec field it is about
    refdes: tuple[str, ...]
    text: str

    @property
    def sentence(self) -> str:
        """``Rejected for C14, C15: rated 85 degC, the placements run at 95 degC (...)``."""
        who = f" for {designator_list(self.refdes)}" if self.refdes else ""
        return f"{SEVERITY_LABEL[self.severity]}{who}: {self.text}"

    def to_dict(self) -> dict:
        """JSON-ready dict."""
        return {"severity": self.severity, "kind": self.kind, "topic": self.topic,
                "refdes": list(self.refdes), "text": self.text, "sentence": self.sentence}


@frozen
class VerdictPair:
    """One rule on one placement: the original's verdict and the alternate's (None where the rule
    does not apply to that part)."""

    rule_id: str
    metric: str | None
    original: dict | None
    proposed: dict | None
    worse: bool

    def to_dict(self) -> dict:
        """JSON-ready dict."""
        return {"rule": self.rule_id, "metric": self.metric, "original": self.original,
                "proposed": self.proposed, "worse": self.worse}


@frozen
class PlacementCheck:
    """One placement, audited with the original and with the alternate, side by side.

    ``role`` is "replaced" (the alternate sits here) or "group" (a member of the same bank or
    series stack, whose stresses the swap may change).
    """

    refdes: str
    row: int | None
    role: str
    conditions: str
    original_status: str
    proposed_status: str
    original_governing: dict | None
    proposed_governing: dict | None
    verdicts: tuple[VerdictPair, ...]
    worse: bool

    @property
    def change(self) -> str:
        """"worse" (a verdict got worse), "better" (the placement's status improved) or "same"."""
        if self.worse:
            return "worse"
        if RANK[self.proposed_status] < RANK[self.original_status]:
            return "better"
        return "same"

    def to_dict(self) -> dict:
        """JSON-ready dict."""
        return {"refdes": self.refdes, "row": self.row, "role": self.role, "change": self.change,
                "conditions": self.conditions,
                "original": {"status": self.original_status,
                             "governing": self.original_governing},
                "proposed": {"status": self.proposed_status,
                             "governing": self.proposed_governing},
                "worse": self.worse, "verdicts": [v.to_dict() for v in self.verdicts]}


@frozen
class AlternateResult:
    """The check of one alternate in every placement of its original (``original_spec`` and
    ``proposed_spec`` are those of its first placement, after the parts data)."""

    alternate: Alternate
    match: str  # how the original was found: "refdes", "mpn", "text" or "direct"
    refdes: tuple[str, ...]  # fitted placements of the original
    not_fitted: tuple[str, ...]
    original_text: str
    proposed_text: str
    spec_source: str  # where the alternate's spec came from
    original_spec: dict
    proposed_spec: dict
    verdict: str
    reasons: tuple[Issue, ...]
    differences: tuple[Difference, ...]
    placements: tuple[PlacementCheck, ...]

    @property
    def summary(self) -> str:
        """The sentences of the reasons that set the verdict (for drop-in: that it is one)."""
        top = [i for i in self.reasons if i.severity == _TOP_SEVERITY[self.verdict]]
        if not top and self.verdict != "drop-in":
            return SEVERITY_LABEL[_TOP_SEVERITY[self.verdict]]
        if self.verdict == "drop-in":
            notes = "; ".join(i.text for i in self.reasons if i.severity == "note")
            who = f" for {designator_list(self.refdes)}" if self.refdes else ""
            return (f"Drop-in{who}: no verdict worse and no difference that matters"
                    + (f" ({notes})" if notes else ""))
        by_refdes: dict[tuple[str, ...], list[str]] = {}
        for i in top:
            by_refdes.setdefault(i.refdes, []).append(i.text)
        label = SEVERITY_LABEL[top[0].severity]
        return ". ".join(f"{label}{' for ' + designator_list(r) if r else ''}: {'; '.join(t)}"
                         for r, t in by_refdes.items())

    def to_dict(self) -> dict:
        """JSON-ready dict."""
        a = self.alternate
        return {
            "original": {"key": a.original, "match": self.match, "text": self.original_text,
                         "refdes": list(self.refdes), "not_fitted": list(self.not_fitted),
                         "spec": self.original_spec},
            "proposed": {"label": a.label, "mpn": a.mpn, "manufacturer": a.manufacturer,
                         "text": self.proposed_text, "footprint_checked": a.footprint_checked,
                         "notes": a.notes, "source": a.where(), "row": a.row,
                         "spec_source": self.spec_source, "spec": self.proposed_spec},
            "verdict": self.verdict,
            "summary": self.summary,
            "reasons": [i.to_dict() for i in self.reasons],
            "differences": [d.to_dict() for d in self.differences],
            "placements": [p.to_dict() for p in self.placements],
        }


@frozen
class SubstituteResult:
    """Every alternate checked, with the rule sets and inputs behind the checks."""

    tool_version: str
    rulesets: tuple[dict, ...]
    inputs: tuple[dict, ...]
    options: dict
    results: tuple[AlternateResult, ...]
    cautions: tuple[str, ...] = CAUTIONS

    @property
    def status(self) -> str:
        """The worst verdict ("drop-in" when there are no alternates)."""
        worst = max((VERDICTS.index(r.verdict) for r in self.results), default=0)
        return VERDICTS[worst]

    @property
    def rejected(self) -> bool:
        """True when any alternate is rejected (the CLI's exit status 1)."""
        return any(r.verdict == "rejected" for r in self.results)

    @property
    def totals(self) -> dict[str, int]:
        """Alternates checked, and how many of each verdict."""
        out = {"alternates": len(self.results)}
        out.update({v: sum(r.verdict == v for r in self.results) for v in VERDICTS})
        return out

    def to_dict(self) -> dict:
        """The JSON form (schema ``substitute.schema.json``)."""
        return {
            "tool": {"name": "bomcheck", "version": self.tool_version},
            "kind": "substitute",
            "status": self.status,
            "options": dict(self.options),
            "rulesets": list(self.rulesets),
            "inputs": list(self.inputs),
            "totals": self.totals,
            "alternates": [r.to_dict() for r in self.results],
            "cautions": list(self.cautions),
        }

    def to_json(self) -> str:
        """JSON text; the same inputs give the same bytes."""
        return json.dumps(plain(self.to_dict()), ensure_ascii=False, indent=2,
                          allow_nan=False) + "\n"


def plain(value: Any) -> Any:
    """JSON-ready: NaN to None, numpy scalars to Python, tuples to lists."""
    if isinstance(value, dict):
        return {k: plain(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [plain(v) for v in value]
    if isinstance(value, np.generic):
        value = value.item()
    if isinstance(value, float) and not math.isfinite(value):
        return None
    if value is pd.NA:
        return None
    return value

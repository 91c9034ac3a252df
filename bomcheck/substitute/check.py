"""Substitute check, after the parse stage: does a proposed alternate still pass in every placement
of the part it would replace?

For each original placement the table row of the alternate is built by replacing the spec columns
with the alternate's parsed spec (the importer's parser, and the parts-data entry when one is
given), keeping the placement's operating conditions; both rows then go through the same stages
as the audit (``stresses.compute``, ``circuit.apply``, ``engine.evaluate`` and the audit's own
verdicts). Nothing is recomputed by hand: the comparison reads the two verdict tables and the
two spec rows and says, per alternate, "drop-in", "review" or "rejected", with sentences
purchasing can act on. Pure apart from ``read_alternates``, ``run_substitute`` and
``run_direct``, which read the input files.
"""

from __future__ import annotations

import json
import math
import re
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, field, fields
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd

from bomcheck import __version__
from bomcheck.errors import InputError
from bomcheck.parse.importer import spec_from_cells
from bomcheck.report.model import CAUTIONS, ruleset_summary
from bomcheck.status import RANK as _RANK
from bomcheck.spec import SPEC_KEYS, CapSpec
from bomcheck.vocabulary import METRICS

VERDICTS: tuple[str, ...] = ("drop-in", "review", "rejected")  # best first
SEVERITIES: tuple[str, ...] = ("reject", "review", "note")  # worst first
SEVERITY_LABEL = {"reject": "Rejected", "review": "Review", "note": "Note"}
DEFAULT_MARGIN_DROP_PP = 10.0  # percentage points, for stresses shown as percentages
DEFAULT_TEMP_MARGIN_DROP_C = 10.0  # degC, for temperature margins

SPEC_COLUMNS: tuple[str, ...] = tuple(k for k in SPEC_KEYS if k != "text")
_FLOAT_FIELDS = frozenset(f.name for f in fields(CapSpec) if f.type in ("float | None",
                                                                       "int | None"))
# BOM cells an alternate may give, parsed with the BOM's own parser and contexts.
SPEC_CELLS: tuple[str, ...] = ("value", "description", "voltage", "tolerance", "dielectric",
                               "package", "temperature")
_MATCH_KINDS = ("refdes", "mpn", "text")
# Spec differences named beside a verdict on a metric: per group of alternatives, the first one
# the placement has.
_RELATED: dict[str, tuple[tuple[str, ...], ...]] = {
    "voltage_ratio": (("ac_rating", "rated_voltage"), ("technology",)),
    "transient_ratio": (("rated_voltage",),),
    "reverse_ratio": (("rated_voltage",), ("technology",)),
    "temp_margin_c": (("dielectric", "temp_max"), ("technology",)),
    "t_operating_c": (("temp_max",), ("technology",)),
    "c_margin": (("capacitance",), ("dielectric",), ("tolerance",)),
    "bank_c_margin": (("capacitance",), ("dielectric",), ("tolerance",)),
}
_MARGIN_LABEL = {"voltage_ratio": "voltage stress", "transient_ratio": "transient stress",
                 "reverse_ratio": "reverse-voltage stress", "c_margin": "capacitance margin",
                 "bank_c_margin": "bank capacitance margin"}


# --------------------------------------------------------------------------------------------
# Values.

@dataclass(frozen=True)
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


@dataclass(frozen=True)
class Alternate:
    """One proposed alternate for one original, as the alternates file (or the command line)
    gives it.

    ``original`` names the part it replaces: an MPN, the text of a BOM line or a designator list
    (``original_kind`` forces one reading; None tries designators, then MPN, then text).
    ``cells`` are BOM-style cells (``SPEC_CELLS``) parsed as the BOM's are; ``parts_cells`` are
    parts-data fields (header -> text) laid over the parsed spec, keyed by ``mpn``.
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


@dataclass(frozen=True)
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


@dataclass(frozen=True)
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


@dataclass(frozen=True)
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


@dataclass(frozen=True)
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
        if _RANK[self.proposed_status] < _RANK[self.original_status]:
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


@dataclass(frozen=True)
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


_TOP_SEVERITY = {"rejected": "reject", "review": "review", "drop-in": "note"}


@dataclass(frozen=True)
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
        return json.dumps(_plain(self.to_dict()), ensure_ascii=False, indent=2,
                          allow_nan=False) + "\n"


def _plain(value: Any) -> Any:
    """JSON-ready: NaN to None, numpy scalars to Python, tuples to lists."""
    if isinstance(value, dict):
        return {k: _plain(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_plain(v) for v in value]
    if isinstance(value, np.generic):
        value = value.item()
    if isinstance(value, float) and not math.isfinite(value):
        return None
    if value is pd.NA:
        return None
    return value


# --------------------------------------------------------------------------------------------
# Formatting.

def designator_list(refdes: Iterable[str], limit: int | None = 24) -> str:
    """Designators in natural order, runs of three or more as ranges: ``C7-C10, C12``; past
    ``limit`` items, ``... and 1180 more`` (None: all of them)."""
    from bomcheck.parse.refdes import sort_key

    items = sorted(dict.fromkeys(refdes), key=sort_key)
    out: list[tuple[str, int]] = []  # (text, designators it stands for)
    run: list[tuple[str, int, str]] = []

    def flush() -> None:
        if len(run) >= 3:
            out.append((f"{run[0][2]}-{run[-1][2]}", len(run)))
        else:
            out.extend((r[2], 1) for r in run)
        run.clear()

    for item in items:
        m = re.fullmatch(r"([A-Za-z_]+)(\d+)", item)
        if m and run and m.group(1) == run[-1][0] and int(m.group(2)) == run[-1][1] + 1 \
                and not m.group(2).startswith("0"):
            run.append((m.group(1), int(m.group(2)), item))
            continue
        flush()
        if m and not m.group(2).startswith("0"):
            run.append((m.group(1), int(m.group(2)), item))
        else:
            out.append((item, 1))
    flush()
    if limit is not None and len(out) > limit:
        rest = sum(n for _, n in out[limit:])
        return ", ".join(t for t, _ in out[:limit]) + f" and {rest} more"
    return ", ".join(t for t, _ in out)


def _fq(value: Any, unit: str, percent: bool = False) -> str:
    """A value as engine messages show it (``16 V``, ``79.69 %``, ``4.7 uF``); "?" when unknown."""
    from bomcheck.quantity import format_quantity

    if value is None or (isinstance(value, float) and math.isnan(value)):
        return "?"
    return format_quantity(float(value), unit, percent)


def _num(value: Any) -> float:
    try:
        out = float(value)
    except (TypeError, ValueError):
        return math.nan
    return out


def _given(value: Any) -> bool:
    if value is None or value is pd.NA:
        return False
    if isinstance(value, float):
        return not math.isnan(value)
    return value != ""


def _norm_text(text: str) -> str:
    return " ".join(str(text).split()).casefold()


def _norm_package(text: Any) -> str:
    return re.sub(r"[\s_]+", "", str(text)).upper() if _given(text) else ""


def conditions_text(rec: Mapping[str, Any]) -> str:
    """A placement's operating conditions in a few words: ``12.6 V + 0.15 V ripple, 60 degC``."""
    parts = []
    upper, ac = _num(rec.get("v_upper_v")), _num(rec.get("v_ac_rms"))
    if not math.isnan(upper):
        text = _fq(upper, "V")
        ripple = _num(rec.get("v_ripple_pk"))
        if not math.isnan(ripple) and ripple:
            text += f" + {_fq(ripple, 'V')} ripple"
        parts.append(text)
    if not math.isnan(ac):
        parts.append(f"{_fq(ac, 'V')} rms")
    t_op = _num(rec.get("t_operating_c"))
    if not math.isnan(t_op):
        parts.append(_fq(t_op, "degC"))
    return ", ".join(parts) or "no conditions"


# --------------------------------------------------------------------------------------------
# Reading the alternates file (CSV, TSV, XLSX through bomcheck.read.reader, or TOML).

# Folded header -> field, for the alternates file's own columns (BOM and parts-data columns are
# recognised by their own modules' aliases).
_OWN_HEADERS: dict[str, tuple[str, ...]] = {
    "original": ("original", "originalpart", "originalmpn", "originaltext", "replaces",
                 "replacing", "substitutefor", "alternatefor", "bomline", "originalline"),
    "original_refdes": ("originalrefdes", "originaldesignators", "originaldesignator",
                        "refdes", "designator", "designators", "placements"),
    "mpn": ("alternate", "alternatempn", "proposed", "proposedmpn", "substitute",
            "substitutempn"),
    "description": ("alternatetext", "proposedtext", "alternatedescription",
                    "proposeddescription", "text"),
    "footprint_checked": ("footprintchecked", "footprintok", "footprintverified",
                          "layoutchecked", "footprintapproved"),
    "notes": ("notes", "note", "comment", "comments", "remarks"),
}
_YES = frozenset({"yes", "y", "true", "t", "1", "x", "checked", "ok", "\u2713", "\u2714"})
_NO = frozenset({"", "no", "n", "false", "f", "0", "-"})


def _own_field(header: str) -> str | None:
    from bomcheck.parse.columns import normalise_header

    key = normalise_header(header)
    for name, spellings in _OWN_HEADERS.items():
        if key in spellings:
            return name
    return None


def _classify(header: str) -> tuple[str, str]:
    """(kind, field) of an alternates-file header: ``own``, ``cell`` (a BOM-style cell),
    ``parts`` (a parts-data field) or ``ignore``."""
    from bomcheck.parse.columns import match_field
    from bomcheck.parse.parts import is_parts_header

    own = _own_field(header)
    if own is not None:
        return ("own", own)
    bom = match_field(header)
    if bom in ("mpn", "manufacturer", "notes"):
        return ("own", bom)
    if bom in SPEC_CELLS:
        return ("cell", bom)
    if bom is None and is_parts_header(["mpn", header]):
        return ("parts", header)
    return ("ignore", header)


def is_alternates_header(cells: list[str]) -> bool:
    """True for the header row of an alternates table: an original column and an alternate
    (MPN or a text cell)."""
    kinds = {_classify(str(c)) for c in cells if str(c).strip()}
    has_original = bool(kinds & {("own", "original"), ("own", "original_refdes")})
    has_alternate = any(k == "cell" or f in ("mpn", "description") for k, f in kinds)
    return has_original and has_alternate


def _flag(text: str, *, path: str, row: int | None, column: str) -> bool:
    folded = str(text).strip().casefold()
    if folded in _YES:
        return True
    if folded in _NO:
        return False
    raise InputError("not a yes/no value", path=path, row=row, column=column, text=str(text),
                     expected="yes or no (true/false, 1/0, x or empty)")


def alternates_from_records(records: Sequence[tuple[int | None, Mapping[str, str]]], *,
                            path: str = "<table>") -> tuple[Alternate, ...]:
    """Alternates from rows of header -> text cells, each with its source row."""
    out = []
    for row, rec in records:
        own: dict[str, tuple[str, str]] = {}
        cells: dict[str, str] = {}
        parts_cells: dict[str, str] = {}
        for header, value in rec.items():
            text = " ".join(str(value).split()) if value is not None else ""
            kind, name = _classify(str(header))
            if kind == "own":
                if name in own and own[name][1] and text:
                    raise InputError(f"two columns give {name}: {own[name][0]!r} and "
                                     f"{header!r}", path=path, row=row, column=str(header),
                                     expected="one column per field")
                if text or name not in own:
                    own[name] = (str(header), text)
            elif kind == "cell" and text:
                cells[name] = text
            elif kind == "parts" and text:
                parts_cells[str(header)] = text
        original, forced = own.get("original", ("", ""))[1], None
        if not original and own.get("original_refdes", ("", ""))[1]:
            original, forced = own["original_refdes"][1], "refdes"
        if not original:
            raise InputError("no original named", path=path, row=row,
                             column=own.get("original", ("original", ""))[0],
                             expected="the MPN, BOM line text or designators of the part the "
                                      "alternate replaces")
        desc = own.get("description", ("", ""))[1]
        if desc and "description" not in cells:
            cells["description"] = desc
        mpn = own.get("mpn", ("", ""))[1]
        if not mpn and not cells:
            raise InputError("no alternate given", path=path, row=row,
                             expected="the alternate's MPN and/or description")
        fp_header, fp_text = own.get("footprint_checked", ("footprint_checked", ""))
        alt = Alternate(
            original=original, original_kind=forced, mpn=mpn,
            manufacturer=own.get("manufacturer", ("", ""))[1],
            cells={k: cells[k] for k in SPEC_CELLS if k in cells}, parts_cells=parts_cells,
            footprint_checked=_flag(fp_text, path=path, row=row, column=fp_header),
            notes=own.get("notes", ("", ""))[1], row=row, path=path,
        )
        _alternate_parts(alt)  # a bad parts-data cell is an input error now, not mid-run
        out.append(alt)
    return tuple(out)


def read_alternates(path: str, *, sheet: str | int | None = None) -> tuple[Alternate, ...]:
    """Read an alternates file: CSV/TSV/XLSX (one row per alternate, header row with an
    ``original`` column) or TOML (``[[alternate]]`` tables with the same keys).

    Raises ``InputError`` naming the file, row and column of anything that cannot be used.
    """
    from bomcheck.read.reader import read_input, read_input_table, toml_text

    if Path(path).suffix.lower() == ".toml":
        data, _ = read_input(str(path), "alternates file")
        return alternates_from_toml(toml_text(data, str(path)), path=str(path))
    raw = read_input_table(
        str(path), sheet=sheet, header_predicate=is_alternates_header, what="alternates",
        expected="a header row with an 'original' column and the alternate's 'mpn' and/or "
                 "'description'")
    headers = list(raw.frame.columns)
    records = [(int(r), dict(zip(headers, cells))) for r, cells in
               zip(raw.rows.tolist(), raw.frame.itertuples(index=False, name=None))]
    alternates = alternates_from_records(records, path=str(path))
    if not alternates:
        raise InputError("the alternates file lists no alternates", path=str(path))
    return alternates


def alternates_from_toml(text: str, *, path: str = "<toml>") -> tuple[Alternate, ...]:
    """Alternates from TOML text: ``[[alternate]]`` tables (keys as the table columns)."""
    from bomcheck.read.reader import load_toml

    doc = load_toml(text, path)
    tables = doc.get("alternate")
    if not isinstance(tables, list) or not tables:
        raise InputError("no [[alternate]] tables", path=path,
                         expected='[[alternate]] tables with original = "..." and the '
                                  "alternate's mpn and/or description")
    lines = [n for n, line in enumerate(text.splitlines(), start=1)
             if re.match(r"^\s*\[\[\s*alternate\s*\]\]", line)]
    records = []
    for i, table in enumerate(tables):
        row = lines[i] if i < len(lines) else None
        if not isinstance(table, dict):
            raise InputError("an [[alternate]] entry is not a table", path=path, row=row)
        rec: dict[str, str] = {}
        for key, value in table.items():
            if isinstance(value, bool):
                rec[key] = "yes" if value else "no"
            elif isinstance(value, (int, float, str)):
                rec[key] = str(value)
            elif isinstance(value, list) and all(isinstance(p, list) and len(p) == 2
                                                 for p in value):
                rec[key] = "; ".join(f"{x}: {y}" for x, y in value)  # a parts-data curve
            elif isinstance(value, list) and all(isinstance(v, str) for v in value):
                rec[key] = ", ".join(value)  # a designator list
            else:
                raise InputError("not a value", path=path, row=row, column=f"alternate.{key}",
                                 text=str(value), expected="a text, a number or true/false")
        records.append((row, rec))
    return alternates_from_records(records, path=path)


def _alternate_parts(alt: Alternate) -> Any:
    """The alternate's own parts-data entry (``bomcheck.parse.parts.PartsData``), or None."""
    if not alt.parts_cells:
        return None
    from bomcheck.parse.parts import parts_from_table

    frame = pd.DataFrame({"mpn": [alt.mpn], **{k: [v] for k, v in alt.parts_cells.items()}})
    return parts_from_table(frame, [alt.row or 0], path=alt.path or "command line")


def _merge_parts(base: Any, extra: Any) -> Any:
    """Parts data with ``extra``'s entries laid over ``base``'s, field by field."""
    if extra is None:
        return base
    if base is None:
        return extra
    from bomcheck.parse.parts import PartsData

    values = extra.values.combine_first(base.values)
    curves = {}
    for name in sorted(set(base.curves) | set(extra.curves)):
        curves[name] = {**base.curves.get(name, {}), **extra.curves.get(name, {})}
    return PartsData(path=f"{base.path}, {extra.path}", sha256=base.sha256, values=values,
                     curves=curves, warnings=base.warnings + extra.warnings)


# --------------------------------------------------------------------------------------------
# The audit's stages on a table of placements.

@dataclass(frozen=True)
class Stages:
    """What the audit's stages need beyond the table: the rule set, the parts data and the
    design's groups (banks, series stacks)."""

    ruleset: Any
    parts: Any = None
    groups: Mapping[str, Any] | None = None

    @classmethod
    def for_ruleset(cls, ruleset: Any, *, parts: Any = None,
                    groups: Mapping[str, Any] | None = None) -> Stages:
        """Stages for ``ruleset`` (``audit.evaluate_table`` derives its stress data)."""
        return cls(ruleset, parts, groups)


_STAGE_PARTS: Any = object()  # "the stages' own parts data" (None means no parts data)


def evaluate(table: pd.DataFrame, stages: Stages, *, parts: Any = _STAGE_PARTS
             ) -> tuple[pd.DataFrame, pd.DataFrame]:
    """Run the audit's stages on ``table`` (placements with spec and condition columns):
    ``stresses.compute``, ``circuit.apply``, ``engine.evaluate`` and the audit's own verdicts,
    as ``bomcheck.pipeline.audit.run_audit`` calls them. Returns (table with metrics and ``status``,
    verdicts). ``parts`` overrides the stages' parts data."""
    from bomcheck.pipeline.audit import evaluate_table

    part_data = stages.parts if parts is _STAGE_PARTS else parts
    # BOM-line findings are the same for both parts, so none are passed.
    done = evaluate_table(table, stages.ruleset, parts=part_data, groups=stages.groups)
    return done.table, done.verdicts


def placement_table(placements: pd.DataFrame, design: Any) -> pd.DataFrame:
    """Fitted placements joined to their design-sheet conditions, as the audit builds its table."""
    fitted = placements[placements["fitted"].astype(bool)].reset_index(drop=True)
    if design is not None:
        conditions = design.for_placements(fitted["refdes"]).reset_index(drop=True)
    else:
        conditions = pd.DataFrame({"condition_source": ["none"] * len(fitted)})
    return pd.concat([fitted, conditions.drop(columns=[c for c in conditions if c in fitted])],
                     axis=1)


def with_spec(table: pd.DataFrame, rows: np.ndarray, values: Mapping[str, Any]) -> pd.DataFrame:
    """``table`` with the columns of ``values`` set to those values on ``rows`` (positions)."""
    out = table.copy()
    n = len(out)
    for col, v in values.items():
        if col in _FLOAT_FIELDS:
            arr = (pd.to_numeric(out[col], errors="coerce").to_numpy(dtype=float, copy=True)
                   if col in out else np.full(n, np.nan))
            arr[rows] = np.nan if v is None else float(v)
            out[col] = arr
        elif col == "is_capacitor":
            arr = (out[col].to_numpy(dtype=bool, copy=True) if col in out
                   else np.zeros(n, dtype=bool))
            arr[rows] = bool(v)
            out[col] = arr
        else:
            arr = (out[col].to_numpy(dtype=object, copy=True) if col in out
                   else np.full(n, None, dtype=object))
            fill = np.empty(len(rows), dtype=object)
            fill.fill(v)  # one object per cell: a tuple (warnings) must not spread over cells
            arr[rows] = fill
            out[col] = pd.Series(arr, index=out.index, dtype=object)
    return out


def _empty_spec() -> dict:
    spec: dict[str, Any] = dict.fromkeys(SPEC_COLUMNS)
    spec.update(is_capacitor=False, warnings=(), unread=())
    return spec


# --------------------------------------------------------------------------------------------
# Finding the original's placements.

def match_original(alt: Alternate, placements: pd.DataFrame) -> tuple[str, np.ndarray]:
    """(how it matched, positions in ``placements``) of the part ``alt.original`` names: a
    designator list, an MPN or the text of a BOM line (value, description or joined cells).

    Raises ``InputError`` (with the alternates file's row) when nothing matches.
    """
    from bomcheck.parse.refdes import expand, is_designator

    key = alt.original.strip()
    refdes = placements["refdes"].astype(str).str.upper().to_numpy(dtype=object)
    tried = [alt.original_kind] if alt.original_kind else list(_MATCH_KINDS)
    missing: list[str] = []
    for kind in tried:
        if kind == "refdes":
            try:
                items = [i.upper() for i in expand(key)]
            except InputError:
                items = []
            if items and all(is_designator(i) for i in items):
                known = set(refdes.tolist())
                missing = [i for i in items if i not in known]
                if not missing:
                    return kind, np.flatnonzero(np.isin(refdes, items))
        elif kind == "mpn" and "mpn" in placements:
            mpn = placements["mpn"].astype(object).where(placements["mpn"].notna(), "")
            hit = np.flatnonzero((mpn.astype(str).str.strip().str.upper() == key.upper())
                                 .to_numpy() & bool(key))
            if hit.size:
                return kind, hit
        elif kind == "text":
            wanted = _norm_text(key)
            hit = np.zeros(len(placements), dtype=bool)
            for col in ("text", "description", "value_text"):
                if col in placements:
                    col_text = placements[col].astype(object).where(placements[col].notna(), "")
                    codes, uniq = pd.factorize(col_text.to_numpy(dtype=object))
                    same = np.array([_norm_text(u) == wanted for u in uniq] + [False])
                    hit |= same[codes]
            if hit.any():
                return kind, np.flatnonzero(hit)
    if missing:
        raise InputError(f"designators not in the BOM: {', '.join(missing)}", path=alt.path,
                         row=alt.row, column="original", text=alt.original,
                         expected="designators of the BOM's capacitor placements")
    raise InputError("the original matches no capacitor placement of the BOM", path=alt.path,
                     row=alt.row, column="original", text=alt.original,
                     expected="an MPN, a designator list or the text of a BOM line")


def _group_mates(base: pd.DataFrame, replaced: np.ndarray, groups) -> np.ndarray:
    """Positions of the fitted members of banks and series stacks that hold a replaced
    placement: the swap can change their stresses too."""
    if not groups or not len(replaced):
        return np.zeros(0, dtype=np.int64)
    keys = base["refdes"].astype(str).str.strip().str.upper().to_numpy(dtype=object)
    mine = set(keys[replaced].tolist())
    mates: set[str] = set()
    for g in groups.values():
        members = {str(m).strip().upper() for m in g.members}
        if g.kind in ("bank", "series") and members & mine:
            mates |= members
    hit = np.flatnonzero(np.isin(keys, list(mates - mine)))
    return hit.astype(np.int64)


# --------------------------------------------------------------------------------------------
# The check.

def check_alternates(base: pd.DataFrame, placements: pd.DataFrame,
                     requests: Sequence[tuple[Alternate, str, np.ndarray]], stages: Stages,
                     options: SubstituteOptions = SubstituteOptions()
                     ) -> tuple[AlternateResult, ...]:
    """Check each alternate in every fitted placement of its original.

    ``base`` is the audit's pre-stress table (``placement_table``); ``placements`` every
    placement the BOM gave (fitted or not, for the original's not-fitted designators and for
    alternates named only by an MPN the BOM uses elsewhere); each request is (alternate, how the
    original matched, positions of the original in ``placements``).
    """
    base_keys = base["refdes"].astype(str).to_numpy(dtype=object)
    position = {r: i for i, r in enumerate(base_keys.tolist())}
    originals: dict[tuple[int, ...], tuple] = {}
    out = []
    for alt, match, hits in requests:
        refs = placements["refdes"].astype(str).to_numpy(dtype=object)[hits]
        fitted_mask = placements["fitted"].astype(bool).to_numpy()[hits]
        replaced = np.array(sorted({position[r] for r in refs[fitted_mask] if r in position}),
                            dtype=np.int64)
        not_fitted = tuple(dict.fromkeys(refs[~fitted_mask].tolist()))
        subset = np.union1d(replaced, _group_mates(base, replaced, stages.groups))
        key = tuple(subset.tolist())
        if key not in originals:
            originals[key] = evaluate(base.iloc[subset], stages) if len(subset) else None
        spec, text, value_text, desc, source = _proposed_spec(alt, placements)
        out.append(_check_one(alt, match, base, subset, replaced, not_fitted, originals[key],
                              spec, text, value_text, desc, source, stages, options))
    return tuple(out)


def _proposed_spec(alt: Alternate, placements: pd.DataFrame) -> tuple[dict, str, str, str, str]:
    """The alternate's spec: parsed from its cells, else from a BOM line with its MPN."""
    if alt.cells:
        spec, text, value_text, desc = spec_from_cells(alt.cells)
        return spec, text, value_text, desc, "alternate text"
    if alt.mpn and "mpn" in placements:
        mpn = placements["mpn"].astype(object).where(placements["mpn"].notna(), "")
        hit = np.flatnonzero((mpn.astype(str).str.strip().str.upper()
                              == alt.mpn.strip().upper()).to_numpy())
        if hit.size:
            rec = placements.iloc[int(hit[0])]
            spec = {k: (None if not _given(rec.get(k)) and k in _FLOAT_FIELDS else rec.get(k))
                    for k in SPEC_COLUMNS}
            return (spec, str(rec.get("text", "")), str(rec.get("value_text", "")),
                    str(rec.get("description", "")), f"BOM row {int(rec['row'])} (same MPN)")
    return _empty_spec(), "", "", "", "MPN only (no text)"


def _check_one(alt: Alternate, match: str, base: pd.DataFrame, subset: np.ndarray,
               replaced: np.ndarray, not_fitted: tuple[str, ...],
               original: tuple[pd.DataFrame, pd.DataFrame] | None, spec: dict,
               text: str, value_text: str, desc: str, source: str, stages: Stages,
               options: SubstituteOptions) -> AlternateResult:
    original_text = str(base["text"].iat[int(replaced[0])]) if len(replaced) else ""
    base_refdes = base["refdes"].astype(str).to_numpy(dtype=object)
    refdes = tuple(base_refdes[replaced].tolist())
    proposed_view = _spec_view(spec)
    if original is None:
        issue = Issue("review", "placements", "placements", not_fitted,
                      "the original has no fitted placement to check the alternate in")
        return AlternateResult(alt, match, (), not_fitted, original_text, text, source, {},
                               proposed_view, "review", (issue,), (), ())
    o_table, o_verdicts = original
    local = np.searchsorted(subset, replaced)
    values = {**spec, "text": text, "value_text": value_text, "description": desc,
              "mpn": alt.mpn, "manufacturer": alt.manufacturer}
    alt_input = with_spec(base.iloc[subset].reset_index(drop=True), local, values)
    parts = _merge_parts(stages.parts, _alternate_parts(alt))
    a_table, a_verdicts = evaluate(alt_input, stages, parts=parts)

    is_replaced = np.zeros(len(subset), dtype=bool)
    is_replaced[local] = True
    diffs = _differences(o_table, a_table, local, alt, options)
    pairs = _pair_verdicts(o_verdicts, a_verdicts, stages.ruleset)
    checks = _placement_checks(o_table, a_table, pairs, is_replaced)
    issues = _verdict_issues(a_table, pairs, is_replaced, diffs, options)
    issues += [Issue(d.severity, "difference", d.field, d.refdes, d.text) for d in diffs]
    reasons = _merge_issues(issues)
    severities = {i.severity for i in reasons}
    verdict = ("rejected" if "reject" in severities else
               "review" if "review" in severities else "drop-in")
    original_view = _spec_view(o_table.iloc[int(local[0])].to_dict())
    proposed_view = _spec_view(a_table.iloc[int(local[0])].to_dict())
    return AlternateResult(alt, match, refdes, not_fitted, original_text, text, source,
                           original_view, proposed_view, verdict, reasons, tuple(diffs), checks)


def _spec_view(rec: Mapping[str, Any]) -> dict:
    """The spec fields of a table row (after the parts data), JSON-ready."""
    out = {}
    for k in SPEC_COLUMNS:
        v = rec.get(k)
        if isinstance(v, tuple):
            v = list(v)
        elif isinstance(v, np.generic):
            v = v.item()
        if isinstance(v, float) and math.isnan(v):
            v = None
        out[k] = v if v is not pd.NA else None
    return out


def _pair_verdicts(o: pd.DataFrame, a: pd.DataFrame, ruleset) -> pd.DataFrame:
    """One row per (placement, rule) either part has: both sides' status, value, limit, margin,
    message, the rule's metric and check kind, and whether the alternate's verdict is worse."""
    cols = ["pidx", "rule_id", "status", "value", "limit", "warn_limit", "margin", "message"]
    o = o.reindex(columns=cols)
    a = a.reindex(columns=cols)
    m = o.merge(a, on=["pidx", "rule_id"], how="outer", suffixes=("_o", "_a"))
    m = m.sort_values(["pidx", "rule_id"], kind="stable").reset_index(drop=True)
    metric = {r.id: r.metric for r in ruleset.rules}
    check = {r.id: r.check for r in ruleset.rules}
    m["metric"] = m["rule_id"].map(metric)
    m["check"] = m["rule_id"].map(check)
    rank_o = m["status_o"].map(_RANK)
    rank_a = m["status_a"].map(_RANK)
    # A rule only one part has (another technology's rule set) is compared with the original's
    # worst verdict on the same stress: IND-POL-REV no data is no worse than IND-TAN-REV no data.
    topic = m["metric"].where(m["metric"].notna(), m["rule_id"])
    rank_topic = rank_o.groupby([m["pidx"], topic]).transform("max")
    base = rank_o.fillna(rank_topic)
    bad = m["status_a"].isin(["warn", "nodata", "fail"])
    m["worse"] = (bad & (base.isna() | (rank_a > base))).to_numpy()
    return m


def _side(rec: Mapping[str, Any], suffix: str) -> dict | None:
    status = rec.get(f"status{suffix}")
    if not isinstance(status, str):
        return None
    return {"status": status, "value": _plain(rec.get(f"value{suffix}")),
            "limit": _plain(rec.get(f"limit{suffix}")),
            "margin": _plain(rec.get(f"margin{suffix}")),
            "message": rec.get(f"message{suffix}")}


def _governing(v: pd.DataFrame) -> dict[int, dict]:
    """Per placement, the verdict that sets its status: the worst, then the smallest margin
    relative to the limit (as ``Report.governing``)."""
    if not len(v):
        return {}
    rank = v["status"].map(_RANK)
    rel = v["margin"] / v["limit"].abs().where(v["limit"] != 0)
    key = v.assign(_rank=-rank, _rel=rel).sort_values(["pidx", "_rank", "_rel"],
                                                       na_position="last", kind="stable")
    first = key.drop_duplicates("pidx")
    return {int(r["pidx"]): {"rule": r["rule_id"], "status": r["status"],
                             "value": _plain(r["value"]), "limit": _plain(r["limit"]),
                             "margin": _plain(r["margin"]), "message": r["message"]}
            for r in first.to_dict("records")}


def _placement_checks(o_table: pd.DataFrame, a_table: pd.DataFrame, pairs: pd.DataFrame,
                      is_replaced: np.ndarray) -> tuple[PlacementCheck, ...]:
    o_side = pairs.rename(columns=lambda c: c[:-2] if c.endswith("_o") else c)
    a_side = pairs.rename(columns=lambda c: c[:-2] if c.endswith("_a") else c)
    gov_o = _governing(o_side.dropna(subset=["status"]))
    gov_a = _governing(a_side.dropna(subset=["status"]))
    by_pidx: dict[int, list[VerdictPair]] = {}
    worse_at: dict[int, bool] = {}
    for rec in pairs.to_dict("records"):
        p = int(rec["pidx"])
        metric = rec["metric"] if isinstance(rec["metric"], str) else None
        by_pidx.setdefault(p, []).append(VerdictPair(str(rec["rule_id"]), metric,
                                                     _side(rec, "_o"), _side(rec, "_a"),
                                                     bool(rec["worse"])))
        worse_at[p] = worse_at.get(p, False) or bool(rec["worse"])
    out = []
    a_recs = a_table.to_dict("records")
    for p, rec in enumerate(a_recs):
        row = rec.get("row")
        worse = worse_at.get(p, False) or (_RANK[a_table["status"].iat[p]]
                                           > _RANK[o_table["status"].iat[p]])
        out.append(PlacementCheck(
            refdes=str(rec["refdes"]), row=int(row) if _given(row) and int(row) > 0 else None,
            role="replaced" if is_replaced[p] else "group", conditions=conditions_text(rec),
            original_status=str(o_table["status"].iat[p]),
            proposed_status=str(a_table["status"].iat[p]),
            original_governing=gov_o.get(p), proposed_governing=gov_a.get(p),
            verdicts=tuple(by_pidx.get(p, ())), worse=bool(worse)))
    return tuple(out)


# --------------------------------------------------------------------------------------------
# Reasons from the verdicts.

def _limit_words(value: float, limit: float, warn: float, check: str, unit: str,
                 percent: bool) -> str:
    """``, above the 70 % limit`` / ``, above the 60 % warn level`` / "" when inside both."""
    over = (lambda x, lim: x > lim) if check != "min" else (lambda x, lim: x < lim)
    side = "above" if check != "min" else "below"
    if not math.isnan(limit) and over(value, limit):
        return f", {side} the {_fq(limit, unit, percent)} limit"
    if not math.isnan(warn) and over(value, warn):
        return f", {side} the {_fq(warn, unit, percent)} warn level"
    return ""


def _phrase(metric: str | None, rec: Mapping[str, Any], v: Mapping[str, Any], n: int) -> str:
    """The verdict in words purchasing reads; ``n`` placements share it."""
    many = n > 1
    the = "the placements" if many else "the placement"
    status = v["status_a"]
    message = str(v.get("message_a") or "")
    body = message.split(": ", 1)[1] if ": " in message else message
    if status == "nodata":
        m = re.search(r"missing (.*?)(?:; |$)", body)
        return f"cannot be checked, missing {m.group(1)}" if m else f"cannot be checked: {body}"
    value, limit = _num(v.get("value_a")), _num(v.get("limit_a"))
    warn, check = _num(v.get("warn_limit_a")), str(v.get("check") or "max")
    unit, percent = ("", False)
    if metric in METRICS:
        unit, percent = METRICS[metric].unit, METRICS[metric].percent
    beyond = _limit_words(value, limit, warn, check, unit, percent)
    if metric == "voltage_ratio":
        if rec.get("voltage_kind") == "ac":
            seen, rating = f"{_fq(rec.get('v_ac_rms'), 'V')} rms", " AC"
        else:
            seen, rating = f"{_fq(rec.get('applied_peak_v'), 'V')} peak", ""
        return (f"rated {_fq(rec.get('voltage_v'), 'V')}{rating}, {the} "
                f"{'see' if many else 'sees'} {seen} = {_fq(value, '', True)} of the rating"
                f"{beyond}")
    if metric == "transient_ratio":
        return (f"rated {_fq(rec.get('voltage_v'), 'V')}, {the} {'see' if many else 'sees'} "
                f"transients of {_fq(rec.get('transient_peak_v'), 'V')} = "
                f"{_fq(value, '', True)}{beyond}")
    if metric == "reverse_ratio":
        return (f"{_fq(rec.get('reverse_peak_v'), 'V')} reverse on a "
                f"{_fq(rec.get('voltage_v'), 'V')} rating = {_fq(value, '', True)}{beyond}")
    if metric == "temp_margin_c":
        t_max, t_op = _num(rec.get("temp_max_used_c")), _num(rec.get("t_operating_c"))
        text = f"rated {_fq(t_max, 'degC')}, {the} {'run' if many else 'runs'} at " \
               f"{_fq(t_op, 'degC')}"
        if not (t_op > t_max) and not math.isnan(limit):
            text += f", closer to the rating than the {_fq(limit, 'degC')} the rule keeps"
        return text
    if metric == "t_operating_c":
        return (f"{the} {'run' if many else 'runs'} at {_fq(value, 'degC')}"
                f"{beyond}")
    if metric in ("c_margin", "bank_c_margin"):
        worst = rec.get("c_worst_f") if metric == "c_margin" else rec.get("bank_c_worst_f")
        need = rec.get("c_min_f") if metric == "c_margin" else rec.get("bank_c_min_f")
        return f"worst case {_fq(worst, 'F')} against {_fq(need, 'F')} required{beyond}"
    return body


def _related(metric: str | None, refdes: str, diffs_at: Mapping[str, list[Difference]]
             ) -> tuple[str, ...]:
    """The short forms of the spec differences behind a verdict on ``metric`` (one per group of
    alternatives in ``_RELATED``: ``X5R replacing X7R`` rather than also the rated maximum)."""
    mine = {d.field: d.short for d in diffs_at.get(refdes, [])}
    out = []
    for choice in _RELATED.get(metric or "", ()):
        found = next((mine[f] for f in choice if f in mine), None)
        if found:
            out.append(found)
    return tuple(out)


def _verdict_issues(a_table: pd.DataFrame, pairs: pd.DataFrame, is_replaced: np.ndarray,
                    diffs: Sequence[Difference], options: SubstituteOptions) -> list[Issue]:
    """Issues from the alternate's verdicts: failures (reject), warnings and no-data that appear
    (review), and margins that shrink past the options' amounts (review). Placements and rules
    that read alike are joined into one sentence."""
    refdes = a_table["refdes"].astype(str).to_numpy(dtype=object)
    diffs_at: dict[str, list[Difference]] = {}
    for d in diffs:
        for r in d.refdes:
            diffs_at.setdefault(r, []).append(d)
    recs = a_table.to_dict("records")
    # key -> [placements, rule ids, first verdict]
    groups: dict[tuple, list] = {}
    flagged: set[tuple[int, str | None]] = set()

    def add(severity: str, kind: str, topic: str, p: int, key_text: str, bits: tuple[str, ...],
            rule_id: str, v: dict) -> None:
        entry = groups.setdefault((severity, kind, topic, key_text, bits), [[], [], v])
        if p not in entry[0]:
            entry[0].append(p)
        if rule_id and rule_id not in entry[1]:
            entry[1].append(rule_id)

    m = pairs
    with np.errstate(invalid="ignore"):
        got_worse = m["worse"].to_numpy() | (m["margin_a"] < m["margin_o"] - 1e-12).to_numpy()
    # Per placement, stress and kind of issue: the verdicts behind it, the one furthest past
    # its limit speaking for all (one sentence naming every rule, not one per rule).
    picked: dict[tuple, list[dict]] = {}
    for i, v in enumerate(m.to_dict("records")):
        p = int(v["pidx"])
        status = v["status_a"]
        metric = v["metric"] if isinstance(v["metric"], str) else None
        if status == "fail" and (is_replaced[p] or got_worse[i]):
            picked.setdefault(("reject", status, p, metric or v["rule_id"]), []).append(v)
        elif v["worse"] and status in ("warn", "nodata"):
            picked.setdefault(("review", status, p, metric or v["rule_id"]), []).append(v)
        elif status == "nodata" or v["status_o"] == "nodata":
            # No data on either side leaves the comparison open: never a drop-in.
            key = "nodata" if status == "nodata" else "nodata-original"
            picked.setdefault(("review", key, p, metric or v["rule_id"]), []).append(v)
    for (severity, status, p, topic), vs in picked.items():
        vs = sorted(vs, key=lambda v: (math.isnan(_num(v["margin_a"])), _num(v["margin_a"])))
        v = vs[0]
        metric = v["metric"] if isinstance(v["metric"], str) else None
        bits = _related(metric, refdes[p], diffs_at)
        if severity == "reject" and not is_replaced[p]:
            bits += ("shares a bank or stack with the alternate",)
        elif severity == "reject" and any(x["status_o"] == "fail" for x in vs):
            bits += ("fails with the original part too",)
        if severity == "review":
            v = {**v, "_prefix": {"warn": "a warning appears: ",
                                  "nodata-original": "the original cannot be checked, so the "
                                                     "two cannot be compared: "}.get(status, "")}
        prefix = v.get("_prefix", "")
        for x in vs:
            add(severity, "verdict", topic, p, prefix + _phrase(metric, recs[p], v, 1), bits,
                x["rule_id"], v)
        flagged.add((p, metric))

    # Margins, per placement and metric: the closest approach to a limit in force.
    ok = m.dropna(subset=["metric"])
    if len(ok):
        def closest(side: str) -> pd.DataFrame:
            cols = [f"margin_{side}", f"value_{side}", f"limit_{side}", f"status_{side}"]
            part = ok.dropna(subset=[f"margin_{side}"]).sort_values(f"margin_{side}",
                                                                    kind="stable")
            return part.drop_duplicates(["pidx", "metric"]).set_index(["pidx", "metric"])[cols]

        both = closest("o").join(closest("a"), how="inner")
        for (p, metric), r in both.iterrows():
            meta = METRICS.get(metric)
            if meta is None or (int(p), metric) in flagged or r["status_a"] == "fail":
                continue
            drop = r["margin_o"] - r["margin_a"]
            if meta.percent:
                over, amount = drop * 100.0 > options.margin_drop_pp, f"{drop * 100.0:.3g}"
            elif meta.quantity in ("temperature", "temperature_delta"):
                over, amount = drop > options.temp_margin_drop_c, f"{drop:.3g}"
            else:
                continue
            if over:
                text = _margin_phrase(metric, r, recs[int(p)], amount)
                add("review", "margin", metric, int(p), text,
                    _related(metric, refdes[int(p)], diffs_at), "", {"_text": text})

    out = []
    for (severity, kind, topic, _, bits), (ps, rule_ids, v) in groups.items():
        if "_text" in v:
            text = v["_text"]
        else:
            metric = v["metric"] if isinstance(v["metric"], str) else None
            text = v.get("_prefix", "") + _phrase(metric, recs[ps[0]], v, len(ps))
        inside = [*bits, *([", ".join(rule_ids)] if rule_ids else [])]
        if inside:
            text += f" ({'; '.join(dict.fromkeys(inside))})"
        out.append(Issue(severity, kind, topic, tuple(dict.fromkeys(refdes[ps].tolist())),
                         text))
    return out


def _margin_phrase(metric: str, r: Mapping[str, Any], rec: Mapping[str, Any],
                   amount: str) -> str:
    meta = METRICS[metric]
    if meta.percent:
        label = _MARGIN_LABEL.get(metric, metric.replace("_", " "))
        v_o, v_a = _fq(r["value_o"], "", True), _fq(r["value_a"], "", True)
        l_o, l_a = _fq(r["limit_o"], "", True), _fq(r["limit_a"], "", True)
        moved = f"goes from {v_o} to {v_a}" if v_o != v_a else f"stays at {v_a}"
        limit = f"the {l_a} limit" if l_o == l_a else f"its limit ({l_a} instead of {l_o})"
        return f"the {label} {moved}, {amount} percentage points closer to {limit}"
    where = f" at {_fq(rec.get('t_operating_c'), 'degC')}" if metric == "temp_margin_c" else ""
    return (f"the temperature margin falls from {_fq(r['margin_o'], 'degC')} to "
            f"{_fq(r['margin_a'], 'degC')}{where}")


def _merge_issues(issues: Sequence[Issue]) -> tuple[Issue, ...]:
    """Issues with the same severity and text joined (their designators merged), worst first."""
    merged: dict[tuple[str, str], Issue] = {}
    for i in issues:
        key = (i.severity, i.text)
        if key in merged:
            old = merged[key]
            merged[key] = Issue(old.severity, old.kind, old.topic,
                                tuple(dict.fromkeys(old.refdes + i.refdes)), old.text)
        else:
            merged[key] = i
    order = {s: k for k, s in enumerate(SEVERITIES)}
    return tuple(sorted(merged.values(), key=lambda i: order[i.severity]))


# --------------------------------------------------------------------------------------------
# Differences that matter (spec against spec, after the parts data).

_SAFETY = re.compile(r"^([XY])(\d)$")


def _safety_difference(o: str, a: str) -> tuple[str, str, str] | None:
    """(severity, text, short) for a changed safety class, or None when it is no change."""
    if o == a:
        return None
    if not a:
        return ("reject", f"no safety class (the original is an {o} safety capacitor, IEC "
                "60384-14)", f"loses {o}")
    mo, ma = _SAFETY.match(o), _SAFETY.match(a)
    if mo and ma and mo.group(1) == ma.group(1) and int(ma.group(2)) <= int(mo.group(2)):
        return ("note", f"safety class {a} replacing {o} (same series, equal or higher "
                "subclass)", f"{a} replacing {o}")
    if mo and ma and mo.group(1) == "X" and ma.group(1) == "Y":
        return ("review", f"safety class {a} replacing {o} (a line-to-earth class across the "
                "line is common practice; confirm it with the product's safety approval)",
                f"{a} replacing {o}")
    return ("reject", f"safety class {a} replacing {o}, not an equal or higher class",
            f"{a} replacing {o}")


def _case(package: Any) -> str:
    """``case 0603``; ``case D`` stays as the parser wrote it."""
    text = str(package or "")
    return text if text.casefold().startswith("case") else f"case {text}"


def _tol_text(minus: float, plus: float, absolute: float) -> str:
    if not math.isnan(minus) and not math.isnan(plus):
        return (f"+/-{minus:g} %" if minus == plus else f"+{plus:g}/-{minus:g} %")
    if not math.isnan(absolute):
        return f"+/-{_fq(absolute, 'F')}"
    return "?"


def _flag_value(value: Any) -> bool | None:
    """A yes/no spec field as True, False or None (numpy booleans included)."""
    if isinstance(value, (bool, np.bool_)):
        return bool(value)
    return None


def _spec_differences(o: Mapping[str, Any], a: Mapping[str, Any], footprint_checked: bool
                      ) -> list[tuple[str, str, str, str, str, str]]:
    """(field, severity, original, proposed, text, short) for one original spec and the
    alternate's."""
    out: list[tuple[str, str, str, str, str, str]] = []

    def add(fld: str, severity: str, ov: str, av: str, text: str, short: str = "") -> None:
        out.append((fld, severity, ov, av, text, short or text))

    tech_o, tech_a = o.get("technology") or "", a.get("technology") or ""
    pol_o, pol_a = _flag_value(o.get("polarized")), _flag_value(a.get("polarized"))
    # Polarity and technology.
    if pol_a is True and pol_o is not True:
        add("polarity", "reject" if pol_o is False else "review", tech_o or "?", tech_a,
            f"polarized ({tech_a or 'polarized part'}) replacing a "
            f"{'non-polarized' if pol_o is False else 'part of unknown polarity'} "
            f"({tech_o or 'technology not known'}) part", f"polarized {tech_a}")
    if tech_o and tech_a and tech_o != tech_a:
        add("technology", "review", tech_o, tech_a,
            f"{tech_a} replacing {tech_o}, a different technology (ESR, ripple rating, "
            "leakage and loop stability differ)", f"{tech_a} replacing {tech_o}")
    elif tech_o and not tech_a:
        add("technology", "review", tech_o, "?",
            "technology not known for the alternate (give its description)",
            "technology not known")
    film_o, film_a = o.get("film_material") or "", a.get("film_material") or ""
    if tech_o == tech_a == "film" and film_o and film_a and film_o != film_a:
        add("film_material", "review", film_o, film_a,
            f"{film_a} film replacing {film_o} (dielectric loss and pulse rating differ)",
            f"{film_a} replacing {film_o}")

    # Ratings.
    v_o, v_a = _num(o.get("voltage_v")), _num(a.get("voltage_v"))
    ac_o, ac_a = o.get("voltage_kind") == "ac", a.get("voltage_kind") == "ac"
    if ac_o and not ac_a:
        add("ac_rating", "reject", f"{_fq(v_o, 'V')} AC", _fq(v_a, "V"),
            f"no AC rating (the original is rated {_fq(v_o, 'V')} AC)", "no AC rating")
    if not math.isnan(v_o) and math.isnan(v_a):
        add("rated_voltage", "review", _fq(v_o, "V"), "?",
            "rated voltage not known for the alternate (give it in the alternates file)",
            "rated voltage not known")
    elif not math.isnan(v_o) and not (math.isclose(v_o, v_a, rel_tol=1e-6) and ac_o == ac_a):
        shown_o = _fq(v_o, "V") + (" AC" if ac_o else "")
        shown_a = _fq(v_a, "V") + (" AC" if ac_a else "")
        add("rated_voltage", "note", shown_o, shown_a, f"rated {shown_a} instead of {shown_o}")
    safety = _safety_difference(o.get("safety_class") or "", a.get("safety_class") or "")
    if safety and o.get("safety_class"):
        add("safety_class", safety[0], o.get("safety_class") or "", a.get("safety_class") or "",
            safety[1], safety[2])
    if _flag_value(o.get("emi_filter")) is True and _flag_value(a.get("emi_filter")) is not True:
        add("emi_filter", "reject", "feedthrough/EMI filter", "not a filter part",
            "not a feedthrough/EMI filter part (the original is one)", "not an EMI filter")

    # Temperature range.
    tmax_o, tmax_a = _num(o.get("temp_max_c")), _num(a.get("temp_max_c"))
    if not math.isnan(tmax_o) and not math.isnan(tmax_a) and tmax_o != tmax_a:
        add("temp_max", "note", _fq(tmax_o, "degC"), _fq(tmax_a, "degC"),
            f"rated to {_fq(tmax_a, 'degC')} instead of {_fq(tmax_o, 'degC')}")
    elif not math.isnan(tmax_o) and math.isnan(tmax_a):
        add("temp_max", "note", _fq(tmax_o, "degC"), "?",
            "rated maximum temperature not given for the alternate (the rule set's typical "
            "value is used)", "maximum temperature not given")
    tmin_o, tmin_a = _num(o.get("temp_min_c")), _num(a.get("temp_min_c"))
    if not math.isnan(tmin_o) and not math.isnan(tmin_a) and tmin_a > tmin_o:
        add("temp_min", "review", _fq(tmin_o, "degC"), _fq(tmin_a, "degC"),
            f"rated only down to {_fq(tmin_a, 'degC')} instead of {_fq(tmin_o, 'degC')} (the "
            "design sheet gives no minimum temperature to check it against)",
            f"rated down to {_fq(tmin_a, 'degC')}")

    # Dielectric.
    code_o, code_a = o.get("dielectric") or "", a.get("dielectric") or ""
    cls_o, cls_a = _num(o.get("dielectric_class")), _num(a.get("dielectric_class"))
    if cls_o == 1 and cls_a in (2, 3):
        add("dielectric", "review", f"{code_o} (class I)", f"{code_a} (class {int(cls_a)})",
            f"class {'II' if cls_a == 2 else 'III'} dielectric {code_a} replacing class I "
            f"{code_o} (capacitance changes with temperature, DC bias and age; EIA-198)",
            f"{code_a} replacing {code_o}")
    elif cls_o == 2 and cls_a == 3:
        add("dielectric", "review", f"{code_o} (class II)", f"{code_a} (class III)",
            f"class III dielectric {code_a} replacing class II {code_o} (a much larger "
            "capacitance change over temperature; EIA-198)", f"{code_a} replacing {code_o}")
    elif code_o and code_a and code_o != code_a:
        add("dielectric", "note", code_o, code_a, f"{code_a} replacing {code_o}")
    elif code_o and not code_a and tech_a in ("", "ceramic"):
        add("dielectric", "review", code_o, "?",
            "dielectric not given for the alternate", "dielectric not given")

    # Tolerance and nominal capacitance.
    tol_o = (_num(o.get("tol_minus_pct")), _num(o.get("tol_plus_pct")), _num(o.get("tol_abs_f")))
    tol_a = (_num(a.get("tol_minus_pct")), _num(a.get("tol_plus_pct")), _num(a.get("tol_abs_f")))
    t_o, t_a = _tol_text(*tol_o), _tol_text(*tol_a)
    if t_o != "?" and t_o != t_a:
        add("tolerance", "note", t_o, t_a,
            f"tolerance {t_a} instead of {t_o}" if t_a != "?" else
            f"tolerance not given for the alternate (the original is {t_o})",
            f"tolerance {t_a}")
    c_o, c_a = _num(o.get("capacitance_f")), _num(a.get("capacitance_f"))
    if not math.isnan(c_o) and math.isnan(c_a):
        add("capacitance", "review", _fq(c_o, "F"), "?",
            "capacitance not known for the alternate", "capacitance not known")
    elif not math.isnan(c_o) and not math.isclose(c_o, c_a, rel_tol=1e-6):
        add("capacitance", "review", _fq(c_o, "F"), _fq(c_a, "F"),
            f"{_fq(c_a, 'F')} instead of {_fq(c_o, 'F')}, a different nominal value",
            f"{_fq(c_a, 'F')} instead of {_fq(c_o, 'F')}")

    # Package / footprint.
    p_o, p_a = _norm_package(o.get("package")), _norm_package(a.get("package"))
    show_o, show_a = _case(o.get("package")), _case(a.get("package"))
    if p_o and p_a and p_o != p_a:
        if footprint_checked:
            add("package", "note", show_o, show_a,
                f"{show_a} instead of {show_o} (footprint checked)")
        else:
            add("package", "reject", show_o, show_a,
                f"{show_a} instead of {show_o}, a different footprint (mark it "
                "footprint_checked once the layout is confirmed)", show_a)
    elif p_o and not p_a:
        add("package", "note" if footprint_checked else "review", show_o, "?",
            "case size not given for the alternate"
            + (" (footprint checked)" if footprint_checked else ""), "case size not given")
    return out


def _row_codes(columns: Sequence[pd.Series]) -> np.ndarray:
    """One code per row, equal for rows equal in every column (missing values equal)."""
    key = np.zeros(len(columns[0]) if columns else 0, dtype=np.int64)
    for col in columns:
        codes, uniques = pd.factorize(col.to_numpy(dtype=object), use_na_sentinel=False)
        key, _ = pd.factorize(key * (len(uniques) + 1) + codes)
    return key


def _differences(o_table: pd.DataFrame, a_table: pd.DataFrame, local: np.ndarray,
                 alt: Alternate, options: SubstituteOptions) -> list[Difference]:
    """The differences that matter on the replaced placements, each with its designators."""
    o = o_table.iloc[local]
    a = a_table.iloc[local]
    refdes = o["refdes"].astype(str).to_numpy(dtype=object)
    # Spec differences: once per distinct original spec (a BOM line), mapped to its placements.
    codes = _row_codes([o["text"], o["mpn"], a["voltage_v"], a["temp_max_c"],
                        a["capacitance_f"], a["package"]])
    found: dict[tuple, list[str]] = {}
    for k in range(int(codes.max()) + 1 if len(codes) else 0):
        i = int(np.argmax(codes == k))
        for d in _spec_differences(o.iloc[i].to_dict(), a.iloc[i].to_dict(),
                                   alt.footprint_checked):
            found.setdefault(d, []).extend(refdes[codes == k].tolist())
    # Worst-case capacitance after tolerance, temperature, DC bias and aging, per placement.
    cw_o = pd.to_numeric(o["c_worst_f"], errors="coerce").to_numpy(dtype=float)
    cw_a = pd.to_numeric(a["c_worst_f"], errors="coerce").to_numpy(dtype=float)
    b_o = pd.to_numeric(o["c_bias_factor"], errors="coerce").to_numpy(dtype=float)
    b_a = pd.to_numeric(a["c_bias_factor"], errors="coerce").to_numpy(dtype=float)
    with np.errstate(invalid="ignore", divide="ignore"):
        loss = 1.0 - cw_a / cw_o
    for i in np.flatnonzero(np.isfinite(loss) & (loss > 1e-6)):
        severity = "review" if loss[i] * 100.0 > options.margin_drop_pp else "note"
        bias = ""
        if np.isfinite(b_o[i]) and np.isfinite(b_a[i]) and abs(b_o[i] - b_a[i]) > 1e-6:
            bias = (f"; DC bias keeps {_fq(b_a[i], '', True)} instead of "
                    f"{_fq(b_o[i], '', True)}")
        text = (f"worst-case capacitance {_fq(cw_a[i], 'F')} instead of {_fq(cw_o[i], 'F')} "
                f"(after tolerance, temperature, DC bias and aging{bias})")
        d = ("c_worst", severity, _fq(cw_o[i], "F"), _fq(cw_a[i], "F"), text,
             f"worst case {_fq(cw_a[i], 'F')}")
        found.setdefault(d, []).append(refdes[i])
    order = {s: k for k, s in enumerate(SEVERITIES)}
    diffs = [Difference(f, sev, ov, av, text, short, tuple(dict.fromkeys(rs)))
             for (f, sev, ov, av, text, short), rs in found.items()]
    return sorted(diffs, key=lambda d: order[d.severity])


# --------------------------------------------------------------------------------------------
# Running it on files.

def _inputs_and_stages(design_path: str | None, options: SubstituteOptions
                       ) -> tuple[Any, Any, Stages, list[dict]]:
    from bomcheck.parse import design as design_mod
    from bomcheck.parse import parts as parts_mod
    from bomcheck.evaluate import rules

    ruleset = rules.load_rules(options.rules or (rules.DEFAULT_RULESET,)).for_environment(
        options.environment)
    inputs: list[dict] = []
    design = None
    if design_path is not None:
        design = design_mod.read_design(design_path, sheet=options.design_sheet)
        inputs.append({"role": "design", "path": str(design_path), "sha256": design.sha256})
    part_data = (parts_mod.read_parts(options.parts, override=options.parts_override)
                 if options.parts else None)
    if part_data is not None:
        inputs.append({"role": "parts", "path": str(options.parts), "sha256": part_data.sha256})
    stages = Stages.for_ruleset(ruleset, parts=part_data,
                                groups=design.groups if design is not None else None)
    return ruleset, design, stages, inputs


def _result(ruleset: Any, inputs: Sequence[dict], results: Sequence[AlternateResult],
            options: SubstituteOptions) -> SubstituteResult:
    return SubstituteResult(
        tool_version=__version__, rulesets=ruleset_summary(ruleset), inputs=tuple(inputs),
        options={"margin_drop_pp": options.margin_drop_pp,
                 "temp_margin_drop_c": options.temp_margin_drop_c},
        results=tuple(results))


def _sha256(path: str) -> str:
    from bomcheck.read.reader import read_input

    return read_input(str(path), "alternates file")[1]


def run_substitute(bom_path: str, design_path: str | None, alternates: Sequence[Alternate],
                   options: SubstituteOptions = SubstituteOptions(), *,
                   alternates_path: str | None = None) -> SubstituteResult:
    """Check every alternate against the BOM's placements of its original under the design
    sheet's conditions (the library call behind ``bomcheck substitute BOM``)."""
    from bomcheck.parse import importer

    ruleset, design, stages, extra_inputs = _inputs_and_stages(design_path, options)
    imported = importer.read_bom(bom_path, options.import_options or importer.ImportOptions())
    inputs = [{"role": "bom", "path": str(bom_path), "sha256": imported.source.sha256},
              *extra_inputs]
    if alternates_path:
        inputs.append({"role": "alternates", "path": str(alternates_path),
                       "sha256": _sha256(alternates_path)})
    placements = imported.placements
    requests = [(alt, *match_original(alt, placements)) for alt in alternates]
    base = placement_table(placements, design)
    results = check_alternates(base, placements, requests, stages, options)
    return _result(ruleset, inputs, results, options)


def direct_placements(original_text: str, refdes: Sequence[str]) -> pd.DataFrame:
    """Placements of an original given only as text, one per designator (no BOM)."""
    spec, text, value_text, desc = spec_from_cells({"description": original_text})
    n = len(refdes)
    data: dict[str, Any] = {
        "refdes": list(refdes), "row": np.zeros(n, dtype=np.int64),
        "line": np.zeros(n, dtype=np.int64), "fitted": np.ones(n, dtype=bool),
        "not_fitted_reason": [None] * n, "text": [text] * n, "value_text": [value_text] * n,
        "description": [desc] * n, "mpn": [""] * n, "manufacturer": [""] * n,
        "qty": np.full(n, np.nan),
    }
    frame = pd.DataFrame({k: pd.Series(v, dtype=object if isinstance(v, list) else None)
                          for k, v in data.items()})
    return with_spec(frame, np.arange(n), spec)


def run_direct(original_text: str, alternates: Sequence[Alternate], design_path: str | None,
               refdes: Sequence[str], conditions: Mapping[str, str] | None = None,
               options: SubstituteOptions = SubstituteOptions()) -> SubstituteResult:
    """Check alternates for an original given as text, at the designators ``refdes`` under the
    design sheet's conditions and/or ``conditions`` given inline (design-sheet column -> text,
    e.g. ``{"v_dc": "12 V", "t_ambient_c": "85"}``; inline values win)."""
    from bomcheck.parse.design import design_from_table

    ruleset, design, stages, inputs = _inputs_and_stages(design_path, options)
    refdes = [r.strip().upper() for r in refdes if r.strip()] or ["C1"]
    placements = direct_placements(original_text, refdes)
    base = placement_table(placements, design)
    if conditions:
        frame = pd.DataFrame({"refdes": refdes, **{k: [str(v)] * len(refdes)
                                                   for k, v in conditions.items()}})
        try:
            inline = design_from_table(frame, path="command line").for_placements(
                pd.Series(refdes)).reset_index(drop=True)
        except InputError as exc:  # name the condition, not a row of a table nobody wrote
            raise InputError(f"inline condition {exc.column}: {exc.problem}", text=exc.text,
                             expected=exc.expected) from None
        given = [c for c in conditions if c in inline]
        for col in given:
            base[col] = inline[col].to_numpy()
        if design is None:
            for col in ("notes", "group", "design_row", "condition_source"):
                base[col] = inline[col].to_numpy()
        else:
            base["condition_source"] = "row"
    inputs.append({"role": "original", "path": "command line", "sha256": None})
    hits = np.arange(len(refdes))
    requests = [(alt, "direct", hits) for alt in alternates]
    results = check_alternates(base, placements, requests, stages, options)
    return _result(ruleset, inputs, results, options)


# --------------------------------------------------------------------------------------------
# Markdown (for a pull-request comment on a BOM change request).

def _md(text: str) -> str:
    """Input text as literal Markdown: the one escaping function of every Markdown writer."""
    from bomcheck.render.textsafe import md_text

    return md_text(text)


def substitute_markdown(result: SubstituteResult) -> str:
    """A short Markdown summary: one table row per alternate, then each one's reasons."""
    t = result.totals
    lines = ["## bomcheck substitute check", "",
             f"**{result.status}**: {t['alternates']} alternates checked; drop-in "
             f"{t['drop-in']}, review {t['review']}, rejected {t['rejected']}.", "",
             "| Original | Alternate | Placements | Verdict | Reason |",
             "|---|---|---|---|---|"]
    for r in result.results:
        lines.append(f"| {_md(r.alternate.original)} | {_md(r.alternate.label)} | "
                     f"{_md(designator_list(r.refdes))} | {_md(r.verdict)} | {_md(r.summary)} |")
    for r in result.results:
        if r.verdict == "drop-in" and not r.reasons:
            continue
        lines += ["", f"### {_md(r.alternate.label)} for {_md(r.alternate.original)}: "
                      f"{r.verdict}", ""]
        lines += [f"- {_md(i.sentence)}" for i in r.reasons]
    rules = ", ".join(f"{_md(s['name'])} {_md(s['version'])}" for s in result.rulesets)
    lines += ["", f"Rule sets: {rules}.", "", "### Cautions", ""]
    lines += [f"- {_md(c)}" for c in result.cautions]
    lines.append("")
    return "\n".join(lines)

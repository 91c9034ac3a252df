"""Evaluate stage, after the rules: approved deviations turn matching verdicts into "waived".

A waiver names a designator (or a list, range or pattern), one rule id, the reason, who approved
it and the last day it is valid, and optionally the BOM line text it was granted for. It waives
only verdicts of that rule on those designators whose status is warn, nodata or fail; the
original status is kept in the verdict column ``waived_from`` and the reason is added to the
message. Expired waivers, waivers that match nothing and waivers whose BOM text no longer matches
the placement (the part was changed) do not apply; each is reported as a ``WaiverFinding``.

File formats (keys and CSV headers are case-insensitive; ``designator`` may stand for ``refdes``
and ``rule_id`` for ``rule``):

TOML::

    [[waiver]]
    refdes = "C31-C34"            # one designator, a list/range "C1, C3-C5", or a pattern "C1*"
    rule = "IND-CER-V"
    reason = "LDO output; part is qualified at 6.3 V by test report TR-118"
    approved_by = "R. Okafor"
    expires = 2027-06-30          # a TOML date or "YYYY-MM-DD"; valid through that day
    bom_text = "10uF | CAP CER 10UF 6.3V X5R 0603"   # optional

CSV (or TSV, semicolon CSV, XLSX; read by ``bomcheck.read.reader`` like every table): a header row
``refdes,rule,reason,approved_by,expires,bom_text`` (``bom_text`` optional), then one waiver per
line; lines starting with ``#`` are comments.

This module reads files only in ``load_waivers``; ``waive_verdicts`` and ``apply_waivers`` are
pure.
"""

from __future__ import annotations

import dataclasses
import datetime as dt
import fnmatch
import re
from collections.abc import Sequence
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd

from bomcheck.errors import InputError
from bomcheck.frozen import frozen
from bomcheck.parse import refdes as refdes_mod
from bomcheck.read.reader import HeaderNotFound, read_table, read_toml
from bomcheck.status import RANK
from bomcheck.status import STATUS_ORDER

WAIVABLE: tuple[str, ...] = ("warn", "nodata", "fail")
FIELDS: tuple[str, ...] = ("refdes", "rule", "reason", "approved_by", "expires", "bom_text")
REQUIRED: tuple[str, ...] = ("refdes", "rule", "reason", "approved_by", "expires")
ALIASES: dict[str, str] = {"designator": "refdes", "designators": "refdes", "rule_id": "rule"}
FINDING_CODES: tuple[str, ...] = ("applied", "expired", "unused", "bom_changed")
_GLOB = re.compile(r"[*?\[]")
_SHOW = 8  # designators named in one finding message before "and N more"


@frozen(order=True)
class Waiver:
    """One approved deviation from a waiver file (``row``: CSV line or TOML entry number)."""

    row: int
    refdes: str
    rule: str
    reason: str
    approved_by: str
    expires: dt.date
    bom_text: str | None = None


@frozen
class WaiverFile:
    """The waivers of one file, with the file's path and SHA-256 for the report's inputs."""

    path: str
    sha256: str
    waivers: tuple[Waiver, ...]


@frozen(order=True)
class WaiverFinding:
    """What became of one waiver: ``applied``, ``expired``, ``unused`` or ``bom_changed``.

    ``placements`` are the designators concerned (waived, or whose BOM text changed)."""

    row: int
    code: str
    refdes: str
    rule: str
    placements: tuple[str, ...]
    message: str
    reason: str
    approved_by: str
    expires: str

    def to_dict(self) -> dict[str, Any]:
        """A JSON-ready dict (``placements`` as a list)."""
        d = dataclasses.asdict(self)
        d["placements"] = list(self.placements)
        return d


# --------------------------------------------------------------------------------------------
# Reading waiver files.

def load_waivers(path: str | Path) -> WaiverFile:
    """Read a TOML (``.toml``) or table (CSV/TSV/XLSX, through ``bomcheck.read.reader``) waiver file;
    bad entries raise ``InputError`` naming the file, the entry and the key."""
    if Path(path).suffix.lower() == ".toml":
        doc, sha = read_toml(str(path), "waiver file")
        entries = _toml_entries(doc, str(path))
    else:
        entries, sha = _table_entries(str(path))
    waivers = tuple(_waiver(raw, row, where, str(path)) for row, where, raw in entries)
    return WaiverFile(path=str(path), sha256=sha, waivers=waivers)


def _toml_entries(doc: dict, path: str) -> list[tuple[int, str, dict]]:
    extra = sorted(set(doc) - {"waiver"})
    if extra:
        raise InputError("unknown top-level key in waiver file", path=path, text=extra[0],
                         expected="[[waiver]] tables only")
    items = doc.get("waiver", [])
    if not isinstance(items, list) or not all(isinstance(i, dict) for i in items):
        raise InputError("'waiver' must be an array of tables", path=path,
                         expected="[[waiver]] entries")
    return [(i + 1, f"waiver[{i + 1}]", item) for i, item in enumerate(items)]


def _is_waiver_header(cells: list[str]) -> bool:
    keys = {_key(c) for c in cells if c.strip()}
    return "refdes" in keys and "rule" in keys


def _table_entries(path: str) -> tuple[list[tuple[int, str, dict]], str]:
    """The entries of a CSV/TSV/XLSX waiver file, read by the shared table reader (its limits,
    line ends, encodings and cell sizes), and the file's SHA-256; rows whose first cell starts
    with ``#`` are comments."""
    try:
        table = read_table(path, header_predicate=_is_waiver_header)
    except HeaderNotFound:
        raise InputError("no waiver header row in the first rows", path=path,
                         expected="a header row " + ",".join(FIELDS) + " (bom_text optional)"
                         ) from None
    headers = [h.strip() for h in table.headers]
    arrays = [table.frame[c].to_numpy(dtype=object) for c in table.frame.columns]
    out = []
    for i, row in enumerate(table.rows.tolist()):
        cells = [a[i] for a in arrays]
        if not cells or cells[0].lstrip().startswith("#"):
            continue
        raw = {h: c for h, c in zip(headers, cells) if h}
        out.append((int(row), f"row {row}", raw))
    return out, table.sha256


def _key(name: str) -> str:
    k = str(name).strip().lower().replace("-", "_").replace(" ", "_")
    return ALIASES.get(k, k)


def _waiver(raw: dict, row: int, where: str, path: str) -> Waiver:
    vals: dict[str, Any] = {}
    for name, value in raw.items():
        k = _key(name)
        if k not in FIELDS:
            raise InputError(f"{where}: unknown waiver key", path=path, column=str(name),
                             expected="one of " + ", ".join(FIELDS))
        vals[k] = value
    for k in REQUIRED:
        v = vals.get(k)
        if v is None or (isinstance(v, str) and not v.strip()):
            raise InputError(f"{where}: waiver without {k}", path=path, column=k,
                             expected=f"a {k} for every waiver")
    for k in ("refdes", "rule", "reason", "approved_by", "bom_text"):
        if k in vals and vals[k] is not None and not isinstance(vals[k], str):
            raise InputError(f"{where}: {k} must be text", path=path, column=k,
                             text=str(vals[k]), expected="a string")
    pattern = " ".join(vals["refdes"].split())
    names, globs = _designator_parts_checked(pattern, where, path)
    if not names and not globs:
        raise InputError(f"{where}: waiver without designators", path=path, column="refdes",
                         text=pattern, expected="e.g. C12, C10-C19, C1, C3 or C1*")
    bom_text = vals.get("bom_text")
    return Waiver(
        row=row, refdes=pattern, rule=vals["rule"].strip(), reason=" ".join(vals["reason"].split()),
        approved_by=vals["approved_by"].strip(), expires=_date(vals["expires"], where, path),
        bom_text=bom_text if bom_text and bom_text.strip() else None,
    )


def _designator_parts_checked(pattern: str, where: str, path: str) -> tuple[set[str], list[str]]:
    """``_designator_parts`` with errors naming the waiver file and entry."""
    try:
        names, globs = _designator_parts(pattern)
    except InputError as exc:
        raise InputError(f"{where}: {exc.problem}", path=path, column="refdes", text=exc.text,
                         expected=exc.expected) from None
    bad = sorted(n for n in names if not refdes_mod.is_designator(n))
    if bad:
        raise InputError(f"{where}: not a designator, list, range or pattern", path=path,
                         column="refdes", text=bad[0], expected="e.g. C12, C10-C19, C1, C3 or C1*")
    return names, globs


def _date(value: Any, where: str, path: str) -> dt.date:
    if isinstance(value, dt.datetime):
        return value.date()
    if isinstance(value, dt.date):
        return value
    try:
        return dt.date.fromisoformat(str(value).strip())
    except ValueError:
        raise InputError(f"{where}: expiry is not a date", path=path, column="expires",
                         text=str(value), expected="YYYY-MM-DD, e.g. 2027-06-30") from None


# --------------------------------------------------------------------------------------------
# Applying waivers (pure).

def _normal_text(text: Any) -> str:
    """BOM text compared without regard to case and runs of white space."""
    return " ".join(str(text).split()).casefold()


def _designator_parts(pattern: str) -> tuple[set[str], list[str]]:
    """The designators a waiver names and its shell-style patterns (upper case)."""
    if not _GLOB.search(pattern):
        return set(refdes_mod.expand(pattern)), []
    names: set[str] = set()
    globs: list[str] = []
    for item in re.split(r"[,;\s]+", pattern.strip()):
        if _GLOB.search(item):
            globs.append(item.upper())
        elif item:
            names.update(refdes_mod.expand(item))
    return names, globs


def _designator_mask(refdes_upper: pd.Series, waiver: Waiver) -> np.ndarray:
    names, globs = _designator_parts(waiver.refdes)
    mask = refdes_upper.isin(names).to_numpy(dtype=bool, copy=True)
    for g in globs:
        mask |= refdes_upper.str.match(fnmatch.translate(g)).to_numpy(dtype=bool)
    return mask


def _names(refdes: Sequence[str]) -> tuple[str, ...]:
    return tuple(sorted(set(refdes), key=refdes_mod.sort_key))


def _listed(names: Sequence[str]) -> str:
    shown = ", ".join(names[:_SHOW])
    return shown + (f" and {len(names) - _SHOW} more" if len(names) > _SHOW else "")


def _finding(w: Waiver, code: str, placements: Sequence[str], message: str) -> WaiverFinding:
    return WaiverFinding(row=w.row, code=code, refdes=w.refdes, rule=w.rule,
                         placements=tuple(placements), message=message, reason=w.reason,
                         approved_by=w.approved_by, expires=w.expires.isoformat())


@frozen
class _Targets:
    """The verdicts' and placements' columns a waiver is matched on, read once per audit."""

    refdes_upper: pd.Series  # of each verdict
    rule_ids: pd.Series  # of each verdict
    table_refdes: pd.Series  # of each fitted placement
    texts: pd.Series  # each placement's BOM text, by pidx


def waive_verdicts(verdicts: pd.DataFrame, table: pd.DataFrame, waivers: Sequence[Waiver],
                   today: dt.date) -> tuple[pd.DataFrame, tuple[WaiverFinding, ...]]:
    """Apply ``waivers`` (in file order) to the verdict table of an audit.

    ``table`` gives each placement's BOM text (column ``text``, index = ``pidx``). Returns the new
    verdicts, with columns ``waived_from`` (the original status of each waived verdict, else
    None) and ``waiver_reason``, and one finding per waiver (plus one for the placements whose
    BOM text changed). A waiver is valid through its ``expires`` day.
    """
    v = verdicts.copy()
    v["waived_from"] = pd.Series(None, index=v.index, dtype=object)
    v["waiver_reason"] = pd.Series(None, index=v.index, dtype=object)
    targets = _Targets(
        refdes_upper=v["refdes"].astype(str).str.upper(), rule_ids=v["rule_id"].astype(str),
        table_refdes=table["refdes"].astype(str).str.upper(),
        texts=table["text"] if "text" in table.columns else pd.Series("", index=table.index))
    findings: list[WaiverFinding] = []
    for w in waivers:
        findings.extend(_waive(w, v, targets, today))
    return v, tuple(sorted(findings))


def _waive(w: Waiver, v: pd.DataFrame, targets: _Targets,
           today: dt.date) -> list[WaiverFinding]:
    """Apply one waiver to the verdicts ``v`` (in place); its findings."""
    label = f"waiver {w.row} ({w.refdes} {w.rule})"
    if w.expires < today:
        return [_finding(w, "expired", (), f"{label} expired on {w.expires.isoformat()}; its "
                         "verdicts stand")]
    on_rule = np.flatnonzero((targets.rule_ids == w.rule).to_numpy())
    hit = (on_rule[_designator_mask(targets.refdes_upper.iloc[on_rule], w)] if len(on_rule)
           else on_rule)
    if not len(hit):
        if not _designator_mask(targets.table_refdes, w).any():
            why = "matches no fitted placement of the BOM"
        else:
            why = f"rule {w.rule} gave no verdict on {w.refdes}"
        return [_finding(w, "unused", (), f"{label} {why}")]
    findings: list[WaiverFinding] = []
    if w.bom_text is not None:
        hit = _same_text(w, v, hit, targets.texts, label, findings)
        if not len(hit):
            return findings
    rows = v.iloc[hit]
    hit = hit[rows["status"].isin(WAIVABLE).to_numpy() & rows["waived_from"].isna().to_numpy()]
    if not len(hit):
        return [*findings, _finding(w, "unused", (), f"{label}: no warn, nodata or fail "
                                    "verdict to waive; the waiver is no longer needed")]
    idx = v.index[hit]
    original = v.loc[idx, "status"].astype(str)
    v.loc[idx, "waived_from"] = original
    v.loc[idx, "waiver_reason"] = w.reason
    v.loc[idx, "status"] = "waived"
    v.loc[idx, "message"] = (
        v.loc[idx, "message"].astype(str) + "; waived (was " + original + ") by "
        + w.approved_by + f" until {w.expires.isoformat()}: {w.reason}"
    )
    names = _names(v.loc[idx, "refdes"].to_numpy())
    return [*findings, _finding(w, "applied", names,
                                f"{label} waives {len(idx)} verdict{'s' if len(idx) != 1 else ''}"
                                f" on {_listed(names)}: {w.reason} (approved by "
                                f"{w.approved_by}, expires {w.expires.isoformat()})")]


def _same_text(w: Waiver, v: pd.DataFrame, hit: np.ndarray, texts: pd.Series, label: str,
               findings: list[WaiverFinding]) -> np.ndarray:
    """The verdicts of ``hit`` whose placement's BOM text is still the one the waiver was granted
    for; a ``bom_changed`` finding for the others."""
    rows = v.iloc[hit]
    now = texts.reindex(rows["pidx"].to_numpy()).map(_normal_text).to_numpy()
    changed = now != _normal_text(w.bom_text)
    if changed.any():
        moved = _names(rows["refdes"].to_numpy()[changed])
        sample = texts.get(int(rows["pidx"].to_numpy()[changed][0]), "")
        findings.append(_finding(
            w, "bom_changed", moved,
            f"{label} was granted for BOM text {w.bom_text!r}, but the BOM now gives "
            f"{str(sample)!r} for {_listed(moved)}: not waived (the part changed)"))
    return hit[~changed]


def apply_waivers(report, waivers: WaiverFile | Sequence[Waiver], today: dt.date):
    """A new ``Report`` with ``waivers`` applied: verdicts waived, placement statuses and the
    totals by status recomputed, the findings in ``waiver_findings`` and the waiver file among
    the inputs (when a ``WaiverFile`` is given)."""
    entries = waivers.waivers if isinstance(waivers, WaiverFile) else tuple(waivers)
    verdicts, findings = waive_verdicts(report.with_messages(report.verdicts, passes=False),
                                        report.table, entries, today)
    worst = verdicts["status"].map(RANK).groupby(verdicts["pidx"]).max()
    table = report.table.copy()
    status = worst.reindex(table.index).map(dict(enumerate(STATUS_ORDER)))
    table["status"] = status.fillna(table["status"]).astype(report.table["status"].dtype)
    totals = dict(report.totals)
    counts = table["status"].value_counts()
    totals.update({s: int(counts.get(s, 0)) for s in STATUS_ORDER})
    inputs = tuple(report.inputs)
    if isinstance(waivers, WaiverFile):
        inputs += ({"role": "waivers", "path": waivers.path, "sha256": waivers.sha256},)
    return dataclasses.replace(report, table=table, verdicts=verdicts, totals=totals,
                               inputs=inputs, waiver_findings=report.waiver_findings + findings)

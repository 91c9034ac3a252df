"""Normalise stage: the lines of a BOM table (continuation rows joined), each classified as
capacitor placements, another part or an unreadable row with its reason."""

from __future__ import annotations

import math
import re

import numpy as np
import pandas as pd

from bomcheck.frozen import frozen
from bomcheck.parse import aliases
from bomcheck.parse import columns as colmod
from bomcheck.parse.approved import Lines, side_by_side
from bomcheck.parse.bomresult import (
    LINE_CAP,
    LINE_NONCAP,
    LINE_UNREAD,
    SKIPPED_COLUMNS,
    BomSource,
    ImportFinding,
    ImportResult,
    finding,
)
from bomcheck.parse.designators import (
    _CAP_KIND,
    _OTHER_KIND,
    _UNKNOWN_KIND,
    OTHER_PREFIXES,
    Designators,
    expand_lines,
    expand_one,
)
from bomcheck.parse.fitted import fitted_lines, fold
from bomcheck.parse.linecells import LineCells, parse_line_cells
from bomcheck.parse.linespec import DECISIVE_FAMILIES, SPEC_SOURCES, CellParser, Core
from bomcheck.parse.placements import placement_findings, placements_of
from bomcheck.parse.refdes import check_total
from bomcheck.read import reader
from bomcheck.rowcodes import combine

_KIND_ARRAY = np.array(["capacitor", "not_capacitor", "unreadable"], dtype=object)


def parse_qty(text: str) -> tuple[float, bool]:
    """(quantity, readable): ``"4"`` -> 4.0; ``"2 pcs"`` -> 2.0; ``""`` -> NaN (readable)."""
    t = text.strip()
    if not t:
        return math.nan, True
    m = re.fullmatch(r"(\d+(?:[.,]\d+)?)\s*(?:pcs?|pc\.|x|stk\.?|st\.?|pce?s?)?", t, re.I)
    if not m:
        return math.nan, False
    return float(m.group(1).replace(",", ".")), True



def original_header(table: reader.RawTable, name: str) -> str:
    names = list(table.frame.columns)
    i = names.index(name)
    return table.headers[i] if table.headers[i].strip() else name


def row_texts(arrays: list[np.ndarray], idx: np.ndarray) -> list[str]:
    """All filled cells of some source rows, joined " | " (what the user sees of the row)."""
    if not len(idx):
        return []
    cols = [a[idx] for a in arrays]
    return [" | ".join(filter(None, cells)) for cells in zip(*cols)]



def _competing_cells(table: reader.RawTable, mapping: dict[str, str], heads: np.ndarray,
                     head_rows: np.ndarray, cap_line: np.ndarray) -> list[ImportFinding]:
    """Capacitor lines where two columns competing for one field (``Voltage (Rev A)`` and
    ``Voltage (V)``) hold different text: a finding on the line, so that its placements are
    never a silent pass on the column that was picked."""
    out: list[ImportFinding] = []
    frame = table.frame
    for fld, used, others in colmod.competing_columns(list(frame.columns), mapping):
        a = frame[used].to_numpy(dtype=object)[heads]
        for other in others:
            b = frame[other].to_numpy(dtype=object)[heads]
            differ = cap_line & (a != "") & (b != "") & (a != b)
            for li in np.flatnonzero(differ):
                if fold(str(a[li])) == fold(str(b[li])):
                    continue
                out.append(finding(
                    int(head_rows[li]), None, "column_ambiguous",
                    f"{aliases.FIELD_LABELS[fld]}: column {original_header(table, used)!r} says "
                    f"{a[li]!r} but column {original_header(table, other)!r} says {b[li]!r}; "
                    f"using {original_header(table, used)!r}, check which column is current"))
    return out



@frozen
class _LineTable:
    """Per line of a table: each field's cell (continuation rows joined), source row, designators,
    what the value-bearing cells say, fitted or not and what it is."""

    cells: dict[str, np.ndarray]
    head_rows: np.ndarray
    des: Designators
    lc: LineCells
    fitted: np.ndarray
    nf_reason: np.ndarray
    cap_line: np.ndarray
    kind: np.ndarray
    reason: np.ndarray


def build_lines(table: reader.RawTable, mapping: dict[str, str], source: BomSource,
                repeated: np.ndarray) -> tuple[ImportResult, Lines]:
    """The lines of a table with no approved-source or structure rows: continuation rows
    joined, designators expanded, cells parsed, each line classified; ``repeated`` marks the
    repeated header rows."""
    frame = table.frame
    all_arrays = [frame[c].to_numpy(dtype=object) for c in frame.columns]
    src_rows = np.asarray(table.rows, dtype=np.int64)
    cont, line_of_row, heads, line = _join_lines(frame, mapping, all_arrays, repeated)
    head_rows = src_rows[heads]
    des = expand_lines(line["refdes"], source.path)
    check_total(int(des.count.sum()), path=source.path)
    lc = _parse_cells(table, mapping, line, len(heads))
    header = original_header(table, mapping["fitted"]) if "fitted" in mapping else None
    fitted, nf_reason, unclear, contradict = fitted_lines(line, mapping, header, des, lc)
    kind, cap_line, reason = _classify(des, lc, repeated[heads], fitted)
    lt = _LineTable(line, head_rows, des, lc, fitted, nf_reason, cap_line, kind, reason)
    qty, qty_ok = _quantities(line["qty"])
    findings = _qty_findings(lt, qty, qty_ok)
    findings.extend(finding(int(head_rows[li]), None, what, msg)
                    for what, said in (("fitted_unclear", unclear),
                                       ("fitted_conflict", contradict))
                    for li, msg in said if cap_line[li])
    findings.extend(_competing_cells(table, mapping, heads, head_rows, cap_line))
    placements = placements_of(np.flatnonzero(cap_line), des, line, head_rows, fitted,
                               nf_reason, qty, lc)
    findings.extend(placement_findings(placements, lc))
    row_kind = kind[line_of_row] if len(frame) else np.zeros(0, dtype=np.int64)
    skipped = _skipped(lt, row_kind, line_of_row, cont, src_rows, all_arrays)
    totals = _totals(table, row_kind, placements, cont)
    lines = Lines(line_of_row, kind, head_rows, line["manufacturer"], line["mpn"],
                  side_by_side(table, mapping, heads))
    return ImportResult(source=source, placements=placements, skipped=skipped,
                        findings=tuple(sorted(findings, key=ImportFinding.sort_key)),
                        totals=totals), lines


def _join_lines(frame: pd.DataFrame, mapping: dict[str, str], all_arrays: list[np.ndarray],
                repeated: np.ndarray
                ) -> tuple[np.ndarray, np.ndarray, np.ndarray, dict[str, np.ndarray]]:
    """(continuation row?, line of each row, first row of each line, field -> cell per line):
    continuation rows joined to the line above."""
    n = len(frame)
    empty = np.full(n, "", dtype=object)
    col = {f: frame[h].to_numpy(dtype=object) for f, h in mapping.items()}
    cont = _continuations(frame, mapping, all_arrays, col.get("refdes", empty), repeated)
    line_of_row = np.cumsum(~cont) - 1
    heads = np.flatnonzero(~cont)
    if not cont.any():
        return cont, line_of_row, heads, {f: col.get(f, empty) for f in aliases.FIELDS}
    line = {f: col.get(f, empty)[heads] for f in aliases.FIELDS}  # fancy indexing: fresh arrays
    ends = np.append(heads[1:], n)  # a line's rows are heads[li] .. ends[li] - 1
    for li in np.unique(line_of_row[cont]):
        for f, sep in (("refdes", ", "), ("description", " "), ("notes", " ")):
            cells = col.get(f, empty)[heads[li]:ends[li]]
            line[f][li] = sep.join(c.strip() for c in cells if c.strip())
    return cont, line_of_row, heads, line


def _parse_cells(table: reader.RawTable, mapping: dict[str, str], line: dict[str, np.ndarray],
                 n: int) -> LineCells:
    """What the value-bearing cells of each line say (``bomcheck.parse.linecells``)."""
    units = {f: u for f in SPEC_SOURCES if f in mapping
             if (u := colmod.header_unit(original_header(table, mapping[f]), f))}
    parser = CellParser(semicolon=table.format == "semicolon", units=units)
    return parse_line_cells(parser, line, [s for s in SPEC_SOURCES if s in mapping], n)


def _classify(des: Designators, lc: LineCells, line_repeated: np.ndarray, fitted: np.ndarray
              ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(kind, capacitor line?, reason when not taken) per line, from the designator prefix and
    the evidence of the parsed text."""
    n_lines = len(lc.code)
    pk = des.kind
    evidence = lc.core_of("evidence", np.int64)
    strong = lc.core_of("strong", bool)
    has_other = np.array([c.other is not None for c in lc.cores], dtype=bool)[lc.code]
    kind = np.full(n_lines, LINE_UNREAD, dtype=np.int64)
    ok = ~line_repeated & ~des.has_error
    cap_line = ok & (
        ((pk == _CAP_KIND) & (evidence > 0) & (strong | ~has_other))
        | ((pk == _CAP_KIND) & (evidence == 0) & ~fitted)
        | ((pk == _UNKNOWN_KIND) & (evidence > 0) & strong & ~has_other)
    )
    decisive = np.array([c.other is not None and c.other[0] in DECISIVE_FAMILIES
                         for c in lc.cores], dtype=bool)[lc.code]
    cap_line &= ~(decisive & ~strong)
    other_line = ok & ~cap_line & ((pk == _OTHER_KIND) | (pk == _UNKNOWN_KIND)
                                   | ((pk == _CAP_KIND) & decisive & ~strong))
    # A designator of another part on text that reads as a capacitor on its own (U5 "CAP CER
    # 10uF 6.3V X7R"): the two sources disagree, so the line is unreadable, not a silent
    # non-capacitor (common practice: either the designator or the text is a typo).
    disagree = other_line & (pk == _OTHER_KIND) & (evidence > 0) & strong & ~has_other
    kind[cap_line] = LINE_CAP
    kind[other_line & ~disagree] = LINE_NONCAP
    reason = _reasons(cap_line, line_repeated, des, lc)
    return kind, cap_line, reason


def _reasons(cap_line: np.ndarray, line_repeated: np.ndarray, des: Designators,
             lc: LineCells) -> np.ndarray:
    """One reason per distinct (prefix, combination of cells) among the lines not taken; lines
    with their own reason (designator errors, repeated headers) one by one."""
    reason = np.full(len(lc.code), None, dtype=object)
    pk = des.kind
    not_taken = np.flatnonzero(~cap_line)
    special = line_repeated[not_taken] | des.has_error[not_taken]
    for li in not_taken[special]:
        reason[li] = _reason(int(li), line_repeated, des, pk, lc.cores[lc.code[li]],
                             lc.text(li))
    plain = not_taken[~special]
    if len(plain):
        pfx_codes, pfx_uniq = pd.factorize(des.prefix[plain])
        key, n_keys = combine([pfx_codes, lc.cells[plain]], [len(pfx_uniq), lc.n_cells])
        firsts = np.flatnonzero(~pd.Series(key).duplicated().to_numpy())
        texts = np.empty(n_keys, dtype=object)
        for k, j in enumerate(firsts):
            li = int(plain[j])
            texts[k] = _reason(li, line_repeated, des, pk, lc.cores[lc.code[li]], lc.text(li))
        reason[plain] = texts[key]
    return reason


def _quantities(cells: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(quantity, readable) per line, each distinct cell read once."""
    if not len(cells):
        return np.zeros(0, dtype=float), np.zeros(0, dtype=bool)
    qty_codes, qty_uniq = pd.factorize(cells)
    qty_parsed = [parse_qty(str(q)) for q in qty_uniq]
    return (np.array([q for q, _ in qty_parsed], dtype=float)[qty_codes],
            np.array([r for _, r in qty_parsed], dtype=bool)[qty_codes])


def _qty_findings(lt: _LineTable, qty: np.ndarray, qty_ok: np.ndarray) -> list[ImportFinding]:
    """Capacitor lines whose quantity disagrees with their designators or is not a number."""
    findings: list[ImportFinding] = []
    des, cap_line, head_rows = lt.des, lt.cap_line, lt.head_rows
    mismatch = cap_line & ~np.isnan(qty) & (qty != des.count) & ~(~lt.fitted & (qty == 0))
    for li in np.flatnonzero(mismatch):
        findings.append(finding(
            int(head_rows[li]), None, "qty_mismatch",
            f"Qty says {qty[li]:g} but the designators name {des.count[li]} "
            f"({lt.cells['refdes'][li].strip()!r}); the placements follow the designators, "
            "check the line",
        ))
    for li in np.flatnonzero(cap_line & ~qty_ok):
        findings.append(finding(
            int(head_rows[li]), None, "qty_unreadable",
            f"Qty {lt.cells['qty'][li]!r} is not a number; not compared with the "
            f"{des.count[li]} designators",
        ))
    return findings


def _skipped(lt: _LineTable, row_kind: np.ndarray, line_of_row: np.ndarray, cont: np.ndarray,
             src_rows: np.ndarray, all_arrays: list[np.ndarray]) -> pd.DataFrame:
    """Rows not taken: one entry per source row, continuation rows included."""
    skipped_rows = np.flatnonzero(row_kind != LINE_CAP)
    sk_lines = line_of_row[skipped_rows]
    sk_reason = lt.reason[sk_lines]
    for j in np.flatnonzero(cont[skipped_rows]):
        sk_reason[j] = f"{sk_reason[j]} (continuation of row {lt.head_rows[sk_lines[j]]})"
    return pd.DataFrame({
        "row": pd.Series(src_rows[skipped_rows], dtype=np.int64),
        "kind": pd.Series(_KIND_ARRAY[row_kind[skipped_rows]], dtype=object),
        "reason": pd.Series(sk_reason, dtype=object, copy=False),
        "text": pd.Series(row_texts(all_arrays, skipped_rows), dtype=object),
    }, columns=list(SKIPPED_COLUMNS))


def _totals(table: reader.RawTable, row_kind: np.ndarray, placements: pd.DataFrame,
            cont: np.ndarray) -> dict[str, int]:
    """The totals line of a table without approved-source or structure rows."""
    n_fitted = int(placements["fitted"].sum())
    return {
        "rows_read": int(len(table.frame)),
        "capacitor_rows": int((row_kind == LINE_CAP).sum()),
        "non_capacitor_rows": int((row_kind == LINE_NONCAP).sum()),
        "unreadable_rows": int((row_kind == LINE_UNREAD).sum()),
        "placements": int(len(placements)),
        "fitted": n_fitted,
        "not_fitted": int(len(placements) - n_fitted),
        "blank_rows": int(table.blank_rows),
        "continuation_rows": int(cont.sum()),
        "approved_source_rows": 0,
        "not_placement_rows": 0,
    }


_LIST_MARK = re.compile(r"[,;/\s]|\.\.|[-\u2013:]")


def _continuations(frame: pd.DataFrame, mapping: dict[str, str], arrays: list[np.ndarray],
                   refdes: np.ndarray, repeated: np.ndarray) -> np.ndarray:
    """Rows that continue the line above: only designators (a long list written over several
    rows), or no designator and only description/notes text."""
    n = len(frame)
    cont = np.zeros(n, dtype=bool)
    if n < 2:
        return cont
    names = list(frame.columns)
    ref_i = names.index(mapping["refdes"])
    text_i = {names.index(mapping[f]) for f in ("description", "notes") if f in mapping}
    # Either kind has an empty value cell: one comparison per row, then the few candidates.
    first = names.index(mapping["value"]) if "value" in mapping else None
    cand = np.flatnonzero(arrays[first] == "") if first is not None else np.arange(n)
    ref_empty = refdes[cand] == ""
    only_ref, no_ref = cand[~ref_empty], cand[ref_empty]
    for i in range(len(names)):
        if i in (ref_i, first):
            continue
        if len(only_ref):
            only_ref = only_ref[arrays[i][only_ref] == ""]
        if len(no_ref) and i not in text_i:
            no_ref = no_ref[arrays[i][no_ref] == ""]
    for r in no_ref:
        if r > 0 and not repeated[r - 1] and text_i:
            cont[r] = True
    for r in only_ref:
        above = r - 1
        while above >= 0 and refdes[above] == "" and cont[above]:
            above -= 1
        # A designator-only row continues a list: the designator cell above must be a list.
        if above >= 0 and not repeated[above] \
                and _LIST_MARK.search(str(refdes[above]).strip()) \
                and expand_one(str(refdes[r]))[1] is None:
            cont[r] = True
    return cont



def _reason(li: int, repeated: np.ndarray, des: Designators, pk: np.ndarray,
            combo: Core, text: str) -> str:
    """Why a line is not taken as capacitor placements (``text``: its cells joined)."""
    if repeated[li]:
        return "repeated header row"
    if li in des.error:
        return des.error[li]
    pfx = str(des.prefix[li])
    if pk[li] == _CAP_KIND:
        if combo.other is not None:
            family, token = combo.other
            if family in DECISIVE_FAMILIES and not combo.strong:
                return (f"designator prefix {pfx!r}, but the text describes {_a(family)} "
                        f"({token!r}): not a capacitor")
            return f"capacitor designator, but the text reads as {_a(family)} ({token!r})"
        if not text:
            return "capacitor designator with no value or description"
        return f"capacitor designator, but no capacitor value could be read ({text!r})"
    if pk[li] == _OTHER_KIND:
        if combo.evidence > 0 and combo.strong and combo.other is None:
            return (f"designator prefix {pfx!r} ({OTHER_PREFIXES[pfx]}), but the text reads "
                    f"as a capacitor ({text!r}): the designator and the text disagree, "
                    "check the line")
        return f"designator prefix {pfx!r} ({OTHER_PREFIXES[pfx]}) is not a capacitor"
    if combo.other is not None:
        family, token = combo.other
        return f"the text reads as {_a(family)} ({token!r})"
    if combo.evidence > 0:
        return (f"designator prefix {pfx!r} is not a capacitor prefix and only a bare code "
                f"reads as a capacitor ({text!r})")
    if not text:
        return "no value or description"
    return f"no capacitor evidence in the text ({text!r})"


def _a(word: str) -> str:
    return ("an " if word[0] in "aeiouAEIOU" else "a ") + word



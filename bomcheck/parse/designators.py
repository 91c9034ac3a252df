"""Normalise stage: every BOM line's designator cell expanded to designators (``C1-C4``,
``C1, C2``), with the prefix that says which kind of part the line is."""

from __future__ import annotations

import re
from dataclasses import dataclass

import numpy as np
import pandas as pd

from bomcheck.errors import InputError
from bomcheck.parse.linespec import not_fitted_mark, strip_not_fitted
from bomcheck.parse.refdes import MAX_RANGE, check_total, expand

# Designator prefixes of capacitors, and of parts that are not capacitors although some start
# with C (common practice of EDA exports; the one-letter classes as in ASME Y14.44, value from
# memory).
CAPACITOR_PREFIXES: frozenset[str] = frozenset(
    {"C", "CA", "CB", "CC", "CE", "CF", "CP", "CT", "CV", "CX", "CY", "VC"}
)
OTHER_PREFIXES: dict[str, str] = {
    "CR": "diode", "D": "diode", "ZD": "diode", "LED": "LED",
    "CN": "connector", "CON": "connector", "CONN": "connector", "J": "connector",
    "P": "connector", "X": "crystal", "Y": "crystal", "XT": "crystal", "XTAL": "crystal",
    "CRY": "crystal", "CRYS": "crystal", "R": "resistor", "RN": "resistor network",
    "RP": "resistor network", "RA": "resistor network", "RT": "thermistor",
    "RV": "varistor", "VR": "variable resistor", "L": "inductor", "FB": "ferrite bead",
    "FL": "filter", "Q": "transistor", "U": "integrated circuit", "IC": "integrated circuit",
    "T": "transformer", "TR": "transformer", "K": "relay", "F": "fuse", "S": "switch",
    "SW": "switch", "TP": "test point", "JP": "jumper", "BT": "battery", "H": "hardware",
    "MH": "mounting hole", "FID": "fiducial", "LS": "loudspeaker", "W": "wire",
}

_CAP_KIND, _OTHER_KIND, _UNKNOWN_KIND = 1, -1, 0


def prefix_kind(pfx: str) -> int:
    """+1 capacitor prefix, -1 known prefix of another part, 0 unknown."""
    if pfx in CAPACITOR_PREFIXES:
        return _CAP_KIND
    if pfx in OTHER_PREFIXES:
        return _OTHER_KIND
    return _UNKNOWN_KIND



# The language of bomcheck.parse.refdes.is_designator, compiled once (prefix in group 1).
_DESIGNATOR = re.compile(r"([A-Za-z_]+)\d+[A-Za-z]?\Z")
# The shape of a cell: ASCII digits to "9", ASCII letters to upper case. Cells share few shapes
# (C9, C99, R999...), so the single-designator test runs once per distinct shape.
_SHAPE_TABLE = str.maketrans({**dict.fromkeys("0123456789", "9"),
                              **{c: c.upper() for c in "abcdefghijklmnopqrstuvwxyz"}})
_SINGLE_SHAPE = re.compile(r"[ \t]*([A-Z_]+)9+[A-Z]?[ \t]*")


# A plain forward range without leading zeros (C12-C15, C12-15): the common case, expanded here
# exactly as bomcheck.parse.refdes.expand does; anything else goes to expand itself.
_SIMPLE_RANGE = re.compile(r"([A-Za-z_]+)([1-9]\d{0,5})\s*-\s*(?:\1)?([1-9]\d{0,5})")
# What makes bomcheck.parse.refdes.expand do more than split: range marks (and "to", and marks it
# would strip such as "(DNP)" are not designators, so they fail the item test anyway).
_RANGE_MARK = re.compile(r"-|\.\.|\u2013|:|\bto\b")
_LIST_SPLIT = re.compile(r"[,;/\s]+")  # bomcheck.parse.refdes splits lists on these


@dataclass
class Designators:
    """Per line: single designator (or None), count and first prefix; lists, errors and
    not-fitted marks only for the lines that have them."""

    single: np.ndarray
    count: np.ndarray
    prefix: np.ndarray
    kind: np.ndarray  # prefix_kind of the prefix
    has_error: np.ndarray
    error: dict[int, str]
    mark: dict[int, str]
    lists: dict[int, list[str]]


def expand_one(text: str) -> tuple[list[str], str | None, str | None, str]:
    """(designators, error reason, not-fitted mark, first prefix) for one designator cell."""
    t = text.strip()
    m = _SIMPLE_RANGE.fullmatch(t)
    if m:
        lo, hi = int(m.group(2)), int(m.group(3))
        if lo <= hi and hi - lo < MAX_RANGE:
            p = m.group(1).upper()
            return [f"{p}{k}" for k in range(lo, hi + 1)], None, None, p
    elif not _RANGE_MARK.search(t):
        # A list of single designators: expand would only split it and upper-case the items.
        items = [i for i in _LIST_SPLIT.split(t.strip(",;")) if i]
        matches = [_DESIGNATOR.match(i) for i in items]
        if items and all(matches):
            prefixes = {mt.group(1).upper() for mt in matches}  # type: ignore[union-attr]
            if len(prefixes) == 1 or len({prefix_kind(p) for p in prefixes}) == 1:
                first = matches[0].group(1).upper()  # type: ignore[union-attr]
                return [i.upper() for i in items], None, None, first
    mark = not_fitted_mark(t)
    if mark:
        t = strip_not_fitted(t)
    if not t.strip():
        return [], "no designator", mark, ""
    try:
        items = expand(t)
    except InputError as exc:
        return [], f"designator list not readable: {exc.problem} ({exc.text!r})", mark, ""
    matches = [_DESIGNATOR.match(i) for i in items]
    if not all(matches):
        bad = next(i for i, mt in zip(items, matches) if not mt)
        what = "designator" if len(items) == 1 else "designator list"
        return [], f"{what} not readable: {bad!r}", mark, ""
    prefixes = [mt.group(1).upper() for mt in matches]  # type: ignore[union-attr]
    if len({prefix_kind(p) for p in set(prefixes)}) > 1:
        pfx = ", ".join(sorted(set(prefixes)))
        return [], f"designators mix capacitor and other prefixes ({pfx})", mark, ""
    return items, None, mark, prefixes[0]


def expand_lines(texts: np.ndarray, path: str | None = None) -> Designators:
    """Expand every line's designator cell.

    A single designator (most lines of a flat export) takes a vectorised path: the cells'
    shapes (``C12`` -> ``C99``) come from one string translation, and each distinct shape is
    tested once. Lists, ranges and odd cells go through ``bomcheck.parse.refdes.expand`` once per
    distinct text.
    """
    n = len(texts)
    count = np.zeros(n, dtype=np.int64)
    out = Designators(np.full(n, None, dtype=object), count, np.full(n, "", dtype=object),
                       np.zeros(n, dtype=np.int64), np.zeros(n, dtype=bool), {}, {}, {})
    if n == 0:
        return out
    big = "\n".join(texts)
    if big.count("\n") != n - 1:
        # A cell with a line break (Alt+Enter in a spreadsheet) goes the slow way: "," is a
        # shape the single-designator pattern does not match.
        big = "\n".join(t if "\n" not in t else "," for t in texts)
    codes, shapes = pd.factorize(np.array(big.translate(_SHAPE_TABLE).split("\n"), dtype=object))
    matches = [_SINGLE_SHAPE.fullmatch(str(u)) for u in shapes]
    fast = np.array([m is not None for m in matches], dtype=bool)[codes]
    found = np.array([m.group(1) if m else "" for m in matches], dtype=object)[codes]
    kinds = np.array([prefix_kind(m.group(1)) if m else _UNKNOWN_KIND for m in matches],
                     dtype=np.int64)[codes]
    padded = np.array([bool(m) and m.group(0) != m.group(0).strip() for m in matches],
                      dtype=bool)[codes]
    up = big.upper()
    if fast.all() and up == big and not padded.any():
        return Designators(texts, np.ones(n, dtype=np.int64), found, kinds, out.has_error,
                            {}, {}, {})
    if fast.any():
        names = texts[fast] if up == big else np.array(up.split("\n"), dtype=object)[fast]
        for j in np.flatnonzero(padded[fast]):
            names[j] = names[j].strip()
        out.single[fast] = names
        count[fast] = 1
        out.prefix[fast] = found[fast]
        out.kind[fast] = kinds[fast]
    slow = np.flatnonzero(~fast)
    if len(slow):
        _expand_slow(texts, slow, out, path)
    return out


def _expand_slow(texts: np.ndarray, slow: np.ndarray, out: Designators, path: str | None
                 ) -> None:
    """Lists, ranges and odd cells: ``bomcheck.parse.refdes.expand`` once per distinct text,
    held to the placement limit as it goes."""
    count = out.count
    codes, uniques = pd.factorize(texts[slow])
    results, total = [], 0
    for u in uniques:
        results.append(expand_one(str(u)))
        total += len(results[-1][0])
        check_total(total, path=path)
    counts_u = np.array([len(r[0]) for r in results], dtype=np.int64)
    count[slow] = counts_u[codes]
    out.prefix[slow] = np.array([r[3] for r in results], dtype=object)[codes]
    out.kind[slow] = np.array([prefix_kind(r[3]) for r in results], dtype=np.int64)[codes]
    for i, code in zip(slow.tolist(), codes.tolist()):
        items, err, mk, _ = results[code]
        if mk:
            out.mark[i] = mk
        if err is not None:
            out.has_error[i] = True
            out.error[i] = err
        elif len(items) == 1:
            out.single[i] = items[0]
        else:
            out.lists[i] = items


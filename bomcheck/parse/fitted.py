"""Normalise stage: whether each BOM line is fitted, from the fitted column and the
not-fitted marks in its cells, with the contradictions a reviewer must see."""

from __future__ import annotations

import re

import numpy as np
import pandas as pd

from bomcheck.parse import columns as colmod
from bomcheck.parse.designators import Designators
from bomcheck.parse.linecells import LineCells
from bomcheck.parse.linespec import not_fitted_mark, strip_not_fitted

# Fitted-column cells, folded (casefold, stripped).
_FITTED_NO = frozenset({
    "no", "n", "0", "false", "f", "nein", "non", "dnp", "dni", "dnf", "nf", "nc",
    "not fitted", "not populated", "do not populate", "do not fit", "do not place", "no pop",
    "nopop", "nicht bestückt", "nicht bestueckt", "non monté", "non monte", "unbestückt",
})
_FITTED_YES = frozenset({
    "yes", "y", "1", "true", "t", "x", "ja", "j", "oui", "o", "fitted", "fit", "populate",
    "populated", "place", "placed", "mount", "mounted", "bestückt", "bestueckt", "monté", "monte",
    "\u2713", "\u2714",
})


def fold(text: str) -> str:
    """Case-folded, spaces collapsed: how cells are compared."""
    return " ".join(text.casefold().split())


def fitted_lines(line: dict[str, np.ndarray], mapping: dict[str, str], header: str | None,
                 des: Designators, lc: LineCells
                 ) -> tuple[np.ndarray, np.ndarray, list[tuple[int, str]], list[tuple[int, str]]]:
    """Per line: fitted?, the reason when not, (line, message) for unclear fitted cells and
    (line, message) for lines that say both fitted and not fitted; ``header`` is the fitted
    column's header as written (None without one).

    A fitted column that says yes wins over a not-fitted mark elsewhere in the line (``DNP on
    variant B`` in the notes) and over a mark in its own cell after the yes (``Yes (DNP in
    variant B)``): the placement stays in the audit, and the contradiction is a
    ``fitted_conflict`` finding (common practice: a variant note does not unfit the part of the
    variant the BOM describes). Without a yes, a mark limited to a variant (``DNP on the 115 V
    variant only``, ``DNP for option B``) keeps the part fitted with the same finding."""
    n = len(lc.code)
    col = _FittedColumn(n)
    if header is not None:
        col.read(line["fitted"], header)
    fitted, reason, contradict = col.fitted, col.reason, col.contradict
    for label, marks, codes, variant in _mark_sources(line, mapping, des, lc):
        has = np.array([m is not None for m in marks], dtype=bool)
        if not has.any():
            continue
        only = np.array(variant, dtype=bool)[codes] & has[codes]
        for li in np.flatnonzero(col.explicit_yes & has[codes]):
            contradict.append((int(li), f"{col.said_yes[li]} but {marks[codes[li]]!r} in {label}; "
                               "taken as fitted, check which variant the BOM describes"))
        for li in np.flatnonzero(fitted & ~col.explicit_yes & only):
            contradict.append((int(li), f"{marks[codes[li]]!r} in {label} names a variant; "
                               "taken as fitted, check which variant the BOM describes"))
        for li in np.flatnonzero(fitted & ~col.explicit_yes & has[codes] & ~only):
            fitted[li] = False
            reason[li] = f"{marks[codes[li]]!r} in {label}"
    return fitted, reason, col.unclear, contradict


class _FittedColumn:
    """What the fitted column says per line (all fitted when there is none)."""

    def __init__(self, n: int) -> None:
        self.fitted = np.ones(n, dtype=bool)
        self.explicit_yes = np.zeros(n, dtype=bool)
        self.reason = np.full(n, None, dtype=object)
        self.said_yes = np.full(n, "", dtype=object)
        self.unclear: list[tuple[int, str]] = []
        self.contradict: list[tuple[int, str]] = []

    def read(self, cells: np.ndarray, header: str) -> None:
        """Read the column's cells (each distinct cell once)."""
        negative = colmod.is_negative_fitted(header)
        codes, uniq = pd.factorize(cells)
        verdicts = [_fitted_cell(str(u), negative) for u in uniq]
        says = np.array([f"{header} column says {str(u).strip()!r}" for u in uniq], dtype=object)
        no = np.array([not v[0] for v in verdicts], dtype=bool)[codes]
        self.fitted[no] = False
        self.reason[no] = says[codes[no]]
        self.explicit_yes = np.array([v[0] and v[1] and bool(str(u).strip())
                                      for v, u in zip(verdicts, uniq)], dtype=bool)[codes]
        self.said_yes[self.explicit_yes] = says[codes[self.explicit_yes]]
        odd = np.array([v[0] and not v[1] for v in verdicts], dtype=bool)[codes]
        self.unclear = [(int(li), f"{says[codes[li]]}, which is neither yes nor no; taken as "
                         "fitted") for li in np.flatnonzero(odd)]
        own_mark = np.array([v[2] is not None for v in verdicts], dtype=bool)[codes]
        self.contradict = [(int(li), f"{says[codes[li]]}: yes, but also "
                            f"{verdicts[codes[li]][2]!r}; taken as fitted, check which variant "
                            "the BOM describes") for li in np.flatnonzero(own_mark)]


def _mark_sources(line: dict[str, np.ndarray], mapping: dict[str, str], des: Designators,
                  lc: LineCells
                  ) -> list[tuple[str, list[str | None], np.ndarray, list[bool]]]:
    """Marks in cells, in order of precedence; each as (label, mark per distinct cell, code per
    line, whether that cell limits the mark to a variant)."""
    sources = [("value", *_combo_marks("value", lc))]
    if des.mark:
        n = len(lc.code)
        idx = np.fromiter(des.mark, dtype=np.int64, count=len(des.mark))
        codes = np.zeros(n, dtype=np.int64)
        codes[idx] = np.arange(1, len(idx) + 1)
        sources.append(("designator", [None, *des.mark.values()], codes,
                        [False] * (len(idx) + 1)))
    for f, label in (("mpn", "part number"), ("description", "description"),
                     ("value_alt", "second value column"),
                     ("description_alt", "second description column"), ("notes", "notes")):
        if f in ("description", "value_alt", "description_alt"):
            sources.append((label, *_combo_marks(f, lc)))
        elif f in mapping:
            sources.append((label, *_marks_by_cell(line[f])))
    return sources  # type: ignore[return-value]


def _combo_marks(source: str, lc: LineCells
                 ) -> tuple[list[str | None], np.ndarray, list[bool]]:
    """The marks of one parsed source per line (code 0: none; each marked line its own code,
    its variant test on the line's text)."""
    per_core = np.array([c.marks.get(source) is not None for c in lc.cores], dtype=bool)
    marked = np.flatnonzero(per_core[lc.code]) if len(lc.code) else np.zeros(0, dtype=np.int64)
    codes = np.zeros(len(lc.code), dtype=np.int64)
    codes[marked] = np.arange(1, len(marked) + 1)
    marks = [lc.cores[lc.code[li]].marks[source] for li in marked]
    return ([None, *marks], codes,
            [False, *(_variant_only(lc.text(li)) for li in marked)])


def _marks_by_cell(cells: np.ndarray) -> tuple[list[str | None], np.ndarray, list[bool]]:
    """(not-fitted mark per distinct cell, code per line, whether the cell limits it to a
    variant); code 0 is the empty cell."""
    filled = np.flatnonzero(cells != "")
    codes = np.zeros(len(cells), dtype=np.int64)
    if not len(filled):
        return [None], codes, [False]
    sub, uniq = pd.factorize(cells[filled])
    codes[filled] = sub + 1
    marks = [not_fitted_mark(str(u)) for u in uniq]
    return ([None, *marks], codes,
            [False, *(m is not None and _variant_only(str(u)) for m, u in zip(marks, uniq))])


# Words that limit a not-fitted mark to some builds ("DNP on the 115 V variant only", "DNP for
# option B"): the part is fitted in the build this BOM may describe (common practice of
# variant notes in BOMs).
_VARIANT_WORDS = re.compile(r"\b(?:variants?|versions?|options?|only|builds?|except|unless)\b",
                            re.IGNORECASE)


def _variant_only(text: str) -> bool:
    """Whether a cell's text limits a not-fitted mark to some variants."""
    return bool(_VARIANT_WORDS.search(text))


def _fitted_cell(cell: str, negative: bool) -> tuple[bool, bool, str | None]:
    """(fitted, understood, not-fitted mark said beside a yes) for a fitted-column cell;
    ``negative`` for a "DNP?" column. ``Yes (DNP in variant B)`` is fitted, with its mark."""
    t = fold(cell)
    if not t:
        return True, True, None
    if negative:
        if t in _FITTED_YES or not_fitted_mark(cell):
            return False, True, None
        return True, t in _FITTED_NO, None
    if t in _FITTED_NO:
        return False, True, None
    mark = not_fitted_mark(cell)
    if mark:
        rest = _WORDS(strip_not_fitted(cell).casefold())
        if rest and rest[0] in _FITTED_YES:
            return True, True, mark
        return False, True, None
    return True, t in _FITTED_YES, None


_WORDS = re.compile(r"[^\W_]+|[\u2713\u2714]").findall


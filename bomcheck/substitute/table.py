"""Substitute check, the placement table: finding the original's placements, laying the
alternate's spec over them, and running the audit's own stages on the result."""

from __future__ import annotations

from collections.abc import Callable, Mapping, Sequence
from typing import Any

import numpy as np
import pandas as pd

from bomcheck.errors import InputError
from bomcheck.frozen import frozen
from bomcheck.parse.linespec import FLOAT_SPEC, SPEC_COLUMNS, spec_from_cells
from bomcheck.parse.refdes import expand, is_designator
from bomcheck.pipeline.audit import evaluate_table
from bomcheck.substitute.result import Alternate
from bomcheck.substitute.words import given, norm_text

_FLOAT_FIELDS = frozenset(FLOAT_SPEC)


@frozen
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
    part_data = stages.parts if parts is _STAGE_PARTS else parts
    # BOM-line findings are the same for both parts, so none are passed.
    done = evaluate_table(table, stages.ruleset, parts=part_data, groups=stages.groups)
    return done.table, done.verdicts


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


# --------------------------------------------------------------------------------------------
# Finding the original's placements: one matcher per way of naming it, tried in order.

def _mpn_hits(placements: pd.DataFrame, mpn: str) -> np.ndarray:
    """Positions of the placements whose MPN is ``mpn`` (case and outer spaces ignored)."""
    column = placements["mpn"].astype(object).where(placements["mpn"].notna(), "")
    return np.flatnonzero((column.astype(str).str.strip().str.upper() == mpn.strip().upper())
                          .to_numpy())


def _match_refdes(key: str, placements: pd.DataFrame) -> tuple[np.ndarray | None, list[str]]:
    """(positions, designators not in the BOM) of a designator list; (None, []) when ``key``
    is not one."""
    refdes = placements["refdes"].astype(str).str.upper().to_numpy(dtype=object)
    try:
        items = [i.upper() for i in expand(key)]
    except InputError:
        items = []
    if not items or not all(is_designator(i) for i in items):
        return None, []
    known = set(refdes.tolist())
    missing = [i for i in items if i not in known]
    return (None, missing) if missing else (np.flatnonzero(np.isin(refdes, items)), [])


def _match_mpn(key: str, placements: pd.DataFrame) -> tuple[np.ndarray | None, list[str]]:
    """Positions of the placements with the MPN ``key``."""
    hit = _mpn_hits(placements, key) if "mpn" in placements and key else np.zeros(0, int)
    return (hit if hit.size else None), []


def _match_text(key: str, placements: pd.DataFrame) -> tuple[np.ndarray | None, list[str]]:
    """Positions of the placements whose text, description or value reads as ``key``; each
    distinct cell text is compared once."""
    wanted = norm_text(key)
    hit = np.zeros(len(placements), dtype=bool)
    for col in ("text", "description", "value_text"):
        if col in placements:
            col_text = placements[col].astype(object).where(placements[col].notna(), "")
            codes, uniq = pd.factorize(col_text.to_numpy(dtype=object))
            same = np.array([norm_text(u) == wanted for u in uniq] + [False])
            hit |= same[codes]
    return (np.flatnonzero(hit) if hit.any() else None), []


_MATCHERS: dict[str, Callable[[str, pd.DataFrame], tuple[np.ndarray | None, list[str]]]] = {
    "refdes": _match_refdes, "mpn": _match_mpn, "text": _match_text,
}


def match_original(alt: Alternate, placements: pd.DataFrame) -> tuple[str, np.ndarray]:
    """(how it matched, positions in ``placements``) of the part ``alt.original`` names: a
    designator list, an MPN or the text of a BOM line (value, description or joined cells).

    Raises ``InputError`` (with the alternates file's row) when nothing matches.
    """
    key = alt.original.strip()
    tried = [alt.original_kind] if alt.original_kind else list(_MATCHERS)
    missing: list[str] = []
    for kind in tried:
        if kind not in _MATCHERS:
            continue
        hit, not_there = _MATCHERS[kind](key, placements)
        missing = not_there or missing
        if hit is not None:
            return kind, hit
    if missing:
        raise InputError(f"designators not in the BOM: {', '.join(missing)}", path=alt.path,
                         row=alt.row, column="original", text=alt.original,
                         expected="designators of the BOM's capacitor placements")
    raise InputError("the original matches no capacitor placement of the BOM", path=alt.path,
                     row=alt.row, column="original", text=alt.original,
                     expected="an MPN, a designator list or the text of a BOM line")


def group_mates(base: pd.DataFrame, replaced: np.ndarray, groups) -> np.ndarray:
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
# The alternate's spec.

@frozen
class Proposed:
    """The alternate's spec as parsed, with its texts and where it came from."""

    spec: Mapping[str, Any]
    text: str = ""
    value_text: str = ""
    description: str = ""
    source: str = "MPN only (no text)"


def _empty_spec() -> dict:
    spec: dict[str, Any] = dict.fromkeys(SPEC_COLUMNS)
    spec.update(is_capacitor=False, warnings=(), unread=())
    return spec


def proposed_spec(alt: Alternate, placements: pd.DataFrame) -> Proposed:
    """The alternate's spec: parsed from its cells, else from a BOM line with its MPN."""
    if alt.cells:
        spec, text, value_text, desc = spec_from_cells(alt.cells)
        return Proposed(spec, text, value_text, desc, "alternate text")
    if alt.mpn and "mpn" in placements:
        hit = _mpn_hits(placements, alt.mpn)
        if hit.size:
            rec = placements.iloc[int(hit[0])]
            spec = {k: (None if not given(rec.get(k)) and k in _FLOAT_FIELDS else rec.get(k))
                    for k in SPEC_COLUMNS}
            return Proposed(spec, str(rec.get("text", "")), str(rec.get("value_text", "")),
                            str(rec.get("description", "")),
                            f"BOM row {int(rec['row'])} (same MPN)")
    return Proposed(_empty_spec())

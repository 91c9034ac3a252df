"""Normalise stage for the design sheet: reads the operating conditions of each placement (CSV, XLSX
or TOML) into one SI table keyed by designator, with groups (rails) and board-wide defaults.

Tables (CSV, TSV, XLSX)
-----------------------
One header row, then one row per target. The ``refdes`` cell of a row names what it addresses:

- one designator (``C14``), a list or a range (``C1-C9, C20``, expanded by ``bomcheck.parse.refdes``);
- a group (a rail such as ``+5V_LOGIC``): a row with a ``members`` cell defines the group and
  its values (``kind``: rail, the default, bank or series); a designator row may also join a
  group through its ``group`` cell, and a row naming a known group gives that group's values;
- ``*``: board-wide defaults.

Example::

    refdes,     members,    v_dc [V], v_tol_pct, Ripple mVpp, t_amb (°C), life,     notes
    *,          ,           ,         ,          ,            45,         10 years, board
    +5V_LOGIC,  "C1-C9,C20",5,        5,         100,         ,           ,         logic rail
    C14,        ,           ,         ,          ,            85 degC,    ,         hot spot

Headers, units in headers, peak marks, the cell grammar, plausible ranges and signs are in
``bomcheck.parse.design_cells``: ``13.2 V``, ``500 mV``, ``85 degC``, ``2.2 uF``, ``10 years``,
``50000 h``, ``±5 %`` (each distinct text read once, never evaluated); an empty cell, ``-`` or
``n/a`` gives no value; ``none`` in ``c_min_f`` says the circuit states no minimum capacitance
(stored as 0 F, so the capacitance rule does not apply). An unknown column holding values is an
error; suspicious values (``v_dc_max`` below ``v_dc``; a ``v_tol_pct`` under 1 %, which is what a
workbook cell formatted as a percentage gives for 5 %) and empty unknown columns are
``Design.warnings`` (``InputWarning``: file, row, column, message).

TOML: see ``bomcheck.parse.design_toml``.

Precedence
----------
Field by field: a designator row, else its group's row, else the defaults. A designator named
twice at the same level (two designator rows, or two groups) is an ``InputError`` naming both
rows. The upper bound of the rail travels with its DC value: a ``v_dc`` given at a more specific
level drops a ``v_dc_max`` given at a less specific one (a ``v_tol_pct`` still applies); where
only the tolerance is known, ``v_dc_max = v_dc x (1 + v_tol_pct/100)``. Values of a group that
belong to the group as a whole are not copied to its members: a bank's or series stack's
``c_min_f`` (the group meets the requirement: a member's own need is "none") and a series
stack's voltages (each member carries a share; its ``v_reverse_pk`` reaches every member
whole, the conservative reading); they stay in ``Group.conditions`` for the stress stage. A
designator row that sets a value its group's row also gives wins and is a warning naming both
rows; ``t_ambient_min_c`` above ``t_ambient_c`` is a warning too.

Circuit columns
---------------
Read by ``bomcheck.stress.circuit`` (bare numbers in the unit shown):

- ``kind`` (group rows): ``rail`` (default), ``bank`` (members in parallel on one rail: the
  bank's ``c_min_f`` is met by the sum of the members) or ``series`` (members in series across a
  bus: the group's voltages are the whole stack's, each member carries a worst-case share);
- ``r_balance_ohm`` (ohm) and ``r_balance_tol_pct`` (%): the balancing resistor across each
  member of a series stack and its tolerance (a group row gives every member the same);
- ``r_bleeder_ohm`` (ohm): discharge resistance across the placement, or across the whole bank
  or stack when given on its group row;
- ``v_safe_v`` (V, default from the rule set, 60 V) and ``t_discharge_max_s`` (s): the
  discharge requirement, time allowed to fall to the safe voltage;
- ``slew_v_per_s`` (V/s; ``12 V/ms`` works) or ``r_source_ohm`` (ohm): the rail's rate of rise at
  switch-on, or the effective series resistance feeding it (surge current, and the series
  resistance of solid tantalum); on a series stack's row they are the whole stack's;
- ``i_ripple_a`` (A rms) and ``f_ripple_hz`` (Hz): ripple current and its frequency; a bank's
  ripple current is shared among its members in proportion to their capacitance, a series
  stack's flows through every member.

Group-only values (a bank's ``c_min_f``, ``r_bleeder_ohm``, ``i_ripple_a``; a series stack's
voltages but ``v_reverse_pk``, its ``c_min_f``, ``r_bleeder_ohm``, ``slew_v_per_s``,
``r_source_ohm``) stay in ``Group.conditions``.
"""

from __future__ import annotations

import re
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field, replace
from pathlib import Path
from types import MappingProxyType
from typing import Any, NoReturn

import numpy as np
import pandas as pd

from bomcheck.parse.design_cells import (ALIASES, CONDITION_COLUMNS, SINGLE, Column, Entries,
                                   InputWarning, Labels, convert, is_design_header, parse_header,
                                   text_cells, unknown_column)
from bomcheck.errors import InputError, UnitError
from bomcheck.parse.refdes import expand, is_designator
from bomcheck.vocabulary import CONDITIONS

__all__ = ["ALIASES", "CONDITION_COLUMNS", "Design", "Group", "InputWarning", "design_from_table",
           "design_from_toml", "is_design_header", "read_design"]

SOURCES = ("row", "group", "defaults", "none")
GROUP_KINDS = ("rail", "bank", "series")

# Group values that describe the group as a whole, kept off its members (see module docstring).
_GROUP_ONLY: dict[str, tuple[str, ...]] = {
    "rail": (),
    "bank": ("c_min_f", "r_bleeder_ohm", "i_ripple_a"),
    "series": ("v_dc", "v_dc_max", "v_ripple_pk", "v_transient_pk", "v_ac_rms",
               "r_bleeder_ohm", "slew_v_per_s", "r_source_ohm", "c_min_f"),
}
# Groups whose c_min_f the group meets as a whole: a member has no need of its own ("none").
_SHARED_NEED = ("bank", "series")


@dataclass(frozen=True)
class Group:
    """A named set of placements sharing conditions: a rail, a bank on a rail or a series stack.

    ``conditions`` holds the group row's own values (SI, as given); ``row`` is the source row
    that defined the group (the first row naming it when only ``group`` cells name it).
    """

    name: str
    members: tuple[str, ...]
    row: int
    kind: str = "rail"
    conditions: Mapping[str, float] = field(default_factory=lambda: MappingProxyType({}))
    notes: str = ""


@dataclass(frozen=True, eq=False)
class Design:
    """The design sheet read: per-designator conditions, groups and board-wide defaults.

    ``conditions`` is indexed by designator with a float column per ``CONDITIONS`` name (SI;
    ``v_tol_pct`` in %), ``notes``, ``group`` (name or None), ``design_row`` (the source row that
    set the placement) and ``condition_source`` ("row" or "group"). Defaults are not folded in:
    ``for_placements`` applies them.
    """

    path: str
    sha256: str
    conditions: pd.DataFrame
    defaults: dict[str, float]
    groups: dict[str, Group]
    warnings: tuple[InputWarning, ...] = ()
    defaults_row: int | None = None
    format: str = ""
    sheet: str | None = None

    def for_placements(self, refdes: pd.Series) -> pd.DataFrame:
        """Conditions for each designator of ``refdes`` (same index), precedence applied.

        Columns: ``refdes``, every ``CONDITIONS`` name, ``notes``, ``group``, ``design_row``
        (nullable int) and ``condition_source`` ("row", "group", "defaults" or "none").
        """
        c = self.conditions.reindex(_keys(refdes))
        specific = c[list(CONDITION_COLUMNS)].to_numpy(dtype=float)
        board = np.array([self.defaults.get(k, np.nan) for k in CONDITION_COLUMNS], dtype=float)
        values = _merge_levels(specific, np.broadcast_to(board, specific.shape))
        out = pd.DataFrame(values, columns=list(CONDITION_COLUMNS), index=refdes.index)
        out.insert(0, "refdes", refdes.to_numpy())
        out["notes"] = pd.Series(c["notes"].fillna("").to_numpy(dtype=object),
                                 index=out.index, dtype=object)
        group = c["group"].to_numpy(dtype=object, copy=True)
        group[pd.isna(group)] = None
        out["group"] = pd.Series(group, index=out.index, dtype=object)
        addressed = c["design_row"].notna().to_numpy()
        row = pd.array(c["design_row"].to_numpy(), dtype="Int64")
        has_defaults = bool(self.defaults)
        if has_defaults and self.defaults_row is not None:
            row[~addressed] = self.defaults_row
        out["design_row"] = row
        fallback = "defaults" if has_defaults else "none"
        out["condition_source"] = pd.Series(c["condition_source"].fillna(fallback).to_numpy(
            dtype=object), index=out.index, dtype=object)
        return out

    def unmatched(self, bom_refdes: set[str]) -> list[tuple[str, int]]:
        """Designators the design sheet names (rows and group members) that the BOM lacks, with
        the design row that named them, in design-sheet order."""
        known = pd.Index(_keys(list(bom_refdes)), dtype=object)
        idx = self.conditions.index
        missing = ~idx.isin(known)
        rows = self.conditions["design_row"].to_numpy()[missing]
        return [(str(r), int(n)) for r, n in zip(idx[missing], rows)]


def _keys(refdes: Sequence[Any] | pd.Series) -> np.ndarray:
    """Designators as the design sheet stores them: stripped, upper case (as refdes.expand)."""
    text = np.asarray(refdes, dtype=object).astype(str)
    return np.char.upper(np.char.strip(text)).astype(object)


def _merge_levels(specific: np.ndarray, general: np.ndarray) -> np.ndarray:
    """Field-by-field precedence of two levels (columns in CONDITION_COLUMNS order), with the
    rail's upper bound travelling with its DC value and derived from the tolerance."""
    i_dc = CONDITION_COLUMNS.index("v_dc")
    i_max = CONDITION_COLUMNS.index("v_dc_max")
    i_tol = CONDITION_COLUMNS.index("v_tol_pct")
    out = np.where(np.isnan(specific), general, specific)
    own_dc = ~np.isnan(specific[:, i_dc]) & np.isnan(specific[:, i_max])
    out[own_dc, i_max] = np.nan
    derive = np.isnan(out[:, i_max])
    out[derive, i_max] = out[derive, i_dc] * (1.0 + out[derive, i_tol] / 100.0)
    return out


def _error_rows(path: str, what: str, rows: Sequence[int] | np.ndarray, *, column: str,
                text: str, expected: str) -> NoReturn:
    r = sorted(int(x) for x in rows)
    where = f"twice in row {r[0]}" if r[0] == r[-1] else f"by rows {r[0]} and {r[-1]}"
    raise InputError(f"{what} is addressed {where}", path=path, row=r[-1], column=column,
                     text=text, expected=expected)


def _expand(cell: str, *, path: str, row: int, column: str) -> list[str]:
    try:
        return expand(cell, path=path, row=row)
    except InputError as exc:
        exc.column = exc.column or column
        raise


_SINGLE_RE = re.compile(SINGLE)


def _build(e: Entries, *, path: str, labels: Labels, warnings: list[InputWarning]) -> Design:
    """Classify the entries (defaults, group and designator rows), check that no designator is
    addressed twice at one level, and build the per-designator table."""
    target, members, group, kind = (e.text[k] for k in ("refdes", "members", "group", "kind"))
    rows = e.rows
    has_values = ~np.isnan(e.values).all(axis=1)

    is_default = target == "*"
    defaults, defaults_row = _defaults(e, is_default, path=path, labels=labels)

    # Group names: rows with members, front-end groups, and the group cells of other rows.
    defines = (members != "") & ~is_default
    group_name = np.where(target != "", target, group)
    names = set(group_name[defines | e.is_group]) | set(group[group != ""])
    names.discard("")
    is_group_row = defines | e.is_group | ((target == "") & (group != ""))
    is_group_row |= pd.Index(target).isin(list(names)) & ~is_default

    # Designator rows: one designator (regex per distinct cell) or a list/range (expanded).
    rest = ~is_default & ~is_group_row & (target != "")
    single = rest & np.fromiter((bool(_SINGLE_RE.fullmatch(t)) for t in target), bool,
                                len(target))
    pos_single = np.flatnonzero(single)
    d_ref: list[np.ndarray] = [np.array([t.upper() for t in target[pos_single]], dtype=object)]
    d_pos = [pos_single]
    for i in np.flatnonzero(rest & ~single):
        items = _expand(target[i], path=path, row=int(rows[i]), column=labels.refdes)
        bad = [x for x in items if not is_designator(x)]
        if bad:
            raise InputError(f"{bad[0]!r} is not a designator, a list or range of designators, "
                             "or a group name", path=path, row=int(rows[i]),
                             column=labels.refdes, text=target[i],
                             expected="C5, C1-C9, C20, * or the name of a group defined by "
                                      "a row with members")
        d_ref.append(np.array([x.upper() for x in items], dtype=object))
        d_pos.append(np.full(len(items), i))
    d = pd.DataFrame({"refdes": pd.Series(np.concatenate(d_ref), dtype=object),
                      "pos": np.concatenate(d_pos).astype(np.int64)})
    d = d.sort_values("pos", kind="stable", ignore_index=True)  # source order
    dup = d["refdes"].duplicated(keep=False).to_numpy()
    if dup.any():
        first = d["refdes"].to_numpy()[dup][0]
        at = rows[d["pos"].to_numpy()[d["refdes"].to_numpy() == first][:2]]
        _error_rows(path, first, at, column=labels.refdes, text=first,
                    expected="each designator in one designator row (a group may also name "
                             "it: the designator row wins)")

    nowhere = ~is_default & ~is_group_row & (target == "") & has_values
    if nowhere.any():
        i = int(np.flatnonzero(nowhere)[0])
        raise InputError("row gives values but names no designator or group", path=path,
                         row=int(rows[i]), column=labels.refdes, text="",
                         expected="a designator, a list or range, a group name or *")
    not_group = ~is_group_row & (kind != "")
    if not_group.any():
        i = int(np.flatnonzero(not_group)[0])
        raise InputError("kind is only for group rows", path=path, row=int(rows[i]),
                         column=labels.kind, text=kind[i],
                         expected="an empty cell, or a group row")

    groups, membership = _groups(e, is_group_row, group_name, d, path=path, labels=labels,
                                 warnings=warnings)
    conditions = _conditions(e, d, groups, membership, warnings, path)
    _warn_upper_bound(conditions, warnings, path)
    for g in groups.values():  # a series stack's voltages stay on its own row
        gc = g.conditions
        if "v_dc_max" in gc and "v_dc" in gc and abs(gc["v_dc_max"]) < abs(gc["v_dc"]):
            warnings.append(InputWarning(
                path, g.row, "v_dc_max", f"v_dc_max is below v_dc (in magnitude) for group "
                f"{g.name} (row {g.row}): contradictory; the rail's upper bound is taken as the "
                "larger"))
    _warn_coldest(conditions, warnings, path)
    _warn_small_tolerance(e, warnings, path)
    return Design(path=path, sha256="", conditions=conditions, defaults=defaults,
                  groups=groups, warnings=tuple(warnings), defaults_row=defaults_row)


def _defaults(e: Entries, is_default: np.ndarray, *, path: str,
              labels: Labels) -> tuple[dict[str, float], int | None]:
    at = np.flatnonzero(is_default)
    if not len(at):
        return {}, None
    if len(at) > 1:
        _error_rows(path, "'*' (board-wide defaults)", e.rows[at[:2]], column=labels.refdes,
                    text="*", expected="one row of defaults")
    i = int(at[0])
    for col in ("members", "group", "kind"):
        if e.text[col][i]:
            raise InputError("the defaults row cannot have this field", path=path,
                             row=int(e.rows[i]), column=getattr(labels, col),
                             text=e.text[col][i], expected="an empty cell")
    values = {k: float(v) for k, v in zip(CONDITION_COLUMNS, e.values[i]) if not np.isnan(v)}
    return values, int(e.rows[i])


def _groups(e: Entries, is_group_row: np.ndarray, group_name: np.ndarray, d: pd.DataFrame, *,
            path: str, labels: Labels,
            warnings: list[InputWarning]) -> tuple[dict[str, Group], pd.DataFrame]:
    """The groups with their members; membership has one row per (designator, group) with the
    position of the entry that put the designator there."""
    rows, target, group = e.rows, e.text["refdes"], e.text["group"]
    own: dict[str, int] = {}
    for i in np.flatnonzero(is_group_row):
        name = str(group_name[i])
        if target[i] and group[i] and group[i] != target[i]:
            raise InputError("a group row names two groups", path=path, row=int(rows[i]),
                             column=labels.group, text=group[i],
                             expected=f"empty or {target[i]!r}")
        if name in own:
            _error_rows(path, f"group {name!r}", rows[[own[name], i]], column=labels.refdes,
                        text=name, expected="one row per group (list every member in its "
                                            "members cell)")
        own[name] = int(i)

    ref: list[str] = []
    grp: list[str] = []
    src: list[int] = []
    for name, i in own.items():
        cell = e.text["members"][i]
        if not cell:
            continue
        items = _expand(cell, path=path, row=int(rows[i]), column=labels.members)
        bad = [x for x in items if not is_designator(x)]
        if bad:
            raise InputError(f"{bad[0]!r} is not a designator", path=path, row=int(rows[i]),
                             column=labels.members, text=cell,
                             expected="designators, lists or ranges such as C1-C9, C20")
        upper = [x.upper() for x in items]
        if len(set(upper)) != len(upper):
            twice = pd.Series(upper)[pd.Series(upper).duplicated()].iloc[0]
            _error_rows(path, twice, [rows[i], rows[i]], column=labels.members, text=cell,
                        expected="each member once")
        ref += upper
        grp += [name] * len(upper)
        src += [int(i)] * len(upper)
    d_pos = d["pos"].to_numpy()
    tagged = group[d_pos] != ""
    m = pd.DataFrame({
        "refdes": pd.Series(ref + list(d["refdes"].to_numpy()[tagged]), dtype=object),
        "group": pd.Series(grp + list(group[d_pos[tagged]]), dtype=object),
        "pos": np.array(src + list(d_pos[tagged]), dtype=np.int64),
    }).drop_duplicates(["refdes", "group"])
    dup = m["refdes"].duplicated(keep=False).to_numpy()
    if dup.any():
        first = m["refdes"].to_numpy()[dup][0]
        both = m[m["refdes"].to_numpy() == first].iloc[:2]
        _error_rows(path, f"{first} (groups {' and '.join(map(repr, both['group']))})",
                    rows[both["pos"].to_numpy()], column=labels.members, text=first,
                    expected="each designator in one group")

    groups: dict[str, Group] = {}
    first_pos = m.groupby("group", sort=False)["pos"].min()
    for name, members in m.groupby("group", sort=False)["refdes"]:
        groups[str(name)] = _make_group(e, str(name), tuple(members), own.get(str(name)),
                                        int(rows[first_pos[name]]), path=path, labels=labels)
    for name, i in own.items():
        if name not in groups:
            groups[name] = _make_group(e, name, (), i, int(rows[i]), path=path, labels=labels)
            warnings.append(InputWarning(path, int(rows[i]), labels.members,
                                         f"group {name!r} has no members"))
    return groups, m


def _make_group(e: Entries, name: str, members: tuple[str, ...], i: int | None,
                first_row: int, *, path: str, labels: Labels) -> Group:
    if i is None:  # named only by the group cells of designator rows
        return Group(name, members, first_row)
    kind = e.text["kind"][i].lower() or "rail"
    if kind not in GROUP_KINDS:
        raise InputError("unknown group kind", path=path, row=int(e.rows[i]),
                         column=labels.kind, text=e.text["kind"][i],
                         expected="one of " + ", ".join(GROUP_KINDS))
    own = {k: float(v) for k, v in zip(CONDITION_COLUMNS, e.values[i]) if not np.isnan(v)}
    return Group(name, members, int(e.rows[i]), kind, MappingProxyType(own), e.text["notes"][i])


def _conditions(e: Entries, d: pd.DataFrame, groups: dict[str, Group],
                membership: pd.DataFrame, warnings: list[InputWarning],
                path: str) -> pd.DataFrame:
    """Per-designator table: designator rows over group rows, field by field (a designator
    row that overrides a value its group gives is a warning naming both rows). A member of a
    bank or series stack whose group gives c_min_f has no need of its own: the group meets it
    (``bank_c_margin``), so the member's c_min_f is "none" unless its own row gives one."""
    index = pd.Index(pd.concat([d["refdes"], membership["refdes"]]).drop_duplicates(),
                     dtype=object, name="refdes")
    n, k = len(index), len(CONDITION_COLUMNS)
    d_pos = d["pos"].to_numpy()
    at_d = index.get_indexer(d["refdes"])
    specific = np.full((n, k), np.nan)
    specific[at_d] = e.values[d_pos]

    g_values = np.full((len(groups), k), np.nan)
    g_rows = np.zeros(len(groups), dtype=np.int64)
    g_notes = np.full(len(groups), "", dtype=object)
    for j, g in enumerate(groups.values()):
        g_rows[j], g_notes[j] = g.row, g.notes
        for c, col in enumerate(CONDITION_COLUMNS):
            if col in g.conditions and col not in _GROUP_ONLY[g.kind]:
                g_values[j, c] = g.conditions[col]
    g_at = pd.Index(list(groups), dtype=object).get_indexer(membership["group"])
    at_m = index.get_indexer(membership["refdes"])
    general = np.full((n, k), np.nan)
    general[at_m] = g_values[g_at]
    _warn_overrides(specific, general, index, d, e, groups, membership, warnings, path)
    i_need = CONDITION_COLUMNS.index("c_min_f")
    shared = np.array([g.kind in _SHARED_NEED and "c_min_f" in g.conditions
                       for g in groups.values()], dtype=bool)
    general[at_m[shared[g_at]], i_need] = 0.0

    notes = np.full(n, "", dtype=object)
    notes[at_m] = g_notes[g_at]
    d_notes = e.text["notes"][d_pos]
    keep = d_notes != ""
    notes[at_d[keep]] = d_notes[keep]
    group_col = np.full(n, None, dtype=object)
    group_col[at_m] = membership["group"].to_numpy()
    design_row = np.zeros(n, dtype=np.int64)
    design_row[at_m] = g_rows[g_at]
    design_row[at_d] = e.rows[d_pos]
    source = np.full(n, "group", dtype=object)
    source[at_d] = "row"

    out = pd.DataFrame(_merge_levels(specific, general), index=index,
                       columns=list(CONDITION_COLUMNS))
    out["notes"] = pd.Series(notes, index=index, dtype=object)
    out["group"] = pd.Series(group_col, index=index, dtype=object)  # None, not NaN
    out["design_row"] = design_row
    out["condition_source"] = pd.Series(source, index=index, dtype=object)
    return out.iloc[np.argsort(design_row, kind="stable")]


def _warn_overrides(specific: np.ndarray, general: np.ndarray, index: pd.Index,
                    d: pd.DataFrame, e: Entries, groups: dict[str, Group],
                    membership: pd.DataFrame, warnings: list[InputWarning], path: str) -> None:
    """One warning per condition a designator row sets differently from its group's row,
    naming the first such designator, both rows and both values (the designator row wins)."""
    with np.errstate(invalid="ignore"):
        differ = (~np.isnan(specific) & ~np.isnan(general)
                  & ~np.isclose(specific, general, rtol=1e-9, atol=0.0))
    if not differ.any():
        return
    d_row = pd.Series(e.rows[d["pos"].to_numpy()], index=pd.Index(d["refdes"], dtype=object))
    g_row = {name: g.row for name, g in groups.items()}
    group_of = pd.Series(membership["group"].to_numpy(), index=pd.Index(membership["refdes"],
                                                                        dtype=object))
    for c in np.flatnonzero(differ.any(axis=0)):
        at = np.flatnonzero(differ[:, c])
        ref = index[at[0]]
        grp = str(group_of.get(ref))
        more = f" (and {len(at) - 1} more designator(s))" if len(at) > 1 else ""
        warnings.append(InputWarning(
            path, int(d_row[ref]), CONDITION_COLUMNS[c],
            f"{CONDITION_COLUMNS[c]} of {ref} (row {int(d_row[ref])}) is {specific[at[0], c]:g}, "
            f"overriding {general[at[0], c]:g} of its group {grp} (row {g_row.get(grp)}){more}: "
            "the designator row is used; check which is meant"))


def _warn_coldest(conditions: pd.DataFrame, warnings: list[InputWarning], path: str) -> None:
    """t_ambient_min_c above t_ambient_c contradicts itself: warn naming the row (the stress
    stage takes the lower of the two as the coldest)."""
    high = (conditions["t_ambient_min_c"] > conditions["t_ambient_c"]).to_numpy()
    if high.any():
        first = int(np.argmax(high))
        row = int(conditions["design_row"].iloc[first])
        warnings.append(InputWarning(
            path, row, "t_ambient_min_c",
            f"t_ambient_min_c is above t_ambient_c for {int(high.sum())} designator(s), first "
            f"{conditions.index[first]} (row {row}): the coldest ambient cannot be above the "
            "operating ambient; the lower is used"))


def _warn_upper_bound(conditions: pd.DataFrame, warnings: list[InputWarning], path: str) -> None:
    low = (conditions["v_dc_max"].abs() < conditions["v_dc"].abs()).to_numpy()
    if low.any():
        first = np.argmax(low)
        warnings.append(InputWarning(
            path, int(conditions["design_row"].iloc[first]), "v_dc_max",
            f"v_dc_max is below v_dc (in magnitude) for {int(low.sum())} designator(s), first "
            f"{conditions.index[first]} (row {int(conditions['design_row'].iloc[first])}): "
            "contradictory; the rail's upper bound is taken as the larger"))


def _warn_small_tolerance(e: Entries, warnings: list[InputWarning], path: str) -> None:
    # A workbook cell formatted as a percentage stores 5 % as 0.05, which reads as 0.05 %.
    tol = e.values[:, CONDITION_COLUMNS.index("v_tol_pct")]
    small = (tol > 0) & (tol < 1)
    if small.any():
        i = int(np.argmax(small))
        warnings.append(InputWarning(
            path, int(e.rows[i]), "v_tol_pct", f"v_tol_pct of {tol[i]:g} % in row "
            f"{int(e.rows[i])} is unusually small; a cell formatted as a percentage stores 5 % as "
            "0.05: write 5 or '5 %'"))


# --- tables (CSV, XLSX) -----------------------------------------------------------------------


def design_from_table(frame: pd.DataFrame, rows: Sequence[int] | np.ndarray | None = None, *,
                      path: str = "<table>", header_row: int | None = None) -> Design:
    """Read a design sheet already split into cells: ``frame`` columns are the headers, cells
    text ("" for empty); ``rows`` are the source row numbers of the frame's rows (default: 2, 3...
    under a header in row 1).

    Raises ``InputError`` naming the file, row and column for a bad cell or a conflicting row.
    """
    n = len(frame)
    if rows is None:
        src, header_row = np.arange(2, n + 2), 1 if header_row is None else header_row
    else:
        src = np.asarray(rows, dtype=np.int64)
    columns = [parse_header(str(h)) for h in frame.columns]
    warnings: list[InputWarning] = []
    taken: dict[str, str] = {}
    cells: dict[int, np.ndarray] = {}
    for pos, col in enumerate(columns):
        cells[pos] = text_cells(frame.iloc[:, pos])
        if col.field is None:
            found = unknown_column(col.header, bool((cells[pos] != "").any()), path=path,
                                   row=header_row)
            if found is not None:
                warnings.append(found)
            continue
        if col.field == "notes" and "notes" in taken:  # a second notes column: kept out
            columns[pos] = Column(col.header, None, None, None)
            continue
        if col.field in taken:
            raise InputError(f"two columns give {col.field}: {taken[col.field]!r} and "
                             f"{col.header!r}", path=path, row=header_row, column=col.header,
                             expected="one column per field")
        taken[col.field] = col.header
    if "refdes" not in taken and "group" not in taken:
        raise InputError("no designator column", path=path, row=header_row,
                         expected="a column named refdes (or "
                                  + ", ".join(ALIASES["refdes"][1:5]) + ") or group")

    texts: dict[str, np.ndarray] = {}
    values: dict[str, np.ndarray] = {}
    for pos, col in enumerate(columns):
        if col.field is None:
            continue
        if col.field not in CONDITIONS:
            texts[col.field] = cells[pos]
            continue

        def fail(at: int | None, text: str, exc: UnitError, col: Column = col) -> NoReturn:
            raise InputError(f"{exc.problem} ({col.field})", path=path,
                             row=header_row if at is None else int(src[at]),
                             column=col.header, text=text, expected=exc.expected) from None

        values[col.field] = convert(cells[pos], col, fail)
    labels = Labels(**{k: taken.get(k, k) for k in ("refdes", "members", "group", "kind")})
    return _build(Entries.make(src, texts, values), path=path, labels=labels,
                  warnings=warnings)


def design_from_toml(text: str, *, path: str = "<toml>") -> Design:
    """Read a TOML design sheet (format in ``bomcheck.parse.design_toml``)."""
    from bomcheck.parse.design_toml import entries_from_toml

    entries, labels, warnings = entries_from_toml(text, path=path)
    return _build(entries, path=path, labels=labels, warnings=warnings)


# --- files ------------------------------------------------------------------------------------


def read_design(path: str, *, sheet: str | int | None = None) -> Design:
    """Read a design sheet (CSV/TSV/XLSX through ``bomcheck.read.reader``, or TOML) into a Design.

    ``sheet`` picks the XLSX sheet (name or 1-based index). Raises ``InputError`` for a file that
    cannot be read or a cell that cannot be used.
    """
    from bomcheck.read.reader import read_input, toml_text

    data, sha256 = read_input(str(path), "design sheet")
    if Path(path).suffix.lower() == ".toml":
        text = toml_text(data, str(path))
        design = design_from_toml(text, path=str(path))
        extra = () if sheet is None else (
            InputWarning(str(path), None, None, "a TOML design has no sheets; --sheet ignored"),)
        return replace(design, sha256=sha256, format="toml",
                       warnings=design.warnings + extra)
    from bomcheck.read.reader import read_input_table

    raw = read_input_table(
        str(path), sheet=sheet, header_predicate=is_design_header, what="design-sheet",
        expected="a header row with a designator (refdes) or group column and a value column "
                 "such as v_dc, t_ambient_c or members")
    design = design_from_table(raw.frame, raw.rows, path=str(path), header_row=raw.header_row)
    return replace(design, sha256=sha256, format=raw.format, sheet=raw.sheet)

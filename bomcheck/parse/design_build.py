"""Normalise stage: the design sheet's entries (rows of a table, tables of a TOML file) built
into a ``Design``: defaults, group and designator rows told apart, each designator addressed
once per level, group membership, and the per-designator conditions with precedence applied."""

from __future__ import annotations

import re
from collections.abc import Sequence
from types import MappingProxyType
from typing import NoReturn

import numpy as np
import pandas as pd

from bomcheck.errors import InputError
from bomcheck.parse.design_cells import (CONDITION_COLUMNS, SINGLE, Entries, InputWarning,
                                         Labels)
from bomcheck.parse.design_model import (GROUP_KINDS, RAIL_COLUMNS, Design, Group,
                                         merge_levels, text_column)
from bomcheck.parse.refdes import expand, is_designator

# Group values that describe the group as a whole, kept off its members (see
# ``bomcheck.parse.design``).
_GROUP_ONLY: dict[str, tuple[str, ...]] = {
    "rail": (),
    "bank": ("c_min_f", "r_bleeder_ohm", "i_ripple_a"),
    "series": ("v_dc", "v_dc_max", "v_ripple_pk", "v_transient_pk", "v_ac_rms",
               "r_bleeder_ohm", "slew_v_per_s", "r_source_ohm", "c_min_f"),
}
# Groups whose c_min_f the group meets as a whole: a member has no need of its own ("none").
_SHARED_NEED = ("bank", "series")
_SINGLE_RE = re.compile(SINGLE)
_WHOLE_LINE = re.compile(rf"^{SINGLE}$", re.MULTILINE)


def build(e: Entries, *, path: str, labels: Labels, warnings: list[InputWarning]) -> Design:
    """Classify the entries (defaults, group and designator rows), check that no designator is
    addressed twice at one level, and build the per-designator table."""
    target, group, kind = (e.text[k] for k in ("refdes", "group", "kind"))
    is_default = target == "*"
    defaults, defaults_row = _defaults(e, is_default, path=path, labels=labels)
    group_name, is_group_row = _group_rows(e, is_default)
    rest = ~is_default & ~is_group_row & (target != "")
    d, d_index = _designator_rows(e, rest, path=path, labels=labels)
    has_values = e.has_values()
    nowhere = ~is_default & ~is_group_row & (target == "") & has_values
    if nowhere.any():
        i = int(np.flatnonzero(nowhere)[0])
        raise InputError("row gives values but names no designator or group", path=path,
                         row=int(e.rows[i]), column=labels.refdes, text="",
                         expected="a designator, a list or range, a group name or *")
    not_group = ~is_group_row & (kind != "")
    if not_group.any():
        i = int(np.flatnonzero(not_group)[0])
        raise InputError("kind is only for group rows", path=path, row=int(e.rows[i]),
                         column=labels.kind, text=kind[i],
                         expected="an empty cell, or a group row")
    groups, membership = _groups(e, is_group_row, group_name, d, path=path, labels=labels,
                                 warnings=warnings)
    conditions = _conditions(e, (d, d_index), groups, membership, warnings, path)
    _warn_upper_bound(conditions, warnings, path)
    _warn_group_upper_bound(groups, warnings, path)
    _warn_coldest(conditions, warnings, path)
    _warn_small_tolerance(e, warnings, path)
    return Design(path=path, sha256="", table=conditions, defaults=defaults,
                  groups=groups, warnings=tuple(warnings), defaults_row=defaults_row)


def _group_rows(e: Entries, is_default: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """The group each row would define (its target, else its group cell) and which rows are
    group rows: rows with members, front-end groups, rows naming only a group, and rows whose
    target is a group named anywhere."""
    target, members, group = (e.text[k] for k in ("refdes", "members", "group"))
    defines = (members != "") & ~is_default
    group_name = np.where(target != "", target, group)
    names = set(group_name[defines | e.is_group]) | set(group[group != ""])
    names.discard("")
    is_group_row = defines | e.is_group | ((target == "") & (group != ""))
    if names:
        is_group_row |= pd.Index(target, dtype=object, copy=False).isin(list(names)) & ~is_default
    return group_name, is_group_row


def _designator_rows(e: Entries, rest: np.ndarray, *, path: str,
                     labels: Labels) -> tuple[pd.DataFrame, pd.Index]:
    """One row per designator a designator row names (``refdes``, ``pos`` of the entry), in
    source order, and those designators as an index (its hash table built by the uniqueness
    test, for the joins after): a single designator by one pattern test per cell, a list or
    range expanded; a designator named by two rows is an error naming both."""
    target, rows = e.text["refdes"], e.rows
    pos_rest = np.flatnonzero(rest)
    single, upper = _single_designators(target[pos_rest])
    d_ref: list[np.ndarray] = [upper]
    d_pos = [pos_rest[single]]
    for i in pos_rest[~single]:
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
    ref = np.concatenate(d_ref) if len(d_ref) > 1 else upper
    pos = np.concatenate(d_pos).astype(np.int64)
    if len(d_ref) > 1:  # lists and ranges were appended: back to source order
        order = np.argsort(pos, kind="stable")
        ref, pos = ref[order], pos[order]
    index = pd.Index(ref, dtype=object, name="refdes", copy=False)
    d = pd.DataFrame({"refdes": pd.Series(ref, dtype=object, copy=False), "pos": pos},
                     copy=False)
    if not index.is_unique:
        dup = d["refdes"].duplicated(keep=False).to_numpy()
        first = ref[dup][0]
        at = rows[pos[ref == first][:2]]
        _error_rows(path, first, at, column=labels.refdes, text=first,
                    expected="each designator in one designator row (a group may also name "
                             "it: the designator row wins)")
    return d, index


def _single_designators(cells: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Which cells hold one designator (``SINGLE``, whole cell) and those designators in upper
    case. The cells are joined into one text and tested and upper-cased in one pass, not one
    call per cell: ASCII text by character classes as arrays, other text by one pattern pass (a
    matching line becomes empty); a cell with a line break in it sends the whole column to the
    cell-by-cell test."""
    joined = "\n".join(cells.tolist())
    if len(cells) and joined.count("\n") == len(cells) - 1:
        if joined.isascii():
            single = _single_ascii(joined)
        else:
            single = np.array(_WHOLE_LINE.sub("", joined).split("\n"), dtype=object) == ""
        if single.all():
            upper_text = joined.upper()
            if upper_text == joined:  # upper case already: the cells themselves
                return single, cells
            return single, np.array(upper_text.split("\n"), dtype=object)
        picked = "\n".join(cells[single].tolist()).upper()
        upper = np.array(picked.split("\n") if single.any() else [], dtype=object)
        return single, upper
    single = np.fromiter((bool(_SINGLE_RE.fullmatch(t)) for t in cells), bool, len(cells))
    return single, np.array([t.upper() for t in cells[single]], dtype=object)


def _single_ascii(joined: str) -> np.ndarray:
    """``SINGLE`` (letters or ``_``, digits, at most one letter) tested on every line of an
    ASCII text at once: a line is one designator when it starts with a letter or ``_``, holds a
    digit, nothing but letters, ``_`` and digits, and after a digit only one letter, last."""
    a = np.frombuffer((joined + "\n").encode("ascii"), dtype=np.uint8)
    ends = np.flatnonzero(a == 10)
    starts = np.concatenate(([0], ends[:-1] + 1))
    upper = a & 0xDF  # ASCII letters folded to upper case
    alpha = (upper >= 65) & (upper <= 90)
    letter = alpha | (a == 95)
    digit = (a >= 48) & (a <= 57)
    bad = ~(letter | digit)
    bad[ends] = False
    after_digit = np.zeros(len(a), dtype=bool)
    after_digit[1:] = digit[:-1]
    last = np.zeros(len(a), dtype=bool)
    last[ends - 1] = True  # the last character of a line (the separator of an empty one)
    bad |= after_digit & ((alpha & ~last) | (a == 95))  # after the digits: one last letter
    first = letter[starts] & (starts < ends)
    return (first & np.logical_or.reduceat(digit, starts)
            & ~np.logical_or.reduceat(bad, starts))


def _warn_group_upper_bound(groups: dict[str, Group], warnings: list[InputWarning],
                            path: str) -> None:
    """A series stack's voltages stay on its own row: a v_dc_max below its v_dc is warned
    about there."""
    for g in groups.values():
        gc = g.conditions
        if "v_dc_max" in gc and "v_dc" in gc and abs(gc["v_dc_max"]) < abs(gc["v_dc"]):
            warnings.append(InputWarning(
                path, g.row, "v_dc_max", f"v_dc_max is below v_dc (in magnitude) for group "
                f"{g.name} (row {g.row}): contradictory; the rail's upper bound is taken as the "
                "larger"))


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
    return e.own(i), int(e.rows[i])


def _groups(e: Entries, is_group_row: np.ndarray, group_name: np.ndarray, d: pd.DataFrame, *,
            path: str, labels: Labels,
            warnings: list[InputWarning]) -> tuple[dict[str, Group], pd.DataFrame]:
    """The groups with their members; membership has one row per (designator, group) with the
    position of the entry that put the designator there."""
    rows, group = e.rows, e.text["group"]
    own = _own_rows(e, is_group_row, group_name, path=path, labels=labels)
    ref, grp, src = _listed_members(e, own, path=path, labels=labels)
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
    # The members of each group in entry order, groups in order of first appearance: one sort
    # of the group codes (a groupby on a frame this small costs more than the grouping).
    codes, names = pd.factorize(m["group"].to_numpy(dtype=object), use_na_sentinel=True)
    order = np.argsort(codes, kind="stable")
    bounds = np.searchsorted(codes[order], np.arange(len(names) + 1)).tolist()
    members, pos = m["refdes"].to_numpy(dtype=object)[order], m["pos"].to_numpy()[order]
    for j, name in enumerate(names.tolist()):
        a, b = bounds[j], bounds[j + 1]
        groups[str(name)] = _make_group(e, str(name), tuple(members[a:b]), own.get(str(name)),
                                        int(rows[pos[a:b].min()]), path=path, labels=labels)
    for name, i in own.items():
        if name not in groups:
            groups[name] = _make_group(e, name, (), i, int(rows[i]), path=path, labels=labels)
            warnings.append(InputWarning(path, int(rows[i]), labels.members,
                                         f"group {name!r} has no members"))
    return groups, m


def _own_rows(e: Entries, is_group_row: np.ndarray, group_name: np.ndarray, *, path: str,
              labels: Labels) -> dict[str, int]:
    """The entry that defines each group (its position): one per group."""
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
    return own


def _listed_members(e: Entries, own: dict[str, int], *, path: str, labels: Labels
                    ) -> tuple[list[str], list[str], list[int]]:
    """(designator, group, entry position) of every member a group's members cell lists."""
    rows = e.rows
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
    return ref, grp, src


def _make_group(e: Entries, name: str, members: tuple[str, ...], i: int | None,
                first_row: int, *, path: str, labels: Labels) -> Group:
    if i is None:  # named only by the group cells of designator rows
        return Group(name, members, first_row)
    kind = e.text["kind"][i].lower() or "rail"
    if kind not in GROUP_KINDS:
        raise InputError("unknown group kind", path=path, row=int(e.rows[i]),
                         column=labels.kind, text=e.text["kind"][i],
                         expected="one of " + ", ".join(GROUP_KINDS))
    own = e.own(i)
    return Group(name, members, int(e.rows[i]), kind, MappingProxyType(own), e.text["notes"][i])


def _conditions(e: Entries, designated: tuple[pd.DataFrame, pd.Index], groups: dict[str, Group],
                membership: pd.DataFrame, warnings: list[InputWarning],
                path: str) -> pd.DataFrame:
    """Per-designator table: designator rows over group rows, field by field (a designator
    row that overrides a value its group gives is a warning naming both rows). A member of a
    bank or series stack whose group gives c_min_f has no need of its own: the group meets it
    (``bank_c_margin``), so the member's c_min_f is "none" unless its own row gives one."""
    d, index = designated
    at_d = np.arange(len(d))
    at_m = index.get_indexer(pd.Index(membership["refdes"].to_numpy(), dtype=object))
    new = at_m < 0  # members that no designator row names: after them, in membership order
    if new.any():
        at_m[new] = len(index) + np.arange(int(new.sum()))
        index = index.append(pd.Index(membership["refdes"].to_numpy()[new], dtype=object))
        index = index.rename("refdes")
    n = len(index)
    given = dict(zip(e.columns, (~np.isnan(e.given).all(axis=0)).tolist()))
    names = active_columns(np.array([given.get(c, False) for c in CONDITION_COLUMNS]))
    d_pos = d["pos"].to_numpy()
    specific = np.full((n, len(names)), np.nan, order="F")  # designator rows first (at_d)
    for j, name in enumerate(names):
        values = e.column(name)
        if values is not None:
            specific[:len(d_pos), j] = values[d_pos]
    g_values = np.full((len(groups), len(names)), np.nan)
    for j, g in enumerate(groups.values()):
        for c, col in enumerate(names):
            if col in g.conditions and col not in _GROUP_ONLY[g.kind]:
                g_values[j, c] = g.conditions[col]
    g_at = pd.Index(list(groups), dtype=object).get_indexer(membership["group"])
    general = None
    if len(at_m):  # no group has members: no group level
        general = np.full((n, len(names)), np.nan, order="F")
        general[at_m] = g_values[g_at]
        _warn_overrides(specific, general, names, index, d, e, groups, membership, warnings,
                        path)
        shared = np.array([g.kind in _SHARED_NEED and "c_min_f" in g.conditions
                           for g in groups.values()], dtype=bool)
        if "c_min_f" in names:  # a shared need is always given, so its column is active
            general[at_m[shared[g_at]], names.index("c_min_f")] = 0.0
    merged = merge_levels(specific, general, names)
    del general
    return _conditions_table(e, index, merged, names, (d_pos, at_d), (at_m, g_at), groups)


def active_columns(given: np.ndarray) -> list[str]:
    """The condition columns that need arrays: those given anywhere (``given`` in
    ``CONDITION_COLUMNS`` order) and the rail's DC value, upper bound and tolerance (the bound
    is derived from the other two); every other column is NaN throughout."""
    return [c for c, g in zip(CONDITION_COLUMNS, given) if g or c in RAIL_COLUMNS]


def _conditions_table(e: Entries, index: pd.Index, merged: np.ndarray, names: list[str],
                      designators: tuple[np.ndarray, np.ndarray],
                      members: tuple[np.ndarray, np.ndarray],
                      groups: dict[str, Group]) -> pd.DataFrame:
    """The per-designator table (``Design.table``) in design-sheet order: the active condition
    columns, the design row, and notes, group and source of the values as categoricals."""
    (d_pos, at_d), (at_m, g_at) = designators, members
    n = len(index)
    g_rows = np.array([g.row for g in groups.values()], dtype=np.int64)
    g_notes = np.array([g.notes for g in groups.values()], dtype=object)
    notes = np.full(n, "", dtype=object)
    notes[at_m] = g_notes[g_at]
    d_notes = e.text["notes"][d_pos]
    keep = d_notes != ""
    notes[at_d[keep]] = d_notes[keep]
    group_codes = np.full(n, -1, dtype=np.int32)
    group_codes[at_m] = g_at
    design_row = np.zeros(n, dtype=np.int64)
    design_row[at_m] = g_rows[g_at]
    design_row[at_d] = e.rows[d_pos]
    source_codes = np.zeros(n, dtype=np.int8)  # "group"
    source_codes[at_d] = 1  # "row"
    if n and (np.diff(design_row) < 0).any():  # members after the rows that name them
        order = np.argsort(design_row, kind="stable")
        index, merged, notes = index[order], merged[order], notes[order]
        design_row, group_codes, source_codes = (design_row[order], group_codes[order],
                                                 source_codes[order])
    out = pd.DataFrame(merged, index=index, columns=names, copy=False)
    out["design_row"] = design_row
    out["notes"] = text_column(notes)
    out["group"] = pd.Categorical.from_codes(group_codes, pd.Index(list(groups), dtype=object))
    out["condition_source"] = pd.Categorical.from_codes(
        source_codes, pd.Index(["group", "row"], dtype=object))
    return out


def _warn_overrides(specific: np.ndarray, general: np.ndarray, names: list[str],
                    index: pd.Index, d: pd.DataFrame, e: Entries, groups: dict[str, Group],
                    membership: pd.DataFrame, warnings: list[InputWarning], path: str) -> None:
    """One warning per condition a designator row sets differently from its group's row,
    naming the first such designator, both rows and both values (the designator row wins)."""
    both = np.flatnonzero(~(np.isnan(specific) | np.isnan(general)).all(axis=1))
    if not len(both):  # no designator row gives a value its group gives too
        return
    with np.errstate(invalid="ignore"):
        s, g = specific[both], general[both]
        differ = ~np.isnan(s) & ~np.isnan(g) & ~np.isclose(s, g, rtol=1e-9, atol=0.0)
    if not differ.any():
        return
    d_row = pd.Series(e.rows[d["pos"].to_numpy()], index=pd.Index(d["refdes"], dtype=object))
    g_row = {name: g.row for name, g in groups.items()}
    group_of = pd.Series(membership["group"].to_numpy(), index=pd.Index(membership["refdes"],
                                                                        dtype=object))
    for c in np.flatnonzero(differ.any(axis=0)):
        at = both[np.flatnonzero(differ[:, c])]
        ref = index[at[0]]
        grp = str(group_of.get(ref))
        more = f" (and {len(at) - 1} more designator(s))" if len(at) > 1 else ""
        warnings.append(InputWarning(
            path, int(d_row[ref]), names[c],
            f"{names[c]} of {ref} (row {int(d_row[ref])}) is {specific[at[0], c]:g}, "
            f"overriding {general[at[0], c]:g} of its group {grp} (row {g_row.get(grp)}){more}: "
            "the designator row is used; check which is meant"))


def _warn_coldest(conditions: pd.DataFrame, warnings: list[InputWarning], path: str) -> None:
    """t_ambient_min_c above t_ambient_c contradicts itself: warn naming the row (the stress
    stage takes the lower of the two as the coldest)."""
    if "t_ambient_min_c" not in conditions or "t_ambient_c" not in conditions:
        return
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
    tol = e.column("v_tol_pct")
    if tol is None:
        return
    small = (tol > 0) & (tol < 1)
    if small.any():
        i = int(np.argmax(small))
        warnings.append(InputWarning(
            path, int(e.rows[i]), "v_tol_pct", f"v_tol_pct of {tol[i]:g} % in row "
            f"{int(e.rows[i])} is unusually small; a cell formatted as a percentage stores 5 % as "
            "0.05: write 5 or '5 %'"))

"""Parse stage, per BOM line: the specs of a line's cells merged into one spec, field group by
field group.

Where the cells disagree on a number, the conservative reading wins (smaller capacitance, lower
rated voltage, wider tolerance, lower rated maximum and higher rated minimum temperature, the
dielectric code with the narrower temperature range or larger change) and the disagreement is a
finding; for the other fields a dedicated column wins over the value, the value over the
description. The merge of the fields depends only on what the specs say, so it runs once per
distinct combination of readings (many lines whose descriptions differ only in a lot number or
a note read the same), and each line adds its own cells' warnings.
"""

from __future__ import annotations

import math
import operator
import re
from collections.abc import Callable
from typing import Any

from bomcheck.parse import codes
from bomcheck.parse.readings import CONFLICT_MARK, UNREAD_MARK
from bomcheck.parse.values import format_capacitance
from bomcheck.spec import SPEC_KEYS, CapSpec

SPEC_COLUMNS: tuple[str, ...] = tuple(k for k in SPEC_KEYS if k != "text")

# The cells parsed for the specification, with the parser context each one gets.
SPEC_SOURCES: tuple[str, ...] = (
    "value", "description", "voltage", "tolerance", "dielectric", "package", "temperature",
    "category", "value_alt", "description_alt",
)
_SOURCE_LABELS = {
    "value": "value", "description": "description", "voltage": "voltage column",
    "tolerance": "tolerance column", "dielectric": "dielectric column",
    "package": "package column", "temperature": "temperature column",
    "category": "category column", "value_alt": "second value column",
    "description_alt": "second description column",
}
# The parser context of each source (a category cell is free text; a second value or
# description column reads as the first).
_CONTEXT = {**{s: s for s in SPEC_SOURCES}, "category": "description", "value_alt": "value",
            "description_alt": "description"}
_ALT = ("value_alt", "description_alt")
# Field groups taken whole from the first source that has the group's main (first) field.
_GROUPS: tuple[tuple[tuple[str, ...], tuple[str, ...]], ...] = (
    (("capacitance_f",), ("value", "description", *_ALT)),
    (("voltage_v", "voltage_kind"), ("voltage", "value", "description", *_ALT)),
    (("tol_minus_pct", "tol_plus_pct", "tol_abs_f"), ("tolerance", "value", "description", *_ALT)),
    (("dielectric", "dielectric_class", "cap_change_minus_pct", "cap_change_plus_pct",
      "tc_ppm", "tc_tol_ppm"), ("dielectric", "value", "description", *_ALT)),
    (("technology", "film_material", "polarized"),
     ("dielectric", "value", "description", "category", *_ALT)),
    (("package", "package_note"), ("package", "value", "description", *_ALT)),
    (("safety_class",), ("value", "description", "dielectric", *_ALT)),
    (("emi_filter",), ("value", "description", *_ALT)),
)
# Numeric field groups resolved conservatively, with the direction that is conservative.
_CONSERVATIVE = {"capacitance_f": "smaller capacitance", "voltage_v": "lower rated voltage",
                 "tol_minus_pct": "wider tolerance",
                 "dielectric": "narrower temperature range or larger change"}


class SpecMerge:
    """Merges the specs of one line's cells (``spec`` parses one cell of a source, cached).

    Caches per spec (by id) and per distinct combination of readings (the specs' fields
    without their text, warnings and unread tokens). Every spec an id-keyed cache holds is kept
    alive in ``_alive``, so its id can never pass to another spec while the merger lives.
    """

    def __init__(self, spec: Callable[[str, str], CapSpec | None]) -> None:
        self.spec = spec
        self._group_cache: dict[int, list[tuple[Any, ...] | None]] = {}
        self._core: dict[int, tuple[Any, ...]] = {}
        self._merged: dict[tuple, tuple[dict[str, Any], tuple[tuple[str, str], ...]]] = {}
        # The same by the specs themselves (by id; the specs live in the parser's cache).
        self._merged_ids: dict[tuple, tuple[dict[str, Any], tuple[tuple[str, str], ...]]] = {}
        # Per spec and source: stated temperatures and conflict warnings.
        self._stated: dict[tuple[int, str], tuple[float | None, float | None]] = {}
        self._implied: dict[str, tuple[float | None, float | None] | None] = {}
        self._alive: dict[int, CapSpec] = {}

    def derived_temps(self, spec: CapSpec) -> tuple[float | None, float | None] | None:
        """The temperature range the spec's dielectric code implies (None without a code)."""
        if not spec.dielectric:
            return None
        d = self.spec("dielectric", spec.dielectric)
        return (d.temp_min_c, d.temp_max_c) if d is not None else None

    def merge(self, specs: dict[str, CapSpec | None],
              own: dict[str, tuple[tuple[str, ...], tuple[str, ...]]] | None = None
              ) -> tuple[dict[str, Any], list[tuple[str, str]]]:
        """Merge the sources' specs field group by field group: numbers conservatively, other
        fields by source order (a dedicated column, the value, the description); disagreements
        become conflict findings; each cell's own warnings and unread tokens are kept (``own``
        per source where they are not the spec's: a spec shared by cells that read alike)."""
        present = {s: sp for s, sp in specs.items() if sp is not None}
        if own is None:
            own = {s: (sp.warnings, sp.unread) for s, sp in present.items()}
        ids = tuple((s, id(sp)) for s, sp in present.items())
        got = self._merged_ids.get(ids)
        if got is None:
            key = tuple((s, self._readings(sp)) for s, sp in present.items())
            got = self._merged.get(key)
            if got is None:
                fields, found = self._merge_fields(present)
                got = self._merged[key] = (fields, tuple(found))
            self._merged_ids[ids] = got
            self._alive.update((i, present[s]) for s, i in ids)
        ordered = [own[src] for src in SPEC_SOURCES if src in present]
        conflicts = list(got[1])
        for src in SPEC_SOURCES:
            if src in present and own[src][0]:
                conflicts.extend(self.text_conflicts(src, own[src][0]))
        # Each cell's warnings and unread tokens, first-seen order, each once.
        out = {**got[0],
               "warnings": tuple(dict.fromkeys(w for ws, _ in ordered for w in ws)),
               "unread": tuple(dict.fromkeys(u for _, us in ordered for u in us))}
        return out, conflicts

    def _readings(self, sp: CapSpec) -> tuple[Any, ...]:
        """What the merge reads of a spec: its fields without text, warnings and unread."""
        got = self._core.get(id(sp))
        if got is None:
            got = self._core[id(sp)] = _READINGS(sp)
            self._alive[id(sp)] = sp
        return got

    def _merge_fields(self, present: dict[str, CapSpec]
                      ) -> tuple[dict[str, Any], list[tuple[str, str]]]:
        """The merged fields and the column conflicts of one combination of readings."""
        out: dict[str, Any] = dict(_EMPTY_SPEC)
        conflicts: list[tuple[str, str]] = []
        groups = {s: self._groups(sp) for s, sp in present.items()}
        for gi, (group, order, keys) in enumerate(_GROUP_KEYS):
            cands = [(src, groups[src][gi]) for src in order
                     if src in groups and groups[src][gi] is not None]
            if not cands:
                continue
            first_src, first_vals = cands[0]
            win_src, win_vals = first_src, first_vals
            if len(cands) > 1 and group[0] in _CONSERVATIVE:
                win_src, win_vals = self._conservative(group[0], cands, out, present)
            out.update(zip(group, win_vals))
            for src, vals in cands[1:]:
                if vals[:len(keys)] == first_vals[:len(keys)]:
                    continue
                msg = self._disagree(keys, first_src, present[first_src], src, present[src],
                                     win_src)
                if msg:
                    conflicts.append(("column_conflict", msg))
        if out["polarized"] is None:
            out["polarized"] = next((sp.polarized for sp in present.values()
                                     if sp.polarized is not None), None)
        self._merge_temperature(present, out, conflicts)
        out["is_capacitor"] = any(sp.is_capacitor for sp in present.values())
        return out, conflicts

    def text_conflicts(self, src: str, warnings: tuple[str, ...]) -> list[tuple[str, str]]:
        """The parser's conflict and unread warnings of one cell, as (code, message) findings:
        ``text_conflict`` and ``value_unread``."""
        return [(code, f"{_SOURCE_LABELS[src]}: {w[len(mark):]}")
                for w in warnings for mark, code in _MARKS if w.startswith(mark)]

    def _stated_temps(self, src: str, sp: CapSpec) -> tuple[float | None, float | None]:
        """The rated temperatures a cell states itself, not the ones its dielectric code implies
        (cached per spec)."""
        key = (id(sp), src)
        got = self._stated.get(key)
        if got is None:
            derived = None if src == "temperature" else self.derived_temps(sp)
            lo, hi = sp.temp_min_c, sp.temp_max_c
            if derived is not None:
                lo = None if derived[0] == lo else lo
                hi = None if derived[1] == hi else hi
            got = self._stated[key] = (lo, hi)
            self._alive[id(sp)] = sp
        return got

    def _conservative(self, key: str, cands: list[tuple[str, tuple[Any, ...]]],
                      out: dict[str, Any], present: dict[str, CapSpec]
                      ) -> tuple[str, tuple[Any, ...]]:
        """The conservative candidate: smaller capacitance, lower rated voltage (of one kind),
        wider tolerance (an absolute one compared through the merged capacitance)."""
        if key == "capacitance_f":
            return min(cands, key=lambda c: c[1][0])
        if key == "dielectric":
            return min(cands, key=lambda c: self._dielectric_doubt(c[1]))
        if key == "voltage_v":
            kinds = {c[1][1] for c in cands if c[1][1]}
            if len(kinds) > 1:  # an AC and a DC rating are two ratings: source order decides
                return cands[0]
            src, vals = min(cands, key=lambda c: c[1][0])
            return src, (vals[0], vals[1] or next(iter(kinds), None))
        cap = out.get("capacitance_f")

        def width(vals: tuple[Any, ...]) -> tuple[float, float]:
            minus, plus, absf = vals
            if absf is not None:
                pct = absf / cap * 100.0 if cap else math.inf
                return pct, pct
            return (minus or 0.0, plus or 0.0)

        widths = [width(v) for _, v in cands]
        best = max(range(len(cands)), key=lambda k: widths[k])
        minus_w = max(w[0] for w in widths)
        plus_w = max(w[1] for w in widths)
        if widths[best] == (minus_w, plus_w) or math.isinf(minus_w):
            return cands[best]
        return cands[best][0], (minus_w, plus_w, None)  # each side at its widest

    def _dielectric_doubt(self, vals: tuple[Any, ...]) -> tuple[float, float, float]:
        """Sort key of a dielectric group, the least favourable code first (EIA-198: the lower
        upper temperature, then the higher lower temperature, then the larger change)."""
        d = self.spec("dielectric", str(vals[0]))
        hi = d.temp_max_c if d is not None and d.temp_max_c is not None else math.inf
        lo = d.temp_min_c if d is not None and d.temp_min_c is not None else -math.inf
        change = max(vals[2] or 0.0, vals[3] or 0.0)
        return (hi, -lo, -change)

    def _groups(self, spec: CapSpec) -> list[tuple[Any, ...] | None]:
        """Per field group of ``_GROUP_KEYS``: the spec's values (key fields first), or None when
        the spec has none of the group's key fields. Cached per spec."""
        got = self._group_cache.get(id(spec))
        if got is None:
            got = []
            for get, nkeys in _GROUP_GETTERS:
                vals = get(spec)
                got.append(vals if vals[:nkeys] != _NONES[nkeys] else None)
            self._group_cache[id(spec)] = got
            self._alive[id(spec)] = spec
        return got

    def _merge_temperature(self, present: dict[str, CapSpec], out: dict[str, Any],
                           conflicts: list[tuple[str, str]]) -> None:
        """Rated temperatures: the lowest maximum and the highest minimum among what the cells
        state and what the dielectric code allows (EIA-198: X5R -55..+85 degC); a stated value
        that differs is a conflict."""
        cands: dict[str, list[tuple[float, str]]] = {"temp_min_c": [], "temp_max_c": []}
        for src in ("temperature", "value", "description", "category", *_ALT):
            sp = present.get(src)
            if sp is None:
                continue
            lo, hi = self._stated_temps(src, sp)
            if lo is not None:
                cands["temp_min_c"].append((float(lo), _SOURCE_LABELS[src]))
            if hi is not None:
                cands["temp_max_c"].append((float(hi), _SOURCE_LABELS[src]))
        diel = out["dielectric"]
        implied = None
        if diel:
            if diel not in self._implied:
                self._implied[diel] = self.derived_temps(self.spec("dielectric", diel))  # type: ignore[arg-type]
            implied = self._implied[diel]
        for k, idx, pick, word in (("temp_min_c", 0, max, "higher"),
                                   ("temp_max_c", 1, min, "lower")):
            vals = list(cands[k])
            if implied is not None and implied[idx] is not None:
                vals.append((float(implied[idx]), f"{diel} (EIA-198)"))
            if not vals:
                out[k] = next((getattr(sp, k) for sp in present.values()
                               if getattr(sp, k) is not None), None)
                continue
            chosen = pick(v for v, _ in vals)
            out[k] = chosen
            if any(v != chosen for v, _ in cands[k]):  # a stated value was overruled
                said = " but ".join(f"{label} says {v:g} degC" for v, label in vals)
                name = _FIELD_NAMES[k]
                conflicts.append(("column_conflict",
                                  f"{name}: {said}; using the {word}, {chosen:g} degC"))

    def _disagree(self, keys: tuple[str, ...], src1: str, sp1: CapSpec, src2: str,
                  sp2: CapSpec, winner: str) -> str | None:
        """A conflict message when two sources give different values for the same fields."""
        same = True
        for k in keys:
            v1, v2 = getattr(sp1, k), getattr(sp2, k)
            if isinstance(v1, (int, float)) and isinstance(v2, (int, float)) \
                    and not isinstance(v1, bool):
                same &= math.isclose(float(v1), float(v2), rel_tol=1e-6, abs_tol=1e-15)
            elif k == "package" and isinstance(v1, str) and isinstance(v2, str):
                same &= codes.package_key(v1) == codes.package_key(v2)  # "case C" = 6032-28
            elif isinstance(v1, str) and isinstance(v2, str):
                same &= _alnum(v1) == _alnum(v2)
            else:
                same &= v1 == v2
        if same:
            return None
        name = _FIELD_NAMES.get(keys[0], keys[0].replace("_", " "))
        using = f"using the {_SOURCE_LABELS[winner]}"
        if keys[0] in _CONSERVATIVE:
            using += f" ({_CONSERVATIVE[keys[0]]}, the conservative reading)"
        return (f"{name}: {_SOURCE_LABELS[src1]} says {self._show(keys[0], sp1)} but "
                f"{_SOURCE_LABELS[src2]} says {self._show(keys[0], sp2)}; {using}")

    def _show(self, key: str, sp: CapSpec) -> str:
        v = getattr(sp, key)
        if key == "capacitance_f":
            return format_capacitance(float(v))
        if key == "voltage_v":
            return f"{float(v):g} V" + (f" {sp.voltage_kind.upper()}" if sp.voltage_kind else "")
        if key == "tol_minus_pct":
            if v is None:
                if sp.tol_abs_f is not None:
                    return "+/-" + format_capacitance(float(sp.tol_abs_f))
                return f"+{float(sp.tol_plus_pct):g} %"
            plus = sp.tol_plus_pct
            if plus is None or plus == v:
                return f"+/-{float(v):g} %"
            return f"+{float(plus):g}/-{float(v):g} %"
        if key in ("temp_min_c", "temp_max_c"):
            return f"{float(v):g} degC"
        return str(v)


# The fields that say whether a source has a group at all (tolerance may be absolute only).
_KEY_FIELDS = {"tol_minus_pct": ("tol_minus_pct", "tol_plus_pct", "tol_abs_f")}
_GROUP_KEYS = tuple((group, order, _KEY_FIELDS.get(group[0], group[:1]))
                    for group, order in _GROUPS)
# Getters returning each group's values as a tuple (attrgetter of one name returns the value).
_GROUP_GETTERS = tuple(
    (operator.attrgetter(*group) if len(group) > 1 else (lambda sp, k=group[0]: (getattr(sp, k),)),
     len(keys))
    for group, _, keys in _GROUP_KEYS
)
_NONES = {k: (None,) * k for k in range(1, 4)}
_READINGS = operator.attrgetter(*(k for k in SPEC_COLUMNS if k not in ("warnings", "unread")))
_MARKS = ((CONFLICT_MARK, "text_conflict"), (UNREAD_MARK, "value_unread"))
_EMPTY_SPEC: dict[str, Any] = {**dict.fromkeys(SPEC_COLUMNS), "warnings": (), "unread": ()}
_FIELD_NAMES = {"capacitance_f": "capacitance", "voltage_v": "rated voltage",
                "tol_minus_pct": "tolerance", "temp_min_c": "minimum temperature",
                "temp_max_c": "maximum temperature", "technology": "technology",
                "dielectric": "dielectric", "package": "package"}


def _alnum(text: str) -> str:
    return re.sub(r"[\W_]", "", text).upper()


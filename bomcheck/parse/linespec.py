"""Normalise stage, per BOM line: the value-bearing cells of one line to one merged spec.

Each cell is cleaned (not-fitted marks out, decimal commas read), a bare number under a header
that states a unit gets that unit (``470`` under ``Capacitance (uF)`` is 470 uF), and each is
parsed with ``bomcheck.parse.values.parse_value`` in its column's context. The specs are merged field
group by field group. Where the cells disagree on a number, the conservative reading wins
(smaller capacitance, lower rated voltage, wider tolerance, lower rated maximum and higher rated
minimum temperature, the dielectric code with the narrower temperature range or larger change)
and the disagreement is a finding; for the other fields a dedicated column
wins over the value, the value over the description. A line with one cell of text is that cell's
spec, with no merge.
"""

from __future__ import annotations

import math
import operator
import re
from collections.abc import Mapping
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

from bomcheck.parse import codes
from bomcheck.spec import SPEC_KEYS

if TYPE_CHECKING:
    from bomcheck.spec import CapSpec

SPEC_COLUMNS: tuple[str, ...] = tuple(k for k in SPEC_KEYS if k != "text")

# Not-fitted marks inside cell text. Upper-case NF/NC only, and NF not right after a number, so
# "100 NF" stays a capacitance. "NP" (non-polar) is deliberately absent.
_NOT_FITTED = re.compile(
    r"(?<![\w.])(?:"
    r"(?i:DNP|DNI|DNF|DNM|NO[\s-]?POP(?:ULATE[D]?)?"
    r"|NOT\s+(?:FITTED|POPULATED|PLACED|MOUNTED|INSTALLED|ASSEMBLED|USED)"
    r"|DO\s+NOT\s+(?:POPULATE|PLACE|FIT|INSTALL|MOUNT|ASSEMBLE|STUFF)"
    r"|NICHT\s+BEST(?:Ü|UE|U)CKT|UNBEST(?:Ü|UE|U)CKT|NON[\s-]+MONT(?:É|E)(?:ES|E|S)?)"
    r"|(?<![\d.,]\s)(?:NF|N/F|N\.F\.)|NC|N\.C\."
    r")(?!\w)"
)
_EMPTY_BRACKETS = re.compile(r"\(\s*\)|\[\s*\]|\{\s*\}")
_SPACES = re.compile(r"\s{2,}")

# Text that says "capacitor" on its own: a farad unit, an RKM capacitance, capacitor words.
_STRONG_CAP = re.compile(
    r"\d\s*(?:[pnuµμm]|MF|UU|MM)?\s*F(?:D|ARAD)?S?\b|\d[pnuµμ]\d"
    r"|\b(?:CAPS?|CAPACITORS?|KONDENSATOR(?:EN)?|KERKO|ELKO|TANTAL(?:UM)?|TANT|CONDENSATEURS?"
    r"|MLCC|SUPERCAP|ELECTROLYTIC|ELEKTROLYT)\b",
    re.IGNORECASE,
)
# Evidence of other parts: words anywhere, unit forms only in the value cell (a capacitor's
# description may quote its ESR in ohms or its ripple frequency).
# Words of other parts, looked up per word (a regex alternation with IGNORECASE costs tens of
# microseconds per text; a dict look-up per word a few).
_OTHER_WORDS: dict[str, str] = {
    w: family for family, words in {
        "resistor": ("RES", "RESISTOR", "RESISTORS", "WIDERSTAND", "WIDERSTÄNDE", "WIDERSTANDE",
                     "RESISTANCE", "RESISTANCES", "RÉSISTANCE", "RÉSISTANCES"),
        "inductor": ("IND", "INDUCTOR", "INDUCTORS", "INDUCTANCE", "CHOKE", "COIL", "SPULE",
                     "DROSSEL", "BOBINE", "FERRITE", "BEAD"),
        "crystal": ("CRYSTAL", "XTAL", "QUARZ", "QUARTZ", "RESONATOR", "OSCILLATOR", "OSC"),
        "diode": ("DIODE", "ZENER", "TVS", "SCHOTTKY", "RECTIFIER", "LED"),
        "connector": ("CONN", "CONNECTOR", "HEADER", "SOCKET", "RECEPTACLE", "STECKER", "BUCHSE",
                      "STIFTLEISTE", "CONNECTEUR"),
        "cable": ("CABLE", "CABLES", "FFC", "FPC", "WIRE", "WIRES", "HARNESS", "KABEL",
                  "KABELBAUM", "LITZE", "CÂBLE", "FAISCEAU"),
    }.items() for w in words
}
_WORD_RUNS = re.compile(r"\w+").findall
# _OTHER_VALUE needs one of these characters (k, M, ohm signs, H of henry or hertz).
_OTHER_VALUE_CHARS = frozenset("kKMΩΩoOhH")
_OTHER_VALUE = re.compile(
    # IEC 60062 RKM for resistance: 4K7, 1M5, 4k7 (upper-case M; lower-case m is milli).
    r"(?P<resistor>^\s*\d+(?:k|K|M)\d*\s*$|\d\s*[kKM]?\s*(?:Ω|Ω|[oO][hH][mM][sS]?)\b)"
    r"|(?P<inductor>\d(?:[.,]\d+)?\s*[pnuµμm]H\b|\d[pnuµμ]\d+\s*H\b)"
    r"|(?P<crystal>\d\s*[kMG][hH][zZ]\b)"
)
# Families whose words settle "not a capacitor" even on a capacitor-like designator (C30 CABLE
# ASSY FFC 24P: cables share the C/W prefixes in some conventions; common practice).
DECISIVE_FAMILIES = frozenset({"cable"})
_RESISTOR_RKM_CAP_CODE = re.compile(r"^\s*\d{3}[KM]\s*$")  # 104K, 475M: pF code + tolerance

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
FLOAT_SPEC = ("capacitance_f", "voltage_v", "tol_minus_pct", "tol_plus_pct", "tol_abs_f",
               "dielectric_class", "cap_change_minus_pct", "cap_change_plus_pct", "tc_ppm",
               "tc_tol_ppm", "temp_min_c", "temp_max_c")



def not_fitted_mark(text: str) -> str | None:
    """The not-fitted mark in a cell (``DNP``, ``do not populate``, ``nicht bestückt``...)."""
    m = _NOT_FITTED.search(text)
    return m.group(0) if m else None


def strip_not_fitted(text: str) -> str:
    """The cell without its not-fitted marks (what is left to parse)."""
    t = _EMPTY_BRACKETS.sub(" ", _NOT_FITTED.sub(" ", text))
    return _SPACES.sub(" ", t).strip(" ,;/-")


_DECIMAL_ANY = re.compile(r"(?<=\d),(?=\d)")
# Outside semicolon files only an unambiguous decimal comma: 4,7 or 0,1 but not 1,000 (thousands)
# and not 0603,1uF (a package code glued to the next token).
_DECIMAL_SAFE = re.compile(r"(?<![\d,.])(0|[1-9]\d{0,2}),(\d{1,2})(?![\d,])")


def decimal_commas(text: str, *, semicolon: bool) -> str:
    """Decimal commas to points: every one in a semicolon file, only unambiguous ones elsewhere."""
    if "," not in text:
        return text
    if semicolon:
        return _DECIMAL_ANY.sub(".", text)
    return _DECIMAL_SAFE.sub(r"\1.\2", text)


def other_part_evidence(value: str, description: str) -> tuple[str, str] | None:
    """(family, token) when the text names another kind of part: ``RES``, ``4u7H``, ``XTAL``."""
    for text in (value, description):
        for word in _WORD_RUNS(text):
            family = _OTHER_WORDS.get(word.upper())
            if family is not None:
                return family, word
    if value and not _OTHER_VALUE_CHARS.isdisjoint(value) \
            and not _RESISTOR_RKM_CAP_CODE.match(value):
        m = _OTHER_VALUE.search(value)
        if m:
            return str(m.lastgroup), m.group(0).strip()
    return None



@dataclass
class Combo:
    """What one distinct combination of value-bearing cells says."""

    spec: dict[str, Any]
    evidence: int  # +1 capacitor, -1 another part, 0 nothing either way
    strong: bool  # capacitor evidence that does not rest on a bare code
    other: tuple[str, str] | None
    conflicts: tuple[tuple[str, str], ...]  # (finding code, message)
    text: str
    marks: dict[str, str]  # source -> not-fitted mark found in that cell
    value_text: str
    description: str


def spec_from_cells(cells: Mapping[str, str]) -> tuple[dict, str, str, str]:
    """(spec values, joined text, value text, description) of one line's BOM-style cells
    (``{"value": ..., "description": ..., "voltage": ...}``), parsed and merged exactly as the
    importer does, so the same text gives the same spec wherever it is written."""
    combo = CellParser(semicolon=False).combo({k: str(v) for k, v in cells.items()})
    return dict(combo.spec), combo.text, combo.value_text, combo.description


# A temperature in kelvin or Fahrenheit, alone in a temperature cell (a header unit or its own).
_OTHER_SCALE = re.compile(r"\s*([-+]?(?:\d+(?:\.\d*)?|\.\d+))\s*(K|°F|degF|F)\s*", re.I)


def _in_celsius(text: str) -> str:
    """A temperature cell in kelvin or Fahrenheit written in degC (358 K -> "84.85 °C"); any
    other text as it is. Never read as degC: 358 K is not a 358 degC rating."""
    m = _OTHER_SCALE.fullmatch(text)
    if not m:
        return text
    x = float(m.group(1))
    c = x - 273.15 if m.group(2).upper() == "K" else (x - 32.0) * 5.0 / 9.0
    return f"{c:.6g} °C"


# A cell that is only a number (what a header unit applies to).
_BARE_NUMBER = re.compile(r"[-+]?(?:\d+(?:\.\d*)?|\.\d+)").fullmatch
# Numeric field groups resolved conservatively, with the direction that is conservative.
_CONSERVATIVE = {"capacitance_f": "smaller capacitance", "voltage_v": "lower rated voltage",
                 "tol_minus_pct": "wider tolerance",
                 "dielectric": "narrower temperature range or larger change"}


class CellParser:
    """Parse cells through ``parse_value`` with a cache per (context, text).

    ``units`` maps a source (``"value"``, ``"voltage"``...) to the unit its header states; a
    bare number in that column is read with it.
    """

    def __init__(self, semicolon: bool, units: Mapping[str, str] | None = None) -> None:
        from bomcheck.parse.values import CONFLICT_MARK, UNREAD_MARK, format_capacitance, parse_value

        self._parse = parse_value
        self._marks = ((CONFLICT_MARK, "text_conflict"), (UNREAD_MARK, "value_unread"))
        self.fmt_c = format_capacitance
        self.semicolon = semicolon
        self.units = dict(units or {})
        self._cache: dict[tuple[str, str], CapSpec | None] = {}
        self._cleaned: dict[str, tuple[str, str | None]] = {}
        self._group_cache: dict[int, list[tuple[Any, ...] | None]] = {}  # specs live in _cache
        self._single: dict[int, tuple[dict[str, Any], tuple[tuple[str, str], ...]]] = {}
        # Per spec (by id; specs live in _cache): stated temperatures and conflict warnings.
        self._stated: dict[tuple[int, str], tuple[float | None, float | None]] = {}
        self._conflicts: dict[tuple[int, str], list[tuple[str, str]]] = {}
        self._implied: dict[str, tuple[float | None, float | None] | None] = {}

    def clean(self, text: str) -> tuple[str, str | None]:
        """(text to parse, not-fitted mark): spaces collapsed, marks removed, decimal commas."""
        got = self._cleaned.get(text)
        if got is None:
            t = " ".join(text.split())
            mark = not_fitted_mark(t)
            if mark:
                t = strip_not_fitted(t)
            got = self._cleaned[text] = (decimal_commas(t, semicolon=self.semicolon), mark)
        return got

    def spec(self, source: str, text: str) -> CapSpec | None:
        """The parse of one cleaned cell of ``source`` (cached); None for an empty cell."""
        unit = self.units.get(source)
        if unit is not None and _BARE_NUMBER(text):
            text = f"{text} {unit}"
        if source == "temperature":
            text = _in_celsius(text)
        key = (source, text)
        if key not in self._cache:
            self._cache[key] = self._parse(text, context=_CONTEXT.get(source, source)) \
                if text else None
        return self._cache[key]

    def derived_temps(self, spec: CapSpec) -> tuple[float | None, float | None] | None:
        """The temperature range the spec's dielectric code implies (None without a code)."""
        if not spec.dielectric:
            return None
        d = self.spec("dielectric", spec.dielectric)
        return (d.temp_min_c, d.temp_max_c) if d is not None else None

    def combo(self, cells: dict[str, str]) -> Combo:
        """What one distinct combination of a line's value-bearing cells says."""
        done = {src: self.clean(t) for src, t in cells.items()}
        cleaned = {src: c for src, (c, _) in done.items()}
        marks = {src: m for src, (_, m) in done.items() if m}
        specs = {src: self.spec(src, t) for src, t in cleaned.items()}
        filled = [src for src, sp in specs.items() if sp is not None]
        if len(filled) == 1 and filled[0] in ("value", "description"):
            spec, conflicts = self._one_source(filled[0], specs[filled[0]])  # type: ignore[arg-type]
        else:
            spec, conflicts = self._merge(specs)
        value, desc = cleaned.get("value", ""), cleaned.get("description", "")
        cap = any(s is not None and s.is_capacitor
                  for s in (specs.get("value"), specs.get("description"), specs.get("dielectric"),
                            specs.get("category"), specs.get("value_alt"),
                            specs.get("description_alt")))
        stated_tech = [s for s in (specs.get("dielectric"), specs.get("category"))
                       if s is not None and s.technology]
        strong = cap and bool(
            _STRONG_CAP.search(value) or _STRONG_CAP.search(desc)
            or any(s is not None and s.dielectric for s in specs.values())
            or stated_tech
        )
        other = other_part_evidence(value, desc)
        evidence = 1 if cap else (-1 if other else 0)
        text = " | ".join(" ".join(cells[s].split()) for s in SPEC_SOURCES
                          if cells.get(s, "").strip())
        return Combo(spec, evidence, strong, other, tuple(conflicts), text, marks,
                     " ".join(cells.get("value", "").split()),
                     " ".join(cells.get("description", "").split()))

    def _one_source(self, src: str, sp: CapSpec) -> tuple[dict[str, Any], list[tuple[str, str]]]:
        """A line with one cell of text: its spec as it is (what the merge would give), cached."""
        got = self._single.get(id(sp))
        if got is None:
            out = {k: getattr(sp, k) for k in SPEC_COLUMNS}
            got = self._single[id(sp)] = (out, tuple(self._text_conflicts(src, sp)))
        return dict(got[0]), list(got[1])

    def _text_conflicts(self, src: str, sp: CapSpec) -> list[tuple[str, str]]:
        """The parser's conflict and unread warnings of one cell, as (code, message) findings:
        ``text_conflict`` and ``value_unread`` (cached)."""
        key = (id(sp), src)
        got = self._conflicts.get(key)
        if got is None:
            got = self._conflicts[key] = [
                (code, f"{_SOURCE_LABELS[src]}: {w[len(mark):]}")
                for w in sp.warnings for mark, code in self._marks if w.startswith(mark)]
        return got

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
        return got

    def _merge(self, specs: dict[str, CapSpec | None]
               ) -> tuple[dict[str, Any], list[tuple[str, str]]]:
        """Merge the sources' specs field group by field group: numbers conservatively, other
        fields by source order (a dedicated column, the value, the description); disagreements
        become conflict findings."""
        out: dict[str, Any] = dict(_EMPTY_SPEC)
        conflicts: list[tuple[str, str]] = []
        present = {s: sp for s, sp in specs.items() if sp is not None}
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
        warnings: list[str] = []
        unread: list[str] = []
        for src in SPEC_SOURCES:
            sp = present.get(src)
            if sp is None:
                continue
            warnings.extend(w for w in sp.warnings if w not in warnings)
            unread.extend(u for u in sp.unread if u not in unread)
            conflicts.extend(self._text_conflicts(src, sp))
        out["warnings"], out["unread"] = tuple(warnings), tuple(unread)
        return out, conflicts

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
            return self.fmt_c(float(v))
        if key == "voltage_v":
            return f"{float(v):g} V" + (f" {sp.voltage_kind.upper()}" if sp.voltage_kind else "")
        if key == "tol_minus_pct":
            if v is None:
                if sp.tol_abs_f is not None:
                    return "+/-" + self.fmt_c(float(sp.tol_abs_f))
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
_EMPTY_SPEC: dict[str, Any] = {**dict.fromkeys(SPEC_COLUMNS), "warnings": (), "unread": ()}
_FIELD_NAMES = {"capacitance_f": "capacitance", "voltage_v": "rated voltage",
                "tol_minus_pct": "tolerance", "temp_min_c": "minimum temperature",
                "temp_max_c": "maximum temperature", "technology": "technology",
                "dielectric": "dielectric", "package": "package"}


def _alnum(text: str) -> str:
    return re.sub(r"[\W_]", "", text).upper()

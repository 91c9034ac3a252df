"""Normalise stage, per BOM line: the value-bearing cells of one line to one spec.

Each cell is cleaned (not-fitted marks out, decimal commas read), a bare number under a header
that states a unit gets that unit (``470`` under ``Capacitance (uF)`` is 470 uF), and each is
parsed with ``bomcheck.parse.values.parse_value`` in its column's context (once per distinct
cell); the specs are merged by ``bomcheck.parse.merge``. A line with one cell of text is that
cell's spec, with no merge. The line is also judged capacitor or another part here (capacitor
evidence, words of other parts).
"""

from __future__ import annotations

import re
import weakref
from collections.abc import Iterable, Mapping
from dataclasses import dataclass
from typing import Any

from bomcheck.frozen import frozen
from bomcheck.parse.merge import _CONTEXT, SPEC_COLUMNS, SPEC_SOURCES, SpecMerge
from bomcheck.parse.valuecache import ValueParser
from bomcheck.spec import CapSpec

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
# An ASCII text's word runs (``\w+``) upper-cased, as bytes: every byte that is not a letter,
# digit or underscore becomes a space, so ``split()`` gives the runs (a few C-level passes).
_ASCII_WORD_RUNS = bytes(ord(chr(b).upper()) if chr(b).isalnum() or b == ord("_") else 32
                         for b in range(128)) + b" " * 128
_OTHER_ASCII_WORDS = frozenset(w.encode("ascii") for w in _OTHER_WORDS if w.isascii())
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

FLOAT_SPEC = ("capacitance_f", "voltage_v", "tol_minus_pct", "tol_plus_pct", "tol_abs_f",
               "dielectric_class", "cap_change_minus_pct", "cap_change_plus_pct", "tc_ppm",
               "tc_tol_ppm", "temp_min_c", "temp_max_c")



def not_fitted_mark(text: str) -> str | None:
    """The not-fitted mark in a cell (``DNP``, ``do not populate``, ``nicht bestückt``...)."""
    if text.isascii():
        # Every form of _NOT_FITTED starts with one of these pairs (lower-cased); an ASCII text
        # with none of them holds no mark (a few substring tests cost less than the pattern).
        low = text.lower()
        if not ("n" in low and ("dn" in low or "no" in low or "do" in low or "ni" in low
                                or "un" in low or "nf" in low or "n/" in low or "n." in low
                                or "nc" in low)):
            return None
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
    return _other_word(value) or _other_word(description) or _other_value_form(value)


def _other_word(text: str) -> tuple[str, str] | None:
    """The first word of another kind of part in a text (``RES``, ``XTAL``), as (family, word)."""
    if text.isascii() and _OTHER_ASCII_WORDS.isdisjoint(
            text.encode("ascii").translate(_ASCII_WORD_RUNS).split()):
        return None  # the common case, one look at the whole text
    for word in _WORD_RUNS(text):
        family = _OTHER_WORDS.get(word.upper())
        if family is not None:
            return family, word
    return None


def _other_value_form(value: str) -> tuple[str, str] | None:
    """A value written in another part's unit (``4K7``, ``10R`` ohms, ``4u7H``, ``8MHz``)."""
    if value and not _OTHER_VALUE_CHARS.isdisjoint(value) \
            and not _RESISTOR_RKM_CAP_CODE.match(value):
        m = _OTHER_VALUE.search(value)
        if m:
            return str(m.lastgroup), m.group(0).strip()
    return None


@frozen
class Core:
    """What a combination of cells says apart from each cell's own warnings, unread tokens and
    text (``CellParser.core``): the same for every line whose cells read alike."""

    spec: dict[str, Any]  # the merged fields; warnings and unread empty
    evidence: int  # +1 capacitor, -1 another part, 0 nothing either way
    strong: bool  # capacitor evidence that does not rest on a bare code
    other: tuple[str, str] | None
    conflicts: tuple[tuple[str, str], ...]  # the merge's column conflicts (finding code, message)
    marks: dict[str, str]  # source -> not-fitted mark found in that cell
    one_source: bool  # one cell of text (value or description): its own readings, no merge


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


# What a cell says: a spec with its readings, the cell's own warnings and unread tokens.
Reading = tuple[CapSpec, tuple[str, ...], tuple[str, ...]]
_NO_CELL: tuple[str, str | None, Reading | None, str] = ("", None, None, "")
_NOT_READ = object()  # a cell not in CellParser's cache yet


class CellParser:
    """Parse cells as ``parse_value`` does (``ValueParser``), with a cache per (context, text).

    ``units`` maps a source (``"value"``, ``"voltage"``...) to the unit its header states; a
    bare number in that column is read with it.
    """

    def __init__(self, semicolon: bool, units: Mapping[str, str] | None = None) -> None:
        self.semicolon = semicolon
        self.units = dict(units or {})
        # Per (source, cell): (spec with the readings, the cell's warnings, its unread tokens);
        # the spec may be shared by cells that read alike (``ValueParser.read``).
        self._cache: dict[tuple[str, str], Reading | None] = {}
        self._values = ValueParser()
        self._cleaned: dict[str, tuple[str, str | None]] = {}
        # Per (source, cell): (cleaned text, not-fitted mark, reading, text with spaces collapsed).
        self._cells: dict[tuple[str, str], tuple[str, str | None, Reading | None, str]] = {}
        # Per cleaned text: capacitor words or units; a word or value form of another part.
        self._strong: dict[str, bool] = {}
        self._other: dict[str, tuple[str, str] | None] = {}
        self._form: dict[str, tuple[str, str] | None] = {}
        # Per spec (by id; specs live in _cache): a line with that one cell of text.
        self._single: dict[int, tuple[CapSpec, dict[str, Any]]] = {}
        # The merger reaches back through a weak reference: no reference cycle, so the caches
        # go as soon as the parser does (not at the next full collection, which would first
        # walk every object they hold).
        me = weakref.ref(self)
        self.merger = SpecMerge(lambda source, text: me().spec(source, text))  # type: ignore[union-attr]

    def clean(self, text: str) -> tuple[str, str | None]:
        """(text to parse, not-fitted mark): spaces collapsed, marks removed, decimal commas."""
        got = self._cleaned.get(text)
        if got is None:
            got = self._cleaned[text] = self._clean_collapsed(" ".join(text.split()))
        return got

    def _clean_collapsed(self, t: str) -> tuple[str, str | None]:
        """``clean`` of a text whose spaces are collapsed."""
        mark = not_fitted_mark(t)
        if mark:
            t = strip_not_fitted(t)
        return decimal_commas(t, semicolon=self.semicolon), mark

    def spec(self, source: str, text: str) -> CapSpec | None:
        """The parse of one cleaned cell of ``source`` (cached); None for an empty cell."""
        got = self.reading(source, text)
        if got is None:
            return None
        sp, warnings, unread = got
        if warnings is sp.warnings and unread is sp.unread:
            return sp
        return self._values.parse(self._as_parsed(source, text), _CONTEXT.get(source, source))

    def reading(self, source: str, text: str) -> Reading | None:
        """(spec with the readings, warnings, unread tokens) of one cleaned cell of ``source``
        (cached; see ``ValueParser.read``); None for an empty cell."""
        text = self._as_parsed(source, text)
        key = (source, text)
        got = self._cache.get(key, _NOT_READ)
        if got is _NOT_READ:
            got = self._cache[key] = self._values.read(text, _CONTEXT.get(source, source)) \
                if text else None
        return got  # type: ignore[return-value]

    def _as_parsed(self, source: str, text: str) -> str:
        """A cleaned cell as it is parsed: a bare number with its header's unit, a
        temperature in degC."""
        unit = self.units.get(source)
        if unit is not None and _BARE_NUMBER(text):
            text = f"{text} {unit}"
        if source == "temperature":
            text = _in_celsius(text)
        return text

    def cell(self, source: str, text: str) -> tuple[str, str | None, Reading | None, str]:
        """(cleaned text, not-fitted mark, reading, text with spaces collapsed) of one cell,
        each distinct cell of a source once."""
        key = (source, text)
        got = self._cells.get(key)
        if got is None:
            got = self._cells[key] = self.cells(source, (text,))[0]
        return got

    def cells(self, source: str, texts: Iterable[str]
              ) -> list[tuple[str, str | None, Reading | None, str]]:
        """``cell`` of each of many cells of a source, which the caller has made distinct
        (they are not kept per cell)."""
        out = []
        clean, cache, values = self._clean_collapsed, self._cache, self._values
        context = _CONTEXT.get(source, source)
        plain = self.units.get(source) is None and source != "temperature"
        for text in texts:
            collapsed = " ".join(text.split())
            cleaned, mark = clean(collapsed)
            parsed = cleaned if plain else self._as_parsed(source, cleaned)  # as ``reading``
            got = cache.get((source, parsed), _NOT_READ)
            if got is _NOT_READ:
                got = cache[(source, parsed)] = values.read(parsed, context) if parsed else None
            out.append((cleaned, mark, got, collapsed))
        return out  # type: ignore[return-value]

    def combo(self, cells: dict[str, str]) -> Combo:
        """What one distinct combination of a line's value-bearing cells says."""
        info = {src: self.cell(src, t) for src, t in cells.items()}
        core = self.core(info)
        present = [s for s in SPEC_SOURCES if s in info and info[s][2] is not None]
        own = {s: info[s][2][1:] for s in present}  # type: ignore[index]
        conflicts = list(core.conflicts)
        if core.one_source:
            warnings, unread = own[present[0]]
        else:
            warnings = tuple(dict.fromkeys(w for s in present for w in own[s][0]))
            unread = tuple(dict.fromkeys(u for s in present for u in own[s][1]))
        for s in present:
            if own[s][0]:
                conflicts.extend(self.merger.text_conflicts(s, own[s][0]))
        v, d = info.get("value", _NO_CELL), info.get("description", _NO_CELL)
        text = " | ".join(info[s][3] for s in SPEC_SOURCES if s in info and info[s][3])
        return Combo({**core.spec, "warnings": warnings, "unread": unread}, core.evidence,
                     core.strong, core.other, tuple(conflicts), text, core.marks, v[3], d[3])

    def cell_key(self, source: str, info: tuple[str, str | None, Reading | None, str]
                 ) -> tuple[Any, ...]:
        """What ``core`` reads of one cell: its spec (by identity: the specs live in the
        cache), its not-fitted mark and, for the value and the description, the words of
        capacitors and of other parts in its cleaned text."""
        spec = info[2][0] if info[2] is not None else None
        head = (id(spec) if spec is not None else None, info[1])
        if source not in ("value", "description"):
            return head
        cleaned = info[0]
        # A dielectric code makes a capacitor line's evidence strong whatever its words say.
        says = True if spec is not None and spec.dielectric else self._says_capacitor(cleaned)
        if cleaned not in self._other:
            self._other[cleaned] = _other_word(cleaned)
        if source == "value" and cleaned not in self._form:
            self._form[cleaned] = _other_value_form(cleaned)
        return (*head, says, self._other[cleaned],
                self._form.get(cleaned) if source == "value" else None)

    def core(self, info: Mapping[str, tuple[str, str | None, Reading | None, str]]) -> Core:
        """What a line's cells (``cell`` of each source) say apart from each cell's own
        warnings, unread tokens and text: it depends only on ``cell_key`` of each cell."""
        marks = {src: c[1] for src, c in info.items() if c[1]}
        specs = {src: c[2][0] if c[2] is not None else None for src, c in info.items()}
        filled = [src for src, c in info.items() if c[2] is not None]
        one = len(filled) == 1 and filled[0] in ("value", "description")
        if one:
            spec = self._one_source(specs[filled[0]])  # type: ignore[arg-type]
            conflicts: list[tuple[str, str]] = []
        else:
            spec, conflicts = self.merger.merge(
                specs, {src: ((), ()) for src in filled})
        v, d = info.get("value", _NO_CELL), info.get("description", _NO_CELL)
        cap = any(s is not None and s.is_capacitor
                  for s in (specs.get("value"), specs.get("description"), specs.get("dielectric"),
                            specs.get("category"), specs.get("value_alt"),
                            specs.get("description_alt")))
        stated_tech = [s for s in (specs.get("dielectric"), specs.get("category"))
                       if s is not None and s.technology]
        strong = cap and bool(
            self._says_capacitor(v[0]) or self._says_capacitor(d[0])
            or any(s is not None and s.dielectric for s in specs.values())
            or stated_tech
        )
        other = self._other_part(v[0], d[0])
        evidence = 1 if cap else (-1 if other else 0)
        return Core(spec, evidence, strong, other, tuple(conflicts), marks, one)

    def _says_capacitor(self, text: str) -> bool:
        """A farad unit, an RKM capacitance or capacitor words in a cleaned cell (cached)."""
        got = self._strong.get(text)
        if got is None:
            got = self._strong[text] = bool(_STRONG_CAP.search(text))
        return got

    def _other_part(self, value: str, desc: str) -> tuple[str, str] | None:
        """``other_part_evidence`` of the cleaned value and description, each cell's part
        cached."""
        for text in (value, desc):
            if text not in self._other:
                self._other[text] = _other_word(text)
            hit = self._other[text]
            if hit is not None:
                return hit
        if value not in self._form:
            self._form[value] = _other_value_form(value)
        return self._form[value]

    def _one_source(self, sp: CapSpec) -> dict[str, Any]:
        """A line with one cell of text: its spec as it is (what the merge would give), without
        the cell's own warnings and unread tokens; cached per spec."""
        got = self._single.get(id(sp))
        if got is None or got[0] is not sp:  # the spec is kept, so its id stays its own
            got = self._single[id(sp)] = (sp, {**{k: getattr(sp, k) for k in SPEC_COLUMNS},
                                               "warnings": (), "unread": ()})
        return got[1]

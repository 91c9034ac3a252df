"""Normalise stage, first step: map a BOM's column headers to bomcheck's canonical fields.

Headers are matched case-, accent- and punctuation-insensitively through ``ALIASES``
(``bomcheck.parse.aliases``: data, one tuple per field, best alias first); the user can name
columns directly (``--columns``) or in a TOML mapping file, read through
``bomcheck.read.reader``.
"""

from __future__ import annotations

import difflib
import functools
import re
import unicodedata
from collections.abc import Callable, Iterable, Mapping, Sequence
from dataclasses import field

from bomcheck.frozen import frozen
from bomcheck.errors import InputError

from bomcheck.parse.aliases import ALIASES, ALT_FIELDS, FIELDS, HEADER_UNITS, NEGATIVE_FITTED
from bomcheck.read.reader import read_toml

_UNIT_BRACKET = re.compile(r"[(\[]\s*([^()\[\]]{1,8}?)\s*[)\]]")

_BRACKETS = re.compile(r"[(\[{][^)\]}]*[)\]}]")


def normalise_header(text: str) -> str:
    """Fold a header for matching: accents off, case folded, only letters and digits kept.

    ``"Gehäuse"`` -> ``"gehause"``, ``"Ref. Des."`` -> ``"refdes"``,
    ``"Quantité"`` -> ``"quantite"``.
    """
    t = unicodedata.normalize("NFKD", str(text).replace("ß", "ss").replace("ẞ", "ss"))
    t = "".join(ch for ch in t if not unicodedata.combining(ch)).casefold()
    return re.sub(r"[^0-9a-z]+", "", t)


def header_unit(header: str, fld: str) -> str | None:
    """The unit a header states in brackets for its field (``"Capacitance (uF)"`` -> ``"uF"``),
    or None; only units that make sense for the field count."""
    units = HEADER_UNITS.get(fld)
    if not units:
        return None
    for m in _UNIT_BRACKET.finditer(str(header)):
        key = m.group(1).strip().lower().replace("\u00b5", "u").replace("\u03bc", "u")
        if key in units:
            return units[key]
    return None


def _has_foreign_bracket(header: str) -> bool:
    """True when the header carries a bracketed note that is not a unit (``"Voltage (Rev A)"``)."""
    for m in _UNIT_BRACKET.finditer(str(header)):
        key = m.group(1).strip().lower().replace("\u00b5", "u").replace("\u03bc", "u")
        if not any(key in units for units in HEADER_UNITS.values()):
            return True
    return False


def _variants(header: str) -> list[str]:
    """The folded forms a header may match by: as written, without a bracketed unit or note
    (``"Voltage [V]"``), without a trailing index (``"Manufacturer 1"``)."""
    full = normalise_header(header)
    out = [full]
    unbracketed = normalise_header(_BRACKETS.sub(" ", header))
    if unbracketed and unbracketed not in out:
        out.append(unbracketed)
    for v in list(out):
        stripped = v.rstrip("0123456789")
        if stripped and stripped not in out:
            out.append(stripped)
    return out


@functools.lru_cache(maxsize=1)
def _table_index() -> dict[str, tuple[str, int]]:
    index: dict[str, tuple[str, int]] = {}
    for fld, aliases in ALIASES.items():
        for i, alias in enumerate(aliases):
            index.setdefault(normalise_header(alias), (fld, i))
    return index


def _alias_index(extra: Mapping[str, Sequence[str]] | None = None) -> dict[str, tuple[str, int]]:
    """Folded alias -> (field, priority); user aliases come first (priority below the table's)."""
    if not extra:
        return _table_index()
    index: dict[str, tuple[str, int]] = {}
    for fld, aliases in extra.items():
        for i, alias in enumerate(aliases):
            index.setdefault(normalise_header(alias), (fld, -1000 + i))
    for key, val in _table_index().items():
        index.setdefault(key, val)
    return index


def match_field(header: str,
                extra_aliases: Mapping[str, Sequence[str]] | None = None) -> str | None:
    """The canonical field a single header names, or None."""
    index = _alias_index(extra_aliases)
    for v in _variants(header):
        if v in index:
            return index[v][0]
    return None


def is_negative_fitted(header: str) -> bool:
    """True when a fitted-column header asks "not fitted?" (``DNP``), so a mark means not fitted."""
    folded = normalise_header(header)
    negatives = {normalise_header(h) for h in NEGATIVE_FITTED}
    return folded in negatives or any(
        folded.startswith(n) for n in ("dnp", "dni", "dnf", "donot", "nofit", "notfit", "nopop",
                                       "nichtbest", "nonmont")
    )


@frozen
class ColumnOverrides:
    """What the user said about columns: field -> header, and extra aliases per field."""

    columns: Mapping[str, str] = field(default_factory=dict)
    aliases: Mapping[str, Sequence[str]] = field(default_factory=dict)


def _check_fields(names: Iterable[str], *, path: str | None, what: str) -> None:
    for name in names:
        if name not in FIELDS:
            close = difflib.get_close_matches(name, FIELDS, n=1)
            hint = f"did you mean {close[0]!r}?" if close else None
            raise InputError(f"unknown field in {what}", path=path, text=name,
                             expected="one of " + ", ".join(FIELDS), hint=hint)


def load_column_map(path: str) -> ColumnOverrides:
    """Read a TOML mapping file: ``[columns]`` field = "header" (or the same at top level) and
    ``[aliases]`` field = ["header", ...] to add aliases."""
    # The shared readers: a regular file within the size limit, TOML nesting capped.
    data, _ = read_toml(path, "column map file")
    columns = dict(data.pop("columns", {}) or {})
    aliases = dict(data.pop("aliases", {}) or {})
    for key, val in data.items():
        if isinstance(val, dict):
            raise InputError("unknown table in column map", path=path, text=f"[{key}]",
                             expected="[columns] and [aliases]")
        columns[key] = val
    _check_fields(columns, path=path, what="column map [columns]")
    _check_fields(aliases, path=path, what="column map [aliases]")
    for key, val in columns.items():
        if not isinstance(val, str) or not val.strip():
            raise InputError("column map entry is not a header name", path=path,
                             text=f"{key} = {val!r}", expected='field = "Header as written"')
    clean_aliases: dict[str, tuple[str, ...]] = {}
    for key, val in aliases.items():
        vals = [val] if isinstance(val, str) else val
        if not isinstance(vals, list) or not all(isinstance(v, str) for v in vals):
            raise InputError("column map alias entry is not a list of header names", path=path,
                             text=f"{key} = {val!r}", expected='field = ["Header", ...]')
        clean_aliases[key] = tuple(vals)
    return ColumnOverrides(columns=columns, aliases=clean_aliases)


def merge_overrides(*parts: ColumnOverrides) -> ColumnOverrides:
    """Combine overrides; later parts win field by field (the command line over the file)."""
    columns: dict[str, str] = {}
    aliases: dict[str, tuple[str, ...]] = {}
    for p in parts:
        columns.update(p.columns)
        for k, v in p.aliases.items():
            aliases[k] = (*aliases.get(k, ()), *v)
    return ColumnOverrides(columns=columns, aliases=aliases)


def _find_header(wanted: str, headers: Sequence[str]) -> str | None:
    """The header the user meant: exact text first, then the folded form."""
    for h in headers:
        if h == wanted or h.strip() == wanted.strip():
            return h
    folded = normalise_header(wanted)
    for h in headers:
        if normalise_header(h) == folded:
            return h
    return None


def header_predicate(overrides: ColumnOverrides | None = None) -> Callable[[list[str]], bool]:
    """The test a row must pass to be the header row: a designator-like cell (an alias, or the
    header the user named for refdes) and at least one other cell naming a known field."""
    ov = overrides or ColumnOverrides()
    index = _alias_index(ov.aliases)
    named = {normalise_header(h): f for f, h in ov.columns.items()}

    def field_of(cell: str) -> str | None:
        for v in _variants(cell):
            if v in named:
                return named[v]
            if v in index:
                return index[v][0]
        return None

    def predicate(cells: list[str]) -> bool:
        found = [field_of(c) for c in cells if c and c.strip()]
        return "refdes" in found and sum(f is not None for f in found) >= 2

    return predicate


has_designator_column: Callable[[list[str]], bool] = header_predicate()


def map_columns(headers: Sequence[str], overrides: ColumnOverrides | None = None, *,
                path: str | None = None) -> dict[str, str]:
    """Map canonical fields to headers of the table (``field -> header``).

    User-named columns first, then aliases (a header maps to one field; for each field the best
    alias wins, then the leftmost header). Raises ``InputError`` when a named header is not in the
    table, or when the table lacks a designator column or both a value and a description column;
    the message lists the headers found and the closest matches.
    """
    ov = overrides or ColumnOverrides()
    _check_fields(ov.columns, path=path, what="--columns")
    _check_fields(ov.aliases, path=path, what="column aliases")
    mapping: dict[str, str] = {}
    for fld, wanted in ov.columns.items():
        found = _find_header(wanted, headers)
        if found is None:
            close = difflib.get_close_matches(wanted, list(headers), n=3, cutoff=0.5)
            raise InputError(
                f"the column named for {fld} is not in the header row", path=path, text=wanted,
                expected="one of the headers found: " + _quote_list(headers),
                hint=("closest: " + _quote_list(close)) if close else None,
            )
        mapping[fld] = found
    best = _candidates(headers, mapping, ov)
    # One header, one field: a header claimed by two fields keeps the better-ranked claim.
    used: set[str] = set(mapping.values())
    for fld, cands in sorted(best.items(), key=lambda kv: kv[1][0][:3]):
        h = cands[0][3]
        if h not in used:
            mapping[fld] = h
            used.add(h)
    for fld, alt in ALT_FIELDS.items():
        # The best column of a weaker alias than the one used ("Comment" beside "Value").
        if alt in mapping or fld not in mapping:
            continue
        won = next((c[0] for c in best.get(fld, ()) if c[3] == mapping[fld]), None)
        weaker = [c for c in best.get(fld, ()) if c[3] not in used
                  and (won is None or c[0] > won)]
        if weaker:
            mapping[alt] = weaker[0][3]
            used.add(weaker[0][3])
    if "refdes" not in mapping:
        raise layout_error(headers, "refdes", path=path, overrides=ov,
                           taken=set(mapping.values()))
    if "value" not in mapping and "description" not in mapping:
        raise layout_error(headers, "value", path=path, overrides=ov,
                           taken=set(mapping.values()))
    return {f: mapping[f] for f in FIELDS if f in mapping}


def _candidates(headers: Sequence[str], mapping: Mapping[str, str], ov: ColumnOverrides
                ) -> dict[str, list[tuple[int, int, int, str]]]:
    """Per field not named by hand, the headers that match it, best first: by alias rank, then
    a header without a bracketed note that is not a unit ("Voltage (V)" before
    "Voltage (Rev A)"), then leftmost."""
    taken = set(mapping.values())
    index = _alias_index(ov.aliases)
    out: dict[str, list[tuple[int, int, int, str]]] = {}
    for pos, h in enumerate(headers):
        if h in taken or not str(h).strip():
            continue
        for v in _variants(h):
            if v in index:
                fld, prio = index[v]
                if fld not in mapping:
                    out.setdefault(fld, []).append((prio, int(_has_foreign_bracket(h)), pos, h))
                break
    for cands in out.values():
        cands.sort()
    return out


# Fields whose numbered copies ("Manufacturer 2", "MPN 2") list further approved sources: two of
# them are not two columns competing for one field.
SOURCE_FIELDS = ("manufacturer", "mpn")


def competing_columns(headers: Sequence[str], mapping: Mapping[str, str],
                      overrides: ColumnOverrides | None = None) -> list[tuple[str, str, list[str]]]:
    """``(field, header used, [other headers])`` for every field that more than one header
    matches by the same alias (``"Voltage (Rev A)"`` and ``"Voltage (V)"``): the choice between
    them is a guess the user must see. Headers matching a weaker alias of the field lose without
    a finding (``"Part Number"`` beside ``"Mfr Part Number"``), and so do numbered copies of the
    source fields (``"MPN 2"``)."""
    ov = overrides or ColumnOverrides()
    named = {f for f in ov.columns}
    out: list[tuple[str, str, list[str]]] = []
    for fld, cands in _candidates(headers, {f: h for f, h in mapping.items() if f in named},
                                  ov).items():
        used = mapping.get(fld)
        if used is None or len(cands) < 2:
            continue
        prio = next((c[0] for c in cands if c[3] == used), None)
        others = [c[3] for c in cands if c[3] != used and c[0] == prio
                  and c[3] not in mapping.values()]
        if fld in SOURCE_FIELDS:
            others = [h for h in others if normalise_header(h) == normalise_header(used)]
        if others:
            out.append((fld, used, others))
    return out


_TRAILING_NUMBER = re.compile(r"(\d+)\s*$")


def numbered_sources(headers: Sequence[str], mapping: Mapping[str, str]
                     ) -> list[tuple[str | None, str | None]]:
    """Side-by-side approved sources: ``(manufacturer header, MPN header)`` pairs of numbered
    copies of the source fields that the mapping did not take (``"Manufacturer 2"``,
    ``"MPN 2"``), by their number; either header may be None."""
    used = set(mapping.values())
    index = _table_index()
    pairs: dict[int, dict[str, str]] = {}
    for h in headers:
        m = _TRAILING_NUMBER.search(str(h))
        if h in used or m is None:
            continue
        base = normalise_header(str(h)[:m.start()])
        if base in index and index[base][0] in SOURCE_FIELDS:
            pairs.setdefault(int(m.group(1)), {}).setdefault(index[base][0], h)
    return [(p.get("manufacturer"), p.get("mpn")) for _, p in sorted(pairs.items())]


def _quote_list(items: Iterable[str], limit: int = 12) -> str:
    items = [str(i) for i in items if str(i).strip()]
    shown = ", ".join(repr(i) for i in items[:limit])
    return shown + (f" and {len(items) - limit} more" if len(items) > limit else "") or "(none)"


def closest_matches(headers: Sequence[str], fields: Sequence[str],
                    extra_aliases: Mapping[str, Sequence[str]] | None = None) -> list[str]:
    """For the wanted fields, the headers whose folded form is close to one of their aliases,
    as ``"'Desig' ~ Designator (refdes)"`` strings, best first."""
    out: list[tuple[float, str]] = []
    alias_by_norm: dict[str, tuple[str, str]] = {}
    for fld in fields:
        for a in (*(extra_aliases or {}).get(fld, ()), *ALIASES[fld]):
            alias_by_norm.setdefault(normalise_header(a), (fld, a))
    for h in headers:
        folded = normalise_header(h)
        if not folded:
            continue
        for cand in difflib.get_close_matches(folded, list(alias_by_norm), n=1, cutoff=0.6):
            fld, alias = alias_by_norm[cand]
            ratio = difflib.SequenceMatcher(None, folded, cand).ratio()
            out.append((ratio, f"{h!r} ~ {alias} ({fld})"))
    return [s for _, s in sorted(out, key=lambda t: -t[0])]


def layout_error(headers: Sequence[str], missing: str, *, path: str | None = None,
                 overrides: ColumnOverrides | None = None,
                 taken: set[str] | None = None) -> InputError:
    """The error for a table whose header row lacks a needed field, with the headers found and
    the closest matches (among headers not ``taken`` by another field), and how to name the
    column by hand."""
    ov = overrides or ColumnOverrides()
    wanted = ["refdes"] if missing == "refdes" else ["value", "description"]
    free = [h for h in headers if h not in (taken or set())]
    close = closest_matches(free, wanted, ov.aliases)
    examples = ", ".join(a for f in wanted for a in ALIASES[f][:3])
    what = "designator" if missing == "refdes" else "value or description"
    return InputError(
        f"no {what} column among the headers found ({_quote_list(headers)})",
        path=path,
        expected=f"a column named like {examples}",
        hint=("closest matches: " + "; ".join(close[:3]) + "; " if close else "")
        + f"or name it: --columns {wanted[0]}=HEADER",
    )

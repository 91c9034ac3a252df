"""Parse stage: many value texts read at the cost of their distinct shapes.

Descriptions that differ only in words the parser does not read (a lot number, a part number,
a note: ``CAP CER 0.1UF 16V X5R 0402 LOT 4711``) read alike. ``ValueParser`` cuts each text into
tokens, stands a placeholder in for every token whose reading is only "not read" (whatever was
read before it and whatever follows), parses each distinct shape once and puts the text's own
tokens back into the spec's unread tokens and warnings. The result is the spec ``parse_value``
gives for the same text, field for field.
"""

from __future__ import annotations

import operator
from collections.abc import Callable
from dataclasses import fields

from bomcheck.frozen import frozen
from bomcheck.parse import codes
from bomcheck.parse.readings import UNREAD_MARK
from bomcheck.parse.scanstate import State
from bomcheck.parse.valuenumbers import RANGE_WORDS, UNIT_WORDS, numeric
from bomcheck.parse.values import build, internal_error, normalised, parse_value, scan, tokens
from bomcheck.parse.valuewords import word
from bomcheck.spec import CapSpec

__all__ = ["ValueParser"]

# Contexts whose bare numbers and words are read alike wherever they stand.
_SHAPED_CONTEXTS = frozenset({"any", "value", "description"})
# Words that join the number before them or the number after them ("50 V", "5 to 10").
_JOINING = UNIT_WORDS | RANGE_WORDS | {"x", "*"}
assert not any(w.isdigit() for w in _JOINING)  # a number is never a joining word (``_inert``)
# Kinds of tokens a placeholder may stand in for, with the placeholder's form: a bare number
# (unread, and listed in the bare-number warning), a token that starts with a digit and is only
# unread, a word that is only unread.
_NUMBER, _DIGIT_WORD, _WORD = "number", "digit word", "word"
_FORMS = {_NUMBER: "{n}", _DIGIT_WORD: "{n}qzx", _WORD: "Qzx{a}"}
# Each kind's marker in a layout key: a number, never equal to a token (text).
_MARKERS = {_NUMBER: 1, _DIGIT_WORD: 2, _WORD: 3}
_KINDS = {m: k for k, m in _MARKERS.items()}
_BARE_NUMBER_WARNING = f"{UNREAD_MARK}a number without a unit was not read ("
_EMPTY_STATE = vars(State("any"))
_LISTS = tuple(k for k, v in _EMPTY_STATE.items() if isinstance(v, list))
_SPEC_MIDDLE = tuple(f.name for f in fields(CapSpec))[1:-2]
assert tuple(f.name for f in fields(CapSpec))[-2:] == ("warnings", "unread")


def _inert(context: str, tok: str) -> str | None:
    """The kind of ``tok`` when reading it alone does nothing but leave it unread (and, for a
    bare number, count it as one), whatever was read before it; None otherwise (it is read,
    warned about, split or joined). Decided by reading it into an empty scan state."""
    if tok.isdigit() and tok.isascii() and len(tok) > 3 and codes.chip_package(tok) is None:
        return _NUMBER  # a lot or serial number: what valuenumbers._bare_number leaves unread
    if len(tok) < 2 or not tok.isascii() or tok.lower() in _JOINING:
        return None
    if tok.isdigit() and len(tok) != 3 and codes.chip_package(tok) is None:
        return _NUMBER
    st = State(context)
    first = tok[0]
    try:
        if first.isdigit():
            parts = numeric(st, tok, 5)
        elif first.isalpha():
            parts = word(st, tok, 5)
        else:
            return None
    except Exception:  # noqa: BLE001 - left to the plain parse, which reports it
        return None
    if parts is not None or len(st.unread) != 1 or st.unread[0] is not tok:
        return None
    changed = set(vars(st)) - set(_EMPTY_STATE)
    others = [k for k in _LISTS if k != "unread" and getattr(st, k)]
    if not changed and not others:
        return _DIGIT_WORD if first.isdigit() else _WORD
    if first.isdigit() and changed == {"bare_numbers"} and st.bare_numbers == 1 \
            and others == ["bare_toks"] and st.bare_toks == [tok]:
        return _NUMBER
    return None


@frozen
class _Shape:
    """One distinct shape parsed: the spec (no text), where its placeholders ended up in the
    unread tokens, and the bare-number warning to write again (its index, its tokens); each
    placeholder's place is a function of the text's own tokens."""

    spec: CapSpec
    # A text's own tokens -> its (warnings, unread tokens), the warnings said before the scan
    # not included (see ``_own_of``).
    own: Callable[[tuple[str, ...]], tuple[tuple[str, ...], tuple[str, ...]]]


@frozen
class _Layout:
    """The shape of the texts of one layout key and the picker of a text's own tokens (the
    ones its placeholders stand in for) from its tokens."""

    shape: _Shape
    mine: Callable[[list[str]], tuple[str, ...]]


class ValueParser:
    """``parse_value`` for many texts, each distinct shape of tokens parsed once (see the
    module docstring); one per import (it keeps what it has read)."""

    def __init__(self) -> None:
        self._shapes: dict[tuple[str, tuple[str, ...]], _Shape | None] = {}
        # Per context, per token: the token itself, or its kind's marker when it is inert.
        self._marks: dict[str, dict[str, str | int]] = {}
        # Per (context, tokens with inert ones marked): the shape and a picker of the text's
        # own tokens, or None when the text has no shape (it is parsed on its own).
        self._layouts: dict[tuple[str, tuple[str | int, ...]], _Layout | None] = {}
        self._holders: dict[tuple[str, str, int], str | None] = {}

    def parse(self, text: str, context: str = "any") -> CapSpec:
        """The spec ``parse_value(text, context=context)`` gives."""
        if context not in _SHAPED_CONTEXTS or not isinstance(text, str):
            return parse_value(text, context=context)
        spec, warnings, unread = self.read(text, context)
        if warnings is spec.warnings and unread is spec.unread and spec.text == text:
            return spec
        return CapSpec(text, *(getattr(spec, k) for k in _SPEC_MIDDLE), warnings, unread)

    def read(self, text: str, context: str = "any"
             ) -> tuple[CapSpec, tuple[str, ...], tuple[str, ...]]:
        """(a spec with the text's readings, the text's warnings, its unread tokens): what
        ``parse`` gives without building a spec per text. The spec may be shared by every text
        of one shape; its own text, warnings and unread tokens are then not this text's."""
        if context not in _SHAPED_CONTEXTS or not isinstance(text, str):
            spec = parse_value(text, context=context)
            return spec, spec.warnings, spec.unread
        try:
            before: list[str] = []
            toks = tokens(normalised(text, context, before))
            layout = self._layout(context, toks)
            if layout is None:
                st = State(context)
                st.warnings = before
                scan(st, toks)
                spec = build(text, st)
            else:
                return layout.shape.spec, *_own(layout.shape, before, layout.mine(toks))
        except Exception as exc:  # a parser bug must not stop an import; the tests hunt for these
            spec = internal_error(text, exc)
        return spec, spec.warnings, spec.unread

    def _layout(self, context: str, toks: list[str]) -> _Layout | None:
        """The shape of a text's tokens and where its own tokens stand. Found by the tokens with
        every inert one replaced by its kind's marker: which inert tokens are stood in for
        depends only on that key (a token's kind, its neighbours, which join it only when they
        are not inert, and how many stand-ins come before it); the inert tokens that are not
        stood in for are read, so their text is the second part of the key."""
        marks = self._marks.get(context)
        if marks is None:
            marks = self._marks[context] = {}
        key = (context, tuple(map(marks.get, toks)))  # one C-level pass
        if None in key[1]:  # tokens not seen before
            for tok in toks:
                if tok not in marks:
                    kind = _inert(context, tok)
                    marks[tok] = tok if kind is None else _MARKERS[kind]
            key = (context, tuple(map(marks.__getitem__, toks)))
        got = self._layouts.get(key)
        if got is None:
            _, at, _, kept = self._masked(context, toks, marks)
            got = self._layouts[key] = (_picker_of(kept) if kept else None,
                                        _picker_of(at) if at else None, {})
        kept_of, mine_of, by_kept = got
        if mine_of is None:
            return None
        sub = kept_of(toks) if kept_of is not None else ()
        layout = by_kept.get(sub, False)
        if layout is False:
            layout = by_kept[sub] = self._new_layout(context, toks, marks, mine_of)
        return layout

    def _new_layout(self, context: str, toks: list[str], marks: dict[str, str | int],
                    mine_of: Callable[[list[str]], tuple[str, ...]]) -> _Layout | None:
        """The layout of the texts alike ``toks`` (see ``_layout``); None when they have no
        shape (they are parsed one by one)."""
        shape_toks, _, holders, _ = self._masked(context, toks, marks)
        key = (context, tuple(shape_toks))
        shape = self._shapes.get(key, False)
        if shape is False:
            shape = self._shapes[key] = _parse_shape(context, shape_toks, holders)
        return None if shape is None else _Layout(shape, mine_of)

    def _masked(self, context: str, toks: list[str], marks: dict[str, str | int]
                ) -> tuple[list[str], list[int], list[str], list[int]]:
        """(the tokens with placeholders, where the placeholders stand, the placeholders, where
        the inert tokens not stood in for stand)."""
        out = list(toks)
        at: list[int] = []
        holders: list[str] = []
        kept: list[int] = []
        last = len(toks) - 1
        for j, tok in enumerate(toks):
            mark = marks[tok]
            if mark.__class__ is str:
                continue
            kind = _KINDS[mark]  # type: ignore[index]
            # Neighbours that would join it: a unit or range word after a number, a number
            # joined through a range word or "x" before it.
            holder = None if (j < last and kind != _WORD and toks[j + 1].lower() in _JOINING) \
                or (j and toks[j - 1].lower() in _JOINING) \
                else self._holder(context, kind, len(at))
            if holder is None:
                kept.append(j)
                continue
            out[j] = holder
            at.append(j)
            holders.append(holder)
        return out, at, holders, kept

    def _holder(self, context: str, kind: str, k: int) -> str | None:
        """The placeholder of the ``k``-th stood-in token of a text when it is of ``kind``
        (one string object each, told apart by identity); None when the form is not read as
        that kind is."""
        key = (context, kind, k)
        got = self._holders.get(key, False)
        if got is False:
            text = _FORMS[kind].format(n=987654321000 + k, a=_letters(k))
            got = self._holders[key] = text if _inert(context, text) == kind else None
        return got


def _parse_shape(context: str, shape_toks: list[str], holders: list[str]) -> _Shape | None:
    """Parse one shape; None when a placeholder did not come out as one unread token."""
    ids = {id(h): k for k, h in enumerate(holders)}
    st = State(context)
    scan(st, shape_toks)
    bare = tuple(ids.get(id(t), t) for t in st.bare_toks)
    expected = _bare_warning(st.bare_toks) if st.bare_numbers else None
    spec = build("", st)
    unread = tuple(ids.get(id(u), u) for u in spec.unread)
    if sorted(k for k in unread if isinstance(k, int)) != list(range(len(holders))):
        return None
    warning_at = -1
    if expected is not None and expected in spec.warnings:
        warning_at = len(spec.warnings) - 1 - spec.warnings[::-1].index(expected)
    if any(h in w for h in holders for i, w in enumerate(spec.warnings) if i != warning_at):
        return None
    return _Shape(spec, _own_of(spec, _picker(unread, len(holders)) if holders else None,
                                warning_at, _said(bare)))


def _picker(items: tuple[object, ...], n_mine: int) -> Callable[[list[str]], tuple[str, ...]]:
    """A function of a text's own tokens (``n_mine`` of them) giving ``items`` with each
    placeholder number (an int) replaced by that token: one C-level item pick per text."""
    fixed = tuple(t for t in items if not isinstance(t, int))
    at = iter(range(n_mine, n_mine + len(fixed)))
    get = operator.itemgetter(*(t if isinstance(t, int) else next(at) for t in items)) \
        if items else None
    if get is None:
        return lambda mine: ()
    if len(items) == 1:
        return lambda mine: (get((*mine, *fixed)),)
    return lambda mine: get((*mine, *fixed))


def _picker_of(at: list[int]) -> Callable[[list[str]], tuple[str, ...]]:
    """The tokens at ``at`` of a list of tokens, as a tuple (one C-level pick)."""
    if len(at) > 1:
        return operator.itemgetter(*at)
    j = at[0]
    return lambda toks: (toks[j],)


def _letters(k: int) -> str:
    out = ""
    while True:
        k, r = divmod(k, 26)
        out += "abcdefghijklmnopqrstuvwxyz"[r]
        if not k:
            return out


def _said(bare: tuple[object, ...]) -> str:
    """The bare-number warning of a shape as a format string: ``{k!r}`` for the text's k-th
    own token (``str.format`` writes its repr, as ``_bare_warning`` does), the rest as is."""
    return _braces(_BARE_NUMBER_WARNING) + ", ".join(
        f"{{{t}!r}}" if isinstance(t, int) else _braces(repr(t)) for t in bare) + ")"


def _braces(text: str) -> str:
    """``text`` as a literal part of a format string."""
    return text.replace("{", "{{").replace("}", "}}")


def _bare_warning(toks: list) -> str:
    return _BARE_NUMBER_WARNING + ", ".join(repr(t) for t in toks) + ")"


def _own_of(spec: CapSpec, pick: Callable[[tuple[str, ...]], tuple[str, ...]] | None,
            at: int, said: str
            ) -> Callable[[tuple[str, ...]], tuple[tuple[str, ...], tuple[str, ...]]]:
    """A shape's function of a text's own tokens giving its (warnings, unread tokens): the
    unread tokens picked (``pick``; the spec's when None) and the bare-number warning at index
    ``at`` written from ``said`` (none when ``at`` is -1)."""
    warnings, unread = spec.warnings, spec.unread
    if at < 0:
        if pick is None:
            return lambda mine: (warnings, unread)
        return lambda mine: (warnings, pick(mine))
    head, tail, fmt = warnings[:at], warnings[at + 1:], said.format
    if pick is None:
        return lambda mine: ((*head, fmt(*mine), *tail), unread)
    if not head and not tail:
        return lambda mine: ((fmt(*mine),), pick(mine))
    return lambda mine: ((*head, fmt(*mine), *tail), pick(mine))


def _own(shape: _Shape, before: list[str], mine: tuple[str, ...]
         ) -> tuple[tuple[str, ...], tuple[str, ...]]:
    """(warnings, unread tokens) of one text of a shape: the warnings said before the scan, its
    own tokens in place of the placeholders."""
    warnings, unread = shape.own(mine)
    if before:
        warnings = (*before, *warnings)
    return warnings, unread

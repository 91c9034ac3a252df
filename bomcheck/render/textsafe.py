"""Report stage, shared by every writer: input text made safe for XML, Markdown, HTML and CSV.

Text from input files reaches every output, so each output format has one function here that
every writer of that format uses:

- ``xml_text``: every character XML 1.0 forbids (C0 controls but tab, LF and CR; lone
  surrogates; U+FFFE and U+FFFF) becomes U+FFFD (XML 1.0, section 2.2 "Characters").
- ``md_text``: one line of Markdown that renders as the literal text: every character with a
  meaning in CommonMark/GFM inline syntax or in a GFM table is backslash-escaped, so no raw HTML,
  comment, link, emphasis or cell break passes (CommonMark 0.30, 2.4 "Backslash escapes": any
  ASCII punctuation may be escaped).
- ``html_text``: text for an HTML element or a quoted attribute.
- ``spreadsheet_unsafe``: the same guard for a workbook cell (a formula lead or an error value
  such as ``#N/A`` makes the writer store a text cell).
- ``starts_formula`` / ``csv_field``: the CSV-injection guard (OWASP "CSV Injection"): a cell
  that starts with ``=``, ``+``, ``-``, ``@``, tab or CR gets a leading single quote; in a cell
  holding a separator followed by a formula lead (``x;=1+1``, which a spreadsheet reading with
  another list separator splits into a formula cell, quotes or not) that lead gets a single
  quote too (``x;'=1+1``); both kinds are always quoted.
- ``json_dumps``: strict JSON, a NaN or infinity written as null (``bomcheck.report.jsontext``,
  re-exported here for the writers).
- ``natural_key``: designators in the order a reader expects (C7 before C10).
"""

from __future__ import annotations

import re

# XML 1.0 Char production: #x9 | #xA | #xD | [#x20-#xD7FF] | [#xE000-#xFFFD] | [#x10000-#x10FFFF];
# its complement written out (the negated class over all of Unicode takes 15 ms to compile).
_XML_FORBIDDEN = re.compile("[\x00-\x08\x0b\x0c\x0e-\x1f\ud800-\udfff\ufffe\uffff]")
# Controls that are legal XML but meaningless in a one-line cell (DEL, C1 controls).
_CONTROLS = re.compile("[\x00-\x1f\x7f-\x9f]")
# Characters with an inline meaning in CommonMark or GFM (code, emphasis, links and images,
# raw HTML and comments, entities, table cells, strikethrough); and the starts of a line that
# open a block (heading, list, thematic break, setext underline, ordered list).
_MD_SPECIAL = re.compile(r"([\\`*_\[\]<>|&~])")
_MD_BLOCK_LEAD = re.compile(r"^(?:(#{1,6}|[+\-]|=+)(?=\s|$)|(\d{1,9})(?=[.)](?:\s|$)))")

FORMULA_LEADS: tuple[str, ...] = ("=", "+", "-", "@", "\t", "\r")
# The seven error values a spreadsheet cell can hold (the same as openpyxl.cell.cell.ERROR_CODES,
# which tests/test_textsafe.py compares).
SPREADSHEET_ERRORS = frozenset({"#NULL!", "#DIV/0!", "#VALUE!", "#REF!", "#NAME?", "#NUM!", "#N/A"})
_HIDDEN_FORMULA = re.compile(r"([,;\t\r\n|]\s*)([=+\-@])")
_CSV_QUOTE_WHEN = re.compile(r'[,";\t\r\n]')


def xml_text(value: object) -> str:
    """``value`` as text XML 1.0 can carry: forbidden characters become U+FFFD."""
    text = "" if value is None else str(value)
    return _XML_FORBIDDEN.sub("\ufffd", text)


def md_text(value: object) -> str:
    """``value`` as one line of literal Markdown text, safe in a table cell or a list item:
    whitespace runs (newlines too) become one space, control characters U+FFFD, and every
    character with a Markdown or HTML meaning is backslash-escaped."""
    text = xml_text(value)
    text = " ".join(text.split())
    text = _CONTROLS.sub("\ufffd", text)
    text = _MD_SPECIAL.sub(r"\\\1", text)
    lead = _MD_BLOCK_LEAD.match(text)
    if lead and lead.group(1):
        text = "\\" + text
    elif lead:
        text = text[:lead.end()] + "\\" + text[lead.end():]
    return text


# What ``html_text`` changes: HTML's specials and the characters XML forbids. Most texts hold
# none, and one search tells.
_HTML_CHANGES = re.compile("[&<>\"'\x00-\x08\x0b\x0c\x0e-\x1f\ud800-\udfff\ufffe\uffff]")


def html_text(value: object) -> str:
    """``value`` escaped for HTML text and quoted attributes (``<``, ``>``, ``&``, quotes: the
    entities of ``html.escape``), with characters XML forbids replaced, so the page also
    parses as XHTML."""
    text = "" if value is None else str(value)
    if _HTML_CHANGES.search(text) is None:
        return text
    text = xml_text(text)  # then what html.escape(text, quote=True) does, without its import
    return (text.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")
            .replace('"', "&quot;").replace("'", "&#x27;"))


def starts_formula(text: str) -> bool:
    """True when a spreadsheet would take ``text`` as a formula: it starts (after spaces) with
    ``=``, ``+``, ``-``, ``@``, tab or CR."""
    return text.startswith(FORMULA_LEADS) or text.lstrip(" ").startswith(FORMULA_LEADS)


def spreadsheet_unsafe(text: str) -> bool:
    """True when a spreadsheet cell holding ``text`` would be read as a formula or an error
    value (``#N/A``...): the workbook writers store such text as a text cell."""
    return starts_formula(text) or text in SPREADSHEET_ERRORS


def hides_formula(text: str) -> bool:
    """True when ``text`` holds a separator followed by a formula lead (``x;=1+1``)."""
    return _HIDDEN_FORMULA.search(text) is not None


def csv_field(value: object) -> str:
    """One RFC 4180 field of input text with the CSV-injection guard (module docstring)."""
    if value is None:
        return ""
    text = xml_text(value)
    lead = starts_formula(text)
    if lead:
        text = "'" + text
    hidden = hides_formula(text)
    if hidden:
        # Read with another list separator, the text after the separator is a cell of its
        # own and the quotes around this one do not hold there: quote its lead too.
        text = _HIDDEN_FORMULA.sub(r"\1'\2", text)
    if lead or hidden or _CSV_QUOTE_WHEN.search(text):
        return '"' + text.replace('"', '""') + '"'
    return text


def csv_line(fields) -> str:
    """One CSV record with CRLF (RFC 4180); fields are already formatted by ``csv_field`` or are
    numbers written by bomcheck itself."""
    return ",".join(fields) + "\r\n"


_NATURAL = re.compile(r"(\d+)")


def natural_key(text: object) -> tuple:
    """A sort key putting numbers in numeric order: C7 < C10 < C10A < CN1 (case folded)."""
    parts = _NATURAL.split("" if text is None else str(text).casefold())
    # Numbers compare by length, then digits: no int() of a 5,000-digit run.
    return tuple((0, len(p.lstrip("0")), p.lstrip("0")) if i % 2 else (1, 0, p)
                 for i, p in enumerate(parts) if p)


"""Parse stage, first step: a value text normalised before it is cut into tokens.

Glyphs to ASCII (both micro signs to ``u``, dashes, spaces, the ohm and degree signs), ``+/-`` to
``±``, decimal commas and thousands groups decided, library-style underscores to separators
(``C_0603_100n_50V_X7R``), and a safety class dropped from a bracket that talks about another
part (``(Y1 load)``). Doubts go to the warnings list given.
"""

from __future__ import annotations

import re

from bomcheck.parse.readings import UNREAD_MARK

__all__ = ["normalise"]

_TRANSLATE = str.maketrans(
    {
        "\u00b5": "u",  # micro sign
        "\u03bc": "u",  # Greek small mu
        "\u2212": "-",
        "\u2013": "-",
        "\u2014": "-",
        "\u00a0": " ",
        "\u2009": " ",
        "\u202f": " ",
        "\u2103": "°C",
        "\u00d7": "x",
        "\u2126": "Ω",  # ohm sign -> Greek capital omega
    }
)
_PM_SPACE = re.compile(r"±\s+")
# A decimal comma (one or two digits each side) or thousands groups, with a unit right after.
_COMMA_NUMBER = re.compile(
    r"(?<![\d.,])(?:\d{1,3}(?:,\d{3})+(?:\.\d+)?|\d{1,2},\d{1,2})(?=\s?[A-Za-z%°])"
)
# Two temperatures around a slash with one unit: "-40/110C" (a range: lower and upper category
# temperature) or "85/105C" (two upper temperatures: both are read, the lower is kept and the
# conflict reported). IEC 60068-1 climatic categories ("40/105/56") have no unit and stay.
_TEMP_PAIR = re.compile(r"(?<![\w./])([-+]?\d{1,3})\s?/\s?([-+]?\d{1,3})\s?(°?\s?[Cc])(?![\w/])")


def _temperature_pair(m: re.Match[str]) -> str:
    """``-40/110C`` -> ``-40~110C`` (a range); ``85/105C`` -> ``85C 105C`` (two ratings)."""
    lo, hi, unit = m.group(1), m.group(2), m.group(3).replace(" ", "")
    if int(lo) <= 0 < int(hi):
        return f"{lo}~{hi}{unit}"
    return f"{lo}{unit} {hi}{unit}"


# Library-style values and footprints join fields with underscores (C_0603_100n_50V_X7R,
# Capacitor_SMD:C_0603_1608Metric, CP_Elec_8x10): a leading capacitor symbol name becomes the
# word CAP and the underscores separate tokens (common practice of EDA symbol libraries).
_LIBRARY_PREFIX = re.compile(r"(?<![A-Za-z0-9])(?:CAP|CP|C)_(?=[A-Za-z0-9])")
# A safety class inside brackets with other words describes something else ("(Y1 load)": the
# crystal's load capacitor); "(X2)" or "(Class X2)" is this part's class.
_BRACKET_GROUP = re.compile(r"\([^()]*\)|\[[^\[\]]*\]")
_SAFETY_TOKEN = re.compile(r"(?<![A-Za-z0-9])(?:X[1-3]|Y[1-4])(?![A-Za-z0-9])", re.IGNORECASE)


def normalise(text: str, warnings: list[str]) -> str:
    """The text the tokenizer reads (see the module docstring); appends doubts to ``warnings``."""
    s = text if text.isascii() else text.translate(_TRANSLATE)
    if "+" in s:
        s = s.replace("+/-", "±").replace("+-", "±")
    if "±" in s:
        s = _PM_SPACE.sub("±", s)
    if "," in s:
        s = _COMMA_NUMBER.sub(lambda m: _comma_number(m.group(), warnings), s)
    if "/" in s:
        s = _TEMP_PAIR.sub(_temperature_pair, s)
    if "_" in s:
        s = _LIBRARY_PREFIX.sub("CAP ", s).replace("_", " ")
    if "(" in s or "[" in s:
        s = _BRACKET_GROUP.sub(lambda m: _bracketed_safety(m.group(), warnings), s)
    return s


def _comma_number(text: str, warnings: list[str]) -> str:
    """Decide between a decimal comma and a thousands separator ("4,7" / "4,700")."""
    head, _, tail = text.partition(",")
    if "." in text or "," in tail:
        return text.replace(",", "")
    if len(tail) == 3 and not head.startswith("0"):
        warnings.append(f"{UNREAD_MARK}{text}: ',' read as a thousands separator ({head}{tail}), "
                        f"but it may be a decimal comma ({float(head + '.' + tail):g}); check "
                        "the value")
        return head + tail
    return f"{head}.{tail}"


# Words a bracket may hold beside a safety class that still describe this part's rating
# ("(Class X2)", "(X2, IEC 60384-14)"); any other word makes the bracket about something else.
_SAFETY_CONTEXT_WORDS = frozenset({
    "CLASS", "SUBCLASS", "SAFETY", "RATED", "CERTIFIED", "APPROVED", "TYPE", "AC", "VAC",
    "IEC", "EN", "UL", "CSA", "ENEC", "VDE", "CQC", "KC", "AND", "OR",
})
_ALPHA_WORD = re.compile(r"[A-Za-z]+")


def _bracketed_safety(group: str, warnings: list[str]) -> str:
    """A bracketed remark without its safety-class words when it is about something else:
    ``(Y1 load)`` names the load of another part; ``(X2)`` and ``(Class X2)`` stay."""
    found = _SAFETY_TOKEN.findall(group)
    if not found:
        return group
    rest = _SAFETY_TOKEN.sub(" ", group)
    if not any(w.upper() not in _SAFETY_CONTEXT_WORDS for w in _ALPHA_WORD.findall(rest)):
        return group
    warnings.append(f"{'/'.join(found)} inside brackets ({group!r}) is not taken as this part's "
                    "safety class")
    return rest

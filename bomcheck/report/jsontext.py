"""Report stage, the one strict JSON encoder: a NaN or an infinity anywhere is written as null.

Every JSON text bomcheck writes (the report, the comparison, the substitute check, SARIF,
``--json`` of the inspection commands) goes through ``json_dumps``; the renderers import it from
here. orjson writes it (compiled: a large SARIF log was mostly the standard library's indenting
encoder, which is pure Python), so every number has one text in every output: the shortest
that reads back as the same float, as the report's metric columns are written.
"""

from __future__ import annotations

import json
import math

import orjson


def _finite(value):
    """``value`` with every NaN and infinity (in nested dicts, lists and tuples) made None."""
    if isinstance(value, float):
        return value if math.isfinite(value) else None
    if isinstance(value, dict):
        return {k: _finite(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_finite(v) for v in value]
    return value


def json_dumps(value, *, indent: int | None = None) -> str:
    """Strict JSON text (RFC 8259): a NaN or an infinity anywhere is written as null, never as
    ``NaN``/``Infinity``; non-ASCII kept as is. Compact unless ``indent`` (2 spaces; the only
    indent written)."""
    if indent not in (None, 2):
        raise ValueError(f"indent must be None or 2, not {indent!r}")
    try:
        return orjson.dumps(value, option=orjson.OPT_INDENT_2 if indent else 0).decode()
    except TypeError:  # what orjson does not take (an integer beyond 64 bits, a lone surrogate)
        separators = (",", ":") if indent is None else None
        return json.dumps(_finite(value), ensure_ascii=False, allow_nan=False, indent=indent,
                          separators=separators)

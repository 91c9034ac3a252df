"""Report stage, the one strict JSON encoder: a NaN or an infinity anywhere is written as null.

Every JSON text bomcheck writes (the report, the comparison, the substitute check, ``--json``
of the inspection commands) goes through ``json_dumps``; the renderers import it from here.
"""

from __future__ import annotations

import json
import math


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
    ``NaN``/``Infinity``; non-ASCII kept as is. Compact separators unless ``indent``."""
    separators = (",", ":") if indent is None else None
    try:
        return json.dumps(value, ensure_ascii=False, allow_nan=False, indent=indent,
                          separators=separators)
    except ValueError:
        return json.dumps(_finite(value), ensure_ascii=False, allow_nan=False, indent=indent,
                          separators=separators)

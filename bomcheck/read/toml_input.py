"""Read stage: the one TOML loader (rule sets, waivers, design sheets, parts files, alternates,
column maps, batch manifests, project configuration): UTF-8 text, nesting capped, and one
message for a syntax error naming the file and line."""

from __future__ import annotations

import re
import tomllib
from typing import Any

from bomcheck.errors import InputError
from bomcheck.read.files import read_input

def toml_text(data: bytes, path: str) -> str:
    """The text of a TOML input file (UTF-8, with or without a byte-order mark)."""
    try:
        return data.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        raise InputError("TOML must be UTF-8", path=str(path),
                         hint=f"undecodable byte at offset {exc.start}") from None

# Tables and arrays nest at most this deep in any TOML input (rule sets nest 4 levels).
TOML_MAX_DEPTH = 32

def _toml_depth(doc: Any) -> int:
    """How deep tables and arrays nest in a parsed TOML document (iterative: no recursion)."""
    deepest, stack = 0, [(doc, 1)]
    while stack:
        obj, depth = stack.pop()
        deepest = max(deepest, depth)
        if depth > TOML_MAX_DEPTH:
            break
        if isinstance(obj, dict):
            stack.extend((v, depth + 1) for v in obj.values() if isinstance(v, (dict, list)))
        elif isinstance(obj, list):
            stack.extend((v, depth + 1) for v in obj if isinstance(v, (dict, list)))
    return deepest

def load_toml(text: str, path: str) -> dict:
    """Parse TOML text; a syntax error or nesting deeper than ``TOML_MAX_DEPTH`` is an
    ``InputError`` naming the file (and the line of a syntax error)."""
    too_deep = InputError(f"refused: tables or arrays nested more than {TOML_MAX_DEPTH} "
                          "levels deep", path=path, expected="a flat TOML file")
    try:
        doc = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        m = re.search(r"line (\d+)", str(exc))
        raise InputError(f"not valid TOML ({exc})", path=path,
                         row=int(m.group(1)) if m else None) from None
    except RecursionError:
        raise too_deep from None
    if _toml_depth(doc) > TOML_MAX_DEPTH:
        raise too_deep
    return doc

def read_toml(path: str, what: str) -> tuple[dict, str]:
    """Read and parse a TOML input file (``what`` names it in errors, "waiver file"); returns
    the document and the SHA-256 of the file's bytes."""
    data, sha256 = read_input(str(path), what)
    return load_toml(toml_text(data, str(path)), str(path)), sha256

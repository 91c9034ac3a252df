"""Command-line edge: project defaults from ``[tool.bomcheck]`` in the nearest ``pyproject.toml``.

The table is looked for in ``pyproject.toml`` in the working directory, then in each parent; the
first file that has a ``[tool.bomcheck]`` table is used. Command-line options always win. Keys
(a dash may stand for the underscore, ``fail-on`` = ``fail_on``):

==============  ===============================================================================
key             meaning (same as the ``bomcheck audit`` option)
==============  ===============================================================================
design          design sheet path (``--design``)
design_sheet    sheet of an XLSX design sheet (``--design-sheet``)
parts           parts data keyed by MPN (``--parts``)
rules           rule set name or path, or a list of them (``--rules``, in order)
fail_on         ``fail``, ``warn``, ``nodata`` (default) or ``new`` (``--fail-on``)
environment     ``severe`` (default) or ``benign`` (``--environment``)
warn_as         ``failure``, ``skipped`` or ``pass`` (``--warn-as``, JUnit)
waivers         waiver file (``--waivers``)
baseline        previous JSON report to compare with (``--baseline``)
*output name*   one key per output of the registry ``bomcheck.render.registry.OUTPUTS`` (which also makes
                the options of ``bomcheck audit``): the output's path for a file output
                (``json = "build/report.json"``, like ``--json``), true or false for a flag
                output (``annotations = true``, like ``--annotations``)
==============  ===============================================================================

Relative paths are taken relative to the directory of the ``pyproject.toml`` (so the audit gives
the same result from any subdirectory), and are handed on relative to the working directory. A
rule set given by shipped name (no ``/`` and no ``.toml``) stays a name. Example::

    [tool.bomcheck]
    design = "hw/design-sheet.csv"
    rules = ["industrial", "hw/our-overrides.toml"]
    fail_on = "warn"
    waivers = "hw/waivers.toml"
    junit = "build/bomcheck.xml"
"""

from __future__ import annotations

import os
from collections.abc import Mapping
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from bomcheck.errors import InputError
from bomcheck.read.reader import load_toml, read_bytes, toml_text
from bomcheck.render.registry import file_outputs, flag_outputs

CHOICES: dict[str, tuple[str, ...]] = {
    "fail_on": ("fail", "warn", "nodata", "new"),
    "environment": ("severe", "benign"),
    "warn_as": ("failure", "skipped", "pass"),
}
# Output keys come from the output registry: a new output needs no entry here.
PATH_KEYS: tuple[str, ...] = ("design", "parts", "waivers", "baseline", *file_outputs())
FLAG_KEYS: tuple[str, ...] = flag_outputs()
KEYS: tuple[str, ...] = (*PATH_KEYS[:2], "design_sheet", "rules", "fail_on", "environment", "warn_as",
                         *PATH_KEYS[2:], *FLAG_KEYS)


@dataclass(frozen=True)
class Config:
    """The ``[tool.bomcheck]`` values (validated, paths resolved) and the file they came from."""

    path: str | None = None
    values: Mapping[str, Any] = field(default_factory=dict)


def find_pyproject(start: str | Path | None = None) -> Path | None:
    """The nearest ``pyproject.toml`` with a ``[tool.bomcheck]`` table, from ``start`` (default:
    the working directory) up to the file-system root; None when there is none."""
    here = Path(start or Path.cwd()).resolve()
    for folder in (here, *here.parents):
        candidate = folder / "pyproject.toml"
        if candidate.is_file() and "bomcheck" in _tool_table(candidate):
            return candidate
    return None


def _tool_table(path: Path) -> dict:
    try:
        text = toml_text(read_bytes(str(path), "pyproject.toml"), str(path))
        if "bomcheck" not in text:  # skip parsing the many pyproject files that cannot have it
            return {}
        doc = load_toml(text, str(path))
    except OSError as exc:
        raise InputError(f"cannot read pyproject.toml ({exc})", path=str(path)) from None
    tool = doc.get("tool", {})
    return tool if isinstance(tool, dict) else {}


def _hand_on(path: Path, root: Path, cwd: Path) -> str:
    """A config path resolved against ``root`` and written relative to ``cwd`` where possible."""
    if path.is_absolute():
        return str(path)
    full = (root / path).resolve()
    try:
        return os.path.relpath(full, cwd)
    except ValueError:  # another drive (Windows)
        return str(full)


def load_config(start: str | Path | None = None) -> Config:
    """Read and check ``[tool.bomcheck]``; an empty ``Config`` when no pyproject has it."""
    found = find_pyproject(start)
    if found is None:
        return Config()
    table = _tool_table(found)["bomcheck"]
    where = str(found)
    if not isinstance(table, dict):
        raise InputError("[tool.bomcheck] must be a table", path=where)
    cwd = Path(start or Path.cwd()).resolve()
    root = found.parent
    values: dict[str, Any] = {}
    for raw_key, value in table.items():
        key = raw_key.replace("-", "_")
        column = f"tool.bomcheck.{raw_key}"
        if key not in KEYS:
            raise InputError("unknown key in [tool.bomcheck]", path=where, column=column,
                             expected="one of " + ", ".join(KEYS))
        if key == "rules":
            items = [value] if isinstance(value, str) else value
            if not isinstance(items, list) or not all(isinstance(i, str) and i for i in items):
                raise InputError("rules must be a name or path, or a list of them", path=where,
                                 column=column, text=repr(value))
            values[key] = [_hand_on(Path(i), root, cwd) if ("/" in i or i.endswith(".toml"))
                           else i for i in items]
            continue
        if key in FLAG_KEYS:
            if not isinstance(value, bool):
                raise InputError("value must be true or false", path=where, column=column,
                                 text=repr(value))
            values[key] = value
            continue
        if key == "design_sheet" and isinstance(value, int) and not isinstance(value, bool):
            values[key] = str(value)
            continue
        if not isinstance(value, str) or not value.strip():
            raise InputError("value must be a non-empty string", path=where, column=column,
                             text=repr(value))
        if key in CHOICES and value not in CHOICES[key]:
            raise InputError("value not allowed", path=where, column=column, text=value,
                             expected="one of " + ", ".join(CHOICES[key]))
        if key in PATH_KEYS and value != "-":
            value = _hand_on(Path(value), root, cwd)
        values[key] = value
    return Config(path=where, values=values)


def merge(args: Any, config: Config) -> Any:
    """Fill the options the command line left unset (None, or an empty ``rules`` list) from
    ``config``; ``args`` is changed in place and returned."""
    for key, value in config.values.items():
        current = getattr(args, key, None)
        if current is None or (key == "rules" and current == []):
            setattr(args, key, list(value) if isinstance(value, list) else value)
    return args

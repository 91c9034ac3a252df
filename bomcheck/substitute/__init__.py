"""Substitute check: a proposed alternate audited in every placement of the part it replaces.

Modules, in the order a check runs: ``alternates`` (reading the alternates file), ``table`` (the
original's placements, the alternate's spec laid over them, the audit's stages run on them),
``differences`` (spec against spec), ``verdicts`` (both parts' verdicts side by side),
``phrases`` and ``reasons`` (the verdict in words), ``result`` (the values and their JSON form),
``words`` (designator lists, quantities, conditions) and ``check`` (the check and its library
calls). The Markdown, terminal, HTML and workbook forms live in ``bomcheck.render``.

The names below load their module on first use, so a renderer that needs only ``words`` does not
load the check.
"""

from __future__ import annotations

import importlib
from typing import TYPE_CHECKING, Any

# Public name -> the module that defines it.
_HOME = {
    "Alternate": "result", "AlternateResult": "result", "SubstituteOptions": "result",
    "SubstituteResult": "result", "alternates_from_records": "alternates",
    "alternates_from_toml": "alternates", "read_alternates": "alternates",
    "check_alternates": "check", "run_direct": "check", "run_substitute": "check",
    "substitute_inputs": "check", "designator_list": "words",
}
__all__ = [
    "Alternate", "AlternateResult", "SubstituteOptions", "SubstituteResult",
    "alternates_from_records", "alternates_from_toml", "check_alternates", "designator_list",
    "read_alternates", "run_direct", "run_substitute", "substitute_inputs",
]

if TYPE_CHECKING:
    from bomcheck.substitute.alternates import (alternates_from_records, alternates_from_toml,
                                                read_alternates)
    from bomcheck.substitute.check import (check_alternates, run_direct, run_substitute,
                                           substitute_inputs)
    from bomcheck.substitute.result import (Alternate, AlternateResult, SubstituteOptions,
                                            SubstituteResult)
    from bomcheck.substitute.words import designator_list


def __getattr__(name: str) -> Any:
    if name not in _HOME:
        raise AttributeError(f"module 'bomcheck.substitute' has no attribute {name!r}")
    return getattr(importlib.import_module(f"bomcheck.substitute.{_HOME[name]}"), name)

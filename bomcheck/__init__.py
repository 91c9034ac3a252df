"""bomcheck: audit a bill of materials for capacitor derating and stress before release.

The public library is ``bomcheck.api``, whose names are also here: ``audit_files`` (paths),
``audit_frames`` (pandas tables in memory), ``substitute_files``/``substitute_frames``,
``import_file``, ``parse_value``, ``rules``, ``diff``, ``where_used``, ``audit_manifest`` and ``write``
(any registered output of a report). They load on first use, so ``import bomcheck`` stays light.
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

__version__ = "0.1.0"

# The names of ``bomcheck.api.__all__`` (a test checks the two lists agree).
_API = (
    "DEFAULT_RULESET", "Alternate", "AuditOptions", "BoardResult", "CapSpec", "Diff",
    "ImportOptions", "ImportResult", "Limits", "MIB", "Report", "RuleSet", "SubstituteOptions",
    "SubstituteResult", "Use", "at_least", "audit_files", "audit_frames", "audit_manifest",
    "batch_outputs", "batch_status", "check_substitutes", "diff", "diff_markdown", "diff_summary",
    "import_file", "import_frame", "import_record", "json_text", "parse_value", "read_alternates",
    "read_report", "rules", "ruleset_names", "substitute_direct", "substitute_files",
    "substitute_frames", "use_limits", "uses_csv", "where_used", "write", "write_outputs",
    "write_text",
)
# name -> module it lives in (imported on first use)
_LAZY = {
    **dict.fromkeys(_API, "bomcheck.api"),
    "BomcheckError": "bomcheck.errors", "InputError": "bomcheck.errors",
    "STATUS_ORDER": "bomcheck.status",
}

__all__ = ["BomcheckError", "InputError", "STATUS_ORDER", "__version__", *_API]

if TYPE_CHECKING:  # pragma: no cover
    from bomcheck.api import *  # noqa: F403
    from bomcheck.errors import BomcheckError, InputError
    from bomcheck.status import STATUS_ORDER


def __getattr__(name: str) -> Any:
    if name in _LAZY:
        from importlib import import_module

        value = getattr(import_module(_LAZY[name]), name)
        globals()[name] = value
        return value
    raise AttributeError(f"module 'bomcheck' has no attribute {name!r}")

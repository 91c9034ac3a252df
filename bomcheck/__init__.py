"""bomcheck: audit a bill of materials for capacitor derating and stress before release.

The public library: ``audit_files`` (paths), ``audit_frames`` (pandas tables in memory),
``check_substitutes`` and ``write`` (any registered output of a report). Heavy modules load on first
use, so ``import bomcheck`` stays light.
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

__version__ = "0.1.0"

__all__ = [
    "AuditOptions", "BomcheckError", "InputError", "Report", "STATUS_ORDER", "__version__",
    "audit_files", "audit_frames", "check_substitutes", "write",
]

# name -> module it lives in (imported on first use)
_LAZY = {
    "audit_files": "bomcheck.api", "audit_frames": "bomcheck.api",
    "check_substitutes": "bomcheck.api",
    "write": "bomcheck.api", "AuditOptions": "bomcheck.pipeline.audit", "Report": "bomcheck.report.model",
    "BomcheckError": "bomcheck.errors", "InputError": "bomcheck.errors",
    "STATUS_ORDER": "bomcheck.status",
}

if TYPE_CHECKING:  # pragma: no cover
    from bomcheck.api import audit_files, audit_frames, check_substitutes, write
    from bomcheck.pipeline.audit import AuditOptions
    from bomcheck.errors import BomcheckError, InputError
    from bomcheck.report.model import Report
    from bomcheck.status import STATUS_ORDER


def __getattr__(name: str) -> Any:
    if name in _LAZY:
        from importlib import import_module

        value = getattr(import_module(_LAZY[name]), name)
        globals()[name] = value
        return value
    raise AttributeError(f"module 'bomcheck' has no attribute {name!r}")

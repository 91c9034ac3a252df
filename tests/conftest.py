"""Shared fixtures: the sample board audited once per session and rule set."""

from __future__ import annotations

import functools
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
SAMPLE_BOM = ROOT / "sample_boms" / "bw7-controller-bom.csv"
SAMPLE_DESIGN = ROOT / "sample_boms" / "bw7-design.csv"
SAMPLE_PARTS = ROOT / "sample_boms" / "bw7-parts.csv"


@functools.lru_cache(maxsize=None)
def _sample_report(ruleset: str, environment: str = "severe"):
    from bomcheck.audit import AuditOptions, run_audit

    return run_audit(str(SAMPLE_BOM), str(SAMPLE_DESIGN),
                     AuditOptions(rules=(ruleset,), parts=str(SAMPLE_PARTS),
                                  environment=environment))


@pytest.fixture(scope="session")
def sample_report_for():
    """``sample_report_for(name, environment="severe")``: the sample board's report (with its
    parts data) under a shipped rule set, audited once per session."""
    return _sample_report

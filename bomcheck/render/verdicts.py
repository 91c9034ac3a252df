"""Report stage, shared by the text writers: what JUnit, Markdown, CSV, SARIF and HTML read from a
``Report`` (the governing verdicts, the problems and the waivers of each placement, each
verdict's BOM row), computed once here."""

from __future__ import annotations

import numpy as np
import pandas as pd

from bomcheck.quantity import is_missing


def has_text(value) -> bool:
    """True for a non-empty text value (not None, NaN or "")."""
    return not is_missing(value) and bool(str(value))


def governing(report) -> pd.DataFrame:
    """The governing verdict of each placement (an empty frame with its columns when none)."""
    gov = report.governing()
    return gov if len(gov) else pd.DataFrame(columns=["rule_id", "status", "message"])


def bom_rows(report, verdicts: pd.DataFrame, missing=None) -> list:
    """Each verdict's BOM row: its placement's ``row`` (``missing`` where the placement is not
    in the report's table), by one index look-up for all verdicts."""
    table = report.table
    at = table.index.get_indexer(pd.to_numeric(verdicts["pidx"], errors="coerce"))
    out = np.full(len(at), missing, dtype=object)
    out[at >= 0] = table["row"].to_numpy(dtype=object)[at[at >= 0]]
    return out.tolist()


def problems_by_placement(report) -> dict[int, list[tuple[str, str, str]]]:
    """Per placement index, its verdicts that are not a pass: (status, rule id, message)."""
    v = report.verdicts
    if not len(v):
        return {}
    v = report.with_messages(v[v["status"] != "pass"])
    out: dict[int, list[tuple[str, str, str]]] = {}
    for pidx, status, rule, msg in zip(v["pidx"].to_numpy(), v["status"].to_numpy(),
                                        v["rule_id"].to_numpy(), v["message"].to_numpy()):
        out.setdefault(int(pidx), []).append((str(status), str(rule), str(msg)))
    return out


def waived_by_placement(report) -> dict[int, str]:
    """Per placement index, its waived verdicts as ``rule (was status): reason; ...``."""
    v = report.verdicts
    if "waived_from" not in v.columns:
        return {}
    v = v[v["status"] == "waived"]
    reasons = v["waiver_reason"] if "waiver_reason" in v.columns else pd.Series("", index=v.index)
    out: dict[int, list[str]] = {}
    for pidx, rule, was, why in zip(v["pidx"], v["rule_id"], v["waived_from"], reasons):
        out.setdefault(int(pidx), []).append(f"{rule} (was {was}): {why}")
    return {k: "; ".join(items) for k, items in out.items()}


def not_audited_counts(report) -> dict[str, int]:
    """How many rows were not audited, by kind, in the order they are first met."""
    kinds: dict[str, int] = {}
    for d in report.not_audited():
        kinds[d["kind"]] = kinds.get(d["kind"], 0) + 1
    return kinds

"""Verdict cases for the engine and message tests: the shipped rule sets, one placement row with
the metrics a stress stage would compute, one rule's verdict on it, and a large synthetic table."""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pandas as pd
import pytest

from bomcheck.evaluate.engine import evaluate
from bomcheck.evaluate.rules import load_rules


@pytest.fixture(scope="module")
def strict():
    return load_rules(["strict"])


@pytest.fixture(scope="module")
def strict_step():
    return load_rules(["strict-step"])


@pytest.fixture(scope="module")
def industrial():
    return load_rules(["industrial"])


def placement(**given) -> dict:
    """A placement row with the metrics a stress stage would compute from ``given``."""
    row = {"refdes": "C1", **given}
    if "applied_peak_v" in row and "voltage_v" in row:
        row.setdefault("voltage_ratio", row["applied_peak_v"] / row["voltage_v"])
    if "t_ambient_c" in row:
        row.setdefault("t_operating_c", row["t_ambient_c"] + row.get("t_rise_c", 0.0))
    if "temp_max_c" in row:
        row.setdefault("temp_max_used_c", row["temp_max_c"])
    if "temp_max_c" in row and "t_operating_c" in row:
        row.setdefault("temp_margin_c", row["temp_max_c"] - row["t_operating_c"])
    return row


def verdict(ruleset, rule_id: str, **given) -> pd.Series:
    """The verdict of one rule (forced on) for one placement."""
    rs = ruleset.with_rules([replace(ruleset.rule(rule_id), enabled=True)])
    v = evaluate(pd.DataFrame([placement(**given)]), rs)
    assert len(v) == 1, v
    return v.iloc[0]


def synthetic(n: int, seed: int = 7) -> pd.DataFrame:
    rng = np.random.default_rng(seed)
    techs = np.array(["ceramic", "ceramic", "tantalum", "tantalum-wet", "film",
                      "aluminium-electrolytic", "tantalum-polymer", "mica"], dtype=object)
    tech = techs[rng.integers(0, len(techs), n)]
    rated = rng.choice([6.3, 10.0, 16.0, 25.0, 50.0, 100.0], n)
    applied = np.round(rated * rng.choice([0.3, 0.45, 0.6, 0.75, 0.9], n), 3)
    t_amb = rng.choice([25.0, 55.0, 70.0, 85.0, 95.0], n)
    t_max = rng.choice([85.0, 105.0, 125.0], n)
    c_min = rng.choice([1e-7, 1e-6, 4.7e-6], n)
    c_worst = c_min * rng.choice([0.8, 1.2, 2.0], n)
    return pd.DataFrame({
        "refdes": [f"C{i}" for i in range(n)], "technology": tech, "voltage_v": rated,
        "capacitance_f": c_min * 2, "temp_max_c": t_max,
        "polarized": np.isin(tech, ["tantalum", "tantalum-wet", "aluminium-electrolytic",
                                    "tantalum-polymer"]),
        "applied_peak_v": applied, "voltage_ratio": applied / rated, "t_ambient_c": t_amb,
        "t_operating_c": t_amb, "temp_margin_c": t_max - t_amb, "c_min_f": c_min,
        "c_worst_f": c_worst, "c_margin": c_worst / c_min,
    })

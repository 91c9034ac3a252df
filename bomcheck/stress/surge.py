"""Stress stage, circuit level: the surge current at switch-on (``surge_a``, ``surge_ratio``) and
the series resistance that limits it (``series_r_ohm``). No I/O."""

from __future__ import annotations

from typing import Any

import numpy as np

from bomcheck.stress.circuit_run import CircuitRun


def surge_current_a(c_f: Any, slew_v_per_s: Any = np.nan, v: Any = np.nan,
                    r_source_ohm: Any = np.nan) -> Any:
    """Peak surge current at switch-on: i = C dV/dt where the slew rate is known, else the step
    V / R_source."""
    c, slew = np.asarray(c_f, dtype=float), np.asarray(slew_v_per_s, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        step = np.asarray(v, dtype=float) / np.asarray(r_source_ohm, dtype=float)
    return np.where(np.isnan(slew), step, c * slew)


def tantalum_min_series_r(v: Any, ohm_per_v: float = 0.1, floor_ohm: float = 1.0) -> Any:
    """Series circuit resistance solid tantalum asks for: the larger of ``ohm_per_v`` x V and
    ``floor_ohm`` (NASA EEE-INST-002 Section C1 Table 4 note 4)."""
    return np.fmax(ohm_per_v * np.asarray(v, dtype=float), floor_ohm)


def metrics(run: CircuitRun) -> None:
    """Each placement's surge current; a series stack's current flows through every member."""
    surge = surge_current_a(run.c_max(), run.num("slew_v_per_s"), run.num("v_upper_v"),
                            run.num("r_source_ohm"))
    alone = np.isnan(run.group_array("node_v_group"))
    surge = np.where(alone, surge, run.group_array("surge_group"))
    series_r = np.where(alone, run.num("r_source_ohm"), run.group_array("r_source_group"))
    run.put("surge_a", np.asarray(surge, dtype=float))
    run.put("surge_ratio", np.asarray(surge / run.num("surge_rated_a"), dtype=float))
    run.put("series_r_ohm", np.asarray(series_r, dtype=float))


__all__ = ["metrics", "surge_current_a", "tantalum_min_series_r"]

"""Stress stage, circuit level: stored energy and charge, the node each placement is on, and how
fast its bleeders discharge it (``discharge_s``, ``t_to_60v_s``, the voltage after 1 s...).

The formulas are the textbook ones, tested against the worked examples of the reference sheet
(section 4). No I/O.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from typing import Any

import numpy as np
import pandas as pd

from bomcheck.errors import InputError
from bomcheck.stress.circuit_run import CircuitRun

SHOCK_VOLTAGE_V = 100.0  # DOE electrical safety practice: shock hazard at 100 V and 10 J
SQRT2 = math.sqrt(2.0)


def energy_j(c_f: Any, v: Any) -> Any:
    """Stored energy E = 1/2 C V^2 (J)."""
    return 0.5 * np.asarray(c_f, dtype=float) * np.asarray(v, dtype=float) ** 2


def charge_c(c_f: Any, v: Any) -> Any:
    """Stored charge Q = C V (C)."""
    return np.asarray(c_f, dtype=float) * np.asarray(v, dtype=float)


def discharge_time_s(r_ohm: Any, c_f: Any, v0: Any, v_safe: Any) -> Any:
    """Time to fall from ``v0`` to ``v_safe`` through ``r_ohm``: t = R C ln(V0 / V_safe); 0 where
    ``v0`` is already at or below ``v_safe``; NaN where the resistance is unknown."""
    r, c, v0, vs = (np.asarray(a, dtype=float) for a in (r_ohm, c_f, v0, v_safe))
    with np.errstate(divide="ignore", invalid="ignore"):
        t = r * c * np.log(v0 / vs)
    return np.where((v0 <= vs) & ~np.isnan(r), 0.0, t)


def discharge_r_max(t_s: float, c_f: float, v0: float, v_limit: float) -> float:
    """Largest discharge resistance that brings ``v0`` to ``v_limit`` within ``t_s``:
    R = t / (C ln(V0 / V_limit))."""
    return t_s / (c_f * math.log(v0 / v_limit))


def voltage_after(t_s: Any, r_ohm: Any, c_f: Any, v0: Any) -> Any:
    """Voltage ``t_s`` after disconnection: V(t) = V0 exp(-t / RC)."""
    r, c = np.asarray(r_ohm, dtype=float), np.asarray(c_f, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.asarray(v0, dtype=float) * np.exp(-np.asarray(t_s, dtype=float) / (r * c))


def check_bleeders(table: pd.DataFrame, groups: Mapping[str, Any]) -> None:
    """A bleeder of 0 ohm (or less) is an input error, not a short: it would hold the capacitor
    at 0 V, which contradicts the voltage the design gives, and an empty cell, not 0, says there
    is no bleeder. Treating it as a short would report a 0 s discharge: a wrong pass."""
    bad: list[str] = []
    if "r_bleeder_ohm" in table.columns:
        r = pd.to_numeric(table["r_bleeder_ohm"], errors="coerce").to_numpy(dtype=float)
        for i in np.flatnonzero(r <= 0)[:5]:
            row = table["design_row"].iloc[i] if "design_row" in table.columns else None
            bad.append(f"{table['refdes'].iloc[i]}" + (f" (design row {int(row)})"
                                                      if row is not None and row == row else ""))
    for g in groups.values():
        v = dict(g.conditions).get("r_bleeder_ohm")
        if v is not None and v == v and v <= 0:
            bad.append(f"group {g.name}" + (f" (design row {g.row})" if g.row else ""))
    if bad:
        raise InputError(f"r_bleeder_ohm of 0 ohm or less for {', '.join(bad)}: a bleeder "
                         "that shorts the capacitor", column="r_bleeder_ohm",
                         expected="the bleeder's resistance above 0 ohm, or an empty cell when "
                                  "there is no bleeder")


def nodes(run: CircuitRun) -> dict[str, np.ndarray]:
    """Each placement's node: its stored voltage, the capacitance and the discharge resistance on
    it (the placement's own, a series stack's; the bank stress sets its banks' nodes). Without
    banks and stacks each node is the placement's own: its arrays are the placement's, read-only."""
    if "nodes" not in run.shared and not (run.of_kind("bank") or run.of_kind("series")):
        v_stored = np.fmax(run.num("applied_peak_v"), SQRT2 * run.num("v_ac_rms"))
        v_stored.flags.writeable = False
        c_max = run.c_max().view()
        c_max.flags.writeable = False
        run.shared["nodes"] = {"v_stored": v_stored, "node_v": v_stored, "node_c": c_max,
                               "r_dis": run.num("r_bleeder_ohm")}
    if "nodes" not in run.shared:
        v_stored = np.fmax(run.num("applied_peak_v"), SQRT2 * run.num("v_ac_rms"))
        node_v, node_c = v_stored.copy(), run.c_max().copy()
        r_dis = run.num("r_bleeder_ohm").copy()
        group_v = run.group_array("node_v_group")
        grouped = ~np.isnan(group_v)
        node_v[grouped] = group_v[grouped]
        node_c[grouped] = run.group_array("node_c_group")[grouped]
        in_group = run.group_array("in_group", False)
        r_dis[in_group] = run.group_array("r_dis_group")[in_group]
        run.shared["nodes"] = {"v_stored": v_stored, "node_v": node_v, "node_c": node_c,
                               "r_dis": r_dis}
    return run.shared["nodes"]


def metrics(run: CircuitRun) -> None:
    """Stored energy, the node's energy (a shock hazard from 100 V) and its discharge times."""
    node = nodes(run)
    c_max, node_v, node_c, r_dis = run.c_max(), node["node_v"], node["node_c"], node["r_dis"]
    energy = energy_j(c_max, node["v_stored"])
    # Without banks and stacks the node is the placement's own: the same energy.
    node_energy = energy if node_v is node["v_stored"] else energy_j(node_c, node_v)
    v_safe = run.num("v_safe_v")
    v_safe = np.where(np.isnan(v_safe), run.opts.safe_voltage_v, v_safe)
    discharge = discharge_time_s(r_dis, node_c, node_v, v_safe)
    for name, values in (
        ("c_max_f", c_max), ("v_stored_v", node["v_stored"]),
        ("energy_j", energy),
        ("node_v", node_v), ("node_c_f", node_c), ("node_energy_j", node_energy),
        ("shock_energy_j", np.where(node_v >= SHOCK_VOLTAGE_V, node_energy, np.nan)),
        ("r_discharge_ohm", r_dis), ("v_safe_used_v", v_safe), ("discharge_s", discharge),
        ("t_to_60v_s", discharge_time_s(r_dis, node_c, node_v, 60.0)),
        ("v_after_1s_v", voltage_after(1.0, r_dis, node_c, node_v)),
        ("charge_after_5s_uc",
         charge_c(node_c, voltage_after(5.0, r_dis, node_c, node_v)) * 1e6),
        ("discharge_ratio", discharge / run.num("t_discharge_max_s")),
    ):
        run.put(name, np.asarray(values, dtype=float))


__all__ = ["SHOCK_VOLTAGE_V", "charge_c", "check_bleeders", "discharge_r_max", "discharge_time_s",
           "energy_j", "metrics", "nodes", "voltage_after"]

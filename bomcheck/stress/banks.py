"""Stress stage, circuit level: banks, placements in parallel on one rail. The bank's ripple
current is shared by capacitance, its node discharges through every bleeder on it, and its
capacitance need is met by the bank as a whole. No I/O."""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from bomcheck.stress.circuit_run import CircuitRun, finite, members
from bomcheck.stress.discharge import nodes
from bomcheck.stress.columns import labels


def parallel_f(c_f: Sequence[float] | np.ndarray) -> float:
    """Capacitance of capacitors in parallel: the sum."""
    return float(np.sum(np.asarray(c_f, dtype=float)))


def share_ripple(run: CircuitRun) -> None:
    """A bank's ripple current shared in proportion to capacitance (a member's own stays)."""
    banks = run.of_kind("bank")
    if not banks:
        return
    c_nom = run.num("capacitance_f")
    i_rip = run.num("i_ripple_a").copy()
    for g in banks:
        pos, fitted, missing = members(g, run.where())
        if not pos:
            continue
        gc, p = dict(g.conditions), np.asarray(pos)
        if "i_ripple_a" in gc:
            c = c_nom[p]
            i_rip[p] = np.where(np.isnan(i_rip[p]), gc["i_ripple_a"] * c / np.sum(c), i_rip[p])
        run.group_array("in_group", False)[p] = True
        run.summaries.append({"name": g.name, "kind": "bank", "row": g.row, "members": fitted,
                              "not_audited": missing, "_pos": p,
                              "c_eq_f": finite(parallel_f(c_nom[p])),
                              "c_min_f": finite(gc.get("c_min_f", np.nan)),
                              "r_bleeder_ohm": finite(gc.get("r_bleeder_ohm", np.nan)),
                              "i_ripple_a": finite(gc.get("i_ripple_a", np.nan)),
                              "notes": g.notes})
    run.put("i_ripple_a", i_rip)


def metrics(run: CircuitRun) -> None:
    """Each bank's node and bleeders, and every bank's and stack's capacitance against its need
    (generic where a member's capacitance rests on generic data)."""
    node = nodes(run)
    c_worst, c_fav, c_low = (run.num(n) for n in ("c_worst_f", "c_worst_f_best", "c_worst_f_worst"))
    need, worst, fav, low = (run.group_array(n) for n in ("bank_min", "bank_worst", "bank_fav",
                                                          "bank_low"))
    bleeders = run.num("r_bleeder_ohm")
    for s in run.summaries:
        if s["kind"] != "bank":
            continue
        p, gc = s["_pos"], dict(run.groups[s["name"]].conditions)
        node["node_v"][p] = np.max(node["v_stored"][p])
        node["node_c"][p] = np.sum(run.c_max()[p])
        # Every bleeder on the bank's node discharges all of it: the group's and the members'.
        g_ohm = np.r_[bleeders[p], gc.get("r_bleeder_ohm", np.nan)]
        g_ohm = g_ohm[np.isfinite(g_ohm)]
        node["r_dis"][p] = 1.0 / np.sum(1.0 / g_ohm) if len(g_ohm) else np.nan
        if "c_min_f" in gc and gc["c_min_f"] > 0:
            need[p] = gc["c_min_f"]
            worst[p] = np.sum(c_worst[p])  # NaN when a member's is unknown
            fav[p], low[p] = np.sum(c_fav[p]), np.sum(c_low[p])
        s.update(v_node_v=finite(node["node_v"][p][0]), c_worst_f=finite(np.sum(c_worst[p])),
                 c_margin=finite(np.sum(c_worst[p]) / gc["c_min_f"])
                 if gc.get("c_min_f") else None)
    for name, values in (("bank_c_min_f", need), ("bank_c_worst_f", worst),
                         ("bank_c_margin", worst / need), ("bank_c_margin_best", fav / need),
                         ("bank_c_margin_worst", low / need)):
        run.put(name, np.asarray(values, dtype=float))
    generic = np.zeros(run.n, dtype=bool)
    member_generic = run.is_text("c_margin_basis", ("generic",)) if run.summaries else generic
    for s in run.summaries:
        generic[s["_pos"]] = member_generic[s["_pos"]].any()
    run.put("bank_c_margin_basis", labels(generic & np.isfinite(need), ("", "generic")))


__all__ = ["metrics", "parallel_f", "share_ripple"]

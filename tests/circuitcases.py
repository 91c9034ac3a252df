"""Small invented tables for the circuit-stress tests: an electrolytic placement, a design
group, and the stress and circuit stages run on them."""

from __future__ import annotations

from types import MappingProxyType

import pandas as pd

from bomcheck.parse.design import Group
from bomcheck.stress import circuit
from bomcheck.stress.placement import StressData, compute

DATA = StressData()


def electrolytic(refdes, c_f=100e-6, v=250.0, tol=20.0, **more):
    return {"refdes": refdes, "row": 2, "technology": "aluminium-electrolytic", "polarized": True,
            "capacitance_f": c_f, "voltage_v": v, "tol_minus_pct": tol, "tol_plus_pct": tol,
            "temp_max_c": 105.0, "t_ambient_c": 40.0, "package": "", **more}


def group(name, members, kind, **conditions):
    return Group(name, tuple(members), 2, kind, MappingProxyType(conditions))


def run(rows, groups=None, ruleset=None):
    table = compute(pd.DataFrame(rows), DATA)
    return circuit.apply(table, DATA, ruleset, groups={g.name: g for g in groups or []})

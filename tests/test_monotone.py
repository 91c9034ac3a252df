"""No wrong pass, as properties: a worse condition or a weaker part never improves a placement's
status, and less complete data never turns anything into a pass. Run over every shipped rule set
and both audit environments (common practice of derating review: a verdict is monotone in the
stress and in the part's strength)."""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest
from hypothesis import HealthCheck, Phase, given, settings
from hypothesis import strategies as st

from bomcheck.evaluate import rules
from bomcheck.pipeline.audit import evaluate_table
from bomcheck.status import RANK

RULESETS = {(name, env): rules.load_rules([name]).for_environment(env)
            for name in rules.shipped_names() for env in rules.ENVIRONMENTS}

TECH = {  # technology -> (polarized, dielectric choices)
    "ceramic": (False, ("X7R", "X5R", "C0G", "Y5V", None)),
    "tantalum": (True, (None,)),
    "tantalum-polymer": (True, (None,)),
    "tantalum-wet": (True, (None,)),
    "aluminium-electrolytic": (True, (None,)),
    "aluminium-polymer": (True, (None,)),
    "film": (False, (None,)),
    "mica": (False, (None,)),
    "glass": (False, (None,)),
    "supercapacitor": (True, (None,)),
    None: (False, (None,)),
}
DIELECTRIC = {"X7R": (2, -55, 125, 15.0), "X5R": (2, -55, 85, 15.0), "Y5V": (2, -30, 85, 82.0),
              "C0G": (1, -55, 125, None)}  # EIA-198 class, range, change (tables)

maybe = lambda s: st.one_of(st.none(), s)  # noqa: E731


@st.composite
def placements(draw):
    tech = draw(st.sampled_from(list(TECH)))
    polarized, dielectrics = TECH[tech]
    dielectric = draw(st.sampled_from(dielectrics))
    row = {
        "refdes": "C1", "row": 2, "line": 1, "fitted": True, "technology": tech or np.nan,
        "polarized": polarized,
        # film may be AC-rated (X2 or plain AC film): checked at its rated rms and rated peak
        "voltage_kind": draw(st.sampled_from(["dc", "ac"])) if tech == "film" else "dc",
        "capacitance_f": draw(st.sampled_from([1e-10, 1e-8, 1e-7, 1e-6, 1e-5, 4.7e-5, 1e-3])),
        "voltage_v": draw(st.sampled_from([6.3, 10.0, 16.0, 25.0, 50.0, 100.0, 400.0])),
        "tol_minus_pct": draw(maybe(st.sampled_from([1.0, 5.0, 10.0, 20.0]))),
        "temp_max_c": draw(maybe(st.sampled_from([85.0, 105.0, 125.0]))),
        "v_dc": draw(st.floats(0.0, 300.0)),
        "v_ripple_pk": draw(maybe(st.floats(0.0, 30.0))),
        "v_transient_pk": draw(maybe(st.floats(0.0, 400.0))),
        "v_reverse_pk": draw(maybe(st.floats(0.0, 3.0))),
        "v_ac_rms": draw(maybe(st.floats(0.0, 300.0))) if tech == "film" else None,
        "t_ambient_c": draw(st.floats(-40.0, 130.0)),
        "t_rise_c": draw(maybe(st.floats(0.0, 30.0))),
        "c_min_f": draw(maybe(st.sampled_from([0.0, 1e-10, 1e-8, 1e-6, 1e-4]))),
        "life_h": draw(maybe(st.sampled_from([1e3, 1e4, 1e5]))),
        "condition_source": "refdes",
    }
    if dielectric:
        cls, tmin, tmax, change = DIELECTRIC[dielectric]
        row.update(dielectric=dielectric, dielectric_class=cls, temp_min_c=float(tmin))
        row["temp_max_c"] = float(tmax)
        if change is not None:
            row["cap_change_minus_pct"] = change
        else:
            row.update(tc_ppm=0.0, tc_tol_ppm=30.0)
    return row


def statuses(rows: list[dict], ruleset) -> list[str]:
    """Each row's status, the rows audited together as one table (one placement each)."""
    table = pd.DataFrame([{k: (np.nan if v is None else v) for k, v in r.items()} for r in rows])
    table["refdes"] = [f"C{i + 1}" for i in range(len(rows))]
    return evaluate_table(table, ruleset).table["status"].astype(str).tolist()


def status(row: dict, ruleset) -> str:
    return statuses([row], ruleset)[0]


# Moves that make a placement worse: (name, function of the row -> worse row).
WORSE = {
    # more DC, the ripple raised alike: a higher DC alone lifts a ripple's swing below zero off a
    # polarized part (less reverse voltage), which is no worse condition for it
    "more DC": lambda r: {**r, "v_dc": r["v_dc"] * 1.5 + 1.0,
                          "v_ripple_pk": (r["v_ripple_pk"] or 0.0) + r["v_dc"] * 0.5 + 1.0},
    "more ripple": lambda r: {**r, "v_ripple_pk": (r["v_ripple_pk"] or 0.0) + 5.0},
    "more transient": lambda r: {**r, "v_transient_pk": (r["v_transient_pk"] or 0.0) * 2 + 50},
    # an AC-rated part's AC voltage not given stays not given (that is missing data, not none)
    "more AC": lambda r: {**r, "v_ac_rms": None if r["voltage_kind"] == "ac" and r.get(
        "v_ac_rms") is None else (r.get("v_ac_rms") or 0.0) + 20.0},
    "more reverse": lambda r: {**r, "v_reverse_pk": _less(r["v_reverse_pk"], -1.0)},
    # hotter at the top of the range, the coldest ambient unchanged (where t_ambient_min_c is
    # not given, the operating ambient bounds the coldest from above)
    "hotter": lambda r: {**r, "t_ambient_c": r["t_ambient_c"] + 15.0,
                         "t_ambient_min_c": _coldest(r)},
    "colder start": lambda r: {**r, "t_ambient_min_c": _coldest(r) - 30.0},
    "more rise": lambda r: {**r, "t_rise_c": (r["t_rise_c"] or 0.0) + 10.0},
    "more C needed": lambda r: {**r, "c_min_f": None if r["c_min_f"] is None
                                else r["c_min_f"] * 3 + 1e-9},
    "lower rated V": lambda r: {**r, "voltage_v": r["voltage_v"] / 2},
    # a datum not given stays not given (giving one is more data, not a worse condition)
    "lower rated T": lambda r: {**r, "temp_max_c": _less(r["temp_max_c"], 20.0)},
    "less C": lambda r: {**r, "capacitance_f": r["capacitance_f"] / 3},
    "wider tolerance": lambda r: {**r, "tol_minus_pct": _less(r["tol_minus_pct"], -10.0)},
    "longer life": lambda r: {**r, "life_h": None if r["life_h"] is None else r["life_h"] * 10},
}


def _coldest(r):
    return r["t_ambient_c"] if r.get("t_ambient_min_c") is None else r["t_ambient_min_c"]


def _less(x, by):
    return None if x is None else x - by
# Data the audit needs: removing any one never turns a placement into a pass.
REQUIRED = ("v_dc", "t_ambient_c", "voltage_v", "capacitance_f", "technology", "c_min_f",
            "tol_minus_pct", "temp_max_c", "dielectric", "v_reverse_pk", "life_h")

FAST = settings(max_examples=10, deadline=None, suppress_health_check=list(HealthCheck),
                phases=(Phase.explicit, Phase.reuse, Phase.generate))
BOARDS = st.lists(placements(), min_size=25, max_size=25)


def variants(rows: list[dict], changes: dict, ruleset) -> dict[str, list[str]]:
    """Statuses of the rows and of each changed copy, all audited in one table."""
    names = ["", *changes]
    every = rows + [change(r) for change in changes.values() for r in rows]
    out = statuses(every, ruleset)
    n = len(rows)
    return {name: out[i * n:(i + 1) * n] for i, name in enumerate(names)}


@pytest.mark.parametrize("key", sorted(RULESETS), ids=lambda k: f"{k[0]}-{k[1]}")
@FAST
@given(rows=BOARDS)
def test_worse_never_improves(key, rows):
    got = variants(rows, WORSE, RULESETS[key])
    for move in WORSE:
        for b, a, r in zip(got[""], got[move], rows):
            assert RANK[a] >= RANK[b], f"{move}: {b} -> {a} for {r!r}"


def _without(field: str):
    clear = {field: None}
    if field == "v_dc":  # an AC voltage alone is read as an AC line with no DC (documented)
        clear.update(v_ac_rms=None)
    if field == "dielectric":
        clear.update(dielectric_class=None, cap_change_minus_pct=None, tc_ppm=None)
    return lambda r: {**r, **clear}


THINNER = {field: _without(field) for field in REQUIRED}


@pytest.mark.parametrize("key", sorted(RULESETS), ids=lambda k: f"{k[0]}-{k[1]}")
@FAST
@given(rows=BOARDS)
def test_less_data_never_passes(key, rows):
    got = variants(rows, THINNER, RULESETS[key])
    for field in REQUIRED:
        for b, a, r in zip(got[""], got[field], rows):
            assert a != "pass" or b == "pass", f"without {field}: {b} -> {a} for {r!r}"


def test_the_properties_can_fail():
    # The property is not vacuous: the same checks see a real change of status.
    ruleset = RULESETS[("industrial", "severe")]
    row = {"refdes": "C1", "row": 2, "technology": "ceramic", "voltage_kind": "dc",
           "capacitance_f": 1e-6, "voltage_v": 50.0, "tol_minus_pct": 10.0, "dielectric": "X7R",
           "dielectric_class": 2, "cap_change_minus_pct": 15.0, "temp_max_c": 125.0,
           "temp_min_c": -55.0, "v_dc": 5.0, "t_ambient_c": 40.0, "c_min_f": 0.0,
           "v_transient_pk": None, "condition_source": "refdes"}
    assert status(row, ruleset) == "pass"
    assert status({**row, "v_dc": 45.0}, ruleset) == "fail"
    assert status({**row, "v_dc": None}, ruleset) == "nodata"
    assert not math.isnan(RANK["fail"])

"""Tests of bomcheck.stress.discharge: stored energy and charge, discharge through the bleeders (reference sheet section 4), and a 0 ohm bleeder refused."""

from __future__ import annotations

import math

import numpy as np
import pytest
from circuitcases import electrolytic, run

from bomcheck.pipeline.audit import run_audit
from bomcheck.stress import discharge


@pytest.mark.parametrize("c_f, v, energy, charge", [
    # Reference sheet section 4: 470 uF at 35 V: 0.287875 J, 16.45 mC.
    pytest.param(470e-6, 35.0, 0.287875, 16.45e-3, id="470uF-35V"),
    # Reference sheet section 4: 220 uF at 400 V: 17.6 J.
    pytest.param(220e-6, 400.0, 17.6, 88e-3, id="220uF-400V"),
    # Reference sheet section 4: 0.1 uF at 450 V: 10.125 mJ, 45 uC.
    pytest.param(0.1e-6, 450.0, 10.125e-3, 45e-6, id="100nF-450V"),
])
def test_stored_energy_and_charge(c_f, v, energy, charge):
    assert discharge.energy_j(c_f, v) == pytest.approx(energy, rel=1e-12)
    assert discharge.charge_c(c_f, v) == pytest.approx(charge, rel=1e-12)


def test_discharge_resistance_and_time():
    # Reference sheet section 4: V0 = 325.27 V (230 V rms peak), 1 uF, 60 V within 5 s:
    # R at most 2.958 Mohm.
    r = discharge.discharge_r_max(5.0, 1e-6, 325.27, 60.0)
    assert r == pytest.approx(2.958e6, rel=2e-4)
    assert discharge.discharge_time_s(r, 1e-6, 325.27, 60.0) == pytest.approx(5.0, rel=1e-12)
    assert discharge.voltage_after(5.0, r, 1e-6, 325.27) == pytest.approx(60.0, rel=1e-12)
    # Already at or below the safe voltage: no time needed; no resistance known: unknown.
    assert discharge.discharge_time_s(1e6, 1e-6, 48.0, 60.0) == 0.0
    assert math.isnan(discharge.discharge_time_s(np.nan, 1e-6, 400.0, 60.0))


def test_bleeder_discharge_and_safety_metrics():
    # 100 uF (+20 %: 120 uF) at 400 V through 20 kohm (arithmetic of V0 exp(-t/RC)).
    res = run([electrolytic("C1", v_dc=400.0, voltage_v=450.0, r_bleeder_ohm=20e3,
                            t_discharge_max_s=10.0)])
    t = res.table.iloc[0]
    tau = 20e3 * 120e-6
    assert t["t_to_60v_s"] == pytest.approx(tau * math.log(400 / 60))
    assert t["discharge_s"] == pytest.approx(tau * math.log(400 / 60))  # default safe 60 V
    assert t["v_after_1s_v"] == pytest.approx(400 * math.exp(-1 / tau))
    assert t["charge_after_5s_uc"] == pytest.approx(120e-6 * 400 * math.exp(-5 / tau) * 1e6)
    assert t["discharge_ratio"] == pytest.approx(tau * math.log(400 / 60) / 10.0)
    assert t["shock_energy_j"] == pytest.approx(0.5 * 120e-6 * 400 ** 2)


def test_no_shock_energy_below_100_volts():
    res = run([electrolytic("C1", c_f=0.1, v_dc=48.0)])
    assert math.isnan(res.table["shock_energy_j"].iat[0])
    assert res.table["energy_j"].iat[0] == pytest.approx(0.5 * 0.12 * 48 ** 2)


@pytest.mark.parametrize("design", [
    "refdes,v_dc,t_ambient_c,r_bleeder_ohm\nC1,12,40,0\n",
    "refdes,members,kind,v_dc,r_bleeder_ohm\nBANK,C1,bank,12,0\n",
])
def test_a_0_ohm_bleeder_is_an_input_error_without_numpy_warnings(tmp_path, design, recwarn):
    # A 0 ohm bleeder would short the capacitor: an entry error (an empty cell means "none"),
    # never a 0 s discharge that passes.
    from bomcheck.errors import InputError

    (tmp_path / "b.csv").write_text("Designator,Value\nC1,10uF 50V X7R 1206\n", encoding="utf-8")
    (tmp_path / "d.csv").write_text(design, encoding="utf-8")
    with pytest.raises(InputError, match="r_bleeder_ohm"):
        run_audit(str(tmp_path / "b.csv"), str(tmp_path / "d.csv"))
    assert not [w for w in recwarn if issubclass(w.category, RuntimeWarning)]


def test_voltage_after_a_zero_resistance_warns_nothing(recwarn):
    assert discharge.voltage_after(1.0, 0.0, 1e-6, 10.0) == 0.0
    assert not recwarn.list

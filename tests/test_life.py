"""Tests of bomcheck.stress.life: aluminium electrolytic life by the 10 degC rule."""

from __future__ import annotations


import pytest

from bomcheck.stress import life as life_mod


@pytest.mark.parametrize("t_op, life", [
    # Reference sheet section 4 (10 degC rule, common practice): 2000 h at 105 degC.
    pytest.param(95.0, 4000.0, id="95C"),
    pytest.param(85.0, 8000.0, id="85C"),
    pytest.param(65.0, 32000.0, id="65C"),
])
def test_electrolytic_life_ten_degree_rule(t_op, life):
    assert life_mod.electrolytic_life_h(2000.0, 105.0, t_op) == pytest.approx(life, rel=1e-12)


def test_electrolytic_life_ripple_factor():
    # Reference sheet 1.4 (common practice): ripple factor 2^(-dT/5) on the ripple rise. 2000 h at
    # 105 degC, 80 degC ambient + 5 degC rise: 2000 x 2^(25/10) x 2^(-1) (arithmetic).
    got = life_mod.electrolytic_life_h(2000.0, 105.0, 85.0, 5.0, ripple_factor=True)
    assert got == pytest.approx(2000.0 * 2 ** 2.5 * 0.5, rel=1e-12)

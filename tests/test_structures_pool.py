"""Pool at the upstream end: entrance depth and the discharge drawn from a pool level."""

import math

import numpy as np
import pytest

import gvflow as gv
from gvflow import structures as st

G = 9.80665
TRAP = gv.Trapezoidal(bottom_width=3.0, side_slope=1.5)


def velocity_head(section, q, y):
    return (q / section.area(y)) ** 2 / (2 * G)


def test_steep_rectangle_without_loss_is_the_critical_flow_closed_form():
    # Exact: critical depth at the entrance, H = 1.5 yc, so q = sqrt(g) (2H/3)^1.5.
    h = np.array([0.5, 1.5, 3.0])
    out = st.pool_discharge(h, gv.Rectangular(width=2.0), 0.03, 0.013)
    assert np.all(out.control == "critical")
    np.testing.assert_allclose(out.discharge, 2.0 * math.sqrt(G) * (2 * h / 3) ** 1.5, rtol=1e-12)
    np.testing.assert_allclose(out.entrance_depth, 2 * h / 3, rtol=1e-12)


@pytest.mark.parametrize("ke", [0.0, 0.3])
def test_steep_channel_discharge_matches_critical_flow_energy_balance(ke):
    # Energy balance with critical depth at the entrance: H = yc + (1 + ke) Vc²/2g, yc from the
    # independent critical-depth solver for the discharge found.
    h = 1.8
    out = st.pool_discharge(h, TRAP, 0.02, 0.014, entrance_loss=ke)
    assert out.control == "critical"
    yc = gv.critical_depth(TRAP, out.discharge)
    assert out.entrance_depth == pytest.approx(yc, rel=1e-9)
    assert yc + (1 + ke) * velocity_head(TRAP, out.discharge, yc) == pytest.approx(h, rel=1e-10)
    assert st.critical_entry_head(out.discharge, TRAP, entrance_loss=ke) == pytest.approx(h, rel=1e-10)


@pytest.mark.parametrize("ke", [0.0, 0.2])
@pytest.mark.parametrize("section", [TRAP, gv.Rectangular(width=4.0), gv.Circular(diameter=2.5)])
def test_mild_channel_discharge_matches_normal_depth_energy_balance(ke, section):
    # Energy balance with the channel's normal depth at the entrance: H = yn + (1 + ke) Vn²/2g,
    # yn from the independent normal-depth solver for the discharge found.
    h, s, n = 1.6, 0.0004, 0.015
    out = st.pool_discharge(h, section, s, n, entrance_loss=ke)
    assert out.control == "normal"
    yn = gv.normal_depth(section, out.discharge, s, n)
    assert out.entrance_depth == pytest.approx(yn, rel=1e-9)
    assert yn + (1 + ke) * velocity_head(section, out.discharge, yn) == pytest.approx(h, rel=1e-10)
    assert yn > gv.critical_depth(section, out.discharge)


def test_branches_meet_at_the_critical_slope():
    h = 1.2
    q_c = st.pool_discharge(h, TRAP, 0.5, 0.014).discharge  # very steep: critical entry
    sc = gv.critical_slope(TRAP, q_c, 0.014)
    below = st.pool_discharge(h, TRAP, sc * (1 - 1e-7), 0.014)
    above = st.pool_discharge(h, TRAP, sc * (1 + 1e-7), 0.014)
    assert below.control == "normal" and above.control == "critical"
    assert below.discharge == pytest.approx(q_c, rel=1e-5)
    assert above.discharge == pytest.approx(q_c, rel=1e-12)


def test_pool_discharge_vectorised_and_increasing():
    h = np.linspace(0.2, 2.5, 40)
    out = st.pool_discharge(h, TRAP, 0.001, 0.02, units="SI")
    assert out.discharge.shape == h.shape and np.all(np.diff(out.discharge) > 0)
    assert "cases" in repr(out)


def test_entrance_depth_energy_residual_and_branch():
    q, h, ke = 4.0, 1.5, 0.2
    y = st.entrance_depth(q, gv.Rectangular(width=3.0), h, entrance_loss=ke)
    sec = gv.Rectangular(width=3.0)
    assert y + (1 + ke) * velocity_head(sec, q, y) == pytest.approx(h, rel=1e-13)
    assert y > gv.critical_depth(sec, q)


def test_bad_pool_input():
    with pytest.raises(gv.NoSolutionError, match="downstream control"):
        st.pool_discharge(1.0, TRAP, 0.0, 0.014)
    with pytest.raises(gv.NoSolutionError, match="downstream control"):
        st.pool_discharge(1.0, TRAP, -0.001, 0.014)
    with pytest.raises(gv.NoSolutionError, match="too low"):
        st.entrance_depth(50.0, TRAP, 0.5)
    with pytest.raises(gv.InvalidInputError, match="crown"):
        st.pool_discharge(3.0, gv.Circular(diameter=2.0), 0.001, 0.013)
    with pytest.raises(gv.InvalidInputError, match="entrance_loss"):
        st.entrance_depth(1.0, TRAP, 1.0, entrance_loss=-0.1)
    with pytest.raises(gv.InvalidInputError, match="pool_head"):
        st.pool_discharge(-1.0, TRAP, 0.001, 0.014)

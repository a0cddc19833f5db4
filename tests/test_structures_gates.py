"""Sluice gate: free flow by energy, submerged flow by energy and momentum, the free-flow check."""

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st_h

import gvflow as gv
from gvflow import structures as st

G = 9.80665


def energy(y, q):
    return y + q * q / (2 * G * y * y)


def test_free_flow_conserves_energy_to_the_vena_contracta():
    # Henderson (1966), Open Channel Flow, ch. 6: energy is conserved from the upstream section to
    # the vena contracta at depth Cc a (from memory - verify; exact under that assumption).
    y1 = np.array([0.8, 1.5, 3.0, 6.0])
    a, b, cc = 0.4, 2.5, 0.61
    q = st.gate_discharge(y1, a, b, contraction=cc) / b
    np.testing.assert_allclose(energy(y1, q), energy(cc * a, q), rtol=1e-13)


def test_free_flow_discharge_coefficient_form():
    # q = Cd a sqrt(2 g y1) with Cd = Cc / sqrt(1 + Cc a / y1) (Henderson 1966; from memory - verify).
    y1, a = 2.2, 0.5
    cd = 0.61 / math.sqrt(1 + 0.61 * a / y1)
    assert st.gate_discharge_coefficient(y1, a) == pytest.approx(cd, rel=1e-15)
    assert st.gate_discharge(y1, a, 1.0) == pytest.approx(cd * a * math.sqrt(2 * G * y1), rel=1e-14)


@settings(max_examples=60, deadline=None)
@given(ratio=st_h.floats(1.8, 40.0), a=st_h.floats(0.05, 3.0), cc=st_h.floats(0.55, 0.7))
def test_upstream_depth_inverts_free_discharge(ratio, a, cc):
    y1 = ratio * a
    q = st.gate_discharge(y1, a, 3.0, contraction=cc)
    assert st.gate_upstream_depth(q, a, 3.0, contraction=cc) == pytest.approx(y1, rel=1e-11)


def test_free_flow_limit_is_the_jet_sequent_depth():
    # Belanger's sequent depth of the jet; checked against the specific-force implementation.
    q, a, b = 3.0, 0.4, 2.0
    y2 = 0.61 * a
    limit = st.gate_free_flow_limit(q, a, b)
    assert limit == pytest.approx(gv.sequent_depth(gv.Rectangular(width=b), q, y2), rel=1e-10)
    assert st.gate_flows_free(q, a, b, tailwater=0.99 * limit)
    assert not st.gate_flows_free(q, a, b, tailwater=1.01 * limit)
    np.testing.assert_array_equal(st.gate_flows_free(q, a, b, tailwater=np.array([0.5, 2.0])), [True, False])


def test_jet_depth():
    assert st.gate_jet_depth(0.5) == pytest.approx(0.305)
    assert st.gate_jet_depth(0.5, contraction=0.6) == pytest.approx(0.3)


def test_submerged_flow_satisfies_energy_and_momentum():
    # Henderson (1966) ch. 6 submerged gate (from memory - verify): energy upstream -> vena contracta
    # with the roller depth y over the jet Cc a; momentum vena contracta -> tailwater y3.
    y1, a, b, y3 = 2.0, 0.5, 2.0, 1.6
    yj = 0.61 * a
    q = st.gate_discharge(y1, a, b, tailwater=y3) / b
    y = st.gate_contracted_depth(q * b, a, b, tailwater=y3)
    assert yj < y < y3
    assert energy(y1, q) == pytest.approx(y + q * q / (2 * G * yj * yj), rel=1e-12)
    assert y * y / 2 + q * q / (G * yj) == pytest.approx(y3 * y3 / 2 + q * q / (G * y3), rel=1e-12)
    # and the inverse gives back the upstream depth
    assert st.gate_upstream_depth(q * b, a, b, tailwater=y3) == pytest.approx(y1, rel=1e-11)


def test_upstream_depth_is_continuous_across_the_free_flow_limit():
    # With the discharge given the model is single-valued: the roller depth leaves the jet depth
    # smoothly as the tailwater passes the jet's sequent depth.
    q, a, b = 3.0, 0.5, 2.0
    limit = st.gate_free_flow_limit(q, a, b)
    below = st.gate_upstream_depth(q, a, b, tailwater=limit * (1 - 1e-9))
    above = st.gate_upstream_depth(q, a, b, tailwater=limit * (1 + 1e-9))
    assert above == pytest.approx(below, rel=1e-6)
    y1 = st.gate_upstream_depth(q, a, b, tailwater=limit * np.linspace(1.001, 1.8, 30))
    assert np.all(np.diff(y1) > 0)


def test_submerged_discharge_falls_with_tailwater_and_inverts_the_upstream_depth():
    q, a, b = 3.0, 0.5, 2.0
    limit = st.gate_free_flow_limit(q, a, b)
    tw = limit * np.array([1.2, 1.4, 1.8])
    y1 = st.gate_upstream_depth(q, a, b, tailwater=tw)
    np.testing.assert_allclose(st.gate_discharge(y1, a, b, tailwater=tw), q, rtol=1e-10)
    q_free = st.gate_discharge(2.5, a, b)
    tw = st.gate_free_flow_limit(q_free, a, b) * np.array([1.01, 1.2, 1.5])
    assert tw[-1] < 2.5
    q_sub = st.gate_discharge(2.5, a, b, tailwater=tw)
    assert np.all(np.diff(q_sub) < 0) and q_sub[0] < q_free


def test_double_valued_band_just_above_the_free_flow_limit():
    # The energy-momentum model folds near the limit: for a given upstream depth both the free
    # flow and a submerged flow satisfy it while the tailwater is below the free jet's sequent
    # depth. gate_discharge then returns the free flow (documented choice).
    q, a, b = 3.0, 0.5, 2.0
    tw = 1.05 * st.gate_free_flow_limit(q, a, b)
    y1 = st.gate_upstream_depth(q, a, b, tailwater=tw)  # submerged branch, discharge q
    q_back = st.gate_discharge(y1, a, b, tailwater=tw)
    assert q_back == st.gate_discharge(y1, a, b) > q
    assert st.gate_flows_free(q_back, a, b, tailwater=tw)


def test_upstream_depth_with_tailwater_below_limit_is_free():
    q, a, b = 3.0, 0.4, 2.0
    free = st.gate_upstream_depth(q, a, b)
    assert st.gate_upstream_depth(q, a, b, tailwater=0.5) == free
    assert st.gate_upstream_depth(q, a, b, tailwater=1.8) > free


def test_us_units_use_us_gravity():
    ft = 1 / 0.3048
    q_si = st.gate_discharge(2.0, 0.5, 2.0)
    q_us = st.gate_discharge(2.0 * ft, 0.5 * ft, 2.0 * ft, units="US")
    assert q_us * 0.3048 ** 3 == pytest.approx(q_si, rel=1e-5)


def test_bad_gate_input_raises():
    with pytest.raises(gv.InvalidInputError, match="opening"):
        st.gate_discharge(0.4, 0.5, 2.0)  # opening above the upstream depth
    with pytest.raises(gv.InvalidInputError, match="opening"):
        st.gate_discharge_coefficient(0.5, 0.5)
    with pytest.raises(gv.InvalidInputError, match="contraction"):
        st.gate_discharge(2.0, 0.5, 2.0, contraction=1.3)
    with pytest.raises(gv.InvalidInputError, match="width"):
        st.gate_discharge(2.0, 0.5, -2.0)
    with pytest.raises(gv.NoSolutionError, match="tailwater"):
        st.gate_discharge(2.0, 0.5, 2.0, tailwater=2.1)
    with pytest.raises(gv.NoSolutionError, match="gate lip"):
        st.gate_upstream_depth(0.01, 1.0, 2.0)  # tiny flow: the water never reaches the gate


# ---------------------------------------------------------------------------
# one gate model for any section: the pool depth of the reach solver
# ---------------------------------------------------------------------------

def _batch(section, q):
    from gvflow.profiles.base import SegmentBatch

    return SegmentBatch.build(section, 0.001, 0.015, np.atleast_1d(q))


def test_pool_depth_in_a_rectangle_is_the_closed_form():
    # the section-general balances (areas and specific forces, roots found numerically) against the
    # closed forms of gate_upstream_depth and Belanger's sequent depth (Henderson 1966, §6.5, from memory)
    b, a, cc = 2.5, 0.4, 0.61
    q = np.array([1.5, 3.0, 4.5, 3.0, 3.0])
    tail = np.array([np.nan, np.nan, np.nan, 1.6, 2.4])
    seg = _batch(gv.Rectangular(width=b), q)
    jet = np.full(q.shape, cc * a)
    y1, submerged = st.gates.gate_pool_depth(seg, seg, jet, tail, opening=a)
    limit = st.gate_free_flow_limit(q, a, b, contraction=cc)
    np.testing.assert_allclose(st.gates.gate_sequent_depth(seg, jet), limit, rtol=1e-11)
    want = [st.gate_upstream_depth(qq, a, b, tailwater=None if np.isnan(t) else t, contraction=cc)
            for qq, t in zip(q, tail, strict=True)]
    np.testing.assert_allclose(y1, want, rtol=1e-11)
    assert submerged.tolist() == [False, False, False, tail[3] > limit[3], True]
    assert submerged[4]


def test_pool_depth_in_a_trapezoid_meets_energy_and_momentum():
    # defining equations, with gvflow's public specific energy and force: energy from the pool to the vena
    # contracta, momentum from the vena contracta (water level y_v over the jet) to the tailwater
    sec, q, a, cc = gv.Trapezoidal(bottom_width=2.0, side_slope=1.5), 4.0, 0.35, 0.61
    seg = _batch(sec, [q, q])
    yj = cc * a
    y1, submerged = st.gates.gate_pool_depth(seg, seg, np.full(2, yj), np.array([np.nan, 2.0]), opening=a)
    assert submerged.tolist() == [False, True]
    assert gv.specific_energy(sec, q, y1[0]) == pytest.approx(gv.specific_energy(sec, q, yj), rel=1e-11)
    # submerged: A ybar(y_v) + Q²/(g A_j) = M(tail), then E(pool) = y_v + Q²/(2 g A_j²)
    a_j = sec.area(yj)
    from scipy.optimize import brentq
    m_tail = gv.specific_force(sec, q, 2.0)
    y_v = brentq(lambda y: gv.specific_force(sec, q, y) - q * q / (G * sec.area(y)) + q * q / (G * a_j) - m_tail,
                 yj, 2.0, xtol=1e-14)
    assert gv.specific_energy(sec, q, y1[1]) == pytest.approx(y_v + q * q / (2 * G * a_j * a_j), rel=1e-10)


def test_upstream_gate_reports_the_depth_behind_it_in_a_trapezoid():
    # the upstream control and the gate between segments run the same relation: a trapezoid now gets the
    # depth behind the gate, from energy conservation to the vena contracta
    sec, q, a = gv.Trapezoidal(bottom_width=2.0, side_slope=1.5), 4.0, 0.35
    reach = gv.Reach(segments=[gv.Segment(length=300.0, slope=0.001, section=sec, roughness=0.015)], discharge=q,
                     upstream=gv.SluiceGate(opening=a), downstream=gv.FixedDepth(1.2))
    (text,) = [c.text for c in reach.solve().controls if c.kind == "control detail"]
    from scipy.optimize import brentq
    e_jet = gv.specific_energy(sec, q, 0.61 * a)
    y1 = brentq(lambda y: gv.specific_energy(sec, q, y) - e_jet, 1.0, 20.0, xtol=1e-14)
    assert text.startswith("free flow") and f"depth behind the gate {y1:.3f} m" in text


def test_pool_depth_refuses_an_opening_above_the_pool():
    seg = _batch(gv.Rectangular(width=2.0), [0.3])
    with pytest.raises(gv.NoSolutionError, match="below the gate lip"):
        st.gates.gate_pool_depth(seg, seg, np.array([0.61 * 0.5]), opening=0.5)

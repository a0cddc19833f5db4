"""Lateral inflow: spatially varied flow with increasing discharge, in the momentum form.

References:
- exact: in a horizontal, frictionless rectangular channel fed uniformly along its length, with
  critical depth at its outlet, the specific force Q²/(g b y) + b y²/2 is constant (the inflow brings
  no momentum along the channel), so the depth at the upstream end, where Q = 0, is sqrt(3) times the
  outlet's critical depth; the energy equation would give 1.5 times (Chow 1959, ch. 12, and Henderson
  1966, from memory, for the method; the numbers follow from the momentum function alone);
- with friction and slope, scipy's solve_ivp (DOP853, rtol 1e-11) on the spatially varied flow
  equation dy/dx = (S0 - Sf - 2 Q q*/(g A²)) / (1 - Q² T/(g A³)), written out here for a rectangle.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy.integrate import solve_ivp

import gvflow as gv

G = 9.80665


@pytest.mark.parametrize("method", ["standard_step", "ivp"])
def test_frictionless_side_channel_gives_sqrt3_times_critical_depth(method):
    b, length, q_end = 3.0, 40.0, 6.0
    q0 = 1e-6  # (a reach needs some discharge at its head; its momentum is negligible)
    reach = gv.Reach(segments=[gv.Segment(length=length, slope=0.0, section=gv.Rectangular(width=b),
                                          roughness=gv.Chezy(1e5), lateral_inflow=(q_end - q0) / length)],
                     discharge=q0, downstream=gv.CriticalFlow())
    p = reach.solve(method, n_steps=200)
    yc = (q_end ** 2 / (G * b * b)) ** (1 / 3)
    assert p.depth[-1] == pytest.approx(yc, rel=1e-9)
    assert p.discharge[0] == pytest.approx(q0) and p.discharge[-1] == pytest.approx(q_end, rel=1e-12)
    assert p.depth[0] == pytest.approx(np.sqrt(3.0) * yc, rel=2e-4)
    assert abs(p.depth[0] - 1.5 * yc) > 0.1 * yc  # the energy equation's answer is clearly different
    # the specific force is the same at every station
    force = p.discharge ** 2 / (G * b * p.depth) + b * p.depth ** 2 / 2
    np.testing.assert_allclose(force, force[-1], rtol=3e-4)


def test_lateral_inflow_on_a_mild_channel_matches_direct_integration():
    b, n, s0, length, q0, qstar, tail = 4.0, 0.015, 5e-4, 500.0, 2.0, 0.01, 1.6
    reach = gv.Reach(segments=[gv.Segment(length=length, slope=s0, section=gv.Rectangular(width=b), roughness=n,
                                          lateral_inflow=qstar)],
                     discharge=q0, downstream=gv.FixedDepth(tail))
    p = reach.solve(n_steps=400)

    def rhs(x, y):
        q = q0 + qstar * x
        a, per = b * y[0], b + 2 * y[0]
        sf = (n * q / (a * (a / per) ** (2 / 3))) ** 2
        return [(s0 - sf - 2 * q * qstar / (G * a * a)) / (1 - q * q * b / (G * a ** 3))]

    ref = solve_ivp(rhs, (length, 0.0), [tail], method="DOP853", rtol=1e-11, atol=1e-12, dense_output=True)
    np.testing.assert_allclose(p.depth, ref.sol(p.x)[0], rtol=2e-5)
    np.testing.assert_allclose(reach.solve("ivp", n_steps=400).depth, ref.sol(p.x)[0], rtol=1e-6)
    np.testing.assert_allclose(p.discharge, q0 + qstar * p.x, rtol=1e-12)
    np.testing.assert_allclose(p.velocity, p.discharge / (b * p.depth), rtol=1e-12)


@pytest.mark.parametrize("method", ["standard_step", "ivp"])
def test_lateral_inflow_in_a_compound_section_keeps_the_momentum_coefficient(method):
    # A 10 m main channel 2 m deep (n 0.03) between 100 m floodplains (n 0.05) with vertical outer walls,
    # all above bankfull: the momentum coefficient beta = A sum(K_i²/A_i)/K² varies with depth (Chow 1959,
    # §2-7), so M = beta Q²/(g A) + A ȳ, and the inflow, which brings no momentum along the channel, gives
    # dM/dx = A (S0 - Sf), i.e. dy/dx = (S0 - Sf - 2 beta Q q*/(g A²)) / (dM/dy / A) (Chow 1959, ch. 12, for
    # beta = 1; from memory). Written out here with the rectangles' exact areas and Manning zone
    # conveyances, dM/dy by central differences, integrated by scipy's solve_ivp. Both methods must solve
    # this one equation (method="ivp" used the energy form with alpha, 6 mm off here).
    from scipy.integrate import solve_ivp

    s0, length, q0, qstar, tail = 5e-4, 400.0, 40.0, 0.05, 2.8
    section = gv.Surveyed(offset=[-100, -100, 0, 0, 10, 10, 110, 110], elevation=[5, 2, 2, 0, 0, 2, 2, 5],
                          roughness=[0.05, 0.03, 0.05], zone_edges=[0, 10])
    reach = gv.Reach(segments=[gv.Segment(length=length, slope=s0, section=section, lateral_inflow=qstar)],
                     discharge=q0, downstream=gv.FixedDepth(tail))

    def zones(y):
        h = y - 2.0
        main, plain = (10.0 * y, 14.0, 0.03), (100.0 * h, 100.0 + h, 0.05)
        return [(a, a ** (5 / 3) / (n * p ** (2 / 3))) for a, p, n in (main, plain, plain)]

    def force_area_beta_k(y, q):
        z = zones(y)
        a, k = sum(v[0] for v in z), sum(v[1] for v in z)
        beta = a * sum(ki * ki / ai for ai, ki in z) / k ** 2
        return beta * q * q / (G * a) + 5.0 * y * y + 100.0 * (y - 2.0) ** 2, a, beta, k

    def rhs(x, y):
        q = q0 + qstar * x
        _, a, beta, k = force_area_beta_k(y[0], q)
        h = 1e-6 * y[0]
        dmdy = (force_area_beta_k(y[0] + h, q)[0] - force_area_beta_k(y[0] - h, q)[0]) / (2 * h)
        return [(s0 - (q / k) ** 2 - 2 * beta * q * qstar / (G * a * a)) / (dmdy / a)]

    ref = solve_ivp(rhs, (length, 0.0), [tail], method="DOP853", rtol=1e-11, atol=1e-12, dense_output=True)
    p = reach.solve(method, n_steps=400)
    assert p.depth.min() > 2.0  # above bankfull throughout
    np.testing.assert_allclose(p.depth, ref.sol(p.x)[0], rtol=2e-6)


def test_lateral_inflow_carries_into_the_next_segment_and_sweeps():
    rect = gv.Rectangular(width=4.0)
    reach = gv.Reach(segments=[gv.Segment(length=200.0, slope=5e-4, section=rect, roughness=0.015,
                                          lateral_inflow=0.01),
                               gv.Segment(length=200.0, slope=5e-4, section=rect, roughness=0.015)],
                     discharge=3.0, downstream=gv.FixedDepth(1.5))
    p = reach.solve(n_steps=40)
    assert np.all(p.discharge[p.segment == 1] == pytest.approx(5.0))
    assert np.count_nonzero(p.x == 200.0) == 1  # nothing changes across the junction
    res = reach.sweep(discharge=[2.0, 3.0, 4.0], n_steps=40)
    for i, q in enumerate([2.0, 3.0, 4.0]):
        alone = reach.model_copy(update={"discharge": q}).solve(n_steps=40)
        np.testing.assert_array_equal(res[i].depth, alone.depth)
        np.testing.assert_array_equal(res[i].discharge, alone.discharge)
        np.testing.assert_allclose(res.velocity[i][res.segment == 0], alone.velocity[alone.segment == 0],
                                   rtol=1e-12)


def test_lateral_inflow_errors_name_the_field():
    rect = gv.Rectangular(width=4.0)
    with pytest.raises(gv.InvalidInputError, match="lateral_inflow"):
        gv.Segment(length=10.0, slope=1e-3, section=rect, roughness=0.015, lateral_inflow=0.1,
                   section_downstream=gv.Rectangular(width=3.0))
    with pytest.raises(gv.InvalidInputError, match=r"segments\[0\]\.lateral_inflow"):
        gv.Reach(segments=[gv.Segment(length=100.0, slope=1e-3, section=rect, roughness=0.015,
                                      lateral_inflow=-0.05)], discharge=2.0)

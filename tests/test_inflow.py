"""Discharge added at a segment's head (a tributary): continuity, then energy or momentum across the junction.

References: in subcritical flow the junction conserves specific energy with the new discharge on
each side (Akan 2006, *Open Channel Hydraulics*, §4.7; from memory); in supercritical flow the
inflow brings no momentum along the channel, so the specific force Q²/(gA) + A ȳ is conserved
(momentum principle, Chow 1959, *Open-Channel Hydraulics*, ch. 3; from memory). Profiles away from
the junction are checked against scipy's adaptive quadrature of dx/dy = (1 - Fr²)/(S0 - Sf) for a
rectangle (Manning, SI), written out here independently of gvflow.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy.integrate import quad
from scipy.optimize import brentq

import gvflow as gv

G = 9.80665
B, N = 4.0, 0.015


def friction_slope(y, q):
    a, p = B * y, B + 2 * y
    return (q * N) ** 2 / (a * a * (a / p) ** (4.0 / 3.0))


def dxdy(y, q, s0):
    a = B * y
    sf = friction_slope(y, q)
    fr2 = q * q * B / (G * a ** 3)
    return (1.0 - fr2) / (s0 - sf)


def depth_after(y0, dx, q, s0):
    """Depth at distance dx < 0 (upstream) from depth y0 on an M1 profile (quadrature + root find)."""
    def f(y):
        return quad(dxdy, y0, y, args=(q, s0), epsabs=1e-13, epsrel=1e-13, limit=200)[0] - dx

    yn = brentq(lambda y: friction_slope(y, q) - s0, 1e-3, 50.0)  # normal depth: Sf = S0
    return brentq(f, yn * (1 + 1e-6), y0, xtol=1e-14, rtol=1e-14)


def energy(y, q):
    return y + q * q / (2 * G * (B * y) ** 2)


def force(y, q):
    return q * q / (G * B * y) + B * y * y / 2


def tributary_reach(q1=6.0, inflow=4.0, tail=2.2, slope=5e-4):
    rect = gv.Rectangular(width=B)
    return gv.Reach(segments=[gv.Segment(length=400.0, slope=slope, section=rect, roughness=N),
                              gv.Segment(length=300.0, slope=slope, section=rect, roughness=N, inflow=inflow)],
                    discharge=q1, downstream=gv.FixedDepth(tail))


def test_subcritical_junction_conserves_energy_and_profiles_match_quadrature():
    reach = tributary_reach()
    p = reach.solve(n_steps=200)
    j = np.flatnonzero(p.x == 400.0)
    assert j.size == 2  # two stations at the junction: the discharge above it, then below it
    (a, b) = j
    assert p.discharge[a] == 6.0 and p.discharge[b] == 10.0
    assert np.all(p.discharge[:a + 1] == 6.0) and np.all(p.discharge[b:] == 10.0)
    # energy without loss across the junction (same bed level), to round-off
    assert energy(p.depth[a], 6.0) == pytest.approx(energy(p.depth[b], 10.0), rel=1e-12)
    # the lower segment's M1 profile from the tailwater, and the upper one from the junction, by quadrature
    y_junction = depth_after(2.2, -300.0, 10.0, 5e-4)
    assert p.depth[b] == pytest.approx(y_junction, rel=2e-5)
    y_head = depth_after(p.depth[a], -400.0, 6.0, 5e-4)
    assert p.depth[0] == pytest.approx(y_head, rel=2e-5)
    assert p.velocity[b] == pytest.approx(10.0 / (B * p.depth[b]), rel=1e-12)
    notes = [c for c in p.controls if c.kind == "inflow"]
    assert len(notes) == 1 and notes[0].x == 400.0
    assert "6 to 10" in notes[0].text and "specific energy" in notes[0].text


def test_supercritical_junction_conserves_specific_force():
    # a steep chute entered at critical depth; a side inflow halfway down
    rect = gv.Rectangular(width=B)
    reach = gv.Reach(segments=[gv.Segment(length=60.0, slope=0.05, section=rect, roughness=N),
                               gv.Segment(length=60.0, slope=0.05, section=rect, roughness=N, inflow=3.0)],
                     discharge=8.0, downstream=gv.CriticalFlow())
    p = reach.solve(n_steps=100)
    a, b = np.flatnonzero(p.x == 60.0)
    y1, y2 = p.depth[a], p.depth[b]
    yc2 = (11.0 ** 2 / (G * B * B)) ** (1 / 3)
    assert y2 < yc2 and p.regime[b] == "supercritical"
    assert force(y1, 8.0) == pytest.approx(force(y2, 11.0), rel=1e-12)
    # energy would give a different depth: the balance used matters
    y_energy = brentq(lambda y: energy(y, 11.0) - energy(y1, 8.0), 0.05 * yc2, yc2)
    assert abs(y_energy - y2) > 1e-3
    note = next(c for c in p.controls if c.kind == "inflow")
    assert "momentum" in note.text


def test_sweep_with_inflow_matches_each_scenario_alone():
    reach = tributary_reach()
    res = reach.sweep(discharge=[4.0, 6.0, 9.0], n_steps=40)
    for i, q in enumerate([4.0, 6.0, 9.0]):
        alone = reach.model_copy(update={"discharge": q}).solve(n_steps=40)
        np.testing.assert_allclose(res.depth[i], alone.depth, rtol=1e-12)
        np.testing.assert_allclose(res.velocity[i], alone.velocity, rtol=1e-12)
        np.testing.assert_array_equal(res[i].discharge, alone.discharge)


def test_inflow_errors_name_the_field():
    rect = gv.Rectangular(width=B)
    with pytest.raises(gv.InvalidInputError, match=r"segments\[0\]\.inflow"):
        gv.Reach(segments=[gv.Segment(length=10.0, slope=1e-3, section=rect, roughness=N, inflow=1.0)],
                 discharge=2.0)
    with pytest.raises(gv.InvalidInputError, match=r"segments\[1\]\.inflow"):
        tributary_reach(q1=3.0, inflow=-3.0)
    with pytest.raises(gv.InvalidInputError, match="inflow"):
        gv.Segment(length=10.0, slope=1e-3, section=rect, roughness=N, inflow=float("nan"))

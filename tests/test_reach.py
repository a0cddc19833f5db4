"""Reach model and mixed-regime solver against independent computations.

The references here do not use gvflow's own solvers: rectangular-channel
geometry, Manning friction and the distance integral
x2 - x1 = ∫ (1 - Fr²)/(S0 - Sf) dy (Chow 1959, *Open-Channel Hydraulics*,
eq. 9-13, direct integration) are written out in the test and integrated by
scipy's adaptive quadrature; sequent depths come from Belanger's closed form
(Chow 1959, eq. 3-23).
"""

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.integrate import quad
from scipy.optimize import brentq

import gvflow as gv

G = 9.80665
B = 3.0
N = 0.015
Q = 5.0
RECT = gv.Rectangular(width=B)


def dxdy(y, s0, q=Q, b=B, n=N):
    """(1 - Fr²)/(S0 - Sf) for a rectangle with Manning friction, written out independently."""
    a = b * y
    r = a / (b + 2 * y)
    fr2 = q * q * b / (G * a ** 3)
    sf = (n * q / (a * r ** (2 / 3))) ** 2
    return (1 - fr2) / (s0 - sf)


def distance(y_from, y_to, s0):
    """x(y_to) - x(y_from) along one profile, by adaptive quadrature."""
    val, err = quad(dxdy, y_from, y_to, args=(s0,), epsabs=1e-12, epsrel=1e-12, limit=200)
    return val


def belanger(y1, q=Q, b=B):
    fr1 = q / (b * y1) / math.sqrt(G * y1)
    return y1 * (math.sqrt(1 + 8 * fr1 ** 2) - 1) / 2


def yc_rect(q=Q, b=B):
    return ((q / b) ** 2 / G) ** (1 / 3)


def yn_rect(s0, q=Q, b=B, n=N):
    return brentq(lambda y: b * y * (b * y / (b + 2 * y)) ** (2 / 3) * math.sqrt(s0) / n - q, 1e-6, 100)


def seg(length, slope, section=RECT, n=N):
    return gv.Segment(length=length, slope=slope, section=section, roughness=n)


# --------------------------------------------------------------------------------------------
# sluice gate on a mild channel: M3, jump, M1/M2 to the tailwater
# --------------------------------------------------------------------------------------------


def gate_jump_reference(s0, length, jet, tailwater):
    """Jump location where the M3 from the jet meets the subcritical profile from the tailwater.

    Both profiles are traced by quadrature; at the jump the subcritical depth
    is the Belanger sequent depth of the M3 depth.
    """
    yc = yc_rect()

    yn = yn_rect(s0)

    def mismatch(y1):
        x1 = distance(jet, y1, s0)  # M3 grows downstream from x = 0
        y2 = belanger(y1)
        if (y2 - yn) * (tailwater - yn) <= 0:
            return 1e9  # the subcritical profile (M1 or M2) never reaches y2: it lies beyond normal depth
        x2 = length + distance(tailwater, y2, s0)  # subcritical profile through (L, tailwater)
        return x1 - x2

    y1 = brentq(mismatch, jet * 1.0001, yc * 0.9999, xtol=1e-12)
    return distance(jet, y1, s0), y1, belanger(y1)


@pytest.mark.reference
@pytest.mark.parametrize("tailwater", [1.0, 1.3])  # an M2 and an M1 below the jump
@pytest.mark.parametrize("method", ["standard_step", "ivp"])
def test_gate_jump_location_matches_quadrature(tailwater, method):
    s0, length, opening = 0.001, 300.0, 0.25
    reach = gv.Reach(segments=[seg(length, s0)], discharge=Q, upstream=gv.SluiceGate(opening=opening),
                     downstream=gv.FixedDepth(tailwater))
    x_ref, y1_ref, y2_ref = gate_jump_reference(s0, length, 0.61 * opening, tailwater)
    p = reach.solve(method=method)
    assert p.profile_types[0] == "M3"
    assert len(p.jumps) == 1
    jump = p.jumps[0]
    assert abs(jump.x - x_ref) <= 0.01 * length  # the tolerance: 1 % of the reach
    assert jump.upstream_depth == pytest.approx(y1_ref, rel=5e-3)
    assert jump.downstream_depth == pytest.approx(y2_ref, rel=5e-3)
    # with finer steps the standard step closes in on the reference
    if method == "standard_step":
        fine = reach.solve(n_steps=800)
        assert abs(fine.jumps[0].x - x_ref) <= 1e-3 * length


def test_gate_drowned_by_high_tailwater():
    reach = gv.Reach(segments=[seg(300.0, 0.001)], discharge=Q, upstream=gv.SluiceGate(opening=0.25),
                     downstream=gv.FixedDepth(2.5))
    p = reach.solve()
    assert p.jumps == []
    assert any(c.kind == "drowned jump" for c in p.controls)
    assert np.all(p.regime == "subcritical")


def test_jump_swept_out_by_low_tailwater():
    # A short reach: the M3 from the gate reaches the end while still carrying more specific
    # force than the tailwater can balance, so the jump forms beyond the reach.
    reach = gv.Reach(segments=[seg(20.0, 0.001)], discharge=Q, upstream=gv.SluiceGate(opening=0.2),
                     downstream=gv.FixedDepth(0.7))
    p = reach.solve()
    assert p.jumps == []
    assert any(c.kind == "jump swept out" for c in p.controls)
    assert np.all(p.regime == "supercritical")
    assert p.profile_types == ["M3"]


# --------------------------------------------------------------------------------------------
# steep chute into a mild stilling reach
# --------------------------------------------------------------------------------------------

CHUTE = [seg(100.0, 0.02), seg(300.0, 0.0008)]


def test_low_tailwater_jump_in_the_stilling_reach():
    # normal depth of a 0.002 stilling reach (0.84 m) is below the sequent depth of the chute's
    # S2 flow (about 1.03 m), so the jump is swept off the chute into the stilling reach
    p = gv.Reach(segments=[seg(100.0, 0.02), seg(300.0, 0.002)], discharge=Q,
                 downstream=gv.UniformFlow()).solve()
    assert len(p.jumps) == 1
    assert p.jumps[0].segment == 1 and p.jumps[0].x > 100.0
    assert p.profile_types[:2] == ["S2", "M3"]


def test_high_tailwater_pushes_the_jump_onto_the_chute():
    p = gv.Reach(segments=CHUTE, discharge=Q, downstream=gv.FixedDepth(2.0)).solve()
    assert len(p.jumps) == 1
    assert p.jumps[0].segment == 0 and p.jumps[0].x < 100.0
    assert p.profile_types == ["S2", "S1", "M1"]


def test_jump_on_chute_matches_quadrature():
    """S2 from critical depth at the head of the chute meets the S1 backed up from the stilling reach."""
    s_steep, s_mild, tw = 0.02, 0.0008, 2.0
    yc = yc_rect()
    y_toe = tw + 0.0
    # depth at the break on the subcritical side: the M1 from the tailwater traced 300 m upstream
    y_break = brentq(lambda y: distance(tw, y, s_mild) + 300.0, yc * 1.001, tw)
    del y_toe

    def mismatch(y1):
        x1 = distance(yc * (1 - 1e-9), y1, s_steep)
        x2 = 100.0 + distance(y_break, belanger(y1), s_steep)
        return x1 - x2

    yn_steep = yn_rect(s_steep)
    y1 = brentq(mismatch, yn_steep * 1.0001, yc * 0.999)
    x_ref = distance(yc * (1 - 1e-9), y1, s_steep)
    p = gv.Reach(segments=CHUTE, discharge=Q, downstream=gv.FixedDepth(tw)).solve(n_steps=400)
    assert abs(p.jumps[0].x - x_ref) <= 0.01 * 400.0
    assert p.depth_at(100.0) == pytest.approx(y_break, rel=2e-3)


# --------------------------------------------------------------------------------------------
# mild to steep: critical depth at the break; horizontal and adverse overfalls
# --------------------------------------------------------------------------------------------


def test_critical_depth_at_mild_to_steep_break():
    reach = gv.Reach(segments=[seg(400.0, 0.0005), seg(200.0, 0.02)], discharge=Q)
    p = reach.solve()
    at_break = p.depth[np.isclose(p.x, 400.0)]
    assert np.all(np.abs(at_break / yc_rect() - 1) <= 5e-3)
    assert p.profile_types == ["M2", "S2"]
    assert any(c.kind == "critical control" and c.x == pytest.approx(400.0) for c in p.controls)
    # the M2 drawdown upstream of the break matches quadrature from critical depth
    x_ref = 400.0 + distance(yc_rect() * (1 + 1e-9), 1.0, 0.0005)
    assert p.depth_at(x_ref) == pytest.approx(1.0, rel=2e-3)


@pytest.mark.parametrize("slope, label", [(0.0, "H2"), (-0.002, "A2")])
def test_overfall_drawdown_on_horizontal_and_adverse_beds(slope, label):
    reach = gv.Reach(segments=[seg(150.0, slope)], discharge=Q, downstream=gv.CriticalFlow())
    p = reach.solve()
    assert p.profile_types == [label]
    assert p.depth[-1] == pytest.approx(yc_rect(), rel=1e-9)
    assert np.all(np.diff(p.depth) < 0)  # drawdown toward the brink
    # the depth 150 m upstream of the brink by quadrature
    y0 = brentq(lambda y: distance(yc_rect() * (1 + 1e-12), y, slope) + 150.0, yc_rect() * 1.0001, 5.0)
    assert p.depth[0] == pytest.approx(y0, rel=1e-3)


# --------------------------------------------------------------------------------------------
# bookkeeping, determinism, energy balance, errors
# --------------------------------------------------------------------------------------------


def test_profile_arrays_follow_the_contract():
    p = gv.Reach(segments=CHUTE, discharge=Q, downstream=gv.FixedDepth(2.0), datum=10.0).solve()
    assert p.x[0] == 0 and p.x[-1] == pytest.approx(400.0)
    assert np.all(np.diff(p.x) >= 0)
    jx = p.jumps[0].x
    assert np.count_nonzero(p.x == jx) == 2
    assert p.stage[-1] == pytest.approx(10.0 + 2.0)
    assert p.bed[0] == pytest.approx(10.0 + 0.02 * 100 + 0.0008 * 300)
    assert np.allclose(p.stage, p.bed + p.depth)
    assert np.allclose(p.energy_grade, p.stage + p.velocity ** 2 / (2 * G))
    sub = p.regime == "subcritical"
    assert np.all(p.froude[sub] < 1) and np.all(p.froude[p.regime == "supercritical"] > 1)
    t = p.table()
    assert t.shape == p.x.shape and t["depth"][5] == p.depth[5]
    assert "Hydraulic jump" in p.summary() and "Profile" in repr(p)


def test_solver_is_deterministic():
    reach = gv.Reach(segments=CHUTE, discharge=Q, downstream=gv.FixedDepth(1.3))
    a, b = reach.solve(), reach.solve()
    assert np.array_equal(a.depth, b.depth) and np.array_equal(a.x, b.x)


def test_energy_balance_closes_between_stations():
    reach = gv.Reach(segments=[seg(500.0, 0.001)], discharge=Q, downstream=gv.FixedDepth(2.0))
    p = reach.solve(friction_average="arithmetic")
    head = p.energy_grade
    sf_avg = 0.5 * (p.friction_slope[1:] + p.friction_slope[:-1])
    loss = np.diff(p.x) * sf_avg
    assert np.max(np.abs(head[:-1] - head[1:] - loss)) < 1e-10


def test_downstream_depth_below_critical_on_a_mild_segment_is_unused():
    # A tailwater below critical depth cannot hold subcritical flow: the water leaves through critical depth
    # (a free overfall), as the API contract says of a control that cannot govern, and as at the end of a
    # steep segment. The profile equals the one under gv.CriticalFlow().
    low = gv.Reach(segments=[seg(100.0, 0.001)], discharge=Q, downstream=gv.FixedDepth(0.4)).solve()
    brink = gv.Reach(segments=[seg(100.0, 0.001)], discharge=Q, downstream=gv.CriticalFlow()).solve()
    np.testing.assert_array_equal(low.depth, brink.depth)
    assert low.depth[-1] == pytest.approx(yc_rect(), rel=1e-12)
    unused = [c for c in low.controls if c.kind == "unused control"]
    assert len(unused) == 1 and "below critical depth 0.657 m" in unused[0].text


def test_uniform_flow_control_on_horizontal_bed_is_an_error():
    reach = gv.Reach(segments=[seg(100.0, 0.0)], discharge=Q, downstream=gv.UniformFlow())
    with pytest.raises(gv.ControlError, match="normal depth does not exist"):
        reach.solve()


def test_gate_at_downstream_end_is_rejected():
    with pytest.raises(ValueError, match="upstream"):
        gv.Reach(segments=[seg(100.0, 0.001)], discharge=Q, downstream=gv.SluiceGate(opening=0.3))


def test_gate_too_wide_open_is_an_error():
    reach = gv.Reach(segments=[seg(100.0, 0.001)], discharge=Q, upstream=gv.SluiceGate(opening=2.0))
    with pytest.raises(gv.ControlError, match="too large"):
        reach.solve()


def test_conduit_under_a_tailwater_above_its_crown_runs_full():
    """A tailwater above the crown submerges the outlet: the pipe runs full where the grade line stays
    above its crown (Manning full flow: h = TW + (Sf_full - S0) (L - x), the hand energy equation), and
    the free surface resumes where the grade line falls to the crown (Sf_full < S0 here)."""
    d, n, s0, q, tw = 1.2, 0.013, 0.005, 1.0, 1.25
    pipe = gv.Circular(diameter=d)
    reach = gv.Reach(segments=[gv.Segment(length=200.0, slope=s0, section=pipe, roughness=n)],
                     discharge=q, downstream=gv.FixedDepth(tw))
    p = reach.solve()
    a = np.pi * d * d / 4
    sf = (q * n / (a * (d / 4) ** (2 / 3))) ** 2
    x_crown = 200.0 - (tw - d) / (s0 - sf)
    full = p.x >= x_crown
    assert p.surcharged.tolist() == full.tolist()
    np.testing.assert_allclose(p.depth[full], tw + (sf - s0) * (200.0 - p.x[full]), rtol=0, atol=1e-12)
    assert p.surcharged_lengths[0] == pytest.approx(200.0 - x_crown, rel=1e-12)
    assert np.all(p.depth[~full] < d)


def test_upstream_control_that_cannot_govern_is_reported_unused():
    reach = gv.Reach(segments=[seg(100.0, 0.001)], discharge=Q, upstream=gv.FixedDepth(1.5),
                     downstream=gv.FixedDepth(1.2))
    p = reach.solve()
    assert any(c.kind == "unused control" for c in p.controls)


def test_depth_at_interpolates_and_rejects_outside():
    p = gv.Reach(segments=[seg(500.0, 0.001)], discharge=Q, downstream=gv.FixedDepth(2.0)).solve()
    assert p.depth_at(500.0) == pytest.approx(2.0)
    assert np.shape(p.depth_at([0.0, 250.0])) == (2,)
    with pytest.raises(gv.InvalidInputError):
        p.depth_at(600.0)


def test_us_customary_reach():
    """The same M1 in feet: depths scale with the length unit (k = 1.486, g = 32.174 ft/s²)."""
    ft = 0.3048
    si = gv.Reach(segments=[seg(500.0, 0.001)], discharge=Q, downstream=gv.FixedDepth(2.0)).solve()
    us_seg = gv.Segment(length=500.0 / ft, slope=0.001, section=gv.Rectangular(width=B / ft), roughness=N)
    us = gv.Reach(segments=[us_seg], discharge=Q / ft ** 3, downstream=gv.FixedDepth(2.0 / ft),
                  units="US").solve()
    # 1.486 is 1/0.3048^(1/3) to four figures, and 32.174 ft/s² is g to five: agreement to ~1e-4
    assert us.depth[0] * ft == pytest.approx(si.depth[0], rel=3e-4)


@settings(max_examples=30, deadline=None)
@given(slope=st.floats(1e-4, 5e-3), tail=st.floats(0.8, 3.0), q=st.floats(1.0, 20.0))
def test_property_mild_reach_depths_are_positive_and_subcritical(slope, tail, q):
    yc = ((q / B) ** 2 / G) ** (1 / 3)
    yn = yn_rect(slope, q=q)
    if yn <= yc * 1.01:
        return  # not a mild slope for this discharge
    tail = max(tail, 1.05 * yc)
    p = gv.Reach(segments=[seg(300.0, slope)], discharge=q, downstream=gv.FixedDepth(tail)).solve(n_steps=50)
    assert np.all(p.depth > yc)
    assert np.all(np.isfinite(p.depth))
    # monotone toward normal depth going upstream
    gap = np.abs(p.depth - yn)
    assert np.all(np.diff(gap) >= -1e-12)


def test_contraction_chokes_and_raises_the_upstream_depth():
    """A narrow mild section needing more energy than the approach flow has goes critical at its exit.

    Checks from closed forms (rectangle: yc = (q²/g)^(1/3), E_min = 1.5 yc; Chow 1959, §3-2): critical
    depth at the exit of the narrow section, and the supercritical depth leaving it into the wide
    channel has the same specific energy, 1.5 yc.
    """
    wide, narrow = gv.Rectangular(width=6.0), gv.Rectangular(width=1.2)
    reach = gv.Reach(segments=[seg(300.0, 0.001, wide), seg(30.0, 0.001, narrow), seg(300.0, 0.001, wide)],
                     discharge=Q)
    p = reach.solve()
    assert [c.kind for c in p.controls if c.kind == "choke"] == ["choke"]
    yc_n = yc_rect(b=1.2)
    at = np.flatnonzero(np.isclose(p.x, 330.0))
    assert p.depth[at[0]] == pytest.approx(yc_n, rel=1e-9)
    e_min = 1.5 * yc_n
    y_super = brentq(lambda y: y + (Q / 6.0) ** 2 / (2 * G * y * y) - e_min, 1e-3, yc_rect(b=6.0))
    assert p.depth[at[1]] == pytest.approx(y_super, rel=1e-8)
    assert p.profile_types == ["M1", "M2", "M3"]
    assert len(p.jumps) == 1 and p.jumps[0].segment == 2
    # upstream of the choke the wide channel stands well above its own normal depth
    assert p.depth[0] > p.normal_depths[0] * 1.5


AGREEMENT_REACHES = {
    "chute, low tailwater": gv.Reach(segments=[seg(100.0, 0.02), seg(300.0, 0.002)], discharge=Q,
                                     downstream=gv.UniformFlow()),
    "chute, high tailwater": gv.Reach(segments=CHUTE, discharge=Q, downstream=gv.FixedDepth(2.0)),
    "mild to steep": gv.Reach(segments=[seg(400.0, 0.0005), seg(200.0, 0.02)], discharge=Q),
    "horizontal overfall": gv.Reach(segments=[seg(150.0, 0.0)], discharge=Q, downstream=gv.CriticalFlow()),
    "gate, M3 and jump": gv.Reach(segments=[seg(300.0, 0.001)], discharge=Q, upstream=gv.SluiceGate(opening=0.25),
                                  downstream=gv.FixedDepth(1.3)),
    "choke": gv.Reach(segments=[seg(300.0, 0.001, gv.Rectangular(width=6.0)),
                                seg(30.0, 0.001, gv.Rectangular(width=1.2)),
                                seg(300.0, 0.001, gv.Rectangular(width=6.0))], discharge=Q),
}


@pytest.mark.parametrize("name", list(AGREEMENT_REACHES))
def test_standard_step_and_ivp_agree(name):
    """The two marchers solve the same reach alike: depths within 0.5 %, jumps within 1 % of the reach."""
    reach = AGREEMENT_REACHES[name]
    a, b = reach.solve(), reach.solve(method="ivp")
    assert a.profile_types == b.profile_types
    assert len(a.jumps) == len(b.jumps)
    for ja, jb in zip(a.jumps, b.jumps, strict=True):
        assert abs(ja.x - jb.x) <= 0.01 * reach.length
    # compare away from the jumps, where one solution may already have jumped and the other not
    x = np.linspace(0.0, reach.length, 301)
    near = np.zeros(x.shape, bool)
    for j in a.jumps:
        near |= np.abs(x - j.x) <= 0.01 * reach.length
    da, db = a.depth_at(x[~near]), b.depth_at(x[~near])
    assert np.max(np.abs(da / db - 1)) <= 5e-3


def test_conduit_over_capacity_without_a_downstream_control_is_an_error():
    pipe = gv.Circular(diameter=1.0)
    reach = gv.Reach(segments=[gv.Segment(length=100.0, slope=0.001, section=pipe, roughness=0.013)], discharge=5.0)
    for method in ("standard_step", "ivp"):
        with pytest.raises(gv.NoSolutionError, match="cannot carry it in uniform flow"):
            reach.solve(method=method)


def test_brink_station_is_critical_with_an_energy_coefficient():
    """With alpha = 1.3 critical depth satisfies alpha Fr² = 1 (Chow 1959, eq. 4-5), so Fr there is 1/sqrt(1.3)."""
    reach = gv.Reach(segments=[seg(100.0, 0.001)], discharge=Q, downstream=gv.CriticalFlow(), alpha=1.3)
    p = reach.solve()
    assert p.regime[-1] == "critical"
    assert p.froude[-1] == pytest.approx(1 / math.sqrt(1.3), rel=1e-9)


# --------------------------------------------------------------------------------------------
# a sluice gate between two segments
# --------------------------------------------------------------------------------------------


def gated(tailwater, opening=0.3):
    below = gv.Segment(length=300.0, slope=0.001, section=RECT, roughness=N, gate=gv.SluiceGate(opening=opening))
    return gv.Reach(segments=[seg(300.0, 0.001), below], discharge=Q, downstream=gv.FixedDepth(tailwater))


def test_gate_between_segments_in_free_flow():
    """Upstream depth by energy to the vena contracta; jump below it where M3 meets the M1 (Henderson 1966,
    *Open Channel Flow*, §6.5, from memory; quadrature and Belanger as in the tests above)."""
    q, jet = Q / B, 0.61 * 0.3
    e_jet = jet + q * q / (2 * G * jet * jet)
    y1 = brentq(lambda y: y + q * q / (2 * G * y * y) - e_jet, yc_rect(), 20.0, xtol=1e-14)
    p = gated(1.4).solve()
    at_gate = p.depth[np.isclose(p.x, 300.0)]
    assert at_gate[0] == pytest.approx(y1, rel=1e-10) and at_gate[1] == pytest.approx(jet, rel=1e-12)
    assert p.profile_types == ["M1", "M3", "M1"]
    x_ref, _, _ = gate_jump_reference(0.001, 300.0, jet, 1.4)
    assert len(p.jumps) == 1 and abs(p.jumps[0].x - (300.0 + x_ref)) <= 0.01 * 300.0
    assert any(c.kind == "gate" and "free flow" in c.text for c in p.controls)


def test_gate_between_segments_drowned_by_high_tailwater():
    """Submerged gate, rectangle: energy from upstream to the vena contracta, momentum from there to the
    tailwater (Henderson 1966, §6.5, from memory), with the tailwater depth at the gate by quadrature."""
    q, jet, tw = Q / B, 0.61 * 0.3, 2.6
    y3 = brentq(lambda y: distance(tw, y, 0.001) + 300.0, yn_rect(0.001) * 1.0001, tw)
    y_v = brentq(lambda y: y * y / 2 + q * q / (G * jet) - (y3 * y3 / 2 + q * q / (G * y3)), jet, y3, xtol=1e-14)
    e = y_v + q * q / (2 * G * jet * jet)
    y1 = brentq(lambda y: y + q * q / (2 * G * y * y) - e, yc_rect(), 30.0, xtol=1e-14)
    p = gated(tw).solve(n_steps=400)
    at_gate = p.depth[np.isclose(p.x, 300.0)]
    assert at_gate[1] == pytest.approx(y3, rel=1e-4)
    assert at_gate[0] == pytest.approx(y1, rel=1e-4)
    assert p.jumps == [] and np.all(p.regime == "subcritical")
    assert any(c.kind == "gate" and "submerged" in c.text for c in p.controls)


def test_gate_between_segments_round_trips_and_agrees_with_ivp():
    reach = gated(1.1)
    again = gv.Reach.model_validate_json(reach.model_dump_json())
    assert again == reach and np.array_equal(again.solve().depth, reach.solve().depth)
    a, b = reach.solve(), reach.solve(method="ivp")
    assert a.profile_types == b.profile_types and abs(a.jumps[0].x - b.jumps[0].x) <= 0.01 * reach.length


def test_gate_errors():
    with pytest.raises(ValueError, match="upstream control"):
        gv.Reach(segments=[gv.Segment(length=100.0, slope=0.001, section=RECT, roughness=N,
                                      gate=gv.SluiceGate(opening=0.3))], discharge=Q)
    # a free gate (steep below it: nothing drowns it) whose pool would stand below its lip does not control
    free = gv.Segment(length=300.0, slope=0.02, section=RECT, roughness=N, gate=gv.SluiceGate(opening=1.05))
    with pytest.raises(gv.ControlError, match="opening"):
        gv.Reach(segments=[seg(300.0, 0.001), free], discharge=Q).solve()


@pytest.mark.parametrize("call, word", [
    (lambda r: r.solve(n_step=10), "'n_step'"),
    (lambda r: r.solve(method="ivp", rtoll=1e-6), "'rtoll'"),
    (lambda r: r.sweep(discharge=np.array([8.0, 9.0]), n_step=10), "'n_step'"),
])
def test_a_mistyped_keyword_is_named_with_the_valid_ones(call, word):
    reach = gv.demo_reach()
    with pytest.raises(gv.InvalidInputError, match=f"unknown keyword {word}.*n_steps, max_step"):
        call(reach)


def test_a_profile_of_too_many_stations_is_refused_before_any_work():
    reach = gv.demo_reach()
    with pytest.raises(gv.InvalidInputError, match=r"n_steps=100, max_step=1e-06 would give 750,000,003 stations"):
        reach.solve(max_step=1e-6)
    with pytest.raises(gv.InvalidInputError, match=r"fewer steps per segment \(n_steps\)"):
        reach.sweep(discharge=[5.0, 6.0], n_steps=10 ** 7)

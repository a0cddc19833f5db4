"""Reaches through changing sections: the standard step between unlike sections.

References, each written out here independently of gvflow:
- the standard step between two sections (Chow 1959, *Open-Channel Hydraulics*, §10-3): energy at
  the upstream station equals energy at the downstream one plus the friction loss over the interval,
  with Sf from the mean conveyance (Sf = (2Q/(K1 + K2))²), plus a transition loss
  C |Δ(V²/2g)|, C the contraction coefficient where the velocity head grows downstream and the
  expansion coefficient where it falls (US Army Corps of Engineers EM 1110-2-1416, 1993; from memory),
  solved here station by station with scipy's brentq;
- for prismatic stretches, scipy's adaptive quadrature of dx/dy = (1 - Fr²)/(S0 - Sf).
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy.integrate import quad
from scipy.optimize import brentq

import gvflow as gv

G = 9.80665
Q, N, S0 = 10.0, 0.015, 0.001


def hand_standard_step(widths, x, y_end, cc, ce, q=Q, n=N, s0=S0, branch="sub"):
    """Depths at stations x (increasing) of a rectangle whose width at station i is widths[i], marching
    upstream from depth y_end at the last station (subcritical)."""
    def props(b, y):
        a, p = b * y, b + 2 * y
        return a, a * (a / p) ** (2 / 3) / n

    ys = [y_end]
    for i in range(len(x) - 1, 0, -1):
        b_dn, b_up, y_dn = widths[i], widths[i - 1], ys[-1]
        a1, k1 = props(b_dn, y_dn)
        hv1 = (q / a1) ** 2 / (2 * G)
        dx = x[i] - x[i - 1]

        def resid(y, b_up=b_up, hv1=hv1, dx=dx, y_dn=y_dn, k1=k1):
            a2, k2 = props(b_up, y)
            hv2 = (q / a2) ** 2 / (2 * G)
            c = cc if hv1 > hv2 else ce  # station 1 is downstream: the velocity head grows downstream if hv1 > hv2
            return y + hv2 + s0 * dx - (y_dn + hv1) - dx * (2 * q / (k1 + k2)) ** 2 - c * abs(hv2 - hv1)

        yc = (q * q / (G * b_up * b_up)) ** (1 / 3)
        ys.append(brentq(resid, yc * (1 + 1e-9), 10.0, xtol=1e-15, rtol=1e-15))
    return np.array(ys[::-1])


@pytest.mark.parametrize("b_up, b_dn", [(6.0, 4.0), (4.0, 6.5)], ids=["contraction", "expansion"])
def test_standard_step_through_a_transition_matches_the_hand_energy_balance(b_up, b_dn):
    reach = gv.Reach(segments=[gv.Segment(length=200.0, slope=S0, section=gv.Rectangular(width=b_up), roughness=N,
                                          section_downstream=gv.Rectangular(width=b_dn), contraction=0.1,
                                          expansion=0.3)],
                     discharge=Q, downstream=gv.FixedDepth(1.5))
    p = reach.solve(n_steps=20)
    widths = b_up + (b_dn - b_up) * p.x / 200.0
    ref = hand_standard_step(widths, p.x, 1.5, 0.1, 0.3)
    np.testing.assert_allclose(p.depth, ref, rtol=1e-10, atol=0)
    assert np.max(np.abs(p.depth - ref)) < 1e-3  # within 1 mm of the hand balance, with room to spare
    # the sections are exact at both ends and linear between
    np.testing.assert_allclose(p.top_width, widths, rtol=1e-12)
    assert p.top_width[0] == b_up and p.top_width[-1] == b_dn
    np.testing.assert_allclose(p.velocity, Q / (widths * p.depth), rtol=1e-12)


def test_losses_raise_the_water_upstream_of_a_contraction_and_an_expansion():
    def solve(cc, ce):
        segs = [gv.Segment(length=100.0, slope=S0, section=gv.Rectangular(width=6.0), roughness=N,
                           section_downstream=gv.Rectangular(width=4.0), contraction=cc, expansion=ce),
                gv.Segment(length=100.0, slope=S0, section=gv.Rectangular(width=4.0), roughness=N,
                           section_downstream=gv.Rectangular(width=6.0), contraction=cc, expansion=ce)]
        return gv.Reach(segments=segs, discharge=Q, downstream=gv.FixedDepth(1.5)).solve(n_steps=10)

    none, some = solve(0.0, 0.0), solve(0.1, 0.3)
    assert some.depth[0] > none.depth[0] + 1e-3
    # the loss of each interval is C |Δ hv| on top of friction: summed over the reach, the energy grade rises by it
    assert some.energy_grade[0] - some.energy_grade[-1] > none.energy_grade[0] - none.energy_grade[-1]


def test_a_reach_of_identical_surveyed_sections_matches_quadrature():
    # a trapezoid entered as points at three stations, no transition losses: a prismatic channel, whose
    # M1 profile is checked against quadrature of dx/dy (b = 3, side slopes 1.5, n = 0.018)
    def trapezoid(z0):
        return gv.Surveyed(offset=[-15, 0, 3, 18], elevation=[z0 + 10, z0, z0, z0 + 10], roughness=0.018)

    secs = [trapezoid(100.6), trapezoid(100.3), trapezoid(100.0)]
    reach = gv.Reach.from_sections(stations=[0.0, 300.0, 600.0], sections=secs, discharge=12.0, contraction=0.0,
                                   expansion=0.0, downstream=gv.FixedDepth(2.4))
    assert reach.datum == 100.0 and [s.slope for s in reach.segments] == pytest.approx([1e-3, 1e-3])
    p = reach.solve(n_steps=200)
    b, z, n, q, s0 = 3.0, 1.5, 0.018, 12.0, 1e-3

    def dxdy(y):
        a, t, per = (b + z * y) * y, b + 2 * z * y, b + 2 * y * np.sqrt(1 + z * z)
        sf = (n * q / (a * (a / per) ** (2 / 3))) ** 2
        return (1 - q * q * t / (G * a ** 3)) / (s0 - sf)

    for y in (p.depth[0], p.depth[p.x.size // 3]):
        xq = 600.0 - quad(dxdy, y, 2.4, epsabs=1e-12, epsrel=1e-12)[0]
        assert np.interp(xq, p.x, p.depth) == pytest.approx(y, abs=2e-5)


def test_from_sections_through_unlike_surveyed_sections_notes_sections_far_apart():
    def section(width, z0):
        return gv.Surveyed(offset=[0, 20, 20, 20 + width, 20 + width, 40 + width],
                           elevation=[z0 + 3, z0 + 2, z0, z0, z0 + 2, z0 + 3],
                           roughness=[0.05, 0.03, 0.05], zone_edges=[20, 20 + width])

    close = [section(8.0, 10.2), section(7.0, 10.1), section(6.5, 10.0)]
    p = gv.Reach.from_sections(stations=[0, 100, 200], sections=close, discharge=20.0,
                               downstream=gv.FixedDepth(2.5)).solve(n_steps=20)
    assert not any(c.kind == "sections far apart" for c in p.controls)
    # a junction between two segments has the same section on both sides: one station there
    assert np.count_nonzero(p.x == 100.0) == 1
    assert p.bed[0] == pytest.approx(10.2) and p.bed[-1] == 10.0
    far = [section(20.0, 10.1), section(3.0, 10.0)]
    p2 = gv.Reach.from_sections(stations=[0, 100], sections=far, discharge=20.0,
                                downstream=gv.FixedDepth(2.5)).solve(n_steps=20)
    assert any(c.kind == "sections far apart" for c in p2.controls)


def test_sweep_of_a_changing_reach_gives_each_scenario_as_alone():
    reach = gv.Reach(segments=[gv.Segment(length=200.0, slope=S0, section=gv.Rectangular(width=6.0), roughness=N,
                                          section_downstream=gv.Rectangular(width=4.0), contraction=0.1,
                                          expansion=0.3)],
                     discharge=Q, downstream=gv.FixedDepth(1.5))
    res = reach.sweep(discharge=[6.0, 10.0, 14.0], n_steps=20)
    for i, q in enumerate([6.0, 10.0, 14.0]):
        alone = reach.model_copy(update={"discharge": q}).solve(n_steps=20)
        np.testing.assert_array_equal(res.depth[i], alone.depth)
        np.testing.assert_allclose(res.velocity[i], alone.velocity, rtol=1e-12)


def test_supercritical_flow_through_a_contracting_chute_matches_the_hand_energy_balance():
    # steep chute entered at critical depth; the supercritical branch marched downstream
    b_up, b_dn, s0, q = 5.0, 4.0, 0.04, 12.0
    reach = gv.Reach(segments=[gv.Segment(length=60.0, slope=s0, section=gv.Rectangular(width=b_up), roughness=N,
                                          section_downstream=gv.Rectangular(width=b_dn))],
                     discharge=q, downstream=gv.CriticalFlow())
    p = reach.solve(n_steps=30)
    assert np.all(p.regime[1:] == "supercritical")
    widths = b_up + (b_dn - b_up) * p.x / 60.0

    def props(b, y):
        a, per = b * y, b + 2 * y
        return a, a * (a / per) ** (2 / 3) / N

    y = p.depth[0]
    assert y == pytest.approx((q * q / (G * b_up * b_up)) ** (1 / 3), rel=1e-9)
    for i in range(1, 8):
        a1, k1 = props(widths[i - 1], y)
        e1 = y + (q / a1) ** 2 / (2 * G)
        dx = p.x[i] - p.x[i - 1]

        def resid(y2, b=widths[i], k1=k1, e1=e1, dx=dx):
            a2, k2 = props(b, y2)
            return y2 + (q / a2) ** 2 / (2 * G) - e1 - s0 * dx + dx * (2 * q / (k1 + k2)) ** 2

        yc2 = (q * q / (G * widths[i] ** 2)) ** (1 / 3)
        y = brentq(resid, 0.05, yc2 * (1 - 1e-12), xtol=1e-15, rtol=1e-15)
        assert p.depth[i] == pytest.approx(y, rel=1e-9)


def test_changing_section_errors_name_the_field():
    with pytest.raises(gv.InvalidInputError, match="section_downstream"):
        gv.Segment(length=10.0, slope=1e-3, section=gv.Rectangular(width=3.0), roughness=N,
                   section_downstream=gv.Parabolic(top_width=2.0, reference_depth=1.0))
    with pytest.raises(gv.InvalidInputError, match="section_downstream"):
        gv.Segment(length=10.0, slope=1e-3, section=gv.Circular(diameter=1.0), roughness=N,
                   section_downstream=gv.Circular(diameter=1.2))
    a = gv.Surveyed(offset=[0, 5, 10], elevation=[2, 0, 2], roughness=0.03)
    b = gv.Surveyed(offset=[0, 5, 10], elevation=[2, 0, 2], roughness=[0.05, 0.03], zone_edges=[5])
    with pytest.raises(gv.InvalidInputError, match="same number of zones"):
        gv.Segment(length=10.0, slope=1e-3, section=a, section_downstream=b)
    with pytest.raises(gv.InvalidInputError, match=r"inverts\[0\]"):
        gv.Reach.from_sections(stations=[0, 10], sections=[gv.Rectangular(width=2.0)] * 2, discharge=1.0,
                               roughness=0.02)
    with pytest.raises(gv.InvalidInputError, match="increase"):
        gv.Reach.from_sections(stations=[0, 0], sections=[a, a], discharge=1.0)
    # a surveyed section carries its roughness: giving one too is an error, as for a Segment
    with pytest.raises(gv.InvalidInputError, match="roughness: section 0 is surveyed"):
        gv.Reach.from_sections(stations=[0, 10], sections=[a, a], discharge=1.0, roughness=0.5)
    with pytest.raises(gv.InvalidInputError, match=r"roughness\[1\]: section 1 is surveyed"):
        gv.Reach.from_sections(stations=[0, 10, 20], sections=[gv.Rectangular(width=2.0), a, a], discharge=1.0,
                               inverts=[1.0, None, None], roughness=[0.02, 0.5, None])
    # stations closer than their beds' difference: the message names them, not a slope the user never gave
    lower = gv.Surveyed(offset=[0, 5, 10], elevation=[1.5, -0.5, 1.5], roughness=0.03)
    with pytest.raises(gv.InvalidInputError, match=r"stations 10 and 10.001: their beds \(0 and -0.5\)"):
        gv.Reach.from_sections(stations=[0, 10, 10.001], sections=[a, a, lower], discharge=1.0)
    reach = gv.Reach(segments=[gv.Segment(length=50.0, slope=S0, section=gv.Rectangular(width=6.0), roughness=N,
                                          section_downstream=gv.Rectangular(width=4.0))],
                     discharge=Q, downstream=gv.FixedDepth(1.5))
    from gvflow.profiles import Marcher

    class Plain(Marcher):  # a marcher of prismatic segments only
        name = "plain"

    with pytest.raises(gv.InvalidInputError, match="cannot march a segment whose section changes"):
        reach.solve(method=Plain)


@pytest.mark.parametrize("b_up, b_dn", [(6.0, 4.0), (4.0, 6.5)], ids=["contraction", "expansion"])
def test_ivp_integrates_the_nonprismatic_equation_and_agrees_with_the_standard_step(b_up, b_dn):
    # method="ivp" integrates dy/dx with the dA/dx term and the transition losses; the standard step
    # converges to it at second order in the station spacing
    reach = gv.Reach(segments=[gv.Segment(length=200.0, slope=S0, section=gv.Rectangular(width=b_up), roughness=N,
                                          section_downstream=gv.Rectangular(width=b_dn), contraction=0.1,
                                          expansion=0.3),
                               gv.Segment(length=100.0, slope=S0, section=gv.Rectangular(width=b_dn), roughness=N)],
                     discharge=Q, downstream=gv.FixedDepth(1.5))
    ivp = reach.solve(method="ivp", n_steps=50)
    errors = [abs(reach.solve(n_steps=k).depth[0] - ivp.depth[0]) for k in (10, 50)]
    assert errors[1] < 2e-5 and errors[1] < errors[0] / 15  # (5x the stations: 25x smaller at second order)
    fine = reach.solve(n_steps=250)
    np.testing.assert_allclose(fine.depth, reach.solve(method="ivp", n_steps=250).depth, rtol=1e-6)


def test_ivp_through_a_contracting_chute_leaves_critical_depth_and_agrees():
    chute = gv.Reach(segments=[gv.Segment(length=60.0, slope=0.04, section=gv.Rectangular(width=5.0), roughness=N,
                                          section_downstream=gv.Rectangular(width=4.0))],
                     discharge=12.0, downstream=gv.CriticalFlow())
    a, b = chute.solve(n_steps=60), chute.solve(method="ivp", n_steps=60)
    assert list(b.regime[1:]) == ["supercritical"] * (b.x.size - 1)
    np.testing.assert_allclose(b.depth, a.depth, rtol=2e-4)


def test_roughness_sweep_through_surveyed_sections_scales_both_ends():
    # zone roughness differs between the sections; a roughness_scale sweep scales each end's own zones
    def section(width, z0, n_main):
        return gv.Surveyed(offset=[0, 20, 20, 20 + width, 20 + width, 40 + width],
                           elevation=[z0 + 3, z0 + 2, z0, z0, z0 + 2, z0 + 3],
                           roughness=[0.05, n_main, 0.05], zone_edges=[20, 20 + width])

    secs = [section(8.0, 10.2, 0.03), section(7.0, 10.1, 0.035), section(6.5, 10.0, 0.04)]
    reach = gv.Reach.from_sections(stations=[0, 100, 200], sections=secs, discharge=20.0,
                                   downstream=gv.FixedDepth(2.5))
    res = reach.sweep(roughness_scale=[0.9, 1.0, 1.1], n_steps=20)
    for i, f in enumerate([0.9, 1.0, 1.1]):
        alone = res.scenario_reach(i)
        assert alone.segments[1].section_downstream.roughness[1].n == pytest.approx(0.04 * f)
        np.testing.assert_array_equal(res[i].depth, alone.solve(n_steps=20).depth)
    np.testing.assert_array_equal(res[1].depth, reach.solve(n_steps=20).depth)


def test_sections_between_two_surveyed_ones_keep_their_point_count():
    # 13 points after matching: (1 - t) 13 + t 13 is not 13 in floating point for every t; the counts are
    # copied, so every section between is whole (a regression: a truncated count lost the channel's last
    # points, and with them its flow area)
    n_flood, n_channel = 0.055, 0.035
    lower = gv.Surveyed(offset=[0, 18, 30, 38, 40, 46, 49, 51, 62, 88],
                        elevation=[94.9, 93.8, 93.3, 93.2, 91.6, 91.4, 91.7, 93.2, 93.5, 94.6],
                        roughness=[n_flood, n_channel, n_flood], zone_edges=[38, 51])
    approach = gv.Surveyed(offset=[0, 18, 30, 38, 40, 46, 49, 51, 60, 80],
                           elevation=[93.9, 92.8, 92.3, 92.2, 90.6, 90.4, 90.7, 92.2, 92.5, 93.6],
                           roughness=[n_flood, n_channel, n_flood], zone_edges=[38, 51])
    reach = gv.Reach.from_sections(stations=[0, 500], sections=[lower, approach], discharge=12.0,
                                   downstream=gv.FixedDepth(1.68))
    p = reach.solve(n_steps=20)
    assert list(p.regime) == ["subcritical"] * p.x.size
    assert np.all(np.diff(p.depth) > 0)  # an M1 profile rising toward the control
    from gvflow._engine import core
    from gvflow.sections import matched_parameters

    kind, up, dn = matched_parameters(lower, approach)
    for t in np.linspace(0.0, 1.0, 101):
        par = core("changing", 1).blend(kind, up, dn, t)
        assert par[0] == up[0] and par[1] == up[1]


def test_a_choke_inside_a_changing_segment_is_named_not_passed_off_as_a_profile():
    # A 4 m channel opening over 5 m into a 12 m one with floodplains, under a tailwater too low for the
    # narrow section: the subcritical profile traced up from the tailwater finds no depth that balances the
    # energy in the narrow part (the narrow section's least specific energy is above the water's energy;
    # critical depths by gv.critical_depths). The stations there are held at critical depth, and the result
    # must say that this stretch is not a traced profile.
    def section(z, w, fp):
        return gv.Surveyed(offset=[-fp - 5, -fp, -w / 2 - 1, -w / 2, w / 2, w / 2 + 1, fp, fp + 5],
                           elevation=[z + 4, z + 2, z + 2, z, z, z + 2, z + 2, z + 4], roughness=[0.08, 0.03, 0.08],
                           zone_edges=[-w / 2 - 1, w / 2 + 1])

    narrow, wide = section(100.02, 4.0, 10.0), section(100.0, 12.0, 150.0)
    q = 30.0
    e_narrow = gv.specific_energy(narrow, q, gv.critical_depths(narrow, q)[0])  # its least specific energy
    p = gv.Reach.from_sections(stations=[0, 5], sections=[narrow, wide], discharge=q,
                               downstream=gv.FixedDepth(1.5)).solve()
    assert p.energy_grade[-1] < 100.02 + e_narrow  # the water below cannot pass the narrow section subcritical
    held = np.flatnonzero(p.regime == "critical")
    assert held.size >= 2 and held[0] == 0
    notes = [c for c in p.controls if c.kind == "untraced stretch"]
    assert len(notes) == 1 and notes[0].x == 0.0 and f"to {p.x[held[-1]]:.2f} m" in notes[0].text
    assert "not a traced profile" in notes[0].text


def test_a_supercritical_profile_through_changing_sections_is_labelled_by_its_zone():
    # A steep 200 m segment between two compound sections, supercritical from a 1.0 m depth at its head:
    # there yn < y < yc of the head's own section (gv.normal_depth, gv.critical_depths), and the profile is
    # supercritical at every station, so it is an S2 (Chow 1959, §9-2). It was labelled S1 from the depths of
    # the segment's downstream end.
    def section(z, wl, wc, wr, dep=1.5):
        return gv.Surveyed(offset=[-wl - 10, -wl, -wc / 2 - 2, -wc / 2, wc / 2, wc / 2 + 2, wr, wr + 10],
                           elevation=[z + dep + 2, z + dep + 0.3, z + dep, z, z, z + dep, z + dep + 0.3, z + dep + 2],
                           roughness=[0.07, 0.035, 0.06], zone_edges=[-wc / 2 - 2, wc / 2 + 2])

    head, end = section(106.0, 25, 5, 25), section(102.0, 30, 7, 20)
    q = 20.0
    assert gv.normal_depth(head, q, 0.02) < 1.0 < gv.critical_depths(head, q)[0]
    p = gv.Reach.from_sections(stations=[0, 200], sections=[head, end], discharge=q,
                               upstream=gv.FixedDepth(1.0)).solve()
    assert (p.regime == "supercritical").all()
    assert p.profile_types == ["S2"]

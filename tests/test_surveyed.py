"""Surveyed sections in the public functions, and section files.

References: prismatic equivalence (a trapezoid entered as points is the same channel,
exact); Chow's trapezoid (Chow 1959, Examples 10-1/10-2: yn 3.36 ft, yc 2.15 ft with
alpha 1; from memory) in US units; the rectangle's closed-form critical depth; the
defining equations of normal depth, critical flow and the coefficients.
"""

import math
import warnings

import numpy as np
import pytest

import gvflow as gv

TRAP = gv.Trapezoidal(bottom_width=3.0, side_slope=1.5)
TRAP_POINTS = gv.Surveyed(offset=[-15, 0, 3, 18], elevation=[110, 100, 100, 110], roughness=0.018)
COMPOUND = gv.Surveyed(offset=[-100, -100, 0, 0, 10, 10, 110, 110], elevation=[5, 2, 2, 0, 0, 2, 2, 5],
                       roughness=[0.05, 0.03, 0.05], zone_edges=[0, 10])


def test_trapezoid_as_points_reproduces_every_prismatic_result():
    y = np.linspace(0.05, 9.0, 40)
    for name in ("area", "wetted_perimeter", "top_width", "hydraulic_radius", "first_moment"):
        np.testing.assert_allclose(getattr(TRAP_POINTS, name)(y), getattr(TRAP, name)(y), rtol=1e-12)
    for q in (0.5, 12.0, 150.0):
        assert gv.normal_depth(TRAP_POINTS, q, 0.0008) == pytest.approx(gv.normal_depth(TRAP, q, 0.0008, 0.018),
                                                                         rel=1e-12)
        assert gv.critical_depth(TRAP_POINTS, q) == pytest.approx(gv.critical_depth(TRAP, q), rel=1e-12)
        assert gv.froude_number(TRAP_POINTS, q, 1.0) == pytest.approx(gv.froude_number(TRAP, q, 1.0), rel=1e-12)
        assert gv.specific_force(TRAP_POINTS, q, 1.0) == pytest.approx(gv.specific_force(TRAP, q, 1.0), rel=1e-12)
    assert gv.critical_slope(TRAP_POINTS, 12.0) == pytest.approx(gv.critical_slope(TRAP, 12.0, 0.018), rel=1e-11)


def test_chows_trapezoid_entered_as_points_in_us_units():
    # Chow 1959, Examples 10-1/10-2 (from memory): b = 20 ft, z = 2, n = 0.025, S0 = 0.0016,
    # Q = 400 cfs; yn 3.36 ft, yc 2.15 ft (alpha 1, g = 32.174 ft/s²)
    sec = gv.Surveyed(offset=[0, 20, 40, 60], elevation=[10, 0, 0, 10], roughness=0.025)
    assert gv.normal_depth(sec, 400.0, 0.0016, units="US") == pytest.approx(3.36, abs=0.005)
    assert gv.critical_depth(sec, 400.0, units="US") == pytest.approx(2.15, abs=0.005)


def test_compound_section_critical_depths():
    # two minima of specific energy at 80 m³/s; the lower one in the rectangular main channel
    # equals (q²/g)^(1/3) exactly (closed form)
    ycs = gv.critical_depths(COMPOUND, 80.0)
    assert len(ycs) == 2
    assert ycs[0] == pytest.approx((8.0 ** 2 / 9.80665) ** (1 / 3), rel=1e-12)
    for y in ycs:
        assert gv.froude_number(COMPOUND, 80.0, y) == pytest.approx(1.0, abs=1e-9)
    with pytest.warns(gv.GVFlowWarning, match="2 critical depths"):
        yc = gv.critical_depth(COMPOUND, 80.0)
    # the one returned has the least specific energy
    e = gv.specific_energy(COMPOUND, 80.0, ycs)
    assert yc == ycs[int(np.argmin(e))]
    assert len(gv.critical_depths(COMPOUND, 20.0)) == 1


def test_specific_energy_uses_the_sections_own_alpha():
    y, q = 2.6, 80.0
    alpha = COMPOUND.energy_coefficient(y)
    a = COMPOUND.area(y)
    assert alpha > 1.5  # near bankfull the zone velocities differ widely
    assert gv.specific_energy(COMPOUND, q, y) == pytest.approx(y + alpha * q * q / (2 * 9.80665 * a * a), rel=1e-14)
    assert gv.specific_force(COMPOUND, q, y) == pytest.approx(
        COMPOUND.momentum_coefficient(y) * q * q / (9.80665 * a) + COMPOUND.first_moment(y), rel=1e-14)


def test_coefficients_from_measured_zone_velocities():
    # alpha = sum V_i² Q_i A²/Q³ and beta = sum V_i Q_i A/Q² (Chow 1959, §2-7): the conveyance form
    # equals this with Q_i = Q K_i/K and V_i = Q_i/A_i (exact identity)
    y = 3.0
    zones = [gv.Surveyed(offset=o, elevation=e, roughness=n) for o, e, n in (
        ([-100, -100, 0], [5, 2, 2], 0.05), ([0, 0, 10, 10], [2, 0, 0, 2], 0.03), ([10, 110, 110], [2, 2, 5], 0.05))]
    # each zone on its own, walls that are division lines removed by hand: areas and perimeters exact
    a = [100.0 * 1.0, 10.0 * 3.0, 100.0 * 1.0]
    p = [100.0 + 1.0, 10.0 + 2 * 2.0, 100.0 + 1.0]
    n = [0.05, 0.03, 0.05]
    k = [ai ** (5 / 3) / pi ** (2 / 3) / ni for ai, pi, ni in zip(a, p, n, strict=True)]
    q = sum(k)  # discharge at Sf = 1; any value gives the same coefficients
    v = [ki / ai for ki, ai in zip(k, a, strict=True)]
    at = sum(a)
    alpha = sum(vi * vi * ki for vi, ki in zip(v, k, strict=True)) * at ** 2 / q ** 3
    beta = sum(vi * ki for vi, ki in zip(v, k, strict=True)) * at / q ** 2
    assert COMPOUND.energy_coefficient(y) == pytest.approx(alpha, rel=1e-12)
    assert COMPOUND.momentum_coefficient(y) == pytest.approx(beta, rel=1e-12)
    assert all(z.energy_coefficient(1.5) == 1.0 for z in zones)


def test_sequent_depth_balances_the_specific_force_with_beta():
    # A jump in COMPOUND from 0.3 m in the 10 m slot to above bankfull (2 m), written out by hand: areas,
    # first moments and Manning zone conveyances of the slot and the two 100 m floodplains (division lines
    # carry no friction), beta = A sum(K_i²/A_i)/K² (Chow 1959, §2-7), M = beta Q²/(g A) + A ȳ (Chow 1959,
    # eq. 3-20), the sequent depth by scipy's brentq
    from scipy.optimize import brentq

    g, q, y1 = 9.80665, 30.0, 0.3

    def force(y):
        zones = [(10.0 * y, 10.0 + 4.0, 0.03)]
        if y > 2.0:
            zones += [(100.0 * (y - 2.0), 100.0 + (y - 2.0), 0.05)] * 2
        k = [a ** (5 / 3) / p ** (2 / 3) / n for a, p, n in zones]
        area = sum(a for a, _, _ in zones)
        beta = area * sum(ki * ki / a for ki, (a, _, _) in zip(k, zones, strict=True)) / sum(k) ** 2
        return beta * q * q / (g * area) + 5.0 * y * y + 100.0 * max(y - 2.0, 0.0) ** 2

    y2 = brentq(lambda y: force(y) - force(y1), 2.0 + 1e-9, 4.0, xtol=1e-14)
    assert gv.sequent_depth(COMPOUND, q, y1) == pytest.approx(y2, rel=1e-10)
    assert gv.sequent_depth(COMPOUND, q, y2) == pytest.approx(y1, rel=1e-10)
    assert gv.specific_force(COMPOUND, q, y2) == pytest.approx(force(y2), rel=1e-12)


def test_water_above_the_surveyed_ends_warns():
    # ground 2 m deep at its end points: beyond them the section is a vertical wall (Surveyed notes), so a
    # depth above 2 m rests on ground that was not surveyed
    sec = gv.Surveyed(offset=[0, 5, 10, 15, 20], elevation=[2, 1, 0, 1, 2], roughness=[0.05, 0.03, 0.05],
                      zone_edges=[5, 15])
    with pytest.warns(gv.GVFlowWarning, match="normal depth 4.76 stands above the lower end point"):
        gv.normal_depth(sec, 150.0, 0.001)
    with pytest.warns(gv.GVFlowWarning, match="critical depth 2.997 stands above"):
        gv.critical_depth(sec, 150.0)
    with pytest.warns(gv.GVFlowWarning, match="depth 3 stands above"):
        gv.froude_number(sec, 150.0, [1.0, 3.0])
    reach = gv.Reach(segments=[gv.Segment(length=500, slope=0.001, section=sec)], discharge=150.0,
                     downstream=gv.FixedDepth(6.0))
    with pytest.warns(gv.GVFlowWarning, match=r"segment 0: 4 m above it at x = 500.0 m.*extend the survey"):
        reach.solve()
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        gv.normal_depth(sec, 5.0, 0.001)
        gv.sequent_depth(sec, 5.0, 0.2)  # its root search tries depths above the ends, its answer is below
        gv.Reach(segments=[gv.Segment(length=500, slope=0.001, section=sec)], discharge=5.0,
                 downstream=gv.FixedDepth(1.9)).solve()


def test_roughness_belongs_to_the_section():
    with pytest.raises(gv.InvalidInputError, match="carries its own roughness"):
        gv.normal_depth(TRAP_POINTS, 12.0, 0.001, 0.02)
    with pytest.raises(gv.InvalidInputError, match="roughness is required"):
        gv.normal_depth(TRAP, 12.0, 0.001)


@pytest.mark.parametrize("kwargs, match", [
    (dict(offset=[0, 1], elevation=[1, 0], roughness=0.03), "at least 3"),
    (dict(offset=[0, 2, 1], elevation=[1, 0, 1], roughness=0.03), r"offset\[2\] = 1 is less than"),
    (dict(offset=[0, 1, 2], elevation=[1, 0], roughness=0.03), "one value per offset"),
    (dict(offset=[0, 1, 2], elevation=[1, 0, 1], roughness=[0.03, 0.04]), "one value per zone"),
    (dict(offset=[0, 1, 2], elevation=[1, 0, 1], roughness=[0.03, 0.04], zone_edges=[2.0]), "strictly inside"),
    (dict(offset=[0, 1, 2], elevation=[1, 0, 1], roughness=[0.03, gv.Chezy(40.0)], zone_edges=[1.0]), "same law"),
    (dict(offset=[0, 1, 2], elevation=[1, 0, 1], roughness=gv.DarcyWeisbach(0.001)), "not Darcy"),
    (dict(offset=[0, 1, 2], elevation=[1, 1, 1], roughness=0.03), "flat line"),
    (dict(offset=[0, 1, 2], elevation=[1, math.nan, 1], roughness=0.03), "elevation"),
])
def test_bad_surveyed_input_names_the_field(kwargs, match):
    with pytest.raises(gv.InvalidInputError, match=match):
        gv.Surveyed(**kwargs)


def test_section_csv_with_a_roughness_column(tmp_path):
    path = tmp_path / "xs.csv"
    path.write_text("Offset [m],Elevation [m],Roughness\n-100,5,0.05\n-100,2,0.05\n0,2,0.03\n0,0,0.03\n"
                    "10,0,0.03\n10,2,0.05\n110,2,0.05\n110,5,\n")
    sec = gv.read_section_csv(path)
    assert sec.zone_edges == [0.0, 10.0]
    assert [r.n for r in sec.roughness] == [0.05, 0.03, 0.05]
    assert sec.area(3.0) == pytest.approx(COMPOUND.area(3.0))
    assert gv.normal_depth(sec, 80.0, 0.001) == pytest.approx(gv.normal_depth(COMPOUND, 80.0, 0.001), rel=1e-13)


def test_section_csv_with_a_zone_column_and_without():
    text = "offset,elevation,zone\n0,3,bank\n4,1,bank\n6,0,main\n9,0.2,main\n12,3,bank\n"
    sec = gv.read_section_csv(text, roughness={"bank": 0.06, "main": 0.035})
    assert sec.zone_edges == [6.0]
    assert [r.n for r in sec.roughness] == [0.06, 0.035]
    plain = gv.read_section_csv("offset,elevation\n0,3\n4,1\n6,0\n9,0.2\n12,3\n", roughness=0.04)
    assert plain.zone_count == 1


@pytest.mark.parametrize("text, match", [
    ("offset,height\n0,1\n1,0\n2,1\n", "no 'elevation' column"),
    ("offset,elevation\n0,1\n2,0\n1,1\n", "line 4: offset 1 is less than the 2"),
    ("offset,elevation\n0,1\n1,x\n2,1\n", "line 3: elevation 'x' is not a number"),
    ("offset,elevation\n0,1\n1,0\n", "at least 3 ground points"),
    ("offset,elevation\n0,1\n1,0\n2,1\n", "no roughness or zone column"),
])
def test_section_csv_errors_name_the_line(text, match):
    with pytest.raises(gv.InvalidInputError, match=match):
        gv.read_section_csv(text)


def test_surveyed_round_trips_through_json():
    back = gv.Surveyed.model_validate_json(COMPOUND.model_dump_json())
    assert back == COMPOUND and back.area(2.5) == COMPOUND.area(2.5)


def test_zone_flow_divides_the_discharge_by_conveyance():
    flow = COMPOUND.zone_flow(3.0, 80.0)
    assert flow["discharge"].sum() == pytest.approx(80.0, rel=1e-14)  # continuity (exact)
    np.testing.assert_allclose(flow["area"], [100.0, 30.0, 100.0], rtol=1e-14)  # hand areas
    np.testing.assert_allclose(flow["wetted_perimeter"], [101.0, 14.0, 101.0], rtol=1e-14)
    np.testing.assert_allclose(flow["velocity"] * flow["area"], flow["discharge"], rtol=1e-14)
    # Manning per zone by hand: K_i = A_i^(5/3) P_i^(-2/3) / n_i
    np.testing.assert_allclose(flow["conveyance"], [100 ** (5 / 3) / 101 ** (2 / 3) / 0.05,
                                                    30 ** (5 / 3) / 14 ** (2 / 3) / 0.03,
                                                    100 ** (5 / 3) / 101 ** (2 / 3) / 0.05], rtol=1e-13)


def test_section_plot_draws_levels_and_zone_velocities():
    import matplotlib

    matplotlib.use("Agg")
    ax = gv.plot_section(COMPOUND, 3.0, discharge=80.0)
    texts = [t.get_text() for t in ax.texts]
    assert len(texts) == 3 and all(t.startswith("V = ") for t in texts)
    labels = ax.get_legend_handles_labels()[1]
    assert "water level 3.000 m" in labels and any(lab.startswith("energy level") for lab in labels)
    ax = gv.plot_section(gv.Circular(diameter=1.2), 0.7, units="US")
    assert ax.get_xlabel() == "Offset [ft]"


def test_still_water_area_conveys_nothing_until_the_water_rises_above_it():
    # a rectangular opening 10 wide with ponded areas either side, still water below elevation 3.5
    ground = dict(offset=[-50, -50, 0, 0, 10, 10, 60, 60], elevation=[6, 2, 2, 0, 0, 2, 2, 6], roughness=0.03)
    plain = gv.Surveyed(**ground)
    ponded = gv.Surveyed(**ground, still_water=[gv.StillWater(left=-50, right=0, elevation=3.5),
                                                 gv.StillWater(left=10, right=60, elevation=3.5)])
    # below 3.5 only the opening's own area, width and conveyance count: a 10-wide channel whose walls
    # are wetted up to the ponds' floor at 2 (above it the zone edges are division lines, not perimeter)
    for y in (2.5, 3.0, 3.49):
        assert ponded.area(y) == pytest.approx(10 * y)
        assert ponded.top_width(y) == pytest.approx(10.0)
        assert plain.area(y) > ponded.area(y)
    q = gv.uniform_discharge(ponded, 3.0, 0.001)
    assert q == pytest.approx(30.0 * (30.0 / 14.0) ** (2 / 3) * 0.001 ** 0.5 / 0.03, rel=1e-12)  # Manning by hand
    # from 3.5 up it conveys like the rest of its zone (counts in full)
    assert ponded.area(3.6) == pytest.approx(plain.area(3.6))
    assert ponded.zone_count == 3
    with pytest.raises(gv.InvalidInputError, match="still_water"):
        gv.Surveyed(**ground, still_water=[gv.StillWater(left=5, right=-5, elevation=3.0)])


def _reach(section, roughness):
    return gv.Reach(segments=[gv.Segment(length=800.0, slope=0.0008, section=section, roughness=roughness),
                              gv.Segment(length=120.0, slope=0.03, section=section, roughness=roughness),
                              gv.Segment(length=300.0, slope=0.001, section=section, roughness=roughness)],
                    discharge=12.0, downstream=gv.FixedDepth(2.6))


def test_a_reach_of_points_solves_as_the_prismatic_reach():
    # the same channel (exact equivalence): the mixed-regime solve, jump included, through the same solver
    prismatic = _reach(gv.Trapezoidal(bottom_width=3.0, side_slope=1.5), 0.018).solve()
    points = _reach(gv.Surveyed(offset=[-15, 0, 3, 18], elevation=[10, 0, 0, 10], roughness=0.018), None).solve()
    np.testing.assert_allclose(points.depth, prismatic.depth, rtol=1e-9)
    assert points.profile_types == prismatic.profile_types == ["M2", "S2", "S1", "M1"]
    assert points.jumps[0].x == pytest.approx(prismatic.jumps[0].x, rel=1e-9)


def test_backwater_through_a_compound_section_against_quadrature():
    # M1 through a main channel with floodplains: the distance between two depths is the integral of
    # dx/dy = (1 - Fc²)/(S0 - Sf) with the compound Froude number (alpha varying with depth), by scipy quad
    from scipy.integrate import quad

    q, s0 = 60.0, 0.001
    reach = gv.Reach(segments=[gv.Segment(length=3000.0, slope=s0, section=COMPOUND)], discharge=q,
                     downstream=gv.FixedDepth(3.2))

    def dxdy(y):
        return (1 - gv.froude_number(COMPOUND, q, y) ** 2) / (s0 - gv.friction_slope(COMPOUND, q, y))

    ivp = reach.solve(method="ivp", n_steps=300)
    step = reach.solve(n_steps=300)
    assert ivp.profile_types == step.profile_types == ["M1"]
    for p, tol in ((ivp, 1e-6), (step, 2e-4)):  # the standard step's O(dx²) truncation at 10 m stations
        x = -quad(dxdy, 3.2, float(p.depth_at(1500.0)), epsabs=1e-10, epsrel=1e-12, limit=200)[0]
        assert x == pytest.approx(1500.0, rel=tol)
    np.testing.assert_allclose(step.depth, ivp.depth, atol=1e-4)


def test_roughness_belongs_to_a_surveyed_segment():
    with pytest.raises(gv.InvalidInputError, match="carries its own roughness"):
        gv.Segment(length=10.0, slope=0.001, section=COMPOUND, roughness=0.03)
    with pytest.raises(gv.InvalidInputError, match="roughness is required"):
        gv.Segment(length=10.0, slope=0.001, section=gv.Rectangular(width=2.0))
    reach = gv.Reach(segments=[gv.Segment(length=300.0, slope=0.001, section=COMPOUND)], discharge=40.0)
    assert gv.Reach.model_validate_json(reach.model_dump_json()) == reach


def test_profile_carries_alpha_compound_froude_and_zone_flows_per_station():
    # A compound channel running over its banks: per-station alpha from the zone velocities,
    # alpha = sum(V_i² Q_i) A² / Q³ (US FHWA, Highways in the River Environment, 1990, ch. 2: the
    # measured-velocity form; identity), continuity over the zones, and alpha V²/2g as the velocity head.
    reach = gv.Reach(segments=[gv.Segment(length=800.0, slope=5e-4, section=COMPOUND)], discharge=120.0,
                     downstream=gv.FixedDepth(2.6))
    p = reach.solve(n_steps=40)
    zt = p.zone_table()
    assert len(zt) == p.x.size * COMPOUND.zone_count
    for i in (0, 17, p.x.size - 1):
        z = zt[zt.x == p.x[i]]
        q, a = z.discharge.to_numpy(), z.area.to_numpy()
        assert q.sum() == pytest.approx(p.discharge[i], rel=1e-12)
        np.testing.assert_allclose(z.velocity.to_numpy(), q / a, rtol=1e-12)
        alpha = float(np.sum(z.velocity.to_numpy() ** 2 * q) * a.sum() ** 2 / p.discharge[i] ** 3)
        assert p.energy_coefficient[i] == pytest.approx(alpha, rel=1e-11)
        assert p.energy_coefficient[i] > 1.2  # floodplains flowing slowly beside the main channel
        assert p.velocity_head[i] == pytest.approx(alpha * p.velocity[i] ** 2 / (2 * 9.80665), rel=1e-11)
    assert "energy_coefficient" in p.table().dtype.names
    # a geometric section's alpha is the reach's
    rect = gv.Reach(segments=[gv.Segment(length=100.0, slope=1e-3, section=gv.Rectangular(width=3.0),
                                         roughness=0.015)], discharge=4.0, alpha=1.1)
    pr = rect.solve(n_steps=10)
    assert np.all(pr.energy_coefficient == 1.1)
    assert len(pr.zone_table()) == pr.x.size


def test_discharge_sweep_of_a_surveyed_reach_gives_each_scenario_as_alone():
    # two segments of different surveyed sections, mixed with a geometric one
    other = gv.Surveyed(offset=[-80, -80, 0, 0, 12, 12, 90, 90], elevation=[5, 2, 2, 0, 0, 2, 2, 5],
                        roughness=[0.05, 0.032, 0.05], zone_edges=[0, 12])
    reach = gv.Reach(segments=[gv.Segment(length=300.0, slope=5e-4, section=COMPOUND),
                               gv.Segment(length=300.0, slope=5e-4, section=other),
                               gv.Segment(length=100.0, slope=5e-4, section=gv.Rectangular(width=12.0),
                                          roughness=0.03)],
                     discharge=60.0, downstream=gv.FixedDepth(2.8))
    res = reach.sweep(discharge=[30.0, 60.0, 150.0], n_steps=20)
    for i, q in enumerate([30.0, 60.0, 150.0]):
        alone = reach.model_copy(update={"discharge": q}).solve(n_steps=20)
        np.testing.assert_array_equal(res[i].depth, alone.depth)
    # (scenario, segment, zone): each surveyed section's zone roughness, a geometric segment's in zone 0
    np.testing.assert_array_equal(res.roughness[1], [[0.05, 0.03, 0.05], [0.05, 0.032, 0.05], [0.03, np.nan, np.nan]])


def test_a_profile_between_two_critical_depths_is_flagged():
    # At 60 m³/s this compound section has two critical depths (specific energy has two minima, found
    # by gv.critical_depths and checked against the compound Froude number above). A profile standing
    # between them is noted as uncertain; one above both is not.
    q = 60.0
    lo, hi = gv.critical_depths(COMPOUND, q)
    for slope, flagged in ((0.002, False), (0.004, True)):
        reach = gv.Reach(segments=[gv.Segment(length=2000.0, slope=slope, section=COMPOUND)], discharge=q,
                         downstream=gv.FixedDepth(2.6))
        p = reach.solve(n_steps=100)
        notes = [c for c in p.controls if c.kind == "several critical depths"]
        between = (p.depth > lo) & (p.depth < hi)
        assert bool(notes) == flagged == bool(between.any())
        if flagged:
            assert f"{lo:.3f}" in notes[0].text and f"{hi:.3f}" in notes[0].text

"""Roughness sweeps and Monte Carlo of reaches with surveyed sections (a roughness per zone).

Each scenario of a sweep must be the reach solved alone with that scenario's zone roughness; the
normal depths of the sweep are checked against the divided-channel method worked by hand
(Chow, Open-Channel Hydraulics, 1959, §6-7: K = sum of the zone conveyances (1/n_i) A_i R_i^(2/3),
vertical division lines not counted as wetted perimeter) for a compound section of rectangles.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy.optimize import brentq

import gvflow as gv

# main channel 10 wide and 2 deep between floodplains 100 wide, vertical walls throughout
COMPOUND = gv.Surveyed(offset=[-100, -100, 0, 0, 10, 10, 110, 110], elevation=[5, 2, 2, 0, 0, 2, 2, 5],
                       roughness=[0.05, 0.03, 0.05], zone_edges=[0, 10])
OTHER = gv.Surveyed(offset=[-80, -80, 0, 0, 12, 12, 90, 90], elevation=[5, 2, 2, 0, 0, 2, 2, 5],
                    roughness=[0.06, 0.032, 0.045], zone_edges=[0, 12])
CHEZY = gv.Surveyed(offset=[-60, -60, 0, 0, 12, 12, 60, 60], elevation=[5, 2, 2, 0, 0, 2, 2, 5],
                    roughness=[gv.Chezy(25.0), gv.Chezy(40.0), gv.Chezy(25.0)], zone_edges=[0, 12])
SLOPE = 5e-4


def mixed_reach(downstream=2.8):
    """Two different surveyed sections, a Chezy-zoned one and a geometric segment between them."""
    return gv.Reach(segments=[gv.Segment(length=300.0, slope=SLOPE, section=COMPOUND),
                              gv.Segment(length=200.0, slope=SLOPE, section=gv.Rectangular(width=12.0),
                                         roughness=0.03),
                              gv.Segment(length=300.0, slope=SLOPE, section=OTHER),
                              gv.Segment(length=200.0, slope=SLOPE, section=CHEZY)],
                    discharge=60.0, downstream=gv.FixedDepth(downstream))


def assert_each_scenario_alone(res, n_steps, reaches=None):
    for i in range(len(res)):
        alone = (res.scenario_reach(i) if reaches is None else reaches[i]).solve(n_steps=n_steps)
        np.testing.assert_allclose(res[i].depth, alone.depth, rtol=0, atol=1e-12)
        np.testing.assert_allclose(res.depth[i], alone.depth if res[i].x.size == res.x.size else res.depth[i],
                                   rtol=0, atol=1e-12)
        assert res[i].profile_types == alone.profile_types


def compound_normal_depth(q, n_left, n_main, n_right, slope=SLOPE):
    """Normal depth of COMPOUND above its banks by the divided-channel method, worked by hand."""
    def conveyance(y):
        h = y - 2.0
        k = 0.0
        for n, a, p in ((n_left, 100 * h, 100 + h), (n_main, 10 * y, 14.0), (n_right, 100 * h, 100 + h)):
            k += a * (a / p) ** (2 / 3) / n
        return k

    return brentq(lambda y: conveyance(y) * np.sqrt(slope) - q, 2.0 + 1e-9, 20.0, xtol=1e-14, rtol=1e-15)


def test_roughness_scale_scales_every_zone_and_each_scenario_is_the_reach_alone():
    reach = mixed_reach()
    f = np.array([0.8, 1.0, 1.35])
    res = reach.sweep(roughness_scale=f, n_steps=20)
    assert res.roughness.shape == (3, 4, 3)
    np.testing.assert_array_equal(res.roughness[:, 0], np.outer(f, [0.05, 0.03, 0.05]))
    np.testing.assert_array_equal(res.roughness[:, 1, 0], 0.03 * f)
    assert np.all(np.isnan(res.roughness[:, 1, 1:]))
    np.testing.assert_array_equal(res.roughness[:, 3], np.outer(1 / f, [25.0, 40.0, 25.0]))  # Chezy C/f
    # the scenarios against reaches built by hand, not through scenario_reach
    by_hand = []
    for fi in f:
        secs = [gv.Surveyed(offset=s.offset, elevation=s.elevation, zone_edges=s.zone_edges,
                            roughness=[r.scaled(fi) for r in s.roughness]) for s in (COMPOUND, OTHER, CHEZY)]
        by_hand.append(gv.Reach(segments=[
            gv.Segment(length=300.0, slope=SLOPE, section=secs[0]),
            gv.Segment(length=200.0, slope=SLOPE, section=gv.Rectangular(width=12.0), roughness=0.03 * fi),
            gv.Segment(length=300.0, slope=SLOPE, section=secs[1]),
            gv.Segment(length=200.0, slope=SLOPE, section=secs[2])], discharge=60.0,
            downstream=gv.FixedDepth(2.8)))
    assert_each_scenario_alone(res, 20, by_hand)
    assert_each_scenario_alone(res, 20)
    # rougher everywhere: higher water at the upstream end
    assert res.depth[0, 0] < res.depth[1, 0] < res.depth[2, 0]


def chezy_normal_depth(q, c_left, c_main, c_right, slope=SLOPE):
    """Normal depth of CHEZY above its banks by the divided-channel method, worked by hand: K_i = C_i A_i
    R_i^(1/2) (Chow 1959, §6-2 and §6-7), floodplains 60 and 48 wide, main channel 12 wide and 2 deep."""
    def conveyance(y):
        h = y - 2.0
        return sum(c * a * np.sqrt(a / p) for c, a, p in ((c_left, 60 * h, 60 + h), (c_main, 12 * y, 16.0),
                                                          (c_right, 48 * h, 48 + h)))

    return brentq(lambda y: conveyance(y) * np.sqrt(slope) - q, 2.0 + 1e-9, 20.0, xtol=1e-14, rtol=1e-15)


@pytest.mark.filterwarnings("ignore:.*critical depths at discharge")  # OTHER near bankfull: two, as it should
@pytest.mark.parametrize("swept", ["roughness_scale", "discharge"])
def test_constants_of_scenarios_a_factor_apart_follow_each_ones_own_equations(swept):
    # the batch finds the normal depth of each scenario whose zone roughness is the one before times a factor
    # from that scenario's root, and gives it the same critical depth (the compound Froude number does not
    # change when every zone conveyance scales alike): each must still be its own scenario's, by the
    # divided-channel method worked by hand, and the critical depth the section's at that discharge alone
    reach = mixed_reach()
    f = np.linspace(0.7, 1.4, 41)
    q = 60.0 * f if swept == "discharge" else np.full(f.size, 60.0)
    res = reach.sweep(roughness_scale=f, n_steps=5) if swept == "roughness_scale" else \
        reach.sweep(discharge=q, n_steps=5)
    g = f if swept == "roughness_scale" else np.ones(f.size)
    for i in range(f.size):
        assert res.normal_depths[i, 0] == pytest.approx(compound_normal_depth(q[i], 0.05 * g[i], 0.03 * g[i],
                                                                              0.05 * g[i]), rel=1e-12)
        assert res.normal_depths[i, 3] == pytest.approx(chezy_normal_depth(q[i], 25.0 / g[i], 40.0 / g[i],
                                                                           25.0 / g[i]), rel=1e-12)
    for k, sec in ((0, COMPOUND), (2, OTHER), (3, CHEZY)):
        for i in range(f.size):
            assert res.critical_depths[i, k] == pytest.approx(
                branch_critical_depth(sec, q[i], res.normal_depths[i, k]), rel=1e-12)


def branch_critical_depth(section, q, yn):
    """The section's critical depth at discharge q on the branch of its normal depth yn: with several, the
    highest one below a subcritical yn (compound Froude number at most 1) or the lowest one above a
    supercritical yn; with one, that one."""
    depths = gv.critical_depths(section, q)
    if depths.size == 1:
        return depths[0]
    return depths[depths <= yn].max() if gv.froude_number(section, q, yn) <= 1 else depths[depths > yn].min()


def test_roughness_scale_per_segment():
    reach = mixed_reach()
    f = np.array([[1.0, 1.0, 1.0, 1.0], [1.2, 0.9, 1.0, 1.1]])
    res = reach.sweep(roughness_scale=f, n_steps=20)
    np.testing.assert_array_equal(res.roughness[1, 0], [0.06, 0.036, 0.06])
    np.testing.assert_array_equal(res.roughness[1, 2], [0.06, 0.032, 0.045])
    assert res.roughness[1, 1, 0] == 0.03 * 0.9
    assert_each_scenario_alone(res, 20)
    with pytest.raises(gv.InvalidInputError, match=r"roughness_scale must be .*\(n, 4\)"):
        reach.sweep(roughness_scale=np.ones((2, 3)))


def test_zone_roughness_by_name_gives_each_scenario_its_zones_and_normal_depth():
    # floodplain and main-channel roughness vary independently: alpha differs between scenarios, which
    # the energy balance across the junctions between different sections must take per scenario
    reach = mixed_reach()
    left = np.array([0.035, 0.05, 0.08, 0.05])
    main = np.array([0.03, 0.025, 0.03, 0.04])
    res = reach.sweep(discharge=[60.0, 60.0, 60.0, 150.0], vary={
        "segments.0.roughness.0": left, "segments.0.roughness.1": main,
        "segments.1.roughness": [0.02, 0.03, 0.04, 0.03],
        "segments.2.roughness.2": [0.03, 0.04, 0.05, 0.06]}, n_steps=20)
    np.testing.assert_array_equal(res.roughness[:, 0, 0], left)
    np.testing.assert_array_equal(res.roughness[:, 0, 1], main)
    np.testing.assert_array_equal(res.roughness[:, 0, 2], 0.05)  # not named: the section's own
    np.testing.assert_array_equal(res.roughness[:, 1, 0], [0.02, 0.03, 0.04, 0.03])
    np.testing.assert_array_equal(res.roughness[:, 2, :2], [[0.06, 0.032]] * 4)
    assert res.scenario_reach(2).segments[0].section.roughness == [gv.Manning(0.08), gv.Manning(0.03),
                                                                    gv.Manning(0.05)]
    assert_each_scenario_alone(res, 20)
    for i in range(len(res)):
        yn = compound_normal_depth(res.discharge[i], left[i], main[i], 0.05)
        assert res.normal_depths[i, 0] == pytest.approx(yn, rel=1e-10)
    assert "segments.0.roughness.1" in res.varied
    ds = pytest.importorskip("xarray") and res.to_xarray()
    assert ds["roughness"].dims == ("scenario", "segment_index", "zone")


def test_zone_roughness_is_refused_where_ambiguous_or_implausible():
    reach = mixed_reach()
    with pytest.raises(gv.InvalidInputError, match=r"segment 0 is a Surveyed section.*segments.0.roughness.0"):
        reach.sweep(roughness=[0.03, 0.04])
    with pytest.raises(gv.InvalidInputError, match="not both"):
        reach.sweep(roughness_scale=[1.0, 1.1], vary={"segments.0.roughness.0": [0.05, 0.06]})
    with pytest.raises(gv.InvalidInputError, match=r"'segments.0.roughness.3'.*segments.0.roughness.2"):
        reach.sweep(vary={"segments.0.roughness.3": [0.05, 0.06]})
    with pytest.raises(gv.InvalidInputError, match="positive"):
        reach.sweep(vary={"segments.0.roughness.1": [0.03, -0.01]})
    with pytest.raises(gv.InvalidInputError, match="Manning's n of segment 0"):
        reach.sweep(vary={"segments.0.roughness.1": [0.03, 1e-9]})
    with pytest.raises(gv.InvalidInputError, match="segment 0 is a Surveyed section"):
        gv.monte_carlo(reach, 10, roughness=gv.Uncertain(0.03, 0.04, 0.05))
    with pytest.raises(gv.InvalidInputError, match=r"roughness\[2\].*None"):
        gv.monte_carlo(reach, 10, roughness=[None, None, gv.Uncertain(0.03, 0.04, 0.05), None])


def test_monte_carlo_samples_each_zone_and_each_sample_is_the_reach_alone():
    reach = mixed_reach()
    ranges = {"segments.0.roughness.0": gv.Uncertain(0.04, 0.05, 0.08),
              "segments.0.roughness.2": gv.Uncertain(0.04, 0.05, 0.08),
              "segments.2.roughness.1": gv.Uncertain(0.028, 0.032, 0.036),
              "segments.3.roughness.1": gv.Uncertain(35.0, 40.0, 45.0)}
    mc = gv.monte_carlo(reach, 40, roughness=[None, gv.Uncertain(0.025, 0.03, 0.035), None, None], vary=ranges,
                        seed=3, n_steps=20)
    assert mc.roughness.shape == (40, 4, 3)
    for name, spec in ranges.items():
        _, k, _, z = name.split(".")
        drawn = mc.roughness[:, int(k), int(z)]
        assert np.all((drawn >= spec.minimum) & (drawn <= spec.maximum)) and np.unique(drawn).size == 40
        np.testing.assert_array_equal(drawn, mc.varied[name])
    n1 = mc.roughness[:, 1, 0]
    assert np.all((n1 >= 0.025) & (n1 <= 0.035)) and np.unique(n1).size == 40
    np.testing.assert_array_equal(mc.roughness[:, 0, 1], 0.03)  # not sampled
    for i in (0, 17, 39):
        alone = mc.sweep.scenario_reach(i).solve(n_steps=20)
        np.testing.assert_allclose(mc.sweep[i].depth, alone.depth, rtol=0, atol=1e-12)
    again = gv.monte_carlo(reach, 40, roughness=[None, gv.Uncertain(0.025, 0.03, 0.035), None, None], vary=ranges,
                           seed=3, n_steps=20)
    np.testing.assert_array_equal(again.roughness, mc.roughness)
    # the sampled roughness spreads the levels above the control
    assert np.all(mc.stage_envelope[0, :-1] < mc.stage_envelope[-1, :-1])

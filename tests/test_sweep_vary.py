"""Sweeps and Monte Carlo over control levels, structure numbers and bed slopes (``vary``).

The central promise is checked directly: scenario i of a sweep is the same profile as solving
that scenario's reach alone (to 1e-12), for a varied tailwater, upstream control, structure
number and bed slope; the answers at any point (``depth_at``, ``stage_at``) agree with each
scenario's own ``Profile.depth_at`` / ``stage_at``. Outside references: the weir head from
Rehbock's relation Q = (0.611 + 0.08 h/P) (2/3) sqrt(2g) b h^1.5 (Henderson 1966, *Open Channel
Flow*, ch. 6; from memory, as in test_structures_weirs.py) solved by brentq here; percentiles
against ``numpy.percentile`` on the samples; exceedance probabilities against a count over the
samples, each solved alone.
"""

import math

import numpy as np
import pytest
from scipy.optimize import brentq

import gvflow as gv
from gvflow.batch import vary_choices
from gvflow.structures import BoxBarrel

G = 9.80665
B = 4.0
RECT = gv.Rectangular(width=B)


def seg(length, slope, n=0.014, **kw):
    return gv.Segment(length=length, slope=slope, section=RECT, roughness=n, **kw)


# steep chute between a mild approach and a mild stilling reach: M2, S2, M3, a jump, M1
CHUTE = [seg(100.0, 0.001), seg(60.0, 0.05), seg(200.0, 0.0008)]


def chute(downstream=None, q=10.0):
    return gv.Reach(segments=CHUTE, discharge=q, downstream=downstream or gv.FixedStage(1.5))


def assert_same_profile(a, b, tol=1e-12):
    """Two Profiles agree station by station, with the same jumps, types and control notes."""
    assert a.x.shape == b.x.shape
    for name in ("x", "depth", "stage", "velocity", "froude", "specific_energy", "friction_slope"):
        np.testing.assert_allclose(getattr(a, name), getattr(b, name), rtol=tol, atol=tol, err_msg=name)
    assert a.regime.tolist() == b.regime.tolist()
    assert a.profile_types == b.profile_types
    assert len(a.jumps) == len(b.jumps)
    for ja, jb in zip(a.jumps, b.jumps, strict=True):
        for f in ("x", "upstream_depth", "downstream_depth", "froude", "energy_loss"):
            assert getattr(ja, f) == pytest.approx(getattr(jb, f), rel=tol, abs=tol), f
    assert [(c.kind, c.x, c.text) for c in a.controls] == [(c.kind, c.x, c.text) for c in b.controls]


def assert_each_alone(result, **solve):
    for i in range(len(result)):
        alone = result.scenario_reach(i).solve(**solve)
        assert_same_profile(result[i], alone)


# --------------------------------------------------------------------------------------------
# scenario i equals solving it alone
# --------------------------------------------------------------------------------------------

CASES = {
    # a tailwater level: jump in the stilling reach moves, is drowned or swept out
    "tailwater_stage": (chute(), dict(vary={"downstream": [1.0, 1.3, 1.5, 1.8, 2.6]})),
    "tailwater_depth_with_discharge": (chute(gv.FixedDepth(1.5)),
                                       dict(discharge=[8.0, 10.0, 12.0, 10.0],
                                            vary={"downstream.depth": [1.4, 1.5, 1.5, 2.0]})),
    # upstream controls: a gate's opening, a pool's level above a steep channel
    "upstream_gate_opening": (gv.Reach(segments=[seg(150.0, 0.001)], discharge=5.0,
                                       upstream=gv.SluiceGate(opening=0.3), downstream=gv.FixedDepth(1.2)),
                              dict(vary={"upstream": [0.2, 0.25, 0.3, 0.35]})),
    "upstream_pool_level": (gv.Reach(segments=[seg(200.0, 0.02), seg(200.0, 0.0008)], discharge=6.0,
                                     upstream=gv.Pool(level=200 * 0.02 + 200 * 0.0008 + 2.0),
                                     downstream=gv.FixedDepth(1.4)),
                            dict(vary={"upstream.level": [5.9, 6.2, 6.6]})),
    # structures: a weir's crest and tailwater, a culvert's tailwater and barrel, a gate between segments
    "weir_crest": (gv.Reach(segments=[seg(1500.0, 0.001)], discharge=5.0, downstream=gv.Weir(crest_height=1.5)),
                   dict(discharge=[4.0, 5.0, 6.0, 5.0], vary={"downstream.crest_height": [1.2, 1.5, 1.5, 2.0]})),
    "weir_tailwater": (gv.Reach(segments=[seg(1500.0, 0.001)], discharge=5.0,
                                downstream=gv.Weir(crest_height=1.5, tailwater_level=1.0)),
                       dict(vary={"downstream.tailwater_level": [1.0, 1.7, 1.85, 1.95]})),
    "culvert_tailwater_and_span": (gv.Reach(segments=[seg(800.0, 0.001)], discharge=6.0,
                                            downstream=gv.Culvert(barrel=BoxBarrel(span=2.0, rise=1.5, length=30.0,
                                                                                   slope=0.005, roughness=0.013),
                                                                  tailwater=0.8)),
                                   dict(vary={"downstream.tailwater": [0.5, 0.8, 1.2, 1.6],
                                              "downstream.barrel.span": [2.0, 2.0, 2.5, 1.8]})),
    "gate_between_segments": (gv.Reach(segments=[seg(300.0, 0.001), seg(300.0, 0.001,
                                                                        gate=gv.SluiceGate(opening=0.3))],
                                       discharge=5.0, downstream=gv.FixedDepth(0.9)),
                              dict(vary={"segments.1.gate.opening": [0.25, 0.3, 0.4],
                                         "downstream": [0.9, 1.6, 1.2]})),
    # slopes: scenarios in groups of equal slopes, with a varied tailwater and discharge inside a group
    "chute_slope": (chute(), dict(discharge=[8.0, 10.0, 12.0, 10.0, 9.0],
                                  vary={"segments.1.slope": [0.04, 0.05, 0.04, 0.07, 0.05],
                                        "downstream": [1.5, 1.5, 1.7, 1.4, 1.8]})),
    "mild_slope_with_roughness": (gv.Reach(segments=[seg(400.0, 0.001), seg(400.0, 0.0005)], discharge=5.0,
                                           downstream=gv.FixedStage(1.6)),
                                  dict(roughness_scale=[0.8, 1.0, 1.2],
                                       vary={"segments.0.slope": [0.0005, 0.002, 0.0005],
                                             "segments.1.slope": [0.0002, 0.0002, 0.0008]})),
}


@pytest.mark.parametrize("name", sorted(CASES))
def test_scenario_equals_solving_it_alone(name):
    reach, kw = CASES[name]
    result = reach.sweep(n_steps=60, **kw)
    assert_each_alone(result, n_steps=60)
    n = len(result)
    for key, values in kw.get("vary", {}).items():
        np.testing.assert_array_equal(result.varied[key], values)
    assert result.depth.shape == (n, result.x.size)


def test_a_rising_tailwater_pushes_the_jump_upstream_onto_the_chute():
    levels = [1.0, 1.3, 1.5, 1.8, 2.6]
    result = chute().sweep(vary={"downstream": levels}, n_steps=60)
    np.testing.assert_allclose(result.stage[:, -1], levels, rtol=1e-14)
    assert np.all(np.diff(result.first_jump_x) < 0)
    # below normal depth the stilling reach draws down (M2), above it backs up (M1); a high tailwater
    # drowns the toe and the jump climbs onto the chute (S1)
    assert [t[-1] for t in result.profile_types] == ["M2", "M2", "M1", "M1", "M1"]
    assert result.profile_types[0][2] == "M3" and result.profile_types[-1][2] == "S1"
    assert result.jumps[-1][0].segment == 1


def test_weir_crest_sweep_against_rehbock():
    """Depth at the weir = P + h, h from Rehbock's relation solved here (Henderson 1966, ch. 6; from memory)."""
    reach, kw = CASES["weir_crest"]
    result = reach.sweep(n_steps=40, **kw)
    for q, p, y in zip(kw["discharge"], kw["vary"]["downstream.crest_height"], result.depth[:, -1], strict=True):
        h = brentq(lambda h, p=p, q=q: (0.611 + 0.08 * h / p) * 2 / 3 * math.sqrt(2 * G) * B * h ** 1.5 - q,
                   1e-6, 10.0, xtol=1e-14)
        assert y == pytest.approx(p + h, rel=1e-10)


def test_blocks_and_groups_do_not_change_the_results():
    reach, kw = CASES["chute_slope"]
    whole = reach.sweep(n_steps=40, **kw)
    blocks = reach.sweep(n_steps=40, chunk_size=1, **kw)
    np.testing.assert_array_equal(whole.depth, blocks.depth)
    np.testing.assert_array_equal(whole.jump_x, blocks.jump_x)
    assert whole.profile_types == blocks.profile_types


def test_varied_slopes_give_each_scenario_its_own_bed():
    reach, kw = CASES["chute_slope"]
    result = reach.sweep(n_steps=40, **kw)
    n, m = result.depth.shape
    assert result.bed.shape == (n, m)
    for i in range(n):
        np.testing.assert_allclose(result.bed[i], result[i].reach.bed_elevation(result.x, result.segment),
                                   rtol=1e-14, atol=1e-12)
    np.testing.assert_allclose(result.stage, result.bed + result.depth, rtol=1e-14)
    # the jump list is ordered by scenario, then x, across the groups
    assert np.all(np.diff(result.jump_scenario) >= 0)
    assert [len(j) for j in result.jumps] == result.jump_count.tolist()
    # a shared bed stays one row
    same = reach.sweep(n_steps=40, vary={"segments.1.slope": [0.05, 0.05]})
    assert same.bed.shape == (m,)


# --------------------------------------------------------------------------------------------
# answers at any point
# --------------------------------------------------------------------------------------------


@pytest.mark.parametrize("name", ["tailwater_stage", "chute_slope", "gate_between_segments", "weir_crest"])
def test_depth_and_stage_at_any_x_match_each_profile(name):
    reach, kw = CASES[name]
    result = reach.sweep(n_steps=40, **kw)
    length = reach.length
    base = np.concatenate([np.linspace(0.0, length, 53), reach.boundaries, result.x[::7]])
    for i in range(len(result)):
        p = result[i]
        # at and around the jumps too
        xs = np.concatenate([base, *[[j.x, j.x - 1e-3, j.x + 1e-3] for j in p.jumps]])
        xs = np.clip(xs, 0.0, length)
        np.testing.assert_allclose(result.depth_at(xs)[i], p.depth_at(xs), rtol=1e-12, atol=1e-12)
        np.testing.assert_allclose(result.stage_at(xs)[i], p.stage_at(xs), rtol=1e-12, atol=1e-12)
        assert result.depth_at(float(xs[5]))[i] == pytest.approx(float(p.depth_at(xs[5])), rel=1e-12)
    assert result.depth_at(10.0).shape == (len(result),)
    assert result.stage_at([1.0, 2.0, 3.0]).shape == (len(result), 3)


def test_points_outside_the_reach_are_refused():
    result = chute().sweep(vary={"downstream": [1.4, 1.6]}, n_steps=20)
    with pytest.raises(gv.InvalidInputError, match="within the reach"):
        result.depth_at(400.0)
    with pytest.raises(gv.InvalidInputError, match="1-D"):
        result.stage_at([[1.0, 2.0]])
    with pytest.raises(gv.InvalidInputError, match="x"):
        result.stage_at(float("nan"))


# --------------------------------------------------------------------------------------------
# Monte Carlo
# --------------------------------------------------------------------------------------------


@pytest.fixture(scope="module")
def mc():
    return gv.monte_carlo(chute(), 80, roughness=gv.Uncertain(0.012, 0.014, 0.017),
                          vary={"downstream": gv.Uncertain(1.2, 1.5, 2.0)}, seed=7, n_steps=40)


def test_monte_carlo_samples_the_tailwater(mc):
    tw = mc.varied["downstream"]
    assert tw.shape == (80,) and tw.min() >= 1.2 and tw.max() <= 2.0
    np.testing.assert_allclose(mc.sweep.stage[:, -1], tw, rtol=1e-14)
    # the roughness draws of a seed stay the same when an input is added to vary (drawn after them)
    plain = gv.monte_carlo(chute(), 80, roughness=gv.Uncertain(0.012, 0.014, 0.017), seed=7, n_steps=40)
    np.testing.assert_array_equal(plain.roughness, mc.roughness)
    again = gv.monte_carlo(chute(), 80, roughness=gv.Uncertain(0.012, 0.014, 0.017),
                           vary={"downstream": gv.Uncertain(1.2, 1.5, 2.0)}, seed=7, n_steps=40)
    np.testing.assert_array_equal(again.depth_envelope, mc.depth_envelope)


def test_monte_carlo_sample_equals_solving_it_alone(mc):
    for i in (0, 17, 79):
        assert_same_profile(mc.sweep[i], mc.sweep.scenario_reach(i).solve(n_steps=40))


def test_percentiles_at_x_against_numpy(mc):
    xs = np.array([50.0, 200.0, 330.0])
    depth = mc.depth_at(xs)
    np.testing.assert_array_equal(mc.percentiles_at(xs, "depth"), np.percentile(depth, mc.percentiles, axis=0))
    np.testing.assert_array_equal(mc.percentiles_at(200.0, "stage", [10, 90]),
                                  np.percentile(mc.stage_at(200.0), [10, 90]))
    assert mc.percentiles_at(xs).shape == (3, 3)
    with pytest.raises(gv.InvalidInputError, match="quantity"):
        mc.percentiles_at(10.0, "velocity")


def test_exceedance_against_a_count_over_the_samples(mc):
    xs = [200.0, 330.0]
    # the level of each sample, each solved on its own
    stages = np.array([[float(mc.sweep.scenario_reach(i).solve(n_steps=40).stage_at(x)) for x in xs]
                       for i in range(mc.samples)])
    levels = np.percentile(stages[:, 1], [0, 10, 50, 90]) + [-0.01, 0.0, 0.0, 0.0]
    table = mc.exceedance(xs, levels)
    assert table.shape == (4, 2) and list(table.columns) == xs and table.index.name == "level"
    for j, x in enumerate(xs):
        for level in levels:
            count = sum(1 for s in stages[:, j] if s > level)
            assert table.loc[level, x] == count / mc.samples
    assert table[330.0].iloc[0] == 1.0  # below every sample
    depth_table = mc.exceedance(330.0, 1.5, quantity="depth")
    assert depth_table.iloc[0, 0] == np.mean(mc.depth_at(330.0) > 1.5)


def test_monte_carlo_over_a_slope_and_a_gate_opening():
    reach = gv.Reach(segments=[seg(150.0, 0.001)], discharge=5.0, upstream=gv.SluiceGate(opening=0.3),
                     downstream=gv.FixedDepth(1.2))
    out = gv.monte_carlo(reach, 12, vary={"upstream": gv.Uncertain(0.22, 0.28, 0.34, "uniform"),
                                          "segments.0.slope": gv.Uncertain(0.0005, 0.001, 0.002)},
                         seed=3, n_steps=30)
    assert out.bed.shape == out.sweep.depth.shape
    assert np.all(out.sweep.depth[:, 0] == pytest.approx(0.61 * out.varied["upstream"], rel=1e-12))
    for i in (0, 11):
        assert_same_profile(out.sweep[i], out.sweep.scenario_reach(i).solve(n_steps=30))


# --------------------------------------------------------------------------------------------
# names and bad input
# --------------------------------------------------------------------------------------------


def test_the_names_a_reach_accepts():
    culvert = CASES["culvert_tailwater_and_span"][0]
    names = vary_choices(culvert)
    assert {"downstream.tailwater", "downstream.barrel.span", "downstream.invert_offset",
            "segments.0.slope"} <= set(names)
    assert "downstream" not in names  # a culvert has no single main value
    gated = CASES["gate_between_segments"][0]
    assert {"segments.1.gate", "segments.1.gate.opening", "downstream", "downstream.depth"} <= set(vary_choices(gated))


def test_bad_vary_input_is_refused_with_the_choices():
    reach = chute()
    with pytest.raises(gv.InvalidInputError, match=r"unknown parameter 'tailwater'.*valid choices are: downstream, "
                                                   r"downstream.elevation, segments.0.slope"):
        reach.sweep(vary={"tailwater": [1.0, 2.0]})
    with pytest.raises(gv.InvalidInputError, match="by its own keyword"):
        reach.sweep(vary={"discharge": [1.0, 2.0]})
    with pytest.raises(gv.InvalidInputError, match="name the same parameter"):
        reach.sweep(vary={"downstream": [1.0, 2.0], "downstream.elevation": [1.0, 2.0]})
    with pytest.raises(gv.InvalidInputError, match="same length"):
        reach.sweep(discharge=[8.0, 9.0, 10.0], vary={"downstream": [1.0, 2.0]})
    with pytest.raises(gv.InvalidInputError, match="dict"):
        reach.sweep(vary=[1.0, 2.0])
    with pytest.raises(gv.InvalidInputError, match=r"segments.1.slope.*scenario 1"):
        reach.sweep(vary={"segments.1.slope": [0.05, 1.5]})
    with pytest.raises(gv.InvalidInputError, match=r"scenario 2.*depth.*more than any channel holds"):
        chute(gv.FixedDepth(1.5)).sweep(vary={"downstream": [1.5, 1.6, 1e6]})
    with pytest.raises(gv.InvalidInputError, match="finite"):
        reach.sweep(vary={"downstream": [1.0, float("nan")]})
    with pytest.raises(gv.InvalidInputError, match="Uncertain"):
        gv.monte_carlo(reach, 10, vary={"downstream": [1.0, 2.0]})
    with pytest.raises(gv.InvalidInputError, match="valid choices"):
        gv.monte_carlo(reach, 10, vary={"upstream": gv.Uncertain(1.0, 1.2, 1.4)})


def test_a_value_the_control_refuses_names_the_scenario():
    reach = CASES["weir_crest"][0]
    with pytest.raises(gv.InvalidInputError, match=r"crest_height = -1 \(scenario 1\)"):
        reach.sweep(vary={"downstream.crest_height": [1.0, -1.0]})


def test_to_xarray_carries_the_varied_inputs():
    pytest.importorskip("xarray")
    reach, kw = CASES["chute_slope"]
    ds = reach.sweep(n_steps=20, **kw).to_xarray()
    np.testing.assert_array_equal(ds["downstream"].values, kw["vary"]["downstream"])
    assert ds["bed"].dims == ("scenario", "station")

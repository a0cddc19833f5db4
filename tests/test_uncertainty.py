"""Monte Carlo over roughness and discharge: sampling, envelopes, jump distribution, plot.

Sampling is checked against scipy.stats (a general-purpose reference
library: ``triang.ppf``) and the closed-form moments of the triangular
distribution (Kotz & van Dorp 2004, *Beyond Beta*, ch. 1: mean (a+b+c)/3,
variance (a²+b²+c²-ab-ac-bc)/18). Envelopes are checked against Manning's
normal depth of a rectangle (Chow 1959, *Open-Channel Hydraulics*, eq. 5-6)
written out here: in uniform flow depth rises monotonically with n, so the
depth percentiles are the normal depths at the roughness percentiles.
"""

import math

import matplotlib
import numpy as np
import pytest
from scipy import stats
from scipy.optimize import brentq

import gvflow as gv
from gvflow.uncertainty import triangular_quantile

matplotlib.use("Agg")

B = 4.0
RECT = gv.Rectangular(width=B)


def seg(length, slope, n=0.014):
    return gv.Segment(length=length, slope=slope, section=RECT, roughness=n)


CHUTE = gv.Reach(segments=[seg(100.0, 0.001), seg(60.0, 0.05), seg(200.0, 0.0008)], discharge=10.0,
                 downstream=gv.FixedDepth(1.5))


def yn_rect(q, s0, n, b=B):
    return brentq(lambda y: b * y * (b * y / (b + 2 * y)) ** (2 / 3) * math.sqrt(s0) / n - q, 1e-6, 100.0)


# -- sampling -------------------------------------------------------------------------------------


@pytest.mark.parametrize("a, c, b", [(0.011, 0.013, 0.016), (1.0, 1.0, 3.0), (2.0, 5.0, 5.0), (-1.0, 0.2, 4.0)])
def test_triangular_quantile_matches_scipy(a, c, b):
    u = np.linspace(0.0, 1.0, 101)
    ref = stats.triang.ppf(u, (c - a) / (b - a), loc=a, scale=b - a)
    np.testing.assert_allclose(triangular_quantile(u, a, c, b), ref, rtol=1e-12, atol=1e-15)


def test_triangular_sample_moments_match_closed_form():
    a, c, b = 0.011, 0.013, 0.016
    x = gv.Uncertain(a, c, b).sample(200_000, np.random.default_rng(7))
    mean = (a + b + c) / 3
    var = (a * a + b * b + c * c - a * b - a * c - b * c) / 18
    assert x.min() >= a and x.max() <= b
    assert x.mean() == pytest.approx(mean, abs=4 * math.sqrt(var / x.size))
    assert x.var() == pytest.approx(var, rel=0.02)
    assert gv.Uncertain(a, c, b).mean == pytest.approx(mean, rel=1e-15)


def test_uniform_range():
    r = gv.Uncertain(2.0, 3.0, 6.0, distribution="uniform")
    np.testing.assert_allclose(r.quantile([0.0, 0.25, 1.0]), [2.0, 3.0, 6.0])
    assert r.mean == 4.0
    x = r.sample(100_000, 3)
    assert x.mean() == pytest.approx(4.0, abs=0.02) and x.var() == pytest.approx(16 / 12, rel=0.02)


def test_zero_width_range_is_a_constant():
    assert gv.Uncertain(0.013, 0.013, 0.013).quantile(0.3) == 0.013


@pytest.mark.parametrize("args, match", [
    ((0.02, 0.013, 0.016), "minimum <= normal <= maximum"),
    ((0.011, 0.013, np.nan), "maximum must be finite"),
    ((0.011, 0.013, 0.016, "normal"), "distribution must be one of"),
])
def test_bad_range_is_named(args, match):
    with pytest.raises(gv.InvalidInputError, match=match):
        gv.Uncertain(*args)


def test_quantile_rejects_probability_outside_unit_interval():
    with pytest.raises(gv.InvalidInputError, match=r"\[0, 1\]"):
        gv.Uncertain(1.0, 2.0, 3.0).quantile(1.5)


# -- Monte Carlo ---------------------------------------------------------------------------------


def test_envelope_of_uniform_flow_is_normal_depth_at_the_roughness_percentiles():
    # 101 samples: percentiles 5, 50, 95 fall exactly on order statistics 5, 50, 95
    s0 = 0.0015
    reach = gv.Reach(segments=[gv.Segment(length=400.0, slope=s0, section=RECT, roughness=0.015)], discharge=6.0,
                     downstream=gv.UniformFlow())
    mc = gv.monte_carlo(reach, 101, roughness=gv.Uncertain(0.012, 0.015, 0.020), seed=11, n_steps=20)
    n_sorted = np.sort(mc.roughness[:, 0])
    for row, k in zip(mc.depth_envelope, (5, 50, 95), strict=True):
        np.testing.assert_allclose(row, yn_rect(6.0, s0, n_sorted[k]), rtol=1e-8)
    np.testing.assert_allclose(mc.stage_envelope, mc.depth_envelope + mc.bed, rtol=1e-13)
    assert mc.jump_probability == 0.0 and np.all(np.isnan(mc.jump_x_percentiles))
    counts, edges = mc.jump_histogram()
    assert counts.size == 0


def test_discharge_uncertainty_envelope_against_closed_form():
    s0 = 0.001
    reach = gv.Reach(segments=[seg(300.0, s0, n=0.016)], discharge=5.0, downstream=gv.UniformFlow())
    mc = gv.monte_carlo(reach, 101, discharge=gv.Uncertain(3.0, 5.0, 9.0, "uniform"), seed=2, n_steps=20,
                        percentiles=[0, 50, 100])
    q_sorted = np.sort(mc.discharge)
    assert q_sorted[0] >= 3.0 and q_sorted[-1] <= 9.0
    for row, k in zip(mc.depth_envelope, (0, 50, 100), strict=True):
        np.testing.assert_allclose(row, yn_rect(q_sorted[k], s0, 0.016), rtol=1e-8)


def test_monte_carlo_is_reproducible_and_seeded():
    kw = dict(roughness=gv.Uncertain(0.012, 0.014, 0.017), discharge=gv.Uncertain(9.0, 10.0, 11.0), n_steps=30)
    a = gv.monte_carlo(CHUTE, 40, seed=5, **kw)
    b = gv.monte_carlo(CHUTE, 40, seed=np.random.default_rng(5), **kw)
    c = gv.monte_carlo(CHUTE, 40, seed=6, **kw)
    np.testing.assert_array_equal(a.roughness, b.roughness)
    np.testing.assert_array_equal(a.stage_envelope, b.stage_envelope)
    assert not np.array_equal(a.roughness, c.roughness)
    # discharges drawn first, then roughness, from the same generator
    rng = np.random.default_rng(5)
    q = gv.Uncertain(9.0, 10.0, 11.0).quantile(rng.random(40))
    n = gv.Uncertain(0.012, 0.014, 0.017).quantile(rng.random((40, 3)))
    np.testing.assert_array_equal(a.discharge, q)
    np.testing.assert_array_equal(a.roughness, n)


def test_correlated_and_fixed_segments():
    mc = gv.monte_carlo(CHUTE, 30, roughness=gv.Uncertain(0.012, 0.014, 0.017), correlated=True, seed=1,
                        n_steps=20)
    assert np.all(mc.roughness == mc.roughness[:, :1])
    mc = gv.monte_carlo(CHUTE, 30, roughness=[None, gv.Uncertain(0.012, 0.014, 0.017), None], seed=1, n_steps=20)
    assert np.all(mc.roughness[:, [0, 2]] == 0.014) and np.ptp(mc.roughness[:, 1]) > 0
    np.testing.assert_array_equal(mc.discharge, 10.0)


def test_envelopes_and_jump_distribution_are_wired_to_the_sweep():
    mc = gv.monte_carlo(CHUTE, 60, roughness=gv.Uncertain(0.011, 0.014, 0.018), seed=3, n_steps=40,
                        percentiles=(10, 50, 90))
    sw = mc.sweep
    assert len(sw) == mc.samples == 60
    np.testing.assert_array_equal(mc.depth_envelope, np.percentile(sw.depth, [10, 50, 90], axis=0))
    np.testing.assert_array_equal(mc.envelope("froude", [50]), np.percentile(sw.froude, [50], axis=0))
    assert np.all(np.diff(mc.stage_envelope, axis=0) >= 0)
    # every sample has its jump in the stilling reach; its location is each sample's first jump
    assert mc.jump_probability == 1.0
    np.testing.assert_array_equal(mc.jump_x, [sw[i].jumps[0].x for i in (range(60))])
    np.testing.assert_allclose(mc.jump_x_percentiles, np.percentile(mc.jump_x, [10, 50, 90]))
    counts, edges = mc.jump_histogram(bins=8)
    assert counts.sum() == 60 and edges[0] == mc.jump_x.min() and edges[-1] == mc.jump_x.max()
    # rougher stilling reach, deeper subcritical flow, jump pushed upstream (Chow 1959, ch. 15, qualitative)
    rough = mc.roughness[:, 2]
    assert np.corrcoef(rough, mc.jump_x)[0, 1] < -0.5
    assert "60 samples" in repr(mc) and "jump in 100% of samples" in repr(mc)


def test_plot_envelope_labels_units():
    mc = gv.monte_carlo(CHUTE, 20, roughness=gv.Uncertain(0.012, 0.014, 0.017), seed=1, n_steps=20)
    ax = mc.plot_envelope()
    assert ax.get_xlabel() == "Distance from upstream end [m]"
    assert ax.get_ylabel() == "Elevation [m]"
    import matplotlib.pyplot as plt

    fig, ax2 = plt.subplots()
    assert mc.plot_envelope(ax=ax2, quantity="depth") is ax2
    assert ax2.get_ylabel() == "Depth [m]"
    plt.close("all")
    us = gv.Reach(segments=[gv.Segment(length=1000.0, slope=0.001, section=gv.Rectangular(width=10.0),
                                       roughness=0.014)], discharge=200.0, downstream=gv.FixedDepth(4.0), units="US")
    ax = gv.monte_carlo(us, 10, roughness=gv.Uncertain(0.012, 0.014, 0.017), seed=1, n_steps=10).plot_envelope()
    assert "[ft]" in ax.get_xlabel() and "[ft]" in ax.get_ylabel()
    plt.close("all")


@pytest.mark.parametrize("kwargs, match", [
    (dict(), "nothing is uncertain"),
    (dict(roughness=[None, None, None]), "nothing is uncertain"),
    (dict(roughness=gv.Uncertain(0.01, 0.02, 0.03), samples=0), "samples must be a positive integer"),
    (dict(roughness=gv.Uncertain(0.01, 0.02, 0.03), percentiles=[5, 120]), "percentiles"),
    (dict(roughness=[gv.Uncertain(0.01, 0.02, 0.03)]), "list of 3"),
    (dict(roughness=[0.013, None, None]), r"roughness\[0\] must be a gv.Uncertain"),
    (dict(roughness=gv.Uncertain(-0.01, 0.02, 0.03)), "must be positive"),
    (dict(discharge=gv.Uncertain(-1.0, 2.0, 3.0)), "discharge range must be positive"),
    (dict(discharge=(1.0, 2.0, 3.0)), "discharge must be a gv.Uncertain"),
])
def test_bad_monte_carlo_input_is_named(kwargs, match):
    kwargs.setdefault("samples", 10)
    with pytest.raises(gv.InvalidInputError, match=match):
        gv.monte_carlo(CHUTE, **kwargs)


def test_single_range_on_mixed_laws_is_rejected():
    reach = gv.Reach(segments=[seg(100.0, 0.001), gv.Segment(length=100.0, slope=0.001, section=RECT,
                                                              roughness=gv.Chezy(60.0))], discharge=5.0)
    with pytest.raises(gv.InvalidInputError, match="different friction laws"):
        gv.monte_carlo(reach, 10, roughness=gv.Uncertain(0.01, 0.02, 0.03))


def test_envelope_rejects_unknown_quantity():
    mc = gv.monte_carlo(CHUTE, 5, roughness=gv.Uncertain(0.012, 0.014, 0.017), seed=1, n_steps=10)
    with pytest.raises(gv.InvalidInputError, match="quantity"):
        mc.envelope("energy")
    with pytest.raises(gv.InvalidInputError, match="quantity"):
        mc.plot_envelope(quantity="velocity")

"""Property tests of the marchers (hypothesis): what must hold for any prismatic case."""

import math

import numpy as np
import pytest
from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st

import gvflow as gv
from gvflow._core import march as M
from gvflow._core.codes import AVERAGES
from gvflow._core.records import channel, fluid
from gvflow.profiles import PROFILE_SHAPES
from gvflow.profiles.base import SUB, SUPER, SegmentBatch, get_marcher

SETTINGS = settings(max_examples=25, deadline=None, suppress_health_check=[HealthCheck.too_slow])

sections = st.one_of(
    st.builds(gv.Rectangular, width=st.floats(1.0, 10.0)),
    st.builds(gv.Trapezoidal, bottom_width=st.floats(0.5, 8.0), side_slope=st.floats(0.0, 3.0)),
    st.builds(gv.Triangular, side_slope=st.floats(0.5, 3.0)),
    st.builds(gv.Circular, diameter=st.floats(3.0, 6.0)),
)
slopes = st.sampled_from([0.0005, 0.002, 0.01, 0.03, 0.0, -0.001])


@st.composite
def cases(draw):
    sec = draw(sections)
    q = draw(st.floats(0.5, 30.0))
    n = draw(st.floats(0.010, 0.035))
    s0 = draw(slopes)
    if sec.closed:  # keep the conduit below its uniform-flow capacity and critical depth off the crown
        try:
            gv.normal_depth(sec, q, max(s0, 1e-4), n)
        except gv.NoSolutionError:
            assume(False)
    yc = gv.critical_depth(sec, q)
    sub = draw(st.booleans())
    # a control depth a clear distance from critical (and normal) depth, on the chosen side
    factor = draw(st.floats(1.05, 2.5)) if sub else draw(st.floats(0.3, 0.95))
    y0 = factor * yc
    assume(y0 < 0.95 * sec.max_depth)  # a control above a conduit's crown raises (tested elsewhere)
    if s0 > 0:
        yn = gv.normal_depth(sec, q, s0, n)
        assume(abs(y0 - yn) > 0.02 * yn)
    length = draw(st.floats(20.0, 2000.0))
    method = draw(st.sampled_from(["standard_step", "ivp", "direct_step"]))
    return sec, q, n, s0, y0, length, method


@SETTINGS
@given(cases())
def test_depths_stay_on_their_side_of_critical_and_move_as_theory_says(case):
    sec, q, n, s0, y0, length, method = case
    t = gv.trace_profile(sec, q, s0, n, y0, length, method=method)
    yc = t.critical_depth
    if t.direction == "upstream":
        assert np.all(t.depth >= yc * (1 - 1e-12))
    else:
        assert np.all(t.depth <= yc * (1 + 1e-12))
    # monotone in x with the sign theory gives for the type (Chow 1959, §9-2)
    steps = np.diff(t.depth)
    sign = PROFILE_SHAPES[t.label].dydx_sign
    assert np.all(sign * steps >= -1e-12 * yc)
    # and never crosses normal depth
    if math.isfinite(t.normal_depth) and t.slope_class != "critical":
        above = y0 > t.normal_depth
        assert np.all((t.depth >= t.normal_depth * (1 - 1e-12)) if above else
                      (t.depth <= t.normal_depth * (1 + 1e-12)))


@SETTINGS
@given(cases(), st.sampled_from(["conveyance", "arithmetic", "geometric", "harmonic"]),
       st.floats(0.0, 0.3))
def test_standard_step_energy_balance_closes(case, average, eddy):
    # Between consecutive stations: z1 + E1 = z2 + E2 + d*Sf_avg (+ eddy loss), x downstream
    # (Chow 1959, §10-4), evaluated here with the public functions (not the compiled kernel).
    sec, q, n, s0, y0, length, _ = case
    seg = SegmentBatch.build(sec, s0, n, q)
    branch = SUB if y0 > seg.yc[0] else SUPER
    x = np.linspace(length, 0.0, 41) if branch == SUB else np.linspace(0.0, length, 41)
    r = get_marcher("standard_step", friction_average=average, eddy_loss=eddy, tol=1e-12).march(
        seg, x, [y0], branch)
    k = int(r.n_valid[0])
    assume(k >= 2)
    y = r.depth[0, :k]
    e = gv.specific_energy(sec, q, y)
    sf = gv.friction_slope(sec, q, y, n)
    hv = e - y
    s1, s2 = sf[:-1], sf[1:]
    mean = {"arithmetic": 0.5 * (s1 + s2), "geometric": np.sqrt(s1 * s2), "harmonic": 2 * s1 * s2 / (s1 + s2),
            "conveyance": 4.0 / (1 / np.sqrt(s1) + 1 / np.sqrt(s2)) ** 2}[average]
    d = np.diff(x[:k])
    loss = d * mean + np.sign(d) * eddy * np.abs(np.diff(hv))
    residual = e[:-1] + s0 * d - (e[1:] + loss)
    # Where one step over a station interval has no root on the branch (close to critical
    # depth) the marcher retries the interval in sub-steps; the balance then holds per sub-step,
    # not over the whole interval. Those intervals are found with the single-step kernel.
    ch = channel(*sec.core_params(), 0, n)
    fl = fluid(gv.SI)
    one = [M.step(ch, fl, q, s0, y[j], d[j], float(seg.yc[0]), branch, 1.0, eddy, AVERAGES[average],
                  sec.max_depth, 1e-12, y[j]) for j in range(k - 1)]
    single = np.array([code == 0 for _, code in one])
    # By design the march also splits an interval near critical depth (x(y) form) and one long against
    # the relaxation length (sub-steps), judged at both ends of the interval and at the far end of the
    # single step it first tries; the balance then holds per sub-step. Those are found here from the
    # marcher's documented rule.
    yc = float(seg.yc[0])
    rate = np.array([M.relaxation_rate(ch, fl, q, 1.0, y[j]) for j in range(k)])
    tried = np.array([M.relaxation_rate(ch, fl, q, 1.0, y2) if code == 0 else 0.0 for y2, code in one])
    rate = np.maximum(np.maximum(rate[:-1], rate[1:]), tried)
    whole = (np.abs(y[:-1] - yc) > M.CRITICAL_BAND * yc) & (rate * np.abs(d) <= 0.5)
    # the solver stops when its Newton update is below tol*y; the residual is that small too
    chk = single & whole
    assert np.all(np.abs(residual[chk]) <= 1e-9 * y[1:][chk])
    assert np.count_nonzero(~single & whole) <= 2  # only next to where the branch ends


@SETTINGS
@given(sections, st.floats(0.5, 30.0), st.floats(0.010, 0.035), st.sampled_from([0.0005, 0.002, 0.01, 0.03]),
       st.floats(50.0, 3000.0))
def test_a_profile_started_at_normal_depth_stays_there(sec, q, n, s0, length):
    seg = SegmentBatch.build(sec, s0, n, q)
    yn, yc = float(seg.yn[0]), float(seg.yc[0])
    assume(abs(yn - yc) > 0.01 * yc)
    branch = SUB if yn > yc else SUPER
    x = np.linspace(length, 0.0, 51) if branch == SUB else np.linspace(0.0, length, 51)
    # ivp (explicit DOP853, rtol 1e-9) may drift by up to ~1e-6 between its steps where normal
    # depth is within a few per cent of critical depth (stiff: see IVPMarcher); Radau does not
    for method, tol in (("standard_step", 1e-11), ("ivp", 1e-5)):
        r = get_marcher(method).march(seg, x, [yn], branch)
        assert r.n_valid[0] == x.size
        np.testing.assert_allclose(r.depth[0], yn, rtol=tol)
    t = gv.trace_profile(sec, q, s0, n, yn, length, method="direct_step")
    assert t.status == "normal depth" and t.x.size == 1


def test_radau_holds_normal_depth_where_the_equation_is_stiff():
    # yn = 0.548 m within 3 % of yc = 0.566 m on a steep slope (found by the property above)
    seg = SegmentBatch.build(gv.Rectangular(width=3.0), 0.002, 0.01, [4.0])
    x = np.linspace(0.0, 2255.0, 51)
    r = get_marcher("ivp", ivp_method="Radau").march(seg, x, seg.yn, SUPER)
    np.testing.assert_allclose(r.depth[0], seg.yn[0], rtol=1e-12)


def test_batch_march_matches_single_scenarios():
    # the ivp marcher loops over scenarios; each row equals the scenario marched alone
    sec = gv.Trapezoidal(bottom_width=3.0, side_slope=1.5)
    seg = SegmentBatch.build(sec, 0.001, 0.015, [6.0, 10.0, 14.0])
    x = np.linspace(800.0, 0.0, 21)
    m = get_marcher("ivp")
    r = m.march(seg, x, [2.5, 2.5, 2.5], SUB)
    for i in range(3):
        ri = m.march(seg.take(np.array([i])), x, [2.5], SUB)
        np.testing.assert_array_equal(r.depth[i], ri.depth[0])
    assert m.step_to(seg, 1, 2.5, 800.0, 0.0, SUB) == pytest.approx(r.depth[1, -1], rel=1e-12)

"""Numerical reliability of the profile engine, checked against direct quadrature and over generated reaches.

References, written out here: the gradually varied flow equation in x(y) form,
dx/dy = (1 - Fr²)/(S0 - Sf) (Chow 1959, *Open-Channel Hydraulics*, eq. 9-13), integrated with
``scipy.integrate.quad``; Manning's formula Sf = (n Q / (A R^(2/3)))² (SI, k = 1); the specific
force M = Q²/(gA) + A ȳ balanced across a jump (Chow 1959, eq. 3-20); the profile zones of Chow 1959,
§9-2.
"""

import math
import warnings

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from scipy.integrate import quad
from scipy.optimize import brentq

import gvflow as gv
from gvflow._core import flow
from gvflow._core.records import channel, fluid
from gvflow._pieces import UNIFORM_TOLERANCE
from gvflow.profiles import PROFILE_SHAPES
from gvflow.profiles import ivp as ivp_module

G = gv.SI.g


# ----------------------------------------------------------------------------- independent reference
class Trapezoid:
    """Geometry, Manning friction slope and Froude number of a trapezoid (rectangle: z = 0), SI."""

    def __init__(self, b, z, n, s0, q):
        self.b, self.z, self.n, self.s0, self.q = b, z, n, s0, q

    def dxdy(self, y):
        b, z, q = self.b, self.z, self.q
        a = (b + z * y) * y
        p = b + 2.0 * y * math.sqrt(1.0 + z * z)
        t = b + 2.0 * z * y
        sf = (self.n * q / (a * (a / p) ** (2.0 / 3.0))) ** 2
        return (1.0 - q * q * t / (G * a ** 3)) / (self.s0 - sf)

    def distance(self, y_from, y_to):
        """Signed distance (x downstream) from depth y_from to y_to along the profile, by quadrature."""
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            return quad(self.dxdy, y_from, y_to, epsabs=1e-14, epsrel=1e-13, limit=400)[0]

    def depth_at(self, y_start, dist, y_limit):
        """Depth a signed distance ``dist`` from a station at y_start, the profile tending to y_limit."""
        if dist == 0.0:
            return y_start
        far = y_start + (y_limit - y_start) * (1.0 - 1e-13)
        if abs(self.distance(y_start, far)) <= abs(dist):
            return y_limit  # within 1e-13 of its limit there
        return brentq(lambda y: self.distance(y_start, y) - dist, y_start, far, xtol=1e-15, rtol=1e-15)


def station_errors(p, ref, x_start):
    """Computed depth minus the quadrature depth at every station of a one-segment profile."""
    y0 = float(p.depth_at(x_start))
    ylim = float(p.normal_depths[0])
    return np.array([y - ref.depth_at(y0, x - x_start, ylim) for x, y in zip(p.x, p.depth, strict=True)])


# ----------------------------------------------------------------------------- 1. no swing about normal depth
def _rect5km():
    return gv.Reach(segments=[gv.Segment(length=5000.0, slope=0.05, section=gv.Rectangular(width=5.0),
                                         roughness=0.015)], discharge=0.5), Trapezoid(5.0, 0.0, 0.015, 0.05, 0.5)


def _trap737():
    sec = gv.Trapezoidal(bottom_width=25.9, side_slope=3.83)
    return (gv.Reach(segments=[gv.Segment(length=737.0, slope=0.204, section=sec, roughness=0.0543)],
                     discharge=83.4), Trapezoid(25.9, 3.83, 0.0543, 0.204, 83.4))


@pytest.mark.parametrize("make", [_rect5km, _trap737])
def test_long_steps_approach_normal_depth_monotonically(make):
    """Steep entry at critical depth, stations far apart against the relaxation length: the S2 drop
    approaches normal depth monotonically and matches quadrature of dx/dy from critical depth."""
    reach, ref = make()
    p = reach.solve()  # default stations
    yn, yc = p.normal_depths[0], p.critical_depths[0]
    gap = p.depth - yn
    assert np.all(gap >= -1e-12 * yn)  # never below normal depth
    assert np.all(np.diff(gap) <= 1e-12 * yn)  # falls toward it, station after station
    err = station_errors(p, ref, 0.0)
    assert p.depth[0] == pytest.approx(yc, rel=1e-12)
    assert np.max(np.abs(err) / p.depth) < 2e-3
    assert p.profile_types == ["S2"]


def test_long_subcritical_reach_at_small_depth_is_monotone():
    """An M1 backwater over 20 km of thin flow with stations 1 km apart: monotone toward normal depth
    going upstream, and within 1e-3 of quadrature (the stations' spacing is ~25 relaxation lengths)."""
    sec, q, s0, n = gv.Rectangular(width=5.0), 0.05, 0.002, 0.03
    reach = gv.Reach(segments=[gv.Segment(length=20000.0, slope=s0, section=sec, roughness=n)], discharge=q,
                     downstream=gv.FixedDepth(0.15))
    p = reach.solve(n_steps=20)
    yn = p.normal_depths[0]
    assert np.all(p.depth >= yn * (1 - 1e-12))
    assert np.all(np.diff(p.depth) >= -1e-12 * yn)  # rises downstream: falls toward yn going upstream
    err = station_errors(p, Trapezoid(5.0, 0.0, n, s0, q), 20000.0)
    assert np.max(np.abs(err) / p.depth) < 1e-3
    assert p.profile_types == ["M1"]


# ----------------------------------------------------------------------------- 3. square-root start
def _brink():
    """M2 upstream of a free overfall on a mild rectangle (critical depth at the brink)."""
    reach = gv.Reach(segments=[gv.Segment(length=400.0, slope=0.001, section=gv.Rectangular(width=3.0),
                                          roughness=0.015)], discharge=5.0, downstream=gv.CriticalFlow())
    return reach, Trapezoid(3.0, 0.0, 0.015, 0.001, 5.0), 400.0


def _steep_entry():
    """S2 down a steep trapezoid from critical depth at its head."""
    sec = gv.Trapezoidal(bottom_width=2.0, side_slope=1.5)
    reach = gv.Reach(segments=[gv.Segment(length=150.0, slope=0.02, section=sec, roughness=0.014)],
                     discharge=6.0)
    return reach, Trapezoid(2.0, 1.5, 0.014, 0.02, 6.0), 0.0


@pytest.mark.parametrize("make", [_brink, _steep_entry])
def test_standard_step_from_a_critical_section_converges_at_second_order(make):
    """Error against quadrature at common stations, 40 to 640 steps: a least-squares order of at least
    1.85 and every halving of the spacing dividing the error by more than 2.9, where a plain trapezoidal
    first step falls at order 1.5 (2.8 per halving); ivp matches quadrature to 1e-9."""
    reach, ref, x_crit = make()
    xs = np.linspace(0.0, reach.length, 11)
    exact = None
    steps = np.array([40, 80, 160, 320, 640])
    errs = []
    for n_steps in steps:
        p = reach.solve(n_steps=int(n_steps))
        yc, yn = p.critical_depths[0], p.normal_depths[0]
        assert p.depth_at(x_crit) == pytest.approx(yc, rel=1e-12)
        if exact is None:
            exact = np.array([ref.depth_at(yc, x - x_crit, yn) for x in xs])
        errs.append(np.max(np.abs(p.depth_at(xs) - exact)))
    errs = np.array(errs)
    order = np.polyfit(np.log(1.0 / steps), np.log(errs), 1)[0]
    assert order > 1.85, (errs, order)
    assert np.all(errs[:-1] / errs[1:] > 2.9), errs
    assert errs[2] < 3e-5 * yc  # 160 steps: 1.9e-5 yc at the brink; a plain first step leaves 4.5e-4 yc
    q = reach.solve(method="ivp", n_steps=10)
    exact = np.array([ref.depth_at(yc, x - x_crit, yn) for x in q.x])
    assert np.max(np.abs(q.depth - exact)) < 1e-9


# ----------------------------------------------------------------------------- 2. labels
def _zone_ok(label, y, yn, yc, tol=UNIFORM_TOLERANCE):
    """Is depth y in the zone of ``label`` (boundaries inclusive, with a relative tolerance)? Chow 1959, §9-2."""
    shape = PROFILE_SHAPES[label]
    if shape.slope_class in ("mild", "steep"):
        lo, hi = min(yn, yc), max(yn, yc)
        return {1: y >= hi * (1 - tol), 2: lo * (1 - tol) <= y <= hi * (1 + tol), 3: y <= lo * (1 + tol)}[shape.zone]
    return y >= yc * (1 - tol) if shape.zone in (1, 2) else y <= yc * (1 + tol)


def piece_stations(p, piece):
    """Indices of the stations of a profile that belong to ``piece`` (a junction station whose depth is the
    same on both sides is listed once, under the upstream segment)."""
    want = (p.regime == piece.regime) | (p.regime == "critical")
    own = p.segment == piece.segment
    ends = np.isin(p.x, [e for e in (piece.x_start, piece.x_end) if not np.any(own & (p.x == e))])
    return np.flatnonzero((own | ends) & (p.x >= piece.x_start) & (p.x <= piece.x_end)
                          & want)


def _above_peak_conveyance(p, piece, ys):
    """Whether a piece in a closed conduit rises above the depth of the conduit's largest conveyance, where a
    discharge between the full-flow and the peak capacity has a second normal depth (Chow 1959, ch. 6, from
    memory): the textbook zones, which assume one, do not describe the profile there."""
    seg = p.reach.segments[piece.segment]
    if not seg.section.closed:
        return False
    cap = gv.conduit_capacity(seg.section, seg.slope, seg.roughness, units=p.units) if seg.slope > 0 else None
    return cap is not None and bool(np.any(ys > cap.peak_depth))


def check_pieces(p, tol=1e-9):
    """Every station of every labelled piece lies in its zone; the depth moves with the sign theory gives
    for the label; a piece tending to normal depth approaches it without crossing it."""
    for piece in p.pieces:
        idx = piece_stations(p, piece)
        assert idx.size >= 2, piece
        if _above_peak_conveyance(p, piece, p.depth[idx]):
            continue
        yn, yc = p.normal_depths[piece.segment], p.critical_depths[piece.segment]
        shape = PROFILE_SHAPES[piece.label]
        ys = p.depth[idx]
        if math.isnan(yn) and shape.slope_class == "mild":
            yn = p.reach.segments[piece.segment].section.max_depth  # closed conduit beyond capacity
        for y in ys:
            assert _zone_ok(piece.label, y, yn, yc), (piece, y, yn, yc)
        if shape.slope_class != "critical":  # (on a slope classed critical, yn may lie a little either side)
            assert np.all(shape.dydx_sign * np.diff(ys) >= -tol * ys[1:]), (piece, ys)
        if shape.tends_to == "normal depth" and np.isfinite(yn):
            side = np.sign(ys[0] - yn) if abs(ys[0] - yn) > UNIFORM_TOLERANCE * yn else np.sign(ys[-1] - yn)
            assert np.all(side * (ys - yn) >= -max(tol, UNIFORM_TOLERANCE) * yn), (piece, ys, yn)


@pytest.mark.parametrize("method", ["standard_step", "ivp"])
def test_gate_jet_below_normal_depth_is_s3(method):
    """Sluice-gate jet at 0.183 m below normal depth 0.314 m on a steep 5 km rectangle: S3 both ways, up to
    where it reaches normal depth; uniform flow beyond."""
    reach = gv.Reach(segments=[gv.Segment(length=5000.0, slope=0.05, section=gv.Rectangular(width=5.0),
                                          roughness=0.015)], discharge=10.0, upstream=gv.SluiceGate(opening=0.3))
    p = reach.solve(method=method)
    assert p.profile_types == ["S3"]
    assert p.depth[0] < p.normal_depths[0] < p.critical_depths[0]
    check_pieces(p)
    end = p.pieces[0].x_end
    beyond = p.x > end
    assert np.all(np.abs(p.depth[beyond] - p.normal_depths[0]) <= UNIFORM_TOLERANCE * p.normal_depths[0])


@pytest.mark.parametrize("method", ["standard_step", "ivp"])
def test_drop_inside_the_first_interval_keeps_its_label(method):
    """Entry at critical depth 0.1007 dropping to normal depth 0.0501 within the first 50 m interval: an S2
    piece from 0 to the first station, not dropped and not mislabelled."""
    reach, _ = _rect5km()
    p = reach.solve(method=method)
    assert p.profile_types == ["S2"]
    assert p.pieces[0].x_start == 0.0 and p.pieces[0].x_end == pytest.approx(50.0)
    check_pieces(p)


# ----------------------------------------------------------------------------- 4. roots
def test_compiled_roots_report_failure_instead_of_returning_their_last_iterate():
    ch = channel(*gv.Rectangular(width=1.0).core_params(), 0, 0.015)
    fl = fluid(gv.SI)
    # a bed slope so small that no depth below 2^1000 carries the discharge: no root, said so
    assert flow.normal_depth(ch, fl, 1e300, 1e-320)[1] == flow.NO_ROOT
    # huge and tiny discharges (Q² beyond the floats): the roots work in logarithms and what they return
    # satisfies the defining equations (not the last iterate of a bracket that ran out)
    for q in (1e-300, 1e100, 1e300):
        yc, status = flow.critical_depth_single(ch, fl, q, 1.0)
        assert status == flow.SOLVED
        assert yc == pytest.approx((q * q / G) ** (1 / 3) if q < 1e150 else (q / G ** 0.5) ** (2 / 3), rel=1e-12)
    y, status = flow.normal_depth(ch, fl, 1e100, 0.01)
    assert status == flow.SOLVED
    assert float(gv.friction_slope(gv.Rectangular(width=1.0), 1e100, y, 0.015)) == pytest.approx(0.01, rel=1e-12)


@pytest.mark.parametrize("ks", [0.1, 0.5, 1.21, 2.46])
def test_darcy_normal_depth_converges_where_roughness_rivals_the_hydraulic_radius(ks):
    """ks/4R from about 0.5 to 3.7: the normal depth's friction slope, by the fluids package's
    Colebrook-White (an independent implementation, as in test_friction), equals the bed slope to 1e-10."""
    from fluids.friction import Colebrook

    sec, q, s0 = gv.Rectangular(width=1.0), 0.01, 0.001
    y = gv.normal_depth(sec, q, s0, gv.DarcyWeisbach(ks))
    a, r = float(sec.area(y)), float(sec.hydraulic_radius(y))
    f = Colebrook(4 * r * q / (a * gv.SI.kinematic_viscosity), ks / (4 * r))
    assert f * q * q / (8 * G * r * a * a) == pytest.approx(s0, rel=1e-9)


# ----------------------------------------------------------------------------- 5. ivp in time, at the crown
def test_ivp_switches_to_an_implicit_method_on_stiff_thin_flow():
    """Thin flow (2.5 mm) on a 2 km slope of 0.2: ~10^7 relaxation lengths, so Radau, not an explicit
    method; the profile matches the standard step and reaches normal depth."""
    reach = gv.Reach(segments=[gv.Segment(length=2000.0, slope=0.2, section=gv.Rectangular(width=5.0),
                                          roughness=0.05)], discharge=0.002)
    seg = gv.profiles.SegmentBatch.build(gv.Rectangular(width=5.0), 0.2, 0.05, 0.002)
    marcher = gv.profiles.IVPMarcher()
    prob = ivp_module._Problem(seg, 0)
    assert marcher._method_for(prob, float(seg.yc[0]), 2000.0) == "Radau"
    a, b = reach.solve(method="ivp"), reach.solve()
    np.testing.assert_allclose(a.depth, b.depth, rtol=1e-6)
    assert a.depth[-1] == pytest.approx(a.normal_depths[0], rel=1e-9)


def test_ivp_gives_up_with_convergence_error_when_its_budget_is_spent(monkeypatch):
    monkeypatch.setattr(ivp_module, "MAX_EVALUATIONS", 30)
    reach, _, _ = _brink()
    with pytest.raises(gv.ConvergenceError, match="evaluations of the GVF equation"):
        reach.solve(method="ivp")


def test_ivp_right_hand_side_at_a_conduits_crown_is_finite():
    """US units: circular D = 0.984 ft, S0 = 0.059, n = 0.0448, Q = 0.98 cfs, alpha 1.19, uniform flow
    downstream; the GVF right-hand side at and above the crown, and at or below the invert, stays finite
    (the compiled geometry divides 0/0 for an empty circle), and ivp agrees with the standard step."""
    sec = gv.Circular(diameter=0.984)
    seg = gv.profiles.SegmentBatch.build(sec, 0.059, 0.0448, 0.98, units="US", alpha=1.19)
    prob = ivp_module._Problem(seg, 0)
    for y in (0.984, 0.984 * (1 - 1e-15), 1.5, 0.0, -0.1):  # (an explicit stage can overshoot either way)
        assert np.all(np.isfinite(prob.dydx(0.0, np.array([y])))) and np.isfinite(prob.dxdy(y, 0.0)[0])
    reach = gv.Reach(segments=[gv.Segment(length=100.0, slope=0.059, section=sec, roughness=0.0448)],
                     discharge=0.98, units="US", alpha=1.19, downstream=gv.UniformFlow())
    np.testing.assert_allclose(reach.solve(method="ivp").depth, reach.solve().depth, rtol=1e-6)


# ----------------------------------------------------------------------------- property tests
slopes = st.one_of(st.floats(1e-4, 2e-3), st.floats(5e-3, 0.05), st.floats(0.05, 0.2), st.just(0.0),
                   st.floats(-2e-3, -1e-4))
sections = st.one_of(
    st.builds(lambda b: gv.Rectangular(width=b), st.floats(1.0, 6.0)),
    st.builds(lambda b, z: gv.Trapezoidal(bottom_width=b, side_slope=z), st.floats(1.0, 5.0), st.floats(0.5, 2.5)),
    st.builds(lambda d: gv.Circular(diameter=d), st.floats(1.5, 4.0)),
    st.builds(lambda t: gv.Parabolic(top_width=t, reference_depth=1.0), st.floats(2.0, 8.0)),
)
roughness = st.one_of(st.floats(0.011, 0.05), st.builds(lambda c: gv.Chezy(c), st.floats(30.0, 70.0)),
                      st.builds(lambda ks: gv.DarcyWeisbach(ks), st.floats(1e-4, 0.05)))
segments = st.builds(lambda L, s, sec, n: gv.Segment(length=L, slope=s, section=sec, roughness=n),
                     st.floats(20.0, 5000.0), slopes, sections, roughness)
reaches = st.fixed_dictionaries({
    "segs": st.lists(segments, min_size=1, max_size=3),
    "q": st.floats(-2.0, 1.2).map(lambda e: 10.0 ** e),  # 0.01 to 16
    "down": st.sampled_from(["none", "critical", "high", "normal"]),
    "gate": st.booleans(),
    "n_steps": st.sampled_from([5, 20, 60]),
    "ivp": st.integers(0, 3),
})


def _build(case):
    segs, q = case["segs"], case["q"]
    last = segs[-1]
    yc_last = gv.critical_depth(last.section, q)
    high = min(2.5 * yc_last, 0.95 * last.section.max_depth)
    down = case["down"]
    if down == "normal" and last.slope <= 0:
        down = "high"  # no normal depth on a horizontal or adverse bed: a refusal tests nothing here
    downstream = {"none": None, "critical": gv.CriticalFlow(), "high": gv.FixedDepth(high),
                  "normal": gv.UniformFlow()}[down]
    upstream = gv.SluiceGate(opening=0.5 * gv.critical_depth(segs[0].section, q)) if case["gate"] else None
    return gv.Reach(segments=segs, discharge=q, upstream=upstream, downstream=downstream)


def check_profile(reach, p):
    """Pieces (zones, monotone approach to normal depth) and jump balance of one solved profile."""
    check_pieces(p)
    unbalanced = {round(c.x, 6) for c in p.controls if c.kind == "unbalanced jump"}
    for jump in p.jumps:
        if jump.where != "in segment":
            continue
        sec = reach.segments[jump.segment].section
        if jump.downstream_depth > sec.max_depth:
            continue  # a jump into a conduit running full: its balance includes the pressure on the full area
            # (tests/test_surcharge.py), and an unbalanced one is noted like any other
        m1 = gv.specific_force(sec, reach.discharge, jump.upstream_depth)
        m2 = gv.specific_force(sec, reach.discharge, jump.downstream_depth)
        assert abs(m1 - m2) <= 1e-6 * m2 or round(jump.x, 6) in unbalanced, (jump, m1, m2)


def _comparable(p, q, n_steps):
    """Whether the standard step's profile ``p`` and the ivp's ``q`` should agree to 1 %: the same stations and
    regimes, no jump; and a profile the stations resolve away from critical depth, where a small change of
    energy moves the depth a lot and the two methods' discretizations differ by more than that (at a
    critical section or a brink, in a near-critical stretch, within 10 % of critical depth, at fewer than
    20 steps a segment, or with the depth changing by more than 20 % between two stations)."""
    if p.jumps or q.jumps or not np.array_equal(p.regime, q.regime) or p.x.shape != q.x.shape:
        return False
    assert np.all(np.isfinite(p.depth)) and np.all(np.isfinite(q.depth))
    if n_steps < 20 or np.any(p.regime == "critical"):
        return False
    if any(c.kind == "near-critical flow" for c in p.controls):
        return False
    yc = p.critical_depths[p.segment]
    if np.any(np.abs(p.depth - yc) < 0.1 * yc) or np.any(np.abs(np.diff(p.depth)) > 0.2 * p.depth[1:]):
        return False
    return True


def run_generated(n_examples, derandomize=False):
    """Solve ``n_examples`` generated reaches; check each solved one; return (tried, solved, compared)."""
    stats = {"tried": 0, "solved": 0, "compared": 0}

    @settings(max_examples=n_examples, deadline=None, database=None, derandomize=derandomize,
              suppress_health_check=[HealthCheck.too_slow, HealthCheck.filter_too_much])
    @given(case=reaches)
    def check(case):
        try:
            reach = _build(case)
        except gv.GVFlowError:
            return  # e.g. a control or gate the generated section cannot hold
        stats["tried"] += 1
        try:
            p = reach.solve(n_steps=case["n_steps"])
        except gv.GVFlowError:
            return  # an explained refusal
        stats["solved"] += 1
        assert np.all(np.isfinite(p.depth)) and np.all(p.depth > 0), "a solved profile has a depth at every station"
        check_profile(reach, p)
        if case["ivp"] == 0:  # one in four also by ivp
            try:
                q = reach.solve(method="ivp", n_steps=case["n_steps"])
            except gv.GVFlowError:
                return
            check_profile(reach, q)
            if not _comparable(p, q, case["n_steps"]):
                return
            stats["compared"] += 1
            np.testing.assert_allclose(p.depth, q.depth, rtol=0.01)

    check()
    return stats["tried"], stats["solved"], stats["compared"]


def test_generated_reaches_quick():
    # (the first 20 of the derandomized sequence; the slow test below runs thousands)
    tried, solved, compared = run_generated(20, derandomize=True)
    assert tried >= 15 and solved >= 0.8 * tried


@pytest.mark.slow
def test_generated_reaches_thousands():
    """At least 3000 generated reaches (every section, slope kind, control, gate; 5 to 60 stations a
    segment; a quarter also by ivp): at least 80 % solve, every solved one passes the checks."""
    # derandomized, so a run is reproducible (CI and a developer see the same 3000 reaches); explore new ones
    # by running run_generated(n) with derandomize=False
    tried, solved, compared = run_generated(3000, derandomize=True)
    print(f"generated reaches: {tried} tried, {solved} solved, {compared} compared with ivp")
    assert tried >= 2500
    assert solved >= 0.8 * tried, (tried, solved)
    # (about one in thirty: a quarter also go by ivp, and of those the resolved ones away from critical depth compare)
    assert compared >= 80


# ----------------------------------------------------------------------------- 4. jumps
def _jump_reach():
    """A sluice-gate jet on a mild rectangle held up by a high tailwater: an M3 then a jump to M1."""
    return gv.Reach(segments=[gv.Segment(length=300.0, slope=0.001, section=gv.Rectangular(width=3.0),
                                         roughness=0.015)], discharge=5.0, upstream=gv.SluiceGate(opening=0.25),
                    downstream=gv.FixedDepth(1.6))


class _OffBalance(gv.profiles.StandardStep):
    """A marcher whose jump search returns an upstream depth 10 % shallow: forces visibly unbalanced."""

    def locate_jumps(self, seg, y_sup, x_lo, y_sub, x_hi):
        x, y1, y2 = super().locate_jumps(seg, y_sup, x_lo, y_sub, x_hi)
        return x, 0.9 * y1, y2


def test_jumps_balance_their_specific_forces_or_say_they_do_not():
    reach = _jump_reach()
    sec = reach.segments[0].section
    p = reach.solve()
    (jump,) = p.jumps
    m1, m2 = (gv.specific_force(sec, 5.0, y) for y in (jump.upstream_depth, jump.downstream_depth))
    assert abs(m1 - m2) <= 1e-10 * m2  # momentum balance, Chow 1959 eq. 3-20
    assert not [c for c in p.controls if c.kind == "unbalanced jump"]
    q = reach.solve(method=_OffBalance)
    (note,) = [c for c in q.controls if c.kind == "unbalanced jump"]
    assert note.x == pytest.approx(q.jumps[0].x) and "differ by" in note.text

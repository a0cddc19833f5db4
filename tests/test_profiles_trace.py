"""Tracing single profiles: every type, every method, against independent references.

References used here:
* adaptive quadrature of dx/dy = (1 - alpha Fr²)/(S0 - Sf) (gvflow.verify.profile_length /
  depth_at_distance; scipy.integrate.quad; Chow 1959, Open-Channel Hydraulics, §10-1);
* Bresse's closed form for a wide rectangle with Chezy friction (Bresse 1860, as given in
  Chow 1959, §10-2, and Henderson 1966, Open Channel Flow, §4.5; exact).
"""

import math

import numpy as np
import pytest

import gvflow as gv
from gvflow.profiles import PROFILE_SHAPES

SEC = gv.Trapezoidal(bottom_width=3.0, side_slope=1.5)
Q, N = 10.0, 0.015
MILD, STEEP, ADVERSE = 0.001, 0.02, -0.002
CRIT = gv.critical_slope(SEC, Q, N)
YC = gv.critical_depth(SEC, Q)
YN_MILD = gv.normal_depth(SEC, Q, MILD, N)
YN_STEEP = gv.normal_depth(SEC, Q, STEEP, N)
METHODS = ["standard_step", "ivp", "direct_step"]

# label: (slope, control depth, segment length); each produces its type (checked below)
CASES = {
    "M1": (MILD, 2.5, 3000.0),
    "M2": (MILD, 0.5 * (YN_MILD + YC), 1000.0),
    "M3": (MILD, 0.3, 200.0),
    "S1": (STEEP, 2.0, 300.0),
    "S2": (STEEP, 0.5 * (YN_STEEP + YC), 300.0),
    "S3": (STEEP, 0.25, 300.0),
    "C1": (CRIT, 1.4, 300.0),
    "C3": (CRIT, 0.4, 300.0),
    "H2": (0.0, 1.5, 1000.0),
    "H3": (0.0, 0.3, 150.0),
    "A2": (ADVERSE, 1.5, 500.0),
    "A3": (ADVERSE, 0.3, 100.0),
}

_TRACES = {}


def _trace(label, method, **kw):
    key = (label, method, tuple(sorted(kw.items())))
    if key not in _TRACES:
        s0, y0, length = CASES[label]
        _TRACES[key] = gv.trace_profile(SEC, Q, s0, N, y0, length, method=method, **kw)
    return _TRACES[key]


def _interior(t, k=5):
    """Indices of k interior stations spread over a trace."""
    m = t.x.size
    return sorted({int(round(f * (m - 1))) for f in np.linspace(0, 1, k + 2)[1:-1]})


def _reference(t, idx):
    s0, y0, length = CASES[t.label]
    x_control = length if t.direction == "upstream" else 0.0
    return np.array([gv.depth_at_distance(SEC, Q, s0, N, y0, t.x[i] - x_control) for i in idx])


@pytest.mark.reference
@pytest.mark.parametrize("method", METHODS)
@pytest.mark.parametrize("label", list(CASES))
def test_each_type_matches_quadrature(label, method):
    # Depth at five interior stations within 1e-4 relative of the quadrature reference,
    # at default settings (n_steps=100, substeps=4; ivp rtol=1e-9).
    t = _trace(label, method)
    assert t.label == label
    assert t.direction == PROFILE_SHAPES[label].direction
    idx = _interior(t)
    assert len(idx) == 5 and t.x.size >= 7
    ref = _reference(t, idx)
    np.testing.assert_allclose(t.depth[idx], ref, rtol=1e-4)
    if method == "ivp":  # much tighter with its default rtol = 1e-9
        np.testing.assert_allclose(t.depth[idx], ref, rtol=1e-7)


@pytest.mark.parametrize("label", list(CASES))
def test_marchers_agree_with_each_other(label):
    # standard step and ivp report the same stations (equal distance steps): compare them
    # directly; the direct step, whose stations fall at its depth steps, is compared through
    # the ivp trace by the quadrature distance between its own depths.
    a, b = _trace(label, "standard_step"), _trace(label, "ivp")
    m = min(a.x.size, b.x.size) - 1  # the last point is the stop, which may differ
    sl = slice(0, m) if a.direction == "downstream" else slice(-m, None)
    np.testing.assert_allclose(a.x[sl], b.x[sl], rtol=0, atol=1e-9)
    # each is within 1e-4 of the reference (test above), so within 2e-4 of each other
    np.testing.assert_allclose(a.depth[sl], b.depth[sl], rtol=2e-4)
    d = _trace(label, "direct_step")
    if label in ("C1", "C3"):  # normal and critical depth coincide: either may be reported first
        return
    assert a.status == b.status == d.status
    if b.status != "segment end":
        assert d.x_stop == pytest.approx(b.x_stop, rel=1e-4, abs=1e-3 * d.length)


@pytest.mark.parametrize("label", list(CASES))
def test_shape_matches_theory(label):
    shape = PROFILE_SHAPES[label]
    for method in METHODS:
        t = _trace(label, method)
        steps = np.diff(t.depth)
        assert np.all(np.sign(steps[steps != 0]) == shape.dydx_sign), method
        if t.status == "normal depth":
            assert shape.tends_to in ("normal depth", "critical and normal depth")
            assert abs(t.depth[0 if t.direction == "upstream" else -1] - t.normal_depth) <= \
                1.0001e-3 * t.normal_depth
        if t.status == "critical depth":
            assert shape.tends_to in ("critical depth", "critical and normal depth")


# ------------------------------------------------------------------ Bresse

BRESSE = dict(section=gv.WideRectangular(width=100.0), discharge=300.0, slope=0.0004, roughness=gv.Chezy(50.0))


@pytest.mark.reference
@pytest.mark.parametrize("method", METHODS)
@pytest.mark.parametrize("label, y0, length", [("M1", 4.0, 5000.0), ("M2", 1.5, 3000.0)])
def test_bresse_wide_rectangle_chezy(label, y0, length, method):
    # Bresse (1860), as given in Chow 1959, Open-Channel Hydraulics, §10-2, eq. 10-13 (exact):
    # the distance from the control to every station, from the depth the marcher found there,
    # agrees with the closed form to 1e-5 relative. Settings: ivp at its defaults; the
    # second-order standard and direct steps with 100 reported steps of 16 sub-steps each
    # (at the default 4 sub-steps the M2 near its control is off by 2.4e-5).
    t = gv.trace_profile(control_depth=y0, length=length, method=method, substeps=16, **BRESSE)
    assert t.label == label
    d = t.x - length  # traced upstream from x = length
    m = np.abs(d) > 0
    xb = gv.bresse_length(depth_from=y0, depth_to=t.depth[m], **BRESSE)
    np.testing.assert_allclose(xb, d[m], rtol=1e-5)


def test_bresse_yn_yc_match_the_marchers():
    seg_yn = gv.normal_depth(BRESSE["section"], 300.0, 0.0004, BRESSE["roughness"])
    # yn = (q²/(C² S0))^(1/3), yc = (q²/g)^(1/3), q = 3 m²/s (Chow 1959, §10-2)
    assert seg_yn == pytest.approx((9.0 / (2500.0 * 0.0004)) ** (1 / 3), rel=1e-12)
    t = gv.trace_profile(control_depth=4.0, length=10.0, **BRESSE)
    assert t.critical_depth == pytest.approx((9.0 / gv.SI.g) ** (1 / 3), rel=1e-12)


# ------------------------------------------------------------------ convergence and tolerance

@pytest.mark.reference
@pytest.mark.parametrize("average", ["conveyance", "arithmetic", "geometric", "harmonic"])
@pytest.mark.parametrize("label, y0, length", [("M1", 2.0, 400.0), ("M3", 0.3, 100.0)])
def test_standard_step_is_second_order(average, label, y0, length):
    # Halving the distance step cuts the error at the far end by 4: observed order 2.00
    # (measured 1.98-2.00 from 10 to 160 steps). Reference: quadrature.
    from gvflow.profiles.base import SUB, SUPER, SegmentBatch, get_marcher

    s0 = CASES[label][0]
    seg = SegmentBatch.build(SEC, s0, N, Q)
    branch = SUB if label == "M1" else SUPER
    signed = -length if branch == SUB else length
    yref = gv.depth_at_distance(SEC, Q, s0, N, y0, signed)
    marcher = get_marcher("standard_step", friction_average=average)
    errs = []
    for n in (20, 40, 80):
        x = np.linspace(length, 0.0, n + 1) if branch == SUB else np.linspace(0.0, length, n + 1)
        errs.append(abs(marcher.march(seg, x, [y0], branch).depth[0, -1] - yref))
    orders = np.log2(np.array(errs[:-1]) / np.array(errs[1:]))
    np.testing.assert_allclose(orders, 2.0, atol=0.05)


_RTOL_REFS = {}


@pytest.mark.reference
@pytest.mark.parametrize("rtol", [1e-5, 1e-7, 1e-9])
@pytest.mark.parametrize("label", ["M1", "M2", "M3", "S2", "S3", "H2"])
def test_ivp_meets_its_rtol(label, rtol):
    # rtol bounds the local error; the global relative depth error of these marches (which run
    # in their stable direction) stays within 10 rtol (measured: at most 3.4 rtol).
    from gvflow.profiles.base import SUB, SUPER, SegmentBatch, get_marcher

    s0, y0, length = CASES[label]
    seg = SegmentBatch.build(SEC, s0, N, Q)
    branch = SUB if PROFILE_SHAPES[label].direction == "upstream" else SUPER
    t = _trace(label, "ivp")  # where the profile runs: stay inside it
    span = abs(t.x_stop - (length if branch == SUB else 0.0)) * 0.95 if t.status != "segment end" else length
    x = np.linspace(length, length - span, 31) if branch == SUB else np.linspace(0.0, span, 31)
    if label not in _RTOL_REFS:  # the same reference serves every rtol
        _RTOL_REFS[label] = np.array([gv.depth_at_distance(SEC, Q, s0, N, y0, xi - x[0]) for xi in x[1:]])
    ref = _RTOL_REFS[label]
    r = get_marcher("ivp", rtol=rtol, atol=1e-14).march(seg, x, [y0], branch)
    assert r.n_valid[0] == x.size
    err = np.max(np.abs(r.depth[0, 1:] - ref) / ref)
    assert err <= 10 * rtol


@pytest.mark.parametrize("ivp_method", ["RK45", "DOP853", "Radau", "LSODA"])
def test_ivp_methods_selectable(ivp_method):
    t = gv.trace_profile(SEC, Q, MILD, N, 2.5, 1000.0, method="ivp", ivp_method=ivp_method, rtol=1e-8,
                         atol=1e-12)
    ref = gv.depth_at_distance(SEC, Q, MILD, N, 2.5, -1000.0)
    assert t.depth[0] == pytest.approx(ref, rel=1e-6)


# ------------------------------------------------------------------ hard places

@pytest.mark.reference
@pytest.mark.parametrize("method", METHODS)
@pytest.mark.parametrize("label", ["M3", "S1", "H3", "A3"])
def test_reaching_critical_depth_reports_where(label, method):
    # Where the branch ends is the quadrature length from the control depth to critical depth.
    s0, y0, length = CASES[label]
    t = gv.trace_profile(SEC, Q, s0, N, y0, 5 * length, method=method)
    assert t.status == "critical depth"
    assert "critical depth" in t.message
    dist = gv.profile_length(SEC, Q, s0, N, y0, YC)
    x_control = 5 * length if t.direction == "upstream" else 0.0
    tol = 1e-7 if method == "ivp" else 2e-3
    assert t.x_stop - x_control == pytest.approx(dist, rel=tol)
    assert t.depth[0 if t.direction == "upstream" else -1] == pytest.approx(YC, rel=1e-9)


@pytest.mark.parametrize("method", METHODS)
def test_wrong_side_control_raises_with_the_regime_named(method):
    with pytest.raises(gv.ControlError, match="supercritical") as exc:
        gv.trace_profile(SEC, Q, MILD, N, 0.5, 500.0, direction="upstream", method=method)
    assert "downstream" in str(exc.value)
    with pytest.raises(gv.ControlError, match="subcritical"):
        gv.trace_profile(SEC, Q, STEEP, N, 1.2, 500.0, direction="downstream", method=method)
    assert issubclass(gv.ControlError, ValueError)


def test_control_at_critical_depth_defaults():
    t = gv.trace_profile(SEC, Q, MILD, N, YC, 500.0)  # a brink on a mild slope: M2 upstream
    assert (t.label, t.direction) == ("M2", "upstream")
    t = gv.trace_profile(SEC, Q, STEEP, N, YC, 500.0)  # the top of a steep chute: S2 downstream
    assert (t.label, t.direction) == ("S2", "downstream")
    t = gv.trace_profile(SEC, Q, STEEP, N, YC, 500.0, direction="upstream")  # S1 branch ends at once
    assert t.status == "critical depth" and t.x_stop == 500.0


@pytest.mark.parametrize("method", ["standard_step", "ivp"])
def test_m2_from_a_brink_starts_at_critical_depth(method):
    t = gv.trace_profile(SEC, Q, MILD, N, YC, 400.0, method=method)
    ref = gv.depth_at_distance(SEC, Q, MILD, N, YC, t.x[-20] - 400.0)
    assert t.depth[-20] == pytest.approx(ref, rel=1e-4)


def test_conduit_full_is_reported():
    # A subcritical profile rising upstream in a circular conduit reaches the crown.
    sec = gv.Circular(diameter=1.0)
    for method in METHODS:
        t = gv.trace_profile(sec, 0.5, 0.0, 0.013, 0.8, 2000.0, method=method)
        assert t.label == "H2"
        assert t.status == "conduit full", method
        assert t.depth.max() <= 1.0 + 1e-12


def test_trace_result_is_frozen_and_readable():
    t = _trace("M1", "standard_step")
    assert t.x[0] == t.x_stop and t.x[-1] == 3000.0 and np.all(np.diff(t.x) > 0)
    with pytest.raises(ValueError):
        t.depth[0] = 1.0
    with pytest.raises(AttributeError):
        t.label = "M2"
    r = repr(t)
    assert "M1" in r and "upstream" in r and "normal depth" in r
    assert t.success and t.shape.label == "M1"


def test_bad_arguments_raise():
    with pytest.raises(gv.InvalidInputError, match="method"):
        gv.trace_profile(SEC, Q, MILD, N, 2.0, 100.0, method="euler")
    with pytest.raises(gv.InvalidInputError, match="direction"):
        gv.trace_profile(SEC, Q, MILD, N, 2.0, 100.0, direction="sideways")
    with pytest.raises(gv.InvalidInputError, match="n_steps"):
        gv.trace_profile(SEC, Q, MILD, N, 2.0, 100.0, n_steps=0)
    with pytest.raises(gv.InvalidInputError, match="length"):
        gv.trace_profile(SEC, Q, MILD, N, 2.0, -1.0)
    with pytest.raises(gv.InvalidInputError, match="friction_average"):
        gv.trace_profile(SEC, Q, MILD, N, 2.0, 100.0, method="direct_step", friction_average="median")
    with pytest.raises(gv.NoSolutionError, match="capacity"):
        gv.trace_profile(gv.Circular(diameter=0.5), 2.0, 0.001, 0.013, 0.4, 100.0)
    with pytest.raises(gv.NoSolutionError, match="crown"):
        gv.trace_profile(gv.Circular(diameter=0.5), 0.1, 0.001, 0.013, 0.6, 100.0)


def test_normal_tolerance_is_honoured():
    for tol in (1e-2, 1e-4):
        t = gv.trace_profile(SEC, Q, MILD, N, 2.5, 20000.0, normal_tolerance=tol)
        assert t.status == "normal depth"
        assert abs(t.depth[0] - YN_MILD) == pytest.approx(tol * YN_MILD, rel=1e-9)
        assert np.all(np.abs(t.depth[1:] - YN_MILD) > tol * YN_MILD)


def test_started_at_normal_depth_is_uniform():
    for method in METHODS:
        t = gv.trace_profile(SEC, Q, MILD, N, YN_MILD, 500.0, method=method)
        assert t.status == "normal depth" and t.x_stop == 500.0 and t.x.size == 1
    assert math.isnan(gv.trace_profile(SEC, Q, 0.0, N, 1.0, 10.0).normal_depth)


# ------------------------------------------------------------------ textbook example

# Chow 1959, Open-Channel Hydraulics, Examples 10-1 (direct step) and 10-2 (standard step)
# (from memory — verify): trapezoidal channel b = 20 ft, z = 2, n = 0.025, S0 = 0.0016,
# Q = 400 ft³/s, alpha = 1.10, a dam raising the depth to 5.0 ft; yn ≈ 3.36 ft, yc ≈ 2.15 ft
# with alpha = 1 (about 2.21 ft with alpha = 1.10). This test uses g = 32.2 ft/s² and the
# Manning factor 1.49, as the example does (from memory — verify), and the example's depth
# rows 5.00, 4.80, ..., 3.40 ft. The printed distance column is not recalled reliably, so
# the table itself is recomputed below row by row the way the example does it (plain
# arithmetic, Sf from R^(4/3), arithmetic mean Sf), independently of the library code.
CHOW_UNITS = gv.Units(g=32.2, manning_k=1.49, length="ft", name="US (g = 32.2)")
CHOW_SEC = gv.Trapezoidal(bottom_width=20.0, side_slope=2.0)
CHOW_ROWS = [5.00, 4.80, 4.60, 4.40, 4.20, 4.00, 3.80, 3.70, 3.60, 3.55, 3.50, 3.47, 3.44, 3.42, 3.40]


def _chow_table_by_hand():
    x, out, prev = 0.0, [0.0], None
    for y in CHOW_ROWS:
        a = (20.0 + 2.0 * y) * y
        r = a / (20.0 + 2.0 * y * math.sqrt(5.0))
        v = 400.0 / a
        e = y + 1.10 * v * v / (2 * 32.2)
        sf = (0.025 * v) ** 2 / (1.49**2 * r ** (4.0 / 3.0))
        if prev is not None:
            e0, sf0 = prev
            x += (e - e0) / (0.0016 - 0.5 * (sf + sf0))
            out.append(x)
        prev = (e, sf)
    return np.array(out)


@pytest.mark.reference
def test_chow_example_reference_depths():
    # yn ≈ 3.36 ft, yc ≈ 2.15 ft (alpha = 1) and ≈ 2.21 ft (alpha = 1.10), Chow 1959 (from memory)
    assert gv.normal_depth(CHOW_SEC, 400.0, 0.0016, 0.025, units=CHOW_UNITS) == pytest.approx(3.36, abs=0.005)
    assert gv.critical_depth(CHOW_SEC, 400.0, units=CHOW_UNITS) == pytest.approx(2.15, abs=0.005)
    assert gv.critical_depth(CHOW_SEC, 400.0, units=CHOW_UNITS, alpha=1.10) == pytest.approx(2.21, abs=0.005)
    t = gv.trace_profile(CHOW_SEC, 400.0, 0.0016, 0.025, 5.0, 3000.0, units=CHOW_UNITS, alpha=1.10)
    assert t.label == "M1" and t.direction == "upstream"


@pytest.mark.reference
def test_chow_example_direct_step_table():
    hand = _chow_table_by_hand()
    lib = gv.direct_step(CHOW_SEC, 400.0, 0.0016, 0.025, CHOW_ROWS, units=CHOW_UNITS, alpha=1.10)
    # the table is printed to the foot; the two computations agree far inside that
    np.testing.assert_allclose(lib, hand, atol=1e-6)
    # and the table's steps are coarse: the exact length from 5.00 to 3.40 ft (quadrature) is
    # within 0.5 % of the table's total (2,325 ft as computed here; not the printed value)
    exact = gv.profile_length(CHOW_SEC, 400.0, 0.0016, 0.025, 5.0, 3.40, units=CHOW_UNITS, alpha=1.10)
    assert lib[-1] == pytest.approx(exact, rel=5e-3)


@pytest.mark.reference
@pytest.mark.parametrize("method", ["standard_step", "ivp"])
def test_chow_example_standard_step_and_ivp(method):
    # Example 10-2 computes the same M1 curve at given stations: the depth at the distance where
    # the quadrature puts 3.60 ft must come out as 3.60 ft to the table's 0.01 ft (and far closer).
    dist = -gv.profile_length(CHOW_SEC, 400.0, 0.0016, 0.025, 5.0, 3.60, units=CHOW_UNITS, alpha=1.10)
    t = gv.trace_profile(CHOW_SEC, 400.0, 0.0016, 0.025, 5.0, dist, method=method, units=CHOW_UNITS,
                         alpha=1.10)
    assert t.status == "segment end"
    assert t.depth[0] == pytest.approx(3.60, abs=1e-4)


# ------------------------------------------------------------------ other section shapes

OTHER = [
    # (section, discharge, slope, roughness, control depth, length, label)
    (gv.Circular(diameter=1.5), 1.0, 0.001, 0.013, 1.2, 1500.0, "M1"),
    (gv.Circular(diameter=1.5), 1.0, 0.001, 0.013, 0.6, 500.0, "M2"),
    (gv.Circular(diameter=1.5), 1.0, 0.02, 0.013, 0.45, 100.0, "S2"),
    (gv.Circular(diameter=1.5), 1.0, 0.02, gv.DarcyWeisbach(0.001), 0.2, 100.0, "S3"),
    (gv.Parabolic(top_width=4.0, reference_depth=1.0), 3.0, 0.0005, 0.02, 1.6, 2000.0, "M1"),
    (gv.Triangular(side_slope=2.0), 2.0, -0.001, gv.Chezy(40.0), 1.2, 400.0, "A2"),
]


@pytest.mark.reference
@pytest.mark.parametrize("method", METHODS)
@pytest.mark.parametrize("case", OTHER, ids=lambda c: f"{type(c[0]).__name__}-{c[6]}")
def test_other_sections_match_quadrature(case, method):
    sec, q, s0, rough, y0, length, label = case
    t = gv.trace_profile(sec, q, s0, rough, y0, length, method=method)
    assert t.label == label
    idx = _interior(t)
    x_control = length if t.direction == "upstream" else 0.0
    ref = [gv.depth_at_distance(sec, q, s0, rough, y0, t.x[i] - x_control) for i in idx]
    np.testing.assert_allclose(t.depth[idx], ref, rtol=1e-4)


def test_marcher_instance_and_options_pass_through():
    from gvflow.profiles import StandardStep

    base = gv.trace_profile(SEC, Q, MILD, N, 2.5, 1000.0, method=StandardStep(friction_average="arithmetic"))
    same = gv.trace_profile(SEC, Q, MILD, N, 2.5, 1000.0, friction_average="arithmetic")
    np.testing.assert_array_equal(base.depth, same.depth)
    # an eddy loss adds head loss over the rising M1 curve: the depth upstream ends higher
    lossy = gv.trace_profile(SEC, Q, MILD, N, 2.5, 1000.0, eddy_loss=0.3)
    assert lossy.depth[0] > base.depth[0]
    with pytest.raises(gv.InvalidInputError, match="direct_step"):
        gv.trace_profile(SEC, Q, MILD, N, 2.5, 1000.0, method="runge")

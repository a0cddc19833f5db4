"""The compiled kernels agree with gvflow.sections, gvflow.friction and gvflow.uniform to round-off."""

import math

import numpy as np
import pytest

import gvflow as gv
from gvflow.profiles import _kernel as K
from gvflow.profiles.base import SegmentBatch
from gvflow.profiles.classify import SLOPE_CLASSES, classify_slope

SECTIONS = [
    gv.Rectangular(width=2.5),
    gv.Trapezoidal(bottom_width=3.0, side_slope=1.5),
    gv.Trapezoidal(bottom_width=2.0, side_slope=1.0, side_slope_right=2.5),
    gv.Triangular(side_slope=2.0),
    gv.Circular(diameter=1.2),
    gv.Parabolic(top_width=4.0, reference_depth=1.0),
    gv.WideRectangular(width=40.0),
]
LAWS = [gv.Manning(0.014), gv.Chezy(55.0), gv.DarcyWeisbach(0.002)]


@pytest.mark.parametrize("sec", SECTIONS, ids=lambda s: type(s).__name__)
def test_geometry(sec):
    kind, p0, p1, p2 = sec.kernel_spec()
    ys = np.linspace(0.05, 1.15, 12)
    props = sec.properties(ys)
    for i, y in enumerate(ys):
        a, p, t, m, dp = K.geom(kind, p0, p1, p2, float(y))
        assert a == pytest.approx(props["area"][i], rel=1e-13)
        assert p == pytest.approx(props["wetted_perimeter"][i], rel=1e-13)
        assert t == pytest.approx(props["top_width"][i], rel=1e-12)
        assert m == pytest.approx(props["first_moment"][i], rel=1e-12)
        assert dp == pytest.approx(props["d_wetted_perimeter"][i], rel=1e-12)


@pytest.mark.parametrize("sec", SECTIONS, ids=lambda s: type(s).__name__)
@pytest.mark.parametrize("law", LAWS, ids=lambda r: type(r).__name__)
def test_friction_slope(sec, law):
    kind, p0, p1, p2 = sec.kernel_spec()
    code, coef = law.kernel_spec()
    u = gv.SI
    for y in (0.2, 0.7, 1.1):
        a, p = K.geom(kind, p0, p1, p2, y)[:2]
        sf = K.fslope(code, coef, u.manning_k, u.g, u.kinematic_viscosity, 1.3, a, p)
        assert sf == pytest.approx(gv.friction_slope(sec, 1.3, y, law), rel=1e-11)


@pytest.mark.parametrize("sec", SECTIONS, ids=lambda s: type(s).__name__)
@pytest.mark.parametrize("alpha", [1.0, 1.1])
def test_critical_depth(sec, alpha):
    q = np.array([0.05, 0.4, 1.1, 2.0])
    seg = SegmentBatch.build(sec, 0.001, 0.014, q, alpha=alpha)
    np.testing.assert_allclose(seg.yc, gv.critical_depth(sec, q, alpha=alpha), rtol=1e-12)


@pytest.mark.parametrize("sec", SECTIONS, ids=lambda s: type(s).__name__)
@pytest.mark.parametrize("law", LAWS, ids=lambda r: type(r).__name__)
def test_normal_depth(sec, law):
    q = np.array([0.05, 0.4, 0.75])
    for s0 in (0.0005, 0.01):
        seg = SegmentBatch.build(sec, s0, law, q)
        np.testing.assert_allclose(seg.yn, gv.normal_depth(sec, q, s0, law), rtol=1e-11)


def test_no_normal_depth_on_flat_or_adverse_bed_or_overloaded_conduit():
    seg = SegmentBatch.build(gv.Rectangular(width=2.0), 0.0, 0.014, [1.0])
    assert math.isnan(seg.yn[0])
    seg = SegmentBatch.build(gv.Rectangular(width=2.0), -0.001, 0.014, [1.0])
    assert math.isnan(seg.yn[0])
    seg = SegmentBatch.build(gv.Circular(diameter=0.5), 0.001, 0.013, [2.0])
    assert math.isnan(seg.yn[0])
    with pytest.raises(gv.NoSolutionError):
        gv.normal_depth(gv.Circular(diameter=0.5), 2.0, 0.001, 0.013)


@pytest.mark.parametrize("sec", SECTIONS, ids=lambda s: type(s).__name__)
@pytest.mark.parametrize("law", LAWS, ids=lambda r: type(r).__name__)
def test_segment_constants_follow_the_public_slope_class_and_friction_slope(sec, law):
    # the compiled per-scenario constants: slope class by classify_slope's rule (a slope set to make
    # yn = yc, and yn a hair either side of the critical band, probes the band's edges), Sf at yc
    q = np.array([0.05, 0.4, 0.75])
    yc = gv.critical_depth(sec, q)
    s_crit = float(gv.critical_slope(sec, 0.4, law))
    tol = 1e-3
    for s0 in (0.0005, 0.01, s_crit, 0.0, -0.002):
        seg, sf_c, code = SegmentBatch._checked(sec, s0, law, q, gv.SI, 1.0, None, tol)
        np.testing.assert_allclose(sf_c, gv.friction_slope(sec, q, yc, law), rtol=1e-11)
        for i in range(q.size):
            if s0 > 0 and not np.isfinite(seg.yn[i]):
                assert SLOPE_CLASSES[code[i]] == "mild"  # a surcharging conduit
                continue
            assert SLOPE_CLASSES[code[i]] == classify_slope(s0, seg.yn[i], seg.yc[i], tolerance=tol)
    assert SLOPE_CLASSES[SegmentBatch._checked(sec, s_crit, law, np.array([0.4]), gv.SI, 1.0, None, tol)[2][0]] \
        == "critical"

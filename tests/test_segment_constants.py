"""The marcher's per-segment constants follow the public slope class and friction slope (wiring).

The relations themselves have one home, gvflow._core, checked against independent
references in tests/test_core.py.
"""

import numpy as np
import pytest

import gvflow as gv
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
            assert SLOPE_CLASSES[code[i]] == classify_slope(s0, seg.yn[i], seg.yc[i], critical_tolerance=tol)
    assert SLOPE_CLASSES[SegmentBatch._checked(sec, s_crit, law, np.array([0.4]), gv.SI, 1.0, None, tol)[2][0]] \
        == "critical"

"""Free overfall: brink depth ratio and critical-section distance."""

import numpy as np
import pytest

import gvflow as gv
from gvflow import structures as st


def test_brink_depth_ratio_rouse():
    # Rouse (1936), Civil Engineering 6(4): yb = 0.715 yc, rectangular channel, subcritical
    # approach (from memory - verify). yc from the independent critical-depth solver.
    q = np.array([0.2, 1.0, 5.0])
    yc = gv.critical_depth(gv.Rectangular(width=1.5), q)
    np.testing.assert_allclose(st.brink_depth(q, 1.5), 0.715 * yc, rtol=1e-10)
    assert st.BRINK_DEPTH_RATIO == 0.715


def test_end_depth_discharge_inverts_brink_depth():
    q = np.array([0.3, 2.0, 40.0])
    for units in ("SI", "US"):
        yb = st.brink_depth(q, 3.0, units=units)
        np.testing.assert_allclose(st.discharge_from_brink_depth(yb, 3.0, units=units), q, rtol=1e-13)


def test_critical_section_distance():
    # Rouse (1936): critical depth about 3 to 4 yc upstream of the brink (from memory - verify).
    assert st.critical_section_distance(0.4) == pytest.approx(1.4)
    assert st.critical_section_distance(0.4, factor=3.0) == pytest.approx(1.2)
    with pytest.raises(gv.InvalidInputError, match="range"):
        st.critical_section_distance(0.4, factor=6.0)


def test_bad_overfall_input():
    with pytest.raises(gv.InvalidInputError, match="discharge"):
        st.brink_depth(-1.0, 2.0)
    with pytest.raises(gv.InvalidInputError, match="width"):
        st.discharge_from_brink_depth(0.3, 0.0)

"""Profile classification (gvflow.profiles.classify)."""

import math

import numpy as np
import pytest

import gvflow as gv
from gvflow.profiles import PROFILE_LABELS, PROFILE_SHAPES, classify, classify_slope

NAN = math.nan

# Chow 1959, Open-Channel Hydraulics, §9-2 and fig. 9-2 (REFERENCES "Classification"):
# (slope class, y, yn, yc) -> label
CHOW_TABLE = [
    ("mild", 2.0, 1.5, 1.0, "M1"), ("mild", 1.2, 1.5, 1.0, "M2"), ("mild", 0.5, 1.5, 1.0, "M3"),
    ("steep", 2.0, 0.6, 1.0, "S1"), ("steep", 0.8, 0.6, 1.0, "S2"), ("steep", 0.4, 0.6, 1.0, "S3"),
    ("critical", 1.5, 1.0, 1.0, "C1"), ("critical", 0.5, 1.0, 1.0, "C3"),
    ("horizontal", 1.5, NAN, 1.0, "H2"), ("horizontal", 0.5, NAN, 1.0, "H3"),
    ("adverse", 1.5, NAN, 1.0, "A2"), ("adverse", 0.5, NAN, 1.0, "A3"),
]


@pytest.mark.parametrize("sc, y, yn, yc, label", CHOW_TABLE)
def test_labels_follow_chow(sc, y, yn, yc, label):
    assert classify(sc, y, yn, yc) == label


def test_array_input_gives_array_of_labels():
    out = classify("mild", np.array([2.0, 1.2, 0.5]), 1.5, 1.0)
    assert out.tolist() == ["M1", "M2", "M3"]


def test_boundaries_stated_in_the_docs():
    # A depth equal to a reference depth belongs to zone 2 where it exists.
    assert classify("mild", 1.5, 1.5, 1.0) == "M2"
    assert classify("mild", 1.0, 1.5, 1.0) == "M2"
    assert classify("steep", 1.0, 0.6, 1.0) == "S2"
    assert classify("horizontal", 1.0, NAN, 1.0) == "H2"
    assert classify("critical", 1.0, 1.0, 1.0) == "C1"


def test_shapes_cover_the_twelve_types_and_agree_with_chow():
    assert set(PROFILE_LABELS) == {"M1", "M2", "M3", "S1", "S2", "S3", "C1", "C3", "H2", "H3", "A2", "A3"}
    # dy/dx > 0 for M1, M3, S1, S3, C1, C3, H3, A3; < 0 for M2, S2, H2, A2 (Chow 1959, §9-2).
    rising = {"M1", "M3", "S1", "S3", "C1", "C3", "H3", "A3"}
    for label, shape in PROFILE_SHAPES.items():
        assert shape.label == label
        assert shape.dydx_sign == (1 if label in rising else -1)
        assert shape.direction == ("upstream" if shape.regime == "subcritical" else "downstream")
        assert shape.regime == ("subcritical" if shape.zone == 1 or (shape.zone == 2 and label[0] in "MHA")
                                else "supercritical")
    # what each type tends to in the direction it is computed in (Chow 1959, fig. 9-2)
    assert PROFILE_SHAPES["M1"].tends_to == "normal depth"
    assert PROFILE_SHAPES["M2"].tends_to == "normal depth"
    assert PROFILE_SHAPES["M3"].tends_to == "critical depth"
    assert PROFILE_SHAPES["S1"].tends_to == "critical depth"
    assert PROFILE_SHAPES["S2"].tends_to == "normal depth"
    assert PROFILE_SHAPES["H2"].tends_to == "horizontal surface"


def test_slope_tolerance_is_adjustable():
    assert classify_slope(0.003, 1.004, 1.0) == "mild"
    assert classify_slope(0.003, 1.004, 1.0, critical_tolerance=0.005) == "critical"
    assert classify_slope(0.003, 0.996, 1.0) == "steep"
    assert classify_slope(0.0, NAN, 1.0) == "horizontal"
    assert classify_slope(-0.01, NAN, 1.0) == "adverse"
    assert gv.CRITICAL_SLOPE_TOLERANCE == 1e-3


def test_profile_type_public_function():
    sec = gv.Trapezoidal(bottom_width=3.0, side_slope=1.5)
    q, n = 10.0, 0.015
    yn = gv.normal_depth(sec, q, 0.001, n)
    yc = gv.critical_depth(sec, q)
    assert gv.profile_type(sec, q, 0.001, n, 1.5 * yn) == "M1"
    assert gv.profile_type(sec, q, 0.001, n, [0.5 * (yn + yc), 0.5 * yc]).tolist() == ["M2", "M3"]
    sc = gv.critical_slope(sec, q, n)
    assert gv.profile_type(sec, q, sc * 1.001, n, 2.0) == "C1"  # within the 1e-3 depth band
    assert gv.profile_type(sec, q, sc * 1.001, n, 2.0, critical_tolerance=1e-6) == "S1"
    assert gv.profile_type(sec, q, -0.001, n, 0.5) == "A3"


def test_profile_type_in_an_overloaded_conduit_raises():
    with pytest.raises(gv.NoSolutionError, match="capacity"):
        gv.profile_type(gv.Circular(diameter=0.5), 2.0, 0.001, 0.013, 0.3)


def test_bad_input_raises():
    with pytest.raises(gv.InvalidInputError, match="slope_class"):
        classify("gentle", 1.0, 1.5, 1.0)
    with pytest.raises(gv.InvalidInputError, match="mild slope"):
        classify("mild", 1.0, 0.5, 1.0)
    with pytest.raises(gv.InvalidInputError, match="depth"):
        classify("mild", -1.0, 1.5, 1.0)


def test_one_keyword_for_the_critical_slope_band_and_the_former_names_still_work():
    # critical_tolerance everywhere; tolerance= and slope_tolerance= warn and give the same answer
    import warnings

    sec, q, n = gv.Rectangular(width=3.0), 5.0, 0.015
    sc = gv.critical_slope(sec, q, n)
    assert gv.slope_class(sec, q, sc * 1.003, n, critical_tolerance=0.01) == "critical"
    assert gv.slope_class(sec, q, sc * 1.003, n) == "steep"
    with pytest.warns(FutureWarning, match="tolerance= is now called critical_tolerance="):
        assert gv.slope_class(sec, q, sc * 1.003, n, tolerance=0.01) == "critical"
    with pytest.warns(FutureWarning, match="tolerance= is now called critical_tolerance="):
        assert classify_slope(0.003, 1.004, 1.0, tolerance=0.005) == "critical"
    with pytest.warns(FutureWarning, match="tolerance= is now called critical_tolerance="):
        assert gv.profile_type(sec, q, sc * 1.003, n, 2.0, tolerance=0.01) == "C1"
    with pytest.warns(FutureWarning, match="slope_tolerance= is now called critical_tolerance="):
        old = gv.trace_profile(sec, q, sc * 1.003, n, 2.0, 50.0, slope_tolerance=0.01)
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        new = gv.trace_profile(sec, q, sc * 1.003, n, 2.0, 50.0, critical_tolerance=0.01)
    assert old.label == new.label == "C1"
    with pytest.raises(gv.InvalidInputError, match="give critical_tolerance= only"):
        gv.slope_class(sec, q, sc, n, critical_tolerance=0.01, tolerance=0.01)

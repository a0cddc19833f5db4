"""The GVF equation (gvflow.profiles.equation)."""

import math

import numpy as np
import pytest
from hand_sections import compound_energy_and_conveyance

import gvflow as gv
from gvflow.profiles import PROFILE_SHAPES


def test_wide_rectangle_chezy_closed_form():
    # Wide rectangle with Chezy friction: dy/dx = S0 (1 - (yn/y)^3) / (1 - (yc/y)^3)
    # (Bresse's form of the GVF equation; Chow 1959, Open-Channel Hydraulics, §10-2, eq. 10-12).
    sec, q_unit, c, s0 = gv.WideRectangular(width=50.0), 2.0, 45.0, 0.0005
    yn = (q_unit**2 / (c**2 * s0)) ** (1 / 3)
    yc = (q_unit**2 / gv.SI.g) ** (1 / 3)
    y = np.array([0.3, 0.6, 1.2, 2.5, 4.0])
    expected = s0 * (1 - (yn / y) ** 3) / (1 - (yc / y) ** 3)
    got = gv.gvf_slope(sec, q_unit * 50.0, s0, gv.Chezy(c), y)
    np.testing.assert_allclose(got, expected, rtol=1e-12)


def test_wide_rectangle_alpha_enters_the_denominator_only():
    # With alpha: yc^3 = alpha q^2 / g (Chow 1959, eq. 4-5 with the energy coefficient).
    sec, q_unit, c, s0, alpha = gv.WideRectangular(width=10.0), 1.5, 50.0, 0.001, 1.15
    yn = (q_unit**2 / (c**2 * s0)) ** (1 / 3)
    yc = (alpha * q_unit**2 / gv.SI.g) ** (1 / 3)
    y = 1.7
    expected = s0 * (1 - (yn / y) ** 3) / (1 - (yc / y) ** 3)
    assert gv.gvf_slope(sec, q_unit * 10.0, s0, gv.Chezy(c), y, alpha=alpha) == pytest.approx(expected, rel=1e-12)


def test_zero_at_normal_depth_and_reciprocal_zero_at_critical_depth():
    sec = gv.Trapezoidal(bottom_width=3.0, side_slope=1.5)
    q, s0, n = 10.0, 0.001, 0.015
    yn = gv.normal_depth(sec, q, s0, n)
    yc = gv.critical_depth(sec, q)
    assert abs(gv.gvf_slope(sec, q, s0, n, yn)) < 1e-14
    assert abs(gv.gvf_inverse_slope(sec, q, s0, n, yc)) < 1e-10
    assert math.isinf(gv.gvf_inverse_slope(sec, q, s0, n, yn)) or abs(gv.gvf_inverse_slope(sec, q, s0, n, yn)) > 1e10


def test_reciprocal_and_terms_consistent():
    sec = gv.Circular(diameter=1.5)
    y = np.linspace(0.2, 1.4, 7)
    num, den = gv.gvf_terms(sec, 0.8, 0.002, 0.013, y)
    np.testing.assert_allclose(gv.gvf_slope(sec, 0.8, 0.002, 0.013, y), num / den, rtol=1e-14)
    np.testing.assert_allclose(gv.gvf_inverse_slope(sec, 0.8, 0.002, 0.013, y), den / num, rtol=1e-14)
    # the numerator is S0 - Sf with the foundation's friction slope; the denominator 1 - Fr^2
    np.testing.assert_allclose(num, 0.002 - gv.friction_slope(sec, 0.8, y, 0.013), rtol=1e-13, atol=1e-16)
    np.testing.assert_allclose(den, 1 - gv.froude_number(sec, 0.8, y) ** 2, rtol=1e-12, atol=1e-14)


def test_broadcasting_and_float_out():
    sec = gv.Rectangular(width=2.0)
    out = gv.gvf_slope(sec, np.array([[1.0], [2.0]]), 0.001, 0.013, np.array([0.5, 1.0, 1.5]))
    assert out.shape == (2, 3)
    assert isinstance(gv.gvf_slope(sec, 1.0, 0.001, 0.013, 1.0), float)


@pytest.mark.parametrize("label", sorted(PROFILE_SHAPES))
def test_sign_matches_theory_for_each_type(label):
    # Sign of dy/dx per type (Chow 1959, §9-2; REFERENCES "Classification").
    sec = gv.Trapezoidal(bottom_width=3.0, side_slope=1.5)
    q, n = 10.0, 0.015
    shape = PROFILE_SHAPES[label]
    slope = {"mild": 0.001, "steep": 0.02, "horizontal": 0.0, "adverse": -0.002,
             "critical": gv.critical_slope(sec, q, n)}[shape.slope_class]
    yc = gv.critical_depth(sec, q)
    yn = gv.normal_depth(sec, q, slope, n) if slope > 0 else math.nan
    lo, hi = (min(yn, yc), max(yn, yc)) if slope > 0 else (yc, yc)
    y = {1: 1.3 * hi, 2: 0.5 * (lo + hi) if slope > 0 else 1.3 * yc, 3: 0.6 * lo}[shape.zone]
    assert gv.classify(shape.slope_class, y, yn, yc) == label
    assert np.sign(gv.gvf_slope(sec, q, slope, n, y)) == shape.dydx_sign


def test_bad_input_raises():
    sec = gv.Rectangular(width=2.0)
    with pytest.raises(gv.InvalidInputError, match="depth"):
        gv.gvf_slope(sec, 1.0, 0.001, 0.013, -1.0)
    with pytest.raises(gv.InvalidInputError, match="alpha"):
        gv.gvf_slope(sec, 1.0, 0.001, 0.013, 1.0, alpha=0.0)
    with pytest.raises(gv.InvalidInputError, match="slope"):
        gv.gvf_slope(sec, 1.0, float("nan"), 0.013, 1.0)


def test_gvf_terms_of_a_compound_section_use_its_compound_froude_number():
    # The compound section of tests/hand_sections.py above bankfull: S0 - Sf with the Manning zone
    # conveyances summed, and 1 - Fr² = dE/dy with alpha varying with depth (Chow 1959, §2-7; dE/dy by
    # central differences), all from the rectangles' exact areas.
    q, s0, y = 60.0, 0.0005, 2.6

    section = gv.Surveyed(offset=[-100, -100, 0, 0, 10, 10, 110, 110], elevation=[5, 2, 2, 0, 0, 2, 2, 5],
                          roughness=[0.05, 0.03, 0.05], zone_edges=[0, 10])
    num, den = gv.gvf_terms(section, q, s0, None, y)
    energy = compound_energy_and_conveyance
    assert num == pytest.approx(s0 - (q / energy(y, q)[1]) ** 2, rel=1e-12)
    h = 1e-6
    assert den == pytest.approx((energy(y + h, q)[0] - energy(y - h, q)[0]) / (2 * h), rel=1e-7)

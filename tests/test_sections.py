"""Cross-section geometry against exact formulas and independent numerical integration.

Sources: the geometric elements of Chow, *Open-Channel Hydraulics* (1959), table 2-1
(trapezoid, circle, parabola), also listed in REFERENCES.md (exact). Where a property
can be obtained a second, independent way (area as the integral of the top width,
first moment as the integral of (y - eta) T(eta), wetted perimeter as an arc length)
it is computed here by adaptive quadrature (scipy.integrate.quad) rather than from
the same closed form the library uses. (Table numbers of Chow 1959 are cited from memory.)
"""

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.integrate import quad

import gvflow as gv

RTOL = 1e-12  # exact formulas: agreement to rounding


def all_sections():
    return [
        gv.Rectangular(width=3.0),
        gv.Trapezoidal(bottom_width=2.0, side_slope=1.5),
        gv.Trapezoidal(bottom_width=4.0, side_slope=0.5, side_slope_right=3.0),
        gv.Trapezoidal(bottom_width=0.0, side_slope=2.0),
        gv.Triangular(side_slope=1.25),
        gv.Triangular(side_slope=1.0, side_slope_right=2.5),
        gv.Circular(diameter=1.8),
        gv.Parabolic(top_width=5.0, reference_depth=1.5),
        gv.WideRectangular(width=50.0),
    ]


SECTIONS = all_sections()
IDS = [repr(s) for s in SECTIONS]


def depths_for(sec, n=25):
    top = 0.999 * sec.max_depth if sec.closed else 4.0
    return np.linspace(0.02, top, n)


def top_width_exact(sec, eta):
    """Independent top-width formulas used as integrands (Chow 1959, table 2-1)."""
    if isinstance(sec, gv.Circular):
        d = sec.diameter
        return 2.0 * math.sqrt(max(eta * (d - eta), 0.0))
    if isinstance(sec, gv.Parabolic):
        return sec.top_width_at_reference * math.sqrt(eta / sec.reference_depth)
    if isinstance(sec, gv.Rectangular | gv.WideRectangular):
        return sec.width
    b = getattr(sec, "bottom_width", 0.0)
    zl = sec.side_slope
    zr = zl if sec.side_slope_right is None else sec.side_slope_right
    return b + (zl + zr) * eta


# -- closed forms ---------------------------------------------------------------------

def test_trapezoid_closed_forms():
    # A = (b + z y) y, P = b + 2 y sqrt(1 + z²), T = b + 2 z y (Chow 1959, table 2-1; exact)
    b, z = 2.0, 1.5
    sec = gv.Trapezoidal(bottom_width=b, side_slope=z)
    y = np.linspace(0.01, 10.0, 101)
    np.testing.assert_allclose(sec.area(y), (b + z * y) * y, rtol=RTOL)
    np.testing.assert_allclose(sec.wetted_perimeter(y), b + 2 * y * np.sqrt(1 + z * z), rtol=RTOL)
    np.testing.assert_allclose(sec.top_width(y), b + 2 * z * y, rtol=RTOL)
    np.testing.assert_allclose(sec.hydraulic_radius(y), (b + z * y) * y / (b + 2 * y * np.sqrt(1 + z * z)),
                               rtol=RTOL)
    np.testing.assert_allclose(sec.hydraulic_depth(y), (b + z * y) * y / (b + 2 * z * y), rtol=RTOL)


def test_rectangle_and_triangle_closed_forms():
    # Rectangle A = b y, P = b + 2y, centroid y/2; triangle A = z y², P = 2 y sqrt(1+z²),
    # centroid y/3 (Chow 1959, table 2-1; exact)
    y = np.linspace(0.05, 6.0, 60)
    rect = gv.Rectangular(width=2.5)
    np.testing.assert_allclose(rect.area(y), 2.5 * y, rtol=RTOL)
    np.testing.assert_allclose(rect.wetted_perimeter(y), 2.5 + 2 * y, rtol=RTOL)
    np.testing.assert_allclose(rect.centroid_depth(y), y / 2, rtol=RTOL)
    tri = gv.Triangular(side_slope=0.75)
    np.testing.assert_allclose(tri.area(y), 0.75 * y * y, rtol=RTOL)
    np.testing.assert_allclose(tri.wetted_perimeter(y), 2 * y * math.sqrt(1 + 0.75 ** 2), rtol=RTOL)
    np.testing.assert_allclose(tri.top_width(y), 1.5 * y, rtol=RTOL)
    np.testing.assert_allclose(tri.centroid_depth(y), y / 3, rtol=RTOL)


def test_unequal_side_slopes():
    # Each bank contributes its own slope: A = (b + (zl+zr) y/2) y,
    # P = b + y (sqrt(1+zl²) + sqrt(1+zr²)), T = b + (zl+zr) y (exact geometry)
    b, zl, zr = 4.0, 0.5, 3.0
    sec = gv.Trapezoidal(bottom_width=b, side_slope=zl, side_slope_right=zr)
    y = np.linspace(0.1, 5.0, 50)
    np.testing.assert_allclose(sec.area(y), (b + 0.5 * (zl + zr) * y) * y, rtol=RTOL)
    np.testing.assert_allclose(sec.wetted_perimeter(y), b + y * (math.hypot(1, zl) + math.hypot(1, zr)), rtol=RTOL)
    np.testing.assert_allclose(sec.top_width(y), b + (zl + zr) * y, rtol=RTOL)
    # an unsymmetric V has the area and top width of the symmetric V with the mean slope,
    # but a larger wetted perimeter (sqrt(1+z²) is convex)
    tri = gv.Triangular(side_slope=zl, side_slope_right=zr)
    sym = gv.Triangular(side_slope=0.5 * (zl + zr))
    np.testing.assert_allclose(tri.area(y), sym.area(y), rtol=RTOL)
    np.testing.assert_allclose(tri.top_width(y), sym.top_width(y), rtol=RTOL)
    assert np.all(tri.wetted_perimeter(y) > sym.wetted_perimeter(y))
    # a trapezoid of zero bottom width is the triangle
    np.testing.assert_allclose(gv.Trapezoidal(bottom_width=0.0, side_slope=zl, side_slope_right=zr)
                               .wetted_perimeter(y), tri.wetted_perimeter(y), rtol=RTOL)


def test_wide_rectangle_hydraulic_radius_is_depth():
    # The wide-channel idealisation: P = b, so R = y (Chow 1959, ch. 10)
    sec = gv.WideRectangular(width=20.0)
    y = np.linspace(0.1, 5.0, 30)
    np.testing.assert_allclose(sec.hydraulic_radius(y), y, rtol=RTOL)
    np.testing.assert_allclose(sec.wetted_perimeter(y), 20.0, rtol=RTOL)
    np.testing.assert_allclose(sec.area(y), gv.Rectangular(width=20.0).area(y), rtol=RTOL)
    assert np.all(gv.Rectangular(width=20.0).hydraulic_radius(y) < y)


def test_circle_against_exact_formulas_at_many_depths():
    # theta = 2 arccos(1 - 2y/D), A = D²(theta - sin theta)/8, P = D theta/2, T = D sin(theta/2)
    # (Chow 1959, table 2-1; REFERENCES.md, exact)
    d = 2.4
    sec = gv.Circular(diameter=d)
    y = np.linspace(1e-4, d, 400)
    theta = 2 * np.arccos(1 - 2 * y / d)
    np.testing.assert_allclose(sec.area(y), d * d * (theta - np.sin(theta)) / 8, rtol=1e-12)
    np.testing.assert_allclose(sec.wetted_perimeter(y), d * theta / 2, rtol=1e-12)
    np.testing.assert_allclose(sec.top_width(y), d * np.sin(theta / 2), rtol=1e-9, atol=1e-12)
    # and against an independent form: T = 2 sqrt(y (D - y)) (chord of the circle)
    np.testing.assert_allclose(sec.top_width(y), 2 * np.sqrt(y * (d - y)), rtol=1e-9, atol=1e-9)


def test_circle_landmarks():
    # Half full: A = pi D²/8, P = pi D/2, T = D, R = D/4; full: A = pi D²/4, P = pi D, T = 0 (exact)
    d = 1.5
    sec = gv.Circular(diameter=d)
    assert sec.area(d / 2) == pytest.approx(math.pi * d * d / 8, rel=1e-14)
    assert sec.wetted_perimeter(d / 2) == pytest.approx(math.pi * d / 2, rel=1e-14)
    assert sec.top_width(d / 2) == pytest.approx(d, rel=1e-14)
    assert sec.hydraulic_radius(d / 2) == pytest.approx(d / 4, rel=1e-14)
    assert sec.area(d) == pytest.approx(math.pi * d * d / 4, rel=1e-14)
    assert sec.wetted_perimeter(d) == pytest.approx(math.pi * d, rel=1e-14)
    assert sec.top_width(d) == pytest.approx(0.0, abs=1e-7)
    assert sec.hydraulic_radius(d) == pytest.approx(d / 4, rel=1e-14)
    assert sec.hydraulic_depth(d) == math.inf
    # first moment when full: A times D/2 (centroid at the centre)
    assert sec.first_moment(d) == pytest.approx(math.pi * d * d / 4 * d / 2, rel=1e-12)


def test_parabola_definition_and_area():
    # T = T_ref sqrt(y / y_ref); A = (2/3) T y; centroid 0.4 y (Chow 1959, table 2-1; exact)
    sec = gv.Parabolic(top_width=5.0, reference_depth=1.5)
    assert sec.top_width(1.5) == pytest.approx(5.0, rel=1e-14)
    y = np.linspace(0.05, 4.0, 40)
    t = 5.0 * np.sqrt(y / 1.5)
    np.testing.assert_allclose(sec.top_width(y), t, rtol=RTOL)
    np.testing.assert_allclose(sec.area(y), 2 / 3 * t * y, rtol=RTOL)
    np.testing.assert_allclose(sec.centroid_depth(y), 0.4 * y, rtol=RTOL)


# -- independent numerical integration ----------------------------------------------------

@pytest.mark.parametrize("sec", SECTIONS, ids=IDS)
def test_area_and_first_moment_by_quadrature(sec):
    # A(y) = int_0^y T(eta) d eta and A ybar = int_0^y (y - eta) T(eta) d eta (definition)
    for y in depths_for(sec, 9):
        area = quad(lambda e: top_width_exact(sec, e), 0.0, y, epsabs=0, epsrel=1e-13, limit=200)[0]
        moment = quad(lambda e, y=y: (y - e) * top_width_exact(sec, e), 0.0, y,
                      epsabs=0, epsrel=1e-13, limit=200)[0]
        assert sec.area(y) == pytest.approx(area, rel=1e-10)
        assert sec.first_moment(y) == pytest.approx(moment, rel=1e-10)
        assert sec.centroid_depth(y) == pytest.approx(moment / area, rel=1e-10)


def test_circle_perimeter_by_arc_length():
    # P = 2 int_0^y ds/d eta d eta with the half chord x(eta) = sqrt(eta (D - eta)); the arc
    # length element is (D/2)/sqrt(eta (D - eta)) (independent of the theta form)
    d = 1.8
    sec = gv.Circular(diameter=d)
    for y in np.linspace(0.05, 0.95 * d, 12):
        p = 2 * quad(lambda e: 0.5 * d / math.sqrt(e * (d - e)), 0.0, y, epsrel=1e-12, limit=200)[0]
        assert sec.wetted_perimeter(y) == pytest.approx(p, rel=1e-9)


def test_parabola_perimeter_by_arc_length():
    # Parabola y = (2x/c)², c = T_ref/sqrt(y_ref): P = 2 int_0^{T/2} sqrt(1 + (8x/c²)²) dx
    sec = gv.Parabolic(top_width=5.0, reference_depth=1.5)
    c = 5.0 / math.sqrt(1.5)
    for y in np.linspace(0.02, 6.0, 15):
        half = 0.5 * c * math.sqrt(y)
        p = 2 * quad(lambda x: math.sqrt(1 + (8 * x / (c * c)) ** 2), 0.0, half, epsrel=1e-13)[0]
        assert sec.wetted_perimeter(y) == pytest.approx(p, rel=1e-11)


# -- derivatives against finite differences -----------------------------------------------

@pytest.mark.parametrize("sec", SECTIONS, ids=IDS)
def test_derivatives_match_finite_differences(sec):
    # Central differences, step h = 1e-6 y: truncation O(h²), rounding O(eps/h) ~ 1e-10
    y = depths_for(sec, 30)
    if sec.closed:
        y = y[(y > 0.05 * sec.diameter) & (y < 0.95 * sec.diameter)]
    h = 1e-6 * y
    fd_area = (sec.area(y + h) - sec.area(y - h)) / (2 * h)
    fd_top = (sec.top_width(y + h) - sec.top_width(y - h)) / (2 * h)
    fd_per = (sec.wetted_perimeter(y + h) - sec.wetted_perimeter(y - h)) / (2 * h)
    np.testing.assert_allclose(sec.d_area(y), fd_area, rtol=1e-7)
    np.testing.assert_allclose(sec.d_top_width(y), fd_top, rtol=1e-6, atol=1e-7)
    np.testing.assert_allclose(sec.d_wetted_perimeter(y), fd_per, rtol=1e-6, atol=1e-7)


def test_circle_derivative_limits():
    # dT/dy = (D - 2y)/sqrt(y(D - y)): zero at mid-depth, -inf at the crown; dP/dy = D/sqrt(y(D-y))
    sec = gv.Circular(diameter=2.0)
    assert sec.d_top_width(1.0) == pytest.approx(0.0, abs=1e-14)
    assert sec.d_top_width(2.0) == -math.inf
    assert sec.d_wetted_perimeter(1.0) == pytest.approx(2.0, rel=1e-14)
    assert sec.d_wetted_perimeter(2.0) == math.inf


def test_properties_bundle_matches_methods():
    sec = gv.Trapezoidal(bottom_width=3.0, side_slope=2.0, side_slope_right=1.0)
    y = np.array([0.3, 1.1, 2.7])
    props = sec.properties(y)
    np.testing.assert_array_equal(props["area"], sec.area(y))
    np.testing.assert_array_equal(props["wetted_perimeter"], sec.wetted_perimeter(y))
    np.testing.assert_array_equal(props["top_width"], sec.top_width(y))
    np.testing.assert_array_equal(props["hydraulic_radius"], sec.hydraulic_radius(y))
    np.testing.assert_array_equal(props["centroid_depth"], sec.centroid_depth(y))
    np.testing.assert_array_equal(props["d_top_width"], sec.d_top_width(y))
    np.testing.assert_array_equal(props["d_wetted_perimeter"], sec.d_wetted_perimeter(y))


# -- floats, arrays, immutability -----------------------------------------------------------

@pytest.mark.parametrize("sec", SECTIONS, ids=IDS)
def test_float_in_float_out_and_arrays_keep_shape(sec):
    y = depths_for(sec, 6).reshape(2, 3)
    for name in ("area", "wetted_perimeter", "top_width", "hydraulic_radius", "hydraulic_depth",
                 "centroid_depth", "first_moment", "d_top_width", "d_wetted_perimeter"):
        method = getattr(sec, name)
        scalar = method(float(y[1, 2]))
        assert type(scalar) is float, name
        arr = method(y)
        assert arr.shape == (2, 3), name
        assert arr[1, 2] == scalar, name


@given(st.floats(0.01, 50.0), st.floats(0.0, 4.0), st.floats(0.0, 4.0), st.floats(0.01, 20.0))
@settings(max_examples=60, deadline=None)
def test_trapezoid_geometry_identities(b, zl, zr, y):
    # A = int T dy, so A(y) lies between T(0) y and T(y) y; R <= y; A ybar = b y²/2 + (zl+zr) y³/6
    sec = gv.Trapezoidal(bottom_width=b, side_slope=zl, side_slope_right=zr)
    assert b * y * (1 - 1e-14) <= sec.area(y) <= sec.top_width(y) * y * (1 + 1e-14)
    assert sec.hydraulic_radius(y) <= y * (1 + 1e-14)
    assert sec.first_moment(y) == pytest.approx(b * y * y / 2 + (zl + zr) * y ** 3 / 6, rel=1e-12)


def test_sections_are_immutable():
    sec = gv.Rectangular(width=2.0)
    with pytest.raises((TypeError, ValueError)):
        sec.width = 3.0
    assert sec.width == 2.0


def test_json_round_trip_keeps_shape():
    from pydantic import TypeAdapter

    from gvflow.sections import AnySection

    adapter = TypeAdapter(AnySection)
    for sec in SECTIONS:
        back = adapter.validate_json(adapter.dump_json(sec, by_alias=True))
        assert type(back) is type(sec)
        assert back.area(0.7) == sec.area(0.7)


# -- bad input ---------------------------------------------------------------------------

@pytest.mark.parametrize("bad", [0.0, -1.0, math.nan, math.inf, -math.inf])
@pytest.mark.parametrize("make, field", [
    (lambda v: gv.Rectangular(width=v), "width"),
    (lambda v: gv.WideRectangular(width=v), "width"),
    (lambda v: gv.Circular(diameter=v), "diameter"),
    (lambda v: gv.Triangular(side_slope=v), "side_slope"),
    (lambda v: gv.Triangular(side_slope=1.0, side_slope_right=v), "side_slope_right"),
    (lambda v: gv.Parabolic(top_width=v, reference_depth=1.0), "top_width"),
    (lambda v: gv.Parabolic(top_width=2.0, reference_depth=v), "reference_depth"),
])
def test_bad_dimensions_raise_naming_the_field(make, field, bad):
    with pytest.raises(gv.InvalidInputError, match=field):
        make(bad)


@pytest.mark.parametrize("bad", [-1.0, math.nan, math.inf])
def test_bad_trapezoid_dimensions(bad):
    with pytest.raises(gv.InvalidInputError, match="bottom_width"):
        gv.Trapezoidal(bottom_width=bad, side_slope=1.0)
    with pytest.raises(gv.InvalidInputError, match="side_slope"):
        gv.Trapezoidal(bottom_width=1.0, side_slope=bad)
    with pytest.raises(gv.InvalidInputError, match="side_slope_right"):
        gv.Trapezoidal(bottom_width=1.0, side_slope=1.0, side_slope_right=bad)


def test_degenerate_trapezoid_and_unknown_field():
    with pytest.raises(gv.InvalidInputError, match="bottom_width or side_slope"):
        gv.Trapezoidal(bottom_width=0.0, side_slope=0.0)
    with pytest.raises(gv.InvalidInputError, match="bottm_width"):
        gv.Trapezoidal(bottm_width=1.0, side_slope=1.0)


@pytest.mark.parametrize("sec", SECTIONS, ids=IDS)
@pytest.mark.parametrize("bad", [0.0, -0.5, math.nan, math.inf])
def test_bad_depth_raises(sec, bad):
    with pytest.raises(gv.InvalidInputError, match="depth"):
        sec.area(bad)
    with pytest.raises(gv.InvalidInputError, match="depth"):
        sec.top_width(np.array([0.5, bad]))


def test_depth_above_crown_raises():
    sec = gv.Circular(diameter=1.0)
    with pytest.raises(gv.InvalidInputError, match="conduit height"):
        sec.area(1.01)
    with pytest.raises(gv.InvalidInputError, match="conduit height"):
        sec.wetted_perimeter(np.array([0.2, 1.5]))

"""Best hydraulic sections found by numerical search, checked against the classical optima.

Source of the optima: Chow, *Open-Channel Hydraulics* (1959), §7-6 and table 7-1 (best hydraulic
sections; exact, reproducible by calculus): rectangle y = b/2; trapezoid half a regular hexagon
(z = 1/sqrt 3, b = 2y/sqrt 3); triangle with a 90° vertex (z = 1); all but the triangle have
R = y/2. gvflow finds the optimum by minimising the wetted perimeter over the shape parameters
with its own normal-depth solver, so these closed forms are independent of the code under test.
(Section and table numbers of Chow 1959 are cited from memory; the optima are exact.)
"""

import math

import pytest

import gvflow as gv

SQRT3 = math.sqrt(3.0)
OPT = 1e-6  # shape parameters of a numerically located, flat minimum


@pytest.mark.parametrize("q, s, n, units", [(10.0, 0.001, 0.015, "SI"), (0.05, 0.02, 0.011, "SI"),
                                            (350.0, 0.0004, 0.025, "US")])
def test_best_rectangle_is_twice_as_wide_as_deep(q, s, n, units):
    best = gv.best_hydraulic_section("rectangular", q, s, n, units=units)
    assert isinstance(best.section, gv.Rectangular)
    assert best.section.width / best.depth == pytest.approx(2.0, rel=OPT)
    assert best.hydraulic_radius / best.depth == pytest.approx(0.5, rel=OPT)
    # closed form: A = 2y², R = y/2, so Q = (k/n) 2 y² (y/2)^(2/3) sqrt(S)
    k = 1.0 if units == "SI" else 1.486
    y_exact = (q * n / (k * 2 * 0.5 ** (2 / 3) * math.sqrt(s))) ** 0.375
    assert best.depth == pytest.approx(y_exact, rel=OPT)


@pytest.mark.parametrize("q, s, n, units", [(10.0, 0.001, 0.015, "SI"), (3.0, 0.0005, 0.02, "US"),
                                            (0.002, 0.05, 0.012, "SI")])
def test_best_trapezoid_is_half_a_hexagon(q, s, n, units):
    best = gv.best_hydraulic_section("trapezoidal", q, s, n, units=units)
    sec = best.section
    assert isinstance(sec, gv.Trapezoidal)
    assert sec.side_slope == pytest.approx(1 / SQRT3, rel=OPT)  # banks at 60° to the horizontal
    assert sec.bottom_width / best.depth == pytest.approx(2 / SQRT3, rel=OPT)
    assert best.hydraulic_radius / best.depth == pytest.approx(0.5, rel=OPT)
    # half hexagon: the three wetted sides are equal, each 2y/sqrt 3, and A = sqrt(3) y²
    assert best.wetted_perimeter == pytest.approx(3 * sec.bottom_width, rel=OPT)
    assert best.area == pytest.approx(SQRT3 * best.depth ** 2, rel=OPT)


@pytest.mark.parametrize("z", [0.5, 1.0, 2.0, 3.0])
def test_best_trapezoid_with_prescribed_banks(z):
    # For fixed z the best bottom width is b = 2y (sqrt(1 + z²) - z), and again R = y/2
    # (Chow 1959, §7-6; exact)
    best = gv.best_hydraulic_section("trapezoidal", 25.0, 0.0008, 0.02, side_slope=z)
    assert best.section.side_slope == z
    assert best.section.bottom_width / best.depth == pytest.approx(2 * (math.sqrt(1 + z * z) - z), rel=OPT)
    assert best.hydraulic_radius / best.depth == pytest.approx(0.5, rel=OPT)


@pytest.mark.parametrize("q, s, n", [(10.0, 0.001, 0.015), (0.3, 0.01, 0.03)])
def test_best_triangle_has_a_right_angle(q, s, n):
    best = gv.best_hydraulic_section("triangular", q, s, n)
    assert isinstance(best.section, gv.Triangular)
    assert best.section.side_slope == pytest.approx(1.0, rel=OPT)
    assert best.hydraulic_radius / best.depth == pytest.approx(1 / (2 * math.sqrt(2)), rel=OPT)


def test_best_rectangle_and_triangle_are_equally_good():
    # Both optima have R = sqrt(A/8) (A = 2y², R = y/2 and A = y², R = y/(2 sqrt 2)), so for one Q
    # they need the same area and the same perimeter; the half hexagon beats both
    # (Chow 1959, table 7-1; exact)
    args = (10.0, 0.001, 0.015)
    rect = gv.best_hydraulic_section("rectangular", *args)
    tri = gv.best_hydraulic_section("triangular", *args)
    hexa = gv.best_hydraulic_section("trapezoidal", *args)
    assert rect.wetted_perimeter == pytest.approx(tri.wetted_perimeter, rel=1e-9)
    assert rect.area == pytest.approx(tri.area, rel=1e-9)
    assert hexa.wetted_perimeter < rect.wetted_perimeter
    # Best rectangle A = P²/8, half hexagon A = P²/(4 sqrt 3); with Manning Q ~ A^(5/3) P^(-2/3)
    # = c^(5/3) P^(8/3) for A = c P², so at equal Q: P_hex/P_rect = ((1/8)(4 sqrt 3))^(5/8)
    # = (sqrt(3)/2)^(5/8) (exact)
    assert hexa.wetted_perimeter / rect.wetted_perimeter == pytest.approx((SQRT3 / 2) ** 0.625, rel=1e-8)


@pytest.mark.parametrize("rough", [gv.Chezy(50.0), gv.DarcyWeisbach(0.002)])
def test_optimum_shape_does_not_depend_on_the_resistance_law(rough):
    # Any law whose conveyance depends on A and R only (growing with both) has the same
    # least-perimeter shape: the one with the largest R for its area (Chow 1959, §7-6)
    best = gv.best_hydraulic_section("trapezoidal", 10.0, 0.001, rough)
    assert best.section.side_slope == pytest.approx(1 / SQRT3, rel=1e-5)
    assert best.hydraulic_radius / best.depth == pytest.approx(0.5, rel=1e-6)
    rect = gv.best_hydraulic_section("rectangular", 10.0, 0.001, rough)
    assert rect.section.width / rect.depth == pytest.approx(2.0, rel=OPT)


def test_result_is_consistent_and_frozen():
    best = gv.best_hydraulic_section("trapezoidal", 12.0, 0.0006, gv.Manning(0.017))
    sec, y = best.section, best.depth
    assert gv.normal_depth(sec, 12.0, 0.0006, 0.017) == pytest.approx(y, rel=1e-12)
    assert best.area == pytest.approx(sec.area(y), rel=1e-14)
    assert best.wetted_perimeter == pytest.approx(sec.wetted_perimeter(y), rel=1e-14)
    assert best.top_width == pytest.approx(sec.top_width(y), rel=1e-14)
    assert best.velocity == pytest.approx(12.0 / sec.area(y), rel=1e-14)
    assert best.discharge == 12.0 and best.slope == 0.0006
    with pytest.raises(AttributeError):
        best.depth = 1.0


def test_neighbours_of_the_optimum_need_more_perimeter():
    # The result is a minimum: a slightly wider or narrower rectangle carrying the same Q has a
    # larger wetted perimeter
    q, s, n = 8.0, 0.002, 0.014
    best = gv.best_hydraulic_section("rectangular", q, s, n)
    for factor in (0.97, 1.03):
        sec = gv.Rectangular(width=best.section.width * factor)
        p = sec.wetted_perimeter(gv.normal_depth(sec, q, s, n))
        assert p > best.wetted_perimeter


@pytest.mark.parametrize("bad", [0.0, -1.0, math.nan, math.inf])
def test_bad_numbers_raise(bad):
    with pytest.raises(gv.InvalidInputError, match="discharge"):
        gv.best_hydraulic_section("rectangular", bad, 0.001, 0.015)
    with pytest.raises(gv.InvalidInputError, match="slope"):
        gv.best_hydraulic_section("rectangular", 1.0, bad, 0.015)
    with pytest.raises(gv.InvalidInputError, match="roughness"):
        gv.best_hydraulic_section("rectangular", 1.0, 0.001, bad)


def test_bad_shape_and_side_slope_raise():
    with pytest.raises(gv.InvalidInputError, match="valid choices are 'rectangular', 'trapezoidal', 'triangular'"):
        gv.best_hydraulic_section("circular", 1.0, 0.001, 0.015)
    with pytest.raises(gv.InvalidInputError, match="side_slope"):
        gv.best_hydraulic_section("rectangular", 1.0, 0.001, 0.015, side_slope=1.0)
    for bad in (-0.5, math.nan, math.inf):
        with pytest.raises(gv.InvalidInputError, match="side_slope"):
            gv.best_hydraulic_section("trapezoidal", 1.0, 0.001, 0.015, side_slope=bad)
    with pytest.raises(gv.InvalidInputError, match="side_slope"):
        gv.best_hydraulic_section("triangular", 1.0, 0.001, 0.015, side_slope=0.0)

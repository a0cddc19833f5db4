"""The verification helpers (gvflow.verify) against closed forms."""

import math

import numpy as np
import pytest
from hand_sections import compound_energy_and_conveyance

import gvflow as gv
from gvflow.verify import bresse_function

WIDE = gv.WideRectangular(width=100.0)
Q_WIDE, C, S0 = 300.0, gv.Chezy(50.0), 0.0004  # q = 3 m²/s
YN = (9.0 / (50.0**2 * S0)) ** (1 / 3)
YC = (9.0 / gv.SI.g) ** (1 / 3)


def test_bresse_function_is_the_integral_of_one_over_one_minus_eta_cubed():
    # phi'(eta) = 1/(1 - eta³) (Chow 1959, Open-Channel Hydraulics, §10-2; exact)
    eta = np.array([0.2, 0.6, 0.95, 1.05, 1.5, 3.0, 10.0])
    h = 1e-6 * eta
    deriv = (np.asarray(bresse_function(eta + h)) - np.asarray(bresse_function(eta - h))) / (2 * h)
    np.testing.assert_allclose(deriv, 1 / (1 - eta**3), rtol=1e-7)


@pytest.mark.parametrize("y1, y2", [(4.0, 2.5), (2.5, 2.1), (1.9, 1.2), (1.5, 1.0), (0.5, 0.9)])
def test_bresse_equals_quadrature(y1, y2):
    # Bresse (1860) closed form vs adaptive quadrature of dx/dy: both exact.
    xb = gv.bresse_length(WIDE, Q_WIDE, S0, C, y1, y2)
    xq = gv.profile_length(WIDE, Q_WIDE, S0, C, y1, y2)
    assert xb == pytest.approx(xq, rel=1e-10)


def test_bresse_steep_zones_equal_quadrature():
    s0 = 0.01  # yn = (9/(2500*0.01))^(1/3) = 0.711 < yc = 0.972: steep
    for y1, y2 in [(1.5, 2.0), (0.95, 0.75), (0.3, 0.6)]:
        assert gv.bresse_length(WIDE, Q_WIDE, s0, C, y1, y2) == pytest.approx(
            gv.profile_length(WIDE, Q_WIDE, s0, C, y1, y2), rel=1e-10)


def test_direct_integration_equals_bresse_with_chezy():
    # Chezy wide rectangle: N = M = 3, J = 3; the varied-flow-function method is Bresse's.
    n, m = gv.hydraulic_exponents(WIDE, 2.0, C)
    assert (n, m) == (pytest.approx(3.0, abs=1e-14), pytest.approx(3.0, abs=1e-14))
    for y1, y2 in [(4.0, 2.5), (1.9, 1.2), (0.5, 0.9)]:
        assert gv.direct_integration_length(WIDE, Q_WIDE, S0, C, y1, y2) == pytest.approx(
            gv.bresse_length(WIDE, Q_WIDE, S0, C, y1, y2), rel=1e-10)


def test_direct_integration_wide_manning_is_exact():
    # Wide rectangle with Manning: N = 10/3, M = 3, J = 2.5 exactly (REFERENCES; Chow 1959, §10-3).
    n, m = gv.hydraulic_exponents(WIDE, 1.3, 0.025)
    assert n == pytest.approx(10 / 3, rel=1e-14) and m == pytest.approx(3.0, rel=1e-14)
    for y1, y2 in [(4.0, 2.5), (1.5, 1.2), (0.4, 0.8)]:
        assert gv.direct_integration_length(WIDE, Q_WIDE, S0, 0.025, y1, y2) == pytest.approx(
            gv.profile_length(WIDE, Q_WIDE, S0, 0.025, y1, y2), rel=1e-9)


def test_direct_integration_trapezoid_is_close_with_mean_exponents():
    # In a trapezoid N and M vary with depth; with their values at the mean depth the method is
    # an approximation (Chow 1959, §10-3). Over a short range it stays within 0.5 %
    # (common practice: the method is used over ranges where N and M change little).
    sec = gv.Trapezoidal(bottom_width=6.0, side_slope=2.0)
    xq = gv.profile_length(sec, 12.0, 0.001, 0.02, 2.0, 1.7)
    xd = gv.direct_integration_length(sec, 12.0, 0.001, 0.02, 2.0, 1.7)
    assert xd == pytest.approx(xq, rel=5e-3)


def test_hydraulic_exponents_of_the_triangle_and_limits():
    # triangle N = 16/3, M = 5 (Chow 1959, ch. 6 and 9; exact)
    n, m = gv.hydraulic_exponents(gv.Triangular(side_slope=1.5), np.array([0.3, 2.0]))
    np.testing.assert_allclose(n, 16 / 3, rtol=1e-13)
    np.testing.assert_allclose(m, 5.0, rtol=1e-13)
    # a trapezoid tends to the triangle when deep, a rectangle to the wide values when shallow
    n, m = gv.hydraulic_exponents(gv.Trapezoidal(bottom_width=1.0, side_slope=2.0), 1e4)
    assert n == pytest.approx(16 / 3, rel=1e-3) and m == pytest.approx(5.0, rel=1e-3)
    n, m = gv.hydraulic_exponents(gv.Rectangular(width=100.0), 1e-3)
    assert n == pytest.approx(10 / 3, rel=1e-4) and m == pytest.approx(3.0, rel=1e-12)


def test_hydraulic_exponent_n_is_the_log_derivative_of_conveyance():
    sec = gv.Circular(diameter=2.0)
    y, h = np.array([0.4, 1.0, 1.6]), 1e-6
    k = lambda z: np.log(np.asarray(gv.conveyance(sec, z, 0.013)))  # noqa: E731
    expected = 2 * y * (k(y + h) - k(y - h)) / (2 * h)
    np.testing.assert_allclose(gv.hydraulic_exponents(sec, y, 0.013)[0], expected, rtol=1e-7)


def test_varied_flow_function_closed_forms():
    # N = 2: F = artanh(u) below 1 and arcoth(u) above (∫dt/(1 - t²); exact).
    u = np.array([0.1, 0.5, 0.9, 0.999])
    np.testing.assert_allclose(gv.varied_flow_function(u, 2.0), np.arctanh(u), rtol=1e-11)
    u = np.array([1.001, 1.2, 3.0, 50.0])
    np.testing.assert_allclose(gv.varied_flow_function(u, 2.0), 0.5 * np.log((u + 1) / (u - 1)), rtol=1e-11)
    # N = 3: F(u) = phi(u) - phi(0) below 1, phi(0) = -pi/(3 sqrt 3) (Bresse's function; exact)
    u = np.array([0.2, 0.7, 0.98])
    np.testing.assert_allclose(gv.varied_flow_function(u, 3.0),
                               np.asarray(bresse_function(u)) + math.pi / (3 * math.sqrt(3)), rtol=1e-12)


@pytest.mark.parametrize("n", [2.5, 3.0, 10 / 3, 4.0, 5.5])
def test_varied_flow_function_quadrature_matches_series(n):
    u = np.array([0.05, 0.4, 0.8, 0.99, 0.9999, 1.0001, 1.01, 1.3, 2.0, 8.0])
    np.testing.assert_allclose(gv.varied_flow_function(u, n),
                               gv.varied_flow_function(u, n, method="series"), rtol=1e-10)


def test_horizontal_wide_chezy_closed_form():
    # Horizontal bed, wide channel, Chezy: x = -(C²/q²)(y⁴/4 - yc³ y) + const
    # (Chow 1959, §10-2; REFERENCES "Horizontal bed, wide channel"; exact).
    def x(y):
        return -(50.0**2 / 9.0) * (y**4 / 4 - YC**3 * y)

    for y1, y2 in [(2.0, 1.2), (0.3, 0.8)]:
        assert gv.profile_length(WIDE, Q_WIDE, 0.0, C, y1, y2) == pytest.approx(x(y2) - x(y1), rel=1e-10)


def test_depth_at_distance_inverts_profile_length():
    sec = gv.Trapezoidal(bottom_width=3.0, side_slope=1.5)
    for y0, y1, s0 in [(2.5, 1.6, 0.001), (0.3, 0.6, 0.001), (1.5, 1.2, 0.0), (0.3, 0.4, 0.02)]:
        d = gv.profile_length(sec, 10.0, s0, 0.015, y0, y1)
        assert gv.depth_at_distance(sec, 10.0, s0, 0.015, y0, d) == pytest.approx(y1, rel=1e-11)


def test_verify_errors_are_clear():
    sec = gv.Trapezoidal(bottom_width=3.0, side_slope=1.5)
    yn = gv.normal_depth(sec, 10.0, 0.001, 0.015)
    with pytest.raises(gv.InvalidInputError, match="normal depth"):
        gv.profile_length(sec, 10.0, 0.001, 0.015, 2.0, 1.0)  # crosses yn = 1.18
    with pytest.raises(gv.InvalidInputError, match="infinite"):
        gv.profile_length(sec, 10.0, 0.001, 0.015, 2.0, yn)
    with pytest.raises(gv.NoSolutionError, match="critical depth"):
        gv.depth_at_distance(sec, 10.0, 0.001, 0.015, 0.3, 1e5)
    with pytest.raises(gv.InvalidInputError, match="WideRectangular"):
        gv.bresse_length(sec, 10.0, 0.001, C, 2.0, 1.5)
    with pytest.raises(gv.InvalidInputError, match="Chezy"):
        gv.bresse_length(WIDE, 10.0, 0.001, 0.02, 2.0, 1.5)
    with pytest.raises(gv.InvalidInputError, match="exponent"):
        gv.varied_flow_function(0.5, 1.0)
    with pytest.raises(gv.InvalidInputError, match="normal depth"):
        gv.varied_flow_function(1.0, 3.0)
    with pytest.raises(gv.InvalidInputError, match="positive bed slope"):
        gv.direct_integration_length(sec, 10.0, 0.0, 0.015, 2.0, 1.5)
    assert math.isfinite(gv.profile_length(sec, 10.0, 0.001, 0.015, 0.3, gv.critical_depth(sec, 10.0)))


@pytest.mark.parametrize("shape, start", [("rectangle", 0.3666), ("circle", 0.8)])
def test_depth_far_along_a_backwater_is_normal_depth(shape, start):
    # An M1 traced 5 km upstream has reached normal depth to round-off; scipy's solve_ivp (LSODA) of
    # dy/dx = (S0 - Sf)/(1 - Q² T/(g A³)) (Chow 1959, eq. 9-8) with Manning and the geometry written out
    # (a 2 m rectangle; a 1 m circle, A = D²(θ - sin θ)/8, P = D θ/2, T = D sin(θ/2), θ = 2 acos(1 - 2y/D))
    # gives the reference. It used to raise a ConvergenceError once the quadrature met round-off there.
    from scipy.integrate import solve_ivp

    q, s0, n = 0.5, 0.001, 0.013

    def geometry(y):
        if shape == "rectangle":
            return 2.0 * y, 2.0 + 2.0 * y, 2.0
        th = 2.0 * math.acos(1.0 - 2.0 * y)
        return (th - math.sin(th)) / 8.0, th / 2.0, math.sin(th / 2.0)

    def rhs(x, y):
        a, p, t = geometry(y[0])
        sf = (n * q / (a * (a / p) ** (2 / 3))) ** 2
        return [(s0 - sf) / (1.0 - q * q * t / (gv.SI.g * a ** 3))]

    section = gv.Rectangular(width=2.0) if shape == "rectangle" else gv.Circular(diameter=1.0)
    ref = solve_ivp(rhs, [0.0, -5000.0], [start], rtol=1e-12, atol=1e-14, method="LSODA").y[0, -1]
    assert gv.depth_at_distance(section, q, s0, n, start, -5000.0) == pytest.approx(ref, rel=1e-7)


def test_profile_length_in_a_compound_section_against_quadrature():
    # The compound section of tests/hand_sections.py above bankfull: dx/dy = (dE/dy)/(S0 - Sf) with its hand
    # E and K (Chow 1959, eq. 9-8; dE/dy by central differences), integrated by scipy's quad. profile_length
    # takes a surveyed section's own roughness (roughness=None), as the other public functions do.
    from scipy.integrate import quad

    q, s0 = 60.0, 0.0005

    def dxdy(y):
        h = 1e-6 * y
        energy = compound_energy_and_conveyance
        dedy = (energy(y + h, q)[0] - energy(y - h, q)[0]) / (2 * h)
        return dedy / (s0 - (q / energy(y, q)[1]) ** 2)

    ref = quad(dxdy, 3.0, 2.7, epsabs=0.0, epsrel=1e-11)[0]
    section = gv.Surveyed(offset=[-100, -100, 0, 0, 10, 10, 110, 110], elevation=[5, 2, 2, 0, 0, 2, 2, 5],
                          roughness=[0.05, 0.03, 0.05], zone_edges=[0, 10])
    with pytest.warns(gv.GVFlowWarning, match="2 critical depths"):
        assert gv.profile_length(section, q, s0, None, 3.0, 2.7) == pytest.approx(ref, rel=1e-8)

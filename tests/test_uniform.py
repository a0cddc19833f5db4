"""Uniform and critical flow against closed forms, published examples and independent solvers.

Sources are named beside each check. "exact" marks a closed form or an optimisation that
can be reproduced to machine precision; "(from memory)" marks a published value recalled
rather than read from the page (REFERENCES.md keeps the same marks). Chapter, section,
table and equation numbers cited for Chow (1959) are from memory; the formulas themselves
are standard and written out beside each check.
"""

import math
import re

import numpy as np
import pytest
from fluids.friction import Colebrook
from hypothesis import assume, given, settings
from hypothesis import strategies as st
from scipy.optimize import brentq, minimize_scalar

import gvflow as gv

G = gv.SI.g

# -- strategies -------------------------------------------------------------------------------

open_sections = st.one_of(
    st.builds(gv.Rectangular, width=st.floats(0.2, 40.0)),
    st.builds(gv.Trapezoidal, bottom_width=st.floats(0.0, 40.0), side_slope=st.floats(0.1, 4.0),
              side_slope_right=st.none() | st.floats(0.0, 4.0)),
    st.builds(gv.Triangular, side_slope=st.floats(0.1, 4.0), side_slope_right=st.none() | st.floats(0.1, 4.0)),
    st.builds(gv.Parabolic, top_width=st.floats(0.5, 40.0), reference_depth=st.floats(0.2, 5.0)),
    st.builds(gv.WideRectangular, width=st.floats(1.0, 200.0)),
)
circles = st.builds(gv.Circular, diameter=st.floats(0.2, 6.0))
any_section = st.one_of(open_sections, circles)
discharges = st.floats(1e-3, 1e3)
slopes = st.floats(1e-5, 0.1)
manning_n = st.floats(0.008, 0.1)
unit_systems = st.sampled_from(["SI", "US"])
PROPERTY = settings(max_examples=80, deadline=None)


def manning_discharge(sec, y, s, n, k=1.0):
    """Manning's equation written out from the section's public geometry (Chow 1959, eq. 5-6)."""
    return k / n * sec.area(y) * sec.hydraulic_radius(y) ** (2 / 3) * math.sqrt(s)


def conduit_discharge(sec, frac, s, n, units):
    """A discharge the conduit can carry in uniform flow: a fraction of its peak capacity."""
    return frac * gv.conduit_capacity(sec, s, n, units).peak_discharge


# -- closed forms -------------------------------------------------------------------------------

@pytest.mark.parametrize("b, q", [(1.0, 0.01), (2.0, 4.0), (10.0, 300.0), (0.3, 2.5)])
def test_rectangular_critical_depth_closed_form(b, q):
    # yc = (q²/g)^(1/3), E_min = 1.5 yc (Chow 1959, §4-3; REFERENCES.md, exact)
    sec = gv.Rectangular(width=b)
    yc = gv.critical_depth(sec, q)
    assert yc == pytest.approx(((q / b) ** 2 / G) ** (1 / 3), rel=1e-12)
    assert gv.specific_energy(sec, q, yc) == pytest.approx(1.5 * yc, rel=1e-12)
    # minimum of specific energy, found independently by a bounded scalar search
    res = minimize_scalar(lambda y: gv.specific_energy(sec, q, y), bounds=(0.2 * yc, 5 * yc), method="bounded",
                          options={"xatol": 1e-12 * yc})
    assert res.x == pytest.approx(yc, rel=1e-6)
    assert gv.froude_number(sec, q, yc) == pytest.approx(1.0, rel=1e-12)


@pytest.mark.parametrize("zl, zr", [(1.0, 1.0), (0.5, 0.5), (2.0, 0.5), (1.0, 3.0)])
@pytest.mark.parametrize("q", [0.05, 3.0, 80.0])
def test_triangular_critical_depth_closed_form(zl, zr, q):
    # yc = (2 Q²/(g m²))^(1/5) for side slope m (REFERENCES.md, exact); unequal slopes act as
    # their mean m = (zl + zr)/2 since A = m y² and T = 2 m y
    sec = gv.Triangular(side_slope=zl, side_slope_right=zr)
    m = 0.5 * (zl + zr)
    assert gv.critical_depth(sec, q) == pytest.approx((2 * q * q / (G * m * m)) ** 0.2, rel=1e-12)


def test_parabolic_critical_depth_closed_form():
    # With T = c sqrt(y) and A = (2/3) T y: A³/T = (8/27) c² y⁴ = Q²/g (Chow 1959, table 2-1; exact)
    sec = gv.Parabolic(top_width=6.0, reference_depth=2.0)
    c = 6.0 / math.sqrt(2.0)
    for q in (0.1, 5.0, 60.0):
        assert gv.critical_depth(sec, q) == pytest.approx((27 * q * q / (8 * G * c * c)) ** 0.25, rel=1e-12)


def test_circular_critical_depth_by_independent_solver():
    # Q² T/(g A³) = 1 solved with scipy's brentq on the exact circle formulas (REFERENCES.md)
    d = 1.2

    def fr2_minus_1(y, q):
        theta = 2 * math.acos(1 - 2 * y / d)
        a = d * d * (theta - math.sin(theta)) / 8
        t = 2 * math.sqrt(y * (d - y))
        return q * q * t / (G * a ** 3) - 1

    sec = gv.Circular(diameter=d)
    for q in (0.01, 0.3, 1.0, 2.5, 5.0):
        expected = brentq(fr2_minus_1, 1e-6, d * (1 - 1e-12), args=(q,), xtol=1e-15, rtol=1e-15)
        assert gv.critical_depth(sec, q) == pytest.approx(expected, rel=1e-11)


def test_circular_critical_depth_straub_approximation():
    # Straub (1978), Civil Engineering 48(12) (from memory): yc = (1.01/D^0.26) (Q/sqrt g)^0.506 in
    # consistent units, for 0.02 < yc/D < 0.85, quoted within a few percent. Plausibility check at ±3 %.
    for d in (0.6, 1.0, 2.5):
        sec = gv.Circular(diameter=d)
        for frac in (0.1, 0.3, 0.5, 0.7, 0.8):
            # the discharge whose critical depth is frac*D (Fr = 1 there), then compare Straub
            y = frac * d
            q = math.sqrt(G * sec.area(y) ** 3 / sec.top_width(y))
            straub = 1.01 / d ** 0.26 * (q / math.sqrt(G)) ** 0.506
            assert gv.critical_depth(sec, q) == pytest.approx(y, rel=1e-11)
            assert straub == pytest.approx(y, rel=0.03)


def test_wide_channel_normal_depth_closed_forms():
    # Manning, R = y: yn = (q n / (k sqrt S))^(3/5); Chezy: yn = (q²/(C² S))^(1/3)
    # (Bresse's setting, Chow 1959, ch. 10; REFERENCES.md, exact)
    sec = gv.WideRectangular(width=25.0)
    for q, s, n in ((50.0, 1e-3, 0.03), (2.0, 0.02, 0.013), (900.0, 1e-4, 0.04)):
        qq = q / 25.0
        assert gv.normal_depth(sec, q, s, n) == pytest.approx((qq * n / math.sqrt(s)) ** 0.6, rel=1e-12)
        assert gv.normal_depth(sec, q, s, n, units="US") == pytest.approx(
            (qq * n / (1.486 * math.sqrt(s))) ** 0.6, rel=1e-12)
        c = 45.0
        assert gv.normal_depth(sec, q, s, gv.Chezy(c)) == pytest.approx((qq * qq / (c * c * s)) ** (1 / 3), rel=1e-12)


def test_wide_channel_critical_slope_closed_form():
    # At critical depth V² = g yc and R = yc, so Manning gives Sc = g n² / (k² yc^(1/3))
    # (Chow 1959, §6-5; exact for R = y)
    sec = gv.WideRectangular(width=10.0)
    for units, k in (("SI", 1.0), ("US", 1.486)):
        g = gv.SI.g if units == "SI" else gv.US.g
        for q, n in ((5.0, 0.013), (120.0, 0.035)):
            yc = (q * q / 100.0 / g) ** (1 / 3)
            assert gv.critical_slope(sec, q, n, units=units) == pytest.approx(g * n * n / (k * k * yc ** (1 / 3)),
                                                                               rel=1e-11)


@pytest.mark.parametrize("f1", [1.1, 1.7, 2.5, 4.5, 9.0, 15.0])
def test_belanger_sequent_depth_ratio(f1):
    # y2/y1 = (sqrt(1 + 8 F1²) - 1)/2; jump loss (y2 - y1)³/(4 y1 y2) (Chow 1959, eq. 15-3; exact)
    b, y1 = 3.0, 0.4
    sec = gv.Rectangular(width=b)
    q = f1 * math.sqrt(G * y1) * y1 * b
    y2 = gv.sequent_depth(sec, q, y1)
    assert y2 / y1 == pytest.approx((math.sqrt(1 + 8 * f1 * f1) - 1) / 2, rel=1e-12)
    assert gv.sequent_depth(sec, q, y2) == pytest.approx(y1, rel=1e-12)
    loss = gv.specific_energy(sec, q, y1) - gv.specific_energy(sec, q, y2)
    assert loss == pytest.approx((y2 - y1) ** 3 / (4 * y1 * y2), rel=1e-9)
    # Chow's dimensionless relative height (y2 - y1)/E1 = (sqrt(1 + 8F1²) - 3)/(F1² + 2)
    # (Chow 1959, §15-3; from memory, agrees with the energy computation above)
    e1 = gv.specific_energy(sec, q, y1)
    assert (y2 - y1) / e1 == pytest.approx((math.sqrt(1 + 8 * f1 * f1) - 3) / (f1 * f1 + 2), rel=1e-11)


def test_belanger_f1_squared_ten():
    # F1² = 10 gives y2/y1 = 4 and a loss of 27/16 y1 (REFERENCES.md, exact)
    sec = gv.Rectangular(width=1.0)
    y1 = 0.25
    q = math.sqrt(10 * G * y1) * y1
    y2 = gv.sequent_depth(sec, q, y1)
    assert y2 == pytest.approx(4 * y1, rel=1e-12)
    assert gv.specific_energy(sec, q, y1) - gv.specific_energy(sec, q, y2) == pytest.approx(27 / 16 * y1, rel=1e-11)


@pytest.mark.parametrize("sec, n_exp, m_exp", [
    (gv.WideRectangular(width=30.0), 10 / 3, 3.0),
    (gv.Triangular(side_slope=1.5), 16 / 3, 5.0),
])
def test_hydraulic_exponents(sec, n_exp, m_exp):
    # K ~ y^(N/2), Z = A sqrt(A/T) ~ y^(M/2): wide rectangle N = 10/3, M = 3; triangle N = 16/3, M = 5
    # (Chow 1959, ch. 6 and 9; REFERENCES.md, exact). Measured as log-slopes between two depths.
    y1, y2 = 0.7, 2.9
    k1, k2 = gv.conveyance(sec, y1, 0.02), gv.conveyance(sec, y2, 0.02)
    assert 2 * math.log(k2 / k1) / math.log(y2 / y1) == pytest.approx(n_exp, rel=1e-12)
    # critical depth scales as Q^(2/M) since Q/sqrt(g) = Z(yc)
    q1, q2 = 1.0, 37.0
    ratio = gv.critical_depth(sec, q2) / gv.critical_depth(sec, q1)
    assert math.log(ratio) / math.log(q2 / q1) == pytest.approx(2 / m_exp, rel=1e-11)


def test_rectangular_normal_depth_by_independent_solver():
    # Manning's equation solved with scipy's brentq on A = b y, R = b y/(b + 2y)
    for b, q, s, n in ((3.0, 5.0, 0.001, 0.015), (0.5, 0.02, 0.05, 0.011), (40.0, 800.0, 2e-4, 0.035)):
        def f(y, b=b, q=q, s=s, n=n):
            return (b * y) * (b * y / (b + 2 * y)) ** (2 / 3) * math.sqrt(s) / n - q
        expected = brentq(f, 1e-9, 100.0, xtol=1e-15, rtol=1e-15)
        assert gv.normal_depth(gv.Rectangular(width=b), q, s, n) == pytest.approx(expected, rel=1e-11)


# -- circular conduits --------------------------------------------------------------------------

def test_circular_full_pipe_discharge_handbook_constants():
    # Q_full = (k/n)(pi D²/4)(D/4)^(2/3) sqrt(S): the handbook forms Q = 0.3117/n D^(8/3) S^(1/2) (SI)
    # and Q = 0.463/n D^(8/3) S^(1/2) (US, k = 1.486) (ASCE Manual of Practice 37, *Design and
    # Construction of Sanitary and Storm Sewers*, 1969; from memory)
    for units, const, d in (("SI", 0.3117, 0.9), ("US", 0.463, 3.0)):
        sec = gv.Circular(diameter=d)
        cap = gv.conduit_capacity(sec, 0.004, 0.013, units)
        assert cap.full_discharge == pytest.approx(const / 0.013 * d ** (8 / 3) * math.sqrt(0.004), rel=5e-4)
        k = 1.0 if units == "SI" else 1.486
        exact = k / 0.013 * math.pi * d * d / 4 * (d / 4) ** (2 / 3) * math.sqrt(0.004)
        assert cap.full_discharge == pytest.approx(exact, rel=1e-12)
        assert cap.full_velocity == pytest.approx(exact / (math.pi * d * d / 4), rel=1e-12)


def test_circular_conduit_manning_discharge_peak():
    # Constant n: Q peaks at y/D = 0.93818 with Q/Q_full = 1.07571 (Chow 1959, ch. 6; REFERENCES.md,
    # reproducible by optimisation to the digits given)
    for d in (0.3, 1.0, 4.0):
        cap = gv.conduit_capacity(gv.Circular(diameter=d), 0.002, 0.014)
        assert cap.peak_depth / d == pytest.approx(0.93818, abs=1e-5)
        assert cap.peak_discharge / cap.full_discharge == pytest.approx(1.07571, abs=1e-5)


def test_circular_conduit_velocity_peak_and_landmarks():
    # Constant n: V peaks at y/D = 0.81280 with V/V_full = 1.14003; Q returns to Q_full at
    # y/D = 0.81963; half full Q/Q_full = 0.5 and V/V_full = 1 (Chow 1959, ch. 6; REFERENCES.md)
    d, s, n = 2.0, 0.001, 0.013
    sec = gv.Circular(diameter=d)
    cap = gv.conduit_capacity(sec, s, n)
    res = minimize_scalar(lambda y: -gv.uniform_velocity(sec, y, s, n), bounds=(0.6 * d, 0.95 * d),
                          method="bounded", options={"xatol": 1e-10})
    assert res.x / d == pytest.approx(0.81280, abs=1e-5)
    assert -res.fun / cap.full_velocity == pytest.approx(1.14003, abs=1e-5)
    assert gv.uniform_discharge(sec, d / 2, s, n) / cap.full_discharge == pytest.approx(0.5, rel=1e-12)
    assert gv.uniform_velocity(sec, d / 2, s, n) / cap.full_velocity == pytest.approx(1.0, rel=1e-12)
    # the lower uniform depth for Q_full (the upper one is the crown itself)
    assert gv.normal_depth(sec, cap.full_discharge, s, n) / d == pytest.approx(0.81963, abs=1e-5)


def test_circular_conduit_chezy_discharge_peak():
    # Constant Chezy C: Q peaks at y/D = 0.94971 with Q/Q_full = 1.05041 (REFERENCES.md, exact optimisation)
    cap = gv.conduit_capacity(gv.Circular(diameter=1.5), 0.003, gv.Chezy(60.0))
    assert cap.peak_depth / 1.5 == pytest.approx(0.94971, abs=1e-5)
    assert cap.peak_discharge / cap.full_discharge == pytest.approx(1.05041, abs=1e-5)


def test_circular_normal_depth_branches():
    # Between Q_full and Q_peak two depths carry Q; normal_depth returns the lower (API.md).
    d, s, n = 1.0, 0.002, 0.013
    sec = gv.Circular(diameter=d)
    cap = gv.conduit_capacity(sec, s, n)
    q = 0.5 * (cap.full_discharge + cap.peak_discharge)
    yn = gv.normal_depth(sec, q, s, n)
    assert 0.81963 * d < yn < cap.peak_depth
    assert gv.uniform_discharge(sec, yn, s, n) == pytest.approx(q, rel=1e-12)
    # the other root lies above the peak: the returned one is the lower
    upper = brentq(lambda y: gv.uniform_discharge(sec, y, s, n) - q, cap.peak_depth, d)
    assert upper > yn
    # just under the peak still solves; just above raises, naming the capacity
    assert gv.normal_depth(sec, cap.peak_discharge * (1 - 1e-9), s, n) == pytest.approx(cap.peak_depth, rel=1e-3)
    with pytest.raises(gv.NoSolutionError, match="capacity"):
        gv.normal_depth(sec, cap.peak_discharge * 1.001, s, n)
    with pytest.raises(gv.NoSolutionError, match="capacity"):
        gv.normal_depth(sec, [0.1, 5.0], s, n)


def test_circular_critical_depth_near_crown_and_beyond():
    sec = gv.Circular(diameter=1.0)
    yc = gv.critical_depth(sec, 10.0)
    assert 0.99 < yc < 1.0
    assert gv.froude_number(sec, 10.0, yc) == pytest.approx(1.0, rel=1e-9)
    with pytest.raises(gv.NoSolutionError, match="too large"):
        gv.critical_depth(sec, 1e4)


def test_conduit_capacity_needs_a_closed_section():
    with pytest.raises(gv.InvalidInputError, match="closed conduit"):
        gv.conduit_capacity(gv.Rectangular(width=1.0), 0.001, 0.013)


# -- published worked examples --------------------------------------------------------------------
# Chow, *Open-Channel Hydraulics* (1959), the trapezoidal channel of Examples 10-1 and 10-2 (also the
# channel of his uniform-flow examples): b = 20 ft, z = 2, n = 0.025, S0 = 0.0016, Q = 400 ft³/s.
# Printed yn = 3.36 ft and yc = 2.15 ft (alpha = 1), about 2.21 ft with alpha = 1.10
# (from memory, as in REFERENCES.md). US customary units: g = 32.174 ft/s², k = 1.486.

CHOW = gv.Trapezoidal(bottom_width=20.0, side_slope=2.0)


def test_chow_trapezoid_normal_depth_us():
    assert gv.normal_depth(CHOW, 400.0, 0.0016, 0.025, units="US") == pytest.approx(3.36, abs=0.006)


def test_chow_trapezoid_critical_depth_us():
    assert gv.critical_depth(CHOW, 400.0, units="US") == pytest.approx(2.15, abs=0.006)
    assert gv.critical_depth(CHOW, 400.0, units="US", alpha=1.10) == pytest.approx(2.21, abs=0.006)
    # printed tables of the era used g = 32.2: the change is well inside the printed rounding
    assert gv.critical_depth(CHOW, 400.0, units=gv.Units(g=32.2, manning_k=1.486)) == pytest.approx(2.15, abs=0.006)


def test_chow_trapezoid_critical_slope_us():
    # Critical slope by the published method: Sc = (n Q / (1.486 A R^(2/3)))² at y = yc (Chow 1959,
    # §6-5), evaluated by hand at the printed yc = 2.15 ft:
    # A = (20 + 2(2.15))(2.15) = 52.245 ft², P = 20 + 2(2.15) sqrt 5 = 29.6155 ft, R = 1.76411 ft,
    # R^(2/3) = 1.46027, so Sc = (0.025 x 400 / (1.486 x 52.245 x 1.46027))² = 0.00778.
    # yc is printed to 0.005 ft; Sc ~ yc^(-16/3) about there, so it carries about 1.3 % rounding.
    assert gv.critical_slope(CHOW, 400.0, 0.025, units="US") == pytest.approx(0.00778, rel=0.013)
    assert gv.slope_class(CHOW, 400.0, 0.0016, 0.025, units="US") == "mild"


# -- hypothesis properties ------------------------------------------------------------------------

@given(open_sections, discharges, slopes, manning_n, unit_systems)
@PROPERTY
def test_normal_depth_satisfies_manning_open(sec, q, s, n, units):
    # Property (issue 2): Q = (k/n) A R^(2/3) sqrt(S) at the normal depth, to 1e-10 relative
    k = 1.0 if units == "SI" else 1.486
    yn = gv.normal_depth(sec, q, s, n, units)
    assert manning_discharge(sec, yn, s, n, k) == pytest.approx(q, rel=1e-10)


@given(circles, st.floats(1e-3, 0.999), slopes, manning_n, unit_systems)
@PROPERTY
def test_normal_depth_satisfies_manning_circle(sec, frac, s, n, units):
    k = 1.0 if units == "SI" else 1.486
    q = conduit_discharge(sec, frac, s, n, units)
    yn = gv.normal_depth(sec, q, s, n, units)
    assert 0 < yn < sec.diameter
    assert manning_discharge(sec, yn, s, n, k) == pytest.approx(q, rel=1e-10)


@given(any_section, discharges, unit_systems)
@PROPERTY
def test_critical_depth_gives_froude_one(sec, q, units):
    # Property (issue 2): Fr = V / sqrt(g A/T) = 1 at critical depth
    if sec.closed:
        q = min(q, 3.0 * sec.diameter ** 2.5)  # keep the critical depth off the crown
    yc = gv.critical_depth(sec, q, units)
    assert gv.froude_number(sec, q, yc, units) == pytest.approx(1.0, rel=1e-10)


def _depth_off_critical(sec, q, f, units):
    yc = gv.critical_depth(sec, q, units)
    y = f * yc
    if sec.closed:
        assume(y < 0.98 * sec.diameter)
    return yc, y


@given(any_section, discharges, st.floats(0.15, 0.97) | st.floats(1.03, 4.0), unit_systems)
@PROPERTY
def test_sequent_depths_have_equal_specific_force(sec, q, f, units):
    # Property (issue 2): M = Q²/(gA) + A ybar equal at both sides of a jump (Chow 1959, eq. 3-20)
    if sec.closed:
        q = min(q, 2.0 * sec.diameter ** 2.5)
    yc, y1 = _depth_off_critical(sec, q, f, units)
    try:
        y2 = gv.sequent_depth(sec, q, y1, units)
    except gv.NoSolutionError:
        # only legitimate when the conduit cannot hold the subcritical sequent below its crown
        assert sec.closed and y1 < yc
        assert gv.specific_force(sec, q, sec.diameter, units) < gv.specific_force(sec, q, y1, units)
        return
    assert (y1 - yc) * (y2 - yc) < 0  # the other side of critical depth
    assert gv.specific_force(sec, q, y2, units) == pytest.approx(gv.specific_force(sec, q, y1, units), rel=1e-10)


@given(any_section, discharges, st.floats(0.15, 0.97) | st.floats(1.03, 4.0), unit_systems,
       st.sampled_from([1.0, 1.1]))
@PROPERTY
def test_alternate_depths_have_equal_specific_energy(sec, q, f, units, alpha):
    # Property (issue 2): E = y + alpha V²/2g equal at both alternate depths (Chow 1959, eq. 3-5)
    if sec.closed:
        q = min(q, 2.0 * sec.diameter ** 2.5)
    yc = gv.critical_depth(sec, q, units, alpha=alpha)
    y1 = f * yc
    if sec.closed:
        assume(y1 < 0.98 * sec.diameter)
    try:
        y2 = gv.alternate_depth(sec, q, y1, units, alpha=alpha)
    except gv.NoSolutionError:
        assert sec.closed and y1 < yc
        assert gv.specific_energy(sec, q, sec.diameter, units, alpha) < gv.specific_energy(sec, q, y1, units, alpha)
        return
    assert (y1 - yc) * (y2 - yc) < 0
    assert gv.specific_energy(sec, q, y2, units, alpha) == pytest.approx(
        gv.specific_energy(sec, q, y1, units, alpha), rel=1e-10)


@given(open_sections, st.lists(discharges, min_size=1, max_size=4), st.lists(slopes, min_size=1, max_size=3),
       manning_n)
@settings(max_examples=30, deadline=None)
def test_arrays_broadcast_like_scalars(sec, qs, ss, n):
    # Property (issue 2): an array call equals the scalar calls element by element, shapes broadcast
    q = np.array(qs)[:, None]
    s = np.array(ss)[None, :]
    yn = gv.normal_depth(sec, q, s, n)
    assert yn.shape == (len(qs), len(ss))
    yc = gv.critical_depth(sec, q[:, 0])
    assert yc.shape == (len(qs),)
    for i, qi in enumerate(qs):
        assert yc[i] == pytest.approx(gv.critical_depth(sec, qi), rel=1e-13)
        for j, sj in enumerate(ss):
            assert yn[i, j] == pytest.approx(gv.normal_depth(sec, qi, sj, n), rel=1e-13)
    y = np.array([0.5, 1.5]) * yc[0]
    for fn in (gv.froude_number, gv.specific_energy, gv.specific_force, gv.sequent_depth, gv.alternate_depth):
        arr = fn(sec, qs[0], y)
        assert arr.shape == (2,)
        for k in range(2):
            assert arr[k] == pytest.approx(fn(sec, qs[0], float(y[k])), rel=1e-12)


def test_slope_classes_and_profile_types_of_arrays():
    # a 3 m rectangle at Q = 5: yc = (q²/g)^(1/3) (exact) and yn by Manning with scipy's brentq; the class
    # and zone by Chow 1959, §9-2 (mild yn > yc, steep yn < yc; M1 above yn, M2 between, M3 below yc)
    b, q, n = 3.0, 5.0, 0.015
    yc = ((q / b) ** 2 / G) ** (1 / 3)
    slopes = np.array([0.0005, 0.02, 0.0, -0.001])
    yn = [brentq(lambda y, s=s: b * y * (b * y / (b + 2 * y)) ** (2 / 3) * math.sqrt(s) / n - q, 1e-3, 20.0)
          for s in slopes[:2]]
    expected = ["mild" if yn[0] > yc else "steep", "mild" if yn[1] > yc else "steep", "horizontal", "adverse"]
    assert expected[:2] == ["mild", "steep"]
    sec = gv.Rectangular(width=b)
    assert gv.slope_class(sec, q, slopes, n).tolist() == expected
    assert gv.slope_class(sec, [q, q], 0.0005, n).tolist() == ["mild", "mild"]
    y = np.array([1.2 * yn[0], 0.5 * (yn[0] + yc), 0.5 * yc])
    assert gv.profile_type(sec, q, 0.0005, n, y).tolist() == ["M1", "M2", "M3"]
    assert gv.profile_type(sec, [q, q, q], [0.0005, 0.02, 0.0], n, 0.5 * yc).tolist() == ["M3", "S3", "H3"]
    assert gv.profile_type(sec, q, 0.0005, n, float(y[0])) == "M1"


@pytest.mark.parametrize("call, names", [
    (lambda sec: gv.normal_depth(sec, [1.0, 2.0], [1e-3, 2e-3, 3e-3], 0.015), "discharge (2,), slope (3,)"),
    (lambda sec: gv.froude_number(sec, [1.0, 2.0], [0.5, 1.0, 2.0]), "discharge (2,), depth (3,)"),
    (lambda sec: gv.sequent_depth(sec, [1.0, 2.0], [0.2, 0.3, 0.4]), "discharge (2,), depth (3,)"),
    (lambda sec: gv.slope_class(sec, [1.0, 2.0], [1e-3, 2e-3, 3e-3], 0.015), "discharge (2,), slope (3,)"),
    (lambda sec: gv.profile_type(sec, [1.0, 2.0], 1e-3, 0.015, [0.2, 0.3, 0.4]),
     "discharge (2,), slope (), depth (3,)"),
])
def test_arrays_that_do_not_fit_together_name_the_arguments(call, names):
    with pytest.raises(gv.InvalidInputError, match=re.escape(f"do not fit together ({names})")):
        call(gv.Trapezoidal(bottom_width=2.0, side_slope=1.0))


def test_scalar_in_float_out():
    sec = gv.Trapezoidal(bottom_width=2.0, side_slope=1.0)
    for value in (gv.normal_depth(sec, 3.0, 0.001, 0.015), gv.critical_depth(sec, 3.0),
                  gv.critical_slope(sec, 3.0, 0.015), gv.froude_number(sec, 3.0, 1.0),
                  gv.specific_energy(sec, 3.0, 1.0), gv.specific_force(sec, 3.0, 1.0),
                  gv.sequent_depth(sec, 3.0, 0.3), gv.alternate_depth(sec, 3.0, 0.3),
                  gv.uniform_discharge(sec, 1.0, 0.001, 0.015), gv.uniform_velocity(sec, 1.0, 0.001, 0.015)):
        assert type(value) is float


# -- other laws, inverses and classes ---------------------------------------------------------

def test_normal_depth_with_darcy_weisbach_matches_fluids_colebrook():
    # At the Darcy-Weisbach normal depth, S0 = f Q²/(8 g R A²) with f from fluids' Colebrook
    sec = gv.Trapezoidal(bottom_width=3.0, side_slope=1.5)
    q, s, ks = 8.0, 0.0007, 0.002
    yn = gv.normal_depth(sec, q, s, gv.DarcyWeisbach(ks))
    a, r = sec.area(yn), sec.hydraulic_radius(yn)
    f = Colebrook(4 * r * (q / a) / gv.SI.kinematic_viscosity, ks / (4 * r))
    assert f * q * q / (8 * G * r * a * a) == pytest.approx(s, rel=1e-9)
    assert gv.uniform_discharge(sec, yn, s, gv.DarcyWeisbach(ks)) == pytest.approx(q, rel=1e-9)


@pytest.mark.parametrize("rough", [0.02, gv.Chezy(40.0), gv.DarcyWeisbach(0.004)])
def test_uniform_discharge_inverts_normal_depth(rough):
    sec = gv.Parabolic(top_width=8.0, reference_depth=2.0)
    for y in (0.3, 1.2, 3.0):
        q = gv.uniform_discharge(sec, y, 0.0012, rough)
        assert gv.normal_depth(sec, q, 0.0012, rough) == pytest.approx(y, rel=1e-10)


def test_critical_slope_makes_normal_depth_critical():
    # Sc is the slope whose normal depth equals the critical depth (Chow 1959, §6-5)
    for sec in (gv.Rectangular(width=2.0), gv.Triangular(side_slope=1.0, side_slope_right=2.0),
                gv.Circular(diameter=1.5), gv.Parabolic(top_width=3.0, reference_depth=1.0)):
        q = 1.7
        sc = gv.critical_slope(sec, q, 0.014)
        assert gv.normal_depth(sec, q, sc, 0.014) == pytest.approx(gv.critical_depth(sec, q), rel=1e-10)
        assert gv.slope_class(sec, q, sc, 0.014) == "critical"
        assert gv.slope_class(sec, q, 0.5 * sc, 0.014) == "mild"
        assert gv.slope_class(sec, q, 2.0 * sc, 0.014) == "steep"
        assert gv.slope_class(sec, q, 0.0, 0.014) == "horizontal"
        assert gv.slope_class(sec, q, -0.001, 0.014) == "adverse"


def test_froude_regimes_around_critical():
    sec = gv.Trapezoidal(bottom_width=4.0, side_slope=2.0)
    q = 20.0
    yc = gv.critical_depth(sec, q)
    assert gv.froude_number(sec, q, 0.5 * yc) > 1 > gv.froude_number(sec, q, 2 * yc)


def test_tiny_discharge_is_still_solved_not_clipped():
    # Very small discharges put the root below the first trial depth; the answer must still satisfy
    # the equations, not return the end of the bracket.
    sec = gv.Rectangular(width=1.0)
    q = 1e-20
    yn = gv.normal_depth(sec, q, 0.001, 0.013)
    assert gv.uniform_discharge(sec, yn, 0.001, 0.013) == pytest.approx(q, rel=1e-10)
    assert gv.critical_depth(sec, q) == pytest.approx((q * q / G) ** (1 / 3), rel=1e-10)


# -- bad input -------------------------------------------------------------------------------------

BAD_POSITIVE = [0.0, -1.0, math.nan, math.inf, -math.inf]
SEC = gv.Trapezoidal(bottom_width=2.0, side_slope=1.0)


@pytest.mark.parametrize("bad", BAD_POSITIVE)
@pytest.mark.parametrize("call", [
    lambda v: gv.normal_depth(SEC, v, 0.001, 0.015),
    lambda v: gv.critical_depth(SEC, v),
    lambda v: gv.critical_slope(SEC, v, 0.015),
    lambda v: gv.froude_number(SEC, v, 1.0),
    lambda v: gv.specific_energy(SEC, v, 1.0),
    lambda v: gv.specific_force(SEC, v, 1.0),
    lambda v: gv.sequent_depth(SEC, v, 1.0),
    lambda v: gv.alternate_depth(SEC, v, 1.0),
    lambda v: gv.slope_class(SEC, v, 0.001, 0.015),
    lambda v: gv.slope_class(SEC, v, 0.0, 0.015),
    lambda v: gv.normal_depth(SEC, [1.0, v], 0.001, 0.015),
])
def test_bad_discharge_raises_naming_discharge(call, bad):
    with pytest.raises(gv.InvalidInputError, match="discharge"):
        call(bad)


@pytest.mark.parametrize("bad", BAD_POSITIVE)
@pytest.mark.parametrize("call", [
    lambda v: gv.normal_depth(SEC, 1.0, 0.001, v),
    lambda v: gv.critical_slope(SEC, 1.0, v),
    lambda v: gv.uniform_discharge(SEC, 1.0, 0.001, v),
    lambda v: gv.slope_class(SEC, 1.0, -0.001, v),
    lambda v: gv.conduit_capacity(gv.Circular(diameter=1.0), 0.001, v),
])
def test_bad_roughness_raises_naming_roughness(call, bad):
    with pytest.raises(gv.InvalidInputError, match="roughness"):
        call(bad)


@pytest.mark.parametrize("bad", BAD_POSITIVE)
@pytest.mark.parametrize("call", [
    lambda v: gv.froude_number(SEC, 1.0, v),
    lambda v: gv.specific_energy(SEC, 1.0, v),
    lambda v: gv.specific_force(SEC, 1.0, v),
    lambda v: gv.sequent_depth(SEC, 1.0, v),
    lambda v: gv.alternate_depth(SEC, 1.0, v),
    lambda v: gv.uniform_discharge(SEC, v, 0.001, 0.015),
    lambda v: gv.uniform_velocity(SEC, v, 0.001, 0.015),
])
def test_bad_depth_raises_naming_depth(call, bad):
    with pytest.raises(gv.InvalidInputError, match="depth"):
        call(bad)


@pytest.mark.parametrize("bad", [math.nan, math.inf, -math.inf])
@pytest.mark.parametrize("call", [
    lambda v: gv.normal_depth(SEC, 1.0, v, 0.015),
    lambda v: gv.slope_class(SEC, 1.0, v, 0.015),
    lambda v: gv.uniform_discharge(SEC, 1.0, v, 0.015),
    lambda v: gv.conduit_capacity(gv.Circular(diameter=1.0), v, 0.013),
])
def test_non_finite_slope_raises_naming_slope(call, bad):
    with pytest.raises(gv.InvalidInputError, match="slope"):
        call(bad)


@pytest.mark.parametrize("slope, word", [(0.0, "horizontal"), (-0.002, "adverse")])
def test_normal_depth_on_horizontal_or_adverse_bed_raises(slope, word):
    with pytest.raises(gv.NoSolutionError, match=word):
        gv.normal_depth(SEC, 1.0, slope, 0.015)
    with pytest.raises(gv.NoSolutionError, match=word):
        gv.normal_depth(gv.Circular(diameter=1.0), 0.1, [0.001, slope], 0.015)
    with pytest.raises(gv.InvalidInputError, match="slope"):
        gv.uniform_discharge(SEC, 1.0, slope, 0.015)


@pytest.mark.parametrize("bad", [0.0, -1.0, math.nan])
def test_bad_alpha_raises(bad):
    with pytest.raises(gv.InvalidInputError, match="alpha"):
        gv.critical_depth(SEC, 1.0, alpha=bad)
    with pytest.raises(gv.InvalidInputError, match="alpha"):
        gv.specific_energy(SEC, 1.0, 1.0, alpha=bad)


def test_depth_above_conduit_crown_raises():
    with pytest.raises(gv.InvalidInputError, match="conduit height"):
        gv.froude_number(gv.Circular(diameter=1.0), 0.5, 1.2)


def test_errors_are_value_errors():
    for cls in (gv.InvalidInputError, gv.NoSolutionError, gv.ConvergenceError, gv.ControlError):
        assert issubclass(cls, ValueError)


def _any_input():
    # zero, signs, NaN and infinities, and magnitudes over six decades either side of 1
    special = st.sampled_from([0.0, -0.0, math.nan, math.inf, -math.inf])
    return special | st.floats(-1e6, 1e6) | st.floats(-1e-6, 1e-6)


@given(_any_input(), _any_input(), _any_input())
@settings(max_examples=80, deadline=None)
def test_no_nan_leaks_from_normal_and_critical_depth(q, s, n):
    # Whatever numbers come in, the answer is a finite positive depth or a gvflow error, never NaN
    for sec in (gv.Rectangular(width=2.0), gv.Circular(diameter=1.0)):
        for call in (lambda sec=sec: gv.normal_depth(sec, q, s, n), lambda sec=sec: gv.critical_depth(sec, q)):
            try:
                y = call()
            except gv.GVFlowError:
                continue
            assert math.isfinite(y) and y > 0
            if sec.closed:
                assert y <= 1.0

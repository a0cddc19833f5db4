"""Friction laws, conveyance and composite roughness.

External references: the `fluids` package (C. Bell, PyPI; test-only dependency) for the
Manning and Chezy velocity formulas, the n-to-C conversion and the Colebrook equation;
the composite-roughness formulas of Horton-Einstein, Pavlovskii/Einstein-Banks and Lotter
as given in Chow, *Open-Channel Hydraulics* (1959), ch. 6 (from memory; REFERENCES.md).
"""

import math

import numpy as np
import pytest
from fluids.friction import Colebrook
from fluids.open_flow import V_Chezy, V_Manning, n_Manning_to_C_Chezy
from hypothesis import given, settings
from hypothesis import strategies as st

import gvflow as gv

pytestmark = pytest.mark.reference

# -- Manning and Chezy against fluids ------------------------------------------------------


@pytest.mark.parametrize("rh", [0.05, 0.2859, 1.0, 3.7])
@pytest.mark.parametrize("slope", [1e-4, 0.005236, 0.03])
@pytest.mark.parametrize("n", [0.011, 0.03, 0.06])
def test_manning_velocity_matches_fluids(rh, slope, n):
    # fluids.open_flow.V_Manning: V = R^(2/3) S^(1/2)/n (SI). A wide channel has R = y.
    sec = gv.WideRectangular(width=10.0)
    assert gv.uniform_velocity(sec, rh, slope, n) == pytest.approx(V_Manning(rh, slope, n), rel=1e-13)


def test_manning_velocity_matches_fluids_on_a_trapezoid():
    sec = gv.Trapezoidal(bottom_width=2.0, side_slope=1.5, side_slope_right=0.5)
    for y in (0.2, 0.9, 2.5):
        rh = sec.hydraulic_radius(y)
        assert gv.uniform_velocity(sec, y, 0.002, 0.016) == pytest.approx(V_Manning(rh, 0.002, 0.016), rel=1e-13)


def test_manning_velocity_cengel_cimbala_example():
    # Cengel & Cimbala, *Fluid Mechanics: Fundamentals and Applications* (2006), as reproduced in
    # the fluids V_Manning docstring: Rh = 0.2859 m, S = 0.005236, n = 0.03 gives V = 1.0468 m/s.
    assert gv.uniform_velocity(gv.WideRectangular(width=5.0), 0.2859, 0.005236, 0.03) == pytest.approx(
        1.0468, abs=5e-5)


def test_manning_us_customary_uses_k_1486():
    # US customary: V = (1.486/n) R^(2/3) S^(1/2) (Chow 1959, eq. 5-6); fluids gives the SI form,
    # so the US velocity in ft/s is 1.486 times V_Manning evaluated on R in feet.
    sec = gv.WideRectangular(width=30.0)
    for y_ft in (0.5, 3.0, 12.0):
        v = gv.uniform_velocity(sec, y_ft, 0.0016, 0.025, units="US")
        assert v == pytest.approx(1.486 * V_Manning(y_ft, 0.0016, 0.025), rel=1e-13)


@pytest.mark.parametrize("c", [20.0, 45.0, 80.0])
def test_chezy_velocity_matches_fluids(c):
    # fluids.open_flow.V_Chezy: V = C sqrt(R S)
    sec = gv.Trapezoidal(bottom_width=3.0, side_slope=2.0)
    for y in (0.3, 1.0, 2.2):
        rh = sec.hydraulic_radius(y)
        assert gv.uniform_velocity(sec, y, 0.0009, gv.Chezy(c)) == pytest.approx(V_Chezy(rh, 0.0009, c), rel=1e-13)


def test_manning_and_chezy_agree_through_the_fluids_conversion():
    # fluids.open_flow.n_Manning_to_C_Chezy: C = R^(1/6)/n. At that depth both laws give the same Sf.
    sec = gv.Rectangular(width=4.0)
    y, n, q = 1.3, 0.017, 9.0
    c = n_Manning_to_C_Chezy(n, sec.hydraulic_radius(y))
    assert gv.friction_slope(sec, q, y, gv.Chezy(c)) == pytest.approx(gv.friction_slope(sec, q, y, n), rel=1e-13)


def test_conveyance_and_friction_slope_definitions():
    # Q = K sqrt(Sf) (Chow 1959, §6-2); Sf grows as Q²
    sec = gv.Circular(diameter=1.2)
    y, q = 0.7, 0.8
    k = gv.conveyance(sec, y, gv.Manning(0.013))
    sf = gv.friction_slope(sec, q, y, gv.Manning(0.013))
    assert q / math.sqrt(sf) == pytest.approx(k, rel=1e-14)
    assert gv.friction_slope(sec, 2 * q, y, 0.013) == pytest.approx(4 * sf, rel=1e-14)
    a, r = sec.area(y), sec.hydraulic_radius(y)
    assert k == pytest.approx(a * r ** (2 / 3) / 0.013, rel=1e-14)


# -- Colebrook-White and Darcy-Weisbach against fluids --------------------------------------

@pytest.mark.parametrize("re", [4e3, 1e4, 1e5, 1e6, 1e7, 1e8])
@pytest.mark.parametrize("eps", [0.0, 1e-6, 1e-4, 1e-3, 1e-2, 5e-2])
def test_colebrook_matches_fluids(re, eps):
    # fluids.friction.Colebrook solves the same implicit equation (analytically, via Lambert W)
    assert gv.colebrook_friction_factor(re, eps) == pytest.approx(Colebrook(re, eps), rel=1e-9)


def test_colebrook_vectorised_and_laminar():
    re = np.array([[5e3, 5e4], [5e5, 5e6]])
    eps = np.array([1e-4, 2e-3])
    f = gv.colebrook_friction_factor(re, eps)
    assert f.shape == (2, 2)
    for i in range(2):
        for j in range(2):
            assert f[i, j] == pytest.approx(Colebrook(re[i, j], eps[j]), rel=1e-9)
    # laminar flow: Hagen-Poiseuille f = 64/Re (exact)
    assert gv.colebrook_friction_factor(1000.0, 1e-3) == pytest.approx(0.064, rel=1e-14)


def test_darcy_weisbach_friction_slope_matches_fluids_colebrook():
    # Sf = f Q²/(8 g R A²), f = Colebrook(Re = 4 R V/nu, ks/(4R)) (French 1985, §4.2; DESIGN.md)
    sec = gv.Trapezoidal(bottom_width=2.0, side_slope=1.0)
    ks, q = 0.003, 4.0
    for y in (0.4, 1.0, 1.8):
        a, r = sec.area(y), sec.hydraulic_radius(y)
        v = q / a
        f = Colebrook(4 * r * v / gv.SI.kinematic_viscosity, ks / (4 * r))
        expected = f * q * q / (8 * gv.SI.g * r * a * a)
        assert gv.friction_slope(sec, q, y, gv.DarcyWeisbach(ks)) == pytest.approx(expected, rel=1e-9)


def test_darcy_weisbach_uses_the_unit_system_viscosity():
    sec = gv.Rectangular(width=1.0)
    # a fluid 20 times as viscous as water: Re = 4 R V/nu = 5e4, still turbulent
    oil = gv.Units(g=9.80665, manning_k=1.0, kinematic_viscosity=2e-5)
    a, r, q, y = 0.5, 0.25, 0.5, 0.5
    f = Colebrook(4 * r * (q / a) / 2e-5, 1e-4 / (4 * r))
    assert gv.friction_slope(sec, q, y, gv.DarcyWeisbach(1e-4), units=oil) == pytest.approx(
        f * q * q / (8 * 9.80665 * r * a * a), rel=1e-9)
    assert gv.friction_slope(sec, q, y, gv.DarcyWeisbach(1e-4)) < gv.friction_slope(
        sec, q, y, gv.DarcyWeisbach(1e-4), units=oil)


def test_darcy_weisbach_conveyance_needs_discharge():
    with pytest.raises(gv.InvalidInputError, match="discharge"):
        gv.conveyance(gv.Rectangular(width=1.0), 0.5, gv.DarcyWeisbach(0.001))


# -- roughness objects and bad input ---------------------------------------------------------

def test_roughness_positional_and_keyword():
    assert gv.Manning(0.015) == gv.Manning(n=0.015)
    assert gv.Chezy(50.0) == gv.Chezy(C=50.0)
    assert gv.DarcyWeisbach(0.002) == gv.DarcyWeisbach(roughness_height=0.002)
    # a bare float is Manning's n
    sec = gv.Rectangular(width=2.0)
    assert gv.conveyance(sec, 1.0, 0.015) == gv.conveyance(sec, 1.0, gv.Manning(0.015))


@pytest.mark.parametrize("bad", [0.0, -0.013, math.nan, math.inf])
def test_bad_roughness_raises(bad):
    sec = gv.Rectangular(width=2.0)
    with pytest.raises(gv.InvalidInputError, match="roughness"):
        gv.conveyance(sec, 1.0, bad)
    with pytest.raises(gv.InvalidInputError, match="n "):
        gv.Manning(bad)
    with pytest.raises(gv.InvalidInputError, match="C "):
        gv.Chezy(bad)
    with pytest.raises(gv.InvalidInputError, match="roughness_height"):
        gv.DarcyWeisbach(bad)


@pytest.mark.parametrize("bad", [True, "0.013", None, [0.013]])
def test_roughness_of_the_wrong_type_raises(bad):
    with pytest.raises(gv.InvalidInputError, match="roughness"):
        gv.friction_slope(gv.Rectangular(width=2.0), 1.0, 1.0, bad)


@pytest.mark.parametrize("bad", [0.0, -1.0, math.nan, math.inf])
def test_bad_discharge_and_depth_in_friction_slope(bad):
    sec = gv.Rectangular(width=2.0)
    with pytest.raises(gv.InvalidInputError, match="discharge"):
        gv.friction_slope(sec, bad, 1.0, 0.013)
    with pytest.raises(gv.InvalidInputError, match="depth"):
        gv.friction_slope(sec, 1.0, bad, 0.013)


def test_bad_colebrook_input():
    with pytest.raises(gv.InvalidInputError, match="reynolds"):
        gv.colebrook_friction_factor(-5.0, 1e-3)
    with pytest.raises(gv.InvalidInputError, match="relative_roughness"):
        gv.colebrook_friction_factor(1e5, math.nan)


# -- composite roughness ------------------------------------------------------------------

def test_composite_formulas_as_printed():
    # Chow 1959, ch. 6 (from memory; REFERENCES.md): a 3 m rectangle flowing 1.5 m deep, concrete
    # bed n = 0.013 over P = 3 m, rubble walls n = 0.025 over P = 3 m.
    p, n = np.array([3.0, 3.0]), np.array([0.013, 0.025])
    he = (np.sum(p * n ** 1.5) / 6.0) ** (2 / 3)
    pb = (np.sum(p * n ** 2) / 6.0) ** 0.5
    assert gv.composite_manning(p, n) == pytest.approx(he, rel=1e-14)
    assert gv.composite_manning(p, n, method="horton_einstein") == pytest.approx(he, rel=1e-14)
    assert gv.composite_manning(p, n, method="pavlovskii") == pytest.approx(pb, rel=1e-14)
    assert gv.composite_manning(p, n, method="einstein_banks") == pytest.approx(pb, rel=1e-14)
    # Lotter with R_i = 0.75 m for both (a 1.5 m x 3 m area split evenly): with equal R_i the
    # formula reduces to the perimeter-weighted harmonic mean P / sum(P_i/n_i)
    lo = gv.composite_manning(p, n, method="lotter", hydraulic_radii=[0.75, 0.75])
    assert lo == pytest.approx(6.0 / np.sum(p / n), rel=1e-14)


def test_horton_einstein_is_the_equal_velocity_split():
    # Derivation (Horton 1933; Einstein 1934): give every sub-area the same velocity V under its own
    # n_i; then R_i = (V n_i / sqrt S)^(3/2), A = sum P_i R_i, and the whole section carries V with
    # n_e = R^(2/3) sqrt(S) / V, R = A/P. Build that split directly and compare.
    p = np.array([4.0, 1.7, 2.2, 0.6])
    n = np.array([0.012, 0.035, 0.022, 0.05])
    v, s = 1.3, 0.0011
    r_i = (v * n / math.sqrt(s)) ** 1.5
    r = np.sum(p * r_i) / np.sum(p)
    n_e = r ** (2 / 3) * math.sqrt(s) / v
    assert gv.composite_manning(p, n) == pytest.approx(n_e, rel=1e-13)


def test_lotter_is_the_total_discharge_split():
    # Derivation (Lotter 1933): Q = sum Q_i with Q_i = (1/n_i) A_i R_i^(2/3) sqrt(S), A_i = P_i R_i;
    # the section with n_e carries the same Q with R = sum(A_i)/sum(P_i).
    p = np.array([6.0, 2.5, 2.5])
    r_i = np.array([1.4, 0.6, 0.6])
    n = np.array([0.03, 0.015, 0.015])
    s = 4e-4
    q = np.sum(p * r_i * r_i ** (2 / 3) / n) * math.sqrt(s)
    a = np.sum(p * r_i)
    r = a / np.sum(p)
    n_e = gv.composite_manning(p, n, method="lotter", hydraulic_radii=r_i)
    assert a * r ** (2 / 3) * math.sqrt(s) / n_e == pytest.approx(q, rel=1e-13)


@given(st.lists(st.tuples(st.floats(0.01, 50.0), st.floats(0.008, 0.2)), min_size=1, max_size=6))
@settings(max_examples=100, deadline=None)
def test_composite_means_are_ordered_and_bounded(items):
    # Horton-Einstein is a P-weighted power mean of order 1.5 and Pavlovskii of order 2, so by the
    # power-mean inequality min n <= n_HE <= n_P <= max n; equal n_i give n back.
    p = np.array([i[0] for i in items])
    n = np.array([i[1] for i in items])
    he = gv.composite_manning(p, n)
    pv = gv.composite_manning(p, n, method="pavlovskii")
    assert n.min() * (1 - 1e-13) <= he <= pv * (1 + 1e-13)
    assert pv <= n.max() * (1 + 1e-13)
    same = np.full_like(n, n[0])
    for method, kw in (("horton_einstein", {}), ("pavlovskii", {}), ("lotter", {"hydraulic_radii": 0.8})):
        assert gv.composite_manning(p, same, method=method, **kw) == pytest.approx(n[0], rel=1e-13)
    # Lotter with one n but unequal sub-area radii: sum P_i R_i^(5/3) >= P R^(5/3) (R^(5/3) is
    # convex, Jensen), so the equivalent n can only fall below n.
    lotter = gv.composite_manning(p, same, method="lotter", hydraulic_radii=p / 7)
    assert lotter <= n[0] * (1 + 1e-13)


def test_composite_vectorised_over_depths():
    # A rectangle whose bed (width b, n_b) and walls (2y, n_w) are lined differently: one call
    # for many depths, materials on the last axis, equals the scalar calls.
    b, y = 3.0, np.linspace(0.2, 2.0, 7)
    p = np.stack([np.full_like(y, b), 2 * y], axis=-1)
    n = [0.014, 0.03]
    out = gv.composite_manning(p, n)
    assert out.shape == y.shape
    for i in range(len(y)):
        assert out[i] == pytest.approx(gv.composite_manning(p[i], n), rel=1e-15)
    # Manning objects are accepted in a list; the result works as a roughness
    assert gv.composite_manning([2.0, 1.0], [gv.Manning(0.02), 0.03]) == gv.composite_manning([2.0, 1.0], [0.02, 0.03])
    n_e = gv.composite_manning([b, 2 * 1.0], n)
    assert gv.normal_depth(gv.Rectangular(width=b), 5.0, 0.001, n_e) > 0


def test_composite_lining_with_zero_perimeter_is_ignored():
    assert gv.composite_manning([2.0, 0.0], [0.02, 0.05]) == pytest.approx(0.02, rel=1e-14)


def test_composite_bad_input():
    with pytest.raises(gv.InvalidInputError, match="valid choices are 'horton_einstein', 'pavlovskii', 'lotter'"):
        gv.composite_manning([1.0], [0.02], method="equal_speed")
    with pytest.raises(gv.InvalidInputError, match="hydraulic_radii"):
        gv.composite_manning([1.0, 2.0], [0.02, 0.03], method="lotter")
    with pytest.raises(gv.InvalidInputError, match="hydraulic_radii"):
        gv.composite_manning([1.0, 2.0], [0.02, 0.03], method="lotter", hydraulic_radii=[0.5, -0.1])
    with pytest.raises(gv.InvalidInputError, match="wetted_perimeters"):
        gv.composite_manning([1.0, -2.0], [0.02, 0.03])
    with pytest.raises(gv.InvalidInputError, match="wetted_perimeters"):
        gv.composite_manning([1.0, math.nan], [0.02, 0.03])
    with pytest.raises(gv.InvalidInputError, match="wetted_perimeters"):
        gv.composite_manning([0.0, 0.0], [0.02, 0.03])
    with pytest.raises(gv.InvalidInputError, match="wetted_perimeters"):
        gv.composite_manning(2.0, 0.02)
    with pytest.raises(gv.InvalidInputError, match="roughnesses"):
        gv.composite_manning([1.0, 2.0], [0.02, 0.0])
    with pytest.raises(gv.InvalidInputError, match="roughnesses"):
        gv.composite_manning([1.0, 2.0], [0.02, math.inf])
    with pytest.raises(gv.InvalidInputError, match="roughnesses"):
        gv.composite_manning([1.0, 2.0], [0.02, gv.Chezy(40.0)])
    with pytest.raises(gv.InvalidInputError, match="matching shapes"):
        gv.composite_manning([1.0, 2.0, 3.0], [0.02, 0.03])


def test_composite_registry_lists_methods_with_sources():
    for name, entry in gv.COMPOSITE_ROUGHNESS_METHODS.items():
        assert callable(entry.function), name
        assert "Chow 1959" in entry.source, name
    assert gv.COMPOSITE_ROUGHNESS_METHODS["lotter"].needs_hydraulic_radii


@pytest.mark.parametrize("n", [1e-308, 1e-6, 9.9e-5])
def test_implausibly_small_manning_n_is_refused(n):
    # below 1e-4 no surface is real (glass is about 0.009; Chow 1959, table 5-6, from memory) and the
    # conveyance 1/n overflows as n approaches the smallest floats: refuse with a clear error, not inf or NaN
    with pytest.raises(gv.InvalidInputError, match="below 0.0001"):
        gv.normal_depth(gv.Rectangular(width=2.0), 1.0, 1.0, n)
    with pytest.raises(gv.InvalidInputError, match="greater than or equal to 0.0001"):
        gv.Manning(n)
    assert gv.normal_depth(gv.Rectangular(width=2.0), 1.0, 1.0, 1e-4) > 0

"""The compiled physics core (gvflow._core) against independent references.

Geometry of the geometric shapes against the public section classes (exact formulas of
Chow 1959, table 2-1) and, for surveyed polylines, against shapely's polygon clipping
(an independent general-purpose geometry library); roots against the defining equations;
zone coefficients against their exact properties.
"""

import math

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

import gvflow as gv
from gvflow._core import flow as F
from gvflow._core import geometry as G
from gvflow._core import resistance as R
from gvflow._core.records import channel, fluid

shapely = pytest.importorskip("shapely")
from shapely.geometry import LineString, Polygon, box  # noqa: E402

SI = fluid(gv.units.resolve_units("SI"))

PRISMATIC = [
    (gv.Trapezoidal(bottom_width=3.0, side_slope=1.5), G.TRAPEZOID, [3.0, 1.5, 1.5]),
    (gv.Trapezoidal(bottom_width=2.0, side_slope=0.5, side_slope_right=2.0), G.TRAPEZOID, [2.0, 0.5, 2.0]),
    (gv.Rectangular(width=2.0), G.TRAPEZOID, [2.0, 0.0, 0.0]),
    (gv.Triangular(side_slope=1.0), G.TRAPEZOID, [0.0, 1.0, 1.0]),
    (gv.Circular(diameter=1.2), G.CIRCLE, [1.2]),
    (gv.Parabolic(top_width=4.0, reference_depth=1.0), G.PARABOLA, [4.0]),
    (gv.WideRectangular(width=5.0), G.WIDE, [5.0]),
]


@pytest.mark.parametrize("section, kind, par", PRISMATIC, ids=lambda v: type(v).__name__ if hasattr(v, "area")
                         else None)
def test_geometry_matches_the_section_classes(section, kind, par):
    # Exact geometry (Chow 1959, table 2-1); the circle's first moment by its shallow-segment
    # series below y/D = 0.05, checked here down to y/D = 1e-8 where the closed form cancels.
    par = np.array(par, float)
    ys = np.array([1e-8, 1e-6, 1e-3, 0.05, 0.3, 0.6, 0.9, 1.1])
    if section.closed:
        ys = ys[ys < section.max_depth]
    for y in ys:
        core = np.array(G.geometry(kind, par, y))
        ref = np.array([float(v) for v in section._geometry(np.array(y))])
        np.testing.assert_allclose(core, ref, rtol=1e-12, atol=0)


def test_shallow_circle_first_moment_against_quadrature():
    # A ybar = int_0^y (y - eta) T(eta) d eta, T = 2 sqrt(eta (D - eta)) (exact), by scipy quad
    from scipy.integrate import quad

    d = 1.0
    for y in (1e-8, 1e-6, 1e-4, 0.04, 0.06, 0.5, 0.99):
        ref = quad(lambda e, y=y: (y - e) * 2.0 * math.sqrt(e * (d - e)), 0.0, y, epsrel=1e-13, epsabs=0)[0]
        assert G.geometry(G.CIRCLE, np.array([d]), y)[3] == pytest.approx(ref, rel=1e-11)


def _shapely_props(x, z, y, lo=-np.inf, hi=np.inf):
    """Area, top width, wetted ground length of the section below level y within lo <= x <= hi (shapely)."""
    z = np.asarray(z, float) - min(z)
    top = max(max(z), y) + 1.0
    ground = Polygon([(x[0], top), *zip(x, z, strict=True), (x[-1], top)])
    window = box(max(lo, x[0] - 1), -1.0, min(hi, x[-1] + 1), y)
    water = ground.intersection(window)
    line = LineString(list(zip(x, z, strict=True))).intersection(box(max(lo, x[0] - 1), -1.0, min(hi, x[-1] + 1), y))
    surface = LineString([(x[0], y), (x[-1], y)]).intersection(ground.intersection(
        box(max(lo, x[0] - 1), -1.0, min(hi, x[-1] + 1), y + 1.0)))
    return water.area, surface.length, line.length


SECTIONS = [
    ([-15, 0, 3, 18], [10, 0, 0, 10], []),  # trapezoid as points
    ([0, 0, 5, 5], [2, 0, 0, 2], [2.5]),  # rectangle with walls, two zones
    ([-100, -100, 0, 0, 10, 10, 110, 110], [5, 2, 2, 0, 0, 2, 2, 5], [0.0, 10.0]),  # compound, walls on edges
    ([0, 4, 6, 7, 9, 12, 20, 26], [3.0, 1.2, 1.5, 0.0, 0.3, 1.0, 1.1, 3.2], [6.5, 12.0]),  # natural, low area
]


@pytest.mark.parametrize("x, z, edges", [s for s in SECTIONS if s[2]])
def test_single_zone_depth_against_polygon_clipping(x, z, edges):
    # below it one zone at most holds water, just above it two do (shapely's zone areas); the critical depth
    # scan of independently rough scenarios shares its values there
    par = G.pack_surveyed(x, z, edges)
    bounds = [x[0], *edges, x[-1]]
    y1 = G.single_zone_depth(G.SURVEYED, par)
    assert 0.0 <= y1 < np.inf  # 0 where two zones share the lowest ground (the rectangle split in two)

    def wet_zones(y):
        return sum(_shapely_props(x, z, y, bounds[i], bounds[i + 1])[0] > 1e-12 for i in range(len(bounds) - 1))

    assert all(wet_zones(y) <= 1 for y in np.linspace(0.01, 1.0 - 1e-9, 7) * y1)
    assert wet_zones(max(y1 * (1.0 + 1e-3), 1e-3)) >= 2


@pytest.mark.parametrize("x, z, edges", SECTIONS)
def test_surveyed_geometry_against_polygon_clipping(x, z, edges):
    par = G.pack_surveyed(x, z, edges)
    bounds = [x[0], *edges, x[-1]]
    for y in np.linspace(0.05, min(z[0], z[-1]) - min(z) - 1e-3, 9):
        a, p, t, m, dt, dp = G.geometry(G.SURVEYED, par, y)
        ra, rt, rp = _shapely_props(x, z, y)
        assert a == pytest.approx(ra, rel=1e-12)
        assert t == pytest.approx(rt, rel=1e-12)
        assert p == pytest.approx(rp, rel=1e-12)
        for i in range(len(bounds) - 1):
            ai, pi_, ti = G.zone_geometry(G.SURVEYED, par, y, i)[:3]
            zra, zrt = _shapely_props(x, z, y, bounds[i], bounds[i + 1])[:2]
            assert ai == pytest.approx(zra, rel=1e-12, abs=1e-12)
            assert ti == pytest.approx(zrt, rel=1e-12, abs=1e-12)


@pytest.mark.parametrize("x, z, edges", SECTIONS)
def test_surveyed_derivatives_and_first_moment_by_differences(x, z, edges):
    # dA/dy = T, dM/dy = A (exact), dT/dy and dP/dy by central differences away from breakpoints
    par = G.pack_surveyed(x, z, edges)
    bps = G.breakpoint_depths(G.SURVEYED, par)
    h = 1e-6
    for y in np.linspace(0.07, 0.9 * bps[-1], 7):
        if np.min(np.abs(bps - y)) < 1e-3:
            continue
        lo = np.array(G.geometry(G.SURVEYED, par, y - h))
        hi = np.array(G.geometry(G.SURVEYED, par, y + h))
        a, p, t, m, dt, dp = G.geometry(G.SURVEYED, par, y)
        assert (hi[0] - lo[0]) / (2 * h) == pytest.approx(t, rel=1e-7)
        assert (hi[3] - lo[3]) / (2 * h) == pytest.approx(a, rel=1e-7)
        assert (hi[2] - lo[2]) / (2 * h) == pytest.approx(dt, rel=1e-6, abs=1e-9)
        assert (hi[1] - lo[1]) / (2 * h) == pytest.approx(dp, rel=1e-6, abs=1e-9)


def test_extra_collinear_or_repeated_points_change_nothing():
    plain = G.pack_surveyed([-15, 0, 3, 18], [10, 0, 0, 10])
    extra = G.pack_surveyed([-15, -7.5, 0, 0, 1, 3, 18], [10, 5, 0, 0, 0, 0, 10])
    for y in (0.1, 1.0, 4.0):
        np.testing.assert_allclose(G.geometry(G.SURVEYED, extra, y), G.geometry(G.SURVEYED, plain, y),
                                   rtol=1e-13, atol=1e-13)


def test_wall_on_a_zone_edge_belongs_to_the_side_of_its_foot():
    # compound section: the main-channel walls stand on the zone edges at 0 and 10, feet in the channel
    par = G.pack_surveyed([-100, -100, 0, 0, 10, 10, 110, 110], [5, 2, 2, 0, 0, 2, 2, 5], [0.0, 10.0])
    left, main, right = (G.zone_geometry(G.SURVEYED, par, 3.0, i) for i in range(3))
    assert main[1] == pytest.approx(10.0 + 2 * 2.0)  # bed plus both walls up to bank level
    assert left[1] == pytest.approx(100.0 + 1.0)  # floodplain plus the outer wall wetted from 2 to 3
    assert right[1] == pytest.approx(left[1])


def test_water_above_an_end_point_extends_it_as_a_wall():
    par = G.pack_surveyed([0, 2, 4], [1.0, 0.0, 1.5])
    a, p, t, m, dt, dp = G.geometry(G.SURVEYED, par, 2.0)
    # exact: ground triangle plus vertical walls at both ends
    assert a == pytest.approx(0.5 * 2 * 1.0 + 2 * 1.0 + 0.5 * 2 * 1.5 + 2 * 0.5)
    assert t == pytest.approx(4.0)
    assert p == pytest.approx(math.hypot(2, 1) + math.hypot(2, 1.5) + 1.0 + 0.5)
    assert dp == pytest.approx(2.0)


PUBLIC_LAWS = [(R.MANNING, 0.015, 0.015), (R.CHEZY, 50.0, gv.Chezy(50.0)),
               (R.DARCY, 0.002, gv.DarcyWeisbach(0.002))]


@pytest.mark.parametrize("law, rough, public", PUBLIC_LAWS, ids=["manning", "chezy", "darcy"])
@pytest.mark.parametrize("section, kind, par", PRISMATIC[:1] + PRISMATIC[4:], ids=["trap", "circ", "para", "wide"])
def test_roots_satisfy_their_equations(section, kind, par, law, rough, public):
    ch = channel(kind, par, law, rough)
    q = 0.8
    yn, status = F.normal_depth(ch, SI, q, 0.002)
    assert status == F.SOLVED
    # defining equation of normal depth: Sf(yn) = S0, with the public friction slope
    assert gv.friction_slope(section, q, yn, public) == pytest.approx(0.002, rel=1e-12)
    yc, status = F.critical_depth_single(ch, SI, q, 1.0)
    assert status == F.SOLVED
    assert gv.froude_number(section, q, yc) == pytest.approx(1.0, rel=1e-12)


def test_roots_say_when_there_is_none():
    ch = channel(G.CIRCLE, [0.5], R.MANNING, 0.013)
    assert F.normal_depth(ch, SI, 10.0, 0.001)[1] == F.NO_ROOT  # above the conduit's capacity
    assert F.normal_depth(ch, SI, 0.1, 0.0)[1] == F.NO_ROOT  # flat bed
    assert F.normal_depth(ch, SI, 0.1, -0.01)[1] == F.NO_ROOT  # adverse bed


COMPOUND = G.pack_surveyed([-100, -100, 0, 0, 10, 10, 110, 110], [5, 2, 2, 0, 0, 2, 2, 5], [0.0, 10.0])


def test_compound_section_has_two_critical_depths_with_froude_one():
    ch = channel(G.SURVEYED, COMPOUND, R.MANNING, [0.05, 0.03, 0.05])
    out = np.empty(8)
    n, status = F.critical_depths(ch, SI, 80.0, 1.0, out)
    assert status == F.SOLVED and n == 2
    for y in out[:n]:
        assert R.froude_squared(ch, SI, 80.0, y, 1.0) == pytest.approx(1.0, abs=1e-9)
        # a minimum: dE/dy from negative to positive (central differences of E)
        e = [F.specific_energy(ch, SI, 80.0, y + d, 1.0) for d in (-1e-4, 0.0, 1e-4)]
        assert e[0] > e[1] < e[2]
    # in-bank critical depth of the rectangular main channel is (q²/g)^(1/3) (exact)
    assert out[0] == pytest.approx((8.0**2 / 9.80665) ** (1 / 3), rel=1e-12)


def test_compound_froude_is_one_minus_the_energy_gradient():
    # Fc² = 1 - dE/dy with alpha varying (Blalock & Sturm 1981, from memory); dE/dy by differences
    ch = channel(G.SURVEYED, COMPOUND, R.MANNING, [0.05, 0.03, 0.05])
    for y in (2.1, 2.4, 3.0, 4.2):
        h = 1e-6
        dedy = (F.specific_energy(ch, SI, 80.0, y + h, 1.0) - F.specific_energy(ch, SI, 80.0, y - h, 1.0)) / (2 * h)
        assert 1.0 - R.froude_squared(ch, SI, 80.0, y, 1.0) == pytest.approx(dedy, rel=1e-6, abs=1e-8)


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(n=st.lists(st.floats(0.01, 0.15), min_size=3, max_size=3), y=st.floats(0.05, 4.9))
def test_alpha_beta_ordering(n, y):
    # exact property of conveyance-weighted coefficients: alpha >= beta² >= beta >= 1
    ch = channel(G.SURVEYED, COMPOUND, R.MANNING, n)
    alpha, beta = R.velocity_coefficients(ch, SI, y, 1.0)
    assert alpha >= beta * beta * (1 - 1e-12) and beta * beta >= beta * (1 - 1e-12) and beta >= 1 - 1e-12


def test_one_zone_coefficients_are_one_and_lotter_n_reproduces_subdivided_conveyance():
    one = channel(G.SURVEYED, G.pack_surveyed([-15, 0, 3, 18], [10, 0, 0, 10]), R.MANNING, [0.02])
    assert R.velocity_coefficients(one, SI, 1.3, 1.0) == (1.0, 1.0)
    # Lotter (1933) composite n, n_e = P R^(5/3) / sum(P_i R_i^(5/3)/n_i), gives the subdivided
    # conveyance of the whole section exactly (identity; Chow 1959 ch. 6, from memory)
    n = [0.05, 0.03, 0.045]
    ch = channel(G.SURVEYED, COMPOUND, R.MANNING, n)
    y = 3.1
    zones = [G.zone_geometry(G.SURVEYED, COMPOUND, y, i) for i in range(3)]
    a = sum(z[0] for z in zones)
    p = sum(z[1] for z in zones)
    ne = p * (a / p) ** (5 / 3) / sum(z[1] * (z[0] / z[1]) ** (5 / 3) / ni for z, ni in zip(zones, n, strict=True))
    assert R.conveyance(ch, SI, 1.0, y) == pytest.approx(1.0 / ne * a * (a / p) ** (2 / 3), rel=1e-13)


def test_subdivided_conveyance_increases_with_depth():
    ch = channel(G.SURVEYED, COMPOUND, R.MANNING, [0.05, 0.03, 0.05])
    k = [R.conveyance(ch, SI, 1.0, y) for y in np.linspace(0.01, 4.9, 500)]
    assert np.all(np.diff(k) > 0)

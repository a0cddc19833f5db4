"""Culverts: inlet control (HDS-5 equations), outlet control (energy equation), which governs."""

import math

import numpy as np
import pytest
from scipy.integrate import quad

import gvflow as gv
from gvflow import structures as st

G = 9.80665
KU_SI = 1.811  # HDS-5 (FHWA 2012), Appendix A: Ku = 1.811 in SI, 1.0 in US units


def pipe(**kw):
    args = dict(diameter=1.2, length=30.0, slope=0.01, roughness=0.012)
    args.update(kw)
    return st.CircularBarrel(**args)


def box(**kw):
    args = dict(span=2.0, rise=1.5, length=25.0, slope=0.005, roughness=0.013)
    args.update(kw)
    return st.BoxBarrel(**args)


# ---------------------------------------------------------------------------
# inlet control
# ---------------------------------------------------------------------------

def test_inlet_coefficient_table_rows():
    # HDS-5, 3rd ed. (2012), Table A.1 (form, K, M, c, Y), as listed in REFERENCES.md
    # (from memory - verify), with ke from Appendix C (from memory - verify).
    row = st.INLET_TYPES["concrete_pipe_square_edge_headwall"]
    assert (row.form, row.K, row.M, row.c, row.Y) == (1, 0.0098, 2.0, 0.0398, 0.67)
    assert row.entrance_loss == 0.5 and row.slope_factor == -0.5
    row = st.INLET_TYPES["box_wingwalls_30_to_75"]
    assert (row.form, row.K, row.M, row.c, row.Y) == (1, 0.026, 1.0, 0.0347, 0.81)
    assert st.INLET_TYPES["corrugated_pipe_mitered"].slope_factor == 0.7  # Ks = +0.7 for mitered inlets
    assert st.INLET_TYPES["corrugated_pipe_projecting"].entrance_loss == 0.9


def test_inlet_control_unsubmerged_form_1_by_hand():
    # HDS-5 App. A, form 1: HW/D = Hc/D + K (Ku Q / (A D^0.5))^M + Ks S, with Hc the specific
    # energy at critical depth; evaluated here with the manual's Ku = 1.811.
    b = pipe()
    d, area, q = 1.2, math.pi * 1.2 ** 2 / 4, 1.5
    sec = gv.Circular(diameter=d)
    yc = gv.critical_depth(sec, q)
    hc = gv.specific_energy(sec, q, yc)
    x = KU_SI * q / (area * math.sqrt(d))
    assert x < 3.5
    expected = d * (hc / d + 0.0098 * x ** 2.0 - 0.5 * 0.01)
    assert st.inlet_control_headwater(b, q) == pytest.approx(expected, rel=2e-5)  # 1.811 is rounded


def test_inlet_control_unsubmerged_form_2_by_hand():
    # HDS-5 App. A, form 2: HW/D = K (Ku Q / (A D^0.5))^M; box, headwall with 45-degree bevels
    # (0.495, 0.667). No slope term in form 2.
    b = box(inlet="box_headwall_beveled_45")
    q = 4.0
    x = KU_SI * q / (2.0 * 1.5 * math.sqrt(1.5))
    assert x < 3.5
    # the manual's Ku = 1.811 is sqrt(32.174/9.80665) = 1.81130 rounded: (1.8113/1.811)^0.667 - 1 = 1.1e-4
    assert st.inlet_control_headwater(b, q) == pytest.approx(1.5 * 0.495 * x ** 0.667, rel=2e-4)


def test_inlet_control_submerged_by_hand():
    # HDS-5 App. A, submerged: HW/D = c (Ku Q / (A D^0.5))² + Y + Ks S.
    b = box()
    q = 15.0
    x = KU_SI * q / (2.0 * 1.5 * math.sqrt(1.5))
    assert x > 4.0
    # Ku = 1.811 rounded from 1.81130: (1.8113/1.811)^2 - 1 = 3.3e-4 on the leading term
    assert st.inlet_control_headwater(b, q) == pytest.approx(1.5 * (0.0347 * x * x + 0.81 - 0.5 * 0.005),
                                                              rel=5e-4)


def test_inlet_control_transition_is_continuous_and_increasing():
    # Between X = 3.5 and 4.0 HW/D is interpolated linearly between the two forms' end values.
    b = pipe()
    d, area = 1.2, math.pi * 1.2 ** 2 / 4
    ku = math.sqrt(32.174 / G)
    x = np.array([3.5 - 1e-9, 3.5 + 1e-9, 3.75, 4.0 - 1e-9, 4.0 + 1e-9])
    hw = st.inlet_control_headwater(b, x * area * math.sqrt(d) / ku) / d
    assert hw[1] - hw[0] == pytest.approx(0.0, abs=1e-7)
    assert hw[4] - hw[3] == pytest.approx(0.0, abs=1e-7)
    assert hw[2] == pytest.approx(0.5 * (hw[0] + hw[4]), rel=1e-7)
    q = np.linspace(0.05, 8.0, 300)
    assert np.all(np.diff(st.inlet_control_headwater(b, q)) > 0)


def test_inlet_control_si_and_us_agree():
    # Ku = sqrt(32.174/g): 1.811 in SI and 1.0 in US units, so the same culvert gives the same
    # headwater in either system (to the 1.5e-6 difference of 32.174/9.80665 and 1/0.3048).
    ft = 1 / 0.3048
    b_si = pipe()
    b_us = pipe(diameter=1.2 * ft, length=30.0 * ft)
    for q in (0.5, 2.5, 4.0, 7.0):
        hw_si = st.inlet_control_headwater(b_si, q)
        hw_us = st.inlet_control_headwater(b_us, q * ft ** 3, units="US")
        assert hw_us * 0.3048 == pytest.approx(hw_si, rel=1e-5)


def test_multiple_barrels_share_the_discharge():
    one = pipe()
    two = pipe(barrels=2)
    assert st.inlet_control_headwater(two, 3.0) == pytest.approx(st.inlet_control_headwater(one, 1.5), rel=1e-14)
    a = st.outlet_control_headwater(two, 3.0, 0.4).headwater
    assert a == pytest.approx(st.outlet_control_headwater(one, 1.5, 0.4).headwater, rel=1e-14)


# ---------------------------------------------------------------------------
# outlet control
# ---------------------------------------------------------------------------

@pytest.mark.parametrize("make", [pipe, box])
@pytest.mark.parametrize("exit_loss, vd", [(1.0, 0.0), (1.0, 0.8), (0.6, 0.5)])
def test_full_barrel_outlet_control_equals_energy_equation(make, exit_loss, vd):
    # Energy equation, full barrel (e.g. HDS-5 ch. 3): barrel energy at the outlet
    # TW + Vd²/2g + kx (V² - Vd²)/2g, plus friction L Sf, less the fall L S0, plus ke V²/2g.
    b = make()
    q, tw = 4.0, 2.6
    d = b.height
    if b.shape == "circular":
        sec = gv.Circular(diameter=d)
        area = math.pi * d * d / 4
        sf = gv.friction_slope(sec, q, d, b.roughness)  # full pipe: A and P of the whole circle
    else:
        area = b.span * b.rise
        r = area / (2 * (b.span + b.rise))
        sf = (b.roughness * q / (area * r ** (2 / 3))) ** 2
    v = q / area
    hv, hvd = v * v / (2 * G), vd * vd / (2 * G)
    expected = tw + hvd + exit_loss * (hv - hvd) + b.length * sf - b.length * b.slope + b.ke * hv
    out = st.outlet_control_headwater(b, q, tw, tailwater_velocity=vd, exit_loss=exit_loss)
    assert out.barrel_flow == "full"
    assert out.headwater == pytest.approx(expected, rel=1e-9, abs=1e-9)


@pytest.mark.reference
@pytest.mark.parametrize("tailwater", [0.0, 0.6, 0.75])
def test_partly_full_barrel_profile_matches_quadrature(tailwater):
    # Mild barrel, outlet at critical depth or at the tailwater: the standard-step profile from the
    # outlet to the entrance must span the barrel length by the GVF distance integral
    # x = int (1 - Fr²)/(S0 - Sf) dy (adaptive quadrature, exact to its tolerance).
    b = pipe(length=60.0, slope=0.001, roughness=0.013)
    q = 1.0
    sec = gv.Circular(diameter=1.2)
    out = st.outlet_control_headwater(b, q, tailwater)
    assert out.barrel_flow == "partly full"
    yc = gv.critical_depth(sec, q)
    assert out.outlet_depth == pytest.approx(max(tailwater, yc), rel=1e-12)

    def dxdy(y):
        fr2 = gv.froude_number(sec, q, y) ** 2
        return (1 - fr2) / (b.slope - gv.friction_slope(sec, q, y, b.roughness))

    x = -quad(dxdy, out.outlet_depth, out.inlet_depth, limit=200, epsabs=1e-10)[0]
    assert x == pytest.approx(b.length, rel=1e-3)  # standard step, 100 intervals
    a_in = gv.Circular(diameter=1.2).area(out.inlet_depth)
    assert out.headwater == pytest.approx(out.inlet_depth + (1 + b.ke) * (q / a_in) ** 2 / (2 * G), rel=1e-14)


def test_steep_barrel_with_low_tailwater_runs_inlet_critical():
    b = pipe()  # S = 0.01 is steep for 1.5 m³/s
    sec = gv.Circular(diameter=1.2)
    assert gv.normal_depth(sec, 1.5, 0.01, 0.012) < gv.critical_depth(sec, 1.5)
    out = st.outlet_control_headwater(b, 1.5, 0.3)
    assert out.barrel_flow == "inlet critical"
    assert out.inlet_depth == pytest.approx(gv.critical_depth(sec, 1.5), rel=1e-12)


# ---------------------------------------------------------------------------
# which control governs
# ---------------------------------------------------------------------------

@pytest.mark.parametrize("make", [pipe, box])
def test_control_crosses_from_inlet_to_outlet_as_tailwater_rises(make):
    b = make()
    q = 1.5 if b.shape == "circular" else 4.0
    tw = np.linspace(0.0, 3.0, 61)
    r = st.culvert_headwater(b, q, tailwater=tw)
    assert r.control[0] == "inlet" and r.control[-1] == "outlet"
    switch = np.flatnonzero(r.control == "outlet")[0]
    assert np.all(r.control[switch:] == "outlet")  # one crossing
    # the backwater in the barrel rises with the tailwater ...
    assert np.all(np.diff(r.inlet_depth[switch:]) > 0)
    # ... and so does the headwater once the barrel runs full (outlet depth TW, energy grade parallel)
    full = r.barrel_flow == "full"
    assert full.sum() > 5
    np.testing.assert_allclose(np.diff(r.outlet_headwater[full]), np.diff(tw[full]), rtol=1e-9)
    np.testing.assert_array_equal(r.headwater, np.where(r.control == "outlet", r.outlet_headwater,
                                                        r.inlet_headwater))


def test_mild_barrel_with_free_outlet_can_be_outlet_controlled():
    b = pipe(length=60.0, slope=0.001, roughness=0.013)
    r = st.culvert_headwater(b, 1.0, tailwater=0.0)
    assert r.control == "outlet" and r.barrel_flow == "partly full"
    assert r.headwater > r.inlet_headwater


def test_tailwater_from_downstream_channel_normal_depth():
    ch = st.DownstreamChannel(section=gv.Trapezoidal(bottom_width=2.0, side_slope=2.0), slope=0.002,
                              roughness=0.03)
    b = pipe()
    q = np.array([0.5, 1.5, 3.0])
    r = st.culvert_headwater(b, q, downstream_channel=ch)
    yn = gv.normal_depth(ch.section, q, 0.002, 0.03)
    np.testing.assert_allclose(r.tailwater, yn, rtol=1e-14)
    same = st.culvert_headwater(b, q, tailwater=yn, tailwater_velocity=q / ch.section.area(yn))
    np.testing.assert_allclose(r.headwater, same.headwater, rtol=1e-14)


def test_allowable_headwater_flag():
    b = pipe()
    q = np.array([0.5, 1.5, 3.0])
    r = st.culvert_headwater(b, q, tailwater=0.2, allowable_headwater=1.0)
    np.testing.assert_array_equal(r.above_allowable, r.headwater > 1.0)
    assert r.above_allowable.any() and not r.above_allowable.all()
    r = st.culvert_headwater(b, 1.5, tailwater=0.2)
    assert r.above_allowable is False and r.allowable_headwater is None
    assert "headwater=" in repr(r)


def test_vectorised_equals_one_at_a_time():
    b = pipe()
    q = np.array([0.3, 1.1, 2.4, 4.0])
    tw = np.array([0.1, 1.4, 0.5, 2.0])
    r = st.culvert_headwater(b, q, tailwater=tw)
    for i in range(q.size):
        one = st.culvert_headwater(b, float(q[i]), tailwater=float(tw[i]))
        assert r.headwater[i] == pytest.approx(one.headwater, rel=1e-12)
        assert r.control[i] == one.control


# ---------------------------------------------------------------------------
# bad input
# ---------------------------------------------------------------------------

def test_bad_culvert_input_raises():
    with pytest.raises(gv.InvalidInputError, match="valid choices"):
        pipe(inlet="rounded_somehow")
    with pytest.raises(gv.InvalidInputError, match="box"):
        pipe(inlet="box_wingwalls_0")
    with pytest.raises(gv.InvalidInputError, match="length"):
        pipe(length=-3.0)
    with pytest.raises(gv.InvalidInputError, match="diameter"):
        pipe(diameter=0.0)
    with pytest.raises(gv.InvalidInputError, match="tailwater"):
        st.culvert_headwater(pipe(), 1.0)
    with pytest.raises(gv.InvalidInputError, match="tailwater"):
        st.outlet_control_headwater(pipe(), 1.0, -0.5)
    with pytest.raises(gv.InvalidInputError, match="exit_loss"):
        st.outlet_control_headwater(pipe(), 1.0, 0.5, exit_loss=1.5)
    with pytest.raises(gv.InvalidInputError, match="discharge"):
        st.inlet_control_headwater(pipe(), -1.0)
    with pytest.raises(gv.InvalidInputError, match=r"do not fit together \(discharge \(3,\), tailwater \(2,\)"):
        st.culvert_headwater(pipe(), [1.0, 2.0, 3.0], tailwater=[0.5, 0.6])
    with pytest.raises(gv.InvalidInputError, match=r"do not fit together \(discharge \(3,\), tailwater \(2,\)"):
        st.outlet_control_headwater(pipe(), [1.0, 2.0, 3.0], [0.5, 0.6])
    with pytest.raises(gv.InvalidInputError, match="allowable_headwater must be a single number"):
        st.culvert_headwater(pipe(), 1.0, tailwater=0.5, allowable_headwater=[1.0, 2.0])
    with pytest.raises(gv.InvalidInputError, match="slope must be a single number"):
        gv.conduit_capacity(gv.Circular(diameter=1.0), [0.001, 0.01], 0.013)

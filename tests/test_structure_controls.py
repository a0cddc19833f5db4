"""Structures as boundary controls of a reach, checked against independent computations.

References written out here, not taken from gvflow:

* the GVF distance integral x2 - x1 = ∫ (1 - Fr²)/(S0 - Sf) dy for a rectangle with
  Manning friction (Chow 1959, *Open-Channel Hydraulics*, eq. 9-13, direct integration),
  integrated by scipy's adaptive quadrature;
* Rehbock's weir relation Q = (0.611 + 0.08 h/P) (2/3) sqrt(2g) b h^1.5 (Henderson 1966,
  *Open Channel Flow*, ch. 6; from memory - verify);
* critical flow at a channel entrance: for a rectangle without loss q = sqrt(g) (2H/3)^1.5
  (Henderson 1966, ch. 4/6; exact), in general H = yc + (1 + ke) Vc²/2g with yc from
  Q² T / (g A³) = 1 (Chow 1959, eq. 4-5);
* the full-barrel culvert energy equation HW = TW + (1 + ke) V²/2g + L Sf - L S0 with exit
  loss V²/2g (FHWA 2012, *Hydraulic Design of Highway Culverts*, HDS-5, ch. 3; from memory -
  verify);
* energy conservation from the pool behind a sluice gate to the vena contracta
  (Henderson 1966, ch. 6; exact for the free-flow model).
"""

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as hst
from scipy.integrate import quad
from scipy.optimize import brentq

import gvflow as gv
from gvflow import structures as st

G = 9.80665
B = 3.0
RECT = gv.Rectangular(width=B)


def seg(length, slope, section=RECT, n=0.015):
    return gv.Segment(length=length, slope=slope, section=section, roughness=n)


def dxdy(y, q, s0, n, b=B):
    """(1 - Fr²)/(S0 - Sf), rectangle, Manning friction, written out."""
    a = b * y
    r = a / (b + 2 * y)
    fr2 = q * q * b / (G * a ** 3)
    sf = (n * q / (a * r ** (2 / 3))) ** 2
    return (1 - fr2) / (s0 - sf)


def distance(y_from, y_to, q, s0, n):
    return quad(dxdy, y_from, y_to, args=(q, s0, n), epsabs=1e-12, epsrel=1e-12, limit=200)[0]


def yn_rect(q, s0, n, b=B):
    return brentq(lambda y: b * y * (b * y / (b + 2 * y)) ** (2 / 3) * math.sqrt(s0) / n - q, 1e-9, 100.0)


def rehbock_head(q, p, b=B):
    """Head on a full-width sharp-crested weir from Rehbock's relation (Henderson 1966; from memory)."""
    return brentq(lambda h: (0.611 + 0.08 * h / p) * (2 / 3) * math.sqrt(2 * G) * b * h ** 1.5 - q, 1e-12, 50.0,
                  xtol=1e-15)


def details(profile):
    return [c.text for c in profile.controls if c.kind == "control detail"]


# --------------------------------------------------------------------------------------------
# weir: the backwater upstream
# --------------------------------------------------------------------------------------------

Q_W, S_W, N_W, P_W, L_W = 5.0, 0.001, 0.015, 1.5, 6000.0


@pytest.fixture(scope="module")
def weir_profile():
    reach = gv.Reach(segments=[seg(L_W, S_W, n=N_W)], discharge=Q_W, downstream=gv.Weir(crest_height=P_W))
    return reach.solve(max_step=5.0)


def test_weir_sets_crest_plus_rehbock_head(weir_profile):
    h = rehbock_head(Q_W, P_W)
    assert weir_profile.depth[-1] == pytest.approx(P_W + h, rel=1e-12)
    assert weir_profile.profile_types == ["M1"]
    assert "head 0.902 m, free flow" in details(weir_profile)[0]


def test_weir_m1_matches_quadrature(weir_profile):
    # Chow (1959) eq. 9-13 by quadrature from the weir depth upstream: the depth whose distance
    # from the weir is L - x. Depths, not distances, are compared: near normal depth the distance
    # is very sensitive to the depth.
    y_end = weir_profile.depth[-1]
    yn = yn_rect(Q_W, S_W, N_W)
    errors = []
    for x in (1000.0, 3000.0, 4000.0, 5000.0, 5900.0):
        y_ref = brentq(lambda y, x=x: distance(y, y_end, Q_W, S_W, N_W) - (L_W - x), yn * (1 + 1e-9), y_end,
                       xtol=1e-14)
        errors.append(abs(weir_profile.depth_at(x) - y_ref) / y_ref)
    assert max(errors) < 3e-6, errors  # standard step, 5 m stations: measured 1.2e-6 at most


def test_backwater_extent_matches_quadrature(weir_profile):
    yn = yn_rect(Q_W, S_W, N_W)
    ext = gv.backwater_extent(weir_profile)  # 1 % of normal depth
    ref = distance(1.01 * yn, weir_profile.depth[-1], Q_W, S_W, N_W)  # Chow (1959) eq. 9-13
    assert ext.within_reach
    assert ext.normal_depth == pytest.approx(yn, rel=1e-9)
    assert ext.depth == pytest.approx(1.01 * yn, rel=1e-6)
    assert ext.distance == pytest.approx(ref, abs=0.05)  # 2559 m; station spacing 5 m
    assert ext.x == pytest.approx(L_W - ext.distance)
    tighter = gv.backwater_extent(weir_profile, tolerance=0.001)
    assert tighter.distance == pytest.approx(distance(1.001 * yn, weir_profile.depth[-1], Q_W, S_W, N_W), abs=0.5)


def test_backwater_beyond_a_short_reach_and_bad_tolerance():
    p = gv.Reach(segments=[seg(500.0, S_W, n=N_W)], discharge=Q_W, downstream=gv.Weir(crest_height=P_W)).solve()
    ext = gv.backwater_extent(p)
    assert not ext.within_reach and ext.x == 0.0 and ext.distance == 500.0
    for bad in (0.0, -0.01, 1.5, float("nan")):
        with pytest.raises(gv.InvalidInputError, match="tolerance"):
            gv.backwater_extent(p, tolerance=bad)


def test_drawdown_extent_above_a_free_overfall():
    # M2 drawdown towards critical depth at the brink: depth below normal, the same 1 % rule
    q, s0, n = 5.0, 0.0008, 0.015
    p = gv.Reach(segments=[seg(3000.0, s0, n=n)], discharge=q, downstream=gv.FreeOverfall()).solve(max_step=5.0)
    yn = yn_rect(q, s0, n)
    yc = ((q / B) ** 2 / G) ** (1 / 3)
    ext = gv.backwater_extent(p)
    ref = distance(0.99 * yn, yc * (1 + 1e-9), q, s0, n)  # M2: x grows as the depth falls towards yc
    assert ext.depth == pytest.approx(0.99 * yn, rel=1e-6)
    assert ext.distance == pytest.approx(ref, rel=1e-3)  # measured 4e-4: the M2 is singular at yc


@settings(max_examples=25, deadline=None)
@given(q=hst.floats(0.5, 15.0), crest=hst.floats(0.2, 2.5), slope=hst.floats(2e-4, 2e-3))
def test_property_weir_on_a_mild_channel(q, crest, slope):
    yc = ((q / B) ** 2 / G) ** (1 / 3)
    yn = yn_rect(q, slope, 0.015)
    if yn <= 1.01 * yc:
        return  # not a mild channel for this discharge
    p = gv.Reach(segments=[seg(1500.0, slope)], discharge=q, downstream=gv.Weir(crest_height=crest)).solve(n_steps=60)
    y_end = crest + rehbock_head(q, crest)
    assert p.depth[-1] == pytest.approx(y_end, rel=1e-10)
    dy = np.diff(p.depth)
    if y_end > yn:  # M1: rises towards the weir, stays between normal depth and the weir depth
        assert np.all(dy >= -1e-12) and np.all(p.depth >= yn * (1 - 1e-9))
    else:  # M2: the weir is lower than normal depth and draws the water down
        assert np.all(dy <= 1e-12) and np.all(p.depth <= yn * (1 + 1e-9)) and np.all(p.depth > yc)
    assert p.depth[-1] == p.depth.max() if y_end > yn else p.depth[-1] == p.depth.min()


def test_other_weir_formulas_set_their_heads():
    # each formula's depth is crest height + its relation's head (module functions, tested on their own)
    sec = gv.Trapezoidal(bottom_width=2.0, side_slope=1.5)
    cases = [
        (gv.Weir(crest_height=1.0, formula="kindsvater_carter"), RECT,
         st.kindsvater_carter_head(4.0, B, 1.0, channel_width=B)),
        (gv.Weir(crest_height=1.0, formula="kindsvater_carter", crest_length=2.0), RECT,
         st.kindsvater_carter_head(4.0, 2.0, 1.0, channel_width=B)),
        (gv.Weir(crest_height=1.0, end_contractions=2, crest_length=2.0), RECT,
         st.rectangular_weir_head(4.0, 2.0, 1.0, end_contractions=2)),
        (gv.Weir(crest_height=0.6, formula="v_notch", notch_angle=60.0), sec, st.v_notch_head(4.0, notch_angle=60.0)),
        (gv.Weir(crest_height=0.8, formula="broad_crested", crest_length=2.0), sec,
         st.broad_crested_weir_head(4.0, 2.0, 0.8, approach_section=sec)),
    ]
    for weir, section, head in cases:
        p = gv.Reach(segments=[seg(800.0, 0.001, section=section)], discharge=4.0, downstream=weir).solve()
        assert p.depth[-1] == pytest.approx(weir.crest_height + head, rel=1e-12), weir


def test_broad_crested_weir_energy_balance_with_the_reach_end_section():
    # Critical flow on the crest: Q = Cd b sqrt(g) (2 H1/3)^1.5 with H1 = h + V1²/2g and V1 the
    # velocity in the reach's end section at depth P + h (Henderson 1966, ch. 6; exact for Cd = 1).
    weir = gv.Weir(crest_height=0.8, formula="broad_crested", discharge_coefficient=1.0)
    p = gv.Reach(segments=[seg(800.0, 0.001)], discharge=4.0, downstream=weir).solve()
    y1 = p.depth[-1]
    h1 = (y1 - 0.8) + (4.0 / (B * y1)) ** 2 / (2 * G)
    assert 4.0 == pytest.approx(B * math.sqrt(G) * (2 * h1 / 3) ** 1.5, rel=1e-12)


def test_submerged_weir_villemonte_and_beyond_range():
    # Villemonte (1947; from memory - verify): Q = Qf(h1) (1 - (h2/h1)^1.5)^0.385
    z_crest = 1.0  # bed at the reach end is the datum
    weir = gv.Weir(crest_height=1.0, tailwater_level=z_crest + 0.4)
    p = gv.Reach(segments=[seg(800.0, 0.001)], discharge=4.0, downstream=weir).solve()
    h1 = p.depth[-1] - 1.0
    qf = (0.611 + 0.08 * h1) * (2 / 3) * math.sqrt(2 * G) * B * h1 ** 1.5
    assert 4.0 == pytest.approx(qf * (1 - (0.4 / h1) ** 1.5) ** 0.385, rel=1e-10)
    assert "submerged" in details(p)[0] and "Villemonte factor" in details(p)[0]
    drowned = gv.Weir(crest_height=1.0, tailwater_level=z_crest + 2.0)
    with pytest.raises(gv.NoSolutionError, match="submerged beyond"):
        gv.Reach(segments=[seg(800.0, 0.001)], discharge=4.0, downstream=drowned).solve()


# --------------------------------------------------------------------------------------------
# culvert
# --------------------------------------------------------------------------------------------

BOX = st.BoxBarrel(span=2.0, rise=1.5, length=30.0, slope=0.005, roughness=0.013)  # ke 0.4


def culvert_reach(tailwater, **kw):
    ctrl = gv.Culvert(barrel=BOX, tailwater=tailwater, **kw)
    return gv.Reach(segments=[seg(800.0, 0.001)], discharge=6.0, downstream=ctrl)


def test_culvert_crosses_from_inlet_to_outlet_control_as_tailwater_rises():
    tailwaters = [0.3, 0.8, 1.2, 1.5, 1.8, 2.2]
    governing = []
    for tw in tailwaters:
        p = culvert_reach(tw, invert_offset=0.25).solve()
        ref = st.culvert_headwater(BOX, 6.0, tailwater=tw)
        assert p.depth[-1] == pytest.approx(0.25 + ref.headwater, rel=1e-12)
        text = details(p)[0]
        governing.append(text.split(" control governs")[0])
        assert p.profile_types == ["M1"]
    assert governing == ["inlet", "inlet", "outlet", "outlet", "outlet", "outlet"]
    depths = [culvert_reach(tw).solve().depth[-1] for tw in tailwaters]
    assert np.all(np.diff(depths) >= 0)


def test_culvert_full_barrel_headwater_by_hand_in_a_reach():
    # HDS-5 ch. 3 energy equation, full barrel, exit loss 1.0, no velocity below the outlet:
    # HW = TW + V²/2g (exit) + ke V²/2g + L Sf - L S0, measured above the inlet invert
    tw, q, ke = 2.2, 6.0, 0.4
    a, per = 2.0 * 1.5, 2 * (2.0 + 1.5)
    v = q / a
    sf = (0.013 * q / (a * (a / per) ** (2 / 3))) ** 2
    hw = tw + (1 + ke) * v * v / (2 * G) + 30.0 * sf - 30.0 * 0.005
    p = culvert_reach(tw, invert_offset=-0.1, allowable_headwater=2.0).solve()
    assert p.depth[-1] == pytest.approx(hw - 0.1, abs=1e-9)
    text = details(p)
    assert text[0].startswith("outlet control governs") and "barrel full" in text[0]
    assert text[1] == f"headwater {hw:.2f} m above the allowable 2 m"
    assert not any("above the allowable" in t for t in details(culvert_reach(0.5, allowable_headwater=2.0).solve()))


def test_culvert_tailwater_from_downstream_channel():
    ch = st.DownstreamChannel(section=gv.Trapezoidal(bottom_width=2.0, side_slope=2.0), slope=0.002, roughness=0.03)
    ctrl = gv.Culvert(barrel=BOX, downstream_channel=ch)
    p = gv.Reach(segments=[seg(800.0, 0.001)], discharge=6.0, downstream=ctrl).solve()
    ref = st.culvert_headwater(BOX, 6.0, downstream_channel=ch)
    assert p.depth[-1] == pytest.approx(ref.headwater, rel=1e-12)
    assert f"tailwater {ch.tailwater(6.0):.3f} m" in details(p)[0]


def test_culvert_tailwater_given_twice_or_not_at_all():
    with pytest.raises(gv.InvalidInputError, match="either as tailwater"):
        gv.Culvert(barrel=BOX)
    ch = st.DownstreamChannel(section=RECT, slope=0.002, roughness=0.03)
    with pytest.raises(gv.InvalidInputError, match="not both"):
        gv.Culvert(barrel=BOX, tailwater=1.0, downstream_channel=ch)


# --------------------------------------------------------------------------------------------
# free overfall
# --------------------------------------------------------------------------------------------

def test_free_overfall_critical_depth_and_brink_report():
    q = 3.0
    yc = ((q / B) ** 2 / G) ** (1 / 3)  # rectangle, exact
    p = gv.Reach(segments=[seg(400.0, 0.0005)], discharge=q, downstream=gv.FreeOverfall()).solve()
    assert p.depth[-1] == pytest.approx(yc, rel=1e-10)
    assert p.profile_types == ["M2"]
    # brink depth 0.715 yc, critical section 3-4 yc upstream (Rouse 1936; from memory - verify)
    text = details(p)[0]
    assert f"brink depth {0.715 * yc:.3f} m" in text and f"about {3.5 * yc:.2f} m upstream" in text
    trap = gv.Reach(segments=[seg(400.0, 0.0005, section=gv.Trapezoidal(bottom_width=2.0, side_slope=1.0))],
                    discharge=q, downstream=gv.FreeOverfall()).solve()
    assert "published for rectangular channels" in details(trap)[0]


def test_free_overfall_below_a_steep_segment_reports_supercritical_arrival():
    p = gv.Reach(segments=[seg(200.0, 0.02)], discharge=3.0, downstream=gv.FreeOverfall()).solve()
    assert "supercritical" in details(p)[0]


# --------------------------------------------------------------------------------------------
# stage-discharge table
# --------------------------------------------------------------------------------------------

TABLE = dict(stage=[101.0, 101.6, 102.1, 102.9], discharge=[0.0, 2.0, 6.0, 15.0])


def test_rating_interpolates_the_stage():
    ctrl = gv.StageDischargeTable(**TABLE)
    p = gv.Reach(segments=[seg(600.0, 0.001)], discharge=4.0, datum=100.0, downstream=ctrl).solve()
    stage = 101.6 + (4.0 - 2.0) / (6.0 - 2.0) * (102.1 - 101.6)  # linear interpolation by hand
    assert p.stage[-1] == pytest.approx(stage, rel=1e-14)
    assert p.depth[-1] == pytest.approx(stage - 100.0, rel=1e-12)
    assert f"stage {stage:.3f} m" in details(p)[0]


def test_rating_out_of_range_names_discharge_and_range():
    reach = gv.Reach(segments=[seg(600.0, 0.001)], discharge=20.0, datum=100.0,
                     downstream=gv.StageDischargeTable(**TABLE))
    with pytest.raises(gv.ControlError, match=r"discharge 20 lies outside .* covers 0 to 15"):
        reach.solve()
    below_bed = gv.Reach(segments=[seg(600.0, 0.001)], discharge=1.0, datum=101.5,
                         downstream=gv.StageDischargeTable(**TABLE))
    with pytest.raises(gv.ControlError, match="at or below the bed"):
        below_bed.solve()


def test_rating_not_monotone_or_ragged():
    with pytest.raises(gv.InvalidInputError, match="not monotone"):
        gv.StageDischargeTable(stage=[101.0, 101.6, 101.5], discharge=[0.0, 2.0, 6.0])
    with pytest.raises(gv.InvalidInputError, match="not monotone"):
        gv.StageDischargeTable(stage=[101.0, 101.6, 102.0], discharge=[0.0, 2.0, 2.0])
    with pytest.raises(gv.InvalidInputError, match="same number of rows"):
        gv.StageDischargeTable(stage=[101.0, 101.6, 102.0], discharge=[0.0, 2.0])
    text = '{"segments": [{"length": 100, "slope": 0.001, "section": {"shape": "rectangular", "width": 3}, ' \
           '"roughness": 0.015}], "discharge": 1, "downstream": {"kind": "stage_discharge", "stage": [2, 1], ' \
           '"discharge": [0, 1]}}'
    with pytest.raises(ValueError, match="not monotone"):
        gv.Reach.model_validate_json(text)


# --------------------------------------------------------------------------------------------
# pool at the upstream end
# --------------------------------------------------------------------------------------------

def test_pool_into_steep_rectangle_matches_critical_flow_closed_form():
    # no entrance loss: q = sqrt(g) (2H/3)^1.5 (Henderson 1966; exact)
    head = 1.5
    reach = gv.Reach(segments=[seg(300.0, 0.02, n=0.013)], discharge=1.0, datum=50.0,
                     upstream=gv.Pool(level=50.0 + 300.0 * 0.02 + head))
    out = gv.solve_discharge_from_pool(reach)
    assert out.entrance == "critical"
    assert out.discharge == pytest.approx(B * math.sqrt(G) * (2 * head / 3) ** 1.5, rel=1e-10)
    assert out.entrance_depth == pytest.approx(2 * head / 3, rel=1e-10)
    assert out.profile.profile_types == ["S2"]
    assert abs(out.residual) < 1e-9


def test_pool_into_steep_trapezoid_with_entrance_loss():
    # H = yc + (1 + ke) Vc²/2g with Q² T/(g A³) = 1, trapezoid written out (Chow 1959, eq. 4-5)
    b, z, ke, head = 2.0, 1.5, 0.3, 1.2
    sec = gv.Trapezoidal(bottom_width=b, side_slope=z)
    reach = gv.Reach(segments=[seg(200.0, 0.03, section=sec, n=0.014)], discharge=1.0,
                     upstream=gv.Pool(level=200.0 * 0.03 + head, entrance_loss=ke))
    out = gv.solve_discharge_from_pool(reach)
    q = out.discharge
    yc = brentq(lambda y: q * q * (b + 2 * z * y) / (G * ((b + z * y) * y) ** 3) - 1, 1e-6, 10.0, xtol=1e-15)
    a = (b + z * yc) * yc
    assert out.entrance == "critical"
    assert yc + (1 + ke) * q * q / (2 * G * a * a) == pytest.approx(head, rel=1e-10)
    # consistency with gvflow.structures' own pool relations (not validation: the check above is)
    ref = st.pool_discharge(head, sec, 0.03, 0.014, entrance_loss=ke)
    assert ref.control == "critical" and q == pytest.approx(ref.discharge, rel=1e-10)
    assert st.critical_entry_head(q, sec, entrance_loss=ke) == pytest.approx(head, rel=1e-10)


S_P, N_P, KE_P, H_P, P_P = 0.0005, 0.013, 0.2, 1.5, 1.0


def pool_reach(length, downstream):
    return gv.Reach(segments=[seg(length, S_P, n=N_P)], discharge=1.0,
                    upstream=gv.Pool(level=H_P + length * S_P, entrance_loss=KE_P), downstream=downstream)


def test_pool_into_long_mild_channel_matches_normal_depth_energy_balance():
    # H = yn + (1 + ke) Vn²/2g with yn the normal depth of Q (Chow 1959, ch. 10-11; from memory)
    ref = st.pool_discharge(H_P, RECT, S_P, N_P, entrance_loss=KE_P)
    out = gv.solve_discharge_from_pool(pool_reach(20000.0, gv.Weir(crest_height=P_P)), max_step=50.0)
    assert out.entrance == "subcritical" and ref.control == "normal"
    assert out.discharge == pytest.approx(ref.discharge, rel=1e-8)  # the M1 has died out at 20 km
    yn = yn_rect(out.discharge, S_P, N_P)
    assert yn + (1 + KE_P) * (out.discharge / (B * yn)) ** 2 / (2 * G) == pytest.approx(H_P, rel=1e-7)
    uniform = gv.solve_discharge_from_pool(pool_reach(2000.0, gv.UniformFlow()))
    assert uniform.discharge == pytest.approx(ref.discharge, rel=1e-10)
    note = [t for t in details(out.profile) if t.startswith("pool")][0]
    assert "do not match" not in note


def test_pool_into_short_mild_channel_matches_quadrature_backwater():
    # The weir's M1 reaches the entrance: Q solves H = y0 + (1 + ke) V0²/2g with y0 from the
    # quadrature of Chow (1959) eq. 9-13 over the reach length and the weir depth from Rehbock.
    length = 1500.0

    def y0_of(q):
        y_end = P_P + rehbock_head(q, P_P)
        yn = yn_rect(q, S_P, N_P)
        return brentq(lambda y0: distance(y0, y_end, q, S_P, N_P) - length, yn * (1 + 1e-9), y_end, xtol=1e-14)

    def balance(q):
        y0 = y0_of(q)
        return y0 + (1 + KE_P) * (q / (B * y0)) ** 2 / (2 * G) - H_P

    q_ref = brentq(balance, 2.0, 6.0, xtol=1e-12)
    out = gv.solve_discharge_from_pool(pool_reach(length, gv.Weir(crest_height=P_P)), max_step=5.0)
    assert out.discharge == pytest.approx(q_ref, rel=1e-6)  # measured 2e-7 at 5 m stations
    long = st.pool_discharge(H_P, RECT, S_P, N_P, entrance_loss=KE_P).discharge
    assert out.discharge < long  # the backwater reaching the entrance holds back the flow


def test_pool_notes_and_unused_on_mild_channel():
    p = pool_reach(2000.0, gv.Weir(crest_height=P_P)).solve()
    kinds = [c.kind for c in p.controls if c.x == 0.0]
    assert kinds == ["unused control", "control detail"]
    assert "do not match" in details(p)[0]  # Q = 1 is not what this pool delivers


def test_pool_discharge_needs_a_pool_and_water_above_it():
    with pytest.raises(gv.InvalidInputError, match="gv.Pool"):
        gv.solve_discharge_from_pool(gv.Reach(segments=[seg(100.0, 0.001)], discharge=1.0))
    low = gv.Reach(segments=[seg(100.0, 0.001)], discharge=1.0, upstream=gv.Pool(level=0.05))
    with pytest.raises(gv.InvalidInputError, match="at or below the bed"):
        gv.solve_discharge_from_pool(low)
    # a weir crest above the pool level: no flow leaves the pool
    held = gv.Reach(segments=[seg(100.0, 0.001)], discharge=1.0, upstream=gv.Pool(level=1.0),
                    downstream=gv.Weir(crest_height=1.5))
    with pytest.raises(gv.NoSolutionError, match="no flow leaves"):
        gv.solve_discharge_from_pool(held)


def test_pool_discharge_into_a_pipe_just_below_its_crown():
    # A pool 0.89 m above the invert of a 0.9 m pipe (mild, 100 m, normal depth downstream): the entrance
    # depth is normal depth, so yn(Q) + (1 + ke) Q²/(2 g A²) = H (energy from the pool, Chow 1959 ch. 10;
    # from memory), solved here with the circle's area and Manning written out and brentq: 0.8009 m³/s. Its
    # bracket starts at the largest entrance discharge (0.878), above what the pipe carries in uniform flow
    # (0.871): the search used to step down past the root and give up.
    d, s0, n, ke = 0.9, 0.002, 0.013, 0.5

    def area_perimeter(y):
        th = 2 * math.acos(1 - 2 * y / d)
        return d * d * (th - math.sin(th)) / 8, d * th / 2

    def manning(y):
        a, p = area_perimeter(y)
        return a * (a / p) ** (2 / 3) * math.sqrt(s0) / n

    def head_needed(q):
        y = brentq(lambda z: manning(z) - q, 1e-9, 0.938 * d, xtol=1e-15)
        return y + (1 + ke) * q * q / (2 * G * area_perimeter(y)[0] ** 2)

    q_ref = brentq(lambda q: head_needed(q) - 0.89, 0.05, 0.86, xtol=1e-14)
    reach = gv.Reach(segments=[gv.Segment(length=100.0, slope=s0, section=gv.Circular(diameter=d), roughness=n)],
                     discharge=0.1, upstream=gv.Pool(level=s0 * 100.0 + 0.89, entrance_loss=ke),
                     downstream=gv.UniformFlow())
    assert gv.solve_discharge_from_pool(reach).discharge == pytest.approx(q_ref, rel=1e-8)


# --------------------------------------------------------------------------------------------
# sluice gate report
# --------------------------------------------------------------------------------------------

def test_gate_reports_depth_behind_it_free_and_submerged():
    q, a, cc = 5.0, 0.3, 0.61
    qb, yj = q / B, cc * a
    # free flow: energy conserved from behind the gate to the vena contracta (Henderson 1966)
    e_jet = yj + qb * qb / (2 * G * yj * yj)
    y1 = brentq(lambda y: y + qb * qb / (2 * G * y * y) - e_jet, 1.0, 20.0, xtol=1e-14)
    free = gv.Reach(segments=[seg(300.0, 0.001)], discharge=q, upstream=gv.SluiceGate(opening=a),
                    downstream=gv.FixedDepth(1.6)).solve()
    assert free.jumps
    text = details(free)[0]
    assert text.startswith("free flow") and f"depth behind the gate {y1:.3f} m" in text
    drowned = gv.Reach(segments=[seg(300.0, 0.001)], discharge=q, upstream=gv.SluiceGate(opening=a),
                       downstream=gv.FixedDepth(3.0)).solve()
    text = details(drowned)[0]
    assert text.startswith("submerged flow") and f"free flow would need {y1:.3f} m" in text
    y3 = drowned.depth[0]
    # submerged: momentum from the vena contracta to the water at the gate, then energy upstream
    y = math.sqrt(y3 * y3 + 2 * qb * qb / G * (1 / y3 - 1 / yj))
    y1s = brentq(lambda z: z + qb * qb / (2 * G * z * z) - (y + qb * qb / (2 * G * yj * yj)), 1.0, 30.0)
    assert f"depth behind the gate {y1s:.3f} m" in text
    assert any(c.kind == "drowned jump" for c in drowned.controls)


def _drowned_gate_pool(q, a, y3, cc=0.61):
    """Depth behind a submerged gate in a rectangle of width B: momentum from the vena contracta (jet cc a
    under water at y) to the water y3 below the gate, then energy from the pool to the vena contracta
    (Henderson 1966, §6.5; from memory)."""
    qb, yj = q / B, cc * a
    y = math.sqrt(y3 * y3 + 2 * qb * qb / G * (1 / y3 - 1 / yj))
    return brentq(lambda z: z + qb * qb / (2 * G * z * z) - (y + qb * qb / (2 * G * yj * yj)), y, 50.0,
                  xtol=1e-14)


def test_a_drowned_gate_holds_water_above_its_lip_even_where_free_flow_would_not():
    # Q = 6 m³/s under a 1.0 m opening: free flow would leave the pool at 0.914 m, below the lip, but the
    # tailwater drowns the gate and the pool stands above 3 m; at the head of a reach and between segments.
    q, a = 6.0, 1.0
    up = gv.Reach(segments=[seg(200.0, 0.001)], discharge=q, upstream=gv.SluiceGate(opening=a),
                  downstream=gv.FixedDepth(2.5)).solve()
    text = details(up)[0]
    assert text.startswith("submerged flow") and "in free flow the water would stand below the gate lip" in text
    assert f"depth behind the gate {_drowned_gate_pool(q, a, up.depth[0]):.3f} m" in text
    mid = gv.Reach(segments=[seg(200.0, 0.001), seg(200.0, 0.001).model_copy(update=dict(
        gate=gv.SluiceGate(opening=a)))], discharge=q, downstream=gv.FixedDepth(3.0)).solve()
    at = np.flatnonzero(np.isclose(mid.x, 200.0))
    assert mid.depth[at[0]] == pytest.approx(_drowned_gate_pool(q, a, mid.depth[at[1]]), rel=1e-9)


def test_gate_opening_above_the_upstream_depth_raises():
    # jet 0.183 m is below critical depth (0.19 m) but the water behind the gate would stand below its lip;
    # on a steep bed nothing drowns the gate, so it flows free and cannot hold the water (on a mild bed a
    # 1.0 m tailwater drowns it, and it holds a pool above its lip: the test above)
    reach = gv.Reach(segments=[seg(300.0, 0.02)], discharge=0.8, upstream=gv.SluiceGate(opening=0.3),
                     downstream=gv.FixedDepth(1.0))
    with pytest.raises(gv.ControlError, match="opening is above the depth"):
        reach.solve()


# --------------------------------------------------------------------------------------------
# bad input, reach files, batches, plots
# --------------------------------------------------------------------------------------------

@pytest.mark.parametrize("kwargs, match", [
    (dict(crest_height=-0.5), "crest_height"),
    (dict(crest_height=0.0), "crest_height"),
    (dict(crest_height=1.0, formula="ogee"), "valid choices are: rehbock"),
    (dict(crest_height=1.0, formula="v_notch", crest_length=2.0), "no crest length"),
    (dict(crest_height=1.0, formula="kindsvater_carter", end_contractions=2), "rehbock"),
    (dict(crest_height=1.0, notch_angle=45.0), "notch_angle"),
    (dict(crest_height=1.0, discharge_coefficient=0.9), "broad_crested"),
    (dict(crest_height=1.0, formula="v_notch", notch_angle=120.0), "notch_angle"),
])
def test_weir_bad_input(kwargs, match):
    with pytest.raises(gv.InvalidInputError, match=match):
        gv.Weir(**kwargs)


def test_structures_at_the_wrong_end_or_section():
    # Reach wraps the control's complaint in pydantic's ValidationError (a ValueError)
    with pytest.raises(ValueError, match="downstream end"):
        gv.Reach(segments=[seg(100.0, 0.001)], discharge=1.0, upstream=gv.Weir(crest_height=1.0))
    with pytest.raises(ValueError, match="upstream end"):
        gv.Reach(segments=[seg(100.0, 0.001)], discharge=1.0, downstream=gv.Pool(level=3.0))
    trap = gv.Trapezoidal(bottom_width=2.0, side_slope=1.0)
    with pytest.raises(gv.ControlError, match="give crest_length"):
        gv.Reach(segments=[seg(100.0, 0.001, section=trap)], discharge=1.0,
                 downstream=gv.Weir(crest_height=1.0)).solve()
    with pytest.raises(gv.ControlError, match="exceeds the channel width"):
        gv.Reach(segments=[seg(100.0, 0.001)], discharge=1.0,
                 downstream=gv.Weir(crest_height=1.0, crest_length=4.0)).solve()


PIPE = st.CircularBarrel(diameter=1.2, length=40.0, slope=0.01, roughness=0.012,
                         inlet="concrete_pipe_groove_end_headwall")
CH = st.DownstreamChannel(section=gv.Trapezoidal(bottom_width=2.0, side_slope=2.0), slope=0.002,
                          roughness=gv.Manning(0.03))
ROUND_TRIP = {
    "weir": (gv.Weir(crest_height=1.2, formula="kindsvater_carter", crest_length=2.5, tailwater_level=0.5), None),
    "v_notch": (gv.Weir(crest_height=0.7, formula="v_notch", notch_angle=60.0), None),
    "broad_crested": (gv.Weir(crest_height=0.9, formula="broad_crested", discharge_coefficient=0.9), None),
    "culvert_box": (gv.Culvert(barrel=BOX, tailwater=1.4, invert_offset=0.1, allowable_headwater=2.0), None),
    "culvert_pipe": (gv.Culvert(barrel=PIPE, downstream_channel=CH), None),
    "free_overfall": (gv.FreeOverfall(distance_factor=3.2), None),
    "rating": (gv.StageDischargeTable(**TABLE), None),
    "pool_steep": (None, gv.Pool(level=12.0, entrance_loss=0.1)),
    "gate": (gv.FixedDepth(2.0), gv.SluiceGate(opening=0.3)),
}


@pytest.mark.parametrize("name", list(ROUND_TRIP))
def test_reach_json_round_trip_with_each_structure(name):
    down, up = ROUND_TRIP[name]
    slope = 0.01 if name == "pool_steep" else 0.001
    q = 12.2 if name == "pool_steep" else 2.0
    reach = gv.Reach(segments=[seg(400.0, slope), seg(300.0, slope / 2)], discharge=q, datum=100.0 if
                     name == "rating" else 0.0, downstream=down, upstream=up)
    text = reach.model_dump_json()
    back = gv.Reach.model_validate_json(text)
    assert back == reach
    assert back.model_dump_json() == text
    p1, p2 = reach.solve(), back.solve()
    for attr in ("x", "depth", "stage", "velocity"):
        np.testing.assert_array_equal(getattr(p1, attr), getattr(p2, attr))
    assert p1.controls == p2.controls
    assert p1.summary() == p2.summary()


def test_structures_vectorise_over_a_sweep():
    reach = gv.Reach(segments=[seg(800.0, 0.001)], discharge=4.0,
                     downstream=gv.Culvert(barrel=BOX, tailwater=1.2, allowable_headwater=1.7))
    qs = np.array([1.0, 3.0, 6.0, 9.0])
    result = reach.sweep(discharge=qs)
    for i, q in enumerate(qs):
        alone = reach.model_copy(update={"discharge": float(q)}).solve()
        np.testing.assert_allclose(result[i].depth, alone.depth, rtol=1e-12)
        assert result[i].controls == alone.controls


def test_long_section_marks_the_structures(tmp_path):
    matplotlib = pytest.importorskip("matplotlib")
    matplotlib.use("Agg")
    reach = gv.Reach(segments=[seg(800.0, 0.001)], discharge=4.0, upstream=gv.Pool(level=3.5),
                     downstream=gv.Culvert(barrel=BOX, tailwater=1.2, invert_offset=0.2))
    ax = reach.solve().plot()
    texts = [t.get_text() for t in ax.texts]
    assert "pool level 3.50 m" in texts and any(t.startswith("culvert box 2.00 x 1.50 m") for t in texts)
    # the barrel stands from the inlet invert (0.2 above the bed at the reach end, datum 0) to its soffit
    barrel = [p for p in ax.patches if p.get_gid() == "culvert barrel"][0].get_xy()
    assert barrel[:, 1].max() == pytest.approx(0.2 + 1.5) and barrel[:, 1].min() == pytest.approx(0.2 - 0.005 * 30.0)
    pool = [p for p in ax.patches if p.get_gid() == "pool"][0].get_xy()
    assert pool[:, 1].max() == pytest.approx(3.5)
    ax.figure.savefig(tmp_path / "culvert.png")

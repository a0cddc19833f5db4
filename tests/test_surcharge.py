"""Closed conduits that run full (surcharge) and invert drops at junctions: storm sewers as one reach.

References of the checks:
- the energy equation between two sections of a conduit running full, with the velocity Q/A_full
  unchanged along a pipe: the grade line rises upstream at the friction slope of full flow (hand
  energy equation; Chow 1959, *Open-Channel Hydraulics*, §6-1 for Manning, §8-1 for Darcy-Weisbach);
- Manning full flow Sf = (n Q / (A R^(2/3)))², A = pi D²/4, R = D/4 (closed form);
- Darcy-Weisbach full flow Sf = f V²/(2 g D) with f from the Colebrook-White equation
  1/sqrt f = -2 log10(ks/(3.7 D) + 2.51/(Re sqrt f)) (Colebrook 1939), solved here by scipy's brentq,
  independently of gvflow's Newton iteration;
- energy without loss across a junction with an invert drop: z + h + V²/2g equal on both sides;
- the exit loss of a submerged outlet with coefficient 1 (the grade line at the outlet is the tailwater)
  and the entrance loss ke V²/2g from a pool (hand headwater HW = HGL + (1 + ke) V²/2g);
- where a free surface rises to the crown: the x(y) form of the GVF equation integrated by scipy's
  quad (dx/dy = (1 - Fr²)/(S0 - Sf) with A, T, Sf from the public section and friction functions);
- the momentum balance of a jump into a full conduit: the first moment of the partly full circle by
  scipy's quad of (y - eta) 2 sqrt(eta (D - eta)), the full side's pressure on the full area.
"""

from __future__ import annotations

import math
import re

import numpy as np
import pytest
from scipy.integrate import quad
from scipy.optimize import brentq

import gvflow as gv

G = gv.SI.g
DATUM = 10.0
PIPES = [  # (length, slope, diameter, drop at its head)
    (80.0, 0.004, 0.60, 0.0),
    (100.0, 0.010, 0.60, 0.15),
    (120.0, 0.003, 0.75, 0.10),
]


def sewer(q, downstream, roughness=0.013, upstream=None):
    segs = [gv.Segment(length=L, slope=s, section=gv.Circular(diameter=d), roughness=roughness, drop=drop)
            for L, s, d, drop in PIPES]
    return gv.Reach(segments=segs, discharge=q, downstream=downstream, upstream=upstream, datum=DATUM)


def manning_sf(q, d, n):
    a = math.pi * d * d / 4
    return (n * q / (a * (d / 4) ** (2 / 3))) ** 2


def colebrook_sf(q, d, ks, nu=gv.SI.kinematic_viscosity):
    a = math.pi * d * d / 4
    v = q / a
    re_ = v * d / nu

    def fun(x):  # x = 1/sqrt(f)
        return x + 2 * math.log10(ks / (3.7 * d) + 2.51 * x / re_)

    x = brentq(fun, 1.0, 30.0, xtol=1e-15, rtol=1e-15)
    return v * v / (2 * G * d) / (x * x)


def hand_grade_line(q, tw, sf_of):
    """Grade line at every pipe end, outlet to inlet, by the hand energy equation (all pipes full)."""
    hgl_dn = [0.0] * 3
    hgl_up = [0.0] * 3
    hgl_dn[2] = DATUM + tw  # exit loss 1: the grade line at the submerged outlet is the tailwater
    for k in (2, 1, 0):
        L, s, d, drop = PIPES[k]
        if k < 2:
            v_dn = q / (math.pi * PIPES[k + 1][2] ** 2 / 4)
            v_up = q / (math.pi * d * d / 4)
            hgl_dn[k] = hgl_up[k + 1] + v_dn ** 2 / (2 * G) - v_up ** 2 / (2 * G)  # no junction loss
        hgl_up[k] = hgl_dn[k] + sf_of(q, d) * L
    return hgl_up, hgl_dn


@pytest.mark.parametrize("law", ["manning", "darcy"])
def test_storm_sewer_under_tailwater_follows_hand_energy_equation(law):
    q, tw = 0.7, 1.0
    rough, sf_of = ((0.013, lambda qq, d: manning_sf(qq, d, 0.013)) if law == "manning" else
                    (gv.DarcyWeisbach(0.0006), lambda qq, d: colebrook_sf(qq, d, 0.0006)))
    p = sewer(q, gv.FixedDepth(tw), rough).solve()
    assert p.surcharged.all()
    hgl_up, hgl_dn = hand_grade_line(q, tw, sf_of)
    xb = p.reach.boundaries
    for k in range(3):
        sel = p.segment == k
        x = p.x[sel]
        hand = hgl_dn[k] + sf_of(q, PIPES[k][2]) * (xb[k + 1] - x)
        np.testing.assert_allclose(p.hydraulic_grade[sel], hand, rtol=0, atol=1e-9)
        assert p.hydraulic_grade[sel][0] == pytest.approx(hgl_up[k], abs=1e-9)
        # velocity of full flow, no free surface
        np.testing.assert_allclose(p.velocity[sel], q / (math.pi * PIPES[k][2] ** 2 / 4), rtol=1e-13)
        assert np.all(p.froude[sel] == 0.0)
    np.testing.assert_allclose(p.surcharged_lengths, [L for L, *_ in PIPES], rtol=1e-13)
    crown_up = p.bed[0] + PIPES[0][2]
    assert p.max_head_above_crown == pytest.approx(max(p.head_above_crown), abs=0)
    assert p.head_above_crown[0] == pytest.approx(hgl_up[0] - crown_up, abs=1e-9)
    assert p.profile_types == []  # no free surface anywhere
    kinds = {c.kind for c in p.controls}
    assert {"surcharge", "submerged outlet"} <= kinds
    assert any("conduit.exit_loss" == rec.key for rec in p.coefficients)
    table = p.table()
    assert table["surcharged"].all() and np.array_equal(table["hydraulic_grade"], p.stage)


def test_pool_at_the_inlet_reports_the_headwater_with_its_entrance_loss():
    """HW = HGL at the inlet + (1 + ke) V²/2g (hand energy equation from the pool into the full pipe)."""
    q, tw, ke = 0.7, 1.0, 0.5
    p = sewer(q, gv.FixedDepth(tw), upstream=gv.Pool(level=20.0, entrance_loss=ke)).solve()
    hgl_up, _ = hand_grade_line(q, tw, lambda qq, d: manning_sf(qq, d, 0.013))
    v = q / (math.pi * 0.6 ** 2 / 4)
    hw = hgl_up[0] + (1 + ke) * v * v / (2 * G)
    assert p.energy_grade[0] + ke * p.velocity_head[0] == pytest.approx(hw, abs=1e-9)
    note = next(c.text for c in p.controls if c.kind == "control detail" and "pool" in c.text)
    need = float(re.search(r"needs pool level ([0-9.]+)", note).group(1))
    assert need == pytest.approx(hw, abs=5e-4)  # printed to the millimetre


def _crossing_by_quadrature(seg, q, y_from):
    """Distance upstream from depth y_from to the crown by scipy's quad of dx/dy (public functions)."""
    sec, s0, n = seg.section, seg.slope, seg.roughness
    d = sec.max_depth

    def dxdy(y):
        a, t = sec.area(y), sec.top_width(y)
        fr2 = q * q * t / (G * a ** 3)
        return (1 - fr2) / (s0 - gv.friction_slope(sec, q, y, n))

    val, err = quad(dxdy, y_from, d, epsabs=1e-13, epsrel=1e-13, limit=400)
    return -val


@pytest.mark.parametrize("method", ["standard_step", "ivp"])
def test_free_surface_meets_the_full_flow_line_continuously(method):
    """Free outfall: the middle pipe ends at critical depth (it drops into the larger last pipe), its free
    surface rises upstream to the crown and it runs full from there, as does the first pipe; the full
    stretch starts where the free surface meets the crown and its grade line continues from there at
    the full-flow slope."""
    q = 0.7
    reach = sewer(q, gv.CriticalFlow())
    p = reach.solve(method=method, n_steps=200)
    k = 1  # the free surface reaches the crown inside the middle pipe
    L, s0, d, _ = PIPES[k]
    sel = p.segment == k
    x, y, full = p.x[sel], p.depth[sel], p.surcharged[sel]
    j = int(np.flatnonzero(full)[-1])  # last full station; the free surface starts at j + 1
    assert not full[j + 1:].any() and full[:j + 1].all()
    x_free, y_free = x[j + 1], y[j + 1]
    x_t = x_free - _crossing_by_quadrature(reach.segments[k], q, y_free)
    assert x[j] <= x_t <= x_free
    # the grade line on the full side, extrapolated to the crossing, stands at the crown: continuity
    sf = manning_sf(q, d, 0.013)
    hgl = p.hydraulic_grade[sel]
    crown_t = p.bed[sel][j] - s0 * (x_t - x[j]) + d  # crown elevation where the free surface meets it
    np.testing.assert_allclose(hgl[:j + 1], crown_t + sf * (x_t - x[:j + 1]), rtol=0, atol=1e-9)
    assert p.surcharged[p.segment == 0].all()
    assert not p.surcharged[p.segment == 2].any()
    assert p.surcharged_lengths[k] == pytest.approx(x_t - p.reach.boundaries[k], abs=1e-9)
    # the note on it names the same stretch, from the crossing, not from the station after it
    note_k = [c for c in p.controls if c.kind == "surcharge" and f"segment {k} runs full" in c.text]
    assert len(note_k) == 1 and note_k[0].x == pytest.approx(p.reach.boundaries[k], abs=1e-9)
    assert f"to {x_t:.2f} m" in note_k[0].text
    # the free surface tends to the crown: the last free depth is within a station's rise of it
    assert d - y_free < 0.05 * d
    # the profile types end where the pipe fills
    last = [pc for pc in p.pieces if pc.segment == k]
    assert last and min(pc.x_start for pc in last) >= x[j]


@pytest.mark.parametrize("kw", [dict(n_steps=10), dict(n_steps=100), dict(method="ivp")])
@pytest.mark.parametrize("offset", [-1e-7, 0.0, 1e-7])
def test_tailwater_at_the_crown_fills_the_whole_pipe(kw, offset):
    """A pipe above its full capacity under a tailwater at (or within round-off of) its crown runs full
    from the outlet: the pressure head at the inlet is D + L (Sf_full - S0) (hand energy equation, Manning
    full flow), the same for a tailwater a hair above or below the crown."""
    d, s0, n, length, q = 0.9, 0.005, 0.013, 200.0, 3.0
    reach = gv.Reach(segments=[gv.Segment(length=length, slope=s0, section=gv.Circular(diameter=d), roughness=n)],
                     discharge=q, downstream=gv.FixedDepth(d + offset))
    p = reach.solve(**kw)
    head = d + offset + length * (manning_sf(q, d, n) - s0)
    # (a surface 1e-7 below the crown reaches it within some micrometres)
    tol = 1e-9 if offset == 0.0 else 1e-5
    assert p.depth[0] == pytest.approx(head, abs=tol)
    assert p.surcharged_lengths[0] == pytest.approx(length, abs=tol)
    assert p.surcharged[:-1].all()


def test_a_full_segment_below_another_counts_its_whole_length():
    # every station of two 0.9 m pipes stands above the crown (tailwater 3 m, Q above full capacity): each
    # runs full over its whole length; the first step below the junction used to be left out (59.4 of 60 m)
    pipe = gv.Circular(diameter=0.9)
    reach = gv.Reach(segments=[gv.Segment(length=80.0, slope=0.004, section=pipe, roughness=0.013),
                               gv.Segment(length=60.0, slope=0.03, section=pipe, roughness=0.013)],
                     discharge=3.0, downstream=gv.FixedDepth(3.0))
    p = reach.solve()
    assert p.surcharged.all()
    np.testing.assert_array_equal(p.surcharged_lengths, [80.0, 60.0])
    notes = [c for c in p.controls if c.kind == "surcharge"]
    assert [(c.x, round(c.x + float(re.search(r"over ([0-9.]+)", c.text).group(1)), 6)) for c in notes] == \
        [(0.0, 80.0), (80.0, 140.0)]


def test_methods_agree_on_the_surcharged_stretch():
    """The standard step and scipy's solve_ivp integrate the free surface independently; where it meets
    the crown, and so the grade line at the inlet, agree."""
    a = sewer(0.7, gv.CriticalFlow()).solve(n_steps=400)
    b = sewer(0.7, gv.CriticalFlow()).solve(method="ivp", n_steps=400)
    np.testing.assert_allclose(a.surcharged_lengths, b.surcharged_lengths, rtol=2e-4, atol=1e-6)
    assert a.hydraulic_grade[0] == pytest.approx(b.hydraulic_grade[0], abs=1e-4)


def test_drop_at_a_junction_carries_the_energy_without_loss():
    """Subcritical flow over an invert drop: z + y + V²/2g equal at the two junction stations."""
    segs = [gv.Segment(length=300.0, slope=0.0005, section=gv.Rectangular(width=3.0), roughness=0.015),
            gv.Segment(length=300.0, slope=0.0005, section=gv.Rectangular(width=3.0), roughness=0.015, drop=0.2)]
    p = gv.Reach(segments=segs, discharge=4.0, downstream=gv.FixedDepth(2.0)).solve()
    j = int(np.flatnonzero(np.diff(p.x) == 0)[0])  # the junction appears twice
    assert p.bed[j] - p.bed[j + 1] == pytest.approx(0.2, abs=1e-12)
    assert p.energy_grade[j] == pytest.approx(p.energy_grade[j + 1], abs=1e-12)
    assert p.depth[j] < p.depth[j + 1]


def test_drop_validation():
    sec = gv.Circular(diameter=0.6)
    with pytest.raises(gv.InvalidInputError, match="drop"):
        gv.Reach(segments=[gv.Segment(length=10.0, slope=0.01, section=sec, roughness=0.013, drop=0.1)],
                 discharge=0.1)
    with pytest.raises(gv.InvalidInputError, match="drop"):
        gv.Segment(length=10.0, slope=0.01, section=sec, roughness=0.013, drop=-0.1)
    reach = sewer(0.3, gv.FixedDepth(1.3))
    assert gv.Reach.model_validate_json(reach.model_dump_json()) == reach


def _moment_partly_full(y, d):
    return quad(lambda e: (y - e) * 2 * math.sqrt(e * (d - e)), 0, y, epsabs=1e-14, epsrel=1e-13)[0]


@pytest.mark.parametrize("tailwater", [3.0, 6.0])
def test_jump_into_a_full_conduit_balances_momentum(tailwater):
    """A steep pipe's supercritical flow meets a grade line held up by a high tailwater: the jump fills
    the pipe. Q²/(g A1) + M1 = Q²/(g A_full) + A_full (h2 - D/2) at the jump."""
    d, q = 1.0, 2.0
    pipe = gv.Circular(diameter=d)
    p = gv.Reach(segments=[gv.Segment(length=100.0, slope=0.1, section=pipe, roughness=0.012)],
                 discharge=q, downstream=gv.FixedDepth(tailwater)).solve()
    assert len(p.jumps) == 1
    jp = p.jumps[0]
    y1, h2 = jp.upstream_depth, jp.downstream_depth
    assert y1 < d < h2
    a1, af = float(pipe.area(y1)), math.pi * d * d / 4
    m1 = q * q / (G * a1) + _moment_partly_full(y1, d)
    m2 = q * q / (G * af) + af * (h2 - d / 2)
    assert m1 == pytest.approx(m2, rel=1e-8)
    # downstream of the jump the pipe runs full along the full-flow grade line to the tailwater
    sf = manning_sf(q, d, 0.012)
    assert h2 == pytest.approx(tailwater + (sf - 0.1) * (100.0 - jp.x), abs=1e-9)
    assert p.surcharged_lengths[0] == pytest.approx(100.0 - jp.x, abs=1e-9)
    assert not any(c.kind == "unbalanced jump" for c in p.controls)


def test_open_channels_report_no_surcharge():
    p = gv.Reach(segments=[gv.Segment(length=500.0, slope=0.001, section=gv.Rectangular(width=3.0),
                                      roughness=0.015)], discharge=5.0, downstream=gv.FixedDepth(2.0)).solve()
    assert not p.surcharged.any() and np.isnan(p.head_above_crown).all()
    assert p.max_head_above_crown == 0.0 and p.surcharged_lengths.tolist() == [0.0]


def test_upstream_gate_in_a_conduit_whose_pool_stands_above_the_crown():
    # The pool a free jet needs behind the gate: the jet's specific energy (energy from the pool to the
    # vena contracta, Henderson 1966 §6.5, from memory). Above the energy of the conduit running just full
    # the pool is a pressure head: with the velocity Q/A_full fixed, head = D + E_jet - E(D), the hand
    # energy balance; the gate still releases its jet into the reach.
    pipe = gv.Circular(diameter=3.0)
    reach = gv.Reach(segments=[gv.Segment(length=200.0, slope=0.001, section=pipe, roughness=0.015)],
                     discharge=12.0, upstream=gv.SluiceGate(opening=0.3), downstream=gv.FixedDepth(1.5))
    jet = gv.SluiceGate(opening=0.3).jet_depth
    e_jet, e_full = gv.specific_energy(pipe, 12.0, jet), gv.specific_energy(pipe, 12.0, 3.0)
    assert e_jet > e_full
    p = reach.solve(n_steps=40)
    assert p.depth[0] == pytest.approx(jet, rel=1e-12)
    detail = next(c.text for c in p.controls if c.kind == "control detail" and "behind the gate" in c.text)
    assert f"{3.0 + e_jet - e_full:.3f} m (a pressure head" in detail
    # a pool below the crown is a free surface, as before
    low = reach.model_copy(update={"discharge": 2.0, "upstream": gv.SluiceGate(opening=0.6)})
    text = next(c.text for c in low.solve(n_steps=40).controls
                if c.kind == "control detail" and "behind the gate" in c.text)
    assert "pressure head" not in text

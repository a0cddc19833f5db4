"""Notes on long near-critical stretches (Froude 0.85 to 1.15; Chow 1959, ch. 3, common practice)."""

import math

import numpy as np
import pytest

import gvflow as gv
from gvflow._near_critical import NEAR_CRITICAL_MIN_LENGTH

G = 9.80665
WIDTH = 3.0
Q = 6.0
N = 0.015


def reach_at(slope, downstream, length=600.0):
    seg = gv.Segment(length=length, slope=slope, section=gv.Rectangular(width=WIDTH), roughness=N)
    return gv.Reach(segments=[seg], discharge=Q, downstream=downstream)


def near_notes(profile):
    return [c for c in profile.controls if c.kind == "near-critical flow"]


def test_channel_near_critical_slope_is_noted_over_its_length():
    sc = gv.critical_slope(gv.Rectangular(width=WIDTH), Q, N)
    slope = 0.85 * sc
    yn = gv.normal_depth(gv.Rectangular(width=WIDTH), Q, slope, N)
    p = reach_at(slope, gv.FixedDepth(yn)).solve()
    # hand Froude number of a rectangle, V / sqrt(g y)
    fr = Q / (WIDTH * p.depth) / np.sqrt(G * p.depth)
    assert np.all((fr > 0.85) & (fr < 1.15))
    notes = near_notes(p)
    assert len(notes) == 1
    assert notes[0].x == 0.0 and "to 600.00 m in segment 0" in notes[0].text
    assert "unstable and wavy" in notes[0].text


@pytest.mark.parametrize("fraction, reported", [(0.5, False), (0.7, True)])
def test_band_edges_are_the_critical_depths_of_q_over_f(fraction, reported):
    # M2 drawdown to a free overfall: the stretch starts exactly where the hand Froude number of the
    # rectangle, V / sqrt(g y), enters the band, and is reported only when long enough
    sc = gv.critical_slope(gv.Rectangular(width=WIDTH), Q, N)
    yn = gv.normal_depth(gv.Rectangular(width=WIDTH), Q, fraction * sc, N)
    p = reach_at(fraction * sc, gv.FreeOverfall(), length=2000.0).solve()
    fr = Q / (WIDTH * p.depth) / np.sqrt(G * p.depth)
    inside = (fr >= 0.85) & (fr <= 1.15)
    assert fr[0] < 0.85 and yn > p.depth[-1]
    notes = near_notes(p)
    yc = (Q / WIDTH) ** (2.0 / 3.0) / G ** (1.0 / 3.0)
    first = int(np.argmax(inside))
    span = p.x[-1] - p.x[first]
    assert (span >= NEAR_CRITICAL_MIN_LENGTH * yc) == reported
    if reported:
        assert len(notes) == 1 and f"from x = {p.x[first]:.2f} to {p.x[-1]:.2f} m" in notes[0].text
    else:
        assert notes == []


def test_far_from_critical_no_note():
    sc = gv.critical_slope(gv.Rectangular(width=WIDTH), Q, N)
    yn = gv.normal_depth(gv.Rectangular(width=WIDTH), Q, 0.1 * sc, N)
    assert near_notes(reach_at(0.1 * sc, gv.FixedDepth(yn)).solve()) == []
    # steep, well supercritical
    yn = gv.normal_depth(gv.Rectangular(width=WIDTH), Q, 5.0 * sc, N)
    seg = gv.Segment(length=300.0, slope=5.0 * sc, section=gv.Rectangular(width=WIDTH), roughness=N)
    p = gv.Reach(segments=[seg], discharge=Q, upstream=gv.FixedDepth(yn)).solve()
    assert near_notes(p) == []


def test_short_passage_through_critical_is_not_reported():
    # a steep chute entered at critical depth: the S2 curve leaves the band within a few depths
    sc = gv.critical_slope(gv.Rectangular(width=WIDTH), Q, N)
    seg = gv.Segment(length=300.0, slope=20.0 * sc, section=gv.Rectangular(width=WIDTH), roughness=N)
    p = gv.Reach(segments=[seg], discharge=Q).solve()
    fr = Q / (WIDTH * p.depth) / np.sqrt(G * p.depth)
    inside = (fr >= 0.85) & (fr <= 1.15)
    yc = (Q / WIDTH) ** (2.0 / 3.0) / G ** (1.0 / 3.0)
    assert inside[0] and p.x[inside].max() - p.x[0] < NEAR_CRITICAL_MIN_LENGTH * yc
    assert near_notes(p) == []


def test_sweep_notes_each_scenario():
    sc = gv.critical_slope(gv.Rectangular(width=WIDTH), Q, N)
    reach = reach_at(0.85 * sc, gv.FixedDepth(gv.normal_depth(gv.Rectangular(width=WIDTH), Q, 0.85 * sc, N)))
    res = reach.sweep(roughness=[N, 0.05], n_steps=50)
    assert len(near_notes(res[0])) == 1 and near_notes(res[1]) == []
    assert math.isfinite(res[0].depth[0])

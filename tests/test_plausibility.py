"""Plausibility warnings (legal but unusual input), the jump helpers' input checks, and the note on a
jump located on a steep floor."""

import math
import re
import warnings

import numpy as np
import pytest
from scipy.optimize import brentq

import gvflow as gv
from gvflow.errors import GVFlowWarning, InvalidInputError


def _solve_recording(reach, **kw):
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        profile = reach.solve(**kw)
    return profile, [w for w in caught if issubclass(w.category, GVFlowWarning)]


def _reach(n=0.015, slope=0.001, width=3.0, q=5.0, **kw):
    seg = gv.Segment(length=500.0, slope=slope, section=gv.Rectangular(width=width), roughness=n)
    return gv.Reach(segments=[seg], discharge=q, **kw)


@pytest.mark.parametrize("n", [0.005, 0.3])
def test_manning_n_outside_the_usual_range_warns_once_at_the_callers_line(n):
    _, caught = _solve_recording(_reach(n=n, slope=0.01))
    assert len(caught) == 1
    text = str(caught[0].message)
    assert "roughness" in text and "0.008-0.2" in text and f"n = {n:g}" in text
    assert caught[0].filename == __file__  # attributed to the caller, not to gvflow


@pytest.mark.parametrize("n", [0.008, 0.015, 0.2])
def test_manning_n_in_the_usual_range_is_quiet(n):
    assert _solve_recording(_reach(n=n, slope=0.01))[1] == []


def test_sweep_over_roughness_warns_once_for_the_range():
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        _reach(slope=0.01).sweep(roughness=np.linspace(0.01, 0.4, 20))
    odd = [w for w in caught if issubclass(w.category, GVFlowWarning)]
    assert len(odd) == 1 and "n 0.01-0.4" in str(odd[0].message)


def test_steep_slope_warns():
    _, caught = _solve_recording(_reach(slope=0.15))
    assert len(caught) == 1
    assert "slope" in str(caught[0].message) and "0.15" in str(caught[0].message)
    assert _solve_recording(_reach(slope=0.1))[1] == []


def test_depth_many_times_the_width_warns_of_mixed_units():
    # 50 m³/s through a 0.5 m wide rectangle: yc = (q²/g)^(1/3) = 10.1 m, 20 times the width
    _, caught = _solve_recording(_reach(width=0.5, q=50.0, slope=0.01))
    assert len(caught) == 1 and "mixed units" in str(caught[0].message)


def test_a_discharge_far_above_a_pipe_names_the_discharge():
    # 0.8 m³/s entered in l/s for a 0.9 m sewer: the message names the discharge (n = 0.013 is an ordinary
    # pipe), and 200 m³/s, which solves, warns of a grade line some 24 km above the crown: the closed form
    # D + L (Sf_full - S0) with Manning full flow, Sf_full = (n Q / (A R^(2/3)))², A = pi D²/4, R = D/4
    d, s0, n, length = 0.9, 0.005, 0.013, 200.0

    def reach(q):
        return gv.Reach(segments=[gv.Segment(length=length, slope=s0, section=gv.Circular(diameter=d),
                                             roughness=n)], discharge=q, downstream=gv.FixedDepth(1.3))

    with pytest.raises(gv.InvalidInputError, match=r"^discharge: 800 m³/s is far more than Circular"):
        reach(800.0).solve()
    with pytest.warns(gv.GVFlowWarning, match=r"stands far above its crown \(segment 0: 2.441e\+04 m"):
        p = reach(200.0).solve()
    sf = (n * 200.0 / (math.pi * d * d / 4 * (d / 4) ** (2 / 3))) ** 2
    assert p.depth[0] == pytest.approx(1.3 + length * (sf - s0), rel=1e-12)


def test_a_gate_opening_far_too_small_is_refused():
    # a 1 µm opening passing 6 m³/s would hold a pool of q²/(2 g (Cc a)²) = 5.5e11 m behind it (energy to
    # the vena contracta, Henderson 1966, §6.5; from memory): beyond any channel, at the head of a reach and
    # between segments
    rect = gv.Rectangular(width=3.0)

    def seg(**kw):
        return gv.Segment(length=200.0, slope=0.001, section=rect, roughness=0.015, **kw)

    pool = re.escape(f"{(6.0 / 3.0) ** 2 / (2 * gv.SI.g * (0.61e-6) ** 2):.4g}")
    with pytest.raises(gv.InvalidInputError, match=rf"^upstream.opening: .* {pool} m deep behind it"):
        gv.Reach(segments=[seg()], discharge=6.0, upstream=gv.SluiceGate(opening=1e-6)).solve()
    with pytest.raises(gv.InvalidInputError, match=rf"^segments.0: the water would stand {pool} m deep"):
        gv.Reach(segments=[seg(), seg(gate=gv.SluiceGate(opening=1e-6))], discharge=6.0,
                 downstream=gv.FixedDepth(2.0)).solve()


def test_an_invert_drop_deeper_than_any_channel_is_refused():
    # (a drop of 100 km between two segments was solved, at 1,400 m/s below it)
    rect = gv.Rectangular(width=3.0)
    segs = [gv.Segment(length=200.0, slope=0.001, section=rect, roughness=0.015),
            gv.Segment(length=200.0, slope=0.001, section=rect, roughness=0.015, drop=1e5)]
    with pytest.raises(gv.InvalidInputError, match=r"^segments.1.drop: an invert drop of 1e\+05 m"):
        gv.Reach(segments=segs, discharge=6.0, downstream=gv.FixedDepth(2.0)).solve()


def test_normal_depth_on_a_slope_beyond_the_small_slope_assumptions_warns():
    # a reach warns above a slope of 0.1 (HEC-14, as STEEP_SLOPE says); the public normal depth does too
    with pytest.warns(gv.GVFlowWarning, match=r"^slope: bed slope 2 is above 0.1"):
        gv.normal_depth(gv.Rectangular(width=3.0), 5.0, 2.0, 0.015)
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        gv.normal_depth(gv.Rectangular(width=3.0), 5.0, 0.05, 0.015)


def test_demo_and_everyday_reaches_are_quiet():
    assert _solve_recording(gv.demo_reach())[1] == []
    assert _solve_recording(gv.demo_reach(), method="ivp")[1] == []


# -- jump helpers ----------------------------------------------------------------------------------
def test_jump_helpers_refuse_depths_in_the_wrong_order():
    with pytest.raises(InvalidInputError, match="upstream_depth 1.5 is above downstream_depth 0.2"):
        gv.jump_length(1.5, 0.2, 6.0)
    with pytest.raises(InvalidInputError, match="upstream_depth"):
        gv.jump_energy_loss_rectangular(4.0, 1.0)
    with pytest.raises(InvalidInputError, match="upstream_depth"):
        gv.jump_energy_loss_rectangular([1.0, 4.0], [4.0, 1.0])
    assert gv.jump_energy_loss_rectangular([1.0, 1.0], [4.0, 1.0]) == pytest.approx([1.6875, 0.0])


def test_jump_helpers_refuse_subcritical_froude():
    with pytest.raises(InvalidInputError, match="froude must be at least 1"):
        gv.jump_type(0.5)
    with pytest.raises(InvalidInputError, match="froude must be at least 1"):
        gv.jump_length(0.2, 1.5, 0.9)
    assert gv.jump_type(1.0) == "undular"


# -- a jump on a steep floor -----------------------------------------------------------------------
def _chute_then_flat(s0):
    segs = [gv.Segment(length=100.0, slope=s0, section=gv.Rectangular(width=2.0), roughness=0.015),
            gv.Segment(length=100.0, slope=0.001, section=gv.Rectangular(width=2.0), roughness=0.015)]
    return gv.Reach(segments=segs, discharge=2.0, downstream=gv.FixedDepth(1.5))


def test_jump_on_a_steep_floor_carries_a_note_and_the_level_floor_depth_is_too_small():
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", GVFlowWarning)
        profile = _chute_then_flat(0.15).solve()
    (jump,) = profile.jumps
    assert jump.segment == 0
    notes = [c for c in profile.controls if c.kind == "jump on a sloping floor"]
    assert len(notes) == 1 and "bed slope 0.15" in notes[0].text and "underestimates" in notes[0].text
    assert "jump on a sloping floor" in profile.summary()
    # Momentum along a floor at angle φ with the weight of the roller (FHWA 2006, HEC-14, eq. 6.7), per
    # unit width, the roller taken as a trapezoid of length L = 6.1 y2 (Peterka 1958 plateau, from memory):
    #   q²/g (1/y2 - 1/y1) = ½ (y1² - y2²) cos φ + ½ L (y1 + y2) sin φ
    # Its y2 for the reported y1 exceeds the level-floor y2 reported: the note's claim, checked.
    q, g, y1 = 1.0, 9.80665, jump.upstream_depth
    phi = math.atan(0.15)

    def residual(y2, phi):
        return q * q / g * (1 / y2 - 1 / y1) - 0.5 * (y1 ** 2 - y2 ** 2) * math.cos(phi) \
            - 0.5 * 6.1 * y2 * (y1 + y2) * math.sin(phi)

    level = brentq(residual, 1.01 * y1, 100.0, args=(0.0,))
    sloping = brentq(residual, 1.01 * y1, 100.0, args=(phi,))
    assert level == pytest.approx(jump.downstream_depth, rel=0.02)  # the balance the solver uses
    assert sloping > 1.3 * jump.downstream_depth


def test_jump_on_a_gentle_floor_has_no_note():
    profile = _chute_then_flat(0.05).solve()
    assert [j.segment for j in profile.jumps] == [0]  # on the 5 % chute, below the noted slope
    assert not [c for c in profile.controls if c.kind == "jump on a sloping floor"]


@pytest.mark.slow  # subprocess, process pool or kernel start-up
def test_command_prints_a_warning_as_one_line(tmp_path):
    import json
    import subprocess
    import sys
    from importlib import resources

    data = json.loads((resources.files("gvflow") / "data" / "demo.json").read_text(encoding="utf-8"))
    data["segments"][1]["roughness"]["n"] = 0.3
    path = tmp_path / "rough.json"
    path.write_text(json.dumps(data))
    res = subprocess.run([sys.executable, "-m", "gvflow.cli", "run", str(path)], capture_output=True, text=True,
                         timeout=120)
    assert res.returncode == 0, res.stderr
    lines = res.stderr.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("gvflow: warning: roughness: Manning's n")
    assert "licensed engineer" in res.stdout

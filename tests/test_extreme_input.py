"""Extreme and malformed input: every failure is one of gvflow's errors, with a message naming the field.

The limits are physical (a reach longer than ten thousand kilometres, a depth above ten kilometres or
below 1e-15 m, a segment shorter than a billionth of its reach); the checks below feed values far
beyond them, the numbers that used to end in ZeroDivisionError, overflow or depths of 1e60 m.
"""

import json
import math
import subprocess
import sys
import warnings
from importlib import resources

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

import gvflow as gv
from gvflow.errors import GVFlowError, GVFlowWarning, InvalidInputError, ReachFileError


def _seg(**kw):
    data = dict(length=500.0, slope=0.001, section=gv.Rectangular(width=3.0), roughness=0.015)
    data.update(kw)
    return gv.Segment(**data)


def _reach(segments=None, **kw):
    data = dict(segments=segments or [_seg()], discharge=5.0)
    data.update(kw)
    return gv.Reach(**data)


@pytest.mark.parametrize("make, field", [
    (lambda: _reach([_seg(length=1e30)], downstream=gv.FixedDepth(2.0)), "the reach is 1e+30 m long"),
    (lambda: _reach([_seg(length=2.0 ** 63)], downstream=gv.FixedDepth(2.0)), "the reach is 9.223e+18 m long"),
    (lambda: _reach(discharge=1e200), "discharge"),
    (lambda: _reach(discharge=1e200, downstream=gv.FixedDepth(2.0)), "discharge"),
    (lambda: _reach(discharge=1e12), "discharge"),  # used to "solve" at depths of 1.2e11 m
    (lambda: _reach(discharge=1e-300), "discharge"),
    (lambda: _reach([_seg(length=1e6), _seg(length=1e-12), _seg()]), "segments.1.length"),
    (lambda: _reach([_seg(section=gv.Rectangular(width=1e308))]), "discharge"),
    (lambda: _reach([_seg(section=gv.Rectangular(width=1e-300))]), "segment 0"),
    (lambda: _reach([_seg(roughness=1e308)]), "segments.0: the normal depth"),
    (lambda: _reach([_seg(slope=1e-300)]), "segments.0: the normal depth"),
    (lambda: _reach(downstream=gv.FixedDepth(1e308)), "downstream.depth"),
    (lambda: _reach(datum=1e308), "datum"),
    (lambda: _reach([_seg(section=gv.Circular(diameter=1.0))], discharge=1e-300), "segment 0"),
])
@pytest.mark.parametrize("method", ["standard_step", "ivp"])
def test_extreme_numbers_are_refused_with_the_field_named(make, field, method):
    with pytest.raises(InvalidInputError) as info:
        make().solve(method=method)
    message = str(info.value)
    assert field in message
    assert "check" in message or "merge" in message or "give" in message  # a remedy
    assert len(message) < 400


def test_sweep_refuses_an_extreme_scenario_among_plain_ones():
    with pytest.raises(InvalidInputError, match="discharge: 1e\\+200"):
        _reach().sweep(discharge=[1.0, 5.0, 1e200])


def test_limits_follow_the_length_unit():
    # 2e4 ft (6.1 km) of critical depth is within the 1e4 m limit; in SI the same number is beyond it.
    # Critical depth in a rectangle: yc = (q²/g)^(1/3), so q = b sqrt(g yc³) (Chow 1959, eq. 4-11).
    wide = [_seg(section=gv.Rectangular(width=2.0e4), slope=0.01)]
    with pytest.raises(InvalidInputError, match="critical depth of 2e\\+04 m"):
        _reach(wide, discharge=2.0e4 * math.sqrt(9.80665 * 2.0e4 ** 3)).solve()
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", GVFlowWarning)
        profile = _reach(wide, discharge=2.0e4 * math.sqrt(32.174 * 2.0e4 ** 3), units="US").solve()
    assert profile.critical_depths[0] == pytest.approx(2.0e4, rel=1e-9)


# -- reach files through parse_reach and the command --------------------------------------------------
def gvflow(*args):
    return subprocess.run([sys.executable, "-m", "gvflow.cli", *map(str, args)], capture_output=True, text=True,
                          timeout=120)


def _one_line_error(res):
    assert res.returncode == 2, (res.returncode, res.stderr[-2000:])
    lines = res.stderr.strip().splitlines()
    assert len(lines) == 1, res.stderr[-2000:]
    assert lines[0].startswith("gvflow: error: ")
    assert "Traceback" not in res.stderr
    return lines[0]


def _demo_text():
    return (resources.files("gvflow") / "data" / "demo.json").read_text(encoding="utf-8")


def _every_number(value):
    def walk(node):
        if isinstance(node, dict):
            return {k: walk(v) for k, v in node.items()}
        if isinstance(node, list):
            return [walk(v) for v in node]
        if isinstance(node, (int, float)) and not isinstance(node, bool):
            return value
        return node
    return walk(json.loads(_demo_text()))


def test_parse_reach_refuses_deep_nesting():
    with pytest.raises(ReachFileError, match="nested too deeply"):
        gv.parse_reach("[" * 10_000 + "]" * 10_000)
    with pytest.raises(ReachFileError):
        gv.parse_reach('{"segments": ' + "[" * 5_000 + "]" * 5_000 + ', "discharge": 1}')


def test_command_nested_10000_deep(tmp_path):
    path = tmp_path / "nested.json"
    path.write_text("[" * 10_000 + "]" * 10_000)
    line = _one_line_error(gvflow("run", path))
    assert "nested too deeply" in line


@pytest.mark.parametrize("value", [1e308, 1e30])
def test_command_every_number_huge(tmp_path, value):
    path = tmp_path / "huge.json"
    path.write_text(json.dumps(_every_number(value)))
    line = _one_line_error(gvflow("run", path))
    assert "slope" in line


def test_command_huge_numbers_within_the_field_ranges(tmp_path):
    data = json.loads(_demo_text())
    for seg in data["segments"]:
        seg["length"] = 1e30
    data["discharge"] = 1e200
    path = tmp_path / "long.json"
    path.write_text(json.dumps(data))
    line = _one_line_error(gvflow("run", path))
    assert "1e+30" in line or "long" in line


@pytest.mark.parametrize("text", ['"' + "a" * 100_000 + '"', "[" + "1," * 50_000 + "1]",
                                  '{"segments": 5, "discharge": "' + "b" * 100_000 + '"}'])
def test_whole_document_errors_do_not_echo_the_file(text):
    with pytest.raises(ReachFileError) as info:
        gv.parse_reach(text)
    assert len(str(info.value)) < 500


# -- property: only gvflow's errors escape ------------------------------------------------------------
_magnitude = st.floats(min_value=-300, max_value=300)


@settings(max_examples=300, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(length=_magnitude, width=_magnitude, q=_magnitude, n=st.floats(-4, 300), slope=st.floats(-300, -0.3),
       plain=st.booleans(), data=st.data())
def test_only_gvflow_errors_escape(length, width, q, n, slope, plain, data):
    """Powers of ten from 1e-300 to 1e300 for every number (half the cases drawn from everyday ranges
    instead): a solve either succeeds with finite, positive depths or raises a GVFlowError."""
    if plain:  # everyday values, which must solve
        length, width, q = data.draw(st.floats(1, 4)), data.draw(st.floats(0, 2)), data.draw(st.floats(-2, 2))
        n, slope = data.draw(st.floats(-2, -0.8)), data.draw(st.floats(-4, -1.5))
    reach_args = dict(length=10.0 ** length, slope=10.0 ** slope, section=gv.Rectangular(width=10.0 ** width),
                      roughness=10.0 ** n)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", GVFlowWarning)
        warnings.simplefilter("error", RuntimeWarning)
        try:
            profile = gv.Reach(segments=[gv.Segment(**reach_args)], discharge=10.0 ** q).solve(n_steps=20)
        except GVFlowError:
            assert not plain, reach_args
            return
    assert np.all(np.isfinite(profile.depth)) and np.all(profile.depth > 0)

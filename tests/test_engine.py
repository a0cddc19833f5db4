"""The physics core runs the same source compiled and interpreted, with the same results.

The interpreted build gives a fresh process its first answers without compiling; the
compiled one is what sweeps and long runs use. Both must agree bit for bit: they are one
source, and IEEE arithmetic in the same order gives the same numbers.
"""

import subprocess
import sys

import numpy as np
import pytest

import gvflow as gv
from gvflow import _engine

REACH = gv.Reach(segments=[
    gv.Segment(length=100.0, slope=0.001, section=gv.Rectangular(width=4.0), roughness=0.014),
    gv.Segment(length=60.0, slope=0.05, section=gv.Rectangular(width=4.0), roughness=0.014),
    gv.Segment(length=200.0, slope=0.001, section=gv.Trapezoidal(bottom_width=4.0, side_slope=1.0),
               roughness=0.014),
    gv.Segment(length=80.0, slope=0.001, section=gv.Trapezoidal(bottom_width=4.0, side_slope=1.0), roughness=0.014,
               section_downstream=gv.Rectangular(width=3.0), contraction=0.1, expansion=0.3)],
    discharge=10.0, downstream=gv.FixedDepth(1.5))


@pytest.fixture
def interpreted():
    before = _engine.mode()
    _engine.use("interpreted")
    yield
    _engine.use(before)


def _public_values():
    trap = gv.Trapezoidal(bottom_width=3.0, side_slope=1.5)
    pipe = gv.Circular(diameter=1.2)
    q = np.array([0.3, 2.0, 12.0])
    return [gv.normal_depth(trap, q, 0.0008, 0.018), gv.critical_depth(trap, q),
            gv.normal_depth(pipe, 0.5, 0.01, 0.013),
            gv.froude_number(trap, q, 1.0), gv.specific_force(pipe, 0.5, 0.4), gv.conveyance(trap, 1.2, 0.018),
            gv.colebrook_friction_factor(1e5, 1e-4), trap.area(np.linspace(0.1, 2.0, 5))]


def test_public_functions_agree_bitwise(interpreted):
    plain = _public_values()
    _engine.use("compiled")
    compiled = _public_values()
    for a, b in zip(plain, compiled, strict=True):
        np.testing.assert_array_equal(a, b)


def test_a_reach_solves_the_same_interpreted(interpreted):
    plain = REACH.solve(n_steps=40)
    _engine.use("compiled")
    compiled = REACH.solve(n_steps=40)
    np.testing.assert_array_equal(plain.depth, compiled.depth)
    np.testing.assert_array_equal(plain.velocity, compiled.velocity)
    assert [j.x for j in plain.jumps] == [j.x for j in compiled.jumps]
    assert plain.profile_types == compiled.profile_types


def test_the_engine_mode_is_checked():
    with pytest.raises(gv.InvalidInputError, match="engine must be one of"):
        _engine.use("fast")


def _declared_work(reach, monkeypatch) -> float:
    declared = []
    monkeypatch.setattr(_engine, "compiled_wanted", lambda work: declared.append(work) or False)
    reach.solve(n_steps=10)
    monkeypatch.undo()
    return sum(declared)


def test_a_surveyed_section_declares_its_cost(monkeypatch):
    """The engine compiles once the interpreted work would cost more than compiling; a surveyed section's
    hydraulics cost about 10 passes of a trapezoid's with 8 ground points in 3 zones (measured by
    benchmarks/interpreted_cost.py), so a reach of them declares that much more work than one of
    trapezoids with the same stations, or it would run interpreted for a minute before compiling."""
    pts = gv.Surveyed(offset=[0, 10, 40, 41, 49, 50, 80, 90], elevation=[4, 3, 2, 0, 0, 2, 2.2, 4],
                      roughness=[0.06, 0.035, 0.06], zone_edges=[40, 50])
    trap = gv.Trapezoidal(bottom_width=8.0, side_slope=2.0)
    reaches = [gv.Reach(segments=[gv.Segment(length=200.0, slope=0.001, section=sec, roughness=rough)],
                        discharge=40.0, downstream=gv.FixedDepth(3.0)) for sec, rough in ((pts, None), (trap, 0.035))]
    surveyed, prismatic = (_declared_work(r, monkeypatch) for r in reaches)
    assert surveyed >= 6 * prismatic > 0


def test_a_cache_from_older_sources_is_not_warm(monkeypatch, tmp_path):
    from gvflow._core import _jit

    stamp = tmp_path / "stamp"
    monkeypatch.setattr(_jit, "_STAMP", stamp)
    assert not _jit.cache_is_current()  # no stamp
    stamp.write_text("0" * 64)
    assert not _jit.cache_is_current()
    stamp.write_text(_jit._sources_digest())
    assert _jit.cache_is_current()


@pytest.mark.slow  # a fresh interpreter
def test_a_fresh_process_answers_without_numba():
    code = ("import sys, gvflow as gv; gv.normal_depth(gv.Rectangular(width=2.0), 3.0, 0.001, 0.015); "
            "print('numba' in sys.modules)")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True,
                         env={"GVFLOW_ENGINE": "auto", "PATH": ""})
    assert out.stdout.strip() == "False"


def _core_functions():
    """{name: (decorator name, the function's AST)} of every decorated function of gvflow/_core."""
    import ast
    from pathlib import Path

    out = {}
    for path in sorted((Path(gv.__file__).parent / "_core").glob("*.py")):
        for node in ast.parse(path.read_text()).body:
            if isinstance(node, ast.FunctionDef) and node.decorator_list:
                deco = node.decorator_list[0]
                if isinstance(deco, ast.Name):
                    out[node.name] = (deco.id, node, path.name)
    return out


def test_kernels_without_reference_counting_handle_no_array_of_their_own():
    """A ``scalar_kernel`` (compiled without reference counting, :mod:`gvflow._core._jit`) may read the
    arrays it is given but must neither make one (numpy calls) nor receive one from a call: only other
    scalar or inlined kernels of the core, plain math and records built on the spot. A function breaking
    this would count references wrongly; numba itself only refuses the allocations."""
    import ast

    funcs = _core_functions()
    scalar = {name for name, (deco, _, _) in funcs.items() if deco == "scalar_kernel"}
    allowed = scalar | {name for name, (deco, _, _) in funcs.items() if deco == "inline_kernel"}
    assert {"hydraulics"} <= allowed and {"step_from", "advance", "geometry", "normal_depth"} <= scalar
    offences = []
    for name in sorted(scalar):
        for node in ast.walk(funcs[name][1]):
            if not isinstance(node, ast.Call):
                continue
            f = node.func
            if isinstance(f, ast.Attribute) and isinstance(f.value, ast.Name) and f.value.id == "np":
                offences.append(f"{name} calls np.{f.attr}")
            elif isinstance(f, ast.Name) and f.id in funcs and f.id not in allowed:
                offences.append(f"{name} calls {f.id}, a {funcs[f.id][0]}")
    assert not offences, offences


@pytest.mark.parametrize("section", [gv.Trapezoidal(bottom_width=4.0, side_slope=1.5),
                                     gv.Surveyed(offset=[0, 10, 40, 41, 49, 50, 80, 90],
                                                 elevation=[4, 3, 2, 0, 0, 2, 2.2, 4],
                                                 roughness=[0.06, 0.035, 0.06], zone_edges=[40, 50])])
def test_a_step_hands_on_the_state_of_its_depth(section):
    # The standard step takes the state at its depth from its last Newton pass, first order in the final
    # correction: energy, friction slope and velocity head the same, to round-off, as a pass of the
    # section's hydraulics at that depth (station_state); the relaxation rate, which only sizes sub-steps,
    # is the one at the last pass, 1e-9 of the depth away.
    from gvflow._core.records import fluid
    from gvflow.friction import core_channel
    from gvflow.units import resolve_units

    m = _engine.core("march", 0)
    rough = None if isinstance(section, gv.Surveyed) else gv.Manning(n=0.02)
    ch, fl = core_channel(section, rough), fluid(resolve_units("SI"))
    q, y1 = 12.0, 2.6
    yc = gv.critical_depth(section, q)
    e1, sf1, hv1, _ = m.station_state(ch, fl, q, 1.0, y1)
    for d, guess in ((-20.0, 2.59), (-20.0, 2.0), (-300.0, 2.6), (-20.0, 0.5 * yc)):  # (the last: bracketed)
        y, code, *state = m.step_from(ch, fl, q, 1e-3, y1, e1, sf1, hv1, d, yc, 1, 1.0, 0.0, 3, np.inf, 1e-12,
                                      guess)
        assert code == 0
        fresh = m.station_state(ch, fl, q, 1.0, y)
        np.testing.assert_allclose(state[:3], fresh[:3], rtol=1e-13)
        assert state[3] == pytest.approx(fresh[3], rel=1e-8)

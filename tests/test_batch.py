"""Sweeps (many scenarios of one reach) and solve_many (independent reaches, executors).

The central promise is checked directly: scenario i of a sweep is the same
profile as solving that scenario alone (to 1e-12). Physical values of the
stacked arrays are checked against closed forms written out here: critical
depth of a rectangle yc = (q²/g)^(1/3), Manning's normal depth of a
rectangle (Chow 1959, *Open-Channel Hydraulics*, eq. 5-6, solved by brentq),
Belanger's sequent-depth ratio (Chow 1959, eq. 3-23) and V = Q/A,
Fr = V/sqrt(g y) for a rectangle.
"""

import math
import pickle
from concurrent.futures import Future, ProcessPoolExecutor, ThreadPoolExecutor

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from scipy.optimize import brentq

import gvflow as gv
from gvflow._solver import solve_batch
from gvflow.batch import REGIME_CODES, progress_wanted
from gvflow.profiles import get_marcher
from gvflow.profiles.base import Marcher
from gvflow.profiles.standard_step import StandardStep

G = 9.80665
B = 4.0
RECT = gv.Rectangular(width=B)


def seg(length, slope, n=0.014, section=RECT):
    return gv.Segment(length=length, slope=slope, section=section, roughness=n)


# steep chute between a mild approach and a mild stilling reach: M2, S2, M3, jump, M1/M2
CHUTE = [seg(100.0, 0.001), seg(60.0, 0.05), seg(200.0, 0.0008)]


def chute(tailwater=1.5, q=10.0):
    return gv.Reach(segments=CHUTE, discharge=q, downstream=gv.FixedDepth(tailwater))


def yc_rect(q, b=B):
    return ((q / b) ** 2 / G) ** (1 / 3)


def yn_rect(q, s0, n, b=B):
    return brentq(lambda y: b * y * (b * y / (b + 2 * y)) ** (2 / 3) * math.sqrt(s0) / n - q, 1e-6, 100.0)


def belanger(y1, q, b=B):
    fr1 = q / (b * y1) / math.sqrt(G * y1)
    return y1 * (math.sqrt(1 + 8 * fr1 ** 2) - 1) / 2


def assert_same_profile(a, b, tol=1e-12):
    """Two Profiles agree station by station (relative 1e-12), with the same jumps and types."""
    assert a.x.shape == b.x.shape
    for name in ("x", "depth", "stage", "velocity", "froude", "specific_energy", "friction_slope"):
        np.testing.assert_allclose(getattr(a, name), getattr(b, name), rtol=tol, atol=tol, err_msg=name)
    assert a.regime.tolist() == b.regime.tolist()
    assert a.profile_types == b.profile_types
    assert [p.label for p in a.pieces] == [p.label for p in b.pieces]
    assert len(a.jumps) == len(b.jumps)
    for ja, jb in zip(a.jumps, b.jumps, strict=True):
        for f in ("x", "upstream_depth", "downstream_depth", "froude", "energy_loss", "length"):
            assert getattr(ja, f) == pytest.approx(getattr(jb, f), rel=tol, abs=tol), f
        assert (ja.kind, ja.segment, ja.where) == (jb.kind, jb.segment, jb.where)
    assert [(c.kind, c.x) for c in a.controls] == [(c.kind, c.x) for c in b.controls]


# a spread of reaches exercising jumps in a segment and at a junction, gates, drowned and swept-out
# jumps, drawdown to a brink, other sections and friction laws
VARIED = {
    "chute": (chute(), dict(discharge=np.linspace(6.0, 14.0, 9))),
    "chute_roughness": (chute(), dict(roughness_scale=np.linspace(0.7, 1.4, 8))),
    "gate": (gv.Reach(segments=[seg(150.0, 0.001)], discharge=5.0, upstream=gv.SluiceGate(opening=0.3),
                      downstream=gv.FixedDepth(1.2)), dict(discharge=[3.0, 4.0, 5.0, 6.0, 7.0])),
    "gate_drowned_and_swept": (gv.Reach(segments=[seg(40.0, 0.001)], discharge=5.0,
                                        upstream=gv.SluiceGate(opening=0.25), downstream=gv.FixedDepth(1.3)),
                               dict(discharge=[2.0, 4.0, 5.0, 9.0])),
    "brink_horizontal": (gv.Reach(segments=[seg(150.0, 0.0)], discharge=5.0, downstream=gv.CriticalFlow()),
                         dict(discharge=[1.0, 5.0, 12.0])),
    "adverse_then_mild": (gv.Reach(segments=[seg(100.0, -0.001), seg(200.0, 0.0005)], discharge=5.0,
                                   downstream=gv.UniformFlow()), dict(discharge=[2.0, 5.0])),
    "steep_to_mild_junction": (gv.Reach(segments=[seg(80.0, 0.03), seg(200.0, 0.0005, n=0.02)], discharge=6.0,
                                        downstream=gv.FixedDepth(2.2)), dict(roughness=[[0.014, 0.02],
                                                                                          [0.012, 0.03]])),
    "near_critical_slope": (gv.Reach(segments=[seg(200.0, 0.0008), seg(150.0, 0.0032456333664650314),
                                               seg(150.0, 0.0)], discharge=5.0, downstream=gv.CriticalFlow()),
                            dict(discharge=[4.0, 4.9, 5.0, 5.1, 6.0])),  # M1, C1, C3 + jump, S3 + jump, H2
    "jump_at_widening": (gv.Reach(segments=[seg(80.0, 0.03, section=gv.Rectangular(width=3.0)),
                                            seg(200.0, 0.0005, n=0.02, section=gv.Rectangular(width=5.0))],
                                  discharge=6.0, downstream=gv.FixedDepth(1.2)),
                         dict(discharge=[5.0, 6.0, 7.0])),
    "trapezoid_chezy": (gv.Reach(segments=[gv.Segment(length=400.0, slope=0.0008,
                                                      section=gv.Trapezoidal(bottom_width=3.0, side_slope=1.5),
                                                      roughness=gv.Chezy(50.0))],
                                 discharge=12.0, downstream=gv.FixedStage(2.4)),
                        dict(discharge=[8.0, 12.0], roughness_scale=[0.8, 1.25])),
    "darcy_pipe": (gv.Reach(segments=[gv.Segment(length=150.0, slope=0.002, section=gv.Circular(diameter=1.5),
                                                 roughness=gv.DarcyWeisbach(0.0015))],
                            discharge=0.8, downstream=gv.FixedDepth(1.0)), dict(roughness=[0.0005, 0.003])),
}


class FullMarch(StandardStep):
    """The standard step without the early stop: marches every supercritical profile to the segment end."""

    name = "standard_step_full"

    def march_until(self, seg, x, y0, branch, force, rtol):
        return Marcher.march_until(self, seg, x, y0, branch, force, rtol)


def test_march_until_stops_where_the_rival_overtakes():
    # the M3 below the chute, against the M1 from the tailwater: the march stops at the first station where
    # the M1 carries the larger specific force, and agrees with the full march up to there
    marcher = get_marcher("standard_step")
    sol = solve_batch(chute(), marcher, np.array([10.0]), None, 60)
    seg, on = sol.segs[2], sol.segment == 2
    x, toe = sol.x[on], sol.depth[0, np.flatnonzero(sol.segment == 1)[-1]]
    rival = seg.specific_force(sol.depth[:, on])  # the subcritical profile governs below the jump
    full = marcher.march(seg, x, np.array([toe]), -1)
    cut = marcher.march_until(seg, x, np.array([toe]), -1, rival, 1e-12)
    stop = int(cut.n_valid[0])
    assert cut.code[0] == 4 and 1 < stop < full.n_valid[0]
    np.testing.assert_array_equal(cut.depth[0, :stop], full.depth[0, :stop])
    assert np.all(np.isnan(cut.depth[0, stop:]))
    m_sup = seg.specific_force(full.depth[:, :stop])[0]
    assert np.all(m_sup[:-1] >= rival[0, :stop - 1] * (1 - 1e-12)) and m_sup[-1] < rival[0, stop - 1]
    with pytest.raises(gv.InvalidInputError, match="force must have shape"):
        marcher.march_until(seg, x, np.array([toe]), -1, rival[:, :-1], 1e-12)


@pytest.mark.parametrize("name", sorted(VARIED))
def test_stopping_overtaken_profiles_changes_nothing(name):
    # the supercritical march stops where the subcritical profile overtakes it; marching on to the segment
    # end (the base contract's behaviour) must give the very same profiles, jumps and notes
    reach, kw = VARIED[name]
    early, full = reach.sweep(**kw, n_steps=60), reach.sweep(**kw, n_steps=60, method=FullMarch)
    np.testing.assert_array_equal(early.depth, full.depth)
    np.testing.assert_array_equal(early.regime, full.regime)
    assert early.profile_types == full.profile_types
    assert [[j.x for j in js] for js in early.jumps] == [[j.x for j in js] for js in full.jumps]
    for i in range(len(early)):
        assert early[i].controls == full[i].controls


@pytest.mark.parametrize("name", sorted(VARIED))
def test_every_scenario_is_identical_to_solving_it_alone(name):
    reach, kw = VARIED[name]
    result = reach.sweep(**kw, n_steps=60)
    assert len(result) == max(np.size(v) if np.ndim(v) < 2 else len(v) for v in kw.values())
    marcher = get_marcher("standard_step")
    types = result.profile_types
    jumps = result.jumps
    for i in range(len(result)):
        alone_reach = result.scenario_reach(i)
        alone = alone_reach.solve(n_steps=60)
        assert_same_profile(result[i], alone)
        # the stacked arrays hold the same governing depths as a lone batch of one
        lone = solve_batch(alone_reach, marcher, np.array([alone_reach.discharge]), None, 60, None, 1e-3)
        np.testing.assert_allclose(result.depth[i], lone.depth[0], rtol=1e-12, atol=0)
        assert result.regime[i].tolist() == lone.regime[0].tolist()
        # the per-scenario summaries agree with the Profile's
        assert types[i] == alone.profile_types
        assert len(jumps[i]) == len(alone.jumps) == result.jump_count[i]
        for ja, jb in zip(jumps[i], alone.jumps, strict=True):
            assert ja.x == pytest.approx(jb.x, rel=1e-12)
            assert ja.froude == pytest.approx(jb.froude, rel=1e-12)
            assert ja.energy_loss == pytest.approx(jb.energy_loss, rel=1e-10, abs=1e-12)
            assert (ja.kind, ja.segment, ja.where) == (jb.kind, jb.segment, jb.where)
        if alone.jumps:
            assert result.first_jump_x[i] == pytest.approx(alone.jumps[0].x, rel=1e-12)
        else:
            assert np.isnan(result.first_jump_x[i])


@settings(max_examples=8, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.lists(st.floats(5.0, 14.0), min_size=1, max_size=6),
       st.lists(st.floats(0.011, 0.018), min_size=3, max_size=3))
def test_property_scenario_matches_lone_solve(discharges, ns):
    reach = chute()
    coef = np.array([ns] * len(discharges))
    result = reach.sweep(discharge=discharges, roughness=coef, n_steps=40)
    for i in (0, len(result) - 1):
        assert_same_profile(result[i], result.scenario_reach(i).solve(n_steps=40))


def test_roughness_scale_follows_each_law():
    reach = gv.Reach(segments=[seg(100.0, 0.001, n=0.015),
                               gv.Segment(length=100.0, slope=0.001, section=RECT, roughness=gv.Chezy(60.0)),
                               gv.Segment(length=100.0, slope=0.001, section=RECT,
                                          roughness=gv.DarcyWeisbach(0.002))],
                     discharge=5.0, downstream=gv.FixedDepth(2.0))
    f = np.array([0.6, 1.0, 1.7])  # n 0.009-0.026, within its usual range
    result = reach.sweep(roughness_scale=f, n_steps=10)
    np.testing.assert_array_equal(result.roughness[:, 0], 0.015 * f)
    np.testing.assert_array_equal(result.roughness[:, 1], 60.0 / f)
    np.testing.assert_array_equal(result.roughness[:, 2], 0.002 * f)
    for i, fi in enumerate(f):
        got = [s.roughness for s in result.scenario_reach(i).segments]
        assert got == [s.roughness.scaled(fi) for s in reach.segments]
    # rougher means deeper on the M1 curve upstream
    assert result.depth[0, 0] < result.depth[1, 0] < result.depth[2, 0]


def test_one_coefficient_per_scenario_applies_to_every_segment():
    result = chute().sweep(roughness=[0.012, 0.016], n_steps=10)
    np.testing.assert_array_equal(result.roughness, [[0.012] * 3, [0.016] * 3])
    np.testing.assert_array_equal(result.discharge, [10.0, 10.0])


def test_uniform_flow_sweep_against_manning_closed_form():
    # Chow 1959, eq. 5-6: uniform flow at normal depth everywhere when the downstream end is at normal depth
    q = np.array([1.0, 3.0, 7.5, 15.0])
    reach = gv.Reach(segments=[seg(500.0, 0.0015, n=0.016)], discharge=1.0, downstream=gv.UniformFlow())
    result = reach.sweep(discharge=q, n_steps=20)
    for i, qi in enumerate(q):
        np.testing.assert_allclose(result.depth[i], yn_rect(qi, 0.0015, 0.016), rtol=1e-9)
    np.testing.assert_allclose(result.normal_depths[:, 0], [yn_rect(v, 0.0015, 0.016) for v in q], rtol=1e-10)
    np.testing.assert_allclose(result.critical_depths[:, 0], yc_rect(q), rtol=1e-10)
    # V = Q/(b y), Fr = V/sqrt(g y) for a rectangle
    np.testing.assert_allclose(result.velocity, q[:, None] / (B * result.depth), rtol=1e-12)
    np.testing.assert_allclose(result.froude, result.velocity / np.sqrt(G * result.depth), rtol=1e-12)
    np.testing.assert_allclose(result.stage, result.bed + result.depth, rtol=1e-14)
    assert result.profile_types == [[]] * 4  # uniform flow: no varied-flow piece


def test_brink_depth_is_critical_in_every_scenario():
    # downstream free overfall on a horizontal bed: critical depth (q²/g)^(1/3) at the brink
    q = np.array([1.0, 4.0, 9.0])
    reach = gv.Reach(segments=[seg(200.0, 0.0)], discharge=1.0, downstream=gv.CriticalFlow())
    result = reach.sweep(discharge=q, n_steps=50)
    np.testing.assert_allclose(result.depth[:, -1], yc_rect(q), rtol=1e-10)
    assert all(t == ["H2"] for t in result.profile_types)
    assert np.all(result.regime[:, :-1] == 1)


def test_jump_sequent_depths_satisfy_belanger_in_every_scenario():
    # Chow 1959, eq. 3-23: y2/y1 = (sqrt(1 + 8 F1²) - 1)/2 in a rectangle
    q = np.linspace(8.0, 13.0, 6)
    result = chute().sweep(discharge=q, n_steps=100)
    assert result.jump_count.tolist() == [1] * 6
    for s, y1, y2 in zip(result.jump_scenario, result.jump_upstream_depth, result.jump_downstream_depth, strict=True):
        assert y2 == pytest.approx(belanger(y1, q[s]), rel=1e-8)
    # the jump sits in the stilling reach (segment 2, x from 160 to 360 m)
    assert np.all((result.jump_x > 160.0) & (result.jump_x < 360.0)) and set(result.jump_segment) == {2}
    # supercritical upstream of the jump, subcritical downstream, at the shared stations
    for i in range(len(result)):
        up = (result.x > 160.0) & (result.x < result.jump_x[i])
        dn = result.x > result.jump_x[i]
        assert np.all(result.regime[i, up] == -1) and np.all(result.regime[i, dn] == 1)
    assert REGIME_CODES[-1] == "supercritical"


def test_blocks_and_progress_do_not_change_results(capsys):
    q = np.linspace(6.0, 14.0, 11)
    one = chute().sweep(discharge=q, n_steps=30)
    blocks = chute().sweep(discharge=q, n_steps=30, chunk_size=3)
    shown = chute().sweep(discharge=q, n_steps=30, progress=True, chunk_size=4)
    for other in (blocks, shown):
        np.testing.assert_array_equal(other.depth, one.depth)
        np.testing.assert_array_equal(other.jump_x, one.jump_x)
        np.testing.assert_array_equal(other.jump_scenario, one.jump_scenario)
        assert other.profile_types == one.profile_types
        assert_same_profile(other[7], one[7], tol=0)
    err = capsys.readouterr().err
    assert "sweep" in err and "11/11" in err  # tqdm bar on stderr


def test_container_protocol_and_repr():
    result = chute().sweep(discharge=[8.0, 10.0, 12.0], n_steps=20)
    assert len(result) == 3
    assert [p.reach.discharge for p in result] == [8.0, 10.0, 12.0]
    assert np.all(result[-1].discharge == 12.0)  # one value per station, constant without inflows
    assert [p.discharge[0] for p in result[1:]] == [10.0, 12.0]
    text = repr(result)
    assert "3 scenarios" in text and "m³/s" in text and "jumps in 3 of 3" in text
    assert result.depth.shape == result.stage.shape == result.velocity.shape == (3, result.x.size)
    assert not result.depth.flags.writeable
    with pytest.raises(IndexError):
        result[3]
    with pytest.raises(gv.InvalidInputError):
        result["a"]
    assert pickle.loads(pickle.dumps(result[0])).profile_types == result.profile_types[0]


@pytest.mark.parametrize("kwargs, match", [
    (dict(), "nothing to sweep"),
    (dict(discharge=[1.0, -2.0]), "discharge must be finite and positive"),
    (dict(discharge=[1.0, np.nan]), "discharge"),
    (dict(discharge=[[1.0, 2.0]]), "1-D"),
    (dict(discharge=[1.0, 2.0], roughness_scale=[1.0, 1.1, 1.2]), "same length"),
    (dict(roughness=[0.01], roughness_scale=[1.0]), "not both"),
    (dict(roughness=np.full((2, 2), 0.013)), r"shape \(n,\) or \(n, 3\)"),
    (dict(roughness_scale=[0.0]), "roughness_scale must be finite and positive"),
    (dict(roughness=[0.013, 1e-300]), "Manning's n of segment 0 = 1e-300 is below 0.0001"),
    (dict(roughness_scale=[1.0, 1e-9]), "Manning's n of segment 0 = 1.4e-11 is below"),
    (dict(discharge=[5.0], n_steps=1), "n_steps"),
    (dict(discharge=[5.0], method="nope"), "method must be one of"),
    (dict(discharge=[5.0], chunk_size=0), "chunk_size"),
    (dict(discharge=[5.0], progress="yes"), "progress"),
])
def test_bad_sweep_input_is_named(kwargs, match):
    with pytest.raises(gv.InvalidInputError, match=match):
        chute().sweep(**kwargs)


def test_one_coefficient_for_mixed_laws_is_rejected():
    reach = gv.Reach(segments=[seg(100.0, 0.001), gv.Segment(length=100.0, slope=0.001, section=RECT,
                                                              roughness=gv.Chezy(60.0))], discharge=5.0)
    with pytest.raises(gv.InvalidInputError, match="different friction laws"):
        reach.sweep(roughness=[0.013, 0.015])


def test_a_scenario_with_impossible_control_names_its_discharge():
    # a gate whose jet stands above critical depth for the smaller discharge (not for the larger): a clear
    # error naming that scenario's discharge, not NaN
    opening = 0.5 * (yc_rect(10.0) + yc_rect(30.0)) / 0.61
    reach = chute().model_copy(update={"upstream": gv.SluiceGate(opening=opening)})
    with pytest.raises(gv.ControlError, match="for discharge 10"):
        reach.sweep(discharge=[30.0, 10.0])


# -- progress ---------------------------------------------------------------------------------------


def test_progress_is_off_automatically_under_tests_and_ci(monkeypatch):
    assert progress_wanted(None) is False
    assert progress_wanted(True) is True and progress_wanted(False) is False
    monkeypatch.setenv("CI", "true")
    assert progress_wanted(None) is False


def test_progress_without_tqdm_warns_and_runs(monkeypatch):
    import sys

    monkeypatch.setitem(sys.modules, "tqdm", None)
    with pytest.warns(gv.GVFlowWarning, match="tqdm"):
        out = gv.solve_many([chute()], progress=True, n_steps=10)
    assert isinstance(out[0], gv.Profile)


# -- solve_many -------------------------------------------------------------------------------------


def small_reaches(count, bad=()):
    reaches = []
    for i in range(count):
        gate = gv.SluiceGate(opening=5.0) if i in bad else None  # (a jet far above critical depth)
        reaches.append(gv.Reach(segments=[seg(200.0, 0.001 + 0.0001 * (i % 5))], discharge=2.0 + 0.05 * i,
                                upstream=gate, downstream=gv.FixedDepth(1.2 + 0.01 * (i % 10))))
    return reaches


class CountingExecutor(ThreadPoolExecutor):
    def __init__(self):
        super().__init__(max_workers=2)
        self.tasks = 0

    def submit(self, fn, /, *args, **kwargs):
        self.tasks += 1
        return super().submit(fn, *args, **kwargs)


def test_solve_many_in_order_with_errors_in_their_slots():
    reaches = small_reaches(12, bad={3, 8})
    out = gv.solve_many(reaches, n_steps=20)
    assert len(out) == 12
    for i, (r, p) in enumerate(zip(reaches, out, strict=True)):
        if i in (3, 8):
            assert isinstance(p, gv.ControlError) and "is not below critical depth" in str(p)
        else:
            assert_same_profile(p, r.solve(n_steps=20), tol=0)


def test_solve_many_raise_mode_aggregates_failures():
    reaches = small_reaches(6, bad={1, 4})
    with pytest.raises(gv.SolveManyError, match="2 of 6 reaches failed") as info:
        gv.solve_many(reaches, errors="raise", n_steps=10)
    err = info.value
    assert sorted(err.failures) == [1, 4] and isinstance(err, ValueError)
    assert all(isinstance(err.results[i], gv.Profile) for i in (0, 2, 3, 5))
    assert "reach 1: ControlError" in str(err)


def test_solve_many_chunks_the_work():
    reaches = small_reaches(200)
    with CountingExecutor() as ex:
        out = gv.solve_many(reaches, ex, n_steps=10)
    assert ex.tasks == 8  # about four tasks per worker, not one per reach
    assert [p.discharge[-1] for p in out] == [r.discharge for r in reaches]
    with CountingExecutor() as ex:
        gv.solve_many(reaches, ex, chunk_size=50, n_steps=10)
    assert ex.tasks == 4


def test_solve_many_failed_task_fills_every_slot_of_its_chunk():
    class Broken(ThreadPoolExecutor):
        def submit(self, fn, /, *args, **kwargs):
            fut = Future()
            fut.set_exception(RuntimeError("worker lost"))
            return fut

    with Broken(max_workers=1) as ex:
        out = gv.solve_many(small_reaches(5), ex, chunk_size=2, n_steps=10)
    assert len(out) == 5 and all(isinstance(e, gv.GVFlowError) and "worker lost" in str(e) for e in out)
    assert "reaches 4-4" in str(out[4])


@pytest.mark.slow  # subprocess, process pool or kernel start-up
def test_solve_many_process_pool_matches_in_process():
    reaches = small_reaches(30, bad={7})
    here = gv.solve_many(reaches, n_steps=20, friction_average="arithmetic")
    with ProcessPoolExecutor(max_workers=2) as ex:
        there = gv.solve_many(reaches, ex, n_steps=20, friction_average="arithmetic")
    assert isinstance(there[7], gv.ControlError) and str(there[7]) == str(here[7])
    for i in set(range(30)) - {7}:
        assert_same_profile(there[i], here[i], tol=0)


def test_profile_pickles_whole_and_read_only():
    profile = chute().solve(n_steps=40)
    back = pickle.loads(pickle.dumps(profile))
    assert_same_profile(back, profile, tol=0)
    assert back.reach == profile.reach and back.method == profile.method
    for name in ("x", "depth", "bed", "stage", "energy_grade", "velocity_head", "regime", "segment"):
        np.testing.assert_array_equal(getattr(back, name), getattr(profile, name))
        assert not getattr(back, name).flags.writeable
    assert back.summary() == profile.summary()


def test_sweep_pickles_with_its_notes():
    # the solver writes its notes when first read; a pickled sweep carries them made, unread or read
    result = chute().sweep(roughness_scale=[0.9, 1.0, 1.1], n_steps=20)
    unread = pickle.loads(pickle.dumps(result))
    texts = [c.text for c in result[1].controls]
    assert any("governs" in t for t in texts)
    for back in (unread, pickle.loads(pickle.dumps(result))):
        assert [c.text for c in back[1].controls] == texts
        np.testing.assert_array_equal(back.depth, result.depth)


@pytest.mark.slow  # subprocess, process pool or kernel start-up
def test_solve_many_on_a_local_dask_cluster():
    distributed = pytest.importorskip("distributed")
    reaches = small_reaches(16, bad={2})
    with distributed.LocalCluster(n_workers=1, threads_per_worker=2, processes=False, dashboard_address=None) \
            as cluster, distributed.Client(cluster) as client:
        out = gv.solve_many(reaches, client.get_executor(), n_steps=20)
    assert isinstance(out[2], gv.ControlError)
    for i in set(range(16)) - {2}:
        assert_same_profile(out[i], reaches[i].solve(n_steps=20), tol=0)


@pytest.mark.parametrize("args, kwargs, match", [
    (([1.0],), {}, r"reaches\[0\] must be a gv.Reach"),
    (([],), dict(errors="ignore"), "errors must be"),
    (([], object()), {}, "executor must be"),
    (([],), dict(method="nope"), "method must be one of"),
    (([],), dict(friction_average="median"), "friction_average"),
    (([],), dict(chunk_size=-1), "chunk_size"),
])
def test_bad_solve_many_input_is_named(args, kwargs, match):
    with pytest.raises(gv.InvalidInputError, match=match):
        gv.solve_many(*args, **kwargs)


def test_solve_many_of_nothing_is_empty():
    assert gv.solve_many([]) == []
    with ThreadPoolExecutor(1) as ex:
        assert gv.solve_many([], ex) == []


def test_empty_sweep_is_an_input_error():
    reach = gv.demo_reach()
    with pytest.raises(gv.InvalidInputError, match="at least one value"):
        reach.sweep(discharge=np.array([]))

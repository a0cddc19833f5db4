"""Property tests of the reach solver over random chains of segments (hypothesis).

Whatever the chain, a solve either raises one of gvflow's ValueError subclasses or returns a profile
that satisfies its own equations: positive finite depths, x never decreasing, subcritical stations at or
above critical depth and supercritical ones at or below it, and equal specific force on both sides of
every jump inside a segment (the momentum balance, Chow 1959, *Open-Channel Hydraulics*, eq. 3-20) unless
the solver notes it as unbalanced.
"""

import numpy as np
from hypothesis import HealthCheck, example, given, settings
from hypothesis import strategies as st

import gvflow as gv

slopes = st.one_of(st.floats(1e-4, 2e-3), st.floats(5e-3, 0.05), st.just(0.0), st.floats(-2e-3, -1e-4))
sections = st.one_of(
    st.builds(lambda b: gv.Rectangular(width=b), st.floats(1.0, 6.0)),
    st.builds(lambda b, z: gv.Trapezoidal(bottom_width=b, side_slope=z), st.floats(1.0, 5.0), st.floats(0.5, 2.5)),
    st.builds(lambda d: gv.Circular(diameter=d), st.floats(1.5, 4.0)),
    st.builds(lambda t: gv.Parabolic(top_width=t, reference_depth=1.0), st.floats(2.0, 8.0)),
)
roughness = st.one_of(st.floats(0.011, 0.03), st.builds(lambda c: gv.Chezy(c), st.floats(30.0, 70.0)),
                      st.builds(lambda ks: gv.DarcyWeisbach(ks), st.floats(1e-4, 0.05)))
segments = st.builds(lambda L, s, sec, n: gv.Segment(length=L, slope=s, section=sec, roughness=n),
                     st.floats(20.0, 400.0), slopes, sections, roughness)


_OUTCOMES = {"tried": 0, "solved": 0}


@settings(max_examples=80, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(segs=st.lists(segments, min_size=1, max_size=3), q=st.floats(0.5, 15.0),
       down=st.sampled_from(["none", "critical", "high", "normal"]), gate=st.booleans(),
       method=st.sampled_from(["standard_step", "ivp"]))
# a jump found 0.13 % unbalanced (noted) below a gate on an adverse bed, next to where the A2 profile ends
@example(segs=[gv.Segment(length=398, slope=-0.0001972, section=gv.Parabolic(top_width=2, reference_depth=1),
                          roughness=gv.DarcyWeisbach(0.0001))], q=0.5, down="none", gate=True, method="standard_step")
def _check_any_chain(segs, q, down, gate, method):
    last = segs[-1]
    yc_last = gv.critical_depth(last.section, q)
    high = min(2.5 * yc_last, 0.95 * last.section.max_depth)
    downstream = {"none": None, "critical": gv.CriticalFlow(), "high": gv.FixedDepth(high),
                  "normal": gv.UniformFlow()}[down]
    upstream = gv.SluiceGate(opening=0.5 * gv.critical_depth(segs[0].section, q)) if gate else None
    reach = gv.Reach(segments=segs, discharge=q, upstream=upstream, downstream=downstream)
    _OUTCOMES["tried"] += 1
    try:
        p = reach.solve(method=method, n_steps=40)
    except gv.GVFlowError:
        return  # an explained refusal (e.g. uniform flow asked for on an adverse bed)
    _OUTCOMES["solved"] += 1
    assert np.all(np.isfinite(p.depth)) and np.all(p.depth > 0)
    assert p.x[0] == 0 and np.all(np.diff(p.x) >= 0) and abs(p.x[-1] - reach.length) < 1e-9
    yc = p.critical_depths[p.segment]
    sub, sup = p.regime == "subcritical", p.regime == "supercritical"
    assert np.all(p.depth[sub] >= yc[sub] * (1 - 1e-9))
    assert np.all(p.depth[sup] <= yc[sup] * (1 + 1e-9))
    # a jump next to a profile that reaches critical depth can be placed only to about a station spacing; the
    # solver says so in an "unbalanced jump" note, and any other jump must balance
    unbalanced = {round(c.x, 6) for c in p.controls if c.kind == "unbalanced jump"}
    for jump in p.jumps:
        if jump.where != "in segment":
            # at a junction the two depths stand in different sections: each on its own side of critical
            k = jump.segment
            assert jump.upstream_depth <= p.critical_depths[k - 1] * (1 + 1e-9)
            assert jump.downstream_depth >= p.critical_depths[k] * (1 - 1e-9)
            continue
        assert jump.upstream_depth < jump.downstream_depth
        if jump.where == "in segment":
            sec = reach.segments[jump.segment].section
            if jump.downstream_depth > sec.max_depth:
                continue  # a jump into a conduit running full: its momentum balance is checked in test_surcharge
            m1 = gv.specific_force(sec, q, jump.upstream_depth)
            m2 = gv.specific_force(sec, q, jump.downstream_depth)
            assert abs(m1 - m2) <= 1e-6 * m2 or round(jump.x, 6) in unbalanced, (jump, m1, m2)


def test_any_chain_solves_consistently_or_says_why():
    # every generated chain either refuses with a gvflow error or passes the checks above; refusals are
    # allowed, but most generated reaches must actually solve
    _OUTCOMES.update(tried=0, solved=0)
    _check_any_chain()
    assert _OUTCOMES["tried"] > 0 and _OUTCOMES["solved"] >= 0.6 * _OUTCOMES["tried"], _OUTCOMES

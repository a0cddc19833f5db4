"""Benchmarks: a reach of 50 surveyed compound sections against a prismatic reach with the same stations.

Run the timed benchmarks with::

    python -m pytest benchmarks/bench_surveyed.py --benchmark-enable -q

or print the comparison (single solve time ratio, 10,000-scenario roughness sweep throughput ratio)::

    python benchmarks/bench_surveyed.py

The targets: the surveyed reach solves in at most 5x the time of the prismatic one, and its
roughness sweep keeps at least a third of the prismatic sweep's station-solutions per second.

The surveyed reach: ``Reach.from_sections`` through 50 surveyed sections 40 m apart, beds falling
at 0.001 (8 ground points, 3 zones: floodplains n = 0.06 either side of a main channel n = 0.035,
the widths varying from section to section); each of its 49 segments changes from one section to
the next, with contraction and expansion losses 0.1 and 0.3; 40 m³/s, tailwater 3.0 m above the
lowest point. The prismatic reach: 49 trapezoids (b = 9 to 11 m, z = 2, n = 0.035) with the same
stations. With timing off (the normal test run) the sweeps are small; no test asserts a timing,
the accuracy checks do assert.
"""

from __future__ import annotations

import os
import sys
import time

import numpy as np
import pytest

import gvflow as gv

SECTIONS = 50
SEGMENTS = SECTIONS - 1
LENGTH = 40.0
SLOPE = 1e-3
STEPS = 10  # per segment: 49 x 11 = 539 stations
Q = 40.0
TAILWATER = 3.0
SCENARIOS = 10_000


def surveyed_section(i: int) -> gv.Surveyed:
    """A compound section: floodplains either side of a main channel about 8 m wide and 2 m deep."""
    w = 8 + 2 * np.sin(i / 5)
    d = 1.8 + 0.2 * np.cos(i / 7)
    fl = 60 + 10 * np.sin(i / 3)
    off = [0, 10, fl, fl + 1.5, fl + 1.5 + w, fl + 3 + w, fl + 3 + w + fl, fl + 13 + w + fl]
    z0 = (SECTIONS - 1 - i) * LENGTH * SLOPE  # the bed falls at SLOPE from section to section
    el = [z0 + z for z in (4, 3.2, 2.0 + d * 0.1, 0, 0, 2.0, 2.2, 4)]
    return gv.Surveyed(offset=off, elevation=el, roughness=[0.06, 0.035, 0.06], zone_edges=[fl, fl + 3 + w])


def surveyed_reach() -> gv.Reach:
    return gv.Reach.from_sections(stations=np.arange(SECTIONS) * LENGTH,
                                  sections=[surveyed_section(i) for i in range(SECTIONS)], discharge=Q,
                                  downstream=gv.FixedDepth(TAILWATER))


def prismatic_reach() -> gv.Reach:
    return gv.Reach(segments=[gv.Segment(length=LENGTH, slope=SLOPE, section=gv.Trapezoidal(
        bottom_width=10 + np.sin(i), side_slope=2), roughness=0.035) for i in range(SEGMENTS)],
        discharge=Q, downstream=gv.FixedDepth(TAILWATER))


def factors(n: int) -> np.ndarray:
    return np.linspace(0.8, 1.25, n)


def full_size(benchmark) -> bool:
    return (not benchmark.disabled) or os.environ.get("GVFLOW_BENCH_FULL", "") not in ("", "0")


@pytest.fixture(scope="module")
def reaches():
    sv, pr = surveyed_reach(), prismatic_reach()
    sv.solve(n_steps=STEPS)  # the compiled kernels loaded before timing
    pr.solve(n_steps=STEPS)
    return {"surveyed": sv, "prismatic": pr}


@pytest.mark.parametrize("kind", ["surveyed", "prismatic"])
def test_single_solve(benchmark, reaches, kind):
    p = benchmark(reaches[kind].solve, n_steps=STEPS)
    assert p.x[-1] == pytest.approx(SEGMENTS * LENGTH) and p.x.size >= SEGMENTS * STEPS + 1


@pytest.mark.parametrize("kind", ["surveyed", "prismatic"])
def test_roughness_sweep(benchmark, reaches, kind):
    n = SCENARIOS if full_size(benchmark) else 200
    f = factors(n)
    res = benchmark.pedantic(reaches[kind].sweep, kwargs=dict(roughness_scale=f, n_steps=STEPS), rounds=1,
                             iterations=1)
    assert res.depth.shape == (n, SEGMENTS * (STEPS + 1))
    # scenarios of the sweep against solving each alone
    for i in (0, n // 2, n - 1):
        alone = res.scenario_reach(i).solve(n_steps=STEPS)
        np.testing.assert_allclose(res[i].depth, alone.depth, rtol=0, atol=1e-12)


def _best(fn, repeat: int, clock=time.perf_counter) -> float:
    best = np.inf
    for _ in range(repeat):
        t = clock()
        fn()
        best = min(best, clock() - t)
    return best


def main(scenarios: int = SCENARIOS, rounds: int = 3) -> None:
    """Best of ``rounds`` for each reach, the two reaches taking turns round by round, so that a machine
    whose speed drifts slows both alike; the sweeps are timed by the wall clock and by this process's
    processor time (which leaves out the time a shared machine gives to others)."""
    reaches = {"surveyed": surveyed_reach(), "prismatic": prismatic_reach()}
    f = factors(scenarios)
    best = {name: [np.inf, np.inf, np.inf] for name in reaches}
    for reach in reaches.values():
        reach.solve(n_steps=STEPS)
        reach.sweep(roughness_scale=f[:20], n_steps=STEPS)  # compiled kernels loaded
    for _ in range(rounds):
        for name, reach in reaches.items():
            t_cpu = time.process_time()
            t_wall = time.perf_counter()
            reach.sweep(roughness_scale=f, n_steps=STEPS)
            sweep, cpu = time.perf_counter() - t_wall, time.process_time() - t_cpu
            solve = _best(lambda r=reach: r.solve(n_steps=STEPS), 10)
            b = best[name]
            best[name] = [min(b[0], solve), min(b[1], sweep), min(b[2], cpu)]
    for name, (solve, sweep, cpu) in best.items():
        rate = scenarios * SEGMENTS * (STEPS + 1) / sweep
        print(f"{name:9s}  solve {solve * 1e3:7.2f} ms   sweep of {scenarios:,} {sweep:6.2f} s "
              f"(processor {cpu:6.2f} s; {rate / 1e6:.3f} million station-solutions/s)")
    s, p = best["surveyed"], best["prismatic"]
    print(f"single solve: surveyed / prismatic time = {s[0] / p[0]:.2f} (target at most 5)")
    print(f"roughness sweep: surveyed / prismatic throughput = {p[1] / s[1]:.2f} by the wall clock, "
          f"{p[2] / s[2]:.2f} by processor time (target at least 0.33)")


if __name__ == "__main__":
    main(int(sys.argv[1]) if len(sys.argv) > 1 else SCENARIOS)

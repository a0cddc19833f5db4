"""Speed of the marchers on a 1,000-station profile (pytest-benchmark).

Run with ``python -m pytest benchmarks --benchmark-enable``; the default test run
executes each case once with timing disabled, so the benchmarks keep working.
The profile: an M1 backwater curve in a trapezoidal canal (invented demo data),
traced 1,000 stations upstream from a 2.5 m control over 3 km.
"""

import numpy as np
import pytest

import gvflow as gv
from gvflow.profiles.base import SUB, SegmentBatch, get_marcher

SEC = gv.Trapezoidal(bottom_width=3.0, side_slope=1.5)
Q, SLOPE, N, Y0, LENGTH, STATIONS = 10.0, 0.001, 0.015, 2.5, 3000.0, 1000
X = np.linspace(LENGTH, 0.0, STATIONS)


@pytest.fixture(scope="module")
def seg():
    return SegmentBatch.build(SEC, SLOPE, N, Q)


@pytest.mark.parametrize("method", ["standard_step", "ivp"])
def test_march_1000_stations(benchmark, seg, method):
    marcher = get_marcher(method)
    r = benchmark(marcher.march, seg, X, np.array([Y0]), SUB)
    assert r.n_valid[0] == STATIONS and np.all(np.diff(r.depth[0]) < 0)


def test_standard_step_1000_stations_100_scenarios(benchmark):
    batch = SegmentBatch.build(SEC, SLOPE, N, np.linspace(5.0, 15.0, 100))
    marcher = get_marcher("standard_step")
    r = benchmark(marcher.march, batch, X, np.full(100, Y0), SUB)
    assert np.all(r.n_valid == STATIONS)


@pytest.mark.parametrize("method", ["standard_step", "ivp", "direct_step"])
def test_trace_profile_1000_stations(benchmark, method):
    # 999 reported steps (1,000 stations when the trace covers the segment)
    t = benchmark(gv.trace_profile, SEC, Q, SLOPE, N, Y0, LENGTH, method=method, n_steps=STATIONS - 1,
                  normal_tolerance=1e-6)
    assert t.label == "M1" and t.x.size == STATIONS

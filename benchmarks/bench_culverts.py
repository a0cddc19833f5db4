"""Benchmark: a culvert performance table of 200 discharges with road overtopping.

Run the timed benchmark with::

    python -m pytest benchmarks/bench_culverts.py --benchmark-enable -q

The culvert: two 1.2 m concrete pipes, 30 m long at 1 %, Manning n = 0.012,
under a road whose level crest is 40 m long, 2.5 m above the inlet invert;
tailwater 1.4 m. Discharges 0.1 to 30 m³/s: about two thirds overtop the
road, so each of those is a barrel-and-road split at one headwater. No timing
is asserted; the checks assert what the table must satisfy (continuity
exactly, one headwater for barrel and road).
"""

from __future__ import annotations

import math

import numpy as np

from gvflow import structures as st

G = 9.80665


def test_performance_table_200_discharges_with_overtopping(benchmark):
    barrel = st.CircularBarrel(diameter=1.2, length=30.0, slope=0.01, roughness=0.012, barrels=2)
    road = st.RoadCrest(length=40.0, elevation=2.5)
    q = np.linspace(0.1, 30.0, 200)

    def run():
        return st.culvert_headwater(barrel, q, tailwater=1.4, road=road, allowable_headwater=2.2)

    r = benchmark(run)
    over = r.road_discharge > 0
    assert over.sum() > 100
    np.testing.assert_array_equal(r.barrel_discharge + r.road_discharge, q)
    # the road's share is the broad-crested weir at the common headwater (written out; free flow here)
    head = r.headwater[over] - 2.5
    ref = st.ROAD_OVERTOPPING_COEFFICIENT * 40.0 * math.sqrt(G) * (2.0 * head / 3.0) ** 1.5
    np.testing.assert_allclose(r.road_discharge[over], ref, rtol=1e-9)

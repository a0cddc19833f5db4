"""Interpreted time per unit of declared work, for a prismatic and a surveyed reach.

The engine (:mod:`gvflow._engine`) runs small calls interpreted and compiles once the work done, or asked
for, makes compiling pay; each core call declares its work in passes of a trapezoid's hydraulics, a
surveyed section's weighted by :func:`gvflow._core.codes.pass_cost`. If the weighting is right the
interpreted time per declared unit is about the same for both reaches::

    python benchmarks/interpreted_cost.py
"""

from __future__ import annotations

import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).parent))

import bench_surveyed  # noqa: E402

from gvflow import _engine  # noqa: E402


def declared_and_time(reach) -> tuple[float, float]:
    """(work declared, seconds) of one interpreted solve."""
    declared = []
    wanted = _engine.compiled_wanted

    def record(work):
        declared.append(work)
        return False

    _engine.compiled_wanted = record
    try:
        reach.solve(n_steps=bench_surveyed.STEPS)  # modules loaded
        declared.clear()
        t = time.perf_counter()
        reach.solve(n_steps=bench_surveyed.STEPS)
        return sum(declared), time.perf_counter() - t
    finally:
        _engine.compiled_wanted = wanted


def main() -> None:
    for name, reach in (("prismatic", bench_surveyed.prismatic_reach()), ("surveyed", bench_surveyed.surveyed_reach())):
        work, secs = declared_and_time(reach)
        print(f"{name:9s}  declared {work:10,.0f} units  interpreted {secs * 1e3:7.1f} ms  "
              f"{secs / work * 1e6:5.2f} µs per unit")


if __name__ == "__main__":
    main()

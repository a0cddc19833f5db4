"""Speed at equal accuracy on the M1 backwater of ``bench_backwater.py``: the comparison table.

    python benchmarks/backwater_table.py [--repeat N] [--search]

For each way to the profile (the plain solve_ivp at 101 stations, the plain fsolve loop,
gvflow's ``reach.solve()``): stations, largest depth error against the quadrature
reference, best time per profile over ``N`` timing runs (each the mean of a batch of calls;
the minimum is kept because the machine is shared), and gvflow's speed-up over each.
``--search`` also searches the fewest stations at which the fsolve loop and gvflow are
as accurate as the solve_ivp (and says whether the counts in ``bench_backwater.py`` are it).

Targets: gvflow at least 5x the plain solve_ivp and 30x the plain fsolve loop, at equal accuracy.
"""

from __future__ import annotations

import argparse
import os
import sys
import timeit

os.environ.setdefault("GVFLOW_ENGINE", "compiled")  # time the compiled core, as the benchmarks do
sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))

import bench_backwater as bw  # noqa: E402

TARGETS = {"plain solve_ivp": 5.0, "plain fsolve loop": 30.0}


def best_time(fn, repeat: int) -> float:
    """Best mean time [s] of one call over ``repeat`` batches (each batch about 0.2 s)."""
    fn()
    per = timeit.timeit(fn, number=1)
    number = max(1, int(0.2 / max(per, 1e-7)))
    return min(timeit.repeat(fn, number=number, repeat=repeat)) / number


def best_solve_time(repeat: int, number: int = 400) -> float:
    """Best mean time [s] of gvflow's solve over ``repeat`` batches, each call on a reach built for it
    beforehand (outside the timing), so that nothing kept from an earlier solve of the same reach helps."""
    n_steps = bw.GVFLOW_STATIONS - 1
    bw.backwater_reach().solve(n_steps=n_steps)
    best = float("inf")
    for _ in range(repeat):
        reaches = [bw.backwater_reach() for _ in range(number)]
        t0 = timeit.default_timer()
        for reach in reaches:
            reach.solve(n_steps=n_steps)
        best = min(best, (timeit.default_timer() - t0) / number)
    return best


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=7)
    parser.add_argument("--search", action="store_true")
    args = parser.parse_args(argv)

    target = bw.max_error(*bw.plain_solve_ivp())
    counts = {"plain solve_ivp": bw.IVP_STATIONS, "plain fsolve loop": bw.FSOLVE_STATIONS,
              "gvflow": bw.GVFLOW_STATIONS}
    if args.search:
        for name, start in (("plain fsolve loop", bw.FSOLVE_STATIONS), ("gvflow", bw.GVFLOW_STATIONS)):
            m, err = bw.equal_accuracy_stations(bw.METHODS[name], target, start)
            print(f"{name}: fewest stations for error <= {target:.3g} m: {m} (error {err:.3g} m)"
                  f"{'' if m == counts[name] else f'; bench_backwater.py has {counts[name]}: update it'}")
    calls = {"plain solve_ivp": bw.plain_solve_ivp, "plain fsolve loop": bw.plain_fsolve_loop, "gvflow": None}
    rows = {}
    for name in calls:
        x, y = bw.METHODS[name](counts[name])
        rows[name] = (x.size, bw.max_error(x, y))
    times = dict.fromkeys(calls, float("inf"))
    for _ in range(args.repeat):  # interleaved, so that all three sample the machine over the same stretch
        for name, fn in calls.items():
            times[name] = min(times[name], best_time(fn, 1) if fn is not None else best_solve_time(1))
    print(f"M1 backwater, {bw.LENGTH:g} m; accuracy held to the plain solve_ivp's {target:.3g} m "
          f"(best of {args.repeat} timing runs)\n")
    print("| method | stations | largest depth error | time per profile | gvflow faster by | target |")
    print("| --- | --- | --- | --- | --- | --- |")
    for name in calls:
        m, err = rows[name]
        ratio = times[name] / times["gvflow"]
        tgt = TARGETS.get(name)
        verdict = "" if tgt is None else f"{tgt:g}x: {'met' if ratio >= tgt else 'MISSED'}"
        print(f"| {name} | {m} | {err:.3g} m | {times[name] * 1e3:.3f} ms | "
              f"{'' if name == 'gvflow' else f'{ratio:.1f}x'} | {verdict} |")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())

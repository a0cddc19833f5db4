"""Speed at equal accuracy: one M1 backwater against a plain solve_ivp and a plain fsolve loop.

Run the timed benchmarks with::

    python -m pytest benchmarks/bench_backwater.py --benchmark-enable -q

and print the comparison table (station counts, errors, best times, ratios) with
``python benchmarks/backwater_table.py``. In the normal test run (``--benchmark-disable``)
each case runs once and the accuracy checks below still run. No test asserts a timing.

The reach (invented demo data): a 3 km trapezoidal canal, bottom width 4.5 m, side slopes
2 horizontal to 1 vertical, Manning n = 0.022, bed slope 4e-4, 25 m³/s, tailwater held at
1.5 times normal depth: an M1 backwater curve over the whole reach.

The reference is independent of gvflow and of both baselines: the distance integral
x2 - x1 = ∫ (1 - Fr²)/(S0 - Sf) dy (Chow 1959, *Open-Channel Hydraulics*, eq. 9-13) by
adaptive quadrature (``scipy.integrate.quad``, tolerances 1e-13), inverted for the depth at
each station by Newton's method on x(y), station after station from the tailwater. Its
accuracy is itself checked against a second, different integration of the same equation.

The three ways to the profile, each timed at the station count at which it is first as
accurate as the plain solve_ivp at 101 stations (largest depth error against the reference;
the counts are found by :func:`equal_accuracy_stations`, run by ``backwater_table.py``,
and checked below):

- the plain solve_ivp: dy/dx = (S0 - Sf)/(1 - Fr²) by RK45 with rtol 1e-6 (atol left at its
  default), dense output evaluated at 101 evenly spaced stations, as written in a notebook;
- the plain fsolve loop: the standard step (arithmetic mean friction slope) solved by
  ``scipy.optimize.fsolve`` at every station, from the previous depth;
- gvflow: ``reach.solve()`` with its defaults (standard step, conveyance-averaged friction
  slope) and ``n_steps`` chosen for the station count.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.integrate import quad, solve_ivp
from scipy.optimize import brentq, fsolve

import gvflow as gv

G = 9.80665
WIDTH, SIDE, N_MANNING, SLOPE, Q, LENGTH = 4.5, 2.0, 0.022, 4e-4, 25.0, 3000.0

#: stations of the plain solve_ivp (the accuracy every method is held to)
IVP_STATIONS = 101
#: the fewest evenly spaced stations at which the plain fsolve loop and gvflow are at least as accurate as
#: the plain solve_ivp at IVP_STATIONS (found by equal_accuracy_stations; checked in the tests below)
FSOLVE_STATIONS = 91
GVFLOW_STATIONS = 146


# -- the channel, written out (independent of gvflow) ------------------------------------------------


def _area(y):
    return (WIDTH + SIDE * y) * y


def _top(y):
    return WIDTH + 2.0 * SIDE * y


def _perimeter(y):
    return WIDTH + 2.0 * y * math.sqrt(1.0 + SIDE * SIDE)


def _sf(y):
    a = _area(y)
    return (N_MANNING * Q / (a * (a / _perimeter(y)) ** (2.0 / 3.0))) ** 2


def _fr2(y):
    return Q * Q * _top(y) / (G * _area(y) ** 3)


def _energy(y):
    return y + Q * Q / (2.0 * G * _area(y) ** 2)


def _dxdy(y):
    return (1.0 - _fr2(y)) / (SLOPE - _sf(y))


YN = brentq(lambda y: _sf(y) - SLOPE, 0.1, 20.0, xtol=1e-15, rtol=1e-15)
TAILWATER = 1.5 * YN


def stations(m: int) -> np.ndarray:
    """``m`` evenly spaced stations from the upstream end (x = 0) to the tailwater (x = LENGTH)."""
    return np.linspace(0.0, LENGTH, m)


# -- the reference ----------------------------------------------------------------------------------


def reference_depths(x: np.ndarray) -> np.ndarray:
    """Depth at each station of ``x`` (increasing, ending at LENGTH) by quadrature of dx/dy.

    From the tailwater upstream, station by station: the depth y at x_i solves
    x_{i+1} + ∫_{y_{i+1}}^{y} dx/dy dy = x_i, found by Newton's method (derivative dx/dy)
    from the depth at x_{i+1}; each quadrature spans one station interval only.
    """
    y = np.empty(x.size)
    y[-1] = TAILWATER
    for i in range(x.size - 2, -1, -1):
        y0, target = y[i + 1], x[i] - x[i + 1]
        yi = y0 - target / _dxdy(y0)  # dx/dy < 0 here: the depth falls upstream
        for _ in range(50):
            dist, _err = quad(_dxdy, y0, yi, epsabs=1e-13, epsrel=1e-13, limit=200)
            dy = (dist - target) / _dxdy(yi)
            yi -= dy
            if abs(dy) <= 1e-14 * yi:
                break
        else:  # pragma: no cover - a reference that does not converge stops the benchmark
            raise RuntimeError(f"reference depth at x = {x[i]:g} did not converge")
        y[i] = yi
    return y


def max_error(x: np.ndarray, y: np.ndarray) -> float:
    """Largest depth error [m] of a profile at stations ``x`` against the quadrature reference."""
    return float(np.max(np.abs(np.asarray(y) - reference_depths(np.asarray(x)))))


# -- the plain baselines, as written in a notebook ---------------------------------------------------


def plain_solve_ivp(m: int = IVP_STATIONS):
    """dy/dx = (S0 - Sf)/(1 - Fr²) by RK45 (rtol 1e-6) from the tailwater upstream, dense output at m stations."""
    x = stations(m)
    sol = solve_ivp(lambda _x, y: [(SLOPE - _sf(y[0])) / (1.0 - _fr2(y[0]))], (LENGTH, 0.0), [TAILWATER],
                    method="RK45", rtol=1e-6, dense_output=True)
    return x, sol.sol(x)[0]


def _step_residual(v, e1, sf1, d):
    """Energy residual of a standard step of signed length d: E(y) - E(y1) - S0 d + d (Sf(y1) + Sf(y))/2."""
    return _energy(v[0]) - e1 - SLOPE * d + d * 0.5 * (sf1 + _sf(v[0]))


def plain_fsolve_loop(m: int = FSOLVE_STATIONS):
    """The standard step (arithmetic mean friction slope) solved by fsolve at every station, upstream."""
    x = stations(m)
    y = np.empty(m)
    y[-1] = TAILWATER
    for i in range(m - 2, -1, -1):
        y1 = y[i + 1]
        y[i] = fsolve(_step_residual, [y1], args=(_energy(y1), _sf(y1), x[i] - x[i + 1]))[0]
    return x, y


def backwater_reach() -> gv.Reach:
    sec = gv.Trapezoidal(bottom_width=WIDTH, side_slope=SIDE)
    return gv.Reach(segments=[gv.Segment(length=LENGTH, slope=SLOPE, section=sec, roughness=N_MANNING)],
                    discharge=Q, downstream=gv.FixedDepth(TAILWATER))


def gvflow_profile(m: int = GVFLOW_STATIONS, reach: gv.Reach | None = None):
    """gvflow's default solve with ``m`` stations (one segment: n_steps = m - 1)."""
    p = (reach or backwater_reach()).solve(n_steps=m - 1)
    return p.x, p.depth


METHODS = {"plain solve_ivp": plain_solve_ivp, "plain fsolve loop": plain_fsolve_loop, "gvflow": gvflow_profile}


def equal_accuracy_stations(method, target: float, start: int) -> tuple[int, float]:
    """The fewest stations (searched upward from ``start``, then downward) at which ``method`` errs by at most
    ``target``; returns (stations, error there)."""
    m = start
    err = max_error(*method(m))
    while err > target:
        m += 1
        err = max_error(*method(m))
    while m > 3:
        e = max_error(*method(m - 1))
        if e > target:
            break
        m, err = m - 1, e
    return m, err


# -- checks and benchmarks ---------------------------------------------------------------------------


@pytest.fixture(scope="module")
def target():
    """The plain solve_ivp's largest depth error at 101 stations: the accuracy every method is held to."""
    return max_error(*plain_solve_ivp())


def test_reference_is_accurate():
    """The quadrature reference agrees with a different integration of the same equation: x(y) by DOP853
    (rtol 1e-13) on dx/dy from the tailwater, evaluated at the reference depths."""
    x = stations(31)
    y = reference_depths(x)
    sol = solve_ivp(lambda _y, xx: [_dxdy(_y)], (TAILWATER, y[0]), [LENGTH], method="DOP853", rtol=1e-13,
                    atol=1e-10, dense_output=True)
    x_back = sol.sol(y)[0]
    # 1e-7 m of distance is about 1e-9 m of depth here (|dy/dx| < 5e-4 on this profile)
    assert np.max(np.abs(x_back - x)) < 1e-7


def test_plain_solve_ivp(benchmark, target):
    x, y = benchmark(plain_solve_ivp)
    benchmark.extra_info.update(stations=int(x.size), max_depth_error=target)
    assert 1e-7 < target < 1e-4  # a real, small error: the comparison below means something


def test_plain_fsolve_loop(benchmark, target):
    x, y = benchmark.pedantic(plain_fsolve_loop, rounds=20, iterations=1)
    err = max_error(x, y)
    benchmark.extra_info.update(stations=int(x.size), max_depth_error=err, target=target)
    assert err <= target


def test_gvflow_solve(benchmark, target):
    # each round solves a reach built for it (outside the timing): nothing a reach could keep from an earlier
    # solve helps, as for a user solving a reach once
    profile = benchmark.pedantic(lambda reach: reach.solve(n_steps=GVFLOW_STATIONS - 1),
                                 setup=lambda: ((backwater_reach(),), {}), warmup_rounds=20, rounds=500, iterations=1)
    assert profile.x.size == GVFLOW_STATIONS and profile.profile_types == ["M1"]
    err = max_error(profile.x, profile.depth)
    benchmark.extra_info.update(stations=int(profile.x.size), max_depth_error=err, target=target)
    assert err <= target

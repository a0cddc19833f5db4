"""Time to first answer: fresh interpreters, measured against one reference in the same run.

    python benchmarks/first_answer.py [--repeat N]

Each case starts a new Python process and is timed from start to exit (wall clock),
best of N runs. The reference is ``import numpy, scipy.optimize, scipy.integrate``,
the least any scientific-Python answer costs here. The cases:

- ``import gvflow``
- ``gvflow demo`` with the compiled-kernel cache warm (as after the first run)
- ``gvflow demo`` with an empty compiled-kernel cache (as on a fresh install), by pointing
  numba's cache at a new empty folder for each run.

Targets: import at most 1.5x, warm demo at most 2x, cold demo at most 10x the reference.
"""

from __future__ import annotations

import argparse
import os
import subprocess
import sys
import tempfile
import time

CASES = {
    "reference: import numpy, scipy.optimize, scipy.integrate": ["-c", "import numpy, scipy.optimize, scipy.integrate"],
    "import gvflow": ["-c", "import gvflow"],
    "gvflow demo, warm cache": ["-m", "gvflow.cli", "demo"],
    "gvflow demo, empty cache": ["-m", "gvflow.cli", "demo"],
}
TARGETS = {"import gvflow": 1.5, "gvflow demo, warm cache": 2.0, "gvflow demo, empty cache": 10.0}


def _once(args, env) -> float:
    t0 = time.perf_counter()
    subprocess.run([sys.executable, *args], env=env, check=True, stdout=subprocess.DEVNULL)
    return time.perf_counter() - t0


def measure(repeat: int = 5) -> dict[str, float]:
    """Best wall time [s] of each case over ``repeat`` fresh processes, cases interleaved."""
    base = {k: v for k, v in os.environ.items() if k not in ("NUMBA_CACHE_DIR", "GVFLOW_ENGINE")}
    subprocess.run([sys.executable, "-m", "gvflow.cli", "demo"], env=base, check=True, stdout=subprocess.DEVNULL)
    best = dict.fromkeys(CASES, float("inf"))
    for _ in range(repeat):
        for name, args in CASES.items():
            env = dict(base)
            with tempfile.TemporaryDirectory() as empty:
                if "empty cache" in name:
                    env["NUMBA_CACHE_DIR"] = empty
                best[name] = min(best[name], _once(args, env))
    return best


def report(best: dict[str, float]) -> str:
    ref = best[next(iter(CASES))]
    lines = ["| case | best wall time | ratio to reference | target |", "| --- | --- | --- | --- |"]
    for name, t in best.items():
        target = TARGETS.get(name)
        verdict = "" if target is None else f"at most {target:g}x: {'met' if t / ref <= target else 'MISSED'}"
        lines.append(f"| {name} | {t:.2f} s | {t / ref:.2f}x | {verdict} |")
    return "\n".join(lines)


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=5)
    args = parser.parse_args(argv)
    print(report(measure(args.repeat)))
    return 0


if __name__ == "__main__":
    raise SystemExit(main())

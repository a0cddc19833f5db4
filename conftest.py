"""Test-run settings shared by the test suite, the doctests and the benchmarks.

The suite runs the compiled physics core throughout (``GVFLOW_ENGINE=compiled``), so its
timing does not depend on when the tiered engine would switch; tests/test_engine.py runs
the same calls interpreted and checks that both builds agree.
"""

import os

os.environ.setdefault("GVFLOW_ENGINE", "compiled")

"""The one compilation setting of gvflow's physics kernels.

Every function of the core is declared with :func:`kernel`, so the options that
matter for the first answer on a fresh install (the on-disk cache, or no
compilation at all) and for speed are chosen in one place.
"""

from __future__ import annotations

PLAIN = "gvflow._core_plain"


def kernel(fn):
    """Declare a scalar kernel of the core.

    In the compiled build: numba nopython mode, cached on disk, so a fresh process
    loads the machine code instead of compiling it again. In the interpreted build
    (the same source loaded as ``gvflow._core_plain``, see :mod:`gvflow._engine`):
    the function itself, so nothing imports numba.
    """
    if fn.__module__.startswith(PLAIN):
        return fn
    from numba import njit

    return njit(cache=True)(fn)

"""The one compilation setting of gvflow's physics kernels.

Every compiled function is declared with :func:`kernel`, so the options that
matter for the first answer on a fresh install (the on-disk cache) and for
speed are chosen in one place.
"""

from __future__ import annotations

from numba import njit

#: Decorator for a compiled scalar kernel: nopython mode, cached on disk, so a
#: fresh process loads the machine code instead of compiling it again.
kernel = njit(cache=True)

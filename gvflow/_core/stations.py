"""Station layout and governance between the two passes of the mixed-regime solver (private; compiled or
interpreted, see :mod:`gvflow._engine`)."""

from __future__ import annotations

import numpy as np

from ._jit import kernel
from .codes import REGIME_CRITICAL, REGIME_SUPER


@kernel
def layout(lengths, steps, slopes, x_end, z_end):
    """Stations of :func:`station_layout`: ``steps[k] + 1`` evenly spaced over segment k, as
    np.linspace(start, start + length) would place them, and the bed there as Reach.bed_elevation."""
    total = 0
    for k in range(steps.shape[0]):
        total += steps[k] + 1
    x, seg, bed = np.empty(total), np.empty(total, np.int64), np.empty(total)
    p, start = 0, 0.0
    for k in range(steps.shape[0]):
        h = lengths[k] / steps[k]
        for j in range(steps[k] + 1):
            x[p] = j * h + start if j < steps[k] else start + lengths[k]
            seg[p] = k
            bed[p] = z_end[k] + slopes[k] * (x_end[k] - x[p])
            p += 1
        start += lengths[k]
    return x, seg, bed


@kernel
def govern(m_sup, m_sub, y_sup, crit_sup, depth, regime, tol, first_loss):
    """Step 3 of the method on one segment: the supercritical profile governs from the segment's head up
    to the first station where its specific force falls below the subcritical one's (relative ``tol``).
    Writes its depths and regimes over ``depth`` and ``regime`` there; ``first_loss[s]`` is that station
    (m where it governs the whole segment)."""
    n, m = m_sup.shape
    for s in range(n):
        first_loss[s] = m
        for j in range(m):
            if not m_sup[s, j] >= m_sub[s, j] * (1.0 - tol):
                first_loss[s] = j
                break
            depth[s, j] = y_sup[s, j]
            regime[s, j] = REGIME_CRITICAL if crit_sup[s, j] else REGIME_SUPER

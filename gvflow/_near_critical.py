"""Notes on long stretches of near-critical flow (private).

Where the Froude number stays between 0.85 and 1.15 the depth is close to
critical depth, where a small change of energy changes the depth a lot: the
water surface is unstable and wavy (undular), and small changes of
roughness or discharge move it noticeably (Chow 1959, *Open-Channel
Hydraulics*, ch. 3, the specific-energy curve near critical depth; design
manuals advise against designing for Froude numbers near 1, common
practice). The profile's notes say where this happens over a long stretch.

"Long" here means at least :data:`NEAR_CRITICAL_MIN_LENGTH` critical depths
along the channel (the stations of one segment, first to last within the
band). A profile passing through critical depth at a control or a brink
leaves the band within a few depths and is not reported; a channel laid
near the critical slope, whose normal flow sits in the band, is.

The band is tested on depths, not on Froude numbers: Fr = Q sqrt(T)/(sqrt(g) A^1.5)
falls as the depth rises in any section whose critical depth is unique, so
Fr = F exactly at the critical depth of the discharge Q/F, and the band is
yc(Q/1.15) <= y <= yc(Q/0.85). That costs two critical depths per segment and
scenario instead of a Froude number at every station.
"""

from __future__ import annotations

import numpy as np

from ._engine import core
from ._notes import note

#: Froude numbers bounding near-critical flow (Chow 1959, ch. 3; common practice).
NEAR_CRITICAL_FROUDE = (0.85, 1.15)
#: Shortest stretch reported, in critical depths (a choice of this library: several wave lengths of the
#: undular surface, well beyond the few depths over which a profile passes through critical depth).
NEAR_CRITICAL_MIN_LENGTH = 10.0


def near_critical_notes(notes, segs, bounds, x, depth) -> None:
    """Append a note to each scenario for every long near-critical stretch of each segment."""
    lo_fr, hi_fr = NEAR_CRITICAL_FROUDE
    for k, seg in enumerate(segs):
        i0, m = bounds[k]
        q = np.ascontiguousarray(seg.discharge, dtype=float)
        y_lo = np.empty_like(q)
        y_hi = np.empty_like(q)
        core("march", 200 * q.size * seg.cost).froude_band_depths(seg.cb, seg.fl, q, lo_fr, hi_fr, y_lo, y_hi)
        y = depth[:, i0:i0 + m]
        inside = (y >= y_lo[:, None]) & (y <= y_hi[:, None])
        if not inside.any():
            continue
        padded = np.zeros((inside.shape[0], inside.shape[1] + 2), np.int8)  # (np.pad costs more than the rest)
        padded[:, 1:-1] = inside
        edges = np.diff(padded, axis=1)
        s_start, j_start = np.nonzero(edges == 1)
        s_end, j_end = np.nonzero(edges == -1)  # one past the last station inside, same order as the starts
        xs = x[i0:i0 + m]
        length = xs[j_end - 1] - xs[j_start]
        yc = seg.yc[s_start]
        for r in (length >= NEAR_CRITICAL_MIN_LENGTH * yc).nonzero()[0]:
            s = int(s_start[r])
            a, b = float(xs[j_start[r]]), float(xs[j_end[r] - 1])
            notes[s].append(note(a, "near-critical flow", k=k, x_end=b, yc=yc[r], froude=(lo_fr, hi_fr)))

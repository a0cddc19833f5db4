"""Profile pieces of solved scenarios: station sequences and continuous pieces (private; compiled or
interpreted, see :mod:`gvflow._engine`).

Bookkeeping the solver and the results share: the station sequence of one scenario with its jumps,
and the continuous pieces (segment, regime, extent, the depth that decides the label) of many.
"""

from __future__ import annotations

import numpy as np

from ._jit import kernel


@kernel
def scenario_sequence(x, y, r, seg, j_after, j_x, j_y1, j_y2, j_seg, j_junc):
    """Stations of one scenario as Profile.from_batch lays them out for its pieces: the jumps inserted."""
    m = x.shape[0]
    nj = j_after.shape[0]
    total = m + 2 * nj
    xs = np.empty(total)
    ys = np.empty(total)
    rs = np.empty(total, np.int64)
    ks = np.empty(total, np.int64)
    p = 0
    for j in range(m):
        xs[p] = x[j]
        ys[p] = y[j]
        rs[p] = r[j]
        ks[p] = seg[j]
        p += 1
        for t in range(nj):
            if j_after[t] == j and not j_junc[t]:
                xs[p] = j_x[t]
                ys[p] = j_y1[t]
                rs[p] = -1
                ks[p] = j_seg[t]
                xs[p + 1] = j_x[t]
                ys[p + 1] = j_y2[t]
                rs[p + 1] = 1
                ks[p + 1] = j_seg[t]
                p += 2
    return xs[:p], ys[:p], rs[:p], ks[:p]


@kernel
def _sequence_pieces(xs, ys, rs, ks, yn, uni_tol, count, s, out_s, out_k, out_r, out_x0, out_x1, out_med, w):
    """Continuous profile pieces of one scenario's station sequence (:func:`scenario_sequence`), sorted by
    (x_start, x_end); ``yn`` its normal depth per segment.

    Runs of one regime inside one segment between jumps, extended through a
    critical-depth station at either end. Each is labelled from where it
    starts (its control end: downstream for subcritical flow, upstream for
    supercritical flow) and the zone it moves into from there, and ends where
    it reaches normal depth within ``uni_tol``: beyond is uniform flow, which
    gets no piece (nor does a run that starts at normal depth). Writes them from
    row ``w`` of the out arrays (scenario index ``s``) unless ``count``;
    returns the next free row either way.
    """
    p = xs.shape[0]
    w0 = w
    start = 0
    for j in range(1, p + 1):
        if j < p and ks[j] == ks[j - 1] and xs[j] != xs[j - 1]:
            continue
        # part = [start, j)
        for want in (-1, 1):
            i = start
            while i < j:
                if rs[i] != want:
                    i += 1
                    continue
                e = i
                while e + 1 < j and rs[e + 1] == want:
                    e += 1
                k = ks[i]
                ynk = yn[k]
                first = i - 1 if i > start and rs[i - 1] == 0 else i
                last = e + 1 if e < j - 1 and rs[e + 1] == 0 else e
                # the profile starts at its control end (downstream for subcritical flow, traced upstream;
                # upstream for supercritical flow) and runs into the zone it enters from there
                step = 1 if want == -1 else -1
                a = first if want == -1 else last
                b = last if want == -1 else first
                at_normal = np.isfinite(ynk)
                ya = ys[a]
                if not (at_normal and abs(ya - ynk) <= uni_tol * ynk):
                    # it ends where it reaches normal depth (within tolerance): uniform flow beyond
                    t = a
                    while t != b:
                        t += step
                        if at_normal and abs(ys[t] - ynk) <= uni_tol * ynk:
                            break
                    if t != a:
                        # its depth just after the start, on the side it moves to, decides the zone
                        nxt = ys[a + step]
                        rep = ya if nxt == ya else ya + (1.0 if nxt > ya else -1.0) * uni_tol * ya
                        if not count:
                            out_s[w] = s
                            out_k[w] = k
                            out_r[w] = want
                            out_x0[w] = xs[min(a, t)]
                            out_x1[w] = xs[max(a, t)]
                            out_med[w] = rep
                        w += 1
                i = e + 1
        start = j
    if not count:
        # stable insertion sort of this scenario's pieces by (x_start, x_end)
        for u in range(w0 + 1, w):
            v = u
            while v > w0 and (out_x0[v - 1] > out_x0[v] or (out_x0[v - 1] == out_x0[v]
                                                              and out_x1[v - 1] > out_x1[v])):
                for arr in (out_x0, out_x1, out_med):
                    arr[v - 1], arr[v] = arr[v], arr[v - 1]
                out_s[v - 1], out_s[v] = out_s[v], out_s[v - 1]
                out_k[v - 1], out_k[v] = out_k[v], out_k[v - 1]
                out_r[v - 1], out_r[v] = out_r[v], out_r[v - 1]
                v -= 1
    return w


@kernel
def _piece_arrays(size):
    """Out arrays of :func:`_sequence_pieces` for ``size`` pieces: scenario, segment, regime, x0, x1, and the
    depth deciding the label."""
    return (np.empty(size, np.int64), np.empty(size, np.int64), np.empty(size, np.int64), np.empty(size),
            np.empty(size), np.empty(size))


@kernel
def all_pieces(x, depth, regime, seg, jump_ptr, j_after, j_x, j_y1, j_y2, j_seg, j_junc, yn, uni_tol):
    """The pieces of every scenario, counted, allocated and filled in one call: (scenario, segment, regime,
    x0, x1, depth deciding the label) per piece, scenario by scenario."""
    out = _piece_arrays(0)
    w = 0
    for fill in (False, True):  # count, then fill
        if fill:
            out = _piece_arrays(w)
        w = 0
        for s in range(depth.shape[0]):
            a, b = jump_ptr[s], jump_ptr[s + 1]
            xs, ys, rs, ks = scenario_sequence(x, depth[s], regime[s], seg, j_after[a:b], j_x[a:b], j_y1[a:b],
                                                j_y2[a:b], j_seg[a:b], j_junc[a:b])
            w = _sequence_pieces(xs, ys, rs, ks, yn[s], uni_tol, not fill, s, *out, w)
    return out


@kernel
def one_scenario_pieces(xs, ys, rs, ks, yn, uni_tol):
    """:func:`all_pieces` for one scenario's station sequence: (segment, regime, x0, x1, depth deciding the label)."""
    out = _piece_arrays(_sequence_pieces(xs, ys, rs, ks, yn, uni_tol, True, 0, *_piece_arrays(0), 0))
    _sequence_pieces(xs, ys, rs, ks, yn, uni_tol, False, 0, *out, 0)
    return out[1:]

"""Continuous profile pieces and their labels (private), for one profile or a whole sweep.

A piece is a run of one regime (subcritical or supercritical) inside one
segment between jumps; a piece runs through the critical-depth stations at
its ends (where it starts from or runs into critical depth). Stretches at
normal depth (within :data:`UNIFORM_TOLERANCE`) are uniform flow, not gradually
varied flow, and get no piece: a piece ends where its depth reaches normal
depth. Each piece is labelled (M1 ... A3) from its start (the control end it
is traced from) and the zone it moves into from there, so every station of
the piece lies in the zone its label names.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numba import njit

from .profiles.classify import _zone_labels

__all__ = ["ProfilePiece", "profile_pieces", "scenario_pieces", "UNIFORM_TOLERANCE"]

#: depths within this relative distance of normal depth all along a piece count as uniform flow
UNIFORM_TOLERANCE = 1e-6
_REGIME_NAMES = {-1: "supercritical", 1: "subcritical"}


@dataclass(frozen=True)
class ProfilePiece:
    """One continuous gradually varied flow profile on one segment."""

    label: str
    segment: int
    x_start: float
    x_end: float
    regime: str

    def __repr__(self):
        return f"ProfilePiece({self.label}, segment {self.segment}, x {self.x_start:.2f}-{self.x_end:.2f})"


@njit(cache=True)
def _scenario_sequence(x, y, r, seg, j_after, j_x, j_y1, j_y2, j_seg, j_junc):
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


@njit(cache=True)
def _sequence_pieces(xs, ys, rs, ks, yn, uni_tol, count, s, out_s, out_k, out_r, out_x0, out_x1, out_med, w):
    """Continuous profile pieces of one scenario's station sequence (:func:`_scenario_sequence`), sorted by
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


@njit(cache=True)
def _piece_arrays(size):
    """Out arrays of :func:`_sequence_pieces` for ``size`` pieces: scenario, segment, regime, x0, x1, depth deciding the label."""
    return (np.empty(size, np.int64), np.empty(size, np.int64), np.empty(size, np.int64), np.empty(size),
            np.empty(size), np.empty(size))


@njit(cache=True)
def _all_pieces(x, depth, regime, seg, jump_ptr, j_after, j_x, j_y1, j_y2, j_seg, j_junc, yn, uni_tol):
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
            xs, ys, rs, ks = _scenario_sequence(x, depth[s], regime[s], seg, j_after[a:b], j_x[a:b], j_y1[a:b],
                                                j_y2[a:b], j_seg[a:b], j_junc[a:b])
            w = _sequence_pieces(xs, ys, rs, ks, yn[s], uni_tol, not fill, s, *out, w)
    return out


@njit(cache=True)
def _one_scenario_pieces(xs, ys, rs, ks, yn, uni_tol):
    """:func:`_all_pieces` for one scenario's station sequence: (segment, regime, x0, x1, depth deciding the label)."""
    out = _piece_arrays(_sequence_pieces(xs, ys, rs, ks, yn, uni_tol, True, 0, *_piece_arrays(0), 0))
    _sequence_pieces(xs, ys, rs, ks, yn, uni_tol, False, 0, *out, 0)
    return out[1:]


def _labelled(sol, cls, k, r, x0, x1, med, ynk, yck) -> list[ProfilePiece]:
    """ProfilePiece objects for pieces in segments ``k`` of slope classes ``cls`` (normal and critical
    depths ``ynk``, ``yck`` per piece)."""
    # a closed conduit that cannot carry the discharge in uniform flow is classed mild with no normal
    # depth: its profiles tend to the crown, which stands in for normal depth when labelling them
    no_yn = np.isnan(ynk)
    if no_yn.any():
        crown = np.array([sg.section.max_depth for sg in sol.segs])
        ynk = np.where(no_yn & (cls == "mild"), crown[k], ynk)
    labels = _zone_labels(cls, med, ynk, yck).tolist()
    return [ProfilePiece(lab, kk, a, b, _REGIME_NAMES[rr])
            for lab, kk, rr, a, b in zip(labels, k.tolist(), r.tolist(), x0.tolist(), x1.tolist(), strict=True)]


def scenario_pieces(sol, i, xs, ys, rs, ks, yn, yc) -> list[ProfilePiece]:
    """The labelled pieces of scenario ``i``, from its station sequence (:func:`_scenario_sequence`) and
    its normal and critical depth per segment."""
    k, r, x0, x1, med = _one_scenario_pieces(xs, ys, rs, ks, yn, UNIFORM_TOLERANCE)
    return _labelled(sol, sol.slope_class[i][k], k, r, x0, x1, med, yn[k], yc[k])


def profile_pieces(sol, scenarios) -> list[list[ProfilePiece]]:
    """The labelled pieces of each scenario in ``scenarios`` of a batch solution."""
    sc = np.atleast_1d(np.asarray(scenarios, dtype=np.int64))
    js = sol.jump_scenario
    lo, hi = np.searchsorted(js, sc, "left"), np.searchsorted(js, sc, "right")
    rows = np.concatenate([np.arange(a, b) for a, b in zip(lo, hi, strict=True)]).astype(np.int64) \
        if sc.size else np.zeros(0, np.int64)
    ptr = np.zeros(sc.size + 1, np.int64)
    np.cumsum(hi - lo, out=ptr[1:])
    nseg = len(sol.segs)
    yn, yc = np.empty((sc.size, nseg)), np.empty((sc.size, nseg))
    for k, sg in enumerate(sol.segs):
        yn[:, k], yc[:, k] = sg.yn[sc], sg.yc[sc]
    s, k, r, x0, x1, med = _all_pieces(
        sol.x, np.ascontiguousarray(sol.depth[sc], float), np.ascontiguousarray(sol.regime[sc], np.int64),
        np.ascontiguousarray(sol.segment, np.int64), ptr, sol.jump_after[rows], sol.jump_x[rows],
        sol.jump_y1[rows], sol.jump_y2[rows], sol.jump_segment[rows], sol.jump_at_junction[rows], yn,
        UNIFORM_TOLERANCE)
    out = [[] for _ in range(sc.size)]
    if s.size:
        for j, piece in zip(s.tolist(), _labelled(sol, sol.slope_class[sc[s], k], k, r, x0, x1, med, yn[s, k],
                                                   yc[s, k]), strict=True):
            out[j].append(piece)
    return out

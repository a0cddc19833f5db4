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

from ._core.codes import REGIME_NAMES, REGIME_SUB, REGIME_SUPER
from ._engine import core
from .profiles.classify import _zone_labels

__all__ = ["ProfilePiece", "profile_pieces", "scenario_pieces", "UNIFORM_TOLERANCE"]

#: depths within this relative distance of normal depth all along a piece count as uniform flow
UNIFORM_TOLERANCE = 1e-6


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
    # a piece keeps the regime its label names: in a changing segment the depths compared are the
    # segment's, from one end, and may put a piece in a zone of the other regime; the piece's own regime
    # then decides the side of critical depth and normal depth the rest
    for j, (lab, rr) in enumerate(zip(labels, r.tolist(), strict=True)):
        if (lab in _SUBCRITICAL_LABELS) != (rr == REGIME_SUB) and rr in (REGIME_SUB, REGIME_SUPER):
            labels[j] = _regime_label(str(lab[0]), rr == REGIME_SUB, bool(med[j] > ynk[j]))
    return [ProfilePiece(lab, kk, a, b, REGIME_NAMES[rr])
            for lab, kk, rr, a, b in zip(labels, k.tolist(), r.tolist(), x0.tolist(), x1.tolist(), strict=True)]


#: the profile types whose flow is subcritical (Chow 1959, §9-2); the others are supercritical
_SUBCRITICAL_LABELS = frozenset(("M1", "M2", "S1", "C1", "H2", "A2"))


def _regime_label(letter: str, sub: bool, above_normal: bool) -> str:
    """The profile type of slope letter ``letter`` on the side of critical depth its regime puts it (``sub``),
    and of normal depth ``above_normal`` where both zones of that regime exist (M1/M2, S2/S3)."""
    if letter == "M":
        return ("M1" if above_normal else "M2") if sub else "M3"
    if letter == "S":
        return "S1" if sub else ("S2" if above_normal else "S3")
    return letter + ("1" if letter == "C" and sub else "2" if sub else "3")


#: regime code given, for the piece search only, to stations where a closed conduit runs full: they
#: belong to no gradually varied flow piece (a piece ends where the water reaches the crown)
_FULL = 2


def crowns(sol) -> np.ndarray:
    """Crown height above the invert of each segment's section (infinite for open sections)."""
    return np.array([sg.section.max_depth for sg in sol.segs], dtype=float)


def without_full(rs, ys, ks, crown):
    """Regime codes ``rs`` with the stations whose depth ``ys`` stands above the crown of their segment
    ``ks`` (pressure flow) set to :data:`_FULL`."""
    return np.where(ys > crown[ks], _FULL, rs).astype(np.int64)


def scenario_pieces(sol, i, xs, ys, rs, ks, yn, yc) -> list[ProfilePiece]:
    """The labelled pieces of scenario ``i``, from its station sequence (:func:`scenario_sequence`) and
    its normal and critical depth per segment."""
    rs = without_full(rs, ys, ks, crowns(sol))
    k, r, x0, x1, med = core("pieces", xs.size).one_scenario_pieces(xs, ys, rs, ks, yn, UNIFORM_TOLERANCE)
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
    s, k, r, x0, x1, med = core("pieces", sol.depth.size).all_pieces(
        sol.x, np.ascontiguousarray(sol.depth[sc], float),
        np.ascontiguousarray(without_full(sol.regime[sc], sol.depth[sc], sol.segment, crowns(sol)), np.int64),
        np.ascontiguousarray(sol.segment, np.int64), ptr, sol.jump_after[rows], sol.jump_x[rows],
        sol.jump_y1[rows], sol.jump_y2[rows], sol.jump_segment[rows], sol.jump_at_junction[rows], yn,
        UNIFORM_TOLERANCE)
    out = [[] for _ in range(sc.size)]
    if s.size:
        for j, piece in zip(s.tolist(), _labelled(sol, sol.slope_class[sc[s], k], k, r, x0, x1, med, yn[s, k],
                                                   yc[s, k]), strict=True):
            out[j].append(piece)
    return out

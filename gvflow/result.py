"""The solved profile of a reach: station arrays, jumps, profile types, controls and reports."""

from __future__ import annotations

import functools
from dataclasses import dataclass

import numpy as np

from ._core.codes import REGIME_NAMES
from ._engine import core
from ._notes import note, note_text
from ._pieces import ProfilePiece, scenario_pieces
from ._solver import REGIME_CRITICAL, REGIME_SUB, REGIME_SUPER, BatchSolution
from ._validate import finite_array, scalar_or_array
from .jumps import Jump, _length_ratio, jump_type
from .reach import provide
from .sections import matched_parameters

__all__ = ["Profile", "ProfilePiece", "ControlNote", "WATER_DENSITY", "water_unit_weight"]

#: Density of water used for the boundary shear stress: 1000 kg/m³ in SI units (fresh water near
#: 4-20 °C, 998-1000 kg/m³; common practice), 1.94 slug/ft³ in US units (the same water, rounded as
#: in US practice, from memory). A unit system whose length is neither metres nor feet takes the
#: SI value expressed with its own gravity (see :func:`water_unit_weight`).
WATER_DENSITY = {"m": 1000.0, "ft": 1.94}


def water_unit_weight(units) -> float:
    """Unit weight of water gamma = density x g in the reach's units (N/m³ in SI, lb/ft³ in US).

    >>> import gvflow as gv
    >>> water_unit_weight(gv.SI), round(water_unit_weight(gv.US), 2)
    (9806.65, 62.42)
    """
    rho = WATER_DENSITY.get(units.length.strip().lower())
    if rho is None:
        # a custom system: 1000 kg/m³ with its gravity in place of 9.80665 m/s²
        return 1000.0 * units.g
    return rho * units.g

_STATION_ROWS = ("x", "depth", "bed", "friction_slope", "velocity", "froude", "velocity_head", "energy_coefficient",
                 "discharge")


def _read_only(a: np.ndarray) -> np.ndarray:
    a.setflags(write=False)
    return a


_REGIME_LOOKUP = np.array([REGIME_NAMES[REGIME_SUPER], REGIME_NAMES[REGIME_CRITICAL], REGIME_NAMES[REGIME_SUB]])


@dataclass(frozen=True)
class ControlNote:
    """Where and how the flow is controlled, or something the engineer should know."""

    x: float
    kind: str
    text: str

    def __repr__(self):
        return f"ControlNote(x={self.x:.2f}, {self.kind}: {self.text})"


def _coefficients_used(reach, jumps, notes) -> list:
    """(x, usage record) of every empirical coefficient that shaped one scenario's profile.

    The coefficients of the end controls that governed (an end with an "unused control" or a
    "jump swept out" note is left out), of every gate between segments, and the jump-length curve
    and jump types when the profile holds a jump. ``notes`` are the scenario's notes, (x, kind, ...)
    each.
    """
    from dataclasses import replace

    from .coefficients import used

    gates = [k for k, seg in enumerate(reach.segments) if seg.gate is not None]
    xb = reach.boundaries if gates else None
    x_end = float(xb[-1]) if gates else reach.length  # (the same sum, in the same order)
    unused = {x for x, kind, _ in notes if kind in ("unused control", "jump swept out")}
    places = [(0.0, "upstream control", reach.upstream), (x_end, "downstream control", reach.downstream)]
    places += [(float(xb[k]), f"gate at the head of segment {k}", reach.segments[k].gate) for k in gates]
    out = []
    for x, where, ctrl in places:
        if ctrl is None or (where.endswith("control") and x in unused):
            continue
        out += [(x, replace(rec, used_by=f"{where}, {rec.used_by}" if rec.used_by else where))
                for rec in ctrl.coefficients()]
    out += [(x, used("conduit.exit_loss", used_by="submerged conduit outlet"))
            for x, kind, _ in notes if kind == "submerged outlet"]
    if jumps:
        x = float(jumps[0].x)
        out += [(x, used("jump.length_curve", used_by="hydraulic jump length")),
                (x, used("jump.types", used_by="hydraulic jump type"))]
    return out


def _station_discharge(sol: BatchSolution, i: int, x, seg_ix) -> np.ndarray:
    """Discharge of scenario i at each station (segment index ``seg_ix``, distance ``x``): its segment's, growing
    along a segment with lateral inflow."""
    out = np.array([sg.discharge[i] for sg in sol.segs])[seg_ix]
    for k, sg in enumerate(sol.segs):
        if sg.change is not None and sg.change.along.added:
            cols = seg_ix == k
            out[cols] = sg.discharge_at(sg.fractions(x[cols]))[i]
    return out


def _control_notes(reach, jumps, notes, full_notes) -> list:
    """One scenario's notes (``notes`` from the solver, ``full_notes`` on surcharge, and one on each coefficient
    used) as :class:`ControlNote` texts, ordered by x."""
    used = _coefficients_used(reach, jumps, notes)
    notes = list(notes) + full_notes + [note(x, "coefficient", record=rec) for x, rec in used]
    units = reach.resolved_units
    return sorted((ControlNote(float(n.x), n.kind, note_text(n, units)) for n in notes), key=lambda c: c.x)


def _scenario_notes(reach, jumps, sol: BatchSolution, i: int, full_notes) -> list:
    """:func:`_control_notes` of scenario i, with the solver's notes read (and so made) only now."""
    return _control_notes(reach, jumps, sol.notes[i], full_notes)


def _station_quantities(sol: BatchSolution, i: int, seg_ix, depth, x):
    """(A, T, Sf, V, Fr, alpha V²/2g, alpha) at each station of scenario i (segment index ``seg_ix``, ``depth``,
    distance ``x``: where a segment's section changes, its section there)."""
    segs = sol.segs
    out = np.empty((7, depth.size))
    if len(segs) == 1:  # (the common case, without the packing)
        cb = segs[0].cb
        par, offsets = cb.par, np.array([0, cb.par.size], np.int64)
        roughs = np.ascontiguousarray(cb.rough[i:i + 1], float)
    else:
        pars = [sg.cb.par for sg in segs]
        ends, end = [0], 0
        for p in pars:
            end += p.size
            ends.append(end)
        par, offsets = np.concatenate(pars), np.array(ends, np.int64)
        roughs = np.zeros((len(segs), max(sg.cb.rough.shape[1] for sg in segs)))
        for k, sg in enumerate(segs):
            roughs[k, :sg.cb.rough.shape[1]] = sg.cb.rough[i]
    core("march", depth.size * max(sg.cost for sg in segs)).station_quantities(
        np.array([sg.cb.kind for sg in segs], np.int64), par, offsets,
        np.array([sg.cb.law for sg in segs], np.int64), roughs, np.ascontiguousarray(seg_ix, np.int64),
        segs[0].fl, np.array([sg.discharge[i] for sg in segs]), np.ascontiguousarray(depth, float), segs[0].alpha,
        out)
    for k, sg in enumerate(segs):
        if sg.change is None:
            continue
        cols = np.flatnonzero(seg_ix == k)
        if len(cols):
            c, part = sg.change, np.empty((7, len(cols)))
            core("changing", len(cols) * sg.cost).quantities_at(sg.cb, c.along, sg.fl, i, float(sg.discharge[i]),
                                                      np.ascontiguousarray(depth[cols], float), sg.fractions(x[cols]),
                                                      sg.alpha, part)
            out[:, cols] = part
    return out


def _surcharge(reach, sol: BatchSolution, i: int, x, y, seg):
    """Length running full in each segment, and the notes on it, for scenario i's governing stations
    (``x``, ``y``, segment ``seg``, jumps inserted).

    Between two stations both full the whole interval is; between a full and a free one the part from
    where the grade line crosses the crown (an end of a full stretch of the subcritical pass,
    ``sol.pressure_runs``) to the full station. A jump's subcritical side above the crown starts a full
    stretch at the jump.
    """
    nseg = len(reach.segments)
    crowns = [s.section.max_depth for s in reach.segments]
    lengths = np.zeros(nseg)
    if all(c == np.inf for c in crowns):  # open sections only: nothing can run full
        return lengths, []
    crown = np.array(crowns, dtype=float)
    full = y > crown[seg]
    if not full.any():
        return lengths, []
    runs = sol.pressure_runs[i] if sol.pressure_runs else []
    ends = {k: [] for k in range(nseg)}
    for k, x_up, x_down in runs:
        ends[k] += [x_up, x_down]
    starts = reach.boundaries[:-1]
    first, last = np.full(nseg, np.inf), np.full(nseg, -np.inf)  # where each segment's full water begins and ends
    for j in range(x.size - 1):
        k = seg[j + 1]
        # an interval belongs to one segment: both stations in it, or the junction station it shares with the
        # segment above (kept once in a profile) and the segment's first station below it
        if not (full[j] or full[j + 1]) or (seg[j] != k and x[j] != starts[k]):
            continue
        xa, xb = x[j], x[j + 1]
        if not (full[j] and full[j + 1]):
            inside = [t for t in ends[k] if xa <= t <= xb]
            t = inside[0] if inside else 0.5 * (xa + xb)
            xa, xb = (t, xb) if full[j + 1] else (xa, t)
        lengths[k] += xb - xa
        first[k], last[k] = min(first[k], xa), max(last[k], xb)
    notes = []
    for k in (lengths > 0).nonzero()[0]:
        sel = (seg == k) & full
        if not sel.any():  # full only at the junction station it shares with the segment above
            sel = full & (x == starts[k])
        h = y[sel] - crown[k]
        xs = x[sel]
        notes.append(note(float(first[k]), "surcharge", k=k, length=lengths[k], x_end=last[k], head=h.max(),
                          x_head=xs[np.argmax(h)],
                          sf_full=float(sol.segs[k].friction_slope(np.full(sol.segs[k].n, crown[k]))[i])))
    return lengths, notes


class Profile:
    """Water-surface profile of a reach (immutable result of :meth:`Reach.solve`).

    Arrays run upstream to downstream, one value per station [units of the reach]:
    ``x`` (distance from the upstream end), ``depth``, ``stage`` (water-surface
    elevation), ``bed`` (bed elevation), ``discharge`` (constant unless segments
    have inflows: at an inflow two stations share its x, the discharge above
    it, then below it), ``velocity``, ``froude``,
    ``velocity_head``, ``specific_energy``, ``energy_grade`` (elevation of the
    energy grade line), ``friction_slope``, ``regime`` ("subcritical",
    "critical", "supercritical") and ``segment`` (index). At a hydraulic jump
    two stations share one x: the supercritical then the subcritical depth.
    ``froude`` is V / sqrt(g A/T); with an energy coefficient alpha ≠ 1 the
    flow is critical where alpha Fr² = 1, which ``regime`` reflects. In a
    section of several roughness zones (:class:`~gvflow.Surveyed`) ``froude``
    is the compound Froude number (1 exactly where dE/dy = 0 with alpha
    varying with depth) and ``energy_coefficient`` (alpha at each station)
    comes from the zone conveyances; :meth:`zone_table` gives each zone's
    discharge and velocity.

    Other members: ``jumps`` (list of :class:`~gvflow.jumps.Jump`),
    ``profile_types`` (labels of the profile pieces, upstream to downstream),
    ``pieces`` (the pieces with their extents), ``controls`` (notes on what
    governs where, unused controls, drowned or swept-out jumps, and one note
    of kind ``"coefficient"`` for each empirical coefficient the result rests
    on), ``coefficients`` (those coefficients as records with their sources,
    see :mod:`gvflow.coefficients`),
    ``normal_depths``, ``critical_depths`` and ``slope_classes`` per segment (for a segment whose
    section or discharge changes along it, at its downstream end).

    Closed conduits that run full (surcharged): where a conduit cannot carry
    the flow with a free surface, ``depth`` is the pressure head above the
    invert, so ``stage`` is the hydraulic grade line there; ``velocity`` is
    Q/A_full, ``froude`` 0 (no free surface) and ``regime`` "subcritical".
    ``surcharged`` (bool per station) says where; ``hydraulic_grade`` is the
    grade line at every station (the water surface where it is free, the
    same values as ``stage``); ``head_above_crown`` the grade line above the
    crown (negative: the air space above a free surface; NaN in open
    sections); ``surcharged_lengths`` the length running full in each
    segment and ``max_head_above_crown`` the highest head above a crown
    (0 without surcharge). Full stretches belong to no profile piece.

    Computed on request, one value per station: ``area``, ``top_width``,
    ``hydraulic_radius``, ``shear_stress`` (gamma R Sf), ``bank_height`` and
    ``freeboard`` (to the segment's ``bank_height``); all are columns of
    :meth:`table`.
    """

    def __init__(self, *, reach, method, stations, regime, segment, jumps, pieces, controls, normal_depths,
                 critical_depths, slope_classes, surcharged_lengths=None):
        self.reach = reach
        self.method = method
        self.units = reach.resolved_units
        self._stations = stations  # rows: _STATION_ROWS, read-only views of it
        stations.setflags(write=False)
        (self.x, self.depth, self.bed, self.friction_slope, self.velocity, self.froude, self.velocity_head,
         self.energy_coefficient, self.discharge) = stations  # the rows of _STATION_ROWS
        self._regime_code = np.asarray(regime, np.int8)
        self.segment = segment
        segment.setflags(write=False)
        self.jumps = jumps
        self._pieces = pieces  # a list, or a function giving it when first asked for
        self._controls = controls  # the same
        self.normal_depths = normal_depths
        self.critical_depths = critical_depths
        self.slope_classes = slope_classes
        self.surcharged_lengths = (np.zeros(len(reach.segments)) if surcharged_lengths is None
                                   else np.asarray(surcharged_lengths, dtype=float))
        self.surcharged_lengths.setflags(write=False)

    # what most callers never read is made when first asked for (read-only, like the rows)
    @functools.cached_property
    def pieces(self) -> list:
        """The profile pieces with their extents and labels, upstream to downstream."""
        return self._pieces() if callable(self._pieces) else self._pieces

    @functools.cached_property
    def profile_types(self) -> list:
        """Labels of the profile pieces, upstream to downstream."""
        return [p.label for p in self.pieces]

    @functools.cached_property
    def controls(self) -> list:
        """Notes (:class:`ControlNote`) on what governs where, and on what the engineer should know."""
        return self._controls() if callable(self._controls) else self._controls

    @functools.cached_property
    def _crown(self) -> np.ndarray:
        return np.array([s.section.max_depth for s in self.reach.segments], dtype=float)[self.segment]

    @functools.cached_property
    def hydraulic_grade(self) -> np.ndarray:
        """Hydraulic grade line at each station [length]: the water surface where it is free, the pressure
        head above the invert where a conduit runs full (the same values as ``stage``)."""
        return self.stage

    @functools.cached_property
    def head_above_crown(self) -> np.ndarray:
        """Grade line above the crown at each station [length] (negative: the air space above a free
        surface; NaN in open sections)."""
        crown = self._crown
        return _read_only(np.where(np.isfinite(crown), self.depth - crown, np.nan))

    @functools.cached_property
    def surcharged(self) -> np.ndarray:
        """True at the stations where a closed conduit runs full."""
        return _read_only(self.depth > self._crown)

    @functools.cached_property
    def max_head_above_crown(self) -> float:
        """Highest head of the grade line above a crown [length] (0 without surcharge)."""
        return float(np.max(self.head_above_crown, where=self.surcharged, initial=0.0))

    @functools.cached_property
    def stage(self) -> np.ndarray:
        """Water-surface elevation at each station [length]."""
        return _read_only(self.bed + self.depth)

    @functools.cached_property
    def specific_energy(self) -> np.ndarray:
        """Specific energy y + alpha V²/2g at each station [length]."""
        return _read_only(self.depth + self.velocity_head)

    @functools.cached_property
    def energy_grade(self) -> np.ndarray:
        """Elevation of the energy grade line at each station [length]."""
        return _read_only(self.stage + self.velocity_head)

    @functools.cached_property
    def regime(self) -> np.ndarray:
        """Flow regime at each station: "subcritical", "critical" or "supercritical"."""
        return _read_only(_REGIME_LOOKUP[self._regime_code + 1])

    def _state(self) -> tuple:
        """What makes this profile besides its reach, compact (one station array, regime codes, plain tuples),
        for pickling and for sending results between processes (:func:`gvflow.solve_many` re-attaches the
        reach); :meth:`_from_state` undoes it."""
        return (self.method, self._stations, self._regime_code, self.segment,
                [tuple(vars(j).values()) for j in self.jumps], [tuple(vars(p).values()) for p in self.pieces],
                [(c.x, c.kind, c.text) for c in self.controls], self.normal_depths, self.critical_depths,
                self.slope_classes, self.surcharged_lengths)

    @classmethod
    def _from_state(cls, reach, state) -> Profile:
        method, stations, regime, segment, jumps, pieces, controls, yn, yc, classes, full = state
        return cls(reach=reach, method=method, stations=stations, regime=regime, segment=segment,
                   jumps=[Jump(*j) for j in jumps], pieces=[ProfilePiece(*p) for p in pieces],
                   controls=[ControlNote(*c) for c in controls], normal_depths=yn, critical_depths=yc,
                   slope_classes=classes, surcharged_lengths=full)

    def __reduce__(self):
        return Profile._from_state, (self.reach, self._state())

    # -- construction --------------------------------------------------------------------
    @classmethod
    def from_batch(cls, reach, sol: BatchSolution, i: int, method: str = "standard_step") -> Profile:
        """The profile of scenario ``i`` of a batch solution (``reach`` holds its discharge)."""
        rows = (sol.jump_scenario == i).nonzero()[0]
        # the two sequent depths of every jump inside a segment stand at the jump's x
        if rows.size:
            x, y, reg, seg = core("pieces", sol.x.size).scenario_sequence(
                sol.x, sol.depth[i], sol.regime[i].astype(np.int64), sol.segment, sol.jump_after[rows],
                sol.jump_x[rows], sol.jump_y1[rows], sol.jump_y2[rows], sol.jump_segment[rows],
                sol.jump_at_junction[rows])
        else:  # (no jump to insert: the base stations, as the sequence would copy them)
            x, y = sol.x.copy(), sol.depth[i].copy()
            reg, seg = sol.regime[i].astype(np.int64), sol.segment.astype(np.int64)
        yn = np.array([s.tail.yn[i] for s in sol.segs])  # (a changing segment: at its downstream end, where
        yc = np.array([s.tail.yc[i] for s in sol.segs])  # its slope class is taken)
        classes = [str(c) for c in sol.slope_class[i]]
        pieces = functools.partial(scenario_pieces, sol, i, x, y, reg, seg, yn, yc)  # made when first read
        # a junction station appears twice; keep one where nothing changes across it
        q_at = _station_discharge(sol, i, x, seg)
        base = not rows.size  # (the solver's own stations, whose bed it laid out with them)
        if len(sol.segs) > 1:
            drop = np.array([s.drop for s in reach.segments])
            # (the tests below only at the junctions: stations sharing an x in two segments)
            j = ((x[1:] == x[:-1]) & (seg[1:] != seg[:-1])).nonzero()[0]
            same = j[(np.abs(y[j + 1] - y[j]) <= 1e-12 * y[j]) & (drop[seg[j + 1]] == 0) & (q_at[j + 1] == q_at[j])]
            if same.size:
                keep = np.ones(x.size, bool)
                keep[same + 1] = False
                x, y, reg, seg, q_at = x[keep], y[keep], reg[keep], seg[keep], q_at[keep]
                base = False
        bed = sol.bed if base else reach.bed_elevation(x, seg)
        # properties at the stations and at both ends of every jump, in one pass
        k2 = sol.jump_segment[rows]
        if rows.size:
            k1 = np.where(sol.jump_at_junction[rows], k2 - 1, k2)
            props = _station_quantities(sol, i, np.concatenate([seg, k1, k2]),
                                        np.concatenate([y, sol.jump_y1[rows], sol.jump_y2[rows]]),
                                        np.concatenate([x, sol.jump_x[rows], sol.jump_x[rows]]))
        else:
            props = _station_quantities(sol, i, seg, y, x)
        fr_j, hv_j = props[4, x.size:], props[5, x.size:]
        stations = np.empty((len(_STATION_ROWS), x.size))
        stations[0], stations[1], stations[2] = x, y, bed
        stations[3:8] = props[2:, :x.size]  # friction slope, velocity, Froude number, velocity head, alpha
        stations[8] = q_at
        jumps = []
        for r, j in enumerate(rows):
            y1, y2 = float(sol.jump_y1[j]), float(sol.jump_y2[j])
            fr = float(fr_j[r])
            jumps.append(Jump(x=float(sol.jump_x[j]), upstream_depth=y1, downstream_depth=y2, froude=fr,
                              energy_loss=float(y1 + hv_j[r] - (y2 + hv_j[r + rows.size])),
                              length=float(_length_ratio(max(fr, 1.0)) * y2), kind=jump_type(max(fr, 1.0)),
                              segment=int(k2[r]),
                              where="at a segment junction" if sol.jump_at_junction[j] else "in segment"))

        full_len, full_notes = _surcharge(reach, sol, i, x, y, seg)
        controls = functools.partial(_scenario_notes, reach, jumps, sol, i, full_notes)  # made when first read
        profile = cls(reach=reach, method=method, stations=stations, regime=reg, segment=seg, jumps=jumps,
                      pieces=pieces, controls=controls, normal_depths=yn, critical_depths=yc, slope_classes=classes,
                      surcharged_lengths=full_len)
        if any(s.bank_height is not None for s in reach.segments):
            profile._warn_overbank()
        return profile

    @property
    def coefficients(self) -> tuple:
        """The empirical coefficients that shaped this profile, with their sources and status.

        A tuple of :class:`gvflow.coefficients.Coefficient` usage records:
        ``used_by`` says where (e.g. "downstream control, culvert"), ``value``,
        ``source`` and ``status`` (for example "recalled, not confirmed": check
        it before signing). Coefficients of an end control that did not govern
        are left out. The same records are the ``"coefficient"`` notes in
        :attr:`controls` and a section of :meth:`summary`.
        """
        notes = [(c.x, c.kind, c.text) for c in self.controls]
        return tuple(rec for _, rec in _coefficients_used(self.reach, self.jumps, notes))

    # -- queries -------------------------------------------------------------------------
    def depth_at(self, x):
        """Depth interpolated linearly between stations at distance(s) ``x`` [length].

        At a jump the downstream (subcritical) depth is returned for x at the jump.
        """
        xq = finite_array(x, "x")
        if np.any((xq < self.x[0] - 1e-9) | (xq > self.x[-1] + 1e-9)):
            from .errors import InvalidInputError

            raise InvalidInputError(f"x must lie within the reach, 0 to {self.x[-1]:g}; got {x!r}")
        return scalar_or_array(np.interp(xq, self.x, self.depth))

    def stage_at(self, x):
        """Water-surface elevation interpolated at ``x`` [length]."""
        xq = finite_array(x, "x")
        return scalar_or_array(np.asarray(self.depth_at(xq)) + self.reach.bed_elevation(xq))

    @property
    def success(self) -> bool:
        """True: a Profile only exists for a solved reach (failures raise)."""
        return True

    # -- section properties at the stations, for the station table ------------------------------
    def _section_rows(self):
        a = np.empty(self.x.size)
        p = np.empty(self.x.size)
        t = np.empty(self.x.size)
        xb = self.reach.boundaries
        for k, seg in enumerate(self.reach.segments):
            sel = self.segment == k
            if not np.any(sel):
                continue
            sec = seg.section
            y = np.minimum(self.depth[sel], sec.max_depth)
            if seg.section_downstream is None:
                a[sel], p[sel], t[sel] = sec._geometry(y)[:3]
                continue
            # a changing section: the section interpolated at each station (gvflow.sections.matched_parameters)
            kind, par_up, par_dn = matched_parameters(sec, seg.section_downstream)
            frac = np.clip((self.x[sel] - xb[k]) / (xb[k + 1] - xb[k]), 0.0, 1.0)
            out = np.empty((6, 1))
            blend = core("changing", 1).blend
            for j, (yy, f) in enumerate(zip(y, frac, strict=True)):
                core("arrays", 1).geometry_many(kind, blend(kind, par_up, par_dn, f), np.array([yy]), out)
                idx = np.flatnonzero(sel)[j]
                a[idx], p[idx], t[idx] = out[:3, 0]
        return a, p, t

    @property
    def area(self) -> np.ndarray:
        """Flow area A at each station [length²]."""
        return self._section_rows()[0]

    @property
    def top_width(self) -> np.ndarray:
        """Water-surface width T at each station [length] (0 where a closed conduit runs just full)."""
        return self._section_rows()[2]

    @property
    def hydraulic_radius(self) -> np.ndarray:
        """Hydraulic radius R = A/P at each station [length]."""
        a, p, _ = self._section_rows()
        return a / p

    @property
    def shear_stress(self) -> np.ndarray:
        """Mean boundary shear stress tau = gamma R Sf at each station [N/m² in SI, lb/ft² in US].

        gamma = density x g, the unit weight of water (:func:`water_unit_weight`;
        density 1000 kg/m³ in SI, 1.94 slug/ft³ in US units). Sf is the friction
        slope, R the hydraulic radius (Chow 1959, *Open-Channel Hydraulics*,
        §7-5; Henderson 1966, §4.2).
        """
        return water_unit_weight(self.units) * self.hydraulic_radius * self.friction_slope

    @property
    def bank_height(self) -> np.ndarray:
        """Height of the bank or lining top above the bed at each station [length] (NaN where the
        segment gives none)."""
        h = np.array([np.nan if s.bank_height is None else s.bank_height for s in self.reach.segments])
        return h[self.segment]

    @property
    def freeboard(self) -> np.ndarray:
        """Bank or lining top above the water surface at each station [length]: negative where the
        water rises above it, NaN where the segment gives no ``bank_height``."""
        return self.bank_height - self.depth

    def _warn_overbank(self):
        fb = self.freeboard
        over = fb < 0
        if not np.any(over):
            return
        import warnings

        from .errors import GVFlowWarning

        L = self.units.length
        parts = []
        for k in np.unique(self.segment[over]):
            sel = over & (self.segment == k)
            parts.append(f"segment {k} from x = {self.x[sel].min():.2f} to {self.x[sel].max():.2f} {L} (up to "
                         f"{-fb[sel].min():.3f} {L} above its bank_height {self.reach.segments[k].bank_height:g} "
                         f"{L})")
        warnings.warn("the water surface rises above the bank or lining top in " + "; ".join(parts)
                      + ": the channel overflows there, and the profile beyond the banks is not modelled",
                      GVFlowWarning, stacklevel=4)

    def table(self) -> np.ndarray:
        """Station table as a NumPy structured array (one row per station).

        Columns: x, discharge, bed, depth, stage, velocity, froude, energy_coefficient,
        specific_energy, energy_grade, friction_slope, area, top_width, hydraulic_radius,
        shear_stress (gamma R Sf, see :attr:`shear_stress`), freeboard (to the
        segment's ``bank_height``, NaN where none), hydraulic_grade,
        head_above_crown (NaN in open sections), segment, regime, surcharged.
        """
        names = ["x", "discharge", "bed", "depth", "stage", "velocity", "froude", "energy_coefficient",
                 "specific_energy", "energy_grade", "friction_slope", "area", "top_width", "hydraulic_radius",
                 "shear_stress", "freeboard", "hydraulic_grade", "head_above_crown"]
        dt = [(n, "f8") for n in names] + [("segment", "i4"), ("regime", "U13"), ("surcharged", "?")]
        out = np.empty(self.x.size, dtype=dt)
        for n in names:
            out[n] = getattr(self, n)
        out["segment"] = self.segment
        out["regime"] = self.regime
        out["surcharged"] = self.surcharged
        return out

    def zone_table(self):
        """How the discharge divides among each station's roughness zones, as a pandas DataFrame.

        One row per station and zone (a geometric section is one zone): ``x``, ``segment``, ``zone``
        (0 from the left bank, looking downstream), ``area``, ``wetted_perimeter``, ``top_width``,
        ``conveyance`` and the zone's ``discharge`` Q_i = Q K_i/K and ``velocity`` Q_i/A_i (vertical
        division lines, subdivided conveyance: Chow 1959, *Open-Channel Hydraulics*, §6-7).
        """
        import pandas as pd

        from ._core.records import fluid
        from .friction import core_channel

        fl = fluid(self.units)
        parts = []
        for k, seg in enumerate(self.reach.segments):
            idx = np.flatnonzero(self.segment == k)
            if not idx.size:
                continue
            ch = core_channel(seg.section, seg.roughness)
            zones = getattr(seg.section, "zone_count", 1)
            block = np.empty((idx.size, zones, 6))
            kernel = core("arrays", idx.size * zones)
            for r, i in enumerate(idx):
                kernel.zone_table(ch, fl, float(self.discharge[i]), float(self.depth[i]), block[r])
            cols = {"x": np.repeat(self.x[idx], zones), "segment": np.full(idx.size * zones, k),
                    "zone": np.tile(np.arange(zones), idx.size)}
            for j, name in enumerate(("area", "wetted_perimeter", "top_width", "conveyance", "discharge",
                                      "velocity")):
                cols[name] = block[:, :, j].ravel()
            parts.append(pd.DataFrame(cols))
        return pd.concat(parts, ignore_index=True)

    def to_pandas(self):
        """Station table (:meth:`table`) as a pandas DataFrame."""
        import pandas as pd

        return pd.DataFrame(self.table())

    def plot(self, ax=None, **kwargs):
        """Long section of the reach (see :func:`gvflow.plot.plot_profile`); returns the Axes."""
        from .plot import plot_profile

        return plot_profile(self, ax=ax, **kwargs)

    # -- reports -------------------------------------------------------------------------
    def summary(self, stations: int = 12) -> str:
        """A readable multi-line report: segments, controls, jumps, profile types, station table."""
        u = self.units
        L = u.length
        lines = [f"Water-surface profile: Q = {self.reach.discharge:g} {u.discharge}, {len(self.reach.segments)} "
                 f"segment(s), {self.x[-1]:g} {L} long, method {self.method}"]
        lines.append("")
        lines.append(f"{'seg':>3} {'x from':>9} {'x to':>9} {'slope':>9} {'class':>10} {'yn':>8} {'yc':>8}")
        xb = self.reach.boundaries
        for k, s in enumerate(self.reach.segments):
            yn = "-" if not np.isfinite(self.normal_depths[k]) else f"{self.normal_depths[k]:.3f}"
            lines.append(f"{k:>3} {xb[k]:>9.2f} {xb[k + 1]:>9.2f} {s.slope:>9.5f} {self.slope_classes[k]:>10} "
                         f"{yn:>8} {self.critical_depths[k]:>8.3f}")
        lines.append("")
        lines.append("Profile types: " + (", ".join(f"{p.label} (seg {p.segment}, x {p.x_start:.1f}-{p.x_end:.1f})"
                                                   for p in self.pieces)
                                         or ("none (the conduits run full)" if self.surcharged.all()
                                             else "uniform flow only")))
        if self.surcharged.any():
            lines.append("Surcharge: " + ", ".join(f"segment {k} full over {v:.2f} {L}"
                                                   for k, v in enumerate(self.surcharged_lengths) if v > 0)
                         + f"; grade line up to {self.max_head_above_crown:.3f} {L} above a crown")
        if self.jumps:
            for jp in self.jumps:
                lines.append(f"Hydraulic jump at x = {jp.x:.2f} {L}: y1 = {jp.upstream_depth:.3f}, "
                             f"y2 = {jp.downstream_depth:.3f} {L}, F1 = {jp.froude:.2f} ({jp.kind}), "
                             f"head loss {jp.energy_loss:.3f} {L}, length about {jp.length:.1f} {L}")
        else:
            lines.append("Hydraulic jumps: none in the reach")
        for c in self.controls:
            if c.kind != "coefficient":
                lines.append(f"Control at x = {c.x:.2f} {L}: {c.kind}: {c.text}")
        used = [c for c in self.controls if c.kind == "coefficient"]
        if used:
            lines.append("")
            lines.append("Coefficients this result rests on (source; status - check any not confirmed):")
            lines += [f"  x = {c.x:.2f} {L}, {c.text}" for c in used]
        lines.append("")
        idx = np.unique(np.linspace(0, self.x.size - 1, min(stations, self.x.size)).round().astype(int))
        idx = np.union1d(idx, np.flatnonzero(np.diff(self.x) == 0))
        idx = np.union1d(idx, np.flatnonzero(np.diff(self.x) == 0) + 1)
        lines.append(f"{'x':>9} {'bed':>9} {'depth':>8} {'stage':>9} {'V':>7} {'Fr':>6} {'regime':>13}")
        for j in idx:
            lines.append(f"{self.x[j]:>9.2f} {self.bed[j]:>9.3f} {self.depth[j]:>8.3f} {self.stage[j]:>9.3f} "
                         f"{self.velocity[j]:>7.3f} {self.froude[j]:>6.2f} {self.regime[j]:>13}"
                         + (" full" if self.surcharged[j] else ""))
        lines.append(f"({L}, {u.velocity}; {self.x.size} stations in all"
                     + ("; full: the conduit runs full, depth is the pressure head and stage the grade line"
                        if self.surcharged.any() else "") + ")")
        return "\n".join(lines)

    def __repr__(self):
        jumps = ", ".join(f"x={j.x:.2f}" for j in self.jumps) or "none"
        return (f"<Profile Q={self.reach.discharge:g} {self.units.discharge}, {self.x.size} stations over "
                f"{self.x[-1]:g} {self.units.length}, types {self.profile_types}, jumps: {jumps}; "
                f"depth range {self.depth.min():.3f}-{self.depth.max():.3f} {self.units.length}>")


provide("profile", Profile.from_batch)  # Reach.solve returns a Profile without importing this layer

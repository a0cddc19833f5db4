"""Long-section plots of a reach: a solved profile, and a Monte Carlo envelope.

:func:`plot_profile` draws what an engineer puts in a report: the bed, the
water surface, the energy grade line, the normal- and critical-depth lines of
each segment, the hydraulic jumps with their upstream Froude numbers, the
type of each profile piece (M1, S2, ...), the segment boundaries, and the
structures at their true levels: a weir's crest, a culvert's barrel from
invert to crown with the road embankment above it, a gate's plate from its
lip up, a pool's level, a free overfall's brink, the crown of a closed
conduit and the bank or lining top of each segment that gives one.
:func:`plot_envelope` draws a Monte Carlo run's percentile band on the same
long section and says which inputs were uncertain.

Labels are placed by :func:`place_labels`, which measures each label with the
figure's renderer and moves it until no two labels overlap and every label
lies inside the axes.

Matplotlib is imported when a plot is drawn, not when gvflow is imported.
To write a figure without a display, pass an Axes of a
``matplotlib.figure.Figure`` or select the ``Agg`` backend.
"""

from __future__ import annotations

import textwrap
import warnings
from dataclasses import dataclass

import numpy as np

from ._labels import LABEL_GID, _label, place_labels
from .errors import GVFlowError, GVFlowWarning, InvalidInputError

__all__ = ["plot_profile", "plot_envelope", "place_labels", "uncertain_inputs", "LABEL_GID"]

# Plain matplotlib "tab" colours; one per quantity, used the same way in every figure.
_COLOURS = {
    "bed": "0.30",
    "ground": "0.86",
    "water": "tab:blue",
    "energy": "tab:orange",
    "normal": "tab:green",
    "critical": "tab:red",
    "jump": "tab:purple",
    "boundary": "0.55",
    "structure": "0.20",
    "fill": "0.55",
    "embankment": "0.78",
    "bank": "tab:brown",
    "crown": "0.15",
}

# ---------------------------------------------------------------------------
# structures and reach furniture at their true levels
# ---------------------------------------------------------------------------

@dataclass
class _Shape:
    """One drawn piece of a structure, in data coordinates.

    kind: "fill" (a filled polygon), "outline" (a polygon drawn as an edge on
    a white face), "line", "water" (a water body), "ground" (filled from the
    points down to the floor) or "drop" (a vertical edge from the point down
    to the floor). role names it (the artist's gid); label, anchored at
    ``anchor``, is written beside it.
    """

    kind: str
    xy: np.ndarray
    role: str
    label: str | None = None
    anchor: tuple[float, float] | None = None
    legend: str | None = None


def _segment_ends(reach):
    """x and bed elevation at both ends of each segment, shape (K, 2)."""
    xb = np.asarray(reach.boundaries)
    nseg = len(reach.segments)
    xs = np.column_stack([xb[:-1], xb[1:]])
    zs = reach.bed_elevation(xs, np.repeat(np.arange(nseg), 2).reshape(-1, 2))
    return xs, zs


def _barrel_name(barrel, L):
    count = f"{barrel.barrels} x " if barrel.barrels > 1 else ""
    if barrel.shape == "circular":
        return f"{count}pipe D {barrel.diameter:.2f} {L}"
    return f"{count}box {barrel.span:.2f} x {barrel.rise:.2f} {L}"


def _reach_shapes(reach, x, bed, water_top, head=None):
    """Every structure and reach line to draw, at its true elevation.

    Parameters
    ----------
    reach : Reach
    x, bed : ndarray
        Stations and bed elevations [length].
    water_top : ndarray
        Highest water level drawn at each station [length] (the stage, or
        the top of an envelope); it sets how far up a gate's plate reaches.
    head : float, optional
        Level of the water behind an upstream gate [length]; by default the
        highest water of the first segment.
    """
    from .controls import Culvert, FreeOverfall, Pool, SluiceGate, StageDischargeTable, Weir
    from .sections import Surveyed

    L = reach.resolved_units.length
    x = np.asarray(x, float)
    bed = np.asarray(bed, float)
    water_top = np.asarray(water_top, float)
    length = float(reach.boundaries[-1])
    margin = 0.03 * length
    xs, zs = _segment_ends(reach)
    shapes = []

    # lines along each segment: the bank or lining top, the crown of a closed conduit
    for k, seg in enumerate(reach.segments):
        bank = seg.bank_height
        if bank is None and isinstance(seg.section, Surveyed):
            bank = seg.section.bank_depth
        if bank is not None:
            shapes.append(_Shape("line", np.column_stack([xs[k], zs[k] + bank]), "bank top",
                                 legend="bank or lining top"))
        if seg.section.closed:
            shapes.append(_Shape("line", np.column_stack([xs[k], zs[k] + seg.section.max_depth]), "conduit crown",
                                 legend="conduit crown"))

    # gates at segment heads: a plate from the lip up past the water it holds
    for k, seg in enumerate(reach.segments):
        if seg.gate is None:
            continue
        xk = float(xs[k, 0])
        z = float(zs[k, 0])
        at = np.isclose(x, xk)
        held = float(np.max(water_top[at])) if np.any(at) else z + seg.gate.opening
        shapes.extend(_gate(xk, z, seg.gate.opening, held, length, L))

    # upstream end
    x0, z0 = float(xs[0, 0]), float(zs[0, 0])
    up = reach.upstream
    if isinstance(up, SluiceGate):
        first = (x >= x0) & (x <= xs[0, 1])
        held = float(np.max(water_top[first])) if head is None else float(head)
        shapes.append(_Shape("ground", np.array([[x0 - margin, z0], [x0, z0]]), "ground"))
        shapes.extend(_gate(x0, z0, up.opening, held, length, L))
    elif isinstance(up, Pool):
        shapes.append(_Shape("ground", np.array([[x0 - margin, z0], [x0, z0]]), "ground"))
        shapes.append(_Shape("water", np.array([[x0 - margin, z0], [x0 - margin, up.level], [x0, up.level],
                                                [x0, z0]]), "pool", f"pool level {up.level:.2f} {L}",
                             (x0 - 0.5 * margin, up.level)))

    # downstream end
    xe, ze = float(xs[-1, 1]), float(zs[-1, 1])
    down = reach.downstream
    if isinstance(down, Weir):
        thick = (0.02 if down.formula == "broad_crested" else 0.006) * length
        zc = down.crest_elevation(ze)
        shapes.append(_Shape("fill", np.array([[xe, ze], [xe, zc], [xe + thick, zc], [xe + thick, ze]]), "weir",
                             f"weir crest {zc:.2f} {L}", (xe + 0.5 * thick, zc)))
        shapes.append(_Shape("ground", np.array([[xe, ze], [xe + thick + margin, ze]]), "ground"))
        if down.tailwater_level is not None:
            tw = down.tailwater_level
            if tw > ze:
                shapes.append(_Shape("water", np.array([[xe + thick, ze], [xe + thick, tw], [xe + thick + margin, tw],
                                                        [xe + thick + margin, ze]]), "tailwater",
                                     f"tailwater {tw:.2f} {L}", (xe + thick + 0.5 * margin, tw)))
    elif isinstance(down, Culvert):
        b = down.barrel
        zi = ze + down.invert_offset
        lb = float(b.length)
        zo = zi - b.slope * lb
        rise = float(b.height)
        shapes.append(_Shape("ground", np.array([[xe, ze], [xe, min(ze, zi)], [xe + lb, zo],
                                                 [xe + lb + margin, zo]]), "ground"))
        shapes.append(_Shape("outline", np.array([[xe, zi], [xe + lb, zo], [xe + lb, zo + rise], [xe, zi + rise]]),
                             "culvert barrel", f"culvert {_barrel_name(b, L)}\ninvert {zi:.2f}, crown "
                             f"{zi + rise:.2f} {L}", (xe + 0.5 * lb, zi + 0.5 * rise - 0.5 * b.slope * lb)))
        if down.road is not None:
            zr = zi + down.road.low_point
            low = " (low point)" if down.road.offsets is not None else ""
            if zr > zi + rise:
                shapes.append(_Shape("fill", np.array([[xe, zi + rise], [xe, zr], [xe + lb, zr],
                                                       [xe + lb, zo + rise]]), "embankment"))
            shapes.append(_Shape("line", np.array([[xe, zr], [xe + lb, zr]]), "road crest",
                                 f"road crest {zr:.2f} {L}{low}", (xe + 0.5 * lb, zr)))
        if down.tailwater is not None:
            tw = zo + down.tailwater
            shapes.append(_Shape("water", np.array([[xe + lb, zo], [xe + lb, tw], [xe + lb + margin, tw],
                                                    [xe + lb + margin, zo]]), "tailwater",
                                 f"tailwater {tw:.2f} {L}", (xe + lb + 0.5 * margin, tw)))
    elif isinstance(down, FreeOverfall):
        shapes.append(_Shape("drop", np.array([[xe, ze]]), "brink", "free overfall", (xe, ze)))
        shapes.append(_Shape("ground", np.array([[xe, -np.inf], [xe + margin, -np.inf]]), "ground"))
    elif isinstance(down, StageDischargeTable):
        zw = float(water_top[-1])
        shapes.append(_Shape("line", np.array([[xe, zw], [xe + margin, zw]]), "rating",
                             "stage from the rating table", (xe + 0.5 * margin, zw)))
        shapes.append(_Shape("ground", np.array([[xe, ze], [xe + margin, ze]]), "ground"))
    return shapes


def _gate(xg, z_bed, opening, held, length, L):
    """A gate's plate: from the lip (bed + opening) to a little above the water it holds."""
    lip = z_bed + opening
    top = max(held, lip) + 0.15 * max(held - z_bed, opening)
    t = 0.004 * length
    return [_Shape("fill", np.array([[xg - t, lip], [xg - t, top], [xg + t, top], [xg + t, lip]]), "gate",
                   f"gate, lip {lip:.2f} {L}", (xg, top))]


def _shape_extent(shapes):
    """(x min, x max, y max) of the shapes, None where no shape bounds it."""
    pts = [s.xy for s in shapes if s.kind != "drop"]
    if not pts:
        return None, None, None
    allp = np.vstack(pts)
    fin = np.isfinite(allp[:, 1])
    return float(allp[:, 0].min()), float(allp[:, 0].max()), float(allp[fin, 1].max()) if np.any(fin) else None


def _draw_shapes(ax, shapes, floor, *, labels=True):
    """Draw the shapes; returns the label annotations written."""
    from matplotlib.patches import Polygon

    written, legend_done = [], set()
    for s in shapes:
        xy = s.xy
        legend = s.legend if s.legend not in legend_done else None
        legend_done.add(s.legend)
        if s.kind == "ground":
            top = np.where(np.isfinite(xy[:, 1]), xy[:, 1], floor)
            ax.fill_between(xy[:, 0], top, floor, color=_COLOURS["ground"], linewidth=0, zorder=1, gid=s.role)
            if np.all(np.isfinite(xy[:, 1])):
                ax.plot(xy[:, 0], xy[:, 1], color=_COLOURS["bed"], linewidth=1.6, zorder=4, gid=s.role)
        elif s.kind == "fill":
            face = _COLOURS["embankment"] if s.role == "embankment" else _COLOURS["fill"]
            ax.add_patch(Polygon(xy, closed=True, facecolor=face, edgecolor=_COLOURS["structure"], linewidth=1.0,
                                 zorder=6, gid=s.role))
        elif s.kind == "outline":
            ax.add_patch(Polygon(xy, closed=True, facecolor="white", edgecolor=_COLOURS["structure"], linewidth=1.6,
                                 zorder=6, gid=s.role))
        elif s.kind == "water":
            ax.add_patch(Polygon(xy, closed=True, facecolor=_COLOURS["water"], alpha=0.18, linewidth=0, zorder=2,
                                 gid=s.role))
            ax.plot(xy[1:3, 0], xy[1:3, 1], color=_COLOURS["water"], linewidth=1.8, zorder=5, gid=s.role)
        elif s.kind == "drop":
            ax.plot([xy[0, 0], xy[0, 0]], [xy[0, 1], floor], color=_COLOURS["structure"], linewidth=2.0, zorder=6,
                    gid=s.role)
        elif s.role == "road crest":
            ax.plot(xy[:, 0], xy[:, 1], color=_COLOURS["structure"], linewidth=3.0, solid_capstyle="butt", zorder=7,
                    gid=s.role)
        elif s.role == "bank top":
            ax.plot(xy[:, 0], xy[:, 1], color=_COLOURS["bank"], linewidth=1.3, linestyle=(0, (8, 2, 2, 2)),
                    zorder=3, gid=s.role, label=legend)
        elif s.role == "conduit crown":
            ax.plot(xy[:, 0], xy[:, 1], color=_COLOURS["crown"], linewidth=1.6, zorder=4, gid=s.role, label=legend)
        else:  # tailwater and rating levels
            ax.plot(xy[:, 0], xy[:, 1], color=_COLOURS["water"], linewidth=1.4, zorder=5, gid=s.role)
        if labels and s.label:
            written.append(_label(ax, s.label, s.anchor, color=_COLOURS["structure"], arrow_colour="0.4"))
    return written


def _frame(ax, reach, x, bed, shapes, top, *, labels=True):
    """Ground, bed, segment boundaries, structures and limits of a long section; returns the floor."""
    xb = np.asarray(reach.boundaries)
    x_lo, x_hi, y_hi = _shape_extent(shapes)
    tops = [top] + ([y_hi] if y_hi is not None else [])
    top = float(max(tops))
    low = float(np.min(bed))
    span = max(top - low, 1e-6)
    floor = low - 0.10 * span
    ax.fill_between(x, bed, floor, color=_COLOURS["ground"], linewidth=0, zorder=1)
    ax.plot(x, bed, color=_COLOURS["bed"], linewidth=1.6, label="bed", zorder=4)
    for xk in xb[1:-1]:
        ax.axvline(xk, color=_COLOURS["boundary"], linewidth=0.8, linestyle=":", zorder=0)
    _draw_shapes(ax, shapes, floor, labels=labels)
    ax.set_xlim(min(xb[0], x_lo if x_lo is not None else xb[0]), max(xb[-1], x_hi if x_hi is not None else xb[-1]))
    ax.set_ylim(floor, top + 0.25 * span)
    ax.grid(True, color="0.9", linewidth=0.6, zorder=0)
    ax.set_axisbelow(True)
    return floor, span


def _end_depths(profile, k):
    """Normal and critical depth of segment k at its two ends (two values each): one value at both ends of
    a prismatic segment; a segment whose section or discharge changes along it has its own at each end,
    drawn straight between them (an approximation of how they vary)."""
    seg = profile.reach.segments[k]
    yn_end, yc_end = float(profile.normal_depths[k]), float(profile.critical_depths[k])
    if not seg.changes:
        return np.array([yn_end, yn_end]), np.array([yc_end, yc_end])
    from .uniform import critical_depth, normal_depth

    q_head = float(profile.discharge[np.flatnonzero(profile.segment == k)[0]])
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", GVFlowWarning)  # (several critical depths: the least-energy one)
        yc_head = float(critical_depth(seg.section, q_head, units=profile.units))
        try:
            yn_head = float(normal_depth(seg.section, q_head, seg.slope, seg.roughness, units=profile.units))
        except GVFlowError:
            yn_head = np.nan  # no uniform flow (a level or adverse bed)
    return np.array([yn_head, yn_end]), np.array([yc_head, yc_end])


def _segment_names(ax, reach, slope_classes):
    xb = np.asarray(reach.boundaries)
    for k, seg in enumerate(reach.segments):
        name = seg.name or f"segment {k}"
        _label(ax, f"{name}\n{slope_classes[k]}, S0 = {seg.slope:.4g}", (0.5 * (xb[k] + xb[k + 1]), 0.0),
               xycoords=ax.get_xaxis_transform(), offset=(0.0, 3.0), arrow_colour=None, fontsize=7.5, color="0.25")


def _legend(ax):
    """The legend below the axes, where it covers neither the profile nor the labels."""
    handles, names = ax.get_legend_handles_labels()
    ncol = min(len(names), 4) or 1
    ax.legend(handles, names, loc="upper center", bbox_to_anchor=(0.5, -0.13), ncol=ncol, fontsize=8,
              frameon=False)


# ---------------------------------------------------------------------------
# the long section of a solved profile
# ---------------------------------------------------------------------------

def plot_profile(profile, ax=None, *, show_energy: bool = True, show_normal: bool = True,
                 show_critical: bool = True, show_labels: bool = True, show_structures: bool = True,
                 title: str | None = None):
    """Draw the long section of a solved reach.

    Parameters
    ----------
    profile : Profile
        Result of :meth:`gvflow.Reach.solve`.
    ax : matplotlib.axes.Axes, optional
        Axes to draw on; a new figure (10 x 5.4 in) is made when omitted.
    show_energy : bool
        Draw the energy grade line (stage plus velocity head).
    show_normal : bool
        Draw bed + normal depth over each segment that has a normal depth
        (none on horizontal or adverse segments).
    show_critical : bool
        Draw bed + critical depth over each segment.
    show_labels : bool
        Label each profile piece with its type, mark each jump with its
        upstream Froude number, label the structures with their levels and
        name the segments along the bottom; the labels are arranged by
        :func:`place_labels`.
    show_structures : bool
        Draw the structures and lines at their true elevations: a weir's
        crest, a culvert's barrel (invert to crown, over its length beyond
        the reach end) with the road crest and embankment above it, a gate's
        plate from its lip up, a pool's level, a free overfall's brink, the
        crown of a closed conduit and each segment's bank or lining top
        (``bank_height``, or the lower end point of a surveyed section).
    title : str, optional
        Figure title; by default the reach name, or the discharge.

    Returns
    -------
    matplotlib.axes.Axes
        The Axes drawn on. The legend sits below the axes.

    Examples
    --------
    >>> import matplotlib
    >>> matplotlib.use("Agg")
    >>> import gvflow as gv
    >>> reach = gv.Reach(segments=[gv.Segment(length=400.0, slope=0.001, section=gv.Rectangular(width=3.0),
    ...                                       roughness=0.015)], discharge=5.0, downstream=gv.FixedDepth(1.8))
    >>> ax = reach.solve().plot()
    >>> ax.get_xlabel()
    'Distance from upstream end [m]'
    """
    if ax is None:
        import matplotlib.pyplot as plt

        _, ax = plt.subplots(figsize=(10.0, 5.4), layout="constrained")

    reach = profile.reach
    units = profile.units
    L = units.length
    x = np.asarray(profile.x)
    bed = np.asarray(profile.bed)
    stage = np.asarray(profile.stage)
    energy = np.asarray(profile.energy_grade)
    nseg = len(reach.segments)
    xs, zb = _segment_ends(reach)

    tops = [stage.max()]
    if show_energy:
        tops.append(np.max(energy))
    if show_normal and np.any(np.isfinite(profile.normal_depths)):
        tops.append(np.nanmax(zb + np.asarray(profile.normal_depths)[:, None]))
    if show_critical:
        tops.append(np.max(zb + np.asarray(profile.critical_depths)[:, None]))
    shapes = _reach_shapes(reach, x, bed, stage, head=float(energy[0])) if show_structures else []
    floor, span = _frame(ax, reach, x, bed, shapes, float(max(tops)), labels=show_labels)

    ax.fill_between(x, bed, stage, color=_COLOURS["water"], alpha=0.18, linewidth=0, zorder=2)
    ax.plot(x, stage, color=_COLOURS["water"], linewidth=1.8, label="water surface", zorder=5)
    if show_energy:
        ax.plot(x, energy, color=_COLOURS["energy"], linewidth=1.1, label="energy grade line", zorder=4)

    first_n = first_c = True
    for k in range(nseg):
        yn, yc = _end_depths(profile, k)
        if show_normal and np.all(np.isfinite(yn)):
            ax.plot(xs[k], zb[k] + yn, color=_COLOURS["normal"], linestyle=(0, (6, 3)), linewidth=1.0,
                    label="normal depth" if first_n else None, zorder=3)
            first_n = False
        if show_critical:
            ax.plot(xs[k], zb[k] + yc, color=_COLOURS["critical"],
                    linestyle=(0, (2, 2)), linewidth=1.0, label="critical depth" if first_c else None, zorder=3)
            first_c = False

    for i, jp in enumerate(profile.jumps):
        z = float(reach.bed_elevation(jp.x, jp.segment))
        ax.plot([jp.x, jp.x], [z + jp.upstream_depth, z + jp.downstream_depth], color=_COLOURS["jump"],
                linewidth=3.0, solid_capstyle="butt", label="hydraulic jump" if i == 0 else None, zorder=6)
        if show_labels:
            _label(ax, f"jump\nF1 = {jp.froude:.2f}", (jp.x, z + jp.downstream_depth), offset=(0.0, 14.0),
                   color=_COLOURS["jump"], arrow_colour=_COLOURS["jump"])

    if show_labels:
        _label_pieces(ax, profile)
        _segment_names(ax, reach, profile.slope_classes)

    ax.set_xlabel(f"Distance from upstream end [{L}]")
    ax.set_ylabel(f"Elevation [{L}]")
    if title is None:
        title = reach.name or f"Water-surface profile, Q = {reach.discharge:g} {units.discharge}"
    ax.set_title(title)
    _legend(ax)
    if show_labels:
        place_labels(ax)
    return ax


def _label_pieces(ax, profile):
    """Write each piece's type just above the water surface at its middle."""
    x = np.asarray(profile.x)
    stage = np.asarray(profile.stage)
    for piece in profile.pieces:
        xm = 0.5 * (piece.x_start + piece.x_end)
        inside = ((x >= piece.x_start) & (x <= piece.x_end) & (profile.segment == piece.segment)
                  & (profile.regime == piece.regime))
        if np.count_nonzero(inside) > 1:
            ym = float(np.interp(xm, x[inside], stage[inside]))
        else:
            ym = float(stage[np.argmin(np.abs(x - xm))])
        _label(ax, piece.label, (xm, ym), offset=(0.0, 10.0), fontsize=9, fontweight="bold", color="0.15")


# ---------------------------------------------------------------------------
# Monte Carlo envelope
# ---------------------------------------------------------------------------

_COEFFICIENT_NAMES = {"manning": "Manning's n", "chezy": "Chezy C", "darcy_weisbach": "sand roughness ks"}


def _range_text(u, unit=""):
    unit = f" {unit}" if unit else ""
    if u.distribution == "uniform":
        return f"{u.minimum:g} to {u.maximum:g}{unit} (uniform)"
    return f"{u.minimum:g} to {u.maximum:g}{unit} (triangular, most likely {u.normal:g})"


def _vary_name(name: str, reach) -> str:
    """A readable name for a ``vary`` path ("segments.0.slope" -> "bed slope of segment 0")."""
    head, _, rest = name.partition(".")
    if head in ("upstream", "downstream"):
        return f"{head} control" + (f" {rest.replace('.', ' ').replace('_', ' ')}" if rest else "")
    if head == "segments":
        k, _, what = rest.partition(".")
        seg = reach.segments[int(k)]
        label = seg.name or f"segment {k}"
        if what.startswith("roughness."):  # a zone of a surveyed section
            return f"roughness of zone {what.partition('.')[2]} of {label}"
        return {"slope": f"bed slope of {label}"}.get(what, f"{what.replace('.', ' ')} of {label}")
    return name


def uncertain_inputs(mc) -> str:
    """One sentence naming what a Monte Carlo run sampled and over which ranges."""
    reach = mc.sweep.reach
    units = mc.units
    parts = []
    if mc.discharge_range is not None:
        parts.append(f"discharge {_range_text(mc.discharge_range, units.discharge)}")
    specs = mc.roughness_ranges or []
    sampled = [(k, s) for k, s in enumerate(specs) if s is not None]
    if sampled:
        def coef(k):
            law = reach.segments[k].roughness.law
            return _COEFFICIENT_NAMES.get(law, law) + (f" [{units.length}]" if law == "darcy_weisbach" else "")

        if len(sampled) == len(reach.segments) and len({s for _, s in sampled}) == 1:
            k, s = sampled[0]
            text = f"{coef(k)} {_range_text(s)} in every segment"
        else:
            text = "; ".join(f"{coef(k)} of {reach.segments[k].name or f'segment {k}'} {_range_text(s)}"
                             for k, s in sampled)
        if len(sampled) > 1:
            text += " (one draw for all segments)" if mc.correlated else " (drawn independently per segment)"
        parts.append(text)
    for name, spec in (getattr(mc, "vary_ranges", None) or {}).items():
        parts.append(f"{_vary_name(name, reach)} {_range_text(spec)}")
    if mc.discharge_range is None:
        parts.append(f"discharge fixed at {reach.discharge:g} {units.discharge}")
    return "Uncertain: " + "; ".join(parts)


def plot_envelope(mc, ax=None, *, quantity: str = "stage", jumps: bool = True, show_structures: bool = True,
                  title: str | None = None):
    """Draw a Monte Carlo run's percentile envelope on the reach's long section.

    The band spans the lowest to the highest percentile of the run, the line
    is the one nearest the median; a line under the title names the
    uncertain inputs and their ranges. With ``quantity="stage"`` the section
    is drawn as in :func:`plot_profile` (ground, bed, segment boundaries,
    bank tops, conduit crowns and structures at their true levels); with
    ``"depth"`` the depths are drawn over a zero bed, with the bank and
    crown heights. With ``jumps`` the range of the jump's location (lowest to
    highest percentile) is shaded and each sample's jump marked on the axis.

    Parameters
    ----------
    mc : MonteCarloResult
    ax : matplotlib.axes.Axes, optional
        Axes to draw on; a new figure (10 x 5.4 in) is made when omitted.
    quantity : {"stage", "depth"}
    jumps : bool
    show_structures : bool
    title : str, optional
        First title line; by default the reach name and the sample count.

    Returns
    -------
    matplotlib.axes.Axes
    """
    if quantity not in ("stage", "depth"):
        raise InvalidInputError(f"quantity must be 'stage' or 'depth'; got {quantity!r}")
    if ax is None:
        import matplotlib.pyplot as plt

        _, ax = plt.subplots(figsize=(10.0, 5.4), layout="constrained")
    reach = mc.sweep.reach
    L = mc.units.length
    x = np.asarray(mc.x)
    p = mc.percentiles
    lo, hi = int(np.argmin(p)), int(np.argmax(p))
    mid = int(np.argmin(np.abs(p - 50.0)))
    bed_range = None
    if quantity == "stage":
        env = mc.stage_envelope
        bed = np.asarray(mc.bed)
        if bed.ndim == 2:  # a sampled bed slope: the frame follows the lowest bed, the range is shaded
            bed_range = bed.min(axis=0), bed.max(axis=0)
            bed = bed_range[0]
        shapes = _reach_shapes(reach, x, bed, env[hi]) if show_structures else []
    else:
        env = mc.depth_envelope
        bed = np.zeros_like(x)
        shapes = []
        if show_structures:
            xs, _ = _segment_ends(reach)
            for k, seg in enumerate(reach.segments):
                for h, role, legend in ((seg.bank_height, "bank top", "bank or lining top"),
                                        (seg.section.max_depth if seg.section.closed else None, "conduit crown",
                                         "conduit crown")):
                    if h is not None:
                        shapes.append(_Shape("line", np.column_stack([xs[k], [h, h]]), role, legend=legend))
    floor, span = _frame(ax, reach, x, bed, shapes, float(np.max(env[hi])))
    if bed_range is not None:
        ax.fill_between(x, *bed_range, color=_COLOURS["bed"], alpha=0.35, linewidth=0, zorder=3,
                        label="bed (range over the samples)")
    ax.fill_between(x, bed, env[lo], color=_COLOURS["water"], alpha=0.10, linewidth=0, zorder=2)
    ax.fill_between(x, env[lo], env[hi], color=_COLOURS["water"], alpha=0.35, linewidth=0, zorder=2,
                    label=f"{p[lo]:g}th to {p[hi]:g}th percentile")
    ax.plot(x, env[mid], color=_COLOURS["water"], linewidth=1.8, zorder=5, label=f"{p[mid]:g}th percentile")
    if jumps and np.any(np.isfinite(mc.jump_x)):
        j = mc.jump_x_percentiles
        ax.axvspan(j[lo], j[hi], color=_COLOURS["jump"], alpha=0.10, linewidth=0, zorder=0,
                   label=f"jump location, {p[lo]:g}th to {p[hi]:g}th percentile ({mc.jump_probability:.0%} of "
                         "samples jump)")
        where = mc.jump_x[np.isfinite(mc.jump_x)]
        ax.plot(where, np.full(where.size, 0.0), "|", color=_COLOURS["jump"], ms=8, alpha=0.3,
                transform=ax.get_xaxis_transform(), zorder=3)
    _segment_names(ax, reach, _envelope_slope_classes(mc))
    ax.set_xlabel(f"Distance from upstream end [{L}]")
    ax.set_ylabel(f"Elevation [{L}]" if quantity == "stage" else f"Depth [{L}]")
    head = title if title is not None else (f"{reach.name + ': ' if reach.name else ''}{mc.samples} samples, "
                                            f"{'water-surface' if quantity == 'stage' else 'depth'} envelope")
    note = textwrap.fill(uncertain_inputs(mc), width=120)
    ax.set_title(f"{head}\n{note}", fontsize=9.5)
    _legend(ax)
    place_labels(ax)
    return ax


def _envelope_slope_classes(mc):
    """Slope class of each segment when every sample agrees, else the classes seen ("mild/steep")."""
    classes = np.atleast_2d(mc.sweep.slope_classes)
    out = []
    for k in range(classes.shape[1]):
        seen = list(dict.fromkeys(classes[:, k].tolist()))
        out.append("/".join(seen))
    return out

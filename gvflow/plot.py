"""Long-section plot of a solved reach.

:func:`plot_profile` draws what an engineer puts in a report: the bed, the
water surface, the energy grade line, the normal- and critical-depth lines of
each segment, the hydraulic jumps with their upstream Froude numbers, the
type of each profile piece (M1, S2, ...) and the segment boundaries, with the
units of the reach on the axes.

Matplotlib is imported when a plot is drawn, not when gvflow is imported.
To write a figure without a display, pass an Axes of a
``matplotlib.figure.Figure`` or select the ``Agg`` backend.
"""

from __future__ import annotations

import numpy as np

__all__ = ["plot_profile"]

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
}
_TEXT_BOX = {"boxstyle": "round,pad=0.15", "facecolor": "white", "edgecolor": "none", "alpha": 0.85}


def plot_profile(profile, ax=None, *, show_energy: bool = True, show_normal: bool = True,
                 show_critical: bool = True, show_labels: bool = True, title: str | None = None):
    """Draw the long section of a solved reach.

    Parameters
    ----------
    profile : Profile
        Result of :meth:`gvflow.Reach.solve`.
    ax : matplotlib.axes.Axes, optional
        Axes to draw on; a new figure (10 x 4.8 in) is made when omitted.
    show_energy : bool
        Draw the energy grade line (stage plus velocity head).
    show_normal : bool
        Draw bed + normal depth over each segment that has a normal depth
        (none on horizontal or adverse segments).
    show_critical : bool
        Draw bed + critical depth over each segment.
    show_labels : bool
        Label each profile piece with its type, mark each jump with its
        upstream Froude number and name the segments along the bottom.
    title : str, optional
        Figure title; by default the reach name, or the discharge.

    Returns
    -------
    matplotlib.axes.Axes
        The Axes drawn on.

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

        _, ax = plt.subplots(figsize=(10.0, 4.8), layout="constrained")

    reach = profile.reach
    units = profile.units
    L = units.length
    x = np.asarray(profile.x)
    bed = np.asarray(profile.bed)
    stage = np.asarray(profile.stage)
    xb = np.asarray(reach.boundaries)
    nseg = len(reach.segments)
    zb = reach.bed_elevation(np.column_stack([xb[:-1], xb[1:]]), np.repeat(np.arange(nseg), 2).reshape(-1, 2))

    # vertical extent: everything drawn, plus room for labels above and ground below
    tops = [stage.max()]
    if show_energy:
        tops.append(np.max(profile.energy_grade))
    if show_normal and np.any(np.isfinite(profile.normal_depths)):
        tops.append(np.nanmax(zb + np.asarray(profile.normal_depths)[:, None]))
    if show_critical:
        tops.append(np.max(zb + np.asarray(profile.critical_depths)[:, None]))
    marks = _structure_marks(profile)
    tops += [mark[2] for mark in marks]
    top = float(max(tops))
    low = float(bed.min())
    span = max(top - low, 1e-6)
    floor = low - 0.10 * span

    ax.fill_between(x, bed, floor, color=_COLOURS["ground"], linewidth=0, zorder=1)
    ax.fill_between(x, bed, stage, color=_COLOURS["water"], alpha=0.18, linewidth=0, zorder=2)
    ax.plot(x, bed, color=_COLOURS["bed"], linewidth=1.6, label="bed", zorder=4)
    ax.plot(x, stage, color=_COLOURS["water"], linewidth=1.8, label="water surface", zorder=5)
    if show_energy:
        ax.plot(x, profile.energy_grade, color=_COLOURS["energy"], linewidth=1.1, label="energy grade line",
                zorder=4)

    first_n = first_c = True
    for k in range(nseg):
        xs = xb[k:k + 2]
        yn = float(profile.normal_depths[k])
        if show_normal and np.isfinite(yn):
            ax.plot(xs, zb[k] + yn, color=_COLOURS["normal"], linestyle=(0, (6, 3)), linewidth=1.0,
                    label="normal depth" if first_n else None, zorder=3)
            first_n = False
        if show_critical:
            ax.plot(xs, zb[k] + float(profile.critical_depths[k]), color=_COLOURS["critical"],
                    linestyle=(0, (2, 2)), linewidth=1.0, label="critical depth" if first_c else None, zorder=3)
            first_c = False

    for xk in xb[1:-1]:
        ax.axvline(xk, color=_COLOURS["boundary"], linewidth=0.8, linestyle=":", zorder=0)

    for i, jp in enumerate(profile.jumps):
        z = float(reach.bed_elevation(jp.x, jp.segment))
        ax.plot([jp.x, jp.x], [z + jp.upstream_depth, z + jp.downstream_depth], color=_COLOURS["jump"],
                linewidth=3.0, solid_capstyle="butt", label="hydraulic jump" if i == 0 else None, zorder=6)
        if show_labels:
            top_here = z + jp.downstream_depth
            ax.annotate(f"jump\nF1 = {jp.froude:.2f}", xy=(jp.x, top_here), xytext=(jp.x, top_here + 0.14 * span),
                        fontsize=8, color=_COLOURS["jump"], ha="center", va="bottom", zorder=7,
                        arrowprops={"arrowstyle": "-", "color": _COLOURS["jump"], "linewidth": 0.8},
                        bbox=_TEXT_BOX)

    for i, (label, xs, z_top, z_bed, ha) in enumerate(marks):
        ax.plot([xs, xs], [z_bed, z_top], color=_COLOURS["structure"], linewidth=4.0, solid_capstyle="butt",
                label="structure" if i == 0 else None, zorder=6, clip_on=False)
        if show_labels:
            ax.annotate(label, xy=(xs, z_top), xytext=(xs, z_top + 0.06 * span), fontsize=8, ha=ha, va="bottom",
                        color=_COLOURS["structure"], zorder=7, bbox=_TEXT_BOX)

    if show_labels:
        _label_pieces(ax, profile, span)
        for k, seg in enumerate(reach.segments):
            name = seg.name or f"segment {k}"
            ax.text(0.5 * (xb[k] + xb[k + 1]), 0.02, f"{name}\n{profile.slope_classes[k]}, S0 = {seg.slope:g}",
                    transform=ax.get_xaxis_transform(), ha="center", va="bottom", fontsize=7.5, color="0.25",
                    zorder=7)

    ax.set_xlim(xb[0], xb[-1])
    ax.set_ylim(floor, top + 0.22 * span)
    ax.set_xlabel(f"Distance from upstream end [{L}]")
    ax.set_ylabel(f"Elevation [{L}]")
    if title is None:
        title = reach.name or f"Water-surface profile, Q = {reach.discharge:g} {units.discharge}"
    ax.set_title(title)
    ax.grid(True, color="0.9", linewidth=0.6, zorder=0)
    ax.set_axisbelow(True)
    ax.legend(loc="best", fontsize=8, framealpha=0.92)
    return ax


def _structure_marks(profile):
    """(label, x, top, bottom, text alignment) of each structure to draw as a bar.

    End controls mark themselves (Control.plot_mark) from the bed up; a gate
    between segments is drawn from its lip up to above the water it holds.
    """
    marks = []
    for ctrl, i, ha in ((profile.reach.upstream, 0, "left"), (profile.reach.downstream, -1, "right")):
        mark = None if ctrl is None else ctrl.plot_mark(float(profile.bed[i]))
        if mark is not None:
            marks.append((mark[0], float(profile.x[i]), float(mark[1]), float(profile.bed[i]), ha))
    xb = profile.reach.boundaries
    for k, seg in enumerate(profile.reach.segments):
        if seg.gate is not None:
            at = np.isclose(profile.x, xb[k])
            z_bed = float(profile.bed[at][0])
            held = float(np.max(profile.stage[at]))
            marks.append(("gate", float(xb[k]), held + 0.15 * (held - z_bed), z_bed + seg.gate.opening, "center"))
    return marks


def _label_pieces(ax, profile, span):
    """Write each piece's type just above the water surface at its middle; stagger labels that crowd."""
    x = np.asarray(profile.x)
    stage = np.asarray(profile.stage)
    length = float(x[-1] - x[0]) or 1.0
    placed = []  # (x, level) of the labels written so far
    for piece in profile.pieces:
        xm = 0.5 * (piece.x_start + piece.x_end)
        inside = ((x >= piece.x_start) & (x <= piece.x_end) & (profile.segment == piece.segment)
                  & (profile.regime == piece.regime))
        if np.count_nonzero(inside) > 1:
            ym = float(np.interp(xm, x[inside], stage[inside]))
        else:
            ym = float(stage[np.argmin(np.abs(x - xm))])
        near = {lv for xp, lv in placed if abs(xp - xm) < 0.045 * length}
        level = 0
        while level in near:
            level += 1
        placed.append((xm, level))
        ax.annotate(piece.label, xy=(xm, ym), xytext=(xm, ym + (0.06 + 0.07 * level) * span), ha="center",
                    va="bottom", fontsize=9, fontweight="bold", color="0.15", zorder=7,
                    arrowprops={"arrowstyle": "-", "color": "0.5", "linewidth": 0.6}, bbox=_TEXT_BOX)

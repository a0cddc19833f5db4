"""Cross-section plot: the ground, the roughness zones, the water level and the energy level.

Matplotlib is imported when a plot is drawn, not when gvflow is imported.
"""

from __future__ import annotations

import math

import numpy as np

from ._labels import _label, place_labels
from .plot import _COLOURS
from .uniform import specific_energy
from .units import resolve_units

__all__ = ["plot_section"]


def _outline(section, top: float):
    """Ground points (offset, elevation above the invert) of a section up to height ``top``."""
    if hasattr(section, "offset"):
        z = np.asarray(section.elevation, dtype=float)
        return np.asarray(section.offset, dtype=float), z - z.min()
    if section.closed:
        d = section.max_depth
        t = np.linspace(0.0, 2.0 * math.pi, 121)
        return 0.5 * d * np.sin(t), 0.5 * d * (1.0 - np.cos(t))
    # open geometric shapes: half the top width at each height from the section's own geometry
    ys = np.linspace(0.0, top, 41)
    ys[0] = min(1e-9, 1e-6 * top)
    half = 0.5 * np.asarray(section.top_width(ys))
    return np.concatenate((-half[::-1], half)), np.concatenate((ys[::-1], ys))


def _waterline(x, ground, level, half, surveyed: bool):
    """Left and right ends of the water surface: the outermost crossings of the ground with the level."""
    if not surveyed:  # geometric outlines are drawn centred on offset 0
        return -half, half
    wet = np.flatnonzero(ground <= level)
    i, j = wet[0], wet[-1]
    left = x[i] if i == 0 else np.interp(level, [ground[i], ground[i - 1]], [x[i], x[i - 1]])
    right = x[j] if j == x.size - 1 else np.interp(level, [ground[j], ground[j + 1]], [x[j], x[j + 1]])
    return float(left), float(right)


def plot_section(section, depth: float, discharge: float | None = None, ax=None, *, units="SI",
                 invert: float | None = None, title: str | None = None):
    """Draw a cross-section with the water standing at ``depth``.

    Parameters
    ----------
    section : Section
        Any section; a surveyed one is drawn from its ground points, with its zone edges.
    depth : float
        Flow depth above the lowest point [length].
    discharge : float, optional
        With a discharge the energy level (water level plus alpha V²/2g) is drawn, and a
        surveyed section's zones are labelled with their mean velocities.
    ax : matplotlib.axes.Axes, optional
        Axes to draw on; a new figure is made when omitted.
    units : "SI", "US" or Units
    invert : float, optional
        Elevation of the lowest point [length]; a surveyed section's own invert by default, else 0.
    title : str, optional

    Returns
    -------
    matplotlib.axes.Axes

    Examples
    --------
    >>> import matplotlib
    >>> matplotlib.use("Agg")
    >>> import gvflow as gv
    >>> sec = gv.Surveyed(offset=[0, 2, 5, 7], elevation=[101.5, 100.0, 100.0, 101.5], roughness=0.03)
    >>> gv.plot_section(sec, 1.0, discharge=3.0).get_ylabel()
    'Elevation [m]'
    """
    u = resolve_units(units)
    y = float(section._depth(depth))
    if ax is None:
        import matplotlib.pyplot as plt

        _, ax = plt.subplots(figsize=(8.0, 4.0), layout="constrained")
    base = getattr(section, "invert", 0.0) if invert is None else float(invert)
    x, z = _outline(section, 1.3 * y)
    level = base + y
    ground = base + z
    if section.closed:
        wet = z <= y
        ax.fill(x[wet], ground[wet], color=_COLOURS["water"], alpha=0.25, linewidth=0, label="water")
        ax.set_aspect("equal")
    else:
        ax.fill_between(x, ground, level, where=ground < level, interpolate=True, color=_COLOURS["water"],
                        alpha=0.25, linewidth=0, label="water")
    ax.plot(x, ground, color=_COLOURS["bed"], linewidth=1.6, label="ground")
    half = 0.5 * float(section.top_width(y))
    left, right = _waterline(x, ground, level, half, hasattr(section, "offset"))
    ax.hlines(level, left, right, color=_COLOURS["water"], linewidth=1.2, label=f"water level {level:.3f} {u.length}")
    if discharge is not None:
        energy = base + float(specific_energy(section, discharge, y, units=u))
        ax.hlines(energy, left, right, color=_COLOURS["energy"], linewidth=1.0, linestyle="--",
                  label=f"energy level {energy:.3f} {u.length}")
    edges = list(getattr(section, "zone_edges", []))
    top = max(float(np.max(ground)), level)
    for e in edges:
        ax.plot([e, e], [float(np.interp(e, x, ground)), top], color=_COLOURS["boundary"], linewidth=0.9,
                linestyle=":")
    if discharge is not None and edges:
        flow = section.zone_flow(y, discharge, units=u)
        bounds = [float(x[0]), *edges, float(x[-1])]
        for i, v in enumerate(flow["velocity"]):
            if flow["area"][i] <= 0:
                continue
            lo, hi = max(bounds[i], left), min(bounds[i + 1], right)
            _label(ax, f"V = {v:.2f} {u.length}/s", (0.5 * (lo + hi), level), offset=(0.0, -6.0), arrow_colour=None,
                   va="top")
    ax.set_xlabel(f"Offset [{u.length}]")
    ax.set_ylabel(f"Elevation [{u.length}]")
    ax.set_title(title if title is not None else f"Cross-section at depth {y:.3f} {u.length}")
    ax.legend(loc="upper center", bbox_to_anchor=(0.5, -0.16), fontsize=8, frameon=False, ncol=4)
    ax.margins(x=0.02, y=0.12)
    place_labels(ax)
    return ax

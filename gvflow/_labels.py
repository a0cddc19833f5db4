"""Placing text labels on a matplotlib Axes so that they neither overlap nor leave the axes.

Used by every gvflow plot (long sections, cross-sections, culvert performance). Matplotlib is
only touched through the Axes passed in, so importing this module does not import matplotlib.
"""

from __future__ import annotations

import warnings

import numpy as np

from .errors import GVFlowWarning

__all__ = ["place_labels", "LABEL_GID"]

_TEXT_BOX = {"boxstyle": "round,pad=0.15", "facecolor": "white", "edgecolor": "none", "alpha": 0.85}

#: gid of the labels :func:`place_labels` arranges when it is given no list.
LABEL_GID = "gvflow-label"


# ---------------------------------------------------------------------------
# label placement
# ---------------------------------------------------------------------------

def _label(ax, text, xy, *, xycoords="data", offset=(0.0, 8.0), arrow_colour="0.5", **style):
    """An annotation written ``offset`` points from ``xy``, tagged for :func:`place_labels`.

    It is left out of the figure's layout so that moving it never changes the axes.
    """
    style.setdefault("fontsize", 8)
    style.setdefault("ha", "center")
    style.setdefault("va", "bottom")
    style.setdefault("zorder", 8)
    style.setdefault("bbox", _TEXT_BOX)
    arrow = None if arrow_colour is None else {"arrowstyle": "-", "color": arrow_colour, "linewidth": 0.6,
                                                "shrinkA": 0.0, "shrinkB": 1.0}
    ann = ax.annotate(text, xy=xy, xycoords=xycoords, xytext=offset, textcoords="offset points",
                      arrowprops=arrow, annotation_clip=False, **style)
    ann.set_gid(LABEL_GID)
    ann.set_in_layout(False)
    return ann


def _extent(text):
    """Display box (x0, y0, x1, y1) of a text with its background box, measured by the renderer.

    The background box is the text's extent grown by the box style's pad (a
    fraction of the font size), the way matplotlib sizes it when drawing; the
    patch's own extent is only brought up to date by a full draw.
    """
    from matplotlib.text import Text

    box = Text.get_window_extent(text)  # the text alone: an annotation's own extent includes its arrow
    patch = text.get_bbox_patch()
    grow = 0.0
    if patch is not None:
        pad = getattr(patch.get_boxstyle(), "pad", 0.0)
        grow = pad * text.get_fontsize() * text.figure.dpi / 72.0 + 0.5 * patch.get_linewidth() * text.figure.dpi / 72.0
    return (box.x0 - grow, box.y0 - grow, box.x1 + grow, box.y1 + grow)


def _shift(text, dx, dy, px_per_point):
    """Move a text by (dx, dy) display pixels."""
    from matplotlib.text import Annotation

    if isinstance(text, Annotation) and text.anncoords == "offset points":
        ox, oy = text.xyann
        text.xyann = (ox + dx / px_per_point, oy + dy / px_per_point)
    else:
        tr = text.get_transform()
        x, y = tr.transform(text.get_position())
        text.set_position(tuple(tr.inverted().transform((x + dx, y + dy))))


def _candidates(width, height, box, limit_x, limit_y, gap):
    """Shifts (dx, dy) in display pixels, cheapest first: upward before downward, vertical before sideways."""
    step_y = 0.5 * (height + gap)
    step_x = 0.25 * (width + gap)
    ny = int(np.ceil(limit_y / step_y)) + 1
    nx = int(np.ceil(limit_x / step_x)) + 1
    dy = step_y * np.arange(-ny, ny + 1)
    dx = step_x * np.arange(-nx, nx + 1)
    DX, DY = np.meshgrid(dx, dy)
    cost = np.where(DY >= 0, DY, 1.4 * -DY) + 1.6 * np.abs(DX)
    order = np.argsort(cost, axis=None, kind="stable")
    return DX.ravel()[order], DY.ravel()[order]


def place_labels(ax, labels=None, *, gap: float = 2.0, min_fontsize: float = 6.0):
    """Move labels so that no two overlap and every one lies inside the axes.

    Each label is measured with the figure's renderer (with its background
    box). In the order given, each keeps its place if that is free and inside
    the axes, else it moves to the nearest free place (upward first, then
    downward, then sideways); annotations keep their arrow to the point they
    label. A label with no free place left is drawn smaller, down to
    ``min_fontsize``, and hidden with a :class:`~gvflow.errors.GVFlowWarning`
    if it still does not fit. Texts of the axes that are not in ``labels``
    stay where they are and are avoided, and so is the legend.

    Parameters
    ----------
    ax : matplotlib.axes.Axes
    labels : list of matplotlib.text.Text, optional
        The labels to arrange, most important first; by default every text
        of ``ax`` whose gid is :data:`LABEL_GID` (the labels gvflow's plots
        write), in the order they were written.
    gap : float
        Clearance between labels and from the axes edge [points].
    min_fontsize : float
        Smallest font size a label may be shrunk to [points].

    Returns
    -------
    list of matplotlib.text.Text
        The labels left visible.

    Notes
    -----
    Positions are measured for the figure's size at the time of the call; the
    offsets are in points, so the result holds at any dpi. After resizing the
    figure call it again.
    """
    fig = ax.figure
    if labels is None:
        labels = [t for t in ax.texts if t.get_gid() == LABEL_GID]
    labels = [t for t in labels if t.get_visible() and t.get_text()]
    if not labels:
        return []
    for t in labels:
        t.set_in_layout(False)
    fig.draw_without_rendering()
    px = fig.dpi / 72.0
    g = gap * px
    ab = ax.bbox
    inner = (ab.x0 + g, ab.y0 + g, ab.x1 - g, ab.y1 - g)
    chosen = set(map(id, labels))
    fixed = [_extent(t) for t in ax.texts if id(t) not in chosen and t.get_visible() and t.get_text()]
    legend = ax.get_legend()
    if legend is not None and legend.get_visible():
        lb = legend.get_window_extent()
        fixed.append((lb.x0, lb.y0, lb.x1, lb.y1))
    placed = np.array(fixed, dtype=float).reshape(-1, 4)
    shown = []
    for t in labels:
        while True:
            x0, y0, x1, y1 = _extent(t)
            w, h = x1 - x0, y1 - y0
            dx, dy = _candidates(w, h, inner, ab.width, ab.height, g)
            cx0, cy0, cx1, cy1 = x0 + dx, y0 + dy, x1 + dx, y1 + dy
            ok = (cx0 >= inner[0]) & (cy0 >= inner[1]) & (cx1 <= inner[2]) & (cy1 <= inner[3])
            if placed.size:
                clear = ((cx1[:, None] + g <= placed[None, :, 0]) | (cx0[:, None] >= placed[None, :, 2] + g)
                         | (cy1[:, None] + g <= placed[None, :, 1]) | (cy0[:, None] >= placed[None, :, 3] + g))
                ok &= np.all(clear, axis=1)
            hit = np.flatnonzero(ok)
            if hit.size:
                i = int(hit[0])
                if dx[i] or dy[i]:
                    _shift(t, float(dx[i]), float(dy[i]), px)
                placed = np.vstack([placed, (cx0[i], cy0[i], cx1[i], cy1[i])])
                shown.append(t)
                break
            size = t.get_fontsize()
            if size - 1.0 >= min_fontsize:
                t.set_fontsize(size - 1.0)  # measured again from the text layout, no new draw needed
                continue
            t.set_visible(False)
            warnings.warn(f"the label {t.get_text()!r} found no free place inside the axes and is not drawn; "
                          "make the figure larger or draw fewer labels", GVFlowWarning, stacklevel=2)
            break
    return shown

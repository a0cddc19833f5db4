"""Cross-section geometry by kind code and parameter array: the one home of areas,
widths, perimeters and first moments (private, compiled).

A section reaches compiled code as ``(kind, par)``: an integer code and a float
array whose layout the kind defines. Every function here is a scalar kernel
for one depth ``y`` [length] above the section's lowest point.

Kinds and parameter arrays
--------------------------
``TRAPEZOID``  ``[b, z1, z2]``: bed width and the two bank slopes (horizontal per
               vertical); a rectangle has z1 = z2 = 0, a triangle b = 0.
``WIDE``       ``[b]``: wide-channel idealisation, wetted perimeter b (R = y).
``CIRCLE``     ``[D]``: circular conduit of diameter D, 0 <= y <= D.
``PARABOLA``   ``[c]``: parabola with top width T = c sqrt(y).
``SURVEYED``   ground polyline with roughness zones, packed by :func:`pack_surveyed`:
               ``[n, nz, x_0..x_{n-1}, z_0..z_{n-1}, e_0..e_nz, h_0..h_{nz-1}]`` with
               offsets x non-decreasing, ground z measured above the lowest point, zone
               bounds e (e_0 = x_0, e_nz = x_{n-1}, the interior ones the zone edges), and
               per zone the depth h below which it conveys nothing (0: always conveys).

Geometry of every kind is exact (Chow, *Open-Channel Hydraulics*, 1959,
table 2-1 for the geometric shapes; for a polyline the wetted area is the
integral of (h - z(x)) over the wetted part of each straight piece, quadratic
in depth between breakpoints, the top width linear).

Conventions of the surveyed kind
--------------------------------
- The water surface is level across the whole section: every low area below it
  holds water, whether or not it connects to the main channel.
- Zones are divided by vertical lines that are not wetted perimeter. A vertical
  wall standing exactly on a zone edge belongs to the zone on the side of its
  foot (the deeper side).
- Above an end point the section is closed by a vertical wall (the end point
  extended upwards), counted as wetted perimeter of the end zone.
- A zone that conveys nothing below a depth h (water standing beside a culvert opening or
  behind a levee, holding water without conveying it) is left out of the flow area, top
  width, wetted perimeter and conveyance while y < h, and counts in full from y = h.
- At a breakpoint elevation, where the top width jumps (a flat floodplain at the
  water level), every property takes its value from above: ground lying exactly
  at the water level counts as wetted.
"""

from __future__ import annotations

import math

import numpy as np

from ._jit import kernel, scalar_kernel
from .codes import CIRCLE, PARABOLA, SURVEYED, TRAPEZOID, WIDE, pack_surveyed  # noqa: F401

# d_k = c_k * 2/((2k+3)(2k+5)), c_k the coefficients of sqrt(1 - s) = sum c_k s^k: the series
# of a shallow circular segment's first moment (see _circle_moment).
_MOMENT_WEIGHTS = np.empty(16)
_c = 1.0
for _k in range(16):
    _MOMENT_WEIGHTS[_k] = _c * 2.0 / ((2 * _k + 3) * (2 * _k + 5))
    _c *= (_k - 0.5) / (_k + 1)
del _c, _k


@scalar_kernel
def theta_minus_sin(theta):
    """theta - sin(theta) without cancellation at small angles (Taylor series below 0.25 rad)."""
    if theta >= 0.25:
        return theta - math.sin(theta)
    t2 = theta * theta
    return theta * t2 / 6.0 * (1.0 - t2 / 20.0 * (1.0 - t2 / 42.0 * (1.0 - t2 / 72.0 * (
        1.0 - t2 / 110.0 * (1.0 - t2 / 156.0)))))


@scalar_kernel
def _circle_moment(y, d):
    """First moment about the surface of a shallow circular segment (y/D < 0.05), no cancellation.

    A ybar = int_0^y (y - eta) 2 sqrt(eta (D - eta)) d eta; with eta = y u² this is
    4 sqrt(D) y^(5/2) int_0^1 (1 - u²) u² sqrt(1 - s u²) du, s = y/D, summed term by term.
    """
    s = y / d
    acc = 0.0
    for i in range(_MOMENT_WEIGHTS.size - 1, -1, -1):
        acc = acc * s + _MOMENT_WEIGHTS[i]
    return 4.0 * math.sqrt(d) * y * y * math.sqrt(y) * acc


@scalar_kernel
def _circle(d, y):
    yy = min(max(y, 0.0), d)
    s = yy / d
    # theta = 2 arccos(1 - 2y/D) = 4 arcsin(sqrt(y/D)); the arcsin forms, taken from the nearer
    # of invert and crown, keep full relative precision near both.
    if s <= 0.5:
        theta = 4.0 * math.asin(math.sqrt(s))
    else:
        theta = 2.0 * math.pi - 4.0 * math.asin(math.sqrt(1.0 - s))
    a = d * d * theta_minus_sin(theta) / 8.0
    p = 0.5 * d * theta
    root = math.sqrt(max(yy * (d - yy), 0.0))
    t = 2.0 * root  # D sin(theta/2): exactly zero at the crown
    if s < 0.05:
        m = _circle_moment(yy, d)
    else:
        m = a * (yy - 0.5 * d) + t * t * t / 12.0
    if root > 0.0:
        return a, p, t, m, (d - 2.0 * yy) / root, d / root
    return a, p, t, m, -math.inf if yy > 0.0 else math.inf, math.inf


@scalar_kernel
def _parabola(c, y):
    if y <= 0.0:
        return 0.0, 0.0, 0.0, 0.0, math.inf, math.inf
    s = math.sqrt(y)
    t = c * s
    u = 4.0 * y / t
    p = 0.5 * t * (math.sqrt(1.0 + u * u) + math.asinh(u) / u)
    return (2.0 / 3.0 * t * y, p, t, 4.0 / 15.0 * c * y * y * s, 0.5 * c / s,
            0.5 * c * math.sqrt(1.0 + 16.0 * y / (c * c)) / s)


@scalar_kernel
def zone_count(kind, par):
    """Number of roughness zones of a section (1 for every geometric shape)."""
    if kind == SURVEYED:
        return int(par[1])
    return 1


@scalar_kernel
def _wall_in_zone(x, za, zb, lo, hi):
    """Whether a vertical wall at offset x (ground from za to zb, left to right) lies in zone [lo, hi]."""
    if lo < x < hi:
        return True
    if x == lo:
        return za > zb  # wall falls to the right: its foot is in this zone
    if x == hi:
        return za < zb  # wall rises to the right: its foot is in this zone
    return False


@scalar_kernel
def surveyed_zone_from(par, y, i, j0):
    """(A, P, T, M, dT/dy, dP/dy, j1) of zone i of a packed surveyed section at depth y, reading ground pieces
    from piece j0 on; j1 is where zone i + 1 starts reading.

    Pieces ending left of a zone's lower bound add nothing to it or to any zone right of it, so the zones
    taken left to right with j0 = j1 of the zone before read the ground once (a piece across a zone edge is
    read by both zones), and each zone adds the same pieces in the same order as from j0 = 0.
    """
    n = int(par[0])
    nz = int(par[1])
    xs = 2
    zs = 2 + n
    lo = par[2 + 2 * n + i]
    hi = par[3 + 2 * n + i]
    a = p = t = m = dt = dp = 0.0
    j1 = j0
    if y < par[3 + 2 * n + nz + i]:
        return a, p, t, m, dt, dp, j1  # still water below its activation depth
    for j in range(j0, n - 1):
        xa = par[xs + j]
        if xa > hi:
            break  # this piece and every one after it lie right of the zone
        xb = par[xs + j + 1]
        if xb < hi:
            j1 = j + 1  # ends inside the zone: no zone to the right reaches it
        za = par[zs + j]
        zb = par[zs + j + 1]
        if y < za and y < zb:
            continue  # dry
        if xb == xa:
            if not _wall_in_zone(xa, za, zb, lo, hi):
                continue
            zlo = min(za, zb)
            zhi = max(za, zb)
            if y >= zlo:
                p += min(y, zhi) - zlo
                if y < zhi:
                    dp += 1.0
            continue
        u = max(xa, lo)
        v = min(xb, hi)
        if v <= u:
            continue
        slope = (zb - za) / (xb - xa)
        zu = za + slope * (u - xa)
        zv = za + slope * (v - xa)
        w = v - u
        if zu <= y and zv <= y:
            du = y - zu
            dv = y - zv
            a += 0.5 * w * (du + dv)
            m += w * (du * du + du * dv + dv * dv) / 6.0
            t += w
            p += math.sqrt(w * w + (zv - zu) * (zv - zu))
        elif zu <= y or zv <= y:
            # one end wet: the water line crosses this piece
            d = y - min(zu, zv)
            wx = w * d / abs(zv - zu)
            a += 0.5 * wx * d
            m += wx * d * d / 6.0
            t += wx
            p += math.sqrt(wx * wx + d * d)
            dt += w / abs(zv - zu)
            dp += math.sqrt(w * w + (zv - zu) * (zv - zu)) / abs(zv - zu)
    # the end points extended upwards as vertical walls
    if i == 0 and y > par[zs]:
        p += y - par[zs]
        dp += 1.0
    if i == nz - 1 and y > par[zs + n - 1]:
        p += y - par[zs + n - 1]
        dp += 1.0
    return a, p, t, m, dt, dp, j1


@scalar_kernel
def _surveyed_zone(par, y, i):
    """(A, P, T, M, dT/dy, dP/dy) of zone i of a packed surveyed section at depth y."""
    a, p, t, m, dt, dp, j1 = surveyed_zone_from(par, y, i, 0)
    return a, p, t, m, dt, dp


@scalar_kernel
def zone_geometry(kind, par, y, i):
    """(A_i, P_i, T_i, M_i, dT_i/dy, dP_i/dy) of roughness zone i at depth y.

    For a geometric shape (one zone) this is the whole section. M is the first
    moment of area about the water surface (area times centroid depth).
    """
    if kind == SURVEYED:
        return _surveyed_zone(par, y, i)
    return geometry(kind, par, y)


@scalar_kernel
def geometry(kind, par, y):
    """(A, P, T, M, dT/dy, dP/dy) of the whole section at depth y [length].

    A area, P wetted perimeter, T top width, M first moment of the flow area
    about the water surface (A times the centroid depth, for the specific force),
    and the derivatives of T and P with respect to depth.
    """
    if kind == TRAPEZOID:
        b = par[0]
        zs = par[1] + par[2]
        sides = math.sqrt(1.0 + par[1] * par[1]) + math.sqrt(1.0 + par[2] * par[2])
        return ((b + 0.5 * zs * y) * y, b + sides * y, b + zs * y, 0.5 * b * y * y + zs * y * y * y / 6.0,
                zs, sides)
    if kind == WIDE:
        b = par[0]
        return b * y, b, b, 0.5 * b * y * y, 0.0, 0.0
    if kind == CIRCLE:
        return _circle(par[0], y)
    if kind == PARABOLA:
        return _parabola(par[0], y)
    a = p = t = m = dt = dp = 0.0
    j = 0
    for i in range(int(par[1])):
        ai, pi, ti, mi, dti, dpi, j = surveyed_zone_from(par, y, i, j)
        a += ai
        p += pi
        t += ti
        m += mi
        dt += dti
        dp += dpi
    return a, p, t, m, dt, dp


@scalar_kernel
def max_depth(kind, par):
    """Largest depth a section can hold [length]: the crown of a closed conduit, else infinity."""
    if kind == CIRCLE:
        return par[0]
    return math.inf


@kernel
def breakpoint_depths(kind, par):
    """Depths at which the geometry changes form (ground breakpoints, zones becoming effective), ascending.

    Between two of these depths a surveyed section's top width is linear and
    its area quadratic; root finders bracket on them. Geometric shapes have none.
    """
    if kind != SURVEYED:
        return np.empty(0)
    n = int(par[0])
    nz = int(par[1])
    z = np.sort(np.concatenate((par[2 + n:2 + 2 * n], par[3 + 2 * n + nz:3 + 2 * n + 2 * nz])))
    out = np.empty(z.size)
    k = 0
    for j in range(z.size):
        if z[j] > 0.0 and (k == 0 or z[j] > out[k - 1]):
            out[k] = z[j]
            k += 1
    return out[:k]


@kernel
def single_zone_depth(kind, par):
    """The depth below which at most one roughness zone holds water: infinite for a section of one zone,
    else the second lowest over the zones of the depth at which each first holds water (the lowest ground
    over its width, of the pieces that overlap it as :func:`surveyed_zone_from` takes them, or its
    activation depth where that is higher)."""
    if kind != SURVEYED:
        return math.inf
    n = int(par[0])
    nz = int(par[1])
    if nz < 2:
        return math.inf
    xs = 2
    zs = 2 + n
    first = second = math.inf
    for i in range(nz):
        lo = par[2 + 2 * n + i]
        hi = par[3 + 2 * n + i]
        low = math.inf
        for j in range(n - 1):
            xa = par[xs + j]
            xb = par[xs + j + 1]
            u = max(xa, lo)
            v = min(xb, hi)
            if xb == xa or v <= u:
                continue  # a wall holds no water; nor does a piece outside the zone
            za = par[zs + j]
            slope = (par[zs + j + 1] - za) / (xb - xa)
            low = min(low, za + slope * (u - xa), za + slope * (v - xa))
        wet = max(low, par[3 + 2 * n + nz + i])
        if wet < first:
            second = first
            first = wet
        elif wet < second:
            second = wet
    return second

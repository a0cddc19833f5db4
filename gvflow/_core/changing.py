"""The standard step between unlike sections: a segment whose section changes along it (private).

A changing segment holds two channels of the same kind and parameter layout, the one at its
upstream end (``cb``: a :class:`~gvflow._core.records.ChannelBatch`) and the one at its downstream
end (``dn``: an :class:`~gvflow._core.records.Along` record, which also carries the discharge added
along the segment by lateral inflow). At fraction t of the segment's length the section's
parameters and zone roughness are ``(1 - t) * upstream + t * downstream`` (:func:`channel_at`) and
the discharge is q + t * added; how two sections are brought to one layout is
:func:`gvflow.sections.matched_parameters`.

Lateral inflow (spatially varied flow, on a segment whose section does not change) brings no
momentum along the channel, so between two stations the specific force M = beta Q²/(gA) + A ybar
changes by the weight component less the friction, d (A1 + A2)/2 (S0 - Sf) (the momentum form;
Chow 1959, ch. 12, from memory): :func:`momentum_step`. In a horizontal frictionless channel M is
then constant, which makes the depth upstream of a critical outlet sqrt(3) times critical depth in a
rectangle (energy would give 1.5).

Between two stations the energy equation of the standard step (Chow 1959, *Open-Channel Hydraulics*,
ch. 10, from memory; the same :func:`~gvflow._core.march.step_from` as a prismatic segment) balances the energy at
station 1, in its own section, against the energy at station 2 in the other, with the friction loss
over the interval and a transition loss C |Δ(alpha V²/2g)| where C is the contraction coefficient
when the velocity head grows downstream and the expansion coefficient when it falls (US Army Corps of
Engineers, EM 1110-2-1416, 1993, from memory). Which one applies depends on the answer: the step is
solved with the coefficient of the previous interval's case (at first the contraction's) and taken
again with the other when the velocity head turns out to change the other way.
"""

from __future__ import annotations

import math

import numpy as np

from ._jit import kernel, scalar_kernel
from .codes import DARCY, SUB, SUPER
from .flow import branch_limits, critical_depth, proportional, specific_energy, specific_force, velocity_head
from .geometry import SURVEYED, geometry, max_depth
from .march import _ratio, evenly_spaced, extrapolate, station_state, station_values, step_from, stop_march
from .records import Channel
from .resistance import friction_slope, froude_squared, hydraulics, sf_average


@kernel
def blend(kind, par_up, par_dn, t):
    """Parameters ``(1 - t) * par_up + t * par_dn`` of a section between two of one layout; a surveyed
    section's point and zone counts (its first two entries) are copied, not interpolated, so round-off
    cannot change them."""
    par = (1.0 - t) * par_up + t * par_dn
    if kind == SURVEYED:
        par[0] = par_up[0]
        par[1] = par_up[1]
    return par


@kernel
def _rough_into(out, r_up, r_dn, t):
    """out[:] = (1 - t) * r_up + t * r_dn, zone by zone (the zone roughness at fraction t)."""
    for z in range(out.shape[0]):
        out[z] = (1.0 - t) * r_up[z] + t * r_dn[z]
    return out


@kernel
def channel_at(cb, dn, s, t):
    """The :class:`~gvflow._core.records.Channel` of scenario ``s`` at fraction ``t`` of a changing segment
    (``dn`` its :class:`~gvflow._core.records.Along` record): parameters and zone roughness linear in t,
    exact at both ends (t = 0 the upstream channel, t = 1 the downstream one)."""
    if t == 0.0:
        return Channel(cb.kind, cb.par, cb.law, cb.rough[s])
    if t == 1.0:
        return Channel(cb.kind, dn.par, cb.law, dn.rough[s])
    return Channel(cb.kind, blend(cb.kind, cb.par, dn.par, t), cb.law,
                   _rough_into(np.empty(cb.rough.shape[1]), cb.rough[s], dn.rough[s], t))


@kernel
def _station_parameters(cb, dn, t):
    """Row j: the section parameters at fraction t[j] (:func:`channel_at`'s), the same for every scenario."""
    out = np.empty((t.shape[0], cb.par.shape[0]))
    for j in range(t.shape[0]):
        if t[j] == 0.0:
            out[j] = cb.par
        elif t[j] == 1.0:
            out[j] = dn.par
        else:
            out[j] = blend(cb.kind, cb.par, dn.par, t[j])
    return out


@kernel
def _station_roughness(cb, dn, s, t, out):
    """Row j of ``out``: scenario s's zone roughness at fraction t[j] (:func:`channel_at`'s)."""
    for j in range(t.shape[0]):
        if t[j] == 0.0:
            out[j] = cb.rough[s]
        elif t[j] == 1.0:
            out[j] = dn.rough[s]
        else:
            _rough_into(out[j], cb.rough[s], dn.rough[s], t[j])


@kernel
def _alike(cb, dn, q, s, p):
    """Whether scenarios s and p have the same discharge and zone roughness rows proportional by one factor at
    both ends of the segment, so the same section at every fraction but for a common roughness factor: the
    same Froude number at every depth (module notes of :func:`~gvflow._core.flow.critical_depth_batch`)."""
    if q[s] != q[p] or cb.law == DARCY:
        return False
    if not (proportional(cb.rough[s], cb.rough[p]) and proportional(dn.rough[s], dn.rough[p])):
        return False
    f_up = cb.rough[s][0] / cb.rough[p][0]
    f_dn = dn.rough[s][0] / dn.rough[p][0]
    return abs(f_up - f_dn) <= 2e-15 * f_up


@scalar_kernel
def transition_step(ch1, ch2, fl, q, s0, y1, e1, sf1, hv1, d, yc2, branch, alpha, cc, ce, avg, ymax, tol, guess,
                    contraction_first):
    """Depth at station 2 (channel ``ch2``, signed distance d from station 1 whose state e1, sf1, hv1 in its
    own channel ``ch1`` is known), with the transition loss of the module notes: (depth, code, whether it
    was a contraction, and the state e, sf, hv at that depth, which starts the next step), code as
    :func:`~gvflow._core.march.step`. The coefficient of ``contraction_first`` is tried first (the previous
    interval's, usually right)."""
    c1, c2 = (cc, ce) if contraction_first else (ce, cc)
    y2, code, e2, sf2, hv2, _ = step_from(ch2, fl, q, s0, y1, e1, sf1, hv1, d, yc2, branch, alpha, c1, avg, ymax, tol,
                                          guess)
    if code != 0:
        return y2, code, contraction_first, math.nan, math.nan, math.nan
    if cc == ce or ((hv2 - hv1) * d > 0.0) == contraction_first:
        return y2, code, contraction_first, e2, sf2, hv2  # the velocity head changes the way assumed
    y3, code3, e3, sf3, hv3, _ = step_from(ch2, fl, q, s0, y1, e1, sf1, hv1, d, yc2, branch, alpha, c2, avg, ymax,
                                           tol, y2)
    if code3 != 0:
        return y3, code3, not contraction_first, math.nan, math.nan, math.nan
    if ((hv3 - hv1) * d > 0.0) != contraction_first or abs(hv3 - hv1) < abs(hv2 - hv1):
        # the other way, as assumed the second time; or neither assumption holds (the velocity head hardly
        # changes, and so neither does the loss) and this one changes it less
        return y3, 0, not contraction_first, e3, sf3, hv3
    return y2, 0, contraction_first, e2, sf2, hv2


@scalar_kernel
def _force_residual(ch, fl, q2, s0, d, m1, a1, sf1, y2, alpha, avg):
    """Momentum residual of a spatially varied step: M(y2) - M1 - d (A1 + A2)/2 (S0 - mean Sf)."""
    a2 = geometry(ch.kind, ch.par, y2)[0]
    sav = sf_average(avg, sf1, friction_slope(ch, fl, q2, y2))[0]
    return specific_force(ch, fl, q2, y2, alpha) - m1 - d * 0.5 * (a1 + a2) * (s0 - sav)


@scalar_kernel
def momentum_step(ch, fl, q1, q2, s0, y1, d, yc2, branch, alpha, avg, tol):
    """Depth at station 2 (discharge q2, signed distance d) from depth y1 at station 1 (discharge q1) in one
    channel ``ch`` with lateral inflow between them (module notes): (depth, code) as
    :func:`~gvflow._core.march.step`, found by bracketing on the branch and regula falsi (Illinois)."""
    m1 = specific_force(ch, fl, q1, y1, alpha)
    a1 = geometry(ch.kind, ch.par, y1)[0]
    sf1 = friction_slope(ch, fl, q1, y1)
    rc = _force_residual(ch, fl, q2, s0, d, m1, a1, sf1, yc2, alpha, avg)
    if rc > 0.0:
        return yc2, 1  # M at its least (critical depth) already exceeds the target: no root on either branch
    if branch == 1:
        lo, flo = yc2, rc
        hi = max(y1, yc2) * 1.25
        fhi = _force_residual(ch, fl, q2, s0, d, m1, a1, sf1, hi, alpha, avg)
        for _ in range(200):
            if fhi > 0.0:
                break
            lo, flo = hi, fhi
            hi *= 2.0
            fhi = _force_residual(ch, fl, q2, s0, d, m1, a1, sf1, hi, alpha, avg)
    else:
        hi, fhi = yc2, rc
        lo = min(y1, yc2) * 0.8
        flo = _force_residual(ch, fl, q2, s0, d, m1, a1, sf1, lo, alpha, avg)
        for _ in range(200):
            if flo > 0.0:
                break
            hi, fhi = lo, flo
            lo *= 0.5
            flo = _force_residual(ch, fl, q2, s0, d, m1, a1, sf1, lo, alpha, avg)
    side = 0
    y = 0.5 * (lo + hi)
    for _ in range(200):
        y = (lo * fhi - hi * flo) / (fhi - flo) if fhi != flo else 0.5 * (lo + hi)
        if not (min(lo, hi) < y < max(lo, hi)):
            y = 0.5 * (lo + hi)
        f = _force_residual(ch, fl, q2, s0, d, m1, a1, sf1, y, alpha, avg)
        if f == 0.0 or abs(hi - lo) <= tol * y:
            return y, 0
        if (f > 0.0) == (fhi > 0.0):
            hi, fhi = y, f
            if side == 1:
                flo *= 0.5
            side = 1
        else:
            lo, flo = y, f
            if side == -1:
                fhi *= 0.5
            side = -1
    return y, 3


@kernel
def critical_near(ch, fl, q, alpha, hint, rtol):
    """The critical depth nearest ``hint`` (Fc² = 1 where specific energy has a minimum), to ``rtol``: a bracket
    grown about the hint, then regula falsi (Illinois) on Fc² - 1, which falls through zero with depth there.
    A geometric section's one critical depth comes from :func:`~gvflow._core.flow.critical_depth`; so does
    a surveyed one's where no bracket is found. Between sections a little apart the critical depth moves
    little, so this costs a few evaluations where a scan of the whole section costs over a hundred, and it
    keeps to the branch the profile is on where a compound section has several critical depths."""
    if ch.kind != SURVEYED or not (hint > 0.0):
        return critical_depth(ch, fl, q, alpha)[0]
    lo = hint * 0.98
    hi = hint * 1.02
    flo = froude_squared(ch, fl, q, lo, alpha) - 1.0
    fhi = froude_squared(ch, fl, q, hi, alpha) - 1.0
    for _ in range(40):
        if flo > 0.0:
            break
        hi, fhi = lo, flo
        lo *= 0.8
        flo = froude_squared(ch, fl, q, lo, alpha) - 1.0
    for _ in range(40):
        if fhi < 0.0:
            break
        lo, flo = hi, fhi
        hi *= 1.25
        fhi = froude_squared(ch, fl, q, hi, alpha) - 1.0
    if not (flo > 0.0 and fhi < 0.0):
        return critical_depth(ch, fl, q, alpha)[0]
    side = 0
    y = 0.5 * (lo + hi)
    for _ in range(100):
        y = (lo * fhi - hi * flo) / (fhi - flo)
        if not (lo < y < hi):
            y = 0.5 * (lo + hi)
        f = froude_squared(ch, fl, q, y, alpha) - 1.0
        if f == 0.0 or hi - lo <= rtol * y:
            return y
        if f > 0.0:
            lo, flo = y, f
            if side == 1:
                fhi *= 0.5
            side = 1
        else:
            hi, fhi = y, f
            if side == -1:
                flo *= 0.5
            side = -1
    return y


#: within this fraction of critical depth a step takes the critical depth to full precision; farther away a
#: rough one (to :data:`ROUGH_CRITICAL`) bounds the branch, and a step that fails with it is taken again
NEAR_CRITICAL = 0.1
ROUGH_CRITICAL = 1e-3


@scalar_kernel
def _carry_critical(ch2, fl, q2, alpha, yc):
    """The critical depth carried to the next section from ``yc`` (the one at the section before) by one
    scaling step, yc Fc²(yc)^(1/3) (exact for a rectangle): close enough to bound the branch away from it."""
    f2 = froude_squared(ch2, fl, q2, yc, alpha)
    if f2 > 0.0 and math.isfinite(f2):
        return yc * f2 ** (1.0 / 3.0)
    return yc


@kernel
def _interval(cb, dn, fl, s, q, s0, y1, e1, sf1, hv1, t1, t2, ch_a, ch_b, d, branch, alpha, cc, ce, avg, tol,
              guess, nsub, yc_hint, yc_carried, contraction_first):
    """Depth after ``nsub`` equal sub-steps of a changing interval from t1 to t2 (signed length d; ``ch_a`` and
    ``ch_b`` the channels at its ends), from depth y1 whose state e1, sf1, hv1 is known
    (:func:`~gvflow._core.march.station_state`; unused with lateral inflow): (depth, code, stations done,
    critical depth at the end, whether the last step was a contraction, the state at the end). ``yc_hint``
    is the critical depth at t1; away from critical depth it is carried along by :func:`_carry_critical`
    (``yc_carried``, when not NaN, is that carry to t2, known for one step), which keeps it close enough to
    bound the branch, and taken precisely (:func:`critical_near`) near critical depth or after a failed
    step."""
    y = y1
    ch1 = ch_a
    ta = t1
    yc2 = yc_hint
    code = 0
    y2 = y
    e2, sf2, hv2 = e1, sf1, hv1
    for k in range(nsub):
        last = k == nsub - 1
        tb = t2 if last else t1 + (t2 - t1) * (k + 1) / nsub
        ch2 = ch_b if last else channel_at(cb, dn, s, tb)
        q1 = q + dn.added * ta
        q2 = q + dn.added * tb
        near = abs(y - yc2) <= NEAR_CRITICAL * yc2
        if near:
            yc2 = critical_near(ch2, fl, q2, alpha, yc2, tol)
        elif nsub == 1 and yc_carried == yc_carried:
            yc2 = yc_carried
        else:
            yc2 = _carry_critical(ch2, fl, q2, alpha, yc2)
        for _ in range(2):
            if dn.added != 0.0:
                y2, code = momentum_step(ch2, fl, q1, q2, s0, y, d / nsub, yc2, branch, alpha, avg, tol)
            else:
                y2, code, contraction_first, e2, sf2, hv2 = transition_step(
                    ch1, ch2, fl, q2, s0, y, e1, sf1, hv1, d / nsub, yc2, branch, alpha, cc, ce, avg,
                    max_depth(ch2.kind, ch2.par), tol, guess if nsub == 1 else y, contraction_first)
            if near or (code == 0 and abs(y2 - yc2) > NEAR_CRITICAL * yc2):
                break
            near = True  # close to critical depth, or failed with the carried one: again with the precise one
            yc2 = critical_near(ch2, fl, q2, alpha, yc2, tol)
        if code != 0:
            return y2, code, k, yc2, contraction_first, e2, sf2, hv2
        y = y2
        e1, sf1, hv1 = e2, sf2, hv2
        ch1 = ch2
        ta = tb
    return y, 0, nsub, yc2, contraction_first, e1, sf1, hv1


@kernel
def march(cb, dn, fl, q, s0, x, t, y0, yc0, branch, alpha, cc, ce, avg, tol, until_force, force_tol,
          out_y, out_n, out_xc, out_code):
    """Standard-step march of every scenario over the stations ``x`` (in marching order) of a changing
    segment; ``t[j]`` is the fraction of the segment's length at station j. Arguments and outputs as
    :func:`gvflow._core.march.march`; ``yc0[s]`` is the critical depth at the first station where the caller
    knows it (NaN: found here). An interval whose step finds no root on the branch is taken again
    as 4, then 16, then 64 sub-steps through the sections between; if they fail too, the profile
    reaches critical depth in it (code 1, ``out_xc`` where the sub-steps stopped).

    The section parameters at the stations are the same for every scenario and are interpolated once.
    Scenarios alike in the sense of :func:`_alike` (a roughness factor) have the same Froude number at every
    depth, so the same carried critical depth from the same one at the station before: the first of them to
    reach a station with a given carried depth keeps the carry, and the rest take it (to round-off the
    carry each would make alone)."""
    m = x.shape[0]
    watch = until_force.shape[0] > 0
    even = evenly_spaced(x)
    pars = _station_parameters(cb, dn, t)
    rough = np.empty((m, cb.rough.shape[1]))
    carry_in = np.full(m, math.nan)  # per station: the critical depth carried from, and to
    carry_out = np.full(m, math.nan)
    for s in range(q.shape[0]):
        if s == 0 or not _alike(cb, dn, q, s, s - 1):
            carry_in[:] = math.nan
        _station_roughness(cb, dn, s, t, rough)
        y = y0[s]
        out_y[s, 0] = y
        out_n[s] = m
        out_xc[s] = math.nan
        out_code[s] = 0
        ch0 = Channel(cb.kind, pars[0], cb.law, rough[0])
        if watch and specific_force(ch0, fl, q[s] + dn.added * t[0], y, alpha) < until_force[s, 0] * (1.0 - force_tol):
            stop_march(out_y, out_n, out_code, s, 1, 4)
            continue
        yc = yc0[s]
        if not (yc > 0.0):
            yc = critical_depth(ch0, fl, q[s] + dn.added * t[0], alpha)[0]
        e, sf, hv, _ = station_state(ch0, fl, q[s] + dn.added * t[0], alpha, y)
        contraction = True
        ch_b = ch0
        for j in range(1, m):
            d = x[j] - x[j - 1]
            ch_a = ch_b
            ch_b = Channel(cb.kind, pars[j], cb.law, rough[j])
            carried = math.nan
            if not abs(y - yc) <= NEAR_CRITICAL * yc:  # the carry is used: shared, or made and kept
                if carry_in[j] == yc:
                    carried = carry_out[j]
                else:
                    carried = _carry_critical(ch_b, fl, q[s] + dn.added * t[j], alpha, yc)
                    carry_in[j] = yc
                    carry_out[j] = carried
            guess = extrapolate(x, out_y[s], j, even)
            code = 1
            if carried == carried and dn.added == 0.0:
                # the usual interval, away from critical depth: :func:`_interval`'s first step, taken here
                y2, code, way, e2, sf2, hv2 = transition_step(
                    ch_a, ch_b, fl, q[s], s0, y, e, sf, hv, d, carried, branch, alpha, cc, ce, avg,
                    max_depth(ch_b.kind, ch_b.par), tol, guess, contraction)
                yc2 = carried
                if not (code == 0 and abs(y2 - carried) > NEAR_CRITICAL * carried):
                    code = 1
            if code != 0:
                y2, code, done, yc2, way, e2, sf2, hv2 = _interval(cb, dn, fl, s, q[s], s0, y, e, sf, hv, t[j - 1],
                                                                   t[j], ch_a, ch_b, d, branch, alpha, cc, ce,
                                                                   avg, tol, guess, 1, yc, carried, contraction)
            nsub = 4
            while code == 1 and nsub <= 64:
                y2, code, done, yc2, way, e2, sf2, hv2 = _interval(cb, dn, fl, s, q[s], s0, y, e, sf, hv, t[j - 1],
                                                                   t[j], ch_a, ch_b, d, branch, alpha, cc, ce,
                                                                   avg, tol, y, nsub, yc, math.nan, contraction)
                if code == 1 and nsub == 64:
                    out_xc[s] = x[j - 1] + d * done / nsub
                nsub *= 4
            if code != 0:
                stop_march(out_y, out_n, out_code, s, j, code)
                break
            out_y[s, j] = y2
            y, e, sf, hv = y2, e2, sf2, hv2
            yc = yc2
            contraction = way
            if watch and specific_force(ch_b, fl, q[s] + dn.added * t[j], y, alpha) < \
                    until_force[s, j] * (1.0 - force_tol):
                stop_march(out_y, out_n, out_code, s, j + 1, 4)
                break


@kernel
def critical_depths_at(cb, dn, fl, q, t, alpha, out):
    """out[s, j]: critical depth (least specific energy) of scenario s at fraction t[j] of the segment."""
    for s in range(q.shape[0]):
        for j in range(t.shape[0]):
            out[s, j] = critical_depth(channel_at(cb, dn, s, t[j]), fl, q[s] + dn.added * t[j], alpha)[0]


@kernel
def properties_at(cb, dn, fl, rows, q, y, t, out):
    """out[:, i] = (A, P, T, A*ybar, Sf) at depth y[i], fraction t[i], scenario rows[i], discharge q[i]
    (NaN where y[i] is not positive)."""
    for i in range(y.shape[0]):
        yi = y[i]
        if not (yi > 0.0):
            for j in range(5):
                out[j, i] = math.nan
            continue
        ch = channel_at(cb, dn, rows[i], t[i])
        a, p, tw, mm, dt, dp = geometry(ch.kind, ch.par, yi)
        out[0, i] = a
        out[1, i] = p
        out[2, i] = tw
        out[3, i] = mm
        out[4, i] = friction_slope(ch, fl, q[i] + dn.added * t[i], yi)


@kernel
def force_or_energy_at(cb, dn, fl, q, y, t, alpha, energy, out):
    """out[s, j]: specific energy (``energy``) or force of scenario s at depth y[s, j], fraction t[j]."""
    for s in range(y.shape[0]):
        for j in range(y.shape[1]):
            ch = channel_at(cb, dn, s, t[j])
            yy = y[s, j]
            if not (yy > 0.0):
                out[s, j] = math.nan
            elif energy:
                out[s, j] = specific_energy(ch, fl, q[s] + dn.added * t[j], yy, alpha)
            else:
                out[s, j] = specific_force(ch, fl, q[s] + dn.added * t[j], yy, alpha)



@kernel
def quantities_at(cb, dn, fl, s, q, y, t, alpha, out):
    """:func:`~gvflow._core.march.station_values` of scenario s at depth y[i] and fraction t[i] into out[:, i]."""
    for i in range(y.shape[0]):
        station_values(channel_at(cb, dn, s, t[i]), fl, q + dn.added * t[i], y[i], alpha, out, i)


@kernel
def slope_at(cb, dn, fl, s, q, s0, alpha, cc, ce, t, dtdx, y):
    """dy/dx of the gradually varied flow equation of a changing section at depth y and fraction t, and the
    Fr² at which the equation is singular (Fr² (1 + C σ) below, 1 at critical depth without transition loss)
    (``dtdx`` = 1/length of the segment): with E = y + alpha V²/2g and the transition loss of the module
    notes, dE/dx = S0 - Sf - C |d(alpha V²/2g)/dx| (x downstream), where d(alpha V²/2g)/dx =
    -Fr² dy/dx + b and b, the change of the velocity head with x at a fixed depth (the dA/dx term, and a
    changing alpha), is taken by central differences in t. So dy/dx = (S0 - Sf - b (1 + C σ)) /
    (1 - Fr² (1 + C σ)), σ the sign of the velocity head's change: the contraction coefficient where it
    grows, the expansion coefficient where it falls (zero change where neither is consistent). The loss
    moves the singularity: with a contraction the profile turns vertical where Fr² (1 + C) = 1, a little
    short of critical depth (the standard step's energy equation loses its root there too), so the
    second value, which tells a march how near it is, is Fr² (1 + C σ)."""
    ch = channel_at(cb, dn, s, t)
    qstar = dn.added * dtdx  # lateral inflow per length
    q = q + dn.added * t
    a, tw, m, kk, dlnk, al, be, fr2 = hydraulics(ch, fl, q, y, alpha)
    sf = (q / kk) * (q / kk)
    if qstar != 0.0:
        # spatially varied flow in one section (momentum form, module notes): the inflow brings no
        # momentum along the channel, so dM/dx = A (S0 - Sf) with M = beta Q²/(gA) + A ybar and dQ/dx = q*:
        # dy/dx = (S0 - Sf - 2 beta Q q*/(g A²)) / (dM/dy / A), the same balance as :func:`momentum_step`
        # (dM/dy / A = 1 - Q² T/(g A³) where beta is 1; by central differences where beta varies)
        hh = 1e-6 * y
        den = (specific_force(ch, fl, q, y + hh, alpha) - specific_force(ch, fl, q, y - hh, alpha)) / (2.0 * hh * a)
        return _ratio(s0 - sf - 2.0 * be * q * qstar / (fl.g * a * a), den), 1.0 - den
    h = 1e-6
    tp = min(t + h, 1.0)
    tm = max(t - h, 0.0)
    b = (velocity_head(channel_at(cb, dn, s, tp), fl, q, y, alpha)
         - velocity_head(channel_at(cb, dn, s, tm), fl, q, y, alpha)) / (tp - tm) * dtdx
    num = s0 - sf - b
    # (at critical depth itself the slope is infinite, as IEEE division gives it in both engines)
    dydx = _ratio(num - cc * b, 1.0 - fr2 * (1.0 + cc))
    if -fr2 * dydx + b > 0.0 or cc == ce:
        return dydx, fr2 * (1.0 + cc)
    dydx = _ratio(num + ce * b, 1.0 - fr2 * (1.0 - ce))
    if -fr2 * dydx + b <= 0.0:
        return dydx, fr2 * (1.0 - ce)
    return (b / fr2 if fr2 > 0.0 else 0.0), fr2


@kernel
def critical_along(cb, dn, fl, q, t, alpha, hint, out):
    """out[s, j]: the critical depth of scenario s at fraction t[j] nearest the one at t[j - 1], from
    ``hint[s]`` at t[0] (:func:`critical_near` carried along the segment: where a compound section has
    several critical depths, those of one branch)."""
    for s in range(q.shape[0]):
        h = hint[s]
        for j in range(t.shape[0]):
            h = critical_near(channel_at(cb, dn, s, t[j]), fl, q[s] + dn.added * t[j], alpha, h, 1e-12)
            out[s, j] = h


@kernel
def left_branch(cb, dn, fl, q, t, alpha, y, n_valid, branch, out_j, out_far):
    """Where the march of scenario s (depths y[s, :n_valid[s]] at fractions t) left the branch it was on: the
    first station j whose depth lies past the far limit at j of the branch holding the depth before
    (:func:`~gvflow._core.flow.branch_limits`: a maximum of specific energy, which a profile cannot pass), or
    m where none did; ``out_far[s]`` that limit. Where the section changes so that a critical depth and the
    maximum beside it vanish together, the two branches they bounded become one and the profile stays on
    it."""
    for s in range(q.shape[0]):
        out_j[s] = t.shape[0]
        out_far[s] = math.nan
        for j in range(1, n_valid[s]):
            ch = channel_at(cb, dn, s, t[j])
            qj = q[s] + dn.added * t[j]
            _, far, _ = branch_limits(ch, fl, qj, alpha, y[s, j - 1], branch)
            if 0.0 < far < math.inf and ((branch == SUB and y[s, j] > far) or (branch == SUPER and y[s, j] < far)):
                out_j[s] = j
                out_far[s] = far
                break

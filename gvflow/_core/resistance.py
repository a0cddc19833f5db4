"""Flow resistance (private, compiled): conveyance, friction slope, its averages, and the
energy and momentum coefficients of a section of several roughness zones.

Every function takes a :class:`~gvflow._core.records.Channel` ``ch`` and a
:class:`~gvflow._core.records.Fluid` ``fl``.

Conveyance per zone (Chow, *Open-Channel Hydraulics*, 1959, §6-2 and §6-7):
Manning K_i = (k/n_i) A_i^(5/3) P_i^(-2/3); Chezy K_i = C_i A_i^(3/2) P_i^(-1/2);
Darcy-Weisbach (one zone) K = sqrt(8 g/f) A R^(1/2) with f from Colebrook-White
(Colebrook 1939) on ks/(4R) and Re = 4 R V / nu. The section's conveyance is the
sum over zones, K = sum K_i, and Sf = (Q/K)². Division lines between zones are
not wetted perimeter (see :mod:`gvflow._core.geometry`).

With zone conveyances the energy and momentum coefficients are
alpha = (sum K_i³/A_i²)/(K³/A²) and beta = (sum K_i²/A_i)/(K²/A) (Chow 1959,
§2-7 and §6-7), both 1 for one zone; and the derivative of the specific energy
with depth, with alpha varying, is dE/dy = 1 - Fc² with the compound Froude
number of Blalock & Sturm (1981, J. Hydraul. Div. ASCE 107(HY6); from memory):
Fc² = Q²/(2 g K³) (sigma2 sigma3 / K - sigma1), sigma1 = sum (K_i/A_i)³ (3 T_i - 2 R_i dP_i/dy),
sigma2 = sum (K_i/A_i)(5 T_i - 2 R_i dP_i/dy), sigma3 = sum K_i³/A_i² (Manning zones;
the Chezy form follows from its exponents 3/2 and 1/2 in the same way).
"""

from __future__ import annotations

import math

from ._jit import inline_kernel, scalar_kernel
from .codes import AVERAGES, AVG_ARITHMETIC, AVG_END, AVG_GEOMETRIC, AVG_HARMONIC, CHEZY, DARCY, MANNING  # noqa: F401
from .geometry import SURVEYED, geometry, surveyed_zone_from, zone_count

LAMINAR_LIMIT = 2000.0


@scalar_kernel
def colebrook(re, eps):
    """Darcy friction factor f from Colebrook-White, 1/sqrt f = -2 log10(eps/3.7 + 2.51/(Re sqrt f)).

    Newton's method on x = 1/sqrt(f) from the Swamee-Jain (1976) estimate, to 1e-13
    relative. Below Re = 2000 the pipe's laminar value 64/Re (open channels run
    about 50 % higher, so laminar results are approximate). Returns NaN if the
    iteration does not converge in 50 steps (it converges in 3-6 for any Re > 2000
    and eps >= 0); callers turn that into an error.
    """
    if re < LAMINAR_LIMIT:
        return 64.0 / max(re, 1e-300)
    a = eps / 3.7
    b = 2.51 / re
    x = -2.0 * math.log10(a + 5.74 / re ** 0.9)
    for _ in range(50):
        inner = a + b * x
        gx = x + 2.0 * math.log10(inner)
        step = gx / (1.0 + 2.0 * b / (inner * math.log(10.0)))
        x -= step
        if abs(step) <= 1e-13 * abs(x):
            return 1.0 / (x * x)
    return math.nan


@scalar_kernel
def _zone_k(law, c, k, a, p):
    """Conveyance of one zone of area a and wetted perimeter p (Manning or Chezy); 0 if dry."""
    if a <= 0.0 or p <= 0.0:
        return 0.0
    if law == MANNING:
        return k / c * a * (a / p) ** (2.0 / 3.0)
    return c * a * math.sqrt(a / p)


@scalar_kernel
def _exponents(law):
    """(a, b) of K_i proportional to A_i^a P_i^-b: Manning (5/3, 2/3), Chezy and Darcy (3/2, 1/2)."""
    if law == MANNING:
        return 5.0 / 3.0, 2.0 / 3.0
    return 1.5, 0.5


@scalar_kernel
def geometric_coefficients(alpha):
    """Energy and momentum coefficients (alpha, beta) of a geometric section (one roughness zone, one velocity
    across it): the reach's given alpha, and beta = 1."""
    return alpha, 1.0


@inline_kernel
def hydraulics(ch, fl, q, y, alpha):
    """Everything a step of a profile needs at depth y, in one pass over the section.

    Returns (A, T, M, K, dK/dy / K, alpha, beta, Fr²): area, top width, first moment
    about the surface, conveyance and its logarithmic derivative (Darcy: friction factor
    held fixed), the energy and momentum coefficients (a geometric section takes the
    given ``alpha`` and beta = 1; a surveyed one its own from the zone conveyances),
    and the square of the Froude number that decides the regime, 1 - dE/dy (for several
    zones the compound Froude number; module notes).
    """
    ea, eb = _exponents(ch.law)
    if ch.kind != SURVEYED:
        a, p, t, m, dt, dp = geometry(ch.kind, ch.par, y)
        al, be = geometric_coefficients(alpha)
        if not a > 0.0:  # a depth below what the geometry resolves: no flow area, no conveyance
            return 0.0, t, 0.0, 0.0, math.inf, al, be, math.inf
        if ch.law == DARCY:
            r = a / p
            f = colebrook(4.0 * r * abs(q) / (a * fl.nu), ch.rough[0] / (4.0 * r))
            kk = math.sqrt(8.0 * fl.g / f) * a * math.sqrt(r)
        else:
            kk = _zone_k(ch.law, ch.rough[0], fl.k, a, p)
        return a, t, m, kk, ea * t / a - eb * dp / p, al, be, al * (q / a) * (q / a) * t / (fl.g * a)
    a_tot = t_tot = m_tot = 0.0
    kk = dk = s2 = s3 = sig1 = 0.0
    j = 0  # the zones left to right read the ground pieces once
    for i in range(zone_count(ch.kind, ch.par)):
        a, p, t, m, dt, dp, j = surveyed_zone_from(ch.par, y, i, j)
        a_tot += a
        t_tot += t
        m_tot += m
        ki = _zone_k(ch.law, ch.rough[i], fl.k, a, p)
        if ki <= 0.0:
            continue
        # dK_i/dy = K_i (ea T_i/A_i - eb P_i'/P_i); d(K_i³/A_i²)/dy = K_i³/A_i² (3 dK_i/K_i - 2 T_i/A_i)
        g_i = ea * t / a - eb * dp / p
        c3 = ki * (ki / a) * (ki / a)
        kk += ki
        dk += ki * g_i
        s2 += ki * ki / a
        s3 += c3
        sig1 += c3 * (3.0 * g_i - 2.0 * t / a)
    if kk <= 0.0:
        return a_tot, t_tot, m_tot, 0.0, math.inf, 1.0, 1.0, math.inf
    if zone_count(ch.kind, ch.par) == 1:
        al = be = 1.0  # one zone: one velocity (exactly, not to round-off)
    else:
        al = s3 * (a_tot / kk) * (a_tot / kk) / kk
        be = s2 * (a_tot / kk) / kk
    # dE/dy = 1 + Q²/(2g) d(sigma3/K³)/dy = 1 + Q²/(2g K³) (sigma1 - 3 sigma3 K'/K)
    fr2 = -(q / kk) * (q / kk) / (2.0 * fl.g * kk) * (sig1 - 3.0 * s3 * dk / kk)
    return a_tot, t_tot, m_tot, kk, dk / kk, al, be, fr2


@scalar_kernel
def conveyance(ch, fl, q, y):
    """Conveyance K [length³/s] at depth y, so that Q = K sqrt(Sf); ``q`` matters only for Darcy."""
    return hydraulics(ch, fl, q, y, 1.0)[3]


@scalar_kernel
def slope_of(q, kk):
    """Friction slope (Q/K)² of discharge q through conveyance K; infinite where K vanishes (no flow area)."""
    return (q / kk) * (q / kk) if kk > 0.0 else math.inf


@scalar_kernel
def friction_slope(ch, fl, q, y):
    """Friction slope Sf = (Q/K)² [-] of discharge q at depth y."""
    return slope_of(q, conveyance(ch, fl, q, y))


@scalar_kernel
def dlnsf_dy(ch, fl, q, y):
    """d ln(Sf)/dy at fixed discharge, -2 dK/dy / K (Darcy: friction factor held fixed)."""
    return -2.0 * hydraulics(ch, fl, q, y, 1.0)[4]


@scalar_kernel
def sf_average(avg, s1, s2):
    """Mean friction slope over a step and its derivative with respect to s2.

    Arithmetic (s1 + s2)/2, geometric sqrt(s1 s2), harmonic 2 s1 s2/(s1 + s2), and
    average conveyance 4/(1/sqrt s1 + 1/sqrt s2)² (the friction slope of the mean
    conveyance); for any two positive slopes harmonic <= conveyance <= geometric
    <= arithmetic. The march's damped sub-steps use the far end's slope alone (``AVG_END``).
    """
    if avg == AVG_ARITHMETIC:
        return 0.5 * (s1 + s2), 0.5
    if avg == AVG_GEOMETRIC:
        m = math.sqrt(s1 * s2)
        return m, 0.5 * m / s2
    if avg == AVG_HARMONIC:
        return 2.0 * s1 * s2 / (s1 + s2), 2.0 * s1 * s1 / ((s1 + s2) * (s1 + s2))
    if avg == AVG_END:
        return s2, 1.0
    a1 = 1.0 / math.sqrt(s1)
    a2 = 1.0 / math.sqrt(s2)
    den = a1 + a2
    return 4.0 / (den * den), 4.0 * a2 * a2 * a2 / (den * den * den)


@scalar_kernel
def velocity_coefficients(ch, fl, y, alpha):
    """Energy and momentum coefficients (alpha, beta) at depth y.

    A surveyed section's own coefficients from its zone conveyances (1 and 1 for
    one zone); a geometric section takes the given ``alpha`` and beta = 1 (:func:`geometric_coefficients`,
    without the pass over the section).
    """
    if ch.kind != SURVEYED:
        return geometric_coefficients(alpha)
    h = hydraulics(ch, fl, 1.0, y, alpha)
    return h[5], h[6]


@scalar_kernel
def froude_squared(ch, fl, q, y, alpha):
    """Square of the Froude number that decides the regime: 1 - dE/dy at depth y (see :func:`hydraulics`)."""
    return hydraulics(ch, fl, q, y, alpha)[7]

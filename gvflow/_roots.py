"""Vectorised bracketed root finding (private).

One Illinois (modified regula falsi) iteration per call advances every
element of an array of independent scalar problems at once, so solving for
10,000 normal depths costs a few dozen NumPy passes, not 10,000 Python loops.
"""

from __future__ import annotations

import numpy as np

from .errors import ConvergenceError


def bracketed_root(fun, lo, hi, *, rtol: float = 1e-14, atol: float = 0.0, max_iter: int = 200,
                   what: str = "root"):
    """Find x in [lo, hi] with fun(x) = 0 for every element, vectorised.

    ``fun`` maps an array of x to an array of residuals of the same shape;
    the residual must change sign between ``lo`` and ``hi`` (checked by the
    caller). Converges when the bracket is narrower than ``atol + rtol*|x|``.

    Raises
    ------
    ConvergenceError
        When some element has not met the tolerance after ``max_iter`` steps.
    """
    lo = np.array(lo, dtype=float, copy=True)
    hi = np.array(hi, dtype=float, copy=True)
    lo, hi = np.broadcast_arrays(lo, hi)
    lo, hi = lo.copy(), hi.copy()
    flo = np.asarray(fun(lo), dtype=float).copy()
    fhi = np.asarray(fun(hi), dtype=float).copy()
    x = 0.5 * (lo + hi)
    done = (flo == 0) | (fhi == 0)
    x = np.where(flo == 0, lo, np.where(fhi == 0, hi, x))
    side = np.zeros(lo.shape, dtype=int)
    for _ in range(max_iter):
        width = np.abs(hi - lo)
        done |= width <= atol + rtol * np.abs(x)
        if np.all(done):
            return x
        denom = fhi - flo
        with np.errstate(divide="ignore", invalid="ignore"):
            xs = hi - fhi * (hi - lo) / denom
        mid = 0.5 * (lo + hi)
        bad = ~np.isfinite(xs) | (xs <= np.minimum(lo, hi)) | (xs >= np.maximum(lo, hi))
        xs = np.where(bad, mid, xs)
        xn = np.where(done, x, xs)
        fx = np.asarray(fun(xn), dtype=float)
        exact = fx == 0
        same_as_hi = np.signbit(fx) == np.signbit(fhi)
        # Illinois: halve the retained end's residual when the same end survives twice.
        keep_lo = same_as_hi & ~done
        keep_hi = ~same_as_hi & ~done
        flo = np.where(keep_lo & (side == -1), 0.5 * flo, flo)
        fhi = np.where(keep_hi & (side == 1), 0.5 * fhi, fhi)
        lo_new = np.where(keep_hi, hi, lo)
        flo_new = np.where(keep_hi, fhi, flo)
        hi = np.where(~done, xn, hi)
        fhi = np.where(~done, fx, fhi)
        lo, flo = lo_new, flo_new
        side = np.where(keep_lo, -1, np.where(keep_hi, 1, side))
        x = np.where(done, x, xn)
        done |= exact
    width = np.abs(hi - lo)
    worst = int(np.argmax(width - (atol + rtol * np.abs(x))))
    raise ConvergenceError(
        f"{what}: bracketed iteration did not reach rtol={rtol:g} in {max_iter} steps",
        iterations=max_iter, residual=float(np.ravel(fhi)[worst]), last=float(np.ravel(x)[worst]),
    )


def expand_upper(fun, lo, hi, *, limit: float = np.inf, max_doublings: int = 200, what: str = "root"):
    """Grow ``hi`` until fun(hi) > 0 for every element (fun increasing), capped at ``limit``."""
    hi = np.array(hi, dtype=float, copy=True)
    for _ in range(max_doublings):
        fh = np.asarray(fun(hi))
        need = fh <= 0
        if not np.any(need):
            return hi
        hi = np.where(need, np.minimum(2.0 * hi + 1e-300, limit), hi)
    raise ConvergenceError(f"{what}: could not bracket the root", iterations=max_doublings)

"""Monte Carlo over uncertain inputs: envelopes of depth and stage along a reach, levels at any point.

Roughness coefficients are rarely known to better than a range: handbooks
give a minimum, a normal and a maximum Manning's n for each lining (Chow
1959, *Open-Channel Hydraulics*, Table 5-6). :func:`monte_carlo` samples
roughness per segment (and, optionally, the discharge, the control levels,
structure numbers and bed slopes) from such ranges with a seeded random
generator, solves all the samples as one vectorised sweep
(:func:`gvflow.batch.sweep`), and summarises them as percentile envelopes of
depth and water-surface elevation along the reach, percentiles and
exceedance probabilities of the level at any point, and the distribution of
the hydraulic jump's location.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ._validate import finite_array, finite_float
from .batch import SweepResult, _own_coefficients, _parse_vary, _scenario_inputs, _solve_scenarios, check_coefficients
from .errors import InvalidInputError
from .profiles import get_marcher
from .reach import _check_steps
from .uniform import CRITICAL_SLOPE_TOLERANCE

__all__ = ["Uncertain", "monte_carlo", "MonteCarloResult", "triangular_quantile"]

_DISTRIBUTIONS = ("triangular", "uniform")


def triangular_quantile(probability, minimum, mode, maximum):
    """Inverse distribution function of the triangular distribution.

    Parameters
    ----------
    probability : float or ndarray
        Cumulative probability u in [0, 1] [-].
    minimum, mode, maximum : float or ndarray
        Lower limit a, mode c and upper limit b, a <= c <= b (any unit).

    Returns
    -------
    float or ndarray
        The value x with P(X <= x) = u [unit of the limits].

    Notes
    -----
    With F_c = (c - a)/(b - a):

    .. math::

        x = a + \\sqrt{u (b - a)(c - a)} \\quad (u < F_c), \\qquad
        x = b - \\sqrt{(1 - u)(b - a)(b - c)} \\quad (u \\ge F_c)

    (Kotz, S. & van Dorp, J. R., *Beyond Beta*, World Scientific, 2004,
    ch. 1). A zero-width range (a = b) returns a.

    Examples
    --------
    >>> from gvflow.uncertainty import triangular_quantile
    >>> float(triangular_quantile(0.5, 0.0, 1.0, 2.0))  # symmetric: the median is the mode
    1.0
    >>> triangular_quantile([0.0, 1.0], 0.011, 0.013, 0.016).tolist()
    [0.011, 0.016]
    """
    u = finite_array(probability, "probability")
    if np.any((u < 0) | (u > 1)):
        raise InvalidInputError(f"probability must lie in [0, 1]; got {probability!r}")
    a, c, b = (finite_array(v, n) for v, n in ((minimum, "minimum"), (mode, "mode"), (maximum, "maximum")))
    if np.any((c < a) | (b < c)):
        raise InvalidInputError(f"need minimum <= mode <= maximum; got {minimum!r}, {mode!r}, {maximum!r}")
    width = b - a
    with np.errstate(divide="ignore", invalid="ignore"):
        fc = np.where(width > 0, (c - a) / np.where(width > 0, width, 1.0), 0.0)
    low = a + np.sqrt(u * width * (c - a))
    high = b - np.sqrt((1.0 - u) * width * (b - c))
    out = np.where(u < fc, low, high)
    return float(out) if out.ndim == 0 else out


@dataclass(frozen=True)
class Uncertain:
    """A quantity known only within a range: its minimum, normal (most likely) and maximum value.

    Parameters
    ----------
    minimum, normal, maximum : float
        The range and its most likely value, minimum <= normal <= maximum,
        in the unit of the quantity (a roughness coefficient in its law,
        or a discharge [length³/s]).
    distribution : {"triangular", "uniform"}
        "triangular" (default): density rising linearly from the minimum to
        a peak at the normal value and falling to the maximum. "uniform":
        every value between minimum and maximum equally likely (the normal
        value is then only a label).

    Examples
    --------
    >>> import gvflow as gv
    >>> n = gv.Uncertain(0.011, 0.013, 0.016)  # e.g. a handbook's min-normal-max Manning's n
    >>> round(n.mean, 5)
    0.01333
    >>> n.quantile([0.0, 1.0]).tolist()
    [0.011, 0.016]
    """

    minimum: float
    normal: float
    maximum: float
    distribution: str = "triangular"

    def __post_init__(self):
        for name in ("minimum", "normal", "maximum"):
            object.__setattr__(self, name, finite_float(getattr(self, name), name))
        if not self.minimum <= self.normal <= self.maximum:
            raise InvalidInputError(
                f"Uncertain needs minimum <= normal <= maximum; got {self.minimum:g}, {self.normal:g}, "
                f"{self.maximum:g}")
        if self.distribution not in _DISTRIBUTIONS:
            raise InvalidInputError(f"distribution must be one of {list(_DISTRIBUTIONS)}; got {self.distribution!r}")

    @property
    def mean(self) -> float:
        """Mean of the distribution [unit of the quantity]."""
        if self.distribution == "uniform":
            return 0.5 * (self.minimum + self.maximum)
        return (self.minimum + self.normal + self.maximum) / 3.0

    def quantile(self, probability):
        """Value with cumulative probability ``probability`` (inverse distribution function)."""
        if self.distribution == "uniform":
            u = finite_array(probability, "probability")
            if np.any((u < 0) | (u > 1)):
                raise InvalidInputError(f"probability must lie in [0, 1]; got {probability!r}")
            out = self.minimum + u * (self.maximum - self.minimum)
            return float(out) if out.ndim == 0 else out
        return triangular_quantile(probability, self.minimum, self.normal, self.maximum)

    def sample(self, size, rng=None):
        """``size`` random values (a seeded ``numpy.random.Generator``, a seed, or None)."""
        return self.quantile(np.random.default_rng(rng).random(size))


def _roughness_specs(reach, roughness):
    segs = reach.segments
    if roughness is None:
        return None
    surveyed = [k for k, s in enumerate(segs) if s.roughness is None]
    if isinstance(roughness, Uncertain):
        if surveyed:
            k = surveyed[0]
            raise InvalidInputError(
                f"segment {k} is a Surveyed section with a roughness per zone, so one range for every segment is "
                f"ambiguous: sample its zones by name, vary={{'segments.{k}.roughness.0': gv.Uncertain(...), ...}}, "
                f"and give roughness as a list of {len(segs)} (None for a surveyed segment)")
        laws = {s.roughness.law for s in segs}
        if len(laws) > 1:
            raise InvalidInputError(
                f"the segments use different friction laws ({', '.join(sorted(laws))}): give roughness as a "
                f"list of {len(segs)} Uncertain ranges (None keeps a segment's roughness)")
        return [roughness] * len(segs)
    specs = list(roughness)
    if len(specs) != len(segs):
        raise InvalidInputError(f"roughness must be one Uncertain or a list of {len(segs)} (one per segment, None "
                                f"for a fixed segment); got {len(specs)}")
    for k, s in enumerate(specs):
        if s is not None and not isinstance(s, Uncertain):
            raise InvalidInputError(f"roughness[{k}] must be a gv.Uncertain or None; got {s!r}")
        if s is not None and k in surveyed:
            raise InvalidInputError(f"roughness[{k}]: segment {k} is a Surveyed section with a roughness per zone; "
                                    f"give None here and sample its zones by name in vary "
                                    f"('segments.{k}.roughness.0', ...)")
    return specs


def monte_carlo(reach, samples: int = 1000, *, roughness=None, discharge=None, vary=None, seed=None,
                correlated: bool = False, percentiles=(5.0, 50.0, 95.0), method="standard_step", n_steps: int = 100,
                max_step: float | None = None, critical_tolerance: float = CRITICAL_SLOPE_TOLERANCE, progress=None,
                chunk_size: int | None = None, **options) -> MonteCarloResult:
    """Monte Carlo over uncertain roughness, discharge and other inputs, solved as one vectorised sweep.

    Parameters
    ----------
    reach : Reach
        The reach; what is not sampled keeps the reach's value.
    samples : int
        Number of scenarios drawn.
    roughness : Uncertain or list of (Uncertain or None), optional
        Range of each segment's roughness coefficient, in the segment's
        law (Manning's n, Chezy's C or sand roughness ks [length]). One
        ``Uncertain`` applies to every segment (they must share a law); in a
        list, None keeps that segment's roughness fixed. A segment with a
        :class:`~gvflow.Surveyed` section takes None here: its zones are
        sampled by name in ``vary``.
    discharge : Uncertain, optional
        Range of the discharge [length³/s].
    vary : dict of str to Uncertain, optional
        Ranges of other inputs, named as in the ``vary`` of
        :func:`gvflow.batch.sweep`: ``"downstream"`` (the downstream
        control's level or depth: a tailwater), ``"upstream"``,
        ``"downstream.crest_height"``, ``"segments.K.gate.opening"``,
        ``"segments.K.slope"``, ``"segments.K.roughness.Z"`` (zone Z of a
        surveyed section, in its law)... in the unit of each. Drawn
        independently of each other and of the roughness (``correlated``
        concerns ``roughness`` only). Control numbers stay in the
        vectorised batch; a sampled slope makes every sample a solve of its
        own (much slower).
    seed : int, numpy.random.Generator or None
        Seeds the random draws; the same seed gives the same samples (the
        discharges are drawn first, then the roughness, then the ``vary``
        inputs in the order given).
    correlated : bool
        False (default): the segments' roughness values are drawn
        independently. True: one probability per scenario sets every
        segment's value (e.g. the same lining throughout, its n unknown).
    percentiles : sequence of float
        Percentiles of the envelopes, in [0, 100].
    method, n_steps, max_step, critical_tolerance, progress, chunk_size, **options
        As in :func:`gvflow.batch.sweep`.

    Returns
    -------
    MonteCarloResult

    Raises
    ------
    InvalidInputError
        Nothing uncertain given, a non-positive sampled value, bad
        ``samples`` or ``percentiles``, a single roughness range on
        segments with different friction laws, or a name in ``vary`` the
        reach does not have (the message lists the valid ones).

    Examples
    --------
    >>> import gvflow as gv
    >>> reach = gv.Reach(segments=[gv.Segment(length=500.0, slope=0.001, section=gv.Rectangular(width=3.0),
    ...                                       roughness=0.013)], discharge=5.0, downstream=gv.FixedDepth(2.0))
    >>> mc = gv.monte_carlo(reach, 200, roughness=gv.Uncertain(0.011, 0.013, 0.016), seed=1)
    >>> mc.stage_envelope.shape  # (percentiles, stations)
    (3, 101)
    >>> bool(all(mc.depth_envelope[0] <= mc.depth_envelope[2]))
    True

    With an uncertain tailwater too, the chance that the level 100 m
    above the outlet exceeds given levels:

    >>> mc = gv.monte_carlo(reach, 200, roughness=gv.Uncertain(0.011, 0.013, 0.016),
    ...                     vary={"downstream": gv.Uncertain(1.8, 2.0, 2.4)}, seed=1)
    >>> mc.exceedance(400.0, [2.3, 2.5, 2.7]).shape  # (levels, points)
    (3, 1)
    """
    if not isinstance(samples, (int, np.integer)) or isinstance(samples, bool) or samples < 1:
        raise InvalidInputError(f"samples must be a positive integer; got {samples!r}")
    pct = finite_array(percentiles, "percentiles")
    if pct.ndim != 1 or pct.size == 0 or np.any((pct < 0) | (pct > 100)):
        raise InvalidInputError(f"percentiles must be a non-empty list of numbers in [0, 100]; got {percentiles!r}")
    if discharge is not None and not isinstance(discharge, Uncertain):
        raise InvalidInputError(f"discharge must be a gv.Uncertain range; got {discharge!r}")
    specs = _roughness_specs(reach, roughness)
    vary_specs = _vary_specs(reach, vary)
    if discharge is None and (specs is None or all(s is None for s in specs)) and not vary_specs:
        raise InvalidInputError("nothing is uncertain: give roughness=, discharge= and/or vary= as gv.Uncertain "
                                "ranges")
    n = int(samples)
    rng = np.random.default_rng(seed)
    q = None
    if discharge is not None:
        if discharge.minimum <= 0:
            raise InvalidInputError(f"the discharge range must be positive; got minimum {discharge.minimum:g}")
        q = discharge.quantile(rng.random(n))
    sampled = {}
    if specs is not None and any(s is not None for s in specs):
        k = len(specs)
        u = np.repeat(rng.random((n, 1)), k, axis=1) if correlated else rng.random((n, k))
        for j, s in enumerate(specs):
            if s is not None:
                if s.minimum <= 0:
                    raise InvalidInputError(f"roughness range of segment {j} must be positive; got minimum "
                                            f"{s.minimum:g}")
                sampled[j] = s.quantile(u[:, j])
    if q is None:
        q = np.full(n, reach.discharge)
    drawn = {name: spec.quantile(rng.random(n)) for name, spec in vary_specs.items()}
    marcher = get_marcher(method, **options)
    n_steps, max_step = _check_steps(n_steps, max_step)
    q, coef, varied = _scenario_inputs(reach, q, None, None, drawn or None)  # zones named in vary: in coef
    if sampled:
        if coef is None:
            coef = [np.array(np.broadcast_to(_own_coefficients(s), (n,) + np.shape(_own_coefficients(s))))
                    for s in reach.segments]
        for j, values in sampled.items():
            coef[j] = np.asarray(values, dtype=float)
        check_coefficients(reach, coef)
    result = _solve_scenarios(reach, marcher, q, coef, varied, n_steps, max_step, critical_tolerance, progress,
                              chunk_size, method)
    return MonteCarloResult(result, pct, roughness_ranges=specs, discharge_range=discharge, correlated=correlated,
                            vary_ranges=vary_specs)


def _vary_specs(reach, vary) -> dict:
    """``vary`` of :func:`monte_carlo` checked: names the reach has (as a sweep's ``vary``), Uncertain ranges."""
    if vary is None:
        return {}
    if not isinstance(vary, dict):
        raise InvalidInputError(f"vary must be a dict of parameter name -> gv.Uncertain; got {type(vary).__name__}")
    for name, spec in vary.items():
        if not isinstance(spec, Uncertain):
            raise InvalidInputError(f"vary[{name!r}] must be a gv.Uncertain range; got {spec!r}")
    _parse_vary(reach, {name: spec.normal for name, spec in vary.items()})  # the names, with their choices
    return dict(vary)


class MonteCarloResult:
    """Summary of a Monte Carlo run (result of :func:`monte_carlo`).

    Attributes
    ----------
    sweep : SweepResult
        Every scenario: ``sweep[i]`` is the Profile of sample i.
    discharge : ndarray, shape (n,)
        Sampled discharges [length³/s].
    roughness : ndarray, shape (n, K), or (n, K, Z) when a segment is surveyed
        Roughness coefficients of every sample per segment (and zone), in
        each segment's law (as :attr:`gvflow.batch.SweepResult.roughness`).
    varied : dict of str to ndarray, shape (n,)
        Sampled values of the inputs given in ``vary``, by name.
    vary_ranges : dict of str to Uncertain
        Their ranges.
    percentiles : ndarray, shape (P,)
        Percentiles of the envelopes [%].
    x : ndarray, shape (M,)
        Stations [length] (shared by all samples).
    bed : ndarray, shape (M,), or (n, M) when a slope is sampled
        Bed elevation [length].
    depth_envelope, stage_envelope : ndarray, shape (P, M)
        Percentiles over the samples of the depth and of the water-surface
        elevation at each station [length]. Each station's percentile is
        taken on its own: an envelope line is not one sample's profile.
    jump_x : ndarray, shape (n,)
        Location of each sample's most upstream hydraulic jump, NaN where
        the sample has none [length].
    jump_probability : float
        Fraction of samples with a jump in the reach [-].
    jump_x_percentiles : ndarray, shape (P,)
        Percentiles of the jump location over the samples that have one
        (NaN if none does) [length].
    """

    def __init__(self, sweep_result: SweepResult, percentiles, roughness_ranges=None, discharge_range=None,
                 correlated=False, vary_ranges=None):
        self.sweep = sweep_result
        self.units = sweep_result.units
        self.percentiles = np.asarray(percentiles, float)
        self.roughness_ranges = roughness_ranges
        self.discharge_range = discharge_range
        self.correlated = correlated
        self.discharge = sweep_result.discharge
        self.roughness = sweep_result.roughness
        self.varied = sweep_result.varied
        self.vary_ranges = {} if vary_ranges is None else dict(vary_ranges)
        self.x = sweep_result.x
        self.bed = sweep_result.bed
        self.depth_envelope = self.envelope("depth")
        self.stage_envelope = self.envelope("stage")
        self.jump_x = sweep_result.first_jump_x
        has = np.isfinite(self.jump_x)
        self.jump_probability = float(np.mean(has))
        self.jump_x_percentiles = (np.percentile(self.jump_x[has], self.percentiles) if np.any(has)
                                   else np.full(self.percentiles.shape, np.nan))

    def to_xarray(self):
        """Every sample as an xarray Dataset (:meth:`gvflow.batch.SweepResult.to_xarray`, one scenario per
        sample) with the envelopes added: ``depth_envelope`` and ``stage_envelope`` on dimensions
        (``percentile``, ``station``). Needs the optional xarray (``pip install 'gvflow[xarray]'``)."""
        ds = self.sweep.to_xarray()
        L = self.units.length
        ds = ds.assign_coords(percentile=("percentile", self.percentiles, {"units": "%"}))
        ds["depth_envelope"] = (("percentile", "station"), self.depth_envelope, {"units": L})
        ds["stage_envelope"] = (("percentile", "station"), self.stage_envelope, {"units": L})
        ds.attrs["samples"] = self.samples
        ds.attrs["correlated"] = int(bool(self.correlated))
        return ds

    @property
    def samples(self) -> int:
        """Number of samples."""
        return len(self.sweep)

    def envelope(self, quantity: str = "stage", percentiles=None) -> np.ndarray:
        """Percentiles over the samples of ``quantity`` at every station, shape (P, M).

        ``quantity`` is "depth", "stage", "velocity" or "froude";
        ``percentiles`` defaults to the run's.
        """
        if quantity not in ("depth", "stage", "velocity", "froude"):
            raise InvalidInputError(f"quantity must be 'depth', 'stage', 'velocity' or 'froude'; got {quantity!r}")
        pct = self.percentiles if percentiles is None else finite_array(percentiles, "percentiles")
        if np.any((pct < 0) | (pct > 100)):
            raise InvalidInputError(f"percentiles must lie in [0, 100]; got {percentiles!r}")
        return np.percentile(getattr(self.sweep, quantity), pct, axis=0)

    # -- answers at any point -------------------------------------------------------------------
    def depth_at(self, x) -> np.ndarray:
        """Depth of every sample at distance(s) ``x`` [length]: shape (n,), or (n, m) for m distances
        (:meth:`gvflow.batch.SweepResult.depth_at`)."""
        return self.sweep.depth_at(x)

    def stage_at(self, x) -> np.ndarray:
        """Water-surface elevation of every sample at distance(s) ``x`` [length]: shape (n,), or (n, m)
        (:meth:`gvflow.batch.SweepResult.stage_at`)."""
        return self.sweep.stage_at(x)

    def _at(self, x, quantity):
        if quantity not in ("stage", "depth"):
            raise InvalidInputError(f"quantity must be 'stage' or 'depth'; got {quantity!r}")
        return self.stage_at(x) if quantity == "stage" else self.depth_at(x)

    def percentiles_at(self, x, quantity: str = "stage", percentiles=None) -> np.ndarray:
        """Percentiles over the samples of the stage (or depth) at distance(s) ``x`` [length].

        Parameters
        ----------
        x : float or array_like, shape (m,)
            Distances from the upstream end [length].
        quantity : {"stage", "depth"}
        percentiles : sequence of float, optional
            In [0, 100]; default the run's.

        Returns
        -------
        ndarray, shape (P,) for a number x, (P, m) for an array
            ``numpy.percentile`` (linear interpolation between order
            statistics) of :meth:`stage_at` or :meth:`depth_at` over the
            samples.
        """
        pct = self.percentiles if percentiles is None else finite_array(percentiles, "percentiles")
        if pct.ndim > 1 or np.any((pct < 0) | (pct > 100)):
            raise InvalidInputError(f"percentiles must be numbers in [0, 100]; got {percentiles!r}")
        return np.percentile(self._at(x, quantity), pct, axis=0)

    def exceedance(self, x, levels, quantity: str = "stage"):
        """Chance that the water level at ``x`` exceeds each of ``levels``: a table.

        The probability is the fraction of samples whose stage (or depth) at
        x is strictly above the level; its sampling standard error is
        sqrt(p (1 - p) / n), so n samples resolve probabilities down to
        about 1/n.

        Parameters
        ----------
        x : float or array_like, shape (m,)
            Distances from the upstream end [length].
        levels : float or array_like, shape (L,)
            Water-surface elevations (or depths, with ``quantity="depth"``) [length].
        quantity : {"stage", "depth"}

        Returns
        -------
        pandas.DataFrame
            One row per level (index ``level``), one column per x (columns
            ``x``), values the exceedance probability [-].

        Examples
        --------
        >>> import gvflow as gv
        >>> reach = gv.Reach(segments=[gv.Segment(length=500.0, slope=0.001, section=gv.Rectangular(width=3.0),
        ...                                       roughness=0.013)], discharge=5.0, downstream=gv.FixedDepth(2.0))
        >>> mc = gv.monte_carlo(reach, 100, roughness=gv.Uncertain(0.011, 0.013, 0.016), seed=1)
        >>> table = mc.exceedance([0.0, 250.0], [2.0, 2.3, 2.6])
        >>> table.shape, table.index.name, table.columns.name
        ((3, 2), 'level', 'x')
        """
        import pandas as pd

        lv = finite_array(levels, "levels")
        if lv.ndim > 1:
            raise InvalidInputError(f"levels must be a number or a 1-D array; got shape {lv.shape}")
        lv = np.atleast_1d(lv)
        values = self._at(x, quantity)
        values = values.reshape(values.shape[0], -1)  # (n, m)
        prob = np.mean(values[:, None, :] > lv[None, :, None], axis=0)  # (L, m)
        xs = np.atleast_1d(np.asarray(x, dtype=float))
        return pd.DataFrame(prob, index=pd.Index(lv, name="level"), columns=pd.Index(xs, name="x"))

    def jump_histogram(self, bins=20):
        """Histogram of the jump location over the samples with a jump: (counts, bin edges [length])."""
        has = np.isfinite(self.jump_x)
        if not np.any(has):
            return np.zeros(0, int), np.zeros(0)
        return np.histogram(self.jump_x[has], bins=bins)

    def plot_envelope(self, ax=None, quantity: str = "stage", jumps: bool = True, **kwargs):
        """Plot the percentile envelope of ``quantity`` ("stage" or "depth") on the reach's long section.

        The band spans the lowest to the highest percentile, the line is the
        middle one, and the title names the uncertain inputs; with
        ``quantity="stage"`` the bed, banks and structures are drawn at their
        levels as in the long section. With ``jumps`` the range of jump
        locations (lowest to highest percentile) is shaded and each sample's
        jump marked on the axis. See :func:`gvflow.plot.plot_envelope`.
        Returns the matplotlib Axes.
        """
        from .plot import plot_envelope

        return plot_envelope(self, ax=ax, quantity=quantity, jumps=jumps, **kwargs)

    def __repr__(self):
        u = self.units
        p = self.percentiles
        lo, hi = int(np.argmin(p)), int(np.argmax(p))
        width = self.stage_envelope[hi] - self.stage_envelope[lo]
        jump = (f"jump in {self.jump_probability:.0%} of samples, x {self.jump_x_percentiles[lo]:.2f}-"
                f"{self.jump_x_percentiles[hi]:.2f} {u.length} ({p[lo]:g}th-{p[hi]:g}th)"
                if self.jump_probability > 0 else "no jumps")
        return (f"<MonteCarloResult {self.samples} samples, stage band {p[lo]:g}th-{p[hi]:g}th up to "
                f"{np.max(width):.3f} {u.length} wide, {jump}>")

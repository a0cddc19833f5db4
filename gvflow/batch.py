"""Many scenarios at once: stacked sweeps of one reach and independent reaches in parallel.

Two ways to run many profiles:

* :func:`sweep` (``reach.sweep(...)``) solves one reach for many discharges
  and roughness values. The scenarios share the stations of the reach and are
  marched together, one compiled loop over all of them per segment and pass,
  so a sweep of 10,000 costs far less than 10,000 solves. The result,
  :class:`SweepResult`, holds arrays with a leading scenario axis and gives
  the :class:`~gvflow.result.Profile` of any one scenario, identical to
  solving that scenario alone.
* :func:`solve_many` solves independent reaches (different geometry,
  controls, anything) in input order, optionally on a
  :class:`concurrent.futures.Executor`: a local process pool, or the executor
  of a Dask distributed client for a cluster.

Long runs show a progress bar (the optional ``tqdm`` package) when a person
is watching: ``progress=None`` turns it on only when standard error is a
terminal or the code runs in a notebook, never under CI or a test runner.
"""

from __future__ import annotations

import math
import os
import pickle
import sys
import warnings
from concurrent.futures import Executor, as_completed
from functools import cached_property

import numpy as np

from ._core.codes import REGIME_NAMES
from ._pieces import profile_pieces
from ._plausible import arithmetic_guard
from ._solver import BatchSolution, solve_batch
from ._validate import positive_array
from .errors import GVFlowError, GVFlowWarning, InvalidInputError
from .friction import check_manning_n
from .jumps import Jump, _length_ratio, jump_type
from .profiles import get_marcher
from .result import Profile
from .uniform import CRITICAL_SLOPE_TOLERANCE

__all__ = ["SweepResult", "sweep", "solve_many", "SolveManyError", "REGIME_CODES"]

#: Meaning of the integer codes in :attr:`SweepResult.regime`.
REGIME_CODES = REGIME_NAMES  # the regime codes of the stacked arrays and their names

# -- progress ---------------------------------------------------------------------------------------


def import_xarray():
    """The xarray module, or an ImportError that says how to get it (it is an optional dependency)."""
    try:
        import xarray
    except ImportError:
        raise ImportError("to_xarray() needs the optional xarray package: pip install 'gvflow[xarray]' "
                          "(or pip install xarray)") from None
    return xarray


def _in_notebook() -> bool:
    shell = sys.modules.get("IPython")
    if shell is None:
        return False
    try:
        ip = shell.get_ipython()
    except Exception:  # pragma: no cover - IPython internals
        return False
    return ip is not None and type(ip).__name__ == "ZMQInteractiveShell"


def progress_wanted(progress) -> bool:
    """Whether to show a progress bar for ``progress`` (True, False or None for automatic).

    Automatic (None) means on only when someone is watching: standard error is
    a terminal, or the code runs in a Jupyter notebook, and neither a CI
    service (environment variable ``CI``) nor pytest is running it.

    Examples
    --------
    >>> from gvflow.batch import progress_wanted
    >>> progress_wanted(True), progress_wanted(False)
    (True, False)
    """
    if progress is None:
        if os.environ.get("CI", "").lower() not in ("", "0", "false", "no"):
            return False
        if "PYTEST_CURRENT_TEST" in os.environ or "pytest" in sys.modules:
            return False
        try:
            tty = sys.stderr is not None and sys.stderr.isatty()
        except (AttributeError, ValueError):
            tty = False
        return tty or _in_notebook()
    if not isinstance(progress, (bool, np.bool_)):
        raise InvalidInputError(f"progress must be True, False or None (automatic); got {progress!r}")
    return bool(progress)


class _NoBar:
    def update(self, n=1):
        pass

    def close(self):
        pass


def _bar(progress, total: int, desc: str, unit: str):
    """A tqdm bar when wanted and available, else a stand-in that does nothing."""
    explicit = progress is True
    if not progress_wanted(progress):
        return _NoBar()
    try:
        if _in_notebook():
            from tqdm.auto import tqdm
        else:
            from tqdm import tqdm
    except ImportError:
        if explicit:
            warnings.warn("progress=True needs the optional tqdm package (pip install 'gvflow[progress]'); "
                          "running without a progress bar", GVFlowWarning, stacklevel=3)
        return _NoBar()
    return tqdm(total=total, desc=desc, unit=unit)


# -- sweep inputs -----------------------------------------------------------------------------------


def _scaled_coefficients(rough, factors: np.ndarray) -> np.ndarray:
    """Coefficient of ``rough.scaled(f)`` for every factor f, vectorised where the law allows.

    Manning's n and the sand roughness ks scale with the factor, Chezy's C
    with its inverse (``scaled`` semantics); the probe below finds which
    and applies the same single floating-point operation to every factor.
    """
    c0 = rough.kernel_spec()[1]
    probe = rough.scaled(2.0).kernel_spec()[1]
    if probe == c0 * 2.0:
        return c0 * factors
    if probe == c0 / 2.0:
        return c0 / factors
    return np.array([rough.scaled(float(f)).kernel_spec()[1] for f in factors])  # pragma: no cover


def _scenario_inputs(reach, discharge, roughness, roughness_scale):
    """(discharge (n,), coef (n, K) or None) from the sweep keywords, validated."""
    segs = reach.segments
    nseg = len(segs)
    given = {}
    if discharge is not None:
        q = positive_array(discharge, "discharge")
        if q.ndim > 1:
            raise InvalidInputError(f"discharge must be a number or a 1-D array; got shape {q.shape}")
        given["discharge"] = q
    if roughness is not None and roughness_scale is not None:
        raise InvalidInputError("give either roughness (coefficients) or roughness_scale (factors), not both")
    if (roughness is not None or roughness_scale is not None) and any(s.roughness is None for s in segs):
        raise InvalidInputError("roughness sweeps take segments with one roughness each; a Surveyed section's zone "
                                "roughness is swept by sweeping reaches built with scaled sections "
                                "(gv.solve_many) for now")
    if roughness is not None:
        c = positive_array(roughness, "roughness")
        if c.ndim > 2 or (c.ndim == 2 and c.shape[1] != nseg):
            raise InvalidInputError(
                f"roughness must have shape (n,) or (n, {nseg}) (one coefficient per scenario, or per scenario "
                f"and segment); got shape {c.shape}")
        if c.ndim < 2:
            laws = {s.roughness.law for s in segs}
            if len(laws) > 1:
                raise InvalidInputError(
                    f"the segments use different friction laws ({', '.join(sorted(laws))}): one coefficient per "
                    f"scenario is ambiguous; give roughness as an (n, {nseg}) array")
        given["roughness"] = c
    if roughness_scale is not None:
        f = positive_array(roughness_scale, "roughness_scale")
        if f.ndim > 1:
            raise InvalidInputError(f"roughness_scale must be a number or a 1-D array; got shape {f.shape}")
        given["roughness_scale"] = f
    if not given:
        raise InvalidInputError("nothing to sweep: give discharge=, roughness= or roughness_scale= as an array")
    sizes = {k: (v.shape[0] if v.ndim else 1) for k, v in given.items()}
    empty = [k for k, size in sizes.items() if size == 0]
    if empty:
        raise InvalidInputError(f"{empty[0]} must hold at least one value to sweep; got an empty array")
    n = max(sizes.values())
    bad = {k: s for k, s in sizes.items() if s not in (1, n)}
    if bad:
        raise InvalidInputError(
            "the swept arrays pair up scenario by scenario, so they must have the same length (or be single "
            f"values); got lengths {sizes}. For every combination build a grid first (numpy.meshgrid)")
    q = np.broadcast_to(given.get("discharge", np.float64(reach.discharge)), (n,)).astype(float)
    coef = None
    if "roughness" in given:
        c = given["roughness"]
        coef = np.broadcast_to(c.reshape(-1, 1) if c.ndim < 2 else c, (n, nseg)).astype(float)
    elif "roughness_scale" in given:
        f = np.broadcast_to(given["roughness_scale"], (n,)).astype(float)
        coef = np.stack([_scaled_coefficients(s.roughness, f) for s in segs], axis=1)
    if coef is not None:
        for k, s in enumerate(segs):
            if s.roughness.law == "manning":
                check_manning_n(coef[:, k], f"Manning's n of segment {k}")
    return np.ascontiguousarray(q), None if coef is None else np.ascontiguousarray(coef)


def sweep(reach, discharge=None, *, roughness=None, roughness_scale=None, method="standard_step",
          n_steps: int = 100, max_step: float | None = None, critical_tolerance: float = CRITICAL_SLOPE_TOLERANCE,
          progress=None, chunk_size: int | None = None, **options) -> SweepResult:
    """Solve one reach for many scenarios of discharge and roughness at once.

    Scenario i takes ``discharge[i]`` and the roughness of row i; arrays of
    the same length pair up scenario by scenario, a single value applies to
    every scenario (for every combination of two swept inputs build a grid
    with :func:`numpy.meshgrid` and pass the flattened arrays).

    Parameters
    ----------
    reach : Reach
        The reach; what is not swept keeps the reach's value.
    discharge : array_like, shape (n,), optional
        Discharge of each scenario [length³/s].
    roughness : array_like, shape (n,) or (n, K), optional
        Roughness coefficient of each scenario (and segment, for an (n, K)
        array), in each segment's own law: Manning's n, Chezy's C or the sand
        roughness ks [length]. A 1-D array needs every segment to use the
        same law.
    roughness_scale : array_like, shape (n,), optional
        Factor multiplying every segment's resistance, with the semantics of
        the roughness objects' ``scaled``: Manning n·f, Chezy C/f, ks·f.
    method : str or Marcher subclass
        Marcher, as in :meth:`Reach.solve`.
    n_steps, max_step, critical_tolerance :
        As in :meth:`Reach.solve`.
    progress : bool or None
        Show a progress bar (needs tqdm). None: only when someone watches
        (a terminal or a notebook, not CI or tests).
    chunk_size : int, optional
        Solve the scenarios in blocks of this many (bounds memory; the bar
        advances per block). Default: one block, or about 50 blocks of at
        least 1,000 scenarios when the bar is shown. Blocks do not change
        the results.
    **options
        Options of the marcher (e.g. ``friction_average``).

    Returns
    -------
    SweepResult

    Raises
    ------
    InvalidInputError
        Nothing to sweep, arrays of mismatched lengths, non-positive or
        non-finite values, or a 1-D roughness array on segments with
        different friction laws.

    Examples
    --------
    >>> import numpy as np
    >>> import gvflow as gv
    >>> reach = gv.Reach(segments=[gv.Segment(length=500.0, slope=0.001, section=gv.Rectangular(width=3.0),
    ...                                       roughness=0.015)], discharge=5.0, downstream=gv.FixedDepth(2.0))
    >>> result = reach.sweep(discharge=[4.0, 5.0, 6.0])
    >>> len(result), result.depth.shape
    (3, (3, 101))
    >>> result.profile_types
    [['M1'], ['M1'], ['M1']]
    """
    from .reach import _check_steps

    marcher = get_marcher(method, **options)
    n_steps, max_step = _check_steps(n_steps, max_step)
    q, coef = _scenario_inputs(reach, discharge, roughness, roughness_scale)
    n = q.size
    show = progress_wanted(progress)
    if chunk_size is None:
        chunk = max(1000, math.ceil(n / 50)) if show else n
    else:
        if not isinstance(chunk_size, (int, np.integer)) or isinstance(chunk_size, bool) or chunk_size < 1:
            raise InvalidInputError(f"chunk_size must be a positive integer; got {chunk_size!r}")
        chunk = int(chunk_size)
    bar = _bar(progress, n, "sweep", "scenario") if n > chunk else _NoBar()
    parts = []
    try:
        for start in range(0, n, chunk):
            sl = slice(start, min(start + chunk, n))
            with arithmetic_guard():
                parts.append(solve_batch(reach, marcher, q[sl], None if coef is None else coef[sl], n_steps,
                                         max_step, critical_tolerance))
            bar.update(sl.stop - sl.start)
    finally:
        bar.close()
    sol = BatchSolution.concatenate(parts)
    if coef is None:
        # (a surveyed section's roughness per zone stays with the section: NaN here)
        coef = np.stack([s.coef if s.coef.ndim == 1 else np.full(s.n, np.nan) for s in sol.segs], axis=1)
    return SweepResult(reach, sol, q, coef, method=getattr(marcher, "name", str(method)))


# -- the stacked result -----------------------------------------------------------------------------


class SweepResult:
    """Profiles of many scenarios of one reach on shared stations (result of :func:`sweep`).

    Arrays have a leading scenario axis; stations run upstream to
    downstream and are the same for every scenario. A segment junction
    appears twice (its x repeats: the end of one segment, the head of the
    next), as does nothing else: where a scenario has a hydraulic jump
    between two stations, its depth there is the governing one (the
    supercritical side upstream of the jump, the subcritical side
    downstream); the jump itself is in the ``jump_*`` arrays, and
    ``result[i]`` gives the full :class:`~gvflow.result.Profile` with the two
    sequent depths inserted at the jump.

    Attributes
    ----------
    reach : Reach
        The reach swept (its own discharge and roughness are not used where
        swept).
    method : str
        Marcher name.
    discharge : ndarray, shape (n,)
        Discharge of each scenario [length³/s].
    roughness : ndarray, shape (n, K)
        Roughness coefficient of each scenario and segment, in the segment's
        law (Manning n, Chezy C or sand roughness ks).
    x, bed : ndarray, shape (M,)
        Distance from the upstream end and bed elevation [length].
    segment : ndarray of int, shape (M,)
        Segment index of each station.
    depth, stage : ndarray, shape (n, M)
        Governing depth and water-surface elevation [length].
    velocity, froude : ndarray, shape (n, M)
        Mean velocity [length/s] and Froude number [-] (computed on first use).
    regime : ndarray of int8, shape (n, M)
        +1 subcritical, 0 critical, -1 supercritical (:data:`REGIME_CODES`).
    normal_depths, critical_depths : ndarray, shape (n, K)
        Per scenario and segment [length]; normal depth NaN where none exists.
    slope_classes : ndarray of str, shape (n, K)
    jump_scenario, jump_x, jump_upstream_depth, jump_downstream_depth, jump_segment : ndarray
        Every jump of every scenario, one entry per jump, ordered by scenario
        then x.
    jump_count : ndarray of int, shape (n,)
        Number of jumps in each scenario.
    first_jump_x : ndarray, shape (n,)
        Location of each scenario's most upstream jump (NaN where none) [length].
    jumps : list of list of Jump
        Per scenario, as in :attr:`Profile.jumps`.
    profile_types : list of list of str
        Per scenario, as in :attr:`Profile.profile_types`.
    """

    def __init__(self, reach, solution: BatchSolution, discharge, roughness, method: str = "standard_step"):
        self.reach = reach
        self.method = method
        self.units = reach.resolved_units
        self._sol = solution
        self.discharge = np.asarray(discharge, float)
        self.roughness = np.asarray(roughness, float)
        self.x = solution.x
        self.bed = solution.bed
        self.segment = solution.segment
        self.depth = solution.depth
        self.regime = solution.regime.astype(np.int8)
        self.normal_depths = np.stack([s.yn for s in solution.segs], axis=1)
        self.critical_depths = np.stack([s.yc for s in solution.segs], axis=1)
        self.slope_classes = solution.slope_class.astype(str)
        self.jump_scenario = solution.jump_scenario
        self.jump_x = solution.jump_x
        self.jump_upstream_depth = solution.jump_y1
        self.jump_downstream_depth = solution.jump_y2
        self.jump_segment = solution.jump_segment
        n = self.discharge.size
        self.jump_count = np.bincount(self.jump_scenario, minlength=n)
        first = np.full(n, np.nan)
        # jumps are ordered by scenario then x: the first row of each scenario is its most upstream jump
        rows = np.flatnonzero(np.diff(self.jump_scenario, prepend=-1) != 0)
        first[self.jump_scenario[rows]] = self.jump_x[rows]
        self.first_jump_x = first
        self._jump_ptr = np.concatenate([[0], np.cumsum(self.jump_count)]).astype(np.int64)
        for name in ("discharge", "roughness", "depth", "regime", "normal_depths", "critical_depths",
                     "jump_count", "first_jump_x"):
            getattr(self, name).setflags(write=False)

    def to_xarray(self):
        """The scenarios as an xarray Dataset (needs the optional xarray: ``pip install 'gvflow[xarray]'``).

        Dimensions ``scenario`` and ``station`` (plus ``segment_index`` for
        per-segment inputs); coordinates ``discharge`` (per scenario), ``x``,
        ``bed`` and ``segment`` (per station; x repeats at a segment junction,
        so select stations by ``station``, or by ``x`` after dropping
        duplicates). Variables ``depth``, ``stage``, ``velocity``, ``froude``,
        ``regime`` (scenario, station), ``roughness``, ``normal_depth``,
        ``critical_depth`` (scenario, segment_index) and ``jump_count``,
        ``first_jump_x`` (scenario).
        """
        xr = import_xarray()
        L = self.units.length
        station = {"dims": ("scenario", "station")}
        per_seg = ("scenario", "segment_index")
        return xr.Dataset(
            data_vars={
                "depth": (station["dims"], np.asarray(self.depth), {"units": L}),
                "stage": (station["dims"], np.asarray(self.stage), {"units": L}),
                "velocity": (station["dims"], np.asarray(self.velocity), {"units": self.units.velocity}),
                "froude": (station["dims"], np.asarray(self.froude), {"units": "1"}),
                "regime": (station["dims"], np.asarray(self.regime),
                           {"meaning": "+1 subcritical, 0 critical, -1 supercritical"}),
                "roughness": (per_seg, np.asarray(self.roughness)),
                "normal_depth": (per_seg, np.asarray(self.normal_depths), {"units": L}),
                "critical_depth": (per_seg, np.asarray(self.critical_depths), {"units": L}),
                "jump_count": ("scenario", np.asarray(self.jump_count)),
                "first_jump_x": ("scenario", np.asarray(self.first_jump_x), {"units": L}),
            },
            coords={
                "scenario": np.arange(self.discharge.size),
                "station": np.arange(self.x.size),
                "discharge": ("scenario", np.asarray(self.discharge), {"units": self.units.discharge}),
                "x": ("station", np.asarray(self.x), {"units": L}),
                "bed": ("station", np.asarray(self.bed), {"units": L}),
                "segment": ("station", np.asarray(self.segment)),
            },
            attrs={"method": self.method, "units": self.units.name},
        )

    # -- derived arrays -------------------------------------------------------------------------
    @cached_property
    def stage(self) -> np.ndarray:
        """Water-surface elevation [length], shape (n, M)."""
        out = self.bed[None, :] + self.depth
        out.setflags(write=False)
        return out

    @cached_property
    def _kinematics(self):
        a = np.empty(self.depth.shape)
        t = np.empty(self.depth.shape)
        for k, s in enumerate(self._sol.segs):
            sel = self.segment == k
            props = s.properties(self.depth[:, sel])
            a[:, sel] = props[0]
            t[:, sel] = props[2]
        v = np.stack([s.discharge for s in self._sol.segs], axis=1)[:, self.segment] / a  # each segment's discharge
        fr = v * np.sqrt(t / (self.units.g * a))
        v.setflags(write=False)
        fr.setflags(write=False)
        return v, fr

    @property
    def velocity(self) -> np.ndarray:
        """Mean velocity Q/A [length/s], shape (n, M) (computed on first use)."""
        return self._kinematics[0]

    @property
    def froude(self) -> np.ndarray:
        """Froude number V / sqrt(g A/T) [-], shape (n, M) (computed on first use)."""
        return self._kinematics[1]

    @cached_property
    def jumps(self) -> list[list[Jump]]:
        """Hydraulic jumps of every scenario, upstream to downstream (as in :attr:`Profile.jumps`)."""
        sol = self._sol
        nj = self.jump_scenario.size
        fr = np.empty(nj)
        loss = np.empty(nj)
        junc = sol.jump_at_junction.astype(bool)
        k2 = self.jump_segment.astype(int)
        k1 = np.where(junc, k2 - 1, k2)
        g = self.units.g
        for k in np.unique(np.concatenate([k1, k2])) if nj else []:
            seg = sol.segs[k]
            up = np.flatnonzero(k1 == k)
            if up.size:
                sub = seg.take(self.jump_scenario[up])
                y1 = self.jump_upstream_depth[up]
                a1, _, t1, _, _ = sub.properties(y1)
                q = sub.discharge
                fr[up] = q / a1 * np.sqrt(t1 / (g * a1))
                loss[up] = sub.specific_energy(y1)
            dn = np.flatnonzero(k2 == k)
            if dn.size:
                sub = seg.take(self.jump_scenario[dn])
                loss[dn] -= sub.specific_energy(self.jump_downstream_depth[dn])
        out: list[list[Jump]] = [[] for _ in range(len(self))]
        for j in range(nj):
            y1, y2, f = float(self.jump_upstream_depth[j]), float(self.jump_downstream_depth[j]), float(fr[j])
            out[int(self.jump_scenario[j])].append(Jump(
                x=float(self.jump_x[j]), upstream_depth=y1, downstream_depth=y2, froude=f,
                energy_loss=float(loss[j]), length=float(_length_ratio(max(f, 1.0)) * y2),
                kind=jump_type(max(f, 1.0)), segment=int(k2[j]),
                where="at a segment junction" if junc[j] else "in segment"))
        return out

    @cached_property
    def profile_types(self) -> list[list[str]]:
        """Profile labels of every scenario, upstream to downstream (as in :attr:`Profile.profile_types`)."""
        return [[p.label for p in pieces] for pieces in profile_pieces(self._sol, np.arange(len(self)))]

    # -- scenarios as profiles ------------------------------------------------------------------
    def scenario_reach(self, i: int):
        """The reach of scenario ``i`` alone: the swept reach with its discharge and roughness."""
        i = self._index(i)
        segs = [s if s.roughness is None else s.model_copy(update={"roughness": type(s.roughness)(
                float(self.roughness[i, k]))}) for k, s in enumerate(self.reach.segments)]
        return self.reach.model_copy(update={"discharge": float(self.discharge[i]), "segments": segs})

    def _index(self, i) -> int:
        if isinstance(i, (bool, np.bool_)) or not isinstance(i, (int, np.integer)):
            raise InvalidInputError(f"a sweep is indexed by scenario number (an integer); got {i!r}")
        n = len(self)
        if not -n <= i < n:
            raise IndexError(f"scenario {i} out of range: the sweep has {n} scenarios")
        return int(i) % n

    def __len__(self) -> int:
        return self.discharge.size

    def __getitem__(self, i):
        """The :class:`~gvflow.result.Profile` of scenario ``i`` (a list of them for a slice)."""
        if isinstance(i, slice):
            return [self[j] for j in range(*i.indices(len(self)))]
        i = self._index(i)
        return Profile.from_batch(self.scenario_reach(i), self._sol, i, method=self.method)

    def __iter__(self):
        for i in range(len(self)):
            yield self[i]

    def __repr__(self):
        u = self.units
        n = len(self)
        with_jump = int(np.count_nonzero(self.jump_count))
        jx = self.jump_x
        jumps = (f"jumps in {with_jump} of {n} scenarios (x {jx.min():.2f}-{jx.max():.2f} {u.length})"
                 if jx.size else "no jumps")
        return (f"<SweepResult {n} scenarios x {self.x.size} stations over {self.x[-1]:g} {u.length}, "
                f"discharge {self.discharge.min():g}-{self.discharge.max():g} {u.discharge}, {jumps}, "
                f"depth {np.nanmin(self.depth):.3f}-{np.nanmax(self.depth):.3f} {u.length}>")


# -- independent reaches ----------------------------------------------------------------------------


class SolveManyError(GVFlowError):
    """Some reaches of :func:`solve_many` failed (raised with ``errors="raise"``).

    Attributes
    ----------
    results : list
        One entry per input reach: its Profile, or the exception it raised.
    failures : dict of int to Exception
        Index of each failed reach and its error.
    """

    def __init__(self, results: list, failures: dict):
        self.results = results
        self.failures = failures
        lines = [f"{len(failures)} of {len(results)} reaches failed:"]
        for i, exc in list(failures.items())[:10]:
            lines.append(f"  reach {i}: {type(exc).__name__}: {exc}")
        if len(failures) > 10:
            lines.append(f"  ... and {len(failures) - 10} more (see .failures)")
        lines.append("The solved profiles are in .results (failed slots hold the error).")
        super().__init__("\n".join(lines))

    def __reduce__(self):
        return (type(self), (self.results, self.failures))


def _portable(exc: BaseException) -> Exception:
    """The exception itself when it pickles, else a GVFlowError carrying its text."""
    try:
        pickle.loads(pickle.dumps(exc))
        return exc
    except Exception:
        return GVFlowError(f"{type(exc).__name__}: {exc}")


def _solve_chunk(reaches, method, options, compact=False):
    """Solve a list of reaches in one task; each slot holds the Profile or the exception raised.

    With ``compact`` a Profile travels as its state without the reach (the caller has the reaches):
    a fraction of the pickling work, which the receiving process does alone.
    """
    out = []
    for r in reaches:
        try:
            p = r.solve(method=method, **options)
            out.append(p._state() if compact else p)
        except Exception as exc:
            out.append(_portable(exc))
    return out


def _workers(executor) -> int:
    w = getattr(executor, "_max_workers", None)
    if isinstance(w, int) and w > 0:
        return w
    client = getattr(executor, "_client", None)  # a Dask distributed ClientExecutor
    if client is not None:
        try:
            return max(1, sum(client.nthreads().values()))
        except Exception:  # pragma: no cover - depends on the cluster
            pass
    return os.cpu_count() or 1


def solve_many(reaches, executor: Executor | None = None, method="standard_step", *, errors: str = "return",
               chunk_size: int | None = None, progress=None, **solve_options) -> list:
    """Solve independent reaches and return their results in input order.

    Parameters
    ----------
    reaches : iterable of Reach
        The reaches; any mix of geometry, discharge and controls.
    executor : concurrent.futures.Executor, optional
        Where to run: None solves here, one reach after another; a
        :class:`~concurrent.futures.ProcessPoolExecutor` uses local
        processes; a Dask distributed client's ``client.get_executor()``
        uses a cluster (install the ``dask`` extra). Reaches travel in
        chunks, one task per chunk, so many small reaches do not pay one
        round trip each.
    method : str or Marcher subclass
        Marcher, as in :meth:`Reach.solve`.
    errors : {"return", "raise"}
        What a failing reach gives. "return" (default): its slot holds the
        exception it raised (a :class:`~gvflow.errors.GVFlowError` for bad
        input or impossible physics); test with ``isinstance(r, Exception)``.
        "raise": after every reach has run, raise :class:`SolveManyError`
        listing the failures, with all results in its ``results``. Either
        way no slot is silently empty.
    chunk_size : int, optional
        Reaches per task; default about four tasks per worker.
    progress : bool or None
        Progress bar over reaches (needs tqdm); None: only when someone
        watches (a terminal or a notebook, not CI or tests).
    **solve_options
        Passed to :meth:`Reach.solve` (``n_steps``, ``max_step``, marcher
        options...).

    Returns
    -------
    list
        One :class:`~gvflow.result.Profile` (or exception) per reach, in input order.

    Raises
    ------
    InvalidInputError
        An entry that is not a Reach, an unknown method or option, a bad
        ``errors`` or ``chunk_size``, or an ``executor`` without ``submit``.
    SolveManyError
        With ``errors="raise"``, when at least one reach failed.

    Examples
    --------
    >>> import gvflow as gv
    >>> sec = gv.Rectangular(width=3.0)
    >>> reaches = [gv.Reach(segments=[gv.Segment(length=300.0, slope=0.001, section=sec, roughness=0.015)],
    ...                     discharge=q, downstream=gv.FixedDepth(2.0)) for q in (4.0, 5.0, 6.0)]
    >>> [p.profile_types for p in gv.solve_many(reaches)]
    [['M1'], ['M1'], ['M1']]
    """
    from .reach import Reach

    reaches = list(reaches)
    for i, r in enumerate(reaches):
        if not isinstance(r, Reach):
            raise InvalidInputError(f"reaches[{i}] must be a gv.Reach; got {type(r).__name__}")
    if errors not in ("return", "raise"):
        raise InvalidInputError(f"errors must be 'return' or 'raise'; got {errors!r}")
    if executor is not None and not callable(getattr(executor, "submit", None)):
        raise InvalidInputError(
            f"executor must be a concurrent.futures.Executor (e.g. ProcessPoolExecutor, or a Dask client's "
            f"get_executor()); got {executor!r}")
    marcher_options = {k: v for k, v in solve_options.items() if k not in ("n_steps", "max_step",
                                                                           "critical_tolerance")}
    get_marcher(method, **marcher_options)  # bad method or options: fail here, not once per reach
    n = len(reaches)
    if chunk_size is not None and (not isinstance(chunk_size, (int, np.integer)) or isinstance(chunk_size, bool)
                                   or chunk_size < 1):
        raise InvalidInputError(f"chunk_size must be a positive integer; got {chunk_size!r}")
    results: list = [None] * n
    bar = _bar(progress, n, "reaches", "reach")
    try:
        if executor is None:
            for i, r in enumerate(reaches):
                results[i] = _solve_chunk([r], method, solve_options)[0]
                bar.update(1)
        elif n:
            size = int(chunk_size) if chunk_size else max(1, math.ceil(n / (4 * _workers(executor))))
            futures = {}
            for start in range(0, n, size):
                fut = executor.submit(_solve_chunk, reaches[start:start + size], method, solve_options, True)
                futures[fut] = (start, min(start + size, n))
            try:
                for fut in as_completed(futures):
                    a, b = futures[fut]
                    try:
                        chunk = fut.result()
                    except Exception as exc:  # the task itself failed (a worker died, a pickling error...)
                        err = GVFlowError(f"the task solving reaches {a}-{b - 1} failed: {type(exc).__name__}: "
                                          f"{exc}")
                        err.__cause__ = exc
                        chunk = [err] * (b - a)
                    results[a:b] = [c if isinstance(c, BaseException) else Profile._from_state(r, c)
                                    for r, c in zip(reaches[a:b], chunk, strict=True)]
                    bar.update(b - a)
            except BaseException:  # interrupted: do not leave queued chunks running
                for fut in futures:
                    fut.cancel()
                raise
    finally:
        bar.close()
    if errors == "raise":
        failures = {i: r for i, r in enumerate(results) if isinstance(r, BaseException)}
        if failures:
            raise SolveManyError(results, failures)
    return results

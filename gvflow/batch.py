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
import types
import typing
import warnings
from concurrent.futures import Executor, as_completed
from functools import cached_property

import numpy as np
from pydantic import BaseModel

from ._core.codes import REGIME_NAMES
from ._pieces import profile_pieces
from ._plausible import _check_end_depths, arithmetic_guard
from ._solver import BatchSolution, solve_batch
from ._validate import finite_array, positive_array
from .controls import EndState
from .errors import GVFlowError, GVFlowWarning, InvalidInputError
from .friction import check_manning_n
from .jumps import Jump, _length_ratio, jump_type
from .profiles import get_marcher
from .reach import Reach, _check_steps, provide
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


def _own_coefficients(seg):
    """A segment's own roughness coefficient: a float, or an array with one per roughness zone of a surveyed
    section (each in its law: Manning's n, Chezy's C or the sand roughness ks)."""
    if seg.roughness is not None:
        return seg.roughness.kernel_spec()[1]
    return np.array([r.kernel_spec()[1] for r in seg.section.roughness])


def _roughness_objects(seg) -> list:
    """The roughness objects of a segment: its own one, or one per roughness zone of a surveyed section."""
    return [seg.roughness] if seg.roughness is not None else list(seg.section.roughness)


def _scenario_inputs(reach, discharge, roughness, roughness_scale, vary=None):
    """(discharge (n,), roughness per segment or None, varied {name: (n,)}) from the sweep keywords, validated.

    The roughness is a list with one array per segment: (n,) for a geometric section, (n, zones) for a
    surveyed one (one column per roughness zone, in the order of its ``roughness``).
    """
    segs = reach.segments
    nseg = len(segs)
    surveyed = [k for k, s in enumerate(segs) if s.roughness is None]
    given = {}
    if discharge is not None:
        q = positive_array(discharge, "discharge")
        if q.ndim > 1:
            raise InvalidInputError(f"discharge must be a number or a 1-D array; got shape {q.shape}")
        given["discharge"] = q
    if roughness is not None and roughness_scale is not None:
        raise InvalidInputError("give either roughness (coefficients) or roughness_scale (factors), not both")
    if roughness is not None and surveyed:
        k = surveyed[0]
        raise InvalidInputError(
            f"roughness= gives one coefficient per segment, but segment {k} is a Surveyed section with a roughness "
            f"per zone: scale every zone with roughness_scale=, or give the coefficients by name in vary= "
            f"('segments.{k}.roughness.0' for its first zone, 'segments.K.roughness' for a geometric segment; "
            "gvflow.batch.vary_choices lists them)")
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
        if f.ndim > 2 or (f.ndim == 2 and f.shape[1] != nseg):
            raise InvalidInputError(
                f"roughness_scale must be a number, a 1-D array (one factor per scenario) or an (n, {nseg}) array "
                f"(per scenario and segment); got shape {f.shape}")
        given["roughness_scale"] = f
    varied = _parse_vary(reach, vary)
    choices = vary_choices(reach)
    named = {name: choices[name][1] for name in varied if choices[name][0] == "roughness"}
    if named and (roughness is not None or roughness_scale is not None):
        raise InvalidInputError(
            f"vary[{next(iter(named))!r}] sets a roughness coefficient by name: give roughness coefficients either "
            "by name in vary= or with roughness= / roughness_scale=, not both")
    given.update(varied)
    if not given:
        raise InvalidInputError("nothing to sweep: give discharge=, roughness=, roughness_scale= or vary= as an "
                                "array")
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
        c = np.broadcast_to(c.reshape(-1, 1) if c.ndim < 2 else c, (n, nseg)).astype(float)
        coef = [c[:, k].copy() for k in range(nseg)]
    elif "roughness_scale" in given:
        f = given["roughness_scale"]
        f = np.broadcast_to(f.reshape(-1, 1) if f.ndim < 2 else f, (n, nseg)).astype(float)
        coef = []
        for k, s in enumerate(segs):
            cols = [_scaled_coefficients(r, f[:, k]) for r in _roughness_objects(s)]
            coef.append(cols[0] if s.roughness is not None else np.stack(cols, axis=1))
    elif named:
        coef = [np.array(np.broadcast_to(_own_coefficients(s), (n,) + np.shape(_own_coefficients(s))))
                for s in segs]
        for name, (k, z) in named.items():
            v = positive_array(varied[name], f"vary[{name!r}]")
            if segs[k].roughness is None:
                coef[k][:, z] = v
            else:
                coef[k][:] = v
    if coef is not None:
        check_coefficients(reach, coef)
    varied = {name: np.broadcast_to(v, (n,)).astype(float) for name, v in varied.items()}
    for v in varied.values():
        v.setflags(write=False)
    return np.ascontiguousarray(q), coef, varied


def check_coefficients(reach, coef) -> None:
    """Refuse Manning's n no surface has, in a roughness list of :func:`_scenario_inputs`."""
    for k, (s, c) in enumerate(zip(reach.segments, coef, strict=True)):
        if _roughness_objects(s)[0].law == "manning":
            check_manning_n(c, f"Manning's n of segment {k}" + (" (zone roughness)" if c.ndim > 1 else ""))


def _core_coefficients(reach, coef):
    """The solver's roughness per segment: a surveyed section's roughness zones as its core zones."""
    return [c if s.roughness is not None else s.section.core_zone_rows(c)
            for s, c in zip(reach.segments, coef, strict=True)]


def roughness_table(reach, coef, n: int) -> np.ndarray:
    """The roughness of every scenario as one array: (n, K) for a reach of geometric sections, (n, K, Z) when a
    segment is surveyed (Z its most roughness zones; a geometric segment's coefficient in zone 0, NaN past a
    segment's zones). ``coef`` is a roughness list of :func:`_scenario_inputs`, or None for the reach's own."""
    segs = reach.segments
    if coef is None:
        coef = [np.broadcast_to(_own_coefficients(s), (n,) + np.shape(_own_coefficients(s))) for s in segs]
    if all(s.roughness is not None for s in segs):
        return np.stack([np.asarray(c, float) for c in coef], axis=1)
    zones = max(len(_roughness_objects(s)) for s in segs)
    out = np.full((n, len(segs), zones), np.nan)
    for k, c in enumerate(coef):
        c = np.asarray(c, float).reshape(n, -1)
        out[:, k, :c.shape[1]] = c
    return out


# -- inputs other than discharge and roughness (``vary``) ------------------------------------------


def _float_leaves(annotation) -> bool:
    """Whether a field's annotation admits a float (``float``, ``float | None``, ``Annotated[float, ...]``)."""
    origin = typing.get_origin(annotation)
    if origin is typing.Annotated:
        return _float_leaves(typing.get_args(annotation)[0])
    if origin in (typing.Union, types.UnionType):
        return any(_float_leaves(a) for a in typing.get_args(annotation))
    return annotation is float


def _number_fields(model, prefix=()) -> list[tuple[str, ...]]:
    """Paths of the float fields of a model, nested models included (a culvert's barrel, say)."""
    out = []
    for name, info in type(model).model_fields.items():
        value = getattr(model, name)
        if isinstance(value, BaseModel):
            out += _number_fields(value, prefix + (name,))
        elif _float_leaves(info.annotation):
            out.append(prefix + (name,))
    return out


def vary_choices(reach) -> dict[str, tuple]:
    """The names ``vary`` accepts for this reach, each with its target (location, field path).

    Locations: ``"upstream"``, ``"downstream"``, a segment index k (the gate at the head of
    segment k), ``"slope"`` (field path: the segment index) and ``"roughness"`` (field path:
    (segment index, zone index), zone 0 for a geometric section). A control with a main value
    (``FixedDepth.depth``, ``FixedStage.elevation``, ``SluiceGate.opening``, ``Pool.level``) is
    also named by its location alone. Roughness: ``"segments.K.roughness"`` is the coefficient of
    a geometric segment, ``"segments.K.roughness.Z"`` that of zone Z of a surveyed section (its
    ``roughness[Z]``, zones counted from the left from 0).

    Examples
    --------
    >>> import gvflow as gv
    >>> from gvflow.batch import vary_choices
    >>> reach = gv.Reach(segments=[gv.Segment(length=500.0, slope=0.001, section=gv.Rectangular(width=3.0),
    ...                                       roughness=0.015)], discharge=5.0, downstream=gv.FixedStage(2.0))
    >>> list(vary_choices(reach))
    ['downstream', 'downstream.elevation', 'segments.0.slope', 'segments.0.roughness']
    """
    out: dict[str, tuple] = {}

    def control(label, loc, ctrl):
        main = getattr(type(ctrl), "_value_field", "")
        if main:
            out[label] = (loc, (main,))
        for path in _number_fields(ctrl):
            out[label + "." + ".".join(path)] = (loc, path)

    if reach.upstream is not None:
        control("upstream", "upstream", reach.upstream)
    if reach.downstream is not None:
        control("downstream", "downstream", reach.downstream)
    for k, seg in enumerate(reach.segments):
        out[f"segments.{k}.slope"] = ("slope", k)
        if seg.roughness is not None:
            out[f"segments.{k}.roughness"] = ("roughness", (k, 0))
        else:
            for z in range(len(seg.section.roughness)):
                out[f"segments.{k}.roughness.{z}"] = ("roughness", (k, z))
        if seg.gate is not None:
            control(f"segments.{k}.gate", k, seg.gate)
    return out


def _rebuild(model, updates: dict):
    """``model`` with the float fields at the paths of ``updates`` replaced, validated like new input."""
    heads: dict[str, dict] = {}
    for path, value in updates.items():
        heads.setdefault(path[0], {})[path[1:]] = value
    data = {name: getattr(model, name) for name in type(model).model_fields}
    for head, sub in heads.items():
        data[head] = sub[()] if () in sub else _rebuild(data[head], sub)
    return type(model)(**data)


def _parse_vary(reach, vary) -> dict[str, np.ndarray]:
    """``vary`` checked against :func:`vary_choices`: name -> finite values (1-D)."""
    if vary is None:
        return {}
    if not isinstance(vary, dict):
        raise InvalidInputError(f"vary must be a dict of parameter name -> values; got {type(vary).__name__}")
    choices = vary_choices(reach)
    out, seen = {}, {}
    for name, values in vary.items():
        if name in ("discharge", "roughness", "roughness_scale"):
            raise InvalidInputError(f"vary[{name!r}]: give {name} by its own keyword ({name}=...)")
        if name not in choices:
            raise InvalidInputError(
                f"vary: unknown parameter {name!r} for this reach; valid choices are: {', '.join(choices)}. "
                "A control's level is named by its end ('downstream', 'upstream' or 'segments.K.gate'), another "
                "of its numbers by the end and the field ('downstream.crest_height'), a bed slope by "
                "'segments.K.slope', a roughness coefficient by 'segments.K.roughness' (zone Z of a surveyed "
                "section: 'segments.K.roughness.Z')")
        target = choices[name]
        if target in seen:
            raise InvalidInputError(f"vary: {name!r} and {seen[target]!r} name the same parameter; give it once")
        seen[target] = name
        v = finite_array(values, f"vary[{name!r}]")
        if v.ndim > 1:
            raise InvalidInputError(f"vary[{name!r}] must be a number or a 1-D array; got shape {v.shape}")
        out[name] = v
    return out


class _PerScenarioControl:
    """Controls that differ from scenario to scenario, seen by the solver as one control.

    ``depth_at``, ``check_solved`` and ``notes`` ask each distinct control about its own scenarios;
    ``for_scenario(s)`` is the control of scenario s; any other attribute is the
    per-scenario array of that attribute (``gate.opening``, say).
    """

    def __init__(self, controls, inverse):
        self.controls = controls
        self.inverse = np.asarray(inverse, dtype=np.intp)
        order = np.argsort(self.inverse, kind="stable")  # scenario indices stay sorted within a control
        cuts = np.flatnonzero(np.diff(self.inverse[order])) + 1
        self._parts = [(int(self.inverse[g[0]]), g) for g in np.split(order, cuts)]

    def for_scenario(self, s):
        return self.controls[self.inverse[s]]

    def check_end(self, end):
        self.controls[0].check_end(end)

    def _states(self, state):
        for j, idx in self._parts:
            sub = EndState(state.end, state.seg.take(idx), state.bed_elevation, np.asarray(state.slope_class)[idx])
            yield self.controls[j], idx, sub

    def depth_at(self, state):
        out = np.empty(state.seg.n)
        for ctrl, idx, sub in self._states(state):
            out[idx] = np.asarray(ctrl.depth_at(sub), dtype=float)
        return out

    def check_solved(self, state, depth):
        depth = np.asarray(depth, dtype=float)
        for ctrl, idx, sub in self._states(state):
            ctrl.check_solved(sub, depth[idx])

    def notes(self, state, depth):
        out: list = [None] * state.seg.n
        depth = np.asarray(depth, dtype=float)
        for ctrl, idx, sub in self._states(state):
            for i, lines in zip(idx, ctrl.notes(sub, depth[idx]), strict=True):
                out[i] = lines
        return out

    def __getattr__(self, name):
        if name.startswith("_") or name in ("controls", "inverse"):
            raise AttributeError(name)
        values = [getattr(c, name) for c in self.controls]
        if any(callable(v) for v in values):
            raise AttributeError(f"{name} is a method; call it on one scenario's control (for_scenario)")
        return np.array(values)[self.inverse]

    def __repr__(self):
        return f"{self.controls[0]!r} (one of {len(self.controls)} varied per scenario)"


class _Scenarios:
    """How the scenarios of a sweep differ beyond discharge and roughness (``vary``).

    Scenarios sharing their bed slopes form a group, solved together on that group's reach;
    varied control numbers stay inside a group's batch: every distinct control is built and
    validated once and answers for its own scenarios.
    """

    def __init__(self, reach, varied: dict[str, np.ndarray], n: int):
        self.reach = reach
        self.varied = varied
        choices = vary_choices(reach)
        slopes = [(name, choices[name][1]) for name in varied if choices[name][0] == "slope"]
        by_loc: dict = {}
        for name in varied:
            loc, path = choices[name]
            if loc not in ("slope", "roughness"):  # roughness travels to the solver as coefficients
                by_loc.setdefault(loc, []).append((name, path))
        # groups of equal slopes
        if slopes:
            table = np.stack([varied[name] for name, _ in slopes], axis=1)
            rows, inverse = np.unique(table, axis=0, return_inverse=True)
            inverse = inverse.ravel()
            self.groups = []
            for j, row in enumerate(rows):
                segs = list(reach.segments)
                for (name, k), value in zip(slopes, row, strict=True):
                    try:
                        segs[k] = _rebuild(segs[k], {("slope",): float(value)})
                    except GVFlowError as exc:
                        i = int(np.flatnonzero(inverse == j)[0])
                        raise InvalidInputError(f"vary[{name!r}] = {value:g} (scenario {i}): {exc}") from None
                self.groups.append((reach.model_copy(update={"segments": segs}), np.flatnonzero(inverse == j)))
        else:
            self.groups = [(reach, np.arange(n))]
        self.group_of = np.zeros(n, np.intp)
        self.local = np.zeros(n, np.intp)
        for g, (_, idx) in enumerate(self.groups):
            self.group_of[idx] = g
            self.local[idx] = np.arange(idx.size)
        # distinct controls per location
        self.controls: dict = {}
        for loc, fields in by_loc.items():
            base = reach.downstream if loc == "downstream" else reach.upstream if loc == "upstream" else \
                reach.segments[loc].gate
            table = np.stack([varied[name] for name, _ in fields], axis=1)
            rows, inverse = np.unique(table, axis=0, return_inverse=True)
            inverse = inverse.ravel()
            built = []
            for j, row in enumerate(rows):
                try:
                    built.append(_rebuild(base, {path: float(v) for (_, path), v in zip(fields, row, strict=True)}))
                except GVFlowError as exc:
                    i = int(np.flatnonzero(inverse == j)[0])
                    given = ", ".join(f"{name} = {v:g}" for (name, _), v in zip(fields, row, strict=True))
                    raise InvalidInputError(f"vary: {given} (scenario {i}): {exc}") from None
            self.controls[loc] = (built, inverse)
        self._check_depths()

    def _check_depths(self):
        """The plausibility checks of a reach's end depths, for every distinct control in every group."""
        units = self.reach.resolved_units
        for reach_g, idx in self.groups:
            for loc, (built, inverse) in self.controls.items():
                for j in np.unique(inverse[idx]):
                    try:
                        _check_end_depths(self._with(reach_g, {loc: built[j]}), units, units.length_per_metre)
                    except InvalidInputError as exc:
                        i = int(idx[np.flatnonzero(inverse[idx] == j)[0]])
                        raise InvalidInputError(f"vary (scenario {i}): {exc}") from None

    @staticmethod
    def _with(reach, controls: dict):
        """``reach`` with controls replaced ({"upstream" | "downstream" | segment index: control})."""
        update, segs = {}, None
        for loc, ctrl in controls.items():
            if isinstance(loc, str):
                update[loc] = ctrl
            else:
                segs = list(reach.segments) if segs is None else segs
                segs[loc] = segs[loc].model_copy(update={"gate": ctrl})
        if segs is not None:
            update["segments"] = segs
        return reach.model_copy(update=update) if update else reach

    def controls_for(self, idx: np.ndarray) -> dict:
        """The solver's ``controls`` for scenarios ``idx`` (sorted): a control, or per-scenario controls."""
        out = {}
        for loc, (built, inverse) in self.controls.items():
            inv = inverse[idx]
            out[loc] = built[int(inv[0])] if np.all(inv == inv[0]) else _PerScenarioControl(built, inv)
        return out

    def reach_of(self, i: int):
        """Scenario i's reach, discharge and roughness aside: its group's slopes and its own controls."""
        reach_g = self.groups[self.group_of[i]][0]
        return self._with(reach_g, {loc: built[inverse[i]] for loc, (built, inverse) in self.controls.items()})


def sweep(reach, discharge=None, *, roughness=None, roughness_scale=None, vary=None, method="standard_step",
          n_steps: int = 100, max_step: float | None = None, critical_tolerance: float = CRITICAL_SLOPE_TOLERANCE,
          progress=None, chunk_size: int | None = None, **options) -> SweepResult:
    """Solve one reach for many scenarios of discharge, roughness, control levels, structures and slopes.

    Scenario i takes ``discharge[i]``, the roughness of row i and value i of
    every array in ``vary``; arrays of the same length pair up scenario by
    scenario, a single value applies to every scenario (for every
    combination of two swept inputs build a grid with
    :func:`numpy.meshgrid` and pass the flattened arrays).

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
        same law. Not for a reach with :class:`~gvflow.Surveyed` sections,
        whose zones each have a coefficient: give those by name in ``vary``
        (``"segments.K.roughness.Z"``) or scale them with ``roughness_scale``.
    roughness_scale : array_like, shape (n,) or (n, K), optional
        Factor multiplying the resistance of every segment (and every zone of
        a surveyed section), one per scenario, or per scenario and segment
        for an (n, K) array, with the semantics of the roughness objects'
        ``scaled``: Manning n·f, Chezy C/f, ks·f.
    vary : dict of str to array_like, shape (n,), optional
        Other inputs of the reach, each named by its field path in the reach
        and given one value per scenario, in the field's own unit:

        * ``"downstream"``, ``"upstream"``: the main value of that end's
          control: the depth of a :class:`~gvflow.FixedDepth`, the level of a
          :class:`~gvflow.FixedStage` or :class:`~gvflow.Pool`, the opening
          of a :class:`~gvflow.SluiceGate` (e.g. a tailwater level).
        * ``"downstream.FIELD"``, ``"upstream.FIELD"``: any number of that
          control, nested ones too: ``"downstream.crest_height"`` and
          ``"downstream.tailwater_level"`` of a :class:`~gvflow.Weir`,
          ``"downstream.tailwater"`` and ``"downstream.barrel.span"`` of a
          :class:`~gvflow.Culvert`, ``"upstream.contraction"``...
        * ``"segments.K.gate"``, ``"segments.K.gate.FIELD"``: the gate at
          the head of segment K.
        * ``"segments.K.slope"``: the bed slope of segment K [-].
        * ``"segments.K.roughness"``: the roughness coefficient of segment K
          (a geometric section), in its law; ``"segments.K.roughness.Z"``:
          that of zone Z of segment K's :class:`~gvflow.Surveyed` section
          (its ``roughness[Z]``, zones counted from the left from 0; a zone
          not named keeps its value). Not together with ``roughness`` or
          ``roughness_scale``.

        :func:`vary_choices` lists the names a reach accepts. Each distinct
        control is built and checked as if given to the reach (a bad value
        raises the control's own error, naming the scenario). Control
        numbers stay in the vectorised batch: the profiles of all scenarios
        are marched together, and each distinct control gives the depth at
        its end for its own scenarios. That is cheap for a level or a depth;
        a structure whose relation is solved by iteration (a weir, a
        culvert) pays it once per distinct value, so a Monte Carlo over a
        weir's crest costs several times one over roughness alone. A slope
        changes the bed, so
        the scenarios are solved in groups of equal slopes: a sweep over a
        few slopes costs a few batches, a Monte Carlo over a slope one
        solve per sample.
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
        non-finite values, a 1-D roughness array on segments with
        different friction laws, ``roughness`` on a reach with surveyed
        sections, roughness given both by name and by keyword, or a name in
        ``vary`` this reach does not have (the message lists the valid ones).

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

    A tailwater level and a weir's crest:

    >>> tail = reach.sweep(vary={"downstream": [1.8, 2.0, 2.2]})
    >>> tail.depth[:, -1].tolist()
    [1.8, 2.0, 2.2]
    >>> weir = reach.model_copy(update={"downstream": gv.Weir(crest_height=1.5)})
    >>> crest = weir.sweep(vary={"downstream.crest_height": [1.2, 1.5]})
    >>> crest.depth_at(500.0).round(4).tolist()
    [2.0917, 2.4019]

    A compound channel surveyed as ground points, its floodplain zones' roughness swept:

    >>> section = gv.Surveyed(offset=[0, 0, 30, 31, 39, 40, 70, 70], elevation=[3, 2, 1.5, 0, 0, 1.5, 2, 3],
    ...                       roughness=[0.05, 0.03, 0.05], zone_edges=[30, 40])
    >>> river = gv.Reach(segments=[gv.Segment(length=400.0, slope=0.001, section=section)], discharge=30.0,
    ...                  downstream=gv.FixedDepth(2.2))
    >>> plain = river.sweep(vary={"segments.0.roughness.0": [0.04, 0.08], "segments.0.roughness.2": [0.04, 0.08]})
    >>> plain.roughness.shape  # (scenarios, segments, zones)
    (2, 1, 3)
    >>> plain.scenario_reach(1).segments[0].section.roughness
    [Manning(n=0.08), Manning(n=0.03), Manning(n=0.08)]
    """
    marcher = get_marcher(method, **options)
    n_steps, max_step = _check_steps(n_steps, max_step)
    q, coef, varied = _scenario_inputs(reach, discharge, roughness, roughness_scale, vary)
    return _solve_scenarios(reach, marcher, q, coef, varied, n_steps, max_step, critical_tolerance, progress,
                            chunk_size, method)


def _solve_scenarios(reach, marcher, q, coef, varied, n_steps, max_step, critical_tolerance, progress, chunk_size,
                     method) -> SweepResult:
    """:func:`sweep` of validated inputs (those of :func:`_scenario_inputs`)."""
    n = q.size
    plan = _Scenarios(reach, varied, n)
    show = progress_wanted(progress)
    if chunk_size is None:
        chunk = max(1000, math.ceil(n / 50)) if show else n
    else:
        if not isinstance(chunk_size, (int, np.integer)) or isinstance(chunk_size, bool) or chunk_size < 1:
            raise InvalidInputError(f"chunk_size must be a positive integer; got {chunk_size!r}")
        chunk = int(chunk_size)
    bar = _bar(progress, n, "sweep", "scenario") if n > chunk or len(plan.groups) > 1 else _NoBar()
    core_coef = None if coef is None else _core_coefficients(reach, coef)
    sols = []
    try:
        for reach_g, idx in plan.groups:
            parts = []
            for start in range(0, idx.size, chunk):
                sub = idx[start:start + chunk]
                with arithmetic_guard():
                    parts.append(solve_batch(reach_g, marcher, q[sub],
                                             None if core_coef is None else [c[sub] for c in core_coef], n_steps,
                                             max_step, critical_tolerance, controls=plan.controls_for(sub)))
                bar.update(sub.size)
            sols.append(BatchSolution.concatenate(parts))
    finally:
        bar.close()
    return SweepResult(reach, sols if len(sols) > 1 else sols[0], q, roughness_table(reach, coef, n),
                       method=getattr(marcher, "name", str(method)), scenarios=plan)


def _jumps_of(sol: BatchSolution, discharge: np.ndarray, g: float):
    """(scenario, Jump) for every jump of ``sol``, by scenario then x (as in :attr:`Profile.jumps`)."""
    nj = sol.jump_scenario.size
    fr = np.empty(nj)
    loss = np.empty(nj)
    junc = sol.jump_at_junction.astype(bool)
    k2 = sol.jump_segment.astype(int)
    k1 = np.where(junc, k2 - 1, k2)
    for k in np.unique(np.concatenate([k1, k2])) if nj else []:
        seg = sol.segs[k]
        up = np.flatnonzero(k1 == k)
        if up.size:
            sub = seg.take(sol.jump_scenario[up])
            y1 = sol.jump_y1[up]
            a1, _, t1, _, _ = sub.properties(y1)
            q = sub.discharge  # the segment's own discharge (inflows included)
            fr[up] = q / a1 * np.sqrt(t1 / (g * a1))
            loss[up] = sub.specific_energy(y1)
        dn = np.flatnonzero(k2 == k)
        if dn.size:
            sub = seg.take(sol.jump_scenario[dn])
            loss[dn] -= sub.specific_energy(sol.jump_y2[dn])
    out = []
    for j in range(nj):
        y1, y2, f = float(sol.jump_y1[j]), float(sol.jump_y2[j]), float(fr[j])
        out.append((int(sol.jump_scenario[j]), Jump(
            x=float(sol.jump_x[j]), upstream_depth=y1, downstream_depth=y2, froude=f,
            energy_loss=float(loss[j]), length=float(_length_ratio(max(f, 1.0)) * y2),
            kind=jump_type(max(f, 1.0)), segment=int(k2[j]),
            where="at a segment junction" if junc[j] else "in segment")))
    return out


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
        The reach swept (its own discharge, roughness and other inputs are
        not used where swept).
    method : str
        Marcher name.
    discharge : ndarray, shape (n,)
        Discharge of each scenario [length³/s].
    roughness : ndarray, shape (n, K), or (n, K, Z) when a segment is surveyed
        Roughness coefficient of each scenario and segment, in the segment's
        law (Manning n, Chezy C or sand roughness ks). With a
        :class:`~gvflow.Surveyed` section in the reach, ``roughness[i, k, z]``
        is the coefficient of zone z of segment k (Z the most zones of any
        segment; a geometric segment's in zone 0, NaN past a segment's zones).
    varied : dict of str to ndarray, shape (n,)
        The inputs given in ``vary``, by name, one value per scenario.
    x : ndarray, shape (M,)
        Distance from the upstream end [length].
    bed : ndarray, shape (M,), or (n, M) when the slopes vary
        Bed elevation [length].
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

    def __init__(self, reach, solution, discharge, roughness, method: str = "standard_step", scenarios=None):
        self.reach = reach
        self.method = method
        self.units = reach.resolved_units
        self.discharge = np.asarray(discharge, float)
        self.roughness = np.asarray(roughness, float)
        n = self.discharge.size
        self._plan = _Scenarios(reach, {}, n) if scenarios is None else scenarios
        self.varied = dict(self._plan.varied)
        sols = [solution] if isinstance(solution, BatchSolution) else list(solution)
        # (scenario indices, solution) of each group of scenarios solved together
        self._parts = [(idx, sol) for (_, idx), sol in zip(self._plan.groups, sols, strict=True)]
        first = sols[0]
        self.x = first.x
        self.segment = first.segment
        if len(sols) == 1:
            sol = first
            self.bed = sol.bed
            self.depth = sol.depth
            self.regime = sol.regime.astype(np.int8)
            self.normal_depths = np.stack([s.yn for s in sol.segs], axis=1)
            self.critical_depths = np.stack([s.yc for s in sol.segs], axis=1)
            self.slope_classes = sol.slope_class.astype(str)
            jumps = (sol.jump_scenario, sol.jump_x, sol.jump_y1, sol.jump_y2, sol.jump_segment, sol.jump_after,
                     sol.jump_at_junction)
        else:
            m, k = first.x.size, len(first.segs)
            self.depth = np.empty((n, m))
            self.regime = np.empty((n, m), np.int8)
            bed = np.empty((n, m))
            self.normal_depths, self.critical_depths = np.empty((n, k)), np.empty((n, k))
            self.slope_classes = np.empty((n, k), dtype=first.slope_class.astype(str).dtype)
            rows = []
            for idx, sol in self._parts:
                self.depth[idx] = sol.depth
                self.regime[idx] = sol.regime
                bed[idx] = sol.bed
                self.normal_depths[idx] = np.stack([s.yn for s in sol.segs], axis=1)
                self.critical_depths[idx] = np.stack([s.yc for s in sol.segs], axis=1)
                self.slope_classes[idx] = sol.slope_class.astype(self.slope_classes.dtype)
                rows.append((idx[sol.jump_scenario], sol.jump_x, sol.jump_y1, sol.jump_y2, sol.jump_segment,
                             sol.jump_after, sol.jump_at_junction))
            self.bed = bed[0].copy() if np.all(bed == bed[0]) else bed
            jumps = [np.concatenate(c) for c in zip(*rows, strict=True)]
            order = np.lexsort((jumps[1], jumps[0]))  # by scenario, then x
            jumps = [c[order] for c in jumps]
        (self.jump_scenario, self.jump_x, self.jump_upstream_depth, self.jump_downstream_depth, self.jump_segment,
         self._jump_after, self._jump_at_junction) = jumps
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
        ``regime`` (scenario, station), ``roughness`` (scenario, segment_index,
        and ``zone`` when a segment is surveyed), ``normal_depth``,
        ``critical_depth`` (scenario, segment_index) and ``jump_count``,
        ``first_jump_x`` (scenario); each input given in ``vary`` is a
        coordinate along ``scenario`` under its name (``bed`` is on
        (scenario, station) when the slopes vary).
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
                "roughness": (per_seg + (("zone",) if self.roughness.ndim == 3 else ()), np.asarray(self.roughness)),
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
                "bed": (("station",) if self.bed.ndim == 1 else station["dims"], np.asarray(self.bed), {"units": L}),
                "segment": ("station", np.asarray(self.segment)),
                **{name: ("scenario", np.asarray(v)) for name, v in self.varied.items()},
            },
            attrs={"method": self.method, "units": self.units.name},
        )

    # -- derived arrays -------------------------------------------------------------------------
    @cached_property
    def stage(self) -> np.ndarray:
        """Water-surface elevation [length], shape (n, M)."""
        out = self.bed + self.depth
        out.setflags(write=False)
        return out

    @cached_property
    def _kinematics(self):
        a = np.empty(self.depth.shape)
        t = np.empty(self.depth.shape)
        q = np.empty(self.depth.shape)  # each station's discharge (inflows and lateral inflow included)
        for idx, sol in self._parts:
            whole = idx.size == len(self)
            for k, s in enumerate(sol.segs):
                cols = np.flatnonzero(self.segment == k)
                at = (slice(None), cols) if whole else np.ix_(idx, cols)
                frac = s.fractions(self.x[cols]) if s.change is not None else None
                props = s.properties(self.depth[at], frac)
                a[at] = props[0]
                t[at] = props[2]
                q[at] = s.discharge_at(np.zeros(cols.size) if frac is None else frac)
        v = q / a
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

    # -- answers at any point -------------------------------------------------------------------
    def _query_x(self, x) -> tuple[np.ndarray, bool]:
        xq = finite_array(x, "x")
        if xq.ndim > 1:
            raise InvalidInputError(f"x must be a number or a 1-D array of distances; got shape {xq.shape}")
        if np.any((xq < self.x[0] - 1e-9) | (xq > self.x[-1] + 1e-9)):
            raise InvalidInputError(f"x must lie within the reach, 0 to {self.x[-1]:g}; got {x!r}")
        return np.atleast_1d(xq), xq.ndim == 0

    def depth_at(self, x) -> np.ndarray:
        """Depth of every scenario at distance(s) ``x`` from the upstream end [length].

        Linear between stations, as :meth:`Profile.depth_at` of each scenario
        (``result.depth_at(x)[i] == result[i].depth_at(x)``): across a jump
        each side is interpolated to its own sequent depth, at the jump and at
        a segment junction the downstream value is returned.

        Parameters
        ----------
        x : float or array_like, shape (m,)
            Distances within the reach [length].

        Returns
        -------
        ndarray, shape (n,) for a number x, (n, m) for an array
        """
        xq, scalar = self._query_x(x)
        xs = self.x
        # the station interval of each x; at a repeated x (a junction) the downstream one, as numpy.interp
        j = np.clip(np.searchsorted(xs, xq, side="right") - 1, 0, xs.size - 2)
        x0, x1 = xs[j], xs[j + 1]
        y0, y1 = self.depth[:, j], self.depth[:, j + 1]
        out = (y1 - y0) / (x1 - x0) * (xq - x0) + y0
        # a jump between two stations: interpolate to its sequent depths on each side
        inside = np.flatnonzero(~self._jump_at_junction.astype(bool))
        if inside.size:
            a = self._jump_after[inside]
            hit_jump, hit_q = np.nonzero(a[:, None] == j[None, :])
            if hit_jump.size:
                r = inside[hit_jump]
                s = self.jump_scenario[r]
                xj, ya, yb = self.jump_x[r], self.jump_upstream_depth[r], self.jump_downstream_depth[r]
                xa, xb = xs[a[hit_jump]], xs[a[hit_jump] + 1]
                da, db = self.depth[s, a[hit_jump]], self.depth[s, a[hit_jump] + 1]
                xv = xq[hit_q]
                with np.errstate(divide="ignore", invalid="ignore"):
                    before = (ya - da) / (xj - xa) * (xv - xa) + da
                    after = np.where(xb > xj, (db - yb) / (xb - xj) * (xv - xj) + yb, db)
                out[s, hit_q] = np.where(xv < xj, before, after)
        return out[:, 0] if scalar else out

    def stage_at(self, x) -> np.ndarray:
        """Water-surface elevation of every scenario at distance(s) ``x`` [length].

        :meth:`depth_at` plus the bed there (each scenario's own bed when the
        slopes vary). Shape (n,) for a number x, (n, m) for an array of m.
        """
        xq, scalar = self._query_x(x)
        depth = self.depth_at(xq)
        bed = np.empty(depth.shape)
        for reach_g, idx in self._plan.groups:
            bed[idx] = reach_g.bed_elevation(xq)
        out = depth + bed
        return out[:, 0] if scalar else out

    @cached_property
    def jumps(self) -> list[list[Jump]]:
        """Hydraulic jumps of every scenario, upstream to downstream (as in :attr:`Profile.jumps`)."""
        out: list[list[Jump]] = [[] for _ in range(len(self))]
        for idx, sol in self._parts:
            for s, jump in _jumps_of(sol, self.discharge[idx], self.units.g):
                out[int(idx[s])].append(jump)
        return out

    @cached_property
    def profile_types(self) -> list[list[str]]:
        """Profile labels of every scenario, upstream to downstream (as in :attr:`Profile.profile_types`)."""
        out: list = [None] * len(self)
        for idx, sol in self._parts:
            for i, pieces in zip(idx, profile_pieces(sol, np.arange(idx.size)), strict=True):
                out[i] = [p.label for p in pieces]
        return out

    # -- scenarios as profiles ------------------------------------------------------------------
    def scenario_reach(self, i: int):
        """The reach of scenario ``i`` alone: the swept reach with the scenario's discharge, roughness and
        the inputs given in ``vary``."""
        i = self._index(i)
        base = self._plan.reach_of(i)
        row = self.roughness[i]
        segs = []
        for k, s in enumerate(base.segments):
            if s.roughness is not None:
                segs.append(s.model_copy(update={"roughness": type(s.roughness)(float(row[k] if row.ndim == 1
                                                                                      else row[k, 0]))}))
            else:
                zones = len(s.section.roughness)
                update = {"section": s.section.with_roughness(row[k, :zones])}
                down = s.section_downstream
                if down is not None:  # the downstream end keeps its zones' ratios to the head's
                    ratio = np.array([r.kernel_spec()[1] for r in down.roughness]) / np.array(
                        [r.kernel_spec()[1] for r in s.section.roughness])
                    update["section_downstream"] = down.with_roughness(row[k, :zones] * ratio)
                segs.append(s.model_copy(update=update))
        return base.model_copy(update={"discharge": float(self.discharge[i]), "segments": segs})

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
        sol = self._parts[self._plan.group_of[i]][1]
        return Profile.from_batch(self.scenario_reach(i), sol, int(self._plan.local[i]), method=self.method)

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


provide("sweep", sweep)  # Reach.sweep runs this without importing this layer

"""Which build of the physics core runs a call: interpreted or compiled (private).

The core (:mod:`gvflow._core`) is one source that runs two ways: compiled by
numba, or as plain Python (the same files loaded a second time as the package
``gvflow._core_plain``, where the :func:`~gvflow._core._jit.kernel` decorator
leaves functions as they are). Compiling costs seconds on a fresh install and
a fraction of a second to load from the on-disk cache afterwards, so small
calls run interpreted and the process switches to the compiled build once the
work it has done, or is asked to do, makes compiling pay: tiered execution, as
in a virtual machine.

The choice can be fixed with the environment variable ``GVFLOW_ENGINE``
(``auto``, the default; ``compiled``; ``interpreted``) or :func:`use`.
"""

from __future__ import annotations

import importlib
import importlib.util
import os
import sys
from pathlib import Path

CORE = "gvflow._core"
PLAIN = "gvflow._core_plain"
MODES = ("auto", "compiled", "interpreted")

#: Work (in passes of a trapezoid's hydraulics, :func:`gvflow._core.codes.pass_cost`) after which the process
#: switches to the compiled core when the compiled-kernel cache is empty (compiling takes seconds)
#: and when it already holds kernels (loading them takes a fraction of a second).
HOT_COLD_CACHE = 3_000_000
HOT_WARM_CACHE = 150_000

_state = {"mode": os.environ.get("GVFLOW_ENGINE", "auto"), "spent": 0, "compiled": False}
if _state["mode"] not in MODES:  # pragma: no cover - environment misconfiguration
    _state["mode"] = "auto"


def use(mode: str) -> None:
    """Fix the engine for this process: ``"auto"``, ``"compiled"`` or ``"interpreted"``."""
    from .errors import InvalidInputError

    if mode not in MODES:
        raise InvalidInputError(f"engine must be one of {', '.join(map(repr, MODES))}; got {mode!r}")
    _state["mode"] = mode


def mode() -> str:
    """The engine mode in force."""
    return _state["mode"]


def _cache_is_warm() -> bool:
    """Whether numba's on-disk cache already holds kernels of the core written from the sources as they are
    (kernels from an older source are deleted when the compiled core loads, :mod:`gvflow._core._jit`)."""
    from ._core._jit import cache_is_current

    if not cache_is_current():
        return False
    here = Path(__file__).with_name("_core")
    override = os.environ.get("NUMBA_CACHE_DIR")
    if override:  # numba mirrors the source folder's path under the cache folder
        cache = Path(override) / here.resolve().relative_to(here.resolve().anchor)
    else:
        cache = here / "__pycache__"
    try:
        return any(name.endswith(".nbi") for name in os.listdir(cache))
    except OSError:
        return False


def _plain_package():
    mod = sys.modules.get(PLAIN)
    if mod is None:
        here = Path(__file__).with_name("_core")
        spec = importlib.util.spec_from_file_location(PLAIN, here / "__init__.py",
                                                      submodule_search_locations=[str(here)])
        mod = importlib.util.module_from_spec(spec)
        sys.modules[PLAIN] = mod
        spec.loader.exec_module(mod)
    return mod


def compiled_wanted(work: float) -> bool:
    """Whether a call of about ``work`` units should run compiled (and account for it if not)."""
    m = _state["mode"]
    if m == "compiled" or _state["compiled"]:
        return True
    if m == "interpreted":
        return False
    total = _state["spent"] + work
    if "warm" not in _state:  # looked at once: until this process compiles, nothing else writes the cache
        _state["warm"] = _cache_is_warm()
    if total >= (HOT_WARM_CACHE if _state["warm"] else HOT_COLD_CACHE):
        _state["compiled"] = True
        return True
    _state["spent"] = total
    return False


_modules: dict[tuple[bool, str], object] = {}  # (compiled, name) -> module, once imported


def core(name: str, work: float = 0):
    """The core module ``name`` (``"geometry"``, ``"resistance"``, ``"flow"``, ...) to run a call on."""
    compiled = compiled_wanted(work)
    mod = _modules.get((compiled, name))
    if mod is None:
        if not compiled:
            _plain_package()
        mod = _modules[compiled, name] = importlib.import_module(f"{CORE if compiled else PLAIN}.{name}")
    return mod

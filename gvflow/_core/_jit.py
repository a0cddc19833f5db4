"""The one compilation setting of gvflow's physics kernels.

Every function of the core is declared with :func:`kernel`, so the options that
matter for the first answer on a fresh install (the on-disk cache, or no
compilation at all) and for speed are chosen in one place.
"""

from __future__ import annotations

import hashlib
from pathlib import Path

PLAIN = "gvflow._core_plain"
_HERE = Path(__file__).parent
_checked = False


def _sources_digest() -> str:
    return hashlib.sha256(b"".join(p.read_bytes() for p in sorted(_HERE.glob("*.py")))).hexdigest()


_STAMP = _HERE / "__pycache__" / "gvflow-core-sources.sha256"


def cache_is_current() -> bool:
    """Whether the cached kernels (if any) were written from the core sources as they are now."""
    try:
        return _STAMP.read_text() == _sources_digest()
    except OSError:
        return False


def _drop_stale_cache() -> None:
    """Delete numba's cached kernels of the core when any core source changed since they were written.

    numba invalidates a cached function when its own file changes, not when a function it inlines from
    another file does; the core's kernels call each other across files, so the whole cache goes together,
    keyed by a hash of every core source file.
    """
    global _checked
    if _checked:
        return
    _checked = True
    if cache_is_current():
        return
    try:
        _STAMP.parent.mkdir(exist_ok=True)
        for f in _STAMP.parent.iterdir():
            if f.suffix in (".nbi", ".nbc"):
                f.unlink(missing_ok=True)
        _STAMP.write_text(_sources_digest())
    except OSError:  # a read-only installation: numba then cannot cache either
        pass


def kernel(fn):
    """Declare a scalar kernel of the core.

    In the compiled build: numba nopython mode, cached on disk, so a fresh process
    loads the machine code instead of compiling it again. In the interpreted build
    (the same source loaded as ``gvflow._core_plain``, see :mod:`gvflow._engine`):
    the function itself, so nothing imports numba.
    """
    if fn.__module__.startswith(PLAIN):
        return fn
    from numba import njit

    _drop_stale_cache()

    return njit(cache=True)(fn)


def scalar_kernel(fn):
    """:func:`kernel` for a function that takes records and arrays but returns only numbers, allocates no
    array and calls nothing that returns one: compiled without reference counting (numba's ``_nrt=False``).

    A compiled call passes each array of a record with a count of its references, raised on entry and
    lowered on exit (two atomic operations per array per call); the caller already holds every array for
    the duration of the call, so on the march's innermost path, where the records pass through several
    calls per station, the counting is pure cost. The numbers computed are the same. A function marked so
    must not return an array or a record holding one, nor receive one from a call: nothing would count
    the reference it makes.
    """
    if fn.__module__.startswith(PLAIN):
        return fn
    from numba import njit

    _drop_stale_cache()
    return njit(cache=True, _nrt=False)(fn)


def inline_kernel(fn):
    """:func:`kernel` for the one-pass hydraulics on the march's innermost path:
    numba inlines it where it is called (about 20 % off the march), at the price of a longer first compile."""
    if fn.__module__.startswith(PLAIN):
        return fn
    from numba import njit

    _drop_stale_cache()
    return njit(cache=True, inline="always")(fn)

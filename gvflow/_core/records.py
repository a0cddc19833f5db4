"""Records that carry a channel and a fluid into compiled code (private).

Kernels take these named tuples instead of long positional lists, so that two
arguments cannot be swapped silently.
"""

from __future__ import annotations

from collections import namedtuple

import numpy as np

#: A cross-section with its resistance: ``kind`` and ``par`` as in :mod:`gvflow._core.geometry`,
#: ``law`` a resistance-law code of :mod:`gvflow._core.resistance` and ``rough`` one roughness
#: value per zone (Manning's n, Chezy's C or the sand roughness ks).
Channel = namedtuple("Channel", ["kind", "par", "law", "rough"])

#: A segment's channel for a batch of scenarios: as :data:`Channel`, with ``rough`` of shape
#: (scenarios, zones), one row of zone roughness per scenario.
ChannelBatch = namedtuple("ChannelBatch", ["kind", "par", "law", "rough"])

#: The downstream end of a segment that changes along its length (:mod:`gvflow._core.changing`):
#: its parameters ``par`` (in the layout of the upstream end's), ``rough`` one row of zone roughness per
#: scenario, and ``added`` the discharge that enters along the segment (lateral inflow times length).
Along = namedtuple("Along", ["par", "rough", "added"])

#: The unit system and the fluid: gravity g, the Manning factor k and the kinematic viscosity nu.
Fluid = namedtuple("Fluid", ["g", "k", "nu"])


def channel(kind: int, par, law: int, rough) -> Channel:
    """A :class:`Channel` with the types the kernels are compiled for."""
    return Channel(int(kind), np.ascontiguousarray(par, dtype=np.float64), int(law),
                   np.ascontiguousarray(np.atleast_1d(rough), dtype=np.float64))


def channel_batch(kind: int, par, law: int, rough) -> ChannelBatch:
    """A :class:`ChannelBatch`; ``rough`` has one row per scenario (a 1-D array is one zone per scenario)."""
    rough = np.asarray(rough, dtype=np.float64)
    if rough.ndim == 1:
        rough = rough[:, None]
    return ChannelBatch(int(kind), np.ascontiguousarray(par, dtype=np.float64), int(law), np.ascontiguousarray(rough))


def fluid(units) -> Fluid:
    """The :class:`Fluid` of a resolved :class:`gvflow.Units`."""
    return Fluid(float(units.g), float(units.manning_k), float(units.kinematic_viscosity))

"""Surveyed cross-sections from CSV files.

A section file is a table of ground points, left to right looking downstream, with a
header row naming the columns (case does not matter, and anything after the first
word, such as a unit, is ignored):

- ``offset``: horizontal distance across the channel [length];
- ``elevation``: ground elevation [length];
- optionally ``roughness``: Manning's n of the ground from this point to the next, or
  ``zone``: a label of the zone the ground from this point to the next belongs to.

With a roughness or zone column, each run of equal values is one zone and a zone edge
stands at the offset of the point where the value changes (the last point's value is
not used and may be left blank). Otherwise give ``roughness`` (one value, or one per
zone with ``zone_edges``) to :func:`read_section_csv`.
"""

from __future__ import annotations

import csv
import io
import math
from pathlib import Path

from .errors import InvalidInputError
from .sections import Surveyed

__all__ = ["read_section_csv"]

_COLUMNS = ("offset", "elevation", "roughness", "zone")


def _number(text: str, where: str, column: str) -> float:
    try:
        value = float(text)
    except ValueError:
        raise InvalidInputError(f"{where}: {column} {text!r} is not a number") from None
    if not math.isfinite(value):
        raise InvalidInputError(f"{where}: {column} must be finite; got {text!r}")
    return value


def _runs(values, offsets):
    """Zone values and the edges between runs of equal values (value i holds from point i to i + 1)."""
    zones, edges = [values[0]], []
    for i in range(1, len(values) - 1):
        if values[i] != zones[-1]:
            zones.append(values[i])
            edges.append(offsets[i])
    return zones, edges


def read_section_csv(source, roughness=None, zone_edges=None) -> Surveyed:
    """Read a surveyed cross-section from a CSV file (format in the module notes).

    Parameters
    ----------
    source : str or path-like
        Path of the file, or the CSV text itself when it contains a line break.
    roughness : float, Manning, Chezy, sequence, or dict, optional
        Roughness per zone when the file has no roughness column: one value, or one per
        zone (with ``zone_edges``), or, for a file with a zone column, a dict from zone
        label to roughness.
    zone_edges : sequence of float, optional
        Zone edges when the file has neither a roughness nor a zone column.

    Returns
    -------
    Surveyed

    Raises
    ------
    InvalidInputError
        Naming the file and line: a missing column, a value that is not a number, offsets
        that decrease (an overhang, or points out of order), too few points, or a roughness
        given both in the file and as an argument.

    Examples
    --------
    >>> import gvflow as gv
    >>> text = "offset,elevation,roughness\\n0,101.5,0.035\\n2,100.0,0.03\\n5,100.0,0.035\\n7,101.5,\\n"
    >>> sec = gv.read_section_csv(text)
    >>> sec.zone_edges, [r.n for r in sec.roughness]
    ([2.0, 5.0], [0.035, 0.03, 0.035])
    """
    if isinstance(source, str) and "\n" in source:
        name, text = "<section text>", source
    else:
        path = Path(source)
        name = str(path)
        try:
            text = path.read_text(encoding="utf-8-sig")
        except OSError as exc:
            raise InvalidInputError(f"{name}: cannot read the section file ({exc.strerror})") from None
    rows = [row for row in csv.reader(io.StringIO(text)) if any(cell.strip() for cell in row)]
    if not rows:
        raise InvalidInputError(f"{name}: the section file is empty; it needs a header row and ground points")
    header = [cell.strip().split()[0].lower() if cell.strip() else "" for cell in rows[0]]
    col = {c: header.index(c) for c in _COLUMNS if c in header}
    for needed in ("offset", "elevation"):
        if needed not in col:
            raise InvalidInputError(f"{name} line 1: no {needed!r} column in the header {rows[0]!r}; the header "
                                    "must name the columns offset, elevation (and optionally roughness or zone)")
    if "roughness" in col and "zone" in col:
        raise InvalidInputError(f"{name} line 1: give either a roughness or a zone column, not both")
    offsets, elevations, labels = [], [], []
    for line, row in enumerate(rows[1:], start=2):
        where = f"{name} line {line}"
        cells = [c.strip() for c in row] + [""] * len(header)
        offsets.append(_number(cells[col["offset"]], where, "offset"))
        elevations.append(_number(cells[col["elevation"]], where, "elevation"))
        if "roughness" in col:
            last = line == len(rows)
            cell = cells[col["roughness"]]
            labels.append(math.nan if last and not cell else _number(cell, where, "roughness"))
        elif "zone" in col:
            labels.append(cells[col["zone"]])
        if len(offsets) > 1 and offsets[-1] < offsets[-2]:
            raise InvalidInputError(f"{where}: offset {offsets[-1]:g} is less than the {offsets[-2]:g} before it; "
                                    "offsets must not decrease from left to right looking downstream (points out "
                                    "of order, or an overhang, which a section cannot have)")
    if len(offsets) < 3:
        raise InvalidInputError(f"{name}: a section needs at least 3 ground points; the file has {len(offsets)}")
    if labels:
        if (roughness is not None and "roughness" in col) or zone_edges is not None:
            raise InvalidInputError(f"{name}: the file gives the zones; leave out the roughness and zone_edges "
                                    "arguments (for a zone column, roughness is a dict from zone label to value)")
        zones, edges = _runs(labels, offsets)
        if "zone" in col:
            if not isinstance(roughness, dict) or any(z not in roughness for z in zones):
                raise InvalidInputError(f"{name}: the zone column names zones {sorted(set(zones))}; give roughness "
                                        "as a dict from each zone label to its roughness")
            zones = [roughness[z] for z in zones]  # a label may recur (both floodplains): each run is a zone
        return Surveyed(offset=offsets, elevation=elevations, roughness=zones, zone_edges=edges)
    if roughness is None:
        raise InvalidInputError(f"{name}: the file has no roughness or zone column; give roughness= (one value, "
                                "or one per zone with zone_edges=)")
    return Surveyed(offset=offsets, elevation=elevations, roughness=roughness, zone_edges=list(zone_edges or []))

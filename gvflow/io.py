"""Reach files and station tables.

A reach file is the JSON form of a :class:`~gvflow.Reach`, written and read
through the pydantic models (``Reach.model_dump_json`` and
``Reach.model_validate_json``), so a file read back solves to the same
profile. :func:`reach_schema` gives the JSON schema of the format for
editors and validators. A file that cannot be read raises
:class:`~gvflow.errors.ReachFileError`, whose message names the file and the
path of each bad field, e.g. ``segments.1.section.width: must be greater than 0``.

:func:`write_profile_csv` writes the station table of a solved profile,
one row per station under a header that carries the units.
"""

from __future__ import annotations

import csv
import json
import re
from importlib import resources
from pathlib import Path

import numpy as np
from pydantic import ValidationError

from ._validate import short_repr
from .errors import InvalidInputError, ReachFileError
from .reach import Reach

__all__ = ["read_reach", "write_reach", "parse_reach", "reach_schema", "write_profile_csv", "demo_reach",
           "PROFILE_COLUMNS"]

#: Columns of the station table written by :func:`write_profile_csv`: (name, unit kind).
PROFILE_COLUMNS = (
    ("x", "length"),
    ("bed", "length"),
    ("depth", "length"),
    ("stage", "length"),
    ("velocity", "velocity"),
    ("froude", "-"),
    ("specific_energy", "length"),
    ("energy_grade", "length"),
    ("friction_slope", "-"),
    ("area", "area"),
    ("top_width", "length"),
    ("hydraulic_radius", "length"),
    ("shear_stress", "stress"),
    ("freeboard", "length"),
    ("segment", None),
    ("regime", None),
)

_SCHEMA_DRAFT = "https://json-schema.org/draft/2020-12/schema"


# -- reach files ----------------------------------------------------------------------------
def write_reach(reach: Reach, path) -> Path:
    """Write a reach to a JSON file (fields at their default ``None`` are left out).

    Parameters
    ----------
    reach : Reach
        The reach to save.
    path : str or path-like
        File to write (overwritten if it exists).

    Returns
    -------
    pathlib.Path
        The path written.

    Examples
    --------
    >>> import tempfile, pathlib, gvflow as gv
    >>> reach = gv.demo_reach()
    >>> path = pathlib.Path(tempfile.mkdtemp()) / "demo.json"
    >>> gv.read_reach(gv.write_reach(reach, path)) == reach
    True
    """
    if not isinstance(reach, Reach):
        raise InvalidInputError(f"write_reach needs a gvflow.Reach; got {type(reach).__name__}")
    path = Path(path)
    path.write_text(reach.model_dump_json(indent=2, exclude_none=True) + "\n", encoding="utf-8")
    return path


def read_reach(path) -> Reach:
    """Read a reach from a JSON file written by :func:`write_reach` (or by hand).

    Parameters
    ----------
    path : str or path-like
        The reach file.

    Returns
    -------
    Reach

    Raises
    ------
    ReachFileError
        When the file is missing or unreadable, is not JSON, or describes an
        invalid reach; the message names the file and each bad field by its
        path (``segments.1.section.width: must be greater than 0; got -2``).

    Examples
    --------
    >>> import gvflow as gv
    >>> from importlib import resources
    >>> gv.read_reach(resources.files("gvflow") / "data" / "demo.json").discharge
    12.0
    """
    name = str(path)
    try:
        text = Path(path).read_text(encoding="utf-8")
    except FileNotFoundError:
        raise ReachFileError(f"{name}: reach file not found; check the path") from None
    except (OSError, UnicodeDecodeError) as exc:
        raise ReachFileError(f"{name}: cannot read the reach file ({exc})") from None
    return parse_reach(text, source=name)


def parse_reach(text: str, source: str = "<reach text>") -> Reach:
    """Build a reach from the text of a reach file.

    Parameters
    ----------
    text : str
        JSON text of a reach.
    source : str
        Name used for the text in error messages (usually the file name).

    Returns
    -------
    Reach

    Raises
    ------
    ReachFileError
        As for :func:`read_reach`.

    Examples
    --------
    >>> import gvflow as gv
    >>> gv.parse_reach('{"segments": [{"length": 100, "slope": 0.001, "section": '
    ...                '{"shape": "rectangular", "width": -2}, "roughness": 0.015}], "discharge": 3}')
    ... # doctest: +ELLIPSIS
    Traceback (most recent call last):
    ...
    gvflow.errors.ReachFileError: <reach text>: 1 problem in the reach: segments.0.section.width: must be ...
    """
    too_deep = (f"{source}: the JSON is nested too deeply to describe a reach (a reach file nests a few levels: "
                "reach, segments, section); check that this is a reach file")
    try:
        data = json.loads(text)
    except json.JSONDecodeError as exc:
        raise ReachFileError(f"{source}: not valid JSON: {exc.msg} at line {exc.lineno}, column {exc.colno}") \
            from None
    except RecursionError:
        raise ReachFileError(too_deep) from None
    try:
        return Reach.__pydantic_validator__.validate_json(text)  # pydantic's errors, to list each problem
    except RecursionError:
        raise ReachFileError(too_deep) from None
    except ValidationError as exc:
        problems = _problems(exc, data)
    except ValueError as exc:  # a gvflow error raised while building a nested object
        problems = [("", _shorten(str(exc)))]
    count = f"{len(problems)} problem{'s' if len(problems) != 1 else ''}"
    listed = "; ".join(f"{where}: {what}" if where else what for where, what in problems)
    err = ReachFileError(f"{source}: {count} in the reach: {listed}")
    err.problems = problems
    err.source = source
    raise err from None


def reach_schema() -> dict:
    """JSON schema (draft 2020-12) of a reach file.

    Returns
    -------
    dict
        The schema; ``json.dumps`` it to save it. Control kinds, section
        shapes and friction laws appear as the ``kind``, ``shape`` and ``law``
        constants of their definitions.

    Examples
    --------
    >>> import gvflow as gv
    >>> schema = gv.reach_schema()
    >>> sorted(schema["properties"])[:3]
    ['alpha', 'datum', 'discharge']
    """
    schema = Reach.model_json_schema()
    for definition in [schema, *schema.get("$defs", {}).values()]:
        text = definition.get("description")
        if text:  # doctest examples are for the Python API, not for file authors
            definition["description"] = text.split("\n\nExamples\n--------")[0].strip()
    schema = {"$schema": _SCHEMA_DRAFT, **schema}
    schema["title"] = "gvflow reach"
    return schema


def demo_reach() -> Reach:
    """The bundled demo reach (an invented scenario).

    A 4 m wide lined canal below a sluice gate, a steep chute and a mild
    stilling reach ending at a tailwater level: an M3 and a jump below the
    gate, an M2 falling to critical depth at the head of the chute, an S2 down
    the chute, and an M3 with a jump in the stilling reach, then an M1 to the
    tailwater. ``gvflow demo`` solves it.

    Returns
    -------
    Reach

    Examples
    --------
    >>> import gvflow as gv
    >>> gv.demo_reach().solve().profile_types
    ['M3', 'M2', 'S2', 'M3', 'M1']
    """
    text = (resources.files("gvflow") / "data" / "demo.json").read_text(encoding="utf-8")
    return parse_reach(text, source="gvflow/data/demo.json")


# -- station tables -------------------------------------------------------------------------
def write_profile_csv(profile, path) -> Path:
    """Write the station table of a solved profile as CSV.

    One header row naming each column with its unit in brackets
    (``x [m]``, ``velocity [m/s]``, ``froude [-]``), then one row per
    station, upstream to downstream; at a jump two rows share one x.

    Parameters
    ----------
    profile : Profile
        Result of :meth:`gvflow.Reach.solve`.
    path : str or path-like
        File to write (overwritten if it exists).

    Returns
    -------
    pathlib.Path
        The path written.

    Examples
    --------
    >>> import tempfile, pathlib, gvflow as gv
    >>> profile = gv.demo_reach().solve()
    >>> path = gv.write_profile_csv(profile, pathlib.Path(tempfile.mkdtemp()) / "demo.csv")
    >>> path.read_text().splitlines()[0].split(",")[:5]
    ['x [m]', 'bed [m]', 'depth [m]', 'stage [m]', 'velocity [m/s]']
    >>> len(path.read_text().splitlines()) == profile.x.size + 1
    True
    """
    table = profile.table()
    units = profile.units
    header = []
    for name, kind in PROFILE_COLUMNS:
        unit = {"length": units.length, "velocity": units.velocity, "-": "-", "area": f"{units.length}²",
                "stress": _stress_unit(units)}.get(kind)
        header.append(f"{name} [{unit}]" if unit else name)
    path = Path(path)
    with path.open("w", newline="", encoding="utf-8") as fh:
        writer = csv.writer(fh)
        writer.writerow(header)
        floats = [name for name, kind in PROFILE_COLUMNS if kind is not None]
        for row in table:
            writer.writerow([f"{row[n]:.10g}" if np.isfinite(row[n]) else "" for n in floats]
                            + [int(row["segment"]), str(row["regime"])])
    return path


def _stress_unit(units) -> str:
    """Unit of the boundary shear stress column: N/m² (SI), lb/ft² (US), else weight per area."""
    label = units.length.strip().lower()
    return {"m": "N/m²", "ft": "lb/ft²"}.get(label, f"force/{units.length}²")


# -- error messages -------------------------------------------------------------------------
_NO_GIVEN = ("missing", "extra_forbidden", "value_error")  # messages that need no "; got ..." or have one
_OWNER_PREFIX = re.compile(r"^([A-Z][A-Za-z0-9]*): (.*)$", re.S)
_FIELD_FIRST = re.compile(r"^([A-Za-z_][A-Za-z0-9_]*) (.*)$", re.S)


def _problems(exc: ValidationError, data) -> list[tuple[str, str]]:
    """(field path, message) for each bad field, paths written as in the file (segments.1.section.width)."""
    grouped: dict[str, tuple[list[str], str]] = {}
    for err in exc.errors():
        path, node = _file_path(err.get("loc", ()), data)
        given = ""
        if "input" in err and not isinstance(err["input"], (dict, list)) and err.get("type") not in _NO_GIVEN:
            given = f"; got {short_repr(err['input'])}"
        for where, what in _messages(err, node):
            full = ".".join(p for p in (path, where) if p) or "reach"
            whats, got = grouped.setdefault(full, ([], ""))
            if what not in whats:
                whats.append(what)
            if given and not where:
                grouped[full] = (whats, given)
    return [(where, " or ".join(whats) + got) for where, (whats, got) in grouped.items()]


def _shorten(text: str, limit: int = 400) -> str:
    """``text`` cut to about ``limit`` characters (a message must not echo a whole document)."""
    return text if len(text) <= limit else f"{text[:limit]}... (message cut)"


def _file_path(loc, data):
    """Drop pydantic's union-member names from ``loc``; return the dotted path and the input found there."""
    parts, node, missing = [], data, False
    for key in loc:
        if missing:
            parts.append(str(key))
        elif isinstance(node, dict) and key in node:
            parts.append(str(key))
            node = node[key]
        elif isinstance(node, list) and isinstance(key, int) and 0 <= key < len(node):
            parts.append(str(key))
            node = node[key]
        elif isinstance(node, dict) and isinstance(key, str) and not _is_member_name(node, key):
            parts.append(key)  # a field the file lacks
            node, missing = None, True
        # otherwise: the name of a union member (a shape tag, "Units", "literal[...]"), not part of the path
    return ".".join(parts), node


def _is_member_name(node: dict, key: str) -> bool:
    """True for pydantic's name of a union member: a tag value (shape, law, kind) or a class name."""
    if any(node.get(t) == key for t in ("shape", "law", "kind")):
        return True
    return not key.isidentifier() or key[:1].isupper()


def _messages(err, node):
    """Readable message(s) of one pydantic error, possibly pointing one level deeper."""
    kind = err.get("type", "")
    msg = str(err.get("msg", "is invalid"))
    ctx = err.get("ctx") or {}
    if kind == "missing":
        return [("", "is required but missing")]
    if kind == "extra_forbidden":
        return [("", "is not a field of this object (misspelt?)")]
    if kind == "union_tag_invalid":
        expected = ctx.get("expected_tags", "")
        tag = str(ctx.get("discriminator", "type")).strip("'")
        return [("", f"unknown {tag} {ctx.get('tag', '')!r}; expected one of {expected}")]
    if kind == "union_tag_not_found":
        return [("", f"needs a {ctx.get('discriminator', 'type')} field saying which kind of object this is")]
    if kind == "too_short":
        return [("", f"must hold at least {ctx.get('min_length', 1)} item(s)")]
    if kind == "model_type" and not err.get("loc"):
        return [("", "the file must hold one JSON object describing the reach")]
    if kind == "value_error":
        msg = msg.removeprefix("Value error, ")
        owner = _OWNER_PREFIX.match(msg)
        if owner and isinstance(node, dict):  # "Rectangular: width must be ...; got -1; foo ..."
            return _nested(owner.group(2), node)
        return [("", msg)]
    if msg.startswith("Input should be"):
        msg = "must be" + msg[len("Input should be"):]
    return [("", msg)]


def _nested(text: str, node: dict):
    """Split a nested object's own message into (field, message) pairs."""
    chunks: list[str] = []
    for part in text.split("; "):
        if part.startswith("got ") and chunks:
            chunks[-1] += "; " + part
        else:
            chunks.append(part)
    out = []
    for chunk in chunks:
        m = _FIELD_FIRST.match(chunk)
        if m and (m.group(1) in node or m.group(2).startswith("Field required")):
            field, what = m.group(1), m.group(2)
            if what.startswith("Field required"):
                what = "is required but missing"
            elif what.startswith("Extra inputs are not permitted"):
                what = "is not a field of this object (misspelt?)"
            out.append((field, what))
        else:
            out.append(("", chunk))
    return out

"""Reach files, their schema and error messages, the station CSV and the demo reach."""

import csv
import json
import math

import jsonschema
import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import gvflow as gv
from gvflow.io import PROFILE_COLUMNS

ARRAYS = ("x", "depth", "stage", "bed", "velocity", "froude", "specific_energy", "energy_grade", "friction_slope",
          "segment", "regime")


def _mixed_reach(units="SI"):
    """A reach using every section shape family, three friction laws and two controls."""
    return gv.Reach(
        name="round trip",
        segments=[gv.Segment(name="a", length=120.0, slope=0.0015,
                             section=gv.Trapezoidal(bottom_width=2.5, side_slope=1.5), roughness=0.016),
                  gv.Segment(length=80.0, slope=0.0, section=gv.Rectangular(width=3.0), roughness=gv.Chezy(60.0)),
                  gv.Segment(length=60.0, slope=0.0008, section=gv.Circular(diameter=3.5),
                             roughness=gv.DarcyWeisbach(0.002))],
        discharge=4.0, upstream=gv.SluiceGate(opening=0.4, contraction=0.6), downstream=gv.FixedStage(elevation=2.3),
        datum=0.7, alpha=1.05, units=units)


# -- round trip ------------------------------------------------------------------------------
def test_round_trip_gives_identical_solution(tmp_path):
    reach = gv.demo_reach()
    path = gv.write_reach(reach, tmp_path / "demo.json")
    back = gv.read_reach(path)
    assert back == reach
    a, b = reach.solve(), back.solve()
    for name in ARRAYS:
        np.testing.assert_array_equal(getattr(a, name), getattr(b, name), err_msg=name)
    assert [(j.x, j.upstream_depth, j.downstream_depth) for j in a.jumps] == \
           [(j.x, j.upstream_depth, j.downstream_depth) for j in b.jumps]
    assert a.profile_types == b.profile_types


@pytest.mark.parametrize("units", ["SI", "US", gv.Units(g=9.81, manning_k=1.0, name="metric 9.81")])
def test_round_trip_of_every_kind_of_input(tmp_path, units):
    reach = _mixed_reach(units)
    back = gv.read_reach(gv.write_reach(reach, tmp_path / "r.json"))
    assert back == reach
    assert back.resolved_units == reach.resolved_units
    assert isinstance(back.segments[2].roughness, gv.DarcyWeisbach)
    a, b = reach.solve(n_steps=20), back.solve(n_steps=20)
    np.testing.assert_array_equal(a.depth, b.depth)


_controls_up = st.sampled_from([None, gv.CriticalFlow(), gv.UniformFlow(), gv.SluiceGate(opening=0.37)])
_controls_down = st.sampled_from([None, gv.CriticalFlow(), gv.FixedDepth(2.2), gv.FixedStage(elevation=3.1)])
_sections = st.one_of(
    st.builds(gv.Rectangular, width=st.floats(0.1, 50)),
    st.builds(gv.Trapezoidal, bottom_width=st.floats(0.1, 50), side_slope=st.floats(0, 4)),
    st.builds(gv.Triangular, side_slope=st.floats(0.1, 4)),
    st.builds(gv.Circular, diameter=st.floats(0.2, 6)),
)
_segments = st.builds(gv.Segment, length=st.floats(0.5, 5e4), slope=st.floats(-0.05, 0.2), section=_sections,
                      roughness=st.floats(0.008, 0.1))


@settings(max_examples=40, deadline=None)
@given(segments=st.lists(_segments, min_size=1, max_size=4), discharge=st.floats(1e-3, 1e4),
       up=_controls_up, down=_controls_down, datum=st.floats(-1e3, 1e4))
def test_any_reach_survives_the_file_format(segments, discharge, up, down, datum):
    reach = gv.Reach(segments=segments, discharge=discharge, upstream=up, downstream=down, datum=datum)
    back = gv.parse_reach(reach.model_dump_json(indent=2, exclude_none=True))
    assert back == reach  # floats are written in shortest round-trip form, so equality is exact


def test_written_file_is_plain_json_without_nulls(tmp_path):
    text = gv.write_reach(gv.Reach(segments=[gv.Segment(length=10.0, slope=0.001, section=gv.Rectangular(width=1.0),
                                                        roughness=0.013)], discharge=1.0),
                          tmp_path / "r.json").read_text()
    data = json.loads(text)
    assert "null" not in text and "upstream" not in data
    assert data["segments"][0]["roughness"] == {"law": "manning", "n": 0.013}


def test_write_reach_needs_a_reach(tmp_path):
    with pytest.raises(gv.InvalidInputError, match="needs a gvflow.Reach"):
        gv.write_reach({"segments": []}, tmp_path / "r.json")


# -- bad files ---------------------------------------------------------------------------------
def _good():
    return json.loads(gv.demo_reach().model_dump_json())


def _read(tmp_path, data, name="bad.json"):
    path = tmp_path / name
    path.write_text(data if isinstance(data, str) else json.dumps(data))
    with pytest.raises(gv.ReachFileError) as info:
        gv.read_reach(path)
    return info.value


def test_error_names_file_and_field_path(tmp_path):
    data = _good()
    data["segments"][1]["section"]["width"] = -2.0
    err = _read(tmp_path, data, "canal_b.json")
    assert isinstance(err, gv.InvalidInputError) and isinstance(err, ValueError)
    assert "canal_b.json" in str(err)
    assert "segments.1.section.width: must be greater than 0; got -2.0" in str(err)
    assert err.problems == [("segments.1.section.width", "must be greater than 0; got -2.0")]


@pytest.mark.parametrize("edit, path, words", [
    (lambda d: d["segments"][0].pop("length"), "segments.0.length", "required"),
    (lambda d: d["segments"][2].update(lenght=3.0), "segments.2.lenght", "not a field"),
    (lambda d: d["segments"][0]["section"].update(shape="oval"), "segments.0.section", "unknown shape 'oval'"),
    (lambda d: d["segments"][0]["roughness"].pop("law"), "segments.0.roughness", "'law'"),
    (lambda d: d["segments"][1]["roughness"].update(n=0), "segments.1.roughness.n", "greater than or equal to 0.0001"),
    (lambda d: d.update(discharge="lots"), "discharge", "valid number"),
    (lambda d: d["upstream"].update(opening=-0.1), "upstream.opening", "greater than 0"),
    (lambda d: d["downstream"].update(kind="lock_gate"), "downstream", "unknown kind 'lock_gate'"),
    (lambda d: d.update(units="metric"), "units", "'SI' or 'US'"),
    (lambda d: d.update(segments=[]), "segments", "at least 1"),
    (lambda d: d["segments"][0]["section"].update(shape="trapezoidal", bottom_width=4.0),
     "segments.0.section.side_slope", "required"),
])
def test_malformed_field_reported_by_path(tmp_path, edit, path, words):
    data = _good()
    edit(data)
    err = _read(tmp_path, data)
    paths = [p for p, _ in err.problems]
    assert path in paths, str(err)
    assert words in dict(err.problems)[path]
    assert f"{path}: " in str(err)


def test_several_problems_listed_together(tmp_path):
    data = _good()
    data["segments"][0]["slope"] = 2.0
    data["segments"][2]["section"]["width"] = 0
    err = _read(tmp_path, data)
    assert "2 problems" in str(err)
    assert [p for p, _ in err.problems] == ["segments.0.slope", "segments.2.section.width"]


def test_control_at_the_wrong_end(tmp_path):
    data = _good()
    data["downstream"] = {"kind": "sluice_gate", "opening": 0.5}
    err = _read(tmp_path, data)
    assert "SluiceGate can only stand at the upstream end" in str(err)


def test_not_json_and_not_an_object(tmp_path):
    err = _read(tmp_path, '{"discharge": 3,\n "segments": [,]}')
    assert "not valid JSON" in str(err) and "line 2" in str(err)
    err = _read(tmp_path, "[1, 2]")
    assert "one JSON object" in str(err)


def test_missing_file(tmp_path):
    with pytest.raises(gv.ReachFileError, match="nowhere.json: reach file not found"):
        gv.read_reach(tmp_path / "nowhere.json")


# -- schema ------------------------------------------------------------------------------------
def test_schema_is_valid_json_schema_with_all_control_kinds():
    schema = gv.reach_schema()
    text = json.dumps(schema)
    jsonschema.Draft202012Validator.check_schema(json.loads(text))
    kinds = {d["properties"]["kind"]["const"] for d in schema["$defs"].values() if "kind" in d.get("properties", {})}
    assert {"fixed_depth", "fixed_stage", "uniform_flow", "critical_flow", "sluice_gate"} <= kinds
    shapes = {d["properties"]["shape"]["const"] for d in schema["$defs"].values() if "shape" in d.get("properties", {})}
    assert {"rectangular", "trapezoidal", "triangular", "circular"} <= shapes
    assert "Examples" not in text  # doctest blocks are dropped from the descriptions


def test_schema_accepts_written_files_and_rejects_bad_ones(tmp_path):
    validator = jsonschema.Draft202012Validator(gv.reach_schema())
    for reach in (gv.demo_reach(), _mixed_reach("US")):
        validator.validate(json.loads(reach.model_dump_json(exclude_none=True)))
    bad = _good()
    bad["segments"][0]["section"]["width"] = -1.0
    assert not validator.is_valid(bad)


# -- station table -----------------------------------------------------------------------------
def test_csv_one_row_per_station_with_units(tmp_path):
    profile = gv.demo_reach().solve()
    path = gv.write_profile_csv(profile, tmp_path / "stations.csv")
    with path.open(newline="") as fh:
        rows = list(csv.reader(fh))
    assert rows[0] == ["x [m]", "bed [m]", "depth [m]", "stage [m]", "velocity [m/s]", "froude [-]",
                       "specific_energy [m]", "energy_grade [m]", "friction_slope [-]", "area [m²]",
                       "top_width [m]", "hydraulic_radius [m]", "shear_stress [N/m²]", "freeboard [m]", "segment",
                       "regime"]
    assert len(rows) == profile.x.size + 1
    body = rows[1:]
    for j, (name, _) in enumerate(PROFILE_COLUMNS[:13]):
        np.testing.assert_allclose([float(r[j]) for r in body], getattr(profile, name), rtol=1e-9, err_msg=name)
    assert all(r[13] == "" for r in body)  # no bank_height in the demo reach: freeboard left blank
    assert [int(r[14]) for r in body] == profile.segment.tolist()
    assert [r[15] for r in body] == profile.regime.tolist()


def test_csv_header_in_us_units(tmp_path):
    profile = gv.Reach(segments=[gv.Segment(length=1000.0, slope=0.001, section=gv.Rectangular(width=10.0),
                                            roughness=0.015)], discharge=200.0, units="US").solve(n_steps=10)
    header = gv.write_profile_csv(profile, tmp_path / "us.csv").read_text().splitlines()[0]
    assert header.startswith("x [ft],bed [ft],depth [ft],stage [ft],velocity [ft/s]")


# -- the demo reach ----------------------------------------------------------------------------
@pytest.fixture(scope="module")
def demo():
    return gv.demo_reach().solve()


def test_demo_shows_the_promised_profiles(demo):
    # Scenario design check (regression on the bundled data, not validation).
    assert demo.profile_types == ["M3", "M2", "S2", "M3", "M1"]
    assert demo.slope_classes == ["mild", "steep", "mild"]
    assert [j.segment for j in demo.jumps] == [0, 2]
    assert 0.0 < demo.jumps[0].x < 400.0 and 500.0 < demo.jumps[1].x < 750.0
    assert {c.kind for c in demo.controls} >= {"upstream control", "critical control", "downstream control"}
    assert "invented" in demo.reach.name


def test_demo_critical_depth_at_the_break(demo):
    # Rectangular channel: yc = (q²/g)^(1/3) (Chow 1959, Open-Channel Hydraulics, ch. 4; equation number not
    # given here: cited from memory).
    q = demo.reach.discharge / 4.0
    yc = (q * q / 9.80665) ** (1.0 / 3.0)
    at_break = demo.depth[np.isclose(demo.x, 400.0)]
    assert at_break.size >= 1
    np.testing.assert_allclose(at_break, yc, rtol=5e-3)


def test_demo_jumps_obey_belanger(demo):
    # Rectangular channel: y2/y1 = (sqrt(1 + 8 F1²) - 1)/2 (Belanger 1828, as given by Chow 1959, eq. 3-23),
    # with F1 = V1/sqrt(g y1) computed here from y1 alone.
    q = demo.reach.discharge / 4.0
    for jp in demo.jumps:
        f1 = q / (jp.upstream_depth * math.sqrt(9.80665 * jp.upstream_depth))
        assert jp.froude == pytest.approx(f1, rel=1e-9)
        ratio = (math.sqrt(1.0 + 8.0 * f1 * f1) - 1.0) / 2.0
        assert jp.downstream_depth / jp.upstream_depth == pytest.approx(ratio, rel=1e-6)


def test_demo_file_matches_demo_reach():
    from importlib import resources

    text = (resources.files("gvflow") / "data" / "demo.json").read_text()
    assert gv.Reach.model_validate_json(text) == gv.demo_reach()


def test_demo_scenario_is_the_same_with_the_ivp_marcher(demo):
    # Both marchers must tell the same story for the bundled demo (method agreement, not validation):
    # the same profile types and jumps within 1 % of the reach length (issue 4 acceptance tolerance).
    other = demo.reach.solve(method="ivp")
    assert other.profile_types == demo.profile_types
    assert len(other.jumps) == len(demo.jumps)
    for a, b in zip(demo.jumps, other.jumps, strict=True):
        assert abs(a.x - b.x) < 0.01 * demo.x[-1]


@pytest.mark.parametrize("call, match", [
    (lambda: gv.Reach.model_validate_json(gv.demo_reach().model_dump_json().replace('"discharge":', '"discharge":-')),
     r"Reach: discharge"),
    (lambda: gv.Reach.model_validate_json("{oops"), r"Reach: Invalid JSON"),
    (lambda: gv.Reach.model_validate({"segments": [], "discharge": 1.0}), r"Reach: segments"),
    (lambda: gv.Rectangular.model_validate({"width": -1.0}), r"Rectangular: width must be greater than 0"),
    (lambda: gv.Manning.model_validate_json('{"n": -1}'), r"Manning: n must be"),
    (lambda: gv.FixedDepth.model_validate({"depth": 0.0}), r"FixedDepth: depth"),
    (lambda: gv.Units.model_validate_strings({"g": "heavy"}), r"Units: g"),
])
def test_validating_a_model_from_data_raises_gvflow_errors(call, match):
    """The round-trip calls of the models (model_validate, model_validate_json, model_validate_strings)
    name the field, as building a model by calling its class does, and never let pydantic's own
    ValidationError out."""
    with pytest.raises(gv.InvalidInputError, match=match):
        call()

"""The public surface: gvflow.__all__, the API reference page and the contract's names and keywords."""

import inspect
import re
from pathlib import Path

import numpy as np
import pytest

import gvflow as gv

DOC = Path(__file__).resolve().parents[1] / "docs" / "API.md"

# The calls of the public contract (the project's API.md), with their keyword names in order.
CONTRACT_FUNCTIONS = {
    "normal_depth": ["section", "discharge", "slope", "roughness", "units"],
    "critical_depth": ["section", "discharge", "units"],
    "critical_slope": ["section", "discharge", "roughness", "units"],
    "froude_number": ["section", "discharge", "depth", "units"],
    "sequent_depth": ["section", "discharge", "depth", "units"],
    "solve_many": ["reaches", "executor"],
}
CONTRACT_CLASSES = ["Units", "Rectangular", "Trapezoidal", "Triangular", "Circular", "Manning", "Chezy", "Segment",
                    "Reach", "FixedDepth", "FixedStage", "UniformFlow", "CriticalFlow", "SluiceGate", "Profile"]
PROFILE_MEMBERS = ["x", "depth", "stage", "velocity", "froude", "depth_at", "jumps", "profile_types"]


def documented_names():
    return set(re.findall(r"^\| `([A-Za-z_][A-Za-z0-9_]*)` \|", DOC.read_text(encoding="utf-8"), re.M))


def test_reference_page_and_all_agree():
    assert documented_names() == set(gv.__all__)
    assert len(gv.__all__) == len(set(gv.__all__))


def test_contract_names_exist_with_their_keywords():
    for name, params in CONTRACT_FUNCTIONS.items():
        sig = list(inspect.signature(getattr(gv, name)).parameters)
        assert sig[:len(params)] == params, name
    for name in CONTRACT_CLASSES:
        assert isinstance(getattr(gv, name), type), name


def test_contract_keywords_of_the_model():
    sec = gv.Trapezoidal(bottom_width=3.0, side_slope=1.5)
    assert gv.Rectangular(width=2.0).area(np.array([1.0, 2.0])).shape == (2,)
    assert gv.Triangular(side_slope=2.0).top_width(1.0) == 4.0
    assert gv.Circular(diameter=1.0).hydraulic_radius(0.5) == pytest.approx(0.25)
    assert gv.Manning(0.015) == gv.Manning(n=0.015) and gv.Chezy(50.0) == gv.Chezy(C=50.0)
    assert gv.FixedDepth(1.0) == gv.FixedDepth(depth=1.0) and gv.FixedStage(2.0) == gv.FixedStage(elevation=2.0)
    assert gv.SluiceGate(opening=0.5, contraction=0.61).jet_depth == pytest.approx(0.305)
    assert gv.Units(g=9.81, manning_k=1.0).g == 9.81
    seg = gv.Segment(length=300.0, slope=0.001, section=sec, roughness=0.018)
    reach = gv.Reach(segments=[seg], discharge=12.0, upstream=None, downstream=gv.UniformFlow(), units="SI", datum=5.0)
    profile = reach.solve(method="standard_step")
    for member in PROFILE_MEMBERS:
        assert hasattr(profile, member), member
    assert profile.stage[-1] == pytest.approx(5.0 + profile.depth[-1])
    assert len(reach.sweep(discharge=np.array([10.0, 12.0]))) == 2
    again = gv.Reach.model_validate_json(reach.model_dump_json())
    assert again == reach

"""Stage-discharge table: monotone check, interpolation, out-of-range errors."""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st_h

import gvflow as gv
from gvflow.structures import RatingTable

STAGE = [100.0, 100.4, 101.0, 101.8, 102.5]
FLOW = [0.0, 1.5, 6.0, 18.0, 35.0]


def test_interpolation_hits_the_rows_and_is_linear_between():
    r = RatingTable(stage=STAGE, discharge=FLOW)
    np.testing.assert_allclose(r.stage_at(np.array(FLOW)), STAGE, rtol=0, atol=1e-12)
    np.testing.assert_allclose(r.discharge_at(np.array(STAGE)), FLOW, rtol=0, atol=1e-12)
    assert r.stage_at(12.0) == pytest.approx(101.4)  # halfway between 6 and 18
    assert r.discharge_at(100.2) == pytest.approx(0.75)
    assert r.discharge_range == (0.0, 35.0) and r.stage_range == (100.0, 102.5)


@settings(max_examples=50, deadline=None)
@given(q=st_h.floats(0.0, 35.0))
def test_stage_and_discharge_are_inverse(q):
    r = RatingTable(stage=STAGE, discharge=FLOW)
    assert r.discharge_at(r.stage_at(q)) == pytest.approx(q, abs=1e-9)


def test_round_trip_through_json():
    r = RatingTable(stage=STAGE, discharge=FLOW)
    assert RatingTable.model_validate_json(r.model_dump_json()) == r


def test_out_of_range_raises_with_the_table_range():
    r = RatingTable(stage=STAGE, discharge=FLOW)
    with pytest.raises(gv.InvalidInputError, match="outside the rating table.*extend"):
        r.stage_at(40.0)
    with pytest.raises(gv.InvalidInputError, match="outside the rating table"):
        r.discharge_at(np.array([100.5, 99.0]))


@pytest.mark.parametrize("stage, flow, match", [
    ([100.0, 100.4, 100.3], [0.0, 1.0, 2.0], "not monotone: stage"),
    ([100.0, 100.4, 100.9], [0.0, 3.0, 3.0], "not monotone: discharge"),
    ([100.0, 100.4], [0.0, 1.0, 2.0], "same number"),
    ([100.0], [1.0], "at least 2"),
    ([100.0, 101.0], [-1.0, 2.0], "non-negative"),
    ([100.0, float("nan")], [0.0, 2.0], "stage"),
])
def test_bad_tables_raise(stage, flow, match):
    with pytest.raises(gv.InvalidInputError, match=match):
        RatingTable(stage=stage, discharge=flow)

"""Unit systems: constants, selection, validation and dimensional consistency."""

import math

import pytest

import gvflow as gv
from gvflow.units import resolve_units

FT = 0.3048  # international foot [m], exact by definition (1959 agreement)


def test_si_constants():
    # Standard gravity 9.80665 m/s² (3rd CGPM, 1901; exact); Manning factor 1 in SI (Chow 1959, eq. 5-6)
    assert gv.SI.g == 9.80665
    assert gv.SI.manning_k == 1.0
    assert gv.SI.length == "m"


def test_us_constants_follow_from_the_foot():
    # g in ft/s² is 9.80665/0.3048 = 32.1740 (exact conversion, printed as 32.174);
    # k = 1.486 is the trade's value (Chow 1959, eq. 5-6), (1 m/ft)^(1/3) = 1.48592 rounded up
    assert gv.US.g == pytest.approx(9.80665 / FT, abs=5e-4)
    assert gv.US.manning_k == 1.486
    assert gv.US.manning_k == pytest.approx((1 / FT) ** (1 / 3), abs=1e-4)
    assert gv.US.length == "ft"
    # water at 20 °C: 1.004e-6 m²/s is 1.081e-5 ft²/s
    assert gv.US.kinematic_viscosity == pytest.approx(gv.SI.kinematic_viscosity / FT ** 2, rel=1e-3)


@pytest.mark.parametrize("name, expected", [("SI", gv.SI), ("si", gv.SI), ("US", gv.US), ("us", gv.US),
                                            (" US ", gv.US)])
def test_resolve_by_name(name, expected):
    assert resolve_units(name) is expected


def test_custom_units_pass_through():
    mine = gv.Units(g=9.81, manning_k=1.0)
    assert resolve_units(mine) is mine
    assert mine.discharge == "m³/s" and mine.velocity == "m/s"


@pytest.mark.parametrize("bad", ["metric", "", 3, None, 9.81])
def test_unknown_units_raise(bad):
    with pytest.raises(gv.InvalidInputError, match="units"):
        resolve_units(bad)
    with pytest.raises(gv.InvalidInputError, match="units"):
        gv.critical_depth(gv.Rectangular(width=1.0), 1.0, units=bad)


@pytest.mark.parametrize("field", ["g", "manning_k", "kinematic_viscosity"])
@pytest.mark.parametrize("bad", [0.0, -1.0, math.nan, math.inf])
def test_bad_unit_constants_raise_naming_the_field(field, bad):
    data = {"g": 9.81, "manning_k": 1.0, field: bad}
    with pytest.raises(gv.InvalidInputError, match=field):
        gv.Units(**data)


def test_units_are_immutable():
    with pytest.raises((TypeError, ValueError)):
        gv.SI.g = 10.0
    assert gv.SI.g == 9.80665


def test_us_and_si_give_the_same_channel_when_converted_exactly():
    # Dimensional consistency: the same trapezoid, discharge and n in metres and in feet
    # (with g and k converted exactly) must give the same depths, to solver precision.
    us_exact = gv.Units(g=9.80665 / FT, manning_k=(1 / FT) ** (1 / 3), length="ft")
    sec_m = gv.Trapezoidal(bottom_width=3.0, side_slope=1.5)
    sec_ft = gv.Trapezoidal(bottom_width=3.0 / FT, side_slope=1.5)
    q_m = 12.0
    q_ft = q_m / FT ** 3
    yn_m = gv.normal_depth(sec_m, q_m, 0.0008, 0.018)
    yn_ft = gv.normal_depth(sec_ft, q_ft, 0.0008, 0.018, units=us_exact)
    assert yn_ft * FT == pytest.approx(yn_m, rel=1e-12)
    yc_m = gv.critical_depth(sec_m, q_m)
    yc_ft = gv.critical_depth(sec_ft, q_ft, units=us_exact)
    assert yc_ft * FT == pytest.approx(yc_m, rel=1e-12)
    # with the trade's rounded k = 1.486 the normal depth differs by the rounding of k only:
    # yn ~ k^(-3/8)...(-3/5), so a 5.4e-5 relative change in k moves yn by less than 4e-5
    yn_us = gv.normal_depth(sec_ft, q_ft, 0.0008, 0.018, units="US")
    assert yn_us * FT == pytest.approx(yn_m, rel=4e-5)
    assert yn_us * FT != pytest.approx(yn_m, rel=1e-7)

"""Structures at the edges of their range: culverts far too large or too small for their flow, and the
length unit of a custom unit system reaching the weirs' metre-valued constants."""

import math
import warnings

import numpy as np
import pytest

import gvflow as gv
from gvflow.errors import GVFlowWarning, NoSolutionError
from gvflow.structures import (
    BoxBarrel,
    CircularBarrel,
    culvert_headwater,
    inlet_control_headwater,
    kindsvater_carter_discharge,
    outlet_control_headwater,
    v_notch_discharge,
)

FT = 0.3048  # international foot [m], exact (1959)
TINY_TO_DESIGN = np.geomspace(1e-9, 5.0, 200)


@pytest.mark.parametrize("barrel", [
    CircularBarrel(diameter=3.0, length=30.0, slope=0.05, roughness=0.012),
    CircularBarrel(diameter=3.0, length=30.0, slope=0.1, roughness=0.024, inlet="corrugated_pipe_projecting"),
    BoxBarrel(span=4.0, rise=3.0, length=25.0, slope=0.08, roughness=0.013),
    BoxBarrel(span=4.0, rise=3.0, length=25.0, slope=0.08, roughness=0.013, inlet="box_wingwalls_0"),
])
def test_inlet_headwater_never_negative_and_rising(barrel):
    hw = inlet_control_headwater(barrel, TINY_TO_DESIGN)
    assert np.all(hw > 0)
    assert np.all(np.diff(hw) >= 0)


def test_inlet_headwater_at_tiny_flow_is_the_critical_energy_of_a_box():
    # Rectangular section: yc = (q²/g)^(1/3) and the least specific energy Hc = 1.5 yc (Chow 1959,
    # eqs. 4-11 and 4-12, from memory). The slope term of the inlet equation (-0.5 S) would put the
    # headwater below the invert; the floor puts it at Hc.
    box = BoxBarrel(span=4.0, rise=3.0, length=25.0, slope=0.08, roughness=0.013)
    q = np.array([1e-6, 1e-4, 1e-3])
    yc = np.cbrt((q / 4.0) ** 2 / 9.80665)
    assert inlet_control_headwater(box, q) == pytest.approx(1.5 * yc, rel=1e-9)


def test_inlet_headwater_within_the_equations_range_is_unchanged():
    # HDS-5 form-1 unsubmerged equation at HW/D near 1, written out (coefficients from the table, so a
    # transcription check of the floor leaving fitted values alone, not an outside reference).
    pipe = CircularBarrel(diameter=1.2, length=30.0, slope=0.01, roughness=0.012)
    co = pipe.inlet_coefficients
    q = 1.5
    x = math.sqrt(32.174 / 9.80665) * q / (math.pi * 0.36 * math.sqrt(1.2))
    dc = gv.critical_depth(gv.Circular(diameter=1.2), q)
    a = gv.Circular(diameter=1.2).area(dc)
    hc = dc + q * q / (2 * 9.80665 * a * a)
    expected = 1.2 * (hc / 1.2 + co.K * x ** co.M + co.slope_factor * 0.01)
    assert inlet_control_headwater(pipe, q) == pytest.approx(expected, rel=1e-12)


def test_culvert_control_of_a_reach_with_a_tiny_flow_stands_above_the_invert():
    big = CircularBarrel(diameter=3.0, length=30.0, slope=0.05, roughness=0.012)
    res = culvert_headwater(big, 1e-4, tailwater=0.0)
    assert res.headwater > 0 and res.inlet_headwater > 0


@pytest.mark.parametrize("barrel", [
    BoxBarrel(span=0.1, rise=0.1, length=25.0, slope=0.005, roughness=0.013),
    CircularBarrel(diameter=0.1, length=25.0, slope=0.005, roughness=0.013),
])
@pytest.mark.parametrize("q", [1.0, 1000.0])
def test_box_and_pipe_far_too_small_are_refused_alike(barrel, q):
    for call in (lambda: inlet_control_headwater(barrel, q),
                 lambda: culvert_headwater(barrel, q, tailwater=0.05)):
        with pytest.raises(NoSolutionError, match="far too large for this culvert.*larger barrel"):
            call()
    with pytest.raises(NoSolutionError):
        outlet_control_headwater(barrel, q, 0.05)


def test_box_a_little_small_still_gives_a_headwater():
    box = BoxBarrel(span=1.0, rise=1.0, length=25.0, slope=0.005, roughness=0.013)
    res = culvert_headwater(box, 8.0, tailwater=0.5)
    assert 1.0 < res.headwater < 100.0


# -- the length unit of a custom unit system ----------------------------------------------------------
def test_custom_units_take_the_length_unit_from_gravity():
    assert gv.Units(g=32.2, manning_k=1.49).length == "ft"
    assert gv.Units(g=9.81, manning_k=1.0).length == "m"
    assert gv.Units(g=32.2, manning_k=1.49).kinematic_viscosity == pytest.approx(1.004e-6 / FT ** 2)
    with pytest.raises(gv.InvalidInputError, match="length is required for g = 1"):
        gv.Units(g=1.0, manning_k=1.0)
    assert gv.Units(g=1.0, manning_k=1.0, length="L").length == "L"


def test_units_that_do_not_fit_their_length_warn():
    with pytest.warns(GVFlowWarning, match="manning_k = 1 "):
        gv.Units(g=32.2, manning_k=1.0)
    with pytest.warns(GVFlowWarning, match="g = 32.2 m/s²"):
        gv.Units(g=32.2, manning_k=1.0, length="m")
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        gv.Units(g=32.2, manning_k=1.49)
        gv.Units(g=9.81, manning_k=1.0)


@pytest.mark.parametrize("units", [gv.Units(g=32.2, manning_k=1.49), gv.US])
def test_weirs_in_a_foot_system_match_si(units):
    # The same weir in metres and in feet must pass the same discharge: Q_ft = Q_m / 0.3048³, up to the
    # gravity difference (32.2 ft/s² against 9.80665 / 0.3048 = 32.174), sqrt(32.2/32.174) - 1 = 0.04 %.
    # Unscaled metre constants (kh, kb of Kindsvater-Carter and -Shen) made it 1.9 % low at this head.
    g_ratio = math.sqrt(units.g / (9.80665 / FT))
    h, b, p = 0.05, 0.3, 0.3
    q_m = kindsvater_carter_discharge(h, b, p, channel_width=1.0)
    q_ft = kindsvater_carter_discharge(h / FT, b / FT, p / FT, channel_width=1.0 / FT, units=units)
    assert q_ft * FT ** 3 == pytest.approx(q_m * g_ratio, rel=1e-9)
    qv_m = v_notch_discharge(h)
    qv_ft = v_notch_discharge(h / FT, units=units)
    assert qv_ft * FT ** 3 == pytest.approx(qv_m * g_ratio, rel=1e-9)

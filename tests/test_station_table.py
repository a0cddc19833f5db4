"""Station table columns an engineer checks by hand (area, top width, hydraulic radius, boundary shear
stress, freeboard) and the labelled-array export of sweeps and Monte Carlo runs."""

import sys
import warnings

import numpy as np
import pytest

import gvflow as gv
from gvflow.errors import GVFlowWarning

G_SI = 9.80665
G_US = 32.174


def uniform_reach(section, q=4.0, slope=0.001, n=0.015, bank=None, units="SI"):
    yn = gv.normal_depth(section, q, slope, n, units)
    seg = gv.Segment(length=300.0, slope=slope, section=section, roughness=n, bank_height=bank)
    return gv.Reach(segments=[seg], discharge=q, downstream=gv.FixedDepth(yn), units=units), yn


def test_rectangle_in_uniform_flow_by_hand():
    reach, yn = uniform_reach(gv.Rectangular(width=3.0), bank=2.0)
    p = reach.solve()
    np.testing.assert_allclose(p.depth, yn, rtol=1e-9)
    r_hand = 3.0 * yn / (3.0 + 2.0 * yn)
    np.testing.assert_allclose(p.area, 3.0 * p.depth, rtol=1e-14)
    np.testing.assert_allclose(p.top_width, 3.0, rtol=1e-14)
    np.testing.assert_allclose(p.hydraulic_radius, r_hand, rtol=1e-9)
    # uniform flow: Sf = S0, tau = rho g R S0 with rho = 1000 kg/m³ (Chow 1959, §7-5)
    np.testing.assert_allclose(p.shear_stress, 1000.0 * G_SI * r_hand * 0.001, rtol=1e-8)
    np.testing.assert_allclose(p.freeboard, 2.0 - p.depth, rtol=1e-14)
    df = p.to_pandas()
    for col in ("area", "top_width", "hydraulic_radius", "shear_stress", "freeboard"):
        assert col in df.columns
    np.testing.assert_array_equal(df["shear_stress"].to_numpy(), p.shear_stress)


def test_trapezoid_us_units_by_hand():
    sec = gv.Trapezoidal(bottom_width=6.0, side_slope=2.0)
    reach, yn = uniform_reach(sec, q=150.0, slope=0.0005, n=0.025, units="US")
    p = reach.solve()
    y = p.depth
    a = (6.0 + 2.0 * y) * y
    perim = 6.0 + 2.0 * y * np.sqrt(5.0)
    np.testing.assert_allclose(p.area, a, rtol=1e-13)
    np.testing.assert_allclose(p.top_width, 6.0 + 4.0 * y, rtol=1e-13)
    np.testing.assert_allclose(p.hydraulic_radius, a / perim, rtol=1e-13)
    # 1.94 slug/ft³ x 32.174 ft/s² = 62.4 lb/ft³ (from memory); tau in lb/ft²
    np.testing.assert_allclose(p.shear_stress, 1.94 * G_US * a / perim * p.friction_slope, rtol=1e-13)
    assert gv.result.water_unit_weight(gv.US) == pytest.approx(62.4, abs=0.05)
    # no bank height given: freeboard is missing, not a number
    assert np.all(np.isnan(p.freeboard))


def test_overbank_warning_names_the_stretch():
    reach, yn = uniform_reach(gv.Rectangular(width=3.0), bank=0.5)
    assert yn > 0.5
    with pytest.warns(GVFlowWarning, match="rises above the bank or lining top in segment 0"):
        p = reach.solve()
    assert np.all(p.freeboard < 0)
    reach, _ = uniform_reach(gv.Rectangular(width=3.0), bank=5.0)
    with warnings.catch_warnings():
        warnings.simplefilter("error", GVFlowWarning)
        reach.solve()


def test_bank_height_is_saved_in_reach_files(tmp_path):
    reach, _ = uniform_reach(gv.Rectangular(width=3.0), bank=2.25)
    path = tmp_path / "r.json"
    gv.io.write_reach(reach, path)
    assert gv.io.read_reach(path).segments[0].bank_height == 2.25
    with pytest.raises(ValueError, match="bank_height"):
        gv.Segment(length=10.0, slope=0.001, section=gv.Rectangular(width=1.0), roughness=0.013, bank_height=-1.0)


# ---------------------------------------------------------------------------
# labelled arrays
# ---------------------------------------------------------------------------

def sweep_reach():
    seg = gv.Segment(length=500.0, slope=0.001, section=gv.Rectangular(width=3.0), roughness=0.015)
    return gv.Reach(segments=[seg, seg], discharge=4.0, downstream=gv.FixedDepth(2.0))


def test_sweep_to_xarray():
    xr = pytest.importorskip("xarray")
    res = sweep_reach().sweep(discharge=[2.0, 4.0, 6.0], n_steps=20)
    ds = res.to_xarray()
    assert isinstance(ds, xr.Dataset)
    assert ds.sizes["scenario"] == 3 and ds.sizes["station"] == res.x.size
    np.testing.assert_array_equal(ds["depth"].values, res.depth)
    np.testing.assert_array_equal(ds["stage"].values, res.stage)
    np.testing.assert_array_equal(ds["discharge"].values, [2.0, 4.0, 6.0])
    np.testing.assert_array_equal(ds["x"].values, res.x)
    # scenario 1 at station 7 is the depth of the second scenario solved alone
    alone = sweep_reach().model_copy(update={"discharge": 4.0}).solve(n_steps=20)
    assert float(ds["depth"].sel(scenario=1).isel(station=0)) == pytest.approx(alone.depth[0], rel=1e-12)


def test_monte_carlo_to_xarray():
    pytest.importorskip("xarray")
    mc = gv.monte_carlo(sweep_reach(), 31, roughness=gv.Uncertain(0.012, 0.015, 0.02), seed=3, n_steps=20)
    ds = mc.to_xarray()
    assert ds.sizes["scenario"] == 31
    np.testing.assert_array_equal(ds["stage_envelope"].values, mc.stage_envelope)
    np.testing.assert_array_equal(ds["percentile"].values, mc.percentiles)


def test_to_xarray_without_xarray_names_the_extra(monkeypatch):
    res = sweep_reach().sweep(discharge=[2.0, 4.0], n_steps=10)
    monkeypatch.setitem(sys.modules, "xarray", None)
    with pytest.raises(ImportError, match=r"gvflow\[xarray\]"):
        res.to_xarray()

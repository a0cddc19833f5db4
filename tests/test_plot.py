"""Long-section plot: what is drawn, where, and with which labels (wiring tests)."""

import matplotlib

matplotlib.use("Agg")

import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402
import pytest  # noqa: E402
from matplotlib.axes import Axes  # noqa: E402
from matplotlib.figure import Figure  # noqa: E402

import gvflow as gv  # noqa: E402


@pytest.fixture(autouse=True)
def _close_figures():
    yield
    plt.close("all")


@pytest.fixture(scope="module")
def demo():
    return gv.demo_reach().solve()


@pytest.fixture(scope="module")
def flat_end():
    """Mild, horizontal and adverse segments ending in a free overfall (no normal depth on two of them)."""
    tr = gv.Trapezoidal(bottom_width=10.0, side_slope=2.0)
    reach = gv.Reach(segments=[gv.Segment(length=800.0, slope=0.002, section=tr, roughness=0.025),
                               gv.Segment(length=300.0, slope=0.0, section=tr, roughness=0.025),
                               gv.Segment(length=200.0, slope=-0.001, section=tr, roughness=0.025)],
                     discharge=300.0, units="US", downstream=gv.CriticalFlow())
    return reach.solve(n_steps=30)


def _line(ax, label):
    found = [ln for ln in ax.get_lines() if ln.get_label() == label]
    assert found, f"no line labelled {label!r}"
    return found[0]


def _texts(ax):
    return [t.get_text() for t in ax.texts]


def test_returns_axes_and_draws_on_given_axes(demo):
    fig = Figure()
    ax = fig.add_subplot()
    assert gv.plot_profile(demo, ax) is ax
    assert isinstance(demo.plot(), Axes)


def test_axis_labels_carry_units(demo, flat_end):
    ax = demo.plot()
    assert ax.get_xlabel() == "Distance from upstream end [m]"
    assert ax.get_ylabel() == "Elevation [m]"
    ax = flat_end.plot()
    assert ax.get_xlabel() == "Distance from upstream end [ft]"
    assert ax.get_ylabel() == "Elevation [ft]"


def test_legend_names_every_quantity(demo):
    ax = demo.plot()
    legend = [t.get_text() for t in ax.get_legend().get_texts()]
    assert legend == ["bed", "water surface", "energy grade line", "normal depth", "critical depth",
                      "hydraulic jump"]
    assert all(g.get_visible() for g in ax.xaxis.get_gridlines() + ax.yaxis.get_gridlines())


def test_surface_bed_and_energy_lines_follow_the_profile(demo):
    ax = demo.plot()
    for label, values in (("water surface", demo.stage), ("bed", demo.bed), ("energy grade line", demo.energy_grade)):
        line = _line(ax, label)
        np.testing.assert_array_equal(line.get_xdata(), demo.x)
        np.testing.assert_array_equal(line.get_ydata(), values)


def test_normal_and_critical_lines_per_segment(demo):
    ax = demo.plot()
    reach = demo.reach
    xb = reach.boundaries
    normal = [ln for ln in ax.get_lines() if ln.get_color() == "tab:green"]
    critical = [ln for ln in ax.get_lines() if ln.get_color() == "tab:red"]
    assert len(normal) == len(critical) == len(reach.segments)
    for k, (ln_n, ln_c) in enumerate(zip(normal, critical, strict=True)):
        zb = reach.bed_elevation(xb[k:k + 2], [k, k])
        np.testing.assert_allclose(ln_n.get_xdata(), xb[k:k + 2])
        np.testing.assert_allclose(ln_n.get_ydata(), zb + demo.normal_depths[k], rtol=1e-12)
        np.testing.assert_allclose(ln_c.get_ydata(), zb + demo.critical_depths[k], rtol=1e-12)
        assert ln_n.get_linestyle() == "--" and ln_c.get_linestyle() == "--"


def test_no_normal_depth_line_where_there_is_none(flat_end):
    assert flat_end.slope_classes == ["mild", "horizontal", "adverse"]
    ax = flat_end.plot()
    normal = [ln for ln in ax.get_lines() if ln.get_color() == "tab:green"]
    critical = [ln for ln in ax.get_lines() if ln.get_color() == "tab:red"]
    assert len(normal) == 1 and len(critical) == 3
    np.testing.assert_allclose(normal[0].get_xdata(), [0.0, 800.0])
    assert "hydraulic jump" not in [t.get_text() for t in ax.get_legend().get_texts()]


def test_jumps_marked_with_froude_number(demo):
    assert len(demo.jumps) == 2
    ax = demo.plot()
    marks = [ln for ln in ax.get_lines() if ln.get_color() == "tab:purple"]
    assert len(marks) == len(demo.jumps)
    texts = _texts(ax)
    for mark, jp in zip(marks, demo.jumps, strict=True):
        z = demo.reach.bed_elevation(jp.x, jp.segment)
        np.testing.assert_allclose(mark.get_xdata(), [jp.x, jp.x])
        np.testing.assert_allclose(mark.get_ydata(), [z + jp.upstream_depth, z + jp.downstream_depth])
        assert f"jump\nF1 = {jp.froude:.2f}" in texts


def test_each_piece_labelled_with_its_type(demo, flat_end):
    for profile in (demo, flat_end):
        texts = _texts(profile.plot())
        labels = [t for t in texts if t in {"M1", "M2", "M3", "S1", "S2", "S3", "H2", "H3", "A2", "A3", "C1", "C3"}]
        assert labels == profile.profile_types
    assert _texts(flat_end.plot())[:3] == ["M1", "H2", "A2"]


def test_segment_boundaries_and_names(demo):
    ax = demo.plot()
    vlines = [ln for ln in ax.get_lines() if ln.get_linestyle() == ":"]
    assert sorted(float(ln.get_xdata()[0]) for ln in vlines) == [400.0, 500.0]
    texts = _texts(ax)
    for name, cls in (("canal", "mild"), ("chute", "steep"), ("stilling reach", "mild")):
        assert any(t.startswith(f"{name}\n{cls}") for t in texts), name


def test_switches_remove_their_artists(demo):
    ax = gv.plot_profile(demo, show_energy=False, show_normal=False, show_critical=False, show_labels=False)
    labels = [ln.get_label() for ln in ax.get_lines()]
    assert "energy grade line" not in labels
    assert not [ln for ln in ax.get_lines() if ln.get_color() in ("tab:green", "tab:red")]
    assert len(ax.texts) == 0


def test_titles(demo):
    assert demo.plot().get_title() == demo.reach.name
    assert demo.plot(title="Design flow").get_title() == "Design flow"
    plain = gv.Reach(segments=[gv.Segment(length=300.0, slope=0.001, section=gv.Rectangular(width=3.0),
                                          roughness=0.015)], discharge=5.0).solve(n_steps=10)
    assert plain.plot().get_title() == "Water-surface profile, Q = 5 m³/s"


def test_everything_drawn_is_inside_the_view(demo):
    ax = demo.plot()
    lo, hi = ax.get_ylim()
    assert lo < demo.bed.min() and hi > demo.energy_grade.max()
    # the reach and, upstream of it, the sluice gate at its head
    x0, x1 = ax.get_xlim()
    assert x0 < 0.0 and x1 == demo.x[-1]
    for patch in ax.patches:
        xy = patch.get_xy()
        assert x0 <= xy[:, 0].min() and xy[:, 0].max() <= x1 and lo <= xy[:, 1].min() and xy[:, 1].max() <= hi


def test_png_written(demo, tmp_path):
    ax = demo.plot()
    out = tmp_path / "long_section.png"
    ax.figure.savefig(out, dpi=60)
    assert out.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"

"""Long-section plot: what is drawn, where, and with which labels (wiring tests)."""

import matplotlib

matplotlib.use("Agg")

import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402
import pytest  # noqa: E402
from matplotlib.axes import Axes  # noqa: E402
from matplotlib.figure import Figure  # noqa: E402
from matplotlib.text import Text  # noqa: E402

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


# ---------------------------------------------------------------------------
# label placement
# ---------------------------------------------------------------------------

def _boxes(labels):
    """Display boxes (x0, y0, x1, y1) of labels with their background boxes, after a fresh layout."""
    from gvflow._labels import _extent

    labels[0].figure.draw_without_rendering()
    return np.array([_extent(t) for t in labels])


def _assert_apart_and_inside(ax, labels):
    boxes = _boxes(labels)
    inside = ax.bbox
    assert np.all(boxes[:, 0] >= inside.x0) and np.all(boxes[:, 2] <= inside.x1)
    assert np.all(boxes[:, 1] >= inside.y0) and np.all(boxes[:, 3] <= inside.y1)
    for i in range(len(boxes)):
        for j in range(i + 1, len(boxes)):
            a, b = boxes[i], boxes[j]
            apart = a[2] <= b[0] or b[2] <= a[0] or a[3] <= b[1] or b[3] <= a[1]
            assert apart, f"labels {labels[i].get_text()!r} and {labels[j].get_text()!r} overlap"


def test_crowded_labels_are_pulled_apart_and_kept_inside():
    from gvflow._labels import _label, place_labels

    fig = Figure(figsize=(7.0, 4.5), layout="constrained")
    ax = fig.add_subplot()
    ax.set_xlim(0.0, 10.0)
    ax.set_ylim(0.0, 10.0)
    rng = np.random.default_rng(7)
    # thirty labels heaped on one point, ten at the corners and edges where they would be cut off
    labels = [_label(ax, f"label {i}\nsecond line", (5.0 + 0.01 * rng.standard_normal(), 5.0)) for i in range(30)]
    for x, y in ((0, 0), (10, 10), (0, 10), (10, 0), (5, 10), (5, 0), (0, 5), (10, 5), (9.9, 9.9), (0.1, 0.1)):
        labels.append(_label(ax, f"edge {x},{y}", (x, y)))
    before = _boxes(labels)
    assert np.any(before[:, 2] > ax.bbox.x1) and np.any(before[:, 3] > ax.bbox.y1)  # the test starts crowded
    shown = place_labels(ax)
    assert len(shown) == len(labels)
    _assert_apart_and_inside(ax, labels)
    # offsets are in points: the arrangement holds when written at another dpi
    fig.set_dpi(150)
    _assert_apart_and_inside(ax, labels)


def test_labels_avoid_fixed_texts_and_the_legend():
    from gvflow._labels import _label, place_labels

    fig = Figure(figsize=(6.0, 4.0), layout="constrained")
    ax = fig.add_subplot()
    ax.plot([0, 1], [0, 1], label="a line")
    ax.legend(loc="upper right")
    fixed = ax.text(0.5, 0.5, "fixed note", ha="center", va="center", fontsize=12)
    labels = [_label(ax, f"movable {i}", (0.5, 0.5), offset=(0.0, 0.0), va="center") for i in range(5)]
    labels += [_label(ax, f"near the legend {i}", (0.95, 0.97), offset=(0.0, 0.0), va="top", ha="right")
               for i in range(3)]
    place_labels(ax)
    fig.draw_without_rendering()
    fb, lb = fixed.get_window_extent(), ax.get_legend().get_window_extent()
    for t in labels:
        box = Text.get_window_extent(t)  # the text without its arrow
        assert not box.overlaps(fb) and not box.overlaps(lb), t.get_text()
    _assert_apart_and_inside(ax, labels)


def test_a_label_with_no_room_left_is_hidden_with_a_warning():
    from gvflow._labels import _label, place_labels

    fig = Figure(figsize=(2.0, 1.5))
    ax = fig.add_subplot()
    labels = [_label(ax, f"a rather long label {i}", (0.5, 0.5)) for i in range(40)]
    with pytest.warns(gv.GVFlowWarning, match="no free place"):
        shown = place_labels(ax)
    assert 0 < len(shown) < len(labels)
    assert all(not t.get_visible() for t in labels if t not in shown)
    _assert_apart_and_inside(ax, shown)


@pytest.fixture(scope="module")
def crowded():
    """Short alternating mild and steep segments: a piece label, a jump and a name for every few metres."""
    rect = gv.Rectangular(width=3.0)
    segs = [gv.Segment(length=40.0, slope=0.02 if k % 2 else 0.0008, section=rect, roughness=0.015)
            for k in range(10)]
    return gv.Reach(segments=segs, discharge=6.0, upstream=gv.SluiceGate(opening=0.35),
                    downstream=gv.FixedDepth(1.4)).solve(n_steps=20)


def test_long_section_labels_never_overlap_or_leave_the_axes(crowded, tmp_path):
    assert len(crowded.pieces) >= 10 and len(crowded.jumps) >= 3
    ax = crowded.plot()
    labels = [t for t in ax.texts if t.get_gid() == "gvflow-label" and t.get_visible()]
    assert len(labels) == len(crowded.pieces) + len(crowded.jumps) + len(crowded.reach.segments) + 1  # + the gate
    _assert_apart_and_inside(ax, labels)
    ax.figure.savefig(tmp_path / "crowded.png", dpi=70)
    _assert_apart_and_inside(ax, labels)


# ---------------------------------------------------------------------------
# structures at their true levels
# ---------------------------------------------------------------------------

def _patch(ax, gid):
    found = [p for p in ax.patches if p.get_gid() == gid]
    assert len(found) == 1, f"{len(found)} patches named {gid!r}"
    xy = found[0].get_xy()
    return xy[:-1] if len(xy) > 1 and np.array_equal(xy[0], xy[-1]) else xy  # without the closing vertex


def _lines(ax, gid):
    return [ln for ln in ax.get_lines() if ln.get_gid() == gid]


def test_weir_crest_and_bank_top_at_their_levels():
    tr = gv.Trapezoidal(bottom_width=6.0, side_slope=1.5)
    reach = gv.Reach(segments=[gv.Segment(length=1500.0, slope=0.0006, section=tr, roughness=0.025, bank_height=3.2)],
                     discharge=20.0, downstream=gv.Weir(crest_height=1.5, crest_length=6.0, tailwater_level=98.5),
                     datum=98.0)
    ax = reach.solve(n_steps=20).plot()
    weir = _patch(ax, "weir")
    assert weir[:, 0].min() == 1500.0 and weir[:, 1].min() == 98.0 and weir[:, 1].max() == 98.0 + 1.5
    assert "weir crest 99.50 m" in _texts(ax)
    bank = _lines(ax, "bank top")[0]
    np.testing.assert_allclose(bank.get_xdata(), [0.0, 1500.0])
    np.testing.assert_allclose(bank.get_ydata(), [98.0 + 0.9 + 3.2, 98.0 + 3.2], rtol=1e-12)
    assert _patch(ax, "tailwater")[:, 1].max() == 98.5
    assert "bank or lining top" in [t.get_text() for t in ax.get_legend().get_texts()]


def test_culvert_barrel_road_and_embankment_at_their_levels():
    from gvflow.structures import BoxBarrel, RoadCrest

    box = BoxBarrel(span=2.0, rise=1.5, length=30.0, slope=0.005, roughness=0.013)
    reach = gv.Reach(segments=[gv.Segment(length=300.0, slope=0.002, section=gv.Rectangular(width=4.0),
                                          roughness=0.03)], discharge=6.0, datum=50.0,
                     downstream=gv.Culvert(barrel=box, tailwater=1.0, invert_offset=0.1,
                                           road=RoadCrest(length=40.0, elevation=3.0)))
    ax = reach.solve(n_steps=20).plot()
    zi, zo = 50.1, 50.1 - 0.005 * 30.0
    barrel = _patch(ax, "culvert barrel")
    np.testing.assert_allclose(barrel, [[300.0, zi], [330.0, zo], [330.0, zo + 1.5], [300.0, zi + 1.5]], rtol=1e-12)
    road = _lines(ax, "road crest")[0]
    np.testing.assert_allclose(road.get_ydata(), [zi + 3.0, zi + 3.0], rtol=1e-12)
    bank = _patch(ax, "embankment")
    assert bank[:, 1].min() == pytest.approx(zo + 1.5) and bank[:, 1].max() == pytest.approx(zi + 3.0)
    assert _patch(ax, "tailwater")[:, 1].max() == pytest.approx(zo + 1.0)
    texts = _texts(ax)
    assert "road crest 53.10 m" in texts and "culvert box 2.00 x 1.50 m\ninvert 50.10, crown 51.60 m" in texts
    assert ax.get_xlim()[1] > 330.0


def test_gates_hang_from_their_lips_and_the_pool_stands_at_its_level():
    rect = gv.Rectangular(width=3.0)
    reach = gv.Reach(segments=[gv.Segment(length=200.0, slope=0.001, section=rect, roughness=0.015),
                               gv.Segment(length=200.0, slope=0.001, section=rect, roughness=0.015,
                                          gate=gv.SluiceGate(opening=0.5))],
                     discharge=5.0, upstream=gv.Pool(level=103.0), downstream=gv.FixedDepth(1.6), datum=100.0)
    profile = reach.solve(n_steps=20)
    ax = profile.plot()
    gate = _patch(ax, "gate")
    assert gate[:, 1].min() == pytest.approx(100.2 + 0.5)  # bed at the gate 100.2, opening 0.5
    held = float(np.max(profile.stage[np.isclose(profile.x, 200.0)]))
    assert gate[:, 1].max() > held  # the plate stands above the water it holds
    assert _patch(ax, "pool")[:, 1].max() == 103.0
    gated = gv.demo_reach().solve()
    plate = _patch(gated.plot(), "gate")
    assert plate[:, 1].min() == pytest.approx(gated.bed[0] + 0.6) and plate[:, 1].max() > gated.energy_grade[0]


def test_conduit_crown_and_overfall_brink():
    pipe = gv.Circular(diameter=1.2)
    reach = gv.Reach(segments=[gv.Segment(length=120.0, slope=0.004, section=pipe, roughness=0.013),
                               gv.Segment(length=80.0, slope=0.001, section=pipe, roughness=0.013)],
                     discharge=0.8, downstream=gv.FreeOverfall(), datum=20.0)
    ax = reach.solve(n_steps=20).plot()
    crowns = _lines(ax, "conduit crown")
    assert len(crowns) == 2
    np.testing.assert_allclose(crowns[1].get_ydata(), [20.08 + 1.2, 20.0 + 1.2], rtol=1e-12)
    brink = _lines(ax, "brink")[0]
    assert brink.get_xdata()[0] == 200.0 and brink.get_ydata()[0] == 20.0
    assert brink.get_ydata()[1] == ax.get_ylim()[0]
    assert "free overfall" in _texts(ax)


def test_structures_can_be_left_out(demo):
    ax = gv.plot_profile(demo, show_structures=False)
    assert not ax.patches and ax.get_xlim() == (0.0, demo.x[-1])


# ---------------------------------------------------------------------------
# Monte Carlo envelope and the other plots
# ---------------------------------------------------------------------------

def test_envelope_in_long_section_style_names_what_was_uncertain():
    from gvflow.structures import BoxBarrel

    rect = gv.Rectangular(width=3.0)
    reach = gv.Reach(segments=[gv.Segment(length=300.0, slope=0.001, section=rect, roughness=0.015, name="upper",
                                          bank_height=2.4),
                               gv.Segment(length=200.0, slope=0.001, section=rect, roughness=0.015)],
                     discharge=4.0, name="Envelope test reach",
                     downstream=gv.Culvert(barrel=BoxBarrel(span=2.0, rise=1.5, length=20.0, slope=0.005,
                                                            roughness=0.013), tailwater=0.9))
    mc = gv.monte_carlo(reach, 30, roughness=[gv.Uncertain(0.012, 0.015, 0.02), None],
                        discharge=gv.Uncertain(3.0, 4.0, 5.0, "uniform"), seed=2, n_steps=15)
    fig = Figure(figsize=(10.0, 5.4), layout="constrained")
    ax = fig.add_subplot()
    assert mc.plot_envelope(ax=ax) is ax
    title = ax.get_title()
    assert title.startswith("Envelope test reach: 30 samples")
    flat = " ".join(title.split())
    assert "Uncertain: discharge 3 to 5 m³/s (uniform)" in flat
    assert "Manning's n of upper 0.012 to 0.02 (triangular, most likely 0.015)" in flat
    assert "segment 1" not in flat  # a fixed segment is not named as uncertain
    p = mc.percentiles
    median = _line(ax, f"{p[1]:g}th percentile")
    np.testing.assert_array_equal(median.get_ydata(), mc.stage_envelope[1])
    assert _line(ax, "bed") is not None and _lines(ax, "bank top")
    assert _patch(ax, "culvert barrel")[:, 1].max() == pytest.approx(reach.datum + 1.5)
    band = [c for c in ax.collections if c.get_label() == f"{p[0]:g}th to {p[-1]:g}th percentile"][0]
    verts = band.get_paths()[0].vertices
    assert verts[:, 1].min() == pytest.approx(mc.stage_envelope[0].min())
    assert verts[:, 1].max() == pytest.approx(mc.stage_envelope[-1].max())
    labels = [t for t in ax.texts if t.get_gid() == "gvflow-label" and t.get_visible()]
    _assert_apart_and_inside(ax, labels)
    one = gv.monte_carlo(reach, 10, roughness=gv.Uncertain(0.012, 0.015, 0.02), correlated=True, seed=2, n_steps=10)
    flat = " ".join(one.plot_envelope().get_title().split())
    assert ("Manning's n 0.012 to 0.02 (triangular, most likely 0.015) in every segment (one draw for all "
            "segments); discharge fixed at 4 m³/s") in flat


def test_every_plot_takes_an_axes_and_returns_it():
    from gvflow.structures import CircularBarrel, culvert_headwater

    profile = gv.Reach(segments=[gv.Segment(length=200.0, slope=0.001, section=gv.Rectangular(width=3.0),
                                            roughness=0.015)], discharge=4.0).solve(n_steps=10)
    mc = gv.monte_carlo(profile.reach, 8, discharge=gv.Uncertain(3.0, 4.0, 5.0), seed=1, n_steps=10)
    pipe = CircularBarrel(diameter=1.2, length=30.0, slope=0.01, roughness=0.012)
    calls = [lambda ax: gv.plot_profile(profile, ax), lambda ax: profile.plot(ax=ax),
             lambda ax: gv.plot_section(gv.Rectangular(width=3.0), 1.0, discharge=4.0, ax=ax),
             lambda ax: mc.plot_envelope(ax=ax), lambda ax: mc.plot_envelope(ax=ax, quantity="depth"),
             lambda ax: culvert_headwater(pipe, np.linspace(0.5, 3.0, 8), tailwater=0.5).plot(ax=ax)]
    for call in calls:
        ax = Figure().add_subplot()
        assert call(ax) is ax
        assert isinstance(call(None), Axes)


@pytest.mark.slow  # subprocess, process pool or kernel start-up
def test_importing_gvflow_does_not_import_matplotlib():
    import subprocess
    import sys

    code = "import sys, gvflow; print('matplotlib' in sys.modules)"
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "False"


def test_envelope_with_a_sampled_slope_shades_the_bed_range_and_names_every_uncertain_input():
    import matplotlib

    matplotlib.use("Agg")
    reach = gv.Reach(segments=[gv.Segment(length=300, slope=0.002, section=gv.Rectangular(width=4), roughness=0.015),
                               gv.Segment(length=300, slope=0.001, section=gv.Rectangular(width=4), roughness=0.015)],
                     discharge=8.0, downstream=gv.FixedDepth(1.8))
    mc = gv.monte_carlo(reach, 40, roughness=gv.Uncertain(0.012, 0.015, 0.018),
                        vary={"segments.0.slope": gv.Uncertain(0.0015, 0.002, 0.0025),
                              "downstream": gv.Uncertain(1.5, 1.8, 2.1)}, seed=1, n_steps=20)
    ax = mc.plot_envelope()
    title = ax.get_title()
    assert "bed slope of segment 0 0.0015 to 0.0025" in title and "downstream control 1.5 to 2.1" in title
    band = [c for c in ax.collections if c.get_label() == "bed (range over the samples)"]
    assert len(band) == 1
    ys = band[0].get_paths()[0].vertices[:, 1]
    bed = np.asarray(mc.bed)
    assert ys.min() == pytest.approx(bed.min()) and ys.max() == pytest.approx(bed.max())

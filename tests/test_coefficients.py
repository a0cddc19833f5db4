"""Coefficients as data: every coefficient the code uses is registered with its provenance,
confirmed values agree with the numbers read in their sources, and results list what they rest on."""

from __future__ import annotations

import ast
import importlib
import math
import numbers
import pickle
import re
import subprocess
import sys
import types
from pathlib import Path

import numpy as np
import pytest

import gvflow as gv
import gvflow.coefficients as C
from gvflow.structures import BoxBarrel, CircularBarrel

ROOT = Path(__file__).resolve().parents[1]

# ---------------------------------------------------------------------------
# the registry
# ---------------------------------------------------------------------------


def _entries():
    for item in C.REGISTRY.values():
        yield from (item.rows.values() if isinstance(item, C.Table) else (item,))


def test_every_registered_coefficient_has_a_provenance():
    entries = list(_entries())
    assert len(entries) > 50
    for c in entries:
        p = c.provenance
        assert p.status in C.STATUSES, c.key
        assert len(p.source) > 10, c.key
        if p.status == C.READ:
            assert p.where.startswith("http"), c.key


def test_provenance_refuses_an_unknown_status_or_a_read_value_without_its_address():
    with pytest.raises(ValueError, match="status"):
        C.Provenance("Somebody (2000)", "probably right")
    with pytest.raises(ValueError, match="address"):
        C.Provenance("Somebody (2000)", C.READ)


def test_lookup_of_an_unregistered_coefficient_fails_clearly():
    with pytest.raises(KeyError, match="no coefficient 'weir.magic' is registered"):
        C.value("weir.magic")
    with pytest.raises(TypeError, match="is a table"):
        C.value("culvert.entrance_loss")


# ---------------------------------------------------------------------------
# the users: every numeric constant of a module that uses coefficients comes from the registry
# ---------------------------------------------------------------------------

#: module -> {constant name: registry key, (table key, column) or (key, index)}
USES = {
    "gvflow.structures.weirs": {
        "VILLEMONTE_EXPONENT": "weir.villemonte_exponent",
        "DEFAULT_MAX_SUBMERGENCE": "weir.max_submergence",
        "BROAD_CRESTED_COEFFICIENT": "weir.broad_crested_cd",
        "BROAD_CRESTED_MODULAR_LIMIT": "weir.broad_crested_modular_limit",
        "_REHBOCK_A": ("weir.rehbock", 0),
        "_REHBOCK_B": ("weir.rehbock", 1),
        "_FRANCIS": "weir.francis_contraction",
        "_KC_RATIO": ("weir.kindsvater_carter_ce", "b/B"),
        "_KC_C2": ("weir.kindsvater_carter_ce", "C2"),
        "_KC_C1": ("weir.kindsvater_carter_ce", "C1"),
        "_KC_KB_M": ("weir.kindsvater_carter_kb", "kb"),
        "_KC_KH_M": "weir.kindsvater_carter_kh",
        "_KS_ANGLE": ("weir.kindsvater_shen", "notch angle"),
        "_KS_CE": ("weir.kindsvater_shen", "Ce"),
        "_KS_KH_M": ("weir.kindsvater_shen", "kh"),
    },
    "gvflow.structures.culverts": {
        "UNSUBMERGED_LIMIT": "culvert.unsubmerged_limit",
        "SUBMERGED_LIMIT": "culvert.submerged_limit",
        "_G_US": "culvert.gravity_us",
        "EXIT_LOSS": "culvert.exit_loss",
        "INLET_TYPES": "inlet types",  # checked row by row below
    },
    "gvflow.structures.gates": {"DEFAULT_CONTRACTION": "gate.contraction"},
    "gvflow.structures.overfall": {
        "BRINK_DEPTH_RATIO": "overfall.brink_ratio",
        "CRITICAL_SECTION_DISTANCE_RANGE": "overfall.critical_section_distance",
        "CRITICAL_SECTION_FACTOR": "overfall.critical_section_factor",
    },
    "gvflow.structures.backwater": {"EXTENT_TOLERANCE": "backwater.extent_tolerance"},
    "gvflow.controls.structures": {
        "_NOTCH_ANGLES": ("weir.kindsvater_shen", "notch angle"),
        "EXIT_LOSS": "culvert.exit_loss",
        "BRINK_DEPTH_RATIO": "overfall.brink_ratio",
        "CRITICAL_SECTION_DISTANCE_RANGE": "overfall.critical_section_distance",
        "CRITICAL_SECTION_FACTOR": "overfall.critical_section_factor",
        "BROAD_CRESTED_COEFFICIENT": "weir.broad_crested_cd",
        "BROAD_CRESTED_MODULAR_LIMIT": "weir.broad_crested_modular_limit",
        "DEFAULT_MAX_SUBMERGENCE": "weir.max_submergence",
    },
    "gvflow.jumps": {"JUMP_TYPES": ("jump.types", "pairs"), "JUMP_LENGTH_CURVE": "jump.length_curve"},
    "gvflow.structures.pool": {},
    "gvflow.structures.rating": {},
    "gvflow.controls.base": {},
    "gvflow.friction": {},
    "gvflow.structures._common": {},
}

#: numeric module constants that are not empirical coefficients, with the reason
NOT_COEFFICIENTS = {
    ("gvflow.structures.pool", "_TINY"): "numerical floor of a bracket",
    ("gvflow.structures.gates", "SUB"): "branch code of the compiled kernels",
    ("gvflow.structures.gates", "_M_TOL"): "round-off margin when comparing specific forces",
    ("gvflow.controls.structures", "CRITICAL_SLOPE_TOLERANCE"): "numerical tolerance of the slope class",
    ("gvflow.structures._common", "_G_SI"): "standard gravity, a definition (9.80665 m/s²)",
    ("gvflow.structures._common", "_FEET_PER_METRE"): "definition of the foot (0.3048 m)",
    ("gvflow.friction", "MANNING_N_MIN"): "input guard, a hundredth of the smoothest surface (glass)",
    ("gvflow.friction", "KIND_MANNING"): "law code of the compiled kernels",
    ("gvflow.friction", "KIND_CHEZY"): "law code of the compiled kernels",
    ("gvflow.friction", "KIND_DARCY"): "law code of the compiled kernels",
    ("gvflow.structures.culverts", "MAX_HEADWATER_RISES"): "input guard: a barrel far too small for its discharge",
}


def _has_number(v) -> bool:
    if isinstance(v, bool):
        return False
    if isinstance(v, numbers.Number):
        return True
    if isinstance(v, np.ndarray):
        return v.dtype.kind in "fiu"
    if isinstance(v, tuple | list):
        return any(_has_number(x) for x in v)
    if isinstance(v, dict):
        return any(_has_number(x) for x in v.values())
    return False


def unregistered_constants(module, uses, allowed) -> list[str]:
    """Names of module-level constants holding numbers that are neither mapped to the registry nor allowed."""
    name = module.__name__
    return sorted(k for k, v in vars(module).items()
                  if re.fullmatch(r"_?[A-Z][A-Z0-9_]*", k) and _has_number(v)
                  and k not in uses and (name, k) not in allowed)


@pytest.mark.parametrize("module_name", sorted(USES))
def test_every_numeric_constant_of_a_user_module_is_registered(module_name):
    module = importlib.import_module(module_name)
    assert unregistered_constants(module, USES[module_name], NOT_COEFFICIENTS) == []


def test_the_check_for_unregistered_constants_can_fail():
    fake = types.ModuleType("gvflow.structures.fake")
    fake.SOME_COEFFICIENT = 0.62
    fake.SOME_TABLE = {"a": (1.0, "x")}
    fake.DESCRIPTIONS = ("text only",)
    assert unregistered_constants(fake, {}, {}) == ["SOME_COEFFICIENT", "SOME_TABLE"]


def _registered(key):
    if isinstance(key, tuple):
        k, sel = key
        if sel == "pairs":
            return tuple(zip(C.value(k), ("undular", "weak", "oscillating", "steady", "strong"), strict=True))
        if isinstance(sel, int):
            return C.value(k)[sel]
        return C.table(k).column(sel)
    return C.value(key)


@pytest.mark.parametrize("module_name", sorted(USES))
def test_module_constants_equal_their_registry_values(module_name):
    module = importlib.import_module(module_name)
    for name, key in USES[module_name].items():
        if key == "inlet types":
            continue
        got, want = getattr(module, name), _registered(key)
        if isinstance(got, np.ndarray):
            np.testing.assert_array_equal(got, np.array(want), err_msg=name)
        else:
            assert got == want, name


def test_inlet_types_are_the_registered_rows():
    from gvflow.structures.culverts import INLET_TYPES

    ic, ke = C.table("culvert.inlet_control"), C.table("culvert.entrance_loss")
    assert set(INLET_TYPES) == set(ic.rows) == set(ke.rows)
    for key, inlet in INLET_TYPES.items():
        assert tuple(inlet[:7]) == ic.row(key).value
        assert inlet.entrance_loss == ke.row(key).value[0]


#: numeric literals allowed in the code of the user modules (not coefficients), with the reason
GENERIC_LITERALS = {0, 1, 2, 3, 4, 0.5, 1.5, 2.5}
ALLOWED_LITERALS = {
    "gvflow/structures/weirs.py": {0.6: "1.5/2.5 from the derivative of (b - f n h) h^1.5",
                                   8.0: "8/15 of the V-notch law", 15.0: "8/15 of the V-notch law",
                                   9.0: "4/9 of the broad-crested relation", 90.0: "default notch angle",
                                   200: "iteration cap"},
    "gvflow/structures/culverts.py": {100: "default number of barrel steps", 200: "iteration cap"},
    "gvflow/structures/gates.py": {8.0: "Belanger's 8 F²", 200: "iteration cap"},
    "gvflow/structures/overtopping.py": {32.174: "standard gravity in ft/s² (9.80665 m/s² exactly)",
                                         100: "iteration cap", 0.25: "sample points of the split's first guess",
                                         0.75: "sample points of the split's first guess",
                                         0.3: "plot style", 0.99: "plot label position",
                                         1.02: "plot axis margin", 1.2: "plot line width", 5: "figure size",
                                         8: "figure size / font size", 25: "plot marker spacing"},
    "gvflow/jumps.py": {8.0: "Belanger's 8 F²"},
    "gvflow/controls/structures.py": {0.1: "bracket step", 0.8: "bracket step", 15: "bracket iterations",
                                      40: "bracket iterations", 50: "bisection cap",
                                      90.0: "default notch angle", 100: "default steps / bounds",
                                      200: "iteration cap"},
}


@pytest.mark.parametrize("path", sorted(["gvflow/structures/weirs.py", "gvflow/structures/culverts.py",
                                         "gvflow/structures/gates.py", "gvflow/structures/overfall.py",
                                         "gvflow/structures/pool.py", "gvflow/structures/backwater.py",
                                         "gvflow/controls/structures.py", "gvflow/jumps.py",
                                         "gvflow/controls/base.py",
                                         "gvflow/structures/overtopping.py"]))
def test_no_unregistered_coefficient_is_written_into_the_code(path):
    """A number in the code of a module that uses coefficients is either generic (a small integer, a
    half, a tolerance, a documented default) or comes from the registry."""
    tree = ast.parse((ROOT / path).read_text())
    allowed = ALLOWED_LITERALS.get(path, {})
    found = sorted({(n.value, n.lineno) for n in ast.walk(tree)
                    if isinstance(n, ast.Constant) and isinstance(n.value, int | float)
                    and not isinstance(n.value, bool) and n.value not in GENERIC_LITERALS
                    and abs(n.value) >= 1e-5 and n.value not in allowed})
    assert found == [], f"{path}: register these in gvflow.coefficients or explain them here: {found}"


# ---------------------------------------------------------------------------
# confirmed values against the numbers read in their sources
# ---------------------------------------------------------------------------

@pytest.mark.reference
def test_entrance_losses_match_hds5_table_12():
    """FHWA (2001), HDS-5, FHWA-NHI-01-020, Table 12 'Entrance loss coefficients', as read at
    yumpu.com/en/document/view/2499398/.../243: concrete pipe, headwall, square edge 0.5; socket (groove)
    end with headwall 0.2; projecting, socket end 0.2; corrugated metal, headwall 0.5, mitered 0.7,
    projecting 0.9; beveled edges 0.2; box, wingwalls 30-75 deg square crown 0.4, 10-25 deg 0.5,
    parallel 0.7, headwall square-edged 0.5, beveled 0.2."""
    read = {"concrete_pipe_square_edge_headwall": 0.5, "concrete_pipe_groove_end_headwall": 0.2,
            "concrete_pipe_groove_end_projecting": 0.2, "corrugated_pipe_headwall": 0.5,
            "corrugated_pipe_mitered": 0.7, "corrugated_pipe_projecting": 0.9, "pipe_beveled_ring_45": 0.2,
            "pipe_beveled_ring_33": 0.2, "box_wingwalls_30_to_75": 0.4, "box_wingwalls_90_or_15": 0.5,
            "box_wingwalls_0": 0.7, "box_headwall_chamfered": 0.5, "box_headwall_beveled_45": 0.2,
            "box_headwall_beveled_33": 0.2}
    for key, ke in read.items():
        assert C.table("culvert.entrance_loss").row(key).value == (ke,)
        barrel = (CircularBarrel(diameter=1.0, length=10.0, slope=0.01, roughness=0.012, inlet=key)
                  if key.startswith(("concrete", "corrugated", "pipe"))
                  else BoxBarrel(span=2.0, rise=1.0, length=10.0, slope=0.01, roughness=0.012, inlet=key))
        assert barrel.ke == ke


@pytest.mark.reference
def test_ku_of_the_inlet_control_equations_matches_fhwa():
    """FHWA-HRT-06-138 (2006), Appendix C: Ku = 1.811 in SI, 1.0 in US customary units; gvflow computes
    Ku = sqrt(32.174 ft/s² / g)."""
    from gvflow.structures.culverts import _ku

    assert round(_ku(gv.SI), 3) == 1.811
    assert _ku(gv.US) == pytest.approx(1.0, abs=2e-6)
    assert C.value("culvert.ku_si") == 1.811
    assert C.value("culvert.gravity_us") == pytest.approx(9.80665 / 0.3048, abs=5e-5)  # exact conversion


@pytest.mark.reference
def test_sluice_gate_contraction_matches_ponce_and_novak():
    """Ponce, SDSU notes on the sluice-gate equation (ponce.sdsu.edu/onlinechannel13equation.html): Cc
    between 0.598 and 0.611, 0.61 recommended after Henderson (1966); Novak et al. (2007), Hydraulic
    Structures, 4th ed., eq. 6.4: 0.6 to 0.61."""
    assert C.value("gate.contraction") == 0.61
    assert C.value("gate.contraction_range") == (0.598, 0.611)
    assert gv.SluiceGate(opening=0.5).contraction == 0.61
    # the discharge coefficient Cd = Cc / sqrt(1 + Cc a / y1) as written in both sources
    from gvflow.structures import gate_discharge_coefficient

    assert gate_discharge_coefficient(2.0, 0.5) == pytest.approx(0.61 / math.sqrt(1 + 0.61 * 0.5 / 2.0), rel=1e-15)


@pytest.mark.reference
def test_brink_ratio_matches_rouse_as_given_by_thandaveswara():
    """Thandaveswara, IIT Madras hydraulics notes, 'Brink depth' (scribd.com/document/400243144):
    Rouse showed yb = 0.715 yc; yc/yb = 1.4; the critical section 3 to 4 yc upstream."""
    from gvflow.structures import brink_depth, critical_section_distance

    assert C.value("overfall.brink_ratio") == 0.715
    assert C.value("overfall.critical_section_distance") == (3.0, 4.0)
    yc = (2.0 ** 2 / 9.80665) ** (1 / 3)
    assert brink_depth(2.0, 1.0) == pytest.approx(0.715 * yc, rel=1e-12)
    assert 1 / 0.715 == pytest.approx(1.4, abs=0.005)
    assert critical_section_distance(yc, 3.0) == pytest.approx(3.0 * yc)


@pytest.mark.reference
def test_jump_types_match_hicks():
    """Hicks, Civil Engineering Formulas, fig. 12.17 (digilib.universitaspertamina.ac.id, page 395):
    F1 1-1.7 undular, 1.7-2.5 weak, 2.5-4.5 oscillating, 4.5-9.0 steady, above 9.0 strong."""
    assert C.value("jump.types") == (1.0, 1.7, 2.5, 4.5, 9.0)
    assert [gv.jump_type(f) for f in (1.3, 2.0, 3.5, 6.0, 12.0)] == ["undular", "weak", "oscillating", "steady",
                                                                        "strong"]


@pytest.mark.reference
def test_kindsvater_carter_rows_match_novak_table_8_1():
    """Novak et al. (2007), Hydraulic Structures, 4th ed., Table 8.1 (issuhub.com, pageIndex 364):
    Cd = 0.602 + 0.075 h/P for b/B = 1 and 0.592 + 0.011 h/P for b/B = 1/2."""
    from gvflow.structures import kindsvater_carter_coefficients

    c1, c2, _ = kindsvater_carter_coefficients(1.0)
    assert (c2, c1) == (0.602, 0.075)
    c1, c2, _ = kindsvater_carter_coefficients(0.5)
    assert (c2, c1) == (0.592, 0.011)
    assert C.table("weir.kindsvater_carter_ce").row("1.0").status == C.READ


@pytest.mark.reference
def test_glass_manning_n_matches_the_chow_table():
    """Ponce, Table 5-4 after Chow (1959) table 5-6 (facets.sdsu.edu): glass 0.009, 0.010, 0.013."""
    from gvflow.friction import MANNING_N_MIN

    assert C.value("friction.manning_n_glass") == (0.009, 0.010, 0.013)
    assert MANNING_N_MIN <= C.value("friction.manning_n_glass")[0] / 50


def test_transcription_of_recalled_values():
    """Transcription check, not a reference: the recalled values (REFERENCES.md, marked from memory)
    as written in the registry. Confirm them against the sources before relying on them."""
    assert C.value("weir.broad_crested_cd") == 0.848
    assert C.value("weir.broad_crested_modular_limit") == 0.66
    assert C.value("weir.villemonte_exponent") == 0.385
    assert C.value("weir.rehbock") == (0.611, 0.08)
    assert C.table("culvert.inlet_control").row("concrete_pipe_square_edge_headwall").value == (
        "circular", 1, 0.0098, 2.0, 0.0398, 0.67, -0.5)
    assert C.table("culvert.inlet_control").row("box_wingwalls_30_to_75").value == (
        "box", 1, 0.026, 1.0, 0.0347, 0.81, -0.5)
    for key in ("weir.broad_crested_cd", "weir.villemonte_exponent", "jump.length_curve"):
        assert C.get(key).status == C.RECALLED


# ---------------------------------------------------------------------------
# the results list what they rest on
# ---------------------------------------------------------------------------

def _culvert_reach(**barrel):
    pipe = CircularBarrel(diameter=1.2, length=30.0, slope=0.01, roughness=0.012, **barrel)
    return gv.Reach(segments=[gv.Segment(length=500.0, slope=0.001, section=gv.Rectangular(width=3.0),
                                         roughness=0.015)], discharge=2.0,
                    downstream=gv.Culvert(barrel=pipe, tailwater=0.8))


def test_profile_lists_the_culvert_coefficients_with_sources_in_notes_and_summary():
    p = _culvert_reach().solve()
    keys = [c.key for c in p.coefficients]
    assert "culvert.entrance_loss[concrete_pipe_square_edge_headwall]" in keys
    assert "culvert.inlet_control[concrete_pipe_square_edge_headwall]" in keys
    ke = next(c for c in p.coefficients if c.key.startswith("culvert.entrance_loss"))
    assert ke.value == (0.5,) and ke.status == C.READ and ke.used_by == "downstream control, culvert"
    notes = [c.text for c in p.controls if c.kind == "coefficient"]
    assert notes == [c.line() for c in p.coefficients]
    assert any(t.startswith("downstream control, culvert: entrance loss ke (concrete pipe, square edge with "
                            "headwall) = 0.5: US Federal Highway Administration (2001)") for t in notes)
    text = p.summary()
    assert "Coefficients this result rests on" in text
    assert "Table A.1; recalled, not confirmed" in text


def test_a_value_given_by_the_user_is_reported_as_such():
    p = _culvert_reach(entrance_loss=0.35).solve()
    ke = next(c for c in p.coefficients if c.key == "culvert.entrance_loss")
    assert (ke.value, ke.status) == (0.35, C.GIVEN)
    weir = gv.Reach(segments=[gv.Segment(length=800.0, slope=0.001, section=gv.Rectangular(width=3.0),
                                         roughness=0.015)], discharge=4.0,
                    downstream=gv.Weir(crest_height=1.0, formula="broad_crested", discharge_coefficient=0.9)).solve()
    cd = [c for c in weir.coefficients if c.key == "weir.broad_crested_cd"]
    assert [(c.value, c.status) for c in cd] == [(0.9, C.GIVEN)]


def test_jumps_and_gates_report_their_curves():
    reach = gv.Reach(segments=[gv.Segment(length=300.0, slope=0.0005, section=gv.Rectangular(width=2.0),
                                          roughness=0.014)], discharge=3.0,
                     upstream=gv.SluiceGate(opening=0.3), downstream=gv.FreeOverfall())
    p = reach.solve()
    assert p.jumps
    by_key = {c.key: c for c in p.coefficients}
    assert by_key["gate.contraction"].status == C.READ
    assert by_key["jump.length_curve"].status == C.RECALLED
    assert by_key["overfall.brink_ratio"].used_by == "downstream control, free overfall"
    assert pickle.loads(pickle.dumps(p)).coefficients == p.coefficients


def test_an_end_control_that_does_not_govern_adds_no_coefficients():
    # a pool above a mild channel held up by a weir: the pool does not govern ("unused control")
    rect = gv.Rectangular(width=3.0)
    pool = gv.Reach(segments=[gv.Segment(length=2000.0, slope=0.0005, section=rect, roughness=0.013)],
                    discharge=1.0, upstream=gv.Pool(level=2.5, entrance_loss=0.2),
                    downstream=gv.Weir(crest_height=1.0)).solve()
    assert any(c.kind == "unused control" and c.x == 0.0 for c in pool.controls)
    keys = [c.key for c in pool.coefficients]
    assert "weir.rehbock" in keys and not any(k.startswith("pool.") for k in keys)
    # supercritical flow sweeps the jump out of a steep reach: the low weir below does not govern
    steep = gv.Reach(segments=[gv.Segment(length=200.0, slope=0.02, section=rect, roughness=0.013)],
                     discharge=2.0, downstream=gv.Weir(crest_height=0.05, formula="broad_crested")).solve()
    assert any(c.kind == "jump swept out" for c in steep.controls)
    assert steep.coefficients == ()


def test_every_control_reports_registered_coefficients():
    controls = [gv.SluiceGate(opening=0.3), gv.FreeOverfall(distance_factor=3.2), gv.Pool(level=3.0),
                gv.Pool(level=3.0, entrance_loss=0.2)]
    controls += [gv.Weir(crest_height=1.0, formula=f, tailwater_level=0.5) for f in gv.controls.WEIR_FORMULAS]
    controls += [gv.Weir(crest_height=1.0, end_contractions=2),
                 gv.Culvert(barrel=BoxBarrel(span=2.0, rise=1.5, length=25.0, slope=0.005, roughness=0.013),
                            tailwater=0.8, exit_loss=0.8)]
    for ctrl in controls:
        records = ctrl.coefficients()
        assert records, ctrl
        for rec in records:
            C.get(rec.key.split("[")[0])  # raises for an unregistered key
            assert rec.status in C.STATUSES + (C.GIVEN,)


# ---------------------------------------------------------------------------
# the reference page
# ---------------------------------------------------------------------------

def test_docs_page_is_generated_from_the_registry():
    page = (ROOT / "docs" / "coefficients.md").read_text()
    assert page == C.markdown(), "regenerate it: python -m gvflow.coefficients > docs/coefficients.md"
    for key in C.REGISTRY:
        assert f"`{key}`" in page


@pytest.mark.slow  # subprocess, process pool or kernel start-up
def test_module_entry_point_prints_the_page():
    out = subprocess.run([sys.executable, "-m", "gvflow.coefficients"], capture_output=True, text=True,
                         cwd=ROOT, check=True, env={"PYTHONPATH": str(ROOT), "PATH": ""})
    assert out.stdout == C.markdown()
    assert out.stderr == ""

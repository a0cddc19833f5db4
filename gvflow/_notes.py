"""Notes on a solved profile: records made where something is found, written as text in one place (private).

The solver, the near-critical and plausibility checks and the profile builder record what they find as
a :class:`Note`: the station ``x``, the ``kind`` (the ``kind`` of the public
:class:`gvflow.result.ControlNote`) and the values the text is made from. :func:`note_text` writes the
text with the reach's units, one formatter per kind (:data:`FORMATTERS`), when a profile is built.
A control's own detail lines (:meth:`gvflow.controls.Control.notes`) arrive as text already: kind
``"control detail"`` carries them unchanged.
"""

from __future__ import annotations

from typing import Any, NamedTuple


class Note(NamedTuple):
    """One note: where (x), what kind, and the values its text is made from."""

    x: float
    kind: str
    values: dict[str, Any]


def note(x, kind: str, **values) -> Note:
    """A :class:`Note` at ``x`` of ``kind`` with ``values`` (checked against the kind's formatter when
    the text is written)."""
    return Note(x, kind, values)


def note_text(n: Note, units) -> str:
    """The text of note ``n`` in ``units`` (a :class:`gvflow.units.Units`)."""
    return FORMATTERS[n.kind](n.x, units, **n.values)


def _control_governs(x, u, *, control=None, assumed=None) -> str:
    if control is None:
        return f"no downstream control given: {assumed} assumed at the downstream end"
    return f"{control.describe(u)} governs"


def _unused_control(x, u, *, end, control, critical=None) -> str:
    if end == "upstream":
        return (f"upstream control {control.describe(u)} does not govern: the flow entering the reach is "
                "subcritical and is governed from downstream")
    if critical is not None:
        return (f"downstream control {control.describe(u)} does not govern: it stands below critical depth "
                f"{critical:.3f} {u.length}, so the flow leaves the reach through critical depth (a free overfall) "
                "and the water below does not reach up to it")
    return (f"downstream control {control.describe(u)} does not govern: the flow leaving the reach is "
            "supercritical")


def _critical_control(x, u, *, where, k=None) -> str:
    if where == "steep head":
        return "critical depth at the head of a steep segment"
    if where == "inflow":
        return (f"critical depth at the end of segment {k}: below the inflow at the head of segment {k + 1} the "
                "discharge needs more energy than subcritical flow above it carries")
    if where == "larger section":
        return (f"critical depth at the end of segment {k}, where the flow passes into the larger section of "
                f"segment {k + 1}")
    return "critical depth where the bed steepens (the flow passes from subcritical to supercritical)"


def _drowned_jump(x, u) -> str:
    return "the tailwater drowns the jump against the upstream control: submerged outflow at x = 0"


def _unbalanced_jump(x, u, *, off) -> str:
    return (f"the specific forces on the two sides of the jump at x = {x:.2f} differ by {off:.2%}: a profile "
            "reaches critical depth next to it, so its position is uncertain to about a station spacing; check "
            "it with more steps (n_steps)")


def _jump_gains_energy(x, u, *, gain) -> str:
    return (f"the jump at x = {x:.2f} balances momentum but gains {gain:.3f} {u.length} of specific energy, which "
            "no real jump does: in a section with several critical depths the energy and momentum coefficients "
            "differ and one-dimensional theory is least certain; read its position as a sign of where the regime "
            "changes, not as a located jump")


def _jump_swept_out(x, u, *, control) -> str:
    return (f"the downstream control ({control.describe(u)}) is too low to hold a jump: the supercritical flow "
            "leaves the reach and the jump forms downstream of it")


def _sloping_jump(x, u, *, k, slope, steep) -> str:
    L = u.length
    return (f"the jump at x = {x:.2f} {L} stands on segment {k}, bed slope {slope:g}: it was located with the "
            "level-floor momentum balance, which leaves out the weight of the roller along the slope and so "
            "underestimates the sequent depth needed to hold the jump there (FHWA HEC-14, 2006, ch. 6, eq. 6.7: "
            f"the weight may be neglected only below a slope of {steep:g}); treat its location as approximate")


def _inflow(x, u, *, k, inflow, q_up, q_down, supercritical) -> str:
    how = ("supercritical flow: specific force (momentum) conserved across the junction" if supercritical else
           "specific energy conserved across the junction (no loss)")
    return (f"{inflow:g} {u.discharge} enters at the head of segment {k}: the discharge goes from {q_up:g} to "
            f"{q_down:g} {u.discharge}; {how}")


def _sections_far_apart(x, u, *, x_up, x_down, ratio, limit) -> str:
    return (f"the conveyances of the sections at x = {x_up:.2f} and {x_down:.2f} differ by a factor {ratio:.2f} "
            f"(more than {limit:g}): the sections are too far apart for the interpolation between them to be "
            "trusted; survey or interpolate a section between them (common practice)")


def _several_critical(x, u, *, k, depths, x_end, used) -> str:
    shown = ", ".join(f"{d:.3f}" for d in depths)
    return (f"in segment {k} the section has {len(depths)} critical depths ({shown} {u.length}): between them "
            f"specific energy has a local maximum, and from x = {x:.2f} to {x_end:.2f} {u.length} the water stands "
            "in that band, where the compound Froude number decides the regime; each profile keeps to its "
            f"branch, and the segment's critical depth is {used:.3f} {u.length}, the one on the branch of its "
            "normal depth. One-dimensional theory is least certain in this band (the floodplain flow is shallow "
            "and the exchange with the main channel is left out): check the result with a finer spacing")


def _untraced(x, u, *, k, x_end) -> str:
    return (f"from x = {x:.2f} to {x_end:.2f} {u.length} in segment {k}, where the section changes, no depth on the "
            "profile's branch balances the energy of the water beside it (a choke, or the limit of a branch of a "
            "compound section): the depths shown there are each station's critical depth, not a traced profile. "
            "The flow passes critical depth there and would run supercritical below it, to a jump, which is not "
            "traced inside a changing segment: add sections between, or check that stretch by hand")


def _choke(x, u, *, k, depth, yn) -> str:
    return (f"the section of segment {k + 1} passes the flow only through critical depth, which holds the water "
            f"upstream at {depth:.3f} {u.length}, above segment {k}'s normal depth {yn:.3f} {u.length}")


def _near_critical(x, u, *, k, x_end, yc, froude) -> str:
    L, (lo, hi) = u.length, froude
    a, b = x, x_end
    return (f"the Froude number stays between {lo:g} and {hi:g} from x = {a:.2f} to {b:.2f} {L} in segment {k} "
            f"({b - a:.0f} {L}, {(b - a) / yc:.0f} critical depths): near critical depth the water surface is "
            "unstable and wavy, and small changes of roughness or discharge move it noticeably (Chow 1959, ch. 3); "
            "allow extra freeboard, or change the slope or section to move the Froude number out of this band")


def _gate(x, u, *, k, control, submerged, jet, depth_up) -> str:
    how = "submerged by the water below it" if submerged else f"free flow, jet {jet:.3f} {u.length} deep"
    return (f"{control.describe(u)} at the head of segment {k}: {how}; the water upstream stands "
            f"{depth_up:.3f} {u.length} deep")


def _submerged_outlet(x, u, *, head) -> str:
    return (f"the downstream water level stands {head:.3f} {u.length} above the crown of the outlet: the grade "
            "line in the conduit at its outlet is the tailwater level (the velocity head is lost at the exit)")


def _surcharge(x, u, *, k, length, x_end, head, x_head, sf_full) -> str:
    L = u.length
    return (f"segment {k} runs full (surcharged, pressure flow) over {length:.2f} {L} from x = {x:.2f} to "
            f"{x_end:.2f} {L}: the grade line stands up to {head:.3f} {L} above its crown (at x = {x_head:.2f} "
            f"{L}) and rises at the full-flow friction slope {sf_full:.6g}")


def _text(x, u, *, text) -> str:
    return text


def _coefficient(x, u, *, record) -> str:
    return record.line()


#: kind -> formatter(x, units, **values) -> text
FORMATTERS = {
    "upstream control": _control_governs,
    "downstream control": _control_governs,
    "unused control": _unused_control,
    "critical control": _critical_control,
    "drowned jump": _drowned_jump,
    "unbalanced jump": _unbalanced_jump,
    "jump gains energy": _jump_gains_energy,
    "jump swept out": _jump_swept_out,
    "jump on a sloping floor": _sloping_jump,
    "inflow": _inflow,
    "sections far apart": _sections_far_apart,
    "several critical depths": _several_critical,
    "choke": _choke,
    "untraced stretch": _untraced,
    "near-critical flow": _near_critical,
    "gate": _gate,
    "submerged outlet": _submerged_outlet,
    "surcharge": _surcharge,
    "control detail": _text,
    "coefficient": _coefficient,
}

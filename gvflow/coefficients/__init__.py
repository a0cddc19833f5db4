"""Empirical coefficients as data, each with where it comes from.

Every coefficient, coefficient table and empirical curve that gvflow's
structure relations and reports use lives here, once, as a
:class:`Coefficient` (a value with its :class:`Provenance`) or a
:class:`Table` of them; the modules that use a number import it from here
under their old names. A provenance says which source the value comes from
and how sure it is (:data:`STATUSES`):

``"read in a stored source"``
    the value was read in the published source named (a stored copy whose
    address is given in ``where``); a test compares the value with the
    number read there.
``"standard"``
    taken from a published standard.
``"recalled, not confirmed"``
    recalled from the source named but not yet checked against a copy of it:
    verify before relying on it.
``"exact"``
    a definition or a conversion, exact by construction.
``"common practice"``
    a default of gvflow's own that follows common practice, not a published
    coefficient.

A solved :class:`~gvflow.result.Profile` lists the coefficients that shaped
it (``profile.coefficients``, and a section of ``profile.summary()``), built
by :meth:`gvflow.controls.Control.coefficients` of its controls.

``python -m gvflow.coefficients`` prints the reference page
``docs/coefficients.md`` (see :func:`markdown`).
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace
from typing import NamedTuple

__all__ = [
    "READ",
    "STANDARD",
    "RECALLED",
    "EXACT",
    "COMMON_PRACTICE",
    "GIVEN",
    "STATUSES",
    "Provenance",
    "Coefficient",
    "Table",
    "REGISTRY",
    "get",
    "value",
    "table",
    "used",
    "given",
    "markdown",
    "CulvertInlet",
    "INLET_TYPES",
]

READ = "read in a stored source"
STANDARD = "standard"
RECALLED = "recalled, not confirmed"
EXACT = "exact"
COMMON_PRACTICE = "common practice"
#: Status of a value given by the user in place of a registered default (usage records only).
GIVEN = "given by the user"
#: The statuses a registered coefficient may carry, surest first.
STATUSES = (EXACT, READ, STANDARD, RECALLED, COMMON_PRACTICE)


@dataclass(frozen=True)
class Provenance:
    """Where a coefficient comes from.

    Attributes
    ----------
    source : str
        Author, title, year, and the table, figure or equation holding the value.
    status : str
        One of :data:`STATUSES` (or :data:`GIVEN` for a value a user supplied).
    where : str
        Address of the stored copy in which the value was read (status
        ``"read in a stored source"``), else empty.
    note : str
        Anything a reviewer should know: range of validity, agreement with
        other sources, judgement in applying the source.
    """

    source: str
    status: str
    where: str = ""
    note: str = ""

    def __post_init__(self):
        if self.status not in STATUSES + (GIVEN,):
            raise ValueError(f"status must be one of {STATUSES + (GIVEN,)}; got {self.status!r}")
        if not self.source:
            raise ValueError("a provenance needs a source")
        if self.status == READ and not self.where:
            raise ValueError(f"a value read in a stored source needs its address (where); source {self.source!r}")


@dataclass(frozen=True)
class Coefficient:
    """One coefficient (a number, or a tuple of numbers) with its provenance.

    Attributes
    ----------
    key : str
        Registry key, e.g. ``"overfall.brink_ratio"``.
    name : str
        Plain description, e.g. ``"brink depth over critical depth"``.
    value : float or tuple
        The value (a tuple for a row of a table or a curve).
    provenance : Provenance
    unit : str
        Unit of the value, ``"-"`` when dimensionless.
    used_by : str
        In a usage record (:func:`used`, :func:`given`), the part of the
        problem that used it, e.g. ``"downstream control"``; empty in the registry.
    """

    key: str
    name: str
    value: object
    provenance: Provenance
    unit: str = "-"
    used_by: str = ""

    @property
    def source(self) -> str:
        return self.provenance.source

    @property
    def status(self) -> str:
        return self.provenance.status

    def line(self) -> str:
        """One line for a report: ``used by: name = value: source; status``."""
        unit = "" if self.unit == "-" else f" {self.unit}"
        who = f"{self.used_by}: " if self.used_by else ""
        val = self.value[0] if isinstance(self.value, tuple) and len(self.value) == 1 else self.value
        return f"{who}{self.name} = {_fmt(val)}{unit}: {self.source}; {self.status}"


@dataclass(frozen=True)
class Table:
    """A table of coefficients: one :class:`Coefficient` per row, each with its own provenance.

    Attributes
    ----------
    key : str
        Registry key.
    title : str
        Plain title.
    columns : tuple of str
        Names of the values in each row.
    rows : dict
        Row label -> :class:`Coefficient` whose value is a tuple matching ``columns``.
    unit : str
        Units of the columns, for the reference page.
    """

    key: str
    title: str
    columns: tuple
    rows: dict = field(repr=False)
    unit: str = "-"

    def __post_init__(self):
        for label, row in self.rows.items():
            if len(row.value) != len(self.columns):
                raise ValueError(f"table {self.key}: row {label!r} has {len(row.value)} values for "
                                 f"{len(self.columns)} columns")

    def column(self, name: str) -> tuple:
        """The values of one column, in row order."""
        j = self.columns.index(name)
        return tuple(row.value[j] for row in self.rows.values())

    def row(self, label: str) -> Coefficient:
        try:
            return self.rows[label]
        except KeyError:
            raise KeyError(f"table {self.key} has no row {label!r}; rows: {', '.join(self.rows)}") from None

    @property
    def provenance(self) -> Provenance:
        """The weakest provenance of the rows (what a result using the whole table rests on)."""
        worst = max(self.rows.values(), key=lambda r: STATUSES.index(r.status))
        sure = [label for label, r in self.rows.items() if r.status in (EXACT, READ, STANDARD)]
        note = worst.provenance.note
        if sure and worst.status not in (EXACT, READ, STANDARD):
            note = (f"rows {', '.join(sure)} {READ}; the others {worst.status}" + (f". {note}" if note else ""))
        return replace(worst.provenance, note=note)

    @property
    def status(self) -> str:
        return self.provenance.status

    @property
    def source(self) -> str:
        return self.provenance.source


def _fmt(v) -> str:
    if isinstance(v, tuple):
        return "(" + ", ".join(_fmt(x) for x in v) + ")"
    if isinstance(v, float):
        return f"{v:g}"
    return str(v)


REGISTRY: dict[str, Coefficient | Table] = {}


def _register(item):
    if item.key in REGISTRY:
        raise ValueError(f"coefficient {item.key!r} registered twice")
    REGISTRY[item.key] = item
    return item


def get(key: str) -> Coefficient | Table:
    """The registered coefficient or table ``key``."""
    try:
        return REGISTRY[key]
    except KeyError:
        raise KeyError(f"no coefficient {key!r} is registered in gvflow.coefficients; registered: "
                       f"{', '.join(sorted(REGISTRY))}") from None


def value(key: str):
    """The value of the registered coefficient ``key``."""
    item = get(key)
    if isinstance(item, Table):
        raise TypeError(f"{key!r} is a table; use table({key!r})")
    return item.value


def table(key: str) -> Table:
    """The registered table ``key``."""
    item = get(key)
    if not isinstance(item, Table):
        raise TypeError(f"{key!r} is a single coefficient; use value({key!r})")
    return item


def used(key: str, *, row: str | None = None, name: str | None = None, used_by: str = "") -> Coefficient:
    """A usage record of a registered coefficient, table or table row, for a result's report."""
    item = get(key)
    if row is not None:
        item = table(key).row(row)
    if isinstance(item, Table):
        return Coefficient(key=key, name=name or item.title, value=f"a table of {len(item.rows)} rows",
                           provenance=item.provenance, unit="-", used_by=used_by)
    return replace(item, name=name or item.name, used_by=used_by)


def given(key: str, name: str, val, *, unit: str = "-", used_by: str = "") -> Coefficient:
    """A usage record of a value the user gave in place of the registered default ``key``."""
    get(key)  # the default it replaces must be registered
    return Coefficient(key=key, name=name, value=val, provenance=Provenance("given by the user", GIVEN),
                       unit=unit, used_by=used_by)


# ---------------------------------------------------------------------------
# sources
# ---------------------------------------------------------------------------

_HDS5_2012 = ("Schall, J. D., Thompson, P. L., Zerges, S. M., Kilgore, R. T. & Morris, J. L. (2012). Hydraulic "
              "Design of Highway Culverts, 3rd ed., HDS-5, FHWA-HIF-12-026")
_HDS5_2001 = ("US Federal Highway Administration (2001). Hydraulic Design of Highway Culverts, HDS-5, "
              "FHWA-NHI-01-020, Table 12 'Entrance loss coefficients' (outlet control, full or partly full)")
_HDS5_2001_AT = ("https://www.yumpu.com/en/document/view/2499398/"
                 "hydraulic-design-of-highway-culverts-dot-on-line-publications/243")
_FHWA_2006 = ("US Federal Highway Administration (2006). Effects of Inlet Geometry on Hydraulic Performance of Box "
              "Culverts, FHWA-HRT-06-138, Appendix C (Ku = 1.811 SI, 1.0 US customary)")
_FHWA_2006_AT = "http://www.fhwa.dot.gov/publications/research/infrastructure/hydraulics/06138/appendc.cfm"
_NOVAK = "Novak, P., Moffat, A. I. B., Nalluri, C. & Narayanan, R. (2007). Hydraulic Structures, 4th ed."
_NOVAK_GATE_AT = "https://issuhub.com/view/index?id=4734&pageIndex=306"
_NOVAK_WEIR_AT = "https://issuhub.com/view/index/4734?pageIndex=364"
_PONCE_GATE = ("Ponce, V. M. Derivation of equation for unit-width discharge under a sluice gate (online notes, "
               "San Diego State University): Cc between 0.598 and 0.611, 0.61 recommended after Henderson (1966), "
               "Open Channel Flow")
_PONCE_GATE_AT = "https://ponce.sdsu.edu/onlinechannel13equation.html"
_PONCE_N = ("Ponce, V. M. Table 5-4, Recommended range of values of Manning's n (after Chow 1959, Open-Channel "
            "Hydraulics, table 5-6), online notes, San Diego State University")
_PONCE_N_AT = "http://facets.sdsu.edu/enghydro/open_channel_hydraulics_05_manningsntable.html"
_HICKS = "Hicks, T. G. Civil Engineering Formulas, McGraw-Hill, fig. 12.17 (type of jump by Froude number)"
_HICKS_AT = ("https://digilib.universitaspertamina.ac.id/ebook/Civil%20Engineering%20Formulas/files/basic-html/"
             "page395.html")
_USBR_WMM = ("US Bureau of Reclamation (2001). Water Measurement Manual, 3rd ed., revised reprint, ch. 7 §6 "
             "(Kindsvater-Carter method)")
_USBR_WMM_AT = "https://www.usbr.gov/tsc/techreferences/mands/wmm/chap07_06.html"
_JUMP_6Y2_AT = "https://www.climate-policy-watcher.org/drinking-water-2/v-2-y1-y2-lw-1.html"


def _c(key, name, val, source, status, *, where="", note="", unit="-"):
    return _register(Coefficient(key, name, val, Provenance(source, status, where, note), unit))


def _row(key, label, name, val, source, status, *, where="", note=""):
    return Coefficient(f"{key}[{label}]", name, val, Provenance(source, status, where, note))


# ---------------------------------------------------------------------------
# culverts
# ---------------------------------------------------------------------------

class CulvertInlet(NamedTuple):
    """Coefficients of one inlet type: inlet control (HDS-5, 3rd ed., 2012, Table A.1) and entrance loss.

    Attributes
    ----------
    shape : str
        ``"circular"`` or ``"box"``: the barrel the coefficients apply to.
    form : int
        1 or 2, the unsubmerged equation form.
    K, M : float
        Coefficients of the unsubmerged equation.
    c, Y : float
        Coefficients of the submerged equation.
    slope_factor : float
        Ks, multiplying the barrel slope: -0.5, or +0.7 for mitered inlets.
    entrance_loss : float
        Entrance loss coefficient ke used in outlet control (HDS-5, 2001, Table 12).
    description : str
        Plain description of the inlet.
    """

    shape: str
    form: int
    K: float
    M: float
    c: float
    Y: float
    slope_factor: float
    entrance_loss: float
    description: str


# inlet key: (shape, form, K, M, c, Y, Ks), description
_INLETS = {
    "concrete_pipe_square_edge_headwall": (("circular", 1, 0.0098, 2.0, 0.0398, 0.67, -0.5),
                                           "concrete pipe, square edge with headwall"),
    "concrete_pipe_groove_end_headwall": (("circular", 1, 0.0018, 2.0, 0.0292, 0.74, -0.5),
                                          "concrete pipe, groove end with headwall"),
    "concrete_pipe_groove_end_projecting": (("circular", 1, 0.0045, 2.0, 0.0317, 0.69, -0.5),
                                            "concrete pipe, groove end projecting"),
    "corrugated_pipe_headwall": (("circular", 1, 0.0078, 2.0, 0.0379, 0.69, -0.5),
                                 "corrugated metal pipe with headwall"),
    "corrugated_pipe_mitered": (("circular", 1, 0.0210, 1.33, 0.0463, 0.75, 0.7),
                                "corrugated metal pipe mitered to the slope"),
    "corrugated_pipe_projecting": (("circular", 1, 0.0340, 1.50, 0.0553, 0.54, -0.5),
                                   "corrugated metal pipe projecting"),
    "pipe_beveled_ring_45": (("circular", 1, 0.0018, 2.50, 0.0300, 0.74, -0.5), "pipe with 45-degree beveled ring"),
    "pipe_beveled_ring_33": (("circular", 1, 0.0018, 2.50, 0.0243, 0.83, -0.5),
                             "pipe with 33.7-degree beveled ring"),
    "box_wingwalls_30_to_75": (("box", 1, 0.026, 1.0, 0.0347, 0.81, -0.5),
                               "box with wingwalls flared 30 to 75 degrees"),
    "box_wingwalls_90_or_15": (("box", 1, 0.061, 0.75, 0.0400, 0.80, -0.5),
                               "box with wingwalls flared 90 or 15 degrees"),
    "box_wingwalls_0": (("box", 1, 0.061, 0.75, 0.0423, 0.82, -0.5), "box with wingwalls parallel to the barrel"),
    "box_headwall_chamfered": (("box", 2, 0.515, 0.667, 0.0375, 0.79, -0.5),
                               "box with headwall, 19 mm (3/4 in) chamfers"),
    "box_headwall_beveled_45": (("box", 2, 0.495, 0.667, 0.0314, 0.82, -0.5), "box with headwall, 45-degree bevels"),
    "box_headwall_beveled_33": (("box", 2, 0.486, 0.667, 0.0252, 0.865, -0.5),
                                "box with headwall, 33.7-degree bevels"),
}

_INLET_NOTE = ("Table A.1 was not found in a stored copy of the manual; secondary reproductions agree for the box "
               "rows, and an older table gives c = 0.0385 for the 30-75 degree flare and K = 0.0078 for the groove "
               "end with headwall, so check the edition")
INLET_CONTROL = _register(Table(
    "culvert.inlet_control", "culvert inlet-control coefficients (HDS-5 Table A.1)",
    ("shape", "form", "K", "M", "c", "Y", "Ks"),
    {k: _row("culvert.inlet_control", k, f"inlet-control coefficients (shape, form, K, M, c, Y, Ks) for {d}", v,
             f"{_HDS5_2012}, Appendix A, Table A.1", RECALLED, note=_INLET_NOTE)
     for k, (v, d) in _INLETS.items()},
))

# inlet key: (ke, row of the 2001 table it was read from)
_KE = {
    "concrete_pipe_square_edge_headwall": (0.5, "pipe, concrete; headwall or headwall and wingwalls; square-edge"),
    "concrete_pipe_groove_end_headwall": (0.2, "pipe, concrete; headwall; socket end of pipe (groove-end)"),
    "concrete_pipe_groove_end_projecting": (0.2, "pipe, concrete; projecting from fill, socket end (groove-end)"),
    "corrugated_pipe_headwall": (0.5, "pipe, corrugated metal; headwall or headwall and wingwalls, square-edge"),
    "corrugated_pipe_mitered": (0.7, "pipe, corrugated metal; mitered to conform to fill slope"),
    "corrugated_pipe_projecting": (0.9, "pipe, corrugated metal; projecting from fill (no headwall)"),
    "pipe_beveled_ring_45": (0.2, "pipe; beveled edges, 33.7 or 45 degree bevels"),
    "pipe_beveled_ring_33": (0.2, "pipe; beveled edges, 33.7 or 45 degree bevels"),
    "box_wingwalls_30_to_75": (0.4, "box, reinforced concrete; wingwalls at 30 to 75 degrees, square-edged at crown"),
    "box_wingwalls_90_or_15": (0.5, "box; headwall parallel to embankment square-edged on 3 edges (90 degrees), "
                                    "and wingwalls at 10 to 25 degrees square-edged at crown (15 degrees): both 0.5"),
    "box_wingwalls_0": (0.7, "box; wingwalls parallel (extension of sides), square-edged at crown"),
    "box_headwall_chamfered": (0.5, "box; headwall square-edged on 3 edges (the table has no row for 3/4-in "
                                    "chamfers: taken as square-edged, a judgement)"),
    "box_headwall_beveled_45": (0.2, "box; headwall, beveled edges on 3 sides"),
    "box_headwall_beveled_33": (0.2, "box; headwall, beveled edges on 3 sides"),
}
ENTRANCE_LOSS = _register(Table(
    "culvert.entrance_loss", "culvert entrance loss coefficients ke (outlet control)", ("ke",),
    {k: _row("culvert.entrance_loss", k, f"entrance loss ke ({_INLETS[k][1]})", (ke,), _HDS5_2001, READ,
             where=_HDS5_2001_AT, note=f"row: {row}")
     for k, (ke, row) in _KE.items()},
))

#: Coefficients for common inlets (inlet control from HDS-5 Table A.1, ke from the entrance-loss table), by inlet key.
INLET_TYPES: dict[str, CulvertInlet] = {
    k: CulvertInlet(*INLET_CONTROL.rows[k].value, ENTRANCE_LOSS.rows[k].value[0], _INLETS[k][1]) for k in _INLETS
}

_c("culvert.unsubmerged_limit", "upper limit of the unsubmerged inlet-control equations, Ku Q/(A D^0.5)", 3.5,
   f"{_HDS5_2012}, Appendix A", RECALLED)
_c("culvert.submerged_limit", "lower limit of the submerged inlet-control equation, Ku Q/(A D^0.5)", 4.0,
   f"{_HDS5_2012}, Appendix A", RECALLED)
_c("culvert.gravity_us", "gravity of the manual's US-unit equations (Ku = sqrt(32.174 ft/s² / g))", 32.174,
   "standard gravity 9.80665 m/s² in ft/s² (9.80665 / 0.3048 = 32.1740)", EXACT, unit="ft/s²")
_c("culvert.ku_si", "unit factor Ku of the inlet-control equations in SI units", 1.811, _FHWA_2006, READ,
   where=_FHWA_2006_AT, note="gvflow computes Ku = sqrt(32.174 ft/s² / g), 1.8113 in SI")
_c("culvert.exit_loss", "exit loss coefficient kx", 1.0, f"{_HDS5_2012}, ch. 3 (outlet control)", RECALLED)


# ---------------------------------------------------------------------------
# closed conduits running full (storm sewers)
# ---------------------------------------------------------------------------

_c("conduit.exit_loss", "exit loss coefficient of a conduit running full into standing water (its velocity head "
   "is lost, so the grade line at the outlet is the tailwater level)", 1.0,
   "Borda-Carnot loss of a sudden expansion, (V1 - V2)²/2g, into still water (V2 = 0): Henderson, F. M. (1966). "
   "Open Channel Flow, Macmillan; also White, F. M. Fluid Mechanics, §6.9 (minor losses)", RECALLED,
   note="the same value as culvert.exit_loss (HDS-5); a tailwater moving away from the outlet would lose less")

# ---------------------------------------------------------------------------
# road overtopping at a culvert
# ---------------------------------------------------------------------------

_HDS5_1985 = ("Normann, J. M., Houghtalen, R. J. & Johnston, W. J. (1985). Hydraulic Design of Highway Culverts, "
              "HDS-5, US Federal Highway Administration, Figure III-11 (flow over roadway embankments)")
_HDS5_1985_AT = "dnrweblink.state.co.us (scanned copy of HDS-5, 1985)"
_c("road.overtopping_cr", "weir coefficient Cr of a paved road overtopped deeply (HWr/Lr > 0.15) in Q = Cr L HWr^1.5",
   3.0, _HDS5_1985 + ", part A", RECALLED, unit="ft^0.5/s",
   note=f"the form Q = kt Cr L HWr^1.5 and its range read in a scanned copy ({_HDS5_1985_AT}); the value 3.0 recalled")
_c("road.submergence_paved", "submergence factor kt against ht/HWr of a paved road, ((ht/HWr...), (kt...))",
   ((0.0, 0.80, 0.85, 0.90, 0.93, 0.95, 0.97, 0.98), (1.0, 1.00, 0.97, 0.91, 0.85, 0.78, 0.66, 0.58)),
   _HDS5_1985 + ", part C", RECALLED, note=f"the chart's axes read in a scanned copy ({_HDS5_1985_AT}); "
   "the points recalled - verify against the chart")
_c("road.submergence_gravel", "submergence factor kt against ht/HWr of a gravel road, ((ht/HWr...), (kt...))",
   ((0.0, 0.75, 0.80, 0.85, 0.90, 0.95, 0.98), (1.0, 1.00, 0.98, 0.93, 0.85, 0.70, 0.55)),
   _HDS5_1985 + ", part C", RECALLED, note=f"the chart's axes read in a scanned copy ({_HDS5_1985_AT}); "
   "the points recalled - verify against the chart")

# ---------------------------------------------------------------------------
# weirs
# ---------------------------------------------------------------------------

_c("weir.villemonte_exponent", "exponent of Villemonte's submergence factor", 0.385,
   "Villemonte, J. R. (1947). Submerged-weir discharge studies. Engineering News-Record 139, 866-869", RECALLED)
_c("weir.max_submergence", "largest tailwater/upstream head ratio for Villemonte's factor", 0.9,
   "gvflow default: the factor falls steeply towards zero as the ratio approaches 1", COMMON_PRACTICE)
_c("weir.broad_crested_cd", "discharge coefficient of a rectangular-profile broad-crested weir", 0.848,
   "Bos, M. G. (1989). Discharge Measurement Structures, 3rd ed., ILRI Publication 20, §4 "
   "(valid for 0.08 <= H1/L <= 0.33)", RECALLED,
   note=f"{_NOVAK}, Table 8.1, gives 0.85 to 0.99 for broad-crested weirs in general (read at {_NOVAK_WEIR_AT})")
_c("weir.broad_crested_modular_limit", "modular limit h2/h1 of a rectangular-profile broad-crested weir", 0.66,
   "Bos, M. G. (1989). Discharge Measurement Structures, 3rd ed., ILRI Publication 20, §4", RECALLED)
_c("weir.rehbock", "Rehbock's Cd = a + b h/P of a sharp-crested rectangular weir, (a, b)", (0.611, 0.08),
   "Henderson, F. M. (1966). Open Channel Flow, Macmillan, ch. 6 (Rehbock's formula)", RECALLED,
   note="other texts give Rehbock's coefficient with slightly different constants (e.g. 0.602 + 0.083 h/P)")
_c("weir.francis_contraction", "Francis's end-contraction factor in b' = b - f n h", 0.1,
   "Francis (1883), as given by Chow, V. T. (1959). Open-Channel Hydraulics, McGraw-Hill, ch. 14", RECALLED)

_KC_SOURCE = ("Kindsvater, C. E. & Carter, R. W. (1957). Discharge characteristics of rectangular thin-plate weirs. "
              "J. Hydraulics Div. ASCE 83(HY6); table of C1, C2 and kb against b/B as in ISO 1438 and USBR (2001), "
              "Water Measurement Manual, ch. 7")
# b/B: (C2, C1); Ce = C2 + C1 h/P
_KC_CE = {0.0: (0.587, -0.0020), 0.1: (0.588, -0.0023), 0.2: (0.589, -0.0018), 0.3: (0.590, 0.0020),
          0.4: (0.591, 0.0058), 0.5: (0.592, 0.011), 0.6: (0.593, 0.018), 0.7: (0.595, 0.030),
          0.8: (0.597, 0.045), 0.9: (0.599, 0.064), 1.0: (0.602, 0.075)}
_KC_CE_READ = {0.5, 1.0}  # rows read in Novak et al. (2007), Table 8.1
_register(Table(
    "weir.kindsvater_carter_ce", "Kindsvater-Carter effective discharge coefficient Ce = C2 + C1 h/P",
    ("b/B", "C2", "C1"),
    {f"{r:.1f}": (_row("weir.kindsvater_carter_ce", f"{r:.1f}", f"Kindsvater-Carter C2, C1 at b/B = {r:.1f}",
                       (r, *v), f"{_NOVAK}, Table 8.1 (Kindsvater-Carter Cd for b/B = 1 and 1/2)", READ,
                       where=_NOVAK_WEIR_AT)
                  if r in _KC_CE_READ else
                  _row("weir.kindsvater_carter_ce", f"{r:.1f}", f"Kindsvater-Carter C2, C1 at b/B = {r:.1f}",
                       (r, *v), _KC_SOURCE, RECALLED))
     for r, v in _KC_CE.items()},
))
_KC_KB = {0.0: 0.0024, 0.1: 0.0024, 0.2: 0.0024, 0.3: 0.0025, 0.4: 0.0027, 0.5: 0.0030, 0.6: 0.0036, 0.7: 0.0042,
          0.8: 0.0041, 0.9: 0.0029, 1.0: -0.0009}
_register(Table(
    "weir.kindsvater_carter_kb", "Kindsvater-Carter width correction kb", ("b/B", "kb"),
    {f"{r:.1f}": _row("weir.kindsvater_carter_kb", f"{r:.1f}", f"Kindsvater-Carter kb at b/B = {r:.1f}",
                      (r, kb), _KC_SOURCE, RECALLED,
                      note=f"USBR (2001) gives kb as a curve (fig. 7-4), not read ({_USBR_WMM_AT})")
     for r, kb in _KC_KB.items()},
    unit="kb in m",
))
_c("weir.kindsvater_carter_kh", "Kindsvater-Carter head correction kh", 0.001,
   f"{_KC_SOURCE} (ISO 1438 value in metres)", RECALLED, unit="m",
   note=f"{_USBR_WMM} gives kh = 0.003 ft (0.0009 m), read at {_USBR_WMM_AT}: the same correction to the "
        "rounding of the foot value")

_KS_SOURCE = ("Shen, J. (1981). Discharge characteristics of triangular-notch thin-plate weirs, USGS Water-Supply "
              "Paper 1617-B; as tabulated by Blevins, R. D. (1984). Applied Fluid Dynamics Handbook")
_KS_NOTE = ("the same table as the general-purpose library fluids (a test compares them); Ponce's SDSU lab notes "
            "(https://ponce.sdsu.edu/protected119/lab05_131025.html) read Ce = 0.578 and kh = 0.0029 ft (0.88 mm) "
            "at 90 degrees from the USBR curves, against 0.5775 and 1.0 mm interpolated here; USBR (2001, ch. 7 §7) "
            "gives the relation for 25 to 100 degrees")
_KS = {20.0: (0.59, 0.0028), 40.0: (0.58, 0.0017), 60.0: (0.575, 0.0012), 80.0: (0.575, 0.001), 100.0: (0.58, 0.001)}
_register(Table(
    "weir.kindsvater_shen", "Kindsvater-Shen coefficients of a fully contracted V-notch",
    ("notch angle", "Ce", "kh"),
    {f"{a:g}": _row("weir.kindsvater_shen", f"{a:g}", f"Kindsvater-Shen Ce, kh at {a:g} degrees", (a, *v),
                    _KS_SOURCE, RECALLED, note=_KS_NOTE)
     for a, v in _KS.items()},
    unit="notch angle in degrees, kh in m",
))


# ---------------------------------------------------------------------------
# gates, overfalls, pools
# ---------------------------------------------------------------------------

_c("gate.contraction", "contraction coefficient Cc of a vertical sluice gate", 0.61, _PONCE_GATE, READ,
   where=_PONCE_GATE_AT,
   note=f"also {_NOVAK}, §6 eq. 6.4: Cc of a vertical gate 0.6 to 0.61 (Henderson 1966), read at {_NOVAK_GATE_AT}")
_c("gate.contraction_range", "range of Cc of a vertical sluice gate", (0.598, 0.611), _PONCE_GATE, READ,
   where=_PONCE_GATE_AT)

_ROUSE = ("Rouse, H. (1936). Discharge characteristics of the free overfall. Civil Engineering 6(4), 257-260 "
          "(horizontal or mild rectangular channel, subcritical approach)")
_THANDA = ("Thandaveswara, B. S. Hydraulics, course notes, Indian Institute of Technology Madras, 'Brink depth': "
           "Rouse showed yb = 0.715 yc; yc/yb = 1.4, the critical section 3 to 4 yc upstream of the brink")
_THANDA_AT = "https://www.scribd.com/document/400243144/15-2-pdf"
_c("overfall.brink_ratio", "brink depth over critical depth", 0.715, f"{_ROUSE}, as given by {_THANDA}", READ,
   where=_THANDA_AT,
   note="the notes derive it for an unconfined nappe and give 0.705 for two-dimensional flow (confined nappe), "
        "for canal slopes up to 0.0025 and widths of at least 3 yc")
_c("overfall.critical_section_distance", "distance of the critical section upstream of the brink, in critical depths",
   (3.0, 4.0), f"{_ROUSE}, as given by {_THANDA}", READ, where=_THANDA_AT)
_c("overfall.critical_section_factor", "default distance of the critical section upstream of the brink, in "
   "critical depths", 3.5, "gvflow default: the middle of Rouse's 3 to 4", COMMON_PRACTICE)
_c("backwater.extent_tolerance", "relative distance from normal depth counted as normal depth in the backwater "
   "extent", 0.01, "gvflow default: 1 % of the normal depth", COMMON_PRACTICE)
_c("pool.entrance_loss", "entrance loss coefficient from a pool into a channel", 0.0,
   "gvflow default: no entrance loss unless one is given", COMMON_PRACTICE)


# ---------------------------------------------------------------------------
# hydraulic jumps
# ---------------------------------------------------------------------------

_c("jump.length_curve", "jump length L/y2 against F1, ((F1, ...), (L/y2, ...))",
   ((1.0, 1.7, 3.0, 4.5, 13.0), (3.0, 4.0, 5.0, 6.1, 6.1)),
   "Peterka, A. J. (1958). Hydraulic Design of Stilling Basins and Energy Dissipators, USBR Engineering Monograph "
   "25, fig. 7 (curve of L/y2 against F1)", RECALLED,
   note=f"a stored text reads 'L = 6 y2 for 4 < F1 < 20' ({_JUMP_6Y2_AT}): within 2 % of the plateau 6.1; the "
        "fall below F1 = 4.5 is not confirmed")
_c("jump.types", "lower Froude number bounds of the jump types (undular, weak, oscillating, steady, strong)",
   (1.0, 1.7, 2.5, 4.5, 9.0), _HICKS, READ, where=_HICKS_AT,
   note="the USBR classification, as given also by Chow (1959), §15-2")


# ---------------------------------------------------------------------------
# roughness
# ---------------------------------------------------------------------------

_c("friction.manning_n_glass", "Manning's n of glass (minimum, normal, maximum)", (0.009, 0.010, 0.013), _PONCE_N,
   READ, where=_PONCE_N_AT, note="the smoothest surface in the table; gvflow refuses n below a hundredth of it")


# ---------------------------------------------------------------------------
# reference page
# ---------------------------------------------------------------------------

def _cell(text) -> str:
    return str(text).replace("|", "\\|").replace("\n", " ")


def markdown() -> str:
    """The reference page of every registered coefficient and table (``docs/coefficients.md``)."""
    out = ["# Coefficients and their sources", "",
           "Generated from the registry in `gvflow.coefficients` by",
           "`python -m gvflow.coefficients > docs/coefficients.md`; a test regenerates it and compares.",
           "Do not edit by hand.", "",
           "Status of each value:", ""]
    meaning = {
        EXACT: "a definition or a conversion",
        READ: "read in the published source named, in the stored copy at the address given; a test compares it",
        STANDARD: "taken from a published standard",
        RECALLED: "recalled from the source named, not yet checked against a copy of it: verify before relying on it",
        COMMON_PRACTICE: "a default of gvflow's own following common practice, not a published coefficient",
    }
    out += [f"- **{s}**: {meaning[s]}." for s in STATUSES]
    counts = {s: 0 for s in STATUSES}
    for item in REGISTRY.values():
        for c in (item.rows.values() if isinstance(item, Table) else (item,)):
            counts[c.status] += 1
    out += ["", "Counts (table rows counted one by one): "
            + ", ".join(f"{s} {n}" for s, n in counts.items() if n) + ".", ""]
    out += ["## Single coefficients", "", "| key | coefficient | value | unit | source | status | read at | note |",
            "| --- | --- | --- | --- | --- | --- | --- | --- |"]
    for key, item in REGISTRY.items():
        if isinstance(item, Table):
            continue
        p = item.provenance
        out.append(f"| `{key}` | {_cell(item.name)} | {_cell(_fmt(item.value))} | {_cell(item.unit)} | "
                   f"{_cell(p.source)} | {p.status} | {_cell(p.where)} | {_cell(p.note)} |")
    for key, item in REGISTRY.items():
        if not isinstance(item, Table):
            continue
        out += ["", f"## {item.title[0].upper()}{item.title[1:]}", "", f"Key `{key}`; units: {item.unit}.", ""]
        out.append("| row | " + " | ".join(item.columns) + " | source | status | read at | note |")
        out.append("| --- " * (len(item.columns) + 5) + "|")
        for label, row in item.rows.items():
            p = row.provenance
            vals = " | ".join(_cell(_fmt(v)) for v in row.value)
            out.append(f"| `{label}` | {vals} | {_cell(p.source)} | {p.status} | {_cell(p.where)} | {_cell(p.note)} |")
    return "\n".join(out) + "\n"


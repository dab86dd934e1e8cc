"""Frozen settings of a site, one dataclass per ``site.toml`` table.

Field names are the ``site.toml`` key names (see ``shared/interfaces.md``); defaults
are the documented defaults. Units: m, kPa, kN/m3, degrees, mm for bars and covers.
Each key is declared once, with its default, unit and range (``wallrun.rules.setting``),
and rules between keys are each class's ``problems()``. ``wallrun.site`` reads and
checks a site folder against exactly these declarations; the engine only ever sees the
checked objects, never the files, and checks nothing again.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from wallrun.factors import FactorSet
from wallrun.rules import g, setting

#: The most characters of a project's name or reference (one line of a title block).
TEXT_MAX = 200
#: The most characters of a section type's name in ``sections.csv`` (drawn in titles,
#: block names and schedules).
SECTION_NAME_MAX = 40


@dataclass(frozen=True)
class Project:
    name: str = setting("", required=True, nonempty=True, max_len=TEXT_MAX)
    reference: str = setting("", max_len=TEXT_MAX)


@dataclass(frozen=True)
class ProfileFiles:
    """``[profiles]``: where the two profiles come from (files inside the site folder).

    Either the CSV profiles ``ground`` and ``finished`` (or ``[[profiles.
    finished_alignment]]``), or a LandXML 1.2 file ``landxml``: the wall line is the
    ``alignment`` at ``offset_m`` (m, + right of increasing station); the ground is the
    TIN ``ground_surface`` sampled along it; the finished level is the TIN
    ``finished_surface`` or the ``finished_profile`` (a ProfAlign of the alignment) plus
    ``offset_m x finished_crossfall`` (m/m, + rising to the right); ``station_step_m`` >
    0 adds a sample every step (m) to the edge crossings.
    """

    ground: str = setting("", nonempty=True)
    finished: str = setting("", nonempty=True)  # or [[profiles.finished_alignment]]
    landxml: str = setting("", nonempty=True)
    alignment: str = setting("", nonempty=True)
    offset_m: float = setting(0.0, unit="m", ge=-1000, le=1000)
    ground_surface: str = setting("", nonempty=True)
    finished_surface: str = setting("", nonempty=True)
    finished_profile: str = setting("", nonempty=True)
    finished_crossfall: float = setting(0.0, unit="m/m", ge=-0.5, le=0.5)
    station_step_m: float = setting(0.0, unit="m", ge=0, le=10000)

    #: Keys that only a LandXML source reads.
    LANDXML_KEYS = ("alignment", "ground_surface", "finished_surface", "finished_profile")

    def problems(self) -> list[tuple[str, str]]:
        """Rules between keys: (key, problem). CSV profiles or a LandXML file, never
        both; with LandXML the alignment, the ground surface and exactly one of the
        finished surface and the finished profile; without it none of the LandXML keys
        (a non-zero ``offset_m``, ``finished_crossfall`` or ``station_step_m`` counts
        as given)."""
        out = []
        if self.landxml:
            for key in ("ground", "finished"):
                if getattr(self, key):
                    out.append((key, "give either the CSV profiles (ground, finished) or "
                                     "landxml, not both"))
            for key in ("alignment", "ground_surface"):
                if not getattr(self, key):
                    out.append((key, "required with landxml: the name of the LandXML "
                                     + ("Alignment" if key == "alignment" else "Surface")))
            if self.finished_surface and self.finished_profile:
                out.append(("finished_profile", "give either finished_surface or "
                                                "finished_profile, not both"))
            elif not self.finished_surface and not self.finished_profile:
                out.append(("finished_surface", "required with landxml: give "
                                                "finished_surface (a Surface) or "
                                                "finished_profile (a ProfAlign)"))
            if self.finished_crossfall != 0 and not self.finished_profile:
                out.append(("finished_crossfall", "applies to finished_profile only"))
        else:
            if not self.ground:
                out.append(("ground", "required key is missing (or give landxml)"))
            given = [k for k in self.LANDXML_KEYS if getattr(self, k)]
            given += [k for k in ("offset_m", "finished_crossfall", "station_step_m")
                      if getattr(self, k) != 0]
            for key in given:
                out.append((key, "applies to a LandXML source only: give landxml"))
        return out


@dataclass(frozen=True)
class ProfileData:
    """A levelled profile along the wall line, as read from a CSV file or sampled from
    a LandXML surface.

    ``chainage_m`` strictly increasing; ``x_m``/``y_m`` plan position (east, north) or
    None. ``source`` names the file (for messages); ``lines`` the CSV line number of
    each point (1-based, header is line 1 or later; empty for LandXML).
    """

    chainage_m: np.ndarray
    level_m: np.ndarray
    x_m: np.ndarray | None = None
    y_m: np.ndarray | None = None
    source: str = ""
    lines: tuple[int, ...] = ()


@dataclass(frozen=True)
class AlignmentPoint:
    """Vertical intersection point of a road alignment (``[[profiles.finished_alignment]]``)."""

    chainage_m: float = setting(0.0, unit="m", ge=-1e6, le=1e7, required=True)
    level_m: float = setting(0.0, unit="m", ge=-1000, le=10000, required=True)
    curve_length_m: float = setting(0.0, unit="m", ge=0, le=10000)


#: Concrete strength classes accepted, with fck in MPa (EN 1992-1-1 Table 3.1, plus the
#: BS 8500 classes C28/35 and C32/40). Up to C50/60: the eta = 1, lambda = 0.8 stress
#: block and x/d <= 0.45 of design-basis section 5 hold only for fck <= 50 MPa. From
#: C20/25: the indicative least class of reinforced concrete (EN 1992-1-1 Annex E,
#: Table E.1N, exposure XC1).
STRENGTH_CLASSES = {"C20/25": 20.0, "C25/30": 25.0, "C28/35": 28.0, "C30/37": 30.0,
                    "C32/40": 32.0, "C35/45": 35.0, "C40/50": 40.0, "C45/55": 45.0,
                    "C50/60": 50.0}


@dataclass(frozen=True)
class Wall:
    min_retained_height_m: float = setting(0.5, unit="m", gt=0, le=10)
    merge_gap_m: float = setting(5.0, unit="m", ge=0, le=1000)
    max_panel_length_m: float = setting(8.0, unit="m", gt=0, le=50)
    min_panel_length_m: float = setting(2.0, unit="m", gt=0, le=50)
    min_founding_depth_m: float = setting(0.6, unit="m", ge=0, le=10)
    founding_step_m: float = setting(0.15, unit="m", gt=0, le=2)
    max_founding_step_m: float = setting(0.6, unit="m", ge=0, le=10)
    top: str = setting("stepped", choices=("stepped", "sloped"))
    top_step_m: float = setting(0.15, unit="m", gt=0, le=2)
    max_top_step_m: float = setting(0.6, unit="m", ge=0, le=10)
    freeboard_m: float = setting(0.0, unit="m", ge=0, le=5)
    max_pressure_ratio: float = setting(1.5, ge=1, le=100)

    def problems(self) -> list[tuple[str, str]]:
        """Rules between keys (design-basis section 1): (key, problem)."""
        if self.min_panel_length_m > self.max_panel_length_m / 2:
            return [("min_panel_length_m",
                     f"must be at most half of max_panel_length_m ({g(self.max_panel_length_m)}"
                     f" / 2 = {g(self.max_panel_length_m / 2)}), got {g(self.min_panel_length_m)}")]
        return []


@dataclass(frozen=True)
class Backfill:
    unit_weight_kn_m3: float = setting(19.0, unit="kN/m3", gt=0, le=30)
    friction_angle_deg: float = setting(32.0, unit="deg", gt=0, lt=50)
    slope_deg: float = setting(0.0, unit="deg", ge=0, lt=90)
    wall_friction_deg: float = setting(0.0, unit="deg", ge=0, lt=50)

    def problems(self) -> list[tuple[str, str]]:
        """Rules between keys: (key, problem). A surface at or steeper than the
        characteristic friction angle of a cohesionless backfill does not stand
        (infinite-slope limit, common practice), so no wall can be designed for it."""
        out = []
        if self.wall_friction_deg > self.friction_angle_deg:
            out.append(("wall_friction_deg",
                        f"must not exceed the backfill friction_angle_deg "
                        f"({g(self.friction_angle_deg)}), got {g(self.wall_friction_deg)}"))
        if self.slope_deg >= self.friction_angle_deg:
            out.append(("slope_deg",
                        f"must be less than the backfill friction_angle_deg "
                        f"({g(self.friction_angle_deg)}): a cohesionless surface at or steeper "
                        f"than its friction angle does not stand, got {g(self.slope_deg)}"))
        return out


@dataclass(frozen=True)
class Foundation:
    unit_weight_kn_m3: float = setting(19.0, unit="kN/m3", gt=0, le=30)
    friction_angle_deg: float = setting(30.0, unit="deg", gt=0, lt=50)
    critical_state_angle_deg: float | None = setting(None, "float_or_none", unit="deg",
                                                     gt=0, lt=50)
    cohesion_kpa: float = setting(0.0, unit="kPa", ge=0, le=500)
    undrained_strength_kpa: float = setting(0.0, unit="kPa", ge=0, le=1000)
    allowable_bearing_kpa: float = setting(0.0, unit="kPa", ge=0, le=5000)

    @property
    def phi_cv_deg(self) -> float:
        """Critical-state angle used for base friction, degrees."""
        if self.critical_state_angle_deg is None:
            return self.friction_angle_deg
        return self.critical_state_angle_deg


@dataclass(frozen=True)
class FoundationZone:
    """A stretch ``from_m``..``to_m`` of chainage with its own foundation soil."""

    from_m: float = setting(0.0, unit="m", ge=-1e6, le=1e7, required=True)
    to_m: float = setting(0.0, unit="m", ge=-1e6, le=1e7, required=True)
    foundation: Foundation = Foundation()


@dataclass(frozen=True)
class Water:
    """Water behind the wall: exactly one of the two is set."""

    level_m: float | None = setting(None, "float_or_none", unit="m", ge=-1000, le=10000)
    height_above_base_m: float | None = setting(None, "float_or_none", unit="m", ge=0, le=100)


@dataclass(frozen=True)
class Loads:
    surcharge_kpa: float = setting(10.0, unit="kPa", ge=0, le=1000)
    psi2: float = setting(0.0, ge=0, le=1, why="EN 1990 Table A1.1")


@dataclass(frozen=True)
class Concrete:
    strength_class: str = setting("C32/40", choices=tuple(STRENGTH_CLASSES),
                                  why="EN 1992-1-1 Table 3.1 from C20/25 (Annex E) to C50/60")
    cover_mm: float = setting(50.0, unit="mm", ge=15, le=150)
    cover_ground_mm: float = setting(75.0, unit="mm", ge=15, le=150)
    alpha_cc: float = setting(0.85, ge=0.8, le=1.0, why="EN 1992-1-1 3.1.6(1) Note")
    # tensile strength when restraint cracks first form (EN 1992-1-1 7.3.2(2)); None: fctm
    fct_eff_mpa: float | None = setting(None, "float_or_none", unit="MPa", gt=0, le=5,
                                        why="EN 1992-1-1 7.3.2(2): fctm or an early-age value")
    # height of the kicker cast with the base; the stem bars lap the starters above it
    kicker_mm: float = setting(75.0, unit="mm", ge=0, le=300)

    @property
    def fck_mpa(self) -> float:
        """Characteristic cylinder strength of the class, MPa (EN 1992-1-1 Table 3.1)."""
        return STRENGTH_CLASSES[self.strength_class]

    @property
    def fctm_mpa(self) -> float:
        """Mean axial tensile strength of the class fctm = 0.30 fck^(2/3), MPa
        (EN 1992-1-1 Table 3.1)."""
        return 0.30 * self.fck_mpa ** (2.0 / 3.0)

    @property
    def fct_eff(self) -> float:
        """fct,eff of EN 1992-1-1 Eq. (7.1), MPa: ``fct_eff_mpa``, or fctm of the class
        (7.3.2(2)) when it is not given."""
        return self.fctm_mpa if self.fct_eff_mpa is None else float(self.fct_eff_mpa)

    def problems(self) -> list[tuple[str, str]]:
        """Rules between keys: (key, problem). fct,eff is fctm or lower, fctm(t) when the
        cracks form before 28 days (EN 1992-1-1 7.3.2(2))."""
        if self.fct_eff_mpa is not None and self.fct_eff_mpa > self.fctm_mpa + 1e-9:
            return [("fct_eff_mpa",
                     f"must not exceed fctm of {self.strength_class} ({g(round(self.fctm_mpa, 3))} MPa,"
                     f" EN 1992-1-1 7.3.2(2)), got {g(self.fct_eff_mpa)}")]
        return []


@dataclass(frozen=True)
class Steel:
    fyk_mpa: float = setting(500.0, unit="MPa", ge=400, le=600, why="EN 1992-1-1 Annex C")
    bar_sizes_mm: tuple[int, ...] = setting((10, 12, 16, 20, 25, 32), unit="mm", ge=6, le=50)
    spacings_mm: tuple[int, ...] = setting((100, 125, 150, 175, 200, 250, 300), unit="mm",
                                           ge=50, le=500)


@dataclass(frozen=True)
class Design:
    approach: str = setting("DA1", choices=("DA1", "DA2", "DA3"))
    earth_pressure: str = setting("rankine", choices=("rankine", "coulomb"))  # stem design
    passive: str = setting("key", choices=("none", "key", "full"))
    base_friction_factor: float = setting(1.0, gt=0, le=1)
    undrained_interface_open: bool = setting(True)
    sls_middle_third: bool = setting(True)
    crack_width_mm: float = setting(0.3, "choice", unit="mm", choices=(0.2, 0.3, 0.4),
                                    why="the columns of EN 1992-1-1 Table 7.3N")
    sections: str = setting("rationalised", choices=("rationalised", "bespoke", "catalogue"))
    #: "auto": the number of types of least total cost; a whole number caps it.
    max_types: int | str = setting("auto", "int_or_auto", ge=1, le=100)
    dimension_step_m: float = setting(0.05, unit="m", ge=0.01, le=0.5)
    #: A section passes at utilization <= max_utilization in every check (a margin below 1).
    max_utilization: float = setting(1.0, gt=0.5, le=1.0)
    #: Least stem thickness anywhere: two mats of bars and room to compact (common practice).
    min_stem_m: float = setting(0.25, unit="m", ge=0.15, le=1.0)
    #: Least base thickness (common practice).
    min_base_m: float = setting(0.30, unit="m", ge=0.15, le=1.5)
    # EN 1992-1-1 7.3.2 minimum steel for restraint cracking (stem horizontal and base
    # longitudinal bars); false lists 7.3.2 as not checked
    restraint_steel: bool = setting(True)


@dataclass(frozen=True)
class GroundModel:
    """``[ground]``: the ground around the wall for overall stability (design-basis
    section 9; interfaces "Additions").

    front_slope_deg: the front ground falls at this angle away from the toe, degrees
    (0: horizontal). retained_crest_m: height above z_top at which the retained slope
    (rising at the backfill's ``slope_deg``) flattens, m; None: it rises without limit.
    overall_stability: check ``overall`` (EN 1997-1 11.5.1, Bishop's simplified
    method); false: listed as not checked.
    """

    front_slope_deg: float = setting(0.0, unit="deg", ge=0, lt=90)
    retained_crest_m: float | None = setting(None, "float_or_none", unit="m", ge=0, le=1000)
    overall_stability: bool = setting(False)


@dataclass(frozen=True)
class Seismic:
    """``[seismic]``: the seismic design situation (design-basis 10, EN 1998-5 7.3.2).

    The table's presence turns the situation on (``Site.seismic`` is None without it).
    ag_g: alpha = ag/g, the design ground acceleration on ground type A over g
    (gamma_I agR / g, EN 1998-1 3.2.1); soil_factor: S of EN 1998-1 3.2.2.2 (Tables 3.2
    and 3.3: 1.0 to 1.8); r: EN 1998-5 Table 7.1 (2 and 1.5 for a wall free to slide
    300 alpha S mm and 200 alpha S mm, 1 for a wall that may not; 7.3.2.2(3): not above
    1 for saturated cohesionless backfill susceptible to high pore pressure);
    kv_ratio: kv / kh, 0.5 where avg/ag > 0.6 and 0.33 otherwise (7.3.2.2(2)).
    """

    ag_g: float = setting(0.0, unit="g", ge=0, le=1, required=True,
                          why="ag/g of EN 1998-1 3.2.1")
    soil_factor: float = setting(1.0, ge=1.0, le=2.0, required=True,
                                 why="S of EN 1998-1 Tables 3.2 and 3.3")
    r: float = setting(1.0, "choice", choices=(2.0, 1.5, 1.0), why="EN 1998-5 Table 7.1")
    kv_ratio: float = setting(0.5, "choice", choices=(0.5, 0.33),
                              why="EN 1998-5 7.3.2.2(2), Eqs. 7.2 and 7.3")

    @property
    def kh(self) -> float:
        """kh = ag_g S / r (EN 1998-5 7.3.2.2(2), Eq. 7.1)."""
        return self.ag_g * self.soil_factor / self.r

    @property
    def kv(self) -> float:
        """|kv| = kv_ratio kh (EN 1998-5 7.3.2.2(2), Eqs. 7.2 and 7.3)."""
        return self.kv_ratio * self.kh


@dataclass(frozen=True)
class Takeoff:
    """Quantity take-off settings (wallrun's own table ``[takeoff]``)."""

    working_space_m: float = setting(0.6, unit="m", ge=0, le=5)  # beside the base
    excavation_side_slope: float = setting(1.0, ge=0, le=10)  # horizontal per vertical
    blinding_thickness_m: float = setting(0.075, unit="m", ge=0, le=0.5)
    drainage_layer_thickness_m: float = setting(0.3, unit="m", ge=0, le=2)
    drain_pipe: bool = setting(True)  # perforated pipe at the heel along the run
    waterproofing: bool = setting(True)  # back face of the stem below the retained level
    currency: str = setting("", max_len=24)  # shown beside every cost; empty: "cost units"

    @property
    def money(self) -> str:
        """The unit of every cost: the currency given, else ``cost units``."""
        return self.currency.strip() or "cost units"


@dataclass(frozen=True)
class Drawings:
    """Drawing settings (wallrun's own table ``[drawings]``)."""

    vertical_exaggeration: float = setting(1.0, gt=0, le=20)
    chainage_tick_m: float = setting(20.0, unit="m", gt=0, le=10000)
    sheet: str = setting("A1", choices=("A1", "A3"))  # ISO sheet of the paper-space layouts


@dataclass(frozen=True)
class CatalogueSection:
    """One row of ``sections.csv``: dimensions in m, bars in mm."""

    section: str
    stem_top_m: float
    stem_base_m: float
    base_width_m: float
    toe_m: float
    base_thickness_m: float
    key_depth_m: float
    key_width_m: float
    stem_bar_mm: int
    stem_spacing_mm: int
    heel_bar_mm: int
    heel_spacing_mm: int
    toe_bar_mm: int
    toe_spacing_mm: int
    dist_bar_mm: int
    dist_spacing_mm: int


@dataclass(frozen=True)
class Rate:
    item: str
    unit: str
    rate: float


@dataclass(frozen=True)
class Basis:
    """What the section engine needs besides geometry and ground: the design basis.

    ``factors`` maps set name (``EQU``, ``DA1-1``, ``DA1-2``, ``DA2``, ``DA3``) to its
    resolved :class:`FactorSet`; only the sets in use are present.
    """

    factors: dict[str, FactorSet]
    design: Design = Design()
    loads: Loads = Loads()
    concrete: Concrete = Concrete()
    steel: Steel = Steel()
    seismic: "Seismic | None" = None  # the seismic design situation (combination SEIS)

    @property
    def uls_sets(self) -> tuple[str, ...]:
        """GEO/STR combinations of the approach (design-basis section 4)."""
        return {"DA1": ("DA1-1", "DA1-2"), "DA2": ("DA2",), "DA3": ("DA3",)}[self.design.approach]


@dataclass(frozen=True)
class Site:
    """A validated site folder."""

    root: str
    project: Project
    ground: ProfileData
    finished: ProfileData | None  # None when the alignment is given
    alignment: tuple[AlignmentPoint, ...] | None
    wall: Wall = Wall()
    backfill: Backfill = Backfill()
    foundation: Foundation = Foundation()
    zones: tuple[FoundationZone, ...] = ()
    water: Water | None = None
    loads: Loads = Loads()
    concrete: Concrete = Concrete()
    steel: Steel = Steel()
    design: Design = Design()
    factors: dict[str, FactorSet] = field(default_factory=dict)
    takeoff: Takeoff = Takeoff()
    drawings: Drawings = Drawings()
    ground_model: GroundModel = GroundModel()  # [ground] (``ground`` is the profile)
    catalogue: tuple[CatalogueSection, ...] | None = None
    rates: tuple[Rate, ...] | None = None  # None: the invented demo rates are used
    warnings: tuple[str, ...] = ()
    seismic: Seismic | None = None  # [seismic]; None: no seismic design situation
    profile_files: ProfileFiles = ProfileFiles()  # [profiles] as read
    crs: str = ""  # the coordinate reference system of x_m, y_m when the source names it

    @property
    def basis(self) -> Basis:
        return Basis(factors=self.factors, design=self.design, loads=self.loads,
                     concrete=self.concrete, steel=self.steel, seismic=self.seismic)

    def foundation_at(self, ch: float) -> Foundation:
        """Foundation soil in force at chainage ``ch`` (zones override the default)."""
        for z in self.zones:
            if z.from_m <= ch <= z.to_m:
                return z.foundation
        return self.foundation

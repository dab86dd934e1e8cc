"""Frozen settings of a site, one dataclass per ``site.toml`` table.

Field names are the ``site.toml`` key names (see ``shared/interfaces.md``); defaults
are the documented defaults. Units: m, kPa, kN/m3, degrees, mm for bars and covers.
``wallrun.site`` reads and validates a site folder into these objects; the engine
only ever sees them, never the files.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from wallrun.factors import FactorSet


@dataclass(frozen=True)
class Project:
    name: str
    reference: str = ""


@dataclass(frozen=True)
class ProfileData:
    """A levelled profile along the wall line, as read from a CSV file.

    ``chainage_m`` strictly increasing; ``x_m``/``y_m`` plan position or None.
    ``source`` is the file name (for messages); ``lines`` the CSV line number of
    each point (1-based, header is line 1 or later).
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

    chainage_m: float
    level_m: float
    curve_length_m: float = 0.0


@dataclass(frozen=True)
class Wall:
    min_retained_height_m: float = 0.5
    merge_gap_m: float = 5.0
    max_panel_length_m: float = 8.0
    min_panel_length_m: float = 2.0
    min_founding_depth_m: float = 0.6
    founding_step_m: float = 0.15
    max_founding_step_m: float = 0.6
    top: str = "stepped"  # stepped | sloped
    top_step_m: float = 0.15
    max_top_step_m: float = 0.6
    freeboard_m: float = 0.0
    max_pressure_ratio: float = 1.5


@dataclass(frozen=True)
class Backfill:
    unit_weight_kn_m3: float = 19.0
    friction_angle_deg: float = 32.0
    slope_deg: float = 0.0
    wall_friction_deg: float = 0.0


@dataclass(frozen=True)
class Foundation:
    unit_weight_kn_m3: float = 19.0
    friction_angle_deg: float = 30.0
    critical_state_angle_deg: float | None = None  # None: friction_angle_deg
    cohesion_kpa: float = 0.0
    undrained_strength_kpa: float = 0.0
    allowable_bearing_kpa: float = 0.0

    @property
    def phi_cv_deg(self) -> float:
        """Critical-state angle used for base friction, degrees."""
        if self.critical_state_angle_deg is None:
            return self.friction_angle_deg
        return self.critical_state_angle_deg


@dataclass(frozen=True)
class FoundationZone:
    """A stretch ``from_m``..``to_m`` of chainage with its own foundation soil."""

    from_m: float
    to_m: float
    foundation: Foundation


@dataclass(frozen=True)
class Water:
    """Water behind the wall: exactly one of the two is set."""

    level_m: float | None = None
    height_above_base_m: float | None = None


@dataclass(frozen=True)
class Loads:
    surcharge_kpa: float = 10.0
    psi2: float = 0.0


@dataclass(frozen=True)
class Concrete:
    strength_class: str = "C32/40"
    cover_mm: float = 50.0
    cover_ground_mm: float = 75.0
    alpha_cc: float = 0.85


@dataclass(frozen=True)
class Steel:
    fyk_mpa: float = 500.0
    bar_sizes_mm: tuple[int, ...] = (10, 12, 16, 20, 25, 32)
    spacings_mm: tuple[int, ...] = (100, 125, 150, 175, 200, 250, 300)


@dataclass(frozen=True)
class Design:
    approach: str = "DA1"  # DA1 | DA2 | DA3
    earth_pressure: str = "rankine"  # rankine | coulomb (stem design only)
    passive: str = "key"  # none | key | full
    base_friction_factor: float = 1.0
    undrained_interface_open: bool = True
    sls_middle_third: bool = True
    crack_width_mm: float = 0.3
    sections: str = "bespoke"  # bespoke | catalogue | rationalised
    max_types: int = 6
    dimension_step_m: float = 0.05


@dataclass(frozen=True)
class Takeoff:
    """Quantity take-off settings (wallrun's own table ``[takeoff]``)."""

    working_space_m: float = 0.6  # clear space beside the base for formwork, m
    excavation_side_slope: float = 1.0  # batter of the dig, horizontal per vertical
    blinding_thickness_m: float = 0.075
    drainage_layer_thickness_m: float = 0.3  # free-draining layer behind the stem
    drain_pipe: bool = True  # perforated pipe at the heel along the run
    waterproofing: bool = True  # back face of the stem below the retained level


@dataclass(frozen=True)
class Drawings:
    """Drawing settings (wallrun's own table ``[drawings]``)."""

    vertical_exaggeration: float = 1.0
    chainage_tick_m: float = 20.0
    sheet: str = "A1"  # ISO sheet of the drawings' paper-space layouts: A1 | A3


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
    catalogue: tuple[CatalogueSection, ...] | None = None
    rates: tuple[Rate, ...] | None = None  # None: the invented demo rates are used
    warnings: tuple[str, ...] = ()

    @property
    def basis(self) -> Basis:
        return Basis(factors=self.factors, design=self.design, loads=self.loads,
                     concrete=self.concrete, steel=self.steel)

    def foundation_at(self, ch: float) -> Foundation:
        """Foundation soil in force at chainage ``ch`` (zones override the default)."""
        for z in self.zones:
            if z.from_m <= ch <= z.to_m:
                return z.foundation
        return self.foundation

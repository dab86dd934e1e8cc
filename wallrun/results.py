"""Result objects of a design, named like the output columns of ``shared/interfaces.md``.

The output files are plain renderings of these objects: ``panels.csv`` rows are
:class:`PanelResult`, ``joints.csv`` rows :class:`Joint`, and so on.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field

import numpy as np

from wallrun.section import Section
from wallrun.settings import Backfill, Foundation


# --- checks --------------------------------------------------------------------------

@dataclass(frozen=True)
class CheckArray:
    """One check in one combination and case, for n candidates at once.

    effect, resistance: arrays of shape (n,) in ``unit``; utilization = effect /
    resistance (pass at <= 1.0). A resistance <= 0 gives utilization inf where the
    effect is positive and 0 where it is not.
    """

    check: str
    combination: str
    case: str
    unit: str
    clause: str
    effect: np.ndarray
    resistance: np.ndarray

    @property
    def utilization(self) -> np.ndarray:
        return utilization(self.effect, self.resistance)


def utilization(effect, resistance) -> np.ndarray:
    """effect / resistance with the conventions of :class:`CheckArray`."""
    e = np.asarray(effect, dtype=float)
    r = np.asarray(resistance, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        u = np.where(r > 0, e / np.where(r > 0, r, 1.0), np.where(e > 0, np.inf, 0.0))
    return u


@dataclass(frozen=True)
class Circle:
    """A slip circle (``design.json`` ``"circle"`` of an ``overall`` entry): centre x
    from the toe edge of the section (design-basis section 2), centre level z, and
    radius, m."""

    x_m: float
    z_m: float
    radius_m: float


@dataclass(frozen=True)
class CheckEntry:
    """One entry of ``design.json`` ``panels[].checks``; ``circle`` only on ``overall``
    entries (the critical circle of that combination and case)."""

    check: str
    combination: str
    case: str
    effect: float
    resistance: float
    unit: str
    utilization: float
    clause: str
    governs: bool = False
    circle: Circle | None = None


def governing_rows(kinds, u) -> set[int]:
    """The rows that govern: in each (check, combination) of ``kinds`` (rows of
    ``(check, combination, ...)``), the first row of the largest utilization ``u``."""
    worst: dict[tuple[str, str], int] = {}
    for k, kind in enumerate(kinds):
        key = (kind[0], kind[1])
        if key not in worst or u[k] > u[worst[key]]:
            worst[key] = k
    return set(worst.values())


class CheckListing(Sequence):
    """One design's check listing (``design.json`` ``panels[].checks``), a sequence of
    :class:`CheckEntry` held as columns.

    ``kinds``: per row ``(check, combination, case, unit, clause)`` (one tuple shared by
    every listing of an evaluation); ``values``: array (3, rows) of effect, resistance
    and utilization in the row's unit; ``governs``: per row whether it governs, or None
    for the worst row of each check and combination (:func:`governing_rows`);
    ``circles``: per row the critical circle of an ``overall`` entry, or None for none.

    The writers read the columns (:meth:`largest_by`, :meth:`governing`, :meth:`rows`);
    the entries are made only where a listing is read as a sequence, and then kept with
    it. A search lists every design it finishes and a rationalised set replaces most of
    them: those are never made, nor sent between processes as 10^5 objects. Equal to
    any sequence of the same entries; :meth:`of` makes one of entries."""

    __slots__ = ("kinds", "values", "governs", "circles", "_entries")

    def __init__(self, kinds: tuple, values: np.ndarray, governs: tuple | None = None,
                 circles: tuple | None = None):
        self.kinds = kinds
        self.values = values
        self.governs = governs
        self.circles = circles
        self._entries: tuple[CheckEntry, ...] | None = None

    @classmethod
    def of(cls, entries) -> CheckListing:
        """The listing of a sequence of entries (itself when it is one)."""
        if isinstance(entries, CheckListing):
            return entries
        entries = tuple(entries)
        values = np.array([[c.effect for c in entries], [c.resistance for c in entries],
                           [c.utilization for c in entries]], dtype=float).reshape(3, -1)
        circles = tuple(c.circle for c in entries)
        return cls(tuple((c.check, c.combination, c.case, c.unit, c.clause) for c in entries),
                   values, tuple(bool(c.governs) for c in entries),
                   circles if any(c is not None for c in circles) else None)

    def governing_flags(self) -> tuple[bool, ...]:
        """Per row whether it governs."""
        if self.governs is not None:
            return self.governs
        gov = governing_rows(self.kinds, self.values[2].tolist())
        return tuple(k in gov for k in range(len(self.kinds)))

    def rows(self):
        """(check, combination, case, effect, resistance, unit, utilization, clause,
        governs, circle) of each row: what a :class:`CheckEntry` holds, unmade."""
        e, r, u = self.values.tolist()
        circles = self.circles or (None,) * len(self.kinds)
        return [(c, comb, case, e[k], r[k], unit, u[k], clause, g, circle)
                for k, ((c, comb, case, unit, clause), g, circle) in enumerate(
                    zip(self.kinds, self.governing_flags(), circles))]

    def entries(self) -> tuple[CheckEntry, ...]:
        """The entries, as a tuple (made on the first call and kept)."""
        out = self._entries
        if out is None:
            out = self._entries = tuple(CheckEntry(*row) for row in self.rows())
        return out

    def largest_by(self, field: int = 0) -> dict[str, float]:
        """The largest utilization of the rows of each check name (``field`` 0) or
        combination (1), in order of first appearance."""
        worst: dict[str, float] = {}
        for kind, u in zip(self.kinds, self.values[2].tolist()):
            key = kind[field]
            if key not in worst or u > worst[key]:
                worst[key] = u
        return worst

    def top(self) -> int | None:
        """The row of largest utilization (the first of equal ones), None for none."""
        u = self.values[2].tolist()
        return max(range(len(u)), key=u.__getitem__) if u else None

    def governing(self) -> tuple[str, str] | None:
        """(check, combination) of the row of largest utilization (the first of equal
        ones), None for an empty listing."""
        k = self.top()
        return None if k is None else (self.kinds[k][0], self.kinds[k][1])

    def max_utilization(self) -> float:
        """The largest utilization of the listing (0.0 for none)."""
        return max(self.values[2].tolist(), default=0.0)

    def named(self, names) -> CheckListing:
        """The rows of the checks ``names``, in order (a check's governing rows are its
        own, so they govern in the part as in the whole)."""
        rows = [k for k, kind in enumerate(self.kinds) if kind[0] in names]
        if len(rows) == len(self.kinds):
            return self
        pick = lambda t: None if t is None else tuple(t[k] for k in rows)  # noqa: E731
        return CheckListing(tuple(self.kinds[k] for k in rows), self.values[:, rows],
                            pick(self.governs), pick(self.circles))

    def __len__(self) -> int:
        return len(self.kinds)

    def __getitem__(self, i):
        return self.entries()[i]

    def __iter__(self):
        return iter(self.entries())

    def __eq__(self, other) -> bool:
        if isinstance(other, (tuple, CheckListing)):
            return self.entries() == tuple(other)
        return NotImplemented

    def __hash__(self) -> int:
        return hash(self.entries())

    def __add__(self, other) -> tuple[CheckEntry, ...]:
        return self.entries() + tuple(other)

    def __radd__(self, other) -> tuple[CheckEntry, ...]:
        return tuple(other) + self.entries()

    def __reduce__(self):
        return (CheckListing, (self.kinds, self.values, self.governs, self.circles))

    def __repr__(self) -> str:
        return f"CheckListing({list(self.entries())!r})"


def max_utilization(checks: list[CheckArray] | tuple[CheckArray, ...]) -> np.ndarray:
    """Largest utilization of every candidate over all ``checks``, shape (n,)."""
    return np.max(np.vstack([np.broadcast_to(c.utilization, np.shape(checks[0].effect))
                             for c in checks]), axis=0)


# --- reinforcement -------------------------------------------------------------------

@dataclass(frozen=True)
class BarSet:
    """Bars of one member: diameter mm, spacing mm, areas mm2/m, effective depth mm.

    bend_r_mm: the scheduling radius of the bar's anchoring bend, mm (BS 8666 r of
    Table 2, or a larger R where EN 1992-1-1 Eq. 8.1 needs a larger mandrel): for the
    heel (top) bars the bend down at the heel end, for the toe (bottom) bars the bend up
    at the toe end, for starters the bend into the foot; None where the bars are
    straight or the design has not set it. far_bend_r_mm: heel and toe bars only, the
    bend at the other end of the base (beyond the stem), None where that end is
    straight.
    """

    bar_mm: int
    spacing_mm: int
    as_prov_mm2_per_m: float
    as_req_mm2_per_m: float
    d_mm: float
    bend_r_mm: float | None = None
    far_bend_r_mm: float | None = None


@dataclass(frozen=True)
class Starter(BarSet):
    """Starter bars from the base into the stem (``design.json``
    ``panels[].reinforcement.starter``): the bar and spacing of the stem bars they lap,
    an L with its foot on the bottom mat of the base. lap_mm: l0 of EN 1992-1-1 8.7.3
    above the kicker; kicker_mm: the kicker height; embedment_mm: the vertical leg from
    the top of the base to the underside of the foot; foot_mm: the foot (outside
    dimension). bend_r_mm: the radius of the bend into the foot."""

    lap_mm: float = 0.0
    kicker_mm: float = 0.0
    embedment_mm: float = 0.0
    foot_mm: float = 0.0

    @property
    def projection_mm(self) -> float:
        """Height of the starter above the top of the base: kicker + lap, mm."""
        return self.kicker_mm + self.lap_mm


@dataclass(frozen=True)
class Reinforcement:
    """The bars of a section (``design.json`` ``panels[].reinforcement``).

    stem: vertical main bars at the back (retained) face; heel: top mat of the base;
    toe: bottom mat of the base; stem_horizontal: horizontal bars, each face;
    base_distribution: transverse (along the wall) bars of the base, each mat.
    stem_front: vertical bars of the front face (minimum steel). stem_horizontal and
    base_distribution carry the restraint steel of EN 1992-1-1 7.3.2 when it is designed
    (areas per face). starter, starter_front: the starter bars lapped above the kicker
    (None where the design has not made them, e.g. a nominal section).
    """

    stem: BarSet
    heel: BarSet
    toe: BarSet
    stem_horizontal: BarSet
    base_distribution: BarSet
    stem_front: BarSet | None = None
    stem_curtail_m: float | None = None  # height above the top of the base where half
    # the stem main bars stop (None: all bars run full height)
    starter: Starter | None = None  # back-face starters (the stem main bars' lap)
    starter_front: Starter | None = None  # front-face starters (the stem_front bars' lap)


@dataclass(frozen=True)
class BarMark:
    """One row of ``bar_schedule.csv`` (BS 8666:2005 schedule, shape codes of its Table 3).

    section: the section type; member: the BS 8666 member, the section type, the part
    and the panels of the row (e.g. ``"S03 starter P004 P007-P009"``); bar_mark: the
    mark, one per distinct bar of a section type (``S03-01``); bar_mm: size d; number:
    the total number (``total_no`` = no_of_members x no_in_each); total_length_m and
    mass_kg of all of them; dims_mm: the shape's dimensions A to E; r_mm: the bend
    radius of a bent bar (None for a straight one); part: which bars (stem, starter,
    stem_front, starter_front, stem_horizontal, heel, toe, base_distribution, key; the
    names of ``reinforcement``); panels: the panels of the row; no_of_members: their
    number; no_in_each: the bars in each panel (0: ``number``, one member);
    steel_type: the BS 8666 type letter.
    """

    section: str
    member: str
    bar_mark: str
    bar_mm: int
    shape_code: str
    length_mm: int
    number: int
    total_length_m: float
    mass_kg: float
    dims_mm: dict[str, int] = field(default_factory=dict)  # shape dimensions A, B, ...
    r_mm: int | None = None
    part: str = ""
    panels: tuple[str, ...] = ()
    no_of_members: int = 1
    no_in_each: int = 0
    steel_type: str = "H"

    @property
    def type_size(self) -> str:
        """Type and size as BS 8666:2005 writes them, e.g. ``H16``: the type letter of its
        Table 1 (H: grade B500A, B500B or B500C to BS 4449; X: a steel the design
        specifies otherwise) and the size d in mm."""
        return f"{self.steel_type}{self.bar_mm}"

    @property
    def total_no(self) -> int:
        return int(self.number)

    @property
    def each(self) -> int:
        """Bars in each member (``no_in_each``)."""
        return int(self.no_in_each or self.number)

    # shape dimensions A to E of the schedule, mm (None where the shape has none)
    @property
    def a_mm(self) -> int | None:
        return self.dims_mm.get("A")

    @property
    def b_mm(self) -> int | None:
        return self.dims_mm.get("B")

    @property
    def c_mm(self) -> int | None:
        return self.dims_mm.get("C")

    @property
    def d_mm(self) -> int | None:
        return self.dims_mm.get("D")

    @property
    def e_mm(self) -> int | None:
        return self.dims_mm.get("E")


# --- run, panels and joints -------------------------------------------------------------

@dataclass(frozen=True)
class Panel:
    """A panel's extent and levels (the level columns of ``panels.csv``), m.

    ``length_m``: the panel's length along the wall line: ``length_along_m`` when the
    panel is built with it (``wallrun.profile.Profiles.length_along``), else the
    chainage difference. On a LandXML site with a curved alignment the two differ: the
    chainages are the alignment's stations, the length is measured on the wall line.
    (``dataclasses.replace`` that moves the chainages of a panel built with
    ``length_along_m`` must give the new length too.)
    """

    panel: str
    run: int
    side: str  # fill | cut
    ch_start_m: float
    ch_end_m: float
    retained_top_m: float
    front_min_m: float
    founding_m: float
    wall_top_start_m: float
    wall_top_end_m: float
    foundation: Foundation
    backfill: Backfill
    surcharge_kpa: float
    water_level_m: float | None  # absolute, as used after capping at the backfill surface
    length_along_m: float | None = None  # along the wall line; None: the chainages'

    @property
    def length_m(self) -> float:
        """Length along the wall line, m."""
        if self.length_along_m is None:
            return self.ch_end_m - self.ch_start_m
        return self.length_along_m

    @property
    def retained_height_m(self) -> float:
        return self.retained_top_m - self.front_min_m

    @property
    def total_height_m(self) -> float:
        return self.retained_top_m - self.founding_m


def largest(worst: dict[str, float], checks) -> float:
    """The largest of ``worst`` (``PanelResult.worst_by_check``) over ``checks``; 0.0
    where none of them is listed."""
    return max((worst[c] for c in checks if c in worst), default=0.0)


@dataclass(frozen=True)
class PanelResult:
    """A designed panel: one row of ``panels.csv`` and one entry of ``design.json``."""

    panel: Panel
    section_type: str
    section: Section
    reinforcement: Reinforcement
    checks: CheckListing  # (entries given are held as one: CheckListing.of)
    status: str  # ok | flagged
    reason: str = ""
    quantities: dict[str, float] = field(default_factory=dict)  # per-panel take-off
    # None for a panel that could not be designed (flagged): nothing is measured or
    # priced for it, and it is left out of the totals
    concrete_m3: float | None = 0.0
    steel_kg: float | None = 0.0
    cost: float | None = 0.0

    def __post_init__(self):
        if not isinstance(self.checks, CheckListing):
            object.__setattr__(self, "checks", CheckListing.of(self.checks))

    def worst_by_check(self) -> dict[str, float]:
        """The largest utilization of each check of the listing, by check name."""
        return self.checks.largest_by(0)

    def util(self, *checks: str) -> float:
        """The largest utilization of ``checks`` (0.0 where none is listed)."""
        return largest(self.worst_by_check(), checks)

    @property
    def governing(self) -> str:
        """Largest utilization overall as ``check combination``."""
        g = self.checks.governing()
        return "" if g is None else f"{g[0]} {g[1]}"


@dataclass(frozen=True)
class Joint:
    """One row of ``joints.csv``."""

    joint: str
    ch_m: float
    left: str
    right: str
    founding_step_m: float
    top_step_m: float
    pressure_ratio: float
    status: str  # ok | flagged
    reason: str = ""


@dataclass(frozen=True)
class SectionType:
    """A section type in use: one row of ``sections.csv`` (output)."""

    section_type: str
    section: Section
    reinforcement: Reinforcement
    governing: str  # check and combination that governs over its panels
    utilization: float
    panels: tuple[str, ...]


@dataclass(frozen=True)
class Quantity:
    item: str
    unit: str
    quantity: float


@dataclass(frozen=True)
class CostRow:
    item: str
    unit: str
    quantity: float
    rate: float | None  # None: no rate given (unpriced)
    amount: float | None


@dataclass(frozen=True)
class Cost:
    rows: tuple[CostRow, ...]
    total: float
    complete: bool  # False when any item is unpriced
    demo_rates: bool  # True when the invented demo rates were used


@dataclass(frozen=True)
class Run:
    """A continuous wall on one side (``wallrun check --json`` ``runs[]``), m.
    ``length_m`` is along the wall line, as the panels' lengths are (on a curved LandXML
    wall line longer or shorter than the station difference); given as None, the
    chainage difference (a wall line without plan positions)."""

    run: int
    side: str  # fill | cut
    ch_start_m: float
    ch_end_m: float
    max_retained_height_m: float
    at_ch_m: float
    length_m: float | None = None

    def __post_init__(self):
        if self.length_m is None:
            object.__setattr__(self, "length_m", self.ch_end_m - self.ch_start_m)


@dataclass(frozen=True)
class ActionRow:
    """One characteristic action on a section, for the report's actions table.

    vertical_kn_m: downward positive; horizontal_kn_m: towards the front positive;
    x_m, z_m: point of application from the toe edge and the underside of the base;
    moment_kn_m_m: about the toe edge at the underside, restoring positive.
    kind: ``permanent`` or ``variable``.
    """

    name: str
    kind: str
    vertical_kn_m: float
    horizontal_kn_m: float
    x_m: float
    z_m: float
    moment_kn_m_m: float


@dataclass(frozen=True)
class DesignResult:
    """Everything a design produced; the output files render exactly this."""

    site: "object"  # wallrun.settings.Site
    profiles: "object"  # wallrun.profile.Profiles
    runs: tuple[Run, ...]
    panels: tuple[PanelResult, ...]
    joints: tuple[Joint, ...]
    section_types: tuple[SectionType, ...]
    actions: dict[str, tuple[ActionRow, ...]]  # per section type, at its governing panel
    bar_schedule: tuple[BarMark, ...]
    quantities: tuple[Quantity, ...]
    cost: Cost
    warnings: tuple[str, ...] = ()
    timings: dict[str, float] = field(default_factory=dict)  # seconds per stage
    search: dict[str, float] = field(default_factory=dict)  # candidates searched, calls

    @property
    def ok(self) -> bool:
        return all(p.status == "ok" for p in self.panels) and all(
            j.status == "ok" for j in self.joints)

    @property
    def not_designed(self) -> int:
        """The panels that could not be designed (flagged): not measured or priced."""
        return sum(p.status != "ok" for p in self.panels)

    @property
    def nothing_designed(self) -> bool:
        """No panel could be designed: nothing is measured or priced, and the zero
        totals are no estimate (the outputs say so instead of giving a cost)."""
        return not any(p.status == "ok" for p in self.panels)

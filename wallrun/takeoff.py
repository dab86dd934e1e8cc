"""Quantity take-off and cost estimate of the wall (design-basis section 7).

Everything here is a pure function of the panel, its section and its bars. Units:
m3 (volumes), m2 (areas), m (lengths), kg (steel); money in the units of the rate
table (the demo rates are invented figures in unnamed money units).

Geometry of a panel (design-basis section 2): chainage s runs along the panel from
0 to L = ``panel.length_m``. The base (width B, thickness t_b) is flat with its
underside at ``panel.founding_m``; the top of the base is z_b = founding + t_b. The
stem runs from z_b to the wall top z_w(s), which is straight along the panel from
``wall_top_start_m`` to ``wall_top_end_m`` (sloped top) or constant (stepped top).
Its front face is vertical; its back face tapers from ``stem_base_m`` at z_b to
``stem_top_m`` at ``panel.retained_top_m`` (height h_s = retained_top - z_b) and is
vertical above. So with y = z_w - z_b the stem's cross-section area is

    A(y) = t_base y - (t_base - t_top) y^2 / (2 h_s)          for y <= h_s
    A(y) = (t_base + t_top) h_s / 2 + t_top (y - h_s)         for y >  h_s

and, y being linear in s, every stem quantity is integrated exactly along the panel
with the antiderivative of its integrand in y (piecewise quadratic or cubic).

Measurement rules (each item's docstring line in :func:`panel_quantities`):
everything is measured net from the drawn geometry; no allowance for waste,
overbreak or laps beyond those in the bar schedule.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping

import numpy as np

from wallrun.results import BarMark, Cost, CostRow, Panel, Quantity
from wallrun.section import Section, SectionArrays
from wallrun.settings import Rate, Takeoff

#: Items in the order of ``quantities.csv`` (interfaces.md), with their units. The
#: per-diameter steel items ``reinforcement_<bar mm>`` follow ``reinforcement_total``
#: in ascending diameter.
ITEMS: tuple[tuple[str, str], ...] = (
    ("concrete_stem", "m3"),
    ("concrete_base", "m3"),
    ("concrete_key", "m3"),
    ("concrete_total", "m3"),
    ("blinding", "m2"),
    ("formwork_stem", "m2"),
    ("formwork_base", "m2"),
    ("formwork_stop_ends", "m2"),
    ("excavation", "m3"),
    ("backfill", "m3"),
    ("drainage_layer", "m3"),
    ("drain_pipe", "m"),
    ("joint_seal", "m"),
    ("waterproofing", "m2"),
    ("reinforcement_total", "kg"),
)
#: The job-wide item of a rationalised set, after the steel: the number of section types
#: (each costs its detailing, formwork set and cage jig, design-basis section 6).
SECTION_TYPE = ("section_type", "nr")
_UNITS = dict(ITEMS + (SECTION_TYPE,))


class _Units(dict):
    """``{item: unit}`` of the take-off items; also answers any ``reinforcement_<mm>``."""

    def __missing__(self, item: str) -> str:
        if _bar_mm(item) is not None:
            return "kg"
        raise KeyError(item)

    def get(self, item, default=None):
        try:
            return self[item]
        except KeyError:
            return default

    def __contains__(self, item) -> bool:
        return dict.__contains__(self, item) or _bar_mm(str(item)) is not None


#: Units of the take-off items (m3, m2, m, kg), ``UNITS[item]`` / ``UNITS.get(item)``.
UNITS = _Units(ITEMS)
_ORDER = {item: k for k, (item, _) in enumerate(ITEMS)}

#: Items priced as a group: the total when the rate table prices it, else the parts
#: (never both, so nothing is counted twice).
_GROUPS = (("concrete_total", ("concrete_stem", "concrete_base", "concrete_key")),
           ("reinforcement_total", None))  # None: the reinforcement_<mm> items

DEMO_RATES_NOTE = ("Demo rates: invented example figures in unnamed money units, "
                   "not market prices. Replace them with your own rates.csv.")


def unit_of(item: str) -> str:
    """Unit of a take-off item: m3, m2, m, kg (``reinforcement_<mm>`` is kg) or nr."""
    if item in _UNITS:
        return _UNITS[item]
    if _bar_mm(item) is not None:
        return "kg"
    raise ValueError(f"unknown take-off item {item!r}")


def _bar_mm(item: str) -> int | None:
    """Bar diameter of a ``reinforcement_<mm>`` item, else None."""
    head, _, tail = item.rpartition("_")
    if head == "reinforcement" and tail.isdigit():
        return int(tail)
    return None


def item_order(item: str) -> tuple[int, float, str]:
    """Sort key of take-off items: the quantities.csv order, steel diameters ascending."""
    if item in _ORDER:
        return (_ORDER[item], 0.0, item)
    mm = _bar_mm(item)
    if mm is not None:
        return (len(ITEMS), float(mm), item)
    if item == SECTION_TYPE[0]:
        return (len(ITEMS) + 1, 0.0, item)
    return (len(ITEMS) + 2, 0.0, item)


# --- stem geometry, exact along the panel ----------------------------------------------

class _Stem:
    """Stem cross-section as a function of its height y above the top of the base, m.

    t0 = thickness at the top of the base, t1 = thickness at and above the taper top,
    hs = height of the taper (top of base to the retained level). Each quantity has an
    antiderivative in y so that the mean over a linear y(s) is exact.
    """

    def __init__(self, t0: float, t1: float, hs: float):
        self.t0, self.t1 = float(t0), float(t1)
        self.hs = float(hs)  # > 0, checked by the caller
        self.slope = (self.t0 - self.t1) / self.hs  # horizontal per vertical of the back face
        self.k = math.sqrt(1.0 + self.slope ** 2)  # true length per height of the back face

    # cross-section area A(y), m2, and its antiderivative, m3/m
    def area(self, y: float) -> float:
        if y <= self.hs:
            return self.t0 * y - 0.5 * self.slope * y * y
        return 0.5 * (self.t0 + self.t1) * self.hs + self.t1 * (y - self.hs)

    def _area_int(self, y: float) -> float:
        if y <= self.hs:
            return 0.5 * self.t0 * y * y - self.slope * y ** 3 / 6.0
        return self._area_int(self.hs) + self.area(self.hs) * (y - self.hs) \
            + 0.5 * self.t1 * (y - self.hs) ** 2

    # back-face true length up to height y, m, and its antiderivative
    def back(self, y: float) -> float:
        return self.k * min(y, self.hs) + max(y - self.hs, 0.0)

    def _back_int(self, y: float) -> float:
        if y <= self.hs:
            return 0.5 * self.k * y * y
        return 0.5 * self.k * self.hs ** 2 + self.k * self.hs * (y - self.hs) \
            + 0.5 * (y - self.hs) ** 2

    # back-face true length below the retained level (taper only), m
    def back_retained(self, y: float) -> float:
        return self.k * min(y, self.hs)

    def _back_retained_int(self, y: float) -> float:
        if y <= self.hs:
            return 0.5 * self.k * y * y
        return 0.5 * self.k * self.hs ** 2 + self.k * self.hs * (y - self.hs)

    def thickness(self, y: float) -> float:
        return self.t0 - self.slope * min(y, self.hs)

    def along(self, name: str, y0: float, y1: float, L: float) -> float:
        """Integral over the panel of quantity ``name`` with y linear from y0 to y1, x L."""
        f = getattr(self, name)
        if abs(y1 - y0) < 1e-12:
            return L * f(0.5 * (y0 + y1))
        F = getattr(self, "_" + name + "_int")
        return L * (F(y1) - F(y0)) / (y1 - y0)


def _check_geometry(panel: Panel, section: Section) -> list[str]:
    p = []
    if panel.length_m <= 0:
        p.append(f"{panel.panel}: panel length {panel.length_m} m must be > 0")
    for name in ("stem_top_m", "stem_base_m", "base_width_m", "base_thickness_m"):
        if not getattr(section, name) > 0:
            p.append(f"{panel.panel}: section {name} = {getattr(section, name)} must be > 0")
    if section.heel_m < -1e-9 or section.toe_m < -1e-9:
        p.append(f"{panel.panel}: toe and heel must not be negative")
    z_b = panel.founding_m + section.base_thickness_m
    if panel.retained_top_m <= z_b:
        p.append(f"{panel.panel}: retained level {panel.retained_top_m:.3f} m is not above "
                 f"the top of the base ({z_b:.3f} m)")
    for end, zw in (("start", panel.wall_top_start_m), ("end", panel.wall_top_end_m)):
        if zw < z_b:
            p.append(f"{panel.panel}: wall top at the {end} ({zw:.3f} m) is below the top "
                     f"of the base ({z_b:.3f} m)")
    return p


def panel_quantities(panel: Panel, section: Section, bars: list[BarMark] | tuple[BarMark, ...],
                     takeoff: Takeoff, stop_ends: int = 2, joint_seals: int = 1,
                     front_level_m: float | None = None) -> dict[str, float]:
    """Take-off of one panel, ``{item: quantity}`` in the units of :data:`ITEMS`.

    Measurement rules (net, from the drawn geometry of the module docstring):

    - ``concrete_stem`` (m3): the stem's true volume, the exact integral of the
      cross-section area A(y) along the panel (sloped or stepped top), including the
      stem above the retained level (freeboard, rounding of a stepped top).
    - ``concrete_base`` (m3) = B t_b L; ``concrete_key`` (m3) = d_key w_key L;
      ``concrete_total`` their sum.
    - ``blinding`` (m2) = B L, the plan area of the base (the key is cast against the
      ground through it). Its thickness (``takeoff.blinding_thickness_m``) is what the
      rate is for; it is not added to the excavation depth.
    - ``formwork_stem`` (m2): both stem faces, true areas: the vertical front face
      (integral of y) and the back face, inclined over the taper (length
      sqrt(1 + slope^2) per height) and vertical above.
    - ``formwork_base`` (m2): the two long edges of the base (toe edge and heel edge,
      t_b each) times L, plus the two faces of the key (d_key each) times L.
    - ``formwork_stop_ends`` (m2): the end face of the panel (stem at that end + base +
      key cross-section) at each of ``stop_ends`` ends. Default 2 for every panel: each
      panel is cast between joints, so both of its ends are formed (conservative where
      alternate bays are cast against their neighbours). ``stop_ends`` = 1 counts the
      mean of the two end faces.
    - ``excavation`` (m3): structural excavation from the front ground level down to
      the underside of the base, bottom width B + 2 ``working_space_m``, sides battered
      at ``excavation_side_slope`` (horizontal per vertical): area W0 D + n D^2, plus
      the key trench d_key w_key (vertical sides, cast against the ground), times L.
      The front level is ``front_level_m`` when given (the pipeline may pass the mean
      front ground over the panel), else ``panel.front_min_m``, the lowest front level,
      which under-measures where the front ground varies along the panel. End batters
      at the ends of a run and steps of the founding level between panels are not
      measured. Bulk earthworks above the front level (the cut of a cut wall, the fill
      of a fill wall) belong to the road, not the wall, and are not measured.
    - ``backfill`` (m3): the excavation less the structure within it (base, key and the
      stem below the front level). The fill placed behind the stem above the original
      ground of a fill wall is NOT included (road earthworks).
    - ``drainage_layer`` (m3): free-draining layer ``drainage_layer_thickness_m``
      thick (measured horizontally) behind the stem from the front level up to the
      retained level, times L.
    - ``drain_pipe`` (m) = L, when ``takeoff.drain_pipe`` (absent otherwise).
    - ``joint_seal`` (m): sealant round the stem at the movement joint at the panel's
      end: front edge + back edge (true length) + top edge of the stem there, times
      ``joint_seals``: 1 for every panel but the last of its run, 0 for the last (the
      pipeline passes the count; each joint is then counted once).
    - ``waterproofing`` (m2): back face of the stem below the retained level (true
      area of the tapered part), when ``takeoff.waterproofing`` (absent otherwise).
    - ``reinforcement_total`` (kg): the sum of ``mass_kg`` of the panel's bar rows;
      ``reinforcement_<bar mm>`` (kg) the same by diameter.
    """
    problems = _check_geometry(panel, section)
    if stop_ends < 0 or joint_seals < 0:
        problems.append(f"{panel.panel}: stop_ends and joint_seals must be >= 0")
    if problems:
        raise ValueError("; ".join(problems))

    L = panel.length_m
    B, tb = section.base_width_m, section.base_thickness_m
    dk, wk = max(section.key_depth_m, 0.0), max(section.key_width_m, 0.0)
    if dk <= 0 or wk <= 0:
        dk = wk = 0.0
    z_b = panel.founding_m + tb
    stem = _Stem(section.stem_base_m, section.stem_top_m, panel.retained_top_m - z_b)
    y0, y1 = panel.wall_top_start_m - z_b, panel.wall_top_end_m - z_b

    q: dict[str, float] = {}
    q["concrete_stem"] = stem.along("area", y0, y1, L)
    q["concrete_base"] = B * tb * L
    q["concrete_key"] = dk * wk * L
    q["concrete_total"] = q["concrete_stem"] + q["concrete_base"] + q["concrete_key"]
    q["blinding"] = B * L
    front_face = L * 0.5 * (y0 + y1)
    q["formwork_stem"] = front_face + stem.along("back", y0, y1, L)
    q["formwork_base"] = 2.0 * tb * L + 2.0 * dk * L
    end_faces = stem.area(y0) + stem.area(y1) + 2.0 * (B * tb + dk * wk)
    q["formwork_stop_ends"] = stop_ends * 0.5 * end_faces

    front = panel.front_min_m if front_level_m is None else float(front_level_m)
    D = max(front - panel.founding_m, 0.0)
    W0 = B + 2.0 * takeoff.working_space_m
    n = takeoff.excavation_side_slope
    q["excavation"] = (W0 * D + n * D * D + dk * wk) * L
    y_front = min(max(front - z_b, 0.0), max(y0, y1))  # stem height below the front level
    inside = B * min(tb, D) + dk * wk + stem.area(y_front)
    q["backfill"] = max(q["excavation"] - inside * L, 0.0)
    q["drainage_layer"] = (takeoff.drainage_layer_thickness_m
                           * max(panel.retained_top_m - front, 0.0) * L)
    if takeoff.drain_pipe:
        q["drain_pipe"] = L
    q["joint_seal"] = joint_seals * (y1 + stem.back(y1) + stem.thickness(y1))
    if takeoff.waterproofing:
        q["waterproofing"] = stem.along("back_retained", y0, y1, L)

    by_mm: dict[int, float] = {}
    for b in bars:
        by_mm[int(b.bar_mm)] = by_mm.get(int(b.bar_mm), 0.0) + float(b.mass_kg)
    q["reinforcement_total"] = math.fsum(float(b.mass_kg) for b in bars)
    for mm in sorted(by_mm):
        q[f"reinforcement_{mm}"] = by_mm[mm]
    return q


def totals(per_panel: Iterable[Mapping[str, float]]) -> tuple[Quantity, ...]:
    """Job totals of the per-panel take-offs, one :class:`Quantity` per item.

    Items in the order of ``quantities.csv`` (interfaces.md), per-diameter steel after
    ``reinforcement_total`` in ascending diameter; an item present in any panel is
    listed. Each total is the correctly rounded sum (``math.fsum``) over the panels.
    """
    acc: dict[str, list[float]] = {}
    for q in per_panel:
        for item, v in q.items():
            acc.setdefault(item, []).append(float(v))
    return tuple(Quantity(item, unit_of(item), math.fsum(acc[item]))
                 for item in sorted(acc, key=item_order))


# --- rates and cost --------------------------------------------------------------------

#: Invented example rates for every item: made-up figures in unnamed money units per
#: unit of quantity, NOT market prices, for demonstrating the estimate only. Outputs
#: that use them say so (:data:`DEMO_RATES_NOTE`, ``Cost.demo_rates``).
DEMO_RATES: tuple[Rate, ...] = (
    Rate("concrete_stem", "m3", 205.0),
    Rate("concrete_base", "m3", 175.0),
    Rate("concrete_key", "m3", 190.0),
    Rate("concrete_total", "m3", 185.0),
    Rate("blinding", "m2", 9.5),
    Rate("formwork_stem", "m2", 42.0),
    Rate("formwork_base", "m2", 36.0),
    Rate("formwork_stop_ends", "m2", 58.0),
    Rate("excavation", "m3", 14.0),
    Rate("backfill", "m3", 19.0),
    Rate("drainage_layer", "m3", 48.0),
    Rate("drain_pipe", "m", 23.0),
    Rate("joint_seal", "m", 31.0),
    Rate("waterproofing", "m2", 16.5),
    Rate("reinforcement_total", "kg", 1.45),
    Rate("section_type", "nr", 2400.0),
) + tuple(Rate(f"reinforcement_{mm}", "kg", r) for mm, r in
          ((6, 1.70), (8, 1.62), (10, 1.55), (12, 1.50), (16, 1.45), (20, 1.42),
           (25, 1.40), (32, 1.40), (40, 1.43)))


def _norm_unit(u: str) -> str:
    return (str(u).strip().lower().replace("\u00b3", "3").replace("\u00b2", "2")
            .replace("^", "").replace(" ", ""))


def _rate_table(rates: Iterable[Rate]) -> dict[str, float]:
    """``{item: rate}`` of a rate table as the site reader checked it (``wallrun.site``
    refuses a unit that differs from the item's, a negative rate and a repeated item)."""
    return {r.item: float(r.rate) for r in rates}


def _priced_items(items: list[str], qty: Mapping[str, float],
                  table: Mapping[str, float]) -> list[str]:
    """The items that get a cost row: each group priced by its total when the table has
    a rate for the total, else by its parts, never both (no double counting)."""
    drop: set[str] = set()
    for total, parts in _GROUPS:
        members = [i for i in items if (i in parts if parts else _bar_mm(i) is not None)]
        if total not in qty:
            continue  # only the parts were measured: price them
        if total in table:
            drop.update(members)  # the total is priced: the parts are not
        elif any(m in table for m in members):
            drop.add(total)  # the parts are priced (an unrated part is listed unpriced)
        else:
            drop.update(members)  # nothing priced: one unpriced row for the total
    return [i for i in items if i not in drop]


def cost(quantities: Iterable[Quantity], rates: Iterable[Rate] | None) -> Cost:
    """Cost estimate: one row per priced item, ``amount = quantity x rate``.

    ``rates is None`` uses :data:`DEMO_RATES` (``demo_rates=True``: invented figures).
    Groups are priced once: concrete by ``concrete_total`` when it has a rate, else by
    ``concrete_stem/base/key``; steel by ``reinforcement_total`` when it has a rate,
    else by ``reinforcement_<mm>``. An item with no rate is a row with rate and amount
    None and makes the estimate incomplete (``complete=False``), never a silent zero;
    an unrated item of zero quantity needs no price and gets no row. ``total`` is the
    sum of the priced rows' amounts.
    """
    demo = rates is None
    table = _rate_table(DEMO_RATES if demo else rates)
    qs = list(quantities)
    qty = {q.item: float(q.quantity) for q in qs}
    unit = {q.item: q.unit or UNITS.get(q.item, "") for q in qs}
    items = sorted(qty, key=item_order)
    rows = []
    for item in _priced_items(items, qty, table):
        if item in table:
            rows.append(CostRow(item, unit[item], qty[item], table[item], qty[item] * table[item]))
        elif qty[item] != 0.0:
            rows.append(CostRow(item, unit[item], qty[item], None, None))
    total = math.fsum(r.amount for r in rows if r.amount is not None)
    complete = all(r.rate is not None for r in rows)
    return Cost(rows=tuple(rows), total=total, complete=complete, demo_rates=demo)


def section_type_rate(rates: Iterable[Rate] | None) -> float:
    """Rate of one section type (item ``section_type``, unit nr: the detailing, formwork
    set and cage jig each extra type costs), for the choice of a rationalised set: the
    table's, else the demo rate (design-basis section 6)."""
    return _search_rate(_rate_table(DEMO_RATES if rates is None else rates), "section_type")


def _search_rate(table: Mapping[str, float], item: str) -> float:
    """Rate for the sizing search: the table's, else the demo rate (ranking only)."""
    if item in table:
        return table[item]
    if item == "reinforcement_total":
        per_mm = [v for k, v in table.items() if _bar_mm(k) is not None]
        if per_mm:
            return float(np.mean(per_mm))
    return dict((r.item, r.rate) for r in DEMO_RATES)[item]


def cost_per_metre(sec: SectionArrays, stem_height_m, founding_depth_m, steel_kg_per_m,
                   rates: Iterable[Rate] | None, takeoff: Takeoff = Takeoff()) -> np.ndarray:
    """Cost of one metre of straight wall for n candidate sections, shape (n,).

    The same measurement rules as :func:`panel_quantities` for a straight panel whose
    stem (height ``stem_height_m`` from the top of the base, m) tapers over its whole
    height and whose underside of base is ``founding_depth_m`` (m) below the front
    level: concrete (stem, base, key), blinding, formwork of both stem faces and of the
    base edges and key faces, excavation and backfill, drainage layer and pipe,
    waterproofing (as ``takeoff`` switches them), and ``steel_kg_per_m`` (kg/m) of
    steel. Stop ends and joint seals are per panel, not per metre, and are left out.
    Groups are priced as in :func:`cost`. For the search only, an item without a rate
    takes the demo rate (the actual estimate lists it as unpriced). Arguments broadcast
    against the candidate arrays. Money per metre run.
    """
    table = _rate_table(DEMO_RATES if rates is None else rates)
    r = lambda item: _search_rate(table, item)  # noqa: E731
    hs = np.asarray(stem_height_m, dtype=float)
    D = np.asarray(founding_depth_m, dtype=float)
    t0, t1 = np.asarray(sec.stem_base_m, float), np.asarray(sec.stem_top_m, float)
    B, tb = np.asarray(sec.base_width_m, float), np.asarray(sec.base_thickness_m, float)
    has_key = (np.asarray(sec.key_depth_m, float) > 0) & (np.asarray(sec.key_width_m, float) > 0)
    dk = np.where(has_key, sec.key_depth_m, 0.0)
    wk = np.where(has_key, sec.key_width_m, 0.0)

    stem_a = 0.5 * (t0 + t1) * hs
    base_a = B * tb
    key_a = dk * wk
    if "concrete_total" in table:
        c = r("concrete_total") * (stem_a + base_a + key_a)
    else:
        c = r("concrete_stem") * stem_a + r("concrete_base") * base_a + r("concrete_key") * key_a
    back = np.sqrt(hs * hs + (t0 - t1) ** 2)  # true length of the tapered back face
    c = c + r("formwork_stem") * (hs + back)
    c = c + r("formwork_base") * (2.0 * tb + 2.0 * dk)
    c = c + r("blinding") * B
    Dp = np.maximum(D, 0.0)
    exc = (B + 2.0 * takeoff.working_space_m) * Dp + takeoff.excavation_side_slope * Dp ** 2 + key_a
    yf = np.clip(D - tb, 0.0, hs)  # stem height below the front level
    slope = np.where(hs > 0, (t0 - t1) / np.where(hs > 0, hs, 1.0), 0.0)
    inside = B * np.minimum(tb, Dp) + key_a + t0 * yf - 0.5 * slope * yf ** 2
    c = c + r("excavation") * exc + r("backfill") * np.maximum(exc - inside, 0.0)
    retained = np.maximum(hs + tb - D, 0.0)
    c = c + r("drainage_layer") * takeoff.drainage_layer_thickness_m * retained
    if takeoff.drain_pipe:
        c = c + r("drain_pipe")
    if takeoff.waterproofing:
        c = c + r("waterproofing") * back
    c = c + r("reinforcement_total") * np.asarray(steel_kg_per_m, dtype=float)
    return np.broadcast_to(c, np.broadcast_shapes(np.shape(c), np.shape(B))).astype(float)

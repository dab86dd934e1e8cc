"""Take-off and cost (design-basis section 7), checked against hand calculations set
out in the comments and against shapely polygon areas integrated numerically."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings, strategies as st
from shapely.geometry import Polygon

from wallrun.results import BarMark, Panel, Quantity
from wallrun.section import Section, SectionArrays
from wallrun.settings import Backfill, Foundation, Rate, Takeoff
from wallrun.takeoff import (DEMO_RATES, ITEMS, cost, cost_per_metre, panel_quantities,
                             totals, unit_of)

TK = Takeoff()  # working space 0.6, side slope 1.0, drainage 0.3, pipe and waterproofing on


def make_panel(name="P001", ch0=0.0, ch1=6.0, retained=103.4, front=101.0, found=100.0,
               top0=103.4, top1=103.4):
    return Panel(panel=name, run=1, side="fill", ch_start_m=ch0, ch_end_m=ch1,
                 retained_top_m=retained, front_min_m=front, founding_m=found,
                 wall_top_start_m=top0, wall_top_end_m=top1, foundation=Foundation(),
                 backfill=Backfill(), surcharge_kpa=10.0, water_level_m=None)


def bar(mm, number, length_mm, member="stem", mark="01"):
    # mass = pi/4 phi^2 x 7850 kg/m3 x total length (design-basis section 7)
    total_m = number * length_mm / 1000.0
    mass = math.pi / 4 * (mm / 1000.0) ** 2 * 7850.0 * total_m
    return BarMark("S01", member, mark, mm, "21", length_mm, number, total_m, mass)


STRAIGHT_SEC = Section(stem_top_m=0.25, stem_base_m=0.45, base_width_m=2.5, toe_m=0.6,
                       base_thickness_m=0.4, key_depth_m=0.3, key_width_m=0.4)
STRAIGHT = make_panel()
SLOPED_SEC = Section(stem_top_m=0.25, stem_base_m=0.45, base_width_m=2.4, toe_m=0.5,
                     base_thickness_m=0.35)
SLOPED = make_panel(name="P002", ch0=6.0, ch1=10.0, retained=52.35, front=50.95, found=50.0,
                    top0=51.85, top1=52.85)
BARS = [bar(16, 40, 3900, "stem", "01"), bar(12, 30, 2400, "heel", "02"),
        bar(12, 30, 2400, "toe", "03"), bar(10, 20, 5950, "base_distribution", "04")]


def test_straight_panel_by_hand():
    q = panel_quantities(STRAIGHT, STRAIGHT_SEC, BARS, TK, stop_ends=2, joint_seals=1)
    # Hand calculation. L = 6. Top of base z_b = 100.0 + 0.4 = 100.4; taper height
    # h_s = 103.4 - 100.4 = 3.0 = stem height y (stepped top at the retained level).
    # Stem area (0.45 + 0.25)/2 x 3.0 = 1.05 m2 -> 6.3 m3.
    assert q["concrete_stem"] == pytest.approx(6.3, rel=1e-12)
    # Base 2.5 x 0.4 x 6 = 6.0; key 0.3 x 0.4 x 6 = 0.72; total 13.02 m3.
    assert q["concrete_base"] == pytest.approx(6.0, rel=1e-12)
    assert q["concrete_key"] == pytest.approx(0.72, rel=1e-12)
    assert q["concrete_total"] == pytest.approx(13.02, rel=1e-12)
    # Blinding: plan area of the base 2.5 x 6 = 15 m2.
    assert q["blinding"] == pytest.approx(15.0, rel=1e-12)
    # Stem faces: front 3.0 x 6 = 18; back sqrt(3.0^2 + 0.2^2) = 3.0066593 x 6 = 18.039956.
    back = math.sqrt(9.04)
    assert q["formwork_stem"] == pytest.approx(18.0 + 6 * back, rel=1e-12)
    assert q["formwork_stem"] == pytest.approx(36.039956, abs=1e-5)
    # Base edges 2 x 0.4 x 6 = 4.8, key faces 2 x 0.3 x 6 = 3.6: 8.4 m2.
    assert q["formwork_base"] == pytest.approx(8.4, rel=1e-12)
    # Stop ends: 2 x (stem 1.05 + base 1.0 + key 0.12) = 4.34 m2.
    assert q["formwork_stop_ends"] == pytest.approx(4.34, rel=1e-12)
    # Excavation: D = 101.0 - 100.0 = 1.0; bottom width 2.5 + 2 x 0.6 = 3.7; batter 1:1:
    # 3.7 x 1.0 + 1.0 x 1.0^2 = 4.7 m2, + key trench 0.12 = 4.82 m2 -> 28.92 m3.
    assert q["excavation"] == pytest.approx(28.92, rel=1e-12)
    # Backfill: structure inside per metre: base 1.0 + key 0.12 + stem below the front
    # level (y = 101.0 - 100.4 = 0.6): 0.45 x 0.6 - 0.2 x 0.6^2 / (2 x 3) = 0.258;
    # (4.82 - 1.378) x 6 = 20.652 m3.
    assert q["backfill"] == pytest.approx(20.652, rel=1e-12)
    # Drainage 0.3 x (103.4 - 101.0) x 6 = 4.32 m3; pipe 6 m.
    assert q["drainage_layer"] == pytest.approx(4.32, rel=1e-12)
    assert q["drain_pipe"] == pytest.approx(6.0)
    # Joint seal at the end: front 3.0 + back 3.0066593 + top 0.25 = 6.2566593 m.
    assert q["joint_seal"] == pytest.approx(3.25 + back, rel=1e-12)
    # Waterproofing: back face below the retained level = 18.039956 m2.
    assert q["waterproofing"] == pytest.approx(6 * back, rel=1e-12)
    # Steel: 16 mm: 1.5783 kg/m (BS 8666 table 1.579 kg/m, from memory) x 40 x 3.9 m.
    assert q["reinforcement_16"] == pytest.approx(1.579 * 156.0, rel=1e-3)
    assert q["reinforcement_total"] == pytest.approx(sum(b.mass_kg for b in BARS), rel=1e-14)
    assert q["reinforcement_total"] == pytest.approx(
        q["reinforcement_10"] + q["reinforcement_12"] + q["reinforcement_16"], rel=1e-14)


def test_sloped_panel_by_hand():
    q = panel_quantities(SLOPED, SLOPED_SEC, [], TK, stop_ends=2, joint_seals=1)
    # Hand calculation. L = 4. z_b = 50.35; h_s = 52.35 - 50.35 = 2.0; stem height y
    # runs linearly from 51.85 - 50.35 = 1.5 to 52.85 - 50.35 = 2.5 along the panel.
    # A(y) = 0.45 y - 0.2 y^2 / (2 x 2) = 0.45 y - 0.05 y^2 for y <= 2; A(2) = 0.7;
    # A(y) = 0.7 + 0.25 (y - 2) above.
    # int_1.5^2 A dy = 0.225 (4 - 2.25) - 0.05/3 (8 - 3.375) = 0.39375 - 0.0770833 = 0.3166667
    # int_2^2.5 A dy = 0.7 x 0.5 + 0.25 x 0.5^2 / 2 = 0.38125
    # volume = L / (2.5 - 1.5) x 0.6979167 = 2.7916667 m3
    assert q["concrete_stem"] == pytest.approx(2.7916667, abs=1e-6)
    # Base 2.4 x 0.35 x 4 = 3.36; no key; total 6.1516667.
    assert q["concrete_base"] == pytest.approx(3.36, rel=1e-12)
    assert q["concrete_key"] == 0.0
    assert q["concrete_total"] == pytest.approx(6.1516667, abs=1e-6)
    assert q["blinding"] == pytest.approx(9.6, rel=1e-12)
    # Front face: mean height 2.0 x 4 = 8. Back face: k = sqrt(1 + (0.2/2)^2) = 1.0049876;
    # int (k min(y,2) + max(y-2,0)) dy over [1.5, 2.5] = k (0.875 + 1.0) + 0.125
    # = 2.0093517 -> x 4 = 8.0374067. Total 16.0374067 m2.
    k = math.sqrt(1.01)
    assert q["formwork_stem"] == pytest.approx(8.0 + 4 * (1.875 * k + 0.125), rel=1e-12)
    assert q["formwork_stem"] == pytest.approx(16.0374067, abs=1e-6)
    assert q["formwork_base"] == pytest.approx(2 * 0.35 * 4, rel=1e-12)
    # Stop ends: A(1.5) = 0.675 - 0.1125 = 0.5625; A(2.5) = 0.825; base 0.84 each: 3.0675.
    assert q["formwork_stop_ends"] == pytest.approx(3.0675, rel=1e-12)
    # Excavation: D = 0.95; 3.6 x 0.95 + 0.95^2 = 4.3225 m2 -> 17.29 m3.
    assert q["excavation"] == pytest.approx(17.29, rel=1e-12)
    # Backfill: base 0.84 + stem below front (y = 0.6): 0.27 - 0.018 = 0.252;
    # (4.3225 - 1.092) x 4 = 12.922 m3.
    assert q["backfill"] == pytest.approx(12.922, rel=1e-12)
    # Drainage 0.3 x 1.4 x 4 = 1.68 m3; pipe 4 m.
    assert q["drainage_layer"] == pytest.approx(1.68, rel=1e-12)
    assert q["drain_pipe"] == pytest.approx(4.0)
    # Joint seal at the end (y = 2.5): front 2.5 + back (2k + 0.5) + top 0.25 = 5.2599751.
    assert q["joint_seal"] == pytest.approx(2.5 + 2 * k + 0.5 + 0.25, rel=1e-12)
    # Waterproofing: k x 1.875 x 4 = 7.5374067 m2.
    assert q["waterproofing"] == pytest.approx(7.5 * k, rel=1e-12)
    assert q["reinforcement_total"] == 0.0


def _stem_polygon(sec: Section, hs: float, y: float) -> Polygon:
    """Stem cross-section from its outline (shapely), x from the front face."""
    if y <= hs:
        tb = sec.stem_base_m - (sec.stem_base_m - sec.stem_top_m) * y / hs
        return Polygon([(0, 0), (sec.stem_base_m, 0), (tb, y), (0, y)])
    return Polygon([(0, 0), (sec.stem_base_m, 0), (sec.stem_top_m, hs),
                    (sec.stem_top_m, y), (0, y)])


@settings(max_examples=30, deadline=None)
@given(t1=st.floats(0.15, 0.4), dt=st.floats(0.0, 0.3), hs=st.floats(0.8, 5.0),
       y0=st.floats(0.3, 6.0), y1=st.floats(0.3, 6.0), L=st.floats(1.0, 10.0))
def test_stem_volume_matches_shapely_integration(t1, dt, hs, y0, y1, L):
    sec = Section(stem_top_m=t1, stem_base_m=t1 + dt, base_width_m=3.0, toe_m=0.5,
                  base_thickness_m=0.4)
    p = make_panel(ch0=0.0, ch1=L, retained=100.4 + hs, front=100.8, found=100.0,
                   top0=100.4 + y0, top1=100.4 + y1)
    q = panel_quantities(p, sec, [], TK)
    # Trapezoidal rule over shapely areas at 801 stations: error O(1/n^2) of a
    # piecewise quadratic, well below the tolerance.
    s = np.linspace(0.0, 1.0, 801)
    areas = np.array([_stem_polygon(sec, hs, y0 + (y1 - y0) * si).area for si in s])
    ref = L * np.trapezoid(areas, s)
    assert q["concrete_stem"] == pytest.approx(ref, rel=2e-5)


def test_totals_are_the_sum_over_panels_in_item_order():
    a = panel_quantities(STRAIGHT, STRAIGHT_SEC, BARS, TK, joint_seals=1)
    b = panel_quantities(SLOPED, SLOPED_SEC, BARS[:2], TK, joint_seals=0)
    t = totals([a, b])
    items = [x.item for x in t]
    base = [i for i, _ in ITEMS]
    assert items[:len(base)] == base
    assert items[len(base):] == ["reinforcement_10", "reinforcement_12", "reinforcement_16"]
    for x in t:
        assert x.quantity == math.fsum([a.get(x.item, 0.0), b.get(x.item, 0.0)])
        assert x.unit == unit_of(x.item)
    d = {x.item: x for x in t}
    assert d["concrete_total"].unit == "m3" and d["blinding"].unit == "m2"
    assert d["joint_seal"].unit == "m" and d["reinforcement_12"].unit == "kg"
    # Last panel of a run has no joint seal.
    assert b["joint_seal"] == 0.0
    # Steel total equals the bar schedule (every bar row of both panels).
    assert d["reinforcement_total"].quantity == pytest.approx(
        sum(r.mass_kg for r in BARS + BARS[:2]), rel=1e-14)


def test_units_mapping():
    from wallrun.takeoff import UNITS
    assert UNITS["concrete_total"] == "m3" and UNITS.get("reinforcement_25") == "kg"
    assert UNITS.get("nonsense", "") == "" and "reinforcement_8" in UNITS
    # A Quantity without a unit is priced with the item's own unit.
    c = cost([Quantity("reinforcement_16", "", 10.0)], [Rate("reinforcement_16", "kg", 2.0)])
    assert c.rows[0].unit == "kg" and c.rows[0].amount == pytest.approx(20.0)


def test_switches_drop_items():
    q = panel_quantities(STRAIGHT, STRAIGHT_SEC, [], Takeoff(drain_pipe=False, waterproofing=False))
    assert "drain_pipe" not in q and "waterproofing" not in q


def test_bad_geometry_is_refused():
    with pytest.raises(ValueError, match="below the top of the base"):
        panel_quantities(make_panel(top0=100.2), STRAIGHT_SEC, [], TK)


def _q():
    return totals([panel_quantities(STRAIGHT, STRAIGHT_SEC, BARS, TK)])


def test_demo_cost_prices_every_item_once():
    c = cost(_q(), None)
    assert c.demo_rates and c.complete
    items = [r.item for r in c.rows]
    # Concrete priced by the total only; steel by the total only (no double counting).
    assert "concrete_total" in items and "concrete_stem" not in items
    assert "reinforcement_total" in items and "reinforcement_16" not in items
    assert c.total == pytest.approx(sum(r.amount for r in c.rows), rel=1e-14)
    demo = {r.item: r.rate for r in DEMO_RATES}
    for r in c.rows:
        assert r.amount == pytest.approx(r.quantity * demo[r.item], rel=1e-14)
    # Every item of the take-off has a demo rate.
    assert all(i in demo for i in (x.item for x in _q()))


def test_missing_rate_gives_unpriced_row_and_incomplete_total():
    rates = [r for r in DEMO_RATES if r.item != "joint_seal"]
    c = cost(_q(), rates)
    assert not c.complete and not c.demo_rates
    row = next(r for r in c.rows if r.item == "joint_seal")
    assert row.rate is None and row.amount is None and row.quantity > 0
    assert c.total == pytest.approx(sum(r.amount for r in c.rows if r.amount is not None))


def test_parts_priced_when_the_total_has_no_rate():
    rates = [Rate("concrete_stem", "m3", 200.0), Rate("concrete_base", "m3", 150.0),
             Rate("reinforcement_16", "kg", 1.0), Rate("reinforcement_12", "kg", 1.2)]
    c = cost(_q(), rates)
    rows = {r.item: r for r in c.rows}
    assert "concrete_total" not in rows and "reinforcement_total" not in rows
    assert rows["concrete_stem"].amount == pytest.approx(6.3 * 200.0)
    assert rows["concrete_key"].rate is None  # key concrete has no rate: unpriced
    assert rows["reinforcement_10"].rate is None
    assert not c.complete


def test_no_rate_at_all_lists_group_totals_unpriced():
    c = cost(_q(), [])
    items = [r.item for r in c.rows]
    assert "concrete_total" in items and "concrete_stem" not in items
    assert "reinforcement_total" in items and "reinforcement_12" not in items
    assert c.total == 0.0 and not c.complete
    assert all(r.rate is None and r.amount is None for r in c.rows)


def test_cost_per_metre_matches_one_metre_panel():
    secs = [STRAIGHT_SEC, SLOPED_SEC,
            Section(0.3, 0.3, 3.2, 0.9, 0.5, 0.0, 0.0)]
    arr = SectionArrays.of(secs)
    hs = np.array([3.0, 2.4, 4.1])
    D = np.array([1.0, 0.8, 1.25])
    steel = np.array([95.0, 60.0, 130.0])
    for rates in (None, [r for r in DEMO_RATES if r.item != "concrete_total"]):
        got = cost_per_metre(arr, hs, D, steel, rates)
        assert got.shape == (3,)
        for i, sec in enumerate(secs):
            found = 10.0
            zb = found + sec.base_thickness_m
            p = make_panel(ch0=0.0, ch1=1.0, retained=zb + hs[i], front=found + D[i],
                           found=found, top0=zb + hs[i], top1=zb + hs[i])
            q = panel_quantities(p, sec, [], TK, stop_ends=0, joint_seals=0)
            q["reinforcement_total"] = steel[i]
            c = cost(totals([q]), rates)
            assert got[i] == pytest.approx(c.total, rel=1e-12)


def test_straight_panel_concrete_and_stop_end_from_the_outline():
    # Whole cross-section of the straight panel drawn as one outline (x from the toe
    # edge, z from the underside of the base): base 2.5 x 0.4, key 0.4 wide x 0.3 deep
    # under the stem front face (x = 0.6), stem 0.45 -> 0.25 over 3.0.
    outline = Polygon([(0, 0), (0.6, 0), (0.6, -0.3), (1.0, -0.3), (1.0, 0), (2.5, 0),
                       (2.5, 0.4), (1.05, 0.4), (0.85, 3.4), (0.6, 3.4), (0.6, 0.4),
                       (0, 0.4)])
    assert outline.is_valid
    q = panel_quantities(STRAIGHT, STRAIGHT_SEC, [], TK)
    assert q["concrete_total"] == pytest.approx(outline.area * STRAIGHT.length_m, rel=1e-12)
    assert q["formwork_stop_ends"] == pytest.approx(2 * outline.area, rel=1e-12)
    # Stem faces from the outline's boundary: front (0.6,0.4)-(0.6,3.4), back
    # (1.05,0.4)-(0.85,3.4).
    from shapely.geometry import LineString
    faces = LineString([(0.6, 0.4), (0.6, 3.4)]).length + LineString([(1.05, 0.4), (0.85, 3.4)]).length
    assert q["formwork_stem"] == pytest.approx(faces * STRAIGHT.length_m, rel=1e-12)


def test_steel_total_equals_the_bar_schedule_mass():
    # the take-off's steel is the sum of the panels' bar rows, and the BS 8666 schedule
    # merges the same rows: its mass is the same total (two panels of one type, one of
    # another, with starters, bent base bars and restraint-sized distribution bars)
    from wallrun import bars
    from wallrun.factors import resolve
    from wallrun.results import BarSet, Reinforcement
    from wallrun.settings import Basis

    basis = Basis(factors=resolve("DA1"))
    b = lambda p, s, **kw: BarSet(p, s, 0.0, 0.0, 0.0, **kw)  # noqa: E731
    r = Reinforcement(stem=b(16, 150), heel=b(12, 150, bend_r_mm=30.0, far_bend_r_mm=24.0),
                      toe=b(12, 200), stem_horizontal=b(20, 125), base_distribution=b(20, 100),
                      stem_front=b(10, 200))
    panels = [make_panel("P001", 0.0, 6.0), make_panel("P002", 6.0, 12.0),
              make_panel("P003", 12.0, 16.5)]
    rows = [bars.panel_bars("S01" if k < 2 else "S02", STRAIGHT_SEC, r, p, basis)
            for k, p in enumerate(panels)]
    per_panel = [panel_quantities(p, STRAIGHT_SEC, rs, TK) for p, rs in zip(panels, rows)]
    total = {q.item: q.quantity for q in totals(per_panel)}
    sched = bars.schedule([x for rs in rows for x in rs])
    assert math.fsum(x.mass_kg for x in sched) == pytest.approx(total["reinforcement_total"], rel=1e-12)
    for mm in {x.bar_mm for x in sched}:
        assert math.fsum(x.mass_kg for x in sched if x.bar_mm == mm) == pytest.approx(
            total[f"reinforcement_{mm}"], rel=1e-12)
    # by hand for one mark: the heel U-bars (shape 21, r 30): legs 400 - 50 - 75 = 275,
    # width 2500 - 100 = 2400: 275 + 2400 + 275 - 30 - 24 = 2896 -> 2900 mm; 6.0 m panels
    # floor(5900/150) + 1 = 40 bars each, 4.5 m: 30; 0.888 kg/m (BS 8666 Table 1, H12)
    heel = [x for x in sched if x.part == "heel"]
    assert {(x.section, x.length_mm, x.no_of_members, x.no_in_each) for x in heel} == {
        ("S01", 2900, 2, 40), ("S02", 2900, 1, 30)}
    assert sum(x.mass_kg for x in heel) == pytest.approx(0.888 * 2.9 * 110, rel=1e-3)

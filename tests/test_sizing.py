"""Tests of wallrun.sizing: conditions, grid, evaluation, the bespoke search against the
exhaustive reference, purity, the catalogue choice.

The reference for the search is ``search.cheapest_on_grid``, which checks every
candidate of the grid (shown equal to checking literally every one with ``every=True``);
the search must land within 0.5 % of it and never more than 0.5 % below (issue: one
design engine). All example data are invented.
"""

from __future__ import annotations

import itertools
import math
import threading

import numpy as np
import pytest

from wallrun.factors import resolve
from wallrun.section import Section, SectionArrays, section_problems
from wallrun.settings import Backfill, Basis, CatalogueSection, Design, Foundation, Water
from wallrun.sizing import Costing, Demand, bespoke, cheapest_on_grid
from wallrun.sizing import catalogue as cat_mod
from wallrun.sizing import evaluate as ev_
from wallrun.sizing import search
from wallrun.sizing.conditions import Rows, conditions_of, founding_level
from wallrun.sizing.grid import NDIM, TB, codes, grid_for

BASIS = Basis(factors=resolve("DA1"))
COARSE = Basis(factors=resolve("DA1"), design=Design(dimension_step_m=0.1))
STRUCTURAL = {"stem_bending", "stem_shear", "heel_bending", "heel_shear", "toe_bending",
              "toe_shear", "crack_spacing", "min_steel", "restraint_steel", "bar_bend"}


def demand(h, z_front=40.0, water=None, foundation=Foundation(), surcharge=10.0,
           backfill=Backfill(), **kw):
    return Demand(z_top=z_front + h, z_front=z_front, backfill=backfill,
                  foundation=foundation, surcharge_kpa=surcharge, water=water,
                  wall_top_m=z_front + h, **kw)


# --- conditions -------------------------------------------------------------------------

def test_conditions_founding_and_water():
    # z_front = 40.07, min depth 0.6, step 0.15: t_base 0.3 -> 40.07 - 0.6 = 39.47 -> 39.45;
    # t_base 0.8 -> 39.27 -> 39.15 (hand calculation of design-basis section 1)
    d = demand(2.0, z_front=40.07, water=Water(height_above_base_m=0.5))
    c = conditions_of(np.array([0.3, 0.8]), Rows.of([d], [2]), d)
    assert np.allclose(c.z_found, [39.45, 39.15])
    assert np.allclose(c.water_level_m, [39.95, 39.65])
    d2 = demand(2.0, water=Water(level_m=40.5))
    c2 = conditions_of(np.array([0.4]), Rows.of([d2], [1]), d2)
    assert c2.water_level_m == 40.5 and math.isclose(float(c2.z_found[0]), 39.3)
    # a joint cure lowers the founding level by whole founding steps
    d3 = demand(2.0, z_front=40.07, extra_depth_m=0.3)
    assert math.isclose(float(founding_level(d3, 0.3)), 39.15)
    assert hash(d) == hash(demand(2.0, z_front=40.07, water=Water(height_above_base_m=0.5)))


# --- grid --------------------------------------------------------------------------------

def test_grid_candidates_close_and_codes_are_unique():
    g = grid_for(demand(2.5), 0.1)
    v = g.every()
    assert len(v) > 1000 and v.shape[1] == NDIM
    assert not section_problems(g.sections(v)).any()
    assert len(np.unique(codes(v))) == len(v)
    s = g.sections(v)
    assert np.all(s.stem_top_m >= 0.25 - 1e-9) and np.all(s.base_thickness_m >= 0.30 - 1e-9)
    assert np.all(s.base_thickness_m >= s.stem_base_m - 1e-9)
    # the vector of a section is its own
    i = len(v) // 3
    assert np.array_equal(g.vector_of(s.take(i)), v[i])


def test_codes_pack_each_entry_in_its_bits():
    # the code of a vector is its entries written one after the other in 12, 12, 10,
    # 10, 9, 5 and 5 bits (as a plain loop over the entries packs them), entries held
    # within 0 and their bits' largest
    from wallrun.sizing.grid import _BITS
    rng = np.random.default_rng(3)
    v = np.vstack([rng.integers(0, 40, size=(5000, NDIM)),
                   [[-3, 5000, 2, 1, 0, 40, 1]]])
    expect = []
    for row in v.tolist():
        c = 0
        for e, bits in zip(row, _BITS):
            c = (c << bits) | min(max(e, 0), (1 << bits) - 1)
        expect.append(c)
    assert codes(v).tolist() == expect


def test_validity_of_entries_beyond_32_bits():
    # valid_rows reads int32 columns: an entry 2**32 away from a valid one (which a
    # plain cast would wrap onto it) or beyond the int32 range never passes
    g = grid_for(demand(2.5), 0.1)
    v = g.every()[::97]
    assert g.valid(v).all()
    for k in range(NDIM):
        for shift in (2 ** 32, -2 ** 32, 2 ** 31, -2 ** 31 - 1, 2 ** 40):
            w = v.copy()
            w[:, k] += shift
            assert not g.valid(w).any(), (k, shift)


def _valid_plain(g, v) -> bool:
    """The grid's closure rules for one integer candidate, read one by one from
    ``Grid``'s docstring (the plain reference of ``grid.valid_rows``)."""
    b, toe, tb, ts, tt, kd, kw = (int(x) for x in v)
    if not (g.b[0] <= b <= g.b[1] and g.tb[0] <= tb <= g.tb[1] and g.ts[0] <= ts <= g.ts[1]
            and g.tt[0] <= tt <= g.tt[1]):
        return False
    if toe < 0 or tt > ts or tb < ts or b - toe - ts < 1 or (g.toe_half and 2 * toe > b):
        return False
    if kd == 0:
        return kw == 0
    if not (0 < kd <= len(g.key_depths)) or not (0 <= kw < max(len(g.key_widths), 1)):
        return False
    w = g.key_widths[kw] if g.key_widths else 0.0
    return toe * g.step + w <= b * g.step + 1e-9


def test_validity_is_that_of_the_rules_one_by_one():
    # random vectors about a grid with keys (keyed ones among them) against the rules
    # read one at a time
    rng = np.random.default_rng(5)
    for toe_half in (False, True):
        g = grid_for(demand(2.5), 0.1)
        g = type(g)(**{**g.__dict__, "toe_half": toe_half,
                       "key_depths": (0.3, 0.45), "key_widths": (0.3, 0.5)})
        lo = np.array([g.b[0] - 2, -2, g.tb[0] - 2, g.ts[0] - 2, g.tt[0] - 2, -1, -1])
        hi = np.array([g.b[1] + 2, g.b[1], g.tb[1] + 2, g.ts[1] + 2, g.tt[1] + 2, 3, 3])
        near = g.every(2)  # valid ones, one entry moved by -2..2, keys drawn anew
        near = near[rng.integers(0, len(near), 6000)]
        near[np.arange(len(near)), rng.integers(0, 5, len(near))] += rng.integers(-2, 3, len(near))
        near[:, 5:] = rng.integers(-1, 4, size=(len(near), 2))
        v = np.vstack([rng.integers(lo, hi + 1, size=(6000, NDIM)), near])
        want = np.array([_valid_plain(g, x) for x in v])
        assert want.sum() > 50 and (want & (v[:, 5] > 0)).sum() > 20
        assert np.array_equal(g.valid(v), want)
        # the key rule alone (the search's filter of a keyed neighbourhood): the plain
        # rule's key part, whatever the other entries
        keys = np.array([kd == kw == 0 or (0 < kd <= len(g.key_depths)
                                           and 0 <= kw < max(len(g.key_widths), 1))
                         for kd, kw in v[:, 5:].tolist()])
        assert 0 < keys.sum() < len(v)
        assert np.array_equal(g.keys_listed(v), keys)
        assert not np.any(g.valid(v) & ~g.keys_listed(v))


def test_every_is_each_valid_combination_of_the_axes():
    # Grid.every (whole, and at strides) is every combination of its axes' values
    # (itertools.product, the first entry outermost) that keeps the rules read one by
    # one (_valid_plain), in that order; with keys, and with and without the toe bound
    for toe_half in (True, False):
        g = grid_for(demand(1.2), 0.1)
        g = type(g)(**{**g.__dict__, "toe_half": toe_half,
                       "key_depths": (0.3, 0.45), "key_widths": (0.3, 0.5)})
        for stride in (1, 2, (3, 2, 1, 2, 1)):
            axes = g.axes()
            strides = (stride,) * 5 if isinstance(stride, int) else stride
            for k in range(5):
                if strides[k] > 1:
                    a = axes[k][::strides[k]]
                    axes[k] = a if a[-1] == axes[k][-1] else np.append(a, axes[k][-1])
            want = [v for v in itertools.product(*axes) if _valid_plain(g, v)]
            assert len(want) > 100
            assert g.every(stride).tolist() == [list(v) for v in want], (toe_half, stride)


def test_every_candidate_comes_once_in_code_order():
    # Grid.every gives codes increasing, as Store.unchecked takes them; on a store
    # holding some of them, unchecked equals fresh
    g = grid_for(demand(2.5), 0.1)
    for stride in (1, 3, g.coarse_strides((17, 8, 5, 5, 2))):
        v = g.every(stride)
        assert np.all(np.diff(codes(v)) > 0)
        st = search.Store(g)
        for a, b in zip(st.unchecked(v), st.fresh(v)):
            assert np.array_equal(a, b)
        some = v[::7]
        c = codes(some)
        st.commit(some, c, np.zeros(len(c), dtype=bool), np.full(len(c), np.nan),
                  np.ones(len(c)))
        for a, b in zip(st.unchecked(v), st.fresh(v)):
            assert np.array_equal(a, b)
        assert len(st.unchecked(v)[0]) == len(v) - len(some)


def test_grid_bounds_move_where_the_best_sits_on_them():
    g = grid_for(demand(2.5), 0.05)
    top = np.array([g.b[1], 0, g.tb[1], g.ts[1], g.tt[1], 0, 0])
    names = set(g.binding(top))
    assert {"b_hi", "tb_hi", "ts_hi", "tt_hi"} <= names
    w = g.widened(names)
    assert w.b[1] > g.b[1] and w.tb[1] > g.tb[1] and w.ts[1] > g.ts[1]
    assert w.tt[1] == w.ts[1]
    # the minimum sizes are settings, never moved
    assert w.ts[0] == g.ts[0] and w.tb[0] == g.tb[0]


def test_minimum_sizes_are_settings():
    b = Basis(factors=resolve("DA1"), design=Design(min_stem_m=0.30, min_base_m=0.40))
    sd = bespoke([demand(1.2)], b, Costing(), 0.05)[0]
    assert sd.status == "ok"
    assert sd.section.stem_top_m >= 0.30 - 1e-9 and sd.section.base_thickness_m >= 0.40 - 1e-9


# --- the search against the exhaustive reference ------------------------------------------

def test_exhaustive_reference_stops_only_where_nothing_cheaper_is_left():
    # checking literally every candidate gives the same section and cost
    d = demand(1.5)
    a = cheapest_on_grid(d, COARSE, Costing(), 0.1)
    b = cheapest_on_grid(d, COARSE, Costing(), 0.1, every=True)
    assert a[0] == b[0] and a[1] == pytest.approx(b[1], rel=1e-12)


def _tall_clay(z_top: float, z_front: float) -> Demand:
    """A panel of the invented fill wall over undrained clay of
    ``benchmarks/sites/tall-clay`` (cu 70 kPa, allowable 160 kPa; DA1), its wall top at
    30.9 m."""
    return Demand(z_top=z_top, z_front=z_front,
                  backfill=Backfill(unit_weight_kn_m3=19.5, friction_angle_deg=34.0),
                  foundation=Foundation(unit_weight_kn_m3=18.0, friction_angle_deg=24.0,
                                        cohesion_kpa=4.0, undrained_strength_kpa=70.0,
                                        allowable_bearing_kpa=160.0),
                  surcharge_kpa=10.0, water=None, wall_top_m=30.9,
                  min_founding_depth_m=0.8, founding_step_m=0.15)


def _search_and_reference(d: Demand, basis: Basis, step: float = 0.05):
    """The search's design of ``d`` and the cheapest passing cost of its whole grid (the
    exhaustive reference)."""
    sd = bespoke([d], basis, Costing(), step)[0]
    ref, ref_cost = cheapest_on_grid(d, basis, Costing(), step)
    assert sd.status == "ok" and ref is not None
    return sd, ref_cost


def _search_and_part_reference(d: Demand, widths: tuple[int, int], basis: Basis = BASIS,
                               step: float = 0.05, moved: tuple[str, ...] = ()):
    """The search's design of ``d`` on a grid of ``step`` (m), and the cheapest passing
    section of the part of its grid with base widths ``widths`` (in steps), the bounds
    named in ``moved`` moved as ``Grid.widened`` moves them, and its cost."""
    from dataclasses import replace as _replace

    from wallrun.sizing.grid import grid_for
    sd = bespoke([d], basis, Costing(), step)[0]
    part = _replace(grid_for(d, step, basis.design).widened(moved), b=widths)
    ref, ref_cost = cheapest_on_grid(d, basis, Costing(), step, grid=part, widen=False)
    assert sd.status == "ok" and ref is not None
    return sd, ref_cost


def test_search_on_a_tall_wall_over_undrained_clay():
    # A 5.3 m panel of the fill wall over undrained clay (found by a review). Passing
    # sections of a thin base once formed islands one toe length wide, where the bars
    # chosen for the toe and heel failed their bends; the search ended 0.98 % above the
    # grid's cheapest before the toe lines (search.toe_lines). With the heel and toe bars
    # chosen to bend within the base (structure.base_bar_limit) the grid's cheapest is
    # B 4.85, toe 1.30, base 0.35, stem 0.35 at 2647.33 a metre. The reference is taken
    # on base widths 4.85 to 5.05 m: the whole grid's (125 s) gives the same section.
    sd, ref_cost = _search_and_part_reference(_tall_clay(30.876924, 25.576923), (97, 101))
    assert ref_cost == pytest.approx(2647.333, abs=0.01)
    assert sd.cost_per_m <= ref_cost * 1.005, (sd.cost_per_m, ref_cost)


def test_search_where_the_taller_references_section_fails():
    # A 5.25 m panel of the same wall (P006), its wall top 0.115 m above the retained
    # level. The section of its taller reference (wall top at the retained level) fails
    # here, and the descent from it once settled 0.95 % above the grid's cheapest; the
    # second descent, from the lower reference's section, found it. The grid's cheapest
    # is now B 4.85, toe 1.25, base 0.35, stem 0.35 at 2707.14 a metre (bars that bend
    # within the base). The reference is taken on base widths 4.75 to 4.90 m: the whole
    # grid's (209 s) gives the same section.
    sd, ref_cost = _search_and_part_reference(_tall_clay(30.784616, 25.538461), (95, 98))
    assert ref_cost == pytest.approx(2707.139, abs=0.01)
    assert sd.cost_per_m <= ref_cost * 1.005, (sd.cost_per_m, ref_cost)


def test_search_planes_on_a_tall_wall_of_the_benchmark():
    # A 5.08 m panel of the benchmark's synthetic 10 km wall (drained ground, DA1, 5 cm
    # grid), its wall top 0.14 m above the retained level. Single steps, the jumps and
    # the toe lines once settled 3.1 % above the grid's cheapest, and the planes after
    # the search reached it. With bars that bend within the base, the grid's cheapest is
    # B 4.25, toe 1.35, base 0.30, stem 0.30 at 2226.19 a metre. The reference is taken
    # on base widths 4.20 to 4.30 m: the whole grid's (91 s) gives the same section.
    d = Demand(z_top=69.76, z_front=64.679, backfill=Backfill(), foundation=Foundation(),
               surcharge_kpa=10.0, water=None, wall_top_m=69.9, min_founding_depth_m=0.6,
               founding_step_m=0.15)
    sd, ref_cost = _search_and_part_reference(d, (84, 86))
    assert ref_cost == pytest.approx(2226.186, abs=0.01)
    assert sd.cost_per_m <= ref_cost * 1.005, (sd.cost_per_m, ref_cost)


def test_search_on_a_tall_wall_over_wet_low_friction_ground():
    # A 6.98 m panel of an invented wall over wet, low-friction ground (DA2; backfill
    # 20 kN/m3, 30 degrees; base 19 kN/m3, 23 degrees, c' 2 kPa; water 1.8 m above the
    # base; surcharge 25 kPa; 5 cm grid). Its taller reference's section fails here;
    # following the least utilization from it once grew every dimension and settled
    # 11.8 % above the grid's cheapest (weighing overstress against cost,
    # search.OVERSTRESS_WEIGHT, mended it). With bars that carry the base's shear and
    # bend within it, the grid's cheapest is B 11.40 (the grid's bound of 1.5 H: the
    # search and the reference widen it, and it stays), toe 0.90, base 0.55, stem 0.55
    # at 5661.35 a metre. The reference is taken on the 11.40 m base width alone: the
    # whole grid's (33 minutes) gives the same section.
    from wallrun.settings import Loads
    basis = Basis(factors=resolve("DA2"), design=Design(approach="DA2"),
                  loads=Loads(surcharge_kpa=25.0))
    d = Demand(z_top=66.741215, z_front=59.758325,
               backfill=Backfill(unit_weight_kn_m3=20.0, friction_angle_deg=30.0),
               foundation=Foundation(unit_weight_kn_m3=19.0, friction_angle_deg=23.0,
                                     cohesion_kpa=2.0),
               surcharge_kpa=25.0, water=Water(height_above_base_m=1.8), wall_top_m=66.75,
               min_founding_depth_m=0.6, founding_step_m=0.15)
    sd, ref_cost = _search_and_part_reference(d, (228, 228), basis)
    assert ref_cost == pytest.approx(5661.352, abs=0.01)
    assert sd.cost_per_m <= ref_cost * 1.005, (sd.cost_per_m, ref_cost)


def _at_part_reference_on_weak_ground(d: Demand, width: int, basis: Basis,
                                      ref_cost_expected: float, step: float = 0.05,
                                      moved: tuple[str, ...] = ()) -> None:
    """The search's design of the weak-ground demand ``d`` (its base at least
    ``search.far_from``) costs within 0.5 % of the cheapest passing section of the
    part of its grid (``step``, m; the bounds ``moved`` moved) of one base width
    ``width`` (steps), which costs ``ref_cost_expected``."""
    sd, ref_cost = _search_and_part_reference(d, (width, width), basis, step, moved)
    assert ref_cost == pytest.approx(ref_cost_expected, abs=0.01)
    assert sd.section.base_width_m >= search.far_from(d)
    assert ref_cost * 0.995 <= sd.cost_per_m <= ref_cost * 1.005, (sd.cost_per_m, ref_cost)


def test_search_looks_further_on_weak_ground():
    # A 6.14 m panel of an invented wall (DA2; backfill 20.9 kN/m3, 29 degrees under a
    # 16 degree slope; base 18.9 kN/m3, 33 degrees, c' 0; water 1.88 m above the base;
    # surcharge 15 kPa; 5 cm grid), found by a sample of invented walls. Its base is as
    # wide as the wall is high (search.FAR_FROM): the moves of firm ground
    # (search.NEAR) settled 0.88 % above the grid's cheapest, at B 7.10, toe 2.55, base
    # 0.55, stem 0.55 to 0.30 (4409.78 a metre). The grid's cheapest is B 7.10, toe
    # 1.10, base 0.70, stem 0.55 to 0.25 at 4371.28 a metre; the reference is taken on
    # the 7.10 m base width alone: the whole grid's (233 s) gives the same section.
    basis = Basis(factors=resolve("DA2"), design=Design(approach="DA2"))
    d = Demand(z_top=61.184, z_front=55.04,
               backfill=Backfill(unit_weight_kn_m3=20.9, friction_angle_deg=29.0,
                                 slope_deg=16.0),
               foundation=Foundation(unit_weight_kn_m3=18.9, friction_angle_deg=33.0),
               surcharge_kpa=15.0, water=Water(height_above_base_m=1.88), wall_top_m=61.2,
               min_founding_depth_m=0.6, founding_step_m=0.15)
    _at_part_reference_on_weak_ground(d, 142, basis, 4371.278)


def test_search_finds_a_basin_one_base_thickness_wide():
    # A 2.77 m panel of invented ground (DA3; backfill 20.9 kN/m3, 35 degrees under an
    # 18 degree slope; base 17.8 kN/m3, 25 degrees, c' 3 kPa; water 0.43 m above the
    # base; surcharge 20 kPa; wall top 0.2 m above the retained level; 5 cm grid),
    # drawn by benchmarks/optimality.py --seed 191. Bearing governs: at widths of 6.40
    # to 6.55 m only a 0.55 m base passes below 2460 a metre (a 0.60 m one adds its
    # weight at the same founding level, 0.65 m down; a 0.50 m one founds 0.5 m down,
    # on less overburden), between the base thicknesses of the
    # cold start's coarse grid; the search ended at B 5.85, base 0.70 (2460.42 a
    # metre), 5.5 % above the grid's cheapest. The cold start after a far-looking
    # search takes about every base thickness (search.FAR_COARSE) and finds it: B 6.50,
    # toe 0.20, base 0.55, stem 0.30 at 2331.85 a metre. The reference is taken on the
    # 6.50 m base width alone: the whole grid's (57 s) gives the same section.
    basis = Basis(factors=resolve("DA3"), design=Design(approach="DA3"))
    d = Demand(z_top=52.77, z_front=50.0,
               backfill=Backfill(unit_weight_kn_m3=20.9, friction_angle_deg=35.0,
                                 slope_deg=18.0),
               foundation=Foundation(unit_weight_kn_m3=17.8, friction_angle_deg=25.0,
                                     cohesion_kpa=3.0),
               surcharge_kpa=20.0, water=Water(height_above_base_m=0.43), wall_top_m=52.97,
               min_founding_depth_m=0.5, founding_step_m=0.15)
    _at_part_reference_on_weak_ground(d, 130, basis, 2331.850)


def _low_weak_panel() -> tuple[Basis, Demand]:
    """A 1.19 m panel of an invented wall (DA3; backfill 18.5 kN/m3, 28 degrees under a
    16 degree slope; base 17.8 kN/m3, 34 degrees, c' 5 kPa, cu 68 kPa; surcharge 15
    kPa; 5 cm grid) on a base nearly three times its height to the underside: weak
    ground (search.FAR)."""
    basis = Basis(factors=resolve("DA3"), design=Design(approach="DA3"))
    d = Demand(z_top=61.824, z_front=60.63,
               backfill=Backfill(unit_weight_kn_m3=18.5, friction_angle_deg=28.0,
                                 slope_deg=16.0),
               foundation=Foundation(unit_weight_kn_m3=17.8, friction_angle_deg=34.0,
                                     cohesion_kpa=5.0, undrained_strength_kpa=68.0),
               surcharge_kpa=15.0, water=None, wall_top_m=61.95, min_founding_depth_m=0.6,
               founding_step_m=0.15)
    return basis, d


def test_search_starts_cold_again_on_weak_ground():
    # The panel of _low_weak_panel. Its references' basin held a 0.30 m stem on a 3.25 m
    # base at 909.67 a metre, 2.12 % above the grid's cheapest; the cold start after its
    # search (search.far_cold_moves) finds the cheapest, a 0.25 m stem and a 0.30 m base
    # 3.35 m wide with a 0.15 m toe at 890.75 a metre (the exhaustive reference, whole
    # grid).
    basis, d = _low_weak_panel()
    sd, ref_cost = _search_and_reference(d, basis)
    assert ref_cost == pytest.approx(890.751, abs=0.01)
    assert sd.section.base_width_m >= search.far_from(d)
    assert ref_cost * 0.995 <= sd.cost_per_m <= ref_cost * 1.005, (sd.cost_per_m, ref_cost)


def test_search_descends_each_basin_on_weak_ground():
    # A 3.45 m panel of invented ground (DA2; backfill 19.6 kN/m3, 37 degrees under a 10
    # degree slope; base 17.9 kN/m3, 22 degrees; water 0.97 m above the base; surcharge
    # 20 kPa; 5 cm grid) on a base about twice its height to the underside: weak ground
    # (search.FAR). Without the basin descents the search settled on a keyed 0.90 m base
    # 8.05 m wide at 3903.59 a metre (measured with BASIN_SPAN = 0: 39.6 % above the
    # reference), and a descent from a cheaper start went back to that best after its
    # first neighbourhood. A descent that follows its
    # own path from each basin class (search.basin_starts, descent(own=True)) reaches
    # a 0.35 m base 9.40 m wide with a 0.30 m toe and no key at 2796.91 a metre. The
    # reference is taken on the 9.40 m width alone: the whole grid's (188 s) gives the
    # same section.
    basis = Basis(factors=resolve("DA2"), design=Design(approach="DA2"))
    d = Demand(z_top=66.112, z_front=62.662,
               backfill=Backfill(unit_weight_kn_m3=19.6, friction_angle_deg=37.0,
                                 slope_deg=10.0),
               foundation=Foundation(unit_weight_kn_m3=17.9, friction_angle_deg=22.0),
               surcharge_kpa=20.0, water=Water(height_above_base_m=0.97), wall_top_m=66.15,
               min_founding_depth_m=0.6, founding_step_m=0.15)
    _at_part_reference_on_weak_ground(d, 188, basis, 2796.905)


def test_search_descends_the_basins_its_references_descended():
    # A 6.77 m panel of an invented wall (DA2; backfill 18.8 kN/m3, 34 degrees under a
    # 16 degree slope; base 17.4 kN/m3, 27 degrees, c' 5 kPa, cu 61 kPa; surcharge 5 kPa;
    # 10 cm grid) on a base wider than the wall is high: weak ground (search.FAR). Its
    # own starts, basin classes and late rounds settled at B 8.80, toe 4.90, base 0.60,
    # stem 0.50 to 0.30 (4743.21 a metre, 1.10 % above the cheapest below). Its
    # references' searches, each followed by a descent from every basin class within
    # search.REF_BASIN_SPAN of its best, hand it those basins' cheapest, and a descent
    # from them reaches B 8.90, toe 5.00, base 0.50, stem 0.50 whole (4691.76 a metre):
    # a toe beyond half the base, and a stem top thicker than its first bound, both
    # moved as the search moves a bound its best sits on. The reference is taken on the
    # 8.90 m width alone with those two bounds moved: the whole grid's, widened as the
    # search widens it (35 s), gives the same section.
    basis = Basis(factors=resolve("DA2"), design=Design(approach="DA2",
                                                        dimension_step_m=0.1))
    d = Demand(z_top=72.416, z_front=65.645,
               backfill=Backfill(unit_weight_kn_m3=18.8, friction_angle_deg=34.0,
                                 slope_deg=16.0),
               foundation=Foundation(unit_weight_kn_m3=17.4, friction_angle_deg=27.0,
                                     cohesion_kpa=5.0, undrained_strength_kpa=61.0),
               surcharge_kpa=5.0, water=None, wall_top_m=72.45, min_founding_depth_m=0.6,
               founding_step_m=0.15)
    _at_part_reference_on_weak_ground(d, 89, basis, 4691.757, step=0.1,
                                      moved=("tt_hi", "toe_hi"))


def test_search_descends_the_basins_its_later_moves_reach():
    # A 5.08 m panel of an invented wall (DA3; backfill 20.6 kN/m3, 36 degrees under a
    # 20 degree slope; base 19.6 kN/m3, 22 degrees, c' 0; surcharge 5 kPa; wall top
    # 0.14 m above the retained level; 5 cm grid) on a base about twice its height to
    # the underside: weak ground (search.FAR). Its search settled at B 10.05, toe 0,
    # base 0.70, stem 0.30 to 0.25 (4720.2 a metre, 1.03 % above the cheapest below).
    # Its second descent reached a 0.55 m base 10.95 m wide, 2.7 % dearer than that
    # best, and stopped there; a descent that follows its own path from there (a late
    # round of search.basin_moves) takes its jumps to a base 0.40 m wider again, and
    # reaches B 11.35, toe 0.95, base 0.55, stem 0.30 to 0.25 at 4672.07 a metre. The
    # reference is taken on the 11.35 m base width alone: the whole grid's (174 s)
    # gives the same section.
    basis = Basis(factors=resolve("DA3"), design=Design(approach="DA3"))
    d = Demand(z_top=69.76, z_front=64.679,
               backfill=Backfill(unit_weight_kn_m3=20.6, friction_angle_deg=36.0,
                                 slope_deg=20.0),
               foundation=Foundation(unit_weight_kn_m3=19.6, friction_angle_deg=22.0),
               surcharge_kpa=5.0, water=None, wall_top_m=69.9, min_founding_depth_m=0.6,
               founding_step_m=0.15)
    _at_part_reference_on_weak_ground(d, 227, basis, 4672.071)


def test_a_move_asked_again_of_a_store_changes_nothing(monkeypatch):
    # On weak ground many descents of one demand settle at the same sections and ask
    # their jumps, toe lines and neighbourhoods again (Store.first_ask): those asks are
    # not made twice. The panel of _low_weak_panel: the same design and the same
    # candidates checked with every ask made, and some asks were repeats.
    basis, d = _low_weak_panel()
    got = {}
    first = search.Store.first_ask
    for memo in (True, False):
        repeats = []

        def ask(store, key, memo=memo, repeats=repeats):
            new = first(store, key)
            repeats.append(not new)
            return new or not memo

        monkeypatch.setattr(search.Store, "first_ask", ask)
        st = []
        sd = bespoke([d], basis, Costing(), 0.05, stats=st)[0]
        got[memo] = (sd.section, sd.cost_per_m, sd.utilization, st[0].checked, sum(repeats))
    assert got[True][:4] == got[False][:4]
    assert got[True][4] > 0


def test_an_own_descent_from_where_one_ended_asks_nothing():
    # invented results of two basins (_two_basins): a second own descent from the start
    # of one that ended asks nothing (every move of its path was asked from the same
    # sections before) and ends where the first did
    g = grid_for(demand(3.0), 0.05)
    start = np.array([56, 10, 8, 7, 5, 0, 0])
    st = search.Store(g)
    _descend(st, iter([np.array([[80, 10, 8, 7, 5, 0, 0], start])]))
    _descend(st, search.descent(st, start, own=True))
    n = st.checked
    assert list(search.descent(st, start, own=True)) == [] and st.checked == n


def test_far_cold_moves_only_on_weak_ground():
    # the cold start after a demand's search: only where the store looks far and found a
    # passing section; it starts with the coarse grid of FAR_COARSE (every other base
    # thickness of this grid, where the COARSE grid takes every third), best-first
    g = grid_for(demand(3.0), 0.05)
    bound = lambda v: np.zeros(len(v))  # noqa: E731
    near, far, empty = search.Store(g), search.Store(g, reach=search.FAR), \
        search.Store(g, reach=search.FAR)
    for st in (near, far):
        _pass_all(st, np.array([[60, 10, 8, 7, 5, 0, 0]]), 2000.0)
    assert list(search.far_cold_moves(near, bound)) == []
    assert list(search.far_cold_moves(empty, bound)) == []
    first = next(search.far_cold_moves(far, bound))
    coarse = {tuple(r) for r in g.every(g.coarse_strides(search.FAR_COARSE)).tolist()}
    assert not first.prune and {tuple(r) for r in first.v.tolist()} <= coarse
    assert (g.coarse_strides(search.FAR_COARSE)[TB], g.coarse_strides(search.COARSE)[TB]) \
        == (2, 3)


def test_the_grid_by_width_is_the_whole_grid():
    # the reference takes the grid one base width at a time (memory bounded on the tens
    # of millions of candidates of a tall wall's 5 cm grid): the widths' candidates
    # together are every candidate of the grid, each once
    from wallrun.sizing.grid import grid_for
    for d, step in ((demand(1.5), 0.1), (demand(2.4), 0.05)):
        g = grid_for(d, step, BASIS.design)
        parts = list(g.by_width())
        assert len(parts) == g.b[1] - g.b[0] + 1
        joined = np.vstack(parts)
        whole = g.every()
        assert len(joined) == len(whole)
        assert {tuple(r) for r in joined.tolist()} == {tuple(r) for r in whole.tolist()}


CASES = [("plain 1.6 m", demand(1.6), BASIS),
         ("plain 3.2 m", demand(3.2), BASIS),
         ("water 2.4 m", demand(2.4, water=Water(height_above_base_m=0.8)), BASIS),
         ("soft ground 2.2 m", demand(2.2, foundation=Foundation(friction_angle_deg=24.0)), BASIS),
         ("sloping backfill 2.6 m", demand(2.6, backfill=Backfill(slope_deg=14.0)), BASIS),
         ("undrained 2.0 m", demand(2.0, foundation=Foundation(undrained_strength_kpa=50.0)),
          BASIS),
         ("DA2 3.0 m", demand(3.0), Basis(factors=resolve("DA2"), design=Design(approach="DA2")))]


@pytest.mark.parametrize("name, d, basis", CASES, ids=[c[0] for c in CASES])
def test_search_within_half_a_percent_of_the_grids_cheapest(name, d, basis):
    step = 0.1
    sd = bespoke([d], basis, Costing(), step)[0]
    ref, ref_cost = cheapest_on_grid(d, basis, Costing(), step)
    assert sd.status == "ok" and ref is not None
    assert ref_cost * 0.995 <= sd.cost_per_m <= ref_cost * 1.005, (sd.cost_per_m, ref_cost)


def test_search_reaches_a_cheapest_section_beyond_single_steps():
    # On a 5 cm grid over undrained clay (DA2, invented ground), the cheapest section
    # has a thinner base with the stem moved along it, several steps from where single
    # steps settle: found by the search's jumps, checked against every candidate. Before
    # the jumps and the curtailed ranking the search settled 2.3 % above it.
    basis = Basis(factors=resolve("DA2"), design=Design(approach="DA2"))
    d = Demand(z_top=23.2, z_front=20.0,
               backfill=Backfill(unit_weight_kn_m3=21.0, friction_angle_deg=30.0),
               foundation=Foundation(unit_weight_kn_m3=18.0, friction_angle_deg=27.0,
                                     cohesion_kpa=3.0, undrained_strength_kpa=60.0),
               surcharge_kpa=20.0, water=None, wall_top_m=23.2, min_founding_depth_m=0.8,
               founding_step_m=0.15)
    sd, ref_cost = _search_and_reference(d, basis)
    assert ref_cost * 0.995 <= sd.cost_per_m <= ref_cost * 1.005, (sd.cost_per_m, ref_cost)


def test_jumps_reach_across_the_base_and_every_thickness():
    # the jump candidates of a settled section: the stem moved along the base (the heel
    # by each of JUMP_HEEL steps) with a base up to two steps thinner, every thickness
    # on its own
    g = grid_for(demand(3.0), 0.05)
    cur = np.array([60, 10, 8, 7, 5, 0, 0])
    from dataclasses import replace as _replace
    reach = _replace(search.NEAR, jump=6)
    j = search.jumps(cur, g, reach)
    rows = set(map(tuple, j.tolist()))
    heel = lambda v: v[:, 0] - v[:, 1] - v[:, 3]  # noqa: E731
    window = cur[None, :] + reach.jump_window
    assert set(map(tuple, window.tolist())) <= rows
    moved = window[(window[:, 2] == 6) & (window[:, 3] == 7)]
    assert {(60 + k, 10 + k) for k in range(-6, 7)} <= set(map(tuple, moved[:, :2]))
    assert set(heel(moved) - heel(cur[None, :])) <= set(search.JUMP_HEEL)
    for k, axis in ((2, g.axes()[2]), (3, g.axes()[3]), (4, g.axes()[4])):
        line = j[np.all(np.delete(j, k, axis=1) == np.delete(cur, k), axis=1)]
        assert set(axis) <= set(line[:, k])
    # the toe lines (tried once where a descent would end) and the planes after a search:
    # each (bases, stems, widths) of TOE_LINES and BASE_PLANES, every toe length up to
    # half the base (within TOE_REACH of the toe) with each
    for sets, fn in ((search.TOE_LINES, search.toe_lines),
                     (search.BASE_PLANES, lambda c, g: search.planes(c, g, search.BASE_PLANES))):
        got = fn(cur, g)
        rows = set(map(tuple, got.tolist()))
        for bases, stems, widths in sets:
            for dz, ds, db in itertools.product(bases, stems, widths):
                # on a wider base, as many toe lengths longer again as it is wider
                for toe in range(0, min((60 + db) // 2, 10 + search.TOE_REACH + max(db, 0)) + 1):
                    assert (60 + db, toe, 8 + dz, 7 + ds, 5, 0, 0) in rows, (dz, ds, db, toe)
        assert np.all(got[:, 1] >= 10 - search.TOE_REACH)
        assert np.all(got[:, 1] <= 10 + search.TOE_REACH + np.maximum(got[:, 0] - 60, 0))
    assert (60, 10, 8, 7, 5, 0, 0) not in set(
        map(tuple, search.planes(cur, g, search.BASE_PLANES).tolist()))  # cur itself: no
    # the thickness trades: base and stem base each up to TRADE_REACH steps either way,
    # the base width, toe and stem top as cur's, and the same with the stem top moved
    # as the stem base (a stem of one thickness thickened or thinned whole)
    t = search.thickness_trades(cur)
    rz, rs = (list(range(-r, r + 1)) for r in search.TRADE_REACH)
    assert set(map(tuple, t.tolist())) == (
        {(60, 10, 8 + dz, 7 + ds, 5, 0, 0) for dz in rz for ds in rs}
        | {(60, 10, 8 + dz, 7 + ds, 5 + ds, 0, 0) for dz in rz for ds in rs})
    # the narrower lines: the base NARROWER steps narrower, toe lengths from two steps
    # shorter to TOE_REACH longer, the thicknesses as cur's
    t = search.narrower_lines(cur, g)
    assert set(map(tuple, t.tolist())) == {
        (60 - k, toe, 8, 7, 5, 0, 0) for k in search.NARROWER
        for toe in range(8, 10 + search.TOE_REACH + 1) if toe <= g.axes()[1][-1]}
    # the heel lines: base width and toe together up to HEEL_REACH steps either way,
    # the base a step thinner, as cur's, a step or two thicker, or a step thicker under
    # a stem base a step thinner; and up to HEEL_TOP_REACH steps with the stem top one
    # or two steps thicker
    t = search.heel_lines(cur)
    assert set(map(tuple, t.tolist())) == {
        (60 + k, 10 + k, 8 + dz, 7 + ds, 5, 0, 0)
        for k in range(-search.HEEL_REACH, search.HEEL_REACH + 1)
        for dz, ds in ((-1, 0), (0, 0), (1, 0), (2, 0), (1, -1))} | {
        (60 + k, 10 + k, 8, 7, 5 + dt, 0, 0)
        for k in range(-search.HEEL_TOP_REACH, search.HEEL_TOP_REACH + 1) for dt in (1, 2)}
    # the stem shifts: stem base, toe, base width and base thickness each up to
    # SHIFT_REACH steps either way, the stem top as cur's
    t = search.stem_shifts(cur)
    rs, rt, rb, rz = (range(-r, r + 1) for r in search.SHIFT_REACH)
    assert set(map(tuple, t.tolist())) == {(60 + db, 10 + dt, 8 + dz, 7 + ds, 5, 0, 0)
                                           for ds in rs for dt in rt for db in rb
                                           for dz in rz}


def test_the_far_reach_holds_every_move_of_the_near_one():
    # search.FAR only looks further: more seeds, and each of its step sets holds the
    # near one's, so its planes about a section hold the near planes
    near, far = search.NEAR, search.FAR
    assert (near.seeds, near.jump, near.toe, near.heel, near.shift, near.planes) == (
        search.SEEDS, search.JUMP_REACH, search.TOE_REACH, search.HEEL_REACH,
        search.SHIFT_REACH, search.BASE_PLANES)
    assert far.seeds > near.seeds
    rows = lambda a: set(map(tuple, np.asarray(a).tolist()))  # noqa: E731
    for a, b in ((near.jump_window, far.jump_window), (near.heel_steps, far.heel_steps),
                 (near.shift_steps, far.shift_steps),
                 (near.plane_offsets[0], far.plane_offsets[0])):
        assert rows(a) < rows(b)
    g = grid_for(demand(3.0), 0.05)
    cur = np.array([60, 10, 8, 7, 5, 0, 0])
    for move in (lambda r: search.planes(cur, g, r.planes, toe_reach=r.toe),
                 lambda r: search.narrower_lines(cur, g, r.toe),
                 lambda r: search.toe_lines(cur, g, r.toe),
                 lambda r: search.heel_lines(cur, r), lambda r: search.stem_shifts(cur, r),
                 lambda r: search.jumps(cur, g, r)):
        assert rows(move(near)) < rows(move(far))


def test_a_search_looks_far_from_a_base_as_wide_as_the_wall_is_high():
    # far_from: FAR_FROM (1.0) x (retained height + least founding depth + lowering)
    d = demand(3.0, min_founding_depth_m=0.6, extra_depth_m=0.15)
    assert search.far_from(d) == pytest.approx(3.75)
    g = grid_for(d, 0.05)
    st = search.Store(g, far_from_m=search.far_from(d))
    assert st.reach is search.NEAR
    st.look_far(np.array([74, 10, 8, 7, 5, 0, 0]))  # 3.70 m: near
    assert st.reach is search.NEAR
    st.look_far(np.array([75, 10, 8, 7, 5, 0, 0]))  # 3.75 m: far from here on
    assert st.reach is search.FAR
    st.look_far(np.array([60, 10, 8, 7, 5, 0, 0]))
    assert st.reach is search.FAR
    # another search of the same demand keeps its grid, reach and height to look far from
    _pass_all(st, np.array([[60, 10, 8, 7, 5, 0, 0]]), 2000.0)
    st2 = st.again()
    assert (st2.grid is g and st2.reach is search.FAR and st2.far_from_m == st.far_from_m
            and st2.cap == 2000.0 and st2.checked == 0)
    s0 = search.Store(g)  # no height from which to look far: never far
    s0.look_far(np.array([400, 10, 8, 7, 5, 0, 0]))
    assert s0.reach is search.NEAR


def _pass_all(st, v, cost: float, cheap=None) -> None:
    """Commit the valid candidates ``v`` not checked yet in ``st`` as passing (invented
    results): each at ``cost`` and utilization 0.9, ``cheap`` at 900."""
    v = np.unique(np.asarray(v).reshape(-1, NDIM), axis=0)
    v = v[st.grid.valid(v)]
    c = codes(v)
    new = ~st.known(c)
    v, c = v[new], c[new]
    costs = np.full(len(v), cost)
    if cheap is not None:
        costs[np.all(v == cheap, axis=1)] = 900.0
    o = np.argsort(c)
    st.commit(v[o], c[o], np.ones(len(v), bool), costs[o], np.full(len(v), 0.9))


def test_planes_go_on_about_a_better_section_they_find():
    # invented results: the planes about a demand's best find one cheaper section, the
    # descent from it nothing better; the next round is the planes (and trades) about
    # that section, and a round that finds nothing better ends them
    g = grid_for(demand(3.0), 0.05)
    st = search.Store(g)
    cur = np.array([60, 10, 8, 7, 5, 0, 0])
    better = cur + [1, 6, -1, 0, 0, 0, 0]

    def commit(v, cheap=None):
        _pass_all(st, v, 2000.0, cheap)

    commit(cur[None, :])
    gen = search.plane_moves(st)
    first = next(gen).v
    assert any(np.array_equal(r, better) for r in first)
    commit(first, cheap=better)
    expected = {tuple(r) for r in np.vstack([search.planes(better, g, search.BASE_PLANES),
                                              search.narrower_lines(better, g),
                                              search.heel_lines(better),
                                              search.thickness_trades(better),
                                              search.stem_shifts(better)]).tolist()}
    rounds = 1
    for ask in gen:
        if {tuple(r) for r in ask.v.tolist()} == expected:
            rounds += 1
        commit(ask.v)
    assert rounds == 2 and np.array_equal(st.best_vector(), better)


def test_store_absorbs_another_search_of_the_same_demand():
    # the second descent's candidates join the first search's: its best is the better of
    # the two, candidates checked in both are kept once, and passes() reads the record
    g = grid_for(demand(3.0), 0.05)
    a, b = search.Store(g), search.Store(g, cap=1000.0)
    va = np.array([[60, 10, 8, 7, 5, 0, 0], [61, 10, 8, 7, 5, 0, 0]])
    vb = np.array([[61, 10, 8, 7, 5, 0, 0], [62, 11, 8, 7, 5, 0, 0], [59, 9, 8, 7, 5, 0, 0]])
    for st, v, ok, cost in ((a, va, [True, False], [900.0, 800.0]),
                            (b, vb, [False, True, False], [800.0, 850.0, 700.0])):
        o = np.argsort(codes(v))
        st.commit(v[o], codes(v)[o], np.array(ok)[o], np.array(cost)[o], np.ones(len(v))[o])
    assert b.prune_cost() == 850.0 and search.Store(g, cap=1000.0).prune_cost() == 1000.0
    assert a.passes(va[0]) and not a.passes(va[1]) and not a.passes(vb[1])
    a.absorb(b)
    assert a.checked == 4 and a.best_cost() == 850.0 and a.passes(vb[1])
    assert np.array_equal(a.best_vector(), vb[1]) and np.all(np.diff(a.codes) > 0)


def test_second_descent_only_where_the_taller_references_section_fails():
    g = grid_for(demand(3.0), 0.05)
    st = search.Store(g)
    s0, s1 = np.array([60, 10, 8, 7, 5, 0, 0]), np.array([58, 10, 8, 7, 5, 0, 0])
    v = np.array([s0, s1])
    o = np.argsort(codes(v))
    st.commit(v[o], codes(v)[o], np.array([False, True])[o], np.array([900.0, 950.0])[o],
              np.array([1.2, 0.9])[o])
    assert search.needs_second(st, [s0, s1])  # s0 fails here, s1 is another section
    assert not search.needs_second(st, [s1, s0])  # the first start passes
    assert not search.needs_second(st, [s0])  # no lower reference
    assert not search.needs_second(st, [s0, s0.copy()])  # the same section
    assert not search.needs_second(search.Store(g), [s0, s1])  # nothing passes: no cap
    # a tall demand gets it from a passing first start too
    h = search.SECOND_FROM_H
    assert search.needs_second(st, [s1, s0], h) and not search.needs_second(st, [s1, s0], h - 0.01)
    assert not search.needs_second(st, [s1, s1.copy()], h)
    # references in different basins: base or stem BASIN_STEPS apart, whatever passes
    k = search.BASIN_STEPS
    for dim in (2, 3):
        far, near = s1.copy(), s1.copy()
        far[dim] -= k
        near[dim] -= k - 1
        assert search.needs_second(st, [s1, far]) and not search.needs_second(st, [s1, near])
    # or toe length or base width BASIN_SHIFT_STEPS apart (the stem elsewhere on the base)
    k = search.BASIN_SHIFT_STEPS
    for dim in (0, 1):
        far, near = s1.copy(), s1.copy()
        far[dim] += k
        near[dim] += k - 1
        assert search.needs_second(st, [s1, far]) and not search.needs_second(st, [s1, near])
    # or the search looks far (weak ground)
    st.reach = search.FAR
    assert search.needs_second(st, [s1, s0]) and not search.needs_second(st, [s1, s1.copy()])


def test_second_descent_takes_what_the_first_checked_in_full(monkeypatch):
    # a 5.62 m DA3 panel (invented gravel, 10 cm grid) whose references' sections
    # differ, so a second descent runs (SECOND_FROM_H): the candidates the first search
    # checked in full are taken from its record (Store.from_prior); checking them again
    # gives the same design with more candidates checked
    from wallrun.settings import Loads
    basis = Basis(factors=resolve("DA3"), design=Design(approach="DA3"),
                  loads=Loads(surcharge_kpa=20.0))
    d = Demand(z_top=66.721824, z_front=61.101824,
               backfill=Backfill(unit_weight_kn_m3=20.0, friction_angle_deg=36.0),
               foundation=Foundation(unit_weight_kn_m3=19.0, friction_angle_deg=22.0),
               surcharge_kpa=20.0, water=None, wall_top_m=66.82, min_founding_depth_m=0.6,
               founding_step_m=0.15)
    assert d.h >= search.SECOND_FROM_H
    ran = []
    needs = search.needs_second
    monkeypatch.setattr(search, "needs_second",
                        lambda st, starts, h: ran.append(needs(st, starts, h)) or ran[-1])
    st_a, st_b = [], []
    a = bespoke([d], basis, Costing(), 0.1, stats=st_a)[0]
    assert ran == [True]
    monkeypatch.setattr(search.Store, "from_prior",
                        lambda self, c: (np.zeros(len(c), dtype=bool), ()))
    b = bespoke([d], basis, Costing(), 0.1, stats=st_b)[0]
    assert a == b
    assert st_a[0].checked < st_b[0].checked


def test_store_takes_what_its_prior_checked_in_full():
    g = grid_for(demand(3.0), 0.05)
    first = search.Store(g)
    v = np.array([[60, 10, 8, 7, 5, 0, 0], [61, 10, 8, 7, 5, 0, 0], [62, 10, 8, 7, 5, 0, 0]])
    o = np.argsort(codes(v))
    first.commit(v[o], codes(v)[o], np.array([True, False, False])[o],
                 np.array([900.0, 950.0, np.nan])[o], np.array([0.9, 1.1, 1.3])[o])
    second = search.Store(g, cap=900.0, prior=first)
    ask = np.array([v[2], v[1], [63, 10, 8, 7, 5, 0, 0]])
    hit, (ok, cost, util) = second.from_prior(codes(ask))
    # the second was checked in full there; the first failed stability (no structure,
    # cost nan): it is checked again, like one never checked
    assert hit.tolist() == [False, True, False]
    assert ok.tolist() == [False] and cost.tolist() == [950.0] and util.tolist() == [1.1]
    assert not search.Store(g).from_prior(codes(ask))[0].any()


def test_descent_from_a_full_start_ends_on_a_full_neighbourhood():
    # a descent that starts with the full neighbourhood (polish=False, as the second
    # descent) and moves checks the full neighbourhood again where it settles (the stem
    # top among its moves) before it ends; invented results: the start's neighbour one
    # step wider is the cheapest passing, nothing about it is cheaper
    g = grid_for(demand(3.0), 0.05)
    start = np.array([60, 10, 8, 7, 5, 0, 0])
    moved = start + [1, 0, 0, 0, 0, 0, 0]
    st = search.Store(g)
    gen = search.descent(st, start, polish=False, max_jumps=0, toe_line=False)

    def check(cand, best=None):
        _pass_all(st, cand, 1000.0, best)

    check(next(gen), best=moved)  # the full neighbourhood of the start: moves
    check(next(gen))  # the small one about the new section: settles
    last = next(gen)  # then the full one about it, stem top changed too
    assert set(np.unique(last[:, search.TT])) == {moved[search.TT] - 1, moved[search.TT],
                                                  moved[search.TT] + 1}
    assert np.all(np.abs(last[:, :5] - moved[:5]) <= 1)
    check(last)
    with pytest.raises(StopIteration):
        next(gen)


def test_store_results_reads_the_record():
    # a store's results of candidates: those checked in full as checked (a failing one
    # does not pass), any other not passing at inf; the index made by the first read is
    # kept by later commits (invented results)
    g = grid_for(demand(3.0), 0.05)
    st = search.Store(g)
    a, b, c, d = (np.array([60 + k, 10, 8, 7, 5, 0, 0]) for k in range(4))
    _pass_all(st, np.array([a, b]), 1000.0)
    ok, cost = st.results(np.array([b, c, a]))
    assert ok.tolist() == [True, False, True] and cost.tolist() == [1000.0, np.inf, 1000.0]
    v = np.array([c, d])
    o = np.argsort(codes(v))
    st.commit(v[o], codes(v)[o], np.array([True, False])[o], np.array([950.0, 900.0])[o],
              np.array([0.9, 1.2])[o])
    ok, cost = st.results(np.array([d, c, b]))
    assert ok.tolist() == [False, True, True] and cost.tolist() == [np.inf, 950.0, 1000.0]


def test_store_runs_hold_every_code_and_result_across_many_commits(monkeypatch):
    # a store's codes are two sorted runs (search.SHORT_RUN): after 60 commits of 60
    # invented candidates each (the short run merged into the long one several times,
    # at more than 500 rows here, the index by code made after the 20th), the codes
    # are those of the record, sorted, and membership and results are a plain lookup's
    monkeypatch.setattr(search, "SHORT_RUN_MIN", 500)
    g = grid_for(demand(3.0), 0.05)
    rng = np.random.default_rng(5)
    every = np.unique(np.column_stack([rng.integers(20, 120, 9000), rng.integers(0, 20, 9000),
                                       rng.integers(6, 14, 9000), rng.integers(5, 9, 9000),
                                       np.full(9000, 5), np.zeros(9000, int),
                                       np.zeros(9000, int)]), axis=0)
    every = every[rng.permutation(len(every))][:3600]
    st = search.Store(g)
    plain = {}
    for k in range(60):
        v = every[60 * k:60 * (k + 1)]
        c = codes(v)
        o = np.argsort(c)
        ok, cost = rng.random(60) < 0.5, rng.uniform(900.0, 1100.0, 60)
        st.commit(v[o], c[o], ok[o], cost[o], np.full(60, 0.9))
        plain.update(zip(c.tolist(), zip(ok.tolist(), cost.tolist())))
        if k == 20:
            st.results(v[:1])
    assert np.array_equal(st.codes, np.sort(codes(st.V)))
    others = np.zeros((50, 7), int)  # a base width none of them has
    others[:, 0], others[:, 1] = 200, np.arange(50)
    probe = np.vstack([every, others])
    assert st.known(codes(probe)).tolist() == [True] * len(every) + [False] * 50
    ok, cost = st.results(probe)
    want = [plain.get(c, (False, np.inf)) for c in codes(probe).tolist()]
    assert ok.tolist() == [w[0] for w in want]
    assert cost.tolist() == [w[1] if w[0] else np.inf for w in want]


def test_merge_runs_is_a_sort_of_both():
    # two sorted runs of distinct codes and their values, merged: as sorting the two
    # joined (invented codes)
    rng = np.random.default_rng(3)
    c = rng.choice(10_000, 900, replace=False)
    a, b = np.sort(c[:700]), np.sort(c[700:])
    va, vb = (a * 2.0, a % 3 == 0), (b * 2.0, b % 3 == 0)
    got, (x, y) = search.merge_runs(a, va, b, vb)
    assert np.array_equal(got, np.sort(c))
    assert np.array_equal(x, got * 2.0) and np.array_equal(y, got % 3 == 0)
    assert np.array_equal(search.merge_runs(a[:0], (), b, ())[0], b)


def _two_basins(v: np.ndarray) -> np.ndarray:
    """Invented costs of two basins in base width: 1000 at 80 steps and 1100 at 60 steps,
    10 a step from either (the nearer bottom's), 5 a step off the other entries of
    [., 10, 8, 7, 5] (the basins meet at 65 steps)."""
    off = 5.0 * np.abs(v[:, 1:5] - [10, 8, 7, 5]).sum(axis=1)
    return np.minimum(1000.0 + 10.0 * np.abs(v[:, 0] - 80), 1100.0 + 10.0 * np.abs(v[:, 0] - 60)) + off


def _descend(st, gen, limit: int = 200) -> None:
    """Run the descent ``gen`` in ``st``, every candidate it asks passing at
    :func:`_two_basins` cost."""
    for cand in itertools.islice(gen, limit):
        v, c = st.fresh(cand)
        st.commit(v, c, np.ones(len(v), bool), _two_basins(v), np.full(len(v), 0.9))


def test_an_own_descent_settles_in_the_basin_it_starts_in():
    # invented results of two basins (_two_basins): the store's best is the cheaper
    # bottom (1000 at 80 steps); from a start at 56 steps a descent goes back to that
    # best after its first neighbourhood, and one that follows its own path (own=True)
    # settles at the bottom of the start's basin (1100 at 60 steps)
    g = grid_for(demand(3.0), 0.05)
    start, near_bottom = np.array([56, 10, 8, 7, 5, 0, 0]), np.array([60, 10, 8, 7, 5, 0, 0])
    for own, reached in ((False, False), (True, True)):
        st = search.Store(g)
        _descend(st, iter([np.array([[80, 10, 8, 7, 5, 0, 0], start])]))
        _descend(st, search.descent(st, start, max_jumps=0, toe_line=False, own=own))
        assert st.results(near_bottom[None, :])[0][0] == reached, own
        if reached:  # and every candidate about it: it is that basin's bottom
            about = near_bottom[None, :] + search._FULL
            ok, cost = st.results(about[g.valid(about)])
            assert ok.all() and cost.min() == 1100.0
        assert st.best_cost() == 1000.0


def test_basin_starts_take_the_cheapest_of_each_class():
    # invented results: one start per base thickness, toe eighth of the base width and
    # key, the cheapest of each (ties: the lower utilization), in increasing cost, none
    # costing more than BASIN_SPAN times the best
    g = grid_for(demand(3.0), 0.05)
    st = search.Store(g)
    rows = [([64, 10, 8, 7, 5, 0, 0], 1010.0, 0.9),   # toe 1.25 eighths: class (8, 1, no)
            ([64, 12, 8, 7, 5, 0, 0], 1005.0, 0.9),   # the same class, cheaper
            ([64, 16, 8, 7, 5, 0, 0], 1000.0, 0.9),   # toe 2 eighths
            ([64, 16, 9, 7, 5, 0, 0], 1020.0, 0.8),   # a thicker base
            ([64, 16, 9, 8, 5, 0, 0], 1020.0, 0.7),   # the same class, less utilised
            ([64, 0, 8, 7, 5, 0, 0], 990.0, 1.1),     # does not pass
            ([64, 16, 10, 7, 5, 0, 0], 1000.0 * search.BASIN_SPAN + 1.0, 0.9)]  # too dear
    v = np.array([r[0] for r in rows])
    o = np.argsort(codes(v))
    st.commit(v[o], codes(v)[o], np.array([r[2] <= 1.0 for r in rows])[o],
              np.array([r[1] for r in rows])[o], np.array([r[2] for r in rows])[o])
    got = [st.V[i].tolist() for i in search.basin_starts(st)]
    assert got == [rows[2][0], rows[1][0], rows[4][0]]


def test_descent_weighs_overstress_while_nothing_passes():
    # while nothing passes, a descent with ``overstress`` moves to the least cost x (1 +
    # w (u - 1)), without it to the least utilization (invented results: a big section
    # just under 1.0, a cheap one failing by 2 %)
    g = grid_for(demand(3.0), 0.05)
    start = np.array([60, 10, 8, 7, 5, 0, 0])
    big, cheap = start + [1, 0, 1, 1, 0, 0, 0], start + [-1, 0, 0, 0, 0, 0, 0]
    for w, want in ((None, big), (search.OVERSTRESS_WEIGHT, cheap)):
        st = search.Store(g)
        gen = search.descent(st, start, polish=False, max_jumps=0, toe_line=False, overstress=w)
        cand = np.unique(next(gen), axis=0)
        cand = cand[g.valid(cand)]
        cost = np.full(len(cand), 1000.0)
        util = np.full(len(cand), 1.5)
        for v, c, u in ((big, 1300.0, 1.01), (cheap, 800.0, 1.02)):
            i = int(np.flatnonzero(np.all(cand == v, axis=1))[0])
            cost[i], util[i] = c, u
        o = np.argsort(codes(cand))
        st.commit(cand[o], codes(cand)[o], np.zeros(len(cand), bool), cost[o], util[o])
        nxt = next(gen)  # the small neighbourhood about the candidate moved to
        small = nxt[:len(search._SMALL)] - search._SMALL
        assert np.all(small == want), (w, small[0])


def test_descent_goes_on_by_utilization_where_the_weighed_move_settles():
    # invented results: the start fails by 2 % at a low cost, a dear section one step
    # wider by 0.5 %, the rest by 50 %; weighed (cost x (1 + 5 (u - 1))) the start is the
    # least, so the weighed move settles there with nothing passing, and the descent
    # goes on by the utilization alone, to the wider one (before, it ended there)
    g = grid_for(demand(3.0), 0.05)
    start = np.array([60, 10, 8, 7, 5, 0, 0])
    wider = start + [1, 0, 0, 0, 0, 0, 0]
    st = search.Store(g)
    gen = search.descent(st, start, polish=False, max_jumps=0, toe_line=False,
                         overstress=search.OVERSTRESS_WEIGHT)
    centres = []
    for cand in itertools.islice(gen, 12):
        small = cand[:len(search._SMALL)] - search._SMALL
        if np.all(small == small[0]):
            centres.append(small[0])
        v, c = st.fresh(cand)
        cost, util = np.full(len(v), 1000.0), np.full(len(v), 1.5)
        for w, cw, uw in ((start, 900.0, 1.02), (wider, 1300.0, 1.005)):
            i = np.flatnonzero(np.all(v == w, axis=1))
            cost[i], util[i] = cw, uw
        st.commit(v, c, np.zeros(len(v), bool), cost, util)
    assert any(np.array_equal(x, start) for x in centres)
    assert any(np.array_equal(x, wider) for x in centres), centres


def test_a_demand_none_passes_within_its_first_bounds_is_searched_wider(monkeypatch):
    # invented ground (a wall drawn for the search's checks): DA2, water 0.97 m above
    # the base, a backfill of 37 degrees under a 10 degree slope over a base of 22
    # degrees, 20 kPa. Within the 2.0 H width bound no section passes (bearing, about
    # 1.02 at best, on the bound); the bound the least utilised sits on moves, and a
    # base wider than it passes. Without widening the demand is flagged.
    basis = Basis(factors=resolve("DA2"), design=Design(approach="DA2"))
    d = Demand(z_top=60.224, z_front=55.176,
               backfill=Backfill(unit_weight_kn_m3=19.6, friction_angle_deg=37.0,
                                 slope_deg=10.0),
               foundation=Foundation(unit_weight_kn_m3=17.9, friction_angle_deg=22.0),
               surcharge_kpa=20.0, water=Water(height_above_base_m=0.97),
               wall_top_m=60.3, min_founding_depth_m=0.6, founding_step_m=0.15)
    g = grid_for(d, 0.05, basis.design)
    sd = bespoke([d], basis, Costing(), 0.05)[0]
    assert sd.status == "ok" and sd.section.base_width_m > g.b[1] * 0.05 + 1e-9
    monkeypatch.setattr(search, "MAX_WIDEN", 0)
    assert bespoke([d], basis, Costing(), 0.05)[0].status == "flagged"


def test_the_exhaustive_reference_widens_where_none_passes_as_the_search_does():
    # invented ground (drawn by benchmarks/walls.py --seed 10, its second wall, here at
    # a 10 cm step): a 1.105 m DA1 wall, water 1.84 m above the base (capped at the
    # backfill), a backfill of 34 degrees under a 20 degree slope, a base of 32
    # degrees with c' 5 kPa, 20 kPa. Nothing passes within the first bounds (the
    # reference without widening finds none); both widen the bounds the least utilised
    # sits on and agree on a base wider than the first bound
    basis = Basis(factors=resolve("DA1"), design=Design(approach="DA1", dimension_step_m=0.1))
    d = Demand(z_top=51.105, z_front=50.0,
               backfill=Backfill(unit_weight_kn_m3=20.3, friction_angle_deg=34.0,
                                 slope_deg=20.0),
               foundation=Foundation(unit_weight_kn_m3=17.4, friction_angle_deg=32.0,
                                     cohesion_kpa=5.0),
               surcharge_kpa=20.0, water=Water(height_above_base_m=1.84), wall_top_m=51.205)
    assert cheapest_on_grid(d, basis, Costing(), 0.1, widen=False) == (None, math.inf)
    ref, cost = cheapest_on_grid(d, basis, Costing(), 0.1)
    sd = bespoke([d], basis, Costing(), 0.1)[0]
    assert ref is not None and ref.base_width_m > grid_for(d, 0.1, basis.design).b[1] * 0.1
    assert sd.status == "ok" and sd.section == ref
    assert math.isclose(sd.cost_per_m, cost, rel_tol=1e-9)


def test_settle_moves_widen_a_bound_the_planes_best_sits_on():
    # invented results: every section passes and a thicker stem top is cheaper, so every
    # best sits on the stem top's bound (0.30 m). The planes alone leave that bound where
    # it is (only a descent's best was widened, before the planes); settle_moves moves it.
    g = grid_for(demand(3.0), 0.05)
    cur = np.array([60, 10, 8, 7, g.tt[1], 0, 0])

    def commit(st, v):
        v, c = st.fresh(v)
        cost = 1000.0 + v[:, search.B] + v[:, search.TB] + v[:, search.TS] - 5.0 * v[:, search.TT]
        st.commit(v, c, np.ones(len(v), dtype=bool), cost, np.full(len(v), 0.9))

    def run(moves):
        st = search.Store(g)
        commit(st, cur[None, :])
        for ask in moves(st):
            commit(st, ask.v)
        return st

    assert run(search.plane_moves).grid.tt == g.tt
    st = run(search.settle_moves)
    assert st.grid.tt[1] > g.tt[1] and st.best_vector()[search.TT] > g.tt[1]


# --- the lower bound of the cost ---------------------------------------------------------

def test_steel_floor_by_hand():
    # hand calculation from the published formulas, restraint steel off: fctm = 0.30
    # fck^(2/3) (EN 1992-1-1 Table 3.1) = 3.0238 MPa for C32/40; As,min = 0.26 fctm / fyk
    # b d (Eq. 9.1N, above 0.0013 b d) at d = h - cover - 32 / 2; stem front 0.001 Ac
    # (9.6.2); horizontal half of max(0.25 As,vert, 0.001 Ac) per face (9.6.3);
    # distribution 20 % of the larger mat (9.3.1.1(2)); covers 50 / 75 mm, kicker 75 mm,
    # 7850 kg/m3
    from wallrun import structure
    b = Basis(factors=resolve("DA1"), design=Design(restraint_steel=False))
    sec = SectionArrays.of([Section(stem_top_m=0.25, stem_base_m=0.30, base_width_m=2.5,
                                    toe_m=0.6, base_thickness_m=0.40)])
    rho = 0.26 * 0.30 * 32.0 ** (2.0 / 3.0) / 500.0
    back, front = rho * 1000 * (300 - 50 - 16), 300.0
    heel, toe = rho * 1000 * (400 - 50 - 16), rho * 1000 * (400 - 75 - 16)
    hor, dist = 0.5 * max(0.25 * (back + front), 300.0), 0.2 * max(heel, toe)
    mm3 = ((0.5 * back + front) * (3000 - 50 - 75) + (heel + toe) * (2500 - 100)
           + 2 * hor * (3000 - 100) + 2 * dist * (2500 - 100))
    got = structure.steel_mass_floor(sec, np.array([3.0]), b)
    assert float(got[0]) == pytest.approx(mm3 * 1e-9 * 7850.0, rel=1e-5)  # about 40.8 kg/m
    # the restraint steel of 7.3.2 only adds to it
    assert float(structure.steel_mass_floor(sec, np.array([3.0]), BASIS)[0]) > float(got[0])


def test_fresh_candidates_of_many_stores_are_each_stores_own():
    # the joined filter against each store alone, written out: valid in its own bounds,
    # once each in code order, none it has checked
    g1, g2 = grid_for(demand(1.5), 0.05), grid_for(demand(3.5), 0.05).widened(("b_hi",))
    s1, s2 = search.Store(g1), search.Store(g2)
    rng = np.random.default_rng(5)
    base = np.array([[40, 8, 7, 6, 5, 0, 0]])
    asks = [np.vstack([base + rng.integers(-3, 4, (300, NDIM)), base]) for _ in range(2)]
    done = asks[1][:40][g2.valid(asks[1][:40])]
    s2.commit(done, codes(done), np.ones(len(done), bool), np.zeros(len(done)), np.zeros(len(done)))
    got = search.fresh_many([s1, s2], asks)
    for st, v, (gv, gc) in zip((s1, s2), asks, got):
        v = v[st.grid.valid(v)]
        c, first = np.unique(codes(v), return_index=True)
        keep = ~np.isin(c, st.codes)
        assert np.array_equal(gc, c[keep]) and np.array_equal(gv, v[first][keep])
    assert len(got[0][0]) >= 5 and len(got[1][0]) >= 5  # both filters had work to do


FLOOR_CASES = CASES + [
    ("no restraint steel 2.8 m", demand(2.8),
     Basis(factors=resolve("DA1"), design=Design(restraint_steel=False))),
    ("tall 6.5 m", demand(6.5), BASIS)]


def coarse_sample(d, basis, n: int, seed: int):
    """n candidates drawn at random from a coarse grid of ``d`` (mixing candidates that
    fail stability, fail the structure and pass): (integer vectors, sections, rows)."""
    g = grid_for(d, 0.05, basis.design)
    v = g.every(g.coarse_strides((8, 6, 4, 4, 2)))
    v = v[np.random.default_rng(seed).choice(len(v), min(len(v), n), replace=False)]
    return v, g.sections(v), Rows.of([d], [len(v)])


@pytest.mark.parametrize("name, d, basis", FLOOR_CASES, ids=[c[0] for c in FLOOR_CASES])
def test_lower_bound_is_never_above_a_passing_cost(name, d, basis):
    # the search prunes and stops on the lower bound: it must hold for every candidate
    # that passes, in the search's costing (full-height stem bars) and the designs'
    # (curtailed)
    v, sec, rows = coarse_sample(d, basis, 3000, 3)
    lb = ev_.lower_bound(sec, rows, d, Costing(), basis)
    ok, cost, _ = ev_.screen(sec, rows, d, basis, Costing(), np.zeros(len(v), dtype=int),
                             np.array([True]))
    ev = ev_.evaluate(sec, rows, d, basis, Costing())
    assert ok.sum() > 50 and ev.ok.sum() > 50
    assert np.all(lb[ok] <= cost[ok]) and np.all(lb[ev.ok] <= ev.cost[ev.ok])
    # and it holds steel: above the cost with none
    cond = conditions_of(sec.base_thickness_m, rows, d)
    hs, D = ev_.stem_heights(sec, cond, rows)
    assert np.all(lb > Costing().per_metre(sec, hs, D, 0.0))


# --- purity: the same conditions always give the same design -------------------------------

def _key(sd):
    return (sd.section, sd.reinforcement, sd.cost_per_m, sd.utilization, sd.status)


def test_result_independent_of_order_and_of_what_else_is_designed():
    ds = [demand(h, z_front=40.0 + 0.037 * k) for k, h in enumerate((1.2, 2.9, 1.9, 3.4, 2.3))]
    alone = [bespoke([d], BASIS, Costing(), 0.1)[0] for d in ds]
    together = bespoke(ds, BASIS, Costing(), 0.1)
    backwards = bespoke(ds[::-1], BASIS, Costing(), 0.1)[::-1]
    other = bespoke([demand(4.1, foundation=Foundation(friction_angle_deg=27.0))], BASIS,
                    Costing(), 0.1)
    after = bespoke(ds, BASIS, Costing(), 0.1)
    assert other[0].status == "ok"
    for a, b, c, e in zip(alone, together, backwards, after):
        assert _key(a) == _key(b) == _key(c) == _key(e)


def test_known_references_are_not_searched_again_and_change_nothing():
    # a design call's later batches reuse the reference searches of its earlier ones:
    # the same designs as searched afresh, no reference checked twice
    ds = [demand(h, z_front=40.0 + 0.037 * k) for k, h in enumerate((1.2, 2.9, 1.9))]
    refs: dict = {}
    first = bespoke(ds[:2], BASIS, Costing(), 0.1, references=refs)
    assert refs and all(search.reference(d, h) in refs for d in ds[:2]
                        for h in search.reference_heights(d.h))
    st: list = []
    again = bespoke(ds, BASIS, Costing(), 0.1, stats=st, references=refs)
    fresh = bespoke(ds, BASIS, Costing(), 0.1)
    # 1.9 m: the references at 2.0 and 1.75 m are new, those of 1.2 and 2.9 m known; the
    # new ones' lattice heights below (1.5 and 1.25 m) are searched cold too
    assert st[0].references == 4
    bespoke(ds, BASIS, Costing(), 0.1, stats=st, references=refs)
    assert st[1].references == 0 and st[1].checked_references == 0
    for a, b in zip(again, fresh):
        assert _key(a) == _key(b)
    assert [_key(x) for x in first] == [_key(x) for x in fresh[:2]]


def test_two_threads_design_as_one_after_the_other():
    ds1 = [demand(h) for h in (1.4, 2.6)]
    ds2 = [demand(h, foundation=Foundation(friction_angle_deg=26.0)) for h in (1.8, 3.1)]
    seq = [bespoke(ds1, BASIS, Costing(), 0.1), bespoke(ds2, BASIS, Costing(), 0.1)]
    got = [None, None]

    def run(k, ds):
        got[k] = bespoke(ds, BASIS, Costing(), 0.1)

    ts = [threading.Thread(target=run, args=(k, ds)) for k, ds in enumerate((ds1, ds2))]
    for t in ts:
        t.start()
    for t in ts:
        t.join()
    for a, b in zip(seq, got):
        assert [_key(x) for x in a] == [_key(y) for y in b]


# --- bespoke designs -----------------------------------------------------------------------

def test_bespoke_passes_every_check_and_is_flagged_beyond_range():
    d, far = bespoke([demand(2.5), demand(9.2)], BASIS, Costing(), 0.05)
    assert d.status == "ok" and d.utilization <= 1.0 + 1e-9
    assert all(c.utilization <= 1.0 + 1e-9 for c in d.checks)
    names = {c.check for c in d.checks}
    assert {"overturning", "sliding", "bearing", "stem_bending", "heel_bending"} <= names
    s = d.section
    for v in (s.base_width_m, s.toe_m, s.stem_base_m, s.base_thickness_m):
        assert abs(v / 0.05 - round(v / 0.05)) < 1e-6
    assert far.status == "flagged" and "beyond the supported range" in far.reason


def test_max_utilization_leaves_a_margin():
    # the margin applies to every check of actions against a resistance; the detailing
    # rules (minimum steel, bar spacing) are limits in their own right, met at 1.0
    b = Basis(factors=resolve("DA1"), design=Design(max_utilization=0.85))
    sd = bespoke([demand(2.0)], b, Costing(), 0.1)[0]
    assert sd.status == "ok"
    assert max(c.utilization for c in sd.checks if c.check not in ev_.DETAILING) <= 0.85 + 1e-9
    assert max(c.utilization for c in sd.checks) <= 1.0 + 1e-9
    plain = bespoke([demand(2.0)], BASIS, Costing(), 0.1)[0]
    assert sd.cost_per_m > plain.cost_per_m


def test_edge_pressure_cap_is_a_check():
    # a joint cure caps the edge pressure: the design keeps it, and says so
    free = bespoke([demand(2.5)], BASIS, Costing(), 0.1)[0]
    cap = 0.85 * free.edge_pressure_sls_kpa
    capped = bespoke([demand(2.5, max_edge_pressure_kpa=cap)], BASIS, Costing(), 0.1)[0]
    assert capped.status == "ok" and capped.edge_pressure_sls_kpa <= cap + 1e-6
    jp = [c for c in capped.checks if c.check == "joint_pressure"]
    assert jp and jp[0].resistance == pytest.approx(cap) and jp[0].utilization <= 1 + 1e-9
    assert capped.cost_per_m >= free.cost_per_m - 1e-9


def test_screened_evaluation_decides_like_the_full_one():
    # screening (structure only for candidates passing stability) changes no decision:
    # the same candidates pass, with the same utilization and the same cost (the stem
    # bars curtailed in both)
    d = demand(3.0)
    g = grid_for(d, 0.1)
    v = g.every(3)
    sec = g.sections(v)
    rows = Rows.of([d], [len(v)])
    full = ev_.evaluate(sec, rows, d, BASIS, Costing())
    ok, cost, util = ev_.screen(sec, rows, d, BASIS, Costing(), np.zeros(len(v), dtype=int),
                                np.array([False]))
    assert full.ok.any() and (~full.ok).any()
    assert np.array_equal(full.ok, ok)
    assert np.allclose(full.utilization[ok], util[ok], rtol=1e-12)
    assert np.allclose(full.cost[ok], cost[ok], rtol=1e-12)


def test_stem_moment_table_is_conservative_and_close():
    # the interpolated envelope (one call at 41 depths) against the stability module's
    # own stem_moment at arbitrary depths: never below it (convexity), within 1 %
    from wallrun import stability
    d = demand(3.0, water=Water(height_above_base_m=1.0))
    sec = SectionArrays.of([Section(0.25, 0.3, 2.8, 0.7, 0.3), Section(0.25, 0.4, 3.0, 0.8, 0.45)])
    cond = conditions_of(sec.base_thickness_m, Rows.of([d], [2]), d)
    at = ev_._stem_moment_at(ev_.Situations(sec, cond, BASIS), sec, cond)
    for y in np.linspace(0.05, 2.6, 23):
        ex = stability.stem_moment(sec, cond, BASIS, np.full(2, y))
        ap = at(np.full(2, y))
        assert np.all(ap >= ex - 1e-9)
        assert np.all(ap <= ex * 1.01 + 0.05)


def test_shared_stem_moment_columns_give_each_candidate_its_own_curtailment():
    # candidates of equal stem height, base thickness and water share one column of the
    # stem moment table (and one curtailment per distinct stem and bars): the table's
    # moments, the stop heights and the steel equal those of a table with a column of
    # its own for every candidate; two demands (water on one), a grid sample
    from wallrun import stability, structure
    water = Water(level_m=41.6)  # founding 0.45 m apart, the stem heights equal
    ds = [demand(3.0, water=water), demand(3.0, z_front=40.45, water=water)]
    g = grid_for(ds[0], 0.1)
    v = g.every(3)
    sec = g.sections(np.vstack([v, v]))
    rows = Rows.of(ds, [len(v), len(v)])
    cond = conditions_of(sec.base_thickness_m, rows, ds[0])
    allx = ev_.Situations(sec, cond, BASIS)
    shared = ev_._stem_moment_at(allx, sec, cond)
    assert shared.M.shape[1] < len(sec) // 20  # columns are shared widely
    n = len(sec)
    own_M = np.asarray(allx.stem_moment(shared.frac[:, None] * shared.hc[shared.column][None, :]))
    own = structure.StemMomentTable(own_M, shared.frac, shared.hc[shared.column], np.arange(n))
    np.testing.assert_array_equal(shared.M[:, shared.column], own.M)
    for y in (0.3, 1.1, 2.7):
        np.testing.assert_array_equal(shared(np.full(n, y)), own(np.full(n, y)))
    h_c = shared.hc[shared.column]
    kw = dict(stem_height_m=h_c, limit=ev_.limit(BASIS))
    a = structure.design_reinforcement(sec, allx.member_actions(), allx.qp(), BASIS,
                                       stem_moment_at=shared, **kw)
    b = structure.design_reinforcement(sec, allx.member_actions(), allx.qp(), BASIS,
                                       stem_moment_at=own, **kw)
    assert np.isfinite(a.stem_curtail_m).sum() > 10
    np.testing.assert_array_equal(a.stem_curtail_m, b.stem_curtail_m)
    np.testing.assert_array_equal(a.steel_kg_per_m, b.steel_kg_per_m)
    # and a plain function of the depth (no table) curtails alike where it agrees
    plain = structure.design_reinforcement(sec, allx.member_actions(), allx.qp(), BASIS,
                                           stem_moment_at=lambda y: own(y), **kw)
    np.testing.assert_array_equal(plain.stem_curtail_m, a.stem_curtail_m)


def test_stem_moment_table_of_distinct_stems_out_of_order():
    # every stem its own and the batch not in the order of the distinct stems (the
    # taller wall first): each candidate's column is its own, at its own depths; the
    # stability module's own stem_moment at the same depths is the check value
    from wallrun import stability
    ds = [demand(4.0), demand(2.0)]
    sec = SectionArrays.of([Section(0.25, 0.40, 2.8, 0.7, 0.40),
                            Section(0.25, 0.30, 1.6, 0.4, 0.30)])
    rows = Rows.of(ds, [1, 1])
    cond = conditions_of(sec.base_thickness_m, rows, ds[0])
    allx = ev_.Situations(sec, cond, BASIS)
    assert list(allx.stem_columns()[0]) == [1, 0]  # the distinct stems, sorted
    at = ev_._stem_moment_at(allx, sec, cond)
    for y in ([3.0, 1.0], [0.5, 0.5], [4.0, 2.0]):
        exact = stability.stem_moment(sec, cond, BASIS, np.array(y))
        got = at(np.array(y))
        assert np.all(got >= exact - 1e-9) and np.all(got <= exact * 1.01 + 0.05)
    # and a candidate's design is the same in any batch order
    fwd = ev_.evaluate(sec, rows, ds[0], BASIS, Costing())
    rev = ev_.evaluate(sec.subset([1, 0]), Rows.of(ds[::-1], [1, 1]), ds[0], BASIS, Costing())
    assert fwd.cost[0] == rev.cost[1] and fwd.cost[1] == rev.cost[0]


def test_steep_backfill_is_flagged_not_raised():
    # phi'_k = 35 deg: phi'_d = atan(tan 35 / 1.25) = 29.26 deg in EQU and DA1-2 (hand
    # calculation of EN 1997-1 2.4.6.2 Eq. 2.2); a slope of 30 deg reaches it: no
    # active limit state, so every path returns a flagged nominal design
    d = demand(3.0, backfill=Backfill(friction_angle_deg=35.0, slope_deg=30.0))
    sd = bespoke([d], BASIS, Costing(), 0.05)[0]
    assert sd.status == "flagged" and sd.checks == ()
    assert math.isnan(sd.edge_pressure_sls_kpa)
    assert "backfill slope 30.0 deg >= phi'_d 29.3 deg (EQU)" in sd.reason
    assert sd.reinforcement is not None and sd.cost_per_m > 0
    assert not section_problems(SectionArrays.of([sd.section])).any()
    types = (cat("T1", (12, 200), (0.25, 0.3, 2.0, 0.5, 0.3)),
             cat("T2", (16, 200), (0.25, 0.35, 2.6, 0.6, 0.35)))
    sc = cat_mod.catalogue_designs([d], BASIS, Costing(), types, 0.05)[0]
    assert sc.status == "flagged" and sc.section_type == "T1" and sc.checks == ()
    assert "no active limit state" in sc.reason


# --- catalogue -----------------------------------------------------------------------------

def cat(name, bars, dims, dist=(12, 200)):
    tt, ts, B, toe, tb = dims
    return CatalogueSection(section=name, stem_top_m=tt, stem_base_m=ts, base_width_m=B,
                            toe_m=toe, base_thickness_m=tb, key_depth_m=0.0, key_width_m=0.0,
                            stem_bar_mm=bars[0], stem_spacing_mm=bars[1], heel_bar_mm=bars[0],
                            heel_spacing_mm=bars[1], toe_bar_mm=bars[0], toe_spacing_mm=bars[1],
                            dist_bar_mm=dist[0], dist_spacing_mm=dist[1])


def test_catalogue_type_failing_only_structurally_is_not_chosen():
    # "LIGHT" has a generous base (stability passes) but light bars; "HEAVY" the same
    # outline with heavier bars and a thicker stem and base (dearer).
    # distribution bars carrying the 7.3.2 restraint steel of each thickness (H16@100 for
    # 300 mm, H20@100 for 400 mm), so that only the main bars differ
    light = cat("LIGHT", (12, 250), (0.25, 0.30, 2.6, 0.7, 0.30), dist=(16, 100))
    heavy = cat("HEAVY", (20, 150), (0.25, 0.40, 2.7, 0.7, 0.40), dist=(20, 100))
    d = demand(2.8)
    ev = ev_.evaluate_at([cat_mod.catalogue_section(light)], d, BASIS, Costing(),
                         given=cat_mod.catalogue_bars(light, BASIS))
    failing = {e.check for e in ev.listing(0) if e.utilization > 1.0}
    assert failing and failing <= STRUCTURAL, failing  # only structural checks fail
    got = cat_mod.catalogue_designs([d, demand(1.2), demand(5.0)], BASIS, Costing(),
                                    (light, heavy), 0.05)
    assert got[0].section_type == "HEAVY" and got[0].status == "ok"
    # at a low wall the light type passes and, being cheaper, is chosen
    assert got[1].section_type == "LIGHT" and got[1].status == "ok"
    # nothing passes at 5 m: flagged with the best failing type and its check
    assert got[2].status == "flagged" and "no catalogue type passes" in got[2].reason


def test_search_checks_fewer_than_the_grid():
    st = []
    bespoke([demand(2.0)], COARSE, Costing(), 0.1, stats=st)
    n_grid = len(grid_for(demand(2.0), 0.1).every())
    assert 0 < st[0].checked < n_grid
    assert search.reference_heights(2.0) == (2.0,)
    assert search.reference_heights(2.1) == (2.25, 2.0)


@pytest.mark.parametrize("name, d, basis", CASES, ids=[c[0] for c in CASES])
def test_priced_equals_evaluate(name, d, basis):
    # the cost table of a rationalised set designs the structure only where stability
    # passes: its ok, cost and bars must be those of the full evaluation, on a sample of
    # a coarse grid mixing candidates that fail stability, fail the structure and pass
    v, sec, rows = coarse_sample(d, basis, 1500, 5)
    ev = ev_.evaluate(sec, rows, d, basis, Costing())
    pr = ev_.priced(sec, rows, d, basis, Costing())
    assert 0 < len(pr.rows) < len(v) and 0 < pr.ok.sum()
    np.testing.assert_array_equal(pr.ok, ev.ok)
    np.testing.assert_array_equal(pr.cost[ev.ok], ev.cost[ev.ok])
    assert np.all(np.isinf(pr.cost[~ev.ok]))
    for i in np.flatnonzero(ev.ok)[::25]:
        assert pr.reinforcement(int(i)) == ev.structure.reinforcement(int(i))
    failing = np.setdiff1d(np.arange(len(v)), pr.rows)
    with pytest.raises(ValueError):
        pr.reinforcement(int(failing[0]))


# --- check listings -----------------------------------------------------------------------

def test_listing_is_the_entries_of_each_check_read_one_at_a_time():
    # Evaluation.listing (columns, made into entries when read) against the plain
    # reference's entries,
    # which reads each CheckArray of candidate i on its own: the same entries, the same
    # governing rows (the worst of each check and combination)
    from plain_reference import entries

    d = demand(3.2, water=Water(height_above_base_m=0.8))
    g = grid_for(d, 0.1)
    v = g.every(40)
    ev = ev_.evaluate(g.sections(v), Rows.of([d], [len(v)]), d, BASIS, Costing())
    assert len(v) >= 5
    for i in range(len(v)):
        lst = ev.listing(i)
        ref = entries(ev.checks, i)
        assert lst == ref and ref == lst and tuple(lst) == ref
        assert len(lst) == len(ref) and lst[0] == ref[0] and lst[1:] == ref[1:]
        assert hash(lst) == hash(ref)
        assert lst.max_utilization() == max(e.utilization for e in ref)
        assert sum(e.governs for e in lst) == len({(e.check, e.combination) for e in ref})


def test_listing_columns_read_as_its_entries_and_pickled_without_them():
    # what the writers read of a listing's columns (largest_by, governing, named, rows)
    # is what its entries say; a listing made of entries (CheckListing.of) keeps their
    # governs flags and circles; the made entries are not pickled
    import pickle

    from wallrun.results import CheckEntry, CheckListing, Circle

    d = demand(2.6, water=Water(height_above_base_m=0.5))
    ev = ev_.evaluate_at([Section(0.25, 0.35, 2.4, 0.6, 0.35, 0.0, 0.0)], d, BASIS, Costing())
    fresh = ev.listing(0)
    sent = pickle.dumps(fresh)
    full = tuple(ev.listing(0))
    for names in ({"sliding"}, {"bearing", "stem_bending"}, {"no such check"},
                  {e.check for e in full}):
        want = tuple(e for e in full if e.check in names)
        assert ev.listing(0).named(names) == want
    for field, attr in ((0, "check"), (1, "combination")):
        want = {}
        for e in full:
            key = getattr(e, attr)
            want[key] = max(want.get(key, e.utilization), e.utilization)
        assert ev.listing(0).largest_by(field) == want
    top = max(full, key=lambda e: e.utilization)
    assert ev.listing(0).governing() == (top.check, top.combination)
    assert [CheckEntry(*r) for r in ev.listing(0).rows()] == list(full)
    read = ev.listing(0)
    tuple(read)  # its entries are made and kept
    assert pickle.dumps(read) == sent  # ... and not sent
    back = pickle.loads(sent)
    assert isinstance(back, CheckListing) and back == full
    assert back.max_utilization() == max(e.utilization for e in full)
    assert back + () == full and () + back == full
    # of entries: the flags and circles as given (an overall entry appended)
    extra = CheckEntry("overall", "DA1-2", "circle", 10.0, 20.0, "kNm/m", 0.5, "EN 1997-1 11",
                       True, Circle(1.0, 2.0, 3.0))
    mixed = CheckListing.of(full + (extra,))
    assert tuple(mixed) == full + (extra,) and mixed.named({"overall"}) == (extra,)
    assert CheckListing.of(mixed) is mixed and len(CheckListing.of(())) == 0


def _panel(approach: str, q: float, z_top: float, z_front: float, wall_top: float,
           backfill: Backfill, foundation: Foundation, water: Water | None = None,
           step: float = 0.05) -> tuple[Basis, Demand]:
    """(basis, demand) of a panel of an invented wall: the approach's recommended
    factors, a surcharge q (kPa), the panel's levels (m) and ground, founded at least
    0.6 m deep in 0.15 m steps, on a grid of ``step`` (m)."""
    from wallrun.settings import Loads
    basis = Basis(factors=resolve(approach),
                  design=Design(approach=approach, dimension_step_m=step),
                  loads=Loads(surcharge_kpa=q))
    return basis, Demand(z_top=z_top, z_front=z_front, backfill=backfill,
                         foundation=foundation, surcharge_kpa=q, water=water,
                         wall_top_m=wall_top, min_founding_depth_m=0.6, founding_step_m=0.15)


def _reference_on_widths(d: Demand, basis: Basis, step: float, widths: tuple[int, int],
                         stem_top: int | None = None):
    """``cheapest_on_grid`` of the demand's grid cut to base widths ``widths`` (steps),
    its other bounds kept (the stem top's up to ``stem_top`` steps where given): a
    reference of a tall panel in seconds."""
    from dataclasses import replace as _replace
    part = _replace(grid_for(d, step, basis.design), b=widths)
    if stem_top is not None:
        part = _replace(part, tt=(part.tt[0], stem_top))
    return cheapest_on_grid(d, basis, Costing(), step, grid=part, widen=False)


def test_thickness_trades_thicken_a_stem_of_one_thickness_whole():
    # A 5.054 m panel of an invented wall (drawn by benchmarks/walls.py --seed 21, its
    # second wall): DA2; backfill 19.8 kN/m3, 30 degrees, a 20 degree slope; base
    # 17.6 kN/m3, 35 degrees, c' 5 kPa, cu 60 kPa; surcharge 5 kPa; 10 cm grid. The
    # search settled on a 0.6 m base under a 0.3 m stem, 1.36 % above the exhaustive
    # reference's section (14 s): the same 9.0 m base and toe, a step thinner, under a
    # stem two steps thicker at its base and its top, which the trades now reach. The
    # reference here is cut to that width, its stem top bound moved as the search and
    # the whole reference move it (its cheapest on the whole grid is the same).
    basis, d = _panel("DA2", 5.0, 55.054, 50.0, 55.154,
                      Backfill(unit_weight_kn_m3=19.8, friction_angle_deg=30.0, slope_deg=20.0),
                      Foundation(unit_weight_kn_m3=17.6, friction_angle_deg=35.0,
                                 cohesion_kpa=5.0, undrained_strength_kpa=60.0), step=0.1)
    ref, ref_cost = _reference_on_widths(d, basis, 0.1, (90, 90), stem_top=9)
    assert (ref.base_thickness_m, ref.stem_base_m, ref.stem_top_m) == pytest.approx((0.5, 0.5, 0.5))
    sd = bespoke([d], basis, Costing(), 0.1)[0]
    assert sd.cost_per_m <= ref_cost * (1 + 1e-9), (sd.cost_per_m, ref_cost)


def test_reference_searched_again_from_its_lattice_neighbours():
    # The reference demand at 4.75 m of an invented wall (DA3; backfill 20 kN/m3, 36
    # degrees; base 19 kN/m3, 22 degrees; surcharge 20 kPa; 10 cm grid). Its cold search
    # alone settles 0.83 % above the grid's cheapest (2,496.9 against 2,476.3 a metre);
    # searched again from the cold sections of the lattice heights below (4.5 and 4.25
    # m) it is at it.
    basis, d = _panel("DA3", 20.0, 4.75, 0.0, 4.75,
                      Backfill(unit_weight_kn_m3=20.0, friction_angle_deg=36.0),
                      Foundation(unit_weight_kn_m3=19.0, friction_angle_deg=22.0), step=0.1)
    assert search.reference(d, 4.75) == d
    assert [n.h for n in search.lattice_neighbours(d)] == pytest.approx([4.5, 4.25])
    ref, ref_cost = cheapest_on_grid(d, basis, Costing(), 0.1)

    def reference_cost(neighbours):
        refs: dict = {}
        with pytest.MonkeyPatch.context() as mp:
            mp.setattr(search, "NEIGHBOURS", neighbours)
            bespoke([d], basis, Costing(), 0.1, references=refs)
        g = grid_for(d, 0.1, basis.design)
        sec = g.sections(refs[d].best[None, :])
        return float(ev_.evaluate(sec, Rows.of([d], [1]), d, basis, Costing()).cost[0])

    cold = reference_cost(0)
    assert cold > ref_cost * 1.005, (cold, ref_cost)
    assert reference_cost(search.NEIGHBOURS) == pytest.approx(ref_cost, rel=1e-9)


def test_search_moves_the_stem_top_bound_the_planes_best_sits_on():
    # A 6.14 m panel of an invented wall (DA3; backfill 19 kN/m3, 32 degrees, an 18
    # degree slope; base 18 kN/m3, 23 degrees, c' 6 kPa, cu 70 kPa; surcharge 10 kPa; 5 cm
    # grid). Its cheapest section found with wider moves has a stem top of 0.40 m,
    # beyond the grid's 0.30 m bound: the code before ended 2.1 % above it (4,791.0
    # against 4,691.8 a metre, a base 0.25 m wider with a stem top on that bound) as
    # the bound moved only where a descent's best sat on it, before the planes.
    basis, d = _panel("DA3", 10.0, 61.277956, 55.142057, 61.35,
                      Backfill(unit_weight_kn_m3=19.0, friction_angle_deg=32.0, slope_deg=18.0),
                      Foundation(unit_weight_kn_m3=18.0, friction_angle_deg=23.0,
                                 cohesion_kpa=6.0, undrained_strength_kpa=70.0))
    g = grid_for(d, 0.05, basis.design)
    assert g.tt[1] * 0.05 == pytest.approx(0.30)
    sd = bespoke([d], basis, Costing(), 0.05)[0]
    ref, ref_cost = _reference_on_widths(d, basis, 0.05, (180, 180), stem_top=11)
    assert ref.stem_top_m > 0.30 + 1e-9
    assert sd.cost_per_m <= ref_cost * 1.005, (sd.cost_per_m, ref_cost)


def _whole_grid_reaches_keyed_reference(basis: Basis, d: Demand, step: float) -> Section:
    """Assert that the low panel ``d`` is searched whole and its design costs what the
    exhaustive reference's keyed section costs; that section."""
    assert search.small_grid(grid_for(d, step, basis.design), d.h)
    sd = bespoke([d], basis, Costing(), step)[0]
    ref, ref_cost = cheapest_on_grid(d, basis, Costing(), step)
    assert ref is not None and ref.key_depth_m > 0
    assert sd.cost_per_m == pytest.approx(ref_cost, rel=1e-9), (sd.cost_per_m, ref_cost)
    return ref


def test_search_on_a_low_wall_takes_its_whole_grid():
    # A 0.68 m panel of an invented wall (DA1; backfill 19.5 kN/m3, 31 degrees, a 12
    # degree slope; base 19 kN/m3, 28 degrees, c' 3 kPa; water 0.9 m above the base;
    # surcharge 10 kPa; 5 cm grid). Without a key, sliding asks for a 2.0 m base; the
    # grid's cheapest is a keyed base 1.45 m wide, and a key alone costs more at 2.0 m,
    # so no move crossed between them: the search ended 2.07 % above it. A low wall's
    # whole grid is searched (search.low_wall_moves), and the result is the
    # exhaustive reference's.
    basis, d = _panel("DA1", 10.0, 65.271566, 64.588466, 65.4,
                      Backfill(unit_weight_kn_m3=19.5, friction_angle_deg=31.0, slope_deg=12.0),
                      Foundation(unit_weight_kn_m3=19.0, friction_angle_deg=28.0,
                                 cohesion_kpa=3.0),
                      Water(height_above_base_m=0.9))
    _whole_grid_reaches_keyed_reference(basis, d, 0.05)


def test_search_on_a_low_wall_at_a_coarse_step_takes_its_whole_grid():
    # A 0.82 m panel of an invented wall (DA3; backfill 18.5 kN/m3, 30 degrees, a 9
    # degree slope; base 18 kN/m3, 24 degrees, c' 9 kPa; surcharge 14 kPa; 10 cm grid
    # of some 7,000 entries). The search's moves ended 1.84 % above the grid's
    # cheapest, a keyed base 1.6 m wide against 2.2 m without a key. A wall up to 1.0 m
    # with a small grid is searched whole, so the result is the exhaustive reference's.
    basis, d = _panel("DA3", 14.0, 65.239617, 64.422006, 65.25,
                      Backfill(unit_weight_kn_m3=18.5, friction_angle_deg=30.0, slope_deg=9.0),
                      Foundation(unit_weight_kn_m3=18.0, friction_angle_deg=24.0,
                                 cohesion_kpa=9.0), step=0.1)
    assert d.h > 0.8
    ref = _whole_grid_reaches_keyed_reference(basis, d, 0.1)
    assert ref.base_width_m == pytest.approx(1.6)


def test_low_wall_whole_grid_widens_where_the_reference_widens():
    # A 0.533 m panel of an invented wall (drawn by benchmarks/walls.py --seed 21, its
    # third wall): DA3; backfill 19.4 kN/m3, 33 degrees, a 16 degree slope; base
    # 17.6 kN/m3, 33 degrees, c' 5 kPa; water 1.53 m above the base; surcharge 10 kPa;
    # 5 cm grid of 302,400 entries. While nothing passed the search widened its grid
    # (to 1,705,200) and so did not search it whole, and its planes left a keyed base
    # with the toe at half its width: it ended 1.12 % above the exhaustive reference,
    # whose cheapest sits beyond that bound (a toe of 0.75 m on a 1.15 m base). The
    # low wall's first grid is walked whole and widened as the reference widens it.
    basis, d = _panel("DA3", 10.0, 50.533, 50.0, 50.633,
                      Backfill(unit_weight_kn_m3=19.4, friction_angle_deg=33.0, slope_deg=16.0),
                      Foundation(unit_weight_kn_m3=17.6, friction_angle_deg=33.0,
                                 cohesion_kpa=5.0),
                      Water(height_above_base_m=1.53))
    ref = _whole_grid_reaches_keyed_reference(basis, d, 0.05)
    assert 2 * ref.toe_m > ref.base_width_m  # beyond the first grid's toe bound


def test_low_wall_whole_grid_widens_from_a_first_grid_where_nothing_passes():
    # A 0.651 m panel of an invented wall (drawn by benchmarks/walls.py --seed 21, its
    # first wall): DA1; backfill 17.4 kN/m3, 34 degrees, a 10 degree slope; base
    # 19.9 kN/m3, 28 degrees, c' 5 kPa; water 1.93 m above the base (capped at the
    # backfill); surcharge 20 kPa; 10 cm grid. No section of the first grid passes;
    # the search found one beyond it (a 3.3 m base 0.7 m thick) and ended 4.3 % above
    # the exhaustive reference, which widens where the least utilised sits, four times,
    # to a 0.6 m stem on a toe of 2.5 m. The whole grid is walked the same way.
    basis, d = _panel("DA1", 20.0, 50.651, 50.0, 50.751,
                      Backfill(unit_weight_kn_m3=17.4, friction_angle_deg=34.0, slope_deg=10.0),
                      Foundation(unit_weight_kn_m3=19.9, friction_angle_deg=28.0,
                                 cohesion_kpa=5.0),
                      Water(height_above_base_m=1.93), step=0.1)
    assert cheapest_on_grid(d, basis, Costing(), 0.1, widen=False) == (None, math.inf)
    ref = _whole_grid_reaches_keyed_reference(basis, d, 0.1)
    assert ref.stem_base_m == pytest.approx(0.6) and ref.toe_m == pytest.approx(2.5)


def test_search_moves_the_stem_forward_on_a_wider_base():
    # A 4.51 m panel of an invented wall (DA3; backfill 20.5 kN/m3, 34 degrees, an 8
    # degree slope; base 20 kN/m3, 31 degrees; surcharge 18 kPa; 5 cm grid). Both its
    # references' sections, the exhaustive references' of those demands, have a 0.35 m
    # base with a toe of 1.0 to 1.3 m; the search settled at a toe of 0.8 m, 2.0 % above
    # a base a step thinner and 0.3 m wider whose toe is 0.9 m longer (the stem moved
    # forward by more than the added width): beyond the planes' toe window. The window of a wider
    # base now reaches as many steps further as the base is wider, and the search's
    # section is the grid's cheapest on base widths 4.35 to 4.6 m.
    basis, d = _panel("DA3", 18.0, 63.865815, 59.354463, 63.9,
                      Backfill(unit_weight_kn_m3=20.5, friction_angle_deg=34.0, slope_deg=8.0),
                      Foundation(unit_weight_kn_m3=20.0, friction_angle_deg=31.0))
    sd = bespoke([d], basis, Costing(), 0.05)[0]
    g = grid_for(d, 0.05, basis.design)
    ref, ref_cost = _reference_on_widths(d, basis, 0.05, (87, 92))
    assert tuple(g.vector_of(ref)) == (89, 34, 6, 6, 5, 0, 0)
    assert sd.cost_per_m == pytest.approx(ref_cost, rel=1e-9), (sd.cost_per_m, ref_cost)


def test_second_descent_between_references_in_different_basins():
    # A 3.74 m panel of an invented wall (DA1; backfill 19.5 kN/m3, 29 degrees, a 16
    # degree slope; base 19 kN/m3, 25 degrees, c' 4 kPa; water 1.0 m above the base;
    # surcharge 12 kPa; 5 cm grid). The taller reference's section (a 0.65 m base)
    # passes here and the search settled near it at 2,760.9 a metre; the lower
    # reference's base is 0.2 m thinner, and a descent from it reaches a 0.45 to 0.5 m
    # base: the references' sections are BASIN_STEPS or more apart, so the demand gets
    # the second descent. The whole grid's cheapest (the exhaustive reference, some
    # minutes) is 2,538.74 at a base 6.6 m wide; on widths 6.45 to 6.65 m the result
    # is within 0.5 % of the grid's cheapest.
    basis, d = _panel("DA1", 12.0, 64.217253, 60.481476, 64.35,
                      Backfill(unit_weight_kn_m3=19.5, friction_angle_deg=29.0, slope_deg=16.0),
                      Foundation(unit_weight_kn_m3=19.0, friction_angle_deg=25.0,
                                 cohesion_kpa=4.0),
                      Water(height_above_base_m=1.0))
    sd = bespoke([d], basis, Costing(), 0.05)[0]
    assert sd.section.base_thickness_m <= 0.5 and sd.cost_per_m < 2600.0
    ref, ref_cost = _reference_on_widths(d, basis, 0.05, (129, 133))
    assert ref is not None and ref_cost <= sd.cost_per_m <= 1.005 * ref_cost


def test_search_finds_a_thinner_base_on_a_wider_one():
    # A 4.87 m panel of an invented wall over clay (DA1; backfill 20 kN/m3, 31 degrees,
    # a 14 degree slope; base 18 kN/m3, 24 degrees, c' 6 kPa, cu 55 kPa; water 1.5 m
    # above the base; surcharge 8 kPa; 10 cm grid). Both its references' sections have
    # a 0.7 m base, and the search settled there at 3652.7 a metre, 9.0 % above the
    # grid's cheapest: B 8.1, toe 1.0, base 0.4, stem 0.3 m at 3352.01 (a base 0.3 m
    # thinner on one 0.7 m wider; the whole grid's reference, 10 s, gives it). The
    # planes of a thinner base on a wider one (search.BASE_PLANES) reach it. The
    # reference is taken on base widths 8.0 to 8.2 m.
    basis, d = _panel("DA1", 8.0, 60.383387, 55.51476, 60.45,
                      Backfill(unit_weight_kn_m3=20.0, friction_angle_deg=31.0, slope_deg=14.0),
                      Foundation(unit_weight_kn_m3=18.0, friction_angle_deg=24.0,
                                 cohesion_kpa=6.0, undrained_strength_kpa=55.0),
                      Water(height_above_base_m=1.5), step=0.1)
    sd = bespoke([d], basis, Costing(), 0.1)[0]
    ref, ref_cost = _reference_on_widths(d, basis, 0.1, (80, 82))
    assert ref is not None and ref_cost == pytest.approx(3352.01, abs=0.01)
    assert sd.cost_per_m <= ref_cost * 1.005, (sd.cost_per_m, ref_cost)


def test_screen_in_pieces_gives_the_numbers_of_one_call(monkeypatch):
    # the structure designed a few rows at a time (evaluate.STRUCTURE_ROWS) gives every
    # candidate the numbers of one whole call: those passing stability, and the
    # complete utilizations of a batch in which nothing passes
    d1, d2 = demand(3.0), demand(4.5)
    v1 = grid_for(d1, 0.1).every(3)
    g2 = grid_for(d2, 0.1)
    v2 = g2.every(4)
    alone = ev_.screen(g2.sections(v2), Rows.of([d2], [len(v2)]), d2, BASIS, Costing(),
                       np.zeros(len(v2), dtype=int), np.array([False]))
    # a batch of d2 in which nothing passes (each failing by a finite margin)
    v2 = v2[~alone[0] & np.isfinite(alone[2])][:40]
    g1 = grid_for(d1, 0.1)
    sec = SectionArrays(**{f: np.concatenate([np.asarray(getattr(s, f), dtype=float)
                                              for s in (g1.sections(v1), g2.sections(v2))])
                           for f in ("stem_top_m", "stem_base_m", "base_width_m", "toe_m",
                                     "base_thickness_m", "key_depth_m", "key_width_m")})
    rows = Rows.of([d1, d2], [len(v1), len(v2)])
    seg = np.repeat([0, 1], [len(v1), len(v2)])
    complete = np.array([False, True])
    whole = ev_.screen(sec, rows, d1, BASIS, Costing(), seg, complete)
    monkeypatch.setattr(ev_, "STRUCTURE_ROWS", 7)
    pieces = ev_.screen(sec, rows, d1, BASIS, Costing(), seg, complete)
    assert whole[0][:len(v1)].sum() > 7 and not whole[0][len(v1):].any()
    assert np.isfinite(whole[1][len(v1):]).sum() > 7  # costed: their structure was designed
    for a, b in zip(whole, pieces):
        assert np.array_equal(a, b, equal_nan=True)

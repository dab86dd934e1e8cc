"""Tests of wallrun.lockstep: many bespoke searches of one ground run together.

References outside the module: ``sizing.evaluate`` one demand at a time (the joined
evaluation must give the same numbers), ``sizing``'s own cold search and its
sequential warm-started designer (the optimum), and brute force over a whole grid.
All example data are invented. A dimension step of 0.1 m keeps the grids small.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from wallrun import lockstep, sizing
from wallrun.factors import resolve
from wallrun.section import SectionArrays
from wallrun.settings import Backfill, Basis, Foundation, Water

BASIS = Basis(factors=resolve("DA1"))
STEP = 0.1

WET = Water(height_above_base_m=0.8)
PERCHED = Water(level_m=41.2)
WEAK = Foundation(friction_angle_deg=24.0, unit_weight_kn_m3=18.0)
CLAY = Foundation(friction_angle_deg=26.0, undrained_strength_kpa=60.0)
SLOPE = Backfill(slope_deg=15.0)


def demand(h, z_front=40.0, water=None, foundation=Foundation(), backfill=Backfill(),
           surcharge=10.0, top_extra=0.0):
    return sizing.Demand(z_top=z_front + h, z_front=z_front, backfill=backfill,
                         foundation=foundation, surcharge_kpa=surcharge, water=water,
                         wall_top_m=z_front + h + top_extra)


def varied() -> list[sizing.Demand]:
    """About 30 invented demands on five grounds, heights 0.8 to 6 m."""
    out = []
    for k, h in enumerate((0.8, 1.3, 1.9, 2.6, 3.4, 4.3, 5.1, 6.0)):
        out.append(demand(h, z_front=40.0 + 0.07 * k, top_extra=0.1 * (k % 2)))
    for h in (1.1, 2.2, 3.3, 4.4):
        out.append(demand(h, water=WET))
    for h in (1.5, 2.5, 3.6):
        out.append(demand(h, water=PERCHED, z_front=40.0))
    for h in (1.2, 2.4, 3.5, 4.8):
        out.append(demand(h, backfill=SLOPE))
    for h in (0.9, 1.7, 2.9, 3.9, 5.5):
        out.append(demand(h, foundation=WEAK))  # keys on weak ground
    for h in (1.4, 2.7, 4.0):
        out.append(demand(h, foundation=CLAY, surcharge=15.0))
    out.append(demand(3.4, z_front=40.12))  # a near twin of a height above
    return out


@pytest.fixture(scope="module")
def many():
    ds = varied()
    lk = lockstep.Lockstep(BASIS, None, STEP)
    return ds, lk.design_many(ds), lk


# --- the joined evaluation is the one-at-a-time evaluation --------------------------------

def test_joined_evaluation_equals_sizing_evaluate():
    ds = [demand(1.6, water=WET), demand(2.9, water=WET, z_front=40.13),
          demand(4.1, water=WET, z_front=39.96, top_extra=0.3)]
    rng = np.random.default_rng(3)
    secs = []
    for d in ds:
        b = sizing.bounds_for(d, 0.05)
        v = sizing.grid(b, 3)
        secs.append(b.sections(v[rng.choice(len(v), 40, replace=False)]))
    joined = lockstep._concat(secs)
    zt, zf, top = lockstep._levels(ds, [len(s) for s in secs])
    ev = lockstep.evaluate_full(joined, zt, zf, top, ds[0], BASIS, None)
    seg = np.repeat(np.arange(3), 40)
    ok_s, cost_s, util_s = lockstep.evaluate_search(joined, zt, zf, top, seg,
                                                    np.array([True, False, True]), ds[0],
                                                    BASIS, None)
    pos = 0
    for d, s in zip(ds, secs):
        one = sizing.evaluate(s, d, BASIS, None)
        sl = slice(pos, pos + len(s))
        assert np.allclose(ev.utilization[sl], one.utilization, rtol=1e-12, atol=1e-12)
        assert np.array_equal(ev.ok[sl], one.ok)
        assert np.allclose(ev.cost[sl], one.cost, rtol=1e-12)
        assert np.allclose(ev.actions.edge_pressure()[sl], one.actions.edge_pressure())
        scr = sizing.evaluate(s, d, BASIS, None, curtail=False, screen=True,
                              complete_if_none=d is not ds[1])
        assert np.array_equal(ok_s[sl], scr.ok)
        assert np.allclose(util_s[sl], scr.utilization, rtol=1e-12, atol=1e-12)
        fin = np.isfinite(scr.cost)
        assert np.array_equal(np.isfinite(cost_s[sl]), fin)
        assert np.allclose(cost_s[sl][fin], scr.cost[fin], rtol=1e-12)
        pos += len(s)


# --- the same optimum as sizing -------------------------------------------------------------

@pytest.mark.parametrize("d", [demand(1.3), demand(3.4, water=WET), demand(2.4, backfill=SLOPE),
                               demand(2.9, foundation=WEAK)])
def test_single_demand_is_sizing_cold_search(d):
    """With no other design to start from, the lockstep search is sizing's cold search
    step for step (same section, checks and cost); the improvement pass only helps."""
    ref = sizing.Designer(BASIS, None, STEP, warm=False).bespoke(d)
    got = lockstep.Lockstep(BASIS, None, STEP, polish_passes=0).design_many([d])[0]
    assert got.section == ref.section
    assert got.checks == ref.checks
    assert got.cost_per_m == ref.cost_per_m and got.status == ref.status
    assert got.governing == ref.governing and got.z_found == ref.z_found
    assert got.reinforcement == ref.reinforcement
    assert math.isclose(got.edge_pressure_sls_kpa, ref.edge_pressure_sls_kpa, rel_tol=1e-12)
    pol = lockstep.design_many([d], BASIS, None, STEP)[0]
    assert pol.cost_per_m <= ref.cost_per_m + 1e-9


def test_many_agree_with_sequential_designer(many):
    """Against sizing's sequential designer (what ``sizing.bespoke`` runs: warm starts
    from the taller designs of the same ground). Both are heuristics over the same grid;
    the lockstep warm starts come from other neighbours, so a design may settle on
    another local optimum: most agree within 0.1 %, the total within 0.1 %, none far."""
    ds, got, _ = many
    ref = sizing.Designer(BASIS, None, STEP).design_many(ds)
    rel = np.array([(g.cost_per_m - r.cost_per_m) / r.cost_per_m for g, r in zip(got, ref)])
    assert [g.status for g in got] == [r.status for r in ref]
    assert np.mean(rel <= 1e-3) >= 0.9, rel
    assert rel.max() <= 0.03, rel
    tot_g = sum(g.cost_per_m for g in got)
    tot_r = sum(r.cost_per_m for r in ref)
    assert tot_g <= tot_r * 1.001


@pytest.mark.parametrize("d", [demand(1.0), demand(1.2, water=WET), demand(1.1, foundation=WEAK)])
def test_equals_brute_force_on_small_grids(d):
    """The cheapest section over the whole grid of ``bounds_for`` (brute force, every
    candidate, no pruning) against the lockstep design, both costed without curtailment
    (the search's ranking)."""
    bounds = sizing.bounds_for(d, STEP)
    best, best_cost = sizing.brute_force(d, BASIS, None, bounds)
    got = lockstep.design_many([demand(0.9), d, demand(1.35, water=d.water,
                                                        foundation=d.foundation)],
                               BASIS, None, STEP)[1]
    ev = sizing.evaluate(SectionArrays.of([got.section]), d, BASIS, None, curtail=False)
    assert bool(ev.ok[0])
    assert float(ev.cost[0]) <= best_cost * 1.001 + 1e-9


# --- every design passes when rechecked one at a time --------------------------------------

def test_ok_designs_pass_an_independent_recheck(many):
    ds, got, _ = many
    assert all(g.status == "ok" for g in got)
    for d, g in zip(ds, got):
        ev = sizing.evaluate(SectionArrays.of([g.section]), d, BASIS, None)
        assert bool(ev.ok[0]), (d, g.governing)
        assert math.isclose(float(ev.cost[0]), g.cost_per_m, rel_tol=1e-12)
        assert math.isclose(float(ev.utilization[0]), g.utilization, rel_tol=1e-12)
        assert g.utilization <= 1.0 + 1e-9
        assert g.section_type == "" and g.reason == ""
        assert {c.check for c in g.checks} >= {"overturning", "sliding", "bearing",
                                               "stem_bending", "heel_bending"}


def test_order_duplicates_and_later_calls(many):
    ds, got, lk = many
    twice = ds[::-1] + ds[:3]
    again = lk.design_many(twice)  # all cached: the same objects, in the order asked
    assert again[:len(ds)] == got[::-1] and again[len(ds):] == got[:3]
    new = demand(2.0, z_front=40.03)  # a later call warm-starts from the designs made
    before = lk.evaluated
    d_new = lk.design_many([new])[0]
    assert d_new.status == "ok" and lk.evaluated > before
    ref = sizing.Designer(BASIS, None, STEP, warm=False).bespoke(new)
    assert d_new.cost_per_m <= ref.cost_per_m * 1.01


def test_small_chunks_change_nothing():
    ds = [demand(h, water=WET) for h in (1.2, 2.0, 2.8, 3.6)]
    a = lockstep.Lockstep(BASIS, None, STEP).design_many(ds)
    lk = lockstep.Lockstep(BASIS, None, STEP, chunk=700)
    b = lk.design_many(ds)
    assert [x.section for x in a] == [x.section for x in b]
    assert [x.cost_per_m for x in a] == [x.cost_per_m for x in b]


# --- flags as sizing ------------------------------------------------------------------------

def test_flags_as_sizing():
    steep = demand(2.0, backfill=Backfill(slope_deg=35.0))  # above phi'_d = 32 deg
    tall = demand(8.6)
    none = demand(0.0)
    got = lockstep.design_many([steep, tall, none, demand(1.5)], BASIS, None, STEP)
    ref_steep = sizing._flag_steep(steep, BASIS, None, sizing._steep(steep, BASIS)[2], STEP)
    assert got[0].status == "flagged" and got[0].reason == ref_steep.reason
    assert got[0].section == ref_steep.section and got[0].checks == ()
    assert got[0].cost_per_m == ref_steep.cost_per_m and math.isnan(got[0].utilization)
    assert got[1] == sizing._flag_beyond(tall, BASIS, None, STEP)
    assert "beyond the supported range" in got[1].reason
    assert got[2].status == "flagged" and "nothing to retain" in got[2].reason
    assert got[3].status == "ok"


def test_round_picks_bisect():
    done = np.zeros(9, dtype=bool)
    assert lockstep.Lockstep._round_picks(done, False) == [0, 8]
    done[[0, 8]] = True
    assert lockstep.Lockstep._round_picks(done, True) == [4]
    done[4] = True
    assert lockstep.Lockstep._round_picks(done, True) == [2, 6]
    assert lockstep.Lockstep._round_picks(np.zeros(5, dtype=bool), True) == [2]
    assert lockstep._chunks([5, 5, 20, 1, 1], 10) == [(0, 2), (2, 3), (3, 5)]


# --- a taller panel never gets a cheaper design -----------------------------------------------

@settings(max_examples=6, deadline=None)
@given(st.lists(st.floats(0.8, 4.5), min_size=8, max_size=14, unique=True), st.integers(0, 2))
def test_taller_panel_never_cheaper(hs, ground):
    """Demands of one ground that differ only in z_top: the design costs never fall
    with the height (the taller designs' sections and bars are tried by the shorter
    ones). The reference is the ordering itself."""
    kw = [{}, {"water": WET}, {"foundation": WEAK}][ground]
    ds = [demand(round(h, 2), **kw) for h in sorted(set(round(h, 2) for h in hs))]
    got = lockstep.Lockstep(BASIS, None, STEP).design_many(ds)
    assert all(g.status == "ok" for g in got)
    c = np.array([g.cost_per_m for g in got])
    assert np.all(np.diff(c) >= -1e-6), c

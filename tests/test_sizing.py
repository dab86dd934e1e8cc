"""Tests of wallrun.sizing: the bespoke search, the catalogue choice, the rationalised set.

The references are brute force over the same grid (search), exhaustive enumeration of
type sets (rationalised choice), and each design's own checks; all example data are
invented.
"""

from __future__ import annotations

import itertools
import math

import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

from wallrun import sizing
from wallrun.section import SectionArrays, section_problems
from wallrun.factors import resolve
from wallrun.settings import Backfill, Basis, CatalogueSection, Foundation, Water

BASIS = Basis(factors=resolve("DA1"))
STRUCTURAL = {"stem_bending", "stem_shear", "heel_bending", "heel_shear", "toe_bending",
              "toe_shear", "crack_spacing", "min_steel"}


def demand(h, z_front=40.0, water=None, foundation=Foundation(), surcharge=10.0):
    return sizing.Demand(z_top=z_front + h, z_front=z_front, backfill=Backfill(),
                         foundation=foundation, surcharge_kpa=surcharge, water=water,
                         wall_top_m=z_front + h)


# --- conditions -------------------------------------------------------------------------

def test_conditions_founding_and_water():
    # z_front = 40.07, min depth 0.6, step 0.15: t_base 0.3 -> 40.07 - 0.6 = 39.47 -> 39.45;
    # t_base 0.8 -> 39.27 -> 39.15 (hand calculation of design-basis section 1)
    d = demand(2.0, z_front=40.07, water=Water(height_above_base_m=0.5))
    c = sizing.conditions_for(d, np.array([0.3, 0.8]))
    assert np.allclose(c.z_found, [39.45, 39.15])
    assert np.allclose(c.water_level_m, [39.95, 39.65])
    c2 = sizing.conditions_for(demand(2.0, water=Water(level_m=40.5)), 0.4)
    assert c2.water_level_m == 40.5 and math.isclose(c2.z_found, 39.3)
    assert hash(d) == hash(demand(2.0, z_front=40.07, water=Water(height_above_base_m=0.5)))


# --- search against brute force ----------------------------------------------------------

def small_bounds(h):
    """A small grid (step 0.1) around the proportions of a wall of retained height h."""
    H = h + 0.6
    r = lambda x: round(round(x / 0.1) * 0.1, 6)  # noqa: E731
    return sizing.SearchBounds(step=0.1, b_lo=r(0.35 * H), b_hi=r(1.1 * H), tb_lo=0.3,
                               tb_hi=0.5, ts_lo=0.2, ts_hi=0.4, tt_lo=0.2, tt_hi=0.3,
                               key_depths=(0.4,), key_widths=(0.3,))


@pytest.mark.parametrize("h, extra", [(1.6, {}), (2.8, {}),
                                      (2.2, {"water": Water(height_above_base_m=0.8)}),
                                      (2.0, {"foundation": Foundation(friction_angle_deg=26.0)})])
def test_search_equals_brute_force(h, extra):
    d = demand(h, **extra)
    b = small_bounds(h)
    n_grid = len(sizing.grid(b, 1))
    assert 200 < n_grid < 20000
    ref, ref_cost = sizing.brute_force(d, BASIS, None, b)
    got, got_cost, n_eval = sizing.search(d, BASIS, None, b, stride=2, seeds=3)
    assert ref is not None, "the small grid must hold a passing section"
    assert got_cost == pytest.approx(ref_cost, rel=1e-9)
    # equal least cost; the section itself may differ only by a tie (a toe length that
    # changes no quantity)
    assert got == ref or got_cost == pytest.approx(ref_cost, rel=1e-12)
    assert n_eval < n_grid  # the search did not just enumerate the grid


# --- bespoke designs ------------------------------------------------------------------

def test_bespoke_passes_every_check_and_is_flagged_beyond_range():
    des = sizing.Designer(BASIS, None, 0.05)
    d = des.bespoke(demand(2.5))
    assert d.status == "ok" and d.utilization <= 1.0 + 1e-9
    assert all(c.utilization <= 1.0 + 1e-9 for c in d.checks)
    names = {c.check for c in d.checks}
    assert {"overturning", "sliding", "bearing", "stem_bending", "heel_bending"} <= names
    s = d.section
    assert s.stem_top_m >= 0.2 - 1e-9 and s.base_thickness_m >= s.stem_base_m - 1e-9
    for v in (s.base_width_m, s.toe_m, s.stem_base_m, s.base_thickness_m):
        assert abs(v / 0.05 - round(v / 0.05)) < 1e-6
    # the same demand again is the cached object
    assert des.bespoke(demand(2.5)) is d
    far = des.bespoke(demand(9.2))
    assert far.status == "flagged" and "beyond the supported range" in far.reason


@settings(max_examples=6, deadline=None)
@given(st.floats(1.0, 3.5), st.floats(0.1, 1.5))
def test_taller_panel_never_cheaper(h, dh):
    # a fresh designer for each pair: the property must come from the design itself
    des = sizing.Designer(BASIS, None, 0.05)
    lo, hi = demand(round(h, 2)), demand(round(h + dh, 2))
    d_lo, d_hi = des.design_many([lo, hi])
    assert d_lo.status == d_hi.status == "ok"
    assert d_lo.cost_per_m <= d_hi.cost_per_m + 1e-6


# --- catalogue ------------------------------------------------------------------------

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
    light = cat("LIGHT", (12, 250), (0.25, 0.30, 2.6, 0.7, 0.30))
    heavy = cat("HEAVY", (20, 150), (0.25, 0.40, 2.7, 0.7, 0.40))
    catalogue = (light, heavy)
    d = demand(2.8)
    ev_light = sizing.evaluate(sizing.SectionArrays.of([sizing.catalogue_section(light)]), d,
                               BASIS, None, given=sizing.catalogue_bars(light, BASIS))
    failing = {c.check for c, u in zip(ev_light.checks, ev_light.U[:, 0]) if u > 1.0}
    assert failing and failing <= STRUCTURAL, failing  # only structural checks fail
    chosen = sizing.catalogue_design(d, BASIS, None, catalogue)
    assert chosen.section_type == "HEAVY" and chosen.status == "ok"
    # at a low wall the light type passes and, being cheaper, is chosen
    low = sizing.catalogue_design(demand(1.2), BASIS, None, catalogue)
    assert low.section_type == "LIGHT" and low.status == "ok"
    # nothing passes at 5 m: flagged with the best failing type and its check
    tall = sizing.catalogue_design(demand(5.0), BASIS, None, catalogue)
    assert tall.status == "flagged" and "no catalogue type passes" in tall.reason


# --- rationalised set -----------------------------------------------------------------

def nested_matrix(rng, n, T):
    """Nested types: type t serves demands up to its capacity, dearer with capacity."""
    sev = np.sort(rng.uniform(0, 1, n))
    cap = np.sort(rng.uniform(0.2, 1.0, T))
    cap[-1] = 1.0
    L = rng.uniform(2, 8, n)
    base = np.cumsum(rng.uniform(1, 3, T))
    C = np.where(sev[:, None] <= cap[None, :], (base[None, :] + sev[:, None]) * L[:, None],
                 np.inf)
    perm = rng.permutation(n)  # rows in any order: dp_types sorts them itself
    return C[perm]


@pytest.mark.parametrize("seed", range(12))
def test_dp_types_equals_exhaustive_for_nested_types(seed):
    rng = np.random.default_rng(seed)
    n, T, K = int(rng.integers(3, 9)), int(rng.integers(2, 8)), int(rng.integers(1, 5))
    C = nested_matrix(rng, n, T)
    ref, _ = sizing.exhaustive_types(C, K)
    total, cols, assign = sizing.dp_types(C, K)
    assert len(cols) <= K
    assert total == pytest.approx(ref, rel=1e-12)
    assert np.sum(C[np.arange(n), assign]) == pytest.approx(ref, rel=1e-12)


@pytest.mark.parametrize("seed", range(6))
def test_choose_types_equals_exhaustive_on_any_small_matrix(seed):
    rng = np.random.default_rng(100 + seed)
    C = rng.uniform(1, 10, (6, 7))
    C[rng.uniform(size=C.shape) < 0.3] = np.inf
    C[:, 0] = 20.0  # one type serves everything
    ref, _ = sizing.exhaustive_types(C, 3)
    total, cols, assign = sizing.choose_types(C, 3)
    assert total == pytest.approx(ref) and len(cols) <= 3
    # brute force over every assignment of rows to every set of 3 columns
    best = min(float(np.min(C[:, list(s)], axis=1).sum())
               for s in itertools.combinations(range(7), 3))
    assert total == pytest.approx(best)


def test_rationalise_at_most_max_types_and_every_panel_rechecked():
    des = sizing.Designer(BASIS, None, 0.05)
    hs = [1.0, 1.3, 1.7, 2.1, 2.6, 1.3]
    demands = [demand(h) for h in hs]
    lengths = [8.0] * len(hs)
    r = sizing.rationalise_detail(demands, lengths, BASIS, None, 2, designer=des)
    assert 1 <= len(r.types) <= 2
    assert len(r.designs) == len(demands) and len(set(d.section for d in r.designs)) <= 2
    for dm, d in zip(demands, r.designs):
        assert d.status == "ok"
        # independent recheck of the assigned section with its bars at the panel
        ev = sizing.evaluate(sizing.SectionArrays.of([d.section]), dm, BASIS, None,
                             given=d.reinforcement)
        assert bool(ev.ok[0])
    # the chosen total is no worse than the best exhaustive pair of the candidate types
    own = des.design_many(list(dict.fromkeys(demands)))
    types = list(dict.fromkeys(o.section for o in own))
    best = math.inf
    for pair in itertools.combinations(types, min(2, len(types))):
        tot = 0.0
        for dm, L in zip(demands, lengths):
            ev = sizing.evaluate(sizing.SectionArrays.of(list(pair)), dm, BASIS, None)
            c = np.where(ev.ok, ev.cost, np.inf).min()
            tot += c * L
        best = min(best, tot)
    # the envelope cage of a type can only add steel: within a few per cent of the
    # matrix optimum, never below it by more than rounding
    assert r.total_cost >= best * 0.999
    assert r.total_cost <= best * 1.05


def test_stem_moment_table_is_conservative_and_close():
    # the interpolated envelope (one call at 41 depths) against the stability module's
    # own stem_moment at arbitrary depths: never below it (convexity), within 1 %
    from wallrun import stability
    d = demand(3.0, water=Water(height_above_base_m=1.0))
    sec = sizing.SectionArrays.of([sizing.Section(0.2, 0.3, 2.8, 0.7, 0.3),
                                   sizing.Section(0.2, 0.4, 3.0, 0.8, 0.45)])
    cond = sizing.conditions_for(d, sec.base_thickness_m)
    at = sizing._stem_moment_table(stability.evaluate_all(sec, cond, BASIS), sec, cond)(None)
    for y in np.linspace(0.05, 2.6, 23):
        ex = stability.stem_moment(sec, cond, BASIS, np.full(2, y))
        ap = at(np.full(2, y))
        assert np.all(ap >= ex - 1e-9)
        assert np.all(ap <= ex * 1.01 + 0.05)


def test_rationalise_four_types_two_grounds_independent_recheck():
    # an invented run: heights 0.8..3.2 m over two foundation soils, max_types = 4
    soft = Foundation(friction_angle_deg=26.0, allowable_bearing_kpa=180.0)
    hs = [0.8, 1.1, 1.5, 1.9, 2.4, 2.8, 3.2, 1.2, 1.8, 2.5, 3.0]
    grounds = [Foundation()] * 7 + [soft] * 4
    demands = [demand(h, foundation=f) for h, f in zip(hs, grounds)]
    lengths = [7.5] * len(hs)
    r = sizing.rationalise_detail(demands, lengths, BASIS, None, 4,
                                  designer=sizing.Designer(BASIS, None, 0.05))
    def cage(rf):
        return tuple((b.bar_mm, b.spacing_mm) for b in (rf.stem, rf.heel, rf.toe,
                     rf.stem_horizontal, rf.base_distribution, rf.stem_front)) + (
            rf.stem_curtail_m,)
    used = {(d.section, cage(d.reinforcement)) for d in r.designs}
    assert len(used) <= 4 and len(r.types) <= 4
    assert max(r.type_of) < len(r.types) and min(r.type_of) >= 0
    for dm, d in zip(demands, r.designs):
        assert d.status == "ok", d.reason
        ev = sizing.evaluate(sizing.SectionArrays.of([d.section]), dm, BASIS, None,
                             given=d.reinforcement)
        assert bool(ev.ok[0]) and float(ev.utilization[0]) <= 1.0 + 1e-9


def test_screened_evaluation_decides_like_the_full_one():
    # screening (structure only for candidates passing stability) changes no decision:
    # the same candidates pass, with the same cost and utilization; a screened-out
    # candidate fails stability and has its structural checks not evaluated (nan)
    d = demand(3.0)
    b = sizing.bounds_for(d, 0.05)
    v = sizing.grid(b, 3)
    sec = b.sections(v)
    full = sizing.evaluate(sec, d, BASIS, None, curtail=False)
    scr = sizing.evaluate(sec, d, BASIS, None, curtail=False, screen=True, complete_if_none=False)
    assert full.ok.any() and (~full.ok).any()
    assert np.array_equal(full.ok, scr.ok)
    assert np.allclose(full.cost[full.ok], scr.cost[scr.ok], rtol=1e-12)
    assert np.allclose(full.utilization[full.ok], scr.utilization[scr.ok], rtol=1e-12)
    out = ~np.isfinite(scr.steel_kg_per_m)
    assert out.any()
    n_stab = len(full.checks) - len(full.structure.checks)
    stab_u = full.U[:n_stab].max(axis=0)
    assert np.all(stab_u[out] > 1.0)
    assert np.allclose(scr.utilization[out], stab_u[out])
    k = int(np.flatnonzero(out)[0])
    assert all(np.isnan(c.effect[k]) for c in scr.checks[n_stab:])
    # nothing passing and complete_if_none: every candidate in full
    bad = sec.subset(np.flatnonzero(~full.ok)[:50])
    a = sizing.evaluate(bad, d, BASIS, None, curtail=False, screen=True)
    f2 = sizing.evaluate(bad, d, BASIS, None, curtail=False)
    assert np.allclose(a.utilization, f2.utilization, rtol=1e-12)


def test_steep_backfill_is_flagged_not_raised():
    # phi'_k = 35 deg: phi'_d = atan(tan 35 / 1.25) = 29.26 deg in EQU and DA1-2 (hand
    # calculation of EN 1997-1 2.4.6.2 Eq. 2.2); a slope of 30 deg reaches it: no
    # active limit state, so every path returns a flagged nominal design
    bf = Backfill(friction_angle_deg=35.0, slope_deg=30.0)
    d = sizing.Demand(z_top=43.0, z_front=40.0, backfill=bf, foundation=Foundation(),
                      surcharge_kpa=10.0, water=None, wall_top_m=43.0)
    sd = sizing.bespoke(d, BASIS, None, designer=sizing.Designer(BASIS, None, 0.05))
    assert sd.status == "flagged" and sd.checks == ()
    assert math.isnan(sd.edge_pressure_sls_kpa)
    assert "backfill slope 30.0 deg >= phi'_d 29.3 deg (EQU)" in sd.reason
    assert sd.reinforcement is not None and sd.cost_per_m > 0
    b = sizing.bounds_for(d, 0.05)
    assert b.b_lo <= sd.section.base_width_m <= b.b_hi
    assert not section_problems(SectionArrays.of([sd.section])).any()
    types = (cat("T1", (12, 200), (0.25, 0.3, 2.0, 0.5, 0.3)),
             cat("T2", (16, 200), (0.25, 0.35, 2.6, 0.6, 0.35)))
    sc = sizing.catalogue_design(d, BASIS, None, types)
    assert sc.status == "flagged" and sc.section_type == "T1" and sc.checks == ()
    assert "no active limit state" in sc.reason
    rs = sizing.rationalise([d, demand(2.0)], [7.5, 7.5], BASIS, None, 2)
    assert rs[0].status == "flagged" and "slope" in rs[0].reason
    assert rs[1].status == "ok"

"""Tests of wallrun.sizing.rationalise: the choice of a few section types at least total
cost (design-basis section 6), against enumeration of every set on small cases, and the
shared cage of each type checked at every panel it serves. All data invented."""

from __future__ import annotations

import math

import numpy as np
import pytest

from wallrun.factors import resolve
from wallrun.settings import Backfill, Basis, Foundation
from wallrun.sizing import Costing, Demand, bespoke
from wallrun.sizing import evaluate as ev_
from wallrun.sizing import rationalise as rat

BASIS = Basis(factors=resolve("DA1"))


def nested_matrix(rng, n, T):
    """Nested types: type t serves demands up to its capacity, dearer with capacity."""
    sev = np.sort(rng.uniform(0, 1, n))
    cap = np.sort(rng.uniform(0.2, 1.0, T))
    cap[-1] = 1.0
    L = rng.uniform(2, 8, n)
    base = np.cumsum(rng.uniform(1, 3, T))
    C = np.where(sev[:, None] <= cap[None, :], (base[None, :] + sev[:, None]) * L[:, None],
                 np.inf)
    perm = rng.permutation(n)
    return C[perm], perm


@pytest.mark.parametrize("seed", range(10))
def test_nested_choice_equals_enumeration(seed):
    rng = np.random.default_rng(seed)
    n, T = int(rng.integers(3, 10)), int(rng.integers(2, 8))
    C, perm = nested_matrix(rng, n, T)
    rate = float(rng.uniform(0, 40))
    for cap in (1, 2, 3, "auto"):
        ch = rat.choose(C, rate, cap)
        ref, _ = rat.enumerate_sets(C, rate, T if cap == "auto" else cap)
        assert ch.exact and ch.method == "dynamic programming"
        assert ch.total == pytest.approx(ref, rel=1e-9)
        assert cap == "auto" or len(ch.columns) <= cap


@pytest.mark.parametrize("seed", range(8))
def test_any_small_matrix_choice_equals_enumeration(seed):
    # not nested: the integer program (scipy.optimize.milp) finds the least total
    rng = np.random.default_rng(100 + seed)
    n, T = int(rng.integers(3, 9)), int(rng.integers(3, 7))
    C = rng.uniform(10, 100, (n, T))
    C[rng.random((n, T)) < 0.3] = np.inf
    C[:, int(rng.integers(T))] = rng.uniform(50, 150, n)  # one column serves all
    rate = float(rng.uniform(0, 60))
    for cap in (2, "auto"):
        ch = rat.choose(C, rate, cap)
        ref, _ = rat.enumerate_sets(C, rate, T if cap == "auto" else cap)
        assert ch.exact
        assert ch.total == pytest.approx(ref, rel=1e-7)


def ranked_alike_matrix(rng, n, T):
    """n rows drawn from a few rankings: each row is one of four base rows scaled by a
    panel length and shifted by a cost common to its columns (the ranking kept), with
    its infeasible cells."""
    base = rng.uniform(10, 100, (4, T))
    base[rng.random((4, T)) < 0.3] = np.inf
    base[:, int(rng.integers(T))] = rng.uniform(50, 150, 4)  # one column serves all
    pick = rng.integers(0, 4, n)
    return base[pick] * rng.uniform(1, 6, n)[:, None] + rng.uniform(0, 5, n)[:, None]


@pytest.mark.parametrize("seed", range(6))
def test_merged_rows_keep_every_sets_total(seed):
    """Rows that rank the columns alike are served by the same column of any set: the
    merged matrix has fewer rows and, for every set of columns, the same total
    (checked over all sets), so the integer program on it finds the least total."""
    import itertools

    rng = np.random.default_rng(300 + seed)
    n, T = int(rng.integers(8, 16)), int(rng.integers(3, 6))
    C = ranked_alike_matrix(rng, n, T)
    M = rat.merged_rows(C)
    assert M.shape[1] == T and M.shape[0] <= 4 < n
    for k in range(1, T + 1):
        for combo in itertools.combinations(range(T), k):
            assert rat._total(M, combo, 0.0) == pytest.approx(rat._total(C, combo, 0.0),
                                                              rel=1e-12)
    rate = float(rng.uniform(0, 60))
    got = rat.milp_sets(C, rate, T)
    ref, _ = rat.enumerate_sets(C, rate, T)
    assert got is not None and got[0] == pytest.approx(ref, rel=1e-7)


@pytest.mark.parametrize("seed", range(6))
def test_dynamic_programme_over_runs_equals_over_rows(seed):
    """Nested columns with many rows of a few severities (runs of rows ranking the
    columns alike): the programme over the runs gives the least cost with at most k
    groups that the programme over the rows gives, for every k (a run is never split
    in an optimal partition; with exactly k groups the rows may split runs needlessly),
    and assignments that cost what it says."""
    rng = np.random.default_rng(400 + seed)
    n, T = int(rng.integers(12, 30)), int(rng.integers(2, 6))
    C, _ = nested_matrix(rng, n, T)
    C = C[rng.integers(0, n, 3 * n)]  # repeated rows: runs once ordered
    order = np.lexsort((np.min(C, axis=1), -np.isfinite(C).sum(axis=1)))
    assert rat.nested(C, order)
    ref, _ = rat.dp_by_count(C, order, T)
    got, assignment = rat.dp_by_runs(C, order, T)
    assert np.minimum.accumulate(got) == pytest.approx(np.minimum.accumulate(ref), rel=1e-12)
    for k in range(1, T + 1):
        a = assignment(k)
        if np.isfinite(got[k]):
            assert np.all(a >= 0)
            assert C[np.arange(len(C)), a].sum() == pytest.approx(got[k], rel=1e-12)


def test_auto_count_balances_type_rate_against_panel_cost():
    # two panel groups: a cheap type for the small ones saves 10 x 3 = 30 per panel group;
    # worth it when one type costs less than that
    C = np.array([[10.0, 40.0], [10.0, 40.0], [10.0, 40.0], [np.inf, 50.0]])
    assert rat.choose(C, 20.0, "auto").columns == (0, 1)  # 30 + 50 + 2 x 20 = 120 < 170
    assert rat.choose(C, 100.0, "auto").columns == (1,)  # 170 + 100 < 30 + 50 + 200
    assert rat.choose(C, 20.0, 1).columns == (1,)


def demand(h, z_front=40.0, foundation=Foundation()):
    return Demand(z_top=z_front + h, z_front=z_front, backfill=Backfill(),
                  foundation=foundation, surcharge_kpa=10.0, water=None,
                  wall_top_m=z_front + h)


def test_types_share_one_cage_that_passes_at_every_panel():
    hs = [0.9, 1.3, 1.7, 2.1, 2.6, 3.0, 1.5, 2.4]
    grounds = [Foundation()] * 6 + [Foundation(friction_angle_deg=26.0)] * 2
    ds = [demand(h, foundation=f) for h, f in zip(hs, grounds)]
    own = bespoke(ds, BASIS, Costing(), 0.1)
    r = rat.rationalise(ds, [7.5] * len(ds), own, BASIS, Costing(), "auto", 2400.0)
    assert 1 <= len(r.types) < len(set(o.section for o in own))
    # named in order of size, S01 the smallest
    assert list(r.types.names) == [f"S{k + 1:02d}" for k in range(len(r.types))]
    keys = [rat.size_key(s) for s in r.types.sections]
    assert keys == sorted(keys)
    for d, sd in zip(ds, r.designs):
        assert sd.status == "ok", sd.reason
        t = r.types.names.index(sd.section_type)
        cage = r.types.cages[t]
        assert sd.section == r.types.sections[t]
        # independent recheck with the type's own cage: every check, and its curtailment
        ev = ev_.evaluate_at([sd.section], d, BASIS, Costing(), given=cage)
        assert bool(ev.ok[0])
        assert rat.curtail_check(ev, 0, cage) == ""
        assert sd.reinforcement.stem_curtail_m == cage.stem_curtail_m
    # the total is the panels' cost with their type plus the types
    tot = sum(sd.cost_per_m * 7.5 for sd in r.designs) + 2400.0 * len(r.types)
    assert r.total_cost == pytest.approx(tot, rel=1e-9)


def test_a_type_whose_stop_is_too_low_does_not_serve():
    # the shared curtailment is checked at each panel: a cage whose stem bars stop too
    # low for a taller panel is refused there with the reason
    d_lo, d_hi = demand(1.8), demand(3.2)
    own = bespoke([d_lo, d_hi], BASIS, Costing(), 0.1)
    sec = own[1].section
    ev_hi = ev_.evaluate_at([sec], d_hi, BASIS, Costing(), given=own[1].reinforcement)
    need = ev_hi.structure.reinforcement(0).stem_curtail_m
    assert need is not None and need > 0.2
    from dataclasses import replace
    low = replace(own[1].reinforcement, stem_curtail_m=round(need - 0.2, 3))
    why = rat.curtail_check(ev_hi, 0, low)
    assert "needs them to" in why
    types = rat.SectionSet(("S01",), (sec,), (low,))
    (opts,) = rat.designs_with(types, [d_hi], BASIS, Costing())
    assert not opts[0].ok and rat.best_type(opts) is None
    sd = rat.least_failing(opts)
    assert sd.status == "flagged" and "stop" in sd.reason


def test_nested_detects_a_prefix_break():
    C = np.array([[1.0, 2.0], [np.inf, 3.0], [1.5, 3.5]])
    assert not rat.nested(C, np.arange(3))
    assert rat.nested(C, np.array([0, 2, 1]))
    assert math.isinf(rat.choose(np.full((2, 2), np.inf), 1.0, "auto").total)


def test_rows_no_type_serves_are_left_out_with_a_given_order():
    C = np.array([[10.0, 20.0], [np.inf, np.inf], [12.0, 25.0], [np.inf, 30.0]])
    ch = rat.choose(C, 5.0, "auto", order=np.array([0, 2, 1, 3]))
    assert ch.assign[1] == -1 and ch.assign[3] == 1
    ref, _ = rat.enumerate_sets(C[[0, 2, 3]], 5.0, 2)
    assert ch.total == pytest.approx(ref)


def test_practical_count_per_ground():
    ds = [demand(h) for h in (1.0, 1.6, 2.9)] + [
        demand(h, foundation=Foundation(friction_angle_deg=26.0)) for h in (2.0, 2.2)]
    # ceil(1.9 / 0.5) = 4 on the first ground, 1 on the second
    assert rat.practical_count(ds) == 5


def test_dominated_columns_are_left_out_without_changing_the_least_total():
    rng = np.random.default_rng(7)
    C = rng.uniform(10, 50, (6, 4))
    C = np.hstack([C, C[:, :1] + 5.0, C[:, 1:2]])  # a dearer copy, an equal copy
    keep = rat.undominated(C)
    assert not keep[4] and not keep[5] and keep[0] and keep[1]
    ch = rat.choose(C, 10.0, "auto")
    assert ch.total == pytest.approx(rat.enumerate_sets(C, 10.0, 6)[0])


@pytest.mark.parametrize("chunk", [None, 4])
def test_several_cages_in_one_evaluation_give_each_row_its_own_numbers(chunk, monkeypatch):
    # type_evaluations checks every type at every demand in one evaluation, a cage per
    # row: each row equals that type checked alone with its cage (evaluate_at), its
    # listing, cost, bars and the stop its own curtailment needs included; a cage with
    # no front-face bars (a catalogue's) and one with a bend radius to keep mix freely
    from dataclasses import replace

    ds = [demand(h) for h in (1.6, 2.4, 3.3)] + [
        demand(2.0, foundation=Foundation(friction_angle_deg=27.0))]
    own = bespoke(ds, BASIS, Costing(), 0.1)
    bare = replace(own[1].reinforcement, stem_front=None)
    heel = own[2].reinforcement.heel
    bent = replace(own[2].reinforcement, heel=replace(heel, bend_r_mm=(heel.bend_r_mm or 0) + 40))
    types = rat.SectionSet(("S01", "S02", "S03"), (own[0].section, own[1].section,
                                                   own[2].section),
                           (own[0].reinforcement, bare, bent))
    if chunk is not None:  # at most 4 rows an evaluation: one demand each
        monkeypatch.setattr(rat, "CHUNK", chunk)
    evs = rat.type_evaluations(types, ds, BASIS, Costing())
    assert sorted(k for ks, _ in evs for k in ks) == list(range(len(ds)))
    assert len(evs) == (2 if chunk is None else len(ds))
    for ks, ev in evs:
        for t, (sec, cage) in enumerate(zip(types.sections, types.cages)):
            for j, k in enumerate(ks):
                row = t * len(ks) + j
                alone = ev_.evaluate_at([sec], ds[k], BASIS, Costing(), given=cage)
                assert bool(ev.ok[row]) == bool(alone.ok[0])
                assert ev.cost[row] == alone.cost[0]
                assert ev.listing(row) == alone.listing(0)
                assert ev.stem_stop(row) == alone.stem_stop(0)
                assert ev.structure.reinforcement(row) == alone.structure.reinforcement(0)
    # the kept radius is the larger one, where a row has it
    (ks, ev), = [e for e in evs if 2 in e[0]]
    r = ev.structure.reinforcement(2 * len(ks) + ks.index(2))
    assert r.heel.bend_r_mm >= (heel.bend_r_mm or 0) + 40

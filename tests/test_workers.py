"""wallrun.workers: a batch checked half here and half by the forked copy gives exactly
the numbers of checking it in one process (the reference is the one-process path of
the same function and ``sizing.evaluate``); errors in the copy reach the caller; a
block leaves no process behind. Invented demands and candidates."""

from __future__ import annotations

import multiprocessing as mp

import numpy as np
import pytest

from wallrun import lockstep, sizing, workers
from wallrun.factors import resolve
from wallrun.settings import Backfill, Basis, Foundation

BASIS = Basis(factors=resolve("DA1"))
needs_fork = pytest.mark.skipif("fork" not in mp.get_all_start_methods() or workers._cores() < 2,
                                reason="needs fork and two cores")


def _demand(h, z_front=52.0, water=None):
    return sizing.Demand(z_top=z_front + h, z_front=z_front, backfill=Backfill(slope_deg=8.0),
                         foundation=Foundation(friction_angle_deg=29.0), surcharge_kpa=12.0,
                         water=water, wall_top_m=z_front + h + 0.1)


def _batch(seed=5, per=3000):
    """Candidates of three demands (9,000 rows: above SPLIT_FROM), joined."""
    rng = np.random.default_rng(seed)
    ds = [_demand(2.1), _demand(3.7, 51.93), _demand(5.2, 52.04)]
    secs = []
    for d in ds:
        b = sizing.bounds_for(d, 0.05)
        v = sizing.grid(b, 2)
        secs.append(b.sections(v[rng.choice(len(v), per, replace=False)]))
    joined = lockstep._concat(secs)
    zt, zf, top = lockstep._levels(ds, [per] * 3)
    seg = np.repeat(np.arange(3), per)
    return ds, secs, joined, zt, zf, top, seg


def _same(a, b):
    assert np.array_equal(a[0], b[0])
    assert np.array_equal(a[2], b[2])  # utilizations bit for bit
    assert np.array_equal(np.isnan(a[1]), np.isnan(b[1]))
    assert np.array_equal(a[1][~np.isnan(a[1])], b[1][~np.isnan(b[1])])


@needs_fork
@pytest.mark.parametrize("complete", [(False, False, False), (True, True, True)])
def test_split_batch_equals_one_process(complete):
    ds, secs, joined, zt, zf, top, seg = _batch()
    comp = np.array(complete)
    ref = lockstep.evaluate_search(joined, zt, zf, top, seg, comp, ds[0], BASIS, None)
    with workers.twin() as t:
        assert t is not None
        got = lockstep.evaluate_search(joined, zt, zf, top, seg, comp, ds[0], BASIS, None)
    _same(got, ref)
    # and against sizing's own one-demand evaluation of each batch
    for k, (d, s) in enumerate(zip(ds, secs)):
        one = sizing.evaluate(s, d, BASIS, None, curtail=False, screen=True,
                              complete_if_none=complete[k])
        sl = slice(3000 * k, 3000 * (k + 1))
        assert np.array_equal(got[0][sl], one.ok)
        assert np.allclose(got[2][sl], one.utilization, rtol=1e-12, atol=1e-12)


@needs_fork
def test_completion_of_a_batch_with_nothing_passing():
    """A demand whose candidates all fail (far too tall for them) completes its
    utilizations in full across the split, as in one process."""
    ds, secs, joined, zt, zf, top, seg = _batch(seed=9)
    zt = zt.copy()
    zt[seg == 0] += 4.0  # batch 0 now retains 6.1 m with sections sized for 2.1 m
    comp = np.array([True, False, True])
    ref = lockstep.evaluate_search(joined, zt, zf, top, seg, comp, ds[0], BASIS, None)
    assert not ref[0][seg == 0].any()
    with workers.twin():
        got = lockstep.evaluate_search(joined, zt, zf, top, seg, comp, ds[0], BASIS, None)
    _same(got, ref)


def _boom(arrays, message):
    raise ValueError(message)


@needs_fork
def test_an_error_in_the_copy_reaches_the_caller_and_nothing_is_left():
    arrays = {"x": np.arange(workers.SPLIT_FROM * 2, dtype=float)}
    with workers.twin() as t:
        with pytest.raises(ValueError, match="in the copy"):
            workers.split(_boom, arrays, ("in the copy",), cut=workers.SPLIT_FROM)
        proc = t._proc
    assert not proc.is_alive()
    assert workers.current() is None


def _double(arrays):
    return {"y": arrays["x"] * 2.0, "n": np.full(len(arrays["x"]), len(arrays["x"]))}


@needs_fork
def test_split_joins_rows_in_order_and_small_batches_stay_here():
    x = np.random.default_rng(1).normal(size=workers.SPLIT_FROM * 3)
    with workers.twin():
        out = workers.split(_double, {"x": x}, (), cut=1000)
        small = workers.split(_double, {"x": x[:10]}, (), cut=5)
    assert np.array_equal(out["y"], 2.0 * x)
    assert np.array_equal(out["n"][:1000], np.full(1000, 1000))  # the copy's half
    assert np.array_equal(small["n"], np.full(10, 10))  # not split


def test_without_a_block_everything_runs_here():
    x = np.arange(workers.SPLIT_FROM * 2, dtype=float)
    out = workers.split(_double, {"x": x}, (), cut=100)
    assert np.array_equal(out["n"], np.full(len(x), len(x)))

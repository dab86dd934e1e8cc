"""Bespoke designs of many panels at once: the searches of one ground run in lockstep.

The bespoke search of ``wallrun.sizing`` designs one demand at a time; each of its
``evaluate`` calls checks a few hundred candidates and pays a fixed numpy cost of the
order of milliseconds, so a long run of distinct panels spends most of its time in
that fixed cost. Stability and structure take levels (z_top, z_front, z_found, water)
that are arrays with one value per candidate, as long as the backfill, foundation,
surcharge and basis are shared. Here the searches of all the demands of one ground
advance together: at every step each still-active search hands over its batch of
candidates (the same moves as ``sizing._Search``: the coarse grid of a cold start, the
neighbourhoods of its descent, pruned by the same lower bound of the cost), the batches
are joined with per-candidate levels and checked in one call (stability for all,
structure for the stability passers), and the results go back to each search.

Warm starts. ``sizing.Designer`` designs the tallest demand of a ground cold and each
next one (in decreasing height) from the designs already made, which is a chain of one
demand after another. Here the demands of a ground, ordered by height, are designed in
rounds of bisection: round 0 the tallest and the shortest (cold starts), then in each
round the middle demand of every gap between designed ones, each warm-started from the
(at most four) designs nearest in retained height exactly as ``Designer`` does (their
sections tried as they are, then the descent from the nearest). About log2(n) rounds;
every round is one lockstep search. A warm start that finds nothing passing falls back
to the cold search, as in ``Designer``. The chosen candidate and the neighbours'
sections are then evaluated in full with curtailment (one joined call per round) and
the cheapest passing one is taken, as ``Designer._design`` does.

The result is the same kind of :class:`wallrun.sizing.SizedDesign` as
``sizing.bespoke`` (status, reason, checks from ``results.entries`` conventions,
utilization, governing, cost per metre, founding level, SLS edge pressure). Demands
beyond ``sizing.MAX_RETAINED_M`` or with a backfill slope at or above phi'_d are flagged
by sizing's own functions. The search is the same heuristic as sizing's; with other
neighbours in the warm starts it may settle on another local optimum, which is why
``tests/test_lockstep.py`` compares it with ``sizing`` cold searches and brute force.

After the rounds and the improvement pass, the taller-design passes
(``Lockstep._taller_sections``): a demand tries the cheaper designs of taller demands
under the same conditions but for the height, so that a taller panel never gets a
cheaper design. Inside a ``workers.twin()`` block (the pipeline opens one) half of
every large joined batch is checked by a forked copy of the process: the same numbers.

Units: m, kN, kPa; money per metre run.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from wallrun import panels, sizing, stability, structure, takeoff, workers
from wallrun.conditions import Conditions
from wallrun.members import MemberActions
from wallrun.section import Section, SectionArrays
from wallrun.settings import Basis
from wallrun.structure import _full

#: Largest number of candidates checked in one call (memory: every check is an array of
#: this length, several hundred of them live at once).
CHUNK = 60_000

_NDIM = sizing._NDIM
_TOL = sizing._TOL


# --- one demand's search state -------------------------------------------------------------

class _Store(sizing._Search):
    """The evaluated candidates of one demand (``sizing._Search`` without its
    evaluator: the lockstep driver evaluates and commits)."""

    def __init__(self, bounds: sizing.SearchBounds):
        super().__init__(bounds, None, None)



@dataclass
class _Request:
    v: np.ndarray
    codes: np.ndarray
    prune: bool


def _run(s: _Store, v, prune: bool = True):
    """Generator form of ``_Search.run``: yields the batch to evaluate (the driver
    prunes, evaluates and commits it)."""
    v, codes = s.fresh(v)
    if len(v):
        yield _Request(v, codes, prune)


def _local(s: _Store, start, radius: int = 1, max_iter: int = 60, extra=None,
           polish: bool = True, first_full: bool | None = None):
    """The moves of ``sizing.descent`` (the one-panel search's own), each
    neighbourhood yielded as a request for the joined evaluation."""
    for cand in sizing.descent(s, start, radius, max_iter, extra, polish, first_full):
        yield from _run(s, cand)


def _best_first(s: _Store, demand: sizing.Demand, rates, v, m: int):
    """Generator form of ``_Search.run_best_first`` (the cold start's coarse grid in
    increasing lower bound of the cost, until its m cheapest passing are known)."""
    v, _ = s.fresh(v)
    if len(v):
        lb = sizing.lower_bound_cost(s.bounds.sections(v), demand, rates)
        for part in sizing.best_first(s, v, lb, m):
            yield from _run(s, part, prune=False)


def _search(s: _Store, demand: sizing.Demand, rates, starts, stride: int, n_seeds: int,
            warm_polish: bool, first_full: bool | None = None):
    """The search of ``sizing.Designer._design`` (warm start, else cold start)."""
    if starts:
        yield from _local(s, starts[0], extra=np.array(starts), polish=warm_polish,
                          first_full=first_full)
    if s.best() is None:
        yield from _best_first(s, demand, rates, sizing.grid(s.bounds, stride), n_seeds)
        for v in s.seeds(n_seeds):
            yield from _local(s, v)


@dataclass
class _Task:
    demand: sizing.Demand
    bounds: sizing.SearchBounds
    store: _Store
    near: list
    gen: object = None
    req: _Request | None = None

    def advance(self) -> None:
        try:
            self.req = next(self.gen)
        except StopIteration:
            self.req = None


# --- joined evaluation ---------------------------------------------------------------------

def conditions_of(t_base, z_top, z_front, ground: sizing.Demand) -> Conditions:
    """Conditions of candidates with their own levels, (n,) arrays: the z_found and
    water level of ``sizing.conditions_for`` for each candidate's demand (levels of
    ``z_top``/``z_front``) and base thickness ``t_base``; backfill, foundation,
    surcharge, water kind and founding rules from ``ground`` (one ground per call)."""
    tb = np.asarray(t_base, dtype=float)
    zfr = np.asarray(z_front, dtype=float)
    z_found = panels.founding_level(zfr, tb, ground.min_founding_depth_m,
                                    ground.founding_step_m)
    level = sizing.water_level(ground.water, z_found)
    return Conditions(z_top=np.asarray(z_top, dtype=float), z_front=zfr, z_found=z_found,
                      backfill=ground.backfill, foundation=ground.foundation,
                      surcharge_kpa=float(ground.surcharge_kpa), water_level_m=level)


def _heights(sec, cond: Conditions, top):
    """Drawn stem height (top of base to max(wall top, z_top)) and founding depth, m:
    ``sizing._stem_heights`` with per-candidate levels."""
    zf = np.asarray(cond.z_found, dtype=float)
    hs = np.maximum(top, cond.z_top) - zf - np.asarray(sec.base_thickness_m, dtype=float)
    return hs, np.asarray(cond.z_front, dtype=float) - zf


def _lower_bound(sec, z_top, z_front, top, ground, rates) -> np.ndarray:
    """``sizing.lower_bound_cost`` with per-candidate levels (cost without steel)."""
    cond = conditions_of(sec.base_thickness_m, z_top, z_front, ground)
    hs, D = _heights(sec, cond, top)
    return np.asarray(takeoff.cost_per_metre(sec, hs, D, 0.0, rates), dtype=float)


def _structure(allx, sec, h_c, basis, idx, acts, qp, stem_moment_at=None):
    """``structure.design_reinforcement`` of the candidates idx (the member actions of a
    subset from its own geometry when few, else the rows idx; the same values, as
    ``sizing.evaluate`` does)."""
    n = len(sec)
    if n >= 64 and 2 * len(idx) < n:
        src = allx.subset(idx)
        s_act, s_qp = src.member_actions(), src.qp()
    else:
        if acts[0] is None:
            acts[0], qp[0] = allx.member_actions(), allx.qp()
        s_act = [MemberActions(a.member, a.combination, a.case, _full(a.M_Ed, n)[idx],
                               _full(a.V_Ed, n)[idx]) for a in acts[0]]
        s_qp = {k: _full(v, n)[idx] for k, v in qp[0].items()}
    return structure.design_reinforcement(sec.subset(idx), s_act, s_qp, basis,
                                          stem_moment_at=stem_moment_at,
                                          stem_height_m=h_c[idx])


def _stability_of(sec: SectionArrays, z_top, z_front, ground: sizing.Demand, basis: Basis):
    """Conditions, every stability action and check, the sections that do not close,
    and the checked stem height (top of base to z_top, m) of joined candidates."""
    cond = conditions_of(sec.base_thickness_m, z_top, z_front, ground)
    allx = stability.evaluate_all(sec, cond, basis)
    tb = np.asarray(sec.base_thickness_m, dtype=float)
    h_c = cond.z_top - np.asarray(cond.z_found, dtype=float) - tb
    return cond, allx, allx.ctx.bad(), h_c


_SECTION_FIELDS = ("stem_top_m", "stem_base_m", "base_width_m", "toe_m", "base_thickness_m",
                   "key_depth_m", "key_width_m")


def _checked(arrays: dict, ground: sizing.Demand, basis: Basis, rates, complete: bool) -> dict:
    """(ok, cost, util) of the candidates of ``arrays`` (the section fields and each
    candidate's z_top, z_front and wall top): stability for every candidate, the
    structure for those passing it, or (``complete``) for every candidate. Each row's
    answer depends on that row only, so a batch may be cut anywhere
    (``workers.split``)."""
    sec = SectionArrays(**{k: arrays[k] for k in _SECTION_FIELDS})
    z_top, z_front, top = arrays["z_top"], arrays["z_front"], arrays["top"]
    n = len(sec)
    cond, allx, bad, h_c = _stability_of(sec, z_top, z_front, ground, basis)
    u_stab = sizing._max_util(allx.checks, n)
    util = u_stab.copy()
    steel = np.full(n, np.nan)
    idx = np.arange(n) if complete else np.flatnonzero((u_stab <= 1.0 + _TOL) & ~bad)
    if len(idx):
        part = _structure(allx, sec, h_c, basis, idx, [None], [None])
        util[idx] = np.maximum(u_stab[idx], sizing._max_util(part.checks, len(idx)))
        steel[idx] = part.steel_kg_per_m
    ok = (util <= 1.0 + _TOL) & ~bad
    hs, D = _heights(sec, cond, top)
    cost = np.asarray(takeoff.cost_per_metre(sec, hs, D, steel, rates), dtype=float)
    return {"ok": ok, "cost": cost, "util": util}


def _screened(arrays, ground, basis, rates) -> dict:
    return _checked(arrays, ground, basis, rates, False)


def _in_full(arrays, ground, basis, rates) -> dict:
    return _checked(arrays, ground, basis, rates, True)


def evaluate_search(sec: SectionArrays, z_top, z_front, top, seg: np.ndarray,
                    complete: np.ndarray, ground: sizing.Demand, basis: Basis, rates):
    """(ok, cost, utilization) of joined candidates, as ``sizing.evaluate(curtail=False,
    screen=True, complete_if_none=...)`` gives them one demand at a time.

    z_top, z_front, top (wall top): (n,) levels of each candidate's demand; seg: (n,)
    the batch (demand) of each candidate; complete: per batch, ``complete_if_none``
    (the search of that demand has no passing candidate yet). Stability is checked for
    every candidate, the structure designed for those passing it; a batch with
    ``complete`` and no candidate passing has the structure of all its candidates
    designed too (complete utilizations for the descent). Inside a ``workers.twin()``
    block half the candidates are checked by the second process."""
    n = len(sec)
    arrays = {k: np.broadcast_to(np.asarray(getattr(sec, k), dtype=float), (n,))
              for k in _SECTION_FIELDS}
    arrays.update(z_top=np.asarray(z_top, dtype=float), z_front=np.asarray(z_front, dtype=float),
                  top=np.asarray(top, dtype=float))
    params = (ground, basis, rates)
    out = workers.split(_screened, arrays, params, cut=n // 2)
    ok, cost, util = out["ok"], out["cost"], out["util"]
    passing = np.bincount(seg, weights=ok.astype(float), minlength=len(complete)) > 0
    need = np.asarray(complete, dtype=bool) & ~passing
    if need.any():  # no candidate of these batches passes: every candidate in full
        rows = np.flatnonzero(need[seg])
        sub = {k: v[rows] for k, v in arrays.items()}
        full = workers.split(_in_full, sub, params, cut=len(rows) // 2)
        ok[rows], cost[rows], util[rows] = full["ok"], full["cost"], full["util"]
    return ok, cost, util


class _Edge:
    """Stands for ``stability.AllActions`` in ``sizing._sized``: the SLS edge pressures
    computed once for the joined candidates."""

    def __init__(self, edge):
        self._edge = np.asarray(edge, dtype=float)

    def edge_pressure(self):
        return self._edge


def evaluate_full(sec: SectionArrays, z_top, z_front, top, ground: sizing.Demand,
                  basis: Basis, rates) -> sizing.Evaluation:
    """Every check of joined candidates with curtailment, as ``sizing.evaluate`` with
    its defaults (bars chosen by ``structure.design_reinforcement``), levels per
    candidate. Candidate i of the result is candidate i of ``sizing.evaluate`` at its
    own demand."""
    n = len(sec)
    cond, allx, bad, h_c = _stability_of(sec, z_top, z_front, ground, basis)
    M_stem = sizing._stem_moment_table(allx, sec, cond)
    sr = structure.design_reinforcement(sec, allx.member_actions(), allx.qp(), basis,
                                        stem_moment_at=M_stem(None), stem_height_m=h_c)
    checks = list(allx.checks) + list(sr.checks)
    util = sizing._max_util(checks, n)
    ok = (util <= 1.0 + _TOL) & ~bad
    steel = np.broadcast_to(np.asarray(sr.steel_kg_per_m, dtype=float), util.shape)
    hs, D = _heights(sec, cond, top)
    cost = np.asarray(takeoff.cost_per_metre(sec, hs, D, steel, rates), dtype=float)
    return sizing.Evaluation(sec=sec, cond=cond, checks=checks, structure=sr,
                             utilization=util, ok=ok, cost=cost, steel_kg_per_m=steel,
                             actions=_Edge(allx.edge_pressure()))


def _concat(secs: list[SectionArrays]) -> SectionArrays:
    return SectionArrays(**{k: np.concatenate([np.asarray(getattr(s, k), dtype=float)
                                               for s in secs]) for k in _SECTION_FIELDS})


def _levels(demands, counts):
    """Per-candidate z_top, z_front, wall top of batches of ``counts`` candidates."""
    zt = np.repeat([d.z_top for d in demands], counts).astype(float)
    zf = np.repeat([d.z_front for d in demands], counts).astype(float)
    top = np.repeat([d.wall_top_m for d in demands], counts).astype(float)
    return zt, zf, top


# --- the designer ------------------------------------------------------------------------------

@dataclass
class Lockstep:
    """Bespoke designs of one basis and rate table, many demands at a time.

    ``design_many(demands)`` designs the distinct new demands in rounds (see the module
    docstring) and keeps every design: later calls warm-start from all the designs made
    so far (as ``sizing.Designer`` does), so a pipeline can design its first-pass panels
    in one call and the halves of split panels in later, smaller calls.
    stride, seeds, warm_polish: as ``sizing.Designer``. polish_passes: improvement
    passes after the rounds (each demand tries the sections of its ``improve_k``
    nearest designed neighbours, taller or shorter, as they are, then descends in the
    small neighbourhood from its own design); a pass never makes a design dearer.
    taller_passes, taller_k: then the passes of :meth:`_taller_sections` (each demand
    tries the cheaper sections of taller demands as they are).
    """

    basis: Basis
    rates: object = None
    step: float | None = None
    stride: int = 4
    seeds: int = 3
    warm_polish: bool = False
    chunk: int = CHUNK
    polish_passes: int = 1
    improve_k: int = 8  # neighbours' sections tried by the improvement pass
    taller_passes: int = 3  # passes of :meth:`_taller_sections` (until nothing changes)
    taller_k: int = 4  # taller, cheaper sections tried by each demand in such a pass
    cache: dict = field(default_factory=dict)
    #: ground key -> {demand: (retained height, section)} of the passing designs
    by_ground: dict = field(default_factory=dict)
    evaluated: int = 0  # candidates evaluated in searches
    calls: int = 0  # joined evaluation calls
    _nb: dict = field(default_factory=dict, repr=False)  # neighbour arrays per ground

    def __post_init__(self):
        self.step = float(self.step if self.step is not None
                          else self.basis.design.dimension_step_m)

    def __call__(self, demand: sizing.Demand) -> sizing.SizedDesign:
        return self.design_many([demand])[0]

    def design_many(self, demands) -> list[sizing.SizedDesign]:
        """Designs of ``demands`` in their order (each distinct one designed once)."""
        new = [d for d in dict.fromkeys(demands) if d not in self.cache]
        groups: dict[tuple, list] = {}
        for d in new:
            steep = sizing._steep(d, self.basis)
            if steep is not None:
                self.cache[d] = sizing._flag_steep(d, self.basis, self.rates, steep[2],
                                                   self.step)
            elif not (0.0 < d.h <= sizing.MAX_RETAINED_M):
                self.cache[d] = sizing._flag_beyond(d, self.basis, self.rates, self.step)
            else:
                groups.setdefault(d.ground_key, []).append(d)
        for key, ds in groups.items():
            self._design_ground(key, ds)
        return [self.cache[d] for d in demands]

    # rounds of bisection over the demands of one ground ordered by height
    def _design_ground(self, key, ds) -> None:
        ds = sorted(ds, key=lambda d: (-d.h, d.z_front))
        n = len(ds)
        done = np.zeros(n, dtype=bool)
        prior = bool(self.by_ground.get(key))
        while not done.all():
            pick = self._round_picks(done, prior)
            self._design_round(key, [ds[i] for i in pick])
            done[pick] = True
            prior = True
        for _ in range(self.polish_passes):
            if not self._design_round(key, ds, improve=True):
                break
        for _ in range(self.taller_passes):
            if not self._taller_sections(ds):
                break

    def _taller_sections(self, ds) -> bool:
        """Each passing design tries, as they are, the sections of the taller demands of
        its ground with the same front level and wall-top allowance (the same conditions
        but for the height) whose designs cost less (the ``taller_k`` nearest in
        height), in joined calls; the cheapest that passes is taken when cheaper. A taller
        panel's section nearly always passes at a shorter panel and costs less there,
        so after this pass a taller panel rarely has a cheaper section than a shorter
        one of the same ground (``sizing.Designer`` gets this from its order: tallest
        first, each next one trying the taller designs). Then a demand that still has a
        cheaper taller design tries that design's bars too. Returns whether any got
        cheaper."""
        groups: dict[tuple, list] = {}
        for d in ds:  # the same conditions but for the height (and so the wall top)
            if self.cache[d].status == "ok":
                groups.setdefault(d.height_free_key, []).append(d)
        better = False
        for same in groups.values():
            if len(same) > 1:
                better |= self._taller_in(sorted(same, key=lambda d: d.h))
        return better

    def _taller_in(self, ok: list) -> bool:
        """:meth:`_taller_sections` for demands of the same conditions but for the
        height, in increasing height."""
        h = np.array([d.h for d in ok])
        c = np.array([self.cache[d].cost_per_m for d in ok])
        tasks, cands_of = [], []
        for j, d in enumerate(ok):
            after = j + 1 + np.flatnonzero((h[j + 1:] > h[j] + 1e-9) & (c[j + 1:] < c[j] - 1e-9))
            own = self.cache[d].section
            secs = []
            for i in after:  # nearest in height first
                sec = self.cache[ok[i]].section
                if sec != own and sec not in secs:
                    secs.append(sec)
                    if len(secs) == self.taller_k:
                        break
            if secs:
                tasks.append(d)
                cands_of.append(secs)
        better = False
        counts = [len(cs) for cs in cands_of]
        ground = ok[0]
        for c0, c1 in _chunks(counts, self.chunk):
            sec = SectionArrays.of([x for cs in cands_of[c0:c1] for x in cs])
            zt, zf, top = _levels(tasks[c0:c1], counts[c0:c1])
            ev = evaluate_full(sec, zt, zf, top, ground, self.basis, self.rates)
            self.calls += 1
            pos = 0
            for d, m in zip(tasks[c0:c1], counts[c0:c1]):
                idx = np.arange(pos, pos + m)
                pos += m
                okk = idx[ev.ok[idx]]
                if not len(okk):
                    continue
                i = int(okk[np.lexsort((ev.utilization[okk], ev.cost[okk]))[0]])
                if ev.cost[i] < self.cache[d].cost_per_m - 1e-9:
                    self.cache[d] = sizing._sized(ev, i, d, self.basis)
                    self._record(d, self.cache[d].section)
                    better = True
        # where a taller design still costs less, its bars as well as its section: the
        # bars are chosen by least area per face, which is not always the least mass
        # (laps and anchorages grow with the diameter), so a section's cost need not
        # fall with the height; the taller design's own bars, checked here, can
        c = np.array([self.cache[d].cost_per_m for d in ok])
        for j, d in enumerate(ok):
            after = j + 1 + np.flatnonzero((h[j + 1:] > h[j] + 1e-9) & (c[j + 1:] < c[j] - 1e-9))
            if not len(after):
                continue
            tall = self.cache[ok[int(after[0])]]
            ev = sizing.evaluate(SectionArrays.of([tall.section]), d, self.basis, self.rates,
                                 given=tall.reinforcement)
            if ev.ok[0] and ev.cost[0] < c[j] - 1e-9:
                self.cache[d] = sizing._sized(ev, 0, d, self.basis)
                self._record(d, tall.section)
                c[j] = self.cache[d].cost_per_m
                better = True
        return better

    @staticmethod
    def _round_picks(done: np.ndarray, prior: bool) -> list[int]:
        """Round 0 with nothing designed yet on the ground: the tallest and the shortest;
        then the middle of every maximal stretch of undesigned demands."""
        n = len(done)
        if not prior and not done.any():
            return sorted({0, n - 1})
        picks = []
        i = 0
        while i < n:
            if done[i]:
                i += 1
                continue
            j = i
            while j + 1 < n and not done[j + 1]:
                j += 1
            picks.append((i + j) // 2)
            i = j + 1
        return picks

    def _neighbours(self, demand: sizing.Demand, k: int = 4,
                    taller_first: bool = True) -> list[Section]:
        """The sections of the k passing designs of the ground nearest in retained
        height (ties in the order designed), as ``sizing.Designer._neighbours``;
        ``taller_first``: those of taller (or equal) demands first, nearest first, then
        the shorter ones. ``Designer`` designs the tallest first, so its neighbours are
        all taller: a taller panel's section nearly always passes at a shorter one, and
        a descent that starts from a passing section keeps to passing ones, where one
        from a failing section wanders (the tests showed designs up to 16 % dearer)."""
        key = demand.ground_key
        got = self.by_ground.get(key)
        if not got:
            return []
        arr = self._nb.get(key)
        if arr is None:
            vals = list(got.values())
            arr = self._nb[key] = (np.array([h for h, _ in vals]), [s for _, s in vals])
        hs, secs = arr
        dist = np.abs(hs - demand.h)
        if taller_first:
            idx = np.lexsort((dist, hs < demand.h - 1e-9))[:k]
        else:
            idx = np.argsort(dist, kind="stable")[:k]
        return [secs[i] for i in idx]

    def _record(self, d: sizing.Demand, section: Section) -> None:
        self.by_ground.setdefault(d.ground_key, {})[d] = (d.h, section)
        self._nb.pop(d.ground_key, None)

    def _design_round(self, key, ds, improve: bool = False) -> bool:
        """One lockstep search of the demands ``ds``; ``improve``: the improvement
        pass (own design first among the starts, the small neighbourhood only).
        Returns whether any design got cheaper."""
        tasks = []
        for d in ds:
            bounds = sizing.bounds_for(d, self.step)
            if improve:
                own = self.cache[d]
                near = [own.section] if own.status == "ok" else []
                others = self._neighbours(d, self.improve_k + 1, taller_first=False)
                near += [sec for sec in others if sec != own.section][:self.improve_k]
            else:
                near = self._neighbours(d)
            starts = [v for v in (bounds.vector_of(sec) for sec in near) if v is not None]
            t = _Task(d, bounds, _Store(bounds), near)
            t.gen = _search(t.store, d, self.rates, starts, self.stride, self.seeds, self.warm_polish,
                            first_full=False if improve else None)
            t.advance()
            tasks.append(t)
        ground = ds[0]
        while True:
            act = [t for t in tasks if t.req is not None]
            if not act:
                break
            self._step(act, ground)
        for t in tasks:
            self.evaluated += t.store.evaluated
        before = {t.demand: self.cache.get(t.demand) for t in tasks}
        self._finish(tasks, ground, improve)
        better = False
        for d, old in before.items():
            new = self.cache[d]
            if old is None:
                continue
            if old.status == "ok" and not (new.status == "ok"
                                           and new.cost_per_m < old.cost_per_m - 1e-9):
                self.cache[d] = old  # never dearer, never worse
                self._record(d, old.section)
            elif new.status == "ok":
                better = True
        return better

    def _sections(self, tasks, vs) -> SectionArrays:
        b0 = tasks[0].bounds
        if all(t.bounds.key_depths == b0.key_depths and t.bounds.key_widths == b0.key_widths
               for t in tasks):
            return b0.sections(np.vstack(vs))
        return _concat([t.bounds.sections(v) for t, v in zip(tasks, vs)])

    def _step(self, act: list[_Task], ground) -> None:
        """One lockstep iteration: prune, evaluate and commit every active batch."""
        # lower-bound pruning against each search's best (as _Search.run)
        lbt = [t for t in act if t.req.prune and np.isfinite(t.store.best_cost())]
        if lbt:
            counts = [len(t.req.v) for t in lbt]
            for c0, c1 in _chunks(counts, self.chunk):
                part = lbt[c0:c1]
                sec = self._sections(part, [t.req.v for t in part])
                zt, zf, top = _levels([t.demand for t in part], counts[c0:c1])
                lb = _lower_bound(sec, zt, zf, top, ground, self.rates)
                pos = 0
                for t in part:
                    m = len(t.req.v)
                    keep = lb[pos:pos + m] < t.store.best_cost() - 1e-9
                    pos += m
                    t.req = _Request(t.req.v[keep], t.req.codes[keep], t.req.prune)
        # evaluate: the batches cut in pieces of at most a chunk, pieces joined up to a
        # chunk per call (the complete_if_none of a piece: its search had no passing
        # candidate before this step)
        res = {id(t): (np.zeros(len(t.req.v), dtype=bool), np.zeros(len(t.req.v)),
                       np.zeros(len(t.req.v))) for t in act}
        pieces = [(t, a, min(a + self.chunk, len(t.req.v))) for t in act
                  for a in range(0, len(t.req.v), self.chunk)]
        for c0, c1 in _chunks([b - a for _, a, b in pieces], self.chunk):
            part = pieces[c0:c1]
            sec = _concat_rows(self, part)
            cnt = [b - a for _, a, b in part]
            zt, zf, top = _levels([t.demand for t, _, _ in part], cnt)
            seg = np.repeat(np.arange(len(part)), cnt)
            complete = np.array([not t.store.ok.any() for t, _, _ in part])
            ok, cost, util = evaluate_search(sec, zt, zf, top, seg, complete, ground,
                                             self.basis, self.rates)
            self.calls += 1
            pos = 0
            for (t, a, b), m in zip(part, cnt):
                r = res[id(t)]
                sl = slice(pos, pos + m)
                r[0][a:b], r[1][a:b], r[2][a:b] = ok[sl], cost[sl], util[sl]
                pos += m
        for t in act:
            if len(t.req.v):
                t.store.commit(t.req.v, t.req.codes, *res[id(t)])
            t.advance()

    def _finish(self, tasks: list[_Task], ground, improve: bool = False) -> None:
        """The winner and the neighbours' sections of every task evaluated in full with
        curtailment (joined), the cheapest passing chosen (``Designer._design``)."""
        cands_of = []
        for t in tasks:
            s = t.store
            b = s.best()
            cands = []
            if b is not None:
                cands.append(t.bounds.sections(s.V[b:b + 1]).take(0))
            elif len(s.util):
                i = int(np.argmin(s.util))
                cands.append(t.bounds.sections(s.V[i:i + 1]).take(0))
            cands.extend(sec for sec in t.near if sec not in cands)
            cands_of.append(cands)
        counts = [len(c) for c in cands_of]
        for c0, c1 in _chunks(counts, self.chunk):
            part = tasks[c0:c1]
            flat = [sec for c in cands_of[c0:c1] for sec in c]
            if not flat:
                continue
            sec = SectionArrays.of(flat)
            zt, zf, top = _levels([t.demand for t in part], counts[c0:c1])
            ev = evaluate_full(sec, zt, zf, top, ground, self.basis, self.rates)
            self.calls += 1
            pos = 0
            for t, m in zip(part, counts[c0:c1]):
                idx = np.arange(pos, pos + m)
                pos += m
                d = t.demand
                okk = idx[ev.ok[idx]]
                old = self.cache.get(d) if improve else None
                if len(okk):
                    i = int(okk[np.lexsort((ev.utilization[okk], ev.cost[okk]))[0]])
                    if (old is not None and old.status == "ok"
                            and not ev.cost[i] < old.cost_per_m - 1e-9):
                        continue  # the improvement pass found nothing cheaper
                    sd = sizing._sized(ev, i, d, self.basis)
                else:
                    i = int(idx[np.argmin(ev.utilization[idx])])
                    chk, comb, u = ev.governing(i)
                    sd = sizing._sized(ev, i, d, self.basis, status="flagged",
                                       reason=f"no section within the search bounds passes: "
                                              f"best fails {chk} {comb} ({u:.2f})")
                self.cache[d] = sd
                if sd.status == "ok":
                    self._record(d, sd.section)


def _concat_rows(lk: "Lockstep", part) -> SectionArrays:
    """SectionArrays of the pieces (task, a, b): rows a..b of each task's batch."""
    tasks = [t for t, _, _ in part]
    return lk._sections(tasks, [t.req.v[a:b] for t, a, b in part])


def _chunks(counts: list[int], chunk: int):
    """(start, stop) ranges of consecutive batches of at most ``chunk`` candidates in
    total (a batch larger than ``chunk`` alone in its range)."""
    out = []
    a, tot = 0, 0
    for k, c in enumerate(counts):
        if k > a and tot + c > chunk:
            out.append((a, k))
            a, tot = k, 0
        tot += c
    if a < len(counts):
        out.append((a, len(counts)))
    return out


def design_many(demands: list[sizing.Demand], basis: Basis, rates,
                step: float | None = None) -> list[sizing.SizedDesign]:
    """The bespoke designs of ``demands`` (in their order), the searches of each ground
    in lockstep (:class:`Lockstep`, fresh for this call)."""
    return Lockstep(basis, rates, step).design_many(list(demands))

"""The whole job: site -> profile -> panels -> designs -> quantities, as one pure function.

``design(site)`` returns a :class:`wallrun.results.DesignResult`; writing it to files is
``wallrun.outputs.write``'s job. Nothing is kept between calls: every store of designs
lives in the call, so the same site always gives the same result, whatever was designed
before it or beside it in another thread.
"""

from __future__ import annotations

import time
from dataclasses import replace

from wallrun import bars as bars_mod
from wallrun import panels as pn
from wallrun import stability, takeoff
from wallrun.layout import RunLayout, lay_out
from wallrun.profile import build_profiles, find_runs
from wallrun.results import (DesignResult, Joint, Panel, PanelResult, Quantity,
                             SectionType)
from wallrun.settings import Site
from wallrun.sizing import Costing, Demand, SizedDesign
from wallrun.sizing import catalogue as cat_mod
from wallrun.sizing import rationalise as rat_mod
from wallrun.sizing import search
from wallrun.sizing.conditions import Rows, conditions_of, water_level


#: Fewest new demands worth sending to worker processes.
PARALLEL_FROM = 48
#: The work of this process's part of a batch split over workers, relative to each
#: worker's part. A worker starts its part later (its process and imports, about
#: 0.3 s) and its designs come back pickled (about 0.2 s at 10 km); this process, after
#: its part, loads the integer program's solver in rationalised mode and runs the
#: caller's ``meanwhile`` (the command line's writers: together about 0.95 s in a new
#: process). At 10 km with ``--jobs 2``, each run a new process, four alternating pairs:
#: with 0.85 the worker's part ended 0.33 to 0.96 s (mean 0.69 s) before this process
#: was ready for it, with 0.75 0.18 to 1.03 s (mean 0.44 s) after; 0.8 lies between.
#: (0.85 was chosen on runs in one process, which had loaded the writers before.)
#: Measured again after the search grew (2026-12-05; farm-bench, ten alternating pairs
#: of the whole command, 10 km, ``--jobs 2``): with 0.8 this process was ready about
#: 0.3 s after the worker had ended; 0.76 took 2.6 % less wall time than 0.8 (pair
#: ratios 0.955 to 0.992), 0.72 1.9 % more than 0.76 and 0.78 0.5 % more.
#: The results do not depend on it.
FIRST_PART = 0.76


class Sizer:
    """The designs of demands in one way (bespoke, catalogue, or a rationalised set),
    each distinct demand designed once within one ``design`` call. With an
    ``executor`` (a ``concurrent.futures`` pool the caller owns), large batches of
    bespoke searches are split by retained height over its workers and this process:
    every demand's design depends on that demand only, so the results are the same."""

    def __init__(self, site: Site, mode: str, types=None, tick=None, executor=None,
                 fallback=None, known=None, parts: int = 2, meanwhile=None):
        self.site, self.mode, self.types, self.tick = site, mode, types, tick
        self.executor, self.fallback, self.parts = executor, fallback, max(1, int(parts))
        # called (once) after this process's part of a parallel search, while the
        # workers finish theirs: work the next stage needs anyway
        self.meanwhile = meanwhile
        self.basis, self.costing = site.basis, Costing.of(site)
        self.step = site.design.dimension_step_m
        # designs already made in this call for these demands in this way
        self.designs: dict[Demand, SizedDesign] = dict(known or {})
        self.seconds = 0.0
        self.stats: list = []
        # the reference searches made so far in this call (search.bespoke's references)
        self.references: dict = {}

    def __call__(self, demands) -> list[SizedDesign]:
        new = [d for d in dict.fromkeys(demands) if d not in self.designs]
        if new:
            t0 = time.perf_counter()
            if self.mode == "catalogue":
                got = cat_mod.catalogue_designs(new, self.basis, self.costing,
                                                self.site.catalogue, self.step)
            elif self.mode == "types":
                got = self._with_types(new)
            else:
                got = self._bespoke(new)
            self.designs.update(zip(new, got))
            self.seconds += time.perf_counter() - t0
            if self.tick is not None:
                self.tick("sizing", len(self.designs), len(self.designs))
        return [self.designs[d] for d in demands]

    def _bespoke(self, new: list[Demand]) -> list[SizedDesign]:
        args = (self.basis, self.costing, self.step)
        if self.executor is None or len(new) < PARALLEL_FROM:
            return search.bespoke(new, *args, stats=self.stats, references=self.references)
        parts = height_ranges([d.h for d in new], self.parts, FIRST_PART)
        # the executor searches every part but the first, which this process searches
        # meanwhile
        futures = [self.executor.submit(_bespoke_part, [new[k] for k in p], *args,
                                        self.references)
                   for p in parts[1:]]
        got: list[SizedDesign | None] = [None] * len(new)
        try:
            done = [_bespoke_part([new[k] for k in parts[0]], *args, self.references)]
            if self.meanwhile is not None:
                self.meanwhile()
                self.meanwhile = None
        except BaseException:
            for f in futures:
                f.cancel()
            raise
        done += [f.result() for f in futures]
        for p, (designs, st, refs) in zip(parts, done):
            self.stats.append(st)
            self.references.update(refs)
            for k, sd in zip(p, designs):
                got[k] = sd
        return got

    def _with_types(self, demands) -> list[SizedDesign]:
        """Each demand with the cheapest type of the set passing there (its cage, its
        shared curtailment). A demand no type serves (a panel a joint cure changed) gets
        its own bespoke design, which becomes one more type; a demand no search is made
        for keeps its flagged design."""
        out = []
        opts = rat_mod.designs_with(self.types, list(demands), self.basis, self.costing)
        own_needed = []
        for d, o in zip(demands, opts):
            own = search.not_designable(d, self.basis, self.costing, self.step)
            sd = own if own is not None else rat_mod.best_type(o)
            out.append(sd)
            if sd is None:
                own_needed.append(d)
        if own_needed:
            extra = dict(zip(own_needed, self.fallback(own_needed)))
            out = [sd if sd is not None else extra[d] for d, sd in zip(demands, out)]
        return out


def search_work(h: float) -> float:
    """The weight of a demand of retained height ``h`` (m) in :func:`height_ranges`."""
    return max(float(h), 0.1) ** 2.0


def height_ranges(heights, parts: int, first: float = 1.0) -> list[list[int]]:
    """The indices of ``heights`` (m) cut into at most ``parts`` contiguous ranges of
    retained height (in increasing height; contiguous ranges share most of their
    reference demands), the first ``first`` times the work of each other and those of
    about equal work. A demand's search work grows faster than its retained height
    (its grid has more values, its cold references more candidates, the planes after
    its search more toe lengths): each weighs :func:`search_work`, max(h, 0.1 m)^2 (at
    10 km with ``--jobs 2`` the worker's part ends about when this process has searched
    its own and loaded the solver and the writers: 5.14 s against 4.45 + 0.68 s;
    weighed by h^1.5, the worker's part was the longer by 1.0 s)."""
    order = sorted(range(len(heights)), key=lambda k: (heights[k], k))
    w = [search_work(heights[k]) for k in order]
    total, out, cur, acc = sum(w), [], [], 0.0
    shares = first + parts - 1
    for k, wk in zip(order, w):
        cur.append(k)
        acc += wk
        if acc >= total * (first + len(out)) / shares - 1e-9 and len(out) < parts - 1:
            out.append(cur)
            cur = []
    if cur:
        out.append(cur)
    return out


def _bespoke_part(demands, basis, costing, step, references=None):
    """One share of a bespoke batch (a worker's, or this process's): (designs, search
    stats, the reference searches known after it: those given and those made)."""
    stats: list = []
    refs = dict(references or {})
    return search.bespoke(demands, basis, costing, step, stats=stats, references=refs), \
        stats[0], refs


def design(site: Site, progress=None, executor=None, parts: int = 2,
           meanwhile=None) -> DesignResult:
    """Design the whole wall of ``site`` (design-basis sections 1 to 7).

    ``executor``: a ``concurrent.futures`` executor of worker processes the caller owns
    (the command line's ``--jobs``) for the bespoke searches, a large batch of which is
    cut into ``parts`` ranges of retained height, the first searched by this process
    and the others by the executor (best: one part per process, the executor's workers
    and this one; each part searches the reference demands of its range, and a cut
    makes a few of them twice); None designs in this process. The result is the same
    either way. ``meanwhile``: a callable of the caller's, called once in this process
    after its part of the first parallel search, while the workers finish theirs (the
    command line loads its output writers there); not called when nothing is searched
    in parallel."""
    tick = progress or (lambda stage, done, total: None)
    timings: dict[str, float] = {}
    t0 = time.perf_counter()
    profiles = build_profiles(site)
    runs = find_runs(profiles, site.wall)
    timings["profile"] = time.perf_counter() - t0

    t0 = time.perf_counter()
    mode = site.design.sections
    # rationalising solves an integer program: its solver is loaded while the workers
    # finish their parts of the search, before the caller's own work
    waits = ([rat_mod.load_solver] if mode == "rationalised" else []) + (
        [meanwhile] if meanwhile is not None else [])

    def while_waiting():
        for w in waits:
            w()

    sizer = Sizer(site, "catalogue" if mode == "catalogue" else "bespoke", tick=tick,
                  executor=executor, parts=parts,
                  meanwhile=while_waiting if waits else None)
    laid = lay_out(profiles, runs, site, sizer)
    seconds, stats = sizer.seconds, list(sizer.stats)
    rational = None
    if mode == "rationalised":
        t1 = time.perf_counter()
        rational = _rationalise(site, laid, sizer)
        seconds += time.perf_counter() - t1
        if len(rational.types):  # else nothing could be designed: the flags stand
            # a demand some type serves has that design already (rationalise chose it
            # as _with_types would: the cheapest passing type with its cage)
            known = {d: sd for d, sd in zip(_demands_of(laid), rational.designs)
                     if sd.status == "ok"}
            typed = Sizer(site, "types", types=rational.types, tick=tick, fallback=sizer,
                          known=known)
            laid = lay_out(profiles, runs, site, typed,
                           slots={lay.run.run: lay.slots for lay in laid})
            seconds += typed.seconds
    timings["sizing"] = seconds
    timings["panels"] = time.perf_counter() - t0 - seconds
    if site.ground_model.overall_stability:
        t0 = time.perf_counter()
        laid = _with_overall(site, laid)
        timings["overall"] = time.perf_counter() - t0

    t0 = time.perf_counter()
    result = _results(site, profiles, runs, laid, rational)
    timings["reinforcement"] = time.perf_counter() - t0
    checked = sum(s.checked for s in stats)
    return DesignResult(**{**result, "timings": timings,
                           "search": {"candidates": float(checked),
                                      "references": float(sum(s.references for s in stats)),
                                      "demands": float(sum(s.demands for s in stats))}})


def _with_overall(site: Site, laid: list[RunLayout]) -> list[RunLayout]:
    """Every designed panel with its overall-stability check (EN 1997-1 11.5.1, Bishop's
    simplified method, design-basis section 9) at its final section and founding level;
    a panel that fails it is flagged with the plain reason (``overall.failure_reason``:
    a wider base or a deeper founding level may help, but the slope may need measures
    outside the wall). Each distinct (section, conditions) is checked once a call."""
    from wallrun import overall

    done: dict = {}
    out = []
    limit = site.design.max_utilization
    for lay in laid:
        designs = []
        for d, dem in zip(lay.designs, lay.demands):
            if d.status != "ok":
                designs.append(d)
                continue
            key = (d.section, dem)
            if key not in done:
                cond = _scalar(conditions_of([d.section.base_thickness_m], Rows.of([dem], [1]),
                                             dem))
                done[key] = overall.overall_check(d.section, cond, site.basis, site.ground_model)
            res = done[key]
            entries = tuple(overall.check_entries(res))
            why = overall.failure_reason(res, limit)
            u = max([d.utilization] + [e.utilization for e in entries])
            d = replace(d, checks=d.checks + entries, utilization=u)
            if why:
                d = replace(d, status="flagged", reason=why)
            designs.append(d)
        out.append(replace(lay, designs=tuple(designs)))
    return out


def _demands_of(laid: list[RunLayout]) -> list[Demand]:
    """The demands of every panel of ``laid``, run after run."""
    return [d for lay in laid for d in lay.demands]


def _rationalise(site: Site, laid: list[RunLayout], sizer: Sizer) -> rat_mod.Rationalised:
    demands = _demands_of(laid)
    lengths = [s.length for lay in laid for s in lay.slots]
    own = [sd for lay in laid for sd in lay.designs]
    return rat_mod.rationalise(demands, lengths, own, site.basis, Costing.of(site),
                               site.design.max_types,
                               takeoff.section_type_rate(site.rates))


def water_level_used(demand: Demand, d: SizedDesign, beta_deg: float):
    """Absolute water level behind the wall as used, after capping, m (design-basis 3).

    The level (``level_m``, or the underside of the base plus ``height_above_base_m``)
    is capped at the backfill surface at the virtual back x = B, which rises at beta
    from the back face of the stem at z_top. None for a drained wall."""
    import math

    level = water_level(demand.water, d.z_found)
    if level is None:
        return None
    s = d.section
    surface = demand.z_top + (s.base_width_m - s.toe_m - s.stem_top_m) * math.tan(
        math.radians(beta_deg))
    return float(min(level, surface))


def _type_key(d: SizedDesign):
    r = d.reinforcement
    bars = tuple((b.bar_mm, b.spacing_mm) if b is not None else None
                 for b in (r.stem, r.heel, r.toe, r.stem_horizontal, r.base_distribution,
                           r.stem_front))
    return (d.section, bars, r.stem_curtail_m, d.section_type)


def _results(site: Site, profiles, runs, laid: list[RunLayout], rational) -> dict:
    """The result objects of the laid-out panels: panels, joints, section types, bar
    schedule, quantities and cost."""
    rows = []  # (panel, design, demand, mean front level)
    joints: list[Joint] = []
    n = 0
    for lay in laid:
        names = []
        for ext, d, dem in zip(lay.extents, lay.designs, lay.demands):
            n += 1
            panel = Panel(
                panel=f"P{n:03d}", run=lay.run.run, side=lay.run.side, ch_start_m=ext.ch_start,
                ch_end_m=ext.ch_end, retained_top_m=dem.z_top, front_min_m=dem.z_front,
                founding_m=float(d.z_found), wall_top_start_m=ext.wall_top_start,
                wall_top_end_m=ext.wall_top_end, foundation=dem.foundation,
                backfill=site.backfill, surcharge_kpa=site.loads.surcharge_kpa,
                water_level_m=water_level_used(dem, d, site.backfill.slope_deg),
                length_along_m=profiles.length_along(ext.ch_start, ext.ch_end))
            rows.append((panel, d, dem, pn.mean_front_level(profiles, lay.run.side,
                                                             ext.ch_start, ext.ch_end)))
            names.append(panel.panel)
        for i, js in enumerate(lay.joints):
            fig = js.figures
            joints.append(Joint(
                joint=f"J{len(joints) + 1:03d}", ch_m=lay.extents[i].ch_end, left=names[i],
                right=names[i + 1], founding_step_m=fig.founding_step_m,
                top_step_m=fig.top_step_m, pressure_ratio=fig.pressure_ratio,
                status="flagged" if js.problems else "ok", reason=js.reason))

    # a named type (catalogue, rationalised set) is one cage: its stem bars stop at the
    # highest stop its panels need (every panel's own stop is then met), or run full
    # height where any panel needs that
    stops: dict[str, list] = {}
    for _, d, _, _ in rows:
        if d.section_type:
            stops.setdefault(d.section_type, []).append(d.reinforcement.stem_curtail_m)
    common = {t: (None if any(v is None for v in vs) else max(vs)) for t, vs in stops.items()}
    rows = [(p, d if not d.section_type else replace(d, reinforcement=replace(
        d.reinforcement, stem_curtail_m=common[d.section_type])), dem, f)
        for p, d, dem, f in rows]

    # section types: given names (catalogue, rationalised set), else named by size. A
    # type is a section some passing panel is built with: the nominal section of a panel
    # that could not be designed (flagged) is no type unless a passing panel shares it
    # (then its panel keeps the name); it is never listed, scheduled or detailed
    type_names: dict = {}
    keys = list(dict.fromkeys(_type_key(d) for _, d, _, _ in rows if d.status == "ok"))
    for key in keys:
        if key[3]:
            type_names[key] = key[3]
    taken = set(type_names.values())
    unnamed = sorted((k for k in keys if not k[3]), key=lambda k: rat_mod.size_key(k[0]))
    k = 0
    for key in unnamed:  # by size, after any name already given
        k += 1
        while f"S{k:02d}" in taken:
            k += 1
        type_names[key] = f"S{k:02d}"

    # a panel that could not be designed (flagged) has no bars, quantities, cost or
    # utilization to report: only its reason (its nominal levels are still drawn on the
    # elevation, marked FLAGGED)
    per_panel_bars, all_bars = [], []
    lengths = bars_mod.Lengths()  # the wall's bars recur: each length worked out once
    for panel, d, _, _ in rows:
        b = (bars_mod.panel_bars(type_names[_type_key(d)], d.section, d.reinforcement, panel,
                                 site.basis, lengths) if d.status == "ok" else [])
        per_panel_bars.append(b)
        all_bars.extend(b)
    schedule = bars_mod.schedule(all_bars)

    results, per_panel_q = [], []
    for k, ((panel, d, _, front_mean), b) in enumerate(zip(rows, per_panel_bars)):
        # the checks of a panel that could not be designed were those of a section that
        # fails: its reason names the failing check, and no utilization is reported
        common = dict(panel=panel, section_type=type_names.get(_type_key(d), ""),
                      section=d.section, reinforcement=d.reinforcement,
                      checks=d.checks if d.status == "ok" else (), status=d.status,
                      reason=d.reason)
        if d.status != "ok":
            results.append(PanelResult(**common, quantities={}, concrete_m3=None,
                                       steel_kg=None, cost=None))
            continue
        nxt = rows[k + 1][0] if k + 1 < len(rows) else None
        sealed = 1 if (nxt is not None and nxt.run == panel.run) else 0
        q = takeoff.panel_quantities(panel, d.section, b, site.takeoff, front_level_m=front_mean,
                                     stop_ends=2, joint_seals=sealed)
        per_panel_q.append(q)
        pq = tuple(Quantity(item, takeoff.UNITS.get(item, ""), v) for item, v in q.items())
        results.append(PanelResult(
            **common, quantities=q, concrete_m3=q.get("concrete_total", 0.0),
            steel_kg=q.get("reinforcement_total", 0.0), cost=takeoff.cost(pq, site.rates).total))
    quantities = takeoff.totals(per_panel_q)
    if rational is not None:
        used = {r.section_type for r in results if r.status == "ok"}
        quantities = quantities + (Quantity("section_type", "nr", float(len(used))),)
    cost = takeoff.cost(quantities, site.rates)

    section_types, actions = [], {}
    by_type: dict[str, list] = {}
    for r, (_, d, dem, _) in zip(results, rows):
        if r.section_type:
            by_type.setdefault(r.section_type, []).append((r, d, dem))
    for key in sorted(type_names, key=lambda k: type_names[k]):
        name = type_names[key]
        members = by_type[name]
        worst_r, worst_d, worst_dem = max(members, key=lambda m: m[0].checks.max_utilization())
        section_types.append(SectionType(
            section_type=name, section=worst_d.section, reinforcement=worst_d.reinforcement,
            governing=worst_r.governing, utilization=worst_r.checks.max_utilization(),
            panels=tuple(m[0].panel.panel for m in members)))
        if worst_d.checks:
            cond = conditions_of([worst_d.section.base_thickness_m],
                                 Rows.of([worst_dem], [1]), worst_dem)
            actions[name] = stability.action_table(worst_d.section, _scalar(cond), site.basis)
        else:  # a panel that could not be designed at all has no actions
            actions[name] = ()
    return dict(site=site, profiles=profiles, runs=tuple(runs), panels=tuple(results),
                joints=tuple(joints), section_types=tuple(section_types), actions=actions,
                bar_schedule=tuple(schedule), quantities=tuple(quantities), cost=cost,
                warnings=tuple(site.warnings))


def _scalar(cond):
    """Conditions of one candidate with its levels as floats (for the report's table)."""
    import numpy as np

    f = lambda v: None if v is None else float(np.asarray(v).reshape(-1)[0])  # noqa: E731
    return replace(cond, z_top=f(cond.z_top), z_front=f(cond.z_front),
                   z_found=f(cond.z_found), water_level_m=f(cond.water_level_m))

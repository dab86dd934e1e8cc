"""The whole job: site -> profile -> panels -> designs -> quantities, as one pure function.

``design(site)`` returns a :class:`wallrun.results.DesignResult`; writing it to files is
``wallrun.outputs.write``'s job.
"""

from __future__ import annotations

import math
import time
from dataclasses import dataclass, field

from wallrun import bars as bars_mod
from wallrun import panels as pn
from wallrun import sizing, stability, takeoff, workers
from wallrun.profile import build_profiles, find_runs
from wallrun.results import (DesignResult, Joint, Panel, PanelResult, Quantity,
                             SectionType)
from wallrun.settings import Site


@dataclass
class _Designer:
    """Designs a demand in the site's sections mode, each distinct demand once."""

    site: Site
    cache: dict = field(default_factory=dict)
    seconds: float = 0.0
    tick: object = None  # progress callback (stage, done, total)
    expected: int = 0  # panels expected before any joint splitting
    batch: object = None  # a lockstep.Lockstep for large jobs (bespoke search)

    def __call__(self, demand: sizing.Demand) -> sizing.SizedDesign:
        d = self.cache.get(demand)
        if d is None:
            t0 = time.perf_counter()
            basis, rates = self.site.basis, self.site.rates
            if self.site.design.sections == "catalogue":
                d = sizing.catalogue_design(demand, basis, rates, self.site.catalogue)
            elif self.batch is not None:  # large job: warm-started from the batch
                d = self.batch(demand)
            else:  # bespoke, and the first pass of rationalised
                d = sizing.bespoke(demand, basis, rates, self.site.design.dimension_step_m)
            self.seconds += time.perf_counter() - t0
            self.cache[demand] = d
            if self.tick is not None:
                n = len(self.cache)
                self.tick("sizing", n, max(n, self.expected))
        return d


def demand_of(ext: pn.Extent, site: Site) -> sizing.Demand:
    """The section-independent conditions of a panel (design-basis section 1)."""
    mid = 0.5 * (ext.ch_start + ext.ch_end)
    # levels snapped outwards to 1e-6 m (z_top up, z_front down): conservative, and
    # equal conditions computed with float noise share one design
    return sizing.Demand(
        z_top=math.ceil(ext.z_top * 1e6 - 1e-3) / 1e6,
        z_front=math.floor(ext.z_front * 1e6 + 1e-3) / 1e6, backfill=site.backfill,
        foundation=site.foundation_at(mid), surcharge_kpa=site.loads.surcharge_kpa,
        water=site.water, wall_top_m=round(max(ext.wall_top_start, ext.wall_top_end), 6),
        min_founding_depth_m=site.wall.min_founding_depth_m,
        founding_step_m=site.wall.founding_step_m)


def _joint(ext_l, d_l, ext_r, d_r, wall):
    fig = pn.joint_figures(d_l.z_found, d_r.z_found, ext_l.wall_top_end, ext_r.wall_top_start,
                           d_l.edge_pressure_sls_kpa, d_r.edge_pressure_sls_kpa)
    return fig, pn.joint_problems(fig, wall)


#: From this many first-pass panels on, the bespoke designs are searched many panels
#: per call (``wallrun.lockstep``) before the joints are settled; smaller jobs use the
#: one-panel-at-a-time search of ``wallrun.sizing``. Both return sections that pass
#: every check; their costs agree within 0.1 % for most panels (see lockstep).
LOCKSTEP_FROM = 200


def first_pass_extents(profiles, run, site: Site) -> list:
    """The panels of a run before any joint is cured (design-basis section 1)."""
    bounds = [b for z in site.zones for b in (z.from_m, z.to_m)]
    pts = pn.cut_points(run.ch_start_m, run.ch_end_m, bounds, site.wall, profiles)
    return [pn.extent(profiles, run.run, run.side, a, b, site.wall)
            for a, b in zip(pts[:-1], pts[1:])]


def settle_run(profiles, run, site: Site, designer) -> tuple[list, list, list]:
    """Panels of one run with every curable joint cured (design-basis section 1).

    Returns the extents, their designs and, per joint, (figures, problems). A failing
    joint halves the longer of its two panels (the later when equal); a joint whose
    half would be shorter than ``min_panel_length_m`` stays failing (flagged).
    """
    wall = site.wall
    bounds = [b for z in site.zones for b in (z.from_m, z.to_m)]
    pts = pn.cut_points(run.ch_start_m, run.ch_end_m, bounds, wall, profiles)
    ext_cache: dict = {}

    def ext_of(a, b):
        key = (a, b)
        if key not in ext_cache:
            ext_cache[key] = pn.extent(profiles, run.run, run.side, a, b, wall)
        return ext_cache[key]

    while True:
        exts = [ext_of(a, b) for a, b in zip(pts[:-1], pts[1:])]
        designs = [designer(demand_of(e, site)) for e in exts]
        joints = [_joint(exts[i], designs[i], exts[i + 1], designs[i + 1], wall)
                  for i in range(len(exts) - 1)]
        split = None
        for i, (_, problems) in enumerate(joints):
            if not problems:
                continue
            k = i + pn.halve_target(exts[i].length, exts[i + 1].length)
            if exts[k].length / 2 >= wall.min_panel_length_m - 1e-9:
                split = k
                break
        if split is None:
            return exts, designs, joints
        a, b = pts[split], pts[split + 1]
        pts.insert(split + 1, 0.5 * (a + b))


def water_level_used(demand: sizing.Demand, d: sizing.SizedDesign, beta_deg: float):
    """Absolute water level behind the wall as used, after capping, m (design-basis 3).

    The level (``level_m``, or the underside of the base plus ``height_above_base_m``)
    is capped at the backfill surface at the virtual back x = B, which rises at beta
    from the back face of the stem at z_top. None for a drained wall.
    """
    level = sizing.water_level(demand.water, d.z_found)
    if level is None:
        return None
    s = d.section
    surface = demand.z_top + (s.base_width_m - s.toe_m - s.stem_top_m) * math.tan(
        math.radians(beta_deg))
    return float(min(level, surface))


def _type_key(d: sizing.SizedDesign):
    r = d.reinforcement
    bars = tuple((b.bar_mm, b.spacing_mm) if b is not None else None
                 for b in (r.stem, r.heel, r.toe, r.stem_horizontal, r.base_distribution,
                           r.stem_front))
    return (d.section, bars, r.stem_curtail_m, getattr(d, "section_type", ""))


def design(site: Site, progress=None) -> DesignResult:
    """Design the whole wall of ``site`` (design-basis sections 1 to 7)."""
    tick = progress or (lambda stage, done, total: None)
    timings: dict[str, float] = {}
    t0 = time.perf_counter()
    profiles = build_profiles(site)
    runs = find_runs(profiles, site.wall)
    timings["profile"] = time.perf_counter() - t0

    t0 = time.perf_counter()
    designer = _Designer(site, tick=tick, expected=sum(
        math.ceil(r.length_m / site.wall.max_panel_length_m) for r in runs))
    if site.design.sections == "bespoke" and designer.expected >= LOCKSTEP_FROM:
        from wallrun import lockstep
        t1 = time.perf_counter()
        demands = [demand_of(e, site) for r in runs for e in first_pass_extents(profiles, r, site)]
        designer.batch = lockstep.Lockstep(site.basis, site.rates, site.design.dimension_step_m)
        with workers.twin():  # half of each batch's checks on the second core
            designed = designer.batch.design_many(demands)
        for dem, d in zip(demands, designed):
            designer.cache[dem] = d
        designer.seconds += time.perf_counter() - t1
        tick("sizing", len(designer.cache), designer.expected)
    laid = []  # (run, extents, designs, joints)
    for run in runs:
        laid.append((run, *settle_run(profiles, run, site, designer)))
    timings["panels"] = time.perf_counter() - t0 - designer.seconds
    timings["sizing"] = designer.seconds

    if site.design.sections == "rationalised":
        t0 = time.perf_counter()
        laid = _rationalise(site, laid)
        timings["sizing"] += time.perf_counter() - t0

    t0 = time.perf_counter()
    panel_rows = []  # (panel, design, demand)
    joints: list[Joint] = []
    n = 0
    for run, exts, designs, jfigs in laid:
        names = []
        for ext, d in zip(exts, designs):
            n += 1
            demand = demand_of(ext, site)
            panel = Panel(
                panel=f"P{n:03d}", run=run.run, side=run.side, ch_start_m=ext.ch_start,
                ch_end_m=ext.ch_end, retained_top_m=demand.z_top, front_min_m=demand.z_front,
                founding_m=float(d.z_found), wall_top_start_m=ext.wall_top_start,
                wall_top_end_m=ext.wall_top_end, foundation=demand.foundation,
                backfill=site.backfill, surcharge_kpa=site.loads.surcharge_kpa,
                water_level_m=water_level_used(demand, d, site.backfill.slope_deg),
                length_m=profiles.length_along(ext.ch_start, ext.ch_end))
            panel_rows.append((panel, d, demand,
                               pn.mean_front_level(profiles, run.side, ext.ch_start, ext.ch_end)))
            names.append(panel.panel)
        for i, (fig, problems) in enumerate(jfigs):
            joints.append(Joint(
                joint=f"J{len(joints) + 1:03d}", ch_m=exts[i].ch_end, left=names[i],
                right=names[i + 1], founding_step_m=fig.founding_step_m,
                top_step_m=fig.top_step_m, pressure_ratio=fig.pressure_ratio,
                status="flagged" if problems else "ok",
                reason=("cannot split further: " + "; ".join(problems)) if problems else ""))

    # section types in chainage order of first use
    type_names: dict = {}
    for _, d, _, _ in panel_rows:
        key = _type_key(d)
        if key not in type_names:
            given = getattr(d, "section_type", "")
            type_names[key] = given or f"S{len(type_names) + 1:02d}"

    results = []
    all_bars = []
    per_panel_bars = []
    for panel, d, _, _ in panel_rows:
        name = type_names[_type_key(d)]
        rows = bars_mod.panel_bars(name, d.section, d.reinforcement, panel, site.basis)
        per_panel_bars.append(rows)
        all_bars.extend(rows)
    schedule = bars_mod.schedule(all_bars)
    timings["reinforcement"] = time.perf_counter() - t0

    t0 = time.perf_counter()
    per_panel_q = []
    for k, ((panel, d, _, front_mean), rows) in enumerate(zip(panel_rows, per_panel_bars)):
        q = takeoff.panel_quantities(panel, d.section, rows, site.takeoff,
                                     front_level_m=front_mean, **_end_kwargs(panel_rows, k))
        per_panel_q.append(q)
        pq = tuple(Quantity(item, takeoff.UNITS.get(item, ""), v) for item, v in q.items())
        pcost = takeoff.cost(pq, site.rates)
        results.append(PanelResult(
            panel=panel, section_type=type_names[_type_key(d)], section=d.section,
            reinforcement=d.reinforcement, checks=d.checks, status=d.status, reason=d.reason,
            quantities=q, concrete_m3=q.get("concrete_total", 0.0),
            steel_kg=q.get("reinforcement_total", 0.0), cost=pcost.total))
    quantities = takeoff.totals(per_panel_q)
    cost = takeoff.cost(quantities, site.rates)
    timings["takeoff"] = time.perf_counter() - t0

    section_types = []
    actions = {}
    by_type: dict[str, list] = {}
    for r, (_, d, dem, _) in zip(results, panel_rows):
        by_type.setdefault(r.section_type, []).append((r, d, dem))
    for key, name in type_names.items():
        members = by_type[name]
        worst_r, worst_d, worst_dem = max(
            members, key=lambda m: max((c.utilization for c in m[0].checks), default=0.0))
        section_types.append(SectionType(
            section_type=name, section=worst_d.section, reinforcement=worst_d.reinforcement,
            governing=worst_r.governing,
            utilization=max((c.utilization for c in worst_r.checks), default=0.0),
            panels=tuple(m[0].panel.panel for m in members)))
        if worst_d.checks:
            cond = sizing.conditions_for(worst_dem, worst_d.section.base_thickness_m)
            actions[name] = stability.action_table(worst_d.section, cond, site.basis)
        else:  # a flagged panel that could not be designed at all has no actions
            actions[name] = ()

    warnings = tuple(site.warnings)
    return DesignResult(site=site, profiles=profiles, runs=tuple(runs), panels=tuple(results),
                        joints=tuple(joints), section_types=tuple(section_types),
                        actions=actions, bar_schedule=tuple(schedule),
                        quantities=tuple(quantities), cost=cost, warnings=warnings,
                        timings=timings, search=_search_stats(designer))


def _search_stats(designer: _Designer) -> dict:
    """Candidates evaluated by the bespoke search, for the benchmark (empty when the
    one-panel search of ``sizing`` ran: it keeps its own counters)."""
    b = designer.batch
    if b is None:
        return {}
    return {"candidates": float(b.evaluated), "calls": float(b.calls)}


def _end_kwargs(panel_rows, k: int) -> dict:
    """Joint facts at the ends of panel k for the take-off: a sealed joint at its end
    when the next panel is on the same run (one seal per joint)."""
    panel = panel_rows[k][0]
    nxt = panel_rows[k + 1][0] if k + 1 < len(panel_rows) else None
    sealed = 1 if (nxt is not None and nxt.run == panel.run) else 0
    return {"stop_ends": 2, "joint_seals": sealed}


def _rationalise(site: Site, laid):
    """Replace the bespoke designs by at most ``max_types`` sections (design-basis 6),
    then re-check the joints with the assigned sections (no further splitting)."""
    demands, lengths, where = [], [], []
    for r, (run, exts, designs, jfigs) in enumerate(laid):
        for i, e in enumerate(exts):
            demands.append(demand_of(e, site))
            lengths.append(e.length)
            where.append((r, i))
    assigned = sizing.rationalise(demands, lengths, site.basis, site.rates,
                                  site.design.max_types)
    out = []
    k = 0
    for run, exts, designs, _ in laid:
        new = list(assigned[k:k + len(exts)])
        k += len(exts)
        _mend_joints(site, exts, new)
        jfigs = [_joint(exts[i], new[i], exts[i + 1], new[i + 1], site.wall)
                 for i in range(len(exts) - 1)]
        out.append((run, exts, new, jfigs))
    return out


def _with_type(site: Site, ext, d_type: sizing.SizedDesign):
    """The panel of ``ext`` built with the section and bars of another panel's type, or
    None where that fails a check at this panel, or where this panel would need its
    stem bars to run higher than the type's common curtailment stop."""
    from dataclasses import replace

    from wallrun.section import SectionArrays
    demand = demand_of(ext, site)
    ev = sizing.evaluate(SectionArrays.of([d_type.section]), demand, site.basis, site.rates,
                         given=d_type.reinforcement)
    if not bool(ev.ok[0]):
        return None
    own_stop = ev.structure.reinforcement(0).stem_curtail_m
    type_stop = d_type.reinforcement.stem_curtail_m
    if type_stop is not None and (own_stop is None or own_stop > type_stop + 1e-9):
        return None
    d = sizing._sized(ev, 0, demand, site.basis, section_type=d_type.section_type)
    return replace(d, reinforcement=replace(d.reinforcement, stem_curtail_m=type_stop))


def _mend_joints(site: Site, exts, designs, passes: int = 3) -> None:
    """Cure joints that the rationalised set breaks, without new types: at a failing
    joint, build one of its two panels with another type of the run when that passes
    every check there and cures the joint (the cheaper such move first; a move may pass the
    problem on to the next joint along the run, never back to the previous one). In
    place, joints in chainage order, a few passes; joints no move cures stay failing
    (flagged)."""
    wall = site.wall
    types = {d.section_type: d for d in designs if d.status == "ok"}  # one design per type

    def fails(i):
        return 0 <= i < len(exts) - 1 and bool(
            _joint(exts[i], designs[i], exts[i + 1], designs[i + 1], wall)[1])

    for _ in range(passes):
        moved = False
        for i in range(len(exts) - 1):
            if not fails(i):
                continue
            moves = []
            for k in (i, i + 1):
                for t in types.values():
                    if t.section_type == designs[k].section_type:
                        continue
                    cand = _with_type(site, exts[k], t)
                    if cand is not None:
                        moves.append((cand.cost_per_m * exts[k].length, k, cand))
            for _, k, cand in sorted(moves, key=lambda m: m[0]):
                old = designs[k]
                designs[k] = cand
                # moving the left panel must not break the joint before it (already
                # settled); moving the right one may pass the problem on to the next
                # joint, which this pass comes to next
                if not fails(i) and (k == i + 1 or not fails(i - 1)):
                    moved = True
                    break
                designs[k] = old
        if not moved:
            return

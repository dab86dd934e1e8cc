"""The panels of every run with their joints cured (design-basis section 1).

:func:`lay_out` cuts each run into its first panels, designs them (through the
``design_many`` function it is given: the bespoke search, the catalogue or a
rationalised set) and checks every joint. A failing joint is cured, in this order:

(a) a founding step over ``max_founding_step_m``: the higher-founded panel's underside
    of base is lowered in ``founding_step_m`` increments until the step holds, and that
    panel is designed again at its lower level;
(b) an edge-pressure ratio over ``max_pressure_ratio``: the panel with the larger edge
    pressure is designed again with its pressure capped at ``max_pressure_ratio`` times
    its neighbour's (check ``joint_pressure``);
(c) otherwise, and for a top step over ``max_top_step_m``: the longer panel (the later
    when equal) is halved, while the halves are at least ``min_panel_length_m`` long.

A cure whose panel then finds no passing section is taken back and the next one tried;
a joint no cure mends is flagged with the reason. Every pass designs all the changed
panels of every run in one batch. Levels in m, pressures in kPa.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

from wallrun import panels as pn
from wallrun.settings import Site
from wallrun.sizing import Demand, SizedDesign

#: Passes of the cure loop before the joints still failing are flagged.
MAX_PASSES = 60


@dataclass(frozen=True)
class Slot:
    """A panel being laid out: its run, side and extent along the run (m), and the cures
    applied to it: the founding level lowered by ``extra_depth_m`` (m), the edge pressure
    capped at ``cap_kpa`` (kPa, or None)."""

    run: int
    side: str
    a: float
    b: float
    extra_depth_m: float = 0.0
    cap_kpa: float | None = None

    @property
    def plain(self) -> "Slot":
        return Slot(self.run, self.side, self.a, self.b)

    @property
    def length(self) -> float:
        return self.b - self.a


@dataclass(frozen=True)
class JointState:
    """A joint's figures and its problems (empty when it passes), and the reason it is
    flagged (empty when it passes)."""

    figures: pn.JointFigures
    problems: tuple[str, ...]
    reason: str = ""


@dataclass(frozen=True)
class RunLayout:
    """A run's panels (slots, extents, demands, designs) and its joints, in order."""

    run: object  # results.Run
    slots: tuple[Slot, ...]
    extents: tuple[pn.Extent, ...]
    demands: tuple[Demand, ...]
    designs: tuple[SizedDesign, ...]
    joints: tuple[JointState, ...]


def demand_of(ext: pn.Extent, site: Site, extra_depth_m: float = 0.0,
              cap_kpa: float | None = None) -> Demand:
    """The section-independent conditions of a panel (design-basis section 1).

    Levels are snapped outwards to 1e-6 m (z_top up, z_front down): conservative, and
    equal conditions computed with float noise share one design."""
    mid = 0.5 * (ext.ch_start + ext.ch_end)
    return Demand(
        z_top=math.ceil(ext.z_top * 1e6 - 1e-3) / 1e6,
        z_front=math.floor(ext.z_front * 1e6 + 1e-3) / 1e6, backfill=site.backfill,
        foundation=site.foundation_at(mid), surcharge_kpa=site.loads.surcharge_kpa,
        water=site.water, wall_top_m=round(max(ext.wall_top_start, ext.wall_top_end), 6),
        min_founding_depth_m=site.wall.min_founding_depth_m,
        founding_step_m=site.wall.founding_step_m, extra_depth_m=round(extra_depth_m, 6),
        max_edge_pressure_kpa=None if cap_kpa is None else round(cap_kpa, 6))


#: The reason of a joint beside a panel the sizing left without a section.
NOT_EVALUATED = "not evaluated: a neighbouring panel is not designed"


def joint_state(ext_l: pn.Extent, d_l: SizedDesign, ext_r: pn.Extent, d_r: SizedDesign,
                wall) -> JointState:
    """The figures and problems of the joint between two panels. Beside a panel without
    a section (flagged by the sizing) the founding step and the pressure ratio have no
    value (NaN: the failing candidate's levels and pressures are not a design): the
    joint is flagged :data:`NOT_EVALUATED` (and its top step checked, which the profiles
    fix), and no cure is tried."""
    if d_l.status == "ok" and d_r.status == "ok":
        fig = pn.joint_figures(d_l.z_found, d_r.z_found, ext_l.wall_top_end,
                               ext_r.wall_top_start, d_l.edge_pressure_sls_kpa,
                               d_r.edge_pressure_sls_kpa)
        return JointState(fig, tuple(pn.joint_problems(fig, wall)))
    nan = float("nan")
    fig = pn.joint_figures(nan, nan, ext_l.wall_top_end, ext_r.wall_top_start, nan, nan)
    problems = (NOT_EVALUATED,) + tuple(pn.joint_problems(fig, wall))
    return JointState(fig, problems, reason="; ".join(problems))


def first_slots(run, site: Site, profiles=None) -> list[Slot]:
    """The panels of a run before any joint is cured: cut at every foundation-zone
    boundary, each piece into equal panels of at most ``max_panel_length_m`` (measured
    along the wall line with ``profiles``: ``panels.cut_points``)."""
    bounds = [b for z in site.zones for b in (z.from_m, z.to_m)]
    pts = pn.cut_points(run.ch_start_m, run.ch_end_m, bounds, site.wall, profiles)
    return [Slot(run.run, run.side, a, b) for a, b in zip(pts[:-1], pts[1:])]


def lay_out(profiles, runs, site: Site, design_many, slots=None,
            tick=None) -> list[RunLayout]:
    """The panels of ``runs`` with every curable joint cured (see the module docstring).

    design_many(demands) -> designs, in order. ``slots``: the panels to start from per run
    (default the first cut). ``tick(done, total)``: progress by joints settled.
    """
    wall = site.wall
    slots = {r.run: list(slots[r.run]) if slots else first_slots(r, site, profiles) for r in runs}
    ext_cache: dict[tuple, pn.Extent] = {}
    failed: set[tuple] = set()  # (run, a, b, cure) that left the panel without a section

    def ext_of(s: Slot) -> pn.Extent:
        key = (s.run, s.a, s.b)
        if key not in ext_cache:
            ext_cache[key] = pn.extent(profiles, s.run, s.side, s.a, s.b, wall)
        return ext_cache[key]

    for _ in range(MAX_PASSES):
        order = [s for r in runs for s in slots[r.run]]
        dems = [demand_of(ext_of(s), site, s.extra_depth_m, s.cap_kpa) for s in order]
        des = dict(zip(order, design_many(dems)))
        # a cure that left its panel without a passing section is taken back
        back = False
        for r in runs:
            for k, s in enumerate(slots[r.run]):
                if s != s.plain and des[s].status != "ok":
                    kind = "lower" if s.extra_depth_m and s.cap_kpa is None else "cap"
                    failed.add((s.run, s.a, s.b, kind))
                    slots[r.run][k] = s.plain
                    back = True
        if back:
            continue
        changed, settled, total = False, 0, 0
        for r in runs:
            new = _cure_run(slots[r.run], des, ext_of, wall, failed)
            total += max(len(slots[r.run]) - 1, 0)
            if new is None:
                settled += max(len(slots[r.run]) - 1, 0)
            else:
                slots[r.run] = new
                changed = True
        if tick is not None:
            tick(settled, total)
        if not changed:
            break
    out = []
    for r in runs:
        ss = slots[r.run]
        exts = [ext_of(s) for s in ss]
        dems = [demand_of(e, site, s.extra_depth_m, s.cap_kpa) for s, e in zip(ss, exts)]
        designs = design_many(dems)
        joints = []
        for i in range(len(ss) - 1):
            js = joint_state(exts[i], designs[i], exts[i + 1], designs[i + 1], wall)
            if js.problems and not js.reason:
                js = replace(js, reason="cannot cure: " + "; ".join(js.problems))
            joints.append(js)
        out.append(RunLayout(r, tuple(ss), tuple(exts), tuple(dems), tuple(designs),
                             tuple(joints)))
    return out


def _cure_run(ss: list[Slot], des: dict, ext_of, wall, failed: set) -> list[Slot] | None:
    """The slots of a run with one cure applied to each failing joint (in chainage order,
    a slot cured once a pass), or None when every joint passes or none can be cured."""
    new = list(ss)
    touched: set[int] = set()
    splits: set[int] = set()
    for i in range(len(ss) - 1):
        L, R = ss[i], ss[i + 1]
        js = joint_state(ext_of(L), des[L], ext_of(R), des[R], wall)
        if not js.problems or {i, i + 1} & (touched | splits):
            continue
        fig = js.figures
        dl, dr = des[L], des[R]
        if dl.status != "ok" or dr.status != "ok":
            continue  # a panel without a section: the joint cannot be evaluated
        tol = 1e-6
        if fig.founding_step_m > wall.max_founding_step_m + tol:
            k = i if dl.z_found > dr.z_found else i + 1  # the higher-founded panel
            s = ss[k]
            if (s.run, s.a, s.b, "lower") not in failed:
                need = fig.founding_step_m - wall.max_founding_step_m
                inc = math.ceil(need / wall.founding_step_m - 1e-9) * wall.founding_step_m
                new[k] = replace(s, extra_depth_m=round(s.extra_depth_m + inc, 6))
                touched.add(k)
                continue
        elif (fig.top_step_m <= wall.max_top_step_m + tol
              and fig.pressure_ratio > wall.max_pressure_ratio + tol):
            k = i if dl.edge_pressure_sls_kpa > dr.edge_pressure_sls_kpa else i + 1
            other = dr if k == i else dl
            s = ss[k]
            if (s.run, s.a, s.b, "cap") not in failed:
                cap = wall.max_pressure_ratio * other.edge_pressure_sls_kpa * (1 - 1e-6)
                cap = cap if s.cap_kpa is None else min(cap, s.cap_kpa)
                new[k] = replace(s, cap_kpa=cap)
                touched.add(k)
                continue
        k = i + pn.halve_target(L.length, R.length)
        if ss[k].length / 2 >= wall.min_panel_length_m - 1e-9:
            splits.add(k)
    if not touched and not splits:
        return None
    out = []
    for k, s in enumerate(new):
        if k in splits:
            m = 0.5 * (s.a + s.b)
            out += [Slot(s.run, s.side, s.a, m), Slot(s.run, s.side, m, s.b)]
        else:
            out.append(s)
    return out

"""A small but complete DesignResult built by hand, in the contract types only.

The scenario is invented for the tests: a yard extension on a gentle slope, 44 m of
profile, one fill run of three 8 m panels (ch 2 to 26) and one cut run of two 4 m
panels (ch 30 to 38), two section types (S01 with a shear key, S02 without), bars,
a bar schedule and joints. The panel levels follow design-basis section 1 from the
profiles (retained top = highest retained level, front = lowest front level, founding
by ``panels.founding_level``, stepped top by ``panels.ceil_inc``), so the figures are
consistent with each other; the checks and utilizations are invented.

``long_result(length_m)`` builds a long wall of 8 m panels the same way, for timing
the drawings on a benchmark-sized job.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, fields

import numpy as np

from wallrun.panels import ceil_inc, founding_level
from wallrun.profile import Profiles, build_profiles
from wallrun.results import (BarMark, BarSet, CheckEntry, Cost, CostRow, DesignResult,
                             Joint, Panel, PanelResult, Quantity, Reinforcement, Run,
                             SectionType)
from wallrun.section import Section
from wallrun.settings import (Drawings, ProfileData, Project, Site,
                              Wall, Water)

STEEL_DENSITY = 7850.0  # kg/m3 (design-basis section 7)


@dataclass(frozen=True)
class SampleProfiles(Profiles):
    """The profiles of the sample's site (``wallrun.profile.build_profiles``), with the
    short names of the ground points the drawing tests read."""

    @property
    def g_ch(self) -> np.ndarray:
        return self.ground_ch

    @property
    def g_lv(self) -> np.ndarray:
        return self.ground_level


def _profiles(site: Site) -> SampleProfiles:
    p = build_profiles(site)
    return SampleProfiles(**{f.name: getattr(p, f.name) for f in fields(p)})


S01 = Section(stem_top_m=0.25, stem_base_m=0.35, base_width_m=2.40, toe_m=0.60,
              base_thickness_m=0.35, key_depth_m=0.30, key_width_m=0.30)
S02 = Section(stem_top_m=0.25, stem_base_m=0.30, base_width_m=1.80, toe_m=0.45,
              base_thickness_m=0.30)

R01 = Reinforcement(
    stem=BarSet(16, 150, 1340.4, 1105.0, 292.0),
    heel=BarSet(16, 200, 1005.3, 870.0, 292.0),
    toe=BarSet(12, 200, 565.5, 420.0, 269.0),
    stem_horizontal=BarSet(10, 200, 392.7, 350.0, 0.0),
    base_distribution=BarSet(10, 250, 314.2, 268.0, 0.0),
    stem_front=BarSet(10, 250, 314.2, 300.0, 0.0),
    stem_curtail_m=1.40)
R02 = Reinforcement(
    stem=BarSet(12, 150, 754.0, 610.0, 244.0),
    heel=BarSet(12, 200, 565.5, 480.0, 244.0),
    toe=BarSet(10, 200, 392.7, 330.0, 220.0),
    stem_horizontal=BarSet(10, 250, 314.2, 300.0, 0.0),
    base_distribution=BarSet(10, 300, 261.8, 150.0, 0.0))


def _bar(section, member, mark, phi, shape, length_mm, number, dims):
    total = number * length_mm / 1000.0
    mass = math.pi / 4 * (phi / 1000.0) ** 2 * STEEL_DENSITY * total
    # the part of the bar: a bent stem bar is a starter (BarMark.part)
    part = {"stem": "starter", "stem_front": "starter_front"}.get(member, member) \
        if shape != "00" and member in ("stem", "stem_front") else member
    return BarMark(section, member, mark, phi, shape, length_mm, number, round(total, 3),
                   round(mass, 2), dims, part=part)


def _schedule() -> tuple[BarMark, ...]:
    return (
        _bar("S01", "stem", "01", 16, "21", 3650, 162, {"A": 450, "B": 3200}),
        _bar("S01", "stem", "02", 16, "00", 1950, 162, {"A": 1950}),
        _bar("S01", "heel", "03", 16, "00", 2250, 120, {"A": 2250}),
        _bar("S01", "toe", "04", 12, "00", 2250, 120, {"A": 2250}),
        _bar("S01", "stem_horizontal", "05", 10, "00", 7900, 2 * 3 * 16, {"A": 7900}),
        _bar("S01", "base_distribution", "06", 10, "00", 7900, 2 * 3 * 9, {"A": 7900}),
        _bar("S01", "stem_front", "07", 10, "21", 3500, 96, {"A": 300, "B": 3200}),
        _bar("S02", "stem", "01", 12, "21", 2700, 54, {"A": 350, "B": 2350}),
        _bar("S02", "heel", "02", 12, "00", 1650, 40, {"A": 1650}),
        _bar("S02", "toe", "03", 10, "00", 1650, 40, {"A": 1650}),
        _bar("S02", "stem_horizontal", "04", 10, "00", 3900, 2 * 2 * 10, {"A": 3900}),
        _bar("S02", "base_distribution", "05", 10, "00", 3900, 2 * 2 * 5, {"A": 3900}),
    )


def _checks(u: float) -> tuple[CheckEntry, ...]:
    return (
        CheckEntry("sliding", "DA1-2", "drained", 40.0 * u, 40.0, "kN/m", u,
                   "EN 1997-1 6.5.3", True),
        CheckEntry("stem_bending", "DA1-1", "G unfav, heel load on", 60.0 * u * 0.9, 60.0,
                   "kNm/m", u * 0.9, "EN 1992-1-1 6.1", True),
    )


def _panel_levels(prof: Profiles, side: str, a: float, b: float, t_base: float,
                  wall: Wall):
    """Levels of one panel by design-basis section 1 (envelope over the panel)."""
    bp = prof.breakpoints
    pts = np.concatenate([[a, b], bp[(bp > a) & (bp < b)]])
    G, F = prof.ground(pts), prof.finished(pts)
    ret, front = (F, G) if side == "fill" else (G, F)
    z_top, z_front = float(ret.max()), float(front.min())
    z_found = float(founding_level(z_front, t_base, wall.min_founding_depth_m,
                                   wall.founding_step_m))
    top = float(ceil_inc(z_top + wall.freeboard_m, wall.top_step_m))
    return z_top, z_front, z_found, top


def _site(g_ch, g_lv, f_ch, f_lv, x, y, name: str, ve: float, tick: float, water) -> Site:
    ground = ProfileData(g_ch, g_lv, x, y, source="ground.csv",
                         lines=tuple(range(2, 2 + len(g_ch))))
    finished = ProfileData(f_ch, f_lv, source="finished.csv",
                           lines=tuple(range(2, 2 + len(f_ch))))
    return Site(root="/nonexistent/sample-site", project=Project(name, "WR-TEST-014"),
                ground=ground, finished=finished, alignment=None, water=water,
                drawings=Drawings(vertical_exaggeration=ve, chainage_tick_m=tick))


def _build(prof, site, spans, types, reinf, schedule, runs_side) -> DesignResult:
    panels, by_run = [], {}
    k = 0
    for run_no, (side, cuts, stype) in enumerate(spans, start=1):
        for a, b, st in zip(cuts[:-1], cuts[1:], stype):
            k += 1
            sec = types[st]
            z_top, z_front, z_found, top = _panel_levels(prof, side, a, b,
                                                         sec.base_thickness_m, site.wall)
            p = Panel(f"P{k:03d}", run_no,
                      side, float(a), float(b), z_top, z_front, z_found, top, top,
                      site.foundation, site.backfill, site.loads.surcharge_kpa,
                      None if site.water is None else site.water.level_m)
            u = 0.55 + 0.4 * (z_top - z_found) / 5.0
            panels.append(PanelResult(p, st, sec, reinf[st], _checks(min(u, 0.98)), "ok",
                                      concrete_m3=1.0 * p.length_m, steel_kg=60.0 * p.length_m,
                                      cost=400.0 * p.length_m))
            by_run.setdefault(run_no, []).append(panels[-1])
    joints = []
    for run_no, prs in by_run.items():
        for l, r in zip(prs[:-1], prs[1:]):
            joints.append(Joint(f"J{len(joints) + 1:03d}", r.panel.ch_start_m, l.panel.panel,
                                r.panel.panel,
                                round(abs(l.panel.founding_m - r.panel.founding_m), 3),
                                round(abs(l.panel.wall_top_start_m - r.panel.wall_top_start_m), 3),
                                1.1, "ok", ""))
    runs = []
    for run_no, prs in by_run.items():
        hmax = max(p.panel.retained_height_m for p in prs)
        at = max(prs, key=lambda p: p.panel.retained_height_m).panel.ch_start_m
        runs.append(Run(run_no, runs_side[run_no - 1], prs[0].panel.ch_start_m,
                        prs[-1].panel.ch_end_m, hmax, at))
    stypes = tuple(SectionType(st, types[st], reinf[st], "sliding DA1-2", 0.9,
                               tuple(p.panel.panel for p in panels if p.section_type == st))
                   for st in sorted(types) if any(p.section_type == st for p in panels))
    total_conc = sum(p.concrete_m3 for p in panels)
    quantities = (Quantity("concrete_total", "m3", total_conc),)
    cost = Cost((CostRow("concrete_total", "m3", total_conc, 180.0, 180.0 * total_conc),),
                180.0 * total_conc, True, True)
    return DesignResult(site=site, profiles=prof, runs=tuple(runs), panels=tuple(panels),
                        joints=tuple(joints), section_types=stypes, actions={},
                        bar_schedule=schedule, quantities=quantities, cost=cost)


def sample_result(vertical_exaggeration: float = 2.0, chainage_tick_m: float = 10.0,
                  with_plan: bool = True, water_level_m: float | None = 49.8) -> DesignResult:
    """The small invented scenario (see the module docstring)."""
    g_ch = np.array([0.0, 6.0, 12.0, 20.0, 28.0, 34.0, 40.0, 44.0])
    g_lv = np.array([50.20, 50.00, 49.60, 49.30, 49.50, 51.40, 51.60, 51.20])
    f_ch = np.array([0.0, 2.0, 10.0, 26.0, 28.0, 30.0, 38.0, 40.0, 44.0])
    f_lv = np.array([50.40, 51.20, 52.00, 52.30, 50.80, 49.60, 49.60, 50.90, 51.20])
    x = y = None
    if with_plan:
        # plan: 20 m due east, then bending 30 degrees to the north (invented grid)
        ang = np.where(g_ch <= 20.0, 0.0, math.radians(30.0))
        seg = np.diff(g_ch, prepend=0.0)
        x = 5200.0 + np.cumsum(seg * np.cos(ang))
        y = 1800.0 + np.cumsum(seg * np.sin(ang))
    water = None if water_level_m is None else Water(level_m=water_level_m)
    site = _site(g_ch, g_lv, f_ch, f_lv, x, y, "Hollin Bank yard extension (test scenario)",
                 vertical_exaggeration, chainage_tick_m, water)
    prof = _profiles(site)
    spans = [("fill", [2.0, 10.0, 18.0, 26.0], ["S01", "S01", "S01"]),
             ("cut", [30.0, 34.0, 38.0], ["S02", "S02"])]
    return _build(prof, site, spans, {"S01": S01, "S02": S02}, {"S01": R01, "S02": R02},
                  _schedule(), ["fill", "cut"])


def long_result(length_m: float = 10000.0, panel_m: float = 8.0) -> DesignResult:
    """A long invented fill wall of ``panel_m`` panels (about 1,250 for 10 km), with
    undulating ground and a plan curve, alternating S01/S02 by retained height."""
    n_pts = int(length_m / 25.0) + 1
    ch = np.linspace(0.0, length_m, n_pts)
    g = 60.0 + 4.0 * np.sin(ch / 700.0) + 0.6 * np.sin(ch / 53.0)
    f = g + 1.5 + 0.8 * np.sin(ch / 190.0)
    x = 10000.0 + 900.0 * np.sin(ch / 1800.0) + 0.3 * ch
    y = 20000.0 + ch * 0.9
    site = _site(ch, g, ch.copy(), f, x, y, "Long test wall (benchmark scenario)", 2.0, 100.0,
                 None)
    prof = _profiles(site)
    n = int(math.floor((length_m - 4.0) / panel_m))
    cuts = [2.0 + panel_m * i for i in range(n + 1)]
    # section type by retained height at the panel middle
    mids = 0.5 * (np.array(cuts[:-1]) + np.array(cuts[1:]))
    h = prof.finished(mids) - prof.ground(mids)
    stype = ["S01" if hi > 1.6 else "S02" for hi in h]
    return _build(prof, site, [("fill", cuts, stype)], {"S01": S01, "S02": S02},
                  {"S01": R01, "S02": R02}, _schedule(), ["fill"])

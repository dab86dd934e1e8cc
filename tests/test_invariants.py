"""Invariants of a whole design over random invented sites (issue 10 item 5).

Each example is a small site (30-80 m, 3-5 survey points, retained heights 0.3-4 m on
the fill side, the cut side or both), read through ``load_site`` and designed by
``pipeline.design``. The result is rechecked independently of the pipeline:

- the panels of each run tile it without gap or overlap, and every stretch that needs
  a wall (``profile.needed_stretches``) lies inside a run of its side;
- every ``ok`` panel's stability checks, recomputed by the plain per-candidate path
  ``plain.plain_stability_checks`` from the panel's own levels and ground, are <= 1.0
  and agree with the reported utilizations within 1e-6 relative;
- the founding depth holds at every breakpoint inside each panel and at its ends:
  z_found <= front level - max(min_founding_depth_m, base thickness) (design-basis 1);
- every joint step and pressure ratio is within its limit or the joint is flagged, and
  the reported founding step is the difference of the two panels' founding levels;
- job totals equal the sum over panels; the bar schedule's mass equals
  reinforcement_total.
"""

from __future__ import annotations

import math
import time
from pathlib import Path

import numpy as np
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from wallrun import pipeline
from wallrun.conditions import Conditions
from plain_reference import plain_stability_checks
from wallrun.profile import needed_stretches
from wallrun.site import load_site

STABILITY = {"overturning", "sliding", "bearing", "eccentricity", "eccentricity_sls",
             "bearing_sls"}
TOL = 1e-6
#: The pipeline designs each panel for its levels rounded to 1e-6 m
#: (``pipeline.demand_of``) but reports the unrounded levels in the Panel; rechecked
#: from the reported levels, utilizations then differ by up to about 1e-6 relative.
#: The invariant run allows 1e-5; test_reported_levels_are_the_design_levels below
#: holds the 1e-6 of the brief and fails until the pipeline reports the levels used.
TOL_REPORTED = 1e-5
#: Bar masses are rounded to 1 g per schedule row and per panel row.
MASS_ROUNDING_KG = 0.0005


@st.composite
def sites(draw):
    L = round(draw(st.floats(30.0, 80.0)) * 2) / 2
    n = draw(st.integers(3, 5))
    base = draw(st.floats(5.0, 200.0)).__round__(2)
    gch = np.linspace(0.0, L, n)
    glv = [round(base + draw(st.floats(-0.6, 0.6)), 3) for _ in range(n)]
    mode = draw(st.sampled_from(["fill", "cut", "both"]))
    m = draw(st.integers(3, 4))
    fch = np.linspace(0.0, L, m)
    offs = []
    for k in range(m):
        h = draw(st.floats(0.3, 4.0))
        sign = {"fill": 1, "cut": -1}.get(mode, 1 if k < m / 2 else -1)
        offs.append(sign * h)
    flv = [round(float(np.interp(c, gch, glv)) + o, 3) for c, o in zip(fch, offs)]
    water = draw(st.sampled_from([None, None, "height", "level"]))
    slope = draw(st.sampled_from([0.0, 0.0, 10.0]))
    zone = draw(st.booleans())
    return dict(L=L, ground=list(zip(gch, glv)), finished=list(zip(fch, flv)), water=water,
                slope=slope, zone=zone, base=base, top=draw(st.sampled_from(["stepped", "sloped"])))


def write_site(root: Path, s: dict) -> Path:
    root.mkdir(parents=True, exist_ok=True)
    toml = ['[project]', 'name = "Invariant case"', '', '[profiles]', 'ground = "ground.csv"',
            'finished = "finished.csv"', '', '[wall]', 'max_panel_length_m = 8.0',
            'min_panel_length_m = 2.0', f'top = "{s["top"]}"', '', '[backfill]',
            f'slope_deg = {s["slope"]}']
    if s["zone"]:
        toml += ['', '[[foundation.zones]]', f'from_m = {s["L"] / 2}', f'to_m = {s["L"]}',
                 'friction_angle_deg = 27.0', 'unit_weight_kn_m3 = 18.0']
    if s["water"] == "height":
        toml += ['', '[water]', 'height_above_base_m = 0.6']
    elif s["water"] == "level":
        toml += ['', '[water]', f'level_m = {s["base"] - 0.5}']
    (root / "site.toml").write_text("\n".join(toml) + "\n", encoding="utf-8")
    for name, pts in (("ground.csv", s["ground"]), ("finished.csv", s["finished"])):
        (root / name).write_text("chainage_m,level_m\n" + "".join(
            f"{c:.3f},{v:.3f}\n" for c, v in pts), encoding="utf-8")
    return root


def conditions_of(panel, site) -> Conditions:
    w = site.water
    level = None
    if w is not None:
        level = w.level_m if w.level_m is not None else panel.founding_m + w.height_above_base_m
    return Conditions(z_top=panel.retained_top_m, z_front=panel.front_min_m,
                      z_found=panel.founding_m, backfill=panel.backfill,
                      foundation=panel.foundation, surcharge_kpa=panel.surcharge_kpa,
                      water_level_m=level)


def close(a: float, b: float, tol: float = TOL, floor: float = 1e-9) -> bool:
    """Relative agreement; ``floor`` bounds the scale from below (a near-zero
    eccentricity utilization is ill-conditioned relative to its own size)."""
    return abs(a - b) <= tol * max(abs(a), abs(b), floor)


def check_invariants(site, res, tol: float = TOL_REPORTED, mass_exact: bool = False,
                     floor: float = 1.0):
    prof = res.profiles
    wall = site.wall
    panels = res.panels

    # coverage: panels of each run tile it; needed stretches inside runs of their side
    for run in res.runs:
        mine = sorted((p for p in panels if p.panel.run == run.run),
                      key=lambda p: p.panel.ch_start_m)
        assert mine, run
        assert math.isclose(mine[0].panel.ch_start_m, run.ch_start_m, abs_tol=1e-9)
        assert math.isclose(mine[-1].panel.ch_end_m, run.ch_end_m, abs_tol=1e-9)
        for a, b in zip(mine, mine[1:]):
            assert math.isclose(a.panel.ch_end_m, b.panel.ch_start_m, abs_tol=1e-9), (a, b)
        for p in mine:
            assert p.panel.ch_end_m > p.panel.ch_start_m
            assert p.panel.ch_end_m - p.panel.ch_start_m <= wall.max_panel_length_m + 1e-9
            assert p.panel.side == run.side
    spans = sorted((p.panel.ch_start_m, p.panel.ch_end_m) for p in panels)
    for (a0, a1), (b0, b1) in zip(spans, spans[1:]):
        assert b0 >= a1 - 1e-9, "panels overlap"
    for side, a, b in needed_stretches(prof, wall):
        name = "fill" if side > 0 else "cut"
        assert any(r.side == name and r.ch_start_m <= a + 1e-9 and b <= r.ch_end_m + 1e-9
                   for r in res.runs), (name, a, b)

    basis = site.basis
    for pr in panels:
        p = pr.panel
        # founding depth at every breakpoint inside the panel and at its ends
        bp = prof.breakpoints
        ch = np.concatenate([[p.ch_start_m, p.ch_end_m],
                             bp[(bp > p.ch_start_m) & (bp < p.ch_end_m)]])
        front = prof.ground(ch) if p.side == "fill" else prof.finished(ch)
        need = max(wall.min_founding_depth_m, pr.section.base_thickness_m)
        assert np.all(p.founding_m <= front - need + 1e-9), (p.panel, front, p.founding_m)
        assert p.front_min_m <= front.min() + 1e-9
        retained = prof.finished(ch) if p.side == "fill" else prof.ground(ch)
        assert p.retained_top_m >= retained.max() - 1e-9
        # founding level on its step
        k = p.founding_m / wall.founding_step_m
        assert abs(k - round(k)) < 1e-6, p.founding_m

        if pr.status != "ok":
            assert pr.reason
            continue
        plain = plain_stability_checks(pr.section, conditions_of(p, site), basis)
        got = {(c.check, c.combination, c.case): c for c in pr.checks if c.check in STABILITY}
        ref = {(c.check, c.combination, c.case): c for c in plain}
        assert set(ref) == set(got), set(ref) ^ set(got)
        for key, c in ref.items():
            assert c.utilization <= 1.0 + 1e-9, (p.panel, key, c.utilization)
            assert close(c.utilization, got[key].utilization, tol, floor), (p.panel, key, c, got[key])
        for c in pr.checks:
            assert c.utilization <= 1.0 + 1e-9, (p.panel, c)

    # joints
    by = {pr.panel.panel: pr.panel for pr in panels}
    for j in res.joints:
        fs = abs(by[j.left].founding_m - by[j.right].founding_m)
        assert math.isclose(j.founding_step_m, fs, abs_tol=1e-6), j
        within = (j.founding_step_m <= wall.max_founding_step_m + 1e-9
                  and j.top_step_m <= wall.max_top_step_m + 1e-9
                  and j.pressure_ratio <= wall.max_pressure_ratio + 1e-9)
        assert within or (j.status == "flagged" and j.reason), j
        if j.status == "flagged":
            assert not within or j.reason

    # totals equal the sum over panels; bar schedule mass equals reinforcement_total
    total = {q.item: q.quantity for q in res.quantities}
    for item, value in total.items():
        if item == "section_type":  # job-wide: the types of a rationalised set
            assert value == len({pr.section_type for pr in panels if pr.status == "ok"})
            continue
        s = sum(pr.quantities.get(item, 0.0) for pr in panels)
        assert math.isclose(value, s, rel_tol=1e-9, abs_tol=1e-9), (item, value, s)
    for pr in panels:
        for item in pr.quantities:
            assert item in total, item
    mass = math.fsum(b.mass_kg for b in res.bar_schedule)
    # each schedule row and each panel bar row (at most 8 marks a panel, generous) is
    # rounded to 1 g: the two sums may differ by that much per row, no more
    slack = 1e-9 if mass_exact else MASS_ROUNDING_KG * (len(res.bar_schedule) + 8 * len(panels))
    assert abs(mass - total.get("reinforcement_total", 0.0)) <= slack, (mass, total.get("reinforcement_total"))
    assert math.isclose(sum(pr.steel_kg for pr in panels), total.get("reinforcement_total", 0.0),
                        rel_tol=1e-9, abs_tol=1e-9)
    assert math.isclose(sum(pr.concrete_m3 for pr in panels), total.get("concrete_total", 0.0),
                        rel_tol=1e-9, abs_tol=1e-9)


TIMES: list[float] = []


@settings(max_examples=15, deadline=None, derandomize=True,
          suppress_health_check=[HealthCheck.function_scoped_fixture, HealthCheck.too_slow])
@given(s=sites())
def test_design_invariants(tmp_path_factory, s):
    site = load_site(write_site(tmp_path_factory.mktemp("inv"), s))
    t0 = time.perf_counter()
    res = pipeline.design(site)
    TIMES.append(time.perf_counter() - t0)
    check_invariants(site, res)


# --- the two departures found, on fixed sites, held to the exact figures ---------------

FLAT = {"L": 30.0, "ground": [(0.0, 5.0), (15.0, 5.0), (30.0, 5.0)],
        "finished": [(0.0, 6.0), (15.0, 6.0), (30.0, 6.0)], "water": None, "slope": 0.0,
        "zone": False, "base": 5.0, "top": "stepped"}
THIRDS = {"L": 30.0, "ground": [(0.0, 5.0), (15.0, 4.5), (30.0, 5.0)],
          "finished": [(0.0, 5.375), (15.0, 5.5), (30.0, 5.375)], "water": None, "slope": 0.0,
          "zone": False, "base": 5.0, "top": "stepped"}


def test_reported_levels_are_the_design_levels(tmp_path):
    # panel levels of this site are thirds of a metre (5.4666...): the rounding shows
    site = load_site(write_site(tmp_path / "s", THIRDS))
    check_invariants(site, pipeline.design(site), tol=TOL, floor=1e-9)


def test_bar_schedule_mass_is_reinforcement_total(tmp_path):
    site = load_site(write_site(tmp_path / "s", FLAT))
    check_invariants(site, pipeline.design(site), mass_exact=True)

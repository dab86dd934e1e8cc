"""Invented walls: every panel of a wall on drawn ground searched at once, and the
exhaustive reference on a sample of its panels (a script, not a test).

    python benchmarks/walls.py --seed 9 --walls 4             # four walls of 2.5 km
    python benchmarks/walls.py --seed 9 --walls 2 --sample 6  # six references per wall
    python benchmarks/walls.py --seed 9 --walls 1 --sample 0  # the searches only

Each wall is the retained height of ``run.synthetic_site`` (0.5 to 7 m, varying
smoothly) taken at the middle of every 8 m panel over ``--km``, on ground drawn from
``--seed`` for the whole wall: a design approach (DA1, DA2, DA3), a dimension step of
5 or 10 cm, a backfill (unit weight 17 to 21 kN/m3, friction angle 28 to 38 degrees,
slope 0, 10, 16 or 20 degrees, at most the angle less 2), a foundation (friction
angle 22 to 36 degrees, cohesion 0 to 5 kPa, undrained with cu 45 to 90 kPa in about
a third), water 0.3 to 2.0 m above the base in about a third, a surcharge of 5 to 20
kPa. The invented values stand for no real site. The panels of a wall share their
ground, so they are searched in one call, as ``wallrun design`` searches them (their
reference demands shared, each panel's result its own).

Printed per wall: the ground, the panels designable and the search's time; per
sampled panel the search's cost per metre, the exhaustive reference's
(``wallrun.sizing.cheapest_on_grid``) and the gap (a tall panel's reference can take
minutes); the issue asks every gap to lie within +-0.5 %.
"""

from __future__ import annotations

import argparse
import os
import sys
import time

import numpy as np

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, os.path.join(HERE, ".."))
sys.path.insert(0, HERE)

from optimality import draw_foundation, draw_water, report_gap  # noqa: E402
from run import synthetic_site  # noqa: E402

from wallrun.factors import resolve  # noqa: E402
from wallrun.settings import Backfill, Basis, Design  # noqa: E402
from wallrun.sizing import Costing, Demand, bespoke, cheapest_on_grid  # noqa: E402

PANEL_M = 8.0


def heights(km: float) -> np.ndarray:
    """Retained heights (m, to the mm) at the middle of every ``PANEL_M`` panel of the
    synthetic run of ``km`` km."""
    site = synthetic_site(km)
    ch = np.asarray(site.ground.chainage_m)
    h = np.asarray(site.finished.level_m) - np.asarray(site.ground.level_m)
    mid = np.arange(PANEL_M / 2.0, ch[-1], PANEL_M)
    return np.round(np.interp(mid, ch, h), 3)


def random_wall(rng: np.random.Generator, km: float) -> tuple[Basis, float, list[Demand]]:
    """One invented wall: (basis, dimension step m, the demands of its panels)."""
    approach = str(rng.choice(["DA1", "DA2", "DA3"]))
    step = float(rng.choice([0.05, 0.05, 0.1]))
    basis = Basis(factors=resolve(approach),
                  design=Design(approach=approach, dimension_step_m=step))
    phi = float(np.round(rng.uniform(28, 38)))
    slope = float(rng.choice([0.0, 0.0, 10.0, 16.0, 20.0]))
    backfill = Backfill(unit_weight_kn_m3=float(np.round(rng.uniform(17, 21), 1)),
                        friction_angle_deg=phi, slope_deg=min(slope, phi - 2.0))
    foundation = draw_foundation(rng, 0.3, (22, 36), 45)
    water = draw_water(rng, 0.35, 2.0)
    q = float(rng.choice([5.0, 10.0, 15.0, 20.0]))
    demands = [Demand(z_top=round(50.0 + float(h), 3), z_front=50.0, backfill=backfill,
                      foundation=foundation, surcharge_kpa=q, water=water,
                      wall_top_m=round(50.1 + float(h), 3), min_founding_depth_m=0.6,
                      founding_step_m=0.15)
               for h in heights(km)]
    return basis, step, demands


def describe(basis: Basis, step: float, d: Demand) -> str:
    """One line of a wall's ground, as printed (from its first demand)."""
    bf, fd = d.backfill, d.foundation
    ground = (f"backfill {bf.friction_angle_deg:g} deg under {bf.slope_deg:g} deg, base "
              f"{fd.friction_angle_deg:g} deg" + (f" cu {fd.undrained_strength_kpa:g} kPa"
                                                 if fd.undrained_strength_kpa else ""))
    water = (f"water {d.water.height_above_base_m:g} m" if d.water is not None
             else "drained")
    return (f"{basis.design.approach}, {100 * step:g} cm step, {ground}, {water}, "
            f"q {d.surcharge_kpa:g} kPa")


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--seed", type=int, default=9)
    ap.add_argument("--walls", type=int, default=4, help="walls drawn")
    ap.add_argument("--km", type=float, default=2.5, help="length of each wall, km")
    ap.add_argument("--sample", type=int, default=3,
                    help="panels per wall checked against the exhaustive reference")
    a = ap.parse_args(argv)
    if a.walls < 1 or a.km <= 0 or a.sample < 0:
        ap.error("--walls must be at least 1, --km above 0 and --sample at least 0")
    rng = np.random.default_rng(a.seed)
    beyond = checked = 0
    for w in range(a.walls):
        basis, step, demands = random_wall(rng, a.km)
        t = time.perf_counter()
        got = bespoke(demands, basis, Costing(), step)
        ok = [k for k, sd in enumerate(got) if sd.status == "ok"]
        print(f"wall {w + 1}: {describe(basis, step, demands[0])}: {len(ok)} of "
              f"{len(demands)} panels designable, searched in "
              f"{time.perf_counter() - t:.1f} s", flush=True)
        for k in sorted(rng.choice(len(demands), size=min(a.sample, len(demands)),
                                   replace=False)):
            t = time.perf_counter()
            d, sd = demands[k], got[k]
            ref, ref_cost = cheapest_on_grid(d, basis, Costing(), step)
            gap = report_gap(f"  panel {k + 1} h {d.h:.3f} m", sd, ref, ref_cost,
                             time.perf_counter() - t)
            if gap is not None:
                checked += 1
                beyond += abs(gap) > 0.5
    print(f"beyond 0.5 %: {beyond} of {checked} sampled panels")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())

"""Time stability.stability_checks for 100,000 random candidate sections.

A script, not a test: ``/tmp/venv/bin/python benchmarks/stability.py [n]``.
The ground and levels are an invented scenario.
"""

import sys
import time

import numpy as np

from wallrun.conditions import Conditions
from wallrun.factors import resolve
from wallrun.section import SectionArrays
from wallrun.settings import Basis, Backfill, Foundation
from wallrun.stability import stability_checks


def candidates(n, seed=0):
    rng = np.random.default_rng(seed)
    tsb = rng.uniform(0.25, 0.6, n)
    toe = rng.uniform(0.2, 1.2, n)
    B = toe + tsb + rng.uniform(0.5, 3.0, n)
    key = rng.random(n) < 0.5
    return SectionArrays(stem_top_m=tsb * rng.uniform(0.6, 1.0, n), stem_base_m=tsb,
                         base_width_m=B, toe_m=toe, base_thickness_m=rng.uniform(0.3, 0.6, n),
                         key_depth_m=np.where(key, 0.4, 0.0), key_width_m=np.where(key, 0.3, 0.0))


def main():
    n = int(sys.argv[1]) if len(sys.argv) > 1 else 100_000
    sec = candidates(n)
    cond = Conditions(z_top=24.6, z_front=21.2, z_found=np.floor((21.2 - np.maximum(0.6, sec.base_thickness_m)) / 0.15) * 0.15,
                      backfill=Backfill(slope_deg=10.0),
                      foundation=Foundation(undrained_strength_kpa=70.0, allowable_bearing_kpa=250.0),
                      surcharge_kpa=10.0, water_level_m=21.0)
    basis = Basis(factors=resolve("DA1"))
    best = np.inf
    for _ in range(3):
        t0 = time.perf_counter()
        checks = stability_checks(sec, cond, basis)
        best = min(best, time.perf_counter() - t0)
    print(f"{n} candidates, {len(checks)} checks each: {best:.3f} s, "
          f"{n / best:,.0f} candidates per second")


if __name__ == "__main__":
    main()

"""The conditions a panel's section is designed for, independent of the section.

A :class:`Demand` is what the sizing needs of a panel (design-basis section 1): its
envelope levels, its ground, loads, water and founding rules. It is hashable, so
panels with the same conditions share one design. :func:`conditions_of` turns the
demands of many candidates (one ground, levels per candidate) into the
``wallrun.conditions.Conditions`` the checks take. Units: m, kPa.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from wallrun import panels
from wallrun.conditions import Conditions
from wallrun.settings import Backfill, Basis, Foundation, Water

#: Largest retained height h = z_top - z_front the sizing is offered for, m. Above it a
#: cantilever wall is rarely economic (counterforts, anchors or piles take over, common
#: practice): such a panel is flagged, not designed.
MAX_RETAINED_M = 8.0


@dataclass(frozen=True)
class Demand:
    """The conditions of a panel that do not depend on its section (hashable).

    z_top: highest retained level of the panel (top of the checked section), m.
    z_front: lowest front level, m.
    backfill, foundation: the soils; surcharge_kpa: characteristic surcharge, kPa.
    water: water behind the wall or None (drained).
    wall_top_m: highest wall top of the panel, m (>= z_top; the stem above z_top is
        counted in the cost, never in the checks).
    min_founding_depth_m, founding_step_m: founding rules of design-basis section 1.
    extra_depth_m: lowering of the founding level below the rule's (a joint cure,
        design-basis section 1 (a)), m, a multiple of ``founding_step_m``.
    max_edge_pressure_kpa: a cap on the largest characteristic edge pressure (a joint
        cure, design-basis section 1 (b): check ``joint_pressure``), kPa, or None.
    """

    z_top: float
    z_front: float
    backfill: Backfill
    foundation: Foundation
    surcharge_kpa: float
    water: Water | None
    wall_top_m: float
    min_founding_depth_m: float = 0.6
    founding_step_m: float = 0.15
    extra_depth_m: float = 0.0
    max_edge_pressure_kpa: float | None = None

    @property
    def h(self) -> float:
        """Retained height z_top - z_front, m."""
        return self.z_top - self.z_front

    @property
    def ground_key(self) -> tuple:
        """Everything but the levels: demands with equal keys can be checked in one call."""
        return (self.backfill, self.foundation, self.surcharge_kpa, self.water,
                self.min_founding_depth_m, self.founding_step_m)


def water_level(water: Water | None, z_found):
    """Absolute water level behind the wall before capping, m (design-basis section 3):
    ``level_m``, or the underside of the base ``z_found`` (float or array) plus
    ``height_above_base_m``; None for a drained wall."""
    if water is None:
        return None
    if water.level_m is not None:
        return float(water.level_m)
    if water.height_above_base_m is not None:
        return z_found + float(water.height_above_base_m)
    return None


def founding_level(demand: Demand, t_base):
    """Underside of base for base thickness ``t_base`` (m, float or array), m:
    ``panels.founding_level`` (design-basis section 1), lowered by the demand's
    ``extra_depth_m``."""
    z = panels.founding_level(demand.z_front, t_base, demand.min_founding_depth_m,
                              demand.founding_step_m)
    return z - demand.extra_depth_m if demand.extra_depth_m else z


@dataclass(frozen=True)
class Rows:
    """Levels of n candidates, each at its own demand (one ground): z_top, z_front and
    the wall top (m), and the founding lowering (m), arrays (n,)."""

    z_top: np.ndarray
    z_front: np.ndarray
    wall_top: np.ndarray
    extra_depth: np.ndarray

    @classmethod
    def of(cls, demands, counts) -> "Rows":
        """The rows of ``counts[k]`` candidates at ``demands[k]`` for every k, in order."""
        rep = lambda attr: np.repeat(np.array([getattr(d, attr) for d in demands],  # noqa: E731
                                              dtype=float), counts)
        return cls(rep("z_top"), rep("z_front"), np.maximum(rep("wall_top_m"), rep("z_top")),
                   rep("extra_depth_m"))

    def take(self, idx) -> "Rows":
        return Rows(self.z_top[idx], self.z_front[idx], self.wall_top[idx],
                    self.extra_depth[idx])


def conditions_of(t_base, rows: Rows, ground: Demand) -> Conditions:
    """Conditions of candidates of base thickness ``t_base`` (n,) at their own levels
    ``rows``: z_found by ``panels.founding_level`` less each row's lowering, the water
    level resolved to an absolute level before capping (capping is the stability
    module's job); backfill, foundation, surcharge, water and founding rules from
    ``ground`` (every row shares them)."""
    tb = np.asarray(t_base, dtype=float)
    z_found = panels.founding_level(rows.z_front, tb, ground.min_founding_depth_m,
                                    ground.founding_step_m) - rows.extra_depth
    return Conditions(z_top=rows.z_top, z_front=rows.z_front, z_found=z_found,
                      backfill=ground.backfill, foundation=ground.foundation,
                      surcharge_kpa=float(ground.surcharge_kpa),
                      water_level_m=water_level(ground.water, z_found))


def steep_reason(demand: Demand, basis: Basis) -> str | None:
    """Why no section can be designed because of the backfill slope, or None: a slope at
    or above the design friction angle phi'_d of EQU or of a set in use leaves no active
    limit state (Rankine needs beta < phi'_d, design-basis section 3)."""
    from wallrun.codes import ec7

    bf = demand.backfill
    for name in ("EQU",) + tuple(basis.uls_sets):
        fs = basis.factors.get(name)
        if fs is None:
            continue
        phid = float(ec7.design_friction_angle(bf.friction_angle_deg, fs.g_phi))
        if float(bf.slope_deg) >= phid:
            return (f"backfill slope {float(bf.slope_deg):.1f} deg >= phi'_d {phid:.1f} deg "
                    f"({name}): no active limit state, not designed")
    return None


def seismic_reason(demand: Demand, basis: Basis) -> str | None:
    """Why no section can be designed for the seismic situation, or None: a backfill
    slope beta > phi'_d - theta has no Mononobe-Okabe solution (EN 1998-5 Annex E;
    ``seismic.mononobe_okabe_problem``). Checked at the least base thickness (the water
    level against the underside of the base decides the theta of a wet backfill)."""
    if basis.seismic is None:
        return None
    from wallrun import seismic

    t = np.array([basis.design.min_base_m])
    cond = conditions_of(t, Rows.of([demand], [1]), demand)
    return seismic.mononobe_okabe_problem(cond, basis, basis.seismic)


def beyond_reason(demand: Demand) -> str | None:
    """Why the retained height is outside what the sizing is offered for, or None."""
    if demand.h > MAX_RETAINED_M:
        return (f"retained height {demand.h:.2f} m is beyond the supported range of a "
                f"cantilever section (<= {MAX_RETAINED_M:g} m): not designed; the section "
                f"shown is nominal only")
    if demand.h <= 0.0:
        return f"retained height {demand.h:.2f} m: nothing to retain; not designed"
    return None

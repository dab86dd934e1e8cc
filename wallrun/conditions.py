"""The design conditions of a panel: levels, ground and loads a section is checked for."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from wallrun.settings import Backfill, Foundation


@dataclass(frozen=True)
class Conditions:
    """Envelope conditions of one panel (design-basis section 1).

    z_top: highest retained level in the panel, m (top of the checked section).
    z_front: lowest front level in the panel, m.
    z_found: underside of base, m; a float, or an array of shape (n,) when candidates
        of different base thickness found at different levels.
    water_level_m: absolute water level behind the wall before capping, m, or None;
        a float or an (n,) array (from ``height_above_base_m`` it follows z_found).
    surcharge_kpa: characteristic variable surcharge on the retained surface, kPa.

    Derived: h = z_top - z_front (retained height), H = z_top - z_found (total height),
    D = z_front - z_found (founding depth).
    """

    z_top: float
    z_front: float
    z_found: float | np.ndarray
    backfill: Backfill
    foundation: Foundation
    surcharge_kpa: float = 10.0
    water_level_m: float | np.ndarray | None = None

    @property
    def h(self) -> float:
        return self.z_top - self.z_front

    @property
    def H(self):
        return self.z_top - np.asarray(self.z_found, dtype=float)

    @property
    def D(self):
        return self.z_front - np.asarray(self.z_found, dtype=float)

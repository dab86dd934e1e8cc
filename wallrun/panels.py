"""Panels along a run: extents, founding and top levels, joint checks and splitting.

Design-basis section 1. Levels in m, lengths in m.
"""

from __future__ import annotations

import numpy as np

_EPS = 1e-9


def floor_inc(z, step: float):
    """Round ``z`` down to a multiple of ``step`` (m), robust to float noise."""
    z = np.asarray(z, dtype=float)
    return np.floor(z / step + _EPS) * step


def ceil_inc(z, step: float):
    """Round ``z`` up to a multiple of ``step`` (m), robust to float noise."""
    z = np.asarray(z, dtype=float)
    return np.ceil(z / step - _EPS) * step


def founding_level(z_front, t_base, min_founding_depth_m: float, founding_step_m: float):
    """Underside of base, m (design-basis section 1).

    z_found = floor_inc(z_front - max(min_founding_depth_m, t_base)), rounded down to a
    multiple of ``founding_step_m``. Vectorised over ``t_base``.
    """
    return floor_inc(np.asarray(z_front, dtype=float)
                     - np.maximum(min_founding_depth_m, np.asarray(t_base, dtype=float)),
                     founding_step_m)

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


# --- layout -------------------------------------------------------------------------

from dataclasses import dataclass  # noqa: E402


@dataclass(frozen=True)
class Extent:
    """A panel's extent along a run and its envelope levels, m (design-basis section 1).

    z_top: highest retained level; z_front: lowest front level, both over the
    breakpoints inside the panel and its ends. wall_top_start/end: top of wall at the
    panel ends (stepped: equal; sloped: the raised straight line).
    """

    run: int
    side: str
    ch_start: float
    ch_end: float
    z_top: float
    z_front: float
    wall_top_start: float
    wall_top_end: float

    @property
    def length(self) -> float:
        return self.ch_end - self.ch_start


def cut_points(ch_start: float, ch_end: float, zone_bounds, wall, profiles=None) -> list[float]:
    """Panel ends of one run, m (design-basis section 1).

    The run is cut at every foundation-zone boundary strictly inside it; each piece of
    length L is cut into ``n = ceil(L / max_panel_length_m)`` equal panels (a piece
    shorter than ``min_panel_length_m`` is one panel, which ceil already gives).

    With ``profiles`` (a ``wallrun.profile.Profiles``), L and the equal parts are
    measured along the wall line (``Profiles.developed``), so that no panel is longer
    than ``max_panel_length_m`` where the wall line is longer than its chainage (an
    offset line outside a curve); the ends are returned as chainages. Without plan
    positions the length is the chainage difference, cut as above.
    """
    inner = sorted({float(b) for b in zone_bounds if ch_start + _EPS < b < ch_end - _EPS})
    ends = [ch_start, *inner, ch_end]
    pts = [ch_start]
    for a, b in zip(ends[:-1], ends[1:]):
        if profiles is None or profiles.plan_s is None:
            n = max(1, int(np.ceil((b - a) / wall.max_panel_length_m - _EPS)))
            pts.extend(a + (b - a) * k / n for k in range(1, n + 1))
            continue
        sa, sb = (float(v) for v in profiles.developed(np.array([a, b])))
        n = max(1, int(np.ceil((sb - sa) / wall.max_panel_length_m - _EPS)))
        inside = profiles.chainage_at(sa + (sb - sa) * np.arange(1, n) / n)
        pts.extend([*(float(c) for c in np.atleast_1d(inside)), b])
    return pts


def _sample(profiles, a: float, b: float) -> np.ndarray:
    """Chainages where the panel's levels are evaluated: its ends and every breakpoint inside."""
    bp = np.asarray(profiles.breakpoints, dtype=float)  # sorted
    lo = np.searchsorted(bp, a + _EPS, side="right")
    hi = np.searchsorted(bp, b - _EPS, side="left")
    return np.concatenate(([a], bp[lo:max(hi, lo)], [b]))


def retained_and_front(profiles, side: str, ch):
    """Retained and front levels of a wall on ``side`` at ``ch``, m.

    Fill: retained F, front G; cut: retained G, front F (design-basis section 1). The
    run's side holds through a merged gap even where the profiles cross there.
    """
    g = np.asarray(profiles.ground(ch), dtype=float)
    f = np.asarray(profiles.finished(ch), dtype=float)
    return (f, g) if side == "fill" else (g, f)


def wall_top(profiles, side: str, a: float, b: float, wall) -> tuple[float, float]:
    """Top of wall at the two ends of panel [a, b], m (design-basis section 1).

    stepped: one level, ``ceil_inc(z_top + freeboard_m)`` in steps of ``top_step_m``.
    sloped: the straight line through the retained levels plus freeboard at the two
    ends, raised parallel to itself until retained + freeboard never exceeds it at any
    breakpoint inside the panel (the profiles are linear between breakpoints, and on a
    vertical curve the sampling includes the curve's high or low point).
    """
    ch = _sample(profiles, a, b)
    r, _ = retained_and_front(profiles, side, ch)
    r = r + wall.freeboard_m
    if wall.top == "stepped":
        t = float(ceil_inc(r.max(), wall.top_step_m))
        return t, t
    line = r[0] + (r[-1] - r[0]) * (ch - a) / (b - a)
    raise_by = max(0.0, float(np.max(r - line)))
    return float(r[0] + raise_by), float(r[-1] + raise_by)


def extent(profiles, run: int, side: str, a: float, b: float, wall) -> Extent:
    """Envelope levels of panel [a, b] on a run (design-basis section 1)."""
    ch = _sample(profiles, a, b)
    r, fr = retained_and_front(profiles, side, ch)
    t0, t1 = wall_top(profiles, side, a, b, wall)
    return Extent(run, side, float(a), float(b), float(r.max()), float(fr.min()), t0, t1)


# --- joints -------------------------------------------------------------------------

@dataclass(frozen=True)
class JointFigures:
    """The three joint figures between neighbouring panels, m and dimensionless."""

    founding_step_m: float
    top_step_m: float
    pressure_ratio: float


def joint_figures(z_found_left: float, z_found_right: float, top_left_end: float,
                  top_right_start: float, sigma_left: float, sigma_right: float) -> JointFigures:
    """Founding step, top step and edge-pressure ratio at a joint (design-basis section 1).

    Founding step |z_found,L - z_found,R|, m; top step |top_L(end) - top_R(start)|, m;
    pressure ratio max(sigma)/min(sigma) of the two panels' maximum characteristic edge
    pressures (differential settlement, common practice), inf when the smaller is <= 0.
    """
    if not (np.isfinite(sigma_left) and np.isfinite(sigma_right)):
        ratio = float("nan")  # a panel that was not designed has no edge pressure
    else:
        lo, hi = sorted((sigma_left, sigma_right))
        ratio = hi / lo if lo > 0 else float("inf")
    return JointFigures(abs(z_found_left - z_found_right), abs(top_left_end - top_right_start),
                        ratio)


def joint_problems(fig: JointFigures, wall) -> list[str]:
    """Reasons a joint fails its limits (empty when it passes); where the founding step
    or the pressure ratio has no value (NaN, a neighbour without a section) only the
    top step is checked."""
    out = []
    tol = 1e-6
    if np.isnan(fig.founding_step_m) or np.isnan(fig.pressure_ratio):
        # beside a panel without a section (wallrun.layout.joint_state says so)
        if fig.top_step_m > wall.max_top_step_m + tol:
            out.append(f"top step {fig.top_step_m:.2f} m > {wall.max_top_step_m:g} m")
        return out
    if fig.founding_step_m > wall.max_founding_step_m + tol:
        out.append(f"founding step {fig.founding_step_m:.2f} m > {wall.max_founding_step_m:g} m")
    if fig.top_step_m > wall.max_top_step_m + tol:
        out.append(f"top step {fig.top_step_m:.2f} m > {wall.max_top_step_m:g} m")
    if fig.pressure_ratio > wall.max_pressure_ratio + tol:
        out.append(f"edge pressure ratio {fig.pressure_ratio:.2f} > {wall.max_pressure_ratio:g}")
    return out


def halve_target(len_left: float, len_right: float) -> int:
    """Which panel of a failing joint to halve: 0 left, 1 right (the longer; the later when equal)."""
    return 0 if len_left > len_right + _EPS else 1


def mean_front_level(profiles, side: str, a: float, b: float, n: int = 16) -> float:
    """Mean front level over panel [a, b], m: trapezoidal mean over the breakpoints
    inside the panel and ``n`` equal intervals (exact for linear profiles; on a vertical
    curve the error is of order L^2 / n^2 times the curvature). Used for the excavation
    take-off, not for design."""
    ch = np.union1d(_sample(profiles, a, b), np.linspace(a, b, n + 1))
    _, fr = retained_and_front(profiles, side, ch)
    return float(np.trapezoid(fr, ch) / (b - a))

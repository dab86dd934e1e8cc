"""Overall stability of the wall and the slope together (EN 1997-1 11.5.1, 9.7.2):
Bishop's simplified method on circular slip surfaces passing beneath the whole wall,
design-basis section 9.

Three parts, data flowing one way:

- the ground model of a cross-section, :class:`SlipModel`: the weight above the slip
  surface, the ground surface, the two soils, the pore pressure and the surcharge;
  :func:`panel_model` builds it for a panel (section 9), :func:`slope_model` for a
  plain homogeneous slope;
- the slices of many circles at once (:func:`slices`) and their factor of safety for a
  set of design values (:func:`evaluate`), with the equations of
  :mod:`wallrun.codes.bishop`;
- the critical circle (:func:`search`): a vectorised grid over exit point, entry point
  and depth, refined around the least, and the check of a panel for every combination
  of the approach (:func:`overall_check`), with its ``CheckArray``/``CheckEntry``
  renderings.

Coordinates: x from the toe edge of the section (x = 0) towards the retained side, z a
level (absolute), m. The sliding mass moves towards the front (-x). Units kN/m, kNm/m,
kPa, kN/m3.

Readings taken where the design basis is silent (also in ``docs/basis-readings.md``):

- The slip surface passes below every corner of the base underside and of the key; it
  leaves the ground in front within 3 H of the toe (-3 H <= x_exit < 0) and enters the
  retained surface within 3 H behind the heel (B < x_entry <= B + 3 H), H = z_top -
  z_found. Only the lower half of a circle is a slip surface (entry and exit not above
  the centre).
- The wall counts up to z_top (the checked section of design-basis section 2); the soil
  over the heel is the polygon under the retained surface as section 9 gives it (with
  the crest where it falls over the heel); the soil over the toe is left out; the key
  replaces foundation soil by concrete.
- Slice weights, and the driving moment of the weights about the centre, are exact
  integrals of the piecewise-linear columns and of the arc (no sampling of the
  stem); each slice base is the chord of the arc between its sides (inclination and
  length exact for that chord, so steep bases near the entry keep their true length);
  the pore pressure is taken at the middle of the base. Every slice base lies in one
  soil (slices are cut where the arc crosses z_found behind the wall).
- The water level behind the wall (x >= B) is the wall's, capped at the ground
  surface; in front (x <= 0) the lower of it and the front ground; linear between
  x = 0 and x = B. No water given: no pore pressure.
- The surcharge (variable) acts on the retained surface from the stem's back face at
  z_top, at gQ where it lies behind the circle's centre (x > xc: it drives) and at 0
  in front of the centre (favourable variable action, design-basis section 4).
- Drained (``case = "drained"``): effective stress everywhere, c'_d and tan phi'_d of
  each soil, pore pressure at the slice bases. Undrained (``case = "undrained"``, in
  addition where the foundation has cu > 0, as the sliding and bearing checks do): a
  total-stress analysis of the foundation soil (slice bases below z_found or in front:
  cu_d, phi = 0, no pore pressure term) with the backfill still drained.
- The resisting moment is divided by gamma_R;e of EN 1997-1 Table A.14 (``gR_slope`` of
  the factor set: 1.0 in DA1 and DA3, 1.1 in DA2). Weights are at 1.0 in every
  combination (one source), as section 9 says.
- A circle whose m_alpha falls below 0.2 at a slice base inclined against the movement
  (alpha < 0, towards the exit) is left out (Whitman and Bailey 1967, common
  practice); one whose driving moment is not positive cannot slide towards the front
  and is left out. A panel with no admissible circle gets an infinite
  utilization (it is flagged, never passed).
- Effective normal force on a slice base is not taken below zero (no tension).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from wallrun.codes import bishop, ec7
from wallrun.conditions import Conditions
from wallrun.results import CheckArray, CheckEntry, Circle, utilization
from wallrun.section import Section, base_vertices, key_vertices, stem_vertices
from wallrun.settings import Basis, GroundModel

GAMMA_C = 25.0  # reinforced concrete, kN/m3 (EN 1991-1-1 Table A.1)
GAMMA_W = ec7.GAMMA_W
CHECK = "overall"
UNIT = "kNm/m"
CLAUSE = "EN 1997-1 11.5.1; Bishop's simplified method"

#: Slices of equal width per circle (two more are cut where the arc crosses z_found).
N_SLICES = 30
#: Coarse grid: exit points, entry points, depths.
GRID = (12, 12, 10)
#: Refinement: rounds of the pattern search, starts refined per case.
ROUNDS, STARTS = 16, 2
#: Exit and entry points are spread as u ** SPREAD over their range (denser near the
#: wall, where critical circles cross the ground).
SPREAD = 1.5


# --- the ground model ----------------------------------------------------------------------

@dataclass(frozen=True, eq=False)
class SlipModel:
    """The ground of one cross-section for circular slip surfaces (section 9).

    The weight of the column above a level z at x (kN/m2) is top(x) - below(x, z) with
    ``top`` piecewise linear in x (``top_x`` breakpoints, ``top_left``/``top_right`` its
    values at the two ends of each interval, so it may jump) and below(x, z) =
    gamma_low z + (gamma_up - gamma_low) (z - z_split)+ where x > x_split: the upper soil
    (``up``) lies above z_split behind x_split, the lower soil (``low``) everywhere else.

    surface_x/z: the ground surface as a polyline (increasing x), m. water_x/z: the
    piezometric line as a polyline, or None (no pore pressure). surcharge_kpa on x >=
    surcharge_from_x (characteristic). beneath_x/z: points every slip surface passes
    below (the wall's underside corners). exit_range/entry_range: where the slip surface
    leaves the ground in front (low x) and enters it behind (high x), m.
    Soils: (friction angle deg, c' kPa, cu kPa) of the lower and upper soil.
    """

    top_x: np.ndarray
    top_left: np.ndarray
    top_right: np.ndarray
    surface_x: np.ndarray
    surface_z: np.ndarray
    gamma_low: float
    gamma_up: float
    x_split: float
    z_split: float
    low: tuple[float, float, float]
    up: tuple[float, float, float]
    water_x: np.ndarray | None
    water_z: np.ndarray | None
    surcharge_kpa: float
    surcharge_from_x: float
    beneath_x: np.ndarray
    beneath_z: np.ndarray
    exit_range: tuple[float, float]
    entry_range: tuple[float, float]

    def surface(self, x):
        """Ground level at x, m (the polyline, extended flat beyond its ends)."""
        return np.interp(x, self.surface_x, self.surface_z)


def column_height(xs, zs, x):
    """Vertical extent of a simple polygon at abscissae x, m: the length of the vertical
    line x inside the polygon, sum over its edges spanning x of the edge's level, with
    the sign of the edge's direction (upper edges run against the orientation's x).
    xs, zs: vertices (k,), either orientation; x: array. Its integral over x is the
    polygon's area (shoelace); used for the wall's weight from its polygons."""
    xs = np.asarray(xs, dtype=float)
    zs = np.asarray(zs, dtype=float)
    x = np.asarray(x, dtype=float)
    x0, z0 = xs, zs
    x1, z1 = np.roll(xs, -1), np.roll(zs, -1)
    orient = np.sign(np.sum(x0 * z1 - x1 * z0))
    if orient == 0:
        return np.zeros_like(x)
    dx = x1 - x0
    lo, hi = np.minimum(x0, x1), np.maximum(x0, x1)
    xe = x[..., None]
    span = (xe >= lo) & (xe < hi) & (dx != 0)
    with np.errstate(divide="ignore", invalid="ignore"):
        level = z0 + (z1 - z0) * (xe - x0) / np.where(dx != 0, dx, 1.0)
    return orient * np.where(span, -np.sign(dx) * level, 0.0).sum(axis=-1)


def _top_on(breaks, value_at):
    """(top_x, top_left, top_right) of a function linear between ``breaks``: its values
    at each interval's ends from two inner points (exact for a linear piece)."""
    xa, xb = breaks[:-1], breaks[1:]
    w = xb - xa
    p, q = xa + 0.25 * w, xa + 0.75 * w
    vp, vq = value_at(p), value_at(q)
    slope = (vq - vp) / np.where(w > 0, 0.5 * w, 1.0)
    return breaks, vp - slope * 0.25 * w, vq + slope * 0.25 * w


def _top_integrals(model: SlipModel, x):
    """(integral of top, integral of x top) from top_x[0] to x, exact (top linear on each
    interval). x: any shape; returns arrays of that shape, kN/m and kNm/m."""
    X, Tl, Tr = model.top_x, model.top_left, model.top_right
    xa, xb = X[:-1], X[1:]
    w = xb - xa
    m = np.where(w > 0, (Tr - Tl) / np.where(w > 0, w, 1.0), 0.0)
    # whole intervals
    I0_int = Tl * w + 0.5 * m * w * w
    sq = 0.5 * (xb ** 2 - xa ** 2)
    I1_int = Tl * sq + m * ((xb ** 3 - xa ** 3) / 3.0 - xa * sq)
    C0 = np.concatenate([[0.0], np.cumsum(I0_int)])
    C1 = np.concatenate([[0.0], np.cumsum(I1_int)])
    x = np.clip(np.asarray(x, dtype=float), X[0], X[-1])
    j = np.clip(np.searchsorted(X, x, side="right") - 1, 0, len(w) - 1)
    a, t, s = xa[j], Tl[j], m[j]
    d = x - a
    I0 = C0[j] + t * d + 0.5 * s * d * d
    sq = 0.5 * (x * x - a * a)
    I1 = C1[j] + t * sq + s * ((x ** 3 - a ** 3) / 3.0 - a * sq)
    return I0, I1


def _retained_surface(z_top, x_from, beta_deg, crest_m):
    """Level of the retained surface at x (a function), m: z_top at x_from, rising at
    beta, flat from z_top + crest_m (section 9)."""
    tb = np.tan(np.radians(beta_deg))
    cap = np.inf if crest_m is None else z_top + crest_m

    def level(x):
        return np.minimum(z_top + np.maximum(np.asarray(x, dtype=float) - x_from, 0.0) * tb, cap)

    x_crest = None
    if crest_m is not None and tb > 0:
        x_crest = x_from + crest_m / tb
    return level, x_crest


def heel_soil_vertices(section: Section, z_found: float, z_top: float, beta_deg: float,
                       crest_m: float | None) -> tuple:
    """Soil over the heel as a polygon (5 vertices, x from the toe edge, absolute
    levels): the stem's back face, the top of the base, the virtual back x = B and the
    retained surface, which leaves the back face at z_top rising at beta and is flat
    from z_top + crest_m (design-basis section 2 with the crest of section 9). A crest
    over the heel is the fourth vertex (else it repeats the third). m."""
    s = section
    t, B = s.base_thickness_m, s.base_width_m
    x_bs, x_fs = s.toe_m + s.stem_top_m, s.toe_m + s.stem_base_m
    level, x_crest = _retained_surface(z_top, x_bs, beta_deg, crest_m)
    zB = float(level(B))
    xk = B if x_crest is None else min(max(x_crest, x_bs), B)
    return (x_fs, B, B, xk, x_bs), (z_found + t, z_found + t, zB, zB, z_top)


def panel_model(section: Section, cond: Conditions, ground: GroundModel) -> SlipModel:
    """The ground model of a panel for overall stability (design-basis section 9).

    Front ground at z_front, horizontal or falling at ``ground.front_slope_deg`` away
    from the toe; retained surface at z_top from the stem's back face, rising at the
    backfill's slope_deg, flat from ``ground.retained_crest_m`` above z_top when given;
    the backfill above z_found behind the wall (x > B), the foundation soil below z_found
    and in front; the wall (stem to z_top, base, key: gamma_c = 25 kN/m3) and the soil
    over the heel from their polygons, the soil over the toe left out; surcharge on the
    retained surface; pore pressure from the wall's water level behind, the front
    ground or lower in front, linear under the base. ``cond.z_found`` and
    ``cond.water_level_m`` are one panel's (floats or arrays of size 1).
    """
    s = section
    if np.size(cond.z_found) != 1:
        raise ValueError("panel_model: the conditions of one panel (one z_found) are needed")
    zf = float(np.asarray(cond.z_found, dtype=float).reshape(-1)[0])
    z_top, z_front = float(cond.z_top), float(cond.z_front)
    H = z_top - zf
    B, toe, t = s.base_width_m, s.toe_m, s.base_thickness_m
    hc = max(z_top - zf - t, 0.0)
    bf, fd = cond.backfill, cond.foundation
    gb, gf = float(bf.unit_weight_kn_m3), float(fd.unit_weight_kn_m3)
    x_bs = toe + s.stem_top_m
    retained, x_crest = _retained_surface(z_top, x_bs, bf.slope_deg, ground.retained_crest_m)
    tf = np.tan(np.radians(ground.front_slope_deg))

    def front(x):
        return z_front + np.minimum(np.asarray(x, dtype=float), 0.0) * tf

    exit_range = (-3.0 * H, 0.0)
    entry_range = (B, B + 3.0 * H)
    X0, X1 = exit_range[0] - 1.0, entry_range[1] + 1.0
    # the wall's polygons, absolute levels (section.py builders, z from the underside)
    sx, sz = stem_vertices(toe, t, s.stem_base_m, s.stem_top_m, hc)
    bx, bz = base_vertices(B, t)
    kx, kz = key_vertices(toe, s.key_depth_m, s.key_width_m)
    hx, hz = heel_soil_vertices(s, zf, z_top, bf.slope_deg, ground.retained_crest_m)
    concrete = [(np.ravel(sx), np.ravel(sz) + zf), (np.ravel(bx), np.ravel(bz) + zf)]
    key = (np.ravel(kx), np.ravel(kz) + zf)
    heel = (np.asarray(hx, dtype=float), np.asarray(hz, dtype=float))

    def top(x):
        x = np.asarray(x, dtype=float)
        out = np.where(x < 0, gf * front(x), gb * (retained(x) - zf) + gf * zf)
        inside = (x >= 0) & (x <= B)
        wall = gf * zf + (GAMMA_C - gf) * column_height(*key, x)
        for px, pz in concrete:
            wall = wall + GAMMA_C * column_height(px, pz, x)
        wall = wall + gb * column_height(*heel, x)
        return np.where(inside, wall, out)

    brk = {X0, 0.0, B, X1}
    for px, _ in concrete + [key, heel]:
        brk.update(float(v) for v in px)
    if x_crest is not None and X0 < x_crest < X1:
        brk.add(float(x_crest))
    breaks = np.array(sorted(brk))
    top_x, top_l, top_r = _top_on(breaks, top)

    # ground surface: front, the line over the wall (never crossed: the arc passes
    # beneath the wall), retained
    srf = {X0: float(front(X0)), 0.0: z_front, B: float(retained(B)), X1: float(retained(X1))}
    if x_crest is not None and B < x_crest < X1:
        srf[float(x_crest)] = float(retained(x_crest))
    sx_ = np.array(sorted(srf))
    sz_ = np.array([srf[k] for k in sx_])

    water_x = water_z = None
    if cond.water_level_m is not None:
        zw = float(np.asarray(cond.water_level_m, dtype=float).reshape(-1)[0])
        pts = set(float(v) for v in sx_)
        for a, b, za, zb in zip(sx_[:-1], sx_[1:], sz_[:-1], sz_[1:]):
            if a >= 0.0 and b <= B:
                continue  # under the base: linear between x = 0 and x = B
            if (za - zw) * (zb - zw) < 0:
                pts.add(float(a + (zw - za) * (b - a) / (zb - za)))
        water_x = np.array(sorted(pts))
        water_z = np.minimum(zw, np.interp(water_x, sx_, sz_))

    bx_ = [0.0, B]
    bz_ = [zf, zf]
    if s.key_depth_m > 0 and s.key_width_m > 0:
        bx_ += [toe, toe + s.key_width_m]
        bz_ += [zf - s.key_depth_m] * 2
    return SlipModel(
        top_x=top_x, top_left=top_l, top_right=top_r, surface_x=sx_, surface_z=sz_,
        gamma_low=gf, gamma_up=gb, x_split=B, z_split=zf,
        low=(float(fd.friction_angle_deg), float(fd.cohesion_kpa),
             float(fd.undrained_strength_kpa)),
        up=(float(bf.friction_angle_deg), 0.0, 0.0),
        water_x=water_x, water_z=water_z,
        surcharge_kpa=float(cond.surcharge_kpa), surcharge_from_x=x_bs,
        beneath_x=np.array(bx_), beneath_z=np.array(bz_),
        exit_range=exit_range, entry_range=entry_range)


def slope_model(surface_x, surface_z, unit_weight, friction_angle_deg, cohesion_kpa=0.0,
                undrained_strength_kpa=0.0, water_level=None, surcharge_kpa=0.0,
                surcharge_from_x=np.inf, exit_range=None, entry_range=None) -> SlipModel:
    """A plain homogeneous slope rising towards +x (the mass slides towards -x):
    ``surface_x/z`` its ground surface (increasing x), one soil, an optional horizontal
    water table (capped at the surface) and surcharge from ``surcharge_from_x``. Exit
    and entry ranges default to the surface's first and last segment ends. m, kN/m3,
    degrees, kPa."""
    sx = np.asarray(surface_x, dtype=float)
    sz = np.asarray(surface_z, dtype=float)
    top_x, top_l, top_r = _top_on(sx, lambda x: unit_weight * np.interp(x, sx, sz))
    water_x = water_z = None
    if water_level is not None:
        pts = set(float(v) for v in sx)
        for a, b, za, zb in zip(sx[:-1], sx[1:], sz[:-1], sz[1:]):
            if (za - water_level) * (zb - water_level) < 0:
                pts.add(float(a + (water_level - za) * (b - a) / (zb - za)))
        water_x = np.array(sorted(pts))
        water_z = np.minimum(water_level, np.interp(water_x, sx, sz))
    soil = (float(friction_angle_deg), float(cohesion_kpa), float(undrained_strength_kpa))
    return SlipModel(
        top_x=top_x, top_left=top_l, top_right=top_r, surface_x=sx, surface_z=sz,
        gamma_low=float(unit_weight), gamma_up=float(unit_weight), x_split=np.inf,
        z_split=-np.inf, low=soil, up=soil, water_x=water_x, water_z=water_z,
        surcharge_kpa=float(surcharge_kpa), surcharge_from_x=float(surcharge_from_x),
        beneath_x=np.zeros(0), beneath_z=np.zeros(0),
        exit_range=exit_range or (float(sx[0]), float(sx[1])),
        entry_range=entry_range or (float(sx[-2]), float(sx[-1])))


# --- circles ---------------------------------------------------------------------------------

@dataclass(frozen=True, eq=False)
class Circles:
    """Many slip circles: centre (xc, zc), radius R, exit x1 and entry x2 on the ground
    surface, each an array (n,), m; ``ok`` where the circle is admissible (lower arc,
    beneath the wall, under the ground between x1 and x2)."""

    xc: np.ndarray
    zc: np.ndarray
    R: np.ndarray
    x1: np.ndarray
    x2: np.ndarray
    ok: np.ndarray

    def take(self, idx) -> "Circles":
        return Circles(*(getattr(self, k)[idx] for k in ("xc", "zc", "R", "x1", "x2", "ok")))


def _spread(u):
    return np.clip(u, 0.0, 1.0) ** SPREAD


def circles_through(model: SlipModel, x1, x2, tau) -> Circles:
    """The circles leaving the ground at x1 (front) and entering it at x2 (behind),
    their depth set by tau in [0, 1]: 0 the shallowest circle through both points that
    still passes beneath every ``beneath`` point, 1 the deepest whose ends are on its
    lower half (the higher end level with the centre). Between them the sag of the arc
    below the chord's middle varies linearly with tau. Arrays broadcast; m."""
    x1, x2, tau = np.broadcast_arrays(*(np.asarray(v, dtype=float) for v in (x1, x2, tau)))
    z1, z2 = model.surface(x1), model.surface(x2)
    mx, mz = 0.5 * (x1 + x2), 0.5 * (z1 + z2)
    dx, dz = x2 - x1, z2 - z1
    L = np.maximum(np.hypot(dx, dz), 1e-9)
    a = 0.5 * L
    nx, nz = -dz / L, dx / L  # unit normal to the chord, upwards
    # deepest: the centre level with the higher end
    t_lo = (np.maximum(z1, z2) - mz) / nz
    # shallowest: the circle through each beneath point below the chord
    t_hi = np.full(x1.shape, np.inf)
    for kx, kz in zip(model.beneath_x, model.beneath_z):
        px, pz = mx - kx, mz - kz
        dn = nx * px + nz * pz
        below = dn > 1e-12
        tk = (a * a - (px * px + pz * pz)) / (2.0 * np.where(below, dn, 1.0))
        t_hi = np.where(below, np.minimum(t_hi, tk), t_hi)
    # and never shallower than a sag of 2 % of the chord (the only limit on a plain
    # slope without a wall)
    t_flat = (a * a - (0.02 * L) ** 2) / (2.0 * 0.02 * L)
    t_hi = np.minimum(t_hi, t_flat)

    def sag(t):
        return np.sqrt(a * a + t * t) - t

    s_lo, s_hi = sag(t_hi), sag(t_lo)
    s = s_lo + (s_hi - s_lo) * tau
    t = (a * a - s * s) / (2.0 * s)
    R = np.sqrt(a * a + t * t)
    xc, zc = mx + t * nx, mz + t * nz
    ok = (x2 > x1) & (t_hi > t_lo) & (s > 0) & np.isfinite(R)
    ok &= (z1 <= zc + 1e-9) & (z2 <= zc + 1e-9)
    # beneath every point of the wall (a touching circle is admitted)
    for kx, kz in zip(model.beneath_x, model.beneath_z):
        ok &= (np.abs(kx - xc) < R) & (bishop.arc_level(kx, xc, zc, R) <= kz + 1e-9)
    # under the ground between its ends: on each straight piece of the surface the
    # ground less the (convex) arc is concave, so its vertices suffice
    for vx, vz in zip(model.surface_x, model.surface_z):
        inner = (vx > x1) & (vx < x2)
        ok &= ~inner | (bishop.arc_level(vx, xc, zc, R) <= vz + 1e-9)
    return Circles(xc, zc, R, x1, x2, ok)


def circles_unit(model: SlipModel, u1, u2, tau) -> Circles:
    """:func:`circles_through` with the exit and entry points given as fractions of their
    ranges (0 next to the wall, spread as u ** SPREAD)."""
    e0, e1 = model.exit_range
    n0, n1 = model.entry_range
    x1 = e1 - (e1 - e0) * _spread(u1)
    x2 = n0 + (n1 - n0) * _spread(u2)
    return circles_through(model, x1, x2, tau)


# --- slices -------------------------------------------------------------------------------------

@dataclass(frozen=True, eq=False)
class Slices:
    """The slices of n circles (arrays (n, s)): width b (m), total weight W (kN/m),
    characteristic surcharge load Qk (kN/m, behind the centre only), pore pressure u at
    the base middle (kPa), cos/sin of the base inclination, ``upper`` where the base lies
    in the upper soil; per circle (n,): driving moment of the weights M_W and of the
    characteristic surcharge M_Q about the centre (kNm/m), radius R (m)."""

    b: np.ndarray
    W: np.ndarray
    Qk: np.ndarray
    u: np.ndarray
    cos_a: np.ndarray
    sin_a: np.ndarray
    upper: np.ndarray
    M_W: np.ndarray
    M_Q: np.ndarray
    R: np.ndarray

    def take(self, idx) -> "Slices":
        """The slices of the circles ``idx`` only."""
        return Slices(*(getattr(self, k)[idx] for k in (
            "b", "W", "Qk", "u", "cos_a", "sin_a", "upper", "M_W", "M_Q", "R")))


def _upper_pieces(model: SlipModel, c: Circles):
    """The x-ranges, per circle, where the arc lies above z_split behind x_split (the
    upper soil's base): [x_split, xc - d] and [max(x_split, xc + d), inf) with d the
    half-width of the arc below z_split. Returns two (lo, hi) pairs of arrays (n,)."""
    h = c.zc - model.z_split
    d = np.sqrt(np.maximum(c.R * c.R - h * h, 0.0))
    d = np.where(h >= c.R, -np.inf, np.where(h <= 0, np.inf, d))  # all above / all below
    xs = model.x_split
    left = (np.full_like(c.xc, xs), c.xc - d)
    right = (np.maximum(xs, c.xc + d), np.full_like(c.xc, np.inf))
    return left, right


def slices(model: SlipModel, c: Circles, n: int = N_SLICES) -> Slices:
    """Slice the sliding mass of every circle (Bishop 1955): n slices of equal width
    between exit x1 and entry x2, cut again where the arc crosses z_split behind
    x_split. Weights are exact integrals (top function less the soil below the arc);
    moments about the centre likewise; each base is the chord of the arc between the
    slice's sides (its inclination in m_alpha, its true length in the cohesion term);
    pore pressure and soil at the middle of the base."""
    xc, zc, R = c.xc[:, None], c.zc[:, None], c.R[:, None]
    frac = np.linspace(0.0, 1.0, n + 1)
    e = c.x1[:, None] + (c.x2 - c.x1)[:, None] * frac
    (la, lb), (ra, rb) = _upper_pieces(model, c)
    cuts = np.stack([la, lb, ra], axis=1)
    cuts = np.clip(np.where(np.isfinite(cuts), cuts, c.x1[:, None]), c.x1[:, None], c.x2[:, None])
    e = np.sort(np.concatenate([e, cuts], axis=1), axis=1)
    x0, x1 = e[:, :-1], e[:, 1:]
    b = x1 - x0
    xm = 0.5 * (x0 + x1)
    zb = bishop.arc_level(xm, xc, zc, R)
    upper = (xm > model.x_split) & (zb > model.z_split)
    # weight: top less the soil below the arc; each slice lies wholly in or out of the
    # upper soil's pieces (cut at their ends), so the upper soil's share is exact
    I0, I1 = _top_integrals(model, e)
    top = np.diff(I0, axis=1)
    top_m = np.diff(I1, axis=1) - xc * top
    A = np.diff(bishop.arc_area(xc, e, xc, zc, R), axis=1)  # integral of z_arc, m2
    Am = np.diff(bishop.arc_moment(xc, e, xc, zc, R), axis=1)  # about xc, m3
    gl, gu = model.gamma_low, model.gamma_up
    below, below_m = gl * A, gl * Am
    if gu != gl:
        zs = model.z_split
        below = below + (gu - gl) * np.where(upper, A - zs * b, 0.0)
        below_m = below_m + (gu - gl) * np.where(upper, Am - zs * (xm - xc) * b, 0.0)
    W = np.maximum(top - below, 0.0)
    M_W = (top_m - below_m).sum(axis=1)
    # surcharge behind the centre
    q = model.surcharge_kpa
    qa = np.clip(np.maximum(model.surcharge_from_x, xc), x0, x1)
    Qk = q * (x1 - qa)
    M_Q = (q * 0.5 * ((x1 - xc) ** 2 - (qa - xc) ** 2)).sum(axis=1)
    # slice base: the chord of the arc between the slice's sides
    cos_a, sin_a = bishop.chord_inclination(x0, x1, xc, zc, R)
    if model.water_x is None:
        u = np.zeros_like(xm)
    else:
        u = GAMMA_W * np.maximum(np.interp(xm, model.water_x, model.water_z) - zb, 0.0)
    return Slices(b, W, Qk, u, cos_a, sin_a, upper, M_W, M_Q, c.R)


# --- design values and the factor of safety ------------------------------------------------

@dataclass(frozen=True)
class Case:
    """One set of design values for the slices: the combination's name, ``drained`` or
    ``undrained``, gQ on the surcharge, the partial factors on tan phi', c' and cu and
    gamma_R;e on the resisting moment (EN 1997-1 2.4.6.2, Tables A.3, A.4, A.14)."""

    combination: str
    case: str
    gQ: float = 1.0
    g_phi: float = 1.0
    g_c: float = 1.0
    g_cu: float = 1.0
    gR: float = 1.0


def _strength(model: SlipModel, case: Case, sl: Slices):
    """(c, tan phi, u) at every slice base for ``case``: design values c'_d = c'_k / g_c,
    tan phi'_d = tan phi'_k / g_phi, cu_d = cu_k / g_cu (EN 1997-1 2.4.6.2 Eq. 2.2);
    undrained: the lower soil at cu_d, phi = 0, total stress (no pore pressure term)."""
    def drained(soil):
        phi, c, _ = soil
        return c / case.g_c, np.tan(np.radians(phi)) / case.g_phi

    cl, tl = drained(model.low)
    cu_, tu = drained(model.up)
    u = sl.u
    if case.case == "undrained":
        cl, tl = model.low[2] / case.g_cu, 0.0
        u = np.where(sl.upper, sl.u, 0.0)
    c = np.where(sl.upper, cu_, cl)
    tan_phi = np.where(sl.upper, tu, tl)
    return c, tan_phi, u


def evaluate(model: SlipModel, sl: Slices, case: Case):
    """Bishop's factor of safety of every circle for one set of design values.

    Returns (F, M_D, M_R, ok): F the factor of safety with the design strengths (inf
    where the mass does not drive towards the front), M_D the design driving moment
    (weights at 1.0, surcharge at gQ), M_R the design resisting moment R sum(num /
    m_alpha) / gamma_R;e (kNm/m), ok where the circle is admissible (converged, M_D > 0,
    m_alpha >= 0.2 at every base inclined against the movement). Utilization
    M_D / M_R = gamma_R;e / F."""
    c, tan_phi, u = _strength(model, case, sl)
    num = bishop.slice_strength(c, tan_phi, sl.W + case.gQ * sl.Qk, u, sl.b)
    M_D = sl.M_W + case.gQ * sl.M_Q
    F, M_res, m = bishop.bishop_factor(num, sl.cos_a, sl.sin_a, tan_phi, M_D, sl.R)
    exit_side = (sl.sin_a < 0) & (sl.b > 0)
    m_min = np.where(exit_side, m, np.inf).min(axis=-1)  # NaN if not converged
    ok = (M_D > 0) & np.isfinite(F) & (m_min >= bishop.M_ALPHA_MIN)
    return F, M_D, M_res / case.gR, ok


# --- the critical circle ------------------------------------------------------------------------

@dataclass(frozen=True)
class Critical:
    """The critical circle of one case: centre (xc, zc), radius R, exit x1 and entry x2
    (m), factor of safety F, design driving and resisting moments (kNm/m)."""

    xc: float
    zc: float
    R: float
    x1: float
    x2: float
    F: float
    M_D: float
    M_R: float

    @property
    def utilization(self) -> float:
        return float(utilization(self.M_D, self.M_R))


def search(model: SlipModel, cases: list[Case] | tuple[Case, ...]) -> list[Critical | None]:
    """The critical circle of every case: a grid of exit points x GRID[0], entry points x
    GRID[1] and depths x GRID[2] (all circles and slices in numpy arrays at once; the
    slices are shared by the cases), then ROUNDS of a pattern search from the STARTS best
    distinct circles of each case (the 26 neighbours of each at its current step, every
    start of every case in one batch; the step halves where no neighbour is better). The
    critical circle has the largest utilization (least factor of safety). None where no
    circle is admissible."""
    n1, n2, n3 = GRID
    g1 = (np.arange(n1) + 0.5) / n1
    g2 = (np.arange(n2) + 0.5) / n2
    g3 = (np.arange(n3) + 0.5) / n3
    U1, U2, T = (a.ravel() for a in np.meshgrid(g1, g2, g3, indexing="ij"))
    circ = circles_unit(model, U1, U2, T)
    keep = np.nonzero(circ.ok)[0]
    if keep.size == 0:
        return [None] * len(cases)
    sl = slices(model, circ.take(keep))
    steps0 = np.array([1.0 / n1, 1.0 / n2, 1.0 / n3])
    # the starts: the best distinct coarse circles of each case
    P, U, owner = [], [], []
    for ci, case in enumerate(cases):
        F, M_D, M_R, ok = evaluate(model, sl, case)
        with np.errstate(divide="ignore", invalid="ignore"):
            util = np.where(ok, M_D / M_R, -np.inf)
        mine: list[np.ndarray] = []
        for i in np.argsort(-util):
            if not np.isfinite(util[i]) or len(mine) == STARTS:
                break
            p = np.array([U1[keep[i]], U2[keep[i]], T[keep[i]]])
            if all(np.max(np.abs(p - q) / steps0) > 1.5 for q in mine):
                mine.append(p)
                P.append(p)
                U.append(util[i])
                owner.append(ci)
    if not P:
        return [None] * len(cases)
    P, U, owner = np.array(P), np.array(U), np.array(owner)
    K = len(P)
    step = np.tile(steps0, (K, 1))
    off = np.array(np.meshgrid([-1.0, 0.0, 1.0], [-1.0, 0.0, 1.0], [-1.0, 0.0, 1.0],
                               indexing="ij")).reshape(3, -1).T
    off = off[np.any(off != 0, axis=1)]  # the 26 neighbours of a point
    rows = np.arange(K)
    for _ in range(ROUNDS):
        cand = np.clip(P[:, None, :] + off[None, :, :] * step[:, None, :], 0.0, 1.0)
        flat = cand.reshape(-1, 3)
        c = circles_unit(model, flat[:, 0], flat[:, 1], flat[:, 2])
        util = np.full(len(flat), -np.inf)
        good = np.nonzero(c.ok)[0]
        if good.size:
            sl_c = slices(model, c.take(good))
            who = owner[good // len(off)]
            for ci, case in enumerate(cases):
                sel = np.nonzero(who == ci)[0]
                if sel.size == 0:
                    continue
                F, M_D, M_R, ok = evaluate(model, sl_c.take(sel), case)
                with np.errstate(divide="ignore", invalid="ignore"):
                    util[good[sel]] = np.where(ok, M_D / M_R, -np.inf)
        util = util.reshape(K, -1)
        j = np.argmax(util, axis=1)
        uj = util[rows, j]
        better = uj > U
        P = np.where(better[:, None], cand[rows, j], P)
        U = np.where(better, uj, U)
        step = np.where(better[:, None], step, 0.5 * step)
    out: list[Critical | None] = []
    for ci, case in enumerate(cases):
        mine = np.nonzero(owner == ci)[0]
        if mine.size == 0:
            out.append(None)
            continue
        k = mine[int(np.argmax(U[mine]))]
        c1 = circles_unit(model, P[k:k + 1, 0], P[k:k + 1, 1], P[k:k + 1, 2])
        F1, D1, R1, ok1 = evaluate(model, slices(model, c1), case)
        out.append(Critical(float(c1.xc[0]), float(c1.zc[0]), float(c1.R[0]), float(c1.x1[0]),
                            float(c1.x2[0]), float(F1[0]), float(D1[0]), float(R1[0])))
    return out


# --- the check of a panel ----------------------------------------------------------------------

@dataclass(frozen=True)
class OverallResult:
    """The ``overall`` check of one panel in one combination and case: the design
    driving moment (effect) and resisting moment (resistance) about the critical
    circle's centre, kNm/m, their ratio, Bishop's factor of safety with the design
    strengths, and the critical circle (centre x from the toe edge, level, radius, m),
    with its exit and entry points on the ground (x from the toe edge, m); circle None
    (and NaN points) where no circle is admissible."""

    combination: str
    case: str
    effect: float
    resistance: float
    utilization: float
    factor_of_safety: float
    circle: Circle | None
    exit_x_m: float
    entry_x_m: float


def cases_of(basis: Basis, cond: Conditions) -> list[Case]:
    """The design values of every combination of the approach (``basis.uls_sets``):
    drained, and undrained where the foundation has cu > 0 (design-basis section 9)."""
    out = []
    for name in basis.uls_sets:
        fs = basis.factors[name]
        kw = dict(gQ=fs.gQ, g_phi=fs.g_phi, g_c=fs.g_c, g_cu=fs.g_cu, gR=fs.gR_slope)
        out.append(Case(name, "drained", **kw))
        if cond.foundation.undrained_strength_kpa > 0:
            out.append(Case(name, "undrained", **kw))
    return out


def overall_check(section: Section, cond: Conditions, basis: Basis,
                  ground: GroundModel) -> list[OverallResult]:
    """Overall stability of one panel (EN 1997-1 11.5.1, design-basis section 9) for
    every combination of the approach (and case drained/undrained): the critical circle
    by :func:`search` on the ground model of :func:`panel_model`."""
    return check_model(panel_model(section, cond, ground), cases_of(basis, cond))


def check_model(model: SlipModel, cases: list[Case]) -> list[OverallResult]:
    """The ``overall`` results of a ground model for ``cases`` (:func:`search`). A case
    without an admissible circle gets an infinite effect and zero resistance: it fails,
    never a silent pass."""
    out = []
    for case, crit in zip(cases, search(model, cases)):
        if crit is None:
            out.append(OverallResult(case.combination, case.case, np.inf, 0.0, np.inf, 0.0,
                                     None, np.nan, np.nan))
            continue
        out.append(OverallResult(case.combination, case.case, crit.M_D, crit.M_R,
                                 crit.utilization, crit.F, Circle(crit.xc, crit.zc, crit.R),
                                 crit.x1, crit.x2))
    return out


def check_arrays(results: list[OverallResult]) -> list[CheckArray]:
    """The results as ``CheckArray`` of one candidate each (check ``overall``, unit
    kNm/m), for the lists the sizing and ``results.CheckListing`` take."""
    return [CheckArray(CHECK, r.combination, r.case, UNIT, CLAUSE, np.array([r.effect]),
                       np.array([r.resistance])) for r in results]


def check_entries(results: list[OverallResult]) -> list[CheckEntry]:
    """The results as ``design.json`` check entries with their critical circle;
    ``governs`` on the worst case of each combination."""
    worst: dict[str, int] = {}
    for i, r in enumerate(results):
        if r.combination not in worst or r.utilization > results[worst[r.combination]].utilization:
            worst[r.combination] = i
    return [CheckEntry(CHECK, r.combination, r.case, r.effect, r.resistance, UNIT,
                       r.utilization, CLAUSE, i in worst.values(), circle=r.circle)
            for i, r in enumerate(results)]


def slip_surface(result: OverallResult, n: int = 64) -> tuple[np.ndarray, np.ndarray]:
    """The critical slip surface of a result as a polyline for the drawings: n + 1
    points of the lower arc from the exit point in front to the entry point behind,
    (x from the toe edge, z level), m. Empty arrays where there is no circle."""
    if result.circle is None:
        return np.zeros(0), np.zeros(0)
    c = result.circle
    x = np.linspace(result.exit_x_m, result.entry_x_m, n + 1)
    return x, bishop.arc_level(x, c.x_m, c.z_m, c.radius_m)


def failure_reason(results: list[OverallResult], limit: float = 1.0) -> str:
    """The plain reason to flag a panel whose overall stability fails (utilization above
    ``limit``), naming the worst combination and its circle; "" when it passes. A wider
    base or a deeper founding level may help, but the slip passes beneath the whole
    wall: a slope problem may need measures outside the wall (issue 19)."""
    bad = [r for r in results if not r.utilization <= limit]
    if not bad:
        return ""
    w = max(bad, key=lambda r: r.utilization)
    where = ("no admissible slip circle" if w.circle is None else
             f"critical circle centre x {w.circle.x_m:.2f} m from the toe, level "
             f"{w.circle.z_m:.2f} m, radius {w.circle.radius_m:.2f} m")
    return (f"overall stability fails ({w.combination} {w.case}, utilization "
            f"{w.utilization:.2f}; {where}): the wall and the ground slide together "
            "beneath the base; a wider base or a deeper founding level may help, but the "
            "slope may need measures outside the wall (flatter or lower slopes, drainage, "
            "stronger ground)")

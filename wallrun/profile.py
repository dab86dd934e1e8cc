"""The two profiles along the wall line, retained height and the wall runs.

Design-basis section 1. Chainage ``ch`` and levels in m.

- Existing ground ``G(ch)``: piecewise linear between the survey points.
- Finished level ``F(ch)``: piecewise linear between its points, or a road-style
  vertical alignment evaluated exactly: intersection points joined by straight grades,
  each interior point with a symmetric parabolic vertical curve of length ``L``
  centred on it. On a curve, with ``x`` measured from its start (BVC),
  ``y = y0 + g1 x + (g2 - g1) x^2 / (2 L)`` (the standard parabola of highway
  geometry), ``y0`` the level of the incoming grade at the start, ``g1``/``g2`` the
  incoming and outgoing grades (m/m). Its high or low point is at
  ``x = -g1 L / (g2 - g1)`` when that lies inside the curve.
- Retained height ``h = |F - G|``; fill side (+1) where ``F > G`` (retained F, front
  G), cut side (-1) where ``F < G`` (retained G, front F).

Between neighbouring breakpoints ``d = F - G`` is a polynomial of degree <= 2 (G
linear, F linear or one parabola, since every curve end is a breakpoint), so the
threshold crossings and the maximum of ``h`` are solved exactly on each piece.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from shapely.geometry import LineString

from wallrun.results import Run

#: Two chainages closer than this are one point, m.
_TOL = 1e-9


@dataclass(frozen=True)
class Curve:
    """A symmetric parabolic vertical curve: start ``bvc``, end ``evc`` (m chainage),
    level at the start ``y0`` (m), grades ``g1`` in and ``g2`` out (m/m), length ``L`` (m)."""

    bvc: float
    evc: float
    y0: float
    g1: float
    g2: float
    L: float

    @property
    def k(self) -> float:
        """Coefficient of x^2: (g2 - g1) / (2 L), 1/m."""
        return (self.g2 - self.g1) / (2.0 * self.L)

    def level(self, ch):
        """y = y0 + g1 x + (g2 - g1) x^2 / (2 L), x = ch - bvc (m)."""
        x = np.asarray(ch, dtype=float) - self.bvc
        return self.y0 + self.g1 * x + self.k * x * x

    @property
    def turning_ch(self) -> float | None:
        """Chainage of the high (crest) or low (sag) point, x = -g1 L / (g2 - g1) from
        the start, or None when it falls outside the curve (or the grades are equal)."""
        if self.g2 == self.g1:
            return None
        x = -self.g1 * self.L / (self.g2 - self.g1)
        if _TOL < x < self.L - _TOL:
            return self.bvc + x
        return None


def alignment_curves(ch, level, curve_length) -> tuple[Curve, ...]:
    """The vertical curves of an alignment given by its intersection points."""
    ch = np.asarray(ch, dtype=float)
    z = np.asarray(level, dtype=float)
    L = np.asarray(curve_length, dtype=float)
    g = np.diff(z) / np.diff(ch)
    out = []
    for i in range(1, len(ch) - 1):
        if L[i] > 0:
            g1, g2 = g[i - 1], g[i]
            out.append(Curve(bvc=ch[i] - L[i] / 2, evc=ch[i] + L[i] / 2,
                             y0=z[i] - g1 * L[i] / 2, g1=float(g1), g2=float(g2),
                             L=float(L[i])))
    return tuple(out)


def alignment_level(pvi_ch, pvi_level, curves, ch) -> np.ndarray:
    """Level of a vertical alignment at ``ch`` (vectorised): the straight grades
    between the intersection points, replaced by the parabola on each curve."""
    ch = np.asarray(ch, dtype=float)
    y = np.interp(ch, pvi_ch, pvi_level)
    for c in curves:
        m = (ch >= c.bvc) & (ch <= c.evc)
        if np.any(m):
            y = np.where(m, c.level(ch), y)
    return y


@dataclass(frozen=True, eq=False)
class Profiles:
    """Ground and finished level on their common chainage range.

    ``ground(ch)``, ``finished(ch)``: vectorised levels (m). ``breakpoints``: sorted
    unique chainages within ``[ch_start, ch_end]`` of the survey points, the finished
    points (for an alignment: its intersection points without a curve, each curve's
    ends and its high or low point). ``plan_line``: the wall line in plan (from the
    ground profile's ``x_m,y_m``, else the finished profile's) or None; ``plan_s``: the
    length along it from its first point to each plan point (m).

    Length along the wall line (:meth:`developed`, :meth:`length_along`): with plan
    positions, the length of the plan polyline (positions linear in chainage between
    the plan points, so the length is too); without them, the chainage difference.
    On a LandXML site the chainage is the alignment's station and the wall line, at an
    offset from a curved alignment, is longer or shorter than the station difference.
    """

    ground_ch: np.ndarray
    ground_level: np.ndarray
    finished_ch: np.ndarray  # the finished points, or the alignment's intersection points
    finished_level: np.ndarray
    curves: tuple[Curve, ...]
    ch_start: float
    ch_end: float
    breakpoints: np.ndarray
    plan_ch: np.ndarray | None = None
    plan_x: np.ndarray | None = None
    plan_y: np.ndarray | None = None
    plan_line: LineString | None = field(default=None)
    plan_s: np.ndarray | None = None

    def ground(self, ch) -> np.ndarray:
        """Existing ground level G(ch), m: linear between survey points."""
        return np.interp(np.asarray(ch, dtype=float), self.ground_ch, self.ground_level)

    def finished(self, ch) -> np.ndarray:
        """Finished level F(ch), m: linear between its points, or the alignment."""
        return alignment_level(self.finished_ch, self.finished_level, self.curves, ch)

    def xy_at(self, ch):
        """Plan position (x, y) at ``ch``, interpolated by chainage; None without plan data."""
        if self.plan_ch is None:
            return None
        ch = np.asarray(ch, dtype=float)
        return (np.interp(ch, self.plan_ch, self.plan_x), np.interp(ch, self.plan_ch, self.plan_y))

    def developed(self, ch) -> np.ndarray:
        """Length along the wall line from ``ch_start`` to ``ch`` (m, vectorised): the
        plan polyline's length where the profiles carry x, y, else ch - ch_start."""
        ch = np.asarray(ch, dtype=float)
        if self.plan_s is None:
            return ch - self.ch_start
        s = np.interp(ch, self.plan_ch, self.plan_s)
        return s - float(np.interp(self.ch_start, self.plan_ch, self.plan_s))

    def length_along(self, a: float, b: float) -> float:
        """Length along the wall line between chainages ``a`` and ``b`` (m): equal to
        b - a without plan positions."""
        if self.plan_s is None:
            return float(b) - float(a)
        d = self.developed(np.array([a, b], dtype=float))
        return float(d[1] - d[0])

    def chainage_at(self, s) -> np.ndarray:
        """The chainage at a length ``s`` along the wall line from ``ch_start`` (m): the
        inverse of :meth:`developed` (where the plan polyline has no zero-length piece;
        otherwise, and without plan positions, ch_start + s)."""
        s = np.asarray(s, dtype=float)
        if self.plan_s is None or not np.all(np.diff(self.plan_s) > 0):
            return self.ch_start + s
        s0 = float(np.interp(self.ch_start, self.plan_ch, self.plan_s))
        return np.interp(s + s0, self.plan_s, self.plan_ch)

    def curve_at(self, a: float, b: float) -> Curve | None:
        """The vertical curve holding the piece ``[a, b]`` between two breakpoints, if any."""
        mid = 0.5 * (a + b)
        for c in self.curves:
            if c.bvc - _TOL <= a and b <= c.evc + _TOL and c.bvc < mid < c.evc:
                return c
        return None


def build_profiles(site) -> Profiles:
    """Profiles of a validated :class:`wallrun.settings.Site` on their common range."""
    g = site.ground
    gch = np.asarray(g.chainage_m, dtype=float)
    glv = np.asarray(g.level_m, dtype=float)
    if site.alignment is not None:
        fch = np.array([p.chainage_m for p in site.alignment], dtype=float)
        flv = np.array([p.level_m for p in site.alignment], dtype=float)
        Ls = np.array([p.curve_length_m for p in site.alignment], dtype=float)
        curves = alignment_curves(fch, flv, Ls)
        fpts = [fch[Ls == 0]]
        for c in curves:
            fpts.append(np.array([c.bvc, c.evc]))
            if c.turning_ch is not None:
                fpts.append(np.array([c.turning_ch]))
        fpoints = np.concatenate(fpts)
    else:
        f = site.finished
        fch = np.asarray(f.chainage_m, dtype=float)
        flv = np.asarray(f.level_m, dtype=float)
        curves = ()
        fpoints = fch
    lo = max(gch[0], fch[0])
    hi = min(gch[-1], fch[-1])
    if not lo < hi:
        raise ValueError("profiles do not overlap")  # load_site refuses this first
    bp = np.concatenate([gch, fpoints, [lo, hi]])
    bp = bp[(bp >= lo) & (bp <= hi)]
    bp = _unique(bp)

    plan_ch = plan_x = plan_y = plan_s = None
    line = None
    src = g if g.x_m is not None else (site.finished if site.finished is not None
                                       and site.finished.x_m is not None else None)
    if src is not None:
        plan_ch = np.asarray(src.chainage_m, dtype=float)
        plan_x = np.asarray(src.x_m, dtype=float)
        plan_y = np.asarray(src.y_m, dtype=float)
        line = LineString(np.column_stack([plan_x, plan_y]))
        plan_s = np.concatenate([[0.0], np.cumsum(np.hypot(np.diff(plan_x),
                                                           np.diff(plan_y)))])
    return Profiles(ground_ch=gch, ground_level=glv, finished_ch=fch, finished_level=flv,
                    curves=curves, ch_start=float(lo), ch_end=float(hi), breakpoints=bp,
                    plan_ch=plan_ch, plan_x=plan_x, plan_y=plan_y, plan_line=line,
                    plan_s=plan_s)


def _unique(a: np.ndarray) -> np.ndarray:
    a = np.sort(np.asarray(a, dtype=float))
    if a.size == 0:
        return a
    keep = np.concatenate([[True], np.diff(a) > _TOL])
    return a[keep]


def retained(profiles: Profiles, ch):
    """(side, h, retained_level, front_level) at ``ch`` (arrays).

    side +1 fill (F >= G: retained F, front G), -1 cut (F < G: retained G, front F);
    h = |F - G| (m). Where F == G, h = 0 and side is +1.
    """
    ch = np.asarray(ch, dtype=float)
    F = profiles.finished(ch)
    G = profiles.ground(ch)
    d = F - G
    side = np.where(d >= 0, 1, -1)
    return side, np.abs(d), np.maximum(F, G), np.minimum(F, G)


# --- pieces of d = F - G ----------------------------------------------------------------

def _pieces(profiles: Profiles):
    """Quadratic pieces of d = F - G between neighbouring breakpoints.

    Yields (a, b, c0, c1, c2) with d(a + t) = c0 + c1 t + c2 t^2 for 0 <= t <= b - a.
    """
    bp = profiles.breakpoints
    d = profiles.finished(bp) - profiles.ground(bp)
    for i in range(len(bp) - 1):
        a, b = float(bp[i]), float(bp[i + 1])
        w = b - a
        cv = profiles.curve_at(a, b)
        c2 = cv.k if cv is not None else 0.0
        c0 = float(d[i])
        c1 = (float(d[i + 1]) - c0) / w - c2 * w
        yield a, b, c0, c1, c2


def _roots_in(c0, c1, c2, w) -> list[float]:
    """Real roots of c0 + c1 t + c2 t^2 strictly inside (0, w)."""
    roots = []
    if abs(c2) * w * w <= 1e-14 * max(1.0, abs(c0), abs(c1) * w):
        if c1 != 0:
            roots = [-c0 / c1]
    else:
        disc = c1 * c1 - 4 * c2 * c0
        if disc >= 0:
            s = np.sqrt(disc)
            # numerically stable pair
            q = -0.5 * (c1 + np.copysign(s, c1))
            r = [q / c2] + ([c0 / q] if q != 0 else [])
            roots = sorted(set(float(x) for x in r))
    return [t for t in roots if _TOL < t < w - _TOL]


def needed_stretches(profiles: Profiles, wall) -> tuple[tuple[int, float, float], ...]:
    """Stretches where a wall is needed, before merging: (side, start, end), side +1 fill
    or -1 cut, in chainage order (design-basis section 1).

    A wall is needed where h >= ``wall.min_retained_height_m``: fill where
    d = F - G >= hmin, cut where d <= -hmin; the ends are the exact crossings of the
    threshold. Stretches of zero length (h touching hmin at one point) are dropped.
    """
    hmin = float(wall.min_retained_height_m)
    found: list[list] = []  # [side, start, end]
    for a, b, c0, c1, c2 in _pieces(profiles):
        w = b - a
        for side in (1, -1):
            # side * d - hmin >= 0
            e0, e1, e2 = side * c0 - hmin, side * c1, side * c2
            cuts = [0.0] + _roots_in(e0, e1, e2, w) + [w]
            for t0, t1 in zip(cuts, cuts[1:]):
                tm = 0.5 * (t0 + t1)
                if e0 + e1 * tm + e2 * tm * tm >= 0:
                    s, e = a + t0, a + t1
                    if found and found[-1][0] == side and abs(found[-1][2] - s) <= _TOL:
                        found[-1][2] = e
                    else:
                        found.append([side, s, e])
    found.sort(key=lambda r: r[1])
    # join touching same-side stretches from neighbouring pieces of the other side loop
    out: list[list] = []
    for r in found:
        if out and out[-1][0] == r[0] and r[1] - out[-1][2] <= _TOL:
            out[-1][2] = max(out[-1][2], r[2])
        else:
            out.append(list(r))
    return tuple((int(s), float(a), float(b)) for s, a, b in out if b - a > _TOL)


def max_retained(profiles: Profiles, start: float, end: float) -> tuple[float, float]:
    """Largest h = |F - G| over ``[start, end]`` and its chainage (the first if tied).

    Evaluated at the ends, at every breakpoint inside and, on a curved piece, where the
    derivative of F - G vanishes (the vertex of its parabola).
    """
    cand = [start, end]
    bp = profiles.breakpoints
    cand.extend(bp[(bp > start) & (bp < end)].tolist())
    for a, b, c0, c1, c2 in _pieces(profiles):
        if c2 != 0 and b > start and a < end:
            t = -c1 / (2 * c2)
            x = a + t
            if max(a, start) < x < min(b, end):
                cand.append(x)
    cand = np.array(sorted(cand))
    _, h, _, _ = retained(profiles, cand)
    k = int(np.argmax(h))
    return float(h[k]), float(cand[k])


def find_runs(profiles: Profiles, wall) -> tuple[Run, ...]:
    """Wall runs (design-basis section 1): needed stretches of the same side closer
    than ``wall.merge_gap_m`` merge into one run (the wall continues through the gap);
    a stretch of the other side always starts a new run. Runs numbered from 1, each with
    its length along the wall line (``Profiles.length_along``)."""
    gap = float(wall.merge_gap_m)
    merged: list[list] = []
    for side, a, b in needed_stretches(profiles, wall):
        if merged and merged[-1][0] == side and a - merged[-1][2] < gap:
            merged[-1][2] = b
        else:
            merged.append([side, a, b])
    runs = []
    for i, (side, a, b) in enumerate(merged, 1):
        hmax, at = max_retained(profiles, a, b)
        runs.append(Run(run=i, side="fill" if side > 0 else "cut", ch_start_m=a, ch_end_m=b,
                        max_retained_height_m=hmax, at_ch_m=at,
                        length_m=profiles.length_along(a, b)))
    return tuple(runs)

"""Road alignment geometry: the horizontal alignment, lines offset from it, and
vertical profiles with circular curves.

Horizontal alignment (plan, m): a chain of elements, each a line, a circular arc or a
clothoid, given by its start point (x east, y north), start heading ``h0`` (rad,
anticlockwise from east), length ``L`` and signed curvature at its two ends ``k0``,
``k1`` (1/m, positive turning left, i.e. anticlockwise). The curvature varies
linearly along an element (zero on a line, constant on an arc, linear on a clothoid):
``k(s) = k0 + (k1 - k0) s / L``, so the heading is

    h(s) = h0 + k0 s + (k1 - k0) s^2 / (2 L)

and the position is the integral of ``(cos h, sin h)`` (standard highway geometry):
closed forms on lines and arcs, the Fresnel integrals on clothoids
(:func:`clothoid_xy`). Stations: the alignment's start station (LandXML ``staStart``)
plus the distance along the alignment.

A line offset ``o`` from the alignment (``o > 0`` to the right of increasing station)
has points ``p(s) + o (sin h, -cos h)`` and its length between two stations is
``integral (1 + o k(s)) ds`` (the offset curve's radius is ``R + o`` on a left-hand
curve): exact in closed form because k is linear (:func:`offset_length`).

Vertical profiles (``ProfAlign``): grades between intersection points (PVI), with a
symmetric parabolic curve or a circular curve on an interior PVI
(:class:`VerticalProfile`).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

#: Curvatures closer than this are equal (an arc, not a clothoid), 1/m.
_K_TOL = 1e-12


# --- one element ---------------------------------------------------------------------

def heading(h0: float, k0: float, k1: float, length: float, s):
    """Heading h(s) = h0 + k0 s + (k1 - k0) s^2 / (2 L) of an element whose curvature
    varies linearly from k0 to k1 over its length L (rad; s in m, k in 1/m)."""
    s = np.asarray(s, dtype=float)
    return h0 + k0 * s + (k1 - k0) * s * s / (2.0 * length)


def line_xy(h0: float, s):
    """Displacement (dx, dy) after a distance s along a straight line at heading h0, m."""
    s = np.asarray(s, dtype=float)
    return s * math.cos(h0), s * math.sin(h0)


def arc_xy(h0: float, k: float, s):
    """Displacement (dx, dy) after an arc length s on a circular arc of signed curvature
    k = +-1/R starting at heading h0, m:
    dx = (sin(h0 + k s) - sin h0) / k, dy = -(cos(h0 + k s) - cos h0) / k."""
    s = np.asarray(s, dtype=float)
    return ((np.sin(h0 + k * s) - math.sin(h0)) / k,
            -(np.cos(h0 + k * s) - math.cos(h0)) / k)


def clothoid_unit(c: float, u):
    """Point at arc length u on the clothoid k(u) = c u through the origin with heading 0
    there (the curve x(u) = integral_0^u cos(c t^2 / 2) dt, y(u) = integral_0^u
    sin(c t^2 / 2) dt), m. With the Fresnel integrals C(z) = integral_0^z cos(pi t^2 / 2)
    dt and S(z) likewise (Abramowitz and Stegun 7.3.1, 7.3.2; ``scipy.special.fresnel``
    returns (S, C)) and the substitution t = w sqrt(pi / |c|):

        x(u) = a C(u / a),   y(u) = sign(c) a S(u / a),   a = sqrt(pi / |c|).
    """
    from scipy.special import fresnel  # only clothoids need scipy (its import is slow)

    a = math.sqrt(math.pi / abs(c))
    S, C = fresnel(np.asarray(u, dtype=float) / a)
    return a * C, math.copysign(1.0, c) * a * S


def clothoid_xy(h0: float, k0: float, k1: float, length: float, s):
    """Displacement (dx, dy) after a distance s along a clothoid whose curvature varies
    linearly from k0 to k1 over ``length`` and whose heading at its start is h0, m.

    The element is the piece u = u0 .. u0 + L of the unit clothoid k(u) = c u with
    c = (k1 - k0) / L and u0 = k0 / c (:func:`clothoid_unit`), turned so that its
    heading at u0 (c u0^2 / 2 there) becomes h0.
    """
    c = (k1 - k0) / length
    u0 = k0 / c
    x0, y0 = clothoid_unit(c, u0)
    x, y = clothoid_unit(c, u0 + np.asarray(s, dtype=float))
    turn = h0 - c * u0 * u0 / 2.0
    dx, dy = x - x0, y - y0
    return (dx * math.cos(turn) - dy * math.sin(turn),
            dx * math.sin(turn) + dy * math.cos(turn))


@dataclass(frozen=True)
class Element:
    """One horizontal element: a line (k0 = k1 = 0), an arc (k0 = k1 != 0) or a clothoid
    (k0 != k1). x0, y0: start (m, east and north); h0: start heading (rad,
    anticlockwise from east); length (m); k0, k1: signed curvature at the start and the
    end (1/m, + left). ``name`` says what it is in the source (for messages)."""

    x0: float
    y0: float
    h0: float
    length: float
    k0: float = 0.0
    k1: float = 0.0
    name: str = ""

    @property
    def kind(self) -> str:
        if abs(self.k1 - self.k0) > _K_TOL:
            return "clothoid"
        return "arc" if abs(self.k0) > _K_TOL else "line"

    def curvature(self, s):
        """Signed curvature k(s) = k0 + (k1 - k0) s / L, 1/m."""
        s = np.asarray(s, dtype=float)
        return self.k0 + (self.k1 - self.k0) * s / self.length

    def heading(self, s):
        return heading(self.h0, self.k0, self.k1, self.length, s)

    def xy(self, s):
        """Position (x, y) at a distance s from the element's start, m."""
        kind = self.kind
        if kind == "line":
            dx, dy = line_xy(self.h0, s)
        elif kind == "arc":
            dx, dy = arc_xy(self.h0, self.k0, s)
        else:
            dx, dy = clothoid_xy(self.h0, self.k0, self.k1, self.length, s)
        return self.x0 + dx, self.y0 + dy

    def end(self) -> tuple[float, float, float]:
        """(x, y, heading) at the element's end."""
        x, y = self.xy(self.length)
        return float(x), float(y), float(self.heading(self.length))


def offset_length(k0: float, k1: float, length: float, offset: float, s0, s1):
    """Length of the line at ``offset`` (m, + right) beside an element of curvature
    k(s) = k0 + (k1 - k0) s / L between distances s0 and s1 along it, m:

        integral_{s0}^{s1} (1 + o k(s)) ds
          = (s1 - s0) + o [k0 (s1 - s0) + (k1 - k0) (s1^2 - s0^2) / (2 L)]

    (the offset line's element of length is (1 + o k) ds: its radius is R + o where
    the centre lies on the left). Valid while 1 + o k > 0 along the piece."""
    s0 = np.asarray(s0, dtype=float)
    s1 = np.asarray(s1, dtype=float)
    return (s1 - s0) + offset * (k0 * (s1 - s0) + (k1 - k0) * (s1 * s1 - s0 * s0)
                                 / (2.0 * length))


# --- the alignment -------------------------------------------------------------------

@dataclass(frozen=True, eq=False)
class HorizontalAlignment:
    """Elements in order from station ``sta_start`` (m); ``name`` for messages."""

    elements: tuple[Element, ...]
    sta_start: float = 0.0
    name: str = ""

    @property
    def starts(self) -> np.ndarray:
        """Station of the start of each element, and the end of the last, m."""
        return self.sta_start + np.concatenate(
            [[0.0], np.cumsum([e.length for e in self.elements])])

    @property
    def sta_end(self) -> float:
        return float(self.starts[-1])

    def _locate(self, sta) -> tuple[np.ndarray, np.ndarray]:
        """Element index and distance into it of each station (clipped to the ends)."""
        st = self.starts
        sta = np.clip(np.asarray(sta, dtype=float), st[0], st[-1])
        i = np.clip(np.searchsorted(st, sta, side="right") - 1, 0, len(self.elements) - 1)
        return i, sta - st[i]

    def frame(self, sta) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
        """(x, y, heading, curvature) of the alignment at stations ``sta``."""
        sta = np.atleast_1d(np.asarray(sta, dtype=float))
        idx, s = self._locate(sta)
        x = np.empty_like(sta)
        y = np.empty_like(sta)
        h = np.empty_like(sta)
        k = np.empty_like(sta)
        for i in np.unique(idx):
            m = idx == i
            e = self.elements[int(i)]
            x[m], y[m] = e.xy(s[m])
            h[m] = e.heading(s[m])
            k[m] = e.curvature(s[m])
        return x, y, h, k

    def offset_xy(self, sta, offset: float) -> tuple[np.ndarray, np.ndarray]:
        """Points of the line at ``offset`` (m, + right of increasing station):
        p + o (sin h, -cos h)."""
        x, y, h, _ = self.frame(sta)
        return x + offset * np.sin(h), y - offset * np.cos(h)

    def offset_length(self, sta0: float, sta1: float, offset: float) -> float:
        """Length of the line at ``offset`` between two stations (sta0 <= sta1), m, exact
        (:func:`offset_length` summed over the elements it spans)."""
        st = self.starts
        total = 0.0
        for e, a, b in zip(self.elements, st[:-1], st[1:]):
            lo, hi = max(a, sta0), min(b, sta1)
            if hi > lo:
                total += float(offset_length(e.k0, e.k1, e.length, offset, lo - a, hi - a))
        return total

    def tightest(self, offset: float) -> tuple[float, float] | None:
        """Smallest 1 + o k over the alignment and its station, or None on a straight
        alignment: at or below 0 the offset line folds back on itself (the offset
        reaches the centre of a curve)."""
        worst = None
        for e, a in zip(self.elements, self.starts[:-1]):
            if e.kind == "line":
                continue
            for s in (0.0, e.length):
                f = 1.0 + offset * float(e.curvature(s))
                if worst is None or f < worst[0]:
                    worst = (f, float(a + s))
        return worst

    def sample_stations(self, offset: float, chord_tolerance: float, lo: float | None = None,
                        hi: float | None = None) -> np.ndarray:
        """Stations at which the offset line is sampled so that the straight chords
        between neighbouring samples depart from it by at most ``chord_tolerance`` (m):
        every element start and end, and on arcs and clothoids a spacing
        ds = sqrt(8 e / (|k| |1 + o k|)) from the chord's sagitta e = c^2 / (8 R_o)
        on the offset line (radius R_o = |1 + o k| / |k|, chord c = ds |1 + o k|), with
        the largest |k (1 + o k)| over the element. Restricted to [lo, hi]."""
        st = self.starts
        lo = st[0] if lo is None else max(lo, st[0])
        hi = st[-1] if hi is None else min(hi, st[-1])
        out = [np.array([lo, hi]), st[(st >= lo) & (st <= hi)]]
        for e, a, b in zip(self.elements, st[:-1], st[1:]):
            if e.kind == "line" or b <= lo or a >= hi:
                continue
            ks = e.curvature(np.linspace(0.0, e.length, 9))
            worst = float(np.max(np.abs(ks * (1.0 + offset * ks))))
            if worst <= 0:
                continue
            ds = math.sqrt(8.0 * chord_tolerance / worst)
            a1, b1 = max(a, lo), min(b, hi)
            n = max(1, int(math.ceil((b1 - a1) / ds)))
            out.append(np.linspace(a1, b1, n + 1))
        return np.unique(np.concatenate(out))


# --- vertical profiles ---------------------------------------------------------------

@dataclass(frozen=True)
class VerticalCurve:
    """A vertical curve on an interior intersection point: ``kind`` "parabola"
    (symmetric, ``length`` m centred on the PVI) or "circle" (``radius`` m, tangent to
    both grades). sta, level: the PVI (m)."""

    sta: float
    level: float
    kind: str
    length: float = 0.0
    radius: float = 0.0


def circle_tangent_points(g1: float, g2: float, radius: float, sta: float, level: float):
    """Stations (start, end) and centre (station, level) of a circular vertical curve of
    radius R tangent to the grades g1 (in) and g2 (out) (m/m) that meet at the PVI
    (sta, level), m. The grade lines make angles a_i = atan(g_i) with the horizontal;
    the tangent length is T = R tan(|a2 - a1| / 2) measured along each grade, so the
    tangent points are T cos a_i before and after the PVI; the centre lies R from the
    incoming tangent point on its normal, on the side the curve turns to (above for a
    sag, g2 > g1; below for a crest)."""
    a1, a2 = math.atan(g1), math.atan(g2)
    T = radius * math.tan(abs(a2 - a1) / 2.0)
    s0 = sta - T * math.cos(a1)
    s1 = sta + T * math.cos(a2)
    z0 = level - T * math.sin(a1)
    up = 1.0 if g2 > g1 else -1.0
    cs = s0 - up * radius * math.sin(a1)
    cz = z0 + up * radius * math.cos(a1)
    return s0, s1, cs, cz


@dataclass(frozen=True, eq=False)
class VerticalProfile:
    """A profile along the stations: PVIs (sta, level) joined by straight grades, each
    interior PVI optionally carrying a :class:`VerticalCurve`."""

    sta: np.ndarray
    level: np.ndarray
    curves: tuple[VerticalCurve | None, ...]

    def grades(self) -> np.ndarray:
        return np.diff(self.level) / np.diff(self.sta)

    def circle(self, i: int):
        """(start, end, centre station, centre level, radius, up) of the circular
        curve on PVI i."""
        g = self.grades()
        c = self.curves[i]
        s0, s1, cs, cz = circle_tangent_points(g[i - 1], g[i], c.radius, c.sta, c.level)
        return s0, s1, cs, cz, c.radius, (1.0 if g[i] > g[i - 1] else -1.0)

    def level_at(self, sta) -> np.ndarray:
        """Level at stations ``sta``: the grades, the parabola y = y0 + g1 x +
        (g2 - g1) x^2 / (2 L) on a parabolic curve (x from its start), and on a circular
        curve the circle z = cz - up sqrt(R^2 - (s - cs)^2) (m)."""
        sta = np.asarray(sta, dtype=float)
        z = np.interp(sta, self.sta, self.level)
        g = self.grades()
        for i, c in enumerate(self.curves):
            if c is None:
                continue
            if c.kind == "parabola":
                L = c.length
                b = c.sta - L / 2.0
                m = (sta >= b) & (sta <= b + L)
                x = sta - b
                y0 = c.level - g[i - 1] * L / 2.0
                z = np.where(m, y0 + g[i - 1] * x + (g[i] - g[i - 1]) * x * x / (2 * L), z)
            else:
                s0, s1, cs, cz, R, up = self.circle(i)
                m = (sta >= s0) & (sta <= s1)
                d = np.clip(R * R - (sta - cs) ** 2, 0.0, None)
                z = np.where(m, cz - up * np.sqrt(d), z)
        return z

    def curve_ends(self, i: int) -> tuple[float, float]:
        c = self.curves[i]
        if c.kind == "parabola":
            return c.sta - c.length / 2.0, c.sta + c.length / 2.0
        s0, s1, *_ = self.circle(i)
        return s0, s1

    def sample_stations(self, tolerance: float) -> np.ndarray:
        """The PVIs, every curve's ends, and on circular curves a spacing whose chords
        depart from the circle by at most ``tolerance`` vertically, m: chord
        c = sqrt(8 R e) (sagitta e = c^2 / (8 R)), as stations c cos(max grade angle)."""
        out = [self.sta]
        for i, c in enumerate(self.curves):
            if c is None:
                continue
            s0, s1 = self.curve_ends(i)
            out.append(np.array([s0, s1]))
            if c.kind == "circle":
                ds = math.sqrt(8.0 * c.radius * tolerance)
                n = max(1, int(math.ceil((s1 - s0) / ds)))
                out.append(np.linspace(s0, s1, n + 1))
        return np.unique(np.concatenate(out))

"""Cantilever section geometry: dimensions, polygons, areas and centroids.

Coordinates (design-basis section 2): x from the toe edge (x = 0) towards the
retained side, z level measured from the underside of the base (z = 0) unless a
function says otherwise. Units m, m2.
"""

from __future__ import annotations

from dataclasses import dataclass, fields

import numpy as np


@dataclass(frozen=True)
class Section:
    """One section's dimensions, m. Names are the ``sections.csv`` columns."""

    stem_top_m: float
    stem_base_m: float
    base_width_m: float
    toe_m: float
    base_thickness_m: float
    key_depth_m: float = 0.0
    key_width_m: float = 0.0

    @property
    def heel_m(self) -> float:
        """b_heel = B - b_toe - t_stem_base, m."""
        return self.base_width_m - self.toe_m - self.stem_base_m


@dataclass(frozen=True)
class SectionArrays:
    """Many candidate sections at once: each field an array of shape (n,), m."""

    stem_top_m: np.ndarray
    stem_base_m: np.ndarray
    base_width_m: np.ndarray
    toe_m: np.ndarray
    base_thickness_m: np.ndarray
    key_depth_m: np.ndarray
    key_width_m: np.ndarray

    @property
    def heel_m(self) -> np.ndarray:
        return self.base_width_m - self.toe_m - self.stem_base_m

    def __len__(self) -> int:
        return int(np.asarray(self.base_width_m).shape[0])

    @classmethod
    def of(cls, sections: list[Section] | tuple[Section, ...]) -> "SectionArrays":
        return cls(**{f.name: np.array([getattr(s, f.name) for s in sections], dtype=float)
                      for f in fields(cls)})

    def take(self, i: int) -> Section:
        return Section(**{f.name: float(getattr(self, f.name)[i]) for f in fields(self)})

    def subset(self, idx) -> "SectionArrays":
        return SectionArrays(**{f.name: np.asarray(getattr(self, f.name))[idx] for f in fields(self)})


# --- geometry functions (design-basis section 2) ----------------------------------------
#
# Vertex arrays: ``xs``, ``zs`` of shape (n, k) (n candidates, k vertices, listed
# anticlockwise) or (k,) for one polygon. Builders take dimension arrays of shape (n,)
# (or floats) and return (xs, zs) of shape (n, k). Coordinates: x from the toe edge,
# z from the underside of the base, m.


def area_centroid(xs, zs):
    """Area and centroid of polygons by the shoelace formula, vectorised.

    xs, zs: vertex coordinates, shape (n, k) or (k,), m; the polygon closes from the
    last vertex back to the first; either orientation.
    Returns (A, cx, cz): area m2 (>= 0) and centroid m, shape (n,) (or scalars for 1-D
    input). A degenerate polygon (A = 0, e.g. an absent key) gets the mean of its
    vertices as centroid, so that weight x lever arm stays 0 and finite.
    """
    x = np.asarray(xs, dtype=float)
    z = np.asarray(zs, dtype=float)
    x1 = np.roll(x, -1, axis=-1)
    z1 = np.roll(z, -1, axis=-1)
    cross = x * z1 - x1 * z
    a2 = cross.sum(axis=-1)  # twice the signed area
    sx = ((x + x1) * cross).sum(axis=-1)
    sz = ((z + z1) * cross).sum(axis=-1)
    ok = np.abs(a2) > 1e-15
    safe = np.where(ok, a2, 1.0)
    cx = np.where(ok, sx / (3.0 * safe), x.mean(axis=-1))
    cz = np.where(ok, sz / (3.0 * safe), z.mean(axis=-1))
    A = 0.5 * np.abs(a2)
    if x.ndim == 1:
        return float(A), float(cx), float(cz)
    return A, cx, cz


def area_centroid_cols(xs, zs):
    """:func:`area_centroid` of polygons given as lists of vertex columns, m.

    xs, zs: sequences of k arrays of shape (n,) (or floats), the k vertices of every
    polygon in the same order as the (n, k) arrays of :func:`area_centroid`. The same
    shoelace sums, term by term, without building the (n, k) arrays (the stability engine
    calls it for its four fixed outlines on every evaluation). Returns (A, cx, cz) of
    shape (n,) (broadcast of the inputs).
    """
    k = len(xs)
    a2 = sx = sz = 0.0
    for i in range(k):
        j = (i + 1) % k
        cross = xs[i] * zs[j] - xs[j] * zs[i]
        a2 = a2 + cross
        sx = sx + (xs[i] + xs[j]) * cross
        sz = sz + (zs[i] + zs[j]) * cross
    a2 = np.asarray(a2, dtype=float)
    ok = np.abs(a2) > 1e-15
    safe = np.where(ok, a2, 1.0)
    cx = np.where(ok, sx / (3.0 * safe), sum(xs) / k)
    cz = np.where(ok, sz / (3.0 * safe), sum(zs) / k)
    return 0.5 * np.abs(a2), cx, cz


def _cols(*cols):
    """Stack broadcast columns into an (n, k) array."""
    arrs = np.broadcast_arrays(*[np.asarray(c, dtype=float) for c in cols])
    return np.stack(arrs, axis=-1)


def stem_vertices(toe, t_base, t_stem_base, t_stem_top, h_checked, h_drawn=None):
    """Stem outline (5 vertices): front face vertical at x = toe; back face tapering
    from t_stem_base at the top of the base (z = t_base) to t_stem_top at
    z = t_base + h_checked (z_top), vertical above it up to z = t_base + h_drawn.

    Without ``h_drawn`` the stem stops at z_top (the checked section). m.
    """
    if h_drawn is None:
        h_drawn = h_checked
    zb = np.asarray(t_base, dtype=float)
    xs = _cols(toe, np.asarray(toe) + t_stem_base, np.asarray(toe) + t_stem_top,
               np.asarray(toe) + t_stem_top, toe)
    zs = _cols(zb, zb, zb + h_checked, zb + np.asarray(h_drawn, dtype=float), zb + h_drawn)
    return xs, zs


def base_vertices(B, t_base):
    """Base rectangle 0 <= x <= B, 0 <= z <= t_base (4 vertices), m."""
    z0 = np.zeros_like(np.asarray(B, dtype=float))
    return _cols(z0, B, B, z0), _cols(z0, z0, t_base, t_base)


def key_vertices(toe, d_key, w_key):
    """Shear key below the base (4 vertices): front face at x = toe, from z = -d_key to
    z = 0, width w_key. A zero key gives a degenerate (zero-area) polygon. m."""
    toe = np.asarray(toe, dtype=float)
    d = np.asarray(d_key, dtype=float)
    z0 = np.zeros_like(d)
    return _cols(toe, toe + w_key, toe + w_key, toe), _cols(-d, -d, z0, z0)


def soil_vertices(toe, t_base, t_stem_base, t_stem_top, B, h_checked, slope_deg=0.0):
    """Soil block over the heel (4 vertices): bounded by the stem back face, the top of
    the base, the virtual back x = B and the backfill surface, which leaves the back
    face at z_top (z = t_base + h_checked) and rises at ``slope_deg`` (beta). m."""
    toe = np.asarray(toe, dtype=float)
    zb = np.asarray(t_base, dtype=float)
    ztop = zb + h_checked
    xb = toe + t_stem_top
    zs_B = ztop + (np.asarray(B, dtype=float) - xb) * np.tan(np.radians(slope_deg))
    return _cols(toe + t_stem_base, B, B, xb), _cols(zb, zb, zs_B, ztop)


def polygons(section: Section, stem_height_m: float, checked_stem_height_m: float | None = None,
             slope_deg: float = 0.0) -> dict:
    """shapely polygons of one section (design-basis section 2), section coordinates.

    stem_height_m: from the top of the base to the top of the drawn stem, m.
    checked_stem_height_m: from the top of the base to z_top, m (the back face tapers up
    to it, vertical above); None: the taper runs the full drawn height and no soil
    block is returned.
    Keys: "stem", "base", "key" (only with a key), "soil" (only with
    checked_stem_height_m, under the backfill slope ``slope_deg``).
    """
    from shapely.geometry import Polygon

    s = section
    hc = stem_height_m if checked_stem_height_m is None else checked_stem_height_m

    def poly(xs, zs):
        pts = []
        for x, z in zip(np.ravel(xs), np.ravel(zs)):
            p = (float(x), float(z))
            if not pts or abs(p[0] - pts[-1][0]) > 1e-12 or abs(p[1] - pts[-1][1]) > 1e-12:
                pts.append(p)
        if len(pts) > 1 and pts[0] == pts[-1]:
            pts.pop()
        return Polygon(pts)

    out = {"stem": poly(*stem_vertices(s.toe_m, s.base_thickness_m, s.stem_base_m,
                                        s.stem_top_m, hc, max(stem_height_m, hc))),
           "base": poly(*base_vertices(s.base_width_m, s.base_thickness_m))}
    if s.key_depth_m > 0 and s.key_width_m > 0:
        out["key"] = poly(*key_vertices(s.toe_m, s.key_depth_m, s.key_width_m))
    if checked_stem_height_m is not None:
        out["soil"] = poly(*soil_vertices(s.toe_m, s.base_thickness_m, s.stem_base_m,
                                          s.stem_top_m, s.base_width_m, hc, slope_deg))
    return out


def section_problems(sec: SectionArrays) -> np.ndarray:
    """Boolean mask (n,) of candidates whose dimensions do not close; vectorised for
    the sizing search. Rules: every dimension finite; stem_top_m, stem_base_m,
    base_width_m, base_thickness_m > 0; toe_m, key_depth_m, key_width_m >= 0;
    stem_top_m <= stem_base_m (the back face tapers outwards downwards); heel_m =
    base_width_m - toe_m - stem_base_m > 0; a key has both depth and width; the key
    (front face at the stem front face) fits under the base. (A ``sections.csv`` row
    is held to the same rules, with its line named, by ``wallrun.site.read_catalogue``.)"""
    B = np.asarray(sec.base_width_m, dtype=float)
    bad = ~np.isfinite(B)
    for f in fields(sec):
        bad |= ~np.isfinite(np.asarray(getattr(sec, f.name), dtype=float))
    bad |= (sec.stem_top_m <= 0) | (sec.stem_base_m <= 0) | (B <= 0) | (sec.base_thickness_m <= 0)
    bad |= (sec.toe_m < 0) | (sec.key_depth_m < 0) | (sec.key_width_m < 0)
    bad |= sec.stem_top_m > sec.stem_base_m + 1e-12
    bad |= sec.heel_m <= 1e-12
    bad |= (sec.key_depth_m > 0) != (sec.key_width_m > 0)
    bad |= sec.toe_m + sec.key_width_m > B + 1e-12
    return bad

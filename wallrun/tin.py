"""A triangulated surface (TIN) and its exact sampling along a line in plan.

A TIN is points (x east, y north, z level, m) and triangles of point indices; the
surface is planar on each triangle, so along a straight segment in plan its level is
linear between the points where the segment crosses triangle edges. Sampling a
polyline therefore gives exact levels when it has a breakpoint at every edge crossing
(:meth:`Tin.crossings`) and levels at the other points by the plane of the triangle
that holds them (:meth:`Tin.level_at`, barycentric interpolation).

Searches use shapely's STRtree (shapely 2, vectorised); the arithmetic of crossings and
planes is numpy.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import shapely

#: A point within this distance of a triangle is on it (rounding at shared edges and at
#: the boundary of the surface), m.
ON_SURFACE_M = 1e-6


@dataclass(frozen=True, eq=False)
class Tin:
    """Points ``x``, ``y``, ``z`` (n,) and ``triangles`` (m, 3) of indices into them."""

    x: np.ndarray
    y: np.ndarray
    z: np.ndarray
    triangles: np.ndarray
    _trees: dict = field(default_factory=dict, repr=False)  # built on first use

    def edges(self) -> np.ndarray:
        """The unique edges (e, 2) of the triangles, each as (smaller, larger) index."""
        t = self.triangles
        e = np.concatenate([t[:, [0, 1]], t[:, [1, 2]], t[:, [2, 0]]])
        e.sort(axis=1)
        return np.unique(e, axis=0)

    def _edge_tree(self):
        if "edges" not in self._trees:
            e = self.edges()
            coords = np.stack([np.column_stack([self.x[e[:, 0]], self.y[e[:, 0]]]),
                               np.column_stack([self.x[e[:, 1]], self.y[e[:, 1]]])], axis=1)
            self._trees["edges"] = (e, shapely.STRtree(shapely.linestrings(coords)))
        return self._trees["edges"]

    def _triangle_tree(self):
        if "triangles" not in self._trees:
            t = self.triangles
            ring = np.stack([np.column_stack([self.x[t[:, k]], self.y[t[:, k]]])
                             for k in (0, 1, 2, 0)], axis=1)
            self._trees["triangles"] = shapely.STRtree(shapely.polygons(ring))
        return self._trees["triangles"]

    def crossings(self, px, py) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Where the polyline through (px, py) crosses triangle edges: (segment index i,
        fraction t along segment i from point i to i + 1, level z there), sorted along
        the polyline. An edge's level is linear between its two points, so z there is
        exact. Segments lying along an edge add nothing here: the edges meeting its
        ends cross the segment there."""
        px = np.asarray(px, dtype=float)
        py = np.asarray(py, dtype=float)
        e, tree = self._edge_tree()
        segs = shapely.linestrings(np.stack([np.column_stack([px[:-1], py[:-1]]),
                                             np.column_stack([px[1:], py[1:]])], axis=1))
        si, ei = tree.query(segs, predicate="intersects")
        if si.size == 0:
            return np.empty(0, int), np.empty(0), np.empty(0)
        ax, ay = px[si], py[si]
        dx, dy = px[si + 1] - ax, py[si + 1] - ay
        a, b = e[ei, 0], e[ei, 1]
        bx, by = self.x[a], self.y[a]
        fx, fy = self.x[b] - bx, self.y[b] - by
        den = dx * fy - dy * fx  # cross(d, f)
        ok = np.abs(den) > 1e-12 * np.hypot(dx, dy) * np.hypot(fx, fy)
        den = np.where(ok, den, 1.0)
        wx, wy = bx - ax, by - ay
        t = (wx * fy - wy * fx) / den  # along the segment
        u = (wx * dy - wy * dx) / den  # along the edge
        ok &= (t >= -1e-12) & (t <= 1 + 1e-12) & (u >= -1e-12) & (u <= 1 + 1e-12)
        t, u = np.clip(t[ok], 0.0, 1.0), np.clip(u[ok], 0.0, 1.0)
        si = si[ok]
        z = self.z[a[ok]] + u * (self.z[b[ok]] - self.z[a[ok]])
        order = np.lexsort((t, si))
        return si[order], t[order], z[order]

    def level_at(self, qx, qy) -> np.ndarray:
        """Level at plan points (qx, qy) by the plane of a triangle holding each (within
        ``ON_SURFACE_M``); NaN off the surface. Barycentric: z = sum l_k z_k with
        l_k the areal coordinates of the point in the triangle."""
        qx = np.atleast_1d(np.asarray(qx, dtype=float))
        qy = np.atleast_1d(np.asarray(qy, dtype=float))
        out = np.full(qx.shape, np.nan)
        if qx.size == 0:
            return out
        tree = self._triangle_tree()
        qi, ti = tree.query(shapely.points(qx, qy), predicate="dwithin", distance=ON_SURFACE_M)
        if qi.size == 0:
            return out
        first = np.unique(qi, return_index=True)[1]  # one triangle per point
        qi, ti = qi[first], ti[first]
        tri = self.triangles[ti]
        x1, x2, x3 = (self.x[tri[:, k]] for k in range(3))
        y1, y2, y3 = (self.y[tri[:, k]] for k in range(3))
        det = (y2 - y3) * (x1 - x3) + (x3 - x2) * (y1 - y3)
        px, py = qx[qi], qy[qi]
        l1 = ((y2 - y3) * (px - x3) + (x3 - x2) * (py - y3)) / det
        l2 = ((y3 - y1) * (px - x3) + (x1 - x3) * (py - y3)) / det
        l3 = 1.0 - l1 - l2
        out[qi] = l1 * self.z[tri[:, 0]] + l2 * self.z[tri[:, 1]] + l3 * self.z[tri[:, 2]]
        return out


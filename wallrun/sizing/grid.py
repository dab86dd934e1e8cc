"""The grid of candidate sections of one demand, in construction increments.

A candidate is an integer vector (:data:`NDIM` entries): base width B, toe, base
thickness, stem base thickness and stem top thickness in multiples of the dimension
step, then the key depth index (0: no key, k: the k-th depth of ``key_depths``) and
the key width index. :class:`Grid` holds the bounds of each entry and the rules a
section must keep (design-basis sections 2 and 6); :func:`grid_for` gives the bounds of
a demand and the reason each is safe. Units: m.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np

from wallrun.section import Section, SectionArrays
from wallrun.settings import Design

from .conditions import Demand

NDIM = 7
B, TOE, TB, TS, TT, KD, KW = range(NDIM)

#: Bits of each entry in a candidate's code (:func:`codes`): 63 in all.
_BITS = (12, 12, 10, 10, 9, 5, 5)
_MAX = np.array([(1 << b) - 1 for b in _BITS], dtype=np.int64)
#: The place value of each entry in a code (:func:`codes`).
_PLACE = np.array([1 << sum(_BITS[k + 1:]) for k in range(len(_BITS))], dtype=np.int64)


@dataclass(frozen=True)
class Grid:
    """Bounds of the candidates of one demand, integers in steps of ``step`` (m).

    b: base width; tb: base thickness; ts: stem base thickness; tt: stem top thickness
    (never thicker than the stem base); toe from 0 to ``toe_half`` ? B/2 : B - ts - 1
    (a heel of at least one step); key: none, or a depth of ``key_depths`` with a width
    of ``key_widths`` (m). The base is never thinner than the stem base it anchors.
    """

    step: float
    b: tuple[int, int]
    tb: tuple[int, int]
    ts: tuple[int, int]
    tt: tuple[int, int]
    toe_half: bool
    key_depths: tuple[float, ...]
    key_widths: tuple[float, ...]

    # --- the candidates -------------------------------------------------------------------
    @property
    def lattice(self) -> tuple:
        """What maps an integer vector to a section: the step and the key options (grids
        of one lattice differ in their bounds only)."""
        return (self.step, self.key_depths, self.key_widths)

    def bounds(self) -> tuple[tuple[int, int, int, int], tuple[int, int, int, int]]:
        """(lower, upper) bounds of base width, base thickness, stem base and stem top."""
        return ((self.b[0], self.tb[0], self.ts[0], self.tt[0]),
                (self.b[1], self.tb[1], self.ts[1], self.tt[1]))

    def valid(self, v: np.ndarray) -> np.ndarray:
        """Mask of integer candidates (m, NDIM) inside the bounds whose sections close."""
        lo, hi = self.bounds()
        return valid_rows(v, np.array(lo), np.array(hi), self.toe_half, self.step,
                          self.key_depths, self.key_widths)

    def keys_listed(self, v: np.ndarray) -> np.ndarray:
        """Mask of integer candidates (m, NDIM) whose key entries are a listed option
        (:func:`key_listed`), whatever their other entries."""
        v = np.asarray(v).reshape(-1, NDIM)
        return key_listed(v[:, KD], v[:, KW], self.key_depths, self.key_widths)

    def sections(self, v: np.ndarray) -> SectionArrays:
        """The sections of integer candidates (m, NDIM), m."""
        s = self.step
        v = np.asarray(v, dtype=np.int64).reshape(-1, NDIM)
        depths = np.concatenate([[0.0], np.asarray(self.key_depths, dtype=float)])
        widths = np.asarray(self.key_widths, dtype=float) if self.key_widths else np.zeros(1)
        kd = np.clip(v[:, KD], 0, len(depths) - 1)
        w = np.where(kd > 0, widths[np.clip(v[:, KW], 0, len(widths) - 1)], 0.0)
        m = lambda k: np.round(v[:, k] * s, 6)  # noqa: E731
        return SectionArrays(stem_top_m=m(TT), stem_base_m=m(TS), base_width_m=m(B),
                             toe_m=m(TOE), base_thickness_m=m(TB), key_depth_m=depths[kd],
                             key_width_m=w)

    def vector_of(self, s: Section) -> np.ndarray | None:
        """The integer vector of a section on this grid's step (None: a key or a
        dimension off the grid)."""
        st = self.step
        dims = (s.base_width_m, s.toe_m, s.base_thickness_m, s.stem_base_m, s.stem_top_m)
        ints = [round(x / st) for x in dims]
        if any(abs(i * st - x) > 1e-6 for i, x in zip(ints, dims)):
            return None
        kd = kw = 0
        if s.key_depth_m > 0:
            dd = np.abs(np.asarray(self.key_depths) - s.key_depth_m)
            ww = np.abs(np.asarray(self.key_widths) - s.key_width_m)
            if not len(dd) or dd.min() > 1e-6 or ww.min() > 1e-6:
                return None
            kd, kw = int(dd.argmin()) + 1, int(ww.argmin())
        return np.array(ints + [kd, kw], dtype=np.int64)

    def axes(self) -> list[np.ndarray]:
        """The values of each entry (the toe axis up to its largest over B)."""
        toe_hi = self.b[1] // 2 if self.toe_half else self.b[1] - self.ts[0] - 1
        return [np.arange(self.b[0], self.b[1] + 1), np.arange(0, max(toe_hi, 0) + 1),
                np.arange(self.tb[0], self.tb[1] + 1), np.arange(self.ts[0], self.ts[1] + 1),
                np.arange(self.tt[0], self.tt[1] + 1),
                np.arange(0, len(self.key_depths) + 1),
                np.arange(0, max(len(self.key_widths), 1))]

    def every(self, stride: int | tuple[int, ...] = 1) -> np.ndarray:
        """Every valid candidate, taking each ``stride``-th value of the five dimension
        entries (one stride, or one per entry; the last value of each always included),
        (m, NDIM), once each in increasing :func:`codes` (the entries in increasing
        order, the first outermost, as the codes pack them)."""
        strides = (stride,) * KD if isinstance(stride, int) else tuple(stride)
        axes = []
        for k, a in enumerate(self.axes()):
            if k >= KD or strides[k] <= 1:
                axes.append(a)
            else:
                sel = a[::strides[k]]
                if sel[-1] != a[-1]:
                    sel = np.append(sel, a[-1])
                axes.append(sel)
        # the (base width, toe) pairs, (base, stem base, stem top) thicknesses and keys
        # that close on their own, each in increasing order, and their product in the
        # order of the codes (pairs outermost): the rows the rules within each group
        # would drop are never made; the rules across them are the grid's own
        b, toe, tb, ts, tt, kd, kw = axes
        pairs = _product(b, toe)
        pairs = pairs[_toe_within_half(*pairs.T, self.toe_half)]
        thick = _product(tb, ts, tt)
        thick = thick[_thicknesses_close(*thick.T)]
        keys = _product(kd, kw)
        keys = keys[key_listed(*keys.T, self.key_depths, self.key_widths)]
        mesh = np.empty((len(pairs) * len(thick) * len(keys), NDIM), dtype=np.int64)
        mesh[:, :TB] = np.repeat(pairs, len(thick) * len(keys), axis=0)
        mesh[:, TB:KD] = np.tile(np.repeat(thick, len(keys), axis=0), (len(pairs), 1))
        mesh[:, KD:] = np.tile(keys, (len(pairs) * len(thick), 1))
        return mesh[self.valid(mesh)]

    def at_width(self, b: int) -> "Grid":
        """The part of this grid with base width ``b`` (steps)."""
        return replace(self, b=(b, b))

    def by_width(self):
        """Every valid candidate (:meth:`every`), one base width at a time: an (m_i,
        NDIM) array for each base width of the grid, in increasing width, their union
        :meth:`every` (so that a tall wall's grid of tens of millions of candidates is
        never held at once)."""
        for b in range(self.b[0], self.b[1] + 1):
            yield self.at_width(b).every()

    def coarse_strides(self, values: tuple[int, ...]) -> tuple[int, ...]:
        """Strides giving about ``values[k]`` values on each of the five dimension
        entries (a cold start's coarse grid)."""
        return tuple(max(1, int(math.ceil(len(a) / n)))
                     for a, n in zip(self.axes()[:KD], values))

    # --- bounds that bind ----------------------------------------------------------------
    def binding(self, v: np.ndarray) -> tuple[str, ...]:
        """The bounds a candidate sits on that a wider grid could move: names of
        ``b_lo``, ``b_hi``, ``tb_hi``, ``ts_hi``, ``tt_hi``, ``toe_hi``. Lower bounds
        that are settings (least base and stem thickness, no toe) and the key's
        constructional limits never bind."""
        out = []
        if v[B] <= self.b[0] and self.b[0] > self.ts[0] + 1:
            out.append("b_lo")
        if v[B] >= self.b[1]:
            out.append("b_hi")
        if v[TB] >= self.tb[1]:
            out.append("tb_hi")
        if v[TS] >= self.ts[1]:
            out.append("ts_hi")
        if v[TT] >= self.tt[1] and self.tt[1] < self.ts[1]:
            out.append("tt_hi")
        if self.toe_half and 2 * v[TOE] >= v[B] - 1:
            out.append("toe_hi")
        return tuple(out)

    def widened(self, names) -> "Grid":
        """This grid with the named bounds moved out (half as much again, at least two
        steps; the base-width lower bound down to the least that closes)."""
        g = self
        grow = lambda lo, hi: max(hi + 2, int(math.ceil(hi * 1.5)))  # noqa: E731
        order = ("b_lo", "b_hi", "tb_hi", "ts_hi", "tt_hi", "toe_hi")
        for n in sorted(names, key=order.index):
            if n == "b_lo":
                g = replace(g, b=(g.ts[0] + 1, g.b[1]))
            elif n == "b_hi":
                g = replace(g, b=(g.b[0], grow(*g.b)))
            elif n == "tb_hi":
                g = replace(g, tb=(g.tb[0], grow(*g.tb)))
            elif n == "ts_hi":
                g = replace(g, ts=(g.ts[0], grow(*g.ts)))
            elif n == "tt_hi":
                g = replace(g, tt=(g.tt[0], g.ts[1]))
            elif n == "toe_hi":
                g = replace(g, toe_half=False)
        return g


def _product(*axes) -> np.ndarray:
    """Every combination of the values of ``axes``, the first outermost: (m, len(axes))."""
    return np.stack(np.meshgrid(*axes, indexing="ij"), axis=-1).reshape(-1, len(axes))


def _toe_within_half(b, toe, toe_half):
    """A toe of at most half the base where ``toe_half`` (a bool, or one per row)."""
    return ~np.asarray(toe_half, dtype=bool) | (2 * toe <= b)


def _thicknesses_close(tb, ts, tt):
    """A stem top no thicker than the stem base, and a base no thinner."""
    return (tt <= ts) & (tb >= ts)


def key_listed(kd, kw, key_depths: tuple, key_widths: tuple):
    """Mask of key entries (depth index ``kd``, width index ``kw``) that are a listed
    option: no key (depth 0, width 0), or a depth of the list (1 to its length) with a
    width of the list (0 to its length less one). The grid's rule for keys, wherever
    candidates are made or filtered."""
    return (kd >= 0) & (kd <= len(key_depths)) & (kw >= 0) & np.where(
        kd > 0, kw < max(len(key_widths), 1), kw == 0)


_I32 = np.iinfo(np.int32)


def valid_rows(v: np.ndarray, lo, hi, toe_half, step: float, key_depths: tuple,
               key_widths: tuple) -> np.ndarray:
    """Mask of integer candidates (m, NDIM) of one lattice (``step``, key options)
    inside the bounds ``lo``..``hi`` of base width, base thickness, stem base and stem
    top ((4,), or (4, m): each row's own, one column per row) whose sections close: a
    toe from 0 (to B/2 where ``toe_half``, a bool or (m,)), a heel of at least one
    step, the stem top no thicker than the stem base and the base no thinner, a key of
    a listed depth and width that fits under the base behind the toe."""
    # contiguous int32 columns first (every test below reads whole columns; int32
    # halves the memory they read): entries beyond its range are held at its ends,
    # where the tests fail them as they fail the entries themselves (a cast of the
    # transpose, after a look for such entries, takes a third of the time of a clip)
    v = np.asarray(v, dtype=np.int64).reshape(-1, NDIM)
    if len(v) and (v.min() < _I32.min or v.max() > _I32.max):
        v = np.clip(v, _I32.min, _I32.max)
    b, toe, tb, ts, tt, kd, kw = v.T.astype(np.int32)
    lo, hi = (np.asarray(x, dtype=np.int32) for x in (lo, hi))
    ok = (b >= lo[0]) & (b <= hi[0]) & (tb >= lo[1]) & (tb <= hi[1])
    ok &= (ts >= lo[2]) & (ts <= hi[2]) & (tt >= lo[3]) & (tt <= hi[3])
    ok &= (toe >= 0) & _thicknesses_close(tb, ts, tt)
    ok &= _toe_within_half(b, toe, toe_half)
    ok &= b - toe - ts >= 1  # a heel of at least one step
    ok &= key_listed(kd, kw, key_depths, key_widths)
    keyed = np.flatnonzero(ok & (kd > 0))  # (few rows have a key)
    if key_widths and len(keyed):
        w = np.asarray(key_widths)[kw[keyed]]
        ok[keyed] = toe[keyed] * step + w <= b[keyed] * step + 1e-9
    return ok


def codes(v: np.ndarray) -> np.ndarray:
    """One int64 code per integer candidate (for set membership), entries packed in
    :data:`_BITS` bits each: the product of the entries with their place values
    (entries are never negative on a valid grid; an entry is held within 0 and its
    bits' largest)."""
    v = np.asarray(v, dtype=np.int64).reshape(-1, NDIM)
    return np.clip(v, 0, _MAX) @ _PLACE


def grid_for(demand: Demand, step: float, design: Design = Design()) -> Grid:
    """The grid of ``demand`` (design-basis section 6), H = h + the least founding depth.

    Lower bounds are settings or the section's own closure: stem thickness anywhere at
    least ``design.min_stem_m`` and base thickness at least ``design.min_base_m`` (two
    mats of bars, room to compact; common practice), toe from 0 (an L-shaped wall).
    Upper bounds are generous proportions, and the search moves any that its best
    section reaches (:meth:`Grid.widened`), or while no section passes any that its
    least utilised reaches (``search.widen_moves``), so none excludes a cheaper
    section, or the only passing ones, that a wider grid would give:

    - base width 0.3 H to 2.0 H (at least 1.0 m): common practice puts the optimum near
      0.5 to 0.7 H; the lower bound moves down to the least that closes when reached.
      The cheapest can lie far above it under high water over clay or a steep slope:
      at 1.5 H, on an invented DA2 wall with water 2 m above the base over cu 70 kPa,
      2.2 m panels ended at a 0.7 m base on the bound's width, 44 % above a 0.3 m base
      two steps wider (the search and the exhaustive reference alike: the cheapest of
      the grid sat on the base thickness bound, which moved, not on the width's).
      2.0 H took that wall's panels to the best known with fewer candidates.
    - toe 0 to B/2 (a toe beyond half the base puts the stem ahead of the base centre
      and the soil block's weight behind it, never an economy; moved when reached).
    - stem base to max(0.35, 0.15 H + 0.10) m, stem top to max(0.30, min stem + 0.05) m
      and never thicker than the stem base (the top carries no moment). A thicker top
      can still be cheaper, its weight holding the wall where a wider base would: on an
      invented DA3 wall under an 18 degree slope over cu 70 kPa the cheapest sections
      of 6.1 to 6.3 m panels have tops of 0.35 to 0.55 m, reached as the search moves
      the bound wherever its best sits on it (``search.settle_moves``).
    - base thickness to max(0.45, 0.15 H + 0.25) m, and never thinner than the stem base.
    - key: none, or depth 0.30 to 0.60 m and width 0.30 to 0.50 m in steps of two
      dimension steps: constructional limits, not search bounds (a key shallower than
      0.3 m mobilises little passive resistance, one deeper than 0.6 m is hard to dig
      and cast against the ground; common practice).
    """
    h = max(demand.h, 0.0)
    H = h + max(demand.min_founding_depth_m, 0.3)
    up = lambda x: int(math.ceil(x / step - 1e-9))  # noqa: E731
    ts_lo = up(design.min_stem_m)
    tb_lo = max(up(design.min_base_m), ts_lo)
    ts_hi = max(up(max(0.35, 0.15 * H + 0.10)), ts_lo)
    tt_hi = min(max(up(max(0.30, design.min_stem_m + 0.05)), ts_lo), ts_hi)
    tb_hi = max(up(max(0.45, 0.15 * H + 0.25)), tb_lo, ts_hi)
    b_lo = max(up(max(0.3 * H, 0.6)), ts_lo + 1)
    b_hi = max(up(max(2.0 * H, 1.0)), b_lo)
    kd = tuple(np.round(np.arange(up(0.30) * step, 0.60 + 1e-9, 2 * step), 6))
    kw = tuple(np.round(np.arange(up(0.30) * step, 0.50 + 1e-9, 2 * step), 6))
    return Grid(step=float(step), b=(b_lo, b_hi), tb=(tb_lo, tb_hi), ts=(ts_lo, ts_hi),
                tt=(ts_lo, tt_hi), toe_half=True, key_depths=kd, key_widths=kw)

"""Bar schedule of a panel and of the job: bar marks with BS 8666:2005 shape codes.

Detailing rules (wallrun's, common practice unless a clause or table is named; every
length in mm; shapes, radii, end projections and length formulae in
:mod:`wallrun.shapes`, from BS 8666:2005 Tables 2 and 3):

- Cutting lengths by the BS 8666 formula of the shape code from the outside dimensions,
  rounded up to the next 25 mm; stem bars cut to a sloped top are grouped into lengths
  rounded up to 50 mm.
- Bars are at most 12 m long (stock length); longer runs are made of equal pieces
  lapped by l0 of EN 1992-1-1 8.7.3 (alpha6 = 1.5).
- Starters (part ``starter`` for the back face with the stem main bar, ``starter_front``
  for the front face with the stem_front bar), an L (shape 11, or 12 where EN 1992-1-1
  Eq. 8.1 needs a radius above BS 8666's r): a vertical leg from the bottom mat (resting
  on the toe bars and the distribution bars) up through the kicker to the kicker plus
  the lap l0 of 8.7.3 above the top of the base, and a foot so that embedment + foot >=
  lbd (8.4.4, alpha factors 1.0), >= 12 d, and >= the end projection of the bend
  (BS 8666 Table 2 P, or R + 6 d). Their geometry comes from the design
  (``reinforcement.starter``); a reinforcement without starters gets them by the same
  rules with the standard radius.
- Stem bars (shape 00) from the top of the kicker to the top of the wall less the cover,
  along the tapered back face, lapping the starters; with ``stem_curtail_m`` every
  second back bar stops at that height (omitted when the starters already reach it).
- Stem horizontal bars, each face, rows from the cover above the top of the base at the
  stem_horizontal spacing, along the panel length less the end covers (for a sloped
  top each row only where the stem stands higher than the row plus the cover).
- Base transverse bars across the full base width less the side covers: the top mat
  (the heel bar, part ``heel``) bent down at the heel end, the bottom mat (the toe bar,
  part ``toe``) bent up at the toe end, each with a leg from the top cover to the
  bottom cover (shape 11 or 12); where the design bends the other end too
  (``far_bend_r_mm``) a U (shape 21, the larger radius at both bends).
- Base distribution bars, each mat, along the panel length less the end covers.
- Shear key (when the section has one): U-bars (shape 21) of the toe bar at the toe
  spacing, legs from the key bottom up to the top mat, and two longitudinal bars of the
  distribution bar in the bends.
- Number along the panel = floor((L - 2 cover) / spacing) + 1, end covers
  ``concrete.cover_mm`` at both joints.

The schedule (:func:`schedule`) gives one bar mark to each distinct bar (part, size,
shape, dimensions, radius) of a section type, and one row to each group of its panels
that hold the same number of that bar: ``no_of_members`` the panels of the row,
``no_in_each`` the bars in each, the member naming the type, the part and the panels.

The bars of a row of equal spacing (stem bars, horizontal rows) are computed as arrays;
the array forms give exactly the numbers of the per-value formulas above.
"""

from __future__ import annotations

import dataclasses
import math
import re
from collections import Counter
from dataclasses import replace

import numpy as np

from wallrun import shapes
from wallrun.codes import ec2
from wallrun.results import BarMark, BarSet, Panel, Reinforcement, Starter
from wallrun.section import Section
from wallrun.structure import STOCK_LENGTH_MM, starter_embedment_mm, starter_foot_mm

#: Parts of the cage in the order of the schedule (the names of ``reinforcement``).
PART_ORDER = ("starter", "stem", "starter_front", "stem_front", "stem_horizontal", "heel", "toe",
              "base_distribution", "key")
MEMBER_ORDER = PART_ORDER  # the former name


def bend_radius(phi: float) -> float:
    """Standard (minimum) scheduling radius r, mm (BS 8666:2005 Table 2, :mod:`wallrun.shapes`)."""
    return float(shapes.min_radius(phi))


def round_up(x: float, step: float = 25.0) -> int:
    """x rounded up to the next multiple of step, mm."""
    return int(math.ceil(round(x / step, 6)) * step)


def round_like_builtin(values, nd: int) -> np.ndarray:
    """``round(x, nd)`` of every value (nd >= 0), as a float array, without a Python call per
    value: ``rint(x 10^nd) / 10^nd`` is the same double as the builtin's correctly rounded
    result wherever x 10^nd is not within rounding noise of a half; those few values (and
    huge or non-finite ones) are redone by the builtin."""
    a = np.array(values, dtype=float)
    scale = 10.0 ** nd
    with np.errstate(over="ignore", invalid="ignore"):  # huge values: redone below
        y = a * scale
        out = np.rint(y) / scale
        unsure = ~((np.abs(y - np.floor(y) - 0.5) > 1e-6) & (np.abs(y) < 1e9))
    for i in np.flatnonzero(unsure).tolist():
        out[i] = round(float(a[i]), nd)
    return out


def round_up_many(x, step: float = 25.0, numpy_scalar=None) -> np.ndarray:
    """``round_up`` of every value of x, as an int64 array of the same numbers.

    ``round_up`` of a numpy scalar rounds x / step to 6 decimals the way numpy does
    (``np.round``), which differs from the builtin's rounding of a Python float in the
    last decimal now and then: ``numpy_scalar`` (a boolean mask, or True for all) marks
    the values that the per-value formula met as numpy scalars."""
    y = np.asarray(x, dtype=float) / step
    if numpy_scalar is None or numpy_scalar is False:
        r = round_like_builtin(y, 6)
    elif numpy_scalar is True:
        r = np.round(y, 6)
    else:
        r = np.where(numpy_scalar, np.round(y, 6), round_like_builtin(y, 6))
    return (np.ceil(r) * step).astype(np.int64)


def cutting_length(shape_code: str, phi: float, dims: dict[str, float], r: float | None = None) -> int:
    """Cutting length by the BS 8666 formula of the shape code (BS 8666:2005 Table 3),
    rounded up to 25 mm; r the bend radius (default the standard r of Table 2)."""
    return shapes.round_length(float(shapes.shape_length(shape_code, phi, dims, r)))


def _mass_per_m(phi: float) -> float:
    return float(ec2.mass_per_m(phi))


def mass_kg(phi: float, length_mm: float, number: int) -> float:
    """Mass of ``number`` bars of length_mm, kg (pi/4 phi^2 x 7850 kg/m3)."""
    return _mass_per_m(phi) * length_mm / 1000.0 * number


class Lengths:
    """The cutting, lap and anchorage lengths of one detailing job (a wall's panels),
    each worked out once by the functions that define it (:func:`cutting_length`,
    ``ec2.lap_length``, ``ec2.anchorage_length``) and then remembered, because along a
    wall the same bars recur: at 10 km 10,609 bar rows have 220 distinct cutting
    lengths and 7 lap lengths (the panels' bars 0.42 s -> 0.29 s). Made per job and
    dropped with it."""

    def __init__(self):
        self.known: dict = {}

    def _get(self, key, make):
        v = self.known.get(key)
        if v is None:
            v = self.known[key] = make()
        return v

    def cutting(self, shape_code: str, phi: float, dims: dict[str, int], r: float | None) -> int:
        """:func:`cutting_length`, mm."""
        return self._get(("cut", shape_code, phi, tuple(dims.items()), r),
                         lambda: cutting_length(shape_code, phi, dims, r))

    def lap(self, phi: float, fck: float, fyk: float, good_bond: bool) -> float:
        """Lap length l0 (``ec2.lap_length``, EN 1992-1-1 8.7.3), mm."""
        return self._get(("lap", phi, fck, fyk, good_bond),
                         lambda: float(ec2.lap_length(phi, fck, fyk, good_bond)))

    def anchorage(self, phi: float, fck: float, fyk: float, good_bond: bool) -> float:
        """Design anchorage length lbd (``ec2.anchorage_length``, EN 1992-1-1 8.4.4),
        mm."""
        return self._get(("lbd", phi, fck, fyk, good_bond),
                         lambda: float(ec2.anchorage_length(phi, fck, fyk, good_bond)))


def _mark(section: str, part: str, phi: float, shape: str, dims: dict[str, float], number: int,
          r: float | None = None, steel_type: str = "H", panel: str = "",
          lengths: Lengths | None = None) -> BarMark:
    """One bar row of a panel (bar_mark left to the caller): the dimensions rounded up
    to whole mm, the cutting length by the shape's formula with radius r (the standard
    r of BS 8666 Table 2 when None; straight bars have none); with ``panel`` the row
    is that panel's (member ``section part panel``), else the member is the part."""
    d = {k: int(math.ceil(round(v, 6))) for k, v in dims.items()}
    rr = None if shape == "00" else (float(shapes.min_radius(phi)) if r is None else float(r))
    L = (lengths or Lengths()).cutting(shape, phi, d, rr)
    return BarMark(section=section, member=f"{section} {part} {panel}" if panel else part,
                   bar_mark="", bar_mm=int(phi), shape_code=shape,
                   length_mm=L, number=int(number), total_length_m=L * number / 1000.0,
                   mass_kg=mass_kg(phi, L, number), dims_mm=d,
                   r_mm=None if rr is None else int(math.ceil(round(rr, 6))), part=part,
                   panels=(panel,) if panel else (), no_in_each=int(number),
                   steel_type=steel_type)


def n_along(length_mm: float, cover_mm: float, spacing_mm: float) -> int:
    """Bars along a length at a spacing, first and last at the cover: floor((L - 2c)/s) + 1."""
    return int(math.floor(max(length_mm - 2 * cover_mm, 0.0) / spacing_mm + 1e-9)) + 1


def split_run(run_mm: float, lap_mm: float) -> tuple[int, float]:
    """A straight run made of equal bars <= 12 m lapped by lap_mm: (pieces, piece length mm)."""
    if run_mm <= STOCK_LENGTH_MM:
        return 1, run_mm
    k = int(math.ceil((run_mm - lap_mm) / (STOCK_LENGTH_MM - lap_mm)))
    return k, (run_mm + (k - 1) * lap_mm) / k


def _straight_runs(section, member, phi, run_mm, lap_mm, count, steel_type="H",
                   panel: str = "", lengths: Lengths | None = None) -> list[BarMark]:
    pieces, piece = split_run(run_mm, lap_mm)
    return ([_mark(section, member, phi, "00", {"A": piece}, count * pieces,
                   steel_type=steel_type, panel=panel, lengths=lengths)] if count > 0 else [])


def steel_type(basis) -> str:
    """BS 8666:2005 type letter of the bars: H for grade B500 (fyk = 500 MPa), else X
    (a steel whose properties the design states)."""
    return "H" if abs(float(basis.steel.fyk_mpa) - 500.0) < 1e-9 else "X"


def _starter_of(bs: BarSet, r: Reinforcement, section: Section, basis,
                lengths: Lengths) -> Starter:
    """The starter of bars ``bs`` by the rules of the module docstring (standard radius),
    for a reinforcement the design gave no starters."""
    c = basis.concrete
    fck, fyk = c.fck_mpa, basis.steel.fyk_mpa
    phi = float(bs.bar_mm)
    embed = float(starter_embedment_mm(section.base_thickness_m * 1000.0, c.cover_ground_mm,
                                       r.toe.bar_mm, r.base_distribution.bar_mm))
    rad = float(shapes.min_radius(phi))
    foot = max(float(starter_foot_mm(phi, lengths.anchorage(phi, fck, fyk, True), embed)),
               float(shapes.min_leg(phi, rad)))
    return Starter(**{**dataclasses.asdict(bs), "bend_r_mm": rad},
                   lap_mm=lengths.lap(phi, fck, fyk, True),
                   kicker_mm=float(c.kicker_mm), embedment_mm=embed, foot_mm=foot)


def _bent_shape(phi: float, radius: float) -> str:
    """11 for the standard radius of BS 8666 Table 2, 12 for a larger one."""
    return "11" if bool(shapes.standard_radius(phi, radius)) else "12"


def panel_bars(section_type: str, section: Section, reinforcement: Reinforcement, panel: Panel,
               basis, lengths: Lengths | None = None) -> list[BarMark]:
    """Bars of one panel (bar_mark left ""; ``panels`` the panel), see the module
    docstring for the rules. ``lengths``: the :class:`Lengths` of the job the panel
    belongs to (None: its own)."""
    lengths = lengths if lengths is not None else Lengths()
    fck = basis.concrete.fck_mpa
    fyk = basis.steel.fyk_mpa
    cv, cg = float(basis.concrete.cover_mm), float(basis.concrete.cover_ground_mm)
    kicker = float(basis.concrete.kicker_mm)
    grade = steel_type(basis)
    r = reinforcement
    L = panel.length_m * 1000.0
    B = section.base_width_m * 1000.0
    tb = section.base_thickness_m * 1000.0
    t_bot, t_top = section.stem_base_m * 1000.0, section.stem_top_m * 1000.0
    base_top = panel.founding_m + section.base_thickness_m
    hs_checked = max((panel.retained_top_m - base_top) * 1000.0, 0.0)
    h0 = (panel.wall_top_start_m - base_top) * 1000.0
    h1 = (panel.wall_top_end_m - base_top) * 1000.0
    front = r.stem_front if r.stem_front is not None else r.stem_horizontal
    out: list[BarMark] = []

    def mark(part, phi, shape, dims, number, rad=None):
        return _mark(section_type, part, phi, shape, dims, number, rad, grade, panel.panel,
                     lengths)

    dt = t_bot - t_top

    def stem_lengths(hloc, step):  # along the tapered back face from the kicker to the top less cover
        m = np.minimum(hs_checked, hloc)
        ml = m.tolist()
        hyps = {v: math.hypot(v, dt) for v in set(ml)}  # few distinct: one hypot each
        hyp = np.array([hyps[v] for v in ml], dtype=float)
        return round_up_many(np.maximum(hloc - cv - kicker, 0.0) + (hyp - m), step, True)

    def heights(spacing):  # local drawn stem height at each bar position along the panel
        n = n_along(L, cv, spacing)
        x = cv + np.arange(n) * spacing
        return h0 + (h1 - h0) * np.clip(x / L if L > 0 else 0.0, 0, 1)

    for part, st_part, bs, curtail in (("stem", "starter", r.stem, r.stem_curtail_m),
                                       ("stem_front", "starter_front", front, None)):
        st = getattr(r, st_part)
        if st is None or st.bar_mm != bs.bar_mm or st.spacing_mm != bs.spacing_mm:
            st = _starter_of(bs, r, section, basis, lengths)
        phi, s = float(bs.bar_mm), float(bs.spacing_mm)
        hloc = heights(s)
        n = len(hloc)
        proj = min(st.projection_mm, max(float(hloc.min()) - cv, 0.0))
        rad = float(st.bend_r_mm) if st.bend_r_mm is not None else float(shapes.min_radius(phi))
        out.append(mark(st_part, phi, _bent_shape(phi, rad),
                        {"A": st.embedment_mm + proj, "B": st.foot_mm}, n, rad))
        bar_len = stem_lengths(hloc, 25.0 if h0 == h1 else 50.0)
        keep = bar_len > proj - kicker  # bars only where the stem rises above the starters
        if curtail is not None:
            stop = curtail * 1000.0
            short = (np.arange(n) % 2 == 1) & keep & (bar_len > stop - kicker)
            if stop > proj:
                k = int(short.sum())
                if k:
                    out.append(mark(part, phi, "00", {"A": round_up(stop - kicker)}, k))
            keep = keep & ~short
        kept = Counter(bar_len[keep].tolist())  # the bars of each length
        l0 = lengths.lap(phi, fck, fyk, True)
        for Lb, cnt in sorted(kept.items()):  # by length
            pieces, piece = split_run(Lb, l0)
            out.append(mark(part, phi, "00", {"A": piece}, cnt * pieces))

    # stem horizontal bars, each face
    hb = r.stem_horizontal
    phi, s = float(hb.bar_mm), float(hb.spacing_mm)
    l0 = lengths.lap(phi, fck, fyk, True)
    hmax = max(h0, h1)
    n_rows = n_along(hmax, cv, s)
    row_z = cv + np.arange(n_rows) * s
    full = L - 2 * cv
    if h0 == h1:
        exts = [full] * n_rows
    else:  # the part of the panel where the stem top stands above z + cover
        lo_h, hi_h = min(h0, h1), max(h0, h1)
        frac = np.clip((hi_h - cv - row_z) / (hi_h - lo_h), 0.0, 1.0)
        part_l = round_up_many(np.maximum(frac * L - cv, 0.0), 50.0).tolist()
        exts = [full if f >= 1.0 else e for f, e in zip(frac.tolist(), part_l)]
    run = {}
    for ext in exts:
        if ext > 0:
            run[ext] = run.get(ext, 0) + 2
    for ext, cnt in sorted(run.items()):
        out += _straight_runs(section_type, "stem_horizontal", phi, ext, l0, cnt, grade,
                              panel.panel, lengths)

    # base mats across the full width, bent at their anchoring ends
    leg = tb - cv - cg
    for part, bs in (("heel", r.heel), ("toe", r.toe)):
        phi = float(bs.bar_mm)
        r_std = float(shapes.min_radius(phi))
        rad = r_std if bs.bend_r_mm is None else float(bs.bend_r_mm)
        count = n_along(L, cv, bs.spacing_mm)
        if bs.far_bend_r_mm is None:
            out.append(mark(part, phi, _bent_shape(phi, rad), {"A": B - 2 * cv, "B": leg}, count, rad))
        else:
            rad = max(rad, float(bs.far_bend_r_mm))
            out.append(mark(part, phi, "21", {"A": leg, "B": B - 2 * cv, "C": leg}, count, rad))
    db = r.base_distribution
    phi = float(db.bar_mm)
    l0 = lengths.lap(phi, fck, fyk, False)  # top mat in poor bond: used for both mats
    out += _straight_runs(section_type, "base_distribution", phi, L - 2 * cv, l0,
                          2 * n_along(B, cv, db.spacing_mm), grade, panel.panel, lengths)

    # shear key
    if section.key_depth_m > 0 and section.key_width_m > 0:
        kd, kw = section.key_depth_m * 1000.0, section.key_width_m * 1000.0
        phi = float(r.toe.bar_mm)
        kleg = kd + tb - cg - cv - r.heel.bar_mm
        width = max(kw - 2 * cg, 2 * bend_radius(phi) + 2 * phi)
        out.append(mark("key", phi, "21", {"A": kleg, "B": width, "C": kleg},
                        n_along(L, cv, r.toe.spacing_mm)))
        phi_d = float(db.bar_mm)
        out += _straight_runs(section_type, "key", phi_d, L - 2 * cv,
                              lengths.lap(phi_d, fck, fyk, True), 2, grade, panel.panel,
                              lengths)
    return out


def _natural(name: str):
    """Sort key reading the digits of a name as a number (P9 before P10)."""
    return [int(t) if t.isdigit() else t for t in re.split(r"(\d+)", name)]


def panel_ranges(panels, order: dict[str, int]) -> str:
    """Panels as text, runs of consecutive panels (in ``order``) as ``first-last``."""
    ps = sorted(panels, key=lambda p: order[p])
    out, k = [], 0
    while k < len(ps):
        j = k
        while j + 1 < len(ps) and order[ps[j + 1]] == order[ps[j]] + 1:
            j += 1
        out.append(ps[k] if j == k else f"{ps[k]}-{ps[j]}")
        k = j + 1
    return " ".join(out)


def _key(b: BarMark):
    return (b.section, b.part or b.member, b.bar_mm, b.shape_code, b.length_mm,
            tuple(sorted(b.dims_mm.items())), b.r_mm)


def schedule(rows: list[BarMark]) -> tuple[BarMark, ...]:
    """The job's bar schedule from the panels' bar rows (:func:`panel_bars`).

    One bar mark per distinct bar of a section type (part, size, shape, dimensions,
    length, radius), numbered ``{section}-{nn:02d}`` in the order part (starter, stem,
    starter_front, stem_front, stem_horizontal, heel, toe, base_distribution, key),
    shape code, bar size, length. One row per bar mark and group of panels holding the
    same number of it: ``no_of_members`` = the panels of the group (all the panels of
    the type where they are alike), ``no_in_each`` = the bars in each, ``number`` the
    total. Lengths and masses are summed exactly (``math.fsum`` of the parts,
    unrounded) so that the schedule's mass equals the take-off's reinforcement total;
    the files round for display only. Independent of the order of ``rows``."""
    rank = {m: i for i, m in enumerate(PART_ORDER)}
    panels_all: set[str] = set()
    count: dict[tuple, dict[str, int]] = {}
    parts: dict[tuple, dict[str, list[BarMark]]] = {}
    first: dict[tuple, BarMark] = {}
    for b in rows:
        k = _key(b)
        pans = b.panels or ("",)
        p = pans[0]
        panels_all.update(pans)
        count.setdefault(k, {})
        count[k][p] = count[k].get(p, 0) + int(b.number)
        parts.setdefault(k, {}).setdefault(p, []).append(b)
        first.setdefault(k, b)
    order = {p: i for i, p in enumerate(sorted(panels_all, key=_natural))}
    keys = sorted(count, key=lambda k: (k[0], rank.get(k[1], len(rank)), k[1], k[3], k[2], k[4], k[5],
                                        -1 if k[6] is None else k[6]))
    out, counter = [], {}
    for k in keys:
        b = first[k]
        counter[b.section] = counter.get(b.section, 0) + 1
        mark = f"{b.section}-{counter[b.section]:02d}"
        groups: dict[int, list[str]] = {}
        for p in sorted(count[k], key=lambda p: order[p]):
            groups.setdefault(count[k][p], []).append(p)
        for each, pans in sorted(groups.items(), key=lambda g: order[g[1][0]]):
            bits = [x for p in pans for x in parts[k][p]]
            real = tuple(p for p in pans if p)
            member = f"{b.section} {b.part or b.member}" + (f" {panel_ranges(real, order)}" if real else "")
            out.append(replace(b, bar_mark=mark, member=member, number=each * len(pans),
                               total_length_m=math.fsum(x.total_length_m for x in bits),
                               mass_kg=math.fsum(x.mass_kg for x in bits), panels=real,
                               no_of_members=len(pans), no_in_each=each))
    return tuple(out)

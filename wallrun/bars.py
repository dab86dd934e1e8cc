"""Bar schedule of a panel: bar marks with BS 8666 / ISO 4066 shape codes.

Detailing rules (wallrun's, common practice; every length in mm):

- Shape codes and cutting lengths by the BS 8666 formulae (from memory):
  00 straight, L = A; 11 one 90 degree bend, L = A + B - 0.5 r - d;
  21 U-bar, L = A + B + C - r - 2 d; r the standard bend radius, 2 d for d <= 16 and
  3.5 d above (minimum former 4 d / 7 d). Dimensions are outside dimensions. Cutting
  lengths are rounded up to the next 25 mm; stem bars cut to a sloped top are grouped
  into lengths rounded up to 50 mm.
- Bars are at most 12 m long (stock length); longer runs are made of equal pieces
  lapped by l0 of EN 1992-1-1 8.7.3 (alpha6 = 1.5).
- Stem starters (shape 11): a vertical leg from the top of the base down to rest on the
  bottom mat (toe bars and distribution bars), a foot so that leg + foot >= lbd
  (8.4.4, alpha factors 1.0) and >= 12 d, and a projection of l0 above the top of the
  base (lapped with the stem bars). Back-face starters carry the stem main bar; the
  front face has its own starters of the stem_front bar.
- Stem bars (shape 00) from the top of the base to the top of the wall less the cover,
  along the tapered back face; with ``stem_curtail_m`` every second back bar stops at
  that height (omitted when the starter projection already reaches it).
- Stem horizontal bars, each face, rows from the cover above the top of the base at the
  stem_horizontal spacing, along the panel length less the end covers (for a sloped
  top each row only where the stem stands higher than the row plus the cover).
- Base transverse bars straight (shape 00) across the full base width less the side
  covers: the top mat of the heel bar, the bottom mat of the toe bar.
- Base distribution bars, each mat, along the panel length less the end covers.
- Shear key (when the section has one): U-bars (shape 21) of the toe bar at the toe
  spacing, legs from the key bottom up to the top mat, and two longitudinal bars of the
  distribution bar in the bends.
- Number along the panel = floor((L - 2 cover) / spacing) + 1, end covers
  ``concrete.cover_mm`` at both joints.

The bars of a row of equal spacing (stem bars, horizontal rows) are computed as arrays;
the array forms give exactly the numbers of the per-value formulas above.
"""

from __future__ import annotations

import math
from dataclasses import replace
from functools import lru_cache

import numpy as np

from wallrun.codes import ec2
from wallrun.results import BarMark, Panel, Reinforcement
from wallrun.section import Section
from wallrun.structure import STOCK_LENGTH_MM, starter_embedment_mm, starter_foot_mm

MEMBER_ORDER = ("stem", "stem_front", "stem_horizontal", "heel", "toe", "base_distribution", "key")


def bend_radius(phi: float) -> float:
    """Standard bend radius r, mm: 2 phi for phi <= 16, 3.5 phi above (BS 8666, from memory)."""
    return 2.0 * phi if phi <= 16 else 3.5 * phi


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


def cutting_length(shape_code: str, phi: float, dims: dict[str, float]) -> int:
    """Cutting length by the BS 8666 formula of the shape code, rounded up to 25 mm."""
    r = bend_radius(phi)
    if shape_code == "00":
        L = dims["A"]
    elif shape_code == "11":
        L = dims["A"] + dims["B"] - 0.5 * r - phi
    elif shape_code == "21":
        L = dims["A"] + dims["B"] + dims["C"] - r - 2.0 * phi
    else:
        raise ValueError(f"shape code {shape_code} not used by wallrun")
    return round_up(L)


@lru_cache(maxsize=None)
def _mass_per_m(phi: float) -> float:
    return float(ec2.mass_per_m(phi))


def mass_kg(phi: float, length_mm: float, number: int) -> float:
    """Mass of ``number`` bars of length_mm, kg (pi/4 phi^2 x 7850 kg/m3)."""
    return _mass_per_m(phi) * length_mm / 1000.0 * number


# The anchorage and lap lengths of a bar size repeat on every panel: computed once per
# (phi, fck, fyk, bond) and reused (pure functions of their arguments).
@lru_cache(maxsize=None)
def _lbd(phi: float, fck: float, fyk: float, good_bond: bool) -> float:
    return float(ec2.anchorage_length(phi, fck, fyk, good_bond))


@lru_cache(maxsize=None)
def _l0(phi: float, fck: float, fyk: float, good_bond: bool) -> float:
    return float(ec2.lap_length(phi, fck, fyk, good_bond))


def _mark(section: str, member: str, phi: float, shape: str, dims: dict[str, float], number: int) -> BarMark:
    d = {k: int(math.ceil(v)) for k, v in dims.items()}
    L = cutting_length(shape, phi, d)
    return BarMark(section=section, member=member, bar_mark="", bar_mm=int(phi), shape_code=shape,
                   length_mm=L, number=int(number), total_length_m=L * number / 1000.0,
                   mass_kg=mass_kg(phi, L, number), dims_mm=d)


def n_along(length_mm: float, cover_mm: float, spacing_mm: float) -> int:
    """Bars along a length at a spacing, first and last at the cover: floor((L - 2c)/s) + 1."""
    return int(math.floor(max(length_mm - 2 * cover_mm, 0.0) / spacing_mm + 1e-9)) + 1


def split_run(run_mm: float, lap_mm: float) -> tuple[int, float]:
    """A straight run made of equal bars <= 12 m lapped by lap_mm: (pieces, piece length mm)."""
    if run_mm <= STOCK_LENGTH_MM:
        return 1, run_mm
    k = int(math.ceil((run_mm - lap_mm) / (STOCK_LENGTH_MM - lap_mm)))
    return k, (run_mm + (k - 1) * lap_mm) / k


def _straight_runs(section, member, phi, run_mm, lap_mm, count) -> list[BarMark]:
    pieces, piece = split_run(run_mm, lap_mm)
    return [_mark(section, member, phi, "00", {"A": piece}, count * pieces)] if count > 0 else []


def panel_bars(section_type: str, section: Section, reinforcement: Reinforcement, panel: Panel,
               basis) -> list[BarMark]:
    """Bars of one panel (bar_mark left ""), see the module docstring for the rules."""
    fck = basis.concrete.fck_mpa
    fyk = basis.steel.fyk_mpa
    cv, cg = float(basis.concrete.cover_mm), float(basis.concrete.cover_ground_mm)
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

    dt = t_bot - t_top

    def stem_lengths(hloc, step):  # along the tapered back face up to the top less cover
        m = np.minimum(hs_checked, hloc)
        uniq, inv = np.unique(m, return_inverse=True)  # few distinct: one hypot each
        hyp = np.array([math.hypot(v, dt) for v in uniq.tolist()])[inv.reshape(-1)]
        # the per-bar sum is a Python float only where both max() and min() give their
        # Python-float argument: a stem lower than the cover and not lower than hs
        as_float = (hloc - cv < 0.0) & ~(hloc < hs_checked)
        return round_up_many(np.maximum(hloc - cv, 0.0) + (hyp - m), step, ~as_float)

    def heights(spacing):  # local drawn stem height at each bar position along the panel
        n = n_along(L, cv, spacing)
        x = cv + np.arange(n) * spacing
        return h0 + (h1 - h0) * np.clip(x / L if L > 0 else 0.0, 0, 1)

    embed = starter_embedment_mm(tb, cg, r.toe.bar_mm, r.base_distribution.bar_mm)
    for member, bs, curtail in (("stem", r.stem, r.stem_curtail_m), ("stem_front", front, None)):
        phi, s = float(bs.bar_mm), float(bs.spacing_mm)
        lbd = _lbd(phi, fck, fyk, True)
        l0 = _l0(phi, fck, fyk, True)
        foot = float(starter_foot_mm(phi, lbd, embed))
        hloc = heights(s)
        n = len(hloc)
        proj = min(l0, max(float(hloc.min()) - cv, 0.0))
        out.append(_mark(section_type, member, phi, "11", {"A": embed + proj, "B": foot}, n))
        lengths = stem_lengths(hloc, 25.0 if h0 == h1 else 50.0)
        keep = lengths > proj  # bars only where the stem rises above the starters
        if curtail is not None:
            stop = curtail * 1000.0
            short = (np.arange(n) % 2 == 1) & keep & (lengths > stop)
            if stop > proj:
                k = int(short.sum())
                if k:
                    out.append(_mark(section_type, member, phi, "00", {"A": round_up(stop)}, k))
            keep = keep & ~short
        kept, counts = np.unique(lengths[keep], return_counts=True)  # sorted lengths
        for Lb, cnt in zip(kept.tolist(), counts.tolist()):
            pieces, piece = split_run(Lb, l0)
            out.append(_mark(section_type, member, phi, "00", {"A": piece}, cnt * pieces))

    # stem horizontal bars, each face
    hb = r.stem_horizontal
    phi, s = float(hb.bar_mm), float(hb.spacing_mm)
    l0 = _l0(phi, fck, fyk, True)
    hmax = max(h0, h1)
    n_rows = n_along(hmax, cv, s)
    row_z = cv + np.arange(n_rows) * s
    full = L - 2 * cv
    if h0 == h1:
        exts = [full] * n_rows
    else:  # the part of the panel where the stem top stands above z + cover
        lo_h, hi_h = min(h0, h1), max(h0, h1)
        frac = np.clip((hi_h - cv - row_z) / (hi_h - lo_h), 0.0, 1.0)
        part = round_up_many(np.maximum(frac * L - cv, 0.0), 50.0).tolist()
        exts = [full if f >= 1.0 else e for f, e in zip(frac.tolist(), part)]
    run = {}
    for ext in exts:
        if ext > 0:
            run[ext] = run.get(ext, 0) + 2
    for ext, cnt in sorted(run.items()):
        out += _straight_runs(section_type, "stem_horizontal", phi, ext, l0, cnt)

    # base mats across the full width
    for member, bs in (("heel", r.heel), ("toe", r.toe)):
        out.append(_mark(section_type, member, float(bs.bar_mm), "00", {"A": B - 2 * cv},
                         n_along(L, cv, bs.spacing_mm)))
    db = r.base_distribution
    phi = float(db.bar_mm)
    l0 = _l0(phi, fck, fyk, False)  # top mat in poor bond: used for both mats
    out += _straight_runs(section_type, "base_distribution", phi, L - 2 * cv, l0,
                          2 * n_along(B, cv, db.spacing_mm))

    # shear key
    if section.key_depth_m > 0 and section.key_width_m > 0:
        kd, kw = section.key_depth_m * 1000.0, section.key_width_m * 1000.0
        phi = float(r.toe.bar_mm)
        leg = kd + tb - cg - cv - r.heel.bar_mm
        width = max(kw - 2 * cg, 2 * bend_radius(phi) + 2 * phi)
        out.append(_mark(section_type, "key", phi, "21", {"A": leg, "B": width, "C": leg},
                         n_along(L, cv, r.toe.spacing_mm)))
        phi_d = float(db.bar_mm)
        out += _straight_runs(section_type, "key", phi_d, L - 2 * cv,
                              _l0(phi_d, fck, fyk, True), 2)
    return out


def _key(b: BarMark):
    return (b.section, b.member, b.bar_mm, b.shape_code, b.length_mm, tuple(sorted(b.dims_mm.items())))


def schedule(rows: list[BarMark]) -> tuple[BarMark, ...]:
    """Merge equal bars (same section, member, bar, shape, length and dimensions) across
    the panels of a section type, number them ``{section}-{nn:02d}`` in the order
    section, member (stem, stem_front, stem_horizontal, heel, toe, base_distribution,
    key), shape code, bar size, length; numbers summed, and lengths and masses summed
    exactly (``math.fsum`` of the parts, unrounded) so that the schedule's mass equals
    the take-off's reinforcement total; the files round for display only."""
    merged: dict[tuple, int] = {}
    first: dict[tuple, BarMark] = {}
    parts: dict[tuple, list[BarMark]] = {}
    for b in rows:
        k = _key(b)
        merged[k] = merged.get(k, 0) + int(b.number)
        first.setdefault(k, b)
        parts.setdefault(k, []).append(b)
    rank = {m: i for i, m in enumerate(MEMBER_ORDER)}
    order = sorted(merged, key=lambda k: (k[0], rank.get(k[1], len(rank)), k[1], k[3], k[2], k[4], k[5]))
    out, counter = [], {}
    for k in order:
        b = first[k]
        counter[b.section] = counter.get(b.section, 0) + 1
        num = merged[k]
        out.append(replace(b, bar_mark=f"{b.section}-{counter[b.section]:02d}", number=num,
                           total_length_m=math.fsum(p.total_length_m for p in parts[k]),
                           mass_kg=math.fsum(p.mass_kg for p in parts[k])))
    return tuple(out)

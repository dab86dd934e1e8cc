"""Cross-sections of the section types in use: ``sections.dxf``.

Each section type is drawn once, in a block of its own named
``WALLRUN-SECTION-<type>`` in section coordinates (x from the toe edge, z from the
underside of the base, m; design-basis section 2), and the block is inserted once in
model space; :func:`layout_cells` places the inserts. A type is drawn at its governing
panel, the tallest panel using it (largest top of wall - founding level; the first
such panel on a tie). A section holds:

- the concrete outline (stem, base and key from the section polygons, one closed
  polyline) and the stem/base construction joint;
- the ground in front at the panel's lowest front level, the backfill surface leaving
  the back face at the retained level at the backfill slope, the design water level;
- the bars, schematically at their covers: back-face and front-face starters (an L
  resting on the bottom mat, one bar diameter inside the stem bars they lap with),
  the stem bars (the curtailed set beside the full-height set), the base top (heel)
  and bottom (toe) mats, the key's U-bars, and the distribution bars cut in section
  as dots (inserts of a one-circle block, one grid insert per straight row; at least
  0.7 mm across on paper so that they show);
- a leader for each group of marks (member and kind) from a dot on its bar, level
  out through the right-hand face, then fanning out to the right of the section,
  ending at a line naming the group's marks, size and spacing (one MTEXT holds the
  lines, at an even pitch); the leaders' ends are in the order of their bars' levels,
  so that no two leaders cross and each crosses the concrete outline once;
- dimensions in mm (toe, stem base, heel, base width, base thickness, stem height,
  stem top, key width and depth; none of zero length);
- level marks (inserts of the level-mark block, figure as attribute) for the top of
  wall, retained level, front ground and underside of base, in a column left of the
  section in the order of their levels (coinciding levels share one mark);
- the title, the design conditions of the governing panel, and the type's bar table
  (the ``bar_schedule`` rows as aligned columns in a fixed-pitch font).

Every text and mark of a section lies inside the box :func:`draw_section` returns,
which the sheets use to place sections without overlap.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from wallrun.outputs.dxf import conventions as c

A = c.A
BLOCK_PREFIX = "WALLRUN-SECTION-"

TAG_PITCH_MM = 4.0  # vertical distance between the leaders' ends, mm on paper
TAG_X_MM = 12.0  # the leaders' ends, mm right of the base
DESC_MM = c.SMALL_MM  # height of the tag descriptions, mm
TABLE_MM = 1.8  # height of the bar table text, mm
TABLE_PITCH_MM = 3.0
COND_PITCH_MM = 3.4


def governing_map(result) -> dict:
    """{section type: its tallest PanelResult} (max wall top - founding level; the
    first such panel on a tie)."""
    out: dict = {}
    for pr in result.panels:
        p = pr.panel
        h = max(p.wall_top_start_m, p.wall_top_end_m) - p.founding_m
        cur = out.get(pr.section_type)
        if cur is None or h > cur[0]:
            out[pr.section_type] = (h, pr)
    return {k: v[1] for k, v in out.items()}


def stem_heights(pr) -> tuple[float, float]:
    """(drawn, checked) stem heights of a panel above the top of the base, m: to the
    highest top of wall, and to the retained level z_top."""
    p, tb = pr.panel, pr.section.base_thickness_m
    hd = max(p.wall_top_start_m, p.wall_top_end_m) - p.founding_m - tb
    hc = p.retained_top_m - p.founding_m - tb
    hc = max(min(hc, hd), 1e-3)
    return max(hd, hc), hc


SCALES = (25, 50, 100)  # 1:100 only for a section too tall for the sheet at 1:50
LABELS_MM = 80.0  # an allowance for the labels above and below a section, mm


TALL_AT_25_M = 3.5  # sections taller than this are drawn at 1:50 (common practice)


def section_scale(result, area_h_mm: float) -> int:
    """Scale of the sections, 1:N: 25 when the tallest drawn section (key bottom to
    top of wall) is at most 3.5 m, else 50 (100 only when needed), and at which that
    section with its labels fits a sheet's drawing area ``area_h_mm`` high."""
    gmap = governing_map(result)
    tall = 0.0
    for st in result.section_types:
        pr = gmap.get(st.section_type)
        if pr is not None:
            tall = max(tall, st.section.key_depth_m + st.section.base_thickness_m
                       + stem_heights(pr)[0])
    for n in SCALES:
        if (n > 25 or tall <= TALL_AT_25_M) and tall * 1000.0 / n + LABELS_MM <= area_h_mm:
            return n
    return SCALES[-1]


# --- bar geometry ----------------------------------------------------------------------

def bar_geometry(sec, reinf, hd, hc, cover_m, cover_ground_m, has_front) -> dict:
    """Bar geometry in section coordinates, m: polylines of the bars and the centres
    of the distribution bars (see the module docstring); schematic, at the covers."""
    toe, tb, B = sec.toe_m, sec.base_thickness_m, sec.base_width_m
    tsb, tst = sec.stem_base_m, sec.stem_top_m
    cv, cg = cover_m, cover_ground_m
    ps = reinf.stem.bar_mm / 1000.0
    ph, pt_ = reinf.heel.bar_mm / 1000.0, reinf.toe.bar_mm / 1000.0
    phz = reinf.stem_horizontal.bar_mm / 1000.0
    pd = reinf.base_distribution.bar_mm / 1000.0
    front = reinf.stem_front
    pf = (front.bar_mm if front is not None else reinf.stem_horizontal.bar_mm) / 1000.0

    def x_back(z):
        z = np.asarray(z, dtype=float)
        frac = np.clip((z - tb) / hc, 0.0, 1.0)
        return toe + tsb + (tst - tsb) * frac

    o = cv + ps / 2
    z_top_bar = tb + hd - cv
    z_foot = cg + pt_ + ps / 2
    foot = min(B - cv - (toe + tsb - o), max(0.3, 0.6 * sec.heel_m))
    lap = min(0.4 * hd, 0.6)  # drawn starter projection above the base
    stem = [(float(x_back(z_top_bar)) - o, z_top_bar)]
    if tb + hc < z_top_bar - 1e-6:
        stem.append((toe + tst - o, tb + hc))
    stem.append((toe + tsb - o, tb + 0.5 * lap))
    out = {"stem": stem}
    sx = toe + tsb - o - ps  # starters one bar inside the stem bars
    out["stem_starter"] = [(float(x_back(tb + lap)) - o - ps, tb + lap), (sx, tb),
                           (sx, z_foot), (sx + foot, z_foot)]
    if reinf.stem_curtail_m:
        zc = min(tb + reinf.stem_curtail_m, z_top_bar)
        sh = 2.0 * ps
        out["stem_curtailed"] = [(float(x_back(zc)) - o - sh, zc),
                                 (toe + tsb - o - sh, tb + 0.5 * lap)]
    xf = toe + cv + pf / 2
    if has_front:
        zf = cg + pt_ + pf / 2
        out["stem_front"] = [(xf, z_top_bar), (xf, tb + 0.5 * lap)]
        out["stem_front_starter"] = [(xf + pf, tb + lap), (xf + pf, zf), (cv, zf)]
    out["heel"] = [(cv, tb - cv - ph / 2), (B - cv, tb - cv - ph / 2)]
    out["toe"] = [(cv, cg + pt_ / 2), (B - cv, cg + pt_ / 2)]
    s_h = reinf.stem_horizontal.spacing_mm / 1000.0
    zs = np.arange(tb + s_h / 2, z_top_bar, s_h) if s_h > 0 else np.array([])
    xb = x_back(zs) - o - ps / 2 - phz / 2
    xfr = np.full_like(zs, (xf + pf / 2 + phz / 2) if has_front else toe + cv + phz / 2)
    out["stem_horizontal_back"] = (xb, zs, phz)
    out["stem_horizontal_front"] = (xfr, zs, phz)
    s_d = reinf.base_distribution.spacing_mm / 1000.0
    xs = np.arange(cv + s_d / 2, B - cv, s_d) if s_d > 0 else np.array([])
    out["base_distribution_top"] = (xs, np.full_like(xs, tb - cv - ph - pd / 2), pd)
    out["base_distribution_bottom"] = (xs, np.full_like(xs, cg + pt_ + pd / 2), pd)
    if sec.key_depth_m > 0 and sec.key_width_m > 0:
        kd, kw = sec.key_depth_m, sec.key_width_m
        zk = -kd + cg
        out["key"] = [(toe + cg, tb - cv - ph), (toe + cg, zk), (toe + kw - cg, zk),
                      (toe + kw - cg, tb - cv - ph)]
    return out


def _group_of(row, curtail_mm: float | None) -> str:
    """The drawn bar a schedule row is tagged on (by its part, ``BarMark.part``)."""
    m = row.part
    if m == "starter":
        return "stem_starter"
    if m == "starter_front":
        return "stem_front_starter"
    if m == "stem" and curtail_mm is not None and row.length_mm <= curtail_mm + 50:
        return "stem_curtailed"
    return m


#: Order of the groups' descriptions; the name used in the descriptions.
GROUP_NAMES = {
    "stem": "stem, back face", "stem_curtailed": "stem, back face, curtailed",
    "stem_starter": "starters, back face", "stem_front": "stem, front face",
    "stem_front_starter": "starters, front face", "stem_horizontal": "stem, horizontal",
    "heel": "base, top mat", "toe": "base, bottom mat",
    "base_distribution": "base, distribution", "key": "shear key",
}


def _point_on(poly, f: float):
    """The point at fraction ``f`` of the length along polyline ``poly``."""
    pts = np.asarray(poly, dtype=float)
    seg = np.hypot(*np.diff(pts, axis=0).T)
    cum = np.cumsum(seg)
    s = f * cum[-1]
    k = min(int(np.searchsorted(cum, s)), len(seg) - 1)
    s0 = cum[k] - seg[k]
    u = (s - s0) / seg[k] if seg[k] > 0 else 0.0
    return tuple(float(v) for v in pts[k] + u * (pts[k + 1] - pts[k]))


def _at_level(poly, z: float):
    """The point of ``poly`` at level ``z`` on its first segment spanning it."""
    pts = np.asarray(poly, dtype=float)
    for (x0, z0), (x1, z1) in zip(pts[:-1], pts[1:]):
        if min(z0, z1) - 1e-12 <= z <= max(z0, z1) + 1e-12 and abs(z1 - z0) > 1e-12:
            u = (z - z0) / (z1 - z0)
            return (float(x0 + u * (x1 - x0)), float(z))
    return tuple(float(v) for v in pts[0])


def spread(wanted, pitch: float) -> np.ndarray:
    """Positions as near as may be to ``wanted`` (sorted descending) keeping their order
    and at least ``pitch`` apart: the mean of the forward (pushing down) and backward
    (pushing up) placements, each of which keeps the order and the pitch."""
    w = np.asarray(wanted, dtype=float)
    n = len(w)
    if n == 0:
        return w
    down, up = w.copy(), w.copy()
    for i in range(1, n):
        down[i] = min(w[i], down[i - 1] - pitch)
    for i in range(n - 2, -1, -1):
        up[i] = max(w[i], up[i + 1] + pitch)
    return 0.5 * (down + up)


@dataclass(frozen=True)
class Leader:
    """One bar-mark leader in section coordinates, m: from ``tag`` (its end at the
    line ``text`` naming the marks) to ``elbow`` (out of the concrete, level with the
    anchor), then level to ``anchor`` on the bar."""

    group: str
    anchor: tuple
    elbow: tuple
    tag: tuple
    text: str


def plan_leaders(sec, g: dict, groups: dict, scale: int, spacing: dict) -> list[Leader]:
    """The leaders of a section: one per group of marks (``groups``: group -> rows),
    anchored on its drawn bar at a level of its own; see the module docstring."""
    P = lambda mm: c.paper(mm, scale)  # noqa: E731
    B, tb = sec.base_width_m, sec.base_thickness_m
    anchors = {}
    stemish = [k for k in ("stem", "stem_curtailed", "stem_front", "stem_starter",
                           "stem_front_starter", "stem_horizontal") if k in groups]
    # levels on the stem of their own, between the top of the base and the lowest top
    # of the drawn vertical bars (starters: their projection)
    for i, k in enumerate(stemish):
        if k == "stem_horizontal":
            xs, zs, _ = g["stem_horizontal_back"]
            if len(zs):
                j = min(len(zs) - 1, max(0, int(len(zs) * (0.35 + 0.1 * i))))
                anchors[k] = (float(xs[j]), float(zs[j]))
            continue
        poly = g.get(k) or g["stem"]
        zs = [p[1] for p in poly]
        lo = max(tb, min(zs)) + 1e-3
        hi = max(zs)
        if k.endswith("starter"):
            hi = min(hi, tb + 0.9 * (max(zs) - tb))
        f = (i + 1) / (len(stemish) + 1)
        anchors[k] = _at_level(poly, lo + f * (hi - lo))
    if "heel" in groups:
        anchors["heel"] = _point_on(g["heel"], 0.97)
    if "toe" in groups:
        anchors["toe"] = _point_on(g["toe"], 0.97)
    if "base_distribution" in groups:
        xs, zs, _ = g["base_distribution_top"]
        if len(xs):
            anchors["base_distribution"] = (float(xs[-1]), float(zs[-1]))
    if "key" in groups and "key" in g:
        anchors["key"] = _point_on(g["key"], 0.5)
    # distinct levels: a nudge of 0.1 mm on paper for any exact tie
    used: list[float] = []
    for k in list(anchors):
        x, z = anchors[k]
        while any(abs(z - u) < P(0.05) for u in used):
            z -= P(0.1)
        used.append(z)
        anchors[k] = (x, z)
    order = sorted(anchors, key=lambda k: -anchors[k][1])
    # the ends at an even pitch (one MTEXT names them all), centred on the anchors
    mean = float(np.mean([anchors[k][1] for k in order])) if order else 0.0
    tz = [mean + P(TAG_PITCH_MM) * ((len(order) - 1) / 2 - i) for i in range(len(order))]
    x_elbow, x_tag = B + P(3.0), B + P(TAG_X_MM)
    out = []
    for k, z_tag in zip(order, tz):
        rows = groups[k]
        marks = [r.bar_mark for r in rows]
        phis = sorted({r.bar_mm for r in rows})
        sp = spacing.get(k)
        listing = ", ".join(marks) if len(marks) <= 3 else f"{marks[0]} to {marks[-1]}"
        text = (f"{listing}  " + "/".join(f"H{p}" for p in phis)
                + (f" at {sp:g}" if sp else "") + f"  {GROUP_NAMES.get(k, k)}")
        out.append(Leader(k, anchors[k], (x_elbow, anchors[k][1]), (x_tag, float(z_tag)),
                          text))
    return out


# --- one section ---------------------------------------------------------------------------

def _levels(pr, hd, hc) -> list[tuple[float, str]]:
    """(z in section coordinates, label) of the level marks, highest first; levels
    within 0.5 mm of each other share one mark."""
    p = pr.panel
    top = max(p.wall_top_start_m, p.wall_top_end_m)
    items = [(top, "TOP OF WALL"), (p.retained_top_m, "RETAINED"),
             (p.front_min_m, "FRONT GROUND"), (p.founding_m, "UNDERSIDE OF BASE")]
    items.sort(key=lambda t: -t[0])
    merged: list[list] = []
    for z, name in items:
        if merged and abs(merged[-1][0] - z) < 5e-4:
            merged[-1][1] += " = " + name
        else:
            merged.append([z, name])
    return [(z - p.founding_m, f"{name} +{z:.3f}") for z, name in merged]


def draw_section(blk, result, st, pr, rows, scale: int, lt: c.Lettering):
    """Draw section type ``st`` at panel ``pr`` into the block ``blk`` (section
    coordinates); returns the box (xmin, zmin, xmax, zmax) holding everything drawn."""
    site = result.site
    sec, reinf, p = st.section, st.reinforcement, pr.panel
    P = lambda mm: c.paper(mm, scale)  # noqa: E731
    toe, tb, B = sec.toe_m, sec.base_thickness_m, sec.base_width_m
    tsb, tst = sec.stem_base_m, sec.stem_top_m
    kd, kw = sec.key_depth_m, sec.key_width_m
    hd, hc = stem_heights(pr)
    H = tb + hd
    slope = p.backfill.slope_deg

    # concrete, ground, fill, water
    outline = c.concrete_outline(c.section_outline(sec, hd, hc, slope))
    c.add_polyline(blk, outline, c.L_CONCRETE, close=True)
    blk.add_line((toe, tb), (toe + tsb, tb), dxfattribs={"layer": c.L_BASE_TOP})
    zf = p.front_min_m - p.founding_m
    blk.add_line((-P(6), zf), (toe if zf >= tb else 0.0, zf), dxfattribs={"layer": c.L_FRONT})
    zt = tb + hc
    xb = toe + tst
    t = math.tan(math.radians(slope))
    x_far = B + P(2)
    blk.add_line((xb, zt), (x_far, zt + (x_far - xb) * t), dxfattribs={"layer": c.L_FILL})
    if p.water_level_m is not None:
        zw = min(p.water_level_m - p.founding_m, zt)
        if zw > 0:
            frac = min(max((zw - tb) / hc, 0.0), 1.0)
            xw = toe + tsb + (tst - tsb) * frac if zw >= tb else B
            blk.add_line((xw, zw), (x_far, zw), dxfattribs={"layer": c.L_WATER})

    # bars
    curtail_mm = reinf.stem_curtail_m * 1000.0 if reinf.stem_curtail_m else None
    groups: dict[str, list] = {}
    for r in rows:
        groups.setdefault(_group_of(r, curtail_mm), []).append(r)
    has_front = reinf.stem_front is not None or "stem_front" in groups
    g = bar_geometry(sec, reinf, hd, hc, site.concrete.cover_mm / 1000.0,
                     site.concrete.cover_ground_mm / 1000.0, has_front)
    for key in ("stem", "stem_starter", "stem_curtailed", "stem_front",
                "stem_front_starter", "heel", "toe", "key"):
        if key in g:
            c.add_polyline(blk, g[key], c.L_BARS)
    rmin = P(0.35)
    for key in ("stem_horizontal_back", "stem_horizontal_front", "base_distribution_top",
                "base_distribution_bottom"):
        xs, zs, phi = g[key]
        _dot_row(blk, xs, zs, max(phi / 2, rmin))

    # bar marks
    spacing = {"stem": reinf.stem.spacing_mm, "stem_starter": reinf.stem.spacing_mm,
               "stem_curtailed": 2 * reinf.stem.spacing_mm,
               "heel": reinf.heel.spacing_mm, "toe": reinf.toe.spacing_mm,
               "stem_horizontal": reinf.stem_horizontal.spacing_mm,
               "base_distribution": reinf.base_distribution.spacing_mm,
               "key": reinf.toe.spacing_mm}
    if reinf.stem_front is not None:
        spacing["stem_front"] = spacing["stem_front_starter"] = reinf.stem_front.spacing_mm
    if curtail_mm is not None and "stem_curtailed" in groups:
        spacing["stem"] = 2 * reinf.stem.spacing_mm
    leaders = plan_leaders(sec, g, groups, scale, spacing)
    for ld in leaders:
        c.add_polyline(blk, c.leader_path(ld.tag, ld.anchor, P(0.45), via=(ld.elbow,)),
                       c.L_MARKS)
    right = B + P(TAG_X_MM)
    tag_lo = tag_hi = 0.0
    if leaders:  # the descriptions, one line at each leader's end
        lines = [ld.text for ld in leaders]
        tag_hi = leaders[0].tag[1] + P(TAG_PITCH_MM / 2)
        tag_lo = leaders[-1].tag[1] - P(TAG_PITCH_MM / 2)
        c.add_lines_text(blk, lines, (B + P(TAG_X_MM + 1.0), tag_hi - P(TAG_PITCH_MM / 2)
                                      + P(DESC_MM / 2)), P(DESC_MM), c.L_MARKS,
                         P(TAG_PITCH_MM), lt=lt)
        right += P(1.0 + max(lt.width(t, DESC_MM) for t in lines))

    # dimensions
    zk = -kd
    row1, row2 = zk - P(7), zk - P(14)
    c.add_dimensions(blk, [(0.0, 0.0), (toe, 0.0), (toe + tsb, 0.0), (B, 0.0)],
                     (0.0, row1), scale, lt=lt)
    c.add_dimensions(blk, [(0.0, 0.0), (B, 0.0)], (0.0, row2), scale)
    c.add_dimensions(blk, [(0.0, 0.0), (0.0, tb), (toe, H)], (-P(8), 0.0), scale,
                     vertical=True, lt=lt)
    c.add_dimensions(blk, [(toe, H), (toe + tst, H)], (0.0, H + P(6)), scale)
    if kd > 0 and kw > 0:
        c.add_dimensions(blk, [(toe, zk), (toe + kw, zk)], (0.0, zk - P(3.5)), scale)
        c.add_dimensions(blk, [(toe + kw, zk), (toe + kw, 0.0)], (toe + kw + P(5), 0.0),
                         scale, vertical=True)

    # the critical slip circle of overall stability (where checked): the arc from the
    # front ground to the retained level, and its utilization at its lowest point
    slip = slip_arc(pr, zf, tb + hc)
    slip_lo = 0.0
    if slip is not None:
        xs, zs, label = slip
        c.add_polyline(blk, list(zip(xs.tolist(), zs.tolist())), c.L_SLIP)
        k = int(np.argmin(zs))
        c.add_text(blk, label, (float(xs[k]), float(zs[k]) - P(1.5)), P(c.SMALL_MM),
                   c.L_SLIP, A.TOP_CENTER)
        slip_lo = float(zs[k]) - P(1.5 + c.SMALL_MM)
        row2 = min(row2, slip_lo)
        right = max(right, float(xs.max()) + P(2))

    # level marks: a column left of the section, figures spread in level order
    x_mark = -P(20)
    levels = _levels(pr, hd, hc)
    zl = spread([z for z, _ in levels], P(3.6))
    lab_w = 0.0
    for (z, label), z_text in zip(levels, zl):
        ref = blk.add_blockref(c.B_LEVEL, (x_mark, z), dxfattribs={"layer": c.L_LEVEL_TAGS})
        ref.add_attrib("LEVEL", label, (x_mark - P(3.2), z_text), dxfattribs={
            "layer": c.L_LEVEL_TAGS, "height": P(c.SMALL_MM), "style": c.TEXT_STYLE,
            "halign": 2, "valign": 0, "align_point": (x_mark - P(3.2), z_text)})
        lab_w = max(lab_w, lt.width(label, c.SMALL_MM))
    left = x_mark - P(3.2) - P(lab_w)
    if slip is not None:
        left = min(left, float(slip[0].min()))
        half = P(lt.width(slip[2], c.SMALL_MM) / 2)
        left = min(left, float(slip[0][int(np.argmin(slip[1]))]) - half)

    # title above; the design conditions and the bar table in a column on the right
    top = max(H + P(9), tag_hi, max(zl, default=0.0) + P(c.SMALL_MM))
    names = st.panels or tuple(q.panel.panel for q in result.panels
                               if q.section_type == st.section_type)
    listing = ", ".join(names[:6]) + (f" and {len(names) - 6} more" if len(names) > 6 else "")
    title = [f"SECTION {st.section_type}",
             f"panels {listing}; drawn at {p.panel}, the tallest"]
    c.add_text(blk, title[0], (left, top + P(7.5)), P(c.TITLE_MM), c.L_TITLES, A.BOTTOM_LEFT)
    c.add_text(blk, title[1], (left, top + P(2.5)), P(c.SMALL_MM), c.L_TITLES, A.BOTTOM_LEFT)
    head_right = max(left + P(lt.width(title[1], c.SMALL_MM)),
                     left + P(lt.width(title[0], c.TITLE_MM)))
    bottom = min(row2 - P(c.SMALL_MM) - P(3), tag_lo - P(2), min(zl, default=0.0) - P(2))
    x_col = right + P(8)
    z = top
    lines = conditions(result, st, pr)
    c.add_lines_text(blk, lines, (x_col, z), P(c.SMALL_MM), c.L_CONDITIONS,
                     P(COND_PITCH_MM), lt=lt)
    col_w = max(lt.width(t, c.SMALL_MM) for t in lines)
    z -= P(COND_PITCH_MM) * len(lines) + P(4)
    table = bar_table(rows)
    c.add_lines_text(blk, table, (x_col, z), P(TABLE_MM), c.L_TABLE, P(TABLE_PITCH_MM),
                     style=c.TABLE_STYLE, lt=lt)
    col_w = max(col_w, max(lt.width(t, TABLE_MM, mono=True) for t in table))
    z -= P(TABLE_PITCH_MM) * len(table)
    right = max(x_col + P(col_w), head_right)
    return (left, min(bottom, z), right, top + P(7.5 + c.TITLE_MM))


def slip_arc(pr, z_front: float, z_top: float, n: int = 48):
    """The critical slip circle of panel result ``pr`` in section coordinates (x from
    the toe edge, z above the underside of the base), m: the lower arc from where it
    meets the front ground level ``z_front`` to where it meets the retained level
    ``z_top`` (the drawing's simplification of the ground surfaces), with a label naming
    its combination and utilization; None where overall stability was not checked or
    no circle was found. The worst ``overall`` entry of the panel is drawn."""
    ov = [e for e in pr.checks.named({"overall"}) if e.circle is not None]
    if not ov:
        return None
    e = max(ov, key=lambda e: e.utilization)
    xc, zc, R = e.circle.x_m, e.circle.z_m - pr.panel.founding_m, e.circle.radius_m

    def x_at(z, sign):
        dz = z - zc
        return xc + sign * math.sqrt(max(R * R - dz * dz, 0.0))

    if min(z_front, z_top) >= zc + R or zc - R >= max(z_front, z_top):
        return None
    x1, x2 = x_at(min(z_front, zc), -1.0), x_at(min(z_top, zc), 1.0)
    xs = np.linspace(x1, x2, n + 1)
    zs = zc - np.sqrt(np.maximum(R * R - (xs - xc) ** 2, 0.0))
    label = (f"critical slip circle {e.combination}: R {R:.2f} m, utilization "
             f"{e.utilization:.2f}")
    return xs, zs, label


def _dot_row(blk, xs, zs, r: float) -> None:
    """Dots of radius r at (xs, zs) evenly spaced along a straight row: one grid
    insert of the dot block, rotated along the row."""
    xs, zs = np.asarray(xs, dtype=float), np.asarray(zs, dtype=float)
    if not len(xs):
        return
    name = c.dot_block(blk.doc, r)
    attribs = {"layer": c.L_DOTS}
    if len(xs) > 1:
        dx, dz = xs[1] - xs[0], zs[1] - zs[0]
        attribs["rotation"] = math.degrees(math.atan2(dz, dx))
        ref = blk.add_blockref(name, (xs[0], zs[0]), dxfattribs=attribs)
        ref.grid(size=(1, len(xs)), spacing=(1.0, math.hypot(dx, dz)))
    else:
        blk.add_blockref(name, (xs[0], zs[0]), dxfattribs=attribs)


def conditions(result, st, pr) -> list[str]:
    """The design conditions of the governing panel, as text lines."""
    site, p = result.site, pr.panel
    bf, fd = p.backfill, p.foundation
    h, H, D = p.retained_height_m, p.total_height_m, p.front_min_m - p.founding_m
    water = (f"water behind the wall at +{p.water_level_m:.3f}" if p.water_level_m is not None
             else "no water behind the wall (drained)")
    allow = (f"{fd.allowable_bearing_kpa:g} kPa" if fd.allowable_bearing_kpa > 0
             else "not given")
    return [
        f"DESIGN CONDITIONS at {p.panel}, {p.side} side, ch {c.chainage_label(p.ch_start_m)} "
        f"to {c.chainage_label(p.ch_end_m)}",
        f"retained height h = {h:.2f} m, total height H = {H:.2f} m, founding depth "
        f"D = {D:.2f} m",
        f"backfill: {bf.unit_weight_kn_m3:g} kN/m3, phi'k = {bf.friction_angle_deg:g} deg, "
        f"slope {bf.slope_deg:g} deg; surcharge q = {p.surcharge_kpa:g} kPa",
        f"foundation: {fd.unit_weight_kn_m3:g} kN/m3, phi'k = {fd.friction_angle_deg:g} deg, "
        f"c'k = {fd.cohesion_kpa:g} kPa, cu = {fd.undrained_strength_kpa:g} kPa",
        f"allowable bearing {allow}; {water}",
        f"concrete {site.concrete.strength_class}, cover {site.concrete.cover_mm:g} mm "
        f"({site.concrete.cover_ground_mm:g} mm against ground); fyk {site.steel.fyk_mpa:g} MPa",
        f"governing: {st.governing}, utilization {st.utilization:.2f}",
    ]


def bar_table(rows) -> list[str]:
    """The bar table of a section type as fixed-pitch text lines: a heading and one
    line per ``bar_schedule`` row (mark, member, size, shape code, length, number)."""
    head = ("mark", "part", "size", "shape", "length mm", "number")
    body = [(r.bar_mark, r.part, r.type_size, r.shape_code, f"{r.length_mm}",
             f"{r.number}") for r in rows]
    w = [max(len(x) for x in col) for col in zip(head, *body)]
    fmt = lambda cells: "  ".join(s.ljust(n) for s, n in zip(cells, w)).rstrip()  # noqa: E731
    lines = ["BARS  (bar_schedule.csv)", fmt(head)] + [fmt(b) for b in body]
    if not body:
        lines.append("no bar schedule rows for this section type")
    return lines


# --- the drawing -----------------------------------------------------------------------

def block_name(section_type: str, taken) -> str:
    """The block name of a section type: :data:`BLOCK_PREFIX` and the type's name, any
    character a DXF name may not hold (or that is not a letter, digit, ``-`` or ``_``)
    written as ``_``, and a number added when that name is ``taken`` already."""
    import re

    base = BLOCK_PREFIX + re.sub(r"[^A-Za-z0-9_-]", "_", section_type)[:200]
    name, k = base, 1
    while name.upper() in taken:
        k += 1
        name = f"{base}-{k}"
    return name


def build_blocks(doc, result, scale: int, lt: c.Lettering) -> list[tuple[str, str, tuple]]:
    """One block per section type drawn (types with a panel), in the order of
    ``result.section_types``, named by :func:`block_name`; returns (type, block name,
    box) for each."""
    gmap = governing_map(result)
    rows_of: dict[str, list] = {}
    for b in result.bar_schedule:
        rows_of.setdefault(b.section, []).append(b)
    out = []
    taken: set[str] = set()
    for st in result.section_types:
        pr = gmap.get(st.section_type)
        if pr is None:
            continue
        name = block_name(st.section_type, taken)
        taken.add(name.upper())
        blk = doc.blocks.new(name, dxfattribs={"description": f"section {st.section_type}"})
        box = draw_section(blk, result, st, pr, rows_of.get(st.section_type, []), scale, lt)
        out.append((st.section_type, name, box))
    return out


def pack(sizes, width: float, height: float, gap: float) -> list[list[tuple]]:
    """Shelf packing of boxes ``sizes`` (w, h) into pages ``width`` x ``height``: rows
    from the top left, left to right, in the given order. Returns pages of
    (index, x, y_top) with y_top measured down from the top of the page."""
    pages: list[list[tuple]] = [[]]
    x = y = row_h = 0.0
    for i, (w, h) in enumerate(sizes):
        if x > 0 and x + w > width:
            x, y, row_h = 0.0, y + row_h + gap, 0.0
        if y > 0 and y + h > height:
            pages.append([])
            x = y = row_h = 0.0
        pages[-1].append((i, x, y))
        x += w + gap
        row_h = max(row_h, h)
    return pages


NOTES = ("Each section is drawn at its tallest panel; bars are shown schematically at "
         "their covers, distribution bars as dots; bar marks refer to bar_schedule.csv.",
         "Section sizes in millimetres; levels in metres.")


def write_sections(result, path):
    """Write one cross-section per section type of ``result`` to ``path``, each a block
    inserted in model space, laid out on paper-space sheets (``[drawings] sheet``) at
    1:25 or 1:50 with one viewport each; returns the document written.

    Raises RuntimeError if the DXF audit reports errors (nothing is written then).
    """
    from wallrun.outputs.dxf import sheets

    site = result.site
    lt = c.Lettering()
    fr = sheets.frame(site, getattr(site.drawings, "sheet", "A1"), NOTES, lt=lt)
    ax0, ay0, ax1, ay1 = fr.area
    aw, ah = ax1 - ax0, ay1 - ay0
    start = SCALES.index(section_scale(result, ah))
    for scale in SCALES[start:]:
        doc = c.new_document(scale, "cross-sections")
        cells = build_blocks(doc, result, scale, lt)
        k = 1000.0 / scale  # paper mm per model m
        sizes = [((b[2] - b[0]) * k, (b[3] - b[1]) * k) for _t, _n, b in cells]
        if all(w <= aw - 6.0 and h <= ah - 6.0 for w, h in sizes) or scale == SCALES[-1]:
            break
    msp = doc.modelspace()
    pad = 3.0  # mm kept clear inside the viewport
    pages = pack(sizes, aw - 2 * pad, ah - 2 * pad, gap=8.0) if cells else [[]]
    m = scale / 1000.0  # model m per paper mm
    for n, page in enumerate(pages, start=1):
        top = -(n - 1) * (ah + 40.0) * m  # model y of the page's top edge
        for i, x, y in page:
            _t, name, b = cells[i]
            msp.add_blockref(name, ((x + pad) * m - b[0], top - (y + pad) * m - b[3]))
        types = [cells[i][0] for i, _x, _y in page]
        sub = (f"section types {types[0]} to {types[-1]}" if len(types) > 1 else
               f"section type {types[0]}" if types else "no section types")
        lay = sheets.new_sheet(doc, f"SECTIONS {n:02d}", fr, site, lt,
                               "Cross-sections of the section types", sub, f"1:{scale}",
                               n, len(pages), notes=NOTES, scale=scale)
        sheets.add_view(lay, fr.area, (aw / 2 * m, top - ah / 2 * m), scale)
        if not types:
            c.add_text(lay, "No section types to draw.", (ax0 + 10, ay1 - 10), c.TITLE_MM,
                       c.L_TITLES)
    sheets.finish(doc)
    c.save(doc, path)
    return doc

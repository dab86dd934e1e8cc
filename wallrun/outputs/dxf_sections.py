"""Cross-sections of the section types in use: ``sections.dxf``.

One cell per section type in a labelled grid (at most three columns), all at one
scale. Each cell is drawn at the type's governing panel, the tallest panel using it
(largest top of wall - founding level; the first such panel on a tie), in section
coordinates offset into the cell: x from the toe edge, z from the underside of the
base, m (design-basis section 2). A cell holds:

- the concrete outline (stem, base and key from the section polygons, one closed
  polyline) and the stem/base construction joint line;
- the ground in front at the panel's lowest front level, the backfill surface leaving
  the back face at the retained level at the backfill slope, the design water level;
- the bars: stem main bars along the back face (cover + half a bar in, down to the
  bottom mat with a foot towards the heel; a curtailed set stopping at
  ``stem_curtail_m``), front-face vertical bars, the base top (heel) and bottom (toe)
  mats, and the distribution bars cut in section as circles (drawn at least 0.7 mm
  across on paper so that they show; real size when larger);
- every bar mark of the type's ``bar_schedule`` rows in a bar table beside the section
  (one MTEXT per column, one line per row), and at leaders to the drawn bars: one
  leader per member and diameter (one polyline ending in a small circle on the bar),
  naming its marks (up to three, else the first and last and the count), the
  descriptions of one side in one MTEXT, a line per leader;
- DIMENSION entities for toe, stem base thickness, heel, base width, base
  thickness, stem top thickness, stem height and key depth/width (none of zero length,
  e.g. no toe); each carries its name as XDATA of application ``WALLRUN`` (e.g.
  ``base_width_m``); each has a geometry block of its own built directly with two
  entities (see :func:`_dimension`), which is what keeps a drawing of hundreds of
  section types quick to write;
- level labels (top of wall, retained level, front ground, underside of base) and
  the design conditions of the governing panel.

Each cell's entities form a DXF group ``WALLRUN-SECTION-<type>``. Entities are made
with ``drafting.add_entity`` (attributes stored directly, the same entities as
ezdxf's ``add_*`` make) and the file written by ``drafting.save_document``.
"""

from __future__ import annotations

import math

import numpy as np
from ezdxf.enums import TextEntityAlignment as A

from wallrun.outputs import drafting as d

APPID = "WALLRUN"


def governing_panel(result, section_type: str):
    """The tallest PanelResult of a section type (max wall top - founding level)."""
    prs = [pr for pr in result.panels if pr.section_type == section_type]
    if not prs:
        return None
    return max(prs, key=lambda pr: max(pr.panel.wall_top_start_m, pr.panel.wall_top_end_m)
               - pr.panel.founding_m)


def governing_map(result) -> dict:
    """{section type: its tallest PanelResult}, as :func:`governing_panel`, in one pass."""
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


def _category(member: str) -> str:
    """Which drawn bar a schedule row's member belongs to."""
    m = member.lower()
    if "front" in m:
        return "stem_front"
    if "horiz" in m:
        return "stem_horizontal"
    if "dist" in m or "transverse" in m or "longitudinal" in m:
        return "base_distribution"
    if "key" in m:
        return "key"
    if "heel" in m or "top" in m:
        return "heel"
    if "toe" in m or "bottom" in m:
        return "toe"
    if "stem" in m or "starter" in m or "main" in m:
        return "stem"
    return "other"


class _Cell:
    """Drawing helper for one cell: offsets section coordinates by the origin."""

    def __init__(self, doc, msp, origin, scale, dim_sizes=None):
        self.doc, self.msp = doc, msp
        self.dim_sizes = dim_sizes or _dim_sizes(doc)
        self.ox, self.oy = float(origin[0]), float(origin[1])
        self.scale = scale

    def P(self, mm):
        return d.paper(mm, self.scale)

    def pt(self, x, z):
        return (self.ox + float(x), self.oy + float(z))

    def poly(self, pts, layer, close=False):
        a = d.lw_rows(pts)
        a[:, 0] += self.ox
        a[:, 1] += self.oy
        return d.add_entity(self.msp, "LWPOLYLINE", {"layer": layer, "flags": int(close)}, a)

    def line(self, p, q, layer):
        return d.add_entity(self.msp, "LINE", {"layer": layer, "start": self.pt(*p),
                                               "end": self.pt(*q)})

    def text(self, s, x, z, layer, align=A.MIDDLE_LEFT, mm=d.SMALL_MM, rotation=0.0):
        return d.add_text(self.msp, s, self.pt(x, z), self.P(mm), layer, align, rotation)

    def dot_rows(self, xs, zs, r):
        """Circles of radius r at (xs, zs), as few MINSERTs of a one-circle block as
        there are straight, evenly spaced runs of consecutive points (one INSERT with
        a column count and spacing, rotated along the run, per run)."""
        xs, zs = np.asarray(xs, dtype=float), np.asarray(zs, dtype=float)
        blk = _dot_block(self.doc, r)
        i, n = 0, len(xs)
        while i < n:
            j = i + 1
            if j < n:
                dx, dz = xs[j] - xs[i], zs[j] - zs[i]
                while (j + 1 < n and abs(xs[j + 1] - xs[j] - dx) < 1e-9
                       and abs(zs[j + 1] - zs[j] - dz) < 1e-9):
                    j += 1
                j += 1
            cnt = j - i
            attribs = {"layer": d.L_DOTS, "name": blk, "insert": self.pt(xs[i], zs[i])}
            if cnt > 1:
                dx, dz = xs[i + 1] - xs[i], zs[i + 1] - zs[i]
                attribs.update(rotation=math.degrees(math.atan2(dz, dx)), row_count=1,
                               column_count=cnt, row_spacing=1.0,
                               column_spacing=math.hypot(dx, dz))
            d.add_entity(self.msp, "INSERT", attribs)
            i = j

    def circle(self, x, z, r, layer):
        return d.add_entity(self.msp, "CIRCLE", {"layer": layer, "center": self.pt(x, z),
                                                 "radius": float(r)})

    def dim(self, name, p1, p2, base, vertical=False):
        """A linear DIMENSION named by XDATA, with its own minimal geometry block
        (:func:`_dimension`); none for a zero length (e.g. no toe)."""
        if math.hypot(p2[0] - p1[0], p2[1] - p1[1]) < 1e-9:
            return None
        return _dimension(self.doc, self.msp, name, self.pt(*p1), self.pt(*p2),
                          self.pt(*base), 90.0 if vertical else 0.0, self.dim_sizes)

    def mtext(self, lines, x, z, layer, mm=d.SMALL_MM, pitch_mm=4.2, attach=1):
        """One MTEXT of ``lines`` with its top left (``attach`` 1; 3: top right) at
        (x, z), lines ``pitch_mm`` apart on paper (exact spacing)."""
        text = "\\P".join(_mtext_escape(str(t)) for t in lines)
        m = d.add_entity(self.msp, "MTEXT", {
            "layer": layer, "style": d.TEXT_STYLE, "char_height": self.P(mm),
            "insert": self.pt(x, z), "attachment_point": attach,
            "line_spacing_style": 2,  # exact
            "line_spacing_factor": pitch_mm / (mm * 5.0 / 3.0)})
        m.text = text
        return m

    def leader(self, start, anchor, r, layer):
        """A bar-mark leader as one LWPOLYLINE: from ``start`` to the edge of a circle of radius ``r`` round ``anchor``
        (section coordinates), then round that circle as two half-circle arcs."""
        ax, az = self.pt(*anchor)
        sx, sz = self.pt(*start)
        L = math.hypot(sx - ax, sz - az)
        ex, ez = ((sx - ax) / L, (sz - az) / L) if L > 1e-12 else (1.0, 0.0)
        c1 = (ax + r * ex, az + r * ez)
        c2 = (ax - r * ex, az - r * ez)
        rows = d.lw_rows([(sx, sz), c1, c2, c1], bulges=(0.0, 1.0, 1.0, 0.0))
        return d.add_entity(self.msp, "LWPOLYLINE", {"layer": layer, "flags": 0}, rows)

    def level_tag(self, label, x, z, left=False):
        """Small downward triangle at (x, z) and the label beside it."""
        s = self.P(1.6)
        self.poly([(x, z), (x - s, z + 1.6 * s), (x + s, z + 1.6 * s)], d.L_LEVEL_TAGS,
                  close=True)
        if left:
            self.text(label, x - 1.6 * s, z + 1.0 * s, d.L_LEVEL_TAGS, A.BOTTOM_RIGHT)
        else:
            self.text(label, x + 1.6 * s, z + 1.0 * s, d.L_LEVEL_TAGS, A.BOTTOM_LEFT)


def _dim_sizes(doc) -> dict:
    """The sizes (model m) and colours of wallrun's dimension style in ``doc``."""
    ds = doc.dimstyles.get(d.DIM_STYLE).dxf
    k = ds.dimscale
    return {"exo": ds.dimexo * k, "exe": ds.dimexe * k, "tsz": ds.dimtsz * k,
            "gap": ds.dimgap * k, "txt": ds.dimtxt * k, "lfac": ds.dimlfac,
            "dec": int(ds.dimdec), "clrd": ds.dimclrd, "clrt": ds.dimclrt}


def _dimension(doc, msp, name, p1, p2, base, angle_deg, z: dict):
    """A linear DIMENSION from ``p1`` to ``p2`` (model xy, m) with its dimension line
    through ``base`` at ``angle_deg``, drawn in wallrun's dimension style.

    The DIMENSION carries the standard definition points (code 10: the dimension line
    at the second extension line; 13, 14: the measured points; 11: the text middle),
    the actual measurement (code 42) and its name as XDATA. Its geometry block
    (``*D<n>``, in model coordinates as DXF requires for dimension blocks) holds two
    entities instead of the dozen of a full render: one LWPOLYLINE tracing both
    extension lines (``dimexo`` off the measured points, ``dimexe`` beyond the
    dimension line), the dimension line and the two oblique ticks (``dimtsz``),
    retracing where a stroke turns back; and one TEXT of the measurement x
    ``dimlfac`` (mm) to ``dimdec`` decimals, ``dimgap`` above the line. Block entities
    are on layer 0 (they take the DIMENSION's layer), the polyline in the style's
    dimension-line colour (which it gives the extension lines too), the text in its
    text colour. Sizes
    ``z`` from :func:`_dim_sizes`, model m.
    """
    a = math.radians(angle_deg)
    ux, uy = math.cos(a), math.sin(a)
    nx, ny = -uy, ux  # the side the text stands on
    bx, by = base

    def foot(p):
        t = (p[0] - bx) * ux + (p[1] - by) * uy
        return (bx + t * ux, by + t * uy)

    d1, d2 = foot(p1), foot(p2)
    meas = abs((p2[0] - p1[0]) * ux + (p2[1] - p1[1]) * uy)

    def ext(p, q):  # extension line from near p to beyond q (its foot)
        vx, vy = q[0] - p[0], q[1] - p[1]
        L = math.hypot(vx, vy)
        ex, ey = (vx / L, vy / L) if L > 1e-12 else (-nx, -ny)
        return ((p[0] + ex * z["exo"], p[1] + ey * z["exo"]),
                (q[0] + ex * z["exe"], q[1] + ey * z["exe"]))

    (s1, e1), (s2, e2) = ext(p1, d1), ext(p2, d2)
    t = z["tsz"]
    tx, ty = t * (ux + nx), t * (uy + ny)
    path = [s1, e1, d1, (d1[0] - tx, d1[1] - ty), (d1[0] + tx, d1[1] + ty), d1,
            d2, (d2[0] - tx, d2[1] - ty), (d2[0] + tx, d2[1] + ty), d2, e2, s2]
    off = z["gap"] + z["txt"] / 2
    mid = ((d1[0] + d2[0]) / 2 + nx * off, (d1[1] + d2[1]) / 2 + ny * off)
    blk = d.new_anonymous_block(doc, "D")
    d.add_entity(blk, "LWPOLYLINE", {"layer": "0", "color": z["clrd"], "flags": 0},
                 d.lw_rows(path))
    d.add_entity(blk, "TEXT", {
        "text": f"{meas * z['lfac']:.{z['dec']}f}", "height": float(z["txt"]),
        "rotation": float(angle_deg), "layer": "0", "color": z["clrt"],
        "style": d.TEXT_STYLE, "halign": 1, "valign": 2, "insert": mid, "align_point": mid})
    dim = d.add_entity(msp, "DIMENSION", {
        "layer": d.L_DIMS, "dimstyle": d.DIM_STYLE, "geometry": blk.name,
        "dimtype": 32,  # linear (0) with a block of its own (32)
        "defpoint": d2, "defpoint2": p1, "defpoint3": p2, "angle": angle_deg,
        "text_midpoint": mid, "attachment_point": 5, "text": "<>",
        "actual_measurement": meas})
    dim.set_xdata(APPID, [(1000, name)])
    return dim


def _mtext_escape(s: str) -> str:
    """Plain text for MTEXT content: backslashes and braces escaped."""
    return s.replace("\\", "\\\\").replace("{", "\\{").replace("}", "\\}")


def _dot_block(doc, r: float) -> str:
    """Name of the block holding one circle of radius r (m) at its origin, made once
    per radius (to 0.01 mm) on the cross-bar layer."""
    name = f"WALLRUN-BAR-DOT-{round(r * 1e5):d}"
    if name not in doc.blocks:
        doc.blocks.new(name).add_circle((0.0, 0.0), round(r * 1e5) / 1e5,
                                        dxfattribs={"layer": d.L_DOTS})
    return name


def _bars(sec, reinf, hd, hc, cover_m, cover_ground_m, has_front):
    """Bar geometry in section coordinates, m: polylines of the main bars and the
    centres of the distribution bars (see the module docstring)."""
    toe, tb, B = sec.toe_m, sec.base_thickness_m, sec.base_width_m
    tsb, tst = sec.stem_base_m, sec.stem_top_m
    c, cg = cover_m, cover_ground_m
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

    o = c + ps / 2
    z_top_bar = tb + hd - c
    z_foot = cg + pt_ + ps / 2
    foot = min(B - c - (toe + tsb - o), max(0.3, 0.6 * sec.heel_m))
    stem = [(float(x_back(z_top_bar)) - o, z_top_bar)]
    if tb + hc < z_top_bar - 1e-6:
        stem.append((toe + tst - o, tb + hc))
    stem += [(toe + tsb - o, tb), (toe + tsb - o, z_foot), (toe + tsb - o + foot, z_foot)]
    out = {"stem": stem, "toe": [(c, cg + pt_ / 2), (B - c, cg + pt_ / 2)],
           "heel": [(c, tb - c - ph / 2), (B - c, tb - c - ph / 2)]}
    if reinf.stem_curtail_m:
        zc = min(tb + reinf.stem_curtail_m, z_top_bar)
        sh = 2.0 * ps  # drawn beside the full-height bars for clarity
        out["stem_curtailed"] = [(float(x_back(zc)) - o - sh, zc), (toe + tsb - o - sh, tb),
                                 (toe + tsb - o - sh, z_foot + sh),
                                 (toe + tsb - o + foot - sh, z_foot + sh)]
    xf = toe + c + pf / 2
    if has_front:
        zf = cg + pt_ + pf / 2
        out["stem_front"] = [(xf, z_top_bar), (xf, zf), (c, zf)]
    # distribution bars cut in section
    s_h = reinf.stem_horizontal.spacing_mm / 1000.0
    zs = np.arange(tb + s_h / 2, z_top_bar, s_h) if s_h > 0 else np.array([])
    xb = x_back(zs) - o - ps / 2 - phz / 2
    xfr = np.full_like(zs, (xf + pf / 2 + phz / 2) if has_front else toe + c + phz / 2)
    out["stem_horizontal_dots"] = (np.concatenate([xb, xfr]), np.concatenate([zs, zs]), phz)
    s_d = reinf.base_distribution.spacing_mm / 1000.0
    xs = np.arange(c + s_d / 2, B - c, s_d) if s_d > 0 else np.array([])
    z_top_d = tb - c - ph - pd / 2
    z_bot_d = cg + pt_ + pd / 2
    out["base_distribution_dots"] = (np.concatenate([xs, xs]),
                                     np.concatenate([np.full_like(xs, z_top_d),
                                                     np.full_like(xs, z_bot_d)]), pd)
    if sec.key_depth_m > 0 and sec.key_width_m > 0:
        kd, kw = sec.key_depth_m, sec.key_width_m
        zk = -kd + cg
        out["key"] = [(toe + c, tb - c), (toe + c, zk), (toe + kw - c, zk),
                      (toe + kw - c, tb - c)]
    return out


def _extent(result, scale, gmap=None):
    """Largest section extents over the types drawn, m: (B, above, below)."""
    gmap = governing_map(result) if gmap is None else gmap
    B = above = below = 0.0
    for st in result.section_types:
        pr = gmap.get(st.section_type)
        if pr is None:
            continue
        hd, _ = stem_heights(pr)
        B = max(B, st.section.base_width_m)
        above = max(above, st.section.base_thickness_m + hd)
        below = max(below, st.section.key_depth_m)
    return B, above, below


def section_scale(result) -> int:
    """Scale of the sections, 1:N: the tallest drawn section (key bottom to top of wall)
    at most 140 mm high on paper, and at least 1:20."""
    _, above, below = _extent(result, 1)
    return max(20, d.pick_scale((above + below) * 1000.0 / 140.0))


def _rows_for(result, st: str):
    return [b for b in result.bar_schedule if b.section == st]


def _draw_cell(cell: _Cell, result, st, pr, rows, B_max):
    site = result.site
    sec, reinf, p = st.section, st.reinforcement, pr.panel
    P = cell.P
    toe, tb, B = sec.toe_m, sec.base_thickness_m, sec.base_width_m
    tsb, tst = sec.stem_base_m, sec.stem_top_m
    kd, kw = sec.key_depth_m, sec.key_width_m
    hd, hc = stem_heights(pr)
    slope = p.backfill.slope_deg

    # concrete
    polys = d.section_outline(sec, hd, hc, slope)
    cell.poly(d.concrete_outline(polys), d.L_CONCRETE, close=True)
    cell.line((toe, tb), (toe + tsb, tb), d.L_BASE_TOP)

    # ground, backfill, water
    zf = p.front_min_m - p.founding_m
    x_end = toe if zf >= tb else 0.0
    cell.line((-P(40), zf), (x_end, zf), d.L_FRONT)
    zt = tb + hc
    xb = toe + tst
    t = math.tan(math.radians(slope))
    x_far = B + P(25)
    cell.line((xb, zt), (x_far, zt + (x_far - xb) * t), d.L_FILL)
    if p.water_level_m is not None:
        zw = min(p.water_level_m - p.founding_m, zt)
        if zw > 0:
            frac = min(max((zw - tb) / hc, 0.0), 1.0)
            xw = toe + tsb + (tst - tsb) * frac if zw >= tb else B
            cell.line((xw, zw), (x_far, zw), d.L_WATER)
            cell.text(f"DESIGN WATER LEVEL +{p.water_level_m:.3f}", x_far, zw + P(1),
                      d.L_WATER, A.BOTTOM_RIGHT)

    # bars
    cats = {}
    for r in rows:
        cats.setdefault(_category(r.member), []).append(r)
    has_front = reinf.stem_front is not None or "stem_front" in cats
    g = _bars(sec, reinf, hd, hc, site.concrete.cover_mm / 1000.0,
              site.concrete.cover_ground_mm / 1000.0, has_front)
    for key in ("stem", "stem_curtailed", "stem_front", "heel", "toe"):
        if key in g:
            cell.poly(g[key], d.L_BARS)
    if "key" in g and "key" in cats:
        cell.poly(g["key"], d.L_BARS)
    rmin = P(0.35)
    for key in ("stem_horizontal_dots", "base_distribution_dots"):
        xs, zs, phi = g[key]
        cell.dot_rows(xs, zs, max(phi / 2, rmin))

    # bar marks with leaders; anchors on the drawn bars
    def on(poly, f):
        pts = np.asarray(poly, dtype=float)
        seg = np.hypot(*np.diff(pts, axis=0).T)
        s = f * seg.sum()
        k = int(np.searchsorted(np.cumsum(seg), s))
        k = min(k, len(seg) - 1)
        s0 = np.cumsum(seg)[k] - seg[k]
        u = (s - s0) / seg[k] if seg[k] > 0 else 0.0
        return tuple(pts[k] + u * (pts[k + 1] - pts[k]))

    def dot(key, i_from_end=False):
        xs, zs, _ = g[key]
        if len(xs) == 0:
            return (toe, tb)
        i = len(xs) // 4 if not i_from_end else len(xs) // 2 + len(xs) // 4
        return (float(xs[i]), float(zs[i]))

    spacing = {"stem": reinf.stem.spacing_mm, "heel": reinf.heel.spacing_mm,
               "toe": reinf.toe.spacing_mm,
               "stem_horizontal": reinf.stem_horizontal.spacing_mm,
               "base_distribution": reinf.base_distribution.spacing_mm,
               "stem_front": reinf.stem_front.spacing_mm if reinf.stem_front else None}
    # one leader per group of marks: (member, diameter); the stem main bars split into
    # the full-height and the curtailed set (longer / shorter half) where curtailed
    groups: dict[tuple, list] = {}
    for cat, rs in cats.items():
        for r in rs:
            sub = 0
            if cat == "stem" and "stem_curtailed" in g and len(rs) > 1:
                med = float(np.median([q.length_mm for q in rs]))
                sub = 0 if r.length_mm >= med else 1
            groups.setdefault((cat, r.member, r.bar_mm, sub), []).append(r)
    left, right = [], []
    seen: dict[str, int] = {}
    for (cat, member, phi, sub), rs in groups.items():
        i = seen[cat] = seen.get(cat, -1) + 1  # leaders of one bar spread along it
        if cat == "stem":
            poly = g["stem_curtailed"] if sub == 1 else g["stem"]
            anchor = on(poly, 0.25 + 0.08 * i)
            sp = spacing["stem"] * (2 if "stem_curtailed" in g and len(cats["stem"]) > 1 else 1)
            side = right
        elif cat in ("heel", "toe", "stem_front", "key"):
            poly = g.get(cat) or g["heel"]
            anchor = on(poly, {"heel": 0.8, "toe": 0.15, "stem_front": 0.55,
                               "key": 0.5}[cat] + 0.05 * i)
            sp = spacing.get(cat)
            side = right if cat == "heel" else left
        elif cat == "stem_horizontal":
            anchor, sp, side = dot("stem_horizontal_dots", True), spacing[cat], right
        elif cat == "base_distribution":
            anchor, sp, side = dot("base_distribution_dots"), spacing[cat], right
        else:
            anchor, sp, side = (B / 2, tb / 2), None, right
        marks = [r.bar_mark for r in rs]
        mtext = ", ".join(marks) if len(marks) <= 3 else \
            f"{marks[0]} ... {marks[-1]} ({len(marks)} marks)"
        desc = f"{mtext}  {phi} mm" + (f" at {sp:g} mm" if sp else "") + f"  ({member})"
        side.append((anchor, marks[0], desc))
    right.sort(key=lambda t: -t[0][1])
    left.sort(key=lambda t: -t[0][1])
    r_dot = P(0.4)
    for labels, x_lab, z_lab, gap, attach in ((right, B + P(10), tb + hd - P(4), -P(1), 1),
                                               (left, -P(24), tb + hd * 0.75, P(1), 3)):
        for k, (anchor, _mark, _desc) in enumerate(labels):
            cell.leader((x_lab + gap, z_lab - P(6) * k), anchor, r_dot, d.L_MARKS)
        if labels:  # the descriptions as one MTEXT per side, lines 6 mm apart
            cell.mtext([desc for _a, _m, desc in labels], x_lab, z_lab + P(d.SMALL_MM / 2),
                       d.L_MARKS, pitch_mm=6.0, attach=attach)

    # bar table: a title, one MTEXT per column (heading, then one line per row at 5 mm
    # pitch on paper), and one polyline for the frame and the rule under the headings
    x0 = B_max + P(78)
    z0 = tb + hd
    cols = [("mark", 0), ("member", 12), ("dia mm", 44), ("shape", 58), ("length mm", 72),
            ("number", 92)]
    width = P(106)
    cell.text(f"BARS OF SECTION {st.section_type}", x0, z0 + P(3), d.L_TABLE, A.BOTTOM_LEFT,
              mm=d.TEXT_MM)
    vals = [[r.bar_mark, r.member, f"{r.bar_mm}", r.shape_code, f"{r.length_mm}",
             f"{r.number}"] for r in rows]
    for k, (head, off) in enumerate(cols):
        cell.mtext([head] + [v[k] for v in vals], x0 + P(off + 1),
                   z0 - P(3) + P(d.SMALL_MM / 2), d.L_TABLE, pitch_mm=5.0)
    z = z0 - P(8) - P(5) * len(rows)
    zr, zb = z0 - P(5.5), z + P(2)
    cell.poly([(x0 + width, zr), (x0, zr), (x0, z0), (x0 + width, z0), (x0 + width, zb),
               (x0, zb), (x0, zr)], d.L_TABLE)
    if not rows:
        cell.text("no bar schedule rows for this section type", x0 + P(1), z, d.L_TABLE)

    # dimensions
    zk = -kd
    row_key, row1, row2 = zk - P(5), zk - P(13), zk - P(21)
    cell.dim("toe_m", (0.0, 0.0), (toe, 0.0), (0.0, row1))
    cell.dim("stem_base_m", (toe, 0.0), (toe + tsb, 0.0), (0.0, row1))
    cell.dim("heel_m", (toe + tsb, 0.0), (B, 0.0), (0.0, row1))
    cell.dim("base_width_m", (0.0, 0.0), (B, 0.0), (0.0, row2))
    cell.dim("base_thickness_m", (0.0, 0.0), (0.0, tb), (-P(8), 0.0), vertical=True)
    cell.dim("stem_height_m", (toe, tb), (toe, tb + hd), (-P(16), 0.0), vertical=True)
    cell.dim("stem_top_m", (toe, tb + hd), (toe + tst, tb + hd), (0.0, tb + hd + P(7)))
    if kd > 0 and kw > 0:
        cell.dim("key_width_m", (toe, zk), (toe + kw, zk), (0.0, row_key))
        cell.dim("key_depth_m", (toe + kw, zk), (toe + kw, 0.0), (toe + kw + P(6), 0.0),
                 vertical=True)

    # levels
    top = max(p.wall_top_start_m, p.wall_top_end_m)
    cell.level_tag(f"TOP OF WALL +{top:.3f}", toe + tst + P(3), tb + hd)
    zB = zt + (B - xb) * t
    cell.level_tag(f"RETAINED +{p.retained_top_m:.3f}", B + P(20), zB + (P(20)) * t)
    cell.level_tag(f"FRONT GROUND +{p.front_min_m:.3f}", -P(30), zf, left=True)
    cell.level_tag(f"UNDERSIDE OF BASE +{p.founding_m:.3f}", -P(30), 0.0, left=True)

    # title and design conditions
    names = st.panels or tuple(q.panel.panel for q in result.panels
                               if q.section_type == st.section_type)
    listing = ", ".join(names[:8]) + (f" ... ({len(names)} panels)" if len(names) > 8 else "")
    cell.text(f"SECTION {st.section_type}", -P(40), tb + hd + P(20), d.L_TITLES,
              A.BOTTOM_LEFT, mm=d.TITLE_MM)
    cell.text(f"panels {listing}; drawn at {p.panel}, the tallest", -P(40),
              tb + hd + P(15), d.L_TITLES, A.BOTTOM_LEFT)
    bf, fd = p.backfill, p.foundation
    h, H, D = p.retained_height_m, p.total_height_m, p.front_min_m - p.founding_m
    water = (f"water behind the wall at +{p.water_level_m:.3f}" if p.water_level_m is not None
             else "no water behind the wall (drained)")
    allow = (f"{fd.allowable_bearing_kpa:g} kPa" if fd.allowable_bearing_kpa > 0
             else "not given")
    lines = [
        f"DESIGN CONDITIONS at {p.panel}, {p.side} side, ch {d.chainage_label(p.ch_start_m)} "
        f"to {d.chainage_label(p.ch_end_m)}",
        f"retained height h = {h:.2f} m, total height H = {H:.2f} m, founding depth "
        f"D = {D:.2f} m",
        f"backfill: unit weight {bf.unit_weight_kn_m3:g} kN/m3, phi'k = "
        f"{bf.friction_angle_deg:g} deg, surface slope {bf.slope_deg:g} deg",
        f"foundation: unit weight {fd.unit_weight_kn_m3:g} kN/m3, phi'k = "
        f"{fd.friction_angle_deg:g} deg, c'k = {fd.cohesion_kpa:g} kPa, "
        f"cu = {fd.undrained_strength_kpa:g} kPa, allowable bearing {allow}",
        f"surcharge q = {p.surcharge_kpa:g} kPa; {water}",
        f"concrete {site.concrete.strength_class}, cover {site.concrete.cover_mm:g} mm "
        f"({site.concrete.cover_ground_mm:g} mm against ground); steel fyk "
        f"{site.steel.fyk_mpa:g} MPa",
        f"governing: {st.governing}, utilization {st.utilization:.2f}",
    ]
    z = row2 - P(9)
    cell.mtext(lines, -P(40), z + P(d.SMALL_MM / 2), d.L_CONDITIONS, pitch_mm=4.2)
    return z - P(4.2) * len(lines)


def write_sections(result, path) -> None:
    """Write one cross-section per section type of ``result`` to ``path``.

    Raises RuntimeError if the DXF audit reports errors (nothing is written then).
    Built and written with the garbage collector paused (``drafting.gc_paused``).
    """
    with d.gc_paused():
        _write_sections(result, path)


def _write_sections(result, path) -> None:
    """The drawing of :func:`write_sections`, audited and saved."""
    scale = section_scale(result)
    doc = d.new_document(scale, "cross-sections")
    if APPID not in doc.appids:
        doc.appids.new(APPID)
    msp = doc.modelspace()
    P = lambda mm: d.paper(mm, scale)  # noqa: E731
    gmap = governing_map(result)
    dim_sizes = _dim_sizes(doc)
    rows_of: dict[str, list] = {}
    for b in result.bar_schedule:
        rows_of.setdefault(b.section, []).append(b)
    B_max, above, below = _extent(result, scale, gmap)
    types = [st for st in result.section_types if gmap.get(st.section_type)]
    left, right = P(75), B_max + P(78 + 106 + 8)
    top, bottom = above + P(28), below + P(21 + 9 + 8 * 4.2 + 6)
    for st in types:  # room for the longest bar table below the top of its section
        pr = gmap[st.section_type]
        z0 = st.section.base_thickness_m + stem_heights(pr)[0]
        n = len(rows_of.get(st.section_type, ()))
        bottom = max(bottom, P(8 + 5 * n + 8) - z0)
    cw, ch = left + right, top + bottom
    ncols = max(1, min(3, len(types)))
    for i, st in enumerate(types):
        col, row = i % ncols, i // ncols
        ox, oy = col * cw + left, -row * ch - top
        start = len(msp)
        cell = _Cell(doc, msp, (ox, oy), scale, dim_sizes)
        cell.poly([(-left + P(2), -bottom + P(2)), (right - P(2), -bottom + P(2)),
                   (right - P(2), top - P(2)), (-left + P(2), top - P(2))], d.L_FRAME,
                  close=True)
        _draw_cell(cell, result, st, gmap[st.section_type],
                   rows_of.get(st.section_type, []), B_max)
        ents = [msp[i] for i in range(start, len(msp))]
        d.new_group(doc, f"{d.SECTION_GROUP_PREFIX}{st.section_type}", ents,
                    description=f"section {st.section_type}")
    nrows = max(1, math.ceil(len(types) / ncols))
    if not types:
        d.add_text(msp, "No section types to draw.", (0.0, 0.0), P(d.TITLE_MM), d.L_TITLES)
    d.sheet_furniture(msp, (ncols * cw, -nrows * ch - P(8) - P(d.TITLE_H_MM)), scale,
                      result.site.project, "Cross-sections of the section types",
                      f"1:{scale}",
                      extra_title=(f"{len(types)} section type(s)",),
                      extra_notes=("Each section is drawn at its tallest panel; bars are "
                                   "shown schematically at their covers, distribution bars "
                                   "as circles; bar marks refer to bar_schedule.csv.",))
    d.audit_or_raise(doc, path)
    d.save_document(doc, path)

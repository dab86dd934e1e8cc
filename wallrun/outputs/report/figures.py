"""The report's figures.

- :func:`run_png`: the long section along the run (ground, finished level, wall top,
  underside of base, panel ends, a band of section types; below it the retained
  height), drawn with matplotlib's object interface (a ``Figure`` of its own, no
  pyplot state, so that two reports can be drawn at once) and saved as PNG. The
  legends sit at fixed places outside the axes.
- :func:`section_drawings`: the dimensioned cross-section of each section type at its
  governing panel, as the paths and labels of a small SVG that the template
  ``section.svg.j2`` writes inline (one drawing is about 1 kB, so that a report of
  hundreds of section types stays small). The outlines are the vertex functions of
  :mod:`wallrun.section` (design-basis section 2), evaluated for all types at once.
"""

from __future__ import annotations

import io
import math
from dataclasses import dataclass

import numpy as np
from matplotlib import colormaps
from matplotlib.collections import LineCollection, PolyCollection
from matplotlib.figure import Figure
from matplotlib.patches import Patch

from wallrun.section import base_vertices, key_vertices, soil_vertices, stem_vertices

#: Width of a cross-section drawing, px (the page scales it).
DRAWING_WIDTH = 320
#: Most points drawn along a profile in the long section (800 px wide): a survey point
#: every 0.5 m over 10 km is sampled at equal steps instead.
MAX_PROFILE_POINTS = 4001
#: Most panels whose ends are drawn as lines in the long section (720 px wide).
MAX_PANEL_LINES = 300


@dataclass(frozen=True)
class Label:
    """A text of a drawing at (x, y) px; ``cls``: ``m`` centred, ``v`` vertical
    (centred, reading upwards), ``e`` ending at x, "" starting at x."""

    x: int
    y: int
    text: str
    cls: str = ""


@dataclass(frozen=True)
class SectionDrawing:
    """One cross-section: size in px, ``paths`` as (css class, SVG path data) and the
    labels. Classes: ``soil``, ``conc`` (concrete), ``gnd`` (ground lines), ``vb``
    (virtual back), ``wat`` (water), ``ret`` (retained level under a sloping
    backfill), ``dim`` (dimension lines; one subpath a line)."""

    width: int
    height: int
    paths: tuple[tuple[str, str], ...]
    labels: tuple[Label, ...]


class _Pen:
    """World (m; x from the toe edge, z up from the underside of the base) to px."""

    def __init__(self, x0: float, z1: float, k: float):
        self.x0, self.z1, self.k = x0, z1, k

    def p(self, x, z) -> str:
        return "%d %d" % self.xy(x, z)

    def xy(self, x, z) -> tuple[float, float]:
        return round((x - self.x0) * self.k), round((self.z1 - z) * self.k)

    def outline(self, xs, zs) -> str:
        return "M" + "L".join(self.p(x, z) for x, z in zip(xs, zs)) + "Z"

    def line(self, a, b) -> str:
        return f"M{self.p(*a)}L{self.p(*b)}"


def _dim(pen: _Pen, a, b, text: str, vertical: bool, out: list, labels: list) -> None:
    """A dimension line from a to b (world; horizontal or vertical), labelled at its
    middle (above a horizontal line, left of a vertical one); the stylesheet puts an
    oblique tick at both ends (an SVG marker at every vertex of the ``dim`` path)."""
    (ax, ay), (bx, by) = pen.xy(*a), pen.xy(*b)
    run = f"v{by - ay}" if vertical else f"h{bx - ax}"
    out.append(f"M{ax} {ay}{run}")
    mx, my = (ax + bx) // 2, (ay + by) // 2
    if vertical:
        labels.append(Label(mx - 4, my, text, "v"))
    elif abs(bx - ax) < 6 * len(text):  # too short for its label: the label below
        labels.append(Label(mx, my + 8, text, "m"))
    else:
        labels.append(Label(mx, my - 4, text, "m"))


def section_drawings(sections, panels) -> list[SectionDrawing]:
    """The drawing of each section (``wallrun.section.Section``) at its governing panel
    (``PanelResult`` or None: then a stem of three times its base thickness, at least
    1 m, is drawn without levels). Dimensions in m, levels in m."""
    n = len(sections)
    if n == 0:
        return []
    col = lambda name: np.array([getattr(s, name) for s in sections], dtype=float)  # noqa: E731
    B, toe, t = col("base_width_m"), col("toe_m"), col("base_thickness_m")
    tsb, tst = col("stem_base_m"), col("stem_top_m")
    dk, wk = col("key_depth_m"), col("key_width_m")
    hc, hd = np.empty(n), np.empty(n)
    beta = np.zeros(n)
    for i, (s, p) in enumerate(zip(sections, panels)):
        if p is None:
            hc[i] = hd[i] = max(3.0 * s.stem_base_m, 1.0)
        else:
            pn = p.panel
            hc[i] = max(pn.retained_top_m - pn.founding_m - s.base_thickness_m, 0.05)
            hd[i] = max(max(pn.wall_top_start_m, pn.wall_top_end_m) - pn.founding_m
                        - s.base_thickness_m, hc[i])
            beta[i] = pn.backfill.slope_deg
    stem = stem_vertices(toe, t, tsb, tst, hc, hd)
    base = base_vertices(B, t)
    key = key_vertices(toe, dk, wk)
    soil = soil_vertices(toe, t, tsb, tst, B, hc, beta)
    return [_drawing(sections[i], panels[i], hc[i], hd[i], beta[i],
                     [(v[0][i], v[1][i]) for v in (stem, base, key, soil)])
            for i in range(n)]


#: Room of a drawing, px: left of the front ground line (vertical dimensions), right of
#: the backfill line (level labels), between dimension lines, and the drawn section.
LEFT_PX, RIGHT_PX, STEP_PX = 62, 84, 15
SECTION_PX = DRAWING_WIDTH - LEFT_PX - RIGHT_PX


def _drawing(s, p, hc: float, hd: float, beta: float, outlines) -> SectionDrawing:
    (stem_x, stem_z), (base_x, base_z), (key_x, key_z), (soil_x, soil_z) = outlines
    B, t, toe = s.base_width_m, s.base_thickness_m, s.toe_m
    span = max(B, hd + t)
    zk = -s.key_depth_m
    tb = math.tan(math.radians(beta))
    xb, zt = toe + s.stem_top_m, t + hc  # back of the stem top; retained level
    ext = 0.12 * span
    x_end = B + ext
    k = SECTION_PX / (B + 2.0 * ext)  # px per m
    step = STEP_PX / k  # m between dimension lines
    has_key = s.key_depth_m > 0 and s.key_width_m > 0
    y_key = zk - step  # key width, under the key
    y1 = zk - (2 if has_key else 1) * step  # toe, stem, heel
    y2 = y1 - step  # B
    z0 = y2 - 0.6 * step
    z1 = max(t + hd, zt + (x_end - xb) * tb) + 1.6 * step
    x0 = -ext - LEFT_PX / k
    pen = _Pen(x0, z1, k)
    paths = [("soil", pen.outline(soil_x, soil_z)),
             ("conc", pen.outline(stem_x, stem_z) + pen.outline(base_x, base_z)
              + (pen.outline(key_x, key_z) if has_key else ""))]
    labels: list[Label] = []
    ground = [pen.line((xb, zt), (x_end, zt + (x_end - xb) * tb))]
    if p is not None:
        pn = p.panel
        D = pn.front_min_m - pn.founding_m
        ground.append(pen.line((-ext, D), (toe, D)))
        fx, fy = pen.xy(-ext, D)
        labels.append(Label(fx, fy - 5, f"front {pn.front_min_m:.2f}"))
        wl = None if pn.water_level_m is None else pn.water_level_m - pn.founding_m
        if wl is not None and wl > 0:
            zw = min(wl, zt)
            paths.append(("wat", pen.line((toe + s.stem_base_m, zw), (x_end, zw))))
            wx, wy = pen.xy(x_end, zw)
            labels.append(Label(wx + 2, wy + 7, f"water {pn.founding_m + zw:.2f}"))
        rx, ry = pen.xy(x_end, zt)
        labels.append(Label(rx + 2, ry - 4, f"retained {pn.retained_top_m:.2f}"))
        ux, uy = pen.xy(B, 0.0)
        labels.append(Label(ux + 4, uy + 7, f"underside {pn.founding_m:.2f}"))
    else:
        D = None
    paths += [("gnd", "".join(ground)),
              ("vb", pen.line((B, 0.0), (B, zt + (B - xb) * tb)))]
    if tb > 0:  # the retained level, where the backfill surface rises above it
        paths.append(("ret", pen.line((xb, zt), (x_end, zt))))

    dims: list[str] = []
    xl1, xl2, xl3 = -ext - step, -ext - 2 * step, -ext - 3 * step
    for a, b, text in ((0.0, toe, f"{toe:.2f}"),
                       (toe, toe + s.stem_base_m, f"{s.stem_base_m:.2f}"),
                       (toe + s.stem_base_m, B, f"heel {s.heel_m:.2f}")):
        if b > a:
            _dim(pen, (a, y1), (b, y1), text, False, dims, labels)
    _dim(pen, (0, y2), (B, y2), f"B = {B:.2f}", False, dims, labels)
    _dim(pen, (xl1, 0), (xl1, t), f"{t:.2f}", True, dims, labels)
    _dim(pen, (xl3, 0), (xl3, zt), f"H {zt:.2f}", True, dims, labels)
    if D is not None:
        if D > 0:
            _dim(pen, (xl2, 0), (xl2, D), f"D {D:.2f}", True, dims, labels)
        _dim(pen, (xl2, max(D, 0.0)), (xl2, zt), f"h {zt - D:.2f}", True, dims, labels)
    yt = t + hd + step
    _dim(pen, (toe, yt), (xb, yt), f"{s.stem_top_m:.2f}", False, dims, labels)
    if has_key:
        xk = toe + s.key_width_m + step
        _dim(pen, (xk, zk), (xk, 0), f"{s.key_depth_m:.2f}", True, dims, labels)
        _dim(pen, (toe, y_key), (toe + s.key_width_m, y_key), f"{s.key_width_m:.2f}", False,
             dims, labels)
    paths.append(("dim", "".join(dims)))
    if p is not None:  # overall stability: the critical slip circle where it was checked
        arc = slip_arc(p, -ext, x_end, z0)
        if arc is not None:
            xs, zs, text = arc
            paths.append(("slip", "M" + "L".join(pen.p(x, z) for x, z in zip(xs, zs))))
            lx, ly = pen.xy(x0, z1)
            labels.append(Label(lx + 4, ly + 10, text, "slip"))
    return SectionDrawing(DRAWING_WIDTH, round((z1 - z0) * k), tuple(paths), tuple(labels))


def slip_arc(p, x_lo: float, x_hi: float, z_lo: float, n: int = 64):
    """The part of the critical slip circle of panel result ``p`` inside the drawing
    (x from ``x_lo`` to ``x_hi``, above ``z_lo``; section coordinates, m, z above the
    underside of the base) and its label, or None: the worst ``overall`` entry's circle
    (design-basis section 9)."""
    ov = [e for e in p.checks.named({"overall"}) if e.circle is not None]
    if not ov:
        return None
    e = max(ov, key=lambda e: e.utilization)
    xc, zc, R = e.circle.x_m, e.circle.z_m - p.panel.founding_m, e.circle.radius_m
    xs = np.linspace(max(x_lo, xc - R), min(x_hi, xc + R), n + 1)
    zs = zc - np.sqrt(np.maximum(R * R - (xs - xc) ** 2, 0.0))
    keep = zs >= z_lo
    if keep.sum() < 2:
        return None
    return (xs[keep], zs[keep],
            f"critical slip circle {e.combination}, utilization {e.utilization:.2f}")


# --- the long section ------------------------------------------------------------------

def run_png(result) -> bytes | None:
    """The long section along chainage as PNG bytes (see the module docstring); None
    when there is nothing to draw."""
    prof, panels = result.profiles, result.panels
    ch = G = F = None
    if prof is not None:
        c0, c1 = float(prof.ch_start), float(prof.ch_end)
        bp = np.asarray(prof.breakpoints, dtype=float)
        ch = np.union1d(bp[(bp >= c0) & (bp <= c1)], np.linspace(c0, c1, 2001))
        if len(ch) > MAX_PROFILE_POINTS:  # more points than the picture has pixels
            ch = np.linspace(c0, c1, MAX_PROFILE_POINTS)
        G = np.asarray(prof.ground(ch), dtype=float)
        F = np.asarray(prof.finished(ch), dtype=float)
    if ch is None and not panels:
        return None

    fig = Figure(figsize=(10.0, 5.0), dpi=72)
    ax, axh = fig.subplots(2, 1, sharex=True, gridspec_kw={"height_ratios": [3, 1.3]})
    fig.subplots_adjust(left=0.07, right=0.80, top=0.94, bottom=0.10, hspace=0.08)
    handles, labels = [], []
    if ch is not None:
        handles += ax.plot(ch, G, color="#7a5230", lw=1.0)
        handles += ax.plot(ch, F, color="black", lw=1.0, ls="--")
        labels += ["existing ground", "finished level"]
    if panels:
        pa = [p.panel for p in panels]
        top = LineCollection([((x.ch_start_m, x.wall_top_start_m),
                               (x.ch_end_m, x.wall_top_end_m)) for x in pa],
                             colors="#1f4e9a", lw=1.6)
        found = LineCollection([((x.ch_start_m, x.founding_m), (x.ch_end_m, x.founding_m))
                                for x in pa], colors="#555555", lw=1.0)
        ax.add_collection(top)
        ax.add_collection(found)
        handles += [top, found]
        labels += ["top of wall", "underside of base"]
        lo = min(x.founding_m for x in pa)
        hi = max(max(x.wall_top_start_m, x.wall_top_end_m) for x in pa)
        if len(pa) <= MAX_PANEL_LINES:  # more would only grey the picture
            ends = sorted({x.ch_start_m for x in pa} | {x.ch_end_m for x in pa})
            ax.add_collection(LineCollection([((c, lo), (c, hi)) for c in ends],
                                             colors="#999999", lw=0.4))
        names = [st.section_type for st in result.section_types]
        palette = [tuple(c) for c in _tab20()]
        colour = {n: palette[i % len(palette)] for i, n in enumerate(names)}
        band_h = 0.05 * max(hi - lo, 1.0)
        band_lo = lo - 1.6 * band_h
        ax.add_collection(PolyCollection(
            [((x.ch_start_m, band_lo), (x.ch_end_m, band_lo), (x.ch_end_m, band_lo + band_h),
              (x.ch_start_m, band_lo + band_h)) for x in pa],
            facecolors=[colour.get(p.section_type, "#888888") for p in panels],
            edgecolors="none"))
        if len(names) <= 20:
            handles += [Patch(color=colour[n]) for n in names]
            labels += [f"type {n}" for n in names]
        else:
            labels.append(f"band: {len(names)} section types")
            handles.append(Patch(color=palette[0]))
        ax.autoscale_view()
    ax.set_ylabel("level (m)")
    ax.grid(True, lw=0.3, color="#dddddd")
    ax.set_title("Long section along the wall line; section types as a coloured band",
                 fontsize=9)
    ax.legend(handles, labels, loc="upper left", bbox_to_anchor=(1.01, 1.0), fontsize=6,
              ncols=1 if len(labels) <= 14 else 2, frameon=False)
    if ch is not None:
        h = np.abs(F - G)
        axh.fill_between(ch, 0, h, where=F >= G, color="#c9a77c", lw=0,
                         label="fill side (F > G)")
        axh.fill_between(ch, 0, h, where=F < G, color="#9fb8d8", lw=0,
                         label="cut side (F < G)")
        axh.plot(ch, h, color="black", lw=0.6)
        hmin = getattr(getattr(result.site, "wall", None), "min_retained_height_m", None)
        if hmin is not None:
            axh.axhline(hmin, color="#b00000", lw=0.7, ls=":",
                        label=f"wall needed from h = {hmin:g} m")
        axh.legend(loc="upper left", bbox_to_anchor=(1.01, 1.0), fontsize=6, frameon=False)
    axh.set_ylabel("retained h (m)")
    axh.set_xlabel("chainage (m)")
    axh.grid(True, lw=0.3, color="#dddddd")
    buf = io.BytesIO()
    fig.savefig(buf, format="png")
    return buf.getvalue()


def _tab20():
    """The 20 colours of matplotlib's ``tab20`` colour map."""
    return colormaps["tab20"](np.arange(20))

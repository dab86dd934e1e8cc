"""Drawings readable without CAD: ``sheets.pdf``, ``sections.pdf``, ``elevation.png``.

``sheets.pdf`` holds every sheet of the drawings (the paper-space layouts of
``elevation.dxf``, ``sections.dxf`` and ``plan.dxf``), one page each at the sheet's
size, as the paper space shows it: ezdxf's drawing add-on draws each layout, its
viewports scaled and clipped; its front end (``ezdxf.addons.drawing.Frontend``, with a
bounding-box cache so that each viewport visits only what it shows) feeds
:class:`Collector`, a back end of wallrun's own on ezdxf's public ``Backend`` base
class, which gathers the strokes and filled shapes of a page and hands them to
matplotlib as one path per colour and line weight. ``sections.pdf`` is the sheets of
the sections drawing again, on their own (the same pages).

``elevation.png`` is a quick look drawn with matplotlib straight from the result
objects: existing ground, finished level, the wall's top and underside per run, and
the joints, in up to :data:`MAX_STRIPS` stacked strips of consecutive chainage, the
levels true to scale within a strip (each strip has its own level axis).
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
from ezdxf.addons.drawing.backend import Backend
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.backends.backend_pdf import PdfPages
from matplotlib.collections import LineCollection
from matplotlib.figure import Figure
from matplotlib.patches import PathPatch

MAX_STRIPS = 8
ELEVATION_PX = (2400, 1600)
DPI = 100
A3_MM = (420.0, 297.0)
MM = 1.0 / 25.4  # inch per mm


# --- a batching back end for ezdxf's drawing add-on ----------------------------------------

class Collector(Backend):
    """An ezdxf drawing back end that collects what the front end draws: polylines by
    (colour, line weight in mm), filled paths by colour; :meth:`add_to` puts them on a
    matplotlib Axes as one LineCollection and one PathPatch each. Text arrives as
    filled glyph paths; they are filled by the non-zero rule, the fonts winding their
    holes the other way."""

    def __init__(self, flatten: float = 0.01):
        super().__init__()
        self.flatten = flatten  # curve flattening distance, drawing units
        self.strokes: dict[tuple[str, float], list] = {}
        self.fills: dict[str, list] = {}

    def set_background(self, color) -> None:
        pass

    def _stroke(self, props, xy) -> None:
        self.strokes.setdefault((props.color, props.lineweight), []).append(xy)

    def draw_point(self, pos, properties) -> None:
        self._stroke(properties, np.array([[pos.x, pos.y], [pos.x, pos.y]]))

    def draw_line(self, start, end, properties) -> None:
        self._stroke(properties, np.array([[start.x, start.y], [end.x, end.y]]))

    def draw_solid_lines(self, lines, properties) -> None:
        for s, e in lines:
            self._stroke(properties, np.array([[s.x, s.y], [e.x, e.y]]))

    def draw_path(self, path, properties) -> None:
        for sub in path.sub_paths():
            v = np.array([(p.x, p.y) for p in sub.flattening(self.flatten)])
            if len(v) > 1:
                self._stroke(properties, v)

    def draw_filled_paths(self, paths, properties) -> None:
        from ezdxf.npshapes import to_matplotlib_path

        paths = list(paths)
        if paths:
            self.fills.setdefault(properties.color, []).append(
                to_matplotlib_path(paths, detect_holes=False))

    def draw_filled_polygon(self, points, properties) -> None:
        from matplotlib.path import Path as MplPath

        v = np.array([(p.x, p.y) for p in points.vertices()])
        if len(v) > 2:
            self.fills.setdefault(properties.color, []).append(MplPath(v, closed=True))

    def draw_image(self, image_data, properties) -> None:
        pass  # wallrun's drawings hold no images

    def clear(self) -> None:
        self.strokes, self.fills = {}, {}

    def finalize(self) -> None:
        pass

    def bounds(self):
        """(xmin, ymin, xmax, ymax) of everything collected, or None."""
        arrays = [v for segs in self.strokes.values() for v in segs]
        arrays += [p.vertices for paths in self.fills.values() for p in paths]
        if not arrays:
            return None
        v = np.concatenate(arrays)
        return (*v.min(axis=0), *v.max(axis=0))

    def add_to(self, ax, points_per_mm: float = 72.0 * MM, min_width: float = 0.2,
               place=None, clip=None) -> None:
        """Add the collected strokes and fills to ``ax`` (its limits are left as set):
        one compound path per colour and line weight; line weights in mm become
        ``points_per_mm`` points, at least ``min_width``. ``place`` (k, cx, cy, px, py)
        maps drawing point p to (px, py) + k (p - (cx, cy)) (a viewport's scale and
        position); ``clip`` (x0, y0, x1, y1) clips everything to that box."""
        from matplotlib.patches import Rectangle
        from matplotlib.path import Path as MplPath

        def moved(v):
            if place is None:
                return v
            k, cx, cy, px, py = place
            return (v - (cx, cy)) * k + (px, py)

        artists = []
        for color, paths in self.fills.items():
            path = MplPath.make_compound_path(*paths)
            artists.append(PathPatch(MplPath(moved(path.vertices), path.codes),
                                     facecolor=color, edgecolor="none", linewidth=0))
        for (color, lw), segs in self.strokes.items():
            verts = np.concatenate(segs)
            codes = np.full(len(verts), MplPath.LINETO, dtype=MplPath.code_type)
            starts = np.cumsum([0] + [len(s) for s in segs[:-1]])
            codes[starts] = MplPath.MOVETO
            artists.append(PathPatch(MplPath(moved(verts), codes), fill=False,
                                     edgecolor=color, capstyle="butt", joinstyle="miter",
                                     linewidth=max(lw * points_per_mm, min_width)))
        for a in artists:
            ax.add_artist(a)
            if clip is not None:
                a.set_clip_path(Rectangle((clip[0], clip[1]), clip[2] - clip[0],
                                          clip[3] - clip[1], transform=ax.transData))


def _page(size_mm):
    """A figure of ``size_mm`` (width, height) with one Axes filling it, no frame."""
    fig = Figure(figsize=(size_mm[0] * MM, size_mm[1] * MM), dpi=DPI, facecolor="white")
    FigureCanvasAgg(fig)
    ax = fig.add_axes((0.0, 0.0, 1.0, 1.0))
    ax.set_axis_off()
    return fig, ax


def _show(ax, box, size_mm, pad: float = 0.02) -> None:
    """Show ``box`` (xmin, ymin, xmax, ymax) at equal x/y scale, centred."""
    x0, y0, x1, y1 = box
    w, h = max(x1 - x0, 1e-6) * (1 + 2 * pad), max(y1 - y0, 1e-6) * (1 + 2 * pad)
    aspect = size_mm[0] / size_mm[1]
    if w / h > aspect:
        h = w / aspect
    else:
        w = h * aspect
    cx, cy = 0.5 * (x0 + x1), 0.5 * (y0 + y1)
    ax.set_xlim(cx - w / 2, cx + w / 2)
    ax.set_ylim(cy - h / 2, cy + h / 2)
    ax.set_aspect("equal", adjustable="box")


def frontend(doc, out: Collector):
    """ezdxf's drawing front end for ``doc`` feeding ``out`` (white background)."""
    from ezdxf.addons.drawing import Frontend, RenderContext
    from ezdxf.addons.drawing.config import BackgroundPolicy, Configuration

    cfg = Configuration(background_policy=BackgroundPolicy.WHITE,
                        circle_approximation_count=32)
    return Frontend(RenderContext(doc), out, config=cfg)


# --- elevation.png -----------------------------------------------------------------------

def strip_count(length_m: float, height_m: float, max_strips: int = MAX_STRIPS) -> int:
    """Strips for a wall ``length_m`` long whose levels span ``height_m``: enough that a
    strip is at most 40 times as long as the level span it shows, 1..max_strips."""
    if length_m <= 0:
        return 1
    return int(min(max_strips, max(1, math.ceil(length_m / max(40.0 * height_m, 1.0)))))


def render_elevation_png(result, png_path) -> int:
    """A quick look at the developed elevation of ``result`` as a PNG
    (:data:`ELEVATION_PX`); returns the number of strips."""
    from wallrun.outputs.dxf import conventions as c

    prof = result.profiles
    panels = [pr.panel for pr in result.panels]
    a, b = float(prof.ch_start), float(prof.ch_end)
    chs = c.sample_chainages(prof, a, b, extra=[p.ch_start_m for p in panels]
                             + [p.ch_end_m for p in panels], max_step=5.0)
    G, F = np.asarray(prof.ground(chs), float), np.asarray(prof.finished(chs), float)
    k = strip_count(b - a, float(max(G.max(), F.max()) - min(G.min(), F.min())) + 1.0)
    W, H = ELEVATION_PX
    fig = Figure(figsize=(W / DPI, H / DPI), dpi=DPI, facecolor="white")
    FigureCanvasAgg(fig)
    axes = fig.subplots(k, 1, squeeze=False)[:, 0]
    edges = np.linspace(a, b, k + 1)
    tops, unders = [], []
    for prs in c.runs_of(result):
        for piece in c.pieces(prs):
            ch = np.array([(pr.panel.ch_start_m, pr.panel.ch_end_m) for pr in piece]).ravel()
            tops.append(np.column_stack([ch, np.array(
                [(pr.panel.wall_top_start_m, pr.panel.wall_top_end_m) for pr in piece]).ravel()]))
            unders.append(np.column_stack([ch, np.repeat([pr.panel.founding_m
                                                          for pr in piece], 2)]))
    jx = np.array([j.ch_m for j in result.joints])
    by = {p.panel: p for p in panels}
    jz = np.array([[min(q.founding_m for q in (by.get(j.left), by.get(j.right)) if q),
                    max(v for v in ((by[j.left].wall_top_end_m if j.left in by else None),
                                    (by[j.right].wall_top_start_m if j.right in by else None))
                        if v is not None)]
                   for j in result.joints if j.left in by or j.right in by]).reshape(-1, 2)
    for i, ax in enumerate(axes):
        lo, hi = edges[i], edges[i + 1]
        m = (chs >= lo) & (chs <= hi)
        ax.plot(chs[m], G[m], color="#7a5c2e", lw=0.8, ls="--", label="existing ground")
        ax.plot(chs[m], F[m], color="#2e7a3c", lw=0.8, label="finished level")
        ax.add_collection(LineCollection(tops, colors="#1f3fbf", linewidths=1.2,
                                         label="top of wall"), autolim=False)
        ax.add_collection(LineCollection(unders, colors="#bf1f1f", linewidths=1.2,
                                         label="underside of base"), autolim=False)
        if len(jx):
            seg = np.stack([np.column_stack([jx, jz[:, 0]]), np.column_stack([jx, jz[:, 1]])],
                           axis=1)
            ax.add_collection(LineCollection(seg, colors="#9a3fb0", linewidths=0.5),
                              autolim=False)
        inside = [p for p in panels if p.ch_end_m >= lo and p.ch_start_m <= hi]
        zs = list(G[m]) + list(F[m]) + [p.founding_m for p in inside] + \
            [max(p.wall_top_start_m, p.wall_top_end_m) for p in inside]
        z0, z1 = (min(zs), max(zs)) if zs else (0.0, 1.0)
        pad = 0.08 * max(z1 - z0, 1.0)
        ax.set_xlim(lo, hi)
        ax.set_ylim(z0 - pad, z1 + pad)
        ax.set_ylabel("level (m)", fontsize=8)
        ax.tick_params(labelsize=7)
        ax.grid(True, lw=0.3, color="#dddddd")
        ax.xaxis.set_major_formatter(_chainage_formatter())
    axes[0].set_title(f"{result.site.project.name}: developed elevation (quick look; "
                      "elevation.dxf and sheets hold the drawing)", fontsize=9)
    axes[0].legend(fontsize=7, loc="upper right", ncol=4)
    axes[-1].set_xlabel("chainage (km+m)", fontsize=8)
    fig.text(0.01, 0.005, "PRELIMINARY - NOT FOR CONSTRUCTION. wallrun is a preliminary "
             "design aid; to be checked and signed by a qualified engineer.", fontsize=7)
    fig.subplots_adjust(left=0.05, right=0.99, top=0.96, bottom=0.05, hspace=0.35)
    fig.savefig(str(png_path), format="png", facecolor="white")
    return k


def _chainage_formatter():
    from matplotlib.ticker import FuncFormatter

    from wallrun.outputs.dxf.conventions import chainage_label

    return FuncFormatter(lambda v, _pos: chainage_label(v))


def write_previews(result, docs, out_dir) -> list[str]:
    """Render into ``out_dir``: ``sheets.pdf``, every sheet of the drawings ``docs``
    (the documents just saved: elevation, sections, plan); ``sections.pdf``, the
    sheets of the sections drawing (``docs[1]``) again on their own; and
    ``elevation.png`` from ``result``. Returns the names written."""
    out = Path(out_dir)
    # matplotlib's own settings are left as they are (no rc_context: they are shared
    # by every thread of the process)
    with PdfPages(str(out / "sections.pdf")) as sec:
        render_sheets(docs, out / "sheets.pdf", also={id(docs[1]): sec})
    render_elevation_png(result, out / "elevation.png")
    return ["sheets.pdf", "sections.pdf", "elevation.png"]


__all__ = ["Collector", "render_elevation_png", "render_sheets", "write_previews"]


# --- sheets.pdf ------------------------------------------------------------------------

def sheet_layouts(doc) -> list:
    """The paper-space layouts of ``doc`` in tab order (model space left out)."""
    return [doc.paperspace(n) for n in doc.layout_names_in_taborder() if n != "Model"]


def _config():
    from ezdxf.addons.drawing.config import BackgroundPolicy, Configuration

    return Configuration(background_policy=BackgroundPolicy.WHITE,
                         circle_approximation_count=32, min_lineweight=0.1)


class SheetPainter:
    """Draws the sheets of one drawing. Paper-space entities go through ezdxf's front
    end as they are; a viewport's model-space content goes through the front end too,
    the entities whose extents (ezdxf's fast bounding boxes, measured once per
    drawing; an insert's insertion point) meet the viewport's window, and is then
    placed at the viewport's scale
    and position and clipped to its box by matplotlib. (ezdxf's own viewport
    rendering clips every glyph of every text in Python, twenty times the cost.) The
    paper-space MTEXTs of a sheet (the notes), alike on every sheet of a drawing, are
    drawn once per drawing."""

    def __init__(self, doc):
        from ezdxf import bbox
        from ezdxf.addons.drawing import Frontend, RenderContext

        self.paper, self.model, self.notes = Collector(), Collector(), Collector()
        self.fe_paper = Frontend(RenderContext(doc), self.paper, config=_config())
        self.fe_notes = Frontend(RenderContext(doc), self.notes, config=_config())
        self.drawn_notes: dict = {}  # the MTEXTs of a sheet, drawn once for this drawing
        msp = doc.modelspace()
        self.fe_model = Frontend(RenderContext(doc), self.model, config=_config())
        self.fe_model.ctx.set_current_layout(msp)
        self.fe_model.set_background("#ffffff")
        self.entities = list(msp)
        # where each entity is, to find what a viewport shows: an insert by its
        # insertion point (wallrun's section blocks lie around their origin, on one
        # sheet; measuring every block's contents costs more than drawing it),
        # everything else by ezdxf's fast bounding box
        rows = []
        others = [e for e in self.entities if e.dxftype() != "INSERT"]
        boxes = iter(bbox.multi_flat(others, fast=True))
        for e in self.entities:
            if e.dxftype() == "INSERT":
                x, y = e.dxf.insert[0], e.dxf.insert[1]
                rows.append((x, y, x, y))
                continue
            b = next(boxes)
            rows.append((b.extmin.x, b.extmin.y, b.extmax.x, b.extmax.y) if b.has_data
                        else (np.inf, np.inf, -np.inf, -np.inf))
        self.boxes = np.array(rows, dtype=float).reshape(-1, 4)

    def figure(self, layout):
        """The page of paper-space ``layout``: a figure of the sheet's size in mm."""
        w, h = layout.dxf.paper_width, layout.dxf.paper_height
        fig, ax = _page((w, h))
        ax.set_xlim(0.0, w)
        ax.set_ylim(0.0, h)
        ax.set_aspect("equal", adjustable="box")
        self.paper.clear()
        self.fe_paper.draw_layout(layout, finalize=True,
                                  filter_func=lambda e: e.dxftype() not in ("VIEWPORT",
                                                                            "MTEXT"))
        self.paper.add_to(ax)
        # the MTEXTs (the notes of every sheet, alike from sheet to sheet): drawn once
        key = tuple((e.text, tuple(e.dxf.insert), e.dxf.char_height, e.dxf.get("width", 0),
                     e.dxf.get("attachment_point", 1), e.dxf.get("rotation", 0.0),
                     e.dxf.layer, e.dxf.get("style", ""), e.dxf.get("line_spacing_factor", 1))
                    for e in layout.query("MTEXT"))
        if key not in self.drawn_notes:
            self.notes.clear()
            self.fe_notes.draw_layout(layout, finalize=True,
                                      filter_func=lambda e: e.dxftype() == "MTEXT")
            self.drawn_notes[key] = (self.notes.strokes, self.notes.fills)
            self.notes.strokes, self.notes.fills = {}, {}
        self.notes.strokes, self.notes.fills = self.drawn_notes[key]
        self.notes.add_to(ax)
        for vp in layout.query("VIEWPORT"):
            if vp.dxf.get("id", 0) == 1 or vp.dxf.view_height <= 0:
                continue  # the layout's own overall viewport
            k = vp.dxf.height / vp.dxf.view_height
            cx, cy = vp.dxf.view_center_point[0], vp.dxf.view_center_point[1]
            hw, hh = vp.dxf.width / 2 / k, vp.dxf.height / 2 / k
            b = self.boxes
            hit = ((b[:, 0] <= cx + hw) & (b[:, 2] >= cx - hw)
                   & (b[:, 1] <= cy + hh) & (b[:, 3] >= cy - hh))
            self.model.clear()
            self.fe_model.draw_entities([e for e, on in zip(self.entities, hit) if on])
            px, py = vp.dxf.center[0], vp.dxf.center[1]
            place = (k, cx, cy, px, py)
            clip = (px - vp.dxf.width / 2, py - vp.dxf.height / 2,
                    px + vp.dxf.width / 2, py + vp.dxf.height / 2)
            self.model.add_to(ax, place=place, clip=clip)
        return fig


def render_sheets(docs, pdf_path, also=None) -> int:
    """Every sheet of the drawings ``docs`` (in order) as one page each of
    ``pdf_path`` (see :class:`SheetPainter`); ``also``: {id(doc): another PdfPages}
    that gets that drawing's pages too. Returns the number of pages."""
    n = 0
    with PdfPages(str(pdf_path)) as pdf:
        for doc in docs:
            painter = SheetPainter(doc)
            extra = (also or {}).get(id(doc))
            for layout in sheet_layouts(doc):
                fig = painter.figure(layout)
                pdf.savefig(fig)
                if extra is not None:
                    extra.savefig(fig)
                n += 1
    return n

"""Previews readable without CAD, rendered from the DXF files themselves.

``elevation.png`` (1800 x 600 px, white background; a long wall in up to 8 stacked
strips of consecutive chainage) from ``elevation.dxf`` and
``sections.pdf`` (one A3 landscape page per section type, then one page with the whole
sheet; beyond ``MAX_SECTION_PAGES`` types, the rest are listed on a last page instead)
from ``sections.dxf``, drawn by ezdxf's drawing add-on through matplotlib's Agg
backend, so the previews show exactly what the DXF holds.

A very long elevation (more than ``MAX_ELEVATION_TEXTS`` TEXT entities) is previewed
without the per-panel and per-joint names, which cannot be read at 1800 px anyway,
and with its lines drawn solid (linetype patterns of thousands of short lines are
slow to render and invisible at that size); every line and polyline vertex is still
drawn (no decimation).

The drawings are taken as the document objects that ``dxf_*`` just saved (see
``drafting.save_document``) when the file is unchanged since, else read from the
file; either way the preview shows what the file holds. Each section page draws only
the entities of that section's group.

Cost: rendering runs with the garbage collector paused (``drafting.gc_paused``); the
view of a page or the image comes from ezdxf's fast extents computed with less
measuring (:func:`_group_box`, the same box); sections.pdf is compressed at zlib
level 1.
"""

from __future__ import annotations

import math
import textwrap
from pathlib import Path

import matplotlib

matplotlib.use("Agg")

from ezdxf.addons.drawing import Frontend, RenderContext  # noqa: E402
from ezdxf.addons.drawing.config import (BackgroundPolicy, Configuration,  # noqa: E402
                                         LinePolicy)
from ezdxf.addons.drawing.matplotlib import MatplotlibBackend  # noqa: E402
from matplotlib.backends.backend_agg import FigureCanvasAgg  # noqa: E402
from matplotlib.backends.backend_pdf import PdfPages  # noqa: E402
from matplotlib.figure import Figure  # noqa: E402
import matplotlib.image as mpimg  # noqa: E402
import numpy as np  # noqa: E402

from wallrun.outputs import drafting as d  # noqa: E402

ELEVATION_PX = (1800, 600)
DPI = 100
MAX_ELEVATION_TEXTS = 1500
MAX_STRIPS = 8
MAX_SECTION_PAGES = 16  # full pages (~0.2 s each); the rest are listed, and sections.dxf holds all
A3_IN = (16.54, 11.69)

_CONFIG = Configuration(background_policy=BackgroundPolicy.WHITE,
                        lineweight_scaling=0.6)


def _figure(size_in):
    fig = Figure(figsize=size_in, dpi=DPI, facecolor="white")
    FigureCanvasAgg(fig)
    ax = fig.add_axes((0.0, 0.0, 1.0, 1.0))
    ax.set_axis_off()
    ax.set_facecolor("white")
    # The view limits are set from the DXF extents below; skipping matplotlib's per-patch
    # data-limit update (exact Bezier extrema of every glyph outline) halves the time.
    ax._update_patch_limits = lambda patch: None
    ax._update_line_limits = lambda line: None  # likewise for the lines
    return fig, ax


class _Backend(MatplotlibBackend):
    """ezdxf's matplotlib backend, filling paths by the non-zero winding rule as
    given instead of sorting each path into outlines and holes first: the only filled
    paths of wallrun's drawings are text glyphs, whose outlines the font already
    winds in opposite senses for holes, so the result is the same and text draws
    several times faster."""

    def draw_filled_paths(self, paths, properties):
        from ezdxf.npshapes import to_matplotlib_path
        from matplotlib.patches import PathPatch

        try:
            patch = PathPatch(to_matplotlib_path(paths, detect_holes=False),
                              color=properties.color, linewidth=0, fill=True,
                              zorder=self._get_z())
        except ValueError:
            return
        self.ax.add_patch(patch)


def _draw(doc, ax, filter_func=None, solid: bool = False, entities=None,
          ctx=None) -> None:
    """Draw the modelspace of ``doc`` (or only ``entities`` of it) into ``ax``."""
    ctx = ctx or RenderContext(doc)
    out = _Backend(ax, adjust_figure=False)
    cfg = _CONFIG.with_changes(line_policy=LinePolicy.SOLID) if solid else _CONFIG
    fe = Frontend(ctx, out, config=cfg)
    if entities is None:
        fe.draw_layout(doc.modelspace(), finalize=True, filter_func=filter_func)
        return
    ctx.set_current_layout(doc.modelspace())
    fe.set_background(ctx.current_layout_properties.background_color)
    fe.parent_stack = []
    fe.draw_entities(entities, filter_func=filter_func)
    fe.pipeline.finalize()


def _keep_aspect_limits(ax, box, size_in, pad=0.02) -> None:
    """Show ``box`` (xmin, ymin, xmax, ymax) at equal x/y scale, centred."""
    x0, y0, x1, y1 = box
    w, h = max(x1 - x0, 1e-6), max(y1 - y0, 1e-6)
    w, h = w * (1 + 2 * pad), h * (1 + 2 * pad)
    cx, cy = 0.5 * (x0 + x1), 0.5 * (y0 + y1)
    aspect = size_in[0] / size_in[1]
    if w / h > aspect:
        h = w / aspect
    else:
        w = h * aspect
    ax.set_xlim(cx - w / 2, cx + w / 2)
    ax.set_ylim(cy - h / 2, cy + h / 2)
    ax.set_aspect("equal", adjustable="box")


def strip_count(width: float, height: float, max_strips: int = MAX_STRIPS) -> int:
    """Number of strips for a drawing of ``width`` x ``height`` in the 3:1 image: the k
    whose strips (aspect 3 k^2) best fit the drawing's aspect, 1..max_strips."""
    if height <= 0 or width <= 0:
        return 1
    return int(min(max_strips, max(1, round(math.sqrt(width / height / 3.0)))))


def render_elevation_png(dxf_path, png_path) -> int:
    """Render ``elevation.dxf`` to a 1800 x 600 px PNG; returns the number of strips
    (see :func:`_render_elevation_png`), with the garbage collector paused."""
    with d.gc_paused():
        return _render_elevation_png(dxf_path, png_path)


def _render_elevation_png(dxf_path, png_path) -> int:
    """Render ``elevation.dxf`` to a 1800 x 600 px PNG; returns the number of strips.

    A drawing much longer than 3:1 is cut into k strips of consecutive chainage,
    stacked top to bottom (first strip on top), so that the whole wall is visible at a
    useful height: it is rasterised once on a canvas k times as wide and 1/k as high,
    and the canvas is cut into k equal pieces.
    """
    doc = d.saved_document(dxf_path)
    msp = doc.modelspace()
    n_text = len(msp.query("TEXT"))
    long = n_text > MAX_ELEVATION_TEXTS
    skip = {d.L_PANELS} if long else set()
    W, H = ELEVATION_PX
    fig, ax = _figure((W / DPI, H / DPI))
    _draw(doc, ax, (lambda e: e.dxf.layer not in skip) if skip else None, solid=long)
    x0, y0, x1, y1 = _group_box(msp, doc) or (*ax.get_xlim(), *ax.get_ylim())
    k = strip_count(x1 - x0, y1 - y0)
    h_strip = H // k
    size = (W * k / DPI, h_strip / DPI)
    fig.set_size_inches(*size)
    _keep_aspect_limits(ax, (x0, y0, x1, y1), size, pad=0.01 if k == 1 else 0.002)
    fig.canvas.draw()
    img = np.asarray(fig.canvas.buffer_rgba())[:, :, :3]
    strips = [img[:, i * W:(i + 1) * W] for i in range(k)]
    out = np.full((H, W, 3), 255, dtype=np.uint8)
    for i, st in enumerate(strips):
        out[i * h_strip:(i + 1) * h_strip, :st.shape[1]] = st[:h_strip]
        if i:
            out[i * h_strip, :] = 160  # thin grey rule between strips
    mpimg.imsave(str(png_path), out, format="png")
    return k


def _text_bound(e):
    """A box surely holding a TEXT: a circle of 4 + 2 x its length in text heights
    round its insertion and alignment points."""
    r = e.dxf.height * (4.0 + 2.0 * len(e.dxf.text))
    ps = [e.dxf.insert] + ([e.dxf.align_point] if e.dxf.hasattr("align_point") else [])
    return (min(p[0] for p in ps) - r, min(p[1] for p in ps) - r,
            max(p[0] for p in ps) + r, max(p[1] for p in ps) + r)


def _bound(e, doc):
    """A box surely holding entity ``e`` as ezdxf measures it, cheaply, or None where
    none is made here: TEXT (:func:`_text_bound`), a DIMENSION from the vertices and
    texts of its geometry block, a (grid) INSERT of a block of circles from the grid's
    corner insertion points and the circles' reach."""
    t = e.dxftype()
    if t == "TEXT":
        return _text_bound(e)
    boxes = []
    if t == "DIMENSION" and doc is not None:
        blk = doc.blocks.get(e.dxf.get("geometry", ""))
        if blk is None:
            return None
        for b in blk:
            bt = b.dxftype()
            if bt == "TEXT":
                boxes.append(_text_bound(b))
            elif bt == "LWPOLYLINE":
                v = np.asarray(b.lwpoints.values, dtype=float).reshape(-1, 5)
                if not len(v) or v[:, 2:].any():
                    return None
                boxes.append((*v[:, :2].min(axis=0), *v[:, :2].max(axis=0)))
            else:
                return None
    elif t == "INSERT" and doc is not None and not e.attribs:
        blk = doc.blocks.get(e.dxf.name)
        dx = e.dxf
        if blk is None or (dx.xscale, dx.yscale, dx.zscale) != (1, 1, 1):
            return None
        reach = 0.0
        for b in blk:
            if b.dxftype() != "CIRCLE":
                return None
            reach = max(reach, abs(b.dxf.radius) + math.hypot(b.dxf.center[0], b.dxf.center[1]))
        a = math.radians(dx.rotation)
        ux, uy = math.cos(a), math.sin(a)
        cx, cy = (dx.column_count - 1) * dx.column_spacing, (dx.row_count - 1) * dx.row_spacing
        reach = reach * 1.001 + 1e-9
        for i, j in ((0, 0), (cx, 0), (0, cy), (cx, cy)):
            x, y = dx.insert[0] + i * ux - j * uy, dx.insert[1] + i * uy + j * ux
            boxes.append((x - reach, y - reach, x + reach, y + reach))
    else:
        return None
    if not boxes:
        return None
    return (min(b[0] for b in boxes), min(b[1] for b in boxes),
            max(b[2] for b in boxes), max(b[3] for b in boxes))


def _group_box(entities, doc=None) -> tuple[float, float, float, float] | None:
    """ezdxf's fast extents (x/y) of ``entities``, computed with less work and the
    same result: straight LINEs and LWPOLYLINEs exactly from their vertices, every
    other entity by ezdxf, except that one which a cheap box surely holding it
    (:func:`_bound`) shows to lie inside the box of the rest cannot widen it and is
    not measured (measuring text and block contents is most of the cost)."""
    from ezdxf import bbox

    pts, bounded, others = [], [], []
    for e in entities:
        t = e.dxftype()
        if t == "LINE":
            pts.append((e.dxf.start[0], e.dxf.start[1]))
            pts.append((e.dxf.end[0], e.dxf.end[1]))
        elif t == "LWPOLYLINE":
            v = np.asarray(e.lwpoints.values, dtype=float).reshape(-1, 5)
            if len(v) and not v[:, 2:].any():  # no widths, no bulges
                pts.extend(map(tuple, v[:, :2]))
            else:
                others.append(e)
        elif t in ("TEXT", "DIMENSION", "INSERT"):
            bounded.append(e)
        else:
            others.append(e)
    box = None
    if pts:
        a = np.asarray(pts)
        box = [*a.min(axis=0), *a.max(axis=0)]

    def widen(ents):
        nonlocal box
        ext = bbox.extents(ents, fast=True)
        if ext.has_data:
            b = [ext.extmin.x, ext.extmin.y, ext.extmax.x, ext.extmax.y]
            box = b if box is None else [min(box[0], b[0]), min(box[1], b[1]),
                                         max(box[2], b[2]), max(box[3], b[3])]

    widen(others)
    near = []
    for e in bounded:
        b = None if box is None else _bound(e, doc)
        if b is None or b[0] < box[0] or b[1] < box[1] or b[2] > box[2] or b[3] > box[3]:
            near.append(e)
    widen(near)
    return None if box is None else tuple(float(v) for v in box)


def _ezdxf_box(entities):
    """ezdxf's fast extents (x/y) of ``entities`` (the reference of :func:`_group_box`)."""
    from ezdxf import bbox

    ext = bbox.extents(entities, fast=True)
    if not ext.has_data:
        return None
    return ext.extmin.x, ext.extmin.y, ext.extmax.x, ext.extmax.y


def render_sections_pdf(dxf_path, pdf_path) -> None:
    """Render ``sections.dxf`` to a PDF: one page per section group, then the sheet
    (see :func:`_render_sections_pdf`), with the garbage collector paused."""
    with d.gc_paused():
        _render_sections_pdf(dxf_path, pdf_path)


def _render_sections_pdf(dxf_path, pdf_path) -> None:
    """One page per section group (at most ``MAX_SECTION_PAGES``), then the sheet or
    the list of the rest."""
    doc = d.saved_document(dxf_path)
    groups = sorted(((name, g) for name, g in doc.groups
                     if name.startswith(d.SECTION_GROUP_PREFIX)), key=lambda t: t[0])
    shown, rest = groups[:MAX_SECTION_PAGES], groups[MAX_SECTION_PAGES:]
    ctx = RenderContext(doc)
    n_all = len(groups)
    # zlib level 1 instead of matplotlib's 6: the same pages, a sixth larger file,
    # compressed in a third of the time
    with matplotlib.rc_context({"pdf.compression": 1}), PdfPages(str(pdf_path)) as pdf:
        for k, (name, g) in enumerate(shown, start=1):
            ents = list(g)
            # extents without the MTEXTs (ezdxf's fast extents overestimate MTEXT
            # with exact line spacing); they lie inside the cell's frame anyway
            box = _group_box([e for e in ents if e.dxftype() != "MTEXT"], doc)
            fig, ax = _figure(A3_IN)
            _draw(doc, ax, entities=ents, ctx=ctx)
            if box:
                _keep_aspect_limits(ax, box, A3_IN)
            head = (f"sections.dxf preview, page {k}: section "
                    f"{name[len(d.SECTION_GROUP_PREFIX):]}")
            if rest:
                head += (f" ({len(shown)} of the {n_all} section types are drawn here; "
                         f"the other {len(rest)} are listed on the last page and drawn "
                         "in sections.dxf)")
            fig.text(0.01, 0.99, head, fontsize=8, va="top")
            pdf.savefig(fig, facecolor="white")
        if rest:
            fig = Figure(figsize=A3_IN, dpi=DPI, facecolor="white")
            FigureCanvasAgg(fig)
            names = ", ".join(n[len(d.SECTION_GROUP_PREFIX):] for n, _ in rest)
            fig.text(0.05, 0.9, f"{len(rest)} more section types are drawn in sections.dxf "
                     f"but not previewed here (the preview draws the first "
                     f"{len(shown)} of {n_all}):", fontsize=12)
            fig.text(0.05, 0.85, "\n".join(textwrap.wrap(names, 150)), fontsize=9, va="top")
            pdf.savefig(fig, facecolor="white")
            return  # the whole sheet is too large to preview usefully
        fig, ax = _figure(A3_IN)
        _draw(doc, ax)
        box = _group_box(doc.modelspace(), doc)
        if box:
            _keep_aspect_limits(ax, box, A3_IN, pad=0.01)
        pdf.savefig(fig, facecolor="white")


def write_previews(out_dir) -> list[str]:
    """Render ``elevation.png`` and ``sections.pdf`` in ``out_dir`` from the DXF files
    there (each only when its DXF exists); returns the file names written."""
    out = Path(out_dir)
    written = []
    if (out / "elevation.dxf").exists():
        render_elevation_png(out / "elevation.dxf", out / "elevation.png")
        written.append("elevation.png")
    if (out / "sections.dxf").exists():
        render_sections_pdf(out / "sections.dxf", out / "sections.pdf")
        written.append("sections.pdf")
    return written


__all__ = ["write_previews", "render_elevation_png", "render_sections_pdf"]

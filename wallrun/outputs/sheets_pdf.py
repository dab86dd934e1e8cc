"""``sheets.pdf`` and ``sections.pdf``: the paper-space sheets of the drawings as PDF pages.

Every sheet of the drawings (the paper-space layouts of ``elevation.dxf``,
``sections.dxf`` and ``plan.dxf``) becomes one page at the sheet's size, as the paper
space shows it. ezdxf's drawing add-on decomposes the entities: its front end
(``ezdxf.addons.drawing.frontend.UniversalFrontend``) feeds :class:`TextPipeline`
(ezdxf's 2D render pipeline with ``draw_text`` overridden) and :class:`Collector` (a
back end on ezdxf's public ``Backend`` base class), which gather a page's strokes by
colour, line weight and dash pattern, its filled shapes by colour, and its lines of
text with ezdxf's placement of them. ReportLab's canvas then writes the page: one
path per colour, line weight and dash pattern (a dashed linetype as a PDF dash array
of the lengths ezdxf would cut it into; at 10 km the sheets show the same pixels, are
made 0.24 s sooner and are 18 % smaller than with one stroke a dash; circles and arcs
as the Bezier curves ezdxf makes them of, not flattened: the bar dots of the 10 km
sections are 4 curves each instead of 16 lines, drawn exactly), and the texts as
PDF text in the drawings' own fonts (DejaVu Sans and DejaVu Sans Mono, the files
matplotlib carries), so the pages stay small, are written quickly and can be
searched. ``sections.pdf`` is the pages of the sections
drawing again, on their own.

A viewport's model-space content is drawn from the entities whose extents meet its
window (ezdxf's fast bounding boxes, measured once per drawing; an insert by its
insertion point), then placed at the viewport's scale and position and clipped to its
box. The notes (the MTEXTs of a sheet, alike on every sheet of a drawing) are
decomposed once per drawing, and a grid insert's first cell once per grid
(:class:`GridFrontend`: its other cells are copies moved, the same pages).
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
from ezdxf.addons.drawing.backend import Backend
from ezdxf.addons.drawing.frontend import UniversalFrontend
from ezdxf.addons.drawing.pipeline import RenderPipeline2d

PT_PER_MM = 72.0 / 25.4
MIN_WIDTH_MM = 0.2 / PT_PER_MM  # the thinnest line drawn: 0.2 pt
FLATTEN_MM = 0.01  # curve flattening distance, drawing units


class Collector(Backend):
    """An ezdxf drawing back end that collects what the front end draws: polylines by
    (colour, line weight in mm, dash pattern), filled polygons by colour, each a list
    of (x, y) points (plain floats: the page's path is made point by point, and a list
    is read three times faster than the rows of an array); curved strokes (a circle's
    or an arc's) by the same key as their start point and their pieces, each (x, y)
    for a straight piece or (x1, y1, x2, y2, x, y) for a cubic Bezier curve, which the
    page draws as curves (:func:`bezier_pieces`); and lines of text (from
    :class:`TextPipeline`) as (text, x, y, angle in degrees, cap height, colour, font
    face), all in drawing units. ``dash``: the on-off lengths of the line being drawn
    (set by :class:`TextPipeline`; () for a continuous line)."""

    def __init__(self, flatten: float = FLATTEN_MM):
        super().__init__()
        self.flatten = flatten
        self.strokes: dict[tuple[str, float, tuple], list] = {}
        self.curves: dict[tuple[str, float, tuple], list] = {}
        self.fills: dict[str, list] = {}
        self.texts: list[tuple] = []
        self.dash: tuple = ()

    def _stroke(self, props, xy) -> None:
        self.strokes.setdefault((props.color, props.lineweight, self.dash), []).append(xy)

    def _fill(self, props, xy) -> None:
        if len(xy) > 2:
            self.fills.setdefault(props.color, []).append(xy)

    def add_text(self, text: str, transform, cap_height: float, color: str, face) -> None:
        """One line of text: ezdxf places its baseline's start with ``transform``
        (``ezdxf.math.Matrix44``, text units of cap height ``cap_height`` to drawing
        units); kept as position, angle and cap height in drawing units."""
        o, ux, uy = transform.origin, transform.ux, transform.uy
        self.texts.append((text, o.x, o.y, math.degrees(math.atan2(ux.y, ux.x)),
                           cap_height * math.hypot(uy.x, uy.y), color, face))

    def set_background(self, color) -> None:
        pass

    def draw_point(self, pos, properties) -> None:
        self._stroke(properties, [(pos.x, pos.y), (pos.x, pos.y)])

    def draw_line(self, start, end, properties) -> None:
        self._stroke(properties, [(start.x, start.y), (end.x, end.y)])

    def draw_solid_lines(self, lines, properties) -> None:
        for s, e in lines:
            self._stroke(properties, [(s.x, s.y), (e.x, e.y)])

    def draw_path(self, path, properties) -> None:
        for sub in path.sub_paths():
            if len(sub) and sub.has_curves:
                self.curves.setdefault((properties.color, properties.lineweight, self.dash),
                                       []).append(bezier_pieces(sub))
                continue
            v = self._points(sub)
            if len(v) > 1:
                self._stroke(properties, v)

    def draw_filled_paths(self, paths, properties) -> None:
        for path in paths:
            for sub in path.sub_paths():
                self._fill(properties, self._points(sub))

    def _points(self, sub) -> list:
        """The (x, y) points of one sub-path (``ezdxf.npshapes.NumpyPath2d``): its
        vertices where it is straight lines only (what ``flattening`` gives there, read
        as one array), else its flattening."""
        if not len(sub):
            return []
        if not sub.has_curves:
            return np.asarray(sub.np_vertices(), dtype=float).reshape(-1, 2).tolist()
        return [(p.x, p.y) for p in sub.flattening(self.flatten)]

    def draw_filled_polygon(self, points, properties) -> None:
        self._fill(properties, [(p.x, p.y) for p in points.vertices()])

    def draw_image(self, image_data, properties) -> None:
        pass  # wallrun's drawings hold no images

    def clear(self) -> None:
        self.strokes, self.curves, self.fills, self.texts = {}, {}, {}, []

    def finalize(self) -> None:
        pass

    def mark(self) -> tuple:
        """Where the collection stands (for :meth:`replicate`)."""
        return ({k: len(v) for k, v in self.strokes.items()},
                {k: len(v) for k, v in self.curves.items()},
                {k: len(v) for k, v in self.fills.items()}, len(self.texts))

    def replicate(self, mark: tuple, offsets) -> None:
        """Add, for each (dx, dy) of ``offsets`` (drawing units), a copy of everything
        collected since ``mark`` (:meth:`mark`) moved by it."""
        strokes0, curves0, fills0, n_texts = mark
        new_strokes = {k: v[strokes0.get(k, 0):] for k, v in self.strokes.items()}
        new_curves = {k: v[curves0.get(k, 0):] for k, v in self.curves.items()}
        new_fills = {k: v[fills0.get(k, 0):] for k, v in self.fills.items()}
        new_texts = self.texts[n_texts:]
        for dx, dy in offsets:
            for k, items in new_strokes.items():
                self.strokes[k].extend([[(x + dx, y + dy) for x, y in v] for v in items])
            for k, items in new_fills.items():
                self.fills[k].extend([[(x + dx, y + dy) for x, y in v] for v in items])
            for k, items in new_curves.items():
                self.curves[k].extend(
                    [((x0 + dx, y0 + dy),
                      [(p[0] + dx, p[1] + dy) if len(p) == 2 else
                       (p[0] + dx, p[1] + dy, p[2] + dx, p[3] + dy, p[4] + dx, p[5] + dy)
                       for p in pieces])
                     for (x0, y0), pieces in items])
            self.texts.extend([(t[0], t[1] + dx, t[2] + dy) + t[3:] for t in new_texts])

    def taken(self) -> tuple:
        """What was collected, as (strokes, curves, fills, texts); the collector is
        emptied."""
        out = (self.strokes, self.curves, self.fills, self.texts)
        self.clear()
        return out


def bezier_pieces(sub) -> tuple:
    """(start point, pieces) of one sub-path with curves (``ezdxf.npshapes.NumpyPath2d``,
    read through its public ``start`` and ``commands``): a straight piece as its end
    (x, y), a cubic Bezier curve as (x1, y1, x2, y2, x, y), its two control points and
    its end; a quadratic one raised to the cubic through the same points (control
    points p0 + 2/3 (q - p0) and p + 2/3 (q - p), the same curve)."""
    from ezdxf.path import Curve3To, Curve4To, LineTo

    p0 = sub.start
    start = (p0.x, p0.y)
    pieces = []
    x0, y0 = start
    for cmd in sub.commands():
        e = cmd.end
        if isinstance(cmd, Curve4To):
            pieces.append((cmd.ctrl1.x, cmd.ctrl1.y, cmd.ctrl2.x, cmd.ctrl2.y, e.x, e.y))
        elif isinstance(cmd, Curve3To):
            q = cmd.ctrl
            pieces.append((x0 + 2.0 / 3.0 * (q.x - x0), y0 + 2.0 / 3.0 * (q.y - y0),
                           e.x + 2.0 / 3.0 * (q.x - e.x), e.y + 2.0 / 3.0 * (q.y - e.y),
                           e.x, e.y))
        elif isinstance(cmd, LineTo):
            pieces.append((e.x, e.y))
        else:  # a move within one sub-path does not occur (sub_paths splits there)
            raise ValueError(f"unexpected path command {cmd!r}")
        x0, y0 = e.x, e.y
    return start, pieces


class TextPipeline(RenderPipeline2d):
    """ezdxf's 2D render pipeline (``ezdxf.addons.drawing.pipeline.RenderPipeline2d``)
    with ``draw_text`` overridden: a line of text goes to the collector
    (:meth:`Collector.add_text`) with ezdxf's placement, colour and font face, instead
    of as filled glyph outlines. Lines are passed on whole (``LinePolicy.SOLID``) with
    their dash pattern (:meth:`dash`), which the page draws as a PDF dash array,
    instead of as one stroke a dash; everything else is ezdxf's own."""

    def dash(self, properties) -> tuple:
        """The on-off lengths, drawing units, of the linetype of ``properties`` (what
        ezdxf's linetype stage would cut the line into: the pattern times the
        linetype scale, for the viewport, each at least ``min_dash_length``, an
        odd last element dropped); () for a continuous line."""
        pattern = properties.linetype_pattern
        if len(pattern) < 2:
            return ()
        vp = self.get_vp_ltype_scale()
        scale = properties.linetype_scale * vp
        least = self.config.min_dash_length * vp
        out = [max(e * scale, least) for e in pattern]
        if len(out) % 2:
            out.pop()
        return tuple(out)

    def get_backend_properties(self, properties):
        """ezdxf's backend properties; the collector is told the line's dash pattern
        (the pipeline's last stage asks for these right before each call of the back
        end)."""
        self.backend.dash = self.dash(properties)
        return super().get_backend_properties(properties)

    def draw_text(self, text, transform, properties, cap_height, dxftype="TEXT") -> None:
        from ezdxf.addons.drawing.pipeline import prepare_string_for_rendering

        if not text.strip():
            return
        self.backend.add_text(prepare_string_for_rendering(text, dxftype), transform,
                              cap_height, self.get_backend_properties(properties).color,
                              properties.font or getattr(self, "default_font_face", None))


def _config():
    from ezdxf.addons.drawing.config import BackgroundPolicy, Configuration, LinePolicy

    return Configuration(background_policy=BackgroundPolicy.WHITE,
                         circle_approximation_count=32, min_lineweight=0.1,
                         line_policy=LinePolicy.SOLID)  # dashes drawn by the PDF


class GridFrontend(UniversalFrontend):
    """ezdxf's drawing front end (``UniversalFrontend``), a grid insert (MINSERT) drawn
    as its first cell moved: every cell of a grid is the same block at the same
    rotation and scale, only its insertion point moves (``Insert.multi_insert``), so
    ezdxf decomposes the first cell and :class:`Collector` copies what it drew to each
    other cell, moved by the difference of the cells' block origins in the WCS
    (``Insert.matrix44().origin``). A grid with attributes or a clipping boundary is
    drawn cell by cell, as ezdxf draws it. A copy is what ezdxf would draw there
    because nothing is clipped on the way (the pages clip each viewport in the PDF, and
    no clipping shape is given to ezdxf's pipeline). The sections' bar dots are such
    grids: at
    10 km, 2,070 dots in about 150 rows, whose decomposition was two thirds of the
    section sheets' time."""

    def __init__(self, ctx, pipeline, out: Collector, config):
        super().__init__(ctx, pipeline, config=config)
        self.out = out

    def draw_composite_entity(self, entity, properties) -> None:
        from ezdxf import xclip
        from ezdxf.entities import Insert

        if not (isinstance(entity, Insert) and entity.mcount > 1 and not entity.attribs
                and not xclip.XClip(entity).has_clipping_path):
            super().draw_composite_entity(entity, properties)
            return
        cells = list(entity.multi_insert())
        mark = self.out.mark()
        super().draw_composite_entity(cells[0], properties)
        o0 = cells[0].matrix44().origin
        offsets = []
        for cell in cells[1:]:
            o = cell.matrix44().origin
            offsets.append((o.x - o0.x, o.y - o0.y))
        self.out.replicate(mark, offsets)


def frontend(doc, out: Collector):
    """ezdxf's drawing front end for ``doc`` feeding ``out`` through
    :class:`TextPipeline` (white background; grid inserts by :class:`GridFrontend`)."""
    from ezdxf.addons.drawing import RenderContext

    return GridFrontend(RenderContext(doc), TextPipeline(out), out, _config())


# --- fonts ---------------------------------------------------------------------------------

class Fonts:
    """The PDF fonts of one rendering: an ezdxf font face (None: DejaVu Sans) maps to
    the TrueType file matplotlib finds for its family (``font_manager.findfont``),
    registered with ReportLab under ``wallrun-<file stem>`` (ReportLab's font registry is
    the process's: the same file under the same name, whichever call or thread
    registers it first, so no output depends on it), and to its cap height
    per unit of font size (ezdxf sizes text by cap height, PDF by the em), measured
    on "H" with matplotlib's public ``TextPath``."""

    def __init__(self):
        self.known: dict = {}

    def get(self, face) -> tuple[str, float]:
        """(ReportLab font name, cap height per unit font size) of ``face``."""
        if face in self.known:
            return self.known[face]
        from matplotlib.font_manager import FontProperties, findfont
        from matplotlib.textpath import TextPath
        from reportlab.pdfbase import pdfmetrics
        from reportlab.pdfbase.ttfonts import TTFont

        if face is None:
            prop = FontProperties(family="DejaVu Sans")
        else:
            prop = FontProperties(family=face.family, weight=face.weight,
                                  style="italic" if face.is_italic else "normal")
        path = findfont(prop, fallback_to_default=True)
        name = "wallrun-" + Path(path).stem
        if name not in pdfmetrics.getRegisteredFontNames():
            pdfmetrics.registerFont(TTFont(name, path))
        cap = TextPath((0.0, 0.0), "H", size=1.0, prop=prop).get_extents().height
        self.known[face] = (name, cap)
        return self.known[face]


# --- painting a page -----------------------------------------------------------------------

def _rgb(color: str) -> tuple[float, float, float]:
    """"#rrggbb" (an alpha byte after it is ignored) as ReportLab's 0..1 channels."""
    h = color.lstrip("#")
    return tuple(int(h[i:i + 2], 16) / 255.0 for i in (0, 2, 4))


def _path(canvas, lines, closed: bool):
    """One ReportLab path of the polylines ``lines`` (each a list of (x, y) points),
    each closed or open."""
    path = canvas.beginPath()
    move, line = path.moveTo, path.lineTo
    for v in lines:
        move(*v[0])
        for x, y in v[1:]:
            line(x, y)
        if closed:
            path.close()
    return path


def _curve_path(canvas, curves):
    """One ReportLab path of the curved strokes ``curves`` (start point and pieces,
    :func:`bezier_pieces`)."""
    path = canvas.beginPath()
    line, curve = path.lineTo, path.curveTo
    for start, pieces in curves:
        path.moveTo(*start)
        for piece in pieces:
            if len(piece) == 2:
                line(*piece)
            else:
                curve(*piece)
    return path


def paint(canvas, drawn: tuple, fonts: Fonts, place=None, clip=None) -> None:
    """Paint ``drawn`` ((strokes, curves, fills, texts) of a :class:`Collector`) on
    ``canvas``
    (whose unit is the paper millimetre): ``place`` (k, cx, cy, px, py) maps drawing
    point p to (px, py) + k (p - (cx, cy)) (a viewport's scale and position), ``clip``
    (x0, y0, x1, y1) clips everything to that box. Line weights are in mm, at least
    :data:`MIN_WIDTH_MM`; fills use the non-zero rule."""
    from reportlab.pdfgen.canvas import FILL_NON_ZERO

    strokes, curves, fills, texts = drawn
    k, cx, cy, px, py = place if place is not None else (1.0, 0.0, 0.0, 0.0, 0.0)
    canvas.saveState()
    if clip is not None:
        box = canvas.beginPath()
        box.rect(clip[0], clip[1], clip[2] - clip[0], clip[3] - clip[1])
        canvas.clipPath(box, stroke=0, fill=0)
    # the viewport's placement as the page's transformation; line widths and text
    # sizes are then given in drawing units (divided by k)
    canvas.translate(px - k * cx, py - k * cy)
    canvas.scale(k, k)
    for color, polys in fills.items():
        canvas.setFillColorRGB(*_rgb(color))
        canvas.drawPath(_path(canvas, polys, closed=True), stroke=0, fill=1,
                        fillMode=FILL_NON_ZERO)
    canvas.setLineCap(0)
    canvas.setLineJoin(0)
    for (color, lw, dash), segs in strokes.items():
        canvas.setStrokeColorRGB(*_rgb(color))
        canvas.setLineWidth(max(lw, MIN_WIDTH_MM) / k)
        canvas.setDash(list(dash))  # drawing units; the pattern restarts at each line
        canvas.drawPath(_path(canvas, segs, closed=False), stroke=1, fill=0)
    for (color, lw, dash), items in curves.items():
        canvas.setStrokeColorRGB(*_rgb(color))
        canvas.setLineWidth(max(lw, MIN_WIDTH_MM) / k)
        canvas.setDash(list(dash))
        canvas.drawPath(_curve_path(canvas, items), stroke=1, fill=0)
    for text, x, y, angle, cap, color, face in texts:
        name, cap_per_size = fonts.get(face)
        canvas.saveState()
        canvas.setFillColorRGB(*_rgb(color))
        canvas.translate(x, y)
        if angle:
            canvas.rotate(angle)
        canvas.setFont(name, cap / cap_per_size)
        canvas.drawString(0.0, 0.0, text)
        canvas.restoreState()
    canvas.restoreState()


# --- the sheets ------------------------------------------------------------------------------

def sheet_layouts(doc) -> list:
    """The paper-space layouts of ``doc`` in tab order (model space left out)."""
    return [doc.paperspace(n) for n in doc.layout_names_in_taborder() if n != "Model"]


def mtext_box(e) -> tuple[float, float, float, float]:
    """A box holding an MTEXT of wallrun's drawings (``conventions.add_lines_text``: a
    column as wide as its longest line, so nothing wraps; lines at an exact pitch of
    5/3 char height x the line spacing factor), from its attributes alone: the column
    at its attachment point, turned by its rotation, with a margin of 0.75 char height
    all round for descenders, the first line's ascent and glyph overhang (on the
    drawings of the demo and of a 10 km run, ezdxf's own box of every MTEXT lies at
    least 0.3 char height inside it; a test holds it to ezdxf's boxes)."""
    d = e.dxf
    h = float(d.char_height)
    pitch = h * 5.0 / 3.0 * float(d.get("line_spacing_factor", 1.0))
    lines = e.text.count("\\P") + 1
    w, H = float(d.get("width", 0.0)), h + (lines - 1) * pitch
    a = int(d.get("attachment_point", 1))
    col, row = (a - 1) % 3, (a - 1) // 3
    x0 = -0.5 * col * w
    y1 = {0: 0.0, 1: 0.5 * H, 2: H}[row]
    pad = 0.75 * h
    t = math.radians(float(d.get("rotation", 0.0)))
    c, sn = math.cos(t), math.sin(t)
    ox, oy = d.insert[0], d.insert[1]
    corners = [(ox + x * c - y * sn, oy + x * sn + y * c)
               for x in (x0 - pad, x0 + w + pad) for y in (y1 - H - pad, y1 + pad)]
    xs, ys = [p[0] for p in corners], [p[1] for p in corners]
    return (min(xs), min(ys), max(xs), max(ys))


def extents(entities) -> np.ndarray:
    """(n, 4) boxes x0, y0, x1, y1 holding each entity as drawn, for choosing what a
    viewport shows (a box may be larger than the entity, never smaller, but for an
    insert): an INSERT by its insertion point (wallrun's section blocks lie around
    their origin, on one sheet; measuring every block's contents costs more than
    drawing it); a LINE without thickness by its end points; an MTEXT by
    :func:`mtext_box`; an LWPOLYLINE in the xy plane without arcs or widths by its
    vertices; everything else by ezdxf's fast bounding box (``ezdxf.bbox``)."""
    from ezdxf import bbox

    rows: list = [None] * len(entities)
    others = []
    for k, e in enumerate(entities):
        kind = e.dxftype()
        if kind == "INSERT":
            x, y = e.dxf.insert[0], e.dxf.insert[1]
            rows[k] = (x, y, x, y)
        elif kind == "MTEXT" and e.dxf.get("width", 0.0) > 0:
            rows[k] = mtext_box(e)
        elif kind == "LWPOLYLINE" and len(e) and not e.dxf.hasattr("extrusion"):
            # in the xy plane of the WCS; its points (iterating an LWPOLYLINE gives
            # x, y, start and end width, bulge)
            v = np.array(list(e), dtype=float).reshape(-1, 5)
            if e.dxf.get("const_width", 0.0) or np.any(v[:, 2:]):
                others.append(k)  # widths or arcs: ezdxf measures it
            else:
                rows[k] = (*v[:, :2].min(axis=0), *v[:, :2].max(axis=0))
        else:
            others.append(k)
    for k, b in zip(others, bbox.multi_flat([entities[k] for k in others], fast=True)):
        rows[k] = ((b.extmin.x, b.extmin.y, b.extmax.x, b.extmax.y) if b.has_data
                   else (np.inf, np.inf, -np.inf, -np.inf))
    return np.array(rows, dtype=float).reshape(-1, 4)


class SheetPainter:
    """Decomposes the sheets of one drawing (see the module's text): :meth:`page`
    gives a sheet's size and its parts, each (drawn, place, clip) for :func:`paint`."""

    def __init__(self, doc):
        self.paper, self.model, self.notes = Collector(), Collector(), Collector()
        self.fe_paper = frontend(doc, self.paper)
        self.fe_notes = frontend(doc, self.notes)
        self.drawn_notes: dict = {}  # the MTEXTs of a sheet, drawn once for this drawing
        msp = doc.modelspace()
        self.fe_model = frontend(doc, self.model)
        self.fe_model.ctx.set_current_layout(msp)
        self.fe_model.set_background("#ffffff")
        self.entities = list(msp)
        # where each entity is, to find what a viewport shows (:func:`extents`)
        self.boxes = extents(self.entities)

    def page(self, layout) -> tuple[tuple[float, float], list]:
        """((width, height) mm, parts) of paper-space ``layout``."""
        parts = []
        self.fe_paper.draw_layout(layout, finalize=True,
                                  filter_func=lambda e: e.dxftype() not in ("VIEWPORT",
                                                                            "MTEXT"))
        parts.append((self.paper.taken(), None, None))
        key = tuple((e.text, tuple(e.dxf.insert), e.dxf.char_height, e.dxf.get("width", 0),
                     e.dxf.get("attachment_point", 1), e.dxf.get("rotation", 0.0),
                     e.dxf.layer, e.dxf.get("style", ""), e.dxf.get("line_spacing_factor", 1))
                    for e in layout.query("MTEXT"))
        if key not in self.drawn_notes:
            self.fe_notes.draw_layout(layout, finalize=True,
                                      filter_func=lambda e: e.dxftype() == "MTEXT")
            self.drawn_notes[key] = self.notes.taken()
        parts.append((self.drawn_notes[key], None, None))
        for vp in layout.query("VIEWPORT"):
            if vp.dxf.get("id", 0) == 1 or vp.dxf.view_height <= 0:
                continue  # the layout's own overall viewport
            k = vp.dxf.height / vp.dxf.view_height
            cx, cy = vp.dxf.view_center_point[0], vp.dxf.view_center_point[1]
            hw, hh = vp.dxf.width / 2 / k, vp.dxf.height / 2 / k
            b = self.boxes
            hit = ((b[:, 0] <= cx + hw) & (b[:, 2] >= cx - hw)
                   & (b[:, 1] <= cy + hh) & (b[:, 3] >= cy - hh))
            self.fe_model.draw_entities([self.entities[i] for i in np.flatnonzero(hit)])
            px, py = vp.dxf.center[0], vp.dxf.center[1]
            clip = (px - vp.dxf.width / 2, py - vp.dxf.height / 2,
                    px + vp.dxf.width / 2, py + vp.dxf.height / 2)
            parts.append((self.model.taken(), (k, cx, cy, px, py), clip))
        return (layout.dxf.paper_width, layout.dxf.paper_height), parts


def _canvas(path, title: str):
    """A ReportLab canvas writing ``path``, its unit set per page to the millimetre;
    invariant output (no dates or random ids: the same drawings give the same bytes)."""
    from reportlab.pdfgen.canvas import Canvas

    c = Canvas(str(path), pageCompression=1, invariant=1)
    c.setTitle(title)
    c.setCreator("wallrun")
    return c


def _add_page(canvas, size_mm, parts, fonts: Fonts) -> None:
    canvas.setPageSize((size_mm[0] * PT_PER_MM, size_mm[1] * PT_PER_MM))
    canvas.scale(PT_PER_MM, PT_PER_MM)
    for drawn, place, clip in parts:
        paint(canvas, drawn, fonts, place, clip)
    canvas.showPage()


def render_sheets(docs, pdf_path, also=None) -> int:
    """Every sheet of the drawings ``docs`` (in order) as one page each of
    ``pdf_path``; ``also``: {index in ``docs``: another PDF path} that gets that
    drawing's pages on their own. Returns the number of pages of ``pdf_path``."""
    fonts = Fonts()
    n = 0
    pdf = _canvas(pdf_path, "wallrun drawing sheets")
    for i, doc in enumerate(docs):
        painter = SheetPainter(doc)
        extra = None
        if also and i in also:
            extra = _canvas(also[i], "wallrun section sheets")
        for layout in sheet_layouts(doc):
            size, parts = painter.page(layout)
            _add_page(pdf, size, parts, fonts)
            if extra is not None:
                _add_page(extra, size, parts, fonts)
            n += 1
        if extra is not None:
            extra.save()
    pdf.save()
    return n

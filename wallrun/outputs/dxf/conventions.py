"""Drafting conventions shared by wallrun's DXF drawings, set once here.

The layer scheme (wallrun's own names; colour, linetype and lineweight by layer), the
text styles, drawing scales, the blocks for what repeats on a drawing (level marks,
bar dots, the north point), dimension chains drawn as lines and text, leaders, the
cautions, the section outline, and helpers along the wall line.

Everything goes through ezdxf's public API: a document from ``ezdxf.new``, entities
from the layout factories (``add_line``, ``add_lwpolyline``, ``add_text``,
``add_blockref`` with ``add_attrib``), ``doc.audit()`` and ``doc.saveas``.

Model space is in metres (``$INSUNITS`` = 6). Sizes of text, ticks and symbols are
given in paper millimetres and converted with the drawing's scale 1:N
(``paper(mm, N)`` = mm * N / 1000 m), so that a drawing printed (or shown in a sheet's
viewport) at 1:N has 2.5 mm text. Linetype patterns are made in model metres for that
scale (``$LTSCALE`` = 1).

Dimensions are drawn as one polyline per chain (extension lines, dimension line and
oblique ticks) and one text per length, not as DIMENSION entities: ezdxf makes a
DIMENSION's geometry block at about 3 ms each through its public API (a dozen
entities), which on a 10 km wall of hundreds of section types would be most of the
time of the whole run. Every entity costs about the same to make and to write, so
the drawings are built from few entities: one polyline where a stroke can be one,
one MTEXT for a column of lines, one grid insert for a row of bar dots.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import ezdxf
import numpy as np
from ezdxf.enums import TextEntityAlignment

from wallrun.cautions import CAUTION, not_checked

A = TextEntityAlignment

# --- layers --------------------------------------------------------------------------


@dataclass(frozen=True)
class Layer:
    name: str
    color: int  # AutoCAD colour index (ACI)
    linetype: str  # "CONTINUOUS" or one of the linetypes of :data:`LINETYPES`
    lineweight: int  # 1/100 mm
    description: str


#: Linetypes: name -> (description, pattern in paper mm: dash > 0, gap < 0, dot 0).
LINETYPES = {
    "WALLRUN_DASH": ("dashes 6 mm, gaps 2 mm", (6.0, -2.0)),
    "WALLRUN_CHAIN": ("long dash, gap, short dash, gap", (10.0, -2.0, 2.0, -2.0)),
    "WALLRUN_SPOT": ("spots 0.5 mm every 2 mm", (0.5, -1.5)),
}

_L = [
    # elevation and plan
    Layer("WALLRUN-GROUND-SURVEYED", 34, "WALLRUN_DASH", 25, "existing ground, surveyed"),
    Layer("WALLRUN-LEVEL-FINISHED", 94, "CONTINUOUS", 25, "finished level"),
    Layer("WALLRUN-WALL-TOP", 5, "CONTINUOUS", 50, "top of wall and run end faces"),
    Layer("WALLRUN-BASE-UNDERSIDE", 1, "CONTINUOUS", 50, "underside of base (founding)"),
    Layer("WALLRUN-BASE-TOPSIDE", 8, "WALLRUN_DASH", 18, "top of base, hidden"),
    Layer("WALLRUN-MOVEMENT-JOINTS", 6, "WALLRUN_CHAIN", 35, "movement joints between panels"),
    Layer("WALLRUN-PANEL-NAMES", 7, "CONTINUOUS", 18, "panel names and section types"),
    Layer("WALLRUN-RUN-NAMES", 7, "CONTINUOUS", 25, "run names"),
    Layer("WALLRUN-CHAINAGE-MARKS", 8, "CONTINUOUS", 18, "chainage ticks and figures"),
    Layer("WALLRUN-LEVEL-STAFF", 8, "CONTINUOUS", 18, "level scale"),
    Layer("WALLRUN-LEVEL-FIGURES", 7, "CONTINUOUS", 18, "level figures at joints and ends"),
    Layer("WALLRUN-LINE-OF-WALL", 5, "CONTINUOUS", 70, "wall line in plan (front face)"),
    Layer("WALLRUN-STEM-FACES", 5, "CONTINUOUS", 35, "stem faces in plan"),
    Layer("WALLRUN-BASE-FOOTPRINT", 8, "WALLRUN_DASH", 25, "base outline in plan, hidden"),
    Layer("WALLRUN-SETTING-OUT", 8, "WALLRUN_CHAIN", 18, "profile reference line in plan"),
    Layer("WALLRUN-SETTING-TABLE", 7, "CONTINUOUS", 18, "setting-out table"),
    Layer("WALLRUN-NORTH-POINT", 7, "CONTINUOUS", 25, "north point"),
    Layer("WALLRUN-MATCH-LINES", 3, "WALLRUN_CHAIN", 35, "match lines between sheets"),
    # sections
    Layer("WALLRUN-CONCRETE-EDGE", 7, "CONTINUOUS", 50, "concrete outline"),
    Layer("WALLRUN-GROUND-FRONT", 34, "CONTINUOUS", 25, "ground in front of the wall"),
    Layer("WALLRUN-FILL-BEHIND", 52, "WALLRUN_DASH", 25, "backfill surface behind the wall"),
    Layer("WALLRUN-WATER-BEHIND", 150, "WALLRUN_DASH", 18, "design water level behind the wall"),
    Layer("WALLRUN-STEEL-MAIN", 1, "CONTINUOUS", 35, "main bars in elevation"),
    Layer("WALLRUN-STEEL-CROSS", 1, "CONTINUOUS", 25, "distribution bars cut (dots)"),
    Layer("WALLRUN-STEEL-MARKS", 174, "CONTINUOUS", 18, "bar marks and their leaders"),
    Layer("WALLRUN-STEEL-TABLE", 7, "CONTINUOUS", 18, "bar tables"),
    Layer("WALLRUN-SIZES", 140, "CONTINUOUS", 18, "dimensions"),
    Layer("WALLRUN-LEVEL-TAGS", 7, "CONTINUOUS", 18, "level marks and their figures"),
    Layer("WALLRUN-DESIGN-DATA", 7, "CONTINUOUS", 18, "design conditions text"),
    Layer("WALLRUN-CELL-TITLES", 7, "CONTINUOUS", 35, "section titles"),
    Layer("WALLRUN-SLIP-CIRCLE", 30, "WALLRUN_CHAIN", 25,
          "critical slip circle of the overall stability check"),
    # every sheet
    Layer("WALLRUN-SHEET-FRAME", 7, "CONTINUOUS", 35, "title block frame and text"),
    Layer("WALLRUN-CAUTIONS", 1, "CONTINUOUS", 25, "notes and cautions"),
    Layer("WALLRUN-SHEET-WINDOWS", 8, "CONTINUOUS", 13, "viewports of the sheets"),
    # the only layer whose entities carry their own colour and linetype: the line
    # samples of a key, which copy the look of the layer they explain
    Layer("WALLRUN-KEY-SAMPLES", 7, "CONTINUOUS", 25, "line samples of the key"),
]
LAYERS: dict[str, Layer] = {lay.name: lay for lay in _L}

# Short names for the code.
L_GROUND = "WALLRUN-GROUND-SURVEYED"
L_FINISHED = "WALLRUN-LEVEL-FINISHED"
L_TOP = "WALLRUN-WALL-TOP"
L_UNDERSIDE = "WALLRUN-BASE-UNDERSIDE"
L_BASE_TOP = "WALLRUN-BASE-TOPSIDE"
L_JOINTS = "WALLRUN-MOVEMENT-JOINTS"
L_PANELS = "WALLRUN-PANEL-NAMES"
L_RUNS = "WALLRUN-RUN-NAMES"
L_CHAINAGE = "WALLRUN-CHAINAGE-MARKS"
L_LEVELS = "WALLRUN-LEVEL-STAFF"
L_LEVEL_TEXT = "WALLRUN-LEVEL-FIGURES"
L_WALL_PLAN = "WALLRUN-LINE-OF-WALL"
L_STEM_PLAN = "WALLRUN-STEM-FACES"
L_BASE_PLAN = "WALLRUN-BASE-FOOTPRINT"
L_REFERENCE = "WALLRUN-SETTING-OUT"
L_SETTING_TABLE = "WALLRUN-SETTING-TABLE"
L_NORTH = "WALLRUN-NORTH-POINT"
L_MATCH = "WALLRUN-MATCH-LINES"
L_CONCRETE = "WALLRUN-CONCRETE-EDGE"
L_FRONT = "WALLRUN-GROUND-FRONT"
L_FILL = "WALLRUN-FILL-BEHIND"
L_WATER = "WALLRUN-WATER-BEHIND"
L_BARS = "WALLRUN-STEEL-MAIN"
L_DOTS = "WALLRUN-STEEL-CROSS"
L_MARKS = "WALLRUN-STEEL-MARKS"
L_TABLE = "WALLRUN-STEEL-TABLE"
L_DIMS = "WALLRUN-SIZES"
L_LEVEL_TAGS = "WALLRUN-LEVEL-TAGS"
L_CONDITIONS = "WALLRUN-DESIGN-DATA"
L_TITLES = "WALLRUN-CELL-TITLES"
L_SLIP = "WALLRUN-SLIP-CIRCLE"
L_FRAME = "WALLRUN-SHEET-FRAME"
L_NOTES = "WALLRUN-CAUTIONS"
L_WINDOWS = "WALLRUN-SHEET-WINDOWS"
L_KEY = "WALLRUN-KEY-SAMPLES"

TEXT_STYLE = "WALLRUN-LETTERING"
TABLE_STYLE = "WALLRUN-COLUMNS"  # a fixed-pitch font: tables as aligned text lines
TEXT_MM = 2.5  # ordinary text height on paper, mm
SMALL_MM = 1.8  # small text, mm
TITLE_MM = 3.5  # titles, mm

#: Names of the blocks for what repeats (made in every document by new_document).
B_LEVEL = "WALLRUN-LEVEL-MARK"  # downward triangle at the origin, tip on the level
B_NORTH = "WALLRUN-NORTH-ARROW"

#: Standard drawing scales 1:N that wallrun chooses from.
SCALES = (10, 20, 25, 50, 100, 200, 250, 500, 1000, 1250, 2000, 2500, 5000, 10000,
          20000, 25000, 50000, 100000)

UNITS_NOTE = "Levels, chainages and coordinates in metres; section sizes in millimetres."
STATUS = "PRELIMINARY - NOT FOR CONSTRUCTION"


def caution_lines(site) -> tuple[str, ...]:
    """The notes every drawing carries: the status, the caution and what wallrun does
    not check for ``site`` (``wallrun.cautions``), and the units."""
    return (STATUS + ".", CAUTION,
            "NOT CHECKED by wallrun: " + "; ".join(not_checked(site)) + ".", UNITS_NOTE)


def paper(mm: float, scale: float) -> float:
    """Model length in m of ``mm`` paper millimetres at scale 1:``scale``."""
    return mm * scale / 1000.0


def pick_scale(wanted: float) -> int:
    """Smallest standard scale 1:N with N >= ``wanted`` (the largest listed if none)."""
    for s in SCALES:
        if s >= wanted - 1e-9:
            return s
    return SCALES[-1]


def pick_scale_down(wanted: float, lowest: int = 50) -> int:
    """Largest standard scale 1:N with N <= ``wanted``, at least ``lowest``."""
    best = lowest
    for s in SCALES:
        if lowest <= s <= wanted + 1e-9:
            best = s
    return best


def along_wall_scale(panel_lengths) -> int:
    """Scale of drawings along the wall (elevation, plan), 1:N.

    Chosen so that the median panel is at least 25 mm long on paper (room for its name
    and section type at 2.5 mm text): the largest standard N <= 40 x median length in
    m, and at least 1:50.
    """
    lengths = np.asarray(list(panel_lengths), dtype=float)
    med = float(np.median(lengths)) if lengths.size else 10.0
    return pick_scale_down(40.0 * med, lowest=50)


# --- document ------------------------------------------------------------------------

def new_document(scale: int, title: str = ""):
    """A new DXF R2013 drawing in metres with wallrun's layers, linetypes, text styles
    and blocks, sized for printing at 1:``scale``."""
    doc = ezdxf.new("R2013", setup=False, units=ezdxf.units.M)
    doc.header["$MEASUREMENT"] = 1
    doc.header["$LUNITS"] = 2
    doc.header["$LTSCALE"] = 1.0
    doc.header["$PSLTSCALE"] = 0
    for name, (desc, pat) in LINETYPES.items():
        elems = [paper(v, scale) for v in pat]
        doc.linetypes.add(name, pattern=[sum(abs(e) for e in elems)] + elems, description=desc)
    for lay in _L:
        layer = doc.layers.add(lay.name, color=lay.color, linetype=lay.linetype,
                               lineweight=lay.lineweight)
        layer.description = lay.description
    doc.styles.add(TEXT_STYLE, font="DejaVuSans.ttf")
    doc.styles.add(TABLE_STYLE, font="DejaVuSansMono.ttf")
    doc.header.custom_vars.append("WALLRUN_SCALE", f"1:{scale}")
    if title:
        doc.header.custom_vars.append("WALLRUN_DRAWING", title)
    _define_blocks(doc, scale)
    from wallrun.outputs.dxf import titles

    titles.define(doc)
    return doc


def _define_blocks(doc, scale: int) -> None:
    """The blocks of :data:`B_LEVEL` and :data:`B_NORTH`, sized in paper
    mm for 1:``scale``; entities on layer 0 (they take the layer of their INSERT)."""
    p = lambda mm: paper(mm, scale)  # noqa: E731
    blk = doc.blocks.new(B_LEVEL, dxfattribs={"description": "level mark: tip on the level"})
    s = p(1.6)
    blk.add_lwpolyline([(0, 0), (-s, 1.6 * s), (s, 1.6 * s)], close=True)
    blk.add_line((-2.2 * s, 0), (2.2 * s, 0))
    blk.add_attdef("LEVEL", (1.8 * s, 1.0 * s), dxfattribs={
        "height": p(SMALL_MM), "style": TEXT_STYLE})
    blk = doc.blocks.new(B_NORTH, dxfattribs={"description": "north arrow"})
    blk.add_lwpolyline([(-p(3), -p(5)), (0, p(5)), (p(3), -p(5)), (0, -p(2))], close=True)
    blk.add_text("N", height=p(TEXT_MM), dxfattribs={
        "style": TEXT_STYLE, "halign": 1, "valign": 1, "insert": (0, p(6)),
        "align_point": (0, p(6))})


class Lettering:
    """Widths of text as drawn in wallrun's text styles, measured with ezdxf's font
    support (``ezdxf.fonts.fonts.make_font``); made once per drawing, it remembers the
    widths it measured for that drawing (the notes of every sheet are wrapped alike)."""

    def __init__(self):
        from ezdxf.fonts import fonts

        self._sans = fonts.make_font("DejaVuSans.ttf", 1.0)
        self._mono = fonts.make_font("DejaVuSansMono.ttf", 1.0)
        self._known: dict[tuple[str, bool], float] = {}

    def width(self, s: str, mm: float, mono: bool = False) -> float:
        """Width of ``s`` at text height ``mm`` (the height of a capital), same unit."""
        w = self._known.get((s, mono))
        if w is None:
            w = self._known[(s, mono)] = (self._mono if mono else self._sans).text_width(s)
        return w * mm


def add_text(layout, text: str, xy, height: float, layer: str,
             align: TextEntityAlignment = A.MIDDLE_LEFT, rotation: float = 0.0,
             style: str = TEXT_STYLE):
    """One TEXT in wallrun's text style at ``xy`` with ``align`` (one of the nine point
    alignments, not ALIGNED or FIT)."""
    h, v = _ALIGN[align]
    p = (float(xy[0]), float(xy[1]))
    attribs = {"layer": layer, "style": style, "insert": p}
    if h or v:
        attribs.update(halign=h, valign=v, align_point=p)
    return layout.add_text(text_escape(str(text)), height=float(height),
                           rotation=float(rotation),
                           dxfattribs=attribs)


_ALIGN = {A.LEFT: (0, 0), A.BOTTOM_LEFT: (0, 1), A.BOTTOM_CENTER: (1, 1),
          A.BOTTOM_RIGHT: (2, 1), A.MIDDLE_LEFT: (0, 2), A.MIDDLE_CENTER: (1, 2),
          A.MIDDLE_RIGHT: (2, 2), A.TOP_LEFT: (0, 3), A.TOP_CENTER: (1, 3),
          A.TOP_RIGHT: (2, 3)}


def add_lines_text(layout, lines, xy, height: float, layer: str, pitch: float,
                   attach: int = 1, style: str = TEXT_STYLE, rotation: float = 0.0,
                   lt: "Lettering | None" = None):
    """One MTEXT of ``lines`` at ``xy`` (``attach`` 1 top left, 3 top right, 7 bottom
    left ...), lines exactly ``pitch`` apart, its column as wide as its longest line
    (measured, so that nothing wraps)."""
    lt = lt or Lettering()
    text = "\\P".join(mtext_escape(str(t)) for t in lines)
    width = max(lt.width(str(t), height, mono=style == TABLE_STYLE) for t in lines)
    return layout.add_mtext(text, dxfattribs={
        "layer": layer, "style": style, "char_height": float(height),
        "insert": (float(xy[0]), float(xy[1])), "attachment_point": attach,
        "rotation": float(rotation), "line_spacing_style": 2,  # exact
        "line_spacing_factor": pitch / (height * 5.0 / 3.0),
        "width": 1.02 * width + 0.01 * height})


def text_escape(s: str) -> str:
    """Text shown as given in a TEXT or ATTRIB value (a project name, a section type).

    A character that is not printable (a line break) becomes a space: one line of text
    holds none. A caret is written ``^ `` (DXF caret notation: ``^J`` would be read as
    a line feed). Where ``%%`` occurs, every ``%`` is written ``%%%``, the code of one
    percent sign, so that no ``%%c``, ``%%d``, ``%%p``, ``%%u`` or ``%%nnn`` code (the
    special-character codes of DXF TEXT) is read into it. ezdxf's ``plain_text()``
    gives ``s`` back, but for a caret that ends it, which ezdxf's reading drops."""
    if not s.isprintable():
        s = "".join(ch if ch.isprintable() else " " for ch in s)
    if "^" in s:
        s = s.replace("^", "^ ")
    return s.replace("%", "%%%") if "%%" in s else s


def mtext_escape(s: str) -> str:
    """Plain text for MTEXT content: backslashes and braces escaped, then as
    :func:`text_escape` (MTEXT reads the carets and ``%%`` codes too)."""
    return text_escape(s.replace("\\", "\\\\").replace("{", "\\{").replace("}", "\\}"))


def add_polyline(layout, pts, layer: str, close: bool = False):
    """An LWPOLYLINE through ``pts``: (n, 2) points, or (n, 5) rows x, y, start width,
    end width, bulge."""
    a = np.asarray(pts, dtype=float)
    fmt = "xyseb" if a.ndim == 2 and a.shape[1] == 5 else "xy"
    a = a.reshape(-1, 5 if fmt == "xyseb" else 2)
    return layout.add_lwpolyline(a.tolist(), format=fmt, close=close,
                                 dxfattribs={"layer": layer})


def add_level_mark(layout, xy, text: str, layer: str = L_LEVEL_TAGS, left: bool = False,
                   scale: int = 100):
    """An INSERT of the level mark (:data:`B_LEVEL`) with its tip at ``xy`` and its
    figure as the attribute LEVEL, right of the mark (left of it with ``left``)."""
    s = paper(1.6, scale)
    x, y = float(xy[0]), float(xy[1])
    ref = layout.add_blockref(B_LEVEL, (x, y), dxfattribs={"layer": layer})
    if left:
        at = dict(halign=2, valign=0, align_point=(x - 1.8 * s, y + s))
        ref.add_attrib("LEVEL", text, (x - 1.8 * s, y + s), dxfattribs={
            "layer": layer, "height": paper(SMALL_MM, scale), "style": TEXT_STYLE, **at})
    else:
        ref.add_attrib("LEVEL", text, (x + 1.8 * s, y + s), dxfattribs={
            "layer": layer, "height": paper(SMALL_MM, scale), "style": TEXT_STYLE})
    return ref


def dot_block(doc, r: float) -> str:
    """Name of the block of one bar dot (a circle of radius ``r`` m at its origin, on
    layer 0), made once per radius (to 0.01 mm) in ``doc``."""
    name = f"WALLRUN-BAR-DOT-{round(r * 1e5):d}"
    if name not in doc.blocks:
        doc.blocks.new(name, dxfattribs={"description": "distribution bar cut"}).add_circle(
            (0.0, 0.0), round(r * 1e5) / 1e5)
    return name


def add_dimensions(layout, points, base, scale: int, vertical: bool = False,
                   layer: str = L_DIMS, lt: "Lettering | None" = None) -> list:
    """A chain of linear dimensions between consecutive ``points`` (model xy, m) with
    the dimension line through ``base``, horizontal or ``vertical``; segments of zero
    length are left out. One LWPOLYLINE draws the whole chain (each extension line
    from 1 mm off its point to 1.5 mm past the line, the dimension line and an oblique
    1.5 mm tick at every extension line, retraced where the stroke turns back), and
    one TEXT per segment gives its length in mm, 0.8 mm above (left of) the line; with
    ``lt`` given, a figure that would run into the one before it along the line goes
    below (right of) the line instead. Returns the entities made."""
    ux, uy = (0.0, 1.0) if vertical else (1.0, 0.0)
    nx, ny = -uy, ux  # the side the text stands on
    P = lambda mm: paper(mm, scale)  # noqa: E731
    bx, by = base
    along = lambda p: (p[0] - bx) * ux + (p[1] - by) * uy  # noqa: E731
    pts = [points[0]]
    for q in points[1:]:
        if abs(along(q) - along(pts[-1])) > 1e-9:
            pts.append(q)
    if len(pts) < 2:
        return []
    t = P(1.5) / math.sqrt(2.0)
    tx, ty = t * (ux + nx), t * (uy + ny)
    path = []
    for p in pts:
        f = (bx + along(p) * ux, by + along(p) * uy)  # foot on the dimension line
        vx, vy = f[0] - p[0], f[1] - p[1]
        L = math.hypot(vx, vy)
        ex, ey = (vx / L, vy / L) if L > 1e-12 else (-nx, -ny)
        s0 = (p[0] + ex * P(1.0), p[1] + ey * P(1.0))
        s1 = (f[0] + ex * P(1.5), f[1] + ey * P(1.5))
        path += [f, s1, s0, s1, f, (f[0] - tx, f[1] - ty), (f[0] + tx, f[1] + ty), f]
    out = [add_polyline(layout, path, layer)]
    off = P(0.8)
    last_end = -math.inf  # along the line, the far end of the previous figure above it
    for p, q in zip(pts[:-1], pts[1:]):
        a, b = sorted((along(p), along(q)))
        m = 0.5 * (a + b)
        text = f"{(b - a) * 1000.0:.0f}"
        half = P(lt.width(text, SMALL_MM) / 2 + 0.5) if lt is not None else 0.0
        above = lt is None or m - half >= last_end
        if above:
            last_end = m + half
        side = off if above else -off
        mid = (bx + m * ux + nx * side, by + m * uy + ny * side)
        align = A.BOTTOM_CENTER if above else A.TOP_CENTER
        out.append(add_text(layout, text, mid, P(SMALL_MM), layer, align,
                            rotation=90.0 if vertical else 0.0))
    return out


def leader_path(start, anchor, r: float, via=()) -> list:
    """Vertices (x, y, start width, end width, bulge) of a leader polyline from
    ``start`` through the points ``via`` to the edge of a circle of radius ``r`` round
    ``anchor``, then round that circle as two half-circle arcs (the dot on the bar)."""
    pts = [tuple(start), *[tuple(v) for v in via]]
    lx, ly = pts[-1]
    ax, ay = anchor
    L = math.hypot(lx - ax, ly - ay)
    ex, ey = ((lx - ax) / L, (ly - ay) / L) if L > 1e-12 else (1.0, 0.0)
    c1 = (ax + r * ex, ay + r * ey)
    c2 = (ax - r * ex, ay - r * ey)
    rows = [(x, y, 0, 0, 0.0) for x, y in pts]
    rows += [(*c1, 0, 0, 1.0), (*c2, 0, 0, 1.0), (*c1, 0, 0, 0.0)]
    return rows


def key_sample(layout, p, q, layer: str):
    """A LINE from p to q on the key layer drawn like ``layer`` (its colour, linetype
    and lineweight), so that the layer itself holds only the real geometry."""
    lay = LAYERS[layer]
    return layout.add_line(p, q, dxfattribs={"layer": L_KEY, "color": lay.color,
                                             "linetype": lay.linetype,
                                             "lineweight": lay.lineweight})


def audit_or_raise(doc, path) -> None:
    """Run ezdxf's audit and refuse to write a drawing with errors."""
    auditor = doc.audit()
    if auditor.has_errors:
        msgs = "; ".join(str(e.message) for e in auditor.errors[:5])
        raise RuntimeError(f"{path}: the DXF audit found errors: {msgs}")


def save(doc, path) -> None:
    """Audit ``doc`` (nothing is written when the audit finds errors) and save it."""
    audit_or_raise(doc, path)
    doc.saveas(str(path))


# --- section outline -----------------------------------------------------------------

def section_outline(section, stem_height_m: float, checked_stem_height_m: float,
                    slope_deg: float = 0.0) -> dict:
    """Polygons ``stem``, ``base``, ``key`` (with a key) and ``soil`` of a section in
    section coordinates (x from the toe edge, z from the underside of the base), m,
    from ``wallrun.section.polygons`` (design-basis section 2)."""
    from wallrun import section as sec

    return sec.polygons(section, stem_height_m, checked_stem_height_m, slope_deg)


def concrete_outline(polys: dict):
    """Outer boundary of stem + base + key as a list of (x, z), m (shapely union)."""
    from shapely.ops import unary_union

    parts = [polys[k] for k in ("stem", "base", "key") if k in polys and not polys[k].is_empty]
    u = unary_union(parts)
    if u.geom_type != "Polygon":  # touching parts only; keep the largest
        u = max(u.geoms, key=lambda g: g.area)
    u = u.simplify(1e-9)
    return [(float(x), float(z)) for x, z in list(u.exterior.coords)[:-1]]


# --- along the wall line -----------------------------------------------------------------

def xy_array(profiles, ch) -> np.ndarray:
    """Plan positions (n, 2) of chainages ``ch`` from ``profiles.xy_at`` (which gives
    an (x, y) pair of arrays)."""
    ch = np.atleast_1d(np.asarray(ch, dtype=float))
    r = profiles.xy_at(ch)
    if r is None:
        raise ValueError("the profiles carry no plan coordinates")
    x, y = r
    return np.column_stack([np.ravel(np.asarray(x, dtype=float)),
                            np.ravel(np.asarray(y, dtype=float))])


def sample_chainages(profiles, a: float, b: float, extra=(), max_step: float = 2.0,
                     max_points: int = 20000) -> np.ndarray:
    """Chainages from ``a`` to ``b``: the profile breakpoints inside, ``extra`` points
    and a regular grid (step <= ``max_step``, at most ``max_points``) so that curved
    alignments draw smoothly; sorted and unique, m."""
    bp = np.asarray(getattr(profiles, "breakpoints", ()), dtype=float)
    bp = bp[(bp > a) & (bp < b)]
    n = int(min(max_points, max(2, math.ceil((b - a) / max_step) + 1)))
    grid = np.linspace(a, b, n)
    ex = np.asarray(list(extra), dtype=float)
    ex = ex[(ex >= a) & (ex <= b)]
    pts = np.unique(np.concatenate([[a, b], bp, grid, ex]))
    keep = np.concatenate([[True], np.diff(pts) > 1e-9])
    return pts[keep]


def line_chainages(profiles, line: str, a: float, b: float, extra=(),
                   max_step: float = 2.0) -> np.ndarray:
    """Chainages to draw ``line`` ("ground" or "finished") of ``profiles`` through, from
    ``a`` to ``b``, m: the line's own points inside (the ground is linear between its
    survey points, the finished level between its points or, on an alignment, its
    intersection points without a curve), the ends, the start, end and turning point
    of each vertical curve and a grid inside it (step <= ``max_step``, so the parabola
    draws smoothly), and ``extra``; sorted and unique. Drawn through these the line is
    the profile's own (no vertex of the other line is added to it)."""
    if line == "ground":
        own, curves = np.asarray(profiles.ground_ch, dtype=float), ()
    else:
        own, curves = np.asarray(profiles.finished_ch, dtype=float), profiles.curves
    parts = [[a, b], own, np.asarray(list(extra), dtype=float)]
    for c in curves:
        n = max(2, math.ceil((c.evc - c.bvc) / max_step) + 1)
        parts.append(np.linspace(c.bvc, c.evc, n))
        if c.turning_ch is not None:
            parts.append([c.turning_ch])
    pts = np.unique(np.concatenate([np.asarray(p, dtype=float) for p in parts]))
    pts = pts[(pts >= a) & (pts <= b)]
    keep = np.concatenate([[True], np.diff(pts) > 1e-9])
    return pts[keep]


def straight_vertices(xy, tol: float = 1e-6) -> np.ndarray:
    """The vertices of the open line ``xy`` ((n, 2), x increasing) that are not on a
    straight stretch: of each run of vertices whose segments share one slope, the two
    ends are kept and the inner ones left out when each lies within ``tol`` (drawing
    units) of the straight line between the ends; otherwise the whole run is kept.
    Drawn through what is kept the line is the same to ``tol`` (a finished grade
    sampled at every survey point is two vertices a grade, not one a point)."""
    xy = np.asarray(xy, dtype=float).reshape(-1, 2)
    if len(xy) < 3:
        return xy
    dx, dy = np.diff(xy[:, 0]), np.diff(xy[:, 1])
    slope = dy / np.where(dx > 0, dx, np.inf)
    same = np.abs(np.diff(slope)) <= 1e-9 * np.maximum(1.0, np.abs(slope[1:]))
    same &= (dx[1:] > 0) & (dx[:-1] > 0)
    inner = np.concatenate([[False], same, [False]])  # vertex i between two like segments
    if not inner.any():
        return xy
    # runs of inner vertices: [s, e) each, checked against the chord of s-1 and e
    edges = np.diff(inner.astype(np.int8))
    starts, ends = np.flatnonzero(edges == 1) + 1, np.flatnonzero(edges == -1) + 1
    for s, e in zip(starts, ends):
        p, q = xy[s - 1], xy[e]
        t = (xy[s:e, 0] - p[0]) / (q[0] - p[0])
        if np.max(np.abs(p[1] + t * (q[1] - p[1]) - xy[s:e, 1])) > tol:
            inner[s:e] = False
    return xy[~inner]


def chainage_label(ch: float) -> str:
    """Chainage as km+m, e.g. 1+240 (metres rounded to a millimetre when not whole)."""
    neg = ch < 0
    ch = abs(ch)
    km = int(ch // 1000)
    m = ch - 1000 * km
    ms = f"{m:03.0f}" if abs(m - round(m)) < 1e-6 else f"{m:07.3f}"
    if ms.startswith("1000"):
        km, ms = km + 1, "000"
    return f"{'-' if neg else ''}{km}+{ms}"


def tick_values(a: float, b: float, step: float) -> np.ndarray:
    """Multiples of ``step`` from ``a`` to ``b`` inclusive."""
    if step <= 0:
        return np.array([])
    k0 = math.ceil(a / step - 1e-9)
    k1 = math.floor(b / step + 1e-9)
    return np.arange(k0, k1 + 1) * step


def runs_of(result) -> list[list]:
    """Panel results grouped by run, each sorted by chainage."""
    by: dict[int, list] = {}
    for pr in result.panels:
        by.setdefault(pr.panel.run, []).append(pr)
    return [sorted(v, key=lambda pr: pr.panel.ch_start_m) for _, v in sorted(by.items())]


def pieces(prs, gap: float = 1e-6) -> list[list]:
    """Split a run's panels where they do not touch (the wall line is broken)."""
    out = [[prs[0]]]
    for pr in prs[1:]:
        if pr.panel.ch_start_m - out[-1][-1].panel.ch_end_m > gap:
            out.append([])
        out[-1].append(pr)
    return out

"""Drafting conventions shared by wallrun's DXF drawings, set once here.

Layer scheme (wallrun's own descriptive names, colour, linetype and lineweight by
layer), the one text style and the one dimension style of a drawing, drawing scales,
the title block, the notes with the cautions, and the section outline.

Also the means of writing long drawings quickly with the same content: entities made
with their attributes stored directly (:func:`add_entity`, :func:`new_anonymous_block`,
:func:`new_group`), the file written by a direct DXF writer that gives ezdxf's text
byte for byte (:func:`document_text`), an audit without a query per block
(:func:`audit_or_raise`), and the garbage collector paused while a drawing is built
(:func:`gc_paused`).

Model space is in metres (``$INSUNITS`` = 6). Sizes of text, ticks and symbols are
given in paper millimetres and converted with the drawing's nominal scale 1:N
(``paper(mm, N)`` = mm * N / 1000 m), so a drawing printed at its stated scale has
2.5 mm text. Linetype patterns are built in model metres for that scale
(``$LTSCALE`` = 1).
"""

from __future__ import annotations

import datetime as _dt
import math
import weakref
from dataclasses import dataclass

import ezdxf
import numpy as np
from ezdxf.enums import MAP_TEXT_ENUM_TO_ALIGN_FLAGS, TextEntityAlignment

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
    Layer("WALLRUN-LINE-OF-WALL", 5, "CONTINUOUS", 70, "wall line in plan"),
    Layer("WALLRUN-SETTING-OUT", 8, "WALLRUN_CHAIN", 18, "profile reference line in plan"),
    Layer("WALLRUN-NORTH-POINT", 7, "CONTINUOUS", 25, "north point"),
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
    Layer("WALLRUN-LEVEL-TAGS", 7, "CONTINUOUS", 18, "level labels"),
    Layer("WALLRUN-DESIGN-DATA", 7, "CONTINUOUS", 18, "design conditions text"),
    Layer("WALLRUN-CELL-TITLES", 7, "CONTINUOUS", 35, "section titles in the grid"),
    # every sheet
    Layer("WALLRUN-SHEET-FRAME", 7, "CONTINUOUS", 35, "title block frame and text"),
    Layer("WALLRUN-CAUTIONS", 1, "CONTINUOUS", 25, "notes and cautions"),
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
L_WALL_PLAN = "WALLRUN-LINE-OF-WALL"
L_REFERENCE = "WALLRUN-SETTING-OUT"
L_NORTH = "WALLRUN-NORTH-POINT"
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
L_FRAME = "WALLRUN-SHEET-FRAME"
L_NOTES = "WALLRUN-CAUTIONS"
L_KEY = "WALLRUN-KEY-SAMPLES"


def key_sample(msp, p, q, layer: str):
    """A LINE from p to q on the key layer drawn like ``layer`` (its colour, linetype
    and lineweight), so that the layer itself holds only the real geometry."""
    lay = LAYERS[layer]
    return msp.add_line(p, q, dxfattribs={"layer": L_KEY, "color": lay.color,
                                          "linetype": lay.linetype,
                                          "lineweight": lay.lineweight})

SECTION_GROUP_PREFIX = "WALLRUN-SECTION-"  # DXF group per section type
TEXT_STYLE = "WALLRUN-LETTERING"
DIM_STYLE = "WALLRUN-SIZING"
TEXT_MM = 2.5  # ordinary text height on paper, mm
SMALL_MM = 1.8  # small text, mm
TITLE_MM = 3.5  # titles, mm

#: Standard drawing scales 1:N that wallrun chooses from.
SCALES = (10, 20, 25, 50, 100, 200, 250, 500, 1000, 1250, 2000, 2500, 5000, 10000,
          20000, 25000, 50000, 100000)

from wallrun.cautions import NOT_CHECKED  # noqa: E402
from wallrun.memory import collector_paused  # noqa: E402

CAUTION_LINES = (
    "PRELIMINARY DESIGN AID - NOT FOR CONSTRUCTION UNTIL CHECKED.",
    "This drawing was generated by wallrun. Every figure on it is to be checked, and the "
    "design taken over and signed, by a qualified engineer under the local codes and the "
    "national annex in force.",
    "NOT CHECKED by wallrun: " + "; ".join(NOT_CHECKED) + ".",
    "Levels and chainages in metres; section dimensions in millimetres.",
)


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


#: Pause of the garbage collector while a drawing is built, written or rendered.
gc_paused = collector_paused


# --- document ------------------------------------------------------------------------

def new_document(scale: int, title: str = "") -> "ezdxf.document.Drawing":
    """A new DXF R2013 drawing in metres with wallrun's layers, linetypes, text style
    and dimension style, sized for printing at 1:``scale``."""
    doc = ezdxf.new("R2013", setup=False)
    doc.units = ezdxf.units.M
    doc.header["$INSUNITS"] = 6
    doc.header["$MEASUREMENT"] = 1
    doc.header["$LUNITS"] = 2
    doc.header["$LTSCALE"] = 1.0
    doc.header["$PSLTSCALE"] = 0
    for name, (desc, pat) in LINETYPES.items():
        elems = [paper(v, scale) for v in pat]
        doc.linetypes.add(name, pattern=[sum(abs(e) for e in elems)] + elems, description=desc)
    for lay in _L:
        layer = doc.layers.add(lay.name, color=lay.color, linetype=lay.linetype)
        layer.dxf.lineweight = lay.lineweight
        layer.description = lay.description
    doc.styles.add(TEXT_STYLE, font="DejaVuSans.ttf")
    ds = doc.dimstyles.new(DIM_STYLE)
    ds.dxf.dimscale = scale / 1000.0  # every size below is in paper mm
    ds.dxf.dimtxsty = TEXT_STYLE
    ds.dxf.dimtxt = TEXT_MM
    ds.dxf.dimasz = 2.0
    ds.dxf.dimtsz = 1.5  # oblique ticks instead of arrows
    ds.dxf.dimexe = 1.5
    ds.dxf.dimexo = 1.0
    ds.dxf.dimgap = 0.8
    ds.dxf.dimtad = 1  # text above the dimension line
    ds.dxf.dimtih = 0
    ds.dxf.dimtoh = 0
    ds.dxf.dimlunit = 2  # decimal
    ds.dxf.dimlfac = 1000.0  # model metres shown as millimetres
    ds.dxf.dimdec = 0
    ds.dxf.dimzin = 8
    ds.dxf.dimclrd = 140
    ds.dxf.dimclre = 140
    ds.dxf.dimclrt = 7
    doc.header.custom_vars.append("WALLRUN_SCALE", f"1:{scale}")
    if title:
        doc.header.custom_vars.append("WALLRUN_DRAWING", title)
    return doc


def add_text(msp, text: str, xy, height: float, layer: str,
             align: TextEntityAlignment = TextEntityAlignment.MIDDLE_LEFT,
             rotation: float = 0.0):
    """One TEXT entity in wallrun's text style, placed at ``xy`` with ``align``
    (``align`` one of the nine point alignments, not ALIGNED or FIT); every attribute
    is set at creation."""
    h, v = MAP_TEXT_ENUM_TO_ALIGN_FLAGS[align]
    p = (float(xy[0]), float(xy[1]))
    attribs = {"layer": layer, "style": TEXT_STYLE, "insert": p}
    if h or v:
        attribs.update(halign=h, valign=v, align_point=p)
    attribs.update(text=str(text), height=float(height), rotation=float(rotation))
    return add_entity(msp, "TEXT", attribs)


_SAVED: dict = {}


def save_document(doc, path) -> None:
    """Save ``doc`` to ``path`` and keep the document object for the previews, keyed by
    the resolved path with the file's modification time and size, so that
    :func:`saved_document` hands back exactly what the file holds without parsing it
    again (reading a long drawing back costs more than writing it). The file is the
    one ``doc.saveas`` writes, written by the faster :func:`write_document`."""
    import os
    from pathlib import Path

    write_document(doc, path)
    key = str(Path(path).resolve())
    st = os.stat(key)
    _SAVED[key] = (doc, st.st_mtime_ns, st.st_size)


def saved_document(path):
    """The document object last saved by :func:`save_document` to ``path`` when the
    file is unchanged since (same modification time and size), else the file read
    with ezdxf. The kept object is released either way."""
    import os
    from pathlib import Path

    key = str(Path(path).resolve())
    kept = _SAVED.pop(key, None)
    if kept is not None:
        st = os.stat(key)
        if (st.st_mtime_ns, st.st_size) == kept[1:]:
            return kept[0]
    return ezdxf.readfile(str(path))


def _auditor(doc):
    """ezdxf's Auditor for ``doc`` whose block-cycle check builds its table of the
    INSERTs in each block by the entity type directly instead of by an entity query
    (a query string parsed once per block: most of the audit time of a drawing with
    thousands of dimension blocks). The checks and their findings are the same."""
    from ezdxf.audit import Auditor, BlockCycleDetector

    class _Cycles(BlockCycleDetector):
        def _build_block_ledger(self, blocks):
            return {self.key(b.name): {self.key(e.dxf.get("name", "")) for e in b
                                       if e.dxftype() == "INSERT"} for b in blocks}

    class _Audit(Auditor):
        def check_block_reference_cycles(self) -> None:
            from ezdxf.audit import AuditError

            cycles = _Cycles(self.doc)
            for block in self.doc.blocks:
                if cycles.has_cycle(block.name):
                    self.add_error(code=AuditError.INVALID_BLOCK_REFERENCE_CYCLE,
                                   message="Invalid block reference cycle detected in "
                                   f'block "{block.name}".', dxf_entity=block.block_record)

    return _Audit(doc)


def audit_or_raise(doc, path) -> None:
    """Run the DXF audit (ezdxf's checks, see :func:`_auditor`) and refuse to write a
    drawing with errors."""
    auditor = _auditor(doc)
    auditor.run()
    if auditor.has_errors:
        msgs = "; ".join(str(e.message) for e in auditor.errors[:5])
        raise RuntimeError(f"{path}: the DXF audit found errors: {msgs}")


# --- title block and notes -------------------------------------------------------------

TITLE_W_MM = 180.0
TITLE_H_MM = 48.0
NOTES_W_MM = 170.0


def title_block(msp, right_bottom, scale: int, project, drawing: str,
                scale_text: str, extra: tuple[str, ...] = (), date: str | None = None):
    """Boxed title block with its lower right corner at ``right_bottom``; returns its
    (xmin, ymin, xmax, ymax) in model metres.

    Lists the project name and reference, the drawing, the date, the scale and any
    ``extra`` lines (e.g. the vertical exaggeration), and the generator.
    """
    p = lambda mm: paper(mm, scale)  # noqa: E731
    x1, y0 = float(right_bottom[0]), float(right_bottom[1])
    x0, y1 = x1 - p(TITLE_W_MM), y0 + p(TITLE_H_MM)
    msp.add_lwpolyline([(x0, y0), (x1, y0), (x1, y1), (x0, y1)], close=True,
                       dxfattribs={"layer": L_FRAME})
    split = y1 - p(12.0)
    msp.add_line((x0, split), (x1, split), dxfattribs={"layer": L_FRAME})
    name = getattr(project, "name", "") or "(unnamed project)"
    ref = getattr(project, "reference", "") or "-"
    add_text(msp, name, (x0 + p(3), y1 - p(4.5)), p(TITLE_MM), L_FRAME)
    add_text(msp, f"{drawing}", (x0 + p(3), y1 - p(9.5)), p(TEXT_MM), L_FRAME)
    rows = [f"Reference: {ref}",
            f"Date: {date or _dt.date.today().isoformat()}",
            f"Scale: {scale_text}",
            *extra,
            "Units: metres (levels, chainage, coordinates)",
            "Produced by wallrun - preliminary, to be checked"]
    y = split - p(4.0)
    for r in rows:
        add_text(msp, r, (x0 + p(3), y), p(SMALL_MM + 0.2), L_FRAME)
        y -= p(4.2)
    return x0, y0, x1, y1


def notes_block(msp, right_top, scale: int, extra: tuple[str, ...] = ()) -> float:
    """Notes with the cautions, as TEXT lines wrapped to NOTES_W_MM, whose upper right
    corner is ``right_top``; returns the y of the last line (m)."""
    import textwrap

    p = lambda mm: paper(mm, scale)  # noqa: E731
    x0 = float(right_top[0]) - p(NOTES_W_MM)
    y = float(right_top[1]) - p(TEXT_MM)
    add_text(msp, "NOTES AND CAUTIONS", (x0, y), p(TEXT_MM), L_NOTES, TextEntityAlignment.LEFT)
    width = int(NOTES_W_MM / (0.78 * SMALL_MM))  # DejaVu Sans: ~0.7 h per character
    for i, t in enumerate(CAUTION_LINES + tuple(extra), start=1):
        lines = textwrap.wrap(t, width - 4)
        for k, line in enumerate(lines):
            y -= p(SMALL_MM * 1.7)
            if k == 0:
                add_text(msp, f"{i}.", (x0, y), p(SMALL_MM), L_NOTES, TextEntityAlignment.LEFT)
            add_text(msp, line, (x0 + p(4), y), p(SMALL_MM), L_NOTES, TextEntityAlignment.LEFT)
        y -= p(0.8)
    return y


def sheet_furniture(msp, right_bottom, scale: int, project, drawing: str, scale_text: str,
                    extra_title: tuple[str, ...] = (), extra_notes: tuple[str, ...] = ()):
    """Title block at ``right_bottom`` with the notes block to its left, top-aligned."""
    box = title_block(msp, right_bottom, scale, project, drawing, scale_text, extra_title)
    notes_block(msp, (box[0] - paper(6, scale), box[3]), scale, extra_notes)
    return box


# --- section outline -----------------------------------------------------------------

def section_outline(section, stem_height_m: float, checked_stem_height_m: float,
                    slope_deg: float = 0.0) -> dict:
    """Polygons ``stem``, ``base``, ``key`` (with a key) and ``soil`` of a section in
    section coordinates (x from the toe edge, z from the underside of the base), m.

    Uses ``wallrun.section.polygons`` where present; otherwise builds the same outline
    from the dimensions (design-basis section 2).
    """
    from wallrun import section as _sec

    if hasattr(_sec, "polygons"):
        try:
            return _sec.polygons(section, stem_height_m, checked_stem_height_m, slope_deg)
        except TypeError:  # an older signature without the checked height
            out = dict(_sec.polygons(section, stem_height_m))
            if "soil" not in out:
                out["soil"] = _own_outline(section, stem_height_m, checked_stem_height_m,
                                           slope_deg)["soil"]
            return out
    return _own_outline(section, stem_height_m, checked_stem_height_m, slope_deg)


def _own_outline(s, hd: float, hc: float, slope_deg: float) -> dict:
    from shapely.geometry import Polygon

    hd = max(hd, hc)
    tb, toe = s.base_thickness_m, s.toe_m
    out = {
        "stem": Polygon([(toe, tb), (toe + s.stem_base_m, tb), (toe + s.stem_top_m, tb + hc),
                         (toe + s.stem_top_m, tb + hd), (toe, tb + hd)]),
        "base": Polygon([(0, 0), (s.base_width_m, 0), (s.base_width_m, tb), (0, tb)]),
    }
    if s.key_depth_m > 0 and s.key_width_m > 0:
        out["key"] = Polygon([(toe, -s.key_depth_m), (toe + s.key_width_m, -s.key_depth_m),
                              (toe + s.key_width_m, 0), (toe, 0)])
    xb = toe + s.stem_top_m
    zB = tb + hc + (s.base_width_m - xb) * math.tan(math.radians(slope_deg))
    out["soil"] = Polygon([(toe + s.stem_base_m, tb), (s.base_width_m, tb),
                           (s.base_width_m, zB), (xb, tb + hc)])
    return out


def concrete_outline(polys: dict):
    """Outer boundary of stem + base + key as a list of (x, z), m (shapely union)."""
    from shapely.ops import unary_union

    parts = [polys[k] for k in ("stem", "base", "key") if k in polys and not polys[k].is_empty]
    u = unary_union(parts)
    if u.geom_type != "Polygon":  # touching parts only; keep the largest
        u = max(u.geoms, key=lambda g: g.area)
    u = u.simplify(1e-9)
    return [(float(x), float(z)) for x, z in list(u.exterior.coords)[:-1]]


# --- profile helpers -------------------------------------------------------------------

def xy_array(profiles, ch) -> np.ndarray:
    """Plan positions (n, 2) of chainages ``ch`` from ``profiles.xy_at``, accepting a
    (n, 2) array, a (2, n) array or an (x, y) pair of arrays from it."""
    ch = np.atleast_1d(np.asarray(ch, dtype=float))
    n = ch.size
    if n == 2:  # avoid the (2, 2) ambiguity
        both = xy_array(profiles, np.array([ch[0], 0.5 * (ch[0] + ch[1]), ch[1]]))
        return both[[0, 2]]
    r = profiles.xy_at(ch)
    if r is None:
        raise ValueError("the profiles carry no plan coordinates")
    if isinstance(r, tuple) and len(r) == 2:
        return np.column_stack([np.ravel(np.asarray(r[0], dtype=float)),
                                np.ravel(np.asarray(r[1], dtype=float))])
    a = np.asarray(r, dtype=float)
    if a.ndim == 1 and a.size == 2 and n == 1:
        return a.reshape(1, 2)
    if a.ndim == 2 and a.shape == (n, 2):
        return a
    if a.ndim == 2 and a.shape == (2, n):
        return a.T
    raise ValueError(f"profiles.xy_at returned an array of shape {a.shape} for {n} chainages")


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


# --- fast DXF writing ------------------------------------------------------------------
#
# ezdxf writes each entity through a generic per-attribute routine (a dozen look-ups
# and checks per attribute, for every attribute the type knows, set or not), which is
# most of the time of saving a drawing of tens of thousands of entities. The writer
# below produces the same text for the entity types wallrun draws (LINE, CIRCLE,
# LWPOLYLINE, TEXT, MTEXT, INSERT and linear DIMENSION) from their set attributes with
# the same rules (a required attribute unset is written with its default; an optional
# one equal to its default is left out; values cast by group code), and hands every
# other entity, the BLOCK/ENDBLK markers, the header, tables and objects to ezdxf.
# tests/test_drawings.py checks that the file is the same byte for byte.

_ACDB_ENTITY = ["paperspace", "layer", "linetype", "material_handle", "color",
                "lineweight", "ltscale", "invisible", "true_color", "color_name",
                "transparency", "plotstyle_enum", "plotstyle_handle", "shadow_mode",
                "visualstyle_handle"]

#: dxftype -> list of (subclass marker or None, attribute names) written in order.
_PLANS = {
    "LINE": [("AcDbLine", ["start", "end", "thickness", "extrusion"])],
    "CIRCLE": [("AcDbCircle", ["center", "radius", "thickness", "extrusion"])],
    "TEXT": [("AcDbText", ["insert", "height", "text", "thickness", "rotation", "oblique",
                           "style", "width", "text_generation_flag", "halign",
                           "align_point", "extrusion"]),
             ("AcDbText", ["valign"])],
    "INSERT": [(None, ["name", "insert", "xscale", "yscale", "zscale", "rotation",
                       "column_count", "row_count", "column_spacing", "row_spacing",
                       "extrusion"])],
    "LWPOLYLINE": [("AcDbPolyline", ["count", "flags", "const_width", "elevation",
                                     "thickness"])],
    "MTEXT": [("AcDbMText", ["insert", "char_height", "width", "defined_height",
                             "attachment_point", "flow_direction"])],
    "DIMENSION": [("AcDbDimension", ["version", "geometry", "dimstyle", "defpoint",
                                     "text_midpoint", "insert", "dimtype",
                                     "attachment_point", "line_spacing_style",
                                     "line_spacing_factor", "actual_measurement",
                                     "unknown1", "flip_arrow_1", "flip_arrow_2", "text",
                                     "oblique_angle", "text_rotation",
                                     "horizontal_direction", "extrusion"]),
                  ("AcDbAlignedDimension", ["defpoint2", "defpoint3", "angle"]),
                  ("AcDbRotatedDimension", [])],
}
_MTEXT_TAIL = ["style", "extrusion", "text_direction", "rect_width", "rect_height",
               "rotation", "line_spacing_style", "line_spacing_factor", "box_fill_scale",
               "bg_fill", "bg_fill_color", "bg_fill_true_color", "bg_fill_color_name",
               "bg_fill_transparency"]
#: dxftype -> the ezdxf class written here (not its subclasses, e.g. ATTRIB of TEXT).
_CLASSES = {"LINE": "Line", "CIRCLE": "Circle", "TEXT": "Text", "INSERT": "Insert",
            "LWPOLYLINE": "LWPolyline", "MTEXT": "MText", "DIMENSION": "Dimension",
            "BLOCK": "Block", "ENDBLK": "EndBlk"}
_COMPILED: dict = {}


def _compile(entity, names, dxfversion):
    """(name, code, optional, default, kind, cast) for the attributes ``names`` of the
    entity's class that the DXF version has; kind 2: 2D point, 3: point, 0: value."""
    from ezdxf.lldxf.attributes import XType
    from ezdxf.lldxf.types import BINARY_DATA, POINT_CODES, TYPE_TABLE

    out = []
    for name in names:
        a = entity.dxf.dxfattribs.get(name)
        if dxfversion < a.dxfversion:
            continue
        if a.code in BINARY_DATA:
            raise TypeError("binary attribute")
        kind = (2 if a.xtype == XType.point2d else 3) if a.code in POINT_CODES else 0
        out.append((name, a.code, a.optional, a.default, kind, TYPE_TABLE.get(a.code, str)))
    return out


def _plan(entity, dxfversion):
    """The compiled export plan of the entity's class (made once per class): for the
    AcDbEntity attributes, each part and the MTEXT tail, a function appending their
    tags (see :func:`_writer_of`)."""
    key = (type(entity), dxfversion)
    plan = _COMPILED.get(key)
    if plan is None and entity.dxftype() in ("BLOCK", "ENDBLK"):
        # BLOCK and ENDBLK: AcDbEntity with only the paperspace flag and the layer
        plan = _COMPILED[key] = {
            "entity": _writer_of(_compile(entity, ["layer"], dxfversion)),
            "parts": [(None, _writer_of(_compile(entity, names, dxfversion)))
                      for names in ((["flags", "base_point"], ["xref_path", "description"])
                                    if entity.dxftype() == "BLOCK" else ())]}
    if plan is None:
        t = entity.dxftype()
        plan = {"entity": _writer_of(_compile(entity, _ACDB_ENTITY, dxfversion)),
                "parts": [(m, _writer_of(_compile(entity, names, dxfversion)))
                          for m, names in _PLANS[t]],
                "extrusion": _writer_of(_compile(entity, ["extrusion"], dxfversion))}
        if t == "MTEXT":
            plan["tail"] = _writer_of(_compile(entity, _MTEXT_TAIL, dxfversion))
        _COMPILED[key] = plan
    return plan


def _writer_of(compiled):
    """A function ``f(values, out)`` appending the tags of the ``compiled`` attributes
    of ``values`` to ``out`` by ezdxf's rules: an unset required attribute is written
    with its default (none if that is None), an optional one is left out when unset
    or equal to its default; points as their components (x, y only for 2D points),
    other values cast by group code. Generated as Python source once per attribute
    list, so that each attribute costs a few direct operations."""
    env: dict = {}
    src = ["def f(values, out):", "    g = values.get", "    a = out.append"]
    for k, (name, code, optional, default, kind, cast) in enumerate(compiled):
        env[f"D{k}"], env[f"C{k}"] = default, cast
        src.append(f"    v = g({name!r})")
        if optional:
            cond = "v is not None" + (f" and not (D{k} == v)" if default is not None else "")
            src.append(f"    if {cond}:")
        else:
            src.append("    if v is None:")
            src.append(f"        v = D{k}")
            src.append("    if v is not None:")
        if kind == 2:
            src.append(f"        a('{code:3d}\\n%s\\n{code + 10:3d}\\n%s\\n' "
                       "% (float(v[0]), float(v[1])))")
        elif kind == 3:
            src.append("        for i, c in enumerate(v):")
            src.append(f"            a('%3d\\n%s\\n' % ({code} + 10 * i, float(c)))")
        else:
            src.append(f"        a('{code:3d}\\n%s\\n' % C{k}(v))")
    src.append("    return None")
    exec("\n".join(src), env)  # noqa: S102 - source built here from ezdxf's tables
    return env["f"]


def _fast_entity(e, out, dxfversion, tw) -> bool:
    """Append the DXF text of ``e`` to ``out``; False (nothing appended) for an entity
    this writer leaves to ezdxf. ``tw`` is an ezdxf tag writer appending to ``out``
    (for the XDATA)."""
    t = e.dxftype()
    if (type(e).__name__ != _CLASSES.get(t) or e.appdata or e.has_extension_dict
            or getattr(e, "proxy_graphic", None)):
        return False
    if t == "INSERT" and (e.attribs_follow or e.attribs):
        return False
    if t == "MTEXT" and e._columns is not None:
        return False
    if t == "DIMENSION" and e.dimtype != 0:
        return False
    values = e.dxf.__dict__
    plan = _plan(e, dxfversion)
    mark = len(out)
    out.append("  0\n%s\n  5\n%s\n" % (t, values["handle"]))
    if e.reactors:
        out.append("102\n{ACAD_REACTORS\n")
        out.extend("330\n%s\n" % h for h in e.reactors.get())
        out.append("102\n}\n")
    out.append("330\n%s\n100\nAcDbEntity\n" % values.get("owner", "0"))
    if t in ("BLOCK", "ENDBLK"):
        _block_tags(e, t, values, plan, out)
        if e.xdata:
            e.xdata.export_dxf(tw)
        return True
    plan["entity"](values, out)
    for marker, compiled in plan["parts"]:
        if marker is None:  # INSERT: block reference or grid of them
            grid = values.get("column_count", 1) > 1 or values.get("row_count", 1) > 1
            marker = "AcDbMInsertBlock" if grid else "AcDbBlockReference"
        out.append("100\n%s\n" % marker)
        if t == "LWPOLYLINE":
            if not len(e.lwpoints):
                del out[mark:]
                return True  # ezdxf writes no polyline without vertices either
            compiled({**values, "count": len(e.lwpoints)}, out)
            for x, y, sw, ew, b in e.lwpoints:
                out.append(" 10\n%s\n 20\n%s\n" % (x, y))
                if sw or ew:
                    out.append(" 40\n%s\n 41\n%s\n" % (sw, ew))
                if b:
                    out.append(" 42\n%s\n" % b)
            plan["extrusion"](values, out)
            continue
        compiled(values, out)
        if t == "MTEXT":
            from ezdxf.entities.mtext import escape_dxf_line_endings, split_mtext_string
            chunks = split_mtext_string(escape_dxf_line_endings(e.text), size=250) or [""]
            out.extend("  3\n%s\n" % c for c in chunks[:-1])
            out.append("  1\n%s\n" % chunks[-1])
            plan["tail"](values, out)
    if e.xdata:
        e.xdata.export_dxf(tw)
    return True


def _block_tags(e, t, values, plan, out) -> None:
    """The tags of a BLOCK or ENDBLK after its AcDbEntity marker (R2000 and later)."""
    if "paperspace" in values:
        out.append(" 67\n1\n")
    plan["entity"](values, out)
    if t == "ENDBLK":
        out.append("100\nAcDbBlockEnd\n")
        return
    name = values.get("name")
    out.append("100\nAcDbBlockBegin\n  2\n%s\n" % name)
    plan["parts"][0][1](values, out)
    out.append("  3\n%s\n" % name)
    plan["parts"][1][1](values, out)


class _ListWriter:
    """A tag writer appending DXF text to a list (ezdxf's TagWriter on a list)."""

    def __init__(self, out, dxfversion):
        from ezdxf.lldxf.tagwriter import TagWriter

        self.w = TagWriter(self, dxfversion=dxfversion)
        self.write = out.append


def document_text(doc) -> str:
    """The DXF text of ``doc``, as ``doc.write`` makes it, with the entities of the
    BLOCKS and ENTITIES sections written by the fast writer above."""
    from ezdxf.lldxf.const import DXF12

    if doc.dxfversion == DXF12:  # wallrun writes R2013; anything else goes to ezdxf
        import io
        s = io.StringIO()
        doc.write(s)
        return s.getvalue()
    doc.commit_pending_changes()
    doc.update_all()  # which adds the required classes (doc.write adds them twice)
    v = doc.dxfversion
    out: list[str] = []
    tw = _ListWriter(out, v).w
    doc.header.export_dxf(tw)
    doc.classes.export_dxf(tw)
    doc.tables.export_dxf(tw)

    def entities(space):
        for e in space:
            if not _fast_entity(e, out, v, tw):
                e.export_dxf(tw)

    out.append("  0\nSECTION\n  2\nBLOCKS\n")
    for br in doc.blocks.block_records:
        if br.block_layout is not None:
            br.block_layout.update_block_flags()
        entities((br.block,))
        if not (br.is_modelspace or br.is_active_paperspace):
            entities(br.entity_space)
        entities((br.endblk,))
    out.append("  0\nENDSEC\n")
    out.append("  0\nSECTION\n  2\nENTITIES\n")
    entities(doc.layouts.modelspace().entity_space)
    entities(doc.layouts.active_layout().entity_space)
    out.append("  0\nENDSEC\n")
    doc.objects.export_dxf(tw)
    if doc.acdsdata.is_valid:
        doc.acdsdata.export_dxf(tw)
    for section in doc.stored_sections:
        section.export_dxf(tw)
    out.append("  0\nEOF\n")
    return "".join(out)


def write_document(doc, path) -> None:
    """Save ``doc`` to ``path`` as ``doc.saveas`` does (same text, same encoding),
    written by :func:`document_text`."""
    doc.filename = str(path)
    with open(str(path), "wt", encoding=doc.output_encoding, errors="dxfreplace") as f:
        f.write(document_text(doc))


# --- quick entity creation -------------------------------------------------------------
#
# ezdxf's ``layout.add_*`` passes each attribute through a validating setter (a cast,
# a validity check, change events): about as costly as writing the entity. The
# drawings' own attributes are made here, valid by construction, so
# :func:`add_entity` casts them by group code as that setter does and stores them
# directly. ``CHECKED_CREATION = True`` builds every entity through ezdxf's own
# ``new_entity`` instead; tests/test_drawings.py checks both give the same file.

CHECKED_CREATION = False


def add_entity(layout, dxftype: str, attribs: dict, points=None):
    """A new graphic entity ``dxftype`` with ``attribs`` in ``layout`` (modelspace or
    a block), as ``layout.new_entity`` makes it; ``points`` (n, 5) rows x, y, start
    width, end width, bulge are the vertices of an LWPOLYLINE."""
    if CHECKED_CREATION:
        e = layout.new_entity(dxftype, dict(attribs))
        if points is not None:
            e.set_points([tuple(p) for p in points], format="xyseb")
        return e
    e = new_db_entity(layout.doc, dxftype, attribs, points)
    br = layout.block_record  # as BlockRecord.add_entity: owner, paperspace flag
    if type(e).set_owner is _graphic_set_owner():
        ns = e.dxf.__dict__
        ns["owner"] = br.dxf.handle
        if br.is_any_paperspace:
            ns["paperspace"] = 1
        else:
            ns.pop("paperspace", None)
    else:  # e.g. INSERT, which hands its owner on to its SEQEND
        e.set_owner(br.dxf.handle, paperspace=int(br.is_any_paperspace))
    br.entity_space.add(e)
    return e


def _graphic_set_owner():
    """ezdxf's plain ``DXFGraphic.set_owner`` (which :func:`add_entity` inlines)."""
    from ezdxf.entities.dxfgfx import DXFGraphic

    return DXFGraphic.set_owner


def new_db_entity(doc, dxftype: str, attribs: dict, points=None):
    """A new entity ``dxftype`` with ``attribs`` in the entity database of ``doc``, as
    ezdxf's ``factory.create_db_entry`` makes it, its attributes cast by group code
    and stored directly (see :func:`add_entity`)."""
    info = _NEW_INFO.get(dxftype) or _new_info(dxftype)
    cls, casters, events = info
    e = cls()
    ns = e.dxf.__dict__
    ns["handle"] = None
    ns["owner"] = None
    for src in (cls.DEFAULT_ATTRIBS, attribs):
        for k, v in src.items():
            c = casters.get(k) or _caster(info, e, k)
            ns[k] = None if v is None else c(v)
    for k, name in events:  # the setter events this class handles (e.g. POLYLINE)
        if k in ns:
            getattr(e, name)(ns[k])
    if points is not None:
        e.lwpoints.values = np.asarray(points, dtype=np.float64).reshape(-1, 5)
    e.post_new_hook()
    # as factory.bind for a new entity without an extension dictionary
    db = doc.entitydb
    e.doc = doc
    ns["handle"] = h = db.next_handle()
    db[h] = e
    if hasattr(e, "add_sub_entities_to_entitydb"):
        e.add_sub_entities_to_entitydb(db)
    e.post_bind_hook()
    return e


_NEW_INFO: dict = {}  # dxftype -> (class, {attribute: caster}, [(attribute, handler)])


def _new_info(dxftype: str):
    """(class, casters, setter events with a handler) of ``dxftype``, made once."""
    from ezdxf.entities import factory
    from ezdxf.entities.dxfns import SETTER_EVENTS

    cls = factory.ENTITY_CLASSES[dxftype]
    events = [(k, name) for k, name in SETTER_EVENTS.items() if getattr(cls, name, None)]
    info = _NEW_INFO[dxftype] = (cls, {}, events)
    return info


def _caster(info, e, name: str):
    """The cast of attribute ``name`` of ``e``'s class by its group code, as ezdxf's
    ``cast_value``: a point to Vec3, any other value by the code's type."""
    from ezdxf.lldxf.types import POINT_CODES, TYPE_TABLE
    from ezdxf.math import Vec3

    code = e.dxf.dxfattribs.get(name).code
    c = info[1][name] = Vec3 if code in POINT_CODES else TYPE_TABLE.get(code, str)
    return c


def new_anonymous_block(doc, type_char: str = "U"):
    """A new anonymous block layout (``*<type_char><n>``), as
    ``doc.blocks.new_anonymous_block`` makes it, from entities made by
    :func:`new_db_entity`."""
    from ezdxf.lldxf.const import BLK_ANONYMOUS

    if CHECKED_CREATION:
        return doc.blocks.new_anonymous_block(type_char=type_char)
    name = doc.blocks.anonymous_block_name(type_char)  # an unused name
    table = doc.block_records
    br = new_db_entity(doc, "BLOCK_RECORD", {"name": name, "owner": table._head.dxf.handle})
    table._append(br)
    owner = br.dxf.handle
    head = new_db_entity(doc, "BLOCK", {"flags": BLK_ANONYMOUS, "owner": owner,
                                        "name": name, "base_point": (0.0, 0.0, 0.0)})
    tail = new_db_entity(doc, "ENDBLK", {"owner": owner})
    br.set_block(head, tail)
    return doc.blocks.add(br)


def new_group(doc, name: str, entities, description: str = ""):
    """A new named, selectable GROUP of ``entities`` (graphic entities of one layout),
    as ``doc.groups.new(name, description).set_data(entities)`` makes it, without
    that method's search of every existing group name (a drawing with hundreds of
    groups spent most of their time there) and re-validation of entities made just
    before. Names are case-insensitive and unique per document."""
    if CHECKED_CREATION:
        grp = doc.groups.new(name, description=description)
        grp.set_data(entities)
        return grp
    from ezdxf.lldxf.const import DXFValueError

    names = _GROUP_NAMES.get(doc)
    if names is None or len(names) != len(doc.groups):  # groups made elsewhere too
        names = _GROUP_NAMES[doc] = {n.upper() for n, _g in doc.groups}
    key = name.upper()
    if key in names:
        raise DXFValueError(f"GROUP '{name}' already exists.")
    grp = doc.groups._new(name, {"description": description, "unnamed": 0,
                                  "selectable": 1})
    names.add(key)
    ents = list(entities)
    h = grp.dxf.handle
    for e in ents:
        e.append_reactor_handle(h)
    grp._data = ents
    return grp


_GROUP_NAMES: "weakref.WeakKeyDictionary" = weakref.WeakKeyDictionary()  # doc -> names


def lw_rows(pts, bulges=None) -> np.ndarray:
    """LWPOLYLINE vertex rows (x, y, 0, 0, bulge) of points ``pts``."""
    a = np.zeros((len(pts), 5))
    if len(pts):
        a[:, :2] = np.asarray(pts, dtype=float)[:, :2]
    if bulges is not None:
        a[:, 4] = bulges
    return a

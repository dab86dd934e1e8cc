"""Paper-space sheets: every drawing is laid out on ISO sheets a detailer can plot.

A sheet is a paper-space layout in millimetres (``[drawings] sheet``: A1 841 x 594 or
A3 420 x 297, landscape) holding a border (20 mm margin on the left for binding, 10 mm
elsewhere), wallrun's title block (``titles``) at the bottom right, the notes panel
with the cautions left of it, an optional key between them, and one or more
viewports onto model space at a standard scale. The drawing area is what the border
leaves above that bottom strip.

Model space is in metres, so a viewport at 1:N shows ``N / 1000`` m of model per mm
of paper: ``view_height = height_mm * N / 1000``.
"""

from __future__ import annotations

from dataclasses import dataclass

from wallrun.outputs.dxf import conventions as c
from wallrun.outputs.dxf import titles

SIZES = {"A1": (841.0, 594.0), "A3": (420.0, 297.0)}
MARGIN_LEFT, MARGIN = 20.0, 10.0
GAP = 5.0  # between the drawing area and the bottom strip, mm
KEY_W = 78.0  # width of the key panel, mm


@dataclass(frozen=True)
class Frame:
    """The geometry of a sheet, mm: its size, the drawing area (x0, y0, x1, y1) and
    the bottom strip's height."""

    name: str
    width: float
    height: float
    area: tuple[float, float, float, float]
    strip: float
    notes_w: float
    key_w: float


def frame(site, sheet: str, notes=(), key_rows: int = 0, lt: c.Lettering | None = None
          ) -> Frame:
    """The frame of sheet size ``sheet`` for a drawing whose notes are the cautions of
    ``site`` and ``notes`` and whose key has ``key_rows`` rows."""
    lt = lt or c.Lettering()
    W, H = SIZES[sheet]
    key_w = KEY_W if key_rows else 0.0
    notes_w = W - MARGIN_LEFT - MARGIN - titles.WIDTH_MM - key_w - 2 * GAP
    lines = tuple(c.caution_lines(site)) + tuple(notes)
    strip = max(titles.HEIGHT_MM, titles.notes_height_mm(lines, notes_w - 4.0, lt) + 4.0,
                (key_rows + 1) * KEY_PITCH + 6.0)
    area = (MARGIN_LEFT + 2.0, MARGIN + strip + GAP, W - MARGIN - 2.0, H - MARGIN - 2.0)
    return Frame(sheet, W, H, area, strip, notes_w, key_w)


KEY_PITCH = 5.0  # mm between the rows of a key


def new_sheet(doc, name: str, fr: Frame, site, lt: c.Lettering, title: str, subtitle: str,
              scale_text: str, number: int, count: int, notes=(), key=(), scale: int = 1000):
    """A new paper-space layout ``name`` of frame ``fr`` with its border, title block
    (sheet ``number`` of ``count``), notes panel and key (``(layer, label)`` rows
    drawn as line samples); returns the layout."""
    lay = doc.layouts.new(name)
    lay.page_setup(size=(fr.width, fr.height), margins=(0, 0, 0, 0), units="mm")
    W, H = fr.width, fr.height
    c.add_polyline(lay, [(MARGIN_LEFT, MARGIN), (W - MARGIN, MARGIN), (W - MARGIN, H - MARGIN),
                         (MARGIN_LEFT, H - MARGIN)], c.L_FRAME, close=True)
    y_strip = MARGIN + fr.strip
    lay.add_line((MARGIN_LEFT, y_strip), (W - MARGIN, y_strip), dxfattribs={"layer": c.L_FRAME})
    titles.add_title_block(lay, (W - MARGIN, MARGIN), titles.fields(
        site, title, subtitle, scale_text, f"{number} of {count}"))
    x_notes = MARGIN_LEFT + 2.0
    lines = tuple(c.caution_lines(site)) + tuple(notes)
    titles.add_notes(lay, (x_notes, y_strip - 2.0), lines, fr.notes_w - 4.0, lt)
    if key:
        x0 = MARGIN_LEFT + fr.notes_w + GAP
        lay.add_line((x0 - GAP / 2, MARGIN), (x0 - GAP / 2, y_strip),
                     dxfattribs={"layer": c.L_FRAME})
        c.add_text(lay, "KEY", (x0, y_strip - 4.0), c.TEXT_MM, c.L_FRAME, c.A.MIDDLE_LEFT)
        for i, (layer, label) in enumerate(key, start=1):
            y = y_strip - 4.0 - KEY_PITCH * i
            sample_line(lay, (x0, y), (x0 + 15.0, y), layer, scale)
            c.add_text(lay, label, (x0 + 18.0, y), c.SMALL_MM, c.L_FRAME, c.A.MIDDLE_LEFT)
    return lay


def sample_line(lay, p, q, layer: str, scale: int):
    """A line sample for a key in paper space, drawn like ``layer``: its colour,
    lineweight and linetype (whose pattern, made in model metres for 1:``scale``, is
    scaled by 1000 / ``scale`` to paper millimetres)."""
    lay_ = c.LAYERS[layer]
    attribs = {"layer": c.L_KEY, "color": lay_.color, "lineweight": lay_.lineweight,
               "linetype": lay_.linetype}
    if lay_.linetype != "CONTINUOUS":
        attribs["ltscale"] = 1000.0 / scale
    return lay.add_line(p, q, dxfattribs=attribs)


def add_view(lay, paper_box, model_center, scale: int):
    """A viewport filling ``paper_box`` (x0, y0, x1, y1 mm) at 1:``scale`` centred on
    ``model_center`` (m); returns it."""
    x0, y0, x1, y1 = paper_box
    w, h = x1 - x0, y1 - y0
    vp = lay.add_viewport(center=((x0 + x1) / 2, (y0 + y1) / 2), size=(w, h),
                          view_center_point=model_center, view_height=h * scale / 1000.0,
                          dxfattribs={"layer": c.L_WINDOWS})
    return vp


def to_paper(vp, xy):
    """Paper position (mm) of model point ``xy`` (m) in viewport ``vp``."""
    k = vp.dxf.height / vp.dxf.view_height
    cx, cy = vp.dxf.view_center_point[0], vp.dxf.view_center_point[1]
    return (vp.dxf.center[0] + (xy[0] - cx) * k, vp.dxf.center[1] + (xy[1] - cy) * k)


def finish(doc) -> None:
    """Remove the default empty layout ezdxf makes (``Layout1``) once sheets exist."""
    names = [n for n in doc.layout_names() if n != "Model"]
    if "Layout1" in names and len(names) > 1:
        doc.layouts.delete("Layout1")

"""wallrun's title block and notes panel, the same on every drawing.

The title block is a block (:data:`B_TITLE`) drawn in paper millimetres, its origin at
its lower right corner, with attributes for what changes from sheet to sheet:
PROJECT, REFERENCE, TITLE, SUBTITLE, SCALE, DATE, SHEET ("n of m") and STATUS. The
notes panel above it holds the cautions of ``wallrun.cautions`` for the site, the
units and any notes of the drawing, wrapped to the panel's width (one MTEXT).

Layout (mm, x from the left edge of the block, y from its bottom)::

    64 +------------------------------------------------------------+
       | PROJECT                                            (3.5)    |
       | REFERENCE                                          (2.5)    |
    46 +------------------------------------------------------------+
       | TITLE                                              (3.5)    |
       | SUBTITLE                                           (2.0)    |
    30 +-----------------+---------------------+--------------------+
       | scale           | date                | sheet              |
       | SCALE           | DATE                | SHEET              |
    16 +-----------------+---------------------+--------------------+
       | STATUS                                             (3.0)    |
       | made with wallrun: ...                             (1.8)    |
     0 +------------------------------------------------------------+
       0                 50                    115                 180
"""

from __future__ import annotations

from wallrun.outputs.dxf import conventions as c
from wallrun.outputs.stamp import issue_date

B_TITLE = "WALLRUN-TITLE-PANEL"
WIDTH_MM = 180.0
HEIGHT_MM = 64.0
NOTES_MM = 1.8  # notes text height, mm
NOTES_PITCH_MM = 3.0
FIELDS = ("PROJECT", "REFERENCE", "TITLE", "SUBTITLE", "SCALE", "DATE", "SHEET", "STATUS")

#: (tag, x, y, height, colour) of each attribute, mm from the block's lower left.
_ATTRS = (("PROJECT", 3, 56, 3.5, 256), ("REFERENCE", 3, 49.5, 2.5, 256),
          ("TITLE", 3, 39, 3.5, 256), ("SUBTITLE", 3, 33, 2.0, 256),
          ("SCALE", 3, 19.5, 2.5, 256), ("DATE", 53, 19.5, 2.5, 256),
          ("SHEET", 118, 19.5, 2.5, 256), ("STATUS", 3, 9, 3.0, 1))


def define(doc) -> None:
    """Add the title block definition to ``doc`` (paper mm, origin lower right)."""
    blk = doc.blocks.new(B_TITLE, base_point=(WIDTH_MM, 0.0),
                         dxfattribs={"description": "wallrun title block"})
    w, h = WIDTH_MM, HEIGHT_MM
    blk.add_lwpolyline([(0, 0), (w, 0), (w, h), (0, h)], close=True,
                       dxfattribs={"lineweight": 50})
    for y in (46.0, 30.0, 16.0):
        blk.add_line((0, y), (w, y))
    blk.add_line((50, 16), (50, 30))
    blk.add_line((115, 16), (115, 30))
    for x, label in ((3, "scale"), (53, "date"), (118, "sheet")):
        blk.add_text(label, height=1.8, dxfattribs={"insert": (x, 25.5),
                                                    "style": c.TEXT_STYLE})
    blk.add_text("made with wallrun: a preliminary design aid, every figure to be checked",
                 height=1.8, dxfattribs={"insert": (3, 3.5), "style": c.TEXT_STYLE})
    for tag, x, y, ht, col in _ATTRS:
        blk.add_attdef(tag, (x, y), dxfattribs={"height": ht, "style": c.TEXT_STYLE,
                                                "color": col})


def fields(site, title: str, subtitle: str, scale_text: str, sheet: str) -> dict:
    """The attribute values of a title block (the date: the outputs' date of issue,
    ``stamp.issue_date``, as the report's and the workbook's)."""
    project = getattr(site, "project", None)
    return {"PROJECT": getattr(project, "name", "") or "(unnamed project)",
            "REFERENCE": "reference " + (getattr(project, "reference", "") or "-"),
            "TITLE": title, "SUBTITLE": subtitle, "SCALE": scale_text,
            "DATE": issue_date().isoformat(), "SHEET": sheet, "STATUS": c.STATUS}


def add_title_block(layout, lower_right, values: dict, k: float = 1.0, layer=c.L_FRAME):
    """Insert the title block with its lower right corner at ``lower_right``, ``k``
    drawing units per paper mm (1 in paper space; scale / 1000 in model space at 1:scale),
    its attributes set from ``values``."""
    ref = layout.add_blockref(B_TITLE, lower_right, dxfattribs={
        "layer": layer, "xscale": k, "yscale": k})
    ref.add_auto_attribs({tag: c.text_escape(str(v)) for tag, v in values.items()})
    for a in ref.attribs:
        a.dxf.layer = layer
    return ref


def wrap_notes(lines, width_mm: float, lt: c.Lettering) -> list[str]:
    """Numbered note lines wrapped word by word to ``width_mm`` at :data:`NOTES_MM`
    text (widths measured with the drawing's font); continuation lines indented."""
    out = []
    for i, t in enumerate(lines, start=1):
        cur, fresh = f"{i}.", True
        for w in t.split():
            trial = cur + " " + w
            if not fresh and lt.width(trial, NOTES_MM) > width_mm:
                out.append(cur)
                cur = "    " + w
            else:
                cur = trial
            fresh = False
        out.append(cur)
    return out


def add_notes(layout, top_left, lines, width_mm: float, lt: c.Lettering, k: float = 1.0,
              heading: str = "NOTES AND CAUTIONS") -> float:
    """The notes panel text: ``heading`` and the numbered ``lines`` wrapped to
    ``width_mm`` (one MTEXT) with its top left at ``top_left``; returns its height in
    drawing units (``k`` per paper mm)."""
    body = [heading] + wrap_notes(lines, width_mm, lt)
    c.add_lines_text(layout, body, top_left, NOTES_MM * k, c.L_NOTES, NOTES_PITCH_MM * k,
                     lt=lt)
    return NOTES_PITCH_MM * k * len(body)


def notes_height_mm(lines, width_mm: float, lt: c.Lettering) -> float:
    """Height on paper of :func:`add_notes` for ``lines``, mm."""
    return NOTES_PITCH_MM * (1 + len(wrap_notes(lines, width_mm, lt)))


def furniture(layout, right_bottom, k: float, site, title: str, subtitle: str,
              scale_text: str, sheet: str, notes=(), lt: c.Lettering | None = None,
              notes_width_mm: float = 170.0) -> tuple:
    """The title block with its lower right corner at ``right_bottom`` and, left of it
    and top-aligned with it, the notes panel: the cautions for the site
    (:func:`conventions.caution_lines`) and ``notes``. Returns the box (xmin, ymin,
    xmax, ymax) of both, drawing units (``k`` per paper mm)."""
    lt = lt or c.Lettering()
    x1, y0 = float(right_bottom[0]), float(right_bottom[1])
    add_title_block(layout, (x1, y0), fields(site, title, subtitle, scale_text, sheet), k)
    top = y0 + HEIGHT_MM * k
    x_notes = x1 - (WIDTH_MM + 6.0 + notes_width_mm) * k
    lines = tuple(c.caution_lines(site)) + tuple(notes)
    h = add_notes(layout, (x_notes, top), lines, notes_width_mm, lt, k)
    return (x_notes, min(y0, top - h), x1, top)

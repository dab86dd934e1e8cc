"""Developed elevation of the wall along chainage: ``elevation.dxf``.

Drawing coordinates: x = chainage (m); y = datum + (level - datum) x VE, with VE =
``site.drawings.vertical_exaggeration`` and the datum a round level (a multiple of the
level-scale step) one step below the lowest level drawn. At VE = 1 the y coordinate
is the level itself. The datum and VE are written to the drawing's header as custom
properties ``WALLRUN_DATUM_M`` and ``WALLRUN_VERTICAL_EXAGGERATION`` and stated in
the notes, and :func:`level_of` converts back.

Model space holds the developed elevation as one drawing: existing ground and
finished level, each through its own points (and a regular grid on the vertical
curves, so they draw smoothly: ``conventions.line_chainages``), a straight stretch of
the finished level by its two ends (``conventions.straight_vertices``: at 10 km of a
constant grade surveyed every 0.5 m, 2 vertices instead of 20,001, the same sheets
pixel for pixel, drawn about 0.4 s sooner); per run the top of
wall (stepped or sloped per panel from ``wall_top_start_m`` / ``wall_top_end_m``), the
underside of base (a polyline whose vertex levels are the panels' ``founding_m``),
the top of base (dashed), the end faces; one LINE per joint. Long lines are drawn in
pieces of at most 50 m of chainage between their points, joined end to end.

The run is cut into windows of chainage, each shown on a sheet by a viewport at the
horizontal scale 1:N (100, 200, 250 or 500: the smallest-numbered... see
:func:`elevation_scale`); windows end at joints or run ends. Under each window, in
model space, a band holds at every joint and run end the levels (one MTEXT turned to
read upwards: ``T`` top of wall, ``F`` founding, ``G`` existing ground, left / right
values where a step changes them) and the chainage ticks every
``[drawings] chainage_tick_m`` with their figures; above it a row names each panel and
its section type. A joint on a window's edge has its levels once in each window,
inside it. In paper space each sheet has the level scale left of its viewport, the
names of the band's rows, match lines at the window's ends naming the next and the
previous sheet, a key, the notes and the title block.
"""

from __future__ import annotations

import math
from bisect import bisect_left, bisect_right

import numpy as np
from ezdxf.enums import TextEntityAlignment as A

from wallrun.outputs.dxf import conventions as d

KEY_W_MM = 75.0
LEVEL_STEPS = (0.1, 0.2, 0.25, 0.5, 1.0, 2.0, 2.5, 5.0, 10.0, 20.0, 25.0, 50.0, 100.0)


def level_step(scale: int, ve: float) -> float:
    """Level-scale interval, m: the smallest of LEVEL_STEPS at least 10 mm apart on
    paper at 1:scale with vertical exaggeration ``ve``."""
    for s in LEVEL_STEPS:
        if s * ve * 1000.0 / scale >= 10.0:
            return s
    return LEVEL_STEPS[-1]


def to_y(z, datum: float, ve: float):
    """Drawing y of level ``z`` (m)."""
    return datum + (np.asarray(z, dtype=float) - datum) * ve


def level_of(y, datum: float, ve: float):
    """Level (m) of drawing y: the inverse of :func:`to_y`."""
    return datum + (np.asarray(y, dtype=float) - datum) / ve


def read_transform(doc) -> tuple[float, float]:
    """(datum m, vertical exaggeration) stored in an elevation drawing's header."""
    cv = doc.header.custom_vars
    return float(cv.get("WALLRUN_DATUM_M")), float(cv.get("WALLRUN_VERTICAL_EXAGGERATION"))


#: A long line is drawn as polylines of at most this much chainage, m: a sheet shows
#: some 100 to 400 m, and the pieces it meets are drawn whole (at 10 km, pieces of
#: 50 m render the elevation's sheets about 0.15 s faster than pieces of 200 m, for a
#: file 4 % larger, written as fast).
CHUNK_M = 50.0


def _polyline(msp, xy, layer: str) -> None:
    """An open line through the points ``xy`` ((n, 2), x = chainage increasing) as
    LWPOLYLINEs each spanning at most :data:`CHUNK_M` of chainage, joined end to end
    (a sheet's viewport then meets only the pieces it shows)."""
    xy = np.asarray(xy, dtype=float).reshape(-1, 2)
    piece = np.floor((xy[:, 0] - xy[0, 0]) / CHUNK_M + 1e-9).astype(int)
    cuts = np.flatnonzero(np.diff(piece)) + 1
    start = 0
    for cut in list(cuts) + [len(xy)]:
        if cut - start >= 1:
            seg = xy[max(start - 1, 0):cut]  # from the last vertex of the piece before
            if len(seg) >= 2:
                d.add_polyline(msp, seg, layer)
        start = cut


STAFF_W = 30.0  # paper mm left of the viewport: level scale and row names
MATCH_W = 8.0  # paper mm kept clear at each end of the viewport for a match line
BAND_GAP, CHAIN_ROW, NAME_ROW = 5.0, 12.0, 9.0  # band rows, paper mm
COLUMN_MM = 8.5  # paper width of a joint's level figures (three lines) and a gap
LABEL_MM = 2.0  # text of the band and the panel names, mm
ELEVATION_SCALES = (500, 250, 200, 100)
KEY = [(d.L_GROUND, "existing ground (survey)"), (d.L_FINISHED, "finished level"),
       (d.L_TOP, "top of wall"), (d.L_UNDERSIDE, "underside of base (founding)"),
       (d.L_BASE_TOP, "top of base"), (d.L_JOINTS, "movement joint")]


def type_label(pr) -> str:
    """A panel's label under its name: its section type, and FLAGGED for a panel that did
    not pass (a panel that could not be designed has no type)."""
    return " ".join(t for t in (pr.section_type, "FLAGGED" if pr.status != "ok" else "") if t)


def stations(result) -> list[tuple]:
    """(chainage, left panel or None, right panel or None) at every joint and run end,
    by chainage."""
    out = []
    for prs in d.runs_of(result):
        for piece in d.pieces(prs):
            ps = [pr.panel for pr in piece]
            out.append((ps[0].ch_start_m, None, ps[0]))
            for a, b in zip(ps[:-1], ps[1:]):
                out.append((b.ch_start_m, a, b))
            out.append((ps[-1].ch_end_m, ps[-1], None))
    return sorted(out, key=lambda t: t[0])


def elevation_scale(result, lt: d.Lettering, width_mm: float = 1e9) -> int:
    """Horizontal scale 1:N of the elevation, of 100, 200, 250 and 500 those at which
    neighbouring joints and run ends are a level column apart on paper and every panel
    is longer than its name and type: the smallest N at which the whole run fits in a
    viewport ``width_mm`` wide, else the largest such N; 100 if none."""
    st = [ch for ch, _l, _r in stations(result)]
    gaps = np.diff(st) if len(st) > 1 else np.array([1e9])
    gaps = gaps[gaps > 1e-6]
    need_name = max([lt.width(f"{pr.panel.panel}", LABEL_MM) for pr in result.panels]
                    + [lt.width(type_label(pr), LABEL_MM)
                       for pr in result.panels if pr.status != "ok"]
                    + [lt.width(pr.section_type, LABEL_MM) for pr in result.panels] + [1.0])
    short = min([pr.panel.length_m for pr in result.panels] + [1e9])
    span = (st[-1] - st[0]) if st else 0.0
    ok = [n for n in sorted(ELEVATION_SCALES)
          if (not len(gaps) or gaps.min() * 1000.0 / n >= COLUMN_MM)
          and short * 1000.0 / n >= need_name + 2.0]
    if not ok:
        return min(ELEVATION_SCALES)
    fits = [n for n in ok if span * 1000.0 / n <= width_mm]
    return fits[0] if fits else ok[-1]


def windows(result, length_m: float, clear_m: float = 0.0) -> list[tuple[float, float]]:
    """Windows of chainage at most ``length_m`` long covering every panel, each ending at
    a joint or run end (a longer single panel: cut at ``length_m``), where there is one
    at least ``clear_m`` from its neighbours on both sides; windows holding no panel
    are left out."""
    st = [ch for ch, _l, _r in stations(result)]  # by chainage
    if not st:
        return []
    gaps = np.diff(st)
    roomy = {x for i, x in enumerate(st)
             if (i == 0 or gaps[i - 1] >= clear_m) and (i == len(st) - 1 or gaps[i] >= clear_m)}
    p0, p1 = _panel_extents(result)
    out = []
    a = st[0]
    end = st[-1]
    while a < end - 1e-9:
        inside = st[bisect_right(st, a + 1e-9):bisect_right(st, a + length_m + 1e-9)]
        good = [x for x in inside if x in roomy or x >= end - 1e-9]
        b = good[-1] if good else inside[-1] if inside else min(a + length_m, end)
        if np.any((p0 < b - 1e-9) & (p1 > a + 1e-9)):
            out.append((a, b))
        a = b
    return out


def _panel_extents(result) -> tuple[np.ndarray, np.ndarray]:
    """Start and end chainage of every panel, m, in the result's order (a window's
    panels are found among them in one numpy call, not a loop over the wall)."""
    ps = [pr.panel for pr in result.panels]
    return (np.array([p.ch_start_m for p in ps], dtype=float).reshape(-1),
            np.array([p.ch_end_m for p in ps], dtype=float).reshape(-1))


def _figure(v0, v1) -> str:
    """One level figure, or left / right figures where they differ to the millimetre
    (as written, so that a figure never stands for two that read differently)."""
    if v0 is None or v1 is None or f"{v0:.3f}" == f"{v1:.3f}":
        v = v0 if v0 is not None else v1
        return f"{v:.3f}"
    return f"{v0:.3f} / {v1:.3f}"


def level_lines(prof, station) -> list[str]:
    """The three lines of level figures at a station (see the module docstring)."""
    ch, left, right = station
    tl = left.wall_top_end_m if left else None
    tr = right.wall_top_start_m if right else None
    fl = left.founding_m if left else None
    fr = right.founding_m if right else None
    g = float(np.asarray(prof.ground(np.array([ch])))[0])
    return [f"T {_figure(tl, tr)}", f"F {_figure(fl, fr)}", f"G {g:.3f}"]


NOTES_TEXT = ("Levels drawn at y = datum + (level - datum) x VE; read levels on the level "
              "scale or in the band: T top of wall, F founding (underside of base), G "
              "existing ground, at every joint and run end (left / right of a step).",
              "Chainages in km+m; joints chain-dotted; sheets join at the match lines.")


def write_elevation(result, path):
    """Write the developed elevation of ``result`` (a DesignResult) to ``path``, on as
    many sheets as the run needs; returns the document written.

    Raises RuntimeError if the DXF audit reports errors (nothing is written then).
    """
    from wallrun.outputs.dxf import sheets

    site, prof = result.site, result.profiles
    ve = float(getattr(site.drawings, "vertical_exaggeration", 1.0) or 1.0)
    tick = float(getattr(site.drawings, "chainage_tick_m", 20.0) or 20.0)
    lt = d.Lettering()
    fr = sheets.frame(site, getattr(site.drawings, "sheet", "A1"), NOTES_TEXT,
                      key_rows=len(KEY), lt=lt)
    ax0, ay0, ax1, ay1 = fr.area
    vp_w = ax1 - ax0 - STAFF_W - 2 * MATCH_W
    scale = elevation_scale(result, lt, vp_w)
    k, m = 1000.0 / scale, scale / 1000.0  # paper mm per model m, and back
    P = lambda mm: mm * m  # noqa: E731
    panels = [pr.panel for pr in result.panels]

    a, b = float(prof.ch_start), float(prof.ch_end)
    # each line through its own points (the lowest of each is one of them)
    gch, fch = (d.line_chainages(prof, line, a, b) for line in ("ground", "finished"))
    G = np.asarray(prof.ground(gch), dtype=float)
    F = np.asarray(prof.finished(fch), dtype=float)
    lows = [G.min(), F.min()] + [p.founding_m for p in panels]
    zmin = float(min(lows))
    step = level_step(scale, ve)
    datum = math.floor(zmin / step + 1e-9) * step - step
    Y = lambda z: to_y(z, datum, ve)  # noqa: E731

    doc = d.new_document(scale, "developed elevation")
    doc.header.custom_vars.append("WALLRUN_DATUM_M", repr(float(datum)))
    doc.header.custom_vars.append("WALLRUN_VERTICAL_EXAGGERATION", repr(ve))
    msp = doc.modelspace()

    # the elevation itself, continuous along the chainage
    _polyline(msp, np.column_stack([gch, Y(G)]), d.L_GROUND)
    _polyline(msp, d.straight_vertices(np.column_stack([fch, Y(F)])), d.L_FINISHED)
    for prs in d.runs_of(result):
        for piece in d.pieces(prs):
            ch = np.array([(pr.panel.ch_start_m, pr.panel.ch_end_m) for pr in piece]).ravel()
            found = np.array([pr.panel.founding_m for pr in piece])
            zt = found + np.array([pr.section.base_thickness_m for pr in piece])
            top = np.column_stack([ch, Y(np.array([(pr.panel.wall_top_start_m,
                                                    pr.panel.wall_top_end_m)
                                                   for pr in piece]).ravel())])
            und = np.column_stack([ch, Y(np.repeat(found, 2))])
            _polyline(msp, top, d.L_TOP)
            _polyline(msp, und, d.L_UNDERSIDE)
            _polyline(msp, np.column_stack([ch, Y(np.repeat(zt, 2))]), d.L_BASE_TOP)
            msp.add_line((ch[0], und[0][1]), (ch[0], top[0][1]), dxfattribs={"layer": d.L_TOP})
            msp.add_line((ch[-1], und[-1][1]), (ch[-1], top[-1][1]),
                         dxfattribs={"layer": d.L_TOP})
    by_name = {p.panel: p for p in panels}
    for j in result.joints:
        near = [q for q in (by_name.get(j.left), by_name.get(j.right)) if q is not None]
        if near:
            z0 = min(q.founding_m for q in near)
            z1 = max([by_name[j.left].wall_top_end_m] if j.left in by_name else []
                     + [by_name[j.right].wall_top_start_m] if j.right in by_name else [])
        else:
            g, f = float(prof.ground(j.ch_m)), float(prof.finished(j.ch_m))
            z0, z1 = min(g, f), max(g, f)
        msp.add_line((j.ch_m, Y(z0)), (j.ch_m, Y(z1)), dxfattribs={"layer": d.L_JOINTS})

    # windows and their bands
    wins = windows(result, vp_w * m, clear_m=1.5 * COLUMN_MM * m)
    st_all = stations(result)
    st_ch = [ch for ch, _l, _r in st_all]  # by chainage
    p0, p1 = _panel_extents(result)
    p_levels = np.array([(pr.panel.founding_m, pr.panel.wall_top_start_m,
                          pr.panel.wall_top_end_m) for pr in result.panels],
                        dtype=float).reshape(-1, 3)
    levels_of = [level_lines(prof, s_) for s_ in st_all]
    level_row = 2.0 + max([lt.width(t, LABEL_MM) for ls in levels_of for t in ls] + [10.0])
    band_h = BAND_GAP + level_row + CHAIN_ROW
    area_h = ay1 - ay0
    fitted = []
    for w0, w1 in wins:  # a window too tall for the sheet is split at joints
        queue = [(w0, w1)]
        while queue:
            c0, c1 = queue.pop(0)
            lo, hi = _window_levels(prof, p0, p1, p_levels, c0, c1)
            h = (Y(hi) - Y(lo)) * k + band_h + NAME_ROW + 2.0
            inner = st_ch[bisect_right(st_ch, c0 + 1e-9):bisect_left(st_ch, c1 - 1e-9)]
            if h > area_h and inner:
                mid = inner[len(inner) // 2]
                queue[:0] = [(c0, mid), (mid, c1)]
            else:
                fitted.append((c0, c1, lo, hi))
    views = []
    for c0, c1, lo, hi in fitted:
        y_lo = float(Y(lo)) - P(BAND_GAP)
        y_chain = y_lo - P(level_row)  # top of the chainage row
        y_bottom = y_chain - P(CHAIN_ROW)
        y_names = float(Y(hi)) + P(2.0)
        y_top = y_names + P(NAME_ROW)
        i0, i1 = bisect_left(st_ch, c0 - 1e-9), bisect_right(st_ch, c1 + 1e-9)
        for (ch, left, right), lines in zip(st_all[i0:i1], levels_of[i0:i1]):
            x = ch
            if ch <= c0 + 1e-9:
                x = c0 + P(COLUMN_MM / 2)
            elif ch >= c1 - 1e-9:
                x = c1 - P(COLUMN_MM / 2)
            d.add_lines_text(msp, lines, (x, y_lo - P(1.0)),
                             P(LABEL_MM), d.L_LEVEL_TEXT, P(2.6), attach=6,
                             rotation=90.0, lt=lt)
        for i in np.flatnonzero((p0 >= c0 - 1e-9) & (p1 <= c1 + 1e-9)):
            pr = result.panels[i]
            p = pr.panel
            label = [p.panel, type_label(pr)]
            d.add_lines_text(msp, label, (0.5 * (p.ch_start_m + p.ch_end_m), y_names),
                             P(LABEL_MM), d.L_PANELS, P(3.0), attach=8, lt=lt)
        _chainage_row(msp, c0, c1, y_chain, tick, scale, lt)
        views.append((c0, c1, lo, hi, y_bottom, y_top, level_row))

    # sheets
    count = max(1, len(views))
    for n, (c0, c1, lo, hi, y_bottom, y_top, level_row) in enumerate(views, start=1):
        sub = (f"ch {d.chainage_label(c0)} to {d.chainage_label(c1)}; vertical "
               f"exaggeration x{ve:g} (vertical 1:{scale / ve:g})")
        lay = sheets.new_sheet(doc, f"ELEVATION {n:02d}", fr, site, lt,
                               "Developed elevation along the wall line", sub,
                               f"1:{scale} H, 1:{scale / ve:g} V", n, count,
                               notes=NOTES_TEXT, key=KEY, scale=scale)
        w_mm = (c1 - c0) * k
        x0 = ax0 + STAFF_W + MATCH_W
        box = (x0, ay0, x0 + w_mm, ay1)
        cy = 0.5 * (y_bottom + y_top)
        vp = sheets.add_view(lay, box, (0.5 * (c0 + c1), cy), scale)
        _paper_staff(lay, vp, box, lo, hi, datum, ve, scale, y_bottom, level_row)
        if n > 1:
            _match(lay, box[0] - MATCH_W / 2, box, f"MATCH LINE {d.chainage_label(c0)}: "
                   f"continued from sheet {n - 1}")
        if n < count:
            _match(lay, box[2] + MATCH_W / 2, box, f"MATCH LINE {d.chainage_label(c1)}: "
                   f"continued on sheet {n + 1}")
    if not views:
        lay = sheets.new_sheet(doc, "ELEVATION 01", fr, site, lt,
                               "Developed elevation along the wall line", "no wall",
                               f"1:{scale}", 1, 1, notes=NOTES_TEXT, key=KEY, scale=scale)
        d.add_text(lay, "No panels to draw.", (ax0 + 10, ay1 - 10), d.TITLE_MM, d.L_TITLES)
    sheets.finish(doc)
    d.save(doc, path)
    return doc


def _window_levels(prof, p0, p1, p_levels, c0: float, c1: float) -> tuple[float, float]:
    """Lowest and highest level drawn between chainages c0 and c1, m: the ground and
    finished levels there and the founding and wall-top levels (``p_levels``, (n, 3)) of
    the panels whose extents ``p0``..``p1`` meet the window."""
    ch = d.sample_chainages(prof, max(c0, float(prof.ch_start)), min(c1, float(prof.ch_end)),
                            max_step=5.0)
    zs = [np.asarray(prof.ground(ch), float).reshape(-1),
          np.asarray(prof.finished(ch), float).reshape(-1),
          p_levels[(p1 > c0 - 1e-9) & (p0 < c1 + 1e-9)].reshape(-1)]
    z = np.concatenate(zs)
    return float(z.min()), float(z.max())


def _chainage_row(msp, c0, c1, y_top, tick, scale, lt) -> None:
    """The chainage row of a window: a line with a tick every ``tick`` m (one polyline
    comb) and the figures; figures turned to read upwards where they would crowd."""
    m = scale / 1000.0
    ticks = d.tick_values(c0, c1, tick)
    y = y_top - 1.0 * m
    pts = [(c0, y)]
    for t in ticks:
        pts += [(t, y), (t, y - 2.0 * m), (t, y)]
    pts.append((c1, y))
    d.add_polyline(msp, pts, d.L_CHAINAGE)
    w = lt.width("0+000", LABEL_MM)
    upright = tick / m >= w + 3.0
    for t in ticks:
        half = (w / 2 + 0.5) * m if upright else (LABEL_MM / 2 + 0.5) * m
        if t - half < c0 or t + half > c1:
            continue
        if upright:
            d.add_text(msp, d.chainage_label(t), (t, y - 3.0 * m), LABEL_MM * m,
                       d.L_CHAINAGE, A.TOP_CENTER)
        else:
            d.add_text(msp, d.chainage_label(t), (t, y - 3.0 * m), LABEL_MM * m,
                       d.L_CHAINAGE, A.MIDDLE_RIGHT, rotation=90.0)


def _paper_staff(lay, vp, box, lo, hi, datum, ve, scale, y_bottom, level_row) -> None:
    """The level scale and the band's row names left of a viewport (paper space)."""
    from wallrun.outputs.dxf import sheets

    step = level_step(scale, ve)
    x = box[0] - MATCH_W - 4.0
    z0 = math.floor(lo / step + 1e-9) * step
    z1 = math.ceil(hi / step - 1e-9) * step
    ys = [(z, sheets.to_paper(vp, (0.0, float(to_y(z, datum, ve))))[1])
          for z in d.tick_values(z0, z1, step)]
    ys = [(z, y) for z, y in ys if box[1] + 2 <= y <= box[3] - 2]
    if ys:
        lay.add_line((x, ys[0][1]), (x, ys[-1][1]), dxfattribs={"layer": d.L_LEVELS})
        pts = []
        for z, y in ys:
            pts += [(x, y), (x - 1.5, y), (x, y)]
            d.add_text(lay, f"{z:.2f}", (x - 2.5, y), d.SMALL_MM, d.L_LEVELS, A.MIDDLE_RIGHT)
        d.add_polyline(lay, pts, d.L_LEVELS)
        d.add_text(lay, "LEVEL (m)", (x - 2.5, min(ys[-1][1] + 5.0, box[3] - 2.0)),
                   d.SMALL_MM, d.L_LEVELS, A.MIDDLE_RIGHT)
    yb = sheets.to_paper(vp, (0.0, y_bottom))[1]
    rows = ((yb + CHAIN_ROW + level_row / 2, "LEVELS T F G"),
            (yb + CHAIN_ROW / 2, "CHAINAGE"))
    for y, name in rows:
        d.add_text(lay, name, (box[0] - MATCH_W - 1.0, y), d.SMALL_MM, d.L_FRAME,
                   A.MIDDLE_RIGHT)


def _match(lay, x, box, text: str) -> None:
    """A match line along a viewport's end (paper space) with its note."""
    lay.add_line((x, box[1] + 2.0), (x, box[3] - 2.0), dxfattribs={"layer": d.L_MATCH})
    from wallrun.outputs.dxf.conventions import A as _A  # noqa: N814

    d.add_text(lay, text, (x - 1.0, 0.5 * (box[1] + box[3])), d.SMALL_MM, d.L_MATCH,
               _A.BOTTOM_CENTER, rotation=90.0)

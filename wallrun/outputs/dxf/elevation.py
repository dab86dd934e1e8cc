"""Developed elevation of the wall along chainage: ``elevation.dxf``.

Drawing coordinates: x = chainage (m); y = datum + (level - datum) x VE, with VE =
``site.drawings.vertical_exaggeration`` and the datum a round level (a multiple of the
level-scale step) one step below the lowest level drawn. At VE = 1 the y coordinate
is the level itself. The datum and VE are written to the drawing's header as custom
properties ``WALLRUN_DATUM_M`` and ``WALLRUN_VERTICAL_EXAGGERATION`` and stated in
the notes, and :func:`level_of` converts back.

Content: existing ground and finished level sampled at the profile breakpoints (plus
a regular grid, so vertical curves draw smoothly); per run the top of wall (stepped or
sloped per panel from ``wall_top_start_m`` / ``wall_top_end_m``), the underside of base
(one LWPOLYLINE per run whose vertex levels are the panels' ``founding_m``), the top
of base (dashed), the end faces; one LINE per joint; panel names and section types;
chainage ticks; a level scale; a key to the lines; title block and cautions.
"""

from __future__ import annotations

import math

import numpy as np
from ezdxf.enums import TextEntityAlignment as A

from wallrun.outputs.dxf import conventions as d
from wallrun.outputs.dxf import titles

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


def _polyline(msp, xy, layer: str):
    """An open LWPOLYLINE through the points ``xy`` ((n, 2) array-like)."""
    return d.add_polyline(msp, xy, layer)


def write_elevation(result, path) -> None:
    """Write the developed elevation of ``result`` (a DesignResult) to ``path``.

    Raises RuntimeError if the DXF audit reports errors (nothing is written then).
    """
    site, prof = result.site, result.profiles
    ve = float(getattr(site.drawings, "vertical_exaggeration", 1.0) or 1.0)
    if not ve > 0:
        ve = 1.0
    tick = float(getattr(site.drawings, "chainage_tick_m", 20.0) or 20.0)
    panels = [pr.panel for pr in result.panels]
    scale = d.along_wall_scale([p.length_m for p in panels])
    P = lambda mm: d.paper(mm, scale)  # noqa: E731

    a, b = float(prof.ch_start), float(prof.ch_end)
    ends = [p.ch_start_m for p in panels] + [p.ch_end_m for p in panels]
    if panels:
        a, b = min(a, min(ends)), max(b, max(ends))
    chs = d.sample_chainages(prof, float(prof.ch_start), float(prof.ch_end), extra=ends)
    G = np.asarray(prof.ground(chs), dtype=float)
    F = np.asarray(prof.finished(chs), dtype=float)
    lows = [G.min(), F.min()] + [p.founding_m for p in panels]
    highs = [G.max(), F.max()] + [max(p.wall_top_start_m, p.wall_top_end_m) for p in panels]
    zmin, zmax = float(min(lows)), float(max(highs))
    step = level_step(scale, ve)
    datum = math.floor(zmin / step + 1e-9) * step - step
    top_level = math.ceil(zmax / step - 1e-9) * step + step
    Y = lambda z: to_y(z, datum, ve)  # noqa: E731

    doc = d.new_document(scale, "developed elevation")
    doc.header.custom_vars.append("WALLRUN_DATUM_M", repr(float(datum)))
    doc.header.custom_vars.append("WALLRUN_VERTICAL_EXAGGERATION", repr(ve))
    msp = doc.modelspace()

    # profiles
    _polyline(msp, np.column_stack([chs, Y(G)]), d.L_GROUND)
    _polyline(msp, np.column_stack([chs, Y(F)]), d.L_FINISHED)

    # the wall, run by run
    txt, small = P(d.TEXT_MM), P(d.SMALL_MM)
    for prs in d.runs_of(result):
        for piece in d.pieces(prs):
            # each panel gives two vertices: its start and its end
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
            first, last = piece[0].panel, piece[-1].panel
            msp.add_line((first.ch_start_m, und[0][1]), (first.ch_start_m, top[0][1]),
                         dxfattribs={"layer": d.L_TOP})
            msp.add_line((last.ch_end_m, und[-1][1]), (last.ch_end_m, top[-1][1]),
                         dxfattribs={"layer": d.L_TOP})
        p0 = prs[0].panel
        hi = max(max(pr.panel.wall_top_start_m, pr.panel.wall_top_end_m) for pr in prs)
        d.add_text(msp, f"RUN {p0.run} ({p0.side}) {d.chainage_label(p0.ch_start_m)} to "
                        f"{d.chainage_label(prs[-1].panel.ch_end_m)}",
                   (p0.ch_start_m, Y(hi) + P(14)), txt, d.L_RUNS, A.BOTTOM_LEFT)

    for pr in result.panels:
        p = pr.panel
        mid = 0.5 * (p.ch_start_m + p.ch_end_m)
        yt = float(Y(max(p.wall_top_start_m, p.wall_top_end_m)))
        d.add_text(msp, p.panel, (mid, yt + P(2)), txt, d.L_PANELS, A.BOTTOM_CENTER)
        label = pr.section_type + (" FLAGGED" if pr.status != "ok" else "")
        d.add_text(msp, label, (mid, yt + P(6.5)), small, d.L_PANELS, A.BOTTOM_CENTER)

    # joints: one LINE each, from the lower founding to the higher top
    by_name = {p.panel: p for p in panels}
    for j in result.joints:
        left, right = by_name.get(j.left), by_name.get(j.right)
        near = [q for q in (left, right) if q is not None]
        if near:
            z0 = min(q.founding_m for q in near)
            tops = ([left.wall_top_end_m] if left else []) + (
                [right.wall_top_start_m] if right else [])
            z1 = max(tops)
        else:
            z0 = float(np.interp(j.ch_m, chs, np.minimum(G, F)))
            z1 = float(np.interp(j.ch_m, chs, np.maximum(G, F)))
        msp.add_line((j.ch_m, Y(z0)), (j.ch_m, Y(z1)), dxfattribs={"layer": d.L_JOINTS})
        d.add_text(msp, j.joint + (" FLAGGED" if j.status != "ok" else ""),
                   (j.ch_m, float(Y(z0)) - P(1.5)), small, d.L_PANELS, A.MIDDLE_RIGHT,
                   rotation=90.0)

    # chainage ticks on the datum line
    yd = float(datum)
    msp.add_line((a, yd), (b, yd), dxfattribs={"layer": d.L_CHAINAGE})
    ticks = d.tick_values(a, b, tick)
    rotate = tick * 1000.0 / scale < 18.0
    for t in ticks:
        msp.add_line((t, yd), (t, yd - P(2)), dxfattribs={"layer": d.L_CHAINAGE})
        if rotate:
            d.add_text(msp, d.chainage_label(t), (t, yd - P(3)), small, d.L_CHAINAGE,
                       A.MIDDLE_RIGHT, rotation=90.0)
        else:
            d.add_text(msp, d.chainage_label(t), (t, yd - P(3)), small, d.L_CHAINAGE,
                       A.TOP_CENTER)
    d.add_text(msp, "CHAINAGE (km+m)", (a - P(14.5), yd - P(4)), small, d.L_CHAINAGE,
               A.TOP_RIGHT)

    # level scale left of the start
    xs = a - P(12)
    msp.add_line((xs, yd), (xs, float(Y(top_level))), dxfattribs={"layer": d.L_LEVELS})
    for z in d.tick_values(datum, top_level, step):
        y = float(Y(z))
        msp.add_line((xs, y), (xs - P(1.5), y), dxfattribs={"layer": d.L_LEVELS})
        label = f"DATUM {z:.2f}" if abs(z - datum) < 1e-9 else f"{z:.2f}"
        d.add_text(msp, label, (xs - P(2.5), y), small, d.L_LEVELS, A.MIDDLE_RIGHT)
    d.add_text(msp, "LEVEL (m)", (xs, float(Y(top_level)) + P(3)), small, d.L_LEVELS,
               A.BOTTOM_CENTER)

    # sheet furniture in a row under the chainage figures: key, notes, title block
    ytop = yd - P(30 if rotate else 16)
    key = [(d.L_GROUND, "existing ground (survey)"), (d.L_FINISHED, "finished level"),
           (d.L_TOP, "top of wall"), (d.L_UNDERSIDE, "underside of base (founding level)"),
           (d.L_BASE_TOP, "top of base"), (d.L_JOINTS, "movement joint")]
    d.add_text(msp, "KEY", (a, ytop - P(2.5)), txt, d.L_FRAME, A.MIDDLE_LEFT)
    for i, (layer, label) in enumerate(key, start=1):
        y = ytop - P(2.5) - P(5) * i
        d.key_sample(msp, (a, y), (a + P(15), y), layer)
        d.add_text(msp, label, (a + P(18), y), small, d.L_FRAME, A.MIDDLE_LEFT)
    right = max(b, a + P(KEY_W_MM + 6 + 170 + 6 + titles.WIDTH_MM))
    ve_text = f"vertical exaggeration x{ve:g} (vertical 1:{scale / ve:g})"
    titles.furniture(
        msp, (right, ytop - P(titles.HEIGHT_MM)), scale / 1000.0, site,
        "Developed elevation along the wall line", ve_text.capitalize(),
        f"1:{scale} horizontal", "1 of 1",
        notes=(f"Levels are drawn at y = datum + (level - datum) x {ve:g} with datum "
               f"{datum:.2f} m; read levels on the level scale.",
               "Each panel shows its top of wall and its underside of base (founding "
               "level); joints are chain-dotted with their names below."))

    d.save(doc, path)

"""The wall in plan on real coordinates: ``plan.dxf`` and ``setting_out.csv``.

Only when the profiles carry plan coordinates (``profiles.plan_line`` is not None);
positions come from ``profiles.xy_at(ch)`` (x east, y north, m, the survey grid).

Reading (see ``docs/basis-readings.md``): the plan line of the profiles is the
setting-out line of the wall, the front face of the stem; the retained side (the
stem's back face, the heel) lies on the left of the direction of increasing chainage.
The site file says nothing of the side, so the drawing states this reading in its
notes.

Model space: the profile reference line (chain-dotted) over the whole profile; per
run the front face (heavy), the back face of the stem at its top (the stem as seen
from above) and the outline of the base (hidden: the toe edge and the heel edge,
each panel at its own widths, stepping at the joints, closed across at the run
ends); one LINE per joint across the base; chainage ticks every
``[drawings] chainage_tick_m`` on the front side.

Sheets: the run is cut into windows of chainage as in the elevation, one sheet per
window with a viewport at a standard scale; the panel names and types, the chainage
figures and a north point are written on each sheet in paper space, beside what its
viewport shows. Setting-out sheets follow: a table of the front face at every joint
and run end (chainage, easting, northing, top of wall and founding level), the same
rows as ``setting_out.csv``.
"""

from __future__ import annotations

import math

import numpy as np

from wallrun.outputs.dxf import conventions as d

A = d.A
PLAN_SCALES = (100, 200, 250, 500, 1000, 1250, 2000, 2500, 5000)
SETTING_COLUMNS = ("joint", "chainage_m", "easting_m", "northing_m", "top_of_wall_m",
                   "founding_m")
NOTES_TEXT = ("Reading: the plan line of the profiles is the front face of the stem "
              "(the setting-out line); the retained side lies on the left of the "
              "direction of increasing chainage.",
              "Coordinates on the survey grid of the profiles; setting-out points on the "
              "front face at every joint and run end (setting_out.csv).")
KEY = [(d.L_WALL_PLAN, "front face of the stem (setting-out line)"),
       (d.L_STEM_PLAN, "back face of the stem, at its top"),
       (d.L_BASE_PLAN, "base outline (hidden)"), (d.L_JOINTS, "movement joint"),
       (d.L_REFERENCE, "profile line")]


def frame_at(profiles, ch):
    """Positions (n, 2) and unit normals (n, 2) to the left of the direction of
    increasing chainage at ``ch``."""
    ch = np.atleast_1d(np.asarray(ch, dtype=float))
    lo, hi = float(profiles.ch_start), float(profiles.ch_end)
    eps = max(1e-3, 1e-6 * (hi - lo))
    pa = d.xy_array(profiles, np.clip(ch - eps, lo, hi))
    pb = d.xy_array(profiles, np.clip(ch + eps, lo, hi))
    t = pb - pa
    n = np.hypot(t[:, 0], t[:, 1])
    t = t / np.where(n > 0, n, 1.0)[:, None]
    return d.xy_array(profiles, ch), np.column_stack([-t[:, 1], t[:, 0]])


def readable(angle_deg: float) -> float:
    """Text rotation along a direction, turned so that it never reads upside down."""
    a = (angle_deg + 180.0) % 360.0 - 180.0
    if a > 90.0:
        a -= 180.0
    elif a < -90.0:
        a += 180.0
    return a


def setting_out_rows(result) -> list[tuple]:
    """Rows of ``setting_out.csv``: at every joint and run end, the front face's
    position and the levels there. At a joint, the higher top of wall and the lower
    founding level of the two panels (the joint's full height); at a run end, its
    panel's. Run ends are named ``RUN n START`` / ``RUN n END``."""
    from wallrun.outputs.dxf.elevation import stations

    prof = result.profiles
    by_ch = {round(j.ch_m, 6): j.joint for j in result.joints}
    run_of = {pr.panel.panel: pr.panel.run for pr in result.panels}
    rows = []
    for ch, left, right in stations(result):
        if left is not None and right is not None:
            name = by_ch.get(round(ch, 6), f"{left.panel}/{right.panel}")
            top = max(left.wall_top_end_m, right.wall_top_start_m)
            found = min(left.founding_m, right.founding_m)
        elif right is not None:
            name, top, found = f"RUN {run_of[right.panel]} START", right.wall_top_start_m, \
                right.founding_m
        else:
            name, top, found = f"RUN {run_of[left.panel]} END", left.wall_top_end_m, \
                left.founding_m
        x, y = d.xy_array(prof, [ch])[0]
        rows.append((name, float(ch), float(x), float(y), float(top), float(found)))
    return rows


def setting_out_csv(result) -> str | None:
    """The text of ``setting_out.csv`` (None without plan coordinates): chainage and
    coordinates to the millimetre, levels to the millimetre."""
    if getattr(result.profiles, "plan_line", None) is None:
        return None
    lines = [",".join(SETTING_COLUMNS)]
    for name, ch, x, y, top, found in setting_out_rows(result):
        lines.append(f"{name},{ch:.3f},{x:.3f},{y:.3f},{top:.3f},{found:.3f}")
    return "\n".join(lines) + "\n"


def _offset_line(prof, piece, offset_of, step: float = 1.0):
    """Points (n, 2) of a line along a run piece at a per-panel offset (m, positive on
    the left), sampled every ``step`` m and at every panel end; two points at a joint
    where the offset changes."""
    out = []
    for pr in piece:
        p = pr.panel
        ch = d.sample_chainages(prof, p.ch_start_m, p.ch_end_m, max_step=step)
        xy, nv = frame_at(prof, ch)
        out.append(xy + nv * offset_of(pr))
    return np.vstack(out)


def write_plan(result, path):
    """Write the plan of ``result`` to ``path``; returns the document written, or
    None (and no file) when the profiles carry no plan coordinates.

    Raises RuntimeError if the DXF audit reports errors (nothing is written then).
    """
    from wallrun.outputs.dxf import sheets
    from wallrun.outputs.dxf.elevation import windows

    prof = result.profiles
    if getattr(prof, "plan_line", None) is None:
        return None
    site = result.site
    tick = float(getattr(site.drawings, "chainage_tick_m", 20.0) or 20.0)
    lt = d.Lettering()
    fr = sheets.frame(site, getattr(site.drawings, "sheet", "A1"), NOTES_TEXT,
                      key_rows=len(KEY), lt=lt)
    ax0, ay0, ax1, ay1 = fr.area
    aw, ah = ax1 - ax0, ay1 - ay0
    panels = [pr.panel for pr in result.panels]
    lo, hi = float(prof.ch_start), float(prof.ch_end)
    ends = [p.ch_start_m for p in panels] + [p.ch_end_m for p in panels]
    ref = d.xy_array(prof, d.sample_chainages(prof, lo, hi, extra=ends))
    scale = _plan_scale(result, ref, aw, ah, lt)
    k, m = 1000.0 / scale, scale / 1000.0

    doc = d.new_document(scale, "plan")
    msp = doc.modelspace()
    d.add_polyline(msp, ref, d.L_REFERENCE)
    for prs in d.runs_of(result):
        for piece in d.pieces(prs):
            front = _offset_line(prof, piece, lambda pr: 0.0)
            back = _offset_line(prof, piece, lambda pr: pr.section.stem_top_m)
            toe = _offset_line(prof, piece, lambda pr: -pr.section.toe_m)
            heel = _offset_line(prof, piece, lambda pr: pr.section.base_width_m
                                - pr.section.toe_m)
            d.add_polyline(msp, front, d.L_WALL_PLAN)
            d.add_polyline(msp, back, d.L_STEM_PLAN)
            d.add_polyline(msp, toe, d.L_BASE_PLAN)
            d.add_polyline(msp, heel, d.L_BASE_PLAN)
            for i in (0, -1):  # the ends: stem and base closed across
                msp.add_line(tuple(front[i]), tuple(back[i]), dxfattribs={"layer": d.L_STEM_PLAN})
                msp.add_line(tuple(toe[i]), tuple(heel[i]), dxfattribs={"layer": d.L_BASE_PLAN})
    by_name = {pr.panel.panel: pr for pr in result.panels}
    for j in result.joints:
        near = [by_name[n] for n in (j.left, j.right) if n in by_name]
        if not near:
            continue
        (xy,), (nv,) = frame_at(prof, [j.ch_m])
        t = max(pr.section.toe_m for pr in near)
        h = max(pr.section.base_width_m - pr.section.toe_m for pr in near)
        msp.add_line(tuple(xy - nv * t), tuple(xy + nv * h), dxfattribs={"layer": d.L_JOINTS})
    ticks = d.tick_values(lo, hi, tick)
    if ticks.size:
        xy, nv = frame_at(prof, ticks)
        toe_max = max([pr.section.toe_m for pr in result.panels] + [0.0])
        for q, n_ in zip(xy, nv):
            a = q - n_ * (toe_max + 1.0 * m)
            msp.add_line(tuple(a), tuple(a - n_ * 2.5 * m), dxfattribs={"layer": d.L_CHAINAGE})

    # sheets: one per window of chainage, labels in paper space
    wins = windows(result, aw * m * 0.8) or [(lo, hi)]
    boxes = _window_boxes(prof, result, wins, m)
    plan_sheets = []
    for c0, c1 in wins:
        plan_sheets.append((c0, c1))
    rows = setting_out_rows(result)
    table = _setting_table(rows)
    per_col = max(1, int((ah - 10.0) // SET_PITCH) - 2)
    width_col = lt.width(max(table, key=len), SET_MM, mono=True) + 10.0
    cols_per_sheet = max(1, int(aw // width_col))
    chunks = [table[2:][i:i + per_col] for i in range(0, max(1, len(table) - 2), per_col)]
    n_set = max(1, math.ceil(len(chunks) / cols_per_sheet))
    count = len(plan_sheets) + n_set
    for n, ((c0, c1), box) in enumerate(zip(plan_sheets, boxes), start=1):
        lay = sheets.new_sheet(doc, f"PLAN {n:02d}", fr, site, lt, "Wall in plan",
                               f"ch {d.chainage_label(c0)} to {d.chainage_label(c1)}",
                               f"1:{scale}", n, count, notes=NOTES_TEXT, key=KEY, scale=scale)
        cx, cy = 0.5 * (box[0] + box[2]), 0.5 * (box[1] + box[3])
        vp = sheets.add_view(lay, fr.area, (cx, cy), scale)
        _paper_labels(lay, vp, fr.area, prof, result, c0, c1, ticks, m, lt)
        lay.add_blockref(d.B_NORTH, (ax1 - 12.0, ay1 - 14.0), dxfattribs={
            "layer": d.L_NORTH, "xscale": k, "yscale": k})
    for s in range(n_set):
        n = len(plan_sheets) + s + 1
        lay = sheets.new_sheet(doc, f"SETTING OUT {s + 1:02d}", fr, site, lt,
                               "Setting-out points of the front face",
                               "at every joint and run end (setting_out.csv)", "-",
                               n, count, notes=NOTES_TEXT, scale=scale)
        for ci, chunk in enumerate(chunks[s * cols_per_sheet:(s + 1) * cols_per_sheet]):
            d.add_lines_text(lay, table[:2] + chunk, (ax0 + 4.0 + ci * width_col, ay1 - 4.0),
                             SET_MM, d.L_SETTING_TABLE, SET_PITCH, style=d.TABLE_STYLE, lt=lt)
    sheets.finish(doc)
    d.save(doc, path)
    return doc


SET_MM, SET_PITCH = 1.8, 3.0  # setting-out table text and line pitch, mm


def _setting_table(rows) -> list[str]:
    """The setting-out table as fixed-pitch lines: a heading, a rule, one line a row."""
    head = ("point", "chainage", "easting", "northing", "top of wall", "founding")
    body = [(r[0], d.chainage_label(r[1]), f"{r[2]:.3f}", f"{r[3]:.3f}", f"{r[4]:.3f}",
             f"{r[5]:.3f}") for r in rows]
    w = [max(len(x) for x in col) for col in zip(head, *body)]
    fmt = lambda cells: "  ".join(s.rjust(n) if i else s.ljust(n)  # noqa: E731
                                  for i, (s, n) in enumerate(zip(cells, w)))
    return [fmt(head), "-" * len(fmt(head))] + [fmt(b) for b in body]


def _window_boxes(prof, result, wins, m):
    """Model boxes (xmin, ymin, xmax, ymax) of the footprint in each window, with room
    for the labels on both sides."""
    out = []
    reach = max([pr.section.base_width_m for pr in result.panels] + [1.0]) + 14.0 * m
    for c0, c1 in wins:
        ch = d.sample_chainages(prof, c0, c1, max_step=2.0)
        xy = d.xy_array(prof, ch)
        out.append((xy[:, 0].min() - reach, xy[:, 1].min() - reach,
                    xy[:, 0].max() + reach, xy[:, 1].max() + reach))
    return out


def _plan_scale(result, ref, aw, ah, lt) -> int:
    """The plan's scale 1:N: the smallest standard N at which every panel is longer on
    paper than its label; then larger, up to 1:5000, while the whole plan would need
    more than one sheet and fits one at the larger N."""
    lengths = [pr.panel.length_m for pr in result.panels] or [10.0]
    need = max([lt.width(f"{pr.panel.panel} {pr.section_type}", d.SMALL_MM)
                for pr in result.panels] + [10.0]) + 2.0
    ok = [n for n in PLAN_SCALES if min(lengths) * 1000.0 / n >= need] or [PLAN_SCALES[0]]
    w = ref[:, 0].max() - ref[:, 0].min() + 30.0
    h = ref[:, 1].max() - ref[:, 1].min() + 30.0
    for n in ok:
        if w * 1000.0 / n <= aw * 0.9 and h * 1000.0 / n <= ah * 0.9:
            return n
    return ok[-1]


def _paper_labels(lay, vp, area, prof, result, c0, c1, ticks, m, lt) -> None:
    """Panel names and types (left of the wall, beyond the heel) and chainage figures
    (right, beyond the ticks) of the panels and ticks in [c0, c1], in paper space,
    each only where it lies wholly inside the viewport."""
    from wallrun.outputs.dxf import sheets

    x0, y0, x1, y1 = area

    def inside(p, half):
        return x0 + half <= p[0] <= x1 - half and y0 + half <= p[1] <= y1 - half

    heel = max([pr.section.base_width_m - pr.section.toe_m for pr in result.panels] + [0.0])
    toe = max([pr.section.toe_m for pr in result.panels] + [0.0])
    prs = [pr for pr in result.panels
           if pr.panel.ch_start_m >= c0 - 1e-9 and pr.panel.ch_end_m <= c1 + 1e-9]
    if prs:
        mids = np.array([0.5 * (pr.panel.ch_start_m + pr.panel.ch_end_m) for pr in prs])
        xy, nv = frame_at(prof, mids)
        for pr, q, n_ in zip(prs, xy, nv):
            text = f"{pr.panel.panel} {pr.section_type}"
            pos = sheets.to_paper(vp, q + n_ * (heel + 2.0 * m))
            w = lt.width(text, d.SMALL_MM)
            if inside(pos, w / 2 + 3.0):
                ang = readable(math.degrees(math.atan2(-n_[0], n_[1])))
                # the text stands off the wall: its lower edge towards it
                flip = abs(readable(ang) - math.degrees(math.atan2(-n_[0], n_[1]))) > 1e-6
                d.add_text(lay, text, pos, d.SMALL_MM, d.L_PANELS,
                           A.TOP_CENTER if flip else A.BOTTOM_CENTER, rotation=ang)
    tk = [t for t in ticks if c0 - 1e-9 <= t <= c1 + 1e-9]
    if tk:
        xy, nv = frame_at(prof, tk)
        for t, q, n_ in zip(tk, xy, nv):
            pos = sheets.to_paper(vp, q - n_ * (toe + 4.0 * m))
            ang = math.degrees(math.atan2(-n_[1], -n_[0]))  # outward, away from the wall
            r = readable(ang)
            align = A.MIDDLE_LEFT if abs(r - ang) < 1e-6 else A.MIDDLE_RIGHT
            text = d.chainage_label(float(t))
            if inside(pos, lt.width(text, d.SMALL_MM) + 3.0):
                d.add_text(lay, text, pos, d.SMALL_MM, d.L_CHAINAGE, align, rotation=r)

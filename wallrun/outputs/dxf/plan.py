"""The wall in plan on real coordinates: ``plan.dxf``.

Only when the profiles carry plan coordinates (``profiles.plan_line`` is not None);
positions come from ``profiles.xy_at(ch)`` (x east, y north, m, the survey grid).
Content: the profile reference line (chain-dotted) over the whole profile, the wall
line of each run (heavy), chainage ticks every ``site.drawings.chainage_tick_m`` with
their figures, one LINE per joint across the wall line at ``Joint.ch_m``, panel names
(and section types) beside each panel, run names, a north point, the title block and
the notes with the cautions.
"""

from __future__ import annotations

import math

import numpy as np
from ezdxf.enums import TextEntityAlignment as A

from wallrun.outputs.dxf import conventions as d
from wallrun.outputs.dxf import titles


def _frame(profiles, ch):
    """Positions (n, 2) and unit normals (n, 2) to the left of the direction of
    increasing chainage at ``ch``."""
    ch = np.atleast_1d(np.asarray(ch, dtype=float))
    lo, hi = float(profiles.ch_start), float(profiles.ch_end)
    eps = max(1e-3, 1e-6 * (hi - lo))
    a = np.clip(ch - eps, lo, hi)
    b = np.clip(ch + eps, lo, hi)
    pa, pb = d.xy_array(profiles, a), d.xy_array(profiles, b)
    t = pb - pa
    n = np.hypot(t[:, 0], t[:, 1])
    n = np.where(n > 0, n, 1.0)
    t = t / n[:, None]
    normal = np.column_stack([-t[:, 1], t[:, 0]])
    return d.xy_array(profiles, ch), normal


def _readable(angle_deg: float) -> float:
    """Text rotation along a direction, turned so that it never reads upside down."""
    a = (angle_deg + 180.0) % 360.0 - 180.0
    if a > 90.0:
        a -= 180.0
    elif a < -90.0:
        a += 180.0
    return a


def write_plan(result, path) -> bool:
    """Write the plan of ``result`` to ``path``; False (and no file) when the profiles
    carry no plan coordinates.

    Raises RuntimeError if the DXF audit reports errors (nothing is written then).
    """
    prof = result.profiles
    if getattr(prof, "plan_line", None) is None:
        return False
    site = result.site
    tick = float(getattr(site.drawings, "chainage_tick_m", 20.0) or 20.0)
    panels = [pr.panel for pr in result.panels]
    scale = d.along_wall_scale([p.length_m for p in panels])
    P = lambda mm: d.paper(mm, scale)  # noqa: E731
    txt, small = P(d.TEXT_MM), P(d.SMALL_MM)

    doc = d.new_document(scale, "plan")
    msp = doc.modelspace()
    lo, hi = float(prof.ch_start), float(prof.ch_end)
    ends = [p.ch_start_m for p in panels] + [p.ch_end_m for p in panels]

    ref = d.xy_array(prof, d.sample_chainages(prof, lo, hi, extra=ends))
    d.add_polyline(msp, ref, d.L_REFERENCE)

    by_run: dict[int, list] = {}
    for pr in result.panels:
        by_run.setdefault(pr.panel.run, []).append(pr)
    for run_no, prs in sorted(by_run.items()):
        prs.sort(key=lambda pr: pr.panel.ch_start_m)
        a, b = prs[0].panel.ch_start_m, prs[-1].panel.ch_end_m
        pe = [q.panel.ch_start_m for q in prs] + [q.panel.ch_end_m for q in prs]
        line = d.xy_array(prof, d.sample_chainages(prof, a, b, extra=pe, max_step=1.0))
        d.add_polyline(msp, line, d.L_WALL_PLAN)
        (xy,), (nv,) = _frame(prof, [a])
        ang = math.degrees(math.atan2(-nv[0], nv[1]))  # direction of the chainage
        pos = xy + nv * P(12)
        d.add_text(msp, f"RUN {run_no} ({prs[0].panel.side}) {d.chainage_label(a)} to "
                        f"{d.chainage_label(b)}", pos, txt, d.L_RUNS, A.MIDDLE_LEFT,
                   rotation=_readable(ang))

    # panel names beside the wall, on the left of the direction of chainage
    if panels:
        mids = np.array([0.5 * (p.ch_start_m + p.ch_end_m) for p in panels])
        xy, nv = _frame(prof, mids)
        for pr, q, n_ in zip(result.panels, xy, nv):
            ang = _readable(math.degrees(math.atan2(-n_[0], n_[1])))
            d.add_text(msp, pr.panel.panel, q + n_ * P(3), small, d.L_PANELS,
                       A.BOTTOM_CENTER, rotation=ang)
            d.add_text(msp, pr.section_type, q + n_ * P(6.5), small, d.L_PANELS,
                       A.BOTTOM_CENTER, rotation=ang)

    # joints across the wall line
    if result.joints:
        jc = np.array([j.ch_m for j in result.joints])
        xy, nv = _frame(prof, jc)
        for q, n_ in zip(xy, nv):
            msp.add_line(tuple(q - n_ * P(2.5)), tuple(q + n_ * P(2.5)),
                         dxfattribs={"layer": d.L_JOINTS})

    # chainage ticks on the right of the direction of chainage
    ticks = d.tick_values(lo, hi, tick)
    if ticks.size:
        xy, nv = _frame(prof, ticks)
        for t, q, n_ in zip(ticks, xy, nv):
            msp.add_line(tuple(q), tuple(q - n_ * P(3)), dxfattribs={"layer": d.L_CHAINAGE})
            ang = math.degrees(math.atan2(-n_[1], -n_[0]))  # outward, away from the wall
            r = _readable(ang)
            # reads outwards from the tick; turned half round, it is anchored at its end
            align = A.MIDDLE_LEFT if abs(r - ang) < 1e-6 else A.MIDDLE_RIGHT
            d.add_text(msp, d.chainage_label(float(t)), q - n_ * P(4), small, d.L_CHAINAGE,
                       align, rotation=r)

    # north point and sheet furniture, below and right of the extents
    xmin, ymin = ref.min(axis=0) - P(30)
    xmax, ymax = ref.max(axis=0) + P(30)
    msp.add_blockref(d.B_NORTH, (xmin + P(10), ymax - P(10)), dxfattribs={
        "layer": d.L_NORTH})
    right = max(xmax, xmin + P(170 + 6 + titles.WIDTH_MM))
    titles.furniture(msp, (right, ymin - P(titles.HEIGHT_MM)), scale / 1000.0, site,
                     "Wall line in plan", "Coordinates: the survey grid of the profiles",
                     f"1:{scale}", "1 of 1",
                     notes=("Panel names and section types lie on the left of the "
                            "direction of increasing chainage, chainage figures on the "
                            "right; joints are drawn across the wall line.",))
    d.save(doc, path)
    return True

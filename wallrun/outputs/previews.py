"""Drawings readable without CAD: ``sheets.pdf``, ``sections.pdf``, ``elevation.png``.

``sheets.pdf`` and ``sections.pdf`` are the paper-space sheets of the drawings as PDF
pages (:mod:`wallrun.outputs.sheets_pdf`).

``elevation.png`` is a quick look drawn with matplotlib straight from the result
objects: existing ground, finished level, the wall's top and underside per run, and
the joints, in up to :data:`MAX_STRIPS` stacked strips of consecutive chainage, the
levels true to scale within a strip (each strip has its own level axis).
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.collections import LineCollection
from matplotlib.figure import Figure

MAX_STRIPS = 8
ELEVATION_PX = (2400, 1600)
DPI = 100


# --- elevation.png -----------------------------------------------------------------------

def strip_count(length_m: float, height_m: float, max_strips: int = MAX_STRIPS) -> int:
    """Strips for a wall ``length_m`` long whose levels span ``height_m``: enough that a
    strip is at most 40 times as long as the level span it shows, 1..max_strips."""
    if length_m <= 0:
        return 1
    return int(min(max_strips, max(1, math.ceil(length_m / max(40.0 * height_m, 1.0)))))


def render_elevation_png(result, png_path) -> int:
    """A quick look at the developed elevation of ``result`` as a PNG
    (:data:`ELEVATION_PX`); returns the number of strips."""
    from wallrun.outputs.dxf import conventions as c

    prof = result.profiles
    panels = [pr.panel for pr in result.panels]
    a, b = float(prof.ch_start), float(prof.ch_end)
    chs = c.sample_chainages(prof, a, b, extra=[p.ch_start_m for p in panels]
                             + [p.ch_end_m for p in panels], max_step=5.0)
    G, F = np.asarray(prof.ground(chs), float), np.asarray(prof.finished(chs), float)
    k = strip_count(b - a, float(max(G.max(), F.max()) - min(G.min(), F.min())) + 1.0)
    W, H = ELEVATION_PX
    fig = Figure(figsize=(W / DPI, H / DPI), dpi=DPI, facecolor="white")
    FigureCanvasAgg(fig)
    axes = fig.subplots(k, 1, squeeze=False)[:, 0]
    edges = np.linspace(a, b, k + 1)
    tops, unders = [], []
    for prs in c.runs_of(result):
        for piece in c.pieces(prs):
            ch = np.array([(pr.panel.ch_start_m, pr.panel.ch_end_m) for pr in piece]).ravel()
            tops.append(np.column_stack([ch, np.array(
                [(pr.panel.wall_top_start_m, pr.panel.wall_top_end_m) for pr in piece]).ravel()]))
            unders.append(np.column_stack([ch, np.repeat([pr.panel.founding_m
                                                          for pr in piece], 2)]))
    jx = np.array([j.ch_m for j in result.joints])
    by = {p.panel: p for p in panels}
    jz = np.array([[min(q.founding_m for q in (by.get(j.left), by.get(j.right)) if q),
                    max(v for v in ((by[j.left].wall_top_end_m if j.left in by else None),
                                    (by[j.right].wall_top_start_m if j.right in by else None))
                        if v is not None)]
                   for j in result.joints if j.left in by or j.right in by]).reshape(-1, 2)
    for i, ax in enumerate(axes):
        lo, hi = edges[i], edges[i + 1]
        m = (chs >= lo) & (chs <= hi)
        ax.plot(chs[m], G[m], color="#7a5c2e", lw=0.8, ls="--", label="existing ground")
        ax.plot(chs[m], F[m], color="#2e7a3c", lw=0.8, label="finished level")
        # only the lines that reach into the strip (the rest would be clipped away)
        ax.add_collection(LineCollection(_within(tops, lo, hi), colors="#1f3fbf",
                                         linewidths=1.2, label="top of wall"), autolim=False)
        ax.add_collection(LineCollection(_within(unders, lo, hi), colors="#bf1f1f",
                                         linewidths=1.2, label="underside of base"),
                          autolim=False)
        if len(jx):
            seg = np.stack([np.column_stack([jx, jz[:, 0]]), np.column_stack([jx, jz[:, 1]])],
                           axis=1)
            ax.add_collection(LineCollection(seg[(jx >= lo) & (jx <= hi)], colors="#9a3fb0",
                                             linewidths=0.5), autolim=False)
        inside = [p for p in panels if p.ch_end_m >= lo and p.ch_start_m <= hi]
        zs = list(G[m]) + list(F[m]) + [p.founding_m for p in inside] + \
            [max(p.wall_top_start_m, p.wall_top_end_m) for p in inside]
        z0, z1 = (min(zs), max(zs)) if zs else (0.0, 1.0)
        pad = 0.08 * max(z1 - z0, 1.0)
        ax.set_xlim(lo, hi)
        ax.set_ylim(z0 - pad, z1 + pad)
        ax.set_ylabel("level (m)", fontsize=8)
        ax.tick_params(labelsize=7)
        ax.grid(True, lw=0.3, color="#dddddd")
        ax.xaxis.set_major_formatter(_chainage_formatter())
    axes[0].set_title(f"{result.site.project.name}: developed elevation (quick look; "
                      "elevation.dxf and sheets hold the drawing)", fontsize=9)
    axes[0].legend(fontsize=7, loc="upper right", ncol=4)
    axes[-1].set_xlabel("chainage (km+m)", fontsize=8)
    fig.text(0.01, 0.005, "PRELIMINARY - NOT FOR CONSTRUCTION. wallrun is a preliminary "
             "design aid; to be checked and signed by a qualified engineer.", fontsize=7)
    fig.subplots_adjust(left=0.05, right=0.99, top=0.96, bottom=0.05, hspace=0.35)
    # the quickest zlib level: a few per cent larger, written in about a fifth less time
    fig.savefig(str(png_path), format="png", facecolor="white",
                pil_kwargs={"compress_level": 1})
    return k


def _within(lines: list, lo: float, hi: float) -> list:
    """The polylines of ``lines`` ((m, 2) arrays, x increasing) that reach into
    lo <= x <= hi."""
    return [v for v in lines if v[0, 0] <= hi and v[-1, 0] >= lo]


def _chainage_formatter():
    from matplotlib.ticker import FuncFormatter

    from wallrun.outputs.dxf.conventions import chainage_label

    return FuncFormatter(lambda v, _pos: chainage_label(v))


def write_previews(result, docs, out_dir, quick_look: bool = True) -> list[str]:
    """Render into ``out_dir``: ``sheets.pdf``, every sheet of the drawings ``docs``
    (the documents just saved: elevation, sections, plan); ``sections.pdf``, the
    sheets of the sections drawing (``docs[1]``) again on their own; and, with
    ``quick_look``, ``elevation.png`` from ``result``. Returns the names written."""
    from wallrun.outputs.sheets_pdf import render_sheets

    out = Path(out_dir)
    render_sheets(docs, out / "sheets.pdf", also={1: out / "sections.pdf"})
    if not quick_look:
        return ["sheets.pdf", "sections.pdf"]
    render_elevation_png(result, out / "elevation.png")
    return ["sheets.pdf", "sections.pdf", "elevation.png"]


__all__ = ["render_elevation_png", "strip_count", "write_previews"]

"""The calculation report: one self-contained ``report.html``.

Layout (plain engineering order, each part starting a new printed page):

1. Front matter: project, reference, date, wallrun version, a summary of the run and
   the cautions (preliminary design aid, what is not checked, invented demo rates).
2. Design basis: codes, approach, the partial factors actually used, materials and
   covers, ground parameters and zones, water, loads, design and run settings.
3. The run: a long section of ground, finished level, wall top, founding level and
   retained height along chainage with panels and section types; the panel schedule
   (the ``panels.csv`` columns); the joints.
4. One part per section type: a dimensioned cross-section, the characteristic
   actions at its governing panel, every check of that panel per combination, the
   reinforcement with its checks, its bar marks and the panels that use it.
5. Quantities and cost.
6. Appendix: every panel's checks, one row per check entry, with the utilization
   rendered exactly as ``design.json`` gives it (``f"{u:.3f}"``).

Everything is inline: CSS in a ``<style>`` element, the long section as base64 PNG
drawn with matplotlib (Agg backend; its legends fixed where matplotlib's "best" rule
puts them, found once), the cross-sections as SVG markup built here. All text passes
through :func:`html.escape`. Status is always written in words (``ok``, ``FLAGGED``,
``pass``, ``FAILS``); colour only repeats it.

Speed (a 10 km job has some 110,000 check rows): the fixed fragments of a row (escaped
names, cases, units, clauses, table headers) are built once per distinct value, most
rows are one ``%`` format of their values (cell by cell only when a value is missing
or not a number), and the garbage collector is held while the report is built.
"""

from __future__ import annotations

import base64
import datetime as _dt
import html
import io
import math
import operator
import os
import re
from dataclasses import fields
from pathlib import Path

import numpy as np

import wallrun
from wallrun.factors import OVERRIDE_KEYS, RECOMMENDED, resolve
from wallrun.memory import collector_paused

__all__ = ["write_report", "render_report", "governing_panel", "panel_row",
           "PANEL_COLUMNS", "NOT_CHECKED"]

from wallrun.cautions import NOT_CHECKED  # noqa: E402  (one list for every output)

#: ``panels.csv`` columns, in order (``shared/interfaces.md``).
PANEL_COLUMNS = (
    "panel", "run", "side", "ch_start_m", "ch_end_m", "length_m", "retained_top_m",
    "front_min_m", "founding_m", "wall_top_start_m", "wall_top_end_m",
    "retained_height_m", "total_height_m", "section", "stem_top_m", "stem_base_m",
    "base_width_m", "toe_m", "heel_m", "base_thickness_m", "key_depth_m", "key_width_m",
    "util_overturning", "util_sliding", "util_bearing", "util_structural", "governing",
    "status", "reason", "concrete_m3", "steel_kg", "cost")

STRUCTURAL_CHECKS = ("stem_bending", "stem_shear", "heel_bending", "heel_shear",
                     "toe_bending", "toe_shear", "crack_spacing", "min_steel")
GEOTECHNICAL_CHECKS = ("overturning", "sliding", "bearing", "eccentricity",
                       "eccentricity_sls", "bearing_sls")
CHECK_ORDER = GEOTECHNICAL_CHECKS + STRUCTURAL_CHECKS
_STRUCTURAL = frozenset(STRUCTURAL_CHECKS)
COMBINATION_ORDER = ("EQU", "DA1-1", "DA1-2", "DA2", "DA3", "SLS")

CHECK_WORDS = {
    "overturning": "overturning about the toe edge",
    "sliding": "sliding along the underside of the base",
    "bearing": "bearing resistance of the foundation",
    "eccentricity": "eccentricity of the resultant, ULS (|e| <= B/3)",
    "eccentricity_sls": "resultant within the middle third, characteristic (|e| <= B/6)",
    "bearing_sls": "maximum edge pressure against the allowable pressure",
    "stem_bending": "stem bending at the top of the base",
    "stem_shear": "stem shear at the top of the base",
    "heel_bending": "heel bending at the back face of the stem",
    "heel_shear": "heel shear at the back face of the stem",
    "toe_bending": "toe bending at the front face of the stem",
    "toe_shear": "toe shear at the front face of the stem",
    "crack_spacing": "bar spacing for crack control",
    "min_steel": "minimum reinforcement",
}

COMBINATION_WORDS = {
    "EQU": "EQU, loss of static equilibrium (EN 1997-1 Tables A.2, A.4)",
    "DA1-1": "Design Approach 1, combination 1: A1 + M1 + R1",
    "DA1-2": "Design Approach 1, combination 2: A2 + M2 + R1",
    "DA2": "Design Approach 2: A1 + M1 + R2",
    "DA3": "Design Approach 3: A1 on structural actions, A2 on ground actions, M2 + R3",
    "SLS": "characteristic / quasi-permanent actions, every factor 1.0",
}

FACTOR_WORDS = {
    "gG_unfav": "gamma_G, permanent, unfavourable",
    "gG_fav": "gamma_G, permanent, favourable",
    "gQ": "gamma_Q, variable, unfavourable (favourable: 0)",
    "g_phi": "gamma_phi' on tan phi'",
    "g_c": "gamma_c' on c'",
    "g_cu": "gamma_cu on cu",
    "gR_bearing": "gamma_R;v bearing",
    "gR_sliding": "gamma_R;h sliding",
    "gR_passive": "gamma_R;e passive resistance",
    "gG_unfav_ground": "gamma_G, unfavourable ground actions (DA3)",
    "gR_slope": "gamma_R;e slopes and overall stability",
}

MEMBER_WORDS = {
    "stem": "stem, vertical main bars, retained face",
    "stem_front": "stem, vertical bars, front face",
    "stem_horizontal": "stem, horizontal bars, each face",
    "heel": "base, top mat (heel main bars)",
    "toe": "base, bottom mat (toe main bars)",
    "base_distribution": "base, distribution bars along the wall, each mat",
}


# --- small formatting helpers ---------------------------------------------------------

def _esc_text(s: str) -> str:
    """``html.escape(s)``; a text of letters and digits only (a panel name, a bar mark)
    has nothing to escape and is returned as it is."""
    return s if s.isalnum() else html.escape(s, quote=True)


def _e(x) -> str:
    """Escaped text of anything (None as an empty string)."""
    return "" if x is None else _esc_text(str(x))


def _num(x, nd: int = 2) -> str:
    """A number to ``nd`` decimals; blank for None; ``inf``/``nan`` spelled out."""
    if type(x) is float and x - x == 0.0:  # finite float: the common case
        return f"{x:.{nd}f}"
    if x is None:
        return ""
    try:
        v = float(x)
    except (TypeError, ValueError):
        return _e(x)
    if math.isnan(v):
        return "nan"
    if math.isinf(v):
        return "inf" if v > 0 else "-inf"
    return f"{v:.{nd}f}"


def _util(u) -> str:
    """Utilization text, identical to ``design.json`` rounding to 3 decimals."""
    return f"{float(u):.3f}"


def _decimals(unit: str) -> int:
    return {"m": 3, "mm2/m": 0, "mm": 0}.get(unit, 2)


def _status_word(status: str) -> str:
    return "ok" if status == "ok" else "FLAGGED"


def _status_cell(status: str) -> str:
    cls = "ok" if status == "ok" else "bad"
    return f'<td class="{cls}">{_e(_status_word(status))}</td>'


def _pass_cell(u: float) -> str:
    ok = np.isfinite(u) and u <= 1.0
    return f'<td class="{"ok" if ok else "bad"}">{"pass" if ok else "FAILS"}</td>'


_TABLE_OPEN: dict = {}  # (header labels, class, breaks at "_") -> the table's opening


def _table_open(head, cls: str = "", wbr: bool = True) -> str:
    """The opening of a table up to its first row: ``<thead>`` with the escaped labels
    (a line break allowed after each "_" when ``wbr``), built once per header."""
    key = (tuple(head), cls, wbr)
    r = _TABLE_OPEN.get(key)
    if r is None:
        h = "".join(f"<th>{_e(c).replace('_', '_<wbr>') if wbr else _e(c)}</th>"
                    for c in head)
        c = f' class="{cls}"' if cls else ""
        r = _TABLE_OPEN[key] = f"<table{c}><thead><tr>{h}</tr></thead>\n<tbody>\n"
    return r


def _table(head, rows, cls: str = "") -> str:
    """A table from header labels and rows of already-rendered ``<td>`` strings."""
    body = ("<tr>" + "</tr>\n<tr>".join(rows) + "</tr>") if rows else ""
    return f"{_table_open(head, cls)}{body}\n</tbody></table>\n"


def _td(x, cls: str = "") -> str:
    c = f' class="{cls}"' if cls else ""
    return f"<td{c}>{x}</td>"


def _kv_table(pairs) -> str:
    """Two-column table of (label, value text) pairs; the value is escaped here."""
    rows = "".join(f"<tr><th>{_ec(k)}</th><td>{_e(v)}</td></tr>" for k, v in pairs)
    return f'<table class="kv"><tbody>{rows}</tbody></table>\n'


def _fck(strength_class: str) -> float | None:
    """fck, MPa, from a class name ``Cfck/fck,cube`` (EN 1992-1-1 Table 3.1)."""
    m = re.match(r"\s*C\s*(\d+(?:\.\d+)?)\s*/", str(strength_class))
    return float(m.group(1)) if m else None


def _order(seq, key, order):
    rank = {n: i for i, n in enumerate(order)}
    return sorted(seq, key=lambda x: rank.get(key(x), len(rank)))


# --- panel figures, shared with panels.csv --------------------------------------------

def governing_panel(result, section_type: str):
    """The panel of ``section_type`` with the highest utilization over all its checks
    (the first such panel in chainage order); None when no panel uses the type."""
    members = [p for p in result.panels if p.section_type == section_type]
    if not members:
        return None
    return max(members, key=lambda p: max((c.utilization for c in p.checks), default=0.0))


def governing_map(result) -> dict:
    """{section type: its governing panel} for every type in use, in one pass over the
    panels; the same choice as :func:`governing_panel` (first panel on a tie)."""
    best: dict = {}
    for p in result.panels:
        u = max([c.utilization for c in p.checks], default=0.0)
        cur = best.get(p.section_type)
        if cur is None or u > cur[0]:
            best[p.section_type] = (u, p)
    return {k: v[1] for k, v in best.items()}


def panel_row(p) -> dict:
    """One ``panels.csv`` row of a :class:`~wallrun.results.PanelResult`, as values.

    The row of ``wallrun.outputs.tables.panel_row`` when that module is importable
    (so the report and panels.csv cannot differ), else the same figures computed
    here: util_bearing the bearing resistance check, util_structural the largest of
    the EN 1992-1-1 member checks (interfaces.md).
    """
    try:
        from wallrun.outputs.tables import panel_row as table_row
    except ImportError:
        table_row = None
    if table_row is not None:
        return table_row(p)
    pn, s = p.panel, p.section
    return {
        "panel": pn.panel, "run": pn.run, "side": pn.side,
        "ch_start_m": pn.ch_start_m, "ch_end_m": pn.ch_end_m, "length_m": pn.length_m,
        "retained_top_m": pn.retained_top_m, "front_min_m": pn.front_min_m,
        "founding_m": pn.founding_m, "wall_top_start_m": pn.wall_top_start_m,
        "wall_top_end_m": pn.wall_top_end_m, "retained_height_m": pn.retained_height_m,
        "total_height_m": pn.total_height_m, "section": p.section_type,
        "stem_top_m": s.stem_top_m, "stem_base_m": s.stem_base_m,
        "base_width_m": s.base_width_m, "toe_m": s.toe_m, "heel_m": s.heel_m,
        "base_thickness_m": s.base_thickness_m, "key_depth_m": s.key_depth_m,
        "key_width_m": s.key_width_m,
        "util_overturning": p.util("overturning"), "util_sliding": p.util("sliding"),
        "util_bearing": p.util("bearing"),
        "util_structural": p.util(*STRUCTURAL_CHECKS),
        "governing": p.governing, "status": p.status, "reason": p.reason,
        "concrete_m3": p.concrete_m3, "steel_kg": p.steel_kg, "cost": p.cost,
    }


# --- figures --------------------------------------------------------------------------

def _png(fig) -> bytes:
    buf = io.BytesIO()
    fig.savefig(buf, format="png", dpi=fig.dpi)
    return buf.getvalue()


def _img(data: bytes | str, alt: str) -> str:
    """An embedded figure: PNG bytes as a base64 data URI, or SVG markup inline (its
    XML prologue removed)."""
    if isinstance(data, str):
        svg = re.sub(r"^\s*<\?xml[^>]*>\s*", "", data)
        svg = re.sub(r"<!DOCTYPE[^>]*>\s*", "", svg)
        return f'<div class="fig" role="img" aria-label="{_e(alt)}">{svg}</div>'
    b64 = base64.b64encode(data).decode("ascii")
    return f'<div class="fig"><img alt="{_e(alt)}" src="data:image/png;base64,{b64}"></div>'


def _pyplot():
    import matplotlib
    matplotlib.use("Agg", force=False)
    import matplotlib.pyplot as plt
    return plt


def _type_colours(names):
    plt = _pyplot()
    cmap = plt.get_cmap("tab20")
    palette = [cmap(i) for i in range(20)]  # the 20 colours, looked up once each
    return {n: palette[i % 20] for i, n in enumerate(names)}


#: Where a legend sits until :func:`_place_best` moves it (inside its axes, like every
#: "best" place, so the layout pass sees the same extents).
_FIRST_TRY = "upper right"


def _place_best(fig, legends) -> None:
    """Fix each legend at the place matplotlib's ``loc="best"`` search picks on the
    final layout, searching once. The search scans every vertex of every line in the
    axes (tens of thousands on a long job); left at "best", matplotlib repeats it at
    the layout pass and again at each draw of the save."""
    renderer = fig.canvas.get_renderer()
    for leg in legends:
        try:
            code = _best_code(leg, renderer)
        except (AttributeError, TypeError, ValueError):  # another matplotlib: its own search
            code = _searched_code(leg, renderer)
        leg.set_loc(code)


def _searched_code(leg, renderer):
    """The location code whose box matplotlib's own "best" search gives ``leg`` (the
    lowest such code), or "best" itself when no fixed code gives that box."""
    leg.set_loc("best")
    best = leg.get_window_extent(renderer).bounds  # the search
    for code in range(1, 11):
        leg.set_loc(code)
        if leg.get_window_extent(renderer).bounds == best:
            return code
    return "best"


def _best_code(leg, renderer) -> int:
    """The location code matplotlib's ``loc="best"`` picks for ``leg``, by its rule
    (``Legend._find_best_position``): of the codes 1-10 in turn, the first whose box
    holds no data vertex, offset, text box or crossing line, else the one with the
    fewest of them (lowest code on a tie). The same counts, cheaper: the vertices of
    all lines are counted in one array, and the crossing test is asked only of the
    lines whose vertex extent comes within a pixel of the box (no other can cross it;
    on a 10 km job that is a handful of the 1,250 band rectangles)."""
    from matplotlib.transforms import Bbox

    box0 = leg._legend_box.get_bbox(renderer)
    w, h = box0.width, box0.height
    bboxes, lines, offsets = leg._auto_legend_data(renderer)
    lines = [ln for ln in lines if len(ln.vertices)]  # an empty path neither counts nor crosses
    if lines:
        sizes = np.array([len(ln.vertices) for ln in lines])
        verts = np.concatenate([ln.vertices for ln in lines])
        starts = np.concatenate(([0], np.cumsum(sizes)[:-1]))
        lo = np.fmin.reduceat(verts, starts, axis=0)  # NaN vertices aside;
        hi = np.fmax.reduceat(verts, starts, axis=0)  # all-NaN lines stay NaN (kept)
    else:
        verts = np.empty((0, 2))
    anchor = leg.get_bbox_to_anchor()
    candidates = []
    for idx in range(1, len(leg.codes)):
        l, b = leg._get_anchored_bbox(idx, Bbox.from_bounds(0, 0, w, h), anchor, renderer)
        box = Bbox.from_bounds(l, b, w, h)
        badness = (box.count_contains(verts) + box.count_contains(offsets)
                   + box.count_overlaps(bboxes))
        if lines:
            far = ((hi[:, 0] < box.x0 - 1.0) | (lo[:, 0] > box.x1 + 1.0)
                   | (hi[:, 1] < box.y0 - 1.0) | (lo[:, 1] > box.y1 + 1.0))
            badness += sum(lines[i].intersects_bbox(box, filled=False)
                           for i in np.flatnonzero(~far))
        candidates.append((badness, idx))
        if badness == 0:
            break
    return min(candidates)[1]


def _vlines(ax, xs, y0: float, y1: float, colour, lw: float):
    """What ``ax.vlines(xs, y0, y1, colors=colour, lw=lw)`` adds to a linear axes: one
    line collection of vertical segments, the data limits grown to its corners and
    the view rescaled at the next draw. Built from a plain array: ``vlines`` builds a
    masked one, and each of its thousand segments then cost a masked-array slice."""
    from matplotlib.collections import LineCollection
    x = np.ravel(np.asarray(xs, dtype=float))
    if not len(x) or not hasattr(ax, "_request_autoscale_view"):
        ax.vlines(xs, y0, y1, colors=colour, lw=lw)
        return
    verts = np.empty((len(x), 2, 2))
    verts[:, 0, 0] = x
    verts[:, 0, 1] = y0
    verts[:, 1, 0] = x
    verts[:, 1, 1] = y1
    lines = LineCollection(verts, colors=colour, linestyles="solid", label="")
    ax.add_collection(lines, autolim=False)
    lines.set_linewidth(lw)
    ax.update_datalim(((np.nanmin(x), min(y0, y1)), (np.nanmax(x), max(y0, y1))))
    ax._request_autoscale_view()


def run_figure(result) -> bytes | None:
    """Long section along chainage (PNG): ground, finished level, wall top and
    founding level per panel, panel boundaries, a band of section types, and below it
    the retained height h = |F - G| with the threshold of a needed wall."""
    plt = _pyplot()
    from matplotlib.collections import LineCollection

    prof = result.profiles
    panels = result.panels
    try:
        c0, c1 = float(prof.ch_start), float(prof.ch_end)
        bp = np.asarray(prof.breakpoints, dtype=float)
        ch = np.union1d(bp[(bp >= c0) & (bp <= c1)], np.linspace(c0, c1, 2001))
        G = np.asarray(prof.ground(ch), dtype=float)
        F = np.asarray(prof.finished(ch), dtype=float)
    except Exception:  # profiles missing: draw the panels alone
        ch = G = F = None
    if ch is None and not panels:
        return None

    fig, (ax, axh) = plt.subplots(2, 1, figsize=(10.5, 5.6), dpi=110, sharex=True,
                                  gridspec_kw={"height_ratios": [3, 1.3]})
    legends = []  # each placed where matplotlib's "best" search puts it, after layout
    if ch is not None:
        ax.plot(ch, G, color="#7a5230", lw=1.0, label="existing ground")
        ax.plot(ch, F, color="black", lw=1.0, ls="--", label="finished level")
    if panels:
        tops = [((p.panel.ch_start_m, p.panel.wall_top_start_m),
                 (p.panel.ch_end_m, p.panel.wall_top_end_m)) for p in panels]
        founds = [((p.panel.ch_start_m, p.panel.founding_m),
                   (p.panel.ch_end_m, p.panel.founding_m)) for p in panels]
        ax.add_collection(LineCollection(tops, colors="#1f4e9a", lw=1.6, label="top of wall"))
        ax.add_collection(LineCollection(founds, colors="#555555", lw=1.0,
                                         label="underside of base"))
        ends = sorted({p.panel.ch_start_m for p in panels} | {p.panel.ch_end_m for p in panels})
        lo = min(p.panel.founding_m for p in panels)
        hi = max(max(p.panel.wall_top_start_m, p.panel.wall_top_end_m) for p in panels)
        _vlines(ax, ends, lo, hi, "#999999", 0.4)
        names = [st.section_type for st in result.section_types] or sorted(
            {p.section_type for p in panels})
        col = _type_colours(names)
        band_lo = lo - 0.08 * max(hi - lo, 1.0)
        band_h = 0.05 * max(hi - lo, 1.0)
        # the band: one rectangle per panel in its type's colour, one collection
        from matplotlib.collections import PolyCollection
        rects = [((p.panel.ch_start_m, band_lo), (p.panel.ch_end_m, band_lo),
                  (p.panel.ch_end_m, band_lo + band_h), (p.panel.ch_start_m, band_lo + band_h))
                 for p in panels]
        ax.add_collection(PolyCollection(rects, facecolors=[col.get(p.section_type, "#888888")
                                                            for p in panels],
                                         edgecolors="none"), autolim=False)
        if len(panels) <= 60:
            for p in panels:
                ax.text(0.5 * (p.panel.ch_start_m + p.panel.ch_end_m), band_lo - 0.2 * band_h,
                        p.section_type, ha="center", va="top", fontsize=6)
        if len(names) <= 20:
            from matplotlib.patches import Patch
            handles, labels = ax.get_legend_handles_labels()
            handles += [Patch(color=col[n]) for n in names]
            labels += [f"type {n}" for n in names]
            legends.append(ax.legend(handles, labels, fontsize=6, ncol=4, loc=_FIRST_TRY,
                                     framealpha=0.8))
        else:
            legends.append(ax.legend(fontsize=6, loc=_FIRST_TRY, framealpha=0.8))
        ax.set_ylim(band_lo - 2.0 * band_h, None)
    else:
        legends.append(ax.legend(fontsize=6, loc=_FIRST_TRY))
    ax.autoscale_view()
    ax.set_ylabel("level (m)")
    ax.grid(True, lw=0.3, color="#dddddd")
    ax.set_title("Long section along the wall line (section types as a coloured band)",
                 fontsize=9)

    if ch is not None:
        h = np.abs(F - G)
        axh.fill_between(ch, 0, h, where=F >= G, color="#c9a77c", lw=0, label="fill side (F > G)")
        axh.fill_between(ch, 0, h, where=F < G, color="#9fb8d8", lw=0, label="cut side (F < G)")
        axh.plot(ch, h, color="black", lw=0.6)
        hmin = getattr(getattr(result.site, "wall", None), "min_retained_height_m", None)
        if hmin is not None:
            axh.axhline(hmin, color="#b00000", lw=0.7, ls=":",
                        label=f"wall needed from h = {hmin:g} m")
        legends.append(axh.legend(fontsize=6, loc=_FIRST_TRY, framealpha=0.8))
    if panels:
        _vlines(axh, ends, 0, axh.get_ylim()[1], "#999999", 0.4)
    axh.set_ylabel("retained h (m)")
    axh.set_xlabel("chainage (m)")
    axh.grid(True, lw=0.3, color="#dddddd")
    fig.tight_layout()
    _place_best(fig, legends)
    data = _png(fig)
    plt.close(fig)
    return data


_LINE_END: dict = {}    # (stroke, width, dash) -> the end of a <line> element
#: A dimension line and its two end ticks (the markup of three :meth:`_Svg.line`).
_DIM_LINES = ('<line x1="%.1f" y1="%.1f" x2="%.1f" y2="%.1f" stroke="#333" stroke-width="0.7"/>'
              + '<line x1="%.1f" y1="%.1f" x2="%.1f" y2="%.1f" stroke="#333" stroke-width="1.1"/>' * 2)
_TEXT_STYLE: dict = {}  # (size, anchor, fill, halo) -> the style attributes of a <text>


class _Svg:
    """A small hand-built SVG in world coordinates (m; x to the right, z up), scaled
    to ``width_px``: the world box (x0, z0, x1, z1) fills the picture."""

    def __init__(self, box, width_px: float = 640.0):
        self.x0, self.z0, self.x1, self.z1 = box
        self.k = width_px / max(self.x1 - self.x0, 1e-9)
        self.w = width_px
        self.h = (self.z1 - self.z0) * self.k
        self.parts: list[str] = []

    def X(self, x) -> float:
        return (x - self.x0) * self.k

    def Y(self, z) -> float:
        return (self.z1 - z) * self.k

    def poly(self, pts, fill="none", stroke="#000", sw=1.0, extra=""):
        x0, z1, k = self.x0, self.z1, self.k
        d = " ".join("%.1f,%.1f" % ((x - x0) * k, (z1 - z) * k) for x, z in pts)
        self.parts.append(f'<polygon points="{d}" fill="{fill}" stroke="{stroke}" '
                          f'stroke-width="{sw:g}"{extra}/>')

    def line(self, p, q, stroke="#000", sw=0.8, dash=""):
        key = (stroke, sw, dash)
        end = _LINE_END.get(key)
        if end is None:  # the same few styles in every figure: their text built once
            da = f' stroke-dasharray="{dash}"' if dash else ""
            end = _LINE_END[key] = f'" stroke="{stroke}" stroke-width="{sw:g}"{da}/>'
        x0, z1, k = self.x0, self.z1, self.k
        self.parts.append('<line x1="%.1f" y1="%.1f" x2="%.1f" y2="%.1f%s' % (
            (p[0] - x0) * k, (z1 - p[1]) * k, (q[0] - x0) * k, (z1 - q[1]) * k, end))

    def text(self, x, z, s, size=9.5, anchor="start", fill="#000", rot=0, dy=0.0,
             halo=False):
        X, Y = (x - self.x0) * self.k, (self.z1 - z) * self.k + dy
        key = (size, anchor, fill, halo)
        style = _TEXT_STYLE.get(key)
        if style is None:
            h = ' paint-order="stroke" stroke="#fff" stroke-width="3"' if halo else ""
            style = _TEXT_STYLE[key] = (f'" font-size="{size:g}" text-anchor="{anchor}" '
                                        f'dominant-baseline="middle" fill="{fill}"{h}')
        tr = f' transform="rotate({-rot:g} {X:.1f} {Y:.1f})"' if rot else ""
        self.parts.append('<text x="%.1f" y="%.1f%s%s>%s</text>' % (X, Y, style, tr, _e(s)))

    def dim(self, p, q, label, rot=0, side=(0.0, 0.0)):
        """A dimension line from p to q with oblique ticks at both ends and its label
        at the middle (on a white halo)."""
        x0, z1, k = self.x0, self.z1, self.k
        t = 4.0 / k  # 4 px ticks
        (px, pz), (qx, qz) = p, q
        # the three lines of self.line(p, q, "#333", 0.7) and the two ticks of
        # self.line((x - t, z - t), (x + t, z + t), "#333", 1.1), in one format
        self.parts.append(_DIM_LINES % (
            (px - x0) * k, (z1 - pz) * k, (qx - x0) * k, (z1 - qz) * k,
            (px - t - x0) * k, (z1 - (pz - t)) * k, (px + t - x0) * k, (z1 - (pz + t)) * k,
            (qx - t - x0) * k, (z1 - (qz - t)) * k, (qx + t - x0) * k, (z1 - (qz + t)) * k))
        mx, mz = 0.5 * (px + qx) + side[0], 0.5 * (pz + qz) + side[1]
        self.text(mx, mz, label, 9, "middle", "#000", rot, halo=True)

    def svg(self, title: str) -> str:
        return (f'<svg xmlns="http://www.w3.org/2000/svg" width="{self.w:.0f}" '
                f'height="{self.h:.0f}" viewBox="0 0 {self.w:.0f} {self.h:.0f}" '
                f'font-family="DejaVu Sans, Arial, sans-serif"><title>{_e(title)}</title>'
                + "".join(self.parts) + "</svg>")


def _distinct(xs, zs) -> list:
    """The vertices (x, z) of one outline with consecutive repeats (1e-12 m) and a
    repeated closing vertex dropped: the rule of :func:`wallrun.section.polygons`."""
    pts: list = []
    for p in zip(xs, zs):
        if not pts or abs(p[0] - pts[-1][0]) > 1e-12 or abs(p[1] - pts[-1][1]) > 1e-12:
            pts.append(p)
    if len(pts) > 1 and pts[0] == pts[-1]:
        pts.pop()
    return pts


def section_outlines(s, stem_height_m: float, checked_stem_height_m: float,
                     slope_deg: float = 0.0) -> dict:
    """The outlines of :func:`wallrun.section.polygons` (with a checked height), as
    lists of (x, z) vertices without the closing one: the exterior rings it would build,
    vertex for vertex, from the same sums in plain floats instead of shapely polygons
    over numpy columns (670 figures on a 10 km job). Keys "stem", "base", "key" (only
    with a key) and "soil"; tests/test_report.py holds them to that function."""
    toe, t, B = float(s.toe_m), float(s.base_thickness_m), float(s.base_width_m)
    tsb, tst = float(s.stem_base_m), float(s.stem_top_m)
    hc = float(checked_stem_height_m)
    hd = float(max(stem_height_m, hc))
    xb, ztop = toe + tst, t + hc
    out = {"stem": _distinct((toe, toe + tsb, xb, xb, toe), (t, t, ztop, t + hd, t + hd)),
           "base": _distinct((0.0, B, B, 0.0), (0.0, 0.0, t, t))}
    if s.key_depth_m > 0 and s.key_width_m > 0:
        d, w = float(s.key_depth_m), float(s.key_width_m)
        out["key"] = _distinct((toe, toe + w, toe + w, toe), (-d, -d, 0.0, 0.0))
    zs_b = ztop + (B - xb) * float(np.tan(np.radians(slope_deg)))
    out["soil"] = _distinct((toe + tsb, B, B, xb), (t, t, zs_b, ztop))
    if any(len(v) < 3 for v in out.values()):  # not a polygon: shapely's own verdict
        from wallrun.section import polygons
        return {k: list(v.exterior.coords)[:-1]
                for k, v in polygons(s, stem_height_m, checked_stem_height_m,
                                     slope_deg).items() if not v.is_empty}
    return out


def section_figure(result, st, gov) -> str:
    """Dimensioned cross-section of a section type at its governing panel, as inline
    SVG markup built by hand (no plotting library), in section coordinates (x from the
    toe edge, z from the underside of the base) from :func:`wallrun.section.polygons`:
    concrete and the soil block over the heel, backfill surface, front level, water,
    the retained level (top of the checked section), and dimension lines with their
    values in m (toe, stem base, heel, B, base thickness, D, h, H, stem top, key)."""

    s = st.section
    B, t, toe = s.base_width_m, s.base_thickness_m, s.toe_m
    beta = float(getattr(getattr(result.site, "backfill", None), "slope_deg", 0.0) or 0.0)
    if gov is not None:
        pn = gov.panel
        hc = max(pn.retained_top_m - pn.founding_m - t, 0.05)
        hd = max(max(pn.wall_top_start_m, pn.wall_top_end_m) - pn.founding_m - t, hc)
        D = pn.front_min_m - pn.founding_m
        beta = float(pn.backfill.slope_deg)
        wl = None if pn.water_level_m is None else pn.water_level_m - pn.founding_m
        zf = pn.founding_m
    else:
        hc = hd = max(3.0 * s.stem_base_m, 1.0)
        D, wl, zf = None, None, None
    polys = section_outlines(s, hd, hc, beta)

    span = max(B, hd + t)
    ext = 0.12 * span
    zk = -s.key_depth_m
    y1, y2 = zk - 0.10 * span, zk - 0.20 * span
    xl1, xl2, xl3 = -0.10 * span, -0.22 * span, -0.34 * span
    ztop_d = t + hd
    yt = ztop_d + 0.07 * span
    xb, zt = toe + s.stem_top_m, t + hc
    tb = math.tan(math.radians(beta))
    g = _Svg((xl3 - 0.08 * span, y2 - 0.08 * span, B + ext + 0.42 * span,
              max(yt + 0.12 * span, zt + (B + ext - xb) * tb + 0.05 * span)))
    for key, fc in (("soil", "#eadcc3"), ("base", "#d0d0d0"), ("stem", "#d0d0d0"),
                    ("key", "#d0d0d0")):
        if key in polys:
            pts = polys[key]
            g.poly(pts, fc, "#000", 0.5 if key == "soil" else 1.2)
    brown, blue, red = "#7a5230", "#1f5fbf", "#b00000"
    xs_end = B + ext
    g.line((xb, zt), (xs_end, zt + (xs_end - xb) * tb), brown, 1.2)
    g.line((B, 0.0), (B, zt + (B - xb) * tb), brown, 0.6, "2 2")
    g.text(B, 0.02 * span, "virtual back", 7.5, "start", brown, rot=90, dy=-3)
    if D is not None:
        g.line((-ext, D), (toe, D), brown, 1.2)
        g.text(-ext, D + 0.03 * span, "front level", 7.5, "start", brown)
        if zf is not None:
            g.text(-ext, D - 0.03 * span, f"{zf + D:.2f} m", 7.5, "start", brown)
    if wl is not None and wl > 0:
        zw = min(wl, zt)
        g.line((toe + s.stem_base_m, zw), (B + ext, zw), blue, 1.0, "5 3")
        g.text(B + ext, zw, " water", 7.5, "start", blue)
    g.line((xb, zt), (B + ext, zt), red, 0.6, "1 2")
    g.text(B + ext, zt + 0.025 * span, (f" retained {zf + zt:.2f} m" if zf is not None
                                        else " top of checked section"), 7.5, "start", red)
    if zf is not None:
        g.text(B + ext, zt - 0.025 * span, " (top of checked section)", 7.5, "start", red)
        g.text(B + 0.02 * span, -0.03 * span, f" underside {zf:.2f} m", 7.5)

    g.dim((0, y1), (toe, y1), f"toe {toe:.2f}")
    g.dim((toe, y1), (toe + s.stem_base_m, y1), f"{s.stem_base_m:.2f}")
    g.dim((toe + s.stem_base_m, y1), (B, y1), f"heel {s.heel_m:.2f}")
    g.dim((0, y2), (B, y2), f"B = {B:.2f}")
    g.dim((xl1, 0), (xl1, t), f"{t:.2f}", rot=90)
    if D is not None and D > 0:
        g.dim((xl2, 0), (xl2, D), f"D {D:.2f}", rot=90)
    g.dim((xl3, 0), (xl3, t + hc), f"H {t + hc:.2f}", rot=90)
    if D is not None:
        g.dim((xl2, max(D, 0)), (xl2, t + hc), f"h {t + hc - D:.2f}", rot=90)
    g.dim((toe, yt), (toe + s.stem_top_m, yt), f"{s.stem_top_m:.2f}",
          side=(0, 0.03 * span))
    if s.key_depth_m > 0:
        xk = toe + s.key_width_m + 0.06 * span
        g.dim((xk, -s.key_depth_m), (xk, 0), f"key {s.key_depth_m:.2f}", rot=90)
        g.dim((toe, -s.key_depth_m - 0.04 * span),
              (toe + s.key_width_m, -s.key_depth_m - 0.04 * span), f"{s.key_width_m:.2f}")
    title = (f"Section type {st.section_type}: dimensions in m"
             + (f" (at panel {gov.panel.panel})" if gov is not None else ""))
    g.text(g.x0 + 0.5 * (g.x1 - g.x0), g.z1 - 0.03 * span, title, 10, "middle")
    return g.svg(f"cross-section of type {st.section_type}")


# --- report parts ---------------------------------------------------------------------

CSS = """
:root { --ink:#1a1a1a; --rule:#9a9a9a; --pale:#f3f3f3; }
body { font-family: "DejaVu Sans", Arial, Helvetica, sans-serif; color: var(--ink);
       font-size: 10pt; line-height: 1.35; max-width: 1150px; margin: 1.5em auto; padding: 0 1em; }
h1 { font-size: 17pt; margin: 0.2em 0 0.4em; }
h2 { font-size: 13pt; border-bottom: 1.5px solid var(--ink); padding-bottom: 2px; margin-top: 1.6em; }
h3 { font-size: 11pt; margin: 1.2em 0 0.4em; }
h4 { font-size: 10pt; margin: 0.9em 0 0.3em; }
h2, h3, h4 { break-after: avoid; page-break-after: avoid; }
table { border-collapse: collapse; margin: 0.3em 0 0.9em; font-size: 8.5pt; }
th, td { border: 0.5px solid var(--rule); padding: 1px 5px; vertical-align: top; }
thead th { background: var(--pale); text-align: left; }
td { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
td.w { white-space: normal; }
td.t, th.t { text-align: left; }
table.kv th { text-align: left; background: var(--pale); font-weight: normal; width: 22em; }
table.kv td { text-align: left; white-space: normal; }
table.wide { font-size: 7pt; }
table.wide td, table.wide th { padding: 1px 3px; }
td.ok { color: #1d5e20; text-align: left; }
td.bad { color: #8b0000; background: #f8dcdc; font-weight: bold; text-align: left; }
tr.gov td { font-weight: bold; }
tr.total td { font-weight: bold; border-top: 1.5px solid var(--ink); }
.caution { border: 2px solid #8b0000; padding: 0.5em 1em; margin: 1em 0; background: #fff8f0; }
.caution h2 { border: none; margin-top: 0.2em; color: #8b0000; }
.note { font-size: 8.5pt; color: #333; }
.fig { margin: 0.5em 0 1em; }
.fig img { max-width: 100%; height: auto; border: 0.5px solid #cccccc; }
.fig svg { max-width: 100%; height: auto; border: 0.5px solid #cccccc; }
.panels-list { font-size: 8.5pt; }
nav ol { columns: 2; font-size: 9pt; }
section.part, section.sectype { margin-top: 2em; }
.pblock { margin: 0.5em 0 0.8em; }
.pblock table { font-size: 7.5pt; margin: 0.1em 0 0.3em; }
.pblock h4 { margin: 0.5em 0 0.1em; }
@page { size: A4; margin: 14mm 12mm 14mm 12mm; }
@page wide { size: A4 landscape; margin: 10mm 10mm; }
@media print {
  body { max-width: none; margin: 0; padding: 0; font-size: 9pt; }
  table { font-size: 7.5pt; }
  table.wide { font-size: 6.5pt; }
  section.part, section.sectype { break-before: page; page-break-before: always; margin-top: 0; }
  section.landscape { page: wide; }
  .fig img { max-height: 115mm; border: none; }
  .fig svg { max-height: 115mm; border: none; }
  tr { break-inside: avoid; page-break-inside: avoid; }
  .caution { break-inside: avoid; }
  nav { display: none; }
}
"""


def _highest(panels):
    """(u, panel name, check) of the highest utilization over every check of every
    panel, the first on a tie (what ``max`` over them keyed by u gives); None without
    checks. The utilizations go through the C-level ``max`` and ``list.index``: the
    first entry equal to the maximum is the one ``max`` keeps (a leading NaN included,
    found by identity)."""
    us = [c.utilization for p in panels for c in p.checks]
    if not us:
        return None
    i = us.index(max(us))
    for p in panels:
        n = len(p.checks)
        if i < n:
            return p.checks[i].utilization, p.panel.panel, p.checks[i]
        i -= n


def _front(result, date: str) -> str:
    site = result.site
    proj = getattr(site, "project", None)
    name = getattr(proj, "name", "") or "(unnamed project)"
    ref = getattr(proj, "reference", "")
    panels = result.panels
    n_bad = sum(p.status != "ok" for p in panels)
    j_bad = sum(j.status != "ok" for j in result.joints)
    length = sum(p.panel.length_m for p in panels)
    worst = _highest(panels)
    overall = ("ok: every panel and joint passes" if result.ok
               else f"FLAGGED: {n_bad} panel(s) and {j_bad} joint(s) flagged")
    pairs = [("project", name), ("reference", ref), ("date", date),
             ("wallrun version", wallrun.__version__),
             ("site folder", Path(str(getattr(site, "root", "") or "")).name),
             ("runs", len(result.runs)), ("panels", len(panels)),
             ("length of wall", f"{length:.2f} m"),
             ("section types", len(result.section_types)),
             ("joints", len(result.joints)), ("overall status", overall)]
    if worst is not None:
        u, pname, c = worst
        pairs.append(("highest utilization",
                      f"{_util(u)} ({c.check} {c.combination}, {c.case}) at panel {pname}"))
    out = [f"<header><h1>Retaining wall calculation report: {_e(name)}</h1>",
           _kv_table(pairs), "</header>"]
    cost = result.cost
    demo = ("<li><strong>The costs in this report use invented example rates</strong> "
            "(no rates.csv was given): they are not prices and must not be used as an "
            "estimate.</li>" if getattr(cost, "demo_rates", False) else "")
    out.append(
        '<div class="caution" id="cautions"><h2>Cautions</h2><ul>'
        "<li><strong>Preliminary design aid.</strong> This report is a preliminary design "
        "produced by wallrun. It is to be checked and signed by a qualified engineer under "
        "the local codes and the national annex in force before any use for construction; "
        "the factors used are the recommended values unless the design basis below says "
        "otherwise.</li>"
        "<li><strong>Not checked by wallrun</strong> (outside its design basis):<ul>"
        + "".join(f"<li>{_e(x)}</li>" for x in NOT_CHECKED) +
        "</ul></li>"
        "<li>The checks stop at the retained level of each panel; the ground model is the "
        "one described in the design basis, with the parameters stated there. Site "
        "investigation, drainage performance and construction sequence are the "
        "designer's responsibility.</li>" + demo + "</ul></div>")
    warns = list(getattr(result, "warnings", ()) or ())
    for w in getattr(site, "warnings", ()) or ():
        if w not in warns:
            warns.append(w)
    if warns:
        out.append("<h3>Warnings raised while reading and designing</h3><ul>"
                   + "".join(f"<li>{_e(w)}</li>" for w in warns) + "</ul>")
    flagged = [p for p in panels if p.status != "ok"]
    if flagged:
        out.append("<h3>Flagged panels</h3>" + _table(
            ["panel", "section", "status", "reason"],
            [_td(_e(p.panel.panel), "t") + _td(_e(p.section_type), "t")
             + _status_cell(p.status) + _td(_e(p.reason), "t w") for p in flagged]))
    fj = [j for j in result.joints if j.status != "ok"]
    if fj:
        out.append("<h3>Flagged joints</h3>" + _table(
            ["joint", "chainage (m)", "status", "reason"],
            [_td(_e(j.joint), "t") + _td(_num(j.ch_m, 2)) + _status_cell(j.status)
             + _td(_e(j.reason), "t w") for j in fj]))
    return "\n".join(out)


def _nav(result) -> str:
    items = [("basis", "Design basis"), ("run", "The run: long section, panels, joints")]
    items += [(f"type-{st.section_type}", f"Section type {st.section_type}")
              for st in result.section_types]
    items += [("quantities", "Quantities and cost"), ("appendix", "Appendix: checks of every panel")]
    return ("<nav><h3>Contents</h3><ol>" + "".join(
        f'<li><a href="#{_e(a)}">{_e(t)}</a></li>' for a, t in items) + "</ol></nav>")


def _factor_sets(site) -> tuple[dict, str]:
    sets = dict(getattr(site, "factors", {}) or {})
    if sets:
        return sets, ""
    approach = getattr(getattr(site, "design", None), "approach", "DA1")
    return resolve(approach), (" The site carried no resolved factor sets: the recommended "
                               "values of the approach are shown.")


def _basis(result) -> str:
    site = result.site
    d = site.design
    out = ['<section class="part" id="basis"><h2>1. Design basis</h2>']
    out.append("<h3>Codes and approach</h3>")
    out.append(_kv_table([
        ("geotechnical design", "EN 1997-1:2004, recommended values of Annex A"),
        ("concrete design", "EN 1992-1-1:2004, recommended values"),
        ("actions (densities)", "EN 1991-1-1:2002 (reinforced concrete 25 kN/m3, Table A.1)"),
        ("design approach", f"{d.approach}; EQU is always checked"),
        ("combinations checked", ", ".join(
            _order({c.combination for p in result.panels for c in p.checks}, lambda x: x,
                   COMBINATION_ORDER)) or "(no checks)"),
    ]))
    sets, note = _factor_sets(site)
    out.append("<h3>Partial factors used</h3>")
    names = _order(list(sets), lambda x: x, COMBINATION_ORDER)
    keys = [k for k in OVERRIDE_KEYS if any(
        getattr(sets[n], k, None) is not None for n in names)]
    rows = []
    changed = False
    for k in keys:
        cells = _td(_e(k), "t") + _td(_e(FACTOR_WORDS.get(k, "")), "t w")
        for n in names:
            v = getattr(sets[n], k, None)
            rec = getattr(RECOMMENDED.get(n), k, None) if n in RECOMMENDED else None
            txt = "-" if v is None else f"{v:.2f}"
            if v is not None and rec is not None and abs(v - rec) > 1e-12:
                txt += f" * (rec. {rec:.2f})"
                changed = True
            cells += _td(_e(txt))
        rows.append(cells)
    out.append(_table(["factor", "meaning"] + names, rows))
    out.append('<p class="note">Resistance factors do not apply to EQU (shown as given). '
               + ("Values marked * differ from the EN 1997-1 recommended value "
                  "(a national annex or a site-file override). " if changed else
                  "Every value is the EN 1997-1 recommended value. ")
               + _e(note) + "</p>")

    c = site.concrete
    fck = _fck(c.strength_class)
    fctm = None if fck is None else 0.30 * fck ** (2.0 / 3.0)
    out.append("<h3>Materials and cover</h3>")
    out.append(_kv_table([
        ("concrete class", c.strength_class),
        ("fck", "unknown class" if fck is None else f"{fck:g} MPa"),
        ("fctm = 0.30 fck^(2/3) (Table 3.1)", "" if fctm is None else f"{fctm:.2f} MPa"),
        ("alpha_cc", f"{c.alpha_cc:g}"),
        ("gamma_c, gamma_s", "1.5, 1.15 (2.4.2.4, persistent and transient)"),
        ("reinforcement fyk", f"{site.steel.fyk_mpa:g} MPa"),
        ("bar sizes allowed", ", ".join(f"{b:g}" for b in site.steel.bar_sizes_mm) + " mm"),
        ("spacings allowed", ", ".join(f"{b:g}" for b in site.steel.spacings_mm) + " mm"),
        ("cover, stem faces and top of base", f"{c.cover_mm:g} mm"),
        ("cover, underside of base (cast against ground, 4.4.1.3(4))",
         f"{c.cover_ground_mm:g} mm"),
        ("crack width limit wk", f"{d.crack_width_mm:g} mm (7.3.3, Table 7.3N)"),
    ]))

    bf = site.backfill
    out.append("<h3>Ground</h3><h4>Backfill (retained soil)</h4>")
    out.append(_kv_table([
        ("unit weight", f"{bf.unit_weight_kn_m3:g} kN/m3"),
        ("friction angle phi'k", f"{bf.friction_angle_deg:g} deg"),
        ("surface slope beta", f"{bf.slope_deg:g} deg"),
        ("wall friction delta_k", f"{bf.wall_friction_deg:g} deg (Coulomb stem pressure only)"),
        ("cohesion", "ignored (conservative)"),
    ]))
    fo = site.foundation
    fkeys = [("unit_weight_kn_m3", "unit weight (kN/m3)"),
             ("friction_angle_deg", "phi'k (deg)"),
             ("phi_cv_deg", "phi'cv for base friction (deg)"),
             ("cohesion_kpa", "c'k (kPa)"), ("undrained_strength_kpa", "cu,k (kPa)"),
             ("allowable_bearing_kpa", "allowable bearing (kPa)")]
    zones = list(getattr(site, "zones", ()) or ())
    rows = [_td("default", "t") + _td("run start", "t") + _td("run end", "t")
            + "".join(_td(_num(getattr(fo, k), 2)) for k, _ in fkeys)]
    for z in zones:
        rows.append(_td("zone", "t") + _td(_num(z.from_m, 2)) + _td(_num(z.to_m, 2))
                    + "".join(_td(_num(getattr(z.foundation, k), 2)) for k, _ in fkeys))
    out.append("<h4>Foundation soil" + (" and zones" if zones else "") + "</h4>")
    out.append(_table(["", "from ch (m)", "to ch (m)"] + [t for _, t in fkeys], rows))
    out.append('<p class="note">A cu,k of 0 means no undrained checks; an allowable '
               "bearing of 0 means no characteristic edge-pressure check. Soil over the toe "
               "is ignored.</p>")

    w = getattr(site, "water", None)
    out.append("<h3>Water</h3>")
    if w is None:
        out.append("<p>No water behind the wall: a drained wall (drainage to be provided "
                   "and maintained).</p>")
    elif w.level_m is not None:
        out.append(f"<p>Water behind the wall at level {_num(w.level_m, 2)} m (capped at "
                   "the backfill surface at the virtual back and at the top of the checked "
                   "stem), triangular uplift under the base, free drainage in front; "
                   "gamma_w = 9.81 kN/m3. Water actions are permanent.</p>")
    else:
        out.append(f"<p>Water behind the wall {_num(w.height_above_base_m, 2)} m above "
                   "each panel's underside of base (capped as above), triangular uplift, "
                   "free drainage in front; gamma_w = 9.81 kN/m3. Water actions are "
                   "permanent.</p>")

    lo = site.loads
    out.append("<h3>Loads</h3>")
    out.append(_kv_table([
        ("surcharge on the retained surface q (variable)", f"{lo.surcharge_kpa:g} kPa"),
        ("psi2 on the surcharge (quasi-permanent, crack control)", f"{lo.psi2:g}"),
        ("concrete self-weight", "25 kN/m3"),
    ]))
    out.append("<h3>Design settings</h3>")
    out.append(_kv_table([(f.name, getattr(d, f.name)) for f in fields(d)]))
    wall = getattr(site, "wall", None)
    if wall is not None:
        out.append("<h4>Run, panels and joints</h4>")
        out.append(_kv_table([(f.name, getattr(wall, f.name)) for f in fields(wall)]))
    out.append("</section>")
    return "\n".join(out)


_STATUS_CELL = {"ok": '<td class="ok">ok</td>'}  # status -> its cell (_status_cell)
_TYPE_DIMS = ("stem_top_m", "stem_base_m", "base_width_m", "toe_m", "heel_m",
              "base_thickness_m", "key_depth_m", "key_width_m")
_TYPE_ROW = ('<td class="t">%s</td>' + "<td>%.3f</td>" * len(_TYPE_DIMS)
             + '<td>%d</td><td>%.2f</td><td class="t">%s</td><td>%.3f</td>')


def _status_cell_of(status) -> str:
    """:func:`_status_cell`, remembered per status word."""
    r = _STATUS_CELL.get(status)
    if r is None:
        r = _STATUS_CELL[status] = _status_cell(status)
    return r


def _type_row(st, lengths) -> str:
    """A row of the section-type table: name, dimensions (m, 3 decimals), number and
    total length of its panels, governing check and utilization."""
    s = st.section
    try:
        return _TYPE_ROW % ((_ec(st.section_type),) + tuple(getattr(s, k) for k in _TYPE_DIMS)
                            + (len(lengths), sum(lengths), _ec(st.governing), st.utilization))
    except TypeError:  # a value that is not a number: cell by cell
        return (_td(_e(st.section_type), "t")
                + "".join(_td(_num(getattr(s, k), 3)) for k in _TYPE_DIMS)
                + _td(len(lengths)) + _td(_num(sum(lengths)))
                + _td(_e(st.governing), "t") + _td(_util(st.utilization)))


_JOINT_ROW = ('<td class="t">%s</td><td>%.3f</td><td class="t">%s</td><td class="t">%s</td>'
              '<td>%.3f</td><td>%.3f</td><td>%.3f</td>%s<td class="t w">%s</td>')


def _joint_row(j) -> str:
    """A row of the joints table."""
    try:
        return _JOINT_ROW % (_e(j.joint), j.ch_m, _ec(j.left), _ec(j.right), j.founding_step_m,
                             j.top_step_m, j.pressure_ratio, _status_cell_of(j.status),
                             _ec(j.reason))
    except TypeError:  # a value that is not a number: cell by cell
        return (_td(_e(j.joint), "t") + _td(_num(j.ch_m, 3)) + _td(_e(j.left), "t")
                + _td(_e(j.right), "t") + _td(_num(j.founding_step_m, 3))
                + _td(_num(j.top_step_m, 3)) + _td(_num(j.pressure_ratio, 3))
                + _status_cell(j.status) + _td(_e(j.reason), "t w"))


def _run(result, figures) -> str:
    out = ['<section class="part landscape" id="run"><h2>2. The run</h2>']
    if result.runs:
        out.append("<h3>Runs of wall</h3>")
        out.append(_table(
            ["run", "side", "from ch (m)", "to ch (m)", "length (m)", "max retained h (m)",
             "at ch (m)"],
            [_td(r.run) + _td(_e(r.side), "t") + _td(_num(r.ch_start_m)) + _td(_num(r.ch_end_m))
             + _td(_num(r.length_m)) + _td(_num(r.max_retained_height_m))
             + _td(_num(r.at_ch_m)) for r in result.runs]))
    fig = figures.get("run") if "run" in figures else run_figure(result)
    if fig:
        out.append(_img(fig, "long section along the wall line"))
    out.append("<h3>Section types</h3>")
    out.append('<p class="note">Dimensions in m.</p>')
    counts = {}
    for p in result.panels:
        counts.setdefault(p.section_type, []).append(p.panel.length_m)
    out.append(_table(
        ["type", "stem top", "stem base", "base B", "toe", "heel", "base t", "key d",
         "key w", "panels", "length (m)", "governing", "utilization"],
        [_type_row(st, counts.get(st.section_type, ())) for st in result.section_types]))
    out.append("<h3>Panel schedule</h3>")
    out.append('<p class="note">The columns of panels.csv, in two tables of one row a '
               "panel: levels and lengths in m, utilizations to 3 decimals, concrete m3, "
               "steel kg, cost in the units of the rates.</p>")
    num3 = {"util_overturning", "util_sliding", "util_bearing", "util_structural"}
    text = {"panel", "side", "section", "governing", "reason"}
    split = PANEL_COLUMNS.index("section")
    groups = (PANEL_COLUMNS[:split], ("panel",) + PANEL_COLUMNS[split:])
    rendered = [panel_row(p) for p in result.panels]
    decimals = {"steel_kg": 1, "cost": 2}  # else 3
    for g, title in zip(groups, ("extent and levels", "section, results and take-off")):
        def cell(k, v):
            """One cell of column ``k`` (the rule of every row, one value at a time)."""
            if k == "status":
                return _status_cell(v)
            if k in text:
                return _td(_e(v), "t w" if k in ("reason", "governing") else "t")
            if k in num3:
                return _td(_util(v))
            if k == "run":
                return _td(_e(v))
            return _td(_num(v, decimals.get(k, 3)))

        # The same rule as one format a row: text and status cells take their escaped
        # words, number cells format the values themselves; a row holding a value that
        # is not a number (None, text) is spelled out by ``cell``.
        fmt = "".join(_td("%s", "t w" if k in ("reason", "governing") else "t") if k in text
                      else "%s" if k == "status" else _td("%.3f") if k in num3
                      else _td("%s") if k == "run"
                      else _td(f"%.{decimals.get(k, 3)}f") for k in g)
        values = operator.itemgetter(*g)  # a row's values in column order, at C speed
        words = [i for i, k in enumerate(g) if k in text or k == "run"]
        status = g.index("status") if "status" in g else None
        rows = []
        for r in rendered:
            try:
                args = list(values(r))
                for i in words:
                    args[i] = _ec(args[i])
                if status is not None:
                    args[status] = _status_cell_of(args[status])
                rows.append(fmt % tuple(args))
            except TypeError:
                rows.append("".join([cell(k, r[k]) for k in g]))
        out.append(f"<h4>Panel schedule: {title}</h4>")
        out.append(_table(list(g), rows, "wide"))
    out.append("<h3>Joints</h3>")
    if result.joints:
        out.append(_table(
            ["joint", "ch_m", "left", "right", "founding_step_m", "top_step_m",
             "pressure_ratio", "status", "reason"],
            [_joint_row(j) for j in result.joints]))
        wall = getattr(result.site, "wall", None)
        if wall is not None:
            out.append(f'<p class="note">Limits: founding step {wall.max_founding_step_m:g} m, '
                       f"top step {wall.max_top_step_m:g} m, ratio of characteristic edge "
                       f"pressures {wall.max_pressure_ratio:g}.</p>")
    else:
        out.append("<p>No joints between panels.</p>")
    out.append("</section>")
    return "\n".join(out)


_ESC: dict = {}


def _ec(x) -> str:
    """:func:`_e` with a cache, for the few strings repeated in every check row."""
    if type(x) is not str:  # (1, 1.0 and True are one dict key)
        return _e(x)
    r = _ESC.get(x)
    if r is None:
        r = _ESC[x] = _e(x)
    return r


_CHECK_RANK = {n: i for i, n in enumerate(CHECK_ORDER)}


def _in_check_order(checks):
    """``checks`` stably sorted by :data:`CHECK_ORDER` (unknown checks last, in their
    own order): the order of ``_order(checks, check name, CHECK_ORDER)``; most tables
    come in that order already and are returned as they are."""
    rank, last = _CHECK_RANK, len(CHECK_ORDER)
    keys = [rank.get(c.check, last) for c in checks]
    if keys == sorted(keys):
        return checks
    return [checks[i] for i in sorted(range(len(keys)), key=keys.__getitem__)]


# Fragments of a check row, escaped once per distinct value (a 10 km job has some
# 60,000 check rows but only a few hundred distinct names, cases, units and clauses).
_ROW_PARTS: dict = {}  # (check, case, unit, governs, clause) -> row fragments
_NO_CLAUSE = object()  # the clause slot of a row without the clause column


def _row_parts(key) -> tuple:
    """The fixed fragments of a check row with ``key`` (check, case, unit, governs,
    clause or :data:`_NO_CLAUSE`): its opening up to the effect, the decimals of its unit, the cells
    from the resistance to the utilization, and its ends when it passes and fails."""
    check, case, unit, gv, clause = key
    head = (('<tr class="gov">' if gv else "<tr>")
            + f'<td class="t">{_ec(check)}</td><td class="t">{_ec(case)}</td><td>')
    worst = '<td class="t">governs</td>' if gv else '<td class="t"></td>'
    end = (f'<td class="t w">{_ec(clause)}</td>' if clause is not _NO_CLAUSE else "") + "</tr>"
    r = _ROW_PARTS[key] = (head, _decimals(unit), f'</td><td class="t">{_ec(unit)}</td><td>',
                           '</td><td class="ok">pass</td>' + worst + end,
                           '</td><td class="bad">FAILS</td>' + worst + end)
    return r


def _check_rows(checks, with_clause: bool = True) -> list[str]:
    """The ``<tr>`` rows of a check table (see :data:`_CHECK_HEAD`), in check order;
    the worst entry of its check and combination in bold (``tr.gov``)."""
    rows = []
    append = rows.append
    parts = _ROW_PARTS
    for c in _in_check_order(checks):
        key = (c.check, c.case, c.unit, True if c.governs else False,
               c.clause if with_clause else _NO_CLAUSE)
        p = parts.get(key)
        if p is None:
            p = _row_parts(key)
        head, nd, mid, passes, fails = p
        e, r, u = c.effect, c.resistance, c.utilization
        tail = passes if u <= 1.0 else fails  # u <= 1 is False for NaN
        if type(e) is float and type(r) is float and type(u) is float:
            # one C-level format; "%.*f" spells nan/inf as _num and _util do
            append("%s%.*f</td><td>%.*f%s%.3f%s" % (head, nd, e, nd, r, mid, u, tail))
        else:
            append(f"{head}{_num(e, nd)}</td><td>{_num(r, nd)}{mid}{_util(u)}{tail}")
    return rows


def _table_raw(head, rows) -> str:
    """Like :func:`_table` but rows may already carry their own ``<tr>``."""
    body = "\n".join(r if r.startswith("<tr") else f"<tr>{r}</tr>" for r in rows)
    return f"{_table_open(head, wbr=False)}{body}\n</tbody></table>\n"


_CHECK_HEAD = ["check", "case", "effect", "resistance", "unit", "utilization", "result",
               "worst", "clause"]
#: The opening of every check table, up to its first row.
_CHECK_TABLE_OPEN = _table_open(_CHECK_HEAD, wbr=False)
_COMB_HEADING: dict = {}  # combination -> its <h4>


def _checks_by_combination(checks) -> str:
    """One check table per combination (in :data:`COMBINATION_ORDER`), each under its
    heading; the checks split by combination in one pass."""
    out = []
    by_comb: dict = {}
    for c in checks:
        b = by_comb.get(c.combination)
        if b is None:
            by_comb[c.combination] = [c]
        else:
            b.append(c)
    for comb in _order(set(by_comb), lambda x: x, COMBINATION_ORDER):
        h = _COMB_HEADING.get(comb)
        if h is None:
            h = _COMB_HEADING[comb] = (f"<h4>{_e(comb)}: "
                                       f"{_e(COMBINATION_WORDS.get(comb, ''))}</h4>")
        out.append(h)
        out.append(_CHECK_TABLE_OPEN + "\n".join(_check_rows(by_comb[comb]))
                   + "\n</tbody></table>\n")
    return "\n".join(out)


_ACTION_ROW = ('<td class="t">%s</td><td class="t">%s</td><td>%.2f</td><td>%.2f</td>'
               "<td>%.3f</td><td>%.3f</td><td>%.2f</td>")


def _action_row(a) -> str:
    """A row of the characteristic actions table."""
    try:
        return _ACTION_ROW % (_ec(a.name), _ec(a.kind), a.vertical_kn_m, a.horizontal_kn_m,
                              a.x_m, a.z_m, a.moment_kn_m_m)
    except TypeError:  # a value that is not a number: cell by cell
        return (_td(_e(a.name), "t") + _td(_e(a.kind), "t") + _td(_num(a.vertical_kn_m))
                + _td(_num(a.horizontal_kn_m)) + _td(_num(a.x_m, 3)) + _td(_num(a.z_m, 3))
                + _td(_num(a.moment_kn_m_m)))


_MEMBER_CELLS: dict = {}  # member -> its name and position cells
_BAR_SET_ROW = "%s<td>%g mm</td><td>%g mm</td><td>%.0f</td><td>%.0f</td><td>%.0f</td>%s"
_ENOUGH = ('<td class="bad">SHORT</td>', '<td class="ok">enough</td>')


def _bar_set_row(m: str, b) -> str:
    """A row of the reinforcement table: member ``m`` and its bar set ``b``."""
    cells = _MEMBER_CELLS.get(m)
    if cells is None:
        cells = _MEMBER_CELLS[m] = (_td(_e(m), "t")
                                    + _td(_e(MEMBER_WORDS.get(m, "")), "t w"))
    ok = b.as_prov_mm2_per_m >= b.as_req_mm2_per_m - 1e-9
    try:
        return _BAR_SET_ROW % (cells, b.bar_mm, b.spacing_mm, b.as_prov_mm2_per_m,
                               b.as_req_mm2_per_m, b.d_mm, _ENOUGH[bool(ok)])
    except TypeError:  # a value that is not a number: cell by cell
        return (cells + _td(f"{b.bar_mm:g} mm") + _td(f"{b.spacing_mm:g} mm")
                + _td(_num(b.as_prov_mm2_per_m, 0)) + _td(_num(b.as_req_mm2_per_m, 0))
                + _td(_num(b.d_mm, 0)) + _ENOUGH[bool(ok)])


_BAR_MARK_ROW = ('<td class="t">%s</td><td class="t">%s</td><td>%s</td><td class="t">%s</td>'
                 "<td>%s</td><td>%s</td><td>%.2f</td><td>%.2f</td>")


def _bar_mark_row(b) -> str:
    """A row of a type's bar-mark table."""
    try:
        return _BAR_MARK_ROW % (_ec(b.member), _e(b.bar_mark), b.bar_mm, _ec(b.shape_code),
                                b.length_mm, b.number, b.total_length_m, b.mass_kg)
    except TypeError:  # a value that is not a number: cell by cell
        return (_td(_e(b.member), "t") + _td(_e(b.bar_mark), "t") + _td(b.bar_mm)
                + _td(_e(b.shape_code), "t") + _td(b.length_mm) + _td(b.number)
                + _td(_num(b.total_length_m)) + _td(_num(b.mass_kg)))


def _sectype(result, st, k: int, figures, gov, marks=None) -> str:
    sid = f"type-{st.section_type}"
    out = [f'<section class="sectype" id="{_e(sid)}"><h2>3.{k} Section type '
           f"{_e(st.section_type)}</h2>"]
    s = st.section
    out.append(_kv_table([
        ("stem thickness at top / at top of base", f"{s.stem_top_m:.3f} / {s.stem_base_m:.3f} m"),
        ("base width B, toe, heel", f"{s.base_width_m:.3f}, {s.toe_m:.3f}, {s.heel_m:.3f} m"),
        ("base thickness", f"{s.base_thickness_m:.3f} m"),
        ("shear key depth x width", (f"{s.key_depth_m:.3f} x {s.key_width_m:.3f} m"
                                     if s.key_depth_m > 0 else "none")),
        ("governing check over its panels", f"{st.governing} (utilization {_util(st.utilization)})"),
        ("governing panel (checks and actions below)", "none" if gov is None else (
            f"{gov.panel.panel}, ch {gov.panel.ch_start_m:.2f} to {gov.panel.ch_end_m:.2f} m, "
            f"{gov.panel.side} side, retained h {gov.panel.retained_height_m:.3f} m, "
            f"total H {gov.panel.total_height_m:.3f} m, status {_status_word(gov.status)}")),
    ]))
    key = st.section_type
    fig = figures[key] if key in figures else section_figure(result, st, gov)
    if fig:
        out.append(_img(fig, f"cross-section of type {st.section_type}"))

    acts = tuple(result.actions.get(st.section_type, ()) or ())
    out.append("<h3>Characteristic actions at the governing panel</h3>")
    if acts:
        rows = [_action_row(a) for a in acts]
        sv = sum(a.vertical_kn_m for a in acts)
        sh = sum(a.horizontal_kn_m for a in acts)
        sm = sum(a.moment_kn_m_m for a in acts)
        rows.append('<tr class="total">' + _td("sum (unfactored)", "t") + _td("") + _td(_num(sv))
                    + _td(_num(sh)) + _td("") + _td("") + _td(_num(sm)) + "</tr>")
        out.append(_table_raw(["action", "kind", "V (kN/m, down +)", "H (kN/m, to front +)",
                               "lever arm x (m)", "lever arm z (m)",
                               "M about toe (kNm/m, restoring +)"], rows))
        out.append('<p class="note">Lever arms from the toe edge (x) and the underside of '
                   "the base (z); characteristic values, factored per combination in the "
                   "checks below.</p>")
    else:
        out.append("<p>No action table was produced for this section type.</p>")

    checks = gov.checks if gov is not None else ()
    geo = [c for c in checks if c.check not in _STRUCTURAL]
    struc = [c for c in checks if c.check in _STRUCTURAL]
    out.append("<h3>Geotechnical checks (EN 1997-1) at the governing panel</h3>")
    out.append(_checks_by_combination(geo) if geo else "<p>No geotechnical checks recorded.</p>")

    out.append("<h3>Reinforcement</h3>")
    rf = st.reinforcement
    rows = []
    for m in ("stem", "stem_front", "stem_horizontal", "heel", "toe", "base_distribution"):
        b = getattr(rf, m, None)
        if b is None:
            continue
        rows.append(_bar_set_row(m, b))
    out.append(_table_raw(["member", "position", "bar", "spacing", "As,prov (mm2/m)",
                           "As,req (mm2/m)", "d (mm)", "As,prov >= As,req"], rows))
    if getattr(rf, "stem_curtail_m", None) is not None:
        out.append(f"<p>Half of the stem main bars stop {rf.stem_curtail_m:.2f} m above the "
                   "top of the base (curtailment, 9.2.1.3).</p>")
    else:
        out.append("<p>All stem main bars run the full height of the stem.</p>")
    out.append("<h3>Structural checks (EN 1992-1-1) at the governing panel</h3>")
    out.append(_checks_by_combination(struc) if struc else
               "<p>No structural checks recorded.</p>")
    if marks is None:
        marks = [b for b in result.bar_schedule if b.section == st.section_type]
    if marks:
        out.append("<h3>Bar marks of this type (whole job)</h3>")
        out.append(_table(
            ["member", "bar mark", "bar (mm)", "shape code", "length (mm)", "number",
             "total length (m)", "mass (kg)"],
            [_bar_mark_row(b) for b in marks]))
    used = list(st.panels) or [p.panel.panel for p in result.panels
                               if p.section_type == st.section_type]
    out.append(f"<h3>Panels using type {_e(st.section_type)} ({len(used)})</h3>")
    out.append(f'<p class="panels-list">{_e(", ".join(used))}</p>')
    out.append("</section>")
    return "\n".join(out)


def _costs(result) -> str:
    out = ['<section class="part" id="quantities"><h2>4. Quantities and cost</h2>']
    out.append("<h3>Quantities, whole job</h3>")
    out.append(_table(["item", "unit", "quantity"],
                      [_td(_e(q.item), "t") + _td(_e(q.unit), "t") + _td(_num(q.quantity))
                       for q in result.quantities]))
    cost = result.cost
    out.append("<h3>Cost</h3>")
    if getattr(cost, "demo_rates", False):
        out.append('<p class="caution"><strong>Invented example rates:</strong> no rates '
                   "file was given, so the amounts below use wallrun's invented demo rates. "
                   "They show the method only and are not an estimate.</p>")
    rows = []
    for r in cost.rows:
        if r.rate is None:
            rows.append(_td(_e(r.item), "t") + _td(_e(r.unit), "t") + _td(_num(r.quantity))
                        + '<td class="bad">NO RATE</td><td class="bad">not priced</td>')
        else:
            rows.append(_td(_e(r.item), "t") + _td(_e(r.unit), "t") + _td(_num(r.quantity))
                        + _td(_num(r.rate)) + _td(_num(r.amount)))
    label = "total" if cost.complete else "total of priced items only (INCOMPLETE)"
    rows.append('<tr class="total">' + _td(_e(label), "t") + _td("") + _td("") + _td("")
                + _td(_num(cost.total)) + "</tr>")
    out.append(_table_raw(["item", "unit", "quantity", "rate", "amount"], rows))
    unpriced = [r.item for r in cost.rows if r.rate is None]
    if unpriced:
        out.append(f"<p><strong>Total incomplete:</strong> {len(unpriced)} item(s) have no "
                   f"rate and are left out of the total: {_e(', '.join(unpriced))}.</p>")
    out.append("</section>")
    return "\n".join(out)


_APX_PARTS: dict = {}  # (governs, check, combination, case, unit) -> row fragments


def _appendix_parts(key) -> tuple:
    """The fixed fragments of an appendix row with ``key`` (governs, check,
    combination, case, unit): its opening up to the effect, the decimals of its unit,
    the cells from the resistance to the utilization, its ends when it passes and fails."""
    gv, check, comb, case, unit = key
    esc = html.escape
    r = _APX_PARTS[key] = (
        ('<tr class="gov">' if gv else "<tr>")
        + f'<td class="t">{esc(check)}</td><td class="t">{esc(comb)}</td>'
        f'<td class="t">{esc(case)}</td><td>',
        _decimals(unit), f'</td><td class="t">{esc(unit)}</td><td>',
        "</td><td>G</td></tr>" if gv else "</td><td></td></tr>",
        '</td><td class="bad">FAILS</td></tr>')
    return r


def _appendix_rows(checks) -> list[str]:
    """The appendix rows of one panel's checks, in design.json order: the repeated
    names, cases and units escaped once per distinct value, each row one format."""
    parts = _APX_PARTS
    rows = []
    append = rows.append
    for c in checks:
        key = (True if c.governs else False, c.check, c.combination, c.case, c.unit)
        p = parts.get(key)
        if p is None:
            p = _appendix_parts(key)
        head, nd, mid, passes, fails = p
        e, r, u = c.effect, c.resistance, c.utilization
        tail = passes if u <= 1.0 else fails  # u <= 1 is False for NaN: FAILS
        if type(e) is float and type(r) is float and type(u) is float:
            append("%s%.*f</td><td>%.*f%s%.3f%s" % (head, nd, e, nd, r, mid, u, tail))
        else:
            append(f"{head}{_num(e, nd)}</td><td>{_num(r, nd)}{mid}{_util(u)}{tail}")
    return rows


def _appendix(result, gmap=None) -> str:
    """Every panel's checks, one row per check entry in design.json order. A panel
    that is the governing panel of its section type has every one of its checks in
    that type's part already (with clauses, per combination); its block here links
    there instead of repeating them, so that the report stays proportionate when
    nearly every panel has a type of its own."""
    gmap = governing_map(result) if gmap is None else gmap
    number = {st.section_type: k for k, st in enumerate(result.section_types, start=1)}
    out = ['<section class="part" id="appendix"><h2>5. Appendix: checks of every panel</h2>',
           '<p class="note">One row per check entry, as in design.json. u: utilization = '
           "effect / resistance (pass at u &lt;= 1.000); G: the worst entry of its check "
           "and combination; FAILS: u &gt; 1. The governing panel of each section type "
           "has its checks in that type's part, linked from its entry here. Clauses:</p>"]
    clauses: dict = {}  # check -> its clauses, checks in order of first appearance
    for k, cl in {(c.check, c.clause): None for p in result.panels for c in p.checks}:
        clauses.setdefault(k, set()).add(cl)
    out.append(_table(["check", "what it checks", "clause"],
                      [_td(_e(k), "t") + _td(_e(CHECK_WORDS.get(k, "")), "t")
                       + _td(_e("; ".join(sorted(clauses[k]))), "t w")
                       for k in _order(list(clauses), lambda x: x, CHECK_ORDER)]))
    head = ("<thead><tr><th>check</th><th>comb.</th><th>case</th><th>effect</th>"
            "<th>resistance</th><th>unit</th><th>u</th><th></th></tr></thead>")
    esc = _esc_text
    for p in result.panels:
        pn = p.panel
        st = "ok" if p.status == "ok" else "FLAGGED" + (f": {p.reason}" if p.reason else "")
        out.append(f'<div class="pblock" id="panel-{esc(pn.panel)}"><h4>{esc(pn.panel)} '
                   f"(run {esc(str(pn.run))}, ch {pn.ch_start_m:.2f} to {pn.ch_end_m:.2f} m, "
                   f"type {esc(p.section_type)}): {esc(st)}</h4>")
        if gmap.get(p.section_type) is p and p.section_type in number:
            worst = max([c.utilization for c in p.checks], default=None)
            out.append(f'<p class="govlink">Governing panel of type {esc(p.section_type)}: '
                       f'its {len(p.checks)} check entries are in <a href="#type-'
                       f'{esc(p.section_type)}">part 3.{number[p.section_type]}</a>'
                       + ("" if worst is None else f" (highest u {_util(worst)})")
                       + ".</p></div>")
            continue
        rows = _appendix_rows(p.checks)
        if rows:
            out.append(f"<table>{head}<tbody>{''.join(rows)}</tbody></table></div>")
        else:
            out.append("<p>No checks recorded for this panel.</p></div>")
    out.append("</section>")
    return "\n".join(out)


def render_report(result, figures: dict | None = None, date: str | None = None) -> str:
    """The whole report as HTML text.

    figures: optional ready figures keyed ``"run"`` (the long section) and by section
    type name; each value PNG bytes or SVG markup (str); a key present with a falsy
    value leaves that figure out. Missing keys are drawn here.
    date: ISO date shown on the front page (default: ``SOURCE_DATE_EPOCH`` when set,
    else today).
    """
    with collector_paused():
        return _render(result, figures, date)


def _render(result, figures, date) -> str:
    """:func:`render_report` itself."""
    figures = dict(figures or {})
    if date is None:
        sde = os.environ.get("SOURCE_DATE_EPOCH")
        date = (_dt.datetime.fromtimestamp(int(sde), _dt.timezone.utc).date().isoformat()
                if sde and sde.isdigit() else _dt.date.today().isoformat())
    name = getattr(getattr(result.site, "project", None), "name", "") or "wallrun"
    parts = ["<!DOCTYPE html>", '<html lang="en">', "<head>", '<meta charset="utf-8">',
             '<meta name="viewport" content="width=device-width, initial-scale=1">',
             f"<title>{_e(name)}: retaining wall calculation report</title>",
             f"<style>{CSS}</style>", "</head>", "<body>",
             _front(result, date), _nav(result), _basis(result), _run(result, figures)]
    gmap = governing_map(result)
    marks: dict[str, list] = {}
    for b in result.bar_schedule:
        marks.setdefault(b.section, []).append(b)
    for k, st in enumerate(result.section_types, start=1):
        parts.append(_sectype(result, st, k, figures, gmap.get(st.section_type),
                              marks.get(st.section_type, [])))
    parts += [_costs(result), _appendix(result, gmap),
              f'<footer class="note"><p>wallrun {_e(wallrun.__version__)}: preliminary design '
              "aid; to be checked and signed by a qualified engineer.</p></footer>",
              "</body>", "</html>"]
    parts.append("")  # the closing newline, without copying the text once more
    return "\n".join(parts)


def write_report(result, path, figures: dict | None = None) -> Path:
    """Write the calculation report of ``result`` (a DesignResult) to ``path`` as one
    self-contained HTML file (UTF-8). See :func:`render_report` for ``figures``.
    Returns the path written."""
    path = Path(path)
    text = render_report(result, figures)
    tmp = path.with_name(path.name + ".part")
    tmp.write_bytes(text.encode("utf-8"))  # (text-mode writing of 30 MB was slower)
    os.replace(tmp, path)
    return path

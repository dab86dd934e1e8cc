"""The sheets of the drawings, checked on the DXF files with ezdxf and shapely.

Sheet sizes and viewport scales; the title block on every sheet; a geometric check of
every sheet: the ink of no two texts overlaps (each text's outline from ezdxf's
``text2path`` add-on, as a convex hull, in paper millimetres: paper-space texts as they
are, model-space texts through their viewport's scale and centre), every paper-space
entity lies inside the border (``ezdxf.bbox``) and every model-space text shown by a
viewport lies wholly inside that viewport; in every section no two bar-mark leaders
cross and each crosses the concrete outline once (on its way to its bar); level marks
in the order of their levels; every section type on a sheet; level figures at every
joint; the setting-out table against the profile's x, y.

Sites: the invented sample of ``tests/sample_result.py`` (A1 and A3), the demo sites,
and the 1 km synthetic run of ``benchmarks/run.py`` (designed once; its drawings
without the PDF).
"""

from __future__ import annotations

import csv
import io
import sys
from dataclasses import replace
from pathlib import Path

import ezdxf
import numpy as np
import pytest
from ezdxf import bbox
from shapely import STRtree
from shapely.geometry import LineString, MultiPoint, Polygon, box

sys.path.insert(0, str(Path(__file__).parent))
from sample_result import sample_result  # noqa: E402

import wallrun  # noqa: E402
from wallrun.outputs.dxf import conventions as c  # noqa: E402
from wallrun.outputs.dxf import elevation, plan, sections, sheets  # noqa: E402

SITES = Path(__file__).resolve().parent.parent / "sites"


def _draw(result, folder: Path) -> dict:
    """The three drawings of ``result`` written to ``folder`` and read back."""
    folder.mkdir(parents=True, exist_ok=True)
    elevation.write_elevation(result, folder / "elevation.dxf")
    sections.write_sections(result, folder / "sections.dxf")
    out = {n: ezdxf.readfile(str(folder / f"{n}.dxf")) for n in ("elevation", "sections")}
    if plan.write_plan(result, folder / "plan.dxf") is not None:
        out["plan"] = ezdxf.readfile(str(folder / "plan.dxf"))
    return out


def _sample_a3():
    r = sample_result()
    return replace(r, site=replace(r.site, drawings=replace(r.site.drawings, sheet="A3")))


def _synthetic_1km():
    sys.path.insert(0, str(SITES.parent / "benchmarks"))
    from run import synthetic_site
    return wallrun.design(synthetic_site(1.0))


CASES = {"sample": sample_result, "sample-A3": _sample_a3,
         **{name: (lambda n=name: wallrun.design(wallrun.load_site(SITES / n)))
            for name in sorted(p.name for p in SITES.iterdir() if (p / "site.toml").exists())},
         "synthetic-1km": _synthetic_1km}


@pytest.fixture(scope="module", params=list(CASES))
def drawn(request, tmp_path_factory):
    result = CASES[request.param]()
    return request.param, result, _draw(result, tmp_path_factory.mktemp(request.param))


def _layouts(doc):
    return [doc.paperspace(n) for n in doc.layout_names_in_taborder() if n != "Model"]


def _viewports(lay):
    return [v for v in lay.query("VIEWPORT") if v.dxf.layer == c.L_WINDOWS]


def _scale(vp) -> float:
    return 1000.0 * vp.dxf.view_height / vp.dxf.height


# --- read back, audited; blocks for what repeats -------------------------------------------

def test_every_dxf_reads_back_and_audits_clean(drawn):
    name, result, docs = drawn
    if getattr(result.profiles, "plan_line", None) is not None:
        assert "plan" in docs
    for kind, doc in docs.items():  # each read back with ezdxf.readfile by _draw
        auditor = doc.audit()
        assert not auditor.has_errors, (kind, [e.message for e in auditor.errors])


def test_sections_use_blocks_for_what_repeats(drawn):
    name, result, docs = drawn
    doc = docs["sections"]
    used = {pr.section_type for pr in result.panels}
    for st in result.section_types:
        if st.section_type not in used:
            continue
        inserts = doc.blocks.get(sections.BLOCK_PREFIX + st.section_type).query("INSERT")
        assert len([e for e in inserts if e.dxf.name == c.B_LEVEL]) >= 3
        dots = [e for e in inserts if e.dxf.name.startswith("WALLRUN-BAR-DOT-")]
        assert len(dots) >= 2 and sum(e.dxf.column_count for e in dots) > len(dots)
    # one title block definition, inserted on every sheet of every drawing
    for kind, d in docs.items():
        n_sheets = len(_layouts(d))
        n_titles = sum(1 for lay in _layouts(d) for e in lay.query("INSERT")
                       if e.dxf.name == "WALLRUN-TITLE-PANEL")
        assert n_titles == n_sheets


# --- sizes, scales and title blocks --------------------------------------------------

def test_every_drawing_has_sheets_of_the_set_size(drawn):
    name, result, docs = drawn
    want = sheets.SIZES[result.site.drawings.sheet]
    for kind, doc in docs.items():
        lays = _layouts(doc)
        assert lays, kind
        for k, lay in enumerate(lays, start=1):
            assert (lay.dxf.paper_width, lay.dxf.paper_height) == pytest.approx(want)
            blocks = [e for e in lay.query("INSERT") if e.dxf.name == "WALLRUN-TITLE-PANEL"]
            assert len(blocks) == 1, (kind, lay.name)
            tb = blocks[0]
            assert tb.get_attrib_text("SHEET") == f"{k} of {len(lays)}"
            assert tb.get_attrib_text("STATUS") == "PRELIMINARY - NOT FOR CONSTRUCTION"
            assert tb.get_attrib_text("PROJECT") == result.site.project.name
            assert tb.get_attrib_text("SCALE") and tb.get_attrib_text("DATE")
            notes = " ".join(" ".join(e.plain_text().split()) for e in lay.query("MTEXT")
                             if e.dxf.layer == c.L_NOTES)
            assert "qualified engineer" in notes and "national annex" in notes
            for item in wallrun.cautions.not_checked(result.site):
                assert item.split(" (")[0].split(",")[0] in notes, item


def test_viewport_scales(drawn):
    name, result, docs = drawn
    ve = result.site.drawings.vertical_exaggeration
    for lay in _layouts(docs["sections"]):
        for vp in _viewports(lay):
            assert _scale(vp) == pytest.approx(25) or _scale(vp) == pytest.approx(50)
    for lay in _layouts(docs["elevation"]):
        vps = _viewports(lay)
        assert len(vps) == 1
        n = _scale(vps[0])
        assert round(n) in (100, 200, 250, 500) and n == pytest.approx(round(n))
        sub = [e for e in lay.query("INSERT") if e.dxf.name == "WALLRUN-TITLE-PANEL"][0]
        assert f"exaggeration x{ve:g}" in sub.get_attrib_text("SUBTITLE")
        assert sub.get_attrib_text("SCALE") == f"1:{round(n)} H, 1:{round(n) / ve:g} V"


# --- the geometric check of every sheet -------------------------------------------------

def _ink(e):
    """The convex hull of a text's glyph outlines (its own coordinates), or None."""
    from ezdxf.addons import text2path
    try:
        p = text2path.make_path_from_entity(e)
    except Exception:  # noqa: BLE001 - an entity text2path cannot make: no ink
        return None
    pts = [(v.x, v.y) for v in p.flattening(0.01 * max(_height(e), 1e-6))]
    return MultiPoint(pts).convex_hull if len(pts) > 2 else None


def _height(e):
    return e.dxf.get("height", None) or e.dxf.get("char_height", 1.0)


def _texts_in(entity):
    """Every TEXT, ATTRIB and MTEXT an entity shows, in model (WCS) coordinates."""
    t = entity.dxftype()
    if t in ("TEXT", "ATTRIB", "MTEXT"):
        yield entity
    elif t == "INSERT":
        yield from entity.attribs
        for v in entity.virtual_entities():
            yield from _texts_in(v)


def _sheet_items(doc, lay):
    """(hulls in paper mm with a label, paper entities, viewports) of one sheet."""
    msp = doc.modelspace()
    hulls = []
    for e in lay:
        if e.dxftype() == "VIEWPORT":
            continue
        for t in _texts_in(e):
            h = _ink(t)
            if h is not None:
                hulls.append((h, f"paper {t.dxftype()} {t.dxf.get('text', '')[:30]!r}", None))
    for vp in _viewports(lay):
        k = vp.dxf.height / vp.dxf.view_height
        cx, cy = vp.dxf.view_center_point[0], vp.dxf.view_center_point[1]
        px, py = vp.dxf.center[0], vp.dxf.center[1]
        window = box(cx - vp.dxf.width / 2 / k, cy - vp.dxf.height / 2 / k,
                     cx + vp.dxf.width / 2 / k, cy + vp.dxf.height / 2 / k)
        for e in msp:
            ext = bbox.extents([e], fast=True)
            if not ext.has_data or not window.intersects(
                    box(ext.extmin.x, ext.extmin.y, ext.extmax.x, ext.extmax.y)):
                continue
            for t in _texts_in(e):
                h = _ink(t)
                if h is None or not h.intersects(window):
                    continue
                paper = Polygon([(px + (x - cx) * k, py + (y - cy) * k)
                                 for x, y in h.exterior.coords])
                label = f"model {t.dxftype()} {(t.dxf.get('text', '') or '')[:30]!r}"
                hulls.append((paper, label, vp))
    return hulls


def _border(lay):
    frames = [e for e in lay.query("LWPOLYLINE") if e.dxf.layer == c.L_FRAME and e.closed]
    pts = np.array(max(frames, key=lambda e: Polygon(e.get_points("xy")).area).get_points("xy"))
    return box(*pts.min(axis=0), *pts.max(axis=0))


def _vp_box(vp):
    x, y, w, h = vp.dxf.center[0], vp.dxf.center[1], vp.dxf.width, vp.dxf.height
    return box(x - w / 2, y - h / 2, x + w / 2, y + h / 2)


def test_no_text_overlaps_and_everything_inside_its_sheet(drawn):
    name, result, docs = drawn
    checked = 0
    for kind, doc in docs.items():
        lays = _layouts(doc)
        if name == "synthetic-1km":
            lays = lays[:3]  # the first sheets of each drawing: the check is slow
        for lay in lays:
            border = _border(lay)
            for e in lay:  # every paper-space entity inside the border
                if e.dxftype() == "VIEWPORT":
                    if e.dxf.layer == c.L_WINDOWS:  # (not the layout's own overall one)
                        assert border.buffer(0.01).contains(_vp_box(e)), (kind, lay.name)
                    continue
                ext = bbox.extents([e], fast=False)
                if ext.has_data:
                    b = box(ext.extmin.x, ext.extmin.y, ext.extmax.x, ext.extmax.y)
                    assert border.buffer(0.01).contains(b), (kind, lay.name, e.dxftype())
            hulls = _sheet_items(doc, lay)
            for h, label, vp in hulls:  # texts of a viewport wholly inside it
                if vp is not None:
                    assert _vp_box(vp).buffer(0.01).contains(h), (kind, lay.name, label)
            geoms = [h for h, _l, _v in hulls]
            tree = STRtree(geoms)
            for i, j in zip(*tree.query(geoms, predicate="intersects")):
                if i < j:
                    area = geoms[i].intersection(geoms[j]).area
                    assert area < 1e-3, (kind, lay.name, hulls[i][1], hulls[j][1], area)
            checked += len(hulls)
    assert checked > 20


def _leaders(blk):
    """The leaders of a section block as LineStrings (without their end dots)."""
    out = []
    for e in blk.query("LWPOLYLINE"):
        if e.dxf.layer == c.L_MARKS:
            pts = [p[:2] for p in e.get_points("xyb")]
            out.append(LineString(pts[:-2]))  # up to the edge of the dot
    return out


def _type_blocks(result, doc):
    """(section type, its block) of every type drawn in the sections drawing ``doc``."""
    for st in result.section_types:
        blk = doc.blocks.get(sections.BLOCK_PREFIX + st.section_type)
        if blk is not None:
            yield st, blk


def test_leaders_cross_neither_each_other_nor_the_concrete(drawn):
    name, result, docs = drawn
    for st, blk in _type_blocks(result, docs["sections"]):
        outline = [e for e in blk.query("LWPOLYLINE") if e.dxf.layer == c.L_CONCRETE][0]
        edge = Polygon(outline.get_points("xy")).exterior
        lines = _leaders(blk)
        assert lines
        for i, a in enumerate(lines):
            crossing = a.intersection(edge)
            n = len(getattr(crossing, "geoms", [crossing])) if not crossing.is_empty else 0
            assert n == 1, (st.section_type, i, crossing.wkt)  # into the concrete, once
            for b in lines[i + 1:]:
                assert not a.intersects(b), st.section_type


def test_level_marks_in_the_order_of_their_levels(drawn):
    name, result, docs = drawn
    for st, blk in _type_blocks(result, docs["sections"]):
        marks = [e for e in blk.query("INSERT") if e.dxf.name == c.B_LEVEL]
        by_mark = sorted(marks, key=lambda e: -e.dxf.insert.y)
        levels = [float(e.get_attrib_text("LEVEL").rsplit("+", 1)[1]) for e in by_mark]
        assert levels == sorted(levels, reverse=True)
        figs = [e.get_attrib("LEVEL").dxf.insert.y for e in by_mark]
        assert figs == sorted(figs, reverse=True)  # the figures in the same order
        assert len(set(levels)) == len(levels)


def test_every_type_has_a_section_on_a_sheet(drawn):
    name, result, docs = drawn
    doc = docs["sections"]
    msp = doc.modelspace()
    windows = [box(*(v.dxf.view_center_point[0] - v.dxf.width / 2 * v.dxf.view_height
                     / v.dxf.height, v.dxf.view_center_point[1] - v.dxf.view_height / 2,
                     v.dxf.view_center_point[0] + v.dxf.width / 2 * v.dxf.view_height
                     / v.dxf.height, v.dxf.view_center_point[1] + v.dxf.view_height / 2))
               for lay in _layouts(doc) for v in _viewports(lay)]
    used = {pr.section_type for pr in result.panels}
    for st in result.section_types:
        if st.section_type not in used:
            continue
        ins = [e for e in msp.query("INSERT")
               if e.dxf.name == sections.BLOCK_PREFIX + st.section_type]
        assert len(ins) == 1, st.section_type
        ext = bbox.extents(ins, fast=True)
        b = box(ext.extmin.x, ext.extmin.y, ext.extmax.x, ext.extmax.y)
        assert sum(w.contains(b) for w in windows) == 1, st.section_type


def test_level_figures_at_every_joint(drawn):
    name, result, docs = drawn
    doc = docs["elevation"]
    cols = [(e.dxf.insert.x, e.plain_text().split("\n")) for e in doc.modelspace().query("MTEXT")
            if e.dxf.layer == c.L_LEVEL_TEXT]
    prof = result.profiles
    by = {pr.panel.panel: pr.panel for pr in result.panels}
    tol = 10.0 * c.paper(elevation.COLUMN_MM, 500)  # near the joint (or moved inside a window)
    for j in result.joints:
        left, right = by[j.left], by[j.right]
        g = float(np.asarray(prof.ground(np.array([j.ch_m])))[0])
        near = [lines for x, lines in cols if abs(x - j.ch_m) <= tol]
        want_t = {f"{left.wall_top_end_m:.3f}", f"{right.wall_top_start_m:.3f}"}
        want_f = {f"{left.founding_m:.3f}", f"{right.founding_m:.3f}"}
        assert any(all(w in ls[0] for w in want_t) and all(w in ls[1] for w in want_f)
                   and f"{g:.3f}" in ls[2] for ls in near), (j.joint, near)


def test_setting_out_rows_match_the_plan_line(drawn):
    name, result, docs = drawn
    text = plan.setting_out_csv(result)
    if "plan" not in docs:
        assert text is None
        return
    rows = list(csv.DictReader(io.StringIO(text)))
    assert list(rows[0]) == ["joint", "chainage_m", "easting_m", "northing_m",
                             "top_of_wall_m", "founding_m"]
    by = {r["joint"]: r for r in rows}
    by_panel = {pr.panel.panel: pr.panel for pr in result.panels}
    for j in result.joints:  # every joint has a row
        r = by[j.joint]
        x, y = result.profiles.xy_at(np.array([j.ch_m]))
        assert float(r["chainage_m"]) == pytest.approx(j.ch_m, abs=1e-3)
        assert float(r["easting_m"]) == pytest.approx(float(x[0]), abs=1e-3)
        assert float(r["northing_m"]) == pytest.approx(float(y[0]), abs=1e-3)
        left, right = by_panel[j.left], by_panel[j.right]
        assert float(r["top_of_wall_m"]) == pytest.approx(
            max(left.wall_top_end_m, right.wall_top_start_m), abs=1e-3)
        assert float(r["founding_m"]) == pytest.approx(
            min(left.founding_m, right.founding_m), abs=1e-3)
    # the plan holds the same table on its setting-out sheets
    tables = " ".join(e.plain_text() for lay in _layouts(docs["plan"]) for e in lay.query("MTEXT")
                      if e.dxf.layer == c.L_SETTING_TABLE)
    for r in rows:
        assert f"{float(r['easting_m']):.3f}" in tables


def test_sheet_setting_refuses_other_sizes(tmp_path):
    import shutil
    from wallrun.errors import InputError
    site = tmp_path / "s"
    shutil.copytree(SITES / "platform-edge", site)
    with open(site / "site.toml", "a", encoding="utf-8") as f:
        f.write('\n[drawings]\nsheet = "A2"\n')
    with pytest.raises(InputError, match="sheet"):
        wallrun.load_site(site)

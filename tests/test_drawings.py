"""Drawings: the DXF files are read back with ezdxf and checked against the result.

The reference for every figure is the hand-built result of ``tests/sample_result.py``
(its panel, joint, section and bar-schedule objects), not the drawing code.
"""

from __future__ import annotations

import math
import sys
from dataclasses import replace
from pathlib import Path

import ezdxf
import matplotlib.image as mpimg
import numpy as np
import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st

sys.path.insert(0, str(Path(__file__).parent))
from sample_result import sample_result  # noqa: E402

from wallrun.outputs import previews, sheets_pdf  # noqa: E402
from wallrun.outputs.dxf import conventions as c  # noqa: E402
from wallrun.outputs.dxf import write_drawings  # noqa: E402
from wallrun.outputs.dxf.elevation import level_of, read_transform, write_elevation  # noqa: E402
from wallrun.outputs.dxf.plan import write_plan  # noqa: E402
from wallrun.outputs.dxf.sections import (BLOCK_PREFIX, governing_map,  # noqa: E402
                                          stem_heights, write_sections)


@pytest.fixture(scope="module")
def result():
    return sample_result()


@pytest.fixture(scope="module")
def out(tmp_path_factory, result):
    o = tmp_path_factory.mktemp("drawings")
    names = write_drawings(result, o)
    assert set(names) == {"elevation.dxf", "sections.dxf", "plan.dxf", "setting_out.csv",
                          "sheets.pdf", "sections.pdf", "elevation.png"}
    return o


def _read(path):
    doc = ezdxf.readfile(str(path))
    return doc, doc.modelspace()


def _section(doc, st):
    """The entities of a section type's block (section coordinates)."""
    return list(doc.blocks.get(BLOCK_PREFIX + st))


@pytest.mark.parametrize("name", ["elevation.dxf", "sections.dxf", "plan.dxf"])
def test_files_audit_clean_r2013_metres(out, name):
    doc, msp = _read(out / name)
    assert doc.dxfversion == "AC1027"  # R2013
    assert doc.units == ezdxf.units.M
    assert not doc.audit().has_errors
    # colours and linetypes by layer; every entity on a layer of the scheme
    for e in msp:
        assert e.dxf.layer in c.LAYERS or e.dxf.layer == "0", (e.dxftype(), e.dxf.layer)
        if e.dxf.layer != c.L_KEY:
            assert e.dxf.get("color", 256) == 256
    for lay in c.LAYERS.values():
        assert doc.layers.get(lay.name).color == lay.color
    assert c.TEXT_STYLE in doc.styles


# --- elevation -------------------------------------------------------------------------

def test_one_joint_line_per_joint(out, result):
    _, msp = _read(out / "elevation.dxf")
    lines = msp.query(f'LINE[layer=="{c.L_JOINTS}"]')
    assert len(lines) == len(result.joints) == 3
    xs = sorted(round(ln.dxf.start.x, 6) for ln in lines)
    assert xs == sorted(round(j.ch_m, 6) for j in result.joints)
    for ln in lines:
        assert math.isclose(ln.dxf.start.x, ln.dxf.end.x)


def test_underside_of_base_levels_equal_founding(out, result):
    doc, msp = _read(out / "elevation.dxf")
    datum, ve = read_transform(doc)
    assert ve == result.site.drawings.vertical_exaggeration == 2.0
    polys = msp.query(f'LWPOLYLINE[layer=="{c.L_UNDERSIDE}"]')
    assert len(polys) == len(result.runs) == 2
    for pl in polys:
        pts = np.array(pl.get_points("xy"))
        levels = level_of(pts[:, 1], datum, ve)
        # two vertices per panel at its ends, its founding level at both
        run_panels = [pr.panel for pr in result.panels
                      if pr.panel.ch_start_m >= pts[0, 0] - 1e-9
                      and pr.panel.ch_end_m <= pts[-1, 0] + 1e-9]
        assert len(pts) == 2 * len(run_panels)
        for k, p in enumerate(run_panels):
            assert pts[2 * k, 0] == pytest.approx(p.ch_start_m)
            assert pts[2 * k + 1, 0] == pytest.approx(p.ch_end_m)
            assert levels[2 * k] == pytest.approx(p.founding_m, abs=1e-9)
            assert levels[2 * k + 1] == pytest.approx(p.founding_m, abs=1e-9)


def test_elevation_wall_top_profiles_labels_and_cautions(out, result):
    doc, msp = _read(out / "elevation.dxf")
    datum, ve = read_transform(doc)
    tops = msp.query(f'LWPOLYLINE[layer=="{c.L_TOP}"]')
    top_pts = np.vstack([np.array(p.get_points("xy")) for p in tops])
    for pr in result.panels:
        p = pr.panel
        for ch, z in ((p.ch_start_m, p.wall_top_start_m), (p.ch_end_m, p.wall_top_end_m)):
            hit = np.isclose(top_pts[:, 0], ch) & np.isclose(level_of(top_pts[:, 1], datum, ve), z)
            assert hit.any(), (p.panel, ch, z)
    # existing ground passes through every survey point (hand data of the sample)
    g = msp.query(f'LWPOLYLINE[layer=="{c.L_GROUND}"]')[0]
    gp = np.array(g.get_points("xy"))
    prof = result.profiles
    for ch, z in zip(prof.g_ch, prof.g_lv):
        k = np.argmin(abs(gp[:, 0] - ch))
        assert gp[k, 0] == pytest.approx(ch)
        assert level_of(gp[k, 1], datum, ve) == pytest.approx(z)
    words = _all_text(doc)
    for pr in result.panels:
        assert pr.panel.panel in words and pr.section_type in words
    for lab in ("0+010", "0+020", "0+030"):  # ticks every 10 m inside the wall's extent
        assert lab in words
    assert result.site.project.name in words and "WR-TEST-014" in words
    assert "PRELIMINARY - NOT FOR CONSTRUCTION" in words
    assert "qualified engineer" in words and "national annex" in words
    for word in ("overall", "settlement", "seismic", "compaction", "frost", "chemical"):
        assert word in words


def _all_text(doc) -> str:
    """Every TEXT, MTEXT and ATTRIB of a drawing (model space, paper space, blocks)."""
    out = []
    layouts = [doc.modelspace(), *(doc.paperspace(n) for n in doc.layout_names()
                                   if n != "Model"), *doc.blocks]
    for lay in layouts:
        for e in lay:
            t = e.dxftype()
            if t in ("TEXT", "ATTRIB", "MTEXT"):
                out.append(e.plain_text())
            if t == "INSERT":
                out += [a.plain_text() for a in e.attribs]
    return "\n".join(out)


def test_datum_round_and_ve_one_gives_true_levels(tmp_path):
    r = sample_result(vertical_exaggeration=1.0)
    write_elevation(r, tmp_path / "e.dxf")
    doc, msp = _read(tmp_path / "e.dxf")
    datum, ve = read_transform(doc)
    assert ve == 1.0
    und = msp.query(f'LWPOLYLINE[layer=="{c.L_UNDERSIDE}"]')[0]
    assert und.get_points("xy")[0][1] == pytest.approx(r.panels[0].panel.founding_m)


def test_flagged_panel_is_marked(tmp_path):
    r = sample_result()
    pr = replace(r.panels[1], status="flagged", reason="no section passes")
    r = replace(r, panels=(r.panels[0], pr) + r.panels[2:])
    write_elevation(r, tmp_path / "e.dxf")
    doc, _ = _read(tmp_path / "e.dxf")
    assert "S01 FLAGGED" in _all_text(doc)


# --- sections --------------------------------------------------------------------------

def test_every_type_is_a_block_inserted_once(out, result):
    doc, msp = _read(out / "sections.dxf")
    inserts = [e.dxf.name for e in msp if e.dxftype() == "INSERT"]
    want = [BLOCK_PREFIX + st.section_type for st in result.section_types]
    assert sorted(inserts) == sorted(want)


def test_blocks_for_what_repeats(out, result):
    """Bar dots and level marks are inserts of shared blocks, level figures are their
    attributes."""
    doc, _ = _read(out / "sections.dxf")
    for st in result.section_types:
        ents = _section(doc, st.section_type)
        marks = [e for e in ents if e.dxftype() == "INSERT" and e.dxf.name == c.B_LEVEL]
        assert len(marks) >= 3  # top/retained, front ground, underside
        assert all(e.get_attrib("LEVEL") is not None for e in marks)
        dots = [e for e in ents if e.dxftype() == "INSERT" and e.dxf.layer == c.L_DOTS]
        assert dots and all(e.dxf.name.startswith("WALLRUN-BAR-DOT-") for e in dots)
        # one grid insert per row: far fewer inserts than dots
        assert sum(e.dxf.column_count for e in dots) > 2 * len(dots)


def test_every_bar_mark_named_at_a_leader(out, result):
    doc, _ = _read(out / "sections.dxf")
    for st in result.section_types:
        ents = _section(doc, st.section_type)
        lines = [ln for e in ents if e.dxftype() == "MTEXT" and e.dxf.layer == c.L_MARKS
                 for ln in e.plain_text().split("\n")]
        table = " ".join(e.plain_text() for e in ents
                         if e.dxftype() == "MTEXT" and e.dxf.layer == c.L_TABLE)
        rows = [b for b in result.bar_schedule if b.section == st.section_type]
        assert rows
        for b in rows:
            assert b.bar_mark in table.split(), (st.section_type, b.bar_mark)
            assert any(b.bar_mark in ln.split("  ")[0].replace(",", " ").split()
                       and f"H{b.bar_mm}" in ln for ln in lines), (st.section_type, b.bar_mark)
        leaders = [e for e in ents if e.dxftype() == "LWPOLYLINE" and e.dxf.layer == c.L_MARKS]
        assert len(leaders) == len(lines)
        for e in leaders:  # each ends in a dot: two half-circle arcs round its anchor
            pts = e.get_points("xyb")
            assert [p[2] for p in pts[-3:]] == [1.0, 1.0, 0.0]


def _dims(ents):
    """{(vertical, length mm)} of the dimension figures of a section."""
    return sorted(round(float(e.dxf.text)) for e in ents
                  if e.dxftype() == "TEXT" and e.dxf.layer == c.L_DIMS)


def test_dimensions_equal_section_dimensions(out, result):
    doc, _ = _read(out / "sections.dxf")
    gm = governing_map(result)
    for st in result.section_types:
        s = st.section
        hd, _ = stem_heights(gm[st.section_type])
        want = [s.toe_m, s.stem_base_m, s.heel_m, s.base_width_m, s.base_thickness_m, hd,
                s.stem_top_m]
        if s.key_depth_m > 0:
            want += [s.key_width_m, s.key_depth_m]
        want = sorted(round(v * 1000) for v in want if v > 0)
        assert _dims(_section(doc, st.section_type)) == want, st.section_type
    # S01 stem height by hand: P003 top 52.35 - founding 48.60 - base 0.35 = 3.40 m
    assert stem_heights(gm["S01"])[0] == pytest.approx(3.40)


def test_no_toe_section_has_no_zero_dimension(tmp_path):
    r = sample_result()
    st = r.section_types[1]
    sec = replace(st.section, toe_m=0.0, base_width_m=st.section.base_width_m - 0.45)
    r = replace(r, section_types=(r.section_types[0], replace(st, section=sec)),
                panels=tuple(replace(pr, section=sec) if pr.section_type == "S02" else pr
                             for pr in r.panels))
    write_sections(r, tmp_path / "s.dxf")
    doc, _ = _read(tmp_path / "s.dxf")
    assert not doc.audit().has_errors
    dims = _dims(_section(doc, "S02"))
    assert 0 not in dims and 1350 in dims and 1050 in dims  # B 1.35, heel 1.35 - 0.30


def test_section_outline_levels_and_conditions(out, result):
    from shapely.geometry import Polygon
    doc, _ = _read(out / "sections.dxf")
    gm = governing_map(result)
    for st in result.section_types:
        ents = _section(doc, st.section_type)
        s = st.section
        outline = [e for e in ents if e.dxftype() == "LWPOLYLINE" and e.dxf.layer == c.L_CONCRETE]
        assert len(outline) == 1 and outline[0].closed
        poly = Polygon(outline[0].get_points("xy"))
        pr = gm[st.section_type]
        hd, _ = stem_heights(pr)
        # area by hand: base B tb + stem trapezium (taper to z_top, parallel above) + key
        hc = pr.panel.retained_top_m - pr.panel.founding_m - s.base_thickness_m
        area = (s.base_width_m * s.base_thickness_m
                + 0.5 * (s.stem_base_m + s.stem_top_m) * hc + s.stem_top_m * (hd - hc)
                + s.key_depth_m * s.key_width_m)
        assert poly.area == pytest.approx(area, rel=1e-9)
        texts = " ".join([e.dxf.text for e in ents if e.dxftype() == "TEXT"]
                         + [e.plain_text() for e in ents if e.dxftype() == "MTEXT"]
                         + [a.dxf.text for e in ents if e.dxftype() == "INSERT"
                            for a in e.attribs])
        p = pr.panel
        assert f"UNDERSIDE OF BASE +{p.founding_m:.3f}" in texts
        assert f"FRONT GROUND +{p.front_min_m:.3f}" in texts
        assert f"+{max(p.wall_top_start_m, p.wall_top_end_m):.3f}" in texts
        assert f"retained height h = {p.retained_height_m:.2f} m" in texts
        assert "surcharge q = 10 kPa" in texts and "phi'k = 32 deg" in texts
        assert "water behind the wall at +49.800" in texts


def _dot_centres(doc, ents):
    out = []
    for e in ents:
        if e.dxftype() == "INSERT" and e.dxf.layer == c.L_DOTS:
            for one in e.multi_insert():
                out += [v.dxf.center for v in one.virtual_entities() if v.dxftype() == "CIRCLE"]
    return out


def test_bars_inside_the_concrete(out, result):
    from shapely.geometry import LineString, Point, Polygon
    doc, _ = _read(out / "sections.dxf")
    for st in result.section_types:
        ents = _section(doc, st.section_type)
        poly = Polygon([e for e in ents if e.dxftype() == "LWPOLYLINE"
                        and e.dxf.layer == c.L_CONCRETE][0].get_points("xy"))
        inner = poly.buffer(-0.049)  # every bar at least ~cover (50 mm) from the faces
        for e in ents:
            if e.dxftype() == "LWPOLYLINE" and e.dxf.layer == c.L_BARS:
                assert inner.buffer(1e-6).contains(LineString(e.get_points("xy")))
        centres = _dot_centres(doc, ents)
        assert centres
        # one dot per distribution bar cut: stem horizontals up both faces at their
        # spacing, base distribution bars along both mats
        rf = st.reinforcement
        hd, _ = stem_heights(governing_map(result)[st.section_type])
        n_h = len(np.arange(st.section.base_thickness_m + rf.stem_horizontal.spacing_mm / 2000,
                            st.section.base_thickness_m + hd - 0.05,
                            rf.stem_horizontal.spacing_mm / 1000))
        n_d = len(np.arange(0.05 + rf.base_distribution.spacing_mm / 2000,
                            st.section.base_width_m - 0.05, rf.base_distribution.spacing_mm / 1000))
        assert len(centres) == 2 * n_h + 2 * n_d
        for p in centres:
            assert poly.contains(Point(p.x, p.y))


# --- plan ------------------------------------------------------------------------------

def test_plan_joints_and_real_coordinates(out, result):
    doc, msp = _read(out / "plan.dxf")
    joints = msp.query(f'LINE[layer=="{c.L_JOINTS}"]')
    assert len(joints) == len(result.joints)
    prof = result.profiles
    from shapely.geometry import LineString, Point
    by = {pr.panel.panel: pr for pr in result.panels}
    for j in result.joints:
        x, y = prof.xy_at(np.array([j.ch_m]))
        segs = [LineString([tuple(ln.dxf.start)[:2], tuple(ln.dxf.end)[:2]]) for ln in joints]
        seg = min(segs, key=lambda g: g.distance(Point(x[0], y[0])))
        assert seg.distance(Point(x[0], y[0])) < 1e-6  # across the wall line at the joint
        # from the toe edge to the heel edge of the wider base of the two panels
        toe = max(by[n].section.toe_m for n in (j.left, j.right))
        heel = max(by[n].section.base_width_m - by[n].section.toe_m for n in (j.left, j.right))
        assert seg.length == pytest.approx(toe + heel)
    walls = msp.query(f'LWPOLYLINE[layer=="{c.L_WALL_PLAN}"]')
    assert len(walls) == len(result.runs)
    # run 1 starts at ch 2 on the invented grid: (5202, 1800)
    starts = sorted(tuple(np.round(w.get_points("xy")[0], 6)) for w in walls)
    assert starts[0] == (5202.0, 1800.0)
    words = _all_text(doc)
    for pr in result.panels:
        assert pr.panel.panel in words


def test_no_plan_without_coordinates(tmp_path):
    r = sample_result(with_plan=False)
    assert write_plan(r, tmp_path / "plan.dxf") is None
    assert not (tmp_path / "plan.dxf").exists()


# --- previews --------------------------------------------------------------------------

def test_previews_non_empty_and_sized(out, result):
    img = mpimg.imread(str(out / "elevation.png"))
    assert img.shape[:2] == (previews.ELEVATION_PX[1], previews.ELEVATION_PX[0])
    rgb = img[:, :, :3]
    assert (rgb < 0.5).any() and rgb.mean() > 0.8  # drawing on a white background
    import re
    pages = lambda b: len(re.findall(rb"/Type\s*/Page(?![s\w])", b))  # noqa: E731
    sheets = {n: len([x for x in _read(out / n)[0].layout_names() if x != "Model"])
              for n in ("elevation.dxf", "sections.dxf", "plan.dxf")}
    pdf = (out / "sections.pdf").read_bytes()
    assert pdf.startswith(b"%PDF") and pages(pdf) == sheets["sections.dxf"]
    assert pages((out / "sheets.pdf").read_bytes()) == sum(sheets.values())


def test_dashed_line_arrives_whole_with_the_dashes_ezdxf_cuts(out):
    """A dashed line (the surveyed ground) reaches the sheets' back end as one stroke
    with its dash pattern, which the PDF draws; ezdxf's own linetype stage
    (``LinePolicy.ACCURATE``) cuts the same line into dashes of those lengths."""
    from ezdxf.addons.drawing import RenderContext
    from ezdxf.addons.drawing.config import LinePolicy
    from ezdxf.addons.drawing.frontend import UniversalFrontend

    doc, msp = _read(out / "elevation.dxf")
    line = max((e for e in msp if e.dxftype() == "LWPOLYLINE" and e.dxf.layer == c.L_GROUND),
               key=lambda e: len(e))
    pts = np.array(line.get_points("xy"))
    col = sheets_pdf.Collector()
    fe = sheets_pdf.frontend(doc, col)
    fe.ctx.set_current_layout(msp)
    fe.draw_entities([line])
    ((_colr, _w, dash), segs), = col.strokes.items()
    assert len(dash) == 2 and len(segs) == 1 and np.allclose(segs[0], pts)
    cut = sheets_pdf.Collector()
    ref = UniversalFrontend(RenderContext(doc), sheets_pdf.TextPipeline(cut),
                            config=replace(sheets_pdf.frontend(doc, col).config,
                                           line_policy=LinePolicy.ACCURATE))
    ref.ctx.set_current_layout(msp)
    ref.draw_entities([line])
    pieces = [np.asarray(s) for ss in cut.strokes.values() for s in ss]
    drawn = sum(float(np.hypot(*(p[-1] - p[0]))) for p in pieces)
    total = float(np.sum(np.hypot(*np.diff(pts, axis=0).T)))
    starts = sum(1 for a, b in zip(pieces, pieces[1:]) if not np.allclose(a[-1], b[0])) + 1
    assert drawn / total == pytest.approx(dash[0] / sum(dash), abs=0.02)
    assert abs(starts - total / sum(dash)) <= 1.5


def test_collector_draws_what_the_dxf_holds(out):
    """The sheets' back end receives the section's strokes: the concrete outline's
    corners are among the collected vertices (black, ACI 7 on white); its texts arrive
    as text, placed where ezdxf places them."""
    doc, msp = _read(out / "sections.dxf")
    ins = [e for e in msp if e.dxftype() == "INSERT"][0]
    col = sheets_pdf.Collector()
    fe = sheets_pdf.frontend(doc, col)
    fe.ctx.set_current_layout(msp)
    fe.set_background("#ffffff")
    fe.draw_entities([ins])
    outline = [v for v in ins.virtual_entities() if v.dxftype() == "LWPOLYLINE"
               and v.dxf.layer == c.L_CONCRETE][0]
    corners = np.array(outline.get_points("xy"))
    black = np.concatenate([np.asarray(s) for (colr, _w, _dash), segs in col.strokes.items()
                            if colr == "#000000" for s in segs])
    for p in corners:
        assert np.min(np.hypot(*(black - p).T)) < 1e-6
    # every TEXT of the block arrives as its string, at its rotation and cap height;
    # a left-aligned one starts at its alignment point, its baseline within one cap
    # height of it (ezdxf's DXF alignment: bottom, baseline, middle or top)
    plain = [v for v in ins.virtual_entities() if v.dxftype() == "TEXT"]
    assert plain
    for v in plain:
        rot = v.dxf.get("rotation", 0.0)
        same = [t for t in col.texts if t[0] == v.dxf.text and abs(t[3] - rot) < 1e-9
                and abs(t[4] - v.dxf.height) < 1e-9]
        assert same, v.dxf.text
        if v.dxf.get("halign", 0) == 0 and not rot:
            at = v.dxf.align_point if v.dxf.get("valign", 0) else v.dxf.insert
            assert any(abs(t[1] - at[0]) < 1e-9 and abs(t[2] - at[1]) <= v.dxf.height
                       for t in same)


def test_sheets_pdf_reads_back_with_its_text(out, result):
    """pypdf reads sheets.pdf: one page per paper-space layout at the layout's paper
    size (mm to points, 72 / 25.4), and the sheets' words are PDF text (every panel
    name and the caution are found by text extraction)."""
    pypdf = pytest.importorskip("pypdf")
    reader = pypdf.PdfReader(str(out / "sheets.pdf"))
    sizes = [(lay.dxf.paper_width, lay.dxf.paper_height)
             for n in ("elevation.dxf", "sections.dxf", "plan.dxf")
             for lay in sheets_pdf.sheet_layouts(_read(out / n)[0])]
    assert len(reader.pages) == len(sizes)
    for page, (w, h) in zip(reader.pages, sizes):
        box = page.mediabox
        assert (float(box.width), float(box.height)) == pytest.approx(
            (w * 72 / 25.4, h * 72 / 25.4), abs=0.01)
    words = " ".join(p.extract_text() for p in reader.pages)
    for pr in result.panels:
        assert pr.panel.panel in words
    assert "PRELIMINARY" in words
    sec = pypdf.PdfReader(str(out / "sections.pdf"))
    assert len(sec.pages) == len(sheets_pdf.sheet_layouts(_read(out / "sections.dxf")[0]))


def test_any_section_type_name_makes_a_valid_block(tmp_path):
    """Type names come from sections.csv: characters a DXF name may not hold are
    replaced in the block name (unique), and the title keeps the name as given."""
    r = sample_result()
    names = {"S01": '=HYPERLINK("x")', "S02": "=HYPERLINK(<x>)"}
    r = replace(r, section_types=tuple(replace(st, section_type=names[st.section_type])
                                       for st in r.section_types),
                panels=tuple(replace(pr, section_type=names[pr.section_type])
                             for pr in r.panels),
                bar_schedule=tuple(replace(b, section=names[b.section])
                                   for b in r.bar_schedule))
    write_sections(r, tmp_path / "s.dxf")
    doc, msp = _read(tmp_path / "s.dxf")
    assert not doc.audit().has_errors
    blocks = sorted(e.dxf.name for e in msp.query("INSERT"))
    assert blocks == [BLOCK_PREFIX + "_HYPERLINK__x__", BLOCK_PREFIX + "_HYPERLINK__x__-2"]
    words = _all_text(doc)
    assert 'SECTION =HYPERLINK("x")' in words and "SECTION =HYPERLINK(<x>)" in words


@settings(max_examples=50, deadline=None)
@given(st.text(alphabet=st.sampled_from(list("%^\\{}dcpuoJ PI0-9ab\n\t°")), max_size=24))
def test_text_escape_is_read_back_as_given(text):
    """A name written through ``text_escape`` (TEXT, ATTRIB) or ``mtext_escape`` (MTEXT)
    reads back by ezdxf's ``plain_text()`` as given: no %%d, %%c, %%u or caret code is
    read into it (DXF special-character codes and caret notation); a line break or tab,
    which one line of text cannot hold, reads back as a space. (A caret that ends the
    text is dropped by ezdxf's reading, ``fix_one_line_text``; not tested.)"""
    assume(not text.endswith("^"))
    doc = ezdxf.new("R2013")
    msp = doc.modelspace()
    shown = "".join(ch if ch.isprintable() else " " for ch in text)
    assert msp.add_text(c.text_escape(text)).plain_text() == shown
    assert msp.add_mtext(c.mtext_escape(text)).plain_text() == shown


def test_names_with_dxf_codes_are_drawn_as_given(tmp_path):
    """A project name and a section type name holding %%d, %%u, %%c and ^J (DXF codes
    for degree, underline, diameter and a line feed) are shown as written, in the
    title-block attributes, the section titles and sheets.pdf's text."""
    pypdf = pytest.importorskip("pypdf")
    name = "Yard 50%%d %%u under %%c dia ^J caret 7%"
    tname = "T%%c1^J"
    r = sample_result()
    first = r.section_types[0].section_type

    def rename(t):
        return tname if t == first else t
    r = replace(r, site=replace(r.site, project=replace(r.site.project, name=name)),
                section_types=tuple(replace(t, section_type=rename(t.section_type))
                                    for t in r.section_types),
                panels=tuple(replace(p, section_type=rename(p.section_type)) for p in r.panels),
                bar_schedule=tuple(replace(b, section=rename(b.section))
                                   for b in r.bar_schedule))
    names = write_drawings(r, tmp_path)
    assert "sheets.pdf" in names
    for f in ("elevation.dxf", "sections.dxf"):
        doc = ezdxf.readfile(str(tmp_path / f))
        assert not doc.audit().has_errors
        assert name in _all_text(doc).splitlines()
    assert f"SECTION {tname}" in _all_text(ezdxf.readfile(str(tmp_path / "sections.dxf")))
    words = " ".join(p.extract_text() for p in pypdf.PdfReader(str(tmp_path / "sheets.pdf")).pages)
    assert name in words and "°" not in words and "Ø" not in words


@pytest.mark.parametrize("name", ["elevation.dxf", "sections.dxf", "plan.dxf"])
def test_viewport_extents_hold_ezdxfs_bounding_boxes(out, name):
    # what a viewport draws is chosen by these boxes: each must hold the entity as
    # ezdxf measures it (model space and every block; inserts go by their point)
    from ezdxf import bbox
    doc = _read(out / name)[0]
    for lay in [doc.modelspace()] + list(doc.blocks):
        es = [e for e in lay if e.dxftype() != "INSERT"]
        if not es:
            continue
        ours = sheets_pdf.extents(es)
        for e, o, b in zip(es, ours, bbox.multi_flat(es, fast=True)):
            if b.has_data:
                assert (o[0] <= b.extmin.x + 1e-9 and o[1] <= b.extmin.y + 1e-9
                        and o[2] >= b.extmax.x - 1e-9 and o[3] >= b.extmax.y - 1e-9), e.dxftype()


def _on_line(line, pts):
    """Largest distance (y) of the points ``pts`` from the open line ``line`` (x
    increasing), by linear interpolation between its vertices."""
    return float(np.max(np.abs(np.interp(pts[:, 0], line[:, 0], line[:, 1]) - pts[:, 1])))


def test_straight_stretches_drawn_by_their_ends():
    """A grade sampled every 0.5 m (hand data: 60 m + 0.4 %, then -1.0 % from 0+100)
    keeps its ends and its change of grade; a 1 mm zigzag is kept whole."""
    ch = np.arange(0.0, 200.0 + 1e-9, 0.5)
    z = np.where(ch <= 100.0, 60.0 + 0.004 * ch, 60.4 - 0.010 * (ch - 100.0))
    kept = c.straight_vertices(np.column_stack([ch, z]))
    assert kept[:, 0].tolist() == [0.0, 100.0, 200.0]
    assert _on_line(kept, np.column_stack([ch, z])) < 1e-9
    zig = np.column_stack([ch[:9], 60.0 + 0.001 * (np.arange(9) % 2)])
    assert np.array_equal(c.straight_vertices(zig), zig)


@given(st.lists(st.tuples(st.integers(1, 40), st.integers(-30, 30)), min_size=1, max_size=8),
       st.floats(0.1, 2.0))
@settings(max_examples=60, deadline=None)
def test_straight_vertices_keep_the_line(grades, step):
    """Grades of whole per mille on a regular step, levels to the millimetre: what is
    kept is a subset of the points in order, and every point lies on the line drawn
    through it (within 1e-6 m)."""
    ch, z = [0.0], [50.0]
    for n, permille in grades:
        for _ in range(n):
            ch.append(ch[-1] + step)
            z.append(round(z[-1] + permille / 1000.0 * step, 3))
    xy = np.column_stack([ch, z])
    kept = c.straight_vertices(xy)
    assert kept[0].tolist() == xy[0].tolist() and kept[-1].tolist() == xy[-1].tolist()
    assert np.isin(kept[:, 0], xy[:, 0]).all() and (np.diff(kept[:, 0]) > 0).all()
    assert _on_line(kept, xy) <= 1e-6


def test_finished_level_drawn_through_its_points(out, result):
    """Every finished-level point of the sample lies on the drawn finished line (a
    straight stretch by its ends)."""
    doc, msp = _read(out / "elevation.dxf")
    datum, ve = read_transform(doc)
    line = np.vstack([np.array(e.get_points("xy"))
                      for e in msp.query(f'LWPOLYLINE[layer=="{c.L_FINISHED}"]')])
    prof = result.profiles
    pts = np.column_stack([prof.finished_ch, prof.finished_level])
    drawn = np.column_stack([line[:, 0], level_of(line[:, 1], datum, ve)])
    assert _on_line(drawn, pts) < 1e-6


def _bezier(p0, piece, t):
    """A point at t of the cubic Bezier curve from p0 with (x1, y1, x2, y2, x, y)."""
    x1, y1, x2, y2, x, y = piece
    u = 1.0 - t
    return (u ** 3 * p0[0] + 3 * u * u * t * x1 + 3 * u * t * t * x2 + t ** 3 * x,
            u ** 3 * p0[1] + 3 * u * u * t * y1 + 3 * u * t * t * y2 + t ** 3 * y)


def test_a_circle_reaches_the_sheets_as_curves_on_the_circle():
    """A CIRCLE arrives at the sheets' back end as cubic Bezier curves, not flattened:
    every point of them lies on the circle within 3e-4 of its radius (the usual cubic
    approximation of a circle's quarter departs from it by 2.7e-4 r at most: common
    practice, the figure from memory), and the page draws them as curves."""
    doc = ezdxf.new()
    msp = doc.modelspace()
    circle = msp.add_circle((12.0, -3.0), radius=4.0)
    col = sheets_pdf.Collector()
    fe = sheets_pdf.frontend(doc, col)
    fe.ctx.set_current_layout(msp)
    fe.draw_entities([circle])
    assert col.strokes == {}
    (items,) = col.curves.values()
    (start, pieces), = items
    assert len(pieces) >= 4 and all(len(p) == 6 for p in pieces)
    p0 = start
    for piece in pieces:
        for t in np.linspace(0.0, 1.0, 9):
            x, y = _bezier(p0, piece, t)
            assert abs(math.hypot(x - 12.0, y + 3.0) - 4.0) <= 3e-4 * 4.0
        p0 = piece[4:]
    assert p0 == pytest.approx(start)  # closed


def test_a_quadratic_curve_is_raised_to_the_same_cubic():
    """A quadratic Bezier piece becomes the cubic through the same points (degree
    elevation: control points p0 + 2/3 (q - p0) and p + 2/3 (q - p))."""
    from ezdxf.npshapes import NumpyPath2d
    from ezdxf.path import Path as DxfPath

    p = DxfPath((1.0, 2.0))
    p.curve3_to((7.0, 2.0), (3.0, 6.0))
    p.line_to((7.0, -1.0))
    start, pieces = sheets_pdf.bezier_pieces(NumpyPath2d(p))
    assert start == (1.0, 2.0) and pieces[1] == (7.0, -1.0)
    for t in np.linspace(0.0, 1.0, 11):
        u = 1.0 - t  # the quadratic from (1, 2) through control (3, 6) to (7, 2)
        qx = u * u * 1.0 + 2 * u * t * 3.0 + t * t * 7.0
        qy = u * u * 2.0 + 2 * u * t * 6.0 + t * t * 2.0
        assert _bezier(start, pieces[0], t) == pytest.approx((qx, qy), abs=1e-12)


def _collected(col):
    """What a Collector holds: per kind, (key, numbers) of every item, sorted by the
    numbers rounded to 1e-6 (the order of items aside)."""
    strokes = [(k, [c for p in v for c in p]) for k, items in col.strokes.items()
               for v in items]
    curves = [(k, list(s) + [c for p in pieces for c in p])
              for k, items in col.curves.items() for s, pieces in items]
    texts = [((t[0],), list(t[1:5])) for t in col.texts]
    return [sorted(kind, key=lambda e: (e[0], [round(v, 6) for v in e[1]]))
            for kind in (strokes, curves, texts)]


def test_a_grid_insert_is_drawn_as_ezdxf_draws_it_cell_by_cell():
    """The sheets' front end draws a grid insert (MINSERT) as its first cell moved to
    each other cell; ezdxf's own front end (``UniversalFrontend``) decomposes every
    cell. Both give the same strokes, curves and texts, for a rotated grid of a block
    of a circle, a line and a text, nested in a scaled and rotated insert."""
    from ezdxf.addons.drawing import RenderContext
    from ezdxf.addons.drawing.frontend import UniversalFrontend

    doc = ezdxf.new()
    cell = doc.blocks.new("CELL")
    cell.add_circle((0.0, 0.0), 0.2)
    cell.add_line((0.0, 0.0), (0.5, 0.1))
    cell.add_text("x", height=0.1, dxfattribs={"insert": (0.1, -0.3)})
    outer = doc.blocks.new("OUTER")
    grid = outer.add_blockref("CELL", (1.0, 2.0), dxfattribs={"rotation": 30.0})
    grid.grid(size=(2, 3), spacing=(0.7, 1.1))
    msp = doc.modelspace()
    ins = msp.add_blockref("OUTER", (5.0, -1.0),
                           dxfattribs={"rotation": 15.0, "xscale": 2.0, "yscale": 2.0})
    got, ref = sheets_pdf.Collector(), sheets_pdf.Collector()
    fe = sheets_pdf.frontend(doc, got)
    fe.ctx.set_current_layout(msp)
    fe.draw_entities([ins])
    fe_ref = UniversalFrontend(RenderContext(doc), sheets_pdf.TextPipeline(ref),
                               config=fe.config)
    fe_ref.ctx.set_current_layout(msp)
    fe_ref.draw_entities([ins])
    a, b = _collected(got), _collected(ref)
    assert [len(kind) for kind in a] == [6, 6, 6]  # a line, a circle, a text a cell
    for kind_a, kind_b in zip(a, b):
        assert [k for k, _ in kind_a] == [k for k, _ in kind_b]
        for (_, va), (_, vb) in zip(kind_a, kind_b):
            assert np.allclose(va, vb, rtol=0.0, atol=1e-9)


def test_title_block_dated_by_the_outputs_issue_date(monkeypatch):
    # as the report and the workbook: SOURCE_DATE_EPOCH 1700000000 is 2023-11-14
    # 22:13:20 UTC (the reproducible-builds convention: seconds since 1970 UTC)
    from wallrun.outputs.dxf import titles
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1700000000")
    assert titles.fields(None, "t", "s", "1:50", "1 of 1")["DATE"] == "2023-11-14"

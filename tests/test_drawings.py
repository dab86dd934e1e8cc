"""Drawings: the DXF files are read back with ezdxf and checked against the result.

The reference for every figure is the hand-built result of ``tests/sample_result.py``
(its panel, joint, section and bar-schedule objects), not the drawing code.
"""

from __future__ import annotations

import math
import sys
import time
from dataclasses import replace
from pathlib import Path

import ezdxf
import matplotlib.image as mpimg
import numpy as np
import pytest

sys.path.insert(0, str(Path(__file__).parent))
from sample_result import long_result, sample_result  # noqa: E402

from wallrun.outputs import drafting as d  # noqa: E402
from wallrun.outputs.dxf_elevation import level_of, read_transform, write_elevation  # noqa: E402
from wallrun.outputs.dxf_plan import write_plan  # noqa: E402
from wallrun.outputs.dxf_sections import (APPID, governing_panel, stem_heights,  # noqa: E402
                                          write_sections)
from wallrun.outputs.previews import write_previews  # noqa: E402


@pytest.fixture(scope="module")
def result():
    return sample_result()


@pytest.fixture(scope="module")
def out(tmp_path_factory, result):
    o = tmp_path_factory.mktemp("drawings")
    write_elevation(result, o / "elevation.dxf")
    write_sections(result, o / "sections.dxf")
    assert write_plan(result, o / "plan.dxf") is True
    write_previews(o)
    return o


def _read(path):
    doc = ezdxf.readfile(str(path))
    return doc, doc.modelspace()


@pytest.mark.parametrize("name", ["elevation.dxf", "sections.dxf", "plan.dxf"])
def test_files_audit_clean_r2013_metres(out, name):
    doc, msp = _read(out / name)
    assert doc.dxfversion == "AC1027"  # R2013
    assert doc.units == ezdxf.units.M
    assert not doc.audit().has_errors
    # colours and linetypes by layer; every entity on a layer of the scheme
    for e in msp:
        assert e.dxf.layer in d.LAYERS, (e.dxftype(), e.dxf.layer)
        if e.dxf.layer != d.L_KEY:
            assert e.dxf.get("color", 256) == 256
    for lay in d.LAYERS.values():
        assert doc.layers.get(lay.name).color == lay.color
    assert d.TEXT_STYLE in doc.styles and d.DIM_STYLE in doc.dimstyles


# --- elevation -------------------------------------------------------------------------

def test_one_joint_line_per_joint(out, result):
    _, msp = _read(out / "elevation.dxf")
    lines = msp.query(f'LINE[layer=="{d.L_JOINTS}"]')
    assert len(lines) == len(result.joints) == 3
    xs = sorted(round(ln.dxf.start.x, 6) for ln in lines)
    assert xs == sorted(round(j.ch_m, 6) for j in result.joints)
    for ln in lines:
        assert math.isclose(ln.dxf.start.x, ln.dxf.end.x)


def test_underside_of_base_levels_equal_founding(out, result):
    doc, msp = _read(out / "elevation.dxf")
    datum, ve = read_transform(doc)
    assert ve == result.site.drawings.vertical_exaggeration == 2.0
    polys = msp.query(f'LWPOLYLINE[layer=="{d.L_UNDERSIDE}"]')
    assert len(polys) == len(result.runs) == 2
    got = sorted((tuple(np.round(p.get_points("xy"), 9).ravel()) for p in polys))
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
    assert got  # both runs present


def test_elevation_wall_top_profiles_labels_and_ticks(out, result):
    doc, msp = _read(out / "elevation.dxf")
    datum, ve = read_transform(doc)
    tops = msp.query(f'LWPOLYLINE[layer=="{d.L_TOP}"]')
    top_pts = np.vstack([np.array(p.get_points("xy")) for p in tops])
    for pr in result.panels:
        p = pr.panel
        for ch, z in ((p.ch_start_m, p.wall_top_start_m), (p.ch_end_m, p.wall_top_end_m)):
            hit = np.isclose(top_pts[:, 0], ch) & np.isclose(level_of(top_pts[:, 1], datum, ve), z)
            assert hit.any(), (p.panel, ch, z)
    # existing ground passes through every survey point (hand data of the sample)
    g = msp.query(f'LWPOLYLINE[layer=="{d.L_GROUND}"]')[0]
    gp = np.array(g.get_points("xy"))
    prof = result.profiles
    for ch, z in zip(prof.g_ch, prof.g_lv):
        k = np.argmin(abs(gp[:, 0] - ch))
        assert gp[k, 0] == pytest.approx(ch)
        assert level_of(gp[k, 1], datum, ve) == pytest.approx(z)
    texts = [t.dxf.text for t in msp.query("TEXT")]
    for pr in result.panels:
        assert pr.panel.panel in texts and pr.section_type in texts
    # ticks every 10 m from 0+000 to 0+040
    for lab in ("0+000", "0+010", "0+020", "0+030", "0+040"):
        assert lab in texts
    joined = " ".join(texts)
    assert result.site.project.name in joined and "WR-TEST-014" in joined
    assert "Scale: 1:" in joined and "exaggeration x2" in joined
    assert "qualified engineer" in joined and "national annex" in joined
    for word in ("overall", "settlement", "seismic", "compaction", "frost", "chemical"):
        assert word in joined


def test_datum_round_and_ve_one_gives_true_levels(tmp_path):
    r = sample_result(vertical_exaggeration=1.0)
    write_elevation(r, tmp_path / "e.dxf")
    doc, msp = _read(tmp_path / "e.dxf")
    datum, ve = read_transform(doc)
    assert ve == 1.0
    und = msp.query(f'LWPOLYLINE[layer=="{d.L_UNDERSIDE}"]')[0]
    assert und.get_points("xy")[0][1] == pytest.approx(r.panels[0].panel.founding_m)


# --- sections --------------------------------------------------------------------------

def _group(doc, st):
    return list(doc.groups.get(f"{d.SECTION_GROUP_PREFIX}{st}"))


def test_every_bar_mark_appears_per_section(out, result):
    doc, _ = _read(out / "sections.dxf")
    for st in result.section_types:
        ents = _group(doc, st.section_type)
        # the bar table: one MTEXT per column, one line per schedule row
        table = {line for e in ents if e.dxftype() == "MTEXT" and e.dxf.layer == d.L_TABLE
                 for line in e.plain_text().split("\n")}
        # the leader descriptions: one MTEXT per side, one line per leader
        marks = [line for e in ents if e.dxftype() == "MTEXT" and e.dxf.layer == d.L_MARKS
                 for line in e.plain_text().split("\n")]
        rows = [b for b in result.bar_schedule if b.section == st.section_type]
        assert rows
        for b in rows:
            assert b.bar_mark in table, (st.section_type, b.bar_mark)
            # each mark at a leader (sample groups are small, so every mark is named)
            assert any(b.bar_mark in t.split("  ")[0].split(", ") and f"{b.bar_mm} mm" in t
                       and f"({b.member})" in t for t in marks), (st.section_type, b.bar_mark)
        # one leader polyline per description line, each ending in a closed circle:
        # two half-circle arcs (bulge 1) round its anchor
        leaders = [e for e in ents if e.dxftype() == "LWPOLYLINE" and e.dxf.layer == d.L_MARKS]
        assert len(leaders) == len(marks)
        for e in leaders:
            pts = e.get_points("xyb")
            assert [p[2] for p in pts[-3:]] == [1.0, 1.0, 0.0]
            assert pts[-1][:2] == pytest.approx(pts[-3][:2])
    assert len(doc.groups) >= len(result.section_types)


def test_dimensions_equal_section_dimensions(out, result):
    doc, _ = _read(out / "sections.dxf")
    for st in result.section_types:
        s = st.section
        dims = {}
        for e in _group(doc, st.section_type):
            if e.dxftype() == "DIMENSION":
                name = e.get_xdata(APPID)[0].value
                dims[name] = e.get_measurement()
        want = {"base_width_m": s.base_width_m, "toe_m": s.toe_m, "heel_m": s.heel_m,
                "base_thickness_m": s.base_thickness_m, "stem_base_m": s.stem_base_m,
                "stem_top_m": s.stem_top_m,
                "stem_height_m": stem_heights(governing_panel(result, st.section_type))[0]}
        if s.key_depth_m > 0:
            want |= {"key_depth_m": s.key_depth_m, "key_width_m": s.key_width_m}
        want = {k: v for k, v in want.items() if v > 0}  # no zero-length dimensions
        assert set(dims) == set(want), st.section_type
        for k, v in want.items():
            assert dims[k] == pytest.approx(v, abs=1e-9), (st.section_type, k)
    # S01 stem height by hand: P003 top 52.35 - founding 48.60 - base 0.35 = 3.40 m
    assert stem_heights(governing_panel(result, "S01"))[0] == pytest.approx(3.40)


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
    names = {e.get_xdata(APPID)[0].value: e.get_measurement()
             for e in _group(doc, "S02") if e.dxftype() == "DIMENSION"}
    assert "toe_m" not in names
    assert names["base_width_m"] == pytest.approx(1.35)
    assert names["heel_m"] == pytest.approx(1.35 - 0.30)


def test_section_outline_levels_and_conditions(out, result):
    doc, _ = _read(out / "sections.dxf")
    for st in result.section_types:
        ents = _group(doc, st.section_type)
        s = st.section
        outline = [e for e in ents if e.dxftype() == "LWPOLYLINE" and e.dxf.layer == d.L_CONCRETE]
        assert len(outline) == 1 and outline[0].closed
        from shapely.geometry import Polygon
        poly = Polygon(outline[0].get_points("xy"))
        pr = governing_panel(result, st.section_type)
        hd, _ = stem_heights(pr)
        # area by hand: base B tb + stem trapezium (taper to z_top, parallel above) + key
        hc = pr.panel.retained_top_m - pr.panel.founding_m - s.base_thickness_m
        area = (s.base_width_m * s.base_thickness_m
                + 0.5 * (s.stem_base_m + s.stem_top_m) * hc + s.stem_top_m * (hd - hc)
                + s.key_depth_m * s.key_width_m)
        assert poly.area == pytest.approx(area, rel=1e-9)
        texts = " ".join([e.dxf.text for e in ents if e.dxftype() == "TEXT"]
                         + [e.plain_text() for e in ents if e.dxftype() == "MTEXT"])
        p = pr.panel
        assert f"UNDERSIDE OF BASE +{p.founding_m:.3f}" in texts
        assert f"FRONT GROUND +{p.front_min_m:.3f}" in texts
        assert f"+{max(p.wall_top_start_m, p.wall_top_end_m):.3f}" in texts
        assert f"retained height h = {p.retained_height_m:.2f} m" in texts
        assert "surcharge q = 10 kPa" in texts and "phi'k = 32 deg" in texts
        assert "water behind the wall at +49.800" in texts
        circles = dots(ents)
        assert circles  # distribution bars drawn as dots
        # one dot per distribution bar cut: stem horizontals at their spacing up the
        # drawn stem on both faces, base distribution bars along both mats
        rf = st.reinforcement
        n_h = len(np.arange(s.base_thickness_m + rf.stem_horizontal.spacing_mm / 2000,
                            s.base_thickness_m + hd - 0.05, rf.stem_horizontal.spacing_mm / 1000))
        n_d = len(np.arange(0.05 + rf.base_distribution.spacing_mm / 2000,
                            s.base_width_m - 0.05, rf.base_distribution.spacing_mm / 1000))
        assert len(circles) == 2 * n_h + 2 * n_d
        bars = [e for e in ents if e.dxftype() == "LWPOLYLINE" and e.dxf.layer == d.L_BARS]
        assert len(bars) >= 3


def dots(ents):
    """The distribution-bar circles of a section: the MINSERTs of one-circle blocks on
    the cross-bar layer expanded to their circles (in model coordinates)."""
    out = []
    for e in ents:
        if e.dxftype() == "INSERT" and e.dxf.layer == d.L_DOTS:
            for one in e.multi_insert():
                out += [v for v in one.virtual_entities() if v.dxftype() == "CIRCLE"]
        elif e.dxftype() == "CIRCLE" and e.dxf.layer == d.L_DOTS:
            out.append(e)
    return out


def test_bars_inside_the_concrete(out, result):
    doc, _ = _read(out / "sections.dxf")
    from shapely.geometry import LineString, Point, Polygon
    for st in result.section_types:
        ents = _group(doc, st.section_type)
        poly = Polygon([e for e in ents if e.dxftype() == "LWPOLYLINE"
                        and e.dxf.layer == d.L_CONCRETE][0].get_points("xy"))
        inner = poly.buffer(-0.049)  # every bar at least ~cover (50 mm) from the faces
        for e in ents:
            if e.dxftype() == "LWPOLYLINE" and e.dxf.layer == d.L_BARS:
                assert inner.buffer(1e-6).contains(LineString(e.get_points("xy")))
        for c in dots(ents):
            assert poly.contains(Point(c.dxf.center.x, c.dxf.center.y))


# --- plan ------------------------------------------------------------------------------

def test_plan_joints_and_real_coordinates(out, result):
    doc, msp = _read(out / "plan.dxf")
    joints = msp.query(f'LINE[layer=="{d.L_JOINTS}"]')
    assert len(joints) == len(result.joints)
    prof = result.profiles
    for j in result.joints:
        x, y = prof.xy_at(np.array([j.ch_m]))
        mids = [((ln.dxf.start.x + ln.dxf.end.x) / 2, (ln.dxf.start.y + ln.dxf.end.y) / 2)
                for ln in joints]
        assert min(math.hypot(mx - x[0], my - y[0]) for mx, my in mids) < 1e-6
    walls = msp.query(f'LWPOLYLINE[layer=="{d.L_WALL_PLAN}"]')
    assert len(walls) == len(result.runs)
    # run 1 starts at ch 2 on the invented grid: (5202, 1800)
    starts = sorted(tuple(np.round(w.get_points("xy")[0], 6)) for w in walls)
    assert starts[0] == (5202.0, 1800.0)
    texts = [t.dxf.text for t in msp.query("TEXT")]
    for pr in result.panels:
        assert pr.panel.panel in texts


def test_no_plan_without_coordinates(tmp_path):
    r = sample_result(with_plan=False)
    assert write_plan(r, tmp_path / "plan.dxf") is False
    assert not (tmp_path / "plan.dxf").exists()


# --- previews --------------------------------------------------------------------------

def test_previews_non_empty_and_sized(out):
    img = mpimg.imread(str(out / "elevation.png"))
    assert img.shape[:2] == (600, 1800)
    rgb = img[:, :, :3]
    assert (rgb < 0.5).any() and rgb.mean() > 0.8  # drawing on a white background
    pdf = (out / "sections.pdf").read_bytes()
    assert pdf.startswith(b"%PDF") and len(pdf) > 10000
    import re
    # one page per section type (2) and one of the whole sheet
    assert len(re.findall(rb"/Type\s*/Page(?![s\w])", pdf)) == 3


def test_flagged_panel_is_marked(tmp_path):
    r = sample_result()
    pr = replace(r.panels[1], status="flagged", reason="no section passes")
    r = replace(r, panels=(r.panels[0], pr) + r.panels[2:])
    write_elevation(r, tmp_path / "e.dxf")
    _, msp = _read(tmp_path / "e.dxf")
    assert "S01 FLAGGED" in [t.dxf.text for t in msp.query("TEXT")]


def test_long_wall_is_fast(tmp_path):
    r = long_result(10000.0)
    assert len(r.panels) > 1200
    t0 = time.perf_counter()
    write_elevation(r, tmp_path / "elevation.dxf")
    write_sections(r, tmp_path / "sections.dxf")
    write_plan(r, tmp_path / "plan.dxf")
    elapsed = time.perf_counter() - t0
    assert elapsed < 6.0, elapsed  # a couple of seconds on a quiet machine
    doc, msp = _read(tmp_path / "elevation.dxf")
    assert len(msp.query(f'LINE[layer=="{d.L_JOINTS}"]')) == len(r.joints)


# --- fast writing --------------------------------------------------------------------

@pytest.mark.parametrize("name", ["elevation.dxf", "sections.dxf", "plan.dxf"])
def test_fast_writer_matches_ezdxf_byte_for_byte(out, name, monkeypatch):
    """drafting.document_text writes the same text as ezdxf's own doc.write."""
    import io
    monkeypatch.setattr(ezdxf.options, "write_fixed_meta_data_for_testing", True)
    doc = ezdxf.readfile(str(out / name))
    s = io.StringIO()
    doc.write(s)
    assert d.document_text(doc) == s.getvalue()


def test_saved_file_is_what_ezdxf_writes(tmp_path, result, monkeypatch):
    """The file save_document writes equals doc.saveas of the same document."""
    monkeypatch.setattr(ezdxf.options, "write_fixed_meta_data_for_testing", True)
    write_sections(result, tmp_path / "s.dxf")
    doc = d.saved_document(tmp_path / "s.dxf")
    doc.saveas(str(tmp_path / "ref.dxf"))
    assert (tmp_path / "s.dxf").read_bytes() == (tmp_path / "ref.dxf").read_bytes()


def test_audit_finds_a_block_reference_cycle():
    """The quicker block-cycle check of the audit still finds a block inserting itself."""
    doc = d.new_document(100)
    blk = doc.blocks.new("LOOP")
    blk.add_blockref("LOOP", (0, 0))
    doc.modelspace().add_blockref("LOOP", (0, 0))
    with pytest.raises(RuntimeError, match="cycle"):
        d.audit_or_raise(doc, "loop.dxf")


@pytest.mark.parametrize("name", ["elevation.dxf", "sections.dxf", "plan.dxf"])
def test_preview_extents_equal_ezdxf_extents(out, name):
    """The previews' quicker extents are ezdxf's fast extents, for the whole drawing
    and for each section group (without its MTEXTs, as the pages frame them)."""
    from wallrun.outputs.previews import _ezdxf_box, _group_box
    doc, msp = _read(out / name)
    assert _group_box(msp, doc) == pytest.approx(_ezdxf_box(msp), abs=0)
    for _name, g in doc.groups:
        ents = [e for e in g if e.dxftype() != "MTEXT"]
        assert _group_box(ents, doc) == pytest.approx(_ezdxf_box(ents), abs=0)


def test_quick_creation_gives_the_same_files(tmp_path, result, monkeypatch):
    """Entities made by drafting.add_entity directly give the same files as entities
    made through ezdxf's own validating new_entity (CHECKED_CREATION)."""
    monkeypatch.setattr(ezdxf.options, "write_fixed_meta_data_for_testing", True)
    files = {}
    for checked in (False, True):
        monkeypatch.setattr(d, "CHECKED_CREATION", checked)
        o = tmp_path / str(checked)
        o.mkdir()
        write_sections(result, o / "sections.dxf")
        write_elevation(result, o / "elevation.dxf")
        write_plan(result, o / "plan.dxf")
        files[checked] = {p.name: p.read_bytes() for p in o.iterdir()}
        # the documents in memory too (the previews draw them): every database
        # entity, SEQENDs of INSERTs included, with the same attributes and reactors
        doc = d.saved_document(o / "sections.dxf")
        files[checked]["memory"] = [
            (e.dxftype(), repr(sorted((k, str(v)) for k, v in
                                      e.dxf.all_existing_dxf_attribs().items())),
             tuple(e.reactors.get()) if e.reactors else ())
            for e in doc.entitydb.values()]
    assert files[False] == files[True]

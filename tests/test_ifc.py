"""End to end on an unseen LandXML site, and model.ifc read back with ifcopenshell.

The site is made here (a TIN of uneven levels and an alignment of a straight and a
left-hand arc, the wall 3 m right of it, outside the curve), designed by the command
line. Checked against things outside wallrun: the wall line's positions by the closed
forms of a line and a circle, the ground by matplotlib's linear interpolation on the
same triangles, and the model by ifcopenshell's own geometry kernel (volumes of the
solids) and its placements.
"""

from __future__ import annotations

import csv
import math

import ifcopenshell
import ifcopenshell.geom
import ifcopenshell.util.element as ue
import ifcopenshell.util.placement as up
import ifcopenshell.util.shape as us
import ifcopenshell.validate
import matplotlib.tri as mtri
import numpy as np
import pytest

import landxml_doc as D
from wallrun.cli import main
from wallrun.outputs.ifc import JOINT_GAP_M, footing_outline, stem_outline

P0 = (200.0, 100.0)  # start of the alignment, heading east, station 2000
L1 = 40.0  # the straight
R = 60.0  # then an arc turning left
L2 = 50.0
OFF = 3.0  # the wall line: 3 m right, on the outside of the arc (radius 63 m)
STA0 = 2000.0
CENTRE = (P0[0] + L1, P0[1] + R)
XS = np.arange(185.0, 310.0, 6.0)
YS = np.arange(85.0, 136.0, 5.0)


def wall_xy(sta):
    """The wall line at stations ``sta`` by hand: on the straight (x0 + s, y0 - 3); on
    the arc, angle a = (s - 40) / 60 from the start, radius 63 from the centre:
    (cx + 63 sin a, cy - 63 cos a)."""
    s = np.asarray(sta, dtype=float) - STA0
    a = np.clip((s - L1) / R, 0.0, None)
    on_arc = s > L1
    x = np.where(on_arc, CENTRE[0] + (R + OFF) * np.sin(a), P0[0] + s)
    y = np.where(on_arc, CENTRE[1] - (R + OFF) * np.cos(a), P0[1] - OFF)
    return x, y


def ground_z():
    rng = np.random.default_rng(2112)
    return {(float(x), float(y)): round(50.0 + 0.3 * math.sin(x / 7.0) + 0.2 * math.cos(y / 5.0)
                                        + float(rng.uniform(-0.1, 0.1)), 3)
            for y in YS for x in XS}


@pytest.fixture(scope="module")
def job(tmp_path_factory):
    tmp = tmp_path_factory.mktemp("ifc")
    zs = ground_z()
    end = (CENTRE[0] + R * math.sin(L2 / R), CENTRE[1] - R * math.cos(L2 / R))
    prof = D.prof_align("FIN", [("PVI", 2000.0, 51.6), ("ParaCurve", 2045.0, 53.2, 30.0),
                                ("PVI", 2090.0, 52.4)])
    root = D.document([D.grid_surface("EG", XS, YS, lambda x, y: zs[float(x), float(y)])],
                      [D.alignment("Yard road", [D.line(P0, (P0[0] + L1, P0[1])),
                                                 D.curve((P0[0] + L1, P0[1]), CENTRE, end, "ccw",
                                                         length=L2)],
                                   sta_start=STA0, profiles=[prof])], crs="27700")
    site = tmp / "site"
    site.mkdir()
    D.write(root, site / "survey.xml")
    (site / "site.toml").write_text(
        '[project]\nname = "Unseen yard wall"\n\n[profiles]\nlandxml = "survey.xml"\n'
        'alignment = "Yard road"\noffset_m = 3.0\nground_surface = "EG"\n'
        'finished_profile = "FIN"\n\n[wall]\nmax_panel_length_m = 6.0\n'
        'min_panel_length_m = 3.0\ntop = "sloped"\n\n[design]\nsections = "bespoke"\n',
        encoding="utf-8")
    out = tmp / "out"
    rc = main(["design", str(site), "--out", str(out), "--quiet"])
    return rc, out, zs


def rows(path):
    with open(path, newline="", encoding="utf-8") as f:
        return list(csv.DictReader(f))


def test_designs_end_to_end(job):
    rc, out, _ = job
    assert rc in (0, 3)
    assert (out / "model.ifc").exists() and (out / "profiles.csv").exists()
    assert len(rows(out / "panels.csv")) >= 8


def test_ground_profile_matches_an_independent_tin_sampling(job):
    _, out, zs = job
    pr = rows(out / "profiles.csv")
    ch = np.array([float(r["chainage_m"]) for r in pr])
    g = np.array([float(r["ground_m"]) for r in pr])
    x = np.array([float(r["x_m"]) for r in pr])
    y = np.array([float(r["y_m"]) for r in pr])
    hx, hy = wall_xy(ch)
    assert np.max(np.hypot(x - hx, y - hy)) <= 0.001  # on the wall line within 1 mm
    xg, yg = np.meshgrid(XS, YS)
    n = XS.size
    tris = [[j * n + i, j * n + i + 1, (j + 1) * n + i + 1] for j in range(YS.size - 1)
            for i in range(n - 1)] + [[j * n + i, (j + 1) * n + i + 1, (j + 1) * n + i]
                                      for j in range(YS.size - 1) for i in range(n - 1)]
    tri = mtri.Triangulation(xg.ravel(), yg.ravel(), np.array(tris))
    ref = mtri.LinearTriInterpolator(tri, np.array([zs[float(a), float(b)] for a, b in
                                                    zip(xg.ravel(), yg.ravel())]))
    assert np.max(np.abs(g - ref(hx, hy).data)) <= 0.001
    # between the breakpoints too: any station, linear in the file, against the TIN at
    # the wall line's true position
    s = np.linspace(ch[0], ch[-1], 2001)
    sx, sy = wall_xy(s)
    assert np.max(np.abs(np.interp(s, ch, g) - ref(sx, sy).data)) <= 0.001


def test_panel_lengths_along_the_wall_line(job):
    _, out, _ = job
    ps = rows(out / "panels.csv")
    total = sum(float(p["length_m"]) for p in ps)
    a, b = float(ps[0]["ch_start_m"]), float(ps[-1]["ch_end_m"])
    # by hand: straight part 1:1, arc part x 63 / 60
    s0, s1 = a - STA0, b - STA0
    want = (min(s1, L1) - min(s0, L1)) + (R + OFF) / R * (max(s1, L1) - max(s0, L1))
    # (panels.csv gives each length to 1 mm: the sum errs by up to 0.5 mm a panel)
    assert total == pytest.approx(want, abs=0.0005 * len(ps) + 2e-4)
    for p in ps:
        assert float(p["length_m"]) <= 6.0 + 1e-3
        if float(p["ch_start_m"]) >= STA0 + L1:  # on the arc: longer than the stations
            d = float(p["ch_end_m"]) - float(p["ch_start_m"])
            assert float(p["length_m"]) == pytest.approx(d * 63 / 60, abs=2e-3)


@pytest.fixture(scope="module")
def model(job):
    _, out, _ = job
    return ifcopenshell.open(str(out / "model.ifc"))


def _by_panel(model, ifc_class):
    return {ue.get_psets(e)["Wallrun_PanelDesign"]["Panel"]: e for e in model.by_type(ifc_class)}


def test_one_wall_and_one_footing_per_panel(job, model):
    _, out, _ = job
    names = [p["panel"] for p in rows(out / "panels.csv")]
    assert sorted(_by_panel(model, "IfcWall")) == names
    assert sorted(_by_panel(model, "IfcFooting")) == names
    assert len(model.by_type("IfcWall")) == len(model.by_type("IfcFooting")) == len(names)
    assert model.schema == "IFC4"
    (mc,) = model.by_type("IfcMapConversion")
    assert mc.TargetCRS.Name == "EPSG:27700"


def test_model_is_valid_ifc4(model):
    """ifcopenshell's validator: the schema (types, attributes, inverses, unique ids)
    and the EXPRESS where-rules of IFC4."""
    log = ifcopenshell.validate.json_logger()
    ifcopenshell.validate.validate(model, log, express_rules=True)
    assert log.statements == []


def _volume(element) -> float:
    s = ifcopenshell.geom.settings()
    return us.get_volume(ifcopenshell.geom.create_shape(s, element).geometry)


def test_volumes_equal_the_quantities(job, model):
    """ifcopenshell's volume of each solid against the take-off: the stem against its
    Qto NetVolume (concrete_stem), the footing against concrete_base + concrete_key, and
    their sum against panels.csv concrete_m3, within 0.5 %. (The model leaves a 10 mm
    joint gap, 5 mm from each panel beside a joint: 0.17 % of a 6 m panel.)"""
    _, out, _ = job
    assert model.by_type("IfcBooleanClippingResult")  # sloped tops: clipped stems
    walls, feet = _by_panel(model, "IfcWall"), _by_panel(model, "IfcFooting")
    for p in rows(out / "panels.csv"):
        w, f = walls[p["panel"]], feet[p["panel"]]
        vw, vf = _volume(w), _volume(f)
        qw = ue.get_psets(w)["Qto_WallBaseQuantities"]["NetVolume"]
        qf = ue.get_psets(f)["Qto_FootingBaseQuantities"]["NetVolume"]
        assert vw == pytest.approx(qw, rel=0.005) and vf == pytest.approx(qf, rel=0.005)
        assert vw + vf == pytest.approx(float(p["concrete_m3"]), rel=0.005)
        # and no more than the joint gaps take away
        length = float(p["length_m"])
        assert (vw + vf) / float(p["concrete_m3"]) >= 1 - JOINT_GAP_M / length - 1e-3


def test_placements_on_the_wall_line(job, model):
    """Each element is placed at its panel's start on the wall line (less half a joint
    gap beside a joint) at its founding level; the heel lies on the retained side: a
    fill wall 3 m right of its road retains towards the road, i.e. on the left."""
    _, out, _ = job
    (mc,) = model.by_type("IfcMapConversion")
    joints = {j["right"] for j in rows(out / "joints.csv")}
    feet = _by_panel(model, "IfcFooting")
    for e in model.by_type("IfcWall") + model.by_type("IfcFooting"):
        pset = ue.get_psets(e)["Wallrun_PanelDesign"]
        m = up.get_local_placement(e.ObjectPlacement)
        x, y, z = m[0, 3] + mc.Eastings, m[1, 3] + mc.Northings, m[2, 3]
        ch = pset["ChainageStart"]
        # the start, moved along the line by half a gap when a joint is there (on the arc
        # the station moves by the length x 60 / 63)
        shift = JOINT_GAP_M / 2 if pset["Panel"] in joints else 0.0
        s = ch + shift * (R / (R + OFF) if ch - STA0 >= L1 else 1.0)
        hx, hy = wall_xy(s)
        assert math.hypot(x - float(hx), y - float(hy)) <= 0.001
        assert z == pytest.approx(pset["Founding"], abs=1e-9)
    (proj,) = model.by_type("IfcProject")
    rule = ue.get_psets(proj)["Wallrun_Cautions"]["RetainedSide"]
    assert rule == "fill runs retain on the left of increasing chainage"
    # every footing reaches from the toe, right of the wall line, to the heel on its
    # left: the offsets of its corners from the wall line by hand (on the straight
    # y - (100 - 3); on the arc 63 - the distance from the centre), within the 10 mm
    # that a straight piece may depart from the curve
    s = ifcopenshell.geom.settings()
    s.set("use-world-coords", True)
    for f in feet.values():
        v = us.get_vertices(ifcopenshell.geom.create_shape(s, f).geometry)
        x, y = v[:, 0] + mc.Eastings, v[:, 1] + mc.Northings
        on_arc = x > CENTRE[0]
        left = np.where(on_arc, (R + OFF) - np.hypot(x - CENTRE[0], y - CENTRE[1]),
                        y - (P0[1] - OFF))
        pset = ue.get_psets(f)["Wallrun_SectionType"]  # of the footing's type
        assert pset["SectionType"] == ue.get_psets(f)["Wallrun_PanelDesign"]["SectionType"]
        assert left.max() == pytest.approx(pset["BaseWidth"] - pset["Toe"], abs=0.011)
        assert left.min() == pytest.approx(-pset["Toe"], abs=0.011)


def test_outlines_by_hand():
    # a stem 0.35 thick at the base tapering to 0.25 over 2.0 m, drawn to 2.3 m above
    # a 0.4 m base: the taper, then vertical
    s = stem_outline(0.6, 0.4, 0.35, 0.25, 2.0, 2.3)
    assert np.allclose(s, [(0.0, 0.4), (0.35, 0.4), (0.25, 2.4), (0.25, 2.7), (0.0, 2.7)])
    # drawn lower than the taper top: cut at 1.0 m, thickness 0.35 - 0.1 x 1.0 / 2.0
    assert stem_outline(0.6, 0.4, 0.35, 0.25, 2.0, 1.0)[2] == pytest.approx((0.3, 1.4))
    f = footing_outline(0.6, 2.4, 0.4, 0.5, 0.4)
    assert np.allclose(f, [(-0.6, 0.0), (0.0, 0.0), (0.0, -0.5), (0.4, -0.5), (0.4, 0.0),
                           (1.8, 0.0), (1.8, 0.4), (-0.6, 0.4)])


def test_csv_site_without_plan_positions_lies_along_chainage(tmp_path):
    """Without x_m, y_m the model's x is the chainage on a straight line (y = 0) and
    there is no georeference; the heel lies on the left (+y), as the model states."""
    import wallrun
    from wallrun.outputs.ifc import write_ifc

    d = tmp_path / "site"
    d.mkdir()
    (d / "site.toml").write_text('[project]\nname = "Plain yard wall"\n[profiles]\n'
                                 'ground = "g.csv"\nfinished = "f.csv"\n', encoding="utf-8")
    (d / "g.csv").write_text("chainage_m,level_m\n100,20.0\n130,20.0\n", encoding="utf-8")
    (d / "f.csv").write_text("chainage_m,level_m\n100,21.2\n130,21.8\n", encoding="utf-8")
    r = wallrun.design(wallrun.load_site(d))
    write_ifc(r, tmp_path / "model.ifc")
    m = ifcopenshell.open(str(tmp_path / "model.ifc"))
    assert m.by_type("IfcMapConversion") == ()
    joints = {j.right for j in r.joints}
    for pr in r.panels:
        (w,) = [e for e in m.by_type("IfcWall") if e.Tag == pr.panel.panel]
        p = up.get_local_placement(w.ObjectPlacement)
        shift = JOINT_GAP_M / 2 if pr.panel.panel in joints else 0.0
        assert p[:3, 3] == pytest.approx([pr.panel.ch_start_m + shift, 0.0,
                                          pr.panel.founding_m], abs=1e-9)
        assert _volume(w) == pytest.approx(pr.quantities["concrete_stem"], rel=0.005)
        s = ifcopenshell.geom.settings()
        s.set("use-world-coords", True)
        (f,) = [e for e in m.by_type("IfcFooting") if e.Tag == pr.panel.panel]
        v = us.get_vertices(ifcopenshell.geom.create_shape(s, f).geometry)
        assert v[:, 1].max() == pytest.approx(pr.section.base_width_m - pr.section.toe_m)
        assert v[:, 1].min() == pytest.approx(-pr.section.toe_m)


def test_the_same_design_gives_the_same_file(job, tmp_path, monkeypatch):
    """Written twice with SOURCE_DATE_EPOCH (the reproducible-builds convention) the
    model is the same bytes: every GlobalId comes from the project and the element,
    the api-made relations' too (a random one each time otherwise), and the header
    carries the file's name and the fixed time of issue."""
    import wallrun
    from wallrun.outputs.ifc import write_ifc

    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1700000000")  # 2023-11-14T22:13:20Z
    r = wallrun.design(wallrun.load_site(job[1].parent / "site"))
    a, b = tmp_path / "a.ifc", tmp_path / "b.ifc"
    write_ifc(r, a)
    write_ifc(r, b)
    assert a.read_bytes() == b.read_bytes()
    m = ifcopenshell.open(str(a))
    assert m.header.file_name.name == "model.ifc"
    assert m.header.file_name.time_stamp == "2023-11-14T22:13:20+00:00"
    ids = [e.GlobalId for e in m.by_type("IfcRoot")]
    assert len(ids) == len(set(ids))

"""LandXML sites (wallrun.landxml through wallrun.site.load_site): exact TIN sampling,
alignments against hand values, ProfAlign levels, the settings' rules and every kind
of bad file (exit 2, naming the file and the element). The LandXML files are written
by the tests with lxml (tests/landxml_doc.py)."""

from __future__ import annotations

import json

import math
from pathlib import Path

import matplotlib.tri as mtri
import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import landxml_doc as D
from refused import assert_refused
from wallrun.cli import main
from wallrun.errors import InputError
from wallrun.landxml import read_alignment
from wallrun.profile import build_profiles
from wallrun.site import load_site

SITES = Path(__file__).parent.parent / "sites"
XS = np.arange(0.0, 101.0, 10.0)
YS = np.arange(-20.0, 21.0, 10.0)


def plane(x, y):
    return 50.0 + 0.02 * x - 0.1 * y


def site_toml(**profiles) -> str:
    keys = {"landxml": "survey.xml", "alignment": "A", "ground_surface": "EG",
            "finished_surface": "FG"}
    keys.update(profiles)
    lines = [f"{k} = {v!r}" if isinstance(v, (int, float)) else f'{k} = "{v}"'
             for k, v in keys.items() if v is not None]
    return "[project]\nname = \"LandXML test\"\n\n[profiles]\n" + "\n".join(lines) + "\n"


def make(tmp_path, root, toml=None, name="site"):
    d = tmp_path / name
    d.mkdir()
    D.write(root, d / "survey.xml")
    (d / "site.toml").write_text(toml or site_toml(), encoding="utf-8")
    return d


def straight_doc(sta_start=100.0, surfaces=None, profiles=(), **kw):
    surfaces = surfaces if surfaces is not None else [
        D.grid_surface("EG", XS, YS, plane), D.grid_surface("FG", XS, YS, lambda x, y: 53.0)]
    return D.document(surfaces, [D.alignment("A", [D.line((5.0, 0.0), (95.0, 0.0))],
                                             sta_start=sta_start, profiles=profiles)], **kw)


# --- exact sampling ----------------------------------------------------------------------

def test_planar_tin_straight_line_exact(tmp_path):
    # alignment along y = 0 from x = 5, station 100 there; wall 3 m right: y = -3.
    site = load_site(make(tmp_path, straight_doc(), site_toml(offset_m=3.0)))
    g = site.ground
    assert g.chainage_m[0] == 100.0 and g.chainage_m[-1] == 190.0
    assert np.allclose(g.x_m, g.chainage_m - 95.0) and np.allclose(g.y_m, -3.0)
    assert np.allclose(g.level_m, plane(g.x_m, g.y_m), atol=1e-12)
    # a breakpoint at every edge crossed: the vertical edges x = 10, 20, .. 90 and the
    # diagonals of the cells -10 <= y <= 0 (from (x0, -10) to (x0 + 10, 0)) at x0 + 7
    want = sorted({100.0, 190.0} | {x + 95.0 for x in range(10, 100, 10)}
                  | {x + 7.0 + 95.0 for x in range(0, 100, 10) if 5 <= x + 7 <= 95})
    assert g.chainage_m.tolist() == pytest.approx(want)


@settings(max_examples=30, deadline=None)
@given(x0=st.floats(2, 30), y0=st.floats(-15, 15), ang=st.floats(-0.5, 0.5),
       length=st.floats(10, 60), off=st.floats(-3, 3))
def test_planar_tin_any_line_exact(tmp_path_factory, x0, y0, ang, length, off):
    """A planar TIN gives exact levels along any straight line, at the breakpoints and
    (linear between) anywhere between them."""
    x1, y1 = x0 + length * math.cos(ang), y0 + length * math.sin(ang)
    if not (abs(y1) < 15 and x1 < 98 and abs(y0 - off * math.cos(ang)) < 19
            and abs(y1 - off * math.cos(ang)) < 19):
        return
    root = D.document([D.grid_surface("EG", XS, YS, plane),
                       D.grid_surface("FG", XS, YS, lambda x, y: 53.0)],
                      [D.alignment("A", [D.line((x0, y0), (x1, y1))], sta_start=0.0)])
    d = make(tmp_path_factory.mktemp("any"), root, site_toml(offset_m=off))
    g = load_site(d).ground
    assert np.allclose(g.level_m, plane(g.x_m, g.y_m), atol=1e-9)
    s = np.linspace(g.chainage_m[0], g.chainage_m[-1], 101)
    x = x0 + s * math.cos(ang) + off * math.sin(ang)
    y = y0 + s * math.sin(ang) - off * math.cos(ang)
    assert np.allclose(np.interp(s, g.chainage_m, g.level_m), plane(x, y), atol=1e-9)


def test_uneven_tin_matches_an_independent_sampling(tmp_path):
    """Levels linear between the breakpoints equal matplotlib's linear interpolation on
    the same triangles at any station of a straight wall line (exact within a
    triangle's plane)."""
    rng = np.random.default_rng(7)
    zs = {}

    def z_of(x, y):
        return zs.setdefault((x, y), 40.0 + float(rng.uniform(-2, 2)))

    eg = D.grid_surface("EG", XS, YS, z_of)
    root = D.document([eg, D.grid_surface("FG", XS, YS, lambda x, y: 53.0)],
                      [D.alignment("A", [D.line((3.0, -12.0), (97.0, 14.0))], sta_start=0.0)])
    g = load_site(make(tmp_path, root, site_toml(offset_m=1.5))).ground
    pts = np.array(sorted(zs))
    xg, yg = np.meshgrid(XS, YS)
    tri = mtri.Triangulation(xg.ravel(), yg.ravel(), _grid_triangles())
    ref = mtri.LinearTriInterpolator(tri, np.array([zs[float(x), float(y)] for x, y in
                                                    zip(xg.ravel(), yg.ravel())]))
    h = math.atan2(26.0, 94.0)
    s = np.linspace(g.chainage_m[0], g.chainage_m[-1], 997)
    x = 3.0 + s * math.cos(h) + 1.5 * math.sin(h)
    y = -12.0 + s * math.sin(h) - 1.5 * math.cos(h)
    assert np.allclose(np.interp(s, g.chainage_m, g.level_m), ref(x, y).data, atol=1e-9)
    assert len(pts) == XS.size * YS.size


def _grid_triangles():
    n = XS.size
    t = []
    for j in range(YS.size - 1):
        for i in range(n - 1):
            a, b, c, d = j * n + i, j * n + i + 1, (j + 1) * n + i + 1, (j + 1) * n + i
            t += [[a, b, c], [a, c, d]]
    return np.array(t)


def test_planar_tin_curved_line_and_station_step(tmp_path):
    # a 30 m straight, then an arc of R = 40 m turning left for 40 m, wall 2 m right
    # (outside the curve: radius 42 m); the plane gives exact levels at every sample,
    # which lie on the offset line; station_step_m = 5 adds every multiple of 5
    r = 40.0
    c = (35.0, -15.0 + r)
    a = 1.0
    end = (c[0] + r * math.sin(a), c[1] - r * math.cos(a))
    root = D.document([D.grid_surface("EG", XS, np.arange(-20.0, 41.0, 10.0), plane),
                       D.grid_surface("FG", XS, np.arange(-20.0, 41.0, 10.0),
                                      lambda x, y: 53.0)],
                      [D.alignment("A", [D.line((5.0, -15.0), (35.0, -15.0)),
                                         D.curve((35.0, -15.0), c, end, "ccw", length=40.0)],
                                   sta_start=0.0)])
    g = load_site(make(tmp_path, root, site_toml(offset_m=2.0, station_step_m=5.0))).ground
    assert np.allclose(g.level_m, plane(g.x_m, g.y_m), atol=1e-9)
    arc = g.chainage_m >= 30.0
    rad = np.hypot(g.x_m[arc] - c[0], g.y_m[arc] - c[1])
    assert np.all(np.abs(rad - 42.0) <= 0.0005 + 1e-9)
    assert set(np.arange(0.0, 70.0, 5.0)) <= set(np.round(g.chainage_m, 9))
    # the length along the wall line: 30 m straight and 42 x 1 rad of arc, measured on
    # the sampled polyline: each chord c of the arc is shorter than its arc by
    # c^3 / (24 R^2) (series of 2 R sin(c / 2R)); chords of at most sqrt(8 R e) = 0.41 m
    # (sagitta e = 0.5 mm) over 42 m lose at most 102 x 1.6e-6 = 0.17 mm
    prof = build_profiles(load_site(tmp_path / "site"))
    assert prof.length_along(0.0, 70.0) == pytest.approx(72.0, abs=2e-4)
    assert prof.length_along(30.0, 70.0) == pytest.approx(42.0, abs=2e-4)
    assert prof.length_along(0.0, 30.0) == pytest.approx(30.0, abs=1e-9)


def test_line_clothoid_arc_alignment_read_against_hand_values(tmp_path):
    # the alignment of tests/test_alignment.py written as LandXML: the clothoid's End
    # and the arc's Centre and End are the hand values worked there; the arc's end at
    # 0.5 rad: (1069.973363 + 100 sin 0.5, 2100.665715 - 100 cos 0.5)
    # = (1117.915917, 2012.907459)
    els = [D.line((1000.0, 2000.0), (1050.0, 2000.0)),
           D.spiral((1050.0, 2000.0), (1076.722845, 2000.0), (1089.840296, 2002.659057),
                    40.0, "INF", 100.0, "ccw"),
           D.curve((1089.840296, 2002.659057), (1069.973363, 2100.665715),
                   (1117.915917, 2012.907459), "ccw", length=30.0)]
    D.write(D.document([], [D.alignment("Main", els, sta_start=500.0)]), tmp_path / "a.xml")
    al = read_alignment(tmp_path / "a.xml", "a.xml", "Main")
    x, y = al.offset_xy([525.0, 590.0, 605.0, 605.0, 620.0], 0.0)
    assert x == pytest.approx([1025.0, 1089.840296, 1104.263144, 1104.263144, 1117.915917],
                              abs=1e-5)
    assert y == pytest.approx([2000.0, 2002.659057, 2006.728444, 2006.728444, 2012.907459],
                              abs=1e-5)
    x2, y2 = al.offset_xy([605.0], 2.0)
    assert (x2[0], y2[0]) == pytest.approx((1104.948939, 2004.849698), abs=1e-5)
    assert al.sta_end == pytest.approx(620.0, abs=1e-5)


def test_prof_align_parabola_and_crossfall_against_hand_levels(tmp_path):
    # PVIs (100, 50.0), (200, 52.0) with an 80 m parabolic curve, (300, 50.8); the hand
    # levels on the centre line are those of test_alignment: 51.52 at 180, 51.68 at 200,
    # 51.70 at the high point 210, 51.52 at 240; at the wall, 3 m right with a crossfall
    # of -0.025: 3 x -0.025 = -0.075 lower
    prof = D.prof_align("FIN", [("PVI", 100.0, 50.0), ("ParaCurve", 200.0, 52.0, 80.0),
                                ("PVI", 300.0, 50.8)])
    xs = np.arange(0.0, 221.0, 20.0)
    root = D.document([D.grid_surface("EG", xs, YS, lambda x, y: 48.0)],
                      [D.alignment("A", [D.line((0.0, 0.0), (220.0, 0.0))], sta_start=90.0,
                                   profiles=[prof])])
    d = make(tmp_path, root, site_toml(offset_m=3.0, finished_surface=None,
                                       finished_profile="FIN", finished_crossfall=-0.025))
    site = load_site(d)
    assert site.finished is None and len(site.alignment) == 3
    p = build_profiles(site)
    z = p.finished([180.0, 200.0, 210.0, 240.0, 150.0])
    assert z == pytest.approx(np.array([51.52, 51.68, 51.70, 51.52, 51.0]) - 0.075, abs=1e-12)
    # the profile covers 100 to 300, the alignment 90 to 310: the run is 100 to 300
    assert (p.ch_start, p.ch_end) == (100.0, 300.0)


def test_prof_align_circular_curve_sampled_within_half_a_millimetre(tmp_path):
    # crest of R = 2000 m on +-2 % grades at (200, 52): 0.399960 m below the PVI there
    # (test_alignment); the finished profile is sampled along the circle
    prof = D.prof_align("FIN", [("PVI", 100.0, 50.0), ("CircCurve", 200.0, 52.0, 2000.0),
                                ("PVI", 300.0, 50.0)])
    root = D.document([D.grid_surface("EG", np.arange(0.0, 221.0, 20.0), YS,
                                      lambda x, y: 48.0)],
                      [D.alignment("A", [D.line((0.0, 0.0), (220.0, 0.0))], sta_start=90.0,
                                   profiles=[prof])])
    site = load_site(make(tmp_path, root, site_toml(finished_surface=None,
                                                    finished_profile="FIN")))
    p = build_profiles(site)
    assert float(p.finished(200.0)) == pytest.approx(52.0 - 0.399960, abs=0.0005)
    assert site.finished.x_m is not None


def test_millimetre_units_and_crs(tmp_path):
    mm = lambda v: v * 1000.0  # noqa: E731
    root = D.document([D.grid_surface("EG", XS * 1000, YS * 1000,
                                      lambda x, y: mm(plane(x / 1000, y / 1000))),
                       D.grid_surface("FG", XS * 1000, YS * 1000, lambda x, y: 53000.0)],
                      [D.alignment("A", [D.line((5000.0, 0.0), (95000.0, 0.0))],
                                   sta_start=100000.0)], linear_unit="millimeter", crs="27700")
    site = load_site(make(tmp_path, root))
    assert site.ground.chainage_m[0] == pytest.approx(100.0)
    assert np.allclose(site.ground.level_m, plane(site.ground.x_m, site.ground.y_m))
    assert site.crs == "EPSG:27700"


# --- settings rules ----------------------------------------------------------------------

@pytest.mark.parametrize("toml,fragment", [
    (site_toml(ground="g.csv"), "[profiles] ground: give either the CSV profiles"),
    (site_toml(alignment=None), "[profiles] alignment: required with landxml"),
    (site_toml(finished_surface=None), "[profiles] finished_surface: required with landxml"),
    (site_toml(finished_profile="P"), ("[profiles] finished_profile: give either "
                                       "finished_surface or finished_profile")),
    (site_toml(finished_crossfall=0.02), ("[profiles] finished_crossfall: applies to "
                                          "finished_profile only")),
    (site_toml(offset_m=2000.0), "[profiles] offset_m: must be >= -1000 and <= 1000"),
    (("[project]\nname = \"x\"\n[profiles]\nground = \"g.csv\"\nfinished = \"f.csv\"\n"
      "offset_m = 2.0\n"), "[profiles] offset_m: applies to a LandXML source only"),
    ("[project]\nname = \"x\"\n[profiles]\nfinished = \"f.csv\"\n",
     "[profiles] ground: required key is missing"),
])
def test_profile_keys_rules(tmp_path, capsys, toml, fragment):
    d = make(tmp_path, straight_doc(), toml)
    assert main(["check", str(d)]) == 2
    err = capsys.readouterr().err
    assert fragment in err, err


# --- bad files: exit 2, the file and the element named, nothing written ---------------

def _bad(tmp_path, capsys, root_or_text, *fragments, toml=None):
    d = tmp_path / "site"
    d.mkdir(parents=True)
    if isinstance(root_or_text, str):
        (d / "survey.xml").write_text(root_or_text, encoding="utf-8")
    else:
        D.write(root_or_text, d / "survey.xml")
    (d / "site.toml").write_text(toml or site_toml(offset_m=3.0), encoding="utf-8")
    return assert_refused(d, tmp_path / "out", capsys, *fragments)


def test_missing_surface_named_with_those_that_exist(tmp_path, capsys):
    _bad(tmp_path, capsys, straight_doc(),
         "survey.xml: no Surface named 'EGX' ([profiles] ground_surface); the file has "
         "Surface 'EG', 'FG'", toml=site_toml(ground_surface="EGX"))


def test_missing_alignment_named_with_those_that_exist(tmp_path, capsys):
    _bad(tmp_path, capsys, straight_doc(),
         "survey.xml: no Alignment named 'Road' ([profiles] alignment); the file has "
         "Alignment 'A'", toml=site_toml(alignment="Road"))


def test_missing_prof_align(tmp_path, capsys):
    prof = D.prof_align("FIN", [("PVI", 100.0, 50.0), ("PVI", 190.0, 52.0)])
    _bad(tmp_path, capsys, straight_doc(profiles=[prof]),
         "Alignment 'A': no ProfAlign named 'FG' ([profiles] finished_profile); the "
         "alignment has ProfAlign 'FIN'",
         toml=site_toml(finished_surface=None, finished_profile="FG"))


def test_wall_line_leaving_the_surface_names_the_station(tmp_path, capsys):
    # cell x 50..60, y -10..0 left out: the wall line y = -3 (3 m right of the
    # alignment along y = 0, station 100 at x = 5) leaves the surface at x = 50,
    # station 100 + 45 = 145
    eg = D.grid_surface("EG", XS, YS, plane, drop={(5, 1)})
    _bad(tmp_path, capsys, straight_doc(surfaces=[eg, D.grid_surface("FG", XS, YS,
                                                                     lambda x, y: 53)]),
         "survey.xml: Surface 'EG' ([profiles] ground_surface): the wall line (Alignment "
         "'A' at offset_m 3) leaves the surface at station 145.000")


def test_wall_line_starting_off_the_surface(tmp_path, capsys):
    _bad(tmp_path, capsys, straight_doc(), "starts off the surface at station 100.000",
         toml=site_toml(offset_m=25.0))


def test_faces_referring_to_missing_points(tmp_path, capsys):
    root = straight_doc()
    f = root.find(f".//{{{D.NS}}}F")
    f.text = "1 2 999"
    err = _bad(tmp_path, capsys, root, "Surface 'EG' F: point id 999 not among the Pnts "
                                       "of the surface")
    line = _line_of(tmp_path / "site" / "survey.xml", "<F>1 2 999</F>")
    assert f"survey.xml:{line}: Surface 'EG' F: point id 999" in err


def test_imperial_units_refused(tmp_path, capsys):
    _bad(tmp_path, capsys, straight_doc(imperial=True),
         "Units/Imperial: imperial units (linearUnit=\"USSurveyFoot\"): wallrun reads "
         "metric LandXML only")


def test_malformed_numbers(tmp_path, capsys):
    root = straight_doc()
    p = root.findall(f".//{{{D.NS}}}P")[6]
    p.text = "0.0 abc 51.0"
    err = _bad(tmp_path, capsys, root, "Surface 'EG' P id=7: 'abc' is not a number")
    line = _line_of(tmp_path / "site" / "survey.xml", "0.0 abc 51.0")
    assert f"survey.xml:{line}: Surface 'EG' P id=7" in err
    # in an alignment too, with its line number
    root = straight_doc()
    root.find(f".//{{{D.NS}}}End").text = "0.0 9x5"
    err = _bad(tmp_path / "b", capsys, root, "Alignment 'A' Line #1 End: '9x5' is not a number")
    line = _line_of(tmp_path / "b" / "site" / "survey.xml", "0.0 9x5")
    assert f"survey.xml:{line}: Alignment 'A' Line #1 End" in err


def _line_of(path, text) -> int:
    """The 1-based line of the file holding ``text``."""
    for i, ln in enumerate(path.read_text(encoding="utf-8").splitlines(), 1):
        if text in ln:
            return i
    raise AssertionError(text)


def test_point_with_two_numbers_refused(tmp_path, capsys):
    root = straight_doc()
    root.findall(f".//{{{D.NS}}}P")[0].text = "0.0 0.0"
    _bad(tmp_path, capsys, root, "Surface 'EG' P id=1: expected 'northing easting "
                                 "elevation', got 2 values")


def test_not_xml_and_not_landxml(tmp_path, capsys):
    _bad(tmp_path, capsys, "<LandXML><Units>", "survey.xml:1: not well-formed XML")
    _bad(tmp_path / "b", capsys, "<?xml version='1.0'?>\n<Other xmlns='urn:x'/>",
         "survey.xml:2: the root element is <{urn:x}Other>; expected <LandXML>")


def test_broken_alignment_refused(tmp_path, capsys):
    # a gap of 2 m between a line's end and the next line's start
    root = D.document([D.grid_surface("EG", XS, YS, plane),
                       D.grid_surface("FG", XS, YS, lambda x, y: 53.0)],
                      [D.alignment("A", [D.line((5.0, 0.0), (40.0, 0.0)),
                                         D.line((42.0, 0.0), (90.0, 0.0))], sta_start=0.0)])
    _bad(tmp_path, capsys, root, "Alignment 'A' Line #2: starts 2.000 m from the end of "
                                 "the element before it")


def test_spiral_that_does_not_reach_its_end_point(tmp_path, capsys):
    # the clothoid of the hand test (end (1089.840296, 2002.659057) from (1050, 2000))
    # with an End 0.3 m away from where its length and radii take it
    root = D.document([], [D.alignment("A", [
        D.spiral((1050.0, 2000.0), (1070.0, 2000.0), (1089.84, 2002.96), 40.0, "INF",
                 100.0, "ccw")])])
    d = tmp_path / "x.xml"
    D.write(root, d)
    with pytest.raises(InputError, match=r"Spiral #1: the clothoid from Start with this "
                                         r"length and radii ends 0.30\d m from its End"):
        read_alignment(d, "x.xml", "A")


def test_landxml_file_missing(tmp_path, capsys):
    d = make(tmp_path, straight_doc(), site_toml(landxml="other.xml"))
    assert main(["check", str(d)]) == 2
    assert "[profiles] landxml: file 'other.xml' not found in the site folder" in \
        capsys.readouterr().err


# --- profile CSV header spellings --------------------------------------------------------

def test_common_header_spellings_with_a_note(tmp_path):
    d = tmp_path / "csv"
    d.mkdir()
    (d / "site.toml").write_text("[project]\nname = \"x\"\n[profiles]\nground = \"g.csv\"\n"
                                 "finished = \"f.csv\"\n", encoding="utf-8")
    (d / "g.csv").write_text("Station,Elevation,Easting,Northing\n0,10,100,200\n"
                             "10,10.5,110,200\n20,10,120,200\n", encoding="utf-8")
    (d / "f.csv").write_text("CHAINAGE, level\n0,12\n20,12\n", encoding="utf-8")
    site = load_site(d)
    assert site.ground.chainage_m.tolist() == [0.0, 10.0, 20.0]
    assert site.ground.level_m.tolist() == [10.0, 10.5, 10.0]
    assert site.ground.x_m.tolist() == [100.0, 110.0, 120.0]
    assert site.ground.y_m.tolist() == [200.0, 200.0, 200.0]
    assert site.finished.level_m.tolist() == [12.0, 12.0]
    assert ("g.csv:1: columns read as Station -> chainage_m, Elevation -> level_m, "
            "Easting -> x_m, Northing -> y_m") in site.warnings
    assert "f.csv:1: columns read as CHAINAGE -> chainage_m, level -> level_m" in site.warnings


def test_demo_site_reads(capsys):
    # sites/service-yard-bend: a straight, a clothoid, an 80 m arc, a clothoid and a
    # straight from station 1000 to 1210; the wall 4.5 m right, outside the bend
    site = load_site(SITES / "service-yard-bend")
    assert site.warnings == () and site.crs == "EPSG:27700"
    g = site.ground
    assert g.chainage_m[0] == 1000.0 and g.chainage_m[-1] == pytest.approx(1210.0, abs=1e-6)
    p = build_profiles(site)
    # outside the arc (stations 1090 to 1140) the wall line is 84.5 / 80 times longer
    assert p.length_along(1095.0, 1135.0) == pytest.approx(40.0 * 84.5 / 80.0, abs=1e-3)
    # (the file gives coordinates to 0.1 mm: the straight is 60 m within that)
    assert p.length_along(1000.0, 1060.0) == pytest.approx(60.0, abs=1e-4)
    assert main(["check", str(SITES / "service-yard-bend")]) == 0
    capsys.readouterr()
    # check gives each run's length along the wall line, as design gives the panels'
    # (one run here: its station difference is shorter than the wall outside the bend)
    assert main(["check", "--json", str(SITES / "service-yard-bend")]) == 0
    (run,) = json.loads(capsys.readouterr().out)["runs"]
    along = p.length_along(run["ch_start_m"], run["ch_end_m"])
    assert run["length_m"] == pytest.approx(along, abs=1e-3)
    assert along > run["ch_end_m"] - run["ch_start_m"] + 4.0

"""Site folder reading and validation (wallrun.site.load_site and the exit-2 path)."""

from __future__ import annotations

import os
from pathlib import Path

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from wallrun import factors
from wallrun.cli import main
from wallrun.errors import InputError
from wallrun.settings import Backfill, Design, Foundation, Steel, Wall
from wallrun.site import _Problems, load_site, read_profile

MALFORMED = Path(__file__).parent / "malformed"
SITES = Path(__file__).parent.parent / "sites"

TOML = """[project]
name = "Test wall"

[profiles]
ground = "ground.csv"
finished = "finished.csv"
"""
GROUND = "chainage_m,level_m\n0,10.00\n10,10.00\n20,10.00\n30,10.00\n"
FINISHED = "chainage_m,level_m\n0,10.00\n15,12.00\n30,10.50\n"


def make_site(tmp_path: Path, toml: str = TOML, ground: str = GROUND,
              finished: str = FINISHED, **extra: str) -> Path:
    d = tmp_path / "site"
    d.mkdir()
    files = {"site.toml": toml, "ground.csv": ground, "finished.csv": finished, **extra}
    for name, text in files.items():
        (d / name).write_text(text, encoding="utf-8")
    return d


def snapshot(folder: Path) -> dict:
    return {str(p.relative_to(folder)): (p.stat().st_mtime_ns, p.read_bytes())
            for p in sorted(folder.rglob("*")) if p.is_file()}


def bad(tmp_path, capsys, *fragments, **site_files):
    """The site fails `check` and `design` with exit 2, every fragment appears in the
    messages, no traceback, and nothing is written or changed."""
    d = make_site(tmp_path, **site_files)
    before = snapshot(d)
    assert main(["check", str(d)]) == 2
    err = capsys.readouterr().err
    for f in fragments:
        assert f in err, (f, err)
    assert "Traceback" not in err
    out = tmp_path / "out"
    assert main(["design", str(d), "--out", str(out), "--quiet"]) == 2
    err2 = capsys.readouterr().err
    for f in fragments:
        assert f in err2
    assert not out.exists()
    assert snapshot(d) == before
    return err


# --- the bad inputs of issue 2, one test each ------------------------------------------

def test_empty_file(tmp_path, capsys):
    bad(tmp_path, capsys, "ground.csv: empty file", ground="")


def test_no_header(tmp_path, capsys):
    bad(tmp_path, capsys, "ground.csv:1: no header row", ground="0,10\n10,10\n20,10\n")


def test_missing_column(tmp_path, capsys):
    bad(tmp_path, capsys, "finished.csv:2: missing column 'level_m'",
        finished="# finished levels\nchainage_m\n0\n10\n")


def test_text_in_number_column(tmp_path, capsys):
    # physical line 5: comment (1), header (2), rows 3, 4, 5
    bad(tmp_path, capsys, "ground.csv:5: chainage_m: 'ch20' is not a number",
        ground="# survey of 3 March\nchainage_m,level_m\n0,10\n10,10\nch20,10\n")


def test_blank_level(tmp_path, capsys):
    bad(tmp_path, capsys, "ground.csv:3: level_m: blank value",
        ground="chainage_m,level_m\n0,10\n10,\n20,10\n")


def test_nan_level(tmp_path, capsys):
    bad(tmp_path, capsys, "ground.csv:3: level_m: 'nan' is not a number",
        ground="chainage_m,level_m\n0,10\n10,nan\n20,10\n")


def test_duplicate_chainage(tmp_path, capsys):
    bad(tmp_path, capsys, "ground.csv:4: chainage_m 10 repeats the previous point (line 3)",
        ground="chainage_m,level_m\n0,10\n10,10\n10,10.5\n20,10\n")


def test_decreasing_chainage(tmp_path, capsys):
    bad(tmp_path, capsys, "ground.csv:4: chainage_m 5 is less than the previous point's 10",
        ground="chainage_m,level_m\n0,10\n10,10\n5,10\n30,10\n")


def test_single_point(tmp_path, capsys):
    bad(tmp_path, capsys, "finished.csv:2: a single point", finished="chainage_m,level_m\n0,10\n")


def test_profiles_do_not_overlap(tmp_path, capsys):
    bad(tmp_path, capsys, "do not overlap", finished="chainage_m,level_m\n40,10\n60,12\n")


def test_profiles_touching_at_one_point_do_not_overlap(tmp_path, capsys):
    # ground ends at ch 30 where the finished level starts: no common length
    bad(tmp_path, capsys, "do not overlap", finished="chainage_m,level_m\n30,10\n50,12\n")


def test_level_jump_more_than_50m(tmp_path, capsys):
    # levels typed in mm from line 4 on: 10.00 -> 10050 is a jump of 10040 m
    bad(tmp_path, capsys, "ground.csv:4: level_m jumps 10040 m",
        ground="chainage_m,level_m\n0,10\n10,10\n20,10050\n30,10050\n")


def test_key_of_wrong_type(tmp_path, capsys):
    bad(tmp_path, capsys, 'site.toml: [backfill] friction_angle_deg: must be a number, got "32"',
        toml=TOML + '[backfill]\nfriction_angle_deg = "32"\n')


def test_friction_angle_70(tmp_path, capsys):
    bad(tmp_path, capsys,
        "site.toml: [backfill] friction_angle_deg: must be between 0 and 50 (exclusive), got 70",
        toml=TOML + "[backfill]\nfriction_angle_deg = 70\n")


def test_negative_unit_weight(tmp_path, capsys):
    bad(tmp_path, capsys, "site.toml: [foundation] unit_weight_kn_m3: must be > 0 and <= 30, got -18",
        toml=TOML + "[foundation]\nunit_weight_kn_m3 = -18\n")


def test_unknown_key_suggests_nearest(tmp_path, capsys):
    bad(tmp_path, capsys,
        "site.toml: [wall] min_retained_height: unknown key; did you mean 'min_retained_height_m'?",
        toml=TOML + "[wall]\nmin_retained_height = 1.0\n")


def test_unknown_table_suggests_nearest(tmp_path, capsys):
    bad(tmp_path, capsys, "site.toml: [concret]: unknown table; did you mean [concrete]?",
        toml=TOML + "[concret]\ncover_mm = 50\n")


def test_profile_file_outside_site_folder(tmp_path, capsys):
    (tmp_path / "elsewhere.csv").write_text(GROUND)
    bad(tmp_path, capsys, "site.toml: [profiles] ground: '../elsewhere.csv' resolves outside",
        toml=TOML.replace('"ground.csv"', '"../elsewhere.csv"'))


def test_profile_absolute_path(tmp_path, capsys):
    p = tmp_path / "abs.csv"
    p.write_text(GROUND)
    bad(tmp_path, capsys, "is an absolute path", toml=TOML.replace('"ground.csv"', f'"{p}"'))


@pytest.mark.skipif(not hasattr(os, "symlink"), reason="no symlinks")
def test_profile_symlink_leading_out(tmp_path, capsys):
    outside = tmp_path / "outside.csv"
    outside.write_text(GROUND)
    d = make_site(tmp_path)
    (d / "ground.csv").unlink()
    (d / "ground.csv").symlink_to(outside)
    assert main(["check", str(d)]) == 2
    assert "resolves outside the site folder" in capsys.readouterr().err


def test_all_problems_reported_together(tmp_path, capsys):
    err = bad(tmp_path, capsys, "[backfill] friction_angle_deg", "[loads] surcharge_kpa",
              "ground.csv:3: level_m: blank value", "wallrun: 3 input problems",
              toml=TOML + "[backfill]\nfriction_angle_deg = 0\n[loads]\nsurcharge_kpa = -5\n",
              ground="chainage_m,level_m\n0,10\n10,\n20,10\n30,10\n")
    assert err.count("\n") >= 4


# --- the corpus of malformed folders ---------------------------------------------------

CASES = sorted(p for p in MALFORMED.iterdir() if p.is_dir())


def test_corpus_is_there():
    assert len(CASES) >= 40


@pytest.mark.parametrize("case", CASES, ids=[p.name for p in CASES])
def test_malformed_corpus(case, tmp_path, capsys):
    """Each folder: exit 2, its EXPECT lines among the messages, no traceback, nothing
    written. The corpus is read in place and never modified."""
    before = snapshot(case)
    expect = [ln for ln in (case / "EXPECT").read_text().splitlines()
              if ln and not ln.startswith("#")]
    assert main(["check", str(case)]) == 2
    err = capsys.readouterr().err
    for e in expect:
        assert e in err, (e, err)
    assert "Traceback" not in err and "internal error" not in err
    out = tmp_path / "out"
    assert main(["design", str(case), "--out", str(out), "--quiet"]) == 2
    capsys.readouterr()
    assert not out.exists() and not (case / "out").exists()
    assert snapshot(case) == before


# --- good sites --------------------------------------------------------------------------

def test_defaults_for_every_optional_key(tmp_path):
    s = load_site(make_site(tmp_path))
    assert s.wall == Wall() and s.backfill == Backfill() and s.foundation == Foundation()
    assert s.steel == Steel() and s.design == Design() and s.water is None
    assert s.zones == () and s.catalogue is None and s.rates is None
    assert s.factors == factors.resolve("DA1")
    assert s.project.name == "Test wall"
    # line numbers of the points: header on line 1, points on 2..5
    assert s.ground.lines == (2, 3, 4, 5)
    assert s.warnings == ()


def test_values_read_and_factor_overrides(tmp_path):
    toml = TOML + """
[wall]
max_panel_length_m = 10
min_panel_length_m = 5
top = "sloped"
[backfill]
friction_angle_deg = 34
slope_deg = 10
[design]
approach = "DA3"
max_types = 3
[factors.DA3]
gG_unfav_ground = 1.05
g_phi = 1.3
[factors.EQU]
gG_fav = 0.95
[steel]
bar_sizes_mm = [12, 16, 20]
[takeoff]
drain_pipe = false
[drawings]
vertical_exaggeration = 2.5
[water]
level_m = 9.5
"""
    s = load_site(make_site(tmp_path, toml=toml))
    assert s.wall.max_panel_length_m == 10.0 and isinstance(s.wall.max_panel_length_m, float)
    assert s.wall.top == "sloped" and s.backfill.slope_deg == 10.0
    assert set(s.factors) == {"EQU", "DA3"}
    assert s.factors["DA3"].gG_ground == 1.05 and s.factors["DA3"].g_phi == 1.3
    assert s.factors["DA3"].gG_unfav == 1.35  # untouched key keeps Annex A value
    assert s.factors["EQU"].gG_fav == 0.95
    assert s.steel.bar_sizes_mm == (12, 16, 20)
    assert s.takeoff.drain_pipe is False and s.drawings.vertical_exaggeration == 2.5
    assert s.water.level_m == 9.5 and s.water.height_above_base_m is None


def test_gG_unfav_ground_only_for_DA3(tmp_path):
    with pytest.raises(InputError) as e:
        load_site(make_site(tmp_path, toml=TOML + "[factors.\"DA1-1\"]\ngG_unfav_ground = 1.0\n"))
    assert "site.toml: [factors.DA1-1] gG_unfav_ground: unknown key" in str(e.value)


def test_zones_inherit_from_foundation(tmp_path):
    toml = TOML + """[foundation]
friction_angle_deg = 33
undrained_strength_kpa = 40
[[foundation.zones]]
from_m = 20
to_m = 30
friction_angle_deg = 26
allowable_bearing_kpa = 150
[[foundation.zones]]
from_m = 5
to_m = 20
cohesion_kpa = 5
"""
    s = load_site(make_site(tmp_path, toml=toml))
    assert [z.from_m for z in s.zones] == [5.0, 20.0]  # sorted by chainage
    z = s.zones[1].foundation
    assert z.friction_angle_deg == 26 and z.allowable_bearing_kpa == 150
    assert z.undrained_strength_kpa == 40 and z.phi_cv_deg == 26  # inherited / in force
    assert s.foundation_at(25.0) is z and s.foundation_at(2.0).friction_angle_deg == 33


def test_partial_finished_coverage_warns_with_range(tmp_path):
    s = load_site(make_site(tmp_path, finished="chainage_m,level_m\n5,11\n25,11\n"))
    w = " ".join(s.warnings)
    assert "ch 0.000 to 5.000" in w and "ch 25.000 to 30.000" in w and "clipped" in w


def test_plan_warnings(tmp_path):
    # ground plan: a straight line along x, 1:1 with chainage (no length warning);
    # finished plan 1.0 m off sideways: > 0.5 m disagreement
    g = "chainage_m,level_m,x_m,y_m\n0,10,100,200\n10,10,110,200\n20,10,120,200\n30,10,130,200\n"
    f = "chainage_m,level_m,x_m,y_m\n0,10,100,201\n15,12,115,201\n30,10.5,130,201\n"
    s = load_site(make_site(tmp_path, ground=g, finished=f))
    assert len(s.warnings) == 1 and "disagree by up to 1.00 m" in s.warnings[0]


def test_plan_length_warning(tmp_path):
    # plan length 31.0 m against chainage length 30.0 m: 3.3 % > 1 %
    g = "chainage_m,level_m,x_m,y_m\n0,10,0,0\n10,10,10,0\n20,10,20,0\n30,10,31,0\n"
    s = load_site(make_site(tmp_path, ground=g))
    assert any("plan length 31.00 m and chainage length 30.00 m" in w for w in s.warnings)


def test_demo_sites_load():
    for name in ("access-road-fill", "hillside-cut", "platform-edge"):
        s = load_site(SITES / name)
        assert s.warnings == ()
    pe = load_site(SITES / "platform-edge")
    assert len(pe.catalogue) == 6 and pe.rates is not None
    assert all(c.base_width_m - c.toe_m - c.stem_base_m > 0 for c in pe.catalogue)
    hc = load_site(SITES / "hillside-cut")
    assert hc.water.height_above_base_m == 1.0 and hc.zones[0].foundation.friction_angle_deg == 26
    ar = load_site(SITES / "access-road-fill")
    assert ar.finished is None and len(ar.alignment) == 3


# --- fuzzing the readers -----------------------------------------------------------------

_cell = st.one_of(st.floats(allow_nan=True, allow_infinity=True).map(repr),
                  st.integers(-10**6, 10**6).map(str), st.text(max_size=6), st.just(""))


@settings(max_examples=50, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(header=st.sampled_from(["chainage_m,level_m", "chainage_m,level_m,x_m,y_m",
                               "level_m,chainage_m", "chainage_m", "ch,lv", ""]),
       rows=st.lists(st.lists(_cell, min_size=1, max_size=5).map(lambda r: ",".join(r)),
                     max_size=8))
def test_profile_reader_fuzz(tmp_path, header, rows):
    p = tmp_path / "fuzz.csv"
    p.write_text("\n".join([header] + rows), encoding="utf-8")
    pr = _Problems()
    prof = read_profile(p, "fuzz.csv", pr)
    if prof is None:
        assert pr.items and all(m.startswith("fuzz.csv") for m in pr.items)
    else:
        assert not pr.items
        assert len(prof.chainage_m) >= 2 and np.all(np.diff(prof.chainage_m) > 0)
        assert np.all(np.isfinite(prof.level_m))


_toml_value = st.one_of(st.integers(-100, 100), st.floats(-100, 100), st.booleans(),
                        st.sampled_from(['"stepped"', '"DA2"', '"x"', "[10, 12]", "[3, 1]"]))


@settings(max_examples=50, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(table=st.sampled_from(["wall", "backfill", "foundation", "design", "steel", "concrete",
                              "loads", "water", "takeoff", "drawings", "walls", "factors.DA2"]),
       key=st.sampled_from(["min_retained_height_m", "friction_angle_deg", "slope_deg", "approach",
                            "bar_sizes_mm", "cover_mm", "surcharge_kpa", "level_m", "top",
                            "gQ", "drain_pipe", "unit_weight_kn_m3", "nonsense"]),
       value=_toml_value)
def test_site_reader_fuzz(tmp_path_factory, table, key, value):
    d = make_site(tmp_path_factory.mktemp("f"), toml=TOML + f"[{table}]\n{key} = {value}\n")
    try:
        load_site(d)
    except InputError as e:
        assert e.problems and all(m.startswith(("site.toml", "ground.csv", "finished.csv"))
                                  for m in e.problems)


# --- every rule declared once, beside its setting ------------------------------------

def test_every_table_key_has_its_rule_beside_the_setting():
    # the reader's key list is exactly the fields of the settings dataclasses
    from dataclasses import fields

    from wallrun.site import CLASSES, SPEC
    for name, cls in CLASSES.items():
        assert list(SPEC[name]) == [f.name for f in fields(cls) if "rule" in f.metadata]


def test_backfill_slope_at_friction_angle_is_refused(tmp_path, capsys):
    # a cohesionless surface steeper than its friction angle does not stand
    # (infinite-slope limit, common practice): refused before any design
    bad(tmp_path, capsys, "[backfill] slope_deg: must be less than the backfill "
        "friction_angle_deg (32)", toml=TOML + "\n[backfill]\nslope_deg = 32.0\n")


def test_strength_class_c20_25_is_designed(tmp_path, capsys):
    # C20/25 is a Table 3.1 class (EN 1992-1-1); check and design both accept it
    d = make_site(tmp_path, toml=TOML + '\n[concrete]\nstrength_class = "C20/25"\n')
    assert main(["check", str(d)]) == 0
    assert main(["design", str(d), "--out", str(tmp_path / "out"), "--quiet"]) in (0, 3)
    assert "input problem" not in capsys.readouterr().err


def test_strength_class_below_annex_e_minimum_is_refused(tmp_path, capsys):
    bad(tmp_path, capsys, "[concrete] strength_class: must be one of",
        toml=TOML + '\n[concrete]\nstrength_class = "C16/20"\n')


def test_unmatched_quote_in_profile_is_a_clear_problem(tmp_path):
    # a double quote left open runs the CSV reader to the end of the file: an input
    # problem naming the file, not an internal error (found by test_fuzz_profile_reader)
    with pytest.raises(InputError) as e:
        load_site(make_site(tmp_path, ground='chainage_m,level_m\n0,"10\n10,10\n20,10\n'))
    assert any(p.startswith("ground.csv: the rows cannot be read as CSV") for p in e.value.problems)
# --- the seismic design situation (design-basis 10) ----------------------------------

def test_seismic_read_with_factors(tmp_path):
    from wallrun.cautions import SEISMIC, not_checked
    toml = TOML + """
[seismic]
ag_g = 0.16
soil_factor = 1.15
r = 1.5
kv_ratio = 0.33
[factors.seismic]
g_phi = 1.1
"""
    s = load_site(make_site(tmp_path, toml=toml))
    assert (s.seismic.ag_g, s.seismic.soil_factor, s.seismic.r, s.seismic.kv_ratio) == (
        0.16, 1.15, 1.5, 0.33)
    # kh = 0.16 x 1.15 / 1.5 (EN 1998-5 Eq. 7.1), kv = 0.33 kh (Eq. 7.3)
    assert s.seismic.kh == pytest.approx(0.122667, rel=1e-5)
    assert s.seismic.kv == pytest.approx(0.33 * 0.122667, rel=1e-5)
    # set SEIS: actions and resistances 1.0, materials EN 1998-5 3.1(3) with the override
    f = s.factors["SEIS"]
    assert (f.gG_unfav, f.gG_fav, f.gQ, f.gR_bearing, f.gR_sliding) == (1.0, 1.0, 1.0, 1.0, 1.0)
    assert (f.g_phi, f.g_c, f.g_cu) == (1.1, 1.25, 1.4)
    assert set(s.factors) == {"EQU", "DA1-1", "DA1-2", "SEIS"}
    assert SEISMIC not in not_checked(s)
    assert s.warnings == ()


def test_seismic_absent_or_defaults(tmp_path):
    from wallrun.cautions import SEISMIC, not_checked
    s = load_site(make_site(tmp_path))
    assert s.seismic is None and "SEIS" not in s.factors and SEISMIC in not_checked(s)
    (tmp_path / "b").mkdir()
    s = load_site(make_site(tmp_path / "b", toml=TOML + "[seismic]\nag_g = 0.1\nsoil_factor = 1.2\n"))
    assert (s.seismic.r, s.seismic.kv_ratio) == (1.0, 0.5)
    assert s.factors["SEIS"].g_phi == 1.25 and s.factors["SEIS"].g_cu == 1.4


def test_seismic_warnings(tmp_path):
    s = load_site(make_site(tmp_path, toml=TOML + "[factors.seismic]\ng_c = 1.3\n"))
    assert any("[factors.seismic] is not used" in w for w in s.warnings) and s.seismic is None
    (tmp_path / "b").mkdir()
    s = load_site(make_site(tmp_path / "b", toml=TOML + "[seismic]\nag_g = 0.1\nsoil_factor = 1.2\n"
                            "r = 2\n[water]\nlevel_m = 10.5\n"))
    assert any("7.3.2.2(3)" in w for w in s.warnings)


def test_seismic_bad_values(tmp_path, capsys):
    bad(tmp_path, capsys,
        "[seismic] ag_g: must be >= 0 and <= 1", "[seismic] r: must be one of 2.0, 1.5, 1.0",
        "[seismic] kv_ratio: must be one of 0.5, 0.33", "[seismic] soil_factor: required key is missing",
        "[factors.seismic] gQ: unknown key", "[factors.seismic] g_phi: must be",
        toml=TOML + "[seismic]\nag_g = -0.1\nr = 1.2\nkv_ratio = 0.25\n"
                    "[factors.seismic]\ngQ = 1.0\ng_phi = 0\n")
    (tmp_path / "b").mkdir()
    bad(tmp_path / "b", capsys, "[seismic] ag_g: must be >= 0 and <= 1",
        toml=TOML + "[seismic]\nag_g = 1.5\nsoil_factor = 1.0\n")


def test_catalogue_type_thinner_than_the_minimum_is_refused_with_its_name(tmp_path, capsys):
    cols = ("section,stem_top_m,stem_base_m,base_width_m,toe_m,base_thickness_m,key_depth_m,"
            "key_width_m,stem_bar_mm,stem_spacing_mm,heel_bar_mm,heel_spacing_mm,toe_bar_mm,"
            "toe_spacing_mm,dist_bar_mm,dist_spacing_mm\n")
    rows = ("THIN,0.20,0.30,2.0,0.5,0.30,0,0,12,200,12,200,12,200,10,200\n"
            "FLAT,0.25,0.30,2.0,0.5,0.25,0,0,12,200,12,200,12,200,10,200\n")
    bad(tmp_path, capsys, "type 'THIN' has a stem 0.2 m thick, thinner than [design] "
        "min_stem_m = 0.25 m", "type 'FLAT' has a base 0.25 m thick",
        toml=TOML + '\n[design]\nsections = "catalogue"\n', **{"sections.csv": cols + rows})

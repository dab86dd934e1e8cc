"""Reinforcement complete to EN 1992-1-1 end to end (issue 17): the restraint steel of
7.3.2 and the bends of 8.3 checked on every panel, their settings and cautions, and the
BS 8666 bar schedule the outputs carry (an invented two-panel site)."""

from __future__ import annotations

import csv
import json
import math
from dataclasses import replace

import pytest

import wallrun
from wallrun import cautions
from wallrun.cli import main
from wallrun.outputs.write import write_outputs

TOML = """
[project]
name = "Test yard"
[profiles]
ground = "ground.csv"
finished = "finished.csv"
{extra}
"""
BS8666_COLUMNS = ["member", "bar_mark", "type_size", "no_of_members", "no_in_each", "total_no",
                  "length_mm", "shape_code", "a_mm", "b_mm", "c_mm", "d_mm", "e_mm", "r_mm", "mass_kg"]
#: the dimensions each BS 8666 shape used needs (BS 8666:2005 Table 3)
SHAPE_DIMS = {"00": "A", "11": "AB", "12": "AB", "21": "ABC"}


def make_site(tmp_path, extra=""):
    d = tmp_path / "site"
    d.mkdir(parents=True)
    (d / "site.toml").write_text(TOML.format(extra=extra))
    # an invented yard: ground 50.0, finished 53.0 over 0..14 m (two 7 m panels of a 3 m wall)
    (d / "ground.csv").write_text("chainage_m,level_m\n0,50.0\n14,50.0\n")
    (d / "finished.csv").write_text("chainage_m,level_m\n0,53.0\n14,53.0\n")
    return d


@pytest.fixture(scope="module")
def designed(tmp_path_factory):
    d = make_site(tmp_path_factory.mktemp("rebar"))
    site = wallrun.load_site(d)
    return site, wallrun.design(site)


def test_every_panel_has_restraint_and_bend_checks(designed):
    site, res = designed
    assert res.ok
    for p in res.panels:
        names = {(c.check, c.combination, c.case) for c in p.checks}
        assert ("restraint_steel", "SLS", "stem_horizontal") in names
        assert ("restraint_steel", "SLS", "base_distribution") in names
        bends = {c.case for c in p.checks if c.check == "bar_bend"}
        assert bends == {"starter, back face", "starter, front face", "heel bars, heel end",
                         "heel bars, toe end", "toe bars, toe end", "toe bars, heel end"}
        assert all(c.combination == "ULS" and c.unit == "mm" for c in p.checks if c.check == "bar_bend")
        r = p.reinforcement
        assert r.starter is not None and r.starter_front is not None
        assert r.starter.projection_mm == pytest.approx(site.concrete.kicker_mm + r.starter.lap_mm)


def test_schedule_mass_is_the_take_off_steel(designed):
    _, res = designed
    total = {q.item: q.quantity for q in res.quantities}["reinforcement_total"]
    assert math.fsum(b.mass_kg for b in res.bar_schedule) == pytest.approx(total, rel=1e-12)
    # every part of the cage has a bar mark, so the drawings can label it
    parts = {b.part for b in res.bar_schedule}
    assert {"starter", "stem", "starter_front", "stem_front", "stem_horizontal", "heel", "toe",
            "base_distribution"} <= parts
    for b in res.bar_schedule:
        assert b.number == b.no_of_members * b.no_in_each
        assert set(b.panels) <= {p.panel.panel for p in res.panels}


def test_outputs_carry_the_checks_and_the_bs8666_schedule(designed, tmp_path):
    _, res = designed
    out = tmp_path / "out"
    write_outputs(res, out)
    dj = json.loads((out / "design.json").read_text())
    for p in dj["panels"]:
        checks = {c["check"] for c in p["checks"]}
        assert {"restraint_steel", "bar_bend"} <= checks
    with open(out / "bar_schedule.csv", newline="") as f:
        rows = list(csv.DictReader(f))
    with open(out / "bar_schedule.csv", newline="") as f:
        assert next(csv.reader(f)) == BS8666_COLUMNS
    assert len(rows) == len(res.bar_schedule)
    for row in rows:
        need = SHAPE_DIMS[row["shape_code"]]
        for k in "abcde":
            assert (row[f"{k}_mm"] != "") == (k.upper() in need), row
        assert (row["r_mm"] != "") == (row["shape_code"] != "00"), row
        assert row["type_size"].startswith("H") and row["type_size"][1:].isdigit()
        assert int(row["total_no"]) == int(row["no_of_members"]) * int(row["no_in_each"])
    # the two alike panels of one type share each row
    assert all(row["no_of_members"] == "2" for row in rows), rows
    assert dj["bar_schedule"][0]["panels"] == ["P001", "P002"]


def test_restraint_steel_off(designed, tmp_path):
    site, res = designed
    off = replace(site, design=replace(site.design, restraint_steel=False))
    r2 = wallrun.design(off)
    assert not [c for p in r2.panels for c in p.checks if c.check == "restraint_steel"]
    assert [c for p in r2.panels for c in p.checks if c.check == "bar_bend"]
    steel = lambda r: {q.item: q.quantity for q in r.quantities}["reinforcement_total"]  # noqa: E731
    assert steel(r2) < steel(res)


def test_not_checked_follows_the_settings(designed):
    site, _ = designed
    on = cautions.not_checked(site)
    assert cautions.RESTRAINT not in on and cautions.BENDS not in on
    off = cautions.not_checked(replace(site, design=replace(site.design, restraint_steel=False)))
    assert cautions.RESTRAINT in off and cautions.BENDS not in off


def test_settings_read_and_refused(tmp_path, capsys):
    d = make_site(tmp_path, "[concrete]\nfct_eff_mpa = 1.8\nkicker_mm = 100\n[design]\nrestraint_steel = false\n")
    site = wallrun.load_site(d)
    assert site.concrete.fct_eff == 1.8 and site.concrete.kicker_mm == 100.0
    assert site.design.restraint_steel is False
    assert wallrun.load_site(make_site(tmp_path / "b")).concrete.fct_eff == pytest.approx(3.0238, abs=1e-4)
    # fct,eff above fctm of the class (C32/40: 3.024 MPa) is beyond 7.3.2(2): exit 2, key named
    bad = make_site(tmp_path / "c", "[concrete]\nfct_eff_mpa = 3.5\n")
    assert main(["check", str(bad)]) == 2
    assert "[concrete] fct_eff_mpa: must not exceed fctm of C32/40" in capsys.readouterr().err
    neg = make_site(tmp_path / "e", "[concrete]\nkicker_mm = -5\n")
    assert main(["check", str(neg)]) == 2
    assert "[concrete] kicker_mm" in capsys.readouterr().err

"""End to end: the seismic situation and overall stability on an invented site, every
panel's entries confirmed by the independent references of the tests
(``seismic_reference.plain_seismic``: the Mononobe-Okabe checks worked one section at a
time; ``overall_reference.bishop_panel``: Bishop's method with shapely slices) within
3 % (issues 19 and 20), and the sections passing both situations."""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pytest
from overall_reference import bishop_panel
from seismic_reference import plain_seismic

import wallrun
from wallrun import cautions, seismic
from wallrun.conditions import Conditions

TOML = """[project]
name = "Quarry haul road retaining wall (invented)"

[profiles]
ground = "ground.csv"
finished = "finished.csv"

[backfill]
unit_weight_kn_m3 = 19.5
friction_angle_deg = 34.0
slope_deg = 5.0

[foundation]
friction_angle_deg = 29.0
cohesion_kpa = 4.0

[ground]
front_slope_deg = 8.0
overall_stability = true

[seismic]
ag_g = 0.12
soil_factor = 1.15
"""
GROUND = "chainage_m,level_m\n0,30.0\n12,29.1\n24,28.4\n36,28.9\n"
FINISHED = "chainage_m,level_m\n0,30.9\n12,31.4\n24,31.6\n36,30.1\n"


@pytest.fixture(scope="module")
def result(tmp_path_factory):
    d = tmp_path_factory.mktemp("quarry") / "site"
    d.mkdir()
    for name, text in (("site.toml", TOML), ("ground.csv", GROUND), ("finished.csv", FINISHED)):
        (d / name).write_text(text, encoding="utf-8")
    site = wallrun.load_site(d)
    return site, wallrun.design(site)


def _cond(site, p):
    wl = p.panel.water_level_m
    return Conditions(z_top=p.panel.retained_top_m, z_front=p.panel.front_min_m,
                      z_found=p.panel.founding_m, backfill=site.backfill,
                      foundation=p.panel.foundation, surcharge_kpa=site.loads.surcharge_kpa,
                      water_level_m=wl)


def test_both_checks_listed_as_checked(result):
    site, res = result
    listed = cautions.not_checked(site)
    assert cautions.OVERALL not in listed and cautions.SEISMIC not in listed
    assert cautions.OVERALL in cautions.not_checked(replace(site, ground_model=replace(
        site.ground_model, overall_stability=False)))


def test_seismic_entries_confirmed_and_passing(result):
    site, res = result
    basis = site.basis
    assert any(p.status == "ok" for p in res.panels)
    for p in res.panels:
        if p.status != "ok":
            continue
        seis = [c for c in p.checks if c.combination == "SEIS"]
        names = {c.check for c in seis}
        assert {"overturning", "sliding", "bearing", "eccentricity", "stem_bending",
                "heel_bending", "toe_bending"} <= names
        assert all(c.utilization <= 1.0 + 1e-9 for c in p.checks)  # both situations pass
        ref, _ = plain_seismic(p.section, _cond(site, p), basis, site.seismic)
        got = {(c.check, c.case): c for c in seis}
        for chk, case, eff, res_ in ref:
            c = got[(chk, case)]
            u_ref = eff / res_ if res_ > 0 else (np.inf if eff > 0 else 0.0)
            assert c.utilization == pytest.approx(u_ref, rel=0.03, abs=1e-6), (p.panel.panel, chk, case)


def test_overall_entries_confirmed_by_independent_bishop(result):
    site, res = result
    basis = site.basis
    checked = 0
    for p in res.panels:
        ov = [c for c in p.checks if c.check == "overall"]
        if p.status != "ok" and not ov:
            continue
        assert {c.combination for c in ov} == set(basis.uls_sets)
        for c in ov:
            fs = basis.factors[c.combination]
            F, M_D, M_R = bishop_panel(p.section, _cond(site, p), site.ground_model,
                                       (c.circle.x_m, c.circle.z_m, c.circle.radius_m),
                                       gQ=fs.gQ, g_phi=fs.g_phi, g_c=fs.g_c, g_cu=fs.g_cu,
                                       undrained=c.case == "undrained", n=200)
            assert abs(c.utilization * F - 1.0) < 0.03, (p.panel.panel, c, F)
            checked += 1
    assert checked >= 2


def test_outputs_carry_both_situations(result, tmp_path):
    # panels.csv gains util_overall and util_seismic; design.json's overall entries their
    # critical circle; the report a seismic block (kh, kv, theta, K and the actions of
    # each sign of kv, side by side) in every type's calculation
    import csv
    import json
    site, res = result
    out = tmp_path / "out"
    wallrun.write_outputs(res, out)
    rows = list(csv.DictReader((out / "panels.csv").open(encoding="utf-8")))
    ok = [r for r in rows if r["status"] == "ok"]
    assert ok and all(r["util_overall"] and r["util_seismic"] for r in ok)
    doc = json.loads((out / "design.json").read_text(encoding="utf-8"))
    ov = [c for p in doc["panels"] for c in p["checks"] if c["check"] == "overall"]
    assert ov and all(set(c["circle"]) == {"x_m", "z_m", "radius_m"} for c in ov)
    html = (out / "report.html").read_text(encoding="utf-8")
    n_types = len([t for t in res.section_types if t.panels])
    assert html.count("Seismic design situation") >= n_types - sum(
        p.status != "ok" for p in res.panels)
    assert "<th>V, kv up<th>H<th>M<th>V, kv down<th>H<th>M" in html
    assert "SEIS: EN 1998-5 7.3.2, Annex E" in html
    assert "critical slip circle" in html


def test_report_seismic_rows_are_each_signs_actions(result):
    # the report's seismic table puts the signs of kv side by side: every row of it is
    # the same action of each sign's table (seismic.seismic_action_table), at the same
    # point of application, with that sign's V, H and M; the sums are each sign's sums
    from wallrun.outputs.report import calc
    site, res = result
    seen = 0
    for c in calc.type_calcs(res):
        if c.seismic is None:
            continue
        p = c.panel.panel
        cond = Conditions(z_top=p.retained_top_m, z_front=p.front_min_m, z_found=p.founding_m,
                          backfill=p.backfill, foundation=p.foundation,
                          surcharge_kpa=p.surcharge_kpa, water_level_m=p.water_level_m)
        basis = replace(site.basis, seismic=site.seismic)
        tables = seismic.seismic_action_table(c.panel.section, cond, basis, site.seismic)
        assert c.seismic["labels"] == list(tables) == ["kv up", "kv down"]
        for i, row in enumerate(c.seismic["rows"]):
            for k, t in enumerate(tables.values()):
                a = t[i]
                assert row["xz"] == pytest.approx((a.x_m, a.z_m), abs=1e-12)
                assert row["values"][k] == (a.vertical_kn_m, a.horizontal_kn_m, a.moment_kn_m_m)
        for k, t in enumerate(tables.values()):
            assert c.seismic["sums"][k] == pytest.approx(
                (sum(a.vertical_kn_m for a in t), sum(a.horizontal_kn_m for a in t),
                 sum(a.moment_kn_m_m for a in t)))
        seen += 1
    assert seen >= 2


def test_drawings_of_the_drawing_view_equal_those_of_the_whole_result(result, tmp_path,
                                                                      monkeypatch):
    # a worker process writing the drawings is sent ``drawing_view(result)`` (the check
    # listings cut to what the drawings read); the slip circles drawn on the sections
    # come from those entries, so the drawings must be the same as from the whole
    # result: the same DXF entities and the same PDF bytes (dates fixed)
    import ezdxf

    from wallrun.outputs.dxf import DRAWN_CHECKS, drawing_view, write_drawings
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1700000000")
    _, res = result
    view = drawing_view(res)
    assert any(e.check not in DRAWN_CHECKS for p in res.panels for e in p.checks)
    assert all(e.check in DRAWN_CHECKS for p in view.panels for e in p.checks)
    outs = []
    for k, r in enumerate((res, view)):
        d = tmp_path / f"d{k}"
        d.mkdir()
        write_drawings(r, d)
        outs.append(d)

    def entities(path):
        """Every entity of every block (the layouts included), without handles."""
        out = []
        for b in ezdxf.readfile(path).blocks:
            for e in b:
                attribs = {k: str(v) for k, v in e.dxf.all_existing_dxf_attribs().items()
                           if k not in ("handle", "owner")}
                extra = (str(list(e.get_points())) if e.dxftype() == "LWPOLYLINE"
                         else e.text if e.dxftype() == "MTEXT" else "")
                out.append((e.dxftype(), sorted(attribs.items()), extra))
        return out

    slip = [e for b in ezdxf.readfile(outs[0] / "sections.dxf").blocks for e in b
            if e.dxf.layer == "WALLRUN-SLIP-CIRCLE"]
    assert slip, "the sections draw no slip circle: the test would not see a cut listing"
    for name in ("elevation.dxf", "sections.dxf"):
        assert entities(outs[0] / name) == entities(outs[1] / name), name
    for name in ("sheets.pdf", "sections.pdf", "elevation.png"):
        assert (outs[0] / name).read_bytes() == (outs[1] / name).read_bytes(), name

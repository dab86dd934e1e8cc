"""Tests of the calculation report (wallrun/outputs/report/).

The report is parsed with lxml.html and read back: the summary (project, totals,
governing panel, what is flagged, the cautions and what is not checked for the site,
the sign-off block), the design basis, one calculation per section type at its
governing panel (actions, the worst entry of every check with its clause, the bearing
and passive terms), the one-row-a-panel schedule, quantities and cost. The results are
invented here (a 22 m fill wall on a made-up site with one softer zone), taken from
tests/sample_result.py, or designed from the demo sites; headless Chromium prints a
demo's report to PDF and its pages are counted.
"""

from __future__ import annotations

import json
import re
import shutil
import subprocess
from dataclasses import replace
from functools import lru_cache
from pathlib import Path

import lxml.html
import numpy as np
import pytest

import wallrun
from wallrun.cautions import CAUTION, not_checked
from wallrun.factors import resolve
from wallrun.outputs import report, tables
from wallrun.outputs.report import calc, figures
from wallrun.outputs.report.render import num
from wallrun.results import (ActionRow, BarMark, BarSet, CheckEntry, Cost, CostRow,
                             DesignResult, Joint, Panel, PanelResult, Quantity,
                             Reinforcement, Run, SectionType)
from wallrun.section import Section
from wallrun.settings import (Backfill, Foundation, FoundationZone, ProfileData, Project,
                              Site)

from sample_result import sample_result

ROOT = Path(__file__).resolve().parents[1]


# --- an invented example result ---------------------------------------------------------

class LineProfiles:
    """Piecewise-linear ground and finished level (enough of profile.Profiles)."""

    def __init__(self, ch, g, f):
        self._ch, self._g, self._f = (np.asarray(a, dtype=float) for a in (ch, g, f))
        self.breakpoints = self._ch
        self.ch_start, self.ch_end = float(self._ch[0]), float(self._ch[-1])
        self.plan_line = None

    def ground(self, ch):
        return np.interp(ch, self._ch, self._g)

    def finished(self, ch):
        return np.interp(ch, self._ch, self._f)


CLAUSES = {"overturning": "EN 1997-1 2.4.7.2", "sliding": "EN 1997-1 6.5.3",
           "bearing": "EN 1997-1 6.5.2, Annex D", "eccentricity": "EN 1997-1 6.5.4",
           "eccentricity_sls": "common practice (middle third)",
           "stem_bending": "EN 1992-1-1 6.1", "stem_shear": "EN 1992-1-1 6.2.2",
           "heel_bending": "EN 1992-1-1 6.1", "heel_shear": "EN 1992-1-1 6.2.2",
           "toe_bending": "EN 1992-1-1 6.1", "toe_shear": "EN 1992-1-1 6.2.2",
           "crack_spacing": "EN 1992-1-1 7.3.3", "min_steel": "EN 1992-1-1 9.2.1.1"}
UNITS = {"overturning": "kNm/m", "sliding": "kN/m", "bearing": "kN/m", "eccentricity": "m",
         "eccentricity_sls": "m", "stem_bending": "kNm/m", "stem_shear": "kN/m",
         "heel_bending": "kNm/m", "heel_shear": "kN/m", "toe_bending": "kNm/m",
         "toe_shear": "kN/m", "crack_spacing": "mm", "min_steel": "mm2/m"}
SUBCASES = ("G unfav, heel load on", "G unfav, heel load off", "G fav, heel load on",
            "G fav, heel load off")


def make_checks(rng, scale=1.0, fail=False):
    """Check entries of one panel for DA1 (EQU, DA1-1, DA1-2, SLS), governs marked as
    results.entries does: the worst of each (check, combination)."""
    raw = [("overturning", "EQU", "about toe")]
    for comb in ("DA1-1", "DA1-2"):
        raw.append(("sliding", comb, "drained"))
        raw += [("bearing", comb, s + ", drained") for s in SUBCASES]
        raw += [("eccentricity", comb, s) for s in SUBCASES]
        for m in ("stem", "heel", "toe"):
            raw += [(f"{m}_bending", comb, s) for s in SUBCASES[:2]]
            raw.append((f"{m}_shear", comb, SUBCASES[0]))
    raw += [("eccentricity_sls", "SLS", c) for c in ("heel load on", "heel load off")]
    raw += [("crack_spacing", "SLS", m) for m in ("stem", "heel", "toe")]
    raw.append(("min_steel", "SLS", "stem"))
    out = []
    for k, (chk, comb, case) in enumerate(raw):
        r = float(rng.uniform(20, 400))
        u = float(rng.uniform(0.05, 0.98)) * scale
        if fail and k == 3:
            u = 1.0831
        out.append(CheckEntry(chk, comb, case, u * r, r, UNITS[chk], u, CLAUSES[chk]))
    worst = {}
    for k, c in enumerate(out):
        key = (c.check, c.combination)
        if key not in worst or c.utilization > out[worst[key]].utilization:
            worst[key] = k
    return tuple(replace(c, governs=(k in worst.values())) for k, c in enumerate(out))


def bars(bar, sp, asreq, d):
    return BarSet(bar, sp, round(np.pi / 4 * bar ** 2 * 1000 / sp, 1), asreq, d)


def own_sample_result(n_panels=3, seed=7) -> DesignResult:
    """An invented 3-panel fill wall (or n_panels for the size test)."""
    rng = np.random.default_rng(seed)
    length = 7.5 * n_panels
    ch = np.linspace(0.0, length, max(4, n_panels + 1))
    g = 40.0 + 0.2 * np.sin(ch / 7.0)
    f = g + 1.2 + 1.5 * np.sin(np.pi * ch / length)
    soft = Foundation(unit_weight_kn_m3=18.0, friction_angle_deg=26.0, cohesion_kpa=2.0,
                      undrained_strength_kpa=45.0)
    site = Site(root="/tmp/demo-site", project=Project("Quarry Lane <east> & yard wall", "QL-07"),
                ground=ProfileData(ch, g), finished=ProfileData(ch, f), alignment=None,
                zones=(FoundationZone(7.5, 15.0, soft),),
                factors=resolve("DA1", {"EQU": {"gG_fav": 0.95}}),
                warnings=("finished.csv: invented warning for the test",))
    secs = {"S01": Section(0.25, 0.35, 2.4, 0.6, 0.35),
            "S02": Section(0.25, 0.40, 3.0, 0.7, 0.40, 0.40, 0.35)}
    rf = Reinforcement(stem=bars(16, 150, 1105.0, 292), heel=bars(16, 200, 870.0, 317),
                       toe=bars(12, 200, 520.0, 269), stem_horizontal=bars(10, 200, 350.0, 280),
                       base_distribution=bars(10, 250, 200.0, 300),
                       stem_front=bars(10, 300, 250.0, 290), stem_curtail_m=1.1)
    panels = []
    for i in range(n_panels):
        c0, c1 = 7.5 * i, 7.5 * (i + 1)
        st = "S02" if i % 3 == 1 else "S01"
        top = float(np.max(np.interp([c0, c1], ch, f)))
        front = float(np.min(np.interp([c0, c1], ch, g)))
        found = np.floor((front - 0.6) / 0.15) * 0.15
        pn = Panel(f"P{i + 1:03d}", 1, "fill", c0, c1, top, front, found,
                   np.ceil(top / 0.15) * 0.15, np.ceil(top / 0.15) * 0.15,
                   soft if st == "S02" else Foundation(), Backfill(), 10.0, None)
        fail = (i == 1)
        panels.append(PanelResult(pn, st, secs[st], rf, make_checks(rng, fail=fail),
                                  "flagged" if fail else "ok",
                                  "sliding DA1-1 > 1 <no section passes>" if fail else "",
                                  concrete_m3=9.5 + i, steel_kg=410.0 + i, cost=3100.0 + i))
    panels = tuple(panels)
    types = []
    actions = {}
    for name in ("S01", "S02"):
        mem = [p for p in panels if p.section_type == name]
        if not mem:
            continue
        w = max(mem, key=lambda p: max(c.utilization for c in p.checks))
        types.append(SectionType(name, secs[name], rf, w.governing,
                                 max(c.utilization for c in w.checks),
                                 tuple(p.panel.panel for p in mem)))
        actions[name] = (ActionRow("stem", "permanent", 20.1, 0.0, 0.78, 1.6, 15.7),
                         ActionRow("base", "permanent", 21.0, 0.0, 1.2, 0.175, 25.2),
                         ActionRow("soil over heel", "permanent", 75.2, 0.0, 1.77, 1.9, 133.1),
                         ActionRow("earth thrust Pa", "permanent", 0.0, 34.0, 2.4, 1.07, -36.4),
                         ActionRow("surcharge thrust Pq", "variable", 0.0, 10.6, 2.4, 1.6, -17.0))
    joints = tuple(Joint(f"J{i:03d}", panels[i].panel.ch_end_m, panels[i].panel.panel,
                         panels[i + 1].panel.panel, 0.15, 0.0, 1.12,
                         "flagged" if i == 0 else "ok",
                         "pressure ratio 1.62 > 1.5" if i == 0 else "")
                   for i in range(n_panels - 1))
    q = (Quantity("concrete_total", "m3", 31.5), Quantity("reinforcement_total", "kg", 1233.0),
         Quantity("joint_seal", "m", 6.2))
    cost = Cost((CostRow("concrete_total", "m3", 31.5, 165.0, 5197.5),
                 CostRow("reinforcement_total", "kg", 1233.0, 1.4, 1726.2),
                 CostRow("joint_seal", "m", 6.2, None, None)), 6923.7, False, True)
    sched = (BarMark("S01", "stem", "S01-01", 16, "21", 3200, 60, 192.0, 303.0),)
    return DesignResult(site=site, profiles=LineProfiles(ch, g, f),
                        runs=(Run(1, "fill", 0.0, length, 2.9, length / 2),),
                        panels=panels, joints=joints, section_types=tuple(types),
                        actions=actions, bar_schedule=sched, quantities=q, cost=cost)



def many_types_result(n_panels: int, n_types: int) -> DesignResult:
    """The invented wall with ``n_panels`` panels shared among ``n_types`` section types
    of slightly different base widths (the shape of a long bespoke job)."""
    r = own_sample_result(n_panels=n_panels, seed=3)
    panels, types, actions = [], [], {}
    for i, p in enumerate(r.panels):
        k = i % n_types
        name = f"T{k + 1:04d}"
        sec = replace(p.section, base_width_m=round(p.section.base_width_m + 0.01 * (k % 40), 3))
        panels.append(replace(p, section_type=name, section=sec))
    by_type: dict = {}
    for p in panels:
        by_type.setdefault(p.section_type, []).append(p)
    for name, members in by_type.items():
        w = max(members, key=lambda p: max(c.utilization for c in p.checks))
        types.append(SectionType(name, w.section, w.reinforcement, w.governing,
                                 max(c.utilization for c in w.checks),
                                 tuple(p.panel.panel for p in members)))
        actions[name] = r.actions["S01"]
    return replace(r, panels=tuple(panels), section_types=tuple(types), actions=actions)


@pytest.fixture(scope="module", params=["own", "shared"])
def result(request):
    return own_sample_result() if request.param == "own" else sample_result()


def parse(text: str):
    return lxml.html.fromstring(text)


@pytest.fixture(scope="module")
def page(result):
    return report.render_report(result, date="2031-04-02")


@pytest.fixture(scope="module")
def doc(page):
    return parse(page)


def words(el) -> str:
    return re.sub(r"\s+", " ", el.text_content()).strip()


def rows(table):
    """The rows of a table as lists of cell texts (header rows included)."""
    return [[words(c) for c in tr.xpath("./th|./td")] for tr in table.xpath(".//tr")]


@lru_cache(maxsize=None)
def demo(name: str):
    """A demo site designed once (invented sites of the repository)."""
    return wallrun.design(wallrun.load_site(ROOT / "sites" / name))


# --- structure and summary ----------------------------------------------------------------

def test_the_page_parses_and_has_its_parts(doc, page, result):
    assert page.startswith("<!DOCTYPE html>")
    for part in ("summary", "cautions", "basis", "run", "types", "quantities"):
        assert doc.get_element_by_id(part) is not None, part
    ids = doc.xpath("//@id")
    assert len(ids) == len(set(ids))  # ids unique
    assert doc.xpath("//meta/@charset") == ["utf-8"]


def test_summary(doc, result):
    kv = {r[0]: r[1] for r in rows(doc.get_element_by_id("summary").xpath(".//table")[0])}
    assert kv["project"] == result.site.project.name
    assert kv["wallrun version"] == wallrun.__version__
    assert kv["date of issue"] == "2031-04-02"
    assert kv["runs, panels, section types, joints"] == (
        f"{len(result.runs)}, {len(result.panels)}, {len(result.section_types)}, "
        f"{len(result.joints)}")
    assert kv["length of wall"] == f"{sum(p.panel.length_m for p in result.panels):.2f} m"
    # the governing panel: the highest utilization of all checks
    p, c = max(((p, c) for p in result.panels for c in p.checks),
               key=lambda t: t[1].utilization)
    assert kv["governing panel"].startswith(f"{p.panel.panel}: utilization {c.utilization:.3f}")
    assert kv["cost" + (" (invented demo rates)" if result.cost.demo_rates else "")].startswith(
        f"{result.cost.total:.2f}")


def test_cautions_name_what_is_not_checked_for_the_site(doc, result):
    box = doc.get_element_by_id("cautions")
    text = words(box)
    assert CAUTION in text
    items = [words(li) for li in box.xpath(".//ul/li/ul/li")]
    assert items == list(not_checked(result.site))
    if result.cost.demo_rates:
        assert "invented example rates" in text


def test_flagged_and_sign_off(result):
    r = own_sample_result()  # panel P002 and joint J000 are flagged
    doc = parse(report.render_report(r, date="2031-04-02"))
    summary = doc.get_element_by_id("summary")
    text = words(summary)
    assert "FLAGGED: sliding DA1-1 > 1 <no section passes>" in text
    assert "FLAGGED: pressure ratio 1.62 > 1.5" in text
    sign = summary.xpath(".//table[@class='sign']")[0]
    got = rows(sign)
    assert [r[0] for r in got[1:]] == ["prepared by", "checked by", "approved by"]
    assert all(cell == "" for r in got[1:] for cell in r[1:])  # left blank for the people


def test_text_is_escaped():
    r = own_sample_result()
    page = report.render_report(r, date="2031-04-02")
    assert "Quarry Lane <east>" not in page
    assert "Quarry Lane &lt;east&gt; &amp; yard wall" in page
    assert words(parse(page).xpath("//h1")[0]).endswith("Quarry Lane <east> & yard wall")
    assert "&lt;no section passes&gt;" in page


# --- design basis ------------------------------------------------------------------------------

def test_design_basis():
    r = own_sample_result()
    basis = parse(report.render_report(r, date="2031-04-02")).get_element_by_id("basis")
    text = words(basis)
    for code in ("EN 1997-1:2004", "EN 1992-1-1:2004", "EN 1991-1-1:2002"):
        assert code in text
    assert "0.95 * (rec. 0.90)" in text  # the overridden EQU factor, marked
    factors = rows(basis.xpath(".//table[@class='f']")[0])
    assert factors[0][2:] == ["EQU", "DA1-1", "DA1-2"]
    # the zone with its own soil
    zones = rows(basis.xpath(".//table[@class='f']")[1])
    assert zones[2][:3] == ["zone", "7.50", "15.00"] and "26.00" in zones[2]
    assert "basis-readings.md" in text


# --- the section types ------------------------------------------------------------------------

def type_part(doc, name):
    return doc.get_element_by_id(f"t-{name}")


def test_one_calculation_per_section_type(doc, result):
    parts = doc.xpath("//section[@class='st']")
    assert [p.get("id") for p in parts] == [f"t-{st.section_type}" for st in result.section_types]
    gov = calc.governing_panels(result)
    for st in result.section_types:
        part = type_part(doc, st.section_type)
        p = gov[st.section_type]
        # the governing panel: the highest utilization of the type's panels
        assert p is max((q for q in result.panels if q.section_type == st.section_type),
                        key=lambda q: max(c.utilization for c in q.checks))
        assert f"Governing panel {p.panel.panel}" in words(part)
        for name in st.panels:
            assert name in words(part)
        # every check of the panel, the worst entry of each, with its clause
        table = part.xpath(".//table[@class='chk']")[0]
        got = [r for r in rows(table)[1:] if len(r) == 8]
        want = calc.worst_of_each_check(p.checks)
        assert len(got) == len({c.check for c in p.checks}) == len(want)
        for row, c in zip(got, want):
            assert row[:3] == [c.check, c.combination, c.case]
            assert row[6].startswith(f"{c.utilization:.3f}")
            assert c.clause.endswith(row[7])
        # the actions at the governing panel
        acts = result.actions.get(st.section_type, ())
        if acts:
            table = part.xpath(".//table[@class='act']")[0]
            assert [r[0] for r in rows(table)[1:-1]] == [a.name for a in acts]
            assert rows(table)[-1][2] == num(sum(a.vertical_kn_m for a in acts), 1)
        # the reinforcement
        bars = rows(part.xpath(".//table[@class='bars']")[0])
        assert bars[1][:3] == ["stem", str(st.reinforcement.stem.bar_mm),
                               str(st.reinforcement.stem.spacing_mm)]
        # the dimensioned figure: inline SVG with the section's dimensions
        svg = part.xpath(".//svg")[0]
        labels = [words(t) for t in svg.xpath(".//text")]
        s = st.section
        for label in (f"B = {s.base_width_m:.2f}", f"heel {s.heel_m:.2f}",
                      f"{s.stem_top_m:.2f}", f"{s.base_thickness_m:.2f}"):
            assert label in labels, label
        assert svg.xpath(".//path[@class='conc']")


def test_the_per_panel_listing_is_not_in_the_html(doc, result):
    """Only the governing panel's worst entries appear; design.json has every entry."""
    n_rows = len(doc.xpath("//table[@class='chk']//tr/td[1]/.."))
    assert n_rows == sum(len(calc.worst_of_each_check(p.checks))
                         for p in calc.governing_panels(result).values())
    assert n_rows < sum(len(p.checks) for p in result.panels) or len(result.panels) == 1


def test_schedule_has_one_row_a_panel(doc, result):
    table = doc.xpath("//table[@class='sched']")[0]
    got = rows(table)
    assert got[0][0] == "panel" and len(got) == len(result.panels) + 1
    for row, p in zip(got[1:], result.panels):
        assert row[0] == p.panel.panel
        assert row[1] == f"{p.panel.ch_start_m:.2f}" and row[2] == f"{p.panel.ch_end_m:.2f}"
        assert row[7] == p.section_type
        assert row[8] == f"{max(c.utilization for c in p.checks):.3f}"
        assert row[10] == ("ok" if p.status == "ok" else "FLAGGED")


def test_quantities_and_cost(doc, result):
    part = doc.get_element_by_id("quantities")
    q = rows(part.xpath(".//table")[0])
    assert [r[0] for r in q[1:]] == [x.item for x in result.quantities]
    cost = rows(part.xpath(".//table[@class='cost']")[0])
    assert cost[-1][0] == "total" and cost[-1][4] == f"{result.cost.total:.2f}"


def test_unpriced_items_and_incomplete_cost():
    r = own_sample_result()
    part = parse(report.render_report(r, date="2031-04-02")).get_element_by_id("quantities")
    cost = {row[0]: row for row in rows(part.xpath(".//table[@class='cost']")[0])}
    assert cost["joint_seal"][3] == "unpriced" and "unpriced" in cost["joint_seal"][5]
    assert "incomplete" in cost["total"][5]


def test_costs_name_the_sites_currency():
    """``[takeoff] currency`` heads the rate and amount columns and follows the total."""
    r = own_sample_result()
    r = replace(r, site=replace(r.site, takeoff=replace(r.site.takeoff, currency="CHF")))
    doc = parse(report.render_report(r, date="2031-04-02"))
    head = doc.get_element_by_id("quantities").xpath(".//table[@class='cost']//tr")[0]
    assert [th.text_content() for th in head][3:5] == ["rate (CHF per unit)", "amount (CHF)"]
    assert f"{r.cost.total:.2f} CHF" in doc.get_element_by_id("summary").text_content()


# --- a real design: the terms of the resistances --------------------------------------------

@pytest.mark.parametrize("site", ["platform-edge", "hillside-cut"])
def test_bearing_and_passive_terms_are_the_checks(site):
    """On a real design the bearing terms shown give the bearing check's resistance of
    the governing panel (R_d = R/A' B' / gamma_R;v, to the digits shown), and a keyed
    type shows its passive resistance (EN 1997-1 Annex D, 9.5.1)."""
    r = demo(site)
    calcs = calc.type_calcs(r)
    doc = parse(report.render_report(r, date="2031-04-02"))
    keyed = 0
    for c in calcs:
        b = c.bearing
        assert b is not None
        worst = max((e for e in c.panel.checks if e.check == "bearing"),
                    key=lambda e: e.utilization)
        assert b["entry"] is worst
        assert b["R_d_kn_m"] == pytest.approx(worst.resistance, rel=1e-12)
        assert b["V_kn_m"] == pytest.approx(worst.effect, rel=1e-12)
        assert b["resistance_kpa"] * b["B_eff_m"] / b["gR"] == pytest.approx(b["R_d_kn_m"])
        text = words(type_part(doc, c.st.section_type))
        assert f"Bearing {worst.combination}, {worst.case}" in text
        assert f"Nq {b['Nq']:.2f}" in text and f"B' {b['B_eff_m']:.3f}" in text
        assert f"Rd {b['R_d_kn_m']:.1f}" in text
        assert [t["combination"] for t in c.passive] == list(r.site.basis.uls_sets)
        if any(t["P_kn_m"] > 0 for t in c.passive):
            keyed += 1
            assert f"Kp {c.passive[0]['Kp']:.3f}" in text
    if site == "platform-edge":
        assert keyed > 0  # its catalogue sections carry keys that reach below the front


def test_matches_design_json(tmp_path):
    """The report's figures are those of design.json for the same design."""
    r = demo("platform-edge")
    data = json.loads(tables.design_json(r))
    doc = parse(report.render_report(r, date="2031-04-02"))
    by_name = {p["panel"]: p for p in data["panels"]}
    sched = rows(doc.xpath("//table[@class='sched']")[0])[1:]
    for row in sched:
        p = by_name[row[0]]
        u = max(c["utilization"] for c in p["checks"])
        assert row[8] == f"{u:.3f}"
        assert row[7] == p["section"]["type"]


# --- size and print ---------------------------------------------------------------------------

def test_a_long_job_stays_small():
    """1,250 panels of 650 section types (the shape of a 10 km bespoke job): under 3 MB."""
    r = many_types_result(1250, 650)
    page = report.render_report(r, date="2031-04-02")
    size = len(page.encode("utf-8"))
    assert size <= 3_000_000, size
    assert page.count("<section class=st ") == 650


def test_no_wall_needed_still_renders():
    r = own_sample_result()
    empty = replace(r, runs=(), panels=(), joints=(), section_types=(), actions={},
                    bar_schedule=(), quantities=(), cost=Cost((), 0.0, True, False))
    doc = parse(report.render_report(empty, date="2031-04-02"))
    assert CAUTION in words(doc) and "No joints between panels" in words(doc)


def test_write_report_file(tmp_path):
    out = report.write_report(own_sample_result(), tmp_path / "report.html")
    assert out.read_text(encoding="utf-8").startswith("<!DOCTYPE html>")
    assert sorted(p.name for p in tmp_path.iterdir()) == ["report.html"]


def test_section_drawing_keeps_inside_its_box():
    rng = np.random.default_rng(11)
    sections = []
    for i in range(60):
        stem_base = round(float(rng.uniform(0.2, 0.8)), 2)
        toe = 0.0 if i % 7 == 0 else round(float(rng.uniform(0.1, 1.5)), 2)
        heel = round(float(rng.uniform(0.05, 3.0)), 2)
        key = i % 3 == 0
        sections.append(Section(min(stem_base, 0.25), stem_base, toe + stem_base + heel, toe,
                                round(float(rng.uniform(0.2, 0.8)), 2),
                                0.3 if key else 0.0, 0.3 if key else 0.0))
    for d in figures.section_drawings(sections, [None] * len(sections)):
        points = [(int(x), int(y)) for _, path in d.paths
                  for x, y in re.findall(r"[ML](-?\d+) (-?\d+)", path)]
        assert all(-2 <= x <= d.width + 2 and -2 <= y <= d.height + 2 for x, y in points)
        assert all(-2 <= lab.x <= d.width + 2 for lab in d.labels)


def find_browser():
    for name in ("chromium", "chromium-browser", "google-chrome"):
        path = shutil.which(name)
        if path:
            return path
    return None


def count_pdf_pages(data: bytes) -> int:
    """Pages of a PDF: its page objects (/Type /Page, not /Pages)."""
    return len(re.findall(rb"/Type\s*/Page(?![a-zA-Z])", data))


def test_demo_prints_to_at_most_40_pages(tmp_path):
    browser = find_browser()
    if browser is None:
        pytest.skip("no chromium on PATH (bash .ci/browser.sh installs Debian's chromium)")
    r = demo("access-road-fill")
    src = report.write_report(r, tmp_path / "report.html")
    pdf = tmp_path / "report.pdf"
    cmd = [browser, "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic",
           "--no-first-run", "--disable-background-networking", "--disable-component-update",
           "--disable-sync", "--disable-dev-shm-usage", f"--user-data-dir={tmp_path / 'profile'}",
           f"--print-to-pdf={pdf}", "--no-pdf-header-footer", src.resolve().as_uri()]
    proc = subprocess.run(cmd, capture_output=True, timeout=300)
    assert pdf.exists() and pdf.stat().st_size > 0, proc.stderr.decode(errors="replace")[-2000:]
    data = pdf.read_bytes()
    assert data.startswith(b"%PDF")
    pages = count_pdf_pages(data)
    # the summary, the basis, the run, one page or less a section type, the cost
    assert 3 + len(r.section_types) // 2 <= pages <= 40, pages


def test_numeric_cells_refuse_text():
    from wallrun.outputs.report.render import cells
    assert cells((1.0, None, -0.0001, float("inf")), 2, 2, 2, 0) == "1.00<td><td>0.00<td>inf"
    with pytest.raises(TypeError):
        cells(("<script>",), 2)


def test_clauses_under_their_group_head():
    """A check's clause in the report leaves out what the head of its group names: the
    code (EN 1997-1 under EN 1997-1) and, for a seismic check, the basis of the seismic
    situation (``seismic.CLAUSE``: EN 1998-5 7.3.2, Annex E, named in the head)."""
    from wallrun import seismic
    from wallrun.outputs.report.render import clause
    assert clause("EN 1997-1 6.5.3 Eq. 6.3a", "EN 1997-1") == "6.5.3 Eq. 6.3a"
    assert clause(seismic.CLAUSE["bearing drained"], "EN 1997-1") == "6.5.2, Annex D.4"
    assert clause("Bishop (1955)", "EN 1997-1") == "Bishop (1955)"
    assert clause("EN 1992-1-1 6.1", "EN 1997-1") == "EN 1992-1-1 6.1"

"""Situations beyond the method (issue 10 item 2): the panels concerned are flagged with
the reason, the exit status is 3 and every other output is still written.

Invented sites, 24 m long, flat ground at 50.0 with a finished level hump:
- a hump to 59.6 m: retained heights above the supported 8 m of a cantilever section;
- a foundation of 14 deg, 16 kN/m3 with an allowable pressure of 35 kPa under 2.6 m of
  fill: no section within the search bounds can carry it;
- a backfill slope of 34 deg over a 30 deg backfill, and one of 28 deg over 32 deg
  (below phi'_k but above phi'_d = atan(tan 32 / 1.25) = 26.57 deg of EQU and DA1-2):
  Rankine's Ka has no real value (design-basis section 3), no active limit state.
"""

from __future__ import annotations

import csv
import json
import re
from pathlib import Path

import pytest

from wallrun.cli import main

HEAD = """[project]
name = "Beyond case"

[profiles]
ground = "ground.csv"
finished = "finished.csv"

[wall]
max_panel_length_m = 8.0
"""
GROUND = "chainage_m,level_m\n0,50.0\n8,50.0\n16,50.0\n24,50.0\n"
#: every output file of interfaces.md for a site without plan coordinates
OUTPUTS = {"panels.csv", "joints.csv", "sections.csv", "bar_schedule.csv", "quantities.csv",
           "cost.csv", "design.json", "elevation.dxf", "sections.dxf", "elevation.png",
           "sections.pdf", "sheets.pdf", "report.html"}


def site(tmp_path: Path, extra: str, peak: float) -> Path:
    d = tmp_path / "site"
    d.mkdir()
    (d / "site.toml").write_text(HEAD + extra, encoding="utf-8")
    (d / "ground.csv").write_text(GROUND, encoding="utf-8")
    (d / "finished.csv").write_text(
        f"chainage_m,level_m\n0,50.2\n10,{peak}\n24,50.3\n", encoding="utf-8")
    return d


def design(tmp_path, d, capsys):
    out = tmp_path / "out"
    rc = main(["design", str(d), "--out", str(out), "--quiet"])
    cap = capsys.readouterr()
    assert "Traceback" not in cap.err and "internal error" not in cap.err, cap.err
    return rc, out, cap


def rows(out: Path, name: str) -> list[dict]:
    with open(out / name, newline="", encoding="utf-8") as f:
        return list(csv.DictReader(f))


def assert_all_written(out: Path):
    assert out.is_dir()
    missing = OUTPUTS - {p.name for p in out.iterdir()}
    assert not missing, missing
    doc = json.loads((out / "design.json").read_text(encoding="utf-8"))
    assert doc["schema"] == "wallrun-design/1"
    return doc


def test_retained_height_beyond_supported_range(tmp_path, capsys):
    d = site(tmp_path, "", 59.6)
    assert main(["check", str(d)]) == 0  # valid input: refused by the design, not the reader
    capsys.readouterr()
    rc, out, cap = design(tmp_path, d, capsys)
    assert rc == 3
    doc = assert_all_written(out)
    panels = rows(out, "panels.csv")
    tall = [p for p in panels if float(p["retained_height_m"]) > 8.0]
    assert tall, "the hump must give panels taller than 8 m"
    for p in tall:
        assert p["status"] == "flagged"
        assert "beyond the supported range" in p["reason"], p["reason"]
        assert p["panel"] in cap.out  # the summary lists each flagged panel
    js = {p["panel"]: p for p in doc["panels"]}
    for p in tall:
        assert js[p["panel"]]["status"] == "flagged" and js[p["panel"]]["reason"] == p["reason"]
    # the panels within the range are designed, not flagged for height
    for p in panels:
        if float(p["retained_height_m"]) <= 8.0:
            assert "beyond the supported range" not in p["reason"]
    # a panel that could not be designed reports only its reason: no utilization,
    # quantities or cost, and it is left out of the totals
    for p in tall:
        for col in ("util_overturning", "util_sliding", "util_bearing", "util_structural",
                    "governing", "concrete_m3", "steel_kg", "cost"):
            assert p[col] == "", (p["panel"], col, p[col])
        assert js[p["panel"]]["quantities"] == {}
    assert_no_type_for_undesigned(out, panels, cap.out)
    assert_only_the_reason(out, panels)
    total = {q["item"]: float(q["quantity"]) for q in rows(out, "quantities.csv")}
    designed = [p for p in panels if p["status"] == "ok"]
    assert designed
    assert total["concrete_total"] == pytest.approx(
        sum(float(p["concrete_m3"]) for p in designed), abs=0.01 * len(designed))


def test_foundation_too_weak_for_any_section(tmp_path, capsys):
    d = site(tmp_path, "\n[foundation]\nfriction_angle_deg = 14.0\nunit_weight_kn_m3 = 16.0\n"
                       "allowable_bearing_kpa = 35.0\n", 52.6)
    rc, out, cap = design(tmp_path, d, capsys)
    assert rc == 3
    assert_all_written(out)
    panels = rows(out, "panels.csv")
    flagged = [p for p in panels if p["status"] == "flagged"]
    assert flagged
    for p in flagged:
        assert "no section" in p["reason"] and "fails" in p["reason"], p["reason"]
    assert_no_type_for_undesigned(out, panels, cap.out)
    assert_only_the_reason(out, panels)


def assert_only_the_reason(out, panels):
    """A panel that could not be designed shows its reason and no utilization anywhere
    (issue 14 item 5): design.json has no section, reinforcement, checks or cost for
    it; the report's governing panel is a designed one and its schedule row has no u or
    governing check; the workbook's checks sheet has none for it; the cost's total
    says the panels left out."""
    import lxml.html
    import openpyxl
    bad = {p["panel"] for p in panels if p["status"] != "ok"}
    ok = {p["panel"] for p in panels} - bad
    assert bad
    doc = json.loads((out / "design.json").read_text(encoding="utf-8"))
    for p in doc["panels"]:
        if p["panel"] in bad:
            assert (p["section"], p["reinforcement"], p["checks"], p["cost"]) == (
                None, None, [], None), p["panel"]
            assert p["reason"]
    html = lxml.html.fromstring((out / "report.html").read_bytes())
    summary = {tr[0].text_content(): tr[1].text_content()
               for tr in html.get_element_by_id("summary").xpath(".//table[1]//tr")}
    cost = summary[next(k for k in summary if k.startswith("cost"))]
    if ok:
        assert summary["governing panel"].split(":")[0] in ok
        assert f"{len(bad)} panel" in cost and "left out" in cost
    else:
        assert "governing panel" not in summary and "no panel could be designed" in cost
    sched = html.xpath("//table[@class='sched']//tr")[1:]
    for tr in sched:
        cells = [td.text_content() for td in tr]
        if cells[0] in bad:
            assert cells[8] == "" and cells[9] == "" and cells[10].strip() == "FLAGGED", cells
    ws = openpyxl.load_workbook(out / "schedule.xlsx")["checks"]
    for row in list(ws.iter_rows(values_only=True))[1:]:
        if row[0] in bad:
            assert row[3] in ("", None) and all(v is None for v in row[4:]), row
    total = rows(out, "cost.csv")[-1]
    assert (f"{len(bad)} panel" in total["note"] and "left out" in total["note"] if ok
            else "no panel could be designed" in total["note"])


def assert_no_type_for_undesigned(out, panels, console):
    """A panel that could not be designed has no section type: ``sections.csv`` lists
    the types of passing panels only (a failing section is never detailed), the
    console counts none for it, and a joint beside it is "not evaluated" with no
    founding step or pressure ratio."""
    ok = {p["panel"] for p in panels if p["status"] == "ok"}
    for p in panels:
        if p["panel"] not in ok:
            assert p["section"] == "", (p["panel"], p["section"])
    types = rows(out, "sections.csv")
    for t in types:
        assert set(t["panels"].split()) <= ok, t
    assert {t["section"] for t in types} == {p["section"] for p in panels if p["panel"] in ok}
    line = next(ln for ln in console.splitlines() if ln.startswith("Section "))
    assert sum(int(n) for n in re.findall(r" x(\d+)", line)) == len(ok), line
    for j in rows(out, "joints.csv"):
        if j["left"] not in ok or j["right"] not in ok:
            assert j["status"] == "flagged" and j["reason"].startswith("not evaluated"), j
            assert j["founding_step_m"] == "" and j["pressure_ratio"] == "", j


# above phi'_d of DA1-2 (atan(tan 32 / 1.25) = 26.6 deg) but below phi'_k: accepted,
# every panel flagged (a slope at or above phi'_k is refused by the site reader)
STEEP = [("28 over 32 (above phi_d)", "\n[backfill]\nfriction_angle_deg = 32.0\nslope_deg = 28.0\n"),
         ("31 over 32", "\n[backfill]\nfriction_angle_deg = 32.0\nslope_deg = 31.0\n")]


@pytest.mark.parametrize("extra", [s[1] for s in STEEP], ids=[s[0] for s in STEEP])
def test_steep_backfill_warned_by_check(tmp_path, capsys, extra):
    d = site(tmp_path, extra, 52.0)
    assert main(["check", str(d)]) == 0
    assert "no active limit state" in capsys.readouterr().out


@pytest.mark.parametrize("extra", [s[1] for s in STEEP], ids=[s[0] for s in STEEP])
def test_steep_backfill_flags_panels(tmp_path, capsys, extra):
    d = site(tmp_path, extra, 52.0)
    rc, out, cap = design(tmp_path, d, capsys)
    assert rc == 3, cap.err
    assert_all_written(out)
    panels = rows(out, "panels.csv")
    assert panels
    for p in panels:
        assert p["status"] == "flagged" and "slope" in p["reason"], p["reason"]

"""schedule.xlsx read back with openpyxl: sheets, headers with units, typed cells, text
kept as text (never a formula, never altered), frozen headers and autofilters, cost labels.

The DesignResult is built by hand from the take-off of two invented panels."""

from __future__ import annotations

import math
from dataclasses import replace
from types import SimpleNamespace

import openpyxl
import pytest

from wallrun.cautions import CAUTION, not_checked
from wallrun.outputs.workbook import header, write_workbook
from wallrun.results import (BarSet, CheckEntry, DesignResult, Joint, PanelResult,
                             Reinforcement, SectionType)
from wallrun.settings import Design, GroundModel, Rate, Takeoff
from wallrun.takeoff import DEMO_RATES, cost, panel_quantities, totals

from test_takeoff import BARS, SLOPED, SLOPED_SEC, STRAIGHT, STRAIGHT_SEC

SHEETS = ["cautions", "schedule", "checks", "panel quantities", "joints", "sections",
          "bar schedule", "quantities", "cost"]
HOSTILE = ["=cmd|' /C calc'!A0", "+1", "-2+3", "@SUM(A1)", "=HYPERLINK(\"x\")"]


def _reinf():
    b = BarSet(16, 150, 1340.0, 1105.0, 292.0)
    d = BarSet(10, 200, 393.0, 268.0, 300.0)
    return Reinforcement(stem=b, heel=b, toe=b, stem_horizontal=d, base_distribution=d)


def _result(rates=None, name="=cmd|' /C calc'!A0", reason="-flagged by hand", currency=""):
    qa = panel_quantities(STRAIGHT, STRAIGHT_SEC, BARS, Takeoff(), joint_seals=1)
    qb = panel_quantities(SLOPED, SLOPED_SEC, BARS[:2], Takeoff(), joint_seals=0)
    checks = (CheckEntry("sliding", "DA1-2", "drained", 61.2, 70.4, "kN/m", 0.87,
                         "EN 1997-1 6.5.3", True),
              CheckEntry("stem_bending", "DA1-1", "G unfav, heel load on", 90.0, 100.0, "kNm/m",
                         0.9, "EN 1992-1-1 6.1", True))
    panels = tuple(PanelResult(panel=p, section_type="S01", section=s, reinforcement=_reinf(),
                               checks=checks, status=st, reason=rs, quantities=q,
                               concrete_m3=q["concrete_total"],
                               steel_kg=q["reinforcement_total"], cost=0.0)
                   for p, s, q, st, rs in ((STRAIGHT, STRAIGHT_SEC, qa, "ok", ""),
                                           (SLOPED, SLOPED_SEC, qb, "flagged", reason)))
    quantities = totals([qa, qb])
    site = SimpleNamespace(project=SimpleNamespace(name=name, reference="R-1"),
                           ground_model=GroundModel(), seismic=None, design=Design(),
                           takeoff=Takeoff(currency=currency))
    return DesignResult(
        site=site, profiles=None, runs=(), panels=panels,
        joints=(Joint("J001", 6.0, "P001", "P002", 0.15, 0.6, 1.1, "ok", ""),),
        section_types=(SectionType("S01", STRAIGHT_SEC, _reinf(), "stem_bending DA1-1", 0.9,
                                   ("P001", "P002")),),
        actions={}, bar_schedule=tuple(BARS), quantities=quantities,
        cost=cost(quantities, rates), warnings=("+ a warning that looks like a formula",))


def _cells(ws):
    return [c.value for row in ws.iter_rows() for c in row if c.value is not None]


def test_header_units():
    assert header("length_m") == "length (m)"
    assert header("concrete_m3") == "concrete (m3)"
    assert header("steel_kg") == "steel (kg)"
    assert header("bar_mm") == "bar (mm)"
    assert header("util_sliding") == "util_sliding (-)"
    assert header("panel") == "panel"


def test_every_sheet_is_a_table_with_frozen_header_and_filter(tmp_path):
    res = _result()
    wb = openpyxl.load_workbook(write_workbook(res, tmp_path / "schedule.xlsx"))
    assert wb.sheetnames == SHEETS
    for ws in wb.worksheets:
        assert ws.freeze_panes == "A2", ws.title
        heads = [c.value for c in ws[1]]
        assert all(isinstance(h, str) and h for h in heads), ws.title
        assert all(c.font.bold for c in ws[1]), ws.title
        # the filter covers the header and every row of the table
        assert ws.auto_filter.ref == f"A1:{openpyxl.utils.get_column_letter(len(heads))}" \
                                     f"{ws.max_row}", ws.title


def test_workbook_round_trip(tmp_path):
    res = _result()
    path = write_workbook(res, tmp_path / "schedule.xlsx")
    wb = openpyxl.load_workbook(path)
    sched = wb["schedule"]
    heads = [c.value for c in sched[1]]
    assert heads[:6] == ["panel", "run", "side", "ch_start (m)", "ch_end (m)", "length (m)"]
    assert "concrete (m3)" in heads and "steel (kg)" in heads and "cost (cost units)" in heads
    assert sched.max_row == 3
    # numbers are numbers with their display formats; integers stay General
    length = sched.cell(row=2, column=heads.index("length (m)") + 1)
    assert length.data_type == "n" and length.number_format == "0.000"
    assert length.value == pytest.approx(res.panels[0].panel.length_m, rel=1e-15)
    assert sched.cell(row=2, column=heads.index("steel (kg)") + 1).number_format == "0.0"
    run = sched.cell(row=2, column=heads.index("run") + 1)
    assert run.value == 1 and run.number_format == "General"
    col = heads.index("concrete (m3)") + 1
    assert sched.cell(row=2, column=col).value == pytest.approx(
        res.panels[0].quantities["concrete_total"])
    # the flagged reason starting with "-" reads back unchanged, as text
    reason = sched.cell(row=3, column=heads.index("reason") + 1)
    assert reason.value == "-flagged by hand" and reason.data_type == "s"
    # an empty reason stays an empty cell
    assert sched.cell(row=2, column=heads.index("reason") + 1).value is None
    # quantities sheet equals the result's totals
    q = wb["quantities"]
    got = {r[0].value: r[2].value for r in q.iter_rows(min_row=2)}
    assert got == pytest.approx({x.item: x.quantity for x in res.quantities})
    assert [c.value for c in wb["bar schedule"][1]][:4] == ["member", "bar_mark", "type_size",
                                                             "no_of_members"]


@pytest.mark.parametrize("text", HOSTILE)
def test_text_that_looks_like_a_formula_reads_back_unchanged(tmp_path, text):
    res = _result(name=text, reason=text)
    wb = openpyxl.load_workbook(write_workbook(res, tmp_path / "w.xlsx"))
    for ws in wb.worksheets:
        for row in ws.iter_rows():
            for c in row:
                assert c.data_type != "f", (ws.title, c.coordinate, c.value)
    cautions = {r[0].value: r[1] for r in wb["cautions"].iter_rows(min_row=2)}
    assert cautions["project"].value == text and cautions["project"].data_type == "s"
    sched = wb["schedule"]
    heads = [c.value for c in sched[1]]
    reason = sched.cell(row=3, column=heads.index("reason") + 1)
    assert reason.value == text and reason.data_type == "s"


def test_cautions_sheet(tmp_path):
    res = _result()
    ws = openpyxl.load_workbook(write_workbook(res, tmp_path / "c.xlsx"))["cautions"]
    rows = [(r[0].value, r[1].value) for r in ws.iter_rows(min_row=2)]
    assert ("caution", CAUTION) in rows
    assert [t for k, t in rows if k == "not checked"] == list(not_checked(res.site))
    assert ("warning", "+ a warning that looks like a formula") in rows


def test_checks_sheet_has_the_governing_utilizations(tmp_path):
    res = _result()
    ws = openpyxl.load_workbook(write_workbook(res, tmp_path / "k.xlsx"))["checks"]
    heads = [c.value for c in ws[1]]
    assert heads == ["panel", "section", "status", "governing", "sliding DA1-2 (-)",
                     "stem_bending DA1-1 (-)"]
    assert [c.value for c in ws[2]][4:] == pytest.approx([0.87, 0.9])
    assert ws.cell(row=2, column=5).number_format == "0.000"


def test_non_finite_numbers(tmp_path):
    res = _result()
    p = res.panels[0]
    bad = replace(p.checks[0], utilization=math.inf)
    res = replace(res, panels=(replace(p, checks=(bad,) + p.checks[1:]),) + res.panels[1:])
    ws = openpyxl.load_workbook(write_workbook(res, tmp_path / "n.xlsx"))["checks"]
    assert ws.cell(row=2, column=5).value == "inf"


def test_cost_sheet_marks_demo_and_incomplete(tmp_path):
    demo = openpyxl.load_workbook(write_workbook(_result(), tmp_path / "a.xlsx"))
    rows = [[c.value for c in r] for r in demo["cost"].iter_rows()]
    assert rows[0] == ["item", "unit", "quantity (in unit)", "rate (cost units per unit)",
                       "amount (cost units)", "note"]
    assert all("invented demo rate" in r[5] for r in rows[1:-1])
    assert "not market prices" in rows[-1][5] and "incomplete" not in rows[-1][5]
    rates = [r for r in DEMO_RATES if r.item != "excavation"]
    res = _result(rates=rates)
    rows = [[c.value for c in r] for r in openpyxl.load_workbook(
        write_workbook(res, tmp_path / "b.xlsx"))["cost"].iter_rows()]
    exc = next(r for r in rows if r[0] == "excavation")
    assert exc[3] is None and exc[4] is None and "unpriced" in exc[5]  # numbers only
    total = rows[-1]
    assert total[0] == "total" and "incomplete" in total[5]
    assert "demo" not in total[5].lower()
    assert total[4] == pytest.approx(res.cost.total)
    priced = [r[4] for r in rows[1:-1] if isinstance(r[4], (int, float))]
    assert total[4] == pytest.approx(sum(priced))


def test_costs_are_headed_by_the_sites_currency(tmp_path):
    """``[takeoff] currency`` is shown beside every cost (interfaces.md): the schedule's
    cost column, the cost sheet's rate and amount; empty gives "cost units"."""
    book = openpyxl.load_workbook(write_workbook(_result(currency="EUR"), tmp_path / "e.xlsx"))
    heads = [c.value for c in next(book["cost"].iter_rows())]
    assert heads[3:5] == ["rate (EUR per unit)", "amount (EUR)"]
    assert "cost (EUR)" in [c.value for c in next(book["schedule"].iter_rows())]
    rows = [[c.value for c in r] for r in book["cost"].iter_rows()]
    assert rows[-1][:2] == ["total", "EUR"]
    plain = openpyxl.load_workbook(write_workbook(_result(), tmp_path / "p.xlsx"))
    assert "cost (cost units)" in [c.value for c in next(plain["schedule"].iter_rows())]


def test_user_rates_unit_row(tmp_path):
    res = _result(rates=[Rate("concrete_total", "m3", 100.0)])
    ws = openpyxl.load_workbook(write_workbook(res, tmp_path / "c.xlsx"))["cost"]
    rows = [[c.value for c in r] for r in ws.iter_rows()]
    conc = next(r for r in rows if r[0] == "concrete_total")
    assert conc[1] == "m3" and conc[4] == pytest.approx(conc[2] * 100.0)
    assert ws.cell(row=2, column=4).number_format == "0.00"


def test_text_cells_keep_markup_spaces_and_letters(tmp_path):
    # markup characters, surrounding spaces and a non-ASCII name survive
    name = "  Wall <RW1> & Co, Müller  "
    wb = openpyxl.load_workbook(write_workbook(_result(name=name), tmp_path / "t.xlsx"))
    cautions = {r[0].value: r[1].value for r in wb["cautions"].iter_rows(min_row=2)}
    assert cautions["project"] == name
    assert wb.properties.title == f"{name}: panel schedule"

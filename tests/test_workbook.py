"""schedule.xlsx: sheets, headers with units, formula neutralising, cost labels.

The DesignResult is built by hand from the take-off of two invented panels."""

from __future__ import annotations

from types import SimpleNamespace

import openpyxl
import pytest

from wallrun.outputs.workbook import header, safe, write_workbook
from wallrun.results import (BarSet, CheckEntry, DesignResult, Joint, PanelResult,
                             Reinforcement, SectionType)
from wallrun.settings import Rate, Takeoff
from wallrun.takeoff import DEMO_RATES, cost, panel_quantities, totals

from test_takeoff import BARS, SLOPED, SLOPED_SEC, STRAIGHT, STRAIGHT_SEC

SHEETS = ["notes", "schedule", "panel quantities", "joints", "sections", "bar schedule",
          "quantities", "cost"]


def _reinf():
    b = BarSet(16, 150, 1340.0, 1105.0, 292.0)
    d = BarSet(10, 200, 393.0, 268.0, 300.0)
    return Reinforcement(stem=b, heel=b, toe=b, stem_horizontal=d, base_distribution=d)


def _result(rates=None, name="=cmd|' /C calc'!A0", reason="-flagged by hand"):
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
    site = SimpleNamespace(project=SimpleNamespace(name=name, reference="R-1"))
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


def test_safe_neutralises_formula_text():
    for s in ("=cmd", "+1", "-2+3", "@SUM(A1)", "\t=x"):
        assert safe(s) == "'" + s
    assert safe("plain") == "plain" and safe(-2.5) == -2.5 and safe(float("inf")) == "inf"


def test_workbook_round_trip(tmp_path):
    res = _result()
    path = write_workbook(res, tmp_path / "schedule.xlsx")
    wb = openpyxl.load_workbook(path)
    assert wb.sheetnames == SHEETS
    sched = wb["schedule"]
    heads = [c.value for c in sched[1]]
    assert heads[:6] == ["panel", "run", "side", "ch_start (m)", "ch_end (m)", "length (m)"]
    assert "concrete (m3)" in heads and "steel (kg)" in heads
    assert sched.max_row == 3
    # header bold and frozen; numbers keep their display formats (write-only mode)
    assert all(c.font.bold for c in sched[1]) and sched.freeze_panes == "A2"
    assert sched.cell(row=2, column=heads.index("length (m)") + 1).number_format == "0.000"
    assert sched.cell(row=2, column=heads.index("steel (kg)") + 1).number_format == "0.0"
    col = heads.index("concrete (m3)") + 1
    assert sched.cell(row=2, column=col).value == pytest.approx(
        res.panels[0].quantities["concrete_total"])
    # The flagged reason starting with "-" is text, neutralised.
    assert sched.cell(row=3, column=heads.index("reason") + 1).value == "'-flagged by hand"
    # The project name "=cmd..." never becomes a formula.
    notes = wb["notes"]
    values = _cells(notes)
    assert "'=cmd|' /C calc'!A0" in values
    for ws in wb.worksheets:
        for row in ws.iter_rows():
            for c in row:
                assert c.data_type != "f", (ws.title, c.coordinate, c.value)
    # Quantities sheet equals the result's totals.
    q = wb["quantities"]
    got = {r[0].value: r[2].value for r in q.iter_rows(min_row=2)}
    assert got == pytest.approx({x.item: x.quantity for x in res.quantities})
    assert [c.value for c in wb["bar schedule"][1]][:4] == ["member", "bar_mark", "type_size",
                                                             "no_of_members"]


def test_cost_sheet_marks_demo_and_incomplete(tmp_path):
    demo = openpyxl.load_workbook(write_workbook(_result(), tmp_path / "a.xlsx"))["cost"]
    text = " ".join(str(v) for v in _cells(demo))
    assert "INVENTED" in text and "not market prices" in text
    assert "INCOMPLETE" not in text
    rates = [r for r in DEMO_RATES if r.item != "excavation"]
    res = _result(rates=rates)
    ws = openpyxl.load_workbook(write_workbook(res, tmp_path / "b.xlsx"))["cost"]
    cells = _cells(ws)
    text = " ".join(str(v) for v in cells)
    assert "INCOMPLETE" in text and "INVENTED" not in text
    rows = [[c.value for c in r] for r in ws.iter_rows()]
    exc = next(r for r in rows if r[0] == "excavation")
    assert exc[3] == "unpriced" and exc[4] == "unpriced"
    total = next(r for r in rows if str(r[0]).startswith("total"))
    assert "incomplete" in total[0]
    assert total[4] == pytest.approx(res.cost.total)
    priced = [r[4] for r in rows if isinstance(r[4], (int, float)) and r is not total]
    assert total[4] == pytest.approx(sum(priced))


def test_user_rates_unit_row(tmp_path):
    res = _result(rates=[Rate("concrete_total", "m3", 100.0)])
    ws = openpyxl.load_workbook(write_workbook(res, tmp_path / "c.xlsx"))["cost"]
    rows = [[c.value for c in r] for r in ws.iter_rows()]
    conc = next(r for r in rows if r[0] == "concrete_total")
    assert conc[1] == "m3" and conc[4] == pytest.approx(conc[2] * 100.0)


def test_text_cells_escape_and_keep_spaces(tmp_path):
    # markup characters, surrounding spaces and a non-ASCII name survive the streamed XML
    res = _result(name="  Wall <RW1> & Co, Müller  ")
    wb = openpyxl.load_workbook(write_workbook(res, tmp_path / "t.xlsx"))
    assert "  Wall <RW1> & Co, Müller  " in _cells(wb["notes"])
    sched = wb["schedule"]
    heads = [c.value for c in sched[1]]
    # an empty reason stays an empty cell; numbers keep their full value
    assert sched.cell(row=2, column=heads.index("reason") + 1).value is None
    assert sched.cell(row=2, column=heads.index("steel (kg)") + 1).value == pytest.approx(
        res.panels[0].steel_kg, rel=1e-15)
    assert wb["notes"].column_dimensions["B"].width == 100


def test_control_characters_are_refused(tmp_path):
    from openpyxl.utils.exceptions import IllegalCharacterError
    with pytest.raises(IllegalCharacterError):
        write_workbook(_result(name="bad\x01name"), tmp_path / "x.xlsx")

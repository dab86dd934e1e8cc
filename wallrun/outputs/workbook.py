"""The spreadsheet ``schedule.xlsx``: the output tables in one workbook (openpyxl).

Sheets: notes (project, caution, what is not checked, rate labels), schedule (the
``panels.csv`` columns), panel quantities, joints, sections, bar schedule,
quantities, cost. Headers carry their units, e.g. ``length (m)``. Text cells that a
spreadsheet would read as a formula (leading ``= + - @``, tab or CR) are written with a
leading apostrophe so they stay text. Numbers are written unrounded with a display
format; infinite or undefined numbers are written as the text ``inf`` / empty.
"""

from __future__ import annotations

import math
from pathlib import Path

from openpyxl import Workbook
from openpyxl.styles import Font

from wallrun.outputs.tables import (BAR_COLUMNS, CAUTION, JOINT_COLUMNS, NOT_CHECKED,
                                    PANEL_COLUMNS, SECTION_COLUMNS, panel_row, section_row)
from wallrun.results import DesignResult
from wallrun.takeoff import DEMO_RATES_NOTE, item_order, unit_of

_SUFFIXES = (("_mm2_per_m", "mm2/m"), ("_kn_m3", "kN/m3"), ("_kpa", "kPa"), ("_deg", "deg"),
             ("_m3", "m3"), ("_mm", "mm"), ("_kg", "kg"), ("_m", "m"))
_DIMENSIONLESS = ("util_", "utilization", "pressure_ratio")
_BOLD = Font(bold=True)


def header(column: str) -> str:
    """Column name -> header with its unit: ``length_m`` -> ``length (m)``,
    ``util_sliding`` -> ``util_sliding (-)``; names without a unit are unchanged."""
    for suffix, unit in _SUFFIXES:
        if column.endswith(suffix) and len(column) > len(suffix):
            return f"{column[:-len(suffix)]} ({unit})"
    if column.startswith(_DIMENSIONLESS):
        return f"{column} (-)"
    if column == "cost":
        return "cost (rate units)"
    return column


def safe(value):
    """A cell value that cannot run as a formula: text starting with = + - @ (or a
    tab/CR) gets a leading apostrophe; non-finite floats become text; None stays empty."""
    if value is None:
        return None
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, float):
        if math.isnan(value):
            return None
        if math.isinf(value):
            return "inf" if value > 0 else "'-inf"
        return value
    if isinstance(value, int):
        return value
    s = str(value)
    if s and s[0] in "=+-@\t\r":
        return "'" + s
    return s


def _put(ws, row: int, col: int, value, fmt: str | None = None):
    cell = ws.cell(row=row, column=col)
    v = safe(value)
    cell.value = v
    if isinstance(v, str):
        cell.data_type = "s"  # never a formula
    elif isinstance(v, float) and fmt:
        cell.number_format = fmt
    return cell


def _table(ws, columns, rows, first_row: int = 1, formats: dict | None = None,
           headers: list[str] | None = None) -> int:
    """Write a header row and the rows (dicts keyed by column); returns the next free row."""
    formats = formats or {}
    for j, c in enumerate(columns, start=1):
        _put(ws, first_row, j, headers[j - 1] if headers else header(c)).font = _BOLD
    r = first_row
    for r, row in enumerate(rows, start=first_row + 1):
        for j, c in enumerate(columns, start=1):
            _put(ws, r, j, row.get(c), formats.get(c, "0.000"))
    ws.freeze_panes = ws.cell(row=first_row + 1, column=1)
    for j, c in enumerate(columns, start=1):
        width = max(len(str(headers[j - 1] if headers else header(c))), 8) + 2
        ws.column_dimensions[ws.cell(row=first_row, column=j).column_letter].width = min(width, 40)
    return r + 1


def _notes(ws, result: DesignResult) -> None:
    project = getattr(result.site, "project", None)
    lines = [("project", getattr(project, "name", "")),
             ("reference", getattr(project, "reference", "")),
             ("caution", CAUTION)]
    lines += [("not checked", item) for item in NOT_CHECKED]
    if result.cost.demo_rates:
        lines.append(("rates", DEMO_RATES_NOTE))
    if not result.cost.complete:
        lines.append(("cost", "Incomplete: some items have no rate; the total leaves them out."))
    lines += [("warning", w) for w in result.warnings]
    for i, (k, v) in enumerate(lines, start=1):
        _put(ws, i, 1, k).font = _BOLD
        _put(ws, i, 2, v)
    ws.column_dimensions["A"].width = 14
    ws.column_dimensions["B"].width = 100


def _panel_quantities(ws, result: DesignResult) -> None:
    items = sorted({k for p in result.panels for k in p.quantities}, key=item_order)
    cols = ["panel"] + items
    heads = ["panel"] + [f"{i} ({_unit(i)})" for i in items]
    rows = [{"panel": p.panel.panel, **p.quantities} for p in result.panels]
    _table(ws, cols, rows, headers=heads)


def _unit(item: str) -> str:
    try:
        return unit_of(item)
    except ValueError:
        return "?"


def _cost(ws, result: DesignResult) -> None:
    c = result.cost
    r = 1
    if c.demo_rates:
        _put(ws, r, 1, "RATES ARE INVENTED EXAMPLE FIGURES, NOT MARKET PRICES").font = _BOLD
        _put(ws, r, 2, DEMO_RATES_NOTE)
        r += 1
    if not c.complete:
        _put(ws, r, 1, "INCOMPLETE ESTIMATE").font = _BOLD
        _put(ws, r, 2, "items marked unpriced have no rate and are not in the total")
        r += 1
    if r > 1:
        r += 1
    cols = ("item", "unit", "quantity", "rate", "amount")
    heads = ["item", "unit", "quantity (in unit)", "rate (per unit)", "amount"]
    rows = [{"item": x.item, "unit": x.unit, "quantity": x.quantity,
             "rate": x.rate if x.rate is not None else "unpriced",
             "amount": x.amount if x.amount is not None else "unpriced"} for x in c.rows]
    label = "total" if c.complete else "total (incomplete: unpriced items left out)"
    rows.append({"item": label, "amount": c.total})
    nxt = _table(ws, cols, rows, first_row=r, headers=heads,
                 formats={"quantity": "0.000", "rate": "0.00", "amount": "0.00"})
    ws.cell(row=nxt - 1, column=1).font = _BOLD


def write_workbook(result: DesignResult, path) -> Path:
    """Write ``schedule.xlsx`` for ``result`` at ``path``; returns the path."""
    wb = Workbook()
    ws = wb.active
    ws.title = "notes"
    _notes(ws, result)
    _table(wb.create_sheet("schedule"), PANEL_COLUMNS, [panel_row(p) for p in result.panels],
           formats={"cost": "0.00", "steel_kg": "0.0"})
    _panel_quantities(wb.create_sheet("panel quantities"), result)
    _table(wb.create_sheet("joints"), JOINT_COLUMNS, [dict(j.__dict__) for j in result.joints])
    _table(wb.create_sheet("sections"), SECTION_COLUMNS,
           [section_row(t) for t in result.section_types])
    _table(wb.create_sheet("bar schedule"), BAR_COLUMNS,
           [{c: getattr(b, c) for c in BAR_COLUMNS} for b in result.bar_schedule],
           formats={"mass_kg": "0.00", "total_length_m": "0.00"})
    _table(wb.create_sheet("quantities"), ("item", "unit", "quantity"),
           [dict(q.__dict__) for q in result.quantities],
           headers=["item", "unit", "quantity (in unit)"])
    _cost(wb.create_sheet("cost"), result)
    path = Path(path)
    wb.save(path)
    return path

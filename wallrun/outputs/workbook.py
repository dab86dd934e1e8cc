"""The spreadsheet ``schedule.xlsx``: the output tables in one workbook (openpyxl).

Sheets: notes (project, caution, what is not checked, rate labels), schedule (the
``panels.csv`` columns), panel quantities, joints, sections, bar schedule,
quantities, cost. Headers carry their units, e.g. ``length (m)``. Text cells that a
spreadsheet would read as a formula (leading ``= + - @``, tab or CR) are written with a
leading apostrophe so they stay text. Numbers are written unrounded with a display
format; infinite or undefined numbers are written as the text ``inf`` / empty.

The workbook is written in openpyxl's write-only mode (rows streamed in order), which
keeps a schedule of thousands of panels quick to write.
"""

from __future__ import annotations

import math
from pathlib import Path

from copy import copy

from openpyxl import Workbook
from openpyxl.cell import WriteOnlyCell
from openpyxl.styles import Font
from openpyxl.utils import get_column_letter

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


class _Cells:
    """Cell factory for one write-only sheet: plain values pass through (openpyxl
    writes them as they are), bold text and formatted numbers become WriteOnlyCells
    whose style is copied from one template cell per style (set once, not per cell)."""

    def __init__(self, ws):
        self.ws = ws
        self._templates: dict = {}

    def _styled(self, value, fmt: str | None, bold: bool):
        key = (fmt, bold)
        tpl = self._templates.get(key)
        if tpl is None:
            tpl = WriteOnlyCell(self.ws)
            if fmt:
                tpl.number_format = fmt
            if bold:
                tpl.font = _BOLD
            self._templates[key] = tpl
        c = WriteOnlyCell(self.ws, value=value)
        c._style = copy(tpl._style)
        return c

    def put(self, value, fmt: str | None = None, bold: bool = False):
        """``value`` made safe (:func:`safe`), so that text is always text: it never
        starts with ``=``, which is what openpyxl would write as a formula."""
        v = safe(value)
        if bold or (fmt and isinstance(v, float)):
            c = self._styled(v, fmt if isinstance(v, float) else None, bold)
            if isinstance(v, str):
                c.data_type = "s"
            return c
        return v


def _table(ws, columns, rows, formats: dict | None = None,
           headers: list[str] | None = None, bold_last: bool = False,
           header_row: int = 1) -> None:
    """Column widths, frozen header, a bold header row and the rows (dicts keyed by
    column) of a write-only sheet; the last row bold with ``bold_last``.
    ``header_row`` is the sheet row the header lands on (rows above it are written
    by the caller first)."""
    formats = formats or {}
    heads = headers if headers else [header(c) for c in columns]
    for j, h in enumerate(heads, start=1):
        ws.column_dimensions[get_column_letter(j)].width = min(max(len(str(h)), 8) + 2, 40)
    ws.freeze_panes = f"A{header_row + 1}"
    cells = _Cells(ws)
    ws.append([cells.put(h, bold=True) for h in heads])
    fmts = [formats.get(c, "0.000") for c in columns]
    last = len(rows) - 1
    for i, row in enumerate(rows):
        bold = bold_last and i == last
        ws.append([cells.put(row.get(c), f, bold=bold and j == 0)
                   for j, (c, f) in enumerate(zip(columns, fmts))])


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
    ws.column_dimensions["A"].width = 14
    ws.column_dimensions["B"].width = 100
    cells = _Cells(ws)
    for k, v in lines:
        ws.append([cells.put(k, bold=True), cells.put(v)])


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
    cells = _Cells(ws)
    above = []
    if c.demo_rates:
        above.append(["RATES ARE INVENTED EXAMPLE FIGURES, NOT MARKET PRICES",
                      DEMO_RATES_NOTE])
    if not c.complete:
        above.append(["INCOMPLETE ESTIMATE",
                      "items marked unpriced have no rate and are not in the total"])
    cols = ("item", "unit", "quantity", "rate", "amount")
    heads = ["item", "unit", "quantity (in unit)", "rate (per unit)", "amount"]
    rows = [{"item": x.item, "unit": x.unit, "quantity": x.quantity,
             "rate": x.rate if x.rate is not None else "unpriced",
             "amount": x.amount if x.amount is not None else "unpriced"} for x in c.rows]
    label = "total" if c.complete else "total (incomplete: unpriced items left out)"
    rows.append({"item": label, "amount": c.total})
    header_row = 1
    if above:  # the notices, a blank row, then the table
        for a, b in above:
            ws.append([cells.put(a, bold=True), cells.put(b)])
        ws.append([])
        header_row = len(above) + 2
    _table(ws, cols, rows, headers=heads, bold_last=True, header_row=header_row,
           formats={"quantity": "0.000", "rate": "0.00", "amount": "0.00"})


def write_workbook(result: DesignResult, path) -> Path:
    """Write ``schedule.xlsx`` for ``result`` at ``path``; returns the path."""
    wb = Workbook(write_only=True)  # rows streamed to the file, no cell objects kept
    _notes(wb.create_sheet("notes"), result)
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

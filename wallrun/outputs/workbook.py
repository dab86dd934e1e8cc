"""The spreadsheet ``schedule.xlsx``: the output tables in one workbook, via XlsxWriter.

Sheets, each one table: ``cautions`` (project, the caution, what is not checked for the
site, rate and cost notices, warnings), ``schedule`` (the ``panels.csv`` columns),
``checks`` (a row a panel: the utilization of the worst entry of each check and
combination; ``design.json`` has every entry with its case, effect and resistance),
``panel quantities``, ``joints``, ``sections``, ``bar schedule``, ``quantities`` and
``cost`` (the ``cost.csv`` columns, notices in ``note``). Every sheet has one bold
header row carrying the units (``length (m)``), frozen, and an autofilter over its
table.

Cells are typed: numbers are numbers, unrounded, shown with a number format; text is
written with ``write_string``, so a text starting with ``= + - @`` is stored as it is
and is never a formula; true and false are booleans; an infinite number is the text
``inf`` (``-inf``) and an undefined one an empty cell. The workbook is streamed in
XlsxWriter's constant-memory mode (each row goes to disk once written).
"""

from __future__ import annotations

import dataclasses
import datetime as dt
import math
from numbers import Real
from pathlib import Path

import xlsxwriter

from wallrun.cautions import CAUTION, NOTHING_DESIGNED, left_out, not_checked
from wallrun.outputs.stamp import issue_date
from wallrun.outputs.tables import (
    BAR_COLUMNS,
    COST_COLUMNS,
    JOINT_COLUMNS,
    PANEL_COLUMNS,
    SECTION_COLUMNS,
    bar_schedule_row,
    cost_csv_rows,
    panel_row,
    section_row,
)
from wallrun.results import DesignResult
from wallrun.takeoff import DEMO_RATES_NOTE, item_order, unit_of

_SUFFIXES = (("_mm2_per_m", "mm2/m"), ("_kn_m3", "kN/m3"), ("_kpa", "kPa"), ("_deg", "deg"),
             ("_m3", "m3"), ("_mm", "mm"), ("_kg", "kg"), ("_m", "m"))
_DIMENSIONLESS = ("util_", "utilization", "pressure_ratio")


def header(column: str, money: str = "cost units") -> str:
    """Column name -> header with its unit: ``length_m`` -> ``length (m)``,
    ``util_sliding`` -> ``util_sliding (-)``, ``cost`` -> ``cost (<money>)`` (the site's
    currency, ``[takeoff] currency``); names without a unit are unchanged."""
    for suffix, unit in _SUFFIXES:
        if column.endswith(suffix) and len(column) > len(suffix):
            return f"{column[:-len(suffix)]} ({unit})"
    if column.startswith(_DIMENSIONLESS):
        return f"{column} (-)"
    if column == "cost":
        return f"cost ({money})"
    return column


class _Book:
    """A workbook being written: its cell formats, made once each."""

    def __init__(self, path: Path):
        self.wb = xlsxwriter.Workbook(str(path), {"constant_memory": True})
        self.bold = self.wb.add_format({"bold": True})
        self._formats: dict = {}

    def number_format(self, fmt: str | None):
        if fmt is None:
            return None
        f = self._formats.get(fmt)
        if f is None:
            f = self._formats[fmt] = self.wb.add_format({"num_format": fmt})
        return f

    def table(self, name: str, headers, rows, formats=(), widths=None) -> None:
        """A sheet holding one table: the bold header row (frozen, with an autofilter
        over the table) and ``rows`` (sequences of values in header order).
        ``formats``: the number format of each column's floats (None: General)."""
        ws = self.wb.add_worksheet(name)
        n = len(headers)
        fmts = [self.number_format(f) for f in formats] + [None] * (n - len(formats))
        for j, h in enumerate(headers):
            w = widths[j] if widths else min(max(len(h), 8) + 2, 40)
            ws.set_column(j, j, w)
            ws.write_string(0, j, h, self.bold)
        r = 0
        number, string = ws.write_number, ws.write_string
        for r, row in enumerate(rows, start=1):
            for j, v in enumerate(row):
                t = type(v)  # the common types first, the rest by _put
                if t is float and v - v == 0.0:
                    number(r, j, v, fmts[j])
                elif t is str:
                    if v:
                        string(r, j, v)
                elif t is int:
                    number(r, j, v)
                elif v is not None:
                    _put(ws, r, j, v, fmts[j])
        ws.freeze_panes(1, 0)
        ws.autofilter(0, 0, r, n - 1)

    def close(self, result: DesignResult) -> None:
        project = getattr(result.site, "project", None)
        self.wb.set_properties({
            "title": f"{getattr(project, 'name', '')}: panel schedule",
            "comments": CAUTION,
            "created": dt.datetime.combine(issue_date(), dt.time(0, 0)),
        })
        self.wb.close()


def _put(ws, r: int, c: int, v, fmt) -> None:
    """One typed cell (see the module docstring); ``fmt`` applies to floats only."""
    if v is None:
        return
    if isinstance(v, str):
        if v:
            ws.write_string(r, c, v)
    elif isinstance(v, bool):
        ws.write_boolean(r, c, v)
    elif isinstance(v, Real):
        x = float(v)
        if math.isfinite(x):
            ws.write_number(r, c, x, fmt if isinstance(v, float) else None)
        elif not math.isnan(x):
            ws.write_string(r, c, "inf" if x > 0 else "-inf")
    else:
        ws.write_string(r, c, str(v))


def _cautions(book: _Book, result: DesignResult) -> None:
    project = getattr(result.site, "project", None)
    rows = [("project", getattr(project, "name", "")),
            ("reference", getattr(project, "reference", "")),
            ("caution", CAUTION)]
    rows += [("not checked", item) for item in not_checked(result.site)]
    if result.cost.demo_rates:
        rows.append(("rates", DEMO_RATES_NOTE))
    if result.nothing_designed:
        rows.append(("cost", NOTHING_DESIGNED[0].upper() + NOTHING_DESIGNED[1:] + "."))
    elif result.not_designed:
        rows.append(("cost", left_out(result.not_designed) + "."))
    if not result.cost.complete:
        rows.append(("cost", "Incomplete: some items have no rate; the total leaves them out."))
    rows += [("warning", w) for w in result.warnings]
    book.table("cautions", ["topic", "text"], rows, widths=[14, 110])


def _checks(book: _Book, result: DesignResult) -> None:
    """A row a panel: the utilization of the governing entry of each (check,
    combination), columns in order of first appearance."""
    keys: dict = {}
    per_panel = []
    for p in result.panels:
        u = {}
        lst = p.checks
        for kind, g, ut in zip(lst.kinds, lst.governing_flags(), lst.values[2].tolist()):
            if g:
                k = (kind[0], kind[1])
                u[k] = ut
                keys.setdefault(k, None)
        per_panel.append(u)
    cols = list(keys)
    heads = ["panel", "section", "status", "governing"] + [f"{c} {m} (-)" for c, m in cols]
    rows = ([p.panel.panel, p.section_type, p.status, p.governing] + [u.get(k) for k in cols]
            for p, u in zip(result.panels, per_panel))
    book.table("checks", heads, rows, [None] * 4 + ["0.000"] * len(cols))


def _panel_quantities(book: _Book, result: DesignResult) -> None:
    items = sorted({k for p in result.panels for k in p.quantities}, key=item_order)

    def unit(item):
        try:
            return unit_of(item)
        except ValueError:
            return "?"

    heads = ["panel"] + [f"{i} ({unit(i)})" for i in items]
    rows = ([p.panel.panel] + [p.quantities.get(i) for i in items] for p in result.panels)
    book.table("panel quantities", heads, rows, [None] + ["0.000"] * len(items))


def _columns(book: _Book, name: str, columns, dict_rows, formats: dict | None = None,
             money: str = "cost units") -> None:
    """A table of dict rows keyed by ``columns``, headers with units (costs in
    ``money``), floats shown to 3 decimals unless ``formats`` says otherwise."""
    formats = formats or {}
    book.table(name, [header(c, money) for c in columns],
               ([row.get(c) for c in columns] for row in dict_rows),
               [formats.get(c, "0.000") for c in columns])


def write_workbook(result: DesignResult, path) -> Path:
    """Write ``schedule.xlsx`` for ``result`` at ``path``; returns the path."""
    path = Path(path)
    money = result.site.takeoff.money
    book = _Book(path)
    _cautions(book, result)
    _columns(book, "schedule", PANEL_COLUMNS, (panel_row(p) for p in result.panels),
             {"cost": "0.00", "steel_kg": "0.0"}, money)
    _checks(book, result)
    _panel_quantities(book, result)
    _columns(book, "joints", JOINT_COLUMNS, (dataclasses.asdict(j) for j in result.joints))
    _columns(book, "sections", SECTION_COLUMNS, (section_row(t) for t in result.section_types))
    _columns(book, "bar schedule", BAR_COLUMNS,
             (bar_schedule_row(b) for b in result.bar_schedule), {"mass_kg": "0.00"})
    book.table("quantities", ["item", "unit", "quantity (in unit)"],
               ((q.item, q.unit, q.quantity) for q in result.quantities), [None, None, "0.000"])
    book.table("cost", ["item", "unit", "quantity (in unit)", f"rate ({money} per unit)",
                        f"amount ({money})", "note"],
               ([row[c] for c in COST_COLUMNS] for row in cost_csv_rows(result)),
               [None, None, "0.000", "0.00", "0.00", None], widths=[22, 8, 18, 26, 20, 60])
    book.close(result)
    return path

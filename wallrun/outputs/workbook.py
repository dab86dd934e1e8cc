"""The spreadsheet ``schedule.xlsx``: the output tables in one workbook (openpyxl).

Sheets: notes (project, caution, what is not checked, rate labels), schedule (the
``panels.csv`` columns), panel quantities, joints, sections, bar schedule,
quantities, cost. Headers carry their units, e.g. ``length (m)``. Text cells that a
spreadsheet would read as a formula (leading ``= + - @``, tab or CR) are written with a
leading apostrophe so they stay text. Numbers are written unrounded with a display
format; infinite or undefined numbers are written as the text ``inf`` / empty.

The workbook is streamed as SpreadsheetML (ECMA-376) text straight into the zip: each
row is one string built from the cell values, in the layout openpyxl's write-only mode
gives (inline strings, one style per number format or bold, the numbers as ``%.16g``),
so openpyxl and spreadsheet programs read the same cells, formats and widths, at a
fraction of the cost of one cell object per value. As in openpyxl's write-only mode,
column widths and the frozen header apply only to a sheet whose table starts the sheet.
"""

from __future__ import annotations

import math
import zipfile
from pathlib import Path
from xml.sax.saxutils import escape

from openpyxl.cell.cell import ILLEGAL_CHARACTERS_RE
from openpyxl.styles.numbers import BUILTIN_FORMATS_REVERSE
from openpyxl.utils import get_column_letter
from openpyxl.utils.exceptions import IllegalCharacterError
from openpyxl.writer.theme import theme_xml

from wallrun.outputs.tables import (BAR_COLUMNS, CAUTION, JOINT_COLUMNS, NOT_CHECKED,
                                    PANEL_COLUMNS, SECTION_COLUMNS, panel_row, section_row)
from wallrun.results import DesignResult
from wallrun.takeoff import DEMO_RATES_NOTE, item_order, unit_of

_SUFFIXES = (("_mm2_per_m", "mm2/m"), ("_kn_m3", "kN/m3"), ("_kpa", "kPa"), ("_deg", "deg"),
             ("_m3", "m3"), ("_mm", "mm"), ("_kg", "kg"), ("_m", "m"))
_DIMENSIONLESS = ("util_", "utilization", "pressure_ratio")


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


_MAIN = "http://schemas.openxmlformats.org/spreadsheetml/2006/main"
_REL = "http://schemas.openxmlformats.org/officeDocument/2006/relationships"
_PKG_REL = "http://schemas.openxmlformats.org/package/2006/relationships"
_CT = "application/vnd.openxmlformats-officedocument.spreadsheetml"


def _attr(value: str) -> str:
    """``value`` escaped for a double-quoted XML attribute."""
    return escape(value, {'"': "&quot;"})


def _text(value: str) -> str:
    """The ``<is>`` of an inline string cell (openpyxl's checks: at most 32,767
    characters, no XML-illegal control characters; surrounding space preserved)."""
    value = value[:32767]
    if ILLEGAL_CHARACTERS_RE.search(value):
        raise IllegalCharacterError(f"{value} cannot be used in worksheets.")
    if value == "":
        return ""
    sp = ' xml:space="preserve"' if value != value.strip() else ""
    return f"<is><t{sp}>{escape(value)}</t></is>"


class _Styles:
    """The cell formats of the workbook (number format, bold), numbered in order of first
    use after the default one, as ``styles.xml`` lists them."""

    def __init__(self):
        self.ids: dict = {(None, False): 0}

    def id(self, fmt: str | None, bold: bool) -> int:
        key = (fmt, bold)
        i = self.ids.get(key)
        if i is None:
            i = self.ids[key] = len(self.ids)
        return i

    def xml(self) -> str:
        custom: dict[str, int] = {}
        xfs = []
        for fmt, bold in self.ids:
            num = 0
            if fmt:
                num = BUILTIN_FORMATS_REVERSE.get(fmt)
                if num is None:
                    num = custom.setdefault(fmt, 164 + len(custom))
            xfs.append(f'<xf numFmtId="{num}" fontId="{1 if bold else 0}" fillId="0" borderId="0"'
                       f' pivotButton="0" quotePrefix="0" xfId="0"/>')
        fmts = "".join(f'<numFmt numFmtId="{i}" formatCode="{_attr(f)}"/>'
                       for f, i in custom.items())
        return (f'<styleSheet xmlns="{_MAIN}"><numFmts count="{len(custom)}">{fmts}</numFmts>'
                '<fonts count="2"><font><name val="Calibri"/><family val="2"/>'
                '<color theme="1"/><sz val="11"/><scheme val="minor"/></font>'
                '<font><b val="1"/></font></fonts><fills count="2"><fill><patternFill/></fill>'
                '<fill><patternFill patternType="gray125"/></fill></fills><borders count="1">'
                '<border><left/><right/><top/><bottom/><diagonal/></border></borders>'
                '<cellStyleXfs count="1"><xf numFmtId="0" fontId="0" fillId="0" borderId="0"/>'
                f'</cellStyleXfs><cellXfs count="{len(xfs)}">{"".join(xfs)}</cellXfs>'
                '<cellStyles count="1"><cellStyle name="Normal" xfId="0" builtinId="0" '
                'hidden="0"/></cellStyles><tableStyles count="0" '
                'defaultTableStyle="TableStyleMedium9" defaultPivotStyle="PivotStyleLight16"/>'
                '</styleSheet>')


class _Sheet:
    """One worksheet streamed as text: the head (column widths, frozen header) is fixed
    by the first row, as in openpyxl's write-only mode; then one string per row."""

    def __init__(self, title: str, styles: _Styles):
        self.title, self.styles = title, styles
        self.widths: dict[int, float] = {}
        self.freeze: str | None = None
        self.parts: list[str] = []
        self.row = 0

    def _head(self) -> None:
        view = '<selection activeCell="A1" sqref="A1"/>'
        if self.freeze:
            view = (f'<pane ySplit="{int(self.freeze[1:]) - 1}" topLeftCell="{self.freeze}" '
                    'activePane="bottomLeft" state="frozen"/>'
                    '<selection pane="bottomLeft" activeCell="A1" sqref="A1"/>')
        cols = "".join(f'<col width="{w}" customWidth="1" min="{j}" max="{j}"/>'
                       for j, w in sorted(self.widths.items()))
        self.parts.append(
            f'<worksheet xmlns="{_MAIN}"><sheetPr><outlinePr summaryBelow="1" summaryRight="1"/>'
            f'<pageSetUpPr/></sheetPr><sheetViews><sheetView workbookViewId="0">{view}'
            '</sheetView></sheetViews><sheetFormatPr baseColWidth="8" defaultRowHeight="15"/>'
            + (f"<cols>{cols}</cols>" if cols else "") + "<sheetData>")

    def append(self, values, fmts=None, bold=()) -> None:
        """One row: ``values`` (made safe here, :func:`safe`), the number format of each
        column for floats (``fmts``), and the columns in bold."""
        if not self.parts:
            self._head()
        self.row += 1
        r = self.row
        cells = []
        sid = self.styles.id
        for j, value in enumerate(values):
            v = safe(value)
            b = j in bold
            if v is None:
                if b:
                    cells.append(f'<c r="{get_column_letter(j + 1)}{r}" s="{sid(None, True)}" t="n"/>')
                continue
            ref = f"{get_column_letter(j + 1)}{r}"
            if isinstance(v, str):
                st = f' s="{sid(None, True)}"' if b else ""
                cells.append(f'<c r="{ref}"{st} t="inlineStr">{_text(v)}</c>')
            else:
                fmt = fmts[j] if fmts is not None and isinstance(v, float) else None
                st = f' s="{sid(fmt, b)}"' if (fmt or b) else ""
                cells.append(f'<c r="{ref}"{st} t="n"><v>{"%.16g" % v}</v></c>')
        self.parts.append(f'<row r="{r}">{"".join(cells)}</row>')

    def xml(self) -> str:
        if not self.parts:
            self._head()
        return "".join(self.parts) + ('</sheetData><pageMargins left="0.75" right="0.75" top="1" '
                                      'bottom="1" header="0.5" footer="0.5"/></worksheet>')


def _table(ws: _Sheet, columns, rows, formats: dict | None = None,
           headers: list[str] | None = None, bold_last: bool = False) -> None:
    """Column widths, frozen header, a bold header row and the rows (dicts keyed by
    column) of a sheet; the last row's first cell bold with ``bold_last``. Widths and
    the frozen header count only when the header is the sheet's first row."""
    formats = formats or {}
    heads = headers if headers else [header(c) for c in columns]
    if not ws.parts:
        for j, h in enumerate(heads, start=1):
            ws.widths[j] = min(max(len(str(h)), 8) + 2, 40)
        ws.freeze = "A2"
    ws.append(heads, bold=range(len(heads)))
    fmts = [formats.get(c, "0.000") for c in columns]
    last = len(rows) - 1
    first = (0,)
    for i, row in enumerate(rows):
        ws.append([row.get(c) for c in columns], fmts, first if bold_last and i == last else ())


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
    ws.widths.update({1: 14, 2: 100})
    for k, v in lines:
        ws.append([k, v], bold=(0,))


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
    if above:  # the notices, a blank row, then the table
        for a, b in above:
            ws.append([a, b], bold=(0,))
        ws.append([])
    _table(ws, cols, rows, headers=heads, bold_last=True,
           formats={"quantity": "0.000", "rate": "0.00", "amount": "0.00"})


SHEETS = ("notes", "schedule", "panel quantities", "joints", "sections", "bar schedule",
          "quantities", "cost")


def _package(sheets: list[_Sheet], styles: _Styles, path: Path) -> None:
    """The zip of the workbook: content types, relationships, workbook, styles, theme
    and the sheets."""
    n = len(sheets)
    ws_ct = f"{_CT}.worksheet+xml"
    types = ("".join(f'<Override PartName="/xl/worksheets/sheet{i}.xml" ContentType="{ws_ct}"/>'
                     for i in range(1, n + 1)))
    content_types = (
        '<Types xmlns="http://schemas.openxmlformats.org/package/2006/content-types">'
        '<Default Extension="rels" ContentType="application/vnd.openxmlformats-package.'
        'relationships+xml"/><Default Extension="xml" ContentType="application/xml"/>'
        f'<Override PartName="/xl/styles.xml" ContentType="{_CT}.styles+xml"/>'
        '<Override PartName="/xl/theme/theme1.xml" ContentType="application/vnd.'
        'openxmlformats-officedocument.theme+xml"/>' + types +
        f'<Override PartName="/xl/workbook.xml" ContentType="{_CT}.sheet.main+xml"/></Types>')
    rels = (f'<Relationships xmlns="{_PKG_REL}"><Relationship Type="{_REL}/officeDocument" '
            'Target="xl/workbook.xml" Id="rId1"/></Relationships>')
    book = (f'<workbook xmlns="{_MAIN}"><workbookPr/><bookViews><workbookView '
            'visibility="visible" activeTab="0"/></bookViews><sheets>'
            + "".join(f'<sheet xmlns:r="{_REL}" name="{_attr(s.title)}" sheetId="{i}" '
                      f'state="visible" r:id="rId{i}"/>' for i, s in enumerate(sheets, 1))
            + '</sheets><calcPr calcId="124519" fullCalcOnLoad="1"/></workbook>')
    book_rels = (f'<Relationships xmlns="{_PKG_REL}">'
                 + "".join(f'<Relationship Type="{_REL}/worksheet" '
                           f'Target="/xl/worksheets/sheet{i}.xml" Id="rId{i}"/>'
                           for i in range(1, n + 1))
                 + f'<Relationship Type="{_REL}/styles" Target="styles.xml" Id="rId{n + 1}"/>'
                 f'<Relationship Type="{_REL}/theme" Target="theme/theme1.xml" Id="rId{n + 2}"/>'
                 '</Relationships>')
    with zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED, compresslevel=6) as z:
        z.writestr("[Content_Types].xml", content_types)
        z.writestr("_rels/.rels", rels)
        z.writestr("xl/workbook.xml", book)
        z.writestr("xl/_rels/workbook.xml.rels", book_rels)
        for i, sh in enumerate(sheets, 1):
            z.writestr(f"xl/worksheets/sheet{i}.xml", sh.xml())
        z.writestr("xl/styles.xml", styles.xml())
        z.writestr("xl/theme/theme1.xml", theme_xml)


def write_workbook(result: DesignResult, path) -> Path:
    """Write ``schedule.xlsx`` for ``result`` at ``path``; returns the path."""
    styles = _Styles()
    sheets = {name: _Sheet(name, styles) for name in SHEETS}
    _notes(sheets["notes"], result)
    _table(sheets["schedule"], PANEL_COLUMNS, [panel_row(p) for p in result.panels],
           formats={"cost": "0.00", "steel_kg": "0.0"})
    _panel_quantities(sheets["panel quantities"], result)
    _table(sheets["joints"], JOINT_COLUMNS, [dict(j.__dict__) for j in result.joints])
    _table(sheets["sections"], SECTION_COLUMNS, [section_row(t) for t in result.section_types])
    _table(sheets["bar schedule"], BAR_COLUMNS,
           [{c: getattr(b, c) for c in BAR_COLUMNS} for b in result.bar_schedule],
           formats={"mass_kg": "0.00", "total_length_m": "0.00"})
    _table(sheets["quantities"], ("item", "unit", "quantity"),
           [dict(q.__dict__) for q in result.quantities],
           headers=["item", "unit", "quantity (in unit)"])
    _cost(sheets["cost"], result)
    path = Path(path)
    _package(list(sheets.values()), styles, path)
    return path

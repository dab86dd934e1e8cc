"""Output table rendering: rounding, formula neutralisation, column order."""

import json
import math

from wallrun.outputs import tables


def test_formula_injection_is_neutralised():
    # a leading = + - @ makes a spreadsheet evaluate the cell (common practice to quote it)
    for bad in ("=HYPERLINK(\"x\")", "+1", "-2+3", "@SUM(A1)"):
        assert tables.safe_text(bad).startswith("'")
    assert tables.safe_text("P001") == "P001"
    text = tables.to_csv(("a", "b"), [{"a": "=cmd|' /C calc'!A0", "b": 1.23456}])
    assert text.splitlines()[1].startswith("'=cmd")
    assert text.splitlines()[1].endswith(",1.235")


def test_numbers_round_and_never_print_negative_zero():
    assert tables.num(-0.0001) == 0.0 and str(tables.num(-0.0001)) == "0.0"
    assert tables.num(math.inf) is None
    assert tables._cell(math.inf) == "inf"
    assert tables._cell(2.5, 1) == "2.5"


def test_panel_columns_follow_the_interface():
    assert tables.PANEL_COLUMNS[:3] == ("panel", "run", "side")
    assert tables.PANEL_COLUMNS[-3:] == ("concrete_m3", "steel_kg", "cost")
    assert len(tables.PANEL_COLUMNS) == 34
    i = tables.PANEL_COLUMNS.index("util_structural")
    assert tables.PANEL_COLUMNS[i + 1:i + 3] == ("util_overall", "util_seismic")


# --- cost.csv starts with its header ------------------------------------------------------

import csv  # noqa: E402
import io  # noqa: E402
import os  # noqa: E402
import sys  # noqa: E402
from dataclasses import replace  # noqa: E402

sys.path.insert(0, os.path.dirname(__file__))
from sample_result import sample_result  # noqa: E402

from wallrun.results import Cost, CostRow  # noqa: E402
from wallrun.takeoff import DEMO_RATES_NOTE  # noqa: E402


def _cost_rows(result):
    text = tables.cost_csv(result)
    assert text.startswith("item,unit,quantity,rate,amount,note\n")
    return list(csv.DictReader(io.StringIO(text)))


def test_cost_csv_header_first_and_demo_note():
    r = sample_result()  # invented demo rates
    rows = _cost_rows(r)
    assert [x["item"] for x in rows] == [c.item for c in r.cost.rows] + ["total"]
    assert all(x["note"] == tables.DEMO_RATE for x in rows[:-1])
    assert DEMO_RATES_NOTE in rows[-1]["note"]
    assert float(rows[-1]["amount"]) == round(r.cost.total, 2)
    assert float(rows[0]["quantity"]) == round(r.cost.rows[0].quantity, 3)


def test_cost_csv_unpriced_and_incomplete():
    r = sample_result()
    cost = Cost((CostRow("concrete_total", "m3", 24.0, 180.0, 4320.0),
                 CostRow("joint_seal", "m", 6.5, None, None)), 4320.0, False, False)
    rows = _cost_rows(replace(r, cost=cost))
    assert rows[0]["note"] == "" and rows[0]["rate"] == "180.00"
    assert rows[1]["rate"] == "" and rows[1]["amount"] == ""  # numbers only
    assert "unpriced" in rows[1]["note"]
    assert rows[2]["item"] == "total" and "incomplete" in rows[2]["note"]
    assert DEMO_RATES_NOTE not in rows[2]["note"]


def test_the_currency_is_beside_every_cost():
    """``[takeoff] currency`` (interfaces.md: shown beside every cost): cost.csv's total
    row carries it as its unit, design.json's cost names it; empty gives "cost units"."""
    from wallrun.settings import Takeoff
    r = sample_result()
    assert _cost_rows(r)[-1]["unit"] == "cost units"
    r = replace(r, site=replace(r.site, takeoff=Takeoff(currency=" NZD ")))
    assert _cost_rows(r)[-1]["unit"] == "NZD"
    assert json.loads(tables.design_json(r))["cost"]["currency"] == "NZD"


def test_design_json_lists_what_is_not_checked_for_the_site():
    import json
    from wallrun.cautions import not_checked
    r = sample_result()
    doc = json.loads(tables.design_json(r))
    assert doc["not_checked"] == list(not_checked(r.site))
    assert len(doc["panels"]) == len(r.panels)
    assert doc["panels"] == tables.panels_json(r.panels)


def test_rounded_check_values():
    got = tables.rounded([1.23456, -0.0004, float("inf"), float("nan"), None, 2.5e-7, 7], 3)
    assert got == [1.235, 0.0, None, None, None, 0.0, 7.0]
    assert all(math.copysign(1, g) > 0 for g in got if g == 0)  # never "-0.0"
    # the same decimals as num away from exact halves (numpy.round: half to even)
    import numpy as np
    values = np.random.default_rng(4).uniform(-500, 500, 2000).tolist()
    assert tables.rounded(values, 3) == [tables.num(v, 3) for v in values]


def test_overall_and_seismic_columns_and_the_circle():
    """util_overall and util_seismic are empty where not checked; an overall entry
    carries its critical circle in design.json (shared/interfaces.md, second wave)."""
    import json
    from wallrun.results import CheckEntry, Circle
    r = sample_result()
    row = tables.panel_row(r.panels[0])
    assert row["util_overall"] is None and row["util_seismic"] is None
    assert ",,," not in tables.panels_csv(r).splitlines()[0]
    p = r.panels[0]
    extra = (CheckEntry("overall", "DA1-2", "drained", 900.0, 1000.0, "kNm/m", 0.9,
                        "EN 1997-1 11.5.1", True, Circle(1.25, 52.0, 6.5)),
             CheckEntry("sliding", "SEIS", "kv up, G unfav", 50.0, 80.0, "kN/m", 0.625,
                        "EN 1998-5 7.3.2", True))
    q = replace(p, checks=p.checks + extra)
    row = tables.panel_row(q)
    assert row["util_overall"] == 0.9 and row["util_seismic"] == 0.625
    entries = tables.panels_json([r.panels[1], q])[1]["checks"]
    assert entries[-2]["circle"] == {"x_m": 1.25, "z_m": 52.0, "radius_m": 6.5}
    assert "circle" not in entries[-1] and entries[-1]["utilization"] == 0.625
    assert entries[0]["utilization"] == round(q.checks[0].utilization, 3)
    json.dumps(tables.panels_json([q]), allow_nan=False)

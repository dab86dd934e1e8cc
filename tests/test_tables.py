"""Output table rendering: rounding, formula neutralisation, column order."""

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
    assert len(tables.PANEL_COLUMNS) == 32


# --- the batched rounding gives the per-value numbers -------------------------------------

import os  # noqa: E402
import sys  # noqa: E402
from dataclasses import replace  # noqa: E402

sys.path.insert(0, os.path.dirname(__file__))
from sample_result import sample_result  # noqa: E402


def test_nums_equal_num_per_value():
    values = [2.675, 0.0005, -0.0004, 1.0005, 12.3455, None, math.inf, -math.inf, math.nan,
              -0.0, 7, True, 1e300, 123456789.0125]
    for nd in (1, 2, 3):
        got, want = tables.nums(values, nd), [tables.num(v, nd) for v in values]
        assert got == want
        # -0.0 never comes out (it would print as "-0.0")
        assert all(math.copysign(1, g) > 0 for g in got if g == 0)


def test_panels_json_equals_panel_json_of_each_panel():
    r = sample_result()
    assert tables.panels_json(r.panels) == [tables.panel_json(p) for p in r.panels]
    # a panel without front bars and with a non-finite check value
    p = r.panels[0]
    c = replace(p.checks[0], utilization=math.inf, effect=-0.0001)
    odd = replace(p, reinforcement=replace(p.reinforcement, stem_front=None),
                  checks=(c,) + p.checks[1:])
    assert tables.panels_json([odd, p]) == [tables.panel_json(odd), tables.panel_json(p)]

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

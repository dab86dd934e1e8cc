"""Panel layout, levels and joint figures (design-basis section 1), worked by hand."""

import numpy as np
import pytest

from wallrun import panels as pn
from wallrun.settings import Wall


class Ramp:
    """Ground flat at 100.0 m; finished level rising 100.0 -> 103.0 over ch 0..20, then flat."""

    breakpoints = np.array([0.0, 20.0, 40.0])
    ch_start, ch_end = 0.0, 40.0

    def ground(self, ch):
        return np.full_like(np.asarray(ch, dtype=float), 100.0)

    def finished(self, ch):
        return np.interp(ch, [0.0, 20.0, 40.0], [100.0, 103.0, 103.0])


def test_floor_and_ceil_increments():
    # 49.4 / 0.15 = 329.33 -> 329 x 0.15 = 49.35; exact multiples stay put
    assert pn.floor_inc(49.4, 0.15) == pytest.approx(49.35)
    assert pn.floor_inc(49.35, 0.15) == pytest.approx(49.35)
    assert pn.ceil_inc(102.4, 0.15) == pytest.approx(102.45)
    assert pn.ceil_inc(102.45, 0.15) == pytest.approx(102.45)


def test_founding_level_takes_the_larger_of_depth_and_base():
    # z_front 50.0: depth max(0.6, 0.3) -> 49.4 -> 49.35; max(0.6, 0.7) -> 49.3 -> 49.2
    z = pn.founding_level(50.0, np.array([0.3, 0.7]), 0.6, 0.15)
    assert z == pytest.approx([49.35, 49.2])


def test_equal_panels_no_longer_than_the_maximum():
    # 40 m run, 8 m maximum: ceil(40/8) = 5 panels of 8 m
    assert pn.cut_points(0.0, 40.0, [], Wall()) == pytest.approx([0, 8, 16, 24, 32, 40])
    # 20 m, 8 m max: 3 panels of 6.667 m
    assert pn.cut_points(0.0, 20.0, [], Wall()) == pytest.approx([0, 20 / 3, 40 / 3, 20])


def test_zone_boundaries_cut_first():
    # boundary at 5: pieces 0..5 (one panel) and 5..20 (ceil(15/8) = 2 panels of 7.5 m)
    assert pn.cut_points(0.0, 20.0, [5.0, 99.0], Wall()) == pytest.approx([0, 5, 12.5, 20])


def test_extent_envelope_and_stepped_top():
    prof = Ramp()
    # panel 8..16: F(8) = 101.2, F(16) = 102.4, no breakpoint inside
    e = pn.extent(prof, 1, "fill", 8.0, 16.0, Wall())
    assert e.z_top == pytest.approx(102.4) and e.z_front == pytest.approx(100.0)
    assert e.wall_top_start == e.wall_top_end == pytest.approx(102.45)  # ceil to 0.15
    # panel 16..24 holds the breakpoint at 20 where F reaches 103.0
    e = pn.extent(prof, 1, "fill", 16.0, 24.0, Wall())
    assert e.z_top == pytest.approx(103.0)
    assert e.wall_top_start == pytest.approx(103.05)


def test_sloped_top_raised_over_the_breakpoint():
    prof = Ramp()
    # ends 102.4 and 103.0; the chord gives 102.7 at ch 20 where F = 103.0:
    # raise by 0.3 -> 102.7 at 16 and 103.3 at 24
    t0, t1 = pn.wall_top(prof, "fill", 16.0, 24.0, Wall(top="sloped"))
    assert (t0, t1) == pytest.approx((102.7, 103.3))
    # with 0.2 m freeboard everything rises by 0.2
    t0, t1 = pn.wall_top(prof, "fill", 16.0, 24.0, Wall(top="sloped", freeboard_m=0.2))
    assert (t0, t1) == pytest.approx((102.9, 103.5))


def test_cut_side_swaps_retained_and_front():
    prof = Ramp()
    e = pn.extent(prof, 1, "cut", 8.0, 16.0, Wall())
    # cut: retained = ground (100.0), front = finished (min 101.2)
    assert e.z_top == pytest.approx(100.0) and e.z_front == pytest.approx(101.2)


def test_joint_figures_and_limits():
    f = pn.joint_figures(48.90, 48.15, 52.35, 52.65, 120.0, 190.0)
    assert f.founding_step_m == pytest.approx(0.75)
    assert f.top_step_m == pytest.approx(0.30)
    assert f.pressure_ratio == pytest.approx(190 / 120)
    problems = pn.joint_problems(f, Wall())
    assert len(problems) == 2  # founding step 0.75 > 0.6 and ratio 1.58 > 1.5
    assert "founding step" in problems[0] and "pressure ratio" in problems[1]
    assert pn.joint_problems(pn.joint_figures(1, 1, 2, 2, 100, 100), Wall()) == []


def test_halving_picks_the_longer_panel_or_the_later():
    assert pn.halve_target(8.0, 4.0) == 0
    assert pn.halve_target(4.0, 8.0) == 1
    assert pn.halve_target(6.0, 6.0) == 1


def _sized(status, z_found, edge_kpa):
    from wallrun.sizing.evaluate import SizedDesign
    return SizedDesign(section=None, reinforcement=None, checks=(), cost_per_m=0.0,
                       z_found=z_found, edge_pressure_sls_kpa=edge_kpa, status=status,
                       reason="", utilization=0.0, governing="")


def test_joint_next_to_an_undesigned_panel_is_flagged_not_evaluated():
    # the failing candidate of a panel without a section has levels and pressures, but
    # they are not a design: the joint gets no founding step or pressure ratio, only
    # its top step (fixed by the profiles), and the reason says why
    import math

    from wallrun import layout
    a = pn.Extent(1, "fill", 0.0, 5.0, 52.0, 49.0, 52.0, 52.0)
    b = pn.Extent(1, "fill", 5.0, 10.0, 52.3, 49.0, 52.0, 52.0)
    ok, flagged = _sized("ok", 48.9, 120.0), _sized("flagged", 47.0, 400.0)
    js = layout.joint_state(a, ok, b, flagged, Wall())
    assert js.problems == (layout.NOT_EVALUATED,) and js.reason == layout.NOT_EVALUATED
    assert math.isnan(js.figures.founding_step_m) and math.isnan(js.figures.pressure_ratio)
    assert js.figures.top_step_m == 0.0
    c = pn.Extent(1, "fill", 5.0, 10.0, 53.3, 49.0, 53.0, 53.0)  # a 1 m top step
    js = layout.joint_state(a, flagged, c, ok, Wall())
    assert js.problems[0] == layout.NOT_EVALUATED and "top step 1.00 m" in js.problems[1]
    assert layout.joint_state(a, ok, b, _sized("ok", 48.6, 110.0), Wall()).problems == ()

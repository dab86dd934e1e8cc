"""Profiles, vertical alignment, retained height and wall runs (wallrun.profile).

Check values are worked by hand in the comments from design-basis section 1 and the
standard parabolic vertical curve of highway geometry,
y = y0 + g1 x + (g2 - g1) x^2 / (2 L) from the start of the curve (BVC), whose
middle ordinate is e = (g1 - g2) L / 8 (= A L / 800 with A in percent) and whose high
or low point is at x = -g1 L / (g2 - g1) (standard highway geometry, from memory).
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from wallrun.profile import (Curve, alignment_curves, build_profiles, find_runs,
                             needed_stretches, retained)
from wallrun.settings import AlignmentPoint, ProfileData, Project, Site, Wall


def prof(ch, lv, x=None, y=None):
    return ProfileData(np.asarray(ch, float), np.asarray(lv, float),
                       None if x is None else np.asarray(x, float),
                       None if y is None else np.asarray(y, float), source="t.csv")


def site(ground, finished=None, alignment=None):
    return Site(root=".", project=Project("t"), ground=ground, finished=finished,
                alignment=alignment)


FLAT10 = prof([0, 10, 20, 30, 40], [10, 10, 10, 10, 10])


# --- retained height and runs on hand-made profiles --------------------------------------

def test_fill_then_cut():
    # G = 10 flat; F: 10 at ch 0, 12 at ch 20, 8 at ch 40.
    # d = F - G = 0.1 ch on 0..20 -> d = 0.5 at ch 5; d = 2 - 0.2 (ch - 20) on 20..40:
    # d = 0.5 at ch 27.5, d = -0.5 at ch 32.5, d = -2 at ch 40.
    p = build_profiles(site(FLAT10, prof([0, 20, 40], [10, 12, 8])))
    assert p.ch_start == 0 and p.ch_end == 40
    side, h, ret, front = retained(p, [5, 20, 30, 40])
    assert list(side) == [1, 1, 1, -1]
    np.testing.assert_allclose(h, [0.5, 2.0, 0.0, 2.0], atol=1e-12)
    # fill: retained F, front G; cut: retained G, front F (F(40) = 8)
    np.testing.assert_allclose(ret, [10.5, 12, 10, 10])
    np.testing.assert_allclose(front, [10, 10, 10, 8])
    runs = find_runs(p, Wall())
    assert [(r.side, r.ch_start_m, r.ch_end_m) for r in runs] == [
        ("fill", pytest.approx(5.0), pytest.approx(27.5)),
        ("cut", pytest.approx(32.5), pytest.approx(40.0))]
    assert runs[0].max_retained_height_m == pytest.approx(2.0) and runs[0].at_ch_m == 20.0
    assert runs[1].max_retained_height_m == pytest.approx(2.0) and runs[1].at_ch_m == 40.0
    assert [r.run for r in runs] == [1, 2]


def test_merge_gap():
    # G = 10; F: 10, 11, 10.3, 11, 10 at ch 0, 10, 20, 30, 40.
    # d = 0.5 at ch 5; on 10..20 d = 1 - 0.07 (ch - 10) = 0.5 at ch 17.142857;
    # on 20..30 d = 0.3 + 0.07 (ch - 20) = 0.5 at ch 22.857143; on 30..40 at ch 35.
    # Gap 22.857 - 17.143 = 5.714 m: two runs with merge_gap 5, one with merge_gap 6.
    p = build_profiles(site(FLAT10, prof([0, 10, 20, 30, 40], [10, 11, 10.3, 11, 10])))
    st_ = needed_stretches(p, Wall())
    assert [(s, round(a, 6), round(b, 6)) for s, a, b in st_] == [
        (1, 5.0, 17.142857), (1, 22.857143, 35.0)]
    assert len(find_runs(p, Wall(merge_gap_m=5.0))) == 2
    (r,) = find_runs(p, Wall(merge_gap_m=6.0))
    assert (r.ch_start_m, r.ch_end_m) == (pytest.approx(5.0), pytest.approx(35.0))
    # h = 1.0 at ch 10 and at ch 30: the first governs
    assert r.max_retained_height_m == pytest.approx(1.0) and r.at_ch_m == 10.0


def test_change_of_side_starts_new_run_even_within_merge_gap():
    # F: 10, 11, 9, 9 at ch 0, 10, 20, 30 over G = 10.
    # fill from ch 5 to ch 12.5 (d = 1 - 0.2 (ch - 10) = 0.5); cut from d = -0.5 at
    # ch 17.5 to ch 30. The 5 m gap is below merge_gap 10 but the side changes.
    g = prof([0, 10, 20, 30], [10, 10, 10, 10])
    p = build_profiles(site(g, prof([0, 10, 20, 30], [10, 11, 9, 9])))
    runs = find_runs(p, Wall(merge_gap_m=10.0))
    assert [(r.side, round(r.ch_start_m, 9), round(r.ch_end_m, 9)) for r in runs] == [
        ("fill", 5.0, 12.5), ("cut", 17.5, 30.0)]


def test_common_range_clips_to_overlap_and_breakpoints():
    # ground 0..40, finished 5..35: common range 5..35; breakpoints are the survey points
    # and finished points inside it
    p = build_profiles(site(FLAT10, prof([5, 12, 35], [10, 11, 10])))
    assert (p.ch_start, p.ch_end) == (5.0, 35.0)
    np.testing.assert_array_equal(p.breakpoints, [5, 10, 12, 20, 30, 35])


def test_threshold_touched_at_a_point_is_no_wall():
    # d reaches exactly 0.5 at ch 10 only: zero-length stretch, no run
    p = build_profiles(site(FLAT10, prof([0, 10, 40], [10, 10.5, 10])))
    assert find_runs(p, Wall()) == ()


def test_whole_range_needed():
    # d = 2 everywhere: one run over the whole common range
    p = build_profiles(site(FLAT10, prof([0, 40], [12, 12])))
    (r,) = find_runs(p, Wall())
    assert (r.ch_start_m, r.ch_end_m, r.max_retained_height_m, r.at_ch_m) == (0, 40, 2, 0)


# --- the vertical curve against the standard parabola -----------------------------------

def test_crest_curve_against_standard_parabola():
    # PVI at ch 120, level 65.60; g1 = +3 %, g2 = -2 %, L = 80 m.
    # BVC ch 80: 65.60 - 0.03 x 40 = 64.40; EVC ch 160: 65.60 - 0.02 x 40 = 64.80.
    # Mid-point (the PVI chainage): 65.60 - e, e = (g1 - g2) L / 8 = 0.05 x 80 / 8 = 0.50
    # -> 65.10. High point: x = -g1 L / (g2 - g1) = 0.03 x 80 / 0.05 = 48 m -> ch 128,
    # y = 64.40 + 0.03 x 48 - 0.05 x 48^2 / 160 = 65.12.
    pts = (AlignmentPoint(0, 62.0), AlignmentPoint(120, 65.6, 80), AlignmentPoint(240, 63.2))
    (c,) = alignment_curves([p.chainage_m for p in pts], [p.level_m for p in pts],
                            [p.curve_length_m for p in pts])
    assert (c.bvc, c.evc, c.g1, c.g2) == (80, 160, pytest.approx(0.03), pytest.approx(-0.02))
    g = prof([0, 240], [60, 60])
    p = build_profiles(site(g, alignment=pts))
    np.testing.assert_allclose(p.finished([80, 120, 128, 160]), [64.40, 65.10, 65.12, 64.80],
                               atol=1e-9)
    assert c.turning_ch == pytest.approx(128.0)
    # the tangents outside the curve are the straight grades
    np.testing.assert_allclose(p.finished([0, 40, 200, 240]), [62.0, 63.2, 64.0, 63.2])
    # parabola formula at a few points inside
    x = np.array([10.0, 30.0, 70.0])
    np.testing.assert_allclose(p.finished(80 + x), 64.4 + 0.03 * x - 0.05 * x**2 / 160)
    # curve ends and high point among the breakpoints; no PVI-with-curve point
    for c_ in (0, 80, 128, 160, 240):
        assert np.min(np.abs(p.breakpoints - c_)) < 1e-9
    assert np.min(np.abs(p.breakpoints - 120)) > 1


def test_curve_is_tangent_at_its_ends():
    # derivative of the parabola is g1 at BVC and g2 at EVC: continuity of slope
    c = Curve(bvc=100, evc=160, y0=50.0, g1=-0.04, g2=0.01, L=60)
    eps = 1e-6
    assert (c.level(100 + eps) - c.level(100)) / eps == pytest.approx(-0.04, abs=1e-5)
    assert (c.level(160) - c.level(160 - eps)) / eps == pytest.approx(0.01, abs=1e-5)
    # sag: low point at x = -g1 L / (g2 - g1) = 0.04 x 60 / 0.05 = 48 m -> ch 148,
    # y = 50 - 0.04 x 48 + 0.05 x 48^2 / 120 = 50 - 1.92 + 0.96 = 49.04
    assert c.turning_ch == pytest.approx(148.0)
    assert c.level(148) == pytest.approx(49.04)


def test_no_turning_point_when_grades_keep_sign():
    c = Curve(bvc=0, evc=50, y0=10.0, g1=0.05, g2=0.01, L=50)  # x* = 62.5 > L
    assert c.turning_ch is None


def test_run_ends_on_curve_solved_exactly():
    # PVIs (0, 10), (50, 12, L = 40), (100, 10); G = 9 flat; hmin = 2.5 -> F >= 11.5.
    # On the curve (BVC ch 30, y0 = 11.2, g1 = 0.04, g2 = -0.04):
    # 11.2 + 0.04 x - 0.001 x^2 = 11.5 -> x^2 - 40 x + 300 = 0 -> x = 10, 30 -> ch 40, 60.
    # Max h at the crest: F(50) = 11.6, h = 2.6.
    pts = (AlignmentPoint(0, 10), AlignmentPoint(50, 12, 40), AlignmentPoint(100, 10))
    p = build_profiles(site(prof([0, 100], [9, 9]), alignment=pts))
    (r,) = find_runs(p, Wall(min_retained_height_m=2.5))
    assert r.ch_start_m == pytest.approx(40.0, abs=1e-9)
    assert r.ch_end_m == pytest.approx(60.0, abs=1e-9)
    assert r.max_retained_height_m == pytest.approx(2.6) and r.at_ch_m == pytest.approx(50.0)


def test_max_h_where_derivative_of_F_minus_G_vanishes():
    # Same alignment; G rises from 8 at ch 0 to 9 at ch 100 (1 %).
    # On the curve, x from ch 30: F = 11.2 + 0.04 x - 0.001 x^2, G = 8.3 + 0.01 x,
    # d = 2.9 + 0.03 x - 0.001 x^2, d' = 0 at x = 15 (ch 45): h = 2.9 + 0.45 - 0.225 = 3.125,
    # more than at the crest of F (ch 50: 3.1) or any breakpoint.
    pts = (AlignmentPoint(0, 10), AlignmentPoint(50, 12, 40), AlignmentPoint(100, 10))
    p = build_profiles(site(prof([0, 100], [8, 9]), alignment=pts))
    (r,) = find_runs(p, Wall())
    assert r.max_retained_height_m == pytest.approx(3.125, abs=1e-12)
    assert r.at_ch_m == pytest.approx(45.0, abs=1e-9)


# --- plan ---------------------------------------------------------------------------------

def test_plan_line_and_xy_at():
    g = prof([0, 10, 20], [10, 10, 10], x=[100, 106, 112], y=[50, 58, 66])  # 3-4-5 steps
    p = build_profiles(site(g, prof([0, 20], [11, 11])))
    assert p.plan_line is not None and p.plan_line.length == pytest.approx(20.0)
    x, y = p.xy_at([5, 15])
    np.testing.assert_allclose(x, [103, 109]) and np.testing.assert_allclose(y, [54, 62])
    assert build_profiles(site(FLAT10, prof([0, 40], [11, 11]))).plan_line is None


# --- against an independent brute-force reading -----------------------------------------

def _brute_runs(ch, G, F, hmin, gap):
    """Runs from a dense sampling: samples where |F - G| >= hmin, grouped by side,
    same-side groups closer than ``gap`` merged."""
    d = F - G
    side = np.where(d >= hmin, 1, np.where(d <= -hmin, -1, 0))
    groups = []
    i = 0
    while i < len(ch):
        if side[i] == 0:
            i += 1
            continue
        j = i
        while j + 1 < len(ch) and side[j + 1] == side[i]:
            j += 1
        groups.append([side[i], ch[i], ch[j], i, j])
        i = j + 1
    runs = []
    for g in groups:
        if runs and runs[-1][0] == g[0] and g[1] - runs[-1][2] < gap:
            runs[-1][2], runs[-1][4] = g[2], g[4]
        else:
            runs.append(list(g))
    return runs, groups


@settings(max_examples=40, deadline=None)
@given(levels=st.lists(st.floats(-3, 3), min_size=3, max_size=12),
       flevels=st.lists(st.floats(-3, 3), min_size=2, max_size=6),
       curve=st.floats(0, 1))
def test_runs_against_dense_sampling(levels, flevels, curve):
    n = len(levels)
    gch = np.linspace(0, 10 * (n - 1), n)
    G = 100 + np.array(levels)
    m = len(flevels)
    fch = np.linspace(0, gch[-1], m)
    if m >= 3 and curve > 0:
        # an alignment whose interior curves fit between the neighbouring points
        step = fch[1] - fch[0]
        pts = tuple(AlignmentPoint(float(c), 100 + float(z),
                                   0.0 if k in (0, m - 1) else round(curve * step, 6))
                    for k, (c, z) in enumerate(zip(fch, flevels)))
        s = site(prof(gch, G), alignment=pts)
    else:
        s = site(prof(gch, G), prof(fch, 100 + np.array(flevels)))
    p = build_profiles(s)
    wall = Wall(min_retained_height_m=0.5, merge_gap_m=5.0)
    runs = find_runs(p, wall)
    xs = np.linspace(p.ch_start, p.ch_end, int((p.ch_end - p.ch_start) / 0.005) + 1)
    brute, groups = _brute_runs(xs, p.ground(xs), p.finished(xs), 0.5, 5.0)
    # skip draws where sampling cannot decide: a gap within 2 cm of the merge distance,
    # or a stretch shorter than the sampling
    gaps = [b[1] - a[2] for a, b in zip(groups, groups[1:]) if a[0] == b[0]]
    if any(abs(g - 5.0) < 0.02 for g in gaps) or any(g[2] - g[1] < 0.02 for g in groups):
        return
    assert len(runs) == len(brute)
    for r, b in zip(runs, brute):
        assert r.side == ("fill" if b[0] > 0 else "cut")
        assert abs(r.ch_start_m - b[1]) < 0.01 and abs(r.ch_end_m - b[2]) < 0.01
        seg = (xs >= r.ch_start_m) & (xs <= r.ch_end_m)
        hs = np.abs(p.finished(xs[seg]) - p.ground(xs[seg]))
        assert r.max_retained_height_m >= hs.max() - 1e-9  # exact max is never below samples
        assert r.max_retained_height_m - hs.max() < 1e-3
        h_at = abs(float(p.finished(r.at_ch_m) - p.ground(r.at_ch_m)))
        assert h_at == pytest.approx(r.max_retained_height_m, abs=1e-9)
        assert p.ch_start <= r.ch_start_m < r.ch_end_m <= p.ch_end

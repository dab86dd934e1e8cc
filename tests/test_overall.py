"""Overall stability by Bishop's simplified method (wallrun.overall, design-basis
section 9): the method against pyslope and published values, the critical-circle
search, the panel ground model against an independent calculation, and the check."""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np
import pytest
from shapely.geometry import Polygon

from wallrun import factors
from wallrun import overall as ov
from wallrun.codes import bishop
from wallrun.conditions import Conditions
from wallrun.results import CheckEntry
from wallrun.section import Section, polygons
from wallrun.settings import Basis, Backfill, Design, Foundation, GroundModel

from overall_reference import bishop_panel
from plain_reference import entries

import pyslope  # noqa: E402  (a test dependency, pyproject.toml [test])

DA1 = Basis(factors=factors.resolve("DA1"))

# --- pyslope on plain slopes -------------------------------------------------------------


def _pyslope(material, water_depth=None):
    """A pyslope slope 10 m high at 1V:2H (pySlope's coordinates: crest on the left)."""
    s = pyslope.Slope(height=10, angle=None, length=20)
    s.set_materials(material)
    s.update_analysis_options(slices=500, tolerance=1e-9, max_iterations=500)
    if water_depth is not None:
        s.set_water_table(water_depth)
        s.update_water_analysis_options(auto=False, H=1)  # head = level - base
    return s


def _circle(model, xc, zc, R):
    """A circle with its exit and entry found on a fine grid (test helper)."""
    xs = np.linspace(xc - R, xc + R, 400001)
    inside = np.nonzero(model.surface(xs) > bishop.arc_level(xs, xc, zc, R))[0]
    return ov.Circles(np.array([xc]), np.array([zc]), np.array([R]), np.array([xs[inside[0]]]),
                      np.array([xs[inside[-1]]]), np.array([True]))


@pytest.mark.parametrize("water_depth", [None, 4.0])
@pytest.mark.parametrize("dx,dz,R", [(5, 12, 18), (0, 8, 16), (8, 20, 25), (-5, 10, 21),
                                      (0, 15, 30)])
def test_method_against_pyslope(water_depth, dx, dz, R):
    # pySlope (PyPI), Bishop's simplified method with 500 slices, the same circle;
    # the slope mirrored (x -> -x) so that it slides towards -x as in wallrun
    mat = pyslope.Material(unit_weight=20, friction_angle=19.6, cohesion=3, depth_to_bottom=40)
    s0 = _pyslope(mat)
    (tx, tz), (bx, bz) = s0.get_top_coordinates(), s0.get_bottom_coordinates()
    zw = None if water_depth is None else tz - water_depth
    model = ov.slope_model([-200, -bx, -tx, 200], [bz, bz, tz, tz], 20, 19.6, 3,
                           water_level=zw)
    cx, cz = -tx - dx, tz + dz
    s = _pyslope(mat, water_depth)
    s.add_single_circular_plane(-cx, cz, R)
    s.analyse_slope()
    F_ref = s.get_min_FOS()
    F, M_D, M_R, ok = ov.evaluate(model, ov.slices(model, _circle(model, cx, cz, R)),
                                  ov.Case("plain", "drained"))
    assert ok[0]
    assert abs(F[0] / F_ref - 1) < 0.02  # the tolerance (measured: < 0.05 %)


# --- published values --------------------------------------------------------------------

def test_acads_homogeneous_slope():
    # ACADS slope stability verification problem 1(a) (Giam and Donald 1989, ACADS
    # publication U255): a 10 m high 1V:2H slope from (30, 25) to (50, 35), c' = 3 kPa,
    # phi' = 19.6 deg, gamma = 20 kN/m3, dry; the referee's least factor of safety is
    # 1.00 (from memory). The search finds it within 2 %.
    model = ov.slope_model([-100, 30, 50, 200], [25, 25, 35, 35], 20, 19.6, 3,
                           exit_range=(10, 49.9), entry_range=(30.1, 80))
    crit = ov.search(model, [ov.Case("plain", "drained")])[0]
    assert abs(crit.F - 1.00) <= 0.02
    # pySlope's own search of the same slope (1,000 circles) finds no lower factor
    s = pyslope.Slope(height=10, angle=None, length=20)
    s.set_materials(pyslope.Material(20, 19.6, 3, 40))
    s.update_analysis_options(slices=50, iterations=1000)
    s.analyse_slope()
    assert crit.F <= s.get_min_FOS() * 1.002
    assert crit.F >= s.get_min_FOS() * 0.97


@pytest.mark.parametrize("beta,Ns", [(60.0, 0.191), (75.0, 0.219)])
def test_taylor_stability_numbers(beta, Ns):
    # phi = 0 (total stress): Bishop's method is the circle method of Taylor's chart
    # (Taylor 1948, Fundamentals of Soil Mechanics, stability numbers for toe circles,
    # from memory: Ns = cu / (F gamma H) = 0.191 at 60 deg, 0.219 at 75 deg). With
    # cu = Ns gamma H the least factor of safety is 1.0 (within 2 %).
    H, g = 10.0, 20.0
    L = H / math.tan(math.radians(beta))
    model = ov.slope_model([-100, 0, L, 200], [0, 0, H, H], g, 0.0, 0.0,
                           undrained_strength_kpa=Ns * g * H, exit_range=(-3 * H, L),
                           entry_range=(0.0, L + 3 * H))
    crit = ov.search(model, [ov.Case("plain", "undrained")])[0]
    assert abs(crit.F - 1.0) <= 0.02


def test_search_finds_the_known_critical_toe_circle():
    # phi = 0, a 60 deg slope: the critical circle is a toe circle whose centre lies
    # where a line from the toe at 29 deg to the slope face meets a line from the crest
    # at 40 deg to the horizontal (Fellenius' directing angles for 1:0.58, from
    # memory; e.g. in Terzaghi and Peck's Soil Mechanics in Engineering Practice).
    H, g, beta = 10.0, 20.0, 60.0
    L = H / math.tan(math.radians(beta))
    model = ov.slope_model([-100, 0, L, 200], [0, 0, H, H], g, 0.0, 0.0,
                           undrained_strength_kpa=40.0, exit_range=(-3 * H, L),
                           entry_range=(0.0, L + 3 * H))
    c = ov.search(model, [ov.Case("plain", "undrained")])[0]
    at_toe = math.degrees(math.atan2(c.zc, c.xc)) - beta
    at_crest = math.degrees(math.atan2(c.zc - H, L - c.xc))
    assert abs(at_toe - 29.0) <= 2.0
    assert abs(at_crest - 40.0) <= 2.0
    assert abs(c.x1) < 0.05  # through the toe


def test_search_is_not_beaten_by_a_dense_grid():
    # the refined search against every circle of a dense grid (40 x 40 x 30)
    sec, cond, gm = _panels()[1]
    model = ov.panel_model(sec, cond, gm)
    case = ov.cases_of(DA1, cond)[2]
    crit = ov.search(model, [case])[0]
    g = np.linspace(0.0, 1.0, 40)
    U1, U2, T = (a.ravel() for a in np.meshgrid(g, g, np.linspace(0, 1, 30), indexing="ij"))
    c = ov.circles_unit(model, U1, U2, T)
    k = np.nonzero(c.ok)[0]
    F, M_D, M_R, ok = ov.evaluate(model, ov.slices(model, c.take(k)), case)
    assert crit.utilization >= np.where(ok, M_D / M_R, 0).max() * (1 - 1e-4)


# --- panels -------------------------------------------------------------------------------

def _panels():
    """Three invented panels: level ground; a key, a front slope, a crest, water and an
    undrained foundation; a steep front slope with water."""
    return [
        (Section(0.25, 0.35, 2.6, 0.7, 0.35),
         Conditions(52.4, 49.1, 48.3, Backfill(), Foundation(), 10.0), GroundModel()),
        (Section(0.25, 0.45, 3.4, 0.8, 0.45, 0.4, 0.45),
         Conditions(55.0, 50.5, 49.6, Backfill(slope_deg=18),
                    Foundation(unit_weight_kn_m3=18.5, friction_angle_deg=26, cohesion_kpa=5,
                               undrained_strength_kpa=45), 15.0, 52.0),
         GroundModel(front_slope_deg=15, retained_crest_m=1.5)),
        (Section(0.3, 0.5, 4.0, 1.0, 0.5),
         Conditions(56.0, 51.0, 50.1, Backfill(unit_weight_kn_m3=20, slope_deg=10),
                    Foundation(friction_angle_deg=28), 5.0, 53.5),
         GroundModel(front_slope_deg=25)),
    ]


@pytest.mark.parametrize("k", [0, 1, 2])
def test_panel_against_independent_calculation(k):
    # the engine's critical circle re-checked by tests/overall_reference.py (shapely
    # polygons, 200 thin slices, plain loops): within 1 % (the issue asks 3 %)
    sec, cond, gm = _panels()[k]
    for r in ov.overall_check(sec, cond, DA1, gm):
        fs = DA1.factors[r.combination]
        F, M_D, M_R = bishop_panel(sec, cond, gm, (r.circle.x_m, r.circle.z_m, r.circle.radius_m),
                                   gQ=fs.gQ, g_phi=fs.g_phi, g_c=fs.g_c, g_cu=fs.g_cu,
                                   undrained=r.case == "undrained", n=200)
        assert abs(r.utilization * F - 1.0) < 0.01, (r, F)
        assert math.isclose(r.effect, M_D, rel_tol=1e-4)


@pytest.mark.parametrize("k", [0, 1, 2])
def test_critical_circle_passes_beneath_the_wall_and_exits_within_3H(k):
    sec, cond, gm = _panels()[k]
    H = cond.z_top - cond.z_found
    corners = [(0.0, cond.z_found), (sec.base_width_m, cond.z_found)]
    if sec.key_depth_m:
        corners += [(sec.toe_m + d, cond.z_found - sec.key_depth_m) for d in (0, sec.key_width_m)]
    for r in ov.overall_check(sec, cond, DA1, gm):
        c = r.circle
        for x, z in corners:
            assert bishop.arc_level(x, c.x_m, c.z_m, c.radius_m) <= z + 1e-6
        assert -3 * H - 1e-9 <= r.exit_x_m < 0
        assert sec.base_width_m < r.entry_x_m <= sec.base_width_m + 3 * H + 1e-9


def test_weight_of_the_wall_from_its_polygons():
    # the top function over the wall integrates to the weights of the section's shapely
    # polygons (design-basis section 2: stem to z_top, base, key, soil over the heel)
    sec, cond, gm = _panels()[1]
    cond = replace(cond, water_level_m=None)
    gm = GroundModel()  # no crest, so that section.polygons' soil block is the one
    model = ov.panel_model(sec, cond, gm)
    I0, _ = ov._top_integrals(model, np.array([0.0, sec.base_width_m]))
    hc = cond.z_top - cond.z_found - sec.base_thickness_m
    p = polygons(sec, hc, hc, slope_deg=cond.backfill.slope_deg)
    gf, gb = cond.foundation.unit_weight_kn_m3, cond.backfill.unit_weight_kn_m3
    expected = (25.0 * (p["stem"].area + p["base"].area + p["key"].area) - gf * p["key"].area
                + gb * p["soil"].area + gf * cond.z_found * sec.base_width_m)
    assert math.isclose(I0[1] - I0[0], expected, rel_tol=1e-12)


def test_column_height_integrates_to_the_area():
    rng = np.random.default_rng(7)
    for _ in range(20):
        ang = np.sort(rng.uniform(0, 2 * np.pi, 7))
        r = rng.uniform(1, 3, 7)
        xs, zs = r * np.cos(ang), r * np.sin(ang)  # a star-shaped heptagon
        x = np.unique(xs)  # the height is linear between vertices: midpoints are exact
        h = ov.column_height(xs, zs, 0.5 * (x[1:] + x[:-1]))
        assert math.isclose((h * np.diff(x)).sum(), Polygon(zip(xs, zs)).area, rel_tol=1e-12)


def test_strong_soil_on_level_ground_passes_by_a_wide_margin():
    sec = Section(0.25, 0.35, 2.6, 0.7, 0.35)
    cond = Conditions(52.4, 49.1, 48.3, Backfill(friction_angle_deg=36),
                      Foundation(friction_angle_deg=38, cohesion_kpa=10), 10.0)
    res = ov.overall_check(sec, cond, DA1, GroundModel())
    assert [(r.combination, r.case) for r in res] == [("DA1-1", "drained"), ("DA1-2", "drained")]
    assert max(r.utilization for r in res) < 0.5


def _util(sec, cond, gm, basis=DA1, combination="DA1-2", case="drained"):
    return next(r.utilization for r in ov.overall_check(sec, cond, basis, gm)
                if r.combination == combination and r.case == case)


def test_pore_pressure_lowers_the_factor():
    sec, cond, gm = _panels()[0]
    dry = _util(sec, cond, gm)
    low = _util(sec, replace(cond, water_level_m=49.5), gm)
    high = _util(sec, replace(cond, water_level_m=51.5), gm)
    assert dry < low < high


def test_surcharge_lowers_the_factor():
    sec, cond, gm = _panels()[0]
    assert _util(sec, replace(cond, surcharge_kpa=0.0), gm) < _util(sec, cond, gm) < _util(
        sec, replace(cond, surcharge_kpa=40.0), gm)


def test_ground_shapes():
    sec, cond, gm = _panels()[0]
    cond = replace(cond, backfill=Backfill(slope_deg=20))
    flat = _util(sec, cond, gm)
    assert _util(sec, cond, GroundModel(front_slope_deg=15)) > flat  # falling front ground
    assert _util(sec, cond, GroundModel(retained_crest_m=1.0)) < flat  # the slope flattens


def test_undrained_case_and_combinations():
    sec, cond, gm = _panels()[1]
    res = ov.overall_check(sec, cond, DA1, gm)
    assert [(r.combination, r.case) for r in res] == [
        ("DA1-1", "drained"), ("DA1-1", "undrained"), ("DA1-2", "drained"), ("DA1-2", "undrained")]
    da2 = Basis(factors=factors.resolve("DA2"), design=Design(approach="DA2"))
    r2 = ov.overall_check(sec, cond, da2, gm)
    # DA2: M1 and gamma_R;e = 1.1 (EN 1997-1 Table A.14): utilization 1.1 / F
    assert [r.combination for r in r2] == ["DA2", "DA2"]
    for r in r2:
        assert math.isclose(r.utilization, 1.1 / r.factor_of_safety, rel_tol=1e-9)


def test_check_entries_and_arrays():
    sec, cond, gm = _panels()[1]
    res = ov.overall_check(sec, cond, DA1, gm)
    es = ov.check_entries(res)
    assert all(isinstance(e, CheckEntry) and e.check == "overall" and e.unit == "kNm/m"
               and e.clause == "EN 1997-1 11.5.1; Bishop's simplified method" for e in es)
    assert [e.circle for e in es] == [r.circle for r in res]
    for comb in ("DA1-1", "DA1-2"):
        mine = [e for e in es if e.combination == comb]
        assert sum(e.governs for e in mine) == 1
        assert max(mine, key=lambda e: e.utilization).governs
    arrays = ov.check_arrays(res)
    back = entries(arrays, 0)
    assert [(e.check, e.combination, e.case, e.utilization) for e in back] == [
        (e.check, e.combination, e.case, e.utilization) for e in es]


def test_no_admissible_circle_fails_the_check():
    # a model whose exit range leaves no circle beneath the wall: infinite utilization
    sec, cond, gm = _panels()[0]
    model = replace(ov.panel_model(sec, cond, gm), exit_range=(-0.001, 0.0))
    assert ov.search(model, ov.cases_of(DA1, cond)) == [None, None]
    res = ov.check_model(model, ov.cases_of(DA1, cond))
    assert all(r.utilization == math.inf and r.resistance == 0 for r in res)
    assert all(e.utilization == math.inf for e in entries(ov.check_arrays(res), 0))
    assert all(e.circle is None for e in ov.check_entries(res))
    assert ov.failure_reason(res).startswith("overall stability fails (DA1-1 drained")
    assert "no admissible slip circle" in ov.failure_reason(res)
    assert ov.slip_surface(res[0])[0].size == 0


def test_failure_reason_and_slip_surface():
    sec, cond, gm = _panels()[2]  # a steep front slope: fails
    res = ov.overall_check(sec, cond, DA1, gm)
    why = ov.failure_reason(res)
    assert why.startswith("overall stability fails (DA1-2 drained, utilization")
    assert "outside the wall" in why
    s0, c0, g0 = _panels()[0]  # level ground: passes
    assert ov.failure_reason(ov.overall_check(s0, c0, DA1, g0)) == ""
    x, z = ov.slip_surface(res[0], n=10)
    assert len(x) == 11 and x[0] == res[0].exit_x_m and x[-1] == res[0].entry_x_m
    c = res[0].circle
    assert np.allclose(np.hypot(x - c.x_m, z - c.z_m), c.radius_m)
    assert z.min() < cond.z_found  # beneath the wall

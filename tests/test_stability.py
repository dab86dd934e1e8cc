"""Stability checks of wallrun.stability: a section worked by hand, properties, bad input."""

import math

import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

from wallrun.conditions import Conditions
from wallrun.factors import resolve
from wallrun.section import Section, SectionArrays, polygons
from wallrun.settings import Backfill, Basis, Design, Foundation, Loads
from wallrun import stability as stab
from plain_reference import entries

# --- a section worked by hand (invented) -------------------------------------------------
# Section: B = 2.4, toe 0.6, base 0.4 thick, stem 0.3 constant, no key.
# Levels: z_found 0.0, z_front 0.8 (D = 0.8), z_top 3.6 (H = 3.6, stem 3.2 above base).
# Backfill gamma 18, phi' 30, level; foundation gamma 19, phi' 30, c' 0; q = 10 kPa;
# no water; passive none; DA1.
# Weights (gamma_c 25): stem 0.3*3.2*25 = 24.0 at x 0.75; base 2.4*0.4*25 = 24.0 at 1.2;
# soil over heel (1.5 wide) 1.5*3.2*18 = 86.4 at 1.65. Sum W = 134.4,
# moment about toe 18.0 + 28.8 + 142.56 = 189.36.
# Virtual back H_v = 3.6. Heel load q * 1.5 = 15.0 at 1.65.
HAND = Section(stem_top_m=0.3, stem_base_m=0.3, base_width_m=2.4, toe_m=0.6, base_thickness_m=0.4)
COND = Conditions(z_top=3.6, z_front=0.8, z_found=0.0,
                  backfill=Backfill(unit_weight_kn_m3=18.0, friction_angle_deg=30.0),
                  foundation=Foundation(unit_weight_kn_m3=19.0, friction_angle_deg=30.0,
                                        allowable_bearing_kpa=150.0),
                  surcharge_kpa=10.0)
BASIS = Basis(factors=resolve("DA1"), design=Design(passive="none"))


def _get(checks, check, comb, case):
    for c in checks:
        if (c.check, c.combination, c.case) == (check, comb, case):
            return c
    raise KeyError((check, comb, case))


@pytest.fixture(scope="module")
def hand():
    return entries(stab.stability_checks(SectionArrays.of([HAND]), COND, BASIS), 0)


def test_hand_overturning(hand):
    # EQU: phi'_d = atan(tan 30/1.25) = 24.791, Ka = (1 - sin)/(1 + sin) = 0.40913.
    # Pa = 0.5*0.40913*18*3.6^2 = 47.721 at 1.2; Pq = 0.40913*10*3.6 = 14.729 at 1.8.
    # M_dst = 1.1*47.721*1.2 + 1.5*14.729*1.8 = 102.76; M_stb = 0.9*189.36 = 170.42.
    c = _get(hand, "overturning", "EQU", "about toe")
    assert c.effect == pytest.approx(102.76, rel=0.005)
    assert c.resistance == pytest.approx(170.42, rel=0.005)
    assert c.utilization == pytest.approx(0.6030, rel=0.005)


def test_hand_sliding(hand):
    # DA1-1: Ka = 1/3, Pa = 0.5/3*18*3.6^2 = 38.88, Pq = 12.0.
    # H_d = 1.35*38.88 + 1.5*12 = 70.488; R_d = 134.4 tan 30 = 77.596; u = 0.9084.
    c = _get(hand, "sliding", "DA1-1", "drained")
    assert (c.effect, c.resistance) == pytest.approx((70.488, 77.596), rel=0.005)
    assert c.utilization == pytest.approx(0.9084, rel=0.005)
    # DA1-2: Ka = 0.40913: H_d = 47.721 + 1.3*14.729 = 66.868;
    # R_d = 134.4 tan 24.791 = 62.077; u = 1.0772.
    c = _get(hand, "sliding", "DA1-2", "drained")
    assert (c.effect, c.resistance) == pytest.approx((66.868, 62.077), rel=0.005)
    assert c.utilization == pytest.approx(1.0772, rel=0.005)


def test_hand_bearing_and_eccentricity(hand):
    # DA1-1, G unfav, heel load on: V = 1.35*134.4 + 1.5*15 = 203.94; H = 70.488;
    # M = 1.35*189.36 + 1.5*15*1.65 - 1.35*38.88*1.2 - 1.5*12*1.8 = 197.375;
    # e = 1.2 - 197.375/203.94 = 0.23219; B' = 2.4 - 0.46438 = 1.93562.
    # Nq = 18.401, Ngamma = 20.093; iq = (1 - 70.488/203.94)^2 = 0.42820, ig = 0.28020;
    # R/A' = 15.2*18.401*0.42820 + 0.5*19*1.93562*20.093*0.28020 = 223.29 kPa;
    # R = 223.29*1.93562 = 432.21; u = 203.94/432.21 = 0.4719.
    c = _get(hand, "bearing", "DA1-1", "G unfav, heel load on, drained")
    assert (c.effect, c.resistance) == pytest.approx((203.94, 432.21), rel=0.005)
    assert c.utilization == pytest.approx(0.4719, rel=0.005)
    c = _get(hand, "eccentricity", "DA1-1", "G unfav, heel load on")
    assert (c.effect, c.resistance) == pytest.approx((0.23219, 0.8), rel=0.005)


def test_hand_sls(hand):
    # characteristic, heel load on: V = 134.4 + 15 = 149.4;
    # M = 189.36 + 15*1.65 - 38.88*1.2 - 12*1.8 = 145.854; e = 1.2 - 145.854/149.4 = 0.22373
    # (< B/6 = 0.4); sigma_max = 149.4/2.4 (1 + 6*0.22373/2.4) = 97.07 kPa.
    c = _get(hand, "eccentricity_sls", "SLS", "heel load on")
    assert (c.effect, c.resistance) == pytest.approx((0.22373, 0.4), rel=0.005)
    c = _get(hand, "bearing_sls", "SLS", "heel load on")
    assert (c.effect, c.resistance) == pytest.approx((97.07, 150.0), rel=0.005)
    assert stab.edge_pressure_sls(SectionArrays.of([HAND]), COND, BASIS)[0] >= 97.07 * 0.995


def test_hand_stem_moment():
    # DA1-1: Kh = 1/3: M = 1.35*(1/3)*18*3.2^3/6 + 1.5*(1/3)*10*3.2^2/2 = 44.237 + 25.6
    # = 69.837 kNm/m; V = 1.35*(1/3)*0.5*18*3.2^2 + 1.5*(1/3)*10*3.2 = 41.472 + 16.0 = 57.472.
    sec = SectionArrays.of([HAND])
    acts = stab.member_actions(sec, COND, BASIS)
    stem = [a for a in acts if a.member == "stem" and a.combination == "DA1-1"][0]
    assert stem.M_Ed[0] == pytest.approx(69.837, rel=0.005)
    assert stem.V_Ed[0] == pytest.approx(57.472, rel=0.005)
    # DA1-2 (Ka = 0.40913): 0.40913*98.304 + 1.3*0.40913*51.2 = 67.45 -> envelope 69.84
    assert stab.stem_moment(sec, COND, BASIS, 3.2)[0] == pytest.approx(69.837, rel=0.005)
    # at 1.6 m below z_top: 1.35*(1/3)*18*1.6^3/6 + 1.5*(1/3)*10*1.6^2/2 = 5.530 + 6.4
    assert stab.stem_moment(sec, COND, BASIS, 1.6)[0] == pytest.approx(11.930, rel=0.005)


def test_member_actions_shape_and_equilibrium():
    sec = SectionArrays.of([HAND, Section(0.25, 0.4, 3.0, 0.9, 0.45, 0.4, 0.3)])
    acts = stab.member_actions(sec, COND, BASIS)
    assert len(acts) == 2 * 4 * 3  # DA1-1, DA1-2 x 4 sub-cases x (stem, heel, toe)
    assert {a.member for a in acts} == {"stem", "heel", "toe"}
    # contact pressure integrates to V (any e), as a statics check of the member model
    g = stab.Geometry(sec, COND)
    for V, e in ((200.0, 0.1), (200.0, 0.7), (200.0, -0.6)):
        c0, c1, s0, s1 = stab.contact_pressure(np.full(2, V), np.full(2, e), g.B)
        F, M = stab.linear_integral(c0, c1, s0, s1, 0.0, g.B, 0.0)
        assert F == pytest.approx(V)
        assert M / F == pytest.approx(g.B / 2 - e)  # resultant at B/2 - e
    qp = stab.member_moments_qp(sec, COND, BASIS)
    assert set(qp) == {"stem", "heel", "toe"} and qp["stem"].shape == (2,)
    # heel: soil and slab load the top face in tension for this section (common practice)
    heel = [a for a in acts if a.member == "heel"]
    assert all(np.all(a.M_Ed > 0) for a in heel)


def test_action_table():
    rows = stab.action_table(HAND, COND, BASIS)
    names = [r.name for r in rows]
    assert "soil over heel" in names and "surcharge on heel" in names
    soil = rows[names.index("soil over heel")]
    assert soil.vertical_kn_m == pytest.approx(86.4) and soil.x_m == pytest.approx(1.65)
    # restoring moment of the characteristic vertical loads: 189.36 (by hand above)
    perm = sum(r.moment_kn_m_m for r in rows if r.horizontal_kn_m == 0 and r.kind == "permanent")
    assert perm == pytest.approx(189.36)


def test_check_names_and_cases():
    cond = Conditions(3.6, 0.8, 0.0, Backfill(), Foundation(undrained_strength_kpa=60.0,
                                                             allowable_bearing_kpa=200.0), 10.0, 1.0)
    checks = stab.stability_checks(SectionArrays.of([HAND]), cond, Basis(factors=resolve("DA1")))
    keys = [(c.check, c.combination, c.case) for c in checks]
    assert len(keys) == len(set(keys))
    assert keys[0] == ("overturning", "EQU", "about toe")
    for comb in ("DA1-1", "DA1-2"):
        assert (("sliding", comb, "undrained")) in keys
        for lab, _, _ in stab.SUBCASES:
            assert ("bearing", comb, f"{lab}, drained") in keys
            assert ("bearing", comb, f"{lab}, undrained") in keys
            assert ("eccentricity", comb, lab) in keys
    assert sum(1 for k in keys if k[0] == "bearing_sls") == 2
    assert sum(1 for k in keys if k[0] == "eccentricity_sls") == 2
    units = {c.check: c.unit for c in checks}
    assert units == {"overturning": "kNm/m", "sliding": "kN/m", "bearing": "kN/m",
                     "eccentricity": "m", "eccentricity_sls": "m", "bearing_sls": "kPa"}


def test_key_and_passive_help_sliding():
    keyed = Section(0.3, 0.3, 2.4, 0.6, 0.4, 0.5, 0.3)
    sec = SectionArrays.of([HAND, keyed])
    res = {}
    for mode in ("none", "key", "full"):
        b = Basis(factors=resolve("DA1"), design=Design(passive=mode))
        c = _get(stab.stability_checks(sec, COND, b), "sliding", "DA1-1", "drained")
        res[mode] = c
    # hand: key 0.5 deep, front level 0.8 lowered by min(0.1*2.8, 0.5) = 0.28 -> 0.52;
    # face -0.5..0.0 is 0.52..1.02 below it: Pp = 0.5*3*19*(1.02^2 - 0.52^2) = 21.945
    assert res["key"].resistance[1] - res["none"].resistance[1] == pytest.approx(21.945, rel=1e-3)
    assert res["key"].resistance[0] == pytest.approx(res["none"].resistance[0])
    # full: face -0.5..0.4 -> 0.12..1.02 deep: 0.5*3*19*(1.02^2 - 0.12^2) = 29.241
    assert res["full"].resistance[1] - res["none"].resistance[1] == pytest.approx(29.241, rel=1e-3)
    # the key carries the thrust down to its bottom: larger H_d than without a key
    assert res["none"].effect[1] > res["none"].effect[0]


def test_water_adds_thrust_and_uplift():
    dry = stab.stability_checks(SectionArrays.of([HAND]), COND, BASIS)
    wet_c = Conditions(3.6, 0.8, 0.0, COND.backfill, COND.foundation, 10.0, water_level_m=1.5)
    wet = stab.stability_checks(SectionArrays.of([HAND]), wet_c, BASIS)
    for a, b in zip(dry, wet):
        if a.check in ("overturning", "sliding"):
            assert b.utilization[0] > a.utilization[0]
    # hand: h_w 1.5: water thrust 0.5*9.81*1.5^2 = 11.036; uplift 0.5*9.81*1.5*2.4 = 17.658
    rows = {r.name: r for r in stab.action_table(HAND, wet_c, BASIS)}
    assert rows["water thrust"].horizontal_kn_m == pytest.approx(11.036, rel=1e-3)
    assert rows["uplift"].vertical_kn_m == pytest.approx(-17.658, rel=1e-3)


def test_soil_weight_uses_shapely_polygon():
    # the soil block weight equals gamma x the shapely polygon area (reference)
    s = Section(0.25, 0.45, 3.1, 0.8, 0.4)
    cond = Conditions(4.2, 1.0, 0.0, Backfill(slope_deg=14.0), Foundation(), 10.0)
    rows = {r.name: r for r in stab.action_table(s, cond, BASIS)}
    p = polygons(s, 3.8, 3.8, 14.0)["soil"]
    assert rows["soil over heel"].vertical_kn_m == pytest.approx(19.0 * p.area, rel=1e-9)
    assert rows["soil over heel"].x_m == pytest.approx(p.centroid.x, rel=1e-9)


# --- properties ------------------------------------------------------------------------

sections = st.builds(
    lambda tsb, frac, toe, heel, t: Section(round(tsb * frac, 3), tsb, toe + tsb + heel, toe, t),
    st.floats(0.25, 0.6), st.floats(0.6, 1.0), st.floats(0.2, 1.5), st.floats(0.4, 3.0),
    st.floats(0.3, 0.6))


def _cond(h, slope, q, water, cu):
    return Conditions(z_top=10.0 + h, z_front=10.0, z_found=9.1,
                      backfill=Backfill(friction_angle_deg=32.0, slope_deg=slope),
                      foundation=Foundation(friction_angle_deg=29.0, undrained_strength_kpa=cu),
                      surcharge_kpa=q, water_level_m=None if water is None else 9.1 + water)


@settings(max_examples=40, deadline=None)
@given(s=sections, extra=st.floats(0.05, 1.5), h=st.floats(1.0, 5.0), q=st.floats(0.0, 30.0),
       water=st.one_of(st.none(), st.floats(0.0, 2.0)), cu=st.sampled_from([0.0, 80.0]))
def test_wider_base_never_raises_sliding(s, extra, h, q, water, cu):
    """Property (level backfill): widening the heel never raises a sliding utilization."""
    wide = Section(s.stem_top_m, s.stem_base_m, s.base_width_m + extra, s.toe_m,
                   s.base_thickness_m)
    cond = _cond(h, 0.0, q, water, cu)
    a = stab.stability_checks(SectionArrays.of([s, wide]), cond, Basis(factors=resolve("DA1")))
    for c in a:
        if c.check == "sliding":
            u = c.utilization
            assert u[1] <= u[0] * (1 + 1e-9) + 1e-12


@settings(max_examples=40, deadline=None)
@given(s=sections, h=st.floats(1.0, 5.0), q=st.floats(0.0, 20.0), dq=st.floats(0.5, 20.0),
       water=st.one_of(st.none(), st.floats(0.0, 2.0)), approach=st.sampled_from(["DA1", "DA2", "DA3"]))
def test_more_surcharge_never_lowers_utilization(s, h, q, dq, water, approach):
    """Property (level backfill): more surcharge never lowers the utilization of any
    check in a case without the heel load (the heel load itself is stabilising, so the
    'heel load on' cases are not monotonic by nature); for eccentricity only where the
    resultant lies on the toe side of the centreline (|e| falls while a heel-side
    resultant moves towards the centre)."""
    basis = Basis(factors=resolve(approach), design=Design(approach=approach),
                  loads=Loads())
    sec = SectionArrays.of([s])
    a = stab.stability_checks(sec, _cond(h, 0.0, q, water, 0.0), basis)
    b = stab.stability_checks(sec, _cond(h, 0.0, q + dq, water, 0.0), basis)
    heel_side = _heel_side(sec, _cond(h, 0.0, q, water, 0.0), basis)
    for x, y in zip(a, b):
        if "heel load on" in x.case:
            continue
        if x.check.startswith("eccentricity") and heel_side[(x.combination, x.case)]:
            # a resultant behind the centreline moves towards it first: |e| falls
            continue
        assert y.utilization[0] >= x.utilization[0] * (1 - 1e-9) - 1e-12, (x.check, x.case)


def _heel_side(sec, cond, basis):
    """{(combination, case): resultant behind the base centreline (signed e < 0)}."""
    from wallrun.factors import SLS
    g = stab.Geometry(sec, cond)
    out = {}
    for name in basis.uls_sets:
        a = stab._SetActions(g, basis.factors[name], cond, basis)
        for lab, unfav, on in stab.SUBCASES:
            out[(name, lab)] = bool(a.subcase(g, unfav, on)[3][0] < 0)
    a = stab._SetActions(g, SLS, cond, basis)
    for lab, on in stab.SLS_CASES:
        out[("SLS", lab)] = bool(a.subcase(g, True, on)[3][0] < 0)
    return out


@settings(max_examples=30, deadline=None)
@given(s=sections, h=st.floats(1.0, 5.0), slope=st.floats(0.0, 20.0))
def test_vectorised_over_candidates_equals_one_by_one(s, h, slope):
    other = Section(0.3, 0.4, 2.8, 0.7, 0.4, 0.4, 0.3)
    cond = _cond(h, slope, 10.0, 0.5, 50.0)
    b = Basis(factors=resolve("DA1"))
    both = stab.stability_checks(SectionArrays.of([s, other]), cond, b)
    one = stab.stability_checks(SectionArrays.of([s]), cond, b)
    for x, y in zip(both, one):
        assert x.effect[0] == pytest.approx(y.effect[0], rel=1e-12, abs=1e-12)
        assert x.resistance[0] == pytest.approx(y.resistance[0], rel=1e-12, abs=1e-12)


def test_z_found_and_water_as_arrays():
    sec = SectionArrays.of([HAND, HAND])
    cond = Conditions(3.6, 0.8, np.array([0.0, -0.15]), COND.backfill, COND.foundation, 10.0,
                      water_level_m=np.array([1.0, 0.85]))
    checks = stab.stability_checks(sec, cond, BASIS)
    single = stab.stability_checks(SectionArrays.of([HAND]),
                                   Conditions(3.6, 0.8, -0.15, COND.backfill, COND.foundation,
                                              10.0, 0.85), BASIS)
    for x, y in zip(checks, single):
        assert x.effect[1] == pytest.approx(y.effect[0], rel=1e-12)


# --- bad input ---------------------------------------------------------------------------

def test_section_that_does_not_close_never_passes():
    bad = Section(0.3, 0.3, 0.8, 0.6, 0.4)  # heel = 0.8 - 0.6 - 0.3 < 0
    # in the vectorised engine, a section that does not close can never pass
    c = stab.stability_checks(SectionArrays.of([HAND, bad]), COND, BASIS)
    assert all(math.isinf(x.utilization[1]) for x in c)


def test_levels_as_arrays_equal_one_panel_at_a_time():
    # many panels of one ground in one call: z_top, z_front, z_found and the water level
    # as arrays (n,) give, row by row, the numbers of separate scalar calls (the same
    # formulas), for every entry point the sizing search uses
    rng = np.random.default_rng(5)
    n = 6
    secs = [Section(0.25, 0.35 + 0.05 * i, 2.2 + 0.2 * i, 0.5, 0.4, 0.4 * (i % 2), 0.3 * (i % 2))
            for i in range(n)]
    z_front = np.round(rng.uniform(20.0, 22.0, n), 3)
    z_top = z_front + np.round(rng.uniform(1.5, 3.5, n), 3)
    z_found = z_front - 0.9
    water = z_found + 0.6
    fd = Foundation(undrained_strength_kpa=60.0, allowable_bearing_kpa=250.0)
    bf = Backfill(slope_deg=8.0)
    basis = Basis(factors=resolve("DA1"))
    many = Conditions(z_top=z_top, z_front=z_front, z_found=z_found, backfill=bf,
                      foundation=fd, surcharge_kpa=10.0, water_level_m=water)
    S = SectionArrays.of(secs)
    allx = stab.evaluate_all(S, many, basis)
    ma = allx.member_actions()
    qp = allx.qp()
    edge = allx.edge_pressure()
    sm = allx.stem_moment(np.full(n, 1.2))
    for i in range(n):
        one = Conditions(z_top=float(z_top[i]), z_front=float(z_front[i]), z_found=float(z_found[i]),
                         backfill=bf, foundation=fd, surcharge_kpa=10.0,
                         water_level_m=float(water[i]))
        s1 = SectionArrays.of([secs[i]])
        ref = stab.stability_checks(s1, one, basis)
        assert [(c.check, c.combination, c.case) for c in ref] == \
            [(c.check, c.combination, c.case) for c in allx.checks]
        for a, b in zip(allx.checks, ref):
            assert np.allclose(np.broadcast_to(a.effect, (n,))[i], b.effect, rtol=1e-12, atol=1e-12)
            assert np.allclose(np.broadcast_to(a.resistance, (n,))[i], b.resistance,
                               rtol=1e-12, atol=1e-12)
        for a, b in zip(ma, stab.member_actions(s1, one, basis)):
            assert np.allclose(a.M_Ed[i], b.M_Ed, rtol=1e-12, atol=1e-12)
            assert np.allclose(a.V_Ed[i], b.V_Ed, rtol=1e-12, atol=1e-12)
        q1 = stab.member_moments_qp(s1, one, basis)
        assert all(np.allclose(qp[k][i], q1[k], rtol=1e-12, atol=1e-12) for k in q1)
        assert np.allclose(edge[i], stab.edge_pressure_sls(s1, one, basis), rtol=1e-12)
        assert np.allclose(sm[i], stab.stem_moment(s1, one, basis, 1.2), rtol=1e-12)


def test_stem_moments_by_hand_and_as_the_full_integrals():
    # Dry stem of length h under soil of unit weight g and a surcharge q, per unit K:
    # Sm = g h^3 / 6 (a triangle of pressure, resultant at h / 3) and Sqm = q h^2 / 2
    # (hand calculation from design-basis section 3): g = 19 kN/m3, h = 3 m, q = 10 kPa
    # give 85.5 and 45.0 kNm/m; with water the moments are those of the full integrals
    Sm, Sqm, Mw = stab._stem_moments_per_k(19.0, np.array([3.0]), np.array([0.0]), 10.0)
    assert Sm[0] == pytest.approx(85.5) and Sqm[0] == pytest.approx(45.0) and Mw == 0.0
    h = np.array([1.0, 2.5, 4.0])
    hw = np.array([0.0, 1.0, 4.0])
    Sm, Sqm, Mw = stab._stem_moments_per_k(20.0, h, hw, 15.0)
    _, Sm_f, _, Sqm_f, _, Mw_f = stab._stem_pressure_per_k(20.0, h, hw, 15.0)
    assert np.allclose(Sm, Sm_f, rtol=1e-12) and np.allclose(Sqm, Sqm_f, rtol=1e-12)
    assert np.allclose(Mw, Mw_f, rtol=1e-12)

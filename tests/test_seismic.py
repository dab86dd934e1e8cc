"""The seismic situation of wallrun.seismic (design-basis 10): a section worked by hand,
the vectorised module against a plain per-candidate recalculation (math, shapely
polygons, numerical integration of the contact pressure), the reduction to the
persistent DA1-2 checks at ag = 0, the no-solution flag and the report's table.

The plain path is tests/seismic_reference.py.
"""

import numpy as np
import pytest
from seismic_reference import plain_seismic, plain_stem_moment

from wallrun import seismic as se
from wallrun import stability as st
from wallrun.conditions import Conditions
from wallrun.factors import resolve
from wallrun.section import Section, SectionArrays
from wallrun.settings import Backfill, Basis, Design, Foundation, Loads, Seismic


def _get(checks, check, case):
    for c in checks:
        if (c.check, c.case) == (check, case):
            return c
    raise KeyError((check, case))


# --- a section worked by hand (invented) ----------------------------------------------
# The section of tests/test_stability.py: B 2.4, toe 0.6, base 0.4, stem 0.3 constant,
# no key; z_found 0, z_front 0.8, z_top 3.6; backfill gamma 18, phi' 30, level; no
# water; q 10 with psi2 0 (no surcharge in SEIS); passive none.
# Weights: stem 24.0 at (0.75, 2.0); base 24.0 at (1.2, 0.2); soil 86.4 at (1.65, 2.0):
# W = 134.4, sum W x = 189.36, sum W z = 48 + 4.8 + 172.8 = 225.6.
# [seismic] ag_g 0.2, S 1.0, r 1, kv_ratio 0.5: kh = 0.2, kv = 0.1.
# phi'_d = atan(tan 30 / 1.25) = 24.7913 deg (tan 0.46188); delta = beta = 0.
# K0 (theta 0, Rankine) = (1 - sin phi'_d)/(1 + sin phi'_d) = 0.40913;
# E0 = 0.5 x 18 x 0.40913 x 3.6^2 = 47.721 at 3.6/3 = 1.2.
# kv up: 1 - kv = 0.9, theta = atan(0.2/0.9) = 12.5288; phi - theta = 12.2625;
#   K = cos^2 12.2625 / (cos^2 12.5288 [1 + sqrt(sin 24.7913 sin 12.2625 / cos 12.5288)]^2)
#     = 0.95489 / (0.95295 x (1 + sqrt(0.41931 x 0.21239 / 0.97619))^2)
#     = 0.95489 / (0.95295 x 1.30204^2) = 0.59107;
#   E = 0.5 x 18 x 0.9 x 0.59107 x 12.96 = 62.048; dE = 14.327 at 1.8;
#   M_E = 47.721 x 1.2 + 14.327 x 1.8 = 83.053.
#   Overturning: M_dst = 83.053 + 0.2 x 225.6 = 128.173; M_stb = 0.9 x 189.36 = 170.424.
#   Sliding: H = 62.048 + 0.2 x 134.4 = 88.928; R = 0.9 x 134.4 x 0.46188 = 55.869.
#   Eccentricity: M = 42.251, V = 120.96, e = 1.2 - 42.251/120.96 = 0.8507 (> B/3 = 0.8).
# kv down: 1.1, theta = atan(0.2/1.1) = 10.3048; K = 0.55035; E = 70.612;
#   M_dst = 143.589, M_stb = 208.296; H = 97.492, R = 68.284; e = 0.7623.
HAND = Section(stem_top_m=0.3, stem_base_m=0.3, base_width_m=2.4, toe_m=0.6, base_thickness_m=0.4)
HAND_COND = Conditions(z_top=3.6, z_front=0.8, z_found=0.0,
                       backfill=Backfill(unit_weight_kn_m3=18.0, friction_angle_deg=30.0),
                       foundation=Foundation(unit_weight_kn_m3=19.0, friction_angle_deg=30.0),
                       surcharge_kpa=10.0)
HAND_BASIS = Basis(factors=resolve("DA1", seismic=True), design=Design(passive="none"))
HAND_SEIS = Seismic(ag_g=0.2, soil_factor=1.0, r=1.0, kv_ratio=0.5)


@pytest.fixture(scope="module")
def hand():
    return se.evaluate_seismic(SectionArrays.of([HAND]), HAND_COND, HAND_BASIS, HAND_SEIS)


def test_hand_coefficients(hand):
    ss = hand.ss
    assert (ss.kh, ss.kv) == pytest.approx((0.2, 0.1))
    up, down = ss.cases
    assert (up.label, up.fv, down.label, down.fv) == ("kv up", pytest.approx(0.9), "kv down",
                                                       pytest.approx(1.1))
    assert up.theta == pytest.approx(12.5288, abs=1e-4)
    assert up.K_back == pytest.approx(0.59107, abs=1e-5)
    assert down.K_back == pytest.approx(0.55035, abs=1e-5)
    assert ss.K0_back == pytest.approx(0.40913, abs=1e-5)


def test_hand_checks(hand):
    c = hand.checks
    for case, dst, stb in (("kv up, about toe", 128.173, 170.424),
                           ("kv down, about toe", 143.589, 208.296)):
        o = _get(c, "overturning", case)
        assert (float(o.effect[0]), float(o.resistance[0])) == pytest.approx((dst, stb), rel=2e-5)
    for case, H, R in (("kv up, drained", 88.928, 55.869), ("kv down, drained", 97.492, 68.284)):
        s = _get(c, "sliding", case)
        assert (float(s.effect[0]), float(s.resistance[0])) == pytest.approx((H, R), rel=2e-5)
    for case, e in (("kv up", 0.8507), ("kv down", 0.7623)):
        ec = _get(c, "eccentricity", case)
        assert float(ec.effect[0]) == pytest.approx(e, abs=1e-4)
        assert float(ec.resistance[0]) == pytest.approx(0.8)
    # the names: combination SEIS, kv sign first
    assert {x.combination for x in c} == {"SEIS"}
    assert all(x.case.startswith(("kv up", "kv down")) for x in c)
    assert [x.check for x in c][:2] == ["overturning", "overturning"]


def _candidates(n, seed):
    rng = np.random.default_rng(seed)
    B = rng.uniform(1.6, 4.5, n)
    tsb = rng.uniform(0.25, 0.55, n)
    toe = rng.uniform(0.1, 0.35, n) * B
    key = rng.random(n) < 0.5
    return [Section(stem_top_m=float(min(tsb[i], rng.uniform(0.25, 0.35))), stem_base_m=float(tsb[i]),
                    base_width_m=float(B[i]), toe_m=float(toe[i]),
                    base_thickness_m=float(rng.uniform(0.3, 0.6)),
                    key_depth_m=float(0.4 if key[i] else 0.0), key_width_m=float(0.35 if key[i] else 0.0))
            for i in range(n)]


CASES = {
    "dry, level": (
        Conditions(z_top=4.2, z_front=1.2, z_found=0.0, backfill=Backfill(19.0, 34.0),
                   foundation=Foundation(19.0, 32.0), surcharge_kpa=10.0),
        Basis(factors=resolve("DA1", seismic=True), design=Design(passive="key")),
        Seismic(ag_g=0.16, soil_factor=1.15, r=1.0, kv_ratio=0.5)),
    "water, slope, undrained, coulomb stem, full passive": (
        Conditions(z_top=12.5, z_front=9.6, z_found=8.7, backfill=Backfill(20.0, 36.0, 8.0, 20.0),
                   foundation=Foundation(20.0, 30.0, cohesion_kpa=5.0, undrained_strength_kpa=60.0),
                   surcharge_kpa=12.0, water_level_m=10.1),
        Basis(factors=resolve("DA2", {"seismic": {"g_phi": 1.2}}, seismic=True),
              design=Design(passive="full", earth_pressure="coulomb"), loads=Loads(psi2=0.3)),
        Seismic(ag_g=0.1, soil_factor=1.15, r=1.5, kv_ratio=0.33)),
    "water below the base, interface closed, no passive": (
        Conditions(z_top=3.5, z_front=0.9, z_found=0.0, backfill=Backfill(18.0, 32.0, 12.0),
                   foundation=Foundation(18.0, 28.0, undrained_strength_kpa=80.0),
                   surcharge_kpa=5.0, water_level_m=-0.2),
        Basis(factors=resolve("DA1", seismic=True),
              design=Design(passive="none", undrained_interface_open=False), loads=Loads(psi2=0.5)),
        Seismic(ag_g=0.25, soil_factor=1.2, r=2.0, kv_ratio=0.33)),
}


@pytest.mark.parametrize("name", list(CASES))
def test_against_plain_path(name):
    cond, basis, seis = CASES[name]
    secs = _candidates(12, seed=len(name))
    a = se.evaluate_seismic(SectionArrays.of(secs), cond, basis, seis)
    members = a.member_actions()
    ys = np.array([0.37 * (k + 1) for k in range(len(secs))])
    sm = a.stem_moment(ys)
    for i, s in enumerate(secs):
        ref, ref_m = plain_seismic(s, cond, basis, seis)
        assert [(c.check, c.case) for c in a.checks] == [(c, k) for c, k, _, _ in ref]
        for c, (_, _, eff, res) in zip(a.checks, ref):
            assert float(c.effect[i]) == pytest.approx(eff, rel=1e-9, abs=1e-9), (c.check, c.case, i)
            assert float(np.broadcast_to(c.resistance, (len(secs),))[i]) == pytest.approx(
                res, rel=1e-9, abs=1e-9), (c.check, c.case, i)
        assert [(m.member, m.case) for m in members] == [(m, k) for m, k, _, _ in ref_m]
        for m, (_, _, M, V) in zip(members, ref_m):
            assert float(m.M_Ed[i]) == pytest.approx(M, rel=1e-9, abs=1e-9), (m.member, m.case, i)
            assert float(m.V_Ed[i]) == pytest.approx(V, rel=1e-9, abs=1e-9), (m.member, m.case, i)
            assert m.combination == "SEIS"
        assert float(sm[i]) == pytest.approx(plain_stem_moment(s, cond, basis, seis, ys[i]),
                                             rel=1e-9, abs=1e-9)


def test_water_case_is_wet():
    # the second case has water on the virtual back, the third has none above the base
    cond, basis, seis = CASES["water, slope, undrained, coulomb stem, full passive"]
    a = se.evaluate_seismic(SectionArrays.of(_candidates(4, 1)), cond, basis, seis)
    assert np.all(a.g.hw > 0) and np.all(a.g.hw_stem > 0) and not a.no_solution.any()
    assert all(c.K_back_w > c.K_back > 0 for c in a.ss.cases)
    assert len(a.labels) == 4  # two signs x heel load on / off (psi2 q > 0)


# --- ag = 0: the persistent DA1-2 checks ---------------------------------------------

def test_zero_acceleration_is_persistent_da1_2():
    # With kh = kv = 0 and no surcharge the seismic situation has the actions of DA1-2
    # (all action factors 1.0, the same material factors, resistance factors 1.0): the
    # same sliding, bearing and eccentricity as DA1-2's sub-case "G fav, heel load off",
    # and the same member actions; Mononobe-Okabe at theta 0 with delta = beta is the
    # Rankine coefficient of design-basis 3, the passive E.4 at theta 0 Rankine's Kp.
    cond0, basis, _ = CASES["water, slope, undrained, coulomb stem, full passive"]
    from dataclasses import replace
    cond = replace(cond0, surcharge_kpa=0.0)
    basis = Basis(factors=resolve("DA1", seismic=True), design=Design(passive="full"))
    secs = SectionArrays.of(_candidates(10, 7))
    seis = se.evaluate_seismic(secs, cond, basis, Seismic(ag_g=0.0, soil_factor=1.2))
    pers = st.stability_checks(secs, cond, basis)

    def pget(check, case):
        for c in pers:
            if (c.check, c.combination, c.case) == (check, "DA1-2", case):
                return c
        raise KeyError(case)

    for check, scase, pcase in (("sliding", "kv up, drained", "drained"),
                                ("sliding", "kv down, undrained", "undrained"),
                                ("bearing", "kv up, drained", "G fav, heel load off, drained"),
                                ("bearing", "kv down, undrained", "G fav, heel load off, undrained"),
                                ("eccentricity", "kv up", "G fav, heel load off")):
        s, p = _get(seis.checks, check, scase), pget(check, pcase)
        np.testing.assert_allclose(s.effect, p.effect, rtol=1e-12, atol=1e-12)
        np.testing.assert_allclose(s.resistance, p.resistance, rtol=1e-12, atol=1e-12)
    pm = {(m.member, m.case): m for m in st.member_actions(secs, cond, basis) if m.combination == "DA1-2"}
    for m in seis.member_actions():
        p = pm[(m.member, "G fav, heel load off")]
        np.testing.assert_allclose(m.M_Ed, p.M_Ed, rtol=1e-12, atol=1e-9)
        np.testing.assert_allclose(m.V_Ed, p.V_Ed, rtol=1e-12, atol=1e-9)


# --- no Mononobe-Okabe solution --------------------------------------------------------

def test_no_solution_flags_and_fails():
    # phi'_d = atan(tan 30 / 1.25) = 24.79; kh = 0.3: theta (kv up) = atan(0.3 / 0.85)
    # = 19.44, so beta 8 > 24.79 - 19.44 = 5.35: no solution.
    cond = replace_slope(HAND_COND, 8.0)
    s = Seismic(ag_g=0.3, soil_factor=1.0, kv_ratio=0.5)
    msg = se.mononobe_okabe_problem(cond, HAND_BASIS, s)
    assert msg.startswith(se.NO_SOLUTION) and "kv up" in msg
    a = se.evaluate_seismic(SectionArrays.of([HAND]), cond, HAND_BASIS, s)
    assert a.no_solution.all()
    assert all(np.isinf(c.utilization).all() for c in a.checks)
    assert all(np.isinf(m.M_Ed).all() for m in a.member_actions())
    # a gentler earthquake: a solution, no flag
    assert se.mononobe_okabe_problem(cond, HAND_BASIS, Seismic(ag_g=0.1, soil_factor=1.0)) is None
    # water above the base: the impervious theta (E.9) counts
    wet = Conditions(z_top=3.6, z_front=0.8, z_found=0.0, backfill=Backfill(19.0, 32.0),
                     foundation=Foundation(19.0, 30.0), water_level_m=1.0)
    s2 = Seismic(ag_g=0.2, soil_factor=1.15)
    msg = se.mononobe_okabe_problem(wet, HAND_BASIS, s2)
    assert msg is not None and "below water" in msg
    dry = replace_water(wet, -1.0)
    assert se.mononobe_okabe_problem(dry, HAND_BASIS, s2) is None


def replace_slope(cond, beta):
    from dataclasses import replace
    return replace(cond, backfill=replace(cond.backfill, slope_deg=beta))


def replace_water(cond, level):
    from dataclasses import replace
    return replace(cond, water_level_m=level)


# --- consistency ----------------------------------------------------------------------

@pytest.mark.parametrize("name", list(CASES))
def test_action_table_sums_to_the_subcase(name):
    cond, basis, seis = CASES[name]
    s = _candidates(1, 11)[0]
    tables = se.seismic_action_table(s, cond, basis, seis)
    a = se.evaluate_seismic(SectionArrays.of([s]), cond, basis, seis)
    for r, lab in enumerate(a.labels):
        if lab.endswith("heel load off"):
            continue
        rows = tables[lab.split(",")[0]]
        assert sum(x.vertical_kn_m for x in rows) == pytest.approx(float(a.V[r, 0]), rel=1e-12)
        assert sum(x.horizontal_kn_m for x in rows) == pytest.approx(float(a.H[r, 0]), rel=1e-12)
        assert sum(x.moment_kn_m_m for x in rows) == pytest.approx(float(a.M[r, 0]), rel=1e-10, abs=1e-9)
        assert {x.kind for x in rows} <= {"permanent", "variable", "seismic"}


def test_stem_moment_and_reuse():
    cond, basis, seis = CASES["dry, level"]
    secs = SectionArrays.of(_candidates(6, 3))
    a = se.evaluate_seismic(secs, cond, basis, seis)
    stem_M = np.max(np.vstack([m.M_Ed for m in a.member_actions() if m.member == "stem"]), axis=0)
    np.testing.assert_allclose(a.stem_moment(a.g.hc), stem_M, rtol=1e-12)
    # a table of depths (k, n), growing with depth
    tab = a.stem_moment(np.vstack([np.full(6, 0.5), np.full(6, 1.5), np.full(6, 2.5)]))
    assert tab.shape == (3, 6) and np.all(np.diff(tab, axis=0) > 0)
    # a geometry built by the stability engine gives the same numbers; so does a subset
    b = se.evaluate_seismic(secs, cond, basis, seis, geometry=st.Geometry(secs, cond))
    for x, y in zip(a.checks, b.checks):
        np.testing.assert_array_equal(x.effect, y.effect)
    sub = a.subset(np.array([4, 1]))
    for x, y in zip(a.checks, sub.checks):
        np.testing.assert_allclose(y.effect, x.effect[[4, 1]], rtol=1e-14)
    np.testing.assert_array_equal(se.seismic_checks(secs, cond, basis, seis)[3].effect,
                                  a.checks[3].effect)

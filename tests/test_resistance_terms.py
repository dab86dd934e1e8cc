"""wallrun.stability.bearing_terms and passive_terms: the terms of the bearing and
passive resistances that the calculation report shows, against the checks they come
from and against hand calculations from the published formulas (EN 1997-1 Annex D,
9.5.1)."""

import math

import numpy as np
import pytest

from wallrun import stability as stab
from wallrun.codes import ec7
from wallrun.conditions import Conditions
from wallrun.factors import resolve
from wallrun.section import Section, SectionArrays
from wallrun.settings import Backfill, Basis, Design, Foundation
from plain_reference import entries

# An invented section with a shear key, on a foundation with an undrained strength so
# that both D.3 and D.4 appear; water behind the wall.
KEYED = Section(stem_top_m=0.25, stem_base_m=0.40, base_width_m=3.0, toe_m=0.7,
                base_thickness_m=0.40, key_depth_m=0.40, key_width_m=0.35)
PLAIN = Section(stem_top_m=0.25, stem_base_m=0.35, base_width_m=2.4, toe_m=0.6,
                base_thickness_m=0.35)
FOUND = Foundation(unit_weight_kn_m3=19.0, friction_angle_deg=28.0, cohesion_kpa=3.0,
                   undrained_strength_kpa=60.0)


def _cond(water=None, z_found=0.0):
    return Conditions(z_top=4.2, z_front=1.0, z_found=z_found,
                      backfill=Backfill(unit_weight_kn_m3=19.0, friction_angle_deg=32.0),
                      foundation=FOUND, surcharge_kpa=10.0, water_level_m=water)


@pytest.mark.parametrize("approach", ["DA1", "DA2", "DA3"])
@pytest.mark.parametrize("passive", ["key", "full", "none"])
def test_bearing_terms_give_the_checks_resistance(approach, passive):
    basis = Basis(factors=resolve(approach), design=Design(approach=approach, passive=passive))
    sec = SectionArrays.of([KEYED, PLAIN])
    cond = _cond(water=1.5)
    checks = [entries(stab.stability_checks(sec, cond, basis), i) for i in range(2)]
    terms = stab.bearing_terms(sec, cond, basis)
    bearing = [[c for c in ch if c.check == "bearing"] for ch in checks]
    assert len(terms) == len(bearing[0]) == 2 * 4 * len(basis.uls_sets)  # drained, undrained
    for k, t in enumerate(terms):
        for i in range(2):
            c = bearing[i][k]
            assert (c.combination, c.case) == (t.combination, t.case)
            assert float(t.V_kn_m[i]) == c.effect
            assert float(t.R_d_kn_m[i]) == c.resistance
            # R_d = R/A' B' / gamma_R;v
            assert t.R_d_kn_m[i] == pytest.approx(t.resistance_kpa[i] * t.B_eff_m[i] / t.gR)


def test_bearing_terms_by_hand():
    """Drained D.4 at phi'_d: Nq = e^(pi tan phi) tan^2(45 + phi/2), Nc = (Nq - 1) cot
    phi, Ngamma = 2 (Nq - 1) tan phi; R/A' = c' Nc ic + q' Nq iq + 0.5 gamma' B' Ngamma
    igamma with iq = (1 - H/(V + A'c' cot phi))^2, igamma = (...)^3, ic = iq - (1 - iq)
    / (Nc tan phi) (EN 1997-1 D.4, m = 2 for a strip); B' = B - 2|e|; q' = gamma D."""
    basis = Basis(factors=resolve("DA1"), design=Design(passive="key"))
    cond = _cond()
    t = next(x for x in stab.bearing_terms(SectionArrays.of([KEYED]), cond, basis)
             if x.combination == "DA1-2" and x.case == "G unfav, heel load on, drained")
    phi = math.atan(math.tan(math.radians(28.0)) / 1.25)  # M2: gamma_phi' = 1.25
    assert math.radians(t.phi_d_deg) == pytest.approx(phi)
    assert t.c_d_kpa == pytest.approx(3.0 / 1.25)
    nq = math.exp(math.pi * math.tan(phi)) * math.tan(math.pi / 4 + phi / 2) ** 2
    assert t.Nq[0] == pytest.approx(nq)
    assert t.Nc[0] == pytest.approx((nq - 1) / math.tan(phi))
    assert t.Ngamma[0] == pytest.approx(2 * (nq - 1) * math.tan(phi))
    V, H, e = float(t.V_kn_m[0]), float(t.H_kn_m[0]), float(t.e_m[0])
    Bp = 3.0 - 2 * abs(e)
    assert t.B_eff_m[0] == pytest.approx(Bp)
    assert t.q_kpa[0] == pytest.approx(19.0 * 1.0)  # D = 1.0 m of front soil
    base = 1 - H / (V + Bp * t.c_d_kpa / math.tan(phi))
    assert t.iq[0] == pytest.approx(base ** 2)
    assert t.igamma[0] == pytest.approx(base ** 3)
    assert t.ic[0] == pytest.approx(base ** 2 - (1 - base ** 2) / (t.Nc[0] * math.tan(phi)))
    r = (t.c_d_kpa * t.Nc[0] * t.ic[0] + 19.0 * nq * t.iq[0]
         + 0.5 * 19.0 * Bp * t.Ngamma[0] * t.igamma[0])
    assert t.resistance_kpa[0] == pytest.approx(r)


def test_phi_30_factors_match_the_tables():
    # Nq = 18.40, Nc = 30.14, Ngamma = 20.09 at phi = 30 deg (EN 1997-1 D.4 formulas;
    # the usual tabulated values, from memory)
    nq, nc, ng = (float(x) for x in ec7.bearing_factors(30.0))
    assert (nq, nc, ng) == pytest.approx((18.40, 30.14, 20.09), abs=0.01)


def test_undrained_terms_by_hand():
    """D.3: R/A' = (pi + 2) cu ic + q, ic = 0.5 (1 + sqrt(1 - H/(A' cu)))."""
    basis = Basis(factors=resolve("DA1"), design=Design(passive="key"))
    t = next(x for x in stab.bearing_terms(SectionArrays.of([KEYED]), _cond(), basis)
             if x.combination == "DA1-2" and x.case == "G fav, heel load on, undrained")
    cu = 60.0 / 1.4  # gamma_cu = 1.4 (M2)
    assert t.cu_d_kpa == pytest.approx(cu)
    H, Bp = float(t.H_kn_m[0]), float(t.B_eff_m[0])
    ic = 0.5 * (1 + math.sqrt(1 - H / (Bp * cu)))
    assert t.ic[0] == pytest.approx(ic)
    assert t.Nc[0] == pytest.approx(math.pi + 2)
    assert np.isnan(t.Nq[0]) and np.isnan(t.iq[0])
    assert t.resistance_kpa[0] == pytest.approx((math.pi + 2) * cu * ic + 19.0)


def test_undrained_inclination_outside_d3_is_nan():
    # H > A' cu: outside D.3, no factor and no resistance
    assert np.isnan(ec7.inclination_factor_undrained(150.0, 2.0, 50.0))
    assert ec7.inclination_factor_undrained(10.0, 2.0, 50.0) == pytest.approx(
        0.5 * (1 + math.sqrt(1 - 0.1)))


def test_passive_terms_by_hand():
    """Key face from the underside (z 0.0) to the key bottom (z -0.4); the front level
    1.0 lowered by delta_a = min(0.1 h, 0.5) = min(0.32, 0.5) = 0.32 (9.3.2.2, h = 3.2);
    Kp = (1 + sin phi_d) / (1 - sin phi_d); P = 0.5 Kp gamma (a^2 - b^2) with a = 0.68 +
    0.4 = 1.08 and b = 0.68 the depths of the face's ends (9.5.1, Rankine)."""
    basis = Basis(factors=resolve("DA1"), design=Design(passive="key"))
    terms = stab.passive_terms(SectionArrays.of([KEYED]), _cond(), basis)
    assert [t.combination for t in terms] == ["DA1-1", "DA1-2"]
    for t, g_phi in zip(terms, (1.0, 1.25)):
        phi = math.atan(math.tan(math.radians(28.0)) / g_phi)
        kp = (1 + math.sin(phi)) / (1 - math.sin(phi))
        assert t.Kp == pytest.approx(kp)
        assert t.delta_a_m[0] == pytest.approx(0.32)
        assert t.z_surface_m[0] == pytest.approx(0.68)
        assert (t.z_low_m[0], t.z_high_m[0]) == pytest.approx((-0.4, 0.0))
        p = 0.5 * kp * 19.0 * (1.08 ** 2 - 0.68 ** 2)
        assert t.P_kn_m[0] == pytest.approx(p)
        assert t.R_kn_m[0] == pytest.approx(p / t.gR)
    none = stab.passive_terms(SectionArrays.of([KEYED]), _cond(),
                              Basis(factors=resolve("DA1"), design=Design(passive="none")))
    assert all(float(t.P_kn_m[0]) == 0.0 for t in none)


def test_passive_gives_the_sliding_difference():
    """The drained sliding resistance with passive resistance less the one without is
    P / gamma_R;e (the sliding check adds it, design-basis 3)."""
    sec = SectionArrays.of([KEYED])
    cond = _cond()
    with_p = Basis(factors=resolve("DA2"), design=Design(approach="DA2", passive="key"))
    without = Basis(factors=resolve("DA2"), design=Design(approach="DA2", passive="none"))

    def sliding(basis):
        return next(c for c in entries(stab.stability_checks(sec, cond, basis), 0)
                    if c.check == "sliding" and c.case == "drained").resistance

    t = stab.passive_terms(sec, cond, with_p)[0]
    assert sliding(with_p) - sliding(without) == pytest.approx(float(t.R_kn_m[0]))

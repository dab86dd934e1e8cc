"""EN 1998-5 formulas of wallrun.codes.ec8 against hand working, a textbook example,
groundhog (reference library) and an independent trial-wedge equilibrium.

Sources named beside each value:
- EN 1998-5:2004 7.3.2.2 (Eqs. 7.1-7.3) and Annex E (E.2, E.4, E.6, E.9), worked by
  hand from the printed formulas in the comments (psi = 90 deg: vertical back).
- Das, B.M., Principles of Foundation Engineering, 7th edition (SI), chapter 7, the
  worked example of the Mononobe-Okabe active force (gamma 15.5 kN/m3, phi' 30,
  delta' 15, vertical back, level backfill, H 4 m, kh 0.2, kv 0): K_ae = 0.452,
  P_ae = 56.05 kN/m (from memory; example number not recalled).
- groundhog.excavations.basic.earthpressurecoefficients_poncelet (Coulomb's wedge,
  Poncelet's form; vertical back: wall_angle 0) and
  earthpressurecoefficients_frictionangle (Rankine Kp).
- Arango's equivalence (Kramer, Geotechnical Earthquake Engineering, 1996, 11.6.1,
  from memory): the Mononobe-Okabe wedge is Coulomb's wedge with the geometry rotated
  by theta, K_AE = cos theta Ka_C(phi, delta, wall angle theta, slope beta + theta).
- Seed and Whitman (1970), the approximation Delta K_AE ~ 3/4 kh for phi' = 35 deg,
  delta = phi'/2, level backfill (from memory; an approximation, checked loosely).
"""

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.optimize import minimize_scalar

from wallrun.codes import ec7, ec8

import groundhog.excavations.basic as gh_ex  # noqa: E402  (a test dependency)


# --- seismic coefficients, 7.3.2.2 --------------------------------------------------

def test_coefficients():
    # Eq. 7.1: kh = alpha S / r = 0.16 x 1.15 / 1 = 0.184; r = 2 (Table 7.1): 0.092.
    assert ec8.horizontal_coefficient(0.16, 1.15, 1.0) == pytest.approx(0.184, rel=1e-12)
    assert ec8.horizontal_coefficient(0.16, 1.15, 2.0) == pytest.approx(0.092, rel=1e-12)
    # Eqs. 7.2, 7.3: kv = 0.5 kh = 0.092; 0.33 kh = 0.06072.
    assert ec8.vertical_coefficient(0.184, 0.5) == pytest.approx(0.092, rel=1e-12)
    assert ec8.vertical_coefficient(0.184, 0.33) == pytest.approx(0.06072, rel=1e-12)
    assert ec8.R_VALUES == (2.0, 1.5, 1.0) and ec8.KV_RATIOS == (0.5, 0.33)


def test_seismic_angles():
    # E.6: tan theta = kh / (1 - kv): kh 0.2, kv 0 -> atan 0.2 = 11.3099 deg;
    # kv 0.1 upward -> atan(0.2 / 0.9) = 12.5288 deg; kv 0.1 downward -> atan(0.2/1.1).
    assert ec8.seismic_angle(0.2, 0.0) == pytest.approx(11.3099, abs=1e-4)
    assert ec8.seismic_angle(0.2, 0.1) == pytest.approx(12.5288, abs=1e-4)
    assert ec8.seismic_angle(0.2, -0.1) == pytest.approx(math.degrees(math.atan(0.2 / 1.1)), abs=1e-12)
    # E.9: tan theta = gamma / (gamma - gamma_w) kh / (1 - kv): gamma 20, gamma_w 9.81,
    # kh 0.2, kv 0: 20 / 10.19 x 0.2 = 0.39254 -> 21.432 deg;
    # gamma 19, kh 0.15, kv 0.075 downward: 19 / 9.19 x 0.15 / 1.075 = 0.28848 -> 16.092 deg.
    assert ec8.seismic_angle_impervious(0.2, 0.0, 20.0) == pytest.approx(21.432, abs=1e-3)
    assert ec8.seismic_angle_impervious(0.15, -0.075, 19.0) == pytest.approx(16.092, abs=1e-3)
    assert ec8.effective_unit_weight_impervious(20.0) == pytest.approx(10.19)
    # 1 - kv <= 0: theta 90 deg, no active solution
    assert ec8.seismic_angle(0.5, 1.0) == pytest.approx(90.0)


# --- the active coefficient, E.2, worked by hand ------------------------------------
#
# K = sin^2(psi + phi - theta) / (cos theta sin^2 psi sin(psi - theta - delta)
#     [1 + sqrt(sin(phi + delta) sin(phi - beta - theta) / (sin(psi - theta - delta)
#     sin(psi + beta)))]^2)
HAND = [
    # (phi, beta, delta, theta, psi, K)
    # phi 30, beta 0, delta 0, theta atan 0.2 = 11.3099: sin^2(108.6901) = 0.89731;
    # cos theta = 0.98058; sin(78.6901) = 0.98058; root = sqrt(0.5 x 0.32045 / 0.98058)
    # = 0.40422; denominator 0.98058 x 0.98058 x 1.40422^2 = 1.89601; K = 0.47326.
    (30.0, 0.0, 0.0, math.degrees(math.atan(0.2)), 90.0, 0.47326),
    # phi 30, beta 10, delta 10, theta 10: sin^2 110 = 0.88302; cos 10 = 0.98481;
    # sin 70 = 0.93969; root = sqrt(sin 40 sin 10 / (sin 70 sin 100)) = sqrt(0.64279 x
    # 0.17365 / (0.93969 x 0.98481)) = 0.34730; den 0.98481 x 0.93969 x 1.34730^2
    # = 1.67982; K = 0.52566.
    (30.0, 10.0, 10.0, 10.0, 90.0, 0.52566),
    # phi 35, beta 5, delta 20, theta 15: sin^2 110 = 0.88302; cos 15 = 0.96593;
    # sin 55 = 0.81915; root = sqrt(sin 55 sin 15 / (sin 55 sin 95)) = sqrt(0.25882 /
    # 0.99619) = 0.50971; den 0.96593 x 0.81915 x 1.50971^2 = 1.80342; K = 0.48964.
    (35.0, 5.0, 20.0, 15.0, 90.0, 0.48964),
    # phi atan 0.5 = 26.5651, beta 0, delta 17.71, theta 8: sin^2 108.5651 = 0.89863;
    # cos 8 = 0.99027; sin 64.29 = 0.90100; root = sqrt(sin 44.2751 sin 18.5651 /
    # 0.90100) = sqrt(0.69810 x 0.31838 / 0.90100) = 0.49667; den 0.99027 x 0.90100 x
    # 1.49667^2 = 1.99863; K = 0.44962.
    (math.degrees(math.atan(0.5)), 0.0, 17.71, 8.0, 90.0, 0.44962),
    # phi 40, beta 20, delta 13, theta 12: sin^2 118 = 0.77960; cos 12 = 0.97815;
    # sin 65 = 0.90631; root = sqrt(sin 53 sin 8 / (sin 65 sin 110)) = sqrt(0.79864 x
    # 0.13917 / (0.90631 x 0.93969)) = 0.36126; den 0.97815 x 0.90631 x 1.36126^2
    # = 1.64272; K = 0.47458.
    (40.0, 20.0, 13.0, 12.0, 90.0, 0.47458),
    # a back leaning at psi = 80: phi 30, beta 0, delta 10, theta 10: sin^2 100 =
    # 0.96985; cos 10 = 0.98481; sin^2 80 = 0.96985; sin 60 = 0.86603; root = sqrt(sin 40
    # sin 20 / (sin 60 sin 80)) = sqrt(0.64279 x 0.34202 / (0.86603 x 0.98481)) =
    # 0.50771; den 0.98481 x 0.96985 x 0.86603 x 1.50771^2 = 1.88028; K = 0.51580.
    (30.0, 0.0, 10.0, 10.0, 80.0, 0.51580),
]


@pytest.mark.parametrize("phi,beta,delta,theta,psi,K", HAND)
def test_active_coefficient_by_hand(phi, beta, delta, theta, psi, K):
    assert ec8.mononobe_okabe_active(phi, beta, delta, theta, psi) == pytest.approx(K, abs=2e-5)


def test_no_solution_beyond_phi_minus_theta():
    # beta > phi - theta: 30 - 11.31 = 18.69 < 20 -> nan (no solution, the panel is
    # flagged); at beta = phi - theta exactly the root vanishes and K is finite.
    th = ec8.seismic_angle(0.2, 0.0)
    assert np.isnan(ec8.mononobe_okabe_active(30.0, 20.0, 10.0, th))
    assert not ec8.active_solution_exists(30.0, 20.0, th)
    K = ec8.mononobe_okabe_active(30.0, 30.0 - 12.0, 10.0, 12.0)
    assert np.isfinite(K) and ec8.active_solution_exists(30.0, 18.0, 12.0)
    # vectorised: the bad entries only
    out = ec8.mononobe_okabe_active(np.array([30.0, 30.0]), np.array([0.0, 25.0]), 0.0, 10.0)
    assert np.isfinite(out[0]) and np.isnan(out[1])


def test_textbook_example_das():
    # Das, Principles of Foundation Engineering, 7th ed. (SI), ch. 7, the Mononobe-Okabe
    # example (from memory): gamma 15.5, phi' 30, delta' 15, H 4, kh 0.2, kv 0:
    # K_ae = 0.452, P_ae = 1/2 gamma H^2 (1 - kv) K_ae = 56.05 kN/m.
    th = ec8.seismic_angle(0.2, 0.0)
    K = ec8.mononobe_okabe_active(30.0, 0.0, 15.0, th)
    assert K == pytest.approx(0.452, abs=5e-4)
    assert ec8.total_design_force(15.5, 0.0, K, 4.0) == pytest.approx(56.05, rel=1e-3)


@pytest.mark.parametrize("kh", [0.15, 0.2, 0.25])
def test_seed_whitman_increment(kh):
    # Seed and Whitman (1970), approximation (from memory): Delta K_AE ~ 3/4 kh for
    # phi' 35, delta = phi'/2, level backfill, kv 0; within 20 % over kh 0.15 to 0.25.
    K = ec8.mononobe_okabe_active(35.0, 0.0, 17.5, ec8.seismic_angle(kh, 0.0))
    K0 = ec8.mononobe_okabe_active(35.0, 0.0, 17.5, 0.0)
    assert (K - K0) == pytest.approx(0.75 * kh, rel=0.2)


# --- at kh = kv = 0: Coulomb (groundhog) --------------------------------------------

@settings(max_examples=40, deadline=None)
@given(phi=st.floats(25.0, 45.0), delta_frac=st.floats(0.0, 1.0), beta_frac=st.floats(0.0, 0.9))
def test_static_is_coulomb_groundhog(phi, delta_frac, beta_frac):
    # groundhog's Poncelet (Coulomb) form accepts interface friction 15 to 40 deg
    delta = 15.0 + delta_frac * (min(phi, 40.0) - 15.0)
    beta = beta_frac * phi
    ref = gh_ex.earthpressurecoefficients_poncelet(phi, delta, 0.0, beta)["KaC [-]"]
    assert ec8.mononobe_okabe_active(phi, beta, delta, 0.0) == pytest.approx(ref, rel=1e-9)


@settings(max_examples=30, deadline=None)
@given(phi=st.floats(20.0, 45.0), beta_frac=st.floats(0.0, 0.95))
def test_static_smooth_and_rankine(phi, beta_frac):
    beta = beta_frac * phi
    # delta = 0: Coulomb of wallrun.codes.ec7 (itself checked against groundhog)
    assert ec8.mononobe_okabe_active(phi, beta, 0.0, 0.0) == pytest.approx(
        ec7.ka_coulomb(phi, 0.0, beta), rel=1e-9)
    # delta = beta on a vertical back: exactly Rankine's sloping-surface Ka (the
    # static part of the seismic thrust on the virtual back is design-basis 3's)
    assert ec8.mononobe_okabe_active(phi, beta, beta, 0.0) == pytest.approx(
        gh_ex.earthpressurecoefficients_rankine(phi, 0.0, beta)["KaR [-]"], rel=1e-9)


# --- seismic: Arango's rotation with groundhog's Coulomb, and a trial wedge ----------

@settings(max_examples=40, deadline=None)
@given(phi=st.floats(25.0, 45.0), delta_frac=st.floats(0.0, 1.0), theta=st.floats(0.0, 15.0),
       beta_frac=st.floats(0.0, 0.9))
def test_arango_rotation_groundhog(phi, delta_frac, theta, beta_frac):
    delta = 15.0 + delta_frac * (min(phi, 40.0) - 15.0)
    beta = beta_frac * (phi - theta)
    ref = gh_ex.earthpressurecoefficients_poncelet(phi, delta, theta, beta + theta)["KaC [-]"]
    K = ec8.mononobe_okabe_active(phi, beta, delta, theta)
    assert K == pytest.approx(math.cos(math.radians(theta)) * ref, rel=1e-9)


def _trial_wedge_K(phi, beta, delta, kh, kv):
    """Largest thrust over planar wedges behind a vertical back of height 1 (gamma 1),
    by force equilibrium of the wedge (weight W (1 - kv) down, kh W towards the wall,
    the back's reaction inclined at delta upward on the wedge, the plane's reaction at
    phi to its normal): K = 2 max P / (1 - kv)."""
    p, b, d = map(math.radians, (phi, beta, delta))

    def P(alpha):  # alpha: the plane's angle from the horizontal
        x = 1.0 / (math.tan(alpha) - math.tan(b))  # the plane meets the surface at x
        W = 0.5 * x
        a = -math.sin(alpha) + math.tan(p) * math.cos(alpha)
        c = math.cos(alpha) + math.tan(p) * math.sin(alpha)
        return W * (kh * c - a * (1.0 - kv)) / (c * math.cos(d) - a * math.sin(d))

    lo, hi = b + 1e-6, math.radians(89.9)
    grid = np.linspace(lo, hi, 400)
    k = int(np.argmax([P(a) for a in grid]))
    res = minimize_scalar(lambda a: -P(a), bounds=(grid[max(k - 1, 0)], grid[min(k + 1, 399)]),
                          method="bounded", options={"xatol": 1e-12})
    return 2.0 * -res.fun / (1.0 - kv)


@settings(max_examples=30, deadline=None)
@given(phi=st.floats(22.0, 45.0), delta_frac=st.floats(0.0, 0.67), kh=st.floats(0.0, 0.3),
       kv_frac=st.sampled_from([-0.5, -0.33, 0.0, 0.33, 0.5]), beta_frac=st.floats(0.0, 0.8))
def test_trial_wedge(phi, delta_frac, kh, kv_frac, beta_frac):
    kv = kv_frac * kh
    theta = ec8.seismic_angle(kh, kv)
    beta = beta_frac * (phi - theta)
    delta = delta_frac * phi
    K = ec8.mononobe_okabe_active(phi, beta, delta, theta)
    assert K == pytest.approx(_trial_wedge_K(phi, beta, delta, kh, kv), rel=1e-6)


# --- passive, E.4 ---------------------------------------------------------------------

def test_passive_coefficient():
    # theta = 0, level, vertical back: Rankine Kp (groundhog, Mohr circle)
    for phi in (25.0, 30.0, 38.0):
        ref = gh_ex.earthpressurecoefficients_frictionangle(phi)["Kp [-]"]
        assert ec8.mononobe_okabe_passive(phi, 0.0, 0.0) == pytest.approx(ref, rel=1e-12)
    # phi 30, beta 0, theta 10 by hand: sin^2(90 + 30 - 10) = 0.88302; cos 10 = 0.98481;
    # sin(90 + 10) = 0.98481; root = sqrt(sin 30 sin 20 / (sin 90 sin 100)) = sqrt(0.5 x
    # 0.34202 / 0.98481) = 0.41671; den 0.98481 x 0.98481 x (1 - 0.41671)^2 = 0.32997;
    # K = 2.6761.
    assert ec8.mononobe_okabe_passive(30.0, 0.0, 10.0) == pytest.approx(2.6761, abs=2e-4)
    # no passive wedge where phi + beta - theta < 0: no resistance
    assert ec8.mononobe_okabe_passive(20.0, 0.0, 25.0) == 0.0


# --- forces ---------------------------------------------------------------------------

def test_total_force_and_increment():
    # E.1: Ed = 1/2 gamma* (1 - kv) K H^2 + Ews + Ewd: gamma* 10, kv 0.1 up, K 0.5, H 4,
    # Ews = 1/2 x 9.81 x 4^2 = 78.48: 0.5 x 10 x 0.9 x 0.5 x 16 + 78.48 = 36 + 78.48.
    assert ec8.total_design_force(10.0, 0.1, 0.5, 4.0, E_ws=78.48) == pytest.approx(114.48)
    assert ec8.total_design_force(10.0, -0.1, 0.5, 4.0) == pytest.approx(44.0)
    assert ec8.dynamic_increment(56.05, 37.37) == pytest.approx(18.68)
    assert ec8.dynamic_increment_height(4.0) == 2.0  # 7.3.2.3(4): mid-height
    assert ec8.inertia_horizontal(0.2, 50.0) == pytest.approx(10.0)
    assert ec8.inertia_vertical(-0.1, 50.0) == pytest.approx(-5.0)
    assert ec8.active_inclination_limit(30.0) == pytest.approx(20.0)

"""EN 1997-1 formulas of wallrun.codes.ec7 against outside values.

Sources named beside each value: groundhog (reference library: Rankine and Poncelet
earth pressure, Nq, effective area), the Annex D formula values of EN 1997-1,
Annex A recommended factors (common practice), and hand calculations in comments.
"""

import math

import numpy as np
import pytest

from wallrun.codes import ec7
from wallrun.factors import RECOMMENDED, resolve

import groundhog.excavations.basic as gh_ex  # noqa: E402  (a test dependency)


# --- earth pressure ------------------------------------------------------------------------

def test_level_rankine_values():
    # Rankine, phi = 30 deg, level surface: Ka = 1/3, Kp = 3 (classical values, common practice).
    assert ec7.ka_rankine(30.0, 0.0) == pytest.approx(1.0 / 3.0, rel=1e-12)
    assert ec7.kp_rankine(30.0) == pytest.approx(3.0, rel=1e-12)
    # common practice: Ka of about 0.33 for a granular fill (phi' about 30 deg)
    assert 0.30 < ec7.ka_rankine(30.0) < 0.36


@pytest.mark.parametrize("phi", [20.0, 25.0, 28.0, 32.0, 36.0, 40.0, 45.0])
@pytest.mark.parametrize("beta", [0.0, 5.0, 10.0, 15.0, 19.0])
def test_rankine_sloping_against_groundhog(phi, beta):
    # groundhog earthpressurecoefficients_rankine, vertical wall (wall_angle 0),
    # sloping ground (top_angle beta): KaR, the coefficient of the thrust parallel to
    # the surface.
    ref = gh_ex.earthpressurecoefficients_rankine(phi, 0.0, beta)["KaR [-]"]
    assert ec7.ka_rankine(phi, beta) == pytest.approx(ref, rel=1e-9)


@pytest.mark.parametrize("phi", [20.0, 30.0, 40.0, 48.0])
def test_rankine_passive_against_groundhog(phi):
    # groundhog earthpressurecoefficients_frictionangle (Mohr circle): Kp
    ref = gh_ex.earthpressurecoefficients_frictionangle(phi)["Kp [-]"]
    assert ec7.kp_rankine(phi) == pytest.approx(ref, rel=1e-12)


@pytest.mark.parametrize("phi", [30.0, 35.0, 40.0])
@pytest.mark.parametrize("delta", [15.0, 20.0])
@pytest.mark.parametrize("beta", [0.0, 10.0, 20.0])
def test_coulomb_against_groundhog(phi, delta, beta):
    # groundhog earthpressurecoefficients_poncelet (Coulomb wedge), vertical back
    ref = gh_ex.earthpressurecoefficients_poncelet(phi, delta, 0.0, beta)["KaC [-]"]
    assert ec7.ka_coulomb(phi, delta, beta) == pytest.approx(ref, rel=1e-9)


def test_coulomb_smooth_level_is_rankine():
    # Coulomb with delta = 0 and a level surface reduces to Rankine (classical identity)
    for phi in (22.0, 30.0, 38.0):
        assert ec7.ka_coulomb(phi, 0.0, 0.0) == pytest.approx(ec7.ka_rankine(phi), rel=1e-12)


def test_vectorised_coefficients():
    phi = np.array([25.0, 30.0, 35.0])
    assert ec7.ka_rankine(phi, 10.0).shape == (3,)
    assert ec7.bearing_factors(phi)[0].shape == (3,)


# --- design values --------------------------------------------------------------------

def test_design_friction_angle():
    # hand: atan(tan 30 / 1.25) = atan(0.46188) = 24.79 deg
    assert ec7.design_friction_angle(30.0, 1.25) == pytest.approx(24.791, abs=1e-3)
    assert ec7.design_cohesion(10.0, 1.25) == pytest.approx(8.0)
    assert ec7.design_undrained_strength(70.0, 1.4) == pytest.approx(50.0)


def test_unplanned_excavation():
    # EN 1997-1 9.3.2.2(2): 10 % of the retained height, at most 0.5 m
    assert ec7.unplanned_excavation(3.0) == pytest.approx(0.3)
    assert ec7.unplanned_excavation(6.0) == pytest.approx(0.5)


def test_recommended_factors():
    # common practice (EN 1997-1 Annex A recommended values): EQU 1.1 destabilising,
    # 0.9 stabilising, 1.5 variable; DA1-1 1.35 permanent, 1.5 variable; M2 1.25.
    e = RECOMMENDED["EQU"]
    assert (e.gG_unfav, e.gG_fav, e.gQ) == (1.1, 0.9, 1.5)
    d = RECOMMENDED["DA1-1"]
    assert (d.gG_unfav, d.gQ) == (1.35, 1.5)
    assert RECOMMENDED["DA1-2"].g_phi == 1.25
    assert set(resolve("DA1")) == {"EQU", "DA1-1", "DA1-2"}


# --- Annex D ----------------------------------------------------------------------------

# EN 1997-1 D.4 formula values (2 decimals): phi -> (Nq, Nc, Ngamma)
ANNEX_D = {20: (6.40, 14.83, 3.93), 25: (10.66, 20.72, 9.01), 30: (18.40, 30.14, 20.09),
           35: (33.30, 46.12, 45.23), 40: (64.20, 75.31, 106.05)}


@pytest.mark.parametrize("phi", sorted(ANNEX_D))
def test_annex_d_factors(phi):
    Nq, Nc, Ng = ec7.bearing_factors(float(phi))
    assert (float(Nq), float(Nc), float(Ng)) == pytest.approx(ANNEX_D[phi], abs=0.006)


@pytest.mark.parametrize("phi", [20.0, 27.5, 33.0, 41.0])
def test_nq_against_groundhog(phi):
    import groundhog.shallowfoundations.capacity as cap
    assert ec7.bearing_factors(phi)[0] == pytest.approx(cap.nq_frictionangle_sand(phi)["Nq [-]"],
                                                        rel=1e-12)


@pytest.mark.parametrize("B, V, M", [(2.0, 100.0, 30.0), (3.5, 250.0, 80.0), (1.2, 60.0, 5.0)])
def test_effective_width_against_groundhog(B, V, M):
    import groundhog.shallowfoundations.capacity as cap
    # groundhog effectivearea_rectangle_api: B' = B - 2 M/V on a long footing
    ref = cap.effectivearea_rectangle_api(length=100.0, width=B, vertical_load=V,
                                          moment_width=M, moment_length=0.0)
    assert ec7.effective_width(B, M / V) == pytest.approx(ref["effective_width [m]"], rel=1e-12)


def test_inclination_factors_by_hand():
    # hand: H/V = 0.3, c' = 0 -> iq = 0.7^2 = 0.49, igamma = 0.7^3 = 0.343
    _, Nc, _ = ec7.bearing_factors(30.0)
    iq, ig, ic = ec7.inclination_factors_drained(30.0, 100.0, 2.0, 0.0, 30.0, Nc)
    assert (iq, ig) == pytest.approx((0.49, 0.343))
    # ic = iq - (1 - iq)/(Nc tan phi) = 0.49 - 0.51/(30.14 * 0.57735) = 0.46069
    assert ic == pytest.approx(0.49 - 0.51 / (30.1396 * math.tan(math.radians(30))), rel=1e-4)


def test_bearing_drained_by_hand():
    # hand (D.4): phi 30, c' 0, q' 15.2, gamma' 19, B' 2.0, H/V = 0.2:
    # iq = 0.64, ig = 0.512, R/A' = 15.2*18.401*0.64 + 0.5*19*2*20.093*0.512 = 374.47
    r = ec7.bearing_drained(0.0, 15.2, 19.0, 2.0, 30.0, 20.0, 100.0)
    assert r == pytest.approx(15.2 * 18.4011 * 0.64 + 0.5 * 19 * 2 * 20.0931 * 0.512, rel=1e-4)


def test_bearing_undrained_by_hand():
    # hand (D.3): cu 50, q 20, H 10, A' 2: ic = 0.5 (1 + sqrt(1 - 0.1)) = 0.97434
    # R/A' = 5.14159 * 50 * 0.97434 + 20 = 270.48
    assert ec7.bearing_undrained(50.0, 20.0, 10.0, 2.0) == pytest.approx(270.48, abs=0.01)
    assert ec7.bearing_undrained(50.0, 20.0, 150.0, 2.0) == 0.0  # H > A' cu


def test_widths_and_edge_pressure():
    # compressed width: B within the middle third, 3 (B/2 - e) beyond
    assert ec7.compressed_width(3.0, 0.4) == pytest.approx(3.0)
    assert ec7.compressed_width(3.0, 0.8) == pytest.approx(3 * (1.5 - 0.8))
    # sigma_max: V/B (1 + 6e/B) = 100/2 (1 + 6*0.2/2) = 80; beyond B/6:
    # 2V/(3 (B/2 - e)) = 200/(3*0.5) = 133.3
    assert ec7.edge_pressure(100.0, 0.2, 2.0) == pytest.approx(80.0)
    assert ec7.edge_pressure(100.0, 0.5, 2.0) == pytest.approx(133.333, rel=1e-5)
    assert ec7.edge_pressure(100.0, -0.5, 2.0) == pytest.approx(133.333, rel=1e-5)


def test_sliding_resistances():
    # 6.5.3 Eq. 6.3a: 100 tan 30 / 1.1 = 52.49
    assert ec7.sliding_resistance_drained(100.0, 30.0, 1.1) == pytest.approx(52.486, rel=1e-4)
    assert ec7.base_friction_angle(30.0, 1.25, 2 / 3) == pytest.approx(2 / 3 * 24.7913, rel=1e-4)
    # 6.4a: 2.0 * 40 = 80, capped at 0.4 V = 40 (6.5.3(12))
    assert ec7.sliding_resistance_undrained(2.0, 40.0, 100.0, 1.0, True) == pytest.approx(40.0)
    assert ec7.sliding_resistance_undrained(2.0, 40.0, 100.0, 1.0, False) == pytest.approx(80.0)


def test_passive_force_by_hand():
    # Kp 3, gamma 19, surface 10.0, face 9.0..9.6: depths 0.4..1.0:
    # P = 0.5 * 3 * 19 * (1.0^2 - 0.4^2) = 23.94
    P, z = ec7.passive_force(3.0, 19.0, 10.0, 9.0, 9.6)
    assert P == pytest.approx(23.94)
    # face above the surface gives nothing
    assert ec7.passive_force(3.0, 19.0, 10.0, 10.2, 10.8)[0] == 0.0

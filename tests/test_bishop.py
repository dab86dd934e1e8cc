"""Bishop's simplified method, equation by equation (wallrun.codes.bishop)."""

from __future__ import annotations

import math

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.integrate import quad

from wallrun.codes import bishop


@settings(max_examples=50, deadline=None)
@given(st.floats(1.0, 40.0), st.floats(-0.99, 0.99), st.floats(-0.99, 0.99))
def test_arc_integrals_against_quadrature(R, f0, f1):
    # the closed forms against scipy's adaptive quadrature of the arc level
    xc, zc = 3.0, 20.0
    x0, x1 = xc + f0 * R, xc + f1 * R
    arc = lambda x: zc - math.sqrt(R * R - (x - xc) ** 2)  # noqa: E731
    A, _ = quad(arc, x0, x1, epsabs=1e-11, epsrel=1e-11, limit=200)
    Am, _ = quad(lambda x: (x - xc) * arc(x), x0, x1, epsabs=1e-11, epsrel=1e-11, limit=200)
    assert math.isclose(bishop.arc_area(x0, x1, xc, zc, R), A, rel_tol=1e-8, abs_tol=1e-8)
    assert math.isclose(bishop.arc_moment(x0, x1, xc, zc, R), Am, rel_tol=1e-8, abs_tol=1e-7)


def test_arc_level_and_chord():
    # circle centre (0, 10), R = 5: the lowest point is at 5; at x = 3 the level is
    # 10 - 4 = 6 (3-4-5 triangle); the chord from x = 0 to 3 rises 1 m over 3 m
    assert bishop.arc_level(0.0, 0.0, 10.0, 5.0) == 5.0
    assert math.isclose(bishop.arc_level(3.0, 0.0, 10.0, 5.0), 6.0)
    c, s = bishop.chord_inclination(0.0, 3.0, 0.0, 10.0, 5.0)
    assert math.isclose(c, 3 / math.sqrt(10)) and math.isclose(s, 1 / math.sqrt(10))
    assert math.isclose(bishop.base_sine(3.0, 0.0, 5.0), 0.6)
    c0, s0 = bishop.chord_inclination(2.0, 2.0, 0.0, 10.0, 5.0)  # zero width: alpha = 0
    assert (c0, s0) == (1.0, 0.0)


def test_m_alpha_and_slice_strength_by_hand():
    # alpha = 30 deg, tan phi = 0.6, F = 1.5: m = 0.8660 + 0.5 x 0.6 / 1.5 = 1.0660
    a = math.radians(30)
    assert math.isclose(bishop.m_alpha(math.cos(a), math.sin(a), 0.6, 1.5),
                        math.cos(a) + 0.2, rel_tol=1e-12)
    # c b + (W - u b) tan phi = 5 x 2 + (100 - 10 x 2) x 0.6 = 58 kN/m
    assert math.isclose(bishop.slice_strength(5.0, 0.6, 100.0, 10.0, 2.0), 58.0)
    # no tension: u b > W leaves only the cohesion
    assert bishop.slice_strength(5.0, 0.6, 10.0, 10.0, 2.0) == 10.0


def test_single_planar_slice_gives_the_infinite_slope_factor():
    # One slice of weight W on a plane base at alpha, c' = 0, no water: Bishop's
    # F = W tan phi / m_alpha / (W sin alpha) solves to F = tan phi / tan alpha, the
    # dry cohesionless infinite slope (e.g. Craig's Soil Mechanics, infinite slopes;
    # common practice). R and W cancel.
    for phi, alpha in ((30, 20), (35, 30), (25, 24)):
        tp, a = math.tan(math.radians(phi)), math.radians(alpha)
        W, R = 120.0, 9.0
        F, Mr, m = bishop.bishop_factor(np.array([[W * tp]]), np.array([[math.cos(a)]]),
                                        np.array([[math.sin(a)]]), np.array([[tp]]),
                                        np.array([W * R * math.sin(a)]), np.array([R]))
        assert math.isclose(F[0], tp / math.tan(a), rel_tol=1e-7)
        assert math.isclose(Mr[0], F[0] * W * R * math.sin(a), rel_tol=1e-12)


def test_undrained_factor_is_arc_length_over_moment():
    # phi = 0: m_alpha = cos alpha, so F = R sum(cu b / cos alpha) / M_D = cu L R / M_D
    # (the total-stress circle method; Fellenius 1927), no iteration needed
    cu, R, MD = 40.0, 10.0, 5000.0
    xe = np.linspace(-6.0, 8.0, 41)
    c, s = bishop.chord_inclination(xe[:-1], xe[1:], 0.0, 12.0, R)
    b = np.diff(xe)
    F, Mr, m = bishop.bishop_factor((cu * b)[None], c[None], s[None], np.zeros((1, 40)),
                                    np.array([MD]), np.array([R]))
    L = (b / c).sum()
    assert math.isclose(F[0], cu * L * R / MD, rel_tol=1e-12)


def test_no_driving_moment_gives_infinite_factor():
    F, Mr, m = bishop.bishop_factor(np.ones((2, 3)), np.ones((2, 3)), np.zeros((2, 3)),
                                    np.full((2, 3), 0.5), np.array([0.0, -5.0]),
                                    np.array([4.0, 4.0]))
    assert np.all(np.isinf(F))

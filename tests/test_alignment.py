"""Road alignment geometry (wallrun.alignment), against hand calculations set up from the
standard formulas of highway geometry in the comments, the clothoid's power series and a
numerical quadrature (scipy.integrate.quad) of its defining integrals."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.integrate import quad

from wallrun.alignment import (Element, HorizontalAlignment, VerticalCurve, VerticalProfile,
                               offset_length)


def line_clothoid_arc(sta_start=500.0):
    """Start (1000, 2000) heading east; a 50 m straight; a 40 m clothoid from a straight
    to R = 100 m turning left (A^2 = R L = 4000 m2); 30 m of the R = 100 m arc."""
    e1 = Element(1000.0, 2000.0, 0.0, 50.0)
    x, y, h = e1.end()
    e2 = Element(x, y, h, 40.0, 0.0, 0.01)
    x, y, h = e2.end()
    e3 = Element(x, y, h, 30.0, 0.01, 0.01)
    return HorizontalAlignment((e1, e2, e3), sta_start=sta_start)


# Hand values (6 decimals):
# - station 525, 25 m along the straight: (1025, 2000).
# - station 590, the clothoid's end (s = 40 m, A^2 = 4000): the power series of
#   x = integral cos(s^2 / 2A^2), y = integral sin(s^2 / 2A^2) (Taylor series of cos and
#   sin integrated term by term):
#   x = s - s^5/(40 A^4) + s^9/(3456 A^8) - s^13/(599040 A^12)
#     = 40 - 0.16 + 0.000296296 - 0.000000274 = 39.840296
#   y = s^3/(6 A^2) - s^7/(336 A^6) + s^11/(42240 A^10) - s^15/(9676800 A^14)
#     = 2.666666667 - 0.007619048 + 0.000009697 - 0.000000007 = 2.659057
#   so (1089.840296, 2002.659057); heading s^2 / (2 A^2) = 0.2 rad.
# - station 605, 15 m into the arc: centre = end of clothoid + R (-sin 0.2, cos 0.2)
#   = (1089.840296 - 19.866933, 2002.659057 + 98.006658) = (1069.973363, 2100.665715);
#   heading 0.2 + 15/100 = 0.35; point = centre + R (sin 0.35, -cos 0.35)
#   = (1069.973363 + 34.289781, 2100.665715 - 93.937271) = (1104.263144, 2006.728444).
# - the same at 2 m right of it: centre + 102 (sin 0.35, -cos 0.35)
#   = (1069.973363 + 34.975576, 2100.665715 - 95.816017) = (1104.948939, 2004.849698).
HAND = [(525.0, 0.0, 1025.0, 2000.0), (590.0, 0.0, 1089.840296, 2002.659057),
        (605.0, 0.0, 1104.263144, 2006.728444), (605.0, 2.0, 1104.948939, 2004.849698)]


@pytest.mark.parametrize("sta,off,x,y", HAND)
def test_line_clothoid_arc_against_hand_values(sta, off, x, y):
    a = line_clothoid_arc()
    px, py = a.offset_xy([sta], off)
    assert px[0] == pytest.approx(x, abs=2e-6) and py[0] == pytest.approx(y, abs=2e-6)


def test_heading_at_the_clothoid_end():
    a = line_clothoid_arc()
    _, _, h, k = a.frame([590.0, 620.0])
    assert h[0] == pytest.approx(0.2, abs=1e-12)  # L / (2 R)
    assert h[1] == pytest.approx(0.5, abs=1e-12)  # + 30 / 100 on the arc
    assert k[1] == pytest.approx(0.01)


@settings(max_examples=40, deadline=None)
@given(h0=st.floats(-math.pi, math.pi), k0=st.floats(-0.02, 0.02), k1=st.floats(-0.02, 0.02),
       length=st.floats(5.0, 120.0), frac=st.floats(0.0, 1.0))
def test_clothoid_against_quadrature(h0, k0, k1, length, frac):
    """The Fresnel closed form against numerical integration of (cos h, sin h) with
    h(s) = h0 + k0 s + (k1 - k0) s^2 / (2 L), for any start curvature and sign."""
    if abs(k1 - k0) < 1e-6:
        k1 = k0 + 1e-3
    e = Element(0.0, 0.0, h0, length, k0, k1)
    s = frac * length
    hx = lambda t: h0 + k0 * t + (k1 - k0) * t * t / (2 * length)  # noqa: E731
    qx = quad(lambda t: math.cos(hx(t)), 0, s, epsabs=1e-12)[0]
    qy = quad(lambda t: math.sin(hx(t)), 0, s, epsabs=1e-12)[0]
    x, y = e.xy(s)
    assert float(x) == pytest.approx(qx, abs=1e-7) and float(y) == pytest.approx(qy, abs=1e-7)


def test_offset_length_on_an_arc_and_a_clothoid():
    # arc of R = 100 m over 0.3 rad: at 2 m outside (right of a left-hand curve) the
    # radius is 102 m and the length 102 x 0.3 = 30.6 m; at 2 m inside 98 x 0.3 = 29.4 m
    a = line_clothoid_arc()
    assert a.offset_length(590.0, 620.0, 2.0) == pytest.approx(30.6, abs=1e-12)
    assert a.offset_length(590.0, 620.0, -2.0) == pytest.approx(29.4, abs=1e-12)
    # clothoid 0 -> 1/100 over 40 m: integral of (1 + o s / 4000) ds = 40 + o 40^2 / 8000
    assert a.offset_length(550.0, 590.0, 2.0) == pytest.approx(40.4, abs=1e-12)
    assert offset_length(0.0, 0.01, 40.0, 2.0, 0.0, 40.0) == pytest.approx(40.4)
    # the polyline of a dense sampling of the offset line has the same length
    s = np.linspace(500.0, 620.0, 24001)
    x, y = a.offset_xy(s, 2.0)
    assert float(np.sum(np.hypot(np.diff(x), np.diff(y)))) == pytest.approx(
        a.offset_length(500.0, 620.0, 2.0), abs=1e-4)


def test_sample_stations_keep_chords_within_tolerance():
    a = line_clothoid_arc()
    for off in (-3.0, 0.0, 4.5):
        st_ = a.sample_stations(off, 0.0005)
        assert {500.0, 550.0, 590.0, 620.0} <= set(np.round(st_, 9))
        fine = np.linspace(500.0, 620.0, 12001)
        fx, fy = a.offset_xy(fine, off)
        cx, cy = a.offset_xy(st_, off)
        # distance of the true line from the chord polyline through the samples
        px, py = np.interp(fine, st_, cx), np.interp(fine, st_, cy)
        assert float(np.max(np.hypot(fx - px, fy - py))) <= 0.0005 * 1.05


def test_parabolic_vertical_curve_against_hand_levels():
    # PVIs (100, 50.0), (200, 52.0) with an 80 m parabola, (300, 50.8): g1 = 0.02,
    # g2 = -0.012; start of curve 160 at 52 - 0.02 x 40 = 51.2;
    # y = 51.2 + 0.02 x - 0.032 x^2 / 160:
    # x = 20 -> 51.52; x = 40 (PVI) -> 51.68 (= 52 + (g2 - g1) L / 8); x = 50 (high point,
    # -g1 L / (g2 - g1) = 50) -> 51.70; x = 80 -> 51.52 (= 52 - 0.012 x 40)
    vp = VerticalProfile(np.array([100.0, 200.0, 300.0]), np.array([50.0, 52.0, 50.8]),
                         (None, VerticalCurve(200.0, 52.0, "parabola", length=80.0), None))
    z = vp.level_at([150.0, 180.0, 200.0, 210.0, 240.0, 260.0])
    assert z == pytest.approx([51.0, 51.52, 51.68, 51.70, 51.52, 51.28], abs=1e-12)


def test_circular_vertical_curve_against_hand_levels():
    # symmetric crest, grades +0.02 and -0.02 at the PVI (200, 52.0), R = 2000 m: the
    # centre lies under the PVI at R / cos a below it (a = atan 0.02), so the curve's
    # top is R (sec a - 1) = 2000 (sqrt(1.0004) - 1) = 0.399960 m below the PVI;
    # tangent points T cos a = R tan(a) cos(a) = R sin a = 39.992 m either side
    vp = VerticalProfile(np.array([100.0, 200.0, 300.0]), np.array([50.0, 52.0, 50.0]),
                         (None, VerticalCurve(200.0, 52.0, "circle", radius=2000.0), None))
    assert float(vp.level_at([200.0])[0]) == pytest.approx(52.0 - 0.399960, abs=1e-6)
    s0, s1 = vp.curve_ends(1)
    assert s0 == pytest.approx(200.0 - 2000.0 * math.sin(math.atan(0.02)), abs=1e-9)
    assert s1 == pytest.approx(200.0 + 2000.0 * math.sin(math.atan(0.02)), abs=1e-9)
    # the grades meet the circle at its ends, level and slope
    eps = 1e-4
    z = vp.level_at([s0 - eps, s0, s0 + eps])
    assert z[1] == pytest.approx(50.0 + 0.02 * (s0 - 100.0), abs=1e-9)
    assert (z[2] - z[1]) / eps == pytest.approx(0.02, abs=1e-4)

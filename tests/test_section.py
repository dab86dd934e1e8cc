"""Section geometry: shoelace areas and centroids against shapely, and hand values."""

import numpy as np
import pytest
from hypothesis import given, settings, strategies as st
from shapely.geometry import Polygon

from wallrun.section import (Section, SectionArrays, area_centroid, base_vertices,
                             key_vertices, polygons, section_problems, soil_vertices,
                             stem_vertices)

S = Section(stem_top_m=0.25, stem_base_m=0.40, base_width_m=2.60, toe_m=0.70,
            base_thickness_m=0.35, key_depth_m=0.40, key_width_m=0.30)


def test_stem_by_hand():
    # Hand calculation: trapezoid 3.0 m high, 0.40 at the base, 0.25 at z_top, plus a
    # 0.25 x 0.2 rectangle above z_top: A = 0.5 (0.40 + 0.25) 3.0 + 0.05 = 1.025 m2.
    A, cx, cz = area_centroid(*stem_vertices(0.7, 0.35, 0.40, 0.25, 3.0, 3.2))
    assert A == pytest.approx(1.025, rel=1e-12)
    # centroid x: rectangle 0.25 x 3.2 (x = 0.825, A = 0.8) + triangle 0.15 x 3.0
    # (x = 0.95 + 0.05 = 1.0 from the toe, A = 0.225): (0.8*0.825 + 0.225*1.0)/1.025
    assert cx == pytest.approx((0.8 * 0.825 + 0.225 * 1.0) / 1.025, rel=1e-12)
    # centroid z: rectangle at 0.35 + 1.6, triangle (wide at the bottom) at 0.35 + 1.0
    assert cz == pytest.approx((0.8 * 1.95 + 0.225 * 1.35) / 1.025, rel=1e-12)


def test_soil_block_by_hand():
    # Level backfill: heel 1.5 m wide (2.6 - 0.7 - 0.4), 3.0 m stem, taper 0.15 m:
    # A = 1.5 * 3.0 + 0.5 * 0.15 * 3.0 = 4.725 m2.
    A, cx, cz = area_centroid(*soil_vertices(0.7, 0.35, 0.40, 0.25, 2.6, 3.0, 0.0))
    assert A == pytest.approx(4.725, rel=1e-12)


def test_polygons_keys_and_validity():
    p = polygons(S, 3.2, 3.0, 15.0)
    assert set(p) == {"stem", "base", "key", "soil"}
    assert all(g.is_valid for g in p.values())
    s0 = Section(0.25, 0.40, 2.6, 0.7, 0.35)
    assert set(polygons(s0, 3.0)) == {"stem", "base"}
    # stem and base touch but do not overlap; soil and stem touch
    assert p["stem"].intersection(p["base"]).area == pytest.approx(0.0, abs=1e-12)
    assert p["stem"].intersection(p["soil"]).area == pytest.approx(0.0, abs=1e-12)


def test_no_key_is_zero_area():
    A, cx, cz = area_centroid(*key_vertices(np.array([0.7]), np.array([0.0]), np.array([0.0])))
    assert A[0] == 0.0 and np.isfinite(cx[0]) and np.isfinite(cz[0])


def _check_against_shapely(xs, zs):
    A, cx, cz = area_centroid(xs, zs)
    poly = Polygon(list(zip(xs, zs)))
    assert A == pytest.approx(poly.area, rel=1e-9, abs=1e-12)
    if poly.area > 1e-9:
        assert cx == pytest.approx(poly.centroid.x, rel=1e-9, abs=1e-9)
        assert cz == pytest.approx(poly.centroid.y, rel=1e-9, abs=1e-9)


dims = st.floats(0.05, 3.0)


@settings(max_examples=50, deadline=None)
@given(toe=st.floats(0.0, 2.0), t=dims, tsb=st.floats(0.2, 1.0), frac=st.floats(0.3, 1.0),
       heel=st.floats(0.1, 4.0), h=st.floats(0.3, 8.0), extra=st.floats(0.0, 1.0),
       beta=st.floats(0.0, 30.0), d=st.floats(0.0, 1.0), w=st.floats(0.0, 1.0))
def test_shoelace_equals_shapely(toe, t, tsb, frac, heel, h, extra, beta, d, w):
    """Property: the shoelace area and centroid equal shapely's (the reference)."""
    tst = tsb * frac
    B = toe + tsb + heel
    for xs, zs in (stem_vertices(toe, t, tsb, tst, h, h + extra), base_vertices(B, t),
                   key_vertices(toe, d, w), soil_vertices(toe, t, tsb, tst, B, h, beta)):
        _check_against_shapely(np.ravel(xs), np.ravel(zs))


def test_vectorised_shape():
    n = 7
    rng = np.random.default_rng(1)
    toe = rng.uniform(0, 1, n)
    xs, zs = stem_vertices(toe, 0.3, 0.4, 0.3, rng.uniform(1, 5, n))
    A, cx, cz = area_centroid(xs, zs)
    assert A.shape == (n,)
    for i in range(n):
        a1, x1, z1 = area_centroid(xs[i], zs[i])
        assert (A[i], cx[i], cz[i]) == pytest.approx((a1, x1, z1), rel=1e-14)


@pytest.mark.parametrize("sec, word", [
    (Section(0.25, 0.40, 1.0, 0.7, 0.35), "heel_m"),
    (Section(0.25, 3.0, 2.0, 0.0, 0.35), "stem_base_m"),
    (Section(0.50, 0.40, 2.6, 0.7, 0.35), "stem_top_m"),
    (Section(0.25, 0.40, 2.6, 0.7, 0.0), "base_thickness_m"),
    (Section(0.25, 0.40, 2.6, 0.7, 0.35, 0.4, 0.0), "key_width_m"),
    (Section(0.25, 0.40, 2.6, 0.7, 0.35, 0.4, 2.5), "key_width_m"),
    (Section(0.25, 0.40, -2.6, 0.7, 0.35), "base_width_m"),
])
def test_bad_sections_named(sec, word):
    assert section_problems(SectionArrays.of([sec]))[0]


def test_good_section_passes():
    assert not section_problems(SectionArrays.of([S]))[0]


@settings(max_examples=50, deadline=None)
@given(toe=st.floats(0.0, 2.0), t=dims, tsb=st.floats(0.2, 1.0), frac=st.floats(0.3, 1.0),
       heel=st.floats(0.1, 4.0), h=st.floats(0.3, 8.0), extra=st.floats(0.0, 1.0),
       beta=st.floats(0.0, 30.0), d=st.floats(0.0, 1.0), w=st.floats(0.0, 1.0))
def test_column_shoelace_equals_general(toe, t, tsb, frac, heel, h, extra, beta, d, w):
    """Property: the column form used by the stability engine for its fixed outlines
    (section.area_centroid_cols) equals the general area_centroid on the same vertices,
    including the degenerate (absent) key."""
    from wallrun.section import area_centroid_cols
    tst = tsb * frac
    B = toe + tsb + heel
    for xs, zs in (stem_vertices(toe, t, tsb, tst, h, h + extra), base_vertices(B, t),
                   key_vertices(toe, d, w), soil_vertices(toe, t, tsb, tst, B, h, beta)):
        xs, zs = np.atleast_2d(xs), np.atleast_2d(zs)
        ref = area_centroid(xs, zs)
        got = area_centroid_cols(list(xs.T), list(zs.T))
        for r, g in zip(ref, got):
            assert np.allclose(g, r, rtol=1e-12, atol=1e-12)

"""An independent recheck of design.json, written from the published formulas alone.

A level fill wall with no water and no key, designed by wallrun; then overturning
(EQU), drained sliding (DA1-1, DA1-2), drained bearing (EN 1997-1 Annex D) and
eccentricity are recomputed here from the reported levels and dimensions with
classical hand formulas (rectangles and triangles, Rankine Ka, no shoelace, no wallrun
engine code) and compared with the reported effects, resistances and utilizations.
"""

import math

import pytest

import wallrun
from wallrun.outputs import tables

TOML = """
[project]
name = "Recheck yard"
[profiles]
ground = "ground.csv"
finished = "finished.csv"
[backfill]
unit_weight_kn_m3 = 20.0
friction_angle_deg = 35.0
[foundation]
unit_weight_kn_m3 = 19.0
friction_angle_deg = 30.0
[loads]
surcharge_kpa = 10.0
[design]
passive = "none"
"""

GC = 25.0  # EN 1991-1-1 Table A.1, reinforced concrete


@pytest.fixture(scope="module")
def designed(tmp_path_factory):
    d = tmp_path_factory.mktemp("recheck")
    (d / "site.toml").write_text(TOML)
    (d / "ground.csv").write_text("chainage_m,level_m\n0,50.0\n16,50.0\n")
    (d / "finished.csv").write_text("chainage_m,level_m\n0,53.2\n16,53.2\n")
    result = wallrun.design(wallrun.load_site(d))
    return tables.design_dict(result)


def ka(phi):
    """Rankine, level surface: (1 - sin phi) / (1 + sin phi) (common practice)."""
    s = math.sin(math.radians(phi))
    return (1 - s) / (1 + s)


def phi_d(phi_k, g):
    """EN 1997-1 2.4.6.2 Eq. 2.2: tan phi_d = tan phi_k / gamma_phi."""
    return math.degrees(math.atan(math.tan(math.radians(phi_k)) / g))


def parts(p):
    """Weights (kN/m) and their lever arms from the toe edge (m), by hand."""
    s, lv = p["section"], p["levels"]
    B, toe, tb = s["base_width_m"], s["toe_m"], s["base_thickness_m"]
    tsb, tst = s["stem_base_m"], s["stem_top_m"]
    H = lv["retained_top_m"] - lv["founding_m"]
    hs = H - tb
    base = (B * tb * GC, B / 2)
    rect = (tst * hs * GC, toe + tst / 2)
    tri = ((tsb - tst) * hs / 2 * GC, toe + tst + (tsb - tst) / 3)
    w_soil_rect = (B - toe - tst) * hs * 20.0
    x_soil_rect = (toe + tst + B) / 2
    w_soil = w_soil_rect - tri[0] / GC * 20.0
    x_soil = (w_soil_rect * x_soil_rect - tri[0] / GC * 20.0 * tri[1]) / w_soil
    return [base, rect, tri, (w_soil, x_soil)], H, B


def check(p, name, comb, case):
    hits = [c for c in p["checks"] if c["check"] == name and c["combination"] == comb
            and c["case"] == case]
    assert len(hits) == 1, (name, comb, case)
    return hits[0]


def test_overturning_equ(designed):
    for p in designed["panels"]:
        w, H, B = parts(p)
        k = ka(phi_d(35.0, 1.25))
        pa, pq = 0.5 * k * 20.0 * H ** 2, k * 10.0 * H
        destab = 1.1 * pa * H / 3 + 1.5 * pq * H / 2
        stab = 0.9 * sum(v * x for v, x in w)
        c = check(p, "overturning", "EQU", "about toe")
        assert c["effect"] == pytest.approx(destab, rel=0.005)
        assert c["resistance"] == pytest.approx(stab, rel=0.005)
        assert c["utilization"] == pytest.approx(destab / stab, rel=0.005, abs=2e-3)


@pytest.mark.parametrize("comb,g_phi,gG,gQ", [("DA1-1", 1.0, 1.35, 1.5),
                                              ("DA1-2", 1.25, 1.0, 1.3)])
def test_drained_sliding(designed, comb, g_phi, gG, gQ):
    for p in designed["panels"]:
        w, H, B = parts(p)
        k = ka(phi_d(35.0, g_phi))
        Hd = gG * 0.5 * k * 20.0 * H ** 2 + gQ * k * 10.0 * H
        Vd = 1.0 * sum(v for v, _ in w)  # favourable permanent, gG_fav = 1.0
        Rd = Vd * math.tan(math.radians(phi_d(30.0, g_phi)))  # delta = phi_cv,d, k = 1
        c = check(p, "sliding", comb, "drained")
        assert c["effect"] == pytest.approx(Hd, rel=0.005)
        assert c["resistance"] == pytest.approx(Rd, rel=0.005)


def annex_d(phi):
    t = math.tan(math.radians(phi))
    nq = math.exp(math.pi * t) * math.tan(math.radians(45 + phi / 2)) ** 2
    return nq, 2 * (nq - 1) * t


def bearing_by_hand(p, comb, g_phi, gQ, g_perm, heel_load):
    """(V, e, R) of one bearing sub-case: permanent vertical actions at ``g_perm``, the
    thrusts at their unfavourable factors, the heel load q on the plan width from the
    stem's back face at z_top to x = B when ``heel_load`` (design-basis section 4);
    R by EN 1997-1 Annex D, drained, c' = 0, B' = B - 2|e|."""
    w, H, B = parts(p)
    s, lv = p["section"], p["levels"]
    gG = 1.35 if comb == "DA1-1" else 1.0
    k = ka(phi_d(35.0, g_phi))
    pa, pq = 0.5 * k * 20.0 * H ** 2, k * 10.0 * H
    bq = B - s["toe_m"] - s["stem_top_m"]
    Q = gQ * 10.0 * bq if heel_load else 0.0
    V = g_perm * sum(v for v, _ in w) + Q
    Hh = gG * pa + gQ * pq
    M = (g_perm * sum(v * x for v, x in w) + Q * (B - bq / 2)
         - gG * pa * H / 3 - gQ * pq * H / 2)
    e = abs(B / 2 - M / V)
    Bp = B - 2 * e
    D = lv["front_min_m"] - lv["founding_m"]
    nq, ng = annex_d(phi_d(30.0, g_phi))
    iq, ig = (1 - Hh / V) ** 2, (1 - Hh / V) ** 3
    return V, e, Bp * (19.0 * D * nq * iq + 0.5 * 19.0 * Bp * ng * ig)


@pytest.mark.parametrize("comb,g_phi,gQ", [("DA1-1", 1.0, 1.5), ("DA1-2", 1.25, 1.3)])
def test_bearing_and_eccentricity_g_unfav_heel_load_off(designed, comb, g_phi, gQ):
    gG = 1.35 if comb == "DA1-1" else 1.0
    for p in designed["panels"]:
        V, e, R = bearing_by_hand(p, comb, g_phi, gQ, gG, heel_load=False)
        c = check(p, "bearing", comb, "G unfav, heel load off, drained")
        assert c["effect"] == pytest.approx(V, rel=0.005)
        assert c["resistance"] == pytest.approx(R, rel=0.01)
        ce = check(p, "eccentricity", comb, "G unfav, heel load off")
        assert ce["effect"] == pytest.approx(e, rel=0.01, abs=2e-3)
        assert ce["resistance"] == pytest.approx(p["section"]["base_width_m"] / 3,
                                                 rel=1e-6, abs=1e-3)


def test_every_ok_panel_is_within_its_checks(designed):
    for p in designed["panels"]:
        if p["status"] == "ok":
            assert max(c["utilization"] for c in p["checks"]) <= 1.0


@pytest.mark.parametrize("comb,g_phi,gG,gQ", [("DA1-1", 1.0, 1.35, 1.5),
                                              ("DA1-2", 1.25, 1.0, 1.3)])
def test_stem_bending_and_shear(designed, comb, g_phi, gG, gQ):
    fck, fyd = 32.0, 500 / 1.15
    for p in designed["panels"]:
        s, lv = p["section"], p["levels"]
        hs = lv["retained_top_m"] - lv["founding_m"] - s["base_thickness_m"]
        k = ka(phi_d(35.0, g_phi))
        M = gG * k * 20.0 * hs ** 3 / 6 + gQ * k * 10.0 * hs ** 2 / 2  # cantilever, kNm/m
        V = gG * k * 20.0 * hs ** 2 / 2 + gQ * k * 10.0 * hs  # kN/m
        bars = p["reinforcement"]["stem"]
        As = math.pi / 4 * bars["bar_mm"] ** 2 * 1000 / bars["spacing_mm"]  # mm2/m
        d = s["stem_base_m"] * 1000 - 50 - bars["bar_mm"] / 2  # cover 50 mm
        # rectangular block (EN 1992-1-1 3.1.7): 0.8 x at 0.85 fck / 1.5
        x = As * fyd / (0.8 * 0.85 * fck / 1.5 * 1000)
        MRd = As * fyd * (d - 0.4 * x) / 1e6
        for case in {c["case"] for c in p["checks"] if c["check"] == "stem_bending"
                     and c["combination"] == comb}:
            c = check(p, "stem_bending", comb, case)
            assert c["effect"] == pytest.approx(M, rel=0.01)
            assert c["resistance"] == pytest.approx(MRd, rel=0.02)
        # EN 1992-1-1 6.2.2 Eq. 6.2a/b
        kk = min(1 + math.sqrt(200 / d), 2.0)
        rho = min(As / (1000 * d), 0.02)
        v = max(0.18 / 1.5 * kk * (100 * rho * fck) ** (1 / 3), 0.035 * kk ** 1.5 * fck ** 0.5)
        for c in p["checks"]:
            if c["check"] == "stem_shear" and c["combination"] == comb:
                assert c["effect"] == pytest.approx(V, rel=0.01)
                assert c["resistance"] == pytest.approx(v * d, rel=0.01)


@pytest.mark.parametrize("comb,g_phi,gQ", [("DA1-1", 1.0, 1.5), ("DA1-2", 1.25, 1.3)])
def test_bearing_g_fav_heel_load_on(designed, comb, g_phi, gQ):
    # favourable permanent actions (gG_fav = 1.0) with the heel load on
    for p in designed["panels"]:
        V, _, R = bearing_by_hand(p, comb, g_phi, gQ, 1.0, heel_load=True)
        c = check(p, "bearing", comb, "G fav, heel load on, drained")
        assert c["effect"] == pytest.approx(V, rel=0.005)
        assert c["resistance"] == pytest.approx(R, rel=0.01)


def test_heel_bending_da1_1_g_unfav_heel_load_off(designed):
    # heel at the back face of the stem, x_h = toe + stem_base: down the heel slab and the
    # soil above it (level backfill: hs x L_h), up the linear contact pressure of the
    # same sub-case (no uplift: a drained wall); moment about x_h (design-basis 5)
    for p in designed["panels"]:
        w, H, B = parts(p)
        s = p["section"]
        gG, gQ = 1.35, 1.5
        k = ka(35.0)
        pa, pq = 0.5 * k * 20.0 * H ** 2, k * 10.0 * H
        V = gG * sum(v for v, _ in w)
        M = gG * sum(v * x for v, x in w) - gG * pa * H / 3 - gQ * pq * H / 2
        e_t = B / 2 - M / V  # towards the toe positive
        assert abs(e_t) <= B / 6  # full contact for this simple closed form
        xh = s["toe_m"] + s["stem_base_m"]
        Lh = B - xh
        hs = H - s["base_thickness_m"]
        down = gG * (GC * s["base_thickness_m"] + 20.0 * hs) * Lh ** 2 / 2
        n = 2000  # midpoint rule on the linear pressure (exact to rounding)
        up = 0.0
        for i in range(n):
            x = xh + (i + 0.5) * Lh / n
            sigma = V / B + 12 * V * e_t * (B / 2 - x) / B ** 3
            up += sigma * (x - xh) * Lh / n
        c = check(p, "heel_bending", "DA1-1", "G unfav, heel load off")
        assert c["effect"] == pytest.approx(down - up, rel=0.01)

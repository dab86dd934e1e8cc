"""A plain, one-section-at-a-time evaluation of the stability checks (tests only).

Written separately from ``wallrun.stability`` (which evaluates arrays of candidates)
so that the two can check each other: scalar ``math`` only, shapely polygons for the
weights and lever arms, and explicit lists of actions summed one by one. Same model
(design-basis sections 2 to 4), same check, combination and case names, same order.
Units m, kN/m, kNm/m, kPa, degrees.
"""

from __future__ import annotations

import math

import numpy as np

from wallrun.conditions import Conditions
from wallrun.factors import SLS
from wallrun.results import CheckEntry, utilization
from wallrun.section import Section, polygons
from wallrun.settings import Basis

GAMMA_C = 25.0  # EN 1991-1-1 Table A.1
GAMMA_W = 9.81

SUBCASES = (("G unfav, heel load on", True, True), ("G unfav, heel load off", True, False),
            ("G fav, heel load on", False, True), ("G fav, heel load off", False, False))


def _phid(phi_k, g):
    """atan(tan phi_k / g), degrees (EN 1997-1 2.4.6.2)."""
    return math.degrees(math.atan(math.tan(math.radians(phi_k)) / g))


def _ka(phi, beta):
    """Rankine Ka for a surface sloping at beta (thrust parallel to the surface)."""
    p, b = math.radians(phi), math.radians(beta)
    r = math.sqrt(max(math.cos(b) ** 2 - math.cos(p) ** 2, 0.0))
    return math.cos(b) * (math.cos(b) - r) / (math.cos(b) + r)


def _layers(gamma, height, hw):
    """Effective-stress thrust per unit K down a vertical plane of ``height`` with water
    ``hw`` above its bottom, as a list of (force, height of action above the bottom)."""
    dry = height - hw
    parts = [(0.5 * gamma * dry * dry, hw + dry / 3.0),
             (gamma * dry * hw, hw / 2.0),
             (0.5 * (gamma - GAMMA_W) * hw * hw, hw / 3.0)]
    return [p for p in parts if p[0] != 0.0]


def _edge(V, e, B):
    ae = abs(e)
    if ae <= B / 6.0:
        return V / B * (1.0 + 6.0 * ae / B)
    if ae >= B / 2.0:
        return math.inf
    return 2.0 * V / (3.0 * (B / 2.0 - ae))


def plain_stability_checks(section: Section, cond: Conditions, basis: Basis) -> list[CheckEntry]:
    """Every stability check of one section (design-basis 4), scalar path."""
    s = section
    bf, fd = cond.backfill, cond.foundation
    B, toe, t = s.base_width_m, s.toe_m, s.base_thickness_m
    zf = float(cond.z_found)
    H = cond.z_top - zf
    hc = max(H - t, 0.0)
    beta = bf.slope_deg
    cb, sb = math.cos(math.radians(beta)), math.sin(math.radians(beta))
    q = cond.surcharge_kpa
    gb, gf = bf.unit_weight_kn_m3, fd.unit_weight_kn_m3

    polys = polygons(s, hc, hc, beta)
    concrete = []  # (name, W, x)
    for k in ("stem", "base", "key"):
        if k in polys:
            P = polys[k]
            concrete.append((k, GAMMA_C * P.area, P.centroid.x))
    soil = polys["soil"]
    Ws, xs = gb * soil.area, soil.centroid.x
    Wc = sum(w for _, w, _ in concrete)
    Mc = sum(w * x for _, w, x in concrete)

    Hv = H + (B - toe - s.stem_top_m) * math.tan(math.radians(beta))
    if cond.water_level_m is None:
        hw = 0.0
        hw_k = 0.0
    else:
        wl = min(float(cond.water_level_m), zf + Hv)
        hw = min(max(wl - zf, 0.0), Hv)
        hw_k = min(max(wl - (zf - s.key_depth_m), 0.0), Hv + s.key_depth_m)
    water_above = cond.water_level_m is not None and min(float(cond.water_level_m), zf + Hv) > zf
    U, xU = 0.5 * GAMMA_W * hw * B, 2.0 * B / 3.0
    bq = B - toe - s.stem_top_m
    Qh, xQ = q * bq, B - bq / 2.0
    D = max(cond.z_front - zf, 0.0)

    def thrusts(Ka, height, hwater):
        """Soil, surcharge and water thrust on the virtual back of a given height:
        list of (kind, horizontal, vertical, lever arm above the bottom)."""
        out = [("soil", Ka * F * cb, Ka * F * sb, y) for F, y in _layers(gb, height, hwater)]
        out.append(("surcharge", Ka * q * height * cb, Ka * q * height * sb, height / 2.0))
        if hwater > 0:
            out.append(("water", 0.5 * GAMMA_W * hwater ** 2, 0.0, hwater / 3.0))
        return out

    res: list[tuple] = []  # (check, comb, case, unit, clause, effect, resistance)

    # overturning, EQU
    fs = basis.factors["EQU"]
    Ka = _ka(_phid(bf.friction_angle_deg, fs.g_phi), beta)
    dst = 0.0
    stb = fs.gG_fav * (Mc + Ws * xs)
    for kind, Hh, Vv, y in thrusts(Ka, Hv, hw):
        if kind == "surcharge":
            dst += fs.gQ * Hh * y
        else:
            dst += fs.gG_ground * Hh * y
            if kind == "soil":
                stb += fs.gG_fav * Vv * B
    dst += fs.gG_ground * U * xU
    res.append(("overturning", "EQU", "about toe", "kNm/m", "EN 1997-1 2.4.7.2 (EQU)", dst, stb))

    undrained = fd.undrained_strength_kpa > 0
    zp = cond.z_front - min(0.1 * cond.h, 0.5)
    for name in basis.uls_sets:
        fs = basis.factors[name]
        Ka = _ka(_phid(bf.friction_angle_deg, fs.g_phi), beta)
        phi_f = _phid(fd.friction_angle_deg, fs.g_phi)
        # sliding: thrusts on the back extended to the key bottom
        Hd, Vd0 = 0.0, fs.gG_fav * (Wc + Ws)
        for kind, Hh, Vv, y in thrusts(Ka, Hv + s.key_depth_m, hw_k):
            Hd += (fs.gQ if kind == "surcharge" else fs.gG_ground) * Hh
            if kind == "soil":
                Vd0 += fs.gG_fav * Vv
        Veff = Vd0 - fs.gG_ground * U
        dd = basis.design.base_friction_factor * _phid(fd.phi_cv_deg, fs.g_phi)
        R = max(Veff, 0.0) * math.tan(math.radians(dd)) / fs.gR_sliding
        if basis.design.passive != "none":
            Kp = (1 + math.sin(math.radians(phi_f))) / (1 - math.sin(math.radians(phi_f)))
            top = zf + (t if basis.design.passive == "full" else 0.0)
            bot = zf - s.key_depth_m
            a1, a2 = max(zp - bot, 0.0), max(zp - top, 0.0)
            R += 0.5 * Kp * gf * (a1 * a1 - a2 * a2) / fs.gR_passive
        res.append(("sliding", name, "drained", "kN/m", "EN 1997-1 6.5.3 Eq. 6.3a", Hd, R))
        if undrained:
            Vu = fs.gG_fav * (Wc + Ws) - fs.gG_ground * U
            Mu = fs.gG_fav * (Mc + Ws * xs) - fs.gG_ground * U * xU
            for kind, Hh, Vv, y in thrusts(Ka, Hv, hw):
                if kind == "surcharge":
                    Mu -= fs.gQ * Hh * y
                else:
                    Mu -= fs.gG_ground * Hh * y
                    if kind == "soil":
                        Vu += fs.gG_fav * Vv
                        Mu += fs.gG_fav * Vv * B
            if Vu > 1e-9:
                eu = abs(B / 2 - Mu / Vu)
                Ac = B if eu <= B / 6 else max(3 * (B / 2 - eu), 0.0)
            else:
                Ac = 0.0
            cud = fd.undrained_strength_kpa / fs.g_cu
            Ru = Ac * cud / fs.gR_sliding
            if basis.design.undrained_interface_open:
                Ru = min(Ru, 0.4 * max(Vd0, 0.0))
            res.append(("sliding", name, "undrained", "kN/m",
                        "EN 1997-1 6.5.3 Eq. 6.4a, 6.5.3(12)", Hd, Ru))
        eccs = []
        for label, unfav, on in SUBCASES:
            V, Hb, M, e = _subcase(fs, unfav, on, Wc, Mc, Ws, xs, U, xU, Qh, xQ, B,
                                   thrusts(Ka, Hv, hw))
            Bp = max(B - 2 * abs(e), 0.0) if math.isfinite(e) else 0.0
            # drained, Annex D.4
            tp = math.tan(math.radians(phi_f))
            Nq = math.exp(math.pi * tp) * math.tan(math.radians(45 + phi_f / 2)) ** 2
            Nc = (Nq - 1) / tp
            Ng = 2 * (Nq - 1) * tp
            cd = fd.cohesion_kpa / fs.g_c
            den = V + Bp * cd / tp
            base = min(max(1 - Hb / den, 0.0), 1.0) if den > 0 else 0.0
            iq, ig = base ** 2, base ** 3
            ic = max(iq - (1 - iq) / (Nc * tp), 0.0)
            g_eff = gf - GAMMA_W if water_above else gf
            qa = cd * Nc * ic + gf * D * Nq * iq + 0.5 * g_eff * Bp * Ng * ig
            res.append(("bearing", name, f"{label}, drained", "kN/m", "EN 1997-1 6.5.2, Annex D.4",
                        V, qa * Bp / fs.gR_bearing))
            if undrained:
                cud = fd.undrained_strength_kpa / fs.g_cu
                if Bp * cud > 0 and Hb <= Bp * cud:
                    icu = 0.5 * (1 + math.sqrt(max(1 - Hb / (Bp * cud), 0.0)))
                    qu = (math.pi + 2) * cud * icu + gf * D
                else:
                    qu = 0.0
                res.append(("bearing", name, f"{label}, undrained", "kN/m",
                            "EN 1997-1 6.5.2, Annex D.3", V, qu * Bp / fs.gR_bearing))
            eccs.append(("eccentricity", name, label, "m", "EN 1997-1 6.5.4", abs(e), B / 3))
        res.extend(eccs)

    # SLS: characteristic, phi'_k
    Ka = _ka(bf.friction_angle_deg, beta)
    sls = []
    for label, on in (("heel load on", True), ("heel load off", False)):
        V, _, M, e = _subcase(SLS, True, on, Wc, Mc, Ws, xs, U, xU, Qh, xQ, B, thrusts(Ka, Hv, hw))
        sls.append((label, V, e))
    if basis.design.sls_middle_third:
        for label, V, e in sls:
            res.append(("eccentricity_sls", "SLS", label, "m",
                        "EN 1997-1 6.5.4; middle third (common practice)", abs(e), B / 6))
    if fd.allowable_bearing_kpa > 0:
        for label, V, e in sls:
            res.append(("bearing_sls", "SLS", label, "kPa",
                        "EN 1997-1 2.4.8(4); allowable pressure from the ground report",
                        _edge(V, e, B) if math.isfinite(e) else math.inf,
                        float(fd.allowable_bearing_kpa)))
    return [CheckEntry(c, k, case, float(ef), float(r), u, float(utilization(ef, r)), cl)
            for c, k, case, u, cl, ef, r in res]


def _subcase(fs, unfav, on, Wc, Mc, Ws, xs, U, xU, Qh, xQ, B, thrust_list):
    """(V net of uplift, H, M about the toe, e) of one bearing sub-case."""
    gc = fs.gG_unfav if unfav else fs.gG_fav
    gg = fs.gG_ground if unfav else fs.gG_fav
    V = gc * Wc + gg * (Ws - U)
    M = gc * Mc + gg * (Ws * xs - U * xU)
    Hs = 0.0
    for kind, Hh, Vv, y in thrust_list:
        if kind == "surcharge":
            f = fs.gQ
            V += f * Vv
            M += f * Vv * B
        elif kind == "soil":
            f = fs.gG_ground
            V += gg * Vv
            M += gg * Vv * B
        else:
            f = fs.gG_ground
        Hs += f * Hh
        M -= f * Hh * y
    if on:
        V += fs.gQ * Qh
        M += fs.gQ * Qh * xQ
    e = B / 2 - M / V if V > 1e-9 else math.inf
    return V, Hs, M, e


def entries(checks, i: int) -> tuple[CheckEntry, ...]:
    """The ``CheckArray`` checks of candidate ``i`` as entries, one check at a time,
    ``governs`` set on the first of the largest utilization of each (check,
    combination): the reading ``results.CheckListing`` is held to."""
    out = []
    for c in checks:
        e = float(np.broadcast_to(c.effect, np.shape(checks[0].effect))[i])
        r = float(np.broadcast_to(c.resistance, np.shape(checks[0].effect))[i])
        out.append(CheckEntry(c.check, c.combination, c.case, e, r, c.unit,
                              float(utilization(e, r)), c.clause))
    worst: dict[tuple[str, str], int] = {}
    for k, e in enumerate(out):
        key = (e.check, e.combination)
        if key not in worst or e.utilization > out[worst[key]].utilization:
            worst[key] = k
    gov = set(worst.values())
    return tuple(CheckEntry(**{**e.__dict__, "governs": k in gov}) for k, e in enumerate(out))

"""A plain, one-section-at-a-time recalculation of the seismic situation (tests only).

Written apart from ``wallrun.seismic`` (arrays of candidates) so that the two check each
other: scalar ``math``, shapely polygons for the weights, centroids and the soil beyond
the heel's critical section, ``scipy.integrate.quad`` for the contact pressure, and the
formulas of design-basis 10 and EN 1998-5 Annex E (E.2, E.4) written out again. The
EN 1997-1 resistance functions of ``wallrun.codes.ec7`` are used as they are (checked in
tests/test_ec7.py). Same check, case and member names and order as ``wallrun.seismic``.
Units m, kN/m, kNm/m, kPa, degrees.
"""

import math

from scipy.integrate import quad
from shapely.geometry import box

from wallrun.codes import ec7
from wallrun.conditions import Conditions
from wallrun.factors import SEISMIC
from wallrun.section import Section, polygons
from wallrun.settings import Basis, Seismic

GAMMA_W = 9.81
GAMMA_C = 25.0


def _phid(phi, g):
    return math.degrees(math.atan(math.tan(math.radians(phi)) / g))


def _K_active(phi, beta, delta, theta):
    """EN 1998-5 E.2 for a vertical back (psi = 90), plain math; nan beyond phi - theta."""
    if beta > phi - theta:
        return math.nan
    p, b, d, t = map(math.radians, (phi, beta, delta, theta))
    root = math.sqrt(math.sin(p + d) * math.sin(p - b - t) / (math.cos(t + d) * math.cos(b)))
    return math.cos(p - t) ** 2 / (math.cos(t) * math.cos(t + d) * (1.0 + root) ** 2)


def _K_passive(phi, theta):
    """EN 1998-5 E.4, vertical back, level surface, plain math."""
    p, t = math.radians(phi), math.radians(theta)
    if p - t < 0:
        return 0.0
    root = math.sqrt(math.sin(p) * math.sin(p - t) / math.cos(t))
    return math.cos(p - t) ** 2 / (math.cos(t) ** 2 * (1.0 - root) ** 2)


def _thrust(gamma, height, hw, q, K, Kw, K0, fv):
    """(E, moment about the bottom, E0): parts (force per unit K, height, wet?)."""
    d1 = height - hw
    parts = [(0.5 * gamma * d1 * d1, hw + d1 / 3.0, False), (gamma * d1 * hw, hw / 2.0, True),
             (0.5 * (gamma - GAMMA_W) * hw * hw, hw / 3.0, True), (q * d1, hw + d1 / 2.0, False),
             (q * hw, hw / 2.0, True)]
    E = fv * sum((Kw if wet else K) * F for F, _, wet in parts if F != 0.0)
    E0 = K0 * sum(F for F, _, _ in parts)
    M0 = K0 * sum(F * y for F, y, _ in parts)
    return E, M0 + (E - E0) * height / 2.0, E0


def _contact(V, e, B):
    """Linear, no-tension contact pressure sigma(x) and its support; a resultant
    outside the base gives a triangle 1e-6 m long at the edge (the convention of
    ``stability.contact_pressure``: the whole V at the edge; the section fails its
    eccentricity check anyway)."""
    if not (math.isfinite(e) and V > 0):
        return (lambda x: 0.0), (0.0, B)
    if abs(e) <= B / 6.0:
        return (lambda x: V / B * (1.0 + 6.0 * e / B) - 12.0 * V * e / B ** 3 * x), (0.0, B)
    if e > 0:
        L = max(3.0 * (B / 2.0 - e), 1e-6)
        return (lambda x: 2.0 * V / L * (1.0 - x / L)), (0.0, L)
    L = max(3.0 * (B / 2.0 + e), 1e-6)
    return (lambda x: 2.0 * V / L * (x - (B - L)) / L), (B - L, B)


def _integral(f, a, b, support, arm):
    """(integral of f over [a, b] within support, its moment about arm(x))."""
    lo, hi = max(a, support[0]), min(b, support[1])
    if hi <= lo:
        return 0.0, 0.0
    F = quad(f, lo, hi, epsabs=0, epsrel=1e-13)[0]
    M = quad(lambda x: f(x) * arm(x), lo, hi, epsabs=0, epsrel=1e-13)[0]
    return F, M


def plain_seismic(s: Section, cond: Conditions, basis: Basis, seis: Seismic):
    """Every SEIS check as (check, case, effect, resistance) and every member action
    as (member, case, M, V) of one section, in the order of wallrun.seismic."""
    bf, fd = cond.backfill, cond.foundation
    fs = basis.factors.get("SEIS", SEISMIC)
    B, toe, t, tsb, tst = s.base_width_m, s.toe_m, s.base_thickness_m, s.stem_base_m, s.stem_top_m
    dk = s.key_depth_m
    zf = float(cond.z_found)
    H = cond.z_top - zf
    hc = max(H - t, 0.0)
    beta, gb, gf = bf.slope_deg, bf.unit_weight_kn_m3, fd.unit_weight_kn_m3
    psi2q = basis.loads.psi2 * cond.surcharge_kpa
    polys = polygons(s, hc, hc, beta)
    parts = [(GAMMA_C * polys[k].area, polys[k].centroid.x, polys[k].centroid.y)
             for k in ("stem", "base", "key") if k in polys]
    soil = polys["soil"]
    parts.append((gb * soil.area, soil.centroid.x, soil.centroid.y))
    W = sum(p[0] for p in parts)
    Wx = sum(p[0] * p[1] for p in parts)
    Wz = sum(p[0] * p[2] for p in parts)
    Wst, zst = GAMMA_C * polys["stem"].area, polys["stem"].centroid.y
    Hv = H + (B - toe - tst) * math.tan(math.radians(beta))
    if cond.water_level_m is None:
        hw = hw_k = hw_s = 0.0
        w = -math.inf
    else:
        w = float(cond.water_level_m) - zf
        hw = min(max(min(w, Hv), 0.0), Hv)
        hw_k = min(max(min(w, Hv) + dk, 0.0), Hv + dk)
        hw_s = min(max(min(w, H) - t, 0.0), hc)
    U, xU = 0.5 * GAMMA_W * hw * B, 2.0 * B / 3.0
    bq = B - toe - tst
    Qs, xQ = psi2q * bq, B - bq / 2.0
    zQ = t + hc + (xQ - toe - tst) * math.tan(math.radians(beta))
    kh = seis.ag_g * seis.soil_factor / seis.r
    kv = seis.kv_ratio * kh
    phib, phif = _phid(bf.friction_angle_deg, fs.g_phi), _phid(fd.friction_angle_deg, fs.g_phi)
    db = min(beta, 2.0 / 3.0 * phib)
    ds = min(_phid(bf.wall_friction_deg, fs.g_phi), 2.0 / 3.0 * phib) \
        if basis.design.earth_pressure == "coulomb" else db
    cu_d = fd.undrained_strength_kpa / fs.g_cu
    c_d = fd.cohesion_kpa / fs.g_c
    K0b, K0s = _K_active(phib, beta, db, 0.0), _K_active(phib, beta, ds, 0.0)
    heel = ((", heel load on", 1.0), (", heel load off", 0.0)) if psi2q > 0 else (("", 0.0),)
    z_p = cond.z_front - min(0.1 * cond.h, 0.5)
    rows = []
    bad = False
    for label, sign in (("kv up", 1.0), ("kv down", -1.0)):
        fv = 1.0 - sign * kv
        th = math.degrees(math.atan2(kh, fv))
        thw = math.degrees(math.atan2(gb / (gb - GAMMA_W) * kh, fv))
        bad |= beta > phib - th or ((hw > 0 or hw_k > 0) and beta > phib - thw)
        K, Kw = _K_active(phib, beta, db, th), _K_active(phib, beta, db, thw)
        Kw = 0.0 if math.isnan(Kw) else Kw
        Ks, Ksw = _K_active(phib, beta, ds, th), _K_active(phib, beta, ds, thw)
        Ksw = 0.0 if math.isnan(Ksw) else Ksw
        E, ME, _ = _thrust(gb, Hv, hw, psi2q, K, Kw, K0b, fv)
        Ek, _, _ = _thrust(gb, Hv + dk, hw_k, psi2q, K, Kw, K0b, fv)
        Es, MEs, _ = _thrust(gb, hc, hw_s, psi2q, Ks, Ksw, K0s, fv)
        Kp = fv * _K_passive(phif, th)
        for suffix, on in heel:
            rows.append({"label": label + suffix, "fv": fv, "on": on, "E": E, "ME": ME, "Ek": Ek,
                         "Es": Es, "MEs": MEs, "Kp": Kp})
    cdb, sdb = math.cos(math.radians(db)), math.sin(math.radians(db))
    out = []
    for r in rows:
        Q = r["on"] * Qs
        r["V"] = r["fv"] * (W + Q) + r["E"] * sdb - U
        r["H"] = r["E"] * cdb + 0.5 * GAMMA_W * hw ** 2 + kh * (W + Q)
        r["Mdst"] = r["ME"] * cdb + 0.5 * GAMMA_W * hw ** 2 * hw / 3.0 + U * xU + kh * (Wz + Q * zQ)
        r["Mstb"] = r["fv"] * (Wx + Q * xQ) + r["E"] * sdb * B
        V = r["V"]
        r["e"] = B / 2.0 - (r["Mstb"] - r["Mdst"]) / V if V > 1e-9 else math.inf
        out.append(("overturning", r["label"] + ", about toe", r["Mdst"], r["Mstb"]))
    undrained = fd.undrained_strength_kpa > 0
    for r in rows:
        Q = r["on"] * Qs
        Hd = r["Ek"] * cdb + 0.5 * GAMMA_W * hw_k ** 2 + kh * (W + Q)
        Vd0 = r["fv"] * (W + Q) + r["Ek"] * sdb
        dlt = basis.design.base_friction_factor * _phid(fd.phi_cv_deg, fs.g_phi)
        R = max(Vd0 - U, 0.0) * math.tan(math.radians(dlt))
        mode = basis.design.passive
        if mode != "none":
            a = max(z_p - (zf - dk), 0.0)
            b = max(z_p - (zf + (t if mode == "full" else 0.0)), 0.0)
            R += 0.5 * r["Kp"] * gf * (a * a - b * b)
        out.append(("sliding", r["label"] + ", drained", Hd, R))
        if undrained:
            e = r["e"]
            Ac = 0.0 if not math.isfinite(e) else (B if abs(e) <= B / 6 else max(3 * (B / 2 - abs(e)), 0.0))
            Ru = Ac * cu_d
            if basis.design.undrained_interface_open:
                Ru = min(Ru, 0.4 * max(Vd0, 0.0))
            out.append(("sliding", r["label"] + ", undrained", Hd, Ru))
    D = max(cond.z_front - zf, 0.0)
    g_eff = gf - GAMMA_W if (cond.water_level_m is not None and min(w, Hv) > 0) else gf
    for r in rows:
        e = r["e"]
        Bp = max(B - 2 * abs(e), 0.0) if math.isfinite(e) else 0.0
        Rd = float(ec7.bearing_drained(c_d, gf * D, g_eff, Bp, phif, r["H"], r["V"])) * Bp
        out.append(("bearing", r["label"] + ", drained", r["V"], Rd))
        if undrained:
            Ru = float(ec7.bearing_undrained(cu_d, gf * D, r["H"], Bp)) * Bp
            out.append(("bearing", r["label"] + ", undrained", r["V"], Ru))
    for r in rows:
        out.append(("eccentricity", r["label"], abs(r["e"]), B / 3.0))
    if bad:
        out = [(c, k, math.inf, R) for c, k, _, R in out]
    # members
    cds = math.cos(math.radians(ds))
    xh = toe + tsb
    Lh = B - xh
    sh = soil.intersection(box(xh, -10.0, B + 10.0, 100.0))
    Wsh, xsh = gb * sh.area, sh.centroid.x
    members = []
    for r in rows:
        fv = r["fv"]
        Ms = cds * r["MEs"] + 0.5 * GAMMA_W * hw_s ** 3 / 3.0 + kh * Wst * (zst - t)
        Vs = cds * r["Es"] + 0.5 * GAMMA_W * hw_s ** 2 + kh * Wst
        Ev = r["E"] * sdb
        sig, sup = _contact(r["V"], r["e"], B)
        upl = (lambda x: GAMMA_W * hw * x / B)
        ql = r["on"] * fv * psi2q
        dF = fv * GAMMA_C * t * Lh + fv * Wsh + ql * Lh + Ev
        dM = fv * GAMMA_C * t * Lh ** 2 / 2 + fv * Wsh * (xsh - xh) + ql * Lh ** 2 / 2 + Ev * Lh
        cF, cM = _integral(sig, xh, B, sup, lambda x: x - xh)
        uF, uM = _integral(upl, xh, B, (0.0, B), lambda x: x - xh)
        Mh, Vh = dM - cM - uM, abs(dF - cF - uF)
        cF2, cM2 = _integral(sig, 0.0, toe, sup, lambda x: toe - x)
        uF2, uM2 = _integral(upl, 0.0, toe, (0.0, B), lambda x: toe - x)
        wF = fv * GAMMA_C * t * toe
        Mt, Vt = cM2 + uM2 - wF * toe / 2.0, abs(cF2 + uF2 - wF)
        for m, M, Vv in (("stem", Ms, Vs), ("heel", Mh, Vh), ("toe", Mt, Vt)):
            members.append((m, r["label"], math.inf if bad else M, math.inf if bad else Vv))
    return out, members


def plain_stem_moment(s, cond, basis, seis, y):
    """Seismic envelope stem moment at depth y below z_top (plain path)."""
    bf = cond.backfill
    fs = basis.factors.get("SEIS", SEISMIC)
    zf = float(cond.z_found)
    H = cond.z_top - zf
    t = s.base_thickness_m
    hc = max(H - t, 0.0)
    y = min(max(y, 0.0), hc)
    gb, beta = bf.unit_weight_kn_m3, bf.slope_deg
    w = -math.inf if cond.water_level_m is None else float(cond.water_level_m) - zf
    hw = min(max(min(w, H) - (H - y), 0.0), y)
    stem = polygons(s, hc, hc, beta)["stem"].intersection(box(-10.0, t + hc - y, 100.0, t + hc + 1.0))
    Wst, arm = GAMMA_C * stem.area, (stem.centroid.y - (t + hc - y)) if stem.area > 0 else 0.0
    kh = seis.ag_g * seis.soil_factor / seis.r
    phib = _phid(bf.friction_angle_deg, fs.g_phi)
    db = min(beta, 2.0 / 3.0 * phib)
    ds = min(_phid(bf.wall_friction_deg, fs.g_phi), 2.0 / 3.0 * phib) \
        if basis.design.earth_pressure == "coulomb" else db
    best = -math.inf
    for sign in (1.0, -1.0):
        fv = 1.0 - sign * seis.kv_ratio * kh
        th = math.degrees(math.atan2(kh, fv))
        thw = math.degrees(math.atan2(gb / (gb - GAMMA_W) * kh, fv))
        Kw = _K_active(phib, beta, ds, thw)
        _, M, _ = _thrust(gb, y, hw, basis.loads.psi2 * cond.surcharge_kpa,
                          _K_active(phib, beta, ds, th), 0.0 if math.isnan(Kw) else Kw,
                          _K_active(phib, beta, ds, 0.0), fv)
        best = max(best, math.cos(math.radians(ds)) * M + 0.5 * GAMMA_W * hw ** 3 / 3.0
                   + kh * Wst * arm)
    return best

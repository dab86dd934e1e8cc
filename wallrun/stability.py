"""Actions and every EN 1997-1 stability check of a cantilever wall, vectorised.

Design-basis sections 2 to 5. Every function evaluates n candidate sections at once
(``SectionArrays``, arrays of shape (n,)); loops run only over the factor sets, and the
four bearing sub-cases of a set are computed together as arrays (4, n). The levels of
``Conditions`` (z_top, z_front, z_found, water_level_m) may be floats or arrays (n,),
so that one call can check the sections of many panels of the same ground.
:func:`evaluate_all` builds the geometry, factored actions and sub-cases once and
serves the stability checks, member actions, quasi-permanent moments, SLS edge
pressure and stem moment from them (the sizing search); the separate entry points
give the same numbers. Section coordinates: x from the toe edge towards the
retained side, z from the underside of the base; units m, kN/m, kNm/m, kPa.

Public building blocks shared with the seismic situation (``wallrun.seismic``):
:class:`Geometry`, :func:`stress_integrals`, :func:`eccentricity`,
:func:`contact_pressure`, :func:`linear_integral`, :func:`base_member_actions`,
:func:`passive_front`.

Readings taken where the design basis is silent (also listed in the module report):

- The heel's critical section carries only the soil with x >= the stem back face at
  the top of the base; the small wedge over the tapered back face loads the stem.
- Undrained sliding: H_d and the V_d of the 0.4 V_d limit come from the same
  (key-extended) actions as drained sliding; the compressed width uses e from the
  non-extended actions (as the basis says).
- Where V <= 0 (the wall lifts off) e is taken as infinite: eccentricity fails with an
  infinite utilization, bearing resistance is 0.
- Undrained bearing with H > A' cu (outside D.3) has resistance 0.
- Passive pressure in front uses the total unit weight of the foundation (free
  drainage in front, water behind only).
- The stem pressure uses the backfill surface level with the stem top (z_top); the
  rising slope behind only enters through Ka.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from wallrun.codes import ec7
from wallrun.conditions import Conditions
from wallrun.factors import SLS, FactorSet
from wallrun.members import MemberActions
from wallrun.results import ActionRow, CheckArray
from wallrun.section import Section, SectionArrays, area_centroid_cols, section_problems
from wallrun.settings import Basis

GAMMA_C = 25.0  # reinforced concrete, kN/m3 (EN 1991-1-1 Table A.1)
GAMMA_W = ec7.GAMMA_W

#: Bearing sub-cases: (label, permanent vertical actions unfavourable, heel load on).
SUBCASES = (("G unfav, heel load on", True, True), ("G unfav, heel load off", True, False),
            ("G fav, heel load on", False, True), ("G fav, heel load off", False, False))
SLS_CASES = (("heel load on", True), ("heel load off", False))

CLAUSE = {
    "overturning": "EN 1997-1 2.4.7.2 (EQU)",
    "sliding drained": "EN 1997-1 6.5.3 Eq. 6.3a",
    "sliding undrained": "EN 1997-1 6.5.3 Eq. 6.4a, 6.5.3(12)",
    "bearing drained": "EN 1997-1 6.5.2, Annex D.4",
    "bearing undrained": "EN 1997-1 6.5.2, Annex D.3",
    "eccentricity": "EN 1997-1 6.5.4",
    "eccentricity_sls": "EN 1997-1 6.5.4; middle third (common practice)",
    "bearing_sls": "EN 1997-1 2.4.8(4); allowable pressure from the ground report",
}


# --- characteristic geometry ------------------------------------------------------------------

class Geometry:
    """Characteristic, factor-free quantities of n candidates (design-basis 2 and 3),
    arrays (n,); x from the toe edge, z from the underside of the base, m.

    Public attributes (kN/m, kNm/m, m): B, toe, t (base), tsb, tst (stem), dk, wk
    (key), H (total height), hc (checked stem height), Hv (virtual back height), beta
    (deg), q (surcharge, kPa), gb, gf (backfill and foundation unit weights);
    W_stem, W_base, W_key, W_c (concrete), M_c (its moment about the toe), W_s (soil
    over the heel) with centroids x_stem, z_stem, x_base, z_base, x_key, z_key, x_s,
    z_s; x_h (heel critical section), W_s_heel, x_s_heel (soil beyond it); water:
    hw, hw_k (on the virtual back, above the underside and above the key bottom),
    hw_stem (on the stem above the top of the base), w_stem_rel (the water level on
    the stem, relative to the underside), Pw, Pw_k, Mw (hydrostatic thrust and its
    moment), U, xU, MU (uplift); Q, xQ (heel load q per unit); D, q_over,
    g_eff_found (bearing); S, Sm, S_k (soil thrust per unit Ka and its moment).
    """

    def __init__(self, sec: SectionArrays, cond: Conditions):
        f = lambda a: np.asarray(a, dtype=float)
        self.B, self.toe, self.t = f(sec.base_width_m), f(sec.toe_m), f(sec.base_thickness_m)
        self.tsb, self.tst = f(sec.stem_base_m), f(sec.stem_top_m)
        self.dk, self.wk = f(sec.key_depth_m), f(sec.key_width_m)
        n = self.B.shape[0]
        self.n = n
        zf = f(cond.z_found)
        if zf.shape != (n,):
            zf = np.full(n, float(zf)) if zf.ndim == 0 else np.broadcast_to(zf, (n,))
        self.z_found = zf
        bf, fd = cond.backfill, cond.foundation
        self.beta = float(bf.slope_deg)
        tb = np.tan(np.radians(self.beta))
        self.cb, self.sb = np.cos(np.radians(self.beta)), np.sin(np.radians(self.beta))
        self.H = f(cond.z_top) - zf  # total height, m
        self.hc = np.maximum(self.H - self.t, 0.0)  # checked stem height, m
        self.q = float(cond.surcharge_kpa)
        g = self.gb = float(bf.unit_weight_kn_m3)
        self.gf = float(fd.unit_weight_kn_m3)
        B, toe, t = self.B, self.toe, self.t
        tsb, tst, hc = self.tsb, self.tst, self.hc
        z0 = 0.0 * B
        # concrete: stem to z_top, base, key (shoelace over the vertex columns of
        # section.stem_vertices, base_vertices, key_vertices, in their order)
        x_fs, x_bs, ztr = toe + tsb, toe + tst, t + hc
        As, xs, self.z_stem = area_centroid_cols((toe, x_fs, x_bs, x_bs, toe), (t, t, ztr, ztr, ztr))
        Ab, xb, self.z_base = area_centroid_cols((z0, B, B, z0), (z0, z0, t, t))
        xkw = toe + self.wk
        Ak, xk, self.z_key = area_centroid_cols((toe, xkw, xkw, toe), (-self.dk, -self.dk, z0, z0))
        self.W_stem, self.x_stem = GAMMA_C * As, xs
        self.W_base, self.x_base = GAMMA_C * Ab, xb
        self.W_key, self.x_key = GAMMA_C * Ak, xk
        self.W_c = self.W_stem + self.W_base + self.W_key
        self.M_c = self.W_stem * xs + self.W_base * xb + self.W_key * xk
        # soil over the heel (total unit weight above and below water), the vertex
        # columns of section.soil_vertices
        zs_B = ztr + (B - x_bs) * np.tan(np.radians(self.beta))
        Asl, xsl, self.z_s = area_centroid_cols((x_fs, B, B, x_bs), (t, t, zs_B, ztr))
        self.W_s, self.x_s = g * Asl, xsl
        # the part of it beyond the heel's critical section x_h = toe + t_stem_base
        self.x_h = toe + self.tsb
        z_top_rel = t + self.hc
        zs_xh = z_top_rel + (self.x_h - toe - self.tst) * tb
        self.Hv = z_top_rel + (B - toe - self.tst) * tb  # surface at x = B above underside
        Ah, xhh, _ = area_centroid_cols((self.x_h, B, B, self.x_h), (t, t, self.Hv, zs_xh))
        self.W_s_heel, self.x_s_heel = g * Ah, xhh
        # water behind the wall, relative to the underside of the base, capped at the
        # backfill surface at x = B (virtual back) and at z_top (stem)
        if cond.water_level_m is None:
            w = np.full(n, -np.inf)
        else:
            w = f(cond.water_level_m) - zf
        wc = np.minimum(w, self.Hv)
        self.water_above_base = wc > 0
        self.hw = np.clip(wc, 0.0, self.Hv)  # on the virtual back, above the underside
        self.hw_k = np.clip(wc + self.dk, 0.0, self.Hv + self.dk)  # above the key bottom
        self.hw_stem = np.clip(np.minimum(w, self.H) - t, 0.0, self.hc)
        self.w_stem_rel = np.minimum(w, self.H)  # absolute water on the stem, rel. underside
        # soil thrust per unit Ka on the virtual back: S (kN/m) and moment about its bottom
        self.S, self.Sm = self._thrust_per_ka(g, self.Hv, self.hw)
        self.S_k, _ = self._thrust_per_ka(g, self.Hv + self.dk, self.hw_k)
        self.Pw, self.Pw_k = 0.5 * GAMMA_W * self.hw ** 2, 0.5 * GAMMA_W * self.hw_k ** 2
        self.Mw = self.Pw * self.hw / 3.0
        # triangular uplift: gamma_w hw at the heel edge, 0 at the toe edge, at 2B/3
        self.U = 0.5 * GAMMA_W * self.hw * B
        self.xU = 2.0 * B / 3.0
        self.MU = self.U * self.xU
        # heel load: q on the plan width from the stem back face at z_top to x = B
        bq = B - toe - self.tst
        self.Q, self.xQ = self.q * bq, B - 0.5 * bq
        # bearing: overburden on the front and the unit weight in the Ngamma term
        self.D = np.maximum(f(cond.z_front) - zf, 0.0)
        self.q_over = self.gf * self.D
        self.g_eff_found = np.where(self.water_above_base, self.gf - GAMMA_W, self.gf)

    def _thrust_per_ka(self, g, Hb, hw):
        """Integral of the effective vertical stress down a vertical plane of height Hb
        with water hw above its bottom (effective weight g - gamma_w below the water):
        (S, moment of S about the bottom), per unit Ka (design-basis 3)."""
        (t1, t2, t3), (m1, m2, m3) = stress_integrals(g, Hb, hw)
        return t1 + t2 + t3, m1 + m2 + m3


def stress_integrals(g, h, hw):
    """The integral of the effective vertical stress down a vertical plane of height h
    (m) with water hw (m) above its bottom, in three parts (kN/m per unit coefficient),
    with their moments about the bottom (kNm/m): t1 the dry part above the water
    (0.5 g d1^2, d1 = h - hw), t2 the dry overburden carried below the water
    (g d1 hw), t3 the submerged part (0.5 (g - gamma_w) hw^2); g the unit weight,
    kN/m3 (design-basis 3). Returns ((t1, t2, t3), (m1, m2, m3))."""
    d1 = h - hw
    ge = g - GAMMA_W
    t1, t2, t3 = 0.5 * g * d1 ** 2, g * d1 * hw, 0.5 * ge * hw ** 2
    return (t1, t2, t3), (t1 * (hw + d1 / 3.0), t2 * hw / 2.0, t3 * hw / 3.0)


def _stem_pressure_per_k(g, h, hw, q):
    """Forces and moments at the bottom of a stem length h (m) with water hw above that
    bottom: (S, Sm) soil per unit K, (Sq, Sqm) surcharge per unit K, (Pw, Mw) water."""
    (t1, t2, t3), (m1, m2, m3) = stress_integrals(g, h, hw)
    S = t1 + t2 + t3
    Sm = m1 + m2 + m3
    Pw = 0.5 * GAMMA_W * hw ** 2
    return S, Sm, q * h, 0.5 * q * h ** 2, Pw, Pw * hw / 3.0


def _stem_moments_per_k(g, h, hw, q):
    """The moments of :func:`_stem_pressure_per_k` alone, about the bottom of a stem
    length h (m) with water hw above that bottom: (Sm soil per unit K, Sqm surcharge per
    unit K, Mw water), kNm/m. Where no water reaches the stem (hw = 0 everywhere) these
    are g h^3 / 6, q h^2 / 2 and 0 (the integrals of :func:`stress_integrals` with
    hw = 0), for the many depths of a curtailment table."""
    if not np.any(hw):
        hh = h * h
        return g * (hh * h) / 6.0, 0.5 * q * hh, 0.0
    (_, _, _), (m1, m2, m3) = stress_integrals(g, h, hw)
    return m1 + m2 + m3, 0.5 * q * h ** 2, GAMMA_W * hw ** 3 / 6.0


# --- factored actions of one set ---------------------------------------------------------------

class _SetActions:
    """Design values of one factor set: Ka, thrust components and their moments."""

    def __init__(self, g: Geometry, fs: FactorSet, cond: Conditions, basis: Basis):
        self.fs = fs
        bf, fd = cond.backfill, cond.foundation
        self.phi_b = float(ec7.design_friction_angle(bf.friction_angle_deg, fs.g_phi))
        self.Ka = float(ec7.ka_rankine(self.phi_b, g.beta))
        Ka = self.Ka
        self.Pa_h, self.Pa_v = Ka * g.S * g.cb, Ka * g.S * g.sb
        self.Ma_h = Ka * g.Sm * g.cb  # about the toe at the underside (bottom of the back)
        self.Pq_h, self.Pq_v = Ka * g.q * g.Hv * g.cb, Ka * g.q * g.Hv * g.sb
        self.Mq_h = 0.5 * Ka * g.q * g.Hv ** 2 * g.cb
        self.phi_f = float(ec7.design_friction_angle(fd.friction_angle_deg, fs.g_phi))
        self.c_d = float(ec7.design_cohesion(fd.cohesion_kpa, fs.g_c))
        self.cu_d = float(ec7.design_undrained_strength(fd.undrained_strength_kpa, fs.g_cu))
        self._sub: dict = {}
        self._stem: dict = {}

    def subcase(self, g: Geometry, unfav: bool, heel_on: bool):
        """V (net of uplift), H, M about the toe (restoring positive) and e of a bearing
        sub-case (design-basis 4): permanent vertical actions at gG unfav or fav, heel
        load at gQ or off; thrusts (and both components of Pq) unfavourable. Computed
        once per sub-case and reused (stability, member actions, SLS pressure)."""
        r = self._sub.get((unfav, heel_on))
        if r is None:
            self._all_subcases(g)
            r = self._sub[(unfav, heel_on)]
        return r

    def _all_subcases(self, g: Geometry) -> None:
        """The four sub-cases of :data:`SUBCASES` in one pass: the formulas of
        :meth:`_subcase` on arrays (4, n), one row per sub-case."""
        fs = self.fs
        cases = [(unfav, on) for _, unfav, on in SUBCASES]
        gcs = [fs.gG_unfav if unfav else fs.gG_fav for unfav, _ in cases]
        ggs = [fs.gG_ground if unfav else fs.gG_fav for unfav, _ in cases]
        gc = np.array(gcs, dtype=float)[:, None]
        gg = np.array(ggs, dtype=float)[:, None]
        gh, gQ = fs.gG_ground, fs.gQ
        on = np.array([gQ if o else 0.0 for _, o in cases], dtype=float)[:, None]
        V = gc * g.W_c + gg * (g.W_s + self.Pa_v - g.U) + gQ * self.Pq_v + on * g.Q
        H = gh * (self.Pa_h + g.Pw) + gQ * self.Pq_h
        M = (gc * g.M_c + gg * (g.W_s * g.x_s + self.Pa_v * g.B - g.MU) + gQ * self.Pq_v * g.B
             + on * g.Q * g.xQ - gh * (self.Ma_h + g.Mw) - gQ * self.Mq_h)
        e = eccentricity(V, M, g.B)
        for k, key in enumerate(cases):
            self._sub[key] = (V[k], H, M[k], e[k], gcs[k], ggs[k])

    def stem_base(self, g: Geometry, K_stem: float):
        """(M, V) at the stem's critical section for a horizontal coefficient K_stem
        (the same for every sub-case of the set; computed once)."""
        r = self._stem.get(K_stem)
        if r is None:
            fs = self.fs
            gh, gQ = fs.gG_ground, fs.gQ
            S, Sm, Sq, Sqm, Pw, Mw = _stem_pressure_per_k(g.gb, g.hc, g.hw_stem, g.q)
            M_stem = gh * (K_stem * Sm + Mw) + gQ * K_stem * Sqm
            V_stem = gh * (K_stem * S + Pw) + gQ * K_stem * Sq
            r = self._stem[K_stem] = (M_stem, V_stem)
        return r

    def _subcase(self, g: Geometry, unfav: bool, heel_on: bool):
        fs = self.fs
        gc = fs.gG_unfav if unfav else fs.gG_fav
        gg = fs.gG_ground if unfav else fs.gG_fav
        gh, gQ = fs.gG_ground, fs.gQ
        on = gQ if heel_on else 0.0
        V = gc * g.W_c + gg * (g.W_s + self.Pa_v - g.U) + gQ * self.Pq_v + on * g.Q
        H = gh * (self.Pa_h + g.Pw) + gQ * self.Pq_h
        M = (gc * g.M_c + gg * (g.W_s * g.x_s + self.Pa_v * g.B - g.MU) + gQ * self.Pq_v * g.B
             + on * g.Q * g.xQ - gh * (self.Ma_h + g.Mw) - gQ * self.Mq_h)
        return V, H, M, eccentricity(V, M, g.B), gc, gg


def eccentricity(V, M, B):
    """e = B/2 - M/V about the base centreline (positive towards the toe), m; inf where
    V <= 0."""
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(V > 1e-9, B / 2.0 - M / np.where(V > 1e-9, V, 1.0), np.inf)


def _sets(basis: Basis):
    return [(name, basis.factors[name]) for name in basis.uls_sets]


# --- stability checks ---------------------------------------------------------------------------

class _Actions:
    """Geometry, factored actions and sub-cases of n candidates at one (conditions,
    basis), built once and shared by every entry point (stability checks, member
    actions, quasi-permanent moments, SLS edge pressure, stem moment), so that one
    evaluation of the sizing search pays the fixed cost once (:func:`evaluate_all`)."""

    def __init__(self, sec: SectionArrays, cond: Conditions, basis: Basis):
        self.sec, self.cond, self.basis = sec, cond, basis
        self.g = Geometry(sec, cond)
        self._sets: dict = {}
        self._sls = None
        self._bad = None

    def set(self, fs: FactorSet) -> "_SetActions":
        """The design values of one factor set (built once)."""
        a = self._sets.get(fs)
        if a is None:
            a = self._sets[fs] = _SetActions(self.g, fs, self.cond, self.basis)
        return a

    def sls_cases(self):
        if self._sls is None:
            self._sls = _sls_cases(self)
        return self._sls

    def bad(self) -> np.ndarray:
        if self._bad is None:
            self._bad = section_problems(self.sec)
        return self._bad


def stability_checks(sec: SectionArrays, cond: Conditions, basis: Basis) -> list[CheckArray]:
    """Every stability check of design-basis section 4 for n candidates.

    Order: overturning (EQU); per ULS set: sliding drained (+ undrained), then bearing
    drained (+ undrained) per sub-case, then eccentricity per sub-case; then
    eccentricity_sls and bearing_sls where they apply. Candidates whose dimensions do
    not close get infinite effects. The ground and basis are taken as checked by the
    site reader (``wallrun.rules``); nothing is checked again here.
    """
    return _stability_checks(_Actions(sec, cond, basis))


def _stability_checks(ctx: _Actions) -> list[CheckArray]:
    g, cond, basis = ctx.g, ctx.cond, ctx.basis
    out: list[CheckArray] = []
    fd = cond.foundation
    # overturning, EQU (2.4.7.2)
    e = basis.factors["EQU"]
    a = ctx.set(e)
    M_dst = e.gG_ground * (a.Ma_h + g.Mw + g.MU) + e.gQ * a.Mq_h
    M_stb = e.gG_fav * (g.M_c + g.W_s * g.x_s + a.Pa_v * g.B)
    out.append(CheckArray("overturning", "EQU", "about toe", "kNm/m", CLAUSE["overturning"],
                          M_dst, M_stb))
    h = cond.h
    z_p = cond.z_front - ec7.unplanned_excavation(h)
    if np.ndim(z_p) == 0:
        z_p = float(z_p)
    undrained = fd.undrained_strength_kpa > 0
    for name, fs in _sets(basis):
        a = ctx.set(fs)
        gh, gf = fs.gG_ground, fs.gG_fav
        # sliding (6.5.3), virtual back extended to the key bottom
        S_k = g.S_k * a.Ka
        Hk = g.Hv + g.dk
        H_d = gh * (S_k * g.cb + g.Pw_k) + fs.gQ * a.Ka * g.q * Hk * g.cb
        V_d0 = gf * (g.W_c + g.W_s + S_k * g.sb)
        V_eff = V_d0 - gh * g.U
        delta_d = ec7.base_friction_angle(fd.phi_cv_deg, fs.g_phi, basis.design.base_friction_factor)
        R = ec7.sliding_resistance_drained(V_eff, delta_d, fs.gR_sliding)
        Pp = _passive(g, a, cond, basis, z_p)
        R = R + Pp / fs.gR_passive
        out.append(CheckArray("sliding", name, "drained", "kN/m", CLAUSE["sliding drained"], H_d, R))
        if undrained:
            Vu = gf * (g.W_c + g.W_s + a.Pa_v) - gh * g.U
            Mu = (gf * (g.M_c + g.W_s * g.x_s + a.Pa_v * g.B) - gh * (g.MU + a.Ma_h + g.Mw)
                  - fs.gQ * a.Mq_h)
            eu = eccentricity(Vu, Mu, g.B)
            Ac = np.where(np.isfinite(eu), ec7.compressed_width(g.B, np.where(np.isfinite(eu), eu, 0)), 0.0)
            Ru = ec7.sliding_resistance_undrained(Ac, a.cu_d, V_d0, fs.gR_sliding,
                                                  basis.design.undrained_interface_open)
            out.append(CheckArray("sliding", name, "undrained", "kN/m", CLAUSE["sliding undrained"],
                                  H_d, Ru))
        # bearing (6.5.2, Annex D) and eccentricity (6.5.4)
        # the four sub-cases in one pass (arrays (4, n), the same formulas per row)
        subs = [a.subcase(g, unfav, on) for _, unfav, on in SUBCASES]
        V4 = np.vstack([sb[0] for sb in subs])
        H4 = np.vstack([sb[1] for sb in subs])
        e4 = np.vstack([sb[3] for sb in subs])
        fin = np.isfinite(e4)
        Bp4 = np.where(fin, ec7.effective_width(g.B, np.where(fin, e4, 0)), 0.0)
        qd4 = ec7.bearing_drained(a.c_d, g.q_over, g.g_eff_found, Bp4, a.phi_f, H4, V4)
        Rd4 = qd4 * Bp4 / fs.gR_bearing
        if undrained:
            Ru4 = ec7.bearing_undrained(a.cu_d, g.q_over, H4, Bp4) * Bp4 / fs.gR_bearing
        ae4 = np.abs(e4)
        B3 = g.B / 3.0
        ecc = []
        for k, (label, unfav, on) in enumerate(SUBCASES):
            V = subs[k][0]
            out.append(CheckArray("bearing", name, f"{label}, drained", "kN/m",
                                  CLAUSE["bearing drained"], V, Rd4[k]))
            if undrained:
                out.append(CheckArray("bearing", name, f"{label}, undrained", "kN/m",
                                      CLAUSE["bearing undrained"], V, Ru4[k]))
            ecc.append(CheckArray("eccentricity", name, label, "m", CLAUSE["eccentricity"],
                                  ae4[k], B3))
        out.extend(ecc)
    out.extend(_sls_checks(ctx))
    bad = ctx.bad()
    if bad.any():
        out = [CheckArray(c.check, c.combination, c.case, c.unit, c.clause,
                          np.where(bad, np.inf, c.effect), c.resistance) for c in out]
    return out


def _passive(g: Geometry, a: _SetActions, cond: Conditions, basis: Basis, z_p: float):
    """Passive resistance in front (design-basis 3), kN/m: Rankine Kp from the
    foundation's phi'_d, below the front level lowered by delta_a; ``key``: front face of
    the key below the underside; ``full``: also the front edge of the base."""
    if basis.design.passive == "none":
        return np.zeros(g.n)
    return passive_front(g, float(ec7.kp_rankine(a.phi_f)), basis, z_p)


def passive_front(g: Geometry, Kp, basis: Basis, z_p):
    """Passive thrust in front of the wall for a coefficient Kp (kN/m): below the front
    level z_p (lowered by delta_a), on the front face of the key below the underside
    (``design.passive = "key"``), and also the front edge of the base (``"full"``); the
    foundation's total unit weight (design-basis 3). Zero for ``"none"``."""
    mode = basis.design.passive
    if mode == "none":
        return np.zeros(g.n)
    low, high = passive_face(g, basis)
    P, _ = ec7.passive_force(Kp, g.gf, z_p, low, high)
    return P


def passive_face(g: Geometry, basis: Basis):
    """(z_low, z_high), m: the face that gives passive resistance in front, from the key
    bottom to the underside (``key``) or to the top of the base (``full``)."""
    low = g.z_found - g.dk
    high = g.z_found + (g.t if basis.design.passive == "full" else 0.0)
    return low, high


def _sls_cases(ctx: _Actions):
    """(label, V, e) of the characteristic cases (all factors 1.0, phi'_k, Pq on)."""
    g = ctx.g
    a = ctx.set(SLS)
    out = []
    for label, on in SLS_CASES:
        V, H, M, e, _, _ = a.subcase(g, True, on)
        out.append((label, V, e))
    return out


def _sls_checks(ctx: _Actions) -> list[CheckArray]:
    g, cond, basis = ctx.g, ctx.cond, ctx.basis
    out = []
    cases = ctx.sls_cases() if (basis.design.sls_middle_third or
                                           cond.foundation.allowable_bearing_kpa > 0) else []
    if basis.design.sls_middle_third:
        for label, V, e in cases:
            out.append(CheckArray("eccentricity_sls", "SLS", label, "m", CLAUSE["eccentricity_sls"],
                                  np.abs(e), g.B / 6.0))
    allow = cond.foundation.allowable_bearing_kpa
    if allow > 0:
        for label, V, e in cases:
            out.append(CheckArray("bearing_sls", "SLS", label, "kPa", CLAUSE["bearing_sls"],
                                  _sigma_max(V, e, g.B), np.full(g.n, float(allow))))
    return out


def _sigma_max(V, e, B):
    ok = np.isfinite(e)
    return np.where(ok, ec7.edge_pressure(V, np.where(ok, e, 0.0), B), np.inf)


def edge_pressure_sls(sec: SectionArrays, cond: Conditions, basis: Basis) -> np.ndarray:
    """Maximum characteristic edge pressure, kPa, shape (n,): the larger of the two SLS
    cases (heel load on/off), for the joint pressure ratio (design-basis 1 and 4)."""
    return _edge_pressure(_Actions(sec, cond, basis))


def _edge_pressure(ctx: _Actions) -> np.ndarray:
    B = ctx.g.B
    (_, V1, e1), (_, V2, e2) = ctx.sls_cases()
    return np.maximum(_sigma_max(V1, e1, B), _sigma_max(V2, e2, B))


# --- actions table -----------------------------------------------------------------------------

def action_table(section: Section, cond: Conditions, basis: Basis) -> tuple[ActionRow, ...]:
    """Characteristic actions on one section (phi'_k, factors 1.0) with their points of
    application and moments about the toe edge at the underside (restoring positive),
    for the report. Vertical downward positive, horizontal towards the front positive."""
    g = Geometry(SectionArrays.of([section]), cond)
    a = _SetActions(g, SLS, cond, basis)
    v = lambda x: float(np.asarray(x)[0])
    rows = []

    def row(name, kind, V, Hh, x, z):
        V, Hh, x, z = v(V), v(Hh), v(x), v(z)
        rows.append(ActionRow(name, kind, V, Hh, x, z, V * x - Hh * z))

    zeros = np.zeros(1)
    row("stem self-weight", "permanent", g.W_stem, zeros, g.x_stem, zeros)
    row("base self-weight", "permanent", g.W_base, zeros, g.x_base, zeros)
    if section.key_depth_m > 0:
        row("key self-weight", "permanent", g.W_key, zeros, g.x_key, zeros)
    row("soil over heel", "permanent", g.W_s, zeros, g.x_s, zeros)
    with np.errstate(divide="ignore", invalid="ignore"):
        za = np.where(g.S > 0, g.Sm / np.where(g.S > 0, g.S, 1), 0)
    row(f"active thrust (Ka = {a.Ka:.3f})", "permanent", a.Pa_v, a.Pa_h, g.B, za)
    if v(g.hw) > 0:
        row("water thrust", "permanent", zeros, g.Pw, g.B, g.hw / 3.0)
        row("uplift", "permanent", -g.U, zeros, g.xU, zeros)
    if g.q > 0:
        row("surcharge thrust", "variable", a.Pq_v, a.Pq_h, g.B, g.Hv / 2.0)
        row("surcharge on heel", "variable", g.Q, zeros, g.xQ, zeros)
    return tuple(rows)


# --- the terms of the resistances, for the report -------------------------------------------

@dataclass(frozen=True)
class BearingTerms:
    """The terms of one bearing resistance check (EN 1997-1 6.5.2, Annex D) of n
    candidates, as :func:`stability_checks` evaluates it; numbers are arrays (n,).

    combination, case: those of the check entry (the case ends in ``drained`` or
    ``undrained``). V_kn_m, H_kn_m: design vertical action (net of uplift) and
    horizontal action on the base, kN/m; e_m: eccentricity from the base centreline,
    m (inf where V <= 0); B_eff_m: B' = B - 2|e|, m (D.1); q_kpa: overburden q' at the
    founding level (front soil over the underside), kPa; gamma_kn_m3: the unit weight
    in the N_gamma term (submerged where water stands above the underside), kN/m3;
    phi_d_deg, c_d_kpa, cu_d_kpa: design strength parameters; Nq, Nc, Ngamma: bearing
    factors (D.4; undrained D.3: Nc = pi + 2, Nq and Ngamma NaN); iq, igamma, ic:
    inclination factors (undrained: ic of D.3, iq and igamma NaN); resistance_kpa:
    R/A', kPa; gR: gamma_R;v; R_d_kn_m: R/A' x B' / gamma_R;v, kN/m (the check's
    resistance).
    """

    combination: str
    case: str
    V_kn_m: np.ndarray
    H_kn_m: np.ndarray
    e_m: np.ndarray
    B_eff_m: np.ndarray
    q_kpa: np.ndarray
    gamma_kn_m3: np.ndarray
    phi_d_deg: float
    c_d_kpa: float
    cu_d_kpa: float
    Nq: np.ndarray
    Nc: np.ndarray
    Ngamma: np.ndarray
    iq: np.ndarray
    igamma: np.ndarray
    ic: np.ndarray
    resistance_kpa: np.ndarray
    gR: float
    R_d_kn_m: np.ndarray


def bearing_terms(sec: SectionArrays, cond: Conditions, basis: Basis) -> list[BearingTerms]:
    """The terms of every bearing check of n candidates (each ULS set of the approach x
    the four sub-cases, drained and, where cu > 0, undrained), in the order of
    :func:`stability_checks`, from the same factored actions (design-basis 4; EN 1997-1
    Annex D.3, D.4). For the calculation report: the factors a checker needs to
    follow R_d."""
    ctx = _Actions(sec, cond, basis)
    g, fd = ctx.g, cond.foundation
    undrained = fd.undrained_strength_kpa > 0
    nan = np.full(g.n, np.nan)
    out = []
    for name, fs in _sets(basis):
        a = ctx.set(fs)
        Nq, Nc, Ng = (np.full(g.n, float(x)) for x in ec7.bearing_factors(a.phi_f))
        for label, unfav, on in SUBCASES:
            V, H, _, e, _, _ = a.subcase(g, unfav, on)
            H = np.broadcast_to(H, (g.n,))
            fin = np.isfinite(e)
            Bp = np.where(fin, ec7.effective_width(g.B, np.where(fin, e, 0)), 0.0)
            iq, ig, ic = ec7.inclination_factors_drained(H, V, Bp, a.c_d, a.phi_f, Nc)
            qd = ec7.bearing_drained(a.c_d, g.q_over, g.g_eff_found, Bp, a.phi_f, H, V)
            out.append(BearingTerms(name, f"{label}, drained", V, H, e, Bp, g.q_over,
                                    g.g_eff_found, a.phi_f, a.c_d, a.cu_d, Nq, Nc, Ng,
                                    iq, ig, ic, qd, fs.gR_bearing, qd * Bp / fs.gR_bearing))
            if undrained:
                icu = ec7.inclination_factor_undrained(H, Bp, a.cu_d)
                qu = ec7.bearing_undrained(a.cu_d, g.q_over, H, Bp)
                out.append(BearingTerms(name, f"{label}, undrained", V, H, e, Bp, g.q_over,
                                        g.g_eff_found, a.phi_f, a.c_d, a.cu_d, nan,
                                        np.full(g.n, np.pi + 2.0), nan, nan, nan, icu, qu,
                                        fs.gR_bearing, qu * Bp / fs.gR_bearing))
    return out


@dataclass(frozen=True)
class PassiveTerms:
    """Passive resistance in front of the wall for one ULS factor set (design-basis 3;
    EN 1997-1 9.5.1, 9.3.2.2), n candidates; levels m, forces kN/m, arrays (n,).

    mode: ``[design] passive`` (``key``: the front face of the key below the underside;
    ``full``: down from the top of the base; ``none``: no passive resistance, P = 0).
    phi_d_deg: design friction angle of the foundation; Kp: Rankine coefficient;
    delta_a_m: the unplanned excavation; z_surface_m: the front level lowered by it;
    z_low_m, z_high_m: the face; P_kn_m and z_P_m: the force and the level of its line
    of action; gR: gamma_R;e; R_kn_m: P / gamma_R;e, the part of the sliding
    resistance it gives.
    """

    combination: str
    mode: str
    phi_d_deg: float
    Kp: float
    delta_a_m: np.ndarray
    z_surface_m: np.ndarray
    z_low_m: np.ndarray
    z_high_m: np.ndarray
    P_kn_m: np.ndarray
    z_P_m: np.ndarray
    gR: float
    R_kn_m: np.ndarray


def passive_terms(sec: SectionArrays, cond: Conditions, basis: Basis) -> list[PassiveTerms]:
    """The passive resistance of n candidates for each ULS set of the approach, as the
    drained sliding check of :func:`stability_checks` adds it (P / gamma_R;e)."""
    ctx = _Actions(sec, cond, basis)
    g = ctx.g
    delta_a = np.broadcast_to(ec7.unplanned_excavation(cond.h), (g.n,))
    z_p = np.broadcast_to(cond.z_front - delta_a, (g.n,))
    mode = basis.design.passive
    out = []
    for name, fs in _sets(basis):
        a = ctx.set(fs)
        Kp = float(ec7.kp_rankine(a.phi_f))
        low, high = (np.broadcast_to(z, (g.n,)) for z in passive_face(g, basis))
        if mode == "none":
            P, z_P = np.zeros(g.n), np.full(g.n, np.nan)
        else:
            P, z_P = ec7.passive_force(Kp, g.gf, z_p, low, high)
        out.append(PassiveTerms(name, mode, a.phi_f, Kp, delta_a, z_p, low,
                                high, P, z_P, fs.gR_passive, P / fs.gR_passive))
    return out


# --- member actions (design-basis 5) ----------------------------------------------------------

def _stem_K(cond: Conditions, basis: Basis, fs: FactorSet) -> float:
    """Horizontal earth-pressure coefficient on the stem for a factor set: Rankine
    Ka(phi'_d, beta) cos beta, or Coulomb Ka(phi'_d, delta_d, beta) cos delta_d."""
    bf = cond.backfill
    phi = float(ec7.design_friction_angle(bf.friction_angle_deg, fs.g_phi))
    if basis.design.earth_pressure == "coulomb":
        dd = float(ec7.design_friction_angle(bf.wall_friction_deg, fs.g_phi))
        return float(ec7.ka_coulomb(phi, dd, bf.slope_deg)) * np.cos(np.radians(dd))
    return float(ec7.ka_rankine(phi, bf.slope_deg)) * np.cos(np.radians(bf.slope_deg))


def linear_integral(c0, c1, s0, s1, a, b, p):
    """Integral of sigma = c0 + c1 x over [a, b] within its support [s0, s1]: (force,
    moment about x = p with arm x - p)."""
    lo = np.maximum(a, s0)
    hi = np.maximum(np.minimum(b, s1), lo)
    h2, l2 = hi * hi, lo * lo  # powers as products: numpy's x ** 3 calls pow, 7 x slower
    F = c0 * (hi - lo) + c1 * (h2 - l2) / 2.0
    Mx = c0 * (h2 - l2) / 2.0 + c1 * (h2 * hi - l2 * lo) / 3.0
    return F, Mx - p * F


def contact_pressure(V, e, B):
    """Linear, no-tension contact pressure under the base as sigma = c0 + c1 x on the
    support [s0, s1] (x from the toe edge), kPa; zero where V <= 0."""
    ok = np.isfinite(e) & (V > 0)
    e = np.where(ok, e, 0.0)
    V = np.where(ok, V, 0.0)
    ae = np.abs(e)
    full = ae <= B / 6.0
    c0_f = V / B * (1.0 + 6.0 * e / B)
    c1_f = -12.0 * V * e / (B * B * B)
    # the triangle's length from the edge it bears on: 3 (B/2 - e) towards the toe
    # (e > 0), 3 (B/2 + e) towards the heel, both 3 (B/2 - |e|)
    L = np.maximum(3.0 * (B / 2.0 - ae), 1e-6)
    toe_side = e > 0
    a0, a1 = 2 * V / L, 2 * V / L ** 2
    c0_t = np.where(toe_side, a0, a0 * (1.0 - B / L))
    c1_t = np.where(toe_side, -a1, a1)
    s0 = np.where(full | toe_side, 0.0, B - L)
    s1 = np.where(full | ~toe_side, B, L)
    return np.where(full, c0_f, c0_t), np.where(full, c1_f, c1_t), s0, s1


def _members_for(g: Geometry, a: _SetActions, K_stem: float, unfav: bool, on: bool):
    """(M, V) of stem, heel and toe for one factor set and sub-case (one row of
    :func:`_members_rows`)."""
    stem, (M_heel, V_heel), (M_toe, V_toe) = _members_rows(g, [("", "", a, K_stem, unfav, on)])
    return stem[0], (M_heel[0], V_heel[0]), (M_toe[0], V_toe[0])


def member_actions(sec: SectionArrays, cond: Conditions, basis: Basis) -> list[MemberActions]:
    """ULS actions at the critical sections of stem, heel and toe for every set of the
    approach x the four bearing sub-cases (design-basis 5); the envelope governs."""
    return _member_actions(_Actions(sec, cond, basis))


def _member_actions(ctx: _Actions) -> list[MemberActions]:
    g, cond, basis = ctx.g, ctx.cond, ctx.basis
    rows = []
    for name, fs in _sets(basis):
        a = ctx.set(fs)
        K = _stem_K(cond, basis, fs)
        for label, unfav, on in SUBCASES:
            rows.append((name, label, a, K, unfav, on))
    stem, (M_heel, V_heel), (M_toe, V_toe) = _members_rows(g, rows)
    out = []
    for r, (name, label, *_rest) in enumerate(rows):
        M_stem, V_stem = stem[r]
        out.append(MemberActions("stem", name, label, M_stem, V_stem))
        out.append(MemberActions("heel", name, label, M_heel[r], V_heel[r]))
        out.append(MemberActions("toe", name, label, M_toe[r], V_toe[r]))
    return out


def _members_rows(g: Geometry, rows):
    """ (M, V) of stem, heel and toe for many (set, sub-case) rows at once, on
    arrays (rows, n). Heel about the back face of the stem: down its own weight, the
    soil and heel load beyond it and the vertical thrust components at x = B; up the
    contact pressure and the uplift. Toe about the front face: up the contact pressure
    and uplift, down its own weight (design-basis section 5). rows: (name, label, set actions, K_stem, unfav, heel load on).
    Returns ([(M_stem, V_stem) per row], (M_heel, V_heel), (M_toe, V_toe)), the last
    two of shape (rows, n)."""
    stem = [a.stem_base(g, K) for _, _, a, K, _, _ in rows]
    subs = [a.subcase(g, unfav, on) for _, _, a, _, unfav, on in rows]
    col = lambda vals: np.array(vals, dtype=float)[:, None]  # noqa: E731
    V = np.vstack([sb[0] for sb in subs])
    e = np.vstack([sb[3] for sb in subs])
    gc = col([sb[4] for sb in subs])
    gg = col([sb[5] for sb in subs])
    gQ = col([a.fs.gQ for _, _, a, _, _, _ in rows])
    onf = col([a.fs.gQ if on else 0.0 for _, _, a, _, _, on in rows])
    Pa_v = np.vstack([a.Pa_v for _, _, a, _, _, _ in rows])
    Pq_v = np.vstack([a.Pq_v for _, _, a, _, _, _ in rows])
    heel, toe = base_member_actions(g, V, e, gc, gg, onf, (gg * Pa_v, gQ * Pq_v), gg)
    return stem, heel, toe


def base_member_actions(g: Geometry, V, e, f_concrete, f_soil, f_heel_load, down_at_B, f_uplift):
    """(M, V) of the heel and the toe at their critical sections (design-basis 5), arrays
    (rows, n) for rows of actions. V (kN/m, net of uplift) and e (m) give the linear,
    no-tension contact pressure. Heel, about the back face of the stem x_h: down its
    own weight x f_concrete, the soil beyond x_h x f_soil, the heel load q x
    f_heel_load, and the vertical forces ``down_at_B`` (a tuple of terms, kN/m) at
    x = B; up the contact pressure and the uplift x f_uplift. Toe, about the front face
    of the stem: up the contact pressure and the uplift, down its own weight x
    f_concrete. Factors are arrays (rows, 1) or floats. Returns ((M_heel, V_heel),
    (M_toe, V_toe)), M kNm/m (positive: heel top / toe bottom in tension), V kN/m."""
    c0, c1, s0, s1 = contact_pressure(V, e, g.B)
    B, xh, toe = g.B, g.x_h, g.toe
    # heel, about the back face of the stem x_h
    Lh = B - xh
    down_F = f_concrete * GAMMA_C * g.t * Lh + f_soil * g.W_s_heel + f_heel_load * g.q * Lh
    P_B = down_at_B[0]
    for p in down_at_B:
        down_F = down_F + p
    for p in down_at_B[1:]:
        P_B = P_B + p
    down_M = (f_concrete * GAMMA_C * g.t * Lh ** 2 / 2 + f_soil * g.W_s_heel * (g.x_s_heel - xh)
              + f_heel_load * g.q * Lh ** 2 / 2 + P_B * Lh)
    cF, cM = linear_integral(c0, c1, s0, s1, xh, B, xh)
    cF2, cM2 = linear_integral(c0, c1, s0, s1, 0.0, toe, toe)
    if np.any(g.hw):
        uc1 = f_uplift * GAMMA_W * g.hw / B  # uplift gamma_w hw x / B
        uF, uM = linear_integral(0.0, uc1, 0.0, B, xh, B, xh)
        uF2, uM2 = linear_integral(0.0, uc1, 0.0, B, 0.0, toe, toe)
    else:  # no water under the base: no uplift (the integrals are zero)
        uF = uM = uF2 = uM2 = 0.0
    M_heel = down_M - cM - uM
    V_heel = np.abs(down_F - cF - uF)
    # toe, about the front face of the stem x = toe (arm toe - x)
    wF = f_concrete * GAMMA_C * g.t * toe
    M_toe = -(cM2 + uM2) - wF * toe / 2.0
    V_toe = np.abs(cF2 + uF2 - wF)
    return (M_heel, V_heel), (M_toe, V_toe)


def member_moments_qp(sec: SectionArrays, cond: Conditions, basis: Basis) -> dict[str, np.ndarray]:
    """Quasi-permanent moments (kNm/m) at the critical sections: characteristic
    permanent actions with phi'_k and psi2 times the surcharge (thrust on the stem, Pq
    and heel load), for crack control (EN 1990 6.5.3 Eq. 6.16b; design-basis 5)."""
    return _member_moments_qp(_Actions(sec, cond, basis))


def _member_moments_qp(ctx: _Actions) -> dict[str, np.ndarray]:
    g, cond, basis = ctx.g, ctx.cond, ctx.basis
    psi2 = float(basis.loads.psi2)
    fs = FactorSet("QP", 1.0, 1.0, psi2, 1.0, 1.0, 1.0)
    a = ctx.set(fs)
    K = _stem_K(cond, basis, fs)
    (ms, _), (mh, _), (mt, _) = _members_for(g, a, K, True, True)
    return {"stem": ms, "heel": mh, "toe": mt}


def stem_moment(sec: SectionArrays, cond: Conditions, basis: Basis, y) -> np.ndarray:
    """ULS envelope bending moment in the stem at depth y (m, scalar or (n,)) below
    z_top, kNm/m, tension on the retained face positive (for curtailment)."""
    return _stem_moment(_Actions(sec, cond, basis), y)


def _stem_moment(ctx: _Actions, y) -> np.ndarray:
    g, cond, basis = ctx.g, ctx.cond, ctx.basis
    y = np.asarray(y, dtype=float)
    if y.ndim < 2:  # scalar or (n,); a (k, n) table of depths is taken as it is
        y = np.broadcast_to(y, (g.n,))
    y = np.clip(y, 0.0, g.hc)
    # water on the stem above the section at depth y: level above the section
    hw = np.clip(g.w_stem_rel - (g.H - y), 0.0, y)
    Sm, Sqm, Mw = _stem_moments_per_k(g.gb, y, hw, g.q)
    best = np.full(y.shape, -np.inf)
    for name, fs in _sets(basis):
        K = _stem_K(cond, basis, fs)
        best = np.maximum(best, fs.gG_ground * (K * Sm + Mw) + fs.gQ * K * Sqm)
    return best


# --- one call for the sizing search ------------------------------------------------------

class AllActions:
    """Everything the sizing search needs of n candidates at one (conditions, basis),
    from one shared :class:`_Actions`: ``checks`` (:func:`stability_checks`),
    ``member_actions()`` (:func:`member_actions`), ``qp()`` (:func:`member_moments_qp`),
    ``edge_pressure()`` (:func:`edge_pressure_sls`) and ``stem_moment(y)``
    (:func:`stem_moment`); the same numbers as the separate entry points."""

    def __init__(self, sec: SectionArrays, cond: Conditions, basis: Basis, _checks: bool = True):
        self.ctx = _Actions(sec, cond, basis)
        self.checks = _stability_checks(self.ctx) if _checks else []

    def subset(self, idx) -> "AllActions":
        """The actions of the candidates idx only (their own geometry: the same values
        as the rows idx of this one); no stability checks (they are known already)."""
        cond = self.ctx.cond

        def take(v):
            return np.asarray(v, dtype=float)[idx] if v is not None and np.ndim(v) else v

        sub = replace(cond, z_top=take(cond.z_top), z_front=take(cond.z_front),
                      z_found=take(cond.z_found), water_level_m=take(cond.water_level_m))
        return AllActions(self.ctx.sec.subset(idx), sub, self.ctx.basis, _checks=False)

    def member_actions(self) -> list[MemberActions]:
        return _member_actions(self.ctx)

    def qp(self) -> dict[str, np.ndarray]:
        return _member_moments_qp(self.ctx)

    def edge_pressure(self) -> np.ndarray:
        return _edge_pressure(self.ctx)

    def stem_moment(self, y) -> np.ndarray:
        """:func:`stem_moment` at depths y: scalar, (n,), or a table (k, n) (row j the
        depths of every candidate), kNm/m of the same shape."""
        return _stem_moment(self.ctx, y)

    def stem_inputs(self) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """The inputs of :func:`stem_moment` that differ from one candidate to the next:
        the total height H, the base thickness t and the water on the stem, (n,) each
        (Ka, the unit weight and the surcharge are the ground's). Candidates equal in
        all three have equal stem moments at every depth."""
        g = self.ctx.g
        return g.H, g.t, g.w_stem_rel


def evaluate_all(sec: SectionArrays, cond: Conditions, basis: Basis) -> AllActions:
    """The stability checks of n candidates, with their member actions, quasi-permanent
    moments, SLS edge pressure and stem moment available from the same geometry and
    factored actions (see :class:`AllActions`)."""
    return AllActions(sec, cond, basis)

"""The seismic design situation of a cantilever wall, vectorised over candidates.

Design-basis section 10 (EN 1998-5:2004 7.3.2 and Annex E; the formulas are in
``wallrun.codes.ec8``). For n candidate sections at once (``SectionArrays``, arrays of
shape (n,)) at one ``Conditions`` and ``Basis``, with the ``[seismic]`` settings
(``wallrun.settings.Seismic``), :func:`evaluate_seismic` gives the checks of the
combination ``SEIS`` as ``CheckArray`` (overturning, sliding, bearing, eccentricity)
and the member actions of the stem, heel and toe (``MemberActions``, combination
``SEIS``) for ``structure.design_reinforcement``, with the geometry of
``wallrun.stability.Geometry`` (design-basis 2 and 3). Loops run only over the two
signs of kv and the heel-load sub-cases; units m, kN/m, kNm/m, kPa, degrees; x from
the toe edge, z from the underside of the base.

The model, per sign of kv (``kv up``: the vertical inertia force acts upward, weights
x (1 - kv); ``kv down``: x (1 + kv)):

- kh = ag_g S / r, kv = kv_ratio kh (7.3.2.2); theta = atan(kh / (1 - kv)) above the
  water (E.6), atan(gamma / (gamma - gamma_w) kh / (1 - kv)) below it (E.9).
- Materials phi'_d, c'_d, cu_d with the factors of set ``SEIS`` (``[factors.seismic]``,
  EN 1998-5 3.1(3)); actions and resistances 1.0.
- Earth thrust on the virtual back x = B, height H_v (Mononobe-Okabe, E.2), inclined
  at delta = min(beta, 2/3 phi'_d) to the horizontal; the total force E (E.1) as the
  integral of (1 - kv) K sigma'_v down the back, K of the dry wedge above the water
  and of the impervious one (gamma* = gamma - gamma_w, modified theta, E.8-E.9) below
  it; surcharge psi2 q as a uniform addition to sigma'_v. The static part (the same
  integral with K at theta = 0, kv = 0: Coulomb with delta = beta, which is exactly
  the Rankine thrust of design-basis 3) acts where the static pressure puts it; the
  dynamic increment E - E_static at mid-height of the back (7.3.2.3(4)).
- Water: the hydrostatic thrust and the uplift of design-basis 3 (Ews); no
  hydrodynamic force (impervious backfill: Ewd = 0, E.10).
- Inertia of the wall (stem, base, key) and of the soil over the heel: kh W
  horizontal towards the front at each polygon's centroid, and -+kv W vertical; the
  heel load psi2 q (when > 0) the same, as a mass on the surface.
- Sub-cases per sign of kv: the heel load psi2 q on and off (only where psi2 q > 0);
  the case names the sign of kv first (``"kv up, heel load on, drained"``).

Readings taken where the design basis is silent (also in ``docs/basis-readings.md``):

- One signed kv in both (1 -+ kv) of E.1 and tan theta of E.6 (the wedge's weight and
  its vertical inertia act on the same mass).
- The wall friction on the virtual back is delta = beta (the Rankine obliquity of
  design-basis 3), limited to 2/3 phi'_d (7.3.2.3(6)); on the stem delta = beta
  (``earth_pressure = "rankine"``) or the factored ``wall_friction_deg``
  (``"coulomb"``), limited the same way, horizontal component K cos delta.
- A partly submerged back: the coefficient above the water table is that of the dry
  soil and below it that of the impervious soil; the dry overburden carried below the
  water takes the wet coefficient. Uniformly dry or uniformly submerged, this is E.1.
- Horizontal inertia acts towards the front only (with the active thrust); the
  horizontal forces do not bend the heel or toe (as in design-basis 5).
- Passive resistance in front (drained sliding, where ``design.passive`` allows it):
  the Mononobe-Okabe passive coefficient E.4 (delta = 0, level front, dry theta) x
  (1 - kv), over the faces of design-basis 3.
- Sliding and bearing carry the heel-load sub-cases too (its inertia and weight
  change both H and V); overturning counts every vertical action of the sub-case.
- A candidate whose backfill slope exceeds phi'_d - theta (the dry theta always, the
  impervious one where water stands on the virtual back above the key bottom) has no
  Mononobe-Okabe solution: its effects are infinite; :func:`mononobe_okabe_problem`
  gives the panel's flag.
- The EN 1992-1-1 resistances of the seismic member actions are those of design-basis
  5 (gamma_c = 1.5, gamma_s = 1.15, the recommended values of EN 1998-1 5.2.4(3)).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np

from wallrun import factors
from wallrun.codes import ec7, ec8
from wallrun.conditions import Conditions
from wallrun.factors import FactorSet
from wallrun.members import MemberActions
from wallrun.results import ActionRow, CheckArray
from wallrun.section import Section, SectionArrays, area_centroid_cols, section_problems
from wallrun.settings import Basis, Seismic
from wallrun.stability import (
    GAMMA_C,
    GAMMA_W,
    Geometry,
    base_member_actions,
    eccentricity,
    passive_front,
    stress_integrals,
)

COMBINATION = "SEIS"
NO_SOLUTION = "backfill slope beta > phi'_d - theta: no Mononobe-Okabe solution"
#: The two signs of kv: (label, sign of the signed kv, upward positive).
KV_SIGNS = (("kv up", 1.0), ("kv down", -1.0))

#: The clause every seismic check rests on; each check's own clause follows it.
BASIS = "EN 1998-5 7.3.2, Annex E"
CLAUSE = {
    "overturning": f"{BASIS}; EN 1997-1 2.4.7.2 (factors 1.0)",
    "sliding drained": f"{BASIS}; EN 1997-1 6.5.3 Eq. 6.3a",
    "sliding undrained": f"{BASIS}; EN 1997-1 6.5.3 Eq. 6.4a, 6.5.3(12)",
    "bearing drained": f"{BASIS}; EN 1997-1 6.5.2, Annex D.4",
    "bearing undrained": f"{BASIS}; EN 1997-1 6.5.2, Annex D.3",
    "eccentricity": f"{BASIS}; EN 1997-1 6.5.4",
}


def seismic_factors(basis: Basis) -> FactorSet:
    """The factor set of the seismic situation: ``basis.factors["SEIS"]`` (resolved by
    the site reader with ``[factors.seismic]``), else the recommended
    :data:`wallrun.factors.SEISMIC`."""
    return basis.factors.get(factors.SEISMIC.name, factors.SEISMIC)


# --- the scalars of one sign of kv -----------------------------------------------------------

@dataclass(frozen=True)
class KvCase:
    """The seismic angles and coefficients of one sign of kv at one (conditions, basis,
    seismic) (design-basis 10). Angles in degrees, coefficients dimensionless.

    kv: signed, upward positive; fv = 1 - kv, the factor on weights. theta, theta_w:
    seismic angle of the dry backfill (E.6) and of the impervious backfill below the
    water (E.9). ok, ok_w: the active wedge has a solution (beta <= phi'_d - theta).
    K_back, K_back_w: Mononobe-Okabe K on the virtual back (dry, below water; 0 where no
    solution); K_stem, K_stem_w: on the stem. Kp_front: passive K in front (E.4).
    """

    label: str
    kv: float
    fv: float
    theta: float
    theta_w: float
    ok: bool
    ok_w: bool
    K_back: float
    K_back_w: float
    K_stem: float
    K_stem_w: float
    Kp_front: float


@dataclass(frozen=True)
class SeismicSet:
    """What both signs of kv share: kh, |kv|, the design angles (degrees) phi'_d of the
    backfill and foundation, delta on the virtual back and on the stem, the static
    coefficients K0 (theta = 0) on each, c'_d and cu_d (kPa), the factor set, and the
    two :class:`KvCase`."""

    kh: float
    kv: float
    fs: FactorSet
    phi_b: float
    phi_f: float
    c_d: float
    cu_d: float
    delta_back: float
    delta_stem: float
    K0_back: float
    K0_stem: float
    cases: tuple[KvCase, KvCase]


def _k_or_zero(K) -> float:
    K = float(K)
    return K if math.isfinite(K) else 0.0


def seismic_set(cond: Conditions, basis: Basis, seismic: Seismic) -> SeismicSet:
    """The coefficients of the seismic situation for one (conditions, basis, seismic)
    (design-basis 10; EN 1998-5 7.3.2.2, Annex E)."""
    fs = seismic_factors(basis)
    bf, fd = cond.backfill, cond.foundation
    kh = float(ec8.horizontal_coefficient(seismic.ag_g, seismic.soil_factor, seismic.r))
    kv = float(ec8.vertical_coefficient(kh, seismic.kv_ratio))
    phi_b = float(ec7.design_friction_angle(bf.friction_angle_deg, fs.g_phi))
    phi_f = float(ec7.design_friction_angle(fd.friction_angle_deg, fs.g_phi))
    lim = float(ec8.active_inclination_limit(phi_b))
    beta = float(bf.slope_deg)
    d_back = min(beta, lim)
    if basis.design.earth_pressure == "coulomb":
        d_stem = min(float(ec7.design_friction_angle(bf.wall_friction_deg, fs.g_phi)), lim)
    else:
        d_stem = d_back
    cases = []
    for label, sign in KV_SIGNS:
        kvs = sign * kv
        th = float(ec8.seismic_angle(kh, kvs))
        th_w = float(ec8.seismic_angle_impervious(kh, kvs, bf.unit_weight_kn_m3))
        ok = bool(ec8.active_solution_exists(phi_b, beta, th))
        ok_w = bool(ec8.active_solution_exists(phi_b, beta, th_w))
        K = lambda d, t: _k_or_zero(ec8.mononobe_okabe_active(phi_b, beta, d, t))  # noqa: E731
        cases.append(KvCase(label, kvs, 1.0 - kvs, th, th_w, ok, ok_w,
                            K(d_back, th), K(d_back, th_w), K(d_stem, th), K(d_stem, th_w),
                            float(ec8.mononobe_okabe_passive(phi_f, 0.0, th))))
    return SeismicSet(kh, kv, fs, phi_b, phi_f,
                      float(ec7.design_cohesion(fd.cohesion_kpa, fs.g_c)),
                      float(ec7.design_undrained_strength(fd.undrained_strength_kpa, fs.g_cu)),
                      d_back, d_stem,
                      _k_or_zero(ec8.mononobe_okabe_active(phi_b, beta, d_back, 0.0)),
                      _k_or_zero(ec8.mononobe_okabe_active(phi_b, beta, d_stem, 0.0)),
                      tuple(cases))


def mononobe_okabe_problem(cond: Conditions, basis: Basis, seismic: Seismic) -> str | None:
    """The panel's flag when the backfill slope has no Mononobe-Okabe solution in either
    sign of kv (beta > phi'_d - theta, EN 1998-5 Annex E, E.2), else None: the text
    :data:`NO_SOLUTION` and the figures. The theta of the impervious backfill (E.9)
    counts where the water level stands above the underside of the base."""
    ss = seismic_set(cond, basis, seismic)
    wet = (cond.water_level_m is not None
           and bool(np.any(np.asarray(cond.water_level_m, dtype=float)
                           > np.asarray(cond.z_found, dtype=float))))
    beta = float(cond.backfill.slope_deg)
    for c in ss.cases:
        tests = ((c.ok, c.theta, ""),) + (((c.ok_w, c.theta_w, " below water"),) if wet else ())
        for ok, th, where in tests:
            if not ok:
                return (f"{NO_SOLUTION} (beta {beta:.1f} deg, phi'_d {ss.phi_b:.1f} deg, "
                        f"theta {th:.1f} deg{where}, {c.label})")
    return None


# --- thrusts --------------------------------------------------------------------------------

def _thrust(layers, q, H, hw, K, K_w, K0, fv):
    """Earth force along the thrust's direction on a vertical back of height H with
    water hw, per design-basis 10: total E = (1 - kv) [K (dry soil and surcharge) +
    K_w (below water)], static part E0 with K0, and the moment of E about the bottom
    (the static part at its own centroid, the increment E - E0 at H/2; 7.3.2.3(4)).
    layers: :func:`wallrun.stability.stress_integrals` of the back; q the surcharge
    psi2 q, kPa. Returns (E, M, E0, M0), kN/m and kNm/m."""
    (t1, t2, t3), (m1, m2, m3) = layers
    d1 = H - hw
    Qd, Qw = q * d1, q * hw
    E = fv * (K * (t1 + Qd) + K_w * (t2 + t3 + Qw))
    E0 = K0 * (t1 + t2 + t3 + Qd + Qw)
    M0 = K0 * (m1 + m2 + m3 + Qd * (hw + d1 / 2.0) + Qw * hw / 2.0)
    M = M0 + ec8.dynamic_increment(E, E0) * ec8.dynamic_increment_height(H)
    return E, M, E0, M0


def _stem_polygon_above(g: Geometry, y):
    """Area (m2) and centroid height above the section (m) of the stem above depth y
    below z_top (shoelace over the stem outline of design-basis 2, cut at depth y)."""
    with np.errstate(divide="ignore", invalid="ignore"):
        frac = np.where(g.hc > 0, y / np.where(g.hc > 0, g.hc, 1.0), 0.0)
    ty = g.tst + (g.tsb - g.tst) * frac
    zt = g.t + g.hc
    zy = zt - y
    A, _, zc = area_centroid_cols((g.toe, g.toe + ty, g.toe + g.tst, g.toe), (zy, zy, zt, zt))
    return A, zc - zy


# --- the evaluation ---------------------------------------------------------------------

class SeismicActions:
    """The seismic actions and checks of n candidates at one (conditions, basis,
    seismic) (design-basis 10), built once: ``checks`` (``CheckArray``, combination
    ``SEIS``), :meth:`member_actions`, :meth:`stem_moment`, ``no_solution`` (bool (n,),
    the candidates without a Mononobe-Okabe solution) and the sub-case arrays ``V``,
    ``H``, ``M`` (about the toe edge, restoring positive), ``e`` of shape (rows, n) for
    the rows ``labels``. ``geometry``: a :class:`wallrun.stability.Geometry` of the
    same candidates and conditions to reuse (e.g. from ``stability.evaluate_all``)."""

    def __init__(self, sec: SectionArrays, cond: Conditions, basis: Basis, seismic: Seismic,
                 geometry: Geometry | None = None):
        self.sec, self.cond, self.basis, self.seismic = sec, cond, basis, seismic
        g = self.g = geometry if geometry is not None else Geometry(sec, cond)
        ss = self.ss = seismic_set(cond, basis, seismic)
        self.qs = float(basis.loads.psi2) * g.q  # psi2 q, kPa
        heel = ((", heel load on", 1.0), (", heel load off", 0.0)) if self.qs > 0 else (("", 0.0),)
        rows = [(c, k, suffix, on) for k, c in enumerate(ss.cases) for suffix, on in heel]
        self.rows = rows
        self.labels = [c.label + suffix for c, _, suffix, _ in rows]
        col = lambda vals: np.array(vals, dtype=float)[:, None]  # noqa: E731
        self._fv = col([c.fv for c, *_ in rows])
        self._on = col([on for *_, on in rows])
        self._kidx = [k for _, k, _, _ in rows]
        # per sign of kv, (2, n): thrust on the virtual back and on the key-extended back
        cdb, sdb = math.cos(math.radians(ss.delta_back)), math.sin(math.radians(ss.delta_back))
        self.cos_back, self.sin_back = cdb, sdb
        lay = stress_integrals(g.gb, g.Hv, g.hw)
        Hk = g.Hv + g.dk
        lay_k = stress_integrals(g.gb, Hk, g.hw_k)
        back = [_thrust(lay, self.qs, g.Hv, g.hw, c.K_back, c.K_back_w, ss.K0_back, c.fv)
                for c in ss.cases]
        self.E, self.ME, self.E0, self.M0 = (np.vstack([t[i] for t in back]) for i in range(4))
        self.Ek = np.vstack([_thrust(lay_k, self.qs, Hk, g.hw_k, c.K_back, c.K_back_w,
                                     ss.K0_back, c.fv)[0] for c in ss.cases])
        # candidates without a Mononobe-Okabe solution
        bad = np.zeros(g.n, dtype=bool)
        wet = (g.hw > 0) | (g.hw_k > 0)
        for c in ss.cases:
            bad |= (not c.ok) | (wet & (not c.ok_w))
        self.no_solution = bad
        self._bad = bad | section_problems(sec)  # infinite effects
        # masses moving with the wall: wall and soil over the heel, heel load psi2 q
        self.W = g.W_c + g.W_s
        self.MW_x = g.M_c + g.W_s * g.x_s
        self.MW_z = g.W_stem * g.z_stem + g.W_base * g.z_base + g.W_key * g.z_key + g.W_s * g.z_s
        self.Qs = float(basis.loads.psi2) * g.Q  # psi2 q on the heel's plan width
        self.zQ = g.t + g.hc + (g.xQ - g.toe - g.tst) * np.tan(np.radians(g.beta))
        self._subcases()
        self.checks = self._checks()

    # sub-cases (rows, n)
    def _subcases(self):
        g, kh = self.g, self.ss.kh
        fv, on, k = self._fv, self._on, self._kidx
        E, ME = self.E[k], self.ME[k]
        self.Ev = E * self.sin_back
        Q = on * self.Qs
        self.V = fv * (self.W + Q) + self.Ev - g.U
        self.H = E * self.cos_back + g.Pw + kh * (self.W + Q)
        self.M_dst = ME * self.cos_back + g.Mw + g.MU + kh * (self.MW_z + Q * self.zQ)
        self.M_stb = fv * (self.MW_x + Q * g.xQ) + self.Ev * g.B
        self.M = self.M_stb - self.M_dst
        self.e = eccentricity(self.V, self.M, g.B)

    def _checks(self) -> list[CheckArray]:
        g, ss, cond, basis = self.g, self.ss, self.cond, self.basis
        fs, kh = ss.fs, ss.kh
        fd = cond.foundation
        labels, k = self.labels, self._kidx
        out: list[CheckArray] = []
        for r, lab in enumerate(labels):
            out.append(CheckArray("overturning", COMBINATION, f"{lab}, about toe", "kNm/m",
                                  CLAUSE["overturning"], self.M_dst[r], self.M_stb[r]))
        # sliding, the virtual back extended to the key bottom (design-basis 3)
        Q = self._on * self.Qs
        Ek = self.Ek[k]
        H_d = Ek * self.cos_back + g.Pw_k + kh * (self.W + Q)
        V_d0 = self._fv * (self.W + Q) + Ek * self.sin_back
        delta_d = ec7.base_friction_angle(fd.phi_cv_deg, fs.g_phi, basis.design.base_friction_factor)
        R = ec7.sliding_resistance_drained(V_d0 - g.U, delta_d, fs.gR_sliding)
        z_p = cond.z_front - ec7.unplanned_excavation(cond.h)
        if np.ndim(z_p) == 0:
            z_p = float(z_p)
        Pp = np.vstack([passive_front(g, c.fv * c.Kp_front, basis, z_p) for c in ss.cases])[k]
        R = R + Pp / fs.gR_passive
        undrained = fd.undrained_strength_kpa > 0
        if undrained:
            fin = np.isfinite(self.e)
            Ac = np.where(fin, ec7.compressed_width(g.B, np.where(fin, self.e, 0.0)), 0.0)
            Ru = ec7.sliding_resistance_undrained(Ac, ss.cu_d, V_d0, fs.gR_sliding,
                                                  basis.design.undrained_interface_open)
        for r, lab in enumerate(labels):
            out.append(CheckArray("sliding", COMBINATION, f"{lab}, drained", "kN/m",
                                  CLAUSE["sliding drained"], H_d[r], R[r]))
            if undrained:
                out.append(CheckArray("sliding", COMBINATION, f"{lab}, undrained", "kN/m",
                                      CLAUSE["sliding undrained"], H_d[r], Ru[r]))
        # bearing (Annex D with the seismic H and e) and eccentricity
        fin = np.isfinite(self.e)
        Bp = np.where(fin, ec7.effective_width(g.B, np.where(fin, self.e, 0.0)), 0.0)
        Rd = ec7.bearing_drained(ss.c_d, g.q_over, g.g_eff_found, Bp, ss.phi_f, self.H, self.V) \
            * Bp / fs.gR_bearing
        if undrained:
            Rdu = ec7.bearing_undrained(ss.cu_d, g.q_over, self.H, Bp) * Bp / fs.gR_bearing
        for r, lab in enumerate(labels):
            out.append(CheckArray("bearing", COMBINATION, f"{lab}, drained", "kN/m",
                                  CLAUSE["bearing drained"], self.V[r], Rd[r]))
            if undrained:
                out.append(CheckArray("bearing", COMBINATION, f"{lab}, undrained", "kN/m",
                                      CLAUSE["bearing undrained"], self.V[r], Rdu[r]))
        B3 = g.B / 3.0
        for r, lab in enumerate(labels):
            out.append(CheckArray("eccentricity", COMBINATION, lab, "m", CLAUSE["eccentricity"],
                                  np.abs(self.e[r]), B3))
        bad = self._bad
        if bad.any():
            out = [replace(c, effect=np.where(bad, np.inf, c.effect)) for c in out]
        return out

    # members (design-basis 5 under the seismic actions)
    def _stem_at(self, y, hw):
        """(M, V) at depth y below z_top per sign of kv: earth (Mononobe-Okabe, the
        horizontal component), water and the inertia of the stem above; lists of two."""
        g, ss = self.g, self.ss
        cds = math.cos(math.radians(ss.delta_stem))
        lay = stress_integrals(g.gb, y, hw)
        Pw = 0.5 * GAMMA_W * hw ** 2
        A, zc = _stem_polygon_above(g, y)
        Wst = GAMMA_C * A
        out = []
        for c in ss.cases:
            E, M, _, _ = _thrust(lay, self.qs, y, hw, c.K_stem, c.K_stem_w, ss.K0_stem, c.fv)
            out.append((cds * M + Pw * hw / 3.0 + ss.kh * Wst * zc, cds * E + Pw + ss.kh * Wst))
        return out

    def member_actions(self) -> list[MemberActions]:
        """Seismic actions at the critical sections of the stem, heel and toe per row
        (sign of kv and heel-load sub-case), combination ``SEIS`` (design-basis 5 and
        10): stem by :meth:`stem_moment`'s model at the top of the base; heel and toe by
        :func:`wallrun.stability.base_member_actions` with the weights x (1 - kv), the
        vertical component of the thrust at x = B and the contact pressure of the
        row's V and e."""
        g = self.g
        stem = self._stem_at(g.hc, g.hw_stem)
        on = self._on * self._fv * float(self.basis.loads.psi2)
        (M_heel, V_heel), (M_toe, V_toe) = base_member_actions(
            g, self.V, self.e, self._fv, self._fv, on, (self.Ev,), 1.0)
        bad = self._bad
        inf = lambda a: np.where(bad, np.inf, a)  # noqa: E731
        out = []
        for r, lab in enumerate(self.labels):
            M_s, V_s = stem[self._kidx[r]]
            out.append(MemberActions("stem", COMBINATION, lab, inf(M_s), inf(V_s)))
            out.append(MemberActions("heel", COMBINATION, lab, inf(M_heel[r]), inf(V_heel[r])))
            out.append(MemberActions("toe", COMBINATION, lab, inf(M_toe[r]), inf(V_toe[r])))
        return out

    def stem_moment(self, y) -> np.ndarray:
        """Seismic envelope bending moment in the stem at depth y (m: scalar, (n,) or a
        table (k, n)) below z_top, kNm/m, tension on the retained face positive (for
        curtailment, with the persistent ``stability.stem_moment``)."""
        g = self.g
        y = np.asarray(y, dtype=float)
        if y.ndim < 2:
            y = np.broadcast_to(y, (g.n,))
        y = np.clip(y, 0.0, g.hc)
        hw = np.clip(g.w_stem_rel - (g.H - y), 0.0, y)
        (m1, _), (m2, _) = self._stem_at(y, hw)
        return np.maximum(m1, m2)

    def subset(self, idx) -> SeismicActions:
        """The seismic actions of the candidates idx only (their own geometry)."""
        cond = self.cond

        def take(v):
            return np.asarray(v, dtype=float)[idx] if v is not None and np.ndim(v) else v

        sub = replace(cond, z_top=take(cond.z_top), z_front=take(cond.z_front),
                      z_found=take(cond.z_found), water_level_m=take(cond.water_level_m))
        return SeismicActions(self.sec.subset(idx), sub, self.basis, self.seismic)


def evaluate_seismic(sec: SectionArrays, cond: Conditions, basis: Basis, seismic: Seismic,
                     geometry: Geometry | None = None) -> SeismicActions:
    """The seismic situation of n candidates (see :class:`SeismicActions`)."""
    return SeismicActions(sec, cond, basis, seismic, geometry)


def seismic_checks(sec: SectionArrays, cond: Conditions, basis: Basis, seismic: Seismic) -> list[CheckArray]:
    """The checks of combination ``SEIS`` of n candidates: overturning per row, then
    sliding drained (+ undrained), bearing drained (+ undrained) and eccentricity per
    row; rows: ``kv up`` then ``kv down``, each with the heel load on and off where
    psi2 q > 0. Candidates without a Mononobe-Okabe solution or whose dimensions do not
    close get infinite effects."""
    return SeismicActions(sec, cond, basis, seismic).checks


def seismic_member_actions(sec: SectionArrays, cond: Conditions, basis: Basis,
                           seismic: Seismic) -> list[MemberActions]:
    """The seismic member actions (combination ``SEIS``) of n candidates."""
    return SeismicActions(sec, cond, basis, seismic).member_actions()


def seismic_stem_moment(sec: SectionArrays, cond: Conditions, basis: Basis, seismic: Seismic,
                        y) -> np.ndarray:
    """The seismic envelope stem moment at depth y below z_top, kNm/m."""
    return SeismicActions(sec, cond, basis, seismic).stem_moment(y)


# --- actions table for the report -----------------------------------------------------

def seismic_action_table(section: Section, cond: Conditions, basis: Basis,
                         seismic: Seismic) -> dict[str, tuple[ActionRow, ...]]:
    """The actions of the seismic situation on one section, per sign of kv, with their
    points of application and moments about the toe edge at the underside (restoring
    positive), for the report (vertical downward positive, horizontal towards the front
    positive). Kinds: ``permanent`` (weights, static thrust, water), ``variable`` (the
    heel load psi2 q) and ``seismic`` (inertia and the dynamic increment). The rows of
    a sign sum to the V, H and M of its ``heel load on`` sub-case."""
    a = SeismicActions(SectionArrays.of([section]), cond, basis, seismic)
    g, ss = a.g, a.ss
    v = lambda x: float(np.asarray(x).reshape(-1)[0])  # noqa: E731
    out = {}
    def action(name, kind, V, Hh, x, z):
        V, Hh, x, z = v(V), v(Hh), v(x), v(z)
        return ActionRow(name, kind, V, Hh, x, z, V * x - Hh * z)

    for k, c in enumerate(ss.cases):
        rows = []

        def row(*args, rows=rows):
            rows.append(action(*args))

        parts = [("stem", g.W_stem, g.x_stem, g.z_stem), ("base", g.W_base, g.x_base, g.z_base)]
        if section.key_depth_m > 0:
            parts.append(("key", g.W_key, g.x_key, g.z_key))
        parts.append(("soil over heel", g.W_s, g.x_s, g.z_s))
        for name, W, x, z in parts:
            label = name if name == "soil over heel" else f"{name} self-weight"
            row(label, "permanent", W, 0.0, x, z)
            row(f"{name}: inertia kh W, -kv W", "seismic", -c.kv * W, ss.kh * W, x, z)
        E0, M0, E = a.E0[k], a.M0[k], a.E[k]
        z0 = np.where(E0 > 0, M0 / np.where(E0 > 0, E0, 1.0), 0.0)
        dE = E - E0
        row(f"earth thrust, static part (K0 = {ss.K0_back:.3f}, delta = {ss.delta_back:.1f})",
            "permanent", E0 * a.sin_back, E0 * a.cos_back, g.B, z0)
        row(f"earth thrust, dynamic increment (K = {c.K_back:.3f}, theta = {c.theta:.1f})",
            "seismic", dE * a.sin_back, dE * a.cos_back, g.B, g.Hv / 2.0)
        if v(g.hw) > 0:
            row("water thrust", "permanent", 0.0, g.Pw, g.B, g.hw / 3.0)
            row("uplift", "permanent", -g.U, 0.0, g.xU, 0.0)
        if a.qs > 0:
            row("heel load psi2 q", "variable", a.Qs, 0.0, g.xQ, a.zQ)
            row("heel load: inertia kh Q, -kv Q", "seismic", -c.kv * a.Qs, ss.kh * a.Qs, g.xQ, a.zQ)
        out[c.label] = tuple(rows)
    return out

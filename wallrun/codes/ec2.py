"""EN 1992-1-1:2004 (recommended values), one plain vectorised function per clause.

Units: MPa (N/mm2) for stresses, mm for lengths and bar sizes, mm2 (per metre width
where stated) for areas, kNm/m for moments and kN/m for shears of a 1 m wide strip
(b = 1000 mm). Every function takes numpy arrays or floats and broadcasts.

Choices where the code leaves a value open (all stated again in the docstrings):

- Long-term modular ratio for the quasi-permanent steel stress:
  alpha_e = Es / (Ecm / (1 + phi)) with creep coefficient phi = 2.0 (7.3.4(2) form,
  effective modulus of 7.4.3(5)); Es = 200 GPa (3.2.7(4)); Ecm = 22 (fcm/10)^0.3 GPa
  (Table 3.1).
- Tables 7.2N / 7.3N: linear interpolation in steel stress between the tabulated
  stresses for the given wk; below 160 MPa the 160 MPa value applies; above the last
  filled cell of the column the limit is 0 (route fails; no interpolation towards a
  blank cell).
  wk must be one of 0.2, 0.3, 0.4 mm; other values are interpolated linearly in wk
  between the columns (and clamped to 0.2..0.4).
- Bar diameter route: Table 7.2N modified for bending by Eq. (7.6N)
  phi_s = phi_s* (fct,eff / 2.9) kc hcr / (2 (h - d)) with kc = 0.4 (7.3.2(2), bending
  of a rectangle), hcr = h / 2 (tension depth just before cracking of a rectangle),
  fct,eff = fctm. (Eq. 7.7N is the form for axial tension; it is not used.)
- Anchorage: all alpha factors of Table 8.2 taken as 1.0 (conservative); sigma_sd = fyd
  (the bar at full design stress, conservative).
"""

from __future__ import annotations

import numpy as np

GAMMA_C = 1.5  # 2.4.2.4 Table 2.1N, persistent and transient
GAMMA_S = 1.15  # 2.4.2.4 Table 2.1N
ES_MPA = 200_000.0  # 3.2.7(4)
STEEL_DENSITY = 7850.0  # kg/m3, EN 1991-1-1 Table A.4 / BS 8666 mass basis
LAMBDA = 0.8  # 3.1.7(3) Eq. 3.19, fck <= 50
ETA = 1.0  # 3.1.7(3) Eq. 3.21, fck <= 50
XU_D_MAX = 0.45  # 5.6.3(2), no redistribution, fck <= 50
CREEP_PHI = 2.0  # long-term creep coefficient for the quasi-permanent stress (our choice)
B_STRIP = 1000.0  # mm, 1 m strip

# --- materials -----------------------------------------------------------------------

def fcm(fck):
    """Mean cylinder strength fcm = fck + 8, MPa (Table 3.1)."""
    return np.asarray(fck, dtype=float) + 8.0


def fcd(fck, alpha_cc=0.85, gamma_c=GAMMA_C):
    """Design compressive strength fcd = alpha_cc fck / gamma_c, MPa (3.1.6(1) Eq. 3.15)."""
    return alpha_cc * np.asarray(fck, dtype=float) / gamma_c


def fctm(fck):
    """Mean axial tensile strength fctm = 0.30 fck^(2/3), MPa (Table 3.1, classes <= C50/60)."""
    return 0.30 * np.asarray(fck, dtype=float) ** (2.0 / 3.0)


def fctk_005(fck):
    """5 % fractile tensile strength fctk,0.05 = 0.7 fctm, MPa (Table 3.1)."""
    return 0.7 * fctm(fck)


def fctd(fck, alpha_ct=1.0, gamma_c=GAMMA_C):
    """Design tensile strength fctd = alpha_ct fctk,0.05 / gamma_c, MPa (3.1.6(2) Eq. 3.16)."""
    return alpha_ct * fctk_005(fck) / gamma_c


def ecm(fck):
    """Secant modulus Ecm = 22 (fcm / 10)^0.3 GPa, returned in MPa (Table 3.1)."""
    return 22_000.0 * (fcm(fck) / 10.0) ** 0.3


def fyd(fyk=500.0, gamma_s=GAMMA_S):
    """Design yield strength fyd = fyk / gamma_s, MPa (3.2.7(2), Fig. 3.8)."""
    return np.asarray(fyk, dtype=float) / gamma_s


def alpha_e_long_term(fck, phi_creep=CREEP_PHI):
    """Long-term modular ratio alpha_e = Es / Ec,eff, Ec,eff = Ecm / (1 + phi) (7.4.3(5) Eq. 7.20).

    phi = 2.0 by default (wallrun's choice for a quasi-permanent, long-term stress).
    Dimensionless.
    """
    return ES_MPA / (ecm(fck) / (1.0 + phi_creep))


# --- bars ----------------------------------------------------------------------------

def bar_area(phi):
    """Area of one bar pi/4 phi^2, mm2 (phi in mm)."""
    return np.pi / 4.0 * np.asarray(phi, dtype=float) ** 2


def area_per_m(phi, spacing):
    """Area of bars phi (mm) at spacing (mm), mm2 per metre width."""
    return bar_area(phi) * 1000.0 / np.asarray(spacing, dtype=float)


def mass_per_m(phi):
    """Mass of a bar per metre, kg/m: pi/4 phi^2 x 7850 kg/m3 (BS 8666 Table 1 basis)."""
    return bar_area(phi) * 1e-6 * STEEL_DENSITY


# --- bending (6.1, 3.1.7 rectangular block) -------------------------------------------

def k_factor(M_kNm, d, fck, b=B_STRIP):
    """K = M / (b d^2 fck), dimensionless (M in kNm per strip b, d and b in mm, fck MPa)."""
    return np.asarray(M_kNm, dtype=float) * 1e6 / (b * np.asarray(d, dtype=float) ** 2 * fck)


def k_limit(alpha_cc=0.85, gamma_c=GAMMA_C, xu_d=XU_D_MAX, lam=LAMBDA, eta=ETA):
    """K' = eta (alpha_cc/gamma_c) lambda xu/d (1 - lambda xu/(2 d)), dimensionless.

    Rectangular block of 3.1.7(3) at the neutral-axis limit xu/d <= 0.45 (5.6.3(2)):
    compression eta fcd b lambda x with lever arm d - lambda x / 2. For alpha_cc = 0.85,
    gamma_c = 1.5: K' = 0.5667 x 0.8 x 0.45 x 0.82 = 0.1673.
    """
    a = eta * alpha_cc / gamma_c
    return a * lam * xu_d * (1.0 - lam * xu_d / 2.0)


def lever_arm(K, d, alpha_cc=0.85, gamma_c=GAMMA_C, eta=ETA):
    """z = d (0.5 + sqrt(0.25 - K / (2 eta alpha_cc / gamma_c))) <= 0.95 d, mm (3.1.7, lambda 0.8).

    Exact for lambda = 0.8: with u = z/d = 1 - 0.4 x/d, K = 2 a u (1 - u), a = eta alpha_cc /
    gamma_c. Where the root is imaginary (K > a/2) returns nan.
    """
    K = np.asarray(K, dtype=float)
    a = eta * alpha_cc / gamma_c
    with np.errstate(invalid="ignore"):
        u = 0.5 + np.sqrt(0.25 - K / (2.0 * a))
    return np.minimum(u, 0.95) * np.asarray(d, dtype=float)


def as_required(M_kNm, d, fck, fyk=500.0, alpha_cc=0.85, gamma_c=GAMMA_C, gamma_s=GAMMA_S):
    """Tension steel As,req = M / (fyd z), mm2 per metre (6.1, 3.1.7; singly reinforced).

    Where K > K' (too thin without compression steel) the value returned is the area
    at the K' lever arm, z = d (1 - lambda xu,lim/2) = 0.82 d; it is only indicative,
    the section fails in bending (see :func:`moment_resistance`). M <= 0 gives 0.
    """
    M = np.maximum(np.asarray(M_kNm, dtype=float), 0.0)
    K = k_factor(M, d, fck)
    z = lever_arm(np.minimum(K, k_limit(alpha_cc, gamma_c)), d, alpha_cc, gamma_c)
    return M * 1e6 / (fyd(fyk, gamma_s) * z)


def moment_resistance(As, d, fck, fyk=500.0, alpha_cc=0.85, gamma_c=GAMMA_C,
                      gamma_s=GAMMA_S, b=B_STRIP):
    """M_Rd of a singly reinforced rectangle, kNm per strip b (6.1, 3.1.7(3), 5.6.3).

    x from equilibrium As fyd = eta fcd b lambda x; z = d - lambda x / 2 <= 0.95 d;
    M_Rd = As fyd z. Where x/d > 0.45 (over-reinforced for 5.6.3) M_Rd is capped at
    K' b d^2 fck, the moment at the x/d = 0.45 limit.
    """
    As = np.asarray(As, dtype=float)
    d = np.asarray(d, dtype=float)
    f_yd = fyd(fyk, gamma_s)
    x = As * f_yd / (ETA * fcd(fck, alpha_cc, gamma_c) * b * LAMBDA)
    z = np.minimum(d - LAMBDA * x / 2.0, 0.95 * d)
    m = As * f_yd * z
    m_lim = k_limit(alpha_cc, gamma_c) * b * d ** 2 * fck
    return np.where(x > XU_D_MAX * d, m_lim, np.minimum(m, m_lim)) * 1e-6


# --- minimum and maximum steel (9.2.1.1) ----------------------------------------------

def as_min_beam(d, fck, fyk=500.0, b=B_STRIP):
    """As,min = max(0.26 fctm / fyk b d, 0.0013 b d), mm2 per strip b (9.2.1.1(1) Eq. 9.1N)."""
    d = np.asarray(d, dtype=float)
    return np.maximum(0.26 * fctm(fck) / fyk * b * d, 0.0013 * b * d)


def as_max(h, b=B_STRIP):
    """As,max = 0.04 Ac, mm2 per strip b (9.2.1.1(3)); h in mm."""
    return 0.04 * b * np.asarray(h, dtype=float)


# --- shear without shear reinforcement (6.2.2) ----------------------------------------

def k_size(d):
    """k = 1 + sqrt(200/d) <= 2.0, d in mm (6.2.2(1))."""
    return np.minimum(1.0 + np.sqrt(200.0 / np.asarray(d, dtype=float)), 2.0)


def v_min(d, fck):
    """v_min = 0.035 k^1.5 fck^0.5, MPa (6.2.2(1) Eq. 6.3N)."""
    k = k_size(d)
    return 0.035 * (k * np.sqrt(k)) * np.sqrt(fck)  # k^1.5 as k sqrt(k)


def shear_resistance(As, d, fck, gamma_c=GAMMA_C, b=B_STRIP):
    """VRd,c = max(CRd,c k (100 rho_l fck)^(1/3), v_min) b d, kN per strip b (6.2.2(1) Eq. 6.2a/b).

    CRd,c = 0.18 / gamma_c; rho_l = As / (b d) <= 0.02; no axial force (sigma_cp = 0).
    As mm2 per strip b, d mm.
    """
    d = np.asarray(d, dtype=float)
    rho = np.minimum(np.asarray(As, dtype=float) / (b * d), 0.02)
    v = np.maximum(0.18 / gamma_c * k_size(d) * np.cbrt(100.0 * rho * fck), v_min(d, fck))
    return v * b * d * 1e-3


def as_for_shear(V, d, fck, gamma_c=GAMMA_C, b=B_STRIP):
    """Least tension steel As (mm2 per strip b) with VRd,c >= V (V kN per strip b, d mm):
    Eq. 6.2a of 6.2.2(1) solved for rho_l, rho_l = (v / (CRd,c k))^3 / (100 fck) with
    v = V / (b d); 0 where v_min b d (Eq. 6.3N) carries V; inf where rho_l would exceed
    0.02 (the most 6.2.2(1) counts: no tension steel carries V without shear links)."""
    d = np.asarray(d, dtype=float)
    V = np.asarray(V, dtype=float)
    v = V * 1e3 / (b * d)
    r = v / (0.18 / gamma_c * k_size(d))
    rho = r * r * r / (100.0 * fck)
    As = np.where(rho <= 0.02, rho * b * d, np.inf)
    return np.where(v <= v_min(d, fck), 0.0, As)


# --- crack control (7.3.3, 7.3.4) -----------------------------------------------------

def steel_stress_cracked(M_kNm, As, d, alpha_e, b=B_STRIP):
    """Steel stress sigma_s under M for a cracked elastic rectangle, MPa (7.3.4(2) basis).

    Neutral axis x/d = -alpha_e rho + sqrt((alpha_e rho)^2 + 2 alpha_e rho), rho = As/(b d);
    lever arm z = d - x/3; sigma_s = M / (As z). Concrete in tension ignored. M <= 0
    gives 0 (this face not in tension).
    """
    As = np.asarray(As, dtype=float)
    d = np.asarray(d, dtype=float)
    ar = alpha_e * As / (b * d)
    xi = -ar + np.sqrt(ar * ar + 2.0 * ar)
    z = d * (1.0 - xi / 3.0)
    M = np.maximum(np.asarray(M_kNm, dtype=float), 0.0)
    return M * 1e6 / (As * z)


_T_STRESS_SPACING = np.array([160.0, 200.0, 240.0, 280.0, 320.0, 360.0])
# Table 7.3N maximum bar spacing, mm, columns wk = 0.4, 0.3, 0.2 (0 where the table has no entry)
_T_SPACING = {0.4: np.array([300.0, 300.0, 250.0, 200.0, 150.0, 100.0]),
              0.3: np.array([300.0, 250.0, 200.0, 150.0, 100.0, 50.0]),
              0.2: np.array([200.0, 150.0, 100.0, 50.0, 0.0, 0.0])}
_T_STRESS_DIAMETER = np.array([160.0, 200.0, 240.0, 280.0, 320.0, 360.0, 400.0, 450.0])
# Table 7.2N maximum bar diameter phi_s*, mm (0 where the table has no entry)
_T_DIAMETER = {0.4: np.array([40.0, 32.0, 20.0, 16.0, 12.0, 10.0, 8.0, 6.0]),
               0.3: np.array([32.0, 25.0, 16.0, 12.0, 10.0, 8.0, 6.0, 5.0]),
               0.2: np.array([25.0, 16.0, 12.0, 8.0, 6.0, 5.0, 4.0, 0.0])}


def _column_lookup(s, xs, col):
    """Linear in stress along one column; below the first stress the first value; above
    the last non-blank entry 0 (a blank cell means no bar passes, so no interpolation
    towards it)."""
    last = int(np.flatnonzero(col > 0)[-1])
    xs_c, col_c = xs[:last + 1], col[:last + 1]
    return np.where(s > xs_c[-1] + 1e-9, 0.0, np.interp(s, xs_c, col_c))


def _table_lookup(stress, wk, xs, table):
    wk = float(np.clip(wk, 0.2, 0.4))
    cols = sorted(table)
    lo = max(c for c in cols if c <= wk + 1e-12)
    hi = min(c for c in cols if c >= wk - 1e-12)
    s = np.asarray(stress, dtype=float)
    v_lo = _column_lookup(s, xs, table[lo])
    if hi == lo:
        return v_lo
    return v_lo + (_column_lookup(s, xs, table[hi]) - v_lo) * (wk - lo) / (hi - lo)


def max_bar_spacing(sigma_s, wk=0.3):
    """Maximum bar spacing for crack control, mm (7.3.3(2) Table 7.3N).

    Linear interpolation in steel stress sigma_s (MPa) between the tabulated stresses;
    below 160 MPa the 160 MPa value; above the last filled cell of the wk column (360 MPa
    for wk 0.3/0.4, 280 MPa for 0.2) 0: no spacing passes, no interpolation towards a
    blank cell.
    """
    return _table_lookup(sigma_s, wk, _T_STRESS_SPACING, _T_SPACING)


def max_bar_diameter_table(sigma_s, wk=0.3):
    """Tabulated maximum bar diameter phi_s*, mm (7.3.3(2) Table 7.2N), same interpolation rule."""
    return _table_lookup(sigma_s, wk, _T_STRESS_DIAMETER, _T_DIAMETER)


def max_bar_diameter(sigma_s, h, d, fck, wk=0.3, kc=0.4):
    """Maximum bar diameter for crack control in bending, mm (7.3.3(2) Table 7.2N, Eq. 7.6N).

    phi_s = phi_s* (fct,eff / 2.9) kc hcr / (2 (h - d)) with fct,eff = fctm, kc = 0.4
    (bending, 7.3.2(2)) and hcr = h / 2. h, d in mm.
    """
    h = np.asarray(h, dtype=float)
    d = np.asarray(d, dtype=float)
    return max_bar_diameter_table(sigma_s, wk) * (fctm(fck) / 2.9) * kc * (h / 2.0) / (2.0 * (h - d))


def crack_control_ok(sigma_s, spacing, phi, h, d, fck, wk=0.3):
    """True where the bars pass 7.3.3(2): spacing within Table 7.3N OR diameter within
    Table 7.2N modified by Eq. 7.6N. sigma_s <= 0 (face not in tension) passes."""
    sig = np.asarray(sigma_s, dtype=float)
    return ((sig <= 0.0) | (np.asarray(spacing) <= max_bar_spacing(sig, wk))
            | (np.asarray(phi) <= max_bar_diameter(sig, h, d, fck, wk)))


# --- detailing (9.3.1.1(3)) -----------------------------------------------------------

def max_spacing_main(h):
    """Maximum spacing of principal bars in slabs min(3h, 400), mm (9.3.1.1(3)); h in mm."""
    return np.minimum(3.0 * np.asarray(h, dtype=float), 400.0)


def max_spacing_secondary(h):
    """Maximum spacing of secondary bars in slabs min(3.5h, 450), mm (9.3.1.1(3)); h in mm."""
    return np.minimum(3.5 * np.asarray(h, dtype=float), 450.0)


# --- anchorage and laps (8.4, 8.7) ----------------------------------------------------

def eta2(phi):
    """eta2 = 1.0 for phi <= 32, (132 - phi)/100 above, dimensionless (8.4.2(2))."""
    phi = np.asarray(phi, dtype=float)
    return np.where(phi <= 32.0, 1.0, (132.0 - phi) / 100.0)


def bond_strength(fck, phi, good_bond=True, gamma_c=GAMMA_C):
    """Ultimate bond stress fbd = 2.25 eta1 eta2 fctd, MPa (8.4.2(2) Eq. 8.2).

    eta1 = 1.0 for good bond conditions, 0.7 otherwise (Fig. 8.2); fctd with alpha_ct = 1.
    """
    eta1 = np.where(good_bond, 1.0, 0.7)
    return 2.25 * eta1 * eta2(phi) * fctd(fck, 1.0, gamma_c)


def lb_rqd(phi, sigma_sd, fbd):
    """Basic required anchorage length lb,rqd = (phi / 4) sigma_sd / fbd, mm (8.4.3(2) Eq. 8.3)."""
    return np.asarray(phi, dtype=float) / 4.0 * sigma_sd / fbd


def anchorage_length(phi, fck, fyk=500.0, good_bond=True):
    """Design anchorage length lbd, mm (8.4.4(1) Eq. 8.4), bar in tension at sigma_sd = fyd.

    alpha1..alpha5 = 1.0 (conservative: no credit for bends, cover or confinement);
    lbd >= lb,min = max(0.3 lb,rqd, 10 phi, 100 mm) (Eq. 8.6).
    """
    phi = np.asarray(phi, dtype=float)
    lb = lb_rqd(phi, fyd(fyk), bond_strength(fck, phi, good_bond))
    return np.maximum(lb, np.maximum(np.maximum(0.3 * lb, 10.0 * phi), 100.0))


def lap_length(phi, fck, fyk=500.0, good_bond=True, alpha6=1.5):
    """Design lap length l0 = alpha6 lbd, mm (8.7.3(1) Eq. 8.10), alpha1..5 = 1.0.

    alpha6 = 1.5 (more than 50 % of the bars lapped at one section, Table 8.3);
    l0 >= l0,min = max(0.3 alpha6 lb,rqd, 15 phi, 200 mm) (Eq. 8.11).
    """
    phi = np.asarray(phi, dtype=float)
    lb = lb_rqd(phi, fyd(fyk), bond_strength(fck, phi, good_bond))
    lbd = np.maximum(lb, np.maximum(np.maximum(0.3 * lb, 10.0 * phi), 100.0))
    return np.maximum(alpha6 * lbd, np.maximum(np.maximum(0.3 * alpha6 * lb, 15.0 * phi), 200.0))


# --- minimum steel for restraint cracking (7.3.2) ----------------------------------------

def k_restraint(h):
    """Coefficient k of Eq. (7.1) for non-uniform self-equilibrating stresses,
    dimensionless (7.3.2(2)): 1.0 for h <= 300 mm, 0.65 for h >= 800 mm, linear between;
    h the thickness of the web or flange, mm."""
    h = np.asarray(h, dtype=float)
    return np.interp(h, [300.0, 800.0], [1.0, 0.65])


def as_min_crack(A_ct, sigma_s, fct_eff, k, kc=1.0):
    """Minimum steel within the tensile zone As,min = kc k fct,eff Act / sigma_s, mm2
    (7.3.2(2) Eq. 7.1).

    A_ct: concrete area in tension just before cracking, mm2; sigma_s: the steel stress
    allowed just after cracking, MPa (fyk, or the lower stress of Table 7.2N for the bar
    size, :func:`steel_stress_for_bar`); fct_eff: tensile strength when the cracks form,
    MPa; k (:func:`k_restraint`) and kc (1.0 for pure tension, 7.3.2(2)) dimensionless.
    sigma_s <= 0 (the bar is not allowed at any stress) gives inf.
    """
    s = np.asarray(sigma_s, dtype=float)
    with np.errstate(divide="ignore"):
        return np.where(s > 0, kc * np.asarray(k, dtype=float) * fct_eff
                        * np.asarray(A_ct, dtype=float) / np.where(s > 0, s, 1.0), np.inf)


def _stress_for_bar_column(phi, col):
    """Inverse of one wk column of Table 7.2N: the steel stress at which the tabulated
    maximum bar diameter equals phi, MPa (linear between the tabulated points)."""
    last = int(np.flatnonzero(col > 0)[-1])
    ds, ss = col[:last + 1][::-1], _T_STRESS_DIAMETER[:last + 1][::-1]  # diameters ascending
    phi = np.asarray(phi, dtype=float)
    s = np.interp(phi, ds, ss)  # below the smallest tabulated bar: its (highest) stress
    return np.where(phi > ds[-1] + 1e-9, 0.0, s)  # a bar above the 160 MPa entry: none


def steel_stress_for_bar(phi, wk=0.3):
    """Steel stress allowed just after cracking for bars of diameter phi (mm) so that the
    crack width stays within wk (mm), MPa: Table 7.2N read backwards (7.3.3(2), Note for
    cracking caused mainly by restraint; the table taken as printed, without the
    modification of Eq. 7.7N, as design-basis section 5 reads it).

    Linear between the tabulated points; a bar larger than the 160 MPa entry of the
    column is not allowed at any stress (0 returned, no extrapolation); a bar smaller
    than the last entry gets the last entry's stress. wk between the columns 0.2, 0.3,
    0.4: the stresses of the two neighbouring columns interpolated linearly in wk
    (clamped to 0.2..0.4).
    """
    wk = float(np.clip(wk, 0.2, 0.4))
    cols = sorted(_T_DIAMETER)
    lo = max(c for c in cols if c <= wk + 1e-12)
    hi = min(c for c in cols if c >= wk - 1e-12)
    s_lo = _stress_for_bar_column(phi, _T_DIAMETER[lo])
    if hi == lo:
        return s_lo
    s_hi = _stress_for_bar_column(phi, _T_DIAMETER[hi])
    return s_lo + (s_hi - s_lo) * (wk - lo) / (hi - lo)


def restraint_stress(phi, fyk=500.0, wk=0.3):
    """sigma_s of Eq. (7.1) for bars phi (mm): fyk, or the lower stress Table 7.2N allows
    for the bar size and wk (:func:`steel_stress_for_bar`), MPa (7.3.2(2))."""
    return np.minimum(np.asarray(fyk, dtype=float), steel_stress_for_bar(phi, wk))


# --- bends (8.3) ---------------------------------------------------------------------------

def mandrel_min_table(phi):
    """Minimum mandrel diameter phi_m,min of bars to avoid damage to the bar, mm
    (8.3(2) Table 8.1N, bends and hooks): 4 phi for phi <= 16 mm, 7 phi above."""
    phi = np.asarray(phi, dtype=float)
    return np.where(phi <= 16.0, 4.0, 7.0) * phi


def fcd_bend(fck, alpha_cc=0.85, gamma_c=GAMMA_C):
    """fcd of Eq. (8.1), MPa: alpha_cc fck / gamma_c with fck not above 55 MPa (8.3(3):
    fcd not taken greater than that of class C55/67)."""
    return fcd(np.minimum(np.asarray(fck, dtype=float), 55.0), alpha_cc, gamma_c)


def mandrel_min_bearing(F_bt, a_b, phi, fcd_b):
    """Mandrel diameter that keeps the bearing stress inside a bend within fcd, mm
    (8.3(3) Eq. 8.1): phi_m,min = F_bt (1/a_b + 1/(2 phi)) / fcd.

    F_bt: tensile force from ultimate loads in the bar at the start of the bend, N;
    a_b: half the centre-to-centre distance between the bars perpendicular to the plane
    of the bend, or the cover plus phi/2 for a bar next to a face, mm; phi mm; fcd_b MPa
    (:func:`fcd_bend`). F_bt <= 0 needs no mandrel (0 returned).
    """
    F = np.maximum(np.asarray(F_bt, dtype=float), 0.0)
    return F * (1.0 / np.asarray(a_b, dtype=float) + 1.0 / (2.0 * np.asarray(phi, dtype=float))) / fcd_b

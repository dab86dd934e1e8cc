"""EN 1997-1:2004 (Eurocode 7) formulas used by the stability checks.

One function per clause or equation; every function takes and returns numpy arrays
(or floats) and broadcasts. Angles in degrees, lengths m, forces kN/m (per metre run),
pressures kPa, unit weights kN/m3.
"""

from __future__ import annotations

import numpy as np

GAMMA_W = 9.81  # unit weight of water, kN/m3


def _r(deg):
    return np.radians(np.asarray(deg, dtype=float))


# --- design values of ground parameters (2.4.6.2, Eq. 2.2) ------------------------------

def design_friction_angle(phi_k_deg, g_phi):
    """phi'_d = atan(tan phi'_k / gamma_phi'), degrees (EN 1997-1 2.4.6.2(1), Eq. 2.2;
    Table A.4). Also used for the wall friction delta_d."""
    return np.degrees(np.arctan(np.tan(_r(phi_k_deg)) / g_phi))


def design_cohesion(c_k, g_c):
    """c'_d = c'_k / gamma_c', kPa (EN 1997-1 2.4.6.2(1), Table A.4)."""
    return np.asarray(c_k, dtype=float) / g_c


def design_undrained_strength(cu_k, g_cu):
    """cu_d = cu_k / gamma_cu, kPa (EN 1997-1 2.4.6.2(1), Table A.4)."""
    return np.asarray(cu_k, dtype=float) / g_cu


# --- earth pressure coefficients (9.5.1; Annex C gives the charts) ----------------------

def ka_rankine(phi_deg, beta_deg=0.0):
    """Rankine active coefficient for a vertical plane under a surface sloping at beta,
    dimensionless; the thrust is parallel to the surface (EN 1997-1 9.5.1, Annex C;
    classical Rankine solution):
    Ka = cos b (cos b - sqrt(cos^2 b - cos^2 phi)) / (cos b + sqrt(cos^2 b - cos^2 phi)).
    beta = 0 gives (1 - sin phi) / (1 + sin phi). Requires beta < phi."""
    phi, b = _r(phi_deg), _r(beta_deg)
    cb = np.cos(b)
    root = np.sqrt(np.maximum(cb ** 2 - np.cos(phi) ** 2, 0.0))
    return cb * (cb - root) / (cb + root)


def kp_rankine(phi_deg):
    """Rankine passive coefficient for a level surface and smooth vertical face,
    Kp = (1 + sin phi) / (1 - sin phi), dimensionless (EN 1997-1 9.5.1, Annex C)."""
    s = np.sin(_r(phi_deg))
    return (1.0 + s) / (1.0 - s)


def ka_coulomb(phi_deg, delta_deg, beta_deg=0.0):
    """Coulomb active coefficient for a vertical back with wall friction delta and a
    surface sloping at beta, dimensionless; the thrust is inclined at delta to the
    normal of the back (EN 1997-1 9.5.1, Annex C; classical Coulomb wedge):
    Ka = cos^2 phi / (cos delta (1 + sqrt(sin(phi + delta) sin(phi - beta) /
    (cos delta cos beta)))^2). Requires beta < phi."""
    phi, d, b = _r(phi_deg), _r(delta_deg), _r(beta_deg)
    root = np.sqrt(np.maximum(np.sin(phi + d) * np.sin(phi - b), 0.0) / (np.cos(d) * np.cos(b)))
    return np.cos(phi) ** 2 / (np.cos(d) * (1.0 + root) ** 2)


def unplanned_excavation(h):
    """delta_a = min(0.1 h, 0.5), m: lowering of the front level for passive resistance,
    h the retained height, m (EN 1997-1 9.3.2.2(2))."""
    return np.minimum(0.1 * np.asarray(h, dtype=float), 0.5)


def passive_force(kp, gamma, z_surface, z_low, z_high):
    """Passive thrust on a vertical face between levels z_low < z_high (m), under a
    level surface at z_surface (m), no cohesion term: integral of Kp gamma (z_surface -
    z) over the part of the face below the surface, kN/m (EN 1997-1 9.5.1, Rankine).
    Returns (P, z_P): force kN/m and level of its line of action, m."""
    zs = np.asarray(z_surface, dtype=float)
    a = np.maximum(zs - np.asarray(z_low, dtype=float), 0.0)  # depth of the bottom
    b = np.maximum(zs - np.asarray(z_high, dtype=float), 0.0)  # depth of the top
    a2, b2 = a * a, b * b
    P = 0.5 * kp * gamma * (a2 - b2)
    m = kp * gamma * (a2 * a - b2 * b) / 3.0  # first moment of depth
    with np.errstate(divide="ignore", invalid="ignore"):
        depth = np.where(P > 0, m / np.where(P > 0, P, 1.0), a)
    return P, zs - depth


# --- bearing resistance, Annex D -------------------------------------------------------

def bearing_factors(phi_deg):
    """Drained bearing factors of EN 1997-1 D.4, dimensionless:
    Nq = e^(pi tan phi) tan^2(45 + phi/2), Nc = (Nq - 1) cot phi,
    Ngamma = 2 (Nq - 1) tan phi (rough base). Returns (Nq, Nc, Ngamma); phi = 0 gives
    (1, pi + 2, 0)."""
    phi = _r(phi_deg)
    t = np.tan(phi)
    Nq = np.exp(np.pi * t) * np.tan(np.pi / 4 + phi / 2) ** 2
    with np.errstate(divide="ignore", invalid="ignore"):
        Nc = np.where(t > 1e-12, (Nq - 1.0) / np.where(t > 1e-12, t, 1.0), np.pi + 2.0)
    Ng = 2.0 * (Nq - 1.0) * t
    return Nq, Nc, Ng


def inclination_factors_drained(H, V, A_eff, c, phi_deg, Nc, m=2.0):
    """Load-inclination factors of EN 1997-1 D.4 for a strip (m = mB = 2 with H along B'):
    iq = (1 - H/(V + A' c' cot phi'))^m, igamma = (1 - H/(V + A' c' cot phi'))^(m+1),
    ic = iq - (1 - iq)/(Nc tan phi'). H, V kN/m, A' m2/m, c' kPa. Where H exceeds
    V + A'c'cot phi' the factors are 0 (no resistance). Returns (iq, igamma, ic)."""
    t = np.tan(_r(phi_deg))
    with np.errstate(divide="ignore", invalid="ignore"):
        denom = np.asarray(V, dtype=float) + A_eff * c / t
        ratio = np.where(denom > 0, 1.0 - H / np.where(denom > 0, denom, 1.0), 0.0)
    base = np.clip(ratio, 0.0, 1.0)
    iq = base ** m
    ig = iq * base  # base^(m+1) as a product: numpy's power of a float exponent is slow
    ic = np.maximum(iq - (1.0 - iq) / (Nc * t), 0.0)
    return iq, ig, ic


def bearing_drained(c, q, gamma, B_eff, phi_deg, H, V):
    """Drained bearing resistance per effective area, R/A' in kPa (EN 1997-1 D.4), strip,
    horizontal base, shape and base-inclination factors 1:
    R/A' = c' Nc ic + q' Nq iq + 0.5 gamma' B' Ngamma igamma.
    c' kPa, q' overburden at the founding level kPa, gamma' kN/m3, B' m, H and V kN/m."""
    Nq, Nc, Ng = bearing_factors(phi_deg)
    iq, ig, ic = inclination_factors_drained(H, V, B_eff, c, phi_deg, Nc)
    return c * Nc * ic + q * Nq * iq + 0.5 * gamma * B_eff * Ng * ig


def inclination_factor_undrained(H, A_eff, cu):
    """Load-inclination factor of EN 1997-1 D.3, dimensionless:
    ic = 0.5 (1 + sqrt(1 - H/(A' cu))), H kN/m, A' m2/m, cu kPa. D.3 requires
    H <= A' cu: beyond it (or with A' cu <= 0) the factor is NaN (no resistance)."""
    cu = np.asarray(cu, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        cap = A_eff * cu
        r = np.where(cap > 0, np.asarray(H, dtype=float) / np.where(cap > 0, cap, 1.0), np.inf)
    ic = 0.5 * (1.0 + np.sqrt(np.clip(1.0 - r, 0.0, 1.0)))
    return np.where(r <= 1.0, ic, np.nan)


def bearing_undrained(cu, q, H, A_eff):
    """Undrained bearing resistance per effective area, R/A' in kPa (EN 1997-1 D.3),
    strip, horizontal base: R/A' = (pi + 2) cu ic + q, ic by
    :func:`inclination_factor_undrained`. cu kPa, q total overburden kPa, H kN/m, A' m2/m.
    Where H > A' cu (D.3 requires H <= A' cu) the base cannot carry the load: the
    resistance is 0."""
    cu = np.asarray(cu, dtype=float)
    ic = inclination_factor_undrained(H, A_eff, cu)
    ok = np.isfinite(ic)
    return np.where(ok, (np.pi + 2.0) * cu * np.where(ok, ic, 0.0) + q, 0.0)


def effective_width(B, e):
    """B' = B - 2|e|, m (EN 1997-1 6.5.2.2, Annex D.1), not below 0."""
    return np.maximum(np.asarray(B, dtype=float) - 2.0 * np.abs(e), 0.0)


def compressed_width(B, e):
    """Width of base in compression under a linear, no-tension contact pressure, m:
    B for |e| <= B/6, else 3 (B/2 - |e|) (EN 1997-1 6.5.3(8), A_c for undrained sliding)."""
    B = np.asarray(B, dtype=float)
    ae = np.abs(e)
    return np.where(ae <= B / 6.0, B, np.maximum(3.0 * (B / 2.0 - ae), 0.0))


# --- sliding, 6.5.3 ------------------------------------------------------------------------

def base_friction_angle(phi_cv_k_deg, g_phi, k=1.0):
    """delta_d = k phi'_cv,d, degrees, phi'_cv,d = atan(tan phi'_cv,k / gamma_phi')
    (EN 1997-1 6.5.3(10); k = 1 for concrete cast in situ, 2/3 for smooth precast)."""
    return k * design_friction_angle(phi_cv_k_deg, g_phi)


def sliding_resistance_drained(V_eff, delta_d_deg, gR=1.0):
    """R_d = V'_d tan delta_d / gamma_R;h, kN/m (EN 1997-1 6.5.3(8), Eq. 6.3a); a
    negative V'_d gives 0. V'_d kN/m."""
    return np.maximum(np.asarray(V_eff, dtype=float), 0.0) * np.tan(_r(delta_d_deg)) / gR


def sliding_resistance_undrained(A_c, cu_d, V_d, gR=1.0, interface_open=True):
    """R_d = A_c cu_d / gamma_R;h, kN/m (EN 1997-1 6.5.3(11), Eq. 6.4a), limited to
    0.4 V_d where water or air can reach the interface (6.5.3(12)). A_c m2/m, cu_d kPa,
    V_d kN/m."""
    R = np.asarray(A_c, dtype=float) * cu_d / gR
    if interface_open:
        R = np.minimum(R, 0.4 * np.maximum(np.asarray(V_d, dtype=float), 0.0))
    return R


# --- contact pressure -----------------------------------------------------------------------

def edge_pressure(V, e, B):
    """Maximum edge pressure of a linear, no-tension contact pressure, kPa:
    sigma_max = V/B (1 + 6|e|/B) for |e| <= B/6, else 2V / (3 (B/2 - |e|)); inf once
    |e| >= B/2 (common practice; used for the SLS pressure against an allowable value,
    EN 1997-1 2.4.8(4)). V kN/m, e m, B m."""
    V = np.asarray(V, dtype=float)
    B = np.asarray(B, dtype=float)
    ae = np.abs(e)
    with np.errstate(divide="ignore", invalid="ignore"):
        tri = np.where(ae < B / 2, 2.0 * V / (3.0 * np.maximum(B / 2 - ae, 1e-300)), np.inf)
        return np.where(ae <= B / 6, V / B * (1.0 + 6.0 * ae / B), tri)

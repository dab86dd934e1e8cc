"""EN 1998-5:2004 (Eurocode 8 Part 5) formulas of the seismic design situation of a
retaining wall, one plain vectorised function per equation.

Design-basis section 10. Angles in degrees, lengths m, forces kN/m (per metre run),
unit weights kN/m3; the seismic coefficients kh, kv are dimensionless (fractions of g).
Every function takes numpy arrays or floats and broadcasts.

Sign of kv: ``kv`` here is signed, positive when the vertical inertia force acts
upward (the weights are reduced: factor 1 - kv), negative when it acts downward
(factor 1 + |kv|). The standard writes the pair as ``(1 +- kv)`` in Eq. (E.1) and
``tan theta = kh / (1 -+ kv)`` in Eq. (E.6); the wedge's equilibrium (gravity plus
inertia on the same mass) needs the same factor in both, so one signed kv serves both
(reading listed in ``docs/basis-readings.md``).

Equation numbers are those of EN 1998-5:2004 Annex E as recalled (from memory; the
design basis cites E.4-E.5 for the coefficient, E.6-E.7 for theta and E.16 for the
total force): (E.1) total force, (E.2) active coefficient for beta <= phi'_d - theta,
(E.3) active for beta > phi'_d - theta (not used: no solution, see below), (E.4)
passive, (E.5)-(E.7) water table below the wall, (E.8)-(E.10) dynamically impervious
soil below the water table.
"""

from __future__ import annotations

import numpy as np

from wallrun.codes.ec7 import GAMMA_W

#: EN 1998-5 Table 7.1, factor r: 2 (free gravity wall accepting a displacement up to
#: 300 alpha S mm), 1.5 (the same up to 200 alpha S mm), 1 (flexural reinforced concrete
#: walls, anchored or braced walls, walls on vertical piles, restrained basement walls,
#: bridge abutments).
R_VALUES = (2.0, 1.5, 1.0)
#: EN 1998-5 7.3.2.2(2): kv = +-0.5 kh where avg/ag > 0.6 (Eq. 7.2), +-0.33 kh otherwise
#: (Eq. 7.3).
KV_RATIOS = (0.5, 0.33)


def _r(deg):
    return np.radians(np.asarray(deg, dtype=float))


# --- seismic coefficients, 7.3.2.2 ----------------------------------------------------

def horizontal_coefficient(ag_g, soil_factor, r):
    """kh = alpha S / r, dimensionless (EN 1998-5 7.3.2.2(2), Eq. 7.1): alpha = ag/g,
    the design ground acceleration on ground type A over g; S the soil factor of
    EN 1998-1 3.2.2.2; r from Table 7.1. Constant over the height of walls up to 10 m
    (7.3.2.2(4))."""
    return np.asarray(ag_g, dtype=float) * soil_factor / r


def vertical_coefficient(kh, kv_ratio):
    """|kv| = kv_ratio kh, dimensionless (EN 1998-5 7.3.2.2(2), Eq. 7.2 with kv_ratio =
    0.5 where avg/ag > 0.6, Eq. 7.3 with 0.33 otherwise). Both signs are checked."""
    return np.asarray(kh, dtype=float) * kv_ratio


def seismic_angle(kh, kv):
    """theta = atan(kh / (1 - kv)), degrees, for dry soil or a water table below the
    wall (EN 1998-5 Annex E, Eq. E.6); kv signed, positive upward (module note).
    1 - kv <= 0 gives theta >= 90 deg (no active solution)."""
    return np.degrees(np.arctan2(np.asarray(kh, dtype=float), 1.0 - np.asarray(kv, dtype=float)))


def seismic_angle_impervious(kh, kv, gamma):
    """theta = atan(gamma / (gamma - gamma_w) kh / (1 - kv)), degrees, for dynamically
    impervious soil below the water table (EN 1998-5 Annex E, Eq. E.9; 7.3.2.3(9)):
    the inertia of the saturated mass over its effective weight. gamma: saturated unit
    weight, kN/m3 (> gamma_w); kv signed, positive upward."""
    g = np.asarray(gamma, dtype=float)
    return np.degrees(np.arctan2(g / (g - GAMMA_W) * kh, 1.0 - np.asarray(kv, dtype=float)))


def effective_unit_weight_impervious(gamma):
    """gamma* = gamma - gamma_w, kN/m3 (EN 1998-5 Annex E, Eq. E.8); above the water
    table, and for a water table below the wall, gamma* = gamma (Eq. E.5)."""
    return np.asarray(gamma, dtype=float) - GAMMA_W


def active_solution_exists(phi_deg, beta_deg, theta_deg):
    """True where the Mononobe-Okabe active wedge has a solution, beta <= phi'_d - theta
    (EN 1998-5 Annex E, condition of Eq. E.2). Beyond it the design basis takes no
    solution (the panel is flagged), rather than Eq. E.3."""
    return np.asarray(beta_deg, dtype=float) <= np.asarray(phi_deg, dtype=float) - theta_deg


# --- earth pressure coefficients, Annex E -------------------------------------------

def mononobe_okabe_active(phi_deg, beta_deg, delta_deg, theta_deg, psi_deg=90.0):
    """Active earth pressure coefficient K (static + dynamic), dimensionless, for
    beta <= phi'_d - theta (EN 1998-5 Annex E, Eq. E.2, Mononobe-Okabe):

        K = sin^2(psi + phi - theta) / (cos theta sin^2 psi sin(psi - theta - delta)
            [1 + sqrt(sin(phi + delta) sin(phi - beta - theta)
                      / (sin(psi - theta - delta) sin(psi + beta)))]^2)

    phi: design angle of shearing resistance phi'_d; beta: slope of the retained
    surface from the horizontal; delta: design friction angle between the soil and the
    back (the thrust's inclination to the back's normal); theta: seismic angle (E.6 or
    E.9); psi: inclination of the back from the horizontal (90 = vertical), all
    degrees. nan where beta > phi - theta (Eq. E.3 is not used: no solution). At
    theta = 0 it is the Coulomb active coefficient.
    """
    phi, b, d, th, psi = _r(phi_deg), _r(beta_deg), _r(delta_deg), _r(theta_deg), _r(psi_deg)
    ok = active_solution_exists(phi_deg, beta_deg, theta_deg)
    s_ptd = np.sin(psi - th - d)
    with np.errstate(invalid="ignore", divide="ignore"):
        root = np.sqrt(np.maximum(np.sin(phi + d) * np.sin(phi - b - th), 0.0)
                       / (s_ptd * np.sin(psi + b)))
        K = np.sin(psi + phi - th) ** 2 / (np.cos(th) * np.sin(psi) ** 2 * s_ptd * (1.0 + root) ** 2)
    return np.where(ok, K, np.nan)


def mononobe_okabe_passive(phi_deg, beta_deg, theta_deg, psi_deg=90.0):
    """Passive earth pressure coefficient K (static + dynamic), dimensionless, no
    shearing resistance between the soil and the wall (EN 1998-5 Annex E, Eq. E.4):

        K = sin^2(psi + phi - theta) / (cos theta sin^2 psi sin(psi + theta)
            [1 - sqrt(sin phi sin(phi + beta - theta) / (sin(psi + beta) sin(psi + theta)))]^2)

    Angles in degrees as in :func:`mononobe_okabe_active` (beta: slope of the surface
    in front). 0 where phi + beta - theta < 0 (no passive wedge: no resistance). At
    theta = 0, beta = 0, psi = 90 it is Rankine's (1 + sin phi) / (1 - sin phi).
    """
    phi, b, th, psi = _r(phi_deg), _r(beta_deg), _r(theta_deg), _r(psi_deg)
    s_arg = np.sin(phi + b - th)
    ok = s_arg >= 0.0
    root = np.sqrt(np.maximum(np.sin(phi) * s_arg, 0.0) / (np.sin(psi + b) * np.sin(psi + th)))
    K = np.sin(psi + phi - th) ** 2 / (np.cos(th) * np.sin(psi) ** 2 * np.sin(psi + th)
                                       * (1.0 - root) ** 2)
    return np.where(ok, K, 0.0)


def active_inclination_limit(phi_deg):
    """Largest inclination of the active pressure to the normal of the wall, degrees:
    (2/3) phi'_d (EN 1998-5 7.3.2.3(6))."""
    return 2.0 / 3.0 * np.asarray(phi_deg, dtype=float)


# --- forces, E.1 and 7.3.2.3 ---------------------------------------------------------

def total_design_force(gamma_star, kv, K, H, E_ws=0.0, E_wd=0.0):
    """Ed = 1/2 gamma* (1 - kv) K H^2 + Ews + Ewd, kN/m (EN 1998-5 Annex E, Eq. E.1):
    the total (static + dynamic) force of the soil on a back of height H (m), unit
    weight gamma* (kN/m3, E.5 or E.8), K of E.2, kv signed (positive upward), plus the
    static water force Ews and the hydrodynamic water force Ewd (kN/m; Ewd = 0 for a
    water table below the wall, E.7, and for dynamically impervious soil, E.10)."""
    return (0.5 * np.asarray(gamma_star, dtype=float) * (1.0 - np.asarray(kv, dtype=float)) * K
            * np.asarray(H, dtype=float) ** 2 + E_ws + E_wd)


def dynamic_increment(E_total, E_static):
    """Dynamic increment of the earth force, kN/m: the total design force less the
    static force (EN 1998-5 7.3.2.3(3)); it acts at mid-height of the back
    (:func:`dynamic_increment_height`)."""
    return np.asarray(E_total, dtype=float) - E_static


def dynamic_increment_height(H):
    """Height of the dynamic increment above the bottom of the back, m: H/2 (EN 1998-5
    7.3.2.3(4), in the absence of a more detailed study)."""
    return 0.5 * np.asarray(H, dtype=float)


def inertia_horizontal(kh, W):
    """Horizontal inertia force kh W, kN/m, of a mass of weight W (kN/m) that moves with
    the wall (EN 1998-5 7.3.2.1, pseudo-static analysis; 7.3.2.2 coefficients)."""
    return np.asarray(kh, dtype=float) * W


def inertia_vertical(kv, W):
    """Vertical inertia force kv W, kN/m, upward positive for kv > 0 (EN 1998-5 7.3.2.1,
    7.3.2.2): the weight W acts as W (1 - kv)."""
    return np.asarray(kv, dtype=float) * W

"""Bishop's simplified method of slices on circular slip surfaces (Bishop 1955,
"The use of the slip circle in the stability analysis of slopes", Geotechnique 5(1),
7-17), as EN 1997-1:2004 11.5.1 admits it for overall stability.

One function per equation; every function takes and returns numpy arrays and
broadcasts (many circles at once on a leading axis, slices on the last axis).
Coordinates: x horizontal, z level, m; the sliding mass moves towards -x (it rotates
clockwise about the centre (xc, zc) of a circle of radius R seen with x to the right
and z up). Forces kN/m, moments kNm/m (per metre run), pressures kPa, angles radians
unless a name says ``_deg``.
"""

from __future__ import annotations

import numpy as np

#: The least m_alpha accepted at a slice base inclined against the movement (alpha < 0,
#: the exit end): below it the simplified method's normal force is unreliable (Whitman
#: and Bailey 1967, J. Soil Mech. Found. Div. ASCE 93(SM4); common practice, from
#: memory); circles with a smaller m_alpha there are left out.
M_ALPHA_MIN = 0.2


# --- geometry of a circular slip surface ----------------------------------------------

def arc_level(x, xc, zc, R):
    """Level of the lower arc of a circle at x: z = zc - sqrt(R^2 - (x - xc)^2), m.
    Outside |x - xc| <= R the square root is taken of 0 (the arc's ends)."""
    u = np.asarray(x, dtype=float) - xc
    return zc - np.sqrt(np.maximum(R * R - u * u, 0.0))


def base_sine(x, xc, R):
    """sin alpha of the slice base at x, alpha the inclination of the base to the
    horizontal, positive where the base rises towards +x (the driving side, behind the
    centre): sin alpha = (x - xc) / R (Bishop 1955, Fig. 1)."""
    return (np.asarray(x, dtype=float) - xc) / R


def chord_inclination(x0, x1, xc, zc, R):
    """(cos alpha, sin alpha) of a slice base taken as the chord of the lower arc between
    the slice's sides x0 < x1, alpha positive where the base rises towards +x. The
    chord's length is b / cos alpha with b = x1 - x0, so the base length in Bishop's
    c' b / m_alpha term stays the chord's even where the arc turns vertical (the
    tangent at the slice middle would shorten it). A slice of zero width gets alpha = 0."""
    b = np.asarray(x1, dtype=float) - x0
    dz = arc_level(x1, xc, zc, R) - arc_level(x0, xc, zc, R)
    L = np.hypot(b, dz)
    pos = L > 0
    Ls = np.where(pos, L, 1.0)
    return np.where(pos, b / Ls, 1.0), np.where(pos, dz / Ls, 0.0)


def chord_integral(u, R):
    """S(u) = integral from 0 to u of sqrt(R^2 - s^2) ds
    = (u sqrt(R^2 - u^2) + R^2 asin(u / R)) / 2, m2: the area between a circle's
    centre line and its arc (closed form), for exact slice areas under the arc."""
    u = np.clip(np.asarray(u, dtype=float), -R, R)
    return 0.5 * (u * np.sqrt(np.maximum(R * R - u * u, 0.0)) + R * R * np.arcsin(u / R))


def chord_moment_integral(u, R):
    """integral from 0 to u of s sqrt(R^2 - s^2) ds = (R^3 - (R^2 - u^2)^(3/2)) / 3, m3:
    the first moment about the centre line of the area of :func:`chord_integral`."""
    u = np.clip(np.asarray(u, dtype=float), -R, R)
    r2 = np.maximum(R * R - u * u, 0.0)
    return (R ** 3 - r2 * np.sqrt(r2)) / 3.0


def arc_area(x0, x1, xc, zc, R):
    """integral of the arc level z(x) = zc - sqrt(R^2 - (x - xc)^2) over [x0, x1], m2
    (exact): zc (x1 - x0) - (S(x1 - xc) - S(x0 - xc))."""
    return zc * (x1 - x0) - (chord_integral(x1 - xc, R) - chord_integral(x0 - xc, R))


def arc_moment(x0, x1, xc, zc, R):
    """integral of (x - xc) z(x) over [x0, x1] for the arc level z, m3 (exact): the first
    moment about the centre's vertical of :func:`arc_area`."""
    u0, u1 = x0 - xc, x1 - xc
    return (zc * 0.5 * (u1 * u1 - u0 * u0)
            - (chord_moment_integral(u1, R) - chord_moment_integral(u0, R)))


# --- Bishop's simplified method ----------------------------------------------------------

def m_alpha(cos_a, sin_a, tan_phi, F):
    """m_alpha = cos alpha + sin alpha tan phi / F (Bishop 1955, the simplified method):
    the factor by which a slice's strength term is divided once the interslice shear
    forces are neglected and the slice is in vertical equilibrium. Dimensionless;
    tan phi the design value at the base, F the factor of safety."""
    return cos_a + sin_a * tan_phi / F


def slice_strength(c, tan_phi, W, u, b):
    """Numerator of Bishop's simplified method for one slice, kN/m:
    c b + (W - u b) tan phi (Bishop 1955), W the slice's total vertical load (weight and
    surcharge), u the pore pressure at the middle of its base (kPa), b its width (m),
    c (kPa) and tan phi the base's strength. The effective term is not taken below 0
    (no tension across the slip surface; common practice). Total-stress slices give
    tan phi = 0, c = cu."""
    return c * b + np.maximum(W - u * b, 0.0) * tan_phi


def bishop_factor(num, cos_a, sin_a, tan_phi, driving, R, F0=1.0, tol=1e-7,
                  max_iter=200):
    """Bishop's simplified factor of safety by fixed-point iteration (Bishop 1955):

        F = R sum(num_i / m_alpha_i(F)) / M_D

    with num_i from :func:`slice_strength`, m_alpha from :func:`m_alpha` and M_D the
    driving moment about the centre (kNm/m, the moment of the slice loads W_i about
    the centre's vertical, sum W_i (x_i - xc), i.e. R sum W_i sin alpha_i). The
    implicit F is iterated for every circle at once until the largest relative change
    is below ``tol``.

    Arrays: num, cos_a, sin_a, tan_phi of shape (..., n_slices); driving and R of shape
    (...). Returns (F, resisting, m): F (inf where M_D <= 0), the resisting moment
    R sum(num / m_alpha) at the converged F (kNm/m), and m_alpha of every slice at the
    converged F (NaN on circles that did not converge).
    """
    num = np.asarray(num, dtype=float)
    D = np.asarray(driving, dtype=float)
    R = np.asarray(R, dtype=float)
    ok = D > 0
    Dsafe = np.where(ok, D, 1.0)
    F = np.full(D.shape, float(F0))
    converged = ~ok
    for _ in range(max_iter):
        m = np.maximum(m_alpha(cos_a, sin_a, tan_phi, F[..., None]), 1e-3)
        F_new = R * (num / m).sum(axis=-1) / Dsafe
        change = np.abs(F_new - F) <= tol * np.maximum(np.abs(F_new), 1e-12)
        F = np.where(converged, F, F_new)
        converged |= change
        if converged.all():
            break
    m = m_alpha(cos_a, sin_a, tan_phi, F[..., None])
    resisting = R * (num / np.maximum(m, 1e-3)).sum(axis=-1)
    m = np.where(converged[..., None], m, np.nan)
    F = np.where(ok, resisting / Dsafe, np.inf)  # one last step: F = M_R / M_D exactly
    return F, resisting, m

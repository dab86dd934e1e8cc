"""An independent Bishop's simplified method for one circle under a panel (tests only).

Written from design-basis section 9 without the engine's machinery: the soils and the
wall are shapely polygons, the sliding mass of each slice is the intersection of those
polygons with the circle's disc and a vertical strip (areas and centroids by shapely),
slices are many thin strips, the exit and entry points are found by bisection, the
driving moment is the sum of each piece's weight times its centroid's distance from the
centre, and Bishop's F is iterated in a plain loop (Bishop 1955):

    F = sum[(c b + (W - u b) tan phi) / m_alpha] / sum[W (x - xc)] * R,
    m_alpha = cos alpha + sin alpha tan phi / F.

Used to confirm the engine at the critical circles it reports (the issue's "independent
Bishop calculation within 3 %").
"""

from __future__ import annotations

import math

from shapely.geometry import Point, Polygon, box

GAMMA_W = 9.81
GAMMA_C = 25.0


def _surface(x, z_front, front_slope_deg, x_bs, z_top, beta_deg, crest_m):
    """Ground level: front ground for x <= 0, retained surface from the stem back face."""
    if x <= 0:
        return z_front + x * math.tan(math.radians(front_slope_deg))
    z = z_top + max(x - x_bs, 0.0) * math.tan(math.radians(beta_deg))
    if crest_m is not None:
        z = min(z, z_top + crest_m)
    return z


def bishop_panel(section, cond, ground, circle, gQ=1.0, g_phi=1.0, g_c=1.0, g_cu=1.0,
                 undrained=False, n=400, far=60.0):
    """(F, M_D, M_R) of one circle (xc, zc, R) under a panel, by the plain method above.

    section: wallrun.section.Section; cond: wallrun.conditions.Conditions (one panel);
    ground: wallrun.settings.GroundModel. Factors as in design-basis section 4; weights
    at 1.0; surcharge at gQ behind the centre only (favourable variable action 0).
    """
    xc, zc, R = circle
    s = section
    zf = float(cond.z_found)
    B, toe, t = s.base_width_m, s.toe_m, s.base_thickness_m
    x_bs, x_fs = toe + s.stem_top_m, toe + s.stem_base_m
    bf, fd = cond.backfill, cond.foundation
    beta, crest = bf.slope_deg, ground.retained_crest_m

    def surf(x):
        return _surface(x, cond.z_front, ground.front_slope_deg, x_bs, cond.z_top, beta, crest)

    # polygons, absolute levels
    deep = zf - 4.0 * far
    kink = []  # the crest, where the retained surface turns flat
    if crest is not None and beta > 0:
        kink = [x_bs + crest / math.tan(math.radians(beta))]
    retained = Polygon([(x_fs, zf + t), (B, zf + t), (B, zf), (far, zf), (far, surf(far))]
                       + [(x, surf(x)) for x in kink if x_bs < x < far]
                       + [(x_bs, cond.z_top)])
    dk, wk = s.key_depth_m, s.key_width_m
    found_pts = [(-far, deep), (far, deep), (far, zf), (B, zf)]
    if dk > 0:
        found_pts += [(toe + wk, zf), (toe + wk, zf - dk), (toe, zf - dk), (toe, zf)]
    found_pts += [(0.0, zf), (0.0, cond.z_front), (-far, surf(-far))]
    foundation = Polygon(found_pts)
    hc = cond.z_top - zf - t
    concrete = [Polygon([(toe, zf + t), (x_fs, zf + t), (x_bs, cond.z_top), (toe, cond.z_top)]),
                box(0.0, zf, B, zf + t)]
    if dk > 0:
        concrete.append(box(toe, zf - dk, toe + wk, zf))
    assert hc > 0
    pieces = [(retained, bf.unit_weight_kn_m3), (foundation, fd.unit_weight_kn_m3)] + [
        (p, GAMMA_C) for p in concrete]
    disc = Point(xc, zc).buffer(R, quad_segs=2048)

    def arc(x):
        return zc - math.sqrt(max(R * R - (x - xc) ** 2, 0.0))

    def crossing(lo, hi):  # surf - arc changes sign between lo and hi
        f_lo = surf(lo) - arc(lo)
        for _ in range(200):
            mid = 0.5 * (lo + hi)
            f = surf(mid) - arc(mid)
            if (f > 0) == (f_lo > 0):
                lo, f_lo = mid, f
            else:
                hi = mid
        return 0.5 * (lo + hi)

    x1 = crossing(xc - R + 1e-9, 0.0)  # exit in front: arc above ground left of it
    x2 = crossing(B, xc + R - 1e-9)  # entry behind
    zw = None if cond.water_level_m is None else float(cond.water_level_m)

    def water(x):
        if zw is None:
            return -math.inf
        if x <= 0 or x >= B:
            return min(zw, surf(x))
        a, b = min(zw, surf(0.0)), min(zw, surf(B))
        return a + (b - a) * x / B

    phi_f = math.atan(math.tan(math.radians(fd.friction_angle_deg)) / g_phi)
    phi_b = math.atan(math.tan(math.radians(bf.friction_angle_deg)) / g_phi)
    c_f = fd.cohesion_kpa / g_c
    cu_f = fd.undrained_strength_kpa / g_cu
    q = cond.surcharge_kpa * gQ
    rows = []
    M_D = 0.0
    for i in range(n):
        a, b = x1 + (x2 - x1) * i / n, x1 + (x2 - x1) * (i + 1) / n
        strip = box(a, deep, b, zc + R).intersection(disc)
        W = Wx = 0.0
        for poly, gam in pieces:
            p = poly.intersection(strip)
            if not p.is_empty and p.area > 0:
                W += gam * p.area
                Wx += gam * p.area * p.centroid.x
        qa = max(a, x_bs, xc)
        Q = q * max(b - qa, 0.0)
        M_D += (Wx - W * xc) + q * 0.5 * ((max(b, qa) - xc) ** 2 - (qa - xc) ** 2)
        za, zb_ = arc(a), arc(b)
        L = math.hypot(b - a, zb_ - za)
        ca, sa = (b - a) / L, (zb_ - za) / L
        xm = 0.5 * (a + b)
        zm = arc(xm)
        upper = xm > B and zm > zf
        u = GAMMA_W * max(water(xm) - zm, 0.0)
        if upper:
            c, tp = 0.0, math.tan(phi_b)
        elif undrained:
            c, tp, u = cu_f, 0.0, 0.0
        else:
            c, tp = c_f, math.tan(phi_f)
        rows.append((c * (b - a) + max(W + Q - u * (b - a), 0.0) * tp, ca, sa, tp))
    F = 1.0
    for _ in range(500):
        F_new = R * sum(num / (ca + sa * tp / F) for num, ca, sa, tp in rows) / M_D
        if abs(F_new - F) < 1e-10:
            F = F_new
            break
        F = F_new
    return F, M_D, F * M_D

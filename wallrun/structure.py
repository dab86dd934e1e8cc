"""Structural design of the stem, heel and toe to EN 1992-1-1 for many candidates at once.

Design-basis section 5. Inputs are the ULS member actions of the stability engine
(:class:`wallrun.members.MemberActions`), the quasi-permanent moments per member and
the basis; nothing here computes soil pressures.

Layout of the bars (per metre run of wall, b = 1000 mm strips):

- stem: vertical main bars at the back (retained) face, outermost, cover
  ``concrete.cover_mm``; d = t_stem_base - cover - phi/2 at the top of the base.
- stem_front: vertical bars of the front face; they also resist any reverse (negative)
  stem moment.
- heel: top mat of the base (transverse bars across the full base width), cover
  ``cover_mm``; it resists the positive heel moment and any reverse toe moment.
- toe: bottom mat (full base width), cover ``cover_ground_mm``; it resists the positive
  toe moment and any reverse heel moment.
- stem_horizontal: horizontal bars, each face, inside the verticals; they carry the
  restraint steel of 7.3.2 (``restraint_steel``, when ``design.restraint_steel``).
- base_distribution: bars along the wall in each mat, inside the transverse bars; the
  restraint steel of 7.3.2 likewise.
- starter, starter_front: L-bars of the stem's vertical bars from the bottom mat of the
  base to the kicker (``concrete.kicker_mm``) plus the lap l0 of 8.7.3 above it.
- the heel bars are bent down at the heel end and the toe bars up at the toe end; the
  other end of each only where it needs it. ``bar_bend`` checks every bend (8.3,
  Table 8.1N and Eq. 8.1), see :func:`_bends`.

Choices where the design basis is silent (also in the final report):

- A face whose design moment is > 0 needs As,min of 9.2.1.1 (the main faces always;
  the stem front face only where the stem moment reverses). Stem front vertical steel
  >= 0.001 Ac with Ac = 1000 t_stem_base per metre.
- Stem horizontal: each face >= half of max(0.25 (As,back + As,front), 0.001 Ac),
  Ac = 1000 t_stem_base per metre height. Base distribution: each mat >= 0.2 x the
  larger main mat area.
- Vertical stem bars and both base mats use the principal-bar spacing limit
  min(3h, 400); stem horizontal and base distribution the secondary limit
  min(3.5h, 450) (9.3.1.1(3)).
- crack_spacing reports the bar spacing against the allowed spacing: the detailing
  limit, further limited by Table 7.3N when the diameter route (Table 7.2N, Eq. 7.6N)
  does not pass at the quasi-permanent steel stress (7.3.3(2): either route suffices).
- min_steel also carries entries ``"<member>, As,max"`` (effect As,prov vs 0.04 Ac).
- Bending utilization: M_Ed / M_Rd of the provided bars of the face in tension; M_Rd
  is capped at K' b d^2 fck, so K > K' (too thin) always fails.
- Where no bar option meets every requirement the largest bar at the smallest spacing
  is chosen and the checks report the shortfall.
- The heel top bars are taken in poor bond conditions (eta1 = 0.7, Fig. 8.2, base
  thicker than 250 mm is typical); every other bar in good bond.
- Restraint steel: :func:`restraint_need` (per face, the stem at its base thickness);
  it joins the minimum of the secondary bars in the bar choice, so the steel mass and
  the cost the search minimises include it.
- Bends: the readings of :func:`_bends` (force at the start of the bend, the room a
  member gives a bend, the radius scheduled).
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass, field

import numpy as np

from wallrun import shapes
from wallrun.codes import ec2
from wallrun.members import MemberActions
from wallrun.results import BarSet, CheckArray, Reinforcement, Starter
from wallrun.section import SectionArrays
from wallrun.settings import Basis

CL_BENDING = "EN 1992-1-1 6.1, 3.1.7"
CL_SHEAR = "EN 1992-1-1 6.2.2"
CL_CRACK = "EN 1992-1-1 7.3.3, 9.3.1.1(3)"
CL_MIN = "EN 1992-1-1 9.2.1.1"
CL_MIN_WALL = "EN 1992-1-1 9.6.2, 9.6.3"
CL_MIN_DIST = "EN 1992-1-1 9.3.1.1(2)"
CL_RESTRAINT = "EN 1992-1-1 7.3.2 Eq. (7.1), Table 7.2N"
CL_BEND = "EN 1992-1-1 8.3 Table 8.1N, Eq. (8.1)"
KC_RESTRAINT = 1.0  # 7.3.2(2): pure tension over the whole thickness (design basis 5)
STOCK_LENGTH_MM = 12000.0  # longest bar supplied, common practice

FACES = ("stem", "stem_front", "heel", "toe", "stem_horizontal", "base_distribution")


def _opt(a, i: int) -> float | None:
    """a[i] as a float, None where a is None or a[i] is nan."""
    if a is None:
        return None
    v = float(a[i])
    return v if np.isfinite(v) else None


@dataclass(frozen=True)
class BarArrays:
    """Bars of one face for n candidates: diameter and spacing mm, areas mm2/m, d mm;
    bend_r, far_bend_r: scheduling radii of the bars' bends, mm (nan: straight; see
    :class:`wallrun.results.BarSet`)."""

    bar_mm: np.ndarray
    spacing_mm: np.ndarray
    as_prov: np.ndarray
    as_req: np.ndarray
    d_mm: np.ndarray
    bend_r: np.ndarray | None = None
    far_bend_r: np.ndarray | None = None

    def take(self, i: int) -> BarSet:
        return BarSet(int(self.bar_mm[i]), int(self.spacing_mm[i]),
                      round(float(self.as_prov[i]), 1), round(float(self.as_req[i]), 1),
                      round(float(self.d_mm[i]), 1), _opt(self.bend_r, i), _opt(self.far_bend_r, i))


@dataclass(frozen=True)
class StarterArrays:
    """Starter bars of one face for n candidates (:class:`wallrun.results.Starter`):
    the bars they lap (``bars``), l0 above the kicker, the kicker, the embedment in the
    base and the foot, mm."""

    bars: BarArrays
    lap_mm: np.ndarray
    kicker_mm: float
    embedment_mm: np.ndarray
    foot_mm: np.ndarray

    def take(self, i: int) -> Starter:
        b = self.bars.take(i)
        return Starter(**{f.name: getattr(b, f.name) for f in dataclasses.fields(b)},
                       lap_mm=round(float(self.lap_mm[i]), 1),
                       kicker_mm=float(self.kicker_mm),
                       embedment_mm=round(float(self.embedment_mm[i]), 1),
                       foot_mm=round(float(self.foot_mm[i]), 1))


@dataclass(frozen=True)
class StructureResult:
    """Reinforcement and EC2 checks of n candidates.

    checks: stem_bending, stem_shear, heel_bending, heel_shear, toe_bending, toe_shear
    (one per (combination, case) of the actions), crack_spacing, min_steel and
    restraint_steel (combination ``SLS``, case the face), bar_bend (combination ``ULS``,
    case the bend). steel_kg_per_m: approximate steel mass per metre run of wall, kg/m.
    stem_curtail_m: height above the top of the base where half the stem main bars
    stop, m (nan: no curtailment). starters: ``starter`` and ``starter_front``.
    """

    checks: list[CheckArray]
    steel_kg_per_m: np.ndarray
    bars: dict[str, BarArrays] = field(default_factory=dict)
    stem_curtail_m: np.ndarray | None = None
    starters: dict[str, StarterArrays] = field(default_factory=dict)

    def reinforcement(self, i: int) -> Reinforcement:
        c = None
        if self.stem_curtail_m is not None and np.isfinite(self.stem_curtail_m[i]):
            c = float(self.stem_curtail_m[i])
        b, st = self.bars, self.starters
        return Reinforcement(stem=b["stem"].take(i), heel=b["heel"].take(i), toe=b["toe"].take(i),
                             stem_horizontal=b["stem_horizontal"].take(i),
                             base_distribution=b["base_distribution"].take(i),
                             stem_front=b["stem_front"].take(i), stem_curtail_m=c,
                             starter=st["starter"].take(i) if "starter" in st else None,
                             starter_front=(st["starter_front"].take(i) if "starter_front" in st
                                            else None))


# --- bar options ------------------------------------------------------------------------

@dataclass(frozen=True)
class _Options:
    phi: np.ndarray  # (m,) sorted cheapest first: least area, ties to wider spacing
    s: np.ndarray
    As: np.ndarray
    fallback: int  # largest bar at the smallest spacing
    sizes: np.ndarray  # (k,) bar sizes ascending
    spacings: np.ndarray  # (l,) spacings ascending
    index: np.ndarray  # (k, l) option index of (size, spacing)


def _options(basis: Basis) -> _Options:
    return _options_of(tuple(basis.steel.bar_sizes_mm), tuple(basis.steel.spacings_mm))


def _options_of(bar_sizes, spacings) -> _Options:
    phis, ss = np.meshgrid(np.asarray(bar_sizes, dtype=float),
                           np.asarray(spacings, dtype=float), indexing="ij")
    phi, s = phis.ravel(), ss.ravel()
    As = ec2.area_per_m(phi, s)
    order = np.lexsort((-s, np.round(As, 6)))
    phi, s, As = phi[order], s[order], As[order]
    fb = int(np.flatnonzero((phi == phi.max()) & (s == s[phi == phi.max()].min()))[0])
    sizes = np.unique(phi)
    spacings = np.unique(s)
    index = np.full((len(sizes), len(spacings)), -1, dtype=int)
    index[np.searchsorted(sizes, phi), np.searchsorted(spacings, s)] = np.arange(len(phi))
    return _Options(phi, s, As, fb, sizes, spacings, index)


def _pick(feasible: np.ndarray, fallback: int) -> np.ndarray:
    """Index of the first (cheapest) feasible option per row, else the fallback."""
    idx = np.argmax(feasible, axis=1)
    return np.where(feasible[np.arange(feasible.shape[0]), idx], idx, fallback)


def _choose_main_full(opt: _Options, h, cover, M_req, M_qp, as_extra, need_asmin, fck, basis,
                      max_phi=None, V_req=None):
    """Cheapest option per candidate for a face in bending, every option tested, (n, m).

    The reference (and the path for the rows that fail crack control at their cheapest
    option). Arrays (n,) in, option indices (n,) out. ``max_phi`` (n,): the largest bar
    size a row may take, mm; ``V_req`` (n,): the shear force the bars' VRd,c must carry,
    kN/m (None: no such limit). A row no option meets with them takes the choice
    without them.
    """
    ok = _feasible(opt, None, h, cover, M_req, M_qp, as_extra, need_asmin, fck, basis, max_phi,
                   V_req)
    idx = _pick(ok, opt.fallback)
    if max_phi is not None or V_req is not None:
        r = np.flatnonzero(~ok.any(axis=1))
        if len(r):
            idx[r] = _choose_main_full(opt, *_rows(r, h, cover, M_req, M_qp, as_extra,
                                                   need_asmin), fck, basis)
    return idx


def _rows(r, h, cover, M_req, M_qp, as_extra, need_asmin):
    """The arguments of rows ``r`` of a face's choice (cover a scalar or per row)."""
    cover = np.asarray(cover, dtype=float)
    return (h[r], cover[r] if cover.ndim else cover, M_req[r], M_qp[r], as_extra[r],
            need_asmin[r])


def _feasible(opt: _Options, cols, h, cover, M_req, M_qp, as_extra, need_asmin, fck, basis,
              max_phi=None, V_req=None):
    """Every requirement of a face in bending for the options ``cols`` (r, w) of each
    row (None: every option), (r, w) or (r, m) booleans: As,max, spacing limit, d > 0,
    the bar size (``max_phi``), the extra area, M_Rd >= M_req, As,min, VRd,c >= V_req,
    and crack control (when any row has a quasi-permanent moment)."""
    c = basis.concrete
    if cols is None:
        phi, s, As = opt.phi[None, :], opt.s[None, :], opt.As[None, :]
    else:
        phi, s, As = opt.phi[cols], opt.s[cols], opt.As[cols]
    hh = h[:, None]
    cover = np.asarray(cover, dtype=float)
    d = hh - (cover[:, None] if cover.ndim else cover) - phi / 2.0
    ok = (As <= ec2.as_max(hh)) & (s <= ec2.max_spacing_main(hh)) & (d > 0)
    if max_phi is not None:
        ok &= phi <= max_phi[:, None]
    ok &= As >= as_extra[:, None]
    ok &= ec2.moment_resistance(As, d, fck, basis.steel.fyk_mpa, c.alpha_cc) >= M_req[:, None]
    ok &= ~need_asmin[:, None] | (As >= ec2.as_min_beam(d, fck, basis.steel.fyk_mpa))
    if V_req is not None:
        ok &= ec2.shear_resistance(As, np.where(d > 0, d, 1.0), fck) >= V_req[:, None]
    if np.any(M_qp > 0):
        sig = ec2.steel_stress_cracked(M_qp[:, None], As, d, ec2.alpha_e_long_term(fck))
        ok &= ec2.crack_control_ok(sig, s, phi, hh, d, fck, basis.design.crack_width_mm)
    return ok


#: Options tested after the cheapest one when it fails crack control (then every option).
_CRACK_WINDOW = 8


def _area_tables(opt: _Options):
    """Area per metre 1000 a_bar / s of every (bar size, spacing), mm2/m, flattened
    size-major, and the same rounded to 1e-6 (the tie-break key)."""
    a_bar = ec2.bar_area(opt.sizes)[:, None]
    T = (1000.0 * a_bar / opt.spacings[None, :]).ravel()
    return T, np.round(T, 6)


def _cheapest_per_size(opt: _Options, need, s_limit, h):
    """Cheapest option per candidate meeting an area ``need`` (k, n), mm2/m, one row
    per bar size of ``opt.sizes``, and a spacing limit (n,), mm: for each bar size the
    widest listed spacing giving the area (within As,max of the thickness ``h`` (n,),
    mm), then the least area over the sizes, ties to the wider spacing, then to the
    smaller size. Returns option indices (n,) into ``opt`` (fallback where nothing
    fits), and a found flag. The sizes are taken one at a time: a running minimum over
    the k rows costs a few passes over n values, where a reduction over a short axis
    of an (n, k) array is several times slower."""
    sp = opt.spacings  # ascending
    a_bar = ec2.bar_area(opt.sizes)
    T, Tr = _area_tables(opt)  # 1000 a_bar / s per (size, spacing), and rounded
    as_max = ec2.as_max(h)
    n = need.shape[1]
    best_key, best_s = np.full(n, np.inf), np.full(n, -1.0)
    best = np.full(n, opt.fallback)
    for k in range(len(opt.sizes)):
        with np.errstate(divide="ignore", invalid="ignore"):
            s_allow = np.where(need[k] > 0, 1000.0 * a_bar[k] / need[k], np.inf)
        # largest listed spacing <= the allowed one (<= len(sp) - 1)
        j = np.searchsorted(sp, np.minimum(s_allow, s_limit), side="right") - 1
        jj = np.maximum(j, 0)
        flat = jj + k * len(sp)
        key = np.where((j >= 0) & (T[flat] <= as_max), Tr[flat], np.inf)
        s_c = sp[jj]
        better = (key < best_key) | ((key == best_key) & (s_c > best_s) & np.isfinite(key))
        best_key = np.where(better, key, best_key)
        best_s = np.where(better, s_c, best_s)
        best = np.where(better, opt.index[k][jj], best)
    return best, np.isfinite(best_key)


def _choose_main(opt: _Options, h, cover, M_req, M_qp, as_extra, need_asmin, fck, basis,
                 max_phi=None, V_req=None):
    """Cheapest option per candidate for a face in bending (same result as
    :func:`_choose_main_full`, computed per bar size, (k, n), then crack control at the
    chosen option; rows failing it are redone over every option)."""
    fyk, acc = basis.steel.fyk_mpa, basis.concrete.alpha_cc
    # (k, n): one row per bar size
    sizes = opt.sizes[:, None]
    cover = np.asarray(cover, dtype=float)  # scalar, or (n,) per row
    d = h[None, :] - (cover[None, :] if cover.ndim else cover) - sizes / 2.0
    K = ec2.k_factor(M_req[None, :], d, fck)
    need = np.where(K <= ec2.k_limit(acc), ec2.as_required(M_req[None, :], d, fck, fyk, acc) * (1 + 1e-9),
                    np.inf)
    need = np.where(d > 0, need, np.inf)
    need = np.maximum(need, np.where(need_asmin[None, :], ec2.as_min_beam(d, fck, fyk), 0.0))
    need = np.maximum(need, as_extra[None, :])
    if V_req is not None:
        need = np.maximum(need, np.where(
            d > 0, ec2.as_for_shear(V_req[None, :], np.where(d > 0, d, 1.0), fck) * (1 + 1e-9),
            np.inf))
    if max_phi is not None:
        need = np.where(sizes <= max_phi[None, :], need, np.inf)
    idx, found = _cheapest_per_size(opt, need, ec2.max_spacing_main(h), h)
    if (max_phi is not None or V_req is not None) and not found.all():
        # no option meets the bend or shear limit: the choice without them (the
        # bar_bend or *_shear check then fails, as it would have)
        r = np.flatnonzero(~found)
        idx = idx.copy()
        idx[r] = _choose_main(opt, *_rows(r, h, cover, M_req, M_qp, as_extra, need_asmin),
                              fck, basis)
    if np.any(M_qp > 0):
        phi, s, As = opt.phi[idx], opt.s[idx], opt.As[idx]
        dc = h - cover - phi / 2.0
        sig = ec2.steel_stress_cracked(M_qp, As, dc, ec2.alpha_e_long_term(fck))
        bad = found & ~ec2.crack_control_ok(sig, s, phi, h, dc, fck, basis.design.crack_width_mm)
        if bad.any():
            # every cheaper option fails a requirement other than crack control, so the
            # answer is the first option from idx on (in the cheapest-first order) that
            # meets every requirement: the next few are tested, then every option for
            # the rows still without one
            r = np.flatnonzero(bad)
            idx = idx.copy()
            cov_r = cover[r] if cover.ndim else cover
            m = len(opt.As)
            cols = idx[r][:, None] + np.arange(_CRACK_WINDOW)[None, :]
            inside = cols < m
            cols = np.minimum(cols, m - 1)
            ok = _feasible(opt, cols, h[r], cov_r, M_req[r], M_qp[r], as_extra[r],
                           need_asmin[r], fck, basis,
                           None if max_phi is None else max_phi[r],
                           None if V_req is None else V_req[r]) & inside
            hit = ok.any(axis=1)
            idx[r[hit]] = cols[hit, np.argmax(ok[hit], axis=1)]
            rest = r[~hit]
            if len(rest):
                cov_s = cover[rest] if cover.ndim else cover
                idx[rest] = _choose_main_full(opt, h[rest], cov_s, M_req[rest], M_qp[rest],
                                              as_extra[rest], need_asmin[rest], fck, basis,
                                              None if max_phi is None else max_phi[rest],
                                              None if V_req is None else V_req[rest])
    return idx


def shear_on_faces(actions: list[MemberActions], n: int) -> dict[str, np.ndarray]:
    """The shear force each main face's bars must carry as rho_l of VRd,c, kN/m, (n,)
    per face: the largest |V_Ed| of the actions whose moment puts that face in tension
    (the face whose VRd,c the ``*_shear`` checks take: the member's main face where
    M_Ed >= 0, the opposite face where it reverses)."""
    out = {f: np.zeros(n) for f in ("stem", "stem_front", "heel", "toe")}
    main = {"stem": "stem", "heel": "heel", "toe": "toe"}
    opp = {"stem": "stem_front", "heel": "toe", "toe": "heel"}
    for a in actions:
        M, V = _full(a.M_Ed, n), np.abs(_full(a.V_Ed, n))
        out[main[a.member]] = np.maximum(out[main[a.member]], np.where(M >= 0, V, 0.0))
        out[opp[a.member]] = np.maximum(out[opp[a.member]], np.where(M < 0, V, 0.0))
    return out


def base_bar_limit(sizes, t_base_mm, cover_mm, cover_ground_mm) -> np.ndarray:
    """The largest bar size (mm) whose end bend fits a base of thickness ``t_base_mm``,
    (n,): the leg between the covers holds the bend's end projection P (BS 8666:2005
    Table 2) and a mandrel of EN 1992-1-1 Table 8.1N within 2 (leg - 6 phi), the room
    :func:`_bends` gives a base bar's bend. The heel and toe bars end in such a bend,
    so a larger bar cannot be detailed in the base whatever its area; inf where no
    listed size fits (the choice is then left free, and ``bar_bend`` fails it)."""
    sizes = np.asarray(sizes, dtype=float)
    leg = (np.asarray(t_base_mm, dtype=float)[:, None] - float(cover_mm)
           - float(cover_ground_mm))
    fits = ((leg >= shapes.min_end_projection(sizes)[None, :] - 1e-9)
            & (2.0 * np.maximum(leg - 6.0 * sizes[None, :], 0.0)
               >= ec2.mandrel_min_table(sizes)[None, :] - 1e-9))
    largest = np.where(fits, sizes[None, :], -np.inf).max(axis=1)
    return np.where(np.isfinite(largest), largest, np.inf)


def _choose_secondary(opt: _Options, h, as_need, basis: Basis):
    """Cheapest option meeting an area, the restraint steel of 7.3.2 for its bar size
    (when ``design.restraint_steel``; a detailing minimum, met at utilization 1.0
    whatever ``design.max_utilization``) and the secondary spacing limit."""
    need = np.broadcast_to(as_need[None, :], (len(opt.sizes), len(h)))
    if basis.design.restraint_steel:
        need = np.maximum(need, restraint_need(opt.sizes[:, None], h[None, :], basis))
    return _cheapest_per_size(opt, need, ec2.max_spacing_secondary(h), h)[0]


# --- restraint steel (7.3.2) --------------------------------------------------------------

def restraint_need(phi, h_mm, basis: Basis):
    """Restraint steel per face, mm2/m (EN 1992-1-1 7.3.2(2) Eq. 7.1, design-basis 5).

    As,min = kc k fct,eff Act / sigma_s with kc = 1.0 (tension over the whole
    thickness), k of 7.3.2(2) for the thickness h (mm), fct,eff = ``concrete.fct_eff``
    (fctm unless the site gives an early-age value), Act = 1000 h per metre, sigma_s =
    fyk or the lower stress Table 7.2N allows for bars phi (mm) and wk; shared equally
    by the two faces. For the stem h is its thickness at the top of the base (the
    thickest, conservative, one bar spacing for the whole height); for the base its
    thickness. inf where the bar size is not allowed at any stress."""
    h = np.asarray(h_mm, dtype=float)
    sig = _per_size(lambda x: ec2.restraint_stress(x, basis.steel.fyk_mpa, basis.design.crack_width_mm), phi)
    return 0.5 * ec2.as_min_crack(1000.0 * h, sig, basis.concrete.fct_eff, ec2.k_restraint(h),
                                  KC_RESTRAINT)


def _per_size(f, phi):
    """f(phi) for bar sizes phi (mm): where every size is a whole number up to 64 mm, f of
    the 65 whole sizes taken by index (the same numbers, one evaluation per size)."""
    phi = np.asarray(phi, dtype=float)
    di = np.rint(phi).astype(np.int64)
    if phi.size > 64 and np.all((di == phi) & (di >= 0) & (di <= 64)):
        return np.asarray(f(np.arange(65, dtype=float)), dtype=float)[di]
    return f(phi)


# --- bends (8.3) and starters ------------------------------------------------------------------

def mandrel_anchored(F, l_av, phi, fbd, kb):
    """Least mandrel diameter, mm, meeting EN 1992-1-1 Eq. 8.1 for a bar whose force F (N)
    at a critical section is carried by a straight length and then a bend.

    l_av: from the critical section to the outside of the leg beyond the bend, mm; the
    bend of mandrel M starts M/2 + phi before that, so the straight length is
    l_av - M/2 - phi, along which bond fbd (MPa, 8.4.2) takes pi phi fbd per mm:
    F_bt(M) = min(max(F - pi phi fbd (l_av - M/2 - phi), 0), F). kb = (1/a_b + 1/(2 phi))
    / fcd (1/MPa/mm: Eq. 8.1 reads M >= kb F_bt). Returns the least M >= kb F_bt(M):
    0 where the straight length anchors the bar before any bend."""
    F = np.asarray(F, dtype=float)
    c1 = np.pi * phi * fbd / 2.0
    F0 = F - np.pi * phi * fbd * (l_av - phi)
    den = 1.0 - kb * c1
    with np.errstate(divide="ignore", invalid="ignore"):
        m = np.where(den > 0, kb * F0 / np.where(den > 0, den, 1.0), np.inf)
    return np.where(F0 <= 0, 0.0, np.minimum(m, kb * F))


def mandrel_free_end(F, L, e0, kb):
    """Least mandrel diameter, mm, meeting EN 1992-1-1 Eq. 8.1 for the bend at the free end
    of a cantilever (heel or toe) whose bars carry F (N) at the critical section.

    The tensile force along the member follows the moment shifted by a_l = d (9.2.1.3(2),
    members without shear reinforcement) with the moment taken falling linearly from the
    critical section to zero at the free end (an upper bound wherever the net load on
    the cantilever is downward-convex, i.e. distributed or at the free end): at x from
    the free edge F(x) = F min((x + a_l) / L, 1), L the cantilever length, mm. The bend
    starts at x = cover + phi + M/2; e0 = cover + phi + a_l, mm. Returns the least M >=
    kb F_bt(M) (kb as in :func:`mandrel_anchored`)."""
    F = np.asarray(F, dtype=float)
    L = np.asarray(L, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        alpha = kb * F / np.where(L > 0, L, 1.0)
        m_lin = np.where(alpha < 2.0, alpha * e0 / (1.0 - alpha / 2.0), np.inf)
    return np.where(L > 0, np.minimum(m_lin, kb * F), kb * F)


def _lbd_straight(phi, sigma, fbd):
    """lbd of a straight bar at stress sigma (MPa), alpha1..5 = 1: max(lb,rqd, lb,min),
    lb,min = max(0.3 lb,rqd, 10 phi, 100) (8.4.3 Eq. 8.3, 8.4.4 Eq. 8.4, 8.6), mm."""
    lb = ec2.lb_rqd(phi, sigma, fbd)
    return np.maximum(lb, np.maximum(10.0 * phi, 100.0))


#: The bends of the cage checked by ``bar_bend``: (case, bars, end) with end ``bend``
#: (the starter's foot, the heel bars' heel end, the toe bars' toe end: always bent) or
#: ``far`` (the other end of a base bar: bent only where it needs it).
BENDS = (("starter, back face", "stem", "bend"), ("starter, front face", "stem_front", "bend"),
         ("heel bars, heel end", "heel", "bend"), ("heel bars, toe end", "heel", "far"),
         ("toe bars, toe end", "toe", "bend"), ("toe bars, heel end", "toe", "far"))


def _bends(sec, basis, phi, s, d, MRd, pos, neg, floors):
    """The bar_bend checks (one per bend of :data:`BENDS`), the scheduling radii of the
    bends, mm ({bars: [bend, far]}, far nan where straight) and the starters'
    embedment, mm (design-basis section 5, EN 1992-1-1 8.3).

    Required mandrel = max(Table 8.1N, Eq. 8.1) with F_bt the design bar force at the
    start of the bend: the bar's force at its critical section is As fyd min(M_Ed /
    M_Rd, 1) per bar under the envelope ``pos``/``neg`` of every ULS combination given
    (combination ``ULS``); starters and the base bars anchored beyond the stem lose
    force by bond along their straight length first (:func:`mandrel_anchored`); the
    free ends of the heel and toe carry the shifted force (:func:`mandrel_free_end`).
    a_b = min(s/2, cover + phi/2): the end bars of a panel lie next to its end face. The
    check compares the required mandrel with the largest the member can hold: a
    starter's bend within the embedment (2 (embedment - phi)); a base bar's bend within
    the leg from the top to the bottom cover with 5 phi straight after it (BS 8666
    Table 2 P, and R + 6 phi for a larger radius: 2 (leg - 6 phi), none where the leg is
    shorter than P). A far end that is straight has no demand (effect 0). The scheduled
    radius is BS 8666's r, or half the required mandrel rounded up to 5 mm where that is
    larger (and at least a radius the given bars carry, ``floors``)."""
    c = basis.concrete
    fck, fyk = c.fck_mpa, basis.steel.fyk_mpa
    cv, cg = float(c.cover_mm), float(c.cover_ground_mm)
    f_yd = float(ec2.fyd(fyk))
    fcd_b = float(ec2.fcd_bend(fck, c.alpha_cc))
    ts = np.asarray(sec.stem_base_m, dtype=float) * 1000.0
    tb = np.asarray(sec.base_thickness_m, dtype=float) * 1000.0
    bt = np.asarray(sec.toe_m, dtype=float) * 1000.0
    bh = np.maximum(np.asarray(sec.heel_m, dtype=float) * 1000.0, 0.0)
    embed = starter_embedment_mm(tb, cg, phi["toe"], phi["base_distribution"])
    leg = tb - cv - cg
    good = {"stem": True, "stem_front": True, "heel": False, "toe": True}  # heel top mat: poor bond
    fbd = {f: ec2.bond_strength(fck, phi[f], good[f]) for f in good}
    kb = {f: (1.0 / np.minimum(s[f] / 2.0, cv + phi[f] / 2.0) + 1.0 / (2.0 * phi[f])) / fcd_b
          for f in good}
    area = {f: ec2.bar_area(phi[f]) for f in good}

    def sigma(M, f):  # design stress of the bars at the critical section, MPa
        with np.errstate(divide="ignore", invalid="ignore"):
            ratio = np.where(MRd[f] > 0, M / np.where(MRd[f] > 0, MRd[f], 1.0), np.where(M > 0, 1.0, 0.0))
        return f_yd * np.minimum(np.maximum(ratio, 0.0), 1.0)

    def anchored(M, f, l_av):
        return mandrel_anchored(area[f] * sigma(M, f), l_av, phi[f], fbd[f], kb[f])

    def free_end(M, f, L):
        return mandrel_free_end(area[f] * sigma(M, f), L, cv + phi[f] + d[f], kb[f])

    beyond_toe, beyond_heel = bt + ts - cv, bh + ts - cv  # from the stem faces to the base ends
    eq81 = {
        "starter, back face": anchored(pos["stem"], "stem", embed),
        "starter, front face": anchored(neg["stem"], "stem_front", embed),
        "heel bars, heel end": np.maximum(free_end(pos["heel"], "heel", bh),
                                          anchored(neg["toe"], "heel", beyond_heel)),
        "heel bars, toe end": np.maximum(free_end(neg["toe"], "heel", bt),
                                         anchored(pos["heel"], "heel", beyond_toe)),
        "toe bars, toe end": np.maximum(free_end(pos["toe"], "toe", bt),
                                        anchored(neg["heel"], "toe", beyond_toe)),
        "toe bars, heel end": np.maximum(free_end(neg["heel"], "toe", bh),
                                         anchored(pos["toe"], "toe", beyond_heel)),
    }
    # the far ends: bent where a reverse moment loads them or the straight length beyond
    # the stem does not anchor the bar (8.4.4)
    far_bent = {
        "heel": (neg["toe"] > 0) | (beyond_toe < _lbd_straight(phi["heel"], sigma(pos["heel"], "heel"), fbd["heel"])),
        "toe": (neg["heel"] > 0) | (beyond_heel < _lbd_straight(phi["toe"], sigma(pos["toe"], "toe"), fbd["toe"]))}
    room = {"stem": 2.0 * (embed - phi["stem"]), "stem_front": 2.0 * (embed - phi["stem_front"])}
    for f in ("heel", "toe"):
        fits = leg >= shapes.min_end_projection(phi[f]) - 1e-9
        room[f] = np.where(fits, 2.0 * np.maximum(leg - 6.0 * phi[f], 0.0), 0.0)

    checks: list[CheckArray] = []
    radii: dict[str, list] = {}
    for case, f, end in BENDS:
        m = np.maximum(eq81[case], ec2.mandrel_min_table(phi[f]))
        if end == "far":
            m = np.where(far_bent[f], m, 0.0)
        checks.append(CheckArray("bar_bend", "ULS", case, "mm", CL_BEND, m, room[f]))
        r_std = shapes.min_radius(phi[f])
        R = np.where(m <= shapes.min_former(phi[f]) + 1e-9, r_std,
                     np.maximum(r_std, np.ceil(np.round(m / 10.0, 6)) * 5.0))
        floor = floors.get((f, end))
        if floor is not None:  # per row, nan where the row has none
            R = np.where(np.isnan(floor), R, np.maximum(R, floor))
        if end == "bend":
            radii[f] = [R, None]
        else:
            radii[f][1] = np.where(far_bent[f], R, np.nan)
    return checks, radii, embed


# --- envelopes --------------------------------------------------------------------------

def _full(x, n: int) -> np.ndarray:
    """x as a float array of shape (n,) (a view when it already is one)."""
    if type(x) is np.ndarray and x.shape == (n,) and x.dtype == np.float64:
        return x
    return np.broadcast_to(np.asarray(x, dtype=float), (n,))


#: Widest span of whole numbers :func:`distinct_values` counts in a table.
TABLE_SPAN = 1 << 16


def distinct_values(x) -> tuple[np.ndarray, np.ndarray]:
    """``np.unique(x, return_inverse=True)`` of a float array, (distinct values in
    increasing order, (m,); the index of every entry among them, (n,)). Where every
    value is a whole number within ``TABLE_SPAN`` (a grid's thicknesses in mm), they
    are counted in a table instead of sorted: the same two arrays in O(n)."""
    x = np.asarray(x, dtype=float).reshape(-1)
    if len(x) and np.all(np.isfinite(x)) and np.ptp(x) < TABLE_SPAN:
        k = x.astype(np.int64)
        if np.array_equal(k, x):
            k -= k.min()
            present = np.zeros(int(k.max()) + 1, dtype=bool)
            present[k] = True
            rank = np.cumsum(present)[k] - 1
            u = np.empty(int(rank.max()) + 1)
            u[rank] = x  # each distinct value, as given
            return u, rank
    return np.unique(x, return_inverse=True)


def distinct_rows(*columns: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """The distinct rows of equal-length columns (exact equality of the values; nan is
    never equal): (index of the first row of each distinct one, (m,); the distinct
    row of every row, (n,)), so that ``col[first][inv]`` equals ``col``."""
    cols = [np.asarray(c, dtype=float) for c in columns]
    n = len(cols[0])
    if n == 0:
        return np.zeros(0, dtype=np.int64), np.zeros(0, dtype=np.int64)
    order = np.lexsort(cols[::-1])
    new = np.zeros(n, dtype=bool)
    new[0] = True
    for c in cols:
        v = c[order]
        new[1:] |= v[1:] != v[:-1]
    inv = np.empty(n, dtype=np.int64)
    inv[order] = np.cumsum(new) - 1
    return order[new], inv


@dataclass(frozen=True)
class StemMomentTable:
    """The ULS stem moment envelope of n candidates tabulated at k depths, for the
    curtailment: ``M`` (k, m) kNm/m, column j at the depths ``frac`` (k,) x ``hc[j]``
    below the top of the checked stem (``hc`` (m,), m); ``column`` (n,): the column of
    each candidate (candidates whose stem moments are equal share one). Called with
    depths y (m, (n,)) it gives the moment by linear interpolation in the table.

    Conservative: the stem moment is convex in the depth (its second derivative is the
    pressure on the stem, >= 0), so a chord lies on or above it and the interpolated
    moment is never below the true one (bars only ever stop later)."""

    M: np.ndarray
    frac: np.ndarray
    hc: np.ndarray
    column: np.ndarray

    def __call__(self, y) -> np.ndarray:
        n, k = len(self.column), len(self.frac)
        hc = self.hc[self.column]
        y = np.broadcast_to(np.asarray(y, dtype=float), (n,))
        with np.errstate(divide="ignore", invalid="ignore"):
            t = np.where(hc > 0, np.clip(y / np.where(hc > 0, hc, 1.0), 0.0, 1.0), 0.0) * (k - 1)
        i = np.minimum(np.floor(t).astype(int), k - 2)
        a = t - i
        return (1.0 - a) * self.M[i, self.column] + a * self.M[i + 1, self.column]

    def take(self, rows) -> "StemMomentTable":
        """The table of the candidates ``rows`` only."""
        return dataclasses.replace(self, column=self.column[rows])


def _envelopes(actions: list[MemberActions], n: int):
    pos = {m: np.zeros(n) for m in ("stem", "heel", "toe")}
    neg = {m: np.zeros(n) for m in ("stem", "heel", "toe")}
    for a in actions:
        M = _full(a.M_Ed, n)
        pos[a.member] = np.maximum(pos[a.member], M)
        neg[a.member] = np.maximum(neg[a.member], -M)
    return pos, neg


def _qp(qp: dict, n: int):
    return {m: _full(qp.get(m, 0.0), n) for m in ("stem", "heel", "toe")}


# --- public -------------------------------------------------------------------------------

def design_reinforcement(sec: SectionArrays, actions: list[MemberActions], qp: dict[str, np.ndarray],
                         basis: Basis, stem_moment_at=None, stem_height_m=None,
                         limit: float = 1.0) -> StructureResult:
    """Choose the cheapest bars per candidate and check them (design-basis section 5).

    A main face takes the cheapest (bar, spacing) that meets its As,req, the minima and
    crack control, and also (docs/basis-readings.md, "bars a face can hold") the
    tension steel rho_l that VRd,c needs for the face's shear (EN 1992-1-1 6.2.2,
    :func:`shear_on_faces`), and in the base a bar size whose end bend fits the base
    (:func:`base_bar_limit`). These two only change the bars of a candidate whose
    cheapest bars would fail its ``*_shear`` or ``bar_bend`` check; where no option
    meets them, the bars are chosen without them and that check fails.

    sec: n candidates; actions: ULS MemberActions (kNm/m, kN/m); qp: quasi-permanent
    moments per member ``stem``/``heel``/``toe``, kNm/m; stem_moment_at(y): ULS envelope
    stem moment at depth y (m, array (n,)) below the top of the checked stem, kNm/m, for
    curtailment; stem_height_m: height of the checked stem from the top of the base to
    z_top, m, float or (n,) (estimated from stem_moment_at, or from M/V, when omitted:
    it only enters the steel mass and the curtailment); limit: the bars are chosen for
    the actions over it, ``design.max_utilization`` (the minima, the restraint steel
    among them, at 1.0).
    """
    n = len(sec)
    fck = basis.concrete.fck_mpa
    opt = _options(basis)
    cv, cg = basis.concrete.cover_mm, basis.concrete.cover_ground_mm
    t_stem = np.asarray(sec.stem_base_m, dtype=float) * 1000.0
    t_base = np.asarray(sec.base_thickness_m, dtype=float) * 1000.0
    pos, neg = _envelopes(actions, n)
    q = _qp(qp, n)
    env = (pos, neg)
    if limit < 1.0:  # the bars are chosen for the actions over the limit
        pos = {m: v / limit for m, v in pos.items()}
        neg = {m: v / limit for m, v in neg.items()}
        q_choice = {m: v / limit for m, v in q.items()}
    else:
        q_choice = q
    zero = np.zeros(n)
    false = np.zeros(n, dtype=bool)
    true = ~false

    V_face = shear_on_faces(actions, n)
    if limit < 1.0:
        V_face = {f: v / limit for f, v in V_face.items()}
    top_M = np.maximum(pos["heel"], neg["toe"])
    bot_M = np.maximum(pos["toe"], neg["heel"])
    top_qp = np.maximum(np.maximum(q_choice["heel"], -q_choice["toe"]), 0)
    bot_qp = np.maximum(np.maximum(q_choice["toe"], -q_choice["heel"]), 0)
    # the stem's bars depend on its thickness and actions alone: they are chosen once
    # for each distinct (thickness, ULS moments, quasi-permanent moment, shears), which
    # the candidates differing only in their base share
    first, inv = distinct_rows(t_stem, pos["stem"], neg["stem"], q_choice["stem"],
                               V_face["stem"], V_face["stem_front"])
    m = len(first)
    ts_u, ps_u, ns_u, qs_u, vb_u, vf_u = (v[first] for v in (
        t_stem, pos["stem"], neg["stem"], q_choice["stem"], V_face["stem"],
        V_face["stem_front"]))
    # the four main faces in one call (rows stacked face by face; every row is chosen
    # on its own, so the result is that of four separate calls)
    cat = np.concatenate
    zm = np.zeros(m)
    i_back, i_front, i_top, i_bot = np.split(_choose_main(
        opt, cat([ts_u, ts_u, t_base, t_base]),
        cat([np.full(m, float(cv)), np.full(m, float(cv)), np.full(n, float(cv)), np.full(n, float(cg))]),
        cat([ps_u, ns_u, top_M, bot_M]),
        cat([np.maximum(qs_u, 0), np.maximum(-qs_u, 0), top_qp, bot_qp]),
        cat([zm, 0.001 * 1000 * ts_u, zero, zero]),
        cat([np.ones(m, dtype=bool), ns_u > 0, true, true]), fck, basis,
        cat([np.full(2 * m, np.inf), np.tile(base_bar_limit(opt.sizes, t_base, cv, cg), 2)]),
        cat([vb_u, vf_u, V_face["heel"], V_face["toe"]])),
        [m, 2 * m, 2 * m + n])
    need_h = _horizontal_need(opt.As[i_back], opt.As[i_front], ts_u)
    need_d = _distribution_need(opt.As[i_top], opt.As[i_bot])
    i_hor, i_dist = np.split(_choose_secondary(opt, cat([ts_u, t_base]), cat([need_h, need_d]), basis), [m])
    i_back, i_front, i_hor = i_back[inv], i_front[inv], i_hor[inv]
    chosen = {f: (opt.phi[i], opt.s[i]) for f, i in
              zip(FACES, (i_back, i_front, i_top, i_bot, i_hor, i_dist))}
    return _evaluate(sec, actions, q, basis, chosen, stem_moment_at, stem_height_m, env)


def check_reinforcement(sec: SectionArrays, actions: list[MemberActions], qp: dict[str, np.ndarray],
                        basis: Basis, given, stem_moment_at=None,
                        stem_height_m=None, cage_of=None) -> StructureResult:
    """Check given bars (a catalogue type, a type of a rationalised set) with the checks of
    :func:`design_reinforcement`.

    ``given``: one :class:`Reinforcement` for every row; or, with ``cage_of`` (the index
    into ``given`` of each row's cage), a sequence of them (several types checked in
    one call; each row's numbers depend on its own row and cage only). Where a cage's
    ``stem_front`` is None (the catalogue lists no front-face bars) the front face is
    designed as in :func:`design_reinforcement`. Starters, laps and bends are detailed
    for the given bars as in :func:`design_reinforcement`; a bend radius the given bars
    carry (``bend_r_mm``, ``far_bend_r_mm``, of the heel and toe bars and the starters)
    is kept where it is larger than the one needed. A cage's ``stem_curtail_m`` is not
    read: the curtailment is worked out for each row.
    """
    n = len(sec)
    cages = (given,) if cage_of is None else tuple(given)
    pick = (np.zeros(n, dtype=np.intp) if cage_of is None
            else np.asarray(cage_of, dtype=np.intp))

    def col(get):  # each row's value of its cage, float (nan where get gives None)
        return np.array([np.nan if get(c) is None else float(get(c)) for c in cages])[pick]

    chosen = {f: (col(lambda c, f=f: getattr(c, f).bar_mm),
                  col(lambda c, f=f: getattr(c, f).spacing_mm))
              for f in ("stem", "heel", "toe", "stem_horizontal", "base_distribution")}
    front = np.array([c.stem_front is not None for c in cages])[pick]
    if front.any():
        chosen["stem_front"] = (col(lambda c: c.stem_front and c.stem_front.bar_mm),
                                col(lambda c: c.stem_front and c.stem_front.spacing_mm))
    if not front.all():
        fck = basis.concrete.fck_mpa
        opt = _options(basis)
        t_stem = np.asarray(sec.stem_base_m, dtype=float) * 1000.0
        _, neg = _envelopes(actions, n)
        q = _qp(qp, n)
        i = _choose_main(opt, t_stem, basis.concrete.cover_mm, neg["stem"], np.maximum(-q["stem"], 0),
                         0.001 * 1000 * t_stem, neg["stem"] > 0, fck, basis)
        designed = (opt.phi[i], opt.s[i])
        chosen["stem_front"] = (designed if not front.any() else
                                tuple(np.where(front, g, d_)
                                      for g, d_ in zip(chosen["stem_front"], designed)))
    floors = {}
    for f, part in (("heel", "heel"), ("toe", "toe"), ("stem", "starter"),
                    ("stem_front", "starter_front")):
        for end, attr in (("bend", "bend_r_mm"), ("far", "far_bend_r_mm")):
            v = col(lambda c: getattr(getattr(c, part), attr, None)
                    if getattr(c, part) is not None else None)
            if not np.isnan(v).all():
                floors[(f, end)] = v  # nan: no floor in that row
    return _evaluate(sec, actions, _qp(qp, n), basis, chosen, stem_moment_at, stem_height_m,
                     floors=floors)


def _horizontal_need(As_back, As_front, t_stem):
    """Stem horizontal steel per face, mm2/m: half of max(0.25 As,vert, 0.001 Ac) (9.6.3, basis 5)."""
    return 0.5 * np.maximum(0.25 * (As_back + As_front), 0.001 * 1000.0 * t_stem)


def _distribution_need(As_top, As_bot):
    """Base distribution steel per mat, mm2/m: 20 % of the larger main mat (9.3.1.1(2))."""
    return 0.2 * np.maximum(As_top, As_bot)


# --- detailing helpers shared with bars.py ---------------------------------------------------

def starter_embedment_mm(t_base_mm, cover_ground_mm, phi_bottom_mm, phi_dist_mm):
    """Vertical leg of a stem starter inside the base, mm: from the top of the base down to
    the level where the foot rests on the bottom mat (the transverse bottom bars and the
    distribution bars beneath the foot)."""
    return t_base_mm - cover_ground_mm - phi_bottom_mm - phi_dist_mm


def starter_foot_mm(phi, lbd, embed):
    """Foot (horizontal leg) of a stem starter, mm: the embedment below the top of the base
    plus the foot gives at least lbd (8.4.4, alpha factors 1.0), and the foot is at least
    12 phi (wallrun's detailing minimum, common practice for a foot that can be tied)."""
    return np.maximum(lbd - embed, 12.0 * np.asarray(phi, dtype=float))


def _estimate_stem_height(actions, n, stem_moment_at, pos):
    """Checked stem height, m, when the caller did not give it.

    With stem_moment_at: the depth where the envelope moment reaches the stem-base
    envelope moment (bisection; the moment grows with depth). Otherwise 2.5 M/V of the
    stem action with the largest moment (M/V lies between h/3 for a triangle and h/2
    for a uniform pressure).
    """
    M = pos["stem"]
    if stem_moment_at is not None:
        lo, hi = np.zeros(n), np.full(n, 0.5)
        for _ in range(8):  # grow hi until M(hi) >= M
            grow = np.asarray(stem_moment_at(hi), dtype=float) < M
            if not grow.any():
                break
            hi = np.where(grow, hi * 2.0, hi)
        for _ in range(30):
            mid = 0.5 * (lo + hi)
            low = np.asarray(stem_moment_at(mid), dtype=float) < M
            lo, hi = np.where(low, mid, lo), np.where(low, hi, mid)
        return hi
    best_M, best_V = np.zeros(n), np.zeros(n)
    for a in actions:
        if a.member != "stem":
            continue
        Ma = _full(a.M_Ed, n)
        Va = _full(a.V_Ed, n)
        more = Ma > best_M
        best_M, best_V = np.where(more, Ma, best_M), np.where(more, Va, best_V)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(best_V > 0, 2.5 * best_M / np.where(best_V > 0, best_V, 1.0), 0.0)


def _curtailment(sec, basis, fck, phi, s, As, h_s, stem_moment_at, M_base, qp_base):
    """Height above the top of the base where half the stem main bars may stop, m (nan: none).

    Theoretical cut: the height where the ULS envelope moment falls to the resistance of
    half the bars (with d of the tapered stem there); stop = cut + a_l + lbd with
    a_l = d at the base (9.2.1.3(2), conservative) and lbd of 8.4.4. Curtailment is
    refused where the remaining bars at 2 s would break the spacing limit min(3h, 400) at
    the stem top, or fail crack control (the quasi-permanent moment at the stop point
    taken as the ULS moment there x qp/ULS at the base), and the stop point is raised to
    where half the bars satisfy As,min of 9.2.1.1. nan where the stop is at or above the
    stem top less the cover.
    """
    n = len(sec)
    c = basis.concrete.cover_mm
    fyk = basis.steel.fyk_mpa
    tb = np.asarray(sec.stem_base_m, dtype=float) * 1000.0
    tt = np.asarray(sec.stem_top_m, dtype=float) * 1000.0
    hs = np.asarray(h_s, dtype=float) * 1000.0  # mm
    half = As / 2.0

    def d_at_depth(y_mm):  # d of the back bars at depth y below z_top
        with np.errstate(divide="ignore", invalid="ignore"):
            frac = np.where(hs > 0, np.clip(y_mm / np.where(hs > 0, hs, 1.0), 0, 1), 1.0)
        return tt + (tb - tt) * frac - c - phi / 2.0

    lo, hi = np.zeros(n), hs.copy()
    # g(y) = M(y) - MRd,half(y) grows with depth y; bisection to 1/65,536 of the stem
    # height, keeping lo (g <= 0): the cut taken is never below the true one, so the
    # bars stop no lower than they may
    for _ in range(16):
        mid = 0.5 * (lo + hi)
        g = (np.asarray(stem_moment_at(mid / 1000.0), dtype=float)
             - ec2.moment_resistance(half, d_at_depth(mid), fck, fyk, basis.concrete.alpha_cc))
        lo, hi = np.where(g <= 0, mid, lo), np.where(g <= 0, hi, mid)
    y_cut = lo
    g_base = M_base - ec2.moment_resistance(half, d_at_depth(hs), fck, fyk, basis.concrete.alpha_cc)
    y_cut = np.where(g_base <= 0, hs, y_cut)
    d_base = tb - c - phi / 2.0
    lbd = ec2.anchorage_length(phi, fck, fyk, True)
    stop = (hs - y_cut) + d_base + lbd  # height above the top of the base, mm
    # As,min of the half bars: d at the stop must not exceed d_allow
    rate = np.maximum(0.26 * ec2.fctm(fck) / fyk, 0.0013) * 1000.0
    d_allow = half / rate
    # d(z) = tb - (tb - tt) z / hs - c - phi/2 <= d_allow  ->  z >= ...
    with np.errstate(divide="ignore", invalid="ignore"):
        z_min = np.where(tb > tt, (tb - c - phi / 2.0 - d_allow) * hs / np.where(tb > tt, tb - tt, 1.0),
                         np.where(d_base <= d_allow, 0.0, np.inf))
    stop = np.maximum(stop, z_min)
    # crack control of the half bars at the stop point (qp moment scaled from the base)
    y_stop = np.clip(hs - stop, 0.0, None)
    M_stop = np.asarray(stem_moment_at(y_stop / 1000.0), dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = np.where(M_base > 0, np.maximum(qp_base, 0) / np.where(M_base > 0, M_base, 1.0), 0.0)
    d_stop = d_at_depth(y_stop)
    t_stop = d_stop + c + phi / 2.0
    sig = ec2.steel_stress_cracked(M_stop * ratio, half, d_stop, ec2.alpha_e_long_term(fck))
    crack_ok = ec2.crack_control_ok(sig, 2 * s, phi, t_stop, d_stop, fck, basis.design.crack_width_mm)
    ok = (2 * s <= ec2.max_spacing_main(tt)) & crack_ok & (stop < hs - c) & (hs > 0)
    stop_m = np.ceil(np.round(stop / 50.0, 6)) * 0.05  # rounded up to 50 mm
    return np.where(ok & (stop_m * 1000.0 < hs - c), stop_m, np.nan)


def _evaluate(sec, actions, q, basis, chosen, stem_moment_at, stem_height_m, env=None,
              floors=None) -> StructureResult:
    n = len(sec)
    fck = basis.concrete.fck_mpa
    fyk, acc, wk = basis.steel.fyk_mpa, basis.concrete.alpha_cc, basis.design.crack_width_mm
    cv, cg = basis.concrete.cover_mm, basis.concrete.cover_ground_mm
    t_stem = np.asarray(sec.stem_base_m, dtype=float) * 1000.0
    t_base = np.asarray(sec.base_thickness_m, dtype=float) * 1000.0
    pos, neg = env if env is not None else _envelopes(actions, n)
    ae = ec2.alpha_e_long_term(fck)

    phi = {f: np.asarray(chosen[f][0], dtype=float) for f in FACES}
    s = {f: np.asarray(chosen[f][1], dtype=float) for f in FACES}
    As = {f: ec2.area_per_m(phi[f], s[f]) for f in FACES}
    h = {"stem": t_stem, "stem_front": t_stem, "heel": t_base, "toe": t_base,
         "stem_horizontal": t_stem, "base_distribution": t_base}
    d = {"stem": t_stem - cv - phi["stem"] / 2, "stem_front": t_stem - cv - phi["stem_front"] / 2,
         "heel": t_base - cv - phi["heel"] / 2, "toe": t_base - cg - phi["toe"] / 2,
         "stem_horizontal": t_stem - cv - phi["stem"] - phi["stem_horizontal"] / 2,
         "base_distribution": t_base - cv - phi["heel"] - phi["base_distribution"] / 2}
    # the four main faces stacked (rows: stem, stem_front, heel, toe; the same formulas
    # per row as one face at a time)
    F4 = ("stem", "stem_front", "heel", "toe")
    As4 = np.vstack([As[f] for f in F4])
    d4 = np.vstack([d[f] for f in F4])
    MRd4 = ec2.moment_resistance(As4, d4, fck, fyk, acc)
    VRd4 = ec2.shear_resistance(As4, d4, fck)
    row = {f: k for k, f in enumerate(F4)}
    main_face = {"stem": "stem", "heel": "heel", "toe": "toe"}
    opp_face = {"stem": "stem_front", "heel": "toe", "toe": "heel"}

    checks: list[CheckArray] = []
    if actions:
        Ms = np.vstack([_full(a.M_Ed, n) for a in actions])
        Vs = np.vstack([_full(a.V_Ed, n) for a in actions])
        main = np.array([row[main_face[a.member]] for a in actions])[:, None]
        opp = np.array([row[opp_face[a.member]] for a in actions])[:, None]
        # the face in tension of every action and candidate, as flat indices of (4, n)
        at = np.where(Ms >= 0, main, opp) * n + np.arange(n)
        RM, RV = MRd4.ravel().take(at), VRd4.ravel().take(at)
        aM, aV = np.abs(Ms), np.abs(Vs)
        for k, a in enumerate(actions):
            checks.append(CheckArray(f"{a.member}_bending", a.combination, a.case, "kNm/m",
                                     CL_BENDING, aM[k], RM[k]))
            checks.append(CheckArray(f"{a.member}_shear", a.combination, a.case, "kN/m",
                                     CL_SHEAR, aV[k], RV[k]))

    # demands per face: ULS moment and quasi-permanent moment on the face in tension
    M_face = {"stem": pos["stem"], "stem_front": neg["stem"],
              "heel": np.maximum(pos["heel"], neg["toe"]), "toe": np.maximum(pos["toe"], neg["heel"])}
    qp_face = {"stem": np.maximum(q["stem"], 0), "stem_front": np.maximum(-q["stem"], 0),
               "heel": np.maximum(np.maximum(q["heel"], -q["toe"]), 0),
               "toe": np.maximum(np.maximum(q["toe"], -q["heel"]), 0)}
    h4 = np.vstack([h[f] for f in F4])
    sig4 = ec2.steel_stress_cracked(np.vstack([qp_face[f] for f in F4]), As4, d4, ae)
    dia_ok4 = np.vstack([phi[f] for f in F4]) <= ec2.max_bar_diameter(sig4, h4, d4, fck, wk)
    s_crack4 = np.where((sig4 <= 0) | dia_ok4, np.inf, ec2.max_bar_spacing(sig4, wk))
    s_allow4 = np.minimum(ec2.max_spacing_main(h4), s_crack4)
    for k, f in enumerate(F4):
        checks.append(CheckArray("crack_spacing", "SLS", f, "mm", CL_CRACK, s[f], s_allow4[k]))
    for f in ("stem_horizontal", "base_distribution"):
        checks.append(CheckArray("crack_spacing", "SLS", f, "mm", "EN 1992-1-1 9.3.1.1(3)", s[f],
                                 ec2.max_spacing_secondary(h[f])))

    as_min = {f: ec2.as_min_beam(d[f], fck, fyk) for f in ("stem", "heel", "toe")}
    as_min["stem_front"] = np.maximum(0.001 * 1000 * t_stem,
                                      np.where(neg["stem"] > 0, ec2.as_min_beam(d["stem_front"], fck, fyk), 0))
    as_min["stem_horizontal"] = _horizontal_need(As["stem"], As["stem_front"], t_stem)
    as_min["base_distribution"] = _distribution_need(As["heel"], As["toe"])
    clause = {"stem": CL_MIN, "heel": CL_MIN, "toe": CL_MIN, "stem_front": CL_MIN_WALL,
              "stem_horizontal": CL_MIN_WALL, "base_distribution": CL_MIN_DIST}
    for f in FACES:
        checks.append(CheckArray("min_steel", "SLS", f, "mm2/m", clause[f], as_min[f], As[f]))
    as_restraint = {}
    if basis.design.restraint_steel:
        for f in ("stem_horizontal", "base_distribution"):
            as_restraint[f] = restraint_need(phi[f], h[f], basis)
            checks.append(CheckArray("restraint_steel", "SLS", f, "mm2/m", CL_RESTRAINT,
                                     as_restraint[f], As[f]))
    for f in ("stem", "stem_front", "heel", "toe"):
        checks.append(CheckArray("min_steel", "SLS", f"{f}, As,max", "mm2/m", "EN 1992-1-1 9.2.1.1(3)",
                                 As[f], ec2.as_max(h[f])))

    # reported requirement per face
    as_req = {f: np.maximum(ec2.as_required(M_face[f], d[f], fck, fyk, acc), as_min[f])
              for f in ("stem", "stem_front", "heel", "toe")}
    for f in ("stem_horizontal", "base_distribution"):
        as_req[f] = np.maximum(as_min[f], as_restraint[f]) if f in as_restraint else as_min[f]

    # bends (8.3) and starters (8.7.3)
    MRd = {f: MRd4[k] for k, f in enumerate(F4)}
    bend_checks, radii, embed = _bends(sec, basis, phi, s, d, MRd, pos, neg, floors or {})
    checks += bend_checks
    bars = {f: BarArrays(phi[f], s[f], As[f], as_req[f], d[f]) for f in FACES}
    for f in ("heel", "toe"):
        bars[f] = BarArrays(phi[f], s[f], As[f], as_req[f], d[f], radii[f][0], radii[f][1])
    kicker = float(basis.concrete.kicker_mm)
    starters = {}
    for name, f in (("starter", "stem"), ("starter_front", "stem_front")):
        lbd = ec2.anchorage_length(phi[f], fck, fyk, True)
        foot = np.maximum(starter_foot_mm(phi[f], lbd, embed), shapes.min_leg(phi[f], radii[f][0]))
        starters[name] = StarterArrays(
            BarArrays(phi[f], s[f], As[f], as_req[f], d[f], radii[f][0]),
            ec2.lap_length(phi[f], fck, fyk, True), kicker, embed, foot)

    # stem height, curtailment and mass
    if stem_height_m is None:
        h_s = _estimate_stem_height(actions, n, stem_moment_at, pos)
    else:
        h_s = _full(stem_height_m, n)
    curtail = None
    if isinstance(stem_moment_at, StemMomentTable):
        # once for each distinct stem: the candidates sharing a moment column, stem
        # thicknesses, stem bars, height and base moments share the curtailment
        first, inv = distinct_rows(stem_moment_at.column, sec.stem_base_m, sec.stem_top_m,
                                   phi["stem"], s["stem"], h_s, pos["stem"], q["stem"])
        curtail = _curtailment(sec.subset(first), basis, fck, phi["stem"][first],
                               s["stem"][first], As["stem"][first], h_s[first],
                               stem_moment_at.take(first), pos["stem"][first],
                               q["stem"][first])[inv]
    elif stem_moment_at is not None:
        curtail = _curtailment(sec, basis, fck, phi["stem"], s["stem"], As["stem"], h_s, stem_moment_at,
                               pos["stem"], q["stem"])
    kg = _steel_mass(sec, basis, fck, phi, s, h_s, curtail, starters, np.isfinite(radii["heel"][1]),
                     np.isfinite(radii["toe"][1]))
    return StructureResult(checks=checks, steel_kg_per_m=kg, bars=bars, stem_curtail_m=curtail,
                           starters=starters)


def _steel_mass(sec, basis, fck, phi, s, h_s, curtail, starters, heel_far, toe_far):
    """Approximate steel mass per metre run of wall, kg/m (for the search cost).

    Stem vertical bars of both faces: L-shaped starters (embedment + foot + kicker + lap
    l0) plus bars from the kicker over the checked stem height (curtailed half bars to
    their stop); horizontal bars both faces over the stem height, +l0 per 12 m stock
    length; both base mats across the base width less covers, with a leg from the top to
    the bottom cover at each bent end (heel bars at the heel end, toe bars at the toe
    end, and the far ends ``heel_far`` / ``toe_far`` where bent); distribution bars both
    mats, +l0 per 12 m; key U-bars at the toe bar spacing. The bends' length allowances
    (BS 8666) and the stem above z_top (not known here) are left out.
    """
    fyk = basis.steel.fyk_mpa
    cv, cg = basis.concrete.cover_mm, basis.concrete.cover_ground_mm
    kicker = float(basis.concrete.kicker_mm)
    B = np.asarray(sec.base_width_m, dtype=float) * 1000.0
    tb = np.asarray(sec.base_thickness_m, dtype=float) * 1000.0
    hs = np.asarray(h_s, dtype=float) * 1000.0
    mpm = {f: ec2.mass_per_m(phi[f]) for f in FACES}
    total = np.zeros(len(sec))
    for f, name in (("stem", "starter"), ("stem_front", "starter_front")):
        st = starters[name]
        starter = st.embedment_mm + st.foot_mm + np.minimum(kicker + st.lap_mm, np.maximum(hs - cv, 0.0))
        upper = np.maximum(hs - cv - kicker, 0.0)
        if f == "stem" and curtail is not None:
            stop = np.maximum(np.nan_to_num(curtail) * 1000.0 - kicker, 0.0)
            upper = np.where(np.isfinite(curtail), 0.5 * upper + 0.5 * stop, upper)
        total += mpm[f] * (1000.0 / s[f]) * (starter + upper) / 1000.0
    lap_frac = lambda f: 1.0 + ec2.lap_length(phi[f], fck, fyk, f != "base_distribution") / STOCK_LENGTH_MM  # noqa: E731
    n_hor = np.floor(np.maximum(hs - 2 * cv, 0.0) / s["stem_horizontal"]) + 1
    total += 2 * n_hor * mpm["stem_horizontal"] * lap_frac("stem_horizontal")
    leg = np.maximum(tb - cv - cg, 0.0)
    for f, far in (("heel", heel_far), ("toe", toe_far)):
        total += mpm[f] * (1000.0 / s[f]) * (B - 2 * cv + leg * (1.0 + far)) / 1000.0
    n_dist = np.floor(np.maximum(B - 2 * cv, 0.0) / s["base_distribution"]) + 1
    total += 2 * n_dist * mpm["base_distribution"] * lap_frac("base_distribution")
    kd = np.asarray(sec.key_depth_m, dtype=float) * 1000.0
    kw = np.asarray(sec.key_width_m, dtype=float) * 1000.0
    key_len = 2 * (kd + tb - cg - cv) + np.maximum(kw - 2 * cg, 0)
    total += np.where(kd > 0, mpm["toe"] * (1000.0 / s["toe"]) * key_len / 1000.0, 0.0)
    return total


def steel_mass_floor(sec: SectionArrays, stem_height_m, basis: Basis) -> np.ndarray:
    """A lower bound of the steel mass per metre run (kg/m) of every design of these
    sections that passes its detailing checks, whatever its bars: the mass
    :func:`_steel_mass` gives (full-height or curtailed stem bars) is never below it.

    Each face carries at least its minimum area (mm2/m), from the checks of
    :func:`_evaluate` (met at utilization 1.0; the bound is taken a part in a million
    lower for the tolerance of that test):

    - stem back face, heel and toe mats: As,min of EN 1992-1-1 9.2.1.1(1) Eq. 9.1N at the
      least effective depth any listed bar gives (h - cover - phi_max / 2; As,min grows
      with d);
    - stem front face: 0.001 Ac (9.6.2(1), design basis 5);
    - stem horizontal bars per face: half of max(0.25 (As,back + As,front), 0.001 Ac)
      (9.6.3(1)) and, with ``design.restraint_steel``, the restraint steel of 7.3.2(2)
      Eq. 7.1 for the listed bar size needing least (:func:`restraint_need`);
    - base distribution bars per mat: 20 % of the larger main mat (9.3.1.1(2)) and the
      restraint steel of the base thickness, alike.

    Each over the least length :func:`_steel_mass` gives it: stem bars over the stem
    above the kicker (the back face's half where curtailed; starters, feet and laps
    are >= 0 and left out), base mats over B - 2 covers (legs left out), horizontal
    bars over h_s - 2 covers per face and distribution bars over B - 2 covers per mat
    (a count floor(L / s) + 1 >= L / s, laps >= 0 left out); key bars left out. Mass
    7850 kg/m3 (``ec2.STEEL_DENSITY``). ``stem_height_m``: the checked stem height the
    mass is taken over (m, (n,)).
    """
    fck, fyk = basis.concrete.fck_mpa, basis.steel.fyk_mpa
    cv, cg = basis.concrete.cover_mm, basis.concrete.cover_ground_mm
    sizes = np.asarray(basis.steel.bar_sizes_mm, dtype=float)
    half_phi = float(sizes.max()) / 2.0
    t_stem = np.asarray(sec.stem_base_m, dtype=float) * 1000.0
    t_base = np.asarray(sec.base_thickness_m, dtype=float) * 1000.0
    B = np.asarray(sec.base_width_m, dtype=float) * 1000.0
    hs = np.asarray(stem_height_m, dtype=float) * 1000.0
    a_min = lambda d: ec2.as_min_beam(np.maximum(d, 0.0), fck, fyk)  # noqa: E731
    back, heel, toe = a_min(t_stem - cv - half_phi), a_min(t_base - cv - half_phi), a_min(t_base - cg - half_phi)
    front = 0.001 * 1000.0 * t_stem
    hor = _horizontal_need(back, front, t_stem)
    dist = _distribution_need(heel, toe)
    if basis.design.restraint_steel:
        def least(h):  # per distinct thickness (a grid has few), then spread
            u, inv = distinct_values(h)
            r = np.min(restraint_need(sizes[None, :], u[:, None], basis), axis=1)
            return np.nan_to_num(r, posinf=0.0)[inv.reshape(-1)]
        hor = np.maximum(hor, least(t_stem))
        dist = np.maximum(dist, least(t_base))
    stem_len = np.maximum(hs - cv - float(basis.concrete.kicker_mm), 0.0)
    base_len = np.maximum(B - 2.0 * cv, 0.0)
    area_length = ((0.5 * back + front) * stem_len + (heel + toe) * base_len
                   + 2.0 * hor * np.maximum(hs - 2.0 * cv, 0.0) + 2.0 * dist * base_len)  # mm2/m x mm
    return area_length * 1e-9 * ec2.STEEL_DENSITY * (1.0 - 1e-6)

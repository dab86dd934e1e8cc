"""Partial factor sets of EN 1997-1:2004 Annex A (recommended values), and the set of
the seismic design situation (EN 1998-5 3.1(3)).

Design-basis sections 4 and 10. A national annex may change any value; ``site.toml``
``[factors.<set>]`` tables override them key by key (``[factors.seismic]``: only the
material factors g_phi, g_c, g_cu).
"""

from __future__ import annotations

from dataclasses import dataclass, replace

from wallrun.rules import Rule


@dataclass(frozen=True)
class FactorSet:
    """One set of partial factors (dimensionless).

    gG_unfav, gG_fav: permanent actions, unfavourable / favourable (A.1, A.2).
    gQ: variable actions, unfavourable (favourable variable actions take 0).
    g_phi, g_c, g_cu: soil parameters tan phi', c', cu (A.2, A.4).
    gR_bearing, gR_sliding, gR_passive: resistances (A.5, A.13).
    gR_slope: earth resistance for slopes and overall stability, gamma_R;e (A.14),
    dividing the resisting moment of the ``overall`` check (design-basis section 9).
    gG_unfav_ground: unfavourable permanent *ground* actions (soil weight, earth and
    water pressure); equal to gG_unfav except in DA3, where gG_unfav is the A1 factor
    on structural (concrete) actions and the ground actions take the A2 value.
    """

    name: str
    gG_unfav: float
    gG_fav: float
    gQ: float
    g_phi: float
    g_c: float
    g_cu: float
    gR_bearing: float = 1.0
    gR_sliding: float = 1.0
    gR_passive: float = 1.0
    gG_unfav_ground: float | None = None
    gR_slope: float = 1.0

    @property
    def gG_ground(self) -> float:
        """Factor on unfavourable permanent ground actions."""
        return self.gG_unfav if self.gG_unfav_ground is None else self.gG_unfav_ground


#: EN 1997-1 Annex A recommended values (Tables A.2, A.3, A.4, A.5, A.13, A.14).
RECOMMENDED: dict[str, FactorSet] = {
    "EQU": FactorSet("EQU", 1.10, 0.90, 1.50, 1.25, 1.25, 1.40),
    "DA1-1": FactorSet("DA1-1", 1.35, 1.00, 1.50, 1.00, 1.00, 1.00, 1.0, 1.0, 1.0),
    "DA1-2": FactorSet("DA1-2", 1.00, 1.00, 1.30, 1.25, 1.25, 1.40, 1.0, 1.0, 1.0),
    "DA2": FactorSet("DA2", 1.35, 1.00, 1.50, 1.00, 1.00, 1.00, 1.4, 1.1, 1.4, gR_slope=1.1),
    "DA3": FactorSet("DA3", 1.35, 1.00, 1.30, 1.25, 1.25, 1.40, 1.0, 1.0, 1.0,
                     gG_unfav_ground=1.00),
}

#: Keys a ``[factors.<set>]`` table may give.
OVERRIDE_KEYS = ("gG_unfav", "gG_fav", "gQ", "g_phi", "g_c", "g_cu",
                 "gR_bearing", "gR_sliding", "gR_passive", "gG_unfav_ground", "gR_slope")
#: The rule every override value is checked against: a partial factor, > 0 and <= 10.
OVERRIDE_RULE = Rule("float", lo=0.0, hi=10.0, lo_open=True)

#: Sets used by each design approach, EQU always included (design-basis section 4).
SETS_OF_APPROACH = {"DA1": ("EQU", "DA1-1", "DA1-2"), "DA2": ("EQU", "DA2"),
                    "DA3": ("EQU", "DA3")}


#: The seismic design situation, combination ``SEIS`` (design-basis 10): actions 1.0
#: (EN 1990 6.4.3.4, Eq. 6.12b; psi2 on the variable actions is applied by the seismic
#: module), materials by the recommended values of EN 1998-5 3.1(3) NOTE (gamma_phi' =
#: gamma_c' = 1.25, gamma_cu = 1.4), resistances 1.0.
SEISMIC = FactorSet("SEIS", 1.0, 1.0, 1.0, 1.25, 1.25, 1.40, 1.0, 1.0, 1.0)
#: The ``[factors.<set>]`` table name of the seismic set, and the keys it may give.
SEISMIC_TABLE = "seismic"
SEISMIC_KEYS = ("g_phi", "g_c", "g_cu")


def resolve(approach: str, overrides: dict[str, dict[str, float]] | None = None,
            seismic: bool = False) -> dict[str, FactorSet]:
    """Factor sets in use for ``approach``, with ``overrides`` applied key by key; with
    ``seismic`` also the set ``SEIS`` (:data:`SEISMIC` with the overrides of
    ``overrides["seismic"]``)."""
    overrides = overrides or {}
    out = {}
    for name in SETS_OF_APPROACH[approach]:
        out[name] = replace(RECOMMENDED[name], **overrides.get(name, {}))
    if seismic:
        out[SEISMIC.name] = replace(SEISMIC, **overrides.get(SEISMIC_TABLE, {}))
    return out


SLS = FactorSet("SLS", 1.0, 1.0, 1.0, 1.0, 1.0, 1.0)
"""Characteristic combination: every factor 1.0 (eccentricity_sls, bearing_sls)."""

"""The cautions every output carries, in one place.

wallrun is a preliminary design aid; these texts say so on the report, the drawings,
the workbook and ``design.json``, and list what wallrun does not check (design-basis
section 8, and the EN 1992-1-1 clauses the structural design leaves out).
"""

CAUTION = ("wallrun is a preliminary design aid. Every result is to be checked, and the "
           "design signed, by a qualified engineer under the local codes and the national "
           "annex in force.")

#: What wallrun does not check.
NOT_CHECKED = (
    "overall (deep-seated) stability of the slope and wall together",
    "settlement and tilt, beyond the middle-third rule and the edge-pressure ratio "
    "between neighbouring panels",
    "seismic actions",
    "compaction pressures from placing and compacting the backfill",
    "frost action and frost heave",
    "chemical attack on the concrete or the reinforcement (exposure and durability "
    "beyond the covers given)",
    "minimum reinforcement for crack control of restrained early-age and shrinkage "
    "strains (EN 1992-1-1 7.3.2)",
    "bearing stress inside bar bends (EN 1992-1-1 8.3); members are sized to need no "
    "shear reinforcement",
)

"""The cautions every output carries, in one place.

wallrun is a preliminary design aid; these texts say so on the report, the drawings,
the workbook and ``design.json``, and list what wallrun does not check for the site at
hand (design-basis section 8, and the EN 1992-1-1 clauses the structural design leaves
out). Writers take the list from :func:`not_checked` of the result's site, never a fixed
copy, so that a check turned on by the site is never listed and one turned off always is.
"""

CAUTION = ("wallrun is a preliminary design aid. Every result is to be checked, and the "
           "design signed, by a qualified engineer under the local codes and the national "
           "annex in force.")

#: Said, in place of a cost, where no panel could be designed.
NOTHING_DESIGNED = ("no panel could be designed, so nothing is measured or priced; the "
                    "reasons are in panels.csv")


def left_out(n: int) -> str:
    """Said with the quantities and cost where ``n`` panels (not all) could not be
    designed: they are not measured or priced."""
    return (f"{n} panel{'s' if n != 1 else ''} could not be designed and "
            f"{'are' if n != 1 else 'is'} left out of the quantities and cost; the reasons "
            "are in panels.csv")


OVERALL = "overall (deep-seated) stability of the slope and wall together (EN 1997-1 11.5.1)"
SEISMIC = "seismic actions (EN 1998-5)"
RESTRAINT = ("minimum reinforcement for crack control of restrained early-age and shrinkage "
             "strains (EN 1992-1-1 7.3.2)")
BENDS = "bearing stress inside bar bends (EN 1992-1-1 8.3)"  # checked: never listed

#: Never checked by wallrun, whatever the site says (design-basis section 8).
ALWAYS = (
    "settlement and tilt, beyond the middle-third rule and the edge-pressure ratio "
    "between neighbouring panels",
    "compaction pressures from placing and compacting the backfill",
    "frost action and frost heave",
    "chemical attack on the concrete or the reinforcement (exposure and durability "
    "beyond the covers given)",
    "shear reinforcement: members are sized to need none (EN 1992-1-1 6.2.1(4))",
    "the shear key as a reinforced member: its bending and shear under the passive "
    "pressure, and the bends of its bars",
)


def not_checked(site) -> tuple[str, ...]:
    """What wallrun does not check for ``site`` (a ``wallrun.settings.Site``): the fixed
    list, plus each optional check the site leaves off or wallrun does not make yet.
    Every output lists exactly this. Overall stability is checked where ``[ground]
    overall_stability = true`` (design-basis section 9), seismic actions where the site
    gives ``[seismic]`` (design-basis section 10) and the 7.3.2 restraint steel where
    ``design.restraint_steel`` is on (the default); each is listed otherwise. The bends
    of 8.3 (Table 8.1N and Eq. 8.1, check ``bar_bend``) are always checked, so BENDS is
    never listed."""
    out = []
    if not site.ground_model.overall_stability:
        out.append(OVERALL)
    if site.seismic is None:
        out.append(SEISMIC)
    if not site.design.restraint_steel:
        out.append(RESTRAINT)
    return tuple(out) + ALWAYS


#: The list for a site with every optional check off (tests and documentation).
NOT_CHECKED = (OVERALL, SEISMIC, RESTRAINT) + ALWAYS


#: A few words for each item of :func:`not_checked`, for the console's one line.
SHORT = {
    OVERALL: "overall stability",
    SEISMIC: "seismic actions",
    RESTRAINT: "restraint steel",
    ALWAYS[0]: "settlement and tilt",
    ALWAYS[1]: "compaction pressures",
    ALWAYS[2]: "frost",
    ALWAYS[3]: "chemical attack",
    ALWAYS[4]: "shear links",
    ALWAYS[5]: "the key's bars",
}


def not_checked_line(site) -> str:
    """:func:`not_checked` of ``site`` in one short line (each item in a few words,
    the full texts in the report, the workbook and ``design.json``)."""
    items = not_checked(site)
    return "Not checked (see report.html): " + "; ".join(SHORT[i] for i in items) + "."

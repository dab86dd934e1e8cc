"""Design actions at the critical sections of the stem, heel and toe (design-basis section 5)."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

MEMBERS = ("stem", "heel", "toe")


@dataclass(frozen=True)
class MemberActions:
    """ULS actions at one member's critical section for n candidates.

    member: ``stem`` (at the top of the base), ``heel`` (at the back face of the stem),
    ``toe`` (at the front face of the stem).
    combination, case: the factor set and bearing sub-case label that produced them.
    M_Ed: bending moment, kNm/m, positive where it puts the main-bar face in tension
    (stem: back/retained face; heel: top face; toe: bottom face); negative where the
    moment reverses. V_Ed: shear force magnitude at the critical section, kN/m.
    """

    member: str
    combination: str
    case: str
    M_Ed: np.ndarray
    V_Ed: np.ndarray

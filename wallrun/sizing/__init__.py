"""Sizing: a section for every panel (design-basis section 6).

- :mod:`.conditions`: what a panel's section is designed for (:class:`Demand`).
- :mod:`.grid`: the candidate sections of a demand and their bounds.
- :mod:`.evaluate`: every check of many candidates at once; a panel's
  :class:`SizedDesign`.
- :mod:`.search`: the bespoke search of many demands at once, and
  :func:`cheapest_on_grid`, the exhaustive reference.
- :mod:`.catalogue`: the cheapest passing type of a standard catalogue.
- :mod:`.rationalise`: a few section types for the whole wall.
"""

from .conditions import MAX_RETAINED_M, Demand
from .evaluate import Costing, SizedDesign
from .search import bespoke, cheapest_on_grid

__all__ = ["MAX_RETAINED_M", "Costing", "Demand", "SizedDesign", "bespoke", "cheapest_on_grid"]

"""Cantilever section geometry: dimensions, polygons, areas and centroids.

Coordinates (design-basis section 2): x from the toe edge (x = 0) towards the
retained side, z level measured from the underside of the base (z = 0) unless a
function says otherwise. Units m, m2.
"""

from __future__ import annotations

from dataclasses import dataclass, fields

import numpy as np


@dataclass(frozen=True)
class Section:
    """One section's dimensions, m. Names are the ``sections.csv`` columns."""

    stem_top_m: float
    stem_base_m: float
    base_width_m: float
    toe_m: float
    base_thickness_m: float
    key_depth_m: float = 0.0
    key_width_m: float = 0.0

    @property
    def heel_m(self) -> float:
        """b_heel = B - b_toe - t_stem_base, m."""
        return self.base_width_m - self.toe_m - self.stem_base_m


@dataclass(frozen=True)
class SectionArrays:
    """Many candidate sections at once: each field an array of shape (n,), m."""

    stem_top_m: np.ndarray
    stem_base_m: np.ndarray
    base_width_m: np.ndarray
    toe_m: np.ndarray
    base_thickness_m: np.ndarray
    key_depth_m: np.ndarray
    key_width_m: np.ndarray

    @property
    def heel_m(self) -> np.ndarray:
        return self.base_width_m - self.toe_m - self.stem_base_m

    def __len__(self) -> int:
        return int(np.asarray(self.base_width_m).shape[0])

    @classmethod
    def of(cls, sections: list[Section] | tuple[Section, ...]) -> "SectionArrays":
        return cls(**{f.name: np.array([getattr(s, f.name) for s in sections], dtype=float)
                      for f in fields(cls)})

    def take(self, i: int) -> Section:
        return Section(**{f.name: float(getattr(self, f.name)[i]) for f in fields(self)})

    def subset(self, idx) -> "SectionArrays":
        return SectionArrays(**{f.name: np.asarray(getattr(self, f.name))[idx] for f in fields(self)})

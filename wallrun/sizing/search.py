"""The bespoke search: the cheapest passing section of every demand, many demands at once.

Design-basis section 6. For each demand, the grid of :func:`grid.grid_for` is searched
for the section of least cost per metre that passes every check. The search of one
demand is a sequence of moves (batches of candidates to check) that depends only on
that demand: the searches of all the demands of one ground advance together, and every
step checks all their batches in one joined call (``evaluate.screen``), so a long run
of distinct panels costs a few hundred numpy calls, not a few hundred per panel.

The moves of one demand:

1. Seeds from reference demands. A demand's reference demands are the same ground at
   retained heights on a lattice of ``REF_STEP_M`` (the lattice heights just above and
   below its own), at a fixed front level, with the wall top at the retained level and
   the water level taken relative to the front level (rounded to the lattice): a pure
   function of the demand. Each reference is searched cold (below), then widened and
   given the planes of step 4 (:func:`reference_moves`), then searched again from
   the cold sections of the lattice heights below it (:func:`neighbour_moves`); its best
   section seeds the demands next to it. References are shared by the demands of a
   call, but a demand's references (and their neighbours), and so its result, never
   depend on which other demands were designed, before or beside it.
2. A cold search (a reference, or a demand whose seeds find nothing passing): the grid
   at every ``STRIDE``-th value of each dimension, checked in increasing lower bound of
   the cost until its ``SEEDS`` cheapest passing candidates are known
   (:func:`best_first`), then a descent from each.
3. The descent (:func:`descent`) from the taller reference's section (a section that
   passes at a taller wall nearly always passes here, and a descent that starts from a
   passing section keeps to passing ones), the lower reference's section tried too.
   Where the descent settles, its :func:`jumps` are checked: the stem moved along the
   base with a base up to two steps thinner and a stem one step either way, every
   thickness on its own, every key; a cheaper section lies there where single steps
   cross sections that fail or cost more (the bars of a member make its cost jump
   with its thickness). The descent goes on from any better one. Where it would end,
   every toe length with a thinner base (:func:`toe_lines`), once.
4. Widening: where the best section (while none passes, the least utilised) sits on
   a bound that a wider grid could move (:meth:`Grid.binding`), the bound is moved and
   the descent resumes (a cold start follows where it first finds a passing one).
   Then the planes (:func:`plane_moves`): every toe length with other base and stem
   thicknesses about the best (:func:`planes`), narrower bases with longer toes
   (:func:`narrower_lines`), the stem moved with the heel kept (:func:`heel_lines`),
   the base thickness traded against the stem's
   (:func:`thickness_trades`), the stem thickness against the toe and width
   (:func:`stem_shifts`), and the descent on from a better one.
   Where the taller reference's section fails here (or the wall is ``SECOND_FROM_H``
   or taller), a second descent from the lower reference's, among the sections that
   could beat the first search's best (:func:`second_moves`), taking what the first
   checked in full from its record (:meth:`Store.from_prior`); where it finds a
   better section, the planes about that one (:func:`settle_moves`). Last, a low wall's
   whole grid, widened where its cheapest sits on a bound as the exhaustive reference
   widens it (:func:`low_wall_moves`): its result costs at most the reference's. Both
   come after the rest, so they can only make a result cheaper.
5. The ``FINALISTS`` cheapest passing candidates are checked in full
   (``evaluate.evaluate``), and the cheapest passing is the design (ties: the lower
   utilization). The search ranks by the same cost: its stem bars are curtailed as the
   design's are (``evaluate.screen``).

Candidates whose lower bound of the cost (``evaluate.lower_bound``: the cost with the
least steel a passing design carries) cannot beat the best found are never checked.
The search is a heuristic, not a proof: its results are
compared with :func:`cheapest_on_grid`, which checks every candidate of the grid (in
increasing lower bound, stopping only where no unchecked candidate can be cheaper), in
the tests and the benchmark.

How far the moves look (the seeds of a cold start, the reach of the jumps, planes,
heel lines and stem shifts) is the store's :class:`Reach`: ``NEAR`` to begin with, and
``FAR`` from the moment the search reaches a section whose base is as wide as the wall
is high (``FAR_FROM``, :func:`far_from`; :meth:`Store.look_far`, at the coarse grid of
a cold start, at the first start of a demand and before each round of the planes). A
base that wide is held by weak ground, where the sections that pass lie in basins far
apart. A demand that looks far also gets the second descent (:func:`needs_second`)
and, after its search, a cold start of its own (:func:`far_cold_moves`, on a coarse grid
with about twice the base thicknesses, ``FAR_COARSE``: there the sections that pass
can lie at one base thickness), then a descent from the cheapest section of each basin
class it checked (:func:`basin_starts`) that follows its own path to the bottom of its
basin (``descent(own=True)``; a plain descent goes back to the store's best), and,
after its second descent, the same again from the basins the later moves reached
(:func:`basin_moves`, ``LATE_BASIN_ROUNDS``), and last from the basins its
references descended: a reference demand that looks far descends from each basin
class of its own search too, and hands the cheapest of each to the demands next to it
(:class:`Reference`, ``REF_BASIN_SPAN``, :func:`handed_basins`; its best section, their
first start, stays that of its search). Elsewhere the search is as it was without
``FAR``.

The figures in the comments of the moves below were measured when a face took its
cheapest bars even where they failed their shear or bend check (before 2026-12-03's
``structure.design_reinforcement``): such sections cut the passing ones into islands,
which most of these moves were added to cross. With bars that carry their shear and
bend within the base, the same walls have few such islands (DEVELOPERS.md gives the
figures); the moves stay, as each can only make a result cheaper.
"""

from __future__ import annotations

import itertools
import math
from dataclasses import dataclass, field, replace

import numpy as np

from wallrun.results import BarSet, Reinforcement
from wallrun.section import Section, SectionArrays
from wallrun.settings import Basis, Water

from . import evaluate as ev_
from .conditions import (Demand, Rows, beyond_reason, founding_level, seismic_reason,
                         steep_reason)
from .evaluate import Costing, SizedDesign
from .grid import B, KD, KW, NDIM, TB, TOE, TS, TT, Grid, codes, grid_for, valid_rows

#: Toe classes of :func:`basin_starts`: the toe length in this many parts of the base
#: width.
BASIN_TOE_PARTS = 8
#: Basin starts cost at most this times the best (:func:`basin_starts`).
BASIN_SPAN = 1.10
#: Rounds of :func:`basin_moves` once a weak-ground demand's search is done (after its
#: second descent), from basins up to ``LATE_BASIN_SPAN`` times the best: the basins
#: the later moves reached get their own descents too. Of the 56 demands of the 70
#: invented walls that two rounds from basins up to 1.10 times the best left over 0.5 %
#: above the best section known (searched together), two rounds up to 1.2 took 14 to
#: within it (20 % more candidates), five rounds 23 (35 %), twenty the same 23 (39 %).
#: Five rounds took seed 71's ten walls 2.3 times as long as the search before them
#: (the late rounds check about 75,000 candidates a second against 260,000 for the
#: demands' own searches: their descents go one after another, in small rounds);
#: two are kept.
LATE_BASIN_ROUNDS = 2
LATE_BASIN_SPAN = 1.2
#: On weak ground, a reference demand's search is followed by a descent from each basin
#: class within this many times its best (:func:`basin_moves`, one round), and the
#: cheapest of each class within it is handed to the demands next to it, which descend
#: from them last (:class:`Reference`, :func:`handed_basins`).
REF_BASIN_SPAN = 1.10
#: Retained-height lattice of the reference demands, m.
REF_STEP_M = 0.25
#: About this many values of base width, toe, base thickness, stem base and stem top in
#: a cold start's coarse grid. The base width's 17 keep the stride the 12 had on widths
#: to 1.5 H now that they reach 2.0 H (with 12, a 5.9 m panel whose reference settled
#: elsewhere ended 0.91 % above the exhaustive reference it had been at; about 1 % more
#: candidates at 10 km).
COARSE = (17, 8, 5, 5, 2)
#: ``COARSE`` of the cold start after a far-looking search (:func:`far_cold_moves`):
#: about twice as many base thicknesses. On weak ground bearing governs, and at a given
#: width a thicker base adds its weight at the same founding level while one a step
#: thinner can found a founding step higher, on less overburden (design-basis section
#: 1): the sections that pass can lie at one base thickness only, between two values
#: of ``COARSE``. A DA3 2.77 m panel (an 18 degree slope, base phi' 25 degrees)
#: ended 5.5 % above the exhaustive reference with ``COARSE`` (below that cost, only
#: a 0.55 m base passes, on widths of 6.40 to 6.55 m) and at it with these (15 % more
#: candidates). On 70 invented walls (seeds 7 to 9 and 41 to 44 of the walls of
#: ``FAR_FROM``; 2026-12-05) 75 demands ended more than 0.5 % above the best section
#: known without them and 33 with them (18 of them on weak ground, up to 2.2 %); 45
#: cheaper, 1 dearer (by 0.03 %); 18 % more candidates on those walls, none at 10 km.
#: Twice as many toe lengths too left about as many above for 31 % more again.
FAR_COARSE = (17, 8, 10, 5, 2)
#: Cheapest coarse passes a cold start descends from.
SEEDS = 3
#: Lattice heights below a reference whose cold sections it is searched again from
#: (:func:`neighbour_moves`), and the steps by which such a section must differ from
#: the reference's own in one of base width, toe, base and stem thicknesses (a closer
#: one lies in the basin the reference settled in). A reference's cold search settles
#: in one basin, and a lower neighbour's can settle in a cheaper one that still holds
#: here once it grows. On an invented DA1 wall under a 16 degree slope (phi' 29
#: degrees, water 1 m above the base, base phi' 25 degrees; 334 demands at a 5 cm
#: step) and a DA3 wall under an 18 degree slope, 49 demands ended more than 0.5 %
#: above the best section known (up to 11.3 %) without it and 22 with it (up to 6.4
#: %); on 31 other invented walls (9,497 demands) 11 and 10; about 1.7 % more
#: candidates at 10 km. The lattice height above helped none of them (and cost a
#: taller cold search); every neighbour section, or only the one height below, left
#: 27 of the 49.
NEIGHBOURS = 2
NEIGHBOUR_APART = 6
#: Cheapest screened passes checked in full at the end.
FINALISTS = 4
#: Bound moves a search may make.
MAX_WIDEN = 4
#: Base-width reach, in steps, of :func:`jumps`.
JUMP_REACH = 8
#: Base and stem thickness changes and heel changes, in steps, of :func:`jumps`. On 64
#: sampled demands of invented ground (``benchmarks/optimality.py`` draws 28 of them)
#: these found the exhaustive reference's cheapest within 0.5 % every time; a stem one
#: step thicker, a heel three steps longer and a base width eight steps away were each
#: needed by one of them.
JUMP_BASE = (-2, -1, 0)
JUMP_STEM = (-1, 0, 1)
JUMP_HEEL = (-2, -1, 0, 1, 2, 3)
#: Planes of :func:`toe_lines`, each (base thickness changes, stem base changes, base
#: width changes) in steps, every toe length with each: on two 5 m walls over undrained
#: clay at a 5 cm step the cheapest section had a base two steps thinner, three and four
#: steps wider and a toe seven and ten steps shorter, passing at one toe length only
#: (the window and single steps stopped 0.67 % and 0.98 % above). They are tried once,
#: where a descent would end, so what it found before stands (tried at every jump, they
#: led one panel to a dearer optimum).
TOE_LINES = (((-2,), (-1, 0, 1), (0, 2, 4)),)
#: Planes checked after a demand's search (:func:`plane_moves`), as ``TOE_LINES``: a base
#: up to four steps thinner or three thicker on a base one step narrower or wider, up to
#: two thinner or one thicker on a base two steps narrower or wider, up to two thinner
#: on a base three steps narrower or wider, a stem two or three steps thinner or
#: thicker with a base one step thinner or thicker, and a base two steps thicker with a
#: stem two thinner on the same width or one step narrower; every toe length with each. The
#: cheaper sections they reach trade base thickness against toe length (a thicker base
#: carries a longer toe) or stem thickness against both. On six invented walls (2,831
#: demands up to 7 m at 5 and 10 cm steps: the benchmark's 10 km wall and five 2.5 km
#: walls of other ground) the search ended more than 0.5 % above the best section
#: known (the cheapest of searches with wider planes; the exhaustive reference takes a
#: minute or two a tall demand) on 148 demands without them and the second descent (up
#: to 11.8 %), and on 27 with them (up to 6.4 %), at 1.63 M candidates for the 10 km
#: wall's demands against 1.21 M. The last set (a base two steps thicker with a stem two
#: thinner, on the same base width or one step narrower) came with the bars that carry
#: their shear and bend: a 6.23 m panel of the 10 km wall ended 0.54 % above the grid's
#: cheapest without it and at it with it (about 1 % more candidates at 10 km); the base
#: three steps wider or narrower with its thickness kept (the third set's 0) took two
#: 6.7 and 6.9 m panels of a wet DA2 wall from 0.7 % above the best section known to
#: it, walking the stability frontier where a step wider carries a shorter toe (about
#: 3.5 % more candidates). The last two sets came from walls drawn after the others
#: were set: a base one to three steps thinner on a base two to ten steps wider (on an
#: invented 5 m wall over clay, cu 55 kPa, 10 cm step, seven panels ended 4.6 to 9.0 %
#: above a base 0.2 to 0.3 m thinner on one 0.5 to 0.7 m wider, the exhaustive
#: reference confirming the three checked; on five other walls panels of 3.7 to 4.9 m
#: ended 0.5 to 2.0 % above a base a step thinner on one nine or ten steps wider with
#: the toe as much longer: the stem moved forward on the same heel), and one step
#: thicker on a base two to four steps narrower (on a DA3 wall at a 10 cm step three
#: panels ended 1.1 to 1.5 % above it). With them these panels are at the best section
#: known. The last (a base two steps thicker with the stem as it is or a step thinner,
#: on the same width) took four panels of 4.8 to 4.9 m on two walls from 0.55 to 0.71 %
#: above the best known to it (a toe two to ten steps longer; about 2.6 % more
#: candidates at 10 km). On a wall drawn later (DA2, a 16 degree slope, water 1.4 m,
#: cu 77 kPa) three 4.1 m panels ended 0.7 to 0.9 % above a base one or two steps
#: thinner on one eleven or twelve wider: the sixth set's widths reach 12 steps since
#: (about 1.9 % more candidates at 10 km).
BASE_PLANES = (((-4, -3, -2, -1, 0, 1, 2, 3), (0,), (-1, 1)),
               ((-2, -1, 0, 1), (0,), (-2, 2)),
               ((-2, -1, 0), (0,), (-3, 3)),
               ((-1, 1), (-3, -2, 2, 3), (0,)),
               ((2,), (-2,), (-1, 0)),
               ((-3, -2, -1), (0,), (2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12)),
               ((1,), (0,), (-4, -3, -2)),
               ((2,), (-1, 0), (0,)))
#: Steps narrower of :func:`narrower_lines`: on four invented walls tall panels of 6.3
#: to 7.0 m ended 0.5 to 2.0 % above a base 0.2 to 0.65 m narrower at the same
#: thicknesses, with a toe as much longer or more (a short heel), and are at it with
#: them (every toe length within ``TOE_REACH``, with stem shifts of the base thickness
#: too, took two more panels of 25 walls to it at 8 % more candidates at 10 km).
NARROWER = tuple(range(4, 14))
#: Steps of :func:`heel_lines`: on an invented DA2 wall (a 14 degree slope, base 26
#: degrees, c' 7 kPa) 4.1 m panels ended up to 4.8 % above a base 0.9 m narrower with
#: a toe 0.9 m shorter (the same heel) and a step thicker, and on another 4.5 to 4.7 m
#: panels up to 2 % above one nine or ten steps wider with the toe as much longer and a
#: step thinner; with them both are at the best section known (about 3 % more
#: candidates at 10 km; with the heel a step either way too, 9 %). The base two steps
#: thicker, and a step thicker under a stem a step thinner, came later: on two invented
#: walls (DA2 and DA3, 4.5 to 4.7 m, 10 and 5 cm steps) six panels ended 0.8 to 1.7 %
#: above a base 5 to 7 steps narrower with the toe about as much shorter and the base
#: one or two steps thicker (the stem a step thinner on one wall), and are at it with
#: them (2026-12-05; on seeds 41 to 44 of ``FAR_FROM``'s walls 17 demands over 0.5 %
#: above the best known against 23, 7 cheaper, none dearer); about 2.6 % more
#: candidates at 10 km (the same designs) and 0.3 % more on those walls.
HEEL_REACH = 20
#: Steps of :func:`heel_lines` with the stem top one or two steps thicker: on an
#: invented DA3 wall (an 18 degree slope, base cu 70 kPa) panels of 6.1 to 6.2 m ended
#: 2 to 4.7 % above a base 3 to 10 steps narrower with the toe as much shorter (the
#: same heel) under a stem top a step or two thicker (the stem's weight holds the wall
#: where a wider base would); with them and the widening after the planes
#: (:func:`settle_moves`), that wall and a DA1 wall under a 16 degree slope end 18
#: demands of 638 over 0.5 % above the best known, up to 1.7 % (26, up to 4.7 %,
#: without); about 0.7 % more candidates at 10 km.
HEEL_TOP_REACH = 12
#: Toe lengths of :func:`planes` (the toe lines' and those after a search), in steps
#: either way of the section's: the cheaper sections the planes reached on the invented
#: walls lay up to 24 steps away; 16 checked about 10 % fewer candidates at 10 km than
#: every toe length (the 10 s target), and about three demands of 2,831 more ended over
#: 0.5 % above the best known. On a wider base the window reaches as many steps further
#: as the base is wider (:func:`planes`): on three invented walls drawn later (872
#: demands) seven 4.5 m panels ended 0.5 to 2.0 % above a base a step thinner and six
#: to ten steps wider with a toe 17 to 19 steps longer; with it, and the references'
#: planes (:func:`reference_moves`), 5 of these walls' demands end over 0.5 % above the
#: best known against 21 (about 1.5 % more candidates at 10 km; a reach of 20 on
#: every base, 6 %).
TOE_REACH = 16
#: Steps of :func:`thickness_trades` (base thickness, stem base), checked with the planes
#: after a demand's search: on the benchmark's 10 km wall a 6.05 m demand settled at a
#: base 0.45 m and a stem 0.45 m thick, 1.6 % above a section with a base two steps
#: thicker and a stem two steps thinner on the same base width and toe (then the
#: descent on); on an invented 5.08 m wall (DA3, a 12 degree slope) a base four steps
#: thinner with a stem one step thicker was 1.3 % cheaper. Most of these are
#: dropped by the lower bound (a thicker base) or fail stability at once (a thinner
#: one): at +-8 and +-2 steps about 0.6 % more candidates at 10 km than at +-3 and +-3.
TRADE_REACH = (8, 2)
#: Steps of :func:`stem_shifts` (stem base, toe, base width, base thickness), checked with
#: the planes: a stem three or four steps thicker or thinner moves the toe length and
#: base width that pass by a step or three. On four invented walls drawn after the
#: planes were set (2.5 km each, 5 cm step) five panels of 5.6 to 5.9 m ended 0.55 to
#: 0.67 % above the best section known without them and at it with them; on 25
#: invented walls (8,436 demands) about 17 panels fewer ended over 0.5 % above it with
#: them. The base thickness is kept (a step either way too checked about 3 % more
#: candidates at 10 km).
SHIFT_REACH = (4, 3, 1, 0)
#: Rounds of :func:`plane_moves`: the planes about the best, and again about the best
#: the descent from a better one reaches, up to this many times. A 5.38 m panel under a
#: 20 degree slope ended 0.72 % above the best section known with one round (its
#: cheapest lay in the planes of the second best); three cost about 3.5 % more
#: candidates at 10 km.
PLANE_ROUNDS = 3
#: Base width, as a multiple of the least height from the retained level to the
#: underside of the base (:func:`far_from`), from which a search's moves look further
#: (``FAR``, :class:`Reach`). A base as wide as the wall is high is held by weak ground
#: (sliding or bearing; about 0.5 to 0.7 of it is usual on firm ground, common
#: practice), and there the sections that pass lie in basins far apart. On 50 invented
#: walls (15,630 demands: the ground drawn as ``benchmarks/walls.py`` draws it, on a
#: quarter of the panels of the benchmark's 10 km wall each; 2026-12-05), against the
#: best section known to five searches (the search before ``FAR``, three stages of it,
#: and one with every reach as wide as ``FAR``'s and more on every demand), 99 demands
#: ended more than 0.5 % above it before (up to 12.7 %) and 12 with it (up to 3.0 %;
#: 6 of them on firm ground, which ``FAR`` leaves alone; 5 that had been within 0.5 %
#: before: another start can settle in a dearer basin), and 5 demands found a passing
#: section where none had been found. Against the best of the first three searches,
#: ``FAR`` alone left 17 above and with the second descent of :func:`needs_second` 15;
#: the cold start of :func:`far_cold_moves` brought them to the 12 above. The
#: walls that reach it take longer: the ten walls of a seed 1.5 to 2.3 times as long,
#: a wall up to four times. The benchmark's 10 km wall reaches 0.90 at most (the same
#: designs and candidates), and the demo sites' designs are unchanged.
FAR_FROM = 1.0
#: While nothing passes, the second descent moves to the candidate of least cost x (1 +
#: ``OVERSTRESS_WEIGHT`` (u - 1)) (u its utilization), not to the least utilised: a
#: start that fails by more than one step can mend grows every dimension when it
#: follows the utilization alone, and settles among over-strong sections. On an
#: invented 7 m wall over wet, low-friction ground (DA2; 5 cm step) the search ended
#: 11.8 % above the grid's cheapest (a 10.0 m base with a 0.90 m stem against 10.3 m
#: and 0.75 m) and with it at the cheapest; 3 and 10 gave the same on six invented
#: walls; a heuristic of the search, not a rule of a code. Where that settles with
#: nothing passing (a step that mends the overstress costs more than it mends), the
#: descent goes on by the utilization alone: on an invented DA3 wall under an 18
#: degree slope a 6.17 m panel's second descent settled at 1.016 three steps from
#: passing, and on 33 invented walls (10,135 demands) 32 ended over 0.5 % above the
#: best known without this and 30 with it (one panel of a DA1 wall 6.1 % cheaper; no
#: demand of the benchmark's 10 km wall reaches it).
OVERSTRESS_WEIGHT = 5.0
#: Retained height (m) from which every demand whose references' sections differ gets
#: the second descent (below it, only where the taller reference's section fails).
#: On six invented walls (2,831 demands) the search ended more than 0.5 % above the
#: best section known on 9 demands without it and on 4 with it (the same 4 as from
#: 4.5 m or from every height), each 4.9 m or taller; a 6.36 m panel under a 20 degree
#: slope went from 2.05 % to 0.89 % above the exhaustive reference (and to it once a
#: descent ended on a full neighbourhood). About 5 % more candidates and 8 % more time
#: at 10 km (from every height: 18 % and 14 %).
SECOND_FROM_H = 5.5
#: Steps of base or stem thickness by which the two references' sections must differ for
#: every demand between them to get the second descent (they settled in different
#: basins). On an invented wall under a 16 degree slope (phi' 29 degrees, water 1 m
#: above the base) panels of 3.7 and 4.1 m settled 8.3 and 6.7 % above a base 0.2 m
#: thinner, reached from the lower reference's section (its base four steps thinner
#: than the taller's); with it they are at the best section known. No demand of the
#: benchmark's 10 km wall meets it; on 29 other invented walls it checks up to 2 %
#: more candidates, on this one 11 %.
BASIN_STEPS = 2
#: Steps of toe length or base width by which the two references' sections must differ
#: for the same (the stem stands elsewhere on the base). On an invented DA3 wall under
#: a 20 degree slope (phi' 36 degrees) over a base of 22 degrees (bases near 2 H wide)
#: fourteen panels of 2.9 to 6.3 m settled 0.7 to 3.8 % above a base up to 0.8 m
#: narrower with the toe gone and one step thicker, reached from the lower reference's
#: section; with it they are at the best section known (a search with every demand's
#: second descent). From 12 steps the same fourteen, from 20 only six; 10 checks about
#: 0.6 % more candidates at 10 km.
BASIN_SHIFT_STEPS = 10
#: Low walls searched whole after the moves (:func:`low_wall_moves`): retained height
#: (m) and largest grid (the product of its axes' lengths; about a third of it valid),
#: and the batch the candidates are checked in. A low wall's cheapest section can have
#: a key under a base a third narrower than the best without one: a key alone costs
#: more at the same width, and the narrower keyless bases fail sliding, so no move of
#: the search crosses between them. On four invented walls six panels of 0.54 to 0.70 m
#: ended 1.0 to 2.4 % above the grid's cheapest (the exhaustive reference, about a
#: second each) and are at it with the whole grid searched (about 10,000 candidates and
#: 0.1 s each at a 0.05 m step), and so are three of 0.73 to 0.76 m (at most 0.8 m and
#: 300,000: six demands of the 10 km wall; up to 1.0 m and 400,000, 13 of them, cost
#: 0.6 s of the benchmark's 10 s). At a 0.1 m step the grids are some 40 times
#: smaller: two panels of 0.80 and 0.82 m of an invented wall ended 1.8 % above a
#: keyed base six steps narrower, and are at it with the height limit at 1.0 m (at a
#: 0.05 m step the grid limit keeps to the same six demands of the 10 km wall). With
#: every demand of seven invented walls at a 0.1 m step searched whole (2,192
#: demands, some eight times the time), only those two changed. The grid limit was
#: 300,000 with base widths to 1.5 H; with 2.0 H (``grid.grid_for``) the same low walls
#: have grids up to about 600,000 (at 300,000 panels of 0.54 to 0.68 m on six walls
#: ended 1.5 to 4.4 % above a keyed base; at 600,000 none, at 2 % more candidates at
#: 10 km and up to twice as many on walls with many such panels).
WHOLE_GRID_H = 1.0
WHOLE_GRID = 600_000
#: The largest grid (the product of its axes' lengths) a low wall's whole grid is
#: widened to (:func:`low_wall_moves`, one base width at a time): a toe allowed beyond
#: half the base doubles a grid's toe axis, and bounds moved half as much again grow
#: it fast (the 0.65 m panel of its docstring walks a grid of 6.3 M; its whole search
#: takes about 2 s, the reference 3.7 s).
WIDENED_GRID = 20_000_000
WHOLE_GRID_BATCH = 4_000
#: Jumps a descent may make.
MAX_JUMPS = 3
#: Largest number of candidates checked in one call (memory: every check is an array of
#: this length, several hundred of them live at once).
CHUNK = 60_000
#: Candidates per batch of :func:`best_first`.
BEST_FIRST_BATCH = 512
#: Largest number of asked candidates filtered in one call of :func:`fresh_many` (memory:
#: a few arrays of this many rows of seven integers).
FRESH_CHUNK = 200_000
#: A store's codes checked are two sorted runs (:class:`Store`): a commit merges its
#: codes into the short run, and the short run goes into the long one once it holds
#: more than this part of the long one's rows and more than ``SHORT_RUN_MIN``. A
#: commit then costs about its rows and the short run's, not the whole record's: on
#: weak ground a store holds tens of thousands of rows and takes a commit at every
#: step of its descents (on an invented wall of 29 M candidates the commits took 13.5
#: s of 125 s). Firm ground's stores, a few thousand rows, keep one run (with 1,024
#: here, and commits written into the record at once, the 10 km wall's tall demands
#: took about 5 % longer in one process).
SHORT_RUN = 8
SHORT_RUN_MIN = 8192


# --- the candidates of one demand ---------------------------------------------------------

class Store:
    """The checked candidates of one demand: integer vectors, ok, cost, utilization;
    and how far its moves look (``reach``, :meth:`look_far`).

    A candidate is checked once; :meth:`fresh` keeps the valid unchecked ones. The
    codes checked are kept sorted in two runs (``SHORT_RUN``; membership by binary
    search in each), the best candidate is kept up to date as batches are committed,
    and the record (``V``, ``ok``, ``cost``, ``util``, in the order checked) grows in
    place: a read writes the batches committed since the last one after its rows (its
    arrays' room doubled when full) and is a view of them, so neither a commit nor a
    read copies the whole record. A move asked of it again is not asked
    (:meth:`first_ask`).
    """

    def __init__(self, grid: Grid, cap: float = math.inf, prior: "Store | None" = None,
                 far_from_m: float = math.inf, reach: "Reach | None" = None):
        self.grid = grid
        # how far its moves look (:class:`Reach`): ``FAR`` once a section it reaches has
        # a base of ``far_from_m`` (m) or wider (:meth:`look_far`)
        self.far_from_m = far_from_m
        self.reach = NEAR if reach is None else reach
        self.cap = cap  # a candidate whose lower bound is at or above it is not checked
        # another search of the same demand, done: what it checked in full (a finite
        # cost) is taken from its record, not checked again (:meth:`from_prior`)
        self._prior = None
        full = np.flatnonzero(np.isfinite(prior.cost)) if prior is not None else ()
        if len(full):
            c = codes(prior.V[full])
            o = np.argsort(c, kind="stable")
            self._prior = (c[o],) + tuple(a[full][o] for a in (prior.ok, prior.cost,
                                                                 prior.util))
        # the codes checked, sorted, in two runs (long, short; :func:`merge_runs`), each
        # with its (ok, cost) in its order once the store is indexed (:meth:`results`)
        none = np.zeros(0, dtype=np.int64)
        self._runs: list[tuple[np.ndarray, tuple]] = [(none, ()), (none, ())]
        # the record: arrays with room for more rows, and the batches committed since
        # it was last read, written into it at the next read (_n rows in all)
        self._rows: tuple = (np.zeros((0, NDIM), dtype=np.int64), np.zeros(0, dtype=bool),
                             np.zeros(0), np.zeros(0))
        self._pending: list[tuple] = []
        self._n = 0
        self._best: int | None = None
        self._best_of: tuple | None = None  # (cost, util, vector) of the best
        self._asked: set = set()  # the moves asked here (:meth:`first_ask`)

    @property
    def checked(self) -> int:
        return self._n

    @property
    def _indexed(self) -> bool:
        """Whether the runs carry their (ok, cost): from the first :meth:`results` on."""
        return bool(self._runs[0][1])

    @property
    def codes(self) -> np.ndarray:
        """The codes of the candidates checked, sorted."""
        return merge_runs(*self._runs[0], *self._runs[1])[0]

    def again(self) -> "Store":
        """An empty store for another search of the same demand (a second descent, a
        search from a lattice neighbour's section): this store's grid and reach, capped
        at its best cost, taking what it checked in full from its record
        (:meth:`from_prior`); its candidates are joined here by :meth:`absorb`."""
        return Store(self.grid, cap=self.best_cost(), prior=self,
                     far_from_m=self.far_from_m, reach=self.reach)

    def first_ask(self, key) -> bool:
        """Whether the move ``key`` (a hashable that fixes its candidates: the move, the
        section it is made from, and the grid and reach it reads) is asked of this store
        for the first time; it is recorded. Asked again, it holds nothing to check: each
        of its candidates was checked here then, or dropped by the lower bound against a
        best cost that can only have fallen since."""
        if key in self._asked:
            return False
        self._asked.add(key)
        return True

    def look_far(self, v) -> None:
        """Take the ``FAR`` reach from here on where the integer candidate ``v`` (None:
        none) has a base of ``far_from_m`` or wider."""
        if v is not None and v[B] * self.grid.step >= self.far_from_m - 1e-9:
            self.reach = FAR

    def _record(self) -> tuple:
        """The record's arrays, the batches committed since the last read written after
        its rows first (its room doubled when full)."""
        if self._pending:
            n0 = self._n - sum(len(part[1]) for part in self._pending)  # rows written
            if self._n > len(self._rows[1]):
                room = max(self._n, 2 * len(self._rows[1]), 256)
                grown = []
                for a in self._rows:
                    b = np.empty((room,) + a.shape[1:], dtype=a.dtype)
                    b[:n0] = a[:n0]
                    grown.append(b)
                self._rows = tuple(grown)
            for part in self._pending:
                n1 = n0 + len(part[1])
                for a, x in zip(self._rows, part):
                    a[n0:n1] = x
                n0 = n1
            self._pending = []
        return self._rows

    V = property(lambda self: self._record()[0][:self._n],
                 doc="Integer vectors checked, (n, NDIM).")
    ok = property(lambda self: self._record()[1][:self._n], doc="Passes every check, (n,).")
    cost = property(lambda self: self._record()[2][:self._n], doc="Cost per metre, (n,).")
    util = property(lambda self: self._record()[3][:self._n],
                    doc="Utilization (passes at <= 1), (n,).")

    def best(self) -> int | None:
        """Index of the cheapest passing candidate (ties: lower utilization, then the
        first checked), None when none passes."""
        return self._best

    def best_cost(self) -> float:
        return math.inf if self._best is None else float(self._best_of[0])

    def prune_cost(self) -> float:
        """A candidate whose lower bound of the cost is at or above this cannot improve
        on what is known: the best cost found here, or the cap where lower."""
        return min(self.best_cost(), self.cap)

    def passes(self, v) -> bool:
        """Whether the integer candidate ``v`` was checked here and passed."""
        hit = np.flatnonzero(np.all(self.V == np.asarray(v, dtype=np.int64)[None, :], axis=1))
        return bool(len(hit) and self.ok[hit[0]])

    def absorb(self, other: "Store") -> None:
        """Remember the candidates checked in ``other`` (of the same demand) that were
        not checked here."""
        if not other.checked:
            return
        c = codes(other.V)
        new = np.flatnonzero(~self.known(c))
        if len(new):
            pick = new[np.argsort(c[new], kind="stable")]
            self.commit(other.V[pick], c[pick], other.ok[pick], other.cost[pick],
                        other.util[pick])

    def from_prior(self, c: np.ndarray) -> tuple[np.ndarray, tuple]:
        """Mask of the codes ``c`` that the prior search checked in full, and their
        results there (ok, cost, util): the same as checking them again, since a
        candidate's results depend on its demand alone (a candidate that failed
        stability there has no structure designed, and is checked again)."""
        if self._prior is None or not len(c):
            return np.zeros(len(c), dtype=bool), ()
        pc = self._prior[0]
        pos = np.minimum(np.searchsorted(pc, c), len(pc) - 1)
        hit = pc[pos] == c
        return hit, tuple(a[pos[hit]] for a in self._prior[1:])

    def best_vector(self) -> np.ndarray:
        """The integer vector of the best candidate (a copy)."""
        return self._best_of[2].copy()

    def least_utilised_vector(self) -> np.ndarray:
        """The integer vector of the least utilised candidate checked (the first of
        equals; a copy): where a search goes while none passes."""
        return self.V[int(np.argmin(self.util))].copy()

    def fresh(self, v) -> tuple[np.ndarray, np.ndarray]:
        """The valid candidates of ``v`` not checked yet, once each (in code order), and
        their codes (:func:`fresh_many` of this store alone)."""
        return fresh_many([self], [v])[0]

    def unchecked(self, v) -> tuple[np.ndarray, np.ndarray]:
        """Of the grid's own candidates ``v`` (valid, once each, in code order: what
        ``Grid.every`` gives), those not checked yet, and their codes: :meth:`fresh` of
        such candidates, without its validity test and sort."""
        v = np.asarray(v, dtype=np.int64).reshape(-1, NDIM)
        c = codes(v)
        if self._n:
            new = ~self.known(c)
            v, c = v[new], c[new]
        return v, c

    def known(self, c: np.ndarray) -> np.ndarray:
        """Mask of the codes ``c`` checked already."""
        hit = np.zeros(len(c), dtype=bool)
        for s, _ in self._runs:
            if len(s):
                hit |= s[np.minimum(np.searchsorted(s, c), len(s) - 1)] == c
        return hit

    def results(self, v) -> tuple[np.ndarray, np.ndarray]:
        """(passes, cost per metre) of the integer candidates ``v`` as checked here; a
        candidate that failed or was not checked here does not pass and costs inf. The
        first call indexes the record by code, and every later commit keeps the index."""
        v = np.asarray(v, dtype=np.int64).reshape(-1, NDIM)
        if not self._indexed:  # one long run of every code, with its (ok, cost)
            c = codes(self.V)
            o = np.argsort(c, kind="stable")
            self._runs = [(c[o], (self.ok[o], self.cost[o])),
                          (c[:0], (self.ok[:0], self.cost[:0]))]
        ok, cost = np.zeros(len(v), dtype=bool), np.full(len(v), np.inf)
        if not (self._n and len(v)):
            return ok, cost
        c = codes(v)
        for s, (s_ok, s_cost) in self._runs:
            if len(s):
                at = np.minimum(np.searchsorted(s, c), len(s) - 1)
                hit = (s[at] == c) & s_ok[at]
                ok |= hit
                cost = np.where(hit, s_cost[at], cost)
        return ok, cost

    def commit(self, v, c, ok, cost, util) -> None:
        """Remember checked candidates ``v`` (not checked before) with their codes (in
        increasing order) and results."""
        n0 = self._n
        self._pending.append((np.asarray(v, dtype=np.int64).reshape(-1, NDIM),
                              np.asarray(ok, dtype=bool), np.asarray(cost, dtype=float),
                              np.asarray(util, dtype=float)))
        self._n += len(ok)
        # the codes into the short run (with their results where the store is indexed),
        # and the short run into the long one once it holds a SHORT_RUN part of it
        (long_c, long_v), (short_c, short_v) = self._runs
        new_v = ((np.asarray(ok, dtype=bool), np.asarray(cost, dtype=float))
                 if self._indexed else ())
        short_c, short_v = merge_runs(short_c, short_v, np.asarray(c, dtype=np.int64), new_v)
        if len(short_c) > max(SHORT_RUN_MIN, len(long_c) // SHORT_RUN):
            long_c, long_v = merge_runs(long_c, long_v, short_c, short_v)
            short_c, short_v = short_c[:0], tuple(a[:0] for a in short_v)
        self._runs = [(long_c, long_v), (short_c, short_v)]
        if np.any(ok):
            idx = np.flatnonzero(ok)
            j = int(idx[np.lexsort((util[idx], cost[idx]))[0]])
            if self._best is None or (cost[j], util[j]) < self._best_of[:2]:
                self._best, self._best_of = n0 + j, (cost[j], util[j], v[j].copy())

    def nth_passing_cost(self, m: int) -> float:
        """Cost of the m-th cheapest passing candidate (inf: fewer pass)."""
        c = self.cost[self.ok]
        if len(c) < m:
            return math.inf
        return float(np.partition(c, m - 1)[m - 1])

    def ranked(self, m: int) -> np.ndarray:
        """Indices of the m cheapest passing candidates (ties: lower utilization), else
        of the m least utilised."""
        if self.ok.any():
            idx = np.flatnonzero(self.ok)
            return idx[np.lexsort((self.util[idx], self.cost[idx]))[:m]]
        return np.argsort(self.util, kind="stable")[:m]


def merge_runs(a: np.ndarray, a_vals: tuple, b: np.ndarray, b_vals: tuple):
    """Two runs of sorted codes, none in both, merged into one sorted run, with the
    values aligned with each (``a_vals``, ``b_vals``: tuples of arrays) taken alike:
    (codes, values). The runs are joined and sorted stably (numpy's stable sort finds
    the two runs and merges them: the same array as placing each code of ``b`` among
    those of ``a``, and quicker on all but the longest runs)."""
    if not len(b):
        return a, a_vals
    merged = np.concatenate((a, b))
    if not a_vals:
        merged.sort(kind="stable")
        return merged, ()
    o = np.argsort(merged, kind="stable")
    return merged[o], tuple(np.concatenate((x, y))[o] for x, y in zip(a_vals, b_vals))


def fresh_many(stores: list[Store], vs: list) -> list[tuple[np.ndarray, np.ndarray]]:
    """For each store and its integer candidates (m_k, NDIM): the valid ones not checked
    there yet, once each in code order, and their codes; every store's candidates
    filtered together (a few numpy calls for a whole step of the lockstep driver)."""
    vs = [np.asarray(v, dtype=np.int64).reshape(-1, NDIM) for v in vs]
    empty = (np.zeros((0, NDIM), dtype=np.int64), np.zeros(0, dtype=np.int64))
    out = [empty] * len(stores)
    counts = np.array([len(v) for v in vs], dtype=np.int64)
    if not counts.sum():
        return out
    V = np.concatenate(vs)
    tid = np.repeat(np.arange(len(vs)), counts)
    # validity, per run of stores on one lattice (rows of consecutive stores are one
    # slice), each row against its own store's bounds
    ok = np.empty(len(V), dtype=bool)
    start = np.concatenate([[0], np.cumsum(counts)])
    k = 0
    while k < len(stores):
        g = stores[k].grid
        j = k + 1
        while j < len(stores) and stores[j].grid.lattice == g.lattice:
            j += 1
        # each store's bounds as columns (4, stores), repeated over its rows (a
        # store's rows are consecutive) into a column per row (4, m)
        lo, hi = (np.repeat(np.array(x, dtype=np.int32).T, counts[k:j], axis=1)
                  for x in zip(*(st.grid.bounds() for st in stores[k:j])))
        half = np.repeat([st.grid.toe_half for st in stores[k:j]], counts[k:j])
        rows = slice(start[k], start[j])
        ok[rows] = valid_rows(V[rows], lo, hi, half, g.step, g.key_depths, g.key_widths)
        k = j
    V, tid = V[ok], tid[ok]
    c = codes(V)
    # once each, per store in code order (the first of equal codes: equal vectors): a
    # stable sort by code, then a stable one by store (a radix sort on 16 bits)
    o = np.argsort(c, kind="stable")
    o = o[np.argsort(tid[o].astype(np.int16 if len(stores) < 2 ** 15 else np.int64),
                     kind="stable")]
    V, tid, c = V[o], tid[o], c[o]
    first = np.ones(len(c), dtype=bool)
    first[1:] = (tid[1:] != tid[:-1]) | (c[1:] != c[:-1])
    V, tid, c = V[first], tid[first], c[first]
    cut = np.searchsorted(tid, np.arange(len(stores) + 1))
    for k, st in enumerate(stores):
        a, b = cut[k], cut[k + 1]
        if a == b:
            continue
        vk, ck = V[a:b], c[a:b]
        if st.checked:
            new = ~st.known(ck)
            vk, ck = vk[new], ck[new]
        out[k] = (vk, ck)
    return out


# --- the moves ---------------------------------------------------------------------------

def best_first(store: Store, v: np.ndarray, lb: np.ndarray, m: int,
               batch: int = BEST_FIRST_BATCH):
    """Batches of the candidates ``v`` in increasing lower bound ``lb`` of their cost; the
    caller checks each batch into ``store`` before resuming. Stops once the m-th
    cheapest passing cost is below the lower bound of every candidate left: none of them
    can be among the m cheapest passing, so these are those of checking all of ``v``."""
    order = np.argsort(lb, kind="stable")
    v, lb = v[order], np.asarray(lb, dtype=float)[order]
    a = 0
    while a < len(v):
        b = min(a + batch, len(v))
        yield v[a:b]
        a = b
        if a < len(v) and store.nth_passing_cost(m) < lb[a] - 1e-9:
            return


def _offsets(dims: int, radius: int = 1) -> np.ndarray:
    return np.array(list(itertools.product(range(-radius, radius + 1), repeat=dims)),
                    dtype=np.int64)


_SMALL = np.zeros((3 ** 4, NDIM), dtype=np.int64)
_SMALL[:, :4] = _offsets(4)
# the full neighbourhood: keys unchanged without a key (on the benchmark's 10 km wall
# the key entries were two thirds of its candidates and changed one result of 1,262,
# to a cheaper one), all seven entries with a key
_FULL = np.zeros((3 ** 5, NDIM), dtype=np.int64)
_FULL[:, :5] = _offsets(5)
_FULL_KEYED = _offsets(NDIM)


def _jump_window(reach: int) -> np.ndarray:
    """The moves of :func:`jumps`' window: base thickness by each of ``JUMP_BASE``
    steps and stem base by each of ``JUMP_STEM``, each with the base width moved by up
    to ``reach`` steps either way and the heel by each of ``JUMP_HEEL`` steps (the toe
    takes the rest: heel = B - toe - stem base), (m, NDIM)."""
    dz, ds, db, dh = (a.ravel() for a in np.meshgrid(
        JUMP_BASE, JUMP_STEM, np.arange(-reach, reach + 1), JUMP_HEEL, indexing="ij"))
    out = np.zeros((len(db), NDIM), dtype=np.int64)
    out[:, TB], out[:, TS], out[:, B] = dz, ds, db
    out[:, TOE] = db - ds - dh
    return out


def jumps(cur: np.ndarray, grid: Grid, reach: "Reach | None" = None) -> np.ndarray:
    """Candidates beyond single steps from ``cur``, where a cheaper section lies across
    sections that fail or cost more. A thinner base or a thinner or thicker stem that
    passes only with the stem elsewhere on the base: base thickness changed by each of
    ``JUMP_BASE`` steps and stem base by each of ``JUMP_STEM``, each with the base width
    moved by up to ``reach.jump`` steps either way (``NEAR`` unless given) and the heel
    by each of ``JUMP_HEEL`` steps (the toe takes the rest). Then the whole range of
    base thickness, stem base and stem top, each with the rest as cur's (the bars
    chosen for a member make its cost jump, not grow, with its thickness), and every
    key with the rest as cur's. Invalid vectors are dropped by the driver."""
    cur = np.asarray(cur, dtype=np.int64)
    win = cur[None, :] + (reach or NEAR).jump_window
    axes = grid.axes()
    lines = []
    for k in (TB, TS, TT):
        ln = np.repeat(cur[None, :], len(axes[k]), axis=0)
        ln[:, k] = axes[k]
        lines.append(ln)
    kd, kw = (a.ravel() for a in np.meshgrid(axes[KD], axes[KW], indexing="ij"))
    keys = np.repeat(cur[None, :], len(kd), axis=0)
    keys[:, KD], keys[:, KW] = kd, kw
    return np.vstack([win] + lines + [keys])


def planes(cur: np.ndarray, grid: Grid, sets, shorter: int | None = None,
           toe_reach: int = TOE_REACH) -> np.ndarray:
    """Every toe length from ``shorter`` steps shorter than cur's (``toe_reach`` unless
    given) to ``toe_reach`` steps longer (``TOE_REACH`` of ``NEAR`` unless given), and
    on a wider base as many steps longer again as it is wider (the stem moved forward
    by the added width, its heel kept), with the base thickness, stem base and base
    width of ``cur`` changed by each combination of steps of each (bases, stems,
    widths) of ``sets`` (m, NDIM). A change of base or
    stem thickness moves the toe length that passes (the toe and heel bars chosen jump
    with the thickness and the toe length), and the toe lengths that pass can be
    islands one step wide, out of single steps' reach.
    Invalid vectors are dropped by the driver."""
    return _planes(cur, grid, plane_offsets(sets), shorter, toe_reach)


def plane_offsets(sets) -> tuple[np.ndarray, np.ndarray]:
    """The combinations of steps of every (bases, stems, widths) of ``sets``, (k, 3)
    (base thickness, stem base, base width; set by set, the first entry's steps
    outermost), and the widest step of each one's set, (k,)."""
    offs = [np.array(list(itertools.product(*st)), dtype=np.int64).reshape(-1, 3)
            for st in sets]
    return (np.vstack(offs),
            np.concatenate([np.full(len(o), max(st[2]), dtype=np.int64)
                            for o, st in zip(offs, sets)]))


def _planes(cur, grid: Grid, offsets, shorter: int | None = None,
            toe_reach: int = TOE_REACH) -> np.ndarray:
    """:func:`planes` of the :func:`plane_offsets` ``offsets`` (with the grid's toe
    bound, a toe up to half the base as widened by the set's widest step)."""
    cur = np.asarray(cur, dtype=np.int64)
    offs, widest = offsets
    shorter = toe_reach if shorter is None else shorter
    wider = np.maximum(offs[:, 2], 0)  # the window's extra toe lengths, per offset
    toes = grid.axes()[TOE]
    toes = toes[(toes >= cur[TOE] - shorter) & (toes <= cur[TOE] + toe_reach + wider.max())]
    # (offset, toe, entry): the offsets outermost, as the rows are returned
    o = np.empty((len(offs), len(toes), NDIM), dtype=np.int64)
    o[...] = cur
    for j, k in enumerate((TB, TS, B)):
        o[:, :, k] += offs[:, j, None]
    o[:, :, TOE] = toes[None, :]
    keep = toes[None, :] <= cur[TOE] + toe_reach + wider[:, None]
    if grid.toe_half:
        keep &= toes[None, :] <= (cur[B] + widest[:, None]) // 2
    return o[keep]


def narrower_lines(cur: np.ndarray, grid: Grid, toe_reach: int = TOE_REACH) -> np.ndarray:
    """The base of ``cur`` narrower by each of ``NARROWER`` steps at the same
    thicknesses, with every toe length from two steps shorter than cur's to
    ``toe_reach`` steps longer (:func:`planes`): a narrower base with a longer toe and a
    shorter heel."""
    return _planes(cur, grid, _NARROWER_OFFSETS, shorter=2, toe_reach=toe_reach)


def heel_lines(cur: np.ndarray, reach: "Reach | None" = None) -> np.ndarray:
    """The stem of ``cur`` moved along with its heel: the base width and toe changed
    together by up to ``reach.heel`` steps either way (``HEEL_REACH`` of ``NEAR``
    unless given; the heel as cur's) with each change of base and stem thickness of
    ``HEEL_THICKNESSES``, and by up to ``HEEL_TOP_REACH`` steps with the stem top one
    or two steps thicker (m, NDIM). A much longer or shorter toe on the same heel can
    be cheaper than every section between. Invalid vectors are dropped by the driver."""
    return np.asarray(cur, dtype=np.int64)[None, :] + (reach or NEAR).heel_steps


def toe_lines(cur: np.ndarray, grid: Grid, toe_reach: int = TOE_REACH) -> np.ndarray:
    """A thinner base with every toe length: the :func:`planes` of ``TOE_LINES``."""
    return _planes(cur, grid, _TOE_LINE_OFFSETS, toe_reach=toe_reach)


_TOE_LINE_OFFSETS = plane_offsets(TOE_LINES)
_NARROWER_OFFSETS = plane_offsets((((0,), (0,), tuple(-k for k in NARROWER)),))


def thickness_trades(cur: np.ndarray) -> np.ndarray:
    """The base thickness and stem base of ``cur`` changed by up to ``TRADE_REACH``
    steps each, the rest as cur's, and the same with the stem top changed as the stem
    base (m, NDIM): a thicker base with a thinner stem (or the reverse) carries the
    same wall, and the single steps between them can fail (the stem's bars anchor in
    the base, the bars of both jump with each thickness, and the founding level with
    the base thickness). A stem of one thickness is thickened or thinned whole: on an
    invented 5.05 m DA2 wall under a 20 degree slope (``benchmarks/walls.py --seed
    21``, its second wall, a 10 cm step) a base a step thinner under a stem two steps
    thicker at its base and top was 1.36 % cheaper than where the search settled, the
    exhaustive reference's (about 0.2 % more candidates at 10 km, the same designs).
    Invalid vectors are dropped by the driver."""
    return np.asarray(cur, dtype=np.int64)[None, :] + _TRADE_STEPS


def stem_shifts(cur: np.ndarray, reach: "Reach | None" = None) -> np.ndarray:
    """The stem base, toe, base width and base thickness of ``cur`` changed by up to
    ``reach.shift`` steps each (``SHIFT_REACH`` of ``NEAR`` unless given), the rest as
    cur's (m, NDIM): a thicker stem takes its
    thickness from the heel or the toe, and the toe length and base width that pass
    move with it. Invalid vectors are dropped by the driver."""
    return np.asarray(cur, dtype=np.int64)[None, :] + (reach or NEAR).shift_steps


def box_steps(dims, reach) -> np.ndarray:
    """Every combination of up to ``reach`` steps either way in each of the entries
    ``dims`` (the first outermost), the other entries 0: (m, NDIM)."""
    steps = np.meshgrid(*[np.arange(-r, r + 1) for r in reach], indexing="ij")
    out = np.zeros((steps[0].size, NDIM), dtype=np.int64)
    for k, d in zip(dims, steps):
        out[:, k] += d.ravel()
    return out


def _trade_steps() -> np.ndarray:
    """The steps of :func:`thickness_trades`: base thickness and stem base, and those
    that change the stem base with the stem top changed alike (m, NDIM)."""
    trades = box_steps((TB, TS), TRADE_REACH)
    whole = trades[trades[:, TS] != 0]
    whole[:, TT] = whole[:, TS]
    return np.vstack([trades, whole])


_TRADE_STEPS = _trade_steps()


#: (base thickness, stem base) changes, in steps, of :func:`heel_lines`: a step thinner,
#: as it is, a step or two thicker, and a step thicker under a stem a step thinner
#: (``HEEL_REACH`` gives the panels each was needed by).
HEEL_THICKNESSES = ((-1, 0), (0, 0), (1, 0), (2, 0), (1, -1))


def _heel_steps(reach: int = HEEL_REACH) -> np.ndarray:
    """The steps of :func:`heel_lines`: base width and toe together (the heel kept) by
    up to ``reach`` steps either way, with each change of ``HEEL_THICKNESSES`` (a
    stem a step thinner leaves the heel a step longer), or by up to ``HEEL_TOP_REACH``
    steps with the stem top one or two steps thicker (m, NDIM)."""
    line = box_steps((B,), (reach,))
    parts = []
    for dz, ds in HEEL_THICKNESSES:
        part = line.copy()
        part[:, TB], part[:, TS] = dz, ds
        parts.append(part)
    top = box_steps((B, TT), (HEEL_TOP_REACH, 2))
    out = np.vstack(parts + [top[top[:, TT] > 0]])
    out[:, TOE] = out[:, B]
    return out


@dataclass(frozen=True)
class Reach:
    """How far a search's moves look about a section, in grid steps: the cold start's
    seeds (``SEEDS``), the jumps' base-width reach (``JUMP_REACH``), the planes' toe
    lengths (``TOE_REACH``), the heel lines' reach (``HEEL_REACH``), the stem shifts'
    (``SHIFT_REACH``) and the planes' sets (``BASE_PLANES``); with the step arrays
    they make."""

    seeds: int
    jump: int
    toe: int
    heel: int
    shift: tuple[int, int, int, int]
    planes: tuple
    jump_window: np.ndarray = field(init=False, repr=False, compare=False)
    heel_steps: np.ndarray = field(init=False, repr=False, compare=False)
    shift_steps: np.ndarray = field(init=False, repr=False, compare=False)
    plane_offsets: tuple = field(init=False, repr=False, compare=False)

    def __post_init__(self):
        for name, value in (("jump_window", _jump_window(self.jump)),
                            ("heel_steps", _heel_steps(self.heel)),
                            ("shift_steps", box_steps((TS, TOE, B, TB), self.shift)),
                            ("plane_offsets", plane_offsets(self.planes))):
            object.__setattr__(self, name, value)


#: The moves' reach on most ground (the constants above).
NEAR = Reach(seeds=SEEDS, jump=JUMP_REACH, toe=TOE_REACH, heel=HEEL_REACH,
             shift=SHIFT_REACH, planes=BASE_PLANES)
#: The moves' reach from where a search reaches a base of ``FAR_FROM`` or wider
#: (:meth:`Store.look_far`): twice the seeds, jumps of 12 steps, toe lengths of 30,
#: heel lines of 30, stem shifts of (6, 4, 2, 1), and a plane of the base thickness,
#: stem base and base width two, two and three steps either way together. On the 34
#: demands of the first 30 of those walls that ended over 0.5 % above the best known
#: without it, each of these was needed (left out one at a time, 1 to 8 of the 34
#: stayed above); a third lattice neighbour, more plane rounds, wider thickness trades
#: or narrower lines, and the second descent on every demand took none further.
FAR = Reach(seeds=6, jump=12, toe=30, heel=30, shift=(6, 4, 2, 1),
            planes=BASE_PLANES + ((tuple(range(-2, 3)), tuple(range(-2, 3)),
                                   tuple(range(-3, 4))),))


def plane_moves(store: Store):
    """After a demand's search: the :func:`planes` of the store's reach (``BASE_PLANES``
    in ``NEAR``), the narrower bases, heel lines and stem shifts of that reach and the
    :func:`thickness_trades` about its best, and the descent on from a better one they
    find, then the same about the new best (at most ``PLANE_ROUNDS`` rounds, until a
    round finds nothing better). They come after everything else, so what the search
    found before stands and its result can only be cheaper for them."""
    if store.best() is None:
        return
    for _ in range(PLANE_ROUNDS):
        cur = store.best_vector()
        store.look_far(cur)
        r = store.reach
        if store.first_ask(("planes", cur.tobytes(), store.grid, r)):
            yield Ask(np.vstack([_planes(cur, store.grid, r.plane_offsets, toe_reach=r.toe),
                                 narrower_lines(cur, store.grid, r.toe), heel_lines(cur, r),
                                 thickness_trades(cur), stem_shifts(cur, r)]))
        if np.array_equal(store.best_vector(), cur):
            return
        for cand in descent(store, store.best_vector()):
            yield Ask(cand)


def settle_moves(store: Store):
    """The planes about the best (:func:`plane_moves`), then :func:`rebound_moves`."""
    yield from plane_moves(store)
    yield from rebound_moves(store)


def rebound_moves(store: Store):
    """While the best sits on a bound a wider grid could move: the widening
    (:func:`widen_moves`) and the planes about the best again (at most ``MAX_WIDEN``
    rounds). Without it a best the planes or a second descent found on a bound stayed
    inside it (only a descent's best was widened, before the planes): on an invented
    DA3 wall (an 18 degree slope over cu 70 kPa) 6.1 m panels ended 2 % above a stem
    top a step thicker than its bound (0.30 m: the top carries no moment)."""
    for _ in range(MAX_WIDEN):
        grid = store.grid
        yield from widen_moves(store)
        if store.grid is grid:
            return
        yield from plane_moves(store)


def descent(store: Store, start, max_iter: int = 60, extra=None, polish: bool = True,
            max_jumps: int | None = None, toe_line: bool = True,
            overstress: float | None = None, own: bool = False):
    """The moves of the local search from ``start``, as neighbourhoods to check.

    A step checks a neighbourhood and moves to the cheapest passing candidate (while
    nothing passes, the least utilised, or with ``overstress`` the least cost x (1 +
    overstress (u - 1)), and the least utilised once that settles with nothing
    passing). Neighbourhoods: the small one, every
    combination of -1..1 steps in base width, toe, base thickness and stem base, with
    (feasibility in the toe length is not convex) the whole toe range at the same base
    width and one step narrower; once that settles, the full one, -1..1 in the five
    dimensions (and in the key's depth and width where the section has a key; a key
    is added by the jumps), then the small one again; until nothing improves. Then
    (at most ``MAX_JUMPS`` times, ``max_jumps`` where given) the :func:`jumps` of the
    settled candidate, and the descent goes on from any better one they find; where
    it would end, once (unless not ``toe_line``), the :func:`toe_lines` of the settled
    candidate, and on from any better one. ``extra`` candidates are checked with the
    first neighbourhood. ``polish=False`` (a start near a known optimum) takes the full
    neighbourhood first.

    A descent moves to the store's best, wherever it was found: from a start dearer
    than that best it goes back to it unless its first neighbourhood holds a cheaper
    one. With ``own`` (a passing ``start``) it follows its own path instead, to the
    cheapest passing candidate of what it asks that is cheaper than where it stands
    (:meth:`Store.results`), so it settles at the bottom of the basin it starts in.
    """
    cur = np.asarray(start, dtype=np.int64)
    here = float(store.results(cur)[1][0]) if own else math.inf  # (own) cost where it is

    def own_next(cand):  # (own) the cheapest passing of cand below here, else cur
        nonlocal here
        cost = store.results(cand)[1]
        if not len(cost) or cost.min() >= here - 1e-9:
            return cur
        j = int(np.argmin(cost))
        here = float(cost[j])
        return cand[j].copy()

    def settled_next(cand):  # after the jumps or toe lines: where the descent goes on
        return own_next(cand) if own else store.best_vector()

    max_jumps = MAX_JUMPS if max_jumps is None else max_jumps
    use_full = not polish
    jumped, toe_lined = 0, False
    for _ in range(max_iter):
        if use_full:
            if cur[KD] > 0:
                # two thirds of a keyed neighbourhood are keys not listed: dropped
                # here, before the driver's validity filter (which would drop them too)
                cand = cur[None, :] + _FULL_KEYED
                cand = cand[store.grid.keys_listed(cand)]
            else:
                cand = cur[None, :] + _FULL
        else:
            # (toes beyond the grid's toe bound are dropped by the driver anyway)
            toes = np.arange(0, max(cur[B] // 2 if store.grid.toe_half
                                    else cur[B] - cur[TS] - 1, 0) + 1)
            line = np.repeat(cur[None, :], 2 * len(toes), axis=0)
            line[len(toes):, 0] -= 1
            line[:, 1] = np.tile(toes, 2)
            cand = np.vstack([cur[None, :] + _SMALL, line])
        if extra is not None:
            cand, extra = np.vstack([np.asarray(extra, dtype=np.int64).reshape(-1, NDIM),
                                     cand]), None
            yield cand
        elif store.first_ask(("step", use_full, cur.tobytes(), store.grid)):
            yield cand
        b = store.best()
        if own:
            nxt = own_next(cand)
        elif b is not None:
            nxt = store.best_vector()
        elif store.checked:
            if overstress is None:
                nxt = store.least_utilised_vector()
            else:  # least cost with the overstress weighed in
                over = np.maximum(np.nan_to_num(store.util, nan=1e9, posinf=1e9) - 1.0, 0.0)
                nxt = store.V[int(np.argmin(store.cost * (1.0 + overstress * over)))]
        else:
            return
        if np.array_equal(nxt, cur):
            if use_full or not polish:
                if use_full and not polish:
                    polish, use_full = True, False  # then the small one until it settles
                    continue
                if store.best() is None:
                    if overstress is not None:
                        # settled with nothing passing: on by the utilization alone
                        overstress, use_full = None, False
                        continue
                    return
                if jumped < max_jumps:
                    jumped += 1
                    cand = jumps(cur, store.grid, store.reach)
                    if store.first_ask(("jumps", cur.tobytes(), store.grid, store.reach)):
                        yield cand
                    nxt = settled_next(cand)
                    if not np.array_equal(nxt, cur):
                        cur, use_full = nxt, False
                        continue
                # where the descent would end: the toe lines, once (its path up to here
                # is as without them, so its result can only be cheaper for them)
                if toe_lined or not toe_line:
                    return
                toe_lined = True
                cand = toe_lines(cur, store.grid, store.reach.toe)
                if store.first_ask(("toe lines", cur.tobytes(), store.grid, store.reach.toe)):
                    yield cand
                nxt = settled_next(cand)
                if np.array_equal(nxt, cur):
                    return
                cur, use_full = nxt, False
                continue
            use_full = True
        else:
            use_full, polish = False, True
            cur = nxt


@dataclass(frozen=True)
class Ask:
    """Candidates a search asks to have checked (the driver keeps those valid and not
    checked yet, :func:`fresh_many`; the search resumes at once when none is left);
    ``prune``: drop those whose lower bound cannot beat the store's best first."""

    v: np.ndarray
    prune: bool = True


@dataclass
class Request:
    """A batch of fresh candidates (and their codes) for the driver to check."""

    v: np.ndarray
    c: np.ndarray
    prune: bool = True


def cold_moves(store: Store, lower_bound, values: tuple[int, ...] = COARSE):
    """A cold start: the coarse grid (about ``values`` values of each dimension)
    best-first, then a descent from each of the store's cheapest passing (or least
    utilised) candidates, as many as its reach has seeds. Where the cheapest coarse
    pass has a base wide enough to look far (:meth:`Store.look_far`), the coarse grid
    goes on best-first to the ``FAR`` seeds first (the same seeds as taking them from
    the start)."""
    coarse = store.grid.every(store.grid.coarse_strides(values))
    v, _ = store.unchecked(coarse)
    if len(v):
        for part in best_first(store, v, lower_bound(v), store.reach.seeds):
            yield Ask(part, prune=False)
    if store.reach is NEAR and store.best() is not None:
        store.look_far(store.best_vector())
        v, _ = store.unchecked(coarse)
        if store.reach is FAR and len(v):
            for part in best_first(store, v, lower_bound(v), store.reach.seeds):
                yield Ask(part, prune=False)
    for i in store.ranked(store.reach.seeds):
        for cand in descent(store, store.V[i].copy()):
            yield Ask(cand)


def reference_moves(store: Store, lower_bound):
    """The search of a reference demand: a cold start (:func:`cold_moves`), then the
    widening and the planes (:func:`settle_moves`) as after a demand's search. A
    reference's section is the start of every demand next to it in height, and a
    demand's descent stays in the basin it starts in: the planes here put more of the
    references, and so of their demands, in the cheapest basin."""
    yield from cold_moves(store, lower_bound)
    yield from widen_moves(store, lower_bound)
    yield from settle_moves(store)


def far_from(demand: Demand) -> float:
    """The base width (m) from which a search of ``demand`` takes the ``FAR`` reach:
    ``FAR_FROM`` times the least height from the retained level to the underside of
    the base (the retained height, the least founding depth and any founding
    lowering)."""
    return FAR_FROM * (demand.h + demand.min_founding_depth_m + demand.extra_depth_m)


def lattice_neighbours(ref: Demand) -> tuple[Demand, ...]:
    """The reference demands up to ``NEIGHBOURS`` lattice steps (``REF_STEP_M``) below the
    reference demand ``ref``, nearest first (none at or below 0 m)."""
    hs = (round(ref.h - j * REF_STEP_M, 6) for j in range(1, NEIGHBOURS + 1))
    return tuple(reference(ref, h) for h in hs if h > 1e-9)


def steps_apart(a: np.ndarray, b: np.ndarray, dims) -> int:
    """The most steps by which the integer candidates ``a`` and ``b`` differ in the
    entries ``dims``."""
    return int(np.max(np.abs(a[dims] - b[dims])))


def neighbour_moves(store: Store, start):
    """A reference's search again from ``start``, a lattice neighbour's cold section,
    in its own ``store`` capped at the reference's cold best cost (a candidate that
    cannot beat it is not checked; :func:`lattice_neighbours`): the descent with its
    jumps and toe lines (while nothing passes, the move weighs cost against overstress,
    ``OVERSTRESS_WEIGHT``), then the planes (:func:`settle_moves`). Its candidates are
    joined to the cold search's (:meth:`Store.absorb`), so it can only make the
    reference cheaper."""
    for cand in descent(store, start, polish=False, overstress=OVERSTRESS_WEIGHT):
        yield Ask(cand)
    yield from settle_moves(store)


def widen_moves(store: Store, lower_bound=None):
    """Move the bounds the best candidate sits on and descend again, a few times; while
    none passes, the bounds the least utilised candidate sits on (where the descent
    settled), as a wider grid can hold a passing section (a wider base carries more
    bearing resistance). A demand is flagged where nothing passes after ``MAX_WIDEN``
    moves, or within bounds its least utilised candidate does not sit on. On an
    invented DA2 wall with water 1 m above a base of 22 degrees, 210 of 312 panels
    were flagged, failing bearing by 2 to 4 % on bases at the 2.0 H bound. The first
    passing section such a descent reaches lies where the least utilised led it (a
    base grown thick as well as wide), so with ``lower_bound`` the widened grid then
    gets a cold start (:func:`cold_moves`)."""
    for _ in range(MAX_WIDEN):
        passing = store.best() is not None
        if passing:
            cur = store.best_vector()
        elif store.checked:
            cur = store.least_utilised_vector()
        else:
            return
        names = store.grid.binding(cur)
        if not names:
            return
        store.grid = store.grid.widened(names)
        for cand in descent(store, cur):
            yield Ask(cand)
        if not passing and store.best() is not None and lower_bound is not None:
            yield from cold_moves(store, lower_bound)


def search_moves(store: Store, lower_bound, starts=()):
    """Every move of one demand's search: a descent from the first of ``starts`` (the
    others checked with its first neighbourhood), a cold start when that finds nothing
    passing (or there are no starts), then the widening and the planes. Where the
    search looks far (weak ground, ``FAR``) and found a passing section, a cold start of
    its own after all that, and the planes again (:func:`far_cold_moves`). (A low
    wall's whole grid comes after its second descent: :func:`low_wall_moves`.)"""
    starts = [np.asarray(s, dtype=np.int64) for s in starts]
    if starts:
        store.look_far(starts[0])
        for cand in descent(store, starts[0], extra=np.array(starts), polish=False):
            yield Ask(cand)
    if store.best() is None:
        yield from cold_moves(store, lower_bound)
    yield from widen_moves(store, lower_bound)
    yield from settle_moves(store)
    yield from far_cold_moves(store, lower_bound)


def far_cold_moves(store: Store, lower_bound):
    """On weak ground (the store looks far, ``FAR``) where a passing section was found:
    a cold start (:func:`cold_moves`: the coarse grid best-first, a descent from each
    of the ``FAR`` seeds cheapest candidates checked), then the planes and the widening
    again (:func:`settle_moves`). A demand's search starts from its references'
    sections and stays in the basin they lie in; on weak ground the basins lie far
    apart, and the references' basin is often not the demand's cheapest. It comes
    after everything else of the search, so it can only make the result cheaper. On
    the 50 invented walls of ``FAR_FROM`` it made 130 demands cheaper (by up to 12.1
    %) and none dearer, for 19 to 64 % more candidates on a seed's ten walls (none at
    10 km); with three seeds instead of six, as many candidates and 29 demands left over
    0.5 % above the best known against 12. Its coarse grid has about twice the base
    thicknesses of a cold start's (``FAR_COARSE``). Then, from the cheapest section of
    each basin class (:func:`basin_starts`), a descent that follows its own path
    (``own=True``): a descent from a start dearer than the store's best goes back to
    that best after its first neighbourhood, so the seeds of a cold start other than
    the first rarely reached the bottom of their own basins. On the 70 invented walls
    of 2026-12-05 (about 21,500 demands) the basin descents made 372 demands cheaper,
    241 by more than 0.5 % and up to 28 % (a 3.45 m DA2 panel had settled on a keyed
    0.90 m base where a 0.35 m one without a key passes), and 3 dearer (up to 0.76 %),
    for 8 to 15 % more candidates on those walls (none at 10 km)."""
    if store.reach is not FAR or store.best() is None:
        return
    yield from cold_moves(store, lower_bound, FAR_COARSE)
    yield from basin_moves(store)


def basin_moves(store: Store, rounds: int = 1, span: float = BASIN_SPAN):
    """Up to ``rounds`` rounds of: a descent that follows its own path
    (``descent(own=True)``) from each of :func:`basin_starts` (within ``span``) not
    started from before in this store, then the planes about the best
    (:func:`settle_moves`); the moves end at a round whose every start was taken
    before. The planes and the descents after them, and a demand's second descent,
    reach basins no start stood in: on an invented weak wall a 5.08 m panel's search
    found a 0.55 m base eighteen steps wider than its best on a 0.70 m base only in
    its second descent (2.7 % dearer than that best), and a descent from there (its
    jumps: the base eight steps wider again) ended 1.0 % below that best."""
    for _ in range(rounds):
        starts = [store.V[i] for i in basin_starts(store, span)]
        if not (yield from own_descents(store, starts)):
            return


def own_descents(store: Store, starts):
    """A descent that follows its own path (``descent(own=True)``) from each of the
    integer candidates ``starts`` not started from before in this store (in this way,
    by :func:`basin_moves` or :func:`handed_basins`: ``Store.first_ask``), then, where
    there was any, the planes about the best (:func:`settle_moves`). Returns whether
    there was any."""
    starts = [np.array(v, dtype=np.int64) for v in starts]
    starts = [v for v in starts if store.first_ask(("basin", v.tobytes()))]
    for v in starts:
        for cand in descent(store, v, own=True):
            yield Ask(cand)
    if starts:
        yield from settle_moves(store)
    return bool(starts)


def late_moves(store: Store, handed):
    """After a weak-ground demand's second descent: ``LATE_BASIN_ROUNDS`` rounds of
    :func:`basin_moves` (from basins up to ``LATE_BASIN_SPAN`` times the best), then
    the descents from the sections its references hand it (:func:`handed_basins`) that
    it has not started from (:func:`own_descents`)."""
    yield from basin_moves(store, LATE_BASIN_ROUNDS, LATE_BASIN_SPAN)
    yield from own_descents(store, handed)


def handed_basins(demand: Demand, known: dict) -> list[np.ndarray]:
    """The basins handed by ``demand``'s references (:class:`Reference`), the taller
    reference's first."""
    return [v for h in reference_heights(demand.h) for v in known[reference(demand, h)].basins]


def basin_starts(store: Store, span: float = BASIN_SPAN) -> list[int]:
    """Indices of the store's cheapest passing candidate of each basin class (ties:
    lower utilization), in increasing cost, those costing at most ``span`` times the
    best (``BASIN_SPAN`` unless given): one per base thickness, toe length in eighths
    of the base width (``BASIN_TOE_PARTS``) and keyed or not. On weak ground bearing
    governs, and the classes part the basins it makes: a base thickness sets the
    founding level (a step of it founds a step higher or lower, on another
    overburden), the toe where the resultant falls, and a key the sliding resistance.
    A descent from each that follows its own path (``descent(own=True)``) settles at
    the bottom of its basin. (Every class, not only those within ``BASIN_SPAN``: on
    three of the 70 walls 18 demands more over 0.5 % cheaper, for 40 to 53 % more
    candidates.)"""
    ok = np.flatnonzero(store.ok)
    if not len(ok):
        return []
    ok = ok[np.lexsort((store.util[ok], store.cost[ok]))]
    ok = ok[store.cost[ok] <= span * store.best_cost()]
    v = store.V[ok]
    cls = np.stack([v[:, TB], (BASIN_TOE_PARTS * v[:, TOE]) // np.maximum(v[:, B], 1),
                    v[:, KD] > 0], axis=1)
    _, first = np.unique(cls, axis=0, return_index=True)
    return [int(i) for i in ok[np.sort(first)]]


def small_grid(grid: Grid, h: float) -> bool:
    """Whether a demand of retained height ``h`` (m) is searched whole
    (:func:`low_wall_moves`): a low wall (``h`` at most ``WHOLE_GRID_H``) whose grid
    has at most ``WHOLE_GRID`` entries in the product of its axes."""
    return h <= WHOLE_GRID_H and math.prod(len(a) for a in grid.axes()) <= WHOLE_GRID


def low_wall_moves(store: Store, lower_bound, first: Grid, h: float):
    """A low wall's whole grid, walked as :func:`cheapest_on_grid` walks it, the
    store's record standing for what it checked already. A grid is taken one base width
    at a time in increasing least lower bound of the cost (:func:`by_least_bound`, as
    the reference takes it), and each width's unchecked
    candidates whose lower bound is below the grid's cheapest passing one found so far
    are checked in increasing lower bound; where that cheapest sits on a bound a wider
    grid could move (:meth:`Grid.binding`), the grid is widened there
    (:meth:`Grid.widened`, the store's grid alike) and walked again, at most
    ``MAX_WIDEN`` times and up to ``WIDENED_GRID`` entries. The first grid is
    ``first`` (:func:`grid.grid_for`'s, before the search moved any bound); while none
    of its candidates passes, those below the best found beyond it are checked. A grid
    none of whose checked candidates passes is widened where its least utilised sits,
    as the reference widens a grid where nothing passes (the reference checks every
    candidate of such a grid first: on an invented wall of very weak base soil that
    took five low panels six million more candidates, 21 M to 27 M for the wall, and
    found nothing cheaper). So the grids are the reference's wherever the
    two least utilised agree, and the result costs at most what the reference's does.
    The search widens its own grid where its least utilised candidate sat while
    nothing passed, which can leave a low wall's grid too large to search whole, and a
    best found beyond the first grid's bounds can differ from that grid's cheapest,
    whose bounds the reference moves: an invented 0.53 m DA3 panel under a 16 degree
    slope with water ended 1.1 % above the reference (a keyed base with a toe beyond
    half its width), and a 0.65 m DA1 panel of another wall 4.3 % (a 0.6 m stem on a
    toe of 2.5 m, the reference's grid widened four times from a first grid where
    nothing passes). It comes after the second descent, so it can only make a result
    cheaper."""

    def cheapest(idx):  # of the store's candidates idx that pass (ties: the lower
        ok = idx[store.ok[idx]]  # utilization), or None
        return int(ok[np.lexsort((store.util[ok], store.cost[ok]))[0]]) if len(ok) else None

    grid = first
    for k in range(MAX_WIDEN + 1):
        if k and math.prod(len(a) for a in grid.axes()) > WIDENED_GRID:
            return
        i = cheapest(np.flatnonzero(grid.valid(store.V)))  # of the store's, on this grid
        # below the grid's cheapest; while none of it passes, below the best found
        # beyond it, for the first grid only (a widened grid none of whose checked
        # candidates passes is widened again where its least utilised sits)
        cut = (float(store.cost[i]) if i is not None
               else store.best_cost() if k == 0 else -math.inf)
        for least, v, lb in (by_least_bound(grid, lower_bound) if cut > -math.inf else ()):
            if least >= cut - 1e-9:
                break
            c = codes(v)
            todo = np.flatnonzero(~store.known(c) & (lb < cut - 1e-9))  # (in lb order)
            for a in range(0, len(todo), WHOLE_GRID_BATCH):
                part = todo[a:a + WHOLE_GRID_BATCH]
                if lb[part[0]] >= cut - 1e-9:
                    break
                n0 = store.checked
                yield Ask(v[part], prune=False)
                j = cheapest(np.arange(n0, store.checked))  # (checked in this order)
                if j is not None and (i is None or (store.cost[j], store.util[j])
                                      < (store.cost[i], store.util[i])):
                    i, cut = j, float(store.cost[j])
        if i is None:  # none of the grid passes: where its least utilised sits
            idx = np.flatnonzero(grid.valid(store.V))
            if not len(idx):
                return
            i = int(idx[np.argmin(np.nan_to_num(store.util[idx], nan=np.inf))])
        names = grid.binding(store.V[i])
        if not names:
            return
        grid = grid.widened(names)
        # the store's grid, which holds the walked one, moved alike holds the widened
        # one (the driver keeps the candidates valid on the store's grid)
        store.grid = store.grid.widened(names)


def by_least_bound(grid: Grid, bound):
    """Each base width's candidates of ``grid`` (:meth:`Grid.by_width`: one width held
    at a time) in increasing lower bound of the cost ``bound`` (a function of integer
    candidates, money/m), the widths in increasing least lower bound: (the width's
    least bound, its candidates, their bounds). Once a cost at or below a width's least
    bound is found, no candidate of that width or of any after it is cheaper."""
    least = np.array([bound(v).min() if len(v) else math.inf for v in grid.by_width()])
    for w in np.argsort(least, kind="stable"):
        v = grid.at_width(grid.b[0] + int(w)).every()
        lb = np.asarray(bound(v), dtype=float)
        order = np.argsort(lb, kind="stable")
        yield float(least[w]), v[order], lb[order]


def needs_second(store: Store, starts, h: float = 0.0) -> bool:
    """Whether a demand's search gets a second descent (:func:`second_moves`): it found
    a passing section, the lower reference's section is another one than the taller's,
    and either the taller reference's section, its first start, does not pass here, or
    the two sections' base or stem thicknesses differ by ``BASIN_STEPS`` or more, or
    their toe lengths or base widths by ``BASIN_SHIFT_STEPS`` or more, or the retained
    height ``h`` (m) is at least ``SECOND_FROM_H``, or the search looks far (``FAR``:
    weak ground). A demand that differs
    from its references by more than height (a wall top above the retained level, a
    deeper founding), one between references that settled in different basins, a
    tall one, or one on weak ground, can settle in a dearer optimum from one start than
    from the other. (On weak ground: on the 50 invented walls of ``FAR_FROM``, before
    :func:`far_cold_moves`, it took 2 of 17 demands over 0.5 % above the best known to
    it, none dearer; about 1 % more candidates on the walls that look far.)"""
    if len(starts) < 2 or store.best() is None or np.array_equal(starts[0], starts[1]):
        return False
    basins = (steps_apart(starts[0], starts[1], [TB, TS]) >= BASIN_STEPS
              or steps_apart(starts[0], starts[1], [TOE, B]) >= BASIN_SHIFT_STEPS)
    return (h >= SECOND_FROM_H or basins or store.reach is FAR
            or not store.passes(starts[0]))


def second_moves(store: Store, start):
    """A second descent from ``start`` in its own ``store``, whose cap is the first
    search's best cost (a candidate that cannot beat it is not checked): single steps
    only, no jumps or toe lines; while nothing passes, the move weighs cost against
    overstress (``OVERSTRESS_WEIGHT``). Its candidates are joined to the first search's
    (:meth:`Store.absorb`), so it can only make the result cheaper; where it does, the
    planes about its section follow in the first search's store (``bespoke``, step 2b:
    on an invented weak wall a 5.74 m panel's second descent found a section 0.003 %
    cheaper than the first search's, and the planes about it one 3.3 % cheaper again).
    On the invented tall wall over undrained clay (``benchmarks/sites/tall-clay``) one
    panel ended 0.95 % above the grid's cheapest without it and at the cheapest with
    it. Where it finds a better section on a bound a wider grid could move, the bound
    moves (:func:`rebound_moves`)."""
    for cand in descent(store, start, polish=False, max_jumps=0, toe_line=False,
                        overstress=OVERSTRESS_WEIGHT):
        yield Ask(cand)
    if store.best_cost() < store.cap - 1e-9:  # a better best: on a bound, widened
        yield from rebound_moves(store)


# --- the driver: many searches in lockstep -------------------------------------------------

@dataclass
class _Task:
    demand: Demand
    store: Store
    gen: object = None
    ask: Ask | None = None
    req: Request | None = None

    def advance(self) -> None:
        """The search's next ask (None: it is done)."""
        self.req = None
        try:
            self.ask = next(self.gen)
        except StopIteration:
            self.ask = None


def _take_fresh(tasks: list[_Task]) -> None:
    """Turn every task's ask into its request of fresh candidates (:func:`fresh_many`, all
    tasks at once); a task whose ask holds none resumes its search at once, until it
    asks for some fresh ones or is done."""
    todo = [t for t in tasks if t.ask is not None]
    while todo:
        got = []
        for c0, c1 in _chunks([len(t.ask.v) for t in todo], FRESH_CHUNK):
            got += fresh_many([t.store for t in todo[c0:c1]], [t.ask.v for t in todo[c0:c1]])
        again = []
        for t, (v, c) in zip(todo, got):
            if len(v):
                t.req, t.ask = Request(v, c, t.ask.prune), None
            else:
                t.advance()
                if t.ask is not None:
                    again.append(t)
        todo = again


def _joined(tasks, vs) -> SectionArrays:
    """The sections of the integer candidates ``vs`` of ``tasks``, joined in order: one
    call per run of tasks on one lattice."""
    parts, k = [], 0
    while k < len(tasks):
        j = k + 1
        while j < len(tasks) and tasks[j].store.grid.lattice == tasks[k].store.grid.lattice:
            j += 1
        parts.append(tasks[k].store.grid.sections(np.concatenate(vs[k:j])))
        k = j
    if len(parts) == 1:
        return parts[0]
    return SectionArrays(**{k: np.concatenate([np.asarray(getattr(p, k), dtype=float)
                                               for p in parts])
                            for k in ("stem_top_m", "stem_base_m", "base_width_m", "toe_m",
                                      "base_thickness_m", "key_depth_m", "key_width_m")})


def _chunks(counts: list[int], chunk: int):
    """(start, stop) ranges of consecutive batches of at most ``chunk`` candidates (a
    larger batch alone in its range)."""
    out, a, tot = [], 0, 0
    for k, c in enumerate(counts):
        if k > a and tot + c > chunk:
            out.append((a, k))
            a, tot = k, 0
        tot += c
    if a < len(counts):
        out.append((a, len(counts)))
    return out


def _lower_bounds(tasks, vs, ground: Demand, costing: Costing, basis: Basis) -> np.ndarray:
    sec = _joined(tasks, vs)
    rows = Rows.of([t.demand for t in tasks], [len(v) for v in vs])
    return ev_.lower_bound(sec, rows, ground, costing, basis)


def _run(tasks: list[_Task], basis: Basis, costing: Costing, chunk: int = CHUNK) -> int:
    """Advance the searches of ``tasks`` (one ground) together until every one is done;
    returns the number of candidates checked."""
    if not tasks:
        return 0
    ground = tasks[0].demand
    checked = 0
    for t in tasks:
        t.advance()
    while True:
        _take_fresh(tasks)
        act = [t for t in tasks if t.req is not None]
        if not act:
            return checked
        # lower-bound pruning against each search's best
        lbt = [t for t in act if t.req.prune and np.isfinite(t.store.prune_cost())]
        counts = [len(t.req.v) for t in lbt]
        for c0, c1 in _chunks(counts, chunk):
            part = lbt[c0:c1]
            lb = _lower_bounds(part, [t.req.v for t in part], ground, costing, basis)
            pos = 0
            for t in part:
                m = len(t.req.v)
                keep = lb[pos:pos + m] < t.store.prune_cost() - 1e-9
                pos += m
                t.req = Request(t.req.v[keep], t.req.c[keep], t.req.prune)
        # the results a prior search of the same demand holds are taken from it
        res, rest = {}, {}
        for t in act:
            n = len(t.req.v)
            r = res[id(t)] = (np.zeros(n, dtype=bool), np.zeros(n), np.zeros(n))
            hit, got = t.store.from_prior(t.req.c)
            if hit.any():
                r[0][hit], r[1][hit], r[2][hit] = got
            rest[id(t)] = np.flatnonzero(~hit)
        # check the rest, cut in pieces of at most a chunk and joined up to a chunk
        pieces = [(t, rest[id(t)][a:a + chunk]) for t in act
                  for a in range(0, len(rest[id(t)]), chunk)]
        for c0, c1 in _chunks([len(i) for _, i in pieces], chunk):
            part = pieces[c0:c1]
            cnt = [len(i) for _, i in part]
            sec = _joined([t for t, _ in part], [t.req.v[i] for t, i in part])
            dems = [t.demand for t, _ in part]
            rows = Rows.of(dems, cnt)
            seg = np.repeat(np.arange(len(part)), cnt)
            complete = np.array([t.store.best() is None for t, _ in part])
            ok, cost, util = ev_.screen(sec, rows, ground, basis, costing, seg, complete,
                                        caps=ev_.caps_of(dems, cnt))
            checked += len(sec)
            pos = 0
            for (t, i), m in zip(part, cnt):
                r = res[id(t)]
                sl = slice(pos, pos + m)
                r[0][i], r[1][i], r[2][i] = ok[sl], cost[sl], util[sl]
                pos += m
        for t in act:
            if len(t.req.v):
                t.store.commit(t.req.v, t.req.c, *res[id(t)])
            t.advance()


# --- reference demands ------------------------------------------------------------------------

def reference(demand: Demand, h_ref: float) -> Demand:
    """The reference demand of ``demand`` at retained height ``h_ref`` (m): the same
    ground and founding rules, front level 0.0, wall top at the retained level, an
    absolute water level taken relative to the front level and rounded to
    ``REF_STEP_M``, no edge-pressure cap (a pure function of the demand)."""
    water = demand.water
    if water is not None and water.level_m is not None:
        rel = round((water.level_m - demand.z_front) / REF_STEP_M) * REF_STEP_M
        water = Water(level_m=float(rel))
    return replace(demand, z_top=float(h_ref), z_front=0.0, wall_top_m=float(h_ref),
                   water=water, max_edge_pressure_kpa=None)


def reference_heights(h: float) -> tuple[float, ...]:
    """The lattice heights next to ``h`` (m): the one at or above it first (its section
    nearly always passes at h), then the one below (none at 0)."""
    k = math.floor(h / REF_STEP_M + 1e-9)
    lo = round(k * REF_STEP_M, 6)
    hi = lo if abs(lo - h) < 1e-9 else round((k + 1) * REF_STEP_M, 6)
    out = [hi]
    if lo > 0 and lo != hi:
        out.append(lo)
    return tuple(out)


# --- flagged designs ---------------------------------------------------------------------------

def nominal_bars(basis: Basis, section: Section) -> Reinforcement:
    """A minimal nominal set (smallest listed bar at the widest listed spacing on every
    face) for a section that is not designed: drawn and measured, never checked."""
    phi = int(min(basis.steel.bar_sizes_mm))
    sp = int(max(basis.steel.spacings_mm))
    cov, covg = basis.concrete.cover_mm, basis.concrete.cover_ground_mm
    ts, tb = section.stem_base_m * 1000.0, section.base_thickness_m * 1000.0
    bs = lambda d: BarSet(phi, sp, math.pi / 4 * phi ** 2 * 1000.0 / sp, 0.0, float(d))  # noqa: E731
    return Reinforcement(stem=bs(ts - cov - phi / 2), heel=bs(tb - cov - phi / 2),
                         toe=bs(tb - covg - phi / 2), stem_horizontal=bs(ts - cov - 1.5 * phi),
                         base_distribution=bs(tb - cov - 1.5 * phi),
                         stem_front=bs(ts - cov - phi / 2))


def nominal_section(demand: Demand, step: float, basis: Basis) -> Section:
    """A section in proportion to the wall (H/10 stem and base, base 0.7 H, toe a quarter
    of it), shown for a demand that is not designed."""
    H = max(demand.h, 0.0) + demand.min_founding_depth_m
    r = lambda x: max(round(x / step) * step, step)  # noqa: E731
    t = max(r(max(basis.design.min_stem_m, H / 10)), r(basis.design.min_base_m))
    width = max(r(0.7 * H), round(t + 2 * step, 6))
    return Section(stem_top_m=r(basis.design.min_stem_m), stem_base_m=t, base_width_m=width,
                   toe_m=min(r(0.25 * width), round(width - t - step, 6)), base_thickness_m=t)


def flagged(demand: Demand, basis: Basis, costing: Costing, step: float, reason: str,
            section: Section | None = None, bars: Reinforcement | None = None,
            section_type: str = "", checked: bool = True) -> SizedDesign:
    """A flagged design that was not searched: the section given (or a nominal one),
    checked in full with its bars (``checked``) or, where no limit state exists (a
    backfill too steep), not checked at all: nominal bars, no checks, edge pressure and
    utilization nan, cost per metre without steel."""
    section = section or nominal_section(demand, step, basis)
    if checked:
        ev = ev_.evaluate_at([section], demand, basis, costing, given=bars)
        return ev_.sized(ev, 0, status="flagged", reason=reason, section_type=section_type)
    one = SectionArrays.of([section])
    rows = Rows.of([demand], [1])
    z_found = float(founding_level(demand, section.base_thickness_m))
    hs = rows.wall_top - z_found - section.base_thickness_m
    cost = float(costing.per_metre(one, hs, demand.z_front - z_found, 0.0)[0])
    return SizedDesign(section=section, reinforcement=bars or nominal_bars(basis, section),
                       checks=(), cost_per_m=cost, z_found=z_found,
                       edge_pressure_sls_kpa=float("nan"), status="flagged", reason=reason,
                       utilization=float("nan"), governing="", section_type=section_type)


def not_designable(demand: Demand, basis: Basis, costing: Costing,
                   step: float) -> SizedDesign | None:
    """The flagged design of a demand no search is made for (a backfill too steep for an
    active limit state or, in the seismic situation, for a Mononobe-Okabe solution; a
    retained height outside the supported range), else None."""
    why = steep_reason(demand, basis) or seismic_reason(demand, basis)
    if why is not None:
        return flagged(demand, basis, costing, step, why, checked=False)
    why = beyond_reason(demand)
    if why is not None:
        return flagged(demand, basis, costing, step, why)
    return None


# --- the bespoke designs ----------------------------------------------------------------------

@dataclass(frozen=True, eq=False)
class Reference:
    """What the search of a reference demand hands the demands next to it: its best
    integer vector (None where nothing passed), the start of their descents, and on
    weak ground (``FAR``) the cheapest of each basin class it descended within
    ``REF_BASIN_SPAN`` of its best (:func:`basin_starts`; () elsewhere), from which
    each of them descends last (:func:`own_descents`)."""

    best: np.ndarray | None
    basins: tuple = ()


@dataclass(frozen=True)
class SearchStats:
    """What a search did: candidates checked, demands searched, references searched."""

    checked: int = 0
    demands: int = 0
    references: int = 0
    checked_references: int = 0


def bespoke(demands, basis: Basis, costing: Costing = Costing(), step: float | None = None,
            stats: list | None = None, references: dict | None = None) -> list[SizedDesign]:
    """The bespoke design of each of ``demands`` (in their order), each distinct demand
    searched once (see the module docstring). ``stats``: a list to which a
    :class:`SearchStats` is appended. ``references``: the reference searches already
    made with this basis, costing and step (reference demand -> its :class:`Reference`),
    which are not searched again; those searched here are
    added to it (a reference's search depends on the reference demand alone, so the
    designs are the same with or without it)."""
    step = float(step if step is not None else basis.design.dimension_step_m)
    uniq = list(dict.fromkeys(demands))
    out: dict[Demand, SizedDesign] = {}
    todo = []
    for d in uniq:
        f = not_designable(d, basis, costing, step)
        if f is not None:
            out[d] = f
        else:
            todo.append(d)

    def lb_of(d: Demand, g: Grid):
        rows1 = lambda n: Rows.of([d], [n])  # noqa: E731
        return lambda v: ev_.lower_bound(g.sections(v), rows1(len(v)), d, costing, basis)

    # 1. the references, searched cold (with their lattice neighbours), then again from
    # their neighbours' cold sections
    known = {} if references is None else references
    refs = [r for r in dict.fromkeys(reference(d, h) for d in todo
                                     for h in reference_heights(d.h)) if r not in known]
    ref_tasks = {}
    for r in dict.fromkeys(refs + [n for r in refs for n in lattice_neighbours(r)]):
        s = Store(grid_for(r, step, basis.design), far_from_m=far_from(r))
        ref_tasks[r] = _Task(r, s, reference_moves(s, lb_of(r, s.grid)))
    checked_refs = _run_by_ground(list(ref_tasks.values()), basis, costing)
    cold = {r: None if t.store.best() is None else t.store.best_vector()
            for r, t in ref_tasks.items()}
    again = []
    for r in refs:
        t = ref_tasks[r]
        for n in lattice_neighbours(r):
            if (cold[r] is None or cold[n] is None
                    or steps_apart(cold[n], cold[r], [B, TOE, TB, TS, TT]) < NEIGHBOUR_APART):
                continue
            s2 = t.store.again()
            again.append((t, _Task(r, s2, neighbour_moves(s2, cold[n]))))
    checked_refs += _run_by_ground([a for _, a in again], basis, costing)
    for t, a in again:
        t.store.absorb(a.store)
    best_of = {r: None if ref_tasks[r].store.best() is None else ref_tasks[r].store.best_vector()
               for r in refs}
    # on weak ground, a descent from each basin class of the reference's search: what
    # its demands descend from last (the reference's best, their first start, stays
    # that of its search)
    far = [ref_tasks[r] for r in refs
           if ref_tasks[r].store.reach is FAR and best_of[r] is not None]
    checked_refs += _run_by_ground(
        [_Task(t.demand, t.store, basin_moves(t.store, 1, REF_BASIN_SPAN)) for t in far],
        basis, costing)
    basins = {t.demand: tuple(t.store.V[i].copy() for i in basin_starts(t.store, REF_BASIN_SPAN))
              for t in far}
    for r in refs:
        known[r] = Reference(best_of[r], basins.get(r, ()))

    # 2. the demands, from their references' best sections
    tasks, starts_of = [], []
    for d in todo:
        s = Store(grid_for(d, step, basis.design), far_from_m=far_from(d))
        starts = [known[reference(d, h)].best.copy() for h in reference_heights(d.h)
                  if known[reference(d, h)].best is not None]
        starts_of.append(starts)
        tasks.append(_Task(d, s, search_moves(s, lb_of(d, s.grid), starts)))
    checked = checked_refs + _run_by_ground(tasks, basis, costing)
    # 2b. where the taller reference's section fails here, or on a tall wall, a second
    # descent
    again = []
    for t, st in zip(tasks, starts_of):
        if needs_second(t.store, st, t.demand.h):
            s2 = t.store.again()
            again.append((t, _Task(t.demand, s2, second_moves(s2, st[1]))))
    checked += _run_by_ground([a for _, a in again], basis, costing)
    better = []
    for t, a in again:
        before = t.store.best_cost()
        t.store.absorb(a.store)
        if t.store.best_cost() < before - 1e-9:
            better.append(t)
    # where it found a better section: the planes about it, as after the first search
    # (the second descent takes single steps only)
    checked += _run_by_ground([_Task(t.demand, t.store, settle_moves(t.store))
                               for t in better], basis, costing)
    # on weak ground, the basins reached since the search's own basin descents, then
    # those its references descended
    checked += _run_by_ground(
        [_Task(t.demand, t.store, late_moves(t.store, handed_basins(t.demand, known)))
         for t in tasks if t.store.reach is FAR and t.store.best() is not None],
        basis, costing)
    # 2c. a low wall's whole grid, widened as the exhaustive reference widens it, from
    # its first grid (grid_for's, before the search moved a bound)
    lows = [(t, grid_for(t.demand, step, basis.design)) for t in tasks]
    checked += _run_by_ground(
        [_Task(t.demand, t.store, low_wall_moves(t.store, lb_of(t.demand, g), g, t.demand.h))
         for t, g in lows if small_grid(g, t.demand.h)], basis, costing)

    # 3. the finalists of each, in full with curtailment
    for d, sd in zip(todo, finish(tasks, basis, costing)):
        out[d] = sd
    if stats is not None:
        stats.append(SearchStats(checked=checked, demands=len(todo), references=len(ref_tasks),
                                 checked_references=checked_refs))
    return [out[d] for d in demands]


def _run_by_ground(tasks: list[_Task], basis: Basis, costing: Costing) -> int:
    groups: dict[tuple, list[_Task]] = {}
    for t in tasks:
        groups.setdefault(t.demand.ground_key, []).append(t)
    return sum(_run(g, basis, costing) for g in groups.values())


def finish(tasks: list[_Task], basis: Basis, costing: Costing) -> list[SizedDesign]:
    """The design of each task: its ``FINALISTS`` cheapest passing candidates (else its
    least utilised) checked in full with curtailment, the cheapest passing chosen (ties:
    lower utilization, then the better screened rank); none passing: the least
    utilised, flagged with its governing check."""
    out: list[SizedDesign | None] = [None] * len(tasks)
    groups: dict[tuple, list[int]] = {}
    for k, t in enumerate(tasks):
        groups.setdefault(t.demand.ground_key, []).append(k)
    for ks in groups.values():
        picks = []
        for k in ks:
            st = tasks[k].store
            idx = st.ranked(FINALISTS if st.ok.any() else 1)
            picks.append(st.V[idx])
        counts = [len(p) for p in picks]
        for c0, c1 in _chunks(counts, CHUNK):
            sub = [tasks[k] for k in ks[c0:c1]]
            sec = _joined(sub, picks[c0:c1])
            dems = [t.demand for t in sub]
            rows = Rows.of(dems, counts[c0:c1])
            ev = ev_.evaluate(sec, rows, dems[0], basis, costing,
                              caps=ev_.caps_of(dems, counts[c0:c1]))
            pos = 0
            for k, m in zip(ks[c0:c1], counts[c0:c1]):
                idx = np.arange(pos, pos + m)
                pos += m
                okk = idx[ev.ok[idx]]
                if len(okk):
                    i = int(okk[np.lexsort((okk, ev.utilization[okk], ev.cost[okk]))[0]])
                    out[k] = ev_.sized(ev, i)
                else:
                    i = int(idx[np.argmin(ev.utilization[idx])])
                    chk, comb, u = ev.governing(i)
                    out[k] = ev_.sized(ev, i, status="flagged",
                                       reason=f"no section within the search bounds passes: "
                                              f"best fails {chk} {comb} ({u:.2f})")
    return out


# --- the exhaustive reference --------------------------------------------------------------------

def cheapest_on_grid(demand: Demand, basis: Basis, costing: Costing = Costing(),
                     step: float | None = None, grid: Grid | None = None,
                     chunk: int = 20_000, every: bool = False,
                     widen: bool = True) -> tuple[Section | None, float]:
    """The cheapest passing section of the whole grid of ``demand`` and its cost per
    metre (money/m), by checking every candidate in full (with curtailed stem bars: the
    costing of the designs). Candidates are checked in increasing lower bound of the
    cost (``evaluate.lower_bound``: the cost with the least steel a passing design
    carries), stopping once the lower bound of every unchecked candidate is at or above
    the best cost found: none of them
    can be cheaper, so the answer is that of checking all (``every=True`` checks all,
    to show it). Where the cheapest sits on a bound a wider grid could move, the bound
    is moved as the search moves it (:meth:`Grid.widened`) and the grid checked again
    (``widen``); where nothing passes, the bounds the least utilised candidate sits on
    (as the search's :func:`widen_moves`). (None, inf) when nothing passes. For the
    tests and the benchmark.
    """
    step = float(step if step is not None else basis.design.dimension_step_m)
    grid = grid or grid_for(demand, step, basis.design)
    for _ in range(MAX_WIDEN + 1):
        best, cost, least = _cheapest(demand, basis, costing, grid, chunk, every)
        at = grid.vector_of(best) if best is not None else least
        names = () if at is None or not widen else grid.binding(at)
        if not names:
            return best, cost
        grid = grid.widened(names)
    return best, cost


def _cheapest(demand: Demand, basis: Basis, costing: Costing, grid: Grid, chunk: int,
              every: bool) -> tuple[Section | None, float, np.ndarray | None]:
    """The cheapest passing section of ``grid``, its cost, and where nothing passes the
    integer vector of the least utilised candidate (else None): the grid is taken one
    base width at a time (:meth:`Grid.by_width`; memory bounded by one width's
    candidates), the widths in increasing least lower bound, and each width's
    candidates in increasing lower bound, until the lower bound reaches the best cost
    found (:func:`by_least_bound`). Every candidate left unchecked has a lower bound at
    or above a best cost found, so none is cheaper than the answer (while nothing
    passes, every candidate is checked)."""
    def bound(v):
        return ev_.lower_bound(grid.sections(v), Rows.of([demand], [len(v)]), demand,
                               costing, basis)

    best, best_cost, best_u = None, math.inf, math.inf
    least_v, least_u = None, math.inf
    for least, v, lb in by_least_bound(grid, bound):
        if not every and least >= best_cost - 1e-9:
            break
        for a in range(0, len(v), chunk):
            if not every and lb[a] >= best_cost - 1e-9:
                break
            part = v[a:a + chunk]
            sec = grid.sections(part)
            ev = ev_.evaluate(sec, Rows.of([demand], [len(part)]), demand, basis, costing,
                              caps=ev_.caps_of([demand], [len(part)]))
            if ev.ok.any():
                idx = np.flatnonzero(ev.ok)
                i = int(idx[np.lexsort((ev.utilization[idx], ev.cost[idx]))[0]])
                c, u = float(ev.cost[i]), float(ev.utilization[i])
                if c < best_cost - 1e-9 or (abs(c - best_cost) <= 1e-9 and u < best_u):
                    best, best_cost, best_u = sec.take(i), c, u
            elif best is None:
                i = int(np.argmin(np.nan_to_num(ev.utilization, nan=np.inf)))
                if ev.utilization[i] < least_u:
                    least_v, least_u = part[i].copy(), float(ev.utilization[i])
    return best, best_cost, (least_v if best is None else None)

"""The vectorised stability engine equals the plain scalar path (wallrun.plain)."""

import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

from wallrun.conditions import Conditions
from wallrun.factors import resolve
from plain_reference import entries, plain_stability_checks
from wallrun.section import Section, SectionArrays
from wallrun.settings import Backfill, Basis, Design, Foundation
from wallrun.stability import stability_checks


def _same(sec: Section, cond, basis):
    vec = entries(stability_checks(SectionArrays.of([sec]), cond, basis), 0)
    pl = plain_stability_checks(sec, cond, basis)
    assert [(c.check, c.combination, c.case, c.unit) for c in vec] == \
           [(c.check, c.combination, c.case, c.unit) for c in pl]
    for a, b in zip(vec, pl):
        for x, y in ((a.effect, b.effect), (a.resistance, b.resistance)):
            if np.isinf(x) or np.isinf(y):
                assert x == y
            else:
                assert x == pytest.approx(y, rel=1e-9, abs=1e-9), (a, b)


def test_hand_section_same():
    s = Section(0.3, 0.3, 2.4, 0.6, 0.4)
    cond = Conditions(3.6, 0.8, 0.0, Backfill(18.0, 30.0), Foundation(19.0, 30.0), 10.0)
    _same(s, cond, Basis(factors=resolve("DA1")))


@settings(max_examples=50, deadline=None)
@given(tsb=st.floats(0.25, 0.6), frac=st.floats(0.5, 1.0), toe=st.floats(0.0, 1.5),
       heel=st.floats(0.3, 3.5), t=st.floats(0.3, 0.7), key=st.booleans(),
       dk=st.floats(0.2, 0.8), wk=st.floats(0.2, 0.5), h=st.floats(0.8, 6.0),
       D=st.floats(0.4, 1.5), slope=st.floats(0.0, 18.0), q=st.floats(0.0, 25.0),
       water=st.one_of(st.none(), st.floats(-0.5, 8.0)), c=st.sampled_from([0.0, 5.0]),
       cu=st.sampled_from([0.0, 40.0, 120.0]), allow=st.sampled_from([0.0, 180.0]),
       approach=st.sampled_from(["DA1", "DA2", "DA3"]),
       passive=st.sampled_from(["none", "key", "full"]),
       openi=st.booleans(), k=st.sampled_from([1.0, 2 / 3]), cv=st.sampled_from([None, 27.0]))
def test_vectorised_equals_plain(tsb, frac, toe, heel, t, key, dk, wk, h, D, slope, q, water,
                                 c, cu, allow, approach, passive, openi, k, cv):
    """Property: every effect and resistance agrees to 1e-9 (relative)."""
    s = Section(tsb * frac, tsb, toe + tsb + heel, toe, t,
                dk if key else 0.0, min(wk, heel + tsb) if key else 0.0)
    zf = 20.0
    cond = Conditions(z_top=zf + D + h, z_front=zf + D, z_found=zf,
                      backfill=Backfill(19.5, 33.0, slope, 0.0),
                      foundation=Foundation(18.5, 31.0, cv, c, cu, allow), surcharge_kpa=q,
                      water_level_m=None if water is None else zf + water)
    basis = Basis(factors=resolve(approach),
                  design=Design(approach=approach, passive=passive, undrained_interface_open=openi,
                                base_friction_factor=k))
    _same(s, cond, basis)

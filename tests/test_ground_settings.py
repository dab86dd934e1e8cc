"""The ``[ground]`` table (GroundModel), the slope factor gR_slope and the not-checked
list with overall stability on and off."""

from __future__ import annotations

import pytest

from wallrun import cautions, factors
from wallrun.errors import InputError
from wallrun.settings import GroundModel
from wallrun.site import load_site

TOML = """[project]
name = "Ground table"

[profiles]
ground = "ground.csv"
finished = "finished.csv"
"""


def make_site(tmp_path, toml=TOML):
    d = tmp_path / "site"
    d.mkdir()
    (d / "site.toml").write_text(toml, encoding="utf-8")
    (d / "ground.csv").write_text("chainage_m,level_m\n0,10.0\n30,10.0\n", encoding="utf-8")
    (d / "finished.csv").write_text("chainage_m,level_m\n0,10.0\n15,12.0\n30,10.5\n",
                                    encoding="utf-8")
    return d


def test_defaults(tmp_path):
    s = load_site(make_site(tmp_path))
    assert s.ground_model == GroundModel()
    assert s.ground_model.front_slope_deg == 0.0 and s.ground_model.retained_crest_m is None
    assert s.ground_model.overall_stability is False
    # off: overall stability is listed as not checked
    assert cautions.OVERALL in cautions.not_checked(s)


def test_values_read_and_not_checked_list(tmp_path):
    toml = TOML + "[ground]\nfront_slope_deg = 12\nretained_crest_m = 2.5\noverall_stability = true\n"
    s = load_site(make_site(tmp_path, toml=toml))
    assert s.ground_model == GroundModel(12.0, 2.5, True)
    listed = cautions.not_checked(s)
    assert cautions.OVERALL not in listed
    # the 7.3.2 restraint steel is checked by default (design.restraint_steel)
    assert set(listed) == set(cautions.NOT_CHECKED) - {cautions.OVERALL, cautions.RESTRAINT}


@pytest.mark.parametrize("text,fragment", [
    ("front_slope_deg = 90", "[ground] front_slope_deg: must be >= 0 and < 90"),
    ("front_slope_deg = -1", "[ground] front_slope_deg: must be >= 0 and < 90"),
    ("retained_crest_m = -0.5", "[ground] retained_crest_m: must be >= 0"),
    ("overall_stability = 1", "[ground] overall_stability: must be true or false"),
    ("front_slope = 5", "[ground] front_slope: unknown key"),
])
def test_bad_values_name_the_key(tmp_path, text, fragment):
    with pytest.raises(InputError) as e:
        load_site(make_site(tmp_path, toml=TOML + "[ground]\n" + text + "\n"))
    assert fragment in str(e.value)


def test_slope_resistance_factor(tmp_path):
    # EN 1997-1 Table A.14: gamma_R;e = 1.0 (R1), 1.1 (R2), 1.0 (R3)
    assert [factors.RECOMMENDED[k].gR_slope for k in ("DA1-1", "DA1-2", "DA2", "DA3")] == [
        1.0, 1.0, 1.1, 1.0]
    toml = TOML + "[design]\napproach = \"DA2\"\n[factors.DA2]\ngR_slope = 1.2\n"
    s = load_site(make_site(tmp_path, toml=toml))
    assert s.factors["DA2"].gR_slope == 1.2


def test_every_item_not_checked_has_its_few_words_for_the_console():
    # the console's one line names each item of the list in a few words
    assert set(cautions.SHORT) == set(cautions.NOT_CHECKED)
    assert len(set(cautions.SHORT.values())) == len(cautions.SHORT)

"""Profiles validated whole: every parameter a number or one of its declared words (issue 12)."""

import textwrap

import numpy as np
import pandas as pd
import pytest

import checker
from checker.resources import data_dir
from checker.ruleset.loader import RuleFileError, load_profile, load_ruleset


def _profile(tmp_path, body: str, name: str = "p") -> str:
    folder = tmp_path / "profiles"
    folder.mkdir(exist_ok=True)
    path = folder / f"{name}.toml"
    path.write_text(textwrap.dedent(body), encoding="utf-8")
    return str(path)


def test_set_refuses_a_misspelt_word_naming_the_allowed_ones():
    with pytest.raises(RuleFileError, match=r"material_values=formulas.*one of: table, formula"):
        load_ruleset("uk-na", overrides={"material_values": "formulas"})
    rs = load_ruleset("uk-na", overrides={"material_values": "formula"})
    assert rs.profile.params["material_values"] == "formula"


def test_tie_node_and_shear_av_are_profile_parameters_with_clause_and_note():
    rs = load_ruleset("ec2")
    assert rs.profile.params["tie_node"] == "centre" and rs.profile.params["shear_av"] == "inside-pile"
    assert rs.profile.choices["tie_node"] == ("centre", "column-width")
    assert rs.profile.choices["shear_av"] == ("inside-pile", "clear")
    assert "6.2.2(6)" in rs.profile.sources["shear_av"]
    assert load_ruleset("uk-na", overrides={"shear_av": "clear"}).profile.params["shear_av"] == "clear"
    with pytest.raises(RuleFileError, match="one of: centre, column-width"):
        load_ruleset("uk-na", overrides={"tie_node": "column"})


def test_a_profile_file_with_a_word_outside_its_choices_is_refused_naming_file_and_parameter(tmp_path):
    path = _profile(tmp_path, """
        name = "p"
        extends = "uk-na"
        [params]
        material_values = { value = "formulas" }
    """)
    with pytest.raises(RuleFileError, match=r"p\.toml: parameter 'material_values' = 'formulas'.*table, formula"):
        load_profile(path, [tmp_path, data_dir("rules")])


def test_a_number_where_a_word_is_declared_and_a_word_where_a_number_is_are_refused(tmp_path):
    path = _profile(tmp_path, """
        name = "p"
        extends = "uk-na"
        [params]
        shear_av = { value = 1.0 }
    """)
    with pytest.raises(RuleFileError, match="'shear_av'.*one of inside-pile, clear is needed"):
        load_profile(path, [tmp_path, data_dir("rules")])
    path = _profile(tmp_path, """
        name = "p"
        extends = "uk-na"
        [params]
        gamma_c = { value = "1.5" }
    """)
    with pytest.raises(RuleFileError, match="'gamma_c' = '1.5': a number is needed"):
        load_profile(path, [tmp_path, data_dir("rules")])


def test_a_new_text_parameter_needs_its_words(tmp_path):
    path = _profile(tmp_path, """
        name = "p"
        extends = "uk-na"
        [params]
        my_mode = { value = "fast" }
    """)
    with pytest.raises(RuleFileError, match="'my_mode'.*choices"):
        load_profile(path, [tmp_path, data_dir("rules")])
    path = _profile(tmp_path, """
        name = "p"
        extends = "uk-na"
        [params]
        my_mode = { value = "fast", choices = ["fast", "slow"] }
    """)
    prof = load_profile(path, [tmp_path, data_dir("rules")], {"my_mode": "slow"})
    assert prof.params["my_mode"] == "slow" and prof.choices["my_mode"] == ("fast", "slow")


def test_every_packaged_text_parameter_declares_its_words():
    for name in ("uk-na", "ec2"):
        prof = load_ruleset(name).profile
        for k, v in prof.params.items():
            if isinstance(v, str):
                assert v in prof.choices[k], (name, k)


def test_review_of_a_dataframe_honours_coords():
    caps = pd.DataFrame({
        "Mark": ["PC9"], "Pile dia": [600], "Size": ["3000 x 3600 x 1200"], "Column": [600], "NEd": [5000],
        "Concrete": ["C32/40"], "Cover": [75], "Bars X": ["12H25"], "Bars Y": ["12H25"],
    })
    coords = pd.DataFrame({"mark": ["PC9"] * 3, "x": [-1200.0, 1200.0, 0.0], "y": [-900.0, -900.0, 1200.0]})
    rv = checker.review(caps, coords=coords, remedy=False)
    assert len(rv.caps) == 1 and rv.caps["piles"].iat[0] == 3
    assert np.isclose(rv.caps["pile_spacing"].iat[0], 2400.0)
    without = checker.review(caps, remedy=False)
    assert len(without.caps) == 0       # no pile count and no coordinates: the cap is rejected

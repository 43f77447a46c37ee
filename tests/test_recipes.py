"""Recipes as files: a filter recipe written, read back, refused when damaged."""

import json

import numpy as np
import pytest

import gainshape as gs


def test_recipe_round_trips_and_applies_like_the_call_it_records(tmp_path):
    curve = gs.bandpass(0.5, 40.0) * gs.notch(50.0, harmonics=2)
    path = tmp_path / "filter.json"
    gs.write_recipe(path, curve, causal=True, tolerance=0.002, pad="edge", picks="eeg")
    recipe = gs.read_recipe(path)
    assert recipe == {"filt": curve, "causal": True, "kernel": "shortest", "tolerance": 0.002,
                      "pad": "edge", "picks": "eeg"}
    # reference: the same call made directly (the recipe holds apply's own arguments)
    x = np.random.default_rng(0).standard_normal((2, 5000))
    options = {k: v for k, v in recipe.items() if k != "picks"}
    np.testing.assert_array_equal(gs.apply(x, sfreq=250.0, **options),
                                  gs.apply(x, curve, sfreq=250.0, causal=True, tolerance=0.002,
                                           pad="edge"))
    on_disk = json.loads(path.read_text())
    assert on_disk["format"] == "gainshape.recipe" and on_disk["version"] == 1


def test_a_design_is_recorded_by_its_curve_and_options(tmp_path):
    design = gs.design(gs.highpass(0.1), 250.0, kernel=30.0)
    gs.write_recipe(tmp_path / "r.json", design)
    recipe = gs.read_recipe(tmp_path / "r.json")
    assert recipe["filt"] == design.curve and recipe["kernel"] == 30.0


@pytest.mark.parametrize(("edit", "message"), [
    (lambda d: d.update(version=2), "version 2"),
    (lambda d: d.update(colour="red"), "'colour'"),
    (lambda d: d.pop("curve"), "'curve'"),
    (lambda d: d.update(format="something else"), "gainshape.recipe"),
    (lambda d: d.update(pad="mirror"), "'mirror' is not a choice for 'pad'"),
    (lambda d: d.update(picks=3.5), "'picks'"),
])
def test_damaged_recipes_are_refused_with_what_is_wrong(tmp_path, edit, message):
    path = tmp_path / "r.json"
    gs.write_recipe(path, gs.lowpass(30.0))
    data = json.loads(path.read_text())
    edit(data)
    path.write_text(json.dumps(data))
    with pytest.raises(ValueError, match=message):
        gs.read_recipe(path)


def test_not_json_and_bare_callables_are_refused(tmp_path):
    path = tmp_path / "r.json"
    path.write_text("{not json")
    with pytest.raises(ValueError, match="not a JSON"):
        gs.read_recipe(path)
    with pytest.raises(ValueError, match="callable"):
        gs.write_recipe(tmp_path / "c.json", gs.GainCurve(lambda f: np.ones_like(f)))
    assert not (tmp_path / "c.json").exists()


def test_a_missing_folder_is_named_before_anything_is_written(tmp_path):
    target = tmp_path / "no_such_folder" / "filter.json"
    with pytest.raises(FileNotFoundError, match="the folder .*no_such_folder does not exist"):
        gs.write_recipe(target, gs.lowpass(30.0))
    assert not (tmp_path / "no_such_folder").exists()

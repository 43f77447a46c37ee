"""The step record is a written format: step.schema.json, shipped with the package.

Checked with the jsonschema package (JSON Schema draft 2020-12, the
specification at json-schema.org). Every step the suite writes is validated
by the hook in conftest.py; here, the schema itself, a step of each kind,
and that it refuses what it must.
"""

import copy
import json
from importlib.resources import files

import numpy as np
import pytest

import gainshape as gs
from gainshape.record import steps as provenance

jsonschema = pytest.importorskip("jsonschema")
SCHEMA = json.loads((files("gainshape.record") / "step.schema.json").read_text())
VALIDATOR = jsonschema.Draft202012Validator(SCHEMA)


def _step(**kwargs):
    x = np.random.default_rng(0).standard_normal((2, 3000))
    _, step = gs.apply(x, gs.bandpass(1.0, 30.0), sfreq=250.0, return_step=True, **kwargs)
    return json.loads(json.dumps(step))


def test_the_schema_is_shipped_valid_and_versioned():
    jsonschema.Draft202012Validator.check_schema(SCHEMA)
    assert SCHEMA["$id"] == f"gainshape.step/{provenance.STEP_FORMAT_VERSION}"


def test_every_step_the_suite_writes_is_validated():
    assert provenance.make_step.__name__ == "checked_make_step"  # the conftest hook is on


def test_steps_of_each_kind_validate(make_raw, tmp_path):
    import mne

    VALIDATOR.validate(_step())  # an array: its rows recorded
    raw = make_raw()
    _, step = gs.apply(raw, gs.lowpass(30.0), return_step=True)
    VALIDATOR.validate(json.loads(json.dumps(step)))
    raw.save(tmp_path / "lazy_raw.fif")
    lazy, step = gs.apply(mne.io.read_raw_fif(tmp_path / "lazy_raw.fif", preload=False),
                          gs.lowpass(30.0), return_step=True)
    assert step["application"]["lazy"] is True
    VALIDATOR.validate(json.loads(json.dumps(step)))


@pytest.mark.parametrize("version", [0, 1])
def test_steps_of_earlier_versions_are_read_with_the_current_names(version, make_raw):
    # the format's rule (docs/step_record.md): readers accept every version written so far
    raw = make_raw()
    _, step = gs.apply(raw, gs.lowpass(30.0), return_step=True)
    old = copy.deepcopy(step)
    old["realized"]["stopband_attenuation_db"] = old["realized"].pop("stop_band_attenuation_db")
    old["format_version"] = 1
    if version == 0:
        del old["format_version"]
        for band in old["realized"]["stop_bands"]:
            band.pop("attenuated_low", None), band.pop("attenuated_high", None)
    provenance.store_step(raw.info, old)
    [read] = gs.history(raw)
    assert read["realized"]["stop_band_attenuation_db"] == \
        step["realized"]["stop_band_attenuation_db"]
    assert "stopband_attenuation_db" not in read["realized"]
    least = np.floor(step["realized"]["stop_band_attenuation_db"])
    assert f"at least {least:.0f} dB" in gs.methods_text(raw, detail="full")
    VALIDATOR.validate({**read, "format_version": provenance.STEP_FORMAT_VERSION}
                       if version == 0 else {**read, "format_version": 2})


@pytest.mark.parametrize("damage", ["kernel_samples", "format", "application key", "channels"])
def test_the_schema_refuses_a_damaged_step(damage):
    step = copy.deepcopy(_step())
    if damage == "kernel_samples":
        step["design"]["kernel_samples"] = "559"
    elif damage == "format":
        step["format"] = "another.step"
    elif damage == "application key":
        step["application"]["padding"] = "reflect"  # a key the format does not have
    else:
        del step["channels"]
    with pytest.raises(jsonschema.ValidationError):
        VALIDATOR.validate(step)


def test_the_typed_step_and_the_schema_name_the_same_keys():
    # one format written down twice (a TypedDict for the code, a JSON Schema for readers)
    from typing import get_type_hints

    assert set(get_type_hints(provenance.Step)) == set(SCHEMA["properties"])
    assert set(SCHEMA["required"]) <= set(get_type_hints(provenance.Step))
    design_schema = SCHEMA["properties"]["design"]
    assert set(get_type_hints(provenance.StepDesign)) == set(design_schema["properties"])

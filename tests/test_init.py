"""The public surface is exactly the names DESIGN.md fixes (plus the warning class)."""

import gainshape as gs


def test_all_names_exist_and_are_public():
    for name in gs.__all__:
        assert hasattr(gs, name), name
        assert not name.startswith("_")


def test_foundation_names_present():
    expected = {
        "GainCurve", "lowpass", "highpass", "bandpass", "bandstop", "notch",
        "design", "FilterDesign", "apply", "GainshapeWarning",
    }
    assert expected <= set(gs.__all__)


def test_warning_class_is_userwarning():
    assert issubclass(gs.GainshapeWarning, UserWarning)

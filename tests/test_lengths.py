"""What makes a kernel long: the advice names the feature and the change that shortens it.

A transition W Hz wide needs a kernel of about 1/W seconds (the time-bandwidth
relation of the Fourier transform; common practice, no source). Each case
has one feature far narrower than the others; the note must name that one.
"""

import warnings

import pytest

import gainshape as gs


def _note(curve, sfreq):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", gs.GainshapeWarning)
        f = gs.design(curve, sfreq, tolerance=0.01)
    assert f.characteristics.length > 60.0  # long enough for the note
    (note,) = [n for n in f.notes if "long" in n]
    return note


def test_a_low_pass_cliff_is_named_as_a_sharp_bend_not_a_slow_edge():
    cliff = gs.GainCurve.from_points([1.0, 23.99, 24.0, 100.0], [1.0, 1.0, 0.0, 0.0],
                                     freq_scale="log")
    note = _note(cliff, 250.0)
    assert "the sharp bend at 24 Hz" in note and "a gentler roll-off there" in note
    assert "high-pass" not in note and "low-frequency edge" not in note


def test_a_slow_high_pass_is_named_with_its_frequency():
    note = _note(gs.highpass(0.02), 250.0)
    assert "the slow high-pass edge at 0.02" in note and "a higher or gentler high-pass" in note


def test_a_narrow_notch_is_named_with_its_width():
    note = _note(gs.lowpass(100.0) * gs.notch(50.0, width=0.03), 500.0)
    assert "the narrowest notch, at 50 Hz (0.03" in note and "a wider notch" in note


def test_an_edit_that_makes_the_kernel_four_times_longer_says_so():
    editor = gs.draw(gs.lowpass(24.0), sfreq=250.0)
    before = editor.design.characteristics.length
    falling = [i for i, (f, g) in enumerate(editor.points) if 0.05 < g < 0.95]
    i = falling[0]
    below, above = editor.points[i - 1][0], editor.points[i + 1][0]
    editor.drag(i - 1, above * 0.999, 1.0)  # the pass band's last point right up to the stop band
    after = editor.design.characteristics.length
    assert after > 4 * before
    message = editor.message
    assert f"from {before:.3g} s to {after:.3g} s" in message and "sharp bend" in message
    assert below < above


@pytest.mark.parametrize("curve", [gs.lowpass(30.0), gs.bandpass(1.0, 30.0)])
def test_an_ordinary_edit_says_nothing_about_growth(curve):
    editor = gs.draw(curve, sfreq=250.0)
    f, g = editor.points[1]
    editor.drag(1, f * 1.02, g)
    assert "times longer" not in editor.message


def test_a_drawn_curve_s_bend_where_it_leaves_zero_is_named_at_that_point():
    # the gain leaves 0 at the first drawn point (0.01 Hz) with a kink; the edge is far above
    drawn = gs.GainCurve.from_points([0.01, 1.412, 2.0, 120.0], [0.0, 0.504, 1.0, 1.0],
                                     freq_scale="log")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", gs.GainshapeWarning)
        f = gs.design(drawn, 250.0)
    (note,) = [n for n in f.notes if "long" in n]
    assert "the bend of the gain at 0.01 Hz (a drawn point)" in note

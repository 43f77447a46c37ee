"""Gain curves: interpolation, constructors, algebra, serialization, display."""

import json

import numpy as np
import pytest

import gainshape as gs
from gainshape import GainCurve


def test_from_points_passes_through_points_without_overshoot():
    freqs, gains = [1.0, 2.0, 4.0, 40.0, 60.0], [0.0, 0.8, 1.0, 1.0, 0.0]
    g = GainCurve.from_points(freqs, gains)
    np.testing.assert_allclose(g(freqs), gains, atol=1e-12)
    fine = np.linspace(1.0, 60.0, 5000)
    values = g(fine)
    # PCHIP keeps each interval within its end values (Fritsch & Carlson 1980).
    assert values.min() >= 0.0 and values.max() <= 1.0 + 1e-12


def test_from_points_is_flat_beyond_end_points():
    g = GainCurve.from_points([2.0, 10.0], [0.2, 0.9])
    np.testing.assert_allclose(g([0.0, 1.0, 100.0, 1e4]), [0.2, 0.2, 0.9, 0.9])


@pytest.mark.parametrize("freq_scale", ["linear", "log"])
def test_from_points_monotone_between_points(freq_scale):
    g = GainCurve.from_points([0.1, 1.0, 30.0, 45.0], [0.0, 1.0, 1.0, 0.0], freq_scale=freq_scale)
    rising = g(np.geomspace(0.1, 1.0, 500))
    falling = g(np.linspace(30.0, 45.0, 500))
    assert np.all(np.diff(rising) >= -1e-12)
    assert np.all(np.diff(falling) <= 1e-12)


def test_from_points_db_scale():
    g = GainCurve.from_points([1.0, 10.0], [-6.0, 0.0], gain_scale="db")
    np.testing.assert_allclose(g([1.0, 10.0]), [10 ** (-6 / 20), 1.0])


def test_gain_above_one_warns():
    with pytest.warns(gs.GainshapeWarning, match="amplifies"):
        GainCurve.from_points([1.0, 10.0], [1.0, 2.0])


def test_callable_curve_evaluates_at_absolute_frequency():
    g = GainCurve(lambda f: np.exp(-f / 10.0))
    np.testing.assert_allclose(g([-10.0, 10.0]), [np.exp(-1.0)] * 2)


def test_callable_returning_scalar_is_broadcast():
    assert GainCurve(lambda f: 1.0)(np.zeros(3)).shape == (3,)


def test_product_and_complement():
    lp, hp = gs.lowpass(30.0), gs.highpass(1.0)
    f = np.array([0.5, 1.0, 10.0, 30.0, 80.0])
    np.testing.assert_allclose((lp * hp)(f), lp(f) * hp(f))
    np.testing.assert_allclose((1 - lp)(f), 1 - lp(f))


def test_bandpass_is_highpass_times_lowpass():
    f = np.geomspace(0.01, 200, 50)
    bp = gs.bandpass(0.1, 30.0, rolloff=18.0)
    ref = gs.highpass(0.1, rolloff=18.0) * gs.lowpass(30.0, rolloff=18.0)
    np.testing.assert_allclose(bp(f), ref(f), rtol=1e-12)


def test_notch_width_is_between_half_amplitude_points():
    np.testing.assert_allclose(gs.notch(60.0, width=4.0)([58.0, 60.0, 62.0]), [0.5, 0.0, 0.5])


def test_notch_harmonics():
    g = gs.notch(60.0, width=4.0, harmonics=2)
    np.testing.assert_allclose(g([60.0, 120.0]), [0.0, 0.0], atol=1e-12)
    # each notch's skirt touches the other's edges by about 1e-6
    np.testing.assert_allclose(g([58.0, 62.0, 118.0, 122.0]), 0.5, rtol=1e-5)
    assert g([180.0])[0] > 0.999


CURVES = {
    "lowpass": gs.lowpass(30.0, rolloff=9.5),
    "highpass": gs.highpass(0.1),
    "bandpass": gs.bandpass(0.5, 40.0),
    "bandstop": gs.bandstop(45.0, 55.0, rolloff=24.0),
    "notch": gs.notch(50.0, width=2.0, harmonics=3),
    "points": GainCurve.from_points([0.3, 1.0, 20.0], [0.0, 1.0, 0.25], freq_scale="log"),
    "product": gs.bandpass(0.1, 30.0) * gs.notch(50.0),
    "complement": 1 - gs.lowpass(0.5),
}


@pytest.mark.parametrize("curve", CURVES.values(), ids=CURVES.keys())
def test_dict_round_trip_through_json_is_exact(curve):
    back = GainCurve.from_dict(json.loads(json.dumps(curve.to_dict())))
    assert back == curve
    f = np.geomspace(0.01, 400.0, 300)
    np.testing.assert_array_equal(back(f), curve(f))


def test_callable_curve_cannot_serialize():
    with pytest.raises(ValueError, match="from_points"):
        GainCurve(np.cos).to_dict()
    with pytest.raises(ValueError, match="from_points"):
        (gs.lowpass(30.0) * GainCurve(np.cos)).to_dict()


def test_from_dict_rejects_foreign_dicts():
    with pytest.raises(ValueError, match="GainCurve.to_dict"):
        GainCurve.from_dict({"kind": "lowpass"})


def test_repr_and_html():
    assert repr(gs.lowpass(30.0)) == "GainCurve(low-pass 30 Hz, 12 dB/octave)"
    assert repr(gs.notch(50.0, harmonics=2)) == "GainCurve(notch at 50, 100 Hz, width 2 Hz)"
    html = gs.bandpass(0.1, 30.0)._repr_html_()
    assert "band-pass 0.1-30 Hz" in html and "<table>" in html


def test_equality_and_hash():
    assert gs.lowpass(30.0) == gs.lowpass(30.0)
    assert gs.lowpass(30.0) != gs.lowpass(31.0)
    assert len({gs.lowpass(30.0), gs.lowpass(30.0)}) == 1


def test_below_nyquist_trims_harmonics_and_rejects_cutoffs():
    curve = gs.bandpass(1.0, 40.0) * gs.notch(50.0, harmonics=3)
    assert curve.below_nyquist(200.0) == (curve, ())
    trimmed, notes = curve.below_nyquist(125.0)
    assert trimmed == gs.bandpass(1.0, 40.0) * gs.notch(50.0, harmonics=2)
    assert notes == ("notch harmonic at 150 Hz is at or above the Nyquist frequency (125 Hz) and is dropped",)
    with pytest.raises(ValueError, match="Nyquist"):
        gs.lowpass(130.0).below_nyquist(125.0)


def test_curves_pickle_by_recipe_and_by_callable():
    import pickle

    curve = gs.bandpass(0.1, 40.0) * gs.notch(50.0, harmonics=3)
    again = pickle.loads(pickle.dumps(curve))
    assert again == curve and again.recipe == curve.recipe
    f = np.linspace(0, 200, 101)
    np.testing.assert_array_equal(again(f), curve(f))
    bare = gs.GainCurve(np.exp)  # a module-level callable pickles by reference
    assert pickle.loads(pickle.dumps(bare)).func is np.exp

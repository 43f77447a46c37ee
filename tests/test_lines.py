"""Lines found in Raw, Epochs and Evoked; the proposed comb, its reasons, its record."""

import json

import matplotlib
import mne
import numpy as np
import pytest

import gainshape as gs
from gainshape.shaping.shapes import comb

matplotlib.use("agg")


def hum(sfreq=250.0, seconds=60.0, line_freq=None, freqs=(50.0, 100.0), seed=0):
    """Four EEG channels of noise with lines at ``freqs`` and a stim channel."""
    rng = np.random.default_rng(seed)
    t = np.arange(int(sfreq * seconds)) / sfreq
    data = 1e-6 * rng.standard_normal((4, t.size))
    data += sum(2e-6 * np.sin(2 * np.pi * f * t + rng.uniform(0, 6, (4, 1))) for f in freqs)
    stim = np.zeros((1, t.size))
    stim[0, int(sfreq)::int(2 * sfreq)] = 1.0
    info = mne.create_info(["Fz", "Cz", "Pz", "Oz", "STI"], sfreq, ["eeg"] * 4 + ["stim"])
    raw = mne.io.RawArray(np.vstack([data, stim]), info, verbose=False)
    raw.info["line_freq"] = line_freq
    return raw


def _frequencies(found):
    return [round(float(f), 1) for f in found.line_frequency.values]


def test_raw_epochs_and_evoked_show_the_same_lines():
    raw = hum()
    assert _frequencies(gs.find_lines(raw)) == [50.0, 100.0]
    epochs = mne.Epochs(raw, mne.find_events(raw, verbose=False), tmin=0.0, tmax=4.0 - 1 / 250,
                        baseline=None, verbose=False)
    found = gs.find_lines(epochs)  # 4 s epochs: 0.25 Hz resolution, averaged over epochs
    assert _frequencies(found) == [50.0, 100.0] and found.attrs["resolution"] == 0.25
    assert found.sizes["channel"] == 4  # data channels only, never the stim channel
    with pytest.raises(ValueError, match="needs records of at least 10 s, but the epochs are 4 s"):
        gs.find_lines(epochs, resolution=0.1)
    evoked = mne.EvokedArray(raw.get_data(picks="eeg")[:, :2500], raw.copy().pick("eeg").info)
    with pytest.warns(gs.GainshapeWarning, match="averages only 1 segment of 10 s: the threshold"):
        found = gs.find_lines(evoked)
    assert _frequencies(found) == [50.0, 100.0]
    assert found.attrs["threshold_db"] > 10  # one segment: chance alone would pass 5 dB


def test_the_comb_notches_each_line_and_says_why():
    found = gs.find_lines(hum(freqs=(50.0, 100.0, 131.3), sfreq=500.0))
    curve = gs.suggest_notches(found)
    assert curve.recipe["kind"] == "comb"
    assert curve.recipe["freqs"] == pytest.approx([50.0, 100.0, 131.3], abs=0.05)
    assert curve.recipe["widths"] == [max(0.5, 2 * float(w)) for w in found.width.values]
    assert len(curve.reasons) == 4
    first = found.isel(line=0)
    assert curve.reasons[0].startswith(
        f"notch at 50.00 Hz, 0.5 Hz wide: a line {float(first.height_db):.1f} dB above the "
        f"background, {float(first.width):.2g} Hz wide, in 4 of 4 channels")
    assert curve.reasons[1].endswith("harmonic 2 of mains")
    assert "harmonic" not in curve.reasons[2]  # 131.3 Hz is nobody's harmonic
    assert curve.reasons[3] == "info['line_freq'] is missing; the data show mains at 50.00 Hz"
    assert gs.GainCurve.from_dict(json.loads(json.dumps(curve.to_dict()))) == curve


@pytest.mark.parametrize("line_freq, note", [
    (50.0, "info['line_freq'] (50 Hz) agrees with the lines found"),
    (60.0, "info['line_freq'] says 60 Hz, but the data show mains at 50.00 Hz"),
])
def test_line_freq_is_checked_against_what_was_found(line_freq, note):
    assert gs.suggest_notches(gs.find_lines(hum(line_freq=line_freq))).reasons[-1] == note


def test_the_filter_record_says_the_notches_came_from_detection():
    raw = hum()
    found = gs.find_lines(raw)
    filtered = gs.apply(raw, gs.suggest_notches(found))
    step = gs.history(filtered)[0]
    origin = step["curve"]["curve"]["origin"]
    assert origin["found_by"] == "gainshape.find_lines"
    assert origin["settings"]["min_height_db"] == 5.0 and origin["settings"]["resolution"] == 0.1
    assert "found in the data" in gs.methods_text(filtered, detail="full")
    assert "(lines found in the data; -6 dB width" in gs.methods_text(filtered)


def test_band_change_takes_a_band_per_line_found():
    raw = hum(line_freq=None, seconds=90.0)  # 80 s windows resolve the slow band
    found = gs.find_lines(raw)
    filtered = gs.apply(raw, gs.suggest_notches(found))
    change = gs.band_change(raw, filtered, lines=found)
    assert "line 50 Hz" in change.band.values and "line 100 Hz" in change.band.values
    assert float(change.band_low.sel(band="line 50 Hz")) == pytest.approx(49.0, abs=0.01)
    # the lines carry most of their band's power, and the comb removes them
    assert (change.change_db.sel(band="line 50 Hz") < -10).all()
    with pytest.raises(TypeError, match="'lines' parameter takes what gainshape.find_lines"):
        gs.band_change(raw, filtered, lines={"50": 1})


def test_the_figure_marks_each_line_with_its_measured_numbers():
    found = gs.find_lines(hum(freqs=(50.0, 100.0)))
    fig = gs.plot_lines(found, show=False)
    labels = [text.get_text() for text in fig.axes[0].texts]
    assert labels == [f"{f:.2f} Hz\n+{h:.1f} dB"
                      for f, h in zip(found.line_frequency.values, found.height_db.values)]
    threshold = [line for line in fig.axes[1].lines if line.get_linestyle() == ":"][0]
    assert threshold.get_ydata()[0] == pytest.approx(found.attrs["threshold_db"])
    assert found.attrs["threshold_db"] == pytest.approx(5.0)  # 33 segments: no raise by chance


def test_a_comb_drops_notches_at_or_above_nyquist_with_a_note():
    # a comb found at 1000 Hz, applied to data at 250 Hz
    realized = gs.design(comb([50.0, 200.0], [0.5, 0.5]), 250.0)
    assert realized.notes == ("notch at 200 Hz reaches the Nyquist frequency (125 Hz) and is "
                              "dropped",)
    assert len(realized.characteristics.stop_bands) == 1


def test_suggest_notches_refuses_what_is_not_a_finding():
    with pytest.raises(TypeError, match="'found' parameter takes what gainshape.find_lines"):
        gs.suggest_notches({"frequency": [50.0]})
    rng = np.random.default_rng(1)
    nothing = gs.find_lines(rng.standard_normal((4, 15000)), sfreq=250.0)
    with pytest.raises(ValueError, match="No line was found"):
        gs.suggest_notches(nothing)


def test_spans_annotated_bad_are_left_out():
    raw = hum(freqs=(50.0,), seconds=90.0)
    t = raw.times
    burst = (t >= 30.0) & (t < 50.0)  # a stimulator left on for 20 s
    raw._data[:4, burst] += 20e-6 * np.sin(2 * np.pi * 37.0 * t[burst])
    assert _frequencies(gs.find_lines(raw)) == [37.0, 50.0]
    raw.set_annotations(mne.Annotations([29.0], [22.0], ["BAD_stimulator"]))
    found = gs.find_lines(raw)
    assert _frequencies(found) == [50.0]
    # two clean stretches of 29 s and 39 s: 4 + 6 segments of 10 s at 50 % overlap
    assert found.attrs["segments"] == 4 + 6
    with pytest.raises(ValueError, match="longest stretch without a bad span is 39 s long"):
        gs.find_lines(raw, resolution=0.02)

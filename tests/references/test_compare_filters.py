"""compare_filters against NumPy on simulated ERPs with known components: an early
negativity and a late positivity of known latency, amplitude and width."""

import json

import mne
import numpy as np
import pytest

import gainshape as gs

SFREQ = 250.0
N1 = (0.100, -4e-6, 0.020)  # latency s, amplitude V, Gaussian width s (our simulation)
P3 = (0.450, 8e-6, 0.100)
COMPONENTS = {"N1": (0.06, 0.16, "-"), "P3": (0.30, 0.65, "+")}


def erp(times, scale=1.0):
    return scale * sum(a * np.exp(-((times - t0) / w) ** 2) for t0, a, w in (N1, P3))


def evoked(scales=(1.0, 0.6), comment="standard", shift=0.0):
    times = np.arange(round(-0.3 * SFREQ), round(1.2 * SFREQ)) / SFREQ
    data = np.stack([erp(times - shift, s) for s in scales])
    info = mne.create_info(["Cz", "Pz"][: len(scales)], SFREQ, "eeg")
    return mne.EvokedArray(data, info, tmin=times[0], comment=comment, verbose=False)


def by_numpy(design, x):
    """Direct convolution of the reflect-padded record with the design's taps (NumPy),
    aligned so that taps[offset] is t = 0: what the FFT engine must equal."""
    pad = design.taps.size
    padded = np.pad(x, pad, mode="reflect")
    full = np.convolve(padded, design.taps)
    return full[design.offset + pad: design.offset + pad + x.size]


def figures_by_numpy(times, wave, ref, window):
    start, stop, polarity = window
    sign = 1.0 if polarity == "+" else -1.0
    inside = np.flatnonzero((times >= start) & (times <= stop))
    k = inside[np.argmax(sign * wave[inside])]
    level = 0.5 * np.max(sign * ref[inside])  # half the reference's peak, for all
    j = k
    while j > inside[0] and sign * wave[j - 1] >= level:
        j -= 1
    onset = np.interp(level, [sign * wave[j - 1], sign * wave[j]], [times[j - 1], times[j]])
    diff = wave - ref
    before = diff[times < start]
    opposite = np.max(-sign * before)
    return {"peak": wave[k], "latency_ms": 1000 * times[k],
            "mean": wave[inside].mean(), "onset_ms": 1000 * onset,
            "deflection_before": -sign * opposite if opposite > 0 else 0.0}


CANDIDATES = {"0.1-30 Hz": gs.bandpass(0.1, 30.0), "0.5-30 Hz": gs.bandpass(0.5, 30.0),
              "1-20 Hz": gs.bandpass(1.0, 20.0, rolloff=24.0)}


@pytest.fixture(scope="module")
def compared():
    with pytest.warns(gs.GainshapeWarning, match="filtering_said"):
        return gs.compare_filters(CANDIDATES, evoked(), components=COMPONENTS)


def test_every_figure_equals_numpy_on_the_directly_convolved_waveforms(compared):
    # NumPy (np.pad reflect, np.convolve, argmax, mean, linear interpolation) on the
    # known waveforms convolved with each design's kernel
    ev = evoked()
    times = ev.times
    designs = {label: gs.design(curve, SFREQ) for label, curve in CANDIDATES.items()}
    reference = compared.attrs["reference_label"]
    assert reference == "0.1-30 Hz"  # the least filtered of the three
    for ch, name in enumerate(ev.ch_names):
        ref = 1e6 * by_numpy(designs[reference], ev.data[ch])
        for label, d in designs.items():
            wave = 1e6 * by_numpy(d, ev.data[ch])
            np.testing.assert_allclose(
                compared["waveform"].sel(candidate=label, channel=name).values[0], wave,
                atol=1e-9)
            for component, window in COMPONENTS.items():
                got = compared.sel(candidate=label, channel=name, component=component).isel(
                    condition=0)
                want = figures_by_numpy(times, wave, ref, window)
                base = figures_by_numpy(times, ref, ref, window)
                for key, value in want.items():
                    assert float(got[key]) == pytest.approx(value, rel=1e-6, abs=1e-9), key
                sign = 1 if window[2] == "+" else -1
                assert float(got["peak_change_pct"]) == pytest.approx(
                    100 * sign * (want["peak"] - base["peak"]) / abs(base["peak"]), abs=1e-6)
                assert float(got["onset_shift_ms"]) == pytest.approx(
                    want["onset_ms"] - base["onset_ms"], abs=1e-6)
                assert float(got["deflection_before_pct"]) == pytest.approx(
                    100 * abs(want["deflection_before"]) / abs(base["peak"]), abs=1e-6)


def test_higher_high_pass_cutoffs_give_larger_deflections_before_the_positivity():
    # Tanner, Morgan-Short & Luck 2015 (Psychophysiology 52:997-1009): a qualitative
    # published finding (higher high-pass cutoffs: larger opposite-polarity deflection
    # before a late positivity, smaller positivity), reproduced here on simulated data:
    # a continuous recording of ERPs every 3 s on 1/f noise, filtered, then epoched
    rng = np.random.default_rng(5)
    n = int(240 * SFREQ)
    spectrum = np.fft.rfft(rng.standard_normal(n)) / np.sqrt(np.maximum(
        np.fft.rfftfreq(n, 1 / SFREQ), 0.5))
    noise = 0.5e-6 * np.fft.irfft(spectrum, n) / np.std(np.fft.irfft(spectrum, n))
    onsets = np.arange(int(3 * SFREQ), n - int(3 * SFREQ), int(3 * SFREQ))
    signal = np.zeros(n)
    local = np.arange(int(1.5 * SFREQ)) / SFREQ
    for at in onsets:
        signal[at: at + local.size] += erp(local)
    raw = mne.io.RawArray((signal + noise)[None], mne.create_info(["Pz"], SFREQ, "eeg"),
                          verbose=False)
    events = np.column_stack([onsets, np.zeros_like(onsets), np.ones_like(onsets)])
    cutoffs = (0.01, 0.1, 0.3, 1.0)
    with pytest.warns(gs.GainshapeWarning):
        ds = gs.compare_filters({f"{c} Hz": gs.highpass(c) for c in cutoffs}, raw,
                                components=COMPONENTS,
                                epoching={"events": events, "tmin": -0.3, "tmax": 1.2,
                                          "baseline": None})
    assert ds.attrs["filtered_on"].startswith("the continuous recording")
    p3 = ds.sel(component="P3", channel="Pz").isel(condition=0)
    deflection = -p3["deflection_before"].values  # negative before a positivity
    loss = -p3["peak_change_pct"].values
    assert np.all(np.diff(deflection) > 0), deflection
    assert np.all(np.diff(loss) > 0), loss
    notes = dict(zip(ds["candidate"].values, ds["notes"].values))
    assert "Tanner et al. 2015" in notes["0.3 Hz"] and "Tanner et al. 2015" in notes["1.0 Hz"]
    assert "Tanner" not in notes["0.1 Hz"] and "Tanner" not in notes["0.01 Hz"]


def test_causal_low_pass_candidates_never_move_an_onset_earlier():
    # common practice (no source), the physical reason Rousselet 2012 (Front Psychol
    # 3:131) gives: a causal filter's output cannot start before its input
    with pytest.warns(gs.GainshapeWarning):
        ds = gs.compare_filters(
            {"causal 40 Hz": gs.design(gs.lowpass(40.0), SFREQ, causal=True),
             "causal 20 Hz": gs.design(gs.lowpass(20.0), SFREQ, causal=True),
             "causal 10 Hz": gs.design(gs.lowpass(10.0, rolloff=24.0), SFREQ, causal=True),
             "zero-phase 10 Hz": gs.lowpass(10.0, rolloff=24.0)},
            evoked(), components=COMPONENTS, reference="detrended")
    causal = ds["onset_shift_ms"].sel(candidate=["causal 40 Hz", "causal 20 Hz",
                                                 "causal 10 Hz"])
    assert float(causal.min()) >= 0.0
    zero = ds.sel(candidate="zero-phase 10 Hz")
    assert float(zero["onset_shift_ms"].sel(component="N1").min()) < 0  # earlier
    assert "Rousselet 2012" in str(zero["notes"].values)
    assert ds.attrs["reference"].startswith("the data with no filter")


def test_two_conditions_give_the_difference_wave_peak_by_numpy():
    # NumPy: the difference of the two conditions' convolved waveforms, its extreme
    # in each window
    ev_a, ev_b = evoked(comment="standard"), evoked(scales=(1.5, 0.9), comment="deviant")
    with pytest.warns(gs.GainshapeWarning):
        ds = gs.compare_filters(CANDIDATES, [ev_a, ev_b], components=COMPONENTS)
    assert list(ds["contrast"].values) == ["deviant - standard"]
    d, ref = gs.design(CANDIDATES["1-20 Hz"], SFREQ), gs.design(CANDIDATES["0.1-30 Hz"], SFREQ)
    times = ev_a.times
    for component, (start, stop, _) in COMPONENTS.items():
        inside = (times >= start) & (times <= stop)
        diff = 1e6 * (by_numpy(d, ev_b.data[0]) - by_numpy(d, ev_a.data[0]))[inside]
        base = 1e6 * (by_numpy(ref, ev_b.data[0]) - by_numpy(ref, ev_a.data[0]))[inside]
        want, base = diff[np.argmax(np.abs(diff))], base[np.argmax(np.abs(base))]
        got = ds.sel(candidate="1-20 Hz", channel="Cz", component=component)
        assert got["difference_peak"].item() == pytest.approx(want, rel=1e-6)
        assert got["difference_peak_change_pct"].item() == pytest.approx(
            100 * (want - base) / abs(base), abs=1e-6)


def test_components_are_proposed_and_listed_when_none_are_given():
    with pytest.warns(gs.GainshapeWarning):
        ds = gs.compare_filters(CANDIDATES, evoked())
    proposed = json.loads(ds.attrs["components"])
    assert set(proposed) == {"N100", "P452"} or set(proposed) >= {"N100"}
    assert ds.attrs["components_from"].startswith("proposed")
    start, stop, polarity = proposed["N100"]
    assert polarity == "-" and start < 0.1 < stop


@pytest.mark.parametrize("call, error, match", [
    (lambda ev: gs.compare_filters([gs.lowpass(30.0)], ev), ValueError, "at least 2"),
    (lambda ev: gs.compare_filters("lowpass", ev), TypeError, "'candidates'"),
    (lambda ev: gs.compare_filters(CANDIDATES, ev, reference="0.3 Hz"), ValueError,
     "'reference'"),
    (lambda ev: gs.compare_filters(CANDIDATES, ev, components={"P3": (0.6, 0.3, "+")}),
     ValueError, "P3"),
    (lambda ev: gs.compare_filters(CANDIDATES, np.zeros((2, 100))), TypeError, "'data'"),
    (lambda ev: gs.compare_filters({"at 500 Hz": gs.design(gs.lowpass(30.0), 500.0),
                                    "here": gs.lowpass(30.0)}, ev), ValueError, "500 Hz"),
])
def test_bad_input_is_refused_before_any_filtering(call, error, match):
    ev = evoked()
    before = ev.data.copy()
    with pytest.raises(error, match=match):
        call(ev)
    np.testing.assert_array_equal(ev.data, before)


def test_the_view_shows_the_channel_table_and_gains(compared):
    import matplotlib

    matplotlib.use("Agg")
    fig = gs.plot_comparison(compared, show=False)
    waves, table, gains = fig.axes[:3]
    assert len([line for line in waves.get_lines() if line.get_label() in CANDIDATES]) == 3
    cells = [t.get_text() for t in table.texts]
    change = compared["peak_change_pct"].sel(channel=waves.get_title().split(",")[0]).isel(
        condition=0)
    first = round(float(change.isel(candidate=0, component=0)), 1) + 0.0  # as printed: no -0.0
    assert cells[0].startswith(f"{first:+.1f} %")
    assert len(gains.get_lines()) >= 3


def test_the_chosen_filter_records_the_comparison_and_the_methods_say_so(compared):
    # the step's record is checked against step.schema.json by the suite's conftest hook
    ev = evoked()
    chosen = gs.apply(ev, CANDIDATES["0.5-30 Hz"], comparison=compared)
    [step] = gs.history(chosen)
    record = step["application"]["chosen_after_comparison"]
    assert list(record["candidates"]) == list(CANDIDATES)
    assert record["components"] == {k: list(v) for k, v in COMPONENTS.items()}
    text = gs.methods_text(chosen)
    assert ("The filter was chosen after comparing 3 candidates (0.1-30 Hz; 0.5-30 Hz; "
            "1-20 Hz), filtered on the averages (each padded on its own) and measured "
            "against the least-filtered candidate, '0.1-30 Hz'") in text
    assert "N1 (60-160 ms, negative), P3 (300-650 ms, positive)." in text
    with pytest.raises(TypeError, match="'comparison'"):
        gs.apply(ev, CANDIDATES["0.5-30 Hz"], comparison={"not": "a comparison"})


def test_epochs_of_two_event_types_are_two_conditions_and_one_contrast():
    # the epochs path: each event type averaged after filtering; the band change combines
    # epochs by their mean power (as gainshape.band_change's own maps do)
    rng = np.random.default_rng(2)
    times = np.arange(round(-0.3 * SFREQ), round(1.2 * SFREQ)) / SFREQ
    data = np.stack([erp(times, 1.0 + (i % 2)) for i in range(40)])[:, None, :] \
        + 1e-7 * rng.standard_normal((40, 1, times.size))
    events = np.column_stack([np.arange(40), np.zeros(40, int), 1 + np.arange(40) % 2])
    epochs = mne.EpochsArray(data, mne.create_info(["Cz"], SFREQ, "eeg"), events=events,
                             tmin=times[0], event_id={"small": 1, "large": 2}, verbose=False)
    with pytest.warns(gs.GainshapeWarning):
        ds = gs.compare_filters(CANDIDATES, epochs, components=COMPONENTS)
    assert list(ds["condition"].values) == ["small", "large"]
    assert list(ds["contrast"].values) == ["large - small"]
    assert ds["band_change_db"].dims == ("candidate", "band")
    assert ds["band_change_db"].attrs["units"] == "dB" and "band_resolved" in ds.coords
    assert ds.attrs["filtered_on"].startswith("the epochs")
    large = ds["peak"].sel(candidate="0.1-30 Hz", condition="large", component="P3").item()
    small = ds["peak"].sel(candidate="0.1-30 Hz", condition="small", component="P3").item()
    assert large / small == pytest.approx(2.0, rel=0.01)  # the simulated amplitudes


def test_cautions_read_only_the_channels_where_a_component_is_expressed():
    # common practice (no source): a share of a peak is read where the peak is there; on a
    # channel with a trace of the component after a slow bump, shares of its tiny peak explode
    times = np.arange(round(-0.3 * SFREQ), round(1.2 * SFREQ)) / SFREQ
    bump = 2e-6 * np.exp(-((times + 0.1) / 0.15) ** 2)
    data = np.stack([erp(times), 0.02 * erp(times) + bump])
    ev = mne.EvokedArray(data, mne.create_info(["Pz", "Fp1"], SFREQ, "eeg"), tmin=times[0],
                         verbose=False)
    with pytest.warns(gs.GainshapeWarning):
        ds = gs.compare_filters({"0.1 Hz": gs.highpass(0.1), "1 Hz": gs.highpass(1.0)}, ev,
                                components={"P3": COMPONENTS["P3"]})
    shares = ds["deflection_before_pct"].sel(candidate="1 Hz", component="P3").isel(condition=0)
    assert float(shares.sel(channel="Fp1")) > float(shares.sel(channel="Pz")) > 10
    note = str(ds["notes"].sel(candidate="1 Hz").values)
    assert f"P3 {float(shares.sel(channel='Pz')):.0f} %" in note

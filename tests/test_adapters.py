"""MNE objects: picks, copy semantics, discontinuities, info updates, Epochs/Evoked."""

import mne
import numpy as np
import pytest

import gainshape as gs

CURVE = gs.bandpass(0.5, 30.0)


def test_default_picks_filter_eeg_only_and_keep_every_channel(raw):
    before = raw.get_data()
    out = gs.apply(raw, CURVE)
    after = out.get_data()
    assert out.ch_names == raw.ch_names
    eeg = mne.pick_types(raw.info, eeg=True)
    others = [i for i in range(len(raw.ch_names)) if i not in eeg]
    assert not np.allclose(after[eeg], before[eeg])
    np.testing.assert_array_equal(after[others], before[others])
    np.testing.assert_array_equal(raw.get_data(), before)  # input untouched


def test_bad_channels_are_filtered_by_default(raw):
    raw.info["bads"] = ["Cz"]
    out = gs.apply(raw, CURVE)
    assert not np.allclose(out.get_data(picks="Cz"), raw.get_data(picks="Cz"))


def test_eog_filtered_only_when_picked(raw):
    out = gs.apply(raw, CURVE, picks=["EOG1"])
    assert not np.allclose(out.get_data(picks="EOG1"), raw.get_data(picks="EOG1"))
    np.testing.assert_array_equal(out.get_data(picks="eeg"), raw.get_data(picks="eeg"))


def test_picks_all_leaves_stim_alone(raw):
    out = gs.apply(raw, CURVE, picks="all")
    np.testing.assert_array_equal(out.get_data(picks="stim"), raw.get_data(picks="stim"))
    assert not np.allclose(out.get_data(picks="misc"), raw.get_data(picks="misc"))


def test_copy_false_filters_in_place(raw):
    expected = gs.apply(raw, CURVE).get_data()
    out = gs.apply(raw, CURVE, copy=False)
    assert out is raw
    np.testing.assert_allclose(raw.get_data(), expected)


def test_info_cutoffs_set_from_realized_edges(raw):
    out = gs.apply(raw, CURVE)
    edges = gs.design(CURVE, raw.info["sfreq"]).characteristics.half_amplitude
    assert out.info["highpass"] == pytest.approx(float(edges[0]))
    assert out.info["lowpass"] == pytest.approx(float(edges[1]))


def test_info_never_loosened(raw):
    narrow = gs.apply(raw, gs.bandpass(1.0, 20.0))
    wider = gs.apply(narrow, gs.bandpass(0.1, 40.0))
    assert wider.info["highpass"] == pytest.approx(narrow.info["highpass"])
    assert wider.info["lowpass"] == pytest.approx(narrow.info["lowpass"])


@pytest.mark.parametrize("curve", [gs.notch(50.0), gs.bandstop(45.0, 55.0)], ids=["notch", "bandstop"])
def test_notch_and_bandstop_leave_info_alone(raw, curve):
    out = gs.apply(raw, curve)
    assert out.info["highpass"] == raw.info["highpass"]
    assert out.info["lowpass"] == raw.info["lowpass"]


def test_partial_picks_leave_info_alone(raw):
    out = gs.apply(raw, CURVE, picks=["Fz"])
    assert out.info["highpass"] == raw.info["highpass"]


def test_edge_annotation_splits_segments(make_raw):
    raw = make_raw(with_stim=False)
    raw._data[:4, raw.n_times // 2 :] += 1e-3  # a jump where two recordings were joined
    raw.set_annotations(mne.Annotations([raw.times[raw.n_times // 2]], [0.0], ["EDGE boundary"]))
    out = gs.apply(raw, CURVE).get_data(picks="eeg")
    half = raw.n_times // 2
    first = gs.apply(raw.copy().crop(tmax=raw.times[half - 1]), CURVE).get_data(picks="eeg")
    np.testing.assert_allclose(out[:, :half], first, atol=1e-15)


def test_bad_acq_skip_span_left_unfiltered(make_raw):
    raw = make_raw(with_stim=False)
    onset, duration = 10.0, 2.0
    raw.set_annotations(mne.Annotations([onset], [duration], ["BAD_ACQ_SKIP"]))
    out = gs.apply(raw, CURVE)
    span = slice(int(onset * 250), int((onset + duration) * 250))
    np.testing.assert_array_equal(out.get_data()[:, span], raw.get_data()[:, span])


def test_concatenated_raws_split_at_boundary(make_raw):
    a, b = make_raw(seed=1, with_stim=False), make_raw(seed=2, with_stim=False)
    joined = mne.concatenate_raws([a.copy(), b.copy()])
    out = gs.apply(joined, CURVE).get_data()
    np.testing.assert_allclose(out[:, : a.n_times], gs.apply(a, CURVE).get_data(), atol=1e-15)


def test_epochs_loaded_and_filtered_like_arrays(raw):
    events = mne.make_fixed_length_events(raw, duration=4.0)
    epochs = mne.Epochs(raw, events, tmin=0.0, tmax=3.996, baseline=None, preload=False)
    curve = gs.lowpass(20.0)
    out = gs.apply(epochs, curve)
    data = epochs.get_data()
    expected = gs.apply(data, curve, sfreq=raw.info["sfreq"], picks=[0, 1, 2, 3])
    np.testing.assert_allclose(out.get_data(), expected, atol=1e-15)
    assert out.info["lowpass"] == pytest.approx(20.0, rel=1e-2)


def test_epochs_too_short_for_kernel_warn_with_fix(raw):
    events = mne.make_fixed_length_events(raw, duration=2.0)
    epochs = mne.Epochs(raw, events, tmin=-0.2, tmax=0.8, baseline=None, preload=True)
    with pytest.warns(gs.GainshapeWarning, match="Each epoch.*continuous recording"):
        gs.apply(epochs, gs.highpass(0.1))


def test_evoked(raw):
    events = mne.make_fixed_length_events(raw, duration=2.0)
    evoked = mne.Epochs(raw, events, tmin=-0.2, tmax=0.8, baseline=None).average()
    out = gs.apply(evoked, gs.lowpass(15.0))
    expected = gs.apply(evoked.data, gs.lowpass(15.0), sfreq=evoked.info["sfreq"])
    np.testing.assert_allclose(out.data, expected)
    assert out.info["lowpass"] == pytest.approx(15.0, rel=1e-2)


def test_nan_split_on_raw(raw):
    raw._data[:4, 1000:1100] = np.nan
    with pytest.warns(gs.GainshapeWarning, match="0.000-4.000 s.*shorter"):
        out = gs.apply(raw, CURVE, nan="split")
    assert np.isnan(out.get_data(picks="eeg")[:, 1000:1100]).all()
    assert np.isfinite(out.get_data(picks="eeg")[:, 1100:]).all()


def test_design_reused(raw):
    design = gs.design(CURVE, raw.info["sfreq"])
    np.testing.assert_array_equal(gs.apply(raw, design).get_data(), gs.apply(raw, CURVE).get_data())


def test_concurrent_copies_of_one_object_are_safe_and_equal(raw):
    # common practice (no source): copy=True never touches the caller's object
    import threading

    epochs = mne.Epochs(raw, mne.make_fixed_length_events(raw, duration=2.0), tmin=0.0,
                        tmax=1.5, baseline=None, preload=True, verbose=False)
    design = gs.design(gs.lowpass(30.0), raw.info["sfreq"])
    for inst in (raw, epochs, epochs.average()):
        before = inst.get_data().copy() if hasattr(inst, "get_data") else inst.data.copy()
        results, errors = [None] * 8, []

        def run(i, inst=inst):
            try:
                results[i] = gs.apply(inst, design).get_data()
            except Exception as err:  # noqa: BLE001 - collected and asserted below
                errors.append(err)

        threads = [threading.Thread(target=run, args=(i,)) for i in range(8)]
        for t in threads:
            t.start()
        for t in threads:
            t.join()
        assert errors == []
        for result in results[1:]:
            np.testing.assert_array_equal(result, results[0])
        np.testing.assert_array_equal(inst.get_data(), before)


def test_interrupted_in_place_run_is_marked_in_history(make_raw, monkeypatch):
    from gainshape.filtering import engine

    raw = make_raw()
    raw.set_annotations(mne.Annotations([20.0], [0.0], ["EDGE boundary"]))  # two segments
    calls = []

    def interrupt_second(*args, **kwargs):
        calls.append(1)
        if len(calls) == 2:
            raise KeyboardInterrupt
        return real(*args, **kwargs)

    real = engine.filter_segment
    monkeypatch.setattr(engine, "filter_segment", interrupt_second)
    with pytest.raises(KeyboardInterrupt):
        gs.apply(raw, gs.lowpass(30.0), copy=False)
    [step] = gs.history(raw)
    assert step["application"]["interrupted"] is True
    assert "interrupted: the data are partly filtered" in gs.methods_text(raw)
    assert list(gs.bids_filters(raw).values())[0]["status"] == "interrupted: data partly filtered"
    with pytest.raises(ValueError, match="interrupted"):
        gs.replay(gs.history(raw), make_raw())


def test_byte_swapped_array_filters_like_native(rng):
    x = rng.standard_normal((3, 2000))
    swapped = x.astype(">f8")
    out = gs.apply(swapped, gs.lowpass(30.0), sfreq=250.0)
    np.testing.assert_array_equal(out, gs.apply(x, gs.lowpass(30.0), sfreq=250.0))
    assert out.dtype.isnative


def test_design_applies_to_a_rate_a_few_ppm_away_and_records_the_shift(rng):
    # common practice (no source): amplifier clocks differ in the ninth digit
    x = rng.standard_normal((2, 5000))
    f = gs.design(gs.bandpass(1.0, 40.0), 1000.0000283)
    out, step = gs.apply(x, f, sfreq=1000.0046, return_step=True)
    np.testing.assert_array_equal(out, gs.apply(x, f, sfreq=f.sfreq))
    shift = step["application"]["cutoff_shift_hz"]
    expected = [float(e) * (1000.0046 / 1000.0000283 - 1) for e in f.characteristics.half_amplitude]
    np.testing.assert_allclose(shift, expected, rtol=1e-12)
    assert step["application"]["data_sfreq"] == 1000.0046
    with pytest.raises(ValueError, match=r"made at 1000.0000283 Hz .* 1000.0203 Hz .*20.3 parts"):
        gs.apply(x, f, sfreq=1000.0203)


def test_progress_follows_verbose_and_mne_log_level(capsys, make_raw):
    raw = make_raw(seconds=40.0)
    gs.apply(raw, gs.lowpass(30.0), verbose=True)
    err = capsys.readouterr().err
    assert "filtering" in err and "0/40 s [" in err and "TqdmWarning" not in err
    gs.apply(raw, gs.lowpass(30.0), verbose=False)
    assert capsys.readouterr().err == ""
    with mne.utils.use_log_level("ERROR"):
        gs.apply(raw, gs.lowpass(30.0), verbose=None)
    assert capsys.readouterr().err == ""
    epochs = mne.Epochs(raw, mne.make_fixed_length_events(raw, duration=2.0), tmin=0.0, tmax=1.5,
                        baseline=None, preload=True, verbose=False)
    gs.apply(epochs, gs.lowpass(30.0), verbose=True)
    assert f"0/{len(epochs)} epoch" in capsys.readouterr().err


def test_kernel_long_for_the_record_warns_with_both_lengths_and_the_edge(make_raw):
    raw = make_raw(seconds=40.0)  # 40 s; the 0.1 Hz high-pass kernel is about 22 s at 250 Hz
    taps = gs.design(gs.highpass(0.1), 250.0).taps.size
    assert 3 * taps > 10000
    with pytest.warns(gs.GainshapeWarning, match=rf"\(10000 samples, 40 s\) is shorter than 3 times "
                      rf"the filter's kernel \({taps} samples, {taps / 250:.3g} s\).*high-pass edge "
                      r"at 0.1 Hz"):
        gs.apply(raw, gs.highpass(0.1))

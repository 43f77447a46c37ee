"""Provenance: records survive MNE workflows and become text and BIDS metadata."""

import json
import warnings

import mne
import numpy as np
import pytest

import gainshape as gs

BANDPASS = gs.bandpass(0.5, 30.0)
NOTCH = gs.notch(50.0, harmonics=2)


@pytest.fixture
def filtered(raw):
    raw.info["description"] = "Pilot session; cap size 56."
    return gs.apply(gs.apply(raw, BANDPASS), NOTCH)


def _kinds(inst):
    return [step["realized"]["kind"] for step in gs.history(inst)]


def test_step_record_contents(raw):
    out, step = gs.apply(raw, BANDPASS, return_step=True)
    assert json.loads(json.dumps(step)) == step
    assert step["curve"] == BANDPASS.to_dict()
    assert set(step["software"]) >= {"gainshape", "numpy", "scipy", "mne"}
    assert step["channels"] == ["Fz", "Cz", "Pz", "Oz"]
    assert step["time"].endswith("+00:00")
    assert step["fingerprint_before"] != step["fingerprint_after"]
    realized = gs.design(BANDPASS, raw.info["sfreq"]).characteristics
    assert step["realized"]["half_amplitude"] == pytest.approx([float(e) for e in realized.half_amplitude])
    assert gs.history(out) == [step]


def test_callable_curve_marked_not_reproducible(raw):
    _, step = gs.apply(raw, gs.GainCurve(lambda f: np.exp(-f / 30.0)), return_step=True)
    assert step["curve"]["reproducible"] is False


def test_two_steps_keep_order_and_user_text(filtered):
    assert _kinds(filtered) == ["band-pass", "notch"]
    assert filtered.info["description"].startswith("Pilot session; cap size 56.")


def test_input_history_untouched(raw, filtered):
    assert gs.history(raw) == []


@pytest.mark.parametrize(
    "operation",
    [lambda r: r.copy(), lambda r: r.copy().crop(tmax=10.0), lambda r: r.copy().pick(["Fz", "Cz"]),
     lambda r: r.copy().drop_channels(["Oz"]), lambda r: r.copy().resample(125.0)],
    ids=["copy", "crop", "pick", "drop_channels", "resample"],
)
def test_history_survives_operations(filtered, operation):
    assert gs.history(operation(filtered)) == gs.history(filtered)


def test_history_survives_raw_fif(filtered, tmp_path):
    filtered.save(tmp_path / "f_raw.fif")
    back = mne.io.read_raw_fif(tmp_path / "f_raw.fif")
    assert gs.history(back) == gs.history(filtered)
    assert back.info["description"].startswith("Pilot session")


def test_history_survives_epochs_and_evoked(filtered, tmp_path):
    events = mne.make_fixed_length_events(filtered, duration=2.0)
    epochs = mne.Epochs(filtered, events, tmin=0.0, tmax=1.0, baseline=None, preload=True)
    assert gs.history(epochs) == gs.history(filtered)
    epochs.save(tmp_path / "f-epo.fif")
    assert gs.history(mne.read_epochs(tmp_path / "f-epo.fif")) == gs.history(filtered)
    evoked = epochs.average()
    assert gs.history(evoked) == gs.history(filtered)
    mne.write_evokeds(tmp_path / "f-ave.fif", evoked)
    assert gs.history(mne.read_evokeds(tmp_path / "f-ave.fif")[0]) == gs.history(filtered)


def test_epochs_and_evoked_steps_are_recorded(raw):
    events = mne.make_fixed_length_events(raw, duration=2.0)
    epochs = mne.Epochs(raw, events, tmin=0.0, tmax=1.996, baseline=None, preload=True)
    assert _kinds(gs.apply(epochs, gs.lowpass(20.0))) == ["low-pass"]
    assert _kinds(gs.apply(epochs.average(), gs.lowpass(20.0))) == ["low-pass"]


def test_history_survives_concatenation(make_raw):
    parts = [gs.apply(make_raw(seed=s), BANDPASS) for s in (1, 2)]
    joined = mne.concatenate_raws(parts)
    assert _kinds(joined) == ["band-pass"]


def test_damaged_record_warns_and_keeps_readable_steps(filtered):
    text = filtered.info["description"]
    lines = text.split("\n")
    first_step = next(i for i, line in enumerate(lines) if line.startswith("{"))
    lines[first_step] = lines[first_step][:40]  # a truncated hand edit
    filtered.info["description"] = "\n".join(lines)
    with pytest.warns(gs.GainshapeWarning, match="damaged history line 1"):
        steps = gs.history(filtered)
    assert [s["realized"]["kind"] for s in steps] == ["notch"]


def test_quoted_marker_in_user_text_stays_the_users(raw):
    from gainshape.record.steps import _BEGIN

    raw = raw.copy()
    raw.info["description"] = f"Pilot session. Our notes quote the line {_BEGIN} here."
    out = gs.apply(gs.apply(raw, gs.lowpass(30.0)), gs.highpass(0.5))
    import warnings

    with warnings.catch_warnings():
        warnings.simplefilter("error", gs.GainshapeWarning)
        assert _kinds(out) == ["low-pass", "high-pass"]
    assert out.info["description"].startswith("Pilot session. Our notes quote the line")


@pytest.mark.parametrize("edit", [
    lambda s: s["realized"].update(half_amplitude=["forty"]),
    lambda s: s["realized"].update(half_amplitude_direction=["up"]),
    lambda s: s.update(design="zero"),
    lambda s: s["realized"].update(group_delay="none"),
    lambda s: s.pop("channels"),
], ids=["cutoff text", "direction word", "design string", "delay text", "no channels"])
def test_hand_edited_step_is_skipped_by_every_reader_with_one_warning(raw, filtered, edit):
    import json

    from gainshape.record.steps import split_description, store_step

    user, lines = split_description(filtered.info["description"])
    first = json.loads(lines[0])
    edit(first)
    edited = filtered.copy()
    edited.info["description"] = user
    store_step(edited.info, first)
    store_step(edited.info, json.loads(lines[1]))
    readers = [gs.history, gs.methods_text, gs.bids_filters,
               lambda inst: gs.history(inst)._repr_html_(), lambda inst: repr(gs.history(inst))]
    for read in readers:
        with pytest.warns(gs.GainshapeWarning, match="Skipped damaged history line 1") as caught:
            read(edited)
        assert len(caught) == 1
    with pytest.warns(gs.GainshapeWarning, match="Skipped step 1") as caught:
        again = gs.replay([first, json.loads(lines[1])], raw)
    assert len([w for w in caught if "Skipped" in str(w.message)]) == 1
    assert _kinds(again) == ["notch"]


def test_history_of_array_explains_return_step():
    with pytest.raises(TypeError, match="return_step=True"):
        gs.history(np.zeros((2, 10)))


def test_history_html_table(filtered):
    html = gs.history(filtered)._repr_html_()
    assert html.count("<tr>") == 3 and "band-pass" in html and "notch" in html
    assert "<td>49.0-51.0, 99.0-101.0</td>" in html  # the notch step's stop bands (125 Hz Nyquist)


def test_methods_text_reports_every_step_with_realized_numbers(filtered):
    text = gs.methods_text(filtered, detail="full")
    steps = gs.history(filtered)
    bp = steps[0]["realized"]
    assert "in 2 steps" in text and text.index("band-pass") < text.index("notch")
    assert f"{bp['half_amplitude'][0]:.3g} Hz" in text and f"{bp['half_amplitude'][1]:.3g} Hz" in text
    assert f"{bp['rolloff'][0]:.1f} dB/octave" in text
    assert "zero-phase (symmetric kernel, no delay)" in text and "stop bands" in text and "reflect" in text
    assert f"MNE-Python {mne.__version__}" in text


def test_methods_text_minimum_phase_reports_delay(raw):
    out = gs.apply(raw, gs.lowpass(20.0), causal=True)
    delay = gs.history(out)[0]["realized"]["group_delay"]
    assert f"minimum-phase (causal kernel, delay {1000 * delay:.3g} ms)" in gs.methods_text(
        out, detail="full")
    assert f"causal (minimum-phase, one pass, group delay {1000 * delay:.3g} ms)" in gs.methods_text(out)


def test_brief_methods_text_covers_the_checklist_once(filtered):
    # Widmann, Schroeger & Maess (2015), J Neurosci Methods 250:34-46: type and
    # family, cutoffs with their definition, roll-off, length, ripple and
    # attenuation, causality and delay, direction; each once
    text = gs.methods_text(filtered)
    bp = gs.history(filtered)[0]["realized"]
    for words in ("FIR band-pass filter", "Half-amplitude (-6 dB) cutoffs", "roll-off",
                  "-sample kernel", "passband ripple", "stop-band attenuation at least",
                  "zero-phase (non-causal, no delay)", "Notches at 50 and 100 Hz"):
        assert words in text, words
    assert f"cutoffs {bp['half_amplitude'][0]:.3g} and {bp['half_amplitude'][1]:.3g} Hz" in text
    assert text.count("gainshape 0.") == 1 and text.count("MNE-Python") == 1
    assert len(text.split()) < len(gs.methods_text(filtered, detail="full").split())


def test_methods_text_detail_is_checked(filtered):
    with pytest.raises(ValueError, match="'long' is not a choice for 'detail'"):
        gs.methods_text(filtered, detail="long")


def test_bids_filters_shape(filtered):
    # BIDS EEG sidecar: SoftwareFilters is "n/a" or an object of objects
    # (BIDS specification, Modality specific files: EEG, sidecar JSON).
    sf = gs.bids_filters(filtered)
    assert isinstance(sf, dict) and len(sf) == 2
    for name, params in sf.items():
        assert isinstance(name, str) and isinstance(params, dict)
        assert any("(Hz)" in key for key in params)
        for value in params.values():
            assert isinstance(value, (str, float, int, list))
    json.dumps(sf)


def test_bids_filters_na_without_steps(raw):
    assert gs.bids_filters(raw) == "n/a"


@pytest.mark.filterwarnings("ignore:No events found:RuntimeWarning")
def test_write_bids_filters_updates_sidecar(raw, filtered, tmp_path):
    mne_bids = pytest.importorskip("mne_bids")
    raw = raw.copy().pick(["Fz", "Cz", "Pz", "Oz", "EOG1", "Trigger"])
    raw.info["line_freq"] = 50.0
    path = mne_bids.BIDSPath(subject="01", task="tones", datatype="eeg", root=tmp_path)
    mne_bids.write_raw_bids(raw, path, format="BrainVision", allow_preload=True, verbose=False)
    gs.write_bids_filters(path, filtered)
    sidecar = path.copy().update(suffix="eeg", extension=".json")
    content = json.loads(sidecar.fpath.read_text())
    assert content["SoftwareFilters"] == gs.bids_filters(filtered)
    assert content["TaskName"] == "tones"


def test_replay_reproduces_fingerprint(raw, filtered):
    steps = gs.history(filtered)
    again = gs.replay(steps, raw)
    np.testing.assert_array_equal(again.get_data(), filtered.get_data())
    assert [s["fingerprint_after"] for s in gs.history(again)] == [s["fingerprint_after"] for s in steps]


def test_replay_warns_on_different_input(raw, filtered, make_raw):
    other = make_raw(seed=99)
    with pytest.warns(gs.GainshapeWarning) as record:
        gs.replay(gs.history(filtered)[:1], other)
    messages = [str(w.message) for w in record]
    assert any("input differs" in m for m in messages)
    assert any("result differs" in m for m in messages)


def test_replay_array_step():
    x = np.random.default_rng(0).standard_normal((3, 2000))
    y, step = gs.apply(x, gs.lowpass(20.0), sfreq=250.0, picks=[0, 2], return_step=True)
    np.testing.assert_array_equal(gs.replay([step], x), y)
    assert step["application"]["rows"] == [0, 2]


def test_export_keeps_the_record_beside_the_file(filtered, tmp_path):
    pytest.importorskip("pybv")
    out = filtered.copy().pick(["Fz", "Cz", "Pz", "Oz"])
    sidecar, vhdr = gs.export(out, tmp_path / "rec.vhdr")
    record = json.loads(sidecar.read_text())
    assert [s["id"] for s in record["history"]] == [s["id"] for s in gs.history(out)]
    assert record["SoftwareFilters"] == gs.bids_filters(out)
    assert record["methods"] == gs.methods_text(out)
    back = mne.io.read_raw_brainvision(vhdr, preload=True, verbose=False)
    np.testing.assert_allclose(back.get_data(), out.get_data(), atol=1e-7)  # BrainVision resolution
    assert gs.history(back) == []  # the format itself keeps no history: the sidecar does
    with pytest.raises(FileExistsError, match="overwrite=True"):
        gs.export(out, tmp_path / "rec.vhdr")
    assert sorted(p.name for p in tmp_path.iterdir()) == [
        "rec.eeg", "rec.gainshape.json", "rec.vhdr", "rec.vmrk"]


def test_replay_of_a_step_without_pad_gets_the_damaged_step_message():
    x = np.random.default_rng(0).standard_normal((2, 2000))
    _, step = gs.apply(x, gs.lowpass(20.0), sfreq=250.0, return_step=True)
    del step["application"]["pad"]
    with pytest.warns(gs.GainshapeWarning, match="Skipped step 1 .*lacks the padding mode"):
        out = gs.replay([step], x)
    assert np.array_equal(out, x)  # nothing replayed, the input returned as it was


def test_export_checks_its_writer_first_and_writes_whole_or_nothing(filtered, tmp_path,
                                                                    monkeypatch):
    # the writer packages are those mne.export.export_raw names for each format (MNE docs)
    import sys

    out = filtered.copy().pick(["Fz", "Cz", "Pz", "Oz"])
    monkeypatch.setitem(sys.modules, "edfio", None)  # import edfio raises ImportError
    with pytest.raises(ImportError, match="pip install edfio"):
        gs.export(out, tmp_path / "rec.edf")
    assert list(tmp_path.iterdir()) == []
    with pytest.raises(ValueError, match="rec.txt"):
        gs.export(out, tmp_path / "rec.txt")
    pytest.importorskip("pybv")

    def fails(*args, **kwargs):
        raise OSError(28, "No space left on device")  # ENOSPC while the data are written
    monkeypatch.setattr(mne.export, "export_raw", fails)
    with pytest.raises(OSError, match="No space"):
        gs.export(out, tmp_path / "rec.vhdr")
    assert list(tmp_path.iterdir()) == []  # neither the data nor the sidecar


def test_the_demo_filter_s_brief_paragraph_is_at_most_130_words():
    # the demo's pipeline: the comb found in the simulated workshop recording times the
    # band-pass; a journal gives a filter two or three sentences (Widmann, Schroeger &
    # Maess 2015 list what they hold); 130 words is the project's bound for this filter
    from gainshape.demo import demo_curve
    from gainshape.simulate import simulate_workshop_recording

    raw = simulate_workshop_recording()
    comb = gs.suggest_notches(gs.find_lines(raw))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", gs.GainshapeWarning)
        text = gs.methods_text(gs.apply(raw, demo_curve(comb), verbose=False))
    assert len(text.split()) <= 130, (len(text.split()), text)
    assert text.count("Step response:") == 1 and "undershoot" in text and "overshoot" in text

"""The curve editor driven without a browser: its model, edits and what it shows."""

import json

import mne
import numpy as np
import pytest
from scipy.interpolate import PchipInterpolator
from scipy.signal import freqz, welch

import gainshape as gs
from gainshape.showing.edits import FMIN, editable_points, editor_view
from gainshape.showing.drawing import GainEditor


@pytest.fixture
def editor():
    return gs.draw(gs.highpass(1.0), sfreq=250.0)


def test_curve_is_the_points_joined_monotonically_on_a_log_axis(editor):
    # reference: scipy.interpolate.PchipInterpolator on log10(frequency); the
    # editor's curve agrees away from its end points (whose slopes it sets to 0)
    f, g = np.array(editor.points).T
    inner = np.geomspace(f[1], f[-2], 200)
    reference = PchipInterpolator(np.log10(f), g)(np.log10(inner))
    # the two differ only in the two end slopes, whose effect fades within a segment
    middle = (inner > f[2]) & (inner < f[-3])
    np.testing.assert_allclose(editor.curve(inner[middle]), reference[middle], atol=1e-12)
    assert np.all(np.diff(editor.curve(np.geomspace(f[0], f[-1], 500))) >= -1e-12)


def test_code_line_rebuilds_the_same_curve(editor):
    editor.drag(2, 0.7, 0.31)
    rebuilt = eval(editor.code, {"gs": gs})  # the line users paste
    freqs = np.geomspace(0.005, 125.0, 300)
    np.testing.assert_array_equal(rebuilt(freqs), editor.curve(freqs))


def test_curve_recipe_round_trips_through_json(editor):
    editor.add_point(5.0, 0.8)
    again = gs.GainCurve.from_dict(json.loads(json.dumps(editor.curve.to_dict())))
    assert again == editor.curve


def test_design_is_gs_design_of_the_curve(editor):
    editor.drag(1, editor.points[1][0] * 1.2, 0.2)
    expected = gs.design(editor.curve, 250.0)
    np.testing.assert_array_equal(editor.design.taps, expected.taps)
    assert editor.view["characteristics"] == [list(r) for r in expected.summary()]


def test_view_gains_are_the_kernel_response(editor):
    # reference: scipy.signal.freqz of the zero-phase kernel
    view, kernel = editor.view, editor.design.taps
    freqs = np.array(view["freqs"])[::40]
    _, h = freqz(kernel, worN=freqs, fs=250.0)
    np.testing.assert_allclose(np.array(view["realized"])[::40], np.abs(h), atol=1e-6)
    np.testing.assert_allclose(view["deviation"], np.array(view["realized"]) - view["requested"],
                               atol=1e-6)


def test_step_trace_keeps_the_step_response_extremes():
    # the step response is the running sum of the kernel (common practice, no source);
    # thinned to min/max pairs, its extremes survive
    design = gs.design(gs.highpass(0.2), 1000.0)
    step = np.cumsum(design.taps)
    trace = editor_view(design, 499.0)["step"]
    assert len(trace["values"]) <= 1200 < step.size
    assert max(trace["values"]) == pytest.approx(step.max(), rel=1e-6)
    assert min(trace["values"]) == pytest.approx(step.min(), rel=1e-6, abs=1e-9)


def test_drag_past_a_neighbour_is_kept_between_with_a_message(editor):
    right = editor.points[3][0]
    editor.drag(2, right * 3, 0.5)
    assert editor.points[2][0] < right < editor.points[4][0]
    assert "between its neighbours" in editor.message
    assert [p[0] for p in editor.points] == sorted(p[0] for p in editor.points)


@pytest.mark.parametrize("gain, kept, words", [(-0.3, 0.0, "cannot be negative"),
                                               (1.7, 1.0, "up to 1")])
def test_gain_out_of_range_is_clamped(editor, gain, kept, words):
    editor.drag(2, editor.points[2][0], gain)
    assert editor.points[2][1] == kept and words in editor.message


def test_frequency_at_or_above_nyquist_is_kept_below(editor):
    last = len(editor.points) - 1
    editor.drag(last, 125.0, 1.0)
    assert editor.points[last][0] < 125.0 and "below Nyquist" in editor.message
    editor.add_point(400.0, 1.0)
    assert max(p[0] for p in editor.points) < 125.0


@pytest.mark.parametrize("request_", [{"do": "drag", "index": 1, "freq": float("nan"), "gain": 0.5},
                                      {"do": "drag", "index": 99, "freq": 1.0, "gain": 0.5},
                                      {"do": "drag", "index": 1, "freq": "abc", "gain": 0.5},
                                      {"do": "start", "shape": "elliptic"},
                                      {"do": "fly"}])
def test_bad_edits_are_refused_and_nothing_changes(editor, request_):
    before = [list(p) for p in editor.points]
    editor.edit(dict(request_))
    assert editor.points == before and editor.message


def test_a_curve_keeps_two_points():
    editor = gs.draw(gs.GainCurve.from_points([1.0, 10.0], [1.0, 0.0], freq_scale="log"),
                     sfreq=100.0)
    while len(editor.points) > 2:
        editor.remove_point(0)
    assert not editor.message
    editor.remove_point(0)
    assert len(editor.points) == 2 and "at least two" in editor.message


def test_add_then_remove_selects_and_restores(editor):
    before = [list(p) for p in editor.points]
    editor.add_point(20.0, 0.9)
    assert editor.points[editor.selected] == [20.0, 0.9]
    editor.remove_point(editor.selected)
    assert editor.points == before


def test_an_unrealizable_drawing_is_shown_with_a_fixed_kernel_and_says_so(editor):
    # a near-vertical jump: no kernel length meets 0.001 (a gain step needs infinite length,
    # common practice, no source)
    editor.drag(2, editor.points[3][0] / 1.0005, 0.0)
    assert editor.design.kernel_request == 30.0
    assert "cannot be realized" in editor.message and "30 s kernel" in editor.message


@pytest.mark.parametrize("shape", ["low-pass", "high-pass", "band-pass", "band-stop", "notch comb"])
def test_start_shapes_follow_the_constructor(shape):
    editor = gs.draw(sfreq=500.0)
    editor.start_from(shape)
    made = {"low-pass": gs.lowpass(30.0), "high-pass": gs.highpass(0.1),
            "band-pass": gs.bandpass(0.1, 30.0), "band-stop": gs.bandstop(8.0, 13.0),
            "notch comb": gs.notch(50.0, harmonics=4)}[shape]
    freqs = np.geomspace(FMIN, editor.fmax, 2000)
    assert np.abs(editor.curve(freqs) - np.clip(made(freqs), 0, 1)).max() <= 0.0101


def test_editable_points_of_a_drawn_curve_are_its_points():
    drawn = gs.GainCurve.from_points([0.01, 0.5, 2.0, 100.0], [0.0, 0.2, 1.0, 1.0], freq_scale="log")
    points = editable_points(drawn, 0.01, 100.0, within=1e-3)
    freqs = np.geomspace(0.01, 100.0, 500)
    rebuilt = gs.GainCurve.from_points(*zip(*points), freq_scale="log")
    assert np.abs(rebuilt(freqs) - drawn(freqs)).max() <= 1.01e-3


def test_page_messages_are_answered_with_their_serial(editor):
    editor._handle_custom_msg({"do": "drag", "index": 1, "freq": 0.2, "gain": 0.1,
                               "serial": 7}, [])
    assert editor.view["answer"] == 7
    editor._handle_custom_msg({"do": "remove", "index": 42, "serial": 8}, [])
    assert editor.view["answer"] == 8 and "no point" in editor.message.lower()


def test_save_recipe_writes_a_recipe_that_reads_back(editor, tmp_path):
    editor.edit({"do": "save", "path": str(tmp_path / "drawn.json")})
    recipe = gs.read_recipe(tmp_path / "drawn.json")
    assert recipe["filt"] == editor.curve and "saved" in editor.message
    assert str(tmp_path / "drawn.json") in editor.message and editor.message_kind == "done"
    editor.edit({"do": "save", "path": str(tmp_path / "missing" / "drawn.json")})
    assert editor.message.startswith("Not saved") and editor.message_kind == "warning"
    editor.drag(1, -5.0, 2.0)  # clamped: a warning again
    assert editor.message and editor.message_kind == "warning"


def test_state_is_kept_for_the_notebook(editor):
    # ipywidgets' embed_data is what a notebook's saved widget state holds
    from ipywidgets.embed import embed_data

    editor.drag(1, editor.points[1][0], 0.05)
    state = embed_data(views=[editor])["manager_state"]["state"][editor.model_id]["state"]
    assert state["points"] == editor.points and state["view"]["freqs"]
    bundle = editor._repr_mimebundle_()
    bundle = bundle[0] if isinstance(bundle, tuple) else bundle  # (data, metadata) in ipywidgets 8
    # displayed again, it is the same model (same state)
    assert bundle["application/vnd.jupyter.widget-view+json"]["model_id"] == editor.model_id


def _epochs(sfreq=250.0):
    rng = np.random.default_rng(3)
    n_epochs, n_times = 20, 250
    t = np.arange(n_times) / sfreq
    data = 1e-6 * rng.standard_normal((n_epochs, 2, n_times))
    data += 5e-6 * np.exp(-((t - 0.4) / 0.05) ** 2) + 3e-6 * np.sin(2 * np.pi * 50 * t)
    info = mne.create_info(["Cz", "Pz"], sfreq, "eeg")
    return mne.EpochsArray(data, info, tmin=0.0, verbose=False)


def test_preview_shows_the_average_and_spectrum_before_and_after():
    epochs = _epochs()
    editor = gs.draw(gs.lowpass(20.0), data=epochs, channel="Pz")
    preview = editor.view["preview"]
    assert editor.channels == ["Cz", "Pz"] and preview["channel"] == "Pz"
    # the filtered average equals gs.apply on the epochs, then averaged (filtering is linear)
    with pytest.warns(gs.GainshapeWarning, match="shorter than 3 times"):
        after = gs.apply(epochs, editor.design).get_data(picks="Pz")[:, 0].mean(axis=0)
    np.testing.assert_allclose(preview["wave_after"]["values"], after, rtol=1e-6, atol=1e-13)
    # the spectrum before is scipy.signal.welch's (one Hann window per epoch), averaged
    f, p = welch(epochs.get_data(picks="Pz")[:, 0], fs=250.0, nperseg=250)
    # in dB re 1 µV²/Hz (volts squared times 1e12); the page gets 7 significant digits
    np.testing.assert_allclose(preview["before_db"], 10 * np.log10(1e12 * p.mean(axis=0)[f > 0]),
                               atol=2e-4)
    editor.edit({"do": "channel", "channel": "Cz"})
    assert editor.view["preview"]["channel"] == "Cz"
    editor.edit({"do": "channel", "channel": "Fz"})
    assert "No data channel" in editor.message


def test_draw_refuses_bad_arguments():
    with pytest.raises(ValueError, match="sampling rate"):
        gs.draw()
    with pytest.raises(TypeError, match="GainCurve"):
        gs.draw([1, 2], sfreq=100.0)
    with pytest.raises(ValueError, match="'tolerance'"):
        gs.draw(sfreq=100.0, tolerance=2.0)
    assert isinstance(gs.draw(sfreq=100.0), GainEditor)


def test_the_padding_note_for_epochs_names_them_with_their_own_times(make_raw):
    # epochs from -0.2 to 0.8 s: the note speaks of each epoch and its own times, once
    raw = make_raw(sfreq=250.0, seconds=40.0)
    epochs = mne.Epochs(raw, mne.make_fixed_length_events(raw, duration=1.0), tmin=-0.2,
                        tmax=0.8, baseline=None, preload=True, verbose=False)
    editor = gs.draw(gs.highpass(0.3), data=epochs, channel="Cz")
    message = editor.message
    assert message.count("Each epoch (-0.2 to 0.8 s)") == 1, message
    assert "0.000-1.00" not in message
    wave = editor.view["preview"]["wave_before"]
    assert wave["times"][0] == pytest.approx(-0.2) and wave["times"][-1] == pytest.approx(0.8)


def test_key_steps_count_each_and_the_answer_names_the_request(editor):
    # 30 presses, each 1/24 octave up, applied on top of the state Python holds (the point
    # at 4.1 Hz has its right neighbour at 125 Hz, far beyond 1.25 octaves)
    before = editor.points[8][0]
    for serial in range(1, 31):
        editor._handle_custom_msg({"do": "step", "index": 8, "freq_steps": 1, "serial": serial}, [])
    assert editor.points[8][0] == pytest.approx(before * 2 ** (30 / 24), rel=2e-3)
    assert editor.view["answer"] == 30  # the page knows its last press was answered
    editor.scale = "dB"
    gain = editor.points[2][1]
    editor.edit({"do": "step", "index": 2, "gain_steps": -1, "big": True})  # 6 dB down
    assert editor.points[2][1] == pytest.approx(gain / 10 ** (6 / 20), rel=1e-3)


def test_a_zoomed_view_shows_a_notch_comb_s_points_and_they_can_be_dragged():
    editor = gs.draw(gs.bandpass(0.1, 40.0) * gs.notch(50.0, harmonics=2), sfreq=500.0)
    near = [i for i, (f, _) in enumerate(editor.points) if 45.0 <= f <= 55.0]
    assert len(near) >= 3  # the notch's points crowd one spot of the whole-range axis
    editor.edit({"do": "zoom", "low": 45, "high": 55})
    view = editor.view
    assert view["shown"] == [45.0, 55.0]
    assert min(view["freqs"]) == pytest.approx(45.0) and max(view["freqs"]) == pytest.approx(55.0)
    # the requested gain on the zoomed grid is the curve's (the page draws it there)
    np.testing.assert_allclose(view["requested"], editor.curve(np.array(view["freqs"])), atol=1e-5)
    i = near[len(near) // 2]
    f, g = editor.points[i]
    editor.drag(i, f, min(g + 0.2, 1.0))
    assert editor.points[i][1] == pytest.approx(min(g + 0.2, 1.0))
    editor.edit({"do": "zoom", "low": 60, "high": 50})
    assert "upper frequency above" in editor.message
    editor.edit({"do": "zoom"})
    assert editor.view["shown"][0] == FMIN and editor.view["shown"][1] == editor.fmax

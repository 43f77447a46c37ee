"""Realization: lengths, tolerance, exact mode, characteristics, display."""

import dataclasses
import json

import numpy as np
import pytest

import gainshape as gs

SFREQ = 500.0


def test_shortest_kernel_is_shortest_within_tolerance():
    curve = gs.highpass(0.5)
    f = gs.design(curve, SFREQ)
    assert f.characteristics.max_deviation <= f.tolerance
    shorter = gs.design(curve, SFREQ, kernel=0.8 * f.characteristics.length, tolerance=0.5)
    assert shorter.characteristics.max_deviation > f.tolerance


def test_explicit_length_honoured_and_shortfall_warned():
    with pytest.warns(gs.GainshapeWarning, match="kernel='shortest'"):
        f = gs.design(gs.highpass(0.5), SFREQ, kernel=1.0)
    assert f.taps.size == 501
    assert f.characteristics.max_deviation > f.tolerance


def test_tighter_tolerance_needs_longer_kernel():
    loose = gs.design(gs.lowpass(30.0), SFREQ, tolerance=1e-2)
    tight = gs.design(gs.lowpass(30.0), SFREQ, tolerance=1e-4)
    assert tight.taps.size > loose.taps.size
    assert tight.characteristics.max_deviation <= 1e-4


def test_exact_mode_applies_request_on_record_grid():
    f = gs.design(gs.lowpass(30.0), SFREQ, kernel="exact")
    spec = f.spectrum(1000)
    np.testing.assert_array_equal(spec, gs.lowpass(30.0)(np.fft.rfftfreq(1000, 1 / SFREQ)))
    assert f.characteristics.max_deviation == 0.0
    assert f.support > 0


def test_realized_gain_matches_fft_of_kernel():
    f = gs.design(gs.bandpass(1.0, 40.0), SFREQ)
    n = 8192
    buf = np.zeros(n)
    buf[: f.taps.size] = f.taps
    fft_gain = np.abs(np.fft.rfft(np.roll(buf, -f.offset)))
    freqs = np.fft.rfftfreq(n, 1 / SFREQ)
    np.testing.assert_allclose(f.realized_gain(freqs), fft_gain, atol=1e-10)


def test_kernel_is_read_only_and_design_frozen():
    f = gs.design(gs.lowpass(30.0), SFREQ)
    with pytest.raises(ValueError, match="read-only"):
        f.taps[0] = 1.0
    with pytest.raises(dataclasses.FrozenInstanceError):
        f.sfreq = 1.0


def test_times_centered_for_zero_phase_and_causal_for_minimum():
    zero = gs.design(gs.lowpass(30.0), SFREQ)
    assert zero.times[zero.offset] == 0.0 and zero.times[0] == -zero.times[-1]
    minimum = gs.design(gs.lowpass(30.0), SFREQ, causal=True)
    assert minimum.times[0] == 0.0


@pytest.mark.parametrize(
    ("curve", "kind"),
    [(gs.lowpass(30.0), "low-pass"), (gs.highpass(1.0), "high-pass"),
     (gs.bandpass(1.0, 30.0), "band-pass"), (gs.bandstop(20.0, 40.0), "band-stop"),
     (gs.notch(50.0), "notch"), (gs.bandpass(1.0, 40.0) * gs.notch(50.0), "band-pass + notch"),
     (gs.highpass(1.0) * gs.notch(50.0), "high-pass + notch"),
     (gs.lowpass(20.0, rolloff=12.0) * gs.notch(50.0), "low-pass + notch"),
     # drawn edges that reach zero gain: the ripple at their foot is no notch
     (gs.GainCurve.from_points([0.1, 0.5, 1, 30, 45, 60], [0, 0.5, 1, 1, 0.5, 0], freq_scale="log"),
      "band-pass")],
    ids=["lp", "hp", "bp", "bs", "notch", "bp-notch", "hp-notch", "lp-notch-in-stopband",
         "drawn-bp"],
)
def test_kind_derived_from_realized_gain(curve, kind):
    assert gs.design(curve, SFREQ).characteristics.kind == kind


def test_notch_harmonics_above_nyquist_dropped_with_note():
    f = gs.design(gs.notch(50.0, harmonics=6), SFREQ)
    assert len(f.notes) == 2 and "250 Hz" in f.notes[0] and "300 Hz" in f.notes[1]
    assert ("note", f.notes[0]) in f.summary()
    assert f.curve == gs.notch(50.0, harmonics=4)
    assert f.realized_gain(249.0) > 0.99


def test_characteristics_to_dict_is_json():
    c = gs.design(gs.bandpass(1.0, 30.0), SFREQ, causal=True).characteristics
    d = json.loads(json.dumps(c.to_dict()))
    assert d["half_amplitude_direction"] == ["rising", "falling"]
    assert d["group_delay"] > 0


def test_low_pass_decay_grows_with_steeper_rolloff():
    timing = [gs.design(gs.lowpass(30.0, rolloff=r), SFREQ).characteristics.edge_timing[0]
              for r in (12.0, 48.0)]
    assert timing[1].decay_s > timing[0].decay_s and timing[1].overshoot_pct > timing[0].overshoot_pct


def test_repr_and_html():
    # analytic: the constructor's half-amplitude point and slope (12 dB/octave);
    # the kernel's length counted from its samples
    f = gs.design(gs.lowpass(30.0), 1000.0)
    assert repr(f) == (
        f"FilterDesign(low-pass; half-amplitude {30.0:.3g} Hz; roll-off {12.0:.1f} dB/octave; "
        f"zero-phase; {f.taps.size / 1000.0:.3g} s at 1000 Hz)"
    )
    html = f._repr_html_()
    assert "<table>" in html and "half-amplitude" in html


def test_spectrum_cached_per_size():
    f = gs.design(gs.lowpass(30.0), SFREQ)
    assert f.spectrum(4096) is f.spectrum(4096)


def test_jump_in_request_is_explained():
    brickwall = gs.GainCurve(lambda f: (f < 30.0).astype(float))
    with pytest.raises(ValueError, match="jump, a kink"):
        gs.design(brickwall, 250.0)
    with pytest.warns(gs.GainshapeWarning, match="no kernel length meets it"):
        f = gs.design(brickwall, 250.0, kernel=1.0)
    assert f.characteristics.max_deviation > 0.1


def test_explicit_length_longer_than_needed_is_honoured():
    # common practice (no source): a requested kernel length is the length used
    f = gs.design(gs.lowpass(30.0), 500.0, kernel=40.0)
    assert f.taps.size in (20000, 20001)
    assert f.characteristics.length == pytest.approx(40.0, abs=2 / 500.0)
    assert f.characteristics.max_deviation <= 0.001


def test_explicit_length_beyond_the_design_grid_is_refused():
    with pytest.raises(ValueError, match=r"'kernel'.*at most"):
        gs.design(gs.lowpass(30.0), 500.0, kernel=1e5)


def test_describe_names_edges_or_says_there_are_none():
    assert "half-amplitude 30 Hz; roll-off 12.0 dB/octave" in gs.design(gs.lowpass(30.0), SFREQ).describe()
    with pytest.warns(gs.GainshapeWarning, match="tolerance"):
        too_short = gs.design(gs.highpass(0.1), SFREQ, kernel=2.0)  # cannot reach 0.5 gain
    assert "no half-amplitude point" in too_short.describe()


def test_notch_is_described_by_its_stop_bands_not_by_side_slopes():
    # common practice (no source): pass-band edges are reported with a
    # roll-off, notches and band-stops by their stop band
    f = gs.design(gs.highpass(1.0) * gs.notch(50.0, harmonics=2), SFREQ * 2)
    slope = f.characteristics.rolloff[0]
    assert slope == pytest.approx(12.0, rel=0.03)  # the constructor's analytic slope
    line = f.describe()
    assert f"half-amplitude 1 Hz; roll-off {slope:.1f} dB/octave; stop bands 49.0-51.0, 99.0-101.0 Hz" in line
    rows = f.summary()
    assert dict(rows)["roll-off"] == f"{slope:.1f} dB/octave (high-pass edge)"
    stops = [value for label, value in rows if label == "stop band"]
    assert [v.split(" (")[0] for v in stops] == ["below 0.0411 Hz", "notch at 50 Hz", "notch at 100 Hz"]
    below, notch50, _ = f.characteristics.stop_bands
    assert 0.0410 <= below.attenuated_high  # the stated "below" is rounded down
    assert stops[1].startswith("notch at 50 Hz (49.0-51.0 Hz at half amplitude): at least "
                               f"{notch50.attenuation_db:.1f} dB down over ")


def test_passband_edges_and_removed_bands_split_the_shape():
    from gainshape.shaping.measure import passband_edges, removed_bands

    realized = gs.design(gs.bandpass(1.0, 40.0) * gs.notch(30.0), SFREQ).characteristics.to_dict()
    assert [(n, round(hz)) for n, hz, _, _ in passband_edges(realized)] == [("high-pass", 1),
                                                                             ("low-pass", 40)]
    assert [(round(lo), round(hi)) for lo, hi, _ in removed_bands(realized)] == [(29, 31)]


def test_design_pickles_for_worker_processes():
    import pickle

    f = gs.design(gs.bandpass(1.0, 30.0), SFREQ, causal=True)
    again = pickle.loads(pickle.dumps(f))
    np.testing.assert_array_equal(again.taps, f.taps)
    assert again.characteristics == f.characteristics and again.causal and again.curve == f.curve


def test_flat_request_warns_that_it_only_scales():
    # a curve drawn entirely above Nyquist is constant below it: nothing is filtered
    with pytest.warns(gs.GainshapeWarning, match="constant .* only scales"):
        gs.design(gs.GainCurve.from_points([200.0, 300.0], [1.0, 0.0]), 250.0)


def test_random_drawn_curves_design_or_refuse_clearly():
    # common practice (no source): fuzzing with seeded random input; every
    # outcome is a design that meets the tolerance, one that says it does not,
    # or a ValueError; never another exception. Timing: benchmarks/fuzz_design.py.
    import warnings

    rng = np.random.default_rng(3)
    outcomes = {"met": 0, "said unmet": 0, "refused": 0}
    for _ in range(300):
        sfreq = float(rng.choice([100.0, 128.0, 250.0, 256.0, 500.0]))
        freqs = np.unique(np.exp(rng.uniform(np.log(0.5), np.log(sfreq), int(rng.integers(2, 8)))))
        gains = rng.uniform(0.0, 1.0, freqs.size)
        gains = np.round(gains) if rng.random() < 0.3 else gains
        scale = "log" if rng.random() < 0.5 else "linear"
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always")
            try:
                f = gs.design(gs.GainCurve.from_points(freqs, gains, freq_scale=scale), sfreq,
                              causal=bool(rng.random() < 0.3))
            except ValueError as err:
                assert "'" in str(err) or "Nyquist" in str(err), str(err)
                outcomes["refused"] += 1
                continue
        said = any("realizes the request only to within" in str(w.message) for w in caught)
        if f.characteristics.max_deviation <= f.tolerance:
            outcomes["met"] += 1
        else:
            assert said, (freqs, gains, sfreq)
            outcomes["said unmet"] += 1
        assert np.isfinite(f.characteristics.length) and f.taps.size >= 1
    assert outcomes["met"] > 200  # most drawn curves are realizable


def test_long_kernel_gets_a_note():
    # the 0.05 Hz, 24 dB/octave high-pass needs about 93 s at 1000 Hz (measured)
    f = gs.design(gs.highpass(0.05, rolloff=24.0), 1000.0)
    assert f.characteristics.length > 60
    assert any(n.startswith(f"the kernel is {f.characteristics.length:.0f} s long") for n in f.notes)
    assert not gs.design(gs.highpass(0.5), 1000.0).notes


def test_the_same_request_is_designed_once_and_warns_each_time():
    curve, request = gs.lowpass(30.0, rolloff=48.0), dict(kernel=0.05)  # too short: it warns
    with pytest.warns(gs.GainshapeWarning, match="realizes the request only to") as first:
        a = gs.design(curve, 250.0, **request)
    with pytest.warns(gs.GainshapeWarning, match="realizes the request only to") as again:
        b = gs.design(gs.GainCurve.from_dict(curve.to_dict()), 250.0, **request)  # equal curve
    assert b is a and b.taps is a.taps  # reused, not designed again
    assert [str(w.message) for w in again] == [str(w.message) for w in first]
    assert gs.design(curve, 250.0, kernel=0.2) is not a  # other options: another design
    assert gs.design(curve, 500.0, **request) is not a  # another rate: another design


def test_curves_from_bare_callables_are_designed_every_time():
    import numpy as np

    curve = gs.GainCurve(lambda f: np.exp(-f / 40.0))
    assert gs.design(curve, 250.0) is not gs.design(curve, 250.0)


def test_the_old_name_of_the_taps_still_reads_them_with_a_future_warning():
    # the deprecation rule of the project plan: a renamed attribute keeps its old name one release
    f = gs.design(gs.lowpass(30.0), 250.0)
    with pytest.warns(FutureWarning, match="FilterDesign.taps"):
        assert f.kernel is f.taps

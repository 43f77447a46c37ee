"""Every figure gainshape reports, recomputed from outside references.

Sources, beside each check: scipy.signal.sosfiltfilt (forward-backward
Butterworth step and impulse responses), scipy.signal.group_delay,
scipy.signal.freqz of the kernel, the DTFT by its definition with NumPy,
and NumPy recomputations of the audit's definitions from its own waveforms.
"""

import numpy as np
import pytest
from scipy.optimize import brentq
from scipy.signal import butter, freqz, group_delay, lfilter, sosfiltfilt, sosfreqz, zoom_fft

import gainshape as gs

SFREQ = 250.0


def _butter_squared(order, btype, cutoff, sfreq=SFREQ):
    """Zero-phase forward-backward Butterworth: the gain curve |H|^2 and its SOS."""
    sos = butter(order, cutoff, btype=btype, fs=sfreq, output="sos")
    curve = gs.GainCurve(lambda f: np.abs(sosfreqz(sos, worN=np.asarray(f, float), fs=sfreq)[1]) ** 2)
    return curve, sos


@pytest.mark.parametrize(("order", "btype", "cutoff"),
                         [(1, "highpass", 0.5), (2, "highpass", 1.0), (2, "lowpass", 30.0),
                          (4, "lowpass", 30.0)], ids=["hp1", "hp2", "lp2", "lp4"])
def test_edge_timing_matches_sosfiltfilt(order, btype, cutoff):
    # scipy.signal.sosfiltfilt on a step and an impulse: the same definitions
    curve, sos = _butter_squared(order, btype, cutoff)
    [timing] = gs.design(curve, SFREQ, kernel="exact").characteristics.edge_timing
    n = int(60 * SFREQ)
    t = (np.arange(2 * n) - n) / SFREQ
    step = sosfiltfilt(sos, (t >= 0).astype(float), padtype=None)
    impulse = sosfiltfilt(sos, (t == 0).astype(float), padtype=None)
    if btype == "highpass":
        settling = t[np.flatnonzero((t >= 0) & (np.abs(step) > 0.01))[-1]]
        assert timing.settling_s == pytest.approx(settling, rel=0.05)
        # the pre-response is everything before the step, the undershoot what follows it
        assert timing.pre_response_pct == pytest.approx(100 * np.abs(step[t < 0]).max(), rel=0.01)
        assert timing.undershoot_pct == pytest.approx(max(0.0, -100 * step[t >= 0].min()),
                                                      rel=0.05, abs=0.01)
    else:
        envelope = np.abs(impulse) / np.abs(impulse).max()
        decay = t[np.flatnonzero((t >= 0) & (envelope >= 0.01))[-1]]
        assert timing.decay_s == pytest.approx(decay, rel=0.05)
        assert timing.overshoot_pct == pytest.approx(100 * (step.max() - 1), rel=0.05)


def test_minimum_phase_group_delay_matches_scipy():
    # a digital Butterworth is minimum phase: the causal kernel of |H| is H
    # itself; scipy.signal.group_delay of (b, a), weighted by |H|^2 over the
    # half-power passband, as Characteristics.group_delay defines it
    b, a = butter(4, 20.0, fs=SFREQ)
    curve = gs.GainCurve(lambda f: np.abs(
        freqz(b, a, worN=np.atleast_1d(np.asarray(f, float)), fs=SFREQ)[1]).reshape(np.shape(f)))
    f = gs.design(curve, SFREQ, causal=True, tolerance=1e-4)
    freqs = np.linspace(0, 125, 20001)
    _, gd = group_delay((b, a), w=freqs, fs=SFREQ)
    mag2 = np.abs(freqz(b, a, worN=freqs, fs=SFREQ)[1]) ** 2
    passband = mag2 >= 0.5
    expected = np.sum(gd[passband] * mag2[passband]) / np.sum(mag2[passband]) / SFREQ
    assert f.characteristics.group_delay == pytest.approx(expected, rel=0.02)


def _dense_gain(f, n=2**18):
    freqs, h = freqz(f.taps, worN=n, fs=f.sfreq)  # scipy.signal.freqz of the kernel
    return freqs, np.abs(h)


def test_ripple_and_stop_band_attenuation_match_freqz():
    f = gs.design(gs.bandpass(1.0, 40.0) * gs.notch(50.0, harmonics=2), 500.0)
    freqs, realized = _dense_gain(f)
    requested = f.requested_gain(freqs)
    passband = requested >= 1 / np.sqrt(2)
    ripple = np.max(np.abs(20 * np.log10(realized[passband] / requested[passband])))
    c = f.characteristics
    assert c.passband_ripple_db == pytest.approx(ripple, rel=0.02)
    for band in c.stop_bands:
        inside = (freqs >= band.low) & (freqs <= band.high)
        if band.kind in ("notch", "notch inside a stop band"):
            floor = inside & (requested <= f.tolerance)
            assert band.attenuation_db == pytest.approx(-20 * np.log10(realized[floor].max()), abs=0.3)
    assert c.stop_band_attenuation_db == min(b.attenuation_db for b in c.stop_bands)


def test_drawn_floor_is_a_stop_band_of_its_depth_and_the_notch_in_it_is_listed():
    # a -40 dB floor above 48 Hz times a 50 Hz notch: 40 dB over 48-500 Hz
    curve = gs.GainCurve.from_points([1.0, 40.0, 48.0, 500.0], [1.0, 1.0, 0.01, 0.01]) * gs.notch(50.0)
    c = gs.design(curve, 1000.0).characteristics
    skirt = [b for b in c.stop_bands if b.kind == "above the low-pass edge"]
    assert len(skirt) == 1 and skirt[0].attenuation_db == pytest.approx(40.0, abs=0.5)
    assert c.stop_band_attenuation_db == pytest.approx(40.0, abs=0.5)
    notches = [b for b in c.stop_bands if "notch" in b.kind]
    assert len(notches) == 1 and notches[0].low < 50.0 < notches[0].high
    assert "notch" in c.kind


def test_notch_comb_inside_the_low_pass_stop_band_is_listed_everywhere():
    raw_curve = gs.bandpass(0.1, 40.0) * gs.notch(50.0, harmonics=5)
    f = gs.design(raw_curve, 1000.0)
    notches = [b for b in f.characteristics.stop_bands if "notch" in b.kind]
    assert [round((b.low + b.high) / 2) for b in notches] == [50, 100, 150, 200, 250]
    assert all(b.attenuation_db > 50 for b in notches)
    x = np.random.default_rng(0).standard_normal((2, 20000))
    _, step = gs.apply(x, f, return_step=True)
    import mne

    raw = mne.io.RawArray(x * 1e-6, mne.create_info(["Cz", "Pz"], 1000.0, "eeg"), verbose=False)
    out = gs.apply(raw, f)
    entry = list(gs.bids_filters(out).values())[0]["stop bands"]
    rows = [row for row in entry if "notch" in row["kind"]]
    assert len(rows) == 5
    for row, band in zip(rows, notches):  # rounded inward: the stated range lies inside the band's
        lo, hi = row["attenuation holds over (Hz)"]
        assert band.attenuated_low <= lo < hi <= band.attenuated_high
        assert band.attenuated_high - band.attenuated_low - (hi - lo) < 0.01 * hi
        assert band.attenuation_db - 0.1 < row["least attenuation (dB)"] <= band.attenuation_db
    full, brief = gs.methods_text(out, detail="full"), gs.methods_text(out)
    assert all(f"notch at {round((b.attenuated_low + b.attenuated_high) / 2):d} Hz" in full
               for b in notches)
    assert "Notches at 50, 100, 150, 200 and 250 Hz" in brief
    import re

    db, half = map(float, re.search(r"at least ([0-9.]+) dB down within \u00b1([0-9.]+) Hz",
                                    brief).groups())
    assert db <= min(b.attenuation_db for b in notches)
    for centre, band in zip((50, 100, 150, 200, 250), notches):  # the stated range, in every notch
        assert band.attenuated_low <= centre - half and centre + half <= band.attenuated_high
        _, h = freqz(f.taps, worN=np.linspace(centre - half, centre + half, 2001), fs=f.sfreq)
        assert 20 * np.log10(np.abs(h).max()) <= -db + 0.01  # scipy.signal.freqz of the kernel


def _crossing(f, level, lo, hi):
    """The half-amplitude frequency measured independently: brentq on the DTFT."""
    n = np.arange(f.taps.size) - f.offset

    def gain(hz):
        return abs(np.exp(-2j * np.pi * hz * n / f.sfreq) @ f.taps) - level

    return brentq(gain, lo, hi, xtol=1e-9)


def test_bids_and_methods_figures_equal_the_characteristics_and_a_measurement(make_raw):
    raw = make_raw()
    out = gs.apply(raw, gs.bandpass(0.5, 30.0, rolloff=24.0))
    f = gs.design(gs.bandpass(0.5, 30.0, rolloff=24.0), raw.info["sfreq"])
    c = f.characteristics
    entry = list(gs.bids_filters(out).values())[0]
    high, low = _crossing(f, 0.5, 0.3, 0.8), _crossing(f, 0.5, 25.0, 35.0)
    assert entry["high-pass half-amplitude cutoff (Hz)"] == pytest.approx(high, rel=1e-3)
    assert entry["low-pass half-amplitude cutoff (Hz)"] == pytest.approx(low, rel=1e-3)
    assert entry["low-pass half-power cutoff (Hz)"] == pytest.approx(
        _crossing(f, 1 / np.sqrt(2), 20.0, 30.0), rel=1e-3)
    assert entry["low-pass roll-off (dB/octave)"] == pytest.approx(c.rolloff[-1], rel=1e-2)
    assert entry["kernel length (s)"] == pytest.approx(f.taps.size / f.sfreq, rel=1e-3)
    [hp, lp] = c.edge_timing
    assert entry["high-pass step settling time to 1 % (s)"] == pytest.approx(hp.settling_s, rel=1e-2)
    # NumPy: the cumulative sum of the high-pass edge's own kernel is its step
    # response (t = 0 at the offset); the edge is timed alone, as this kernel is
    hp_only = gs.design(gs.highpass(0.5, rolloff=24.0), raw.info["sfreq"])
    hp_step = np.cumsum(hp_only.taps)
    assert entry["high-pass step undershoot after the step (% of step)"] == pytest.approx(
        -100 * hp_step[hp_only.times >= 0].min(), rel=0.05)
    assert entry["high-pass pre-response before the step (% of step)"] == pytest.approx(
        100 * np.abs(hp_step[hp_only.times < 0]).max(), rel=0.02)
    assert entry["high-pass time of deepest undershoot (s after the step)"] == pytest.approx(
        hp_only.times[hp_only.times >= 0][np.argmin(hp_step[hp_only.times >= 0])], rel=0.05)
    assert entry["low-pass step overshoot (%)"] == pytest.approx(lp.overshoot_pct, rel=1e-2)
    least = entry["least stop-band attenuation, over each band's stated range (dB)"]
    assert c.stop_band_attenuation_db - 0.1 < least <= c.stop_band_attenuation_db  # rounded down
    assert entry["passband ripple (dB)"] == pytest.approx(c.passband_ripple_db, rel=1e-2)
    text = gs.methods_text(out)
    assert f"cutoffs {high:.3g} and {low:.3g} Hz" in text
    assert f"roll-off {c.rolloff[0]:.3g} and {c.rolloff[-1]:.3g} dB/octave" in text
    assert f"in {hp.settling_s:.3g} s" in text and f"low-pass overshoot {lp.overshoot_pct:.2g} %" in text
    assert f"passband ripple {c.passband_ripple_db:.2g} dB" in text
    assert f"(-3 dB: {_crossing(f, 1 / np.sqrt(2), 0.3, 1.0):.3g} and " \
           f"{_crossing(f, 1 / np.sqrt(2), 20.0, 30.0):.3g} Hz)" in text
    full = gs.methods_text(out, detail="full")
    assert f"at least {np.floor(c.stop_band_attenuation_db):.0f} dB attenuation" in full
    assert f"after {hp.settling_s:.3g} s" in full and f"overshoot {lp.overshoot_pct:.1f} %" in full


def test_history_table_roll_off_equals_the_characteristics(make_raw):
    out = gs.apply(make_raw(), gs.bandpass(0.5, 30.0, rolloff=24.0))
    c = gs.history(out)[0]["realized"]
    table = gs.history(out)._repr_html_()
    assert f"<td>{c['rolloff'][0]:.1f}, {c['rolloff'][-1]:.1f}</td>" in table


def test_audit_metrics_recomputed_from_its_waveforms():
    # NumPy, from the definitions in gainshape.audit's docstring: onset at 10 %
    # of the peak, ringing while |filtered - original| > 1 % of the peak
    for ds, names in ((gs.audit(gs.highpass(0.5), sfreq=SFREQ), ("step", "pulse")),
                      (gs.audit(gs.design(gs.lowpass(20.0), SFREQ, causal=True)), ("pulse",))):
        _check_audit_rows(ds, names)


def _check_audit_rows(ds, names):
    t = ds.time.values
    for name in names:
        x = ds.original.sel(waveform=name).values
        y = ds.component_filtered.sel(component=name).values
        row = ds.sel(component=name)
        i = int(np.argmax(x))
        onset, offset = np.flatnonzero(x >= 0.1 * x[i])[[0, -1]]
        window = slice(max(0, onset - max(offset - onset, int(0.05 * SFREQ))),
                       offset + max(offset - onset, int(0.05 * SFREQ)) + 1)
        j = window.start + int(np.argmax(y[window]))
        assert float(row.peak_change_pct) == pytest.approx(100 * (y[j] - x[i]) / x[i], abs=1e-9)
        assert float(row.latency_shift_ms) == pytest.approx(1000 * (t[j] - t[i]), abs=1e-9)
        assert float(row.onset_shift_ms) == pytest.approx(
            1000 * (t[np.flatnonzero(y >= 0.1 * y[j])[0]] - t[onset]), abs=1e-9)
        added = np.maximum(-y, 0) - np.maximum(-x, 0)
        assert float(row.undershoot_pct) == pytest.approx(
            100 * max(added[offset + 1 :].max(), 0) / x[i], abs=1e-9)
        late = np.flatnonzero(np.abs(y - x) > 0.01 * x[i])
        assert float(row.ringing_s) == pytest.approx(max(t[late[-1]] - t[offset], 0.0), abs=1e-9)


def test_minimum_phase_onset_shift_is_recomputed_and_positive():
    ds = gs.audit(gs.design(gs.lowpass(20.0), SFREQ, causal=True))
    assert float(ds.onset_shift_ms.sel(component="pulse")) > 0


@pytest.mark.parametrize(("curve", "sfreq", "causal"), [
    (gs.GainCurve.from_points([0.01, 0.25, 9.5, 31.4], [1.0, 0.0, 0.0, 1.0]), 128.0, False),
    (gs.highpass(0.1), 500.0, False),
    (gs.GainCurve.from_points([0.0143, 0.0603, 0.987, 29.33, 38.03, 56.64], [1.0, 0.0, 1.0, 0.0, 0.0, 1.0],
                              freq_scale="log"), 256.0, True),
], ids=["drawn band-stop", "high-pass", "drawn causal, steep floor ends"])
def test_stop_band_attenuation_is_the_highest_gain_over_its_floor(curve, sfreq, causal):
    # reference: the kernel's DTFT by scipy.signal.zoom_fft at 400001 points over each
    # band, and by scipy.signal.freqz at the floor's ends (where the request crosses
    # the floor's level, found by scipy.optimize.brentq; the gain is steep there).
    # The floor is where the request is within 1 dB of its lowest, or at most the tolerance.
    f = gs.design(curve, sfreq, causal=causal)
    for band in f.characteristics.stop_bands:
        freqs = np.linspace(band.low, band.high, 400001)
        gain = np.abs(zoom_fft(f.taps, [band.low, band.high], m=freqs.size, fs=sfreq,
                               endpoint=True))
        requested = f.requested_gain(freqs)
        level = max(f.tolerance, requested.min() * 10 ** (1 / 20))
        floor = requested <= level
        ends = [brentq(lambda x: float(curve(np.array([x]))[0]) - level, freqs[i], freqs[i + 1])
                for i in np.flatnonzero(floor[1:] != floor[:-1])]
        _, at_ends = freqz(f.taps, worN=np.array(ends + [band.low]), fs=sfreq)
        highest = max(gain[floor].max(), np.abs(at_ends[:-1]).max(initial=0.0))
        assert band.attenuation_db == pytest.approx(-20 * np.log10(highest), abs=0.01)


@pytest.mark.parametrize(("low", "high", "rolloff", "sfreq"), [(0.5, 40.0, 12.0, 250.0),
                                                               (0.1, 30.0, 24.0, 500.0)])
def test_minimum_phase_band_pass_edges_time_like_each_edge_alone(low, high, rolloff, sfreq):
    # reference: the step response of each single-edge causal kernel by
    # scipy.signal.lfilter; each band-pass edge, timed alone, behaves like it
    timing = gs.design(gs.bandpass(low, high, rolloff=rolloff), sfreq, causal=True)
    hp_edge, lp_edge = timing.characteristics.edge_timing
    for kernel_of, edge in ((gs.highpass(low, rolloff=rolloff), hp_edge),
                            (gs.lowpass(high, rolloff=rolloff), lp_edge)):
        kernel = gs.design(kernel_of, sfreq, causal=True).taps
        step = lfilter(kernel, [1.0], np.ones(kernel.size + 1))
        if edge.edge == "high-pass":
            late = np.flatnonzero(np.abs(step - step[-1]) > 0.01)
            assert edge.settling_s == pytest.approx(late[-1] / sfreq, rel=0.05)
            assert edge.undershoot_pct == pytest.approx(-100 * step.min(), abs=1.0)
            assert edge.pre_response_pct is None and edge.pre_response_s is None
            assert edge.undershoot_s == pytest.approx(np.argmin(step) / sfreq, abs=0.05)
        else:
            assert edge.overshoot_pct == pytest.approx(100 * (step.max() - step[-1]), abs=0.2)


def test_first_order_high_pass_forwards_and_backwards_matches_its_closed_form():
    # a first-order high-pass run forwards and backwards has the gain
    # f^2 / (f^2 + fc^2) and the step response -exp(a t) / 2 before the step and
    # exp(-a t) / 2 after it (a = 2 pi fc): half the step before it, no
    # undershoot, 1 % reached ln(50) / a either side (the squared-magnitude
    # Butterworth case of scipy.signal.filtfilt's documentation; any DSP handbook)
    # sampled, the kernel's sample at t = 0 holds a / (2 sfreq) of the step (about
    # 0.3 % at 1000 Hz), so the pre-response is 50 % minus half of that
    fc, sfreq = 1.0, 1000.0
    curve = gs.GainCurve(lambda f: f**2 / (f**2 + fc**2))
    [timing] = gs.design(curve, sfreq, kernel="exact").characteristics.edge_timing
    a = 2 * np.pi * fc
    assert timing.pre_response_pct == pytest.approx(50.0 * (1 - a / (2 * sfreq)), abs=0.05)
    assert timing.pre_response_s == pytest.approx(np.log(50) / a, rel=0.02)
    assert timing.settling_s == pytest.approx(np.log(50) / a, rel=0.02)
    assert timing.undershoot_pct < 0.01 and timing.undershoot_s is None


@pytest.mark.parametrize("causal", [False, True], ids=["zero phase", "causal"])
def test_step_figures_equal_numpy_cumsum_of_the_kernel(causal):
    # NumPy: the step response is the kernel's cumulative sum; t = 0 at the offset
    f = gs.design(gs.highpass(1.0, rolloff=24.0), SFREQ, causal=causal)
    [timing] = f.characteristics.edge_timing
    step = np.cumsum(f.taps)
    t = f.times
    after = step[t >= 0]
    assert timing.undershoot_pct == pytest.approx(-100 * after.min(), rel=0.01)
    assert timing.undershoot_s == pytest.approx(t[t >= 0][np.argmin(after)], abs=2 / SFREQ)
    if causal:
        assert timing.pre_response_pct is None
    else:
        assert timing.pre_response_pct == pytest.approx(100 * np.abs(step[t < 0]).max(), rel=0.01)
        early = t[(t < 0) & (np.abs(step) > 0.01)]
        assert timing.pre_response_s == pytest.approx(-early[0], abs=2 / SFREQ)

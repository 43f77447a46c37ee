"""Every figure a user reads, pinned to an outside reference.

The figures: the BIDS entry's keys, the methods paragraph's half-power and
deviation clauses, the summary's kernel sample count, the unrounded
half-power cutoffs, the group delay of gentle minimum-phase edges, the
audit's pre-response figures, find_lines' width, the Epochs map of the band
change, the study summary's labels after a failure, and the editor's
"after" spectrum. References: scipy.signal.freqz (the kernel's gain),
scipy.optimize.brentq on it (crossings), scipy.signal.group_delay,
scipy.signal.welch, NumPy recomputations from returned waveforms and
values, and Harris (1978, Proc. IEEE 66:51-83, Table 1: the Hann window's
3 dB bandwidth is 1.44 bins). Unrounded values are compared, and printed
ones parsed back.
"""

import re
import warnings

import mne
import numpy as np
import pytest
from scipy.optimize import brentq
from scipy.signal import freqz, group_delay, welch

import gainshape as gs

SFREQ = 500.0


def _gain(f, hz):
    """|H| of the design's kernel at ``hz`` (scipy.signal.freqz)."""
    return np.abs(freqz(f.taps, worN=np.atleast_1d(np.asarray(hz, float)), fs=f.sfreq)[1])


def _crossing(f, level, lo, hi):
    return brentq(lambda hz: _gain(f, hz)[0] - level, lo, hi, xtol=1e-10)


@pytest.fixture(scope="module")
def filtered():
    raw = mne.io.RawArray(np.random.default_rng(0).standard_normal((2, 60000)) * 1e-6,
                          mne.create_info(["Cz", "Pz"], SFREQ, "eeg"), verbose=False)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return gs.apply(raw, gs.bandpass(0.1, 40.0, rolloff=12.0) * gs.notch(50.0), verbose=False)


@pytest.fixture(scope="module")
def realized():
    return gs.design(gs.bandpass(0.1, 40.0, rolloff=12.0) * gs.notch(50.0), SFREQ)


def _sig(x, digits):
    return float(f"{x:.{digits}g}")


def test_unrounded_half_amplitude_and_half_power_cutoffs_match_brentq_on_freqz(realized):
    c = realized.characteristics
    hp_amp, lp_amp = (float(e) for e in c.half_amplitude)
    hp_pow, lp_pow = (float(e) for e in c.half_power)
    assert hp_amp == pytest.approx(_crossing(realized, 0.5, 0.02, 1.0), rel=1e-6)
    assert lp_amp == pytest.approx(_crossing(realized, 0.5, 20.0, 45.0), rel=1e-6)
    assert hp_pow == pytest.approx(_crossing(realized, 2**-0.5, 0.02, 1.0), rel=1e-6)
    assert lp_pow == pytest.approx(_crossing(realized, 2**-0.5, 10.0, 40.0), rel=1e-6)
    assert [e.direction for e in c.half_power] == ["rising", "falling"]


def test_bids_entry_keys_hold_the_measured_figures_in_their_units(filtered, realized):
    entry = next(iter(gs.bids_filters(filtered).values()))
    f = realized
    # cutoffs (Hz) at the stated levels, low edge first: brentq on freqz
    assert entry["high-pass half-amplitude cutoff (Hz)"] == _sig(_crossing(f, 0.5, 0.02, 1.0), 4)
    assert entry["low-pass half-amplitude cutoff (Hz)"] == _sig(_crossing(f, 0.5, 20.0, 45.0), 4)
    assert entry["high-pass half-power cutoff (Hz)"] == _sig(_crossing(f, 2**-0.5, 0.02, 1.0), 4)
    assert entry["low-pass half-power cutoff (Hz)"] == _sig(_crossing(f, 2**-0.5, 10.0, 40.0), 4)
    # ripple (dB) over the pass band: |20 log10(realized / requested)| where requested >= 1/sqrt 2
    hz = np.linspace(0.0, SFREQ / 2, 2**18)
    hz = hz[f.curve(hz) >= 2**-0.5]  # where the request is at least half power
    ratio_db = 20 * np.log10(_gain(f, hz) / f.curve(hz))
    assert entry["passband ripple (dB)"] == pytest.approx(np.abs(ratio_db).max(), rel=0.02)
    # the kernel's length in seconds and the rate in Hz
    assert entry["kernel length (s)"] == _sig(f.taps.size / SFREQ, 4)
    assert entry["sampling frequency (Hz)"] == SFREQ
    # time figures: NumPy cumsum of the kernel (a step response), percent of the step
    # (each figure pinned on the kernel in tests/references/test_reported_figures.py: here,
    # that each key holds its own figure, in its own unit)
    c = f.characteristics
    hp = next(e for e in c.edge_timing if e.edge == "high-pass")
    assert entry["high-pass pre-response before the step (% of step)"] == _sig(hp.pre_response_pct, 3)
    assert entry["high-pass pre-response onset (s before the step)"] == _sig(hp.pre_response_s, 3)
    assert entry["high-pass step undershoot after the step (% of step)"] == _sig(hp.undershoot_pct, 3)
    assert entry["high-pass time of deepest undershoot (s after the step)"] == _sig(hp.undershoot_s, 3)
    assert entry["high-pass step settling time to 1 % (s)"] == _sig(hp.settling_s, 3)
    # each stop band's range holds its attenuation (freqz over the range, dB), low end first
    for band in entry["stop bands"]:
        lo, hi = band["attenuation holds over (Hz)"]
        assert lo <= hi and band["half-amplitude limits (Hz)"][0] <= band["half-amplitude limits (Hz)"][1]
        worst = 20 * np.log10(_gain(f, np.linspace(lo, hi, 4001)).max())
        assert worst <= -band["least attenuation (dB)"] + 0.05
    least = min(b["least attenuation (dB)"] for b in entry["stop bands"])
    assert entry["least stop-band attenuation, over each band's stated range (dB)"] == least


def _number_after(text, words):
    return float(re.search(re.escape(words) + r" ([0-9]+(?:\.[0-9]+)?)", text).group(1))


def test_methods_half_power_and_deviation_clauses_match_freqz(filtered, realized):
    full = gs.methods_text(filtered, detail="full")
    f = realized
    high = re.search(r"high-pass half-amplitude \(-6 dB\) cutoff [0-9.]+ Hz, half-power ([0-9.]+) Hz",
                     full)
    low = re.search(r"low-pass half-amplitude \(-6 dB\) cutoff [0-9.]+ Hz, half-power ([0-9.]+) Hz",
                    full)
    assert float(high.group(1)) == _sig(_crossing(f, 2**-0.5, 0.02, 1.0), 3)
    assert float(low.group(1)) == _sig(_crossing(f, 2**-0.5, 10.0, 40.0), 3)
    # the largest deviation: the request minus the kernel's gain on a fine grid (freqz)
    stated = _number_after(full, "a largest gain deviation from the request of")
    hz = np.linspace(0.0, SFREQ / 2, 2**18)
    t = f.offset / SFREQ
    signed = np.real(freqz(f.taps, worN=hz, fs=SFREQ)[1] * np.exp(2j * np.pi * hz * t))
    true = np.abs(signed - f.curve(hz)).max()
    assert stated == _sig(true, 2) or abs(stated - true) <= 0.05 * true
    brief = gs.methods_text(filtered)
    shown = re.findall(r"-3 dB: ([0-9.]+) and ([0-9.]+) Hz", brief)[0]
    assert [float(v) for v in shown] == [_sig(_crossing(f, 2**-0.5, 0.02, 1.0), 3),
                                         _sig(_crossing(f, 2**-0.5, 10.0, 40.0), 3)]


def test_summary_kernel_sample_count_is_the_kernel_size(realized):
    row = dict(realized.summary())["kernel length"]
    seconds, samples = re.match(r"([0-9.]+) s \((\d+) samples\)", row).groups()
    assert int(samples) == realized.taps.size
    assert float(seconds) == _sig(realized.taps.size / SFREQ, 4)


@pytest.mark.parametrize("cutoff, rolloff", [(0.1, 6.0), (0.3, 12.0), (0.5, 6.0)])
def test_group_delay_of_gentle_minimum_phase_edges_matches_scipy(cutoff, rolloff):
    f = gs.design(gs.highpass(cutoff, rolloff=rolloff) * gs.lowpass(30.0), 250.0, causal=True)
    # gainshape states the gain-squared-weighted mean group delay over the half-power pass band
    hz = np.linspace(0.0, 125.0, 2**18, endpoint=False)  # 2 ms of a 8 s kernel's ripple period
    _, h = freqz(f.taps, worN=hz, fs=250.0)
    weight = np.abs(h) ** 2
    band = weight >= 0.5
    _, delay = group_delay((f.taps, [1.0]), w=hz[band], fs=250.0)
    expected = np.sum(delay * weight[band]) / np.sum(weight[band]) / 250.0
    assert f.characteristics.group_delay == pytest.approx(expected, rel=5e-4)
    assert f.characteristics.group_delay > 0


def test_audit_pre_response_figures_recomputed_from_its_waveforms():
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", gs.GainshapeWarning)
        ds = gs.audit(gs.highpass(0.5), sfreq=250.0)
    t = ds.time.values
    for comp in ds.component.values:
        row = ds.sel(component=comp)
        original = ds.original.sel(waveform=str(row.component_waveform.values)).values
        mine = ds.component_filtered.sel(component=comp).values
        if len([c for c in ds.component.values
                if ds.component_waveform.sel(component=c) == row.component_waveform]) > 1:
            continue  # several components: each is measured on itself alone (test_audit_findings)
        sign = 1.0 if original.max() >= -original.min() else -1.0
        xs, ys = sign * original, sign * mine
        peak = xs.max()
        onset = np.flatnonzero(xs >= 0.1 * peak)[0]
        added = np.maximum(-ys, 0) - np.maximum(-xs, 0)
        before = max(added[:onset].max(initial=0.0), 0.0)
        assert float(row.pre_response) == pytest.approx(before, rel=1e-9, abs=1e-12)
        assert float(row.pre_response_pct) == pytest.approx(100 * before / peak, rel=1e-9, abs=1e-9)
        if before > 0:
            k = int(np.argmax(added[:onset]))
            assert float(row.pre_response_time_ms) == pytest.approx(1000 * t[k])
    assert ds.pre_response.attrs["units"] == ds.attrs["units"]
    assert ds.pre_response_pct.attrs["units"] == "%"


def _hann_power(bins):
    """The Hann window's power spectrum, ``bins`` from its centre, relative to its peak:
    its DTFT is 0.5 D(d) + 0.25 D(d - 1) + 0.25 D(d + 1), D the Dirichlet kernel, here
    sinc for a long window (Harris 1978, section on the cos^2 window)."""
    d = np.asarray(bins, dtype=float)
    return (0.5 * np.sinc(d) + 0.25 * np.sinc(d - 1) + 0.25 * np.sinc(d + 1)) ** 2 / 0.25


@pytest.mark.parametrize("offset", [0.0, 0.5])
def test_a_steady_tone_s_width_is_the_hann_window_s_read_between_bins(offset):
    # the width is read between bins by linear interpolation at half the peak bin's excess:
    # on a bin, the neighbours are at 1/4 of the peak -> 2 x (1/2)/(3/4) = 4/3 bins; midway,
    # two equal bins at +-1/2 bin and the next ones at +-3/2 bins
    if offset == 0.0:
        expected = 2 * (1 - 0.5) / (1 - _hann_power(1.0))
    else:
        top, next_ = _hann_power(0.5), _hann_power(1.5)
        expected = 2 * (0.5 + (top - top / 2) / (top - next_))
    rng = np.random.default_rng(3)
    sfreq, seconds = 250.0, 120.0
    t = np.arange(int(sfreq * seconds)) / sfreq
    tone = 37.3 + offset * 0.1  # the spectrum's resolution is 0.1 Hz
    data = 1e-7 * rng.standard_normal((3, t.size)) + 2e-5 * np.sin(2 * np.pi * tone * t)
    found = gs.find_lines(data, sfreq=sfreq)
    resolution = float(found.attrs["resolution"])
    assert resolution == pytest.approx(0.1)
    line = found.sel(line=found.line[np.argmin(np.abs(found.line_frequency.values - tone))])
    assert float(line.width) / resolution == pytest.approx(expected, rel=0.01)


def test_epochs_band_change_map_combines_epochs_by_their_mean_power():
    from gainshape.examining.summaries import band_change_map

    # epochs of unequal power and spectral shape: a 9 Hz and an 12.5 Hz rhythm, unequal size
    rng = np.random.default_rng(4)
    sfreq, n = 250.0, 2500
    t = np.arange(n) / sfreq
    epochs = np.empty((2, 1, n))
    epochs[0, 0] = 20e-6 * np.sin(2 * np.pi * 9.0 * t) + 1e-7 * rng.standard_normal(n)
    epochs[1, 0] = 2e-6 * np.sin(2 * np.pi * 12.5 * t) + 1e-7 * rng.standard_normal(n)
    info = mne.create_info(["Cz"], sfreq, "eeg")
    before = mne.EpochsArray(epochs, info, verbose=False)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        after = gs.apply(before, gs.lowpass(11.0, rolloff=48.0), verbose=False)
        ds = gs.band_change(before, after)
    # scipy.signal.welch of each epoch, integrated over alpha (8-13 Hz), then the mean over epochs
    nperseg = n
    f, p_before = welch(before.get_data()[:, 0], fs=sfreq, nperseg=nperseg)
    _, p_after = welch(after.get_data()[:, 0], fs=sfreq, nperseg=nperseg)
    alpha = (f >= 8.0) & (f <= 13.0)
    pooled = 10 * np.log10(p_after[:, alpha].sum(axis=1).mean() / p_before[:, alpha].sum(axis=1).mean())
    mapped = band_change_map(ds)[0, list(ds.band.values).index("alpha")]
    assert mapped == pytest.approx(pooled, abs=0.3)
    per_epoch = float(ds.change_db.sel(band="alpha", channel="Cz").mean("epoch"))
    assert abs(per_epoch - pooled) > 3.0  # the two ways differ here: the test can tell them apart
    fig = gs.plot_band_change(ds, show=False)
    np.testing.assert_allclose(fig.axes[0].images[0].get_array(), band_change_map(ds))
    import matplotlib.pyplot as plt

    plt.close(fig)


def test_the_editor_s_after_spectrum_is_welch_of_the_filtered_channel():
    rng = np.random.default_rng(5)
    sfreq = 250.0
    raw = mne.io.RawArray(1e-5 * rng.standard_normal((2, int(90 * sfreq))),
                          mne.create_info(["Cz", "Pz"], sfreq, "eeg"), verbose=False)
    editor = gs.draw(gs.lowpass(20.0), data=raw, channel="Pz")
    preview = editor.view["preview"]
    first = raw.get_data(picks="Pz")[0, : int(60 * sfreq)]  # the first 60 s, as the page says
    filtered = gs.apply(first, editor.design, sfreq=sfreq)
    f, p = welch(filtered, fs=sfreq, nperseg=int(4 * sfreq))
    keep = f > 0
    np.testing.assert_allclose(preview["freqs"], f[keep], rtol=1e-5)
    # in dB re 1 µV²/Hz: volts squared times 1e12
    np.testing.assert_allclose(preview["after_db"], 10 * np.log10(1e12 * p[keep]), atol=1e-3)
    assert preview["spectrum_label"] == "power (dB re 1 µV²/Hz)"
    assert preview["label"].startswith("first 60 s")

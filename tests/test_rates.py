"""Two rates: a slow edge filtered at a reduced rate (gainshape.rates).

References: NumPy's FFT (the request applied exactly on a long grid), SciPy's
``freqz`` (the parts' responses) and ``welch`` (gain measured on white
noise), least-squares sinusoid amplitudes, and the moving average's
frequency response |sin(pi f M / fs) / (M sin(pi f / fs))| (Oppenheim &
Schafer, Discrete-Time Signal Processing, 3rd ed., example 2.16 / 5.x,
from memory).
"""

import numpy as np
import pytest
import scipy.signal

import gainshape as gs
from gainshape.filtering.engine import filter_array
from gainshape.shaping.rates import KernelPart, two_rates

SFREQ = 1000.0
# the benchmark's band-pass: half-amplitude 0.05 and 33.75 Hz, 12 and 24 dB/octave
CURVE = gs.highpass(0.05, rolloff=12.0) * gs.lowpass(33.75, rolloff=24.0)
STEEP = gs.highpass(0.05, rolloff=24.0) * gs.lowpass(33.75, rolloff=24.0)


@pytest.fixture(scope="module")
def split():
    return gs.design(CURVE, SFREQ)


def _eeg_with_drift(n_channels, seconds, rng):
    """Brown-noise drift, a 0.01 Hz wave, 1/f-like background, alpha and line noise."""
    t = np.arange(int(seconds * SFREQ)) / SFREQ
    drift = np.cumsum(rng.standard_normal((n_channels, t.size)), axis=1) * 0.02
    background = scipy.signal.lfilter([1.0], [1.0, -0.95], rng.standard_normal((n_channels, t.size)))
    waves = (5.0 * np.sin(2 * np.pi * 0.01 * t) + 2.0 * np.sin(2 * np.pi * 10.0 * t)
             + 0.5 * np.sin(2 * np.pi * 50.0 * t))
    return drift + background + waves


def _exact_request(x, curve, n_pad):
    """The request itself applied with NumPy's FFT to the reflect-padded record."""
    padded = np.pad(x, ((0, 0), (n_pad, n_pad)), mode="reflect")
    n = padded.shape[-1]
    gain = curve(np.fft.rfftfreq(n, 1.0 / SFREQ))
    return np.fft.irfft(np.fft.rfft(padded, axis=-1) * gain, n, axis=-1)[:, n_pad : n_pad + x.shape[-1]]


def _amplitude(y, freq, keep, also=()):
    """Least-squares amplitude of a sinusoid at ``freq`` in ``y[keep]``, fitted
    with an offset and sinusoids at the frequencies ``also``."""
    t = np.arange(y.size)[keep] / SFREQ
    basis = np.column_stack([np.cos(2 * np.pi * freq * t), np.sin(2 * np.pi * freq * t),
                             np.ones_like(t)]
                            + [w(2 * np.pi * f * t) for f in also for w in (np.cos, np.sin)])
    coef = np.linalg.lstsq(basis, y[keep], rcond=None)[0]
    return float(np.hypot(coef[0], coef[1]))


def test_slow_edge_far_below_the_fast_one_runs_in_two_rates(split):
    r = split.rates
    assert r is not None and r.factor >= 8
    assert r.reduced_rate == pytest.approx(SFREQ / r.factor)
    assert r.fast.taps.size * 16 <= split.taps.size  # the full-rate part is short
    # the request is met by the combined filter, aliasing included
    assert split.characteristics.max_deviation + r.aliasing <= split.tolerance


@pytest.mark.parametrize("curve, kwargs", [
    (gs.lowpass(30.0), {}),  # no slow edge
    (gs.bandpass(1.0, 30.0), {}),  # edges too close: a reduced rate would save little
    (CURVE, {"causal": True}),
    (CURVE, {"kernel": 50.0}),
    (CURVE, {"kernel": "exact"}),
], ids=["low-pass", "close edges", "causal", "fixed length", "exact"])
def test_one_rate_where_two_would_not_apply(curve, kwargs):
    assert gs.design(curve, SFREQ, **kwargs).rates is None


def test_a_split_that_would_miss_the_tolerance_is_not_used(monkeypatch):
    import gainshape.shaping.rates as rates

    monkeypatch.setattr(rates, "_SLOW_SHARE", 5.0)  # the slow part 5 x too coarse
    loose = rates.two_rates(CURVE, SFREQ, 0.001)
    assert loose is not None  # the split exists ...
    design = gs.design(CURVE, SFREQ, tolerance=0.0011)  # (a request not cached before)
    assert design.rates is None  # ... but the design runs one rate
    assert design.characteristics.max_deviation <= 0.0011


def test_equivalent_kernel_is_the_sum_of_its_parts_freqz(split):
    # reference: scipy.signal.freqz of each part; decimation and interpolation
    # filters are two M-point moving averages each (textbook response, from memory)
    r = split.rates
    f = np.concatenate([np.geomspace(0.001, 5.0, 200), np.linspace(5.0, 499.0, 300)])

    def zero_phase(kernel, offset, fs):
        w, h = scipy.signal.freqz(kernel, worN=f, fs=fs)
        return np.real(h * np.exp(1j * 2 * np.pi * f / fs * offset))

    m = r.factor
    x = np.pi * f / SFREQ
    moving_average = (np.sin(m * x) / (m * np.sin(x))) ** 2
    expected = (zero_phase(r.fast.taps, r.fast.offset, SFREQ)
                - zero_phase(r.slow.taps, r.slow.offset, r.reduced_rate)
                * moving_average**2)
    np.testing.assert_allclose(split.realized_gain(f), np.abs(expected), atol=1e-9)


@pytest.mark.filterwarnings("ignore:.*shorter than 3 times:UserWarning")
@pytest.mark.parametrize("curve", [CURVE, STEEP], ids=["12 dB/octave", "24 dB/octave"])
def test_output_equals_the_request_applied_exactly_on_eeg_with_drift(curve, rng):
    # reference: NumPy FFT of the reflect-padded record times the request
    design = gs.design(curve, SFREQ)
    assert design.rates is not None
    x = _eeg_with_drift(3, 300.0, rng)
    y = filter_array(x, design)
    ref = _exact_request(x, curve, 250_000)
    assert np.sqrt(np.mean((y - ref) ** 2) / np.mean(ref**2)) < 2e-3
    # and the same kernel run at one rate: they differ by the aliasing only
    one = filter_array(x, KernelPart(design.taps, design.offset, SFREQ))
    assert np.sqrt(np.mean((y - one) ** 2) / np.mean(one**2)) < 2e-3


def test_sinusoids_come_out_scaled_by_the_realized_gain(split):
    # 20 frequencies from 0.02 Hz to 0.45 x the rate, amplitude 1 (least squares)
    freqs = np.geomspace(0.02, 0.45 * SFREQ, 20)
    t = np.arange(int(400 * SFREQ)) / SFREQ
    phases = np.linspace(0.0, 2 * np.pi, freqs.size, endpoint=False)
    x = np.sin(2 * np.pi * freqs[:, None] * t + phases[:, None])
    y = filter_array(x, split)
    keep = slice(int(60 * SFREQ), int(340 * SFREQ))  # away from the padded ends
    measured = np.array([_amplitude(row, f, keep) for row, f in zip(y, freqs)])
    expected = split.realized_gain(freqs)
    np.testing.assert_allclose(measured, expected, rtol=0.005, atol=1e-6)
    # and the realized gain meets the request
    assert np.max(np.abs(expected - CURVE(freqs))) <= split.tolerance


def test_reported_gain_matches_white_noise_welch_within_0_2_db(split, rng):
    # reference: scipy.signal.welch; the expected ratio is the reported gain
    # squared smoothed by the Hann window's spectral window (Welch's bias).
    # Bins where the gain changes by more than 0.5 dB within one bin are not
    # resolved by the estimate and left out (the sinusoid test covers them).
    nperseg = 2**16
    x = rng.standard_normal((12, int(400 * SFREQ)))
    y = filter_array(x, split)
    f, pxx = scipy.signal.welch(x, SFREQ, nperseg=nperseg, detrend=False)
    _, pyy = scipy.signal.welch(y, SFREQ, nperseg=nperseg, detrend=False)
    measured = np.sqrt(pyy.mean(axis=0) / pxx.mean(axis=0))
    fine = 8
    grid = np.fft.fftfreq(fine * nperseg, 1.0 / SFREQ)
    power = split.realized_gain(np.abs(grid)) ** 2
    lobe = np.abs(np.fft.fft(scipy.signal.get_window("hann", nperseg), fine * nperseg)) ** 2
    smoothed = np.real(np.fft.ifft(np.fft.fft(power) * np.fft.fft(lobe))) / lobe.sum()
    expected = np.sqrt(np.maximum(smoothed[: f.size * fine : fine], 0.0))
    gain_db = 20 * np.log10(np.maximum(split.realized_gain(f), 1e-12))
    resolved = np.abs(np.gradient(gain_db)) < 0.5
    above = (20 * np.log10(np.maximum(expected, 1e-12)) > -40) & resolved
    assert above.sum() > 2000 and f[above].min() < 0.15
    difference_db = 20 * np.log10(measured[above] / expected[above])
    assert np.max(np.abs(difference_db)) < 0.2


def test_a_tone_near_the_reduced_rate_leaks_as_predicted_and_within_the_bound(split):
    # a tone at reduced rate + g folds onto g; predicted amplitude:
    # |slow part's gain at g| x interpolation(g) x decimation(f_in)
    r = split.rates
    g = 0.04
    f_in = r.reduced_rate + g
    t = np.arange(int(600 * SFREQ)) / SFREQ
    y = filter_array(np.sin(2 * np.pi * f_in * t)[None, :], split)[0]
    keep = slice(int(100 * SFREQ), int(500 * SFREQ))
    leaked = _amplitude(y, g, keep, also=[f_in])
    m = r.factor

    def moving_average(f):
        return (np.sin(np.pi * f * m / SFREQ) / (m * np.sin(np.pi * f / SFREQ))) ** 2

    w, h = scipy.signal.freqz(r.slow.taps, worN=[g], fs=r.reduced_rate)
    predicted = abs(h[0]) * moving_average(g) * moving_average(f_in)
    assert leaked == pytest.approx(predicted, rel=0.05)
    assert leaked <= r.aliasing


def test_aliasing_bound_is_the_folded_gain_summed_over_every_fold(split):
    # brute force: for each output frequency g, the M - 1 other frequencies
    # g + k * reduced rate that fold onto it, each through the decimation
    # filter (moving average squared), then the slow part (freqz) and the
    # interpolation filter; the bound is their largest sum
    r = split.rates
    m, low = r.factor, r.reduced_rate
    g = np.linspace(0.0, low / 2.0, 2049)

    def moving_average(f):
        x = np.pi * np.asarray(f) / SFREQ
        with np.errstate(invalid="ignore", divide="ignore"):
            ratio = np.sin(m * x) / (m * np.sin(x))
        return np.where(np.abs(np.sin(x)) < 1e-12, 1.0, ratio) ** 2

    folded = sum(moving_average(g + k * low) for k in range(1, m))
    _, slow = scipy.signal.freqz(r.slow.taps, worN=g, fs=low)
    brute = np.max(np.abs(slow) * moving_average(g) * folded)
    assert r.aliasing == pytest.approx(brute, rel=1e-6)
    assert f"aliasing at most {brute:.2g}" in dict(split.summary())["rates"]


@pytest.mark.filterwarnings("ignore:.*shorter than 3 times:UserWarning")
def test_float32_in_place_epochs_and_nan_runs_agree_with_float64(split, rng):
    x = _eeg_with_drift(2, 120.0, rng)
    y = filter_array(x, split)
    y32 = filter_array(x.astype(np.float32), split)
    assert np.sqrt(np.mean((y32 - y) ** 2) / np.mean(y**2)) < 1e-5
    inplace = x.copy()
    filter_array(inplace, split, out=inplace)
    np.testing.assert_allclose(inplace, y, atol=1e-9)
    # epochs: 3-D, each 2 s epoch padded on its own (far shorter than the kernel)
    epochs = x[:, :20_000].reshape(2, 1, 10, 2000).transpose(0, 2, 1, 3).reshape(20, 1, 2000)
    with pytest.warns(gs.GainshapeWarning, match="shorter than"):
        got = filter_array(epochs, split)
    with pytest.warns(gs.GainshapeWarning, match="shorter than"):
        one = filter_array(epochs, KernelPart(split.taps, split.offset, SFREQ))
    assert np.sqrt(np.mean((got - one) ** 2) / np.mean(one**2)) < 2e-3
    # padding that repeats the end value, wider than the epoch: two rates
    # against numpy.pad and one FFT with the equivalent kernel
    with pytest.warns(gs.GainshapeWarning, match="shorter than"):
        edge = filter_array(epochs[:4, 0], split, pad="edge")
    p = split.support
    padded = np.pad(epochs[:4, 0], ((0, 0), (p, p)), mode="edge")
    n = padded.shape[-1]
    reference = np.fft.irfft(np.fft.rfft(padded) * split.spectrum(n), n)[:, p : p + 2000]
    assert np.sqrt(np.mean((edge - reference) ** 2) / np.mean(reference**2)) < 2e-3
    # a NaN run splits the record; both sides filtered on their own
    gap = x.copy()
    gap[:, 50_000:51_000] = np.nan
    out = filter_array(gap, split, nan="split")
    assert np.isnan(out[:, 50_000:51_000]).all() and np.isfinite(out[:, :50_000]).all()
    left = filter_array(x[:, :50_000], split)
    np.testing.assert_allclose(out[:, :50_000], left, atol=1e-12)


def test_the_step_record_and_methods_say_the_filter_ran_in_two_rates(split):
    import mne

    raw = mne.io.RawArray(np.zeros((1, int(200 * SFREQ))), mne.create_info(["Cz"], SFREQ, "eeg"),
                          verbose=False)
    out = gs.apply(raw, split)
    record = gs.history(out)[0]["design"]["two_rates"]
    assert record["factor"] == split.rates.factor
    assert record["reduced_rate_hz"] == pytest.approx(SFREQ / split.rates.factor)
    assert f"it ran at a reduced rate of {SFREQ / split.rates.factor:.4g} Hz" in gs.methods_text(out)
    text = gs.methods_text(out, detail="full")
    assert f"reduced rate of {SFREQ / split.rates.factor:.4g} Hz" in text
    assert f"decimation by {split.rates.factor} " in text
    assert f"below {split.rates.split:.3g} Hz" in text
    entry, = gs.bids_filters(out).values()
    assert entry["slow part's reduced sampling frequency (Hz)"] == pytest.approx(
        SFREQ / split.rates.factor, rel=1e-5)
    assert entry["aliasing bound (gain)"] == pytest.approx(split.rates.aliasing, rel=0.05)
    rows = dict(split.summary())
    assert rows["rates"].startswith(f"two: below {split.rates.split:.3g} Hz at "
                                    f"{SFREQ / split.rates.factor:.4g} Hz")
    assert two_rates(gs.lowpass(30.0), SFREQ, 0.001) is None

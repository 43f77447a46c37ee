"""Lines found in simulated recordings, against what was put in them.

References:
- scipy.signal.welch: the background's density (the same recording without
  its lines) and the band powers before and after the proposed comb.
- A steady sinusoid of amplitude A in a Welch density with a window of
  equivalent noise bandwidth ENBW (Hz) peaks A**2 / 2 / ENBW above the
  background (Harris 1978, "On the use of windows for harmonic analysis with
  the discrete Fourier transform", Proc. IEEE 66(1), ENBW of the Hann window
  1.5 bins; computed here from the window itself: fs * sum(w**2) / sum(w)**2).
- Filtering is linear: what the comb does to a line is what it does to the
  line alone.
The recordings are made here (1/f background, an alpha rhythm, lines of
known frequency and size); the heights asked for are >= 6 dB.
"""

import numpy as np
import pytest
from scipy.signal import get_window, welch

import gainshape as gs

RESOLUTION = 0.1  # Hz: the default spectrum's spacing (10 s Hann windows)
CHANNELS, SECONDS = 8, 120.0


def background(sfreq, seconds, seed, channels=CHANNELS):
    """1/f noise plus an alpha rhythm (a bump near 10 Hz about 2 Hz wide), volts."""
    rng = np.random.default_rng(seed)
    n = int(seconds * sfreq)
    f = np.fft.rfftfreq(n, 1 / sfreq)
    shape = 1 / np.sqrt(np.maximum(f, 0.5))  # power ~ 1/f
    shape += 3.0 * np.exp(-0.5 * ((f - 10.0) / 0.8) ** 2) / np.sqrt(10.0)  # alpha bump
    spectra = (rng.standard_normal((channels, f.size)) + 1j * rng.standard_normal((channels, f.size)))
    return 1e-6 * np.fft.irfft(spectra * shape, n)


def reference_density(noise, sfreq, freq):
    """Background density near ``freq``: scipy's Welch (the finder's window
    and spacing) of the line-free recording, averaged over +-1 Hz, median
    over channels."""
    f, p = welch(noise, fs=sfreq, window="hann", nperseg=int(sfreq / RESOLUTION))
    near = np.abs(f - freq) <= 1.0
    return float(np.median(p[:, near].mean(axis=1)))


def enbw_hz(sfreq):
    w = get_window("hann", int(sfreq / RESOLUTION))
    return sfreq * np.sum(w**2) / np.sum(w) ** 2


def tone(freq, amplitude, sfreq, seconds, seed, drift=0.0):
    """The same line in every channel (random phases); ``drift`` (Hz) swings
    its frequency once, sinusoidally, over the recording."""
    t = np.arange(int(seconds * sfreq)) / sfreq
    phase = 2 * np.pi * freq * t - drift * seconds * np.cos(2 * np.pi * t / seconds)
    offsets = np.random.default_rng(seed + 1000).uniform(0, 2 * np.pi, (CHANNELS, 1))
    return amplitude * np.sin(phase + offsets)


def amplitude_for(height_db, density, sfreq):
    """The sinusoid amplitude that peaks ``height_db`` above ``density``."""
    return np.sqrt(2 * (10 ** (height_db / 10) - 1) * density * enbw_hz(sfreq))


LINES = {  # Hz -> dB above the background; 31.73 and 63.46 are off the 0.1 Hz grid
    250.0: {31.73: 7.0, 50.0: 20.0, 63.46: 9.0, 100.0: 12.0},
    500.0: {31.73: 7.0, 50.0: 20.0, 63.46: 9.0, 150.0: 10.0, 223.4: 8.0},
    1000.0: {31.73: 7.0, 50.0: 20.0, 63.46: 9.0, 150.0: 10.0, 250.0: 6.0, 437.15: 12.0},
}


def recording(sfreq, seed=0):
    noise = background(sfreq, SECONDS, seed)
    lines = {f: tone(f, amplitude_for(h, reference_density(noise, sfreq, f), sfreq), sfreq,
                     SECONDS, seed + int(f)) for f, h in LINES[sfreq].items()}
    return noise, lines


@pytest.mark.parametrize("sfreq", sorted(LINES))
def test_every_line_is_found_at_its_frequency_and_height(sfreq):
    noise, lines = recording(sfreq)
    found = gs.find_lines(noise + sum(lines.values()), sfreq=sfreq)
    expected = LINES[sfreq]
    assert found.sizes["line"] == len(expected), found.line_frequency.values
    for (freq, height), f, h in zip(sorted(expected.items()), found.line_frequency.values,
                                    found.height_db.values):
        assert abs(f - freq) <= 0.05, (freq, f)
        assert abs(h - height) <= 1.0, (freq, h, height)
    harmonic_of = dict(zip(found.line_frequency.values.round(1), found.harmonic_of.values))
    assert harmonic_of[63.5] == pytest.approx(31.73, abs=0.05)  # 2 x 31.73
    assert harmonic_of[100.0 if sfreq == 250 else 150.0] == pytest.approx(50.0, abs=0.05)
    assert np.isnan(harmonic_of[50.0]) and np.isnan(harmonic_of[31.7])
    assert (found.n_channels == CHANNELS).all()


def test_no_line_is_found_where_there_is_none():
    # 20 line-free recordings with an alpha rhythm: at most one chance line in all
    false = [float(f) for seed in range(20)
             for f in gs.find_lines(background(250.0, 60.0, seed), sfreq=250.0).line_frequency.values]
    assert len(false) <= 1, false


def test_a_drifting_line_is_found_once_and_as_wide_as_its_drift():
    sfreq, drift = 500.0, 0.2
    noise = background(sfreq, SECONDS, 5)
    amplitude = amplitude_for(15.0, reference_density(noise, sfreq, 40.0), sfreq)
    found = gs.find_lines(noise + tone(40.0, amplitude, sfreq, SECONDS, 5, drift=drift),
                          sfreq=sfreq)
    assert found.sizes["line"] == 1
    centre, width = float(found.line_frequency[0]), float(found.width[0])
    assert abs(centre - 40.0) <= 0.05
    assert centre - width / 2 <= 40.0 - drift and centre + width / 2 >= 40.0 + drift


def _band_power(x, sfreq, low, high):
    f, p = welch(x, fs=sfreq, nperseg=int(10 * sfreq))
    return p[..., (f >= low) & (f < high)].sum(axis=-1)


@pytest.mark.parametrize("drift", [0.0, 0.2])
def test_the_proposed_comb_removes_each_line_and_leaves_other_bands(drift):
    sfreq = 500.0
    noise, lines = recording(sfreq, seed=3)
    if drift:
        lines[50.0] = tone(50.0, np.abs(lines[50.0]).max(), sfreq, SECONDS, 3, drift=drift)
    data = noise + sum(lines.values())
    # 31.73 Hz lies in the EEG bands, where lines are notched only when asked for
    comb = gs.suggest_notches(gs.find_lines(data, sfreq=sfreq), include=[31.73])
    for freq, line in lines.items():  # the comb on each line alone (linearity)
        before = _band_power(line, sfreq, freq - 1.0, freq + 1.0)
        after = _band_power(gs.apply(line, comb, sfreq=sfreq), sfreq, freq - 1.0, freq + 1.0)
        assert (10 * np.log10(before / after) >= 20.0).all(), (freq, before / after)
    filtered = gs.apply(data, comb, sfreq=sfreq)
    for low, high in [(1, 4), (4, 8), (8, 13), (13, 30), (33, 48), (52, 62), (66, 145),
                      (155, 220)]:
        change = 10 * np.log10(_band_power(filtered, sfreq, low, high)
                               / _band_power(data, sfreq, low, high))
        assert np.abs(change).max() < 0.5, (low, high, change)


def test_too_short_a_record_or_a_range_beyond_nyquist_is_refused():
    x = background(250.0, 5.0, 0)
    with pytest.raises(ValueError, match="needs records of at least 10 s, but the record is 5 s"):
        gs.find_lines(x, sfreq=250.0, resolution=0.1)
    with pytest.raises(ValueError, match="reaches 200 Hz, beyond the Nyquist frequency"):
        gs.find_lines(x, sfreq=250.0, freq_range=(1.0, 200.0))
    with pytest.raises(ValueError, match="'presence' parameter takes a fraction"):
        gs.find_lines(x, sfreq=250.0, presence=2.0)


def test_the_background_is_the_mean_density_not_the_median():
    # White noise of variance 1 sampled at fs has the one-sided density 2 / fs, the expected
    # value of its Welch estimate (Bendat & Piersol, Random Data, from memory). A running
    # median of a 30 s record's spectrum (5 segments) sits about 0.3 dB below it.
    sfreq = 250.0
    x = np.random.default_rng(7).standard_normal((8, int(30 * sfreq)))
    with pytest.warns(gs.GainshapeWarning, match="averages only 5 segments"):
        found = gs.find_lines(x, sfreq=sfreq, resolution=0.1)
    middle = (found.frequency >= 10) & (found.frequency <= 100)
    level_db = 10 * np.log10(float(found.background.where(middle).mean()) / (2 / sfreq))
    assert abs(level_db) < 0.1, level_db

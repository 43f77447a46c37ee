"""Every stated stop band holds over the range it names.

Reference: scipy.signal.freqz of each design's kernel on a dense FFT grid
(2**19 points from 0 Hz to Nyquist), plus freqz at the stated range's two
ends. Within [attenuated_low, attenuated_high] the realized gain must never
be above minus the stated attenuation (0.1 dB slack, the issue's bound).
Two-rate designs are checked with their equivalent kernel (``kernel``).
Designs: the constructors, their products, and drawn curves (seeded),
zero phase and causal, at 128-1000 Hz.
"""

import re

import numpy as np
import pytest
from scipy.signal import freqz

import gainshape as gs
from gainshape.shaping.words import stop_band_words


def _designs():
    """100 requests: (curve, sfreq, causal), deterministic."""
    rng = np.random.default_rng(2015)
    out = []
    for sfreq in (250.0, 500.0, 1000.0):
        for causal in (False, True):
            out += [
                (gs.lowpass(0.1 * sfreq, rolloff=12.0), sfreq, causal),
                (gs.lowpass(40.0, rolloff=24.0), sfreq, causal),
                (gs.highpass(0.5, rolloff=12.0), sfreq, causal),
                (gs.highpass(1.0, rolloff=36.0), sfreq, causal),
                (gs.bandpass(0.5, 30.0, rolloff=12.0), sfreq, causal),
                (gs.bandpass(1.0, 40.0) * gs.notch(50.0, harmonics=2), sfreq, causal),
                (gs.bandstop(45.0, 55.0, rolloff=24.0), sfreq, causal),
                (gs.notch(50.0, width=2.0, harmonics=2), sfreq, causal),
                (gs.notch(60.0, width=1.0), sfreq, causal),
                (gs.lowpass(30.0) * gs.bandstop(8.0, 12.0, rolloff=48.0), sfreq, causal),
            ]
    out += [(gs.bandpass(0.1, 40.0, rolloff=12.0) * gs.notch(50.0, harmonics=3), 500.0, False),
            (gs.highpass(0.05) * gs.lowpass(30.0, rolloff=24.0), 500.0, False),  # two rates
            (gs.highpass(0.1), 500.0, False), (gs.highpass(0.1), 250.0, True)]
    while len(out) < 100:  # drawn curves: 4-7 points on a log axis, gains 0..1
        sfreq = float(rng.choice([128.0, 250.0, 500.0]))
        n = int(rng.integers(4, 8))
        freqs = np.sort(np.exp(rng.uniform(np.log(0.5), np.log(0.45 * sfreq), n)))
        if np.min(np.diff(np.log(freqs))) < 0.3:
            continue
        gains = rng.choice([0.0, 0.01, 0.1, 1.0, 1.0], size=n)
        if gains.max() < 1.0:
            continue
        curve = gs.GainCurve.from_points(freqs, gains, freq_scale="log")
        out.append((curve, sfreq, bool(rng.integers(0, 2))))
    return out[:100]


DESIGNS = _designs()


def _check_bands(f) -> int:
    freqs, h = freqz(f.taps, worN=2**19, fs=f.sfreq)  # scipy.signal.freqz of the kernel
    gain_db = 20 * np.log10(np.maximum(np.abs(h), 1e-300))
    checked = 0
    for band in f.characteristics.stop_bands:
        lo, hi = band.attenuated_low, band.attenuated_high
        assert band.low <= lo <= hi <= band.high, band
        inside = (freqs >= lo) & (freqs <= hi)
        _, ends = freqz(f.taps, worN=np.array([lo, hi]), fs=f.sfreq)
        worst = max(gain_db[inside].max(initial=-np.inf),
                    20 * np.log10(np.abs(ends).max()))
        assert worst <= -band.attenuation_db + 0.1, (band, worst)
        _check_words(band)
        checked += 1
    return checked


def _check_words(band):
    """The printed range lies inside the measured one, the printed figure at most the measured."""
    words = stop_band_words(band.to_dict())
    db = float(re.search(r"at least ([0-9.]+) dB down", words).group(1))
    assert band.attenuation_db - 0.1 <= db <= band.attenuation_db, words
    if (m := re.search(r"below ([0-9.]+) Hz", words)):
        lo, hi = 0.0, float(m.group(1))
    elif (m := re.search(r"above ([0-9.]+) Hz", words)):
        lo, hi = float(m.group(1)), band.high
    else:
        lo, hi = map(float, re.search(r"over ([0-9.]+)-([0-9.]+) Hz", words).groups())
    assert band.attenuated_low <= lo <= hi <= band.attenuated_high, words


@pytest.mark.parametrize("index", range(0, 100, 10), ids=lambda i: f"designs {i}-{i + 9}")
def test_every_stated_stop_band_holds_over_its_range(index):
    bands = 0
    for curve, sfreq, causal in DESIGNS[index:index + 10]:
        try:
            f = gs.design(curve, sfreq, causal=causal)
        except ValueError:  # a drawn cliff no kernel can follow: refused, nothing stated
            continue
        bands += _check_bands(f)
    assert bands > 0


def test_the_issue_filter_is_stated_where_it_holds():
    # the filter of the report: 40-250 Hz was claimed 35.5 dB down while
    # freqz gives -7.7 dB at 45 Hz; the range must now start where it holds
    f = gs.design(gs.bandpass(0.1, 40.0, rolloff=12.0) * gs.notch(50.0, harmonics=3), 500.0)
    skirt = [b for b in f.characteristics.stop_bands if b.kind == "above the low-pass edge"][0]
    _, at_start = freqz(f.taps, worN=np.array([skirt.attenuated_low, 45.0]), fs=500.0)
    assert 20 * np.log10(abs(at_start[0])) == pytest.approx(-skirt.attenuation_db, abs=0.05)
    assert skirt.attenuated_low > 45.0 and skirt.attenuated_high == 250.0
    below = [b for b in f.characteristics.stop_bands if b.kind == "below the high-pass edge"][0]
    assert below.attenuated_low == 0.0 and below.attenuated_high < 0.05
    assert _check_bands(f) == len(f.characteristics.stop_bands)


def test_exact_designs_state_the_request_where_it_holds():
    # with kernel="exact" the request is what runs: its own gain is the reference
    f = gs.design(gs.bandpass(0.5, 30.0), 250.0, kernel="exact")
    for band in f.characteristics.stop_bands:
        grid = np.linspace(band.attenuated_low, band.attenuated_high, 20001)
        assert 20 * np.log10(f.requested_gain(grid).max() + 1e-300) <= -band.attenuation_db + 0.01

"""The realized gain at arbitrary frequencies equals the kernel's DTFT.

Reference: the DTFT computed directly, H(f) = sum_n h[n] exp(-2j pi f (n - n0) / fs),
with NumPy (definition; Oppenheim & Schafer, Discrete-Time Signal Processing,
3rd ed., eq. 2.131), and scipy.signal.freqz of the kernel on its own grid.
"""

import numpy as np
import pytest
from scipy.signal import freqz

import gainshape as gs

CASES = [
    (gs.bandpass(0.1, 40.0) * gs.notch(50.0, harmonics=3), 500.0, False),
    (gs.lowpass(30.0, rolloff=24.0), 500.0, True),
    (gs.highpass(0.5, rolloff=24.0), 250.0, False),
]


@pytest.mark.parametrize(("curve", "sfreq", "causal"), CASES, ids=["bandpass-notch", "lp-causal", "hp"])
def test_realized_gain_equals_direct_dtft(curve, sfreq, causal):
    f = gs.design(curve, sfreq, causal=causal)
    freqs = np.concatenate([np.random.default_rng(0).uniform(0, sfreq / 2, 200),
                            [0.0, sfreq / 2, 50.0]])
    n = np.arange(f.taps.size) - f.offset
    direct = np.abs(np.exp(-2j * np.pi * np.outer(freqs, n) / sfreq) @ f.taps)
    np.testing.assert_allclose(f.realized_gain(freqs), direct, rtol=0, atol=1e-9)


def test_realized_gain_matches_freqz():
    f = gs.design(gs.lowpass(30.0), 250.0)
    w, h = freqz(f.taps, worN=512, fs=250.0)
    np.testing.assert_allclose(f.realized_gain(w), np.abs(h), rtol=0, atol=1e-9)

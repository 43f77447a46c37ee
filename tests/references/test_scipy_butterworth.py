"""Frequency-domain application of |H|^2 of a SciPy Butterworth equals sosfiltfilt.

Reference: scipy.signal.butter + scipy.signal.sosfiltfilt (forward-backward
filtering applies |H(f)|^2 with zero phase), and scipy.signal.sosfreqz for |H|.
Edges are excluded because the two pad differently there.
"""

import numpy as np
import pytest
import scipy.signal as ss

import gainshape as gs

SFREQ = 500.0
CASES = [(2, "lowpass", 30.0), (4, "lowpass", 40.0), (6, "lowpass", 20.0),
         (2, "highpass", 1.0), (4, "highpass", 0.5)]


def squared_butterworth(order, btype, cutoff, sfreq=SFREQ):
    sos = ss.butter(order, cutoff, btype=btype, fs=sfreq, output="sos")

    def gain(f):
        _, h = ss.sosfreqz(sos, worN=np.atleast_1d(f).ravel(), fs=sfreq)
        return (np.abs(h) ** 2).reshape(np.shape(f))

    return sos, gs.GainCurve(gain)


def relative_rms(a, b):
    return np.sqrt(np.mean((a - b) ** 2) / np.mean(b**2))


@pytest.mark.parametrize(("order", "btype", "cutoff"), CASES, ids=[f"{b}{o}-{c:g}Hz" for o, b, c in CASES])
def test_exact_kernel_matches_sosfiltfilt(order, btype, cutoff):
    x = np.random.default_rng(order).standard_normal((2, int(120 * SFREQ)))
    sos, curve = squared_butterworth(order, btype, cutoff)
    expected = ss.sosfiltfilt(sos, x)
    got = gs.apply(x, curve, sfreq=SFREQ, kernel="exact")
    middle = slice(int(30 * SFREQ), int(90 * SFREQ))
    assert relative_rms(got[:, middle], expected[:, middle]) < 1e-6


@pytest.mark.parametrize(("order", "btype", "cutoff"), CASES, ids=[f"{b}{o}-{c:g}Hz" for o, b, c in CASES])
def test_shortest_kernel_close_to_sosfiltfilt(order, btype, cutoff):
    x = np.random.default_rng(order).standard_normal((2, int(120 * SFREQ)))
    sos, curve = squared_butterworth(order, btype, cutoff)
    expected = ss.sosfiltfilt(sos, x)
    got = gs.apply(x, curve, sfreq=SFREQ)
    middle = slice(int(30 * SFREQ), int(90 * SFREQ))
    assert relative_rms(got[:, middle], expected[:, middle]) < 2e-2


@pytest.mark.parametrize("order", [2, 4, 6])
def test_characteristics_of_squared_butterworth(order):
    # Handbook fact: an order-n Butterworth falls 6.02*n dB/octave, so |H|^2
    # falls 12.04*n dB/octave; scipy's butter cutoff is |H| = 1/sqrt(2),
    # i.e. where |H|^2 = 0.5, the half-amplitude point of the squared filter.
    # At 5 kHz the bilinear transform's frequency warping (which steepens a
    # digital Butterworth towards Nyquist) is negligible where the slope is
    # measured (down to -30 dB); the steepest slope there is 0.97 x asymptote.
    _, curve = squared_butterworth(order, "lowpass", 30.0, sfreq=5000.0)
    c = gs.design(curve, 5000.0).characteristics
    assert c.kind == "low-pass"
    assert float(c.half_amplitude[0]) == pytest.approx(30.0, rel=2e-3)
    assert c.rolloff[0] == pytest.approx(2 * 6.02 * order, rel=0.04)

"""Minimum-phase kernels are causal and keep the magnitude; zero phase does not shift.

References: a digital Butterworth filter is minimum phase (poles inside the
unit circle, zeros on it), so scipy.signal.sosfilt's impulse response is the
minimum-phase filter with magnitude |H| (Oppenheim & Schafer, Discrete-Time
Signal Processing, sec. 5.6); scipy.signal.butter / sosfreqz give |H|.
"""

import numpy as np
import pytest
import scipy.signal as ss

import gainshape as gs

SFREQ = 1000.0


@pytest.mark.parametrize("curve", [gs.lowpass(30.0), gs.highpass(1.0), gs.bandpass(0.5, 40.0)],
                         ids=["lowpass", "highpass", "bandpass"])
def test_impulse_response_is_causal(curve):
    x = np.zeros((1, 40000))
    x[0, 20000] = 1.0
    y = gs.apply(x, curve, sfreq=SFREQ, causal=True)[0]
    assert np.sum(y[:20000] ** 2) < 1e-6 * np.sum(y**2)


@pytest.mark.parametrize("curve", [gs.lowpass(30.0, rolloff=24.0), gs.highpass(0.5)],
                         ids=["lowpass", "highpass"])
def test_magnitude_within_tolerance(curve):
    f = gs.design(curve, SFREQ, causal=True)
    freqs = np.geomspace(0.05, 499.0, 600)
    assert np.max(np.abs(f.realized_gain(freqs) - curve(freqs))) <= f.tolerance * 1.01
    assert f.characteristics.group_delay > 0


def test_matches_butterworth_impulse_response():
    sos = ss.butter(4, 40.0, fs=SFREQ, output="sos")

    def gain(f):
        _, h = ss.sosfreqz(sos, worN=np.atleast_1d(f).ravel(), fs=SFREQ)
        return np.abs(h).reshape(np.shape(f))

    f = gs.design(gs.GainCurve(gain), SFREQ, causal=True, tolerance=1e-4)
    impulse = np.zeros(f.taps.size)
    impulse[0] = 1.0
    expected = ss.sosfilt(sos, impulse)
    err = np.sqrt(np.sum((f.taps - expected) ** 2) / np.sum(expected**2))
    # kernel truncation and the log-gain floor at the zero at Nyquist leave ~1e-3
    assert err < 2e-3


def test_zero_phase_keeps_peak_of_symmetric_pulse():
    t = np.arange(20000) / SFREQ
    pulse = np.exp(-0.5 * ((t - 10.0) / 0.02) ** 2)
    y = gs.apply(pulse[None, :], gs.bandpass(0.5, 30.0), sfreq=SFREQ)[0]
    assert int(np.argmax(y)) == int(np.argmax(pulse))


def test_zero_phase_kernel_is_symmetric():
    k = gs.design(gs.bandpass(1.0, 30.0), SFREQ).taps
    np.testing.assert_array_equal(k, k[::-1])

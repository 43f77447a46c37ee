"""A sinusoid of amplitude A at f comes out with amplitude g(f) * A.

Reference: the defining property of a linear time-invariant filter's
frequency response (any signal-processing handbook, e.g. Oppenheim &
Schafer, Discrete-Time Signal Processing, ch. 2). Amplitude is measured by
least-squares fit of sin and cos at f (numpy.linalg.lstsq) away from the edges.
"""

import numpy as np
import pytest

import gainshape as gs

SFREQ = 250.0
CURVE = gs.bandpass(1.0, 40.0, rolloff=24.0) * gs.notch(50.0, width=3.0)
FREQS = [0.3, 1.0, 3.0, 10.0, 40.0, 49.0, 60.0, 90.0]


def fitted_amplitude(y, t, f):
    basis = np.column_stack([np.sin(2 * np.pi * f * t), np.cos(2 * np.pi * f * t)])
    coef, *_ = np.linalg.lstsq(basis, y, rcond=None)
    return float(np.hypot(*coef))


@pytest.mark.parametrize("kernel", ["shortest", "exact"])
@pytest.mark.parametrize("freq", FREQS)
def test_sinusoid_amplitude_scaled_by_gain(freq, kernel):
    amplitude = 7.5
    t = np.arange(int(200 * SFREQ)) / SFREQ
    x = amplitude * np.sin(2 * np.pi * freq * t + 0.3)
    y = gs.apply(x[None, :], CURVE, sfreq=SFREQ, kernel=kernel)[0]
    middle = slice(int(50 * SFREQ), int(150 * SFREQ))
    measured = fitted_amplitude(y[middle], t[middle], freq)
    expected = CURVE(freq) * amplitude
    assert abs(measured - expected) <= 0.005 * amplitude

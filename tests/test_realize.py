"""realize: the kernel's response between grid points, the minimum-phase
rebuild's bins, and the length search's steps."""

import numpy as np
import pytest
from scipy.signal import freqz

from gainshape import highpass, lowpass
from gainshape.shaping.realize import (KernelResponse, _log_interpolated, _near_deep_minima,
                               Realizer)


@pytest.mark.parametrize("causal", [False, True])
@pytest.mark.parametrize("size", [7, 64, 1001])
def test_gain_between_grid_points_equals_freqz(causal, size):
    # reference: scipy.signal.freqz of the kernel at arbitrary frequencies
    rng = np.random.default_rng(size)
    kernel = rng.standard_normal(size)
    offset = 0 if causal else size // 2
    if not causal:
        kernel = 0.5 * (kernel + kernel[::-1])  # zero-phase kernels are symmetric
    freqs = rng.uniform(0.0, 125.0, 300)
    _, h = freqz(kernel, worN=freqs, fs=250.0)
    expected = np.abs(h) if causal else (h * np.exp(2j * np.pi * freqs * offset / 250.0)).real
    response = KernelResponse(kernel, offset, 250.0, causal)
    np.testing.assert_allclose(response.gain_at(freqs), expected, rtol=0, atol=1e-9 * np.abs(kernel).sum())


def test_group_delay_of_a_delayed_impulse_is_its_delay():
    # reference: definition; a unit impulse at sample 40 delays every frequency by 40 samples
    kernel = np.zeros(101)
    kernel[40] = 1.0
    delay = KernelResponse(kernel, 0, 1000.0, causal=True).group_delay()
    np.testing.assert_allclose(delay, 0.040, atol=1e-12)


def test_log_interpolation_inverts_a_power_law():
    # reference: arithmetic; error = c * n**-2 meets 1e-4 where n = 100 * sqrt(100)
    n = _log_interpolated(100, 1.0e-2, 1000, 1.0e-4, 1.0e-4)
    assert n == 1000
    assert _log_interpolated(100, 1.0e-2, 1000, 1.0e-4, 1.0e-3) == round(100 * 10**0.5)


def test_deep_minima_bins_cover_a_zero_and_its_neighbours():
    gain = np.abs(np.linspace(-1.0, 1.0, 21))  # a zero at bin 10
    assert list(_near_deep_minima(gain, 0.5, reach=2)) == [8, 9, 10, 11, 12]
    assert _near_deep_minima(np.ones(5), 0.5).size == 0


@pytest.mark.parametrize("curve", [lowpass(30.0), highpass(0.5, rolloff=24.0)])
def test_shortest_meets_the_target_and_a_percent_less_may_not(curve):
    # common practice (no source): a length search to 1 %; the search figure is
    # the largest error on the thinned grid, aimed at 0.95 x tolerance
    realizer = Realizer(curve, 250.0, False, 0.001)
    kernel, offset = realizer.shortest()
    assert realizer.deviation(kernel, offset) <= 0.95 * 0.001
    shorter = realizer.of_length(int(kernel.size * 0.97))
    assert realizer.deviation(*shorter) > 0.95 * 0.001

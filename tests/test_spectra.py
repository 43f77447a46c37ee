"""Welch densities a few rows at a time, against scipy.signal.welch."""

import numpy as np
import pytest
from scipy.signal import welch

from gainshape import _spectra
from gainshape._spectra import welch_density


@pytest.mark.parametrize("shape, nperseg, window", [
    ((3, 5000), 1024, "hann"),  # even segments, several of them
    ((2, 4, 999), 333, "blackmanharris"),  # odd segments (no Nyquist bin), epochs x channels
    ((1, 800), 800, "hann"),  # one segment: the whole record
])
def test_equals_scipy_welch(shape, nperseg, window, rng, monkeypatch):
    monkeypatch.setattr(_spectra, "_GROUP_BYTES", 10_000)  # several row groups
    x = rng.standard_normal(shape) + 3.0  # an offset each segment's mean must remove
    freqs, psd = welch_density(x, 250.0, nperseg, window)
    # reference: scipy.signal.welch, constant detrend, density scaling, 50 % overlap
    ref_f, ref = welch(x, fs=250.0, window=window, nperseg=nperseg, noverlap=nperseg // 2,
                       detrend="constant", scaling="density", average="mean")
    np.testing.assert_array_equal(freqs, ref_f)
    np.testing.assert_allclose(psd, ref, rtol=1e-10, atol=1e-12 * ref.max())

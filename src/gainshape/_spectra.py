"""Welch power spectral densities, computed a few rows at a time.

The same estimate as ``scipy.signal.welch`` with ``detrend="constant"``,
``scaling="density"``, ``average="mean"`` and 50 % overlap, at a fraction of
its memory and time: each segment's mean is removed in the frequency domain
(``rfft((x - m) w) = rfft(x w) - m rfft(w)``) instead of by a copy, and rows
are transformed in groups whose segments take at most ``_GROUP_BYTES``.
"""

from __future__ import annotations

import numpy as np
from numpy.lib.stride_tricks import sliding_window_view
from scipy import fft
from scipy.signal import get_window

__all__ = ["welch_density"]

_GROUP_BYTES = 32 * 2**20


def welch_density(x, fs: float, nperseg: int, window: str = "hann"):
    """Frequencies and one-sided Welch PSD of ``x`` along its last axis.

    Examples
    --------
    >>> import numpy as np
    >>> from scipy.signal import welch
    >>> x = np.random.default_rng(0).standard_normal((2, 3, 1000))
    >>> f, p = welch_density(x, 100.0, 256)
    >>> ref = welch(x, fs=100.0, nperseg=256, noverlap=128, detrend="constant")[1]
    >>> p.shape, bool(np.allclose(p, ref, rtol=1e-12, atol=0))
    ((2, 3, 129), True)
    """
    x = np.asarray(x)
    rows = x.reshape(-1, x.shape[-1])
    step = nperseg - nperseg // 2
    taper = get_window(window, nperseg)
    taper_spectrum = fft.rfft(taper)
    n_segments = (rows.shape[-1] - nperseg) // step + 1
    per_row = max(1, n_segments * nperseg * 8)
    group = max(1, _GROUP_BYTES // per_row)
    psd = np.empty((rows.shape[0], nperseg // 2 + 1))
    for g in range(0, rows.shape[0], group):
        segments = sliding_window_view(rows[g : g + group], nperseg, axis=-1)[:, ::step]
        spectra = fft.rfft(segments * taper, axis=-1)
        spectra -= segments.mean(axis=-1)[..., None] * taper_spectrum
        psd[g : g + group] = np.mean(spectra.real**2 + spectra.imag**2, axis=1)
    psd /= fs * np.sum(taper**2)
    psd[:, 1 : None if nperseg % 2 else -1] *= 2.0  # one-sided: all but 0 Hz (and Nyquist)
    return fft.rfftfreq(nperseg, 1.0 / fs), psd.reshape(*x.shape[:-1], -1)

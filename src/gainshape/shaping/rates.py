"""Two rates for a curve with a slow edge far below its fast one.

Vocabulary: the *blend* is two octaves ``[low_end, split]`` of the pass
band, where the request is within 0.1 % of flat; a weight ``w(f)`` rises
smoothly across it from 0 to 1 (on log frequency). The request ``G`` is the
product of two curves, ``G**w`` (everything above the blend) and
``G**(1 - w)`` (everything below it), and the filter runs as two parts:

* the *fast part*, at the full rate, realizes ``G**w``: 1 below the blend,
  so a short kernel;
* the *slow part* subtracts ``Q = 1 - G**(1 - w)``, which is 0 above the
  *split*: the data are decimated by an integer *factor* M (a triangular
  anti-aliasing filter, two M-sample boxcars, as polyphase weights),
  filtered at the reduced rate by a kernel for ``Q`` divided by the
  decimation and interpolation filters' own droop, and interpolated back
  (linearly: the same triangle), in frames of M samples.

``G**w - Q`` differs from ``G`` by ``(G**w - 1) * Q``, products of two
deviations from flat inside the blend; like everything else it is in the
realized gain that the design measures. Together the parts are a
periodically time-varying system. Its time-invariant part is the
*equivalent kernel* ``h_fast - (u * q_upsampled * d) / M``, which is what
designs report and plot; the rest is *aliasing*, bounded by
:func:`alias_bound` and counted against the tolerance.
This module knows nothing of MNE.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from itertools import chain

import numpy as np
import scipy.fft as sfft

from .realize import KernelResponse, kernel_spectrum, Realizer, cached_spectrum

__all__ = ["KernelPart", "TwoRates", "two_rates", "alias_bound"]

_BLEND_FLAT = 1e-3  # the request is within this fraction of flat across the blend
_BLEND_OCTAVES = 2.0
_POINTS_PER_OCTAVE = 48  # the log grid the split is searched on
_RATES_PER_SPLIT = (8.0, 16.0, 32.0)  # reduced rates tried, as multiples of the split frequency
_MIN_FACTOR = 8  # a smaller rate reduction is not worth a second rate
_MIN_SAVED = 16  # ... nor is one that shortens the full-rate kernel less than this many times
_FAST_SHARE, _SLOW_SHARE = 0.5, 0.4  # of the tolerance; the rest is for aliasing
_CHUNK_SAMPLES = 2**13  # samples per row decimated at a time (bounded temporaries)


@dataclass(frozen=True, eq=False)
class KernelPart:
    """A zero-phase kernel at a rate: what the engine needs to run it.

    Examples
    --------
    >>> part = KernelPart(np.array([0.25, 0.5, 0.25]), 1, 100.0)
    >>> part.support, part.spectrum(4).round(3).tolist()
    (1, [1.0, 0.5, 0.0])
    """

    taps: np.ndarray
    offset: int
    sfreq: float
    _spectra: dict = field(default_factory=dict, repr=False)

    @property
    def support(self) -> int:
        """Samples the kernel reaches on either side of t = 0."""
        return int(max(self.offset, self.taps.size - 1 - self.offset))

    def spectrum(self, n_fft: int, dtype=np.float64) -> np.ndarray:
        """Response on the rfft grid of ``n_fft`` points (t = 0 first), cached."""
        return cached_spectrum(self._spectra, n_fft, dtype,
                               lambda n: kernel_spectrum(self.taps, self.offset, n, causal=False))


@dataclass(frozen=True, eq=False)
class TwoRates:
    """The two parts of a split filter and how the slow part changes rate.

    Attributes
    ----------
    factor : int
        Decimation factor M; the slow part runs at ``sfreq / factor``.
    split : float
        Frequency (Hz) below which the slow part acts (the blend's top).
    fast, slow : KernelPart
        The fast part (full rate) and the slow part (reduced rate).
    aliasing : float
        :func:`alias_bound` of the pair.
    """

    factor: int
    split: float
    fast: KernelPart
    slow: KernelPart
    aliasing: float = field(init=False)

    def __post_init__(self):
        object.__setattr__(self, "aliasing", alias_bound(self))

    @property
    def reduced_rate(self) -> float:
        """The slow part's sampling rate in Hz."""
        return self.fast.sfreq / self.factor

    def equivalent_kernel(self) -> tuple[np.ndarray, int]:
        """The time-invariant part as one full-rate kernel: (kernel, offset).

        Examples
        --------
        >>> from gainshape import highpass
        >>> parts = two_rates(highpass(0.05, rolloff=24.0), 1000.0, 0.001)
        >>> kernel, offset = parts.equivalent_kernel()
        >>> bool(abs(kernel.sum()) < 1e-3)  # a high-pass removes the mean
        True
        """
        m, q = self.factor, self.slow
        smoothing = np.convolve(_triangle(m), _triangle(m))  # d (sum 1), then u / m (u sums to m)
        taps = -(-smoothing.size // m)  # the smoothing in m phases of `taps` samples each
        phases = np.zeros(taps * m)
        phases[: smoothing.size] = smoothing
        weights = phases.reshape(taps, m)
        slow = np.zeros((q.taps.size + taps - 1, m))
        for lag in range(taps):  # the kernel at the reduced rate, every phase at once
            slow[lag : lag + q.taps.size] += np.outer(q.taps, weights[lag])
        slow = slow.ravel()[: m * (q.taps.size - 1) + smoothing.size]
        centre = m * q.offset + 2 * (m - 1)
        half = max(centre, slow.size - 1 - centre, self.fast.support)
        kernel = np.zeros(2 * half + 1)
        kernel[half - centre : half - centre + slow.size] -= slow
        f = self.fast
        kernel[half - f.offset : half - f.offset + f.taps.size] += f.taps
        return kernel, half

    def to_dict(self) -> dict:
        """The split as plain numbers, for step records.

        Examples
        --------
        >>> from gainshape import highpass
        >>> parts = two_rates(highpass(0.05, rolloff=12.0), 1000.0, 0.001)
        >>> parts.to_dict()["factor"] == parts.factor
        True
        """
        return {"split_hz": self.split, "reduced_rate_hz": self.reduced_rate,
                "factor": self.factor, "full_rate_kernel_samples": int(self.fast.taps.size),
                "reduced_rate_kernel_samples": int(self.slow.taps.size),
                "aliasing_bound": self.aliasing}

    def slow_output(self, left, seg, right) -> np.ndarray:
        """The slow part's output at the reduced rate for a padded segment.

        ``left`` and ``right`` are the padding (a whole number of frames
        each); ``seg`` is any 2-D array-like with ``shape`` and ``seg[:, lo:hi]``
        slices (a lazy view of a file too), read in chunks of whole frames.
        Sample j of the result sits at padded index ``j * factor``.
        """
        m, n = self.factor, seg.shape[1]
        n_body = n - n % m
        chunk = m * max(1, _CHUNK_SAMPLES // m)
        weights = _decimation_weights(m).astype(left.dtype, copy=False)
        rest = np.asarray(seg[:, n_body:n]) if n > n_body else right[:, :0]
        tail = np.concatenate([rest, right], axis=1)
        tail = np.pad(tail, ((0, 0), (0, -tail.shape[1] % m)))
        body = (np.asarray(seg[:, lo : min(lo + chunk, n_body)]) for lo in range(0, n_body, chunk))
        reduced = np.zeros((left.shape[0], (left.shape[1] + n_body + tail.shape[1]) // m),
                           dtype=weights.dtype)
        j = 0
        for x in chain([left], body, [tail]):
            both = x.reshape(x.shape[0], -1, m) @ weights  # (rows, frames, 2), a view of x
            j1 = j + both.shape[1]
            reduced[:, j:j1] += both[:, :, 0]  # frame j's own share ...
            end = min(j1 + 1, reduced.shape[1])
            reduced[:, j + 1 : end] += both[:, : end - j - 1, 1]  # ... and the next frame's
            j = j1
        return _convolved(reduced, self.slow)

    def interpolated(self, slow, first: int, n: int) -> np.ndarray:
        """The slow output interpolated to padded indices
        ``first ... first + n - 1`` of the full rate.

        Examples
        --------
        >>> from gainshape import highpass
        >>> parts = two_rates(highpass(0.05, rolloff=24.0), 1000.0, 0.001)
        >>> m = parts.factor
        >>> slow = np.array([[0.0, 1.0, 2.0, 3.0]])
        >>> bool(np.allclose(parts.interpolated(slow, m, m)[0], 1.0 + np.arange(m) / m))
        True
        """
        m = self.factor
        j0, j1 = first // m, (first + n - 1) // m + 1
        pairs = np.stack([slow[:, j0:j1], slow[:, j0 + 1 : j1 + 1]], axis=-1)
        up = pairs @ _interpolation_weights(m).astype(slow.dtype, copy=False)
        up = up.reshape(slow.shape[0], -1)
        return up[:, first - j0 * m : first - j0 * m + n]


def two_rates(curve, sfreq: float, tolerance: float) -> TwoRates | None:
    """The split of ``curve`` at ``sfreq`` into a fast and a slow part, or None
    when the curve has no slow edge far enough below its fast one.

    The parts are designed within shares of ``tolerance``; whether their sum
    meets it is for the caller to check (equivalent kernel and alias bound).

    Examples
    --------
    >>> from gainshape import highpass, lowpass
    >>> parts = two_rates(highpass(0.05) * lowpass(30.0, rolloff=24.0), 1000.0, 0.001)
    >>> parts.factor >= 8, parts.fast.taps.size < 1000
    (True, True)
    >>> two_rates(lowpass(30.0), 1000.0, 0.001) is None
    True
    """
    low_end = _blend_start(curve, sfreq)
    if low_end is None:
        return None
    split = low_end * 2.0**_BLEND_OCTAVES

    def fast_curve(f):
        return np.power(curve(f), _blend_weight(f, low_end))

    try:
        fast = KernelPart(*Realizer(fast_curve, sfreq, False, _FAST_SHARE * tolerance).shortest(),
                          sfreq)
        for per_split in _RATES_PER_SPLIT:  # a higher reduced rate folds less onto the slow band
            factor = int(sfreq // (per_split * split))
            if factor < _MIN_FACTOR:
                return None
            slow = _slow_part(curve, low_end, factor, sfreq, tolerance)
            parts = TwoRates(factor, split, fast, slow)
            if parts.aliasing <= (1.0 - _FAST_SHARE - _SLOW_SHARE) * tolerance:
                break
    except ValueError:  # a part no kernel realizes: the caller runs one rate
        return None
    if fast.taps.size * _MIN_SAVED > parts.slow.taps.size * factor:
        return None
    return parts


def _slow_part(curve, low_end, factor, sfreq, tolerance) -> KernelPart:
    """The slow part's kernel at ``sfreq / factor``: what it removes below the
    blend's top, over the rate change's own droop there."""

    def slow_curve(f):
        removed = np.maximum(1.0 - np.power(curve(f), 1.0 - _blend_weight(f, low_end)), 0.0)
        return removed / _triangle_gain(f, factor, sfreq) ** 2

    low = sfreq / factor
    return KernelPart(*Realizer(slow_curve, low, False, _SLOW_SHARE * tolerance).shortest(), low)


def _blend_weight(freqs, low_end: float) -> np.ndarray:
    """0 below ``low_end``, 1 from two octaves above, a quintic smoothstep
    (continuous to the second derivative) on log frequency between.

    >>> _blend_weight(np.array([0.5, 1.0, 2.0, 4.0, 8.0]), 1.0).tolist()
    [0.0, 0.0, 0.5, 1.0, 1.0]
    """
    with np.errstate(divide="ignore"):
        t = np.clip(np.log2(np.asarray(freqs, dtype=float) / low_end) / _BLEND_OCTAVES, 0.0, 1.0)
    return t * t * t * (10.0 - 15.0 * t + 6.0 * t * t)


def alias_bound(parts: TwoRates) -> float:
    """Largest gain, summed over every frequency that folds onto one, with
    which the rate change of ``parts`` leaks a frequency into another
    (conservative: the folded gains are added as if in phase).

    Examples
    --------
    >>> from gainshape import highpass
    >>> bool(two_rates(highpass(0.05, rolloff=12.0), 1000.0, 0.001).aliasing < 1e-4)
    True
    """
    m, sfreq, low = parts.factor, parts.fast.sfreq, parts.reduced_rate
    out = np.linspace(0.0, low / 2.0, 2049)
    slow = np.abs(KernelResponse(parts.slow.taps, parts.slow.offset, low, False).gain_at(out))
    own = _triangle_gain(out, m, sfreq)
    # the triangle's gains at the m frequencies that fold onto one sum to 1
    # (its samples at multiples of m are 1/m at 0 and zero elsewhere), so the
    # others add up to 1 - its own
    return float(np.max(slow * own * (1.0 - own)))


def _blend_start(curve, sfreq):
    """The lowest frequency from which the request stays within
    ``_BLEND_FLAT`` of its largest value there (and at least 0.5) for two
    octaves, with more than that below it: the blend's bottom, or None."""
    freqs = np.geomspace(sfreq / 2**22, sfreq / 2.0, 21 * _POINTS_PER_OCTAVE + 1)
    gain = np.asarray(curve(freqs), dtype=float)
    span = int(_BLEND_OCTAVES * _POINTS_PER_OCTAVE)
    windows = np.lib.stride_tricks.sliding_window_view(gain, span + 1)
    tops, bottoms = windows.max(axis=1), windows.min(axis=1)
    flat = np.flatnonzero(bottoms[1:] >= np.maximum(0.5, tops[1:] * (1.0 - _BLEND_FLAT))) + 1
    if not flat.size:
        return None
    i = int(flat[0])
    return float(freqs[i]) if gain[:i].min() < tops[i] * (1.0 - _BLEND_FLAT) else None


def _triangle(m: int) -> np.ndarray:
    """Two boxcars of ``m`` samples convolved, scaled to sum 1 (2m - 1 samples)."""
    return np.convolve(np.ones(m), np.ones(m)) / m**2


def _triangle_gain(freqs, m: int, sfreq: float) -> np.ndarray:
    """Gain of :func:`_triangle` at ``freqs`` (Hz): the M-point Dirichlet kernel squared.

    >>> _triangle_gain(np.array([0.0, 12.5, 25.0]), 4, 100.0).round(4).tolist()
    [1.0, 0.4268, 0.0]
    """
    x = np.pi * np.asarray(freqs, dtype=float) / sfreq
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = np.sin(m * x) / (m * np.sin(x))
    return np.where(np.abs(np.sin(x)) < 1e-12, 1.0, ratio) ** 2


def _decimation_weights(m: int) -> np.ndarray:
    """(m, 2) weights: frame j times column 0 plus frame j - 1 times column 1
    is the triangle-filtered sample at the start of frame j."""
    d = _triangle(m)  # d[m - 1] is t = 0
    weights = np.zeros((m, 2))
    weights[:, 0] = d[m - 1 :]
    weights[1:, 1] = d[: m - 1]
    return weights


def _interpolation_weights(m: int) -> np.ndarray:
    """(2, m) weights: samples j and j + 1 to the m samples of frame j (linear)."""
    r = np.arange(m) / m
    return np.stack([1.0 - r, r])


def _convolved(reduced: np.ndarray, part: KernelPart, rows: int = 4) -> np.ndarray:
    """Each row convolved with the part's kernel, in place, a few rows at a
    time (circular, on an FFT long enough that the wrap stays in the padding)."""
    n = sfft.next_fast_len(reduced.shape[1] + part.support, real=True)
    response = part.spectrum(n, reduced.dtype)
    for g in range(0, reduced.shape[0], rows):
        spec = sfft.rfft(reduced[g : g + rows], n, axis=-1)
        spec *= response
        reduced[g : g + rows] = sfft.irfft(spec, n, axis=-1)[:, : reduced.shape[1]]
    return reduced

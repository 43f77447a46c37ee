"""A gain curve turned into a finite kernel, and the kernel's response.

Vocabulary: the *request* is the gain curve; the *ideal* response is the
request's inverse FFT on a *dense grid* fine enough that it has decayed; the
*kernel* is a tapered truncation of it (symmetric for zero phase, starting
at t = 0 for minimum phase); *offset* is the kernel sample at t = 0.
"""

from __future__ import annotations

import math

import numpy as np
import scipy.fft as sfft

from .curves import GainCurve

_TAPER_FRACTION = 0.125  # outer eighth of each side of the kernel is tapered
_MIN_DENSE = 2**14
_MAX_DENSE = 2**20  # design grid: kernels up to 2**19 samples (designs stay within about 2 s)
_NODE_OFFSETS = np.arange(24) - 11  # the 24 grid points around each interpolated frequency
_NODE_WEIGHTS = np.array([(-1.0) ** j * math.comb(23, j) for j in range(24)])  # barycentric
_MAX_KERNEL_SECONDS = 600.0  # longer ones are refused: no EEG record could use them


# -- kernel realization -------------------------------------------------------
def requested_taps(seconds: float, sfreq: float) -> int:
    """Kernel samples for a length in seconds, within what the design grid holds."""
    if seconds > _MAX_KERNEL_SECONDS:
        raise ValueError(
            f"The 'kernel' parameter takes at most {_MAX_KERNEL_SECONDS:g} s; {seconds:g} s "
            "was given. kernel='shortest' gives the shortest kernel within tolerance."
        )
    n_taps = max(1, int(round(seconds * sfreq)))
    if n_taps > _MAX_DENSE // 2:
        raise ValueError(
            f"The 'kernel' parameter takes at most {_MAX_DENSE // 2 / sfreq:.6g} s at "
            f"{sfreq:g} Hz; {seconds:g} s was given. kernel='shortest' gives the shortest "
            "kernel within tolerance."
        )
    return n_taps


class Realizer:
    """Ideal response on a dense grid (at least ``min_n`` points), and truncations of it."""

    def __init__(self, curve, sfreq, causal, tolerance, min_n=0):
        self.sfreq, self.causal, self.tol = sfreq, causal, tolerance
        n = max(_MIN_DENSE, 1 << int(np.ceil(np.log2(max(min_n, 1)))))
        while True:  # grid fine enough for the zero-phase response to decay
            gain = validated_gain(curve, sfft.rfftfreq(n, 1.0 / sfreq))
            ideal = sfft.irfft(gain, n)
            if np.abs(ideal[n // 4 : 3 * n // 4]).sum() < tolerance / 4 or n >= _MAX_DENSE:
                break
            n *= 2
        if causal:  # room for the longer causal response
            n = min(2 * n, _MAX_DENSE)
            gain = validated_gain(curve, sfft.rfftfreq(n, 1.0 / sfreq))
            ideal = sfft.irfft(minimum_phase_spectrum(curve, gain, n, sfreq, tolerance), n)
        self.n, self.gain, self.ideal = n, gain, ideal

    def of_length(self, n_taps: int):
        """Tapered truncation to about ``n_taps`` samples; returns kernel, offset."""
        n_taps = max(1, min(n_taps, self.n - 1))
        if not self.causal:
            half = n_taps // 2
            w = _taper(2 * half + 1)
            kernel = np.concatenate([self.ideal[-half:] if half else [], self.ideal[: half + 1]])
            kernel = kernel * w
            return 0.5 * (kernel + kernel[::-1]), half
        w = _taper(2 * n_taps - 1)[n_taps - 1 :]
        return self.ideal[:n_taps] * w, 0

    def deviation(self, kernel, offset) -> float:
        """Largest gain error on the dense grid thinned to 4 points per kernel
        sample (a search figure: :func:`design` checks the final kernel finely)."""
        n = self.n
        while n // 2 >= max(4 * kernel.size, _MIN_DENSE):
            n //= 2
        spec = kernel_spectrum(kernel, offset, n, self.causal)
        gain = self.gain[:: self.n // n]
        return float(np.max(np.abs(np.abs(spec) - gain) if self.causal else np.abs(spec - gain)))

    def shortest(self) -> tuple[np.ndarray, int]:
        """The shortest tapered truncation within tolerance, to 1 % in length.

        The search starts from the length at which the untapered tail's L1
        norm (a bound on the gain error) falls below the tolerance, brackets
        the length, and narrows the bracket by interpolating log error
        against log length, probing 1 % beside a guess that lands within 10 %
        of the target (after six steps it bisects, so a rough error curve
        still converges). It aims at 0.95 x tolerance so that the finer check
        in :func:`design` passes.
        """
        target = 0.95 * self.tol
        limit = min(self.n // 2, int(_MAX_KERNEL_SECONDS * self.sfreq))
        hi = min(self._l1_guess(), limit)
        e_hi = self._error(hi)
        lo, e_lo = hi, e_hi
        while e_hi > target:  # too short: lengthen
            if hi >= limit:
                by_samples = limit < int(_MAX_KERNEL_SECONDS * self.sfreq)
                raise ValueError(
                    "The requested gain cannot be realized within tolerance "
                    f"{self.tol:g} by any kernel up to {limit / self.sfreq:.4g} s ({limit} "
                    f"samples) at {self.sfreq:g} Hz (best: {e_hi:.3g}): it has a jump, a "
                    "kink, or a feature too steep, too narrow or too low in frequency for "
                    "that length. Use a gentler roll-off, a wider notch, a higher edge, a "
                    "larger 'tolerance', or a kernel length in seconds"
                    + (", or resample the data to a lower rate first (the same samples "
                       "then span more seconds)." if by_samples else ".")
                )
            lo, e_lo = hi, e_hi
            hi = min(int(hi * (2 if e_hi > 2 * target else 1.25)) + 1, limit)
            e_hi = self._error(hi)
        while lo > 2 and e_lo <= target:  # long enough: shorten until too short
            hi, e_hi = lo, e_lo
            lo = max(2, int(lo * (0.25 if e_lo < 0.5 * target else 0.8)))
            e_lo = self._error(lo)
        if e_lo <= target:
            return self.of_length(lo)
        probe, step, recent = None, 0, [(lo, e_lo), (hi, e_hi)]
        while hi - lo > max(1, hi // 100):
            if probe is not None:
                mid = probe
            elif step >= 6:  # a rough error curve: bisect
                mid = (lo + hi) // 2
            else:  # secant through the two latest lengths, kept inside the bracket
                mid = _log_interpolated(*recent[-2], *recent[-1], target)
                if not lo < mid < hi:
                    mid = _log_interpolated(lo, e_lo, hi, e_hi, target)
            mid = min(max(mid, lo + 1), hi - 1)
            error, step = self._error(mid), step + 1
            recent.append((mid, error))
            near = abs(error / target - 1.0) < 0.1 and probe is None
            if error <= target:
                hi, e_hi = mid, error
                probe = hi - max(1, hi // 100) if near else None
            else:
                lo, e_lo = mid, error
                probe = lo + max(1, lo // 100) if near else None
        return self.of_length(hi)

    def _error(self, n_taps: int) -> float:
        return self.deviation(*self.of_length(n_taps))

    def _l1_guess(self) -> int:
        """Taps beyond which the ideal response's L1 tail is below tolerance."""
        half = self.n // 2
        mag = np.abs(self.ideal[: half + 1])
        tail = np.cumsum(mag[::-1])[::-1] * (1 if self.causal else 2)
        k = int(np.argmax(tail <= self.tol)) if (tail <= self.tol).any() else half
        return max(8, k if self.causal else 2 * k + 1)


def _log_interpolated(n1, e1, n2, e2, target) -> int:
    """The length where log error, straight against log length through two
    (length, error) points, meets ``target`` (their middle if it cannot).

    >>> _log_interpolated(100, 1e-2, 1000, 1e-4, 1e-3)
    316
    """
    if min(e1, e2, n1, n2) <= 0 or e1 == e2 or n1 == n2:
        return (n1 + n2) // 2
    fraction = np.log(e1 / target) / np.log(e1 / e2)
    return int(round(n1 * (n2 / n1) ** min(max(fraction, -4.0), 4.0)))


def _taper(n: int) -> np.ndarray:
    """Tukey window of ``n`` samples with the outer eighth of each side tapered."""
    from scipy.signal.windows import tukey

    return tukey(n, alpha=2 * _TAPER_FRACTION, sym=True) if n > 2 else np.ones(n)


def validated_gain(curve: GainCurve, freqs: np.ndarray, chunk: int = 2**16) -> np.ndarray:
    """The curve at ``freqs``, evaluated in chunks (bounded temporaries), checked."""
    gain = np.empty(freqs.shape)
    flat_f, flat_g = freqs.reshape(-1), gain.reshape(-1)
    for i in range(0, flat_f.size, chunk):
        flat_g[i : i + chunk] = curve(flat_f[i : i + chunk])
    bad = ~np.isfinite(gain) | (gain < 0)
    if bad.any():
        raise ValueError(
            f"The gain curve {curve!r} returned {gain[bad][0]!r} at "
            f"{freqs[bad][0]:g} Hz; gains must be finite and >= 0."
        )
    return gain


def minimum_phase_spectrum(curve, gain, n: int, sfreq: float, tolerance: float) -> np.ndarray:
    """Minimum-phase response with magnitude ``gain``, the curve on the rfft
    grid of n points.

    Homomorphic (real cepstrum) method: fold the cepstrum of log|G| onto
    positive quefrencies and exponentiate. Around each minimum of the gain
    below ``tolerance`` the log gain is averaged over the bin (16
    sub-samples), so a zero that falls on a grid point (a high-pass at 0 Hz,
    a notch centre, the ends of a run of zeros) contributes its integrable
    log singularity rather than a spike; the gain is floored at 1e-9 x
    tolerance.
    """
    freqs = sfft.rfftfreq(n, 1.0 / sfreq)
    floor = 1e-9 * tolerance
    log_mag = np.log(np.maximum(gain, floor))
    deep = _near_deep_minima(gain, tolerance)
    if deep.size:
        offsets = (np.arange(16) + 0.5) / 16 - 0.5
        sub = freqs[deep, None] + offsets[None, :] * (sfreq / n)
        log_mag[deep] = np.log(np.maximum(validated_gain(curve, sub), floor)).mean(axis=1)
    return cepstral_minimum_phase(np.exp(log_mag), n, floor)


def _near_deep_minima(gain, tolerance, reach=2) -> np.ndarray:
    """Bins within ``reach`` of a local minimum of ``gain`` below ``tolerance``
    (inside a run of equal values only its ends count).

    >>> _near_deep_minima(np.array([1.0, 0.5, 0.0, 0.0, 0.0, 0.5, 1.0]), 0.1, reach=0)
    array([2, 4])
    """
    padded = np.concatenate([[np.inf], gain, [np.inf]])
    left, right = padded[:-2], padded[2:]
    minima = np.flatnonzero((gain < tolerance) & (gain <= left) & (gain <= right)
                            & ((gain < left) | (gain < right)))
    near = (minima[:, None] + np.arange(-reach, reach + 1)[None, :]).ravel()
    return np.unique(near[(near >= 0) & (near < gain.size)])


def cepstral_minimum_phase(magnitude, n: int, floor: float = 1e-12) -> np.ndarray:
    """Minimum-phase response with ``magnitude`` on the rfft grid of ``n``
    points (real cepstrum folded onto positive quefrencies).

    >>> spec = cepstral_minimum_phase(np.ones(5), 8)
    >>> bool(np.allclose(spec, 1.0))
    True
    """
    cep = sfft.irfft(np.log(np.maximum(magnitude, floor)), n)
    cep[1 : (n + 1) // 2] *= 2.0
    cep[n // 2 + 1 :] = 0.0
    return np.exp(sfft.rfft(cep))


def cached_spectrum(cache: dict, n_fft: int, dtype, compute) -> np.ndarray:
    """``compute(n_fft)`` kept in ``cache`` per size and precision, in single
    precision for float32 data.

    >>> cached_spectrum({}, 4, np.float32, lambda n: np.ones(n // 2 + 1)).dtype
    dtype('float32')
    """
    key = (n_fft, np.dtype(dtype) == np.float32)
    if key not in cache:
        spec = compute(n_fft)
        if key[1]:
            spec = spec.astype(np.float32 if spec.dtype.kind == "f" else np.complex64)
        cache[key] = spec
    return cache[key]


def kernel_spectrum(kernel, offset, n_fft, causal) -> np.ndarray:
    """Response of ``kernel`` (t = 0 at ``offset``) on an rfft grid of n_fft."""
    buf = np.zeros(n_fft)
    buf[: kernel.size - offset] = kernel[offset:]  # t >= 0 at the start,
    if offset:
        buf[n_fft - offset :] = kernel[:offset]  # t < 0 wrapped to the end
    spec = sfft.rfft(buf)
    return spec if causal else np.ascontiguousarray(spec.real)


class KernelResponse:
    """A kernel's response on an FFT grid at least 4 times denser than the
    kernel, and at any frequency in between.

    ``freqs`` and ``gain`` are the grid and the response there: real and
    signed for a zero-phase kernel, the magnitude for a causal one.
    :meth:`gain_at` interpolates the grid (barycentric Lagrange on the 24
    nearest grid values). The DTFT of a kernel of K samples centred on
    t = 0 is a trigonometric polynomial whose n-th derivative is at most
    (K/2)^n ||h||_1; on a grid 4 K points fine the Lagrange remainder is
    below 3e-11 ||h||_1, so interpolated values are exact for every figure
    gainshape reports, for the cost of one FFT.

    Examples
    --------
    >>> r = KernelResponse(np.array([0.25, 0.5, 0.25]), 1, 100.0, causal=False)
    >>> round(float(r.gain_at(25.0)), 12)  # (1 + cos(pi/2)) / 2
    0.5
    """

    def __init__(self, kernel, offset, sfreq, causal, min_points=2 * _MIN_DENSE):
        n = sfft.next_fast_len(max(min_points, 4 * kernel.size), real=True)
        while n % 2:  # even, so that n / 2 + 1 grid points run from 0 Hz to Nyquist
            n = sfft.next_fast_len(n + 1, real=True)
        self.taps, self.offset, self.sfreq, self.causal, self.n = kernel, offset, sfreq, causal, n
        self.freqs = sfft.rfftfreq(n, 1.0 / sfreq)
        self._centred = kernel_spectrum(kernel, kernel.size // 2, n, causal)
        self.gain = np.abs(self._centred) if causal else self._centred
        self._requested = (None, None)

    def requested(self, curve) -> np.ndarray:
        """``curve`` on the grid, checked; kept for the next call with the same curve."""
        if self._requested[0] is not curve:
            self._requested = (curve, validated_gain(curve, self.freqs))
        return self._requested[1]

    def group_delay(self) -> np.ndarray:
        """Group delay (s) on the grid: Re(DTFT(t h) / DTFT(h)) for t from the kernel's origin."""
        centre = self.taps.size // 2
        moments = kernel_spectrum((np.arange(self.taps.size) - centre) * self.taps,
                                   centre, self.n, causal=True)
        with np.errstate(divide="ignore", invalid="ignore"):
            centred_delay = np.real(moments / self._centred)
        return (centred_delay + centre - self.offset) / self.sfreq

    def gain_at(self, freqs) -> np.ndarray:
        """The response at any ``freqs`` (Hz): signed for zero phase, magnitude for causal."""
        shape = np.shape(freqs)
        position = np.atleast_1d(np.asarray(freqs, dtype=float)).ravel() * (self.n / self.sfreq)
        nodes = np.floor(position).astype(np.int64)[:, None] + _NODE_OFFSETS[None, :]
        distance = position[:, None] - nodes
        wrapped = nodes % self.n  # the negative frequencies mirror the positive ones
        mirrored = wrapped > self.n // 2
        values = self._centred[np.where(mirrored, self.n - wrapped, wrapped)]
        if self.causal:
            values = np.where(mirrored, np.conj(values), values)
        on_node = distance == 0.0
        with np.errstate(divide="ignore", invalid="ignore"):  # rows on a node are set below
            terms = _NODE_WEIGHTS / distance
            out = np.sum(terms * values, axis=1) / np.sum(terms, axis=1)
        hit = on_node.any(axis=1)
        out[hit] = values[on_node]
        return (np.abs(out) if self.causal else out.real).reshape(shape)

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
_MAX_DENSE = 2**22
_DTFT_OVERSAMPLING = 16  # FFT grid, in points per kernel sample, for interpolated DTFTs
_DTFT_NODE_OFFSETS = np.arange(24) - 11  # the 24 grid points around each frequency
_DTFT_WEIGHTS = np.array([(-1.0) ** j * math.comb(23, j) for j in range(24)])  # barycentric
_MAX_DTFT_GRID = 2**23
_MAX_KERNEL_SECONDS = 600.0  # longer ones are refused: no EEG record could use them


# -- kernel realization -------------------------------------------------------
def _requested_taps(seconds: float, sfreq: float) -> int:
    """Kernel samples for a length in seconds, within what the design grid holds."""
    if seconds > _MAX_KERNEL_SECONDS:
        raise ValueError(
            f"The 'kernel' parameter must be at most {_MAX_KERNEL_SECONDS:g} s, but got "
            f"{seconds:g} s; use kernel='shortest' for the shortest kernel within tolerance."
        )
    n_taps = max(1, int(round(seconds * sfreq)))
    if n_taps > _MAX_DENSE // 2:
        raise ValueError(
            f"The 'kernel' parameter must be at most {_MAX_DENSE // 2 / sfreq:.6g} s at "
            f"{sfreq:g} Hz, but got {seconds:g} s; use kernel='shortest' for the shortest "
            "kernel within tolerance."
        )
    return n_taps


class _Realizer:
    """Ideal response on a dense grid (at least ``min_n`` points), and truncations of it."""

    def __init__(self, curve, sfreq, causal, tolerance, min_n=0):
        self.sfreq, self.causal, self.tol = sfreq, causal, tolerance
        n = max(_MIN_DENSE, 1 << int(np.ceil(np.log2(max(min_n, 1)))))
        while True:  # grid fine enough for the zero-phase response to decay
            gain = _validated_gain(curve, sfft.rfftfreq(n, 1.0 / sfreq))
            ideal = sfft.irfft(gain, n)
            if np.abs(ideal[n // 4 : 3 * n // 4]).sum() < tolerance / 4 or n >= _MAX_DENSE:
                break
            n *= 2
        if causal:  # room for the longer causal response
            n = min(4 * n, _MAX_DENSE)
            gain = _validated_gain(curve, sfft.rfftfreq(n, 1.0 / sfreq))
            ideal = sfft.irfft(_minimum_phase_spectrum(curve, gain, n, sfreq, tolerance), n)
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
        spec = _kernel_spectrum(kernel, offset, self.n, self.causal)
        return float(np.max(np.abs(np.abs(spec) - self.gain) if self.causal
                            else np.abs(spec - self.gain)))

    def shortest(self):
        """The shortest tapered truncation within tolerance, to 1 % in length.

        The search starts from the length at which the untapered tail's L1
        norm (a bound on the gain error) falls below the tolerance, and aims
        at 0.95 x tolerance so that the finer check in :func:`design` passes.
        """
        target = 0.95 * self.tol
        ok = lambda taps: self.deviation(*self.of_length(taps)) <= target  # noqa: E731
        limit = min(self.n // 2, int(_MAX_KERNEL_SECONDS * self.sfreq))
        hi = min(self._l1_guess(), limit)
        while not ok(hi):
            if hi >= limit:
                best = self.deviation(*self.of_length(limit))
                raise ValueError(
                    "The requested gain cannot be realized within tolerance "
                    f"{self.tol:g} by any kernel up to {limit / self.sfreq:.4g} s "
                    f"at {self.sfreq:g} Hz (best: {best:.3g}): it has a jump, a kink, "
                    "or a feature too steep, too narrow or too low in frequency. Use a "
                    "gentler roll-off, a wider notch, a higher edge, a larger "
                    "'tolerance', or a kernel length in seconds."
                )
            hi = min(2 * hi, limit)
        lo = max(2, hi // 4)
        while lo > 2 and ok(lo):
            lo, hi = max(2, lo // 4), lo
        while hi - lo > max(1, hi // 100):
            mid = (lo + hi) // 2
            lo, hi = (lo, mid) if ok(mid) else (mid, hi)
        return self.of_length(hi)

    def _l1_guess(self) -> int:
        """Taps beyond which the ideal response's L1 tail is below tolerance."""
        half = self.n // 2
        mag = np.abs(self.ideal[: half + 1])
        tail = np.cumsum(mag[::-1])[::-1] * (1 if self.causal else 2)
        k = int(np.argmax(tail <= self.tol)) if (tail <= self.tol).any() else half
        return max(8, k if self.causal else 2 * k + 1)


def _taper(n: int) -> np.ndarray:
    """Tukey window of ``n`` samples with the outer eighth of each side tapered."""
    from scipy.signal.windows import tukey

    return tukey(n, alpha=2 * _TAPER_FRACTION, sym=True) if n > 2 else np.ones(n)


def _validated_gain(curve: GainCurve, freqs: np.ndarray, chunk: int = 2**16) -> np.ndarray:
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


def _minimum_phase_spectrum(curve, gain, n: int, sfreq: float, tolerance: float) -> np.ndarray:
    """Minimum-phase response with magnitude ``gain``, the curve on the rfft
    grid of n points.

    Homomorphic (real cepstrum) method: fold the cepstrum of log|G| onto
    positive quefrencies and exponentiate. Where the gain is below
    ``tolerance`` the log gain is averaged over the bin (16 sub-samples), so
    a zero that falls on a grid point (a high-pass at 0 Hz, a notch centre)
    contributes its integrable log singularity rather than a spike; the gain
    is floored at 1e-9 x tolerance.
    """
    freqs = sfft.rfftfreq(n, 1.0 / sfreq)
    floor = 1e-9 * tolerance
    log_mag = np.log(np.maximum(gain, floor))
    deep = np.flatnonzero(gain < tolerance)
    if deep.size:
        offsets = (np.arange(16) + 0.5) / 16 - 0.5
        sub = freqs[deep, None] + offsets[None, :] * (sfreq / n)
        log_mag[deep] = np.log(np.maximum(_validated_gain(curve, sub), floor)).mean(axis=1)
    return _cepstral_minimum_phase(np.exp(log_mag), n, floor)


def _cepstral_minimum_phase(magnitude, n: int, floor: float = 1e-12) -> np.ndarray:
    """Minimum-phase response with ``magnitude`` on the rfft grid of ``n``
    points (real cepstrum folded onto positive quefrencies).

    >>> spec = _cepstral_minimum_phase(np.ones(5), 8)
    >>> bool(np.allclose(spec, 1.0))
    True
    """
    cep = sfft.irfft(np.log(np.maximum(magnitude, floor)), n)
    cep[1 : (n + 1) // 2] *= 2.0
    cep[n // 2 + 1 :] = 0.0
    return np.exp(sfft.rfft(cep))


def _kernel_spectrum(kernel, offset, n_fft, causal) -> np.ndarray:
    """Response of ``kernel`` (t = 0 at ``offset``) on an rfft grid of n_fft."""
    buf = np.zeros(n_fft)
    buf[: kernel.size - offset] = kernel[offset:]  # t >= 0 at the start,
    if offset:
        buf[n_fft - offset :] = kernel[:offset]  # t < 0 wrapped to the end
    spec = sfft.rfft(buf)
    return spec if causal else np.ascontiguousarray(spec.real)


def _dtft(kernel, offset, sfreq, freqs, causal, chunk_elems=2**22) -> np.ndarray:
    """Exact response of the kernel at arbitrary frequencies (chunked).

    Real for zero phase (the symmetric kernel's sine terms cancel).
    """
    shape = np.shape(freqs)
    f = np.atleast_1d(np.asarray(freqs, dtype=float)).ravel()
    k = np.arange(kernel.size) - offset
    out = np.empty(f.size, dtype=complex if causal else float)
    step = max(1, chunk_elems // max(kernel.size, 1))
    for i in range(0, f.size, step):
        w = np.outer(2 * np.pi * f[i : i + step] / sfreq, k)
        out[i : i + step] = np.cos(w) @ kernel
        if causal:
            out[i : i + step] -= 1j * (np.sin(w) @ kernel)
    return out.reshape(shape)


def _interpolated_dtft(kernel, offset, sfreq, freqs, causal) -> np.ndarray:
    """The kernel's DTFT at any frequencies for the cost of about one FFT.

    The DTFT is a trigonometric polynomial of the kernel's length K; on an
    FFT grid 16 K points fine it is interpolated from the 24 nearest grid
    values (barycentric Lagrange). Error bound (Lagrange remainder with
    |H^(n)| <= K^n ||h||_1): ||h||_1 (2 pi / 16)^24 / 4 < 1e-10 ||h||_1.
    Kernels whose grid would exceed 2**23 points use the direct sum.
    """
    n_grid = sfft.next_fast_len(_DTFT_OVERSAMPLING * kernel.size)
    if n_grid > _MAX_DTFT_GRID:
        return _dtft(kernel, offset, sfreq, freqs, causal)
    shape = np.shape(freqs)
    position = np.atleast_1d(np.asarray(freqs, dtype=float)).ravel() * (n_grid / sfreq)
    buf = np.zeros(n_grid)
    buf[: kernel.size - offset] = kernel[offset:]  # t >= 0 first, t < 0 wrapped to the end
    if offset:
        buf[n_grid - offset :] = kernel[:offset]
    grid = sfft.fft(buf)
    nodes = np.floor(position).astype(np.int64)[:, None] + _DTFT_NODE_OFFSETS[None, :]
    distance = position[:, None] - nodes
    on_node = distance == 0.0
    values = grid[nodes % n_grid]
    with np.errstate(divide="ignore", invalid="ignore"):  # rows on a node are set below
        terms = _DTFT_WEIGHTS / distance
        out = np.sum(terms * values, axis=1) / np.sum(terms, axis=1)
    hit = on_node.any(axis=1)
    out[hit] = values[on_node]
    return (out if causal else out.real).reshape(shape)


def _zoom_gain(kernel, offset, sfreq, freqs, causal) -> np.ndarray:
    """Exact response at evenly spaced ``freqs`` (zoom FFT, chirp-z)."""
    from scipy.signal import ZoomFFT

    if freqs.size < 2:
        return _dtft(kernel, offset, sfreq, freqs, causal)
    spec = ZoomFFT(kernel.size, [freqs[0], freqs[-1]], m=freqs.size, fs=sfreq, endpoint=True)(kernel)
    spec = spec * np.exp(2j * np.pi * freqs * offset / sfreq)  # t = 0 at the offset
    return spec if causal else spec.real


def _zoom_response(kernel, offset, sfreq, fmax, causal, m=2048) -> np.ndarray:
    """Exact response at ``m - 1`` points evenly spaced in (0, fmax] (zoom FFT)."""
    from scipy.signal import ZoomFFT

    freqs = np.linspace(0.0, fmax, m)
    spec = ZoomFFT(kernel.size, [0.0, fmax], m=m, fs=sfreq, endpoint=True)(kernel)
    spec = spec * np.exp(2j * np.pi * freqs * offset / sfreq)  # t = 0 at the offset
    return (spec if causal else spec.real)[1:]

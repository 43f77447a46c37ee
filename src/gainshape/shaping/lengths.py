"""What makes a kernel long, in words a user can act on.

A kernel is about as long as the inverse of the narrowest change in its
gain, in hertz: a transition of W Hz needs roughly 1/W seconds. The
candidates are the request's features: each pass-band edge (the span over
which the requested gain goes from 90 % to 10 % around it) and each notch
(its width between half-amplitude points). The narrowest one is the cause,
named as

- a *slow edge*: an edge whose span is wide for its frequency (a gentle
  high-pass edge low in frequency): a higher or gentler edge shortens it;
- a *sharp bend*: an edge whose span is under a tenth of its frequency (a
  cliff drawn by hand, a very steep roll-off): a gentler roll-off there
  shortens it;
- the *narrowest notch*: a wider notch shortens it.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

__all__ = ["LengthCause", "long_kernel_cause"]

_SHARP = 0.1  # an edge whose 90-10 % span is under this share of its frequency is a bend


@dataclass(frozen=True)
class LengthCause:
    """The feature that makes a kernel long: its words, the change that
    shortens the kernel, and its width in Hz."""

    what: str
    remedy: str
    width_hz: float


def long_kernel_cause(curve, chars, sfreq: float) -> LengthCause | None:
    """The feature of the request ``curve`` that makes its kernel at ``sfreq``
    (characteristics ``chars``) long; None when the gain is flat.

    The feature is found where a kernel a quarter as long misses the request
    most (a tapered truncation of the ideal response): that is where the
    request changes faster than the shorter kernel can follow. It is named
    by the steep part or notch it lies on, else as a bend at that frequency.

    Examples
    --------
    >>> import gainshape as gs
    >>> f = gs.design(gs.highpass(0.05), 250.0)
    >>> long_kernel_cause(f.curve, f.characteristics, f.sfreq).what
    'the slow high-pass edge at 0.05 Hz'
    """
    found = _hardest_frequency(curve, sfreq, chars.length / 4)
    if found is None:
        return None
    hardest, step = found
    for b in chars.stop_bands:
        margin = b.high - b.low
        if "notch" in b.kind and b.low - margin <= hardest <= b.high + margin:
            return LengthCause(f"the narrowest notch, at {_hz((b.low + b.high) / 2)} Hz "
                               f"({_hz(b.high - b.low)} Hz wide)", "a wider notch shortens it",
                               b.high - b.low)
    sharp = [(hz, width) for hz, width, _ in _steep_parts(curve, sfreq / 2.0)
             if width < _SHARP * hz and abs(hardest - hz) <= width + step]
    if sharp:
        hz, width = min(sharp, key=lambda p: abs(hardest - p[0]))
        return LengthCause(f"the sharp bend at {_hz(hz)} Hz (the gain changes over {_hz(width)} "
                           "Hz)", "a gentler roll-off there shortens it", width)
    at = _drawn_point_near(curve, hardest, step)
    if at is not None:
        return LengthCause(f"the bend of the gain at {_hz(at)} Hz (a drawn point)",
                           "a gentler change of the gain there shortens it", step)
    edges = [e for e in chars.half_amplitude if abs(np.log10(float(e) / hardest)) <= 1.0]
    if edges:  # an edge's reach: within a decade (a high-pass edge's hardest part lies below it)
        edge = min(edges, key=lambda e: abs(np.log(float(e) / hardest)))
        name, rising = ("high-pass", True) if edge.direction == "rising" else ("low-pass", False)
        return LengthCause(f"the slow {name} edge at {_hz(float(edge))} Hz",
                           f"a {'higher' if rising else 'lower'} or gentler {name} edge "
                           "shortens it", float(edge))
    return LengthCause(f"the bend of the gain at {_hz(hardest)} Hz",
                       "a gentler change of the gain there shortens it", step)


def _drawn_point_near(curve, hz: float, step: float) -> float | None:
    """A drawn curve's point within a few grid steps of ``hz`` (where its bends are), else None."""
    recipe = getattr(curve, "recipe", None) or {}
    points = recipe.get("freqs", []) if recipe.get("kind") == "points" else []
    near = [float(p) for p in points if abs(float(p) - hz) <= 3 * step]
    return min(near, key=lambda p: abs(p - hz), default=None)


def _hardest_frequency(curve, sfreq: float, seconds: float) -> tuple | None:
    """Where a zero-phase kernel of ``seconds`` (a Hann-tapered truncation of
    the ideal response) deviates most from the request, and the grid step
    it was read on; None for a flat gain."""
    half = max(1, int(seconds * sfreq / 2))
    n = 1 << int(np.ceil(np.log2(8 * (2 * half + 1))))
    freqs = np.fft.rfftfreq(n, 1.0 / sfreq)
    gain = np.asarray(curve(freqs), dtype=float)
    if np.ptp(gain) < 1e-9:
        return None
    ideal = np.fft.irfft(gain, n)
    taper = np.hanning(2 * half + 3)[1:-1]  # nonzero at both ends
    short = np.zeros(n)
    short[: half + 1] = ideal[: half + 1] * taper[half:]
    short[n - half:] = ideal[n - half:] * taper[:half]
    miss = np.abs(np.fft.rfft(short).real - gain)
    return float(freqs[int(np.argmax(miss[1:])) + 1]), float(freqs[1])


def _steep_parts(curve, nyquist: float) -> list:
    """(frequency, width in Hz, rising) of each steep part of the request: where
    its slope in gain per Hz peaks, and the span over which the slope stays
    above half that peak (on a fine linear grid around the peak when the part
    is narrower than the log grid's steps)."""
    f = np.geomspace(nyquist * 1e-5, nyquist, 20001)
    slope = np.diff(np.asarray(curve(f), dtype=float)) / np.diff(f)
    size = np.abs(slope)
    peaks = np.flatnonzero((size[1:-1] >= size[:-2]) & (size[1:-1] > size[2:])
                           & (size[1:-1] > 1e-6 * size.max(initial=0.0))) + 1
    out: list = []
    for k in peaks.tolist():
        width = _half_peak_span(f, size, k)
        top = 0.5 * (f[k] + f[k + 1])
        if width <= 4 * (f[k + 1] - f[k]):  # a few grid steps: measure it finely
            fine = np.linspace(f[max(k - 4, 0)], f[min(k + 5, f.size - 1)], 4001)
            local = np.abs(np.diff(np.asarray(curve(fine), dtype=float)) / np.diff(fine))
            j = int(np.argmax(local))
            width, top = _half_peak_span(fine, local, j), 0.5 * (fine[j] + fine[j + 1])
        out.append((float(top), float(width), bool(slope[k] > 0)))
    return out


def _half_peak_span(f, size, k) -> float:
    """Hz over which ``size`` (per interval of the grid ``f``) stays above half its value at ``k``."""
    low = np.flatnonzero(size[:k] < 0.5 * size[k])
    high = np.flatnonzero(size[k:] < 0.5 * size[k])
    left = low[-1] + 1 if low.size else 0
    right = k + high[0] if high.size else size.size
    return float(f[right] - f[left])


def _hz(value: float) -> str:
    return f"{value:.3g}"

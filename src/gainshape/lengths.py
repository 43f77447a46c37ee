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
    """The narrowest feature of the request ``curve`` whose realization at
    ``sfreq`` has characteristics ``chars`` (None when the gain is flat).

    Examples
    --------
    >>> import gainshape as gs
    >>> f = gs.design(gs.highpass(0.05), 250.0)
    >>> long_kernel_cause(f.curve, f.characteristics, f.sfreq).what
    'the slow high-pass edge at 0.05 Hz'
    """
    notches = [b for b in chars.stop_bands if "notch" in b.kind]
    found = [LengthCause(f"the narrowest notch, at {_hz((b.low + b.high) / 2)} Hz "
                         f"({_hz(b.high - b.low)} Hz wide)", "a wider notch shortens it",
                         b.high - b.low) for b in notches]
    for hz, width, rising in _steep_parts(curve, sfreq / 2.0):
        if any(b.low * (1 - 1e-3) <= hz <= b.high * (1 + 1e-3) for b in notches):
            continue  # a notch's own side
        name = "high-pass" if rising else "low-pass"
        if width < _SHARP * hz:
            found.append(LengthCause(
                f"the sharp bend at {_hz(hz)} Hz (the gain changes over {_hz(width)} Hz)",
                "a gentler roll-off there shortens it", width))
        else:  # named by its half-amplitude cutoff, as users know an edge
            edge = _nearest_edge(chars.half_amplitude, hz, "rising" if rising else "falling")
            found.append(LengthCause(f"the slow {name} edge at {_hz(edge)} Hz",
                                     f"a {'higher' if rising else 'lower'} or gentler {name} "
                                     "edge shortens it", width))
    return min(found, key=lambda c: c.width_hz, default=None)


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
    out = []
    for k in peaks:
        width = _half_peak_span(f, size, k)
        top = 0.5 * (f[k] + f[k + 1])
        if width <= 4 * (f[k + 1] - f[k]):  # a few grid steps: measure it finely
            fine = np.linspace(f[max(k - 4, 0)], f[min(k + 5, f.size - 1)], 4001)
            local = np.abs(np.diff(np.asarray(curve(fine), dtype=float)) / np.diff(fine))
            j = int(np.argmax(local))
            width, top = _half_peak_span(fine, local, j), 0.5 * (fine[j] + fine[j + 1])
        out.append((float(top), float(width), bool(slope[k] > 0)))
    return out


def _nearest_edge(edges, hz: float, direction: str) -> float:
    """The half-amplitude edge of ``direction`` nearest ``hz`` on a log axis (``hz`` if none)."""
    same = [float(e) for e in edges if e.direction == direction]
    return min(same, key=lambda e: abs(np.log(e / hz)), default=hz)


def _half_peak_span(f, size, k) -> float:
    """Hz over which ``size`` (per interval of the grid ``f``) stays above half its value at ``k``."""
    low = np.flatnonzero(size[:k] < 0.5 * size[k])
    high = np.flatnonzero(size[k:] < 0.5 * size[k])
    left = low[-1] + 1 if low.size else 0
    right = k + high[0] if high.size else size.size
    return float(f[right] - f[left])


def _hz(value: float) -> str:
    return f"{value:.3g}"

"""Each pass-band edge's time behaviour (pre-response, overshoot, undershoot, settling and
decay) and the group delay, measured on the kernel's step and impulse responses."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.fft as sfft
from scipy.signal import fftconvolve

from .realize import cepstral_minimum_phase
from .stopbands import widened


_TIME_LEVEL = 0.01  # settling and decay: to within 1 % (of the step, of the peak)


_ROUND_OFF = 1e-6  # a step response's excursion smaller than this (of the step) is round-off


@dataclass(frozen=True, slots=True)
class EdgeTiming:
    """What one pass-band edge does in time, measured on that edge alone.

    The realized response is split at the geometric middle of the pass
    band (for a high-pass alone, between its edge and Nyquist) and
    normalized there, so each edge's part keeps the other side flat.

    For the high-pass edge, from its unit step response (the step at t = 0):

    - ``settling_s``: the time after the step until the response stays
      within 1 % of its final value;
    - ``undershoot_pct``, ``undershoot_s``: the largest excursion of the
      opposite polarity after the step (% of the step) and when it is
      deepest (s after the step; None without one; excursions under 1e-6
      of the step are round-off and count as none);
    - ``pre_response_pct``, ``pre_response_s``: zero phase only (None for
      a causal kernel): the largest response before the step (% of the
      step; a symmetric high-pass kernel puts half the step there by
      construction) and how long before the step it exceeds 1 %.

    For the low-pass edge: ``decay_s``, the time after t = 0 until the
    impulse response's envelope stays below 1 % of its peak, and
    ``overshoot_pct``, the step response's largest overshoot (%). Figures
    that do not apply to an edge are None.

    Examples
    --------
    >>> from gainshape import design, lowpass
    >>> t = design(lowpass(30.0), 250.0).characteristics.edge_timing[0]
    >>> t.edge, t.decay_s > 0, t.settling_s is None
    ('low-pass', True, True)
    """

    edge: str
    cutoff: float
    settling_s: float | None = None
    undershoot_pct: float | None = None
    undershoot_s: float | None = None
    pre_response_pct: float | None = None
    pre_response_s: float | None = None
    decay_s: float | None = None
    overshoot_pct: float | None = None

    def to_dict(self) -> dict:
        """Plain JSON values (None where a figure does not apply)."""
        return {"edge": self.edge, "cutoff": float(self.cutoff),
                **{k: getattr(self, k) for k in self.__slots__[2:]}}


def edge_timing(response, on_grid, gain_at, exact, edges, removed) -> tuple:
    """:class:`EdgeTiming` of the pass band's high-pass and low-pass edges.

    Each edge's part of the response keeps the other side flat: the
    response is split at the geometric middle of the pass band (for a
    high-pass alone, between its edge and Nyquist), and the ``removed``
    bands (notches, band-stops: listed as stop bands, with their own
    ringing) are bridged by straight lines. ``on_grid`` is the response on
    ``response.freqs`` and ``gain_at`` the response anywhere (the request
    itself with ``exact``). Zero phase: the part's inverse
    FFT on the response's grid. Minimum phase: a causal kernel with one
    edge and nothing removed is that edge's response; otherwise the part is
    rebuilt by the cepstral method, the high-pass part at a rate of 8 times
    the split with bins at most 1/32 of its edge and 1/16 of the kernel's
    (coarser grids misplace its settling by seconds), and the second half
    of each inverse FFT, which holds the cepstrum's wrap-around, is left out.
    """
    outer = outer_indices([e.direction for e in edges])
    named = {name: float(edges[i]) for i, name in outer.items()}
    sfreq, kernel, causal = response.sfreq, response.taps, response.causal
    if causal and not exact and len(named) == 1 and not removed:
        (name, cutoff), = named.items()
        return (_timing_of(name, cutoff, (np.arange(kernel.size) - response.offset) / sfreq, kernel,
                           True),)
    if len(named) == 2:
        split = np.sqrt(named["high-pass"] * named["low-pass"])
    else:
        split = np.sqrt(named["high-pass"] * sfreq / 2) if "high-pass" in named else None
    out = []
    for name, cutoff in named.items():
        if causal and name == "high-pass":
            rate = min(sfreq, 8 * split)
            n = _even_fast_len(rate / min(sfreq / (16 * kernel.size), cutoff / 32))
            freqs = sfft.rfftfreq(n, 1.0 / rate)
            values = gain_at(freqs)
        else:
            # every other grid point: a period of 2 kernel lengths still holds the kernel
            thin = 2 if response.n % 4 == 0 and not causal else 1
            rate, n = sfreq, response.n // thin
            freqs, values = response.freqs[::thin], on_grid[::thin]
        part = _edge_part(freqs, values, name, split, removed)
        if causal:
            impulse = sfft.irfft(cepstral_minimum_phase(np.abs(part), n), n)[: n // 2]
            times = np.arange(n // 2) / rate
        else:
            impulse = np.roll(sfft.irfft(part, n), n // 2)
            times = (np.arange(n) - n // 2) / rate
        out.append(_timing_of(name, cutoff, times, impulse, causal))
    return tuple(out)


def _edge_part(freqs, values, name, split, removed) -> np.ndarray:
    """One edge's part of the realized response (``values`` on ``freqs``):
    removed bands bridged, the other side of ``split`` set to 1 (normalized there)."""
    part = np.array(values, dtype=float)
    for band in removed:  # with a width either side: a notch's skirts ring too
        lo, hi = widened(*band)
        i = max(int(np.searchsorted(freqs, lo)) - 1, 0)
        j = min(int(np.searchsorted(freqs, hi)) + 1, freqs.size - 1)
        if j > i:
            part[i : j + 1] = np.linspace(part[i], part[j], j - i + 1)
    if split is None:
        return part
    ref = float(np.interp(split, freqs, part))
    keep = freqs < split if name == "high-pass" else freqs >= split
    return np.where(keep, part / ref, 1.0)


def _even_fast_len(n: float) -> int:
    """The smallest even FFT-friendly length of at least ``n`` (and 2**10).

    >>> _even_fast_len(1000.2)
    1024
    """
    m = sfft.next_fast_len(max(int(np.ceil(n)), 2**10), real=True)
    while m % 2:
        m = sfft.next_fast_len(m + 1, real=True)
    return m


def _timing_of(name, cutoff, times, impulse, causal) -> EdgeTiming:
    """Settling, undershoot and pre-response (high-pass), decay and overshoot (low-pass)."""
    step = np.cumsum(impulse)
    final = step[-1]
    after = times >= 0
    if name == "high-pass":
        late = np.flatnonzero(after & (np.abs(step - final) > _TIME_LEVEL))
        settling = float(times[late[-1]]) if late.size else 0.0
        k = np.flatnonzero(after)[np.argmin(step[after])]
        under = 100 * -float(step[k]) if step[k] < -_ROUND_OFF else 0.0
        figures = {"settling_s": settling, "undershoot_pct": under,
                   "undershoot_s": float(times[k]) if under > 0 else None}
        if not causal:
            early = np.flatnonzero(~after & (np.abs(step) > _TIME_LEVEL))
            figures["pre_response_pct"] = float(np.abs(step[~after]).max(initial=0.0)) * 100
            figures["pre_response_s"] = float(-times[early[0]]) if early.size else 0.0
        return EdgeTiming(name, cutoff, **figures)
    envelope = np.abs(impulse) / np.abs(impulse).max()
    loud = np.flatnonzero(after & (envelope >= _TIME_LEVEL))
    decay = float(times[loud[-1]]) if loud.size else 0.0
    return EdgeTiming(name, cutoff, decay_s=decay, overshoot_pct=float(max(0.0, step.max() - final) * 100))


def group_delay(response, half_power, passes_at_zero: bool) -> float:
    """Gain-squared-weighted mean group delay (s) over the half-power pass band; 0 for zero phase.

    The mean is an exact integral: with kernel h, |H|^2 = sum_k r[k] cos(w k)
    and group delay x |H|^2 = Re(G conj H) = sum_k c[k] cos(w k), where
    r[k] = sum_n h[n + k] h[n], c[k] = sum_n (n + k) h[n + k] h[n] and G the
    transform of n h[n]; each cosine is integrated in closed form between
    the half-power crossings. (A sum on the FFT grid is off by up to a grid
    step of the integrand at each band end: 0.2 % for a 0.1 Hz edge.)

    >>> from gainshape.shaping.realize import KernelResponse
    >>> r = KernelResponse(np.array([0.0, 0.0, 1.0]), 0, 100.0, causal=True)
    >>> round(group_delay(r, (), True), 12)  # a pure delay of 2 samples
    0.02
    """
    if not response.causal:
        return 0.0
    h = response.taps
    nyquist = response.sfreq / 2.0
    ends = [0.0] * int(passes_at_zero) + [float(e) for e in half_power] + [nyquist]
    intervals = [(a, b) for a, b in zip(ends[::2], ends[1::2]) if b > a]
    if not intervals:  # nowhere at half power or above: no pass band to average over
        return float("nan")
    lags = np.arange(-(h.size - 1), h.size)
    r = fftconvolve(h, h[::-1])
    c = fftconvolve(np.arange(h.size) * h, h[::-1])
    omega = 2 * np.pi * lags / response.sfreq
    safe = np.where(lags == 0, 1.0, omega)
    integral = sum(np.where(lags == 0, b - a, (np.sin(safe * b) - np.sin(safe * a)) / safe)
                   for a, b in intervals)
    samples = float(np.dot(c, integral) / np.dot(r, integral))
    return (samples - response.offset) / response.sfreq


def outer_indices(directions) -> dict:
    """Index -> "high-pass"/"low-pass" for the pass band's outer edges."""
    out = {}
    if directions and directions[0] == "rising":
        out[0] = "high-pass"
    if directions and directions[-1] == "falling":
        out[len(directions) - 1] = "low-pass"
    return out

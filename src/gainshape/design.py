"""Realize a gain curve at a sampling rate and state the result in the field's terms.

Vocabulary: the *request* is the gain curve; the *kernel* is the finite
impulse response that runs; the *realized gain* is the kernel's magnitude
response; *support* is the number of samples the kernel reaches on each side
of t = 0, which is how much padding the engine needs. A *dense grid* is an
FFT frequency grid fine enough that the ideal impulse response has decayed
within it.
"""

from __future__ import annotations

import html
import math

from dataclasses import dataclass, field

import numpy as np
import scipy.fft as sfft
from scipy.optimize import brentq, minimize_scalar

from ._checks import check_bool, check_positive, warn
from .curves import GainCurve

__all__ = ["design", "FilterDesign", "Characteristics", "EdgeFrequency", "EdgeTiming", "StopBand"]

_HALF_POWER = 1.0 / np.sqrt(2.0)
_TAPER_FRACTION = 0.125  # outer eighth of each side of the kernel is tapered
_MIN_DENSE = 2**14
_MAX_DENSE = 2**22
KERNEL_WORDS = ("shortest", "exact")  # the words design's ``kernel`` accepts besides seconds
_DTFT_OVERSAMPLING = 16  # FFT grid, in points per kernel sample, for interpolated DTFTs
_DTFT_NODE_OFFSETS = np.arange(24) - 11  # the 24 grid points around each frequency
_DTFT_WEIGHTS = np.array([(-1.0) ** j * math.comb(23, j) for j in range(24)])  # barycentric
_MAX_DTFT_GRID = 2**23
_LONG_KERNEL_SECONDS = 60.0  # longer kernels get a note
_MAX_KERNEL_SECONDS = 600.0  # longer ones are refused: no EEG record could use them
_TIME_LEVEL = 0.01  # settling and decay: to within 1 % (of the step, of the peak)
_SKIRTS = ("below the high-pass edge", "above the low-pass edge")  # stop bands beyond the pass band
_FLOOR_SPAN = 10 ** (1 / 20)  # a stop band's floor: request within 1 dB of its lowest


class EdgeFrequency(float):
    """A frequency (Hz) where the gain crosses a level, with its direction.

    ``direction`` is ``"rising"`` (gain increases with frequency, the edge of
    a high-pass) or ``"falling"`` (the edge of a low-pass).

    Examples
    --------
    >>> e = EdgeFrequency(30.0, "falling")
    >>> e + 0, e.direction
    (30.0, 'falling')
    """

    __slots__ = ("direction",)

    def __new__(cls, hz: float, direction: str):
        obj = super().__new__(cls, hz)
        obj.direction = direction
        return obj

    def __repr__(self):
        return f"{float(self):.4g} Hz ({self.direction})"

    def __reduce__(self):
        return (EdgeFrequency, (float(self), self.direction))


@dataclass(frozen=True, slots=True)
class StopBand:
    """A band the realized filter removes.

    ``low``, ``high``: its limits (Hz): half-amplitude points, or for a
    notch inside a wider stop band the points at half the gain beside it.
    ``attenuation_db``: -20 log10 of the largest realized gain over the
    band's floor, the part where the request is within 1 dB of its lowest
    value in the band (or at most the tolerance), so the transitions into
    the band do not count. ``kind``: "below the high-pass edge", "above the
    low-pass edge", "notch", "band-stop" or "notch inside a stop band".

    Examples
    --------
    >>> StopBand(49.0, 51.0, 60.2, "notch").to_dict()["attenuation_db"]
    60.2
    """

    low: float
    high: float
    attenuation_db: float
    kind: str

    def to_dict(self) -> dict:
        """Plain JSON values."""
        return {"low": float(self.low), "high": float(self.high),
                "attenuation_db": float(self.attenuation_db), "kind": self.kind}


@dataclass(frozen=True, slots=True)
class EdgeTiming:
    """What one pass-band edge does in time, measured on that edge alone.

    The realized response is split at the geometric middle of the pass
    band, so each edge's part keeps the other side flat. For the high-pass
    edge, from its unit step response: ``settling_s``, the time after the
    step until the response stays within 1 % of its final value, and
    ``opposite_pct``, its largest excursion of the opposite polarity (% of
    the step; for zero phase this includes the part before the step). For
    the low-pass edge: ``decay_s``, the time after t = 0 until the impulse
    response's envelope stays below 1 % of its peak, and ``overshoot_pct``,
    the step response's largest overshoot (%). Figures that do not apply
    to an edge are None.

    Examples
    --------
    >>> from gainshape import lowpass
    >>> t = design(lowpass(30.0), 250.0).characteristics.edge_timing[0]
    >>> t.edge, t.decay_s > 0, t.settling_s is None
    ('low-pass', True, True)
    """

    edge: str
    cutoff: float
    settling_s: float | None
    opposite_pct: float | None
    decay_s: float | None
    overshoot_pct: float | None

    def to_dict(self) -> dict:
        """Plain JSON values (None where a figure does not apply)."""
        return {"edge": self.edge, "cutoff": float(self.cutoff),
                **{k: getattr(self, k) for k in
                   ("settling_s", "opposite_pct", "decay_s", "overshoot_pct")}}


@dataclass(frozen=True, slots=True)
class Characteristics:
    """The realized filter in the field's terms (all computed, none assumed).

    Attributes
    ----------
    kind : str
        Derived from the realized gain: "low-pass", "high-pass", "band-pass",
        "band-stop", "notch", combinations joined by " + ", or "custom".
    half_amplitude, half_power : tuple of EdgeFrequency
        Frequencies (Hz, ascending) where the realized gain crosses 0.5
        (-6.02 dB) and 1/sqrt(2) (-3.01 dB).
    rolloff : tuple of float
        For each half-amplitude edge, the steepest slope (dB/octave, positive)
        of the realized gain between the edge and the point where the gain
        falls to 30 x tolerance (about 30 dB above the kernel's error floor;
        at most 0.05). For the outer edges of a pass band the slope is taken
        on the upper concave hull of dB against octaves, so a notch inside the
        stop band does not count as roll-off.
    passband_ripple_db : float
        Largest |20 log10(realized / requested)| where the request is at least
        1/sqrt(2).
    stop_bands : tuple of StopBand
        Every stop band of the realized gain: each run below 0.5 between
        half-amplitude points (below a high-pass edge, above a low-pass edge,
        notches, band-stops, drawn floors) and each notch inside such a run
        (a null 20 dB below the gain 10 % of its frequency away), with its
        attenuation (see :class:`StopBand`).
    stopband_attenuation_db : float
        The smallest attenuation of any stop band (NaN if there is none).
    max_deviation : float
        Largest |realized - requested| gain difference on a fine grid.
    edge_timing : tuple of EdgeTiming
        Time behaviour of each pass-band edge (see :class:`EdgeTiming`).
    group_delay : float
        Seconds; 0 for zero phase; for minimum phase the gain-squared-weighted
        mean group delay over the half-power passband.
    length : float
        Kernel length in seconds.
    """

    kind: str
    half_amplitude: tuple
    half_power: tuple
    rolloff: tuple
    passband_ripple_db: float
    stop_bands: tuple
    stopband_attenuation_db: float
    max_deviation: float
    edge_timing: tuple
    group_delay: float
    length: float

    def to_dict(self) -> dict:
        """Plain JSON-serializable values (edges as lists of Hz and directions).

        Examples
        --------
        >>> from gainshape import lowpass
        >>> c = design(lowpass(30.0), 250.0).characteristics
        >>> c.to_dict()["stop_bands"][0]["kind"]
        'above the low-pass edge'
        """
        out = {}
        for name in self.__slots__:
            value = getattr(self, name)
            if name in ("stop_bands", "edge_timing"):
                out[name] = [item.to_dict() for item in value]
            elif name.startswith("half_"):
                out[name] = [float(e) for e in value]
                out[name + "_direction"] = [e.direction for e in value]
            elif isinstance(value, tuple):
                out[name] = [float(v) for v in value]
            else:
                out[name] = value if isinstance(value, str) else float(value)
        return out


@dataclass(frozen=True, slots=True)
class FilterDesign:
    """A gain curve realized as a finite kernel at one sampling rate.

    Made by :func:`design`; see there. ``kernel`` is read-only;
    ``kernel[offset]`` is the sample at t = 0.
    """

    curve: GainCurve
    sfreq: float
    causal: bool
    kernel_request: object
    tolerance: float
    kernel: np.ndarray
    offset: int
    characteristics: Characteristics
    notes: tuple = ()
    _spectra: dict = field(default_factory=dict, repr=False, compare=False)

    @property
    def exact(self) -> bool:
        """True when the request is applied on each record's own grid (``kernel="exact"``)."""
        return self.kernel_request == "exact"

    @property
    def phase_words(self) -> str:
        """The phase response in words, e.g. "zero-phase (symmetric kernel, no delay)"."""
        return phase_words(self.causal, self.characteristics.group_delay)

    @property
    def times(self) -> np.ndarray:
        """Kernel sample times in seconds (0 at the kernel's time origin)."""
        return (np.arange(self.kernel.size) - self.offset) / self.sfreq

    @property
    def support(self) -> int:
        """Samples of padding the kernel needs on each side of the data."""
        return int(max(self.offset, self.kernel.size - 1 - self.offset))

    def requested_gain(self, freqs) -> np.ndarray:
        """The curve's gain at ``freqs`` (Hz)."""
        return self.curve(freqs)

    def realized_gain(self, freqs) -> np.ndarray:
        """Magnitude of the response that runs, at ``freqs`` (Hz).

        With ``kernel="exact"`` the request is applied on each record's own
        frequency grid, so the realized gain is the request.

        Examples
        --------
        >>> from gainshape import lowpass
        >>> f = design(lowpass(30.0), 250.0)
        >>> abs(float(f.realized_gain(30.0)) - 0.5) < f.tolerance
        True
        """
        if self.exact:
            return self.requested_gain(freqs)
        return np.abs(self._response(np.asarray(freqs, dtype=float)))

    def spectrum(self, n_fft: int, dtype=np.float64) -> np.ndarray:
        """Response on the ``rfft`` grid of ``n_fft`` points (for the engine).

        Real for zero phase, complex for minimum phase, in single precision
        for ``dtype=float32`` data; cached per size and precision.
        """
        key = (n_fft, np.dtype(dtype) == np.float32)
        if key not in self._spectra:
            spec = self._compute_spectrum(n_fft)
            if key[1]:
                spec = spec.astype(np.float32 if spec.dtype.kind == "f" else np.complex64)
            self._spectra[key] = spec
        return self._spectra[key]

    def _compute_spectrum(self, n_fft: int) -> np.ndarray:
        if self.exact:
            gain = _validated_gain(self.curve, sfft.rfftfreq(n_fft, 1.0 / self.sfreq))
            if not self.causal:
                return gain
            return _minimum_phase_spectrum(self.curve, gain, n_fft, self.sfreq, self.tolerance)
        return _kernel_spectrum(self.kernel, self.offset, n_fft, self.causal)

    def _response(self, freqs: np.ndarray) -> np.ndarray:
        """Complex DTFT of the kernel at ``freqs`` (real for zero phase)."""
        return _interpolated_dtft(self.kernel, self.offset, self.sfreq, freqs, self.causal)

    def plot(self, *, fmin=None, show=True):
        """Requested and realized gain (linear and dB), impulse and step response.

        Returns
        -------
        matplotlib.figure.Figure
        """
        from .viz import plot_design

        return plot_design(self, fmin=fmin, show=show)

    def describe(self) -> str:
        """One line: the kind, cutoffs, roll-off, phase response and length."""
        c = self.characteristics
        realized = c.to_dict()
        passband, stops = passband_edges(realized), removed_bands(realized)
        parts = [c.kind]
        if passband:
            parts.append("half-amplitude " + ", ".join(f"{float(hz):.3g}" for _, hz, _, _ in passband)
                         + " Hz")
            parts.append("roll-off " + ", ".join(f"{r:.1f}" for _, _, _, r in passband) + " dB/octave")
        if stops:
            parts.append("stop bands " + ", ".join(f"{a:.3g}-{b:.3g}" for a, b, _ in stops)
                         + " Hz")
        if not c.half_amplitude:
            parts.append("no half-amplitude point")
        kind = "minimum-phase" if self.causal else "zero-phase"
        return "; ".join(parts + [kind, f"{c.length:.3g} s at {self.sfreq:g} Hz"])

    def summary(self) -> list[tuple[str, str]]:
        """The characteristics as (label, value) rows of text, for tables.

        Examples
        --------
        >>> from gainshape import lowpass
        >>> design(lowpass(30.0), 250.0).summary()[0]
        ('kind', 'low-pass')
        """
        c = self.characteristics

        def edges(values):
            return ", ".join(f"{float(e):.4g} Hz ({e.direction})" for e in values) or "none"

        if self.exact:
            truncation = "none: the request is applied on each record's own grid"
        elif self.kernel_request == "shortest":
            truncation = "shortest kernel within tolerance"
        else:
            truncation = f"fixed at {self.kernel_request:g} s by request"
        realized = c.to_dict()
        slopes = ", ".join(f"{r:.1f} dB/octave ({name} edge)"
                           for name, _, _, r in passband_edges(realized))
        return [
            ("kind", c.kind),
            ("half-amplitude (-6 dB)", edges(c.half_amplitude)),
            ("half-power (-3 dB)", edges(c.half_power)),
            ("roll-off", slopes or "none (no pass-band edge)"),
            *[("stop band", stop_band_words(b)) for b in realized["stop_bands"]],
            ("passband ripple", f"{c.passband_ripple_db:.3g} dB"),
            ("stopband attenuation", f"{c.stopband_attenuation_db:.1f} dB (the least of any stop band)"),
            ("largest gain deviation", f"{c.max_deviation:.2g} (tolerance {self.tolerance:g})"),
            *[("in time", timing_words(t)) for t in realized["edge_timing"]],
            ("phase response", self.phase_words),
            ("kernel length", f"{c.length:.4g} s ({self.kernel.size} samples)"),
            ("truncation", truncation),
            ("sampling rate", f"{self.sfreq:g} Hz"),
        ] + [("note", n) for n in self.notes]

    def __repr__(self):
        return f"FilterDesign({self.describe()})"

    def _repr_html_(self):
        rows = "".join(
            f"<tr><td style='text-align:left'>{k}</td>"
            f"<td style='text-align:left'>{html.escape(v)}</td></tr>"
            for k, v in self.summary()
        )
        return (
            f"<div><b>FilterDesign</b> of {html.escape(self.curve.describe())}"
            f"<table>{rows}</table></div>"
        )


def design(
    curve: GainCurve,
    sfreq: float,
    *,
    causal: bool = False,
    kernel="shortest",
    tolerance: float = 0.001,
) -> FilterDesign:
    """Realize ``curve`` at ``sfreq`` as a finite kernel and characterize it.

    Parameters
    ----------
    curve : GainCurve
        The requested gain.
    sfreq : float
        Sampling rate in Hz.
    causal : bool
        False: a real, symmetric kernel centred on t = 0 (zero-phase, no
        delay). True: a kernel that is zero before t = 0, with the same
        magnitude (cepstral method) and the smallest possible delay
        (minimum-phase); its group delay is reported.
    kernel : "shortest" | float | "exact"
        "shortest": the shortest kernel (to 1 % in length) whose realized
        gain is within ``tolerance`` of the request. A number: the kernel
        length in seconds (honoured; a warning says if it misses the
        tolerance). "exact": no truncation; the request is applied exactly
        on each record's own frequency grid, padded by the decay of the
        ideal impulse response.
    tolerance : float
        Largest accepted absolute gain difference (0.001 is -60 dB in the
        stopband and 0.1 % in the passband).

    Returns
    -------
    FilterDesign

    Examples
    --------
    >>> from gainshape import lowpass
    >>> f = design(lowpass(30.0, rolloff=24.0), 500.0)
    >>> round(float(f.characteristics.half_amplitude[0]), 1)
    30.0
    """
    if not isinstance(curve, GainCurve):
        raise TypeError(
            "The 'curve' parameter must be a GainCurve (see gainshape.lowpass, "
            f"GainCurve.from_points), but got {type(curve).__name__} instead."
        )
    sfreq = check_positive("sfreq", sfreq)
    causal = check_bool("causal", causal)
    tolerance = check_positive("tolerance", tolerance, below=1.0)
    kernel_request = check_kernel_request(kernel)
    exact = kernel_request == "exact"
    curve, notes = curve.below_nyquist(sfreq / 2.0)
    _check_not_flat(curve, sfreq)

    fixed = not isinstance(kernel_request, str)
    n_taps = _requested_taps(kernel_request, sfreq) if fixed else None
    realizer = _Realizer(curve, sfreq, causal, tolerance, min_n=2 * (n_taps or 0))
    if n_taps is None:
        taps, offset = realizer.shortest()
    else:
        taps, offset = realizer.of_length(n_taps)
    chars = _characterize(curve, taps, offset, sfreq, causal, tolerance, exact)
    while not fixed and chars.max_deviation > tolerance and taps.size < realizer.n // 2:
        # the search grid missed a peak the finer check found: lengthen a little
        taps, offset = realizer.of_length(int(taps.size * 1.05) + 2)
        chars = _characterize(curve, taps, offset, sfreq, causal, tolerance, exact)
    taps.setflags(write=False)
    if not fixed and chars.max_deviation > tolerance:
        warn(
            f"The longest kernel this design allows ({taps.size / sfreq:.4g} s) realizes the "
            f"request only to within {chars.max_deviation:.3g} (tolerance {tolerance:g}); "
            f"pass tolerance={_round_up(chars.max_deviation)} to accept it, or use a gentler "
            "roll-off or a wider notch."
        )
    if fixed and chars.max_deviation > tolerance:
        try:
            fix = (f"use kernel='shortest' ({realizer.shortest()[0].size / sfreq:.3g} s) "
                   "to meet it.")
        except ValueError:
            fix = "no kernel length meets it: the request has a jump or a kink."
        warn(
            f"A kernel of {taps.size / sfreq:.3g} s realizes the request only to "
            f"within {chars.max_deviation:.3g} (tolerance {tolerance:g}); {fix}"
        )
    if chars.length > _LONG_KERNEL_SECONDS:
        notes += (f"the kernel is {chars.length:.0f} s long (over {_LONG_KERNEL_SECONDS:g} s): "
                  "records shorter than a few times that are mostly padding where it reaches; "
                  "a gentler or higher low-frequency edge shortens it",)
    return FilterDesign(curve, sfreq, causal, kernel_request, tolerance, taps, offset, chars, notes)


def _check_not_flat(curve, sfreq):
    """Refuse a request that removes everything; warn about one that only scales."""
    gain = _validated_gain(curve, np.linspace(0.0, sfreq / 2.0, 4097))
    if gain.max() == 0.0:
        raise ValueError(
            f"The gain curve {curve!r} is 0 from 0 Hz to Nyquist ({sfreq / 2:g} Hz): it "
            "would remove everything. Draw gains above 0 where the signal should pass."
        )
    if np.ptp(gain) == 0.0:
        warn(
            f"The gain curve {curve!r} is constant ({gain[0]:g}) from 0 Hz to Nyquist "
            f"({sfreq / 2:g} Hz) at this rate: the filter only scales the data. Are its "
            "features above Nyquist?",
        )


def _round_up(value: float) -> float:
    """``value`` rounded up to two significant digits (a tolerance to suggest).

    >>> _round_up(0.0010351)
    0.0011
    """
    scale = 10.0 ** (np.floor(np.log10(value)) - 1)
    return float(np.ceil(value / scale) * scale)


def check_kernel_request(kernel):
    """The ``kernel`` option of :func:`design` checked: "shortest", "exact" or seconds > 0.

    >>> check_kernel_request("exact"), check_kernel_request(2)
    ('exact', 2.0)
    """
    if isinstance(kernel, str) and kernel in KERNEL_WORDS:
        return kernel
    if kernel is None or isinstance(kernel, str):
        raise ValueError(
            f"{kernel!r} is not a choice for 'kernel': use 'shortest' (the shortest "
            "kernel within tolerance), 'exact' (no truncation) or a length in seconds."
        )
    return check_positive("kernel", kernel)


def phase_words(causal: bool, group_delay: float) -> str:
    """The phase response in the words of the methods text and the tables.

    >>> phase_words(False, 0.0)
    'zero-phase (symmetric kernel, no delay)'
    >>> phase_words(True, 0.0123)
    'minimum-phase (causal kernel, delay 12.3 ms)'
    """
    if not causal:
        return "zero-phase (symmetric kernel, no delay)"
    return f"minimum-phase (causal kernel, delay {1000 * group_delay:.3g} ms)"


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


# -- characterization -----------------------------------------------------------
def _characterize(curve, kernel, offset, sfreq, causal, tol, exact) -> Characteristics:
    """Characteristics from the realized gain on an FFT grid at least 8 times
    denser than the kernel (exact values there), with crossings and the
    largest deviations refined on the exact response."""
    nyq = sfreq / 2.0
    n_fft = max(2 * _MIN_DENSE, sfft.next_fast_len(8 * kernel.size, real=True))
    freqs = sfft.rfftfreq(n_fft, 1.0 / sfreq)
    requested = _validated_gain(curve, freqs)
    if exact:
        point_fn, signed = curve, requested
    else:
        def point_fn(f):
            return np.abs(_dtft(kernel, offset, sfreq, np.asarray(f, float), causal))

        spec = _kernel_spectrum(kernel, offset, n_fft, causal)
        signed = np.abs(spec) if causal else spec
    uniform = (freqs, spec if not exact and causal else signed)  # for the time responses
    # the lowest 64 grid steps hold too few points for slopes: add 32 exact
    # points per step there (zoom FFT)
    low = np.linspace(0.0, freqs[64], 2048)[1:]
    low_signed = curve(low) if exact else _zoom_response(kernel, offset, sfreq, freqs[64], causal)
    order = np.argsort(np.concatenate([freqs, low]), kind="stable")
    freqs = np.concatenate([freqs, low])[order]
    requested = np.concatenate([requested, curve(low)])[order]
    signed = np.concatenate([signed, np.abs(low_signed) if causal else low_signed])[order]
    realized = np.abs(signed)

    def grid_fn(f):
        return np.interp(f, freqs, realized)

    half_amp = _crossings(freqs, realized, 0.5, point_fn)
    half_pow = _crossings(freqs, realized, _HALF_POWER, point_fn)
    floor = min(30 * tol, 0.05)
    outer = _outer_edges(half_amp)
    rolloffs = tuple(
        _steepest_slope(e, grid_fn, freqs[1], nyq, floor, half_amp, e in outer)
        for e in half_amp
    )
    passband = requested >= _HALF_POWER
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio_db = 20 * np.log10(realized[passband] / requested[passband])
    ripple = float(np.max(np.abs(ratio_db))) if passband.any() else float("nan")
    nulls = _hidden_notches(freqs, realized, half_amp, tol)
    def response(f):  # evenly spaced frequencies: exact by zoom FFT
        return curve(f) if exact else np.abs(_zoom_gain(kernel, offset, sfreq, f, causal))

    stops = _stop_bands(freqs, realized, requested, half_amp, nulls, tol, curve, response)
    atten = min((b.attenuation_db for b in stops), default=float("nan"))
    timing = _edge_timing(*uniform, causal, half_amp, sfreq,
                          [(b.low, b.high) for b in stops if b.kind not in _SKIRTS])
    return Characteristics(
        kind=_kind(half_amp, realized[0], realized[-1], len(nulls)),
        half_amplitude=half_amp,
        half_power=half_pow,
        rolloff=rolloffs,
        passband_ripple_db=ripple,
        stop_bands=stops,
        stopband_attenuation_db=float(atten),
        max_deviation=_max_deviation(freqs, signed, requested, curve, None if exact else point_fn),
        edge_timing=timing,
        group_delay=_group_delay(kernel, offset, sfreq, causal, n_fft),
        length=kernel.size / sfreq,
    )


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


def _max_deviation(freqs, realized, requested, curve, point_fn, n_peaks=3) -> float:
    """Largest |realized - requested|: the grid's largest peaks, each refined
    by a bounded search on the exact response between its grid neighbours."""
    dev = np.abs(realized - requested)
    best = float(dev.max())
    if point_fn is None:  # applied exactly on the record's grid
        return best
    inner = np.flatnonzero((dev[1:-1] >= dev[:-2]) & (dev[1:-1] >= dev[2:])) + 1
    for i in inner[np.argsort(dev[inner])[-n_peaks:]]:
        found = minimize_scalar(
            lambda f: -abs(float(point_fn(np.array([f]))[0]) - float(curve(f))),
            bounds=(freqs[i - 1], freqs[i + 1]), method="bounded",
            options={"xatol": 1e-3 * (freqs[1] - freqs[0])})
        best = max(best, -float(found.fun))
    return best


def _crossings(freqs, gain, level, fn) -> tuple:
    """Edges where ``gain`` crosses ``level``, refined on the exact response."""
    above = gain >= level
    idx = np.flatnonzero(above[1:] != above[:-1])
    edges = []
    for i in idx:
        lo, hi = freqs[i], freqs[i + 1]
        hz = lo + (hi - lo) * (level - gain[i]) / (gain[i + 1] - gain[i])
        if fn is not None:  # refined on the exact response
            try:
                hz = brentq(lambda f: float(fn(np.array([f]))[0]) - level, lo, hi, xtol=1e-9)
            except ValueError:
                pass
        edges.append(EdgeFrequency(hz, "rising" if above[i + 1] else "falling"))
    return tuple(edges)


def _steepest_slope(edge, fn, fmin, fmax, floor, edges, hull) -> float:
    """Steepest dB/octave slope from ``edge`` into its stop side, down to ``floor``.

    With ``hull`` (outer edges of a pass band), the slope is taken on the
    least concave majorant of dB against octaves over the points above the
    floor, which bridges notches inside the stop band and equals the gain
    itself for a Butterworth-like transition (concave in log frequency).
    """
    others = [float(e) for e in edges if e is not edge]
    if edge.direction == "falling":
        end = min([o for o in others if o > edge] + [fmax])
    else:
        end = max([o for o in others if o < edge] + [fmin])
    n_oct = abs(np.log2(end / float(edge)))
    f = np.geomspace(float(edge), end, max(64, int(min(n_oct, 1.0) * 2000), int(n_oct * 200)))
    db = 20 * np.log10(np.maximum(fn(f), 1e-300))
    octaves = np.abs(np.log2(f / float(edge)))
    above = db >= 20 * np.log10(floor)
    if not hull:
        above = np.cumprod(above).astype(bool)
    octaves, db = octaves[above], db[above]
    if hull:
        idx = _upper_hull(octaves, db)
        octaves, db = octaves[idx], db[idx]
    if db.size < 2:
        return float("nan")
    return float(np.max(np.abs(np.diff(db) / np.diff(octaves))))


def _upper_hull(x, y) -> list:
    """Indices of the upper convex hull of points with increasing ``x``."""
    out = []
    for i in range(x.size):
        while len(out) >= 2:
            a, b = out[-2], out[-1]
            cross = (x[b] - x[a]) * (y[i] - y[a]) - (y[b] - y[a]) * (x[i] - x[a])
            if cross < 0:
                break
            out.pop()
        out.append(i)
    return out


def _outer_edges(edges) -> set:
    """The leading rising edge and the trailing falling edge, where present."""
    return {edges[i] for i in _outer_indices([e.direction for e in edges])}


def _outer_indices(directions) -> dict:
    """Index -> "high-pass"/"low-pass" for the pass band's outer edges."""
    out = {}
    if directions and directions[0] == "rising":
        out[0] = "high-pass"
    if directions and directions[-1] == "falling":
        out[len(directions) - 1] = "low-pass"
    return out


def passband_edges(realized: dict) -> list:
    """The pass band's outer edges of a characteristics dict (``to_dict()``
    or a recorded step's ``realized``): ``[(name, hz, half-power hz or None,
    roll-off or None)]`` for the leading rising ("high-pass") and trailing
    falling ("low-pass") half-amplitude edges.

    Examples
    --------
    >>> passband_edges({"half_amplitude": [1.0, 49.0, 51.0], "half_power": [1.3, 48.7, 51.3],
    ...                 "half_amplitude_direction": ["rising", "falling", "rising"],
    ...                 "rolloff": [12.0, 900.0, 900.0]})
    [('high-pass', 1.0, 1.3, 12.0)]
    """
    edges = list(realized.get("half_amplitude", []))
    half_power, rolloff = list(realized.get("half_power", [])), list(realized.get("rolloff", []))
    outer = _outer_indices(list(realized.get("half_amplitude_direction", [])))
    return [(name, edges[i], half_power[i] if len(half_power) == len(edges) else None,
             rolloff[i] if i < len(rolloff) else None) for i, name in outer.items()]


def removed_bands(realized: dict) -> list:
    """Notches and band-stops (not the skirts beyond the pass band) of a
    characteristics dict, as ``(low, high, attenuation_db)``.

    >>> removed_bands({"stop_bands": [{"low": 49.0, "high": 51.0, "attenuation_db": 60.0,
    ...                                 "kind": "notch"}]})
    [(49.0, 51.0, 60.0)]
    """
    return [(b["low"], b["high"], b["attenuation_db"]) for b in realized.get("stop_bands", [])
            if b["kind"] not in _SKIRTS]


def stop_band_words(band: dict) -> str:
    """One stop band in words.

    >>> stop_band_words({"low": 49.0, "high": 51.0, "attenuation_db": 60.2, "kind": "notch"})
    '49-51 Hz (notch), at least 60.2 dB down'
    """
    return (f"{band['low']:.4g}-{band['high']:.4g} Hz ({band['kind']}), at least "
            f"{band['attenuation_db']:.1f} dB down")


def timing_words(timing: dict) -> str:
    """One edge's time behaviour in words (see :class:`EdgeTiming`).

    >>> timing_words({"edge": "low-pass", "cutoff": 40.0, "settling_s": None,
    ...               "opposite_pct": None, "decay_s": 0.028, "overshoot_pct": 8.91})
    'low-pass edge (40 Hz): impulse response below 1 % of its peak after 28 ms, step overshoot 8.9 %'
    """
    head = f"{timing['edge']} edge ({timing['cutoff']:.3g} Hz): "
    if timing["edge"] == "high-pass":
        return (head + f"step response within 1 % of its final value after "
                f"{_seconds_words(timing['settling_s'])}, largest opposite-polarity excursion "
                f"{timing['opposite_pct']:.1f} % of the step")
    return (head + f"impulse response below 1 % of its peak after "
            f"{_seconds_words(timing['decay_s'])}, step overshoot {timing['overshoot_pct']:.1f} %")


def _seconds_words(seconds: float) -> str:
    return f"{seconds * 1000:.3g} ms" if seconds < 1 else f"{seconds:.3g} s"


def _hidden_notches(freqs, gain, edges, tol) -> np.ndarray:
    """Indices of narrow nulls inside stop bands: local minima 20 dB below the
    gain 10 % of their frequency away on both sides, where that gain stands
    above 3 x tolerance (so the kernel's error ripple and the foot of a steep
    edge are not nulls), outside the stop bands between half-amplitude edges
    (those are listed by their edges)."""
    inner = np.flatnonzero((gain[1:-1] < gain[:-2]) & (gain[1:-1] <= gain[2:]) & (gain[1:-1] < 0.5)) + 1
    lo = np.minimum(np.searchsorted(freqs, 0.9 * freqs[inner]), inner - 1)
    hi = np.minimum(np.searchsorted(freqs, 1.1 * freqs[inner], side="right"), freqs.size - 1)
    beside = np.minimum(gain[lo], gain[hi])
    nulls = inner[(beside > 3 * tol) & (gain[inner] < 0.1 * beside)]
    pairs = [(float(x), float(y)) for x, y in zip(edges[:-1], edges[1:]) if x.direction == "falling"]
    inside_pair = np.zeros(nulls.size, dtype=bool)
    for x, y in pairs:
        inside_pair |= (freqs[nulls] > x) & (freqs[nulls] < y)
    return nulls[~inside_pair]


def _stop_bands(freqs, realized, requested, edges, nulls, tol, curve, response) -> tuple:
    """Every stop band (see :class:`StopBand`), in order of frequency;
    ``response(freqs)`` is the exact realized gain, for a finer look."""
    bounds = [0.0] + [float(e) for e in edges] + [float(freqs[-1])]
    below = [realized[0] < 0.5] + [e.direction == "falling" for e in edges]
    bands = []
    for i, (a, b) in enumerate(zip(bounds[:-1], bounds[1:])):
        if not below[i] or b <= a:
            continue
        kind = ("below the high-pass edge" if i == 0 else "above the low-pass edge"
                if i == len(edges) else "notch" if (b - a) <= 0.1 * (a + b) / 2 else "band-stop")
        bands.append((a, b, kind))
    for i in nulls:  # notches inside wider stop bands, limited at half the gain beside them
        level = 0.5 * min(realized[np.searchsorted(freqs, 0.9 * freqs[i])],
                          realized[min(np.searchsorted(freqs, 1.1 * freqs[i]), freqs.size - 1)])
        left = i - np.argmax(realized[i::-1] >= level)
        right = i + np.argmax(realized[i:] >= level)
        band = (float(freqs[left]), float(freqs[right]), "notch inside a stop band")
        if band not in bands:  # two minima of one notch give the same band
            bands.append(band)
    # a band's floor leaves out its notches and their sides (a width either side)
    inner_notches = [(2 * a - b, 2 * b - a) for a, b, kind in bands
                     if kind == "notch inside a stop band"]
    found = []
    for a, b, kind in sorted(bands):
        inside = (freqs >= a) & (freqs <= b)
        if kind != "notch inside a stop band":  # its notches are listed apart
            for lo, hi in inner_notches:
                inside &= ~((freqs >= lo) & (freqs <= hi))
        if not inside.any():
            continue
        level = max(tol, requested[inside].min() * _FLOOR_SPAN)
        floor = inside & (requested <= level)
        found.append((a, b, kind, floor if floor.any() else inside, level))
    # the grid can step over the floor's highest point: look again 16 x finer around it
    out = []
    for a, b, kind, where, level in found:
        points = _around(freqs, where)
        near = response(points)
        keep = (points >= a) & (points <= b) & (curve(points) <= level)
        top = max(realized[where].max(), near[keep].max() if keep.any() else 0.0)
        out.append(StopBand(a, b, float(-20 * np.log10(max(top, 1e-300))), kind))
    return tuple(out)


def _around(freqs, where, per_step=16, at_most=4096) -> np.ndarray:  # evenly spaced
    """Frequencies ``per_step`` times finer than the grid over the selected
    points and one grid step beyond (at most ``at_most`` of them)."""
    idx = np.flatnonzero(where)
    lo, hi = freqs[max(idx[0] - 1, 0)], freqs[min(idx[-1] + 1, freqs.size - 1)]
    steps = np.searchsorted(freqs, hi) - np.searchsorted(freqs, lo) + 1
    return np.linspace(lo, hi, int(min(at_most, per_step * steps)))


def _edge_timing(freqs, spectrum, causal, edges, sfreq, removed) -> tuple:
    """:class:`EdgeTiming` of the pass band's high-pass and low-pass edges.

    ``spectrum`` is the response on the uniform rfft grid ``freqs`` (real
    for zero phase; complex or magnitude for minimum phase). The ``removed``
    bands (notches, band-stops: listed as stop bands, with their own
    ringing) are bridged by straight lines, so each edge is timed alone.
    """
    outer = _outer_indices([e.direction for e in edges])
    named = {name: float(edges[i]) for i, name in outer.items()}
    split = np.sqrt(np.prod(list(named.values()))) if len(named) == 2 else None
    n = 2 * (freqs.size - 1)
    out = []
    for name, cutoff in named.items():
        part = spectrum.real.copy() if not causal else np.abs(spectrum)
        for lo, hi in removed:  # with a width either side: a notch's skirts ring too
            i, j = np.searchsorted(freqs, 2 * lo - hi) - 1, np.searchsorted(freqs, 2 * hi - lo) + 1
            i, j = max(i, 0), min(j, freqs.size - 1)
            part[i : j + 1] = np.linspace(part[i], part[j], j - i + 1)
        if split is not None:
            ref = part[np.searchsorted(freqs, split)]
            keep = freqs < split if name == "high-pass" else freqs >= split
            part = np.where(keep, part / ref, 1.0)
        if causal:
            impulse = sfft.irfft(_cepstral_minimum_phase(np.abs(part), n), n)
            times = np.arange(n) / sfreq
        else:
            impulse = np.roll(sfft.irfft(part, n), n // 2)
            times = (np.arange(n) - n // 2) / sfreq
        out.append(_timing_of(name, cutoff, times, impulse))
    return tuple(out)


def _timing_of(name, cutoff, times, impulse) -> EdgeTiming:
    """Settling and opposite excursion (high-pass), decay and overshoot (low-pass)."""
    step = np.cumsum(impulse)
    final = step[-1]
    after = times >= 0
    if name == "high-pass":
        late = np.flatnonzero(after & (np.abs(step - final) > _TIME_LEVEL))
        settling = float(times[late[-1]]) if late.size else 0.0
        return EdgeTiming(name, cutoff, settling, float(max(0.0, -step.min()) * 100), None, None)
    envelope = np.abs(impulse) / np.abs(impulse).max()
    loud = np.flatnonzero(after & (envelope >= _TIME_LEVEL))
    decay = float(times[loud[-1]]) if loud.size else 0.0
    return EdgeTiming(name, cutoff, None, None, decay, float(max(0.0, step.max() - final) * 100))


def _kind(edges, gain_dc, gain_nyq, hidden_notches=0) -> str:
    """Name the realized shape from its half-amplitude edges and hidden nulls."""
    if not edges:
        return "notch" if hidden_notches else "custom"
    dirs = [e.direction for e in edges]
    parts, inner = [], list(edges)
    if gain_dc < 0.5 and dirs[0] == "rising":
        parts.append("high-pass")
        inner = inner[1:]
    if gain_nyq < 0.5 and dirs[-1] == "falling":
        parts.append("low-pass")
        inner = inner[:-1]
    if parts == ["high-pass", "low-pass"]:
        parts = ["band-pass"]
    if len(inner) % 2 or any(e.direction != d for e, d in zip(inner, ["falling", "rising"] * len(inner))):
        return "custom"
    stops = []
    for a, b in zip(inner[::2], inner[1::2]):
        stops.append("notch" if (b - a) <= 0.1 * (a + b) / 2 else "band-stop")
    if hidden_notches:
        stops.append("notch")
    for kind in ("band-stop", "notch"):
        if kind in stops:
            parts.append(kind)
    return " + ".join(parts)


def _group_delay(kernel, offset, sfreq, causal, n_fft) -> float:
    if not causal:
        return 0.0
    t = (np.arange(kernel.size) - offset).astype(float)
    h = sfft.rfft(kernel, n_fft)
    th = sfft.rfft(t * kernel, n_fft)
    mag2 = np.abs(h) ** 2
    passband = mag2 >= 0.5
    gd = np.real(th[passband] / h[passband]) / sfreq
    return float(np.sum(gd * mag2[passband]) / np.sum(mag2[passband]))

"""A gain curve realized at a sampling rate: the FilterDesign users hold.

Vocabulary: the *request* is the gain curve; the *kernel* is the finite
impulse response that runs (made in :mod:`gainshape.realize`); the
*realized gain* is the kernel's magnitude response, measured in
:mod:`gainshape.measure`; *support* is the number of samples the kernel
reaches on each side of t = 0, which is how much padding the engine needs.
"""

from __future__ import annotations

import html
import threading
from collections import OrderedDict
from dataclasses import dataclass, field

import numpy as np
import scipy.fft as sfft

from ._checks import DEFAULT_TOLERANCE, check_bool, check_positive, check_tolerance, warn
from .curves import GainCurve
from .lengths import long_kernel_cause
from .measure import (Characteristics, characterize, db_floor, hz_range, max_deviation, passband_edges,
                      removed_bands, stop_band_words, timing_words)
from .rates import TwoRates, two_rates
from .realize import (KernelResponse, _kernel_spectrum, _minimum_phase_spectrum, _Realizer,
                      _requested_taps, _validated_gain, cached_spectrum)

__all__ = ["design", "FilterDesign"]

KERNEL_WORDS = ("shortest", "exact")  # the words design's ``kernel`` accepts besides seconds
_LONG_KERNEL_SECONDS = 60.0  # longer kernels get a note
_KEPT_DESIGNS = 32  # designs kept for reuse, the most recently used first ...
_KEPT_KERNEL_BYTES = 64 * 2**20  # ... while their kernels take at most this much


@dataclass(frozen=True, slots=True)
class FilterDesign:  # numpydoc ignore=PR01
    """A gain curve realized as a finite kernel at one sampling rate.

    Made by :func:`design`; see there.

    Attributes
    ----------
    curve : GainCurve
        The request, with features above Nyquist dropped (see ``notes``).
    sfreq : float
        Sampling rate in Hz.
    causal : bool
        True for a minimum-phase kernel, False for a zero-phase one.
    kernel_request : "shortest" | "exact" | float
        What :func:`design` was asked for (a length in seconds, or a word).
    tolerance : float
        Largest accepted gain deviation.
    kernel : ndarray
        The finite impulse response (read-only); ``kernel[offset]`` is t = 0.
    offset : int
        Index of the kernel sample at t = 0.
    characteristics : Characteristics
        The realized filter in the field's terms.
    notes : tuple of str
        What :func:`design` changed or wants the user to know.
    rates : TwoRates or None
        How a curve with a slow edge far below its fast one runs in two
        parts, the slow one at a reduced rate (see :mod:`gainshape.rates`);
        None when the whole kernel runs at ``sfreq``. ``kernel`` is then
        the pair's equivalent kernel.

    See Also
    --------
    design, apply

    Examples
    --------
    >>> from gainshape import lowpass
    >>> f = design(lowpass(30.0), 250.0)
    >>> f.characteristics.kind, bool(f.kernel[f.offset] == f.kernel.max())
    ('low-pass', True)
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
    rates: TwoRates | None = None
    _spectra: dict = field(default_factory=dict, repr=False, compare=False)

    @property
    def exact(self) -> bool:
        """True when the request is applied on each record's own grid (``kernel="exact"``).

        See Also
        --------
        design

        Examples
        --------
        >>> from gainshape import lowpass
        >>> f = design(lowpass(30.0), 250.0)
        >>> f.exact
        False
        """
        return self.kernel_request == "exact"

    @property
    def phase_words(self) -> str:
        """The phase response in words, as the methods paragraph states it.

        See Also
        --------
        methods_text

        Examples
        --------
        >>> from gainshape import lowpass
        >>> f = design(lowpass(30.0), 250.0)
        >>> f.phase_words
        'zero-phase (symmetric kernel, no delay)'
        """
        return phase_words(self.causal, self.characteristics.group_delay)

    @property
    def times(self) -> np.ndarray:
        """Kernel sample times in seconds (0 at the kernel's time origin).

        See Also
        --------
        FilterDesign.plot

        Examples
        --------
        >>> from gainshape import lowpass
        >>> f = design(lowpass(30.0), 250.0)
        >>> float(f.times[f.offset])
        0.0
        """
        return (np.arange(self.kernel.size) - self.offset) / self.sfreq

    @property
    def support(self) -> int:
        """Samples of padding the kernel needs on each side of the data.

        See Also
        --------
        apply

        Examples
        --------
        >>> from gainshape import lowpass
        >>> f = design(lowpass(30.0), 250.0)
        >>> f.support == f.offset  # a symmetric kernel reaches as far on both sides
        True
        """
        return int(max(self.offset, self.kernel.size - 1 - self.offset))

    def requested_gain(self, freqs) -> np.ndarray:
        """The curve's gain at ``freqs`` (Hz).

        Parameters
        ----------
        freqs : float or array-like of float
            Frequencies in Hz.

        Returns
        -------
        ndarray
            The requested gain there.

        See Also
        --------
        FilterDesign.realized_gain

        Examples
        --------
        >>> from gainshape import lowpass
        >>> f = design(lowpass(30.0), 250.0)
        >>> float(f.requested_gain(30.0))
        0.5
        """
        return self.curve(freqs)

    def realized_gain(self, freqs) -> np.ndarray:
        """Magnitude of the response that runs, at ``freqs`` (Hz).

        With ``kernel="exact"`` the request is applied on each record's own
        frequency grid, so the realized gain is the request.

        Parameters
        ----------
        freqs : float or array-like of float
            Frequencies in Hz.

        Returns
        -------
        ndarray
            The realized gain there (exact: the kernel's DTFT, interpolated
            on an FFT grid within 3e-11 of its L1 norm).

        See Also
        --------
        FilterDesign.requested_gain

        Examples
        --------
        >>> from gainshape import lowpass
        >>> f = design(lowpass(30.0), 250.0)
        >>> abs(float(f.realized_gain(30.0)) - 0.5) < f.tolerance
        True
        """
        if self.exact:
            return self.requested_gain(freqs)
        response = KernelResponse(self.kernel, self.offset, self.sfreq, self.causal)
        return np.abs(response.gain_at(freqs))

    def spectrum(self, n_fft: int, dtype=np.float64) -> np.ndarray:
        """Response on the ``rfft`` grid of ``n_fft`` points (for the engine).

        Real for zero phase, complex for minimum phase, in single precision
        for ``dtype=float32`` data; cached per size and precision.

        Parameters
        ----------
        n_fft : int
            FFT length.
        dtype : dtype
            The data's precision (float32 or float64).

        Returns
        -------
        ndarray
            ``n_fft // 2 + 1`` values, t = 0 at the first sample.

        See Also
        --------
        FilterDesign.realized_gain

        Examples
        --------
        >>> from gainshape import lowpass
        >>> f = design(lowpass(30.0), 250.0)
        >>> f.spectrum(4096).shape
        (2049,)
        """
        return cached_spectrum(self._spectra, n_fft, dtype, self._compute_spectrum)

    def _compute_spectrum(self, n_fft: int) -> np.ndarray:
        if self.exact:
            gain = _validated_gain(self.curve, sfft.rfftfreq(n_fft, 1.0 / self.sfreq))
            if not self.causal:
                return gain
            return _minimum_phase_spectrum(self.curve, gain, n_fft, self.sfreq, self.tolerance)
        return _kernel_spectrum(self.kernel, self.offset, n_fft, self.causal)

    def plot(self, *, fmin=None, show=True):
        """Requested and realized gain (linear and dB), impulse and step response.

        Parameters
        ----------
        fmin : float | None
            Lowest frequency drawn (Hz); by default a decade below the lowest edge.
        show : bool
            Call ``plt.show()``.

        Returns
        -------
        matplotlib.figure.Figure
            The figure.

        See Also
        --------
        plot_observed_gain

        Examples
        --------
        >>> from gainshape import lowpass
        >>> f = design(lowpass(30.0), 250.0)
        >>> fig = f.plot(show=False)
        """
        from .viz import plot_design

        return plot_design(self, fmin=fmin, show=show)

    def describe(self) -> str:
        """One line: the kind, cutoffs, roll-off, phase response and length.

        Returns
        -------
        str
            The line (also the design's ``repr``).

        See Also
        --------
        FilterDesign.summary

        Examples
        --------
        >>> from gainshape import lowpass
        >>> f = design(lowpass(30.0), 250.0)
        >>> f.describe().split("; ")[0]
        'low-pass'
        """
        c = self.characteristics
        realized = c.to_dict()
        passband, stops = passband_edges(realized), removed_bands(realized)
        parts = [c.kind]
        if passband:
            parts.append("half-amplitude " + ", ".join(f"{float(hz):.3g}" for _, hz, _, _ in passband)
                         + " Hz")
            parts.append("roll-off " + ", ".join(f"{r:.1f}" for _, _, _, r in passband) + " dB/octave")
        if stops:
            parts.append("stop bands " + ", ".join(hz_range(a, b) for a, b, _ in stops)
                         + " Hz")
        if not c.half_amplitude:
            parts.append("no half-amplitude point")
        kind = "minimum-phase" if self.causal else "zero-phase"
        return "; ".join(parts + [kind, f"{c.length:.3g} s at {self.sfreq:g} Hz"])

    def summary(self) -> list[tuple[str, str]]:
        """The characteristics as (label, value) rows of text, for tables.

        Returns
        -------
        list of (str, str)
            One row per figure, in the order of the notebook table.

        See Also
        --------
        FilterDesign.describe

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
            ("stopband attenuation", f"{db_floor(c.stopband_attenuation_db)} dB (the least of any "
                                     "stop band, over its stated range)"),
            ("largest gain deviation", f"{c.max_deviation:.2g} (tolerance {self.tolerance:g})"),
            *[("in time", timing_words(t)) for t in realized["edge_timing"]],
            ("phase response", self.phase_words),
            ("kernel length", f"{c.length:.4g} s ({self.kernel.size} samples)"),
            ("truncation", truncation),
            ("sampling rate", f"{self.sfreq:g} Hz"),
            ("rates", rate_words(self.rates.to_dict()) if self.rates else "one (the whole kernel at the sampling rate)"),
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
    tolerance: float = DEFAULT_TOLERANCE,
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
        The kernel and its measured characteristics.

    Raises
    ------
    ValueError
        If the request cannot be realized within ``tolerance`` by any kernel
        the design allows, or removes everything.

    See Also
    --------
    apply, GainCurve

    References
    ----------
    Oppenheim AV, Schafer RW (2010). Discrete-Time Signal Processing, 3rd
    ed. Pearson: the minimum-phase kernel through the real cepstrum.

    Widmann A, Schroeger E, Maess B (2015). Digital filter design for
    electrophysiological data - a practical approach. J Neurosci Methods
    250:34-46.

    Examples
    --------
    >>> from gainshape import lowpass
    >>> f = design(lowpass(30.0, rolloff=24.0), 500.0)
    >>> round(float(f.characteristics.half_amplitude[0]), 1)
    30.0
    """
    if not isinstance(curve, GainCurve):
        raise TypeError(
            "The 'curve' parameter takes a GainCurve (see gainshape.lowpass, "
            f"GainCurve.from_points); a {type(curve).__name__} was given."
        )
    sfreq = check_positive("sfreq", sfreq)
    causal = check_bool("causal", causal)
    tolerance = check_tolerance(tolerance)
    kernel_request = check_kernel_request(kernel)
    # curves with a recipe are equal (and hash alike) when their recipes are
    key = None if curve.recipe is None else (curve, sfreq, causal, kernel_request, tolerance)
    kept = _DESIGNS.get(key)
    if kept is None:
        kept = _realized(curve, sfreq, causal, kernel_request, tolerance)
        _DESIGNS.put(key, kept)
    realized, said = kept
    for message in said:  # a reused design says again what it said when it was made
        warn(message)
    return realized


def _realized(curve, sfreq, causal, kernel_request, tolerance) -> tuple:
    """The design of a checked request and the warnings it has for the user."""
    said = []
    exact = kernel_request == "exact"
    curve, notes = curve.below_nyquist(sfreq / 2.0)
    said += _not_flat(curve, sfreq)

    fixed = not isinstance(kernel_request, str)
    rates = None if (fixed or exact or causal) else two_rates(curve, sfreq, tolerance)
    if rates is not None:
        taps, offset = rates.equivalent_kernel()
        response = KernelResponse(taps, offset, sfreq, causal)
        deviation = max_deviation(curve, response)
        if deviation + rates.aliasing > tolerance:
            rates = None  # the split does not meet the request: one rate
    if rates is None:
        taps, offset, response, deviation = _one_rate(curve, sfreq, causal, kernel_request,
                                                      tolerance)
    chars = characterize(curve, response, tolerance, exact, deviation)
    taps.setflags(write=False)
    if not fixed and chars.max_deviation > tolerance:
        said.append(
            f"The longest kernel this design allows ({taps.size / sfreq:.4g} s) realizes the "
            f"request only to within {chars.max_deviation:.3g} (tolerance {tolerance:g}); "
            f"pass tolerance={_round_up(chars.max_deviation)} to accept it, or use a gentler "
            "roll-off or a wider notch."
        )
    if fixed and chars.max_deviation > tolerance:
        try:
            shortest = _Realizer(curve, sfreq, causal, tolerance).shortest()[0]
            fix = f"use kernel='shortest' ({shortest.size / sfreq:.3g} s) to meet it."
        except ValueError:
            fix = "no kernel length meets it: the request has a jump or a kink."
        said.append(
            f"A kernel of {taps.size / sfreq:.3g} s realizes the request only to "
            f"within {chars.max_deviation:.3g} (tolerance {tolerance:g}); {fix}"
        )
    if chars.length > _LONG_KERNEL_SECONDS:
        cause = long_kernel_cause(curve, chars, sfreq)
        why = f", because of {cause.what}" if cause else ""
        notes += (f"the kernel is {chars.length:.0f} s long (over {_LONG_KERNEL_SECONDS:g} s)"
                  f"{why}: records shorter than a few times that are mostly padding where it "
                  f"reaches; {cause.remedy if cause else 'a gentler request shortens it'}",)
    realized = FilterDesign(curve, sfreq, causal, kernel_request, tolerance, taps, offset, chars,
                            notes, rates)
    return realized, tuple(said)


def _one_rate(curve, sfreq, causal, kernel_request, tolerance) -> tuple:
    """Kernel, offset, response and deviation of the request run at ``sfreq`` alone."""
    fixed, exact = not isinstance(kernel_request, str), kernel_request == "exact"
    n_taps = _requested_taps(kernel_request, sfreq) if fixed else None
    realizer = _Realizer(curve, sfreq, causal, tolerance, min_n=2 * (n_taps or 0))
    if n_taps is None:
        taps, offset = realizer.shortest()
    else:
        taps, offset = realizer.of_length(n_taps)
    response = KernelResponse(taps, offset, sfreq, causal)
    deviation = None if exact else max_deviation(curve, response)
    for attempt in range(3):
        if fixed or exact or deviation <= tolerance or taps.size >= realizer.n // 2:
            break
        # the search grid missed a peak the finer check found: lengthen a little,
        # and at the third attempt to the longest kernel the grid allows
        longer = int(taps.size * 1.05) + 2 if attempt < 2 else realizer.n // 2
        taps, offset = realizer.of_length(longer)
        response = KernelResponse(taps, offset, sfreq, causal)
        deviation = max_deviation(curve, response)
    return taps, offset, response, deviation


class _DesignStore:
    """The most recently used designs, by request, within a count and a size.

    >>> store = _DesignStore(count=2, kernel_bytes=10**6)
    >>> store.put(None, "never kept"); store.get(None) is None
    True
    """

    def __init__(self, count: int, kernel_bytes: int):
        self.count, self.kernel_bytes = count, kernel_bytes
        self.kept, self.lock = OrderedDict(), threading.Lock()

    def get(self, key):
        with self.lock:
            if key is None or key not in self.kept:
                return None
            self.kept.move_to_end(key)
            return self.kept[key]

    def put(self, key, value) -> None:
        if key is None:
            return
        with self.lock:
            self.kept[key] = value
            self.kept.move_to_end(key)
            while len(self.kept) > self.count or (
                    len(self.kept) > 1 and sum(v[0].kernel.nbytes for v in self.kept.values())
                    > self.kernel_bytes):
                self.kept.popitem(last=False)


_DESIGNS = _DesignStore(_KEPT_DESIGNS, _KEPT_KERNEL_BYTES)


def _not_flat(curve, sfreq) -> list:
    """Refuse a request that removes everything; say so of one that only scales."""
    gain = _validated_gain(curve, np.linspace(0.0, sfreq / 2.0, 4097))
    if gain.max() == 0.0:
        raise ValueError(
            f"The gain curve {curve!r} is 0 from 0 Hz to Nyquist ({sfreq / 2:g} Hz): it "
            "would remove everything. Draw gains above 0 where the signal should pass."
        )
    if np.ptp(gain) == 0.0:
        return [f"The gain curve {curve!r} is constant ({gain[0]:g}) from 0 Hz to Nyquist "
                f"({sfreq / 2:g} Hz) at this rate: the filter only scales the data. Are its "
                "features above Nyquist?"]
    return []


def _round_up(value: float) -> float:
    """``value`` rounded up to two significant digits (a tolerance to suggest).

    >>> _round_up(0.0010351)
    0.0011
    """
    scale = 10.0 ** (np.floor(np.log10(value)) - 1)
    return float(np.ceil(value / scale) * scale)


def check_filter(filt) -> None:
    """TypeError unless ``filt`` is a GainCurve or a FilterDesign (what apply and audit take).

    >>> check_filter("lowpass")
    Traceback (most recent call last):
    ...
    TypeError: The 'filt' parameter takes a GainCurve or a FilterDesign; a str was given.
    """
    if not isinstance(filt, (GainCurve, FilterDesign)):
        raise TypeError(
            f"The 'filt' parameter takes a GainCurve or a FilterDesign; a {type(filt).__name__} "
            "was given."
        )


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


def rate_words(two_rates: dict) -> str:
    """How a filter in two rates ran, in words (from :meth:`TwoRates.to_dict`).

    Examples
    --------
    >>> rate_words({"split_hz": 2.0, "reduced_rate_hz": 16.13, "factor": 62,
    ...             "full_rate_kernel_samples": 203, "aliasing_bound": 1.6e-05})[:44]
    'two: below 2 Hz at 16.13 Hz (decimated by 62'
    """
    r = two_rates
    return (f"two: below {r['split_hz']:.3g} Hz at {r['reduced_rate_hz']:.4g} Hz (decimated by "
            f"{r['factor']} after a triangular anti-aliasing filter, interpolated back "
            f"linearly), the rest by a {r['full_rate_kernel_samples']}-sample kernel at the full "
            f"rate; aliasing at most {r['aliasing_bound']:.2g}")


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

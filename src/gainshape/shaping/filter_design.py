"""FilterDesign: a gain curve realized as a kernel at one sampling rate, with its measured
characteristics, what users hold and apply."""

from __future__ import annotations

import html
import warnings
from dataclasses import dataclass, field
from typing import TYPE_CHECKING

import numpy as np
import scipy.fft as sfft
from numpy.typing import ArrayLike, DTypeLike

from .._showing import plotting_function
from .._types import KernelRequest
from .curves import GainCurve
from .measure import Characteristics, passband_edges, removed_bands
from .rates import TwoRates
from .realize import (
    cached_spectrum, kernel_spectrum, KernelResponse, minimum_phase_spectrum, validated_gain,
)
from .words import (
    db_floor, hz_range, phase_label, phase_words, rate_words, stop_band_words, timing_words,
)

if TYPE_CHECKING:  # for annotations only: imported when something is drawn
    from matplotlib.figure import Figure


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
    taps : ndarray
        The finite impulse response (read-only); ``taps[offset]`` is t = 0.
        (Called ``kernel`` before 0.2; that name still reads it, with a
        FutureWarning.)
    offset : int
        Index of the kernel sample at t = 0.
    characteristics : Characteristics
        The realized filter in the field's terms.
    notes : tuple of str
        What :func:`design` changed or wants the user to know.
    rates : TwoRates or None
        How a curve with a slow edge far below its fast one runs in two
        parts, the slow one at a reduced rate (see :mod:`gainshape.shaping.rates`);
        None when the whole kernel runs at ``sfreq``. ``taps`` are then
        the pair's equivalent kernel.

    See Also
    --------
    design, apply

    Examples
    --------
    >>> from gainshape import lowpass
    >>> f = design(lowpass(30.0), 250.0)
    >>> f.characteristics.kind, bool(f.taps[f.offset] == f.taps.max())
    ('low-pass', True)
    """

    curve: GainCurve
    sfreq: float
    causal: bool
    kernel_request: KernelRequest
    tolerance: float
    taps: np.ndarray
    offset: int
    characteristics: Characteristics
    notes: tuple = ()
    rates: TwoRates | None = None
    _spectra: dict = field(default_factory=dict, repr=False, compare=False)

    @property
    def kernel(self) -> np.ndarray:
        """The taps, under their name before 0.2 (``kernel`` is the request's name).

        See Also
        --------
        design

        Examples
        --------
        >>> import warnings
        >>> f = design(lowpass(30.0), 250.0)
        >>> with warnings.catch_warnings(record=True) as said:
        ...     warnings.simplefilter("always")
        ...     same = f.kernel is f.taps
        >>> same, said[0].category.__name__
        (True, 'FutureWarning')
        """
        warnings.warn("FilterDesign.kernel is now FilterDesign.taps (the realized impulse "
                      "response); 'kernel' names the request, as in design(..., kernel=...). "
                      "The old name goes in a later release.", FutureWarning, stacklevel=2)
        return self.taps

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
        return (np.arange(self.taps.size) - self.offset) / self.sfreq

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
        return int(max(self.offset, self.taps.size - 1 - self.offset))

    def requested_gain(self, freqs: ArrayLike) -> np.ndarray:
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

    def realized_gain(self, freqs: ArrayLike) -> np.ndarray:
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
        response = KernelResponse(self.taps, self.offset, self.sfreq, self.causal)
        return np.abs(response.gain_at(freqs))

    def spectrum(self, n_fft: int, dtype: DTypeLike = np.float64) -> np.ndarray:
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
            gain = validated_gain(self.curve, sfft.rfftfreq(n_fft, 1.0 / self.sfreq))
            if not self.causal:
                return gain
            return minimum_phase_spectrum(self.curve, gain, n_fft, self.sfreq, self.tolerance)
        return kernel_spectrum(self.taps, self.offset, n_fft, self.causal)

    def plot(self, *, fmin: float | None = None, show: bool = True) -> Figure:
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
        return plotting_function("plot_design")(self, fmin=fmin, show=show)

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
        return "; ".join(parts + [phase_label(self.causal), f"{c.length:.3g} s at {self.sfreq:g} Hz"])

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
            ("stopband attenuation", f"{db_floor(c.stop_band_attenuation_db)} dB (the least of any "
                                     "stop band, over its stated range)"),
            ("largest gain deviation", f"{c.max_deviation:.2g} (tolerance {self.tolerance:g})"),
            *[("in time", timing_words(t)) for t in realized["edge_timing"]],
            ("phase response", self.phase_words),
            ("kernel length", f"{c.length:.4g} s ({self.taps.size} samples)"),
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

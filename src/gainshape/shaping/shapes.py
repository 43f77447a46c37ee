"""The shape constructors: low-pass, high-pass, band-pass, band-stop, notch and comb
gain curves, each from a few numbers in the field's terms (half-amplitude
frequencies in Hz and roll-off in dB/octave).
"""

from __future__ import annotations

from .curves import GainCurve, curve_from_recipe

__all__ = ["lowpass", "highpass", "bandpass", "bandstop", "notch", "comb"]


def lowpass(cutoff: float, *, rolloff: float = 12.0) -> GainCurve:
    """Low-pass curve: gain 0.5 at ``cutoff``, falling ``rolloff`` dB/octave.

    The shape is ``1 / sqrt(1 + 3 (f / cutoff) ** (2 n))`` with
    ``n = rolloff / 6.0206``: a Butterworth-like magnitude of (possibly
    non-integer) order ``n``, scaled so the gain is exactly 0.5 at ``cutoff``.

    Parameters
    ----------
    cutoff : float
        Half-amplitude (-6 dB) cutoff in Hz.
    rolloff : float
        Steepness of the edge in dB/octave (12 by default).

    Returns
    -------
    GainCurve
        The requested gain, to realize with :func:`gainshape.design`.

    See Also
    --------
    highpass, bandpass, GainCurve.from_points

    Examples
    --------
    >>> float(lowpass(30.0)(30.0))
    0.5
    """
    return curve_from_recipe({"kind": "lowpass", "cutoff": cutoff, "rolloff": rolloff})


def highpass(cutoff: float, *, rolloff: float = 12.0) -> GainCurve:
    """High-pass curve: gain 0.5 at ``cutoff``, rising ``rolloff`` dB/octave.

    The mirror image of :func:`lowpass` in ``cutoff / f``: gain 0 at 0 Hz.

    Parameters
    ----------
    cutoff : float
        Half-amplitude (-6 dB) cutoff in Hz.
    rolloff : float
        Steepness of the edge in dB/octave (12 by default).

    Returns
    -------
    GainCurve
        The requested gain, to realize with :func:`gainshape.design`.

    See Also
    --------
    lowpass, bandpass

    Examples
    --------
    >>> float(highpass(0.1)(0.1)), float(highpass(0.1)(0.0))
    (0.5, 0.0)
    """
    return curve_from_recipe({"kind": "highpass", "cutoff": cutoff, "rolloff": rolloff})


def bandpass(low: float, high: float, *, rolloff: float = 12.0) -> GainCurve:
    """Band-pass curve: ``highpass(low) * lowpass(high)``.

    Parameters
    ----------
    low, high : float
        Half-amplitude (-6 dB) edges in Hz, ``low < high``.
    rolloff : float
        Steepness of the edge in dB/octave (12 by default).

    Returns
    -------
    GainCurve
        The requested gain, to realize with :func:`gainshape.design`.

    See Also
    --------
    bandstop, highpass, lowpass

    Examples
    --------
    >>> g = bandpass(0.1, 30.0)
    >>> round(float(g(0.1)), 4), round(float(g(30.0)), 4)
    (0.5, 0.5)
    """
    return curve_from_recipe({"kind": "bandpass", "low": low, "high": high, "rolloff": rolloff})


def bandstop(low: float, high: float, *, rolloff: float = 12.0) -> GainCurve:
    """Band-stop curve: gain 0.5 at ``low`` and ``high``, 0 at their geometric mean.

    The shape is the band-stop transform of the low-pass prototype
    (``y = |f0**2 - f**2| / ((high - low) f)``, ``f0 = sqrt(low * high)``,
    gain ``y**n / sqrt(y**(2n) + 3)``); ``rolloff`` sets the order ``n`` as it
    would for :func:`lowpass`. Gain is 1 at 0 Hz and far above the band.

    Parameters
    ----------
    low, high : float
        Half-amplitude (-6 dB) edges in Hz, ``low < high``.
    rolloff : float
        Steepness of the edge in dB/octave (12 by default).

    Returns
    -------
    GainCurve
        The requested gain, to realize with :func:`gainshape.design`.

    See Also
    --------
    bandpass, notch

    Examples
    --------
    >>> g = bandstop(45.0, 55.0, rolloff=24.0)
    >>> round(float(g(45.0)), 4), float(g((45.0 * 55.0) ** 0.5)) < 1e-12
    (0.5, True)
    """
    return curve_from_recipe({"kind": "bandstop", "low": low, "high": high, "rolloff": rolloff})


def notch(
    freq: float, *, width: float = 2.0, harmonics: int = 1, rolloff: float = 12.0
) -> GainCurve:
    """Notch curve: gain 0 at ``freq`` (and harmonics), 0.5 at ``freq +- width/2``.

    Parameters
    ----------
    freq : float
        Centre frequency in Hz (e.g. 50 or 60 for mains).
    width : float
        Distance in Hz between the two half-amplitude points of each notch.
    harmonics : int
        Number of notches, counting the fundamental: 3 covers ``freq``,
        ``2 freq`` and ``3 freq``. Those at or above Nyquist are dropped at
        design time, with a note.
    rolloff : float
        Steepness of the sides, as the order of the low-pass prototype
        (``n = rolloff / 6.0206``); larger is narrower at the base.

    Returns
    -------
    GainCurve
        The product of the notches, to realize with :func:`gainshape.design`.

    See Also
    --------
    bandstop

    Examples
    --------
    >>> g = notch(50.0, width=2.0, harmonics=3)
    >>> [round(float(v), 3) for v in g([49.0, 50.0, 100.0, 151.0])]
    [0.5, 0.0, 0.0, 0.5]
    """
    return curve_from_recipe({"kind": "notch", "freq": freq, "width": width,
                              "harmonics": harmonics, "rolloff": rolloff})


def comb(freqs, widths, *, rolloff: float = 24.0, origin: dict | None = None) -> GainCurve:
    """Notches at any frequencies, each with its own width (the product of
    single notches); ``origin`` (JSON-ready) records where they came from.

    >>> g = comb([50.0, 131.3], [0.5, 0.8])
    >>> [round(float(v), 3) for v in g([50.0, 50.25, 131.3, 131.7, 90.0])]
    [0.0, 0.5, 0.0, 0.5, 1.0]
    """
    return curve_from_recipe({"kind": "comb", "freqs": list(freqs), "widths": list(widths),
                              "rolloff": rolloff, "origin": origin})

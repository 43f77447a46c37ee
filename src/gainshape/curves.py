"""Gain curves: gain (0..1) against frequency (Hz), before any sampling rate.

Vocabulary: *gain* is the amplitude ratio output/input at a frequency (1
passes, 0 removes, 0.5 is the half-amplitude point); *rolloff* is the
asymptotic slope of a transition in dB per octave; *cutoff* is always the
half-amplitude frequency. A curve is immutable; its *recipe* is the
JSON-serializable description that rebuilds it exactly.
"""

from __future__ import annotations

import html
import json
from collections.abc import Callable, Mapping
from dataclasses import dataclass

import numpy as np
from scipy.interpolate import CubicHermiteSpline, PchipInterpolator

from ._checks import check_int, check_option, check_positive, warn

__all__ = [
    "GainCurve",
    "lowpass",
    "highpass",
    "bandpass",
    "bandstop",
    "notch",
]

_FORMAT = "gainshape.GainCurve"
_FORMAT_VERSION = 1
_DB_PER_OCTAVE_PER_ORDER = 20.0 * np.log10(2.0)  # 6.0206 dB/octave
_MAX_HARMONICS = 1000  # a 50 Hz comb of 1000 notches reaches 50 kHz


@dataclass(frozen=True, slots=True, eq=False)
class GainCurve:  # numpydoc ignore=PR01
    """A requested gain (0..1) as a function of frequency in Hz.

    Parameters
    ----------
    func : callable
        Vectorized function mapping frequencies (Hz, ndarray, >= 0) to gains
        (>= 0). Negative frequencies are evaluated at their absolute value.

    See Also
    --------
    lowpass, highpass, bandpass, bandstop, notch, design

    Notes
    -----
    Curves made by :func:`lowpass`, :func:`highpass`, :func:`bandpass`,
    :func:`bandstop`, :func:`notch` and :meth:`from_points`, and products and
    complements of them, carry a recipe and round-trip through
    :meth:`to_dict` / :meth:`from_dict`. A curve built from an arbitrary
    callable cannot be serialized.

    Examples
    --------
    >>> import numpy as np
    >>> g = GainCurve(lambda f: np.exp(-f / 40.0))
    >>> float(g(0.0))
    1.0
    """

    func: Callable
    _recipe: str | None = None

    def __post_init__(self):
        if not callable(self.func):
            raise TypeError(
                "The 'func' parameter takes a callable mapping frequencies (Hz) "
                f"to gains; a {type(self.func).__name__} was given."
            )

    # -- construction --------------------------------------------------------
    @classmethod
    def from_points(cls, freqs, gains, *, freq_scale="linear", gain_scale="linear"):
        """Draw a curve through points, interpolated without overshoot.

        Parameters
        ----------
        freqs : array-like of float
            Strictly increasing, finite frequencies in Hz (> 0 when
            ``freq_scale="log"``).
        gains : array-like of float
            Gains at ``freqs``: linear (>= 0) or in dB (finite), as set by
            ``gain_scale``.
        freq_scale : {"linear", "log"}
            Axis on which the points are joined.
        gain_scale : {"linear", "db"}
            Whether ``gains`` are amplitude ratios or decibels.

        Returns
        -------
        GainCurve
            Monotone (PCHIP) interpolation between points, flat beyond the
            end points.

        See Also
        --------
        lowpass, notch

        References
        ----------
        Fritsch FN, Carlson RE (1980). Monotone piecewise cubic interpolation.
        SIAM J Numer Anal 17:238-246 (the interpolation that keeps the curve
        between its points, as scipy.interpolate.PchipInterpolator does).

        Examples
        --------
        >>> g = GainCurve.from_points([1, 2, 40, 60], [0, 1, 1, 0])
        >>> [round(float(v), 3) for v in g([0.5, 2.0, 30.0, 50.0, 80.0])]
        [0.0, 1.0, 1.0, 0.5, 0.0]
        """
        freq_scale = check_option("freq_scale", freq_scale, ("linear", "log"))
        gain_scale = check_option("gain_scale", gain_scale, ("linear", "db"))
        f, g = _validated_points(freqs, gains, freq_scale, gain_scale)
        recipe = {
            "kind": "points",
            "freqs": f.tolist(),
            "gains": g.tolist(),
            "freq_scale": freq_scale,
            "gain_scale": gain_scale,
        }
        return cls(_points_func(f, g, freq_scale, gain_scale), _dump(recipe))

    @classmethod
    def from_dict(cls, data: Mapping) -> GainCurve:
        """Rebuild a curve from :meth:`to_dict` output.

        Parameters
        ----------
        data : dict
            ``{"format": "gainshape.GainCurve", "version": 1, "curve": {...}}``.

        Returns
        -------
        GainCurve
            The curve the recipe describes.

        Raises
        ------
        ValueError
            If the format, version or keys are not those :meth:`to_dict` writes.

        See Also
        --------
        GainCurve.to_dict

        Examples
        --------
        >>> g = lowpass(30.0)
        >>> GainCurve.from_dict(g.to_dict()) == g
        True
        """
        if not isinstance(data, Mapping) or data.get("format") != _FORMAT:
            raise ValueError(
                "The 'data' parameter takes a dict made by GainCurve.to_dict "
                f"(format {_FORMAT!r}); {data!r} was given."
            )
        version = data.get("version", _FORMAT_VERSION)
        if version != _FORMAT_VERSION:
            raise ValueError(
                f"The 'data' parameter is a gain-curve recipe of version {version!r}; this "
                f"gainshape reads version {_FORMAT_VERSION}. Upgrade gainshape to read it."
            )
        unknown = set(data) - {"format", "version", "curve"}
        if unknown or "curve" not in data:
            raise ValueError(
                "The 'data' parameter must hold the keys 'format', 'version' and 'curve', "
                f"but {'has ' + ', '.join(map(repr, sorted(unknown))) if unknown else 'lacks curve'}."
            )
        return _build(data["curve"])

    def to_dict(self) -> dict:
        """Return a JSON-serializable dict that :meth:`from_dict` rebuilds.

        Returns
        -------
        dict
            The format name, its version and the curve's recipe.

        Raises
        ------
        ValueError
            For a curve built from a bare callable (it has no recipe).

        See Also
        --------
        GainCurve.from_dict

        Examples
        --------
        >>> lowpass(30.0, rolloff=24.0).to_dict()["curve"]
        {'kind': 'lowpass', 'cutoff': 30.0, 'rolloff': 24.0}
        """
        if self._recipe is None:
            raise ValueError(
                f"{self!r} was built from a callable and cannot be serialized; "
                "build it with GainCurve.from_points (or the shape constructors) "
                "to keep a reproducible record."
            )
        return {"format": _FORMAT, "version": _FORMAT_VERSION, "curve": self.recipe}

    @property
    def recipe(self) -> dict | None:
        """The curve's recipe as a fresh dict, or None for a bare callable.

        See Also
        --------
        GainCurve.to_dict

        Examples
        --------
        >>> highpass(0.1).recipe
        {'kind': 'highpass', 'cutoff': 0.1, 'rolloff': 12.0}
        """
        return None if self._recipe is None else json.loads(self._recipe)

    @property
    def reasons(self) -> tuple[str, ...]:
        """Why the curve has its shape, for curves proposed from data.

        Curves from :func:`gainshape.suggest_notches` (also inside products)
        carry a reason per part; other curves have none.

        See Also
        --------
        gainshape.suggest_notches

        Examples
        --------
        >>> lowpass(30.0).reasons
        ()
        """
        return tuple(_reasons(self.recipe or {}))

    # -- evaluation and algebra ----------------------------------------------
    def __call__(self, freqs) -> np.ndarray:
        """Evaluate the gain at ``freqs`` (Hz); returns a float64 array."""
        f = np.abs(np.asarray(freqs, dtype=float))
        out = np.asarray(self.func(f))
        if np.iscomplexobj(out):
            raise ValueError(
                f"The gain function of {self!r} returned complex values; a gain is a "
                "real amplitude ratio: return its magnitude, e.g. np.abs(...)."
            )
        out = out.astype(float, copy=False)
        if out.shape != f.shape:
            try:
                out = np.broadcast_to(out, f.shape)
            except ValueError:
                raise ValueError(
                    f"The gain function returned shape {out.shape} for "
                    f"frequencies of shape {f.shape}; it must be vectorized."
                ) from None
        return np.array(out, dtype=float)

    def __mul__(self, other):
        if not isinstance(other, GainCurve):
            return NotImplemented
        recipe = None
        if self._recipe is not None and other._recipe is not None:
            recipe = _dump({"kind": "product", "factors": [self.recipe, other.recipe]})
        return GainCurve(_product_func(self.func, other.func), recipe)

    def __rsub__(self, other):
        if isinstance(other, bool) or other != 1:
            return NotImplemented
        recipe = None
        if self._recipe is not None:
            recipe = _dump({"kind": "complement", "curve": self.recipe})
        return GainCurve(_complement_func(self.func), recipe)

    def __eq__(self, other):
        if not isinstance(other, GainCurve):
            return NotImplemented
        if self._recipe is None or other._recipe is None:
            return self.func is other.func
        return self._recipe == other._recipe

    def __reduce__(self):
        """Pickle by recipe when there is one, else by the callable."""
        if self._recipe is not None:
            return (_from_recipe_text, (self._recipe,))
        return (GainCurve, (self.func,))

    def __hash__(self):
        return hash(self._recipe if self._recipe is not None else id(self.func))

    # -- display -------------------------------------------------------------
    def describe(self) -> str:
        """One line in the field's terms, e.g. 'low-pass 30 Hz, 12 dB/octave'.

        Returns
        -------
        str
            The description.

        See Also
        --------
        FilterDesign.describe

        Examples
        --------
        >>> bandpass(0.1, 40.0).describe()
        'band-pass 0.1-40 Hz, 12 dB/octave'
        """
        recipe = self.recipe
        if recipe is None:
            name = getattr(self.func, "__name__", type(self.func).__name__)
            return f"custom curve from callable {name}"
        return _describe(recipe)

    def __repr__(self):
        return f"GainCurve({self.describe()})"

    def _repr_html_(self):
        freqs = np.array([0.1, 1.0, 10.0, 50.0, 100.0])
        gains = self(freqs)
        cells = "".join(
            f"<td style='text-align:right'>{g:.3g}</td>" for g in gains
        )
        heads = "".join(f"<th>{f:g} Hz</th>" for f in freqs)
        return (
            f"<div><b>GainCurve</b>: {html.escape(self.describe())}"
            f"<table><tr><th>gain at</th>{heads}</tr>"
            f"<tr><td></td>{cells}</tr></table></div>"
        )

    def below_nyquist(self, nyquist: float) -> tuple[GainCurve, tuple[str, ...]]:
        """The curve to realize below ``nyquist`` (Hz), and notes on what changed.

        Parameters
        ----------
        nyquist : float
            Half the sampling rate, in Hz.

        Returns
        -------
        curve : GainCurve
            The curve without notch harmonics at or above ``nyquist``.
        notes : tuple of str
            One note per dropped harmonic.

        Raises
        ------
        ValueError
            For a cutoff or band edge at or above Nyquist.

        See Also
        --------
        design

        Examples
        --------
        >>> curve, notes = notch(50.0, harmonics=3).below_nyquist(125.0)
        >>> curve
        GainCurve(notch at 50, 100 Hz, width 2 Hz)
        >>> notes
        ('notch harmonic at 150 Hz is at or above the Nyquist frequency (125 Hz) and is dropped',)
        """
        recipe = self.recipe
        if recipe is None:
            return self, ()
        notes: list[str] = []
        recipe = _fit_below(recipe, nyquist, notes)
        curve = self if not notes else _build(recipe)
        return curve, tuple(notes)


# -- shape constructors -------------------------------------------------------
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
    cutoff = check_positive("cutoff", cutoff)
    rolloff = check_positive("rolloff", rolloff)
    return _shape("lowpass", _lowpass_func(cutoff, rolloff), cutoff=cutoff, rolloff=rolloff)


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
    cutoff = check_positive("cutoff", cutoff)
    rolloff = check_positive("rolloff", rolloff)
    return _shape("highpass", _highpass_func(cutoff, rolloff), cutoff=cutoff, rolloff=rolloff)


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
    low, high = _check_band(low, high)
    rolloff = check_positive("rolloff", rolloff)
    func = _product_func(_highpass_func(low, rolloff), _lowpass_func(high, rolloff))
    return _shape("bandpass", func, low=low, high=high, rolloff=rolloff)


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
    low, high = _check_band(low, high)
    rolloff = check_positive("rolloff", rolloff)
    func = _bandstop_func(low, high, rolloff)
    return _shape("bandstop", func, low=low, high=high, rolloff=rolloff)


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
    freq = check_positive("freq", freq)
    width = check_positive("width", width)
    if width >= 2 * freq:
        raise ValueError(
            f"The 'width' parameter takes a width below twice 'freq' ({2 * freq:g} Hz), so "
            f"the lower half-amplitude point stays above 0 Hz; {width:g} was given."
        )
    harmonics = check_int("harmonics", harmonics, minimum=1)
    if harmonics > _MAX_HARMONICS:
        raise ValueError(
            f"The 'harmonics' parameter takes at most {_MAX_HARMONICS}; {harmonics} was "
            "given (harmonics at or above Nyquist are dropped at design anyway)."
        )
    if harmonics > 1 and width >= freq:
        raise ValueError(
            f"The 'width' parameter takes a width below 'freq' ({freq:g} Hz) when there are "
            f"harmonics, so neighbouring notches stay apart; {width:g} Hz was given. For "
            "one wide stop band use gainshape.bandstop."
        )
    rolloff = check_positive("rolloff", rolloff)
    func = _notch_func(freq, width, harmonics, rolloff)
    return _shape(
        "notch", func, freq=freq, width=width, harmonics=harmonics, rolloff=rolloff
    )


def comb(freqs, widths, *, rolloff: float = 24.0, origin: dict | None = None) -> GainCurve:
    """Notches at any frequencies, each with its own width (the product of
    single notches); ``origin`` (JSON-ready) records where they came from.

    >>> g = comb([50.0, 131.3], [0.5, 0.8])
    >>> [round(float(v), 3) for v in g([50.0, 50.25, 131.3, 131.7, 90.0])]
    [0.0, 0.5, 0.0, 0.5, 1.0]
    """
    freqs = [check_positive("freqs", f) for f in freqs]
    widths = [check_positive("widths", w) for w in widths]
    if not freqs or len(freqs) != len(widths):
        raise ValueError(f"A comb takes one width per notch and at least one notch; "
                         f"{len(freqs)} frequencies and {len(widths)} widths were given.")
    for f, w in zip(freqs, widths):
        if w >= 2 * f:
            raise ValueError(f"The notch at {f:g} Hz must be narrower than {2 * f:g} Hz "
                             f"(twice its frequency); {w:g} Hz was given.")
    rolloff = check_positive("rolloff", rolloff)
    return _shape("comb", _comb_func(freqs, widths, rolloff), freqs=freqs, widths=widths,
                  rolloff=rolloff, origin=origin)


# -- shape functions (f >= 0 arrays in, gains out) ----------------------------
def _order(rolloff: float) -> float:
    return rolloff / _DB_PER_OCTAVE_PER_ORDER


def _rising(x: np.ndarray, n: float) -> np.ndarray:
    """``x**n / sqrt(x**(2n) + 3)``: 0 at x=0, 0.5 at x=1, 1 at infinity."""
    with np.errstate(over="ignore", divide="ignore", invalid="ignore"):
        p = np.power(x, n)  # one power: x**-n is its reciprocal
        return np.where(x < 1.0, p / np.sqrt(p * p + 3.0), 1.0 / np.sqrt(1.0 + 3.0 / (p * p)))


def _lowpass_func(cutoff, rolloff):
    n = _order(rolloff)
    return lambda f: _rising(cutoff / np.maximum(f, 1e-300), n)


def _highpass_func(cutoff, rolloff):
    n = _order(rolloff)
    return lambda f: _rising(f / cutoff, n)


def _bandstop_func(low, high, rolloff):
    n = _order(rolloff)
    f0sq, bw = low * high, high - low

    def func(f):
        with np.errstate(divide="ignore"):
            y = np.abs(f0sq - f * f) / (bw * f)
        return _rising(y, n)

    return func


def _notch_func(freq, width, harmonics, rolloff):
    return _comb_func(freq * np.arange(1, harmonics + 1), [width] * harmonics, rolloff)


def _comb_func(freqs, widths, rolloff):
    n = _order(rolloff)

    def func(f):
        out = np.ones_like(f)
        for c, w in zip(freqs, widths):
            out = out * _rising(np.abs(f - c) / (w / 2.0), n)
        return out

    return func


def _points_func(f, g, freq_scale, gain_scale):
    """PCHIP through the points with zero slope at both ends.

    Zero end slopes keep the Fritsch-Carlson monotonicity conditions and join
    the flat extension smoothly; a kink there would need a far longer kernel.
    """
    x = np.log(f) if freq_scale == "log" else f
    slopes = PchipInterpolator(x, g).derivative()(x)
    slopes[[0, -1]] = 0.0
    interp = CubicHermiteSpline(x, g, slopes, extrapolate=False)

    def func(freqs):
        fq = np.clip(freqs, f[0], f[-1])
        y = interp(np.log(fq) if freq_scale == "log" else fq)
        return 10.0 ** (y / 20.0) if gain_scale == "db" else np.maximum(y, 0.0)

    return func


def _product_func(a, b):
    return lambda f: np.asarray(a(f), float) * np.asarray(b(f), float)


def _complement_func(a):
    return lambda f: np.maximum(1.0 - np.asarray(a(f), float), 0.0)


def requested_notches(recipe: dict | None) -> list[float]:
    """The notch frequencies (Hz) a curve's recipe asks for: each ``notch``
    and its harmonics, each ``comb`` tooth, through products.

    >>> requested_notches({"kind": "product", "factors": [{"kind": "bandpass"},
    ...     {"kind": "notch", "freq": 50.0, "harmonics": 2}, {"kind": "comb", "freqs": [31.7]}]})
    [50.0, 100.0, 31.7]
    """
    recipe = recipe or {}
    kind = recipe.get("kind")
    if kind == "notch":
        return [recipe["freq"] * k for k in range(1, int(recipe.get("harmonics", 1)) + 1)]
    if kind == "comb":
        return [float(f) for f in recipe["freqs"]]
    if kind == "product":
        return [f for factor in recipe["factors"] for f in requested_notches(factor)]
    return []


# -- recipes --------------------------------------------------------------------
def _dump(recipe: dict) -> str:
    return json.dumps(recipe)


def _build(recipe: Mapping) -> GainCurve:
    """Make the curve a recipe describes (validating it on the way)."""
    if not isinstance(recipe, Mapping) or not isinstance(recipe.get("kind"), str) \
            or recipe["kind"] not in _BUILDERS:
        raise ValueError(
            f"Unknown gain-curve recipe {recipe!r}; its 'kind' must be one of "
            f"{', '.join(sorted(_BUILDERS))}."
        )
    try:
        return _BUILDERS[recipe["kind"]](recipe)
    except (KeyError, IndexError, TypeError) as err:
        if isinstance(err, TypeError) and "parameter" in str(err):
            raise  # a constructor's own message, naming its parameter
        raise ValueError(
            f"The {recipe['kind']!r} gain-curve recipe {recipe!r} is damaged "
            f"({type(err).__name__}: {err}); rebuild it with the constructor."
        ) from None


def _from_recipe_text(text: str) -> GainCurve:
    """Rebuild a curve from its recipe as JSON text (for pickling)."""
    return _build(json.loads(text))


def _shape(kind: str, func, **params) -> GainCurve:
    return GainCurve(func, _dump({"kind": kind, **params}))


def _build_product(r):
    factors = [_build(f) for f in r["factors"]]
    out = factors[0]
    for f in factors[1:]:
        out = out * f
    return out


_BUILDERS = {
    "lowpass": lambda r: lowpass(r["cutoff"], rolloff=r["rolloff"]),
    "highpass": lambda r: highpass(r["cutoff"], rolloff=r["rolloff"]),
    "bandpass": lambda r: bandpass(r["low"], r["high"], rolloff=r["rolloff"]),
    "bandstop": lambda r: bandstop(r["low"], r["high"], rolloff=r["rolloff"]),
    "notch": lambda r: notch(
        r["freq"], width=r["width"], harmonics=r["harmonics"], rolloff=r["rolloff"]
    ),
    "points": lambda r: GainCurve.from_points(
        r["freqs"], r["gains"], freq_scale=r["freq_scale"], gain_scale=r["gain_scale"]
    ),
    "comb": lambda r: comb(r["freqs"], r["widths"], rolloff=r["rolloff"],
                           origin=r.get("origin")),
    "product": _build_product,
    "complement": lambda r: 1 - _build(r["curve"]),
}


def _describe(r: Mapping) -> str:
    kind = r["kind"]
    if kind in ("lowpass", "highpass"):
        name = "low-pass" if kind == "lowpass" else "high-pass"
        return f"{name} {r['cutoff']:g} Hz, {r['rolloff']:g} dB/octave"
    if kind in ("bandpass", "bandstop"):
        name = "band-pass" if kind == "bandpass" else "band-stop"
        return f"{name} {r['low']:g}-{r['high']:g} Hz, {r['rolloff']:g} dB/octave"
    if kind == "notch":
        freqs = ", ".join(f"{r['freq'] * k:g}" for k in range(1, r["harmonics"] + 1))
        return f"notch at {freqs} Hz, width {r['width']:g} Hz"
    if kind == "comb":
        notches = ", ".join(f"{f:.4g}" for f in r["freqs"])
        widths = ", ".join(f"{w:.2g}" for w in r["widths"])
        found = " found in the data" if (r.get("origin") or {}).get("found_by") else ""
        return f"notch comb at {notches} Hz{found}, widths {widths} Hz"
    if kind == "points":
        return (
            f"drawn through {len(r['freqs'])} points, "
            f"{r['freqs'][0]:g}-{r['freqs'][-1]:g} Hz"
        )
    if kind == "product":
        return " x ".join(f"({_describe(f)})" for f in r["factors"])
    return f"1 - ({_describe(r['curve'])})"


def _reasons(r: Mapping) -> list:
    """The reasons in a recipe's origin, its factors' and its complement's, in order."""
    own = list((r.get("origin") or {}).get("reasons", ()))
    inner = [*r.get("factors", ()), *([r["curve"]] if "curve" in r else [])]
    return own + [reason for part in inner for reason in _reasons(part)]


def _fit_below(r: dict, nyquist: float, notes: list) -> dict:
    """Check a recipe against Nyquist; trim notch harmonics at or above it."""
    for key in ("cutoff", "low", "high", "freq"):
        if key in r and r[key] >= nyquist:
            raise ValueError(
                f"The '{key}' of the {_describe(r)} curve has to lie below the "
                f"Nyquist frequency ({nyquist:g} Hz); {r[key]:g} Hz was given."
            )
    if r["kind"] == "notch":
        kept = int(min(r["harmonics"], np.ceil(nyquist / r["freq"]) - 1))
        for k in range(kept + 1, r["harmonics"] + 1):
            notes.append(
                f"notch harmonic at {r['freq'] * k:g} Hz is at or above the "
                f"Nyquist frequency ({nyquist:g} Hz) and is dropped"
            )
        return {**r, "harmonics": kept}
    if r["kind"] == "comb":
        inside = [i for i, f in enumerate(r["freqs"]) if f + r["widths"][i] / 2 < nyquist]
        notes.extend(f"notch at {f:g} Hz reaches the Nyquist frequency ({nyquist:g} Hz) and "
                     "is dropped" for i, f in enumerate(r["freqs"]) if i not in inside)
        if not inside:
            raise ValueError(f"Every notch of the {_describe(r)} curve reaches the Nyquist "
                             f"frequency ({nyquist:g} Hz).")
        return {**r, "freqs": [r["freqs"][i] for i in inside],
                "widths": [r["widths"][i] for i in inside]}
    if r["kind"] == "product":
        return {**r, "factors": [_fit_below(f, nyquist, notes) for f in r["factors"]]}
    if r["kind"] == "complement":
        return {**r, "curve": _fit_below(r["curve"], nyquist, notes)}
    return r


def _check_band(low, high):
    low = check_positive("low", low)
    high = check_positive("high", high)
    if high <= low:
        raise ValueError(
            f"The 'high' parameter takes a frequency above 'low' ({low:g} Hz); "
            f"{high:g} Hz was given."
        )
    return low, high


def _validated_points(freqs, gains, freq_scale, gain_scale):
    f = _as_1d_float("freqs", freqs)
    g = _as_1d_float("gains", gains)
    if f.size != g.size:
        raise ValueError(
            f"The 'freqs' and 'gains' parameters take sequences of equal lengths; "
            f"{f.size} and {g.size} values were given."
        )
    if f.size < 2:
        raise ValueError(f"A curve needs at least 2 points; {f.size} was given.")
    if not np.all(np.isfinite(f)):
        raise ValueError(f"The 'freqs' parameter takes finite numbers; {f.tolist()} was given.")
    if np.any(np.diff(f) <= 0):
        raise ValueError(
            f"The 'freqs' parameter takes strictly increasing frequencies; {f.tolist()} was "
            "given."
        )
    if freq_scale == "log" and f[0] <= 0:
        raise ValueError(
            "The 'freqs' parameter takes frequencies > 0 with freq_scale='log'; its first "
            f"point was {f[0]:g} Hz."
        )
    if f[0] < 0:
        raise ValueError(f"The 'freqs' parameter takes frequencies >= 0; {f[0]:g} Hz was given.")
    if not np.all(np.isfinite(g)):
        raise ValueError(f"The 'gains' parameter takes finite numbers; {g.tolist()} was given.")
    if gain_scale == "linear" and np.any(g < 0):
        raise ValueError(
            f"The 'gains' parameter takes gains >= 0 (linear gain); {g.tolist()} was given."
        )
    top = g.max() if gain_scale == "linear" else 10 ** (g.max() / 20)
    if top > 1:
        warn(f"The curve's largest gain is {top:.3g} (> 1): it amplifies there.")
    return f, g


def _as_1d_float(name, values):
    try:
        arr = np.asarray(values, dtype=float)
    except (TypeError, ValueError):
        raise TypeError(
            f"The '{name}' parameter takes a 1-D sequence of numbers; {values!r} was "
            "given."
        ) from None
    if arr.ndim != 1:
        raise ValueError(
            f"The '{name}' parameter takes a 1-D sequence; one of shape {arr.shape} was "
            "given."
        )
    return arr

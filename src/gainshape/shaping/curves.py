"""Gain curves: gain (0..1) against frequency (Hz), before any sampling rate.

Vocabulary: *gain* is the amplitude ratio output/input at a frequency (1
passes, 0 removes, 0.5 is the half-amplitude point); *rolloff* is the
asymptotic slope of a transition in dB per octave; *cutoff* is always the
half-amplitude frequency. A curve is immutable; its *recipe* is the
JSON-serializable description that rebuilds it exactly.
"""

from __future__ import annotations

import functools
import html
import json
import operator
from collections.abc import Callable, Mapping
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from .gains import (
    checked_recipe, complement_gain, describe_recipe, fit_below, gain_function, product_gain,
    RECIPE_KINDS, recipe_reasons,
)

__all__ = ["GainCurve", "curve_from_recipe"]

_FORMAT = "gainshape.GainCurve"
_FORMAT_VERSION = 1


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
    def from_points(cls, freqs: ArrayLike, gains: ArrayLike, *, freq_scale: str = "linear",
                    gain_scale: str = "linear") -> GainCurve:
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
        return curve_from_recipe({"kind": "points", "freqs": freqs, "gains": gains,
                                  "freq_scale": freq_scale, "gain_scale": gain_scale})

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
                "The 'data' parameter takes the keys 'format', 'version' and 'curve'; a dict "
                f"with the keys {', '.join(map(repr, sorted(data)))} was given."
            )
        return curve_from_recipe(data["curve"])

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
        return tuple(recipe_reasons(self.recipe or {}))

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
            recipe = json.dumps({"kind": "product", "factors": [self.recipe, other.recipe]})
        return GainCurve(product_gain(self.func, other.func), recipe)

    def __rsub__(self, other):
        if isinstance(other, bool) or other != 1:
            return NotImplemented
        recipe = None
        if self._recipe is not None:
            recipe = json.dumps({"kind": "complement", "curve": self.recipe})
        return GainCurve(complement_gain(self.func), recipe)

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
        return describe_recipe(recipe)

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
        recipe = fit_below(recipe, nyquist, notes)
        curve = self if not notes else curve_from_recipe(recipe)
        return curve, tuple(notes)


# -- recipes --------------------------------------------------------------------
def curve_from_recipe(recipe: Mapping) -> GainCurve:
    """The curve a recipe describes, its values checked as its constructor checks them.

    Examples
    --------
    >>> curve_from_recipe({"kind": "highpass", "cutoff": 0.1, "rolloff": 12.0})
    GainCurve(high-pass 0.1 Hz, 12 dB/octave)
    """
    if not isinstance(recipe, Mapping) or not isinstance(recipe.get("kind"), str) \
            or recipe["kind"] not in RECIPE_KINDS:
        raise ValueError(
            f"Unknown gain-curve recipe {recipe!r}; its 'kind' takes one of "
            f"{', '.join(sorted(RECIPE_KINDS))}."
        )
    try:
        if recipe["kind"] == "product":
            factors = [curve_from_recipe(f) for f in recipe["factors"]]
            return functools.reduce(operator.mul, factors[1:], factors[0])
        if recipe["kind"] == "complement":
            return 1 - curve_from_recipe(recipe["curve"])
        checked = checked_recipe(recipe)
        return GainCurve(gain_function(checked), json.dumps(checked))
    except (KeyError, IndexError, TypeError) as err:
        if isinstance(err, TypeError) and "parameter" in str(err):
            raise  # a check's own message, naming its parameter
        raise ValueError(
            f"The {recipe['kind']!r} gain-curve recipe {recipe!r} is damaged "
            f"({type(err).__name__}: {err}); rebuild it with the constructor."
        ) from None


def _from_recipe_text(text: str) -> GainCurve:
    """Rebuild a curve from its recipe as JSON text (for pickling)."""
    return curve_from_recipe(json.loads(text))

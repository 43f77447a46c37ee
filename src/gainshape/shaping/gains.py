"""Gain functions and the recipes that name them: one check per kind of curve, the
function each kind evaluates, and a recipe's description, reasons and fit below Nyquist.

Everything here works on recipes (plain dicts) and NumPy arrays; :mod:`.curves`
wraps them in :class:`GainCurve` objects.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping

import numpy as np
from scipy.interpolate import CubicHermiteSpline, PchipInterpolator

from .._checks import check_int, check_option, check_positive, warn

_DB_PER_OCTAVE_PER_ORDER = 20.0 * np.log10(2.0)  # 6.0206 dB/octave
_MAX_HARMONICS = 1000  # a 50 Hz comb of 1000 notches reaches 50 kHz
SHAPE_KINDS = ("lowpass", "highpass", "bandpass", "bandstop", "notch", "comb", "points")
RECIPE_KINDS = (*SHAPE_KINDS, "product", "complement")


def checked_recipe(recipe: Mapping) -> dict:
    """A shape's recipe with its values checked and normalized, keys in their fixed order.

    The constructors (``lowpass`` ... ``GainCurve.from_points``) and
    ``GainCurve.from_dict`` both pass through here, so a recipe read from a
    file is checked exactly as the call that wrote it.

    Examples
    --------
    >>> checked_recipe({"kind": "lowpass", "cutoff": 30, "rolloff": 24})
    {'kind': 'lowpass', 'cutoff': 30.0, 'rolloff': 24.0}
    """
    kind = recipe["kind"]
    if kind in ("lowpass", "highpass"):
        cutoff = check_positive("cutoff", recipe["cutoff"])
        return {"kind": kind, "cutoff": cutoff, "rolloff": check_positive("rolloff", recipe["rolloff"])}
    if kind in ("bandpass", "bandstop"):
        low, high = check_band(recipe["low"], recipe["high"])
        return {"kind": kind, "low": low, "high": high,
                "rolloff": check_positive("rolloff", recipe["rolloff"])}
    if kind == "notch":
        return _checked_notch(recipe)
    if kind == "comb":
        return _checked_comb(recipe)
    return _checked_points(recipe)


def _checked_notch(recipe: Mapping) -> dict:
    freq = check_positive("freq", recipe["freq"])
    width = check_positive("width", recipe["width"])
    if width >= 2 * freq:
        raise ValueError(
            f"The 'width' parameter takes a width below twice 'freq' ({2 * freq:g} Hz), so "
            f"the lower half-amplitude point stays above 0 Hz; {width:g} was given."
        )
    harmonics = check_int("harmonics", recipe["harmonics"], minimum=1)
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
    rolloff = check_positive("rolloff", recipe["rolloff"])
    return {"kind": "notch", "freq": freq, "width": width, "harmonics": harmonics,
            "rolloff": rolloff}


def _checked_comb(recipe: Mapping) -> dict:
    freqs = [check_positive("freqs", f) for f in recipe["freqs"]]
    widths = [check_positive("widths", w) for w in recipe["widths"]]
    if not freqs or len(freqs) != len(widths):
        raise ValueError(f"A comb takes one width per notch and at least one notch; "
                         f"{len(freqs)} frequencies and {len(widths)} widths were given.")
    for f, w in zip(freqs, widths):
        if w >= 2 * f:
            raise ValueError(f"The notch at {f:g} Hz takes a width below {2 * f:g} Hz "
                             f"(twice its frequency); {w:g} Hz was given.")
    rolloff = check_positive("rolloff", recipe["rolloff"])
    return {"kind": "comb", "freqs": freqs, "widths": widths, "rolloff": rolloff,
            "origin": recipe.get("origin")}


def _checked_points(recipe: Mapping) -> dict:
    freq_scale = check_option("freq_scale", recipe["freq_scale"], ("linear", "log"))
    gain_scale = check_option("gain_scale", recipe["gain_scale"], ("linear", "db"))
    f, g = validated_points(recipe["freqs"], recipe["gains"], freq_scale, gain_scale)
    return {"kind": "points", "freqs": f.tolist(), "gains": g.tolist(),
            "freq_scale": freq_scale, "gain_scale": gain_scale}


def gain_function(recipe: Mapping) -> Callable:
    """The gain function (frequencies >= 0 in Hz -> gains) of a checked shape recipe.

    Examples
    --------
    >>> round(float(gain_function({"kind": "lowpass", "cutoff": 30.0, "rolloff": 12.0})(30.0)), 3)
    0.5
    """
    kind = recipe["kind"]
    if kind == "lowpass":
        return _lowpass_gain(recipe["cutoff"], recipe["rolloff"])
    if kind == "highpass":
        return _highpass_gain(recipe["cutoff"], recipe["rolloff"])
    if kind == "bandpass":
        return product_gain(_highpass_gain(recipe["low"], recipe["rolloff"]),
                            _lowpass_gain(recipe["high"], recipe["rolloff"]))
    if kind == "bandstop":
        return _bandstop_gain(recipe["low"], recipe["high"], recipe["rolloff"])
    if kind == "notch":
        harmonics = recipe["harmonics"]
        return _comb_gain(recipe["freq"] * np.arange(1, harmonics + 1),
                          [recipe["width"]] * harmonics, recipe["rolloff"])
    if kind == "comb":
        return _comb_gain(recipe["freqs"], recipe["widths"], recipe["rolloff"])
    return _points_gain(np.asarray(recipe["freqs"], float), np.asarray(recipe["gains"], float),
                        recipe["freq_scale"], recipe["gain_scale"])


# -- shape functions (f >= 0 arrays in, gains out) ----------------------------
# -- shape functions (f >= 0 arrays in, gains out) ----------------------------
def _order(rolloff: float) -> float:
    return rolloff / _DB_PER_OCTAVE_PER_ORDER


def _rising(x: np.ndarray, n: float) -> np.ndarray:
    """``x**n / sqrt(x**(2n) + 3)``: 0 at x=0, 0.5 at x=1, 1 at infinity."""
    with np.errstate(over="ignore", divide="ignore", invalid="ignore"):
        p = np.power(x, n)  # one power: x**-n is its reciprocal
        return np.where(x < 1.0, p / np.sqrt(p * p + 3.0), 1.0 / np.sqrt(1.0 + 3.0 / (p * p)))


def _lowpass_gain(cutoff, rolloff):
    n = _order(rolloff)
    return lambda f: _rising(cutoff / np.maximum(f, 1e-300), n)


def _highpass_gain(cutoff, rolloff):
    n = _order(rolloff)
    return lambda f: _rising(f / cutoff, n)


def _bandstop_gain(low, high, rolloff):
    n = _order(rolloff)
    f0sq, bw = low * high, high - low

    def func(f):
        with np.errstate(divide="ignore"):
            y = np.abs(f0sq - f * f) / (bw * f)
        return _rising(y, n)

    return func


def _comb_gain(freqs, widths, rolloff):
    n = _order(rolloff)

    def func(f):
        out = np.ones_like(f)
        for c, w in zip(freqs, widths):
            out = out * _rising(np.abs(f - c) / (w / 2.0), n)
        return out

    return func


def _points_gain(f, g, freq_scale, gain_scale):
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


def product_gain(a, b):
    return lambda f: np.asarray(a(f), float) * np.asarray(b(f), float)


def complement_gain(a):
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



# -- recipes in words ---------------------------------------------------------
def describe_recipe(r: Mapping) -> str:
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
        return " x ".join(f"({describe_recipe(f)})" for f in r["factors"])
    return f"1 - ({describe_recipe(r['curve'])})"


def recipe_reasons(r: Mapping) -> list:
    """The reasons in a recipe's origin, its factors' and its complement's, in order."""
    own = list((r.get("origin") or {}).get("reasons", ()))
    inner = [*r.get("factors", ()), *([r["curve"]] if "curve" in r else [])]
    return own + [reason for part in inner for reason in recipe_reasons(part)]


def fit_below(r: dict, nyquist: float, notes: list) -> dict:
    """Check a recipe against Nyquist; trim notch harmonics at or above it."""
    for key in ("cutoff", "low", "high", "freq"):
        if key in r and r[key] >= nyquist:
            raise ValueError(
                f"The '{key}' of the {describe_recipe(r)} curve has to lie below the "
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
            raise ValueError(f"Every notch of the {describe_recipe(r)} curve reaches the Nyquist "
                             f"frequency ({nyquist:g} Hz).")
        return {**r, "freqs": [r["freqs"][i] for i in inside],
                "widths": [r["widths"][i] for i in inside]}
    if r["kind"] == "product":
        return {**r, "factors": [fit_below(f, nyquist, notes) for f in r["factors"]]}
    if r["kind"] == "complement":
        return {**r, "curve": fit_below(r["curve"], nyquist, notes)}
    return r



# -- checks ---------------------------------------------------------------------
def check_band(low, high):
    low = check_positive("low", low)
    high = check_positive("high", high)
    if high <= low:
        raise ValueError(
            f"The 'high' parameter takes a frequency above 'low' ({low:g} Hz); "
            f"{high:g} Hz was given."
        )
    return low, high


def validated_points(freqs, gains, freq_scale, gain_scale):
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

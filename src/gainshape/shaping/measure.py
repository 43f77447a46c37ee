"""The realized filter measured and stated in the field's terms.

Vocabulary: an *edge* is a frequency where the realized gain crosses a level
(0.5 for half-amplitude, 1/sqrt(2) for half-power), rising or falling; the
*pass-band edges* are the leading rising ("high-pass") and trailing falling
("low-pass") edges; a *stop band* is a run of the realized gain below 0.5,
or a notch inside one; its *floor* is where the request is within 1 dB of
its lowest value there.
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass

import numpy as np
from scipy.optimize import brentq

from .gains import requested_notches
from .stopbands import find_stop_bands, hidden_notches, inner_kind, refined_max, SKIRTS, StopBand
from .timing import edge_timing, EdgeTiming, group_delay, outer_indices
from .words import stop_band_words, timing_words

__all__ = ["Characteristics", "EdgeFrequency", "EdgeTiming", "StopBand", "characterize", "passband_edges",
           "removed_bands", "stop_band_words", "timing_words"]

_HALF_POWER = 1.0 / np.sqrt(2.0)


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
    direction: str

    def __new__(cls, hz: float, direction: str):
        obj = super().__new__(cls, hz)
        obj.direction = direction
        return obj

    def __repr__(self):
        return f"{float(self):.4g} Hz ({self.direction})"

    def __reduce__(self):
        return (EdgeFrequency, (float(self), self.direction))


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
    stop_band_attenuation_db : float
        The smallest attenuation of any stop band (NaN if there is none).
        (``stopband_attenuation_db`` before 0.2; that name still reads it,
        with a FutureWarning.)
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
    stop_band_attenuation_db: float
    max_deviation: float
    edge_timing: tuple
    group_delay: float
    length: float

    @property
    def stopband_attenuation_db(self) -> float:
        """``stop_band_attenuation_db`` under its name before 0.2.

        Examples
        --------
        >>> import warnings
        >>> from gainshape import design, lowpass
        >>> c = design(lowpass(30.0), 250.0).characteristics
        >>> with warnings.catch_warnings(record=True) as said:
        ...     warnings.simplefilter("always")
        ...     same = c.stopband_attenuation_db == c.stop_band_attenuation_db
        >>> same, said[0].category.__name__
        (True, 'FutureWarning')
        """
        warnings.warn("Characteristics.stopband_attenuation_db is now "
                      "stop_band_attenuation_db (spelled as stop_bands); the old name goes in "
                      "a later release.", FutureWarning, stacklevel=2)
        return self.stop_band_attenuation_db

    def to_dict(self) -> dict:
        """Plain JSON-serializable values (edges as lists of Hz and directions).

        Examples
        --------
        >>> from gainshape import design, lowpass
        >>> c = design(lowpass(30.0), 250.0).characteristics
        >>> c.to_dict()["stop_bands"][0]["kind"]
        'above the low-pass edge'
        """
        out: dict = {}
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


# -- characterization -----------------------------------------------------------
def characterize(curve, response, tol, exact, grid_deviation=None) -> Characteristics:
    """Characteristics of the kernel whose :class:`~gainshape.shaping.realize.KernelResponse`
    is ``response``: read on its grid (at least 4 points per kernel sample,
    32 per grid step below the 64th), with crossings and slopes refined on the
    interpolated response. ``grid_deviation`` is :func:`max_deviation` of
    ``response``, which :func:`~gainshape.design` has already measured
    (the lowest grid steps' extra points are added here). With ``exact`` the
    request itself is what runs."""
    sfreq = response.sfreq
    grid = response.freqs
    requested = response.requested(curve)
    signed, gain_at = (requested, curve) if exact else (response.gain, response.gain_at)
    low = np.linspace(0.0, grid[64], 64 * 32 + 1)[1:]
    freqs = np.concatenate([grid[:1], low, grid[65:]])
    requested_all = np.concatenate([requested[:1], curve(low), requested[65:]])
    signed_all = np.concatenate([signed[:1], gain_at(low), signed[65:]])
    realized = np.abs(signed_all)

    def gain_fn(f):
        return np.abs(gain_at(np.asarray(f, dtype=float)))

    half_amp = _crossings(freqs, realized, 0.5, gain_fn)
    half_pow = _crossings(freqs, realized, _HALF_POWER, gain_fn)
    floor = min(30 * tol, 0.05)
    outer = _outer_edges(half_amp)
    rolloffs = tuple(_steepest_slope(e, gain_fn, freqs[1], sfreq / 2.0, floor, half_amp, e in outer)
                     for e in half_amp)
    passband = requested_all >= _HALF_POWER
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio_db = 20 * np.log10(realized[passband] / requested_all[passband])
    ripple = float(np.max(np.abs(ratio_db))) if passband.any() else float("nan")
    nulls = hidden_notches(freqs, realized, half_amp, tol)
    notched = requested_notches(curve.recipe)
    stops = find_stop_bands(freqs, realized, requested_all, half_amp, nulls, tol, curve, gain_fn, notched)
    atten = min((b.attenuation_db for b in stops), default=float("nan"))
    timing = edge_timing(response, signed, gain_at, exact, half_amp,
                          [(b.low, b.high) for b in stops if b.kind not in SKIRTS])
    if exact:
        deviation = float(np.max(np.abs(realized - requested_all)))
    else:
        in_low = slice(1, 1 + low.size)
        deviation = max(grid_deviation, float(np.max(np.abs(signed_all[in_low] - requested_all[in_low]))))
    return Characteristics(
        kind=_kind(half_amp, realized[0], realized[-1], len(nulls[0]),
                   notched),
        half_amplitude=half_amp,
        half_power=half_pow,
        rolloff=rolloffs,
        passband_ripple_db=ripple,
        stop_bands=stops,
        stop_band_attenuation_db=float(atten),
        max_deviation=deviation,
        edge_timing=timing,
        group_delay=group_delay(response, half_pow, realized[0] >= _HALF_POWER),
        length=response.taps.size / sfreq,
    )


def max_deviation(curve, response) -> float:
    """Largest |realized - requested| gain of the kernel behind ``response``.

    The grid's peaks are refined (see :func:`refined_max`).

    Examples
    --------
    >>> from gainshape import lowpass
    >>> from gainshape.shaping.realize import KernelResponse
    >>> k = np.array([0.25, 0.5, 0.25])  # gain cos(pi f / 100) ** 2 at 100 Hz
    >>> round(max_deviation(lowpass(25.0, rolloff=6.0), KernelResponse(k, 1, 100.0, False)), 4)
    0.2853
    """
    requested = response.requested(curve)
    return refined_max(response.freqs, np.abs(response.gain - requested),
                        lambda f: np.abs(response.gain_at(f) - curve(f)))


def _crossings(freqs, gain, level, fn) -> tuple:
    """Edges where ``gain`` crosses ``level``, refined on the exact response."""
    above = gain >= level
    idx = np.flatnonzero(above[1:] != above[:-1])
    edges = []
    for i in idx:
        lo, hi = freqs[i], freqs[i + 1]
        try:
            hz = brentq(lambda f: float(fn(np.array([f]))[0]) - level, lo, hi, xtol=1e-9)
        except ValueError:
            hz = lo + (hi - lo) * (level - gain[i]) / (gain[i + 1] - gain[i])
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
    out: list[int] = []
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
    return {edges[i] for i in outer_indices([e.direction for e in edges])}


def passband_edges(realized: dict) -> list:
    """The pass band's outer edges of a characteristics dict (``to_dict()``
    or a recorded step's ``realized``): ``[(name, hz, half-power hz or None,
    roll-off or None)]`` for the leading rising ("high-pass") and trailing
    falling ("low-pass") half-amplitude edges, each with the outer
    half-power edge of the same name (a notch inside the pass band can cross
    1/sqrt(2) without crossing 0.5).

    Examples
    --------
    >>> passband_edges({"half_amplitude": [1.0, 49.0, 51.0], "half_power": [1.3, 48.7, 51.3],
    ...                 "half_amplitude_direction": ["rising", "falling", "rising"],
    ...                 "half_power_direction": ["rising", "falling", "rising"],
    ...                 "rolloff": [12.0, 900.0, 900.0]})
    [('high-pass', 1.0, 1.3, 12.0)]
    """
    edges = list(realized.get("half_amplitude", []))
    rolloff = list(realized.get("rolloff", []))
    outer = outer_indices(list(realized.get("half_amplitude_direction", [])))
    power_at = outer_indices(list(realized.get("half_power_direction", [])))
    power = {name: realized["half_power"][i] for i, name in power_at.items()}
    return [(name, edges[i], power.get(name), rolloff[i] if i < len(rolloff) else None)
            for i, name in outer.items()]


def removed_bands(realized: dict) -> list:
    """Notches and band-stops (not the skirts beyond the pass band) of a
    characteristics dict, as ``(low, high, attenuation_db)``.

    >>> removed_bands({"stop_bands": [{"low": 49.0, "high": 51.0, "attenuation_db": 60.0,
    ...                                 "kind": "notch"}]})
    [(49.0, 51.0, 60.0)]
    """
    return [(b["low"], b["high"], b["attenuation_db"]) for b in realized.get("stop_bands", [])
            if b["kind"] not in SKIRTS]


def _kind(edges, gain_dc, gain_nyq, hidden_notches=0, notched=()) -> str:
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
    stops = [inner_kind(float(a), float(b), notched) for a, b in zip(inner[::2], inner[1::2])]
    if hidden_notches:
        stops.append("notch")
    for kind in ("band-stop", "notch"):
        if kind in stops:
            parts.append(kind)
    return " + ".join(parts)



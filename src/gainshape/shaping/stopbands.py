"""Stop bands of a realized gain: the runs below half amplitude and the notches inside
them, each with its attenuation held over a stated range, and the peak search between
grid points that bounds it."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.optimize import brentq, minimize_scalar


SKIRTS = ("below the high-pass edge", "above the low-pass edge")  # stop bands beyond the pass band


_FLOOR_SPAN = 10 ** (1 / 20)  # a stop band's floor: request within 1 dB of its lowest


@dataclass(frozen=True, slots=True)
class StopBand:
    """A band the realized filter removes, and the range where its attenuation holds.

    ``low``, ``high``: the band's limits (Hz): half-amplitude points, or for
    a notch inside a wider stop band the points at half the gain beside it.
    ``attenuation_db``: -20 log10 of the largest realized gain over
    ``attenuated_low`` to ``attenuated_high``, the range (inside the band)
    around its floor where the realized gain stays at or below that level.
    The floor is where the request is within 1 dB of its lowest value in the
    band (or at most the tolerance), so the transitions into the band, which
    the roll-off describes, are not counted. ``kind``: "below the high-pass
    edge", "above the low-pass edge", "notch", "band-stop" or "notch inside
    a stop band".

    Examples
    --------
    >>> StopBand(49.0, 51.0, 60.2, "notch", 49.9, 50.1).to_dict()["attenuated_low"]
    49.9
    """

    low: float
    high: float
    attenuation_db: float
    kind: str
    attenuated_low: float
    attenuated_high: float

    def to_dict(self) -> dict:
        """Plain JSON values."""
        return {"low": float(self.low), "high": float(self.high),
                "attenuation_db": float(self.attenuation_db), "kind": self.kind,
                "attenuated_low": float(self.attenuated_low),
                "attenuated_high": float(self.attenuated_high)}


def hidden_notches(freqs, gain, edges, tol) -> tuple[np.ndarray, np.ndarray]:
    """Indices of narrow nulls inside stop bands, and the gain beside each:
    local minima 20 dB below the gain 10 % of their frequency away on both
    sides (the lower of the two is "beside"), where that gain stands above
    3 x tolerance (so the kernel's error ripple and the foot of a steep edge
    are not nulls), outside the stop bands between half-amplitude edges
    (those are listed by their edges)."""
    inner = np.flatnonzero((gain[1:-1] < gain[:-2]) & (gain[1:-1] <= gain[2:]) & (gain[1:-1] < 0.5)) + 1
    lo = np.minimum(np.searchsorted(freqs, 0.9 * freqs[inner]), inner - 1)
    hi = np.minimum(np.searchsorted(freqs, 1.1 * freqs[inner], side="right"), freqs.size - 1)
    beside = np.minimum(gain[lo], gain[hi])
    deep = (beside > 3 * tol) & (gain[inner] < 0.1 * beside)
    nulls, beside = inner[deep], beside[deep]
    pairs = [(float(x), float(y)) for x, y in zip(edges[:-1], edges[1:]) if x.direction == "falling"]
    inside_pair = np.zeros(nulls.size, dtype=bool)
    for x, y in pairs:
        inside_pair |= (freqs[nulls] > x) & (freqs[nulls] < y)
    return nulls[~inside_pair], beside[~inside_pair]


def find_stop_bands(freqs, realized, requested, edges, nulls, tol, curve, response, notched) -> tuple:
    """Every stop band (see :class:`StopBand`), in order of frequency;
    ``nulls`` are :func:`hidden_notches`' (indices, gain beside them),
    ``response(freqs)`` is the exact realized gain, for a finer look, and
    ``notched`` the notch frequencies the request asked for."""
    bounds = [0.0] + [float(e) for e in edges] + [float(freqs[-1])]
    below = [realized[0] < 0.5] + [e.direction == "falling" for e in edges]
    bands = []
    for i, (a, b) in enumerate(zip(bounds[:-1], bounds[1:])):
        if not below[i] or b <= a:
            continue
        kind = ("below the high-pass edge" if i == 0 else "above the low-pass edge"
                if i == len(edges) else inner_kind(a, b, notched))
        bands.append((a, b, kind))
    for i, beside in zip(*nulls):  # notches inside wider stop bands, limited at half the gain beside
        level = 0.5 * beside
        left = i - np.argmax(realized[i::-1] >= level)
        right = i + np.argmax(realized[i:] >= level)
        band = (float(freqs[left]), float(freqs[right]), "notch inside a stop band")
        if band not in bands:  # two minima of one notch give the same band
            bands.append(band)
    # a band's floor leaves out its notches and their sides (a width either side)
    inner_notches = [widened(a, b) for a, b, kind in bands if kind == "notch inside a stop band"]
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
    out = []
    for a, b, kind, where, level in found:
        top = _floor_top(freqs, realized, where, (a, b), level, curve, response)
        low, high, top = _attenuated_range(freqs, realized, (a, b), where, top, response)
        out.append(StopBand(a, b, -20 * float(np.log10(max(top, 1e-300))), kind, low, high))
    return tuple(out)


def inner_kind(low: float, high: float, notched) -> str:
    """A stop band between a falling and a rising edge: a "notch" when the
    request asked for one there (whatever its width) or when it is narrow
    (at most a tenth of its centre), else a "band-stop".

    >>> inner_kind(2.75, 3.25, [3.0]), inner_kind(2.75, 3.25, []), inner_kind(49.0, 51.0, [])
    ('notch', 'band-stop', 'notch')
    """
    if any(low < f < high for f in notched):
        return "notch"
    return "notch" if (high - low) <= 0.1 * (low + high) / 2 else "band-stop"


def _attenuated_range(freqs, realized, band, floor, top, response) -> tuple[float, float, float]:
    """The range inside ``band`` around its ``floor`` (grid mask) where the
    realized gain stays at or below ``top``, its ends found exactly, and the
    highest gain over it (``top``, or a little more where a peak between
    grid points rises above it): ``(low, high, highest)``.

    Of the runs of grid points at or below ``top``, the one holding most of
    the floor is taken; its ends are where the gain crosses ``top``.
    """
    a, b = band
    ok = (freqs >= a) & (freqs <= b) & (realized <= top * (1 + 1e-9))
    bounds = np.flatnonzero(np.diff(np.concatenate([[0], ok.astype(np.int8), [0]])))
    starts, stops = bounds[::2], bounds[1::2]
    in_floor = [np.count_nonzero(floor[i:j]) for i, j in zip(starts, stops)]
    if not in_floor:  # the floor's top lies between grid points only
        return a, b, float(np.max(realized[(freqs >= a) & (freqs <= b)], initial=top))
    k = int(np.argmax(in_floor))
    i, j = int(starts[k]), int(stops[k]) - 1

    def over(f):
        return float(response(np.array([f]))[0]) - top

    low = max(a, brentq(over, freqs[i - 1], freqs[i], xtol=1e-12)) if (
        i > 0 and over(freqs[i - 1]) > 0 > over(freqs[i])) else float(freqs[i])
    high = min(b, brentq(over, freqs[j], freqs[j + 1], xtol=1e-12)) if (
        j + 1 < freqs.size and over(freqs[j + 1]) > 0 > over(freqs[j])) else float(freqs[j])

    def inside(f):
        return (f >= low) & (f <= high)

    run = np.where(inside(freqs), realized, 0.0)
    return float(low), float(high), max(top, refined_max(freqs, run, response, inside))


def _floor_top(freqs, realized, where, band, level, curve, response) -> float:
    """The highest realized gain over a stop band's floor (``where`` on the
    grid): its grid peaks refined, and its ends, where the request crosses
    ``level``, found exactly (the gain often rises steeply there, so a grid
    point just inside can be far below the end's value)."""
    def allowed(f):
        return (f >= band[0]) & (f <= band[1]) & (curve(f) <= level)

    def above_level(f):
        return float(curve(np.array([f]))[0]) - level

    top = refined_max(freqs, np.where(where, realized, 0.0), response, allowed)
    for i in np.flatnonzero(where[1:] != where[:-1]):
        if above_level(freqs[i]) * above_level(freqs[i + 1]) < 0:
            end = brentq(above_level, freqs[i], freqs[i + 1], xtol=1e-12)
            top = max(top, float(response(np.array([end]))[0]))
    return top


def refined_max(freqs, values, fn, allowed=None, n_searched=3, n_looked=256) -> float:
    """The largest of ``fn`` (a function of frequency; ``values`` on the grid
    ``freqs``, at least 4 points per kernel sample).

    A kernel's ripple oscillates at most half as fast as its length (it is
    centred), so the grid holds 8 points per ripple period and a peak's grid
    value is at least cos(pi / 8) = 0.92 of the peak. The grid peaks within
    0.9 of the largest (the ``n_looked`` highest) are looked at 16 times
    finer between their neighbours, and the ``n_searched`` highest are then
    refined by a bounded search; ``allowed(f)`` limits where it counts.

    >>> f = np.linspace(0.0, 1.0, 11)
    >>> round(refined_max(f, np.sin(3 * f), lambda x: np.sin(3 * x)), 9)
    1.0
    """
    best = float(values.max())
    peaks = np.flatnonzero((values[1:-1] >= values[:-2]) & (values[1:-1] >= values[2:])) + 1
    peaks = peaks[values[peaks] >= 0.9 * best]
    peaks = peaks[np.argsort(values[peaks])[-n_looked:]]
    if peaks.size == 0:
        return best
    fine = freqs[peaks - 1, None] + (freqs[peaks + 1] - freqs[peaks - 1])[:, None] * np.linspace(0, 1, 33)
    fine_values = fn(fine)
    if allowed is not None:
        fine_values = np.where(allowed(fine), fine_values, 0.0)
    best = max(best, float(fine_values.max()))

    def minus_fn(f):
        inside = allowed is None or bool(allowed(np.array([f]))[0])
        return -float(fn(np.array([f]))[0]) if inside else 0.0

    for row in np.argsort(fine_values.max(axis=1))[-n_searched:]:
        j = int(np.argmax(fine_values[row]))
        lo, hi = fine[row, max(j - 1, 0)], fine[row, min(j + 1, 32)]
        found = minimize_scalar(minus_fn, bounds=(lo, hi), method="bounded",
                                options={"xatol": 1e-6 * (hi - lo)})
        best = max(best, -float(found.fun))
    return best


def widened(low: float, high: float) -> tuple[float, float]:
    """A band with its own width added on each side (where a notch's skirts reach).

    >>> widened(49.0, 51.0)
    (47.0, 53.0)
    """
    return 2 * low - high, 2 * high - low

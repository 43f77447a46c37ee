"""The curve editor's edits, checked in Python: a point moved, added, removed or stepped, a
zoom, and the view the page script draws (points, traces and numbers)."""

from __future__ import annotations

from collections.abc import Callable

import numpy as np

from ..shaping.curves import GainCurve
from ..shaping.filter_design import FilterDesign
from ..shaping.lengths import long_kernel_cause
from ..shaping.shapes import bandpass, bandstop, highpass, lowpass, notch
from .filter_plots import outer_envelope_db


FMIN = 0.01  # Hz: the editor's lowest frequency (its axis is logarithmic)


_GRID = 400  # frequencies at which the gains are sent to the page


_TRACE = 1200  # most time samples sent per trace (min/max pairs beyond)


RAW_SECONDS = 60.0  # of a continuous recording, the stretch previewed


_SHOWN_DB = -60.0  # the impulse response is shown where its envelope is above this (dB re peak)


SHAPES = ("low-pass", "high-pass", "band-pass", "band-stop", "notch comb")


def zoom_range(low, high, fmax) -> tuple | None:
    """(high, low) of a zoomed view, within the editor's range; None (the whole
    range) when ``low`` and ``high`` are both missing.

    >>> zoom_range(45, 155, 250.0), zoom_range(None, None, 250.0)
    ((155.0, 45.0), None)
    """
    if low in (None, "") and high in (None, ""):
        return None
    try:
        low, high = float(low), float(high)
    except (TypeError, ValueError):
        raise Refused(f"A view needs two frequencies; {low!r} and {high!r} were given.") from None
    low, high = max(low, FMIN), min(high, fmax)
    if not high > low * 1.01:
        raise Refused(f"A view needs its upper frequency above its lower one; {low:g} and "
                       f"{high:g} Hz were given.")
    return high, low


_GROWTH = 4.0  # an edit that makes the kernel this many times longer says so


def growth_note(before, after) -> str:
    """What an edit cost in kernel length, when it made the kernel over
    ``_GROWTH`` times longer, with the feature that makes it long ("" otherwise)."""
    if before is None or after.characteristics.length <= _GROWTH * before.characteristics.length:
        return ""
    cause = long_kernel_cause(after.curve, after.characteristics, after.sfreq)
    why = f", because of {cause.what}; {cause.remedy}" if cause else ""
    return (f"This edit made the kernel {after.characteristics.length / before.characteristics.length:.0f}"
            f" times longer, from {before.characteristics.length:.3g} s to "
            f"{after.characteristics.length:.3g} s{why}.")


class Refused(ValueError):
    """An edit that cannot be made; its text is shown to the user."""


def edited(points, request, sfreq, fmax):
    """(new points, message, selected point) for an edit of the points, or
    (None, "", None) for another edit."""
    what = request.get("do")
    if what == "start":
        shape = request.get("shape")
        if shape not in SHAPES:
            raise Refused(f"Unknown shape {shape!r}; the editor starts from {', '.join(SHAPES)}.")
        return editable_points(_shape(shape, sfreq), FMIN, fmax), "", 0
    if what not in ("drag", "add", "remove"):
        return None, "", None
    points = [list(p) for p in points]
    if what == "remove":
        index = _index(request, points)
        if len(points) <= 2:
            raise Refused("A curve keeps at least two points; this one was not removed.")
        del points[index]
        return points, "", min(index, len(points) - 1)
    freq, gain, said = _checked_point(request.get("freq"), request.get("gain"), fmax)
    if what == "add":
        if any(f == freq for f, _ in points):
            raise Refused(f"There is already a point at {freq:g} Hz.")
        points.append([freq, gain])
        points.sort()
        return points, said, [f for f, _ in points].index(freq)
    index = _index(request, points)
    low = points[index - 1][0] if index > 0 else None
    high = points[index + 1][0] if index < len(points) - 1 else None
    kept = _between(freq, low, high)
    if kept != freq:
        said = " ".join(filter(None, [said, f"A point stays between its neighbours: kept at "
                                             f"{kept:g} Hz."]))
    points[index] = [kept, gain]
    return points, said, index


_DB_FLOOR = -80.0  # the page's lowest dB (a gain below it is drawn at it, and reads as 0)


def stepped(points, request, scale: str) -> dict:
    """A key press's relative move as the drag it amounts to: frequency by
    1/24 octave (1/2 with "big"), gain by 0.01 (0.1) or, on the dB scale, 1 dB (6 dB).

    >>> stepped([[1.0, 0.5], [2.0, 1.0]], {"index": 0, "freq_steps": 24, "gain_steps": -1}, "gain")
    {'do': 'drag', 'index': 0, 'freq': 2.0, 'gain': 0.49}
    """
    index = _index(request, points)
    freq, gain = points[index]
    big = bool(request.get("big"))
    try:
        octaves, levels = int(request.get("freq_steps", 0)), int(request.get("gain_steps", 0))
    except (TypeError, ValueError):
        raise Refused("A key step needs whole numbers of steps.") from None
    freq = freq * 2.0 ** (octaves / (2 if big else 24))
    if scale == "dB":
        db = max(20 * np.log10(max(gain, 1e-12)), _DB_FLOOR) + levels * (6 if big else 1)
        gain = 0.0 if db <= _DB_FLOOR + 0.5 else 10 ** (db / 20)
    else:
        gain = gain + levels * (0.1 if big else 0.01)
    return {"do": "drag", "index": index, "freq": round(freq, 12), "gain": round(gain, 12),
            **({"serial": request["serial"]} if "serial" in request else {})}


def _index(request, points) -> int:
    index = request.get("index")
    if not isinstance(index, int) or isinstance(index, bool) or not 0 <= index < len(points):
        raise Refused(f"There is no point {index!r} (the curve has {len(points)}).")
    return index


def _checked_point(freq, gain, fmax) -> tuple[float, float, str]:
    """The point rounded to what the code line states, clamped into range, and what was clamped."""
    try:
        freq, gain = float(freq), float(gain)
    except (TypeError, ValueError):
        raise Refused(f"A point needs a frequency and a gain as numbers; "
                       f"{freq!r} and {gain!r} were given.") from None
    if not (np.isfinite(freq) and np.isfinite(gain)):
        raise Refused(f"A point needs finite numbers; {freq!r} Hz and gain {gain!r} were given.")
    said = []
    if gain < 0:
        gain = 0.0
        said.append("A gain cannot be negative: kept at 0.")
    elif gain > 1:
        gain = 1.0
        said.append("The editor draws gains up to 1 (it does not amplify): kept at 1.")
    if freq >= fmax:
        said.append(f"Frequencies stay below Nyquist: kept at {fmax:g} Hz.")
        freq = fmax
    elif freq < FMIN:
        said.append(f"The editor starts at {FMIN:g} Hz (gains below it follow the first "
                    f"point): kept at {FMIN:g} Hz.")
        freq = FMIN
    return rounded_freq(freq), round(gain, 4), " ".join(said)


def _between(freq, low, high) -> float:
    """``freq`` kept strictly between the neighbours' frequencies (0.1 % away from each)."""
    if low is not None and freq <= low * 1.001:
        return rounded_freq(low * 1.001, down=False)
    if high is not None and freq >= high / 1.001:
        return rounded_freq(high / 1.001, down=True)
    return freq


def rounded_freq(freq: float, down: bool | None = None) -> float:
    """Four significant digits (rounded down or up when asked, to stay inside a limit).

    >>> rounded_freq(0.1234567), rounded_freq(124.99, down=True), rounded_freq(0.10001, down=False)
    (0.1235, 124.9, 0.1001)
    """
    scale = 10.0 ** (np.floor(np.log10(freq)) - 3)
    rounder: Callable = np.round if down is None else np.floor if down else np.ceil
    return float(round(float(rounder(freq / scale) * scale), 12))


def curve_of(points) -> GainCurve:
    freqs, gains = zip(*points)
    return GainCurve.from_points(freqs, gains, freq_scale="log")


def code_line(points) -> str:
    """A line of Python that rebuilds the curve exactly.

    >>> code_line([[0.1, 0.0], [1.0, 1.0]])
    'gs.GainCurve.from_points([0.1, 1], [0, 1], freq_scale="log")'
    """
    freqs = ", ".join(f"{f:.12g}" for f, _ in points)
    gains = ", ".join(f"{g:.12g}" for _, g in points)
    return f'gs.GainCurve.from_points([{freqs}], [{gains}], freq_scale="log")'


def _shape(shape: str, sfreq: float) -> GainCurve:
    """A constructor's curve with cut-offs common in EEG/ERP work (common
    practice, no source), kept below Nyquist at low rates."""
    top = min(30.0, 0.3 * sfreq)
    made = {"low-pass": lambda: lowpass(top), "high-pass": lambda: highpass(0.1),
            "band-pass": lambda: bandpass(0.1, top),
            "band-stop": lambda: bandstop(min(8.0, 0.08 * sfreq), min(13.0, 0.13 * sfreq)),
            "notch comb": lambda: notch(50.0, harmonics=max(1, int(0.45 * sfreq // 50)))}
    if shape == "notch comb" and sfreq <= 110.0:
        raise Refused(f"A 50 Hz notch comb needs a rate above 110 Hz; this editor's is {sfreq:g}.")
    return made[shape]()


def starting_points(curve: GainCurve, fmax: float) -> list:
    """A curve drawn on a log axis within the editor's span keeps its own
    points; any other curve is followed by :func:`editable_points`."""
    recipe = curve.recipe or {}
    if recipe.get("kind") == "points" and recipe["freq_scale"] == "log" \
            and recipe["gain_scale"] == "linear" and recipe["freqs"][0] >= FMIN \
            and recipe["freqs"][-1] <= fmax and max(recipe["gains"]) <= 1:
        return [[float(f), float(g)] for f, g in zip(recipe["freqs"], recipe["gains"])]
    return editable_points(curve, FMIN, fmax)


def editable_points(curve: GainCurve, fmin: float, fmax: float, *, within: float = 0.01,
                    most: int = 60) -> list:
    """Points whose curve (log-frequency PCHIP) follows ``curve`` within ``within`` in gain.

    Greedy: start from the ends, add the frequency where the points' curve
    misses most, until it misses nowhere by more than ``within`` (checked on
    8000 log-spaced frequencies) or ``most`` points are placed.

    Parameters
    ----------
    curve : GainCurve
    fmin, fmax : float
        The frequency span of the points (Hz).
    within : float
        Largest gain difference allowed.
    most : int
        Most points placed.

    Returns
    -------
    list of [float, float]
        [frequency (Hz, 4 significant digits), gain (4 decimals)], ascending.

    Examples
    --------
    >>> import gainshape as gs
    >>> pts = editable_points(gs.highpass(1.0), 0.01, 100.0)
    >>> len(pts) < 20, pts[0], pts[-1]
    (True, [0.01, 0.0001], [100.0, 1.0])
    """
    grid = np.unique([rounded_freq(f) for f in np.geomspace(fmin, fmax, 8000)])
    wanted = np.clip(curve(grid), 0.0, 1.0).round(4)
    chosen = [0, grid.size - 1]
    while len(chosen) < most:
        follows = curve_of([[grid[i], wanted[i]] for i in chosen])(grid)
        miss = np.abs(follows - wanted)
        worst = int(np.argmax(miss))
        if miss[worst] <= within:
            break
        chosen = sorted({*chosen, worst})
    return [[float(grid[i]), float(wanted[i])] for i in chosen]


def editor_view(realized: FilterDesign, fmax: float, fmin: float = FMIN) -> dict:
    """What the page draws for a design, as plain numbers.

    Parameters
    ----------
    realized : FilterDesign
    fmax : float
        Highest frequency shown (Hz).
    fmin : float
        Lowest frequency shown (Hz): above ``FMIN`` when the view is zoomed.

    Returns
    -------
    dict
        ``freqs``, ``requested``, ``realized``, ``deviation`` (on a
        log-spaced grid), ``tolerance``; ``impulse`` and ``step`` (each
        ``times`` and ``values``: the impulse response where its envelope
        is within 60 dB of its peak, with ``peak``, ``peak_time`` and
        ``limit`` when one peak would flatten the rest; the step response
        over the whole kernel; thinned to min/max pairs when long); ``characteristics``
        (:meth:`FilterDesign.summary` rows) and ``describe``.

    Examples
    --------
    >>> import gainshape as gs
    >>> view = editor_view(gs.design(gs.lowpass(30.0), 250.0), 124.9)
    >>> len(view["freqs"]), view["characteristics"][0]
    (400, ['kind', 'low-pass'])
    """
    freqs = np.geomspace(fmin, fmax, _GRID)
    requested = realized.requested_gain(freqs)
    got = realized.realized_gain(freqs)
    times, kernel = realized.times, realized.taps
    near = outer_envelope_db(kernel) > _SHOWN_DB
    return {
        "freqs": numbers_of(freqs), "requested": numbers_of(requested), "realized": numbers_of(got),
        "deviation": numbers_of(got - requested), "tolerance": realized.tolerance,
        "impulse": {**trace_of(times[near], kernel[near]), **_off_scale_peak(times, kernel)},
        "step": trace_of(times, np.cumsum(kernel)),
        "characteristics": [list(row) for row in realized.summary()],
        "describe": realized.describe(),
        "shown": [float(fmin), float(fmax)],
    }


def _off_scale_peak(times, kernel) -> dict:
    """A peak that would flatten the rest of the impulse response (a
    high-pass's unit impulse at t = 0): its value and time, and the height
    that shows the rest ("limit"); empty when there is none.

    >>> _off_scale_peak(np.arange(7.0), np.array([0, -0.01, 0, 1.0, 0, 0.02, 0]))
    {'peak': 1.0, 'peak_time': 3.0, 'limit': 0.026}
    """
    peak = int(np.argmax(np.abs(kernel)))
    rest = np.abs(np.delete(kernel, range(max(peak - 1, 0), peak + 2)))
    if rest.size == 0 or abs(kernel[peak]) <= 10 * rest.max():
        return {}
    peak_value, limit = numbers_of([kernel[peak], 1.3 * rest.max()])
    return {"peak": peak_value, "peak_time": float(times[peak]), "limit": limit}


def trace_of(times, values) -> dict:
    """A trace to draw: as is when short, else the min and max of each of
    ``_TRACE // 2`` runs of equal length (the last run shorter), in time
    order, which keeps every peak.

    >>> trace_of(np.arange(6.0), np.array([0, 5, 1, 1, -4, 2.0]))["values"]
    [0.0, 5.0, 1.0, 1.0, -4.0, 2.0]
    """
    if times.size > _TRACE:
        width = -(-times.size // (_TRACE // 2))
        padded = np.pad(values, (0, -times.size % width), mode="edge").reshape(-1, width)
        starts = np.arange(padded.shape[0]) * width
        low = starts + padded.argmin(axis=1)
        high = starts + padded.argmax(axis=1)
        picked = np.minimum(np.sort(np.stack([low, high], axis=1), axis=1).ravel(), times.size - 1)
        times, values = times[picked], values[picked]
    return {"times": numbers_of(times), "values": numbers_of(values)}


def numbers_of(values) -> list:
    """Plain floats rounded to 7 significant digits (what the page can show).

    >>> numbers_of([1234.56789, -0.000123456789, 0.0])
    [1234.568, -0.0001234568, 0.0]
    """
    values = np.asarray(values, dtype=float)
    magnitude = np.floor(np.log10(np.where(values == 0, 1.0, np.abs(values))))
    scale = 10.0 ** (6 - magnitude)
    return (np.round(values * scale) / scale).tolist()


def as_db(power) -> np.ndarray:
    return 10 * np.log10(np.maximum(power, np.finfo(float).tiny))

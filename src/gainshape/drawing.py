"""Draw a gain curve by hand in Jupyter and watch the realized filter respond.

:func:`draw` returns a :class:`GainEditor`, an `anywidget
<https://anywidget.dev>`_ widget. Why anywidget: the browser draws the
curves itself (SVG from a small script shipped with gainshape, no build step
and no extension to install), so an update costs one design plus a few
kilobytes of numbers, not a matplotlib redraw (about a second for a
six-panel figure on a laptop-class core); the same widget runs in JupyterLab,
Notebook 7, VS Code and Colab; and its state is plain traitlets, so it is
tested without a browser and saved with the notebook.

Python is the single source of truth: the page sends edits (drag, add,
remove, set, start from a shape) as messages, :meth:`GainEditor.edit`
checks them (a refused or clamped edit leaves a visible message, never a
traceback), redesigns, and sends back the points and what the realized
filter does. The page sends the next drag only when the previous one has
been answered, so a slow design never builds a queue.
"""

from __future__ import annotations

import time
import warnings
from pathlib import Path

import anywidget
import numpy as np
import traitlets

from ._checks import DEFAULT_TOLERANCE, check_bool, check_positive, check_tolerance
from ._spectra import welch_density
from .adapters import as_arrays
from .curves import GainCurve, bandpass, bandstop, highpass, lowpass, notch
from .design import FilterDesign, design
from .engine import SegmentWords, filter_array
from .lengths import long_kernel_cause
from .recipes import write_recipe
from .viz import outer_envelope_db

__all__ = ["draw", "GainEditor", "editable_points"]

FMIN = 0.01  # Hz: the editor's lowest frequency (its axis is logarithmic)
_GRID = 400  # frequencies at which the gains are sent to the page
_TRACE = 1200  # most time samples sent per trace (min/max pairs beyond)
FALLBACK_S = 30.0  # kernel length (s) shown for a curve no kernel follows within tolerance
_RAW_SECONDS = 60.0  # of a continuous recording, the stretch previewed
_SHOWN_DB = -60.0  # the impulse response is shown where its envelope is above this (dB re peak)
_SHAPES = ("low-pass", "high-pass", "band-pass", "band-stop", "notch comb")


def draw(curve=None, sfreq=None, data=None, *, channel=None, causal=False,
         tolerance=DEFAULT_TOLERANCE):
    """An editor in which a gain curve is drawn by hand and the realized filter follows.

    Parameters
    ----------
    curve : GainCurve | None
        Where to start: any curve (drawn as editable points that follow it
        within 0.01 in gain); None starts from a 0.1 to 30 Hz band-pass.
    sfreq : float | None
        Sampling rate in Hz; taken from ``data`` when it is given.
    data : mne.io.Raw | mne.Epochs | mne.Evoked | None
        A recording to preview the filter on: its spectrum before and
        after, and its average (a continuous recording: its first minute)
        before and after, for one channel.
    channel : str | None
        The data channel previewed (default the first).
    causal : bool
        Realize the curve as a minimum-phase (True) or zero-phase kernel.
    tolerance : float
        Largest allowed gain error of the realized filter.

    Returns
    -------
    GainEditor
        The widget; display it (it is the cell's value) and read
        ``.curve`` and ``.design`` from it at any time.

    See Also
    --------
    GainCurve.from_points, design

    Examples
    --------
    >>> import gainshape as gs
    >>> editor = gs.draw(gs.highpass(0.5), sfreq=250.0)
    >>> editor.drag(1, 0.4, 0.6)
    >>> editor.curve.recipe["kind"]
    'points'
    """
    signals = None if data is None else as_arrays(data, sfreq=sfreq, name="data")
    if signals is not None:
        sfreq = signals.sfreq
    if sfreq is None:
        raise ValueError("gs.draw needs the sampling rate: pass sfreq= (Hz) or data=.")
    sfreq = check_positive("sfreq", sfreq)
    if sfreq / 2 <= 10 * FMIN:
        raise ValueError(f"The 'sfreq' parameter takes a rate above {20 * FMIN:g} Hz (the editor "
                         f"spans {FMIN:g} Hz to Nyquist); {sfreq:g} was given.")
    if curve is not None and not isinstance(curve, GainCurve):
        raise TypeError(f"The 'curve' parameter takes a GainCurve or None; "
                        f"{type(curve).__name__} was given.")
    start = curve if curve is not None else bandpass(0.1, min(30.0, 0.4 * sfreq))
    return GainEditor(start, sfreq, signals, channel=channel,
                      causal=check_bool("causal", causal),
                      tolerance=check_tolerance(tolerance))


class GainEditor(anywidget.AnyWidget):
    """The editor :func:`draw` returns: a curve of points and what it realizes.

    Parameters
    ----------
    start : GainCurve
        The curve the points start from.
    sfreq : float
        Sampling rate in Hz.
    signals : Signals | None
        The recording to preview on, as :func:`gainshape.adapters.as_arrays` gives it.
    channel : str | None
        The previewed channel.
    causal : bool
        Minimum phase (True) or zero phase.
    tolerance : float
        Largest allowed gain error.

    Attributes
    ----------
    points : list of [float, float]
        The curve's points, [frequency in Hz, gain], ascending in frequency.
    selected : int
        The point the keyboard and the number fields act on.
    scale : str
        "gain" (0..1) or "dB": how the page shows the gain axis.
    message : str
        What the last edit did when it was clamped or refused ("" when it
        went through as asked).
    view : dict
        What the page draws: the gains on a frequency grid, the impulse and
        step responses, the characteristics as (label, value) rows, the
        preview of the recording, and ``design_ms``.
    code : str
        A ``gs.GainCurve.from_points(...)`` line that rebuilds the curve.
    recipe_path : str
        Where "save recipe" writes.

    Examples
    --------
    >>> import gainshape as gs
    >>> editor = gs.draw(sfreq=250.0)
    >>> editor.remove_point(0)
    >>> len(editor.points) >= 2
    True
    """

    _esm = Path(__file__).with_name("_editor.js")
    _css = Path(__file__).with_name("_editor.css")

    points = traitlets.List().tag(sync=True)
    selected = traitlets.Int(0).tag(sync=True)
    scale = traitlets.Enum(["gain", "dB"], "gain").tag(sync=True)
    message = traitlets.Unicode("").tag(sync=True)
    message_kind = traitlets.Unicode("warning").tag(sync=True)  # "done" (a success) or "warning"
    view = traitlets.Dict().tag(sync=True)
    code = traitlets.Unicode("").tag(sync=True)
    recipe_path = traitlets.Unicode("filter_recipe.json").tag(sync=True)
    channel = traitlets.Unicode("").tag(sync=True)
    channels = traitlets.List().tag(sync=True)
    shapes = traitlets.List(list(_SHAPES)).tag(sync=True)
    settings = traitlets.Dict().tag(sync=True)

    def __init__(self, start: GainCurve, sfreq: float, signals=None, *, channel=None,
                 causal=False, tolerance=DEFAULT_TOLERANCE):
        super().__init__()
        self._sfreq, self._causal, self._tolerance = float(sfreq), causal, tolerance
        self._preview = None if signals is None else _Preview(signals, channel)
        self.settings = {"sfreq": self._sfreq, "fmin": FMIN, "fmax": self.fmax,
                         "causal": causal, "tolerance": tolerance}
        if self._preview is not None:
            self.channels, self.channel = self._preview.names, self._preview.channel
        self._design = None
        self._zoom = None  # (fmax, fmin) of a zoomed view, None for the whole range
        self.on_msg(self._on_page_message)
        self._show(_starting_points(start, self.fmax), "")

    # -- what users read -----------------------------------------------------------

    @property
    def fmax(self) -> float:
        """The highest frequency a point may take (Hz): just below Nyquist."""
        return _rounded_freq(0.999 * self._sfreq / 2, down=True)

    @property
    def curve(self) -> GainCurve:
        """The drawn curve (points joined on a log-frequency axis, monotone between them)."""
        return _curve_of(self.points)

    @property
    def design(self) -> FilterDesign:
        """The realized filter of :attr:`curve` at the editor's rate."""
        return self._design

    def print_code(self) -> None:
        """Print a line of Python that rebuilds :attr:`curve`."""
        print(self.code)

    def save_recipe(self, path=None) -> Path:
        """Write the curve and the editor's options as a recipe file
        (:func:`gainshape.write_recipe`), whole or not at all."""
        target = Path(path if path is not None else self.recipe_path)
        written = write_recipe(target, self.curve, causal=self._causal, tolerance=self._tolerance)
        self.message, self.message_kind = f"Recipe saved to {written}.", "done"
        return written

    # -- edits (what the page's gestures send; callable from Python too) --------------

    def drag(self, index: int, freq: float, gain: float) -> None:
        """Move point ``index`` to (``freq``, ``gain``), kept between its neighbours."""
        self.edit({"do": "drag", "index": index, "freq": freq, "gain": gain})

    def add_point(self, freq: float, gain: float) -> None:
        """Add a point (it becomes the selected one)."""
        self.edit({"do": "add", "freq": freq, "gain": gain})

    def remove_point(self, index: int) -> None:
        """Remove point ``index`` (a curve keeps at least two)."""
        self.edit({"do": "remove", "index": index})

    def start_from(self, shape: str) -> None:
        """Replace the points by an editable copy of a constructor's shape
        (one of :attr:`shapes`, with cut-offs suited to EEG at this rate)."""
        self.edit({"do": "start", "shape": shape})

    def edit(self, request: dict) -> None:
        """Apply one edit from the page (or from Python) and redesign.

        ``request["do"]`` is "drag", "step", "add", "remove", "start",
        "channel" or "save" (with "index", "freq", "gain", "freq_steps",
        "gain_steps", "big", "shape", "channel" or "path" as each needs). A
        "step" (a key press) moves point "index" by whole steps from where
        Python last put it, so presses faster than the round trip all count. Bad edits are clamped or refused with a
        visible :attr:`message`; the curve stays valid.
        """
        try:
            if request.get("do") == "step":  # a key press: relative to the state Python holds
                request = _stepped(self.points, request, self.scale)
            points, said, selected = _edited(self.points, request, self._sfreq, self.fmax)
            if points is None:
                self._other(request)
                return
        except _Refused as refusal:
            self.message = str(refusal)
            self._acknowledge(request)
            return
        self._show(points, said, request, selected)

    # -- inside -----------------------------------------------------------------

    def _other(self, request):
        what = request.get("do")
        if what == "channel" and self._preview is not None:
            self._preview.choose(request.get("channel"))
            self.channel = self._preview.channel
            self._show(self.points, "", request)
        elif what == "zoom":  # the frequencies shown; the curve itself is unchanged
            self._zoom = _zoom_range(request.get("low"), request.get("high"), self.fmax)
            self._show(self.points, "", request)
        elif what == "save":
            self.recipe_path = str(request.get("path") or self.recipe_path)
            try:
                self.save_recipe()
            except (OSError, ValueError) as err:
                self.message, self.message_kind = f"Not saved: {err}", "warning"
            self._acknowledge(request)
        else:
            self.message, self.message_kind = f"Unknown edit {what!r}.", "warning"
            self._acknowledge(request)

    def _on_page_message(self, _widget, content, _buffers):
        if isinstance(content, dict):
            self.edit(content)

    def _show(self, points, said, request=None, selected=None):
        start = time.perf_counter()
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always")
            realized, refusal = self._realized(_curve_of(points))
            refusal = " ".join(filter(None, [refusal, _growth(self._design, realized)]))
            view = editor_view(realized, *(self._zoom or (self.fmax, FMIN)))
            if self._preview is not None:
                view["preview"] = self._preview.view(realized)
        view["design_ms"] = round(1e3 * (time.perf_counter() - start), 1)
        said = " ".join(dict.fromkeys([said, refusal, *(str(w.message) for w in caught)])).strip()
        view["answer"] = (request or {}).get("serial")
        self._design = realized
        with self.hold_sync():
            self.points = [list(p) for p in points]
            self.selected = min(self.selected if selected is None else selected, len(points) - 1)
            self.message, self.message_kind = said, "warning"
            self.code = _code_line(points)
            self.view = view

    def _realized(self, curve) -> tuple[FilterDesign, str]:
        """The shortest kernel within tolerance; for a curve no kernel can
        follow (a drawn jump or kink), a kernel of ``FALLBACK_S`` seconds,
        with the reason (its own warning then says how far it misses)."""
        options = {"causal": self._causal, "tolerance": self._tolerance}
        try:
            return design(curve, self._sfreq, **options), ""
        except ValueError as err:
            return (design(curve, self._sfreq, kernel=FALLBACK_S, **options),
                    f"{err} Shown with a {FALLBACK_S:g} s kernel instead.")

    def _acknowledge(self, request):
        self.view = {**self.view, "answer": request.get("serial")}


def _zoom_range(low, high, fmax) -> tuple | None:
    """(high, low) of a zoomed view, within the editor's range; None (the whole
    range) when ``low`` and ``high`` are both missing.

    >>> _zoom_range(45, 155, 250.0), _zoom_range(None, None, 250.0)
    ((155.0, 45.0), None)
    """
    if low in (None, "") and high in (None, ""):
        return None
    try:
        low, high = float(low), float(high)
    except (TypeError, ValueError):
        raise _Refused(f"A view needs two frequencies; {low!r} and {high!r} were given.") from None
    low, high = max(low, FMIN), min(high, fmax)
    if not high > low * 1.01:
        raise _Refused(f"A view needs its upper frequency above its lower one; {low:g} and "
                       f"{high:g} Hz were given.")
    return high, low


_GROWTH = 4.0  # an edit that makes the kernel this many times longer says so


def _growth(before, after) -> str:
    """What an edit cost in kernel length, when it made the kernel over
    ``_GROWTH`` times longer, with the feature that makes it long ("" otherwise)."""
    if before is None or after.characteristics.length <= _GROWTH * before.characteristics.length:
        return ""
    cause = long_kernel_cause(after.curve, after.characteristics, after.sfreq)
    why = f", because of {cause.what}; {cause.remedy}" if cause else ""
    return (f"This edit made the kernel {after.characteristics.length / before.characteristics.length:.0f}"
            f" times longer, from {before.characteristics.length:.3g} s to "
            f"{after.characteristics.length:.3g} s{why}.")


class _Refused(ValueError):
    """An edit that cannot be made; its text is shown to the user."""


def _edited(points, request, sfreq, fmax):
    """(new points, message, selected point) for an edit of the points, or
    (None, "", None) for another edit."""
    what = request.get("do")
    if what == "start":
        shape = request.get("shape")
        if shape not in _SHAPES:
            raise _Refused(f"Unknown shape {shape!r}; the editor starts from {', '.join(_SHAPES)}.")
        return editable_points(_shape(shape, sfreq), FMIN, fmax), "", 0
    if what not in ("drag", "add", "remove"):
        return None, "", None
    points = [list(p) for p in points]
    if what == "remove":
        index = _index(request, points)
        if len(points) <= 2:
            raise _Refused("A curve keeps at least two points; this one was not removed.")
        del points[index]
        return points, "", min(index, len(points) - 1)
    freq, gain, said = _checked_point(request.get("freq"), request.get("gain"), fmax)
    if what == "add":
        if any(f == freq for f, _ in points):
            raise _Refused(f"There is already a point at {freq:g} Hz.")
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


def _stepped(points, request, scale: str) -> dict:
    """A key press's relative move as the drag it amounts to: frequency by
    1/24 octave (1/2 with "big"), gain by 0.01 (0.1) or, on the dB scale, 1 dB (6 dB).

    >>> _stepped([[1.0, 0.5], [2.0, 1.0]], {"index": 0, "freq_steps": 24, "gain_steps": -1}, "gain")
    {'do': 'drag', 'index': 0, 'freq': 2.0, 'gain': 0.49}
    """
    index = _index(request, points)
    freq, gain = points[index]
    big = bool(request.get("big"))
    try:
        octaves, levels = int(request.get("freq_steps", 0)), int(request.get("gain_steps", 0))
    except (TypeError, ValueError):
        raise _Refused("A key step needs whole numbers of steps.") from None
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
        raise _Refused(f"There is no point {index!r} (the curve has {len(points)}).")
    return index


def _checked_point(freq, gain, fmax) -> tuple[float, float, str]:
    """The point rounded to what the code line states, clamped into range, and what was clamped."""
    try:
        freq, gain = float(freq), float(gain)
    except (TypeError, ValueError):
        raise _Refused(f"A point needs a frequency and a gain as numbers; "
                       f"{freq!r} and {gain!r} were given.") from None
    if not (np.isfinite(freq) and np.isfinite(gain)):
        raise _Refused(f"A point needs finite numbers; {freq!r} Hz and gain {gain!r} were given.")
    said = []
    if gain < 0:
        gain, _ = 0.0, said.append("A gain cannot be negative: kept at 0.")
    elif gain > 1:
        gain, _ = 1.0, said.append("The editor draws gains up to 1 (it does not amplify): kept at 1.")
    if freq >= fmax:
        said.append(f"Frequencies stay below Nyquist: kept at {fmax:g} Hz.")
        freq = fmax
    elif freq < FMIN:
        said.append(f"The editor starts at {FMIN:g} Hz (gains below it follow the first "
                    f"point): kept at {FMIN:g} Hz.")
        freq = FMIN
    return _rounded_freq(freq), round(gain, 4), " ".join(said)


def _between(freq, low, high) -> float:
    """``freq`` kept strictly between the neighbours' frequencies (0.1 % away from each)."""
    if low is not None and freq <= low * 1.001:
        return _rounded_freq(low * 1.001, down=False)
    if high is not None and freq >= high / 1.001:
        return _rounded_freq(high / 1.001, down=True)
    return freq


def _rounded_freq(freq: float, down: bool | None = None) -> float:
    """Four significant digits (rounded down or up when asked, to stay inside a limit).

    >>> _rounded_freq(0.1234567), _rounded_freq(124.99, down=True), _rounded_freq(0.10001, down=False)
    (0.1235, 124.9, 0.1001)
    """
    scale = 10.0 ** (np.floor(np.log10(freq)) - 3)
    rounder = {None: np.round, True: np.floor, False: np.ceil}[down]
    return float(round(float(rounder(freq / scale) * scale), 12))


def _curve_of(points) -> GainCurve:
    freqs, gains = zip(*points)
    return GainCurve.from_points(freqs, gains, freq_scale="log")


def _code_line(points) -> str:
    """A line of Python that rebuilds the curve exactly.

    >>> _code_line([[0.1, 0.0], [1.0, 1.0]])
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
        raise _Refused(f"A 50 Hz notch comb needs a rate above 110 Hz; this editor's is {sfreq:g}.")
    return made[shape]()


def _starting_points(curve: GainCurve, fmax: float) -> list:
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
    grid = np.unique([_rounded_freq(f) for f in np.geomspace(fmin, fmax, 8000)])
    wanted = np.clip(curve(grid), 0.0, 1.0).round(4)
    chosen = [0, grid.size - 1]
    while len(chosen) < most:
        follows = _curve_of([[grid[i], wanted[i]] for i in chosen])(grid)
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
    times, kernel = realized.times, realized.kernel
    near = outer_envelope_db(kernel) > _SHOWN_DB
    return {
        "freqs": _numbers(freqs), "requested": _numbers(requested), "realized": _numbers(got),
        "deviation": _numbers(got - requested), "tolerance": realized.tolerance,
        "impulse": {**_trace(times[near], kernel[near]), **_off_scale_peak(times, kernel)},
        "step": _trace(times, np.cumsum(kernel)),
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
    peak_value, limit = _numbers([kernel[peak], 1.3 * rest.max()])
    return {"peak": peak_value, "peak_time": float(times[peak]), "limit": limit}


def _trace(times, values) -> dict:
    """A trace to draw: as is when short, else the min and max of each of
    ``_TRACE // 2`` runs of equal length (the last run shorter), in time
    order, which keeps every peak.

    >>> _trace(np.arange(6.0), np.array([0, 5, 1, 1, -4, 2.0]))["values"]
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
    return {"times": _numbers(times), "values": _numbers(values)}


def _numbers(values) -> list:
    """Plain floats rounded to 7 significant digits (what the page can show).

    >>> _numbers([1234.56789, -0.000123456789, 0.0])
    [1234.568, -0.0001234568, 0.0]
    """
    values = np.asarray(values, dtype=float)
    magnitude = np.floor(np.log10(np.where(values == 0, 1.0, np.abs(values))))
    scale = 10.0 ** (6 - magnitude)
    return (np.round(values * scale) / scale).tolist()


class _Preview:
    """One channel of a recording before and after the design: spectrum and average."""

    def __init__(self, signals, channel):
        self.signals = signals
        self.names = list(signals.ch_names)
        self.choose(channel if channel is not None else self.names[0])

    def choose(self, channel):
        if channel not in self.names:
            raise _Refused(f"No data channel {channel!r}; the recording has "
                           f"{', '.join(self.names[:6])}{'...' if len(self.names) > 6 else ''}.")
        self.channel = channel
        s = self.signals
        rows = np.asarray(s.data[..., self.names.index(channel), :], dtype=float)
        if s.kind == "raw":
            rows = rows[None, : int(_RAW_SECONDS * s.sfreq)]
        self.rows = np.atleast_2d(rows)
        self.nperseg = min(self.rows.shape[-1], int(4 * s.sfreq))
        freqs, before = welch_density(self.rows, s.sfreq, self.nperseg)
        # power in µV²/Hz for data in volts (as EEG spectra are read), else in the data's units
        self.power_scale, unit_words = (1e12, "µV²/Hz") if s.unit == "V" else (1.0, "unit²/Hz")
        self.kept = freqs > 0
        self.times = s.times[: self.rows.shape[-1]]
        span = f"{self.times[0]:.3g} to {self.times[-1]:.3g} s"
        # a short record's padding note names it as the user knows it (one note a design)
        self.words = SegmentWords({"raw": f"The previewed first {self.times[-1]:.3g} s",
                                   "epochs": f"Each epoch ({span})",
                                   "evoked": f"The evoked response ({span})",
                                   "array": None}[s.kind])
        what = {"raw": f"first {self.times[-1] - self.times[0]:.3g} s",
                "epochs": f"average of {self.rows.shape[0]} epochs",
                "evoked": "the evoked response", "array": "the signal"}[s.kind]
        # what does not depend on the design, computed once per channel
        self.fixed = {"channel": channel, "label": what, "unit": s.unit,
                      "freqs": _numbers(freqs[self.kept]),
                      "before_db": _numbers(_db(self.power_scale * before.mean(axis=0)[self.kept])),
                      "spectrum_label": f"power (dB re 1 {unit_words})",
                      "wave_before": _trace(self.times, self.rows.mean(axis=0))}

    def view(self, realized) -> dict:
        after_rows = filter_array(self.rows, realized, words=self.words)
        _, after = welch_density(after_rows, self.signals.sfreq, self.nperseg)
        return {**self.fixed,
                "after_db": _numbers(_db(self.power_scale * after.mean(axis=0)[self.kept])),
                "wave_after": _trace(self.times, after_rows.mean(axis=0))}


def _db(power) -> np.ndarray:
    return 10 * np.log10(np.maximum(power, np.finfo(float).tiny))

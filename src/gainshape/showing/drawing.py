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

from .._checks import check_bool, check_positive, check_tolerance, DEFAULT_TOLERANCE
from .._spectra import welch_density
from .._types import PathLike, Recording
from ..filtering.engine import filter_array, SegmentWords
from ..record.recipes import write_recipe
from ..filtering.signals import Signals, as_arrays
from ..shaping.curves import GainCurve
from ..shaping.design import design
from ..shaping.filter_design import FilterDesign
from ..shaping.shapes import bandpass
from .edits import (
    as_db, code_line, curve_of, edited, editor_view, FMIN, growth_note, numbers_of, RAW_SECONDS,
    Refused, rounded_freq, SHAPES, starting_points, stepped, trace_of, zoom_range,
)

__all__ = ["GainEditor", "draw"]

FALLBACK_S = 30.0  # kernel length (s) shown for a curve no kernel follows within tolerance


def draw(curve: GainCurve | None = None, sfreq: float | None = None,
         data: Recording | np.ndarray | None = None, *, channel: str | int | None = None,
         causal: bool = False, tolerance: float = DEFAULT_TOLERANCE) -> GainEditor:
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
        The recording to preview on, as :func:`gainshape.filtering.signals.as_arrays` gives it.
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

    points: traitlets.List = traitlets.List().tag(sync=True)
    selected = traitlets.Int(0).tag(sync=True)
    scale = traitlets.Enum(["gain", "dB"], "gain").tag(sync=True)
    message = traitlets.Unicode("").tag(sync=True)
    message_kind = traitlets.Unicode("warning").tag(sync=True)  # "done" (a success) or "warning"
    view = traitlets.Dict().tag(sync=True)
    code = traitlets.Unicode("").tag(sync=True)
    recipe_path = traitlets.Unicode("filter_recipe.json").tag(sync=True)
    channel = traitlets.Unicode("").tag(sync=True)
    channels: traitlets.List = traitlets.List().tag(sync=True)
    shapes = traitlets.List(list(SHAPES)).tag(sync=True)
    settings = traitlets.Dict().tag(sync=True)

    def __init__(self, start: GainCurve, sfreq: float, signals: Signals | None = None, *,
                 channel: str | int | None = None, causal: bool = False,
                 tolerance: float = DEFAULT_TOLERANCE) -> None:
        super().__init__()
        self._sfreq, self._causal, self._tolerance = float(sfreq), causal, tolerance
        self._preview = None if signals is None else _Preview(signals, channel)
        self.settings = {"sfreq": self._sfreq, "fmin": FMIN, "fmax": self.fmax,
                         "causal": causal, "tolerance": tolerance}
        if self._preview is not None:
            self.channels, self.channel = self._preview.names, self._preview.channel
        self._design: FilterDesign | None = None
        self._zoom = None  # (fmax, fmin) of a zoomed view, None for the whole range
        self.on_msg(self._on_page_message)
        self._show(starting_points(start, self.fmax), "")

    # -- what users read -----------------------------------------------------------

    @property
    def fmax(self) -> float:
        """The highest frequency a point may take (Hz): just below Nyquist."""
        return rounded_freq(0.999 * self._sfreq / 2, down=True)

    @property
    def curve(self) -> GainCurve:
        """The drawn curve (points joined on a log-frequency axis, monotone between them)."""
        return curve_of(self.points)

    @property
    def design(self) -> FilterDesign:
        """The realized filter of :attr:`curve` at the editor's rate."""
        assert self._design is not None  # made in __init__
        return self._design

    def print_code(self) -> None:
        """Print a line of Python that rebuilds :attr:`curve`."""
        print(self.code)

    def save_recipe(self, path: PathLike | None = None) -> Path:
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
                request = stepped(self.points, request, self.scale)
            points, said, selected = edited(self.points, request, self._sfreq, self.fmax)
            if points is None:
                self._other(request)
                return
        except Refused as refusal:
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
            self._zoom = zoom_range(request.get("low"), request.get("high"), self.fmax)
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
            realized, refusal = self._realized(curve_of(points))
            refusal = " ".join(filter(None, [refusal, growth_note(self._design, realized)]))
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
            self.code = code_line(points)
            self.view = view

    def _realized(self, curve) -> tuple[FilterDesign, str]:
        """The shortest kernel within tolerance; for a curve no kernel can
        follow (a drawn jump or kink), a kernel of ``FALLBACK_S`` seconds,
        with the reason (its own warning then says how far it misses)."""
        causal, tolerance = self._causal, self._tolerance
        try:
            return design(curve, self._sfreq, causal=causal, tolerance=tolerance), ""
        except ValueError as err:
            return (design(curve, self._sfreq, kernel=FALLBACK_S, causal=causal,
                           tolerance=tolerance),
                    f"{err} Shown with a {FALLBACK_S:g} s kernel instead.")

    def _acknowledge(self, request):
        self.view = {**self.view, "answer": request.get("serial")}


class _Preview:
    """One channel of a recording before and after the design: spectrum and average."""

    def __init__(self, signals, channel):
        self.signals = signals
        self.names = list(signals.ch_names)
        self.choose(channel if channel is not None else self.names[0])

    def choose(self, channel):
        if channel not in self.names:
            raise Refused(f"No data channel {channel!r}; the recording has "
                           f"{', '.join(self.names[:6])}{'...' if len(self.names) > 6 else ''}.")
        self.channel = channel
        s = self.signals
        rows = np.asarray(s.data[..., self.names.index(channel), :], dtype=float)
        if s.kind == "raw":
            rows = rows[None, : int(RAW_SECONDS * s.sfreq)]
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
                      "freqs": numbers_of(freqs[self.kept]),
                      "before_db": numbers_of(as_db(self.power_scale * before.mean(axis=0)[self.kept])),
                      "spectrum_label": f"power (dB re 1 {unit_words})",
                      "wave_before": trace_of(self.times, self.rows.mean(axis=0))}

    def view(self, realized) -> dict:
        after_rows = filter_array(self.rows, realized, words=self.words)
        _, after = welch_density(after_rows, self.signals.sfreq, self.nperseg)
        return {**self.fixed,
                "after_db": numbers_of(as_db(self.power_scale * after.mean(axis=0)[self.kept])),
                "wave_after": trace_of(self.times, after_rows.mean(axis=0))}



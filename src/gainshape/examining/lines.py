"""Narrow lines in a recording's spectrum: mains hum and other interference,
found and measured before anything is filtered, and the notch comb that
removes exactly them.

Vocabulary: each channel's *spectrum* is its Welch power density (Hann
windows of ``1 / resolution`` seconds, 50 % overlap). Its *background* is
the broadband part: a running median of the spectrum over a window 8x as
wide as the widest line, scaled from median to mean for the spread of a
Welch estimate. The *excess* is spectrum / background; the *typical excess*
at a frequency is its ``1 - presence`` quantile over channels (the median
for ``presence=0.5``: at least half the channels stand that high). A *line*
is a run of frequencies whose typical excess passes the threshold, at most
``max_width`` wide at half its height, with 80 % of its excess power within
``max_width`` / 2 of its centre.

Why a running median: a line covers at most an eighth of the window, so the
median passes under it; EEG's broadband spectrum is smooth and mostly
monotone over a few hertz, and the median of a monotone run is its middle
value, so the background follows the 1/f slope without bias. Broad peaks
such as alpha stand out of so wide a window nearly whole, and are wider
than any line (an alpha peak narrower than ``max_width`` at half height
would pass for one).
"""

from __future__ import annotations

import numpy as np
import xarray as xr
from scipy import ndimage, stats

from .._checks import check_fraction, check_positive, warn
from .._spectra import welch_density
from .._types import Recording
from ..filtering.signals import as_arrays, clean_spans
from .causes import line_causes, mains_line, stimulus_rate

__all__ = ["find_lines"]

_WINDOW = "hann"  # main lobe +-2 bins: the finest resolution for a segment length
_HALF_HEIGHT_NARROW_BINS = 3.0  # up to this width a line is a tone: its peak is interpolated
_LINE_SHARE = 0.8  # of a line's excess power within +-max_width/2 of its centre
_WINDOW_WIDTHS = 4.0  # the background's median runs over +- this many max_width
_MIN_SEGMENTS_WARNED = 8  # fewer averaged segments: a noisy spectrum, weak lines are missed


def find_lines(inst: Recording | np.ndarray, *, sfreq: float | None = None,
               resolution: float | None = None,
               freq_range: tuple[float, float | None] = (1.0, None),
               min_height_db: float = 5.0, max_width: float = 1.0, presence: float = 0.5,
               chance: float = 0.01, events: np.ndarray | None = None) -> xr.Dataset:
    """Find narrow lines (mains hum, equipment) in the data channels' spectra.

    Parameters
    ----------
    inst : Raw | Epochs | Evoked | ndarray
        The recording before filtering; arrays are (channels, times) and
        need ``sfreq``. Epochs' spectra are averaged over epochs; a Raw's
        spans annotated as bad (descriptions starting with "bad") are left
        out, each clean stretch at least one window long adding its
        segments.
    sfreq : float | None
        Sampling rate in Hz, for arrays.
    resolution : float | None
        Spacing of the spectrum's frequencies in Hz: Hann windows of
        ``1 / resolution`` seconds. None: 0.1 Hz, or coarser when a record
        (an epoch) is shorter than 10 s. A finer resolution separates close
        lines and locates them better but needs longer records.
    freq_range : (float, float | None)
        Where to look, in Hz (None: up to 98 % of the Nyquist frequency).
    min_height_db : float
        The least typical excess of a line, in dB above the background.
    max_width : float
        The widest a line may be at half its height, in Hz; broader peaks
        (alpha, beta) are not lines.
    presence : float
        The fraction of channels (0 to 1) in which a line must stand out.
    chance : float
        How many lines background fluctuations alone may produce per
        spectrum, on average: the threshold is raised above
        ``min_height_db`` when the spectrum averages few segments.
    events : None | False | ndarray | mne.Annotations
        The stimulus onsets of the paradigm: an MNE events array (samples
        in the first column), or annotations. None reads them from the data
        (an Epochs' events; a Raw's annotations other than bad and edge
        spans, else its stim channels); False looks for none. When the
        onsets come at a fixed rate (9 in 10 intervals within 1 % of their
        median), lines at whole multiples of that rate (up to the 40th) are
        stimulus-locked: a response repeated exactly every T seconds has
        lines at k / T.

    Returns
    -------
    xarray.Dataset
        Dimension ``line`` (by frequency): ``line_frequency`` (Hz, the
        interpolated peak of a tone or the middle of a wider line),
        ``height_db`` (the typical excess at the peak), ``width`` (Hz, full
        width at half the highest bin's excess power, interpolated linearly
        between bins: a steady tone reads 1.33 bins on a bin, 2.04 bins
        midway between two), ``cause`` ("mains", "mains harmonic",
        "stimulus-locked", "harmonic" or "unexplained", assigned in that
        order: to the mains frequency ``info["line_freq"]`` states, or, when
        it is missing, the line found at 50 or 60 Hz; to the stimulus rate;
        then to the strongest lower line left that is not itself a
        harmonic), ``harmonic_of`` (the frequency the line is a whole
        multiple of; else NaN), ``n_channels`` and ``present`` (line x
        channel: the channel's own excess at the line passes half the
        threshold, in dB). Also ``psd`` and ``background`` (channel x
        ``frequency``, the dimension's name in :func:`observed_gain` too)
        and ``typical_excess_db`` (``frequency``). Before 0.2 the line's
        frequency was the variable ``frequency`` and the dimension ``freq``.
        Attrs: the settings,
        ``threshold_db``, ``segments``, ``sfreq``, ``line_freq`` (from
        ``info``, NaN if missing), ``mains`` (the frequency mains was taken
        at, NaN if none) and ``stimulus_rate`` (Hz, NaN if the onsets are
        not at a fixed rate or none were found).

    Raises
    ------
    ValueError
        Before any spectrum is estimated: records shorter than one window at
        the ``resolution`` asked, a ``freq_range`` beyond the Nyquist
        frequency or empty, parameters out of range.

    See Also
    --------
    suggest_notches, plot_lines, notch

    References
    ----------
    Welch PD (1967). The use of fast Fourier transform for the estimation of
    power spectra: a method based on time averaging over short, modified
    periodograms. IEEE Trans Audio Electroacoust 15:70-73.

    Harris FJ (1978). On the use of windows for harmonic analysis with the
    discrete Fourier transform. Proc IEEE 66:51-83.

    Examples
    --------
    >>> import numpy as np, gainshape as gs
    >>> t = np.arange(60 * 250) / 250.0
    >>> x = np.random.default_rng(0).standard_normal((4, t.size)) + np.sin(2 * np.pi * 50 * t)
    >>> found = gs.find_lines(x, sfreq=250.0)
    >>> [round(float(f), 2) for f in found.line_frequency]
    [50.0]
    """
    presence = check_fraction("presence", presence)
    chance = check_positive("chance", chance)
    min_height_db = check_positive("min_height_db", min_height_db)
    max_width = check_positive("max_width", max_width)
    signals = as_arrays(inst, sfreq=sfreq)
    rate = stimulus_rate(inst, events, signals.sfreq)
    records = _records_of(signals.data, clean_spans(inst))
    nperseg, resolution = _window(signals, records, resolution)
    band = _band(freq_range, signals.sfreq, resolution)
    freqs, psd, averaged, dof = _spectrum(records, signals.sfreq, nperseg)
    if averaged < _MIN_SEGMENTS_WARNED:
        warn(f"The spectrum averages only {averaged} segment{'s' if averaged > 1 else ''} of "
             f"{nperseg / signals.sfreq:g} s: the threshold rises to keep chance lines out "
             "and weak lines may be missed; a coarser 'resolution' averages more.")
    background = _background(psd, freqs, max_width, dof)
    searched = (freqs >= band[0]) & (freqs <= band[1])
    threshold = _threshold(min_height_db, chance, int(searched.sum()), dof)
    with np.errstate(divide="ignore", invalid="ignore"):
        excess = psd / background
    typical = np.quantile(excess, 1.0 - presence, axis=0)  # the statistic lines must pass
    found = [_measure(typical, freqs, run, threshold) for run in _runs(typical, searched, threshold)]
    found = [line for line in found if line["width"] <= max_width
             and _concentrated(typical, freqs, line, max_width)]
    return _dataset(found, excess, threshold, {
        "signals": signals, "freqs": freqs, "psd": psd, "background": background,
        "typical": typical,
        "settings": {"resolution": resolution, "window": f"{_WINDOW}, {nperseg} samples, "
                     "50 % overlap", "freq_range": list(band), "min_height_db": min_height_db,
                     "max_width": max_width, "presence": presence, "chance": chance},
        "segments": averaged, "stimulus_rate": rate})


def _records_of(data, spans) -> list:
    """The records a spectrum averages: epochs (one 3-D array), each clean span
    of a Raw (bad spans left out), or the whole record."""
    if data.ndim == 3 or spans is None:
        return [data]
    return [data[:, a:b] for a, b in spans]


def _window(signals, records, resolution) -> tuple[int, float]:
    """Window length (samples) and the resolution it gives, checked against the
    longest record."""
    n_times, sfreq = max(r.shape[-1] for r in records), signals.sfreq
    seconds = n_times / sfreq
    if resolution is None:
        resolution = max(0.1, 1.0 / seconds)
    resolution = check_positive("resolution", resolution)
    nperseg = int(round(sfreq / resolution))
    if nperseg > n_times:
        what = ("epochs are" if signals.data.ndim == 3 else
                "longest stretch without a bad span is" if len(records) > 1 else "record is")
        raise ValueError(f"The 'resolution' of {resolution:g} Hz needs records of at least "
                         f"{1 / resolution:g} s, but the {what} {seconds:g} s long; "
                         f"ask for {1 / seconds:.3g} Hz or coarser.")
    return nperseg, sfreq / nperseg


def _spectrum(records, sfreq, nperseg) -> tuple:
    """Frequencies, the Welch density averaged over every segment of the
    records long enough for one, the number of segments and their degrees of
    freedom (records and epochs are independent: their degrees of freedom add)."""
    total, segments, dof = 0.0, 0, 0.0
    for record in records:  # (channels, times) or (epochs, channels, times)
        count = _segment_count(record, nperseg)
        if count < 1:
            continue
        freqs, psd = welch_density(record, sfreq, nperseg, _WINDOW)
        epochs = record.shape[0] if record.ndim == 3 else 1
        total = total + count * psd.reshape(epochs, *psd.shape[-2:]).sum(axis=0)
        segments += epochs * count
        dof += epochs * _degrees_of_freedom(nperseg, count)
    return freqs, total / segments, segments, dof


def _band(freq_range, sfreq, resolution) -> tuple[float, float]:
    nyquist = sfreq / 2.0
    try:
        low, high = freq_range
    except (TypeError, ValueError):
        raise ValueError("The 'freq_range' parameter takes (low, high) in Hz (high may be "
                         f"None); {freq_range!r} was given.") from None
    high = 0.98 * nyquist if high is None else float(high)
    low = float(low)
    if high > nyquist:
        raise ValueError(f"The 'freq_range' reaches {high:g} Hz, beyond the Nyquist frequency "
                         f"({nyquist:g} Hz); nothing above it is in the data.")
    if not 0 <= low < high - 4 * resolution:
        raise ValueError(f"The 'freq_range' ({low:g}, {high:g}) Hz must run upwards from 0 Hz "
                         f"over more than 4 bins of {resolution:g} Hz.")
    return low, high


def _segment_count(data, nperseg) -> int:
    step = nperseg - nperseg // 2
    return (data.shape[-1] - nperseg) // step + 1


def _degrees_of_freedom(nperseg: int, segments: int) -> float:
    """Equivalent degrees of freedom of a Welch average (Hann, 50 % overlap).

    nu = 2K / (1 + 2 sum_m (1 - m/K) rho(m)^2), rho(m) the window's overlap
    correlation at a shift of m steps (Percival & Walden 1993, from memory).

    >>> round(float(_degrees_of_freedom(1000, 1)), 2), round(float(_degrees_of_freedom(1000, 21)), 1)
    (2.0, 39.9)
    """
    from scipy.signal import get_window

    w = get_window(_WINDOW, nperseg)
    step = nperseg - nperseg // 2
    energy = np.sum(w**2)
    rho = [np.sum(w[m * step :] * w[: nperseg - m * step]) / energy
           for m in range(1, min(segments, -(-nperseg // step)))]
    denominator = 1 + 2 * sum((1 - m / segments) * r**2 for m, r in enumerate(rho, start=1))
    return 2 * segments / denominator


def _background(psd, freqs, max_width, dof) -> np.ndarray:
    """Running median over +-4 ``max_width`` Hz (symmetric, shrinking near 0
    Hz and Nyquist), raised from median to mean of a chi-square(dof)/dof."""
    half = max(1, int(round(_WINDOW_WIDTHS * max_width / freqs[1])))
    median = ndimage.median_filter(psd, size=(1, 2 * half + 1), mode="nearest")
    n = psd.shape[-1]
    for i in list(range(1, half)) + list(range(n - half, n - 1)):
        k = min(i - 1, n - 2 - i)  # the widest symmetric window inside bins 1..n-2
        median[:, i] = np.median(psd[:, i - k : i + k + 1], axis=-1)
    median[:, [0, -1]] = median[:, [1, -2]]
    return median / (stats.chi2.median(dof) / dof)


def _threshold(min_height_db, chance, n_searched, dof) -> float:
    """The typical excess (ratio) a line must pass: ``min_height_db``, or
    higher where a single channel's background alone would pass it more than
    ``chance`` times in the searched bins."""
    by_chance = stats.chi2.isf(chance / max(n_searched, 1), dof) / dof
    return max(10 ** (min_height_db / 10), by_chance)


def _runs(typical, searched, threshold) -> list:
    """Runs of bins (start, stop) above the threshold inside the searched range,
    widened to where the excess falls below half the threshold (in dB)."""
    above = np.flatnonzero(searched & (typical >= threshold))
    if above.size == 0:
        return []
    lower = np.sqrt(threshold)
    runs: list = []
    for piece in np.split(above, np.flatnonzero(np.diff(above) > 1) + 1):
        start, stop = piece[0], piece[-1] + 1
        while start > 1 and typical[start - 1] >= lower:
            start -= 1
        while stop < typical.size - 1 and typical[stop] >= lower:
            stop += 1
        if runs and start <= runs[-1][1]:  # joined through a dip above half the threshold
            runs[-1] = (runs[-1][0], stop)
        else:
            runs.append((start, stop))
    return runs


def _measure(typical, freqs, run, threshold) -> dict:
    """A line's frequency, height and width from the typical excess in its run."""
    start, stop = run
    excess = typical[start:stop] - 1.0
    peak = start + int(np.argmax(excess))
    top = typical[peak] - 1.0
    left, right = _half_height_edges(typical - 1.0, freqs, peak, top, start, stop)
    width = right - left
    df = freqs[1]
    if width <= _HALF_HEIGHT_NARROW_BINS * df and 0 < peak < typical.size - 1:
        shift, top = _parabola_peak(np.log(np.maximum(typical[peak - 1 : peak + 2] - 1.0,
                                                      1e-12)))
        frequency = freqs[peak] + shift * df
    else:
        frequency = 0.5 * (left + right)
    return {"frequency": frequency, "height_db": 10 * np.log10(1.0 + top), "width": width,
            "peak_bin": peak, "bins": (start, stop)}


def _concentrated(typical, freqs, line, max_width, share=_LINE_SHARE) -> bool:
    """Whether ``share`` of the excess power of the line's run lies within
    +-``max_width``/2 of its centre: true of a tone or a drifting line, not
    of a broad peak (alpha) whose spiky top reads narrow at half its height.

    >>> f = np.arange(0.0, 20.0, 0.1)
    >>> tone = 1 + 100 * (np.abs(f - 10.0) < 0.05)
    >>> bump = 1 + 10 * np.exp(-0.5 * ((f - 10.0) / 0.6) ** 2)
    >>> _concentrated(tone, f, {"frequency": 10.0, "bins": (95, 106)}, 1.0)
    True
    >>> _concentrated(bump, f, {"frequency": 10.0, "bins": (80, 121)}, 1.0)
    False
    """
    start, stop = line["bins"]
    excess = np.maximum(typical[start:stop] - 1.0, 0.0)
    near = np.abs(freqs[start:stop] - line["frequency"]) <= max_width / 2
    return bool(excess[near].sum() >= share * excess.sum())


def _half_height_edges(excess, freqs, peak, top, start, stop) -> tuple[float, float]:
    """Where the excess falls to half ``top`` on either side, interpolated
    linearly between bins (the outermost crossing inside the run)."""
    half = top / 2.0
    inside = np.flatnonzero(excess[start:stop] >= half) + start
    lo, hi = inside[0], inside[-1]

    def crossing(a, b):  # between bins a (below half) and b (above)
        if excess[a] >= half:
            return freqs[a]
        return freqs[a] + (half - excess[a]) / (excess[b] - excess[a]) * (freqs[b] - freqs[a])

    return crossing(lo - 1, lo), crossing(hi + 1, hi)


def _parabola_peak(values) -> tuple[float, float]:
    """Offset (bins) and height (exp of the value) of the parabola's top
    through three equally spaced log values.

    >>> shift, top = _parabola_peak(np.log([1.0, 4.0, 1.0]))
    >>> abs(shift), float(top)
    (0.0, 4.0)
    """
    a, b, c = values
    curvature = a - 2 * b + c
    shift = 0.0 if curvature >= 0 else 0.5 * (a - c) / curvature
    shift = float(np.clip(shift, -0.5, 0.5))
    return shift, float(np.exp(b - 0.25 * (a - c) * shift))


def _dataset(found, excess, threshold, parts) -> xr.Dataset:
    signals, freqs = parts["signals"], parts["freqs"]
    frequency = [line["frequency"] for line in found]
    present = np.array([excess[:, line["peak_bin"]] >= np.sqrt(threshold) for line in found],
                       dtype=bool).reshape(len(found), len(signals.ch_names))
    tolerance = max(0.05, freqs[1] / 2)
    line_freq = signals.line_freq if signals.line_freq else np.nan
    heights = [line["height_db"] for line in found]
    mains = mains_line(frequency, heights, line_freq)
    causes, harmonic_of = line_causes(frequency, heights, mains, parts["stimulus_rate"], tolerance)
    with np.errstate(divide="ignore"):  # a flat channel's bins read -inf dB
        typical_db = 10 * np.log10(parts["typical"])
    return xr.Dataset(
        {
            "line_frequency": ("line", np.array(frequency, float), {"units": "Hz"}),
            "height_db": ("line", np.array([line["height_db"] for line in found], float),
                          {"units": "dB", "long_name": "typical excess over the background"}),
            "width": ("line", np.array([line["width"] for line in found], float),
                      {"units": "Hz", "long_name": "full width at half the excess power"}),
            "cause": ("line", np.array(causes, dtype=object).astype(str)
                      if causes else np.array([], dtype="<U16")),
            "harmonic_of": ("line", np.array(harmonic_of, float), {"units": "Hz"}),
            "n_channels": ("line", present.sum(axis=1)),
            "present": (("line", "channel"), present),
            "psd": (("channel", "frequency"), parts["psd"], {"units": f"{signals.unit}^2/Hz"}),
            "background": (("channel", "frequency"), parts["background"],
                           {"units": f"{signals.unit}^2/Hz"}),
            "typical_excess_db": ("frequency", typical_db,
                                  {"units": "dB", "long_name": "typical excess over the "
                                   "background, the statistic a line must lift over the threshold"}),
        },
        coords={"line": np.arange(len(found)), "channel": signals.ch_names, "frequency": freqs},
        attrs={**parts["settings"], "threshold_db": 10 * np.log10(threshold),
               "segments": parts["segments"], "sfreq": signals.sfreq,
               "line_freq": float(line_freq), "kind": signals.kind, "mains": float(mains),
               "stimulus_rate": float(parts["stimulus_rate"])},
    )



"""What changed: band power before and after, and the gain the data actually saw.

Vocabulary: a *band* is a named frequency range [low, high) in Hz; *power*
is the Welch power spectral density integrated over a band (units of the
data squared); *retained* is power after / power before; *observed gain* is
the magnitude of the cross-spectral transfer estimate |P_xy / P_xx|.
"""

from __future__ import annotations

import numpy as np
import xarray as xr
from scipy.signal import csd, welch

from .._checks import warn
from .._spectra import welch_density
from .._types import Recording
from ..filtering.signals import as_arrays

__all__ = ["band_change", "band_change_map", "observed_gain", "DEFAULT_BANDS", "spectral_settings"]

# Common practice (no source): the classic EEG bands, with a slow band below
# delta where high-pass filters act.
DEFAULT_BANDS = {
    "slow": (0.1, 1.0),
    "delta": (1.0, 4.0),
    "theta": (4.0, 8.0),
    "alpha": (8.0, 13.0),
    "beta": (13.0, 30.0),
    "gamma": (30.0, 45.0),
}
_LINE_HALF_WIDTH = 1.0  # Hz either side of info["line_freq"]
_WINDOW_SECONDS = 16.0
_WINDOW = "blackmanharris"  # -92 dB side lobes: EEG spectra span > 60 dB (drift vs bands)
_MAIN_LOBE_BINS = 4  # half-width of the 4-term Blackman-Harris main lobe, in bins (Harris 1978)
_UNMEASURABLE = 1e-8  # input PSD below this fraction of its channel median
_MIN_SAMPLES = 16  # shortest record a spectrum is estimated from
_OBSERVED_WINDOW_SECONDS = 40.0  # main lobe +-0.1 Hz: half of 0.2 Hz


def spectral_settings(n_times: int, sfreq: float, seconds: float = _WINDOW_SECONDS) -> dict:
    """Welch settings used by the summaries.

    Blackman-Harris windows of ``seconds`` (at most the data's length) with
    50 % overlap: their low side lobes keep the strong slow drift of raw EEG
    from leaking into the bands above it (a Hann window's -31 dB side lobes
    do not).

    Examples
    --------
    >>> spectral_settings(100000, 250.0)["nperseg"]
    4000
    """
    nperseg = int(min(n_times, round(seconds * sfreq)))
    return {"window": _WINDOW, "nperseg": nperseg, "noverlap": nperseg // 2,
            "detrend": "constant", "scaling": "density", "average": "mean"}


def band_change(before: Recording | np.ndarray, after: Recording | np.ndarray,
                bands: dict[str, tuple[float, float]] | None = None, *,
                sfreq: float | None = None, lines: xr.Dataset | None = None) -> xr.Dataset:
    """Per channel and band: power before and after filtering, and the change.

    Parameters
    ----------
    before, after : Raw | Epochs | Evoked | ndarray
        The same data before and after filtering (same channels, sampling
        rate and length). Data channels are compared; arrays are
        (channels, times) and need ``sfreq``.
    bands : dict of str -> (low, high) | None
        Bands in Hz. Default: :data:`DEFAULT_BANDS` plus a "line" band of
        +-1 Hz around ``info["line_freq"]`` when it is set, leaving out (with
        a warning) those reaching above the Nyquist frequency.
    sfreq : float | None
        Sampling rate in Hz, for arrays (MNE objects carry theirs).
    lines : xarray.Dataset | None
        What :func:`gainshape.find_lines` found: one band per line, named
        "line <frequency> Hz", +-1 Hz or +- the line's width if wider
        (instead of the "line" band of ``info["line_freq"]``).

    Returns
    -------
    xarray.Dataset
        Dims ``(channel, band)`` (``(epoch, channel, band)`` for Epochs);
        ``power_before``, ``power_after``, ``change_db``, ``retained``;
        coords ``band_low``, ``band_high`` (Hz), ``window_s`` (the Welch
        window used for the band), ``band_resolved`` and ``ch_type``. Each
        band gets Blackman-Harris windows of 16 s, or longer so that their
        main lobe (+-4 bins) is at most half the band's low edge (80 s for
        0.1 Hz): the strong drift of raw EEG then cannot leak into a slow
        band. Bands whose window does not fit the data (or whose main lobe
        is wider than the band) are NaN, with a warning. Attrs with the
        sampling rate, window and the ids (comma-separated) of the
        history steps in ``after`` that ``before`` lacks.

    See Also
    --------
    observed_gain, plot_band_change

    References
    ----------
    Welch PD (1967). The use of fast Fourier transform for the estimation of
    power spectra: a method based on time averaging over short, modified
    periodograms. IEEE Trans Audio Electroacoust 15:70-73.

    Examples
    --------
    >>> import numpy as np, gainshape as gs
    >>> x = np.random.default_rng(0).standard_normal((2, 25000))  # 100 s at 250 Hz
    >>> y = gs.apply(x, gs.lowpass(20.0), sfreq=250.0)
    >>> ds = band_change(x, y, sfreq=250.0)
    >>> bool(ds.change_db.sel(band="gamma").max() < -10)
    True
    """
    a, b = _matched(before, after, sfreq)
    bands, line_source = _bands(bands, a, b, lines)
    lows = np.array([lo for lo, _ in bands.values()])
    highs = np.array([hi for _, hi in bands.values()])
    windows = [spectral_settings(a.data.shape[-1], a.sfreq, _window_seconds(lo)) for lo in lows]
    seconds = [w["nperseg"] / a.sfreq for w in windows]
    resolved = _resolved(bands, seconds)
    spectra = {}  # nperseg -> (freqs, psd before, psd after): one Welch per window length
    power_b, power_a = np.full((2, *a.data.shape[:-1], len(bands)), np.nan)
    for i, (lo, hi, w) in enumerate(zip(lows, highs, windows)):
        if not resolved[i]:
            continue
        if w["nperseg"] not in spectra:
            freqs, p_before = welch_density(a.data, a.sfreq, w["nperseg"], w["window"])
            p_after = welch_density(b.data, a.sfreq, w["nperseg"], w["window"])[1]
            spectra[w["nperseg"]] = (freqs, p_before, p_after)
        freqs, p_before, p_after = spectra[w["nperseg"]]
        in_band = (freqs >= lo) & (freqs < hi)
        power_b[..., i] = p_before[..., in_band].sum(axis=-1) * freqs[1]
        power_a[..., i] = p_after[..., in_band].sum(axis=-1) * freqs[1]
    with np.errstate(divide="ignore", invalid="ignore"):
        retained = power_a / power_b
    dims = ("epoch", "channel", "band") if a.data.ndim == 3 else ("channel", "band")
    unit = f"{a.unit}^2"
    ds = xr.Dataset(
        {
            "power_before": (dims, power_b, {"units": unit, "long_name": "band power before"}),
            "power_after": (dims, power_a, {"units": unit, "long_name": "band power after"}),
            "change_db": (dims, 10 * np.log10(retained), {"units": "dB"}),
            "retained": (dims, retained, {"units": "1", "long_name": "fraction of power kept"}),
        },
        coords={
            "channel": a.ch_names,
            "band": list(bands),
            "band_low": ("band", lows, {"units": "Hz"}),
            "band_high": ("band", highs, {"units": "Hz"}),
            "band_resolved": ("band", resolved, {"long_name": "band resolved by the spectra"}),
            "window_s": ("band", seconds,
                         {"units": "s", "long_name": "Welch window length"}),
            "ch_type": ("channel", a.ch_types),
        },
        attrs={**_attrs(a, b, "Welch PSD integrated over each band; window lengths in window_s"),
               "line_band": line_source},
    )
    return ds


def band_change_map(ds) -> np.ndarray:
    """``change_db`` of :func:`band_change` as a (channel, band) array, epochs
    combined by their mean power (for maps).

    Examples
    --------
    >>> import numpy as np, gainshape as gs
    >>> x = np.random.default_rng(0).standard_normal((2, 25000))
    >>> band_change_map(gs.band_change(x, 0.5 * x, sfreq=250.0)).shape
    (2, 6)
    """
    if "epoch" not in ds.dims:
        return ds.change_db.transpose("channel", "band").values
    before = ds.power_before.mean("epoch")
    after = ds.power_after.mean("epoch")
    return (10 * np.log10(after / before)).transpose("channel", "band").values


def observed_gain(before: Recording | np.ndarray, after: Recording | np.ndarray, *,
                  sfreq: float | None = None) -> xr.DataArray:
    """The amplitude ratio the data saw, channel by frequency: ``|P_xy / P_xx|``.

    Blackman-Harris windows of 40 s (at most the record or epoch length).
    NaN where the input has too little power to measure (below 1e-8 of the
    channel's median power density) and below 8 frequency bins (0.2 Hz),
    where the window's main lobe (+-4 bins) would reach below half the
    frequency and mix in slower, usually far stronger, drift (measurements:
    benchmarks/README.md). Epochs are treated as concatenated records of the
    same channels.

    Parameters
    ----------
    before, after : Raw | Epochs | Evoked | ndarray
        The same data before and after filtering.
    sfreq : float | None
        Sampling rate in Hz, for arrays.

    Returns
    -------
    xarray.DataArray
        Dims ``(channel, frequency)``: the cross-spectral amplitude ratio.

    See Also
    --------
    band_change, plot_observed_gain, FilterDesign.realized_gain

    Examples
    --------
    >>> import numpy as np, gainshape as gs
    >>> x = np.random.default_rng(0).standard_normal((1, 20000))
    >>> y = gs.apply(x, gs.lowpass(30.0), sfreq=250.0)
    >>> g = observed_gain(x, y, sfreq=250.0)
    >>> round(float(g.sel(frequency=30.0, method="nearest")[0]), 2)
    0.5
    """
    a, b = _matched(before, after, sfreq)
    x, y = _as_channels(a.data), _as_channels(b.data)
    settings = spectral_settings(a.data.shape[-1], a.sfreq, _OBSERVED_WINDOW_SECONDS)
    freqs, pxx = welch(x, fs=a.sfreq, **settings)
    _, pxy = csd(x, y, fs=a.sfreq, **settings)
    floor = _UNMEASURABLE * np.median(pxx, axis=-1, keepdims=True)
    measurable = (pxx > floor) & (np.arange(freqs.size) >= 2 * _MAIN_LOBE_BINS)
    with np.errstate(divide="ignore", invalid="ignore"):
        gain = np.where(measurable, np.abs(pxy) / pxx, np.nan)
    return xr.DataArray(
        gain,
        dims=("channel", "frequency"),
        coords={"channel": a.ch_names, "frequency": ("frequency", freqs, {"units": "Hz"}),
                "ch_type": ("channel", a.ch_types)},
        name="observed_gain",
        attrs={"units": "1", "long_name": "observed amplitude gain |Pxy/Pxx|",
               **_attrs(a, b, "cross-spectral transfer estimate", settings)},
    )


def _matched(before, after, sfreq):
    a = as_arrays(before, sfreq=sfreq, name="before")
    b = as_arrays(after, sfreq=sfreq, name="after")
    if a.data.shape[-1] < _MIN_SAMPLES:
        raise ValueError(
            f"The 'before' data hold {a.data.shape[-1]} samples per record; a spectrum needs "
            f"at least {_MIN_SAMPLES} (and bands need seconds of data)."
        )
    for what, va, vb in (("sampling rates", a.sfreq, b.sfreq), ("channels", a.ch_names, b.ch_names),
                         ("shapes", a.data.shape, b.data.shape), ("kinds", a.kind, b.kind)):
        if va != vb:
            raise ValueError(
                f"The 'before' and 'after' data must match, but their {what} differ: "
                f"{_short(va)} vs {_short(vb)}."
            )
    return a, b


def _bands(bands, signals, after, lines=None) -> tuple[dict, str]:
    """The bands checked against the data, and where the line band came from."""
    source = "given in 'bands'"
    if bands is None:
        bands, source = _default_bands(signals, after)
        if lines is not None:
            bands.pop("line", None)
    if lines is not None:
        bands, source = {**bands, **_line_bands(lines)}, "the lines found by find_lines"
    if not isinstance(bands, dict) or not bands:
        raise TypeError(
            "The 'bands' parameter takes a dict of name -> (low, high) in Hz; "
            f"{bands!r} was given."
        )
    nyquist = signals.sfreq / 2.0
    checked = {}
    for name, edges in bands.items():
        try:
            low, high = (float(v) for v in edges)
        except (TypeError, ValueError):
            raise TypeError(
                f"Band {name!r} takes a (low, high) pair of numbers in Hz; {edges!r} was given."
            ) from None
        if not 0 <= low < high <= nyquist:
            raise ValueError(
                f"Band {name!r} needs 0 <= low < high <= Nyquist ({nyquist:g} Hz); "
                f"({low:g}, {high:g}) was given."
            )
        checked[str(name)] = (low, high)
    return checked, source


def _window_seconds(low: float) -> float:
    """Welch window for a band starting at ``low`` Hz: 16 s, or longer so that
    the main lobe (4 bins) is at most half of ``low``: raw EEG drift below a
    slow band is far stronger than the band, and a wider lobe leaks it in."""
    return max(_WINDOW_SECONDS, 2 * _MAIN_LOBE_BINS / low) if low > 0 else _WINDOW_SECONDS


def _resolved(bands, seconds) -> np.ndarray:
    """Which bands the spectra can tell apart from lower frequencies and from
    their neighbours: the main lobe is at most half the low edge and at most
    the band's width. Warns, naming the others and the fix."""
    lobes = [_MAIN_LOBE_BINS / t for t in seconds]
    resolved = np.array([_at_most(lobe, hi - lo) and (lo == 0 or _at_most(lobe, lo / 2))
                         for (lo, hi), lobe in zip(bands.values(), lobes)])
    if not resolved.all():
        bad = [(n, t, lobe) for n, t, lobe, ok in zip(bands, seconds, lobes, resolved) if not ok]
        listed = ", ".join(f"{n} ({t:.3g} s, main lobe +-{lobe:.3g} Hz)" for n, t, lobe in bad)
        warn(
            f"The data are too short to resolve the band(s) {listed}: their power "
            "and change are NaN. A band needs a Welch window whose main lobe is at most "
            "half its low edge and at most its width; compare longer epochs or the "
            "continuous recording, or use wider bands.",
        )
    return resolved


def _at_most(value: float, limit: float) -> bool:
    """``value <= limit`` up to one part per million: window lengths are whole
    samples, so at a rate such as 1000.0000283 Hz an 80 s window is 79.99999774 s.

    >>> _at_most(4 / 79.99999774, 0.05), _at_most(0.0501, 0.05)
    (True, False)
    """
    return value <= limit * (1 + 1e-6)


def _line_bands(lines) -> dict:
    """One band per line :func:`gainshape.find_lines` found.

    >>> import xarray as xr
    >>> found = xr.Dataset({"line_frequency": ("line", [50.0, 31.73]), "width": ("line", [0.2, 1.5])})
    >>> _line_bands(found)
    {'line 50 Hz': (49.0, 51.0), 'line 31.73 Hz': (30.23, 33.23)}
    """
    if not isinstance(lines, xr.Dataset) or not {"line_frequency", "width"} <= set(lines.data_vars):
        raise TypeError("The 'lines' parameter takes what gainshape.find_lines returned; "
                        f"a {type(lines).__name__} was given.")
    return {f"line {f:.4g} Hz": (round(f - max(_LINE_HALF_WIDTH, w), 6),
                                 round(f + max(_LINE_HALF_WIDTH, w), 6))
            for f, w in zip(lines.line_frequency.values.tolist(), lines.width.values.tolist())}


def _default_bands(signals, after) -> tuple[dict, str]:
    """DEFAULT_BANDS plus the line band, without those reaching above Nyquist
    (warned), and where the line band came from: ``info["line_freq"]``, else
    the lowest notch the filtered data's history removed."""
    bands = dict(DEFAULT_BANDS)
    line, source = signals.line_freq or after.line_freq, "info['line_freq']"
    if not line and after.notches:
        line, source = after.notches[0], "the lowest notch in the filter history"
    if line:
        f = float(line)
        bands["line"] = (f - _LINE_HALF_WIDTH, f + _LINE_HALF_WIDTH)
        source = f"{source} ({f:g} Hz)"
    else:
        source = "none: no info['line_freq'] and no notch in the history"
    nyquist = signals.sfreq / 2.0
    above = {n: b for n, b in bands.items() if b[1] > nyquist}
    if above:
        listed = ", ".join(f"{n} ({lo:g}-{hi:g} Hz)" for n, (lo, hi) in above.items())
        warn(f"Default band(s) {listed} reach above the Nyquist frequency "
             f"({nyquist:g} Hz) and are left out.")
    return {n: b for n, b in bands.items() if n not in above}, source


def _attrs(a, b, method, settings=None) -> dict:
    """Dataset attributes; ``settings`` (one Welch window for all) adds its length."""
    between = [i for i in b.history_ids if i not in a.history_ids]
    attrs = {
        "sfreq": a.sfreq,
        "spectral_method": f"Welch, as scipy.signal.welch ({method})",
        "window": _WINDOW,
        "overlap": 0.5,
        "history_steps_between": ", ".join(between),
    }
    if settings is not None:
        attrs["nperseg"] = settings["nperseg"]
        attrs["frequency_resolution_hz"] = a.sfreq / settings["nperseg"]
    return attrs


def _as_channels(data):
    """(epochs, channels, times) -> (channels, epochs * times)."""
    if data.ndim == 2:
        return data
    return np.moveaxis(data, 1, 0).reshape(data.shape[1], -1)


def _short(value):
    text = repr(value)
    return text if len(text) < 60 else text[:57] + "..."
